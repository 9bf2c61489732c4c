"""The order screen: every ARMA order up to set limits, ranked by AICc or BIC.

Two stages. First every order is fitted by the conditional-sum-of-squares
preview (milliseconds each) and scored with the criterion computed from the
exact likelihood at the preview's estimates (one filter pass). Then only the
plausible leaders are fitted by exact maximum likelihood, with an iteration
cap so a candidate that cannot converge stops early and says so. The ranking
is by the exact criterion; orders screened out by the preview keep their
preview score and are marked as such.

The exact fits maximise the exact likelihood in its profile form
(:mod:`lagwright.core.profile_fit`, with an analytic gradient, from two
starts), which costs a small fraction of statsmodels' Kalman-filter search;
each optimum is accepted only when statsmodels' own log-likelihood at the
same estimates agrees (:data:`CONFIRM_TOLERANCE`), and that value is the one
reported. Orders the profile route does not cover (gaps in the series,
skipped lags) or where it does not converge are fitted by statsmodels.
Where a profile optimum lies at the unit circle (an over-differenced
series: the likelihood is flat there and has local optima), statsmodels'
own search runs too for the rows that could reach the top three, and the
better optimum is kept (:func:`_boundary_pass`).

Large screens run the exact fits in parallel worker processes (one
BLAS/OpenMP thread each: oversubscription made fits many times slower on 2
cores). Starting them (a spawn and a statsmodels import each) costs about as
much as a whole screen of 25 orders at n = 10,000 in one process, so a
screen without running workers starts its own only from
:data:`WORKERS_FROM`, and a caller that screens more than once, or can start
early, keeps them: :func:`start_workers` (the window starts them when the
screen dialog first opens, while the user sets the limits).

Warm starts from neighbouring orders are deliberately not used: measured
here, they sometimes stopped at worse optima than a cold start.
"""

from __future__ import annotations

import itertools
import math
import multiprocessing
import os
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, replace
from typing import Callable

from .errors import InputError, LagwrightError
from .fit import exact_loglik_at, maximised_loglik
from .polynomials import roots
from .prepare import prepare
from .result import information_criteria
from .preview import fit_preview
from .profile_fit import maximise_profile
from .series import Series
from .spec import ModelSpec

CRITERIA = ("aicc", "bic")
#: Exact fits for at least this many leaders of the preview ranking ...
MIN_LEADERS = 6
#: ... and for every order whose preview criterion is within this of the best (and every order without a
#: preview score). The preview criterion exceeds the exact one by up to 8.4 units in overparameterised
#: orders, and an order of the exact top three was up to 10.0 units behind the best preview (24 simulated
#: series, 25 orders each, n = 1,000 and 10,000; the margin of 5 used before missed one in 9 of them).
PREVIEW_MARGIN = 12.0
#: Orders x observations from which a screen without running workers starts its own: starting two
#: (a spawn and a statsmodels import each) took 1.3-1.6 s here, about what 25 orders at n = 10,000 take
#: in one process (1.1 s at n = 1,000, 3.1 s at n = 10,000; bench/bench_screen.py, "one process").
WORKERS_FROM = 250_000
#: A profile optimum with a factor root closer to the unit circle than this is also fitted by statsmodels'
#: search and the better optimum kept: there the likelihood is flat in the search coordinates and has local
#: optima (an over-differenced series: ARMA(1,2) 0.29 units short of statsmodels' fit). At 1.05 instead,
#: most overparameterised leaders qualified and the screen was no faster than the plain loop.
BOUNDARY_MODULUS = 1.005
#: ... but only the rows within this of the third-best exact criterion (see :func:`_boundary_pass`).
BOUNDARY_REFIT_MARGIN = 2.0
#: Relative agreement required between the profile likelihood's optimum and statsmodels at the same estimates.
CONFIRM_TOLERANCE = 1e-9
_THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


@dataclass(frozen=True)
class ScreenRow:
    """One order of the screen.

    Attributes
    ----------
    spec : ModelSpec
    criterion : float
        The exact criterion when ``exact``, else the preview's.
    exact : bool
        Whether the order was fitted exactly (a leader) or only previewed.
    converged : bool
    loglik : float
    note : str
    at_boundary : bool
        The profile optimum has a factor root within :data:`BOUNDARY_MODULUS`
        of the unit circle (then statsmodels' own search may be run too; not
        part of :meth:`to_dict`).
    """

    spec: ModelSpec
    criterion: float
    exact: bool
    converged: bool
    loglik: float
    note: str = ""
    at_boundary: bool = False

    def to_dict(self) -> dict:
        s = self.spec
        return {
            "label": s.label,
            "orders": {"p": len(s.ar), "q": len(s.ma), "P": len(s.sar), "Q": len(s.sma),
                       "d": s.d, "D": s.D, "s": s.s},
            "criterion": None if not math.isfinite(self.criterion) else self.criterion,
            "exact": self.exact,
            "converged": self.converged,
            "loglik": None if not math.isfinite(self.loglik) else self.loglik,
            "note": self.note,
        }


@dataclass(frozen=True)
class ScreenResult:
    """The ranked screen (best first)."""

    criterion: str
    rows: tuple[ScreenRow, ...]
    n_exact: int
    cancelled: bool = False


def orders(base: ModelSpec, max_p: int, max_q: int, max_P: int = 0, max_Q: int = 0) -> list[ModelSpec]:
    """All specs with contiguous lags up to the limits, on ``base``'s preparation and constant."""
    if min(max_p, max_q, max_P, max_Q) < 0:
        raise InputError("Order limits must be 0 or more.")
    if (max_P or max_Q) and base.s < 2:
        raise InputError("Seasonal orders need a seasonal period s of 2 or more.")
    out = []
    for p, q, P, Q in itertools.product(range(max_p + 1), range(max_q + 1), range(max_P + 1), range(max_Q + 1)):
        out.append(replace(base, ar=tuple(range(1, p + 1)), ma=tuple(range(1, q + 1)),
                           sar=tuple(range(1, P + 1)), sma=tuple(range(1, Q + 1))))
    return out


def _preview_criterion(series: Series, spec: ModelSpec, name: str, n: int) -> tuple[float, dict | None]:
    """The criterion from the exact log-likelihood evaluated at the preview's estimates.

    One Kalman filter pass per order: a lower bound on the exact optimum that
    is usually within a fraction of a unit of it, so it ranks orders almost as
    the exact fits would. (The preview's own conditional likelihood uses
    fewer observations for larger AR orders and ranks MA orders poorly.)
    NaN when the preview failed or its estimates are not stationary and
    invertible: the order then has no score to be screened out by and is
    fitted exactly. (A score from the preview's own residual variance, used
    before, ranked such orders first by up to 37 units they did not have.)
    Returns the score and the preview's estimates (the exact fit's first start).
    """
    fit = fit_preview(series, spec)
    if not fit.ok:
        return math.nan, None
    loglik = exact_loglik_at(series, spec, fit.param_dict)
    if not math.isfinite(loglik):
        return math.nan, fit.param_dict
    return information_criteria(loglik, fit.n_params, n)[name], fit.param_dict


def _preview_chunk(series: Series, specs: list[ModelSpec], criterion: str,
                   n: int) -> list[tuple[float, dict | None]]:
    """Preview scores and estimates of several orders (one worker job; a job per order cost more in transfers)."""
    out = []
    for spec in specs:
        try:
            out.append(_preview_criterion(series, spec, criterion, n))
        except LagwrightError:
            out.append((math.nan, None))
    return out


def _init_worker() -> None:
    for var in _THREAD_VARS:
        os.environ[var] = "1"
    try:
        from threadpoolctl import threadpool_limits

        threadpool_limits(1)
    except ImportError:  # the environment variables above cover a fresh process
        pass
    # The heavy import (about a second here) is paid when the worker starts, not by the first fit.
    import statsmodels.tsa.arima.model  # noqa: F401


def _ready() -> bool:
    return True


@dataclass(frozen=True)
class ScreenWorkers:
    """Running worker processes for :func:`screen` (from :func:`start_workers`)."""

    pool: ProcessPoolExecutor
    count: int

    def shutdown(self, wait: bool = False) -> None:
        """Stop the workers; fits not yet started are dropped."""
        self.pool.shutdown(wait=wait, cancel_futures=True)

    def usable(self) -> bool:
        """Whether new work can still be given to the workers (False once one died or after shutdown)."""
        try:
            self.pool.submit(_ready)
        except (BrokenProcessPool, RuntimeError):
            return False
        return True


def start_workers(workers: int | None = None) -> ScreenWorkers | None:
    """Worker processes for :func:`screen`, started now and made ready in the background.

    Starting a worker and importing statsmodels in it takes longer than
    screening 25 orders, so a caller that will screen (the window, when the
    screen dialog opens) starts them early and passes them to every
    :func:`screen`. Returns None for one worker (fits then run in the
    caller's process). The caller shuts the pool down.
    """
    workers = workers or os.cpu_count() or 1
    if workers <= 1:
        return None
    pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context("spawn"),
                               initializer=_init_worker)
    for _ in range(workers):  # each submission starts one worker, which imports while the caller waits for input
        pool.submit(_ready)
    return ScreenWorkers(pool, workers)


def _exact_job(series: Series, spec: ModelSpec, criterion: str, maxiter: int, start: dict | None = None) -> ScreenRow:
    """One leader's exact fit: by the profile likelihood, confirmed by statsmodels' Kalman filter.

    The optimum of :func:`lagwright.core.profile_fit.maximise_profile` is
    accepted only when statsmodels' log-likelihood at the same estimates
    agrees to :data:`CONFIRM_TOLERANCE`, and that value is the one reported;
    otherwise (or when the profile route does not apply or converge) the
    order is fitted by statsmodels' own search.
    """
    try:
        prepared = prepare(series, spec)
        n = prepared.n_observed
        at_boundary = False
        optimum = None
        if spec.n_params < n - 1:
            optimum = maximise_profile(spec, prepared, maxiter=maxiter, css_start=start)
        confirmed = math.nan
        if optimum is not None and optimum.converged:
            confirmed = exact_loglik_at(series, spec, optimum.params)
            if abs(confirmed - optimum.loglik) > CONFIRM_TOLERANCE * max(1.0, abs(confirmed)):
                confirmed = math.nan
        if math.isfinite(confirmed):
            loglik, converged, message = confirmed, True, optimum.message
            at_boundary = any(root.factor_modulus < BOUNDARY_MODULUS for root in roots(spec, optimum.params))
        else:
            loglik, converged, message = maximised_loglik(series, spec, maxiter=maxiter)
    except LagwrightError as exc:
        return ScreenRow(spec, math.inf, True, False, math.nan, str(exc))
    return _row(spec, criterion, n, loglik, converged, message, at_boundary)


def _row(spec, criterion, n, loglik, converged, message, at_boundary=False) -> ScreenRow:
    if not math.isfinite(loglik):
        return ScreenRow(spec, math.inf, True, False, math.nan, message)
    value = information_criteria(loglik, spec.n_params, n)[criterion]
    note = "" if converged else "did not converge within the iteration cap"
    return ScreenRow(spec, value, True, converged, loglik, note, at_boundary)


def _boundary_job(series: Series, row: ScreenRow, criterion: str, maxiter: int) -> ScreenRow:
    """statsmodels' own search for an order whose profile optimum lies at the boundary; the better row wins.

    There the likelihood is flat in the search coordinates and has local
    optima (an over-differenced series: the profile search stopped 0.29
    units short of statsmodels' fit of an ARMA(1,2), at another point of
    the unit-root ridge).
    """
    try:
        loglik, converged, message = maximised_loglik(series, row.spec, maxiter=maxiter)
        n = prepare(series, row.spec).n_observed
    except LagwrightError:
        return row
    if math.isfinite(loglik) and loglik > row.loglik:
        return _row(row.spec, criterion, n, loglik, converged, message)
    return replace(row, at_boundary=False)


def screen(
    series: Series,
    base: ModelSpec,
    max_p: int,
    max_q: int,
    max_P: int = 0,
    max_Q: int = 0,
    criterion: str = "aicc",
    workers: int | None = None,
    maxiter: int = 200,
    progress: Callable[[float], None] | None = None,
    cancelled: Callable[[], bool] | None = None,
    running: ScreenWorkers | None = None,
) -> ScreenResult:
    """Screen every order up to the limits; see the module docstring.

    Parameters
    ----------
    workers : int, optional
        Worker processes for the exact fits; 1 runs them in this process.
        Default: the number of cores when the screen is large enough to
        repay starting them (:data:`WORKERS_FROM`), else 1. Ignored when
        ``running`` is given.
    running : ScreenWorkers, optional
        Workers from :func:`start_workers`, used and left running; without
        them the screen starts its own and shuts them down at the end.
    progress : callable, optional
        Called with the fraction done.
    cancelled : callable, optional
        Polled between fits; when it returns True the screen stops and
        returns what it has, with ``cancelled=True``.
    """
    if criterion not in CRITERIA:
        raise InputError(f"Unknown criterion '{criterion}'; use one of {', '.join(CRITERIA)}.")
    specs = orders(base, max_p, max_q, max_P, max_Q)
    total = len(specs) * 2
    n_used = prepare(series, base).n_observed
    if running is not None:
        return _screen(series, specs, criterion, n_used, total, running.pool, running.count, maxiter, progress,
                       cancelled)
    if workers is None and len(specs) * n_used < WORKERS_FROM:
        workers = 1
    own = start_workers(workers)
    try:
        return _screen(series, specs, criterion, n_used, total, own.pool if own else None, own.count if own else 1,
                       maxiter, progress, cancelled)
    finally:
        if own is not None:
            own.shutdown(wait=True)


def _screen(series, specs, criterion, n_used, total, pool, workers, maxiter, progress, cancelled) -> ScreenResult:
    from concurrent.futures import as_completed

    previews: dict[ModelSpec, float] = {}
    starts: dict[ModelSpec, dict | None] = {}
    if pool is None:
        for i, spec in enumerate(specs, start=1):
            if cancelled is not None and cancelled():
                return ScreenResult(criterion, (), 0, cancelled=True)
            previews[spec], starts[spec] = _preview_chunk(series, [spec], criterion, n_used)[0]
            if progress is not None:
                progress(i / total)
    else:  # the previews too are shared out among the workers, a few orders per job
        size = max(1, math.ceil(len(specs) / (4 * workers)))
        chunks = [specs[i:i + size] for i in range(0, len(specs), size)]
        futures = {pool.submit(_preview_chunk, series, chunk, criterion, n_used): chunk for chunk in chunks}
        done = 0
        for future in as_completed(futures):
            chunk = futures[future]
            for spec, (score, start) in zip(chunk, future.result()):
                previews[spec], starts[spec] = score, start
            done += len(chunk)
            if progress is not None:
                progress(done / total)
            if cancelled is not None and cancelled():
                for other in futures:
                    other.cancel()
                return ScreenResult(criterion, (), 0, cancelled=True)
    ranked = sorted(specs, key=lambda s: (not math.isfinite(previews[s]), previews[s]))
    best = min((v for v in previews.values() if math.isfinite(v)), default=math.inf)
    leaders = [s for i, s in enumerate(ranked)
               if not math.isfinite(previews[s]) or i < MIN_LEADERS or previews[s] <= best + PREVIEW_MARGIN]
    rows: dict[ModelSpec, ScreenRow] = {
        s: ScreenRow(s, previews[s], False, False, math.nan, "screened out by the preview") for s in specs
    }
    was_cancelled = False
    if pool is None:
        for i, spec in enumerate(leaders, start=1):
            if cancelled is not None and cancelled():
                was_cancelled = True
                break
            rows[spec] = _exact_job(series, spec, criterion, maxiter, starts[spec])
            if progress is not None:
                progress(0.5 + 0.45 * i / len(leaders))
    else:
        # the costliest orders first, so that no worker is left with a long fit at the end
        leaders = sorted(leaders, key=lambda s: -s.n_arma_coefficients)
        futures = {pool.submit(_exact_job, series, spec, criterion, maxiter, starts[spec]): spec for spec in leaders}
        for i, future in enumerate(as_completed(futures), start=1):
            rows[futures[future]] = future.result()
            if progress is not None:
                progress(0.5 + 0.45 * i / len(leaders))
            if cancelled is not None and cancelled():
                was_cancelled = True
                for other in futures:
                    other.cancel()
                break
    if not was_cancelled:
        was_cancelled = _boundary_pass(series, rows, criterion, pool, maxiter, cancelled)
    if progress is not None and not was_cancelled:
        progress(1.0)
    ordered = sorted(rows.values(), key=lambda r: (not r.exact, not math.isfinite(r.criterion),
                                                   r.criterion if math.isfinite(r.criterion) else 0.0))
    return ScreenResult(criterion, tuple(ordered), sum(r.exact for r in ordered), cancelled=was_cancelled)


def _boundary_pass(series, rows: dict, criterion: str, pool, maxiter: int, cancelled) -> bool:
    """Refit by statsmodels' own search the boundary rows that could reach the top three; True if cancelled.

    Only rows within :data:`BOUNDARY_REFIT_MARGIN` of the third-best exact
    criterion: the refits are as slow as the plain loop's fits, and a row
    further down cannot reach the top three unless its optimum were short by
    more than half that margin in log-likelihood (the shortfalls seen were
    at most 0.29 units).
    """
    values = sorted(r.criterion for r in rows.values() if r.exact and math.isfinite(r.criterion))
    if not values:
        return False
    limit = values[min(2, len(values) - 1)] + BOUNDARY_REFIT_MARGIN
    chosen = [r for r in rows.values() if r.exact and r.at_boundary and r.criterion <= limit]
    if pool is None:
        for row in chosen:
            if cancelled is not None and cancelled():
                return True
            rows[row.spec] = _boundary_job(series, row, criterion, maxiter)
        return False
    futures = {pool.submit(_boundary_job, series, row, criterion, maxiter): row.spec for row in chosen}
    from concurrent.futures import as_completed

    for future in as_completed(futures):
        rows[futures[future]] = future.result()
        if cancelled is not None and cancelled():
            for other in futures:
                other.cancel()
            return True
    return False
