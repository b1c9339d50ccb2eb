"""Sample sizes, margins of error and Wilson intervals against published values and statsmodels."""

from __future__ import annotations

import math

import pandas as pd
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from statsmodels.stats.proportion import proportion_confint, samplesize_confint_proportion

from core.codebook import Codebook, Variable
from core.errors import PlaincountError
from core.kinds import Kind
from core.project import Project
from core.sampling import (
    effective_n,
    interval_caption,
    intervals_note,
    margin_of_error,
    plain_explanation,
    sample_size,
    set_wave_design,
    wave_design,
    wilson_interval,
    z_value,
)

# Krejcie & Morgan (1970), Table 1, as listed in METHODS §8 (N → s); the published table
# rounds the formula to the nearest whole number.
KREJCIE_MORGAN = {
    10: 10, 15: 14, 20: 19, 30: 28, 50: 44, 100: 80, 150: 108, 200: 132, 250: 152,
    300: 169, 400: 196, 500: 217, 1000: 278, 1500: 306, 2000: 322, 3000: 341, 5000: 357,
    9000: 368, 10000: 370, 20000: 377, 50000: 381, 1000000: 384,
}  # fmt: skip
# The formula row of the same METHODS table, computed there with chi-square = 3.841.
KM_FORMULA = {
    10: 9.77, 15: 14.47, 20: 19.06, 30: 27.89, 50: 44.34, 100: 79.51, 150: 108.08,
    200: 131.74, 250: 151.67, 300: 168.69, 400: 196.19, 500: 217.47, 1000: 277.71,
    1500: 305.96, 2000: 322.35, 3000: 340.60, 5000: 356.76, 9000: 368.42, 10000: 369.93,
    20000: 376.88, 50000: 381.18, 1000000: 383.95,
}  # fmt: skip


@pytest.mark.parametrize(("population", "published"), sorted(KREJCIE_MORGAN.items()))
def test_krejcie_morgan_table_with_nearest_rounding(population, published):
    answer = sample_size(population)
    assert answer.nearest == published
    # We recommend rounding up; it is never below the published value and at most one above.
    assert answer.recommended in (published, published + 1)
    assert answer.recommended == math.ceil(answer.exact - 1e-9)


@pytest.mark.parametrize(("population", "formula"), sorted(KM_FORMULA.items()))
def test_exact_value_matches_the_km_formula(population, formula):
    # METHODS §8 computes with chi-square 3.841 (z = 1.96); we use the exact z, so the
    # values differ only in the second decimal.
    assert sample_size(population).exact == pytest.approx(formula, abs=0.06)
    # With chi-square = z² the K&M formula is algebraically Cochran's with the FPC.
    chi2 = z_value(0.95) ** 2
    km = chi2 * population * 0.25 / (0.05**2 * (population - 1) + chi2 * 0.25)
    assert sample_size(population).exact == pytest.approx(km, rel=1e-12)


def test_krejcie_morgan_worked_example():
    # Krejcie & Morgan (1970): N = 9000 gives s = 368 (METHODS §8).
    assert sample_size(9000).nearest == 368


def test_n0_against_statsmodels():
    # statsmodels.stats.proportion.samplesize_confint_proportion; METHODS §8 check values.
    assert sample_size(None).n0 == pytest.approx(384.14588206941266, rel=1e-12)
    assert sample_size(None).n0 == pytest.approx(samplesize_confint_proportion(0.5, 0.05))
    assert sample_size(None, proportion=0.3).n0 == pytest.approx(322.6825, abs=1e-4)
    assert sample_size(None, margin=0.03).n0 == pytest.approx(1067.0719, abs=1e-4)
    assert sample_size(None, 0.04, 0.9, 0.2).n0 == pytest.approx(
        samplesize_confint_proportion(0.2, 0.04, alpha=0.1), rel=1e-12
    )
    assert sample_size(None).recommended == 385
    assert sample_size(None).exact == sample_size(None).n0


def test_plain_explanation_states_assumptions_and_rounding():
    text = plain_explanation(sample_size(15))
    assert "aim for 15 completed responses" in text
    assert "14.47" in text and "list 14" in text
    assert "50 / 50" in text and "random sample" in text


@settings(max_examples=200, deadline=None)
@given(
    population=st.integers(2, 200_000),
    share=st.floats(0.01, 1.0),
    confidence=st.sampled_from([0.8, 0.9, 0.95, 0.99]),
    proportion=st.floats(0.05, 0.95),
)
def test_margin_of_error_inverts_sample_size(population, share, confidence, proportion):
    n = max(1, min(population, round(share * population)))
    moe = margin_of_error(n, population, confidence, proportion)
    if n == population:
        assert moe.margin == 0
        return
    assume(moe.margin < 1)  # tiny samples of tiny populations: a "margin" over 100 points
    back = sample_size(population, moe.margin, confidence, proportion)
    assert back.exact == pytest.approx(n, rel=1e-9)


def test_margin_of_error_values():
    # Without a population: the textbook z·sqrt(p(1-p)/n); 1.96·0.5/sqrt(400) ≈ 0.049.
    assert margin_of_error(400).margin == pytest.approx(z_value(0.95) * 0.5 / 20, rel=1e-12)
    moe = margin_of_error(380, 1200)
    expected = z_value(0.95) * math.sqrt(0.25 / 380) * math.sqrt((1200 - 380) / 1199)
    assert moe.margin == pytest.approx(expected, rel=1e-12)
    assert round(moe.points, 1) == 4.2
    assert "± 4.2 percentage points" in plain_explanation(moe)
    assert margin_of_error(50, 50).margin == 0
    assert "no sampling error" in plain_explanation(margin_of_error(50, 50))


def test_bad_input_gets_plain_messages():
    with pytest.raises(PlaincountError, match="write 5 % as 0.05"):
        sample_size(1000, margin=5)
    with pytest.raises(PlaincountError, match="whole number"):
        sample_size(-3)
    with pytest.raises(PlaincountError, match="more than the population"):
        margin_of_error(300, 200)
    with pytest.raises(PlaincountError, match="between 0 and the base"):
        wilson_interval(11, 10)


# ------------------------------------------------------------------ Wilson intervals
# METHODS §7 check values (statsmodels / scipy, 95 %), with the Newcombe (1998) Table I,
# method 3 column where it exists.
WILSON = [
    (81, 263, 0.2552885199, 0.3662095770, (0.2553, 0.3662)),
    (15, 148, 0.0623863995, 0.1604872417, (0.0624, 0.1605)),
    (0, 20, 0.0, 0.1611251581, (0.0000, 0.1611)),
    (1, 29, 0.0061132143, 0.1717552188, (0.0061, 0.1718)),
    (5, 10, 0.2365930905, 0.7634069095, None),
    (50, 100, 0.4038315304, 0.5961684696, None),
    (0, 10, 0.0, 0.2775327999, None),
]


@pytest.mark.parametrize(("x", "n", "low", "high", "newcombe"), WILSON)
def test_wilson_check_values(x, n, low, high, newcombe):
    iv = wilson_interval(x, n)
    assert iv.low == pytest.approx(low, abs=1e-9)
    assert iv.high == pytest.approx(high, abs=1e-9)
    if newcombe:
        assert (round(iv.low, 4), round(iv.high, 4)) == newcombe
    if x == 0:
        assert iv.low == 0.0  # exactly 0 when x = 0


@settings(max_examples=300, deadline=None)
@given(
    n=st.integers(1, 5000),
    frac=st.floats(0, 1),
    confidence=st.sampled_from([0.8, 0.9, 0.95, 0.99]),
)
def test_wilson_matches_statsmodels(n, frac, confidence):
    x = round(frac * n)
    iv = wilson_interval(x, n, confidence)
    low, high = proportion_confint(x, n, alpha=1 - confidence, method="wilson")
    assert iv.low == pytest.approx(low, abs=1e-12)
    assert iv.high == pytest.approx(high, abs=1e-12)
    assert 0.0 <= iv.low <= iv.estimate <= iv.high <= 1.0


@settings(max_examples=200, deadline=None)
@given(population=st.integers(20, 100_000), share=st.floats(0.01, 0.99), frac=st.floats(0, 1))
def test_wilson_with_finite_population_correction(population, share, frac):
    n = max(1, min(population - 1, round(share * population)))
    x = round(frac * n)
    iv = wilson_interval(x, n, population=population)
    m = effective_n(n, population)
    # The FPC enters as an effective sample size whose variance equals the without-replacement
    # variance p(1-p)/n·(N-n)/(N-1) (Cochran's finite population correction).
    assert 0.25 / m == pytest.approx(0.25 / n * (population - n) / (population - 1), rel=1e-9)
    # The Wilson formula at that size, computed by statsmodels (fractional counts allowed).
    low, high = proportion_confint(x * m / n, m, method="wilson")
    assert iv.low == pytest.approx(low, abs=1e-9)
    assert iv.high == pytest.approx(high, abs=1e-9)
    plain = wilson_interval(x, n)
    assert iv.high - iv.low <= plain.high - plain.low + 1e-12  # the FPC only narrows


def test_wilson_fpc_limits():
    # Everyone answered: no sampling error, the interval is the percentage itself.
    iv = wilson_interval(30, 120, population=120)
    assert (iv.low, iv.high) == (0.25, 0.25)
    # A huge population: the correction vanishes.
    big = wilson_interval(81, 263, population=10**12)
    assert big.low == pytest.approx(0.2552885199, abs=1e-9)
    assert interval_caption(wilson_interval(81, 263)) == (
        "± 5.5 points (95 % Wilson interval 25.5–36.6 %)"
    )


# ------------------------------------------------------------------ the wave's design
@pytest.fixture
def project(tmp_path):
    raw = pd.DataFrame({"q1": ["Yes", "No", "Yes"]})
    codebook = Codebook([Variable("q1", "Did you finish?", Kind.CATEGORICAL, ("Yes", "No"))])
    with Project.create(tmp_path / "p.plaincount") as proj:
        inst = proj.add_instrument("Participant survey", codebook)
        wave = proj.add_wave(inst.id, "2026", "q.csv", b"q1\nYes\nNo\nYes\n", raw)
        yield proj, wave.id


def test_wave_design_defaults_to_whole_population(project):
    proj, wave_id = project
    assert wave_design(proj, wave_id).whole_population is True
    assert "No margins of error are shown" in intervals_note(proj, wave_id)


def test_wave_design_marked_as_sample(project):
    proj, wave_id = project
    changes = set_wave_design(proj, wave_id, whole_population=False, population_size=1200)
    assert wave_id in changes.wave_ids
    design = wave_design(proj, wave_id)
    assert (design.whole_population, design.population_size) == (False, 1200)
    note = intervals_note(proj, wave_id)
    assert "Wilson" in note and "1,200" in note and "finite population correction" in note
    with pytest.raises(PlaincountError, match="cannot be smaller"):
        set_wave_design(proj, wave_id, whole_population=False, population_size=2)


# ------------------------------------------------------------------ command line
def test_cli_sample_size_json(capsys):
    import json

    from core.cli.main import main

    assert main(["sample-size", "--population", "9000", "--responses", "300", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["sample_size"]["nearest"] == 368  # Krejcie & Morgan (1970) worked example
    assert data["sample_size"]["recommended"] == 369
    expected = z_value(0.95) * math.sqrt(0.25 / 300) * math.sqrt(8700 / 8999)
    assert data["margin_of_error"]["margin"] == pytest.approx(expected, rel=1e-12)


def test_cli_sample_size_text_and_error(capsys):
    from core.cli.main import main

    assert main(["sample-size", "--population", "15"]) == 0
    out = capsys.readouterr().out
    assert "aim for 15 completed responses" in out and "list 14" in out
    assert main(["sample-size", "--population", "100", "--margin", "5"]) == 2
    assert "write 5 % as 0.05" in capsys.readouterr().err


# ------------------------------------------------------------------ intervals for a table
def test_result_intervals_for_frequency_and_crosstab(tmp_path):
    import statsmodels.api as sm

    from core.sampling import WaveDesign, result_intervals
    from core.tables.build import compute_table
    from core.tables.spec import TableSpec

    # statsmodels anes96 (1996 ANES extract): vote 0 = Clinton 551, 1 = Dole 393; the
    # published PID x vote cross-tabulation is in METHODS §16.
    a = sm.datasets.anes96.load_pandas().data
    raw = pd.DataFrame(
        {
            "vote": ["Dole" if v == 1 else "Clinton" for v in a["vote"]],
            "pid": [str(int(v)) for v in a["PID"]],
        }
    )
    codebook = Codebook(
        [
            Variable("vote", "Vote", Kind.CATEGORICAL, ("Clinton", "Dole")),
            Variable("pid", "Party", Kind.ORDINAL, tuple(str(i) for i in range(7))),
        ]
    )
    with Project.create(tmp_path / "anes.plaincount") as proj:
        inst = proj.add_instrument("ANES", codebook)
        proj.add_wave(inst.id, "1996", "a.csv", b"x", raw)
        freq = compute_table(proj, TableSpec("vote"))
        cross = compute_table(proj, TableSpec("vote", by=("pid",), min_cell=0))

    sample = WaveDesign(whole_population=False, population_size=None)
    got = result_intervals(freq, sample)["intervals"]
    low, high = proportion_confint(393, 944, method="wilson")
    assert got["Dole"] == pytest.approx([100 * low, 100 * high], abs=1e-9)
    # Within-group percentages: Dole voters among strong Republicans, 167 of 175.
    got = result_intervals(cross, sample)["intervals"]
    low, high = proportion_confint(167, 175, method="wilson")
    assert got["6"]["Dole"] == pytest.approx([100 * low, 100 * high], abs=1e-9)
    # A known population narrows every interval; a whole-population wave has none.
    finite = result_intervals(freq, WaveDesign(False, 1200))
    plain = result_intervals(freq, sample)["intervals"]["Dole"]
    assert finite["intervals"]["Dole"][1] - finite["intervals"]["Dole"][0] < plain[1] - plain[0]
    assert "finite population correction" in finite["note"]
    whole = result_intervals(freq, WaveDesign(True, None))
    assert whole["intervals"] == {} and "whole population" in whole["note"]
    with pytest.raises(PlaincountError, match="larger than the population"):
        result_intervals(freq, WaveDesign(False, 500))
