"""Tests of lagwright.core.correlation: FFT ACF, Levinson-Durbin PACF, correlogram.

References used below:
- statsmodels.tsa.stattools.acf / pacf (reference library);
- statsmodels.tsa.arima_process.ArmaProcess (theoretical ACF/PACF);
- Box, Jenkins, Reinsel & Ljung (2015), *Time Series Analysis*, ch. 3:
  the PACF of an AR(p) process is zero beyond lag p and equals phi_p at lag p.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from scipy.signal import lfilter
from statsmodels.tsa.arima_process import ArmaProcess
from statsmodels.tsa.stattools import acf as sm_acf
from statsmodels.tsa.stattools import pacf as sm_pacf

from lagwright.core.correlation import (
    Correlogram,
    acf,
    correlogram,
    default_nlags,
    pacf_from_acf,
)
from lagwright.core.errors import InputError, LagwrightError


def ar2_series(n: int, rng_state: int = 7) -> np.ndarray:
    """AR(2) with phi = (0.6, -0.3) plus a mean of 5 (fixed random state)."""
    rng = np.random.default_rng(rng_state)
    return 5.0 + lfilter([1.0], [1.0, -0.6, 0.3], rng.standard_normal(n))


@pytest.fixture(scope="module")
def ar2() -> np.ndarray:
    return ar2_series(300)


@pytest.fixture(scope="module")
def long_series() -> np.ndarray:
    return ar2_series(100_000, rng_state=11)


class TestAcf:
    def test_matches_statsmodels_fft(self, ar2):
        # Reference: statsmodels.tsa.stattools.acf(x, nlags, fft=True).
        np.testing.assert_allclose(acf(ar2, 40), sm_acf(ar2, nlags=40, fft=True), rtol=0, atol=1e-10)

    def test_matches_direct_sums(self, ar2):
        # Reference: statsmodels acf with fft=False (the divisor-n direct sums).
        np.testing.assert_allclose(acf(ar2, 40), sm_acf(ar2, nlags=40, fft=False), rtol=0, atol=1e-10)

    @pytest.mark.parametrize("n", [3, 4, 17, 97, 128, 1009])
    def test_matches_statsmodels_for_awkward_lengths(self, n):
        # Reference: statsmodels acf (fft=False), for prime and power-of-two lengths.
        x = ar2_series(n, rng_state=n)
        nlags = n - 1
        np.testing.assert_allclose(acf(x, nlags), sm_acf(x, nlags=nlags, fft=False), rtol=0, atol=1e-10)

    def test_matches_statsmodels_at_n_100000(self, long_series):
        # Reference: statsmodels acf(fft=True) at n = 100,000.
        np.testing.assert_allclose(
            acf(long_series, 40), sm_acf(long_series, nlags=40, fft=True), rtol=0, atol=1e-10
        )

    def test_lag_zero_is_one(self, ar2):
        r = acf(ar2, 0)
        assert r.shape == (1,) and r[0] == 1.0

    def test_nan_values_are_skipped(self, ar2):
        # Reference: statsmodels acf(missing="drop") drops missing values the same way.
        x = ar2.copy()
        x[[0, 10, 150, 299]] = np.nan
        expected = sm_acf(x, nlags=20, fft=True, missing="drop")
        np.testing.assert_allclose(acf(x, 20), expected, rtol=0, atol=1e-10)


class TestPacf:
    def test_ldb_is_the_matching_statsmodels_method(self, ar2):
        # Reference: statsmodels pacf(method="ldb") = Levinson-Durbin on the
        # divisor-n autocovariances; its aliases "ldbiased"/"ld_biased" and the
        # Yule-Walker "mle" method ("ywm") give the same numbers.
        ours = pacf_from_acf(acf(ar2, 40))
        for method in ("ldb", "ldbiased", "ywm"):
            np.testing.assert_allclose(ours, sm_pacf(ar2, nlags=40, method=method), rtol=0, atol=1e-10)

    def test_matches_statsmodels_at_n_100000(self, long_series):
        # Reference: statsmodels pacf(method="ldb") at n = 100,000 (about 1 s there).
        np.testing.assert_allclose(
            pacf_from_acf(acf(long_series, 40)),
            sm_pacf(long_series, nlags=40, method="ldb"),
            rtol=0,
            atol=1e-10,
        )

    def test_theoretical_ar2(self):
        # Reference: statsmodels ArmaProcess theoretical ACF and PACF; and
        # Box, Jenkins, Reinsel & Ljung (2015), ch. 3: for AR(2) phi_22 = phi_2
        # and the PACF is zero beyond lag 2.
        process = ArmaProcess(ar=[1.0, -0.6, 0.3], ma=[1.0])
        r = process.acf(lags=16)
        ours = pacf_from_acf(r)
        np.testing.assert_allclose(ours, process.pacf(lags=16), rtol=0, atol=1e-10)
        assert ours[2] == pytest.approx(-0.3, abs=1e-12)
        np.testing.assert_allclose(ours[3:], 0.0, atol=1e-12)

    def test_theoretical_ar1(self):
        # Reference: Box, Jenkins, Reinsel & Ljung (2015), ch. 3: an AR(1) with
        # r_k = phi^k has PACF phi at lag 1 and zero afterwards.
        phi = 0.8
        ours = pacf_from_acf(phi ** np.arange(11))
        assert ours[0] == 1.0
        assert ours[1] == pytest.approx(phi, abs=1e-14)
        np.testing.assert_allclose(ours[2:], 0.0, atol=1e-12)

    def test_perfectly_predictable_gives_nan_not_error(self):
        # r_k = 1 for all k (a constant process): the prediction error is zero
        # after lag 1, so later values are undefined rather than a division error.
        out = pacf_from_acf(np.ones(5))
        assert out[1] == 1.0
        assert np.isnan(out[2:]).all()


class TestCorrelogram:
    def test_values_and_band(self, ar2):
        # Reference: statsmodels acf/pacf; band 2/sqrt(n) is common practice.
        c = correlogram(ar2, nlags=30)
        assert isinstance(c, Correlogram)
        assert c.n == 300 and c.nlags == 30
        np.testing.assert_array_equal(c.lags, np.arange(1, 31))
        np.testing.assert_allclose(c.acf, sm_acf(ar2, nlags=30, fft=True)[1:], atol=1e-10)
        np.testing.assert_allclose(c.pacf, sm_pacf(ar2, nlags=30, method="ldb")[1:], atol=1e-10)
        assert c.band == pytest.approx(2.0 / math.sqrt(300))

    def test_is_read_only(self, ar2):
        c = correlogram(ar2, nlags=5)
        for array in (c.lags, c.acf, c.pacf):
            with pytest.raises(ValueError):
                array[0] = 0
        with pytest.raises(dataclasses.FrozenInstanceError):
            c.n = 3  # type: ignore[misc]

    def test_nan_values_are_skipped(self, ar2):
        x = ar2.copy()
        x[[3, 4, 200]] = np.nan
        a = correlogram(x, nlags=12)
        b = correlogram(ar2[~np.isnan(x)], nlags=12)
        assert a.n == 297
        np.testing.assert_array_equal(a.acf, b.acf)
        np.testing.assert_array_equal(a.pacf, b.pacf)

    def test_default_lags_use_the_documented_rule(self, ar2):
        # Project rule (docstring of default_nlags): max(24, ceil(10 log10 n)),
        # at least two seasons, limited to n // 4 (Box et al. 2015, ch. 2,
        # "not larger than N/4", from memory).
        assert correlogram(ar2).nlags == default_nlags(300) == 25  # ceil(24.77)
        assert correlogram(ar2, season=52).nlags == 104

    @pytest.mark.parametrize(
        ("n", "season", "expected"),
        [
            (3, 0, 1),
            (40, 0, 10),
            (100, 0, 24),
            (1000, 0, 30),
            (100_000, 0, 50),
            (48, 12, 23),
            (200, 12, 24),
            (200, 52, 99),
            (1000, 52, 104),
        ],
    )
    def test_default_nlags_table(self, n, season, expected):
        assert default_nlags(n, season) == expected


class TestBadInput:
    def test_too_few_values(self):
        with pytest.raises(InputError, match="only 2 usable"):
            acf([1.0, 2.0], 1)

    def test_too_few_after_dropping_nan(self):
        with pytest.raises(InputError, match="only 2 usable"):
            correlogram([1.0, np.nan, 2.0, np.nan])

    def test_constant(self):
        with pytest.raises(InputError, match="equal"):
            correlogram(np.full(50, 3.5))

    def test_infinite(self):
        x = np.arange(20.0)
        x[4] = np.inf
        with pytest.raises(InputError, match="infinite"):
            acf(x, 3)

    def test_too_many_lags(self, ar2):
        with pytest.raises(InputError, match="at most 299"):
            acf(ar2, 300)

    def test_negative_or_fractional_lags(self, ar2):
        for bad in (-1, 2.5, "x"):
            with pytest.raises(InputError):
                acf(ar2, bad)

    def test_table_input(self):
        with pytest.raises(InputError, match="one column"):
            acf(np.ones((4, 4)), 1)

    def test_errors_are_lagwright_errors(self):
        with pytest.raises(LagwrightError):
            correlogram([1.0])
