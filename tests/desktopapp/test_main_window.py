"""The main window: start page, opening projects, the tree, title, menus and remembered state."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QMimeData, QPointF, Qt, QUrl
from PySide6.QtGui import QDropEvent, QKeySequence
from PySide6.QtWidgets import QLabel, QMessageBox

from core.project import Project
from desktopapp.app import build_parser, build_window
from desktopapp.main_window import MainWindow, ViewRegistry
from desktopapp.project_tree import NodeType


def _message_boxes(window):
    return [b for b in window.findChildren(QMessageBox) if b.isVisible()]


def test_open_from_argv_shows_the_project_and_saved_title(qtbot, small_project_path):
    window = build_window(build_parser().parse_args([str(small_project_path)]), synchronous=True)
    qtbot.addWidget(window)
    assert window.project is not None
    assert window.project.path == small_project_path
    assert window.windowTitle() == "Small test project — All changes saved — Plaincount"
    types = [n.type for n in window.tree.nodes()]
    # Only nodes with a registered view appear; the first view is the project overview.
    assert types[:4] == ["project", "instrument", "codebook", "wave"]
    assert type(window.view).__name__ == "ProjectView"
    window.close_project()


def test_start_page_lists_recent_projects_and_opens_one(window, small_project_path):
    window.recent.add(small_project_path)
    window.start_page.refresh()
    recent = window.start_page.recent_list
    assert recent.count() == 1
    item = recent.item(0)
    assert Path(item.data(Qt.ItemDataRole.UserRole)) == small_project_path.resolve()
    recent.itemActivated.emit(item)
    assert window.project is not None and window.project.name == "Small test project"
    window.close_project()
    assert window.project is None
    assert window.windowTitle() == "Plaincount"
    assert window.centralWidget().currentWidget() is window.start_page


def test_project_open_elsewhere_gives_a_clear_message(window, small_project_path):
    other = Project.open(small_project_path)  # another program holds the file
    try:
        assert window.open_project(small_project_path) is False
        boxes = _message_boxes(window)
        assert len(boxes) == 1
        assert "open in another Plaincount window or program" in boxes[0].text()
        assert "Traceback" not in boxes[0].text()
        assert window.project is None
    finally:
        other.close()
    # Nothing was damaged: the file opens normally afterwards.
    assert window.open_project(small_project_path)
    assert [w.label for w in window.project.waves()] == ["2026"]


def test_data_file_opened_as_project_is_explained(window, tmp_path):
    data = tmp_path / "survey.csv"
    data.write_text("a,b\n1,2\n")
    assert window.open_project(data) is False
    assert "is survey data, not a project" in _message_boxes(window)[0].text()


def test_unregistered_node_types_are_not_shown(qtbot, small_project_path):
    registry = ViewRegistry()
    registry.add(NodeType.PROJECT, lambda ctx, node: QLabel("project"))
    registry.add(NodeType.INSTRUMENT, lambda ctx, node: QLabel("instrument"))
    registry.add(NodeType.WAVE, lambda ctx, node: QLabel("wave"))
    registry.add(NodeType.LEDGER, lambda ctx, node: QLabel("ledger"))
    window = MainWindow(synchronous=True, registry=registry)
    qtbot.addWidget(window)
    window.open_project(small_project_path)
    types = [n.type for n in window.tree.nodes()]
    assert types == ["project", "instrument", "wave", "ledger"]  # no codebook, flags, …
    assert window.show_node(NodeType.LEDGER)
    assert window.view.text() == "ledger"
    assert not window.show_node(NodeType.CODEBOOK)
    window.close_project()


def test_standard_shortcuts(window):
    assert window.new_action.shortcut() == QKeySequence("Ctrl+N")
    assert window.open_action.shortcut() == QKeySequence("Ctrl+O")
    assert window.close_action.shortcut() == QKeySequence("Ctrl+W")
    assert window.quit_action.shortcut() == QKeySequence("Ctrl+Q")
    assert window.undo.undo_action.shortcut() == QKeySequence("Ctrl+Z")
    assert QKeySequence("Ctrl+Shift+Z") in window.undo.redo_action.shortcuts()
    menus = [a.text() for a in window.menuBar().actions()]
    assert menus == ["&File", "&Edit"]


def test_window_size_and_splitter_are_remembered(qtbot, small_project_path):
    first = MainWindow(synchronous=True)
    qtbot.addWidget(first)
    first.show()
    first.resize(720, 520)  # inside the 800 x 600 offscreen screen
    first.open_project(small_project_path)
    first.splitter.setSizes([333, 667])
    sizes = first.splitter.sizes()
    size = (first.width(), first.height())
    first.close()
    second = MainWindow(synchronous=True)
    qtbot.addWidget(second)
    second.show()
    assert second.width() == size[0]
    # The offscreen platform's restoreGeometry differs by a few pixels of frame in height.
    assert abs(second.height() - size[1]) <= 10
    assert size != (1280, 800)  # not merely the default size
    assert second.splitter.sizes()[0] == sizes[0]  # the tree keeps its width


def test_save_a_copy_writes_a_project_that_opens(window, small_project_path, tmp_path, monkeypatch):
    window.open_project(small_project_path)
    target = tmp_path / "kept version"
    monkeypatch.setattr(window, "_ask_save_path", lambda *a: str(target))
    window.save_copy_action.trigger()
    saved = target.with_name("kept version.plaincount")
    assert saved.exists()
    with Project.open(saved) as copy:
        assert [w.n_rows for w in copy.waves()] == [12]
    assert window.project.path == small_project_path  # still working in the original


def test_new_project_from_the_menu(window, tmp_path, monkeypatch):
    monkeypatch.setattr(window, "_ask_save_path", lambda *a: str(tmp_path / "Evaluation 2026"))
    window.new_action.trigger()
    assert window.project is not None
    assert window.project.path == tmp_path / "Evaluation 2026.plaincount"
    types = [n.type for n in window.tree.nodes()]
    # An empty project: no instrument or wave yet (project-level nodes such as the report
    # outline appear when their view is registered).
    assert types[0] == "project"
    assert not {"instrument", "wave", "codebook"} & set(types)


def test_dropping_a_project_file_opens_it(window, small_project_path):
    mime = QMimeData()
    mime.setUrls([QUrl.fromLocalFile(str(small_project_path))])
    event = QDropEvent(
        QPointF(50, 50),
        Qt.DropAction.CopyAction,
        mime,
        Qt.MouseButton.LeftButton,
        Qt.KeyboardModifier.NoModifier,
    )
    window.dropEvent(event)
    assert window.project is not None and window.project.path == small_project_path


def test_demo_from_argv_builds_in_the_user_data_folder(qtbot):
    import os

    window = build_window(build_parser().parse_args(["--demo"]), synchronous=True)
    qtbot.addWidget(window)
    # platformdirs' user_data_dir follows XDG_DATA_HOME, which tests point at a temp folder.
    expected = Path(os.environ["XDG_DATA_HOME"]) / "Plaincount" / "harbor_point_demo.plaincount"
    assert window.project is not None and window.project.path == expected
    assert [w.label for w in window.project.waves()] == ["2026", "2027"]
    window.close_project()


def test_title_says_saving_only_while_a_long_write_runs(qtbot, small_project_path):
    import threading

    window = MainWindow(synchronous=False)
    qtbot.addWidget(window)
    window.open_project(small_project_path)
    release = threading.Event()
    job = window.runner.run(lambda p: release.wait(5), writes=True)
    qtbot.waitUntil(lambda: "Saving…" in window.windowTitle(), timeout=3000)
    release.set()
    qtbot.waitUntil(lambda: not job.running, timeout=3000)
    assert window.windowTitle() == "Small test project — All changes saved — Plaincount"
    window.close_project()


def test_a_recent_project_can_be_taken_off_the_list(window, small_project_path):
    window.recent.add(small_project_path)
    window.start_page.refresh()
    window.start_page.forget(str(small_project_path.resolve()))
    assert window.start_page.recent_list.count() == 0
    assert window.start_page.empty_label.isVisibleTo(window.start_page)
    assert small_project_path.exists()  # only the list entry goes
