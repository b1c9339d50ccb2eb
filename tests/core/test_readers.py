"""Reading survey exports: cells kept as written, headers, encodings, bad input."""

from __future__ import annotations

import datetime as dt
import io
import time
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest

from core.errors import ImportFailed
from core.readers import (
    detect_header_rows,
    list_sheets,
    preview,
    read_source,
    sniff_delimiter,
)

BAD = Path(__file__).resolve().parent.parent / "data" / "bad_inputs"


def write_xlsx(path: Path, sheets: dict[str, list[list[object]]]) -> Path:
    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for title, rows in sheets.items():
        ws = wb.create_sheet(title)
        for row in rows:
            ws.append(row)
    wb.save(path)
    return path


def with_cached_formula(path: Path, formula: str, value: str) -> None:
    """openpyxl writes formulas without a result; add the cached value a spreadsheet keeps."""
    with zipfile.ZipFile(path) as z:
        parts = {n: z.read(n) for n in z.namelist()}
    sheet = parts["xl/worksheets/sheet1.xml"]
    old = f"<f>{formula}</f><v></v>".encode()
    assert old in sheet
    new = f"<f>{formula}</f><v>{value}</v>".encode()
    parts["xl/worksheets/sheet1.xml"] = sheet.replace(old, new)
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name, data in parts.items():
            z.writestr(name, data)


def cells(frame: pd.DataFrame, column: str) -> list[object]:
    """Column values with every kind of missing shown as None, for exact comparisons."""
    return [None if pd.isna(v) else v for v in frame[column].tolist()]


# ---------------------------------------------------------------------------- CSV
def test_csv_keeps_every_text_as_written(tmp_path):
    path = tmp_path / "answers.csv"
    path.write_text(
        "id,answer,zip,year,blank\n1,None,007,2019,\n2,NA,02134,2020,\n3,null,10001,2021,\n",
        encoding="utf-8",
    )
    table = read_source(path)
    assert list(table.frame.columns) == ["id", "answer", "zip", "year", "blank"]
    assert cells(table.frame, "answer") == ["None", "NA", "null"]
    assert cells(table.frame, "zip") == ["007", "02134", "10001"]
    assert cells(table.frame, "year") == ["2019", "2020", "2021"]
    assert cells(table.frame, "blank") == [None, None, None]
    assert table.report["delimiter"] == ","
    assert table.report["encoding"] == "utf-8"
    assert table.report["header_rows"] == 1


@pytest.mark.parametrize(
    ("delimiter", "name"), [(";", "semicolon"), ("\t", "tab"), ("|", "vertical bar")]
)
def test_delimiter_is_sniffed(tmp_path, delimiter, name):
    rows = [["id", "city", "note"], ["1", "Lyon, France", "ok"], ["2", "Oslo", "fine, thanks"]]
    text = "\n".join(delimiter.join(r) for r in rows) + "\n"
    path = tmp_path / "x.txt"
    path.write_text(text, encoding="utf-8")
    table = read_source(path)
    assert table.report["delimiter"] == delimiter
    assert table.report["delimiter_label"] == name
    assert cells(table.frame, "city") == ["Lyon, France", "Oslo"]


def test_sniff_prefers_tab_for_tsv_names():
    assert sniff_delimiter("a\tb\tc\n1\t2\t3\n", ".tsv") == "\t"
    assert sniff_delimiter("a,b;c\n1,2;3\n4,5;6\n", ".csv") == ","


@pytest.mark.parametrize(
    ("payload", "expected", "label"),
    [
        ("name,city\nJosé,Zürich\n".encode(), "utf-8", "UTF-8"),
        (b"\xef\xbb\xbf" + "name,city\nJosé,Zürich\n".encode(), "utf-8-sig", "UTF-8 with"),
        # 0x92 is a curly apostrophe and 0x80 the euro sign only in Windows-1252.
        (b"name,note\nAnn,it\x92s \x80 5\n", "cp1252", "Windows-1252"),
        # 0x81 is undefined in Windows-1252, so these bytes can only be Latin-1.
        (b"name,note\nAnn,caf\xe9 \x81\n", "latin-1", "Latin-1"),
    ],
)
def test_encodings_are_detected_and_reported(tmp_path, payload, expected, label):
    path = tmp_path / "enc.csv"
    path.write_bytes(payload)
    table = read_source(path)
    assert table.report["encoding"] == expected
    assert table.report["encoding_label"].startswith(label)
    assert table.report["encoding_detected"] is True
    assert list(table.frame.columns)[0] == "name"  # a byte-order mark never leaks into a name
    text = payload.decode(expected)
    second = text.splitlines()[1].split(",")[1]
    assert cells(table.frame, table.frame.columns[1]) == [second]


def test_windows_1252_text_reads_as_the_right_characters(tmp_path):
    path = tmp_path / "w.csv"
    path.write_bytes(b"q,a\n1,don\x92t \x96 maybe\n")
    table = read_source(path)
    assert cells(table.frame, "a") == ["don’t – maybe"]


def test_given_encoding_that_does_not_fit_is_a_clear_error(tmp_path):
    path = tmp_path / "w.csv"
    path.write_bytes(b"q,a\n1,caf\xe9\n")
    with pytest.raises(ImportFailed, match="cannot be read as UTF-8"):
        read_source(path, encoding="utf-8")
    table = read_source(path, encoding="latin-1")
    assert cells(table.frame, "a") == ["café"]
    assert table.report["encoding_detected"] is False


def test_quoted_newlines_and_ragged_rows(tmp_path):
    path = tmp_path / "r.csv"
    path.write_text('id,comment,extra\n1,"two\nlines",x\n2,short\n3,"a, b",y\n', encoding="utf-8")
    table = read_source(path)
    assert cells(table.frame, "comment") == ["two\nlines", "short", "a, b"]
    assert cells(table.frame, "extra") == ["x", None, "y"]


def test_empty_rows_and_columns_are_dropped_and_reported(tmp_path):
    path = tmp_path / "e.csv"
    path.write_text("a,,b\n1,,2\n,,\n3,,4\n", encoding="utf-8")
    table = read_source(path)
    assert list(table.frame.columns) == ["a", "b"]
    assert cells(table.frame, "a") == ["1", "3"]
    assert table.report["dropped_rows"] == {"count": 1, "rows": [3]}
    assert table.report["dropped_columns"] == [{"column": 2, "letter": "B"}]
    assert table.report["n_rows"] == 2 and table.report["n_columns"] == 2


def test_blank_and_duplicate_headers_are_made_unique(tmp_path):
    path = tmp_path / "h.csv"
    path.write_text("q1,,q1,q1_2\n1,2,3,4\n", encoding="utf-8")
    table = read_source(path)
    assert list(table.frame.columns) == ["q1", "column_2", "q1_3", "q1_2"]
    renamed = {(r["original"], r["name"], r["reason"]) for r in table.report["renamed_headers"]}
    assert renamed == {("", "column_2", "blank"), ("q1", "q1_3", "duplicate")}


def test_two_header_rows_in_csv(tmp_path):
    path = tmp_path / "two.csv"
    path.write_text(
        "id,age,sat\nRespondent ID,What is your age?,How satisfied are you?\n"
        "R1,34,Satisfied\nR2,51,Very satisfied\nR3,29,Dissatisfied\n",
        encoding="utf-8",
    )
    table = read_source(path)
    assert table.report["header_rows"] == 2
    assert table.questions == {
        "id": "Respondent ID",
        "age": "What is your age?",
        "sat": "How satisfied are you?",
    }
    assert cells(table.frame, "age") == ["34", "51", "29"]


def test_header_rows_can_be_overridden(tmp_path):
    path = tmp_path / "n.csv"
    path.write_text("1,2\n3,4\n", encoding="utf-8")
    assert read_source(path).report["header_rows"] == 0  # numbers are not names
    table = read_source(path, header_rows=0)
    assert list(table.frame.columns) == ["column_1", "column_2"]
    table = read_source(path, header_rows=1)
    assert list(table.frame.columns) == ["1", "2"] and len(table.frame) == 1


def test_header_detection_rules():
    # Names, then question text over a number column: two header rows.
    head = [["id", "age"], ["Respondent", "Age in years"], ["R1", 30.0], ["R2", 41.0]]
    assert detect_header_rows(head, text_source=False) == 2
    # Names, then answers that repeat further down: one header row.
    head = [["q1", "q2"], ["Strongly agree", "Agree"], ["Agree", "Agree"], ["Agree", "x"]]
    assert detect_header_rows(head, text_source=False) == 1
    # A first row with a number in it is data.
    assert detect_header_rows([["R1", 3.0], ["R2", 4.0]], text_source=False) == 0


# ---------------------------------------------------------------------------- spreadsheets
def test_xlsx_columns_become_typed_arrays(tmp_path):
    when = dt.datetime(2026, 3, 1, 9, 30)
    path = write_xlsx(
        tmp_path / "s.xlsx",
        {
            "Responses": [
                ["id", "age", "started", "mixed", "flag", "clock"],
                ["R1", 34, when, 12, True, dt.time(8, 30)],
                ["R2", None, dt.date(2026, 3, 2), "twelve", False, dt.time(9, 0)],
                ["R3", 51.5, None, 12.5, None, None],
            ]
        },
    )
    table = read_source(path)
    frame = table.frame
    assert frame["age"].dtype == np.float64
    assert cells(frame, "age") == [34.0, None, 51.5]
    assert pd.api.types.is_datetime64_any_dtype(frame["started"])
    assert cells(frame, "started") == [pd.Timestamp(when), pd.Timestamp("2026-03-02"), None]
    # A text column writes its numbers without a spurious ".0".
    assert cells(frame, "mixed") == ["12", "twelve", "12.5"]
    assert cells(frame, "flag") == ["TRUE", "FALSE", None]
    assert cells(frame, "clock") == ["08:30:00", "09:00:00", None]
    assert table.report["sheet"] == "Responses"
    assert table.report["column_types"] == {"number": 1, "date": 1, "text": 4}


def test_formula_cells_give_their_cached_values(tmp_path):
    path = write_xlsx(tmp_path / "f.xlsx", {"S": [["a", "b"], [2, "=A2*2"]]})
    with_cached_formula(path, "A2*2", "4")
    assert cells(read_source(path).frame, "b") == [4.0]


def test_sheet_choice_by_name_or_position(tmp_path):
    path = write_xlsx(
        tmp_path / "m.xlsx",
        {"Notes": [], "Wave A": [["x"], ["1"]], "Wave B": [["y"], ["2"], ["3"]]},
    )
    assert list_sheets(path) == ["Notes", "Wave A", "Wave B"]
    first = read_source(path)  # the first sheet is empty: the first with data is taken
    assert first.report["sheet"] == "Wave A"
    assert read_source(path, sheet="Wave B").report["n_rows"] == 2
    assert read_source(path, sheet="3").report["sheet"] == "Wave B"
    with pytest.raises(ImportFailed, match="no sheet 'Wave C'.*'Wave A'"):
        read_source(path, sheet="Wave C")


def test_two_header_rows_in_a_workbook_with_blank_rows_and_columns(tmp_path):
    rows = [
        ["resp_id", None, "age", "age", None],
        ["Respondent ID", None, "Age now", "Age last year", None],
        ["R1", None, 30, 29, None],
        [None, None, None, None, None],
        ["R2", None, 41, 40, None],
    ]
    path = write_xlsx(tmp_path / "h.xlsx", {"Data": rows})
    ws_path = tmp_path / "h2.xlsx"
    wb = openpyxl.load_workbook(path)
    wb["Data"]["E3"] = None
    wb.save(ws_path)
    table = read_source(ws_path)
    assert table.report["header_rows"] == 2
    assert list(table.frame.columns) == ["resp_id", "age", "age_2"]
    assert table.questions["age_2"] == "Age last year"
    assert table.report["dropped_rows"] == {"count": 1, "rows": [4]}
    assert [c["letter"] for c in table.report["dropped_columns"]] == ["B"]
    assert cells(table.frame, "age_2") == [29.0, 40.0]


def test_xls_and_ods_are_read_by_calamine(tmp_path):
    import xlwt

    book = xlwt.Workbook()
    sheet = book.add_sheet("Old")
    for r, row in enumerate([["id", "score"], ["A", 1.5], ["B", 7]]):
        for c, v in enumerate(row):
            sheet.write(r, c, v)
    xls = tmp_path / "old.xls"
    book.save(str(xls))
    table = read_source(xls)
    assert table.report["format"] == "xls"
    assert cells(table.frame, "score") == [1.5, 7.0]

    ods = tmp_path / "open.ods"
    pd.DataFrame({"id": ["A", "B"], "score": [2.0, 3.5]}).to_excel(ods, index=False, engine="odf")
    table = read_source(ods)
    assert table.report["format"] == "ods"
    assert cells(table.frame, "score") == [2.0, 3.5]


def test_content_decides_the_format_not_the_name(tmp_path):
    real = write_xlsx(tmp_path / "real.xlsx", {"S": [["a"], [1]]})
    renamed = tmp_path / "export.csv"
    renamed.write_bytes(real.read_bytes())
    table = read_source(renamed)
    assert table.report["format"] == "xlsx"
    assert cells(table.frame, "a") == [1.0]


def test_preview_reads_only_the_first_rows(tmp_path):
    path = tmp_path / "p.csv"
    path.write_text("n\n" + "".join(f"{i}\n" for i in range(500)), encoding="utf-8")
    table = preview(path, nrows=10)
    assert cells(table.frame, "n") == [str(i) for i in range(10)]
    xlsx = write_xlsx(tmp_path / "p.xlsx", {"S": [["n"]] + [[i] for i in range(200)]})
    assert len(preview(xlsx, nrows=7).frame) == 7


# ---------------------------------------------------------------------------- bad input
BAD_CASES = {
    "zero_bytes.csv": "empty \\(0 bytes\\)",
    "only_blank_lines.csv": "no data: only empty lines",
    "header_only.csv": "column names but no data rows",
    "header_only.xlsx": "column names but no data rows",
    "empty_sheet.xlsx": "has no data",
    "password_protected.xlsx": "protected with a password",
    "corrupt_workbook.xlsx": "damaged or is not a workbook",
    "truncated.xlsx": "incomplete or broken",
    "entity_bomb.xlsx": "entity declarations",
    "binary_renamed.csv": "binary data, not text",
    "image_renamed.csv": "PNG image, not a table",
    "not_a_table.csv": "does not look like a table",
    "web_page.csv": "web page",
}


@pytest.mark.parametrize(("name", "message"), sorted(BAD_CASES.items()))
def test_bad_input_gives_a_specific_message(name, message):
    with pytest.raises(ImportFailed, match=message) as info:
        read_source(BAD / name)
    assert name in str(info.value)  # the message names the file
    assert "Traceback" not in str(info.value)


def test_every_bad_input_file_is_covered():
    assert sorted(p.name for p in BAD.iterdir()) == sorted(BAD_CASES)


def test_entity_bomb_is_refused_before_any_expansion():
    # 10^9 copies of "lol" would need gigabytes; refusal must be immediate.
    start = time.perf_counter()
    with pytest.raises(ImportFailed):
        read_source(BAD / "entity_bomb.xlsx")
    assert time.perf_counter() - start < 5
    # calamine itself also refuses the undeclared entity rather than expanding it.
    from python_calamine import CalamineWorkbook

    with pytest.raises(Exception, match="entity"):
        CalamineWorkbook.from_path(str(BAD / "entity_bomb.xlsx")).get_sheet_by_index(0)


def test_password_protected_file_is_an_ole_container():
    data = (BAD / "password_protected.xlsx").read_bytes()
    assert data[:8] == b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
    # The stream names a protected workbook has, as UTF-16 directory entries.
    assert "EncryptedPackage".encode("utf-16-le") in data
    assert "EncryptionInfo".encode("utf-16-le") in data
    from python_calamine import CalamineWorkbook, PasswordError

    with pytest.raises(PasswordError):
        CalamineWorkbook.from_path(str(BAD / "password_protected.xlsx"))


def test_missing_file_and_folder(tmp_path):
    with pytest.raises(ImportFailed, match="There is no file"):
        read_source(tmp_path / "nope.csv")
    with pytest.raises(ImportFailed, match="folder"):
        read_source(tmp_path)


def test_unsupported_document_is_refused(tmp_path):
    path = tmp_path / "codebook.json"
    path.write_text('{"a": 1}', encoding="utf-8")
    with pytest.raises(ImportFailed, match="not a table"):
        read_source(path)
    docx = tmp_path / "letter.docx"
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        z.writestr("word/document.xml", "<w:document/>")
    docx.write_bytes(buf.getvalue())
    with pytest.raises(ImportFailed, match="Word document"):
        read_source(docx)


def test_openpyxl_reads_what_calamine_cannot(tmp_path, monkeypatch):
    import python_calamine

    class Refusing:
        @classmethod
        def from_filelike(cls, *args, **kwargs):
            raise python_calamine.CalamineError("unsupported feature")

    path = write_xlsx(tmp_path / "odd.xlsx", {"Data": [["id", "score"], ["A", 2.5], ["B", None]]})
    monkeypatch.setattr(python_calamine, "CalamineWorkbook", Refusing)
    table = read_source(path)
    assert list(table.frame.columns) == ["id", "score"]
    assert cells(table.frame, "score") == [2.5, None]
    assert list_sheets(path) == ["Data"]


def test_title_line_and_separator_hint_are_not_data(tmp_path):
    path = write_xlsx(
        tmp_path / "t.xlsx",
        {"S": [["Participant survey export"], [], ["id", "age", "site"], ["A", 30, "North"]]},
    )
    table = read_source(path)
    assert list(table.frame.columns) == ["id", "age", "site"]
    assert table.report["title_rows"] == ["Participant survey export"]
    assert cells(table.frame, "age") == [30.0]
    csv = tmp_path / "hint.csv"
    csv.write_text("sep=;\nid;note\n1;a,b\n", encoding="utf-8")
    table = read_source(csv)
    assert table.report["delimiter"] == ";"
    assert cells(table.frame, "note") == ["a,b"]


def test_long_question_headers_are_not_mistaken_for_prose(tmp_path):
    path = tmp_path / "q.csv"
    path.write_text(
        "How satisfied are you with the course overall,What would you change about it\n"
        "Satisfied,More lab time please.\nVery satisfied,Nothing at all.\n"
        "Dissatisfied,Shorter lectures.\n",
        encoding="utf-8",
    )
    table = read_source(path)
    assert table.report["n_rows"] == 3 and table.report["n_columns"] == 2


def test_question_then_option_header_rows(tmp_path):
    question = "Which of these made it harder to take part? (choose all that apply)"
    rows = [
        ["Respondent ID", question, None, None, "How satisfied are you overall?"],
        [None, "Transportation", "Childcare", "Cost of tools", "Response"],
        [101, "Transportation", None, "Cost of tools", "Satisfied"],
        [102, None, "Childcare", None, "Very satisfied"],
        [103, None, None, None, "Dissatisfied"],
    ]
    path = write_xlsx(tmp_path / "expanded.xlsx", {"Export": rows})
    table = read_source(path)
    assert table.report["header_rows"] == 2
    assert table.report["header_style"] == "question_option"
    assert list(table.frame.columns) == [
        "Respondent ID",
        f"{question} - Transportation",
        f"{question} - Childcare",
        f"{question} - Cost of tools",
        "How satisfied are you overall?",
    ]
    assert cells(table.frame, f"{question} - Childcare") == [None, "Childcare", None]
    assert table.report["renamed_headers"] == []
    # A first data row under named columns is data, not an option row.
    plain = write_xlsx(
        tmp_path / "plain.xlsx",
        {"S": [["id", "score", None], ["A", 1, "x"], ["B", 2, "y"], ["C", 3, "z"]]},
    )
    assert read_source(plain).report["header_rows"] == 1
