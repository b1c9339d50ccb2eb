"""The rule form, the recode-everywhere dialog and the check settings, on the demo project.

The demo generator plants one respondent per wave who says the credential was earned
although the course was not completed (manifest problem "contradiction"); the rule built
here must flag exactly that respondent. Parser messages are compared with
``core.rules.parse_rule``'s own, so the window shows the parser's words unchanged.
"""

from __future__ import annotations

import json
import shutil

import pytest
import shiboken6

from core.checks import load_settings
from core.cleaning import ledger_list, rules_for_next_wave
from core.demo import MANIFEST_NAME, build_demo_project
from core.errors import RuleError
from core.ledger import Action
from core.rules import list_rules, parse_rule
from core.working import working_data
from desktopapp.check_settings_dialog import CheckSettingsDialog
from desktopapp.project_tree import NodeType
from desktopapp.rule_dialog import RecodeDialog, RuleDialog, split_values
from desktopapp.views.cleaning_view import CleaningView

WAVE = "2026"
RULE = 'if completed is "No" then credential_earned is not "Yes"'


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    folder = tmp_path_factory.mktemp("rule_dialog_demo")
    path = build_demo_project(folder)
    manifest = json.loads((folder / MANIFEST_NAME).read_text(encoding="utf-8"))
    return path, manifest


@pytest.fixture
def view(window, demo, tmp_path) -> CleaningView:
    target = tmp_path / "demo copy.plaincount"
    shutil.copy(demo[0], target)
    assert window.open_project(target)
    wave = window.project.find_wave(WAVE, "Participant survey")
    assert window.show_node(NodeType.FLAGS, wave_id=wave.id)
    assert isinstance(window.view, CleaningView)
    return window.view


@pytest.fixture
def dialog(view) -> RuleDialog:
    dialog = view.open_rules()
    assert isinstance(dialog, RuleDialog)
    yield dialog
    if shiboken6.isValid(dialog):
        dialog.close()


def test_pickers_build_the_rule_and_adding_it_flags_the_contradiction(window, view, dialog, demo):
    assert not any(g.check == "consistency" for g in view.model.groups())
    when, then = dialog.when_list.rows[0], dialog.then_list.rows[0]
    when.set_condition("completed", "is", "No")
    # The value picker offers the variable's own answers.
    assert [when.value_combo.itemText(i) for i in range(when.value_combo.count())] == [
        "Yes",
        "No",
    ]
    then.set_condition("credential_earned", "is not", "Yes")
    assert dialog.text_edit.text() == RULE
    assert dialog.message() == f"Reads: {RULE}"
    assert dialog.add_button.isEnabled()

    dialog.add_button.click()
    stored = list_rules(window.project, view.instrument_id)
    assert [r.text for r in stored] == [RULE]
    assert dialog.rule_texts() == [f"{stored[0].id}.  {RULE}"]
    assert window.undo.undo_action.text() == f"Undo add rule {stored[0].id}"

    # The flag list was refreshed with the rule: exactly the planted respondent is flagged.
    planted = next(
        p for p in demo[1]["problems"] if p["wave"] == WAVE and p["problem"] == "contradiction"
    )
    flags = [f for f in view.model.flags if f.check == "consistency"]
    assert [(f.respondent, f.row + 1) for f in flags] == [(planted["resp_id"], planted["row"])]
    assert flags[0].variables == ("completed", "credential_earned")
    group = next(g for g in view.model.groups() if g.check == "consistency")
    assert (group.count, group.open_count) == (1, 1)


def test_an_unreadable_typed_rule_shows_the_parser_message(dialog):
    typed = "if completed is No credential_earned is Yes"
    with pytest.raises(RuleError) as expected:
        parse_rule(typed, dialog.codebook)
    dialog.text_edit.setText(typed)
    dialog.text_edit.textEdited.emit(typed)
    assert dialog.message() == str(expected.value)
    assert "then" in dialog.message()
    assert not dialog.add_button.isEnabled()

    typed = 'if complete is "No" then credential_earned is not "Yes"'
    dialog.text_edit.setText(typed)
    dialog.text_edit.textEdited.emit(typed)
    assert "Did you mean 'completed'?" in dialog.message()
    dialog.add_rule()  # refused: nothing stored
    assert list_rules(dialog.project, dialog.instrument_id) == []


def test_a_typed_rule_is_stored_in_its_plain_form(window, dialog):
    typed = "if completed must be no then credential_earned must not be yes"
    dialog.text_edit.setText(typed)
    dialog.text_edit.textEdited.emit(typed)
    dialog.add_rule()
    assert [r.text for r in list_rules(window.project, dialog.instrument_id)] == [RULE]


def test_order_comparisons_only_for_ordered_variables(dialog):
    row = dialog.when_list.rows[0]
    row.set_condition("track", "is", "Welding")
    ops = [row.op_combo.itemData(i) for i in range(row.op_combo.count())]
    assert "<" not in ops  # a category has no order
    row.set_condition("age", "<", "18")
    assert "<" in [row.op_combo.itemData(i) for i in range(row.op_combo.count())]
    assert row.condition().to_text() == "age < 18"


def test_remove_a_rule_and_undo(window, view, dialog):
    dialog.text_edit.setText(RULE)
    dialog.add_rule()
    rule_id = list_rules(window.project, view.instrument_id)[0].id
    dialog.rule_list.setCurrentRow(0)
    assert dialog.remove_button.isEnabled()
    dialog.remove_button.click()
    assert list_rules(window.project, view.instrument_id) == []
    assert not any(f.check == "consistency" for f in view.model.flags)
    assert window.undo.undo_action.text() == f"Undo remove rule {rule_id}"
    window.undo.undo_action.trigger()
    assert [r.id for r in list_rules(window.project, view.instrument_id)] == [rule_id]
    assert any(f.check == "consistency" for f in view.model.flags)


def test_split_values_keeps_answers_with_commas():
    levels = ("Under $20,000", "$20,000 to $39,999", "$80,000 or more")
    assert split_values("Under $20,000, $80,000 or more", levels) == [
        "Under $20,000",
        "$80,000 or more",
    ]
    assert split_values("Fall, Spring", ("Fall", "Spring", "Summer")) == ["Fall", "Spring"]


def test_recode_every_minus_99_in_numeric_items_is_a_rule(window, view):
    # The demo's source has -99 typed for age nine times (pandas count on the raw table).
    raw = window.project.raw_table(view.wave_id)
    assert int((raw["age"] == -99).sum()) == 9
    dialog = view.open_recode()
    assert isinstance(dialog, RecodeDialog)
    assert dialog.old_edit.text() == "-99" and dialog.missing_check.isChecked()
    assert "age" in dialog.chosen() and "track" not in dialog.chosen()  # numeric items
    dialog.submit()
    assert "reason" in dialog.error_label.text()
    dialog.reason_edit.setText("-99 is the survey tool's code for no answer")
    dialog.submit()
    entries = [e for e, _ in ledger_list(window.project, view.wave_id)]
    assert len(entries) == 1 and entries[0].action is Action.RECODE_ALL
    reasons = working_data(window.project, view.wave_id).reasons["age"]
    assert int((reasons == "set_missing").sum()) == 9
    carried = [r for r in rules_for_next_wave(window.project, view.instrument_id)]
    assert [(r["kind"], r["old_value"]) for r in carried] == [("recode", "-99")]


def test_check_settings_are_saved_and_the_flags_follow(window, view):
    dialog = view.open_settings()
    assert isinstance(dialog, CheckSettingsDialog)
    assert dialog.method_combo.currentData() == "tukey"
    dialog.method_combo.setCurrentIndex(dialog.method_combo.findData("modified_z"))
    assert dialog.z_spin.isEnabled() and not dialog.inner_spin.isEnabled()
    dialog.k_spin.setValue(6)
    dialog.submit()
    saved = load_settings(window.project)
    assert saved.outlier_method == "modified_z" and saved.straightline_min_items == 6
    outliers = [f for f in view.model.flags if f.check == "outlier"]
    assert outliers and {f.detail["method"] for f in outliers} == {"modified_z"}


def test_impossible_settings_get_a_plain_message(view):
    dialog = view.open_settings()
    dialog.inner_spin.setValue(4)
    dialog.outer_spin.setValue(3)
    dialog.submit()
    assert "inner fence" in dialog.error_label.text()
    assert load_settings(view.project).tukey_inner == 1.5  # nothing saved
