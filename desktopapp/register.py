"""``plaincount --register``: let a Linux desktop open ``.plaincount`` files with Plaincount.

Installs, for the current user only, under ``$XDG_DATA_HOME`` (``~/.local/share``):

* ``applications/plaincount.desktop`` (its ``Exec`` line pointing at this installation),
* ``mime/packages/plaincount-mime.xml`` (the ``application/x-plaincount`` type, ``*.plaincount``),
* the icon as ``icons/hicolor/scalable/apps/plaincount.svg`` and as the file-type icon,

then refreshes the desktop's caches with ``update-mime-database`` and
``update-desktop-database`` when they are installed. ``--unregister`` removes the same files.
Windows and macOS are described in docs/desktop-integration.md.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

RESOURCES = Path(__file__).resolve().parent.parent / "resources"
DESKTOP_NAME = "plaincount.desktop"
MIME_NAME = "plaincount-mime.xml"


def data_home() -> Path:
    return Path(os.environ.get("XDG_DATA_HOME") or Path.home() / ".local" / "share")


def installed_files(home: Path | None = None) -> dict[str, Path]:
    """Where each file goes (same places for register and unregister)."""
    home = home or data_home()
    icons = home / "icons" / "hicolor" / "scalable"
    return {
        "desktop": home / "applications" / DESKTOP_NAME,
        "mime": home / "mime" / "packages" / MIME_NAME,
        "icon": icons / "apps" / "plaincount.svg",
        "file_icon": icons / "mimetypes" / "application-x-plaincount.svg",
    }


def launcher_command() -> str:
    """The command a file manager runs: the installed ``plaincount``, else this Python."""
    found = shutil.which("plaincount")
    if found:
        return _quote(found)
    return f"{_quote(sys.executable)} -m desktopapp"


def _quote(arg: str) -> str:
    # Desktop entry spec: arguments with spaces or reserved characters go in double quotes,
    # with ", `, $ and \ escaped by a backslash.
    if not any(c in arg for c in " \t\n\"'\\><~|&;$*?#()`"):
        return arg
    escaped = "".join("\\" + c if c in '"`$\\' else c for c in arg)
    return f'"{escaped}"'


def desktop_entry(command: str) -> str:
    """The shipped .desktop file with its Exec line pointing at ``command``."""
    lines = (RESOURCES / DESKTOP_NAME).read_text(encoding="utf-8").splitlines()
    out = [f"Exec={command} %f" if line.startswith("Exec=") else line for line in lines]
    return "\n".join(out) + "\n"


def _unsupported() -> list[str] | None:
    if sys.platform in ("win32", "darwin"):
        return [
            "--register sets up Linux desktops only. For Windows and macOS, see "
            "docs/desktop-integration.md."
        ]
    return None


def register(home: Path | None = None, run_tools: bool = True) -> list[str]:
    """Install the desktop entry, file type and icons for the current user."""
    refused = _unsupported()
    if refused:
        return refused
    files = installed_files(home)
    for path in files.values():
        path.parent.mkdir(parents=True, exist_ok=True)
    files["desktop"].write_text(desktop_entry(launcher_command()), encoding="utf-8")
    shutil.copyfile(RESOURCES / MIME_NAME, files["mime"])
    shutil.copyfile(RESOURCES / "plaincount.svg", files["icon"])
    shutil.copyfile(RESOURCES / "plaincount.svg", files["file_icon"])
    messages = [f"Installed {path}" for path in files.values()]
    if run_tools:
        messages += _refresh(files)
    messages.append("Double-clicking a .plaincount file now opens it in Plaincount.")
    return messages


def unregister(home: Path | None = None, run_tools: bool = True) -> list[str]:
    """Remove what :func:`register` installed; files that are not there are skipped."""
    refused = _unsupported()
    if refused:
        return refused
    files = installed_files(home)
    messages = []
    for path in files.values():
        if path.exists():
            path.unlink()
            messages.append(f"Removed {path}")
    if not messages:
        messages.append("Plaincount was not registered for this user; nothing to remove.")
    elif run_tools:
        messages += _refresh(files)
    return messages


def _refresh(files: dict[str, Path]) -> list[str]:
    out = []
    for tool, folder in (
        ("update-mime-database", files["mime"].parent.parent),
        ("update-desktop-database", files["desktop"].parent),
    ):
        exe = shutil.which(tool)
        if exe is None:
            out.append(f"{tool} is not installed; your desktop will notice the change later.")
            continue
        done = subprocess.run([exe, str(folder)], capture_output=True, text=True, check=False)
        if done.returncode != 0:
            out.append(f"{tool} reported a problem: {done.stderr.strip() or done.returncode}")
        else:
            out.append(f"Refreshed {folder} with {tool}")
    return out
