"""The codebook node: find a variable, read and change what its answers mean.

Three panes side by side: the variables (searchable, grouped by question group, each with
its kind as an icon and in words), the details of the selected variable laid out as a short
form in sections, and a live count of its answers in one wave. Every change goes through
``Project.set_codebook(..., label=...)`` on the writer thread, so Edit ▸ Undo takes it back.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import pandas as pd
from PySide6.QtCore import QRectF, QSize, Qt, Signal
from PySide6.QtGui import (
    QColor,
    QDoubleValidator,
    QFont,
    QKeySequence,
    QPainter,
    QPalette,
    QShortcut,
)
from PySide6.QtWidgets import (
    QAbstractItemView,
    QButtonGroup,
    QCheckBox,
    QComboBox,
    QFormLayout,
    QFrame,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QListWidget,
    QListWidgetItem,
    QPlainTextEdit,
    QPushButton,
    QRadioButton,
    QScrollArea,
    QSplitter,
    QTableWidget,
    QTableWidgetItem,
    QTreeWidget,
    QTreeWidgetItem,
    QVBoxLayout,
    QWidget,
)

from core.codebook import Codebook, Variable
from core.decoding import INVALID, cell_texts
from core.errors import CodebookError
from core.kinds import CODE_REASONS, Kind, MissingReason
from core.project import Changes
from desktopapp.icons import BLUE, kind_icon
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, muted_label, section_label, title_label
from desktopapp.widgets.question_list import NAME_ROLE, named_items, select_named

NO_GROUP = "(not in a group)"


def register(registry: Any) -> None:
    registry.add(NodeType.CODEBOOK, CodebookView)


# ---------------------------------------------------------------------- pure edits
def rename_level(var: Variable, old: str, new: str) -> Variable:
    """Rename one answer label, keeping the raw cells that said ``old`` mapped to it."""
    new = new.strip()
    if not new:
        raise CodebookError("An answer needs a label.")
    if new == old:
        return var
    if new in var.levels:
        raise CodebookError(f"{var.name} already has an answer called “{new}”.")
    levels = tuple(new if level == old else level for level in var.levels)
    labels = {raw: (new if label == old else label) for raw, label in var.value_labels.items()}
    if old not in labels and old not in var.value_labels.values():
        labels[old] = new  # raw cells reading the old label now mean the new one
    labels = {raw: label for raw, label in labels.items() if raw != label}
    return replace(var, levels=levels, value_labels=labels)


def reorder_levels(var: Variable, order: list[str]) -> Variable:
    if sorted(order) != sorted(var.levels):
        raise CodebookError(f"The answers of {var.name} changed while they were being moved.")
    return replace(var, levels=tuple(order))


def levels_from_data(var: Variable, raw: pd.Series) -> tuple[str, ...]:
    """Distinct answers found in a raw column (missing codes left out), numbers in order."""
    texts = [t for t in cell_texts(raw) if t is not None and t not in var.missing_codes]
    found = list(dict.fromkeys(var.value_labels.get(t, t) for t in texts))

    def key(text: str) -> tuple[int, float, str]:
        try:
            return (0, float(text), "")
        except ValueError:
            return (1, 0.0, text.lower())

    return tuple(sorted(found, key=key))


# ---------------------------------------------------------------------- frequency preview
@dataclass
class Frequencies:
    """What the preview pane draws: bars (label, count) plus a few lines of facts."""

    bars: list[tuple[str, int]] = field(default_factory=list)
    facts: list[str] = field(default_factory=list)
    missing: list[tuple[str, int]] = field(default_factory=list)
    base: int = 0
    title: str = ""


def frequencies(var: Variable, values: pd.Series, reasons: pd.Series) -> Frequencies:
    """Counts of one variable's answers in working data, by kind."""
    out = Frequencies()
    answered = values[reasons.isna().to_numpy()]
    out.base = int(len(answered))
    kind = var.kind
    if kind.has_levels:
        counts = answered.astype(object).value_counts()
        out.bars = [(level, int(counts.get(level, 0))) for level in var.levels]
        out.title = "Answers"
    elif kind is Kind.MULTISELECT and var.delimiter:
        chosen: dict[str, int] = dict.fromkeys(var.levels, 0)
        for picked in answered:
            for option in picked or ():
                chosen[option] = chosen.get(option, 0) + 1
        out.bars = list(chosen.items())
        out.title = "Times chosen"
    elif kind is Kind.MULTISELECT:
        nums = answered.astype(float)
        out.bars = [("Chosen", int((nums == 1).sum())), ("Not chosen", int((nums == 0).sum()))]
        out.title = "Answers"
    elif kind in (Kind.NUMERIC, Kind.RANKING):
        nums = answered.astype(float).to_numpy()
        if len(nums):
            q = np.percentile(nums, [0, 50, 100])
            out.facts = [f"Lowest {_num(q[0])}", f"Median {_num(q[1])}", f"Highest {_num(q[2])}"]
            if kind is Kind.RANKING or len(np.unique(nums)) <= 12:
                counts = pd.Series(nums).value_counts().sort_index()
                out.bars = [(_num(v), int(n)) for v, n in counts.items()]
                out.title = "Answers"
            else:
                out.bars = binned(nums)
                out.title = "Answers in equal-width groups"
    elif kind is Kind.DATE:
        dates = pd.to_datetime(answered)
        if len(dates):
            out.facts = [
                f"Earliest {dates.min():%Y-%m-%d %H:%M}",
                f"Latest {dates.max():%Y-%m-%d %H:%M}",
            ]
    else:
        texts = answered.astype(str)
        distinct = texts.nunique()
        out.facts = [f"{distinct:,} different answers"]
        if kind is Kind.IDENTIFIER:
            repeated = int((texts.value_counts() > 1).sum())
            if repeated:
                out.facts.append(
                    f"{repeated:,} identifier{'s' if repeated != 1 else ''} appear more than once"
                )
        else:
            top = texts.value_counts().head(5)
            out.bars = [(str(t), int(n)) for t, n in top.items()]
            out.title = "Most frequent answers"
    counts = reasons.astype(object).value_counts()
    for reason in [*MissingReason, INVALID]:
        n = int(counts.get(str(reason), 0))
        if n:
            label = reason.label if isinstance(reason, MissingReason) else "Not a valid answer"
            out.missing.append((label, n))
    return out


def nice_step(span: float, groups: int = 8) -> float:
    """The smallest 1, 2, 2.5 or 5 times a power of ten that covers ``span`` in ``groups``."""
    if span <= 0:
        return 1.0
    raw = span / groups
    power = 10 ** np.floor(np.log10(raw))
    for factor in (1, 2, 2.5, 5, 10):
        if factor * power >= raw:
            return float(factor * power)
    return float(10 * power)


def binned(nums: np.ndarray, groups: int = 8) -> list[tuple[str, int]]:
    """Counts in equal-width groups with round edges (each group includes its lower edge)."""
    lo, hi = float(np.min(nums)), float(np.max(nums))
    whole = bool(np.all(np.mod(nums, 1) == 0))
    step = nice_step(hi - lo, groups)
    if whole:
        step = max(1.0, float(np.ceil(step)))
    start = np.floor(lo / step) * step
    n = int(np.floor((hi - start) / step)) + 1
    index = np.floor((nums - start) / step).astype(int)
    counts = np.bincount(index, minlength=n)
    out = []
    for i in range(n):
        a, b = start + i * step, start + (i + 1) * step
        label = f"{_num(a)} to {_num(b - 1)}" if whole else f"{_num(a)} to under {_num(b)}"
        if whole and step == 1:
            label = _num(a)
        out.append((label, int(counts[i])))
    return out


def _num(x: float) -> str:
    return f"{x:,.0f}" if float(x).is_integer() else f"{x:,.2f}"


class FrequencyPreviewWidget(QWidget):
    """Horizontal bars with counts and percentages, right-aligned in their own column."""

    ROW = 22

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("frequencyPreview")
        self._data = Frequencies()
        self.setMinimumWidth(240)

    def set_frequencies(self, data: Frequencies) -> None:
        self._data = data
        self.updateGeometry()
        self.update()

    def frequencies(self) -> Frequencies:
        return self._data

    def sizeHint(self) -> QSize:  # noqa: N802 - Qt override
        return QSize(300, max(1, len(self._data.bars)) * self.ROW + 8)

    def minimumSizeHint(self) -> QSize:  # noqa: N802 - Qt override
        return QSize(240, max(1, len(self._data.bars)) * self.ROW + 8)

    def paintEvent(self, _event: Any) -> None:  # noqa: N802 - Qt override
        bars = self._data.bars
        if not bars:
            return
        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing)
        fm = self.fontMetrics()
        width = self.width()
        label_w = min(int(width * 0.42), max(fm.horizontalAdvance(b[0]) for b in bars) + 8)
        count_w = fm.horizontalAdvance("0,000 (100%)") + 8
        bar_x = label_w + 6
        bar_w = max(20, width - bar_x - count_w - 6)
        biggest = max((n for _, n in bars), default=0) or 1
        base = self._data.base or 1
        text_color = self.palette().color(QPalette.ColorRole.Text)
        for i, (label, n) in enumerate(bars):
            y = 4 + i * self.ROW
            p.setPen(text_color)
            elided = fm.elidedText(label, Qt.TextElideMode.ElideRight, label_w - 4)
            p.drawText(
                QRectF(0, y, label_w - 4, self.ROW),
                Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter,
                elided,
            )
            length = bar_w * n / biggest
            p.setPen(Qt.PenStyle.NoPen)
            p.setBrush(QColor(BLUE))
            p.drawRoundedRect(
                QRectF(bar_x, y + 5, max(length, 1.5 if n else 0), self.ROW - 10), 2, 2
            )
            p.setPen(text_color)
            pct = 100.0 * n / base
            p.drawText(
                QRectF(width - count_w, y, count_w - 2, self.ROW),
                Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter,
                f"{n:,} ({pct:.0f}%)",
            )
        p.end()


# ---------------------------------------------------------------------- the view
class QuestionEdit(QPlainTextEdit):
    """A few lines for the question text; the change is committed when focus leaves."""

    editing_finished = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setTabChangesFocus(True)
        self.setFixedHeight(self.fontMetrics().lineSpacing() * 3 + 12)

    def focusOutEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        super().focusOutEvent(event)
        self.editing_finished.emit()


class LevelListWidget(QListWidget):
    """The ordered answers: drag to reorder, double-click to rename."""

    order_changed = Signal(list)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("levelList")
        self.setDragDropMode(QAbstractItemView.DragDropMode.InternalMove)
        self.setDefaultDropAction(Qt.DropAction.MoveAction)
        self.setEditTriggers(
            QAbstractItemView.EditTrigger.DoubleClicked
            | QAbstractItemView.EditTrigger.EditKeyPressed
        )
        self._shown: list[str] = []
        self.model().rowsMoved.connect(self._on_model_rows_moved)

    def labels(self) -> list[str]:
        return [self.item(i).data(NAME_ROLE) for i in range(self.count())]

    def set_levels(self, levels: tuple[str, ...]) -> None:
        self.clear()
        for level in levels:
            item = QListWidgetItem(level)
            item.setData(NAME_ROLE, level)
            item.setFlags(item.flags() | Qt.ItemFlag.ItemIsEditable | Qt.ItemFlag.ItemIsDragEnabled)
            self.addItem(item)
        self._shown = self.labels()

    def dropEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        super().dropEvent(event)
        self._emit_if_moved()

    def _on_model_rows_moved(self, *_args: Any) -> None:
        self._emit_if_moved()

    def _emit_if_moved(self) -> None:
        # A drag may report itself both as a drop and as a row move; tell the view once.
        order = self.labels()
        if order != self._shown:
            self._shown = order
            self.order_changed.emit(order)


class CodebookView(QWidget):
    """Variables on the left, the selected variable's details in the middle, answers right."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("codebookView")
        self._context = context
        self.node = node
        self.instrument_id: int = node.instrument_id  # type: ignore[assignment]
        self._filling = False
        self._current: str | None = None

        # ---- variable list
        self.search_edit = QLineEdit()
        self.search_edit.setObjectName("variableSearch")
        self.search_edit.setPlaceholderText("Find a variable by name, question or kind")
        self.search_edit.setClearButtonEnabled(True)
        self.variable_tree = QTreeWidget()
        self.variable_tree.setObjectName("variableTree")
        self.variable_tree.setColumnCount(2)
        self.variable_tree.setHeaderLabels(["Variable", "Kind"])
        self.variable_tree.header().setSectionResizeMode(0, QHeaderView.ResizeMode.ResizeToContents)
        self.variable_tree.header().setStretchLastSection(True)
        self.variable_tree.setUniformRowHeights(True)
        self.count_label = muted_label("")
        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(12, 12, 6, 12)
        lv.addWidget(self.search_edit)
        lv.addWidget(self.variable_tree, 1)
        lv.addWidget(self.count_label)
        self.export_button = QPushButton("Export codebook…")
        self.export_button.setObjectName("exportCodebookButton")
        self.export_button.setToolTip("Save this codebook as a JSON file to reuse elsewhere.")
        self.apply_file_button = QPushButton("Apply a codebook file…")
        self.apply_file_button.setObjectName("applyCodebookButton")
        self.apply_file_button.setToolTip(
            "Take answer lists, missing codes and other settings from a codebook file, for "
            "the variables it shares with this one (one step, undoable)."
        )
        file_buttons = QHBoxLayout()
        file_buttons.addWidget(self.export_button)
        file_buttons.addWidget(self.apply_file_button)
        file_buttons.addStretch(1)
        lv.addLayout(file_buttons)

        # ---- details
        self.name_label = title_label("")
        self.name_label.setObjectName("variableName")
        self.name_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.question_edit = QuestionEdit()
        self.question_edit.setObjectName("questionEdit")
        self.question_edit.setPlaceholderText("The question as respondents saw it")
        self.kind_combo = QComboBox()
        self.kind_combo.setObjectName("kindCombo")
        for kind in Kind:
            self.kind_combo.addItem(kind_icon(kind), kind.label, kind.value)
        self.kind_hint = muted_label("")
        self.group_combo = QComboBox()
        self.group_combo.setObjectName("groupCombo")
        self.group_combo.setEditable(True)
        self.group_combo.setInsertPolicy(QComboBox.InsertPolicy.NoInsert)
        self.group_combo.lineEdit().setPlaceholderText(NO_GROUP)

        self.levels_section = QWidget()
        self.level_list = LevelListWidget()
        self.level_up_button = QPushButton("Move up")
        self.level_down_button = QPushButton("Move down")
        self.level_fill_button = QPushButton("Fill from the data")
        self.level_fill_button.setObjectName("fillLevelsButton")
        self.level_fill_button.setToolTip("List every different answer found in the data.")
        level_buttons = QHBoxLayout()
        level_buttons.addWidget(self.level_up_button)
        level_buttons.addWidget(self.level_down_button)
        level_buttons.addStretch(1)
        level_buttons.addWidget(self.level_fill_button)
        ls = QVBoxLayout(self.levels_section)
        ls.setContentsMargins(0, 0, 0, 0)
        ls.addWidget(section_label("Answers, in order"))
        self.levels_hint = muted_label(
            "Drag an answer to move it; double-click to rename it. For rating scales the "
            "order runs from the lowest to the highest point."
        )
        ls.addWidget(self.levels_hint)
        ls.addWidget(self.level_list)
        ls.addLayout(level_buttons)

        self.missing_table = QTableWidget(0, 2)
        self.missing_table.setObjectName("missingCodes")
        self.missing_table.setHorizontalHeaderLabels(["Code in the data", "Why it is missing"])
        self.missing_table.horizontalHeader().setSectionResizeMode(
            0, QHeaderView.ResizeMode.ResizeToContents
        )
        self.missing_table.horizontalHeader().setSectionResizeMode(
            1, QHeaderView.ResizeMode.Stretch
        )
        self.missing_table.verticalHeader().setVisible(False)
        self.missing_add_button = QPushButton("Add a code")
        self.missing_remove_button = QPushButton("Remove")
        missing_buttons = QHBoxLayout()
        missing_buttons.addWidget(self.missing_add_button)
        missing_buttons.addWidget(self.missing_remove_button)
        missing_buttons.addStretch(1)

        self.range_section = QWidget()
        self.range_min_edit = QLineEdit()
        self.range_min_edit.setObjectName("rangeMin")
        self.range_max_edit = QLineEdit()
        self.range_max_edit.setObjectName("rangeMax")
        for edit in (self.range_min_edit, self.range_max_edit):
            edit.setValidator(QDoubleValidator(edit))
            edit.setPlaceholderText("none")
            edit.setAlignment(Qt.AlignmentFlag.AlignRight)
            edit.setMaximumWidth(120)
        self.range_note = muted_label("")
        range_row = QHBoxLayout()
        range_row.addWidget(QLabel("From"))
        range_row.addWidget(self.range_min_edit)
        range_row.addWidget(QLabel("to"))
        range_row.addWidget(self.range_max_edit)
        range_row.addStretch(1)
        rs = QVBoxLayout(self.range_section)
        rs.setContentsMargins(0, 0, 0, 0)
        rs.addWidget(section_label("Plausible values"))
        rs.addWidget(
            muted_label(
                "Answers outside this range are flagged for a look when the data is checked."
            )
        )
        rs.addLayout(range_row)
        rs.addWidget(self.range_note)

        self.keying_section = QWidget()
        self.keying_positive = QRadioButton("Positively worded")
        self.keying_negative = QRadioButton("Negatively worded")
        self.keying_unset = QRadioButton("Not set")
        self.keying_group = QButtonGroup(self)
        for i, button in enumerate((self.keying_positive, self.keying_negative, self.keying_unset)):
            self.keying_group.addButton(button, i)
        ks = QVBoxLayout(self.keying_section)
        ks.setContentsMargins(0, 0, 0, 0)
        ks.addWidget(section_label("Wording"))
        ks.addWidget(
            muted_label(
                "Negatively worded items (where agreeing is unfavourable) are reversed when "
                "items of a scale are combined or checked for reversed answers."
            )
        )
        ks.addWidget(self.keying_positive)
        ks.addWidget(self.keying_negative)
        ks.addWidget(self.keying_unset)

        self.personal_check = QCheckBox("Holds personal data")
        self.personal_check.setObjectName("personalCheck")
        self.personal_note = muted_label(
            "Names, e-mail addresses, phone numbers and street addresses are personal data. "
            "They are left out of every export unless you include them on purpose."
        )

        self.details_error = QLabel("")
        self.details_error.setWordWrap(True)
        self.details_error.setStyleSheet("QLabel { color: #a33f00; }")
        self.details_error.hide()

        form = QFormLayout()
        form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        form.addRow("Question", self.question_edit)
        form.addRow("Kind", self.kind_combo)
        form.addRow("", self.kind_hint)
        form.addRow("Question group", self.group_combo)

        details = QWidget()
        details.setObjectName("variableDetails")
        dv = QVBoxLayout(details)
        dv.setContentsMargins(18, 12, 18, 12)
        dv.setSpacing(8)
        dv.addWidget(self.name_label)
        dv.addLayout(form)
        dv.addWidget(self.details_error)
        dv.addSpacing(6)
        dv.addWidget(self.levels_section)
        dv.addSpacing(6)
        dv.addWidget(section_label("Missing codes"))
        dv.addWidget(
            muted_label(
                "Codes that stand for a missing answer, and why it is missing. Blank cells are "
                "always counted as skipped."
            )
        )
        dv.addWidget(self.missing_table)
        dv.addLayout(missing_buttons)
        dv.addSpacing(6)
        dv.addWidget(self.range_section)
        self.group_button = QPushButton("Group into categories…")
        self.group_button.setObjectName("groupButton")
        self.group_button.setToolTip("Make a new variable of ranges, such as age groups.")
        group_row = QHBoxLayout()
        group_row.addWidget(self.group_button)
        group_row.addStretch(1)
        self.group_section = QWidget()
        self.group_section.setLayout(group_row)
        group_row.setContentsMargins(0, 0, 0, 0)
        dv.addWidget(self.group_section)
        dv.addWidget(self.keying_section)
        dv.addSpacing(6)
        dv.addWidget(section_label("Privacy"))
        dv.addWidget(self.personal_check)
        dv.addWidget(self.personal_note)
        dv.addStretch(1)
        details_scroll = QScrollArea()
        details_scroll.setWidgetResizable(True)
        details_scroll.setFrameShape(QFrame.Shape.NoFrame)
        details_scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        details_scroll.setWidget(details)
        self._details = details

        # ---- preview
        self.wave_combo = QComboBox()
        self.wave_combo.setObjectName("previewWave")
        self.preview_title = QLabel("")
        self.preview = FrequencyPreviewWidget()
        self.preview_facts = QLabel("")
        self.preview_facts.setWordWrap(True)
        self.preview_missing = QLabel("")
        self.preview_missing.setWordWrap(True)
        self.preview_missing.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        right = QWidget()
        rv = QVBoxLayout(right)
        rv.setContentsMargins(6, 12, 12, 12)
        wave_row = QHBoxLayout()
        wave_row.addWidget(section_label("Answers in wave"))
        wave_row.addWidget(self.wave_combo)
        wave_row.addStretch(1)
        rv.addLayout(wave_row)
        rv.addWidget(self.preview_title)
        rv.addWidget(self.preview)
        rv.addWidget(self.preview_facts)
        rv.addWidget(self.preview_missing)
        rv.addWidget(
            muted_label(
                "Counts after the codebook and any cleaning decisions; they change as you edit."
            )
        )
        rv.addStretch(1)

        self.splitter = QSplitter(Qt.Orientation.Horizontal)
        self.splitter.addWidget(left)
        self.splitter.addWidget(details_scroll)
        self.splitter.addWidget(right)
        self.splitter.setSizes([330, 480, 330])
        self.splitter.setChildrenCollapsible(False)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.splitter)

        self._find_shortcut = QShortcut(QKeySequence.StandardKey.Find, self)
        self._connect_signals()
        self._fill_waves()
        self._update_list()
        first = self._first_variable_item()
        if first is not None:
            self.variable_tree.setCurrentItem(first)
        else:
            self._update_details()

    # ------------------------------------------------------------------ setup
    def _connect_signals(self) -> None:
        self.search_edit.textChanged.connect(self._on_search_edit_changed)
        self._find_shortcut.activated.connect(self._on_find_shortcut_activated)
        self.variable_tree.currentItemChanged.connect(self._on_variable_tree_current_changed)
        self.question_edit.editing_finished.connect(self._on_question_edit_finished)
        self.kind_combo.activated.connect(self._on_kind_combo_activated)
        self.group_combo.activated.connect(self._on_group_combo_changed)
        self.group_combo.lineEdit().editingFinished.connect(self._on_group_combo_changed)
        self.level_list.order_changed.connect(self._on_level_list_order_changed)
        self.level_list.itemChanged.connect(self._on_level_list_item_changed)
        self.level_up_button.clicked.connect(lambda: self._move_level(-1))
        self.level_down_button.clicked.connect(lambda: self._move_level(+1))
        self.level_fill_button.clicked.connect(self._on_level_fill_button_clicked)
        self.missing_add_button.clicked.connect(self._on_missing_add_button_clicked)
        self.missing_remove_button.clicked.connect(self._on_missing_remove_button_clicked)
        self.missing_table.itemChanged.connect(self._on_missing_table_changed)
        self.range_min_edit.editingFinished.connect(self._on_range_edit_finished)
        self.range_max_edit.editingFinished.connect(self._on_range_edit_finished)
        self.keying_group.idClicked.connect(self._on_keying_group_clicked)
        self.personal_check.clicked.connect(self._on_personal_check_clicked)
        self.wave_combo.currentIndexChanged.connect(self._on_wave_combo_changed)
        self.group_button.clicked.connect(self.open_grouping)
        self.export_button.clicked.connect(lambda: self.file_actions.export())
        self.apply_file_button.clicked.connect(lambda: self.file_actions.apply())

    # ------------------------------------------------------------------ data access
    @property
    def project(self) -> Any:
        return self._context.project

    def codebook(self) -> Codebook:
        return self.project.codebook(self.instrument_id)

    def current_variable(self) -> Variable | None:
        return self.codebook().get(self._current) if self._current else None

    def select_variable(self, name: str) -> bool:
        return select_named(self.variable_tree, name)

    # ------------------------------------------------------------------ change funnel
    def change_variable(
        self, name: str, transform: Callable[[Variable], Variable], label: str
    ) -> None:
        """Apply ``transform`` to the variable as stored, as one undoable codebook step.

        The transform runs on the writer thread against the codebook as it is then, so
        quick successive edits build on each other instead of overwriting one another.
        """
        project, inst = self.project, self.instrument_id

        def work(_progress: Any) -> Changes | None:
            codebook = project.codebook(inst)
            before = codebook[name]
            after = transform(before)
            if after == before:
                return None
            return project.set_codebook(inst, codebook.with_variable(after), label=label)

        self._clear_details_error()
        self._context.runner.run(work, on_failure=self._on_change_failed, writes=True, label=label)

    def _on_change_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for

        text, details = message_for(exc)
        if details:
            from desktopapp.errors import show_error

            show_error(self, exc)
        else:
            self.details_error.setText(text)
            self.details_error.show()
        self._update_details()  # put the widgets back to what is stored

    def _clear_details_error(self) -> None:
        self.details_error.hide()

    def project_changed(self, changes: Changes) -> None:
        if changes.codebook and self.instrument_id in changes.instrument_ids:
            self._update_list()
            if self._current is not None and (
                not changes.variables or self._current in changes.variables
            ):
                self._update_details()
            self._request_preview()
        elif changes.ledger or changes.structure:
            if changes.structure:
                self._fill_waves()
            self._request_preview()

    # ------------------------------------------------------------------ list
    def _first_variable_item(self) -> QTreeWidgetItem | None:
        return next(iter(self._variable_items()), None)

    def _variable_items(self) -> list[QTreeWidgetItem]:
        # Every variable row carries its name; a group heading carries none.
        return named_items(self.variable_tree)

    def _update_list(self) -> None:
        codebook = self.codebook()
        needle = self.search_edit.text().strip().lower()
        self.variable_tree.blockSignals(True)
        self.variable_tree.clear()
        groups: dict[str, QTreeWidgetItem] = {}
        shown = 0
        bold = QFont(self.variable_tree.font())
        bold.setBold(True)
        for var in codebook:
            hay = " ".join([var.name, var.question, var.kind.label, var.group or ""]).lower()
            if needle and needle not in hay:
                continue
            item = QTreeWidgetItem([var.name, var.kind.label])
            item.setIcon(0, kind_icon(var.kind))
            item.setData(0, NAME_ROLE, var.name)
            item.setToolTip(0, var.question or var.name)
            item.setForeground(1, self.palette().color(QPalette.ColorRole.PlaceholderText))
            if var.personal:
                item.setToolTip(1, "Personal data")
            if var.group:
                parent = groups.get(var.group)
                if parent is None:
                    parent = QTreeWidgetItem([var.group, ""])
                    parent.setFont(0, bold)
                    parent.setFlags(parent.flags() & ~Qt.ItemFlag.ItemIsSelectable)
                    self.variable_tree.addTopLevelItem(parent)
                    groups[var.group] = parent
                parent.addChild(item)
            else:
                self.variable_tree.addTopLevelItem(item)
            shown += 1
        for group, parent in groups.items():
            n = parent.childCount()
            parent.setText(1, f"{n} item{'s' if n != 1 else ''}")
            parent.setToolTip(0, f"Question group “{group}”")
        self.variable_tree.expandAll()
        self.variable_tree.blockSignals(False)
        total = len(codebook)
        self.count_label.setText(
            f"{shown} of {total} variables" if needle else f"{total} variables"
        )
        if self._current is not None and not self.select_variable(self._current):
            first = self._first_variable_item()
            if first is not None:
                self.variable_tree.setCurrentItem(first)

    def _on_find_shortcut_activated(self) -> None:
        self.search_edit.setFocus()
        self.search_edit.selectAll()

    def _on_search_edit_changed(self, _text: str) -> None:
        self._update_list()

    def _on_variable_tree_current_changed(self, item: QTreeWidgetItem | None, _prev: Any) -> None:
        name = item.data(0, NAME_ROLE) if item is not None else None
        if not name:
            return
        if name == self._current:
            return
        self._current = name
        self._clear_details_error()
        self._update_details()
        self._request_preview()

    # ------------------------------------------------------------------ details
    def _update_details(self) -> None:
        var = self.current_variable()
        self._details.setEnabled(var is not None)
        if var is None:
            self.name_label.setText("No variable selected")
            return
        self._filling = True
        try:
            self.name_label.setText(var.name)
            self.question_edit.setPlainText(var.question)
            self.kind_combo.setCurrentIndex(self.kind_combo.findData(var.kind.value))
            self.kind_hint.setText(KIND_HINTS[var.kind])
            groups = sorted(self.codebook().groups())
            self.group_combo.clear()
            self.group_combo.addItem("")
            self.group_combo.addItems(groups)
            self.group_combo.setCurrentText(var.group or "")
            show_levels = var.kind.has_levels or (
                var.kind is Kind.MULTISELECT and bool(var.delimiter)
            )
            self.levels_section.setVisible(show_levels)
            self.level_list.set_levels(var.levels)
            rows = max(3, min(8, len(var.levels)))
            self.level_list.setFixedHeight(
                rows * self.level_list.sizeHintForRow(0) + 8 if var.levels else 60
            )
            self.missing_table.setRowCount(0)
            for code, reason in var.missing_codes.items():
                self._add_missing_row(code, reason)
            self._update_missing_height()
            numeric = var.kind in (Kind.NUMERIC, Kind.RANKING)
            self.range_section.setVisible(numeric)
            self.group_section.setVisible(var.kind is Kind.NUMERIC)
            lo, hi = var.range if var.range is not None else (None, None)
            self.range_min_edit.setText("" if lo is None else _num_plain(lo))
            self.range_max_edit.setText("" if hi is None else _num_plain(hi))
            self.range_note.setText("")
            self.keying_section.setVisible(var.kind is Kind.LIKERT)
            {"positive": self.keying_positive, "negative": self.keying_negative}.get(
                var.keying or "", self.keying_unset
            ).setChecked(True)
            self.personal_check.setChecked(var.personal)
        finally:
            self._filling = False

    def _on_question_edit_finished(self) -> None:
        var = self.current_variable()
        text = " ".join(self.question_edit.toPlainText().split())
        if self._filling or var is None or text == var.question:
            return
        self.change_variable(
            var.name, lambda v: replace(v, question=text), f"Edit the question text of {var.name}"
        )

    def _on_kind_combo_activated(self, _index: int) -> None:
        var = self.current_variable()
        if self._filling or var is None:
            return
        kind = Kind(self.kind_combo.currentData())
        if kind is var.kind:
            return
        project = self.project
        waves = project.waves(self.instrument_id)

        def transform(v: Variable) -> Variable:
            changes: dict[str, Any] = {"kind": kind}
            if kind.has_levels and not v.levels and waves:
                raw = project.raw_table(waves[-1].id)
                if v.name in raw.columns:
                    changes["levels"] = levels_from_data(v, raw[v.name])
            return replace(v, **changes)

        self.change_variable(var.name, transform, f"Make {var.name} {kind.label.lower()}")

    def _on_group_combo_changed(self, *_args: Any) -> None:
        var = self.current_variable()
        if self._filling or var is None:
            return
        group = self.group_combo.currentText().strip() or None
        if group == var.group:
            return
        label = (
            f"Put {var.name} in the group {group}" if group else f"Take {var.name} out of its group"
        )
        self.change_variable(var.name, lambda v: replace(v, group=group), label)

    def _on_level_list_order_changed(self, order: list[str]) -> None:
        var = self.current_variable()
        if self._filling or var is None or tuple(order) == var.levels:
            return
        self.change_variable(
            var.name, lambda v: reorder_levels(v, order), f"Reorder the answers of {var.name}"
        )

    def _move_level(self, step: int) -> None:
        row = self.level_list.currentRow()
        labels = self.level_list.labels()
        target = row + step
        if row < 0 or not 0 <= target < len(labels):
            return
        labels[row], labels[target] = labels[target], labels[row]
        self._on_level_list_order_changed(labels)
        self.level_list.setCurrentRow(target)

    def rename_level(self, old: str, new: str) -> None:
        var = self.current_variable()
        if var is None or old == new:
            return
        self.change_variable(
            var.name,
            lambda v: rename_level(v, old, new),
            f"Rename the answer “{old}” of {var.name} to “{new}”",
        )

    def _on_level_list_item_changed(self, item: QListWidgetItem) -> None:
        if self._filling:
            return
        old = item.data(NAME_ROLE)
        new = item.text().strip()
        if old and new != old:
            self.rename_level(old, new)

    def _on_level_fill_button_clicked(self) -> None:
        var = self.current_variable()
        waves = self.project.waves(self.instrument_id)
        if var is None or not waves:
            return
        project = self.project

        def transform(v: Variable) -> Variable:
            raw = project.raw_table(waves[-1].id)
            found = levels_from_data(v, raw[v.name]) if v.name in raw.columns else ()
            kept = [level for level in v.levels]
            return replace(v, levels=tuple(kept + [x for x in found if x not in kept]))

        self.change_variable(var.name, transform, f"List the answers of {var.name} from the data")

    # ---- missing codes
    def _add_missing_row(self, code: str, reason: MissingReason) -> None:
        row = self.missing_table.rowCount()
        self.missing_table.insertRow(row)
        item = QTableWidgetItem(code)
        item.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        self.missing_table.setItem(row, 0, item)
        combo = QComboBox()
        for r in CODE_REASONS:
            combo.addItem(r.label, r.value)
        combo.setCurrentIndex(max(0, combo.findData(reason.value)))
        combo.activated.connect(self._on_missing_table_changed)
        self.missing_table.setCellWidget(row, 1, combo)

    def _update_missing_height(self) -> None:
        # As tall as its rows (at least two), so an empty table does not fill the pane.
        table = self.missing_table
        rows = max(2, table.rowCount())
        row_h = table.verticalHeader().defaultSectionSize()
        table.setFixedHeight(table.horizontalHeader().height() + rows * row_h + 4)

    def missing_codes_in_table(self) -> dict[str, MissingReason]:
        out: dict[str, MissingReason] = {}
        for row in range(self.missing_table.rowCount()):
            item = self.missing_table.item(row, 0)
            code = item.text().strip() if item is not None else ""
            if not code:
                continue
            combo: QComboBox = self.missing_table.cellWidget(row, 1)
            out[code] = MissingReason(combo.currentData())
        return out

    def _on_missing_table_changed(self, *_args: Any) -> None:
        var = self.current_variable()
        if self._filling or var is None:
            return
        codes = self.missing_codes_in_table()
        if codes == var.missing_codes:
            return
        self.change_variable(
            var.name,
            lambda v: replace(v, missing_codes=codes),
            f"Change the missing codes of {var.name}",
        )

    def _on_missing_add_button_clicked(self) -> None:
        self._filling = True
        self._add_missing_row("", MissingReason.DECLINED)
        self._update_missing_height()
        self._filling = False
        row = self.missing_table.rowCount() - 1
        self.missing_table.setCurrentCell(row, 0)
        self.missing_table.editItem(self.missing_table.item(row, 0))

    def _on_missing_remove_button_clicked(self) -> None:
        row = self.missing_table.currentRow()
        if row < 0:
            return
        self.missing_table.removeRow(row)
        self._on_missing_table_changed()

    # ---- range, keying, personal data
    def _on_range_edit_finished(self) -> None:
        var = self.current_variable()
        if self._filling or var is None:
            return
        lo_text = self.range_min_edit.text().strip()
        hi_text = self.range_max_edit.text().strip()
        if bool(lo_text) != bool(hi_text):
            self.range_note.setText("Give both the lowest and the highest plausible value.")
            return
        self.range_note.setText("")
        try:
            rng = (_parse_num(lo_text), _parse_num(hi_text)) if lo_text else None
        except ValueError:
            self.range_note.setText("Write the range as plain numbers, such as 18 and 64.")
            return
        if rng == var.range:
            return
        label = (
            f"Set the plausible values of {var.name} to {_num_plain(rng[0])}–{_num_plain(rng[1])}"
            if rng
            else f"Clear the plausible values of {var.name}"
        )
        self.change_variable(var.name, lambda v: replace(v, range=rng), label)

    def _on_keying_group_clicked(self, button_id: int) -> None:
        var = self.current_variable()
        if self._filling or var is None:
            return
        keying = {0: "positive", 1: "negative"}.get(button_id)
        if keying == var.keying:
            return
        words = {"positive": "positively worded", "negative": "negatively worded"}
        label = (
            f"Mark {var.name} as {words[keying]}"
            if keying
            else f"Clear the wording mark of {var.name}"
        )
        self.change_variable(var.name, lambda v: replace(v, keying=keying), label)

    def _on_personal_check_clicked(self, checked: bool) -> None:
        var = self.current_variable()
        if self._filling or var is None or checked == var.personal:
            return
        label = (
            f"Mark {var.name} as personal data"
            if checked
            else f"Unmark {var.name} as personal data"
        )
        self.change_variable(var.name, lambda v: replace(v, personal=checked), label)

    # ------------------------------------------------------------------ preview
    def _fill_waves(self) -> None:
        current = self.wave_combo.currentData()
        self.wave_combo.blockSignals(True)
        self.wave_combo.clear()
        waves = self.project.waves(self.instrument_id)
        for wave in waves:
            self.wave_combo.addItem(wave.label, wave.id)
        index = self.wave_combo.findData(current) if current is not None else -1
        self.wave_combo.setCurrentIndex(index if index >= 0 else len(waves) - 1)
        self.wave_combo.blockSignals(False)

    def _on_wave_combo_changed(self, _index: int) -> None:
        self._request_preview()

    def _request_preview(self) -> None:
        var = self.current_variable()
        wave_id = self.wave_combo.currentData()
        if var is None or wave_id is None:
            self._show_preview(None)
            return
        project, name = self.project, var.name

        def work(_progress: Any) -> Frequencies | None:
            from core.working import working_data

            working = working_data(project, wave_id)
            if name not in working.values.columns:
                return None
            values, reasons = working.analysed()
            return frequencies(working.codebook[name], values[name], reasons[name])

        self._context.runner.run(
            work,
            on_success=self._show_preview,
            on_failure=self._on_preview_failed,
            key=f"codebook-preview:{id(self)}",
            show_progress=False,
        )

    def _on_preview_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for

        self._show_preview(None)
        self.preview_facts.setText(message_for(exc)[0])

    def _show_preview(self, data: Frequencies | None) -> None:
        if data is None:
            self.preview.set_frequencies(Frequencies())
            self.preview_title.setText("")
            self.preview_facts.setText(
                "This wave has no column for this variable."
                if self.wave_combo.count()
                else "Import a wave to see the answers."
            )
            self.preview_missing.setText("")
            return
        self.preview.set_frequencies(data)
        self.preview_title.setText(
            f"{data.title} — {data.base:,} answered" if data.title else f"{data.base:,} answered"
        )
        self.preview_facts.setText("   ·   ".join(data.facts))
        self.preview_facts.setVisible(bool(data.facts))
        if data.missing:
            self.preview_missing.setText(
                "No usable answer: "
                + "; ".join(f"{label.lower()} {n:,}" for label, n in data.missing)
            )
        else:
            self.preview_missing.setText("Every respondent gave a usable answer.")

    # ------------------------------------------------------------------ grouping, files
    def open_grouping(self) -> Any:
        """Open "Group into categories…" for the selected number question."""
        from desktopapp.grouping_dialog import open_grouping_dialog

        var = self.current_variable()
        if var is None or var.kind is not Kind.NUMERIC:
            return None
        dialog = open_grouping_dialog(
            self,
            self.project,
            self._context.runner,
            self.instrument_id,
            var.name,
            self.wave_combo.currentData(),
        )
        dialog.accepted.connect(lambda: self.select_variable(dialog.new_name()))
        return dialog

    @property
    def file_actions(self) -> Any:
        """Export and apply codebook files (created on first use)."""
        if getattr(self, "_file_actions", None) is None:
            from desktopapp.codebook_files import CodebookFileActions

            self._file_actions = CodebookFileActions(self, self._context, self.instrument_id)
        return self._file_actions

    def shutdown(self) -> None:
        self.variable_tree.blockSignals(True)


KIND_HINTS = {
    Kind.NUMERIC: "Counted or measured: age, hours, credits. Means and medians make sense.",
    Kind.CATEGORICAL: "One answer from a list with no order, such as a track or a cohort.",
    Kind.LIKERT: "A point on an agreement or frequency scale; the order of answers matters.",
    Kind.ORDINAL: "Ordered groups, such as income bands; no agree/disagree middle point.",
    Kind.RANKING: "One column per option holding its rank (1 = first).",
    Kind.MULTISELECT: "Every option that applies; percentages can add up to more than 100.",
    Kind.TEXT: "Free text in the respondent's words. Not tabulated.",
    Kind.IDENTIFIER: "Tells respondents apart; used to find duplicates. Never tabulated.",
    Kind.DATE: "A date or time, such as when the survey was started.",
}


def _num_plain(x: float) -> str:
    return str(int(x)) if float(x).is_integer() else repr(float(x))


def _parse_num(text: str) -> float:
    return float(text.replace(",", "."))
