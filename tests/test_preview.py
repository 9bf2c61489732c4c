"""The conditional-sum-of-squares preview: exact against OLS for pure AR, close to the exact fit otherwise."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal

from lagwright.core.fit import fit_exact
from lagwright.core.preview import _CssProblem, fit_preview
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


def _arma(n, ar=(), ma=(), seed=0, mean=0.0):
    rng = np.random.default_rng(seed)
    e = rng.standard_normal(n + 300)
    x = signal.lfilter(np.r_[1.0, np.asarray(ma, float)], np.r_[1.0, -np.asarray(ar, float)], e)[300:]
    return x + mean


def test_pure_ar_preview_equals_conditional_ols():
    # For a pure AR model, CSS conditional on the first p values is ordinary
    # least squares on the lagged values. Reference: statsmodels AutoReg (OLS);
    # its intercept c relates to the mean by mu = c / (1 - phi1 - phi2).
    from statsmodels.tsa.ar_model import AutoReg

    y = _arma(800, ar=(0.5, 0.3), seed=1, mean=4.0)
    fit = fit_preview(Series(y), ModelSpec(ar=(1, 2), constant="mean"))
    ref = AutoReg(y, lags=2, trend="c").fit()
    c, phi1, phi2 = ref.params
    assert fit.param("ar.L1").value == pytest.approx(phi1, abs=1e-6)
    assert fit.param("ar.L2").value == pytest.approx(phi2, abs=1e-6)
    assert fit.param("const").value == pytest.approx(c / (1 - phi1 - phi2), abs=1e-6)
    assert fit.burn_in == 2 and np.isnan(fit.residuals[:2]).all()


def test_preview_is_labelled_and_close_to_exact_fit():
    y = _arma(5000, ar=(0.6,), ma=(0.4,), seed=2, mean=1.0)
    spec = ModelSpec(ar=(1,), ma=(1,), constant="mean")
    preview = fit_preview(Series(y), spec)
    exact = fit_exact(Series(y), spec)
    assert preview.kind == "preview" and preview.is_preview and exact.kind == "exact"
    for name in ("ar.L1", "ma.L1", "const"):
        assert preview.param(name).value == pytest.approx(exact.param(name).value, abs=0.02), name
    # Exact log-likelihood evaluated at the preview estimates is close to the optimum.
    from statsmodels.tsa.arima.model import ARIMA

    model = ARIMA(y, order=(1, 0, 1), trend="c")
    at_preview = model.loglike(np.array([preview.param(n).value for n in model.param_names]))
    assert exact.loglik - at_preview < 0.5


def test_seasonal_jacobian_matches_finite_differences():
    # The analytic Jacobian against central differences (numerical reference).
    y = _arma(1500, ar=(0.4,), ma=(0.3,), seed=3, mean=2.0)
    spec = ModelSpec(ar=(1,), ma=(1,), sar=(1,), sma=(1,), s=12, constant="mean")
    problem = _CssProblem(spec, y)
    theta = np.array([2.0, 0.3, 0.2, 0.1, -0.3])
    jac = problem.jacobian(theta)
    h = 1e-6
    num = np.column_stack([(problem.residuals(theta + h * u) - problem.residuals(theta - h * u)) / (2 * h)
                           for u in np.eye(theta.size)])
    np.testing.assert_allclose(jac, num, atol=1e-6)


def test_preview_with_missing_values_says_so():
    y = _arma(300, ar=(0.5,), seed=4)
    y[100] = np.nan
    fit = fit_preview(Series(y), ModelSpec(ar=(1,)))
    assert fit.ok and any("interpolated" in w for w in fit.warnings)


def test_preview_of_explosive_data_fails_gracefully():
    y = np.cumsum(np.cumsum(np.random.default_rng(5).standard_normal(200)))
    fit = fit_preview(Series(y), ModelSpec(ma=(1, 2, 3)))
    assert fit.kind == "preview"
    assert fit.ok or fit.failure
