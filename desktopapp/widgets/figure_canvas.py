"""A matplotlib figure inside a view, drawn by a core function that takes the Figure.

Core chart functions (``core.charts.draw``, ``core.charts_missing.draw_*``) draw onto a
Figure they are given and never touch pyplot. :class:`FigureCanvasWidget` owns one such
Figure on a ``FigureCanvasQTAgg`` and calls the function it was given:

* lazily — only while the widget is visible, so a chart on a hidden tab costs nothing;
* again after the window has stopped being resized (a chart with a constrained layout takes
  a few tenths of a second to lay out, too slow to repeat for every pixel of a drag);
* inside a guard — a chart that cannot be drawn shows a plain sentence in its place
  (:func:`desktopapp.errors.message_for`), never a traceback.

The figure's resolution is low (72 dots per inch by default) so that the point sizes the
core uses for 1920-pixel exports come out at ordinary screen-text sizes.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable
from typing import Any

from matplotlib.backends.backend_qtagg import FigureCanvasQTAgg
from matplotlib.figure import Figure
from PySide6.QtCore import QSize, Qt, QTimer
from PySide6.QtGui import QColor, QImage, QPainter, QPalette, QResizeEvent
from PySide6.QtWidgets import QLabel, QSizePolicy, QStackedLayout, QWidget

from desktopapp.errors import console_text

Drawer = Callable[[Figure], None]
SCREEN_DPI = 72
RESIZE_SETTLE_MS = 150


class _SettlingCanvas(FigureCanvasQTAgg):
    """A Qt Agg canvas that re-lays out its figure once a resize has settled.

    While the size is changing the last rendering is painted as it is; the figure is
    resized and drawn again ``RESIZE_SETTLE_MS`` after the last resize event.
    """

    def __init__(self, figure: Figure) -> None:
        super().__init__(figure)
        self._settle = QTimer(self)
        self._settle.setSingleShot(True)
        self._settle.setInterval(RESIZE_SETTLE_MS)
        self._settle.timeout.connect(self._apply_size)
        self._rendered = False

    def resizeEvent(self, event: QResizeEvent) -> None:  # noqa: N802 - Qt override
        if not self._rendered:
            super().resizeEvent(event)  # first layout: no old picture to show meanwhile
            return
        QWidget.resizeEvent(self, event)
        self._settle.start()

    def _apply_size(self) -> None:
        super().resizeEvent(QResizeEvent(self.size(), self.size()))

    def draw(self) -> None:
        with warnings.catch_warnings():
            # A canvas drawn before the layout has given it room (or squeezed very small)
            # cannot fit the chart's labels; matplotlib warns on the console. The next draw
            # at a real size lays the chart out properly, so the warning says nothing useful.
            warnings.filterwarnings(
                "ignore", message="constrained_layout not applied", category=UserWarning
            )
            super().draw()
        self._rendered = True

    def paintEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        renderer = getattr(self, "renderer", None)
        if self._settle.isActive() and renderer is not None:
            # The figure still has its old size: show the old picture, unscaled.
            image = QImage(
                bytes(self.buffer_rgba()),
                int(renderer.width),
                int(renderer.height),
                QImage.Format.Format_RGBA8888,
            )
            image.setDevicePixelRatio(self.device_pixel_ratio)
            painter = QPainter(self)
            painter.fillRect(self.rect(), QColor("white"))
            painter.drawImage(0, 0, image)
            painter.end()
            return
        super().paintEvent(event)


class FigureCanvasWidget(QWidget):
    """Shows one chart; ``set_drawer(fn)`` says how to draw it (``fn(figure)``).

    Parameters
    ----------
    dpi
        Resolution of the figure on screen (see the module docstring).
    minimum
        Smallest useful size in pixels; below it the chart's labels would collide.
    """

    def __init__(
        self,
        parent: QWidget | None = None,
        *,
        dpi: int = SCREEN_DPI,
        minimum: tuple[int, int] = (420, 300),
    ) -> None:
        super().__init__(parent)
        self.setObjectName("figureCanvas")
        self.figure = Figure(dpi=dpi, facecolor="white")
        self.canvas = _SettlingCanvas(self.figure)
        self.canvas.setObjectName("figureCanvasPlot")
        self.canvas.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)
        self.message_label = QLabel()
        self.message_label.setObjectName("figureCanvasMessage")
        self.message_label.setWordWrap(True)
        self.message_label.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self.message_label.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        self.message_label.setMargin(24)
        self._stack = QStackedLayout(self)
        self._stack.setContentsMargins(0, 0, 0, 0)
        self._stack.addWidget(self.canvas)
        self._stack.addWidget(self.message_label)
        self.setMinimumSize(*minimum)
        self._drawer: Drawer | None = None
        self._empty_text = ""
        self._stale = False
        self.error: BaseException | None = None

    # ------------------------------------------------------------------ public
    def set_drawer(self, drawer: Drawer | None, empty_text: str = "") -> None:
        """Draw with ``drawer`` from now on (None: show ``empty_text`` instead of a chart).

        The drawing happens at once when the widget is visible, otherwise when it is shown.
        """
        self._drawer = drawer
        self._empty_text = empty_text
        self._stale = True
        if self.isVisible():
            self.redraw()

    def redraw(self) -> bool:
        """Draw now; True when a chart is shown, False when a message is shown instead."""
        self._stale = False
        self.error = None
        if self._drawer is None:
            self.figure.clear()
            self.show_message(self._empty_text)
            return False
        try:
            self._drawer(self.figure)
        except Exception as exc:  # noqa: BLE001 - shown in words in place of the chart
            self.error = exc
            text = console_text(exc)
            self.figure.clear()
            self.show_message(text)
            return False
        self._stack.setCurrentWidget(self.canvas)
        self.canvas.draw_idle()
        return True

    def show_message(self, text: str) -> None:
        self.message_label.setText(text)
        self._stack.setCurrentWidget(self.message_label)

    @property
    def message(self) -> str:
        """The sentence shown instead of the chart ('' while a chart is shown)."""
        return "" if self._stack.currentWidget() is self.canvas else self.message_label.text()

    @property
    def stale(self) -> bool:
        return self._stale

    def render_now(self) -> None:
        """Finish any pending drawing at once (screenshots and tests)."""
        if self._stale:
            self.redraw()
        if self._stack.currentWidget() is self.canvas:
            self.canvas._settle.stop()
            self.canvas._apply_size()
            self.canvas.draw()

    def sizeHint(self) -> QSize:  # noqa: N802 - Qt override
        return QSize(760, 480)

    def showEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        super().showEvent(event)
        if self._stale:
            # After the layout has given the canvas its size, so it is laid out once.
            QTimer.singleShot(0, self._redraw_if_stale)

    def _redraw_if_stale(self) -> None:
        if self._stale and self.isVisible():
            self.redraw()
