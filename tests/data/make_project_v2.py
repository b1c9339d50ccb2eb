"""Write ``project_v2.plaincount``: a real project file of schema version 2 with one wave.

Version 2 stores the source file compressed. Run from the repository root with the version-2
code: ``python tests/data/make_project_v2.py``.
The file is committed; ``tests/core/test_project.py`` copies it and opens it, so every later
schema version must keep opening (and migrating) files made by this version.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from core.importing import import_file
from core.project import SCHEMA_VERSION, Project

HERE = Path(__file__).resolve().parent
TARGET = HERE / "project_v2.plaincount"
SOURCE = (
    "resp_id,age,zip,pet,agree\n"
    "R1,34,007,None,Agree\n"
    "R2,-99,02134,Cat,Disagree\n"
    "R3,51,10001,NA,Agree\n"
    "R4,28,2019,Dog,Strongly agree\n"
    "R5,45,94110,null,Disagree\n"
    "R6,38,60601,Cat,Strongly disagree\n"
)


def main() -> None:
    assert SCHEMA_VERSION == 2, "this script writes the version-2 file; keep the committed one"
    TARGET.unlink(missing_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        csv = Path(tmp) / "survey_2026.csv"
        csv.write_text(SOURCE, encoding="utf-8")
        with Project.create(TARGET, name="Version 2 sample") as project:
            result = import_file(project, csv, instrument="Participant survey", wave="2026")
            inst = result.wave.instrument_id
            cb = project.codebook(inst)
            cb = cb.with_variable(cb["age"].updated({"range": [16, 80]}))
            project.set_codebook(inst, cb, label="Set the range of age")
    print(f"wrote {TARGET} ({TARGET.stat().st_size} bytes)")


if __name__ == "__main__":
    main()
