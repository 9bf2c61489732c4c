"""Residual checks: is what the model leaves over white noise?

Each check is a function of a residual array that returns a small frozen
value; :func:`diagnose` runs them all and bundles the results in
:class:`Diagnostics`. Everything here costs O(n) or O(n log n) in the series
length (one FFT for the autocorrelations, one for the periodogram), so the
whole set runs in a few hundredths of a second at n = 100,000.

Missing residuals (NaN) are skipped: the finite values are taken in their
order as one series. Infinite values, fewer than :data:`MIN_RESIDUALS`
finite values, or constant residuals raise :class:`InputError`.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley, ch. 8
(diagnostic checking: residual autocorrelations, portmanteau test,
cumulative periodogram check).
Ljung, G. M. & Box, G. E. P. (1978). On a measure of lack of fit in time
series models. *Biometrika* 65(2), 297-303.
McLeod, A. I. & Li, W. K. (1983). Diagnostic checking ARMA time series
models using squared-residual autocorrelations. *Journal of Time Series
Analysis* 4(4), 269-273.
Engle, R. F. (1982). Autoregressive conditional heteroscedasticity with
estimates of the variance of United Kingdom inflation. *Econometrica*
50(4), 987-1007.
Wald, A. & Wolfowitz, J. (1940). On a test whether two samples are from the
same population. *Annals of Mathematical Statistics* 11(2), 147-162.
Jarque, C. M. & Bera, A. K. (1987). A test for normality of observations and
regression residuals. *International Statistical Review* 55(2), 163-172.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from .frozen import FrozenMap

import numpy as np
from scipy import fft as sp_fft
from scipy import stats

from .correlation import (
    Correlogram,
    acf_of_clean,
    correlogram_from_acf,
    default_nlags,
    finite_values,
)
from .errors import InputError, SpecError

#: Fewest finite residuals the checks accept.
MIN_RESIDUALS = 8

#: Significance level of the verdicts.
ALPHA = 0.05

#: Kolmogorov-Smirnov coefficients K_alpha for the cumulative periodogram
#: bands (asymptotic two-sided critical values of sqrt(q)·D; standard tables,
#: also printed in Box, Jenkins, Reinsel & Ljung, ch. 8; values from memory).
KS_COEFFICIENTS: Mapping[float, float] = FrozenMap({0.10: 1.22, 0.05: 1.36, 0.01: 1.63})

#: Largest number of values for which the Shapiro-Wilk test is used; above it
#: the D'Agostino-Pearson K² test is used (scipy's Shapiro-Wilk p-value is
#: documented as approximate beyond 5000).
SHAPIRO_MAX_N = 5000


# ------------------------------------------------------------------ helpers
def _read_only(a, dtype=float) -> np.ndarray:
    a = np.array(a, dtype=dtype, copy=True)
    a.setflags(write=False)
    return a


def _residuals(resid, what: str = "residuals") -> np.ndarray:
    return finite_values(resid, what=what, minimum=MIN_RESIDUALS)


def _lag_tuple(lags, what: str) -> tuple[int, ...]:
    if isinstance(lags, (int, np.integer)) and not isinstance(lags, bool):
        lags = (lags,)
    if not isinstance(lags, Iterable):
        raise SpecError(f"The {what} lags must be a whole number or a list of whole numbers.")
    out = []
    for lag in lags:
        try:
            m = int(lag)
        except (TypeError, ValueError):
            raise SpecError(f"The {what} lag '{lag}' is not a whole number.") from None
        if m != lag or m < 1 or isinstance(lag, bool):
            raise SpecError(f"The {what} lag '{lag}' must be a whole number of 1 or more.")
        out.append(m)
    if not out:
        raise SpecError(f"Give at least one lag for the {what} test.")
    return tuple(sorted(set(out)))


def _count(value, name: str) -> int:
    try:
        k = int(value)
    except (TypeError, ValueError):
        raise SpecError(f"'{name}' must be a whole number, not {value!r}.") from None
    if k != value or k < 0 or isinstance(value, bool):
        raise SpecError(f"'{name}' must be a whole number of 0 or more, not {value!r}.")
    return k


def _portmanteau(values: np.ndarray, lags: tuple[int, ...], reduction: int) -> tuple[LjungBoxRow, ...]:
    """Ljung-Box rows from one FFT ACF of the checked values."""
    return _portmanteau_from_acf(acf_of_clean(values, max(lags)), values.size, lags, reduction)


def _portmanteau_from_acf(
    r: np.ndarray, n: int, lags: tuple[int, ...], reduction: int
) -> tuple[LjungBoxRow, ...]:
    r = r[: max(lags) + 1]
    k = np.arange(1, r.size)
    q = n * (n + 2.0) * np.cumsum(r[1:] ** 2 / (n - k))
    rows = []
    for m in lags:
        df = m - reduction
        stat = float(q[m - 1])
        rows.append(LjungBoxRow(lag=m, stat=stat, df=df, p=float(stats.chi2.sf(stat, df))))
    return tuple(rows)


# --------------------------------------------------------------- Ljung-Box
@dataclass(frozen=True)
class LjungBoxRow:
    """One portmanteau statistic.

    Attributes
    ----------
    lag : int
        Number m of autocorrelations summed.
    stat : float
        Q(m).
    df : int
        Degrees of freedom of the reference chi-squared distribution.
    p : float
        Upper-tail probability of ``stat`` under chi²(df).
    """

    lag: int
    stat: float
    df: int
    p: float


def default_ljung_box_lags(n: int, season: int = 0, n_arma: int = 0) -> tuple[int, ...]:
    """Lags at which Lagwright reports the Ljung-Box statistic by default.

    Rule: start from 6, 12 and 24, and add ``2·season`` for a seasonal
    series (``season >= 2``). Keep a lag m only if it leaves degrees of
    freedom (``m > n_arma``) and is less than half the series (``m < n/2``;
    beyond that the statistic is dominated by poorly estimated
    autocorrelations and its chi-squared approximation fails). If no lag
    survives, use the single lag ``min(n_arma + 6, ceil(n/2) - 1)`` when
    that still exceeds ``n_arma``; otherwise return an empty tuple (the
    series is too short for the model to be checked this way).

    References
    ----------
    Lags 6/12/24 and two seasons are common practice; Ljung & Box (1978)
    study m up to about n/4 to n/2.
    """
    n = _count(n, "n")
    season = _count(season, "season")
    n_arma = _count(n_arma, "n_arma")
    candidates = {6, 12, 24}
    if season >= 2:
        candidates.add(2 * season)
    kept = tuple(sorted(m for m in candidates if n_arma < m and 2 * m < n))
    if kept:
        return kept
    fallback = min(n_arma + 6, math.ceil(n / 2) - 1)
    return (fallback,) if fallback > n_arma else ()


def ljung_box(resid, lags, n_arma: int) -> tuple[LjungBoxRow, ...]:
    """Ljung-Box portmanteau test of residual autocorrelation.

    .. math::

        Q(m) = n(n+2) \\sum_{k=1}^{m} \\frac{r_k^2}{n-k},

    with :math:`r_k` the lag-k sample autocorrelation of the residuals
    (mean removed, divisor n). Degrees of freedom: **df = m - n_arma**,
    where ``n_arma`` is the number of estimated AR and MA coefficients,
    seasonal ones included; the constant (mean or drift) is not counted.
    Under the fitted model Q(m) is approximately chi²(df).

    Parameters
    ----------
    resid : array_like
        Residuals (burn-in already removed); NaN values are skipped.
    lags : int or iterable of int
        The m values; each must satisfy ``n_arma < m < n``.
    n_arma : int
        Number of AR and MA coefficients of the model (0 for a plain
        white-noise check).

    Returns
    -------
    tuple of LjungBoxRow
        One row per lag, in increasing lag order.

    Raises
    ------
    SpecError
        A lag m <= n_arma (no degrees of freedom left: choose a larger lag),
        or malformed lags.
    InputError
        A lag m >= n, or unusable residuals.

    References
    ----------
    Ljung & Box (1978), *Biometrika* 65(2), 297-303; Box, Jenkins, Reinsel
    & Ljung (2015), ch. 8 (portmanteau lack-of-fit test).
    """
    values = _residuals(resid)
    n = values.size
    n_arma = _count(n_arma, "n_arma")
    m_values = _lag_tuple(lags, "Ljung-Box")
    for m in m_values:
        if m <= n_arma:
            raise SpecError(
                f"The Ljung-Box test at lag {m} leaves no degrees of freedom for a model with "
                f"{n_arma} AR/MA coefficients; choose a lag larger than {n_arma}."
            )
        if m >= n:
            raise InputError(
                f"The Ljung-Box test at lag {m} needs more than {m} residuals, but there are "
                f"only {n}; choose a lag below {n // 2}."
            )
    return _portmanteau(values, m_values, n_arma)


def mcleod_li(resid, lags) -> tuple[LjungBoxRow, ...]:
    """McLeod-Li test: Ljung-Box statistic of the squared residuals.

    The autocorrelations are those of :math:`a_t^2` about their mean
    :math:`\\hat\\sigma^2 = \\sum a_t^2 / n`, and

    .. math::

        Q_{aa}(m) = n(n+2) \\sum_{k=1}^{m} \\frac{r_{aa}(k)^2}{n-k}
        \\sim \\chi^2(m),

    with **df = m**: no reduction for the fitted ARMA coefficients. Large
    values point to conditional heteroscedasticity (ARCH effects) or other
    non-linearity.

    Parameters
    ----------
    resid : array_like
        Residuals; NaN values are skipped.
    lags : int or iterable of int
        The m values, each 1 <= m < n.

    Returns
    -------
    tuple of LjungBoxRow

    References
    ----------
    McLeod & Li (1983), *Journal of Time Series Analysis* 4(4), 269-273,
    eqs. (2.1)-(2.3).
    """
    values = _residuals(resid)
    squares = finite_values(values**2, what="squared residuals", minimum=MIN_RESIDUALS)
    n = squares.size
    m_values = _lag_tuple(lags, "McLeod-Li")
    if m_values[-1] >= n:
        raise InputError(
            f"The McLeod-Li test at lag {m_values[-1]} needs more than {m_values[-1]} residuals, "
            f"but there are only {n}; choose a lag below {n // 2}."
        )
    return _portmanteau(squares, m_values, 0)


# ------------------------------------------------------------------- ARCH
@dataclass(frozen=True)
class ArchTest:
    """Engle's ARCH-LM test.

    Attributes
    ----------
    nlags : int
        Number p of lagged squared residuals in the regression.
    n_used : int
        Observations in the regression, n - p.
    r_squared : float
        Centred R² of the regression.
    lm, df, p : float, int, float
        LM = n_used · R², its chi²(p) degrees of freedom and p-value.
    f_stat, f_df, f_p : float, tuple of int, float
        The F form of the same restriction: F(p, n_used - p - 1).
    """

    nlags: int
    n_used: int
    r_squared: float
    lm: float
    df: int
    p: float
    f_stat: float
    f_df: tuple[int, int]
    f_p: float


def default_arch_lags(n: int) -> int:
    """Default number of lags for :func:`arch_lm`: ``min(12, max(1, n // 5))`` (common practice)."""
    return min(12, max(1, _count(n, "n") // 5))


def arch_lm(resid, nlags: int) -> ArchTest:
    """Engle's Lagrange-multiplier test for ARCH effects.

    Regress :math:`e_t^2` on a constant and :math:`e_{t-1}^2, \\dots,
    e_{t-p}^2` over t = p+1..n by least squares; then
    LM = (n - p)·R² is approximately chi²(p) when there is no ARCH effect.
    The residuals are used as given (not demeaned); no degrees-of-freedom
    correction is made for the fitted ARMA coefficients.

    Parameters
    ----------
    resid : array_like
        Residuals; NaN values are skipped.
    nlags : int
        p >= 1, with n - p > p + 1.

    Returns
    -------
    ArchTest

    References
    ----------
    Engle (1982), *Econometrica* 50(4), 987-1007 (the LM statistic as
    T·R² of the regression of squared residuals on their lags).
    """
    values = _residuals(resid)
    n = values.size
    p = _count(nlags, "nlags")
    if p < 1:
        raise SpecError("The ARCH test needs at least one lag.")
    n_used = n - p
    if n_used <= p + 1:
        raise InputError(
            f"The ARCH test with {p} lags needs more than {2 * p + 1} residuals, but there are "
            f"only {n}; use fewer lags."
        )
    squares = values**2
    scale = squares.mean()  # > 0 because the residuals are not constant
    squares = squares / scale  # R² does not depend on the scale; this keeps lstsq well conditioned
    windows = np.lib.stride_tricks.sliding_window_view(squares, p + 1)  # row t: e²_{t-p..t}
    y = windows[:, p] - windows[:, p].mean()
    lagged = windows[:, p - 1 :: -1]  # column k-1 holds lag k
    lagged = lagged - lagged.mean(axis=0)  # centring absorbs the constant
    sst = float(y @ y)
    if sst > 0.0:
        # Normal equations of the centred regression: a (p x p) system, O(n p²) to form.
        xtx = lagged.T @ lagged
        xty = lagged.T @ y
        coef = np.linalg.lstsq(xtx, xty, rcond=None)[0]
        r2 = min(max(float(coef @ xty) / sst, 0.0), 1.0)
    else:
        r2 = 0.0
    lm = n_used * r2
    df_resid = n_used - p - 1
    if r2 >= 1.0:
        f_stat, f_p = math.inf, 0.0
    else:
        f_stat = (r2 / p) / ((1.0 - r2) / df_resid)
        f_p = float(stats.f.sf(f_stat, p, df_resid))
    return ArchTest(
        nlags=p,
        n_used=int(n_used),
        r_squared=float(r2),
        lm=float(lm),
        df=p,
        p=float(stats.chi2.sf(lm, p)),
        f_stat=float(f_stat),
        f_df=(p, int(df_resid)),
        f_p=f_p,
    )


# -------------------------------------------------------------- sign change
@dataclass(frozen=True)
class SignChangeTest:
    """Count of sign changes between consecutive residuals.

    Attributes
    ----------
    n : int
        Non-zero residuals used.
    changes : int
        Observed sign changes C.
    possible : int
        n - 1.
    expected, variance : float
        (n-1)/2 and (n-1)/4, the Binomial(n-1, 1/2) moments.
    z : float
        (C - expected)/sqrt(variance), no continuity correction.
    p_normal : float
        Two-sided normal-approximation p-value.
    p_exact : float
        Two-sided exact binomial p-value.
    interval95 : tuple of int
        Central 95 % interval of C under independence: the 2.5 % and 97.5 %
        binomial quantiles (each tail holds at most 2.5 %).
    verdict : str
        ``"as expected"``, ``"too few changes"`` (runs of one sign:
        positive autocorrelation, or residuals off-centre) or ``"too many
        changes"`` (negative autocorrelation), at the 5 % level of the
        exact test.
    """

    n: int
    changes: int
    possible: int
    expected: float
    variance: float
    z: float
    p_normal: float
    p_exact: float
    interval95: tuple[int, int]
    verdict: str


def sign_change_test(resid) -> SignChangeTest:
    """Sign-change test of independence.

    Residuals exactly equal to zero are dropped (they have no sign), as are
    NaN values. If the remaining n residuals are independent and their
    signs equally likely, each of the n - 1 consecutive pairs changes sign
    with probability 1/2, independently, so the count C of changes is
    Binomial(n - 1, 1/2).

    Parameters
    ----------
    resid : array_like
        Residuals, centred on zero by the model.

    Returns
    -------
    SignChangeTest

    References
    ----------
    The binomial law of sign changes of independent symmetric variables
    follows from the independence of the signs (common practice); the
    exact two-sided binomial test is that of :func:`scipy.stats.binomtest`.
    """
    values = _residuals(resid)
    values = values[values != 0.0]
    n = values.size
    if n < MIN_RESIDUALS:
        raise InputError(
            f"Only {n} residuals are not exactly zero; the sign-change test needs at least "
            f"{MIN_RESIDUALS}."
        )
    positive = values > 0.0
    changes = int(np.count_nonzero(positive[1:] != positive[:-1]))
    possible = n - 1
    expected = possible / 2.0
    variance = possible / 4.0
    z = (changes - expected) / math.sqrt(variance)
    p_normal = float(2.0 * stats.norm.sf(abs(z)))
    p_exact = float(min(1.0, stats.binomtest(changes, possible, 0.5).pvalue))
    lower = int(stats.binom.ppf(0.025, possible, 0.5))
    upper = int(stats.binom.ppf(0.975, possible, 0.5))
    if p_exact >= ALPHA:
        verdict = "as expected"
    elif changes < expected:
        verdict = "too few changes"
    else:
        verdict = "too many changes"
    return SignChangeTest(
        n=int(n),
        changes=changes,
        possible=int(possible),
        expected=expected,
        variance=variance,
        z=float(z),
        p_normal=p_normal,
        p_exact=p_exact,
        interval95=(lower, upper),
        verdict=verdict,
    )


# -------------------------------------------------------------------- runs
@dataclass(frozen=True)
class RunsTest:
    """Wald-Wolfowitz runs above and below the median.

    Attributes
    ----------
    median : float
        The cut.
    n_above, n_below : int
        Residuals above and below the median (those equal to it dropped).
    runs : int
        Number of maximal runs of values on one side.
    expected, variance : float
        Mean and variance of the number of runs under randomness.
    z, p : float
        Standardised count (no continuity correction) and its two-sided
        normal p-value.
    """

    median: float
    n_above: int
    n_below: int
    runs: int
    expected: float
    variance: float
    z: float
    p: float


def runs_test(resid) -> RunsTest:
    """Runs test of randomness about the median.

    Values equal to the median are dropped (this always happens to the
    middle value of an odd count of distinct values). With n1 values above
    and n2 below, N = n1 + n2, the number of runs R has, under randomness,

    .. math::

        E R = \\frac{2 n_1 n_2}{N} + 1,\\qquad
        \\operatorname{Var} R = \\frac{2 n_1 n_2 (2 n_1 n_2 - N)}{N^2 (N - 1)},

    and z = (R - E R)/sqrt(Var R) is referred to the standard normal.

    Parameters
    ----------
    resid : array_like
        Residuals; NaN values are skipped.

    Returns
    -------
    RunsTest

    References
    ----------
    Wald & Wolfowitz (1940), *Annals of Mathematical Statistics* 11(2),
    147-162 (mean and variance of the number of runs).
    """
    values = _residuals(resid)
    median = float(np.median(values))
    kept = values[values != median]
    above = kept > median
    n1 = int(np.count_nonzero(above))
    n2 = int(above.size - n1)
    total = n1 + n2
    if n1 < 2 or n2 < 2:
        raise InputError(
            "The runs test needs at least two residuals on each side of the median; "
            "these residuals take too few distinct values."
        )
    runs = int(1 + np.count_nonzero(above[1:] != above[:-1]))
    product = 2.0 * n1 * n2
    expected = product / total + 1.0
    variance = product * (product - total) / (total**2 * (total - 1.0))
    z = (runs - expected) / math.sqrt(variance)
    return RunsTest(
        median=median,
        n_above=n1,
        n_below=n2,
        runs=runs,
        expected=float(expected),
        variance=float(variance),
        z=float(z),
        p=float(2.0 * stats.norm.sf(abs(z))),
    )


# ------------------------------------------------- cumulative periodogram
@dataclass(frozen=True, eq=False)
class CumulativePeriodogram:
    """Normalised cumulative periodogram with Kolmogorov-Smirnov bands.

    Attributes
    ----------
    n : int
        Residuals used.
    q : int
        Number of Fourier frequencies used, floor((n-1)/2).
    frequencies : numpy.ndarray
        f_j = j/n, j = 1..q (cycles per observation; read-only).
    ordinates : numpy.ndarray
        Periodogram I(f_j) = (2/n)·|sum_t a_t exp(-2πi f_j t)|² (read-only).
    cumulative : numpy.ndarray
        C_j = sum_{i<=j} I(f_i) / sum_{i<=q} I(f_i); ends at 1 (read-only).
    reference : numpy.ndarray
        The white-noise line j/q (read-only).
    band : Mapping[float, float]
        Half-width K_alpha/sqrt(q) of the band for alpha = 0.10, 0.05, 0.01.
    max_deviation : float
        max_j |C_j - j/q|.
    max_deviation_frequency : float
        The f_j where it occurs.
    reject : Mapping[float, bool]
        Whether ``max_deviation`` leaves the band at each alpha.
    verdict : str
        ``"inside the 5 % band"`` or ``"outside the 5 % band"``.
    """

    n: int
    q: int
    frequencies: np.ndarray
    ordinates: np.ndarray
    cumulative: np.ndarray
    reference: np.ndarray
    band: Mapping[float, float]
    max_deviation: float
    max_deviation_frequency: float
    reject: Mapping[float, bool]
    verdict: str


def cumulative_periodogram(resid) -> CumulativePeriodogram:
    """Cumulative periodogram check of residual whiteness.

    Convention (Box, Jenkins, Reinsel & Ljung, 2015, ch. 8, the cumulative
    periodogram check, §8.2.5 by our recollection): the periodogram
    ordinates at the Fourier frequencies f_j = j/n, j = 1..q with
    q = floor((n-1)/2) (that is, (n-2)/2 for even n and (n-1)/2 for odd n;
    the zero and Nyquist frequencies are left out) are

    .. math::

        I(f_j) = \\frac{2}{n}\\Big|\\sum_{t=1}^n a_t e^{-2\\pi i f_j t}\\Big|^2 ,

    computed with one FFT (removing the mean changes none of them). They are
    cumulated and divided by their total, so C_q = 1; the book divides by
    n·s² instead, which differs only by that total. For white noise C_j
    follows the line j/q; a Kolmogorov-Smirnov band of half-width
    K_alpha/sqrt(q) (q' = q) with K = 1.22, 1.36, 1.63 at alpha = 10, 5,
    1 % is drawn around it, and the check rejects when
    max_j |C_j - j/q| exceeds the half-width.

    Parameters
    ----------
    resid : array_like
        Residuals; NaN values are skipped.

    Returns
    -------
    CumulativePeriodogram

    References
    ----------
    Box, Jenkins, Reinsel & Ljung (2015), ch. 8 (cumulative periodogram
    check); Bartlett, M. S. (1955), *An Introduction to Stochastic
    Processes*, Cambridge University Press (the test and its KS bands,
    from memory). K_alpha: standard Kolmogorov-Smirnov tables.
    """
    values = _residuals(resid)
    n = values.size
    q = (n - 1) // 2
    spectrum = sp_fft.rfft(values - values.mean())[1 : q + 1]
    ordinates = (2.0 / n) * (spectrum.real**2 + spectrum.imag**2)
    total = float(ordinates.sum())
    if not total > 0.0:
        raise InputError(
            "The residuals vary only at the highest frequency (they alternate exactly), so the "
            "cumulative periodogram is undefined; check the model or the data."
        )
    cumulative = np.cumsum(ordinates) / total
    cumulative[-1] = 1.0
    j = np.arange(1, q + 1)
    reference = j / q
    deviation = np.abs(cumulative - reference)
    where = int(np.argmax(deviation))
    max_dev = float(deviation[where])
    band = {alpha: k / math.sqrt(q) for alpha, k in KS_COEFFICIENTS.items()}
    reject = {alpha: bool(max_dev > width) for alpha, width in band.items()}
    return CumulativePeriodogram(
        n=int(n),
        q=int(q),
        frequencies=_read_only(j / n),
        ordinates=_read_only(ordinates),
        cumulative=_read_only(cumulative),
        reference=_read_only(reference),
        band=FrozenMap(band),
        max_deviation=max_dev,
        max_deviation_frequency=float((where + 1) / n),
        reject=FrozenMap(reject),
        verdict="outside the 5 % band" if reject[0.05] else "inside the 5 % band",
    )


# ---------------------------------------------------------------- normality
@dataclass(frozen=True)
class NormalityTest:
    """Shape of the residual distribution.

    Attributes
    ----------
    n : int
        Values used.
    skewness : float
        Sample skewness g1 = m3 / m2^(3/2).
    excess_kurtosis : float
        Sample excess kurtosis g2 = m4 / m2² - 3.
    jb_stat, jb_p : float
        Jarque-Bera statistic n(g1²/6 + g2²/24) and its chi²(2) p-value.
    test : str
        ``"Shapiro-Wilk"`` (n <= 5000) or ``"D'Agostino-Pearson K²"``.
    test_stat, test_p : float
        That test's statistic (W or K²) and p-value.
    """

    n: int
    skewness: float
    excess_kurtosis: float
    jb_stat: float
    jb_p: float
    test: str
    test_stat: float
    test_p: float


def normality(resid) -> NormalityTest:
    """Normality checks: moments, Jarque-Bera, and Shapiro-Wilk or D'Agostino-Pearson.

    Shapiro-Wilk is used for n <= :data:`SHAPIRO_MAX_N` (5000); above that
    its p-value is only approximate and D'Agostino-Pearson's K² (which
    combines skewness and kurtosis tests) is used instead. The result names
    the test used.

    Parameters
    ----------
    resid : array_like
        Residuals (standardised or not; every statistic here is scale-free).
        NaN values are skipped.

    Returns
    -------
    NormalityTest

    References
    ----------
    Jarque & Bera (1987), *International Statistical Review* 55(2), 163-172;
    Shapiro, S. S. & Wilk, M. B. (1965), *Biometrika* 52(3/4), 591-611;
    D'Agostino, R. B. & Pearson, E. S. (1973), *Biometrika* 60(3), 613-622.
    The computations are scipy.stats' ``jarque_bera``, ``shapiro`` and
    ``normaltest``.
    """
    values = _residuals(resid)
    n = values.size
    jb = stats.jarque_bera(values)
    if n <= SHAPIRO_MAX_N:
        name = "Shapiro-Wilk"
        result = stats.shapiro(values)
    else:
        name = "D'Agostino-Pearson K²"
        result = stats.normaltest(values)
    return NormalityTest(
        n=int(n),
        skewness=float(stats.skew(values)),
        excess_kurtosis=float(stats.kurtosis(values)),
        jb_stat=float(jb.statistic),
        jb_p=float(jb.pvalue),
        test=name,
        test_stat=float(result.statistic),
        test_p=float(result.pvalue),
    )


# ----------------------------------------------------------------- outliers
@dataclass(frozen=True, eq=False)
class Outliers:
    """Standardised residuals beyond a threshold.

    Attributes
    ----------
    threshold : float
        The |z| cut.
    positions : numpy.ndarray
        Indices into the array given to :func:`find_outliers` (int, read-only).
    values : numpy.ndarray
        The standardised residuals there (read-only).
    n_checked : int
        Non-missing values examined.
    expected : float
        How many a normal white-noise series of that length would show:
        n_checked · 2·(1 - Φ(threshold)).
    """

    threshold: float
    positions: np.ndarray
    values: np.ndarray
    n_checked: int
    expected: float

    @property
    def count(self) -> int:
        return int(self.positions.size)


def find_outliers(std_resid, threshold: float = 3.0) -> Outliers:
    """Positions and values of standardised residuals with |z| > ``threshold``.

    NaN values are never flagged and do not shift the positions.

    Parameters
    ----------
    std_resid : array_like
        Standardised residuals.
    threshold : float, default 3.0
        Positive cut (3 is common practice).

    Returns
    -------
    Outliers
    """
    try:
        z = np.asarray(std_resid, dtype=float)
    except (TypeError, ValueError):
        raise InputError("The standardised residuals must be numbers; they hold something else.") from None
    if z.ndim != 1:
        raise InputError("The standardised residuals must be one column of numbers.")
    threshold = float(threshold)
    if not threshold > 0.0 or math.isinf(threshold):
        raise SpecError(f"The outlier threshold must be a positive number, not {threshold:g}.")
    finite = ~np.isnan(z)
    if np.isinf(z[finite]).any():
        raise InputError(
            "The standardised residuals hold an infinite value; the model fit has failed somewhere."
        )
    positions = np.flatnonzero(finite & (np.abs(np.where(finite, z, 0.0)) > threshold))
    n_checked = int(np.count_nonzero(finite))
    return Outliers(
        threshold=threshold,
        positions=_read_only(positions, dtype=np.intp),
        values=_read_only(z[positions]),
        n_checked=n_checked,
        expected=float(n_checked * 2.0 * stats.norm.sf(threshold)),
    )


# ------------------------------------------------------------------ verdict
@dataclass(frozen=True)
class WhiteNoiseVerdict:
    """Compact verdict on residual whiteness.

    Attributes
    ----------
    label : str
        ``"white"``, ``"doubtful"`` or ``"not white"``.
    failed : tuple of str
        Names of the checks that failed at 5 %.
    ljung_box_lag : int or None
        Lag of the Ljung-Box row used (``None`` if there was none).
    """

    label: str
    failed: tuple[str, ...]
    ljung_box_lag: int | None

    def __str__(self) -> str:
        return self.label


def main_ljung_box_row(rows: tuple[LjungBoxRow, ...], season: int = 0) -> LjungBoxRow | None:
    """The Ljung-Box row the verdict uses: the largest lag <= max(12, 2·season), else the smallest lag."""
    if not rows:
        return None
    limit = max(12, 2 * season if season >= 2 else 0)
    within = [row for row in rows if row.lag <= limit]
    return max(within, key=lambda row: row.lag) if within else min(rows, key=lambda row: row.lag)


def combine_white_noise_checks(
    ljung_box_p: float | None,
    sign_change_p: float,
    periodogram_reject_5: bool,
    periodogram_reject_1: bool,
    ljung_box_lag: int | None = None,
) -> WhiteNoiseVerdict:
    """The white-noise verdict rule.

    Three checks, each at 5 %: the main Ljung-Box p-value (see
    :func:`main_ljung_box_row`; skipped if ``None``), the exact sign-change
    p-value, and the cumulative periodogram's 5 % band.

    - ``"not white"``: two or more checks fail, or any one fails strongly
      (Ljung-Box or sign-change p < 0.001, or the periodogram leaves its
      1 % band);
    - ``"doubtful"``: exactly one check fails, not strongly;
    - ``"white"``: none fails.

    For true white noise "doubtful" comes up in roughly one case in seven
    (three checks at 5 %, somewhat less because the sign-change test is
    conservative); it asks for a look at the panes, not a new model.
    (Common practice: a combination of standard checks, not a test with a
    stated size.)
    """
    failed = []
    strong = False
    if ljung_box_p is not None and ljung_box_p < ALPHA:
        failed.append("Ljung-Box")
        strong = strong or ljung_box_p < 0.001
    if sign_change_p < ALPHA:
        failed.append("sign change")
        strong = strong or sign_change_p < 0.001
    if periodogram_reject_5 or periodogram_reject_1:
        failed.append("cumulative periodogram")
        strong = strong or periodogram_reject_1
    if len(failed) >= 2 or strong:
        label = "not white"
    elif failed:
        label = "doubtful"
    else:
        label = "white"
    return WhiteNoiseVerdict(label=label, failed=tuple(failed), ljung_box_lag=ljung_box_lag)


# ------------------------------------------------------------------- bundle
@dataclass(frozen=True, eq=False)
class Diagnostics:
    """All residual checks of one candidate.

    Attributes
    ----------
    n_used : int
        Residuals used (positions where either array was NaN dropped).
    season : int
        Seasonal period given to :func:`diagnose` (0 for none).
    n_arma : int
        AR and MA coefficients (the Ljung-Box df reduction).
    correlogram : Correlogram
    ljung_box : tuple of LjungBoxRow
        At :func:`default_ljung_box_lags`; empty if the series is too short.
    mcleod_li : tuple of LjungBoxRow
        At ``default_ljung_box_lags(n, season, 0)``.
    arch : ArchTest
        With :func:`default_arch_lags` lags.
    sign_change : SignChangeTest
    runs : RunsTest
    cumulative_periodogram : CumulativePeriodogram
    normality : NormalityTest
        On the standardised residuals.
    outliers : Outliers
        On the standardised residuals; positions index the arrays given.
    """

    n_used: int
    season: int
    n_arma: int
    correlogram: Correlogram
    ljung_box: tuple[LjungBoxRow, ...]
    mcleod_li: tuple[LjungBoxRow, ...]
    arch: ArchTest
    sign_change: SignChangeTest
    runs: RunsTest
    cumulative_periodogram: CumulativePeriodogram
    normality: NormalityTest
    outliers: Outliers

    @property
    def main_ljung_box(self) -> LjungBoxRow | None:
        """The Ljung-Box row used by the verdict (see :func:`main_ljung_box_row`)."""
        return main_ljung_box_row(self.ljung_box, self.season)

    @property
    def white_noise_verdict(self) -> WhiteNoiseVerdict:
        """Verdict from the main Ljung-Box p, the exact sign-change p and the periodogram band.

        The rule is :func:`combine_white_noise_checks`.
        """
        row = self.main_ljung_box
        cp = self.cumulative_periodogram
        return combine_white_noise_checks(
            ljung_box_p=None if row is None else row.p,
            sign_change_p=self.sign_change.p_exact,
            periodogram_reject_5=cp.reject[0.05],
            periodogram_reject_1=cp.reject[0.01],
            ljung_box_lag=None if row is None else row.lag,
        )


def diagnose(resid, std_resid=None, n_arma: int = 0, season: int = 0) -> Diagnostics:
    """Run every residual check.

    The caller passes residuals already cut of any burn-in (the first
    observations whose residuals are not genuine one-step errors). Positions
    where ``resid`` or ``std_resid`` is NaN are dropped from both, so all
    checks use the same n_used values; outlier positions still index the
    arrays given.

    The serial-correlation checks (correlogram, Ljung-Box, McLeod-Li, ARCH,
    sign change, runs, cumulative periodogram) use ``resid``; normality and
    outliers use ``std_resid``.

    Parameters
    ----------
    resid : array_like
        Residuals.
    std_resid : array_like, optional
        Standardised residuals of the same length; default
        ``(resid - mean) / std`` (population standard deviation).
    n_arma : int, default 0
        Number of AR and MA coefficients, seasonal ones included (not the
        constant).
    season : int, default 0
        Seasonal period (0 or 1 for none).

    Returns
    -------
    Diagnostics

    Raises
    ------
    InputError
        Fewer than 8 usable residuals, infinite or constant residuals, or
        arrays of different lengths.
    SpecError
        A negative ``n_arma`` or ``season``.

    References
    ----------
    Box, Jenkins, Reinsel & Ljung (2015), ch. 8; see also the functions
    called.
    """
    n_arma = _count(n_arma, "n_arma")
    season = _count(season, "season")
    try:
        e = np.asarray(resid, dtype=float)
    except (TypeError, ValueError):
        raise InputError("The residuals must be numbers; they hold something else.") from None
    if e.ndim != 1:
        raise InputError("The residuals must be one column of numbers.")
    if std_resid is None:
        valid = e[~np.isnan(e)]
        if valid.size >= 2 and np.all(np.isfinite(valid)) and np.ptp(valid) > 0.0:
            z = (e - valid.mean()) / valid.std()
        else:
            z = e.copy()  # the checks below refuse this input with a clear message
    else:
        try:
            z = np.asarray(std_resid, dtype=float)
        except (TypeError, ValueError):
            raise InputError(
                "The standardised residuals must be numbers; they hold something else."
            ) from None
        if z.shape != e.shape:
            raise InputError(
                f"There are {e.size} residuals but {z.size} standardised residuals; "
                "give arrays of the same length."
            )
    keep = ~(np.isnan(e) | np.isnan(z))
    used = _residuals(e[keep])
    std_used = _residuals(z[keep], what="standardised residuals")
    n = used.size
    lb_lags = default_ljung_box_lags(n, season, n_arma)
    ml_lags = default_ljung_box_lags(n, season, 0)
    # One FFT ACF serves the correlogram and the Ljung-Box rows (the same
    # numbers ljung_box() would give; lb_lags already satisfy its checks).
    shown = default_nlags(n, season)
    r = acf_of_clean(used, max((shown,) + lb_lags))
    return Diagnostics(
        n_used=int(n),
        season=season,
        n_arma=n_arma,
        correlogram=correlogram_from_acf(r[: shown + 1], n),
        ljung_box=_portmanteau_from_acf(r, n, lb_lags, n_arma) if lb_lags else (),
        mcleod_li=mcleod_li(used, ml_lags) if ml_lags else (),
        arch=arch_lm(used, default_arch_lags(n)),
        sign_change=sign_change_test(used),
        runs=runs_test(used),
        cumulative_periodogram=cumulative_periodogram(used),
        normality=normality(std_used),
        outliers=find_outliers(np.where(keep, z, np.nan)),
    )
