"""statorsmith computation: design files, winding layout, field, EMF and circuit models.

Only numpy and magpylib are used here; nothing in this package writes files or prints.
"""
