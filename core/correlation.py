"""Sample autocorrelations and partial autocorrelations, computed in O(n log n).

The sample autocorrelation function (ACF) is computed with one zero-padded
FFT, and the partial autocorrelation function (PACF) from it by the
Levinson-Durbin recursion, which costs O(nlags²) and does not depend on the
series length. Both give the same numbers as the usual direct sums (the
"biased" estimators with divisor n, mean removed), which grow with n².

Missing values (NaN) are skipped: the finite values are taken in their order
and treated as one contiguous series. This is what a residual check wants
when a few residuals are missing; it is not a gap-aware estimator.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley, ch. 2
(estimation of autocorrelation functions: divisor N, lags up to about N/4)
and ch. 3 with Appendix A3.2 (partial autocorrelation, recursive
calculation). Section numbers are not given here because they are recalled
from memory only.
Durbin, J. (1960). The fitting of time-series models. *Revue de l'Institut
International de Statistique* 28(3), 233-244.
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., §2.5 (the Durbin-Levinson algorithm).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import fft as sp_fft

from .errors import InputError

#: Fewest finite values for which an ACF is computed.
MIN_VALUES = 3


def finite_values(x, what: str = "series", minimum: int = MIN_VALUES) -> np.ndarray:
    """The non-NaN values of ``x`` as a new float64 array, in their order.

    Raises :class:`InputError` (naming ``what``) for input that is not a
    single column of numbers, holds an infinite value, has fewer than
    ``minimum`` non-NaN values, or is constant.
    """
    try:
        values = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"The {what} must be numbers; it holds something else.") from None
    if values.ndim != 1:
        raise InputError(f"The {what} must be one column of numbers, not a table.")
    values = values[~np.isnan(values)]
    if np.isinf(values).any():
        raise InputError(
            f"The {what} holds an infinite value; correct the data or the model and try again."
        )
    if values.size < minimum:
        raise InputError(
            f"The {what} has only {values.size} usable (non-missing) values; "
            f"at least {minimum} are needed for this check."
        )
    if np.ptp(values) == 0.0:
        raise InputError(
            f"All {values.size} values of the {what} are equal ({values[0]:g}), so there is "
            "no variation to check; look at the data or the model that produced them."
        )
    return values


def _check_nlags(nlags, n: int) -> int:
    try:
        lags = int(nlags)
    except (TypeError, ValueError):
        raise InputError(f"The number of lags '{nlags}' is not a whole number.") from None
    if lags != nlags or lags < 0:
        raise InputError(f"The number of lags must be a whole number of 0 or more, not {nlags!r}.")
    if lags > n - 1:
        raise InputError(
            f"{lags} lags were asked of a series with {n} values; ask for at most {n - 1}."
        )
    return lags


def acf_of_clean(values: np.ndarray, nlags: int) -> np.ndarray:
    """ACF at lags 0..nlags of values already checked by :func:`finite_values` (no checks here)."""
    n = values.size
    centred = values - values.mean()
    size = sp_fft.next_fast_len(2 * n - 1, real=True)
    spectrum = sp_fft.rfft(centred, n=size)
    acov = sp_fft.irfft(spectrum.real**2 + spectrum.imag**2, n=size)[: nlags + 1]
    r = acov / acov[0]
    r[0] = 1.0
    return r


def acf(x, nlags: int) -> np.ndarray:
    """Sample autocorrelations at lags 0..nlags.

    .. math::

        r_k = \\frac{\\sum_{t=1}^{n-k} (x_t - \\bar x)(x_{t+k} - \\bar x)}
                   {\\sum_{t=1}^{n} (x_t - \\bar x)^2}

    (divisor n at every lag), computed with one zero-padded real FFT.

    Parameters
    ----------
    x : array_like
        One-dimensional series. NaN values are skipped (the remaining values
        are treated as one contiguous series).
    nlags : int
        Largest lag, 0 <= nlags <= n - 1 where n is the number of finite values.

    Returns
    -------
    numpy.ndarray
        ``nlags + 1`` autocorrelations; the first is 1.

    Raises
    ------
    InputError
        Fewer than 3 finite values, an infinite value, a constant series, or
        an impossible ``nlags``.

    References
    ----------
    Box, Jenkins, Reinsel & Ljung (2015), *Time Series Analysis*, 5th ed.,
    ch. 2 (estimation of autocorrelation functions).
    """
    values = finite_values(x)
    return acf_of_clean(values, _check_nlags(nlags, values.size))


def pacf_from_acf(r) -> np.ndarray:
    """Partial autocorrelations from autocorrelations by the Levinson-Durbin recursion.

    With :math:`\\phi_{11} = r_1`, :math:`v_1 = 1 - r_1^2` and for k >= 2

    .. math::

        \\phi_{kk} = \\frac{r_k - \\sum_{j=1}^{k-1} \\phi_{k-1,j}\\, r_{k-j}}{v_{k-1}},\\quad
        \\phi_{kj} = \\phi_{k-1,j} - \\phi_{kk}\\,\\phi_{k-1,k-j},\\quad
        v_k = v_{k-1}(1 - \\phi_{kk}^2).

    Applied to the divisor-n sample ACF this equals the Yule-Walker
    (biased, "mle") partial autocorrelations.

    Parameters
    ----------
    r : array_like
        Autocorrelations at lags 0..nlags with ``r[0] == 1``.

    Returns
    -------
    numpy.ndarray
        ``nlags + 1`` partial autocorrelations; the first is 1. Should the
        prediction error variance reach zero (a perfectly predictable
        series), the later values are NaN.

    References
    ----------
    Durbin (1960); Brockwell & Davis (2016), §2.5; Box, Jenkins, Reinsel &
    Ljung (2015), ch. 3, Appendix A3.2.
    """
    r = np.asarray(r, dtype=float)
    if r.ndim != 1 or r.size == 0:
        raise InputError("The autocorrelations must be a non-empty column of numbers.")
    m = r.size - 1
    out = np.full(m + 1, np.nan)
    out[0] = 1.0
    if m == 0:
        return out
    phi = np.zeros(m + 1)  # phi[1..k] are the AR(k) coefficients
    v = 1.0
    for k in range(1, m + 1):
        if not v > 0.0:
            break
        phikk = (r[k] - np.dot(phi[1:k], r[k - 1 : 0 : -1])) / v
        previous = phi[1:k].copy()
        phi[1:k] = previous - phikk * previous[::-1]
        phi[k] = phikk
        v *= 1.0 - phikk * phikk
        out[k] = phikk
    return out


def default_nlags(n: int, season: int = 0) -> int:
    """Number of correlogram lags a practitioner expects for ``n`` values.

    Rule: ``max(24, ceil(10·log10 n))``, and at least ``2·season`` for a
    seasonal series (``season >= 2``), so that two seasonal lags are visible.
    This is then limited to ``n // 4`` (estimated autocorrelations beyond
    about N/4 are too noisy to read), except that for a seasonal series the
    limit is raised to ``min(2·season, n // 2 - 1)`` when that is larger.
    The result is at least 1 and at most ``n - 1``.

    References
    ----------
    Box, Jenkins, Reinsel & Ljung (2015), ch. 2: autocorrelations up to a
    lag K "not larger than N/4" (wording from memory). The ``10·log10 n``
    rule is common practice.
    """
    n = int(n)
    season = int(season)
    base = max(24, math.ceil(10.0 * math.log10(max(n, 1))))
    limit = n // 4
    if season >= 2:
        base = max(base, 2 * season)
        limit = max(limit, min(2 * season, n // 2 - 1))
    return max(1, min(base, limit, n - 1))


def _read_only(a: np.ndarray) -> np.ndarray:
    a = np.array(a, copy=True)
    a.setflags(write=False)
    return a


@dataclass(frozen=True, eq=False)
class Correlogram:
    """ACF and PACF of a series at lags 1..nlags, ready to draw as bars.

    Attributes
    ----------
    n : int
        Number of finite values used.
    lags : numpy.ndarray
        Lags 1..nlags (int, read-only).
    acf, pacf : numpy.ndarray
        Autocorrelations and partial autocorrelations at those lags
        (read-only).
    band : float
        Approximate 95 % band half-width for white noise, 2/sqrt(n).
    """

    n: int
    lags: np.ndarray
    acf: np.ndarray
    pacf: np.ndarray
    band: float

    @property
    def nlags(self) -> int:
        return int(self.lags.size)


def correlogram(x, nlags: int | None = None, season: int = 0) -> Correlogram:
    """ACF and PACF of ``x`` with the ±2/√n white-noise band.

    Parameters
    ----------
    x : array_like
        One-dimensional series; NaN values (missing residuals) are skipped.
    nlags : int, optional
        Largest lag (1 <= nlags <= n - 1). Default: :func:`default_nlags`.
    season : int, default 0
        Seasonal period; used only by the default ``nlags`` so that at
        least two seasonal lags are shown.

    Returns
    -------
    Correlogram

    Raises
    ------
    InputError
        Fewer than 3 finite values, an infinite value, a constant series, or
        an impossible ``nlags``.

    References
    ----------
    Box, Jenkins, Reinsel & Ljung (2015), ch. 2 (standard error of r_k
    under white noise about 1/sqrt(n)) and ch. 3 (partial autocorrelation);
    the ±2/√n band is common practice.
    """
    values = finite_values(x)
    n = values.size
    if nlags is None:
        lags = default_nlags(n, season)
    else:
        lags = _check_nlags(nlags, n)
        if lags < 1:
            raise InputError("A correlogram needs at least one lag.")
    return correlogram_from_acf(acf_of_clean(values, lags), n)


def correlogram_from_acf(r, n: int) -> Correlogram:
    """Build a :class:`Correlogram` from autocorrelations ``r[0..nlags]`` of ``n`` values.

    Lets a caller that already holds the ACF (to a lag at least as large)
    avoid a second FFT; :func:`correlogram` is the checked entry point.
    """
    r = np.asarray(r, dtype=float)
    p = pacf_from_acf(r)
    return Correlogram(
        n=int(n),
        lags=_read_only(np.arange(1, r.size)),
        acf=_read_only(r[1:]),
        pacf=_read_only(p[1:]),
        band=2.0 / math.sqrt(n),
    )
