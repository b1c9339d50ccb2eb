"""Grouping numbers into categories: cut points, equal width, quantiles; derived variables."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.codebook import Variable
from core.ledger import Action, Decision, record
from core.tables.binning import bin_values, bin_variable, cut_points_for, group_labels
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from tests.core.tables_helpers import anes96, make_project


def test_cut_points_methods():
    x = np.arange(18, 65, dtype=float)
    assert cut_points_for(x, "cuts", cuts=[45, 25, 35]) == (25.0, 35.0, 45.0)
    # Equal width over 18..64 in 4 groups: 29.5, 41, 52.5, rounded up for whole numbers.
    assert cut_points_for(x, "equal", n_groups=4) == (30.0, 41.0, 53.0)
    # Quantiles by linear interpolation (numpy method="linear"), rounded up.
    q = np.quantile(x, [0.25, 0.5, 0.75], method="linear")
    assert cut_points_for(x, "quantile", n_groups=4) == tuple(float(np.ceil(v)) for v in q)
    assert cut_points_for(np.array([0.5, 1.5, 2.5]), "equal", n_groups=2) == (1.5,)


def test_labels_and_the_boundary_rule():
    assert group_labels([25, 35, 45]) == ["Under 25", "25–34", "35–44", "45 and over"]
    assert group_labels([1.5], whole_numbers=False) == ["Under 1.5", "1.5 and over"]
    assert group_labels([25, 26]) == ["Under 25", "25", "26 and over"]
    # A value on a cut point belongs to the group above, like pandas.cut(right=False).
    x = np.array([18, 24.9, 25, 34, 35, 90, np.nan])
    expected = pd.cut(x, [-np.inf, 25, 35, np.inf], right=False, labels=False)
    got = bin_values(x, [25, 35])
    assert got[:-1].tolist() == expected[:-1].astype(int).tolist() and got[-1] == -1


def test_derived_variable_is_recorded_and_follows_cleaning(tmp_path):
    frame = anes96()[["age"]]
    with make_project(tmp_path, frame, [Variable("age", "Age in years", "numeric")]) as p:
        var = bin_variable(p, "age", cuts=[30, 45, 60])
        stored = p.codebook(p.instruments()[0].id)["age_group"]
        assert stored == var and stored.derived_from == "age" and stored.kind.value == "ordinal"
        assert stored.cut_points == (30.0, 45.0, 60.0)
        result = compute_table(p, TableSpec("age_group", min_cell=0))
        expected = pd.cut(frame["age"], [-np.inf, 30, 45, 60, np.inf], right=False)
        assert list(result.data["counts"].values()) == expected.value_counts(sort=False).tolist()
        # Correct one age across a cut point: the derived group follows.
        row = int(np.flatnonzero(frame["age"].to_numpy() == frame["age"].max())[0])
        wave = p.find_wave()
        record(
            p,
            wave.id,
            [
                Decision(
                    Action.CORRECT,
                    "Checked",
                    ("age",),
                    row=row,
                    old_value=str(frame["age"].max()),
                    new_value="20",
                )
            ],
        )
        after = compute_table(p, TableSpec("age_group", min_cell=0))
        assert after.data["counts"]["Under 30"] == result.data["counts"]["Under 30"] + 1
        assert after.data["counts"]["60 and over"] == result.data["counts"]["60 and over"] - 1
        # It can break a table down like any category; undo removes it again.
        assert p.undo_label() is not None
        with pytest.raises(Exception, match="only numbers"):
            bin_variable(p, "age_group", cuts=[1])
