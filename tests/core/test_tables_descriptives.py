"""Descriptive statistics against Python's statistics module, numpy and scipy."""

from __future__ import annotations

import statistics

import numpy as np
import pandas as pd
import pytest
from scipy import stats as sps

from core.codebook import Variable
from core.tables.build import compute_table
from core.tables.descriptives import box_stats, describe
from core.tables.spec import TableSpec
from tests.core.tables_helpers import anes96, make_project

# METHODS.md section 2: Wikipedia's "Quartile" example, type 7 Q1 25.5, Q3 42.5.
W = [6, 7, 15, 36, 39, 40, 41, 42, 43, 47, 49]
MULTIMODAL = [1, 2, 2, 3, 3, 4, 5, 5, 9]


@pytest.mark.parametrize("data", [W, MULTIMODAL, [2.5, 3.75, 3.75, 10.0, -1.25, 7.0]])
def test_describe_matches_statistics_module(data):
    pop = describe(np.array(data), "population")
    # Reference: Python's statistics module (mean, median, multimode, pstdev, pvariance).
    assert pop["mean"] == pytest.approx(statistics.mean(data))
    assert pop["median"] == pytest.approx(statistics.median(data))
    repeats = len(set(data)) < len(data)
    # multimode returns every value when none repeats; the table then reports no mode.
    assert pop["modes"] == (statistics.multimode(data) if repeats else [])
    assert pop["sd"] == pytest.approx(statistics.pstdev(data))
    assert pop["variance"] == pytest.approx(statistics.pvariance(data))
    sample = describe(np.array(data), "sample")
    assert sample["sd"] == pytest.approx(statistics.stdev(data))
    assert sample["variance"] == pytest.approx(statistics.variance(data))
    assert pop["min"] == min(data) and pop["max"] == max(data)
    assert pop["range"] == pytest.approx(max(data) - min(data))
    # Quartiles: numpy with method="linear" (Hyndman & Fan type 7), IQR as scipy computes it.
    q1, q3 = np.quantile(data, [0.25, 0.75], method="linear")
    assert pop["q1"] == pytest.approx(q1) and pop["q3"] == pytest.approx(q3)
    assert pop["iqr"] == pytest.approx(sps.iqr(data, interpolation="linear"))


def test_quartiles_are_type_7_published_values():
    s = describe(np.array(W))
    assert (s["q1"], s["median"], s["q3"], s["iqr"]) == (25.5, 40.0, 42.5, 17.0)
    ten = describe(np.arange(1, 11))
    assert (ten["q1"], ten["q3"]) == (3.25, 7.75)  # METHODS.md section 2


def test_several_modes_are_all_listed_and_no_mode_when_nothing_repeats():
    assert describe(np.array(MULTIMODAL))["modes"] == [2, 3, 5]
    # statistics.multimode would return every value here; a table says there is no mode.
    assert describe(np.array([1.0, 2.0, 3.0]))["modes"] == []
    assert describe(np.array([4.0]))["modes"] == [4]


def test_sample_formula_needs_two_values():
    one = describe(np.array([5.0]), "sample")
    assert one["sd"] is None and one["variance"] is None
    assert describe(np.array([5.0]), "population")["sd"] == 0.0
    empty = describe(np.array([]))
    assert empty["n"] == 0 and empty["mean"] is None and empty["modes"] == []


def test_box_whiskers_follow_tukeys_fences():
    # METHODS.md section 2: Y = 1..10, 100: Q1 3.5, Q3 8.5, inner fences -4 and 16.
    y = np.array([*range(1, 11), 100], dtype=float)
    box = box_stats(y, describe(y))
    assert (box["q1"], box["q3"]) == (3.5, 8.5)
    assert box["whislo"] == 1 and box["whishi"] == 10 and box["fliers"] == [100]


@pytest.fixture(scope="module")
def anes_project(tmp_path_factory):
    frame = anes96()[["age", "vote"]]
    variables = [
        Variable("age", "Age in years", "numeric"),
        Variable("vote", "Vote", "categorical", levels=["0", "1"]),
    ]
    p = make_project(tmp_path_factory.mktemp("anes"), frame, variables)
    yield p, frame
    p.close()


def test_table_by_group_matches_pandas(anes_project):
    project, frame = anes_project
    result = compute_table(project, TableSpec("age", by=("vote",)))
    assert result.table_type == "descriptives"
    by = frame.groupby("vote")["age"]
    for code, g in ((0.0, "0"), (1.0, "1")):
        st = result.data["stats_by_group"][g]
        assert st["n"] == by.size()[code]
        assert st["mean"] == pytest.approx(by.mean()[code])
        assert st["median"] == pytest.approx(by.median()[code])
        assert st["sd"] == pytest.approx(by.std(ddof=0)[code])  # population by default
        assert st["q1"] == pytest.approx(by.quantile(0.25)[code])
    assert result.data["stats"]["mean"] == pytest.approx(frame["age"].mean())
    assert result.columns == ["Statistic", "0", "1", "All"]
    assert any("population formula" in n for n in result.notes)
    assert any("type 7" in n for n in result.notes)
    sample = compute_table(project, TableSpec("age", sd="sample"))
    assert sample.data["stats"]["sd"] == pytest.approx(frame["age"].std(ddof=1))
    assert any("sample formula" in n for n in sample.notes)
    hist = result.data["histogram"]
    assert sum(c for c in hist["counts"] if c is not None) <= len(frame)
    assert len(hist["edges"]) == len(hist["counts"]) + 1


def test_small_groups_hide_their_statistics_and_one_more(tmp_path):
    # Invented: group C has 3 people; their mean would identify them.
    frame = pd.DataFrame(
        {
            "hours": [10, 12, 14, 20, 22, 25, 30, 8, 9, 40, 41, 42, 11, 13],
            "site": ["A"] * 6 + ["B"] * 5 + ["C"] * 3,
        }
    )
    variables = [
        Variable("hours", "Hours", "numeric"),
        Variable("site", "Site", "categorical", levels=["A", "B", "C"]),
    ]
    with make_project(tmp_path, frame, variables) as p:
        result = compute_table(p, TableSpec("hours", by=("site",)))
        by = result.data["stats_by_group"]
        assert by["C"]["mean"] is None and result.data["group_bases"]["C"] is None
        # B is hidden too: otherwise C = All minus A minus B.
        assert by["B"]["mean"] is None and by["A"]["mean"] == pytest.approx(
            np.mean([10, 12, 14, 20, 22, 25])
        )
        n_row = result.rows[0]
        assert [c.display for c in n_row] == ["Number answered (n)", "6", "–", "<5", "14"]
        off = compute_table(p, TableSpec("hours", by=("site",), min_cell=0))
        assert off.data["stats_by_group"]["C"]["mean"] == pytest.approx(np.mean([11, 13, 42]))
