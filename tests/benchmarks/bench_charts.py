"""Benchmark: charts against bare matplotlib drawing the same bars, as ratios.

Run: ``/work/venv/bin/python tests/benchmarks/bench_charts.py``. Two workloads, each timed
for our chart functions and for a bare-matplotlib baseline in the same run:

- one clustered-column chart of a cross-tabulation, rendered to a 1920 x 1080 PNG;
- a gallery of 50 small charts (an 8-item battery as diverging bars would be one; here
  50 cross-tabulations as clustered columns, 480 x 320 px each), as the exploration gallery
  draws them.

The baseline draws the same rectangles with ``Axes.bar`` on a plain ``Figure`` and renders it
with the Agg canvas: no title wrapping, labels, legend, notes or layout engine. The ratio is
what slide-ready styling costs.
"""

from __future__ import annotations

import io
import sys
import time
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from core import charts  # noqa: E402
from core.tables.result import TableResult  # noqa: E402
from core.tables.spec import TableSpec  # noqa: E402

LEVELS = ["Strongly disagree", "Disagree", "Neutral", "Agree", "Strongly agree"]
GROUPS = ["Electrical", "HVAC", "Welding", "Solar install"]


def crosstab(seed: int) -> TableResult:
    rng = np.random.default_rng(seed)
    counts = {g: dict(zip(LEVELS, rng.integers(5, 80, len(LEVELS)).tolist())) for g in GROUPS}
    bases = {g: sum(c.values()) for g, c in counts.items()}
    percents = {g: {lv: 100 * n / bases[g] for lv, n in c.items()} for g, c in counts.items()}
    return TableResult(
        spec=TableSpec(f"q{seed}", by=("track",)),
        table_type="crosstab",
        kind="ordinal",
        title=f"Question {seed}: how much do you agree that the course met your needs?",
        base=f"Base: respondents who answered (n = {sum(bases.values())})",
        n_valid=sum(bases.values()),
        n_missing=0,
        columns=[],
        rows=[],
        notes=["Missing answers are left out (available cases)."],
        data={
            "levels": LEVELS,
            "groups": GROUPS,
            "counts": counts,
            "percents": percents,
            "group_bases": bases,
            "percent_base": "row",
            "ordered": True,
        },
    )


def ours(result: TableResult, width: int, height: int, dpi: float) -> bytes:
    fig = charts.make_figure(result, "clustered", width, height, dpi)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    return buf.getvalue()


def bare(result: TableResult, width: int, height: int, dpi: float) -> bytes:
    fig = Figure(figsize=(width / dpi, height / dpi), dpi=dpi)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    w = 0.8 / len(GROUPS)
    for j, g in enumerate(GROUPS):
        xs = [i - 0.4 + w * (j + 0.5) for i in range(len(LEVELS))]
        ax.bar(xs, [result.data["percents"][g][lv] for lv in LEVELS], width=w)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    return buf.getvalue()


def timed(func) -> float:  # noqa: ANN001
    best = float("inf")
    for _ in range(3):
        start = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - start)
    return best


def main() -> None:
    one = crosstab(0)
    gallery = [crosstab(i) for i in range(50)]
    ours(one, 1920, 1080, 150)  # warm up fonts and caches for both
    bare(one, 1920, 1080, 150)
    t_one = timed(lambda: ours(one, 1920, 1080, 150))
    b_one = timed(lambda: bare(one, 1920, 1080, 150))
    t_gal = timed(lambda: [ours(r, 480, 320, 100) for r in gallery])
    b_gal = timed(lambda: [bare(r, 480, 320, 100) for r in gallery])
    print(
        f"one clustered chart 1920x1080: ours {t_one * 1000:.0f} ms, bare matplotlib "
        f"{b_one * 1000:.0f} ms, ratio {t_one / b_one:.2f}"
    )
    print(
        f"gallery of 50 at 480x320:      ours {t_gal:.2f} s, bare matplotlib "
        f"{b_gal:.2f} s, ratio {t_gal / b_gal:.2f} ({t_gal / 50 * 1000:.0f} ms per chart)"
    )


if __name__ == "__main__":
    main()
