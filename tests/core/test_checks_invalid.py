"""Cells the codebook cannot read are flagged with the raw text and a likely meaning."""

from __future__ import annotations

import pandas as pd

from core.checks import CheckSettings, check_run
from core.checks.invalid import guess
from core.codebook import Variable
from core.kinds import Kind
from core.ledger import Action
from core.working import working_data
from tests.core.cleaning_support import make_project


def test_guesses():
    num = Variable("credits", kind=Kind.NUMERIC)
    assert guess(num, "twelve") == 12.0
    assert guess(num, "about 12 credits") == 12.0
    assert guess(num, "1,5") == 1.5
    assert guess(num, "12 or 15") is None
    cat = Variable("track", kind=Kind.CATEGORICAL, levels=("Electrical", "HVAC", "Solar install"))
    assert guess(cat, "hvac ") == "HVAC"
    assert guess(cat, "Solar  install") == "Solar install"
    assert guess(cat, "Elec") == "Electrical"
    assert guess(cat, "Plumbing") is None


def test_invalid_cells_flagged_with_raw_text(tmp_path):
    frame = pd.DataFrame({"credits": ["12", "twelve", "lots"], "track": ["HVAC", "HVAC.", "?"]})
    book = [
        Variable("credits", kind=Kind.NUMERIC),
        Variable("track", kind=Kind.CATEGORICAL, levels=("Electrical", "HVAC")),
    ]
    project, wave = make_project(tmp_path, frame, book)
    with project:
        flags = [
            f
            for f in check_run(working_data(project, wave), CheckSettings()).flags
            if f.check == "invalid"
        ]
    got = [(f.row, f.variables[0], f.value, f.suggestion.action, f.suggestion.value) for f in flags]
    assert got == [
        (1, "credits", "twelve", Action.CORRECT, 12.0),
        (1, "track", "HVAC.", Action.CORRECT, "HVAC"),
        (2, "credits", "lots", Action.SET_MISSING, None),
        (2, "track", "?", Action.SET_MISSING, None),
    ]
    assert "Electrical, HVAC" in flags[1].message
