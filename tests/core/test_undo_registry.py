"""Undo works for every recorded kind of step, even in a fresh process that never imported
the module owning that kind (a project reopened the next morning)."""

from __future__ import annotations

import subprocess
import sys
import textwrap
from pathlib import Path

import core


def test_undo_of_an_outline_step_in_a_fresh_process(tmp_path):
    root = Path(core.__file__).resolve().parent.parent
    path = tmp_path / "p.plaincount"
    make = textwrap.dedent(
        f"""
        import pandas as pd
        from core.codebook import Codebook, Variable
        from core.project import Project
        from core import outline
        from core.tables.spec import TableSpec
        p = Project.create({str(path)!r})
        book = Codebook([Variable("track", kind="categorical", levels=("A", "B"))])
        inst = p.add_instrument("Survey", book)
        p.add_wave(inst.id, "2026", "x.csv", b"x", pd.DataFrame({{"track": ["A", "B", "A"]}}))
        outline.keep(p, TableSpec("track"))
        p.close()
        """
    )
    undo = textwrap.dedent(
        f"""
        from core.project import Project
        p = Project.open({str(path)!r})
        label = p.undo_label()
        p.undo()
        rows = p.query("SELECT COUNT(*) FROM outline")[0][0]
        print(label, "|", rows)
        p.close()
        """
    )
    subprocess.run([sys.executable, "-c", make], cwd=root, check=True)
    out = subprocess.run(
        [sys.executable, "-c", undo], cwd=root, check=True, capture_output=True, text=True
    )
    label, rows = out.stdout.strip().split(" | ")
    assert label  # the step has a name to show in the Edit menu
    assert rows == "0"
