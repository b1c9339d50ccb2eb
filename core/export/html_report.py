"""The report as one self-contained HTML page: no external files, images embedded as PNG.

A single file can be e-mailed, archived or opened offline years later. The style sheet is
short and our own; it prints cleanly (tables and figures are not split across pages).
"""

from __future__ import annotations

import base64
from html import escape
from pathlib import Path

from core.export.content import Block, Grid, Heading, Paragraph, Picture, printable

CSS = """
body { font-family: Georgia, "Times New Roman", serif; max-width: 50em; margin: 2em auto;
       padding: 0 1em; color: #1a1a1a; line-height: 1.45; }
h1, h2, h3 { font-family: Arial, Helvetica, sans-serif; line-height: 1.2; }
h1 { font-size: 1.7em; border-bottom: 2px solid #1a1a1a; padding-bottom: .2em; }
h2 { font-size: 1.3em; margin-top: 2em; }
h3 { font-size: 1.1em; margin-top: 1.5em; }
p.finding { font-weight: bold; }
p.note { font-size: .85em; color: #404040; margin: .2em 0; }
p.caution { font-style: italic; }
p.subtitle { color: #404040; }
table { border-collapse: collapse; margin: .8em 0; font-family: Arial, Helvetica, sans-serif;
        font-size: .9em; }
th, td { border: 1px solid #808080; padding: .2em .6em; vertical-align: top; }
th { background: #ededed; text-align: left; }
th.num, td.num { text-align: right; font-variant-numeric: tabular-nums; }
tr.total td { font-weight: bold; }
td.missing { font-style: italic; }
img { max-width: 100%; height: auto; display: block; margin: .8em 0; }
@media print {
  body { max-width: none; margin: 0; }
  h1, h2, h3 { break-after: avoid; }
  table, img { break-inside: avoid; }
}
"""


def render_html(title: str, subtitle: str, blocks: list[Block]) -> str:
    """The whole page as a string."""
    out = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{escape(printable(title))}</title>",
        f"<style>{CSS}</style></head><body>",
        f"<h1>{escape(printable(title))}</h1>",
    ]
    if subtitle:
        out.append(f'<p class="subtitle">{escape(printable(subtitle))}</p>')
    for block in blocks:
        if isinstance(block, Heading):
            # Level 1 parts of the report are h2 under the page's h1 title.
            level = min(max(block.level + 1, 2), 6)
            out.append(f"<h{level}>{escape(block.text)}</h{level}>")
        elif isinstance(block, Paragraph):
            cls = f' class="{block.style}"' if block.style != "body" else ""
            out.append(f"<p{cls}>{escape(block.text)}</p>")
        elif isinstance(block, Grid):
            out.append(_grid(block))
        elif isinstance(block, Picture):
            data = base64.b64encode(block.png).decode("ascii")
            out.append(
                f'<img src="data:image/png;base64,{data}" alt="{escape(block.alt, quote=True)}">'
            )
    out.append("</body></html>")
    return "\n".join(out)


def write_html(path: str | Path, title: str, subtitle: str, blocks: list[Block]) -> Path:
    path = Path(path)
    path.write_text(render_html(title, subtitle, blocks), encoding="utf-8")
    return path


def _grid(grid: Grid) -> str:
    numeric_cols = {
        i for i in range(len(grid.columns)) if any(r[i].numeric for r in grid.rows if i < len(r))
    }
    num = ' class="num"'
    head = "".join(
        f'<th{num if i in numeric_cols else ""} scope="col">{escape(c)}</th>'
        for i, c in enumerate(grid.columns)
    )
    rows = []
    for row in grid.rows:
        total = all(c.bold for c in row) and row
        cells = []
        for c in row:
            classes = " ".join(
                name for name, on in (("num", c.numeric), ("missing", c.italic)) if on
            )
            attr = f' class="{classes}"' if classes else ""
            cells.append(f"<td{attr}>{escape(c.text)}</td>")
        opening = '<tr class="total">' if total else "<tr>"
        rows.append(f"{opening}{''.join(cells)}</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(rows)}</tbody></table>"
