"""``python -m desktopapp.screenshots OUTDIR``: a PNG of every view and dialog, on the demo.

Runs offscreen, in a temporary settings and data folder, so it never touches the user's own.
Every node type with a registered view is captured, so views added later appear here by
themselves; a view can add its dialogs through ``screenshot_dialogs()``.
"""

from __future__ import annotations

import os
import shutil
import sys
import tempfile
from pathlib import Path

WIDTH, HEIGHT = 1360, 860
# A variable worth showing in the codebook view, when the demo has it.
CODEBOOK_EXAMPLE = "agree_3"


def capture(out_dir: Path) -> list[Path]:
    """Build the demo in a temporary folder, open it and save the PNGs; returns their paths."""
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtCore import QSettings
    from PySide6.QtWidgets import QApplication

    out_dir.mkdir(parents=True, exist_ok=True)
    # A fixed folder name, so the paths shown in the pictures do not change from run to run.
    work = Path(tempfile.gettempdir()) / "plaincount-screenshots"
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    for fmt in (QSettings.Format.NativeFormat, QSettings.Format.IniFormat):
        QSettings.setPath(fmt, QSettings.Scope.UserScope, str(work / "settings"))
    app = QApplication.instance() or QApplication([sys.argv[0]])
    app.setApplicationName("Plaincount")
    app.setOrganizationName("Plaincount")

    from core.demo import build_demo_project
    from desktopapp.main_window import MainWindow
    from desktopapp.project_tree import NodeType

    demo = Path(build_demo_project(work / "demo"))
    saved: list[Path] = []

    def save(widget, name: str) -> None:
        app.processEvents()
        path = out_dir / f"{name}.png"  # named, not numbered: new views add files only
        widget.grab().save(str(path))
        saved.append(path)

    window = MainWindow(synchronous=True)
    window.resize(WIDTH, HEIGHT)
    window.recent.add(demo)
    window.start_page.refresh()
    window.show()
    save(window, "start-page")

    window.open_project(demo)
    window.splitter.setSizes([270, WIDTH - 270])
    seen: set[str] = set()
    for node in list(window.tree.nodes()):
        if node.type in seen:
            continue
        # Show the latest wave's children: the one an evaluator works on.
        if node.wave_id is not None:
            latest = [n for n in window.tree.nodes() if n.type == node.type][-1]
            node = latest
        seen.add(node.type)
        window.tree.select_node(node)
        view = window.view
        if node.type == NodeType.CODEBOOK and hasattr(view, "select_variable"):
            view.select_variable(CODEBOOK_EXAMPLE)
        # A view may choose what is worth showing, and offer further states of itself.
        getattr(view, "prepare_screenshot", lambda: None)()
        save(window, f"view-{node.type}")
        for name, show_state in getattr(view, "screenshot_states", lambda: [])():
            show_state()
            save(window, f"view-{name}")
        for name, dialog in getattr(view, "screenshot_dialogs", lambda: [])():
            dialog.show()
            save(dialog, f"dialog-{name}")
            dialog.close()

    from desktopapp.import_dialog import ImportDialog

    source = work / "demo" / "participant_survey_2027.xlsx"
    dialog = ImportDialog(window.project, window.runner, source, parent=window)
    dialog.wave_edit.setText("2027 re-run")
    dialog.resize(1180, 800)
    dialog.show()
    save(dialog, "dialog-import")
    dialog.close()

    broken = work / "not really a workbook.xlsx"
    broken.write_bytes(b"These are meeting notes, saved with the wrong name.\n" * 20)
    dialog = ImportDialog(window.project, window.runner, broken, parent=window)
    dialog.resize(900, 520)
    dialog.show()
    save(dialog, "dialog-import-error")
    dialog.close()

    window.close()
    return saved


def main(argv: list[str] | None = None) -> int:
    args = sys.argv[1:] if argv is None else argv
    if len(args) != 1:
        print("usage: python -m desktopapp.screenshots OUTDIR", file=sys.stderr)
        return 2
    for path in capture(Path(args[0])):
        print(path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
