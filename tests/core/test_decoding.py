"""Decoding raw cells by the codebook: numbers, levels, missing codes, invalid answers."""

from __future__ import annotations

import math

import pandas as pd

from core.codebook import Codebook, Variable
from core.decoding import cell_text, decode_table, decode_variable
from core.kinds import Kind


def test_cell_text_keeps_text_as_written_and_numbers_without_trailing_zero():
    texts = cell_text(pd.Series(["007", "None", "NA", " ", None], dtype=object))
    assert list(texts) == ["007", "None", "NA", None, None]
    assert list(cell_text(pd.Series([12.0, 2.5, float("nan")]))) == ["12", "2.5", None]


def test_numeric_with_missing_code_and_invalid_text():
    var = Variable("age", kind=Kind.NUMERIC, missing_codes={"-99": "declined"})
    values, reasons = decode_variable(var, pd.Series(["34", "-99", "", "abc"], dtype=object))
    assert values.iloc[0] == 34.0
    assert all(math.isnan(v) for v in values.iloc[1:])
    assert list(reasons.astype(object).iloc[1:]) == ["declined", "skipped", "invalid"]


def test_likert_codes_map_to_ordered_levels():
    var = Variable(
        "q",
        kind=Kind.LIKERT,
        levels=("Disagree", "Neutral", "Agree"),
        value_labels={"1": "Disagree", "2": "Neutral", "3": "Agree"},
    )
    values, reasons = decode_variable(var, pd.Series([3.0, 1.0, None]))
    assert list(values.iloc[:2]) == ["Agree", "Disagree"]
    assert values.cat.ordered
    assert values.cat.codes.iloc[0] > values.cat.codes.iloc[1]
    assert reasons.iloc[2] == "skipped"


def test_an_answer_called_none_stays_an_answer():
    var = Variable("barriers", kind=Kind.MULTISELECT, levels=("Childcare", "None"), delimiter=";")
    values, reasons = decode_variable(var, pd.Series(["None", "Childcare; None", None]))
    assert values.iloc[0] == ("None",)
    assert values.iloc[1] == ("Childcare", "None")
    assert reasons.iloc[2] == "skipped"


def test_option_columns_all_blank_means_the_question_was_skipped():
    book = Codebook(
        [
            Variable("b_a", kind=Kind.MULTISELECT, option="A", group="b"),
            Variable("b_b", kind=Kind.MULTISELECT, option="B", group="b"),
        ]
    )
    raw = pd.DataFrame({"b_a": ["1", None, None], "b_b": [None, "1", None]})
    values, reasons = decode_table(book, raw)
    assert list(values["b_a"].iloc[:2]) == [1.0, 0.0]
    assert reasons["b_a"].iloc[2] == "skipped" and reasons["b_b"].iloc[2] == "skipped"
    assert pd.isna(reasons["b_a"].iloc[1])
