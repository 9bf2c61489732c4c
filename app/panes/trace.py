"""Standardized residuals over time, with ±2σ lines and |z| > 3 outliers marked.

The standardized one-step prediction errors have σ = 1 under the model, so
the lines at ±2 are the ±2σ lines (about 95 % of a normal white-noise series
lies between them) and values beyond ±3 are the outliers reported by
:func:`lagwright.core.diagnostics.find_outliers` (common practice).
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt

from .. import theme
from .base import (
    PaneMessage,
    ResidualPane,
    THIN_LINE_POINTS,
    indices_of,
    line_width,
    make_brush,
    make_pen,
    nearest_point,
    observation_x,
    steady_limit,
)


class ResidualTracePane(ResidualPane):
    """Standardized residuals against observation position (or time, for a dated series).

    Attributes
    ----------
    curve : pyqtgraph.PlotDataItem
        x: observation positions (or epoch seconds); y:
        ``fit.diagnostic_residuals()[1]``.
    zero_line, upper_line, lower_line : pyqtgraph.InfiniteLine
        At 0 and ±2 (σ = 1).
    outlier_item : pyqtgraph.ScatterPlotItem
        Residuals with |z| above the outlier threshold (3), as diamonds.
    selected_item : pyqtgraph.ScatterPlotItem
        Rings on the selected observations.
    """

    pane_title = "Residuals over time"
    _item_names = ("curve", "zero_line", "upper_line", "lower_line", "outlier_item", "selected_item")

    def _build(self) -> None:
        self.plot = self.add_plot(0, 0, x_label="observation", y_label="standardized residual")
        self.x = np.empty(0)
        self.z = np.empty(0)
        self.positions = np.empty(0, dtype=np.int64)
        self._x_sorted = True

    def time_axis_view_box(self) -> pg.ViewBox:
        """The ViewBox of the time axis, for ``setXLink`` with the series pane."""
        return self.plot.getViewBox()

    #: The same ViewBox, under the name the window uses.
    time_view_box = time_axis_view_box

    # -------------------------------------------------------------- drawing
    def _draw(self, evaluation, series) -> None:
        fit = evaluation.fit
        _, z = fit.diagnostic_residuals()
        positions = fit.diagnostic_positions().astype(np.int64)
        if z.size == 0:
            raise PaneMessage("The fit left no residuals to show.")
        x = observation_x(series, positions)
        self.x, self.z, self.positions = x, z, positions
        self._x_sorted = bool(np.all(np.diff(x) >= 0))
        self.set_time_axis(self.plot, series is not None and series.times is not None)

        diagnostics = evaluation.diagnostics
        if diagnostics is not None and diagnostics.outliers.n_checked == z.size:
            threshold = diagnostics.outliers.threshold
            outliers = np.asarray(diagnostics.outliers.positions, dtype=np.intp)
            expected = diagnostics.outliers.expected
        else:  # the same rule as find_outliers, should the checks not have run
            threshold = 3.0
            outliers = np.flatnonzero(np.abs(z) > threshold)
            expected = None

        kept = self.kept_items()
        self.curve = kept["curve"]
        self.curve.setData(x, z, pen=make_pen(self.data_colour, width=line_width(z.size, 1.3)),
                           antialias=z.size <= THIN_LINE_POINTS)
        # switched on once the item is in the view (see add_fast_curve)
        self.curve.setDownsampling(auto=True, method="peak")
        self.curve.setClipToView(True)
        self.curve.setVisible(True)
        kept["outlier_item"].setData(x=x[outliers], y=z[outliers])
        kept["selected_item"].setData(x=[], y=[])
        self._reveal("zero_line", "upper_line", "lower_line", "outlier_item", "selected_item")
        self.outlier_indices = outliers
        lim = steady_limit(max(3.5, float(np.max(np.abs(z))) * 1.08), 0.5)
        self.plot.setYRange(-lim, lim, padding=0)
        self.plot.setXRange(float(x[0]), float(x[-1]), padding=0.01)
        text = f"n = {z.size}; {outliers.size} beyond ±{threshold:g}σ"
        if expected is not None:
            text += f" (about {expected:.1f} expected by chance)"
        self.set_status(text)

    def _make_kept_items(self) -> dict:
        band_pen = make_pen(theme.BAND, width=1.2, style=Qt.PenStyle.DashLine)
        label_opts = {
            "position": 0.02, "anchors": [(0, 1), (0, 1)], "color": theme.BAND,
            "fill": make_brush(self.colours.background, 0.85),  # readable over a dense trace
        }
        return {self.plot: {
            "curve": pg.PlotDataItem([], [], pen=make_pen(theme.DATA), connect="all"),
            # The lines go above the data: a dense trace would hide them.
            "zero_line": pg.InfiniteLine(0.0, angle=0, pen=make_pen(theme.REFERENCE, width=1, alpha=0.7)),
            "upper_line": pg.InfiniteLine(2.0, angle=0, pen=band_pen, label="+2σ", labelOpts=label_opts),
            "lower_line": pg.InfiniteLine(
                -2.0, angle=0, pen=band_pen, label="−2σ", labelOpts={**label_opts, "anchors": [(0, 0), (0, 0)]}
            ),
            "outlier_item": pg.ScatterPlotItem(
                x=[], y=[], symbol="d", size=9, pen=make_pen(theme.ATTENTION, width=1),
                brush=make_brush(theme.ATTENTION),
            ),
            "selected_item": pg.ScatterPlotItem(
                x=[], y=[], symbol="o", size=15, pen=make_pen(theme.ATTENTION, width=2.2), brush=None,
            ),
        }}

    def _restyle(self) -> None:
        if getattr(self, "curve", None) is not None:
            self.curve.setPen(make_pen(self.data_colour, width=line_width(self.z.size, 1.3)))
        kept = self._kept or {}
        for name in ("upper_line", "lower_line"):
            if name in kept:  # the labels' backing follows the theme
                kept[name].label.fill = make_brush(self.colours.background, 0.85)
                kept[name].label.update()

    # ------------------------------------------------------------ selection
    def _highlight(self, positions: tuple[int, ...]) -> None:
        if getattr(self, "selected_item", None) is None:
            self._highlighted = ()
            return
        idx = indices_of(self.positions, positions)
        self.selected_item.setData(x=self.x[idx], y=self.z[idx])
        self._highlighted = tuple(int(p) for p in self.positions[idx])

    def _pick(self, plot, x: float, y: float):
        if self.curve is None:
            return None
        i = nearest_point(plot, self.x, self.z, x, y, self._x_sorted)
        return () if i is None else (int(self.positions[i]),)
