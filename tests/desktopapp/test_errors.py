"""Errors in the window: plain words first, technical details folded away."""

from __future__ import annotations

import sys

from PySide6.QtWidgets import QMessageBox, QWidget

from core.errors import ProjectError
from core.progress import Cancelled
from desktopapp import errors


def _boom():
    return {}["missing key"]


def test_plaincount_errors_are_the_whole_message():
    text, details = errors.message_for(ProjectError("The file is read-only."))
    assert (text, details) == ("The file is read-only.", "")
    assert errors.message_for(Cancelled())[0] == "Cancelled. Nothing was changed."


def test_unexpected_errors_fold_the_traceback_away(qtbot):
    try:
        _boom()
    except KeyError as exc:
        caught = exc
    text, details = errors.message_for(caught)
    assert text == errors.UNEXPECTED
    assert "Traceback" not in text
    assert "KeyError" in details and "_boom" in details
    parent = QWidget()
    qtbot.addWidget(parent)
    parent.show()
    errors.show_error(parent, caught)
    box = parent.findChild(QMessageBox, "errorMessageBox")
    assert box.text() == errors.UNEXPECTED
    assert "KeyError" in box.detailedText()


def test_excepthook_shows_a_message_box(qtbot, monkeypatch):
    shown = []
    monkeypatch.setattr(errors, "show_error", lambda parent, exc: shown.append(exc))
    monkeypatch.setattr(sys, "excepthook", sys.excepthook)  # restored after the test
    errors.install_excepthook()
    assert sys.excepthook is errors._excepthook
    try:
        _boom()
    except KeyError as exc:
        sys.excepthook(type(exc), exc, exc.__traceback__)
    assert len(shown) == 1 and isinstance(shown[0], KeyError)
