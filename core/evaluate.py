"""One call from a (series, spec) pair to everything the panes, the CLI and the memo show.

:func:`evaluate` fits a candidate (exactly, or as a fast preview), runs every
residual check on it and, given its parent, tests the step. Results are
small frozen values; a fit is a pure function of (series, spec), so callers
cache evaluations by that key (the window keeps them per spec for its one
series).

All residual checks use the standardized one-step prediction errors
:math:`e_t / \\sqrt{F_t}` (for the exact fit these are independent N(0, 1)
under the model, exactly, whereas raw innovations have a larger variance at
the start of the series), with the burn-in left out. Ljung-Box degrees of
freedom are reduced by the number of AR and MA coefficients, seasonal ones
included.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from .compare import StepTest, nested_test
from .diagnostics import Diagnostics, diagnose
from .distribution import ResidualDistribution, residual_distribution
from .errors import LagwrightError
from .fit import DEFAULT_START, fit_exact
from .preview import fit_preview
from .result import Fit
from .series import Series
from .spec import ModelSpec


@dataclass(frozen=True, eq=False)
class Evaluation:
    """A fitted candidate with its residual checks and the test of its step.

    Attributes
    ----------
    fit : Fit
    diagnostics : Diagnostics or None
        ``None`` when the fit failed or the checks could not run; then
        ``diagnostics_error`` says why.
    step_test : StepTest or None
        Against the parent, when a parent was given.
    diagnostics_error : str
    hints : tuple of Hint
        Suggested next steps (:mod:`lagwright.core.hints`), when asked for.
    distribution : ResidualDistribution or None
        The standardized residuals sorted and binned (for the histogram and
        the quantile plot), made with the fit; None when the fit failed.
    """

    fit: Fit
    diagnostics: Diagnostics | None
    step_test: StepTest | None = None
    diagnostics_error: str = ""
    hints: tuple = ()
    distribution: ResidualDistribution | None = None

    @property
    def spec(self) -> ModelSpec:
        return self.fit.spec

    @property
    def is_preview(self) -> bool:
        return self.fit.is_preview


def diagnose_fit(fit: Fit) -> tuple[Diagnostics | None, str]:
    """Run :func:`~lagwright.core.diagnostics.diagnose` on a fit's residuals (burn-in excluded)."""
    if not fit.ok:
        return None, fit.failure
    _, std = fit.diagnostic_residuals()
    season = fit.spec.s if (fit.spec.sar or fit.spec.sma or fit.spec.D) else 0
    try:
        return diagnose(std, std, n_arma=fit.spec.n_arma_coefficients, season=season), ""
    except LagwrightError as exc:
        return None, f"The residual checks could not run: {exc}"


def evaluate(
    series: Series,
    spec: ModelSpec,
    *,
    kind: str = "exact",
    parent: Fit | None = None,
    start: str = DEFAULT_START,
    with_hints: bool = False,
) -> Evaluation:
    """Fit ``spec`` on ``series``, check its residuals and test it against ``parent``.

    Parameters
    ----------
    kind : {"exact", "preview"}
    parent : Fit, optional
        The exact fit of the candidate this one was made from.
    start : str
        Start strategy for the exact fit (see :func:`~lagwright.core.fit.fit_exact`).
    with_hints : bool
        Also compute the suggested next steps (a few extra preview fits).

    Raises
    ------
    InputError
        Only when the series itself is unusable. A model that cannot be
        fitted yields an :class:`Evaluation` whose fit says so.
    """
    if kind == "exact":
        fit = fit_exact(series, spec, start=start, parent=parent)
    elif kind == "preview":
        fit = fit_preview(series, spec)
    else:
        raise ValueError(f"unknown fit kind {kind!r}")
    diagnostics, error = diagnose_fit(fit)
    step = nested_test(parent, fit) if parent is not None and fit.kind == "exact" else None
    evaluation = Evaluation(fit=fit, diagnostics=diagnostics, step_test=step, diagnostics_error=error,
                            distribution=distribution_of(fit))
    if with_hints:
        from .hints import suggest

        evaluation = replace(evaluation, hints=suggest(evaluation, series))
    return evaluation


def distribution_of(fit: Fit) -> ResidualDistribution | None:
    """:func:`~lagwright.core.distribution.residual_distribution` of a fit's diagnostic residuals, if any."""
    if not fit.ok:
        return None
    _, z = fit.diagnostic_residuals()
    return residual_distribution(z) if z.size >= 2 else None


def check_step(series: Series, a: Fit, b: Fit) -> tuple[StepTest, Fit | None]:
    """Nested test of two candidates, refitting the larger one if its fit fell below the smaller.

    A negative likelihood-ratio statistic means the larger model's optimiser
    stopped at a worse optimum than the model it contains; the larger one is
    then refitted from the smaller one's estimates (zero for the extra terms)
    before the test is reported.

    Returns
    -------
    (StepTest, Fit or None)
        The test, and the refitted larger fit when a refit was needed.
    """
    test = nested_test(a, b)
    if not (test.applies and test.negative_lr):
        return test, None
    small, large = (a, b) if b.spec.nests(a.spec) else (b, a)
    refit = fit_exact(series, large.spec, parent=small)
    return nested_test(small, refit), refit
