"""Benchmark: every default table of a 100,000-row x 60-column wave, against bare pandas.

Run: ``/work/venv/bin/python tests/benchmarks/bench_tables.py`` (or with pytest). It builds a
project with random answers (benchmark data only), decodes it once, then times

- Plaincount: one default table per question (items, and each ranking or option group once)
  plus ten cross-tabulations, each with captions, treatment and small-cell protection;
- bare pandas, in the same run, on the same decoded columns: ``value_counts`` per item,
  ``describe`` + ``quantile`` + ``mode`` per number, ``crosstab`` for the same ten pairs,
  rank counts per ranking column and exploded option counts,

and prints both times and their ratio (target: at most 3x, under 2 s in total).
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from core.codebook import Codebook, Variable  # noqa: E402
from core.project import Project  # noqa: E402
from core.tables.build import table_for_working  # noqa: E402
from core.tables.spec import TableSpec  # noqa: E402
from core.working import working_data  # noqa: E402

N = 100_000
SCALE = ["Strongly disagree", "Disagree", "Neutral", "Agree", "Strongly agree"]
OPTIONS = ["Transportation", "Childcare", "Work schedule", "Cost of tools", "None"]


def make_wave(rng: np.random.Generator) -> tuple[pd.DataFrame, list[Variable]]:
    """60 columns: 10 numbers, 25 rating items (5 batteries), 12 categories, 5 ordinal,
    5 ranking columns, 1 delimited choose-all-that-apply, 2 option columns."""
    cols: dict[str, object] = {}
    variables: list[Variable] = []
    for i in range(10):
        x = rng.normal(40, 12, N).round()
        x[rng.random(N) < 0.03] = np.nan
        cols[f"num{i}"] = x
        variables.append(Variable(f"num{i}", f"Number {i}", "numeric"))
    for b in range(5):
        for i in range(5):
            name = f"lik{b}_{i}"
            v = rng.choice(SCALE, N).astype(object)
            v[rng.random(N) < 0.04] = None
            cols[name] = v
            variables.append(Variable(name, f"Statement {b}.{i}", "likert", levels=SCALE,
                                      group=f"battery{b}"))
    for i in range(12):
        levels = [f"Group {k}" for k in range(2 + i % 6)]
        v = rng.choice(levels, N).astype(object)
        v[rng.random(N) < 0.02] = None
        cols[f"cat{i}"] = v
        variables.append(Variable(f"cat{i}", f"Category {i}", "categorical", levels=levels))
    for i in range(5):
        levels = [f"Band {k}" for k in range(5)]
        cols[f"ord{i}"] = rng.choice(levels, N)
        variables.append(Variable(f"ord{i}", f"Band {i}", "ordinal", levels=levels))
    ranks = np.argsort(rng.random((N, 5)), axis=1).astype(float) + 1
    ranks[rng.random(N) < 0.3, 4] = np.nan
    for i in range(5):
        cols[f"rank{i}"] = ranks[:, i]
        variables.append(Variable(f"rank{i}", f"Rank - option {i}", "ranking",
                                  group="ranking", option=f"Option {i}"))
    combos = ["Transportation;Childcare", "None", "Work schedule", "Cost of tools;Childcare",
              "Transportation", None]
    cols["barriers"] = rng.choice(np.array(combos, dtype=object), N)
    variables.append(Variable("barriers", "Barriers", "multiselect", levels=OPTIONS,
                              delimiter=";"))
    for i, o in enumerate(("Tutoring", "Coaching")):
        cols[f"use{i}"] = rng.choice(np.array(["Yes", None], dtype=object), N)
        variables.append(Variable(f"use{i}", f"Used - {o}", "multiselect", group="uses",
                                  option=o))
    frame = pd.DataFrame(cols)
    assert frame.shape == (N, 60)
    return frame, variables


CROSS = [("lik0_0", "cat0"), ("lik1_1", "cat1"), ("lik2_2", "cat2"), ("cat3", "cat4"),
         ("cat5", "ord0"), ("ord1", "cat6"), ("lik3_3", "ord2"), ("cat7", "cat8"),
         ("ord3", "cat9"), ("lik4_4", "cat10")]


def specs(codebook: Codebook) -> list[TableSpec]:
    out, seen = [], set()
    for var in codebook:
        key = var.group if var.kind.value in ("ranking",) or (
            var.kind.value == "multiselect" and not var.delimiter) else var.name
        if key in seen:
            continue
        seen.add(key)
        out.append(TableSpec(key))
    return out + [TableSpec(a, by=(b,)) for a, b in CROSS]


def bare_pandas(frame: pd.DataFrame, variables: list[Variable]) -> None:
    """The same counts with plain pandas on the decoded columns (categoricals and floats)."""
    for var in variables:
        col = frame[var.name]
        kind = var.kind.value
        if kind == "numeric":
            col.describe()
            col.quantile([0.25, 0.75])
            col.mode()
        elif kind == "multiselect" and var.delimiter:
            col.dropna().explode().value_counts()  # decoded: tuples of chosen options
        else:
            col.value_counts()
    for a, b in CROSS:
        pd.crosstab(frame[b], frame[a])


def run() -> dict[str, float]:
    rng = np.random.default_rng(2026)
    frame, variables = make_wave(rng)
    with tempfile.TemporaryDirectory() as tmp:
        project = Project.create(Path(tmp) / "bench.plaincount")
        inst = project.add_instrument("Survey", Codebook(variables))
        project.add_wave(inst.id, "2026", "bench.csv", b"", frame)
        wave = project.find_wave()
        working = working_data(project, wave.id)
        settings = {**project.settings(), "wave": "2026", "instrument": "Survey"}
        all_specs = specs(working.codebook)
        decoded, _ = working.analysed()
        # Warm up imports (scipy, numpy paths) outside the timings.
        table_for_working(working, all_specs[0], settings)
        bare_pandas(decoded.head(1000), variables)
        best_ours = best_bare = float("inf")
        for _ in range(3):
            t0 = time.perf_counter()
            for spec in all_specs:
                table_for_working(working, spec, settings)
            best_ours = min(best_ours, time.perf_counter() - t0)
            t0 = time.perf_counter()
            bare_pandas(decoded, variables)
            best_bare = min(best_bare, time.perf_counter() - t0)
        project.close()
    ratio = best_ours / best_bare
    print(f"{len(all_specs)} tables ({len(all_specs) - len(CROSS)} default + {len(CROSS)} "
          f"cross-tabulations) on {N:,} x 60")
    print(f"Plaincount tables: {best_ours:.3f} s")
    print(f"bare pandas:       {best_bare:.3f} s")
    print(f"ratio:             {ratio:.2f}x (target <= 3x, total < 2 s)")
    return {"ours": best_ours, "bare": best_bare, "ratio": ratio}


def test_benchmark_tables() -> None:
    run()


if __name__ == "__main__":
    run()
