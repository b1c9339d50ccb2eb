"""Borda count against the published worked examples in METHODS.md section 1."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.codebook import Variable
from core.tables.build import compute_table
from core.tables.ranking import ballot_positions, borda, rank_counts
from core.tables.spec import TableSpec
from tests.core.tables_helpers import make_project

CITIES = ["Memphis", "Nashville", "Chattanooga", "Knoxville"]
# METHODS.md section 1, check value A (the 100-voter "Tennessee capital" example).
TENNESSEE = [
    (42, ["Memphis", "Nashville", "Chattanooga", "Knoxville"]),
    (26, ["Nashville", "Chattanooga", "Knoxville", "Memphis"]),
    (15, ["Chattanooga", "Knoxville", "Nashville", "Memphis"]),
    (17, ["Knoxville", "Chattanooga", "Nashville", "Memphis"]),
]


def tennessee_ranks() -> np.ndarray:
    rows = []
    for share, order in TENNESSEE:
        rows += [[order.index(city) + 1 for city in CITIES]] * share
    return np.array(rows, dtype=float)


def test_tennessee_totals_and_position_counts():
    positions, valid, answered = ballot_positions(tennessee_ranks())
    assert valid.all() and answered.all()
    points = borda(positions)
    assert dict(zip(CITIES, points.tolist())) == {
        "Memphis": 126,
        "Nashville": 194,
        "Chattanooga": 173,
        "Knoxville": 107,
    }
    assert points.sum() == 600  # 100 ballots x 6 points
    counts = dict(zip(CITIES, rank_counts(positions).tolist()))
    assert counts["Memphis"][0] == 42 and counts["Memphis"][3] == 58
    assert counts["Nashville"] == [26, 42, 32, 0]
    assert counts["Chattanooga"] == [15, 43, 42, 0]
    assert counts["Knoxville"] == [17, 15, 26, 42]
    # Borda's own 4-3-2-1 scheme: 294, 273, 226, 207 (each +100).
    alt = dict(zip(CITIES, borda(positions, points=(4, 3, 2, 1)).tolist()))
    assert alt == {"Memphis": 226, "Nashville": 294, "Chattanooga": 273, "Knoxville": 207}


# METHODS.md section 1, check value C: ballots A>B>C>D, B>A, C, D>C>B>A.
PARTIAL = np.array(
    [
        [1, 2, 3, 4],
        [2, 1, np.nan, np.nan],
        [np.nan, np.nan, 1, np.nan],
        [4, 3, 2, 1],
    ]
)


@pytest.mark.parametrize(
    ("rule", "expected"),
    [("zero", [5, 6, 6, 3]), ("average", [6, 7, 6.5, 4.5]), ("modified", [6, 7, 6, 5])],
)
def test_partial_ballot_variants(rule, expected):
    positions, valid, _ = ballot_positions(PARTIAL)
    assert valid.all()
    assert borda(positions, rule).tolist() == expected


def test_average_rule_hands_out_the_same_total_per_ballot():
    # Invariant from METHODS.md section 1: ballots x n(n-1)/2.
    positions, _, _ = ballot_positions(PARTIAL)
    assert borda(positions, "average").sum() == 4 * 6


def test_complete_ballots_rank_options_identically_under_every_rule():
    positions, _, _ = ballot_positions(tennessee_ranks())
    orders = {
        rule: np.argsort(-borda(positions, rule)).tolist()
        for rule in ("zero", "average", "modified")
    }
    assert orders["zero"] == orders["average"] == orders["modified"]


def test_ties_and_impossible_ranks_are_left_out():
    ranks = np.array(
        [[1, 1, 2, np.nan], [0, 1, 2, 3], [1.5, 2, 3, 4], [1, 2, 4, np.nan], [np.nan] * 4]
    )
    positions, valid, answered = ballot_positions(ranks)
    assert valid.tolist() == [False, False, False, True, False]
    assert answered.tolist() == [True, True, True, True, False]
    # Gaps keep the order: ranks 1, 2, 4 are 1st, 2nd and 3rd place.
    assert positions[3].tolist() == [1, 2, 3, 0]


@pytest.fixture()
def tennessee_project(tmp_path):
    ranks = tennessee_ranks()
    frame = pd.DataFrame({f"rank_{c.lower()}": ranks[:, i] for i, c in enumerate(CITIES)})
    frame["region"] = ["East" if i % 2 else "West" for i in range(len(frame))]
    variables = [
        Variable(
            f"rank_{c.lower()}",
            f"Rank the cities as capital - {c}",
            "ranking",
            group="capital",
            option=c,
        )
        for c in CITIES
    ] + [Variable("region", "Region", "categorical", levels=["East", "West"])]
    with make_project(tmp_path, frame, variables) as p:
        yield p


def test_ranking_table_from_a_project(tennessee_project):
    result = compute_table(tennessee_project, TableSpec("capital"))
    assert result.table_type == "ranking"
    assert result.data["options"] == ["Nashville", "Chattanooga", "Memphis", "Knoxville"]
    assert result.data["points"] == {
        "Nashville": 194,
        "Chattanooga": 173,
        "Memphis": 126,
        "Knoxville": 107,
    }
    assert result.data["rank_counts"]["Knoxville"] == {"1": 17, "2": 15, "3": 26, "4": 42}
    assert result.data["rule"] == "zero"
    assert result.title == "Rank the cities as capital"
    assert result.base == "Respondents who ranked at least one option, n = 100 of 100"
    assert any("3, 2, 1, 0" in n for n in result.notes)
    assert any("not averaged" in n for n in result.notes)
    # A member's name leads to its group's table.
    assert (
        compute_table(tennessee_project, TableSpec("rank_memphis")).data["points"]
        == result.data["points"]
    )


def test_ranking_by_group_adds_up(tennessee_project):
    result = compute_table(tennessee_project, TableSpec("capital", by=("region",)))
    by = result.data["points_by_group"]
    for city, total in result.data["points"].items():
        assert by["East"][city] + by["West"][city] == total
    assert result.data["group_bases"] == {"East": 50, "West": 50}
