"""The ledger's promises: replaying surviving decisions is the working data, the raw table
never changes, and a batch is all or nothing even when the process is killed mid-way."""

from __future__ import annotations

import subprocess
import sys
import tempfile
import textwrap
from pathlib import Path

import numpy as np
import pandas as pd
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from core.codebook import Variable
from core.kinds import Kind
from core.ledger import Action, Decision, entries_for, record, surviving, withdraw
from core.project import Project, sha256
from core.working import apply_ledger, decoded, working_data
from tests.core.cleaning_support import make_project

LEVELS = ("Low", "Mid", "High")
ROWS = 4
RAW = pd.DataFrame(
    {
        "age": [30.0, -99.0, 41.0, 7.0],
        "sat": ["Low", "High", None, "Mid"],
        "sat2": ["High", "High", "Low", None],
    }
)
BOOK = [
    Variable("age", kind=Kind.NUMERIC),
    Variable("sat", kind=Kind.LIKERT, levels=LEVELS, group="g"),
    Variable("sat2", kind=Kind.LIKERT, levels=LEVELS, group="g"),
]

decision_op = st.one_of(
    st.tuples(st.just("correct_age"), st.integers(0, ROWS - 1), st.integers(16, 90)),
    st.tuples(st.just("correct_sat"), st.integers(0, ROWS - 1), st.sampled_from(LEVELS)),
    st.tuples(st.just("missing"), st.integers(0, ROWS - 1), st.sampled_from(["age", "sat"])),
    st.tuples(st.just("reverse"), st.integers(0, ROWS - 1), st.none()),
    st.tuples(st.just("exclude"), st.integers(0, ROWS - 1), st.none()),
    st.tuples(st.just("keep"), st.integers(0, ROWS - 1), st.none()),
    st.tuples(st.just("recode"), st.none(), st.none()),
)
ops = st.lists(
    st.one_of(
        st.tuples(st.just("batch"), st.lists(decision_op, min_size=1, max_size=3)),
        st.tuples(st.just("withdraw"), st.integers(0, 100)),
        st.tuples(st.just("undo"), st.none()),
        st.tuples(st.just("redo"), st.none()),
    ),
    max_size=10,
)


def _decision(op) -> Decision:  # noqa: ANN001
    kind, row, value = op
    if kind == "correct_age":
        return Decision(Action.CORRECT, "r", variables=("age",), row=row, new_value=value)
    if kind == "correct_sat":
        return Decision(Action.CORRECT, "r", variables=("sat",), row=row, new_value=value)
    if kind == "missing":
        return Decision(Action.SET_MISSING, "r", variables=(value,), row=row)
    if kind == "reverse":
        return Decision(Action.REVERSE, "r", variables=("sat", "sat2"), row=row)
    if kind == "exclude":
        return Decision(Action.EXCLUDE, "r", row=row)
    if kind == "keep":
        return Decision(Action.KEEP, "r", variables=("age",), row=row)
    return Decision(Action.RECODE_ALL, "r", variables=("age",), old_value="-99")


def _model(live: list[Decision]) -> tuple[dict, set[int]]:
    """An independent oracle: the expected cells from the raw table and live decisions."""
    cells = {(r, c): RAW.at[r, c] for r in range(ROWS) for c in RAW.columns}
    cells = {
        k: (None if v is None or (isinstance(v, float) and np.isnan(v)) else v)
        for k, v in cells.items()
    }
    excluded: set[int] = set()
    for d in live:
        if d.action is Action.CORRECT:
            cells[(d.row, d.variables[0])] = (
                float(d.new_value) if d.variables[0] == "age" else d.new_value
            )
        elif d.action is Action.SET_MISSING:
            cells[(d.row, d.variables[0])] = None
        elif d.action is Action.REVERSE:
            for c in d.variables:
                v = cells[(d.row, c)]
                if v is not None:
                    cells[(d.row, c)] = LEVELS[len(LEVELS) - 1 - LEVELS.index(v)]
        elif d.action is Action.EXCLUDE:
            excluded.add(d.row)
        elif d.action is Action.RECODE_ALL:
            for r in range(ROWS):
                if RAW.at[r, "age"] == -99.0:
                    cells[(r, "age")] = None
    return cells, excluded


def _cells(wd) -> dict:  # noqa: ANN001
    out = {}
    for r in range(ROWS):
        for c in RAW.columns:
            v = wd.values.at[r, c]
            out[(r, c)] = (
                None
                if v is None or (not isinstance(v, str) and pd.isna(v))
                else (float(v) if c == "age" else v)
            )
    return out


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(ops)
def test_any_sequence_equals_replaying_surviving_decisions(sequence):
    with tempfile.TemporaryDirectory() as folder:
        project, wave = make_project(Path(folder), RAW, BOOK)
        with project:
            raw_hash = project.query("SELECT raw_sha256 FROM waves")[0][0]
            blob_hash = sha256(project.query("SELECT raw_table FROM waves")[0][0])
            # Model: steps of (kind, decision ids or targets); a done/undone stack.
            decisions: dict[int, Decision] = {}
            active: set[int] = set()
            done: list[tuple[str, list[int]]] = []
            undone: list[tuple[str, list[int]]] = []
            for kind, arg in sequence:
                if kind == "batch":
                    batch = [_decision(op) for op in arg]
                    ids, _ = record(project, wave, batch)
                    decisions.update(zip(ids, batch))
                    active |= set(ids)
                    done.append(("decide", ids))
                    undone.clear()
                elif kind == "withdraw":
                    live = sorted(active)
                    if not live:
                        continue
                    target = live[arg % len(live)]
                    withdraw(project, wave, [target], "changed my mind")
                    active.discard(target)
                    done.append(("withdraw", [target]))
                    undone.clear()
                elif kind == "undo":
                    if project.undo() is None:
                        assert not done
                        continue
                    step, ids = done.pop()
                    (active.difference_update if step == "decide" else active.update)(ids)
                    undone.append((step, ids))
                else:
                    if project.redo() is None:
                        assert not undone
                        continue
                    step, ids = undone.pop()
                    (active.update if step == "decide" else active.difference_update)(ids)
                    done.append((step, ids))

            entries = entries_for(project, wave)
            live_entries = surviving(entries)
            assert {e.id for e in live_entries} == active
            wd = working_data(project, wave)
            # 1. The independent model agrees with the working data.
            cells, excluded = _model([decisions[i] for i in sorted(active)])
            assert _cells(wd) == cells
            assert wd.excluded == frozenset(excluded)
            # 2. Replaying only the surviving decisions on fresh decoded data agrees too.
            values0, reasons0 = decoded(project, wave)
            replay = apply_ledger(
                wave, wd.codebook, project.raw_table(wave), values0, reasons0, live_entries
            )
            pd.testing.assert_frame_equal(replay.values, wd.values)
            pd.testing.assert_frame_equal(replay.reasons, wd.reasons)
            # 3. The raw table never changes.
            assert project.query("SELECT raw_sha256 FROM waves")[0][0] == raw_hash
            assert sha256(project.query("SELECT raw_table FROM waves")[0][0]) == blob_hash
            pd.testing.assert_frame_equal(project.raw_table(wave), RAW)


CHILD = textwrap.dedent(
    """
    import sys, time
    from core.ledger import Action, Decision, record
    from core.project import Project

    class Stall:
        # json.dumps(default=str) calls str() on this inside the open transaction.
        def __str__(self):
            print("inside", flush=True)
            time.sleep(60)
            return "never"

    path, n, stall = sys.argv[1], int(sys.argv[2]), sys.argv[3] == "stall"
    project = Project.open(path)
    wave = project.waves()[0].id
    batch = [Decision(Action.SET_MISSING, "batch", variables=("age",), row=i % 4)
             for i in range(n)]
    if stall:
        batch[n // 2] = Decision(Action.KEEP, "batch", variables=("age",), row=0,
                                 old_value=Stall())
    print("go", flush=True)
    record(project, wave, batch)
    print("committed", flush=True)
    time.sleep(60)
    """
)


def test_killed_process_leaves_all_or_none_of_a_batch(tmp_path):
    project, wave = make_project(tmp_path, RAW, BOOK)
    record(project, wave, [Decision(Action.KEEP, "before", variables=("age",), row=0)])
    path = project.path
    project.close()
    root = Path(__file__).resolve().parents[2]
    n = 400
    expected = 1
    for attempt, stall in enumerate(["stall", "commit", "stall"]):
        child = subprocess.Popen(
            [sys.executable, "-c", CHILD, str(path), str(n), stall],
            cwd=root,
            stdout=subprocess.PIPE,
            text=True,
        )
        try:
            wanted = "inside" if stall == "stall" else "committed"
            for line in child.stdout:
                if line.strip() == wanted:
                    break
            child.kill()  # SIGKILL: no clean-up, no rollback by Python
        finally:
            child.wait(timeout=30)
            child.stdout.close()
        if stall == "commit":
            expected += n
        with Project.open(path) as again:
            batches = entries_for(again, wave)
            assert len(batches) == expected, f"attempt {attempt}"
            assert again.raw_table(wave).equals(RAW)  # SHA-256 verified on read
            assert all(e.reason in ("before", "batch") for e in batches)
