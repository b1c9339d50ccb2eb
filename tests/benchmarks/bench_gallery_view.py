"""Benchmark: the tables view's gallery on the demo project, against bare matplotlib.

Run: ``QT_QPA_PLATFORM=offscreen /work/venv/bin/python tests/benchmarks/bench_gallery_view.py``.

Times what the gallery's worker does for the whole demo questionnaire by track (compute
each table, draw its thumbnail, encode a PNG) with :func:`draw_thumbnails`, and, in the same
run, a bare-matplotlib baseline that draws one plain bar per answer count of the same tables
on a plain ``Figure`` of the same size and encodes it (no titles, labels, legend, notes or
layout engine). Tables are computed once before timing, so both sides time drawing only;
the table cost is reported separately. The ratio is what slide-ready styling costs per
thumbnail; the first thumbnails appear after one chunk (``CHUNK`` charts).
"""

from __future__ import annotations

import io
import sys
import tempfile
import time
from pathlib import Path

from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from core.demo import build_demo_project  # noqa: E402
from core.project import Project  # noqa: E402
from core.tables.build import compute_table  # noqa: E402
from desktopapp.views.gallery_view import (  # noqa: E402
    CHUNK,
    THUMB_DPI,
    THUMB_H,
    THUMB_W,
    draw_thumbnails,
    gallery_specs,
)


def _numbers(result) -> list[float]:
    """Every count a result holds, flattened (what the baseline draws as bars)."""
    out: list[float] = []

    def walk(value) -> None:
        if isinstance(value, dict):
            for v in value.values():
                walk(v)
        elif isinstance(value, int | float) and not isinstance(value, bool):
            out.append(float(value))

    walk(result.data.get("counts") or result.data.get("points") or {})
    if not out and "stats" in result.data:
        out = [float(v) for v in result.data["stats"].values() if isinstance(v, int | float)]
    return out or [0.0]


def baseline(results) -> None:
    for result in results:
        figure = Figure(figsize=(THUMB_W / THUMB_DPI, THUMB_H / THUMB_DPI), dpi=THUMB_DPI)
        FigureCanvasAgg(figure)
        ax = figure.add_subplot()
        values = _numbers(result)
        ax.bar(range(len(values)), values)
        buffer = io.BytesIO()
        figure.savefig(buffer, format="png", dpi=THUMB_DPI)


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = build_demo_project(Path(folder))
        with Project.open(path) as project:
            inst = project.instruments()[0]
            specs = gallery_specs(project.codebook(inst.id), "", "track", "2027", inst.name)
            start = time.perf_counter()
            results = [compute_table(project, spec) for spec in specs]
            tables = time.perf_counter() - start
            draw_thumbnails(project, specs, 0, 1, THUMB_W, THUMB_H)  # warm fonts and caches

            start = time.perf_counter()
            thumbs = draw_thumbnails(project, specs, 0, len(specs), THUMB_W, THUMB_H)
            ours = time.perf_counter() - start
            start = time.perf_counter()
            baseline(results)
            bare = time.perf_counter() - start
    failed = [t for t in thumbs if t.png is None]
    n = len(specs)
    print(f"gallery of {n} thumbnails ({THUMB_W} x {THUMB_H} px), demo by track")
    print(f"  tables (first computation, incl. working data): {tables:.2f} s")
    print(f"  gallery thumbnails: {ours:.2f} s ({1000 * ours / n:.0f} ms each)")
    print(f"  bare matplotlib:    {bare:.2f} s ({1000 * bare / n:.0f} ms each)")
    print(f"  ratio: {ours / bare:.1f}x")
    print(f"  first {CHUNK} thumbnails after about {ours / n * CHUNK:.1f} s")
    if failed:
        print(f"  {len(failed)} without a chart: {[t.message for t in failed]}")


if __name__ == "__main__":
    main()
