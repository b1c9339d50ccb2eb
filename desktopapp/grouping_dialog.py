"""Group a number question into categories (age groups, hours bands) as a new variable.

The evaluator picks how the groups are cut — their own cut points, groups of equal width,
or groups holding about equal numbers of people (quantiles) — and sees the groups with
their counts at once, computed from the cleaned answers of one wave
(:func:`core.tables.binning.preview_groups`). "Create variable" then records the grouping in
the codebook with one undoable call (:func:`core.tables.binning.bin_variable`), so Edit ▸
Undo takes it back and later corrections of the source move people between groups.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QButtonGroup,
    QDialog,
    QDialogButtonBox,
    QGridLayout,
    QLabel,
    QLineEdit,
    QRadioButton,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from core.errors import PlaincountError
from core.kinds import Kind
from core.tables.binning import GroupPreview, answered_values, format_number, preview_groups
from desktopapp.views import muted_label, section_label

CAUTION_COLOUR = "#a33f00"
METHOD_CUTS, METHOD_EQUAL, METHOD_QUANTILE = "cuts", "equal", "quantile"


def open_grouping_dialog(
    parent: QWidget | None,
    project: Any,
    runner: Any,
    instrument_id: int,
    source: str,
    wave_id: int | None = None,
) -> GroupingDialog:
    """Show the dialog for ``source`` (window-modal, not blocking) and return it."""
    dialog = GroupingDialog(project, runner, instrument_id, source, wave_id, parent=parent)
    dialog.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
    dialog.open()
    return dialog


def parse_cut_text(text: str) -> list[float]:
    """``"25, 35; 45"`` → [25.0, 35.0, 45.0]; a plain message for anything else."""
    parts = [p for p in text.replace(";", ",").replace(" ", ",").split(",") if p.strip()]
    try:
        return [float(p) for p in parts]
    except ValueError:
        raise PlaincountError(
            "Write the cut points as numbers separated by commas, such as 25, 35, 45."
        ) from None


def plain_number(x: float) -> str:
    """A cut point as typed into the cut-points box: 25, 1.5, 25000 (no thousands commas,
    since commas separate the cut points)."""
    x = float(x)
    return str(int(x)) if x.is_integer() else f"{x:.10g}"


class GroupingDialog(QDialog):
    """Choose how to cut a number question into groups, see the counts, create it."""

    def __init__(
        self,
        project: Any,
        runner: Any,
        instrument_id: int,
        source: str,
        wave_id: int | None = None,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setObjectName("groupingDialog")
        self.project = project
        self.runner = runner
        self.instrument_id = instrument_id
        self.source = source
        waves = project.waves(instrument_id)
        if wave_id is None and waves:
            wave_id = waves[-1].id
        self.wave_id = wave_id
        self.wave_label = project.wave(wave_id).label if wave_id is not None else None
        self.answers: np.ndarray | None = None  # cleaned answered values, once loaded
        self.current: GroupPreview | None = None
        self.created: Any = None  # the Variable, once created
        self.error_text = ""
        codebook = project.codebook(instrument_id)
        var = codebook[source]
        # Opened again on a question already grouped: start from that grouping, to adjust it.
        earlier = next((v for v in codebook if v.derived_from == source and v.cut_points), None)
        self.setWindowTitle(f"Group {source} into categories")
        self.resize(620, 480)

        heading = section_label(f"Group “{var.label}” into categories")
        heading.setWordWrap(True)
        self.source_label = muted_label("Reading the answers…")
        self.source_label.setObjectName("groupingSource")

        # ---- how to cut
        self.cuts_radio = QRadioButton("Your own cut points")
        self.equal_radio = QRadioButton("Groups of equal width")
        self.quantile_radio = QRadioButton("Groups of about equal size (quantiles)")
        self.method_group = QButtonGroup(self)
        for button, method in (
            (self.cuts_radio, METHOD_CUTS),
            (self.equal_radio, METHOD_EQUAL),
            (self.quantile_radio, METHOD_QUANTILE),
        ):
            button.setProperty("method", method)
            self.method_group.addButton(button)
        self.cuts_edit = QLineEdit()
        self.cuts_edit.setObjectName("cutPointsEdit")
        self.cuts_edit.setPlaceholderText("e.g. 25, 35, 45")
        self.equal_spin = QSpinBox()
        self.equal_spin.setObjectName("equalGroupsSpin")
        self.quantile_spin = QSpinBox()
        self.quantile_spin.setObjectName("quantileGroupsSpin")
        for spin in (self.equal_spin, self.quantile_spin):
            spin.setRange(2, 20)
            spin.setValue(4)
            spin.setSuffix(" groups")
            spin.setMaximumWidth(120)
        grid = QGridLayout()
        grid.setColumnStretch(1, 1)
        grid.addWidget(self.cuts_radio, 0, 0)
        grid.addWidget(self.cuts_edit, 0, 1)
        grid.addWidget(self.equal_radio, 1, 0)
        grid.addWidget(self.equal_spin, 1, 1, Qt.AlignmentFlag.AlignLeft)
        grid.addWidget(self.quantile_radio, 2, 0)
        grid.addWidget(self.quantile_spin, 2, 1, Qt.AlignmentFlag.AlignLeft)
        rule = muted_label(
            "Each cut point starts a new group: with 25 and 35, someone aged 25 is in "
            "“25–34” and someone aged 35 in “35 and over”."
        )

        # ---- the groups, live
        from desktopapp.views.codebook_view import FrequencyPreviewWidget

        self.groups_view = FrequencyPreviewWidget()
        self.groups_view.setObjectName("groupsPreview")
        self.groups_title = section_label("")
        self.caution_label = QLabel("")
        self.caution_label.setObjectName("groupingCaution")
        self.caution_label.setWordWrap(True)
        self.caution_label.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
        self.caution_label.hide()

        # ---- name and create
        self.name_edit = QLineEdit(earlier.name if earlier else f"{source}_group")
        self.name_edit.setObjectName("groupNameEdit")
        self.name_note = muted_label("")
        self.error_label = QLabel("")
        self.error_label.setObjectName("groupingError")
        self.error_label.setWordWrap(True)
        self.error_label.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
        self.error_label.hide()
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Cancel)
        self.create_button = self.buttons.addButton(
            "Create variable", QDialogButtonBox.ButtonRole.AcceptRole
        )
        self.create_button.setObjectName("createGroupButton")
        self.create_button.setDefault(True)
        name_row = QGridLayout()
        name_row.addWidget(QLabel("Name of the new variable"), 0, 0)
        name_row.addWidget(self.name_edit, 0, 1)
        name_row.setColumnStretch(1, 1)

        layout = QVBoxLayout(self)
        layout.addWidget(heading)
        layout.addWidget(self.source_label)
        layout.addSpacing(6)
        layout.addWidget(section_label("How to cut"))
        layout.addLayout(grid)
        layout.addWidget(rule)
        layout.addSpacing(6)
        layout.addWidget(self.groups_title)
        layout.addWidget(self.groups_view)
        layout.addWidget(self.caution_label)
        layout.addStretch(1)
        layout.addLayout(name_row)
        layout.addWidget(self.name_note)
        layout.addWidget(self.error_label)
        layout.addWidget(self.buttons)

        self.cuts_radio.setChecked(True)
        if earlier is not None:
            self.cuts_edit.setText(", ".join(plain_number(c) for c in earlier.cut_points))
        self.method_group.buttonToggled.connect(self._on_method_toggled)
        self.cuts_edit.textChanged.connect(self.update_preview)
        self.equal_spin.valueChanged.connect(self.update_preview)
        self.quantile_spin.valueChanged.connect(self.update_preview)
        self.name_edit.textChanged.connect(self._update_name_note)
        self.buttons.rejected.connect(self.reject)
        self.create_button.clicked.connect(self.create)
        self._update_enabled()
        self._update_name_note()
        self.cuts_edit.setFocus()  # Enter then creates; Escape cancels
        if var.kind is not Kind.NUMERIC:
            self._show_error(
                f"{source} is not a number question, so it cannot be grouped into ranges."
            )
            self.create_button.setEnabled(False)
            return
        self._load_answers()

    def showEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        # The button box hands "default" to the first button it lays out; Enter creates.
        super().showEvent(event)
        for button in self.buttons.buttons():
            button.setAutoDefault(button is self.create_button)
        self.create_button.setDefault(True)

    # ------------------------------------------------------------------ choices
    def method(self) -> str:
        button = self.method_group.checkedButton()
        return str(button.property("method")) if button is not None else METHOD_CUTS

    def set_method(self, method: str, value: str | int | None = None) -> None:
        """Choose a method (and its cut points or number of groups), as a click would."""
        radio = {
            METHOD_CUTS: self.cuts_radio,
            METHOD_EQUAL: self.equal_radio,
            METHOD_QUANTILE: self.quantile_radio,
        }[method]
        radio.setChecked(True)
        if value is not None:
            if method == METHOD_CUTS:
                self.cuts_edit.setText(str(value))
            else:
                spin = self.equal_spin if method == METHOD_EQUAL else self.quantile_spin
                spin.setValue(int(value))
        self.update_preview()

    def _choice(self) -> dict[str, Any]:
        method = self.method()
        if method == METHOD_CUTS:
            return {"method": method, "cuts": parse_cut_text(self.cuts_edit.text())}
        spin = self.equal_spin if method == METHOD_EQUAL else self.quantile_spin
        return {"method": method, "n_groups": spin.value()}

    def _on_method_toggled(self, _button: Any, checked: bool) -> None:
        if checked:
            self._update_enabled()
            self.update_preview()

    def _update_enabled(self) -> None:
        method = self.method()
        self.cuts_edit.setEnabled(method == METHOD_CUTS)
        self.equal_spin.setEnabled(method == METHOD_EQUAL)
        self.quantile_spin.setEnabled(method == METHOD_QUANTILE)

    # ------------------------------------------------------------------ answers
    def _load_answers(self) -> None:
        if self.wave_id is None:
            self.source_label.setText("Import a wave first: the groups are counted in its answers.")
            self.create_button.setEnabled(False)
            return
        project, inst, source, wave = (
            self.project,
            self.instrument_id,
            self.source,
            self.wave_label,
        )
        self.runner.run(
            lambda _progress: answered_values(project, inst, source, wave),
            on_success=self._on_answers_loaded,
            on_failure=self._on_failed,
            key=f"grouping-answers:{id(self)}",
            show_progress=False,
        )

    def _on_answers_loaded(self, x: np.ndarray) -> None:
        self.answers = np.asarray(x, dtype=float)
        if self.answers.size:
            lo, hi = float(self.answers.min()), float(self.answers.max())
            self.source_label.setText(
                f"{self.answers.size:,} people answered in wave {self.wave_label} (after "
                f"cleaning), from {format_number(lo)} to {format_number(hi)}."
            )
            if not self.cuts_edit.text().strip():
                # A starting point to edit: the quartiles, as whole numbers where the data are.
                start = preview_groups(self.answers, METHOD_QUANTILE, n_groups=4)
                self.cuts_edit.setText(", ".join(plain_number(c) for c in start.cut_points))
        else:
            self.source_label.setText(f"No one answered {self.source} in wave {self.wave_label}.")
        self.update_preview()

    # ------------------------------------------------------------------ preview
    def update_preview(self, *_args: Any) -> None:
        """Recompute the groups and their counts from the loaded answers."""
        from desktopapp.views.codebook_view import Frequencies

        if self.answers is None:
            return
        self._clear_error()
        try:
            self.current = preview_groups(self.answers, **self._choice())
        except PlaincountError as exc:
            self.current = None
            self.groups_view.set_frequencies(Frequencies())
            self.groups_title.setText("")
            self.caution_label.hide()
            self._show_error(str(exc))
            self._update_create_enabled()
            return
        p = self.current
        self.groups_view.set_frequencies(
            Frequencies(bars=list(zip(p.labels, p.counts)), base=p.n_answered)
        )
        self.groups_title.setText(
            f"{len(p.labels)} groups — counts of the {p.n_answered:,} who answered"
        )
        self._update_caution(p)
        self._update_create_enabled()

    def _update_caution(self, p: GroupPreview) -> None:
        try:
            min_cell = int(self.project.settings().get("min_cell", 5))
        except (TypeError, ValueError):
            min_cell = 5
        texts = []
        empty = [label for label, n in zip(p.labels, p.counts) if n == 0]
        small = [label for label, n in zip(p.labels, p.counts) if 0 < n < min_cell]
        if empty:
            texts.append(f"No one is in {', '.join(empty)}.")
        if small:
            texts.append(
                f"Fewer than {min_cell} people are in {', '.join(small)}: their counts will be "
                "hidden in tables, and people in such small groups can be recognised. "
                "Wider groups avoid both."
            )
        if self.method() == METHOD_QUANTILE and len(p.labels) < self.quantile_spin.value():
            texts.append(
                "Many people share the same answers, so some groups merged and there are "
                f"{len(p.labels)} instead of {self.quantile_spin.value()}."
            )
        self.caution_label.setText(" ".join(texts))
        self.caution_label.setVisible(bool(texts))

    # ------------------------------------------------------------------ name
    def new_name(self) -> str:
        return self.name_edit.text().strip() or f"{self.source}_group"

    def _name_problem(self) -> str:
        existing = self.project.codebook(self.instrument_id).get(self.new_name())
        if existing is not None and existing.derived_from != self.source:
            return (
                f"The codebook already has a variable called {self.new_name()}; "
                "choose another name."
            )
        return ""

    def _update_name_note(self, *_args: Any) -> None:
        existing = self.project.codebook(self.instrument_id).get(self.new_name())
        problem = self._name_problem()
        if problem:
            self.name_note.setText(problem)
        elif existing is not None:
            self.name_note.setText(
                f"{self.new_name()} already groups {self.source}; creating it again replaces "
                "its groups."
            )
        else:
            self.name_note.setText(
                "The new variable is an ordered category in the codebook. It is recomputed "
                f"from the cleaned {self.source} every time, so corrections move people "
                "between groups."
            )
        self._update_create_enabled()

    def _update_create_enabled(self) -> None:
        self.create_button.setEnabled(
            self.current is not None and not self._name_problem() and self.created is None
        )

    # ------------------------------------------------------------------ create
    def create(self) -> None:
        """Record the grouping in the codebook: one undoable step on the writer thread."""
        if self.current is None or self._name_problem():
            return
        from core.tables.binning import bin_variable

        choice = self._choice()
        project, source, name, wave = self.project, self.source, self.new_name(), self.wave_label
        instrument = project.instrument(self.instrument_id).name

        def work(_progress: Any) -> Any:
            return bin_variable(
                project, source, name=name, instrument=instrument, wave=wave, **choice
            )

        self.create_button.setEnabled(False)
        self.runner.run(
            work,
            on_success=self._on_created,
            on_failure=self._on_failed,
            writes=True,
            label=f"Group {source} into categories",
        )

    def _on_created(self, var: Any) -> None:
        self.created = var
        self.accept()

    def _on_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import failure_text

        self._show_error(failure_text(self, exc))
        self._update_create_enabled()

    def _show_error(self, text: str) -> None:
        self.error_text = text
        self.error_label.setText(text)
        self.error_label.show()

    def _clear_error(self) -> None:
        self.error_text = ""
        self.error_label.hide()
