"""The import dialog: see a survey file exactly as it will be read, adjust, then import.

Reading settings (sheet, header rows, encoding, delimiter) re-read a preview on a worker; the
newest preview wins. The inferred codebook of every column (kind, answers in order, missing
codes) can be changed before importing. The import itself runs on the writer thread with a
progress bar and a Cancel button; errors are written in the dialog in plain words.
"""

from __future__ import annotations

import re
from dataclasses import replace
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QPalette
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDialog,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPlainTextEdit,
    QProgressBar,
    QPushButton,
    QSplitter,
    QTableView,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from core.codebook import Codebook, Variable
from core.decoding import cell_texts
from core.errors import PlaincountError
from core.kinds import Kind, MissingReason
from core.project import Project, Wave
from desktopapp.errors import message_for
from desktopapp.icons import kind_icon
from desktopapp.views import bold_label, escape_rich, titled_pane
from desktopapp.workers import BackgroundRunner, Job

SPREADSHEETS = (".xlsx", ".xlsm", ".xlsb", ".xls", ".ods")
TEXT_FILES = (".csv", ".tsv", ".tab", ".txt")
PREVIEW_ROWS = 50  # rows shown
INFER_ROWS = 1000  # rows the column kinds are inferred from before import
DEFAULT_INSTRUMENT = "Participant survey"

HEADER_CHOICES = [("Detect", None), ("No header row", 0), ("1 row", 1), ("2 rows", 2)]
ENCODING_CHOICES = [
    ("Detect", None),
    ("UTF-8", "utf-8"),
    ("UTF-8 with byte-order mark", "utf-8-sig"),
    ("Windows Western (cp1252)", "cp1252"),
    ("Latin-1 (ISO 8859-1)", "latin-1"),
    ("UTF-16", "utf-16"),
]
DELIMITER_CHOICES = [
    ("Detect", None),
    ("Comma  ,", ","),
    ("Semicolon  ;", ";"),
    ("Tab", "\t"),
    ("Vertical bar  |", "|"),
]
REASON_WORDS = {
    "declined": MissingReason.DECLINED,
    "not applicable": MissingReason.NOT_APPLICABLE,
    "don't know": MissingReason.DONT_KNOW,
    "skipped": MissingReason.SKIPPED,
}
_REASON_ALIASES = {
    "declined": MissingReason.DECLINED,
    "refused": MissingReason.DECLINED,
    "prefer not to say": MissingReason.DECLINED,
    "not applicable": MissingReason.NOT_APPLICABLE,
    "n/a": MissingReason.NOT_APPLICABLE,
    "na": MissingReason.NOT_APPLICABLE,
    "not_applicable": MissingReason.NOT_APPLICABLE,
    "don't know": MissingReason.DONT_KNOW,
    "dont know": MissingReason.DONT_KNOW,
    "dont_know": MissingReason.DONT_KNOW,
    "skipped": MissingReason.SKIPPED,
    "blank": MissingReason.SKIPPED,
}
_WORD_OF_REASON = {v: k for k, v in REASON_WORDS.items()}


def levels_text(var: Variable) -> str:
    return "; ".join(var.levels)


def parse_levels(text: str) -> tuple[str, ...]:
    return tuple(part.strip() for part in text.split(";") if part.strip())


def missing_text(var: Variable) -> str:
    return "; ".join(
        f"{code} = {_WORD_OF_REASON.get(reason, reason.value)}"
        for code, reason in var.missing_codes.items()
    )


def parse_missing(name: str, text: str) -> dict[str, MissingReason]:
    """``"-99 = declined; 98 = don't know"`` as a missing-code mapping, or a plain error."""
    out: dict[str, MissingReason] = {}
    for part in text.split(";"):
        part = part.strip()
        if not part:
            continue
        code, sep, reason = part.partition("=")
        reason_key = reason.strip().lower()
        if not sep or not code.strip() or reason_key not in _REASON_ALIASES:
            words = ", ".join(REASON_WORDS)
            raise PlaincountError(
                f"The missing codes of {name} could not be read at “{part}”. Write each as "
                f"code = reason, separated by semicolons, for example “-99 = declined; "
                f"98 = don't know”. Reasons: {words}."
            )
        out[code.strip()] = _REASON_ALIASES[reason_key]
    return out


def guess_wave_label(path: Path, taken: set[str]) -> str:
    """A year in the file name (``survey_2027.xlsx`` → 2027), else the next free ``Wave n``."""
    years = re.findall(r"(?<!\d)(19\d\d|20\d\d)(?!\d)", path.stem)
    if years and years[-1] not in taken:
        return years[-1]
    n = len(taken) + 1
    while f"Wave {n}" in taken:
        n += 1
    return f"Wave {n}"


class FrameModel(QAbstractTableModel):
    """A read-only table of a DataFrame's cells as text, the way the codebook refers to them."""

    def __init__(
        self,
        frame: pd.DataFrame | None = None,
        questions: dict[str, str] | None = None,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self._frame = frame if frame is not None else pd.DataFrame()
        self._questions = questions or {}
        self._texts: dict[int, np.ndarray] = {}

    def set_frame(self, frame: pd.DataFrame, questions: dict[str, str] | None = None) -> None:
        self.beginResetModel()
        self._frame = frame
        self._questions = questions or {}
        self._texts.clear()
        self.endResetModel()

    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        return 0 if parent.isValid() else len(self._frame)

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: N802, B008
        return 0 if parent.isValid() else self._frame.shape[1]

    def _column_texts(self, col: int) -> np.ndarray:
        if col not in self._texts:
            self._texts[col] = cell_texts(self._frame.iloc[:, col])
        return self._texts[col]

    def data(
        self, index: QModelIndex | QPersistentModelIndex, role: int = Qt.ItemDataRole.DisplayRole
    ) -> Any:
        if not index.isValid():
            return None
        if role == Qt.ItemDataRole.DisplayRole:
            text = self._column_texts(index.column())[index.row()]
            return "" if text is None else text
        if role == Qt.ItemDataRole.TextAlignmentRole:
            column = self._frame.iloc[:, index.column()]
            if pd.api.types.is_numeric_dtype(column) and not pd.api.types.is_bool_dtype(column):
                return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None

    def headerData(
        self,
        section: int,
        orientation: Qt.Orientation,  # noqa: N802
        role: int = Qt.ItemDataRole.DisplayRole,
    ) -> Any:
        if orientation == Qt.Orientation.Horizontal:
            if section >= self._frame.shape[1]:
                return None
            name = str(self._frame.columns[section])
            if role == Qt.ItemDataRole.DisplayRole:
                return name
            if role == Qt.ItemDataRole.ToolTipRole:
                return self._questions.get(name) or name
        elif role == Qt.ItemDataRole.DisplayRole:
            return section + 1
        return None


class ImportDialog(QDialog):
    """Import one survey file into the project as a new wave.

    After the dialog closes, ``result_wave`` is the new wave, or None if nothing was imported.
    """

    # Columns of the per-column table.
    COL_NAME, COL_QUESTION, COL_KIND, COL_LEVELS, COL_MISSING = range(5)

    def __init__(
        self,
        project: Project,
        runner: BackgroundRunner,
        path: str | Path,
        instrument_id: int | None = None,
        parent: QWidget | None = None,
        remaining: int = 0,
    ) -> None:
        super().__init__(parent)
        self.setObjectName("importDialog")
        self.project = project
        self.runner = runner
        self.path = Path(path)
        self.result_wave: Wave | None = None
        self.job: Job | None = None
        self._inferred: Codebook | None = None
        self._raw_inferred: Codebook | None = None
        self._inferred_rows = 0
        self._wave_typed = False
        self._edited: set[str] = set()
        self._questions: dict[str, str] = {}
        self._known: set[str] = set()
        self._preview_table: Any = None
        # The evaluator's answer to the wave review: (column_map, level_maps), or None.
        self.wave_choices: tuple[dict[str, str], dict[str, dict[str, str]]] | None = None
        self.wave_review: QDialog | None = None
        self._filling = False
        self.setWindowTitle(f"Import {self.path.name}")
        self.resize(1100, 760)

        is_sheet = self.path.suffix.lower() in SPREADSHEETS

        heading = QLabel(f"Import <b>{escape_rich(self.path.name)}</b>")
        heading_font = heading.font()
        heading_font.setPointSizeF(heading_font.pointSizeF() * 1.3)
        heading.setFont(heading_font)
        folder = QLabel(str(self.path.parent))
        folder.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        more = QLabel(
            f"{remaining} more file{'s' if remaining != 1 else ''} will follow after this one."
            if remaining
            else ""
        )
        more.setVisible(bool(remaining))

        self.sheet_combo = QComboBox()
        self.sheet_combo.setObjectName("sheetCombo")
        self.header_combo = _choice_combo(HEADER_CHOICES, "headerCombo")
        self.encoding_combo = _choice_combo(ENCODING_CHOICES, "encodingCombo")
        self.delimiter_combo = _choice_combo(DELIMITER_CHOICES, "delimiterCombo")
        self.instrument_combo = QComboBox()
        self.instrument_combo.setObjectName("instrumentCombo")
        self.instrument_combo.setEditable(True)
        self.instrument_combo.setMinimumWidth(220)
        self.wave_edit = QLineEdit()
        self.wave_edit.setObjectName("waveEdit")

        read_form = QFormLayout()
        read_form.addRow("Sheet", self.sheet_combo)
        read_form.addRow("Header rows", self.header_combo)
        read_form.addRow("Text encoding", self.encoding_combo)
        read_form.addRow("Separator", self.delimiter_combo)
        self._read_form = read_form
        for combo in (
            self.sheet_combo,
            self.header_combo,
            self.encoding_combo,
            self.delimiter_combo,
            self.instrument_combo,
        ):
            combo.setMinimumWidth(240)
            combo.setMaximumWidth(360)
        self.wave_edit.setMaximumWidth(360)
        self._update_read_rows(sheets=None)
        target_form = QFormLayout()
        target_form.addRow("Questionnaire", self.instrument_combo)
        target_form.addRow("Wave label", self.wave_edit)
        self.target_note = QLabel("")
        self.target_note.setWordWrap(True)
        self.target_note.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        target_form.addRow("", self.target_note)
        forms = QHBoxLayout()
        read_box = QVBoxLayout()
        read_box.addWidget(bold_label("How to read the file"))
        read_box.addLayout(read_form)
        read_box.addStretch(1)
        target_box = QVBoxLayout()
        target_box.addWidget(bold_label("Where the data goes"))
        target_box.addLayout(target_form)
        target_box.addStretch(1)
        forms.addLayout(read_box, 1)
        forms.addSpacing(24)
        forms.addLayout(target_box, 1)

        self.preview_model = FrameModel(parent=self)
        self.preview_table = QTableView()
        self.preview_table.setObjectName("previewTable")
        self.preview_table.setModel(self.preview_model)
        self.preview_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.preview_table.horizontalHeader().setDefaultSectionSize(110)
        self.preview_table.verticalHeader().setDefaultSectionSize(22)
        self.preview_note = QLabel("Reading the file…")
        self.preview_note.setForegroundRole(QPalette.ColorRole.PlaceholderText)

        self.columns_table = QTableWidget(0, 5)
        self.columns_table.setObjectName("columnsTable")
        self.columns_table.setHorizontalHeaderLabels(
            [
                "Column",
                "Question",
                "Kind",
                "Answers, in order (separate with ;)",
                "Missing codes (code = reason; …)",
            ]
        )
        header = self.columns_table.horizontalHeader()
        header.setSectionResizeMode(self.COL_NAME, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(self.COL_QUESTION, QHeaderView.ResizeMode.Interactive)
        header.setSectionResizeMode(self.COL_KIND, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(self.COL_LEVELS, QHeaderView.ResizeMode.Stretch)
        header.setSectionResizeMode(self.COL_MISSING, QHeaderView.ResizeMode.Interactive)
        self.columns_table.setColumnWidth(self.COL_QUESTION, 220)
        self.columns_table.setColumnWidth(self.COL_MISSING, 230)
        self.columns_table.verticalHeader().setVisible(False)
        self.columns_note = QLabel("")
        self.columns_note.setWordWrap(True)
        self.columns_note.setForegroundRole(QPalette.ColorRole.PlaceholderText)

        preview_box = titled_pane(
            "The first rows, exactly as they will be read",
            self.preview_table,
            self.preview_note,
            stretch=self.preview_table,
        )
        columns_box = titled_pane(
            "What each column holds",
            self.columns_note,
            self.columns_table,
            stretch=self.columns_table,
        )
        splitter = QSplitter(Qt.Orientation.Vertical)
        splitter.addWidget(preview_box)
        splitter.addWidget(columns_box)
        splitter.setSizes([300, 360])
        splitter.setChildrenCollapsible(False)

        self.error_label = QLabel("")
        self.error_label.setObjectName("importError")
        self.error_label.setWordWrap(True)
        self.error_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.error_label.setStyleSheet(
            "QLabel { background: #fdf1e6; border: 1px solid #D55E00; border-radius: 4px; "
            "padding: 8px; color: #5a2600; }"
        )
        self.error_label.hide()
        self.details_button = QPushButton("Show details")
        self.details_button.setCheckable(True)
        self.details_button.hide()
        self.details_text = QPlainTextEdit()
        self.details_text.setReadOnly(True)
        self.details_text.setMaximumHeight(140)
        self.details_text.hide()

        self.progress_bar = QProgressBar()
        self.progress_bar.setObjectName("importProgress")
        self.progress_bar.setTextVisible(True)
        self.progress_bar.hide()
        self.progress_label = QLabel("")
        self.progress_label.hide()
        self.cancel_import_button = QPushButton("Stop importing")
        self.cancel_import_button.setObjectName("cancelImportButton")
        self.cancel_import_button.hide()
        self.import_button = QPushButton("Import")
        self.import_button.setObjectName("importButton")
        self.import_button.setDefault(True)
        self.import_button.setEnabled(False)
        self.close_button = QPushButton("Skip this file" if remaining else "Cancel")
        self.close_button.setObjectName("closeButton")

        bottom = QHBoxLayout()
        bottom.addWidget(self.progress_label)
        bottom.addWidget(self.progress_bar, 1)
        bottom.addWidget(self.cancel_import_button)
        bottom.addStretch(0)
        bottom.addWidget(self.close_button)
        bottom.addWidget(self.import_button)

        layout = QVBoxLayout(self)
        layout.addWidget(heading)
        layout.addWidget(folder)
        layout.addWidget(more)
        layout.addLayout(forms)
        layout.addWidget(splitter, 1)
        layout.addWidget(self.error_label)
        details_row = QHBoxLayout()
        details_row.addWidget(self.details_button)
        details_row.addStretch(1)
        layout.addLayout(details_row)
        layout.addWidget(self.details_text)
        layout.addLayout(bottom)

        self._fill_instruments(instrument_id)
        self._connect_signals()
        self._update_target_note()
        if is_sheet:
            self._load_sheets()
        else:
            self._request_preview()

    # ------------------------------------------------------------------ setup
    def _connect_signals(self) -> None:
        self.sheet_combo.currentIndexChanged.connect(self._on_read_setting_changed)
        self.header_combo.currentIndexChanged.connect(self._on_read_setting_changed)
        self.encoding_combo.currentIndexChanged.connect(self._on_read_setting_changed)
        self.delimiter_combo.currentIndexChanged.connect(self._on_read_setting_changed)
        self.instrument_combo.currentTextChanged.connect(self._on_instrument_combo_changed)
        self.wave_edit.textChanged.connect(self._on_wave_edit_changed)
        self.wave_edit.textEdited.connect(self._on_wave_edit_edited)
        self.columns_table.itemChanged.connect(self._on_columns_table_item_changed)
        self.import_button.clicked.connect(self._on_import_button_clicked)
        self.close_button.clicked.connect(self.reject)
        self.cancel_import_button.clicked.connect(self._on_cancel_import_button_clicked)
        self.details_button.toggled.connect(self.details_text.setVisible)

    def _fill_instruments(self, instrument_id: int | None) -> None:
        instruments = self.project.instruments()
        for inst in instruments:
            self.instrument_combo.addItem(inst.name, inst.id)
        chosen = next((i for i in instruments if i.id == instrument_id), None)
        if chosen is None and instruments:
            chosen = instruments[0]
        if chosen is not None:
            self.instrument_combo.setCurrentText(chosen.name)
        else:
            self.instrument_combo.setCurrentText(DEFAULT_INSTRUMENT)
        self._guess_wave()

    def _guess_wave(self) -> None:
        if self._wave_typed:
            return  # the evaluator's own label stays
        taken = {w.label for w in self._target_waves()}
        self.wave_edit.setText(guess_wave_label(self.path, taken))

    def _target_waves(self) -> list[Wave]:
        inst = self._existing_instrument()
        return self.project.waves(inst.id) if inst is not None else []

    def _existing_instrument(self) -> Any:
        name = self.instrument_combo.currentText().strip()
        return next((i for i in self.project.instruments() if i.name == name), None)

    # ------------------------------------------------------------------ reading settings
    def read_settings(self) -> dict[str, Any]:
        """The reading settings as keyword arguments of ``core.readers``."""
        suffix = self.path.suffix.lower()
        settings: dict[str, Any] = {"header_rows": self.header_combo.currentData()}
        if suffix in SPREADSHEETS and self.sheet_combo.count():
            settings["sheet"] = self.sheet_combo.currentText()
        if suffix in TEXT_FILES or self.encoding_combo.isVisibleTo(self):
            settings["encoding"] = self.encoding_combo.currentData()
            settings["delimiter"] = self.delimiter_combo.currentData()
        return settings

    def _load_sheets(self) -> None:
        path = self.path

        def work(_progress: Any) -> list[str]:
            from core.readers import list_sheets

            return list_sheets(path)

        self.runner.run(
            work,
            on_success=self._on_sheets_loaded,
            on_failure=self._show_error,
            key=f"sheets:{id(self)}",
            show_progress=False,
        )

    def _update_read_rows(self, sheets: list[str] | None) -> None:
        """Sheet choice for workbooks; encoding and separator for text (even if misnamed)."""
        suffix = self.path.suffix.lower()
        is_text = suffix in TEXT_FILES or sheets == []
        form = self._read_form
        form.setRowVisible(self.sheet_combo, suffix in SPREADSHEETS and sheets != [])
        form.setRowVisible(self.encoding_combo, is_text)
        form.setRowVisible(self.delimiter_combo, is_text)

    def _on_sheets_loaded(self, sheets: list[str]) -> None:
        self._update_read_rows(sheets)
        self._filling = True
        self.sheet_combo.clear()
        self.sheet_combo.addItems(sheets)
        self._filling = False
        self._request_preview()

    def _on_read_setting_changed(self, _index: int) -> None:
        if not self._filling:
            self._request_preview()

    def _request_preview(self) -> None:
        path = self.path
        settings = self.read_settings()
        self.preview_note.setText("Reading the file…")
        self.import_button.setEnabled(False)

        def work(_progress: Any) -> tuple[Any, Codebook]:
            from core.inference import infer_codebook
            from core.readers import preview

            table = preview(path, nrows=INFER_ROWS, **settings)
            return table, infer_codebook(table.frame, table.questions)

        self.runner.run(
            work,
            on_success=self._on_preview_loaded,
            on_failure=self._show_error,
            key=f"preview:{id(self)}",
            show_progress=False,
        )

    def _on_preview_loaded(self, loaded: tuple[Any, Codebook]) -> None:
        table, inferred = loaded
        self._clear_error()
        frame = table.frame
        self._questions = dict(table.questions or {})
        self.preview_model.set_frame(frame.head(PREVIEW_ROWS), self._questions)
        fit_columns(self.preview_table)
        shown = min(len(frame), PREVIEW_ROWS)
        self.preview_note.setText(
            f"Showing the first {shown} rows and all {frame.shape[1]} columns. Hover over a "
            "column name to see its question text."
        )
        self._raw_inferred = inferred
        self._preview_table = table
        self._inferred_rows = min(len(frame), INFER_ROWS)
        self._apply_known_entries()
        self.import_button.setEnabled(True)

    def _apply_known_entries(self) -> None:
        """Columns the chosen questionnaire already knows show (and keep) its entries."""
        inferred = self._raw_inferred
        if inferred is None:
            return
        inst = self._existing_instrument()
        known = self.project.codebook(inst.id) if inst is not None else Codebook()
        self._known = {v.name for v in inferred if v.name in known}
        self._inferred = Codebook(known.get(v.name) or v for v in inferred)
        self._edited.clear()
        self.wave_choices = None  # another questionnaire or reading: review again
        self._fill_columns()
        self.columns_note.setText(
            "Plaincount guessed what each column holds from the first "
            f"{self._inferred_rows} rows. Change anything that is wrong before "
            "importing; it can also be changed later in the codebook."
            + (
                " Columns in italics are already in the questionnaire's codebook and keep "
                "their entries unless you change them here."
                if self._known
                else ""
            )
        )

    def _fill_columns(self) -> None:
        codebook = self._inferred
        self._filling = True
        self.columns_table.setRowCount(0)
        if codebook is not None:
            self.columns_table.setRowCount(len(codebook))
            for row, var in enumerate(codebook):
                name_item = QTableWidgetItem(var.name)
                name_item.setFlags(name_item.flags() & ~Qt.ItemFlag.ItemIsEditable)
                question = QTableWidgetItem(var.question)
                if var.name in self._known:
                    name_item.setToolTip("Already in this questionnaire's codebook")
                    font = name_item.font()
                    font.setItalic(True)
                    name_item.setFont(font)
                question.setFlags(question.flags() & ~Qt.ItemFlag.ItemIsEditable)
                question.setToolTip(var.question)
                self.columns_table.setItem(row, self.COL_NAME, name_item)
                self.columns_table.setItem(row, self.COL_QUESTION, question)
                combo = QComboBox()
                for kind in Kind:
                    combo.addItem(kind_icon(kind), kind.label, kind.value)
                combo.setCurrentIndex(combo.findData(var.kind.value))
                combo.currentIndexChanged.connect(
                    lambda _i, name=var.name: self._on_kind_combo_changed(name)
                )
                self.columns_table.setCellWidget(row, self.COL_KIND, combo)
                self.columns_table.setItem(row, self.COL_LEVELS, QTableWidgetItem(levels_text(var)))
                self.columns_table.setItem(
                    row, self.COL_MISSING, QTableWidgetItem(missing_text(var))
                )
        self._filling = False

    def _row_of(self, name: str) -> int:
        for row in range(self.columns_table.rowCount()):
            if self.columns_table.item(row, self.COL_NAME).text() == name:
                return row
        raise KeyError(name)

    def set_kind(self, name: str, kind: Kind) -> None:
        """Change the kind of one column (as the evaluator would with the combo box)."""
        combo: QComboBox = self.columns_table.cellWidget(self._row_of(name), self.COL_KIND)
        combo.setCurrentIndex(combo.findData(Kind(kind).value))

    def _on_kind_combo_changed(self, name: str) -> None:
        if not self._filling:
            self._edited.add(name)

    def _on_columns_table_item_changed(self, item: QTableWidgetItem) -> None:
        if self._filling:
            return
        name = self.columns_table.item(item.row(), self.COL_NAME).text()
        self._edited.add(name)

    def edited_codebook(self) -> Codebook | None:
        """Entries for the columns the evaluator changed; None if nothing was changed.

        Columns left alone are inferred by the import from every row of the file (rather
        than from the first rows read here, which see fewer of the answers), or keep the
        entry the questionnaire's codebook already has.
        """
        if self._inferred is None or not self._edited:
            return None
        variables = []
        for row, var in enumerate(self._inferred):
            if var.name not in self._edited:
                continue
            combo: QComboBox = self.columns_table.cellWidget(row, self.COL_KIND)
            kind = Kind(combo.currentData())
            levels = parse_levels(self.columns_table.item(row, self.COL_LEVELS).text())
            missing = parse_missing(var.name, self.columns_table.item(row, self.COL_MISSING).text())
            changes: dict[str, Any] = {"kind": kind, "levels": levels, "missing_codes": missing}
            if not kind.has_levels and kind is not Kind.MULTISELECT:
                changes["levels"] = ()
            if kind not in (Kind.NUMERIC, Kind.RANKING):
                changes["range"] = None
            if kind is not Kind.LIKERT:
                changes["keying"] = None
            variables.append(replace(var, **changes))
        return Codebook(variables)

    # ------------------------------------------------------------------ target
    def _on_instrument_combo_changed(self, _text: str) -> None:
        self._guess_wave()
        self._update_target_note()
        self._apply_known_entries()

    def _on_wave_edit_edited(self, _text: str) -> None:
        self._wave_typed = True

    def _on_wave_edit_changed(self, _text: str) -> None:
        self._update_target_note()

    def _update_target_note(self) -> None:
        inst = self._existing_instrument()
        label = self.wave_edit.text().strip()
        if inst is None:
            self.target_note.setText("A new questionnaire will be added to the project.")
        elif any(w.label == label for w in self._target_waves()):
            self.target_note.setText(
                f"{inst.name} already has a wave labelled “{label}”. Choose another label."
            )
        else:
            n = len(self._target_waves())
            self.target_note.setText(
                f"Adds a wave to {inst.name}, which has {n} wave{'s' if n != 1 else ''}. "
                "Columns it already knows keep their codebook entries."
            )

    # ------------------------------------------------------------------ import
    def _on_import_button_clicked(self) -> None:
        self.start_import()

    def start_import(self) -> Job | None:
        """Begin importing with the current choices; returns the running job."""
        self._clear_error()
        try:
            codebook = self.edited_codebook()
        except PlaincountError as exc:
            self._show_error(exc)
            return None
        instrument = self.instrument_combo.currentText().strip()
        wave = self.wave_edit.text().strip()
        if not instrument:
            self._show_error(PlaincountError("Give the questionnaire a name."))
            return None
        if not wave:
            self._show_error(PlaincountError("Give the wave a label, such as the year."))
            return None
        if self.wave_choices is None and self._review_wave_match(wave):
            return None  # the import goes on when the review is confirmed
        column_map, level_maps = self.wave_choices or ({}, {})
        project, path, settings = self.project, self.path, self.read_settings()

        def work(progress: Any) -> Any:
            from core.importing import import_file

            return import_file(
                project,
                path,
                instrument=instrument,
                wave=wave,
                codebook=codebook,
                progress=progress,
                column_map=column_map or None,
                level_maps=level_maps or None,
                **settings,
            )

        self._set_importing(True)
        self.job = self.runner.run(
            work,
            on_success=self._on_import_succeeded,
            on_failure=self._on_import_failed,
            on_cancelled=self._on_import_cancelled,
            writes=True,
            label=f"Importing {path.name}…",
            show_progress=False,
        )
        if self.job.running:
            self.job.progress_changed.connect(self._on_job_progress_changed)
        return self.job

    def _review_wave_match(self, wave: str) -> bool:
        """Show how the file lines up with the questionnaire's codebook (when it is not
        plain); True while the review is open."""
        from desktopapp.wave_match_dialog import review_if_needed

        inst = self._existing_instrument()
        table = self._preview_table
        if inst is None or table is None or any(w.label == wave for w in self._target_waves()):
            return False  # nothing to match, or the import refuses the label at once

        def confirmed(column_map: dict[str, str], level_maps: dict[str, dict[str, str]]) -> None:
            self.wave_choices = (column_map, level_maps)
            self.start_import()

        codebook = self.project.codebook(inst.id)
        self.wave_review = review_if_needed(
            self, codebook, table.frame, table.questions, wave, confirmed
        )
        return self.wave_review is not None

    def _on_job_progress_changed(self, done: int, total: int, label: str) -> None:
        if total > 0:
            self.progress_bar.setRange(0, total)
            self.progress_bar.setValue(min(done, total))
        else:
            self.progress_bar.setRange(0, 0)
        self.progress_label.setText(label)

    def _on_cancel_import_button_clicked(self) -> None:
        if self.job is not None:
            self.job.cancel()
            self.cancel_import_button.setEnabled(False)
            self.progress_label.setText("Stopping…")

    def _on_import_succeeded(self, result: Any) -> None:
        self._set_importing(False)
        self.result_wave = result.wave
        self.accept()

    def _on_import_failed(self, exc: BaseException) -> None:
        self._set_importing(False)
        self._show_error(exc)

    def _on_import_cancelled(self) -> None:
        self._set_importing(False)
        self._show_message("Import stopped. Nothing was added to the project.")

    def _set_importing(self, busy: bool) -> None:
        for widget in (
            self.sheet_combo,
            self.header_combo,
            self.encoding_combo,
            self.delimiter_combo,
            self.instrument_combo,
            self.wave_edit,
            self.columns_table,
            self.import_button,
            self.close_button,
        ):
            widget.setEnabled(not busy)
        self.progress_bar.setVisible(busy)
        self.progress_label.setVisible(busy)
        self.cancel_import_button.setVisible(busy)
        self.cancel_import_button.setEnabled(busy)
        if busy:
            self.progress_bar.setRange(0, 0)
            self.progress_label.setText("Importing…")

    def reject(self) -> None:
        if self.job is not None and self.job.running:
            self._on_cancel_import_button_clicked()
            return  # the dialog stays until the worker has stopped
        super().reject()

    # ------------------------------------------------------------------ messages
    def error_text(self) -> str:
        return self.error_label.text() if self.error_label.isVisible() else ""

    def _show_error(self, exc: BaseException) -> None:
        text, details = message_for(exc)
        self._show_message(text)
        self.details_text.setPlainText(details)
        self.details_button.setVisible(bool(details))
        self.details_button.setChecked(False)
        if not details:
            self.preview_note.setText("")

    def _show_message(self, text: str) -> None:
        self.error_label.setText(text)
        self.error_label.show()

    def _clear_error(self) -> None:
        self.error_label.hide()
        self.error_label.setText("")
        self.details_button.hide()
        self.details_text.hide()


def fit_columns(table: QTableView, sample_rows: int = 50, widest: int = 240) -> None:
    """Size each column to its header and first rows, within sensible bounds."""
    model = table.model()
    header = table.horizontalHeader()
    fm = table.fontMetrics()
    rows = min(model.rowCount(), sample_rows)
    for col in range(model.columnCount()):
        texts = [str(model.headerData(col, Qt.Orientation.Horizontal) or "")]
        texts += [str(model.data(model.index(r, col)) or "") for r in range(rows)]
        width = max(fm.horizontalAdvance(t) for t in texts) + 18
        header.resizeSection(col, max(60, min(width, widest)))


def _choice_combo(choices: list[tuple[str, Any]], name: str) -> QComboBox:
    combo = QComboBox()
    combo.setObjectName(name)
    for text, value in choices:
        combo.addItem(text, value)
    return combo
