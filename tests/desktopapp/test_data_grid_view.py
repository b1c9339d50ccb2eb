"""The data grid: working data shown as the source has it, corrections and exclusions marked,
and a virtualised model that reads only the columns a view asks for (100,000 rows).

Cell texts are compared with the demo workbook read straight with pandas (openpyxl), not
with the core's own reading.
"""

from __future__ import annotations

import shutil
import time

import numpy as np
import pandas as pd
import pytest
from PySide6.QtCore import Qt

from core.cleaning import edit_cell, exclude
from core.codebook import Codebook, Variable
from core.demo import build_demo_project
from core.kinds import Kind, MissingReason
from core.project import Project
from core.working import working_data
from desktopapp.models.cells import (
    EDITED_BACKGROUND,
    EXCLUDED_BACKGROUND,
    EXCLUDED_TEXT,
    MUTED_TEXT,
)
from desktopapp.models.data_grid import EDITED_ROLE, DataGridModel
from desktopapp.project_tree import NodeType
from desktopapp.views.data_grid_view import DataGridView

WAVE = "2026"


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    folder = tmp_path_factory.mktemp("data_grid_demo")
    return build_demo_project(folder), folder


@pytest.fixture
def view(window, demo, tmp_path) -> DataGridView:
    target = tmp_path / "demo copy.plaincount"
    shutil.copy(demo[0], target)
    assert window.open_project(target)
    wave = window.project.find_wave(WAVE, "Participant survey")
    assert window.show_node(NodeType.DATA, wave_id=wave.id)
    assert isinstance(window.view, DataGridView)
    assert window.view.model is not None
    return window.view


def test_grid_shows_the_source_values(window, view, demo):
    source = pd.read_excel(
        demo[1] / "participant_survey_2026.xlsx", header=0, skiprows=[1], engine="openpyxl"
    )
    model = view.model
    assert model.rowCount() == len(source) == 380
    codebook = window.project.codebook(view.instrument_id)
    assert model.names == [v.name for v in codebook]
    for name in ("resp_id", "track", "credits_term"):
        col = model.column_of(name)
        for row in range(0, 380, 37):
            expected = source[name].iat[row]
            if pd.isna(expected):
                continue
            if isinstance(expected, float) and expected.is_integer():
                expected = int(expected)
            assert model.data(model.index(row, col)) == str(expected), (name, row)
    assert "380 respondents" in view.summary_label.text()


def test_missing_cells_show_their_reason_muted(view):
    model = view.model
    working = model.working
    # Declined: -99 typed for age (the codebook's missing code for declined).
    row = int(np.flatnonzero((working.reasons["age"] == MissingReason.DECLINED).to_numpy())[0])
    index = model.index(row, model.column_of("age"))
    assert model.data(index) == "declined (-99)"
    assert model.data(index, Qt.ItemDataRole.ForegroundRole) == MUTED_TEXT
    assert model.data(index, Qt.ItemDataRole.FontRole).italic()
    assert "Declined" in model.data(index, Qt.ItemDataRole.ToolTipRole)
    blank = int(np.flatnonzero((working.reasons["best_part"] == "skipped").to_numpy())[0])
    assert model.data(model.index(blank, model.column_of("best_part"))) == "left blank"


def test_corrected_cell_is_marked_with_its_note(window, view):
    edit_cell(window.project, view.wave_id, 343, "credits_term", "Source form says 12", value=12)
    model = view.model
    index = model.index(343, model.column_of("credits_term"))
    assert model.data(index) == "12"
    assert model.data(index, EDITED_ROLE) is True
    assert model.data(index, Qt.ItemDataRole.BackgroundRole) == EDITED_BACKGROUND
    tip = model.data(index, Qt.ItemDataRole.ToolTipRole)
    assert tip.splitlines()[:2] == ["Original: 120", "Now: 12"]
    assert "Source form says 12" in tip
    assert "1 corrected cell" in view.summary_label.text()
    view._on_next_edit_button_clicked()
    assert (view.table.currentIndex().row(), view.table.currentIndex().column()) == (
        343,
        model.column_of("credits_term"),
    )


def test_excluded_respondent_is_greyed(window, view):
    model = view.model
    exclude(window.project, view.wave_id, 12, "Finished in under a fifth of the median time")
    index = model.index(12, model.column_of("track"))
    assert model.data(index, Qt.ItemDataRole.BackgroundRole) == EXCLUDED_BACKGROUND
    assert model.data(index, Qt.ItemDataRole.ForegroundRole) == EXCLUDED_TEXT
    assert "excluded" in model.data(index, Qt.ItemDataRole.ToolTipRole)
    assert "under a fifth" in model.data(index, Qt.ItemDataRole.ToolTipRole)
    assert "1 respondent excluded" in view.summary_label.text()
    window.undo.undo_action.trigger()
    assert model.data(index, Qt.ItemDataRole.BackgroundRole) is None


def test_go_to_a_respondent(view):
    view.find_edit.setText("HP-10113")
    view.find_edit.returnPressed.emit()
    assert view.table.currentIndex().row() == 311
    view.find_edit.setText("nobody")
    view.find_edit.returnPressed.emit()
    assert "No respondent 'nobody'" in view.find_note.text()


def test_grid_model_at_100k_rows_reads_lazily(tmp_path):
    """A synthetic 100,000-row wave: the model is built and answers cells without turning
    the whole table into Python objects (only the columns asked for are read)."""
    n = 100_000
    rng = np.random.default_rng(7)
    frame = pd.DataFrame(
        {
            "id": [f"R{i:06d}" for i in range(n)],
            "age": rng.integers(18, 70, n).astype(str),
            "hours": rng.integers(0, 60, n).astype(str),
            "track": rng.choice(["HVAC", "Solar", "Welding"], n),
            "agree": rng.choice(["Disagree", "Neither", "Agree"], n),
            "note": rng.choice(["ok", "fine", ""], n),
        }
    )
    book = Codebook(
        [
            Variable("id", "Respondent", Kind.IDENTIFIER, position=0),
            Variable("age", "Age", Kind.NUMERIC, position=1),
            Variable("hours", "Hours", Kind.NUMERIC, position=2),
            Variable(
                "track", "Track", Kind.CATEGORICAL, levels=("HVAC", "Solar", "Welding"), position=3
            ),
            Variable(
                "agree", "Agree", Kind.LIKERT, levels=("Disagree", "Neither", "Agree"), position=4
            ),
            Variable("note", "Note", Kind.TEXT, position=5),
        ]
    )
    with Project.create(tmp_path / "big.plaincount") as project:
        inst = project.add_instrument("Big survey", book)
        wave = project.add_wave(inst.id, "big", "big.csv", b"", frame)
        working = working_data(project, wave.id)
        start = time.perf_counter()
        model = DataGridModel(working)
        built = time.perf_counter() - start
        assert model.rowCount() == n and model.columnCount() == 6
        assert model.cached_columns() == []  # nothing read up front
        start = time.perf_counter()
        texts = [model.data(model.index(r, 1)) for r in (0, 50_000, n - 1)]
        texts.append(model.data(model.index(n - 1, 3)))
        first_cells = time.perf_counter() - start
        assert texts[:3] == [frame["age"].iat[r] for r in (0, 50_000, n - 1)]
        assert texts[3] == frame["track"].iat[n - 1]
        assert sorted(model.cached_columns()) == ["age", "track"]
        # The model reads the working data in place: no copy of the frame.
        assert model.working.values is working.values
        print(
            f"100k rows: model built in {built * 1000:.2f} ms, "
            f"first cells {first_cells * 1000:.1f} ms"
        )


def test_a_decision_repaints_only_its_column(window, view):
    model = view.model
    painted: list[tuple[int, int, int, int]] = []
    model.dataChanged.connect(
        lambda a, b, _roles=(): painted.append((a.row(), a.column(), b.row(), b.column()))
    )
    resets: list[int] = []
    model.modelReset.connect(lambda: resets.append(1))
    edit_cell(window.project, view.wave_id, 311, "age", "Impossible age", missing=True)
    col = model.column_of("age")
    assert painted == [(0, col, model.rowCount() - 1, col)]
    assert resets == []
    assert "age" not in model.cached_columns()  # dropped, read again when next shown
    assert model.data(model.index(311, col)) == "set missing"


def test_grid_follows_a_codebook_change(window, view):
    from desktopapp.views.codebook_view import rename_level

    project = window.project
    book = project.codebook(view.instrument_id)
    renamed = rename_level(book["track"], "Welding", "Welding and fabrication")
    project.set_codebook(view.instrument_id, book.with_variable(renamed), label="Rename")
    model = view.model
    col = model.column_of("track")
    raw = project.raw_table(view.wave_id)["track"]
    welding = [i for i, t in enumerate(raw.tolist()) if t == "Welding"]
    assert welding
    assert {model.data(model.index(r, col)) for r in welding} == {"Welding and fabrication"}
