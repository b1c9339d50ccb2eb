"""Fixtures for window tests: isolated Qt settings and a small project built by hand."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from core.codebook import Codebook, Variable
from core.kinds import Kind, MissingReason
from core.project import Project

AGREE = ("Strongly disagree", "Disagree", "Neither", "Agree", "Strongly agree")


@pytest.fixture(autouse=True)
def _isolated_qsettings(tmp_path_factory):
    """QSettings of every test go to a fresh folder, never to the user's own settings."""
    from PySide6.QtCore import QSettings

    folder = tmp_path_factory.mktemp("qsettings")
    for fmt in (QSettings.Format.NativeFormat, QSettings.Format.IniFormat):
        QSettings.setPath(fmt, QSettings.Scope.UserScope, str(folder))
    yield


@pytest.fixture(autouse=True)
def _empty_clipboard_after_test():
    """Leave no Python-made clipboard data behind, as the app does when it closes (see
    desktopapp/clipboard_exit.py): otherwise the test run can crash after its last test."""
    yield
    from PySide6.QtWidgets import QApplication

    from desktopapp.clipboard_exit import release_clipboard

    app = QApplication.instance()
    if app is not None:
        release_clipboard(app)


def small_frame() -> pd.DataFrame:
    """Twelve invented respondents; counts are easy to check by eye."""
    return pd.DataFrame(
        {
            "resp_id": [f"R{i:02d}" for i in range(1, 13)],
            "track": [
                "HVAC",
                "Welding",
                "HVAC",
                "Solar",
                "HVAC",
                "Welding",
                "HVAC",
                "Solar",
                "HVAC",
                "Welding",
                None,
                "HVAC",
            ],
            "age": [23, 31, 45, -99, 27, 38, 52, 19, 33, 41, 29, 7],
            "agree_1": [
                "Agree",
                "Strongly agree",
                "Agree",
                "Disagree",
                "Neither",
                "Agree",
                "Strongly agree",
                "Agree",
                None,
                "Disagree",
                "Agree",
                "Agree",
            ],
            "agree_2": [
                "Disagree",
                "Agree",
                "Neither",
                "Agree",
                "Agree",
                "Strongly agree",
                "Agree",
                "Agree",
                "Agree",
                "Agree",
                None,
                "Neither",
            ],
            "email": [f"person{i}@example.org" for i in range(1, 13)],
        }
    )


def small_codebook() -> Codebook:
    return Codebook(
        [
            Variable("resp_id", "Respondent", Kind.IDENTIFIER, position=0),
            Variable(
                "track",
                "Which track are you in?",
                Kind.CATEGORICAL,
                levels=("HVAC", "Solar", "Welding"),
                position=1,
            ),
            Variable(
                "age",
                "How old are you?",
                Kind.NUMERIC,
                missing_codes={"-99": MissingReason.DECLINED},
                range=(18, 64),
                position=2,
            ),
            Variable(
                "agree_1",
                "The course was well organised",
                Kind.LIKERT,
                levels=AGREE,
                group="agree",
                keying="positive",
                position=3,
            ),
            Variable(
                "agree_2",
                "The workload felt unmanageable",
                Kind.LIKERT,
                levels=AGREE,
                group="agree",
                keying="negative",
                position=4,
            ),
            Variable("email", "Your e-mail address", Kind.TEXT, personal=True, position=5),
        ]
    )


def build_small_project(path: Path) -> Path:
    frame = small_frame()
    with Project.create(path, name="Small test project") as project:
        inst = project.add_instrument("Participant survey", small_codebook())
        project.add_wave(
            inst.id,
            "2026",
            "survey_2026.csv",
            frame.to_csv(index=False).encode(),
            frame.astype(object).where(frame.notna(), None).astype(str).where(frame.notna(), None),
        )
    return path


@pytest.fixture
def small_project_path(tmp_path) -> Path:
    return build_small_project(tmp_path / "small.plaincount")


@pytest.fixture
def window(qtbot):
    """A synchronous main window (background work runs at once), closed after the test."""
    from desktopapp.main_window import MainWindow

    win = MainWindow(synchronous=True)
    qtbot.addWidget(win)
    win.show()
    yield win
    win.close_project()
