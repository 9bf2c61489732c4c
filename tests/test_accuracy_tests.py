"""Diebold-Mariano (with the small-sample correction) and Akaike weights against their published formulas."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from lagwright.core.accuracy_tests import akaike_weights, diebold_mariano
from lagwright.core.errors import InputError


def _dm_by_the_formula(e1, e2, h):
    # Written out independently from Diebold & Mariano (1995, eq. for S1) and
    # Harvey, Leybourne & Newbold (1997, eq. 9): loss differential, long-run
    # variance from autocovariances 0..h-1, correction factor, t(n-1).
    d = e1**2 - e2**2
    n = len(d)
    dbar = sum(d) / n
    def gamma(k):
        return sum((d[t] - dbar) * (d[t - k] - dbar) for t in range(k, n)) / n
    v = (gamma(0) + 2 * sum(gamma(k) for k in range(1, h))) / n
    dm = dbar / v**0.5
    star = dm * ((n + 1 - 2 * h + h * (h - 1) / n) / n) ** 0.5
    return dm, star, 2 * stats.t.sf(abs(star), n - 1)


@pytest.mark.parametrize("h", [1, 3])
def test_dm_matches_published_formula(h):
    rng = np.random.default_rng(12)
    e1 = rng.standard_normal(40)
    e2 = 1.3 * rng.standard_normal(40) + 0.2
    res = diebold_mariano(e1, e2, horizon=h)
    dm, star, p = _dm_by_the_formula(e1, e2, h)
    assert res.statistic == pytest.approx(dm)
    assert res.corrected == pytest.approx(star)
    assert res.p == pytest.approx(p)
    assert res.df == 39


def test_dm_identical_errors():
    e = np.arange(10.0)
    res = diebold_mariano(e, e)
    assert res.mean_differential == 0 and res.p == pytest.approx(1.0)


def test_dm_bad_input():
    with pytest.raises(InputError):
        diebold_mariano([1.0, 2.0], [1.0, 2.0])
    with pytest.raises(InputError):
        diebold_mariano([1.0, 2.0, 3.0], [1.0, 2.0])


def test_akaike_weights():
    # Burnham & Anderson (2002, §2.9): w_i = exp(-delta_i/2) / sum_j exp(-delta_j/2).
    w = akaike_weights([100.0, 102.0, 110.0])
    raw = np.exp(-np.array([0.0, 2.0, 10.0]) / 2)
    np.testing.assert_allclose(w, raw / raw.sum())
    assert w.sum() == pytest.approx(1.0)
