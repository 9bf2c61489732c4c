"""Comparing two candidates' forecasts: the Diebold-Mariano test and Akaike weights.

The Diebold-Mariano statistic compares the mean loss differential
:math:`d_t = L(e_{1t}) - L(e_{2t})` with its long-run variance (the
autocovariances up to lag h-1 of an h-step forecast error, Diebold &
Mariano, 1995). Harvey, Leybourne & Newbold (1997) correct it for small
samples, :math:`DM^* = DM\\,\\sqrt{(n + 1 - 2h + h(h-1)/n)/n}`, and compare
it with Student's t on n-1 degrees of freedom.

Akaike weights :math:`w_i = e^{-\\Delta_i/2} / \\sum_j e^{-\\Delta_j/2}`, with
:math:`\\Delta_i` the AIC (or AICc) difference to the best, give the relative
support of comparable candidates (Burnham & Anderson, 2002, §2.9).

References
----------
Diebold, F. X. & Mariano, R. S. (1995). Comparing predictive accuracy.
*J. Business & Economic Statistics* 13(3), 253-263.
Harvey, D., Leybourne, S. & Newbold, P. (1997). Testing the equality of
prediction mean squared errors. *Int. J. Forecasting* 13(2), 281-291.
Burnham, K. P. & Anderson, D. R. (2002). *Model Selection and Multimodel
Inference*, 2nd ed., Springer.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from .errors import InputError


@dataclass(frozen=True)
class DieboldMariano:
    """Result of the Diebold-Mariano test with the Harvey-Leybourne-Newbold correction.

    ``mean_differential`` < 0 means the first candidate's losses are smaller.
    """

    n: int
    horizon: int
    loss: str
    mean_differential: float
    statistic: float
    corrected: float
    df: int
    p: float


def diebold_mariano(errors_1, errors_2, horizon: int = 1, loss: str = "squared") -> DieboldMariano:
    """Two-sided test of equal forecast accuracy of two error series.

    Parameters
    ----------
    errors_1, errors_2 : array_like
        Forecast errors of the two candidates on the same targets (pairs with
        a missing value are dropped).
    horizon : int
        Forecast horizon h of the errors (autocovariances up to h-1 enter).
    loss : {"squared", "absolute"}
    """
    e1 = np.asarray(errors_1, dtype=float)
    e2 = np.asarray(errors_2, dtype=float)
    if e1.shape != e2.shape:
        raise InputError("The two error series must have the same length.")
    keep = np.isfinite(e1) & np.isfinite(e2)
    e1, e2 = e1[keep], e2[keep]
    n = e1.size
    if n < 3:
        raise InputError("The Diebold-Mariano test needs at least 3 paired forecast errors.")
    if loss == "squared":
        d = e1**2 - e2**2
    elif loss == "absolute":
        d = np.abs(e1) - np.abs(e2)
    else:
        raise InputError(f"Unknown loss '{loss}'; use 'squared' or 'absolute'.")
    h = max(1, int(horizon))
    mean = float(d.mean())
    centred = d - mean
    gamma = [float(np.dot(centred[k:], centred[: n - k]) / n) for k in range(min(h, n))]
    long_run = gamma[0] + 2.0 * sum(gamma[1:])
    if long_run <= 0:
        stat = 0.0 if mean == 0 else math.copysign(math.inf, mean)
    else:
        stat = mean / math.sqrt(long_run / n)
    factor = math.sqrt((n + 1 - 2 * h + h * (h - 1) / n) / n)
    corrected = stat * factor
    p = float(2.0 * stats.t.sf(abs(corrected), n - 1))
    return DieboldMariano(n, h, loss, mean, stat, corrected, n - 1, p)


def akaike_weights(criteria) -> np.ndarray:
    """Akaike weights from comparable AIC (or AICc, BIC) values."""
    values = np.asarray(criteria, dtype=float)
    if values.size == 0 or not np.all(np.isfinite(values)):
        raise InputError("Akaike weights need finite criterion values for every candidate.")
    delta = values - values.min()
    w = np.exp(-delta / 2.0)
    return w / w.sum()
