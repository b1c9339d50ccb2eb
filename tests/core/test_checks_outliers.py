"""Tukey's fences and the modified z-score against METHODS.md §2-3 worked values."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from core.checks import CheckSettings, check_run
from core.checks.outliers import modified_z, tukey_fences, tukey_labels
from core.codebook import Variable
from core.kinds import Kind
from core.working import working_data
from tests.core.cleaning_support import make_project

# METHODS.md §2: Wikipedia's "Quartile" example, n = 11.
W = np.array([6, 7, 15, 36, 39, 40, 41, 42, 43, 47, 49], dtype=float)
# METHODS.md §2 fences check: 1..10 and 100.
Y = np.array([*range(1, 11), 100], dtype=float)


@pytest.mark.parametrize(
    ("method", "q1", "q3"),
    [
        # METHODS.md §2 table (Hyndman & Fan 1996 types via numpy's method names).
        ("inverted_cdf", 15, 43),
        ("averaged_inverted_cdf", 15, 43),
        ("closest_observation", 15, 42),
        ("interpolated_inverted_cdf", 13, 42.25),
        ("hazen", 20.25, 42.75),
        ("weibull", 15, 43),
        ("linear", 25.5, 42.5),
        ("median_unbiased", 18.5, 42.8333333333),
        ("normal_unbiased", 18.9375, 42.8125),
    ],
)
def test_quartiles_of_w_match_published_table_and_numpy(method, q1, q3):
    f = tukey_fences(W, method=method)
    assert f.q1 == pytest.approx(q1)
    assert f.q3 == pytest.approx(q3)
    # Cross-check with numpy itself, method pinned explicitly.
    assert f.q1 == pytest.approx(np.quantile(W, 0.25, method=method))
    assert f.q3 == pytest.approx(np.quantile(W, 0.75, method=method))


def test_iqr_of_w_depends_on_quantile_type():
    # METHODS.md §2 note: IQR of W is 17 under type 7 and 28 under type 6.
    assert tukey_fences(W, "linear").iqr == pytest.approx(17)
    assert tukey_fences(W, "weibull").iqr == pytest.approx(28)
    assert tukey_fences(W, "linear").quantile_type == 7


def test_fences_of_y_are_minus_4_16_and_minus_11_5_23_5():
    f = tukey_fences(Y)  # type 7 default
    assert (f.q1, f.q3, f.iqr) == pytest.approx((3.5, 8.5, 5.0))
    assert f.iqr == pytest.approx(stats.iqr(Y))  # scipy.stats.iqr(Y) = 5.0
    assert (f.inner_lo, f.inner_hi) == pytest.approx((-4, 16))
    assert (f.outer_lo, f.outer_hi) == pytest.approx((-11.5, 23.5))
    labels = tukey_labels(Y, f)
    assert labels[-1] == "far out"
    assert list(labels[:-1]) == [""] * 10  # no other point is flagged


def test_dataset_1_to_10_quartiles():
    x = np.arange(1, 11, dtype=float)
    assert (tukey_fences(x).q1, tukey_fences(x).q3) == pytest.approx((3.25, 7.75))
    assert (tukey_fences(x, "weibull").q1, tukey_fences(x, "weibull").q3) == pytest.approx(
        (2.75, 8.25)
    )


def test_modified_z_check_values():
    # METHODS.md §3 (Iglewicz & Hoaglin 1993; values computed with scipy).
    x = np.array([2.1, 2.3, 2.2, 2.4, 2.2, 2.3, 9.8])
    z = modified_z(x)
    assert z.computable
    assert z.median == pytest.approx(2.3)
    assert z.mad == pytest.approx(stats.median_abs_deviation(x))  # scale=1.0, raw MAD
    assert z.mad == pytest.approx(0.1)
    assert z.scores == pytest.approx([-1.349, 0, -0.6745, 0.6745, -0.6745, 0, 50.5875], abs=1e-9)
    assert list(np.flatnonzero(np.abs(z.scores) > 3.5)) == [6]  # only 9.8
    # 0.6745 is Φ⁻¹(0.75) rounded (scipy.stats.norm.ppf(0.75) = 0.67448975...).
    assert stats.norm.ppf(0.75) == pytest.approx(0.6745, abs=1e-4)


def test_mad_zero_is_not_computable_and_never_divides_by_zero():
    x = np.array([5, 5, 5, 5, 5, 6, 40], dtype=float)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a division by zero would warn
        z = modified_z(x)
    assert not z.computable
    assert z.scores is None
    assert z.mad == 0
    assert "not computable" in z.message


def _numeric_project(tmp_path, values):
    frame = pd.DataFrame({"x": values})
    return make_project(tmp_path, frame, [Variable("x", "A count", kind=Kind.NUMERIC)])


def test_tukey_flags_in_a_wave_state_the_quantile_type(tmp_path):
    project, wave = _numeric_project(tmp_path, Y)
    with project:
        run = check_run(working_data(project, wave), CheckSettings())
    flags = [f for f in run.flags if f.check == "outlier"]
    assert [(f.row, f.value, f.severity) for f in flags] == [(10, 100.0, "warning")]
    assert "far out" in flags[0].message
    assert "type 7" in flags[0].message
    assert flags[0].detail["fence"] == pytest.approx(23.5)


def test_modified_z_setting_flags_and_mad_zero_note(tmp_path):
    project, wave = _numeric_project(tmp_path, [2.1, 2.3, 2.2, 2.4, 2.2, 2.3, 9.8, 2.3])
    with project:
        wd = working_data(project, wave)
        run = check_run(wd, CheckSettings(outlier_method="modified_z"))
    flags = [f for f in run.flags if f.check == "outlier"]
    assert [f.value for f in flags] == [9.8]
    assert flags[0].detail["score"] > 3.5

    project2, wave2 = _numeric_project(tmp_path / "b", [5, 5, 5, 5, 5, 5, 6, 40, 5])
    with project2:
        run2 = check_run(working_data(project2, wave2), CheckSettings(outlier_method="modified_z"))
    assert not [f for f in run2.flags if f.check == "outlier"]
    assert any("not computable" in n for n in run2.notes)


def test_too_few_answers_are_not_checked(tmp_path):
    project, wave = _numeric_project(tmp_path, [1, 2, 3, 100])
    with project:
        run = check_run(working_data(project, wave), CheckSettings())
    assert not [f for f in run.flags if f.check == "outlier"]
