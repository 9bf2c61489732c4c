"""Tests of lagwright.core.diagnostics, each against a source outside the project.

Sources named beside the checks:
- Ljung, G. M. & Box, G. E. P. (1978), Biometrika 65(2):297-303 (the Q formula);
- McLeod, A. I. & Li, W. K. (1983), J. Time Series Analysis 4(4):269-273;
- Engle, R. F. (1982), Econometrica 50(4):987-1007 (LM = T R²);
- Wald, A. & Wolfowitz, J. (1940), Ann. Math. Statist. 11(2):147-162 (runs);
- Box, Jenkins, Reinsel & Ljung (2015), Time Series Analysis, 5th ed., ch. 8
  (cumulative periodogram check; q and K values from memory);
- reference libraries: statsmodels (acorr_ljungbox, het_arch, runstest_1samp,
  jarque_bera) and scipy (stats, signal.periodogram);
- standard statistical tables (values from memory, as marked).
"""

from __future__ import annotations

import dataclasses
import math
import time

import numpy as np
import pytest
from scipy import signal, stats
from scipy.signal import lfilter
from statsmodels.sandbox.stats.runs import runstest_1samp
from statsmodels.stats.diagnostic import acorr_ljungbox, het_arch
from statsmodels.stats.stattools import jarque_bera as sm_jarque_bera

from lagwright.core.diagnostics import (
    KS_COEFFICIENTS,
    Diagnostics,
    LjungBoxRow,
    arch_lm,
    combine_white_noise_checks,
    cumulative_periodogram,
    default_arch_lags,
    default_ljung_box_lags,
    diagnose,
    find_outliers,
    ljung_box,
    main_ljung_box_row,
    mcleod_li,
    normality,
    runs_test,
    sign_change_test,
)
from lagwright.core.errors import InputError, LagwrightError, SpecError


# ------------------------------------------------------------------ data
def white(n: int, state: int = 1) -> np.ndarray:
    return np.random.default_rng(state).standard_normal(n)


def ar1(n: int, phi: float = 0.8, state: int = 2) -> np.ndarray:
    return lfilter([1.0], [1.0, -phi], white(n, state))


def arch1(n: int, state: int = 3) -> np.ndarray:
    """e_t = sqrt(0.2 + 0.7 e_{t-1}²) z_t (Engle 1982, ARCH(1))."""
    z = white(n + 100, state)
    e = np.zeros_like(z)
    for t in range(1, z.size):
        e[t] = math.sqrt(0.2 + 0.7 * e[t - 1] ** 2) * z[t]
    return e[100:]


@pytest.fixture(scope="module")
def wn() -> np.ndarray:
    return white(500)


# -------------------------------------------------------- handbook values
class TestHandbookQuantiles:
    """scipy's quantile functions against standard table values (from memory)."""

    def test_chi2(self):
        # Standard table value, from memory: chi²(10) upper 5 % point 18.307.
        assert stats.chi2.ppf(0.95, 10) == pytest.approx(18.307, abs=5e-4)

    def test_f(self):
        # Standard table value, from memory: F(3, 60) upper 5 % point 2.76.
        assert stats.f.ppf(0.95, 3, 60) == pytest.approx(2.76, abs=5e-3)

    def test_normal(self):
        # Standard table value, from memory: z_0.975 = 1.960.
        assert stats.norm.ppf(0.975) == pytest.approx(1.960, abs=5e-4)

    def test_ks_coefficients(self):
        # Standard Kolmogorov-Smirnov tables (asymptotic, from memory):
        # 1.22, 1.36, 1.63 at 10 %, 5 %, 1 %; scipy's limiting distribution.
        for alpha, k in KS_COEFFICIENTS.items():
            assert round(stats.kstwobign.ppf(1.0 - alpha), 2) == k

    def test_two_sided_normal_tail_at_3(self):
        # Standard normal table, from memory: P(|Z| > 3) = 0.0027.
        assert 2 * stats.norm.sf(3.0) == pytest.approx(0.0027, abs=5e-5)


# --------------------------------------------------------------- Ljung-Box
def ljung_box_by_hand(x: np.ndarray, m: int) -> float:
    """Q(m) = n(n+2) sum_{k=1}^m r_k²/(n-k), written out (Ljung & Box 1978, eq. 2.2)."""
    n = x.size
    a = x - x.mean()
    c0 = sum(v * v for v in a)
    total = 0.0
    for k in range(1, m + 1):
        rk = sum(a[t] * a[t + k] for t in range(n - k)) / c0
        total += rk * rk / (n - k)
    return n * (n + 2) * total


class TestLjungBox:
    def test_formula_written_out(self):
        # Reference: Ljung & Box (1978), Biometrika 65(2):297-303, Q(m) as above;
        # df = m - (p + q), chi-squared p-value from scipy.
        x = ar1(120, phi=0.3)
        rows = ljung_box(x, [6, 12], n_arma=2)
        for row, m in zip(rows, (6, 12)):
            q = ljung_box_by_hand(x, m)
            assert row.lag == m
            assert row.stat == pytest.approx(q, rel=1e-12)
            assert row.df == m - 2
            assert row.p == pytest.approx(stats.chi2.sf(q, m - 2), rel=1e-10)

    def test_against_statsmodels(self, wn):
        # Reference: statsmodels.stats.diagnostic.acorr_ljungbox(model_df=n_arma).
        lags = [6, 12, 24]
        ref = acorr_ljungbox(wn, lags=lags, model_df=3)
        rows = ljung_box(wn, lags, n_arma=3)
        np.testing.assert_allclose([r.stat for r in rows], ref["lb_stat"], rtol=1e-10)
        np.testing.assert_allclose([r.p for r in rows], ref["lb_pvalue"], rtol=1e-9)
        assert [r.df for r in rows] == [3, 9, 21]

    def test_against_statsmodels_long_series(self):
        # Reference: acorr_ljungbox at n = 5,000 (ours by one FFT; the reference
        # grows with n², seconds at 100,000, so a shorter series is used here).
        x = ar1(5_000, phi=0.05, state=9)
        ref = acorr_ljungbox(x, lags=[12, 40], model_df=1)
        rows = ljung_box(x, [12, 40], n_arma=1)
        np.testing.assert_allclose([r.stat for r in rows], ref["lb_stat"], rtol=1e-10)
        np.testing.assert_allclose([r.p for r in rows], ref["lb_pvalue"], rtol=1e-8, atol=1e-300)

    def test_single_lag_and_order(self, wn):
        rows = ljung_box(wn, 12, 0)
        assert len(rows) == 1 and isinstance(rows[0], LjungBoxRow) and rows[0].df == 12
        assert [r.lag for r in ljung_box(wn, [24, 6, 12], 0)] == [6, 12, 24]

    def test_autocorrelated_rejects(self):
        # AR(1) with phi = 0.8 is far from white noise (common practice).
        assert ljung_box(ar1(300), 12, 0)[0].p < 1e-10

    def test_lag_not_above_n_arma(self, wn):
        with pytest.raises(SpecError, match="larger than 6"):
            ljung_box(wn, [6, 12], n_arma=6)

    def test_lag_not_below_n(self):
        with pytest.raises(InputError, match="only 20"):
            ljung_box(white(20), [24], n_arma=0)

    def test_bad_arguments(self, wn):
        for bad in ([0], [2.5], [], ["a"]):
            with pytest.raises(SpecError):
                ljung_box(wn, bad, 0)
        with pytest.raises(SpecError):
            ljung_box(wn, [6], -1)


class TestDefaultLjungBoxLags:
    # Project rule stated in default_ljung_box_lags (6, 12, 24, 2s; common practice).
    @pytest.mark.parametrize(
        ("n", "season", "n_arma", "expected"),
        [
            (200, 0, 0, (6, 12, 24)),
            (200, 12, 2, (6, 12, 24)),
            (200, 4, 0, (6, 8, 12, 24)),
            (500, 52, 1, (6, 12, 24, 104)),
            (200, 52, 1, (6, 12, 24)),  # 104 >= n/2 dropped
            (40, 12, 3, (6, 12)),
            (200, 0, 8, (12, 24)),
            (20, 0, 7, (9,)),  # fallback min(n_arma + 6, ceil(n/2) - 1)
            (10, 0, 5, ()),  # too short to check a model this big
            (8, 0, 0, (3,)),
        ],
    )
    def test_rule(self, n, season, n_arma, expected):
        assert default_ljung_box_lags(n, season, n_arma) == expected


# --------------------------------------------------------------- McLeod-Li
class TestMcLeodLi:
    def test_against_statsmodels_on_squares(self, wn):
        # Reference: McLeod & Li (1983): Ljung-Box of the autocorrelations of
        # a_t² about their mean, df = m; statsmodels acorr_ljungbox(x**2, model_df=0).
        x = wn * 2.0 + 0.3
        ref = acorr_ljungbox(x**2, lags=[6, 12, 24], model_df=0)
        rows = mcleod_li(x, [6, 12, 24])
        np.testing.assert_allclose([r.stat for r in rows], ref["lb_stat"], rtol=1e-10)
        np.testing.assert_allclose([r.p for r in rows], ref["lb_pvalue"], rtol=1e-9)
        assert [r.df for r in rows] == [6, 12, 24]

    def test_detects_arch(self):
        # ARCH(1) squares are autocorrelated (McLeod & Li 1983; Engle 1982).
        assert mcleod_li(arch1(1000), 12)[0].p < 1e-6


# -------------------------------------------------------------------- ARCH
class TestArchLM:
    @pytest.mark.parametrize("nlags", [1, 4, 12])
    def test_against_statsmodels_het_arch(self, wn, nlags):
        # Reference: statsmodels het_arch(resid, nlags, ddof=0): LM = (n - nlags) R²
        # from the regression of e² on a constant and nlags lags (Engle 1982).
        ref = het_arch(wn, nlags=nlags, ddof=0, result_object=True)
        ours = arch_lm(wn, nlags)
        assert ours.lm == pytest.approx(ref.lm, rel=1e-8)
        assert ours.p == pytest.approx(ref.lmpval, rel=1e-8)
        assert ours.f_stat == pytest.approx(ref.fval, rel=1e-8)
        assert ours.f_p == pytest.approx(ref.fpval, rel=1e-8)
        assert ours.df == nlags and ours.n_used == wn.size - nlags
        assert ours.f_df == (nlags, wn.size - 2 * nlags - 1)

    def test_lm_is_n_r_squared(self):
        # Reference: Engle (1982), LM = T R²; R² from numpy least squares here.
        x = arch1(400)
        e2 = x**2
        y = e2[2:]
        design = np.column_stack([np.ones(y.size), e2[1:-1], e2[:-2]])
        fitted = design @ np.linalg.lstsq(design, y, rcond=None)[0]
        r2 = 1 - np.sum((y - fitted) ** 2) / np.sum((y - y.mean()) ** 2)
        ours = arch_lm(x, 2)
        assert ours.r_squared == pytest.approx(r2, rel=1e-9)
        assert ours.lm == pytest.approx(y.size * r2, rel=1e-9)

    def test_detects_arch(self):
        assert arch_lm(arch1(1000), 4).p < 1e-6

    def test_too_many_lags(self):
        with pytest.raises(InputError, match="fewer lags"):
            arch_lm(white(10), 5)

    def test_default_lags(self):
        # Project rule min(12, max(1, n // 5)) (common practice).
        assert [default_arch_lags(n) for n in (8, 30, 60, 1000)] == [1, 6, 12, 12]


# ------------------------------------------------------------ sign change
class TestSignChange:
    def test_interval_for_99_possible_changes(self):
        # Common practice: with 100 residuals (99 possible changes) between
        # about 40 and 59 sign changes are expected under independence.
        x = white(100)
        result = sign_change_test(x)
        assert result.possible == 99
        assert result.interval95 == (40, 59)
        assert result.expected == 49.5 and result.variance == 24.75

    def test_interval_agrees_with_normal_approximation(self):
        # Normal approximation (n-1)/2 ± 1.96 sqrt(n-1)/2 (common practice).
        lo, hi = sign_change_test(white(100)).interval95
        assert abs(lo - (49.5 - 1.96 * math.sqrt(99) / 2)) < 1
        assert abs(hi - (49.5 + 1.96 * math.sqrt(99) / 2)) < 1

    def test_hand_count_and_zero_dropped(self):
        # Worked by hand: after dropping the zero the signs are + - + + - - + + -,
        # 5 changes out of 8 possible.
        result = sign_change_test([1, -2, 3, 0, 4, -1, -1, 2, 5, -3])
        assert (result.n, result.changes, result.possible) == (9, 5, 8)

    def test_p_values_against_binomial(self, wn):
        # Reference: exact two-sided binomial p for p = 1/2 from scipy.stats.binom
        # (2·smaller tail, capped at 1), and the normal approximation by hand.
        result = sign_change_test(wn)
        c, m = result.changes, result.possible
        exact = min(1.0, 2 * min(stats.binom.cdf(c, m, 0.5), stats.binom.sf(c - 1, m, 0.5)))
        assert result.p_exact == pytest.approx(exact, rel=1e-9)
        z = (c - m / 2) / math.sqrt(m / 4)
        assert result.z == pytest.approx(z)
        assert result.p_normal == pytest.approx(2 * stats.norm.sf(abs(z)))

    def test_verdicts(self):
        assert sign_change_test(ar1(300)).verdict == "too few changes"
        assert sign_change_test(ar1(300, phi=-0.8)).verdict == "too many changes"
        # A white-noise draw whose exact p is 0.56 (random state 3; some other
        # states give one of the 5 % of draws that reject).
        assert sign_change_test(white(300, state=3)).verdict == "as expected"

    def test_too_few_nonzero(self):
        with pytest.raises(InputError, match="not exactly zero"):
            sign_change_test([0, 0, 0, 1, -1, 2, -2, 0, 0, 3, 0, 1])


# --------------------------------------------------------------------- runs
class TestRuns:
    def test_hand_example(self):
        # Worked by hand: median 5.5, pattern B B A A B A B A B A = 8 runs,
        # n1 = n2 = 5; Wald & Wolfowitz (1940): E R = 2 n1 n2/N + 1 = 6,
        # Var R = 2 n1 n2 (2 n1 n2 - N) / (N² (N - 1)) = 2000/900.
        result = runs_test([1, 2, 9, 10, 3, 8, 4, 7, 5, 6])
        assert (result.runs, result.n_above, result.n_below) == (8, 5, 5)
        assert result.expected == pytest.approx(6.0)
        assert result.variance == pytest.approx(2000 / 900)
        assert result.z == pytest.approx(2 / math.sqrt(2000 / 900))
        assert result.p == pytest.approx(2 * stats.norm.sf(result.z))

    def test_formula(self, wn):
        # Reference: Wald & Wolfowitz (1940), mean and variance written out here.
        result = runs_test(wn)
        n1, n2 = result.n_above, result.n_below
        n = n1 + n2
        mean = 2 * n1 * n2 / n + 1
        var = 2 * n1 * n2 * (2 * n1 * n2 - n1 - n2) / (n**2 * (n - 1))
        assert result.expected == pytest.approx(mean)
        assert result.variance == pytest.approx(var)

    def test_against_statsmodels(self, wn):
        # Reference: statsmodels runstest_1samp(cutoff="median", correction=False);
        # identical when no value equals the median (even n, continuous data).
        z, p = runstest_1samp(wn, cutoff="median", correction=False)
        result = runs_test(wn)
        assert result.z == pytest.approx(z, rel=1e-12)
        assert result.p == pytest.approx(p, rel=1e-12)

    def test_median_value_dropped(self):
        result = runs_test(white(101))
        assert result.n_above + result.n_below == 100


# --------------------------------------------------- cumulative periodogram
class TestCumulativePeriodogram:
    def test_white_noise_not_rejected(self):
        result = cumulative_periodogram(white(400, state=4))
        assert not result.reject[0.05]
        assert result.verdict == "inside the 5 % band"

    def test_ar1_rejected(self):
        # AR(1) phi = 0.8 has its power at low frequencies (Box et al. 2015, ch. 8).
        result = cumulative_periodogram(ar1(400))
        assert result.reject[0.01] and result.reject[0.05] and result.reject[0.10]
        assert result.verdict == "outside the 5 % band"

    def test_shape_end_and_monotone(self, wn):
        result = cumulative_periodogram(wn)
        assert result.cumulative[-1] == 1.0
        assert np.all(np.diff(result.cumulative) >= 0)
        np.testing.assert_allclose(result.reference, np.arange(1, result.q + 1) / result.q)

    @pytest.mark.parametrize(("n", "q"), [(100, 49), (101, 50)])
    def test_number_of_frequencies(self, n, q):
        # Box et al. (2015), ch. 8, from memory: q = (n-2)/2 for even n, (n-1)/2 for odd n.
        result = cumulative_periodogram(white(n))
        assert result.q == q
        np.testing.assert_allclose(result.frequencies, np.arange(1, q + 1) / n)
        for alpha, k in KS_COEFFICIENTS.items():
            assert result.band[alpha] == pytest.approx(k / math.sqrt(q))

    def test_ordinates_against_scipy_periodogram(self, wn):
        # Reference: scipy.signal.periodogram (boxcar, one-sided density, fs = 1),
        # which equals (2/n)|DFT|² at 0 < f < 1/2.
        f, pxx = signal.periodogram(wn, fs=1.0, window="boxcar", detrend="constant", scaling="density")
        result = cumulative_periodogram(wn)
        np.testing.assert_allclose(result.frequencies, f[1 : result.q + 1], rtol=1e-12)
        np.testing.assert_allclose(result.ordinates, pxx[1 : result.q + 1], rtol=1e-10)

    def test_ordinates_against_direct_sum(self):
        # Reference: I(f_j) = (2/n)|sum_t a_t exp(-2 pi i f_j t)|² written out
        # (Box et al. 2015, ch. 8).
        a = white(15, state=8)
        n = a.size
        t = np.arange(1, n + 1)
        result = cumulative_periodogram(a)
        for j, value in enumerate(result.ordinates, start=1):
            c = np.sum(a * np.cos(2 * np.pi * j * t / n))
            s = np.sum(a * np.sin(2 * np.pi * j * t / n))
            assert value == pytest.approx(2.0 / n * (c * c + s * s), rel=1e-10)

    def test_max_deviation(self, wn):
        result = cumulative_periodogram(wn)
        dev = np.abs(result.cumulative - result.reference)
        assert result.max_deviation == pytest.approx(dev.max())
        assert result.max_deviation_frequency == result.frequencies[np.argmax(dev)]

    def test_exactly_alternating_series(self):
        with pytest.raises(InputError, match="alternate"):
            cumulative_periodogram(np.tile([1.0, -1.0], 10))


# ---------------------------------------------------------------- normality
class TestNormality:
    def test_against_scipy_and_statsmodels(self, wn):
        # References: scipy.stats.jarque_bera, skew, kurtosis, shapiro;
        # statsmodels.stats.stattools.jarque_bera (kurtosis reported non-excess).
        result = normality(wn)
        jb = stats.jarque_bera(wn)
        assert result.jb_stat == pytest.approx(jb.statistic, rel=1e-10)
        assert result.jb_p == pytest.approx(jb.pvalue, rel=1e-10)
        sm_jb, sm_p, sm_skew, sm_kurt = sm_jarque_bera(wn)
        assert result.jb_stat == pytest.approx(sm_jb, rel=1e-10)
        assert result.skewness == pytest.approx(sm_skew, rel=1e-10)
        assert result.excess_kurtosis == pytest.approx(sm_kurt - 3.0, rel=1e-10)
        sw = stats.shapiro(wn)
        assert result.test == "Shapiro-Wilk"
        assert (result.test_stat, result.test_p) == pytest.approx((sw.statistic, sw.pvalue))

    def test_jb_formula(self, wn):
        # Reference: Jarque & Bera (1987): JB = n (g1²/6 + g2²/24).
        result = normality(wn)
        n = wn.size
        expected = n * (result.skewness**2 / 6 + result.excess_kurtosis**2 / 24)
        assert result.jb_stat == pytest.approx(expected, rel=1e-10)

    def test_large_n_uses_dagostino_pearson(self):
        # Reference: scipy.stats.normaltest (D'Agostino & Pearson 1973).
        x = white(6000)
        result = normality(x)
        k2 = stats.normaltest(x)
        assert result.test == "D'Agostino-Pearson K²"
        assert (result.test_stat, result.test_p) == pytest.approx((k2.statistic, k2.pvalue))

    def test_heavy_tails_detected(self):
        x = np.random.default_rng(5).standard_t(3, size=1000)
        assert normality(x).jb_p < 1e-6


# ----------------------------------------------------------------- outliers
class TestOutliers:
    def test_positions_index_the_given_array(self):
        z = white(200, state=6) * 0.5
        z[[5, 77]] = [4.0, -3.5]
        z[[10, 11]] = np.nan
        result = find_outliers(z)
        np.testing.assert_array_equal(result.positions, [5, 77])
        np.testing.assert_array_equal(result.values, [4.0, -3.5])
        assert result.n_checked == 198 and result.count == 2
        # Standard normal table (from memory): P(|Z| > 3) = 0.0027.
        assert result.expected == pytest.approx(198 * 0.0027, rel=2e-2)

    def test_threshold(self):
        result = find_outliers([0.0, 2.5, -2.1, 1.9], threshold=2.0)
        np.testing.assert_array_equal(result.positions, [1, 2])
        with pytest.raises(SpecError):
            find_outliers([1.0], threshold=0)

    def test_read_only(self):
        result = find_outliers([0.0, 5.0])
        with pytest.raises(ValueError):
            result.positions[0] = 1


# ---------------------------------------------------------------- verdict
class TestVerdictRule:
    # Project rule stated in combine_white_noise_checks.
    @pytest.mark.parametrize(
        ("lb_p", "sign_p", "cp5", "cp1", "label"),
        [
            (0.5, 0.5, False, False, "white"),
            (None, 0.5, False, False, "white"),
            (0.02, 0.5, False, False, "doubtful"),
            (0.5, 0.03, False, False, "doubtful"),
            (0.5, 0.5, True, False, "doubtful"),
            (0.02, 0.03, False, False, "not white"),
            (0.0001, 0.5, False, False, "not white"),
            (0.5, 0.0005, False, False, "not white"),
            (0.5, 0.5, True, True, "not white"),
        ],
    )
    def test_table(self, lb_p, sign_p, cp5, cp1, label):
        assert combine_white_noise_checks(lb_p, sign_p, cp5, cp1).label == label

    def test_main_row(self):
        rows = tuple(LjungBoxRow(m, 1.0, m, 0.5) for m in (6, 8, 12, 24))
        assert main_ljung_box_row(rows, 0).lag == 12
        assert main_ljung_box_row(rows, 4).lag == 12
        assert main_ljung_box_row(rows, 12).lag == 24
        assert main_ljung_box_row(rows[3:], 0).lag == 24
        assert main_ljung_box_row((), 0) is None


# ------------------------------------------------------------------ bundle
class TestDiagnose:
    def test_white_noise_bundle(self):
        x = white(300, state=12)
        d = diagnose(x, x / x.std(), n_arma=2, season=12)
        assert isinstance(d, Diagnostics)
        assert d.n_used == 300
        assert [r.lag for r in d.ljung_box] == [6, 12, 24]
        assert [r.df for r in d.ljung_box] == [4, 10, 22]
        assert [r.df for r in d.mcleod_li] == [6, 12, 24]
        assert d.correlogram.nlags == 25
        assert d.arch.nlags == 12
        assert d.main_ljung_box.lag == 24
        assert d.white_noise_verdict.label == "white"
        assert str(d.white_noise_verdict) == "white"
        with pytest.raises(dataclasses.FrozenInstanceError):
            d.n_used = 1  # type: ignore[misc]

    def test_matches_the_single_checks(self):
        x = ar1(250, phi=0.2, state=13)
        d = diagnose(x, n_arma=1)
        assert d.ljung_box == ljung_box(x, [6, 12, 24], 1)
        assert d.mcleod_li == mcleod_li(x, [6, 12, 24])
        assert d.sign_change == sign_change_test(x)
        assert d.runs == runs_test(x)
        assert d.arch == arch_lm(x, 12)
        np.testing.assert_array_equal(d.cumulative_periodogram.cumulative, cumulative_periodogram(x).cumulative)

    def test_autocorrelated_is_not_white(self):
        x = ar1(300)
        d = diagnose(x, n_arma=0)
        verdict = d.white_noise_verdict
        assert verdict.label == "not white"
        assert set(verdict.failed) == {"Ljung-Box", "sign change", "cumulative periodogram"}

    def test_nan_positions_dropped_from_both(self):
        x = white(200, state=14)
        z = x / x.std()
        z[50] = 5.0
        z[60] = 6.0
        e = x.copy()
        e[[0, 1, 60]] = np.nan  # position 60 is dropped although z is large there
        z[100] = np.nan
        d = diagnose(e, z, n_arma=0)
        keep = np.ones(200, bool)
        keep[[0, 1, 60, 100]] = False
        assert d.n_used == 196
        assert d.ljung_box == ljung_box(x[keep], [6, 12, 24], 0)
        assert d.normality == normality(z[keep])
        np.testing.assert_array_equal(d.outliers.positions, [50])
        assert d.outliers.n_checked == 196

    def test_shortest_accepted_series(self):
        d = diagnose(white(8, state=15), n_arma=0)
        assert d.n_used == 8
        assert [r.lag for r in d.ljung_box] == [3]
        d = diagnose(white(8, state=15), n_arma=5)
        assert d.ljung_box == () and d.white_noise_verdict.ljung_box_lag is None

    def test_too_short(self):
        x = white(20)
        x[7:] = np.nan
        with pytest.raises(InputError, match="only 7 usable"):
            diagnose(x)

    def test_constant(self):
        with pytest.raises(InputError, match="equal"):
            diagnose(np.full(50, 0.25))
        with pytest.raises(InputError, match="equal"):
            diagnose(np.zeros(50))

    def test_infinite(self):
        x = white(50)
        x[3] = -np.inf
        with pytest.raises(InputError, match="infinite"):
            diagnose(x)

    def test_lengths_differ(self):
        with pytest.raises(InputError, match="same length"):
            diagnose(white(50), white(49))

    def test_bad_counts(self):
        with pytest.raises(SpecError):
            diagnose(white(50), n_arma=-1)
        with pytest.raises(LagwrightError):
            diagnose(white(50), season=2.5)

    def test_fast_at_n_100000(self):
        # Guard against a quadratic step: about 0.03-0.08 s measured here, and the
        # n² library routines take 1.7 s at this size. The bound is loose for busy machines.
        x = white(100_000, state=16)
        diagnose(x[:1000], n_arma=3, season=12)
        start = time.perf_counter()
        d = diagnose(x, x / x.std(), n_arma=3, season=12)
        elapsed = time.perf_counter() - start
        assert d.n_used == 100_000
        assert elapsed < 1.0
