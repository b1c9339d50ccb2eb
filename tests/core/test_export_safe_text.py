"""Formula-injection neutralisation (METHODS.md §12: OWASP "CSV Injection", ASVS 1.2.10)."""

from __future__ import annotations

import csv
import io

import pytest

from core.export.safe_text import as_number, csv_text, neutralise, safe_cell, write_csv
from tests.core.export_results import INJECTION_CORPUS


@pytest.mark.parametrize("text", INJECTION_CORPUS[:6] + ["\n=1", "\0=1", "-", "=", "@"])
def test_dangerous_first_characters_get_a_quote(text):
    # OWASP: =, +, -, @, tab, CR, LF; ASVS 1.2.10 adds NUL.
    assert neutralise(text) == "'" + text


@pytest.mark.parametrize("text", ["Satisfied", "", "'=already quoted", "1 = yes", " =1"])
def test_harmless_text_is_unchanged(text):
    assert neutralise(text) == text


def test_owasp_examples_exactly():
    # OWASP "CSV Injection" page: the two worked examples, verbatim (METHODS.md §12).
    assert csv_text([['=1+2";=1+2']]) == '"\'=1+2"";=1+2"\r\n'
    assert csv_text([["=1+2'\" ;,=1+2"]]) == '"\'=1+2\'"" ;,=1+2"\r\n'


def test_embedded_quote_and_separator_stay_inside_one_cell():
    # A value with an embedded `";=` must not start a new cell (OWASP: check more than the
    # first character); the csv module doubles the quote, so it reads back as one field.
    text = csv_text([['safe";=1+2', 3]])
    assert text == '"safe"";=1+2",3\r\n'
    assert next(csv.reader(io.StringIO(text))) == ['safe";=1+2', "3"]


def test_genuine_numbers_stay_numbers():
    # METHODS.md Appendix B.6: escaping must not corrupt genuine negative numbers.
    assert csv_text([[-5, -1.5, 0, 12]]) == "-5,-1.5,0,12\r\n"
    assert as_number(-5) == -5
    assert as_number("-5") == -5 and isinstance(as_number("-5"), int)
    assert as_number("-0.25") == -0.25
    assert safe_cell("-3") == -3


@pytest.mark.parametrize(
    "value", ["+1", "-1+1", "1e3", "007", "12.", "--1", "- 1", True, float("nan"), float("inf")]
)
def test_text_that_only_looks_like_a_number_is_text(value):
    assert as_number(value) is None


def test_corpus_round_trips_through_a_csv_file(tmp_path):
    rows = [[text, -1] for text in INJECTION_CORPUS]
    path = write_csv(tmp_path / "corpus.csv", rows)
    raw = path.read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf")  # UTF-8 byte-order mark for spreadsheet programs
    with open(path, encoding="utf-8-sig", newline="") as fh:
        back = list(csv.reader(fh))
    for original, (cell, number) in zip(INJECTION_CORPUS, back):
        assert number == "-1"  # the negative number is written bare, not quoted or prefixed
        dangerous = original[0] in "=+-@\t\r"
        assert cell == ("'" + original if dangerous else original)
        assert not cell.startswith(("=", "+", "-", "@", "\t", "\r"))
