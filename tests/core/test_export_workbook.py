"""The workbook: contents, one sheet per result with number formats, About sheet, safety."""

from __future__ import annotations

import openpyxl
import pytest

from core.export.clipboard import chart_png
from core.export.workbook import ABOUT, CONTENTS, sheet_name, write_workbook
from tests.core.export_results import (
    INJECTION_CORPUS,
    entry,
    frequency_result,
    injection_result,
    numbers_result,
)


@pytest.fixture(scope="module")
def workbook(tmp_path_factory):
    path = tmp_path_factory.mktemp("wb") / "tables.xlsx"
    png = chart_png(frequency_result(), width_px=640, height_px=360, dpi=100)
    entries = [
        entry(frequency_result(), 1, finding="Two in three were satisfied.", png=png),
        entry(numbers_result(), 2),
        entry(injection_result(), 3),
    ]
    about = [("Project", "Harbor Point"), ("Wave", "2026"), ("Data treatment", "=cmd|' /C")]
    write_workbook(path, entries, about, "Harbor Point tables")
    return openpyxl.load_workbook(path)


def test_sheets_in_order(workbook):
    assert workbook.sheetnames == [
        CONTENTS,
        "01 Overall satisfaction with th",  # 31 characters, the workbook limit
        "02 Credits this term",
        "03 =Answers typed by respondent",
        ABOUT,
    ]


def test_contents_links_to_each_sheet(workbook):
    ws = workbook[CONTENTS]
    assert ws["A1"].value == "Harbor Point tables"
    assert [ws.cell(row=r, column=1).value for r in (5, 6, 7)] == [1, 2, 3]
    assert ws["B5"].value == "Overall satisfaction with the course"
    assert ws["B5"].hyperlink.location == "'01 Overall satisfaction with th'!A1"
    assert ws["B7"].value == "'=Answers typed by respondents"  # neutralised title
    assert ws["C5"].value == "Base: 100 respondents who answered (7 skipped)."
    assert ws["D5"].value == "Two in three were satisfied."


def test_result_sheet_title_base_numbers_and_formats(workbook):
    ws = workbook["01 Overall satisfaction with th"]
    assert ws["A1"].value == "Overall satisfaction with the course"
    assert ws["A1"].font.bold
    assert ws["A2"].value == "Two in three were satisfied."
    assert ws["A3"].value == "Base: 100 respondents who answered (7 skipped)."
    assert [ws.cell(row=5, column=c).value for c in (1, 2, 3)] == ["Answer", "Count", "%"]
    assert ws.freeze_panes == "B6"  # header row (and labels) stay in view
    # A hidden small count stays hidden: text "<5", right-aligned, no number anywhere.
    assert ws["B6"].value == "<5" and ws["B6"].data_type == "s"
    assert ws["B6"].alignment.horizontal == "right"
    # Counts are numbers with a thousands format; percentages are fractions shown as 0.0%.
    assert ws["B9"].value == 42 and ws["B9"].number_format == "#,##0"
    assert ws["C9"].value == pytest.approx(0.42) and ws["C9"].number_format == "0.0%"
    assert ws["C11"].value == pytest.approx(1.0)
    assert ws["B11"].font.bold  # total row
    # Notes under the table (table ends at row 12; one blank row).
    assert ws["A14"].value == "Counts below 5 are hidden (shown as <5)."
    assert ws["A15"].value == "2 answers were corrected during cleaning."
    # The chart image sits beside the table.
    assert len(ws._images) == 1
    anchor = ws._images[0].anchor._from
    assert (anchor.col, anchor.row) == (4, 4)  # column E, row 5 (0-based)
    # Sensible widths: the label column fits its longest label.
    assert ws.column_dimensions["A"].width == len("Skipped (left blank)") + 2


def test_number_formats_for_statistics(workbook):
    ws = workbook["02 Credits this term"]
    values = {ws.cell(row=r, column=1).value: ws.cell(row=r, column=2) for r in range(5, 10)}
    assert values["Mean"].value == pytest.approx(12.345)
    assert values["Mean"].number_format == "#,##0.00"
    assert values["Median"].value == 12 and values["Median"].number_format == "#,##0"
    assert values["Lowest change"].value == -3 and values["Lowest change"].data_type == "n"
    assert values["Change"].value == pytest.approx(-4.25)
    assert values["Change"].number_format == "+0.0;-0.0;0.0"
    assert values["Answered"].value == 1234
    assert len(ws._images) == 0  # kept as a table only


def test_injection_corpus_is_neutralised_and_numbers_stay_numbers(workbook):
    ws = workbook["03 =Answers typed by respondent"]
    assert ws["A1"].value == "'=Answers typed by respondents"
    assert ws["A2"].value == "'-Base: 50"
    assert ws["A4"].value == "'@Answer"
    for r, original in enumerate(INJECTION_CORPUS, start=5):
        cell = ws.cell(row=r, column=1)
        assert cell.data_type == "s"  # text, never a formula
        dangerous = original[0] in "=+-@\t\r"
        assert cell.value == ("'" + original if dangerous else original)
        assert ws.cell(row=r, column=2).value == r  # counts 5.. stay numbers
    negative = ws.cell(row=5 + len(INJECTION_CORPUS), column=2)
    assert negative.value == -1 and negative.data_type == "n"
    note = ws.cell(row=7 + len(INJECTION_CORPUS), column=1)
    assert note.value == "'+1 note that starts with a plus"
    # No cell anywhere in the workbook holds a formula.
    for sheet in workbook.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                assert cell.data_type != "f", (sheet.title, cell.coordinate)


def test_about_sheet(workbook):
    ws = workbook[ABOUT]
    assert ws["A1"].value == ABOUT
    assert (ws["A3"].value, ws["B3"].value) == ("Project", "Harbor Point")
    assert ws["B5"].value == "'=cmd|' /C"


def test_sheet_names_are_valid_and_unique():
    taken: set[str] = set()
    a = sheet_name(1, "Pay: [hours]/week*?\\", taken)
    b = sheet_name(1, "Pay: [hours]/week*?\\", taken)
    c = sheet_name(12, "A" * 60, taken)
    d = sheet_name(12, "a" * 60, taken)  # differs only in case: still a clash
    assert a == "01 Pay hours week"
    assert b == "01 Pay hours week (2)"
    assert len(c) == 31 and len(d) == 31 and c.lower() != d.lower()
    assert not any(ch in name for name in (a, b, c, d) for ch in "[]:*?/\\")
