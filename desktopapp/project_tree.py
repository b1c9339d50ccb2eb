"""The project tree on the left: the project, its instruments, their codebooks and waves.

Each node has a type; the main window shows the view registered for that type. Nodes whose
type has no registered view are left out of the tree, so nothing unfinished is ever shown.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import TYPE_CHECKING

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import QAbstractItemView, QTreeWidget, QTreeWidgetItem, QWidget

if TYPE_CHECKING:
    from core.project import Project


class NodeType:
    """Tree node types. Views register against these names (see ``desktopapp.views``)."""

    PROJECT = "project"
    INSTRUMENT = "instrument"
    WAVE = "wave"
    CODEBOOK = "codebook"
    FLAGS = "flags"
    DATA = "data"
    LEDGER = "ledger"
    MISSING = "missing"
    TABLES = "tables"
    OUTLINE = "outline"
    COMPARE = "compare"  # an instrument's waves compared (only with two or more waves)


# Children of a wave, in the order an evaluator works through them.
WAVE_CHILDREN = (
    (NodeType.FLAGS, "Checks and flags"),
    (NodeType.DATA, "Data"),
    (NodeType.LEDGER, "Ledger"),
    (NodeType.MISSING, "Missing data"),
    (NodeType.TABLES, "Tables"),
)


@dataclass(frozen=True)
class TreeNode:
    """What a tree row stands for. ``key`` identifies it across rebuilds."""

    type: str
    label: str
    instrument_id: int | None = None
    wave_id: int | None = None

    @property
    def key(self) -> tuple[str, int | None, int | None]:
        return (self.type, self.instrument_id, self.wave_id)


def project_nodes(project: Project) -> list[tuple[TreeNode, TreeNode | None]]:
    """Every possible node with its parent, in display order (before filtering)."""
    root = TreeNode(NodeType.PROJECT, project.name)
    out: list[tuple[TreeNode, TreeNode | None]] = [(root, None)]
    for inst in project.instruments():
        inst_node = TreeNode(NodeType.INSTRUMENT, inst.name, inst.id)
        out.append((inst_node, root))
        out.append((TreeNode(NodeType.CODEBOOK, "Codebook", inst.id), inst_node))
        waves = project.waves(inst.id)
        for wave in waves:
            wave_node = TreeNode(NodeType.WAVE, f"Wave {wave.label}", inst.id, wave.id)
            out.append((wave_node, inst_node))
            for node_type, label in WAVE_CHILDREN:
                out.append((TreeNode(node_type, label, inst.id, wave.id), wave_node))
        if len(waves) >= 2:
            out.append((TreeNode(NodeType.COMPARE, "Compare waves", inst.id), inst_node))
    out.append((TreeNode(NodeType.OUTLINE, "Report outline"), root))
    return out


class ProjectTreeWidget(QTreeWidget):
    """Shows the project's structure; emits ``node_changed`` when the selection moves."""

    node_changed = Signal(object)  # TreeNode or None

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("projectTree")
        self.setHeaderHidden(True)
        self.setColumnCount(1)
        self.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.setUniformRowHeights(True)
        self.setMinimumWidth(180)
        self._shown: Callable[[str], bool] = lambda _t: True
        self._items: dict[tuple[str, int | None, int | None], QTreeWidgetItem] = {}
        self._connect_signals()

    def _connect_signals(self) -> None:
        self.currentItemChanged.connect(self._on_tree_current_changed)

    def set_filter(self, shown: Callable[[str], bool]) -> None:
        """Only node types for which ``shown(type)`` is true appear."""
        self._shown = shown

    def set_project(self, project: Project | None) -> None:
        """Rebuild from ``project``, keeping the selected node when it still exists."""
        current = self.current_node()
        self.blockSignals(True)
        self.clear()
        self._items.clear()
        if project is not None:
            from desktopapp.icons import node_icon

            for node, parent in project_nodes(project):
                if not self._shown(node.type):
                    continue
                if parent is not None and parent.key not in self._items:
                    continue  # its parent is not shown, so neither is it
                parent_item = self._items[parent.key] if parent is not None else None
                item = QTreeWidgetItem([node.label])
                item.setData(0, Qt.ItemDataRole.UserRole, node)
                item.setToolTip(0, node.label)
                item.setIcon(0, node_icon(node.type))
                if parent_item is None:
                    self.addTopLevelItem(item)
                else:
                    parent_item.addChild(item)
                self._items[node.key] = item
            self.expandToDepth(2)
        self.blockSignals(False)
        target = None
        if current is not None:
            target = self._items.get(current.key)
        if target is None and self.topLevelItemCount():
            target = self.topLevelItem(0)
        if target is not None:
            self.setCurrentItem(target)
        self.node_changed.emit(self.current_node())

    def current_node(self) -> TreeNode | None:
        item = self.currentItem()
        return item.data(0, Qt.ItemDataRole.UserRole) if item is not None else None

    def nodes(self) -> Iterator[TreeNode]:
        """Every shown node, top to bottom."""
        for item in self._items.values():
            yield item.data(0, Qt.ItemDataRole.UserRole)

    def select_node(self, node: TreeNode | tuple[str, int | None, int | None]) -> bool:
        key = node.key if isinstance(node, TreeNode) else node
        item = self._items.get(key)
        if item is None:
            return False
        self.setCurrentItem(item)
        return True

    def find(
        self, node_type: str, wave_id: int | None = None, instrument_id: int | None = None
    ) -> TreeNode | None:
        for node in self.nodes():
            if node.type != node_type:
                continue
            if wave_id is not None and node.wave_id != wave_id:
                continue
            if instrument_id is not None and node.instrument_id != instrument_id:
                continue
            return node
        return None

    def _on_tree_current_changed(self, current: QTreeWidgetItem | None, _previous: object) -> None:
        node = current.data(0, Qt.ItemDataRole.UserRole) if current is not None else None
        self.node_changed.emit(node)
