"""Straight-lining indicators against the METHODS.md §15 table, and the battery check."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.checks import CheckSettings, check_run
from core.checks.straightlining import batteries, indicators
from core.codebook import Codebook, Variable
from core.kinds import Kind
from core.working import working_data
from tests.core.cleaning_support import AGREE, make_project

# METHODS.md §15 (toy 5-item grid; SDs computed with numpy there).
TABLE = [
    ((3, 3, 3, 3, 3), 0.0, 0.0, 5, 1.0, True),
    ((4, 4, 4, 4, 5), 0.4, 0.4472, 4, 0.8, False),
    ((1, 3, 5, 2, 4), 1.4142, 1.5811, 1, 0.2, False),
    ((2, 2, 3, 3, 2), 0.4899, 0.5477, 2, 0.6, False),
]


@pytest.mark.parametrize(("answers", "sd0", "sd1", "longstring", "modal", "same"), TABLE)
def test_indicators_match_methods_table(answers, sd0, sd1, longstring, modal, same):
    ind = indicators(np.array([answers], dtype=float))
    assert ind.sd[0] == pytest.approx(sd0, abs=1e-4)
    assert ind.sd[0] == pytest.approx(np.std(answers, ddof=0))
    assert ind.sd_sample[0] == pytest.approx(sd1, abs=1e-4)
    assert ind.sd_sample[0] == pytest.approx(np.std(answers, ddof=1))
    assert ind.longstring[0] == longstring
    assert ind.modal_share[0] == pytest.approx(modal)
    assert bool(ind.identical[0]) is same


def test_indicators_vectorised_and_blank_breaks_run():
    a = np.array([row[0] for row in TABLE] + [(3, 3, np.nan, 3, 3)], dtype=float)
    ind = indicators(a)
    assert list(ind.longstring) == [5, 4, 1, 2, 2]
    assert ind.identical[-1] and ind.answered[-1] == 4


def _battery_project(tmp_path, rows, k_items=5):
    data = {
        f"agree_{j}": [AGREE[r[j - 1] - 1] if r[j - 1] else None for r in rows]
        for j in range(1, k_items + 1)
    }
    book = [Variable(f"agree_{j}", kind=Kind.LIKERT, levels=AGREE) for j in range(1, k_items + 1)]
    return make_project(tmp_path, pd.DataFrame(data), book)


def test_straightliners_flagged_with_k(tmp_path):
    rows = [row[0] for row in TABLE] + [(3, 3, None, 3, 3)]
    project, wave = _battery_project(tmp_path, rows)
    with project:
        wd = working_data(project, wave)
        flags = [f for f in check_run(wd, CheckSettings()).flags if f.check == "straightlining"]
        # Only the all-identical row; the 4-answer row is below k = 5.
        assert [f.row for f in flags] == [0]
        assert flags[0].value == "Neither agree nor disagree"
        assert flags[0].detail["longstring"] == 5
        assert flags[0].detail["sd"] == 0
        # With k = 4 the partly answered identical row counts too.
        flags4 = [
            f
            for f in check_run(wd, CheckSettings(straightline_min_items=4)).flags
            if f.check == "straightlining"
        ]
        assert [f.row for f in flags4] == [0, 4]


def test_battery_shorter_than_k_is_not_checked(tmp_path):
    project, wave = _battery_project(tmp_path, [(2, 2, 2, 2)], k_items=4)
    with project:
        wd = working_data(project, wave)
        assert not [f for f in check_run(wd, CheckSettings()).flags if f.check == "straightlining"]


def test_batteries_from_groups_and_name_stems():
    book = Codebook(
        [
            Variable("sat_1", kind=Kind.LIKERT, levels=AGREE),
            Variable("sat_2", kind=Kind.LIKERT, levels=AGREE),
            Variable("q_a", kind=Kind.LIKERT, levels=AGREE, group="grid"),
            Variable("q_b", kind=Kind.LIKERT, levels=AGREE, group="grid"),
            Variable("lonely", kind=Kind.LIKERT, levels=AGREE),
        ]
    )
    found = batteries(book)
    assert {k: [v.name for v in vs] for k, vs in found.items()} == {
        "grid": ["q_a", "q_b"],
        "sat": ["sat_1", "sat_2"],
    }
