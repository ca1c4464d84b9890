"""statorsmith writers: command line, CAD solids, drawings, build sheet.

Heavy backends (cadquery, ezdxf, reportlab) are imported inside the functions that use them,
so that importing this package stays cheap.
"""


class OutputError(Exception):
    """A package that cannot be written where asked; str() is one line for the user."""
