"""The checks-and-flags view on the demo project: grouped flags, decisions, keys, batches.

Figures are checked against the core (the view only shows ``core.cleaning``'s flags and
records through it) and against the demo generator's manifest, which says where each
planted problem is (row numbers counted by the generator, not by the checks).
"""

from __future__ import annotations

import json
import shutil

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QMessageBox

from core.cleaning import flags_for, grouped, ledger_list
from core.demo import MANIFEST_NAME, build_demo_project
from core.ledger import Action
from core.working import working_data
from desktopapp.models.data_grid import EDITED_ROLE
from desktopapp.models.flags import group_text
from desktopapp.project_tree import NodeType
from desktopapp.views.cleaning_view import CleaningView
from desktopapp.views.data_grid_view import DataGridView

WAVE = "2026"
RULE = 'if completed is "No" then credential_earned is not "Yes"'


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The demo project, built once for the module; each test works on a copy."""
    folder = tmp_path_factory.mktemp("cleaning_view_demo")
    path = build_demo_project(folder)
    manifest = json.loads((folder / MANIFEST_NAME).read_text(encoding="utf-8"))
    return path, manifest


@pytest.fixture
def project_path(demo, tmp_path):
    target = tmp_path / "demo copy.plaincount"
    shutil.copy(demo[0], target)
    return target


def _wave_id(window) -> int:
    return window.project.find_wave(WAVE, "Participant survey").id


@pytest.fixture
def view(window, project_path) -> CleaningView:
    assert window.open_project(project_path)
    assert window.show_node(NodeType.FLAGS, wave_id=_wave_id(window))
    assert isinstance(window.view, CleaningView)
    assert window.view.run is not None
    return window.view


def _flag(view, check: str, variable: str, value: float):
    for f in view.model.shown_flags():
        if f.check == check and variable in f.variables and f.value == value:
            return f
    raise AssertionError(f"no {check} flag on {variable} = {value}")


def _planted(manifest, problem: str, variable: str):
    return next(
        p
        for p in manifest["problems"]
        if p["wave"] == WAVE and p["problem"] == problem and variable in p["variables"]
    )


def test_flags_are_grouped_with_the_core_counts(window, view):
    reference = grouped(flags_for(window.project, view.wave_id).flags)
    shown = view.model.groups()
    assert [(g.check, g.count, g.open_count) for g in shown] == [
        (g.check, g.count, g.open_count) for g in reference
    ]
    # Every check row says its counts in words; the flag rows under it add up.
    model = view.model
    for row, group in enumerate(reference):
        index = model.index(row, 0)
        assert model.data(index) == group_text(group)
        assert f"{group.count} flag" in model.data(index)
        assert model.rowCount(index) == group.count
    # The demo plants four speeders in 2026 (manifest) and the range check finds 4 values.
    assert {g.check: g.count for g in shown}["speeder"] == 4
    assert "32 flags from 8 checks: 32 open, 0 decided" in view.summary_label.text()


def test_selecting_a_flag_shows_the_whole_row_with_the_flagged_cell(window, view, demo):
    planted = _planted(demo[1], "impossible_value", "age")
    flag = _flag(view, "range", "age", 7)
    assert flag.row == planted["row"] - 1 and flag.respondent == planted["resp_id"]
    assert view.select_flag(flag)
    assert view.pages.currentIndex() == 1
    assert "HP-10113" in view.flag_heading.text() and "data row 312" in view.flag_heading.text()
    rows = view.row_texts()
    codebook = window.project.codebook(view.instrument_id)
    assert [r[0] for r in rows] == [v.name for v in codebook]  # the whole row
    assert [r for r in rows if r[2]] == [("age", "7", True)]  # only age is highlighted
    # The suggestion is prefilled and named on the accept button.
    assert view.accept_button.text() == "Accept: Set to missing"
    assert view.decision_buttons[Action.SET_MISSING].isEnabled()


def test_set_to_missing_marks_the_grid_and_undo_removes_the_mark(window, view):
    flag = _flag(view, "range", "age", 7)
    view.select_flag(flag)
    view.reason_edit.setText("Impossible age for this program")
    view.decision_buttons[Action.SET_MISSING].click()

    entries = ledger_list(window.project, view.wave_id)
    assert len(entries) == 1
    entry, active = entries[0]
    assert active and entry.action is Action.SET_MISSING
    assert entry.variables == ("age",) and entry.row == 311 and entry.old_value == 7
    assert entry.reason == "Impossible age for this program" and entry.check == "range"
    assert window.undo.undo_action.text() == "Undo set age of HP-10113 to missing"
    # The flag list was refreshed: the range flag on age is gone (the value is missing now).
    assert not any(f.check == "range" and "age" in f.variables for f in view.model.flags)

    assert window.show_node(NodeType.DATA, wave_id=view.wave_id)
    grid = window.view
    assert isinstance(grid, DataGridView)
    model = grid.model
    index = model.index(311, model.column_of("age"))
    assert model.data(index, EDITED_ROLE) is True
    assert model.data(index) == "set missing"
    tip = model.data(index, Qt.ItemDataRole.ToolTipRole)
    assert "Original: 7" in tip and "Now: (missing)" in tip
    assert "Impossible age for this program" in tip

    window.undo.undo_action.trigger()
    assert model.data(index, EDITED_ROLE) is False
    assert model.data(index) == "7"
    assert model.data(index, Qt.ItemDataRole.ToolTipRole) is None
    assert window.undo.redo_action.text() == "Redo set age of HP-10113 to missing"
    assert [a for _, a in ledger_list(window.project, view.wave_id)] == [False]


def test_a_decision_needs_a_reason(window, view):
    view.select_flag(_flag(view, "range", "age", 7))
    view.reason_edit.setText("   ")
    view.decision_buttons[Action.EXCLUDE].click()
    assert "reason" in view.error_label.text().lower()
    assert ledger_list(window.project, view.wave_id) == []


def test_keys_move_through_flags_and_enter_accepts_the_suggestion(window, view, qtbot):
    shown = view.model.shown_flags()
    view.select_flag(shown[0])
    view.flag_tree.setFocus()
    qtbot.keyClick(view.flag_tree, Qt.Key.Key_J)
    assert view.current_flag.key == shown[1].key
    qtbot.keyClick(view.flag_tree, Qt.Key.Key_J)
    assert view.current_flag.key == shown[2].key
    qtbot.keyClick(view.flag_tree, Qt.Key.Key_K)
    assert view.current_flag.key == shown[1].key

    # A wandering zero: 400 hours where 40 was meant (manifest), suggestion "correct to 40".
    flag = _flag(view, "wandering_zero", "hours_work_week", 400)
    view.select_flag(flag)
    assert view.value_combo.currentText() == "40"
    view.reason_edit.setText("Source form says 40")
    keys_after = [f.key for f in view.model.shown_flags()]
    keys_after = keys_after[keys_after.index(flag.key) + 1 :]
    view.flag_tree.setFocus()
    qtbot.keyClick(view.flag_tree, Qt.Key.Key_Return)
    entries = ledger_list(window.project, view.wave_id)
    assert len(entries) == 1
    assert entries[0][0].action is Action.CORRECT and entries[0][0].new_value == 40
    assert working_data(window.project, view.wave_id).values["hours_work_week"].iat[105] == 40
    # The review moved on to the next open flag that followed.
    assert view.current_flag is not None and view.current_flag.decided_by is None
    assert view.current_flag.key in keys_after
    assert window.undo.undo_action.text() == "Undo correct hours_work_week of HP-10078 to 40"


def test_shortcuts_are_named_in_tooltips(view):
    assert "J / K" in view.flag_tree.toolTip() and "Enter" in view.flag_tree.toolTip()
    assert "Enter" in view.accept_button.toolTip()
    assert "Alt+M" in view.decision_buttons[Action.SET_MISSING].toolTip()


def test_batch_decision_over_three_flags_is_one_undo_step(window, view):
    outliers = [f for f in view.model.shown_flags() if f.check == "outlier"][:3]
    assert len(outliers) == 3
    view.select_flags(outliers)
    assert view.pages.currentIndex() == 2
    assert view.batch_heading.text().startswith("3 flags selected — 3 open")
    steps = len(window.project.history())
    view.batch_reason_edit.setText("Checked against the paper forms: real values")
    view.batch_buttons["keep"].click()

    assert len(window.project.history()) == steps + 1
    entries = [e for e, _ in ledger_list(window.project, view.wave_id)]
    assert len(entries) == 3
    assert {e.action for e in entries} == {Action.KEEP}
    assert len({e.batch for e in entries}) == 1 and entries[0].batch is not None
    decided = [f for f in view.model.flags if f.check == "outlier" and f.decided_by]
    assert len(decided) == 3
    group = next(g for g in view.model.groups() if g.check == "outlier")
    assert (group.count, group.open_count) == (7, 4)
    view.select_flag(decided[0])
    assert view.decided_label.text().startswith(
        f"✓ Decided by ledger entry {decided[0].decided_by}: kept as is — "
        "“Checked against the paper forms: real values”"
    )
    assert view.model.data(view.model.index_of(decided[0].key)).startswith("✓ ")

    window.undo.undo_action.trigger()
    assert [a for _, a in ledger_list(window.project, view.wave_id)] == [False] * 3
    group = next(g for g in view.model.groups() if g.check == "outlier")
    assert group.open_count == 7


def test_selecting_a_check_row_decides_its_flags(window, view):
    index = view.model.group_index("speeder")
    view.flag_tree.selectionModel().select(
        index, view.flag_tree.selectionModel().SelectionFlag.ClearAndSelect
    )
    assert len(view.selected_flags()) == 4
    steps = len(window.project.history())
    view.decide_selected("exclude", reason="Finished in under a quarter of the median time")
    working = working_data(window.project, view.wave_id)
    assert sorted(working.excluded) == [12, 61, 147, 335]  # manifest rows 13, 62, 148, 336
    assert len(window.project.history()) == steps + 1


def test_batch_suggestions_refuse_flags_without_one(window, view):
    lacking = [f for f in view.model.shown_flags() if f.suggestion and f.suggestion.action is None]
    assert lacking, "the demo has reversed-scale flags without a single suggestion"
    view.select_flags([lacking[0], _flag(view, "range", "age", 7)])
    view.decide_selected("suggested", reason="reviewed")
    assert "no single suggestion" in view.batch_error.text()
    assert ledger_list(window.project, view.wave_id) == []


def test_decisions_with_background_work(qtbot, project_path):
    """With the real background runner: the decision is written on the writer thread, the
    flags refresh on a reader, and leaving the view while work runs loses nothing."""
    from desktopapp.main_window import MainWindow

    win = MainWindow(synchronous=False)
    qtbot.addWidget(win)
    win.show()
    try:
        assert win.open_project(project_path)
        wave_id = _wave_id(win)
        assert win.show_node(NodeType.FLAGS, wave_id=wave_id)
        view = win.view
        qtbot.waitUntil(lambda: view.run is not None, timeout=10_000)
        view.select_flag(_flag(view, "range", "age", 7))
        view.reason_edit.setText("Impossible age")
        view.decide(Action.SET_MISSING)
        qtbot.waitUntil(
            lambda: not any(f.check == "range" and f.row == 311 for f in view.model.flags),
            timeout=10_000,
        )
        assert view.current_flag is not None and view.current_flag.decided_by is None
        view.reason_edit.setText("Checked")
        view.decide(Action.KEEP)
        assert win.show_node(NodeType.DATA, wave_id=wave_id)  # while the write runs
        grid = win.view
        qtbot.waitUntil(lambda: grid.model is not None, timeout=10_000)
        qtbot.waitUntil(lambda: len(ledger_list(win.project, wave_id)) == 2, timeout=10_000)
        model = grid.model
        qtbot.waitUntil(
            lambda: model.data(model.index(311, model.column_of("age")), EDITED_ROLE) is True,
            timeout=10_000,
        )
    finally:
        win.close_project()


def test_row_from_a_slice_equals_the_core_row(window, view):
    """The view reads a respondent's row from a one-row slice (fast on big waves); it must
    say exactly what ``core.cleaning.respondent_row`` says on the whole wave."""
    from core.cleaning import edit_cell, respondent_row
    from desktopapp.views.cleaning_view import row_cells

    project, wave_id = window.project, view.wave_id
    edit_cell(project, wave_id, 311, "age", "Impossible age", missing=True, check="range")
    edit_cell(project, wave_id, 343, "credits_term", "Source says 12", value=12)
    working = working_data(project, wave_id)
    flags = flags_for(project, wave_id).flags
    declined = int(np.flatnonzero((working.reasons["age"] == "declined").to_numpy())[0])
    for row in (0, 105, 311, 343, declined, working.n_rows - 1):
        assert row_cells(working, row, flags) == respondent_row(working, row, flags), row


def test_an_impossible_correction_gets_a_plain_message(window, view):
    view.select_flag(_flag(view, "range", "age", 7))
    view.reason_edit.setText("Typo")
    view.value_combo.setEditText("seventy")
    view.decision_buttons[Action.CORRECT].click()
    assert view.error_label.text() == "'seventy' is not a valid answer for age (number)."
    assert window.findChild(QMessageBox) is None  # in place, never a box with a traceback
    assert ledger_list(window.project, view.wave_id) == []


def test_reverse_the_respondents_scale_on_the_battery(window, view, demo):
    planted = next(
        p
        for p in demo[1]["problems"]
        if p["wave"] == WAVE and p["problem"] == "reversed_scale" and p["resp_id"] == "HP-10098"
    )
    row = planted["row"] - 1
    flag = next(f for f in view.model.flags if f.check == "reversed_scale" and f.row == row)
    view.select_flag(flag)
    button = view.decision_buttons[Action.REVERSE]
    assert button.isEnabled() and button.text() == "&Reverse scale on agree"
    view.reason_edit.setText("Glowing comments: the scale was read the wrong way round")
    button.click()
    entry = ledger_list(window.project, view.wave_id)[0][0]
    assert entry.action is Action.REVERSE and entry.new_value == "agree"
    assert entry.variables == tuple(f"agree_{i}" for i in range(1, 9))
    values = working_data(window.project, view.wave_id).values
    mirror = {"Strongly disagree": "Strongly agree", "Strongly agree": "Strongly disagree"}
    for name, before in planted["value"].items():  # the generator's planted answers
        assert values[name].iat[row] == mirror[before], name
    assert window.undo.undo_action.text() == "Undo reverse the agree scale of HP-10098"


def test_a_consistency_flag_corrects_the_chosen_answer(window, view):
    from core.rules import add_rule

    add_rule(window.project, view.instrument_id, RULE)
    flag = next(f for f in view.model.flags if f.check == "consistency")
    view.select_flag(flag)
    assert view.variable_combo.isVisibleTo(view)
    view.variable_combo.setCurrentIndex(view.variable_combo.findData("credential_earned"))
    assert [view.value_combo.itemText(i) for i in range(view.value_combo.count())] == [
        "Yes",
        "No",
    ]
    view.value_combo.setCurrentIndex(1)
    view.reason_edit.setText("Registrar: no credential issued")
    view.decision_buttons[Action.CORRECT].click()
    entry = ledger_list(window.project, view.wave_id)[0][0]
    assert (entry.variables, entry.old_value, entry.new_value) == (
        ("credential_earned",),
        "Yes",
        "No",
    )
    assert not any(f.check == "consistency" for f in view.model.flags)


def test_other_project_settings_leave_the_flags_alone(window, view):
    run = view.run
    window.project.update_settings(author="A. Evaluator")
    assert view.run is run  # not re-run
    from dataclasses import replace

    from core.checks import load_settings, save_settings

    save_settings(window.project, replace(load_settings(window.project), speeder_fraction=0.2))
    assert view.run is not run
    # The planted speeders finished in 14%, 19%, 23% and 27% of the median time (manifest
    # notes): under a fifth of it, only the first two remain.
    speeders = {f.respondent for f in view.model.flags if f.check == "speeder"}
    assert speeders == {"HP-10372", "HP-10088"}
