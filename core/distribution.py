"""The standardized residuals arranged for a histogram and a normal quantile plot.

Computed once per fit, with the fit (in the worker process, for the
window), so that drawing a candidate never sorts or bins 10^5 residuals on
the thread that answers the user.

Bins: the Freedman-Diaconis width :math:`h = 2\\,\\mathrm{IQR}\\,n^{-1/3}`
gives ``ceil(range / h)`` equal bins over the range of the residuals,
limited to :data:`MIN_BINS`..:data:`MAX_BINS` (Freedman & Diaconis, 1981;
the limits are our choice, to keep short series readable and long ones
uncluttered). Bins are right-open with the last one closed, numpy's
``histogram`` rule.

References
----------
Freedman, D. & Diaconis, P. (1981). On the histogram as a density
estimator: L2 theory. *Z. Wahrscheinlichkeitstheorie verw. Gebiete* 57,
453-476.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: Fewest and most bins the rule may give.
MIN_BINS, MAX_BINS = 10, 60


def freedman_diaconis_edges(
    values: np.ndarray, min_bins: int = MIN_BINS, max_bins: int = MAX_BINS
) -> np.ndarray:
    """Equal-width bin edges over the range of ``values`` by the Freedman-Diaconis rule.

    The number of bins is ``ceil((max - min) / h)`` with
    ``h = 2 · IQR · n^(-1/3)``, limited to ``min_bins..max_bins``
    (``min_bins`` when the IQR is zero).
    """
    values = np.asarray(values, dtype=float)
    lo, hi = float(values.min()), float(values.max())
    if hi <= lo:
        lo, hi = lo - 0.5, hi + 0.5
    q75, q25 = np.percentile(values, [75.0, 25.0])
    width = 2.0 * (q75 - q25) * values.size ** (-1.0 / 3.0)
    k = math.ceil((hi - lo) / width) if width > 0 else min_bins
    k = int(min(max(k, min_bins), max_bins))
    return np.linspace(lo, hi, k + 1)


@dataclass(frozen=True, eq=False)
class ResidualDistribution:
    """Standardized residuals ``z`` sorted and binned.

    Attributes
    ----------
    order : numpy.ndarray
        Indices that sort ``z`` (stable), int32.
    edges : numpy.ndarray
        Freedman-Diaconis bin edges.
    bin_of : numpy.ndarray
        The bin of each residual, int32.
    counts : numpy.ndarray
        Residuals per bin.
    """

    order: np.ndarray
    edges: np.ndarray
    bin_of: np.ndarray
    counts: np.ndarray

    @property
    def n(self) -> int:
        return int(self.order.size)

    @property
    def density(self) -> np.ndarray:
        """Bar heights count / (n · width): total area 1, comparable with a density curve."""
        return self.counts / (self.n * np.diff(self.edges))


def residual_distribution(z: np.ndarray) -> ResidualDistribution:
    """Sort and bin the finite standardized residuals ``z`` (at least 2)."""
    z = np.asarray(z, dtype=float)
    order = np.argsort(z, kind="stable").astype(np.int32)
    edges = freedman_diaconis_edges(z)
    k = edges.size - 1
    bin_of = np.clip(np.searchsorted(edges, z, side="right") - 1, 0, k - 1).astype(np.int32)
    counts = np.bincount(bin_of, minlength=k)
    return ResidualDistribution(order, edges, bin_of, counts)
