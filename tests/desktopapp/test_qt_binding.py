"""The Qt binding must not lose references to None: PySide6 6.12.0 on Python 3.11 drops one
per call that passes None, and a long session then aborts with 'deallocating None'."""

from __future__ import annotations

import sys

from PySide6.QtWidgets import QWidget


def test_calls_returning_nothing_keep_none_alive(qtbot):
    widget = QWidget()
    qtbot.addWidget(widget)
    before = sys.getrefcount(None)
    for _ in range(2000):
        widget.setEnabled(True)
    # A correct binding leaves the count where it was (give or take a few from the test
    # machinery); the faulty one lowers it by exactly 2000.
    assert sys.getrefcount(None) - before > -100
