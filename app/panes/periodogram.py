"""Cumulative periodogram of the residuals with Kolmogorov-Smirnov bands.

Draws :class:`lagwright.core.diagnostics.CumulativePeriodogram`: the
normalised cumulative periodogram C_j against frequency f_j = j/n, the
white-noise line j/q, and the bands j/q ± K_α/√q at α = 5 % (solid) and
10 % and 1 % (dashed; the 1 % band is the outer one). The largest deviation
from the line is marked and labelled (Box, Jenkins, Reinsel & Ljung, 2015,
ch. 8).

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley, ch. 8.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt

from .. import theme
from .base import PaneMessage, ResidualPane, add_fast_curve, line_width, make_pen

#: Line style of each band.
BAND_STYLES = {0.05: Qt.PenStyle.SolidLine, 0.10: Qt.PenStyle.DashLine, 0.01: Qt.PenStyle.DashLine}


class CumulativePeriodogramPane(ResidualPane):
    """Cumulative periodogram, j/q line and KS bands.

    Attributes
    ----------
    curve : pyqtgraph.PlotDataItem
        (frequencies, cumulative) of the diagnostics' cumulative periodogram.
    reference_line : pyqtgraph.PlotDataItem
        The line j/q, through its end points (f_1, 1/q) and (f_q, 1).
    band_lines : dict
        alpha -> (lower, upper) PlotDataItems at j/q ∓ band[alpha] (end points).
    max_deviation_item : pyqtgraph.PlotDataItem
        Vertical segment from the line to the curve at the largest deviation.
    max_deviation_label : pyqtgraph.TextItem
    """

    pane_title = "Cumulative periodogram"
    _item_names = ("curve", "reference_line", "band_lines", "max_deviation_item", "max_deviation_label")

    def _build(self) -> None:
        self.plot = self.add_plot(
            0, 0, x_label="frequency (cycles per observation)", y_label="cumulative periodogram"
        )
        self.periodogram = None

    def _draw(self, evaluation, series) -> None:
        diagnostics = evaluation.diagnostics
        if diagnostics is None:
            raise PaneMessage(evaluation.diagnostics_error or "The residual checks could not run.")
        cp = diagnostics.cumulative_periodogram
        if cp.q < 1:
            raise PaneMessage("Too few residuals for a cumulative periodogram.")
        self.periodogram = cp
        f, ref = np.asarray(cp.frequencies), np.asarray(cp.reference)
        # j/q is linear in f_j = j/n, so the line and the bands need only their end points.
        ends = [0, f.size - 1]
        fe, re = f[ends], ref[ends]
        self.reference_line = pg.PlotDataItem(
            fe, re, pen=make_pen(theme.REFERENCE, width=1.5), antialias=True
        )
        self.plot.addItem(self.reference_line)
        self.band_lines = {}
        for alpha in sorted(cp.band, reverse=True):
            width = cp.band[alpha]
            style = BAND_STYLES.get(alpha, Qt.PenStyle.DashLine)
            pen = make_pen(theme.BAND, width=1.6 if alpha == 0.05 else 1.1, style=style)
            lower = pg.PlotDataItem(fe, re - width, pen=pen, antialias=True)
            upper = pg.PlotDataItem(fe, re + width, pen=pen, antialias=True)
            self.plot.addItem(lower)
            self.plot.addItem(upper)
            self.band_lines[alpha] = (lower, upper)
        pen = make_pen(self.data_colour, width=line_width(cp.q, 1.8))
        self.curve = add_fast_curve(self.plot, f, cp.cumulative, pen)

        where = int(np.argmin(np.abs(f - cp.max_deviation_frequency)))
        rejected = bool(cp.reject.get(0.05, False))
        mark = theme.ATTENTION if rejected else theme.REFERENCE
        fx, c, r = float(f[where]), float(cp.cumulative[where]), float(ref[where])
        self.max_deviation_item = pg.PlotDataItem(
            [fx, fx], [r, c], pen=make_pen(mark, width=2.5), antialias=True,
            symbol="o", symbolSize=7, symbolPen=make_pen(mark, width=1.5), symbolBrush=None,
        )
        self.plot.addItem(self.max_deviation_item)
        # The bottom-right corner is always clear: the bands run along the diagonal.
        b5 = cp.band.get(0.05, float("nan"))
        self.max_deviation_label = pg.TextItem(
            f"largest deviation {cp.max_deviation:.3f} at f = {fx:.3f}\n5 % band: ±{b5:.3f}",
            color=mark, anchor=(1.0, 1.0),
        )
        self.max_deviation_label.setPos(0.5, 0.0)
        self.plot.addItem(self.max_deviation_label)

        self.plot.setXRange(0.0, 0.5, padding=0.01)
        self.plot.setYRange(0.0, 1.0, padding=0.02)
        self.set_status(f"q = {cp.q}; {cp.verdict}; bands: 5 % solid, 10 % / 1 % dashed")

    def _restyle(self) -> None:
        if getattr(self, "curve", None) is not None:
            self.curve.setPen(make_pen(self.data_colour, width=line_width(self.periodogram.q, 1.8)))
