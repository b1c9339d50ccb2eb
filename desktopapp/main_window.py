"""The main window: start page, or the project tree beside the view of the selected node."""

from __future__ import annotations

import importlib
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QByteArray, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QCloseEvent, QDragEnterEvent, QDropEvent, QKeySequence
from PySide6.QtWidgets import (
    QFileDialog,
    QMainWindow,
    QMenu,
    QSplitter,
    QStackedWidget,
    QVBoxLayout,
    QWidget,
)

from desktopapp import APP_NAME, app_settings
from desktopapp.errors import show_error
from desktopapp.icons import app_icon
from desktopapp.project_tree import NodeType, ProjectTreeWidget, TreeNode
from desktopapp.start_page import RecentProjects, StartPageWidget
from desktopapp.undo import UndoController
from desktopapp.workers import BackgroundRunner

if TYPE_CHECKING:
    from core.project import Changes, Project
    from desktopapp.import_dialog import ImportDialog

PROJECT_SUFFIX = ".plaincount"
DATA_SUFFIXES = (".xlsx", ".xlsm", ".xlsb", ".xls", ".ods", ".csv", ".tsv", ".tab", ".txt")
PROJECT_FILTER = "Plaincount project (*.plaincount)"
DATA_FILTER = "Survey data (*.xlsx *.xlsm *.xlsb *.xls *.ods *.csv *.tsv *.tab *.txt)"
DEMO_FILE = "harbor_point_demo.plaincount"


class ViewRegistry:
    """Maps project-tree node types to view factories (see ``desktopapp.views``)."""

    def __init__(self) -> None:
        self._factories: dict[str, Callable[..., QWidget]] = {}

    def add(self, node_type: str, factory: Callable[..., QWidget]) -> None:
        self._factories[node_type] = factory

    def __contains__(self, node_type: object) -> bool:
        return node_type in self._factories

    def factory(self, node_type: str) -> Callable[..., QWidget] | None:
        return self._factories.get(node_type)

    def node_types(self) -> list[str]:
        return list(self._factories)

    @classmethod
    def default(cls) -> ViewRegistry:
        """The registry holding every view module listed in ``desktopapp.views``."""
        from desktopapp.views import VIEW_MODULES

        registry = cls()
        for name in VIEW_MODULES:
            importlib.import_module(name).register(registry)
        return registry


def demo_folder() -> Path:
    """Where ``--demo`` and the start page keep the demo project (the user's data folder)."""
    from platformdirs import user_data_dir

    return Path(user_data_dir(APP_NAME, appauthor=False))


class MainWindow(QMainWindow):
    """One window, at most one open project.

    Parameters
    ----------
    synchronous
        Run background work on the calling thread (tests and screenshots).
    registry
        Views to use; the default loads every module in ``desktopapp.views``.
    """

    project_changed = Signal(object)  # core.project.Changes, always delivered on the GUI thread
    project_opened = Signal(object)
    project_closed = Signal()

    def __init__(self, synchronous: bool = False, registry: ViewRegistry | None = None) -> None:
        super().__init__()
        self.setObjectName("mainWindow")
        self.setWindowIcon(app_icon())
        self.setAcceptDrops(True)
        self.project: Project | None = None
        self.settings = app_settings()
        self.recent = RecentProjects(self.settings)
        self.runner = BackgroundRunner(self, synchronous=synchronous)
        self.undo = UndoController(self.runner, self)
        self._registry = registry
        self.view: QWidget | None = None
        self.import_dialog: ImportDialog | None = None
        self._pending_imports: list[tuple[Path, int | None]] = []

        self.start_page = StartPageWidget(self.recent)
        self.tree = ProjectTreeWidget()
        self._view_host = QWidget()
        self._view_host.setObjectName("viewHost")
        host_layout = QVBoxLayout(self._view_host)
        host_layout.setContentsMargins(0, 0, 0, 0)
        self.splitter = QSplitter(Qt.Orientation.Horizontal)
        self.splitter.setObjectName("mainSplitter")
        self.splitter.addWidget(self.tree)
        self.splitter.addWidget(self._view_host)
        self.splitter.setStretchFactor(0, 0)
        self.splitter.setStretchFactor(1, 1)
        self.splitter.setChildrenCollapsible(False)
        self.splitter.setSizes([270, 1010])
        self._pages = QStackedWidget()
        self._pages.addWidget(self.start_page)
        self._pages.addWidget(self.splitter)
        self.setCentralWidget(self._pages)

        # A write shows "Saving…" in the title only if it lasts long enough to notice.
        self._saving_timer = QTimer(self)
        self._saving_timer.setSingleShot(True)
        self._saving_timer.setInterval(500)
        self._create_actions()
        self._create_menus()
        self._connect_signals()
        self._restore_state()
        self._update_title()
        self._update_actions()

    # ------------------------------------------------------------------ setup
    def _create_actions(self) -> None:
        def action(
            text: str, shortcut: str | QKeySequence.StandardKey | None, name: str
        ) -> QAction:
            act = QAction(text, self)
            act.setObjectName(name)
            if shortcut is not None:
                act.setShortcut(QKeySequence(shortcut))
            return act

        self.new_action = action("New project…", "Ctrl+N", "newAction")
        self.open_action = action("Open project…", "Ctrl+O", "openAction")
        self.import_action = action("Import survey data…", "Ctrl+I", "importAction")
        self.save_copy_action = action("Save a copy…", "Ctrl+Shift+S", "saveCopyAction")
        self.close_action = action("Close project", "Ctrl+W", "closeAction")
        self.quit_action = action("Quit", "Ctrl+Q", "quitAction")
        self.quit_action.setMenuRole(QAction.MenuRole.QuitRole)
        self.demo_action = action("Open the demo project", None, "demoAction")

    def _create_menus(self) -> None:
        file_menu = self.menuBar().addMenu("&File")
        file_menu.addAction(self.new_action)
        file_menu.addAction(self.open_action)
        self.recent_menu = QMenu("Open recent", self)
        self.recent_menu.setObjectName("recentMenu")
        file_menu.addMenu(self.recent_menu)
        file_menu.addAction(self.demo_action)
        file_menu.addSeparator()
        file_menu.addAction(self.import_action)
        file_menu.addSeparator()
        file_menu.addAction(self.save_copy_action)
        file_menu.addAction(self.close_action)
        file_menu.addSeparator()
        file_menu.addAction(self.quit_action)
        edit_menu = self.menuBar().addMenu("&Edit")
        edit_menu.addAction(self.undo.undo_action)
        edit_menu.addAction(self.undo.redo_action)

    def _connect_signals(self) -> None:
        self.new_action.triggered.connect(self._on_new_action_triggered)
        self.open_action.triggered.connect(self._on_open_action_triggered)
        self.import_action.triggered.connect(self._on_import_action_triggered)
        self.save_copy_action.triggered.connect(self._on_save_copy_action_triggered)
        self.close_action.triggered.connect(self._on_close_action_triggered)
        self.quit_action.triggered.connect(self.close)
        self.demo_action.triggered.connect(self.open_demo)
        self.recent_menu.aboutToShow.connect(self._on_recent_menu_about_to_show)
        self.start_page.new_requested.connect(self._on_new_action_triggered)
        self.start_page.open_requested.connect(self._on_open_action_triggered)
        self.start_page.open_path_requested.connect(self._on_start_page_open_path_requested)
        self.start_page.demo_requested.connect(self.open_demo)
        self.tree.node_changed.connect(self._on_tree_node_changed)
        self.tree.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        self.tree.customContextMenuRequested.connect(self._on_tree_menu_requested)
        self.project_changed.connect(self._on_project_changed)
        self.runner.writing_changed.connect(self._on_runner_writing_changed)
        self._saving_timer.timeout.connect(self._update_title)

    @property
    def registry(self) -> ViewRegistry:
        if self._registry is None:
            self._registry = ViewRegistry.default()
        return self._registry

    # ------------------------------------------------------------------ projects
    def open_project(self, path: str | Path) -> bool:
        """Open a project file; on failure show why, keep what was open, return False."""
        from core.project import Project

        path = Path(path).expanduser()
        if self.project is not None and _same_file(self.project.path, path):
            return True
        if path.suffix.lower() in DATA_SUFFIXES:
            show_error(
                self,
                _plain_error(
                    f"{path.name} is survey data, not a project. Open or create a project, then "
                    "import the file into it (File ▸ Import survey data…)."
                ),
            )
            return False
        try:
            project = Project.open(path)
        except Exception as exc:  # noqa: BLE001 - every failure is shown, none crashes
            show_error(self, exc, title="Could not open the project")
            return False
        self._set_project(project)
        return True

    def new_project(self, path: str | Path) -> bool:
        from core.project import Project

        path = Path(path).expanduser()
        if path.suffix.lower() != PROJECT_SUFFIX:
            path = path.with_name(path.name + PROJECT_SUFFIX)
        try:
            project = Project.create(path)
        except Exception as exc:  # noqa: BLE001
            show_error(self, exc, title="Could not create the project")
            return False
        self._set_project(project)
        return True

    def close_project(self) -> None:
        """Close the open project (everything is already saved) and show the start page."""
        project = self.project
        if project is None:
            return
        self._pending_imports.clear()
        self.runner.cancel_all()
        self.runner.wait()
        if self.import_dialog is not None:
            self.import_dialog.done(0)  # its import, if any, has stopped above
        self._set_view(None)
        if self._on_core_changes in project.listeners:
            project.listeners.remove(self._on_core_changes)
        project.close()
        self.project = None
        self.undo.set_project(None)
        self.tree.set_project(None)
        self.start_page.refresh()
        self._pages.setCurrentWidget(self.start_page)
        self._update_title()
        self._update_actions()
        self.project_closed.emit()

    def open_demo(self) -> None:
        """Open the demo project, building it in the user's data folder the first time."""
        folder = demo_folder()
        path = folder / DEMO_FILE
        if path.exists():
            self.open_project(path)
            return

        def build(progress: Any) -> Path:
            from core.errors import PlaincountError

            try:
                from core.demo import build_demo_project
            except ImportError:
                raise PlaincountError(
                    "The demo project is not part of this installation of Plaincount."
                ) from None
            folder.mkdir(parents=True, exist_ok=True)
            return Path(build_demo_project(folder, progress=progress))

        self.runner.run(
            build,
            on_success=self.open_project,
            label="Building the demo project…",
        )

    def _set_project(self, project: Project) -> None:
        if self.project is not None:
            self.close_project()
        self.project = project
        project.listeners.append(self._on_core_changes)
        self.recent.add(project.path)
        self.undo.set_project(project)
        # Undo of outline and rule steps needs their handlers, registered on import.
        importlib.import_module("core.outline")
        importlib.import_module("core.rules")
        registry = self.registry
        self.tree.set_filter(lambda node_type: node_type in registry)
        self._pages.setCurrentWidget(self.splitter)
        self.tree.set_project(project)
        self.tree.setFocus()
        self._update_title()
        self._update_actions()
        self.project_opened.emit(project)

    def _on_core_changes(self, changes: Changes) -> None:
        # Called on whatever thread committed the change; the signal hops to the GUI thread.
        self.project_changed.emit(changes)

    def _on_project_changed(self, changes: Changes) -> None:
        project = self.project
        if project is None or project.closed:
            return
        if changes.structure:
            self.tree.set_project(project)  # keeps the selection; re-creates the view if gone
        self.undo.refresh()
        view = self.view
        if view is not None and hasattr(view, "project_changed"):
            view.project_changed(changes)

    # ------------------------------------------------------------------ views
    def show_node(
        self, node_type: str, instrument_id: int | None = None, wave_id: int | None = None
    ) -> bool:
        """Select a tree node; True if it exists and is shown."""
        node = self.tree.find(node_type, wave_id=wave_id, instrument_id=instrument_id)
        if node is None:
            return False
        return self.tree.select_node(node)

    def _on_tree_node_changed(self, node: TreeNode | None) -> None:
        if node is None or self.project is None:
            self._set_view(None)
            return
        current = getattr(self.view, "node", None)
        if current is not None and current == node:
            return
        self._set_view(node)

    def _on_tree_menu_requested(self, pos: Any) -> None:
        item = self.tree.itemAt(pos)
        menu = self.tree_menu(item.data(0, Qt.ItemDataRole.UserRole) if item else None)
        if menu is not None:
            menu.popup(self.tree.viewport().mapToGlobal(pos))

    def tree_menu(self, node: TreeNode | None) -> QMenu | None:
        """The context menu of a tree node (None: it has none)."""
        if node is None or node.type != NodeType.WAVE or self.project is None:
            return None
        menu = QMenu(self)
        menu.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
        act = menu.addAction("Sampling and response rates…")
        act.setObjectName("samplingAction")
        act.triggered.connect(lambda _c=False, w=node.wave_id: self.open_sampling_dialog(w))
        return menu

    def open_sampling_dialog(self, wave_id: int, tab: int = 0) -> QWidget | None:
        """The wave's population/sample setting, sample size and response rates."""
        if self.project is None:
            return None
        from desktopapp.sampling_dialog import open_sampling_dialog

        return open_sampling_dialog(self, self.project, self.runner, wave_id, tab)

    def _set_view(self, node: TreeNode | None) -> None:
        old = self.view
        if old is not None:
            if hasattr(old, "shutdown"):
                old.shutdown()
            self._view_host.layout().removeWidget(old)
            old.hide()
            old.deleteLater()
            self.view = None
        if node is None or self.project is None:
            return
        factory = self.registry.factory(node.type)
        if factory is None:
            return
        try:
            view = factory(self.view_context(), node)
        except Exception as exc:  # noqa: BLE001 - a broken view must not take the window
            show_error(self, exc)
            return
        view.node = node
        self._view_host.layout().addWidget(view)
        self.view = view

    def view_context(self) -> Any:
        from desktopapp.views import ViewContext

        assert self.project is not None
        return ViewContext(
            project=self.project,
            runner=self.runner,
            undo=self.undo,
            import_requested=self.request_import,
            select_requested=self.show_node,
            settings=self.settings,
            show_message=lambda text: self.statusBar().showMessage(text, 8000),
        )

    # ------------------------------------------------------------------ import
    def request_import(
        self, paths: list[Path] | None = None, instrument_id: int | None = None
    ) -> None:
        """Import survey files, one dialog per file. Asks for files when ``paths`` is None."""
        if self.project is None and not self._ask_new_project_for_import():
            return
        if paths is None:
            picked = self._ask_data_paths()
            if not picked:
                return
            paths = picked
        if instrument_id is None:
            node = self.tree.current_node()
            instrument_id = node.instrument_id if node is not None else None
        self._pending_imports.extend((Path(p), instrument_id) for p in paths)
        if self.import_dialog is None:
            self._open_next_import()

    def _open_next_import(self) -> None:
        from desktopapp.import_dialog import ImportDialog

        if not self._pending_imports or self.project is None:
            self._pending_imports.clear()
            return
        path, instrument_id = self._pending_imports.pop(0)
        remaining = len(self._pending_imports)
        dialog = ImportDialog(
            self.project,
            self.runner,
            path,
            instrument_id=instrument_id,
            parent=self,
            remaining=remaining,
        )
        self.import_dialog = dialog
        dialog.finished.connect(self._on_import_dialog_finished)
        dialog.open()

    def _on_import_dialog_finished(self, _code: int) -> None:
        dialog = self.import_dialog
        self.import_dialog = None
        if dialog is not None:
            result = dialog.result_wave
            dialog.deleteLater()
            if result is not None:
                self.show_node(NodeType.WAVE, wave_id=result.id)
        self._open_next_import()

    def _ask_new_project_for_import(self) -> bool:
        path = self._ask_save_path(
            "Create a project for this data", PROJECT_FILTER, "Untitled evaluation.plaincount"
        )
        return bool(path) and self.new_project(path)

    # ------------------------------------------------------------------ drag and drop
    def dragEnterEvent(self, event: QDragEnterEvent) -> None:  # noqa: N802 - Qt override
        if _dropped_paths(event.mimeData()):
            event.acceptProposedAction()
        else:
            event.ignore()

    def dragMoveEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        if _dropped_paths(event.mimeData()):
            event.acceptProposedAction()
        else:
            event.ignore()

    def dropEvent(self, event: QDropEvent) -> None:  # noqa: N802 - Qt override
        paths = _dropped_paths(event.mimeData())
        if not paths:
            event.ignore()
            return
        event.acceptProposedAction()
        projects = [p for p in paths if p.suffix.lower() == PROJECT_SUFFIX]
        data = [p for p in paths if p.suffix.lower() in DATA_SUFFIXES]
        if projects:
            self.open_project(projects[0])
        if data:
            self.request_import(data)

    # ------------------------------------------------------------------ file dialogs
    # Kept as small methods so tests can replace them; the dialogs are the platform's own.
    def _ask_open_path(self) -> str:
        path, _ = QFileDialog.getOpenFileName(
            self, "Open a project", self._last_folder(), PROJECT_FILTER
        )
        return path

    def _ask_save_path(self, title: str, file_filter: str, suggested: str) -> str:
        start = str(Path(self._last_folder()) / suggested)
        path, _ = QFileDialog.getSaveFileName(self, title, start, file_filter)
        return path

    def _ask_data_paths(self) -> list[Path]:
        paths, _ = QFileDialog.getOpenFileNames(
            self, "Import survey data", self._last_folder(), DATA_FILTER
        )
        return [Path(p) for p in paths]

    def _last_folder(self) -> str:
        if self.project is not None:
            return str(self.project.path.parent)
        recent = self.recent.entries()
        return str(Path(recent[0]["path"]).parent) if recent else str(Path.home())

    # ------------------------------------------------------------------ menu slots
    def _on_new_action_triggered(self) -> None:
        path = self._ask_save_path("New project", PROJECT_FILTER, "Untitled evaluation.plaincount")
        if path:
            self.new_project(path)

    def _on_open_action_triggered(self) -> None:
        path = self._ask_open_path()
        if path:
            self.open_project(path)

    def _on_start_page_open_path_requested(self, path: str) -> None:
        self.open_project(path)

    def _on_import_action_triggered(self) -> None:
        self.request_import(None)

    def _on_save_copy_action_triggered(self) -> None:
        project = self.project
        if project is None:
            return
        suggested = f"{project.path.stem} copy.plaincount"
        path = self._ask_save_path("Save a copy of the project", PROJECT_FILTER, suggested)
        if not path:
            return
        target = Path(path)
        if target.suffix.lower() != PROJECT_SUFFIX:
            target = target.with_name(target.name + PROJECT_SUFFIX)
        self.runner.run(
            lambda _p: project.save_copy(target),
            on_success=lambda saved: self.statusBar().showMessage(
                f"Saved a copy as {Path(saved).name}. You are still working in "
                f"{project.path.name}.",
                8000,
            ),
            writes=True,
            label="Saving a copy…",
        )

    def _on_close_action_triggered(self) -> None:
        self.close_project()

    def _on_recent_menu_about_to_show(self) -> None:
        self.recent_menu.clear()
        entries = self.recent.entries()
        if not entries:
            empty = self.recent_menu.addAction("No recent projects")
            empty.setEnabled(False)
            return
        for entry in entries:
            act = self.recent_menu.addAction(f"{Path(entry['path']).stem} — {entry['path']}")
            act.triggered.connect(lambda _c=False, p=entry["path"]: self.open_project(p))
        self.recent_menu.addSeparator()
        clear = self.recent_menu.addAction("Clear this list")
        clear.triggered.connect(self._on_recent_clear_triggered)

    def _on_recent_clear_triggered(self) -> None:
        self.recent.clear()
        self.start_page.refresh()

    # ------------------------------------------------------------------ window state
    def _on_runner_writing_changed(self, writing: bool) -> None:
        if writing:
            self._saving_timer.start()
        else:
            self._saving_timer.stop()
            self._update_title()

    def _update_title(self) -> None:
        if self.project is None or self.project.closed:
            self.setWindowTitle(APP_NAME)
            return
        state = "Saving…" if self.runner.writing else "All changes saved"
        self.setWindowTitle(f"{self.project.name} — {state} — {APP_NAME}")

    def _update_actions(self) -> None:
        has_project = self.project is not None
        for act in (self.import_action, self.save_copy_action, self.close_action):
            act.setEnabled(has_project)

    def _restore_state(self) -> None:
        geometry = self.settings.value("window/geometry")
        if isinstance(geometry, QByteArray) and not geometry.isEmpty():
            self.restoreGeometry(geometry)
        else:
            self.resize(1280, 800)
        splitter = self.settings.value("window/splitter")
        if isinstance(splitter, QByteArray) and not splitter.isEmpty():
            self.splitter.restoreState(splitter)

    def save_state(self) -> None:
        self.settings.setValue("window/geometry", self.saveGeometry())
        self.settings.setValue("window/splitter", self.splitter.saveState())
        self.settings.sync()

    def closeEvent(self, event: QCloseEvent) -> None:  # noqa: N802 - Qt override
        self.save_state()
        self.close_project()
        event.accept()


def _dropped_paths(mime: Any) -> list[Path]:
    if mime is None or not mime.hasUrls():
        return []
    out = []
    for url in mime.urls():
        if not url.isLocalFile():
            continue
        path = Path(url.toLocalFile())
        if path.suffix.lower() in (*DATA_SUFFIXES, PROJECT_SUFFIX):
            out.append(path)
    return out


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve()
    except OSError:
        return False


def _plain_error(text: str) -> Exception:
    from core.errors import PlaincountError

    return PlaincountError(text)
