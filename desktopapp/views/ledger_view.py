"""The ledger node of a wave: every cleaning decision, filterable, each one withdrawable.

The ledger is append-only: withdrawing a decision adds a withdrawal entry (with its own
reason) and the original stays listed, greyed, so the history is never lost. Filters are
the same as ``core.cleaning.ledger_list``: by variable, by check, by words in the reason.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from core.checks.flag import CHECK_LABELS
from core.project import Changes
from desktopapp.errors import failure_text, message_for
from desktopapp.models.ledger import COLUMNS, LedgerModel
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, muted_label, title_label

ALL = "__all__"


def register(registry: Any) -> None:
    registry.add(NodeType.LEDGER, LedgerView)


class ReasonDialog(QDialog):
    """Asks for the reason of a step (a withdrawal); OK stays off until one is written."""

    def __init__(self, title: str, text: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("reasonDialog")
        self.setWindowTitle(title)
        self.reason_edit = QLineEdit()
        self.reason_edit.setObjectName("reasonEdit")
        self.reason_edit.setPlaceholderText("In plain words, why")
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel
        )
        self.ok_button = buttons.button(QDialogButtonBox.StandardButton.Ok)
        self.ok_button.setEnabled(False)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self.reason_edit.textChanged.connect(lambda t: self.ok_button.setEnabled(bool(t.strip())))
        layout = QVBoxLayout(self)
        label = QLabel(text)
        label.setWordWrap(True)
        layout.addWidget(label)
        layout.addWidget(self.reason_edit)
        layout.addWidget(buttons)
        self.resize(460, self.sizeHint().height())

    def reason(self) -> str:
        return self.reason_edit.text().strip()


class LedgerView(QWidget):
    """The wave's ledger as a table with filters and a Withdraw button."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("ledgerView")
        self._context = context
        self.node = node
        self.wave_id: int = node.wave_id  # type: ignore[assignment]
        wave = context.project.wave(self.wave_id)

        self.title = title_label(f"Ledger — wave {wave.label}")
        self.summary_label = muted_label("")
        self.summary_label.setObjectName("ledgerSummary")
        self.variable_combo = QComboBox()
        self.variable_combo.setObjectName("ledgerVariableFilter")
        self.check_combo = QComboBox()
        self.check_combo.setObjectName("ledgerCheckFilter")
        self.reason_edit = QLineEdit()
        self.reason_edit.setObjectName("ledgerReasonFilter")
        self.reason_edit.setPlaceholderText("Words in the reason")
        self.reason_edit.setClearButtonEnabled(True)
        self.withdrawn_check = QCheckBox("Show withdrawn decisions")
        self.withdrawn_check.setObjectName("ledgerShowWithdrawn")
        self.withdrawn_check.setChecked(True)
        self.withdraw_button = QPushButton("Withdraw…")
        self.withdraw_button.setObjectName("withdrawButton")
        self.withdraw_button.setToolTip(
            "Take the selected decisions back. A withdrawal is added to the ledger with your "
            "reason; the decision stays on record."
        )
        self.withdraw_button.setEnabled(False)
        self.note_label = muted_label("")

        self.model = LedgerModel(self)
        self.table = QTableView()
        self.table.setObjectName("ledgerTable")
        self.table.setModel(self.model)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.table.verticalHeader().setVisible(False)
        self.table.setWordWrap(False)
        self.table.setAlternatingRowColors(True)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setStretchLastSection(False)
        widths = {
            "id": 48,
            "state": 72,
            "action": 140,
            "respondent": 140,
            "variables": 130,
            "old": 80,
            "new": 110,
            "reason": 320,
            "check": 160,
            "created": 130,
            "author": 100,
        }
        for i, (key, _) in enumerate(COLUMNS):
            header.resizeSection(i, widths.get(key, 120))

        filters = QHBoxLayout()
        filters.addWidget(QLabel("Variable"))
        filters.addWidget(self.variable_combo, 1)
        filters.addWidget(QLabel("Check"))
        filters.addWidget(self.check_combo, 1)
        filters.addWidget(QLabel("Reason"))
        filters.addWidget(self.reason_edit, 2)
        filters.addWidget(self.withdrawn_check)

        actions = QHBoxLayout()
        actions.addWidget(self.note_label, 1)
        actions.addWidget(self.withdraw_button)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(16, 12, 16, 12)
        layout.addWidget(self.title)
        layout.addWidget(self.summary_label)
        layout.addLayout(filters)
        layout.addWidget(self.table, 1)
        layout.addLayout(actions)

        self._fill_filters()
        self._connect_signals()
        self.reload()

    def _connect_signals(self) -> None:
        self.variable_combo.currentIndexChanged.connect(self._on_filter_changed)
        self.check_combo.currentIndexChanged.connect(self._on_filter_changed)
        self.reason_edit.textChanged.connect(self._on_filter_changed)
        self.withdrawn_check.toggled.connect(self._on_filter_changed)
        self.withdraw_button.clicked.connect(self._on_withdraw_button_clicked)
        self.table.selectionModel().selectionChanged.connect(self._on_selection_changed)

    @property
    def project(self) -> Any:
        return self._context.project

    def _fill_filters(self) -> None:
        wave = self.project.wave(self.wave_id)
        codebook = self.project.codebook(wave.instrument_id)
        keep_var = self.variable_combo.currentData()
        keep_check = self.check_combo.currentData()
        for combo in (self.variable_combo, self.check_combo):
            combo.blockSignals(True)
            combo.clear()
        self.variable_combo.addItem("Any variable", ALL)
        for var in codebook:
            self.variable_combo.addItem(var.name, var.name)
        self.check_combo.addItem("Any check", ALL)
        self.check_combo.addItem("No check (a decision of your own)", None)
        for check, label in CHECK_LABELS.items():
            self.check_combo.addItem(label, check)
        for combo, keep in ((self.variable_combo, keep_var), (self.check_combo, keep_check)):
            i = combo.findData(keep) if keep is not None else 0
            combo.setCurrentIndex(max(0, i))
            combo.blockSignals(False)

    # ------------------------------------------------------------------ filters
    def set_filters(
        self,
        variable: str | None = None,
        check: str | None = None,
        reason: str | None = None,
    ) -> None:
        """Set the filters as a person would with the controls (None: any)."""
        self.variable_combo.setCurrentIndex(max(0, self.variable_combo.findData(variable or ALL)))
        self.check_combo.setCurrentIndex(max(0, self.check_combo.findData(check or ALL)))
        self.reason_edit.setText(reason or "")
        self.reload()

    def _on_filter_changed(self, *_args: Any) -> None:
        self.reload()

    def reload(self) -> None:
        from core.cleaning import ledger_list

        variable = self.variable_combo.currentData()
        check = self.check_combo.currentData()
        reason = self.reason_edit.text().strip() or None
        selected = self.selected_ids()
        try:
            rows = ledger_list(
                self.project,
                self.wave_id,
                variable=None if variable == ALL else variable,
                check=None if check in (ALL, None) else check,
                reason=reason,
                include_withdrawn=self.withdrawn_check.isChecked(),
            )
            everything = ledger_list(self.project, self.wave_id)
        except Exception as exc:  # noqa: BLE001 - shown, never raised into Qt
            self.summary_label.setText(message_for(exc)[0])
            return
        if check is None:  # "no check": decisions made without a flag
            rows = [(e, a) for e, a in rows if e.check is None]
        self.model.set_rows(rows)
        active = sum(1 for _, a in everything if a)
        total = len(everything)
        if total == 0:
            self.summary_label.setText(
                "No decisions yet. Decisions made in Checks and flags are listed here, "
                "with their reasons."
            )
        else:
            self.summary_label.setText(
                f"{total} decision{'s' if total != 1 else ''} on record, {active} in force, "
                f"{total - active} withdrawn. Showing {len(rows)}. Nothing is ever deleted."
            )
        for entry_id in selected:
            row = self.model.row_of(entry_id)
            if row >= 0:
                self.table.selectRow(row)
        self._on_selection_changed()

    def project_changed(self, changes: Changes) -> None:
        if changes.codebook:
            self._fill_filters()
        mine = not changes.wave_ids or self.wave_id in changes.wave_ids
        if (changes.ledger and mine) or changes.codebook:
            self.reload()

    # ------------------------------------------------------------------ withdraw
    def selected_ids(self) -> list[int]:
        rows = sorted({i.row() for i in self.table.selectionModel().selectedRows()})
        return [self.model.entry_at(r)[0].id for r in rows if r < self.model.rowCount()]

    def _on_selection_changed(self, *_args: Any) -> None:
        live = [
            r
            for r in {i.row() for i in self.table.selectionModel().selectedRows()}
            if r < self.model.rowCount() and self.model.entry_at(r)[1]
        ]
        self.withdraw_button.setEnabled(bool(live))
        self.withdraw_button.setText(
            f"Withdraw {len(live)} decisions…" if len(live) > 1 else "Withdraw…"
        )

    def _on_withdraw_button_clicked(self) -> None:
        ids = [i for i in self.selected_ids() if self.model.entry_at(self.model.row_of(i))[1]]
        if not ids:
            return
        dialog = ReasonDialog(
            "Withdraw decisions" if len(ids) > 1 else "Withdraw a decision",
            "Why are you taking "
            + ("these decisions" if len(ids) > 1 else f"decision {ids[0]}")
            + " back? The ledger keeps the decision and your reason.",
            self,
        )
        dialog.accepted.connect(lambda: self.withdraw(ids, dialog.reason()))
        dialog.open()
        self._dialog = dialog

    def withdraw(self, entry_ids: list[int], reason: str) -> None:
        """Withdraw entries on the writer thread (one step: Edit ▸ Undo brings them back)."""
        from core.ledger import withdraw

        if not reason.strip():
            self.note_label.setText("Write why you are withdrawing it first.")
            return
        project, wave_id = self.project, self.wave_id
        self.note_label.setText("")
        self._context.runner.run(
            lambda _p: withdraw(project, wave_id, list(entry_ids), reason),
            on_failure=self._on_write_failed,
            writes=True,
            label="Withdrawing…",
        )

    def _on_write_failed(self, exc: BaseException) -> None:
        self.note_label.setText(failure_text(self, exc))
