"""One kept result as a CSV file: caption, table, notes — safe to open in a spreadsheet.

Layout (documented in docs/export.md): the title on the first line, the base on the second,
a blank line, the header row and the table rows, a blank line, then one line per note.
Numbers are written as numbers at the precision the table shows (a percentage of 12.5 as
``12.5``); hidden small counts as the text ``<5``; every text cell is neutralised against
formula injection (:mod:`core.export.safe_text`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from core.export.safe_text import csv_text, write_csv
from core.tables.result import Cell, TableResult


def cell_value(cell: Cell) -> Any:
    """The value a CSV (or any data file) should hold for one display cell."""
    if cell.suppressed or cell.value is None:
        return cell.display
    if cell.fmt == "text" or isinstance(cell.value, str):
        return cell.display
    value = float(cell.value)
    if value != value:  # NaN: nothing to show
        return ""
    if cell.fmt == "count":
        return int(round(value))
    if cell.fmt in ("percent", "pp"):
        return round(value, 1)
    if value.is_integer():
        return int(value)
    return round(value, 2)


def result_rows(result: TableResult) -> list[list[Any]]:
    rows: list[list[Any]] = [[result.title]]
    if result.finding:
        rows.append([result.finding])
    rows.append([result.base])
    rows.append([])
    rows.append(list(result.columns))
    rows.extend([cell_value(c) for c in row] for row in result.rows)
    if result.notes:
        rows.append([])
        rows.extend([note] for note in result.notes)
    return rows


def result_csv(result: TableResult) -> str:
    """The CSV text of one result."""
    return csv_text(result_rows(result))


def write_result_csv(path: str | Path, result: TableResult) -> Path:
    """Write one result as UTF-8 CSV (with a byte-order mark for spreadsheet programs)."""
    return write_csv(path, result_rows(result))
