"""The checks-and-flags node of a wave: review every flag and decide what to do with it.

Left, the flags grouped by check with their counts (open and decided). Right, the selected
flag: what was found, the check's suggestion, the decision buttons, and the respondent's
whole row with the flagged cells highlighted. Several flags selected at once get one batch
decision (one ledger transaction, one step for Edit ▸ Undo).

Keys (shown in the tooltips): J / K or Alt+Down / Alt+Up move to the next or previous flag;
Enter in the list or the reason field, or Ctrl+Enter anywhere, accepts the suggestion; the
underlined letters (Alt+K, Alt+C, Alt+M, Alt+R, Alt+X) choose a decision.

Every decision is built by ``core.cleaning.decision_for`` and recorded with
``record_batch`` / ``decide_many`` on the runner's writer thread; the flags are then
refreshed with ``refresh_flags`` for the variables the change names.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import QItemSelectionModel, QModelIndex, Qt, Signal
from PySide6.QtGui import QBrush, QKeySequence, QShortcut
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QSplitter,
    QStackedWidget,
    QTableWidget,
    QTableWidgetItem,
    QTreeView,
    QVBoxLayout,
    QWidget,
)

from core.checks import Flag
from core.kinds import Kind
from core.ledger import Action, Decision
from core.project import Changes
from desktopapp.errors import failure_text
from desktopapp.models.cells import (
    EDITED_BACKGROUND,
    FLAGGED_BACKGROUND,
    MUTED_TEXT,
    missing_text,
    value_text,
)
from desktopapp.models.flags import (
    CHECK_ROLE,
    SEVERITY_COLOURS,
    SEVERITY_WORDS,
    FlagTreeModel,
    flag_value_text,
)
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, muted_label, section_label, title_label

ERROR_COLOUR = "#B3261E"
ACTION_BUTTON_TEXT = {
    Action.KEEP: "&Keep as is",
    Action.CORRECT: "&Correct to this value",
    Action.SET_MISSING: "Set to &missing",
    Action.REVERSE: "&Reverse scale",
    Action.EXCLUDE: "E&xclude respondent",
}


def register(registry: Any) -> None:
    registry.add(NodeType.FLAGS, CleaningView)


def merge_changes(a: Changes | None, b: Changes) -> Changes:
    """Two changes as one (what a refresh must cover when an earlier one was overtaken)."""
    if a is None:
        return b
    return Changes(
        instrument_ids=a.instrument_ids | b.instrument_ids,
        wave_ids=a.wave_ids | b.wave_ids,
        variables=a.variables | b.variables,
        codebook=a.codebook or b.codebook,
        ledger=a.ledger or b.ledger,
        rules=a.rules or b.rules,
        outline=a.outline or b.outline,
        structure=a.structure or b.structure,
        settings=a.settings or b.settings,
        version=max(a.version, b.version),
    )


def decision_label(d: Decision) -> str:
    """What Edit ▸ Undo calls one decision: 'Set age of HP-10113 to missing'."""
    who = d.respondent or "every respondent"
    name = d.variables[0] if d.variables else ""
    if d.action is Action.CORRECT:
        return f"Correct {name} of {who} to {value_text(d.new_value)}"
    if d.action is Action.SET_MISSING:
        return f"Set {name} of {who} to missing"
    if d.action is Action.KEEP:
        what = name if len(d.variables) == 1 else "the flagged answers"
        return f"Keep {what} of {who} as is"
    if d.action is Action.REVERSE:
        return f"Reverse the {d.new_value} scale of {who}"
    if d.action is Action.EXCLUDE:
        return f"Exclude respondent {who}"
    return d.action.label


def battery_of(flag: Flag, codebook: Any) -> str | None:
    """The battery a reversal would apply to: the flag's own, else a rating group it names."""
    group = flag.detail.get("group") if flag.detail else None
    if group:
        return str(group)
    if flag.suggestion is not None and flag.suggestion.action is Action.REVERSE:
        return str(flag.suggestion.value)
    for name in flag.variables:
        var = codebook.get(name)
        if var is not None and var.group and var.kind in (Kind.LIKERT, Kind.ORDINAL):
            return var.group
    return None


def one_row(working: Any, row: int) -> Any:
    """The working data of one respondent (as its own one-row table).

    :func:`core.cleaning.respondent_row` reads the raw text of every column it shows; on a
    one-row slice that costs microseconds instead of a pass over 100,000 rows after every
    decision. Texts are the same: raw cells are formatted one by one, by the column's type.
    """
    from dataclasses import replace as copy_with

    from core.working import WorkingData

    raw = working.raw.iloc[[row]].reset_index(drop=True) if working.raw is not None else None
    return WorkingData(
        wave_id=working.wave_id,
        codebook=working.codebook,
        values=working.values.iloc[[row]].reset_index(drop=True),
        reasons=working.reasons.iloc[[row]].reset_index(drop=True),
        respondent_ids=working.respondent_ids.iloc[[row]].reset_index(drop=True),
        excluded=frozenset({0}) if row in working.excluded else frozenset(),
        edits={(0, name): list(es) for (r, name), es in working.edits.items() if r == row},
        entries=[copy_with(e, row=0) for e in working.entries if e.row == row],
        raw=raw,
    )


def row_cells(working: Any, row: int, flags: list[Flag]) -> list[Any]:
    """``core.cleaning.respondent_row`` for one respondent, read from a one-row slice."""
    from dataclasses import replace as copy_with

    from core.cleaning import respondent_row

    mine = [copy_with(f, row=0) for f in flags if f.row == row]
    return respondent_row(one_row(working, row), 0, mine)


class FlagTreeView(QTreeView):
    """The flag list; J / K move, Enter asks for the suggestion to be accepted."""

    accept_requested = Signal()
    step_requested = Signal(int)

    def keyPressEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        key = event.key()
        plain = event.modifiers() in (
            Qt.KeyboardModifier.NoModifier,
            Qt.KeyboardModifier.KeypadModifier,
        )
        if plain and key == Qt.Key.Key_J:
            self.step_requested.emit(1)
            return
        if plain and key == Qt.Key.Key_K:
            self.step_requested.emit(-1)
            return
        if plain and key in (Qt.Key.Key_Return, Qt.Key.Key_Enter):
            self.accept_requested.emit()
            return
        super().keyPressEvent(event)


class CleaningView(QWidget):
    """Flags of one wave, one flag's details and decisions, and batch decisions."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("cleaningView")
        self._context = context
        self.node = node
        self.wave_id: int = node.wave_id  # type: ignore[assignment]
        self.instrument_id: int = node.instrument_id  # type: ignore[assignment]
        wave = context.project.wave(self.wave_id)
        self.run: Any = None  # core.checks.CheckRun
        self.current_flag: Flag | None = None
        self._pending: Changes | None = None
        self._advance_keys: list[Any] | None = None
        self._collapsed: set[str] = set()
        self._dialogs: list[Any] = []
        self._building = False
        self._requested: Changes | None = None

        # ---- header
        self.title = title_label(f"Checks and flags — wave {wave.label}")
        self.summary_label = muted_label("")
        self.summary_label.setObjectName("flagSummary")
        self.rules_button = QPushButton("Consistency rules…")
        self.rules_button.setObjectName("rulesButton")
        self.rules_button.setToolTip(
            'Write rules such as: if completed is "No" then credential_earned is not "Yes".'
        )
        self.recode_button = QPushButton("Recode a value everywhere…")
        self.recode_button.setObjectName("recodeButton")
        self.recode_button.setToolTip(
            "For every value like this, e.g. -99 in all numeric items: one decision, kept as a "
            "rule for later waves."
        )
        self.settings_button = QPushButton("Check settings…")
        self.settings_button.setObjectName("checkSettingsButton")
        self.settings_button.setToolTip("Outlier method and fences, straight-lining k, speeders.")

        # ---- flag list
        self.filter_edit = QLineEdit()
        self.filter_edit.setObjectName("flagFilter")
        self.filter_edit.setPlaceholderText("Find a respondent, variable or word")
        self.filter_edit.setClearButtonEnabled(True)
        self.show_decided_check = QCheckBox("Show decided flags")
        self.show_decided_check.setObjectName("showDecided")
        self.show_decided_check.setChecked(True)
        self.model = FlagTreeModel(self)
        self.flag_tree = FlagTreeView()
        self.flag_tree.setObjectName("flagTree")
        self.flag_tree.setModel(self.model)
        self.flag_tree.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.flag_tree.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.flag_tree.setUniformRowHeights(True)
        self.flag_tree.setAllColumnsShowFocus(True)
        self.flag_tree.header().setSectionResizeMode(0, QHeaderView.ResizeMode.Interactive)
        self.flag_tree.header().resizeSection(0, 120)
        self.flag_tree.header().setStretchLastSection(True)
        self.flag_tree.setToolTip(
            "J / K or Alt+Down / Alt+Up: next / previous flag. Enter: accept the suggestion. "
            "Shift- or Ctrl-click to select several flags and decide them at once; a check's "
            "row stands for all its flags."
        )
        self.keys_label = muted_label(
            "J / K next / previous · Enter accepts the suggestion · Ctrl-click for several"
        )
        self.notes_label = muted_label("")
        self.notes_label.setObjectName("flagNotes")
        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(0, 0, 6, 0)
        lv.addWidget(self.filter_edit)
        lv.addWidget(self.show_decided_check)
        lv.addWidget(self.flag_tree, 1)
        lv.addWidget(self.keys_label)
        lv.addWidget(self.notes_label)

        # ---- right: empty, one flag, or several
        self.pages = QStackedWidget()
        self.empty_page = muted_label(
            "Select a flag to see the respondent's answers and decide what to do with it."
        )
        self.empty_page.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self.pages.addWidget(self.empty_page)
        self.pages.addWidget(self._build_single_page())
        self.pages.addWidget(self._build_batch_page())

        splitter = QSplitter(Qt.Orientation.Horizontal)
        splitter.addWidget(left)
        splitter.addWidget(self.pages)
        splitter.setStretchFactor(0, 0)
        splitter.setStretchFactor(1, 1)
        splitter.setSizes([380, 700])
        splitter.setChildrenCollapsible(False)

        header = QHBoxLayout()
        header.addWidget(self.title)
        header.addStretch(1)
        header.addWidget(self.rules_button)
        header.addWidget(self.recode_button)
        header.addWidget(self.settings_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(16, 12, 16, 12)
        layout.addLayout(header)
        layout.addWidget(self.summary_label)
        layout.addWidget(splitter, 1)

        self._connect_signals()
        self.reload()

    # ------------------------------------------------------------------ pages
    def _build_single_page(self) -> QWidget:
        page = QWidget()
        self.flag_heading = section_label("")
        self.flag_heading.setObjectName("flagHeading")
        self.flag_heading.setWordWrap(True)
        self.message_label = QLabel("")
        self.message_label.setObjectName("flagMessage")
        self.message_label.setWordWrap(True)
        self.message_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.suggestion_label = QLabel("")
        self.suggestion_label.setObjectName("flagSuggestion")
        self.suggestion_label.setWordWrap(True)
        self.decided_label = muted_label("")
        self.decided_label.setObjectName("flagDecided")

        self.variable_combo = QComboBox()
        self.variable_combo.setObjectName("decisionVariable")
        self.variable_combo.setToolTip("Which answer a correction or 'set to missing' changes.")
        self.value_combo = QComboBox()
        self.value_combo.setObjectName("decisionValue")
        self.value_combo.setEditable(True)
        self.value_combo.setInsertPolicy(QComboBox.InsertPolicy.NoInsert)
        self.value_combo.setToolTip(
            "The corrected value (prefilled with the suggestion when there is one)."
        )
        self.reason_edit = QLineEdit()
        self.reason_edit.setObjectName("decisionReason")
        self.reason_edit.setPlaceholderText("Why, in plain words (required; goes into the report)")
        self.reason_edit.setToolTip(
            "Required for every decision. Enter accepts the suggestion with this reason. "
            "The reason stays for the next flag, so a run of alike flags goes quickly."
        )
        form = QFormLayout()
        form.addRow("Answer", self.variable_combo)
        form.addRow("Value", self.value_combo)
        form.addRow("Reason", self.reason_edit)
        self._variable_row_label = form.labelForField(self.variable_combo)

        self.accept_button = QPushButton("Accept the suggestion")
        self.accept_button.setObjectName("acceptButton")
        self.accept_button.setToolTip("Record the suggested decision (Enter, or Ctrl+Enter).")
        self.decision_buttons: dict[Action, QPushButton] = {}
        tips = {
            Action.KEEP: "The value is right: record that it was checked (Alt+K).",
            Action.CORRECT: "Replace the answer with the value above (Alt+C).",
            Action.SET_MISSING: "Make the answer missing, reason 'set missing in cleaning' "
            "(Alt+M).",
            Action.REVERSE: "Mirror this respondent's answers on every item of the battery "
            "(one decision, Alt+R).",
            Action.EXCLUDE: "Leave this respondent out of every analysis; the row stays "
            "visible here (Alt+X).",
        }
        buttons = QHBoxLayout()
        for action, text in ACTION_BUTTON_TEXT.items():
            button = QPushButton(text)
            button.setObjectName(f"{action.value}Button")
            button.setToolTip(tips[action])
            self.decision_buttons[action] = button
            buttons.addWidget(button)
        buttons.addStretch(1)
        self.error_label = QLabel("")
        self.error_label.setObjectName("decisionError")
        self.error_label.setWordWrap(True)
        self.error_label.setStyleSheet(f"color: {ERROR_COLOUR};")

        self.row_heading = section_label("The respondent's answers")
        self.row_note = muted_label("")
        self.row_table = QTableWidget(0, 4)
        self.row_table.setObjectName("respondentRow")
        self.row_table.setHorizontalHeaderLabels(["Variable", "Answer", "Flagged by", "Decisions"])
        self.row_table.verticalHeader().setVisible(False)
        self.row_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.row_table.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
        self.row_table.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        self.row_table.setWordWrap(False)
        h = self.row_table.horizontalHeader()
        h.setSectionResizeMode(0, QHeaderView.ResizeMode.ResizeToContents)
        h.setSectionResizeMode(1, QHeaderView.ResizeMode.Stretch)
        h.setSectionResizeMode(2, QHeaderView.ResizeMode.Interactive)
        h.setSectionResizeMode(3, QHeaderView.ResizeMode.Interactive)
        h.resizeSection(2, 190)
        h.resizeSection(3, 150)
        self.row_table.verticalHeader().setDefaultSectionSize(self.fontMetrics().height() + 8)

        accept_row = QHBoxLayout()
        accept_row.addWidget(self.accept_button)
        accept_row.addStretch(1)
        layout = QVBoxLayout(page)
        layout.setContentsMargins(6, 0, 0, 0)
        layout.addWidget(self.flag_heading)
        layout.addWidget(self.message_label)
        layout.addWidget(self.suggestion_label)
        layout.addWidget(self.decided_label)
        layout.addLayout(form)
        layout.addLayout(accept_row)
        layout.addLayout(buttons)
        layout.addWidget(self.error_label)
        layout.addWidget(self.row_heading)
        layout.addWidget(self.row_note)
        layout.addWidget(self.row_table, 1)
        return page

    def _build_batch_page(self) -> QWidget:
        page = QWidget()
        self.batch_heading = section_label("")
        self.batch_heading.setObjectName("batchHeading")
        self.batch_note = muted_label(
            "A decision here applies to each selected flag that is still open; decided flags "
            "are left as they are. It is recorded as one step: Edit ▸ Undo takes all of it back."
        )
        self.batch_reason_edit = QLineEdit()
        self.batch_reason_edit.setObjectName("batchReason")
        self.batch_reason_edit.setPlaceholderText("Why, in plain words (required)")
        self.batch_buttons: dict[str, QPushButton] = {}
        texts = {
            "suggested": ("Accept each suggestion", "Each flag gets its own suggested decision."),
            "keep": ("Keep all as is", "Record that each value was checked and is right."),
            "set_missing": ("Set all to missing", "Only for flags about a single answer."),
            "exclude": ("Exclude these respondents", "Each respondent once, however many flags."),
        }
        row = QHBoxLayout()
        for key, (text, tip) in texts.items():
            button = QPushButton(text)
            button.setObjectName(f"batch_{key}Button")
            button.setToolTip(tip)
            self.batch_buttons[key] = button
            row.addWidget(button)
        row.addStretch(1)
        self.batch_error = QLabel("")
        self.batch_error.setObjectName("batchError")
        self.batch_error.setWordWrap(True)
        self.batch_error.setStyleSheet(f"color: {ERROR_COLOUR};")
        self.batch_list = QLabel("")
        self.batch_list.setWordWrap(True)
        self.batch_list.setAlignment(Qt.AlignmentFlag.AlignTop)
        form = QFormLayout()
        form.addRow("Reason", self.batch_reason_edit)
        layout = QVBoxLayout(page)
        layout.setContentsMargins(6, 0, 0, 0)
        layout.addWidget(self.batch_heading)
        layout.addWidget(self.batch_note)
        layout.addLayout(form)
        layout.addLayout(row)
        layout.addWidget(self.batch_error)
        layout.addWidget(self.batch_list, 1)
        return page

    def _connect_signals(self) -> None:
        self.filter_edit.textChanged.connect(self._on_filter_changed)
        self.show_decided_check.toggled.connect(self._on_filter_changed)
        self.flag_tree.selectionModel().selectionChanged.connect(self._on_selection_changed)
        self.flag_tree.step_requested.connect(self.step)
        self.flag_tree.accept_requested.connect(self.accept_suggestion)
        self.flag_tree.collapsed.connect(self._on_tree_collapsed)
        self.flag_tree.expanded.connect(self._on_tree_expanded)
        self.reason_edit.returnPressed.connect(self.accept_suggestion)
        self.variable_combo.currentIndexChanged.connect(self._on_variable_combo_changed)
        self.accept_button.clicked.connect(self.accept_suggestion)
        for action, button in self.decision_buttons.items():
            button.clicked.connect(lambda _c=False, a=action: self.decide(a))
        for key, button in self.batch_buttons.items():
            button.clicked.connect(lambda _c=False, k=key: self.decide_selected(k))
        self.rules_button.clicked.connect(self.open_rules)
        self.recode_button.clicked.connect(self.open_recode)
        self.settings_button.clicked.connect(self.open_settings)
        for keys, slot in (
            ("Alt+Down", lambda: self.step(1)),
            ("Alt+Up", lambda: self.step(-1)),
            ("Ctrl+Return", self.accept_suggestion),
            ("Ctrl+Enter", self.accept_suggestion),
        ):
            shortcut = QShortcut(QKeySequence(keys), self)
            shortcut.setContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
            shortcut.activated.connect(slot)

    @property
    def project(self) -> Any:
        return self._context.project

    def codebook(self) -> Any:
        return self.project.codebook(self.instrument_id)

    # ------------------------------------------------------------------ loading flags
    def reload(self) -> None:
        """Run every check (cached in the core until the project changes)."""
        from core.cleaning import flags_for

        project, wave_id = self.project, self.wave_id
        self._request(lambda _p: flags_for(project, wave_id), None)

    def _request(self, work: Any, merged: Changes | None) -> None:
        self.summary_label.setText(self.summary_label.text() or "Running the checks…")
        # Callbacks are bound methods, so a result arriving after the view closed is dropped.
        self._requested = merged
        self._context.runner.run(
            work,
            on_success=self._on_run_loaded,
            on_failure=self._on_load_failed,
            key=f"flags:{id(self)}",
            show_progress=False,
        )

    def project_changed(self, changes: Changes) -> None:
        mine = not changes.wave_ids or self.wave_id in changes.wave_ids
        relevant = (
            (changes.ledger and mine)
            or changes.codebook
            or (changes.settings and self._check_settings_changed())
            or changes.structure
            or (
                changes.rules
                and (not changes.instrument_ids or self.instrument_id in changes.instrument_ids)
            )
        )
        if not relevant:
            return
        from core.cleaning import refresh_flags

        # A refresh overtaken by a newer one is dropped: the newer one covers both changes.
        self._pending = merge_changes(self._pending, changes)
        merged = self._pending
        previous = self.run
        project, wave_id = self.project, self.wave_id
        if previous is None:
            self.reload()
            return
        self._request(lambda _p: refresh_flags(project, wave_id, previous, merged), merged)

    def _on_run_loaded(self, run: Any) -> None:
        self._show_run(run, self._requested)

    def _check_settings_changed(self) -> bool:
        """Whether the saved check settings differ from those of the flags shown (other
        project settings, such as the author's name, leave the flags as they are)."""
        from dataclasses import replace as copy_with

        from core.checks import load_settings

        if self.run is None:
            return True
        try:
            return load_settings(self.project) != copy_with(self.run.settings, rules=())
        except Exception:  # noqa: BLE001 - unreadable settings: let the re-run say why
            return True

    def _show_run(self, run: Any, merged: Changes | None) -> None:
        if merged is not None and self._pending is merged:
            self._pending = None
        selected = [f.key for f in self.selected_flags()]
        current = self.current_flag.key if self.current_flag is not None else None
        self.run = run
        self._building = True
        try:
            self.model.set_flags(run.flags)
            self._lay_out_groups()
        finally:
            self._building = False
        self._update_summary()
        if self._advance_keys is not None:
            keys, self._advance_keys = self._advance_keys, None
            if self._advance(keys):
                return
        if selected:
            self._select_keys(selected, current)
        else:
            self._on_selection_changed()

    def _on_load_failed(self, exc: BaseException) -> None:
        self.summary_label.setText(failure_text(self, exc))

    def _update_summary(self) -> None:
        flags = self.run.flags if self.run is not None else []
        n = len(flags)
        open_ = sum(1 for f in flags if f.decided_by is None)
        if n == 0:
            self.summary_label.setText(
                "No flags: every enabled check passed on this wave. Rules and settings can be "
                "changed above."
            )
        else:
            self.summary_label.setText(
                f"{n} flag{'s' if n != 1 else ''} from {len(self.model.groups())} "
                f"check{'s' if len(self.model.groups()) != 1 else ''}: {open_} open, "
                f"{n - open_} decided. Nothing in the raw data is changed; every decision goes "
                "into the ledger with its reason."
            )
        notes = list(self.run.notes) if self.run is not None else []
        self.notes_label.setText("\n".join(notes))
        self.notes_label.setVisible(bool(notes))

    # ------------------------------------------------------------------ selection
    def _on_filter_changed(self, *_args: Any) -> None:
        selected = [f.key for f in self.selected_flags()]
        self.model.set_filter(self.show_decided_check.isChecked(), self.filter_edit.text())
        self._building = True
        try:
            self._lay_out_groups()
        finally:
            self._building = False
        self._select_keys(selected, None)

    def _lay_out_groups(self) -> None:
        # One expandAll lays the tree out once; expanding group by group lays it out per
        # group, which adds up to a noticeable pause with thousands of flags.
        tree = self.flag_tree
        for g in range(self.model.rowCount()):
            tree.setFirstColumnSpanned(g, QModelIndex(), True)
        tree.expandAll()
        for g in range(self.model.rowCount()):
            index = self.model.index(g, 0)
            if index.data(CHECK_ROLE) in self._collapsed:
                tree.collapse(index)

    def _on_tree_collapsed(self, index: QModelIndex) -> None:
        if not self._building:
            self._collapsed.add(index.data(CHECK_ROLE))

    def _on_tree_expanded(self, index: QModelIndex) -> None:
        if not self._building:
            self._collapsed.discard(index.data(CHECK_ROLE))

    def selected_flags(self) -> list[Flag]:
        return self.model.flags_under(self._selected_rows())

    def _selected_rows(self) -> list[QModelIndex]:
        # One index per selected row (column 0), however the row was selected.
        seen: dict[tuple[int, int], QModelIndex] = {}
        for index in self.flag_tree.selectionModel().selectedIndexes():
            first = index.siblingAtColumn(0)
            seen.setdefault((first.row(), first.internalId()), first)
        return list(seen.values())

    def select_flag(self, flag_or_key: Flag | tuple[Any, ...]) -> bool:
        """Select one flag (by Flag or its key); False if it is not listed."""
        key = flag_or_key.key if isinstance(flag_or_key, Flag) else flag_or_key
        index = self.model.index_of(key)
        if not index.isValid():
            return False
        self.flag_tree.setCurrentIndex(index)
        self.flag_tree.selectionModel().select(
            index,
            QItemSelectionModel.SelectionFlag.ClearAndSelect
            | QItemSelectionModel.SelectionFlag.Rows,
        )
        self.flag_tree.scrollTo(index)
        return True

    def select_flags(self, flags: list[Flag]) -> None:
        """Select several flags at once (as Ctrl-click would)."""
        self._select_keys([f.key for f in flags], None)

    def _select_keys(self, keys: list[Any], current: Any) -> None:
        sm = self.flag_tree.selectionModel()
        sm.blockSignals(True)
        sm.clearSelection()
        first = None
        for key in keys:
            index = self.model.index_of(key)
            if index.isValid():
                first = first or index
                sm.select(
                    index,
                    QItemSelectionModel.SelectionFlag.Select
                    | QItemSelectionModel.SelectionFlag.Rows,
                )
        target = self.model.index_of(current) if current is not None else first
        if target is not None and target.isValid():
            sm.setCurrentIndex(target, QItemSelectionModel.SelectionFlag.NoUpdate)
        sm.blockSignals(False)
        self._on_selection_changed()

    def step(self, direction: int) -> None:
        """Move to the next (1) or previous (-1) flag in the list."""
        shown = self.model.shown_flags()
        if not shown:
            return
        keys = [f.key for f in shown]
        here = self.current_flag.key if self.current_flag is not None else None
        if here in keys:
            i = max(0, min(len(keys) - 1, keys.index(here) + direction))
        else:
            i = 0 if direction > 0 else len(keys) - 1
        self.select_flag(keys[i])
        self.flag_tree.setFocus()

    def _advance(self, keys_after: list[Any]) -> bool:
        """After a decision: select the next open flag that followed it, if any."""
        by_key = {f.key: f for f in self.model.shown_flags()}
        for key in keys_after:
            f = by_key.get(key)
            if f is not None and f.decided_by is None:
                return self.select_flag(key)
        for f in self.model.shown_flags():
            if f.decided_by is None:
                return self.select_flag(f)
        return False

    def _on_selection_changed(self, *_args: Any) -> None:
        flags = self.selected_flags()
        rows = self._selected_rows()
        single = len(flags) == 1 and len(rows) == 1 and self.model.flag_at(rows[0]) is not None
        if not flags:
            self.current_flag = None
            self.pages.setCurrentIndex(0)
            return
        if single:
            self.current_flag = flags[0]
            self._show_flag(flags[0])
            self.pages.setCurrentIndex(1)
            return
        current = self.model.flag_at(self.flag_tree.currentIndex())
        self.current_flag = current
        self._show_batch(flags)
        self.pages.setCurrentIndex(2)

    # ------------------------------------------------------------------ one flag
    def _show_flag(self, flag: Flag) -> None:
        codebook = self.codebook()
        colour = SEVERITY_COLOURS.get(flag.severity, MUTED_TEXT).name()
        self.flag_heading.setText(
            f"{flag.label} · respondent {flag.respondent} · data row {flag.row + 1}"
        )
        self.message_label.setText(
            f"<span style='color:{colour}'><b>{flag.severity.capitalize()}</b> "
            f"({SEVERITY_WORDS.get(flag.severity, '')})</span> — {_html(flag.message)}"
        )
        suggestion = flag.suggestion
        if suggestion is not None and suggestion.action is not None:
            what = suggestion.action.label.lower()
            if suggestion.action is Action.CORRECT:
                what = f"correct to {value_text(suggestion.value)}"
            elif suggestion.action is Action.REVERSE:
                what = f"reverse the scale on the battery {suggestion.value}"
            self.suggestion_label.setText(
                f"<b>Suggested:</b> {_html(what)}. {_html(suggestion.text)}"
            )
            label = ACTION_BUTTON_TEXT[suggestion.action].replace("&", "")
            if suggestion.action is Action.CORRECT:
                label = f"Correct to {value_text(suggestion.value)}"
            self.accept_button.setText(f"Accept: {label}")
            self.accept_button.setEnabled(True)
        else:
            text = suggestion.text if suggestion is not None else ""
            self.suggestion_label.setText(
                f"<b>No single suggestion.</b> {_html(text)}" if text else "<b>No suggestion.</b>"
            )
            self.accept_button.setText("Accept the suggestion")
            self.accept_button.setEnabled(False)
        if flag.decided_by is not None:
            entry = self._entry(flag.decided_by)
            said = f": {entry.action.label.lower()} — “{entry.reason}”" if entry else ""
            self.decided_label.setText(
                f"✓ Decided by ledger entry {flag.decided_by}{said}. A new decision is added "
                "after it; Ledger withdraws one."
            )
            self.decided_label.setVisible(True)
        else:
            self.decided_label.setVisible(False)
        # Which answer a cell decision changes.
        cells = [v for v in flag.variables if codebook.get(v) is not None]
        self.variable_combo.blockSignals(True)
        self.variable_combo.clear()
        for name in cells:
            self.variable_combo.addItem(name, name)
        self.variable_combo.blockSignals(False)
        many = len(cells) > 1
        self.variable_combo.setVisible(many)
        if self._variable_row_label is not None:
            self._variable_row_label.setVisible(many)
        self._fill_value_combo()
        group = battery_of(flag, codebook)
        self.decision_buttons[Action.REVERSE].setEnabled(group is not None)
        self.decision_buttons[Action.REVERSE].setText(
            f"&Reverse scale on {group}" if group else ACTION_BUTTON_TEXT[Action.REVERSE]
        )
        single_cell_ok = bool(cells)
        for action in (Action.CORRECT, Action.SET_MISSING):
            self.decision_buttons[action].setEnabled(single_cell_ok)
        self.error_label.setText("")
        self._load_row(flag)

    def _fill_value_combo(self) -> None:
        flag = self.current_flag
        name = self.variable_combo.currentData()
        self.value_combo.clear()
        if flag is None or name is None:
            self.value_combo.setEnabled(False)
            return
        var = self.codebook().get(name)
        self.value_combo.setEnabled(True)
        if var is not None and var.levels:
            self.value_combo.addItems(list(var.levels))
        suggested = None
        correct = flag.suggestion is not None and flag.suggestion.action is Action.CORRECT
        if correct and (len(flag.variables) == 1 or name == flag.variables[0]):
            suggested = value_text(flag.suggestion.value)
        if suggested is None and len(flag.variables) == 1 and not isinstance(flag.value, dict):
            suggested = value_text(flag.value)
        i = self.value_combo.findText(suggested or "", Qt.MatchFlag.MatchFixedString)
        if i >= 0:
            self.value_combo.setCurrentIndex(i)
        else:
            self.value_combo.setCurrentIndex(-1)
            self.value_combo.setEditText(suggested or "")

    def _on_variable_combo_changed(self, _index: int) -> None:
        self._fill_value_combo()

    def _entry(self, entry_id: int) -> Any:
        from core.ledger import entries_for

        project, wave_id = self.project, self.wave_id
        # Read once per project version: a long ledger is parsed once, not per selection.
        by_id = project.cached(
            ("cleaning-view-entries", wave_id),
            lambda: {e.id: e for e in entries_for(project, wave_id)},
        )
        return by_id.get(entry_id)

    def _load_row(self, flag: Flag) -> None:
        project, wave_id = self.project, self.wave_id
        flags = list(self.run.flags) if self.run is not None else []

        def work(_p: Any) -> Any:
            from core.working import working_data

            working = working_data(project, wave_id)
            return flag, row_cells(working, flag.row, flags), flag.row in working.excluded

        self._context.runner.run(
            work,
            on_success=self._on_row_loaded,
            on_failure=self._on_load_failed,
            key=f"flag-row:{id(self)}",
            show_progress=False,
        )

    def _on_row_loaded(self, result: tuple[Flag, list[Any], bool]) -> None:
        self._show_row(*result)

    def _show_row(self, flag: Flag, cells: list[Any], excluded: bool) -> None:
        from core.checks.flag import CHECK_LABELS

        if self.current_flag is None or self.current_flag.key != flag.key:
            return
        whole = [
            f.label
            for f in (self.run.flags if self.run is not None else [])
            if f.row == flag.row and not f.variables
        ]
        notes = []
        if excluded:
            notes.append("This respondent is excluded from every analysis.")
        if whole:
            notes.append("The whole row is flagged: " + ", ".join(dict.fromkeys(whole)) + ".")
        self.row_note.setText(" ".join(notes))
        self.row_note.setVisible(bool(notes))
        self.row_heading.setText(f"Answers of respondent {flag.respondent}")
        table = self.row_table
        table.setRowCount(len(cells))
        first_flagged = -1
        for r, cell in enumerate(cells):
            if cell.missing_reason is not None:
                answer = missing_text(cell.missing_reason, cell.raw)
            else:
                answer = value_text(cell.value)
            items = [
                QTableWidgetItem(cell.variable),
                QTableWidgetItem(answer),
                QTableWidgetItem(", ".join(CHECK_LABELS.get(c, c) for c in cell.flags)),
                QTableWidgetItem("; ".join(f"{e.action.label} (entry {e.id})" for e in cell.edits)),
            ]
            items[0].setToolTip(cell.question)
            tip = f"{cell.variable}: {cell.question}\nAs imported: {cell.raw or '(blank)'}"
            items[1].setToolTip(tip)
            items[2].setToolTip(items[2].text())
            items[3].setToolTip(items[3].text())
            here = cell.variable in flag.variables
            for c, item in enumerate(items):
                # Every flagged answer of the respondent is highlighted; this flag's in bold.
                if cell.flagged:
                    item.setBackground(QBrush(FLAGGED_BACKGROUND))
                elif cell.edited and c == 1:
                    item.setBackground(QBrush(EDITED_BACKGROUND))
                if cell.missing_reason is not None and c == 1:
                    item.setForeground(QBrush(MUTED_TEXT))
                if here and c == 0:
                    font = item.font()
                    font.setBold(True)
                    item.setFont(font)
                table.setItem(r, c, item)
            if here and first_flagged < 0:
                first_flagged = r
        if first_flagged >= 0:
            table.scrollToItem(
                table.item(first_flagged, 0), QAbstractItemView.ScrollHint.PositionAtCenter
            )

    def row_texts(self) -> list[tuple[str, str, bool]]:
        """(variable, answer, is this flag's cell) of the respondent's row: highlighted as
        flagged and in bold."""
        out = []
        for r in range(self.row_table.rowCount()):
            name = self.row_table.item(r, 0).text()
            bg = self.row_table.item(r, 0).background().color()
            bold = self.row_table.item(r, 0).font().bold()
            out.append((name, self.row_table.item(r, 1).text(), bg == FLAGGED_BACKGROUND and bold))
        return out

    # ------------------------------------------------------------------ decisions
    def accept_suggestion(self) -> None:
        """Enter: record the selected flag's suggestion (or, for several, each one's)."""
        if self.pages.currentIndex() == 2:
            self.decide_selected("suggested")
            return
        flag = self.current_flag
        if flag is None:
            return
        if flag.suggestion is None or flag.suggestion.action is None:
            self.error_label.setText(
                "This flag has no single suggested decision; choose one of the buttons."
            )
            return
        action = flag.suggestion.action
        value = self.value_combo.currentText().strip() if action is Action.CORRECT else None
        self.decide(action, value=value or None)

    def decide(self, action: Action, value: Any = None, reason: str | None = None) -> None:
        """Record one decision on the selected flag (the reason field unless ``reason``)."""
        flag = self.current_flag
        if flag is None:
            return
        reason = (reason if reason is not None else self.reason_edit.text()).strip()
        if not reason:
            self.error_label.setText(
                "Write the reason first: every decision keeps one, and the report quotes it."
            )
            self.reason_edit.setFocus()
            return
        options: dict[str, Any] = {}
        if action in (Action.CORRECT, Action.SET_MISSING):
            options["variable"] = self.variable_combo.currentData()
        if action is Action.CORRECT:
            value = value if value is not None else self.value_combo.currentText().strip()
            if not value:
                self.error_label.setText("Write or choose the corrected value.")
                self.value_combo.setFocus()
                return
            options["value"] = value
        if action is Action.REVERSE:
            options["group"] = battery_of(flag, self.codebook())
        self.error_label.setText("")
        shown = [f.key for f in self.model.shown_flags()]
        after = shown[shown.index(flag.key) + 1 :] if flag.key in shown else []
        self._advance_keys = after
        project, wave_id = self.project, self.wave_id

        def work(_p: Any) -> Any:
            from core.cleaning import decision_for, record_batch
            from core.working import working_data

            d = decision_for(working_data(project, wave_id), flag, action, reason, **options)
            return record_batch(project, wave_id, [d], label=decision_label(d))

        self._context.runner.run(
            work,
            on_success=self._on_decided,
            on_failure=self._on_single_failed,
            writes=True,
            label="Recording the decision…",
        )

    def decide_selected(self, kind: str, reason: str | None = None) -> None:
        """One batch decision over every selected open flag: 'suggested', 'keep',
        'set_missing' or 'exclude'."""
        flags = [f for f in self.selected_flags() if f.decided_by is None]
        reason = (reason if reason is not None else self.batch_reason_edit.text()).strip()
        if not flags:
            self.batch_error.setText("Every selected flag is already decided.")
            return
        if not reason:
            self.batch_error.setText("Write the reason first; it is kept with every decision.")
            self.batch_reason_edit.setFocus()
            return
        action = None if kind == "suggested" else Action(kind)
        if action is None:
            lacking = [f for f in flags if f.suggestion is None or f.suggestion.action is None]
            if lacking:
                self.batch_error.setText(
                    f"{len(lacking)} of the selected flags have no single suggestion "
                    f"(for example respondent {lacking[0].respondent}, "
                    f"{lacking[0].label.lower()}); leave them out or choose a decision."
                )
                return
        if action is Action.SET_MISSING:
            several = [f for f in flags if len(f.variables) != 1]
            if several:
                self.batch_error.setText(
                    f"{len(several)} of the selected flags are about more than one answer; "
                    "set those to missing one at a time."
                )
                return
        self.batch_error.setText("")
        project, wave_id = self.project, self.wave_id

        def work(_p: Any) -> Any:
            from core.cleaning import decide_many

            return decide_many(project, wave_id, flags, action, reason)

        self._context.runner.run(
            work,
            on_success=self._on_decided,
            on_failure=self._on_batch_failed,
            writes=True,
            label=f"Recording {len(flags)} decisions…",
        )

    def _on_decided(self, result: tuple[list[int], Changes]) -> None:
        ids = result[0]
        if self._context.show_message is not None and ids:
            what = "1 decision" if len(ids) == 1 else f"{len(ids)} decisions"
            self._context.show_message(f"Recorded {what} in the ledger. Edit ▸ Undo takes it back.")

    def _on_single_failed(self, exc: BaseException) -> None:
        self._on_decision_failed(exc, self.error_label)

    def _on_batch_failed(self, exc: BaseException) -> None:
        self._on_decision_failed(exc, self.batch_error)

    def _on_decision_failed(self, exc: BaseException, where: QLabel) -> None:
        self._advance_keys = None
        where.setText(failure_text(self, exc))

    def _show_batch(self, flags: list[Flag]) -> None:
        open_ = [f for f in flags if f.decided_by is None]
        self.batch_heading.setText(
            f"{len(flags)} flags selected — {len(open_)} open, {len(flags) - len(open_)} decided"
        )
        lines = []
        for f in flags[:12]:
            mark = "✓ " if f.decided_by is not None else ""
            lines.append(f"{mark}{f.label}: {f.respondent}, {_html(flag_value_text(f))}")
        if len(flags) > 12:
            lines.append(f"… and {len(flags) - 12} more")
        self.batch_list.setText("<br>".join(lines))
        self.batch_error.setText("")
        has_suggestion = all(
            f.suggestion is not None and f.suggestion.action is not None for f in open_
        )
        self.batch_buttons["suggested"].setEnabled(bool(open_) and has_suggestion)
        self.batch_buttons["set_missing"].setEnabled(
            bool(open_) and all(len(f.variables) == 1 for f in open_)
        )
        for key in ("keep", "exclude"):
            self.batch_buttons[key].setEnabled(bool(open_))

    # ------------------------------------------------------------------ dialogs
    def open_rules(self) -> Any:
        from desktopapp.rule_dialog import RuleDialog

        dialog = RuleDialog(self.project, self._context.runner, self.instrument_id, self)
        self._keep(dialog)
        dialog.open()
        return dialog

    def open_recode(self) -> Any:
        from desktopapp.rule_dialog import RecodeDialog

        dialog = RecodeDialog(self.project, self._context.runner, self.wave_id, self)
        self._keep(dialog)
        dialog.open()
        return dialog

    def open_settings(self) -> Any:
        from desktopapp.check_settings_dialog import CheckSettingsDialog

        dialog = CheckSettingsDialog(self.project, self._context.runner, self)
        self._keep(dialog)
        dialog.open()
        return dialog

    def _keep(self, dialog: Any) -> None:
        self._dialogs = [d for d in self._dialogs if d.isVisible()] + [dialog]

    def screenshot_dialogs(self) -> list[tuple[str, Any]]:
        from desktopapp.check_settings_dialog import CheckSettingsDialog
        from desktopapp.rule_dialog import RecodeDialog, RuleDialog

        rules = RuleDialog(self.project, self._context.runner, self.instrument_id, self)
        when, then = rules.when_list.rows[0], rules.then_list.rows[0]
        when.set_condition("completed", "is", "No")
        then.set_condition("credential_earned", "is not", "Yes")
        return [
            ("consistency-rules", rules),
            (
                "recode-everywhere",
                RecodeDialog(self.project, self._context.runner, self.wave_id, self),
            ),
            ("check-settings", CheckSettingsDialog(self.project, self._context.runner, self)),
        ]

    def prepare_screenshot(self) -> None:
        """Select a flag worth showing (the first range flag, else the first flag)."""
        flags = self.model.shown_flags()
        pick = next((f for f in flags if f.check == "range"), flags[0] if flags else None)
        if pick is not None:
            self.select_flag(pick)
            self.reason_edit.setText("Impossible value; the paper form could not be found")

    def screenshot_states(self) -> list[tuple[str, Any]]:
        """A batch selection, then the list after a few decisions (screenshots run on a
        temporary copy of the demo, so these decisions touch nothing of the user's)."""

        def batch() -> None:
            speeders = [f for f in self.model.shown_flags() if f.check == "speeder"]
            self.select_flags(speeders)
            self.batch_reason_edit.setText("Under a quarter of the median time, many blanks")

        def decided() -> None:
            zero = next((f for f in self.model.shown_flags() if f.check == "wandering_zero"), None)
            if zero is not None:
                self.select_flag(zero)
                self.reason_edit.setText("The paper form shows the smaller value")
                self.accept_suggestion()
            outliers = [f for f in self.model.shown_flags() if f.check == "outlier"]
            if outliers:
                self.select_flags(outliers)
                self.decide_selected("keep", reason="Checked against the source: real values")
            self.prepare_screenshot()

        return [("flags-batch", batch), ("flags-decided", decided)]

    def shutdown(self) -> None:
        self.flag_tree.selectionModel().blockSignals(True)
        for dialog in self._dialogs:
            dialog.close()


def _html(text: str) -> str:
    return str(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


__all__ = ["CleaningView", "battery_of", "decision_label", "merge_changes"]
