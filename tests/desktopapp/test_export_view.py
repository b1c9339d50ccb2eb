"""The report outline view on the demo project: order, titles, findings, charts, export.

Every edit is checked where it is stored (``core.outline.items``), and undone through the
window's Edit ▸ Undo. Exported files are checked against the names documented in
docs/export.md and opened with openpyxl and the csv module.
"""

from __future__ import annotations

import csv

import openpyxl
import pytest
from PySide6.QtCore import QModelIndex, Qt

from core import outline
from core.charts import chart_types
from core.export.report import check_outline, file_names
from core.tables.spec import TableSpec
from desktopapp.project_tree import NodeType
from desktopapp.views.export_view import NO_FINDING, TABLE_ONLY, ExportView

from .demo_window import open_demo_window

SATISFIED = "Most participants are satisfied with the program."


@pytest.fixture(scope="module")
def window(tmp_path_factory, qapp):
    win = open_demo_window(tmp_path_factory.mktemp("export-view"))
    yield win
    win.close_project()
    win.close()


@pytest.fixture
def kept(window) -> list[int]:
    """Three kept results: a chart with a finding, a chart without one, a cross-tab."""
    project = window.project
    window.show_node(NodeType.PROJECT)  # no outline view redrawing while the outline is reset
    for it in outline.items(project):
        outline.remove(project, it.id)
    return [
        outline.keep(project, TableSpec("overall_satisfaction", chart="column"), finding=SATISFIED),
        outline.keep(project, TableSpec("agree", chart="diverging")),
        outline.keep(project, TableSpec("track", by=("cohort",))),
    ]


@pytest.fixture
def view(window, kept) -> ExportView:
    assert window.show_node(NodeType.OUTLINE)  # a fresh view on the new outline
    v = window.view
    assert isinstance(v, ExportView)
    v.open_url = lambda url: opened.append(url)
    return v


opened: list = []


def stored_ids(window) -> list[int]:
    return [it.id for it in outline.items(window.project)]


def shown_titles(view) -> list[str]:
    model = view.model
    return [
        model.data(model.index(r, 0), Qt.ItemDataRole.EditRole) for r in range(model.rowCount())
    ]


# ---------------------------------------------------------------------- the list
def test_lists_the_kept_results_in_outline_order(window, view, kept):
    assert view.model.ids() == kept
    assert shown_titles(view) == [it.title for it in outline.items(window.project)]
    # The numbers in the list follow the outline positions.
    first = view.model.data(view.model.index(0, 0), Qt.ItemDataRole.DisplayRole)
    assert first.startswith("1. ") and first.endswith("(chart)")
    third = view.model.data(view.model.index(2, 0), Qt.ItemDataRole.DisplayRole)
    assert third.startswith("3. ") and third.endswith("(table)")


def test_reorder_by_moving_rows_is_stored(window, view, kept):
    a, b, c = kept
    # What a drag does: the list view asks the model to move the row (Qt's InternalMove).
    assert view.model.moveRows(QModelIndex(), 2, 1, QModelIndex(), 0)
    assert stored_ids(window) == [c, a, b]
    assert [it.position for it in outline.items(window.project)] == [1, 2, 3]
    assert view.model.ids() == [c, a, b]


def test_reorder_by_a_drop_is_stored_and_undone(window, view, kept):
    a, b, c = kept
    model = view.model
    mime = model.mimeData([model.index(0, 0)])
    # Dropped below the last row.
    assert model.dropMimeData(mime, Qt.DropAction.MoveAction, 3, 0, QModelIndex())
    assert stored_ids(window) == [b, c, a]
    window.undo.undo()
    assert stored_ids(window) == [a, b, c]
    assert view.model.ids() == [a, b, c]


def test_move_buttons(window, view, kept):
    a, b, c = kept
    view.select_item(a)
    view.down_button.click()
    assert stored_ids(window) == [b, a, c]
    assert view.current_item().id == a  # the moved item stays selected
    view.up_button.click()
    assert stored_ids(window) == [a, b, c]
    assert not view.up_button.isEnabled()  # first row


def test_rename_and_finding_are_stored_and_undone(window, view, kept):
    a = kept[0]
    view.select_item(a)
    view.title_edit.setText("Satisfaction with the program")
    view.title_edit.editingFinished.emit()
    assert outline.item(window.project, a).title == "Satisfaction with the program"
    view.finding_edit.setPlainText("Seven in ten are satisfied.\nFew are dissatisfied.")
    view.finding_edit.editing_finished.emit()
    stored = outline.item(window.project, a)
    assert stored.finding == "Seven in ten are satisfied.\nFew are dissatisfied."
    assert view.model.data(view.model.index(0, 0), Qt.ItemDataRole.EditRole) == stored.title

    window.undo.undo()  # the finding
    assert outline.item(window.project, a).finding == SATISFIED
    assert view.finding_edit.toPlainText() == SATISFIED
    window.undo.undo()  # the title
    restored = outline.item(window.project, a)
    assert restored.title != "Satisfaction with the program"
    assert view.title_edit.text() == restored.title


def test_rename_in_the_list(window, view, kept):
    b = kept[1]
    index = view.model.index(1, 0)
    assert view.model.setData(index, "  Views of the bridge   course ")
    assert outline.item(window.project, b).title == "Views of the bridge course"


def test_chart_without_finding_is_marked(window, view, kept):
    a, b, c = kept
    # Only the chart without a finding sentence is marked; the table needs none.
    assert view.warning_rows() == [1]
    assert view.model.data(view.model.index(1, 0), Qt.ItemDataRole.DecorationRole) is not None
    assert NO_FINDING in view.model.data(view.model.index(1, 0), Qt.ItemDataRole.ToolTipRole)
    view.select_item(b)
    assert view.finding_warning.isVisibleTo(view)
    assert view.shown_warnings == check_outline(window.project)
    assert any("should show a finding" in w for w in view.shown_warnings)
    view.select_item(c)
    assert not view.finding_warning.isVisibleTo(view)

    view.select_item(b)
    view.finding_edit.setPlainText("Most agree the course was well organised.")
    view.finding_edit.editing_finished.emit()
    assert view.warning_rows() == []
    assert view.shown_warnings == []


def test_chart_type_choice_is_stored_and_undone(window, view, kept):
    a = kept[0]
    view.select_item(a)
    result = outline.result_for(window.project, outline.item(window.project, a))
    offered = [view.chart_combo.itemData(i) for i in range(view.chart_combo.count())]
    assert offered == [None, *chart_types(result)]
    assert view.chart_combo.itemText(0) == TABLE_ONLY
    bar = view.chart_combo.findData("bar")
    view.chart_combo.setCurrentIndex(bar)
    view.chart_combo.activated.emit(bar)
    assert outline.item(window.project, a).chart == "bar"
    view.chart_combo.setCurrentIndex(0)
    view.chart_combo.activated.emit(0)
    assert outline.item(window.project, a).chart is None
    window.undo.undo()
    assert outline.item(window.project, a).chart == "bar"


def test_preview_shows_the_kept_table(window, view, kept):
    c = kept[2]
    view.select_item(c)
    result = outline.result_for(window.project, outline.item(window.project, c))
    model = view.table_model
    shown = [
        [model.data(model.index(r, k)) for k in range(model.columnCount())]
        for r in range(model.rowCount())
    ]
    assert shown == [[cell.display for cell in row] for row in result.rows]
    assert view.preview_tabs.currentIndex() == 1  # kept as a table: the table tab


def test_remove_and_undo(window, view, kept):
    a, b, c = kept
    view.select_item(b)
    view.remove_button.click()
    assert stored_ids(window) == [a, c]
    assert view.current_item().id == c  # the next one takes its place
    window.undo.undo()
    assert stored_ids(window) == [a, b, c]


# ---------------------------------------------------------------------- export settings
def test_confidentiality_switches_start_off_and_change_the_warnings(window, view, kept):
    assert not view.personal_check.isChecked()
    assert not view.comments_check.isChecked()
    outline.keep(window.project, TableSpec("best_part"))  # open-ended comments
    assert any("will be left out" in w and "comments" in w for w in view.shown_warnings)
    view.comments_check.setChecked(True)
    assert not any("will be left out" in w for w in view.shown_warnings)
    assert "caution" in view.comments_note.text()
    view.comments_check.setChecked(False)


def test_formats_and_folder_are_remembered(window, view, tmp_path):
    view.set_formats(["csv", "png"])
    view.ask_folder = lambda start: str(tmp_path / "picked")
    view.folder_button.click()
    assert view.folder() == tmp_path / "picked"
    window.show_node(NodeType.PROJECT)
    window.show_node(NodeType.OUTLINE)
    again = window.view
    assert again.chosen_formats() == ["png", "csv"]
    assert again.folder() == tmp_path / "picked"
    # The confidentiality switches are never remembered.
    assert not again.personal_check.isChecked()
    again.set_formats(["xlsx", "docx", "html"])


def test_export_writes_the_documented_files(window, view, tmp_path):
    out = tmp_path / "report"
    view.set_formats(["xlsx", "csv"])
    view.set_folder(out)
    expected = file_names(window.project, ["xlsx", "csv"])
    # docs/export.md: tables.xlsx and one NN-<slug>.csv per result in outline order.
    assert expected[0] == "tables.xlsx"
    assert [n[:3] for n in expected[1:]] == ["01-", "02-", "03-"]
    assert all(n.endswith(".csv") for n in expected[1:])
    view.export()
    assert sorted(p.name for p in out.iterdir()) == sorted(expected)
    assert [view.files_list.item(i).text() for i in range(view.files_list.count())] == expected
    assert view.open_folder_button.isVisibleTo(view)
    assert any("should show a finding" in w for w in view.last_warnings)

    items = outline.items(window.project)
    book = openpyxl.load_workbook(out / "tables.xlsx")
    assert book.sheetnames[0] == "Contents" and book.sheetnames[-1] == "About this workbook"
    assert book.worksheets[1]["A1"].value == items[0].title
    with open(out / expected[1], encoding="utf-8-sig", newline="") as f:
        first = next(csv.reader(f))
    assert first[0] == items[0].title

    opened.clear()
    url = view.open_folder()
    assert opened == [url] and url.toLocalFile() == str(out)


def test_cancel_mid_export_leaves_no_files(window, view, tmp_path, monkeypatch):
    import core.export.report as report

    out = tmp_path / "cancelled"
    view.set_formats(["csv"])
    view.set_folder(out)
    original = report.write_result_csv
    written = []

    def write_then_cancel(path, result):
        # Cancel is pressed while the export runs, after its first file is written.
        written.append(original(path, result))
        if len(written) == 1:
            view.cancel_button.click()
        return written[-1]

    monkeypatch.setattr(report, "write_result_csv", write_then_cancel)
    view.export()
    assert len(written) == 1 and written[0].exists() is False  # it was only staged
    assert list(out.iterdir()) == []  # not even the hidden staging folder
    assert "cancelled" in view.done_label.text()
    assert view.last_files == []
    assert view.export_button.isEnabled()


def test_empty_outline_says_how_to_keep_results(window, view):
    for it in outline.items(window.project):
        outline.remove(window.project, it.id)
    assert view.model.rowCount() == 0
    assert view.empty_label.isVisibleTo(view)
    assert not view.export_button.isEnabled()
