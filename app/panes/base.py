"""The common frame of every plot pane: title, status, preview badge, message page, theme.

A pane is a :class:`ResidualPane`: a small widget that takes a result from
:mod:`lagwright.core` and draws it with pyqtgraph. The frame gives every pane
the same behaviour:

* :meth:`ResidualPane.show_evaluation` draws an
  :class:`~lagwright.core.evaluate.Evaluation` (a failed fit shows its reason
  instead);
* :meth:`ResidualPane.clear` shows an empty pane with one plain sentence;
* :meth:`ResidualPane.set_preview` marks a preview fit (a "preview" badge and
  the PREVIEW colour for the data), so a preview never looks final;
* a shared :class:`~lagwright.app.panes.selection.ResidualSelection` links
  the panes: a click selects observations, every pane highlights them in the
  ATTENTION colour.

Subclasses keep the pyqtgraph items they drew as attributes (listed in
``_item_names``), so tests and the window can read back exactly what is on
screen. Nothing here creates a ``QApplication``.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QEvent, Qt
from PySide6.QtGui import QColor, QFont
from PySide6.QtWidgets import QHBoxLayout, QLabel, QSizePolicy, QStackedWidget, QVBoxLayout, QWidget

from lagwright.core.errors import LagwrightError

from .. import theme
from .selection import ResidualSelection

#: Clicks farther than this many pixels from every point select nothing.
PICK_RADIUS_PX = 12.0


class PaneMessage(Exception):
    """Raised by a pane's drawing code when it can only show a sentence, not a plot."""


# ----------------------------------------------------------------- helpers
def colour(code: str, alpha: float = 1.0) -> QColor:
    """A theme colour, optionally made translucent (``alpha`` in 0..1)."""
    c = QColor(code)
    c.setAlphaF(float(alpha))
    return c


def make_pen(code: str, width: float = 1.5, style: Qt.PenStyle = Qt.PenStyle.SolidLine, alpha: float = 1.0):
    """A cosmetic pen in a theme colour."""
    pen = pg.mkPen(colour(code, alpha), width=width, style=style)
    pen.setCosmetic(True)
    return pen


def make_brush(code: str, alpha: float = 1.0):
    return pg.mkBrush(colour(code, alpha))


#: Above this many points a data line is drawn 1 pixel wide and without
#: antialiasing: Qt strokes wide antialiased lines through a slow path (about
#: 2 s instead of 15 ms for a downsampled 10⁵-point trace), and even at 1,000
#: points antialiased strokes kept the window from answering for ~0.5 s while
#: all panes repainted (bench/bench_window.py).
THIN_LINE_POINTS = 400


#: Width in pixels of the left axis of plots of standardized or bounded values.
#: A fixed width keeps new tick labels from changing the plot's layout: with
#: widths that followed the labels, each pane was laid out and painted two or
#: three times per redraw (bench/bench_window.py, n = 10,000).
LEFT_AXIS_WIDTH = 58


def steady_limit(value: float, step: float) -> float:
    """``value`` rounded up to a multiple of ``step``.

    Axis limits drawn from data move a little with every candidate; rounded,
    neighbouring candidates share their axes, which keeps the eye steady
    when flipping between them and spares pyqtgraph laying out the tick
    labels again (18 % of the window's time in a step at n = 10,000).
    """
    return float(np.ceil(value / step - 1e-9) * step)


def line_width(n_points: int, width: float = 1.5) -> float:
    """Pen width for a data line of ``n_points``: ``width``, or 1 for long series (see THIN_LINE_POINTS)."""
    return 1.0 if n_points > THIN_LINE_POINTS else width


def add_fast_curve(
    plot: pg.PlotItem, x, y, pen, *, connect: str = "all", name: str | None = None, **kwargs
) -> pg.PlotDataItem:
    """Add to ``plot`` a line item that stays fast at 10⁵–10⁶ points.

    Auto peak downsampling and clipping to the view are switched on only
    after the item is in the view: pyqtgraph 0.14 fails when an item with
    clipping enabled enters a scene that already has a view.
    """
    x = np.asarray(x, dtype=float)
    item = pg.PlotDataItem(
        x,
        np.asarray(y, dtype=float),
        pen=pen,
        antialias=x.size <= THIN_LINE_POINTS,
        connect=connect,
        name=name,
        **kwargs,
    )
    plot.addItem(item)
    item.setDownsampling(auto=True, method="peak")
    item.setClipToView(True)
    return item


def observation_x(series, positions) -> np.ndarray:
    """x coordinates of observations: their position, or epoch seconds (UTC) when the series is dated.

    Every time-axis pane uses this, so their ViewBoxes can be linked with
    ``setXLink``. Time stamps are naive and shown as written (the
    :class:`pyqtgraph.DateAxisItem` is created with ``utcOffset=0``).
    """
    positions = np.asarray(positions, dtype=np.intp)
    if series is None or getattr(series, "times", None) is None:
        return positions.astype(float)
    stamps = np.asarray(series.times)[positions].astype("datetime64[ns]").astype(np.int64)
    return stamps / 1e9


def indices_of(sorted_positions: np.ndarray, wanted: Iterable[int]) -> np.ndarray:
    """Indices into ``sorted_positions`` of the wanted positions that it holds (O(k log n))."""
    wanted = np.asarray(tuple(wanted), dtype=np.int64)
    if wanted.size == 0 or sorted_positions.size == 0:
        return np.empty(0, dtype=np.intp)
    idx = np.searchsorted(sorted_positions, wanted)
    inside = idx < sorted_positions.size
    idx, wanted = idx[inside], wanted[inside]
    return idx[sorted_positions[idx] == wanted]


def pixel_size(plot: pg.PlotItem) -> tuple[float, float] | None:
    """Data units per screen pixel in x and y, or ``None`` while the view has no size."""
    vb = plot.getViewBox()
    rect = vb.rect()
    if rect.width() <= 1 or rect.height() <= 1:
        return None
    (x0, x1), (y0, y1) = vb.viewRange()
    px, py = (x1 - x0) / rect.width(), (y1 - y0) / rect.height()
    if not (np.isfinite(px) and np.isfinite(py) and px > 0 and py > 0):
        return None
    return px, py


def nearest_point(
    plot: pg.PlotItem, x: np.ndarray, y: np.ndarray, x0: float, y0: float, x_sorted: bool
) -> int | None:
    """Index of the point nearest to (x0, y0) on screen, or ``None`` if none is within reach.

    With a sized view, only points within :data:`PICK_RADIUS_PX` pixels count,
    and with sorted ``x`` only those in that x window are looked at, so a
    click costs O(log n). Without a view size (a pane never shown), the
    point nearest in x is taken.
    """
    if x.size == 0:
        return None
    size = pixel_size(plot)
    if size is None:
        if x_sorted:
            i = int(np.searchsorted(x, x0))
            cands = [j for j in (i - 1, i) if 0 <= j < x.size]
            return min(cands, key=lambda j: abs(x[j] - x0))
        return int(np.nanargmin(np.abs(x - x0)))
    px, py = size
    if x_sorted:
        lo = int(np.searchsorted(x, x0 - PICK_RADIUS_PX * px, side="left"))
        hi = int(np.searchsorted(x, x0 + PICK_RADIUS_PX * px, side="right"))
        if hi <= lo:
            return None
        xs, ys, offset = x[lo:hi], y[lo:hi], lo
    else:
        xs, ys, offset = x, y, 0
    dist = np.hypot((xs - x0) / px, (ys - y0) / py)
    if not np.isfinite(dist).any():
        return None
    j = int(np.nanargmin(dist))
    if dist[j] > PICK_RADIUS_PX:
        return None
    return offset + j


# -------------------------------------------------------------------- pane
class ResidualPane(QWidget):
    """Base of the plot panes.

    Parameters
    ----------
    selection : ResidualSelection, optional
        The window's selection model; see :meth:`set_selection_model`.
    parent : QWidget, optional

    Attributes
    ----------
    graphics : pyqtgraph.GraphicsLayoutWidget
        Holds the pane's plot(s).
    title_label, status_label, preview_badge, message_label : QLabel
    """

    #: Shown in the pane's header.
    pane_title = "Pane"
    #: Names of the attributes that hold drawn data items (reset by :meth:`clear`).
    _item_names: tuple[str, ...] = ()

    def __init__(self, selection: ResidualSelection | None = None, parent: QWidget | None = None):
        super().__init__(parent)
        self._preview = False
        self._selection: ResidualSelection | None = None
        self._axis_labels: dict[tuple[int, str], str] = {}
        self._plot_list: list[pg.PlotItem] = []
        self._colours = theme.pane_colours(theme.is_dark_palette(self.palette()))

        self.title_label = QLabel(self.pane_title)
        font = self.title_label.font()
        font.setWeight(QFont.Weight.DemiBold)
        self.title_label.setFont(font)
        self.status_label = QLabel("")
        small = self.status_label.font()
        small.setPointSizeF(max(small.pointSizeF() * 0.9, 7.0))
        self.status_label.setFont(small)
        self.status_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        # A long status must never widen the pane: it is cut at the pane's edge (full text in the tooltip).
        self.status_label.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        self.preview_badge = QLabel("preview")
        self.preview_badge.setToolTip("Drawn from the fast preview fit; the exact fit is still running.")
        self.preview_badge.hide()

        self.header_layout = QHBoxLayout()
        self.header_layout.setContentsMargins(6, 2, 6, 0)
        self.header_layout.setSpacing(8)
        self.header_layout.addWidget(self.title_label)
        self.header_layout.addWidget(self.status_label, 1)
        self.header_layout.addWidget(self.preview_badge)

        self.graphics = pg.GraphicsLayoutWidget()
        self.graphics.setAntialiasing(True)
        self.graphics.ci.setContentsMargins(4, 4, 8, 4)
        self.message_label = QLabel("")
        self.message_label.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self.message_label.setWordWrap(True)
        self.message_label.setMargin(16)
        self._stack = QStackedWidget()
        self._stack.addWidget(self.graphics)
        self._stack.addWidget(self.message_label)
        self._cover_text = ""  # see cover()

        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(2)
        layout.addLayout(self.header_layout)
        layout.addWidget(self._stack, 1)

        self._kept: dict[str, object] | None = None
        self._build()
        for name in self._item_names:
            setattr(self, name, None)
        self.graphics.scene().sigMouseClicked.connect(self._scene_clicked)
        self._apply_theme()
        if selection is not None:
            self.set_selection_model(selection)
        self.clear("Nothing to show yet.")

    # ------------------------------------------------------------ building
    def _build(self) -> None:
        """Create the plot(s); subclasses override."""

    def add_plot(self, row: int, col: int, *, x_label: str = "", y_label: str = "",
                 left_width: int | None = LEFT_AXIS_WIDTH, **kwargs) -> pg.PlotItem:
        """Add a themed PlotItem to :attr:`graphics` and remember its axis labels.

        ``left_width`` fixes the width of the left axis in pixels (``None``:
        as wide as its tick labels, for values of any size).
        """
        plot = self.graphics.addPlot(row=row, col=col, **kwargs)
        if left_width is not None:
            plot.getAxis("left").setWidth(left_width)
        plot.setMenuEnabled(True)
        plot.hideButtons()
        self._plot_list.append(plot)
        if x_label:
            self._axis_labels[(id(plot), "bottom")] = x_label
        if y_label:
            self._axis_labels[(id(plot), "left")] = y_label
        return plot

    def plots(self) -> Sequence[pg.PlotItem]:
        """The pane's PlotItems, top to bottom."""
        return tuple(self._plot_list)

    def set_time_axis(self, plot: pg.PlotItem, dated: bool) -> None:
        """Use a date axis (epoch seconds, shown as written) or a plain position axis at the bottom."""
        current = plot.getAxis("bottom")
        if dated == isinstance(current, pg.DateAxisItem):
            return
        if dated:
            axis = pg.DateAxisItem(orientation="bottom", utcOffset=0)
        else:
            axis = pg.AxisItem(orientation="bottom")
        plot.setAxisItems({"bottom": axis})
        self._axis_labels[(id(plot), "bottom")] = "time" if dated else "observation"
        self._style_plot(plot)

    # --------------------------------------------------------------- theme
    @property
    def colours(self) -> theme.PaneColours:
        return self._colours

    @property
    def data_colour(self) -> str:
        """The colour of the data: PREVIEW while a preview is shown, DATA otherwise."""
        return theme.PREVIEW if self._preview else theme.DATA

    def _style_plot(self, plot: pg.PlotItem) -> None:
        fg = self._colours.foreground
        for name in ("left", "bottom"):
            axis = plot.getAxis(name)
            axis.setPen(make_pen(fg, width=1, alpha=0.6))
            axis.setTextPen(pg.mkPen(fg))
            axis.enableAutoSIPrefix(False)
            text = self._axis_labels.get((id(plot), name))
            if text:
                axis.setLabel(text, color=fg)

    def _apply_theme(self) -> None:
        self._colours = theme.pane_colours(theme.is_dark_palette(self.palette()))
        bg, fg = self._colours.background, self._colours.foreground
        self.graphics.setBackground(bg)
        for plot in self._plot_list:
            self._style_plot(plot)
        self.message_label.setStyleSheet(f"QLabel {{ background: {bg}; color: {fg}; }}")
        muted = colour(fg, 0.75)
        self.status_label.setStyleSheet(f"QLabel {{ color: {muted.name(QColor.NameFormat.HexArgb)}; }}")
        self.preview_badge.setStyleSheet(
            f"QLabel {{ background: {theme.PREVIEW}; color: {bg}; border-radius: 3px;"
            " padding: 0px 6px; font-weight: bold; }"
        )
        self._restyle()

    def changeEvent(self, event: QEvent) -> None:  # Qt override
        if event.type() == QEvent.Type.PaletteChange:
            self._apply_theme()
        super().changeEvent(event)

    # ---------------------------------------------------------- public API
    def show_evaluation(self, evaluation, series=None) -> None:
        """Draw one candidate's evaluation (``series`` gives the time axis, when dated)."""
        fit = evaluation.fit
        if not fit.ok:
            self.clear(f"Fit failed: {fit.failure}" if fit.failure else "Fit failed.")
            return
        self._remove_items()
        self._set_preview_flag(evaluation.is_preview)
        if self._cover_text:
            self.set_status("")
        try:
            self._draw(evaluation, series)
        except (PaneMessage, LagwrightError) as exc:
            self.clear(str(exc))
            return
        self._show_plots()
        self._refresh_selection()
        self._settle_views()

    def clear(self, message: str) -> None:
        """Remove every drawn item and show ``message`` centred in the empty pane."""
        self._remove_items()
        self._set_preview_flag(False)
        self.set_status("")
        self._cover_text = ""
        self.message_label.setText(message)
        self._stack.setCurrentWidget(self.message_label)

    def cover(self, message: str) -> None:
        """Hide everything drawn and show ``message`` in the status line, keeping the items for the next draw.

        For the moment between a step and its first fit: nothing stale is
        visible (the axes stay, empty), and the next :meth:`show_evaluation`
        gives the kept items new data anyway. The plot widget itself stays
        on screen: swapping it for the message page and back made the next
        redraw lay out and repaint every pane afresh (at n = 10,000 the first
        redraw after a step took 0.13-0.19 s that way, 0.09-0.13 s without;
        bench/bench_window.py).
        """
        self._set_preview_flag(False)
        if self._stack.currentWidget() is self.message_label:  # nothing drawn: the message page says it
            self.set_status("")
            self.message_label.setText(message)
            return
        for plot in self._plot_list:
            for item in plot.items:
                item.setVisible(False)
        self._cover_text = message
        self.set_status(message)

    def set_preview(self, preview: bool) -> None:
        """Mark (or unmark) what is drawn as a preview: badge shown, data in the PREVIEW colour."""
        self._set_preview_flag(preview)

    def set_status(self, text: str) -> None:
        """Set the small status line (its full text is also the tooltip, should the pane cut it)."""
        self.status_label.setText(text)
        self.status_label.setToolTip(text)

    @property
    def is_preview(self) -> bool:
        return self._preview

    @property
    def is_showing_message(self) -> bool:
        return self._stack.currentWidget() is self.message_label or bool(self._cover_text)

    @property
    def message(self) -> str:
        """The sentence shown instead of a plot ("" while a plot is shown)."""
        if self._cover_text:
            return self._cover_text
        return self.message_label.text() if self._stack.currentWidget() is self.message_label else ""

    def data_items(self) -> dict[str, object]:
        """The drawn data items by attribute name (``None`` for those not drawn)."""
        return {name: getattr(self, name) for name in self._item_names}

    # ----------------------------------------------------------- selection
    def set_selection_model(self, selection: ResidualSelection | None) -> None:
        """Follow ``selection`` (and push clicks to it) instead of the current model."""
        if self._selection is selection:
            return
        if self._selection is not None:
            self._selection.selection_changed.disconnect(self._on_selection_changed)
        self._selection = selection
        if selection is not None:
            selection.selection_changed.connect(self._on_selection_changed)
        self._refresh_selection()

    def selection_model(self) -> ResidualSelection | None:
        return self._selection

    def click_at(self, x: float, y: float, plot: pg.PlotItem | None = None) -> tuple[int, ...] | None:
        """Handle a click at data coordinates (x, y) of ``plot`` (default: the first plot).

        Returns the positions selected, ``()`` when the click hit nothing
        (the selection is then cleared), or ``None`` when this pane does not
        select anything there.
        """
        if self.is_showing_message:
            return None
        plot = plot if plot is not None else (self._plot_list[0] if self._plot_list else None)
        if plot is None:
            return None
        picked = self._pick(plot, float(x), float(y))
        if picked is None:
            return None
        picked = tuple(int(p) for p in picked)
        if self._selection is not None:
            self._selection.select(picked)
        return picked

    def highlighted_positions(self) -> tuple[int, ...]:
        """Positions this pane currently draws as selected."""
        return tuple(getattr(self, "_highlighted", ()))

    # ------------------------------------------------------------ internals
    def _set_preview_flag(self, preview: bool) -> None:
        self._preview = bool(preview)
        self.preview_badge.setVisible(self._preview)
        self._restyle()

    def _show_plots(self) -> None:
        self.message_label.setText("")
        self._cover_text = ""
        self._stack.setCurrentWidget(self.graphics)

    def _settle_views(self) -> None:
        """Apply pending range changes now, in the drawing job, rather than in the next paint.

        pyqtgraph defers a ViewBox's range update to the start of its paint;
        items that follow the range (clipping, downsampling) then change
        during that paint and ask for a second one. Settling here makes one
        paint enough (measured at n = 1,000-10,000: each plot was painted
        twice per redraw; bench/bench_window.py).
        """
        for plot in self._plot_list:
            plot.getViewBox().prepareForPaint()

    def kept_items(self) -> dict[str, object]:
        """The items this pane makes once and reuses (see :meth:`_make_kept_items`), made on first use.

        Adding items to a scene costs more than giving existing items new
        data (at n = 1,000, a quantile plot redrawn with new items took about
        20 ms, with its kept items 5 ms), so panes keep their items and
        :meth:`clear` only hides them.
        """
        if self._kept is None:
            self._kept = {}
            for plot, items in self._make_kept_items().items():
                for name, item in items.items():
                    plot.addItem(item)
                    self._kept[name] = item
        return self._kept

    def _reveal(self, *names: str) -> None:
        """Show the kept items ``names`` and publish each under its name (as a data item)."""
        for name in names:
            item = self._kept[name]
            item.setVisible(True)
            setattr(self, name, item)

    def _make_kept_items(self) -> dict[pg.PlotItem, dict[str, object]]:
        """Create the reusable items, by plot and name; subclasses override (default: none)."""
        return {}

    def _remove_items(self) -> None:
        kept = set(map(id, (self._kept or {}).values()))
        for plot in self._plot_list:
            for item in list(plot.items):
                if id(item) not in kept:
                    plot.removeItem(item)
            for item in plot.items:
                item.setVisible(False)
        for name in self._item_names:
            setattr(self, name, None)
        self._highlighted = ()

    def _on_selection_changed(self, positions) -> None:
        self._highlight(tuple(positions))

    def _refresh_selection(self) -> None:
        self._highlight(self._selection.positions if self._selection is not None else ())

    def _scene_clicked(self, event) -> None:
        if event.button() != Qt.MouseButton.LeftButton or event.double():
            return
        pos = event.scenePos()
        for plot in self._plot_list:
            vb = plot.getViewBox()
            if vb.sceneBoundingRect().contains(pos):
                point = vb.mapSceneToView(pos)
                self.click_at(point.x(), point.y(), plot=plot)
                return

    # ------------------------------------------------- subclass hooks
    def _draw(self, evaluation, series) -> None:
        raise NotImplementedError

    def _restyle(self) -> None:
        """Re-pen the drawn data items after a preview or theme change."""

    def _highlight(self, positions: tuple[int, ...]) -> None:
        """Draw ``positions`` as selected (those this pane shows); panes without observations ignore it."""
        self._highlighted = ()

    def _pick(self, plot: pg.PlotItem, x: float, y: float) -> tuple[int, ...] | None:
        """Positions under a click, ``()`` for a miss, ``None`` if the pane does not select."""
        return None
