"""Everything that leaves Plaincount: clipboard tables, CSV, workbook, report, chart images.

Exports read computed :class:`core.tables.result.TableResult` objects, never raw data, so a
small-cell count hidden in a table stays hidden in every file made from it. Text that a
spreadsheet could run as a formula is neutralised on the way out (:mod:`core.export.safe_text`).
"""
