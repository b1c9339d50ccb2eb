"""Frequency tables, checked on statsmodels' bundled ANES 1996 extract against pandas.

Source of the expected counts: METHODS.md section 16 (``PID.value_counts()`` and ``selfLR``
on ``sm.datasets.anes96``), re-derived here with ``pandas.Series.value_counts``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.codebook import Variable
from core.ledger import Action, Decision, record
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from tests.core.tables_helpers import anes96, make_project

PID_LEVELS = [str(i) for i in range(7)]


@pytest.fixture(scope="module")
def anes():
    return anes96()


@pytest.fixture(scope="module")
def project(tmp_path_factory, anes):
    frame = anes[["PID", "vote", "selfLR", "educ", "age"]]
    variables = [
        Variable("PID", "Party identification", "ordinal", levels=PID_LEVELS),
        Variable(
            "vote",
            "Vote in 1996",
            "categorical",
            levels=["Clinton", "Dole"],
            value_labels={"0": "Clinton", "1": "Dole"},
        ),
        Variable(
            "selfLR", "Left-right self-placement", "likert", levels=[str(i) for i in range(1, 8)]
        ),
        Variable("educ", "Education", "ordinal", levels=[str(i) for i in range(1, 8)]),
        Variable("age", "Age", "numeric"),
    ]
    p = make_project(
        tmp_path_factory.mktemp("anes"), frame, variables, instrument="ANES 1996", wave="1996"
    )
    yield p
    p.close()


def test_pid_counts_match_pandas_and_the_published_figures(project, anes):
    result = compute_table(project, TableSpec("PID", min_cell=0))
    expected = anes["PID"].value_counts().sort_index()
    assert result.data["counts"] == {str(int(k)): int(v) for k, v in expected.items()}
    # METHODS.md section 16: {0: 200, 1: 180, 2: 108, 3: 37, 4: 94, 5: 150, 6: 175}.
    assert list(result.data["counts"].values()) == [200, 180, 108, 37, 94, 150, 175]
    pcts = [round(v, 2) for v in result.data["percents"].values()]
    assert pcts == [21.19, 19.07, 11.44, 3.92, 9.96, 15.89, 18.54]
    assert result.n_valid == 944 and result.n_missing == 0
    assert result.base == "Respondents who answered, n = 944 of 944"
    assert result.table_type == "frequency" and result.kind == "ordinal"


def test_cumulative_percent_only_for_ordered_kinds(project, anes):
    ordered = compute_table(project, TableSpec("educ"))
    cum = np.cumsum(anes["educ"].value_counts().sort_index().to_numpy()) / len(anes) * 100
    assert list(ordered.data["cumulative"].values()) == pytest.approx(list(cum))
    assert "Cumulative %" in ordered.columns
    unordered = compute_table(project, TableSpec("vote"))
    assert "cumulative" not in unordered.data and "Cumulative %" not in unordered.columns
    assert unordered.data["counts"] == {"Clinton": 551, "Dole": 393}  # METHODS.md section 16


def test_levels_in_codebook_order_or_by_frequency(project):
    by_level = compute_table(project, TableSpec("vote"))
    assert by_level.data["levels"] == ["Clinton", "Dole"]
    # Sorting by frequency applies to unordered categories only.
    pid = compute_table(project, TableSpec("PID", sort="frequency"))
    assert pid.data["levels"] == PID_LEVELS


def test_display_rows_match_data(project):
    result = compute_table(project, TableSpec("PID"))
    assert result.columns[:3] == ["Answer", "Count", "% of those who answered"]
    first = result.rows[0]
    assert first[0].display == "0" and first[1].display == "200" and first[2].display == "21.2%"
    assert result.row_roles[:7] == ["level"] * 7 and result.row_roles[7] == "total"
    assert any(n == "Source: ANES 1996, wave 1996." for n in result.notes)


def test_missing_rows_by_reason_and_small_counts_hidden(tmp_path):
    # Invented fixture: 20 Yes, 10 No, 2 Maybe, 6 skipped, 1 declined (by missing code).
    answers = ["Yes"] * 20 + ["No"] * 10 + ["Maybe"] * 2 + [None] * 6 + ["99"]
    frame = pd.DataFrame({"q": answers})
    var = Variable(
        "q",
        "Any answer?",
        "categorical",
        levels=["Yes", "No", "Maybe"],
        missing_codes={"99": "declined"},
    )
    with make_project(tmp_path, frame, [var]) as p:
        result = compute_table(p, TableSpec("q"))
        # Maybe (2) is hidden, and No (the smallest other answer) with it, so that Maybe is
        # not simply 32 minus the rest; likewise for the two missing reasons.
        assert result.data["counts"] == {"Yes": 20, "No": None, "Maybe": None}
        assert result.data["missing"] == {"skipped": None, "declined": None}
        labels = [row[0].display for row in result.rows]
        assert labels == [
            "Yes",
            "No",
            "Maybe",
            "Total answered",
            "Skipped (left blank)",
            "Declined to answer",
            "All respondents",
        ]
        assert [row[1].display for row in result.rows] == ["20", "–", "<5", "32", "–", "<5", "39"]
        assert result.rows[2][2].display == "–"  # its percentage is hidden too
        assert result.base == "Respondents who answered, n = 32 of 39"
        assert any("7 of 39 respondents (17.9%) have no answer to q" in n for n in result.notes)
        shown = compute_table(p, TableSpec("q", min_cell=0))
        assert shown.data["counts"] == {"Yes": 20, "No": 10, "Maybe": 2}
        assert shown.data["missing"] == {"skipped": 6, "declined": 1}


def test_excluded_respondents_and_cleaning_are_in_the_notes(tmp_path):
    frame = pd.DataFrame({"q": ["Yes"] * 12 + ["No"] * 8})
    var = Variable("q", "Any answer?", "categorical", levels=["Yes", "No"])
    with make_project(tmp_path, frame, [var]) as p:
        wave = p.find_wave()
        record(p, wave.id, [Decision(Action.EXCLUDE, "Test submission", row=0)])
        record(p, wave.id, [Decision(Action.SET_MISSING, "Not a real answer", ("q",), row=1)])
        result = compute_table(p, TableSpec("q"))
        assert result.base == "Respondents who answered, n = 18 of 19"
        assert result.data["missing"] == {"set_missing": None}  # one cell: hidden
        assert any("Cleaning" in n or "clean" in n.lower() for n in result.notes)


def test_cumulative_percent_never_reveals_a_hidden_count(tmp_path):
    # Invented: levels A..E with counts 20, 3, 15, 2, 30 (3 and 2 hidden).
    counts = {"A": 20, "B": 3, "C": 15, "D": 2, "E": 30}
    frame = pd.DataFrame({"band": [k for k, n in counts.items() for _ in range(n)]})
    var = Variable("band", "Band", "ordinal", levels=list(counts))
    with make_project(tmp_path, frame, [var]) as p:
        result = compute_table(p, TableSpec("band"))
        assert result.data["counts"] == {"A": 20, "B": None, "C": 15, "D": None, "E": 30}
        cum = result.data["cumulative"]
        # Shown: before the first hidden count and after the last one; hidden in between,
        # where "B" would be 100 * cum(B) / 70 - 20.
        assert cum["A"] == pytest.approx(20 / 70 * 100) and cum["E"] == pytest.approx(100)
        assert cum["B"] is None and cum["C"] is None
        assert cum["D"] == pytest.approx(40 / 70 * 100)
