"""Small icons drawn here with QPainter: one per variable kind and one per tree node type.

Each icon is a function that draws on a 16 x 16 unit canvas; :func:`_icon` renders it at
several pixel sizes so it stays sharp on high-density screens. Colours come from the
Okabe-Ito colour-blind-safe palette (METHODS.md section 13).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from functools import cache
from pathlib import Path

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QIcon, QPainter, QPainterPath, QPen, QPixmap

from core.kinds import Kind

ORANGE = QColor("#E69F00")
SKY = QColor("#56B4E9")
GREEN = QColor("#009E73")
YELLOW = QColor("#F0E442")
BLUE = QColor("#0072B2")
VERMILLION = QColor("#D55E00")
PURPLE = QColor("#CC79A7")
INK = QColor("#3c4043")

RESOURCES = Path(__file__).resolve().parent.parent / "resources"

Painter = Callable[[QPainter], None]


def _pen(color: QColor, width: float = 1.4) -> QPen:
    pen = QPen(color, width)
    pen.setCapStyle(Qt.PenCapStyle.RoundCap)
    pen.setJoinStyle(Qt.PenJoinStyle.RoundJoin)
    return pen


def _numeric(p: QPainter) -> None:
    # A number line with ticks and one marked value.
    p.setPen(_pen(INK))
    p.drawLine(QPointF(1.5, 11), QPointF(14.5, 11))
    for x in (2.5, 6.5, 10.5, 14):
        p.drawLine(QPointF(x, 9.5), QPointF(x, 12.5))
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(BLUE)
    p.drawEllipse(QPointF(8.5, 5.5), 2.6, 2.6)


def _categorical(p: QPainter) -> None:
    p.setPen(Qt.PenStyle.NoPen)
    for color, centre in ((ORANGE, (4.5, 5)), (SKY, (11.5, 5)), (GREEN, (8, 11.5))):
        p.setBrush(color)
        p.drawEllipse(QPointF(*centre), 3, 3)


def _likert(p: QPainter) -> None:
    # Five points on a scale, one chosen.
    p.setPen(_pen(INK, 1.0))
    p.drawLine(QPointF(2, 8), QPointF(14, 8))
    for i, x in enumerate((2, 5, 8, 11, 14)):
        p.setBrush(BLUE if i == 3 else QColor("white"))
        p.setPen(_pen(BLUE if i == 3 else INK, 1.0))
        p.drawEllipse(QPointF(x, 8), 1.7, 1.7)


def _ordinal(p: QPainter) -> None:
    p.setPen(Qt.PenStyle.NoPen)
    for i, color in enumerate((SKY, GREEN, BLUE)):
        h = 4 + 4 * i
        p.setBrush(color)
        p.drawRect(QRectF(1.5 + 4.5 * i, 15 - h, 4, h))


def _ranking(p: QPainter) -> None:
    # A podium: first place in the middle.
    p.setPen(Qt.PenStyle.NoPen)
    for x, h, color in ((1, 7, SKY), (5.5, 11, ORANGE), (10, 5, GREEN)):
        p.setBrush(color)
        p.drawRect(QRectF(x, 15 - h, 4.5, h))


def _multiselect(p: QPainter) -> None:
    for y, ticked in ((1.5, True), (9, True)):
        p.setPen(_pen(INK, 1.1))
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawRoundedRect(QRectF(1.5, y, 5.5, 5.5), 1, 1)
        if ticked:
            p.setPen(_pen(GREEN, 1.6))
            p.drawPolyline([QPointF(2.6, y + 2.8), QPointF(4, y + 4.3), QPointF(6.4, y + 1.2)])
        p.setPen(_pen(INK, 1.1))
        p.drawLine(QPointF(9, y + 2.75), QPointF(14.5, y + 2.75))


def _text(p: QPainter) -> None:
    # A speech bubble with lines of writing.
    path = QPainterPath()
    path.addRoundedRect(QRectF(1, 1.5, 14, 10), 2.5, 2.5)
    path.moveTo(4, 11.5)
    path.lineTo(3.5, 15)
    path.lineTo(7.5, 11.5)
    p.setPen(_pen(INK, 1.1))
    p.setBrush(QColor("white"))
    p.drawPath(path.simplified())
    p.setPen(_pen(PURPLE, 1.3))
    p.drawLine(QPointF(4, 5), QPointF(12, 5))
    p.drawLine(QPointF(4, 8), QPointF(10, 8))


def _identifier(p: QPainter) -> None:
    # A luggage tag.
    path = QPainterPath()
    path.moveTo(1.5, 4)
    path.lineTo(10.5, 4)
    path.lineTo(14.5, 8)
    path.lineTo(10.5, 12)
    path.lineTo(1.5, 12)
    path.closeSubpath()
    p.setPen(_pen(INK, 1.1))
    p.setBrush(YELLOW)
    p.drawPath(path)
    p.setBrush(QColor("white"))
    p.drawEllipse(QPointF(10.5, 8), 1.3, 1.3)


def _date(p: QPainter) -> None:
    p.setPen(_pen(INK, 1.1))
    p.setBrush(QColor("white"))
    p.drawRoundedRect(QRectF(1.5, 2.5, 13, 12), 1.5, 1.5)
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(VERMILLION)
    p.drawRect(QRectF(2, 3, 12, 3))
    p.setBrush(INK)
    for x in (4.5, 8, 11.5):
        for y in (9, 12):
            p.drawRect(QRectF(x - 0.8, y - 0.8, 1.6, 1.6))


KIND_PAINTERS: dict[Kind, Painter] = {
    Kind.NUMERIC: _numeric,
    Kind.CATEGORICAL: _categorical,
    Kind.LIKERT: _likert,
    Kind.ORDINAL: _ordinal,
    Kind.RANKING: _ranking,
    Kind.MULTISELECT: _multiselect,
    Kind.TEXT: _text,
    Kind.IDENTIFIER: _identifier,
    Kind.DATE: _date,
}


def _project(p: QPainter) -> None:
    p.setPen(_pen(INK, 1.1))
    p.setBrush(SKY.lighter(150))
    p.drawRoundedRect(QRectF(1.5, 3, 13, 10.5), 1.5, 1.5)
    p.setBrush(BLUE)
    p.setPen(Qt.PenStyle.NoPen)
    for i, h in enumerate((3, 6, 4.5)):
        p.drawRect(QRectF(4 + 3 * i, 11.5 - h, 2, h))


def _instrument(p: QPainter) -> None:
    # A clipboard with a questionnaire.
    p.setPen(_pen(INK, 1.1))
    p.setBrush(QColor("white"))
    p.drawRoundedRect(QRectF(2.5, 2.5, 11, 12.5), 1.5, 1.5)
    p.setBrush(INK)
    p.drawRect(QRectF(5.5, 1, 5, 2.5))
    p.setPen(_pen(GREEN, 1.2))
    for y in (7, 10.5):
        p.drawLine(QPointF(5, y), QPointF(11, y))


def _wave(p: QPainter) -> None:
    path = QPainterPath()
    path.moveTo(1, 8)
    for i in range(1, 31):
        x = 1 + i * 14 / 30
        path.lineTo(x, 8 - 3.5 * math.sin(i / 30 * 2 * math.pi))
    p.setPen(_pen(BLUE, 1.6))
    p.setBrush(Qt.BrushStyle.NoBrush)
    p.drawPath(path)


def _codebook(p: QPainter) -> None:
    p.setPen(_pen(INK, 1.1))
    p.setBrush(ORANGE)
    p.drawRoundedRect(QRectF(3, 1.5, 10.5, 13), 1, 1)
    p.setBrush(QColor("white"))
    p.drawRect(QRectF(5.5, 4, 6, 3))
    p.drawLine(QPointF(3, 12), QPointF(13.5, 12))


def _flags(p: QPainter) -> None:
    p.setPen(_pen(INK, 1.3))
    p.drawLine(QPointF(3, 1.5), QPointF(3, 15))
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(VERMILLION)
    p.drawPolygon([QPointF(3.5, 2), QPointF(13.5, 4.5), QPointF(3.5, 8.5)])


def _ledger(p: QPainter) -> None:
    p.setPen(_pen(INK, 1.1))
    p.setBrush(QColor("white"))
    p.drawRect(QRectF(2.5, 1.5, 11, 13))
    p.setPen(_pen(BLUE, 1.1))
    for y in (4.5, 7.5, 10.5):
        p.drawLine(QPointF(4.5, y), QPointF(11.5, y))


def _data(p: QPainter) -> None:
    # A grid of cells with one corrected cell marked.
    p.setPen(_pen(INK, 1.0))
    p.setBrush(QColor("white"))
    p.drawRect(QRectF(1.5, 2.5, 13, 11))
    for x in (5.8, 10.2):
        p.drawLine(QPointF(x, 2.5), QPointF(x, 13.5))
    for y in (6.2, 9.8):
        p.drawLine(QPointF(1.5, y), QPointF(14.5, y))
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(VERMILLION)
    p.drawPolygon([QPointF(7.5, 6.7), QPointF(9.7, 6.7), QPointF(9.7, 8.9)])


def _missing(p: QPainter) -> None:
    pen = _pen(INK, 1.1)
    pen.setDashPattern([1.5, 1.5])
    p.setPen(pen)
    p.setBrush(Qt.BrushStyle.NoBrush)
    p.drawRect(QRectF(2.5, 2.5, 11, 11))
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(SKY)
    p.drawRect(QRectF(5, 5, 3, 3))
    p.drawRect(QRectF(8, 8, 3, 3))


def _tables(p: QPainter) -> None:
    p.setPen(_pen(INK, 1.0))
    p.setBrush(QColor("white"))
    p.drawRect(QRectF(1.5, 2.5, 13, 11))
    p.setBrush(GREEN.lighter(170))
    p.drawRect(QRectF(1.5, 2.5, 13, 3))
    for x in (6, 10.5):
        p.drawLine(QPointF(x, 2.5), QPointF(x, 13.5))
    p.drawLine(QPointF(1.5, 9.5), QPointF(14.5, 9.5))


def _outline(p: QPainter) -> None:
    for y in (3.5, 8, 12.5):
        p.setPen(Qt.PenStyle.NoPen)
        p.setBrush(PURPLE)
        p.drawEllipse(QPointF(3, y), 1.4, 1.4)
        p.setPen(_pen(INK, 1.2))
        p.drawLine(QPointF(6, y), QPointF(14, y))


NODE_PAINTERS: dict[str, Painter] = {
    "project": _project,
    "instrument": _instrument,
    "wave": _wave,
    "codebook": _codebook,
    "flags": _flags,
    "data": _data,
    "ledger": _ledger,
    "missing": _missing,
    "tables": _tables,
    "outline": _outline,
}


def render(painter_fn: Painter, size: int) -> QPixmap:
    """Draw one icon at ``size`` x ``size`` pixels on a transparent background."""
    pixmap = QPixmap(size, size)
    pixmap.fill(Qt.GlobalColor.transparent)
    p = QPainter(pixmap)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    p.scale(size / 16.0, size / 16.0)
    p.setBrush(QBrush())
    painter_fn(p)
    p.end()
    return pixmap


def _icon(painter_fn: Painter) -> QIcon:
    icon = QIcon()
    for size in (16, 24, 32, 48):
        icon.addPixmap(render(painter_fn, size))
    return icon


@cache
def kind_icon(kind: Kind | str) -> QIcon:
    """The icon for a variable kind (always shown together with the kind's name)."""
    return _icon(KIND_PAINTERS[Kind(kind)])


@cache
def node_icon(node_type: str) -> QIcon:
    painter_fn = NODE_PAINTERS.get(node_type)
    return _icon(painter_fn) if painter_fn is not None else QIcon()


@cache
def app_icon() -> QIcon:
    return QIcon(str(RESOURCES / "plaincount.svg"))
