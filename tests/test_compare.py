"""Step tests: F and likelihood ratio computed by their textbook formulas, comparability rules."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal, stats

from lagwright.core.compare import comparability, criteria_difference, nested_test
from lagwright.core.errors import ComparisonError
from lagwright.core.fit import fit_exact
from lagwright.core.preview import fit_preview
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec, Transform


@pytest.fixture(scope="module")
def series():
    rng = np.random.default_rng(11)
    e = rng.standard_normal(700)
    x = signal.lfilter([1.0], [1.0, -0.5, -0.25], e)[200:] + 20.0
    return Series(x)


@pytest.fixture(scope="module")
def ar1(series):
    return fit_exact(series, ModelSpec(ar=(1,), constant="mean"))


@pytest.fixture(scope="module")
def ar2(series):
    return fit_exact(series, ModelSpec(ar=(1, 2), constant="mean"))


def test_lr_and_f_by_formula(ar1, ar2):
    test = nested_test(ar1, ar2)
    assert test.applies and test.df == 1 and test.nobs == 500
    # Likelihood ratio, Wilks (1938): 2(l2 - l1) ~ chi2(k2 - k1).
    lr = 2 * (ar2.loglik - ar1.loglik)
    assert test.lr_stat == pytest.approx(lr)
    assert test.lr_p == pytest.approx(stats.chi2.sf(lr, 1))
    # Extra-sum-of-squares F (Box, Jenkins, Reinsel & Ljung, 2015, §7.2), k counts coefficients.
    s1, s2 = ar1.rss, ar2.rss
    f = ((s1 - s2) / 1) / (s2 / (500 - 3))
    assert test.f_stat == pytest.approx(f)
    assert test.f_p == pytest.approx(stats.f.sf(f, 1, 497))
    assert test.lr_p < 0.001 and "significantly" in test.verdict()


def test_order_does_not_matter(ar1, ar2):
    assert nested_test(ar2, ar1).lr_stat == pytest.approx(nested_test(ar1, ar2).lr_stat)


def test_criteria_differences(ar1, ar2):
    diff = criteria_difference(ar1, ar2)
    assert diff.d_aic == pytest.approx(ar2.aic - ar1.aic)
    assert diff.d_bic == pytest.approx(ar2.bic - ar1.bic)


def test_not_comparable_across_differencing_or_transform(series, ar1):
    other = fit_exact(series, ModelSpec(ar=(1,), d=1))
    test = nested_test(ar1, other)
    assert not test.applies and "d=0 vs d=1" in test.reason
    with pytest.raises(ComparisonError):
        criteria_difference(ar1, other)
    assert "transform" in comparability(ModelSpec(), ModelSpec(transform=Transform("log")))
    assert comparability(ModelSpec(ar=(1,)), ModelSpec(ma=(2,))) == ""


def test_non_nested_gives_reason_but_criteria(series, ar2):
    ma2 = fit_exact(series, ModelSpec(ma=(1, 2), constant="mean"))
    test = nested_test(ar2, ma2)
    assert not test.applies and "not nested" in test.reason
    assert test.criteria is not None


def test_preview_is_never_tested(series, ar1):
    preview = fit_preview(series, ModelSpec(ar=(1, 2), constant="mean"))
    test = nested_test(ar1, preview)
    assert not test.applies and "preview" in test.reason


def test_negative_lr_is_flagged(ar1, ar2):
    from dataclasses import replace

    broken = replace(ar2, loglik=ar1.loglik - 5.0)
    test = nested_test(ar1, broken)
    assert test.negative_lr and "failed" in test.verdict()


def test_negative_lr_triggers_refit_from_smaller(series, ar1, ar2):
    from dataclasses import replace

    from lagwright.core.evaluate import check_step

    broken = replace(ar2, loglik=ar1.loglik - 5.0)
    test, refit = check_step(series, ar1, broken)
    assert refit is not None and not test.negative_lr
    assert refit.loglik == pytest.approx(ar2.loglik, abs=1e-4)
    assert test.lr_stat == pytest.approx(nested_test(ar1, ar2).lr_stat, abs=1e-3)
