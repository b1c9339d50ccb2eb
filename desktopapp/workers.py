"""The one helper for background work: run a core call on a worker, report back on the GUI thread.

Practice followed here:

* take inputs on the GUI thread, compute on a worker, apply the result on the GUI thread;
* everything that writes the project file runs on one single worker thread, in the order it
  was asked for, so two writes never interleave;
* progress and cancel are the core's plain :class:`core.progress.Progress` object; this
  module only polls it, and shows nothing for work that ends within about half a second;
* a result overtaken by a newer request with the same ``key`` is dropped;
* ``synchronous=True`` runs everything at once on the calling thread (tests, screenshots).

Widgets are never touched from the worker: callbacks run on the GUI thread through queued
signals.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import (
    QCoreApplication,
    QEvent,
    QObject,
    QRunnable,
    Qt,
    QThreadPool,
    QTimer,
    Signal,
)
from PySide6.QtWidgets import QProgressDialog, QWidget

from core.progress import Cancelled, Progress

QUIET_MS = 500  # work shorter than this shows no progress at all
POLL_MS = 100

_ids = itertools.count(1)


class Job(QObject):
    """One request. Emits ``progress_changed`` while running and ``finished`` once."""

    progress_changed = Signal(int, int, str)
    finished = Signal()

    def __init__(self, label: str, key: str | None) -> None:
        super().__init__()
        self.id = next(_ids)
        self.label = label
        self.key = key
        self.progress = Progress()
        self.running = True
        self.result: Any = None
        self.error: BaseException | None = None

    def cancel(self) -> None:
        """Ask the work to stop at its next progress update; safe from the GUI thread."""
        self.progress.cancel()

    @property
    def cancelled(self) -> bool:
        return self.progress.cancelled


class _Emitter(QObject):
    # Lives on the GUI thread, so emitting from the worker queues the call to the GUI thread.
    done = Signal(int, bool, object)


class _Runnable(QRunnable):
    def __init__(
        self, job_id: int, fn: Callable[[Progress], Any], progress: Progress, emitter: _Emitter
    ) -> None:
        super().__init__()
        self._job_id = job_id
        self._fn = fn
        self._progress = progress
        self._emitter = emitter
        self.setAutoDelete(True)

    def run(self) -> None:
        try:
            result = self._fn(self._progress)
        except BaseException as exc:  # noqa: BLE001 - every failure goes back to the GUI
            self._emitter.done.emit(self._job_id, False, exc)
            return
        self._emitter.done.emit(self._job_id, True, result)


class BackgroundRunner(QObject):
    """Runs core calls off the GUI thread. One per main window.

    Parameters
    ----------
    parent_widget
        Where progress dialogs and default error messages appear.
    synchronous
        Run every request immediately on the calling thread (tests, screenshots).
    """

    busy_changed = Signal(bool)
    writing_changed = Signal(bool)  # True while a project write is queued or running

    def __init__(self, parent_widget: QWidget | None = None, synchronous: bool = False) -> None:
        super().__init__(parent_widget)
        self.parent_widget = parent_widget
        self.synchronous = synchronous
        self._writer = QThreadPool(self)
        self._writer.setMaxThreadCount(1)  # one writer: project writes never interleave
        self._readers = QThreadPool(self)
        self._readers.setMaxThreadCount(2)
        self._emitter = _Emitter()
        self._emitter.done.connect(self._on_runnable_done, Qt.ConnectionType.QueuedConnection)
        self._jobs: dict[int, tuple[Job, dict[str, Any]]] = {}
        self._writes = 0
        self._latest: dict[str, int] = {}

    # ------------------------------------------------------------------ public
    def run(
        self,
        fn: Callable[[Progress], Any],
        *,
        on_success: Callable[[Any], None] | None = None,
        on_failure: Callable[[BaseException], None] | None = None,
        on_cancelled: Callable[[], None] | None = None,
        writes: bool = False,
        key: str | None = None,
        label: str = "Working…",
        show_progress: bool = True,
    ) -> Job:
        """Run ``fn(progress)`` in the background and call back on the GUI thread.

        ``writes`` puts the call on the single writer thread. A newer request with the same
        ``key`` makes this one's result be dropped (and asks it to stop). ``show_progress``
        shows a progress dialog with Cancel once the work has taken longer than half a
        second; pass False when the caller shows progress itself (``Job.progress_changed``).
        When ``on_failure`` is not given, errors are shown in a message box.
        """
        job = Job(label, key)
        callbacks = {
            "writes": writes,
            "on_success": on_success,
            "on_failure": on_failure,
            "on_cancelled": on_cancelled,
            "show_progress": show_progress,
            "dialog": None,
        }
        if key is not None:
            previous = self._latest.get(key)
            if previous in self._jobs:
                self._jobs[previous][0].cancel()
            self._latest[key] = job.id
        if self.synchronous:
            self._jobs[job.id] = (job, callbacks)
            try:
                result = fn(job.progress)
            except BaseException as exc:  # noqa: BLE001 - handed to the failure callback
                self._finish(job.id, False, exc)
            else:
                self._finish(job.id, True, result)
            return job
        self._jobs[job.id] = (job, callbacks)
        timer = QTimer(job)
        timer.setInterval(POLL_MS)
        timer.timeout.connect(lambda j=job: self._poll(j))
        timer.start()
        callbacks["timer"] = timer
        callbacks["started"] = _monotonic_ms()
        if writes:
            self._writes += 1
            if self._writes == 1:
                self.writing_changed.emit(True)
        pool = self._writer if writes else self._readers
        pool.start(_Runnable(job.id, fn, job.progress, self._emitter))
        if len(self._jobs) == 1:
            self.busy_changed.emit(True)
        return job

    @property
    def busy(self) -> bool:
        return bool(self._jobs)

    @property
    def writing(self) -> bool:
        return self._writes > 0

    def wait(self, msecs: int = -1) -> bool:
        """Block until every queued call has finished (before closing a project)."""
        ok = self._writer.waitForDone(msecs) and self._readers.waitForDone(msecs)
        # Deliver the finished calls' queued results now, while their receivers still exist.
        QCoreApplication.sendPostedEvents(self, QEvent.Type.MetaCall)
        return bool(ok)

    def cancel_all(self) -> None:
        for job, _ in list(self._jobs.values()):
            job.cancel()

    # ------------------------------------------------------------------ internals
    def _poll(self, job: Job) -> None:
        entry = self._jobs.get(job.id)
        if entry is None:
            return
        p = job.progress
        job.progress_changed.emit(p.done, p.total, p.label or job.label)
        callbacks = entry[1]
        if not callbacks["show_progress"]:
            return
        dialog: QProgressDialog | None = callbacks["dialog"]
        if dialog is None and _monotonic_ms() - callbacks["started"] >= QUIET_MS:
            dialog = QProgressDialog(job.label, "Cancel", 0, 0, self.parent_widget)
            dialog.setObjectName("workProgressDialog")
            dialog.setWindowTitle("Plaincount")
            dialog.setWindowModality(Qt.WindowModality.WindowModal)
            dialog.setMinimumDuration(0)
            dialog.setAutoClose(False)
            dialog.setAutoReset(False)
            dialog.canceled.connect(job.cancel)
            dialog.show()
            callbacks["dialog"] = dialog
        if dialog is not None:
            if p.total > 0:
                dialog.setMaximum(p.total)
                dialog.setValue(min(p.done, p.total))
            if p.label:
                dialog.setLabelText(p.label)

    def _on_runnable_done(self, job_id: int, ok: bool, payload: object) -> None:
        self._finish(job_id, ok, payload)

    def _finish(self, job_id: int, ok: bool, payload: Any) -> None:
        entry = self._jobs.pop(job_id, None)
        if entry is None:
            return
        job, callbacks = entry
        if callbacks["writes"] and not self.synchronous:
            self._writes -= 1
            if self._writes == 0:
                self.writing_changed.emit(False)
        timer = callbacks.get("timer")
        if timer is not None:
            timer.stop()
        dialog = callbacks.get("dialog")
        if dialog is not None:
            dialog.close()
            dialog.deleteLater()
        job.running = False
        if ok:
            job.result = payload
        else:
            job.error = payload
        overtaken = job.key is not None and self._latest.get(job.key) != job.id
        if job.key is not None and not overtaken:
            self._latest.pop(job.key, None)
        try:
            if overtaken:
                return
            for name in ("on_success", "on_failure", "on_cancelled"):
                if not _receiver_alive(callbacks[name]):
                    return  # the view that asked was closed meanwhile; nobody to tell
            if ok:
                if callbacks["on_success"] is not None:
                    callbacks["on_success"](payload)
            elif isinstance(payload, Cancelled):
                if callbacks["on_cancelled"] is not None:
                    callbacks["on_cancelled"]()
            elif callbacks["on_failure"] is not None:
                callbacks["on_failure"](payload)
            else:
                from desktopapp.errors import show_error

                show_error(self.parent_widget, payload)
        finally:
            job.finished.emit()
            if not self._jobs:
                self.busy_changed.emit(False)


def _receiver_alive(callback: Callable[..., Any] | None) -> bool:
    """False when ``callback`` is a method of a Qt object that has been deleted."""
    owner = getattr(callback, "__self__", None)
    if owner is None or not isinstance(owner, QObject):
        return True
    import shiboken6

    return bool(shiboken6.isValid(owner))


def _monotonic_ms() -> float:
    import time

    return time.monotonic() * 1000.0
