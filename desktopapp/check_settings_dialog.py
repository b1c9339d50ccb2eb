"""A small dialog for the cut-offs of the cleaning checks, saved in the project.

Every number here appears in the report's data-treatment appendix, so the dialog says what
each one does in a line of plain words. Saving goes through ``core.checks.save_settings``
on the writer thread; the flag list then runs the checks again.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QDoubleSpinBox,
    QFormLayout,
    QGridLayout,
    QGroupBox,
    QLabel,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from core.checks.flag import CHECK_LABELS
from core.checks.settings import OUTLIER_METHODS, QUANTILE_TYPES, CheckSettings
from desktopapp.errors import failure_text, message_for
from desktopapp.views import muted_label

ERROR_COLOUR = "#B3261E"


def _spin(lo: float, hi: float, step: float, decimals: int = 2) -> QDoubleSpinBox:
    box = QDoubleSpinBox()
    box.setRange(lo, hi)
    box.setSingleStep(step)
    box.setDecimals(decimals)
    return box


class CheckSettingsDialog(QDialog):
    """Outlier method and fences, modified z cut-off, straight-lining k, speeder fraction."""

    def __init__(self, project: Any, runner: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("checkSettingsDialog")
        self.setWindowTitle("Check settings")
        self.project = project
        self.runner = runner
        from core.checks import load_settings

        try:
            self.settings = load_settings(project)
        except Exception:  # noqa: BLE001 - unreadable saved settings fall back to defaults
            self.settings = CheckSettings()

        self.method_combo = QComboBox()
        self.method_combo.setObjectName("outlierMethod")
        for key, text in OUTLIER_METHODS.items():
            self.method_combo.addItem(text, key)
        self.inner_spin = _spin(0.1, 10, 0.5)
        self.inner_spin.setObjectName("tukeyInner")
        self.outer_spin = _spin(0.2, 20, 0.5)
        self.outer_spin.setObjectName("tukeyOuter")
        self.quantile_combo = QComboBox()
        self.quantile_combo.setObjectName("quantileMethod")
        for key, number in QUANTILE_TYPES.items():
            self.quantile_combo.addItem(f"Hyndman & Fan type {number} ({key})", key)
        self.z_spin = _spin(0.5, 20, 0.5)
        self.z_spin.setObjectName("zThreshold")
        self.min_answers_spin = QSpinBox()
        self.min_answers_spin.setObjectName("minAnswers")
        self.min_answers_spin.setRange(2, 10_000)
        self.k_spin = QSpinBox()
        self.k_spin.setObjectName("straightlineK")
        self.k_spin.setRange(2, 100)
        self.speeder_spin = _spin(0.05, 0.95, 0.05)
        self.speeder_spin.setObjectName("speederFraction")
        self.agree_spin = _spin(0.55, 1.0, 0.05)
        self.agree_spin.setObjectName("agreeCut")

        outliers = QGroupBox("Outliers")
        of = QFormLayout()
        of.addRow("Method", self.method_combo)
        of.addRow("Inner fence (times the IQR)", self.inner_spin)
        of.addRow("Outer fence (times the IQR)", self.outer_spin)
        of.addRow("Quartiles", self.quantile_combo)
        of.addRow("Modified z-score cut-off", self.z_spin)
        of.addRow("Fewest answers to look for outliers", self.min_answers_spin)
        outliers_layout = QVBoxLayout(outliers)
        outliers_layout.addLayout(of)
        outliers_layout.addWidget(
            muted_label(
                "Tukey's fences: beyond 1.5 x IQR from the quartiles is 'outside', beyond 3 x is "
                "'far out'. Modified z-score: 0.6745 x distance from the median / median "
                "absolute deviation; above 3.5 is a potential outlier (Iglewicz & Hoaglin)."
            )
        )
        others = QGroupBox("Answer patterns")
        pf = QFormLayout(others)
        pf.addRow("Straight-lining: batteries of at least (k items)", self.k_spin)
        pf.addRow("Speeders: under this fraction of the median time", self.speeder_spin)
        pf.addRow("Reversed scale: agreement cut-off (0.5–1)", self.agree_spin)

        self.enabled_checks: dict[str, QCheckBox] = {}
        enabled = QGroupBox("Checks to run")
        grid = QGridLayout(enabled)
        for i, (check, label) in enumerate(CHECK_LABELS.items()):
            box = QCheckBox(label)
            box.setObjectName(f"enable_{check}")
            self.enabled_checks[check] = box
            grid.addWidget(box, i // 2, i % 2)

        self.error_label = QLabel("")
        self.error_label.setObjectName("settingsError")
        self.error_label.setWordWrap(True)
        self.error_label.setStyleSheet(f"color: {ERROR_COLOUR};")
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Save
            | QDialogButtonBox.StandardButton.Cancel
            | QDialogButtonBox.StandardButton.RestoreDefaults
        )
        buttons.accepted.connect(self.submit)
        buttons.rejected.connect(self.reject)
        buttons.button(QDialogButtonBox.StandardButton.RestoreDefaults).clicked.connect(
            lambda: self.show_settings(CheckSettings())
        )
        layout = QVBoxLayout(self)
        self.setMinimumWidth(640)
        layout.addWidget(outliers)
        layout.addWidget(others)
        layout.addWidget(enabled)
        layout.addWidget(self.error_label)
        layout.addWidget(buttons)
        self.method_combo.currentIndexChanged.connect(self._on_method_changed)
        self.show_settings(self.settings)

    def show_settings(self, s: CheckSettings) -> None:
        self.method_combo.setCurrentIndex(max(0, self.method_combo.findData(s.outlier_method)))
        self.inner_spin.setValue(s.tukey_inner)
        self.outer_spin.setValue(s.tukey_outer)
        self.quantile_combo.setCurrentIndex(max(0, self.quantile_combo.findData(s.quantile_method)))
        self.z_spin.setValue(s.z_threshold)
        self.min_answers_spin.setValue(s.min_answers)
        self.k_spin.setValue(s.straightline_min_items)
        self.speeder_spin.setValue(s.speeder_fraction)
        self.agree_spin.setValue(s.agree_cut)
        for check, box in self.enabled_checks.items():
            box.setChecked(check in s.enabled)
        self._on_method_changed()

    def _on_method_changed(self, *_args: Any) -> None:
        tukey = self.method_combo.currentData() == "tukey"
        for w in (self.inner_spin, self.outer_spin, self.quantile_combo):
            w.setEnabled(tukey)
        self.z_spin.setEnabled(not tukey)

    def chosen(self) -> CheckSettings:
        """The settings the controls show (raises a plain error for impossible ones)."""
        return replace(
            self.settings,
            outlier_method=self.method_combo.currentData(),
            tukey_inner=self.inner_spin.value(),
            tukey_outer=self.outer_spin.value(),
            quantile_method=self.quantile_combo.currentData(),
            z_threshold=self.z_spin.value(),
            min_answers=self.min_answers_spin.value(),
            straightline_min_items=self.k_spin.value(),
            speeder_fraction=self.speeder_spin.value(),
            agree_cut=self.agree_spin.value(),
            enabled=tuple(c for c, box in self.enabled_checks.items() if box.isChecked()),
            rules=(),
        )

    def submit(self) -> None:
        from core.checks import save_settings

        try:
            chosen = self.chosen()
        except Exception as exc:  # noqa: BLE001 - CheckSettings says what is wrong
            self.error_label.setText(message_for(exc)[0])
            return
        project = self.project
        self.error_label.setText("")
        self.runner.run(
            lambda _p: save_settings(project, chosen),
            on_success=self._on_done,
            on_failure=self._on_failed,
            writes=True,
            label="Saving the check settings…",
        )

    def _on_done(self, _changes: Any) -> None:
        self.accept()

    def _on_failed(self, exc: BaseException) -> None:
        self.error_label.setText(failure_text(self, exc))
