"""Codebook files from the window: export one to JSON, apply one from JSON.

The file is the same JSON list ``plaincount-cli codebook --json`` prints (docs/cli-json.md),
so next year's project or another instrument can reuse the work done on this one. Applying
changes only the keys each entry gives, of the variables both codebooks share
(:meth:`core.codebook.Codebook.applied`), as one undoable step through
``Project.set_codebook``; the evaluator is told in plain words what changed and which names
the file has that this codebook does not.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from PySide6.QtWidgets import QFileDialog, QMessageBox, QWidget

from core.codebook import Codebook
from core.errors import CodebookError

JSON_FILTER = "Codebook files (*.json);;All files (*)"


@dataclass(frozen=True)
class ApplyReport:
    """What applying a codebook file did."""

    file_name: str
    changed: tuple[str, ...]
    not_found: tuple[str, ...]

    def message(self) -> str:
        """The outcome in plain words, for a message box."""
        lines = []
        n = len(self.changed)
        if n:
            lines.append(
                f"Applied {self.file_name}: {n} entr{'y' if n == 1 else 'ies'} changed "
                f"({_names(self.changed)}). Edit ▸ Undo takes the whole file back."
            )
        else:
            lines.append(
                f"Applied {self.file_name}: nothing changed; every entry it names already "
                "reads the same in this codebook."
            )
        if self.not_found:
            k = len(self.not_found)
            lines.append(
                f"{k} name{'' if k == 1 else 's'} in the file {'is' if k == 1 else 'are'} not "
                f"in this codebook and {'was' if k == 1 else 'were'} left alone: "
                f"{_names(self.not_found)}."
            )
        return "\n\n".join(lines)


def _names(names: tuple[str, ...], most: int = 12) -> str:
    shown = ", ".join(names[:most])
    return shown + (f" and {len(names) - most} more" if len(names) > most else "")


def safe_file_name(text: str) -> str:
    """A file name made from an instrument name: letters, digits, '-' and '_' only."""
    return re.sub(r"[^A-Za-z0-9_-]+", "_", text).strip("_").lower() or "codebook"


def export_codebook(project: Any, instrument_id: int, path: str | Path) -> Path:
    """Write the instrument's codebook to ``path`` as JSON (UTF-8)."""
    path = Path(path)
    text = project.codebook(instrument_id).dumps()
    try:
        path.write_text(text + "\n", encoding="utf-8")
    except OSError as exc:
        raise CodebookError(
            f"The codebook could not be saved as {path.name}: {exc.strerror or exc}."
        ) from None
    return path


def read_codebook_file(path: str | Path) -> list[dict[str, Any]]:
    """The entries of a codebook file, or a :class:`CodebookError` saying what is wrong."""
    path = Path(path)
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except OSError as exc:
        raise CodebookError(f"{path.name} could not be read: {exc.strerror or exc}.") from None
    except UnicodeDecodeError:
        raise CodebookError(
            f"{path.name} is not a codebook file: it is not text (a codebook file is JSON "
            "saved as UTF-8)."
        ) from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise CodebookError(
            f"{path.name} is not a valid codebook file: {exc.msg} at line {exc.lineno}."
        ) from None
    if not isinstance(data, list):
        raise CodebookError(
            f"{path.name} is not a codebook file: it must hold a list of variable entries."
        )
    return data


def apply_codebook_file(project: Any, instrument_id: int, path: str | Path) -> ApplyReport:
    """Apply a codebook file to the instrument's codebook as one undoable step.

    Nothing is stored when the file is bad: every entry is checked before the codebook
    changes, so an error part-way leaves the codebook as it was.
    """
    path = Path(path)
    entries = read_codebook_file(path)
    before: Codebook = project.codebook(instrument_id)
    after, changed = before.applied(entries)
    not_found = tuple(
        dict.fromkeys(
            str(e["name"]) for e in entries if isinstance(e, dict) and e["name"] not in before
        )
    )
    if changed:
        project.set_codebook(instrument_id, after, label=f"Apply the codebook file {path.name}")
    return ApplyReport(path.name, tuple(changed), not_found)


class CodebookFileActions:
    """The two actions as the codebook view offers them: file dialogs, work, a message."""

    def __init__(self, parent: QWidget, context: Any, instrument_id: int) -> None:
        self.parent = parent
        self.context = context
        self.instrument_id = instrument_id
        self.last_message = ""
        self.last_box: QMessageBox | None = None

    # File dialogs are methods, so tests can give a path without a native dialog.
    def ask_export_path(self, suggested: str) -> str:
        path, _ = QFileDialog.getSaveFileName(
            self.parent, "Export the codebook", suggested, JSON_FILTER
        )
        return path

    def ask_apply_path(self) -> str:
        path, _ = QFileDialog.getOpenFileName(
            self.parent, "Apply a codebook file", str(self._folder()), JSON_FILTER
        )
        return path

    def _folder(self) -> Path:
        return Path(self.context.project.path).parent

    def export(self) -> None:
        project = self.context.project
        name = project.instrument(self.instrument_id).name
        suggested = self._folder() / f"{safe_file_name(name)}_codebook.json"
        path = self.ask_export_path(str(suggested))
        if not path:
            return
        if not path.lower().endswith(".json"):
            path += ".json"
        try:
            saved = export_codebook(project, self.instrument_id, path)
        except CodebookError as exc:
            self._show(str(exc), warning=True)
            return
        n = len(project.codebook(self.instrument_id))
        self._show(
            f"Saved the codebook of {name} ({n} variables) as {saved.name}. Apply it to "
            "another project or instrument with “Apply a codebook file…”."
        )

    def apply(self) -> None:
        path = self.ask_apply_path()
        if not path:
            return
        project, inst = self.context.project, self.instrument_id
        self.context.runner.run(
            lambda _progress: apply_codebook_file(project, inst, path),
            on_success=lambda report: self._show(report.message()),
            on_failure=self._on_failed,
            writes=True,
            label="Apply a codebook file",
        )

    def _on_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for

        text, details = message_for(exc)
        if details:
            from desktopapp.errors import show_error

            self.last_message = text
            show_error(self.parent, exc)
            return
        self._show(text, warning=True)

    def _show(self, text: str, warning: bool = False) -> None:
        self.last_message = text
        box = QMessageBox(self.parent)
        box.setObjectName("codebookFileMessage")
        box.setIcon(QMessageBox.Icon.Warning if warning else QMessageBox.Icon.Information)
        box.setWindowTitle("Codebook file")
        box.setText(text)
        box.setStandardButtons(QMessageBox.StandardButton.Ok)
        box.open()  # window-modal, not blocking
        self.last_box = box
