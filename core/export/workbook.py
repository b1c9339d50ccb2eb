"""The spreadsheet workbook: a contents sheet, one sheet per kept result, an About sheet.

Numbers are written as numbers with a number format (percentages as fractions shown as
``0.0%``, counts as ``#,##0``), so the evaluator can re-use them in formulas; every text cell
is neutralised against formula injection and stripped of characters a workbook cannot hold.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

from openpyxl import Workbook
from openpyxl.cell.cell import Cell as SheetCell
from openpyxl.drawing.image import Image
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.hyperlink import Hyperlink
from openpyxl.worksheet.worksheet import Worksheet

from core.export.content import Entry, printable
from core.export.safe_text import as_number, neutralise
from core.tables.result import Cell

CONTENTS = "Contents"
ABOUT = "About this workbook"
HEADER_FILL = PatternFill("solid", fgColor="EDEDED")
NUMBER_FORMATS = {
    "count": "#,##0",
    "percent": "0.0%",
    "pp": "+0.0;-0.0;0.0",
    "number": "#,##0.00",
    "integer": "#,##0",
}
IMAGE_SIZE = (640, 360)  # pixels shown on the sheet; the PNG itself is full resolution
_BAD_SHEET_CHARS = re.compile(r"[\[\]:*?/\\]")


def sheet_name(number: int, title: str, taken: set[str]) -> str:
    """A valid, unique sheet name: at most 31 characters, none of ``[]:*?/\\``."""
    text = _BAD_SHEET_CHARS.sub(" ", printable(title))
    text = " ".join(text.split()).strip("'")
    base = f"{number:02d} {text}".strip()[:31].rstrip()
    name, k = base, 2
    while name.lower() in taken:
        tail = f" ({k})"
        name = base[: 31 - len(tail)].rstrip() + tail
        k += 1
    taken.add(name.lower())
    return name


def safe_text_cell(ws: Worksheet, row: int, col: int, text: str, **style: object) -> None:
    """Write text that can never be read as a formula."""
    cell = ws.cell(row=row, column=col)
    cell.value = neutralise(printable(text))
    cell.data_type = "s"
    for key, value in style.items():
        setattr(cell, key, value)


def write_cell(ws: Worksheet, row: int, col: int, source: Cell) -> None:
    """One table cell: a number with its number format, or neutralised text."""
    if source.suppressed or source.value is None or source.fmt == "text":
        align = "right" if source.suppressed else None
        safe_text_cell(ws, row, col, source.display, alignment=Alignment(horizontal=align))
        return
    number = as_number(source.value)
    if number is None:  # not a genuine number: keep what the view shows, as text
        safe_text_cell(ws, row, col, source.display)
        return
    cell = ws.cell(row=row, column=col)
    if source.fmt == "percent":
        cell.value = number / 100.0  # a fraction, shown as 12.5% by the number format
        cell.number_format = NUMBER_FORMATS["percent"]
    elif source.fmt == "number":
        cell.value = number
        integer = float(number).is_integer()
        cell.number_format = NUMBER_FORMATS["integer" if integer else "number"]
    else:
        cell.value = number
        cell.number_format = NUMBER_FORMATS.get(source.fmt, "General")


def write_workbook(
    path: str | Path, entries: list[Entry], about: list[tuple[str, str]], title: str
) -> Path:
    """Write the workbook of the report outline to ``path`` and return it."""
    path = Path(path)
    wb = Workbook()
    contents = wb.active
    contents.title = CONTENTS
    taken = {CONTENTS.lower(), ABOUT.lower()}
    names = [sheet_name(e.number, e.title, taken) for e in entries]

    safe_text_cell(contents, 1, 1, title, font=Font(bold=True, size=14))
    safe_text_cell(contents, 2, 1, "One sheet per result, in report order. Click a title.")
    for c, head in enumerate(["No.", "Result", "Base", "Finding"], start=1):
        safe_text_cell(contents, 4, c, head, font=Font(bold=True), fill=HEADER_FILL)
    for i, (entry, name) in enumerate(zip(entries, names), start=5):
        contents.cell(row=i, column=1, value=entry.number)
        safe_text_cell(contents, i, 2, entry.title)
        link = contents.cell(row=i, column=2)
        _link(link, name)
        safe_text_cell(contents, i, 3, entry.result.base)
        safe_text_cell(contents, i, 4, entry.finding)
    row = len(entries) + 6
    contents.cell(row=row, column=2).value = ABOUT
    _link(contents.cell(row=row, column=2), ABOUT)
    contents.freeze_panes = "A5"
    for col, width in zip("ABCD", (6, 60, 40, 80)):
        contents.column_dimensions[col].width = width

    for entry, name in zip(entries, names):
        _result_sheet(wb.create_sheet(name), entry)

    about_ws = wb.create_sheet(ABOUT)
    safe_text_cell(about_ws, 1, 1, ABOUT, font=Font(bold=True, size=14))
    for i, (label, value) in enumerate(about, start=3):
        safe_text_cell(about_ws, i, 1, label, font=Font(bold=True))
        safe_text_cell(about_ws, i, 2, value, alignment=Alignment(wrap_text=True, vertical="top"))
    about_ws.column_dimensions["A"].width = 18
    about_ws.column_dimensions["B"].width = 100

    wb.save(path)
    return path


def _result_sheet(ws: Worksheet, entry: Entry) -> None:
    result = entry.result
    safe_text_cell(ws, 1, 1, entry.title, font=Font(bold=True, size=13))
    row = 2
    if entry.finding:
        safe_text_cell(ws, row, 1, entry.finding, font=Font(italic=True))
        row += 1
    safe_text_cell(ws, row, 1, result.base)
    header = row + 2
    for c, name in enumerate(result.columns, start=1):
        align = Alignment(horizontal="left" if c == 1 else "right", wrap_text=True)
        safe_text_cell(
            ws, header, c, str(name), font=Font(bold=True), fill=HEADER_FILL, alignment=align
        )
    bold = Font(bold=True)
    for r, cells in enumerate(result.rows, start=header + 1):
        role = result.row_roles[r - header - 1] if r - header - 1 < len(result.row_roles) else ""
        for c, cell in enumerate(cells, start=1):
            write_cell(ws, r, c, cell)
            if role == "total":
                ws.cell(row=r, column=c).font = bold
    last = header + len(result.rows)
    for k, note in enumerate(result.notes, start=last + 2):
        safe_text_cell(ws, k, 1, note)
    ws.freeze_panes = ws.cell(row=header + 1, column=2)

    # Widths from the longest text a column shows, within sensible limits.
    n_cols = max(len(result.columns), 1)
    for c in range(1, n_cols + 1):
        texts = [str(result.columns[c - 1])] if c - 1 < len(result.columns) else []
        texts += [row[c - 1].display for row in result.rows if c - 1 < len(row)]
        longest = max((len(t) for t in texts), default=8)
        limit = 60 if c == 1 else 24
        ws.column_dimensions[get_column_letter(c)].width = min(max(longest + 2, 10), limit)

    if entry.document_png is not None:  # the sheet carries title and notes as text
        image = Image(io.BytesIO(entry.document_png))
        image.width, image.height = IMAGE_SIZE
        ws.add_image(image, f"{get_column_letter(n_cols + 2)}{header}")


def _link(cell: SheetCell, sheet: str) -> None:
    """An internal link to cell A1 of ``sheet`` (apostrophes in the name are doubled)."""
    quoted = sheet.replace("'", "''")
    cell.hyperlink = Hyperlink(ref=cell.coordinate, location=f"'{quoted}'!A1")
    cell.style = "Hyperlink"
