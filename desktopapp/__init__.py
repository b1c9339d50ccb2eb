"""Plaincount's window: a PySide6 shell over the GUI-free ``core`` package.

``core`` never imports this package. Widgets are touched only on the GUI thread; long work
goes through :mod:`desktopapp.workers`.
"""

from desktopapp.binding_guard import keep_none_alive

keep_none_alive()  # before any Qt call: see binding_guard

APP_NAME = "Plaincount"
ORGANISATION = "Plaincount"


def app_settings():  # noqa: ANN201 - QSettings, imported lazily to keep start-up light
    """The per-user settings store (window geometry, recent projects)."""
    from PySide6.QtCore import QSettings

    return QSettings(ORGANISATION, APP_NAME)
