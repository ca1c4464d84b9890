"""statorsmith writers: command line, CAD solids, drawings, build sheet.

Heavy backends (cadquery, ezdxf, reportlab) are imported inside the functions that use them,
so that importing this package stays cheap.
"""

import os


class OutputError(Exception):
    """A package that cannot be written where asked; str() is one line for the user."""


def ordinary_permissions(path: str | os.PathLike, folder: bool = False) -> None:
    """Give a file or folder made by mkstemp/mkdtemp (0600/0700, private) the permissions
    of one made by open()/mkdir() under the user's umask, so it reads like its neighbours."""
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(path, (0o777 if folder else 0o666) & ~umask)
