"""A main window on the demo project, built once per test module (tables, gallery, clipboard).

Building the demo and working out its data takes a few seconds, so a module shares one
window; each test opens a fresh tables view on it (:func:`fresh_tables_view`).
"""

from __future__ import annotations

import functools
from pathlib import Path

import pandas as pd

from desktopapp.project_tree import NodeType

SOURCE_2027 = "participant_survey_2027.xlsx"


def open_demo_window(folder: Path):
    """A synchronous main window with the demo project open; settings kept in ``folder``."""
    from PySide6.QtCore import QSettings

    # Module-scoped: set before the window reads its settings, so the user's own are never
    # touched (the per-test isolation fixture runs too late for a module fixture).
    for fmt in (QSettings.Format.NativeFormat, QSettings.Format.IniFormat):
        QSettings.setPath(fmt, QSettings.Scope.UserScope, str(folder / "settings"))
    from core.demo import build_demo_project
    from desktopapp.main_window import MainWindow

    path = Path(build_demo_project(folder / "demo"))
    window = MainWindow(synchronous=True)
    window.resize(1360, 860)
    window.show()
    assert window.open_project(path)
    return window


def fresh_tables_view(window, wave_label: str = "2027"):
    """A new tables view of the demo's wave ``wave_label``."""
    from desktopapp.views.tabulation_view import TabulationView

    wave = window.project.find_wave(wave_label, "Participant survey")
    window.show_node(NodeType.PROJECT)  # move away, so the tables view is created anew
    assert window.show_node(NodeType.TABLES, wave_id=wave.id)
    view = window.view
    assert isinstance(view, TabulationView)
    return view


def source_frame(window) -> pd.DataFrame:
    """The 2027 workbook read straight with pandas (first header row: names; second: text)."""
    return _read_source(str(Path(window.project.path).parent / SOURCE_2027)).copy()


@functools.cache
def _read_source(path: str) -> pd.DataFrame:
    return pd.read_excel(path, header=0, skiprows=[1], engine="openpyxl")


def shown_rows(view) -> list[list[str]]:
    """The display text of every cell in the view's table, row by row."""
    from PySide6.QtCore import Qt

    model = view.table.model()
    return [
        [
            model.data(model.index(r, c), Qt.ItemDataRole.DisplayRole)
            for c in range(model.columnCount())
        ]
        for r in range(model.rowCount())
    ]


def shown_columns(view) -> list[str]:
    from PySide6.QtCore import Qt

    model = view.table.model()
    return [
        model.headerData(c, Qt.Orientation.Horizontal, Qt.ItemDataRole.ToolTipRole)
        for c in range(model.columnCount())
    ]
