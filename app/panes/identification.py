"""The prepared series and its ACF and PACF: where the choice of a first model starts.

Shows :math:`w_t`, the series after the spec's transform and differencing
(:func:`lagwright.core.prepare.prepare`), and below it its correlogram
(:func:`lagwright.core.correlation.correlogram`, with the seasonal period so
that two seasonal lags are shown) with the ±2/√n band (common practice;
Box, Jenkins, Reinsel & Ljung, 2015, ch. 6 on identification).

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley, ch. 6.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg

from lagwright.core.correlation import correlogram
from lagwright.core.errors import LagwrightError
from lagwright.core.prepare import prepare

from .. import theme
from .base import (
    ResidualPane,
    add_fast_curve,
    indices_of,
    line_width,
    make_pen,
    nearest_point,
    observation_x,
)
from .correlation import draw_correlation_bars, items_of, kept_correlation_items, restyle_bars


class IdentificationPane(ResidualPane):
    """Prepared (transformed and differenced) series on top, its ACF and PACF below.

    Attributes
    ----------
    curve : pyqtgraph.PlotDataItem
        x: positions in the original series (or epoch seconds); y:
        ``prepare(series, spec).values``.
    acf_bars, pacf_bars : pyqtgraph.BarGraphItem
    acf_band_lines, pacf_band_lines : tuple of pyqtgraph.InfiniteLine
    season_marks : tuple of pyqtgraph.InfiniteLine
    selected_item : pyqtgraph.ScatterPlotItem
    """

    pane_title = "Prepared series"
    _item_names = (
        "curve", "mean_line", "acf_bars", "pacf_bars", "acf_band_lines", "pacf_band_lines",
        "season_marks", "selected_item",
    )

    def _build(self) -> None:
        self.trace_plot = self.add_plot(0, 0, colspan=2, x_label="observation", y_label="prepared value",
                                        left_width=None)
        self.acf_plot = self.add_plot(1, 0, x_label="lag", y_label="autocorrelation")
        self.pacf_plot = self.add_plot(1, 1, x_label="lag", y_label="partial autocorrelation")
        self.pacf_plot.setXLink(self.acf_plot)
        self.graphics.ci.layout.setRowStretchFactor(0, 1)
        self.graphics.ci.layout.setRowStretchFactor(1, 1)
        self.prepared = None
        self.correlogram = None
        self.x = np.empty(0)
        self.w = np.empty(0)
        self.positions = np.empty(0, dtype=np.int64)
        self._acf = self._pacf = None

    def time_axis_view_box(self) -> pg.ViewBox:
        """The ViewBox of the prepared-series trace, for ``setXLink`` with the other time panes."""
        return self.trace_plot.getViewBox()

    #: The same ViewBox, under the name the window uses.
    time_view_box = time_axis_view_box

    # -------------------------------------------------------------- drawing
    def show_prepared(self, series, spec) -> None:
        """Draw ``prepare(series, spec)`` and its correlogram; an InputError shows as a message."""
        self._remove_items()
        self._set_preview_flag(False)
        try:
            self._draw_prepared(series, spec)
        except LagwrightError as exc:
            self.clear(str(exc))
            return
        self._show_plots()
        self._refresh_selection()

    def show_evaluation(self, evaluation, series=None) -> None:
        """Show the prepared series of the evaluated candidate's spec (the fit itself is not needed)."""
        if series is None:
            self.clear("The prepared series needs the loaded series.")
            return
        self.show_prepared(series, evaluation.spec)

    def _draw_prepared(self, series, spec) -> None:
        prepared = prepare(series, spec)
        season = spec.s if spec.s >= 2 else 0
        cg = correlogram(prepared.values, season=season)
        w = np.asarray(prepared.values)
        positions = np.arange(w.size, dtype=np.int64) + prepared.offset
        x = observation_x(series, positions)
        self.prepared, self.correlogram = prepared, cg
        self.x, self.w, self.positions = x, w, positions
        self._x_sorted = bool(np.all(np.diff(x) >= 0))
        self.set_time_axis(self.trace_plot, series.times is not None)

        finite = np.isfinite(w)
        mean = float(np.mean(w[finite]))
        self.mean_line = pg.InfiniteLine(mean, angle=0, pen=make_pen(theme.REFERENCE, width=1, alpha=0.7))
        self.selected_item = pg.ScatterPlotItem(
            x=[], y=[], symbol="o", size=14, pen=make_pen(theme.ATTENTION, width=2.2), brush=None
        )
        self.trace_plot.addItem(self.mean_line)
        pen = make_pen(self.data_colour, width=line_width(w.size, 1.3))
        self.curve = add_fast_curve(self.trace_plot, x, w, pen, connect="finite")
        self.trace_plot.addItem(self.selected_item)
        self.trace_plot.setXRange(float(x[0]), float(x[-1]), padding=0.01)
        self.trace_plot.enableAutoRange(axis="y")

        colour = self.data_colour
        kept = self.kept_items()
        self._acf = draw_correlation_bars(self.acf_plot, items_of(kept, "acf"), cg.lags, cg.acf, cg.band, season, colour)
        self._pacf = draw_correlation_bars(self.pacf_plot, items_of(kept, "pacf"), cg.lags, cg.pacf, cg.band, season,
                                           colour)
        self.acf_bars, self.pacf_bars = self._acf.bars, self._pacf.bars
        self.acf_band_lines, self.pacf_band_lines = self._acf.band_lines, self._pacf.band_lines
        self.season_marks = self._acf.season_marks + self._pacf.season_marks

        steps = [f"d = {spec.d}"]
        if spec.D:
            steps.append(f"D = {spec.D}")
        if spec.s:
            steps.append(f"s = {spec.s}")
        if spec.transform.kind != "none":
            steps.insert(0, spec.transform.label)
        missing = int(w.size - np.count_nonzero(finite))
        text = f"{', '.join(steps)}; n = {cg.n}; band ±2/√n = ±{cg.band:.3f}"
        if missing:
            text += f"; {missing} missing"
        self.set_status(text)

    def _make_kept_items(self) -> dict:
        return kept_correlation_items(self.acf_plot, self.pacf_plot)

    def _remove_items(self) -> None:
        super()._remove_items()
        self._acf = self._pacf = None

    def _restyle(self) -> None:
        if getattr(self, "curve", None) is not None:
            self.curve.setPen(make_pen(self.data_colour, width=line_width(self.w.size, 1.3)))
        cg = getattr(self, "correlogram", None)
        if cg is not None:
            restyle_bars(getattr(self, "_acf", None), cg.acf, cg.band, self.data_colour)
            restyle_bars(getattr(self, "_pacf", None), cg.pacf, cg.band, self.data_colour)

    # ------------------------------------------------------------ selection
    def _highlight(self, positions: tuple[int, ...]) -> None:
        if getattr(self, "selected_item", None) is None:
            self._highlighted = ()
            return
        idx = indices_of(self.positions, positions)
        idx = idx[np.isfinite(self.w[idx])]
        self.selected_item.setData(x=self.x[idx], y=self.w[idx])
        self._highlighted = tuple(int(p) for p in self.positions[idx])

    def _pick(self, plot, x: float, y: float):
        if plot is not self.trace_plot or self.curve is None:
            return None
        i = nearest_point(plot, self.x, self.w, x, y, self._x_sorted)
        return () if i is None else (int(self.positions[i]),)
