"""Plausible ranges, suggested default ranges, and wandering zeros."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.checks import CheckSettings, check_run
from core.checks.ranges import suggest_ranges
from core.checks.wandering_zero import candidates
from core.codebook import Codebook, Variable
from core.kinds import Kind
from core.ledger import Action
from core.working import working_data
from tests.core.cleaning_support import make_project


def test_suggested_ranges_for_common_items():
    book = Codebook(
        [
            Variable("age", kind=Kind.NUMERIC),
            Variable("q7", "How old are you?", kind=Kind.NUMERIC),
            Variable("hours_work_week", kind=Kind.NUMERIC),
            Variable("HoursPerDay", kind=Kind.NUMERIC),
            Variable("credits_term", kind=Kind.NUMERIC),
            Variable("years_experience", kind=Kind.NUMERIC),
            Variable("birth_year", kind=Kind.NUMERIC),
            Variable("pct_time", kind=Kind.NUMERIC),
            Variable("track", kind=Kind.CATEGORICAL, levels=("A",)),
            Variable("score", kind=Kind.NUMERIC),
        ]
    )
    ranges = suggest_ranges(book)
    assert ranges == {
        "age": (14.0, 100.0),
        "q7": (14.0, 100.0),
        "hours_work_week": (0.0, 168.0),  # a week has 24 x 7 = 168 hours
        "HoursPerDay": (0.0, 24.0),
        "credits_term": (0.0, 30.0),
        "years_experience": (0.0, 80.0),
        "pct_time": (0.0, 100.0),
    }


def _project(tmp_path, variables, data):
    return make_project(tmp_path, pd.DataFrame(data), variables)


def test_codebook_range_and_impossible_values(tmp_path):
    n = 12
    data = {
        "age": [30.0] * (n - 3) + [7.0, -99.0, 45.0],
        "hours_work_week": [20.0] * (n - 2) + [190.0, 168.0],
    }
    variables = [
        Variable("age", kind=Kind.NUMERIC, range=(16, 80)),
        Variable("hours_work_week", kind=Kind.NUMERIC),
    ]
    project, wave = _project(tmp_path, variables, data)
    with project:
        flags = [
            f
            for f in check_run(working_data(project, wave), CheckSettings()).flags
            if f.check == "range"
        ]
    by = {(f.variables[0], f.value): f for f in flags}
    assert set(by) == {("age", 7.0), ("age", -99.0), ("hours_work_week", 190.0)}
    assert by[("age", 7.0)].severity == "error"  # codebook range
    assert "plausible range set in the codebook" in by[("age", 7.0)].message
    assert by[("age", -99.0)].suggestion.action is Action.SET_MISSING
    assert "missing codes" in by[("age", -99.0)].suggestion.text
    hours = by[("hours_work_week", 190.0)]
    assert hours.severity == "error" and "168 hours" in hours.message  # impossible
    assert hours.suggestion.action is Action.CORRECT and hours.suggestion.value == 19


def test_suggested_ranges_can_be_switched_off(tmp_path):
    project, wave = _project(tmp_path, [Variable("age", kind=Kind.NUMERIC)], {"age": [30.0, 7.0]})
    with project:
        wd = working_data(project, wave)
        on = [f for f in check_run(wd, CheckSettings()).flags if f.check == "range"]
        off = [
            f
            for f in check_run(wd, CheckSettings(suggested_ranges=False)).flags
            if f.check == "range"
        ]
    assert [f.severity for f in on] == ["warning"] and off == []


def test_wandering_zero_candidates():
    rng = np.random.default_rng(1)
    credits = rng.integers(9, 16, 60).astype(float)
    credits[10] = 120.0
    assert candidates(credits) == {10: 12.0}
    # 38 years of experience among small numbers: not a multiple of 10, so real.
    years = rng.integers(0, 8, 60).astype(float)
    years[5] = 38.0
    assert candidates(years) == {}
    # A misplaced decimal in non-whole data: 125.0 for 12.5.
    fees = rng.uniform(10, 15, 60)
    fees[3] = 125.0
    assert candidates(fees) == {3: pytest.approx(12.5)}


def test_wandering_zero_prefers_value_nearest_typical(tmp_path):
    rng = np.random.default_rng(3)
    hours = np.concatenate([np.zeros(20), rng.integers(5, 45, 60)]).astype(float)
    hours[0] = 400.0
    found = candidates(hours)
    assert found == {0: 40.0}  # not 4: 40 is nearer the median as a ratio


def test_wandering_zero_flag_suggests_value(tmp_path):
    credits = [12.0, 9.0, 15.0, 12.0, 14.0, 11.0, 13.0, 10.0, 12.0, 120.0]
    project, wave = _project(
        tmp_path, [Variable("credits_term", kind=Kind.NUMERIC)], {"credits_term": credits}
    )
    with project:
        flags = [
            f
            for f in check_run(working_data(project, wave), CheckSettings()).flags
            if f.check == "wandering_zero"
        ]
    assert [(f.row, f.suggestion.value) for f in flags] == [(9, 12.0)]
    assert flags[0].suggestion.action is Action.CORRECT
