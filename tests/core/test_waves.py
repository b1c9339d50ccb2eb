"""Work across waves: rules carried forward, comparisons, matched respondents, transitions."""

from __future__ import annotations

import json
import statistics
from pathlib import Path

import pandas as pd
import pytest
from matplotlib.figure import Figure

from core import demo
from core.charts import chart_types, draw
from core.cleaning import edit_cell, recode_all
from core.codebook import Codebook, Variable
from core.errors import PlaincountError, TableError
from core.kinds import Kind
from core.ledger import Action, entries_for
from core.outline import keep
from core.project import Project
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from core.waves import (
    compare_waves,
    match_respondents,
    outline_for_wave,
    reapply_rules,
    transition_table,
)

LEVELS = ("Low", "Medium", "High")


@pytest.fixture(scope="module")
def demo_project(tmp_path_factory) -> Path:
    return demo.build_demo_project(tmp_path_factory.mktemp("demo"))


def _tiny(tmp_path: Path, keying: str | None = None) -> Project:
    """Two invented waves of one ordered question, small enough to count by hand.

    Wave A: P1 Low, P2 Low, P3 Medium, P4 Medium, P5 High, P6 (blank), P7 Low, P8 High.
    Wave B: P1 Medium, P2 Low, P3 High, P4 Low, P5 High, P6 Medium, P9 Low, P10 High, and
    P1 again (a second submission, "Low", which must not count).

    Found in both waves: P1-P6 (6 people); answered both times: P1-P5 (5 pairs).
    P1 Low->Medium (up), P2 Low->Low (same), P3 Medium->High (up), P4 Medium->Low (down),
    P5 High->High (same). So, rows = wave A, columns = wave B:
        Low:    Low 1 (P2), Medium 1 (P1), High 0
        Medium: Low 1 (P4), Medium 0,      High 1 (P3)
        High:   Low 0,      Medium 0,      High 1 (P5)
    up 2, same 2, down 1; improved 2 of 5 = 40 %.
    Ages in A: matched P1-P6 20, 30, 40, 50, 60, 70 (mean 45); unmatched P7, P8 25, 35 (30).
    """
    codebook = Codebook(
        [
            Variable("resp_id", "ID", Kind.IDENTIFIER, position=1),
            Variable("age", "Age", Kind.NUMERIC, range=(18, 99), position=2),
            Variable(
                "load",
                "How heavy was the workload?",
                Kind.ORDINAL,
                levels=LEVELS,
                keying=None,
                position=3,
            ),
        ]
    )
    if keying:
        codebook = codebook.with_variable(
            Variable(
                "load",
                "How heavy was the workload?",
                Kind.LIKERT,
                levels=LEVELS,
                keying=keying,
                position=3,
            )
        )
    a = pd.DataFrame(
        {
            "resp_id": [f"P{i}" for i in range(1, 9)],
            "age": ["20", "30", "40", "50", "60", "70", "25", "35"],
            "load": ["Low", "Low", "Medium", "Medium", "High", None, "Low", "High"],
        }
    )
    b = pd.DataFrame(
        {
            "resp_id": ["P1", "P2", "P3", "P4", "P5", "P6", "P9", "P10", "P1"],
            "age": ["21", "31", "41", "51", "61", "71", "19", "150", "21"],
            "load": ["Medium", "Low", "High", "Low", "High", "Medium", "Low", "High", "Low"],
        }
    )
    project = Project.create(tmp_path / "tiny.plaincount")
    inst = project.add_instrument("Exit survey", codebook)
    project.add_wave(inst.id, "entry", "a.csv", b"a", a)
    project.add_wave(inst.id, "exit", "b.csv", b"b", b)
    return project


# ---------------------------------------------------------------------------- transitions
def test_transition_table_counts_by_hand(tmp_path):
    with _tiny(tmp_path) as project:
        t = transition_table(project, "load", "entry", "exit", min_cell=0)
    assert t.levels == list(LEVELS)
    assert t.counts == {
        "Low": {"Low": 1, "Medium": 1, "High": 0},
        "Medium": {"Low": 1, "Medium": 0, "High": 1},
        "High": {"Low": 0, "Medium": 0, "High": 1},
    }
    assert (t.n_matched, t.n_pairs) == (6, 5)
    assert (t.moved_up, t.stayed, t.moved_down) == (2, 2, 1)
    assert (t.improved, t.improved_pct, t.better) == (2, 40.0, "up")
    assert t.row_totals == {"Low": 2, "Medium": 2, "High": 1}
    assert t.col_totals == {"Low": 2, "Medium": 1, "High": 2}
    assert t.text_rows()[0] == ["entry \\ exit", "Low", "Medium", "High", "Total"]
    assert json.loads(json.dumps(t.to_json()))["moved_up"] == 2


def test_a_negatively_worded_item_improves_downwards(tmp_path):
    with _tiny(tmp_path, keying="negative") as project:
        t = transition_table(project, "load", "entry", "exit", min_cell=0)
    assert (t.better, t.improved, t.improved_pct) == ("down", 1, 20.0)  # P4 only: 1 of 5


def test_transition_counts_are_hidden_when_small(tmp_path):
    with _tiny(tmp_path) as project:
        t = transition_table(project, "load", "entry", "exit", min_cell=5)
        with pytest.raises(PlaincountError, match="ordered answers"):
            transition_table(project, "age", "entry", "exit")
    # Every count is 1 or 2: all hidden, and so are the sums that would give them away.
    assert all(v is None for row in t.counts.values() for v in row.values() if v != 0)
    assert t.moved_up is None and t.stayed is None and t.improved_pct is None
    assert t.text_rows()[1][1] == "<5"


# ---------------------------------------------------------------------------- respondents
def test_match_rate_and_matched_against_unmatched(tmp_path):
    with _tiny(tmp_path) as project:
        m = match_respondents(project, "entry", "exit", min_cell=0)
    assert (m.n_a, m.n_b, m.matched) == (8, 8, 6)  # P1 counted once in the exit wave
    assert (m.pct_of_a, m.pct_of_b) == (75.0, 75.0)
    assert m.duplicates == {"entry": 0, "exit": 1}
    age = next(r for r in m.comparison if r["variable"] == "age")
    assert age["matched"] == statistics.mean([20, 30, 40, 50, 60, 70])
    assert age["unmatched"] == statistics.mean([25, 35])
    assert age["difference"] == 15.0
    low = next(r for r in m.comparison if r["variable"] == "load" and r["level"] == "Low")
    # Matched P1-P6 with an answer: Low, Low, Medium, Medium, High -> 2 of 5 = 40 %;
    # unmatched P7 Low, P8 High -> 1 of 2 = 50 %.
    assert (low["matched"], low["unmatched"]) == (40.0, 50.0)
    assert any("not proof of a cause" in n for n in m.notes)


def test_match_rate_on_the_demo_is_the_manifests_overlap(demo_project):
    manifest = json.loads((demo_project.parent / demo.MANIFEST_NAME).read_text("utf-8"))
    with Project.open(demo_project) as project:
        m = match_respondents(project, "2026", "2027")
    assert m.matched == manifest["overlap"]["returning_respondents"]
    assert m.pct_of_b == pytest.approx(manifest["overlap"]["pct_of_2027_respondents"], abs=0.1)
    # Small counts are hidden in the comparison of the 133 who did not come back.
    hidden = [r for r in m.comparison if r["statistic"] == "percent" and r["n_unmatched"] is None]
    assert all(r["unmatched"] is None for r in hidden)
    # Zeros stay visible (as in the suppression policy); 1 to 4 never show.
    shown = [r["n_unmatched"] for r in m.comparison if r["n_unmatched"] is not None]
    assert shown and not any(0 < n < 5 for n in shown)
    assert hidden, "some small counts of the demo should be hidden"


# ---------------------------------------------------------------------------- comparisons
def _hand_counts(project: Project, label: str, item: str) -> pd.Series:
    raw = project.raw_table(project.find_wave(label).id)[item]
    return raw.replace({"Now and then": "Sometimes"}).value_counts()


def test_wave_comparison_counts_percents_and_change_by_hand(demo_project):
    with Project.open(demo_project) as project:
        spec = TableSpec("use_tutoring", min_cell=0, compare_waves=("2026", "2027"))
        result = compute_table(project, spec)
        counts = {w: _hand_counts(project, w, "use_tutoring") for w in ("2026", "2027")}
    data = result.data
    assert result.table_type == "waves" and data["waves"] == ["2026", "2027"]
    for w in ("2026", "2027"):
        answered = int(counts[w].sum())
        assert data["bases"][w] == answered
        for lv in data["levels"]:
            assert data["counts"][w][lv] == int(counts[w].get(lv, 0))
            assert data["percents"][w][lv] == pytest.approx(100 * counts[w].get(lv, 0) / answered)
    lv = "Sometimes"
    assert data["change_pp"][lv] == pytest.approx(
        data["percents"]["2027"][lv] - data["percents"]["2026"][lv]
    )
    notes = " ".join(result.notes)
    assert "“Now and then” was offered instead of “Sometimes”" in notes
    assert "not proof" in notes
    assert chart_types(result) == ["waves"]
    draw(result, Figure(figsize=(8, 5)))


def test_wave_comparison_keeps_small_cell_suppression(demo_project):
    with Project.open(demo_project) as project:
        counts = _hand_counts(project, "2027", "use_tutoring")
        result = compare_waves(project, TableSpec("use_tutoring"), ["2026", "2027"])
    small = [lv for lv, n in counts.items() if 0 < n < 5]
    assert small, "the demo should have a small count here"
    data = result.data
    for lv in small:
        assert data["counts"]["2027"][lv] is None
        assert data["percents"]["2027"][lv] is None
        assert data["change_pp"][lv] is None
    # The hidden count cannot be worked out from the base: one more cell is hidden.
    hidden = [lv for lv in data["levels"] if data["counts"]["2027"][lv] is None]
    assert len(hidden) >= 2
    row = result.rows[data["levels"].index(small[0])]
    assert row[3].suppressed and row[3].display == "<5"
    assert any("small groups of people cannot be recognised" in n for n in result.notes)


def test_comparisons_refuse_what_they_cannot_compare(demo_project):
    with Project.open(demo_project) as project:
        with pytest.raises(TableError, match="answer categories"):
            compare_waves(project, TableSpec("age"), ["2026", "2027"])
        with pytest.raises(TableError, match="at least two waves"):
            compare_waves(project, TableSpec("track"), ["2026"])
        with pytest.raises(TableError, match="broken down"):
            compare_waves(project, TableSpec("track", by=("cohort",)), ["2026", "2027"])


def test_kept_results_recompute_for_the_new_wave_and_as_comparisons(demo_project, tmp_path):
    copy = tmp_path / "copy.plaincount"
    with Project.open(demo_project) as project:
        project.save_copy(copy)
    with Project.open(copy) as project:
        keep(project, TableSpec("track", wave="2026"))
        keep(project, TableSpec("age", wave="2026"))
        again = outline_for_wave(project, "2027")
        assert [r.wave for _, r, _ in again] == ["2027", "2027"]
        compared = outline_for_wave(project, "2027", compare_with="2026")
        (_, track, _), (_, age, message) = compared
        assert track.table_type == "waves" and track.data["waves"] == ["2026", "2027"]
        assert age is None and "answer categories" in message


# ---------------------------------------------------------------------------- rules
def test_rule_decisions_are_copied_but_single_cell_corrections_are_not(tmp_path):
    with _tiny(tmp_path) as project:
        entry = project.find_wave("entry")
        exit_ = project.find_wave("exit")
        recode_all(project, entry.id, ["load"], "Medium", "High", "Medium was a typing slip")
        edit_cell(project, entry.id, 1, "age", "Birth year typed as age", value=31)
        report = reapply_rules(project, exit_.id)
        copied = [e for e in entries_for(project, exit_.id)]
        assert [e.action for e in copied] == [Action.RECODE_ALL]
        assert copied[0].reason == "Medium was a typing slip (rule from wave entry)"
        assert report.copied[0]["variables"] == ["load"]
        # The range limits of the codebook flag the exit wave's age of 150.
        assert report.ranges == {"age": [18.0, 99.0]}
        assert report.flags.get("range", 0) >= 1
        # Applying again copies nothing twice.
        assert reapply_rules(project, exit_.id).copied == []


# ---------------------------------------------------------------------------- command line
def test_cli_transitions_respondents_and_compare_waves(tmp_path, capsys):
    from core.cli.main import main

    _tiny(tmp_path).close()
    path = str(tmp_path / "tiny.plaincount")
    assert (
        main(["transitions", path, "load", "--waves", "entry,exit", "--min-cell", "0", "--json"])
        == 0
    )
    out = json.loads(capsys.readouterr().out)
    assert (out["moved_up"], out["stayed"], out["moved_down"], out["improved_pct"]) == (
        2,
        2,
        1,
        40.0,
    )
    assert main(["transitions", path, "load", "--waves", "entry,exit", "--min-cell", "0"]) == 0
    assert "Improved (up): 40.0% of 5" in capsys.readouterr().out
    assert main(["respondents", path, "--waves", "entry,exit", "--min-cell", "0", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert (out["matched"], out["pct_of_a"]) == (6, 75.0)
    assert (
        main(["table", path, "load", "--compare-waves", "entry,exit", "--min-cell", "0", "--json"])
        == 0
    )
    out = json.loads(capsys.readouterr().out)
    # Entry answered: Low 3 (P1, P2, P7), Medium 2 (P3, P4), High 2 (P5, P8) of 7. Exit:
    # Low 4 (P2, P4, P9 and P1's second submission: a wave's table counts every row until
    # the duplicate is dealt with in cleaning), Medium 2 (P1, P6), High 3 (P3, P5, P10) of 9.
    assert out["counts"] == {
        "entry": {"Low": 3, "Medium": 2, "High": 2},
        "exit": {"Low": 4, "Medium": 2, "High": 3},
    }
    assert out["bases"] == {"entry": 7, "exit": 9}
    assert out["change_pp"]["High"] == pytest.approx(100 * 3 / 9 - 100 * 2 / 7)
    assert main(["transitions", path, "age", "--waves", "entry,exit"]) == 2
    assert "ordered answers" in capsys.readouterr().err


def test_importing_a_later_wave_carries_the_rules_forward(tmp_path):
    from core.importing import import_file

    rows = "".join(f"P{i},{['Solar', 'HVAC'][i % 2]},{20 + i}\n" for i in range(8))
    (tmp_path / "w1.csv").write_text("resp_id,track,age\n" + rows, encoding="utf-8")
    (tmp_path / "w2.csv").write_text("resp_id,track,age\n" + rows, encoding="utf-8")
    with Project.create(tmp_path / "p.plaincount") as project:
        first = import_file(project, tmp_path / "w1.csv", wave="1")
        codebook = project.codebook(first.wave.instrument_id)
        project.set_codebook(
            first.wave.instrument_id,
            codebook.with_variable(
                codebook["track"].updated({"levels": ["Solar install", "HVAC"]})
            ),
        )
        recode_all(project, first.wave.id, ["track"], "Solar", "Solar install", "Short form")
        edit_cell(project, first.wave.id, 0, "age", "Typed wrong", value=21)
        second = import_file(project, tmp_path / "w2.csv", wave="2")
        entries = entries_for(project, second.wave.id)
        assert [(e.action, e.reason) for e in entries] == [
            (Action.RECODE_ALL, "Short form (rule from wave 1)")
        ]
        assert second.report["carried_rules"][0]["old_value"] == "Solar"
        assert any("copied into this wave" in n for n in second.report["notes"])
