"""Rolling-origin evaluation: refit at each of several origins and score the forecasts that follow.

A single holdout scores one stretch of data. Rolling the forecast origin
through the end of the series, and re-estimating the model at every origin
on the data before it, gives many forecasts per horizon and so a steadier
picture of accuracy (Tashman, 2000; the "evaluation on a rolling forecasting
origin" of Hyndman & Athanasopoulos, 2021, §5.10). The last origin leaves
exactly ``horizon`` values after it; earlier origins are ``step`` values
apart.

Errors are actual minus point forecast on the original scale. MASE scales
each origin's absolute errors by the in-sample mean absolute (seasonal)
naive error of that origin's training data (Hyndman & Koehler, 2006).

References
----------
Tashman, L. J. (2000). Out-of-sample tests of forecasting accuracy: an
analysis and review. *International Journal of Forecasting* 16(4), 437-450.
Hyndman, R. J. & Koehler, A. B. (2006). Another look at measures of
forecast accuracy. *International Journal of Forecasting* 22(4), 679-688.
Hyndman, R. J. & Athanasopoulos, G. (2021). *Forecasting: Principles and
Practice*, 3rd ed., OTexts, §5.10.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import InputError, LagwrightError
from .fit import fit_exact
from .forecast import BACK_TRANSFORMS, forecast, naive_scale
from .series import MIN_OBSERVATIONS, Series
from .spec import ModelSpec


@dataclass(frozen=True, eq=False)
class RollingScore:
    """Forecast errors from several origins, each with the model re-estimated.

    Attributes
    ----------
    spec : ModelSpec
    horizon, step : int
    origins : tuple of int
        Training lengths: the forecasts from origin ``t`` are of values
        ``t, t+1, …, t+horizon-1`` (0-based positions).
    errors : numpy.ndarray
        Shape ``(len(origins), horizon)``; NaN where the origin failed or the
        value is missing.
    scaled : numpy.ndarray
        ``|errors|`` divided by each origin's naive scale.
    inside80, inside95 : numpy.ndarray
        1.0 where the value fell inside the interval, 0.0 outside, NaN where
        unknown.
    failures : tuple of str
        Why an origin gave no forecast ("" where it did).
    back_transform : {"median", "mean"}
    """

    spec: ModelSpec
    horizon: int
    step: int
    origins: tuple[int, ...]
    errors: np.ndarray
    scaled: np.ndarray
    inside80: np.ndarray
    inside95: np.ndarray
    failures: tuple[str, ...]
    back_transform: str

    @property
    def n_ok(self) -> int:
        """Origins that gave forecasts."""
        return sum(1 for f in self.failures if not f)

    def rmse_by_horizon(self) -> np.ndarray:
        return _nan_stat(self.errors**2, np.sqrt)

    def mae_by_horizon(self) -> np.ndarray:
        return _nan_stat(np.abs(self.errors))

    def mase_by_horizon(self) -> np.ndarray:
        return _nan_stat(self.scaled)

    @property
    def rmse(self) -> float:
        return _overall(self.errors**2, math.sqrt)

    @property
    def mae(self) -> float:
        return _overall(np.abs(self.errors))

    @property
    def mase(self) -> float:
        return _overall(self.scaled)

    @property
    def coverage80(self) -> float:
        return _overall(self.inside80)

    @property
    def coverage95(self) -> float:
        return _overall(self.inside95)


def _nan_stat(values: np.ndarray, then=None) -> np.ndarray:
    out = np.full(values.shape[1], np.nan)
    for h in range(values.shape[1]):
        column = values[:, h][np.isfinite(values[:, h])]
        if column.size:
            out[h] = float(np.mean(column))
    return then(out) if then is not None else out


def _overall(values: np.ndarray, then=None) -> float:
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        return math.nan
    value = float(np.mean(finite))
    return then(value) if then is not None else value


def origin_positions(n: int, origins: int, horizon: int, step: int) -> tuple[int, ...]:
    """Training lengths of the origins: the last leaves ``horizon`` values, the others ``step`` apart."""
    last = n - horizon
    return tuple(last - (origins - 1 - k) * step for k in range(origins))


def rolling_origin(
    series: Series,
    spec: ModelSpec,
    origins: int = 10,
    horizon: int = 1,
    step: int = 1,
    back_transform: str = "median",
    progress=None,
) -> RollingScore:
    """Refit ``spec`` at each of ``origins`` forecast origins and score the next ``horizon`` values.

    Parameters
    ----------
    series : Series
    spec : ModelSpec
    origins, horizon, step : int
        Number of origins, steps forecast from each, and values between
        origins (all at least 1).
    back_transform : {"median", "mean"}
    progress : callable, optional
        ``progress(done, total)`` after each origin.

    Raises
    ------
    InputError
        If the settings ask for more than the series holds: the first origin
        must leave at least as many values as a fit needs.
    """
    origins, horizon, step = int(origins), int(horizon), int(step)
    if origins < 1 or horizon < 1 or step < 1:
        raise InputError("Rolling origins, horizon and step must each be at least 1.")
    if back_transform not in BACK_TRANSFORMS:
        raise InputError(f"Back-transform must be one of {', '.join(BACK_TRANSFORMS)}.")
    n = len(series)
    positions = origin_positions(n, origins, horizon, step)
    needed = MIN_OBSERVATIONS + spec.lost_observations + spec.n_params
    if positions[0] < needed:
        raise InputError(
            f"{origins} origins {step} apart with a horizon of {horizon} start at value {positions[0]}, but a fit "
            f"of {spec.label} needs at least {needed} values before its origin: use fewer origins, a smaller "
            "step or a shorter horizon."
        )
    season = spec.s if (spec.sar or spec.sma or spec.D) else 0
    shape = (origins, horizon)
    errors, scaled = np.full(shape, np.nan), np.full(shape, np.nan)
    inside80, inside95 = np.full(shape, np.nan), np.full(shape, np.nan)
    failures = []
    for k, t in enumerate(positions):
        train = Series(series.values[:t], None if series.times is None else series.times[:t],
                       series.name, series.frequency, series.provenance)
        actual = series.values[t:t + horizon]
        try:
            fit = fit_exact(train, spec)
            if not fit.ok:
                raise InputError(fit.failure)
            fc = forecast(train, fit, horizon, back_transform)
        except LagwrightError as exc:
            failures.append(f"origin {t}: {exc}")
        else:
            failures.append("")
            observed = np.isfinite(actual)
            errors[k] = actual - fc.point
            scale = naive_scale(train.values, season)
            if scale and np.isfinite(scale) and scale > 0:
                scaled[k] = np.abs(errors[k]) / scale
            inside80[k] = np.where(observed, (actual >= fc.lower80) & (actual <= fc.upper80), np.nan)
            inside95[k] = np.where(observed, (actual >= fc.lower95) & (actual <= fc.upper95), np.nan)
        if progress is not None:
            progress(k + 1, origins)
    for array in (errors, scaled, inside80, inside95):
        array.setflags(write=False)
    return RollingScore(spec, horizon, step, positions, errors, scaled, inside80, inside95, tuple(failures),
                        back_transform)
