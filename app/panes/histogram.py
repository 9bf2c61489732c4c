"""Histogram of the standardized residuals on a density scale, with the N(0, 1) density.

Bins: Freedman-Diaconis, 10..60 equal bins over the range of the residuals
(see :mod:`lagwright.core.distribution`, which bins them with the fit). Bar
heights are count / (n · width), so the bars have total area 1 and are
comparable with the normal density curve.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from scipy import stats

from lagwright.core.distribution import residual_distribution

from .. import theme
from .base import PaneMessage, ResidualPane, indices_of, make_brush, make_pen, steady_limit

class ResidualHistogramPane(ResidualPane):
    """Density histogram of the standardized residuals with the N(0, 1) curve.

    Attributes
    ----------
    bars : pyqtgraph.BarGraphItem
        One bar per bin; ``opts["height"]`` are densities.
    normal_curve : pyqtgraph.PlotDataItem
        The standard normal density.
    selected_bars : pyqtgraph.BarGraphItem
        The bins holding selected observations, in the ATTENTION colour.
    selected_ticks : pyqtgraph.ScatterPlotItem
        A tick at each selected residual's value on the baseline.
    edges, counts, density : numpy.ndarray
        The bins as drawn.
    """

    pane_title = "Residual histogram"
    _item_names = ("bars", "normal_curve", "selected_bars", "selected_ticks")

    def _build(self) -> None:
        self.plot = self.add_plot(0, 0, x_label="standardized residual", y_label="density")
        self.edges = np.empty(0)
        self.counts = np.empty(0, dtype=np.int64)
        self.density = np.empty(0)
        self.bin_of = np.empty(0, dtype=np.intp)
        self.z = np.empty(0)
        self.positions = np.empty(0, dtype=np.int64)

    def _draw(self, evaluation, series) -> None:
        fit = evaluation.fit
        _, z = fit.diagnostic_residuals()
        if z.size < 2:
            raise PaneMessage("Too few residuals for a histogram.")
        self.z = z
        self.positions = fit.diagnostic_positions().astype(np.int64)
        # Binned with the fit (lagwright.core.distribution); computed here for evaluations made without it.
        shape = evaluation.distribution if evaluation.distribution is not None else residual_distribution(z)
        edges, counts, bin_of, density = shape.edges, shape.counts, shape.bin_of, shape.density
        k = edges.size - 1
        self.edges, self.counts, self.density, self.bin_of = edges, counts, density, bin_of

        kept = self.kept_items()
        kept["bars"].setOpts(x0=edges[:-1], x1=edges[1:], height=density)
        lim = steady_limit(max(4.0, float(np.max(np.abs(z))) * 1.05), 0.5)
        if self._curve_lim != lim:
            grid = np.linspace(-lim, lim, 401)
            kept["normal_curve"].setData(grid, stats.norm.pdf(grid))
            self._curve_lim = lim
        kept["selected_bars"].setOpts(x0=[], x1=[], height=[])
        kept["selected_ticks"].setData(x=[], y=[])
        self._reveal("bars", "selected_bars", "normal_curve", "selected_ticks")
        self._restyle()
        self.plot.setXRange(-lim, lim, padding=0)
        top = max(float(density.max()), float(stats.norm.pdf(0.0)))
        self.plot.setYRange(-0.04 * top, steady_limit(top * 1.08, 0.05), padding=0)
        self._tick_y = -0.02 * top
        self.set_status(f"n = {z.size}; {k} bins (Freedman-Diaconis); curve: N(0, 1) density")

    def _make_kept_items(self) -> dict:
        self._curve_lim = None
        return {self.plot: {
            "bars": pg.BarGraphItem(x0=[], x1=[], height=[], pen=None, brush=None),
            "selected_bars": pg.BarGraphItem(
                x0=[], x1=[], height=[],
                pen=make_pen(theme.ATTENTION, width=1.5), brush=make_brush(theme.ATTENTION, 0.55),
            ),
            "normal_curve": pg.PlotDataItem(
                [], [], pen=make_pen(theme.REFERENCE, width=2), antialias=True, dynamicRangeLimit=None
            ),
            "selected_ticks": pg.ScatterPlotItem(
                x=[], y=[], symbol="t1", size=11,
                pen=make_pen(theme.ATTENTION, width=1), brush=make_brush(theme.ATTENTION),
            ),
        }}

    def _restyle(self) -> None:
        if getattr(self, "bars", None) is not None:
            code = self.data_colour
            soft = theme.PREVIEW if self.is_preview else theme.DATA_SOFT
            self.bars.setOpts(pen=make_pen(code, width=1), brush=make_brush(soft, 0.85))

    def _highlight(self, positions: tuple[int, ...]) -> None:
        if getattr(self, "selected_bars", None) is None:
            self._highlighted = ()
            return
        idx = indices_of(self.positions, positions)
        bins = np.unique(self.bin_of[idx])
        self.selected_bars.setOpts(x0=self.edges[bins], x1=self.edges[bins + 1], height=self.density[bins])
        self.selected_ticks.setData(x=self.z[idx], y=np.full(idx.size, self._tick_y))
        self.selected_bins = bins
        self._highlighted = tuple(int(p) for p in self.positions[idx])

    def _pick(self, plot, x: float, y: float):
        if self.bars is None:
            return None
        k = self.edges.size - 1
        if not self.edges[0] <= x <= self.edges[-1] or y < 0:
            return ()
        b = min(int(np.searchsorted(self.edges, x, side="right")) - 1, k - 1)
        # A click in the bar, or just above a short one, picks the bin.
        reach = max(float(self.density[b]), 0.04 * float(self.density.max()))
        if y > reach:
            return ()
        return tuple(int(p) for p in self.positions[self.bin_of == b])
