"""Benchmark: export a 20-table + 20-chart report outline of the demo to every format.

Target (issue 8): under 10 s on this machine. For scale, the same run measures a plain
baseline in the same process: pandas value counts written to one workbook plus the same
number of matplotlib bar charts saved as PNG and SVG, with no captions, notes, appendix or
safety checks. Run: ``/work/venv/bin/python tests/benchmarks/bench_export.py``.
"""

from __future__ import annotations

import io
import os
import resource
import sys
import tempfile
import time
from pathlib import Path

import pandas as pd
from matplotlib.figure import Figure

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from core import outline  # noqa: E402
from core.charts import chart_types  # noqa: E402
from core.demo import build_demo_project  # noqa: E402
from core.errors import PlaincountError  # noqa: E402
from core.export.report import FORMATS, export_outline  # noqa: E402
from core.kinds import Kind  # noqa: E402
from core.project import Project  # noqa: E402
from core.tables.build import compute_table  # noqa: E402
from core.tables.spec import TableSpec  # noqa: E402

TABLEABLE = {Kind.CATEGORICAL, Kind.LIKERT, Kind.ORDINAL, Kind.NUMERIC, Kind.MULTISELECT}


def demo_specs(project: Project) -> tuple[list[TableSpec], list[TableSpec]]:
    """20 table specs and 20 chart specs over the demo's questions (break-downs included)."""
    inst = project.instruments()[0]
    codebook = project.codebook(inst.id)
    names = [
        v.name
        for v in codebook
        if v.kind in TABLEABLE and not v.personal and (not v.group or v.kind is Kind.LIKERT)
    ] + list(codebook.groups())
    candidates = [TableSpec(n, wave="2027") for n in names]
    for by in ("track", "cohort"):
        candidates += [TableSpec(n, wave="2027", by=(by,)) for n in names if n != by]
    tables, charts = [], []
    for spec in candidates:
        try:
            result = compute_table(project, spec)
        except PlaincountError:  # a question the table engine does not tabulate this way
            continue
        types = chart_types(result)
        # Alternate so both lists draw on plain and broken-down tables.
        if len(charts) < 20 and types and (len(charts) <= len(tables) or len(tables) == 20):
            charts.append(spec.with_changes(chart=types[0]))
        elif len(tables) < 20:
            tables.append(spec)
        if len(tables) == 20 and len(charts) == 20:
            break
    return tables, charts


def baseline(project: Project, out: Path, n_tables: int, n_charts: int) -> float:
    """Plain pandas + matplotlib doing the bare minimum of the same work."""
    wave = project.find_wave("2027")
    raw = project.raw_table(wave.id)
    columns = [c for c in raw.columns if raw[c].nunique() < 12][: max(n_tables, n_charts)]
    start = time.perf_counter()
    with pd.ExcelWriter(out / "plain.xlsx", engine="openpyxl") as writer:
        for i in range(n_tables):
            col = columns[i % len(columns)]
            raw[col].value_counts().to_frame().to_excel(writer, sheet_name=f"t{i}")
    for i in range(n_charts):
        col = columns[i % len(columns)]
        counts = raw[col].value_counts()
        fig = Figure(figsize=(1920 / 150, 1080 / 150), dpi=150)
        ax = fig.add_subplot()
        ax.barh([str(x) for x in counts.index], counts.to_numpy())
        fig.savefig(io.BytesIO(), format="png", dpi=150)
        fig.savefig(io.BytesIO(), format="svg", dpi=150)
    return time.perf_counter() - start


def _children_cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        path = build_demo_project(folder / "demo")
        project = Project.open(path)
        tables, charts = demo_specs(project)
        for k, spec in enumerate(tables + charts):
            finding = f"Finding sentence {k + 1}." if spec.chart else ""
            outline.keep(project, spec, finding=finding)
        kept = outline.items(project)
        n_charts = sum(1 for k in kept if k.chart)
        print(f"Outline: {len(kept) - n_charts} tables + {n_charts} charts")

        start, cpu0, kids0 = time.perf_counter(), time.process_time(), _children_cpu()
        files = export_outline(project, folder / "out", FORMATS)
        ours = time.perf_counter() - start
        ours_cpu = time.process_time() - cpu0 + _children_cpu() - kids0
        cpu0 = time.process_time()
        plain = baseline(project, folder, len(kept) - n_charts, n_charts)
        plain_cpu = time.process_time() - cpu0
        project.close()
        size = sum(p.stat().st_size for p in files) / 1e6
        print(f"Export to {', '.join(FORMATS)}: {len(files)} files, {size:.1f} MB")
        print(
            f"Plaincount export: {ours:.2f} s (target < 10 s: {'met' if ours < 10 else 'MISSED'})"
        )
        print(f"Plain pandas/matplotlib baseline: {plain:.2f} s; ratio {ours / plain:.2f}x")
        # CPU seconds do not depend on what else the machine is doing (helpers included).
        print(
            f"CPU time: Plaincount {ours_cpu:.2f} s (with chart helpers), baseline "
            f"{plain_cpu:.2f} s; ratio {ours_cpu / plain_cpu:.2f}x; load average "
            f"{os.getloadavg()[0]:.1f} on {os.cpu_count()} cores"
        )
        for w in files.warnings:
            print(f"warning: {w}")


if __name__ == "__main__":
    main()
