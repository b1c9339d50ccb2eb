"""Rating-scale items and batteries: level order, % agreeing, and no mean unless asked."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from core.codebook import Variable
from core.tables.build import compute_table
from core.tables.likert import mean_of_codes, median_level, scale_parts
from core.tables.spec import TableSpec
from tests.core.tables_helpers import anes96, make_project

SCALE = ["Strongly disagree", "Disagree", "Neutral", "Agree", "Strongly agree"]


@pytest.fixture(scope="module")
def battery(tmp_path_factory):
    # Invented answers; the expected figures are computed with pandas below.
    rng = np.random.default_rng(7)
    n = 120
    frame = pd.DataFrame(
        {
            "a1": rng.choice(SCALE, n, p=[0.05, 0.1, 0.15, 0.4, 0.3]),
            "a2": rng.choice(SCALE, n, p=[0.3, 0.3, 0.2, 0.1, 0.1]),
            "a3": rng.choice(SCALE + [None], n, p=[0.1, 0.1, 0.2, 0.3, 0.2, 0.1]),
        }
    )
    variables = [
        Variable("a1", "The course was useful", "likert", levels=SCALE, group="agree"),
        Variable(
            "a2",
            "The workload felt unmanageable",
            "likert",
            levels=SCALE,
            group="agree",
            keying="negative",
        ),
        Variable("a3", "Instructors explained clearly", "likert", levels=SCALE, group="agree"),
    ]
    p = make_project(tmp_path_factory.mktemp("likert"), frame, variables)
    yield p, frame
    p.close()


def _no_mean_anywhere(result) -> bool:
    keys = " ".join(result.data).lower()
    text = " ".join(result.columns + [c.display for row in result.rows for c in row]).lower()
    return "mean" not in keys and "mean" not in text


def test_item_keeps_level_order_and_reports_agreement(battery):
    project, frame = battery
    result = compute_table(project, TableSpec("a1"))
    assert result.table_type == "likert"
    assert result.data["levels"] == SCALE  # codebook order, not frequency
    counts = frame["a1"].value_counts()
    n = len(frame)
    assert result.data["agree_pct"] == pytest.approx(
        (counts["Agree"] + counts["Strongly agree"]) / n * 100
    )
    assert result.data["disagree_pct"] == pytest.approx(
        (counts.get("Strongly disagree", 0) + counts.get("Disagree", 0)) / n * 100
    )
    assert result.data["neutral_pct"] == pytest.approx(counts["Neutral"] / n * 100)
    assert result.data["neutral_level"] == "Neutral"
    codes = frame["a1"].map({lv: i for i, lv in enumerate(SCALE)})
    # Median category: the level at the middle of the ordered answers (pandas median of codes).
    assert (
        result.data["median_level"] == SCALE[int(np.ceil(codes.median()))]
        or result.data["median_level"] == SCALE[int(np.floor(codes.median()))]
    )
    assert _no_mean_anywhere(result)
    labels = [row[0].display for row in result.rows]
    assert "% agreeing (top 2)" in labels and "Median answer" in labels


def test_mean_of_codes_only_on_request_and_with_its_caution(battery):
    project, frame = battery
    result = compute_table(project, TableSpec("a1", show_mean=True))
    codes = frame["a1"].map({lv: i + 1 for i, lv in enumerate(SCALE)})
    assert result.data["mean_of_codes"] == pytest.approx(codes.mean())
    assert any("equally spaced, which they are not" in n for n in result.notes)


def test_battery_one_row_per_item_sorted_by_agreement(battery):
    project, frame = battery
    result = compute_table(project, TableSpec("agree", sort="frequency"))
    assert result.table_type == "battery"
    agree = {
        name: ((frame[name] == "Agree") | (frame[name] == "Strongly agree")).sum()
        / frame[name].notna().sum()
        * 100
        for name in ("a1", "a2", "a3")
    }
    assert result.data["agree_pct"] == pytest.approx(agree)
    assert result.data["items"] == sorted(agree, key=lambda k: -agree[k])
    assert result.data["keying"]["a2"] == "negative"
    assert any("(negatively worded)" in row[0].display for row in result.rows)
    assert result.data["bases"]["a3"] == frame["a3"].notna().sum()
    assert _no_mean_anywhere(result)
    plain = compute_table(project, TableSpec("agree"))
    assert plain.data["items"] == ["a1", "a2", "a3"]


def test_scale_parts_and_median():
    assert scale_parts(5) == ([3, 4], [0, 1], 2)
    assert scale_parts(4) == ([2, 3], [0, 1], None)
    assert scale_parts(3) == ([2], [0], 1)
    assert median_level(["a", "b", "c"], np.array([1, 1, 3])) == "c"
    assert median_level(["a", "b", "c"], np.array([0, 0, 0])) is None
    assert mean_of_codes(np.array([1, 0, 1])) == 2.0


def test_anes_seven_point_item(tmp_path):
    # statsmodels anes96 selfLR: {1: 16, 2: 103, 3: 147, 4: 256, 5: 170, 6: 218, 7: 34},
    # median 4 (METHODS.md section 16).
    frame = anes96()[["selfLR"]]
    var = Variable("selfLR", "Left-right", "likert", levels=[str(i) for i in range(1, 8)])
    with make_project(tmp_path, frame, [var]) as p:
        result = compute_table(p, TableSpec("selfLR"))
        assert list(result.data["counts"].values()) == [16, 103, 147, 256, 170, 218, 34]
        assert result.data["median_level"] == "4"
        assert result.data["agree_pct"] == pytest.approx((218 + 34) / 944 * 100)
        assert result.data["neutral_level"] == "4"
