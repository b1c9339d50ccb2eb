"""Choose-all-that-apply: both storages give the same table; bases and shares."""

from __future__ import annotations

import pandas as pd
import pytest

from core.codebook import Variable
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from tests.core.tables_helpers import make_project

OPTIONS = ["Transportation", "Childcare", "Cost of tools", "None"]
# Invented answers: 40 respondents, 8 skipped. Expected counts are tallied by hand below.
ANSWERS = (
    ["Transportation;Childcare"] * 10
    + ["Childcare"] * 6
    + ["None"] * 9
    + ["Cost of tools;Transportation"] * 7
    + [None] * 8
)
GROUPS = (["Day"] * 5 + ["Evening"] * 5) * 2 + ["Day"] * 12 + ["Evening"] * 8


@pytest.fixture()
def project(tmp_path):
    frame = pd.DataFrame({"barriers": ANSWERS, "session": GROUPS})
    for o in OPTIONS:  # the same answers, stored one column per option
        frame["b_" + o[:4].lower()] = [
            ("Yes" if a is not None and o in a.split(";") else None) for a in ANSWERS
        ]
    variables = [
        Variable(
            "barriers", "Which barriers did you face?", "multiselect", levels=OPTIONS, delimiter=";"
        ),
        Variable("session", "Session", "categorical", levels=["Day", "Evening"]),
    ] + [
        Variable(
            "b_" + o[:4].lower(),
            f"Barriers faced - {o}",
            "multiselect",
            group="barrier_cols",
            option=o,
        )
        for o in OPTIONS
    ]
    with make_project(tmp_path, frame, variables) as p:
        yield p


def test_delimited_counts_and_percentages(project):
    result = compute_table(project, TableSpec("barriers"))
    assert result.table_type == "multiselect"
    assert result.data["base"] == 32
    assert result.data["counts"] == {
        "Transportation": 17,
        "Childcare": 16,
        "Cost of tools": 7,
        "None": 9,
    }
    assert result.data["percents"]["Transportation"] == pytest.approx(17 / 32 * 100)
    assert result.data["pct_of_choices"]["Childcare"] == pytest.approx(16 / 49 * 100)
    assert sum(result.data["pct_of_choices"].values()) == pytest.approx(100)
    assert result.base == "Respondents who answered, n = 32 of 40"


def test_one_column_per_option_gives_the_same_numbers(project):
    a = compute_table(project, TableSpec("barriers"))
    b = compute_table(project, TableSpec("barrier_cols"))
    assert b.data["options"] == OPTIONS
    for key in ("counts", "percents", "pct_of_choices", "base"):
        assert a.data[key] == b.data[key]
    assert b.title == "Barriers faced"


def test_by_group(project):
    result = compute_table(project, TableSpec("barriers", by=("session",), min_cell=0))
    frame = pd.DataFrame({"a": ANSWERS, "g": GROUPS}).dropna()
    for g in ("Day", "Evening"):
        sub = frame[frame.g == g]
        n_transport = sum("Transportation" in a.split(";") for a in sub.a)
        assert result.data["counts"][g]["Transportation"] == n_transport
        assert result.data["group_bases"][g] == len(sub)
        assert result.data["percents"][g]["Transportation"] == pytest.approx(
            n_transport / len(sub) * 100
        )
