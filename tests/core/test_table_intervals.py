"""Margins of error in tables: Wilson intervals against statsmodels on the anes96 data."""

from __future__ import annotations

import json

import pandas as pd
import pytest
import statsmodels.api as sm
from statsmodels.stats.proportion import proportion_confint

from core.codebook import Codebook, Variable
from core.kinds import Kind
from core.project import Project
from core.response_rates import Dispositions, save_dispositions
from core.sampling import set_wave_design, wilson_interval
from core.tables.build import compute_table
from core.tables.spec import TableSpec

# statsmodels anes96 (1996 American National Election Study extract, 944 respondents):
# PID is the 7-point party identification, 0 = strong Democrat ... 6 = strong Republican
# (labels from memory of the ANES codebook); vote 1 = Dole, 0 = Clinton.
PID_LEVELS = (
    "Strong Democrat",
    "Weak Democrat",
    "Independent Democrat",
    "Independent",
    "Independent Republican",
    "Weak Republican",
    "Strong Republican",
)
# statsmodels anes96: PID counts 200, 180, 108, 37, 94, 150, 175 (pandas value_counts).
PID_COUNTS = dict(zip(PID_LEVELS, (200, 180, 108, 37, 94, 150, 175)))


@pytest.fixture
def anes(tmp_path):
    a = sm.datasets.anes96.load_pandas().data
    raw = pd.DataFrame(
        {
            "pid": [PID_LEVELS[int(v)] for v in a["PID"]],
            "vote": ["Dole" if v == 1 else "Clinton" for v in a["vote"]],
        }
    )
    codebook = Codebook(
        [
            Variable("pid", "Party identification", Kind.ORDINAL, PID_LEVELS),
            Variable("vote", "Vote", Kind.CATEGORICAL, ("Clinton", "Dole")),
        ]
    )
    with Project.create(tmp_path / "anes.plaincount") as proj:
        inst = proj.add_instrument("ANES", codebook)
        wave = proj.add_wave(inst.id, "1996", "anes.csv", b"x", raw)
        yield proj, wave.id


def test_sample_frequency_intervals_match_statsmodels_wilson(anes):
    proj, wave_id = anes
    set_wave_design(proj, wave_id, whole_population=False)
    result = compute_table(proj, TableSpec("pid", intervals=True))
    assert result.data["counts"] == PID_COUNTS
    got = result.data["intervals"]
    for level, count in PID_COUNTS.items():
        low, high = proportion_confint(count, 944, alpha=0.05, method="wilson")
        assert got[level] == pytest.approx([100 * low, 100 * high], abs=1e-9)
    # The range column sits right after the percentage column, one per answer.
    assert result.columns[:4] == ["Answer", "Count", "% of those who answered", "95% range"]
    low, high = proportion_confint(37, 944, method="wilson")
    row = result.rows[PID_LEVELS.index("Independent")]
    assert row[3].display == f"{100 * low:.1f}–{100 * high:.1f}"
    assert row[3].display == "2.9–5.4"  # 37/944 = 3.9 %; the Wilson range is not symmetric
    assert all(len(r) == len(result.columns) for r in result.rows)
    total = result.rows[result.row_roles.index("total")]
    assert total[3].display == ""
    # The caption names the design and the widest range: 200/944, strong Democrats.
    note = next(n for n in result.notes if "Wilson" in n)
    assert "random sample" in note and "finite population" not in note
    widest = next(n for n in result.notes if n.startswith("The widest range"))
    iv = wilson_interval(200, 944)
    assert f"Strong Democrat, is ± {iv.plus_minus_points:.1f} points" in widest
    assert iv.plus_minus_points == pytest.approx(2.6, abs=0.05)


def test_population_size_applies_the_finite_population_correction(anes):
    proj, wave_id = anes
    set_wave_design(proj, wave_id, whole_population=False, population_size=2000)
    result = compute_table(proj, TableSpec("pid", intervals=True))
    for level, count in PID_COUNTS.items():
        iv = wilson_interval(count, 944, population=2000)
        assert result.data["intervals"][level] == pytest.approx(
            [100 * iv.low, 100 * iv.high], abs=1e-12
        )
        low, high = proportion_confint(count, 944, method="wilson")
        # Sampling half the population narrows every range.
        assert iv.high - iv.low < high - low
    assert any("population of 2,000" in n and "finite population" in n for n in result.notes)


def test_whole_population_wave_shows_no_intervals_and_says_why(anes):
    proj, wave_id = anes
    result = compute_table(proj, TableSpec("pid", intervals=True))  # the default design
    assert "intervals" not in result.data
    assert "95% range" not in result.columns
    note = next(n for n in result.notes if n.startswith("No margins of error"))
    assert "whole population" in note and "no sampling error" in note
    assert "not proof" in note
    cross = compute_table(proj, TableSpec("vote", by=("pid",), intervals=True))
    assert "intervals" not in cross.data and not any("range" in c for c in cross.columns)
    assert any(n.startswith("No margins of error") for n in cross.notes)
    # Without the option nothing changes, sample or not.
    set_wave_design(proj, wave_id, whole_population=False)
    plain = compute_table(proj, TableSpec("pid"))
    assert "intervals" not in plain.data
    assert not any("margins of error" in n.lower() for n in plain.notes)


def test_crosstab_intervals_within_groups(anes):
    proj, wave_id = anes
    set_wave_design(proj, wave_id, whole_population=False)
    cross = compute_table(proj, TableSpec("vote", by=("pid",), intervals=True))
    # METHODS §16: 167 of 175 strong Republicans voted for Dole.
    assert cross.data["counts"]["Strong Republican"]["Dole"] == 167
    low, high = proportion_confint(167, 175, method="wilson")
    got = cross.data["intervals"]["Strong Republican"]["Dole"]
    assert got == pytest.approx([100 * low, 100 * high], abs=1e-9)
    assert cross.columns[:7] == [
        "pid",
        "Clinton n",
        "Clinton %",
        "Clinton 95% range",
        "Dole n",
        "Dole %",
        "Dole 95% range",
    ]
    row = cross.rows[cross.data["groups"].index("Strong Republican")]
    assert row[6].display == f"{100 * low:.1f}–{100 * high:.1f}"
    assert all(len(r) == len(cross.columns) for r in cross.rows)
    # The 3 Dole voters among strong Democrats are hidden (below 5): no range, shown as "–".
    assert cross.data["counts"]["Strong Democrat"]["Dole"] is None
    assert cross.data["intervals"]["Strong Democrat"]["Dole"] is None
    hidden = cross.rows[cross.data["groups"].index("Strong Democrat")][6]
    assert hidden.suppressed and hidden.display == "–"
    # Column percentages: within each answer, so the base is the answer's total (Dole 393).
    by_col = compute_table(proj, TableSpec("vote", by=("pid",), percent="column", intervals=True))
    low, high = proportion_confint(167, 393, method="wilson")
    got = by_col.data["intervals"]["Strong Republican"]["Dole"]
    assert got == pytest.approx([100 * low, 100 * high], abs=1e-9)


def test_hidden_cells_get_no_interval(anes):
    proj, wave_id = anes
    set_wave_design(proj, wave_id, whole_population=False)
    # A threshold of 40 hides the 37 independents (and one more count, so theirs cannot be
    # worked out from the total).
    result = compute_table(proj, TableSpec("pid", intervals=True, min_cell=40))
    assert result.data["counts"]["Independent"] is None
    assert result.data["intervals"]["Independent"] is None
    hidden = [lv for lv, n in result.data["counts"].items() if n is None]
    assert len(hidden) == 2
    for lv in hidden:  # read "–" like every hidden cell, never a blank
        cell = result.rows[PID_LEVELS.index(lv)][3]
        assert cell.suppressed and cell.display == "–"
    shown = [lv for lv in PID_LEVELS if lv not in hidden]
    assert all(result.data["intervals"][lv] is not None for lv in shown)


def test_response_rate_in_the_notes(anes):
    proj, wave_id = anes
    assert not any("Response rate" in n for n in compute_table(proj, TableSpec("pid")).notes)
    save_dispositions(proj, wave_id, Dispositions(I=944, P=0, R=200, NC=100, O=56))
    # RR2 = (I + P) / (I + P + R + NC + O) = 944 / 1300 = 72.6 % (AAPOR Standard Definitions).
    notes = compute_table(proj, TableSpec("pid")).notes
    assert "Response rate (AAPOR RR2): 72.6 %." in notes


def test_cli_table_intervals_json(anes, capsys):
    from core.cli.main import main

    proj, wave_id = anes
    set_wave_design(proj, wave_id, whole_population=False)
    path = str(proj.path)
    proj.close()
    assert main(["table", path, "pid", "--intervals", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    low, high = proportion_confint(175, 944, method="wilson")
    assert data["intervals"]["Strong Republican"] == pytest.approx([100 * low, 100 * high])
    assert data["spec"]["intervals"] is True and "95% range" in data["columns"]
