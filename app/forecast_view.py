"""The forecast tab: out-of-sample accuracy on a holdout, and forecasts with intervals.

The user sets how many final values to hold back, the horizon of the
forecast from the end of the series and how log/Box-Cox forecasts are
brought back to the original scale (median or bias-adjusted mean). *Check*
asks the window to refit the candidate without the holdout and forecast it
(in a worker process); the result is drawn here: the end of the series, the
holdout forecast and the future forecast with their 80 % and 95 % intervals,
and RMSE, MAE, MASE and interval coverage.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import QComboBox, QHBoxLayout, QLabel, QPushButton, QSpinBox, QVBoxLayout, QWidget

from . import theme
from .panes.base import make_brush, make_pen


class ForecastView(QWidget):
    """Controls, plot and scores of the forecast check; emits ``check_requested(holdout, horizon, back)``."""

    check_requested = Signal(int, int, str)
    #: origins, horizon, step, back-transform
    rolling_requested = Signal(int, int, int, str)

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(6, 6, 6, 6)
        bar = QHBoxLayout()
        bar.addWidget(QLabel("Hold back the last"))
        self.holdout_box = QSpinBox()
        self.holdout_box.setRange(0, 100000)
        self.holdout_box.setSuffix(" values")
        self.holdout_box.setToolTip("Refit without these final values and score the forecasts of them (0: no holdout)")
        bar.addWidget(self.holdout_box)
        bar.addWidget(QLabel("Forecast"))
        self.horizon_box = QSpinBox()
        self.horizon_box.setRange(1, 100000)
        self.horizon_box.setSuffix(" steps ahead")
        self.horizon_box.setToolTip("Forecast horizon from the end of the series")
        bar.addWidget(self.horizon_box)
        self.back_box = QComboBox()
        self.back_box.addItem("median (back-transformed)", "median")
        self.back_box.addItem("mean (bias-adjusted)", "mean")
        self.back_box.setToolTip("How forecasts of a log or Box-Cox model are brought back to the original scale")
        bar.addWidget(self.back_box)
        self.check_button = QPushButton("Check")
        self.check_button.setToolTip("Refit without the holdout, score it, and forecast from the end (in the background)")
        self.check_button.clicked.connect(self._check)
        bar.addWidget(self.check_button)
        bar.addStretch(1)
        layout.addLayout(bar)
        bar = QHBoxLayout()  # the rolling check on a row of its own: one row of both was too wide
        bar.addWidget(QLabel("Rolling origin: re-estimate at"))
        self.origins_box = QSpinBox()
        self.origins_box.setRange(2, 500)
        self.origins_box.setValue(10)
        self.origins_box.setSuffix(" origins")
        self.origins_box.setToolTip("Forecast origins at the end of the series; the model is re-estimated at each")
        bar.addWidget(self.origins_box)
        self.step_box = QSpinBox()
        self.step_box.setRange(1, 10000)
        self.step_box.setPrefix("every ")
        self.step_box.setSuffix(" values")
        self.step_box.setToolTip("Values between consecutive origins")
        bar.addWidget(self.step_box)
        bar.addWidget(QLabel("for the horizon above"))
        self.rolling_button = QPushButton("Rolling check")
        self.rolling_button.setToolTip("Refit at each origin on the data before it and score the forecasts of the "
                                       "horizon after it (in the background)")
        self.rolling_button.clicked.connect(self._rolling)
        bar.addWidget(self.rolling_button)
        bar.addStretch(1)
        layout.addLayout(bar)
        self.scores = QLabel("Choose a holdout and press Check.")
        self.scores.setTextFormat(Qt.TextFormat.PlainText)
        self.scores.setWordWrap(True)
        layout.addWidget(self.scores)
        self.rolling_label = QLabel("")
        self.rolling_label.setTextFormat(Qt.TextFormat.PlainText)
        self.rolling_label.setWordWrap(True)
        self.rolling_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        layout.addWidget(self.rolling_label)
        self.rolling = None
        colours = theme.pane_colours(theme.is_dark_palette(self.palette()))
        self.plot_widget = pg.PlotWidget(background=colours.background)
        self.plot = self.plot_widget.getPlotItem()
        self.plot.setLabel("bottom", "observation")
        self.plot.setLabel("left", "value")
        self.plot.addLegend(offset=(10, 10))
        self.plot.showGrid(x=True, y=True, alpha=0.15)
        layout.addWidget(self.plot_widget, 1)
        self.result = None

    def set_defaults(self, n: int, season: int) -> None:
        """Sensible starting values for a series of ``n`` values with period ``season``."""
        holdout = min(max(2 * season, 12) if season >= 2 else 12, max(n // 5, 1))
        self.holdout_box.setValue(holdout)
        self.horizon_box.setValue(holdout)

    def _rolling(self) -> None:
        self.rolling_requested.emit(self.origins_box.value(), self.horizon_box.value(), self.step_box.value(),
                                    self.back_box.currentData())

    def show_rolling_pending(self, label: str, origins: int) -> None:
        self.rolling = None
        self.rolling_label.setText(f"{label}: re-estimating at {origins} origins and forecasting from each…")

    def show_rolling_message(self, message: str) -> None:
        self.rolling = None
        self.rolling_label.setText(message)

    def show_rolling(self, score) -> None:
        """Summarise a :class:`~lagwright.core.rolling.RollingScore`: overall and by horizon."""
        self.rolling = score
        if score.n_ok == 0:
            self.rolling_label.setText("Rolling check: no origin gave a forecast — " + score.failures[0])
            return
        lines = [
            f"Rolling origin: {score.n_ok} of {len(score.origins)} origins (every {score.step} values, model "
            f"re-estimated at each), {score.horizon} steps ahead: RMSE {score.rmse:.4g}, MAE {score.mae:.4g}, "
            f"MASE {score.mase:.3f}; inside the 80 % interval {score.coverage80:.0%}, inside the 95 % interval "
            f"{score.coverage95:.0%}."
        ]
        rmse, mase = score.rmse_by_horizon(), score.mase_by_horizon()
        shown = min(score.horizon, 12)
        lines.append("By horizon — " + "; ".join(
            f"h={h + 1}: RMSE {rmse[h]:.4g}, MASE {mase[h]:.2f}" for h in range(shown))
            + (" …" if score.horizon > shown else ""))
        failed = [f for f in score.failures if f]
        if failed:
            lines.append(f"{len(failed)} origin(s) failed: {failed[0]}")
        self.rolling_label.setText("\n".join(lines))

    def _check(self) -> None:
        self.check_requested.emit(self.holdout_box.value(), self.horizon_box.value(), self.back_box.currentData())

    def show_pending(self, label: str) -> None:
        self.result = None
        self.plot.clear()
        self.scores.setText(f"{label}: refitting without the holdout and forecasting…")

    def show_message(self, message: str) -> None:
        self.result = None
        self.plot.clear()
        self.scores.setText(message)

    def show_result(self, result, series) -> None:
        """Draw a :class:`~lagwright.core.forecast.ForecastCheck` for ``series``."""
        self.result = result
        self.plot.clear()
        if result.failure:
            self.scores.setText(f"The check could not run: {result.failure}")
            return
        y = np.asarray(series.values, dtype=float)
        n = y.size
        score, future = result.holdout, result.future
        h_out = score.horizon if score is not None and score.ok else 0
        shown_from = max(0, n - max(4 * max(h_out, future.horizon), 60))
        x = np.arange(shown_from, n)
        self.plot.plot(x, y[shown_from:], pen=make_pen(theme.DATA, width=1.3), name="series")
        lines = []
        if score is not None and not score.ok:
            lines.append(f"Holdout: the refit failed ({score.failure}).")
        elif score is not None:
            fx = np.arange(n - h_out, n)
            self._bands(fx, score.forecast, theme.SECOND, "holdout forecast")
            lines.append(
                f"Holdout of the last {h_out} values ({score.forecast.back_transform} forecasts): "
                f"RMSE {score.rmse:.4g}, MAE {score.mae:.4g}, MASE {score.mase:.3f}; "
                f"inside the 80 % interval {score.coverage80:.0%}, inside the 95 % interval {score.coverage95:.0%}."
            )
        fx = np.arange(n, n + future.horizon)
        self._bands(fx, future, theme.BAND, "forecast")
        self.plot.setXRange(shown_from, n + future.horizon, padding=0.02)
        visible = np.concatenate([y[shown_from:][np.isfinite(y[shown_from:])], np.asarray(future.lower95),
                                  np.asarray(future.upper95)])
        if score is not None and score.ok:
            visible = np.concatenate([visible, np.asarray(score.forecast.lower95), np.asarray(score.forecast.upper95)])
        visible = visible[np.isfinite(visible)]
        if visible.size:
            self.plot.setYRange(float(visible.min()), float(visible.max()), padding=0.05)
        lines.append(f"Forecast {future.horizon} steps from the end, with 80 % and 95 % prediction intervals "
                     f"({'back-transformed median' if future.back_transform == 'median' else 'bias-adjusted mean'}).")
        self.scores.setText("\n".join(lines))

    def _bands(self, x, fc, code: str, name: str) -> None:
        x = np.asarray(x, dtype=float)
        for lower, upper, alpha in ((fc.lower95, fc.upper95, 0.18), (fc.lower80, fc.upper80, 0.35)):
            edge = make_pen(code, width=1, alpha=0.5)
            lo = pg.PlotCurveItem(x, np.asarray(lower, dtype=float), pen=edge)
            hi = pg.PlotCurveItem(x, np.asarray(upper, dtype=float), pen=edge)
            self.plot.addItem(lo)
            self.plot.addItem(hi)
            self.plot.addItem(pg.FillBetweenItem(lo, hi, brush=make_brush(code, alpha)))
        self.plot.plot(x, fc.point, pen=make_pen(code, width=2.0), name=name)
