"""Open-ended comments: kept as a listing, left out of exports unless included."""

from __future__ import annotations

import pandas as pd
import pytest

from core import outline
from core.errors import PlaincountError
from core.export.comments import COMMENT_CAUTION, comments_result
from core.ledger import Action, Decision, record
from core.tables.spec import TableSpec
from tests.core.outline_project import make_project, raw_table


@pytest.fixture
def project(tmp_path):
    p = make_project(tmp_path)
    yield p
    p.close()


def test_listing_holds_every_comment_in_data_order(project):
    result = comments_result(project, TableSpec("best_part"))
    expected = [c for c in raw_table()["best_part"] if pd.notna(c)]
    assert [row[0].display for row in result.rows] == expected
    assert result.columns == ["Comment"]
    assert result.n_valid == len(expected) and result.n_missing == 120 - len(expected)
    assert result.base == f"Base: {len(expected)} comments from 120 respondents."
    assert result.notes[0] == COMMENT_CAUTION
    assert result.title == "What was the best part?"


def test_excluded_respondents_are_left_out(project):
    comments = list(raw_table()["best_part"])
    first = next(i for i, c in enumerate(comments) if pd.notna(c))
    record(
        project,
        project.find_wave("2026").id,
        [Decision(Action.EXCLUDE, "Duplicate submission", row=first)],
    )
    result = comments_result(project, TableSpec("best_part"))
    assert result.n_valid == sum(pd.notna(c) for c in comments) - 1


def test_comments_are_never_broken_down(project):
    with pytest.raises(PlaincountError, match="not broken down"):
        outline.keep(project, TableSpec("best_part", by=("track",)))


def test_kept_comments_keep_their_formula_like_text_safe_in_csv(project, tmp_path):
    from core.export.report import export_outline

    outline.keep(project, TableSpec("best_part"), title="Best part")
    files = export_outline(project, tmp_path / "out", ["csv"], include_comments=True)
    text = files[0].read_text(encoding="utf-8-sig")
    assert '"\'=HYPERLINK(""x"")"' in text  # the planted formula is neutralised
    assert "=HYPERLINK" not in text.replace("'=HYPERLINK", "")
