"""``plaincount-cli group``: cut points, equal widths and quantiles on a small fixture.

Counts are checked against pandas.cut / pandas.qcut (the reference implementation), with
right=False because a value on a cut point belongs to the group above.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from core.cli.main import main
from core.codebook import Variable
from core.ledger import Action, Decision, record
from core.project import Project
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from tests.core.tables_helpers import make_project

# Invented ages of 20 respondents, one declined (-99), one blank.
AGES = [19, 22, 24, 25, 27, 30, 31, 34, 35, 38, 41, 44, 45, 50, 52, 58, 63, 70, -99, None]


@pytest.fixture
def project_path(tmp_path):
    frame = pd.DataFrame({"resp_id": [f"R{i}" for i in range(len(AGES))], "age": AGES})
    variables = [
        Variable("resp_id", "Respondent", "identifier"),
        Variable("age", "Age in years", "numeric", missing_codes={"-99": "declined"}),
    ]
    make_project(tmp_path, frame, variables).close()
    return tmp_path / "t.plaincount"


def answered() -> pd.Series:
    return pd.Series([a for a in AGES if a is not None and a != -99], dtype=float)


def run_json(capsys, *argv: str) -> dict:
    assert main([*argv, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_cut_points_match_pandas_cut(project_path, capsys):
    out = run_json(
        capsys,
        "group",
        str(project_path),
        "age",
        "--cuts",
        "25,35,45",
        "--instrument",
        "Participant survey",
    )
    assert out["name"] == "age_group" and out["method"] == "cuts"
    assert out["levels"] == ["Under 25", "25–34", "35–44", "45 and over"]
    # Reference: pandas.cut with right=False (closed at the bottom, open at the top).
    ref = pd.cut(answered(), [-np.inf, 25, 35, 45, np.inf], right=False).value_counts(sort=False)
    assert [g["count"] for g in out["groups"]] == ref.tolist() == [3, 5, 4, 6]
    assert out["n_answered"] == 18
    with Project.open(project_path) as p:
        var = p.codebook(p.instruments()[0].id)["age_group"]
        assert var.derived_from == "age" and var.cut_points == (25.0, 35.0, 45.0)


def test_equal_widths_match_pandas_cut(project_path, capsys):
    out = run_json(
        capsys, "group", str(project_path), "age", "--equal-width", "3", "--name", "age_band"
    )
    x = answered()
    # Equal widths over 19..70: cuts at 36 and 53 (19 + 17, 19 + 34), whole numbers already.
    assert out["cut_points"] == [36.0, 53.0]
    # Reference: pandas.cut with the same edges and right=False.
    ref = pd.cut(x, [-np.inf, 36, 53, np.inf], right=False).value_counts(sort=False)
    assert [g["count"] for g in out["groups"]] == ref.tolist() == [9, 6, 3]
    assert out["levels"] == ["Under 36", "36–52", "53 and over"]


def test_quantiles_match_pandas_qcut(project_path, capsys):
    out = run_json(capsys, "group", str(project_path), "age", "--quantiles", "4")
    x = answered()
    # Reference: pandas.qcut quartile edges (27.75, 36.5, 48.75 by linear interpolation),
    # rounded up for whole numbers as the grouping does; counts follow pandas.cut on them.
    edges = pd.qcut(x, 4, retbins=True)[1]
    cuts = [float(np.ceil(e)) for e in edges[1:-1]]
    assert out["cut_points"] == cuts == [28.0, 37.0, 49.0]
    ref = pd.cut(x, [-np.inf, *cuts, np.inf], right=False).value_counts(sort=False)
    assert [g["count"] for g in out["groups"]] == ref.tolist() == [5, 4, 4, 5]


def test_text_output_and_plain_errors(project_path, capsys):
    assert main(["group", str(project_path), "age", "--cuts", "30"]) == 0
    text = capsys.readouterr().out
    assert "Created age_group: age in 2 groups." in text and "30 and over" in text
    assert main(["group", str(project_path), "resp_id", "--cuts", "3"]) == 2
    assert "only numbers can be grouped" in capsys.readouterr().err
    assert main(["group", str(project_path), "age", "--cuts", "20,old"]) == 2
    assert "numbers separated by commas" in capsys.readouterr().err
    assert main(["group", str(project_path), "age", "--name", "resp_id", "--cuts", "3"]) == 2
    assert "already has a variable called 'resp_id'" in capsys.readouterr().err


def test_derived_variable_follows_a_correction(project_path, capsys):
    run_json(capsys, "group", str(project_path), "age", "--cuts", "25,35,45")
    with Project.open(project_path) as p:
        before = compute_table(p, TableSpec("age_group", min_cell=0)).data["counts"]
        # Respondent R17 (row 17, age 70) was really 23: the group moves with the correction.
        record(
            p,
            p.find_wave().id,
            [Decision(Action.CORRECT, "Typo", ("age",), row=17, old_value="70", new_value="23")],
        )
        after = compute_table(p, TableSpec("age_group", min_cell=0)).data["counts"]
    assert after["Under 25"] == before["Under 25"] + 1 == 4
    assert after["45 and over"] == before["45 and over"] - 1 == 5
