"""Working data = raw + codebook + ledger; the raw table is never changed."""

from __future__ import annotations

import pandas as pd
import pytest

from core.codebook import Codebook, Variable
from core.errors import PlaincountError
from core.kinds import Kind
from core.ledger import Action, Decision, entries_for, record, surviving, withdraw
from core.project import Project
from core.working import working_data


@pytest.fixture
def project(tmp_path):
    book = Codebook(
        [
            Variable("resp_id", kind=Kind.IDENTIFIER),
            Variable("age", kind=Kind.NUMERIC, missing_codes={"-99": "declined"}),
            Variable(
                "agree_1",
                kind=Kind.LIKERT,
                levels=("Disagree", "Neutral", "Agree"),
                group="agree",
            ),
        ]
    )
    raw = pd.DataFrame(
        {
            "resp_id": ["A1", "A2", "A3"],
            "age": [20.0, 7.0, -99.0],
            "agree_1": ["Disagree", "Agree", None],
        }
    )
    p = Project.create(tmp_path / "t.plaincount")
    inst = p.add_instrument("Participant survey", book)
    p.add_wave(inst.id, "2026", "t.csv", b"source", raw)
    yield p
    p.close()


def test_decisions_change_working_data_not_raw(project):
    wave = project.find_wave("2026")
    raw_before = project.raw_table(wave.id).copy()
    record(
        project,
        wave.id,
        [
            Decision(Action.SET_MISSING, "impossible age", variables=["age"], row=1),
            Decision(Action.REVERSE, "read the scale backwards", variables=["agree_1"], row=0),
            Decision(Action.EXCLUDE, "test submission", row=2),
        ],
    )
    wd = working_data(project, wave.id)
    assert pd.isna(wd.values.loc[1, "age"])
    assert wd.reasons.loc[1, "age"] == "set_missing"
    assert wd.values.loc[0, "agree_1"] == "Agree"
    assert wd.excluded == frozenset({2})
    assert len(wd.analysed()[0]) == 2
    pd.testing.assert_frame_equal(project.raw_table(wave.id), raw_before)


def test_undo_withdraws_and_redo_reinstates(project):
    wave = project.find_wave("2026")
    record(
        project, wave.id, [Decision(Action.CORRECT, "typo", variables=["age"], row=1, new_value=17)]
    )
    assert working_data(project, wave.id).values.loc[1, "age"] == 17
    assert project.undo_label() == "Corrected: 1 value"
    project.undo()
    assert working_data(project, wave.id).values.loc[1, "age"] == 7
    project.redo()
    assert working_data(project, wave.id).values.loc[1, "age"] == 17
    # Nothing is deleted: the correction, its withdrawal and its reinstatement are all kept.
    assert len(entries_for(project, wave.id)) == 3
    assert len(surviving(entries_for(project, wave.id))) == 1


def test_withdraw_keeps_history(project):
    wave = project.find_wave("2026")
    ids, _ = record(project, wave.id, [Decision(Action.SET_MISSING, "x", variables=["age"], row=0)])
    withdraw(project, wave.id, ids, "changed my mind")
    assert working_data(project, wave.id).values.loc[0, "age"] == 20
    kinds = [e.action for e in entries_for(project, wave.id)]
    assert kinds == [Action.SET_MISSING, Action.WITHDRAW]


def test_invalid_correction_is_refused_in_plain_words(project):
    wave = project.find_wave("2026")
    record(
        project,
        wave.id,
        [Decision(Action.CORRECT, "x", variables=["agree_1"], row=0, new_value="Maybe")],
    )
    with pytest.raises(PlaincountError, match="not a valid answer"):
        working_data(project, wave.id)


def test_recode_everywhere_applies_to_every_matching_cell(project):
    wave = project.find_wave("2026")
    record(
        project,
        wave.id,
        [Decision(Action.RECODE_ALL, "7 means missing here", variables=["age"], old_value="7")],
    )
    wd = working_data(project, wave.id)
    assert wd.reasons.loc[1, "age"] == "set_missing"
    assert wd.values.loc[0, "age"] == 20
