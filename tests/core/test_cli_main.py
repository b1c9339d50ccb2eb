"""The command line's own behaviour: plain errors, and quiet exit when output is cut short."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import core

ROOT = Path(core.__file__).resolve().parent.parent


def test_output_cut_short_by_the_reader_is_not_an_error(tmp_path):
    project = tmp_path / "p.plaincount"
    survey = tmp_path / "survey.csv"
    survey.write_text("resp_id,age\nR1,34\nR2,51\n", encoding="utf-8")
    for args in (["new", str(project)], ["import", str(project), str(survey)]):
        subprocess.run([sys.executable, "-m", "core.cli.main", *args], cwd=ROOT, check=True)
    # The reader closes the pipe before anything is printed (like `| head -c0`): the first
    # write fails with a broken pipe, which must end the command quietly.
    proc = subprocess.Popen(
        [sys.executable, "-m", "core.cli.main", "codebook", str(project)],
        cwd=ROOT,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
    )
    proc.stdout.close()
    _, err = proc.communicate(timeout=60)
    assert b"Traceback" not in err and b"BrokenPipeError" not in err, err


def test_a_missing_project_is_a_plain_message(tmp_path):
    out = subprocess.run(
        [sys.executable, "-m", "core.cli.main", "codebook", str(tmp_path / "none.plaincount")],
        cwd=ROOT,
        capture_output=True,
        text=True,
    )
    assert out.returncode == 2
    assert out.stderr.startswith("plaincount-cli: There is no file at")
    assert "Traceback" not in out.stderr
