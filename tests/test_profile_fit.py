"""The order screen's exact stage: maximum likelihood on the profile likelihood.

Reference: statsmodels' state-space ARIMA fitted by its own default
maximum-likelihood search (a general-purpose reference library), and its
``loglike`` at our estimates.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy import signal

from lagwright.core.fit import exact_loglik_at
from lagwright.core.prepare import prepare
from lagwright.core.profile_fit import applicable, maximise_profile
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


def _series(n=400, seed=17, seasonal=False):
    e = np.random.default_rng(seed).standard_normal(n + 200)
    ar = np.convolve([1.0, -0.5], [1.0, 0, 0, 0, -0.4]) if seasonal else [1.0, -0.6, 0.2]
    return Series(signal.lfilter([1.0, 0.4], ar, e)[200:] + 5.0)


def _statsmodels_fit(series, spec):
    from lagwright.core.fit import prepared_model

    prepared = prepare(series, spec)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return prepared_model(prepared, spec).fit()


SPECS = {
    "white noise": ModelSpec(constant="mean"),
    "AR(2)": ModelSpec(ar=(1, 2), constant="mean"),
    "ARMA(1,1)": ModelSpec(ar=(1,), ma=(1,), constant="mean"),
    "ARMA(2,1)": ModelSpec(ar=(1, 2), ma=(1,), constant="mean"),
    "MA(2) no constant": ModelSpec(ma=(1, 2)),
}


@pytest.mark.parametrize("name", list(SPECS))
def test_reaches_the_statsmodels_optimum(name):
    series, spec = _series(), SPECS[name]
    optimum = maximise_profile(spec, prepare(series, spec))
    reference = _statsmodels_fit(series, spec)
    assert optimum.converged
    assert optimum.loglik >= reference.llf - 1e-4
    assert optimum.loglik == pytest.approx(reference.llf, abs=1e-3)  # a well-determined order: the same optimum
    # the reported estimates give statsmodels the same log-likelihood
    assert exact_loglik_at(series, spec, optimum.params) == pytest.approx(optimum.loglik, abs=1e-6)
    for name_, value in zip(reference.model.param_names, reference.params):
        if name_ != "sigma2":
            assert optimum.params[name_] == pytest.approx(value, abs=0.02)


def test_seasonal_spec_after_differencing():
    series = _series(n=500, seasonal=True)
    spec = ModelSpec(ar=(1,), ma=(1,), sar=(1,), s=4, d=1)
    optimum = maximise_profile(spec, prepare(series, spec))
    reference = _statsmodels_fit(series, spec)
    assert optimum.converged and optimum.loglik >= reference.llf - 1e-4


def test_interventions_are_profiled_with_the_constant():
    y = np.asarray(_series().values, dtype=float).copy()
    y[150:] += 4.0
    series = Series(y)
    spec = ModelSpec(ar=(1, 2), constant="mean").with_intervention("level", 150)
    optimum = maximise_profile(spec, prepare(series, spec))
    reference = _statsmodels_fit(series, spec)
    assert optimum.loglik >= reference.llf - 1e-4
    level = [name for name in optimum.params if name.startswith("level")][0]
    assert optimum.params[level] == pytest.approx(reference.params[level], abs=0.02)


def test_not_applicable_with_gaps_or_skipped_lags():
    y = np.asarray(_series().values, dtype=float).copy()
    y[40] = np.nan
    spec = ModelSpec(ar=(1,), constant="mean")
    assert not applicable(spec, prepare(Series(y), spec))
    assert maximise_profile(spec, prepare(Series(y), spec)) is None
    skipped = ModelSpec(ar=(1, 3), constant="mean")
    assert maximise_profile(skipped, prepare(_series(), skipped)) is None


@pytest.mark.parametrize("spec", [
    ModelSpec(ar=(1, 2), ma=(1,), constant="mean"),
    ModelSpec(ar=(1,), ma=(1,), sar=(1,), sma=(1,), s=4, d=1),
    ModelSpec(ma=(1, 2, 3)),
    ModelSpec(ar=(1,), constant="mean").with_intervention("level", 150),
    ModelSpec(sar=(1, 2), s=4, constant="mean"),
], ids=lambda spec: spec.label)
def test_gradient_in_search_coordinates(spec):
    # Reference: central differences of the objective (the chain rule through the factor polynomials and the
    # stationarity map is what is checked here).
    from lagwright.core.profile_fit import _Problem

    problem = _Problem(spec, prepare(_series(seasonal=True), spec))
    rng = np.random.default_rng(5)
    for _ in range(2):
        x = rng.normal(0.0, 0.5, problem.size)
        value, gradient = problem.objective_and_gradient(x)
        assert value == pytest.approx(problem.objective(x), rel=1e-12)
        numeric = [(problem.objective(x + h) - problem.objective(x - h)) / 2e-6 for h in np.eye(x.size) * 1e-6]
        np.testing.assert_allclose(gradient, numeric, atol=1e-7)


def test_optimum_from_either_start_is_kept():
    # An over-differenced seasonal series: the optimum lies at an MA root near the unit circle, reached from
    # statsmodels' start values but not from the CSS estimates (measured); the better one must be reported.
    series = _series(n=500, seasonal=True)
    spec = ModelSpec(ar=(1,), ma=(1,), sar=(1,), s=4, d=1)
    optimum = maximise_profile(spec, prepare(series, spec))
    assert optimum.params["ma.L1"] < -0.99
