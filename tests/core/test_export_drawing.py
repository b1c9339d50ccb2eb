"""Charts drawn by helper processes are the charts drawn here; a missing helper is harmless."""

from __future__ import annotations

import sys

import pytest

from core import outline
from core.export.drawing import ChartDrawer
from core.export.report import export_outline
from core.tables.spec import TableSpec
from tests.core.outline_project import make_project


@pytest.fixture
def project(tmp_path):
    p = make_project(tmp_path)
    outline.keep(p, TableSpec("satisfaction", chart="bar"), title="S", finding="f")
    outline.keep(p, TableSpec("track", chart="column"), title="T", finding="f")
    yield p
    p.close()


def test_helper_processes_draw_the_same_pixels(project, tmp_path):
    here = export_outline(project, tmp_path / "here", ["png"], workers=1)
    helped = export_outline(project, tmp_path / "helped", ["png"], workers=2)
    assert [p.name for p in here] == [p.name for p in helped] == ["01-s.png", "02-t.png"]
    for a, b in zip(here, helped):
        assert a.read_bytes() == b.read_bytes()  # PNG files carry no time stamp


def test_a_helper_that_cannot_start_changes_nothing(project, tmp_path, monkeypatch):
    monkeypatch.setattr(sys, "executable", str(tmp_path / "no-such-python"))
    with ChartDrawer(2, svg=False, workers=2) as drawer:
        assert drawer._threads == []  # nothing started: everything is drawn here
    files = export_outline(project, tmp_path / "out", ["png"], workers=2)
    assert [p.name for p in files] == ["01-s.png", "02-t.png"]


def test_a_helper_that_dies_leaves_its_charts_to_be_drawn_here(project, tmp_path, monkeypatch):
    # A "helper" that exits at once: every chart falls back to being drawn here.
    monkeypatch.setattr(sys, "executable", "/bin/true")
    files = export_outline(project, tmp_path / "out", ["png"], workers=2)
    assert [p.name for p in files] == ["01-s.png", "02-t.png"]
    assert all(p.stat().st_size > 10_000 for p in files)
