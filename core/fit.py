"""The exact fit: Gaussian maximum likelihood of one candidate, with honest convergence.

The ARMA part is fitted to the explicitly differenced series (see
:mod:`lagwright.core.prepare`) by statsmodels' state-space ARIMA, which
evaluates the exact Gaussian likelihood by the Kalman filter with the state
started from its stationary distribution (Harvey, 1989, §3.4; Durbin &
Koopman, 2012, §5.6). :math:`\\sigma^2` is concentrated out of the likelihood
during the search (one parameter fewer; Harvey, 1989, §3.4.3) and reported
with the large-sample standard error :math:`\\sigma^2\\sqrt{2/n}`.

Standard errors of the coefficients are the square roots of the diagonal of
the inverse *observed* information: the numerical Hessian of the exact
log-likelihood at the optimum (statsmodels ``cov_type="approx"``). This is
the estimator that reproduces the standard errors printed in the published
worked examples checked in ``tests/test_published_examples.py``; the
library's analytic ``"oim"`` (an expected-information formula) and
``"opg"`` differ from them in the second decimal for ARMA models.

Every fit reports whether it converged. A fit that does not converge is
retried from other start values and with other optimisers, and every
attempt is recorded. A child that nests its parent must reach at least the
parent's log-likelihood; if not, it stopped at a worse optimum and is refitted
from the parent's estimates (zero for the new term).

References
----------
Harvey, A. C. (1989). *Forecasting, Structural Time Series Models and the
Kalman Filter*. Cambridge University Press.
Durbin, J. & Koopman, S. J. (2012). *Time Series Analysis by State Space
Methods*, 2nd ed. Oxford University Press.
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis*, 5th ed., ch. 7.
"""

from __future__ import annotations

import math
import time
import warnings
from dataclasses import dataclass

import numpy as np
from scipy import stats

from .errors import LagwrightError
from .polynomials import root_warnings, roots
from .prepare import PreparedSeries, prepare
from .preview import css_estimate
from .result import Convergence, Fit, ParamEstimate, failed_fit, information_criteria
from .series import Series
from .spec import ModelSpec

#: Start-value strategies, in the order tried after the first choice fails.
START_STRATEGIES = ("profile", "css", "default", "parent")
#: The strategy used first unless the caller asks otherwise (chosen from the
#: measurements of ``bench/bench_core.py``; see DEVELOPERS.md).
DEFAULT_START = "profile"
#: Log-likelihood slack when checking that a nesting child is no worse than its parent.
NESTING_TOLERANCE = 1e-6

COV_TYPE_TEXT = (
    "observed information: inverse numerical Hessian of the exact log-likelihood "
    "(sigma2 concentrated out; its se is sigma2*sqrt(2/n))"
)


@dataclass(frozen=True)
class _Attempt:
    start: str
    optimizer: str
    params: np.ndarray
    loglik: float
    converged: bool
    message: str
    iterations: int
    warnings: tuple[str, ...]

    def line(self) -> str:
        state = "converged" if self.converged else "did not converge"
        return (
            f"start={self.start}, optimizer={self.optimizer}: {state} after {self.iterations} "
            f"iterations, log-likelihood {self.loglik:.6f} ({self.message})"
        )


def exog_frame(prepared: PreparedSeries):
    """The prepared intervention regressors as a named frame for statsmodels, or ``None``."""
    if prepared.exog is None:
        return None
    import pandas as pd

    return pd.DataFrame(np.asarray(prepared.regressors), columns=list(prepared.regressor_names))


def prepared_model(prepared: PreparedSeries, spec: ModelSpec, concentrate_scale: bool = True):
    """:func:`arma_model` of a prepared series, its intervention regressors included."""
    return arma_model(np.asarray(prepared.values), spec, concentrate_scale, exog_frame(prepared))


def arma_model(w: np.ndarray, spec: ModelSpec, concentrate_scale: bool = True, exog=None):
    """statsmodels' state-space ARIMA for the ARMA part of ``spec`` on the prepared series ``w``.

    The differencing is already in ``w`` (see :mod:`lagwright.core.prepare`),
    so the model has d = D = 0 and a stationary initial state; its parameter
    names are those of :func:`lagwright.core.polynomials.param_names`.
    ``exog`` holds the differenced intervention regressors as a frame whose
    column names are the interventions' parameter names (see
    :func:`exog_frame`): the model is then a regression with ARMA errors.
    """
    from statsmodels.tsa.arima.model import ARIMA  # heavy import: keep it off start-up paths

    seasonal = bool(spec.sar or spec.sma)
    return ARIMA(
        w,
        exog=exog,
        order=(list(spec.ar) or 0, 0, list(spec.ma) or 0),
        seasonal_order=(list(spec.sar) or 0, 0, list(spec.sma) or 0, spec.s if seasonal else 0),
        trend="c" if spec.has_constant else "n",
        concentrate_scale=concentrate_scale,
    )




def maximised_loglik(series: Series, spec: ModelSpec, maxiter: int = 200) -> tuple[float, bool, str]:
    """The maximised exact log-likelihood only (no standard errors, no residuals): for screening.

    Tries the CSS start, then statsmodels' own start if the first does not
    converge, and returns the better ``(loglik, converged, message)``. Much
    cheaper than :func:`fit_exact` because the Hessian is skipped.
    """
    prepared = prepare(series, spec)
    if spec.n_params >= prepared.n_observed - 1:
        return math.nan, False, "too many parameters for the data"
    model = prepared_model(prepared, spec)
    attempts = []
    for strategy in ("css", "default"):
        try:
            start = _start_values(strategy, model, spec, prepared, None)
        except LagwrightError:
            continue
        if isinstance(start, str):
            continue
        try:
            attempt = _optimise(model, start, strategy, "lbfgs", maxiter)
        except (np.linalg.LinAlgError, ValueError, OverflowError):
            continue
        attempts.append(attempt)
        if attempt.converged:
            break
    if not attempts:
        return math.nan, False, "no optimiser produced estimates"
    best = _best(attempts)
    return best.loglik, best.converged, best.message


def exact_loglik_at(series: Series, spec: ModelSpec, params: dict) -> float:
    """The exact log-likelihood (σ² concentrated out) at given coefficients, or NaN.

    One Kalman filter pass: a cheap, sharp score for start values such as
    the preview's estimates (NaN when they are not stationary and invertible).
    """
    prepared = prepare(series, spec)
    model = prepared_model(prepared, spec)
    vector = np.array([params.get(name, 0.0) for name in model.param_names])
    if not _valid_start(model, vector):
        return math.nan
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        with np.errstate(all="ignore"):
            value = float(model.loglike(vector))
    return value if math.isfinite(value) else math.nan


def _plain_message(caught) -> tuple[str, ...]:
    out = []
    for item in caught:
        text = " ".join(str(item.message).split())
        if text not in out:
            out.append(f"{item.category.__name__}: {text}")
    return tuple(out)


def _valid_start(model, params: np.ndarray) -> bool:
    """Whether start values are finite, stationary and invertible."""
    if not np.all(np.isfinite(params)):
        return False
    try:
        unconstrained = model.untransform_params(params)
        back = model.transform_params(unconstrained)
    except Exception:  # noqa: BLE001 - any failure means "not usable"
        return False
    return bool(np.all(np.isfinite(unconstrained)) and np.allclose(back, params, rtol=1e-6, atol=1e-8))


def _start_values(strategy: str, model, spec: ModelSpec, prepared: PreparedSeries, parent: Fit | None,
                  maxiter: int = 500):
    names = list(model.param_names)
    if strategy == "default":
        return None
    if strategy == "profile":  # the optimum of the profile likelihood (lagwright.core.profile_fit)
        from .profile_fit import maximise_profile

        optimum = maximise_profile(spec, prepared, maxiter=maxiter)  # the same iteration cap as the fit's
        if optimum is None or not optimum.converged:
            return "skip"
        start = np.array([optimum.params.get(n, 0.0) for n in names])
    elif strategy == "css":
        est, _, _ = css_estimate(spec, prepared)
        start = np.array([est.get(n, 0.0) for n in names])
    elif strategy == "parent":
        if parent is None or not parent.ok:
            return "skip"
        known = parent.param_dict
        start = np.array([known.get(n, 0.0) for n in names])
        if "const" in names and "const" not in known:
            start[names.index("const")] = float(np.nanmean(prepared.values))
    else:
        raise ValueError(f"unknown start strategy {strategy!r}")
    return start if _valid_start(model, start) else "skip"


def _optimise(model, start, strategy: str, optimizer: str, maxiter: int) -> _Attempt:
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        with np.errstate(all="ignore"):
            res = model.fit(
                start_params=start,
                method_kwargs={"method": optimizer, "maxiter": maxiter, "disp": 0},
                low_memory=True,
                cov_type="none",  # the covariance is computed once, at the chosen optimum (_to_fit)
            )
    retvals = res.mle_retvals or {}
    converged = bool(retvals.get("converged", False))
    iterations = int(retvals.get("iterations", retvals.get("niter", 0)) or 0)
    message = retvals.get("message") or ("converged" if converged else "stopped")
    if isinstance(message, bytes):
        message = message.decode(errors="replace")
    loglik = float(res.llf)
    return _Attempt(strategy, optimizer, np.asarray(res.params, dtype=float), loglik,
                    converged and math.isfinite(loglik), str(message), iterations, _plain_message(caught))


def fit_exact(
    series: Series,
    spec: ModelSpec,
    *,
    start: str = DEFAULT_START,
    parent: Fit | None = None,
    maxiter: int = 500,
) -> Fit:
    """Fit ``spec`` to ``series`` by exact Gaussian maximum likelihood.

    Parameters
    ----------
    series : Series
    spec : ModelSpec
    start : {"profile", "css", "default", "parent"}
        Start values tried first: the optimum of the profile likelihood
        (:mod:`lagwright.core.profile_fit`; series without gaps, every lag up
        to each order), the conditional-sum-of-squares estimate,
        statsmodels' own start, or the parent's estimates (zero for a new
        term). If it fails to converge, the others are tried.
    parent : Fit, optional
        The candidate this one was made from. When ``spec`` nests the
        parent's spec, the result is guaranteed a log-likelihood at least the
        parent's (refitting from the parent's estimates if necessary).
    maxiter : int
        Iteration cap per attempt.

    Returns
    -------
    Fit
        ``kind="exact"``. When no attempt produced estimates, ``ok=False``
        and ``failure`` says why; the function does not raise for that.

    Raises
    ------
    InputError
        If the series itself cannot be used (too short, constant, ...).
    """
    started = time.perf_counter()
    prepared = prepare(series, spec)
    if spec.n_params >= prepared.n_observed - 1:
        return failed_fit(
            spec, "exact",
            f"{spec.description} has {spec.n_params} parameters but only {prepared.n_observed} values remain "
            "after differencing: drop terms or use a longer series.",
            elapsed=time.perf_counter() - started,
        )
    model = prepared_model(prepared, spec)

    order = [start] + [s for s in START_STRATEGIES if s != start]
    plan = [(strategy, "lbfgs") for strategy in order] + [("default", "nm"), ("default", "powell")]
    attempts: list[_Attempt] = []
    log: list[str] = []
    for strategy, optimizer in plan:
        try:
            start_params = _start_values(strategy, model, spec, prepared, parent, maxiter)
        except LagwrightError as exc:
            log.append(f"start={strategy}: no start values ({exc})")
            continue
        if isinstance(start_params, str):
            continue
        try:
            attempt = _optimise(model, start_params, strategy, optimizer, maxiter if optimizer == "lbfgs" else 20 * maxiter)
        except (np.linalg.LinAlgError, ValueError, OverflowError) as exc:
            log.append(f"start={strategy}, optimizer={optimizer}: failed ({exc})")
            continue
        attempts.append(attempt)
        log.append(attempt.line())
        if attempt.converged:
            break

    if not attempts:
        return failed_fit(spec, "exact", "No optimiser produced estimates: " + "; ".join(log[-2:]),
                          tuple(log), time.perf_counter() - started)

    best = _best(attempts)
    higher = max(attempts, key=lambda a: a.loglik if math.isfinite(a.loglik) else -math.inf)
    if higher is not best and higher.loglik > best.loglik + NESTING_TOLERANCE:
        # An unconverged attempt went higher than every converged one: polish from there.
        for optimizer in ("nm", "lbfgs"):
            try:
                attempt = _optimise(model, higher.params, "polish", optimizer,
                                    maxiter if optimizer == "lbfgs" else 20 * maxiter)
            except (np.linalg.LinAlgError, ValueError, OverflowError) as exc:
                log.append(f"start=polish, optimizer={optimizer}: failed ({exc})")
                continue
            attempts.append(attempt)
            log.append(attempt.line())
        best = _best(attempts)
    if (
        parent is not None and parent.ok and parent.kind == "exact"
        and spec.nests(parent.spec) and spec != parent.spec
        and best.loglik < parent.loglik - NESTING_TOLERANCE
    ):
        log.append(
            f"the fit (log-likelihood {best.loglik:.6f}) was below its nested parent's "
            f"({parent.loglik:.6f}): it stopped at a worse optimum; refitting from the parent's estimates"
        )
        start_params = _start_values("parent", model, spec, prepared, parent)
        if not isinstance(start_params, str):
            for optimizer in ("lbfgs", "nm"):
                attempt = _optimise(model, start_params, "parent", optimizer, maxiter if optimizer == "lbfgs" else 20 * maxiter)
                attempts.append(attempt)
                log.append(attempt.line())
                if attempt.converged and attempt.loglik >= parent.loglik - NESTING_TOLERANCE:
                    break
        best = _best(attempts)
    return _to_fit(series, spec, prepared, model, best, attempts, log, time.perf_counter() - started)


def _best(attempts: list[_Attempt]) -> _Attempt:
    converged = [a for a in attempts if a.converged]
    pool = converged or [a for a in attempts if math.isfinite(a.loglik)] or attempts
    return max(pool, key=lambda a: a.loglik if math.isfinite(a.loglik) else -math.inf)


def _to_fit(series, spec, prepared, model, best: _Attempt, attempts, log, elapsed) -> Fit:
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        with np.errstate(all="ignore"):
            res = model.filter(best.params, cov_type="approx")
            bse = np.asarray(res.bse, dtype=float)
    notes = list(best.warnings) + list(_plain_message(caught))
    names = list(model.param_names)
    nobs = prepared.n_observed
    sigma2 = float(res.scale)
    values = list(best.params) + [sigma2]
    ses = list(bse) + [sigma2 * math.sqrt(2.0 / nobs)]
    estimates = []
    for name, value, se in zip(names + ["sigma2"], values, ses):
        se = float(se) if np.isfinite(se) and se > 0 else math.nan
        stat = float(value) / se if se == se else math.nan
        p = float(2.0 * stats.norm.sf(abs(stat))) if stat == stat else math.nan
        estimates.append(ParamEstimate(name, float(value), se, stat, p))
    if any(math.isnan(e.se) for e in estimates[:-1]):
        notes.append("Some standard errors could not be computed (the Hessian is not positive definite): "
                     "the model may be over-parameterised.")
    fr = res.filter_results
    e = np.asarray(fr.forecasts_error[0], dtype=float).copy()
    f = np.asarray(fr.forecasts_error_cov[0, 0], dtype=float).copy()
    missing = np.isnan(np.asarray(prepared.values))
    e[missing] = np.nan
    with np.errstate(all="ignore"):
        # With sigma2 concentrated out, F_t is already in the units of the data.
        std = e / np.sqrt(f)
        rss = float(np.nansum(e**2 * sigma2 / f))
    loglik = float(res.llf)
    k = spec.n_params
    param_map = {p.name: p.value for p in estimates}
    all_roots = roots(spec, param_map)
    warn = root_warnings(all_roots)
    higher = max(attempts, key=lambda a: a.loglik if math.isfinite(a.loglik) else -math.inf)
    if higher.loglik > best.loglik + NESTING_TOLERANCE:
        notes.append(
            f"An unconverged attempt reached a higher log-likelihood ({higher.loglik:.4f}) than the reported "
            f"converged optimum ({best.loglik:.4f}): the likelihood surface is irregular; treat the estimates with care."
        )
    if not best.converged:
        notes.insert(0, "The optimiser did not converge: the estimates below are the best found, not a verified optimum.")
    return Fit(
        spec=spec,
        kind="exact",
        ok=True,
        params=tuple(estimates),
        cov_type=COV_TYPE_TEXT,
        sigma2=sigma2,
        loglik=loglik,
        nobs=nobs,
        n_params=k,
        rss=rss,
        residuals=e,
        std_residuals=std,
        burn_in=0,
        offset=prepared.offset,
        roots=all_roots,
        root_warnings=warn,
        convergence=Convergence(best.converged, best.message, best.iterations, best.optimizer, best.start, tuple(log)),
        warnings=tuple(dict.fromkeys(notes)),
        elapsed=elapsed,
        **information_criteria(loglik, k, nobs),
    )
