"""The sampling and response-rate dialog of a wave, on the demo project.

Figures are checked against published worked examples (METHODS.md §8 and §9) and a
reference library (statsmodels), not against the core that computes them.
"""

from __future__ import annotations

import math

import pytest
from scipy.stats import norm
from statsmodels.stats.proportion import samplesize_confint_proportion

from core import response_rates as rr
from core import sampling
from core.working import working_data
from desktopapp.project_tree import NodeType
from desktopapp.sampling_dialog import TAB_RATES, SamplingDialog

from .demo_window import open_demo_window

# outcomerate's own test vector (METHODS.md §9): I=5, P=3, R=2, NC=1, O=2, UH=1, UO=1, NE=1.
VECTOR = {"I": 5, "P": 3, "R": 2, "NC": 1, "O": 2, "UH": 1, "UO": 1, "NE": 1}


@pytest.fixture(scope="module")
def window(tmp_path_factory, qapp):
    win = open_demo_window(tmp_path_factory.mktemp("sampling-dialog"))
    yield win
    win.close_project()
    win.close()


@pytest.fixture
def wave(window):
    """Wave 2027 with nothing entered: whole population, no dispositions."""
    project = window.project
    w = project.find_wave("2027", "Participant survey")
    project.update_wave_settings(
        w.id,
        population=True,
        population_size=None,
        dispositions=None,
        eligibility_e=None,
        caption_rate=None,
        invited=None,
    )
    return project.wave(w.id)


@pytest.fixture
def dialog(window, wave, qtbot):
    d = SamplingDialog(window.project, window.runner, wave.id, parent=window)
    qtbot.addWidget(d)
    d.show()
    yield d
    d.close()


# ---------------------------------------------------------------------- sample size
def test_krejcie_and_morgan_worked_example(dialog):
    # Krejcie & Morgan (1970): N = 9000, d = .05, 95 % -> s = 368 (METHODS.md §8), a table
    # rounded to the nearest whole number; the formula gives 368.42, so aim for 369.
    dialog.ss_population_spin.setValue(9000)
    dialog.ss_margin_spin.setValue(5.0)
    dialog.ss_confidence_combo.setCurrentIndex(dialog.ss_confidence_combo.findData(0.95))
    assert dialog.ss_nearest.text() == "368"
    assert "368" in dialog.ss_assumed.text()
    assert dialog.ss_answer.text() == "Aim for 369 completed responses"
    assert "list 368" in dialog.ss_explanation.text()  # the table's rounding is explained
    # The K&M formula s = X²NP(1-P) / (d²(N-1) + X²P(1-P)) with X² = z² from scipy (their
    # table used X² = 3.841 and gets 368.42; the exact z gives 368.46; both round to 368).
    chi2 = norm.ppf(0.975) ** 2
    s = chi2 * 9000 * 0.25 / (0.05**2 * 8999 + chi2 * 0.25)
    assert round(s) == 368 and math.ceil(s) == 369
    assert f"{s:,.2f}" in dialog.ss_assumed.text()


def test_very_large_population_matches_statsmodels(dialog):
    # statsmodels samplesize_confint_proportion(0.5, 0.05) = 384.14588206941266 (METHODS §8).
    dialog.ss_population_spin.setValue(0)  # "very large"
    n0 = samplesize_confint_proportion(0.5, 0.05)
    assert f"{n0:,.2f}" in dialog.ss_assumed.text()
    assert dialog.ss_answer.text() == f"Aim for {math.ceil(n0)} completed responses"
    # p = 0.3 gives 322.6825 (METHODS §8)
    dialog.ss_proportion_spin.setValue(30)
    assert f"{samplesize_confint_proportion(0.3, 0.05):,.2f}" in dialog.ss_assumed.text()


def test_margin_of_error_the_other_way(dialog):
    # e = z * sqrt(p(1-p)/n) * sqrt((N-n)/(N-1)) (Cochran 1977, from memory; METHODS §8),
    # worked here with scipy's normal quantile: N = 1200, n = 380 gives ± 4.2 points
    # (the example in docs/sampling.md).
    dialog.ss_population_spin.setValue(1200)
    dialog.moe_responses_spin.setValue(380)
    z = norm.ppf(0.975)
    expected = 100 * z * math.sqrt(0.25 / 380) * math.sqrt((1200 - 380) / 1199)
    assert round(expected, 1) == 4.2
    assert dialog.moe_answer.text() == f"± {expected:.1f} percentage points"
    assert "380 responses" in dialog.moe_explanation.text()


def test_responses_default_to_the_wave(dialog, wave):
    assert dialog.moe_responses_spin.value() == wave.n_rows == 410


# ---------------------------------------------------------------------- who was invited
def test_population_setting_is_stored_with_the_wave(window, dialog, wave):
    assert dialog.whole_radio.isChecked()
    dialog.sample_radio.click()
    dialog.population_spin.setValue(2000)
    dialog.population_spin.editingFinished.emit()
    stored = window.project.wave(wave.id).settings
    assert stored["population"] is False and stored["population_size"] == 2000
    assert sampling.wave_design(window.project, wave.id) == sampling.WaveDesign(False, 2000)
    assert "2,000" in dialog.design_note.text()
    assert dialog.ss_population_spin.value() == 2000  # the calculator follows

    dialog.whole_radio.click()
    assert window.project.wave(wave.id).settings["population"] is True
    assert "No margins of error" in dialog.design_note.text()


def test_population_smaller_than_the_responses_is_refused(window, dialog, wave):
    dialog.sample_radio.click()
    dialog.population_spin.setValue(100)  # the wave has 410 responses
    dialog.population_spin.editingFinished.emit()
    assert dialog.error_label.isVisibleTo(dialog)
    assert "410" in dialog.error_label.text()
    assert window.project.wave(wave.id).settings.get("population_size") is None
    assert dialog.population_spin.value() == 0  # back to what is stored


# ---------------------------------------------------------------------- response rates
def test_outcomerate_test_vector(window, dialog, wave):
    dialog.tabs.setCurrentIndex(TAB_RATES)
    dialog.set_counts(VECTOR)
    dialog.set_e(0.5)
    # METHODS.md §9 (outcomerate tests/testthat/test-rate.R), e = 0.5
    expected = {
        "RR1": 1 / 3,
        "RR2": 8 / 15,
        "RR3": 5 / 14,
        "RR4": 4 / 7,
        "RR5": 5 / 13,
        "RR6": 8 / 13,
        "COOP1": 5 / 12,
        "COOP2": 2 / 3,
        "COOP3": 1 / 2,
        "COOP4": 4 / 5,
        "REF1": 2 / 15,
        "REF2": 1 / 7,
        "REF3": 2 / 13,
        "CON1": 4 / 5,
        "CON2": 6 / 7,
        "CON3": 12 / 13,
    }
    for name, value in expected.items():
        assert dialog.rate_text(name) == f"{100 * value:.1f} %", name
    assert dialog.rate_text("RR1") == "33.3 %"
    stored = window.project.wave(wave.id).settings
    assert stored["dispositions"] == VECTOR
    assert stored["eligibility_e"] == 0.5
    # Every rate is listed with its definition.
    what = dialog.rates_table.item(0, 2).text()
    assert "I / ((I+P) + (R+NC+O) + (UH+UO))" in what and "conservative" in what


def test_default_e_and_the_caption_rate(window, dialog, wave):
    dialog.set_counts(VECTOR)
    dialog.set_e(None)
    # Default e = (I+P+R+NC+O) / (I+P+R+NC+O+NE) = 13/14 (METHODS §9).
    assert "e = 0.929" in dialog.e_default_radio.text()
    assert window.project.wave(wave.id).settings["eligibility_e"] is None
    # RR3 with e = 13/14: 5 / (13 + 13/14 * 2)
    assert dialog.rate_text("RR3") == f"{100 * 5 / (13 + 2 * 13 / 14):.1f} %"

    index = dialog.caption_combo.findData("RR1")
    dialog.caption_combo.setCurrentIndex(index)
    dialog.caption_combo.activated.emit(index)
    assert window.project.wave(wave.id).settings["caption_rate"] == "RR1"
    assert rr.caption_rate(window.project, wave.id) == "Response rate (AAPOR RR1): 33.3 %"
    assert "Response rate (AAPOR RR1): 33.3 %" in dialog.caption_preview.text()


def test_invited_count_is_checked_against_the_dispositions(dialog):
    dialog.set_counts(VECTOR)  # 16 cases
    dialog.invited_spin.setValue(20)
    assert "add up to 16, but 20 were invited: 4 cases" in dialog.total_label.text()
    dialog.invited_spin.setValue(16)
    assert "everyone invited" in dialog.total_label.text()


def test_count_completes_and_partials_from_the_data(window, dialog, wave):
    dialog.complete_threshold_spin.setValue(80)
    dialog.partial_threshold_spin.setValue(50)
    dialog.count_from_data()
    expected = rr.count_completes(working_data(window.project, wave.id), 0.8, 0.5)
    assert dialog.count_spins["I"].value() == expected.completes
    assert dialog.count_spins["P"].value() == expected.partials
    assert dialog.count_spins["R"].value() == expected.breakoffs
    # Every respondent in the data falls in exactly one of the three.
    assert expected.completes + expected.partials + expected.breakoffs == wave.n_rows
    assert window.project.wave(wave.id).settings["dispositions"]["I"] == expected.completes
    # Raising the bar for a complete moves respondents to partials, never the other way.
    dialog.complete_threshold_spin.setValue(100)
    dialog.count_from_data()
    assert dialog.count_spins["I"].value() <= expected.completes


def test_nothing_is_stored_when_nothing_was_entered(window, dialog, wave):
    dialog.close()
    assert "dispositions" not in window.project.wave(wave.id).settings or (
        window.project.wave(wave.id).settings["dispositions"] is None
    )


# ---------------------------------------------------------------------- reaching it
def test_reached_from_the_wave_in_the_tree_and_the_wave_page(window, wave):
    node = window.tree.find(NodeType.WAVE, wave_id=wave.id)
    menu = window.tree_menu(node)
    actions = [a for a in menu.actions() if a.text() == "Sampling and response rates…"]
    assert len(actions) == 1
    actions[0].trigger()
    opened = window.findChildren(SamplingDialog)
    assert any(d.wave_id == wave.id and d.isVisible() for d in opened)
    for d in opened:
        d.close()
    menu.close()
    assert window.tree_menu(window.tree.find(NodeType.CODEBOOK)) is None

    assert window.show_node(NodeType.WAVE, wave_id=wave.id)
    window.view.sampling_button.click()
    shown = [d for d in window.view.findChildren(SamplingDialog) if d.isVisible()]
    assert len(shown) == 1 and shown[0].wave_id == wave.id
    shown[0].close()
