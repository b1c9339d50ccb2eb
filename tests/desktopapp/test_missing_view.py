"""The missing-data view on the demo project: item table, threshold, breakdown, scan, MCAR.

Figures are checked against the core's own results where the view only shows them, and
against outside references where the view could get them wrong: the demo generator's
manifest (shares measured with pandas on the raw workbooks), scipy's chi-square test, and
counts made here with pandas.
"""

from __future__ import annotations

import json
import shutil
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
from PySide6.QtCore import Qt
from scipy import stats

from core.demo import MANIFEST_NAME, build_demo_project
from core.ledger import Action, Decision, record
from core.mcar import mcar_frame
from core.missing import item_summary, respondent_summary
from core.working import working_data
from desktopapp.project_tree import NodeType
from desktopapp.views.missing_view import MARK, RIGHT, MissingDataView

WAVE = "2027"


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The demo project, built once for the module (it takes a few seconds)."""
    folder = tmp_path_factory.mktemp("missing_view_demo")
    path = build_demo_project(folder)
    manifest = json.loads((folder / MANIFEST_NAME).read_text(encoding="utf-8"))
    return path, manifest


def _open(window, path) -> MissingDataView:
    assert window.open_project(path)
    wave = next(w for w in window.project.waves() if w.label == WAVE)
    assert window.show_node(NodeType.MISSING, wave_id=wave.id)
    view = window.view
    assert isinstance(view, MissingDataView)
    assert view.loaded is not None, view.totals_label.text()
    return view


@pytest.fixture(scope="module")
def shared(demo, qapp, tmp_path_factory):
    """One window on the demo for the tests that only read (opening it is the slow part)."""
    from PySide6.QtCore import QSettings

    from desktopapp.main_window import MainWindow

    folder = tmp_path_factory.mktemp("qsettings_shared")
    for fmt in (QSettings.Format.NativeFormat, QSettings.Format.IniFormat):
        QSettings.setPath(fmt, QSettings.Scope.UserScope, str(folder))
    win = MainWindow(synchronous=True)
    win.show()
    _open(win, demo[0])
    yield win
    win.close_project()
    win.close()
    win.deleteLater()


@pytest.fixture
def view(shared) -> MissingDataView:
    """The shared window's view, back at its starting state after each test."""
    view = shared.view
    assert isinstance(view, MissingDataView)
    yield view
    view.tabs.setCurrentWidget(view.items_page)
    view.threshold_spin.setValue(5.0)


def _reference_summary(window, view) -> pd.DataFrame:
    return item_summary(working_data(window.project, view.wave_id)).set_index("variable")


def _row(view, name: str) -> int:
    row = view.item_model.row_of("variable", name)
    assert row >= 0, name
    return row


def test_missing_node_is_in_the_tree_for_every_wave(window, demo):
    assert window.open_project(demo[0])
    nodes = [n for n in window.tree.nodes() if n.type == NodeType.MISSING]
    assert len(nodes) == len(window.project.waves()) == 2


def test_item_table_shows_item_summary(shared, view, demo):
    ref = _reference_summary(shared, view)
    model = view.item_model
    assert model.rowCount() == len(ref) >= 30
    for name in ("age", "household_income_band", "employed_in_field", "gender"):
        row = _row(view, name)
        r = ref.loc[name]
        assert model.text(row, "n_answered") == f"{r['n_answered']:,}"
        assert model.text(row, "n_missing") == f"{r['n_missing']:,}"
        assert model.text(row, "pct_missing") == f"{r['pct_missing']:.1f}"
        assert model.text(row, "pct_missing_asked") == f"{r['pct_missing_asked']:.1f}"
        assert model.text(row, "skipped") == str(r["skipped"])
        assert model.text(row, "declined") == str(r["declined"])
        assert model.text(row, "question") == r["label"]  # not in a battery: the whole text
    # A battery item shows its own words; its question starts with the stem the items share.
    own = model.text(_row(view, "agree_1"), "question")
    assert own.startswith("… ") and ref.loc["agree_1", "label"].endswith(own[2:])
    label = ref.loc["agree_1", "label"]
    stem = label[: len(label) - len(own) + 2].strip()
    assert len(stem) > 10 and ref.loc["agree_2", "label"].startswith(stem)
    # Outside reference: the generator measured the income item on the raw workbook with
    # pandas (blank or 'Prefer not to say'), rounded to one decimal.
    income = demo[1]["patterns"]["income_missing_by_gender"]["waves"][WAVE]
    row = _row(view, "household_income_band")
    assert model.text(row, "pct_missing") == f"{income['pct_missing']:.1f}" == "23.9"
    # employed_in_field: 'not applicable' is left out of the share among those asked.
    row = _row(view, "employed_in_field")
    r = ref.loc["employed_in_field"]
    asked = r["n"] - r["not_applicable"]
    gaps = r["n_missing"] - r["not_applicable"]
    assert model.text(row, "pct_missing_asked") == f"{100 * gaps / asked:.1f}" == "9.4"
    assert model.text(row, "not_applicable") == "90"
    # Numbers right-aligned, names left-aligned.
    col = model.column_of("n_missing")
    assert model.data(model.index(0, col), Qt.ItemDataRole.TextAlignmentRole) == RIGHT
    assert model.headerData(col, Qt.Orientation.Horizontal, Qt.ItemDataRole.TextAlignmentRole) == (
        RIGHT
    )
    col = model.column_of("variable")
    assert model.data(model.index(0, col), Qt.ItemDataRole.TextAlignmentRole) != RIGHT
    # Only reasons that occur in this wave get a column.
    keys = [c.key for c in model.columns]
    assert "dont_know" not in keys and "set_missing" not in keys


def test_threshold_moves_the_markers(qtbot, shared, view):
    ref = _reference_summary(shared, view)
    marker = view.item_model.column_of("above_threshold")
    assert view.threshold == 5.0

    def shown_marks() -> set[str]:
        m = view.item_model
        return {m.text(r, "variable") for r in range(m.rowCount()) if m.text(r, "above_threshold")}

    # Reference: the share among those asked above the threshold, counted with pandas.
    expected5 = set(ref.index[ref["pct_missing_asked"] > 5.0])
    assert shown_marks() == expected5 and len(expected5) >= 5
    assert view.item_model.text(_row(view, "age"), "above_threshold") == MARK  # 5.6 %
    assert f"{len(expected5)} of {len(ref)} items marked" in view.marker_count_label.text()
    # The caution is shown beside the threshold; the full paragraph is one click away.
    assert view.threshold_caution.isVisible()
    assert "rule of thumb, not a test" in view.threshold_caution.text()
    assert not view.threshold_note.isVisible()
    qtbot.mouseClick(view.threshold_more_button, Qt.MouseButton.LeftButton)
    assert view.threshold_note.isVisible()
    assert "rule of thumb" in view.threshold_note.text()
    assert "more than 5 % missing" in view.threshold_note.text()

    view.threshold_spin.setValue(10.0)
    expected10 = set(ref.index[ref["pct_missing_asked"] > 10.0])
    assert shown_marks() == expected10 == {"household_income_band", "best_part", "change_one_thing"}
    assert f"3 of {len(ref)} items marked" in view.marker_count_label.text()
    assert "more than 10 % missing" in view.threshold_note.text()
    assert "rule of thumb" in view.threshold_note.text()
    assert any("more than 10 % missing" in p for p in view.paragraphs)
    assert view.item_model.text(_row(view, "age"), "above_threshold") == ""
    assert marker == view.item_model.column_of("above_threshold")


def test_clicking_income_and_grouping_by_gender(qtbot, view, demo):
    # Start elsewhere so the click and the choice really change what is shown.
    assert view.set_grouping("cohort")
    assert view.select_item("age")
    assert view.breakdown is not None and view.breakdown.by == "cohort"

    table = view.item_table
    proxy_row = view.item_proxy.mapFromSource(
        view.item_model.index(_row(view, "household_income_band"), 1)
    )
    table.scrollTo(proxy_row)
    qtbot.mouseClick(
        table.viewport(), Qt.MouseButton.LeftButton, pos=table.visualRect(proxy_row).center()
    )
    assert view.breakdown.variable == "household_income_band"
    assert view.breakdown_title.text() == "Breakdown of household_income_band"

    index = view.group_combo.findData("gender")
    view.group_combo.setCurrentIndex(index)
    view.group_combo.activated.emit(index)
    result = view.breakdown
    assert result.by == "gender"
    pct = view.breakdown_percentages()
    # Outside reference: the generator's pandas measure on the raw workbook.
    planted = demo[1]["patterns"]["income_missing_by_gender"]["waves"][WAVE]
    assert round(pct["Man"], 1) == planted["pct_missing_by_gender"]["Man"]
    assert round(pct["Woman"], 1) == planted["pct_missing_by_gender"]["Woman"]
    assert pct["Man"] > 5 * pct["Woman"]  # men skip the income question far more

    model = view.breakdown_model
    man = model.row_of("group", "Man")
    assert model.text(man, "pct_missing") == f"{pct['Man']:.1f}"
    assert model.data(
        model.index(man, model.column_of("n_missing")), Qt.ItemDataRole.TextAlignmentRole
    ) == (RIGHT)

    # Chi-square against scipy on the groups the test used (groups under 10 left out).
    frame = result.table[result.table["n"] >= 10]
    observed = np.vstack([frame["n_answered"], frame["n_missing"]])
    ref = stats.chi2_contingency(observed, correction=False)
    assert result.chi2 == pytest.approx(ref.statistic, rel=1e-12)
    assert f"X² = {ref.statistic:.2f}" in view.breakdown_test
    assert f"df = {ref.dof}" in view.breakdown_test
    assert "expected count" in view.breakdown_test
    assert "Cochran" in view.breakdown_test
    assert "not proof" in view.breakdown_notes
    shown = view.breakdown_text.toPlainText()
    assert f"X² = {ref.statistic:.2f}" in shown and "not proof" in shown


def test_an_item_cannot_be_broken_down_by_itself(view):
    assert view.select_item("gender")
    assert view.set_grouping("gender")
    assert view.breakdown is None
    assert "by itself" in view.breakdown_test


def test_pattern_scan_ranks_income_by_gender_first(qtbot, view):
    view.tabs.setCurrentWidget(view.scan_page)
    qtbot.mouseClick(view.scan_button, Qt.MouseButton.LeftButton)
    model = view.scan_model
    assert model.rowCount() == len(view.scan) > 100
    assert model.text(0, "variable") == "household_income_band"
    assert model.text(0, "by") == "gender"
    assert model.text(0, "p_adjusted") == "< 0.001"
    assert model.text(0, "pct_missing_by_group").startswith("Man 40.5")
    assert "not proof" in view.scan_caution.text().lower()
    assert "screening aid" in view.scan_caution.text()
    assert "1 differs clearly" in view.scan_status.text()
    # Double-clicking a row opens its breakdown on the Items tab.
    view.set_grouping("cohort")
    view.select_item("age")
    view.scan_table.doubleClicked.emit(model.index(0, 0))
    assert view.tabs.currentWidget() is view.items_page
    assert view.breakdown.variable == "household_income_band"
    assert view.breakdown.by == "gender"


def test_little_mcar_on_numeric_items(qtbot, shared, view):
    offered = [
        view.mcar_list.item(i).data(Qt.ItemDataRole.UserRole) for i in range(view.mcar_list.count())
    ]
    names = [
        n for n in ("age", "credits_term", "hours_work_week", "years_experience") if n in offered
    ]
    assert len(names) >= 3
    view.tabs.setCurrentWidget(view.mcar_page)
    view.set_mcar_items(names)
    assert view.mcar_checked() == names
    qtbot.mouseClick(view.mcar_run_button, Qt.MouseButton.LeftButton)
    result = view.mcar
    assert result is not None
    # Patterns and degrees of freedom counted here with pandas: df = sum over missing-data
    # patterns of the items observed in it, minus the number of items (Little 1988).
    frame = mcar_frame(working_data(shared.project, view.wave_id), names)
    observed = ~frame.isna()
    patterns = observed.drop_duplicates()
    df = int(patterns[patterns.any(axis=1)].sum(axis=1).sum()) - len(names)
    assert view.mcar_figures["df"].text() == str(df)
    assert view.mcar_figures["patterns"].text() == str(len(patterns))
    assert view.mcar_figures["statistic"].text() == f"{result.statistic:.2f}"
    assert result.statistic > 0
    # The p-value is the chi-square upper tail at the shown statistic and df (scipy).
    assert result.p_value == pytest.approx(stats.chi2.sf(result.statistic, df), rel=1e-9)
    reading = view.mcar_reading.text()
    assert "Limits:" in reading and "does not prove" in reading

    view.set_mcar_items(["age"])
    qtbot.mouseClick(view.mcar_run_button, Qt.MouseButton.LeftButton)
    assert view.mcar is None
    assert "at least two" in view.mcar_reading.text()
    assert view.mcar_figures["statistic"].text() == "–"


def test_charts_are_drawn_on_their_tabs(view):
    charts = ((view.dropoff_page, view.dropoff_chart), (view.matrix_page, view.matrix_chart))
    for page, chart in charts:
        view.tabs.setCurrentWidget(page)
        assert chart.isVisible()
        chart.render_now()
        assert chart.message == ""
        assert len(chart.figure.axes) == 1
        ax = chart.figure.axes[0]
        assert [t.get_text() for t in ax.get_xticklabels()][:3] == ["cohort", "track", "age"]


def test_view_follows_ledger_decisions_and_undo(window, demo, tmp_path):
    path = tmp_path / "copy.plaincount"
    shutil.copy(demo[0], path)
    view = _open(window, path)
    view.select_item("agree_6")
    before = int(view.item_model.text(_row(view, "agree_6"), "n_missing"))
    working = working_data(window.project, view.wave_id)
    row = int(np.flatnonzero(working.reasons["agree_6"].isna().to_numpy())[0])
    record(
        window.project,
        view.wave_id,
        [Decision(Action.SET_MISSING, "Answer given twice on paper", ("agree_6",), row=row)],
    )
    assert window.view is view
    row_index = _row(view, "agree_6")
    assert int(view.item_model.text(row_index, "n_missing")) == before + 1
    assert view.item_model.text(row_index, "set_missing") == "1"
    assert view.breakdown is not None and view.breakdown.variable == "agree_6"
    assert int(view.breakdown.table["set_missing"].sum()) == 1
    window.undo.undo_action.trigger()
    assert int(view.item_model.text(_row(view, "agree_6"), "n_missing")) == before
    assert view.item_model.column_of("set_missing") == -1

    # A codebook change refreshes the view too: 'Prefer not to say' stops being a missing code
    # for gender, so those answers count as answered (counted here with pandas).
    project = window.project
    instrument_id = project.wave(view.wave_id).instrument_id
    gender = project.codebook(instrument_id)["gender"]
    assert "Prefer not to say" in gender.missing_codes
    raw = project.raw_table(view.wave_id)["gender"]
    n_declined = int((raw.astype(str).str.strip() == "Prefer not to say").sum())
    assert n_declined == int(view.item_model.text(_row(view, "gender"), "declined")) > 0
    missing_before = int(view.item_model.text(_row(view, "gender"), "n_missing"))
    codes = {k: v for k, v in gender.missing_codes.items() if k != "Prefer not to say"}
    levels = (*gender.levels, "Prefer not to say")
    codebook = project.codebook(instrument_id).with_variable(
        replace(gender, missing_codes=codes, levels=levels)
    )
    project.set_codebook(instrument_id, codebook, label="Count 'Prefer not to say' as an answer")
    row = _row(view, "gender")
    assert int(view.item_model.text(row, "n_missing")) == missing_before - n_declined
    assert view.item_model.text(row, "declined") == "0"


def test_share_answered_and_near_empty_responses(shared, view):
    working = working_data(shared.project, view.wave_id)
    ref = respondent_summary(working)
    view.tabs.setCurrentWidget(view.respondents_page)
    dist = view.distribution_model
    assert dist.rowCount() == 11
    counts = [int(dist.text(r, "n_respondents").replace(",", "")) for r in range(11)]
    assert counts == list(ref.distribution["n_respondents"])
    assert sum(counts) == len(working.analysed()[0])
    near = view.near_empty_model
    assert near.rowCount() == len(ref.near_empty)
    assert f"Near-empty responses: {len(ref.near_empty)}" == view.near_empty_title.text()
    if len(ref.near_empty):
        first = ref.near_empty.iloc[0]
        assert near.text(0, "respondent") == str(first["respondent"])
        assert near.text(0, "data_row") == str(int(first["row"]) + 1)  # 1-based, as in the file
    assert f"{ref.n_complete:,} of {ref.n_respondents:,}" in view.respondents_summary.text()


def test_a_wave_without_question_items_is_explained_in_words(window, tmp_path):
    from PySide6.QtWidgets import QMessageBox

    from core.codebook import Codebook, Variable
    from core.kinds import Kind
    from core.project import Project

    frame = pd.DataFrame({"resp_id": ["A1", "A2", "A3"]})
    path = tmp_path / "ids_only.plaincount"
    with Project.create(path, name="Only identifiers") as project:
        inst = project.add_instrument(
            "Sign-in sheet", Codebook([Variable("resp_id", "Respondent", Kind.IDENTIFIER)])
        )
        project.add_wave(inst.id, "2026", "ids.csv", b"resp_id\nA1\nA2\nA3\n", frame)
    assert window.open_project(path)
    assert window.show_node(NodeType.MISSING)
    view = window.view
    assert isinstance(view, MissingDataView)
    assert view.loaded is None
    assert view.totals_label.text() == "This wave has no question items to examine."
    assert not view.tabs.isEnabled()
    assert not window.findChildren(QMessageBox)


def test_figure_canvas_shows_failures_in_words(qtbot):
    from core.errors import PlaincountError
    from desktopapp.widgets.figure_canvas import FigureCanvasWidget

    canvas = FigureCanvasWidget()
    qtbot.addWidget(canvas)
    canvas.show()

    def broken(figure):
        raise PlaincountError("No respondents are left to draw in this wave.")

    canvas.set_drawer(broken)
    assert canvas.message == "No respondents are left to draw in this wave."
    assert isinstance(canvas.error, PlaincountError)
    canvas.set_drawer(None, "Choose a wave.")
    assert canvas.message == "Choose a wave."

    def line(figure):
        figure.add_subplot(1, 1, 1).plot([1, 2, 3], [2, 1, 3])

    canvas.set_drawer(line)
    canvas.render_now()
    assert canvas.message == "" and len(canvas.figure.axes) == 1
    # A hidden canvas waits until it is shown.
    canvas.hide()
    canvas.set_drawer(broken)
    assert canvas.stale and canvas.message == ""
    canvas.show()
    qtbot.waitUntil(lambda: not canvas.stale)
    assert canvas.message.startswith("No respondents")
