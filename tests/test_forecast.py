"""Forecasts and holdout scores against closed forms, statsmodels and hand-computed values."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal, stats

from lagwright.core.fit import fit_exact
from lagwright.core.forecast import accuracy, differencing_polynomial, forecast, holdout, naive_scale, psi_weights
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec, Transform


def _sim(n, ar=(), ma=(), seed=0, mean=0.0):
    e = np.random.default_rng(seed).standard_normal(n + 200)
    return signal.lfilter(np.r_[1.0, ma], np.r_[1.0, -np.asarray(ar, float)], e)[200:] + mean  # MA, AR polys


def test_ar1_forecast_closed_form():
    # AR(1) with mean: m(h) = mu + phi^h (y_T - mu), var(h) = s2 (1 - phi^(2h)) / (1 - phi^2)
    # (Box, Jenkins, Reinsel & Ljung, 2015, §5.4: standard result).
    y = _sim(500, ar=(0.7,), seed=1, mean=5.0)
    series = Series(y)
    fit = fit_exact(series, ModelSpec(ar=(1,), constant="mean"))
    mu, phi, s2 = fit.param("const").value, fit.param("ar.L1").value, fit.sigma2
    fc = forecast(series, fit, 6)
    h = np.arange(1, 7)
    np.testing.assert_allclose(fc.mean, mu + phi**h * (y[-1] - mu), rtol=1e-8)
    np.testing.assert_allclose(fc.se**2, s2 * (1 - phi ** (2 * h)) / (1 - phi**2), rtol=1e-10)
    q = stats.norm.ppf(0.975)
    np.testing.assert_allclose(fc.upper95, fc.mean + q * fc.se)


def test_integrated_forecast_matches_statsmodels():
    # Reference: statsmodels' state-space forecast of the full ARIMA(1,1,1) with the same parameters.
    from statsmodels.tsa.arima.model import ARIMA

    y = 50 + np.cumsum(_sim(400, ar=(0.5,), ma=(0.3,), seed=2))
    series = Series(y)
    fit = fit_exact(series, ModelSpec(ar=(1,), ma=(1,), d=1))
    fc = forecast(series, fit, 8)
    ref = ARIMA(y, order=(1, 1, 1)).filter(np.array([fit.param(n).value for n in ("ar.L1", "ma.L1", "sigma2")]))
    frame = ref.get_forecast(8)
    np.testing.assert_allclose(fc.mean, frame.predicted_mean, rtol=1e-6)
    np.testing.assert_allclose(fc.se, np.sqrt(frame.var_pred_mean), rtol=1e-4)


def test_seasonal_differencing_polynomial_and_psi():
    np.testing.assert_array_equal(differencing_polynomial(1, 1, 4), [1, -1, 0, 0, -1, 1])
    # Random walk: psi_j = 1 for all j (common practice).
    psi = psi_weights(ModelSpec(d=1), {}, 5)
    np.testing.assert_allclose(psi, np.ones(5))


def test_log_back_transform_median_and_mean():
    y = np.exp(3 + 0.1 * np.cumsum(_sim(300, ma=(0.4,), seed=3)) / 10)
    series = Series(y)
    spec = ModelSpec(ma=(1,), d=1, transform=Transform("log"))
    fit = fit_exact(series, spec)
    median = forecast(series, fit, 4, "median")
    mean = forecast(series, fit, 4, "mean")
    np.testing.assert_allclose(median.point, np.exp(median.mean))
    # Lognormal mean exp(m + v/2) (exact for the log transform).
    np.testing.assert_allclose(mean.point, np.exp(mean.mean + mean.se**2 / 2))
    assert np.all(median.lower95 < median.point) and np.all(median.point < median.upper95)


def test_accuracy_hand_computed():
    # Tiny example worked by hand: errors (1, -2, 3) -> MAE 2, RMSE sqrt(14/3).
    rmse, mae, mase = accuracy(np.array([11.0, 8.0, 13.0]), np.array([10.0, 10.0, 10.0]), scale=4.0)
    assert mae == pytest.approx(2.0) and rmse == pytest.approx(np.sqrt(14 / 3)) and mase == pytest.approx(0.5)


def test_naive_scale_definition():
    # Hyndman & Koehler (2006): mean |y_t - y_{t-m}| over the training data.
    train = np.array([1.0, 3.0, 2.0, 5.0, 4.0, 8.0])
    assert naive_scale(train, 0) == pytest.approx(np.mean([2, 1, 3, 1, 4]))
    assert naive_scale(train, 2) == pytest.approx(np.mean([1, 2, 2, 3]))


def test_holdout_scores_and_coverage():
    y = _sim(600, ar=(0.6,), seed=4, mean=20.0)
    score = holdout(Series(y), ModelSpec(ar=(1,), constant="mean"), 50)
    assert score.ok and score.forecast.horizon == 50
    errors = y[-50:] - score.forecast.point
    assert score.rmse == pytest.approx(np.sqrt(np.mean(errors**2)))
    assert score.mase == pytest.approx(np.mean(np.abs(errors)) / naive_scale(y[:-50], 0))
    assert 0.0 <= score.coverage80 <= score.coverage95 <= 1.0


def test_holdout_failure_is_reported():
    y = _sim(40, seed=5)
    score = holdout(Series(y), ModelSpec(ar=tuple(range(1, 21)), ma=tuple(range(1, 21))), 5)
    assert not score.ok and score.failure


def test_forecast_check_combines_holdout_and_future():
    from lagwright.core.forecast import forecast_check

    y = _sim(300, ar=(0.5,), seed=6, mean=4.0)
    series = Series(y)
    spec = ModelSpec(ar=(1,), constant="mean")
    check = forecast_check(series, fit_exact(series, spec), 20, 10)
    assert not check.failure and check.future.horizon == 10
    assert check.holdout.rmse == pytest.approx(holdout(series, spec, 20).rmse)


def test_one_step_errors_equal_the_filter_innovations():
    # Reference: statsmodels' one-step forecast errors of the full series with
    # the parameters estimated without the holdout (no transform, no differencing).
    from statsmodels.tsa.arima.model import ARIMA

    from lagwright.core.forecast import one_step_errors

    y = _sim(400, ar=(0.6,), seed=7, mean=2.0)
    spec = ModelSpec(ar=(1,), constant="mean")
    errors = one_step_errors(Series(y), spec, 50)
    fit = fit_exact(Series(y[:-50]), spec)
    ref = ARIMA(y, order=(1, 0, 0), trend="c").filter(
        np.array([fit.param(n).value for n in ("const", "ar.L1", "sigma2")]))
    np.testing.assert_allclose(errors, ref.filter_results.forecasts_error[0][-50:], rtol=1e-8, atol=1e-10)


def test_compare_forecasts_prefers_the_true_model():
    from lagwright.core.forecast import compare_forecasts

    y = _sim(600, ar=(0.8,), seed=8, mean=0.0)
    result = compare_forecasts(Series(y), ModelSpec(ar=(1,)), ModelSpec(), 100)
    assert result.rmse_a < result.rmse_b and result.test.mean_differential < 0 and result.test.p < 0.05
