"""Duplicate identifiers (identical or differing answers) and identical answer rows."""

from __future__ import annotations

import pandas as pd

from core.checks import CheckSettings, check_run
from core.codebook import Variable
from core.kinds import Kind
from core.ledger import Action
from core.working import working_data
from tests.core.cleaning_support import make_project


def _project(tmp_path):
    frame = pd.DataFrame(
        {
            "id": ["A", "B", "C", "B", "D", "E", "C"],
            "age": [30, 40, 50, 40, 60, 60, 51],
            "track": ["HVAC", "Welding", "HVAC", "Welding", "Solar", "Solar", "HVAC"],
            "note": ["x", "y", "z", "y", "w", "w", "z"],
        }
    )
    book = [
        Variable("id", kind=Kind.IDENTIFIER),
        Variable("age", kind=Kind.NUMERIC),
        Variable("track", kind=Kind.CATEGORICAL, levels=("HVAC", "Welding", "Solar")),
        Variable("note", kind=Kind.TEXT),
    ]
    return make_project(tmp_path, frame, book)


def test_duplicate_ids_identical_and_differing(tmp_path):
    project, wave = _project(tmp_path)
    with project:
        flags = check_run(working_data(project, wave), CheckSettings()).flags
    dup = [f for f in flags if f.check == "duplicate_id"]
    assert [(f.row, f.respondent) for f in dup] == [(1, "B"), (2, "C"), (3, "B"), (6, "C")]
    b = next(f for f in dup if f.row == 1)
    assert "identical" in b.message and b.detail["rows"] == [2, 4]
    c = next(f for f in dup if f.row == 2)
    assert c.detail["differing"] == ["age"]
    assert c.suggestion.action is Action.EXCLUDE  # the earlier copy
    assert next(f for f in dup if f.row == 6).suggestion.action is Action.KEEP


def test_identical_rows_even_under_different_ids(tmp_path):
    project, wave = _project(tmp_path)
    with project:
        flags = check_run(working_data(project, wave), CheckSettings()).flags
    rows = sorted(f.row for f in flags if f.check == "duplicate_row")
    # B twice (same id) and D/E (different ids, same answers).
    assert rows == [1, 3, 4, 5]
    d = next(f for f in flags if f.check == "duplicate_row" and f.row == 5)
    assert "different identifiers" in d.message


def test_excluded_copy_clears_the_duplicate(tmp_path):
    from core.cleaning import exclude

    project, wave = _project(tmp_path)
    with project:
        exclude(project, wave, 3, "second submission", check="duplicate_id")
        flags = check_run(working_data(project, wave), CheckSettings()).flags
    assert not [f for f in flags if f.respondent == "B" and f.check.startswith("duplicate")]
