"""The "Compare waves" view on the demo project: side by side, same people, kept results.

What the view shows is checked two ways: against the core (``compute_table`` with the
comparison's specification, ``match_respondents``, ``transition_table``: the window must show
exactly what the core computes) and against figures from outside the core: the demo's
manifest (returning respondents, wording changes) and counts made with pandas straight from
the two demo workbooks.
"""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd
import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

from core import outline
from core.export.clipboard import table_html, table_text
from core.project import Project
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from core.waves import MATCH_CAUTION, match_respondents, transition_table
from desktopapp.project_tree import NodeType, project_nodes
from desktopapp.views.waves_view import TAB_KEPT, TAB_PEOPLE, WavesView

from .demo_window import open_demo_window, shown_columns, shown_rows

INSTRUMENT = "Participant survey"
SPEC = TableSpec("overall_satisfaction", instrument=INSTRUMENT, compare_waves=("2026", "2027"))


@pytest.fixture(scope="module")
def window(tmp_path_factory, qapp):
    win = open_demo_window(tmp_path_factory.mktemp("waves"))
    yield win
    win.close_project()
    win.close()


@pytest.fixture
def view(window):
    window.show_node(NodeType.PROJECT)  # move away, so the view is created anew
    assert window.show_node(NodeType.COMPARE)
    v = window.view
    assert isinstance(v, WavesView)
    yield v
    for item in outline.items(window.project):  # each test starts from an empty outline
        outline.remove(window.project, item.id)


def _folder(window) -> Path:
    return Path(window.project.path).parent


def _workbook(window, wave: str) -> pd.DataFrame:
    # First header row: short names; second: question text (skipped).
    path = _folder(window) / f"participant_survey_{wave}.xlsx"
    return pd.read_excel(path, header=0, skiprows=[1], engine="openpyxl")


def _manifest(window) -> dict:
    return json.loads((_folder(window) / "manifest.json").read_text(encoding="utf-8"))


def _table_texts(table) -> list[list[str]]:
    return [
        [table.item(r, c).text() if table.item(r, c) else "" for c in range(table.columnCount())]
        for r in range(table.rowCount())
    ]


# ---------------------------------------------------------------------- the tree node
def test_node_appears_under_the_instrument(window):
    item = window.tree._items[(NodeType.COMPARE, 1, None)]
    assert item.text(0) == "Compare waves"
    parent = item.parent().data(0, Qt.ItemDataRole.UserRole)
    assert parent.type == NodeType.INSTRUMENT and parent.label == INSTRUMENT
    assert window.tree.find(NodeType.COMPARE).instrument_id == parent.instrument_id


def test_no_node_with_a_single_wave(small_project_path):
    with Project.open(small_project_path) as project:
        types = [node.type for node, _parent in project_nodes(project)]
    assert NodeType.WAVE in types and NodeType.COMPARE not in types


# ---------------------------------------------------------------------- side by side
def test_defaults_to_the_two_latest_waves(view):
    assert view.chosen_waves() == ("2026", "2027")
    assert view.tabs.tabText(0) == "Side by side"


def test_comparison_shows_what_compute_table_computes(view, window):
    assert view.select_variable("overall_satisfaction")
    expected = compute_table(window.project, SPEC)
    assert view.result().spec == SPEC
    assert shown_columns(view) == list(expected.columns)
    assert shown_rows(view) == [[c.display for c in row] for row in expected.rows]
    assert view.base_label.text() == expected.base == "Answered — 2026: n = 351; 2027: n = 370"


def test_comparison_counts_agree_with_the_workbooks(view, window):
    """Counts and the change in points worked out with pandas from the two source files."""
    view.select_variable("overall_satisfaction")
    rows = {r[0]: r for r in shown_rows(view)}
    cols = shown_columns(view)
    counts = {
        w: _workbook(window, w)["overall_satisfaction"].value_counts() for w in SPEC.compare_waves
    }
    bases = {w: int(c.sum()) for w, c in counts.items()}
    assert rows["Total (base)"][cols.index("2026 count")] == f"{bases['2026']:,}"
    assert rows["Total (base)"][cols.index("2027 count")] == f"{bases['2027']:,}"
    for level in ("Neither satisfied nor dissatisfied", "Satisfied", "Very satisfied"):
        for wave in ("2026", "2027"):
            n = int(counts[wave][level])
            assert rows[level][cols.index(f"{wave} count")] == f"{n:,}"
            assert rows[level][cols.index(f"{wave} %")] == f"{100 * n / bases[wave]:.1f}%"
        change = 100 * (
            counts["2027"][level] / bases["2027"] - counts["2026"][level] / bases["2026"]
        )
        assert rows[level][cols.index("Change 2026 to 2027 (points)")] == f"{change:+.1f}"
    # One 2027 respondent was very dissatisfied (pandas): hidden, with a second cell so that
    # it cannot be worked out from the base; their percentages and change are hidden too.
    assert int(counts["2027"]["Very dissatisfied"]) == 1
    assert rows["Very dissatisfied"][cols.index("2027 count")] == "<5"
    assert rows["Dissatisfied"][cols.index("2027 count")] == "–"
    assert rows["Dissatisfied"][cols.index("Change 2026 to 2027 (points)")] == ""


def test_wording_change_is_marked(view, window):
    changed = next(c for c in _manifest(window)["wave_changes"] if c["change"] == "reworded_level")
    name = changed["variables"][0]
    assert view.select_variable(name)
    assert not view.wording_label.isHidden()
    text = view.wording_label.text()
    assert changed["new"] in text and changed["old"] in text and "Wording changed" in text
    item = next(i for i in view._selectable_items() if i.data(0, Qt.ItemDataRole.UserRole) == name)
    assert "(wording changed)" in item.text(0)
    # An unchanged question carries no mark.
    assert view.select_variable("overall_satisfaction")
    assert view.wording_label.isHidden()


def test_search_narrows_the_list(view, qtbot):
    qtbot.keyClicks(view.search_edit, "satisf")
    shown = [
        i.data(0, Qt.ItemDataRole.UserRole) for i in view._selectable_items() if not i.isHidden()
    ]
    assert shown == ["overall_satisfaction"]


def test_keep_for_report_adds_the_comparison(view, window, qtbot):
    view.select_variable("overall_satisfaction")
    before = len(outline.items(window.project))
    view.finding_edit.setText("Slightly more participants were satisfied in 2027.")
    qtbot.mouseClick(view.keep_button, Qt.MouseButton.LeftButton)
    items = outline.items(window.project)
    assert len(items) == before + 1
    kept = items[-1]
    assert kept.spec.compare_waves == ("2026", "2027")
    assert kept.spec.variable == "overall_satisfaction"
    assert kept.chart == "waves"
    assert kept.finding == "Slightly more participants were satisfied in 2027."
    assert "Kept" in view.last_message


def test_copy_puts_the_three_formats(view, window):
    view.select_variable("overall_satisfaction")
    assert view.copy_table()
    mime = QApplication.clipboard().mimeData()
    expected = compute_table(window.project, SPEC)
    assert mime.html() == table_html(expected)
    assert mime.text() == table_text(expected)
    assert view.copy_chart()
    mime = QApplication.clipboard().mimeData()
    assert bytes(mime.data("image/png"))[:8] == b"\x89PNG\r\n\x1a\n"
    assert mime.text().startswith(expected.title)


def test_same_wave_twice_gives_a_plain_message(view):
    view.set_waves("2027", "2027")
    assert view.result() is None
    assert view.error_text == "Choose two different waves to compare."
    assert not view.keep_button.isEnabled()
    view.set_waves("2026", "2027")
    assert view.result() is not None


def test_a_battery_item_is_compared_alone(view):
    assert view.select_variable("agree_3")
    assert view.result().table_type == "waves"
    assert view.result().spec.variable == "agree_3"


# ---------------------------------------------------------------------- same people
def test_match_rate_as_in_the_manifest(view, window):
    view.show_tab(TAB_PEOPLE)
    overlap = _manifest(window)["overlap"]
    n_2027 = _manifest(window)["waves"]["2027"]["unique_respondents"]
    assert (overlap["returning_respondents"], n_2027, overlap["pct_of_2027_respondents"]) == (
        245,
        409,
        59.9,
    )
    text = view.match_label.text()
    assert "<b>245 of 409</b> people in wave 2027 also answered in wave 2026" in text
    assert "<b>59.9 %</b>" in text
    # The other way round, from the 2026 workbook with pandas (first submission per id).
    ids_2026 = set(_workbook(window, "2026")["resp_id"].astype(str))
    ids_2027 = set(_workbook(window, "2027")["resp_id"].astype(str))
    both = len(ids_2026 & ids_2027)
    assert both == 245
    assert f"<b>{both} of {len(ids_2026)}</b> people in wave 2026" in text
    assert f"{100 * both / len(ids_2026):.1f} %" in text


def test_unmatched_comparison_with_its_caution(view, window):
    view.show_tab(TAB_PEOPLE)
    assert view.differ_caution.text() == MATCH_CAUTION
    assert "descriptive" in MATCH_CAUTION and "not proof of a cause" in MATCH_CAUTION
    match = match_respondents(window.project, "2026", "2027", instrument=INSTRUMENT)
    assert view.match().to_json() == match.to_json()
    rows = _table_texts(view.differ_table)
    assert len(rows) == len(match.comparison)
    for shown, row in zip(rows, match.comparison):
        if row["statistic"] == "percent" and row["matched"] is not None:
            assert shown[1] == row["level"]
            assert shown[2] == f"{row['matched']:.1f}% ({row['n_matched']:,})"
        if row["difference"] is None and row["matched"] is None:
            assert shown[2] == "–"
    # Within wave 2027 instead: those who came back against the newcomers.
    view.compared_combo.setCurrentIndex(view.compared_combo.findData("b"))
    assert view.match().compared_in == "2027"


def test_transition_table_as_transition_table(view, window):
    view.show_tab(TAB_PEOPLE)
    assert view.select_transition("overall_satisfaction")
    tr = transition_table(window.project, "overall_satisfaction", "2026", "2027")
    expected = tr.text_rows()
    table = view.transition_table
    header = [
        table.horizontalHeaderItem(c).text().replace("\n", " ") for c in range(table.columnCount())
    ]
    assert header == expected[0]
    assert _table_texts(table) == expected[1:]
    assert view.transition().to_json() == tr.to_json()
    # The core hides up / same / down here (they would reveal a small cell); so does the view.
    assert tr.moved_up is None and "Moved up: <b>hidden</b>" in view.transition_summary.text()
    assert "would let a small count be worked out" in view.transition_notes.text()


def test_transition_counts_agree_with_the_workbooks(view, window):
    """Pairs and shown cells recounted with pandas: first submission per id, both answered."""
    view.show_tab(TAB_PEOPLE)
    view.select_transition("overall_satisfaction")
    frames = []
    for wave in ("2026", "2027"):
        f = _workbook(window, wave).drop_duplicates("resp_id", keep="first")
        frames.append(f[["resp_id", "overall_satisfaction"]])
    pairs = frames[0].merge(frames[1], on="resp_id", suffixes=("_a", "_b")).dropna()
    levels = view.transition().levels
    counts = pd.crosstab(pairs["overall_satisfaction_a"], pairs["overall_satisfaction_b"])
    counts = counts.reindex(index=levels, columns=levels, fill_value=0)
    rows = _table_texts(view.transition_table)
    assert rows[-1][-1] == f"{len(pairs):,}" == "208"
    checked = 0
    for row in rows[:-1]:
        for level, text in zip(levels, row[1:-1]):
            if text.isdigit():  # hidden cells show "<5" or "–"
                assert int(text) == int(counts.loc[row[0], level]), (row[0], level)
                checked += 1
        if row[-1].isdigit():
            assert int(row[-1]) == int(counts.loc[row[0]].sum())
    assert checked >= 10


def test_transition_of_an_unordered_question_is_not_offered(view):
    assert view.transition_combo.findData("track") < 0
    assert view.transition_combo.findData("agree_1") >= 0


# ---------------------------------------------------------------------- kept results
def test_kept_results_recomputed_for_another_wave(view, window, qtbot):
    project = window.project
    spec = TableSpec("overall_satisfaction", chart="column")
    outline.keep(project, spec, finding="Most were satisfied.")
    outline.keep(project, TableSpec("age", chart="histogram"))
    view.show_tab(TAB_KEPT)
    view.set_kept_wave("2026")
    versions = view.kept_versions()
    assert [v[0].spec.variable for v in versions] == ["overall_satisfaction", "age"]
    assert all(result is not None for _item, result, _msg in versions)
    view.open_kept(0)
    expected = compute_table(project, spec.with_changes(wave="2026"))
    shown = view.kept_preview()
    assert [[c.display for c in r] for r in shown.rows] == [
        [c.display for c in r] for r in expected.rows
    ]
    assert "— wave 2026" in view.kept_title.text()
    before = len(outline.items(project))
    qtbot.mouseClick(view.keep_version_button, Qt.MouseButton.LeftButton)
    items = outline.items(project)
    assert len(items) == before + 1
    assert items[-1].spec.wave == "2026" and items[-1].spec.variable == "overall_satisfaction"
    assert items[-1].title.endswith("— wave 2026")
    # The list follows the outline: the new version is listed too.
    assert len(view.kept_versions()) == before + 1


def test_kept_results_as_a_comparison(view, window):
    project = window.project
    outline.keep(project, TableSpec("overall_satisfaction", chart="column"))
    outline.keep(project, TableSpec("age", chart="histogram"))
    view.show_tab(TAB_KEPT)
    view.set_kept_wave("2027", compare_with="2026")
    (sat_item, sat, sat_msg), (age_item, age, age_msg) = view.kept_versions()
    assert sat_msg == "" and sat.table_type == "waves"
    assert sat.spec.compare_waves == ("2026", "2027")
    assert [[c.display for c in r] for r in sat.rows] == [
        [c.display for c in r] for r in compute_table(project, SPEC).rows
    ]
    # A number has no answer categories to put side by side: a plain message, no result.
    assert age is None and "cannot be compared across waves" in age_msg
    assert view.kept_list.topLevelItem(1).text(1) == age_msg
    view.open_kept(1)
    assert not view.kept_message.isHidden() and not view.keep_version_button.isEnabled()


def test_empty_outline_says_what_to_do(view):
    view.show_tab(TAB_KEPT)
    assert view.kept_versions() == []
    assert "Nothing is kept for the report yet" in view.kept_status.text()


# ---------------------------------------------------------------------- following changes
def test_a_cleaning_decision_reaches_the_comparison(view, window):
    from core.ledger import Action, Decision, record, withdraw

    project = window.project
    view.select_variable("overall_satisfaction")
    wave = project.find_wave("2027", INSTRUMENT)
    raw = project.raw_table(wave.id)
    row = int((raw["overall_satisfaction"].astype(str) == "Satisfied").to_numpy().argmax())
    decision = Decision(
        Action.SET_MISSING, "Answer given twice on paper", ("overall_satisfaction",), row=row
    )
    ids, _changes = record(project, wave.id, [decision])
    try:
        cols = shown_columns(view)
        rows = {r[0]: r for r in shown_rows(view)}
        # One answer fewer in 2027 (147 - 1 and 370 - 1); 2026 unchanged.
        assert rows["Satisfied"][cols.index("2027 count")] == "146"
        assert rows["Total (base)"][cols.index("2027 count")] == "369"
        assert rows["Total (base)"][cols.index("2026 count")] == "351"
    finally:
        withdraw(project, wave.id, ids, "Test finished")
    rows = {r[0]: r for r in shown_rows(view)}
    assert rows["Total (base)"][shown_columns(view).index("2027 count")] == "370"
