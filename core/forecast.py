"""Forecasts of a fitted candidate and their out-of-sample scores.

Point forecasts integrate the ARMA forecasts of the differenced series back
through :math:`(1-B)^d(1-B^s)^D`; their variances use the ψ-weights of the
full model, :math:`\\operatorname{var}(e_{T}(h)) = \\sigma^2\\sum_{j<h}\\psi_j^2`
(Box, Jenkins, Reinsel & Ljung, 2015, §5.1-5.2). Intervals are computed on
the transformed scale and carried back through the (monotone) inverse
transform, so their coverage is kept. The point forecast on the original
scale is the back-transformed median, or the bias-adjusted mean (exact for
the log: :math:`\\exp(m + v/2)`; for Box-Cox the second-order correction of
Hyndman & Athanasopoulos, 2021, §5.6).

Accuracy on a holdout uses RMSE, MAE and MASE, the last scaled by the
in-sample mean absolute error of the seasonal naive forecast (the naive one
without a season), as defined by Hyndman & Koehler (2006).

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis*, 5th ed., ch. 5.
Hyndman, R. J. & Koehler, A. B. (2006). Another look at measures of
forecast accuracy. *International Journal of Forecasting* 22(4), 679-688.
Hyndman, R. J. & Athanasopoulos, G. (2021). *Forecasting: Principles and
Practice*, 3rd ed., OTexts, §5.6.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from .errors import InputError, LagwrightError
from .fit import fit_exact, prepared_model
from .interventions import regressors
from .polynomials import expanded_polynomials
from .prepare import apply_transform, difference, invert_transform, prepare
from .result import Fit
from .series import Series
from .spec import ModelSpec, Transform

BACK_TRANSFORMS = ("median", "mean")


def differencing_polynomial(d: int, D: int, s: int) -> np.ndarray:
    """Coefficients of :math:`(1-B)^d(1-B^s)^D` in ascending powers of B."""
    poly = np.array([1.0])
    for _ in range(d):
        poly = np.convolve(poly, [1.0, -1.0])
    for _ in range(D):
        seasonal = np.zeros(s + 1)
        seasonal[0], seasonal[s] = 1.0, -1.0
        poly = np.convolve(poly, seasonal)
    return poly


def psi_weights(spec: ModelSpec, params: dict, horizon: int) -> np.ndarray:
    """ψ_0..ψ_{h-1} of the full model θ(B)Θ(B^s) / (φ(B)Φ(B^s)(1-B)^d(1-B^s)^D)."""
    ar, ma = expanded_polynomials(spec, params)
    ar_full = np.convolve(ar, differencing_polynomial(spec.d, spec.D, spec.s))
    psi = np.zeros(horizon)
    for j in range(horizon):
        value = ma[j] if j < ma.size else 0.0
        for k in range(1, min(j, ar_full.size - 1) + 1):
            value -= ar_full[k] * psi[j - k]
        psi[j] = value
    return psi


@dataclass(frozen=True, eq=False)
class Forecast:
    """Forecasts from the end of a series.

    Attributes
    ----------
    spec : ModelSpec
    horizon : int
    mean, se : numpy.ndarray
        Forecast and its standard error on the transformed scale.
    point : numpy.ndarray
        On the original scale: the median or the bias-adjusted mean.
    lower80, upper80, lower95, upper95 : numpy.ndarray
        Prediction intervals on the original scale.
    back_transform : {"median", "mean"}
    """

    spec: ModelSpec
    horizon: int
    mean: np.ndarray
    se: np.ndarray
    point: np.ndarray
    lower80: np.ndarray
    upper80: np.ndarray
    lower95: np.ndarray
    upper95: np.ndarray
    back_transform: str


def _bias_adjusted(mean: np.ndarray, var: np.ndarray, transform: Transform) -> np.ndarray:
    if transform.kind == "none":
        return mean.copy()
    if transform.kind == "log" or transform.lam == 0.0:
        return np.exp(mean + var / 2.0)
    lam = float(transform.lam)
    median = invert_transform(mean, transform)
    return median * (1.0 + var * (1.0 - lam) / (2.0 * (lam * mean + 1.0) ** 2))


def forecast(series: Series, fit: Fit, horizon: int, back_transform: str = "median") -> Forecast:
    """Forecast ``horizon`` steps past the end of ``series`` with the estimates of ``fit``.

    Raises
    ------
    InputError
        If the fit failed, the horizon is not positive, or the last values
        the differencing needs are missing.
    """
    if not fit.ok:
        raise InputError(f"No forecast: the fit of {fit.spec.label} failed ({fit.failure}).")
    if int(horizon) < 1:
        raise InputError("The forecast horizon must be at least one step.")
    if back_transform not in BACK_TRANSFORMS:
        raise InputError(f"Back-transform must be one of {', '.join(BACK_TRANSFORMS)}.")
    horizon = int(horizon)
    spec = fit.spec
    params = fit.param_dict
    prepared = prepare(series, spec)
    z = apply_transform(series.values, spec.transform, series.name)
    lost = spec.lost_observations
    if lost and np.isnan(z[-lost:]).any():
        raise InputError(
            f"The last {lost} values of '{series.name}' must be observed to integrate the forecasts; "
            "fill or drop the missing values at the end of the series."
        )
    w_mean = _arma_forecast(prepared, len(series), spec, params, horizon)
    delta = differencing_polynomial(spec.d, spec.D, spec.s)
    history = list(z[-(delta.size - 1):]) if delta.size > 1 else []
    mean = np.empty(horizon)
    for h in range(horizon):
        value = w_mean[h] - sum(delta[k] * history[-k] for k in range(1, delta.size))
        mean[h] = value
        history.append(value)
    psi = psi_weights(spec, params, horizon)
    var = fit.sigma2 * np.cumsum(psi**2)
    se = np.sqrt(var)
    bands = {}
    for level in (0.80, 0.95):
        q = stats.norm.ppf(0.5 + level / 2.0)
        bands[level] = (invert_transform(mean - q * se, spec.transform), invert_transform(mean + q * se, spec.transform))
    point = invert_transform(mean, spec.transform) if back_transform == "median" else _bias_adjusted(mean, var, spec.transform)
    arrays = [mean, se, point, *bands[0.80], *bands[0.95]]
    for a in arrays:
        a.setflags(write=False)
    return Forecast(spec, horizon, mean, se, point, bands[0.80][0], bands[0.80][1], bands[0.95][0], bands[0.95][1],
                    back_transform)


def _arma_forecast(prepared, n: int, spec: ModelSpec, params: dict, horizon: int) -> np.ndarray:
    """Exact ARMA forecasts of the differenced series (Kalman filter with the given estimates).

    Interventions continue into the future as they are: a pulse is over, a
    level shift stays; their regressors are differenced like the series.
    """
    import warnings

    model = prepared_model(prepared, spec, concentrate_scale=False)
    vector = np.array([params[name] for name in model.param_names])
    future = None
    if spec.interventions:
        x = regressors(spec, n, future=horizon)
        future = np.column_stack([difference(x[:, j], spec.d, spec.D, spec.s)[-horizon:] for j in range(x.shape[1])])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = model.filter(vector)
        return np.asarray(res.forecast(horizon, exog=future), dtype=float)


@dataclass(frozen=True, eq=False)
class HoldoutScore:
    """Out-of-sample accuracy of one spec on the last ``horizon`` observations.

    Attributes
    ----------
    spec : ModelSpec
    horizon : int
    ok : bool
    failure : str
    rmse, mae, mase : float
    coverage80, coverage95 : float
        Share of held-out values inside the 80 % and 95 % intervals.
    errors : numpy.ndarray
        Actual minus point forecast, on the original scale.
    forecast : Forecast or None
    scale : float
        MASE denominator: in-sample mean absolute seasonal-naive error.
    """

    spec: ModelSpec
    horizon: int
    ok: bool
    failure: str = ""
    rmse: float = math.nan
    mae: float = math.nan
    mase: float = math.nan
    coverage80: float = math.nan
    coverage95: float = math.nan
    errors: np.ndarray | None = None
    forecast: Forecast | None = None
    scale: float = math.nan


def naive_scale(train: np.ndarray, season: int) -> float:
    """Mean absolute error of the (seasonal) naive one-step forecast in the training data.

    The MASE denominator of Hyndman & Koehler (2006): lag m = season when the
    series is seasonal (season >= 2), else 1; pairs with a missing value are
    skipped.
    """
    m = season if season >= 2 else 1
    diffs = np.abs(train[m:] - train[:-m])
    diffs = diffs[np.isfinite(diffs)]
    if diffs.size == 0:
        return math.nan
    return float(np.mean(diffs))


def accuracy(actual: np.ndarray, point: np.ndarray, scale: float) -> tuple[float, float, float]:
    """RMSE, MAE and MASE of point forecasts (missing actual values skipped)."""
    errors = np.asarray(actual, float) - np.asarray(point, float)
    errors = errors[np.isfinite(errors)]
    if errors.size == 0:
        return math.nan, math.nan, math.nan
    rmse = float(np.sqrt(np.mean(errors**2)))
    mae = float(np.mean(np.abs(errors)))
    mase = mae / scale if scale and np.isfinite(scale) and scale > 0 else math.nan
    return rmse, mae, mase


def holdout(series: Series, spec: ModelSpec, horizon: int, back_transform: str = "median") -> HoldoutScore:
    """Refit ``spec`` without the last ``horizon`` values and score its forecasts of them.

    Never raises for a model that cannot be fitted or forecast: the score
    says why instead.
    """
    n = len(series)
    if not 1 <= int(horizon) < n:
        raise InputError(f"The holdout must be between 1 and {n - 1} observations.")
    horizon = int(horizon)
    train = Series(series.values[: n - horizon],
                   None if series.times is None else series.times[: n - horizon],
                   series.name, series.frequency, series.provenance)
    actual = series.values[n - horizon:]
    try:
        fit = fit_exact(train, spec)
        fc = forecast(train, fit, horizon, back_transform)
    except LagwrightError as exc:
        return HoldoutScore(spec, horizon, False, str(exc))
    if not fit.ok:
        return HoldoutScore(spec, horizon, False, fit.failure)
    season = spec.s if (spec.sar or spec.sma or spec.D) else 0
    scale = naive_scale(train.values, season)
    rmse, mae, mase = accuracy(actual, fc.point, scale)
    observed = np.isfinite(actual)
    inside80 = (actual >= fc.lower80) & (actual <= fc.upper80)
    inside95 = (actual >= fc.lower95) & (actual <= fc.upper95)
    errors = actual - fc.point
    errors.setflags(write=False)
    return HoldoutScore(
        spec, horizon, True, "", rmse, mae, mase,
        float(np.mean(inside80[observed])) if observed.any() else math.nan,
        float(np.mean(inside95[observed])) if observed.any() else math.nan,
        errors, fc, scale,
    )


@dataclass(frozen=True, eq=False)
class ForecastCheck:
    """A holdout score and a forecast from the end of the full series, for one candidate."""

    spec: ModelSpec
    holdout: HoldoutScore | None
    future: Forecast | None
    failure: str = ""


def forecast_check(series: Series, fit: Fit, holdout_size: int, horizon: int,
                   back_transform: str = "median") -> ForecastCheck:
    """Score ``fit.spec`` on the last ``holdout_size`` values and forecast ``horizon`` steps ahead.

    Never raises for a model problem: ``failure`` says what went wrong.
    """
    score = None
    try:
        if holdout_size:
            score = holdout(series, fit.spec, holdout_size, back_transform)
        future = forecast(series, fit, horizon, back_transform)
    except LagwrightError as exc:
        return ForecastCheck(fit.spec, score, None, str(exc))
    return ForecastCheck(fit.spec, score, future)


def one_step_errors(series: Series, spec: ModelSpec, holdout_size: int) -> np.ndarray:
    """One-step-ahead forecast errors over the last ``holdout_size`` values, on the original scale.

    The model is estimated without the holdout; its estimates are then kept
    fixed while the filter runs through the holdout, each forecast made from
    all values before it (a rolling origin without re-estimation). These are
    the errors the Diebold-Mariano test compares (horizon 1).

    Raises
    ------
    InputError
        If the fit without the holdout fails.
    """
    import warnings

    n = len(series)
    if not 1 <= int(holdout_size) < n:
        raise InputError(f"The holdout must be between 1 and {n - 1} observations.")
    train = Series(series.values[: n - holdout_size], None if series.times is None else series.times[: n - holdout_size],
                   series.name, series.frequency, series.provenance)
    fit = fit_exact(train, spec)
    if not fit.ok:
        raise InputError(f"{spec.label} could not be fitted without the holdout: {fit.failure}")
    model = prepared_model(prepare(series, spec), spec, concentrate_scale=False)
    params = fit.param_dict
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = model.filter(np.array([params[name] for name in model.param_names]))
    e = np.asarray(res.filter_results.forecasts_error[0], dtype=float)[-holdout_size:]
    z = apply_transform(series.values, spec.transform, series.name)[-holdout_size:]
    predicted = invert_transform(z - e, spec.transform)
    return series.values[-holdout_size:] - predicted


@dataclass(frozen=True)
class ForecastComparison:
    """Two candidates' one-step holdout forecasts compared (Diebold-Mariano, squared loss)."""

    holdout: int
    label_a: str
    label_b: str
    rmse_a: float
    rmse_b: float
    test: object  # DieboldMariano


def compare_forecasts(series: Series, spec_a: ModelSpec, spec_b: ModelSpec, holdout_size: int) -> ForecastComparison:
    """Diebold-Mariano test (HLN-corrected) of two candidates' one-step holdout errors."""
    from .accuracy_tests import diebold_mariano

    ea = one_step_errors(series, spec_a, holdout_size)
    eb = one_step_errors(series, spec_b, holdout_size)
    rmse = lambda e: float(np.sqrt(np.nanmean(e**2)))  # noqa: E731
    return ForecastComparison(holdout_size, spec_a.label, spec_b.label, rmse(ea), rmse(eb),
                              diebold_mariano(ea, eb, horizon=1))
