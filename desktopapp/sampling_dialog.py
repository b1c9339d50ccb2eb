"""A small dialog for one wave: whole population or sample, sample size, response rates.

Reached from the wave's context menu in the project tree and from the wave's page. Three
tabs:

* **Who was invited** — the wave reached the whole population or a sample of it, and the
  population size. Stored in the wave's settings (:func:`core.sampling.set_wave_design`);
  tables then show margins of error for a sample and say why there are none otherwise.
* **Sample size** — how many responses a population needs for a margin of error, and the
  other way round, with the plain explanation and the values assumed
  (:func:`core.sampling.sample_size`, :func:`core.sampling.margin_of_error`).
* **Response rates** — the final disposition counts (or completes and partials counted from
  the data), *e*, every AAPOR rate with its definition, and the rate used in captions
  (:mod:`core.response_rates`).

Everything the evaluator sets is saved with the wave the moment it is changed, on the
writer thread; the calculator tab stores nothing.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtGui import QFont
from PySide6.QtWidgets import (
    QAbstractItemView,
    QButtonGroup,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QDoubleSpinBox,
    QFormLayout,
    QFrame,
    QGridLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QRadioButton,
    QScrollArea,
    QSpinBox,
    QTableWidget,
    QTableWidgetItem,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from core import response_rates as rr
from core import sampling
from core.errors import PlaincountError
from desktopapp.views import escape_rich, muted_label, section_label

CAUTION_COLOUR = "#a33f00"
MAX_COUNT = 100_000_000
CONFIDENCE_LEVELS = (0.90, 0.95, 0.99)
TAB_DESIGN, TAB_SAMPLE_SIZE, TAB_RATES = 0, 1, 2
# Entry order of the disposition counts, with a hint for each (AAPOR codes in brackets).
COUNT_HINTS = {
    "I": "answered (nearly) every question that applied to them",
    "P": "answered enough to count, but not everything",
    "R": "declined when asked, or started and stopped early",
    "NC": "eligible, but never reached (for example the invitation bounced back unread)",
    "O": "eligible and reached, but could not take part (illness, language, away)",
    "UH": "not known whether the address or household was eligible",
    "UO": "eligibility unknown for other reasons (invitation never confirmed delivered)",
    "NE": "turned out not to belong to the population; left out of every rate",
}


def open_sampling_dialog(
    parent: QWidget | None, project: Any, runner: Any, wave_id: int, tab: int = TAB_DESIGN
) -> SamplingDialog:
    """Show the dialog for ``wave_id`` (window-modal, not blocking) and return it."""
    dialog = SamplingDialog(project, runner, wave_id, parent=parent)
    dialog.tabs.setCurrentIndex(tab)
    dialog.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
    dialog.open()
    return dialog


def _pct(share: float) -> str:
    return f"{100 * share:g} %"


class SamplingDialog(QDialog):
    """Population or sample, sample size and response rates of one wave."""

    def __init__(
        self, project: Any, runner: Any, wave_id: int, parent: QWidget | None = None
    ) -> None:
        super().__init__(parent)
        self.setObjectName("samplingDialog")
        self.project = project
        self.runner = runner
        self.wave_id = wave_id
        wave = project.wave(wave_id)
        self.wave_label = wave.label
        self.n_rows = wave.n_rows
        self._filling = False
        # False: compute and show, but store nothing (pictures of the dialog).
        self.saving = True
        self.last_error = ""
        self.last_count: rr.CompletionCount | None = None
        self.sample_size_result: sampling.SampleSize | None = None
        self.margin_result: sampling.MarginOfError | None = None
        self.setWindowTitle(f"Sampling and response rates — wave {wave.label}")
        self.resize(1000, 700)

        self.tabs = QTabWidget()
        self.tabs.setObjectName("samplingTabs")
        self.tabs.addTab(self._build_design_tab(), "Who was invited")
        self.tabs.addTab(self._build_sample_size_tab(), "Sample size")
        self.tabs.addTab(self._build_rates_tab(), "Response rates")

        self.status_label = muted_label(
            f"Changes are saved with wave {wave.label} as you make them."
        )
        self.status_label.setObjectName("samplingStatus")
        self.error_label = QLabel("")
        self.error_label.setObjectName("samplingError")
        self.error_label.setWordWrap(True)
        self.error_label.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
        self.error_label.hide()
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.reject)
        bottom = QHBoxLayout()
        bottom.addWidget(self.status_label, 1)
        bottom.addWidget(buttons)

        layout = QVBoxLayout(self)
        layout.addWidget(self.tabs, 1)
        layout.addWidget(self.error_label)
        layout.addLayout(bottom)

        self._fill_from_project()
        self._connect_signals()
        self._update_sample_size()
        self._update_rates()

    # ------------------------------------------------------------------ building
    def _build_design_tab(self) -> QWidget:
        self.whole_radio = QRadioButton(
            "Everyone the evaluation is about was invited (the whole population)"
        )
        self.whole_radio.setObjectName("wholePopulationRadio")
        self.sample_radio = QRadioButton("A sample of a larger group was invited")
        self.sample_radio.setObjectName("sampleRadio")
        self.design_group = QButtonGroup(self)
        self.design_group.addButton(self.whole_radio, 1)
        self.design_group.addButton(self.sample_radio, 0)
        self.population_spin = _count_spin("populationSpin", "not known")
        self.population_spin.setToolTip(
            "How many people the survey is about, for example everyone enrolled this year."
        )
        self.design_note = QLabel("")
        self.design_note.setObjectName("designNote")
        self.design_note.setWordWrap(True)

        form = QFormLayout()
        form.addRow("Population size", self.population_spin)
        page = QWidget()
        v = QVBoxLayout(page)
        v.setContentsMargins(18, 16, 18, 16)
        v.setSpacing(8)
        v.addWidget(section_label(f"Who was invited to take part in wave {self.wave_label}?"))
        v.addWidget(self.whole_radio)
        v.addWidget(
            _indented(
                muted_label(
                    "Most program evaluations survey every participant. The percentages then "
                    "describe the people who answered; no margins of error are shown, because "
                    "there is no sampling error to show."
                )
            )
        )
        v.addWidget(self.sample_radio)
        v.addWidget(
            _indented(
                muted_label(
                    "When only some people were chosen to be asked, tables can show how far "
                    "each percentage may be from the value for the whole group (Wilson "
                    "intervals). Give the population size if you know it: surveying a large "
                    "part of a small group gives narrower ranges."
                )
            )
        )
        v.addSpacing(6)
        v.addLayout(form)
        v.addWidget(
            muted_label(
                f"This wave has {self.n_rows:,} responses. Margins of error only describe the "
                "chance of drawing one random sample rather than another; they say nothing "
                "about people who chose not to answer."
            )
        )
        v.addSpacing(6)
        v.addWidget(QLabel("<b>What table captions will say</b>"))
        v.addWidget(self.design_note)
        v.addStretch(1)
        return page

    def _build_sample_size_tab(self) -> QWidget:
        self.ss_population_spin = _count_spin("sampleSizePopulation", "very large")
        self.ss_margin_spin = QDoubleSpinBox()
        self.ss_margin_spin.setObjectName("marginSpin")
        self.ss_margin_spin.setRange(0.5, 25.0)
        self.ss_margin_spin.setDecimals(1)
        self.ss_margin_spin.setSingleStep(0.5)
        self.ss_margin_spin.setValue(100 * sampling.DEFAULT_MARGIN)
        self.ss_margin_spin.setSuffix(" percentage points")
        self.ss_confidence_combo = QComboBox()
        self.ss_confidence_combo.setObjectName("confidenceCombo")
        for level in CONFIDENCE_LEVELS:
            self.ss_confidence_combo.addItem(_pct(level), level)
        self.ss_confidence_combo.setCurrentIndex(
            CONFIDENCE_LEVELS.index(sampling.DEFAULT_CONFIDENCE)
        )
        self.ss_proportion_spin = QSpinBox()
        self.ss_proportion_spin.setObjectName("proportionSpin")
        self.ss_proportion_spin.setRange(1, 99)
        self.ss_proportion_spin.setValue(round(100 * sampling.DEFAULT_PROPORTION))
        self.ss_proportion_spin.setSuffix(" %")
        self.ss_proportion_spin.setToolTip(
            "The percentage you expect, for example of people who agree. 50 % is the "
            "cautious choice: it asks for the most responses."
        )
        self.ss_answer = QLabel("")
        self.ss_answer.setObjectName("sampleSizeAnswer")
        font = QFont(self.ss_answer.font())
        font.setPointSizeF(font.pointSizeF() * 1.3)
        font.setBold(True)
        self.ss_answer.setFont(font)
        self.ss_explanation = QLabel("")
        self.ss_explanation.setObjectName("sampleSizeExplanation")
        self.ss_explanation.setWordWrap(True)
        self.ss_assumed = QLabel("")
        self.ss_assumed.setObjectName("sampleSizeAssumed")
        self.ss_assumed.setTextFormat(Qt.TextFormat.RichText)
        self.ss_nearest = QLabel("")
        self.ss_nearest.setObjectName("sampleSizeNearest")

        self.moe_responses_spin = _count_spin("responsesSpin", "")
        self.moe_responses_spin.setMinimum(1)
        self.moe_answer = QLabel("")
        self.moe_answer.setObjectName("marginAnswer")
        self.moe_answer.setFont(font)
        self.moe_explanation = QLabel("")
        self.moe_explanation.setObjectName("marginExplanation")
        self.moe_explanation.setWordWrap(True)

        for widget in (self.ss_margin_spin, self.ss_confidence_combo, self.ss_proportion_spin):
            widget.setMaximumWidth(220)
        form = QFormLayout()
        form.addRow("Population size", self.ss_population_spin)
        form.addRow("Margin of error (±)", self.ss_margin_spin)
        form.addRow("Confidence", self.ss_confidence_combo)
        form.addRow("Expected percentage", self.ss_proportion_spin)

        left = QVBoxLayout()
        left.addWidget(section_label("How many responses do I need?"))
        left.addLayout(form)
        left.addSpacing(8)
        left.addWidget(self.ss_answer)
        left.addWidget(self.ss_explanation)
        left.addSpacing(4)
        left.addWidget(QLabel("<b>Values assumed and worked out</b>"))
        left.addWidget(self.ss_assumed)

        right = QVBoxLayout()
        right.addWidget(section_label("How precise are my percentages?"))
        right.addWidget(
            muted_label(
                "The same formula solved the other way: the margin of error that a number of "
                "responses gives, with the population, confidence and expected percentage set "
                "on the left."
            )
        )
        moe_form = QFormLayout()
        moe_form.addRow("Responses", self.moe_responses_spin)
        right.addLayout(moe_form)
        right.addSpacing(8)
        right.addWidget(self.moe_answer)
        right.addWidget(self.moe_explanation)
        right.addSpacing(16)
        right.addWidget(
            muted_label(
                "Cochran's formula with the finite population correction; the Krejcie & "
                "Morgan (1970) table comes from the same formula. The number is of completed "
                "responses: divide by the response rate you expect to get the number of "
                "people to invite."
            )
        )

        page = QWidget()
        h = QHBoxLayout(page)
        h.setContentsMargins(18, 16, 18, 16)
        h.setSpacing(28)
        # Each column as tall as its contents, from the top: the spare room stays below.
        left_widget, right_widget = QWidget(), QWidget()
        left_widget.setLayout(left)
        right_widget.setLayout(right)
        left.setContentsMargins(0, 0, 0, 0)
        right.setContentsMargins(0, 0, 0, 0)
        h.addWidget(left_widget, 1, Qt.AlignmentFlag.AlignTop)
        line = QFrame()
        line.setFrameShape(QFrame.Shape.VLine)
        line.setFrameShadow(QFrame.Shadow.Sunken)
        h.addWidget(line)
        h.addWidget(right_widget, 1, Qt.AlignmentFlag.AlignTop)
        return page

    def _build_rates_tab(self) -> QWidget:
        self.invited_spin = _count_spin("invitedSpin", "not entered")
        self.invited_spin.setToolTip(
            "Everyone the survey was sent to. Each of them should have one disposition below."
        )
        self.count_spins: dict[str, QSpinBox] = {}
        grid = QGridLayout()
        grid.setHorizontalSpacing(8)
        grid.setVerticalSpacing(4)
        grid.setColumnStretch(2, 1)
        grid.addWidget(QLabel("Invited (all cases)"), 0, 0)
        grid.addWidget(self.invited_spin, 0, 1)
        for row, code in enumerate(rr.CODES, start=1):
            spin = _count_spin(f"count_{code}", "")
            spin.setToolTip(f"{rr.CODE_LABELS[code]} ({code}): {COUNT_HINTS[code]}.")
            label = QLabel(f"{rr.CODE_LABELS[code]} ({code})")
            label.setToolTip(spin.toolTip())
            label.setBuddy(spin)
            self.count_spins[code] = spin
            grid.addWidget(label, row, 0)
            grid.addWidget(spin, row, 1)
        self.total_label = QLabel("")
        self.total_label.setObjectName("dispositionTotal")
        self.total_label.setWordWrap(True)

        # ---- counted from the data
        self.complete_threshold_spin = QSpinBox()
        self.complete_threshold_spin.setObjectName("completeThreshold")
        self.complete_threshold_spin.setRange(1, 100)
        self.complete_threshold_spin.setValue(80)
        self.complete_threshold_spin.setSuffix(" %")
        self.partial_threshold_spin = QSpinBox()
        self.partial_threshold_spin.setObjectName("partialThreshold")
        self.partial_threshold_spin.setRange(0, 100)
        self.partial_threshold_spin.setValue(50)
        self.partial_threshold_spin.setSuffix(" %")
        self.count_button = QPushButton("Count from the data")
        self.count_button.setObjectName("countFromDataButton")
        self.count_note = muted_label("")
        self.count_note.setObjectName("countNote")
        thresholds = QFormLayout()
        thresholds.addRow("A complete answered at least", self.complete_threshold_spin)
        thresholds.addRow("A partial answered at least", self.partial_threshold_spin)

        # ---- e and the caption rate
        self.e_default_radio = QRadioButton("Estimate from the counts")
        self.e_default_radio.setObjectName("eDefaultRadio")
        self.e_entered_radio = QRadioButton("Enter e:")
        self.e_entered_radio.setObjectName("eEnteredRadio")
        self.e_group = QButtonGroup(self)
        self.e_group.addButton(self.e_default_radio, 0)
        self.e_group.addButton(self.e_entered_radio, 1)
        self.e_spin = QDoubleSpinBox()
        self.e_spin.setObjectName("eSpin")
        self.e_spin.setRange(0.0, 1.0)
        self.e_spin.setDecimals(3)
        self.e_spin.setSingleStep(0.05)
        self.e_spin.setValue(1.0)
        self.e_note = muted_label("")
        self.e_note.setObjectName("eNote")
        e_row = QHBoxLayout()
        e_row.addWidget(self.e_entered_radio)
        e_row.addWidget(self.e_spin)
        e_row.addStretch(1)
        self.caption_combo = QComboBox()
        self.caption_combo.setObjectName("captionRateCombo")
        for name in rr.RATE_NAMES:
            self.caption_combo.addItem(name, name)
        self.caption_preview = QLabel("")
        self.caption_preview.setObjectName("captionPreview")
        self.caption_preview.setWordWrap(True)

        left = QVBoxLayout()
        left.setSpacing(6)
        left.addWidget(section_label("Final disposition of every invited case"))
        left.addLayout(grid)
        left.addWidget(self.total_label)
        left.addSpacing(6)
        left.addWidget(QLabel("<b>Or count them from the answers</b>"))
        left.addWidget(
            muted_label(
                "Share of the questions that applied to each respondent that they answered "
                "(“declined” and “don't know” count as answers)."
            )
        )
        left.addLayout(thresholds)
        left.addWidget(self.count_button)
        left.addWidget(self.count_note)
        left.addSpacing(6)
        left.addWidget(QLabel("<b>e: share of unknown-eligibility cases that are eligible</b>"))
        left.addWidget(self.e_default_radio)
        left.addLayout(e_row)
        left.addWidget(self.e_note)
        left.addSpacing(6)
        caption_row = QHBoxLayout()
        caption_row.addWidget(QLabel("<b>Rate in captions and the report</b>"))
        caption_row.addWidget(self.caption_combo)
        caption_row.addStretch(1)
        left.addLayout(caption_row)
        left.addWidget(self.caption_preview)
        left.addStretch(1)
        left_widget = QWidget()
        left_widget.setLayout(left)
        left_scroll = QScrollArea()
        left_scroll.setWidgetResizable(True)
        left_scroll.setFrameShape(QFrame.Shape.NoFrame)
        left_scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        left_scroll.setWidget(left_widget)
        left_scroll.setMinimumWidth(430)
        left_widget.setMinimumWidth(400)

        self.rates_table = QTableWidget(len(rr.RATE_NAMES), 3)
        self.rates_table.setObjectName("ratesTable")
        self.rates_table.setHorizontalHeaderLabels(["Rate", "Value", "What it measures"])
        self.rates_table.verticalHeader().setVisible(False)
        self.rates_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.rates_table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.rates_table.setWordWrap(True)
        header = self.rates_table.horizontalHeader()
        header.setSectionResizeMode(0, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(1, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(2, QHeaderView.ResizeMode.Stretch)
        # Rows as tall as their wrapped text at the width the column ends up with.
        header.sectionResized.connect(self._fit_rate_rows)
        for row, name in enumerate(rr.RATE_NAMES):
            formula, definition = rr.RATE_DEFINITIONS[name]
            self.rates_table.setItem(row, 0, QTableWidgetItem(name))
            value = QTableWidgetItem("")
            value.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
            self.rates_table.setItem(row, 1, value)
            what = QTableWidgetItem(f"{definition}\n{formula}")
            what.setToolTip(formula)
            self.rates_table.setItem(row, 2, what)

        right = QVBoxLayout()
        right.addWidget(section_label("Rates (AAPOR Standard Definitions)"))
        right.addWidget(
            muted_label(
                "Odd-numbered response rates count completes only, even-numbered ones "
                "partials too. RR1 counts every unknown case as eligible, RR5 none, RR3 a "
                "share e of them. Say in the report which rate you quote."
            )
        )
        right.addWidget(self.rates_table, 1)

        page = QWidget()
        h = QHBoxLayout(page)
        h.setContentsMargins(12, 12, 12, 12)
        h.setSpacing(16)
        h.addWidget(left_scroll, 0)
        h.addLayout(right, 1)
        return page

    def _connect_signals(self) -> None:
        self.design_group.idClicked.connect(self._on_design_changed)
        self.population_spin.editingFinished.connect(self._on_design_changed)
        for widget in (
            self.ss_population_spin,
            self.ss_margin_spin,
            self.ss_proportion_spin,
            self.moe_responses_spin,
        ):
            widget.valueChanged.connect(self._update_sample_size)
        self.ss_confidence_combo.currentIndexChanged.connect(self._update_sample_size)
        for spin in (self.invited_spin, *self.count_spins.values()):
            spin.valueChanged.connect(self._update_rates)
            spin.editingFinished.connect(self._save_rates)
        self.e_group.idClicked.connect(self._on_e_choice_changed)
        self.e_spin.valueChanged.connect(self._update_rates)
        self.e_spin.editingFinished.connect(self._save_rates)
        self.caption_combo.activated.connect(self._on_caption_combo_activated)
        self.count_button.clicked.connect(self.count_from_data)

    def done(self, result: int) -> None:
        # A value changed with the arrows and not yet confirmed is kept too.
        if not getattr(self.project, "closed", False):
            self._on_design_changed()
            self._save_rates()
        super().done(result)

    # ------------------------------------------------------------------ stored values
    def _fill_from_project(self) -> None:
        self._filling = True
        try:
            design = sampling.wave_design(self.project, self.wave_id)
            (self.whole_radio if design.whole_population else self.sample_radio).setChecked(True)
            self.population_spin.setValue(design.population_size or 0)
            self.ss_population_spin.setValue(design.population_size or 0)
            self.moe_responses_spin.setValue(max(1, self.n_rows))
            self.design_note.setText(sampling.intervals_note(self.project, self.wave_id))

            settings = self.project.wave(self.wave_id).settings
            stored = rr.wave_dispositions(self.project, self.wave_id)
            counts = stored.to_json() if stored is not None else {}
            for code, spin in self.count_spins.items():
                spin.setValue(int(counts.get(code, 0)))
            self.invited_spin.setValue(int(settings.get("invited") or 0))
            e = settings.get("eligibility_e")
            (self.e_entered_radio if e is not None else self.e_default_radio).setChecked(True)
            if e is not None:
                self.e_spin.setValue(float(e))
            self.e_spin.setEnabled(e is not None)
            name = settings.get("caption_rate") or rr.DEFAULT_CAPTION_RATE
            self.caption_combo.setCurrentIndex(max(0, self.caption_combo.findData(name)))
        finally:
            self._filling = False

    def _run_write(self, fn: Any, label: str, done: str, after: Any = None) -> None:
        project = self.project

        def on_success(_result: Any) -> None:
            self.error_label.hide()
            self.status_label.setText(done)
            if after is not None:
                after()

        self.runner.run(
            lambda _progress: fn(project),
            on_success=on_success,
            on_failure=self._on_write_failed,
            writes=True,
            label=label,
        )

    def _on_write_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for, show_error

        text, details = message_for(exc)
        if details:
            show_error(self, exc)
            return
        self.last_error = text
        self.error_label.setText(text)
        self.error_label.show()
        self._fill_from_project()  # show what is stored
        self._update_rates()

    # ------------------------------------------------------------------ who was invited
    def design(self) -> tuple[bool, int | None]:
        whole = self.whole_radio.isChecked()
        size = self.population_spin.value() or None
        return whole, size

    def _on_design_changed(self, *_args: Any) -> None:
        if self._filling or not self.saving:
            return
        whole, size = self.design()
        stored = sampling.wave_design(self.project, self.wave_id)
        if (whole, size) == (stored.whole_population, stored.population_size):
            return
        wave_id = self.wave_id
        if size is not None:
            self.ss_population_spin.setValue(size)

        def work(project: Any) -> Any:
            return sampling.set_wave_design(project, wave_id, whole, size)

        self._run_write(
            work,
            "Saving who was invited…",
            f"Saved: wave {self.wave_label} is "
            + ("the whole population." if whole else "a sample.")
            + " Tables of this wave follow.",
            after=lambda: self.design_note.setText(
                sampling.intervals_note(self.project, self.wave_id)
            ),
        )

    # ------------------------------------------------------------------ sample size
    def confidence(self) -> float:
        return float(self.ss_confidence_combo.currentData())

    def _update_sample_size(self, *_args: Any) -> None:
        population = self.ss_population_spin.value() or None
        margin = self.ss_margin_spin.value() / 100
        confidence = self.confidence()
        proportion = self.ss_proportion_spin.value() / 100
        try:
            answer = sampling.sample_size(population, margin, confidence, proportion)
        except PlaincountError as exc:
            self.ss_answer.setText("")
            self.ss_explanation.setText(str(exc))
            self.ss_assumed.setText("")
        else:
            self.sample_size_result = answer
            self.ss_answer.setText(f"Aim for {answer.recommended:,} completed responses")
            self.ss_explanation.setText(sampling.plain_explanation(answer))
            rows = [
                ("Population size (N)", f"{population:,}" if population else "very large"),
                ("Margin of error (e)", f"± {100 * margin:g} percentage points"),
                ("Confidence", f"{_pct(confidence)} (z = {answer.z:.3f})"),
                ("Expected percentage (p)", f"{100 * proportion:g} %"),
                ("For a very large population (n₀)", f"{answer.n0:,.2f}"),
            ]
            if population:
                rows.append(("With the finite population correction", f"{answer.exact:,.2f}"))
            rows.append(("Rounded up: the number to aim for", f"{answer.recommended:,}"))
            rows.append(
                ("Rounded to the nearest (as in Krejcie & Morgan's table)", f"{answer.nearest:,}")
            )
            self.ss_assumed.setText(
                "<table cellspacing='0' cellpadding='2'>"
                + "".join(
                    f"<tr><td>{escape_rich(label)}</td>"
                    f"<td align='right'>&nbsp;&nbsp;{value}</td></tr>"
                    for label, value in rows
                )
                + "</table>"
            )
            self.ss_nearest.setText(f"{answer.nearest:,}")
        n = self.moe_responses_spin.value()
        try:
            moe = sampling.margin_of_error(n, population, confidence, proportion)
        except PlaincountError as exc:
            self.moe_answer.setText("")
            self.moe_explanation.setText(str(exc))
        else:
            self.margin_result = moe
            self.moe_answer.setText(f"± {moe.points:.1f} percentage points")
            self.moe_explanation.setText(sampling.plain_explanation(moe))

    # ------------------------------------------------------------------ response rates
    def dispositions(self) -> rr.Dispositions:
        return rr.Dispositions(**{code: spin.value() for code, spin in self.count_spins.items()})

    def set_counts(self, counts: dict[str, int], save: bool = True) -> None:
        """Enter disposition counts (codes as in :data:`core.response_rates.CODES`)."""
        self._filling = True
        try:
            for code, value in counts.items():
                self.count_spins[code].setValue(int(value))
        finally:
            self._filling = False
        self._update_rates()
        if save:
            self._save_rates()

    def entered_e(self) -> float | None:
        return self.e_spin.value() if self.e_entered_radio.isChecked() else None

    def set_e(self, e: float | None) -> None:
        """Use ``e`` (None: the default estimate) and save."""
        self._filling = True
        try:
            (self.e_entered_radio if e is not None else self.e_default_radio).setChecked(True)
            self.e_spin.setEnabled(e is not None)
            if e is not None:
                self.e_spin.setValue(e)
        finally:
            self._filling = False
        self._update_rates()
        self._save_rates()

    def rate_text(self, name: str) -> str:
        """The value shown for rate ``name`` in the table."""
        return self.rates_table.item(rr.RATE_NAMES.index(name), 1).text()

    def _on_e_choice_changed(self, _id: int) -> None:
        self.e_spin.setEnabled(self.e_entered_radio.isChecked())
        self._update_rates()
        self._save_rates()

    def _on_caption_combo_activated(self, _index: int) -> None:
        self._update_rates()
        self._save_rates()

    def _update_rates(self, *_args: Any) -> None:
        d = self.dispositions()
        total = sum(d.to_json().values())
        invited = self.invited_spin.value()
        if invited and total != invited:
            gap = invited - total
            self.total_label.setText(
                f"The dispositions add up to {total:,}, but {invited:,} were invited: "
                + (
                    f"{gap:,} cases have no disposition yet."
                    if gap > 0
                    else f"{-gap:,} more than were invited. Check the counts."
                )
            )
            self.total_label.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
        else:
            self.total_label.setText(
                f"The dispositions add up to {total:,}"
                + (", everyone invited." if invited else ".")
            )
            self.total_label.setStyleSheet("")
        known = d.eligible_known + d.NE
        if known:
            self.e_default_radio.setText(f"Estimate from the counts: e = {rr.default_e(d):.3f}")
        else:
            self.e_default_radio.setText("Estimate from the counts")
        self.e_note.setText(
            "The estimate is the eligible share of the cases whose eligibility is known. e "
            "only matters when some cases have unknown eligibility (UH, UO): it decides what "
            "share of them RR3, RR4, REF2 and CON2 count as eligible."
        )
        try:
            rates = rr.outcome_rates(d, self.entered_e())
        except PlaincountError as exc:
            self.caption_preview.setText(str(exc))
            return
        for row, name in enumerate(rr.RATE_NAMES):
            rate = rates[name]
            item = self.rates_table.item(row, 1)
            item.setText("—" if rate.value is None else f"{100 * rate.value:.1f} %")
            item.setToolTip(rate.percent_text)
        self._fit_rate_rows()
        name = self.caption_combo.currentData()
        chosen = rates[name]
        if total == 0:
            self.caption_preview.setText(
                "Enter the counts to see the rate; until then captions give no response rate."
            )
        else:
            self.caption_preview.setText(
                f"Captions and the report will read: “{_caption_word(name)} rate (AAPOR "
                f"{name}): {chosen.percent_text}”."
            )

    def _fit_rate_rows(self, *_args: Any) -> None:
        """Each row as tall as its wrapped definition and formula at the column's width.

        Measured here rather than by the table's own row sizing, which leaves the last line
        of some wrapped cells cut off.
        """
        table = self.rates_table
        width = table.columnWidth(2) - 12  # the cell's text margins
        if width <= 0:
            return
        metrics = table.fontMetrics()
        for row in range(table.rowCount()):
            text = table.item(row, 2).text()
            rect = metrics.boundingRect(0, 0, width, 10_000, int(Qt.TextFlag.TextWordWrap), text)
            table.setRowHeight(row, rect.height() + 8)

    def showEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        super().showEvent(event)
        self._fit_rate_rows()

    def _save_rates(self, *_args: Any) -> None:
        if self._filling or not self.saving:
            return
        d = self.dispositions()
        e = self.entered_e()
        caption = self.caption_combo.currentData()
        invited = self.invited_spin.value() or None
        settings = self.project.wave(self.wave_id).settings
        stored = settings.get("dispositions")
        if (
            stored == d.to_json()
            and settings.get("eligibility_e") == e
            and (settings.get("caption_rate") or rr.DEFAULT_CAPTION_RATE) == caption
            and settings.get("invited") == invited
        ):
            return  # nothing changed
        if stored is None and sum(d.to_json().values()) == 0 and invited is None:
            return  # nothing entered yet: store nothing
        wave_id = self.wave_id

        def work(project: Any) -> Any:
            rr.save_dispositions(project, wave_id, d, e, caption)
            # How many were invited is kept beside the counts, to check them against.
            return project.update_wave_settings(wave_id, invited=invited)

        self._run_write(
            work, "Saving the response rates…", f"Saved the counts with wave {self.wave_label}."
        )

    def count_from_data(self) -> None:
        """Count completes and partials from the answers (on a worker) and enter them."""
        complete = self.complete_threshold_spin.value() / 100
        partial = self.partial_threshold_spin.value() / 100
        if partial > complete:
            self.count_note.setText(
                "The partial threshold must not be above the complete threshold."
            )
            return
        project, wave_id = self.project, self.wave_id

        def work(_progress: Any) -> rr.CompletionCount:
            from core.working import working_data

            return rr.count_completes(working_data(project, wave_id), complete, partial)

        self.count_note.setText("Counting…")
        self.runner.run(
            work,
            on_success=self._on_counted,
            on_failure=self._on_count_failed,
            label="Counting completes and partials…",
        )

    def _on_counted(self, count: rr.CompletionCount) -> None:
        self.last_count = count
        self.set_counts({"I": count.completes, "P": count.partials, "R": count.breakoffs})
        self.count_note.setText(
            f"From the {count.n_respondents:,} responses ({count.n_questions} questions): "
            f"{count.completes:,} completes (at least {_pct(count.threshold)} answered), "
            f"{count.partials:,} partials (at least {_pct(count.partial_threshold)}) and "
            f"{count.breakoffs:,} break-offs, entered as completes, partials, and refusals and "
            "break-offs. Add the people who declined or were never reached: they are not in "
            "the data."
        )

    def _on_count_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for

        self.count_note.setText(message_for(exc)[0])


def _caption_word(name: str) -> str:
    for prefix, word in (("COOP", "Cooperation"), ("CON", "Contact"), ("REF", "Refusal")):
        if name.startswith(prefix):
            return word
    return "Response"


def _count_spin(name: str, special: str) -> QSpinBox:
    spin = QSpinBox()
    spin.setObjectName(name)
    spin.setRange(0, MAX_COUNT)
    spin.setGroupSeparatorShown(True)
    spin.setAlignment(Qt.AlignmentFlag.AlignRight)
    spin.setMinimumWidth(100)
    spin.setMaximumWidth(130)
    if special:
        spin.setSpecialValueText(special)
    return spin


def _indented(widget: QWidget) -> QWidget:
    widget.setContentsMargins(26, 0, 0, 4)
    return widget
