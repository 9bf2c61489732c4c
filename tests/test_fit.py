"""Exact fits: agreement with statsmodels, explicit differencing, convergence reporting, nesting."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy import signal

from lagwright.core import fit as fit_module
from lagwright.core.errors import InputError
from lagwright.core.fit import fit_exact
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


def _arma(n, ar=(), ma=(), seed=0, mean=0.0):
    rng = np.random.default_rng(seed)
    e = rng.standard_normal(n + 200)
    x = signal.lfilter(np.r_[1.0, np.asarray(ma, float)], np.r_[1.0, -np.asarray(ar, float)], e)[200:]
    return x + mean


def _statsmodels_fit(y, order, trend):
    from statsmodels.tsa.arima.model import ARIMA

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return ARIMA(y, order=order, trend=trend).fit(cov_type="approx")


def test_arma_fit_matches_statsmodels():
    # Reference: statsmodels' exact ARIMA fit of the same model and data.
    y = _arma(600, ar=(0.6, -0.2), ma=(0.4,), seed=1, mean=5.0)
    fit = fit_exact(Series(y), ModelSpec(ar=(1, 2), ma=(1,), constant="mean"))
    ref = _statsmodels_fit(y, (2, 0, 1), "c")
    assert fit.convergence.converged
    assert fit.loglik == pytest.approx(ref.llf, abs=1e-3)
    for name, value, se in zip(ref.model.param_names, ref.params, ref.bse):
        assert fit.param(name).value == pytest.approx(value, abs=2e-3), name
        if name != "sigma2":
            assert fit.param(name).se == pytest.approx(se, rel=2e-2), name
    assert fit.aic == pytest.approx(ref.aic, abs=2e-3)
    assert fit.bic == pytest.approx(ref.bic, abs=2e-3)
    assert fit.hqic == pytest.approx(ref.hqic, abs=2e-3)
    assert fit.aicc == pytest.approx(ref.aicc, abs=2e-3)
    assert fit.n_params == 5  # const, ar.L1, ar.L2, ma.L1, sigma2


def test_drift_is_constant_of_differenced_series():
    # Reference: statsmodels' fit with a constant on the explicitly differenced series.
    w = _arma(500, ar=(0.5,), seed=2, mean=0.3)
    y = 100 + np.cumsum(w)
    fit = fit_exact(Series(y), ModelSpec(ar=(1,), d=1, constant="drift"))
    ref = _statsmodels_fit(np.diff(y), (1, 0, 0), "c")
    assert fit.param("const").value == pytest.approx(ref.params[0], abs=1e-3)
    assert fit.param("ar.L1").value == pytest.approx(ref.params[1], abs=1e-3)
    assert fit.loglik == pytest.approx(ref.llf, abs=1e-4)
    assert fit.nobs == 499 and fit.offset == 1


def test_residuals_are_innovations_and_rss_is_n_sigma2():
    y = _arma(300, ar=(0.7,), seed=3)
    fit = fit_exact(Series(y), ModelSpec(ar=(1,)))
    # Reference: statsmodels' one-step prediction errors for the same parameters.
    ref = _statsmodels_fit(y, (1, 0, 0), "n")
    assert fit.param("ar.L1").value == pytest.approx(ref.params[0], abs=1e-4)
    # At the maximum of the likelihood, sigma2 = (1/n) sum e_t^2 / r_t (Harvey, 1989, §3.4).
    assert fit.rss == pytest.approx(fit.nobs * fit.sigma2, rel=1e-8)
    std = fit.std_residuals
    assert np.mean(std**2) == pytest.approx(1.0, abs=1e-6)


def test_missing_values_are_left_to_the_likelihood():
    y = _arma(300, ar=(0.5,), seed=4, mean=10.0)
    y[[50, 51, 200]] = np.nan
    fit = fit_exact(Series(y), ModelSpec(ar=(1,), constant="mean"))
    assert fit.ok and fit.nobs == 297
    assert np.isnan(fit.residuals[[50, 51, 200]]).all()
    ref = _statsmodels_fit(y, (1, 0, 0), "c")
    assert fit.loglik == pytest.approx(ref.llf, abs=1e-3)


def test_non_convergence_is_reported_and_retried():
    y = _arma(400, ar=(0.5,), ma=(0.3,), seed=5)
    fit = fit_exact(Series(y), ModelSpec(ar=(1,), ma=(1,)), maxiter=1)
    attempts = fit.convergence.attempts
    assert len(attempts) >= 2, attempts
    assert "did not converge" in attempts[0]


def test_too_many_parameters_fail_with_reason():
    y = _arma(40, ar=(0.5,), seed=6)
    fit = fit_exact(Series(y), ModelSpec(ar=tuple(range(1, 21)), ma=tuple(range(1, 21))))
    assert not fit.ok and "parameters" in fit.failure


def test_unusable_series_raise_input_error():
    with pytest.raises(InputError, match="constant"):
        fit_exact(Series(np.ones(50)), ModelSpec(ar=(1,)))
    with pytest.raises(InputError, match="at least"):
        fit_exact(Series(np.arange(10.0)), ModelSpec(ar=(1,)))


def test_nested_child_never_below_parent(monkeypatch):
    y = _arma(300, ar=(0.6,), seed=7)
    series = Series(y)
    parent = fit_exact(series, ModelSpec(ar=(1,)))
    real = fit_module._optimise
    calls = {"n": 0}

    def sabotaged(model, start, strategy, optimizer, maxiter):
        attempt = real(model, start, strategy, optimizer, maxiter)
        calls["n"] += 1
        if calls["n"] == 1:  # the first optimum is a poor one, but claims convergence
            return fit_module._Attempt(strategy, optimizer, attempt.params * 0.0 + 0.01,
                                       parent.loglik - 50.0, True, "sabotaged", 1, ())
        return attempt

    monkeypatch.setattr(fit_module, "_optimise", sabotaged)
    child = fit_exact(series, ModelSpec(ar=(1, 2)), parent=parent)
    assert child.loglik >= parent.loglik - 1e-6
    assert any("worse optimum" in line for line in child.convergence.attempts)


def test_over_differencing_flags_ma_root_near_unit_circle():
    # Differencing white noise gives an MA(1) with theta = -1 (common practice).
    x = np.random.default_rng(8).standard_normal(400)
    fit = fit_exact(Series(x), ModelSpec(ma=(1,), d=1))
    assert fit.param("ma.L1").value < -0.9
    assert any(r.side == "MA" for r in fit.root_warnings.near_unit)


def test_redundant_arma_flags_cancelling_roots():
    x = np.random.default_rng(9).standard_normal(400)
    fit = fit_exact(Series(x), ModelSpec(ar=(1,), ma=(1,)))
    assert fit.root_warnings.cancelling, fit.param_dict


def test_roots_of_ar2_match_numpy():
    # Reference: numpy.roots of 1 - phi1 z - phi2 z^2.
    y = _arma(500, ar=(1.0, -0.5), seed=10)
    fit = fit_exact(Series(y), ModelSpec(ar=(1, 2)))
    phi1, phi2 = fit.param("ar.L1").value, fit.param("ar.L2").value
    expected = sorted(np.roots([-phi2, -phi1, 1.0]), key=lambda z: z.imag)
    got = sorted((r.value for r in fit.roots), key=lambda z: z.imag)
    np.testing.assert_allclose(got, expected, atol=1e-10)
    assert all(r.modulus > 1 for r in fit.roots)


def test_seasonal_roots_judged_in_their_own_variable():
    # Theta = -0.8 at s = 7: the factor root 1.25 is far from the circle, though
    # its seven 7th roots in the B plane have modulus 1.25**(1/7) = 1.032.
    from lagwright.core.polynomials import root_warnings, roots

    spec = ModelSpec(sma=(1,), D=1, s=7)
    rs = roots(spec, {"ma.S.L7": -0.8})
    assert len(rs) == 7 and all(abs(r.modulus - 1.25 ** (1 / 7)) < 1e-12 for r in rs)
    assert not root_warnings(rs).near_unit
    # Theta = -0.99: a factor root at 1.0101, near the circle: one warning, not seven.
    warned = root_warnings(roots(spec, {"ma.S.L7": -0.99}))
    assert len(warned.near_unit) == 1 and "over-differenced" in warned.messages()[0]
