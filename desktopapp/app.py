"""Entry point of the ``plaincount`` window: ``plaincount [PATH.plaincount] [--demo]``."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from desktopapp.main_window import MainWindow


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="plaincount",
        description="Plaincount: clean, tabulate and report survey data in a window.",
    )
    parser.add_argument("path", nargs="?", help="a .plaincount project file to open")
    parser.add_argument(
        "--demo",
        action="store_true",
        help="open the demo project (built in your data folder the first time)",
    )
    parser.add_argument(
        "--register",
        action="store_true",
        help="let your desktop open .plaincount files with Plaincount (Linux, current user only)",
    )
    parser.add_argument("--unregister", action="store_true", help="undo --register")
    return parser


def build_window(args: argparse.Namespace, synchronous: bool = False) -> MainWindow:
    """Create and show the main window and open what the command line asked for.

    Needs a running ``QApplication``. Kept apart from :func:`main` so tests can drive it.
    """
    from desktopapp.main_window import MainWindow

    window = MainWindow(synchronous=synchronous)
    window.show()
    if args.path:
        window.open_project(args.path)
    elif args.demo:
        window.open_demo()
    return window


def main(argv: Sequence[str] | None = None) -> int:
    args = build_parser().parse_args(list(sys.argv[1:] if argv is None else argv))
    if args.register or args.unregister:
        from desktopapp.register import register, unregister

        messages = register() if args.register else unregister()
        for line in messages:
            print(line)
        return 0

    from PySide6.QtWidgets import QApplication

    from desktopapp import APP_NAME, ORGANISATION
    from desktopapp.clipboard_exit import release_clipboard
    from desktopapp.errors import install_excepthook
    from desktopapp.icons import app_icon

    app = QApplication.instance() or QApplication([sys.argv[0]])  # our options are parsed above
    app.setOrganizationName(ORGANISATION)
    app.setApplicationName(APP_NAME)
    app.setDesktopFileName("plaincount")  # matches resources/plaincount.desktop
    app.setWindowIcon(app_icon())
    install_excepthook()
    window = build_window(args)
    opener = _FileOpenFilter(window)
    app.installEventFilter(opener)
    code = app.exec()
    release_clipboard(app)
    del window
    return int(code)


def _FileOpenFilter(window: MainWindow):  # noqa: ANN202, N802 - builds a QObject lazily
    """macOS hands a double-clicked document to the running app as a FileOpen event."""
    from PySide6.QtCore import QEvent, QObject

    class FileOpenFilter(QObject):
        def eventFilter(self, _obj: QObject, event: QEvent) -> bool:  # noqa: N802
            if event.type() == QEvent.Type.FileOpen:
                window.open_project(event.file())
                return True
            return False

    return FileOpenFilter(window)


if __name__ == "__main__":
    sys.exit(main())
