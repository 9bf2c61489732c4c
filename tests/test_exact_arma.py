"""The exact ARMA likelihood by integrating out the pre-sample values.

References used here:
- the dense multivariate normal density of the whole series
  (scipy.stats.multivariate_normal with the Toeplitz autocovariance matrix
  from statsmodels' ``arma_acovf``): the exact likelihood by definition;
- statsmodels' state-space ARIMA ``loglike`` (Kalman filter from the
  stationary state, concentrated scale) at the same coefficients;
- statsmodels' ``arma_acovf`` for the autocovariances and scipy's
  ``signal.lfiltic`` for the filter's initial states.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import linalg, signal, stats
from statsmodels.tsa.arima_process import arma_acovf

from lagwright.core.exact_arma import (
    arma_autocovariances,
    initial_state_basis,
    presample_response,
    profile_loglik,
)

# (AR polynomial, MA polynomial) pairs: [1, -phi..] and [1, theta..]; seasonal ones multiplied out.
CASES = {
    "white noise": ([1.0], [1.0]),
    "AR(1)": ([1.0, -0.7], [1.0]),
    "MA(1)": ([1.0], [1.0, 0.6]),
    "ARMA(2,2)": ([1.0, -0.6, 0.2], [1.0, 0.4, 0.15]),
    "ARMA(4,4)": ([1.0, -0.5, 0.1, -0.05, 0.01], [1.0, 0.3, 0.1, 0.05, 0.02]),
    "(1,0,1)(1,0,1)_7": (np.convolve([1.0, -0.5], [1.0] + [0.0] * 6 + [-0.3]),
                         np.convolve([1.0, 0.4], [1.0] + [0.0] * 6 + [0.35])),
    "(0,0,2)(0,0,1)_12": ([1.0], np.convolve([1.0, 0.3, -0.2], [1.0] + [0.0] * 11 + [-0.5])),
    "(3,0,0)(2,0,0)_4": (np.convolve([1.0, -0.3, 0.1, -0.1], [1.0, 0, 0, 0, -0.2, 0, 0, 0, -0.1]), [1.0]),
}


def _simulate(ar, ma, n, seed, mean=3.0):
    e = np.random.default_rng(seed).standard_normal(n + 300)
    return signal.lfilter(ma, ar, e)[300:] + mean


def _dense_loglik(u, ar, ma):
    """log N(u; 0, sigma2 * Gamma) with sigma2 at its maximum (Gamma: unit-innovation autocovariances)."""
    n = u.size
    gamma = linalg.toeplitz(arma_acovf(np.asarray(ar), np.asarray(ma), nobs=n))
    sigma2 = float(u @ np.linalg.solve(gamma, u)) / n
    return stats.multivariate_normal(mean=np.zeros(n), cov=sigma2 * gamma).logpdf(u)


@pytest.mark.parametrize("name", list(CASES))
def test_autocovariances_match_statsmodels(name):
    ar, ma = CASES[name]
    ours = arma_autocovariances(np.asarray(ar), np.asarray(ma), 30)
    np.testing.assert_allclose(ours, arma_acovf(np.asarray(ar), np.asarray(ma), nobs=30), rtol=1e-10, atol=1e-12)


@pytest.mark.parametrize("name", [k for k in CASES if k != "white noise"])
def test_initial_state_basis_matches_lfiltic(name):
    ar, ma = (np.asarray(v, dtype=float) for v in CASES[name])
    p, q = ar.size - 1, ma.size - 1
    basis = initial_state_basis(ar, ma)
    for j in range(p + q):
        past_in, past_out = np.zeros(p), np.zeros(q)
        if j < p:
            past_in[j] = 1.0
        else:
            past_out[j - p] = 1.0
        np.testing.assert_allclose(basis[j], signal.lfiltic(ar, ma, past_out, past_in), atol=1e-15)


@pytest.mark.parametrize("name", list(CASES))
def test_profile_loglik_is_the_dense_gaussian_density(name):
    ar, ma = (np.asarray(v, dtype=float) for v in CASES[name])
    y = _simulate(ar, ma, 240, seed=5)
    ours = profile_loglik(y - 3.0, None, ar, ma)
    assert ours.loglik == pytest.approx(_dense_loglik(y - 3.0, ar, ma), abs=1e-8)


@pytest.mark.parametrize("name", list(CASES))
def test_profile_loglik_equals_statsmodels_kalman_filter(name):
    from statsmodels.tsa.arima.model import ARIMA

    ar, ma = (np.asarray(v, dtype=float) for v in CASES[name])
    y = _simulate(ar, ma, 500, seed=11)
    ours = profile_loglik(y, np.ones((y.size, 1)), ar, ma)
    # The same model as one full-order ARIMA (lags with zero coefficients included), the constant at our
    # generalised least-squares value.
    p, q = ar.size - 1, ma.size - 1
    model = ARIMA(y, order=(p, 0, q), trend="c", concentrate_scale=True)
    params = np.r_[ours.beta[0], -ar[1:], ma[1:]]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        reference = model.loglike(params)
    assert ours.loglik == pytest.approx(reference, abs=1e-7)


def test_the_constant_is_the_generalised_least_squares_maximiser():
    # Common practice: the profile likelihood over beta is maximal at the GLS estimate; moving it lowers the
    # dense Gaussian density.
    ar, ma = np.array([1.0, -0.6, 0.2]), np.array([1.0, 0.4])
    y = _simulate(ar, ma, 200, seed=2)
    ours = profile_loglik(y, np.ones((y.size, 1)), ar, ma)
    at_beta = _dense_loglik(y - ours.beta[0], ar, ma)
    assert ours.loglik == pytest.approx(at_beta, abs=1e-8)
    for shift in (-0.05, 0.05):
        assert _dense_loglik(y - ours.beta[0] - shift, ar, ma) < at_beta


def test_regressors_other_than_the_constant():
    # Reference: statsmodels SARIMAX, a regression on [1, step] with ARMA(1,1) errors, at our GLS coefficients.
    from statsmodels.tsa.statespace.sarimax import SARIMAX

    ar, ma = np.array([1.0, -0.5]), np.array([1.0, 0.3])
    y = _simulate(ar, ma, 300, seed=8)
    step = (np.arange(300) >= 150).astype(float)
    y = y + 2.0 * step
    x = np.column_stack([np.ones(300), step])
    ours = profile_loglik(y, x, ar, ma)
    model = SARIMAX(y, exog=x, order=(1, 0, 1), concentrate_scale=True)
    reference = model.loglike(np.r_[ours.beta, 0.5, 0.3])
    assert ours.loglik == pytest.approx(reference, abs=1e-7)
    assert ours.beta[1] == pytest.approx(2.0, abs=0.5)


def test_near_unit_ma_root():
    # The pre-sample response decays slowly (MA root 1/0.995) and must run far past its first stretch.
    # References: the dense Gaussian density at n = 2,000, and statsmodels' Kalman filter at n = 10,000, which
    # here drifts from the dense density by about 2e-6 (measured at n = 2,000 and 4,000), hence its tolerance.
    from statsmodels.tsa.arima.model import ARIMA

    ar, ma = np.array([1.0, -0.3]), np.array([1.0, -0.995])
    y = _simulate(ar, ma, 2_000, seed=4) - 3.0
    assert presample_response(ar, ma, y.size).shape[0] > 1000
    assert profile_loglik(y, None, ar, ma).loglik == pytest.approx(_dense_loglik(y, ar, ma), abs=1e-8)
    y = _simulate(ar, ma, 10_000, seed=4)
    ours = profile_loglik(y, np.ones((y.size, 1)), ar, ma)
    model = ARIMA(y, order=(1, 0, 1), trend="c", concentrate_scale=True)
    assert ours.loglik == pytest.approx(model.loglike(np.r_[ours.beta[0], 0.3, -0.995]), abs=1e-5)


def test_presample_response_is_short_when_it_decays_fast():
    ar, ma = np.array([1.0, -0.6, 0.2]), np.array([1.0, 0.4])
    response = presample_response(ar, ma, 10_000)
    assert response.shape == (256, 3)
    pure_ar = presample_response(np.array([1.0, -0.5, 0.2]), np.array([1.0]), 10_000)
    assert np.all(pure_ar[2:] == 0.0)  # an AR(p) residual depends on the pre-sample only in its first p values


def test_not_finite_for_a_degenerate_series():
    result = profile_loglik(np.zeros(50), np.ones((50, 1)), np.array([1.0, -0.5]), np.array([1.0]))
    assert math.isnan(result.loglik)


@pytest.mark.parametrize("name", [k for k in CASES if k != "white noise"] + ["all zero"])
def test_analytic_gradient_matches_central_differences(name):
    # Reference: central differences of the log-likelihood value itself (checked above against the dense
    # density and statsmodels). "all zero" is ARMA(1,1) at zero coefficients, where V is singular.
    ar, ma = (np.asarray(v, dtype=float) for v in (CASES.get(name) or ([1.0, 0.0], [1.0, 0.0])))
    y = _simulate(np.array([1.0, -0.5]), np.array([1.0, 0.3]), 300, seed=21)
    x = np.column_stack([np.ones(300), (np.arange(300) >= 150).astype(float)])
    result = profile_loglik(y, x, ar, ma, gradient=True)
    step = 1e-6

    def numeric(poly, other, first):
        out = []
        for j in range(1, poly.size):
            up, down = poly.copy(), poly.copy()
            up[j] += step
            down[j] -= step
            pair = [(up, other), (down, other)] if first else [(other, up), (other, down)]
            out.append((profile_loglik(y, x, *pair[0]).loglik - profile_loglik(y, x, *pair[1]).loglik) / (2 * step))
        return np.array(out)

    np.testing.assert_allclose(result.gradient_ar, numeric(ar, ma, True), atol=1e-5, rtol=1e-6)
    np.testing.assert_allclose(result.gradient_ma, numeric(ma, ar, False), atol=1e-5, rtol=1e-6)
