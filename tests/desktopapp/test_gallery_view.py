"""The exploration gallery: small charts of many questions by one break-down."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QImage

from core.tables.build import compute_table
from desktopapp.views.gallery_view import (
    SPEC_ROLE,
    THUMB_H,
    THUMB_W,
    draw_thumbnails,
    gallery_specs,
    thumbnail_label,
)

from .demo_window import fresh_tables_view, open_demo_window


@pytest.fixture(scope="module")
def window(tmp_path_factory, qapp):
    win = open_demo_window(tmp_path_factory.mktemp("gallery"))
    yield win
    win.close_project()
    win.close()


@pytest.fixture
def codebook(window):
    return window.project.codebook(window.project.instruments()[0].id)


def test_specs_of_a_battery_and_of_the_whole_questionnaire(codebook):
    battery = gallery_specs(codebook, "agree", "track", "2027", "Participant survey")
    assert [s.variable for s in battery] == [f"agree_{i}" for i in range(1, 9)]
    assert all(s.by == ("track",) and s.wave == "2027" for s in battery)

    whole = [s.variable for s in gallery_specs(codebook, "", "cohort")]
    # Every question with a table, in questionnaire order, battery items one by one,
    # rankings and choose-all questions once; never the break-down itself.
    assert whole[:3] == ["track", "age", "gender"]
    assert "cohort" not in whole
    for absent in ("resp_id", "started_at", "best_part", "change_one_thing", "rank_transit"):
        assert absent not in whole
    assert whole.count("rank") == 1 and "barriers" in whole
    assert whole.index("agree_8") + 1 == whole.index("use_tutoring")
    # 34 columns, less 5 without a table, 5 ranking options for 1 ranking, and cohort.
    assert len(whole) == 34 - 5 - 5 + 1 - 1


def test_thumbnail_labels_use_the_items_own_words(codebook):
    assert thumbnail_label(codebook, "agree_6") == "I often felt lost in class."
    assert thumbnail_label(codebook, "use_coaching") == "Career coaching"
    assert thumbnail_label(codebook, "track") == "Which trade track are you in?"


def test_drawing_thumbnails_on_a_worker(window, codebook):
    specs = gallery_specs(codebook, "", "track", "2027", "Participant survey")
    thumbs = draw_thumbnails(window.project, specs, 0, 2, THUMB_W, THUMB_H)
    assert [t.index for t in thumbs] == [0, 1]
    for thumb in thumbs:
        image = QImage.fromData(thumb.png, "PNG")
        assert (image.width(), image.height()) == (THUMB_W, THUMB_H)
    # A thumbnail carries the same title as the full table.
    assert thumbs[0].title == compute_table(window.project, specs[0]).title


def test_gallery_grid_and_click_to_open(window, qtbot):
    view = fresh_tables_view(window)
    gallery = view.gallery
    gallery.show_source("agree", "track")
    assert gallery.drawn == 0  # nothing is drawn while the tab is hidden
    view.show_gallery()
    assert gallery.drawn == 8
    grid = gallery.grid
    assert grid.count() == 8
    for i in range(grid.count()):
        item = grid.item(i)
        pixmap = item.icon().pixmap(THUMB_W, THUMB_H)
        assert not pixmap.isNull()
        assert item.data(SPEC_ROLE).variable == f"agree_{i + 1}"
    assert gallery.status_label.text().startswith("8 charts by track")

    rect = grid.visualItemRect(grid.item(2))
    qtbot.mouseClick(grid.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    assert view.tabs.currentIndex() == 0
    assert view.current_variable() == "agree_3"
    assert view.breakdown() == ("track",)
    assert view.result().table_type == "crosstab"
    assert view.result().spec.by == ("track",)


def test_a_new_choice_replaces_the_thumbnails(window):
    view = fresh_tables_view(window)
    gallery = view.gallery
    gallery.show_source("use", "cohort")
    view.show_gallery()
    assert [s.variable for s in gallery.specs()] == [
        "use_tutoring",
        "use_coaching",
        "use_tool_library",
    ]
    assert gallery.grid.count() == 3 and gallery.drawn == 3
    gallery.by_combo.setCurrentIndex(gallery.by_combo.findData("track"))
    assert all(s.by == ("track",) for s in gallery.specs())
    assert gallery.drawn == 3
