"""plaincount-cli table: text and the documented JSON keys (docs/cli-json.md)."""

from __future__ import annotations

import json

import pytest

from core.cli.main import main
from core.codebook import Variable
from tests.core.tables_helpers import anes96, make_project
from tests.core.test_tables_ranking import CITIES, tennessee_ranks


@pytest.fixture()
def path(tmp_path):
    import pandas as pd

    frame = anes96()[["PID", "vote", "age"]].copy()
    ranks = tennessee_ranks()
    for i, city in enumerate(CITIES):
        frame[f"r_{city}"] = list(ranks[:, i]) * 9 + list(ranks[: len(frame) - 900, i])
    frame = pd.DataFrame(frame)
    variables = [
        Variable("PID", "Party identification", "ordinal", levels=[str(i) for i in range(7)]),
        Variable("vote", "Vote", "categorical", levels=["0", "1"]),
        Variable("age", "Age", "numeric"),
    ] + [Variable(f"r_{c}", f"Capital - {c}", "ranking", group="capital", option=c) for c in CITIES]
    p = make_project(tmp_path, frame, variables)
    p.close()
    return str(p.path)


def run(capsys, *args):
    code = main(["table", *args])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_json_frequency_and_crosstab(path, capsys):
    code, out, _ = run(capsys, path, "PID", "--json")
    assert code == 0
    data = json.loads(out)
    for key in ("title", "kind", "base", "n_valid", "n_missing", "notes", "counts", "percents"):
        assert key in data
    assert data["counts"]["0"] == 200 and data["kind"] == "ordinal"
    code, out, _ = run(
        capsys,
        path,
        "vote",
        "--by",
        "PID",
        "--min-cell",
        "0",
        "--tests",
        "--percent",
        "column",
        "--json",
    )
    data = json.loads(out)
    assert data["counts"]["6"] == {"0": 8, "1": 167}
    assert data["percent_base"] == "column"
    assert data["test"]["df"] == 6


def test_json_stats_and_ranking(path, capsys):
    _, out, _ = run(capsys, path, "age", "--sd", "sample", "--json")
    stats = json.loads(out)["stats"]
    assert set(stats) >= {
        "n",
        "mean",
        "median",
        "modes",
        "sd",
        "variance",
        "min",
        "max",
        "range",
        "q1",
        "q3",
        "iqr",
    }
    _, out, _ = run(capsys, path, "capital", "--borda", "average", "--json")
    data = json.loads(out)
    assert set(data["points"]) == set(CITIES)
    assert set(data["rank_counts"]["Memphis"]) == {"1", "2", "3", "4"}
    assert data["rule"] == "average"


def test_text_output_and_plain_errors(path, capsys):
    code, out, _ = run(capsys, path, "PID")
    assert code == 0 and "Party identification" in out and "n = 944 of 944" in out
    code, _, err = run(capsys, path, "nosuch")
    assert code == 2 and "nosuch" in err and "Traceback" not in err
    code, _, err = run(capsys, path, "PID", "--by", "age")
    assert code == 2 and "cannot be used as a break-down" in err
