"""The question list beside a result: which rows can be chosen, choosing one, searching.

The tables view and the waves view both list questions in a ``QTreeWidget`` whose rows
carry the question (or group) name in :data:`NAME_ROLE`; a row without a name is listed for
reading only (a group heading, an option of a ranking). Both views choose, enumerate and
search that list the same way, so the walking lives here once.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLineEdit, QTreeWidget, QTreeWidgetItem

#: The item data role that holds a row's question or group name ("" or None: not selectable).
NAME_ROLE = Qt.ItemDataRole.UserRole


def search_box(object_name: str, hint: str) -> QLineEdit:
    """The search box above a question list (filtered as the evaluator types)."""
    edit = QLineEdit()
    edit.setObjectName(object_name)
    edit.setPlaceholderText(hint)
    edit.setClearButtonEnabled(True)
    return edit


def question_tree(object_name: str) -> QTreeWidget:
    """A one-column question list; long wordings are cut at the right, the name stays."""
    tree = QTreeWidget()
    tree.setObjectName(object_name)
    tree.setHeaderHidden(True)
    tree.setColumnCount(1)
    tree.setUniformRowHeights(True)
    tree.setTextElideMode(Qt.TextElideMode.ElideRight)
    return tree


def named_items(tree: QTreeWidget) -> list[QTreeWidgetItem]:
    """The rows that name a question or group, in list order (tops before their children)."""
    out = []
    for i in range(tree.topLevelItemCount()):
        top = tree.topLevelItem(i)
        if top.data(0, NAME_ROLE):
            out.append(top)
        for j in range(top.childCount()):
            child = top.child(j)
            if child.data(0, NAME_ROLE):
                out.append(child)
    return out


def select_named(tree: QTreeWidget, name: str) -> bool:
    """Make the row named ``name`` current (False if no such row is listed)."""
    for item in named_items(tree):
        if item.data(0, NAME_ROLE) == name:
            tree.setCurrentItem(item)
            return True
    return False


def filter_tree(tree: QTreeWidget, text: str) -> list[tuple[QTreeWidgetItem, bool]]:
    """Hide the rows that do not hold every word of ``text`` in their text or tooltip.

    A child row also matches on its parent's words, so "satisfaction" finds every item of a
    satisfaction battery; a parent stays shown while any child matches. Returns each top row
    with whether any of its children matched, so the caller can expand the rows its way.
    """
    words = text.lower().split()
    tops = []
    for i in range(tree.topLevelItemCount()):
        top = tree.topLevelItem(i)
        own = f"{top.text(0)} {top.toolTip(0)}".lower()
        any_child = False
        for j in range(top.childCount()):
            child = top.child(j)
            child_text = f"{child.text(0)} {child.toolTip(0)}".lower()
            hit = all(w in child_text or w in own for w in words)
            child.setHidden(not hit)
            any_child = any_child or hit
        top.setHidden(bool(words) and not (all(w in own for w in words) or any_child))
        tops.append((top, any_child))
    return tops
