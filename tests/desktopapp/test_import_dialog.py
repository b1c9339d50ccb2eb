"""Importing in the window: drop files, preview, adjust, import, cancel, and plain errors."""

from __future__ import annotations

import threading
import warnings

import openpyxl
import pytest
from PySide6.QtCore import QMimeData, QPointF, Qt, QUrl
from PySide6.QtGui import QDragEnterEvent, QDropEvent

from core.kinds import Kind
from core.progress import Progress
from core.project import Project
from desktopapp.main_window import MainWindow
from desktopapp.project_tree import NodeType

TRACKS = ["Electrical", "HVAC", "Welding", "Solar install"]


def write_xlsx(path, rows: int = 40):
    """An invented two-header-row export: short names, then the question text."""
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Responses"
    sheet.append(["resp_id", "track", "age", "satisfied"])
    sheet.append(
        [
            "Respondent",
            "Which track are you in?",
            "How old are you?",
            "How satisfied are you with the course?",
        ]
    )
    for i in range(rows):
        sheet.append(
            [
                f"P{i + 1:04d}",
                TRACKS[i % 4],
                20 + i % 40 if i % 13 else -99,
                ["Satisfied", "Very satisfied", "Dissatisfied"][i % 3],
            ]
        )
    notes = book.create_sheet("Notes")
    notes.append(["Exported for the evaluation team"])
    book.save(path)
    return path


def _drop(window, paths):
    mime = QMimeData()
    mime.setUrls([QUrl.fromLocalFile(str(p)) for p in paths])
    with warnings.catch_warnings():
        # PySide6 marks the only QDragEnterEvent constructor deprecated; it is what Qt sends.
        warnings.simplefilter("ignore", DeprecationWarning)
        enter = QDragEnterEvent(
            window.rect().center(),
            Qt.DropAction.CopyAction,
            mime,
            Qt.MouseButton.LeftButton,
            Qt.KeyboardModifier.NoModifier,
        )
    window.dragEnterEvent(enter)
    assert enter.isAccepted()
    drop = QDropEvent(
        QPointF(window.rect().center()),
        Qt.DropAction.CopyAction,
        mime,
        Qt.MouseButton.LeftButton,
        Qt.KeyboardModifier.NoModifier,
    )
    window.dropEvent(drop)


@pytest.fixture
def empty_project(window, tmp_path):
    assert window.new_project(tmp_path / "evaluation.plaincount")
    return window.project


def test_drag_and_drop_import_of_an_xlsx(window, empty_project, tmp_path):
    source = write_xlsx(tmp_path / "participant_survey_2026.xlsx")
    _drop(window, [source])
    dialog = window.import_dialog
    assert dialog is not None and dialog.isVisible()
    # The preview is what the reader will read: names from the first header row, the
    # question text from the second, data from the third row on.
    assert [dialog.sheet_combo.itemText(i) for i in range(dialog.sheet_combo.count())] == [
        "Responses",
        "Notes",
    ]
    model = dialog.preview_model
    assert model.columnCount() == 4
    assert [model.headerData(c, Qt.Orientation.Horizontal) for c in range(4)] == [
        "resp_id",
        "track",
        "age",
        "satisfied",
    ]
    assert model.headerData(1, Qt.Orientation.Horizontal, Qt.ItemDataRole.ToolTipRole) == (
        "Which track are you in?"
    )
    assert model.data(model.index(0, 0)) == "P0001"
    assert model.rowCount() == 40
    assert dialog.wave_edit.text() == "2026"  # taken from the file name
    assert dialog.columns_table.rowCount() == 4
    # Change one column's inferred kind and answers before importing.
    row = dialog._row_of("satisfied")
    dialog.set_kind("satisfied", Kind.ORDINAL)
    dialog.columns_table.item(row, dialog.COL_LEVELS).setText(
        "Dissatisfied; Satisfied; Very satisfied"
    )
    dialog.import_button.click()
    assert window.import_dialog is None  # closed after a successful import
    waves = empty_project.waves()
    assert [(w.label, w.n_rows, w.n_columns) for w in waves] == [("2026", 40, 4)]
    codebook = empty_project.codebook(waves[0].instrument_id)
    assert codebook["satisfied"].kind is Kind.ORDINAL
    assert codebook["satisfied"].levels == ("Dissatisfied", "Satisfied", "Very satisfied")
    # Columns left alone were inferred by the import itself.
    assert codebook["track"].kind is Kind.CATEGORICAL
    assert set(codebook["track"].levels) == set(TRACKS)
    assert codebook["age"].missing_codes == {"-99": "declined"}
    assert window.tree.current_node().type == NodeType.WAVE  # the new wave is shown


def test_cancel_mid_import_leaves_the_project_unchanged(qtbot, tmp_path, monkeypatch):
    window = MainWindow(synchronous=False)  # a real worker thread, as in use
    qtbot.addWidget(window)
    window.show()
    path = tmp_path / "evaluation.plaincount"
    assert window.new_project(path)
    version_before = window.project.version
    source = write_xlsx(tmp_path / "survey_2026.xlsx", rows=400)

    # Hold the import at its first progress report until the test has pressed Cancel, so the
    # cancel really arrives in the middle of the work.
    reached, released = threading.Event(), threading.Event()
    original = Progress.update

    def held_update(self, done, total, label=""):
        if threading.current_thread() is not threading.main_thread() and not reached.is_set():
            reached.set()
            released.wait(10)
        return original(self, done, total, label)

    window.request_import([source])
    dialog = window.import_dialog
    qtbot.waitUntil(lambda: dialog.import_button.isEnabled(), timeout=10000)
    monkeypatch.setattr(Progress, "update", held_update)
    job = dialog.start_import()
    assert reached.wait(10), "the import never reported progress"
    assert dialog.cancel_import_button.isVisible()
    dialog.cancel_import_button.click()
    released.set()
    qtbot.waitUntil(lambda: not job.running, timeout=10000)
    assert "Nothing was added to the project" in dialog.error_text()
    assert window.project.waves() == []
    assert window.project.instruments() == []
    assert window.project.version == version_before
    dialog.reject()
    window.close_project()
    with Project.open(path) as project:  # and nothing half-written on disk either
        assert project.waves() == [] and project.history() == []


def test_an_unreadable_file_is_explained_in_the_dialog(window, empty_project, tmp_path):
    broken = tmp_path / "results.xlsx"
    broken.write_bytes(b"%PDF-1.4\n" + bytes(range(256)) * 8)  # a PDF saved as .xlsx
    window.request_import([broken])
    dialog = window.import_dialog
    text = dialog.error_text()
    assert text, "no error shown"
    assert "results.xlsx" in text
    assert "Traceback" not in text and 'File "' not in text
    assert not dialog.details_button.isVisible()  # a known problem: no technical details
    assert not dialog.import_button.isEnabled()
    dialog.reject()
    assert empty_project.waves() == []


def test_duplicate_wave_label_is_refused_in_plain_words(window, empty_project, tmp_path):
    source = write_xlsx(tmp_path / "survey_2026.xlsx", rows=10)
    window.request_import([source])
    window.import_dialog.import_button.click()
    window.request_import([source])
    dialog = window.import_dialog
    dialog.wave_edit.setText("2026")
    dialog.import_button.click()
    assert "2026" in dialog.error_text()
    assert dialog.isVisible()
    assert len(empty_project.waves()) == 1
    dialog.reject()


def test_several_dropped_files_open_one_dialog_after_another(window, empty_project, tmp_path):
    first = write_xlsx(tmp_path / "survey_2026.xlsx", rows=8)
    second = write_xlsx(tmp_path / "survey_2027.xlsx", rows=9)
    _drop(window, [first, second])
    assert window.import_dialog.path == first
    window.import_dialog.import_button.click()
    assert window.import_dialog.path == second
    assert window.import_dialog.wave_edit.text() == "2027"
    window.import_dialog.import_button.click()
    assert [(w.label, w.n_rows) for w in empty_project.waves()] == [("2026", 8), ("2027", 9)]


def test_start_page_demo_button_opens_the_demo(window, qtbot):
    qtbot.mouseClick(window.start_page.demo_button, Qt.MouseButton.LeftButton)
    project = window.project
    assert project is not None
    assert [i.name for i in project.instruments()] == ["Participant survey"]
    assert [w.label for w in project.waves()] == ["2026", "2027"]
    assert "demo" in project.path.name
    # Built once in the user's data folder; the second time it is simply opened.
    window.close_project()
    qtbot.mouseClick(window.start_page.demo_button, Qt.MouseButton.LeftButton)
    assert [w.label for w in window.project.waves()] == ["2026", "2027"]


def test_closing_the_project_during_an_import_stops_it_cleanly(qtbot, tmp_path, monkeypatch):
    window = MainWindow(synchronous=False)
    qtbot.addWidget(window)
    window.show()
    path = tmp_path / "evaluation.plaincount"
    assert window.new_project(path)
    source = write_xlsx(tmp_path / "survey_2026.xlsx", rows=300)
    window.request_import([source])
    dialog = window.import_dialog
    qtbot.waitUntil(lambda: dialog.import_button.isEnabled(), timeout=10000)
    reached = threading.Event()
    original = Progress.update

    def slow_update(self, done, total, label=""):
        if threading.current_thread() is not threading.main_thread():
            reached.set()
            threading.Event().wait(0.05)
        return original(self, done, total, label)

    monkeypatch.setattr(Progress, "update", slow_update)
    dialog.start_import()
    assert reached.wait(10)
    window.close_project()  # Ctrl+W while the import runs
    assert window.import_dialog is None and window.project is None
    with Project.open(path) as project:
        assert project.waves() == []


def test_instrument_view_lists_a_wave_imported_while_it_is_shown(window, empty_project, tmp_path):
    from PySide6.QtWidgets import QPushButton

    from core.importing import import_file

    window.request_import([write_xlsx(tmp_path / "survey_2026.xlsx", rows=5)])
    window.import_dialog.import_button.click()
    inst = empty_project.instruments()[0]
    assert window.show_node(NodeType.INSTRUMENT, instrument_id=inst.id)
    view = window.view
    # Another part of the program (here the core directly) adds a wave while the view is shown.
    import_file(
        empty_project,
        write_xlsx(tmp_path / "survey_2027.xlsx", rows=6),
        instrument=inst.name,
        wave="2027",
    )
    assert window.view is view  # the same view, brought up to date
    texts = [b.text() for b in view.findChildren(QPushButton) if b.text().startswith("Wave")]
    assert texts == [
        "Wave 2026 — 5 respondents from survey_2026.xlsx",
        "Wave 2027 — 6 respondents from survey_2027.xlsx",
    ]
