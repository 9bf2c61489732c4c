"""Monte Carlo calibration of the residual checks on Gaussian white noise.

400 series of length 200 drawn from a fixed random state. Under the null
hypothesis the number of rejections at 5 % is Binomial(400, size), where
size is the test's actual rejection probability; each check asserts that
the count lies inside the central 99.9 % interval of that binomial law
(scipy.stats.binom), so a correct test fails this check about once in a
thousand runs of a *different* random state, and never for the fixed one.

Sources: Ljung & Box (1978), Biometrika 65(2):297-303 (Q(m) close to its
chi-squared size at these n and m); the exact size of the sign-change test
is computed from Binomial(n - 1, 1/2), the law of the count under
independence (common practice).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from lagwright.core.diagnostics import (
    cumulative_periodogram,
    ljung_box,
    runs_test,
    sign_change_test,
)

REPLICATIONS = 400
LENGTH = 200
ALPHA = 0.05
COVERAGE = 0.999

pytestmark = pytest.mark.slow


def tolerance_interval(size: float) -> tuple[int, int]:
    """Central 99.9 % interval of Binomial(REPLICATIONS, size) (scipy.stats.binom)."""
    tail = (1.0 - COVERAGE) / 2.0
    return (
        int(stats.binom.ppf(tail, REPLICATIONS, size)),
        int(stats.binom.ppf(1.0 - tail, REPLICATIONS, size)),
    )


@pytest.fixture(scope="module")
def outcomes() -> dict[str, np.ndarray]:
    rng = np.random.default_rng(20_261_201)
    lb, sign, runs, cp = [], [], [], []
    for _ in range(REPLICATIONS):
        x = rng.standard_normal(LENGTH)
        lb.append(ljung_box(x, 12, n_arma=0)[0].p)
        sign.append(sign_change_test(x).p_exact)
        runs.append(runs_test(x).p)
        cp.append(cumulative_periodogram(x).reject[ALPHA])
    return {
        "ljung_box": np.array(lb),
        "sign_change": np.array(sign),
        "runs": np.array(runs),
        "periodogram": np.array(cp),
    }


def attainable_sign_change_size(n: int) -> float:
    """Exact probability that the sign-change test rejects at 5 % for iid residuals.

    The count C is Binomial(n - 1, 1/2); the test rejects for the counts
    whose exact two-sided p-value is below 5 %. Because C is discrete the
    size is below 5 % (the test is conservative).
    """
    possible = n - 1
    counts = np.arange(possible + 1)
    p_values = np.array([stats.binomtest(int(c), possible, 0.5).pvalue for c in counts])
    return float(stats.binom.pmf(counts[p_values < ALPHA], possible, 0.5).sum())


def test_ljung_box_rejects_at_about_5_percent(outcomes):
    # Ljung & Box (1978): Q(12) ~ chi²(12) under white noise (n_arma = 0), size close to 5 %.
    count = int(np.sum(outcomes["ljung_box"] < ALPHA))
    low, high = tolerance_interval(ALPHA)
    assert low <= count <= high, f"{count} rejections, tolerance {low}..{high}"


def test_sign_change_exact_size_is_below_nominal():
    size = attainable_sign_change_size(LENGTH)
    # With 199 possible changes the attainable size is about 4.7 %.
    assert 0.04 < size <= ALPHA


def test_sign_change_rejects_at_its_attainable_size(outcomes):
    size = attainable_sign_change_size(LENGTH)
    count = int(np.sum(outcomes["sign_change"] < ALPHA))
    low, high = tolerance_interval(size)
    assert low <= count <= high, f"{count} rejections, size {size:.4f}, tolerance {low}..{high}"


def test_runs_test_rejects_at_about_5_percent(outcomes):
    # Wald & Wolfowitz (1940): normal approximation to the runs count, adequate at N = 200.
    count = int(np.sum(outcomes["runs"] < ALPHA))
    low, high = tolerance_interval(ALPHA)
    assert low <= count <= high, f"{count} rejections, tolerance {low}..{high}"


def test_cumulative_periodogram_is_not_liberal(outcomes):
    # The asymptotic Kolmogorov-Smirnov band (K = 1.36, standard tables) is
    # conservative for q = 99 ordinates (the finite-sample critical value is
    # smaller, and only the ordinates themselves are compared), so only an
    # upper bound is checked: no more rejections than a 5 % test would give.
    count = int(np.sum(outcomes["periodogram"]))
    _, high = tolerance_interval(ALPHA)
    assert count <= high, f"{count} rejections, upper tolerance {high}"
