"""Benchmark: the cleaning window at 100,000 rows, next to plain-pandas baselines.

On the demo survey tiled to 100,000 respondents (see ``bench_cleaning.big_frame``):

- grid: build the data grid's table model and read one screen of cells (40 rows x 12
  columns), against the baseline of turning the frame into text once (``astype(str)``),
  which is what a model holding per-cell objects would pay up front;
- decision: one correction made through the checks-and-flags view (reason, button), with
  the flag list refreshed and the data grid's model updated for the changed column, against
  the plain-pandas baseline of ``bench_cleaning`` (copy the column, set the cell, recompute
  the range and Tukey-fence masks).

Run: ``QT_QPA_PLATFORM=offscreen /work/venv/bin/python tests/benchmarks/bench_cleaning_view.py``
(or with pytest). Prints timings and ratios; asserts nothing about time.
"""

from __future__ import annotations

import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from tests.benchmarks.bench_cleaning import N_ROWS, big_frame  # noqa: E402

REPEATS = 7


def run() -> dict[str, float]:
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance() or QApplication([])
    from core.codebook import Codebook
    from core.demo import CODEBOOK_SETTINGS, expected_codebook
    from core.ledger import Action
    from core.project import Project
    from core.working import working_data
    from desktopapp.main_window import MainWindow
    from desktopapp.models.data_grid import DataGridModel
    from desktopapp.project_tree import NodeType

    frame = big_frame()
    book, _ = Codebook.from_json(expected_codebook()).applied(CODEBOOK_SETTINGS)
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "bench.plaincount"
        with Project.create(path) as project:
            inst = project.add_instrument("Participant survey", book)
            project.add_wave(inst.id, "2026", "big.xlsx", b"x", frame)

        window = MainWindow(synchronous=True)
        window.resize(1360, 860)
        window.show()
        window.open_project(path)
        wave_id = window.project.waves()[0].id
        working = working_data(window.project, wave_id)

        def grid(_i: int) -> object:
            model = DataGridModel(working)
            return [model.data(model.index(r, c)) for r in range(5000, 5040) for c in range(12)]

        grid_times = [_time(grid, i) for i in range(REPEATS)]
        base_grid = [_time(lambda _i: working.values.astype(str), i) for i in range(3)]

        t = time.perf_counter()
        window.show_node(NodeType.FLAGS, wave_id=wave_id)
        view = window.view
        first_view = time.perf_counter() - t
        window.show_node(NodeType.DATA, wave_id=wave_id)
        grid_view = window.view
        rows = np.random.default_rng(1).choice(N_ROWS, REPEATS, replace=False)

        # Decisions made in the flags view; the grid's model follows the same change.
        window.show_node(NodeType.FLAGS, wave_id=wave_id)
        view = window.view
        grid_model = DataGridModel(working_data(window.project, wave_id))

        def decision(i: int) -> object:
            from core.cleaning import edit_cell

            row = int(rows[i])
            _, changes = edit_cell(
                window.project, wave_id, row, "credits_term", "benchmark", value=str(10 + i % 5)
            )
            # What the grid view does on the same change: new working data, one column.
            grid_model.set_working(working_data(window.project, wave_id), changes.variables)
            return grid_model.data(grid_model.index(row, grid_model.column_of("credits_term")))

        per_decision = [_time(decision, i) for i in range(REPEATS)]
        flags_shown = len(view.model.flags)

        # One decision through the view's own buttons (reason field, Set to missing).
        flag = next(f for f in view.model.shown_flags() if len(f.variables) == 1)
        view.select_flag(flag)
        view.reason_edit.setText("benchmark")
        t = time.perf_counter()
        view.decide(Action.SET_MISSING)
        app.processEvents()
        button_decision = time.perf_counter() - t
        del grid_view
        window.close()

    raw = frame["credits_term"].astype(float)

    def baseline(i: int) -> object:
        col = raw.copy()
        col.iat[int(rows[i])] = 10 + i % 5
        x = col.to_numpy()
        q1, q3 = np.nanquantile(x, [0.25, 0.75])
        iqr = q3 - q1
        return np.flatnonzero((x < q1 - 1.5 * iqr) | (x > q3 + 1.5 * iqr) | (x < 0) | (x > 24))

    base = statistics.median(_time(baseline, i) for i in range(REPEATS))
    g, bg = statistics.median(grid_times), statistics.median(base_grid)
    d = statistics.median(per_decision)
    return {
        "rows": N_ROWS,
        "grid model + one screen of cells ms": g * 1000,
        "baseline: frame to text once ms": bg * 1000,
        "grid ratio to baseline": g / bg,
        "flags view opened (first check run) s": first_view,
        "one decision + flag refresh + grid column ms": d * 1000,
        "plain pandas baseline ms": base * 1000,
        "decision ratio to baseline": d / base,
        "one decision through the view's button ms": button_decision * 1000,
        "flags listed": flags_shown,
    }


def _time(fn, i: int) -> float:  # noqa: ANN001
    t = time.perf_counter()
    fn(i)
    return time.perf_counter() - t


def test_bench_cleaning_view() -> None:
    for key, value in run().items():
        print(f"{key}: {value:.3f}" if isinstance(value, float) else f"{key}: {value}")


if __name__ == "__main__":
    test_bench_cleaning_view()
