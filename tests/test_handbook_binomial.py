"""Binomial table values (the sign-change test's reference distribution) against scipy.

Values as printed in standard cumulative binomial tables (e.g. the tables at
the back of most introductory statistics texts), recalled from memory.
"""

import pytest
from scipy import stats


@pytest.mark.parametrize(
    "n, x, cdf",
    [
        (20, 5, 0.0207),   # P(X <= 5), n = 20, p = 1/2
        (20, 14, 0.9793),  # P(X <= 14), n = 20, p = 1/2
        (10, 2, 0.0547),   # P(X <= 2), n = 10, p = 1/2
        (15, 3, 0.0176),   # P(X <= 3), n = 15, p = 1/2
    ],
)
def test_cumulative_binomial_table(n, x, cdf):
    assert stats.binom.cdf(x, n, 0.5) == pytest.approx(cdf, abs=0.5e-4)
