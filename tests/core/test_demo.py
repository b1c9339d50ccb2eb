"""The invented demo data: reproducible, as described in SCENARIO.md, and true to its manifest.

The demo is invented data, so these tests check the generated files against the generator's
own manifest and the scenario, read back through openpyxl (an independent reader of the
workbook), not against outside figures.
"""

from __future__ import annotations

import io
import json
import shutil
from contextlib import redirect_stdout
from datetime import datetime
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from scipy import stats

from core import demo
from core.errors import PlaincountError

CHECK_IDS = {
    "range",
    "outlier",
    "wandering_zero",
    "consistency",
    "duplicate_id",
    "duplicate_row",
    "straightlining",
    "reversed_scale",
    "speeder",
    "invalid",
}
RESOURCES = Path(__file__).resolve().parents[2] / "resources" / "demo"


def _read(path: Path) -> tuple[list[str], list[str], pd.DataFrame]:
    wb = openpyxl.load_workbook(path, read_only=True)
    rows = list(wb.active.iter_rows(values_only=True))
    wb.close()
    names, questions = list(rows[0]), list(rows[1])
    return names, questions, pd.DataFrame(rows[2:], columns=names, dtype=object)


@pytest.fixture(scope="module")
def written(tmp_path_factory) -> dict:
    folder = tmp_path_factory.mktemp("demo")
    manifest = demo.write_demo_files(folder)
    waves = {}
    for label, name in demo.FILE_NAMES.items():
        waves[label] = _read(folder / name)
    return {"folder": folder, "manifest": manifest, "waves": waves}


def _frame(written: dict, label: str) -> pd.DataFrame:
    return written["waves"][label][2]


def _codes(series: pd.Series, levels: tuple[str, ...]) -> pd.Series:
    return series.map(lambda v: levels.index(v) + 1 if v in levels else np.nan).astype(float)


# ----------------------------------------------------------------------------- reproducible
def test_same_seed_same_frames_and_manifest():
    a, b = demo.generate(), demo.generate()
    for label in demo.WAVES:
        assert a.waves[label].to_csv(index=False) == b.waves[label].to_csv(index=False)
    assert a.manifest == b.manifest
    other = demo.generate(seed=7)
    assert other.waves["2026"].to_csv(index=False) != a.waves["2026"].to_csv(index=False)
    assert other.manifest["seed"] == 7


def test_written_files_are_byte_identical(written, tmp_path):
    demo.write_demo_files(tmp_path)
    for name in (*demo.FILE_NAMES.values(), demo.MANIFEST_NAME):
        assert (tmp_path / name).read_bytes() == (written["folder"] / name).read_bytes(), name


def test_shipped_copies_match_the_generator(written):
    # resources/demo holds the files the generator writes today (compared cell by cell, so a
    # different openpyxl version that zips differently does not matter).
    shipped = json.loads((RESOURCES / demo.MANIFEST_NAME).read_text(encoding="utf-8"))
    assert shipped == written["manifest"]
    for label, name in demo.FILE_NAMES.items():
        names, questions, frame = _read(RESOURCES / name)
        fresh_names, fresh_questions, fresh = written["waves"][label]
        assert names == fresh_names and questions == fresh_questions
        pd.testing.assert_frame_equal(frame, fresh)
    readme = (RESOURCES / "README.md").read_text(encoding="utf-8")
    assert "invented" in readme.lower()


def test_existing_different_files_are_not_overwritten(tmp_path):
    own = tmp_path / demo.FILE_NAMES["2026"]
    own.write_bytes(b"the evaluator's own file")
    with pytest.raises(PlaincountError, match="other contents"):
        demo.write_demo_files(tmp_path)
    assert own.read_bytes() == b"the evaluator's own file"
    assert not (tmp_path / demo.MANIFEST_NAME).exists()


# ----------------------------------------------------------------------------- shape
def test_row_counts_and_two_header_rows(written):
    m = written["manifest"]
    for label, expected_rows in (("2026", 380), ("2027", 410)):
        names, questions, frame = written["waves"][label]
        assert len(frame) == expected_rows == m["waves"][label]["rows"]
        expected = [demo.RENAMED_2027.get(c, c) if label == "2027" else c for c in demo.COLUMNS]
        assert names == expected
        assert questions == [demo.QUESTIONS[c] for c in demo.COLUMNS]
        assert frame["started_at"].map(lambda v: isinstance(v, datetime)).all()
        assert frame["finished_at"].map(lambda v: isinstance(v, datetime)).all()
    assert written["waves"]["2026"][1][names.index("agree_3")].endswith(
        "The workload felt unmanageable."
    )


def test_overlap_between_waves_is_about_sixty_percent(written):
    ids26 = set(_frame(written, "2026")["resp_id"])
    ids27 = set(_frame(written, "2027")["resp_id"])
    share = len(ids26 & ids27) / len(ids27)
    assert 0.57 <= share <= 0.63
    assert written["manifest"]["overlap"]["returning_respondents"] == len(ids26 & ids27)
    # Returning participants keep their gender.
    g26 = _frame(written, "2026").drop_duplicates("resp_id").set_index("resp_id")["gender"]
    g27 = _frame(written, "2027").drop_duplicates("resp_id").set_index("resp_id")["gender"]
    both = sorted(ids26 & ids27)
    same = (g26[both].fillna("") == g27[both].fillna("")).mean()
    assert same > 0.9  # a few are blank in one wave only


def test_wave_2027_changes_are_present(written):
    changes = written["manifest"]["wave_changes"]
    assert {c["change"] for c in changes} == {"renamed_column", "reworded_level"}
    f26, f27 = _frame(written, "2026"), _frame(written, "2027")
    assert "hours_work_week" in f26 and "hours_work_week" not in f27
    assert "work_hours_week" in f27
    q27 = written["waves"]["2027"][1][written["waves"]["2027"][0].index("work_hours_week")]
    assert q27 == demo.QUESTIONS["hours_work_week"]
    for item in demo.USE_ITEMS:
        assert "Now and then" in set(f27[item]) and "Sometimes" not in set(f27[item])
        assert "Sometimes" in set(f26[item]) and "Now and then" not in set(f26[item])


def test_answers_are_valid_and_correlated(written):
    for label in demo.WAVES:
        f = _frame(written, label)
        for item in demo.AGREE_ITEMS:
            assert set(f[item].dropna()) <= set(demo.AGREE)
        assert set(f["overall_satisfaction"].dropna()) <= set(demo.SATISFACTION)
        assert set(f["household_income_band"].dropna()) <= {*demo.INCOME, demo.DECLINED}
        # Each rank is used once; a respondent ranks all five or only the top three.
        ranks = f[list(demo.RANK_OPTIONS)]
        answered = ranks.dropna(how="all")
        for values in answered.itertuples(index=False):
            given = sorted(int(v) for v in values if v is not None and not pd.isna(v))
            assert given in ([1, 2, 3], [1, 2, 3, 4, 5])
        assert (answered.notna().sum(axis=1) == 3).sum() >= 10
        for cell in f["barriers"].dropna():
            parts = cell.split("; ")
            assert set(parts) <= {*demo.BARRIERS, demo.NO_BARRIER}
            assert demo.NO_BARRIER not in parts or parts == [demo.NO_BARRIER]
        # Those still in school (not completed) have employed_in_field "N/A".
        both = f[f["completed"].notna() & f["employed_in_field"].notna()]
        assert ((both["completed"] == "No") == (both["employed_in_field"] == "N/A")).all()
        # Satisfaction goes with agreement; the negatively worded items run the other way.
        sat = _codes(f["overall_satisfaction"], demo.SATISFACTION)
        a1 = _codes(f["agree_1"], demo.AGREE)
        a3 = _codes(f["agree_3"], demo.AGREE)
        ok = sat.notna() & a1.notna() & a3.notna()
        assert stats.spearmanr(sat[ok], a1[ok]).statistic > 0.3
        assert stats.spearmanr(a1[ok], a3[ok]).statistic < -0.2


# ----------------------------------------------------------------------------- manifest
def _cell_matches(actual, expected) -> bool:
    if isinstance(actual, datetime):
        return actual.isoformat() == expected
    return actual == expected


def test_every_manifest_problem_is_in_the_data(written):
    problems = written["manifest"]["problems"]
    assert {p["wave"] for p in problems} == {"2026", "2027"}
    assert len({p["id"] for p in problems}) == len(problems)
    assert sum(p["wave"] == "2027" for p in problems) < sum(p["wave"] == "2026" for p in problems)
    for p in problems:
        assert set(p["expected_checks"]) <= CHECK_IDS, p["id"]
        assert set(p.get("also_possible", [])) <= CHECK_IDS, p["id"]
        frame = _frame(written, p["wave"])
        row = frame.iloc[p["row"] - 1]
        assert row["resp_id"] == p["resp_id"], p["id"]
        if p["problem"].startswith("duplicate"):
            first = frame.iloc[p["first_row"] - 1]
            assert first["resp_id"] == p["resp_id"]
            differs = [c for c in frame.columns if first[c] != row[c]]
            if p["problem"] == "duplicate_identical":
                assert differs == []
            else:
                assert differs == [p["changed"]["variable"]]
                assert first[differs[0]] == p["changed"]["first"]
                assert row[differs[0]] == p["changed"]["second"]
        elif isinstance(p["value"], dict):
            assert set(p["value"]) == set(p["variables"]), p["id"]
            for var, value in p["value"].items():
                assert _cell_matches(row[var], value), (p["id"], var)
        else:
            (var,) = p["variables"]
            assert row[var] == p["value"], p["id"]


def test_planted_problems_are_the_only_ones(written):
    """Each kind of planted problem appears exactly where the manifest says, and nowhere else."""
    _assert_only_planted(
        {label: _frame(written, label) for label in demo.WAVES}, written["manifest"]
    )


@pytest.mark.parametrize("seed", [11, 37])
def test_other_seeds_plant_the_same_problems(seed):
    data = demo.generate(seed)
    assert len(data.manifest["problems"]) == 28
    _assert_only_planted(data.waves, data.manifest)


def _assert_only_planted(frames: dict[str, pd.DataFrame], m: dict) -> None:
    for label in demo.WAVES:
        f = frames[label]
        hours = "work_hours_week" if label == "2027" else "hours_work_week"
        planted: dict[str, set[int]] = {}
        for p in m["problems"]:
            if p["wave"] == label:
                planted.setdefault(p["problem"], set()).add(p["row"])

        def rows(mask: pd.Series) -> set[int]:
            return {int(i) + 1 for i in np.flatnonzero(mask.to_numpy())}

        # Values outside the demo's plausible ranges (age 16-80 with -99 declined, credits
        # 0-24, hours 0-80) are exactly the wandering zeros and impossible values.
        age = pd.to_numeric(f["age"])
        credits = pd.to_numeric(f["credits_term"])
        work = pd.to_numeric(f[hours])
        out_of_range = ((age < 16) & (age != -99)) | (age > 80) | (credits > 24) | (work > 80)
        expected = planted.get("wandering_zero", set()) | planted.get("impossible_value", set())
        assert rows(out_of_range) == expected

        # All eight agreement items identical: exactly the straight-liners.
        agree = f[list(demo.AGREE_ITEMS)]
        same = agree.notna().all(axis=1) & (agree.nunique(axis=1) == 1)
        assert rows(same) == planted["straightlining"]
        assert len(planted["straightlining"]) >= 2
        levels = {agree.iloc[r - 1].iloc[0] for r in planted["straightlining"]}
        assert "Neither agree nor disagree" in levels  # one that cannot look reversed

        # The reversed pattern: exactly the planted rows, each with glowing comments.
        pos = (f[list(demo.POSITIVE_ITEMS)] == "Strongly disagree").all(axis=1)
        neg = (f[list(demo.NEGATIVE_ITEMS)] == "Strongly agree").all(axis=1)
        assert rows(pos & neg) == planted["reversed_scale"]
        for r in planted["reversed_scale"]:
            assert f.iloc[r - 1]["overall_satisfaction"] == "Very satisfied"
            assert f.iloc[r - 1]["best_part"] in demo._GLOWING_BEST

        # Speeders: under a third of the median completion time, and only they. The common
        # cut-offs are 30-50 % of the median (METHODS.md section 15); the rest of the
        # respondents stay above half the median so neither cut-off finds others.
        spans = (f["finished_at"] - f["started_at"]).map(lambda d: d.total_seconds())
        median = float(np.median(spans))
        assert rows(spans < median / 3) == planted["speeder"]
        assert rows(spans < median / 2) == planted["speeder"]
        assert len(planted["speeder"]) >= 3

        # Contradiction: credential earned without completing the course.
        contra = (f["credential_earned"] == "Yes") & (f["completed"] == "No")
        assert rows(contra) == planted["contradiction"]

        # Duplicates: the repeated ids are exactly the planted pairs.
        dup_ids = set(f.loc[f["resp_id"].duplicated(keep=False), "resp_id"])
        manifest_ids = {
            p["resp_id"]
            for p in m["problems"]
            if p["wave"] == label and p["problem"].startswith("duplicate")
        }
        assert dup_ids == manifest_ids
        identical_rows = f.astype(str).duplicated(keep="first")
        assert rows(identical_rows) == planted.get("duplicate_identical", set())

    assert len(planted) >= 1
    kinds26 = {p["problem"] for p in m["problems"] if p["wave"] == "2026"}
    assert {"duplicate_identical", "duplicate_changed", "real_outlier"} <= kinds26


def test_real_outlier_is_far_out_and_alone(written):
    f = _frame(written, "2026")
    (p,) = [p for p in written["manifest"]["problems"] if p["problem"] == "real_outlier"]
    x = pd.to_numeric(f["years_experience"]).dropna().to_numpy(dtype=float)
    # Tukey's outer fence Q3 + 3 IQR with numpy's default (type 7) quartiles: METHODS.md sec. 2.
    q1, q3 = np.quantile(x, [0.25, 0.75], method="linear")
    far_out = x[x > q3 + 3 * (q3 - q1)]
    assert far_out.tolist() == [38.0]
    # Modified z-score > 3.5 (Iglewicz & Hoaglin; METHODS.md section 3) finds only it too.
    med = np.median(x)
    mad = stats.median_abs_deviation(x)
    assert mad > 0
    assert x[np.abs(0.6745 * (x - med) / mad) > 3.5].tolist() == [38.0]
    age = f.iloc[p["row"] - 1]["age"]
    assert age >= 55 and age - 38 >= 16
    assert p["keep"] is True and p["expected_checks"] == ["outlier"]


# ----------------------------------------------------------------------------- missing data
def _blank(series: pd.Series) -> pd.Series:
    return series.isna() | series.map(lambda v: isinstance(v, str) and not v.strip())


def test_income_band_missing_has_a_gender_pattern(written):
    for label in demo.WAVES:
        f = _frame(written, label)
        inc = f["household_income_band"]
        missing = _blank(inc) | (inc == demo.DECLINED)
        assert missing.mean() > 0.15
        men = missing[f["gender"] == "Man"].mean()
        women = missing[f["gender"] == "Woman"].mean()
        assert men > 3 * women
        # A chi-square test of independence (scipy) finds the pattern beyond doubt.
        table = pd.crosstab(f["gender"].isin(["Man"]), missing)
        assert stats.chi2_contingency(table)[1] < 1e-6
        recorded = written["manifest"]["patterns"]["income_missing_by_gender"]["waves"][label]
        assert recorded["pct_missing_by_gender"]["Man"] == round(100 * men, 1)
        assert recorded["pct_missing_by_gender"]["Woman"] == round(100 * women, 1)


def test_skips_rise_over_the_last_third(written):
    for label in demo.WAVES:
        f = _frame(written, label)
        items = [c for c in f.columns if c not in ("resp_id", "started_at", "finished_at")]
        pct = pd.Series({c: 100 * _blank(f[c]).mean() for c in items})
        start = items.index("rank_transit")
        assert start >= 2 * len(items) / 3 - 2  # the ranking question opens the last third
        early, late = pct.iloc[:start], pct.iloc[start:]
        # Most early items are under 5 % missing (income is the planted exception).
        assert (early < 5).sum() >= len(early) - 1
        assert late.mean() > 3 * early.drop("household_income_band").mean()
        rho = stats.spearmanr(np.arange(len(late)), late.to_numpy()).statistic
        assert rho > 0.5
        # The last items are skipped more than the first items of the last third.
        assert late.iloc[-3:].mean() > late.iloc[:3].mean() + 5
        recorded = written["manifest"]["patterns"]["survey_fatigue"]["waves"][label]
        assert recorded["pct_skipped_by_item"] == {c: round(v, 1) for c, v in pct.items()}


def test_age_declined_code_is_used(written):
    f = _frame(written, "2026")
    declined = (f["age"] == -99).mean()
    assert 0.01 < declined < 0.05


# ----------------------------------------------------------------------------- expected codebook
def test_expected_codebook_covers_every_column(written):
    expected = written["manifest"]["expected_codebook"]
    assert [e["name"] for e in expected] == list(demo.COLUMNS)
    by_name = {e["name"]: e for e in expected}
    assert by_name["agree_3"]["keying"] == "negative"
    assert by_name["agree_1"]["keying"] == "positive"
    assert by_name["household_income_band"]["levels"] == list(demo.INCOME)
    f = _frame(written, "2026")
    for e in expected:
        if e["kind"] in ("likert", "ordinal", "categorical"):
            codes = set(e["missing_codes"])
            assert set(f[e["name"]].dropna()) <= set(e["levels"]) | codes, e["name"]


# ----------------------------------------------------------------------------- demo project
@pytest.fixture(scope="module")
def project_folder(tmp_path_factory) -> tuple[Path, dict]:
    """One run of ``plaincount-cli demo DIR --json``: its folder and printed JSON."""
    from core.cli.main import main

    folder = tmp_path_factory.mktemp("demo_project") / "fresh"
    out = io.StringIO()
    with redirect_stdout(out):
        assert main(["demo", str(folder), "--json"]) == 0
    return folder, json.loads(out.getvalue())


def test_demo_project_holds_the_waves_and_settings(project_folder):
    from core.kinds import Kind
    from core.project import Project

    path = project_folder[0] / demo.PROJECT_NAME
    with Project.open(path) as project:
        (instrument,) = project.instruments()
        assert instrument.name == "Participant survey"
        waves = project.waves(instrument.id)
        assert [w.label for w in waves] == ["2026", "2027"]
        assert [w.n_rows for w in waves] == [380, 410]
        cb = project.codebook(instrument.id)
        assert cb.identifier() is not None and cb.identifier().name == "resp_id"
        assert cb["age"].range == (16.0, 80.0)
        assert cb["credits_term"].range == (0.0, 24.0)
        assert cb["hours_work_week"].range == (0.0, 80.0)
        assert cb["years_experience"].range == (0.0, 50.0)
        assert {v.name for v in cb if v.keying == "negative"} == {"agree_3", "agree_6"}
        assert {v.name for v in cb if v.keying == "positive"} == set(demo.POSITIVE_ITEMS)
        assert cb["agree_1"].kind is Kind.LIKERT
        # The renamed 2027 column joined the 2026 variable; no new variable was made for it.
        assert "work_hours_week" not in cb
        raw27 = project.raw_table(waves[1].id)
        assert "hours_work_week" in raw27.columns and len(raw27) == 410


def test_demo_project_is_never_replaced(project_folder):
    path = project_folder[0] / demo.PROJECT_NAME
    before = path.read_bytes()
    with pytest.raises(PlaincountError, match="already exists"):
        demo.build_demo_project(project_folder[0])
    assert path.read_bytes() == before


def test_demo_command_json(project_folder, capsys):
    from core.cli.main import main

    folder, out = project_folder
    assert out["rows"] == {"2026": 380, "2027": 410}
    manifest = json.loads((folder / demo.MANIFEST_NAME).read_text(encoding="utf-8"))
    assert out["problems"] == len(manifest["problems"]) == 28
    assert Path(out["project"]) == folder / demo.PROJECT_NAME
    assert out["waves_in_project"] == ["2026", "2027"]
    # A second run into the same folder refuses with a plain message and exit status 2.
    assert main(["demo", str(folder)]) == 2
    assert "already exists" in capsys.readouterr().err


def test_failed_build_leaves_no_project(written, tmp_path):
    for name in (*demo.FILE_NAMES.values(), demo.MANIFEST_NAME):
        shutil.copyfile(written["folder"] / name, tmp_path / name)
    (tmp_path / demo.FILE_NAMES["2027"]).write_bytes(b"PK\x03\x04 not really a workbook")
    with pytest.raises(PlaincountError):
        demo.build_demo_project(tmp_path)
    assert not (tmp_path / demo.PROJECT_NAME).exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(
        [*demo.FILE_NAMES.values(), demo.MANIFEST_NAME]
    )


def test_demo_project_codebook_matches_the_expected_one(project_folder):
    """Import inference plus the demo settings give the codebook the manifest expects."""
    from core.project import Project

    folder, _ = project_folder
    manifest = json.loads((folder / demo.MANIFEST_NAME).read_text(encoding="utf-8"))
    with Project.open(folder / demo.PROJECT_NAME) as project:
        cb = project.codebook(project.instruments()[0].id)
    wrong = []
    for e in manifest["expected_codebook"]:
        var = cb[e["name"]]
        if str(var.kind) != e["kind"]:
            wrong.append((e["name"], "kind", str(var.kind)))
        if e["kind"] in ("likert", "ordinal") and list(var.levels) != e["levels"]:
            wrong.append((e["name"], "levels", var.levels))
        if e["kind"] in ("categorical", "multiselect") and set(var.levels) != set(e["levels"]):
            wrong.append((e["name"], "levels", var.levels))
        if {k: str(r) for k, r in var.missing_codes.items()} != e["missing_codes"]:
            wrong.append((e["name"], "missing codes", var.missing_codes))
        if var.keying != e["keying"]:
            wrong.append((e["name"], "keying", var.keying))
    assert wrong == []
    groups = sorted(sorted(v.name for v in members) for members in cb.groups().values())
    assert groups == sorted(sorted(m) for m in manifest["expected_groups"].values())
