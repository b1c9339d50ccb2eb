"""The "Group into categories…" dialog on the demo: live counts, create, undo, reach."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from desktopapp.grouping_dialog import GroupingDialog
from desktopapp.project_tree import NodeType
from tests.desktopapp.demo_window import open_demo_window, source_frame


@pytest.fixture(scope="module")
def window(qapp, tmp_path_factory):
    win = open_demo_window(tmp_path_factory.mktemp("grouping"))
    yield win
    win.close()


def demo_ages(window) -> pd.Series:
    """Ages of wave 2027 read straight from the workbook with pandas; -99 means declined."""
    ages = pd.to_numeric(source_frame(window)["age"], errors="coerce")
    return ages[ages.notna() & (ages != -99)]


def dialog_for(window, qtbot) -> GroupingDialog:
    project = window.project
    inst = project.instrument("Participant survey")
    wave = project.find_wave("2027", inst.id)
    dialog = GroupingDialog(project, window.runner, inst.id, "age", wave.id, parent=window)
    qtbot.addWidget(dialog)
    return dialog


def bars(dialog) -> list[tuple[str, int]]:
    return dialog.groups_view.frequencies().bars


def test_live_counts_equal_pandas_cut(window, qtbot):
    dialog = dialog_for(window, qtbot)
    ages = demo_ages(window)
    assert dialog.answers is not None and dialog.answers.size == len(ages)
    dialog.set_method("cuts", "25, 35, 45")
    # Reference: pandas.cut with right=False (a value on a cut point starts the next group).
    ref = pd.cut(ages, [-np.inf, 25, 35, 45, np.inf], right=False).value_counts(sort=False)
    assert bars(dialog) == list(
        zip(["Under 25", "25–34", "35–44", "45 and over"], ref.tolist(), strict=True)
    )
    assert dialog.create_button.isEnabled() and not dialog.error_text

    dialog.set_method("equal", 3)
    lo, hi = ages.min(), ages.max()
    edges = [float(np.ceil(lo + (hi - lo) * i / 3)) for i in (1, 2)]
    assert list(dialog.current.cut_points) == edges
    ref = pd.cut(ages, [-np.inf, *edges, np.inf], right=False).value_counts(sort=False)
    assert [n for _, n in bars(dialog)] == ref.tolist()

    dialog.set_method("quantile", 4)
    # Reference: pandas.qcut's quartile edges, rounded up to whole years like the dialog.
    q = pd.qcut(ages, 4, retbins=True)[1]
    edges = [float(np.ceil(e)) for e in q[1:-1]]
    assert list(dialog.current.cut_points) == edges
    ref = pd.cut(ages, [-np.inf, *edges, np.inf], right=False).value_counts(sort=False)
    assert [n for _, n in bars(dialog)] == ref.tolist()
    assert sum(n for _, n in bars(dialog)) == len(ages)


def test_bad_cut_points_and_names_get_plain_words(window, qtbot):
    dialog = dialog_for(window, qtbot)
    dialog.set_method("cuts", "25, thirty")
    assert "numbers separated by commas" in dialog.error_text
    assert not dialog.create_button.isEnabled()
    dialog.set_method("cuts", "20, 62")
    assert "Fewer than 5 people are in 62 and over" in dialog.caution_label.text()
    dialog.name_edit.setText("track")
    assert "already has a variable called track" in dialog.name_note.text()
    assert not dialog.create_button.isEnabled()


def test_create_adds_the_variable_and_undo_removes_it(window, qtbot):
    project = window.project
    inst = project.instrument("Participant survey")
    dialog = dialog_for(window, qtbot)
    dialog.set_method("cuts", "25, 35, 45")
    dialog.name_edit.setText("age_band")
    shown = bars(dialog)
    dialog.create()
    assert dialog.created is not None and dialog.result() == GroupingDialog.DialogCode.Accepted
    var = project.codebook(inst.id)["age_band"]
    assert var.derived_from == "age" and var.cut_points == (25.0, 35.0, 45.0)
    # The table of the new variable counts what the dialog showed.
    from core.tables.build import compute_table
    from core.tables.spec import TableSpec

    wave = project.find_wave("2027", inst.id)
    table = compute_table(project, TableSpec("age_band", wave=wave.label, min_cell=0))
    assert list(table.data["counts"].items()) == shown
    assert project.undo_label() == "Group age into 4 categories (chosen cut points)"
    window.undo.undo()
    assert "age_band" not in project.codebook(inst.id)


def test_reachable_from_the_tables_and_codebook_views(window, qtbot):
    from tests.desktopapp.demo_window import fresh_tables_view

    view = fresh_tables_view(window)
    assert view.select_variable("age")
    assert view.group_button.isVisibleTo(view)
    dialog = view.open_grouping()
    qtbot.addWidget(dialog)
    assert isinstance(dialog, GroupingDialog) and dialog.source == "age"
    dialog.reject()
    assert view.select_variable("track")
    assert not view.group_button.isVisibleTo(view)

    inst = window.project.instrument("Participant survey")
    assert window.show_node(NodeType.CODEBOOK, instrument_id=inst.id)
    codebook_view = window.view
    codebook_view.select_variable("age")
    assert codebook_view.group_button.isVisibleTo(codebook_view)
    dialog = codebook_view.open_grouping()
    qtbot.addWidget(dialog)
    assert dialog.source == "age"
    dialog.reject()
    codebook_view.select_variable("track")
    assert not codebook_view.group_button.isVisibleTo(codebook_view)


def test_reopening_starts_from_the_earlier_grouping(window, qtbot):
    project = window.project
    inst = project.instrument("Participant survey")
    first = dialog_for(window, qtbot)
    first.set_method("cuts", "30, 50")
    first.create()
    again = dialog_for(window, qtbot)
    assert again.name_edit.text() == "age_group" and again.cuts_edit.text() == "30, 50"
    assert "creating it again replaces its groups" in again.name_note.text()
    window.undo.undo()
    assert "age_group" not in project.codebook(inst.id)


def test_large_cut_points_keep_no_thousands_commas(qtbot, tmp_path):
    from core.codebook import Variable
    from desktopapp.grouping_dialog import plain_number
    from desktopapp.workers import BackgroundRunner
    from tests.core.tables_helpers import make_project

    assert [plain_number(x) for x in (25000.0, 1.5, 0.125)] == ["25000", "1.5", "0.125"]
    frame = pd.DataFrame({"income": [12000, 18500, 26000, 31000, 47000, 52000, 75000, 98000]})
    with make_project(tmp_path, frame, [Variable("income", "Income", "numeric")]) as p:
        # A real background runner: the answers arrive on the GUI thread a moment later.
        runner = BackgroundRunner(None)
        dialog = GroupingDialog(p, runner, p.instruments()[0].id, "income")
        qtbot.addWidget(dialog)
        qtbot.waitUntil(lambda: dialog.current is not None, timeout=10_000)
        # Quartile starting point by linear interpolation (numpy's default, as pandas.qcut):
        q = np.quantile(frame["income"], [0.25, 0.5, 0.75])
        assert dialog.cuts_edit.text() == ", ".join(str(int(np.ceil(v))) for v in q)
        assert [n for _, n in bars(dialog)] == [2, 2, 2, 2]
        runner.wait()
