"""Drawing the chart images of an export, in helper processes when there are many.

Drawing a chart (layout, text, PNG and SVG) costs far more than computing its table, and
matplotlib draws on one core. An outline with many charts is therefore drawn by a few helper
processes (``python -m core.export.draw_worker``) started at the beginning of the export, so
they start up while the tables are being computed.

They are plain child processes fed over a pipe, not a ``multiprocessing`` pool: a pool that
spawns workers re-runs the caller's main script, which breaks any script without a
``__main__`` guard, and forking is unsafe in the window, where the export runs on a worker
thread. If a helper cannot start or stops, its charts are drawn here instead: helpers only
ever make the export faster, never make it fail.
"""

from __future__ import annotations

import contextlib
import os
import pickle
import queue
import subprocess
import sys
import threading
from typing import IO

from core.export.clipboard import chart_images
from core.export.content import Entry
from core.progress import Progress
from core.tables.result import TableResult

PARALLEL_FROM = 6  # fewer charts are drawn here: starting a helper costs about a second
MAX_WORKERS = 4


def entry_images(
    result: TableResult, chart_type: str | None, *, png: bool, svg: bool, picture: bool
) -> tuple[bytes | None, bytes | None, bytes | None]:
    """(PNG file, SVG file, document picture) of one chart; None for what is not asked.

    The PNG and SVG files stand alone and keep the chart's title and notes; the picture
    for documents and the workbook leaves them out, because the document prints them.
    """
    png_file = svg_file = plain = None
    if png or svg:
        png_file, svg_file = chart_images(result, chart_type, svg=svg)
        png_file = png_file if png else None
    if picture:
        plain, _ = chart_images(result, chart_type, svg=False, caption=False)
    return png_file, svg_file, plain


class ChartDrawer:
    """Draws each submitted entry's chart; :meth:`finish` waits for all of them.

    Parameters
    ----------
    n_charts
        How many charts will be submitted (decides whether helpers are worth starting).
    svg
        Also make the SVG of each chart.
    png
        Make the PNG file of each chart (with its caption).
    picture
        Make the picture of each chart for documents (without its caption).
    workers
        Number of helper processes; None chooses from the number of charts and cores,
        1 draws everything in this process.
    """

    def __init__(
        self,
        n_charts: int,
        svg: bool,
        workers: int | None = None,
        *,
        png: bool = True,
        picture: bool = True,
    ) -> None:
        self.options = {"png": png, "svg": svg, "picture": picture}
        if workers is None:
            workers = min(os.cpu_count() or 1, MAX_WORKERS) if n_charts >= PARALLEL_FROM else 1
        workers = max(1, min(workers, n_charts))
        if getattr(sys, "frozen", False):  # a packaged app has no `python -m` to start
            workers = 1
        self._jobs: queue.Queue[Entry | None] = queue.Queue()
        self._leftover: list[Entry] = []  # charts a helper could not draw: drawn here
        self._lock = threading.Lock()
        self._procs: list[subprocess.Popen[bytes]] = []
        self._threads: list[threading.Thread] = []
        if workers > 1:
            for _ in range(workers):
                self._start_helper()

    # ------------------------------------------------------------ public
    def submit(self, entry: Entry) -> None:
        if entry.chart_type is None:
            return
        if not self._threads:
            self._draw_here(entry)
        else:
            self._jobs.put(entry)

    def finish(self, progress: Progress) -> None:
        """Wait for every chart, noticing Cancel while waiting."""
        for _ in self._threads:
            self._jobs.put(None)  # one stop sign per helper
        for thread in self._threads:
            while thread.is_alive():
                thread.join(timeout=0.2)
                progress.check()
        self._threads.clear()
        self._drain()  # jobs no helper was left to take
        for entry in self._leftover:
            progress.check()
            self._draw_here(entry)
        self._leftover.clear()

    def close(self) -> None:
        """Stop the helpers (after Cancel or an error, charts not yet drawn are dropped)."""
        for proc in self._procs:
            if proc.poll() is None:
                proc.kill()
            proc.wait()
            for pipe in (proc.stdin, proc.stdout):
                if pipe is not None:
                    with contextlib.suppress(OSError):  # a helper that died leaves a broken pipe
                        pipe.close()
        self._procs.clear()

    def __enter__(self) -> ChartDrawer:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    # ------------------------------------------------------------ internals
    def _draw_here(self, entry: Entry) -> None:
        entry.png, entry.svg, entry.picture = entry_images(
            entry.result, entry.chart_type, **self.options
        )

    def _start_helper(self) -> None:
        try:
            proc = subprocess.Popen(
                [sys.executable, "-m", "core.export.draw_worker"],
                stdin=subprocess.PIPE,
                stdout=subprocess.PIPE,
                stderr=subprocess.DEVNULL,
            )
        except OSError:
            return  # no helper: everything is drawn here
        self._procs.append(proc)
        thread = threading.Thread(target=self._serve, args=(proc,), daemon=True)
        self._threads.append(thread)
        thread.start()

    def _serve(self, proc: subprocess.Popen[bytes]) -> None:
        """Hand jobs to one helper, one at a time, until the stop sign."""
        stdin: IO[bytes] = proc.stdin  # type: ignore[assignment]
        stdout: IO[bytes] = proc.stdout  # type: ignore[assignment]
        while True:
            entry = self._jobs.get()
            if entry is None:
                break
            try:
                pickle.dump((entry.result, entry.chart_type, self.options), stdin)
                stdin.flush()
                ok, payload = pickle.load(stdout)
            except (OSError, EOFError, pickle.PickleError, ValueError):
                # The helper is gone: this chart and every later one are drawn here.
                with self._lock:
                    self._leftover.append(entry)
                self._drain()
                return
            if ok:
                entry.png, entry.svg, entry.picture = payload
            else:  # drawn again here, so its error reaches the caller as it would here
                with self._lock:
                    self._leftover.append(entry)
        with contextlib.suppress(OSError):
            stdin.close()

    def _drain(self) -> None:
        """Move queued jobs to the leftovers, keeping stop signs for the other helpers."""
        stops = 0
        while True:
            try:
                entry = self._jobs.get_nowait()
            except queue.Empty:
                break
            if entry is None:
                stops += 1
            else:
                with self._lock:
                    self._leftover.append(entry)
        for _ in range(stops):
            self._jobs.put(None)
