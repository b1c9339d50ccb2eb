"""The "Compare waves" node of a questionnaire with two or more waves.

Three tabs, all computed on a worker (``core.waves``), over two waves chosen at the top
(the two latest by default):

* **Side by side** — one question's answers in both waves: counts and % per wave, the
  change in percentage points, each wave's base, small counts hidden by the core, and the
  waves chart beside the table. Changes in wording between the waves are shown above the
  table. "Keep for report" keeps the comparison's specification; Copy puts the table or
  the chart on the clipboard in the same three formats as the tables view.
* **Same people** — respondents linked by identifier: the match rate both ways, how the
  people found in both waves differ from the others on the questions both waves share (with
  the caution that this describes, and proves no cause), and for an ordered question the
  transition table (answer in one wave against answer in the other), with how many moved
  up, stayed or moved down and the share who improved.
* **Kept results for another wave** — every result in the report outline recomputed for a
  chosen wave, alone or as the change from another wave; each can be opened, and "Keep this
  version" adds it to the outline.
"""

from __future__ import annotations

import contextlib
import textwrap
from collections.abc import Callable
from dataclasses import replace
from html import escape
from typing import Any

from PySide6.QtCore import QEvent, QPointF, QRectF, Qt
from PySide6.QtGui import QAction, QBrush, QColor, QFont, QKeySequence, QPainter, QPalette
from PySide6.QtWidgets import (
    QAbstractItemView,
    QApplication,
    QComboBox,
    QFrame,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QScrollArea,
    QSpinBox,
    QSplitter,
    QTableView,
    QTableWidget,
    QTableWidgetItem,
    QTabWidget,
    QTreeWidget,
    QTreeWidgetItem,
    QVBoxLayout,
    QWidget,
)

from core.codebook import Codebook
from core.errors import PlaincountError
from core.project import Changes, Wave
from core.tables.captions import short_title
from core.tables.result import TableResult
from core.tables.spec import TableSpec
from desktopapp.icons import kind_icon
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, muted_label, section_label, title_label
from desktopapp.views.tabulation_view import (
    CHART_DPI,
    SUPPRESSION_OFF_CAUTION,
    Entry,
    ResultTableModel,
    ResultTableView,
    result_without_notes,
    tabulation_entries,
)
from desktopapp.widgets.question_list import (
    NAME_ROLE,
    filter_tree,
    named_items,
    question_tree,
    search_box,
    select_named,
)
from desktopapp.widgets.result_panel import (
    keep_copy_row,
    kept_message,
    put_chart_on_clipboard,
    put_table_on_clipboard,
)

CAUTION_COLOUR = "#8a4b00"
HIDDEN = "–"
HIDDEN_TIP = (
    "Hidden: a small group of people who could be recognised, or a figure that would let "
    "such a group be worked out."
)
TAB_SIDE, TAB_PEOPLE, TAB_KEPT = 0, 1, 2
TRANSITION_WRAP = 12  # characters per header line of a transition table: answers wrap
RIGHT = Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
ALONE = ""  # the "compare with" choice of the kept tab meaning: the chosen wave alone


def register(registry: Any) -> None:
    from desktopapp.icons import NODE_PAINTERS

    NODE_PAINTERS.setdefault(NodeType.COMPARE, _paint_compare_icon)
    registry.add(NodeType.COMPARE, WavesView)


def _paint_compare_icon(p: QPainter) -> None:
    # Two pairs of columns: one wave pale, the next strong.
    p.setPen(Qt.PenStyle.NoPen)
    pale, strong = QColor("#9ccbe8"), QColor("#0072B2")
    for x, h_pale, h_strong in ((1.5, 6.0, 9.0), (8.5, 10.0, 7.0)):
        p.setBrush(pale)
        p.drawRect(QRectF(x, 14 - h_pale, 3, h_pale))
        p.setBrush(strong)
        p.drawRect(QRectF(x + 3, 14 - h_strong, 3, h_strong))
    p.setPen(QColor("#3c4043"))
    p.drawLine(QPointF(0.5, 14.5), QPointF(15.5, 14.5))


# ---------------------------------------------------------------------- what can be compared
def comparable_entries(codebook: Codebook) -> list[Entry]:
    """Questions whose answers can be put side by side across waves, in questionnaire order.

    Single questions with answer categories (categories, rating scales, ordered answers);
    a rating battery is listed as a heading with its items beneath, each compared alone
    (the core compares one question at a time).
    """
    out: list[Entry] = []
    for entry in tabulation_entries(codebook):
        if entry.family in ("categorical", "likert") and not entry.is_group:
            out.append(entry)
        elif entry.family == "battery":
            items = tuple(m for m in entry.items if m.kind.has_levels)
            if items:
                out.append(replace(entry, items=items))
    return out


def ordered_questions(codebook: Codebook) -> list[Any]:
    """Questions with ordered answers: the ones a transition table can be made for."""
    return [v for v in codebook if v.kind.has_levels and v.kind.ordered]


def default_transition(codebook: Codebook) -> str | None:
    """The ordered question a transition table starts on: the last rating-scale question
    outside a battery (an overall rating usually closes a questionnaire), else the first
    ordered question."""
    from core.kinds import Kind

    ordered = ordered_questions(codebook)
    single = [v for v in ordered if v.kind is Kind.LIKERT and not v.group]
    if single:
        return single[-1].name
    return ordered[0].name if ordered else None


def _caution(label: QLabel) -> QLabel:
    label.setWordWrap(True)
    label.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
    return label


def _notes_html(notes: list[str]) -> str:
    return "<br>".join(f"• {escape(n)}" for n in notes)


def _scrolling(widget: QWidget) -> QScrollArea:
    area = QScrollArea()
    area.setWidgetResizable(True)
    area.setFrameShape(QFrame.Shape.NoFrame)
    area.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
    area.setWidget(widget)
    return area


def _notes_label(name: str) -> QLabel:
    label = QLabel("")
    label.setObjectName(name)
    label.setWordWrap(True)
    label.setTextFormat(Qt.TextFormat.RichText)
    label.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
    label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    label.setForegroundRole(QPalette.ColorRole.PlaceholderText)
    return label


def _plain_table(name: str) -> QTableWidget:
    table = QTableWidget()
    table.setObjectName(name)
    table.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
    table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    table.setWordWrap(True)
    table.verticalHeader().setVisible(False)
    table.setShowGrid(False)
    table.horizontalHeader().setHighlightSections(False)
    table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
    table.setStyleSheet(
        f"QTableWidget#{name}::item {{ padding: 2px 6px; border-bottom: 1px solid #e4e4e4; }}"
    )
    return table


def _result_table(name: str) -> tuple[ResultTableModel, ResultTableView]:
    """A table of a :class:`TableResult`, styled as in the tables view."""
    model = ResultTableModel()
    view = ResultTableView()
    view.setObjectName(name)
    view.setModel(model)
    model.setParent(view)
    view.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
    view.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    view.setWordWrap(True)
    view.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
    view.verticalHeader().setVisible(False)
    view.horizontalHeader().setDefaultAlignment(
        Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
    )
    view.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
    view.horizontalHeader().setHighlightSections(False)
    view.setShowGrid(False)
    view.setStyleSheet(
        f"QTableView#{name}::item {{ padding: 2px 6px; border-bottom: 1px solid #e4e4e4; }}"
    )
    return model, view


def _fit(table: QTableView, first_max: int = 240, other_max: int = 110) -> None:
    """Columns as wide as their contents, a long first column wrapped, rows to their text."""
    table.resizeColumnsToContents()
    header = table.horizontalHeader()
    count = table.model().columnCount() if table.model() is not None else 0
    if count:
        header.resizeSection(0, min(header.sectionSize(0), first_max))
    for col in range(1, count):
        header.resizeSection(col, min(max(header.sectionSize(col), 48), other_max))
    table.resizeRowsToContents()


def _chart_widget(name: str) -> Any:
    from desktopapp.widgets.figure_canvas import FigureCanvasWidget

    chart = FigureCanvasWidget(dpi=CHART_DPI, minimum=(320, 260))
    chart.setObjectName(name)
    return chart


def _draw_waves(chart: Any, result: TableResult | None, chart_type: str | None) -> None:
    if result is None or chart_type is None:
        chart.set_drawer(None, "" if result is None else "This result has no chart.")
        return
    from core.charts import draw

    # The notes are printed beside the chart; a copied chart carries them.
    shown = result_without_notes(result)
    chart.set_drawer(lambda figure: draw(shown, figure, chart_type))


class ResultPane(QWidget):
    """A result laid out for a short, wide comparison table: the table with its base on
    top (as tall as its rows), the chart and the notes side by side underneath."""

    def __init__(self, name: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.model, self.table = _result_table(f"{name}Table")
        self.base_label = QLabel("")
        self.base_label.setObjectName(f"{name}Base")
        self.base_label.setWordWrap(True)
        self.notes_label = _notes_label(f"{name}Notes")
        self.chart = _chart_widget(f"{name}Chart")
        top = QWidget()
        tv = QVBoxLayout(top)
        tv.setContentsMargins(0, 0, 0, 4)
        tv.addWidget(self.table, 1)
        tv.addWidget(self.base_label)
        self.lower = QSplitter(Qt.Orientation.Horizontal)
        self.lower.setObjectName(f"{name}LowerSplitter")
        self.lower.addWidget(self.chart)
        notes = _scrolling(self.notes_label)
        notes.setMinimumWidth(200)
        self.lower.addWidget(notes)
        self.lower.setChildrenCollapsible(False)
        self.lower.setStretchFactor(0, 3)
        self.lower.setStretchFactor(1, 2)
        self.lower.setSizes([600, 400])
        self.splitter = QSplitter(Qt.Orientation.Vertical)
        self.splitter.setObjectName(f"{name}Splitter")
        self.splitter.addWidget(top)
        self.splitter.addWidget(self.lower)
        self.splitter.setChildrenCollapsible(False)
        self.splitter.installEventFilter(self)
        self._table_height = 0
        self._moved = False  # once the evaluator drags the divider, it is left alone
        self.splitter.splitterMoved.connect(self._on_splitter_moved)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.splitter)

    def result(self) -> TableResult | None:
        return self.model.result()

    def show_result(
        self, result: TableResult | None, chart_type: str | None, notes: list[str] | None = None
    ) -> None:
        """Show ``result`` (None: empty) with its chart; ``notes`` replaces its notes."""
        self.model.set_result(result)
        if result is None:
            self.base_label.setText("")
            self.notes_label.setText("")
            self.chart.set_drawer(None, "")
            self._table_height = 0
            return
        _fit(self.table, first_max=260, other_max=96)
        table = self.table
        rows = table.verticalHeader().length()
        head = table.horizontalHeader().sizeHint().height()
        self._table_height = head + rows + 2 * table.frameWidth() + 4
        if table.horizontalHeader().length() + 2 * table.frameWidth() > self.width():
            self._table_height += table.horizontalScrollBar().sizeHint().height()
        self.base_label.setText(result.base)
        self.notes_label.setText(_notes_html(result.notes if notes is None else notes))
        if chart_type is None:
            self.chart.set_drawer(None, "Kept as a table only.")
        else:
            _draw_waves(self.chart, result, chart_type)
        self._apply_split()

    def _apply_split(self) -> None:
        total = self.splitter.height() - self.splitter.handleWidth()
        if self._moved or not self._table_height or total < 300:
            return  # not laid out yet
        base = self.base_label.sizeHint().height() + 8
        top = min(self._table_height + base, int(total * 0.5))
        self.splitter.setSizes([top, total - top])

    def _on_splitter_moved(self, _pos: int, _index: int) -> None:
        self._moved = True

    def eventFilter(self, watched: Any, event: Any) -> bool:  # noqa: N802 - Qt override
        if watched is self.splitter and event.type() == QEvent.Type.Resize:
            self._apply_split()
        return super().eventFilter(watched, event)


# ---------------------------------------------------------------------- the view
class WavesView(QWidget):
    """Compare two waves of one questionnaire: side by side, same people, kept results."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("wavesView")
        self._context = context
        self.node = node
        self.instrument_id: int = node.instrument_id  # type: ignore[assignment]
        self._filling = False
        self._stale = {TAB_SIDE: True, TAB_PEOPLE: True, TAB_KEPT: True}
        self._result: TableResult | None = None
        self._wording: list[str] = []
        self._match: Any = None
        self._transition: Any = None
        self._kept: list[tuple[Any, TableResult | None, str]] = []
        self._kept_wave = ""
        self._kept_with = ALONE
        self._entries: list[Entry] = []
        self.last_message = ""
        self.error_text = ""
        self._screenshot_kept: list[int] = []  # results kept only for a screenshot

        instrument = self.project.instrument(self.instrument_id).name
        self.heading = title_label(f"Compare waves — {instrument}")
        self.first_combo = QComboBox()
        self.first_combo.setObjectName("firstWaveCombo")
        self.second_combo = QComboBox()
        self.second_combo.setObjectName("secondWaveCombo")
        self.waves_hint = muted_label(
            "Changes run from the first wave to the second: for entry and exit, or last "
            "year and this year.",
            wrap=True,
        )
        bar = QHBoxLayout()
        bar.addWidget(QLabel("Compare wave"))
        bar.addWidget(self.first_combo)
        bar.addWidget(QLabel("with wave"))
        bar.addWidget(self.second_combo)
        bar.addSpacing(12)
        bar.addWidget(self.waves_hint, 1)

        self.tabs = QTabWidget()
        self.tabs.setObjectName("wavesTabs")
        self.tabs.setDocumentMode(True)
        self.tabs.addTab(self._build_side(), "Side by side")
        self.tabs.addTab(self._build_people(), "Same people")
        self.tabs.addTab(self._build_kept(), "Kept results for another wave")

        layout = QVBoxLayout(self)
        layout.setContentsMargins(12, 10, 12, 8)
        layout.setSpacing(6)
        layout.addWidget(self.heading)
        layout.addLayout(bar)
        layout.addWidget(self.tabs, 1)

        self._fill_waves()
        self._fill_questions()
        self._fill_transition_questions()
        self._connect_signals()
        first = self._selectable_items()
        if first:
            self.variable_tree.setCurrentItem(first[0])
        else:
            self._show_side_empty("This questionnaire has no question with answer categories.")
        self._refresh_current_tab()

    # ------------------------------------------------------------------ building
    def _build_side(self) -> QWidget:
        self.search_edit = search_box("wavesSearch", "Find a question by name or wording")
        self.variable_tree = question_tree("wavesVariables")
        picker = QWidget()
        picker.setMinimumWidth(200)
        pv = QVBoxLayout(picker)
        pv.setContentsMargins(0, 8, 6, 0)
        pv.addWidget(section_label("Question"))
        pv.addWidget(self.search_edit)
        pv.addWidget(self.variable_tree, 1)
        pv.addWidget(
            muted_label(
                "Questions with answer categories. A rating battery is compared item by item."
            )
        )

        self.min_cell_spin = QSpinBox()
        self.min_cell_spin.setObjectName("wavesMinCellSpin")
        self.min_cell_spin.setRange(0, 100)
        self.min_cell_spin.setSpecialValueText("Off")
        self.min_cell_spin.setMaximumWidth(90)
        self.min_cell_spin.setValue(self._project_min_cell())
        self.min_cell_spin.setToolTip(
            "Counts from 1 up to this number minus one are hidden in both waves so that small "
            "groups of people cannot be recognised. 0 turns hiding off."
        )
        self.option_caution = _caution(QLabel(SUPPRESSION_OFF_CAUTION))
        self.option_caution.setObjectName("wavesOptionCaution")
        self.option_caution.hide()
        options = QHBoxLayout()
        options.addWidget(QLabel("Hide counts below"))
        options.addWidget(self.min_cell_spin)
        options.addWidget(self.option_caution, 1)
        options.addStretch(0)

        self.title_label = QLabel("")
        self.title_label.setObjectName("comparisonTitle")
        font = QFont(self.title_label.font())
        font.setBold(True)
        font.setPointSizeF(font.pointSizeF() * 1.2)
        self.title_label.setFont(font)
        self.title_label.setWordWrap(True)
        self.title_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.wording_label = _caution(QLabel(""))
        self.wording_label.setObjectName("wordingChanges")
        self.wording_label.setTextFormat(Qt.TextFormat.RichText)
        self.wording_label.hide()
        self.status_label = muted_label("")
        self.status_label.setObjectName("comparisonStatus")
        self.status_label.hide()

        self.pane = ResultPane("comparison")
        self.pane.setObjectName("comparisonPane")
        # Short names for what tests and the copy actions use.
        self.model, self.table, self.chart = self.pane.model, self.pane.table, self.pane.chart
        self.base_label, self.notes_label = self.pane.base_label, self.pane.notes_label
        self.chart.canvas.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        self.chart.canvas.setToolTip("Click the chart, then press Ctrl+C to copy it as a picture.")

        self.keep_row = keep_copy_row(
            prefix="waves",
            finding_example="More participants were satisfied in 2027.",
            keep_tip=(
                "Add this comparison and its chart to the report outline, with the finding "
                "sentence. The numbers are recomputed when the data change."
            ),
            chart_tip=(
                "Put the chart on the clipboard as a 1920 × 1080 picture, with the base underneath."
            ),
        )
        self.finding_edit, self.keep_button = self.keep_row.finding_edit, self.keep_row.keep_button
        self.copy_table_button = self.keep_row.copy_table_button
        self.copy_chart_button = self.keep_row.copy_chart_button
        bottom = self.keep_row.layout

        results = QWidget()
        results.setObjectName("comparisonResults")
        rv = QVBoxLayout(results)
        rv.setContentsMargins(8, 8, 0, 0)
        rv.setSpacing(6)
        rv.addLayout(options)
        rv.addWidget(self.title_label)
        rv.addWidget(self.wording_label)
        rv.addWidget(self.status_label)
        rv.addWidget(self.pane, 1)
        rv.addLayout(bottom)
        self._side_results = results

        self.copy_action = QAction("Copy", self)
        self.copy_action.setObjectName("wavesCopyAction")
        self.copy_action.setShortcut(QKeySequence(QKeySequence.StandardKey.Copy))
        self.copy_action.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
        results.addAction(self.copy_action)

        self.side_splitter = QSplitter(Qt.Orientation.Horizontal)
        self.side_splitter.setObjectName("sideBySideSplitter")
        self.side_splitter.addWidget(picker)
        self.side_splitter.addWidget(results)
        self.side_splitter.setStretchFactor(0, 0)
        self.side_splitter.setStretchFactor(1, 1)
        self.side_splitter.setSizes([230, 1000])
        self.side_splitter.setChildrenCollapsible(False)
        return self.side_splitter

    def _build_people(self) -> QWidget:
        # ---- left: who was found in both waves, and how the others differ
        self.match_label = QLabel("")
        self.match_label.setObjectName("matchRate")
        self.match_label.setWordWrap(True)
        font = QFont(self.match_label.font())
        font.setPointSizeF(font.pointSizeF() * 1.1)
        self.match_label.setFont(font)
        self.match_label.setTextFormat(Qt.TextFormat.RichText)
        self.compared_combo = QComboBox()
        self.compared_combo.setObjectName("comparedInCombo")
        self.compared_combo.setToolTip(
            "Whose answers to describe: the first wave's respondents (who came back and who "
            "did not), or the second wave's (who was there before and who is new)."
        )
        self.differ_caution = _caution(QLabel(""))
        self.differ_caution.setObjectName("matchCaution")
        self.differ_table = _plain_table("matchComparison")
        self.differ_notes = _notes_label("matchNotes")
        within = QHBoxLayout()
        within.addWidget(QLabel("Describe the respondents of"))
        within.addWidget(self.compared_combo)
        within.addStretch(1)
        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(0, 8, 8, 0)
        lv.addWidget(section_label("Found in both waves"))
        lv.addWidget(self.match_label)
        lv.addSpacing(6)
        lv.addWidget(section_label("How the people found in both waves differ from the others"))
        lv.addLayout(within)
        lv.addWidget(self.differ_caution)
        lv.addWidget(self.differ_table, 3)
        lv.addWidget(_scrolling(self.differ_notes), 1)

        # ---- right: how answers to an ordered question moved
        self.transition_combo = QComboBox()
        self.transition_combo.setObjectName("transitionCombo")
        self.transition_combo.setSizeAdjustPolicy(
            QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon
        )
        self.transition_combo.setMinimumContentsLength(24)
        self.transition_title = QLabel("")
        self.transition_title.setObjectName("transitionTitle")
        self.transition_title.setWordWrap(True)
        bold = QFont(self.transition_title.font())
        bold.setBold(True)
        self.transition_title.setFont(bold)
        self.transition_table = _plain_table("transitionTable")
        self.transition_summary = QLabel("")
        self.transition_summary.setObjectName("transitionSummary")
        self.transition_summary.setWordWrap(True)
        self.transition_summary.setTextFormat(Qt.TextFormat.RichText)
        self.transition_notes = _notes_label("transitionNotes")
        pick = QHBoxLayout()
        pick.addWidget(QLabel("Question"))
        pick.addWidget(self.transition_combo, 1)
        right = QWidget()
        rv = QVBoxLayout(right)
        rv.setContentsMargins(8, 8, 0, 0)
        rv.addWidget(section_label("How answers moved"))
        rv.addLayout(pick)
        rv.addWidget(self.transition_title)
        rv.addWidget(self.transition_table, 3)
        rv.addWidget(self.transition_summary)
        rv.addWidget(_scrolling(self.transition_notes), 1)

        self.people_splitter = QSplitter(Qt.Orientation.Horizontal)
        self.people_splitter.setObjectName("samePeopleSplitter")
        self.people_splitter.addWidget(left)
        self.people_splitter.addWidget(right)
        self.people_splitter.setChildrenCollapsible(False)
        self.people_splitter.setStretchFactor(0, 1)
        self.people_splitter.setStretchFactor(1, 1)
        self.people_splitter.setSizes([540, 560])
        return self.people_splitter

    def _build_kept(self) -> QWidget:
        self.kept_wave_combo = QComboBox()
        self.kept_wave_combo.setObjectName("keptWaveCombo")
        self.kept_with_combo = QComboBox()
        self.kept_with_combo.setObjectName("keptCompareCombo")
        top = QHBoxLayout()
        top.addWidget(QLabel("Recompute for wave"))
        top.addWidget(self.kept_wave_combo)
        top.addWidget(QLabel("shown as"))
        top.addWidget(self.kept_with_combo)
        top.addStretch(1)

        self.kept_list = QTreeWidget()
        self.kept_list.setObjectName("keptList")
        self.kept_list.setColumnCount(2)
        self.kept_list.setHeaderLabels(["Kept result", "Status"])
        self.kept_list.setRootIsDecorated(False)
        self.kept_list.setUniformRowHeights(True)
        self.kept_list.setWordWrap(False)
        self.kept_list.header().setStretchLastSection(True)
        self.kept_list.setColumnWidth(0, 200)
        self.kept_status = muted_label("")
        self.kept_status.setObjectName("keptStatus")
        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(0, 8, 8, 0)
        lv.addWidget(self.kept_list, 1)
        lv.addWidget(self.kept_status)

        self.kept_title = QLabel("")
        self.kept_title.setObjectName("keptTitle")
        self.kept_title.setWordWrap(True)
        bold = QFont(self.kept_title.font())
        bold.setBold(True)
        bold.setPointSizeF(bold.pointSizeF() * 1.1)
        self.kept_title.setFont(bold)
        self.kept_message = _caution(QLabel(""))
        self.kept_message.setObjectName("keptMessage")
        self.kept_message.hide()
        self.kept_pane = ResultPane("kept")
        self.kept_pane.setObjectName("keptPane")
        self.kept_model, self.kept_chart = self.kept_pane.model, self.kept_pane.chart
        self.keep_version_button = QPushButton("Keep this version")
        self.keep_version_button.setObjectName("keepVersionButton")
        self.keep_version_button.setToolTip(
            "Add this version to the end of the report outline; the result it was made from "
            "stays as it is."
        )
        self.keep_version_button.setEnabled(False)
        buttons = QHBoxLayout()
        buttons.addStretch(1)
        buttons.addWidget(self.keep_version_button)
        right = QWidget()
        rv = QVBoxLayout(right)
        rv.setContentsMargins(8, 8, 0, 0)
        rv.addWidget(self.kept_title)
        rv.addWidget(self.kept_message)
        rv.addWidget(self.kept_pane, 1)
        rv.addLayout(buttons)

        split = QSplitter(Qt.Orientation.Horizontal)
        split.setObjectName("keptSplitter")
        split.addWidget(left)
        split.addWidget(right)
        split.setChildrenCollapsible(False)
        split.setStretchFactor(0, 0)
        split.setStretchFactor(1, 1)
        split.setSizes([280, 850])

        page = QWidget()
        page.setObjectName("keptPage")
        pv = QVBoxLayout(page)
        pv.setContentsMargins(0, 8, 0, 0)
        pv.addLayout(top)
        pv.addWidget(split, 1)
        return page

    def _connect_signals(self) -> None:
        self.first_combo.currentIndexChanged.connect(self._on_waves_changed)
        self.second_combo.currentIndexChanged.connect(self._on_waves_changed)
        self.tabs.currentChanged.connect(self._on_tabs_current_changed)
        self.search_edit.textChanged.connect(self._on_search_edit_changed)
        self.variable_tree.currentItemChanged.connect(self._on_variable_tree_current_changed)
        self.min_cell_spin.valueChanged.connect(self._on_min_cell_changed)
        self.keep_button.clicked.connect(self._on_keep_button_clicked)
        self.finding_edit.returnPressed.connect(self._on_keep_button_clicked)
        self.copy_table_button.clicked.connect(self.copy_table)
        self.copy_chart_button.clicked.connect(self.copy_chart)
        self.copy_action.triggered.connect(self.copy_current)
        self.table.copy_requested.connect(self.copy_table)
        self.compared_combo.currentIndexChanged.connect(self._on_compared_combo_changed)
        self.transition_combo.currentIndexChanged.connect(self._on_transition_combo_changed)
        self.kept_wave_combo.currentIndexChanged.connect(self._on_kept_wave_changed)
        self.kept_with_combo.currentIndexChanged.connect(self._on_kept_with_changed)
        self.kept_list.currentItemChanged.connect(self._on_kept_list_current_changed)
        self.keep_version_button.clicked.connect(self._on_keep_version_clicked)

    # ------------------------------------------------------------------ data access
    @property
    def project(self) -> Any:
        return self._context.project

    def codebook(self) -> Codebook:
        return self.project.codebook(self.instrument_id)

    def waves(self) -> list[Wave]:
        return list(self.project.waves(self.instrument_id))

    def _project_min_cell(self) -> int:
        try:
            return int(self.project.settings().get("min_cell", 5))
        except (TypeError, ValueError):
            return 5

    def chosen_waves(self) -> tuple[str, str] | None:
        """The two wave labels chosen at the top (None while they are the same wave)."""
        a, b = self.first_combo.currentData(), self.second_combo.currentData()
        if not a or not b or a == b:
            return None
        return str(a), str(b)

    def result(self) -> TableResult | None:
        """The comparison shown on the Side by side tab (None while nothing is shown)."""
        return self._result

    def match(self) -> Any:
        """The :class:`core.waves.RespondentMatch` shown on the Same people tab."""
        return self._match

    def transition(self) -> Any:
        """The :class:`core.waves.Transition` shown on the Same people tab."""
        return self._transition

    def kept_versions(self) -> list[tuple[Any, TableResult | None, str]]:
        """The kept results recomputed for the chosen wave, as listed on the third tab."""
        return list(self._kept)

    def current_variable(self) -> str | None:
        item = self.variable_tree.currentItem()
        return item.data(0, NAME_ROLE) if item is not None else None

    def current_spec(self) -> TableSpec | None:
        """The comparison asked for by the controls now (chart not included)."""
        name, waves = self.current_variable(), self.chosen_waves()
        if not name or waves is None:
            return None
        min_cell = self.min_cell_spin.value()
        return TableSpec(
            variable=name,
            instrument=self.project.instrument(self.instrument_id).name,
            compare_waves=waves,
            min_cell=None if min_cell == self._project_min_cell() else min_cell,
        )

    def keep_spec(self) -> TableSpec | None:
        """What "Keep for report" stores: the comparison's spec, shown as the waves chart."""
        if self._result is None:
            return None
        return self._result.spec.with_changes(chart="waves")

    # ------------------------------------------------------------------ public controls
    def set_waves(self, first: str, second: str) -> None:
        """Choose the two waves to compare (by label)."""
        self._filling = True
        try:
            for combo, label in ((self.first_combo, first), (self.second_combo, second)):
                index = combo.findData(str(label))
                if index < 0:
                    raise ValueError(f"no wave {label!r} in this questionnaire")
                combo.setCurrentIndex(index)
        finally:
            self._filling = False
        self._on_waves_changed()

    def select_variable(self, name: str) -> bool:
        """Select a question on the Side by side tab (False if it is not listed)."""
        return select_named(self.variable_tree, name)

    def select_transition(self, name: str) -> bool:
        """Choose the ordered question of the transition table (False if not offered)."""
        index = self.transition_combo.findData(name)
        if index < 0:
            return False
        self.transition_combo.setCurrentIndex(index)
        return True

    def show_tab(self, index: int) -> None:
        """Show one tab (0 side by side, 1 same people, 2 kept results), computing it."""
        if self.tabs.currentIndex() == index:
            self._refresh_current_tab()
        else:
            self.tabs.setCurrentIndex(index)

    def set_kept_wave(self, wave: str, compare_with: str | None = None) -> None:
        """Recompute the kept results for ``wave`` (alone, or as the change from another)."""
        self._filling = True
        try:
            index = self.kept_wave_combo.findData(str(wave))
            if index < 0:
                raise ValueError(f"no wave {wave!r} in this questionnaire")
            self.kept_wave_combo.setCurrentIndex(index)
            self._fill_kept_with()
            index = self.kept_with_combo.findData(str(compare_with) if compare_with else ALONE)
            if index < 0:
                raise ValueError(f"cannot compare with wave {compare_with!r}")
            self.kept_with_combo.setCurrentIndex(index)
        finally:
            self._filling = False
        self._stale[TAB_KEPT] = True
        self._refresh_current_tab()

    def open_kept(self, row: int) -> None:
        """Show one recomputed kept result (its row in the list) in the preview."""
        item = self.kept_list.topLevelItem(row)
        if item is not None:
            self.kept_list.setCurrentItem(item)

    # ------------------------------------------------------------------ filling
    def _fill_waves(self) -> None:
        waves = [w.label for w in self.waves()]
        keep_a, keep_b = self.first_combo.currentData(), self.second_combo.currentData()
        keep_kept = self.kept_wave_combo.currentData()
        default_a = waves[-2] if len(waves) >= 2 else (waves[0] if waves else None)
        default_b = waves[-1] if waves else None
        self._filling = True
        try:
            for combo, keep, default in (
                (self.first_combo, keep_a, default_a),
                (self.second_combo, keep_b, default_b),
                (self.kept_wave_combo, keep_kept, default_b),
            ):
                combo.blockSignals(True)
                combo.clear()
                for label in waves:
                    combo.addItem(label, label)
                chosen = keep if keep in waves else default
                combo.setCurrentIndex(max(combo.findData(chosen), 0))
                combo.blockSignals(False)
            self._fill_kept_with()
        finally:
            self._filling = False
        self._fill_compared_in()

    def _fill_kept_with(self) -> None:
        wave = self.kept_wave_combo.currentData()
        keep = self.kept_with_combo.currentData()
        self.kept_with_combo.blockSignals(True)
        self.kept_with_combo.clear()
        self.kept_with_combo.addItem("that wave alone", ALONE)
        for w in self.waves():
            if w.label != wave:
                self.kept_with_combo.addItem(f"the change from wave {w.label}", w.label)
        index = self.kept_with_combo.findData(keep) if keep is not None else 0
        self.kept_with_combo.setCurrentIndex(max(index, 0))
        self.kept_with_combo.blockSignals(False)

    def _fill_compared_in(self) -> None:
        waves = self.chosen_waves()
        keep = self.compared_combo.currentData()
        self.compared_combo.blockSignals(True)
        self.compared_combo.clear()
        if waves is not None:
            self.compared_combo.addItem(f"wave {waves[0]}", "a")
            self.compared_combo.addItem(f"wave {waves[1]}", "b")
            self.compared_combo.setCurrentIndex(max(self.compared_combo.findData(keep), 0))
        self.compared_combo.blockSignals(False)

    def _wording_marks(self) -> dict[str, str]:
        """Questions whose wording or column name changed between the chosen waves."""
        from core.waves import wording_notes

        waves = self.chosen_waves()
        if waves is None:
            return {}
        found = [w for w in self.waves() if w.label in waves]
        found.sort(key=lambda w: waves.index(w.label))
        marks: dict[str, str] = {}
        for var in self.codebook():
            try:
                notes = wording_notes(self.project, found, var.name)
            except (PlaincountError, KeyError, TypeError, ValueError):
                continue  # an import report of an older shape: no marks, the table still shows
            if notes:
                reworded = any(n.startswith("Wording changed") for n in notes)
                marks[var.name] = "wording changed" if reworded else "column renamed"
        return marks

    def _fill_questions(self) -> None:
        current = self.current_variable()
        self._entries = comparable_entries(self.codebook())
        marks = self._wording_marks()
        self.variable_tree.blockSignals(True)
        self.variable_tree.clear()
        for entry in self._entries:
            if entry.is_group:
                top = QTreeWidgetItem([f"{entry.label} ({len(entry.items)} rating items)"])
                top.setData(0, NAME_ROLE, None)
                top.setFlags(Qt.ItemFlag.ItemIsEnabled)
                top.setToolTip(
                    0, f"A battery of rating items, compared one at a time\n{entry.name}"
                )
                top.setIcon(0, kind_icon(entry.kind))
                for member in entry.items:
                    child = self._question_item(member.name, member.question, marks)
                    child.setIcon(0, kind_icon(member.kind))
                    top.addChild(child)
            else:
                top = self._question_item(entry.name, entry.question, marks)
                top.setIcon(0, kind_icon(entry.kind))
            self.variable_tree.addTopLevelItem(top)
        self.variable_tree.blockSignals(False)
        if current:
            self.select_variable(current)
        self._apply_search()

    @staticmethod
    def _question_item(name: str, question: str, marks: dict[str, str]) -> QTreeWidgetItem:
        mark = marks.get(name)
        # The mark goes right after the name, where a narrow list does not cut it off.
        text = f"{name}  ({mark})  " if mark else f"{name}  "
        item = QTreeWidgetItem([text + short_title(question, 60)])
        item.setData(0, NAME_ROLE, name)
        if mark:
            item.setForeground(0, QBrush(QColor(CAUTION_COLOUR)))
        tip = question or name
        if mark:
            tip += f"\nBetween these waves: {mark}. The notes of the comparison say how."
        item.setToolTip(0, tip)
        return item

    def _selectable_items(self) -> list[QTreeWidgetItem]:
        return named_items(self.variable_tree)

    def _apply_search(self) -> None:
        has_words = bool(self.search_edit.text().split())
        for top, any_child in filter_tree(self.variable_tree, self.search_edit.text()):
            if top.childCount():
                top.setExpanded(any_child or not has_words)

    def _fill_transition_questions(self) -> None:
        keep = self.transition_combo.currentData()
        self.transition_combo.blockSignals(True)
        self.transition_combo.clear()
        for var in ordered_questions(self.codebook()):
            self.transition_combo.addItem(
                kind_icon(var.kind), f"{var.name}  {short_title(var.question, 48)}", var.name
            )
            self.transition_combo.setItemData(
                self.transition_combo.count() - 1,
                var.question or var.name,
                Qt.ItemDataRole.ToolTipRole,
            )
        index = self.transition_combo.findData(keep) if keep else -1
        if index < 0:
            index = self.transition_combo.findData(default_transition(self.codebook()))
        self.transition_combo.setCurrentIndex(max(index, 0))
        self.transition_combo.blockSignals(False)

    # ------------------------------------------------------------------ reacting
    def _on_waves_changed(self, *_args: Any) -> None:
        if self._filling:
            return
        self._fill_compared_in()
        self._filling = True
        try:
            self._fill_questions()  # the marks depend on the waves
        finally:
            self._filling = False
        self._stale[TAB_SIDE] = self._stale[TAB_PEOPLE] = True
        self._refresh_current_tab()

    def _on_tabs_current_changed(self, _index: int) -> None:
        self._refresh_current_tab()

    def _refresh_current_tab(self) -> None:
        index = self.tabs.currentIndex()
        if not self._stale.get(index, False):
            return
        self._stale[index] = False
        if index == TAB_SIDE:
            self._request_comparison()
        elif index == TAB_PEOPLE:
            self._request_match()
            self._request_transition()
        elif index == TAB_KEPT:
            self._request_kept()

    def _on_search_edit_changed(self, _text: str) -> None:
        self._apply_search()

    def _on_variable_tree_current_changed(
        self, current: QTreeWidgetItem | None, _previous: object
    ) -> None:
        if current is None or not current.data(0, NAME_ROLE):
            return
        self._request_comparison()

    def _on_min_cell_changed(self, value: int) -> None:
        self.option_caution.setVisible(value == 0)
        if not self._filling:
            self._request_comparison()

    def _on_compared_combo_changed(self, _index: int) -> None:
        self._request_match()

    def _on_transition_combo_changed(self, _index: int) -> None:
        self._request_transition()

    def _on_kept_wave_changed(self, _index: int) -> None:
        if self._filling:
            return
        self._filling = True
        try:
            self._fill_kept_with()
        finally:
            self._filling = False
        self._request_kept()

    def _on_kept_with_changed(self, _index: int) -> None:
        if not self._filling:
            self._request_kept()

    # ------------------------------------------------------------------ side by side
    def _request_comparison(self) -> None:
        if self._filling:
            return
        if self.chosen_waves() is None:
            self._show_side_empty("Choose two different waves to compare.")
            return
        spec = self.current_spec()
        if spec is None:
            self._show_side_empty("Choose a question on the left.")
            return
        project = self.project
        instrument_id = self.instrument_id
        self._stale[TAB_SIDE] = False
        self._set_status("Working out the comparison…")

        def work(_progress: Any) -> tuple[TableResult, list[str]]:
            from core.tables.build import compute_table
            from core.waves import wording_notes

            result = compute_table(project, spec)
            order = list(spec.compare_waves)
            waves = sorted(
                (w for w in project.waves(instrument_id) if w.label in order),
                key=lambda w: order.index(w.label),
            )
            return result, wording_notes(project, waves, spec.variable)

        self._context.runner.run(
            work,
            on_success=self._show_comparison,
            on_failure=self._on_comparison_failed,
            key=f"waves-compare:{id(self)}",
            show_progress=False,
            label="Working out the comparison…",
        )

    def _show_comparison(self, payload: tuple[TableResult, list[str]]) -> None:
        result, wording = payload
        self._result = result
        self._wording = list(wording)
        self.error_text = ""
        self._set_status("")
        self.title_label.setText(result.title)
        if wording:
            self.wording_label.setText(
                "<b>Changed between these waves</b><br>" + _notes_html(self._wording)
            )
        self.wording_label.setVisible(bool(wording))
        self.pane.show_result(result, "waves", [n for n in result.notes if n not in wording])
        self.keep_row.set_enabled(True)

    def _set_status(self, text: str) -> None:
        self.status_label.setText(text)
        self.status_label.setVisible(bool(text))

    def _on_comparison_failed(self, exc: BaseException) -> None:
        self._show_side_empty(_plain(exc))

    def _show_side_empty(self, text: str) -> None:
        self._result = None
        self._wording = []
        self.error_text = text
        self.title_label.setText("")
        self.wording_label.hide()
        self._set_status(text)
        self.pane.show_result(None, None)
        self.keep_row.set_enabled(False)

    def _on_keep_button_clicked(self) -> None:
        spec = self.keep_spec()
        if spec is None or self._result is None:
            return
        project = self.project
        finding = self.finding_edit.text().strip()
        title = self._result.title

        def work(_progress: Any) -> int:
            from core import outline

            return outline.keep(project, spec, title=title, finding=finding)

        def done(_item_id: int) -> None:
            self.finding_edit.clear()
            self._message(kept_message(title, finding))

        self._context.runner.run(
            work,
            on_success=done,
            on_failure=self._on_write_failed,
            writes=True,
            label="Keeping the comparison for the report…",
        )

    def copy_current(self) -> None:
        """Copy the chart when it has the focus, otherwise the table."""
        if self.chart.canvas.hasFocus():
            self.copy_chart()
        else:
            self.copy_table()

    def copy_table(self) -> bool:
        """Put the comparison on the clipboard as HTML and tab-separated text."""
        if self._result is None:
            return False
        put_table_on_clipboard(self._result, self._message)
        return True

    def copy_chart(self) -> bool:
        """Put the waves chart on the clipboard: a PNG drawn on a worker, and its caption."""
        result = self._result
        if result is None:
            return False
        put_chart_on_clipboard(
            self._context.runner, result, "waves", f"waves-copy-chart:{id(self)}", self._message
        )
        return True

    # ------------------------------------------------------------------ same people
    def _request_match(self) -> None:
        waves = self.chosen_waves()
        if self._filling or self.tabs.currentIndex() != TAB_PEOPLE and self._stale[TAB_PEOPLE]:
            return
        if waves is None:
            self._show_match_error("Choose two different waves to find the same people in.")
            return
        project, instrument_id = self.project, self.instrument_id
        compared_in = self.compared_combo.currentData() or "a"
        self.match_label.setText(escape("Finding the people who answered in both waves…"))

        def work(_progress: Any) -> Any:
            from core.waves import match_respondents

            return match_respondents(
                project, waves[0], waves[1], instrument=instrument_id, compared_in=compared_in
            )

        self._context.runner.run(
            work,
            on_success=self._show_match,
            on_failure=lambda exc: self._show_match_error(_plain(exc)),
            key=f"waves-match:{id(self)}",
            show_progress=False,
            label="Matching respondents…",
        )

    def _show_match(self, match: Any) -> None:
        from core.waves import MATCH_CAUTION

        self._match = match
        lines = []
        if match.pct_of_b is not None:
            lines.append(
                f"<b>{match.matched:,} of {match.n_b:,}</b> people in wave {escape(match.wave_b)} "
                f"also answered in wave {escape(match.wave_a)}: <b>{match.pct_of_b:.1f} %</b>."
            )
        if match.pct_of_a is not None:
            lines.append(
                f"<b>{match.matched:,} of {match.n_a:,}</b> people in wave {escape(match.wave_a)} "
                f"answered again in wave {escape(match.wave_b)}: <b>{match.pct_of_a:.1f} %</b>."
            )
        if not lines:
            lines.append("One of the waves has no respondents to match.")
        self.match_label.setText("<br>".join(lines))
        self.differ_caution.setText(MATCH_CAUTION)
        self._fill_differ_table(match)
        self.differ_notes.setText(_notes_html([n for n in match.notes if n != MATCH_CAUTION]))

    def _show_match_error(self, text: str) -> None:
        self._match = None
        self.match_label.setText(escape(text))
        self.differ_caution.setText("")
        self.differ_table.clear()
        self.differ_table.setRowCount(0)
        self.differ_table.setColumnCount(0)
        self.differ_notes.setText("")

    def _fill_differ_table(self, match: Any) -> None:
        codebook = self.codebook()
        table = self.differ_table
        table.clear()
        headers = ["Question", "Answer", "Found in both\nwaves", "Not found in\nboth", "Difference"]
        table.setColumnCount(len(headers))
        table.setHorizontalHeaderLabels(headers)
        header_tips = (
            "",
            "",
            "% choosing the answer (count), or the mean, among those found in both waves",
            "The same among those found in only one of the two waves",
            "Found in both minus not found: percentage points, or the difference of means",
        )
        for col, tip in enumerate(header_tips):
            table.horizontalHeaderItem(col).setToolTip(tip)
            align = Qt.AlignmentFlag.AlignRight if col >= 2 else Qt.AlignmentFlag.AlignLeft
            table.horizontalHeaderItem(col).setTextAlignment(align | Qt.AlignmentFlag.AlignVCenter)
        rows = match.comparison
        table.setRowCount(len(rows))
        muted = QBrush(QApplication.palette().color(QPalette.ColorRole.PlaceholderText))
        previous = None
        for r, row in enumerate(rows):
            var = codebook.get(row["variable"])
            name = row["variable"] if row["variable"] != previous else ""
            previous = row["variable"]
            first = QTableWidgetItem(name)
            first.setToolTip(var.question if var is not None and var.question else row["variable"])
            table.setItem(r, 0, first)
            is_mean = row["statistic"] == "mean"
            table.setItem(r, 1, QTableWidgetItem("mean" if is_mean else str(row["level"])))
            for col, key in ((2, "matched"), (3, "unmatched")):
                value, n = row[key], row[f"n_{key}"]
                if value is None:
                    text = HIDDEN if n is None else ""
                elif is_mean:
                    text = f"{value:.2f}"
                else:
                    text = f"{value:.1f}% ({n:,})"
                item = QTableWidgetItem(text)
                item.setTextAlignment(RIGHT)
                if value is None and n is None:
                    item.setForeground(muted)
                    item.setToolTip(HIDDEN_TIP)
                elif is_mean and n is not None:
                    item.setToolTip(f"Mean of {n:,} people")
                table.setItem(r, col, item)
            diff = row["difference"]
            if diff is None:
                text = HIDDEN if row["matched"] is None or row["unmatched"] is None else ""
            else:
                text = f"{diff:+.2f}" if is_mean else f"{diff:+.1f}"
            item = QTableWidgetItem(text)
            item.setTextAlignment(RIGHT)
            if diff is None:
                item.setForeground(muted)
            table.setItem(r, 4, item)
        table.resizeColumnsToContents()
        header = table.horizontalHeader()
        # Narrow enough for half the view: a long name is cut (its question is in the
        # tooltip), a long answer wraps.
        for col, widest in enumerate((100, 120, 100, 100, 76)):
            header.resizeSection(col, min(header.sectionSize(col), widest))
        table.resizeRowsToContents()

    def _request_transition(self) -> None:
        waves = self.chosen_waves()
        if self._filling or self.tabs.currentIndex() != TAB_PEOPLE and self._stale[TAB_PEOPLE]:
            return
        name = self.transition_combo.currentData()
        if not name:
            self._show_transition_error(
                "This questionnaire has no question with ordered answers (a rating scale or "
                "ordered categories), so there is nothing to move up or down."
            )
            return
        if waves is None:
            self._show_transition_error("Choose two different waves.")
            return
        project, instrument_id = self.project, self.instrument_id
        self.transition_summary.setText(escape("Working out the transition table…"))

        def work(_progress: Any) -> Any:
            from core.waves import transition_table

            return transition_table(project, name, waves[0], waves[1], instrument=instrument_id)

        self._context.runner.run(
            work,
            on_success=self._show_transition,
            on_failure=lambda exc: self._show_transition_error(_plain(exc)),
            key=f"waves-transition:{id(self)}",
            show_progress=False,
            label="Working out the transition table…",
        )

    def _show_transition(self, tr: Any) -> None:
        self._transition = tr
        self.transition_title.setText(f"{tr.title} — wave {tr.waves[0]} to wave {tr.waves[1]}")
        rows = tr.text_rows()
        table = self.transition_table
        table.clear()
        header = rows[0]
        table.setColumnCount(len(header))
        table.setRowCount(len(rows) - 1)
        table.setHorizontalHeaderLabels(
            [textwrap.fill(h, TRANSITION_WRAP, break_long_words=False) or h for h in header]
        )
        for col, text in enumerate(header):
            head = table.horizontalHeaderItem(col)
            head.setToolTip(
                f"Answer in wave {tr.waves[1]}: {text}" if 0 < col < len(header) - 1 else text
            )
            align = Qt.AlignmentFlag.AlignRight if col else Qt.AlignmentFlag.AlignLeft
            head.setTextAlignment(align | Qt.AlignmentFlag.AlignVCenter)
        muted = QBrush(QApplication.palette().color(QPalette.ColorRole.PlaceholderText))
        bold = QFont(table.font())
        bold.setBold(True)
        for r, row in enumerate(rows[1:]):
            total_row = r == len(rows) - 2
            for c, text in enumerate(row):
                item = QTableWidgetItem(text)
                if c == 0:
                    item.setToolTip(
                        f"Answer in wave {tr.waves[0]}: {text}" if not total_row else text
                    )
                else:
                    item.setTextAlignment(RIGHT)
                if text.startswith("<"):
                    item.setForeground(muted)
                    item.setToolTip(f"Hidden: fewer than {tr.min_cell} people.")
                elif text == HIDDEN:
                    item.setForeground(muted)
                    item.setToolTip("Hidden so that a small count cannot be worked out.")
                if total_row or c == len(row) - 1:
                    item.setFont(bold)
                table.setItem(r, c, item)
        _fit(table, first_max=130, other_max=74)
        # As tall as its rows, so the notes below get the rest of the height.
        height = table.horizontalHeader().sizeHint().height() + table.verticalHeader().length()
        height += 2 * table.frameWidth() + 4
        if table.horizontalHeader().length() + 2 * table.frameWidth() > table.width():
            height += table.horizontalScrollBar().sizeHint().height()
        table.setMaximumHeight(height)
        self.transition_summary.setText(_transition_summary(tr))
        self.transition_notes.setText(_notes_html(tr.notes))

    def _show_transition_error(self, text: str) -> None:
        self._transition = None
        self.transition_title.setText("")
        self.transition_table.clear()
        self.transition_table.setRowCount(0)
        self.transition_table.setColumnCount(0)
        self.transition_summary.setText(escape(text))
        self.transition_notes.setText("")

    # ------------------------------------------------------------------ kept results
    def _request_kept(self) -> None:
        if self._filling or self.tabs.currentIndex() != TAB_KEPT and self._stale[TAB_KEPT]:
            return
        wave = self.kept_wave_combo.currentData()
        compare_with = self.kept_with_combo.currentData() or None
        if not wave:
            return
        project = self.project
        self._stale[TAB_KEPT] = False
        self.kept_status.setText("Recomputing the kept results…")

        def work(progress: Any) -> list[tuple[Any, TableResult | None, str]]:
            from core.waves import outline_for_wave

            return outline_for_wave(project, wave, compare_with)

        self._context.runner.run(
            work,
            on_success=lambda rows: self._show_kept(rows, wave, compare_with or ALONE),
            on_failure=lambda exc: self._show_kept_error(_plain(exc)),
            key=f"waves-kept:{id(self)}",
            label="Recomputing the kept results…",
        )

    def _show_kept(
        self, rows: list[tuple[Any, TableResult | None, str]], wave: str, compare_with: str
    ) -> None:
        selected = self.kept_list.currentIndex().row()
        self._kept = list(rows)
        self._kept_wave, self._kept_with = wave, compare_with
        self.kept_list.blockSignals(True)
        self.kept_list.clear()
        ready = 0
        for kept, result, message in rows:
            status = "ready" if result is not None else message
            item = QTreeWidgetItem([f"{kept.position}. {kept.title}", status])
            item.setToolTip(0, kept.title)
            item.setToolTip(1, status)
            if result is None:
                item.setForeground(1, QBrush(QColor(CAUTION_COLOUR)))
            else:
                ready += 1
            self.kept_list.addTopLevelItem(item)
        self.kept_list.blockSignals(False)
        if not rows:
            self.kept_status.setText(
                "Nothing is kept for the report yet. Keep tables in a wave's Tables view or on "
                "the Side by side tab; they are listed here, recomputed for the wave you choose."
            )
        else:
            what = f"wave {wave}" if not compare_with else f"the change from {compare_with}"
            self.kept_status.setText(
                f"{ready} of {len(rows)} kept results recomputed as {what}. Select one to see "
                "it; “Keep this version” adds it to the report outline."
            )
        if rows:
            row = selected if 0 <= selected < len(rows) else 0
            self.open_kept(row)
        else:
            self._show_kept_preview(None)

    def _show_kept_error(self, text: str) -> None:
        self._kept = []
        self.kept_list.clear()
        self.kept_status.setText(text)
        self._show_kept_preview(None)

    def _on_kept_list_current_changed(self, current: QTreeWidgetItem | None, _prev: Any) -> None:
        row = self.kept_list.indexOfTopLevelItem(current) if current is not None else -1
        self._show_kept_preview(self._kept[row] if 0 <= row < len(self._kept) else None)

    def kept_preview(self) -> TableResult | None:
        """The recomputed kept result open in the preview (None if none or not computable)."""
        return self.kept_model.result()

    def _show_kept_preview(self, entry: tuple[Any, TableResult | None, str] | None) -> None:
        if entry is None:
            self.kept_title.setText("")
            self.kept_message.hide()
            self.kept_pane.show_result(None, None)
            self.keep_version_button.setEnabled(False)
            return
        kept, result, message = entry
        self.kept_title.setText(self._version_title(kept))
        self.kept_message.setText(message)
        self.kept_message.setVisible(bool(message))
        chart_type = None
        if result is not None:
            from core.charts import chart_types

            types = chart_types(result)
            chart_type = result.spec.chart if result.spec.chart in types else None
            if chart_type is None and types and result.table_type == "waves":
                chart_type = types[0]
        self.kept_pane.show_result(result, chart_type)
        self.keep_version_button.setEnabled(result is not None)

    def _version_title(self, kept: Any) -> str:
        if self._kept_with:
            return f"{kept.title} — change from wave {self._kept_with} to {self._kept_wave}"
        return f"{kept.title} — wave {self._kept_wave}"

    def _on_keep_version_clicked(self) -> None:
        row = self.kept_list.indexOfTopLevelItem(self.kept_list.currentItem())
        if not 0 <= row < len(self._kept):
            return
        kept, result, _message = self._kept[row]
        if result is None:
            return
        project = self.project
        spec = result.spec
        title = self._version_title(kept)

        def work(_progress: Any) -> int:
            from core import outline

            return outline.keep(project, spec, title=title)

        self._context.runner.run(
            work,
            on_success=lambda _id: self._message(
                f"Kept “{short_title(title, 60)}” for the report. Add its finding sentence in "
                "the report outline."
            ),
            on_failure=self._on_write_failed,
            writes=True,
            label="Keeping this version for the report…",
        )

    # ------------------------------------------------------------------ shared
    def _on_write_failed(self, exc: BaseException) -> None:
        self._message(_plain(exc))

    def _message(self, text: str) -> None:
        self.last_message = text
        if self._context.show_message is not None:
            self._context.show_message(text)

    # ------------------------------------------------------------------ window hooks
    def project_changed(self, changes: Changes) -> None:
        mine = not changes.instrument_ids or self.instrument_id in changes.instrument_ids
        if changes.structure:
            self._fill_waves()
        if changes.codebook and mine:
            self._filling = True
            try:
                self._fill_questions()
                self._fill_transition_questions()
            finally:
                self._filling = False
        wave_ids = {w.id for w in self.waves()}
        touches = not changes.wave_ids or bool(wave_ids & set(changes.wave_ids))
        data = (changes.codebook or changes.ledger or changes.rules or changes.settings) and touches
        if changes.settings:
            self._filling = True
            self.min_cell_spin.setValue(self._project_min_cell())
            self._filling = False
        if data or changes.structure:
            for tab in self._stale:
                self._stale[tab] = True
        elif changes.outline:
            self._stale[TAB_KEPT] = True
        self._refresh_current_tab()

    def prepare_screenshot(self) -> None:
        """Overall satisfaction, the two latest waves side by side, its chart drawn at once."""
        self.select_variable("overall_satisfaction")
        QApplication.processEvents()  # let the window lay the view out before drawing
        self.pane._apply_split()
        self.chart.render_now()

    def screenshot_states(self) -> list[tuple[str, Callable[[], None]]]:
        """The Same people tab, and the kept results recomputed for the earlier wave."""

        def people() -> None:
            self.select_transition("overall_satisfaction")
            self.show_tab(TAB_PEOPLE)

        def kept() -> None:
            self._keep_examples_for_screenshot()
            waves = self.chosen_waves()
            self.show_tab(TAB_KEPT)
            if waves is not None:
                self.set_kept_wave(waves[1], compare_with=waves[0])
            QApplication.processEvents()
            self.kept_chart.render_now()

        return [("compare-people", people), ("compare-kept", kept)]

    def _keep_examples_for_screenshot(self) -> None:
        """Keep a few results for the picture of the third tab. They are taken out again
        when the view closes (``shutdown``), so the report outline, pictured after this
        view, is left as the demo has it."""
        from core import outline

        project = self.project
        if outline.items(project):
            return
        for spec in (
            TableSpec("overall_satisfaction", chart="column"),
            TableSpec("track", chart="bar"),
            TableSpec("agree_3", chart="diverging"),
        ):
            with contextlib.suppress(PlaincountError):
                self._screenshot_kept.append(outline.keep(project, spec))

    def shutdown(self) -> None:
        self.variable_tree.blockSignals(True)
        self.kept_list.blockSignals(True)
        if self._screenshot_kept:
            from core import outline

            project, ids = self.project, list(self._screenshot_kept)
            self._screenshot_kept.clear()

            def forget(_progress: Any) -> None:
                for item_id in ids:
                    with contextlib.suppress(PlaincountError):
                        outline.remove(project, item_id)

            self._context.runner.run(forget, writes=True, label="Tidying up…")


def _transition_summary(tr: Any) -> str:
    def show(n: int | None) -> str:
        return "hidden" if n is None else f"{n:,}"

    parts = [
        f"Moved up: <b>{show(tr.moved_up)}</b>",
        f"Stayed: <b>{show(tr.stayed)}</b>",
        f"Moved down: <b>{show(tr.moved_down)}</b>",
    ]
    if tr.improved is None or tr.improved_pct is None:
        improved = "Share who improved: <b>hidden</b>"
    else:
        improved = f"Improved: <b>{tr.improved:,} of {tr.n_pairs:,} ({tr.improved_pct:.1f} %)</b>"
    return " · ".join(parts) + "<br>" + improved


def _plain(exc: BaseException) -> str:
    """The plain sentence for a failure; an unexpected one's details go to the console."""
    from desktopapp.errors import console_text

    return console_text(exc)
