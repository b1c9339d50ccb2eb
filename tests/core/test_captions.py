"""Captions: titles, base lines and the notes every table carries, in their fixed order."""

from __future__ import annotations

import pandas as pd
import pytest

from core.codebook import Variable
from core.ledger import Action, Decision, record
from core.tables.build import compute_table
from core.tables.captions import (
    Notes,
    base_line,
    common_stem,
    group_title,
    item_label,
    short_title,
)
from core.tables.spec import TableSpec
from tests.core.tables_helpers import make_project


def test_short_title():
    assert short_title("Q12. How satisfied are you?") == "How satisfied are you?"
    assert short_title("  3)  Age   in years ") == "Age in years"
    long = (
        "How satisfied are you with the course overall? Please think about the "
        "instructors, the tools and the schedule before you answer."
    )
    assert short_title(long) == "How satisfied are you with the course overall?"
    words = " ".join(["word"] * 40)
    cut = short_title(words)
    assert cut.endswith("…") and len(cut) <= 90 and "wor…" not in cut


def test_base_line_and_group_title():
    assert base_line(342, 380) == "Respondents who answered, n = 342 of 380"
    assert base_line(380, 380, "All respondents") == "All respondents, n = 380"
    assert (
        group_title("g", ["Rank the supports - Transit", "Rank the supports - Tools"])
        == "Rank the supports"
    )
    assert group_title("agree", ["The course was useful", "Tools were good"]) == "agree"


def test_item_labels_leave_out_the_shared_stem():
    qs = ["How much do you agree? - I felt welcome.", "How much do you agree? - Tools were good."]
    stem = common_stem(qs)
    assert stem == "How much do you agree? - "
    assert item_label(qs[0], stem, "a1") == "I felt welcome."
    assert item_label("", stem, "a1") == "a1"
    assert item_label("Other wording", stem, "a1") == "Other wording"


def test_notes_keep_their_order():
    notes = Notes(
        missing=["m"],
        treatment=["t"],
        cleaning=["c"],
        suppression=["s", ""],
        method=["f"],
        source=["w"],
        cautions=["x", "m"],
    )
    assert notes.as_list() == ["m", "t", "c", "s", "f", "w", "x"]


@pytest.fixture()
def project(tmp_path):
    # Invented: 30 respondents; one hours value of 400 corrected to 40 in cleaning.
    frame = pd.DataFrame(
        {
            "hours": [10.0, 20, 30, 400, 15] * 6,
            "site": ["North", "South", "North", "South", "North"] * 6,
        }
    )
    variables = [
        Variable("hours", "Q4. Paid work hours per week", "numeric"),
        Variable("site", "Site", "categorical", levels=["North", "South"]),
    ]
    with make_project(
        tmp_path, frame, variables, instrument="Participant survey", wave="2026"
    ) as p:
        yield p


def test_every_note_kind_appears(project):
    wave = project.find_wave()
    record(
        project,
        wave.id,
        [
            Decision(
                Action.CORRECT,
                "Typing slip, checked with the form",
                ("hours",),
                row=3,
                old_value="400",
                new_value="40",
                check="wandering_zero",
            )
        ],
    )
    result = compute_table(project, TableSpec("hours", by=("site",), sd="sample"))
    assert result.title == "Paid work hours per week — by Site"
    assert result.base == "Respondents who answered, n = 30 of 30"
    text = "\n".join(result.notes)
    assert "Everyone counted answered hours." in text
    assert "available cases" in text
    assert "corrected" in text and "Typing slip" in text  # the ledger decision, disclosed
    assert "sample formula" in text
    assert "Source: Participant survey, wave 2026." in text
    assert "do not show that one thing caused another" in text
    order = [
        next(i for i, n in enumerate(result.notes) if key in n)
        for key in (
            "Everyone counted",
            "available cases",
            "Typing slip",
            "sample formula",
            "Source:",
            "caused another",
        )
    ]
    assert order == sorted(order)


def test_small_cell_note_and_small_base_caution(project):
    result = compute_table(project, TableSpec("site"))
    assert any("no count in this table is that small" in n for n in result.notes)
    # 30 people is not below the default unstable base of 30.
    assert not any("Only 30 people" in n for n in result.notes)
    off = compute_table(project, TableSpec("site", min_cell=0))
    assert not any("Small-cell" in n or "hidden" in n for n in off.notes)


def test_titles_of_group_items(tmp_path):
    from core.codebook import Codebook
    from core.tables.build import available_tables, breakdown_choices

    stem = "Thinking about the course, how much do you agree?"
    cb = Codebook(
        [
            Variable(
                "a1",
                f"{stem} - I felt welcome in my cohort and supported.",
                "likert",
                levels=["No", "Yes"],
                group="agree",
            ),
            Variable("a2", f"{stem} - Tools", "likert", levels=["No", "Yes"], group="agree"),
            Variable("note", "Anything else?", "text"),
        ]
    )
    tables = available_tables(cb)
    assert [t["name"] for t in tables] == ["agree", "a1", "a2"]
    assert tables[0] == {"name": "agree", "family": "battery", "label": stem}
    assert tables[1]["label"] == "I felt welcome in my cohort and supported."
    assert tables[2]["label"] == f"{stem} – Tools"
    assert breakdown_choices(cb) == ["a1", "a2"]
