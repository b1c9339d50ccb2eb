"""The review of how a new wave lines up with the codebook, before it is imported."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from core import demo
from core.codebook import Codebook, Variable
from core.importing import import_file
from core.kinds import Kind
from core.wavematch import match_wave
from desktopapp.wave_match_dialog import WaveMatchDialog

USE = ("use_tutoring", "use_coaching", "use_tool_library")


@pytest.fixture(scope="module")
def demo_files(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("demo_files")
    demo.write_demo_files(folder)
    return folder


def _small() -> tuple[Codebook, pd.DataFrame, dict[str, str]]:
    codebook = Codebook(
        [
            Variable("resp_id", "ID", Kind.IDENTIFIER, position=1),
            Variable("hours", "Hours of paid work a week?", Kind.NUMERIC, position=2),
            Variable(
                "often",
                "How often did you use tutoring?",
                Kind.LIKERT,
                levels=("Never", "Rarely", "Sometimes", "Often", "Always"),
                position=3,
            ),
            Variable("gone", "A question dropped this year", Kind.TEXT, position=4),
        ]
    )
    frame = pd.DataFrame(
        {
            "resp_id": [f"P{i}" for i in range(8)],
            "paid_hours": [str(10 + i) for i in range(8)],
            "often": ["Never", "Now and then", "Often", "Always"] * 2,
            "resp_id_2": [f"Q{i}" for i in range(8)],
        }
    )
    questions = {
        "resp_id": "ID",
        "paid_hours": "Hours of paid work a week?",
        "often": "How often did you use tutoring?",
        "resp_id_2": "Second ID",
    }
    return codebook, frame, questions


def test_the_review_shows_each_decision_and_hands_over_the_choices(qtbot):
    codebook, frame, questions = _small()
    report = match_wave(codebook, frame, questions)
    dialog = WaveMatchDialog(report, codebook, "2027")
    qtbot.addWidget(dialog)
    dialog.show()
    # Rows that need a look come before the plain same-name matches.
    first = dialog.columns_table.item(0, dialog.COL_COLUMN).text()
    assert first == "paid_hours"
    assert dialog.target_combo("paid_hours").currentData() == "hours"
    assert "gone" in dialog.missing_label.text()
    # A new question is named explicitly too, so the import does exactly what was shown.
    assert dialog.column_map() == {"paid_hours": "hours", "resp_id_2": "resp_id_2"}
    assert dialog.level_maps() == {"often": {"Now and then": "Sometimes"}}
    # The evaluator disagrees: paid_hours is a new question; "Now and then" stays as it is.
    dialog.set_target("paid_hours", None)
    dialog.set_level("often", "Now and then", None)
    assert dialog.column_map() == {"paid_hours": "paid_hours", "resp_id_2": "resp_id_2"}
    assert dialog.level_maps() == {"often": {"Now and then": ""}}
    # Two columns stored as one entry are refused in plain words, and nothing is accepted.
    dialog.set_target("resp_id_2", "resp_id")
    dialog.import_button.click()
    assert dialog.error_label.isVisible()
    assert "both stored as resp_id" in dialog.error_label.text()
    assert dialog.result() == 0
    dialog.set_target("resp_id_2", None)
    with qtbot.waitSignal(dialog.accepted, timeout=1000):
        dialog.import_button.click()


def test_importing_the_demo_wave_2027_in_the_window_reviews_then_matches(
    window, tmp_path, demo_files, qtbot
):
    assert window.new_project(tmp_path / "eval.plaincount")
    import_file(
        window.project,
        demo_files / demo.FILE_NAMES["2026"],
        instrument=demo.INSTRUMENT,
        wave="2026",
        header_rows=2,
    )
    window.request_import([demo_files / demo.FILE_NAMES["2027"]])
    dialog = window.import_dialog
    qtbot.waitUntil(lambda: dialog.import_button.isEnabled(), timeout=10000)
    dialog.import_button.click()
    review = dialog.wave_review
    assert review is not None and review.isVisible()
    assert window.project.waves()[-1].label == "2026"  # nothing imported before confirming
    assert review.report.renamed == ["work_hours_week"]
    assert review.column_map() == {"work_hours_week": "hours_work_week"}
    assert review.level_maps() == {item: {"Now and then": "Sometimes"} for item in USE}
    review.import_button.click()
    assert window.import_dialog is None  # imported and closed
    project = window.project
    wave = project.waves()[-1]
    assert wave.label == "2027"
    codebook = project.codebook(wave.instrument_id)
    assert "work_hours_week" not in codebook
    assert codebook["use_coaching"].value_labels["Now and then"] == "Sometimes"
    assert "hours_work_week" in project.raw_table(wave.id).columns


def test_going_back_from_the_review_imports_nothing(window, tmp_path, demo_files, qtbot):
    assert window.new_project(tmp_path / "eval.plaincount")
    import_file(
        window.project,
        demo_files / demo.FILE_NAMES["2026"],
        instrument=demo.INSTRUMENT,
        wave="2026",
        header_rows=2,
    )
    window.request_import([demo_files / demo.FILE_NAMES["2027"]])
    dialog = window.import_dialog
    qtbot.waitUntil(lambda: dialog.import_button.isEnabled(), timeout=10000)
    dialog.import_button.click()
    dialog.wave_review.back_button.click()
    assert dialog.isVisible() and dialog.wave_choices is None
    assert [w.label for w in window.project.waves()] == ["2026"]
    dialog.reject()


def test_the_imported_wave_follows_the_choices_changed_in_the_review(
    window, tmp_path, demo_files, qtbot
):
    assert window.new_project(tmp_path / "eval.plaincount")
    import_file(
        window.project,
        demo_files / demo.FILE_NAMES["2026"],
        instrument=demo.INSTRUMENT,
        wave="2026",
        header_rows=2,
    )
    window.request_import([demo_files / demo.FILE_NAMES["2027"]])
    dialog = window.import_dialog
    qtbot.waitUntil(lambda: dialog.import_button.isEnabled(), timeout=10000)
    dialog.import_button.click()
    review = dialog.wave_review
    review.set_target("work_hours_week", None)  # keep it as a question of its own
    review.set_level("use_coaching", "Now and then", None)  # leave this answer as it is
    review.import_button.click()
    project = window.project
    wave = project.waves()[-1]
    codebook = project.codebook(wave.instrument_id)
    assert wave.label == "2027" and "work_hours_week" in codebook
    assert "work_hours_week" in project.raw_table(wave.id).columns
    assert "Now and then" not in codebook["use_coaching"].value_labels
    assert codebook["use_tutoring"].value_labels["Now and then"] == "Sometimes"
    assert wave.import_report["match"]["unknown_answers"] == {"use_coaching": ["Now and then"]}
