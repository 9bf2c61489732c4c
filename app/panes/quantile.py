"""Normal quantile plot of the standardized residuals with a pointwise 95 % envelope.

Plotting positions are Blom's :math:`p_i = (i - 0.375)/(n + 0.25)`,
i = 1..n, and the sorted residuals are plotted against
:math:`\\Phi^{-1}(p_i)` (Blom, 1958). Because the residuals are standardized
(σ = 1 under the model) the reference line is y = x, not a line fitted to
the quartiles.

Envelope: the i-th order statistic of n uniforms has the Beta(i, n - i + 1)
distribution, so the 2.5 % and 97.5 % points of that Beta law, mapped through
:math:`\\Phi^{-1}`, bound the i-th order statistic of n standard normal
values with probability 95 % (pointwise, not simultaneous; David &
Nagaraja, 2003, §2.1). For long series the envelope is evaluated at up to
:data:`ENVELOPE_POINTS` ranks (all of the 50 most extreme at each end) and
drawn as a line through them.

References
----------
Blom, G. (1958). *Statistical Estimates and Transformed Beta-Variables*.
Wiley.
David, H. A. & Nagaraja, H. N. (2003). *Order Statistics*, 3rd ed., Wiley.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsPathItem
from scipy import stats

from .. import theme
from .base import (
    PaneMessage,
    ResidualPane,
    indices_of,
    line_width,
    make_brush,
    make_pen,
    nearest_point,
    steady_limit,
)

#: Largest number of ranks at which the envelope is evaluated.
ENVELOPE_POINTS = 1200
#: Above this many residuals the points are drawn as a line (they are sorted, so it is the same curve).
SYMBOL_LIMIT = 3000
#: Resolution of the thinned line for long series, in steps per unit of the view's size.
THIN_STEPS = 4000


def blom_positions(n: int) -> np.ndarray:
    """Blom's plotting positions (i - 0.375)/(n + 0.25), i = 1..n."""
    i = np.arange(1, n + 1, dtype=float)
    return (i - 0.375) / (n + 0.25)


def envelope_ranks(n: int, max_points: int = ENVELOPE_POINTS) -> np.ndarray:
    """1-based ranks at which the envelope is evaluated: all of them, or the tails plus a spread."""
    if n <= max_points:
        return np.arange(1, n + 1)
    tail = 50
    middle = np.unique(np.round(np.linspace(tail + 1, n - tail, max_points - 2 * tail)).astype(np.int64))
    return np.concatenate([np.arange(1, tail + 1), middle, np.arange(n - tail + 1, n + 1)])


def thin_monotone_curve(x: np.ndarray, y: np.ndarray, steps: int = THIN_STEPS) -> np.ndarray:
    """Indices of a subset of a monotone curve that keeps its shape to about 1/``steps`` of its extent.

    The path length is measured with x and y scaled to their ranges, and one
    point is kept per 1/``steps`` of it (plus the first and last), so the
    sparse tails keep every point and the crowded middle is thinned. O(n).
    pyqtgraph's own downsampling assumes evenly spaced x, which normal
    quantiles are not.
    """
    if x.size <= 2:
        return np.arange(x.size)
    xr = float(x[-1] - x[0]) or 1.0
    yr = float(np.ptp(y)) or 1.0
    length = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(x) / xr, np.diff(y) / yr))])
    cell = np.floor(length * (steps / max(length[-1], 1e-300))).astype(np.int64)
    keep = np.flatnonzero(np.diff(cell, prepend=-1) != 0)
    if keep[-1] != x.size - 1:
        keep = np.append(keep, x.size - 1)
    return keep


def band_path(x: np.ndarray, lower: np.ndarray, upper: np.ndarray) -> QPainterPath:
    """The closed polygon between two curves over the same ``x``: along ``lower``, back along ``upper``.

    Built in one vectorised call; pyqtgraph's FillBetweenItem rebuilt its
    polygon point by point on each of its two curves' changes (about 8 ms
    per redraw at 1,200 envelope ranks).
    """
    path = pg.arrayToQPath(np.concatenate([x, x[::-1]]), np.concatenate([lower, upper[::-1]]), connect="all")
    path.closeSubpath()
    return path


def band_item() -> QGraphicsPathItem:
    """An empty band (see :func:`band_path`) in the BAND colour, without an outline."""
    item = QGraphicsPathItem()
    item.setBrush(make_brush(theme.BAND, 0.18))
    item.setPen(QPen(Qt.PenStyle.NoPen))
    return item


@lru_cache(maxsize=8)
def normal_scores(n: int) -> np.ndarray:
    """Φ⁻¹ of Blom's positions (read-only; cached, since preview and exact fits share n)."""
    scores = stats.norm.ppf(blom_positions(n))
    scores.setflags(write=False)
    return scores


@lru_cache(maxsize=8)
def normal_envelope(n: int, level: float = 0.95) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Pointwise ``level`` envelope of standard normal order statistics.

    Returns ``(ranks, lower, upper)``: ranks (1-based) and the bounds
    :math:`\\Phi^{-1}(B^{-1}_{i, n-i+1}((1 \\mp level)/2))` there.
    """
    ranks = envelope_ranks(n)
    a, b = ranks.astype(float), (n - ranks + 1).astype(float)
    tail = (1.0 - level) / 2.0
    lower = stats.norm.ppf(stats.beta.ppf(tail, a, b))
    upper = stats.norm.ppf(stats.beta.ppf(1.0 - tail, a, b))
    for arr in (ranks, lower, upper):
        arr.setflags(write=False)
    return ranks, lower, upper


class NormalQuantilePane(ResidualPane):
    """Sorted standardized residuals against normal quantiles at Blom's positions.

    Attributes
    ----------
    points : pyqtgraph.PlotDataItem
        x: ``norm.ppf(blom_positions(n))``; y: sorted residuals. Above
        :data:`SYMBOL_LIMIT` residuals, a line through the points of
        :func:`thin_monotone_curve` (all of them remain in
        :attr:`theoretical` and :attr:`ordered`).
    reference_line : pyqtgraph.PlotDataItem
        y = x.
    envelope_lower, envelope_upper : pyqtgraph.PlotDataItem
        The pointwise 95 % envelope at the ranks of :func:`envelope_ranks`.
    envelope_fill : QGraphicsPathItem
        The band between the envelope lines, one closed polygon (see :func:`band_path`).
    selected_item : pyqtgraph.ScatterPlotItem
    """

    pane_title = "Normal quantile plot"
    _item_names = (
        "points", "reference_line", "envelope_lower", "envelope_upper", "envelope_fill", "selected_item",
    )

    def _build(self) -> None:
        self.plot = self.add_plot(0, 0, x_label="normal quantile", y_label="standardized residual")
        self.theoretical = np.empty(0)
        self.ordered = np.empty(0)
        self.order = np.empty(0, dtype=np.intp)
        self.rank_of = np.empty(0, dtype=np.intp)
        self.positions = np.empty(0, dtype=np.int64)
        self._envelope_n = -1

    def _draw(self, evaluation, series) -> None:
        fit = evaluation.fit
        _, z = fit.diagnostic_residuals()
        n = z.size
        if n < 3:
            raise PaneMessage("Too few residuals for a quantile plot.")
        self.positions = fit.diagnostic_positions().astype(np.int64)
        # Sorted with the fit (lagwright.core.distribution); here only for evaluations made without it.
        order = (evaluation.distribution.order if evaluation.distribution is not None
                 else np.argsort(z, kind="stable"))
        rank_of = np.empty(n, dtype=np.intp)
        rank_of[order] = np.arange(n)
        theoretical = normal_scores(n)
        ordered = z[order]
        self.theoretical, self.ordered, self.order, self.rank_of = theoretical, ordered, order, rank_of

        ranks, lower, upper = normal_envelope(n)
        kept = self.kept_items()
        if self._envelope_n != n:  # the envelope depends on n alone: most steps keep it
            ex = theoretical[ranks - 1]
            kept["envelope_lower"].setData(ex, lower)
            kept["envelope_upper"].setData(ex, upper)
            kept["envelope_fill"].setPath(band_path(ex, lower, upper))
            self._envelope_n = n
        lim = max(float(np.max(np.abs(theoretical))), float(np.max(np.abs(ordered)))) * 1.05
        kept["reference_line"].setData([-lim, lim], [-lim, lim])
        kept["selected_item"].setData(x=[], y=[])
        code = self.data_colour
        if n <= SYMBOL_LIMIT:
            self.points = kept["symbol_points"]
            self.points.setData(theoretical, ordered, symbolBrush=make_brush(code, 0.8))  # one layout of the spots
        else:
            self.points = kept["line_points"]
            keep = thin_monotone_curve(theoretical, ordered)
            self.points.setData(theoretical[keep], ordered[keep], pen=make_pen(code, width=line_width(n, 2.0)))
        self.points.setVisible(True)
        self._reveal("envelope_lower", "envelope_upper", "envelope_fill", "reference_line", "selected_item")
        self.plot.setXRange(float(theoretical[0]) * 1.05, float(theoretical[-1]) * 1.05, padding=0)
        ylo, yhi = min(float(ordered[0]), float(lower[0])), max(float(ordered[-1]), float(upper[-1]))
        pad = 0.05 * (yhi - ylo)
        self.plot.setYRange(-steady_limit(-(ylo - pad), 0.5), steady_limit(yhi + pad, 0.5), padding=0)
        outside = int(np.count_nonzero((ordered[ranks - 1] < lower) | (ordered[ranks - 1] > upper)))
        shown = "" if ranks.size == n else f" of {ranks.size} ranks"
        self.set_status(f"Blom positions; pointwise 95 % band; outside: {outside}{shown}")

    def _make_kept_items(self) -> dict:
        """Symbols for up to :data:`SYMBOL_LIMIT` points ("symbol_points"), a thinned line beyond
        ("line_points"; one of the two is shown), the envelope, its fill, y = x and the selection."""
        band_pen = make_pen(theme.BAND, width=1.2)
        # No dynamic range limit: the view always holds the data, and the limit makes every
        # change of the y range redo the items (the scatter's spots, the fill's path).
        fixed = {"dynamicRangeLimit": None}
        lower = pg.PlotDataItem([], [], pen=band_pen, antialias=True, **fixed)
        upper = pg.PlotDataItem([], [], pen=band_pen, antialias=True, **fixed)
        self._envelope_n = -1
        return {self.plot: {
            "envelope_fill": band_item(),
            "envelope_lower": lower,
            "envelope_upper": upper,
            "reference_line": pg.PlotDataItem([], [], pen=make_pen(theme.REFERENCE, width=1.5), antialias=True,
                                            **fixed),
            "symbol_points": pg.PlotDataItem(
                [], [], pen=None, symbol="o", symbolSize=5, symbolPen=None, symbolBrush=make_brush(theme.DATA, 0.8),
                **fixed,
            ),
            "line_points": pg.PlotDataItem([], [], pen=make_pen(theme.DATA), antialias=True, **fixed),
            "selected_item": pg.ScatterPlotItem(
                x=[], y=[], symbol="o", size=14, pen=make_pen(theme.ATTENTION, width=2.2), brush=None
            ),
        }}

    def _restyle(self) -> None:
        if getattr(self, "points", None) is None:
            return
        code = self.data_colour
        if self.points.opts.get("symbol") is not None:
            self.points.setSymbolPen(None)
            self.points.setSymbolBrush(make_brush(code, 0.8))
        else:
            self.points.setPen(make_pen(code, width=line_width(self.ordered.size, 2.0)))

    def _highlight(self, positions: tuple[int, ...]) -> None:
        if getattr(self, "selected_item", None) is None:
            self._highlighted = ()
            return
        idx = indices_of(self.positions, positions)
        ranks = self.rank_of[idx]
        self.selected_item.setData(x=self.theoretical[ranks], y=self.ordered[ranks])
        self._highlighted = tuple(int(p) for p in self.positions[idx])

    def _pick(self, plot, x: float, y: float):
        if self.points is None:
            return None
        r = nearest_point(plot, self.theoretical, self.ordered, x, y, x_sorted=True)
        return () if r is None else (int(self.positions[self.order[r]]),)
