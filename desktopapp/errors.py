"""Showing errors: plain words first, details folded away, never a raw traceback."""

from __future__ import annotations

import sys
import traceback
from types import TracebackType

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QMessageBox, QWidget

from core.errors import PlaincountError
from core.progress import Cancelled

UNEXPECTED = (
    "Something went wrong inside Plaincount. Your project file is safe: every change that "
    "was confirmed has been saved. If this happens again, please send the details below to "
    "whoever looks after Plaincount for you."
)


def message_for(exc: BaseException) -> tuple[str, str]:
    """(main text, folded details) for an exception.

    A :class:`PlaincountError` is written for the evaluator, so it is the whole message.
    Anything else is a programming error: a calm sentence up front, the traceback folded.
    """
    if isinstance(exc, PlaincountError):
        return str(exc), ""
    if isinstance(exc, Cancelled):
        return "Cancelled. Nothing was changed.", ""
    details = "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
    return UNEXPECTED, details


def show_error(parent: QWidget | None, exc: BaseException, title: str = "Plaincount") -> None:
    """Show ``exc`` in a message box the evaluator can read."""
    text, details = message_for(exc)
    box = QMessageBox(parent)
    box.setObjectName("errorMessageBox")
    box.setIcon(QMessageBox.Icon.Warning if details == "" else QMessageBox.Icon.Critical)
    box.setWindowTitle(title)
    box.setText(text)
    if details:
        # QMessageBox keeps detailed text behind a "Show Details..." button.
        box.setDetailedText(details)
    box.setStandardButtons(QMessageBox.StandardButton.Ok)
    if parent is None:
        box.exec()
        return
    # Window-modal and non-blocking: the event loop (and any running work) carries on.
    box.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
    box.open()


def failure_text(parent: QWidget | None, exc: BaseException) -> str:
    """The plain sentence to show beside the control whose work failed.

    An unexpected failure also opens the message box with its details, so a programming
    error is never reduced to one calm line nobody can report.
    """
    text, details = message_for(exc)
    if details:
        show_error(parent, exc)
    return text


def console_text(exc: BaseException) -> str:
    """The plain sentence for a failure shown in place of a result; details go to the console.

    Used where a message box would interrupt for something the pane already says (a table
    or chart that cannot be computed), while the traceback still reaches whoever runs it.
    """
    text, details = message_for(exc)
    if details:
        print(details, file=sys.stderr)
    return text


def _excepthook(
    exc_type: type[BaseException], exc: BaseException, tb: TracebackType | None
) -> None:
    if issubclass(exc_type, KeyboardInterrupt):
        sys.__excepthook__(exc_type, exc, tb)
        return
    traceback.print_exception(exc_type, exc, tb, file=sys.stderr)
    if exc.__traceback__ is None:
        exc = exc.with_traceback(tb)
    app = QApplication.instance()
    if app is None:
        return
    show_error(QApplication.activeWindow(), exc)


def install_excepthook() -> None:
    """Route exceptions that escape a slot to a message box instead of a dead window."""
    sys.excepthook = _excepthook
