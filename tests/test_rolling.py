"""Rolling-origin evaluation with re-estimation at every origin.

References: a plain loop of statsmodels ARIMA fits and forecasts (a
general-purpose reference library) for the errors; the definitions of
RMSE, MAE and MASE (Hyndman & Koehler, 2006) written out for the summaries.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy import signal

from lagwright.core.errors import InputError
from lagwright.core.forecast import holdout, naive_scale
from lagwright.core.rolling import origin_positions, rolling_origin
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


@pytest.fixture(scope="module")
def ar1():
    # Invented: an AR(1) around 40, seeded.
    e = np.random.default_rng(21).standard_normal(160)
    return Series(signal.lfilter([1.0], [1.0, -0.7], e) + 40.0, name="invented AR(1) gauge")


def test_origins_step_back_from_the_end():
    assert origin_positions(100, 3, 4, 5) == (86, 91, 96)
    assert origin_positions(100, 1, 1, 1) == (99,)


def test_errors_equal_a_plain_loop_of_statsmodels_refits(ar1):
    from statsmodels.tsa.arima.model import ARIMA

    spec = ModelSpec(ar=(1,), constant="mean")
    score = rolling_origin(ar1, spec, origins=5, horizon=3, step=4)
    assert score.n_ok == 5 and score.errors.shape == (5, 3)
    y = ar1.values
    for k, t in enumerate(score.origins):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ref = ARIMA(y[:t], order=(1, 0, 0), trend="c").fit()
        expected = y[t:t + 3] - ref.forecast(3)
        np.testing.assert_allclose(score.errors[k], expected, atol=2e-3)


def test_summaries_follow_their_definitions(ar1):
    spec = ModelSpec(ar=(1,), constant="mean")
    score = rolling_origin(ar1, spec, origins=6, horizon=2, step=3)
    e = score.errors
    assert score.rmse == pytest.approx(float(np.sqrt(np.mean(e**2))), rel=1e-12)
    assert score.mae == pytest.approx(float(np.mean(np.abs(e))), rel=1e-12)
    np.testing.assert_allclose(score.rmse_by_horizon(), np.sqrt(np.mean(e**2, axis=0)), rtol=1e-12)
    # MASE: each origin's errors over the naive MAE of its own training data (Hyndman & Koehler, 2006)
    scales = np.array([naive_scale(ar1.values[:t], 0) for t in score.origins])
    assert score.mase == pytest.approx(float(np.mean(np.abs(e) / scales[:, None])), rel=1e-12)
    assert 0.0 <= score.coverage80 <= score.coverage95 <= 1.0


def test_one_origin_is_the_holdout(ar1):
    spec = ModelSpec(ar=(1,), constant="mean")
    score = rolling_origin(ar1, spec, origins=1, horizon=8)
    single = holdout(ar1, spec, 8)
    np.testing.assert_allclose(score.errors[0], single.errors, rtol=1e-12)
    assert score.coverage95 == pytest.approx(single.coverage95)


def test_too_many_origins_say_what_to_change(ar1):
    with pytest.raises(InputError, match="use fewer origins"):
        rolling_origin(ar1, ModelSpec(constant="mean"), origins=100, horizon=2, step=2)
    with pytest.raises(InputError, match="at least 1"):
        rolling_origin(ar1, ModelSpec(constant="mean"), origins=0)
