"""Codebook editing in the window: every change is one undoable step in the project file."""

from __future__ import annotations

import statistics

import pandas as pd
import pytest

from core.project import Project
from desktopapp.project_tree import NodeType
from desktopapp.views.codebook_view import CodebookView, rename_level

from .conftest import small_frame


@pytest.fixture
def view(window, small_project_path) -> CodebookView:
    assert window.open_project(small_project_path)
    assert window.show_node(NodeType.CODEBOOK)
    assert isinstance(window.view, CodebookView)
    return window.view


def _codebook(window):
    return window.project.codebook(window.project.instruments()[0].id)


def test_range_edit_undo_redo(window, view, small_project_path):
    view.select_variable("age")
    view.range_min_edit.setText("16")
    view.range_max_edit.setText("70")
    view.range_max_edit.editingFinished.emit()
    assert _codebook(window)["age"].range == (16.0, 70.0)
    undo = window.undo.undo_action
    assert undo.isEnabled()
    assert undo.text() == "Undo set the plausible values of age to 16–70"
    undo.trigger()
    assert _codebook(window)["age"].range == (18.0, 64.0)
    assert view.range_min_edit.text() == "18"  # the view follows the project
    redo = window.undo.redo_action
    assert redo.text() == "Redo set the plausible values of age to 16–70"
    redo.trigger()
    assert _codebook(window)["age"].range == (16.0, 70.0)
    assert view.range_max_edit.text() == "70"
    # After closing and reopening, the history still says what was changed.
    window.close_project()
    with Project.open(small_project_path) as project:
        history = project.history()
        assert [h["label"] for h in history] == ["Set the plausible values of age to 16–70"]
        assert project.undo_label() == "Set the plausible values of age to 16–70"
    window.open_project(small_project_path)
    assert window.view.history.labels() == ["Set the plausible values of age to 16–70"]
    assert window.undo.undo_action.text() == "Undo set the plausible values of age to 16–70"
    window.undo.undo_action.trigger()  # and it can still be undone after reopening
    assert _codebook(window)["age"].range == (18.0, 64.0)


def test_history_list_shows_the_steps_newest_first(window, view):
    view.select_variable("email")
    view.personal_check.click()  # unmark
    view.select_variable("agree_2")
    view.keying_positive.click()
    window.show_node(NodeType.PROJECT)
    assert window.view.history.labels() == [
        "Mark agree_2 as positively worded",
        "Unmark email as personal data",
    ]
    window.undo.undo_action.trigger()
    assert window.view.history.labels()[0] == "Mark agree_2 as positively worded (undone)"
    assert _codebook(window)["agree_2"].keying == "negative"
    assert _codebook(window)["email"].personal is False


def test_renaming_an_answer_keeps_its_counts(window, view):
    view.select_variable("track")
    # Reference count straight from the raw column with pandas.
    expected = int((small_frame()["track"] == "HVAC").sum())
    assert expected == 6
    bars = dict(view.preview.frequencies().bars)
    assert bars["HVAC"] == expected
    view.level_list.item(0).setText("Heating and cooling")  # as a double-click edit does
    var = _codebook(window)["track"]
    assert var.levels == ("Heating and cooling", "Solar", "Welding")
    bars = dict(view.preview.frequencies().bars)
    assert bars == {"Heating and cooling": 6, "Solar": 2, "Welding": 3}
    window.undo.undo_action.trigger()
    assert _codebook(window)["track"].levels == ("HVAC", "Solar", "Welding")
    assert dict(view.preview.frequencies().bars)["HVAC"] == 6


def test_moving_an_answer_changes_the_order_and_undoes(window, view):
    view.select_variable("agree_1")
    view.level_list.setCurrentRow(0)
    view.level_down_button.click()
    assert _codebook(window)["agree_1"].levels[:2] == ("Disagree", "Strongly disagree")
    assert window.undo.undo_action.text() == "Undo reorder the answers of agree_1"
    window.undo.undo_action.trigger()
    assert _codebook(window)["agree_1"].levels[:2] == ("Strongly disagree", "Disagree")


def test_numeric_preview_counts_and_missing_reason(window, view):
    view.select_variable("age")
    data = view.preview.frequencies()
    ages = [a for a in small_frame()["age"] if a != -99]
    assert data.base == len(ages) == 11
    # Median by the standard library (statistics.median) on the same answers.
    assert f"Median {statistics.median(ages):,.0f}" in data.facts
    assert ("Declined to answer", 1) in data.missing


def test_kind_change_fills_answers_from_the_data_and_undoes(window, view):
    view.select_variable("email")
    view.kind_combo.setCurrentIndex(view.kind_combo.findData("categorical"))
    view.kind_combo.activated.emit(view.kind_combo.currentIndex())
    var = _codebook(window)["email"]
    assert var.kind == "categorical"
    assert len(var.levels) == small_frame()["email"].nunique() == 12
    window.undo.undo_action.trigger()
    assert _codebook(window)["email"].kind == "text"


def test_invalid_edit_is_explained_and_nothing_changes(window, view):
    view.select_variable("track")
    view.level_list.item(0).setText("Welding")  # already an answer
    assert view.details_error.isVisible()
    assert "already has an answer called “Welding”" in view.details_error.text()
    assert _codebook(window)["track"].levels == ("HVAC", "Solar", "Welding")
    assert window.project.history() == []


def test_search_filters_the_list(view):
    view.search_edit.setText("unmanageable")
    names = [i.data(0, 256) for i in view._variable_items()]
    assert names == ["agree_2"]
    assert view.count_label.text() == "1 of 6 variables"


def test_rename_level_maps_the_raw_text():
    from .conftest import small_codebook

    var = small_codebook()["track"]
    renamed = rename_level(var, "HVAC", "Heating and cooling")
    assert renamed.value_labels == {"HVAC": "Heating and cooling"}
    back = rename_level(renamed, "Heating and cooling", "HVAC")
    assert back.value_labels == {} and back.levels == var.levels
    assert pd.Series(["HVAC"]).map(lambda t: renamed.value_labels.get(t, t)).iloc[0] in (
        renamed.levels
    )


def test_numeric_groups_match_numpy_histogram():
    import numpy as np

    # statsmodels' anes96 ships real respondent ages (an open dataset, METHODS.md section 16).
    from statsmodels.datasets import anes96

    from desktopapp.views.codebook_view import binned, nice_step

    ages = anes96.load_pandas().data["age"].to_numpy(dtype=float)
    groups = binned(ages)
    step = nice_step(ages.max() - ages.min())
    assert step == 10.0  # ages 19 to 91 in eight groups: a span of 72 / 8 = 9, rounded up to 10
    edges = np.arange(10.0, 100.0 + 1, step)
    reference, _ = np.histogram(ages, bins=edges)
    assert [n for _, n in groups] == reference.tolist()
    assert groups[0][0] == "10 to 19" and sum(n for _, n in groups) == len(ages) == 944


def test_dragging_an_answer_reorders_it(window, view):
    from PySide6.QtCore import QModelIndex

    view.select_variable("track")
    model = view.level_list.model()
    # What an internal drag-and-drop does to the list's model: move "HVAC" below "Welding".
    assert model.moveRow(QModelIndex(), 0, QModelIndex(), 3)
    assert _codebook(window)["track"].levels == ("Solar", "Welding", "HVAC")
    assert [h["label"] for h in window.project.history()] == ["Reorder the answers of track"]


def test_quick_successive_edits_on_the_worker_build_on_each_other(qtbot, small_project_path):
    from dataclasses import replace

    from desktopapp.main_window import MainWindow

    window = MainWindow(synchronous=False)
    qtbot.addWidget(window)
    window.show()
    window.open_project(small_project_path)
    window.show_node(NodeType.CODEBOOK)
    view = window.view
    # Two changes asked for before the first one is written: the second must not undo the first.
    view.change_variable("age", lambda v: replace(v, question="Age in years"), "Edit age text")
    view.change_variable("age", lambda v: replace(v, range=(16.0, 80.0)), "Set age range")
    qtbot.waitUntil(lambda: not window.runner.busy, timeout=5000)
    age = _codebook(window)["age"]
    assert (age.question, age.range) == ("Age in years", (16.0, 80.0))
    assert [h["label"] for h in window.project.history()] == ["Edit age text", "Set age range"]
    window.close_project()
