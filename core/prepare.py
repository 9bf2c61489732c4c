"""Preparing a series for ARMA fitting: transform, then ordinary and seasonal differencing.

The exact likelihood of an ARIMA model is, by definition, the likelihood of
the ARMA model for the differenced series :math:`w_t = (1-B)^d (1-B^s)^D
g(y_t)`, conditional on the first :math:`d + sD` observations (Box, Jenkins,
Reinsel & Ljung, 2015, §7.1.5; Brockwell & Davis, 2016, §6.4). Lagwright
therefore differences explicitly and fits the ARMA part to :math:`w_t` with
its stationary (exact) initial state. Putting the differencing into the state
vector with an approximate diffuse prior instead biases the estimates when
the level is large compared with the noise (the tests show a case).

References
----------
Box, G. E. P. & Cox, D. R. (1964). An analysis of transformations.
*J. R. Statist. Soc. B* 26(2), 211-252.
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley.
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., Springer.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import stats

from .errors import InputError
from .interventions import check_interventions, differenced_regressors
from .series import MIN_OBSERVATIONS, Series
from .spec import ModelSpec, Transform


@dataclass(frozen=True, eq=False)
class PreparedSeries:
    """The transformed and differenced series an ARMA model is fitted to.

    Attributes
    ----------
    values : numpy.ndarray
        :math:`w_t`, read-only; NaN where an observation (or one it was
        differenced with) is missing.
    offset : int
        Position in the original series of ``values[0]``: the d + sD
        observations lost to differencing.
    transform : Transform
    d, D, s : int
    regressors : numpy.ndarray
        The intervention regressors differenced like the series, one column
        per intervention of the spec (shape ``(len(values), 0)`` without).
    regressor_names : tuple of str
        Their parameter names (``pulse.t37``, ``level.t81``).
    """

    values: np.ndarray
    offset: int
    transform: Transform
    d: int
    D: int
    s: int
    regressors: np.ndarray | None = None
    regressor_names: tuple[str, ...] = ()

    @property
    def exog(self) -> np.ndarray | None:
        """The regressors, or ``None`` when there are none (as statsmodels takes them)."""
        return self.regressors if self.regressors is not None and self.regressors.shape[1] else None

    @property
    def n_observed(self) -> int:
        """Number of non-missing prepared values."""
        return int(np.count_nonzero(~np.isnan(self.values)))


def apply_transform(values: np.ndarray, transform: Transform, name: str = "series") -> np.ndarray:
    """Apply a :class:`Transform` to raw values (NaN stays NaN).

    Raises
    ------
    InputError
        If a log or Box-Cox transform meets a zero or negative value.
    """
    values = np.asarray(values, dtype=float)
    if transform.kind == "none":
        return values.copy()
    observed = values[~np.isnan(values)]
    if observed.size and observed.min() <= 0:
        bad = int(np.flatnonzero(values <= 0)[0]) + 1
        raise InputError(
            f"A {transform.label} transform needs positive values, but '{name}' has "
            f"{values[bad - 1]:g} at observation {bad}. Choose no transform, or shift the series."
        )
    if transform.kind == "log" or transform.lam == 0.0:
        return np.log(values)
    lam = float(transform.lam)
    return (np.power(values, lam) - 1.0) / lam


def invert_transform(values: np.ndarray, transform: Transform) -> np.ndarray:
    """Inverse of :func:`apply_transform` (the median back-transform)."""
    values = np.asarray(values, dtype=float)
    if transform.kind == "none":
        return values.copy()
    if transform.kind == "log" or transform.lam == 0.0:
        return np.exp(values)
    lam = float(transform.lam)
    return np.power(lam * values + 1.0, 1.0 / lam)


def difference(values: np.ndarray, d: int, D: int, s: int) -> np.ndarray:
    """Apply :math:`(1-B)^d (1-B^s)^D`; the result is d + sD values shorter."""
    out = np.asarray(values, dtype=float)
    for _ in range(D):
        out = out[s:] - out[:-s]
    for _ in range(d):
        out = out[1:] - out[:-1]
    return out


def estimate_boxcox_lambda(series: Series) -> float:
    """Box-Cox :math:`\\lambda` maximising the normal profile likelihood.

    Uses :func:`scipy.stats.boxcox_normmax` (``method="mle"``) on the observed
    values, rounded to 3 decimals so that a spec written into a memo can be
    reproduced exactly.

    References
    ----------
    Box, G. E. P. & Cox, D. R. (1964), *J. R. Statist. Soc. B* 26(2), 211-252.
    """
    observed = series.values[~np.isnan(series.values)]
    if observed.size == 0 or observed.min() <= 0:
        raise InputError(
            f"A Box-Cox transform needs positive values, and '{series.name}' has zero or "
            "negative ones. Choose no transform, or shift the series."
        )
    if np.ptp(observed) == 0:
        raise InputError(f"'{series.name}' is constant, so no Box-Cox lambda can be estimated.")
    lam = float(stats.boxcox_normmax(observed, method="mle"))
    return round(float(np.clip(lam, -5.0, 5.0)), 3)


def prepare(series: Series, spec: ModelSpec) -> PreparedSeries:
    """Transform and difference ``series`` as ``spec`` asks.

    Raises
    ------
    InputError
        If the series is unusable, a transform meets non-positive values, or
        too few values remain after differencing.
    """
    series.check_usable()
    transformed = apply_transform(series.values, spec.transform, series.name)
    lost = spec.lost_observations
    if lost >= len(series) - MIN_OBSERVATIONS + 1:
        raise InputError(
            f"Differencing with d={spec.d}, D={spec.D}, s={spec.s} would leave "
            f"{max(len(series) - lost, 0)} values of '{series.name}'; at least "
            f"{MIN_OBSERVATIONS} are needed. Use less differencing or a longer series."
        )
    w = difference(transformed, spec.d, spec.D, spec.s)
    observed = w[~np.isnan(w)]
    if observed.size < MIN_OBSERVATIONS:
        raise InputError(
            f"Only {observed.size} values of '{series.name}' remain after differencing and "
            f"removing missing values; at least {MIN_OBSERVATIONS} are needed."
        )
    if np.ptp(observed) == 0.0:
        raise InputError(
            f"After differencing, '{series.name}' is constant ({observed[0]:g}): the differencing "
            "removed all variation. Use less differencing."
        )
    w.setflags(write=False)
    check_interventions(spec, len(series), series.name, series.values)
    x = differenced_regressors(spec, len(series))
    x.setflags(write=False)
    return PreparedSeries(values=w, offset=lost, transform=spec.transform, d=spec.d, D=spec.D, s=spec.s,
                          regressors=x, regressor_names=tuple(i.name for i in spec.interventions))
