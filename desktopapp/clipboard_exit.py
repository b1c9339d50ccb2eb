"""Leave the clipboard safe when the window closes.

Copied tables and charts are QMimeData objects made from Python. When the program ends with
one of them still on the clipboard, Qt frees it after the interpreter has let go of it and
the process crashes on the way out (seen with PySide6 6.10 to 6.12). Keeping only the copied
text avoids that; a chart image or the table's formatting does not outlive the program.
"""

from __future__ import annotations

from PySide6.QtWidgets import QApplication


def release_clipboard(app: QApplication) -> None:
    clipboard = app.clipboard()
    if clipboard.mimeData() is None or not clipboard.mimeData().formats():
        return
    text = clipboard.text()
    if text:
        clipboard.setText(text)  # made by Qt itself, freed safely
    else:
        clipboard.clear()
    app.processEvents()
