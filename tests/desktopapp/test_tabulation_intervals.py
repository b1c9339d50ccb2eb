"""The tables view's margins-of-error option on the demo project (wave 2027 marked a sample)."""

from __future__ import annotations

import pytest
from statsmodels.stats.proportion import proportion_confint

from core.sampling import set_wave_design
from core.tables.build import compute_table

from .demo_window import fresh_tables_view, open_demo_window, shown_columns, shown_rows


@pytest.fixture(scope="module")
def window(tmp_path_factory, qapp):
    win = open_demo_window(tmp_path_factory.mktemp("intervals"))
    yield win
    win.close_project()
    win.close()


def test_margins_of_error_for_a_sample_wave(window):
    wave = window.project.find_wave("2027", "Participant survey")
    set_wave_design(window.project, wave.id, whole_population=False)
    view = fresh_tables_view(window)
    assert view.select_variable("track")
    assert not view.intervals_check.isHidden()
    view.set_option("intervals", True)
    spec = view.current_spec()
    assert spec.intervals is True
    expected = compute_table(window.project, spec)
    assert shown_columns(view) == expected.columns
    assert "95% range" in shown_columns(view)
    # The range shown for HVAC is statsmodels' Wilson interval for its count of those who
    # answered.
    data = expected.data
    n, base = data["counts"]["HVAC"], data["base"]
    low, high = proportion_confint(n, base, method="wilson")
    row = next(r for r in shown_rows(view) if r[0] == "HVAC")
    assert row[shown_columns(view).index("95% range")] == f"{100 * low:.1f}–{100 * high:.1f}"
    assert "Wilson score intervals" in view.notes_label.text()
    # Statistics of numbers have no such option.
    assert view.select_variable("age")
    assert view.intervals_check.isHidden()
    assert view.current_spec().intervals is False


def test_whole_population_wave_says_why_there_are_none(window):
    wave = window.project.find_wave("2027", "Participant survey")
    set_wave_design(window.project, wave.id, whole_population=True)
    view = fresh_tables_view(window)
    assert view.select_variable("track")
    view.set_option("intervals", True)
    assert "95% range" not in shown_columns(view)
    assert "No margins of error are shown" in view.notes_label.text()
