"""statorsmith computation: design files, winding layout, field, EMF and circuit models.

Only numpy is used here (magpylib checks the field kernels in the tests); nothing in this
package writes files or prints.
"""
