"""The report outline: keep, reorder, rename, finding, chart, remove — each one undo step."""

from __future__ import annotations

import numpy as np
import pytest

from core import outline
from core.errors import PlaincountError
from core.ledger import Action, Decision, record
from core.tables.build import compute_table
from core.tables.spec import TableSpec
from tests.core.outline_project import make_project, raw_table


@pytest.fixture
def project(tmp_path):
    p = make_project(tmp_path)
    yield p
    p.close()


def _titles(project):
    return [it.title for it in outline.items(project)]


def test_keep_stores_the_spec_and_the_caption_title(project):
    spec = TableSpec("satisfaction", by=("track",), min_cell=3, chart="stacked100")
    first = outline.keep(project, TableSpec("track"))
    second = outline.keep(project, spec, finding="  Most are satisfied.  ")
    kept = outline.items(project)
    assert [k.id for k in kept] == [first, second]
    assert [k.position for k in kept] == [1, 2]
    assert kept[0].title == compute_table(project, TableSpec("track")).title
    assert kept[1].spec == spec  # stored as data and read back unchanged
    assert kept[1].chart == "stacked100"
    assert kept[1].finding == "Most are satisfied."
    assert kept[1].to_json()["spec"]["by"] == ["track"]
    assert project.undo_label().startswith("Keep “")


def test_keep_refuses_bad_requests_and_changes_nothing(project):
    history = len(project.history())
    with pytest.raises(PlaincountError, match="cannot be shown as a"):
        outline.keep(project, TableSpec("track", chart="no-such-chart"))
    with pytest.raises(PlaincountError):
        outline.keep(project, TableSpec("no_such_variable"))
    with pytest.raises(PlaincountError, match="needs a title"):
        outline.keep(project, TableSpec("track"), title="   ")
    assert outline.items(project) == []
    assert len(project.history()) == history


def test_reorder_rename_finding_remove_and_undo_each(project):
    a = outline.keep(project, TableSpec("track"), title="A")
    b = outline.keep(project, TableSpec("satisfaction"), title="B")
    c = outline.keep(project, TableSpec("age"), title="C")

    outline.reorder(project, [c, a, b])
    assert _titles(project) == ["C", "A", "B"]
    assert [k.position for k in outline.items(project)] == [1, 2, 3]
    assert project.undo_label() == "Reorder the report outline"
    project.undo()
    assert _titles(project) == ["A", "B", "C"]
    project.redo()
    assert _titles(project) == ["C", "A", "B"]

    outline.rename(project, a, "  Track of  study ")
    assert outline.item(project, a).title == "Track of study"
    project.undo()
    assert outline.item(project, a).title == "A"

    outline.set_finding(project, b, "Two in three are satisfied.")
    assert outline.item(project, b).finding == "Two in three are satisfied."
    project.undo()
    assert outline.item(project, b).finding == ""
    project.redo()
    assert outline.item(project, b).finding == "Two in three are satisfied."

    outline.set_chart(project, b, "bar")
    assert outline.item(project, b).chart == "bar"
    project.undo()
    assert outline.item(project, b).chart is None

    outline.remove(project, a)
    assert _titles(project) == ["C", "B"]
    assert [k.position for k in outline.items(project)] == [1, 2]
    project.undo()  # back where it was, with the same id
    assert _titles(project) == ["C", "A", "B"]
    assert outline.items(project)[1].id == a

    # Steps still on record: keep x3, reorder, finding (undone steps were replaced).
    project.undo()
    assert outline.item(project, b).finding == ""
    project.undo()
    assert _titles(project) == ["A", "B", "C"]
    project.undo()
    project.undo()
    project.undo()
    assert outline.items(project) == []
    assert project.undo() is None


def test_bad_edits_are_refused_in_plain_words(project):
    a = outline.keep(project, TableSpec("track"), title="A")
    b = outline.keep(project, TableSpec("age"), title="B")
    with pytest.raises(PlaincountError, match="every item"):
        outline.reorder(project, [a])
    with pytest.raises(PlaincountError, match="every item"):
        outline.reorder(project, [a, a, b])
    with pytest.raises(PlaincountError, match="no item number 999"):
        outline.rename(project, 999, "X")
    with pytest.raises(PlaincountError, match="no item number 999"):
        outline.remove(project, 999)
    with pytest.raises(PlaincountError, match="cannot be shown as a"):
        outline.set_chart(project, a, "no-such-chart")
    assert _titles(project) == ["A", "B"]


def test_kept_results_are_recomputed_when_the_data_change(project):
    item_id = outline.keep(project, TableSpec("age"), title="Age")
    before = outline.result_for(project, outline.item(project, item_id))
    ages = raw_table()["age"].astype(float).to_numpy().copy()
    # Reference: numpy mean of the invented ages.
    assert before.data["stats"]["mean"] == pytest.approx(np.mean(ages))
    record(
        project,
        project.find_wave("2026").id,
        [
            Decision(
                Action.CORRECT,
                "Typing error: 18 was meant",
                ("age",),
                row=0,
                old_value=str(int(ages[0])),
                new_value="18",
            )
        ],
    )
    after = outline.result_for(project, outline.item(project, item_id))
    ages[0] = 18
    assert after.data["stats"]["mean"] == pytest.approx(np.mean(ages))
    assert after.title == "Age"
