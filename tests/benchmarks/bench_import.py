"""Import benchmark: a 100,000 x 60 survey-like export, against plain pandas in the same run.

Run from the repository root::

    /work/venv/bin/python tests/benchmarks/bench_import.py            # 100,000 rows
    /work/venv/bin/python tests/benchmarks/bench_import.py --rows 20000 --workdir /tmp/bench
    /work/venv/bin/python tests/benchmarks/bench_import.py --skip-xlsx --repeat 5  # quick

It writes (once; later runs reuse them from ``--workdir``) a survey-like workbook and CSV:
an id, two time stamps, categories, numbers with a -99 code, a 20-item agreement battery, a
frequency battery, a numbered 1-5 battery, a five-column ranking, a semicolon-joined
choose-all-that-apply column, yes/no questions and open comments. Then, each in its own
process so memory and caches do not leak between them, it times:

* ``pandas.read_excel(engine="openpyxl")`` and ``pandas.read_csv`` (the baselines);
* the whole Plaincount import of each file into a new project (read, infer, store);
* opening the saved project and loading the wave's raw table and codebook;

and reports each ratio against its target (xlsx import <= 0.25 x the openpyxl baseline, CSV
import <= 3 x read_csv, opening <= 0.5 s, peak memory of an import <= 1.5 GiB). This is a
report, not a test: it never fails the test suite.
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
N_COLUMNS = 60


def make_frame(rows: int, seed: int = 2026):  # noqa: ANN201 - pandas imported lazily
    import numpy as np
    import pandas as pd

    rng = np.random.default_rng(seed)
    cols: dict[str, object] = {"resp_id": [f"R{i:07d}" for i in range(1, rows + 1)]}
    start = pd.Timestamp("2026-03-01") + pd.to_timedelta(
        rng.integers(0, 30 * 24 * 3600, rows), unit="s"
    )
    cols["started_at"] = start
    cols["finished_at"] = start + pd.to_timedelta(rng.integers(300, 3600, rows), unit="s")
    cols["cohort"] = rng.choice(["Fall", "Spring", "Summer"], rows)
    cols["site"] = rng.choice(["North", "South", "East", "West", "Online"], rows)
    cols["track"] = rng.choice(["Electrical", "HVAC", "Welding", "Solar install"], rows)
    cols["gender"] = rng.choice(["Woman", "Man", "Nonbinary", "Prefer not to say"], rows)
    cols["income_band"] = rng.choice(
        ["Under $20,000", "$20,000 to $39,999", "$40,000 to $59,999", "$60,000 or more"], rows
    )
    age = rng.integers(18, 65, rows).astype(float)
    age[rng.random(rows) < 0.02] = -99
    cols["age"] = age
    cols["hours_work_week"] = np.clip(rng.normal(25, 10, rows).round(), 0, 80)
    agree = [
        "Strongly disagree",
        "Disagree",
        "Neither agree nor disagree",
        "Agree",
        "Strongly agree",
    ]
    for i in range(1, 21):
        cols[f"agree_{i}"] = rng.choice(agree, rows)
    freq = ["Never", "Rarely", "Sometimes", "Often", "Always"]
    for name in ("use_tutoring", "use_coaching", "use_library", "use_lab", "use_mentor"):
        cols[name] = rng.choice(freq, rows)
    for i in range(1, 9):
        cols[f"rate_{i}"] = rng.integers(1, 6, rows).astype(float)
    for i in range(1, 7):
        cols[f"score_{i}"] = rng.normal(50, 12, rows).round(1)
    ranks = np.argsort(rng.random((rows, 5)), axis=1) + 1
    for j, name in enumerate(["transit", "tools", "paidwork", "childcare", "tutoring"]):
        cols[f"rank_{name}"] = ranks[:, j].astype(float)
    options = ["Transportation", "Childcare", "Work schedule", "Cost of tools", "Internet"]
    picked = rng.random((rows, len(options))) < np.array([0.35, 0.2, 0.4, 0.25, 0.1])
    cols["barriers"] = ["; ".join(o for o, p in zip(options, row) if p) or "None" for row in picked]
    for name in ("completed", "credential", "employed", "recommend"):
        cols[name] = rng.choice(["Yes", "No"], rows)
    words = [
        "the",
        "course",
        "was",
        "good",
        "helpful",
        "long",
        "hard",
        "great",
        "tools",
        "teacher",
        "time",
        "class",
        "lab",
    ]
    cols["comment"] = [" ".join(rng.choice(words, 9)) + "." for _ in range(rows)]
    frame = pd.DataFrame(cols)
    assert frame.shape[1] == N_COLUMNS, frame.shape
    return frame


def write_files(rows: int, workdir: Path) -> tuple[Path, Path]:
    import openpyxl
    import pandas as pd

    xlsx = workdir / f"survey_{rows}.xlsx"
    csv = workdir / f"survey_{rows}.csv"
    if xlsx.exists() and csv.exists():
        return xlsx, csv
    frame = make_frame(rows)
    print(f"writing {rows:,} x {frame.shape[1]} test files into {workdir} (once) ...")
    frame.to_csv(csv, index=False)
    book = openpyxl.Workbook(write_only=True)
    sheet = book.create_sheet("Responses")
    sheet.append(list(frame.columns))
    for row in frame.itertuples(index=False):
        sheet.append([v.to_pydatetime() if isinstance(v, pd.Timestamp) else v for v in row])
    tmp = xlsx.with_suffix(".partial")
    book.save(tmp)
    tmp.replace(xlsx)
    return xlsx, csv


# ---------------------------------------------------------------------------- measurements
def measure(task: str, path: str, project: str) -> dict[str, float]:
    """Run one task in this process; return seconds and peak resident memory (MiB)."""
    started = time.perf_counter()
    if task == "read_excel":
        import pandas as pd

        start = time.perf_counter()
        pd.read_excel(path, engine="openpyxl")
    elif task == "read_csv":
        import pandas as pd

        start = time.perf_counter()
        pd.read_csv(path)
    elif task == "import":
        from core.importing import import_file
        from core.project import Project

        with Project.create(project) as proj:
            # Timed: read, infer and store (committed). Creating and closing the file are not
            # part of an import.
            start = time.perf_counter()
            result = import_file(proj, path, wave="bench")
            seconds = time.perf_counter() - start
        kinds = result.report["kinds"]
    elif task == "open":
        from core.project import Project

        start = time.perf_counter()
        with Project.open(project) as proj:
            wave = proj.waves()[0]
            raw = proj.raw_table(wave.id)
            proj.codebook(wave.instrument_id)
        assert len(raw) > 0
    else:
        raise SystemExit(f"unknown task {task}")
    if task != "import":
        seconds = time.perf_counter() - start
    peak = _peak_mib()
    out = {"seconds": seconds, "peak_mib": peak, "with_imports": time.perf_counter() - started}
    if task == "import":
        out["kinds"] = kinds  # type: ignore[assignment]
    return out


def _peak_mib() -> float:
    """Peak resident memory of this process since it started (VmHWM on Linux).

    ``ru_maxrss`` would also count the parent's memory at fork time, so a child started by
    a large parent would report the parent's size.
    """
    try:
        for line in Path("/proc/self/status").read_text().splitlines():
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def run(task: str, path: Path, project: Path) -> dict[str, float]:
    proc = subprocess.run(
        [sys.executable, __file__, "--measure", task, str(path), str(project)],
        cwd=ROOT,
        capture_output=True,
        text=True,
        check=False,
    )
    if proc.returncode != 0:
        raise SystemExit(f"{task} on {path.name} failed:\n{proc.stderr}")
    return json.loads(proc.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=100_000)
    parser.add_argument("--workdir", type=Path, default=Path(tempfile.gettempdir()) / "pc-bench")
    parser.add_argument(
        "--repeat",
        type=int,
        default=3,
        help="runs of each quick measurement (CSV, opening); the median is reported",
    )
    parser.add_argument("--skip-xlsx", action="store_true", help="only the CSV and open steps")
    parser.add_argument("--measure", nargs=3, metavar=("TASK", "PATH", "PROJECT"))
    args = parser.parse_args()
    if args.measure:
        print(json.dumps(measure(*args.measure)))
        return
    args.workdir.mkdir(parents=True, exist_ok=True)
    xlsx, csv = write_files(args.rows, args.workdir)
    results: dict[str, dict[str, float]] = {}
    steps = [
        ("openpyxl read_excel", "read_excel", xlsx, 1),
        ("Plaincount import xlsx", "import", xlsx, 1),
        ("pandas read_csv", "read_csv", csv, args.repeat),
        ("Plaincount import csv", "import", csv, args.repeat),
    ]
    if args.skip_xlsx:
        steps = steps[2:]
    for name, task, path, repeat in steps:
        runs = []
        for _ in range(max(repeat, 1)):
            project = args.workdir / f"bench_{path.suffix[1:]}.plaincount"
            for leftover in (project, Path(f"{project}-wal"), Path(f"{project}-shm")):
                leftover.unlink(missing_ok=True)
            runs.append(run(task, path, project))
        runs.sort(key=lambda r: r["seconds"])
        results[name] = runs[len(runs) // 2]  # the median run
        res = results[name]
        times = ", ".join(f"{r['seconds']:.2f}" for r in runs)
        print(f"{name:<24} {res['seconds']:8.2f} s   peak {res['peak_mib']:7.0f} MiB   [{times}]")
    saved = csv if args.skip_xlsx else xlsx
    opens = sorted(
        (
            run("open", saved, args.workdir / f"bench_{saved.suffix[1:]}.plaincount")
            for _ in range(max(args.repeat, 1))
        ),
        key=lambda r: r["seconds"],
    )
    opened = opens[len(opens) // 2]
    label = "open saved project"
    print(f"{label:<24} {opened['seconds']:8.2f} s   peak {opened['peak_mib']:7.0f} MiB")
    if args.skip_xlsx:
        ratio = results["Plaincount import csv"]["seconds"] / results["pandas read_csv"]["seconds"]
        print(f"  csv import / pandas read_csv {ratio:7.3f}  (target <= 3.0 x)")
        return
    print(f"inferred kinds (xlsx): {results['Plaincount import xlsx'].get('kinds')}")

    xlsx_ratio = (
        results["Plaincount import xlsx"]["seconds"] / results["openpyxl read_excel"]["seconds"]
    )
    csv_ratio = results["Plaincount import csv"]["seconds"] / results["pandas read_csv"]["seconds"]
    peak = max(
        results["Plaincount import xlsx"]["peak_mib"], results["Plaincount import csv"]["peak_mib"]
    )
    checks = [
        ("xlsx import / openpyxl read_excel", xlsx_ratio, 0.25, "x"),
        ("csv import / pandas read_csv", csv_ratio, 3.0, "x"),
        ("open saved project (s)", opened["seconds"], 0.5, "s"),
        ("peak memory of an import (GiB)", peak / 1024, 1.5, "GiB"),
    ]
    print()
    print(f"{args.rows:,} rows x {N_COLUMNS} columns")
    for label, value, target, unit in checks:
        verdict = "met" if value <= target else "MISSED"
        print(f"  {label:<36} {value:7.3f}  (target <= {target} {unit}: {verdict})")


if __name__ == "__main__":
    main()
