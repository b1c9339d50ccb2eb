"""Missing-data treatments give the documented denominators (issue: missing data)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.codebook import Variable
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from tests.core.tables_helpers import make_project

# Invented 40-row fixture: "sat" misses 6 (4 skipped, 2 declined), "hours" misses 5 (one row
# misses both), "site" is complete. Each expected denominator is counted from the frame.
N = 40


@pytest.fixture()
def project(tmp_path):
    rng = np.random.default_rng(3)
    sat = list(rng.choice(["Low", "Mid", "High"], N, p=[0.2, 0.3, 0.5]))
    hours = [float(x) for x in rng.integers(5, 40, N)]
    for i in (0, 1, 2, 3):
        sat[i] = None
    sat[4] = sat[5] = "refused"
    for i in (3, 10, 11, 12, 13):
        hours[i] = np.nan
    frame = pd.DataFrame({"sat": sat, "hours": hours, "site": ["North"] * 20 + ["South"] * 20})
    variables = [
        Variable(
            "sat",
            "Satisfaction",
            "ordinal",
            levels=["Low", "Mid", "High"],
            missing_codes={"refused": "declined"},
        ),
        Variable("hours", "Hours a week", "numeric"),
        Variable("site", "Site", "categorical", levels=["North", "South"]),
    ]
    with make_project(tmp_path, frame, variables) as p:
        yield p, frame


def test_available_cases_use_everyone_who_answered(project):
    p, frame = project
    sat = compute_table(p, TableSpec("sat", min_cell=0))
    hours = compute_table(p, TableSpec("hours", min_cell=0))
    assert sat.n_valid == 34 and sat.base == "Respondents who answered, n = 34 of 40"
    assert hours.n_valid == 35 and hours.base == "Respondents who answered, n = 35 of 40"
    assert sat.data["missing"] == {"skipped": 4, "declined": 2}
    assert sum(sat.data["percents"].values()) == pytest.approx(100)
    assert any("available cases" in n for n in sat.notes)


def test_complete_cases_share_one_denominator(project):
    p, _ = project
    spec = dict(treatment="complete", complete_items=("sat", "hours"), min_cell=0)
    sat = compute_table(p, TableSpec("sat", **spec))
    hours = compute_table(p, TableSpec("hours", **spec))
    # 6 miss sat, 5 miss hours, 1 misses both: 40 - 10 = 30 answered both.
    assert sat.n_valid == hours.n_valid == 30
    assert sat.data["missing"]["incomplete_case"] == 10
    assert any("complete cases" in n and "10 of 40 left out" in n for n in sat.notes)
    # By default the complete-case set is the table's own variables and break-downs.
    by = compute_table(p, TableSpec("hours", by=("sat",), treatment="complete", min_cell=0))
    assert by.data["stats"]["n"] == 30


def test_single_imputation_fills_in_and_says_so(project):
    p, frame = project
    hours = compute_table(p, TableSpec("hours", treatment="impute", min_cell=0))
    median = float(np.nanmedian(frame["hours"]))
    filled = frame["hours"].fillna(median)
    assert hours.n_valid == 40
    assert hours.data["stats"]["mean"] == pytest.approx(filled.mean())
    assert hours.data["stats"]["sd"] == pytest.approx(filled.std(ddof=0))
    caution = [n for n in hours.notes if n.startswith("Caution: 5 missing answers to hours")]
    assert caution and f"{median:g}" in caution[0]
    sat = compute_table(p, TableSpec("sat", treatment="impute", min_cell=0))
    top = frame["sat"].where(frame["sat"] != "refused").value_counts().idxmax()
    counts = frame["sat"].where(frame["sat"] != "refused").value_counts()
    assert sat.data["counts"][top] == counts[top] + 6
    assert sat.n_valid == 40
    assert any("most frequent answer" in n for n in sat.notes)


def test_not_applicable_is_never_imputed(tmp_path):
    frame = pd.DataFrame({"job": ["Yes"] * 8 + ["No"] * 6 + ["N/A"] * 3 + [None] * 2})
    var = Variable(
        "job",
        "Employed in field?",
        "categorical",
        levels=["Yes", "No"],
        missing_codes={"N/A": "not_applicable"},
    )
    with make_project(tmp_path, frame, [var]) as p:
        result = compute_table(p, TableSpec("job", treatment="impute", min_cell=0))
        assert result.data["counts"] == {"Yes": 10, "No": 6}
        assert result.data["missing"] == {"not_applicable": 3}


def test_missing_shown_as_rows_by_reason_or_combined(project):
    p, _ = project
    by_reason = compute_table(p, TableSpec("sat", treatment="show-missing", min_cell=0))
    assert by_reason.base == "All respondents, n = 40"
    assert sum(by_reason.data["percents"].values()) == pytest.approx(34 / 40 * 100)
    labels = [r[0].display for r in by_reason.rows]
    assert "Skipped (left blank)" in labels and "Declined to answer" in labels
    missing_rows = [r for r, role in zip(by_reason.rows, by_reason.row_roles) if role == "missing"]
    assert [r[2].display for r in missing_rows] == ["10.0%", "5.0%"]
    combined = compute_table(
        p, TableSpec("sat", treatment="show-missing", missing_rows="combined", min_cell=0)
    )
    assert combined.data["missing"] == {"missing": 6}
    # In a cross-tabulation the reasons become columns and the group totals include them.
    cross = compute_table(p, TableSpec("sat", by=("site",), treatment="show-missing", min_cell=0))
    assert sum(cross.data["group_bases"].values()) == 40
    assert sum(cross.data["missing_counts"]["North"].values()) == 6  # rows 0-5 are North


def test_show_missing_on_statistics_says_what_it_did(project):
    p, _ = project
    result = compute_table(p, TableSpec("hours", treatment="show-missing", min_cell=0))
    assert result.n_valid == 35
    assert any("no rows for missing answers" in n for n in result.notes)
    assert not any("percentages are of all respondents" in n for n in result.notes)
