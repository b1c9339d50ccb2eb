"""The working data as a virtualised table: one row per respondent, one column per variable.

Nothing is formatted up front. A column is turned into plain numpy arrays (values, missing
reason codes) the first time a view asks for one of its cells, and a cell's text is made
when it is painted, so a 100,000-row wave opens as fast as a 100-row one. Corrected cells,
missing reasons and excluded respondents are read from the :class:`WorkingData` itself.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QFont

from core.cleaning import cell_note
from core.decoding import REASON_CATEGORIES, cell_texts
from core.kinds import Kind
from core.ledger import Action, surviving
from core.working import WorkingData
from desktopapp.models.cells import (
    EDITED_BACKGROUND,
    EXCLUDED_BACKGROUND,
    EXCLUDED_TEXT,
    MUTED_TEXT,
    REASON_WORDS,
    missing_text,
    value_text,
)

EDITED_ROLE = Qt.ItemDataRole.UserRole + 10  # True for a cell a decision in force changed
VARIABLE_ROLE = Qt.ItemDataRole.UserRole + 11
MISSING_ROLE = Qt.ItemDataRole.UserRole + 12  # the missing reason code, or None

RIGHT = Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
LEFT = Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter
_NUMERIC = (Kind.NUMERIC, Kind.RANKING)


@dataclass
class _Column:
    """One variable's cells as numpy arrays, made on first use."""

    values: np.ndarray
    reasons: np.ndarray  # int codes into REASON_CATEGORIES, -1 where answered
    categories: list[str] | None = None  # values are category codes when set
    raw: np.ndarray | None = None  # raw texts, only when a missing cell needs them


class DataGridModel(QAbstractTableModel):
    """Read-only table model over one wave's :class:`WorkingData`."""

    def __init__(self, working: WorkingData, parent: Any = None) -> None:
        super().__init__(parent)
        self._working = working
        self._names = self._names_of(working)
        self._kinds = {n: working.codebook[n].kind for n in self._names}
        self._columns: dict[str, _Column] = {}
        self._italic = QFont()
        self._italic.setItalic(True)

    @staticmethod
    def _names_of(working: WorkingData) -> list[str]:
        present = set(working.values.columns)
        return [v.name for v in working.codebook if v.name in present]

    # ------------------------------------------------------------------ public
    @property
    def working(self) -> WorkingData:
        return self._working

    @property
    def names(self) -> list[str]:
        return list(self._names)

    def cached_columns(self) -> list[str]:
        """Columns turned into arrays so far (the rest have not been read)."""
        return list(self._columns)

    def column_of(self, name: str) -> int:
        return self._names.index(name) if name in self._names else -1

    def set_working(self, working: WorkingData, variables: Iterable[str] | None = None) -> None:
        """Take new working data of the same wave; repaint only ``variables`` (None: all)
        and the rows whose exclusion changed."""
        old = self._working
        names = self._names_of(working)
        if names != self._names or working.n_rows != old.n_rows:
            self.beginResetModel()
            self._working = working
            self._names = names
            self._kinds = {n: working.codebook[n].kind for n in names}
            self._columns.clear()
            self.endResetModel()
            return
        self._working = working
        self._kinds = {n: working.codebook[n].kind for n in names}  # a kind may have changed
        changed = (
            list(self._names) if variables is None else [n for n in variables if n in self._kinds]
        )
        for name in changed:
            self._columns.pop(name, None)
        last_row = self.rowCount() - 1
        for name in changed:
            col = self._names.index(name)
            self.dataChanged.emit(self.index(0, col), self.index(last_row, col))
        flipped = sorted(old.excluded ^ working.excluded)
        if flipped:
            last_col = self.columnCount() - 1
            for row in flipped:
                self.dataChanged.emit(self.index(row, 0), self.index(row, last_col))
            self.headerDataChanged.emit(Qt.Orientation.Vertical, flipped[0], flipped[-1])

    def cell_text(self, row: int, name: str) -> str:
        return self.data(self.index(row, self._names.index(name))) or ""

    # ------------------------------------------------------------------ Qt interface
    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        return 0 if parent.isValid() else self._working.n_rows

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        return 0 if parent.isValid() else len(self._names)

    def data(
        self,
        index: QModelIndex | QPersistentModelIndex,
        role: int = Qt.ItemDataRole.DisplayRole,
    ) -> Any:
        if not index.isValid():
            return None
        row, name = index.row(), self._names[index.column()]
        if role == Qt.ItemDataRole.DisplayRole:
            return self._text(row, name)
        if role == EDITED_ROLE:
            return (row, name) in self._working.edits
        if role == Qt.ItemDataRole.BackgroundRole:
            if (row, name) in self._working.edits:
                return EDITED_BACKGROUND
            if row in self._working.excluded:
                return EXCLUDED_BACKGROUND
            return None
        if role == Qt.ItemDataRole.ForegroundRole:
            if row in self._working.excluded:
                return EXCLUDED_TEXT
            return MUTED_TEXT if self._reason(row, name) is not None else None
        if role == Qt.ItemDataRole.FontRole:
            return self._italic if self._reason(row, name) is not None else None
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return RIGHT if self._kinds[name] in _NUMERIC else LEFT
        if role == Qt.ItemDataRole.ToolTipRole:
            return self._tooltip(row, name)
        if role == MISSING_ROLE:
            return self._reason(row, name)
        if role == VARIABLE_ROLE:
            return name
        return None

    def headerData(  # noqa: N802 - Qt override
        self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole
    ) -> Any:
        if orientation == Qt.Orientation.Horizontal:
            if not 0 <= section < len(self._names):
                return None
            name = self._names[section]
            if role == Qt.ItemDataRole.DisplayRole:
                return name
            if role == Qt.ItemDataRole.ToolTipRole:
                var = self._working.codebook[name]
                return f"{name} ({var.kind.label.lower()})\n{var.question}".strip()
            return None
        if role == Qt.ItemDataRole.DisplayRole:
            return str(section + 1)
        if role == Qt.ItemDataRole.ToolTipRole:
            who = self._working.respondent_label(section)
            text = f"Data row {section + 1}, respondent {who}"
            if section in self._working.excluded:
                text += "\nExcluded from every analysis (still shown here)."
            return text
        if role == Qt.ItemDataRole.ForegroundRole and section in self._working.excluded:
            return EXCLUDED_TEXT
        return None

    def flags(self, index: QModelIndex | QPersistentModelIndex) -> Qt.ItemFlag:
        if not index.isValid():
            return Qt.ItemFlag.NoItemFlags
        return Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable

    # ------------------------------------------------------------------ cells
    def _column(self, name: str) -> _Column:
        col = self._columns.get(name)
        if col is None:
            series = self._working.values[name]
            reasons = self._working.reasons[name]
            if isinstance(reasons.dtype, pd.CategoricalDtype):
                lookup = np.array(
                    [
                        REASON_CATEGORIES.index(c) if c in REASON_CATEGORIES else 0
                        for c in reasons.cat.categories
                    ]
                    + [-1]
                )
                codes = lookup[reasons.cat.codes.to_numpy()]
            else:
                texts = reasons.to_numpy(dtype=object)
                codes = np.array(
                    [-1 if t is None or t != t else REASON_CATEGORIES.index(str(t)) for t in texts]
                )
            if isinstance(series.dtype, pd.CategoricalDtype):
                col = _Column(
                    series.cat.codes.to_numpy(), codes, [str(c) for c in series.cat.categories]
                )
            else:
                col = _Column(series.to_numpy(), codes)
            self._columns[name] = col
        return col

    def _reason(self, row: int, name: str) -> str | None:
        code = int(self._column(name).reasons[row])
        return None if code < 0 else REASON_CATEGORIES[code]

    def raw_text(self, row: int, name: str) -> str | None:
        """The cell as imported (None when blank)."""
        raw = self._working.raw
        if raw is None or name not in raw.columns:
            return None
        col = self._column(name)
        if col.raw is None:
            col.raw = cell_texts(raw[name])
        return col.raw[row]

    def _text(self, row: int, name: str) -> str:
        col = self._column(name)
        code = int(col.reasons[row])
        if code >= 0:
            return missing_text(REASON_CATEGORIES[code], self.raw_text(row, name))
        value = col.values[row]
        if col.categories is not None:
            return col.categories[int(value)] if int(value) >= 0 else ""
        return value_text(value)

    def _tooltip(self, row: int, name: str) -> str | None:
        lines = []
        note = cell_note(self._working, row, name)
        if note:
            lines.append(note)
        else:
            reason = self._reason(row, name)
            if reason is not None:
                raw = self.raw_text(row, name)
                words = REASON_WORDS.get(reason, reason).capitalize()
                lines.append(f"Missing: {words}" + (f" (the source says {raw!r})" if raw else ""))
        if row in self._working.excluded:
            why = [
                e.reason
                for e in surviving(self._working.entries)
                if e.row == row and e.action is Action.EXCLUDE
            ]
            lines.append(
                "This respondent is excluded from every analysis" + (f": {why[-1]}" if why else ".")
            )
        return "\n".join(lines) or None
