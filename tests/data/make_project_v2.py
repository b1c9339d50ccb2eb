"""Write ``project_v2.plaincount``: a real project file of schema version 2 with one wave.

Version 2 stores the source file compressed. Run from the repository root with the version-2
code: ``python tests/data/make_project_v2.py``. The file is committed;
``tests/core/test_project.py`` copies it and opens it, so every later schema version must keep
opening (and migrating) files made by this version. The sample itself is the one of
``make_project_v1.py``.
"""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from make_project_v1 import write_sample  # noqa: E402

from core.project import SCHEMA_VERSION  # noqa: E402

TARGET = HERE / "project_v2.plaincount"


def main() -> None:
    assert SCHEMA_VERSION == 2, "this script writes the version-2 file; keep the committed one"
    write_sample(TARGET, "Version 2 sample")


if __name__ == "__main__":
    main()
