"""The order screen against a sequential loop of exact statsmodels fits (the reference ranking)."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy import signal

from lagwright.core.errors import InputError
from lagwright.core.screen import orders, screen, start_workers
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


@pytest.fixture(scope="module")
def series():
    e = np.random.default_rng(31).standard_normal(600)
    return Series(signal.lfilter([1.0, 0.5], [1.0, -0.6], e)[200:] + 3.0)  # ARMA(1,1): MA poly, AR poly


def _reference(y, max_p, max_q):
    from statsmodels.tsa.arima.model import ARIMA

    out = []
    for p in range(max_p + 1):
        for q in range(max_q + 1):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                out.append(((p, q), ARIMA(y, order=(p, 0, q), trend="c").fit().aicc))
    return sorted(out, key=lambda item: item[1])


def test_same_top_three_as_sequential_exact_fits(series):
    result = screen(series, ModelSpec(constant="mean"), 2, 2, workers=1)
    reference = _reference(series.values, 2, 2)
    ours = [((len(r.spec.ar), len(r.spec.ma)), r.criterion) for r in result.rows[:3]]
    for (o, c), (ro, rc) in zip(ours, reference[:3]):
        assert o == ro and c == pytest.approx(rc, abs=0.01)
    assert len(result.rows) == 9 and result.rows[0].exact and result.rows[0].converged


def test_screen_in_worker_processes(series):
    result = screen(series, ModelSpec(constant="mean"), 1, 1, workers=2)
    assert result.rows[0].spec.ar == (1,) and result.rows[0].spec.ma == (1,)


def test_kept_workers_serve_several_screens_and_agree_with_the_sequential_run(series):
    # Reference: the same screen run in this process (itself checked against statsmodels above).
    inline = screen(series, ModelSpec(constant="mean"), 1, 1, workers=1)
    running = start_workers(2)
    try:
        first = screen(series, ModelSpec(constant="mean"), 1, 1, running=running)
        second = screen(series, ModelSpec(constant="mean"), 1, 1, criterion="bic", running=running)
        assert running.pool.submit(abs, -3).result(timeout=60) == 3  # still running after both screens
    finally:
        running.shutdown(wait=True)
    assert [r.spec for r in first.rows] == [r.spec for r in inline.rows]
    assert [r.criterion for r in first.rows] == pytest.approx([r.criterion for r in inline.rows], abs=1e-6)
    assert second.criterion == "bic" and second.rows[0].exact


def test_workers_that_died_are_reported_unusable():
    import os
    import signal as signals
    import time

    running = start_workers(2)
    try:
        assert running.pool.submit(abs, -2).result(timeout=60) == 2 and running.usable()
        os.kill(next(iter(running.pool._processes)), signals.SIGKILL)  # a worker dies (say, out of memory)
        deadline = time.monotonic() + 30
        while running.usable() and time.monotonic() < deadline:
            time.sleep(0.05)
        assert not running.usable()
    finally:
        running.shutdown(wait=True)


def test_progress_and_cancel(series):
    seen = []
    result = screen(series, ModelSpec(constant="mean"), 1, 1, workers=1, progress=seen.append)
    assert seen and seen[-1] == pytest.approx(1.0, abs=0.01) and not result.cancelled
    stopped = screen(series, ModelSpec(constant="mean"), 2, 2, workers=1, cancelled=lambda: True)
    assert stopped.cancelled


def test_orders_and_limits():
    assert len(orders(ModelSpec(s=12), 2, 1, 1, 1)) == 3 * 2 * 2 * 2
    with pytest.raises(InputError):
        orders(ModelSpec(), 1, 1, 1, 0)
    with pytest.raises(InputError):
        screen(Series(np.arange(50.0) % 7), ModelSpec(), 1, 1, criterion="aic")


def _reference_llf(y, order, seasonal_order=(0, 0, 0, 0), trend="c"):
    from statsmodels.tsa.arima.model import ARIMA

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return ARIMA(y, order=order, seasonal_order=seasonal_order, trend=trend).fit().llf


def test_every_exact_row_reaches_at_least_statsmodels_optimum(series):
    # Reference: statsmodels' own fit of each order from its default start (a general-purpose reference
    # library). The screen's exact rows come from the profile likelihood and carry statsmodels' value at them.
    result = screen(series, ModelSpec(constant="mean"), 2, 2, workers=1)
    for row in result.rows:
        if row.exact:
            reference = _reference_llf(series.values, (len(row.spec.ar), 0, len(row.spec.ma)))
            assert row.loglik >= reference - 1e-3 and row.converged


def test_seasonal_screen_rows_against_statsmodels():
    # Invented quarterly-like series with a seasonal AR term; reference: statsmodels per order.
    e = np.random.default_rng(8).standard_normal(700)
    y = signal.lfilter([1.0, 0.3], np.convolve([1.0, -0.5], [1.0, 0, 0, 0, -0.5]), e)[200:]
    result = screen(Series(y), ModelSpec(s=4, constant="mean"), 1, 1, 1, 0, workers=1)
    best = result.rows[0]
    assert best.exact and best.spec.sar == (1,)
    reference = _reference_llf(y, (len(best.spec.ar), 0, len(best.spec.ma)), (1, 0, 0, 4))
    assert best.loglik >= reference - 1e-3


def test_falls_back_to_statsmodels_when_the_kalman_filter_disagrees(series, monkeypatch):
    # A profile optimum whose value statsmodels does not reproduce must not be reported.
    import lagwright.core.screen as screen_module

    honest = screen(series, ModelSpec(constant="mean"), 1, 1, workers=1)
    calls = []
    original = screen_module.maximised_loglik
    monkeypatch.setattr(screen_module, "exact_loglik_at", lambda *a, **k: -1e9)
    monkeypatch.setattr(screen_module, "maximised_loglik", lambda *a, **k: calls.append(a[1]) or original(*a, **k))
    disagreed = screen(series, ModelSpec(constant="mean"), 1, 1, workers=1)
    assert len(calls) == disagreed.n_exact == 4
    for ours, theirs in zip(disagreed.rows, honest.rows):
        assert ours.spec == theirs.spec and ours.loglik == pytest.approx(theirs.loglik, abs=1e-3)


def test_small_screens_run_in_this_process(series, monkeypatch):
    # Starting worker processes costs more than a small screen: without running workers it stays in-process.
    import lagwright.core.screen as screen_module

    started = []
    monkeypatch.setattr(screen_module, "start_workers", lambda workers=None: started.append(workers) or None)
    screen(series, ModelSpec(constant="mean"), 1, 1)
    assert started == [1]
    screen(series, ModelSpec(constant="mean"), 1, 1, workers=2)
    assert started == [1, 2]


def test_boundary_optima_are_checked_by_statsmodels_search():
    # Invented: white noise differenced once (over-differenced), so the MA optima lie at the unit circle,
    # where the profile search alone stopped 0.29 units short of statsmodels' fit for ARMA(1,2) (measured).
    # Reference: statsmodels' own fit of every order.
    y = np.diff(np.random.default_rng(41).standard_normal(801))
    result = screen(Series(y), ModelSpec(constant="mean"), 1, 2, workers=1)
    top = sorted(r.criterion for r in result.rows if r.exact)[2]
    for row in result.rows:
        if row.exact and row.criterion <= top + 2.0:
            reference = _reference_llf(y, (len(row.spec.ar), 0, len(row.spec.ma)))
            assert row.loglik >= reference - 1e-3, row.spec.label
