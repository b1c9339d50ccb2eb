"""Plaincount's GUI-free core: project file, import, codebook, cleaning, tables, charts, export.

Nothing in this package imports Qt; a test enforces it.
"""

__version__ = "0.1.0"
