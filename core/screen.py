"""The order screen: every ARMA order up to set limits, ranked by AICc or BIC.

Two stages. First every order is fitted by the conditional-sum-of-squares
preview (milliseconds each) and scored with the criterion computed from the
exact likelihood at the preview's estimates (one filter pass). Then only the plausible leaders are fitted by
exact maximum likelihood, in parallel worker processes (one BLAS/OpenMP
thread each: oversubscription made fits many times slower on 2 cores), with
an iteration cap so a candidate that cannot converge stops early and says
so. The ranking is by the exact criterion; orders screened out by the
preview keep their preview score and are marked as such.

Starting the worker processes (a spawn and a statsmodels import each) costs
about as much as the whole screen of 25 orders at n = 1,000, so a caller
that screens more than once, or can start early, keeps them:
:func:`start_workers` (the window starts them when the screen dialog first
opens, while the user sets the limits).

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
from .prepare import prepare
from .result import information_criteria
from .preview import fit_preview
from .series import Series
from .spec import ModelSpec

CRITERIA = ("aicc", "bic")
#: Exact fits for at least this many leaders of the preview ranking ...
MIN_LEADERS = 6
#: ... and for every order whose preview criterion is within this of the best.
PREVIEW_MARGIN = 5.0
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
    """

    spec: ModelSpec
    criterion: float
    exact: bool
    converged: bool
    loglik: float
    note: str = ""

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


def _preview_criterion(series: Series, spec: ModelSpec, name: str, n: int) -> float:
    """The criterion from the exact log-likelihood evaluated at the preview's estimates.

    One Kalman filter pass per order: a lower bound on the exact optimum that
    is usually within a fraction of a unit of it, so it ranks orders almost as
    the exact fits would. (The preview's own conditional likelihood uses
    fewer observations for larger AR orders and ranks MA orders poorly.)
    """
    fit = fit_preview(series, spec)
    if not fit.ok:
        return math.inf
    loglik = exact_loglik_at(series, spec, fit.param_dict)
    if not math.isfinite(loglik):  # not stationary/invertible: fall back to the preview's variance
        loglik = -0.5 * n * (math.log(2 * math.pi * fit.sigma2) + 1.0)
    k = fit.n_params
    if name == "aicc":
        return -2 * loglik + 2 * k + (2 * k * (k + 1) / (n - k - 1) if n - k - 1 > 0 else math.inf)
    return -2 * loglik + k * math.log(n)


def _preview_chunk(series: Series, specs: list[ModelSpec], criterion: str, n: int) -> list[float]:
    """Preview scores of several orders (one worker job; a job per order cost more in transfers)."""
    out = []
    for spec in specs:
        try:
            out.append(_preview_criterion(series, spec, criterion, n))
        except LagwrightError:
            out.append(math.inf)
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


def _exact_job(series: Series, spec: ModelSpec, criterion: str, maxiter: int) -> ScreenRow:
    try:
        loglik, converged, message = maximised_loglik(series, spec, maxiter=maxiter)
        n = prepare(series, spec).n_observed
    except LagwrightError as exc:
        return ScreenRow(spec, math.inf, True, False, math.nan, str(exc))
    if not math.isfinite(loglik):
        return ScreenRow(spec, math.inf, True, False, math.nan, message)
    value = information_criteria(loglik, spec.n_params, n)[criterion]
    note = "" if converged else "did not converge within the iteration cap"
    return ScreenRow(spec, value, True, converged, loglik, note)


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
        Worker processes for the exact fits (default: the number of cores);
        1 runs them in this process. Ignored when ``running`` is given.
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
    if pool is None:
        for i, spec in enumerate(specs, start=1):
            if cancelled is not None and cancelled():
                return ScreenResult(criterion, (), 0, cancelled=True)
            previews.update(zip([spec], _preview_chunk(series, [spec], criterion, n_used)))
            if progress is not None:
                progress(i / total)
    else:  # the previews too are shared out among the workers, a few orders per job
        size = max(1, math.ceil(len(specs) / (4 * workers)))
        chunks = [specs[i:i + size] for i in range(0, len(specs), size)]
        futures = {pool.submit(_preview_chunk, series, chunk, criterion, n_used): chunk for chunk in chunks}
        done = 0
        for future in as_completed(futures):
            chunk = futures[future]
            previews.update(zip(chunk, future.result()))
            done += len(chunk)
            if progress is not None:
                progress(done / total)
            if cancelled is not None and cancelled():
                for other in futures:
                    other.cancel()
                return ScreenResult(criterion, (), 0, cancelled=True)
    ranked = sorted(specs, key=lambda s: previews[s])
    best = previews[ranked[0]]
    leaders = [s for i, s in enumerate(ranked)
               if math.isfinite(previews[s]) and (i < MIN_LEADERS or previews[s] <= best + PREVIEW_MARGIN)]
    rows: dict[ModelSpec, ScreenRow] = {
        s: ScreenRow(s, previews[s], False, False, math.nan, "screened out by the preview") for s in specs
    }
    was_cancelled = False
    if pool is None:
        for i, spec in enumerate(leaders, start=1):
            if cancelled is not None and cancelled():
                was_cancelled = True
                break
            rows[spec] = _exact_job(series, spec, criterion, maxiter)
            if progress is not None:
                progress(0.5 + 0.5 * i / len(leaders))
    else:
        # the costliest orders first, so that no worker is left with a long fit at the end
        leaders = sorted(leaders, key=lambda s: -s.n_arma_coefficients)
        futures = {pool.submit(_exact_job, series, spec, criterion, maxiter): spec for spec in leaders}
        for i, future in enumerate(as_completed(futures), start=1):
            rows[futures[future]] = future.result()
            if progress is not None:
                progress(0.5 + 0.5 * i / len(leaders))
            if cancelled is not None and cancelled():
                was_cancelled = True
                for other in futures:
                    other.cancel()
                break
    ordered = sorted(rows.values(), key=lambda r: (not r.exact, r.criterion))
    return ScreenResult(criterion, tuple(ordered), sum(r.exact for r in ordered), cancelled=was_cancelled)
