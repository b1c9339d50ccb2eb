"""The flag list as a two-level tree: one row per check (with counts), its flags below.

Counts in the check rows come from :func:`core.cleaning.grouped` over every flag, whatever
the filter shows, so the list and the command line always agree.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any

from PySide6.QtCore import QAbstractItemModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QColor, QFont

from core.checks import Flag
from core.cleaning import FlagGroup, grouped
from desktopapp.models.cells import MUTED_TEXT, value_text

FLAG_ROLE = Qt.ItemDataRole.UserRole + 20  # the Flag of a flag row, None for a check row
CHECK_ROLE = Qt.ItemDataRole.UserRole + 21  # the check id of either kind of row

SEVERITY_COLOURS = {"error": QColor("#B3261E"), "warning": QColor("#B34700"), "note": MUTED_TEXT}
SEVERITY_WORDS = {"error": "cannot be right", "warning": "probably wrong", "note": "worth a look"}
_GROUP = 0xFFFFFFFF  # internal id of a check row; flag rows carry their group's position


def flag_value_text(flag: Flag) -> str:
    """The flagged value in a few words (a whole-battery flag names its answer pattern)."""
    value = flag.value
    if isinstance(value, dict):
        return ", ".join(f"{k} = {value_text(v) or 'missing'}" for k, v in value.items())
    text = value_text(value)
    return text if len(text) <= 60 else text[:57] + "…"


def flag_summary(flag: Flag) -> str:
    """'age = 7', or the variables and value of a many-variable flag."""
    value = flag_value_text(flag)
    if not flag.variables:
        return f"whole row ({value})" if value else "whole row"
    if len(flag.variables) == 1:
        return f"{flag.variables[0]} = {value or 'missing'}"
    names = ", ".join(flag.variables[:3]) + (" …" if len(flag.variables) > 3 else "")
    return f"{names}: {value}" if value else names


class FlagTreeModel(QAbstractItemModel):
    """Check rows (label, count, open count) with their flags as children.

    ``show_decided`` False hides flags answered by a decision in force; ``text`` keeps flags
    whose respondent, variables or message contain it. Counts ignore both filters.
    """

    HEADERS = ("Respondent", "Finding")

    def __init__(self, parent: Any = None) -> None:
        super().__init__(parent)
        self._all: list[Flag] = []
        self._groups: list[FlagGroup] = []  # every flag, for the counts
        self._shown: list[tuple[FlagGroup, list[Flag]]] = []
        self._where: dict[tuple[Any, ...], tuple[int, int]] = {}
        self.show_decided = True
        self.text = ""
        self._bold = QFont()
        self._bold.setBold(True)

    # ------------------------------------------------------------------ content
    def set_flags(self, flags: Sequence[Flag]) -> None:
        self.beginResetModel()
        self._all = list(flags)
        self._groups = grouped(self._all)
        self._filter()
        self.endResetModel()

    def set_filter(self, show_decided: bool | None = None, text: str | None = None) -> None:
        self.beginResetModel()
        if show_decided is not None:
            self.show_decided = show_decided
        if text is not None:
            self.text = text.strip().lower()
        self._filter()
        self.endResetModel()

    def _filter(self) -> None:
        shown = []
        for group in self._groups:
            keep = [f for f in group.flags if self._passes(f)]
            if keep:
                shown.append((group, keep))
        self._shown = shown
        # Where each listed flag sits, so selecting thousands of flags stays linear.
        self._where = {f.key: (g, r) for g, (_, fs) in enumerate(shown) for r, f in enumerate(fs)}

    def _passes(self, flag: Flag) -> bool:
        if not self.show_decided and flag.decided_by is not None:
            return False
        if not self.text:
            return True
        hay = " ".join([flag.respondent, *flag.variables, flag.message, str(flag.row + 1)])
        return self.text in hay.lower()

    @property
    def flags(self) -> list[Flag]:
        return list(self._all)

    def groups(self) -> list[FlagGroup]:
        return list(self._groups)

    def shown_flags(self) -> list[Flag]:
        """Flags in the order they are listed (filters applied)."""
        return [f for _, fs in self._shown for f in fs]

    def index_of(self, key: tuple[Any, ...]) -> QModelIndex:
        """The row of the flag with this :attr:`Flag.key`, or an invalid index."""
        where = self._where.get(key)
        if where is None:
            return QModelIndex()
        return self.createIndex(where[1], 0, where[0])

    def group_index(self, check: str) -> QModelIndex:
        for g, (group, _) in enumerate(self._shown):
            if group.check == check:
                return self.createIndex(g, 0, _GROUP)
        return QModelIndex()

    def flag_at(self, index: QModelIndex | QPersistentModelIndex) -> Flag | None:
        if not index.isValid() or index.internalId() == _GROUP:
            return None
        return self._shown[index.internalId()][1][index.row()]

    def flags_under(self, indexes: Iterable[QModelIndex]) -> list[Flag]:
        """The flags of these rows: a check row stands for every flag shown under it."""
        out: dict[tuple[Any, ...], Flag] = {}
        for index in indexes:
            if not index.isValid():
                continue
            if index.internalId() == _GROUP:
                for f in self._shown[index.row()][1]:
                    out.setdefault(f.key, f)
            else:
                f = self._shown[index.internalId()][1][index.row()]
                out.setdefault(f.key, f)
        return list(out.values())

    # ------------------------------------------------------------------ Qt interface
    def index(
        self,
        row: int,
        column: int,
        parent: QModelIndex | QPersistentModelIndex = QModelIndex(),  # noqa: B008
    ) -> QModelIndex:
        if not parent.isValid():
            if 0 <= row < len(self._shown) and 0 <= column < 2:
                return self.createIndex(row, column, _GROUP)
            return QModelIndex()
        if parent.internalId() != _GROUP:
            return QModelIndex()
        g = parent.row()
        if 0 <= row < len(self._shown[g][1]) and 0 <= column < 2:
            return self.createIndex(row, column, g)
        return QModelIndex()

    def parent(self, index: QModelIndex | QPersistentModelIndex = QModelIndex()) -> QModelIndex:  # type: ignore[override]  # noqa: B008
        if not index.isValid() or index.internalId() == _GROUP:
            return QModelIndex()
        return self.createIndex(index.internalId(), 0, _GROUP)

    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        if not parent.isValid():
            return len(self._shown)
        if parent.internalId() == _GROUP and parent.column() == 0:
            return len(self._shown[parent.row()][1])
        return 0

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        return 2

    def headerData(  # noqa: N802 - Qt override
        self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole
    ) -> Any:
        if orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole:
            return self.HEADERS[section]
        return None

    def data(
        self,
        index: QModelIndex | QPersistentModelIndex,
        role: int = Qt.ItemDataRole.DisplayRole,
    ) -> Any:
        if not index.isValid():
            return None
        if index.internalId() == _GROUP:
            group, _ = self._shown[index.row()]
            if role == Qt.ItemDataRole.DisplayRole and index.column() == 0:
                return group_text(group)
            if role == Qt.ItemDataRole.FontRole:
                return self._bold
            if role == CHECK_ROLE:
                return group.check
            if role == Qt.ItemDataRole.ToolTipRole:
                return (
                    f"{group.label}: {group.count} flag{'s' if group.count != 1 else ''}, "
                    f"{group.open_count} still open. Select this row to decide all of them "
                    "at once."
                )
            return None
        flag = self._shown[index.internalId()][1][index.row()]
        decided = flag.decided_by is not None
        if role == Qt.ItemDataRole.DisplayRole:
            if index.column() == 0:
                return ("✓ " if decided else "") + flag.respondent
            return flag_summary(flag)
        if role == Qt.ItemDataRole.ForegroundRole:
            if decided:
                return MUTED_TEXT
            if index.column() == 0:
                return SEVERITY_COLOURS.get(flag.severity)
            return None
        if role == Qt.ItemDataRole.ToolTipRole:
            state = f"Decided (ledger entry {flag.decided_by})" if decided else "Open"
            return (
                f"{flag.message}\nData row {flag.row + 1} · "
                f"{flag.severity} ({SEVERITY_WORDS.get(flag.severity, '')}) · {state}"
            )
        if role == FLAG_ROLE:
            return flag
        if role == CHECK_ROLE:
            return flag.check
        return None


def group_text(group: FlagGroup) -> str:
    flags = f"{group.count} flag{'s' if group.count != 1 else ''}"
    if group.open_count == group.count:
        return f"{group.label} — {flags}, all open"
    if group.open_count == 0:
        return f"{group.label} — {flags}, all decided"
    return f"{group.label} — {flags}, {group.open_count} open"
