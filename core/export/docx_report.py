"""The report as a word-processing document (.docx) with python-docx.

Headings use the document's own Heading 1-3 styles so the report has a navigable outline and
a table of contents can be generated from it; tables are real, editable tables.
"""

from __future__ import annotations

import io
from pathlib import Path

from docx import Document
from docx.enum.table import WD_TABLE_ALIGNMENT
from docx.enum.text import WD_ALIGN_PARAGRAPH
from docx.oxml import OxmlElement
from docx.oxml.ns import qn
from docx.shared import Inches, Pt, RGBColor

from core.export.content import Block, Grid, Heading, Paragraph, Picture, printable

PICTURE_WIDTH = Inches(6.0)


def write_docx(path: str | Path, title: str, subtitle: str, blocks: list[Block]) -> Path:
    """Write ``blocks`` under a title to a .docx file and return its path."""
    path = Path(path)
    doc = Document()
    doc.core_properties.title = printable(title)
    doc.add_heading(printable(title), level=0)
    if subtitle:
        doc.add_paragraph(printable(subtitle))
    for block in blocks:
        if isinstance(block, Heading):
            doc.add_heading(block.text, level=min(max(block.level, 1), 9))
        elif isinstance(block, Paragraph):
            _paragraph(doc, block)
        elif isinstance(block, Grid):
            _grid(doc, block)
        elif isinstance(block, Picture):
            doc.add_picture(io.BytesIO(block.png), width=PICTURE_WIDTH)
            # Alternative text for screen readers, on the picture's own properties.
            inline = doc.inline_shapes[-1]._inline
            inline.docPr.set("descr", block.alt)
    doc.save(path)
    return path


def _paragraph(doc: Document, block: Paragraph) -> None:
    para = doc.add_paragraph()
    run = para.add_run(block.text)
    if block.style == "finding":
        run.bold = True
    elif block.style == "note":
        run.font.size = Pt(9)
        run.font.color.rgb = RGBColor(0x40, 0x40, 0x40)
        para.paragraph_format.space_after = Pt(2)
    elif block.style == "caution":
        run.italic = True


def _grid(doc: Document, grid: Grid) -> None:
    table = doc.add_table(rows=1 + len(grid.rows), cols=max(len(grid.columns), 1))
    table.style = "Table Grid"
    table.alignment = WD_TABLE_ALIGNMENT.LEFT
    numeric_cols = {
        i for i in range(len(grid.columns)) if any(r[i].numeric for r in grid.rows if i < len(r))
    }
    for i, name in enumerate(grid.columns):
        cell = table.rows[0].cells[i]
        para = cell.paragraphs[0]
        para.add_run(name).bold = True
        if i in numeric_cols:
            para.alignment = WD_ALIGN_PARAGRAPH.RIGHT
    # Repeat the header row on each page of a long table.
    tr_pr = table.rows[0]._tr.get_or_add_trPr()
    header = OxmlElement("w:tblHeader")
    header.set(qn("w:val"), "true")
    tr_pr.append(header)
    for r, row in enumerate(grid.rows, start=1):
        cells = table.rows[r].cells
        for i, source in enumerate(row[: len(grid.columns)]):
            para = cells[i].paragraphs[0]
            run = para.add_run(source.text)
            run.bold = source.bold
            run.italic = source.italic
            if source.numeric:
                para.alignment = WD_ALIGN_PARAGRAPH.RIGHT
    doc.add_paragraph()
