"""The project file: create, open, refuse bad files unchanged, copies, undo, crash safety.

The crash tests kill a child process with SIGKILL at random moments while it imports waves
or edits the codebook, many times over, and check that the file then opens with the last
committed state: every change is one SQLite transaction, so there is nothing in between.
"""

from __future__ import annotations

import contextlib
import hashlib
import multiprocessing as mp
import os
import random
import shutil
import signal
import sqlite3
import stat
import tempfile
import time
from pathlib import Path

import pandas as pd
import pytest

from core.codebook import Codebook, Variable
from core.errors import ProjectError
from core.importing import import_file
from core.kinds import Kind
from core.project import SCHEMA_VERSION, Project

DATA = Path(__file__).resolve().parent.parent / "data"
V1 = DATA / "project_v1.plaincount"
V2 = DATA / "project_v2.plaincount"


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def small_csv(path: Path, rows: int = 300) -> Path:
    lines = ["resp_id,age,site,agree_1,agree_2,comment"]
    levels = ["Strongly disagree", "Disagree", "Agree", "Strongly agree"]
    for i in range(rows):
        lines.append(
            f"R{i:05d},{20 + i % 40},{['North', 'South'][i % 2]},{levels[i % 4]},"
            f"{levels[(i * 7) % 4]},note number {i} about the course"
        )
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


# ---------------------------------------------------------------------------- basics
def test_create_open_close(tmp_path):
    path = tmp_path / "eval.plaincount"
    with Project.create(path, name="Evaluation 2026") as project:
        assert project.name == "Evaluation 2026"
        assert project.instruments() == []
    assert path.exists() and not (tmp_path / "eval.plaincount.creating").exists()
    conn = sqlite3.connect(path)
    (version,) = conn.execute("SELECT value FROM meta WHERE key='schema_version'").fetchone()
    conn.close()
    assert int(version) == SCHEMA_VERSION
    project = Project.open(path)
    assert not project.closed
    project.close()
    assert project.closed
    with pytest.raises(ProjectError, match="already exists"):
        Project.create(path)


def test_newer_schema_version_is_refused_and_left_unchanged(tmp_path):
    path = tmp_path / "future.plaincount"
    Project.create(path).close()
    conn = sqlite3.connect(path)
    conn.execute("UPDATE meta SET value = ? WHERE key = 'schema_version'", (str(99),))
    conn.commit()
    conn.close()
    before = digest(path)
    with pytest.raises(ProjectError, match="newer Plaincount.*version 99"):
        Project.open(path)
    assert digest(path) == before


@pytest.mark.parametrize("kind", ["text", "sqlite", "empty"])
def test_a_file_that_is_not_a_project_is_refused_and_left_unchanged(tmp_path, kind):
    path = tmp_path / "other.plaincount"
    if kind == "text":
        path.write_text("resp_id,age\nR1,30\n", encoding="utf-8")
    elif kind == "empty":
        path.write_bytes(b"")
    else:
        conn = sqlite3.connect(path)
        conn.execute("CREATE TABLE notes (x TEXT)")
        conn.execute("INSERT INTO notes VALUES ('mine')")
        conn.commit()
        conn.close()
    before = digest(path)
    with pytest.raises(ProjectError, match="not a Plaincount project"):
        Project.open(path)
    assert digest(path) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["other.plaincount"]


def _hold_open(path: str, conn) -> None:  # runs in a child process
    project = Project.open(path)
    conn.send("open")
    time.sleep(60)
    project.close()


def _open_as_nobody(path: str, conn) -> None:  # runs in a child process
    os.setgid(65534)
    os.setuid(65534)
    try:
        Project.open(path).close()
        conn.send("opened")
    except ProjectError as exc:
        conn.send(str(exc))


def _context() -> mp.context.BaseContext:
    # A fork server starts clean (no threads of the test process), with the heavy modules
    # already imported, so each child starts in milliseconds.
    ctx = mp.get_context("forkserver")
    ctx.set_forkserver_preload(["core.importing", "tests.core.test_project"])
    return ctx


def test_a_project_open_in_another_process_is_refused(tmp_path):
    path = tmp_path / "shared.plaincount"
    with Project.create(path) as project:
        import_file(project, small_csv(tmp_path / "a.csv", 20), wave="2026")
    ctx = _context()
    parent, child = ctx.Pipe()
    proc = ctx.Process(target=_hold_open, args=(str(path), child))
    proc.start()
    try:
        assert parent.poll(30) and parent.recv() == "open"
        before = digest(path)
        with pytest.raises(ProjectError, match="open in another Plaincount window"):
            Project.open(path)
        assert digest(path) == before
    finally:
        proc.kill()
        proc.join()
    with Project.open(path) as again:  # the lock goes with the process
        assert [w.label for w in again.waves()] == ["2026"]


def test_a_read_only_file_is_refused_and_left_unchanged(tmp_path):
    folder = Path(tempfile.mkdtemp(prefix="plaincount-ro-"))
    try:
        folder.chmod(0o755)
        path = folder / "locked.plaincount"
        Project.create(path).close()
        path.chmod(stat.S_IRUSR | stat.S_IRGRP | stat.S_IROTH)
        before = digest(path)
        if os.geteuid() == 0:
            # root may write anywhere, so try as an ordinary user, as an evaluator would.
            ctx = _context()
            parent, child = ctx.Pipe()
            proc = ctx.Process(target=_open_as_nobody, args=(str(path), child))
            proc.start()
            assert parent.poll(30)
            message = parent.recv()
            proc.join()
        else:
            with pytest.raises(ProjectError) as info:
                Project.open(path)
            message = str(info.value)
        assert "read-only" in message
        assert digest(path) == before
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def test_save_a_copy(tmp_path):
    path = tmp_path / "main.plaincount"
    with Project.create(path) as project:
        wave = import_file(project, small_csv(tmp_path / "a.csv", 50), wave="2026").wave
        copy = project.save_copy(tmp_path / "copy.plaincount")
        with pytest.raises(ProjectError, match="different file name"):
            project.save_copy(path)
        # The original stays open and usable after the copy.
        project.update_settings(min_cell=10)
        raw = project.raw_table(wave.id)
    with Project.open(copy) as copied:
        assert [w.label for w in copied.waves()] == ["2026"]
        assert copied.raw_table(wave.id).equals(raw)
        assert copied.settings()["min_cell"] == 5  # the copy is the state when it was made


def test_undo_and_redo_of_codebook_edits(tmp_path):
    with Project.create(tmp_path / "u.plaincount") as project:
        result = import_file(project, small_csv(tmp_path / "a.csv", 30), wave="2026")
        inst = result.wave.instrument_id
        original = project.codebook(inst)
        assert project.undo_label() is None  # an import is not an undoable edit
        changed = original.with_variable(original["age"].updated({"range": [16, 80]}))
        project.set_codebook(inst, changed, label="Set the range of age")
        again = changed.with_variable(changed["site"].updated({"kind": "text"}))
        project.set_codebook(inst, again, label="Treat site as text")
        assert project.undo_label() == "Treat site as text"
        project.undo()
        assert project.codebook(inst) == changed
        project.undo()
        assert project.codebook(inst) == original
        assert project.undo() is None
        assert project.redo_label() == "Set the range of age"
        project.redo()
        assert project.codebook(inst)["age"].range == (16.0, 80.0)
        # A new edit forgets what was undone after it.
        third = changed.with_variable(changed["age"].updated({"question": "Age"}))
        project.set_codebook(inst, third, label="Name age")
        assert project.redo_label() is None
        assert project.codebook(inst)["site"].kind is Kind.CATEGORICAL


@pytest.mark.parametrize("fixture", [V1, V2], ids=["version-1", "version-2"])
def test_every_released_file_version_opens_with_its_wave(tmp_path, fixture):
    """Real files of each schema version (tests/data/make_project_v*.py) open, migrated."""
    path = tmp_path / fixture.name
    shutil.copy(fixture, path)
    with Project.open(path) as project:
        inst = project.instrument("Participant survey")
        (wave,) = project.waves(inst.id)
        assert wave.label == "2026" and (wave.n_rows, wave.n_columns) == (6, 5)
        raw = project.raw_table(wave.id)  # SHA-256 checked on read
        assert raw["resp_id"].tolist() == ["R1", "R2", "R3", "R4", "R5", "R6"]
        assert raw["zip"].tolist() == ["007", "02134", "10001", "2019", "94110", "60601"]
        assert raw["pet"].tolist() == ["None", "Cat", "NA", "Dog", "null", "Cat"]
        cb = project.codebook(inst.id)
        assert cb["age"].missing_codes == {"-99": "declined"}
        assert cb["age"].range == (16.0, 80.0)
        name, blob = project.source_file(wave.id)
        assert name == "survey_2026.csv" and blob.startswith(b"resp_id,age,zip,pet,agree\n")
        assert project.query("SELECT value FROM meta WHERE key='schema_version'")[0][0] == str(
            SCHEMA_VERSION
        )


def test_source_file_is_stored_compressed_and_read_back_exactly(tmp_path):
    source = "resp_id,comment\n" + "".join(f"R{i},same words again\n" for i in range(5000))
    data = source.encode()
    with Project.create(tmp_path / "c.plaincount") as project:
        inst = project.add_instrument("Survey")
        raw = pd.DataFrame({"resp_id": [f"R{i}" for i in range(5000)]})
        wave = project.add_wave(inst.id, "2026", "s.csv", data, raw)
        (stored,) = project.query("SELECT length(source_bytes) FROM waves")[0]
        assert stored < len(data) / 5
        assert project.source_file(wave.id) == ("s.csv", data)


# ---------------------------------------------------------------------------- crash safety
def _import_forever(path: str, csv: str, prefix: str, log: str) -> None:  # child process
    project = Project.open(path)
    for i in range(10_000):
        import_file(project, csv, instrument="Kill test", wave=f"{prefix}-{i}")
        with open(log, "a", encoding="utf-8") as fh:  # written only after the commit
            fh.write(f"{i}\n")


def _edit_forever(path: str, prefix: str, log: str) -> None:  # child process
    project = Project.open(path)
    inst = project.instrument("Kill test").id
    for i in range(1_000_000):
        cb = project.codebook(inst)
        var = cb["age"].updated({"question": f"{prefix} edit {i}"})
        project.set_codebook(inst, cb.with_variable(var), label=f"{prefix} edit {i}")
        with open(log, "a", encoding="utf-8") as fh:
            fh.write(f"{i}\n")


def _kill_after(proc: mp.process.BaseProcess, delay: float) -> None:
    time.sleep(delay)
    with contextlib.suppress(ProcessLookupError):
        os.kill(proc.pid, signal.SIGKILL)  # no clean-up, no rollback by Python
    proc.join(30)
    # Killed while working: a child that died of an error would prove nothing.
    assert proc.exitcode == -signal.SIGKILL, f"child ended with {proc.exitcode}"


def _reported(log: Path) -> int:
    """How many changes the child saw committed before it died."""
    if not log.exists():
        return 0
    return sum(1 for line in log.read_text(encoding="utf-8").splitlines() if line.strip())


def test_killed_mid_import_and_mid_edit_the_file_opens_with_the_last_commit(tmp_path):
    rng = random.Random(20260)
    path = tmp_path / "crash.plaincount"
    csv = small_csv(tmp_path / "wave.csv", 1500)
    with Project.create(path) as project:
        expected = import_file(project, csv, instrument="Kill test", wave="start").wave
        expected_raw = project.raw_table(expected.id).copy()
    ctx = _context()
    loops = 0
    for loop in range(12):  # mid-import
        log = tmp_path / f"import{loop}.log"
        proc = ctx.Process(target=_import_forever, args=(str(path), str(csv), f"L{loop}", str(log)))
        proc.start()
        _kill_after(proc, rng.uniform(0.05, 0.6))
        reported = _reported(log)
        with Project.open(path) as project:
            waves = [w for w in project.waves() if w.label.startswith(f"L{loop}-")]
            assert reported <= len(waves) <= reported + 1, (loop, reported, len(waves))
            assert [w.label for w in waves] == [f"L{loop}-{i}" for i in range(len(waves))]
            for wave in waves:
                assert project.raw_table(wave.id).equals(expected_raw)
                assert project.source_file(wave.id)[1] == csv.read_bytes()
            assert len(project.codebook(project.instrument("Kill test").id)) == 6
        loops += 1
    with Project.open(path) as project:
        previous = project.codebook(project.instrument("Kill test").id)["age"].question
    for loop in range(12):  # mid-edit
        log = tmp_path / f"edit{loop}.log"
        proc = ctx.Process(target=_edit_forever, args=(str(path), f"E{loop}", str(log)))
        proc.start()
        _kill_after(proc, rng.uniform(0.02, 0.4))
        reported = _reported(log)
        with Project.open(path) as project:
            question = project.codebook(project.instrument("Kill test").id)["age"].question
            allowed = {f"E{loop} edit {reported - 1}", f"E{loop} edit {reported}"}
            if reported == 0:
                allowed.add(previous)
            assert question in allowed, (loop, reported, question)
            # The history step and the codebook change are one transaction.
            assert project.undo_label() == (question or None)
            previous = question
        loops += 1
    assert loops == 24


def test_codebook_round_trips_through_the_project(tmp_path):
    cb = Codebook(
        [
            Variable("q1", "How satisfied?", Kind.LIKERT, levels=("Low", "High"), group="g"),
            Variable("q2", kind=Kind.NUMERIC, range=(0, 10), missing_codes={"-9": "declined"}),
        ]
    )
    with Project.create(tmp_path / "c.plaincount") as project:
        inst = project.add_instrument("Exit survey", cb)
        frame = pd.DataFrame({"q1": ["Low", None], "q2": [3.0, -9.0]})
        project.add_wave(inst.id, "exit", "x.csv", b"q1,q2\n", frame)
        assert project.codebook(inst.id) == cb
