"""Sorting and binning of standardized residuals, against numpy's own histogram and sort."""

from __future__ import annotations

import numpy as np
import pytest

from lagwright.core.distribution import MAX_BINS, MIN_BINS, freedman_diaconis_edges, residual_distribution
from lagwright.core.evaluate import evaluate
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


@pytest.mark.parametrize("n", [200, 5_000, 100_000])
def test_bins_equal_numpys_freedman_diaconis_histogram(n):
    z = np.random.default_rng(n).standard_normal(n)
    shape = residual_distribution(z)
    # numpy.histogram_bin_edges(bins="fd") implements the same rule (within our 10..60 limits here).
    reference = np.histogram_bin_edges(z, bins="fd")
    if MIN_BINS <= reference.size - 1 <= MAX_BINS:
        np.testing.assert_allclose(shape.edges, reference, rtol=0, atol=1e-12)
    counts, _ = np.histogram(z, bins=shape.edges)
    np.testing.assert_array_equal(shape.counts, counts)
    assert shape.density @ np.diff(shape.edges) == pytest.approx(1.0)
    np.testing.assert_array_equal(np.bincount(shape.bin_of, minlength=shape.counts.size), shape.counts)


def test_order_sorts_the_residuals_stably():
    z = np.array([0.3, -1.0, 0.3, 2.0, -1.0])
    shape = residual_distribution(z)
    np.testing.assert_array_equal(z[shape.order], np.sort(z))
    np.testing.assert_array_equal(shape.order, np.argsort(z, kind="stable"))  # ties keep their order


def test_limits_and_a_constant_series():
    assert freedman_diaconis_edges(np.zeros(50)).size - 1 == MIN_BINS  # zero IQR: the fewest bins
    wide = np.r_[np.random.default_rng(1).standard_normal(1000), 1e6]  # one far outlier: the most bins
    assert freedman_diaconis_edges(wide).size - 1 == MAX_BINS


def test_evaluate_carries_the_distribution_of_its_fit():
    e = np.random.default_rng(3).standard_normal(400)
    ev = evaluate(Series(np.cumsum(e) * 0.1 + e), ModelSpec(d=1, ma=(1,)), kind="preview")
    _, z = ev.fit.diagnostic_residuals()
    np.testing.assert_array_equal(z[ev.distribution.order], np.sort(z, kind="stable"))
    assert ev.distribution.n == z.size
