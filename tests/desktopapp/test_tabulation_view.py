"""The tables view on the demo project: question list, break-downs, options, chart, keeping.

Numbers shown are checked two ways: against ``compute_table`` with the same specification
(the view must show exactly what the core computes), and against counts made with pandas
straight from the demo's 2027 workbook (an outside check of what the table says).
"""

from __future__ import annotations

import pandas as pd
import pytest
from PySide6.QtCore import Qt

from core import outline
from core.charts import chart_label, chart_types
from core.tables.build import compute_table

from .demo_window import fresh_tables_view, open_demo_window, shown_columns, shown_rows


@pytest.fixture(scope="module")
def window(tmp_path_factory, qapp):
    win = open_demo_window(tmp_path_factory.mktemp("tabulation"))
    yield win
    win.close_project()
    win.close()


@pytest.fixture
def view(window):
    v = fresh_tables_view(window)
    yield v


def _display(result) -> list[list[str]]:
    return [[c.display for c in row] for row in result.rows]


def _row(view, label: str) -> list[str]:
    return next(r for r in shown_rows(view) if r[0] == label)


def _col(view, name: str) -> int:
    return shown_columns(view).index(name)


# ---------------------------------------------------------------------- the question list
def test_list_groups_batteries_rankings_and_choices(view):
    tree = view.variable_tree
    tops = {
        tree.topLevelItem(i).data(0, Qt.ItemDataRole.UserRole): tree.topLevelItem(i)
        for i in range(tree.topLevelItemCount())
    }
    # Identifiers, dates and open comments have no table.
    for absent in ("resp_id", "started_at", "finished_at", "best_part", "change_one_thing"):
        assert absent not in tops
    # Groups are rows of their own, with their items beneath, in questionnaire order.
    assert tops["agree"].childCount() == 8
    assert tops["rank"].childCount() == 5
    assert tops["use"].childCount() == 3
    assert "barriers" in tops  # a choose-all question kept in one column
    names = list(tops)
    assert names.index("household_income_band") < names.index("agree") < names.index("use")
    assert names.index("rank") < names.index("barriers") < names.index("overall_satisfaction")
    # Battery items have tables of their own; ranking options only make sense together.
    agree_child = tops["agree"].child(2)
    assert agree_child.data(0, Qt.ItemDataRole.UserRole) == "agree_3"
    rank_child = tops["rank"].child(0)
    assert rank_child.data(0, Qt.ItemDataRole.UserRole) == ""
    assert not rank_child.flags() & Qt.ItemFlag.ItemIsSelectable


def test_search_narrows_the_list(view, qtbot):
    qtbot.keyClicks(view.search_edit, "satisf")
    tree = view.variable_tree
    visible = [
        tree.topLevelItem(i).data(0, Qt.ItemDataRole.UserRole)
        for i in range(tree.topLevelItemCount())
        if not tree.topLevelItem(i).isHidden()
    ]
    assert visible == ["overall_satisfaction"]
    view.search_edit.clear()
    view.search_edit.setText("workload")  # the words of one battery item find its group
    agree = next(
        tree.topLevelItem(i)
        for i in range(tree.topLevelItemCount())
        if tree.topLevelItem(i).data(0, Qt.ItemDataRole.UserRole) == "agree"
    )
    assert not agree.isHidden()
    shown_items = [
        agree.child(j).data(0, Qt.ItemDataRole.UserRole)
        for j in range(agree.childCount())
        if not agree.child(j).isHidden()
    ]
    assert shown_items == ["agree_3"]


# ---------------------------------------------------------------------- numbers shown
def test_frequency_table_shows_the_core_numbers_and_the_source_counts(window, view):
    assert view.select_variable("track")
    result = view.result()
    assert result is not None and result.table_type == "frequency"
    # Exactly the core's table: same header and same cell texts.
    expected = compute_table(window.project, view.current_spec())
    assert shown_columns(view) == expected.columns
    assert shown_rows(view) == _display(expected)
    # And the counts agree with pandas on the workbook itself (track has no cleaning edits).
    from .demo_window import source_frame

    counts = source_frame(window)["track"].value_counts()
    for level in ("Electrical", "HVAC", "Solar install", "Welding"):
        assert _row(view, level)[_col(view, "Count")] == f"{counts[level]:,}"
    assert int(counts.sum()) == 404
    assert view.base_label.text() == "Respondents who answered, n = 404 of 410"
    # Numbers are right-aligned, labels left-aligned.
    model = view.table.model()
    align = model.data(model.index(0, 1), Qt.ItemDataRole.TextAlignmentRole)
    assert align & Qt.AlignmentFlag.AlignRight
    align0 = model.data(model.index(0, 0), Qt.ItemDataRole.TextAlignmentRole)
    assert align0 & Qt.AlignmentFlag.AlignLeft


def test_breakdown_and_percent_base_change_the_numbers(window, view):
    from .demo_window import source_frame

    view.select_variable("overall_satisfaction")
    view.set_breakdown("cohort")
    assert view.result().table_type == "crosstab"
    assert view.percent_combo.isVisible() and view.tests_check.isVisible()
    assert view.title_label.text().endswith("— by cohort")

    frame = source_frame(window).dropna(subset=["cohort", "overall_satisfaction"])
    counts = pd.crosstab(frame["cohort"], frame["overall_satisfaction"])
    col = _col(view, "Satisfied %")
    # Row percentages (the default): share of each cohort; reference pandas normalize="index".
    rows = pd.crosstab(frame["cohort"], frame["overall_satisfaction"], normalize="index")
    assert _row(view, "Spring")[col] == f"{100 * rows.loc['Spring', 'Satisfied']:.1f}%"
    assert _row(view, "Spring")[_col(view, "Satisfied n")] == str(counts.loc["Spring", "Satisfied"])

    for base, normalize in (("column", "columns"), ("total", "all")):
        view.set_option("percent", base)
        spec = view.current_spec()
        assert spec.percent == base
        assert shown_rows(view) == _display(compute_table(window.project, spec))
        ref = pd.crosstab(frame["cohort"], frame["overall_satisfaction"], normalize=normalize)
        for cohort in ("Fall", "Spring", "Summer"):
            assert _row(view, cohort)[col] == f"{100 * ref.loc[cohort, 'Satisfied']:.1f}%"
    # 53 of 146 satisfied respondents are in the Spring cohort: 36.3 % (by hand).
    view.set_option("percent", "column")
    assert _row(view, "Spring")[col] == "36.3%"


def test_suppression_threshold(window, view):
    from .demo_window import source_frame

    view.select_variable("overall_satisfaction")
    view.set_breakdown("cohort")
    col = _col(view, "Very dissatisfied n")
    assert [_row(view, c)[col] for c in ("Fall", "Spring", "Summer")] == ["<5", "<5", "<5"]
    model = view.table.model()
    r = [row[0] for row in shown_rows(view)].index("Fall")
    assert "fewer than 5 people" in model.data(model.index(r, col), Qt.ItemDataRole.ToolTipRole)
    assert not view.option_caution.isVisible()

    view.set_option("min_cell", 0)  # off: the real counts, and a caution
    assert view.current_spec().min_cell == 0
    frame = source_frame(window).dropna(subset=["cohort", "overall_satisfaction"])
    counts = pd.crosstab(frame["cohort"], frame["overall_satisfaction"])
    for cohort in ("Fall", "Spring", "Summer"):
        assert _row(view, cohort)[col] == str(counts.loc[cohort, "Very dissatisfied"])
    assert view.option_caution.isVisible()
    assert "can identify people" in view.option_caution.text()

    view.set_option("min_cell", 30)  # a stricter rule hides more
    hidden = sum(cell in ("<30", "–") for row in shown_rows(view) for cell in row)
    assert hidden > 6
    assert shown_rows(view) == _display(compute_table(window.project, view.current_spec()))


def test_options_follow_the_table(window, view):
    view.select_variable("age")
    assert view.sd_combo.isVisible() and not view.percent_combo.isVisible()
    view.set_option("sd", "sample")
    assert shown_rows(view) == _display(compute_table(window.project, view.current_spec()))
    # Reference: pandas' sample standard deviation (ddof=1) of the ages in the workbook,
    # leaving out the codebook's missing code (-99 = declined).
    from .demo_window import source_frame

    ages = pd.to_numeric(source_frame(window)["age"], errors="coerce")
    ages = ages[ages.notna() & (ages != -99)]
    sd_row = _row(view, "Standard deviation")
    assert sd_row[-1] == f"{ages.std(ddof=1):,.2f}"  # the "All" column

    view.select_variable("rank")
    assert view.borda_combo.isVisible() and not view.sd_combo.isVisible()
    zero = _row(view, "Transit pass")[1]
    view.set_option("borda", "modified")
    modified = _row(view, "Transit pass")[1]
    assert zero != modified
    assert shown_rows(view) == _display(compute_table(window.project, view.current_spec()))

    view.select_variable("agree")
    assert view.sort_combo.isVisible() and view.mean_check.isVisible()
    assert view.sort_combo.currentText() == "In answer order"
    view.set_option("sort", "frequency")
    agreeing = [
        float(r[_col(view, "% agreeing (top 2)")].rstrip("%"))
        for r in shown_rows(view)
        if r[_col(view, "% agreeing (top 2)")] not in ("", "–")
    ]
    assert agreeing == sorted(agreeing, reverse=True)
    view.set_option("show_mean", True)
    assert "Mean of codes" in shown_columns(view)
    assert "equally spaced" in view.option_caution.text()


def test_chart_types_offered_and_switched(window, view, qtbot):
    view.select_variable("overall_satisfaction")
    view.set_breakdown("cohort")
    result = view.result()
    offered = [view.chart_combo.itemText(i) for i in range(view.chart_combo.count())]
    assert offered == [chart_label(t) for t in chart_types(result)]
    assert offered[0] == "Diverging bars"
    assert view.chart_type() == "diverging"
    view.chart.render_now()
    assert view.chart.message == ""
    view.set_option("chart", "stacked100")
    assert view.chart_type() == "stacked100"
    assert view.result() is result  # a new chart type redraws; the table is not recomputed
    view.chart.render_now()
    axes = view.chart_figure().axes  # drawn on a worker; the window shows its pixels
    assert axes and any(len(ax.patches) for ax in axes)
    # The pixels are drawn at the chart pane's own size (again after it is resized).
    canvas = view.chart.canvas
    ratio = canvas.devicePixelRatioF()

    def drawn_at_pane_size() -> bool:
        shape = view._rendered.rgba.shape
        return shape[:2] == (int(canvas.height() * ratio), int(canvas.width() * ratio))

    qtbot.waitUntil(drawn_at_pane_size, timeout=5000)
    before = canvas.width()
    total = sum(view.result_splitter.sizes())
    view.result_splitter.setSizes([total - before - 100, before + 100])
    qtbot.waitUntil(lambda: canvas.width() > before and drawn_at_pane_size(), timeout=5000)
    # A new option keeps the chosen chart type when it still fits.
    view.set_option("percent", "total")
    assert view.chart_type() == "stacked100"
    # A new question starts from its own default.
    view.select_variable("age")
    assert view.chart_type() == chart_types(view.result())[0]


def test_keep_for_report_stores_the_spec_and_the_finding(window, view, qtbot):
    project = window.project
    before = len(outline.items(project))
    view.select_variable("overall_satisfaction")
    view.set_breakdown("cohort")
    view.set_option("chart", "stacked100")
    qtbot.keyClicks(view.finding_edit, "About two in three of every cohort are satisfied.")
    qtbot.mouseClick(view.keep_button, Qt.MouseButton.LeftButton)
    kept = outline.items(project)
    assert len(kept) == before + 1
    item = kept[-1]
    assert item.finding == "About two in three of every cohort are satisfied."
    assert item.spec.variable == "overall_satisfaction"
    assert item.spec.by == ("cohort",)
    assert item.spec.chart == "stacked100"
    assert item.title == view.result().title
    assert view.finding_edit.text() == ""
    assert view.last_message.startswith("Kept")
    # The kept result recomputes to the numbers shown.
    again = outline.result_for(project, item)
    assert _display(again) == shown_rows(view)
    window.undo.undo_action.trigger()  # one undoable step
    assert len(outline.items(project)) == before


def test_methods_link_opens_the_matching_section(view):
    from desktopapp.views.tabulation_view import METHODS_GUIDE

    opened = []
    view.open_url = opened.append
    view.select_variable("overall_satisfaction")
    view.set_breakdown("cohort")
    url = view.open_methods()
    assert opened == [url]
    assert url.isLocalFile() and url.toLocalFile() == str(METHODS_GUIDE)
    assert url.fragment() == "cross-tabulations"
    # The anchor is the GitHub-style slug of a real heading in the guide.
    assert "## Cross-tabulations" in METHODS_GUIDE.read_text(encoding="utf-8")
    view.select_variable("rank")
    assert view.open_methods().fragment() == "rankings"


def test_unstable_percentages_are_marked(window, view):
    # Two break-downs make small groups (such as Nonbinary respondents in the Spring cohort):
    # with small counts shown, their percentages are flagged and shaded.
    view.select_variable("completed")
    view.set_breakdown("gender", "cohort")
    assert not view.unstable_legend.isVisibleTo(view)  # hidden counts hide their percentages
    view.set_option("min_cell", 0)
    result = view.result()
    flagged = [
        (r, c)
        for r, row in enumerate(result.rows)
        for c, cell in enumerate(row)
        if cell.flag == "unstable"
    ]
    assert flagged
    # Reference: groups of fewer than 30 respondents (the unstable base; common practice,
    # no source) counted with pandas in the workbook.
    from .demo_window import source_frame

    frame = source_frame(window).dropna(subset=["completed", "gender", "cohort"])
    frame = frame[frame["gender"] != "Prefer not to say"]  # a missing code (declined)
    sizes = frame.groupby(["gender", "cohort"]).size()
    small = {f"{g} / {c}" for (g, c), n in sizes.items() if 0 < n < 30}
    assert "Nonbinary / Spring" in small
    assert {result.rows[r][0].display for r, _ in flagged} == small
    model = view.table.model()
    r, c = flagged[0]
    assert model.data(model.index(r, c), Qt.ItemDataRole.BackgroundRole) is not None
    assert view.unstable_legend.isVisibleTo(view)


def test_a_codebook_change_recomputes_the_table(window, view):
    from dataclasses import replace

    view.select_variable("track")
    project = window.project
    inst = project.instruments()[0]
    codebook = project.codebook(inst.id)
    var = codebook["track"]
    renamed = replace(var, question="Which trade are you training for?")
    project.set_codebook(inst.id, codebook.with_variable(renamed), label="Reword track")
    # The window hears of the change and the view computes the table again.
    assert view.title_label.text() == "Which trade are you training for?"
    window.undo.undo_action.trigger()
    assert view.title_label.text() == "Which trade track are you in?"


def test_test_for_sampled_data_matches_scipy(window, view):
    from scipy.stats import chi2_contingency

    from .demo_window import source_frame

    view.select_variable("track")
    view.set_breakdown("cohort")
    assert view.tests_check.isVisible()
    view.tests_check.setChecked(True)
    assert view.current_spec().tests is True
    assert "sample" in view.option_caution.text()
    # Reference: scipy's Pearson chi-square (no continuity correction) on the workbook's
    # track-by-cohort counts.
    frame = source_frame(window).dropna(subset=["track", "cohort"])
    table = pd.crosstab(frame["cohort"], frame["track"])
    chi2, p, dof, _ = chi2_contingency(table.to_numpy(), correction=False)
    note = next(n for n in view.notes_label.text().splitlines() if "Chi-square" in n)
    assert f"X² = {chi2:.2f}, df = {dof}, p = {p:.3f}" in note


def test_a_question_that_stops_being_tabulable_leaves_a_plain_message(window, view):
    from dataclasses import replace

    from core.kinds import Kind

    assert not view.select_variable("best_part")  # open comments are not listed
    assert view.select_variable("track")
    project = window.project
    inst = project.instruments()[0]
    codebook = project.codebook(inst.id)
    as_text = replace(codebook["track"], kind=Kind.TEXT, levels=())
    project.set_codebook(inst.id, codebook.with_variable(as_text), label="Track as text")
    try:
        # Open comments have no table: the question leaves the list and the view says so
        # in words, with nothing to copy or keep.
        assert "track" not in [e.name for e in view._entries]
        assert view.result() is None
        assert view.status_label.text() == "Choose a question on the left."
        assert not view.keep_button.isEnabled() and not view.copy_table_button.isEnabled()
        assert not view.copy_table()
    finally:
        window.undo.undo_action.trigger()
    assert "track" in [e.name for e in view._entries]


def test_missing_answers_shown_as_rows(window, view):
    from .demo_window import source_frame

    view.select_variable("track")
    view.set_option("treatment", "show-missing")
    result = view.result()
    assert shown_rows(view) == _display(compute_table(window.project, view.current_spec()))
    missing = [r for r, role in enumerate(result.row_roles) if role == "missing"]
    assert missing
    # Reference: the 6 blank track cells of the workbook (pandas isna), as a row in italics.
    blanks = int(source_frame(window)["track"].isna().sum())
    assert blanks == 6
    model = view.table.model()
    row = missing[0]
    assert shown_rows(view)[row][1] == str(blanks)
    assert model.data(model.index(row, 0), Qt.ItemDataRole.FontRole).italic()
