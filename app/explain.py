"""Plain words for every number the views show, and how those numbers are written.

:data:`TOOLTIPS` maps a statistic's key to one sentence in our own words; the
tests panel, the lineage view and the compare view attach them as tooltips so
a reader can ask any cell what it means. :func:`format_number` and
:func:`format_p` are the one place that decides how a number looks on screen,
so the same value reads the same in every view.

This module imports no Qt: it is plain text and string formatting.
"""

from __future__ import annotations

import math

#: One plain sentence per statistic key.
TOOLTIPS: dict[str, str] = {
    # residual checks
    "white_noise": (
        "Overall reading of the residuals from three checks at 5 % (main Ljung-Box, exact "
        "sign-change test, cumulative periodogram band): white, doubtful (one mild failure) "
        "or not white."
    ),
    "ljung_box": (
        "Tests whether the first m residual autocorrelations are jointly zero; "
        "df = m minus the number of AR and MA coefficients."
    ),
    "mcleod_li": (
        "Ljung-Box statistic of the squared residuals: small p-values point to a variance "
        "that changes with time (ARCH effects); df = m, with no reduction for the model."
    ),
    "arch": (
        "Engle's Lagrange-multiplier test: regresses squared residuals on their own past; "
        "a small p-value says the residual variance clusters in time."
    ),
    "sign_change": (
        "Counts how often consecutive residuals change sign; independent residuals change "
        "sign about half the time, too few changes mean runs of one sign."
    ),
    "runs": (
        "Counts runs of residuals above and below their median and compares the count with "
        "what pure chance would give."
    ),
    "cumulative_periodogram": (
        "The cumulated periodogram of white noise follows a straight line; the check fails "
        "when it strays outside the Kolmogorov-Smirnov band at 5 %."
    ),
    "jarque_bera": (
        "Combines the skewness and excess kurtosis of the standardized residuals; a small "
        "p-value says their distribution is not normal."
    ),
    "shapiro": (
        "Shapiro-Wilk test of normality of the standardized residuals: compares their "
        "ordered values with normal quantiles; W near 1 is normal-looking."
    ),
    "dagostino": (
        "D'Agostino-Pearson K² test of normality, used for long series: joins separate "
        "tests of skewness and kurtosis into one chi-squared statistic on 2 df."
    ),
    "outliers": (
        "Standardized residuals beyond ±3, against the number a normal white-noise series "
        "of this length would show by chance; p is the chance of at least this many."
    ),
    "skewness": "Sample skewness of the standardized residuals; 0 for a symmetric distribution.",
    "excess_kurtosis": (
        "Sample excess kurtosis of the standardized residuals; 0 for the normal, positive "
        "when extreme values are more common than the normal allows."
    ),
    # parameters
    "estimate": "The maximum-likelihood estimate of the parameter.",
    "se": "Standard error of the estimate, from the curvature of the log-likelihood at its peak.",
    "t": (
        "z statistic: the estimate divided by its standard error; beyond ±2 the term is "
        "clearly different from zero."
    ),
    "p": (
        "Two-sided p-value: the chance of a statistic at least this extreme if the null "
        "hypothesis were true; below 0.05 counts as evidence against it here."
    ),
    "weak": (
        "|z| < 2: this term is not clearly different from zero and may not have earned its "
        "place in the model."
    ),
    "sigma2_param": (
        "The innovation variance is positive by construction, so no z test against zero "
        "is shown for it."
    ),
    # fit summary
    "sigma2": "σ², the estimated variance of the one-step prediction errors (the innovations).",
    "loglik": "Maximized log-likelihood of the differenced series; higher is a closer fit.",
    "k": "k, the number of estimated parameters: AR and MA coefficients, the constant and σ².",
    "n": "n, the number of values of the differenced series the likelihood uses.",
    "aic": "Akaike's information criterion, −2 log-likelihood + 2k; lower is better among comparable candidates.",
    "aicc": "AIC with a small-sample correction that penalizes extra parameters more when n is small; lower is better.",
    "bic": "Schwarz's Bayesian criterion, −2 log-likelihood + k log n; penalizes extra parameters harder than AIC.",
    "hqic": "Hannan-Quinn criterion, −2 log-likelihood + 2k log log n; its penalty sits between AIC and BIC.",
    "cov_type": "How the standard errors were computed.",
    "convergence": (
        "Whether the optimizer reached a maximum of the likelihood, with which method, how "
        "many iterations and from which start values."
    ),
    "roots": (
        "Roots of the AR and MA polynomials: near the unit circle they hint at wrong "
        "differencing, and an AR root close to an MA root means the two terms nearly cancel."
    ),
    "warnings": "What the estimator and the root checks reported about this fit, in plain words.",
    # step test and comparison
    "step_test": "Tests whether the term(s) added in this step improve the fit enough to keep.",
    "f_test": (
        "Nested F-test: does the drop in the residual sum of squares exceed what the added "
        "coefficients would buy by chance? df = (added coefficients, n minus coefficients)."
    ),
    "lr": (
        "Likelihood-ratio test: twice the gain in log-likelihood, referred to chi-squared "
        "with df = number of added coefficients."
    ),
    "delta_aic": "Change in AIC from the smaller to the larger model; negative favours the larger.",
    "delta_aicc": (
        "AICc minus the lowest AICc among candidates fitted to the same prepared data "
        "(same transform and differencing); 0 marks the best of its group."
    ),
    "delta_aicc_step": "Change in AICc from the smaller to the larger model; negative favours the larger.",
    "delta_bic": "Change in BIC from the smaller to the larger model; negative favours the larger.",
    "difference": "B minus A; shown only when both candidates model the same prepared data.",
    "verdict": "Plain-words reading of the test at the 5 % level.",
    "nested": (
        "One candidate nests another when it contains all of the other's terms; only then "
        "do the F and likelihood-ratio tests apply."
    ),
    "comparable": (
        "Likelihoods and information criteria can be compared only between candidates with "
        "the same transform and differencing."
    ),
    # lineage
    "candidate": "Candidate id and its model; children were made from their parent by one step.",
    "step": "What the step from the parent changed.",
    "lb_p": "p-value of the main Ljung-Box test of the residuals (the lag the verdict uses).",
    "fit_mark": (
        "✓ converged, ! optimizer did not report convergence, ✗ fit failed, … fitting, "
        "≈ only the fast preview is available."
    ),
    "preview": (
        "A fast conditional-sum-of-squares approximation shown while the exact fit runs; "
        "never report these numbers as final."
    ),
    "acf": "Residual autocorrelations with the ±2/√n band that about 95 % of white-noise bars stay inside.",
    "std_residuals": "Standardized one-step prediction errors; for a good model they look like N(0, 1) noise.",
}


def tooltip(key: str) -> str:
    """The sentence for ``key``, or ``""`` when there is none."""
    return TOOLTIPS.get(key, "")


def _finite(x) -> bool:
    try:
        return math.isfinite(float(x))
    except (TypeError, ValueError):
        return False


def format_number(x, decimals: int = 4) -> str:
    """A number with ``decimals`` decimals, or in 4 significant digits when very large or small.

    NaN and missing values become ``"—"``; infinities ``"∞"`` / ``"-∞"``. Minus signs stay ASCII so
    copied numbers paste into a spreadsheet.
    """
    if x is None:
        return "—"
    try:
        value = float(x)
    except (TypeError, ValueError):
        return "—"
    if math.isnan(value):
        return "—"
    if math.isinf(value):
        return "∞" if value > 0 else "-∞"
    size = abs(value)
    if value != 0.0 and (size >= 1e7 or size < 10.0 ** (-decimals)):
        return f"{value:.4g}"
    text = f"{value:.{decimals}f}"
    if text.lstrip("-") == f"{0:.{decimals}f}":
        text = text.lstrip("-")  # no "-0.0000"
    return text


def format_signed(x, decimals: int = 4) -> str:
    """Like :func:`format_number` but with an explicit ``+`` for positive differences."""
    text = format_number(x, decimals)
    if _finite(x) and float(x) > 0:
        return "+" + text
    return text


def format_p(p) -> str:
    """A p-value: four decimals, ``"<0.0001"`` below that, ``"—"`` when missing."""
    if not _finite(p):
        return "—"
    value = float(p)
    if value < 1e-4:
        return "<0.0001"
    return f"{min(value, 1.0):.4f}"


def format_count(x) -> str:
    """A whole number, ``"—"`` when missing."""
    if x is None:
        return "—"
    return str(int(x))
