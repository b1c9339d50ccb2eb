"""The views shown on the right of the main window, one module per view.

How a view joins the window
---------------------------
Each module listed in :data:`VIEW_MODULES` defines ``register(registry)`` and calls
``registry.add(node_type, factory)`` for the project-tree node types it shows (the names are
in :class:`desktopapp.project_tree.NodeType`: project, instrument, wave, codebook, flags,
data, ledger, missing, tables, outline, compare). A node type nobody registered is left out
of the tree.

``factory(context, node)`` returns a ``QWidget``. ``context`` is a :class:`ViewContext`;
``node`` is the selected :class:`desktopapp.project_tree.TreeNode` (its ``instrument_id``
and ``wave_id`` say which part of the project to show). The main window creates a fresh
view each time the selection moves and deletes the old one.

Optional methods a view may define, which the window calls on the GUI thread:

``project_changed(changes)``
    after every committed change (a :class:`core.project.Changes`); refresh what it names.
``shutdown()``
    before the view is deleted or the project closes (cancel work, stop timers).
``screenshot_dialogs()``
    ``[(name, QDialog), ...]`` to be captured by ``python -m desktopapp.screenshots``.

Writes to the project go through ``context.runner.run(fn, writes=True, ...)`` so they run on
the single writer thread; reads that take time use ``context.runner.run(fn, key=...)``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from core.project import Project
    from desktopapp.project_tree import TreeNode
    from desktopapp.undo import UndoController
    from desktopapp.workers import BackgroundRunner

# Add a line here to bring a new view into the window.
VIEW_MODULES = [
    "desktopapp.views.project_view",
    "desktopapp.views.import_view",
    "desktopapp.views.codebook_view",
    "desktopapp.views.cleaning_view",
    "desktopapp.views.data_grid_view",
    "desktopapp.views.ledger_view",
    "desktopapp.views.missing_view",
    "desktopapp.views.tabulation_view",
    "desktopapp.views.export_view",
    "desktopapp.views.waves_view",
]


@dataclass
class ViewContext:
    """What a view may use: the open project, the background runner and window requests."""

    project: Project
    runner: BackgroundRunner
    undo: UndoController
    # Open the import dialog for these files (None: ask for them), into this instrument.
    import_requested: Callable[[list[Path] | None, int | None], None]
    # Move the tree selection to another node: (node type, instrument id, wave id).
    select_requested: Callable[[str, int | None, int | None], None]
    settings: Any = None
    # Show a short message in the window's status bar for a few seconds.
    show_message: Callable[[str], None] | None = None


ViewFactory = Callable[["ViewContext", "TreeNode"], Any]


def title_label(text: str) -> Any:
    """A view's heading: larger, bold."""
    from PySide6.QtGui import QFont
    from PySide6.QtWidgets import QLabel

    label = QLabel(text)
    font = QFont(label.font())
    font.setPointSizeF(font.pointSizeF() * 1.45)
    font.setBold(True)
    label.setFont(font)
    label.setTextInteractionFlags(label.textInteractionFlags())
    return label


def section_label(text: str) -> Any:
    """A heading inside a view."""
    from PySide6.QtGui import QFont
    from PySide6.QtWidgets import QLabel

    label = QLabel(text)
    font = QFont(label.font())
    font.setBold(True)
    font.setPointSizeF(font.pointSizeF() * 1.1)
    label.setFont(font)
    return label


def muted_label(text: str, wrap: bool = True) -> Any:
    """Secondary text: explanations, file paths, hints."""
    from PySide6.QtGui import QPalette
    from PySide6.QtWidgets import QLabel

    label = QLabel(text)
    label.setWordWrap(wrap)
    label.setForegroundRole(QPalette.ColorRole.PlaceholderText)
    return label


def bold_label(text: str) -> Any:
    """A bold caption above a table or list inside a dialog (rich text, so ``text`` is markup)."""
    from PySide6.QtWidgets import QLabel

    return QLabel(f"<b>{text}</b>")


def titled_pane(title: str, *widgets: Any, stretch: Any = None) -> Any:
    """A margin-free pane: a bold title over ``widgets``; ``stretch`` (one of them) grows."""
    from PySide6.QtWidgets import QVBoxLayout, QWidget

    pane = QWidget()
    layout = QVBoxLayout(pane)
    layout.setContentsMargins(0, 0, 0, 0)
    layout.addWidget(bold_label(title))
    for widget in widgets:
        layout.addWidget(widget, 1 if widget is stretch else 0)
    return pane


def escape_rich(text: str) -> str:
    """``text`` made safe inside a label's rich text.

    Only the three characters that open markup or entities are replaced; quotes stay as they
    are, since labels never put text inside an attribute.
    """
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
