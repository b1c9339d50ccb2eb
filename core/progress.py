"""Progress and cancellation as plain objects, so long core work can run under any front end."""

from __future__ import annotations

import threading
from collections.abc import Callable
from dataclasses import dataclass, field


class Cancelled(Exception):
    """Raised inside long work when the user pressed Cancel; the work leaves no trace."""


@dataclass
class Progress:
    """Shared between the worker doing long work and whoever shows it.

    The worker calls :meth:`update`; the viewer reads ``done``, ``total`` and ``label`` or
    passes ``on_update``. :meth:`cancel` may be called from any thread; the worker notices
    at its next :meth:`update` or :meth:`check` and raises :class:`Cancelled`.
    """

    on_update: Callable[[int, int, str], None] | None = None
    done: int = 0
    total: int = 0
    label: str = ""
    _cancel: threading.Event = field(default_factory=threading.Event, repr=False)

    def update(self, done: int, total: int, label: str = "") -> None:
        self.done, self.total = done, total
        if label:
            self.label = label
        if self.on_update is not None:
            self.on_update(done, total, self.label)
        self.check()

    def cancel(self) -> None:
        self._cancel.set()

    @property
    def cancelled(self) -> bool:
        return self._cancel.is_set()

    def check(self) -> None:
        if self._cancel.is_set():
            raise Cancelled("Cancelled by the user.")


def ensure_progress(progress: Progress | None) -> Progress:
    return progress if progress is not None else Progress()
