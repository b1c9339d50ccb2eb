"""Speeders against METHODS.md §15: times 300, 420, 380, 95, 510, 150, 400 s (median 380)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.checks import CheckSettings, check_run
from core.checks.speeders import duration_text, find_speeders, time_variables
from core.codebook import Codebook, Variable
from core.kinds import Kind
from core.working import working_data
from tests.core.cleaning_support import make_project

TIMES = np.array([300, 420, 380, 95, 510, 150, 400], dtype=float)


def test_thirty_percent_flags_only_95():
    r = find_speeders(TIMES, 0.3)
    assert r.median == 380
    assert r.cutoff == pytest.approx(114)
    assert list(TIMES[r.speeders]) == [95]


def test_fifty_percent_flags_95_and_150():
    r = find_speeders(TIMES, 0.5)
    assert r.cutoff == pytest.approx(190)
    assert list(TIMES[r.speeders]) == [95, 150]


def test_cut_off_is_strict():
    r = find_speeders(np.array([100.0, 200.0, 300.0]), 0.5)  # median 200, cut-off 100
    assert not r.speeders.any()


def test_missing_times_are_never_speeders():
    r = find_speeders(np.array([np.nan, 10.0, 100.0, 100.0]), 0.5)
    assert list(r.speeders) == [False, True, False, False]


def _wave(tmp_path, seconds):
    start = pd.Timestamp("2026-03-02 10:00") + pd.to_timedelta(np.arange(len(seconds)), "h")
    frame = pd.DataFrame(
        {"began": start, "submitted": start + pd.to_timedelta(seconds, "s"), "q": 1.0}
    )
    book = [
        Variable("began", "Start time", kind=Kind.DATE),
        Variable("submitted", "Date submitted", kind=Kind.DATE),
        Variable("q", kind=Kind.NUMERIC),
    ]
    return make_project(tmp_path, frame, book)


@pytest.mark.parametrize(("fraction", "rows"), [(0.3, [3]), (0.5, [3, 5])])
def test_speeder_flags_in_a_wave(tmp_path, fraction, rows):
    project, wave = _wave(tmp_path, TIMES)
    with project:
        run = check_run(working_data(project, wave), CheckSettings(speeder_fraction=fraction))
    flags = [f for f in run.flags if f.check == "speeder"]
    assert [f.row for f in flags] == rows
    assert flags[0].variables == ("began", "submitted")
    assert flags[0].value == 95
    assert "median completion time (6 min 20 s" in flags[0].message


def test_finish_before_start_is_an_error(tmp_path):
    project, wave = _wave(tmp_path, [300, 420, -60, 380])
    with project:
        run = check_run(working_data(project, wave), CheckSettings())
    bad = [f for f in run.flags if f.check == "speeder" and f.severity == "error"]
    assert [f.row for f in bad] == [2]


def test_time_columns_found_by_name_or_set():
    book = Codebook(
        [
            Variable("opened", kind=Kind.DATE),
            Variable("x", kind=Kind.DATE),
            Variable("closed", kind=Kind.DATE),
        ]
    )
    s, f = time_variables(book)
    assert (s.name, f.name) == ("opened", "closed")
    s, f = time_variables(book, "x", "closed")
    assert s.name == "x"
    assert time_variables(Codebook([Variable("x", kind=Kind.DATE)])) is None


def test_fraction_must_be_between_zero_and_one():
    from core.errors import PlaincountError

    with pytest.raises(PlaincountError, match="between 0 and 1"):
        CheckSettings(speeder_fraction=1.5)


def test_duration_text():
    assert duration_text(95) == "1 min 35 s"
    assert duration_text(45) == "45 s"
    assert duration_text(3720) == "1 h 2 min"
