"""The ledger as a table: one row per decision, withdrawn ones kept and greyed."""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QFont

from core.checks.flag import CHECK_LABELS
from core.ledger import Action, LedgerEntry
from desktopapp.models.cells import MUTED_TEXT, value_text
from desktopapp.undo import local_time

ENTRY_ROLE = Qt.ItemDataRole.UserRole + 30

COLUMNS = (
    ("id", "Entry"),
    ("state", "In force"),
    ("action", "Decision"),
    ("respondent", "Respondent"),
    ("variables", "Variables"),
    ("old", "Was"),
    ("new", "Now"),
    ("reason", "Reason"),
    ("check", "Check"),
    ("created", "When"),
    ("author", "By"),
)


def entry_value(entry: LedgerEntry, which: str) -> str:
    """Old or new value of an entry in words (a reversal names its battery)."""
    value = entry.old_value if which == "old" else entry.new_value
    if entry.action is Action.SET_MISSING and which == "new":
        return "missing"
    if entry.action is Action.EXCLUDE:
        return "" if which == "old" else "left out of analyses"
    if entry.action is Action.KEEP and which == "new":
        return "unchanged"
    if entry.action is Action.REVERSE:
        return "" if which == "old" else f"battery {value} reversed"
    if entry.action is Action.RECODE_ALL and which == "new" and value is None:
        return "missing"
    if isinstance(value, dict):
        return ", ".join(f"{k} = {value_text(v) or 'missing'}" for k, v in value.items())
    if value is None:
        return "missing" if which == "old" and entry.action is Action.CORRECT else ""
    return value_text(value)


class LedgerModel(QAbstractTableModel):
    """Rows of ``(entry, in_force)`` as :func:`core.cleaning.ledger_list` returns them."""

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._rows: list[tuple[LedgerEntry, bool]] = []
        self._italic = QFont()
        self._italic.setItalic(True)

    def set_rows(self, rows: list[tuple[LedgerEntry, bool]]) -> None:
        self.beginResetModel()
        self._rows = list(rows)
        self.endResetModel()

    def entry_at(self, row: int) -> tuple[LedgerEntry, bool]:
        return self._rows[row]

    def row_of(self, entry_id: int) -> int:
        for i, (e, _) in enumerate(self._rows):
            if e.id == entry_id:
                return i
        return -1

    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        return 0 if parent.isValid() else len(COLUMNS)

    def headerData(  # noqa: N802 - Qt override
        self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole
    ) -> Any:
        if orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole:
            return COLUMNS[section][1]
        return None

    def text(self, row: int, key: str) -> str:
        entry, active = self._rows[row]
        if key == "id":
            return str(entry.id)
        if key == "state":
            return "yes" if active else "withdrawn"
        if key == "action":
            return entry.action.label
        if key == "respondent":
            if entry.row is None:
                return "every respondent"
            return f"{entry.respondent} (row {entry.row + 1})"
        if key == "variables":
            names = entry.variables
            return ", ".join(names[:4]) + (f" and {len(names) - 4} more" if len(names) > 4 else "")
        if key in ("old", "new"):
            return entry_value(entry, key)
        if key == "check":
            return CHECK_LABELS.get(entry.check, entry.check) if entry.check else ""
        if key == "reason":
            return entry.reason
        if key == "created":
            return local_time(entry.created)
        if key == "author":
            return entry.author
        return ""

    def data(
        self,
        index: QModelIndex | QPersistentModelIndex,
        role: int = Qt.ItemDataRole.DisplayRole,
    ) -> Any:
        if not index.isValid():
            return None
        entry, active = self._rows[index.row()]
        key = COLUMNS[index.column()][0]
        if role == Qt.ItemDataRole.DisplayRole:
            return self.text(index.row(), key)
        if role == Qt.ItemDataRole.ForegroundRole and not active:
            return MUTED_TEXT
        if role == Qt.ItemDataRole.FontRole and not active:
            return self._italic
        if role == Qt.ItemDataRole.ToolTipRole:
            if key == "variables":
                return ", ".join(entry.variables)
            if not active:
                return "Withdrawn: no longer applied to the working data (kept on record)."
            return None
        if role == Qt.ItemDataRole.TextAlignmentRole and key == "id":
            return Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
        if role == ENTRY_ROLE:
            return entry
        return None
