"""Closing the program with a copied table on the clipboard must not crash it."""

from __future__ import annotations

import os
import subprocess
import sys
import textwrap

SCRIPT = textwrap.dedent(
    """
    import desktopapp
    from PySide6.QtCore import QMimeData
    from PySide6.QtWidgets import QApplication
    from desktopapp.clipboard_exit import release_clipboard
    app = QApplication([])
    data = QMimeData()
    data.setHtml("<table><tr><td>12</td></tr></table>")
    data.setText("12")
    app.clipboard().setMimeData(data)
    if {release}:
        release_clipboard(app)
        assert app.clipboard().text() == "12"
    print("closing")
    """
)


def _run(release: bool) -> subprocess.CompletedProcess:
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen"}
    code = SCRIPT.format(release=release)
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env)


def test_released_clipboard_exits_cleanly_and_keeps_the_text():
    out = _run(release=True)
    assert out.returncode == 0, out.stderr[-400:]
    assert out.stdout.strip() == "closing"
