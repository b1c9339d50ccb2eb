"""The rule form: parsing, messages, round trip through the structured form, evaluation,
and the project's rule list (add, remove, undo)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.checks import CheckSettings, check_run, settings_for_wave
from core.codebook import Codebook, Variable
from core.errors import RuleError
from core.kinds import Kind
from core.rules import (
    Condition,
    Group,
    Rule,
    add_rule,
    broken,
    evaluate,
    list_rules,
    parse_rule,
    remove_rule,
)
from core.working import working_data
from tests.core.cleaning_support import make_project

BOOK = Codebook(
    [
        Variable("completed", kind=Kind.CATEGORICAL, levels=("Yes", "No")),
        Variable("credential_earned", kind=Kind.CATEGORICAL, levels=("Yes", "No")),
        Variable("track", kind=Kind.CATEGORICAL, levels=("HVAC", "Solar install", "Welding")),
        Variable("age", kind=Kind.NUMERIC),
        Variable("hours", kind=Kind.NUMERIC),
        Variable("sat", kind=Kind.LIKERT, levels=("Low", "Mid", "High")),
        Variable("note", kind=Kind.TEXT),
        Variable("when", kind=Kind.DATE),
    ]
)


@pytest.mark.parametrize(
    ("text", "canonical"),
    [
        (
            'if completed is "No" then credential_earned is not "Yes"',
            'if completed is "No" then credential_earned is not "Yes"',
        ),
        (
            "if completed is No then credential_earned must not be Yes",
            'if completed is "No" then credential_earned is not "Yes"',
        ),
        (
            "IF completed = no THEN credential_earned != yes",
            'if completed is "No" then credential_earned is not "Yes"',
        ),
        (
            'if age < 18 and track is one of HVAC, "Solar install" then hours <= 40',
            'if age < 18 and track is one of "HVAC", "Solar install" then hours <= 40',
        ),
        (
            "if track is Solar install or age >= 60.5 then sat >= Mid",
            'if track is "Solar install" or age >= 60.5 then sat >= "Mid"',
        ),
        ("note is answered", "note is answered"),
        (
            "if age is not missing then hours is answered",
            "if age is answered then hours is answered",
        ),
        (
            "if (age < 18 or age > 64) and completed is Yes then track is not one of [Welding]",
            'if (age < 18 or age > 64) and completed is "Yes" then track is not one of "Welding"',
        ),
    ],
)
def test_parse_and_canonical_text_round_trip(text, canonical):
    rule = parse_rule(text, BOOK)
    assert rule.to_text() == canonical
    assert parse_rule(rule.to_text(), BOOK) == rule


def test_structured_form_builds_the_same_rule():
    built = Rule.build(
        when=[Condition("completed", "is", "No")],
        then=[Condition("credential_earned", "is not", "Yes")],
    )
    assert built == parse_rule('if completed is "No" then credential_earned is not "Yes"')
    two = Rule.build(
        when=[Condition("age", "<", 18), Condition("age", "is answered")],
        then=[Condition("hours", "<=", 40), Condition("hours", "is missing")],
        then_joiner="or",
    )
    assert two.to_text() == "if age < 18 and age is answered then hours <= 40 or hours is missing"
    assert isinstance(two.then, Group) and two.variables == ("age", "hours")


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("", "empty"),
        ("if completed is No", "Expected 'then'"),
        ("if completed is then x is 1", "Expected a value"),
        ("completed equals No", "Expected 'is'"),
        ("if (age < 3 then hours is 1", "not closed"),
        ('completed is "No" track is HVAC', "left over"),
        ("if complete is No then track is HVAC", "Did you mean 'completed'"),
        ("if completed is Maybe then track is HVAC", "'Maybe' is not an answer of completed"),
        ("if age is old then track is HVAC", "holds numbers"),
        ("if track < HVAC then age is 3", "cannot be compared"),
        ("if when > tomorrowish then age is 3", "not a date"),
        ("age is one of", "value"),
    ],
)
def test_clear_messages(text, message):
    with pytest.raises(RuleError, match=message):
        parse_rule(text, BOOK)


def test_evaluation_semantics_with_missing_answers(tmp_path):
    frame = pd.DataFrame(
        {
            "completed": ["No", "No", "Yes", None, "No"],
            "credential_earned": ["Yes", "No", "Yes", "Yes", None],
            "age": [17, 30, 16, None, 70],
            "sat": ["High", "Low", "Mid", "High", None],
        }
    )
    book = [BOOK["completed"], BOOK["credential_earned"], BOOK["age"], BOOK["sat"]]
    project, wave = make_project(tmp_path, frame, book)
    with project:
        wd = working_data(project, wave)
        cb = wd.codebook
        v, r = wd.values, wd.reasons

        def rows(text, fn=broken):
            rule = parse_rule(text, cb)
            return list(np.flatnonzero(fn(rule, v, r, cb)))

        # Missing credential passes "is not Yes"; missing completed never triggers the rule.
        assert rows('if completed is "No" then credential_earned is not "Yes"') == [0]
        assert rows("if age < 18 then sat <= Mid") == [0]
        assert rows("age is answered") == [3]
        assert rows("if sat is missing then age > 80") == [4]
        got = evaluate(parse_rule("sat is one of High, Mid", cb).then, v, r, cb)
        assert list(got) == [True, False, True, True, False]


def test_rules_stored_per_instrument_with_undo(tmp_path):
    frame = pd.DataFrame({"completed": ["No", "Yes"], "credential_earned": ["Yes", "Yes"]})
    project, wave = make_project(tmp_path, frame, [BOOK["completed"], BOOK["credential_earned"]])
    with project:
        inst = project.wave(wave).instrument_id
        rid, changes = add_rule(
            project, inst, "if completed is No then credential_earned must not be Yes"
        )
        assert changes.rules
        with pytest.raises(RuleError, match="already rule"):
            add_rule(project, inst, 'if completed is "No" then credential_earned is not "Yes"')
        stored = list_rules(project, inst)
        assert [(r.id, r.text) for r in stored] == [
            (rid, 'if completed is "No" then credential_earned is not "Yes"')
        ]
        settings = settings_for_wave(project, wave)
        flags = check_run(working_data(project, wave), settings).flags
        assert [(f.check, f.row, f.detail["rule_id"]) for f in flags] == [("consistency", 0, rid)]
        remove_rule(project, rid)
        assert list_rules(project, inst) == []
        assert [r.active for r in list_rules(project, inst, include_removed=True)] == [False]
        project.undo()  # undo the removal
        assert [r.id for r in list_rules(project, inst)] == [rid]
        with pytest.raises(RuleError, match="no rule number"):
            remove_rule(project, 999)


def test_rule_that_no_longer_fits_the_codebook_is_reported(tmp_path):
    frame = pd.DataFrame({"completed": ["No"], "credential_earned": ["Yes"]})
    project, wave = make_project(tmp_path, frame, [BOOK["completed"], BOOK["credential_earned"]])
    with project:
        inst = project.wave(wave).instrument_id
        add_rule(project, inst, "if completed is No then credential_earned is not Yes")
        book = project.codebook(inst)
        project.set_codebook(
            inst,
            book.with_variable(
                Variable("completed", kind=Kind.CATEGORICAL, levels=("Done", "Not done"))
            ),
        )
        stored = list_rules(project, inst)
        assert stored[0].rule is None and "'No' is not an answer" in stored[0].problem
        run = check_run(working_data(project, wave), settings_for_wave(project, wave))
        assert not [f for f in run.flags if f.check == "consistency"]
        assert any("was not applied" in n for n in run.notes)


def test_plain_rules_in_settings_are_checked_at_run_time(tmp_path):
    frame = pd.DataFrame({"age": [10.0, 30.0]})
    project, wave = make_project(tmp_path, frame, [BOOK["age"]])
    with project:
        run = check_run(
            working_data(project, wave),
            CheckSettings(rules=(parse_rule("age >= 16"), parse_rule("agee >= 1"))),
        )
    assert [f.row for f in run.flags if f.check == "consistency"] == [0]
    assert any("agee" in n for n in run.notes)
