"""The exploration gallery: many small charts by one break-down, to scan for a finding.

Shown as the second tab of the tables node (``tabulation_view``). The evaluator picks what
to scan (every item of a rating battery, or the whole questionnaire) and one break-down;
the charts are drawn on a worker a few at a time, so the first ones appear at once and the
window stays responsive, and a newer choice drops the drawing of an older one. Clicking a
chart opens it full size, with its table, in the first tab.

Thumbnails leave out the notes under the chart (the full view shows them) but keep the base
line; small counts are hidden exactly as in the full chart, because both draw the same
table result.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QSize, Qt, Signal
from PySide6.QtGui import QColor, QIcon, QPainter, QPixmap
from PySide6.QtWidgets import (
    QComboBox,
    QHBoxLayout,
    QLabel,
    QListView,
    QListWidget,
    QListWidgetItem,
    QVBoxLayout,
    QWidget,
)

from core.codebook import Codebook
from core.project import Changes
from core.tables.captions import short_title
from core.tables.spec import TableSpec
from desktopapp.icons import kind_icon
from desktopapp.views import ViewContext, muted_label, section_label

WHOLE = ""  # the source combo's data for "the whole questionnaire"
# Thumbnail size in pixels, and the resolution it is drawn at: a high resolution for the
# size keeps the chart's type large enough to read in a small picture.
THUMB_W, THUMB_H = 360, 270
THUMB_DPI = 80
CHUNK = 4  # charts drawn per worker call: the first appear quickly, later ones keep coming
SPEC_ROLE = Qt.ItemDataRole.UserRole
MESSAGE_ROLE = Qt.ItemDataRole.UserRole + 1

_generations = itertools.count(1)


def thumbnail_label(codebook: Codebook, name: str) -> str:
    """A short title for a thumbnail: a battery item's own words, else the question."""
    from core.tables.captions import common_stem, item_label

    var = codebook.get(name)
    if var is None:  # a group: the words its items share
        from core.tables.captions import group_title

        members = codebook.groups().get(name, [])
        return group_title(name, [m.question for m in members])
    if var.group:
        members = codebook.groups().get(var.group, [])
        stem = common_stem([m.question for m in members])
        return item_label(var.question, stem, var.name)
    return short_title(var.question or var.name)


@dataclass(frozen=True)
class Thumbnail:
    """One drawn chart: PNG bytes, or the plain sentence saying why there is no chart."""

    index: int
    title: str
    png: bytes | None
    message: str = ""


def gallery_specs(
    codebook: Codebook,
    source: str,
    by: str | None,
    wave: str | None = None,
    instrument: str | None = None,
) -> list[TableSpec]:
    """The tables the gallery draws, in questionnaire order.

    ``source`` is a battery's group name (each of its items) or ``""`` for the whole
    questionnaire: every question that has a table, battery items one by one, rankings and
    choose-all questions as one table each. The break-down question itself is left out.
    """
    from desktopapp.views.tabulation_view import tabulation_entries

    names: list[str] = []
    for entry in tabulation_entries(codebook):
        if source and entry.name != source:
            continue
        if entry.family == "battery":
            names.extend(m.name for m in entry.items)
        else:
            names.append(entry.name)
    by_tuple = (by,) if by else ()
    return [
        TableSpec(name, wave=wave, instrument=instrument, by=by_tuple)
        for name in names
        if name != by
    ]


def draw_thumbnails(
    project: Any,
    specs: list[TableSpec],
    start: int,
    count: int,
    width: int,
    height: int,
    labels: list[str] | None = None,
    dpi: float = THUMB_DPI,
) -> list[Thumbnail]:
    """Compute and draw ``specs[start:start + count]`` as PNGs (runs on a worker).

    ``labels`` replace the tables' titles in the pictures (a battery item's own words say
    more in a small picture than the question stem all items share). A table that cannot be
    drawn gives a thumbnail with a message instead of failing the rest of the gallery.
    """
    import io
    from dataclasses import replace

    from core.charts import make_figure
    from core.tables.build import compute_table
    from desktopapp.errors import message_for
    from desktopapp.views.tabulation_view import result_without_notes

    out = []
    for index in range(start, min(start + count, len(specs))):
        spec = specs[index]
        title = spec.variable
        try:
            result = result_without_notes(compute_table(project, spec))
            title = result.title or title
            if labels is not None and labels[index]:
                by = " — by " + ", ".join(spec.by) if spec.by else ""
                result = replace(result, title=labels[index] + by)
            figure = make_figure(result, None, width, height, dpi)
            buffer = io.BytesIO()
            figure.savefig(buffer, format="png", dpi=dpi, facecolor="white")
            out.append(Thumbnail(index, title, buffer.getvalue()))
        except Exception as exc:  # noqa: BLE001 - one bad table must not stop the gallery
            out.append(Thumbnail(index, title, None, message_for(exc)[0]))
    return out


class GalleryWidget(QWidget):
    """A scrolling grid of small charts; ``open_requested(variable, by)`` on a click."""

    open_requested = Signal(str, tuple)
    finished = Signal()  # every thumbnail of the current choice is drawn

    def __init__(
        self,
        context: ViewContext,
        instrument_id: int,
        wave_id: int,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setObjectName("galleryView")
        self._context = context
        self.instrument_id = instrument_id
        self.wave_id = wave_id
        self._specs: list[TableSpec] = []
        self._labels: list[str] = []
        self._generation = 0
        self._stale = True
        self._filling = False
        self.drawn = 0

        self.source_combo = QComboBox()
        self.source_combo.setObjectName("gallerySource")
        self.by_combo = QComboBox()
        self.by_combo.setObjectName("galleryBreakdown")
        for combo in (self.source_combo, self.by_combo):
            # Long question texts must not widen the window.
            combo.setSizeAdjustPolicy(
                QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon
            )
            combo.setMinimumContentsLength(16)
        self.status_label = muted_label("", wrap=False)
        self.status_label.setObjectName("galleryStatus")
        self.grid = QListWidget()
        self.grid.setObjectName("galleryGrid")
        self.grid.setViewMode(QListView.ViewMode.IconMode)
        self.grid.setResizeMode(QListView.ResizeMode.Adjust)
        self.grid.setMovement(QListView.Movement.Static)
        self.grid.setWrapping(True)
        self.grid.setUniformItemSizes(True)
        self.grid.setIconSize(QSize(THUMB_W, THUMB_H))
        self.grid.setGridSize(QSize(THUMB_W + 16, THUMB_H + 44))
        self.grid.setSpacing(6)
        self.grid.setWordWrap(True)
        self.grid.setTextElideMode(Qt.TextElideMode.ElideRight)
        self.grid.setSelectionMode(QListWidget.SelectionMode.SingleSelection)
        self.grid.setVerticalScrollMode(QListView.ScrollMode.ScrollPerPixel)

        controls = QHBoxLayout()
        controls.addWidget(QLabel("Show"))
        controls.addWidget(self.source_combo, 1)
        controls.addSpacing(12)
        controls.addWidget(QLabel("by"))
        controls.addWidget(self.by_combo, 1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(12, 10, 12, 10)
        layout.addWidget(section_label("Many questions at a glance"))
        layout.addWidget(
            muted_label(
                "Small charts of every question by one break-down, to scan for differences "
                "worth a closer look. Click a chart to open it full size with its table."
            )
        )
        layout.addLayout(controls)
        layout.addWidget(self.status_label)
        layout.addWidget(self.grid, 1)

        self._fill_controls()
        self._connect_signals()

    def _connect_signals(self) -> None:
        self.source_combo.currentIndexChanged.connect(self._on_choice_changed)
        self.by_combo.currentIndexChanged.connect(self._on_choice_changed)
        self.grid.itemActivated.connect(self._on_grid_item_activated)
        self.grid.itemClicked.connect(self._on_grid_item_activated)

    # ------------------------------------------------------------------ choices
    @property
    def project(self) -> Any:
        return self._context.project

    def codebook(self) -> Codebook:
        return self.project.codebook(self.instrument_id)

    def _fill_controls(self) -> None:
        from desktopapp.views.tabulation_view import breakdown_candidates, tabulation_entries

        codebook = self.codebook()
        source, by = self.source_combo.currentData(), self.by_combo.currentData()
        self._filling = True
        try:
            self.source_combo.clear()
            self.source_combo.addItem("The whole questionnaire", WHOLE)
            for entry in tabulation_entries(codebook):
                if entry.family == "battery":
                    self.source_combo.addItem(
                        kind_icon(entry.kind),
                        f"Every item of “{short_title(entry.label, 50)}”",
                        entry.name,
                    )
            self.source_combo.setCurrentIndex(max(self.source_combo.findData(source), 0))
            self.by_combo.clear()
            for var in breakdown_candidates(codebook, set()):
                self.by_combo.addItem(
                    kind_icon(var.kind), f"{var.name}  {short_title(var.question, 40)}", var.name
                )
            index = self.by_combo.findData(by) if by else self._default_breakdown(codebook)
            self.by_combo.setCurrentIndex(max(index, 0))
        finally:
            self._filling = False

    def _default_breakdown(self, codebook: Codebook) -> int:
        # The first unordered category question (a track, a site) is the usual comparison.
        for i in range(self.by_combo.count()):
            var = codebook.get(self.by_combo.itemData(i))
            if var is not None and not var.kind.ordered:
                return i
        return 0

    def source(self) -> str:
        return self.source_combo.currentData() or WHOLE

    def breakdown(self) -> str | None:
        return self.by_combo.currentData()

    def show_source(self, source: str, by: str | None) -> None:
        """Choose what to scan and the break-down, and draw it (screenshots and tests)."""
        self._filling = True
        try:
            self.source_combo.setCurrentIndex(max(self.source_combo.findData(source), 0))
            if by:
                self.by_combo.setCurrentIndex(max(self.by_combo.findData(by), 0))
        finally:
            self._filling = False
        if self.isVisible():
            self.refresh()
        else:
            self._stale = True  # drawn when the gallery is shown

    def specs(self) -> list[TableSpec]:
        """The tables of the thumbnails shown, in grid order."""
        return list(self._specs)

    def _on_choice_changed(self, _index: int) -> None:
        if self._filling:
            return
        self.refresh()

    # ------------------------------------------------------------------ drawing
    def showEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        super().showEvent(event)
        self.refresh_if_stale()

    def refresh_if_stale(self) -> None:
        """Draw the current choice if it has not been drawn yet (the tab was just shown)."""
        if self._stale:
            self.refresh()

    def refresh(self) -> None:
        """Start drawing the current choice; an older drawing still running is dropped."""
        self._stale = False
        self._generation = next(_generations)
        project = self.project
        wave = project.wave(self.wave_id)
        instrument = project.instrument(self.instrument_id).name
        codebook = self.codebook()
        self._specs = gallery_specs(
            codebook, self.source(), self.breakdown(), wave.label, instrument
        )
        self._labels = [thumbnail_label(codebook, spec.variable) for spec in self._specs]
        self.drawn = 0
        self.grid.clear()
        pending = _pending_icon()
        for spec, label in zip(self._specs, self._labels):
            item = QListWidgetItem(QIcon(pending), spec.variable)
            item.setData(SPEC_ROLE, spec)
            item.setToolTip(f"{spec.variable}: {label}")
            item.setSizeHint(self.grid.gridSize())
            self.grid.addItem(item)
        if not self._specs:
            self.status_label.setText("Nothing to show for this choice.")
            self.finished.emit()
            return
        self._draw_chunk(self._generation, 0)

    def _draw_chunk(self, generation: int, start: int) -> None:
        if generation != self._generation:
            return
        project, specs, labels = self.project, list(self._specs), list(self._labels)
        self.status_label.setText(f"Drawing {len(specs)} charts… {start} done.")
        # Sharp on high-density screens: drawn at the screen's pixels, shown at THUMB_W.
        ratio = self.devicePixelRatioF() or 1.0
        width, height, dpi = round(THUMB_W * ratio), round(THUMB_H * ratio), THUMB_DPI * ratio

        def work(_progress: Any) -> list[Thumbnail]:
            return draw_thumbnails(project, specs, start, CHUNK, width, height, labels, dpi)

        self._context.runner.run(
            work,
            on_success=lambda thumbs: self._on_chunk_drawn(generation, start, thumbs),
            on_failure=lambda exc: self._on_chunk_failed(generation, exc),
            key=f"gallery:{id(self)}",
            show_progress=False,
            label="Drawing the gallery…",
        )

    def _on_chunk_drawn(self, generation: int, start: int, thumbs: list[Thumbnail]) -> None:
        if generation != self._generation:
            return
        for thumb in thumbs:
            item = self.grid.item(thumb.index)
            if item is None:
                continue
            spec: TableSpec = item.data(SPEC_ROLE)
            item.setToolTip(f"{thumb.title}\nClick to open it with its table.")
            if thumb.png is not None:
                pixmap = QPixmap()
                pixmap.loadFromData(thumb.png, "PNG")
                pixmap.setDevicePixelRatio(pixmap.width() / THUMB_W)
                item.setIcon(QIcon(pixmap))
            else:
                item.setIcon(QIcon(_pending_icon(thumb.message or "No chart")))
                item.setData(MESSAGE_ROLE, thumb.message)
                item.setToolTip(f"{spec.variable}: {thumb.message}")
        self.drawn = start + len(thumbs)
        if self.drawn < len(self._specs):
            self._draw_chunk(generation, self.drawn)
            return
        self.status_label.setText(
            f"{len(self._specs)} charts by {self.breakdown() or 'no break-down'}. "
            "Small counts are hidden as in every table."
        )
        self.finished.emit()

    def _on_chunk_failed(self, generation: int, exc: BaseException) -> None:
        if generation != self._generation:
            return
        from desktopapp.errors import message_for

        self.status_label.setText(message_for(exc)[0])
        self.finished.emit()

    def _on_grid_item_activated(self, item: QListWidgetItem) -> None:
        spec: TableSpec | None = item.data(SPEC_ROLE)
        if spec is not None:
            self.open_requested.emit(spec.variable, tuple(spec.by))

    # ------------------------------------------------------------------ window hooks
    def project_changed(self, changes: Changes) -> None:
        if changes.codebook:
            self._fill_controls()
        if self.isVisible():
            self.refresh()
        else:
            self._stale = True

    def shutdown(self) -> None:
        self._generation = -1  # any chunk still running is dropped when it arrives


def _pending_icon(text: str = "Drawing…") -> QPixmap:
    pixmap = QPixmap(THUMB_W, THUMB_H)
    pixmap.fill(QColor("#f4f4f4"))
    painter = QPainter(pixmap)
    painter.setPen(QColor("#707070"))
    painter.drawText(
        pixmap.rect().adjusted(16, 16, -16, -16),
        int(Qt.AlignmentFlag.AlignCenter | Qt.TextFlag.TextWordWrap),
        text,
    )
    painter.end()
    return pixmap
