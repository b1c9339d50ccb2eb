"""The ledger view: filters by variable, check and reason; withdrawing keeps the history."""

from __future__ import annotations

import shutil

import pytest

from core.cleaning import edit_cell, exclude, flags_for, ledger_list
from core.demo import build_demo_project
from core.ledger import Action, entries_for
from core.working import working_data
from desktopapp.project_tree import NodeType
from desktopapp.views.ledger_view import LedgerView, ReasonDialog

WAVE = "2026"


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    return build_demo_project(tmp_path_factory.mktemp("ledger_view_demo"))


@pytest.fixture
def view(window, demo, tmp_path) -> LedgerView:
    target = tmp_path / "demo copy.plaincount"
    shutil.copy(demo, target)
    assert window.open_project(target)
    project = window.project
    wave_id = project.find_wave(WAVE, "Participant survey").id
    project.update_settings(author="A. Evaluator")  # the ledger names who decided
    # Three decisions, made through the core as the cleaning view makes them.
    edit_cell(project, wave_id, 311, "age", "Impossible age", missing=True, check="range")
    edit_cell(
        project,
        wave_id,
        343,
        "credits_term",
        "Wandering zero: source says 12",
        value=12,
        check="wandering_zero",
    )
    exclude(project, wave_id, 12, "Finished far too fast", check="speeder")
    assert window.show_node(NodeType.LEDGER, wave_id=wave_id)
    assert isinstance(window.view, LedgerView)
    return window.view


def _column(view, key: str) -> list[str]:
    return [view.model.text(r, key) for r in range(view.model.rowCount())]


def test_lists_every_decision(view):
    assert _column(view, "action") == ["Set to missing", "Corrected", "Respondent excluded"]
    assert _column(view, "respondent") == [
        "HP-10113 (row 312)",
        "HP-10077 (row 344)",
        "HP-10088 (row 13)",
    ]
    assert _column(view, "old")[:2] == ["7", "120"]
    assert _column(view, "new") == ["missing", "12", "left out of analyses"]
    assert _column(view, "author") == ["A. Evaluator"] * 3
    assert "3 decisions on record, 3 in force, 0 withdrawn" in view.summary_label.text()


def test_filters_by_variable_check_and_reason(window, view):
    view.set_filters(variable="age")
    assert _column(view, "variables") == ["age"]
    view.set_filters(check="wandering_zero")
    assert _column(view, "check") == ["Wandering zero"]
    view.set_filters(reason="FAST")  # words in the reason, any case
    assert _column(view, "reason") == ["Finished far too fast"]
    view.set_filters()
    assert view.model.rowCount() == 3
    # The same rows as the core's own filter.
    core_rows = ledger_list(window.project, view.wave_id, check="range")
    view.set_filters(check="range")
    assert [view.model.entry_at(r)[0].id for r in range(view.model.rowCount())] == [
        e.id for e, _ in core_rows
    ]


def test_withdraw_asks_a_reason_and_keeps_the_entry(window, view, qtbot):
    view.set_filters(variable="age")
    view.table.selectRow(0)
    assert view.withdraw_button.isEnabled()
    view.withdraw_button.click()
    dialog = view.findChild(ReasonDialog)
    assert dialog is not None and not dialog.ok_button.isEnabled()
    dialog.reason_edit.setText("The paper form shows 71; corrected instead")
    assert dialog.ok_button.isEnabled()
    dialog.ok_button.click()

    entries = entries_for(window.project, view.wave_id)
    withdrawal = entries[-1]
    assert withdrawal.action is Action.WITHDRAW and withdrawal.withdraws == entries[0].id
    assert withdrawal.reason == "The paper form shows 71; corrected instead"
    # Still listed, now withdrawn; the working data has age 7 back.
    assert _column(view, "state") == ["withdrawn"]
    assert working_data(window.project, view.wave_id).values["age"].iat[311] == 7
    assert any(
        f.check == "range" and f.row == 311 for f in flags_for(window.project, view.wave_id).flags
    )
    assert not view.withdraw_button.isEnabled()  # nothing in force is selected
    view.withdrawn_check.setChecked(False)
    assert view.model.rowCount() == 0

    window.undo.undo_action.trigger()
    view.withdrawn_check.setChecked(True)
    assert _column(view, "state") == ["yes"]
