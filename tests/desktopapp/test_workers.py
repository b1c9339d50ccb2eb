"""The background-work helper: callbacks on the GUI thread, one writer, dropped stale results."""

from __future__ import annotations

import threading
import time

from PySide6.QtCore import Qt, QThread
from PySide6.QtWidgets import QApplication, QProgressDialog, QPushButton, QWidget

from core.errors import PlaincountError
from desktopapp.workers import BackgroundRunner


def test_synchronous_mode_runs_at_once(qtbot):
    runner = BackgroundRunner(None, synchronous=True)
    seen = []
    job = runner.run(lambda p: 6 * 7, on_success=seen.append)
    assert seen == [42]
    assert job.result == 42 and not job.running


def test_result_comes_back_on_the_gui_thread(qtbot):
    runner = BackgroundRunner(None)
    threads = {}

    def work(_p):
        threads["work"] = threading.get_ident()
        return "done"

    def on_success(result):
        threads["callback_is_gui"] = QThread.currentThread() is QApplication.instance().thread()
        threads["result"] = result

    job = runner.run(work, on_success=on_success)
    with qtbot.waitSignal(job.finished, timeout=5000):
        pass
    assert threads["result"] == "done"
    assert threads["work"] != threading.get_ident()
    assert threads["callback_is_gui"] is True


def test_a_newer_request_drops_the_older_result(qtbot):
    runner = BackgroundRunner(None)
    seen = []

    def slow(p):
        time.sleep(0.3)
        return "old"

    first = runner.run(slow, on_success=seen.append, key="preview", show_progress=False)
    second = runner.run(lambda p: "new", on_success=seen.append, key="preview")
    qtbot.waitUntil(lambda: not first.running and not second.running, timeout=5000)
    assert seen == ["new"]
    assert first.cancelled  # the older request was also asked to stop


def test_writes_run_one_at_a_time_in_order(qtbot):
    runner = BackgroundRunner(None)
    spans = []

    def write(tag):
        def work(_p):
            start = time.monotonic()
            time.sleep(0.05)
            spans.append((tag, start, time.monotonic()))

        return work

    jobs = [runner.run(write(i), writes=True) for i in range(4)]
    qtbot.waitUntil(lambda: not any(j.running for j in jobs), timeout=5000)
    assert [s[0] for s in spans] == [0, 1, 2, 3]
    for (_, _, end), (_, start, _) in zip(spans, spans[1:]):
        assert start >= end  # no two writes overlapped


def test_failures_and_cancellation_reach_their_callbacks(qtbot):
    runner = BackgroundRunner(None, synchronous=True)
    failures, cancels = [], []

    def fail(_p):
        raise PlaincountError("The file is empty.")

    runner.run(fail, on_failure=failures.append)
    assert [str(e) for e in failures] == ["The file is empty."]

    def cancelled(p):
        p.cancel()
        p.update(1, 2)  # raises Cancelled, as long core work does at its next step

    runner.run(cancelled, on_cancelled=lambda: cancels.append(True), on_failure=failures.append)
    assert cancels == [True] and len(failures) == 1


def test_long_work_shows_progress_with_a_working_cancel_button(qtbot):
    parent = QWidget()
    qtbot.addWidget(parent)
    parent.show()
    runner = BackgroundRunner(parent)
    outcome = []

    def long_work(p):
        for i in range(200):
            p.update(i, 200, "Counting")
            time.sleep(0.02)
        return "finished"

    job = runner.run(
        long_work, on_success=outcome.append, on_cancelled=lambda: outcome.append("cancelled")
    )
    qtbot.waitUntil(
        lambda: parent.findChild(QProgressDialog, "workProgressDialog") is not None, timeout=3000
    )
    dialog = parent.findChild(QProgressDialog, "workProgressDialog")
    assert dialog.labelText() == "Counting"
    qtbot.mouseClick(dialog.findChild(QPushButton), Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: not job.running, timeout=5000)
    assert outcome == ["cancelled"]


def test_short_work_shows_no_progress(qtbot):
    parent = QWidget()
    qtbot.addWidget(parent)
    runner = BackgroundRunner(parent)
    job = runner.run(lambda p: time.sleep(0.05))
    qtbot.waitUntil(lambda: not job.running, timeout=3000)
    assert parent.findChild(QProgressDialog) is None


def test_results_for_a_deleted_view_are_dropped(qtbot):
    import shiboken6
    from PySide6.QtWidgets import QLabel

    runner = BackgroundRunner(None)
    label = QLabel()
    release = threading.Event()
    job = runner.run(lambda p: release.wait(5) and "late", on_success=label.setText)
    shiboken6.delete(label)  # the view was closed while the work ran
    release.set()
    qtbot.waitUntil(lambda: not job.running, timeout=5000)
    assert job.result == "late"  # finished, and no call into the deleted widget
