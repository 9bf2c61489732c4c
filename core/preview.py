"""The fast preview: a conditional-sum-of-squares (CSS) estimate of an ARMA spec.

The preview minimises :math:`\\sum_t e_t^2` over the residuals of the
differenced series, conditioning on the first :math:`p^*` values (the degree of
the full AR polynomial) and setting residuals before them to zero (Box,
Jenkins, Reinsel & Ljung, 2015, §7.1.2). Residuals are computed by
``scipy.signal.lfilter`` and the Jacobian analytically, so one evaluation is
O(n) and the whole estimate takes milliseconds even at n = 100,000.

For long series the CSS estimate is close to the exact maximum-likelihood one
(their log-likelihoods differ by O(1) while each grows with n), which makes
it the right thing to draw while the exact fit runs. It is always labelled
``kind="preview"`` and must never be reported as a final fit.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., §7.1.2.
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., §5.2.3 (least squares for ARMA).
"""

from __future__ import annotations

import math
import time

import numpy as np
from scipy import optimize, signal, stats

from .errors import LagwrightError
from .polynomials import _spread, expanded_polynomials, factors, param_names, root_warnings, roots
from .prepare import PreparedSeries, prepare
from .result import Convergence, Fit, ParamEstimate, failed_fit, information_criteria
from .series import Series
from .spec import ModelSpec

_HUGE = 1e10


def _fill_missing(w: np.ndarray) -> tuple[np.ndarray, int]:
    missing = np.isnan(w)
    if not missing.any():
        return w, 0
    idx = np.arange(w.size)
    filled = w.copy()
    filled[missing] = np.interp(idx[missing], idx[~missing], w[~missing])
    return filled, int(missing.sum())


class _CssProblem:
    """Residuals and their Jacobian for one spec on one prepared series."""

    def __init__(self, spec: ModelSpec, w: np.ndarray, regressors: np.ndarray | None = None):
        self.spec = spec
        self.w = w
        self.names = param_names(spec)[:-1]  # sigma2 is not a CSS parameter
        self.exog_names = tuple(item.name for item in spec.interventions)
        self.x = np.zeros((w.size, 0)) if regressors is None else np.asarray(regressors, dtype=float)
        self.p_star = max(spec.ar, default=0) + max(spec.sar, default=0) * spec.s
        if w.size - self.p_star < 2 * len(self.names) + 2:
            raise LagwrightError(
                f"The series is too short for a model with AR lags reaching {self.p_star}."
            )

    def _unpack(self, theta: np.ndarray) -> tuple[dict[str, float], float | np.ndarray]:
        """ARMA coefficients by name, and the mean function (constant plus regression) of ``w``."""
        values = dict(zip(self.names, theta))
        mu = values.pop("const", 0.0)
        if self.exog_names:
            beta = np.array([values.pop(name) for name in self.exog_names])
            mu = mu + self.x @ beta
        return values, mu

    def residuals(self, theta: np.ndarray) -> np.ndarray:
        values, mu = self._unpack(theta)
        ar, ma = expanded_polynomials(self.spec, values)
        x = self.w - mu
        z = np.convolve(x, ar, mode="valid") if ar.size > 1 else x.copy()
        with np.errstate(all="ignore"):
            e = signal.lfilter([1.0], ma, z)
        if not np.all(np.isfinite(e)) or np.max(np.abs(e)) > _HUGE:
            return np.full(z.size, _HUGE)
        return e

    def jacobian(self, theta: np.ndarray) -> np.ndarray:
        spec = self.spec
        values, mu = self._unpack(theta)
        ar, ma = expanded_polynomials(spec, values)
        x = self.w - mu
        p = self.p_star
        n_e = x.size - p
        z = np.convolve(x, ar, mode="valid") if ar.size > 1 else x.copy()
        with np.errstate(all="ignore"):
            e = signal.lfilter([1.0], ma, z)
        # Factor polynomials, for the product rule.
        f = factors(spec, values)
        sar_b = _spread(f["sar"], spec.s)
        ar_b = f["ar"]
        sma_b = _spread(f["sma"], spec.s)
        ma_b = f["ma"]
        columns = []
        for name in self.names:
            if name == "const":
                # d z / d mu = -ar(1): a constant column
                columns.append(np.full(n_e, -ar.sum()))
                continue
            if name in self.exog_names:
                # d z / d beta_j = -ar(B) x_j: the regressor filtered like the series
                xj = self.x[:, self.exog_names.index(name)]
                columns.append(-(np.convolve(xj, ar, mode="valid") if ar.size > 1 else xj.copy()))
                continue
            if name.startswith("ar."):
                lag = int(name.rsplit("L", 1)[1])
                other = sar_b if not name.startswith("ar.S.") else ar_b
                dpoly = np.zeros(lag + other.size)
                dpoly[lag:] = -other  # d(ar poly)/d param = -B^lag * other factor
                col = np.zeros(n_e)
                for k in np.flatnonzero(dpoly):
                    col += dpoly[k] * x[p - k: x.size - k]
                columns.append(col)
            else:
                lag = int(name.rsplit("L", 1)[1])
                other = sma_b if not name.startswith("ma.S.") else ma_b
                dpoly = np.zeros(lag + other.size)
                dpoly[lag:] = other  # d(ma poly)/d param = +B^lag * other factor
                col = np.zeros(n_e)
                for k in np.flatnonzero(dpoly):
                    col[k:] -= dpoly[k] * e[: n_e - k]
                columns.append(col)
        if not columns:
            return np.zeros((n_e, 0))
        with np.errstate(all="ignore"):
            jac = signal.lfilter([1.0], ma, np.column_stack(columns), axis=0)
        if not np.all(np.isfinite(jac)):
            jac = np.nan_to_num(jac, nan=0.0, posinf=_HUGE, neginf=-_HUGE)
        return jac


def css_estimate(spec: ModelSpec, prepared: PreparedSeries) -> tuple[dict[str, float], np.ndarray, dict]:
    """Conditional-sum-of-squares estimates for ``spec`` on a prepared series.

    Returns
    -------
    params : dict
        Estimates by statsmodels name, ``sigma2`` included (residual sum of
        squares over the number of residuals).
    residuals : numpy.ndarray
        Length of the prepared series; the first :math:`p^*` are NaN.
    info : dict
        ``converged``, ``message``, ``iterations``, ``jacobian``, ``filled``.
    """
    w, filled = _fill_missing(np.asarray(prepared.values, dtype=float))
    problem = _CssProblem(spec, w, prepared.regressors)
    theta0 = np.array([float(np.mean(w)) if n == "const" else 0.0 for n in problem.names])
    if problem.exog_names:  # the regression part starts at its least-squares fit, the ARMA part at zero
        design = problem.x if not spec.has_constant else np.column_stack([np.ones(w.size), problem.x])
        beta = np.linalg.lstsq(design, w, rcond=None)[0]
        for name, value in zip(("const",) * spec.has_constant + problem.exog_names, beta):
            theta0[problem.names.index(name)] = value
    if theta0.size:
        result = optimize.least_squares(
            problem.residuals, theta0, jac=problem.jacobian, method="lm", x_scale="jac"
        )
        theta = result.x
        info = {
            "converged": bool(result.success) and result.status > 0,
            "message": str(result.message),
            "iterations": int(result.nfev),
            "jacobian": result.jac,
        }
    else:
        theta = theta0
        info = {"converged": True, "message": "nothing to estimate", "iterations": 0, "jacobian": np.zeros((w.size, 0))}
    e = problem.residuals(theta)
    params = dict(zip(problem.names, map(float, theta)))
    params["sigma2"] = float(np.mean(e**2))
    resid = np.full(w.size, np.nan)
    resid[problem.p_star:] = e
    info["filled"] = filled
    return params, resid, info


def fit_preview(series: Series, spec: ModelSpec) -> Fit:
    """Fit ``spec`` to ``series`` by conditional sums of squares: the fast preview.

    Never raises for a model the data cannot support: returns a
    :class:`~lagwright.core.result.Fit` with ``ok=False`` and the reason.
    Input problems (an unusable series) still raise
    :class:`~lagwright.core.errors.InputError`, since no model could help.
    """
    started = time.perf_counter()
    prepared = prepare(series, spec)
    try:
        params, resid, info = css_estimate(spec, prepared)
    except (LagwrightError, np.linalg.LinAlgError, ValueError) as exc:
        return failed_fit(spec, "preview", f"The preview could not be computed: {exc}",
                          elapsed=time.perf_counter() - started)
    e = resid[np.isfinite(resid)]
    n = int(e.size)
    sigma2 = params["sigma2"]
    if not (np.isfinite(sigma2) and sigma2 > 0) or sigma2 >= _HUGE:
        return failed_fit(spec, "preview", "The preview did not find stable estimates (the residuals blew up).",
                          elapsed=time.perf_counter() - started)
    loglik = -0.5 * n * (math.log(2.0 * math.pi * sigma2) + 1.0)
    k = spec.n_params
    jac = info["jacobian"]
    names = list(params)
    try:
        cov = sigma2 * np.linalg.inv(jac.T @ jac) if jac.shape[1] else np.zeros((0, 0))
        se_coef = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    except np.linalg.LinAlgError:
        se_coef = np.full(jac.shape[1], np.nan)
    se_sigma2 = sigma2 * math.sqrt(2.0 / n)
    estimates = []
    for i, name in enumerate(names):
        value = params[name]
        se = se_sigma2 if name == "sigma2" else float(se_coef[i])
        stat = value / se if se > 0 else math.nan
        p = float(2.0 * stats.norm.sf(abs(stat))) if np.isfinite(stat) else math.nan
        estimates.append(ParamEstimate(name, value, se, stat, p))
    all_roots = roots(spec, params)
    warnings = []
    if info["filled"]:
        warnings.append(
            f"{info['filled']} missing value(s) were interpolated for the preview only; "
            "the exact fit treats them as missing."
        )
    if not info["converged"]:
        warnings.append(f"The preview optimiser did not converge: {info['message']}")
    return Fit(
        spec=spec,
        kind="preview",
        ok=True,
        params=tuple(estimates),
        cov_type="preview: sigma2 (J'J)^-1 from the CSS Jacobian (Gauss-Newton)",
        sigma2=sigma2,
        loglik=loglik,
        nobs=n,
        n_params=k,
        rss=float(np.sum(e**2)),
        residuals=resid,
        std_residuals=resid / math.sqrt(sigma2),
        burn_in=int(np.argmax(np.isfinite(resid))) if n else 0,
        offset=prepared.offset,
        roots=all_roots,
        root_warnings=root_warnings(all_roots),
        convergence=Convergence(info["converged"], info["message"], info["iterations"], "css-lm", "zeros"),
        warnings=tuple(warnings),
        elapsed=time.perf_counter() - started,
        **information_criteria(loglik, k, n),
    )
