"""ACF and PACF bars of the residuals with the ±2/√n white-noise band.

Bars are the correlogram of :class:`lagwright.core.diagnostics.Diagnostics`
(lags 1..nlags); the band ±2/√n is the approximate 95 % band for white noise
(Box, Jenkins, Reinsel & Ljung, 2015, ch. 2; common practice). Bars beyond
the band are drawn in the ATTENTION colour; with a seasonal period s, the
lags s, 2s, ... get a faint vertical mark.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt

from .. import theme
from .base import PaneMessage, ResidualPane, make_brush, make_pen, steady_limit

#: Bar width in lags.
BAR_WIDTH = 0.4


@dataclass
class BarSet:
    """The items of one correlation plot."""

    bars: pg.BarGraphItem
    band_lines: tuple[pg.InfiniteLine, pg.InfiniteLine]
    zero_line: pg.InfiniteLine
    season_marks: tuple[pg.InfiniteLine, ...]
    outside: np.ndarray


def bar_brushes(values: np.ndarray, band: float, data_colour: str) -> tuple[list, list]:
    """Pens and brushes per bar: ATTENTION beyond the band, ``data_colour`` inside."""
    outside = np.abs(values) > band
    pens = [make_pen(theme.ATTENTION if o else data_colour, width=1) for o in outside]
    brushes = [make_brush(theme.ATTENTION if o else data_colour, 1.0 if o else 0.85) for o in outside]
    return pens, brushes


def correlation_items() -> dict[str, object]:
    """The items of one correlation plot, empty: bars, the band's two lines and the zero line."""
    band_pen = make_pen(theme.BAND, width=1.3, style=Qt.PenStyle.DashLine)
    return {
        "bars": pg.BarGraphItem(x=[], height=[], width=BAR_WIDTH),
        "upper": pg.InfiniteLine(0.0, angle=0, pen=band_pen),
        "lower": pg.InfiniteLine(0.0, angle=0, pen=band_pen),
        "zero": pg.InfiniteLine(0.0, angle=0, pen=make_pen(theme.REFERENCE, width=1)),
    }


def kept_correlation_items(acf_plot: pg.PlotItem, pacf_plot: pg.PlotItem) -> dict:
    """Kept items (see ``ResidualPane.kept_items``) of an ACF and a PACF plot, named ``acf_*`` and ``pacf_*``."""
    return {plot: {f"{prefix}_{key}": item for key, item in correlation_items().items()}
            for plot, prefix in ((acf_plot, "acf"), (pacf_plot, "pacf"))}


def items_of(kept: dict, prefix: str) -> dict:
    """The kept items of one plot (``prefix`` "acf" or "pacf"), under their short names."""
    return {key: kept[f"{prefix}_{key}"] for key in ("bars", "upper", "lower", "zero")}


def draw_correlation_bars(
    plot: pg.PlotItem, items: dict, lags: np.ndarray, values: np.ndarray, band: float, season: int,
    data_colour: str,
) -> BarSet:
    """Give one plot's kept ``items`` new bars and band; add the seasonal marks; set the ranges."""
    lags = np.asarray(lags, dtype=float)
    values = np.asarray(values, dtype=float)
    pens, brushes = bar_brushes(values, band, data_colour)
    bars = items["bars"]
    bars.setOpts(x=lags, height=np.nan_to_num(values), width=BAR_WIDTH, pens=pens, brushes=brushes)
    items["upper"].setValue(band)
    items["lower"].setValue(-band)
    marks = []
    nlags = int(lags[-1]) if lags.size else 0
    if season >= 2:
        mark_pen = make_pen(theme.REFERENCE, width=1, style=Qt.PenStyle.DotLine, alpha=0.55)
        marks = [pg.InfiniteLine(float(m), angle=90, pen=mark_pen) for m in range(season, nlags + 1, season)]
    for item in marks:
        plot.addItem(item)
    for item in items.values():
        item.setVisible(True)
    finite = values[np.isfinite(values)]
    lim = max(2.5 * band, float(np.max(np.abs(finite))) if finite.size else 0.0) * 1.12
    lim = min(steady_limit(max(lim, 0.1), 0.05), 1.05)
    plot.setYRange(-lim, lim, padding=0)
    plot.setXRange(0.4, nlags + 0.6, padding=0)
    return BarSet(bars, (items["upper"], items["lower"]), items["zero"], tuple(marks),
                  np.flatnonzero(np.abs(values) > band) + 1)


def restyle_bars(barset: BarSet | None, values: np.ndarray, band: float, data_colour: str) -> None:
    if barset is not None:
        pens, brushes = bar_brushes(np.asarray(values, dtype=float), band, data_colour)
        barset.bars.setOpts(pens=pens, brushes=brushes)


class CorrelationPane(ResidualPane):
    """Residual ACF (top) and PACF (bottom) with ±2/√n bands.

    Attributes
    ----------
    acf_bars, pacf_bars : pyqtgraph.BarGraphItem
        ``getData()`` gives (lags, values) as in ``diagnostics.correlogram``.
    acf_band_lines, pacf_band_lines : tuple of pyqtgraph.InfiniteLine
        At +band and -band, band = ``correlogram.band`` = 2/√n.
    season_marks : tuple of pyqtgraph.InfiniteLine
        At multiples of the seasonal period (both plots).
    """

    pane_title = "Residual ACF and PACF"
    _item_names = ("acf_bars", "pacf_bars", "acf_band_lines", "pacf_band_lines", "season_marks")

    def _build(self) -> None:
        self.acf_plot = self.add_plot(0, 0, y_label="autocorrelation")
        self.pacf_plot = self.add_plot(1, 0, x_label="lag", y_label="partial autocorrelation")
        self.pacf_plot.setXLink(self.acf_plot)
        self._acf = self._pacf = None
        self.correlogram = None

    def _draw(self, evaluation, series) -> None:
        diagnostics = evaluation.diagnostics
        if diagnostics is None:
            raise PaneMessage(evaluation.diagnostics_error or "The residual checks could not run.")
        cg = diagnostics.correlogram
        self.correlogram = cg
        season = diagnostics.season
        colour = self.data_colour
        kept = self.kept_items()
        self._acf = draw_correlation_bars(self.acf_plot, items_of(kept, "acf"), cg.lags, cg.acf, cg.band, season, colour)
        self._pacf = draw_correlation_bars(self.pacf_plot, items_of(kept, "pacf"), cg.lags, cg.pacf, cg.band, season,
                                           colour)
        self.acf_bars, self.pacf_bars = self._acf.bars, self._pacf.bars
        self.acf_band_lines, self.pacf_band_lines = self._acf.band_lines, self._pacf.band_lines
        self.season_marks = self._acf.season_marks + self._pacf.season_marks
        text = (
            f"±2/√n = ±{cg.band:.3f}; outside: ACF {self._acf.outside.size}, "
            f"PACF {self._pacf.outside.size} of {cg.nlags} lags"
        )
        if season >= 2:
            text += f"; dotted: lags {season}, {2 * season}, …"
        self.set_status(text)

    def _make_kept_items(self) -> dict:
        return kept_correlation_items(self.acf_plot, self.pacf_plot)

    def _remove_items(self) -> None:
        super()._remove_items()
        self._acf = self._pacf = None

    def _restyle(self) -> None:
        cg = getattr(self, "correlogram", None)
        if cg is None:
            return
        restyle_bars(getattr(self, "_acf", None), cg.acf, cg.band, self.data_colour)
        restyle_bars(getattr(self, "_pacf", None), cg.pacf, cg.band, self.data_colour)
