"""What a copied table or chart puts on the clipboard: HTML, tab-separated text, a PNG.

The HTML is a real ``<table>`` with inline styles only (no style sheet, no classes), because
presentation and word-processing programs keep inline styles when pasting and build an
editable table from it, where a picture of a table could not be edited or read aloud.
The window's clipboard glue puts all three formats on the clipboard at once.
"""

from __future__ import annotations

import io
from html import escape

from core.charts import make_figure
from core.tables.result import Cell, TableResult

_FONT = "font-family:Arial,Helvetica,sans-serif;font-size:10pt;"
_BORDER = "border:1px solid #808080;padding:2pt 6pt;"


def table_html(result: TableResult) -> str:
    """The table as an HTML fragment: title above, bold header, numbers right-aligned,
    base and notes below, percentages formatted exactly as in the table view."""
    parts = [f'<div style="{_FONT}">']
    parts.append(f'<p style="font-weight:bold;margin:0 0 4pt 0;">{escape(result.title)}</p>')
    if result.finding:
        parts.append(f'<p style="margin:0 0 4pt 0;">{escape(result.finding)}</p>')
    parts.append(f'<table style="border-collapse:collapse;{_FONT}">')
    parts.append("<thead><tr>")
    for i, name in enumerate(result.columns):
        align = "left" if i == 0 else "right"
        parts.append(
            f'<th style="{_BORDER}font-weight:bold;text-align:{align};'
            f'background-color:#EDEDED;">{escape(str(name))}</th>'
        )
    parts.append("</tr></thead><tbody>")
    for r, row in enumerate(result.rows):
        role = result.row_roles[r] if r < len(result.row_roles) else "level"
        extra = "font-weight:bold;" if role == "total" else ""
        extra += "font-style:italic;" if role == "missing" else ""
        parts.append("<tr>")
        for i, cell in enumerate(row):
            align = "right" if i > 0 and _numeric(cell) else "left"
            parts.append(
                f'<td style="{_BORDER}text-align:{align};{extra}">{escape(cell.display)}</td>'
            )
        parts.append("</tr>")
    parts.append("</tbody></table>")
    small = 'style="font-size:9pt;margin:2pt 0 0 0;"'
    if result.base:
        parts.append(f"<p {small}>{escape(result.base)}</p>")
    for note in result.notes:
        parts.append(f"<p {small}>{escape(note)}</p>")
    parts.append("</div>")
    return "".join(parts)


def table_text(result: TableResult) -> str:
    """The table as tab-separated text (title, header, rows, then base and notes).

    Tabs and line breaks inside a cell are replaced by spaces so each row stays one line
    and each cell one column when pasted into a spreadsheet.
    """
    lines = [_flat(result.title)]
    for row in result.as_text_rows():
        lines.append("\t".join(_flat(text) for text in row))
    if result.base or result.notes:
        lines.append("")
    if result.base:
        lines.append(_flat(result.base))
    lines.extend(_flat(note) for note in result.notes)
    return "\n".join(lines) + "\n"


def chart_png(
    result: TableResult,
    chart_type: str | None = None,
    width_px: int = 1920,
    height_px: int = 1080,
    dpi: int = 150,
) -> bytes:
    """The result's chart as PNG bytes (drawn off-screen; no window needed)."""
    figure = make_figure(result, chart_type, width_px=width_px, height_px=height_px, dpi=dpi)
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=dpi)
    return buffer.getvalue()


def chart_images(
    result: TableResult,
    chart_type: str | None = None,
    width_px: int = 1920,
    height_px: int = 1080,
    dpi: int = 150,
    svg: bool = True,
    caption: bool = True,
) -> tuple[bytes, bytes | None]:
    """PNG and SVG bytes of one chart drawn once (exports need both; drawing is the cost).

    ``caption`` False draws the chart without its title and notes, for documents that print
    them as text.
    """
    figure = make_figure(
        result, chart_type, width_px=width_px, height_px=height_px, dpi=dpi, caption=caption
    )
    png = io.BytesIO()
    figure.savefig(png, format="png", dpi=dpi)
    if not svg:
        return png.getvalue(), None
    # The PNG pass has laid the figure out; keep that layout instead of solving it again
    # (about a third of the SVG's cost, and the two files then match exactly).
    figure.set_layout_engine("none")
    vector = io.BytesIO()
    figure.savefig(vector, format="svg", dpi=dpi)
    return png.getvalue(), vector.getvalue()


def _numeric(cell: Cell) -> bool:
    return cell.numeric or cell.suppressed


def _flat(text: str) -> str:
    return " ".join(str(text).replace("\t", " ").splitlines()).strip() if text else ""
