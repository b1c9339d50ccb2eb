"""Instrument and wave nodes: what was imported, from which file, and the raw data as read."""

from __future__ import annotations

from collections import Counter
from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QAbstractItemView,
    QFileDialog,
    QFormLayout,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from core.project import Changes
from desktopapp.icons import kind_icon
from desktopapp.import_dialog import FrameModel, fit_columns
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.undo import local_time
from desktopapp.views import ViewContext, muted_label, section_label, title_label


def register(registry: Any) -> None:
    registry.add(NodeType.INSTRUMENT, ImportView)
    registry.add(NodeType.WAVE, ImportView)


def report_lines(report: dict[str, Any]) -> list[str]:
    """What the import decided, as plain sentences for the evaluator.

    The reader and the import write their own sentences into ``notes``; the column matching
    and the personal-data marks are spelled out here. Technical keys are left to the CLI.
    """
    lines = [str(note) for note in report.get("notes", []) if str(note).strip()]
    for item in report.get("renamed_columns", []) or []:
        if isinstance(item, dict) and "from" in item and "to" in item:
            lines.append(f"The column {item['from']} was matched to {item['to']}.")
    personal = report.get("personal_variables") or []
    if personal:
        lines.append(
            "Marked as personal data (left out of exports unless included on purpose): "
            + ", ".join(map(str, personal))
            + "."
        )
    return lines


class ImportView(QWidget):
    """For a wave: its source file and raw table. For an instrument: its waves and codebook."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("importView")
        self._context = context
        self.node = node
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        self._body: QWidget | None = None
        self.raw_table: QTableView | None = None
        self._update_body()

    def _update_body(self) -> None:
        """(Re)build the contents; an instrument's list of waves changes when one is added."""
        if self._body is not None:
            self.layout().removeWidget(self._body)
            self._body.hide()
            self._body.setParent(None)  # gone from the view at once, deleted by Qt later
            self._body.deleteLater()
        self._body = QWidget()
        self._layout = QVBoxLayout(self._body)
        self._layout.setContentsMargins(24, 20, 24, 20)
        self._layout.setSpacing(8)
        self.import_button = QPushButton(
            "Import another wave…" if self.node.type == NodeType.WAVE else "Import a wave…"
        )
        self.import_button.setObjectName("importButton")
        self.import_button.clicked.connect(self._on_import_button_clicked)
        if self.node.type == NodeType.WAVE:
            self._build_wave()
        else:
            self._build_instrument()
        self.layout().addWidget(self._body)

    # ------------------------------------------------------------------ wave
    def _build_wave(self) -> None:
        project = self._context.project
        wave = project.wave(self.node.wave_id)
        inst = project.instrument(wave.instrument_id)
        head = QHBoxLayout()
        head.addWidget(title_label(f"Wave {wave.label}"))
        head.addStretch(1)
        self.save_source_button = QPushButton("Save the original file…")
        self.save_source_button.setObjectName("saveSourceButton")
        self.save_source_button.setToolTip(
            "The project keeps the exact file that was imported. Save a copy of it."
        )
        self.save_source_button.clicked.connect(self._on_save_source_button_clicked)
        self.sampling_button = QPushButton("Sampling and response rates…")
        self.sampling_button.setObjectName("samplingButton")
        self.sampling_button.setToolTip(
            "Whether this wave reached everyone or a sample, sample sizes, and response rates."
        )
        self.sampling_button.clicked.connect(self._on_sampling_button_clicked)
        head.addWidget(self.sampling_button)
        head.addWidget(self.save_source_button)
        head.addWidget(self.import_button)
        self._layout.addLayout(head)
        self._layout.addWidget(muted_label(f"{inst.name}"))

        facts = QFormLayout()
        facts.setLabelAlignment(Qt.AlignmentFlag.AlignRight)
        facts.addRow("Imported from", _selectable(Path(wave.source_name).name))
        facts.addRow("Imported on", QLabel(local_time(wave.created)))
        report = wave.import_report
        if report.get("sheet"):
            facts.addRow("Sheet", QLabel(str(report["sheet"])))
        if report.get("header_rows") is not None:
            facts.addRow("Header rows", QLabel(str(report["header_rows"])))
        facts.addRow("Respondents (rows)", QLabel(f"{wave.n_rows:,}"))
        facts.addRow("Columns", QLabel(f"{wave.n_columns:,}"))
        fingerprint = _selectable(wave.source_sha256)
        fingerprint.setToolTip(
            "SHA-256 of the original file. Anyone holding the same file gets the same "
            "fingerprint, so it shows which export the figures came from."
        )
        facts.addRow("Fingerprint (SHA-256)", fingerprint)
        notes = report_lines(report)
        if notes:
            notes_label = QLabel("\n".join(f"• {line}" for line in notes))
            notes_label.setWordWrap(True)
            notes_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
            facts.addRow("Import notes", notes_label)
        self._layout.addLayout(facts)
        self._layout.addSpacing(12)
        self._layout.addWidget(section_label("Raw data, exactly as imported"))
        self._layout.addWidget(
            muted_label(
                "This table never changes. Corrections are recorded in the ledger and applied on "
                "top of it, so every figure can be traced back to these cells."
            )
        )
        model = FrameModel(project.raw_table(wave.id), parent=self)
        table = QTableView()
        table.setObjectName("rawTable")
        table.setModel(model)
        table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        table.horizontalHeader().setDefaultSectionSize(110)
        table.verticalHeader().setDefaultSectionSize(22)
        fit_columns(table)
        self.raw_table = table
        self._layout.addWidget(table, 1)

    # ------------------------------------------------------------------ instrument
    def _build_instrument(self) -> None:
        project = self._context.project
        inst = project.instrument(self.node.instrument_id)
        head = QHBoxLayout()
        head.addWidget(title_label(inst.name))
        head.addStretch(1)
        head.addWidget(self.import_button)
        self._layout.addLayout(head)
        self._layout.addWidget(
            muted_label(
                "A questionnaire and its waves: each wave is one round of answers to it. Waves "
                "share the questionnaire's codebook, so next year's file is read the same way."
            )
        )
        self._layout.addSpacing(12)
        self._layout.addWidget(section_label("Waves"))
        waves = project.waves(inst.id)
        if not waves:
            self._layout.addWidget(
                muted_label(
                    "No waves yet. Drop a spreadsheet or CSV file onto the window to add one."
                )
            )
        for wave in waves:
            link = QPushButton(
                f"Wave {wave.label} — {wave.n_rows:,} respondents from "
                f"{Path(wave.source_name).name}"
            )
            link.setFlat(True)
            link.setCursor(Qt.CursorShape.PointingHandCursor)
            link.setStyleSheet(
                "QPushButton { text-align: left; padding: 4px 0; border: none; color: #0b5a8c; }"
                "QPushButton:hover { text-decoration: underline; }"
            )
            link.clicked.connect(
                lambda _c=False, w=wave: self._context.select_requested(
                    NodeType.WAVE, w.instrument_id, w.id
                )
            )
            self._layout.addWidget(link)
        self._layout.addSpacing(12)
        self._layout.addWidget(section_label("Codebook"))
        codebook = project.codebook(inst.id)
        counts = Counter(var.kind for var in codebook)
        if counts:
            grid = QGridLayout()
            grid.setHorizontalSpacing(10)
            grid.setColumnStretch(3, 1)
            for row, (kind, n) in enumerate(counts.most_common()):
                icon = QLabel()
                icon.setPixmap(kind_icon(kind).pixmap(16, 16))
                count = QLabel(f"{n:,}")
                count.setAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                count.setMinimumWidth(28)
                grid.addWidget(count, row, 0)
                grid.addWidget(icon, row, 1)
                grid.addWidget(QLabel(kind.label), row, 2)
            total = QLabel(f"<b>{len(codebook):,}</b>")
            total.setAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
            grid.addWidget(total, len(counts), 0)
            grid.addWidget(QLabel("<b>variables in all</b>"), len(counts), 1, 1, 2)
            self._layout.addLayout(grid)
            personal = [v.name for v in codebook if v.personal]
            self._layout.addWidget(
                muted_label(
                    "Marked as personal data: " + ", ".join(personal) + "."
                    if personal
                    else "No variable is marked as personal data."
                )
            )
        else:
            self._layout.addWidget(muted_label("The codebook is empty."))
        open_codebook = QPushButton("Open the codebook")
        open_codebook.setObjectName("openCodebookButton")
        open_codebook.clicked.connect(
            lambda: self._context.select_requested(NodeType.CODEBOOK, inst.id, None)
        )
        row = QHBoxLayout()
        row.addWidget(open_codebook)
        row.addStretch(1)
        self._layout.addLayout(row)
        self._layout.addStretch(1)

    # ------------------------------------------------------------------ slots
    def project_changed(self, changes: Changes) -> None:
        # An instrument shows its waves and codebook counts; a wave's facts never change.
        if self.node.type == NodeType.INSTRUMENT and self.node.instrument_id in (
            changes.instrument_ids
        ):
            self._update_body()

    def _on_import_button_clicked(self) -> None:
        self._context.import_requested(None, self.node.instrument_id)

    def _on_sampling_button_clicked(self) -> None:
        self.sampling_dialog()

    def sampling_dialog(self, show: bool = True) -> Any:
        """The wave's sampling and response-rate dialog (shown unless ``show`` is False)."""
        from desktopapp.sampling_dialog import SamplingDialog, open_sampling_dialog

        if show:
            return open_sampling_dialog(
                self, self._context.project, self._context.runner, self.node.wave_id
            )
        return SamplingDialog(
            self._context.project, self._context.runner, self.node.wave_id, parent=self
        )

    def screenshot_dialogs(self) -> list[tuple[str, Any]]:
        if self.node.type != NodeType.WAVE:
            return []
        dialogs = []
        for tab, name in enumerate(("sampling", "sample-size", "response-rates")):
            dialog = self.sampling_dialog(show=False)
            dialog.tabs.setCurrentIndex(tab)
            if name == "response-rates":
                dialog.saving = False  # a picture: store nothing in the project
                dialog.count_from_data()  # what the evaluator sees after pressing it
            dialogs.append((name, dialog))
        return dialogs

    def _on_save_source_button_clicked(self) -> None:
        name, data = self._context.project.source_file(self.node.wave_id)
        target, _ = QFileDialog.getSaveFileName(
            self, "Save the original file", str(Path.home() / Path(name).name)
        )
        if target:
            Path(target).write_bytes(data)


def _selectable(text: str) -> QLabel:
    label = QLabel(text)
    label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    return label
