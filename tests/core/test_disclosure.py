"""Plain-language notes and the data-treatment appendix, written from the ledger."""

from __future__ import annotations

import pytest

from core import cleaning
from core.disclosure import short_label, treatment_appendix, variable_notes
from core.ledger import Action, withdraw
from core.rules import add_rule
from core.working import working_data
from tests.core.cleaning_support import make_project, survey


@pytest.fixture
def cleaned(tmp_path):
    frame, variables = survey()
    frame.loc[20, "credits_term"] = 150.0
    project, wave = make_project(tmp_path, frame, variables)
    inst = project.wave(wave).instrument_id
    add_rule(project, inst, "if completed is No then credential_earned must not be Yes")
    run = cleaning.flags_for(project, wave)
    wz = [f for f in run.flags if f.check == "wandering_zero" and f.variables == ("credits_term",)]
    cleaning.decide_many(project, wave, wz, None, "Corrected after checking the source")
    age = next(f for f in run.flags if f.check == "range" and f.variables == ("age",))
    cleaning.decide(project, wave, age, Action.SET_MISSING, "Impossible value")
    keep = next(f for f in run.flags if f.check == "range" and f.variables == ("hours_work_week",))
    ids, _ = cleaning.decide(project, wave, keep, Action.KEEP, "Confirmed")
    withdraw(project, wave, ids, "Not confirmed after all")
    cleaning.exclude(project, wave, 39, "Second submission", check="duplicate_id")
    cleaning.reverse_battery(project, wave, 12, "agree", "Glowing comment", check="reversed_scale")
    yield project, wave
    project.close()


def test_short_label():
    from core.codebook import Codebook, Variable

    book = Codebook(
        [
            Variable("credits_term", "Credits this term"),
            Variable("age", "What is your age?"),
            Variable("x_y"),
        ]
    )
    assert short_label(book, "credits_term") == "credits this term"
    assert short_label(book, "age") == "age"  # a question reads badly inside a sentence
    assert short_label(book, "x_y") == "x y"


def test_variable_notes(cleaned):
    project, wave = cleaned
    notes = variable_notes(project, wave, ["credits_term", "age", "hours_work_week"])
    assert notes == [
        "2 values of credits this term were corrected (wandering zero): Corrected after "
        "checking the source.",
        "1 value of age was set to missing (outside the plausible range): Impossible value.",
        "1 respondent was left out of every analysis: Second submission.",
    ]  # the withdrawn "kept" decision on hours is not disclosed as in force
    reversed_notes = variable_notes(project, wave, ["agree_2"])
    assert reversed_notes[0] == (
        "The answers of 1 respondent to agree 2 were reversed on the scale (reversed "
        "scale): Glowing comment."
    )


def test_recode_note_counts_cells(tmp_path):
    import pandas as pd

    from core.codebook import Variable
    from core.kinds import Kind

    frame = pd.DataFrame({"age": ["30", "-99", "-99", "41"]})
    project, wave = make_project(tmp_path, frame, [Variable("age", kind=Kind.NUMERIC)])
    with project:
        cleaning.recode_all(project, wave, ["age"], "-99", None, "Code for declined")
        assert variable_notes(project, wave, ["age"]) == [
            "Every -99 in age (2 values) was set to missing: Code for declined."
        ]


def test_treatment_appendix_sections(cleaned):
    project, wave = cleaned
    sections = treatment_appendix(project, wave)
    assert [s["heading"] for s in sections] == [
        "How the data were checked",
        "Summary of cleaning decisions",
        "Every decision",
        "Respondents left out of the analysis",
        "Rules",
    ]
    for s in sections:
        assert set(s) == {"heading", "paragraphs", "table"}
        assert all(isinstance(p, str) and p for p in s["paragraphs"])
    checked = " ".join(sections[0]["paragraphs"])
    assert "Hyndman & Fan type 7" in checked and "50% of the median" in checked
    assert project.wave(wave).raw_sha256 in checked
    summary = sections[1]
    assert dict(map(tuple, summary["table"]["rows"])) == {
        "Corrected": 2,
        "Set to missing": 1,
        "Scale reversed": 1,
        "Respondent excluded": 1,
    }
    assert "1 earlier decision was withdrawn" in summary["paragraphs"][0]
    every = sections[2]["table"]
    assert every["columns"][1] == "Data row"  # identifiers are not shown by default
    assert len(every["rows"]) == 6
    statuses = [r[-1] for r in every["rows"]]
    assert statuses.count("withdrawn") == 1
    assert not any("R0" in str(cell) for r in every["rows"] for cell in r)
    assert sections[3]["table"]["rows"] == [
        ["row 40", "Same identifier more than once", "Second submission"]
    ]
    assert sections[4]["table"]["rows"][0][1] == (
        'if completed is "No" then credential_earned is not "Yes"'
    )
    shown = treatment_appendix(project, wave, show_respondents=True)
    assert shown[2]["table"]["columns"][1] == "Respondent"
    assert working_data(project, wave).excluded == frozenset({39})


def test_empty_ledger_says_so(tmp_path):
    frame, variables = survey()
    project, wave = make_project(tmp_path, frame, variables)
    with project:
        sections = treatment_appendix(project, wave)
        assert "No cleaning decisions" in sections[1]["paragraphs"][0]
        assert sections[2]["table"] is None
        assert variable_notes(project, wave, ["age"]) == []
