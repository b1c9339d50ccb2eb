"""Rules that re-apply to every wave: consistency rules and "every value like this" recodes.

:class:`RuleDialog` builds a consistency rule with pickers (variable, comparison, a value
from the variable's answers) and shows the rule's text as it will be stored; the text can
also be typed, and the parser's plain message says what it cannot read. The same dialog
lists the instrument's rules and removes one. :class:`RecodeDialog` records "recode this
value in these variables" (for example -99 in every numeric item) as one ledger decision
that later waves can take over.

Writes go through ``core.rules.add_rule`` / ``remove_rule`` and ``core.cleaning.recode_all``
on the runner's writer thread; each is one step for Edit ▸ Undo.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QFont
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QListWidget,
    QListWidgetItem,
    QPushButton,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from core.codebook import Codebook, Variable
from core.errors import RuleError
from core.kinds import Kind
from core.rules import ORDER_OPS, PRESENCE_OPS, Condition, Rule, parse_rule, validate_rule
from desktopapp.errors import failure_text, message_for
from desktopapp.views import muted_label, section_label

OP_WORDS = {
    "is": "is",
    "is not": "is not",
    "is one of": "is one of",
    "is not one of": "is not one of",
    "<": "is less than (<)",
    "<=": "is at most (<=)",
    ">": "is more than (>)",
    ">=": "is at least (>=)",
    "is missing": "is missing",
    "is answered": "is answered",
}
RULE_ID_ROLE = Qt.ItemDataRole.UserRole + 40
OK_COLOUR = "#1B5E20"
ERROR_COLOUR = "#B3261E"


def ordered(var: Variable) -> bool:
    """Whether '<' and friends make sense for this variable (numbers, dates, ordered scales)."""
    return var.kind in (Kind.NUMERIC, Kind.RANKING, Kind.DATE) or var.kind.ordered


def split_values(text: str, levels: tuple[str, ...]) -> list[str]:
    """A typed list of answers, split on commas, but keeping answers that hold a comma
    themselves ("$20,000 to $39,999") whole."""
    out: list[str] = []
    rest = text.strip()
    by_length = sorted(levels, key=len, reverse=True)
    while rest:
        hit = next(
            (
                lv
                for lv in by_length
                if rest.lower().startswith(lv.lower())
                and (len(rest) == len(lv) or rest[len(lv) :].lstrip().startswith(","))
            ),
            None,
        )
        if hit is not None:
            out.append(rest[: len(hit)])
            rest = rest[len(hit) :].lstrip().removeprefix(",").strip()
            continue
        head, _, rest = rest.partition(",")
        if head.strip():
            out.append(head.strip())
        rest = rest.strip()
    return out


def _number_or_text(text: str) -> Any:
    try:
        return float(text.replace(",", ""))
    except ValueError:
        return text  # the rule check says why it cannot be compared


class ConditionRow(QWidget):
    """One condition: variable, comparison, value (an answer of the variable, or typed)."""

    changed = Signal()
    remove_requested = Signal(object)

    def __init__(self, codebook: Codebook, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.codebook = codebook
        self.variable_combo = QComboBox()
        self.variable_combo.setObjectName("conditionVariable")
        self.variable_combo.addItem("Choose a variable", None)
        for var in codebook:
            if var.kind in (Kind.TEXT,):
                continue
            self.variable_combo.addItem(var.name, var.name)
            self.variable_combo.setItemData(
                self.variable_combo.count() - 1, var.question, Qt.ItemDataRole.ToolTipRole
            )
        self.op_combo = QComboBox()
        self.op_combo.setObjectName("conditionOp")
        self.value_combo = QComboBox()
        self.value_combo.setObjectName("conditionValue")
        self.value_combo.setEditable(True)
        self.value_combo.setInsertPolicy(QComboBox.InsertPolicy.NoInsert)
        self.value_combo.setMinimumContentsLength(14)
        self.value_combo.lineEdit().setPlaceholderText("value")
        self.remove_button = QToolButton()
        self.remove_button.setText("✕")
        self.remove_button.setToolTip("Remove this condition")
        layout = QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.variable_combo, 2)
        layout.addWidget(self.op_combo, 1)
        layout.addWidget(self.value_combo, 2)
        layout.addWidget(self.remove_button)
        self._fill_ops()
        self.variable_combo.currentIndexChanged.connect(self._on_variable_changed)
        self.op_combo.currentIndexChanged.connect(self._on_op_changed)
        self.value_combo.currentTextChanged.connect(lambda _t: self.changed.emit())
        self.remove_button.clicked.connect(lambda: self.remove_requested.emit(self))

    def variable(self) -> Variable | None:
        name = self.variable_combo.currentData()
        return self.codebook.get(name) if name else None

    def _fill_ops(self) -> None:
        var = self.variable()
        current = self.op_combo.currentData()
        self.op_combo.blockSignals(True)
        self.op_combo.clear()
        for op, words in OP_WORDS.items():
            if op in ORDER_OPS and (var is None or not ordered(var)):
                continue
            self.op_combo.addItem(words, op)
        i = self.op_combo.findData(current)
        self.op_combo.setCurrentIndex(max(0, i))
        self.op_combo.blockSignals(False)

    def _on_variable_changed(self, _index: int) -> None:
        self._fill_ops()
        var = self.variable()
        self.value_combo.blockSignals(True)
        self.value_combo.clear()
        if var is not None:
            self.value_combo.addItems(list(var.levels))
        self.value_combo.setCurrentIndex(-1)
        self.value_combo.setEditText("")
        self.value_combo.blockSignals(False)
        self._on_op_changed(0)

    def _on_op_changed(self, _index: int) -> None:
        self.value_combo.setVisible(self.op_combo.currentData() not in PRESENCE_OPS)
        self.changed.emit()

    def set_condition(self, variable: str, op: str, value: str = "") -> None:
        """Fill the pickers (as a person would choose them)."""
        self.variable_combo.setCurrentIndex(max(0, self.variable_combo.findData(variable)))
        self.op_combo.setCurrentIndex(max(0, self.op_combo.findData(op)))
        i = self.value_combo.findText(value, Qt.MatchFlag.MatchFixedString)
        if i >= 0:
            self.value_combo.setCurrentIndex(i)
        else:
            self.value_combo.setEditText(value)

    def is_blank(self) -> bool:
        return self.variable() is None

    def condition(self) -> Condition:
        """The condition the pickers say; RuleError in plain words when incomplete."""
        var = self.variable()
        if var is None:
            raise RuleError("Choose a variable for every condition (or remove the row).")
        op = self.op_combo.currentData()
        if op in PRESENCE_OPS:
            return Condition(var.name, op)
        text = self.value_combo.currentText().strip()
        if not text:
            raise RuleError(f"Choose or type the value {var.name} is compared with.")
        values: list[Any] = split_values(text, var.levels) if "one of" in op else [text]
        if var.kind in (Kind.NUMERIC, Kind.RANKING):
            values = [_number_or_text(v) for v in values]
        return Condition(var.name, op, tuple(values))


class ConditionList(QWidget):
    """A list of condition rows joined by 'and' or 'or', with an Add button."""

    changed = Signal()

    def __init__(
        self, codebook: Codebook, first_row: bool, lead: str, parent: QWidget | None = None
    ) -> None:
        super().__init__(parent)
        self.codebook = codebook
        self.rows: list[ConditionRow] = []
        self.joiner_combo = QComboBox()
        self.joiner_combo.addItem("all of these hold (and)", "and")
        self.joiner_combo.addItem("any of these holds (or)", "or")
        self.add_button = QPushButton("Add a condition")
        self._rows_layout = QVBoxLayout()
        self._rows_layout.setContentsMargins(0, 0, 0, 0)
        top = QHBoxLayout()
        top.addWidget(QLabel(lead))
        top.addWidget(self.joiner_combo)
        top.addStretch(1)
        top.addWidget(self.add_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addLayout(top)
        layout.addLayout(self._rows_layout)
        self.joiner_combo.currentIndexChanged.connect(lambda _i: self.changed.emit())
        self.add_button.clicked.connect(self.add_row)
        if first_row:
            self.add_row()

    def add_row(self) -> ConditionRow:
        row = ConditionRow(self.codebook, self)
        row.changed.connect(self.changed)
        row.remove_requested.connect(self._on_row_remove_requested)
        self.rows.append(row)
        self._rows_layout.addWidget(row)
        self.changed.emit()
        return row

    def _on_row_remove_requested(self, row: ConditionRow) -> None:
        self.rows.remove(row)
        row.setParent(None)
        row.deleteLater()
        self.changed.emit()

    def clear(self) -> None:
        for row in list(self.rows):
            self._on_row_remove_requested(row)

    def joiner(self) -> str:
        return self.joiner_combo.currentData()

    def conditions(self) -> list[Condition]:
        return [row.condition() for row in self.rows if not row.is_blank()]


class RuleDialog(QDialog):
    """Build, type, list and remove the consistency rules of one instrument."""

    def __init__(
        self,
        project: Any,
        runner: Any,
        instrument_id: int,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setObjectName("ruleDialog")
        self.setWindowTitle("Consistency rules")
        self.project = project
        self.runner = runner
        self.instrument_id = instrument_id
        self.codebook = project.codebook(instrument_id)
        self._syncing = False

        intro = muted_label(
            "A rule says what must hold for every respondent. Each respondent who breaks it "
            "is flagged under 'Consistency rule broken'. Rules belong to the questionnaire, "
            "so they check later waves too."
        )
        self.when_list = ConditionList(self.codebook, True, "If")
        self.when_list.setObjectName("whenConditions")
        self.then_list = ConditionList(self.codebook, True, "Then")
        self.then_list.setObjectName("thenConditions")
        when_box = QGroupBox("Condition — leave it unchosen for a rule about everyone")
        QVBoxLayout(when_box).addWidget(self.when_list)
        then_box = QGroupBox("What must then hold")
        QVBoxLayout(then_box).addWidget(self.then_list)

        self.text_edit = QLineEdit()
        self.text_edit.setObjectName("ruleText")
        self.text_edit.setPlaceholderText(
            'if completed is "No" then credential_earned is not "Yes"'
        )
        mono = QFont("monospace")
        mono.setStyleHint(QFont.StyleHint.Monospace)
        self.text_edit.setFont(mono)
        self.text_edit.setToolTip(
            "The rule in words. The pickers above write it here; you can also type it. "
            "Conditions: is, is not, is one of, <, <=, >, >=, is missing, is answered; join "
            "with and / or."
        )
        self.message_label = QLabel("")
        self.message_label.setObjectName("ruleMessage")
        self.message_label.setWordWrap(True)
        self.message_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.add_button = QPushButton("Add this rule")
        self.add_button.setObjectName("addRuleButton")
        self.add_button.setDefault(True)

        self.rule_list = QListWidget()
        self.rule_list.setObjectName("ruleList")
        self.rule_list.setWordWrap(True)
        self.remove_button = QPushButton("Remove rule")
        self.remove_button.setObjectName("removeRuleButton")
        self.remove_button.setEnabled(False)
        self.remove_button.setToolTip(
            "Switch the rule off. It stays in the project (the report lists removed rules); "
            "Edit ▸ Undo brings it back."
        )
        close = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        close.rejected.connect(self.reject)

        text_row = QHBoxLayout()
        text_row.addWidget(self.text_edit, 1)
        text_row.addWidget(self.add_button)
        list_row = QHBoxLayout()
        list_row.addStretch(1)
        list_row.addWidget(self.remove_button)

        layout = QVBoxLayout(self)
        layout.addWidget(intro)
        layout.addWidget(when_box)
        layout.addWidget(then_box)
        layout.addWidget(section_label("The rule"))
        layout.addLayout(text_row)
        layout.addWidget(self.message_label)
        layout.addWidget(section_label("Rules of this questionnaire"))
        layout.addWidget(self.rule_list, 1)
        layout.addLayout(list_row)
        layout.addWidget(close)
        self.resize(820, 680)

        self.when_list.changed.connect(self._on_form_changed)
        self.then_list.changed.connect(self._on_form_changed)
        self.text_edit.textEdited.connect(self._on_text_edited)
        self.text_edit.returnPressed.connect(self.add_rule)
        self.add_button.clicked.connect(self.add_rule)
        self.rule_list.currentRowChanged.connect(
            lambda row: self.remove_button.setEnabled(
                row >= 0 and self._selected_rule() is not None
            )
        )
        self.remove_button.clicked.connect(self._on_remove_button_clicked)
        self.refresh_rules()
        self._on_form_changed()

    # ------------------------------------------------------------------ form and text
    def form_rule(self) -> Rule:
        """The rule the pickers describe, checked against the codebook."""
        when = self.when_list.conditions()
        then = self.then_list.conditions()
        rule = Rule.build(
            when=when,
            then=then,
            when_joiner=self.when_list.joiner(),
            then_joiner=self.then_list.joiner(),
        )
        return validate_rule(rule, self.codebook)

    def _on_form_changed(self) -> None:
        if self._syncing:
            return
        try:
            rule = self.form_rule()
        except RuleError as exc:
            if all(r.is_blank() for r in self.then_list.rows):
                self._say("Choose the conditions with the pickers, or type the rule.", None)
            else:
                self._say(str(exc), False)
            return
        self._syncing = True
        self.text_edit.setText(rule.to_text())
        self._syncing = False
        self._say(f"Reads: {rule.to_text()}", True)

    def _on_text_edited(self, text: str) -> None:
        self.check_text(text)

    def check_text(self, text: str | None = None) -> Rule | None:
        """Parse the typed rule; show the parser's message or how it reads."""
        text = self.text_edit.text() if text is None else text
        if not text.strip():
            self._say("Type a rule, or build one with the pickers above.", None)
            return None
        try:
            rule = parse_rule(text, self.codebook)
        except RuleError as exc:
            self._say(str(exc), False)
            return None
        self._say(f"Reads: {rule.to_text()}", True)
        return rule

    def _say(self, text: str, ok: bool | None) -> None:
        colour = {True: OK_COLOUR, False: ERROR_COLOUR}.get(ok)  # type: ignore[call-overload]
        self.message_label.setStyleSheet(f"color: {colour};" if colour else "")
        self.message_label.setText(text)
        self.add_button.setEnabled(ok is True)

    def message(self) -> str:
        return self.message_label.text()

    # ------------------------------------------------------------------ writes
    def add_rule(self) -> None:
        """Store the rule in the text field (what the pickers built, or what was typed)."""
        from core.rules import add_rule

        rule = self.check_text()
        if rule is None:
            return
        project, inst = self.project, self.instrument_id
        self.runner.run(
            lambda _p: add_rule(project, inst, rule),
            on_success=self._on_rule_added,
            on_failure=self._on_write_failed,
            writes=True,
            label="Adding the rule…",
        )

    def _on_rule_added(self, result: tuple[int, Any]) -> None:
        rule_id = result[0]
        self.refresh_rules()
        self._syncing = True
        self.when_list.clear()
        self.then_list.clear()
        self.when_list.add_row()
        self.then_list.add_row()
        self.text_edit.clear()
        self._syncing = False
        self._say(f"Rule {rule_id} added. Respondents who break it are flagged.", None)

    def remove_rule(self, rule_id: int) -> None:
        from core.rules import remove_rule

        project = self.project
        self.runner.run(
            lambda _p: remove_rule(project, rule_id),
            on_success=self._after_remove,
            on_failure=self._on_write_failed,
            writes=True,
            label="Removing the rule…",
        )

    def _after_remove(self, _changes: Any) -> None:
        self.refresh_rules()
        self._say("Rule removed (Edit ▸ Undo brings it back).", None)

    def _on_write_failed(self, exc: BaseException) -> None:
        self._say(failure_text(self, exc), False)

    def _selected_rule(self) -> int | None:
        item = self.rule_list.currentItem()
        return item.data(RULE_ID_ROLE) if item is not None else None

    def _on_remove_button_clicked(self) -> None:
        rule_id = self._selected_rule()
        if rule_id is not None:
            self.remove_rule(rule_id)

    def refresh_rules(self) -> None:
        from core.rules import list_rules

        self.rule_list.clear()
        try:
            rules = list_rules(self.project, self.instrument_id)
        except Exception as exc:  # noqa: BLE001 - shown in place
            self._say(message_for(exc)[0], False)
            return
        if not rules:
            item = QListWidgetItem("No rules yet.")
            item.setFlags(Qt.ItemFlag.NoItemFlags)
            self.rule_list.addItem(item)
        for r in rules:
            text = f"{r.id}.  {r.text}"
            if r.problem:
                text += f"\n     Not applied: {r.problem}"
            item = QListWidgetItem(text)
            item.setData(RULE_ID_ROLE, r.id)
            self.rule_list.addItem(item)
        self.remove_button.setEnabled(False)

    def rule_texts(self) -> list[str]:
        return [
            self.rule_list.item(i).text()
            for i in range(self.rule_list.count())
            if self.rule_list.item(i).data(RULE_ID_ROLE) is not None
        ]


class RecodeDialog(QDialog):
    """'For every value like this': recode one raw value in chosen variables, as a rule."""

    def __init__(
        self,
        project: Any,
        runner: Any,
        wave_id: int,
        parent: QWidget | None = None,
        old_text: str | None = None,
        variables: list[str] | None = None,
    ) -> None:
        super().__init__(parent)
        self.setObjectName("recodeDialog")
        self.setWindowTitle("Recode a value everywhere")
        self.project = project
        self.runner = runner
        self.wave_id = wave_id
        wave = project.wave(wave_id)
        self.codebook = project.codebook(wave.instrument_id)

        intro = muted_label(
            "Every cell of the chosen variables whose text in the source is exactly this value "
            "is recoded. The decision is kept as a rule: later waves of this questionnaire can "
            "take it over. Single-cell corrections are not carried over."
        )
        self.old_edit = QLineEdit(old_text if old_text is not None else "-99")
        self.old_edit.setObjectName("recodeOld")
        self.missing_check = QCheckBox("Set to missing (reason: set missing in cleaning)")
        self.missing_check.setObjectName("recodeMissing")
        self.missing_check.setChecked(True)
        self.new_edit = QLineEdit()
        self.new_edit.setObjectName("recodeNew")
        self.new_edit.setPlaceholderText("the new value")
        self.new_edit.setEnabled(False)
        self.reason_edit = QLineEdit()
        self.reason_edit.setObjectName("recodeReason")
        self.reason_edit.setPlaceholderText("Why, in plain words (required)")
        self.variable_list = QListWidget()
        self.variable_list.setObjectName("recodeVariables")
        for var in self.codebook:
            item = QListWidgetItem(f"{var.name}  ({var.kind.label.lower()})")
            item.setData(Qt.ItemDataRole.UserRole, var.name)
            item.setFlags(item.flags() | Qt.ItemFlag.ItemIsUserCheckable)
            chosen = var.name in variables if variables else var.kind is Kind.NUMERIC
            item.setCheckState(Qt.CheckState.Checked if chosen else Qt.CheckState.Unchecked)
            self.variable_list.addItem(item)
        self.numeric_button = QPushButton("All numeric items")
        self.none_button = QPushButton("None")
        self.error_label = QLabel("")
        self.error_label.setObjectName("recodeError")
        self.error_label.setWordWrap(True)
        self.error_label.setStyleSheet(f"color: {ERROR_COLOUR};")
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel
        )
        self.ok_button = buttons.button(QDialogButtonBox.StandardButton.Ok)
        self.ok_button.setText("Recode")
        buttons.accepted.connect(self.submit)
        buttons.rejected.connect(self.reject)

        form = QFormLayout()
        form.addRow("Value in the source", self.old_edit)
        form.addRow("", self.missing_check)
        form.addRow("Recode to", self.new_edit)
        form.addRow("Reason", self.reason_edit)
        pick = QHBoxLayout()
        pick.addWidget(QLabel("In these variables"))
        pick.addStretch(1)
        pick.addWidget(self.numeric_button)
        pick.addWidget(self.none_button)
        layout = QVBoxLayout(self)
        layout.addWidget(intro)
        layout.addLayout(form)
        layout.addLayout(pick)
        layout.addWidget(self.variable_list, 1)
        layout.addWidget(self.error_label)
        layout.addWidget(buttons)
        self.resize(560, 620)

        self.missing_check.toggled.connect(lambda on: self.new_edit.setEnabled(not on))
        self.numeric_button.clicked.connect(lambda: self._check_where(Kind.NUMERIC))
        self.none_button.clicked.connect(lambda: self._check_where(None))

    def _check_where(self, kind: Kind | None) -> None:
        for i in range(self.variable_list.count()):
            item = self.variable_list.item(i)
            var = self.codebook[item.data(Qt.ItemDataRole.UserRole)]
            on = kind is not None and var.kind is kind
            item.setCheckState(Qt.CheckState.Checked if on else Qt.CheckState.Unchecked)

    def chosen(self) -> list[str]:
        out = []
        for i in range(self.variable_list.count()):
            item = self.variable_list.item(i)
            if item.checkState() == Qt.CheckState.Checked:
                out.append(item.data(Qt.ItemDataRole.UserRole))
        return out

    def submit(self) -> None:
        from core.cleaning import recode_all

        old = self.old_edit.text().strip()
        reason = self.reason_edit.text().strip()
        names = self.chosen()
        new: Any = None if self.missing_check.isChecked() else self.new_edit.text().strip()
        problem = None
        if not old:
            problem = "Write the value to recode, exactly as it appears in the source."
        elif not names:
            problem = "Choose at least one variable."
        elif new == "":
            problem = "Write the new value, or tick 'Set to missing'."
        elif not reason:
            problem = "Write the reason: it goes into the ledger and the report's notes."
        if problem:
            self.error_label.setText(problem)
            return
        project, wave_id = self.project, self.wave_id
        self.error_label.setText("")
        self.runner.run(
            lambda _p: recode_all(project, wave_id, names, old, new, reason),
            on_success=self._on_done,
            on_failure=self._on_failed,
            writes=True,
            label="Recoding…",
        )

    def _on_done(self, _result: Any) -> None:
        self.accept()

    def _on_failed(self, exc: BaseException) -> None:
        self.error_label.setText(failure_text(self, exc))


__all__ = ["ConditionRow", "RecodeDialog", "RuleDialog", "split_values"]
