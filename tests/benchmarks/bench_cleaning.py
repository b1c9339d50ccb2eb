"""Benchmark: one cleaning decision at 100,000 rows, next to a plain-pandas baseline.

Measures, on the demo survey tiled to about 100,000 respondents (34 columns):

- decision: record one correction (one SQLite transaction), rebuild the working data
  (raw + codebook + ledger; the decoded frames are cached on the codebook) and refresh the
  affected flags (the checks on the corrected variable); target under 100 ms;
- baseline: the same in plain pandas: copy the column, set the cell, and recompute the
  column's range and Tukey-fence masks.

Run: ``/work/venv/bin/python tests/benchmarks/bench_cleaning.py`` (or with pytest). Prints
timings and the ratio to the baseline; asserts nothing about time.
"""

from __future__ import annotations

import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[2]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from core import cleaning  # noqa: E402
from core.codebook import Codebook  # noqa: E402
from core.demo import CODEBOOK_SETTINGS, expected_codebook, generate  # noqa: E402
from core.project import Project  # noqa: E402
from core.rules import add_rule  # noqa: E402
from core.working import working_data  # noqa: E402

N_ROWS = 100_000
REPEATS = 15


def big_frame(n: int = N_ROWS) -> pd.DataFrame:
    base = generate().waves["2026"]
    reps = -(-n // len(base))
    frame = pd.concat([base] * reps, ignore_index=True).iloc[:n].copy()
    frame["resp_id"] = [f"HP-{i:07d}" for i in range(n)]
    # Shift each copy's times so the copies are not identical answer rows.
    shift = pd.to_timedelta(np.arange(n, dtype=np.int64), unit="s").to_numpy()
    for col in ("started_at", "finished_at"):
        frame[col] = pd.to_datetime(frame[col]).to_numpy() + shift
    return frame


def timed(fn, repeats: int = REPEATS) -> tuple[float, object]:  # noqa: ANN001
    times, out = [], None
    for i in range(repeats):
        t = time.perf_counter()
        out = fn(i)
        times.append(time.perf_counter() - t)
    return statistics.median(times), out


def run() -> dict[str, float]:
    frame = big_frame()
    book, _ = Codebook.from_json(expected_codebook()).applied(CODEBOOK_SETTINGS)
    with tempfile.TemporaryDirectory() as folder:
        project = Project.create(Path(folder) / "bench.plaincount")
        inst = project.add_instrument("Participant survey", book)
        wave = project.add_wave(inst.id, "2026", "big.xlsx", b"x", frame).id
        add_rule(project, inst.id, "if completed is No then credential_earned must not be Yes")

        t = time.perf_counter()
        working_data(project, wave)
        first_working = time.perf_counter() - t
        t = time.perf_counter()
        state = {"run": cleaning.flags_for(project, wave)}
        first_flags = time.perf_counter() - t

        rows = np.random.default_rng(1).choice(N_ROWS, REPEATS, replace=False)

        def decision(i: int) -> object:
            _, changes = cleaning.edit_cell(
                project, wave, int(rows[i]), "credits_term", "benchmark", value=str(10 + i % 5)
            )
            working_data(project, wave)
            state["run"] = cleaning.refresh_flags(project, wave, state["run"], changes)
            return state["run"]

        per_decision, result = timed(decision)
        n_flags = len(result.flags)

        t = time.perf_counter()
        full = cleaning.check_run(working_data(project, wave), result.settings)
        full_rerun = time.perf_counter() - t
        assert [(f.key, f.decided_by) for f in full.flags] == [
            (f.key, f.decided_by) for f in result.flags
        ]
        project.close()

    raw = frame["credits_term"].astype(float)

    def baseline(i: int) -> object:
        col = raw.copy()
        col.iat[int(rows[i])] = 10 + i % 5
        x = col.to_numpy()
        q1, q3 = np.nanquantile(x, [0.25, 0.75])
        iqr = q3 - q1
        outside = (x < q1 - 1.5 * iqr) | (x > q3 + 1.5 * iqr)
        bad = (x < 0) | (x > 24)
        return np.flatnonzero(outside | bad)

    base, _ = timed(baseline)
    report = {
        "rows": N_ROWS,
        "first working data (decode) s": first_working,
        "first full check run s": first_flags,
        "one decision + working data + flag refresh ms": per_decision * 1000,
        "full check re-run ms (for comparison)": full_rerun * 1000,
        "plain pandas baseline ms": base * 1000,
        "ratio to baseline": per_decision / base,
        "flags": n_flags,
    }
    return report


def test_bench_cleaning() -> None:
    for key, value in run().items():
        print(f"{key}: {value:.3f}" if isinstance(value, float) else f"{key}: {value}")


if __name__ == "__main__":
    test_bench_cleaning()
