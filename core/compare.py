"""Testing a step: is the extra term worth it? Nested F-test, likelihood ratio, criteria.

Two candidates are *comparable* when they model the same prepared series:
the same data, transform and differencing (d, D and, with seasonal
differencing, s). Log-likelihoods and information criteria of candidates
that differ in any of these are on different data and must not be compared
(Brockwell & Davis, 2016, §5.5; Hyndman & Athanasopoulos, 2021, §9.6).

One candidate *nests* another when every term of the smaller one is in the
larger. For nested candidates on the same estimation sample:

* the likelihood-ratio statistic :math:`LR = 2(\\ell_2 - \\ell_1)` is
  approximately :math:`\\chi^2(k_2 - k_1)` (Wilks, 1938);
* the F statistic :math:`F = \\frac{(S_1 - S_2)/(k_2 - k_1)}{S_2/(n - k_2)}`
  from the residual sums of squares is approximately
  :math:`F(k_2 - k_1, n - k_2)` (Box, Jenkins, Reinsel & Ljung, 2015, §7.2;
  the regression extra-sum-of-squares principle), where here ``k`` counts the
  coefficients (AR, MA, constant) but not :math:`\\sigma^2`.

References
----------
Wilks, S. S. (1938). The large-sample distribution of the likelihood ratio for
testing composite hypotheses. *Ann. Math. Statist.* 9(1), 60-62.
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis*, 5th ed., Wiley.
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., Springer.
Hyndman, R. J. & Athanasopoulos, G. (2021). *Forecasting: Principles and
Practice*, 3rd ed., OTexts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy import stats

from .errors import ComparisonError
from .result import Fit
from .spec import ModelSpec

#: A likelihood-ratio statistic below minus this is "negative" (the larger fit failed).
LR_NEGATIVE_TOLERANCE = 1e-6


def preparation_differences(a: ModelSpec, b: ModelSpec) -> list[tuple[str, str, str]]:
    """What differs in the preparation of two specs: ``(part, value in a, value in b)`` triples.

    ``part`` is ``"transform"``, ``"d"``, ``"D"`` or ``"s"`` (the period only
    matters with seasonal differencing). Empty when both model the same
    prepared series.
    """
    out = []
    if a.transform != b.transform:
        out.append(("transform", a.transform.label, b.transform.label))
    if a.d != b.d:
        out.append(("d", str(a.d), str(b.d)))
    if a.D != b.D:
        out.append(("D", str(a.D), str(b.D)))
    elif a.D and a.s != b.s:
        out.append(("s", str(a.s), str(b.s)))
    return out


_DIFFERENCE_WORDS = {
    "transform": "transform differs ({a} vs {b})",
    "d": "ordinary differencing differs (d={a} vs d={b})",
    "D": "seasonal differencing differs (D={a} vs D={b})",
    "s": "the seasonal period differs (s={a} vs s={b})",
}


def comparability(a: ModelSpec, b: ModelSpec) -> str:
    """Why two specs' likelihoods cannot be compared, or ``""`` when they can."""
    reasons = [_DIFFERENCE_WORDS[part].format(a=va, b=vb) for part, va, vb in preparation_differences(a, b)]
    if not reasons:
        return ""
    return (
        "These candidates model different versions of the data: " + "; ".join(reasons) + ". "
        "Their likelihoods and information criteria are not comparable; compare them on "
        "out-of-sample accuracy instead."
    )


@dataclass(frozen=True)
class CriteriaDifference:
    """Differences (second minus first) in the information criteria and σ²."""

    d_aic: float
    d_aicc: float
    d_bic: float
    d_hqic: float
    d_loglik: float
    d_sigma2: float


@dataclass(frozen=True)
class StepTest:
    """The test of a step from a smaller candidate to a larger one.

    Attributes
    ----------
    applies : bool
        False when no nested test applies; ``reason`` then says why.
    reason : str
    smaller, larger : str
        Labels of the two specs.
    df : int
        Number of added coefficients, :math:`k_2 - k_1`.
    lr_stat, lr_p : float
        Likelihood ratio and its :math:`\\chi^2(df)` p-value.
    f_stat, f_df1, f_df2, f_p : float
        Nested F statistic, its degrees of freedom and p-value.
    nobs : int
        Common estimation sample size n.
    criteria : CriteriaDifference or None
        Larger minus smaller; present whenever the candidates are comparable.
    negative_lr : bool
        The larger fit has a lower log-likelihood than the smaller one it
        nests: it stopped at a worse optimum and needs refitting.
    """

    applies: bool
    reason: str = ""
    smaller: str = ""
    larger: str = ""
    df: int = 0
    lr_stat: float = math.nan
    lr_p: float = math.nan
    f_stat: float = math.nan
    f_df1: int = 0
    f_df2: int = 0
    f_p: float = math.nan
    nobs: int = 0
    criteria: CriteriaDifference | None = None
    negative_lr: bool = False

    def verdict(self, alpha: float = 0.05) -> str:
        """One plain sentence on whether the added term(s) earned their place."""
        if not self.applies:
            return self.reason
        if self.negative_lr:
            return "The larger model fits worse than the smaller one it contains: its fit failed and must be redone."
        if self.lr_p < alpha and self.f_p < alpha:
            return f"The added term(s) improve the fit significantly (LR p = {self.lr_p:.3g}, F p = {self.f_p:.3g})."
        if self.lr_p >= alpha and self.f_p >= alpha:
            return f"The added term(s) do not improve the fit significantly (LR p = {self.lr_p:.3g}, F p = {self.f_p:.3g})."
        return f"The tests disagree (LR p = {self.lr_p:.3g}, F p = {self.f_p:.3g}): the evidence is borderline."


def criteria_difference(first: Fit, second: Fit) -> CriteriaDifference:
    """Second minus first for AIC, AICc, BIC, HQIC, log-likelihood and σ².

    Raises
    ------
    ComparisonError
        If the two candidates are not comparable.
    """
    reason = comparability(first.spec, second.spec)
    if reason:
        raise ComparisonError(reason)
    return CriteriaDifference(
        d_aic=second.aic - first.aic,
        d_aicc=second.aicc - first.aicc,
        d_bic=second.bic - first.bic,
        d_hqic=second.hqic - first.hqic,
        d_loglik=second.loglik - first.loglik,
        d_sigma2=second.sigma2 - first.sigma2,
    )


def nested_test(a: Fit, b: Fit) -> StepTest:
    """Test the smaller of two nested candidates against the larger.

    The order of ``a`` and ``b`` does not matter. Returns a
    :class:`StepTest` with ``applies=False`` and a plain reason when the
    candidates are not comparable, not nested, identical, failed or
    previews (a preview is never tested as if it were final).
    """
    for fit in (a, b):
        if not fit.ok:
            return StepTest(False, f"No test: the fit of {fit.spec.label} failed ({fit.failure}).")
        if fit.is_preview:
            return StepTest(False, "No test yet: the exact fit has not finished (only a preview is available).")
    reason = comparability(a.spec, b.spec)
    if reason:
        return StepTest(False, reason)
    criteria = criteria_difference(a, b)
    if a.spec.nests(b.spec) and not b.spec.nests(a.spec):
        small, large = b, a
        criteria = criteria_difference(b, a)
    elif b.spec.nests(a.spec) and not a.spec.nests(b.spec):
        small, large = a, b
    elif a.spec == b.spec:
        return StepTest(False, "Both candidates are the same model.", criteria=criteria)
    else:
        return StepTest(
            False,
            f"{a.spec.description} and {b.spec.description} are not nested (neither contains all terms "
            "of the other), so no F or likelihood-ratio test applies; compare their information criteria.",
            smaller=a.spec.label, larger=b.spec.label, criteria=criteria,
        )
    if small.nobs != large.nobs:
        return StepTest(
            False,
            f"The candidates use different estimation samples ({small.nobs} and {large.nobs} values).",
            criteria=criteria,
        )
    df = large.n_coefficients - small.n_coefficients
    n = large.nobs
    lr = 2.0 * (large.loglik - small.loglik)
    negative = lr < -LR_NEGATIVE_TOLERANCE
    lr_stat = max(lr, 0.0)
    lr_p = float(stats.chi2.sf(lr_stat, df))
    df2 = n - large.n_coefficients
    if df2 > 0 and large.rss > 0:
        f_stat = ((small.rss - large.rss) / df) / (large.rss / df2)
        f_p = float(stats.f.sf(f_stat, df, df2))
    else:
        f_stat, f_p = math.nan, math.nan
    return StepTest(
        True,
        smaller=small.spec.label,
        larger=large.spec.label,
        df=df,
        lr_stat=lr_stat,
        lr_p=lr_p,
        f_stat=float(f_stat),
        f_df1=df,
        f_df2=int(df2),
        f_p=f_p,
        nobs=n,
        criteria=criteria,
        negative_lr=negative,
    )
