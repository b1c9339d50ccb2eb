"""Matching a new wave's columns and answers to an existing codebook."""

from __future__ import annotations

import difflib
import json
from pathlib import Path

import pandas as pd
import pytest

from core import demo
from core.codebook import Codebook, Variable
from core.importing import import_file
from core.kinds import Kind
from core.project import Project
from core.wavematch import (
    MatchReport,
    match_wave,
    name_similarity,
    question_similarity,
)
from core.working import working_data

AGREE = ("Strongly disagree", "Disagree", "Neither agree nor disagree", "Agree", "Strongly agree")
STEM = "Thinking about the course, how much do you agree? - "


@pytest.fixture(scope="module")
def demo_project(tmp_path_factory) -> Path:
    """The demo project built by ``build_demo_project``, which passes no column or level map."""
    folder = tmp_path_factory.mktemp("demo")
    return demo.build_demo_project(folder)


# ---------------------------------------------------------------------------- the demo
def test_demo_wave_2027_matches_fully_without_an_explicit_map(demo_project):
    manifest = json.loads((demo_project.parent / demo.MANIFEST_NAME).read_text("utf-8"))
    renamed = [c for c in manifest["wave_changes"] if c["change"] == "renamed_column"]
    reworded = [c for c in manifest["wave_changes"] if c["change"] == "reworded_level"]
    with Project.open(demo_project) as project:
        wave = project.find_wave("2027")
        match = wave.import_report["match"]
        assert match["complete"] is True
        assert match["column_map"] == {c["new"]: c["old"] for c in renamed}
        assert match["uncertain"] == [] and match["new"] == [] and match["missing"] == []
        assert match["unknown_answers"] == {}
        assert match["level_maps"] == {
            item: {c["new"]: c["old"] for c in reworded}
            for c in reworded
            for item in c["variables"]
        }
        codebook = project.codebook(wave.instrument_id)
        raw = project.raw_table(wave.id)
        assert "work_hours_week" not in codebook and "work_hours_week" not in raw.columns
        assert "hours_work_week" in raw.columns
        assert len(codebook) == manifest["waves"]["2026"]["columns"]
        # Every "Now and then" reads as "Sometimes"; none is left invalid.
        work = working_data(project, wave.id)
        for item in reworded[0]["variables"]:
            n_new = int((raw[item] == "Now and then").sum())
            assert n_new > 100  # the reworded label replaced the level for everyone
            assert int((work.values[item] == "Sometimes").sum()) == n_new
            assert not (work.reasons[item] == "invalid").any()
        # The renamed column kept the codebook's range (set on the 2026 codebook).
        assert codebook["hours_work_week"].range is not None


# ---------------------------------------------------------------------------- similarity
def test_name_similarity_ignores_word_order_but_not_item_numbers():
    assert name_similarity("hours_work_week", "work_hours_week") == 1.0
    assert name_similarity("agree_8", "agree_9") == 0.3  # different items of one battery
    assert name_similarity("age", "track") == pytest.approx(
        difflib.SequenceMatcher(None, "age", "track").ratio(), abs=1e-3
    )


def test_question_similarity_against_difflib_and_battery_stems():
    a = "How many hours a week do you work for pay?"
    b = "About how many hours a week do you work for pay?"
    # Reference: difflib's ratio on the lower-case words joined by single spaces.
    ref = difflib.SequenceMatcher(
        None,
        "how many hours a week do you work for pay",
        "about how many hours a week do you work for pay",
    ).ratio()
    assert question_similarity(a, b) == pytest.approx(ref, abs=1e-3)
    assert question_similarity(a, a) == 1.0
    assert question_similarity(a, "") is None
    # Two items of one battery share a long stem but are different questions.
    item1 = STEM + "I felt welcome in my cohort."
    item2 = STEM + "I often felt lost in class."
    assert question_similarity(item1, item2) < 0.85


# ---------------------------------------------------------------------------- columns
def _codebook() -> Codebook:
    return Codebook(
        [
            Variable("resp_id", "Respondent ID", Kind.IDENTIFIER, position=1),
            Variable(
                "hours",
                "About how many hours a week do you work?",
                Kind.NUMERIC,
                range=(0, 100),
                position=2,
            ),
            Variable(
                "agree_1",
                STEM + "The content was relevant.",
                Kind.LIKERT,
                levels=AGREE,
                group="agree",
                position=3,
            ),
            Variable(
                "agree_2",
                STEM + "The instructors were clear.",
                Kind.LIKERT,
                levels=AGREE,
                group="agree",
                position=4,
            ),
            Variable(
                "done",
                "Have you completed the course?",
                Kind.CATEGORICAL,
                levels=("Yes", "No"),
                position=5,
            ),
            Variable(
                "load",
                "How heavy was the workload?",
                Kind.ORDINAL,
                levels=("Low", "Medium", "High"),
                position=6,
            ),
        ]
    )


def _frame(n: int = 12) -> pd.DataFrame:
    agree = [AGREE[i % 5] for i in range(n)]
    return pd.DataFrame(
        {
            "resp_id": [f"P{i}" for i in range(n)],
            "weekly_hours": [float(10 + i) for i in range(n)],
            "agree_1": agree,
            "agree_3": list(reversed(agree)),
            "done": ["Yes", "No", "Yse"] + ["Yes"] * (n - 3),
            "load": ["Low", "Middle", "High"] * (n // 3),
        }
    )


QUESTIONS = {
    "resp_id": "Respondent ID",
    "weekly_hours": "About how many hours a week do you work?",
    "agree_1": STEM + "The content was relevant.",
    "agree_3": STEM + "I would recommend the course.",
    "done": "Have you completed the course?",
    "load": "How heavy was the workload?",
}


def test_columns_are_matched_renamed_new_missing_or_uncertain():
    report = match_wave(_codebook(), _frame(), QUESTIONS)
    status = {c.column: (c.status, c.target) for c in report.columns}
    assert status["resp_id"] == ("matched", "resp_id")
    assert status["weekly_hours"] == ("renamed", "hours")  # same question, answers in range
    # A new battery item with the same answers as the dropped one: a suggestion only.
    assert status["agree_3"] == ("uncertain", "agree_2")
    assert report.column_map == {"weekly_hours": "hours"}
    assert report.missing == ["agree_2"]
    assert report.uncertain == ["agree_3"] and report.new == []
    assert report.needs_review and not report.complete
    assert "100% of its answers fit" in report.column("agree_3").reason


def test_a_typo_beside_the_right_answer_is_left_for_the_cleaning_checks():
    report = match_wave(_codebook(), _frame(), QUESTIONS)
    assert "done" not in report.level_maps
    assert report.unknown_answers["done"] == ["Yse"]


def test_the_only_new_answer_in_place_of_a_lost_level_is_proposed_not_applied():
    report = match_wave(_codebook(), _frame(), QUESTIONS)
    proposal = next(m for m in report.levels if m.variable == "load")
    assert (proposal.answer, proposal.level, proposal.applied) == ("Middle", "Medium", False)
    assert "load" not in report.level_maps


def test_reworded_scale_points_and_respellings_map_when_the_old_level_is_gone():
    frame = _frame()
    frame["agree_1"] = frame["agree_1"].replace(
        {"Strongly agree": "Completely agree", "Disagree": "disagree."}
    )
    report = match_wave(_codebook(), frame, QUESTIONS)
    assert report.level_maps["agree_1"] == {
        "Completely agree": "Strongly agree",  # another spelling of scale point 5
        "disagree.": "Disagree",  # the same words
    }


def test_the_evaluators_choices_override_the_matcher():
    report = match_wave(
        _codebook(),
        _frame(),
        QUESTIONS,
        column_map={"weekly_hours": "weekly_hours", "agree_3": "agree_2"},
        level_maps={"load": {"Middle": "Medium"}},
    )
    status = {c.column: (c.status, c.target) for c in report.columns}
    assert status["weekly_hours"] == ("new", "weekly_hours")
    assert status["agree_3"] == ("renamed", "agree_2")
    assert report.missing == ["hours"]
    assert report.level_maps == {"load": {"Middle": "Medium"}}
    again = MatchReport.from_json(json.loads(json.dumps(report.to_json())))
    assert again.to_json() == report.to_json()


# ---------------------------------------------------------------------------- import
def test_import_matches_a_renamed_column_by_question_text(tmp_path):
    first = tmp_path / "w1.csv"
    first.write_text(
        "resp_id,hours,done\nID,About how many hours a week do you work?,Completed?\n"
        + "".join(f"P{i},{10 + i},{'Yes' if i % 2 else 'No'}\n" for i in range(12)),
        encoding="utf-8",
    )
    second = tmp_path / "w2.csv"
    second.write_text(
        "resp_id,weekly_hours,done,visits\nID,About how many hours a week do you work?,"
        "Completed?,How many visits?\n"
        + "".join(f"P{i},{20 + i},{'Yes' if i % 3 else 'No'},{i % 4}\n" for i in range(12)),
        encoding="utf-8",
    )
    with Project.create(tmp_path / "p.plaincount") as project:
        import_file(project, first, wave="1", header_rows=2)
        result = import_file(project, second, wave="2", header_rows=2)
        assert result.report["match"]["renamed"] == ["weekly_hours"]
        assert result.report["new_variables"] == ["visits"]
        assert list(project.raw_table(result.wave.id).columns) == [
            "resp_id",
            "hours",
            "done",
            "visits",
        ]
        assert any("weekly_hours is stored as hours" in n for n in result.report["notes"])
        # An explicit map still wins: keep the column as a question of its own.
        third = tmp_path / "w3.csv"
        third.write_text(second.read_text("utf-8"), encoding="utf-8")
        kept = import_file(
            project, third, wave="3", header_rows=2, column_map={"weekly_hours": "weekly_hours"}
        )
        assert "weekly_hours" in kept.codebook
        assert kept.report["match"]["column_map"] == {}


def test_an_answer_left_as_it_is_gets_no_guess():
    frame = _frame()
    frame["agree_1"] = frame["agree_1"].replace({"Strongly agree": "Completely agree"})
    report = match_wave(
        _codebook(), frame, QUESTIONS, level_maps={"agree_1": {"Completely agree": ""}}
    )
    assert "agree_1" not in report.level_maps
    assert report.unknown_answers["agree_1"] == ["Completely agree"]


def test_cli_import_prints_the_match_and_takes_overrides(tmp_path, capsys):
    from core.cli.main import main

    head = "resp_id,{h},done\nID,About how many hours a week do you work?,Completed?\n"
    rows = "".join(f"P{i},{10 + i},{'Yes' if i % 2 else 'No'}\n" for i in range(12))
    for name, column in (
        ("w1.csv", "hours"),
        ("w2.csv", "weekly_hours"),
        ("w3.csv", "weekly_hours"),
    ):
        (tmp_path / name).write_text(head.format(h=column) + rows, encoding="utf-8")
    path = str(tmp_path / "p.plaincount")
    assert main(["new", path]) == 0
    assert (
        main(["import", path, str(tmp_path / "w1.csv"), "--wave", "1", "--header-rows", "2"]) == 0
    )
    capsys.readouterr()
    assert (
        main(
            [
                "import",
                path,
                str(tmp_path / "w2.csv"),
                "--wave",
                "2",
                "--header-rows",
                "2",
                "--json",
            ]
        )
        == 0
    )
    match = json.loads(capsys.readouterr().out)["report"]["match"]
    assert match["renamed"] == ["weekly_hours"] and match["column_map"] == {"weekly_hours": "hours"}
    assert (
        main(
            [
                "import",
                path,
                str(tmp_path / "w3.csv"),
                "--wave",
                "3",
                "--header-rows",
                "2",
                "--map",
                "weekly_hours=weekly_hours",
            ]
        )
        == 0
    )
    out = capsys.readouterr().out
    assert "New question(s) added to the codebook: weekly_hours." in out
    assert main(["import", path, str(tmp_path / "w3.csv"), "--wave", "4", "--map", "oops"]) == 2
    assert "COLUMN=NAME" in capsys.readouterr().err
