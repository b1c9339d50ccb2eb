"""Benchmark: missing-data diagnostics and matrix chart on a large wave, as ratios.

Run: ``/work/venv/bin/python tests/benchmarks/bench_missing.py [ROWS]``. Each figure is the
time of our function divided by a plain-pandas or plain-matplotlib baseline measured in the
same run (counting blanks per column; drawing the raw missing mask with imshow).
"""

from __future__ import annotations

import sys
import time

import numpy as np
import pandas as pd
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from core.charts_missing import draw_missing_matrix
from core.codebook import Codebook, Variable
from core.decoding import decode_table
from core.kinds import Kind
from core.missing import dropoff, item_summary, pattern_scan
from core.working import WorkingData, respondent_ids


def build(n: int, k: int = 60, seed: int = 1) -> WorkingData:
    rng = np.random.default_rng(seed)
    levels = ("1", "2", "3", "4", "5")
    cols: dict[str, object] = {
        "g1": rng.choice(["A", "B", "C"], n),
        "g2": rng.choice(["X", "Y"], n),
    }
    for j in range(k):
        vals = rng.choice(levels, n).astype(object)
        vals[rng.random(n) < 0.02 + 0.002 * j] = None
        cols[f"q{j}"] = vals
    raw = pd.DataFrame(cols)
    book = Codebook(
        [
            Variable("g1", kind=Kind.CATEGORICAL, levels=("A", "B", "C")),
            Variable("g2", kind=Kind.CATEGORICAL, levels=("X", "Y")),
        ]
        + [Variable(f"q{j}", kind=Kind.LIKERT, levels=levels) for j in range(k)]
    )
    values, reasons = decode_table(book, raw)
    return WorkingData(1, book, values, reasons, respondent_ids(book, raw)), raw


def timed(func) -> float:  # noqa: ANN001
    best = float("inf")
    for _ in range(3):
        start = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - start)
    return best


def main(n: int) -> None:
    working, raw = build(n)
    base_count = timed(lambda: raw.isna().sum())

    def base_draw() -> None:
        fig = Figure(figsize=(12.8, 7.2), dpi=150)
        fig.add_subplot(1, 1, 1).imshow(raw.isna().to_numpy(), aspect="auto")
        FigureCanvasAgg(fig).draw()

    def ours_draw() -> None:
        fig = Figure(figsize=(12.8, 7.2), dpi=150)
        draw_missing_matrix(working, fig)
        FigureCanvasAgg(fig).draw()

    base_plot = timed(base_draw)
    rows = [
        ("item_summary", timed(lambda: item_summary(working)), base_count),
        ("dropoff", timed(lambda: dropoff(working)), base_count),
        ("pattern_scan (60 items x 2 groupings)", timed(lambda: pattern_scan(working)), base_count),
        ("missing matrix chart", timed(ours_draw), base_plot),
    ]
    print(f"{n} respondents x 62 items")
    for name, ours, base in rows:
        print(f"  {name:40s} {ours:8.3f} s  = {ours / base:7.1f} x baseline ({base:.3f} s)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 20_000)
