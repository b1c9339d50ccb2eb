"""Write ``project_v1.plaincount``: a real project file of schema version 1 with one wave.

Run from the repository root with the version-1 code: ``python tests/data/make_project_v1.py``.
The file is committed; ``tests/core/test_project.py`` copies it and opens it, so every later
schema version must keep opening (and migrating) files made by this version.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from core.importing import import_file
from core.project import SCHEMA_VERSION, Project

HERE = Path(__file__).resolve().parent
TARGET = HERE / "project_v1.plaincount"
SOURCE = (
    "resp_id,age,zip,pet,agree\n"
    "R1,34,007,None,Agree\n"
    "R2,-99,02134,Cat,Disagree\n"
    "R3,51,10001,NA,Agree\n"
    "R4,28,2019,Dog,Strongly agree\n"
    "R5,45,94110,null,Disagree\n"
    "R6,38,60601,Cat,Strongly disagree\n"
)


def write_sample(target: Path, name: str) -> None:
    """The same small project in every version's file: one wave, one codebook edit."""
    target.unlink(missing_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        csv = Path(tmp) / "survey_2026.csv"
        csv.write_text(SOURCE, encoding="utf-8")
        with Project.create(target, name=name) as project:
            result = import_file(project, csv, instrument="Participant survey", wave="2026")
            inst = result.wave.instrument_id
            cb = project.codebook(inst)
            cb = cb.with_variable(cb["age"].updated({"range": [16, 80]}))
            project.set_codebook(inst, cb, label="Set the range of age")
    print(f"wrote {target} ({target.stat().st_size} bytes)")


def main() -> None:
    assert SCHEMA_VERSION == 1, "this script writes the version-1 file; keep the committed one"
    write_sample(TARGET, "Version 1 sample")


if __name__ == "__main__":
    main()
