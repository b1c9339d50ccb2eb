"""Cross-tabulations against pandas.crosstab, scipy and published worked examples."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats as sps

from core.codebook import Variable
from core.tables.build import compute_table
from core.tables.crosstab import chi_square, partial_hidden
from core.tables.spec import TableSpec
from tests.core.tables_helpers import anes96, make_project

PID_LEVELS = [str(i) for i in range(7)]


@pytest.fixture(scope="module")
def anes():
    return anes96()


@pytest.fixture(scope="module")
def project(tmp_path_factory, anes):
    frame = anes[["PID", "vote", "educ", "selfLR"]]
    variables = [
        Variable("PID", "Party identification", "ordinal", levels=PID_LEVELS),
        Variable("vote", "Vote in 1996", "categorical", levels=["0", "1"]),
        Variable("educ", "Education", "ordinal", levels=[str(i) for i in range(1, 8)]),
        Variable(
            "selfLR", "Left-right self-placement", "likert", levels=[str(i) for i in range(1, 8)]
        ),
    ]
    p = make_project(
        tmp_path_factory.mktemp("anes"), frame, variables, instrument="ANES 1996", wave="1996"
    )
    yield p
    p.close()


def _matrix(result) -> np.ndarray:
    data = result.data
    return np.array([[data["counts"][g][lv] for lv in data["levels"]] for g in data["groups"]])


def test_pid_by_vote_counts_match_pandas_and_published_values(project, anes):
    result = compute_table(project, TableSpec("vote", by=("PID",), min_cell=0, tests=True))
    expected = pd.crosstab(anes["PID"], anes["vote"]).to_numpy()
    assert (_matrix(result) == expected).all()
    # METHODS.md section 16: vote=0 column 197, 169, 101, 26, 24, 26, 8; vote=1 3, 11, ...
    assert _matrix(result)[:, 0].tolist() == [197, 169, 101, 26, 24, 26, 8]
    assert _matrix(result)[:, 1].tolist() == [3, 11, 7, 11, 70, 124, 167]
    test = result.data["test"]
    # METHODS.md section 16: chi-square 637.1695, df 6, Cramér's V 0.82156.
    assert test["chi2"] == pytest.approx(637.1695, abs=1e-4)
    assert test["df"] == 6
    assert test["cramers_v"] == pytest.approx(0.82156, abs=1e-5)
    chi2, p, dof, _ = sps.chi2_contingency(expected, correction=False)
    assert test["p_value"] == pytest.approx(p) and test["chi2"] == pytest.approx(chi2)
    assert any("Chi-square test of independence" in n for n in result.notes)
    assert any("whole population" in n for n in result.notes)


@pytest.mark.parametrize(
    ("base", "normalize"), [("row", "index"), ("column", "columns"), ("total", "all")]
)
def test_percent_bases_match_pandas_normalize(project, anes, base, normalize):
    result = compute_table(project, TableSpec("educ", by=("vote",), percent=base, min_cell=0))
    expected = pd.crosstab(anes["vote"], anes["educ"], normalize=normalize).to_numpy() * 100
    got = np.array(
        [
            [result.data["percents"][g][lv] for lv in result.data["levels"]]
            for g in result.data["groups"]
        ]
    )
    assert got == pytest.approx(expected)
    assert result.data["percent_base"] == base


def test_totals_and_layout(project, anes):
    result = compute_table(project, TableSpec("educ", by=("vote",), min_cell=0))
    assert result.columns[0] == "vote"
    assert result.columns[1:3] == ["1 n", "1 %"] and result.columns[-2:] == ["Total n", "Total %"]
    assert [r[0].display for r in result.rows] == ["0", "1", "Total"]
    assert result.row_roles[-1] == "total"
    # educ column totals: METHODS.md section 16 {1: 13, 2: 52, 3: 248, 4: 187, 5: 90, ...}.
    assert list(result.data["level_totals"].values()) == [13, 52, 248, 187, 90, 227, 127]
    assert result.data["group_bases"] == {"0": 551, "1": 393}
    # Ordered levels keep their order, even with the break-down.
    assert result.data["levels"] == [str(i) for i in range(1, 8)]


def test_default_suppression_hides_small_cells_and_protects_them(project):
    result = compute_table(project, TableSpec("vote", by=("PID",)))
    counts = _matrix(result)
    assert counts[0, 1] is None  # 3 Dole voters among strong Democrats
    # Every line with a hidden cell has at least two hidden cells.
    hidden = np.array([[c is None for c in row] for row in counts])
    for line in list(hidden) + list(hidden.T):
        assert line.sum() != 1
    assert result.rows[0][3].display == "<5"
    assert any("further cell" in n for n in result.notes)


def test_nested_break_down_joins_labels(project, anes):
    result = compute_table(project, TableSpec("vote", by=("PID", "educ"), min_cell=0))
    expected = pd.crosstab([anes["PID"], anes["educ"]], anes["vote"])
    labels = [f"{int(a)} / {int(b)}" for a, b in expected.index]
    assert result.data["groups"] == labels
    assert (_matrix(result) == expected.to_numpy()).all()
    assert result.title == "Vote in 1996 — by Party identification and Education"


def test_agresti_party_identification_by_gender(tmp_path):
    # Agresti (2007) p. 39 via METHODS.md section 5(b): X² 30.0701, V 0.1044.
    table = {
        ("F", "Democrat"): 762,
        ("F", "Independent"): 327,
        ("F", "Republican"): 468,
        ("M", "Democrat"): 484,
        ("M", "Independent"): 239,
        ("M", "Republican"): 477,
    }
    rows = [(g, p) for (g, p), n in table.items() for _ in range(n)]
    frame = pd.DataFrame(rows, columns=["gender", "party"])
    variables = [
        Variable("gender", "Gender", "categorical", levels=["F", "M"]),
        Variable("party", "Party", "categorical", levels=["Democrat", "Independent", "Republican"]),
    ]
    with make_project(tmp_path, frame, variables) as p:
        result = compute_table(p, TableSpec("party", by=("gender",), tests=True))
        test = result.data["test"]
        assert test["chi2"] == pytest.approx(30.0701490958, abs=1e-8)
        assert test["df"] == 2
        assert test["p_value"] == pytest.approx(2.953589183e-07, rel=1e-6)
        assert test["cramers_v"] == pytest.approx(0.104435802356, abs=1e-9)
        assert test["cochran_ok"]


def test_chi_square_worked_examples_and_scipy():
    # METHODS.md section 5(a): X² 18.6507936508, df 2, V 0.431865646362.
    t = chi_square(np.array([[10, 20, 30], [20, 15, 5]]))
    assert t["chi2"] == pytest.approx(18.6507936508) and t["df"] == 2
    assert t["p_value"] == pytest.approx(8.913158247e-05)
    assert t["cramers_v"] == pytest.approx(0.431865646362)
    # Section 5(c): on a 2x2 table no Yates correction: X² 2.430575519682, V = |phi| 0.2714.
    t = chi_square(np.array([[12, 5], [7, 9]]))
    assert t["chi2"] == pytest.approx(2.430575519682)
    assert t["cramers_v"] == pytest.approx(0.271392342609)
    assert t["cramers_v"] == pytest.approx(
        sps.contingency.association(np.array([[12, 5], [7, 9]]), method="cramer")
    )
    # Cochran's rule: expected counts below 5 in more than 20% of cells.
    t = chi_square(np.array([[1, 2], [3, 30]]))
    assert not t["cochran_ok"] and t["pct_expected_below_5"] > 20


def test_chi_square_needs_two_non_empty_rows_and_columns():
    assert chi_square(np.array([[5, 0], [7, 0]])) is None


def test_no_test_unless_asked(project):
    result = compute_table(project, TableSpec("vote", by=("PID",)))
    assert "test" not in result.data
    assert not any("Chi-square" in n for n in result.notes)
    assert any("do not show that one thing caused another" in n for n in result.notes)


def test_partial_sums_of_hidden_cells():
    hidden = np.array([False, True, False, True])
    assert partial_hidden(hidden, [0, 1])  # one of two hidden cells: reveals it
    assert not partial_hidden(hidden, [1, 3])  # all hidden: known from the total anyway
    assert not partial_hidden(hidden, [0, 2])


def test_likert_cross_tab_carries_agree_percent_by_group(project, anes):
    result = compute_table(project, TableSpec("selfLR", by=("vote",), min_cell=0))
    assert result.table_type == "crosstab" and result.kind == "likert"
    for code, g in ((0, "0"), (1, "1")):
        sub = anes.loc[anes["vote"] == code, "selfLR"]
        assert result.data["agree_pct"][g] == pytest.approx((sub >= 6).mean() * 100)
        assert result.data["disagree_pct"][g] == pytest.approx((sub <= 2).mean() * 100)
    assert "mean_of_codes" not in result.data
