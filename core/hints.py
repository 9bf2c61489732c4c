"""Hints: a short ranked list of next steps suggested by a candidate's own evidence.

Each rule reads one kind of evidence and proposes exactly one step (one term
added or dropped, or a change of preparation), with the number that
triggered it. The rules are the usual identification heuristics (Box,
Jenkins, Reinsel & Ljung, 2015, §6.2 and §8.2; Hyndman & Athanasopoulos,
2021, §9.7):

* a residual autocorrelation or partial autocorrelation beyond its ±2/√n
  band at lag k suggests a term at k (at a multiple of the season s, a
  seasonal term); whether AR or MA is decided by trying both with the fast
  preview and keeping the one that leaves the smaller residual variance;
* a coefficient with |z| < 2 has not earned its place: drop the weakest one,
  one at a time, never several at once;
* an AR root and an MA root that nearly cancel mean one term of each is
  redundant: drop the weaker of the pair first;
* an MA root on the unit circle, or a lag-1 residual autocorrelation near
  -0.5, are signs of over-differencing: take one difference fewer;
* squared residuals that are autocorrelated (McLeod-Li) or an ARCH-LM
  rejection indicate changing variance: consider a log or Box-Cox transform.

The score of a hint is the strength of its evidence (how far beyond the
band, how weak the coefficient); hints are sorted by it. They are
suggestions for the analyst, never applied without a click.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley.
Hyndman, R. J. & Athanasopoulos, G. (2021). *Forecasting: Principles and
Practice*, 3rd ed., OTexts, §9.7 and §9.9.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from .errors import LagwrightError, SpecError
from .evaluate import Evaluation
from .preview import fit_preview
from .series import Series
from .spec import INTERVENTION_KINDS, ModelSpec, Transform

#: Most hints returned.
MAX_HINTS = 5
#: When the residuals already pass the white-noise checks, a spike must exceed
#: the band by this factor to be suggested as a term (common practice).
WHITE_SPIKE_FACTOR = 1.5
#: Lags beyond this (non-seasonal) are not suggested as terms: a spike there
#: is more likely chance than structure (common practice).
MAX_SUGGESTED_LAG = 6


@dataclass(frozen=True)
class Hint:
    """One suggested step.

    Attributes
    ----------
    action : {"add", "drop", "difference"}
        ``"difference"`` changes d (``lag`` is then the new d) or proposes a
        transform (``kind="transform"``).
    kind : {"ar", "ma", "sar", "sma", "pulse", "level", "d", "transform"}
    lag : int or None
        The lag (seasonal lags in periods), the new d, or for an intervention
        its observation's 0-based position.
    reason : str
        One sentence.
    evidence : str
        The number that triggered it.
    score : float
        Strength of the evidence (higher first).
    """

    action: str
    kind: str
    lag: int | None
    reason: str
    evidence: str
    score: float

    def apply(self, spec: ModelSpec) -> ModelSpec:
        """The spec after this step (raises :class:`SpecError` if it does not apply)."""
        if self.kind in INTERVENTION_KINDS:
            if self.action == "add":
                return spec.with_intervention(self.kind, int(self.lag))
            return spec.without_intervention(self.kind, int(self.lag))
        if self.action == "add":
            return spec.with_term(self.kind, int(self.lag))
        if self.action == "drop":
            return spec.without_term(self.kind, int(self.lag))
        if self.kind == "d":
            constant = spec.constant
            order = int(self.lag) + spec.D
            if constant == "mean" and order != 0 or constant == "drift" and order != 1:
                constant = "none"
            return replace(spec, d=int(self.lag), constant=constant)
        if self.kind == "transform":
            return replace(spec, transform=Transform("log"))
        raise SpecError(f"Unknown hint action {self.action!r}.")

    @property
    def note(self) -> str:
        """Step note recording the hint: its reason and its evidence."""
        return f"{self.reason} ({self.evidence})"

    def to_dict(self) -> dict:
        return {"action": self.action, "kind": self.kind, "lag": self.lag, "reason": self.reason,
                "evidence": self.evidence, "score": round(float(self.score), 4)}


def _article(word: str) -> str:
    return f"an {word}" if word[0] in "AEIOUaeiou" or word.startswith("MA") else f"a {word}"


def _name(kind: str) -> str:
    return {"ar": "AR", "ma": "MA", "sar": "seasonal AR", "sma": "seasonal MA"}[kind]


def _correlation_hints(spec: ModelSpec, evaluation: Evaluation, series: Series | None) -> list[Hint]:
    """Spikes beyond the band point at a lag; the fast preview decides between an AR and an MA term there.

    The autocorrelation signature alone (an ACF spike for MA, a PACF spike
    for AR) is ambiguous in the residuals of a fitted model. So both terms
    are tried with the conditional-sum-of-squares preview (milliseconds) and
    the one with the smaller residual variance is proposed; without the
    series, the larger of the two spikes decides.
    """
    cg = evaluation.diagnostics.correlogram
    acf, pacf, band = np.asarray(cg.acf), np.asarray(cg.pacf), float(cg.band)
    season = spec.s if spec.s >= 2 else 0
    # Residuals that pass the white-noise checks show an isolated spike just
    # beyond the 95 % band at about one lag in twenty by chance: then only
    # clear spikes count (common practice: do not chase every spike).
    threshold = band * (WHITE_SPIKE_FACTOR if evaluation.diagnostics.white_noise_verdict.label == "white" else 1.0)
    out: list[Hint] = []
    for i, lag in enumerate(np.asarray(cg.lags)):
        lag = int(lag)
        a, p = abs(acf[i]), abs(pacf[i])
        if max(a, p) <= threshold:
            continue
        seasonal = bool(season) and lag % season == 0
        if (not seasonal and lag > MAX_SUGGESTED_LAG) or (seasonal and lag // season > 2):
            continue
        term_lag = lag // season if seasonal else lag
        kinds = ("sar", "sma") if seasonal else ("ar", "ma")
        options = [k for k in kinds if term_lag not in spec.lags(k)]
        if not options:
            continue
        sigma2 = {k: _preview_sigma2(series, spec.with_term(k, term_lag)) for k in options} if series else {}
        if sigma2 and all(np.isfinite(v) for v in sigma2.values()):
            kind = min(options, key=lambda k: sigma2[k])
            versus = ", ".join(f"{_name(k)} σ² {sigma2[k]:.4g}" for k in options)
            evidence = f"r({lag}) = {acf[i]:+.3f}, partial {pacf[i]:+.3f}, band ±{band:.3f}; preview: {versus}"
        else:
            kind = options[-1] if (a >= p and options[-1] in ("ma", "sma")) or len(options) == 1 else options[0]
            evidence = f"r({lag}) = {acf[i]:+.3f}, partial {pacf[i]:+.3f}, band ±{band:.3f}"
        where = f"seasonal lag {term_lag} (lag {lag})" if seasonal else f"lag {lag}"
        out.append(Hint(
            "add", kind, term_lag,
            f"Residual correlation at lag {lag} is beyond its band: add {_article(_name(kind))} term at {where}.",
            evidence,
            score=max(a, p) / band,
        ))
    return out


def _preview_sigma2(series: Series, spec: ModelSpec) -> float:
    try:
        fit = fit_preview(series, spec)
    except LagwrightError:
        return float("nan")
    return fit.sigma2 if fit.ok else float("nan")


def _weak_term_hint(spec: ModelSpec, evaluation: Evaluation) -> list[Hint]:
    fit = evaluation.fit
    weakest = None
    for p in fit.params:
        if p.name in ("sigma2", "const") or not np.isfinite(p.stat) or abs(p.stat) >= 2.0:
            continue
        if weakest is None or abs(p.stat) < abs(weakest.stat):
            weakest = p
    if weakest is None:
        return []
    kind, lag = _term_of(spec, weakest.name)
    return [Hint(
        "drop", kind, lag,
        f"{weakest.name} has not earned its place (|z| < 2): drop it, and only it, then refit.",
        f"{weakest.name} = {weakest.value:+.4f}, z = {weakest.stat:+.2f}",
        score=2.0 - abs(weakest.stat) + 1.0,
    )]


def _term_of(spec: ModelSpec, name: str) -> tuple[str, int]:
    for item in spec.interventions:
        if item.name == name:
            return item.kind, item.position
    lag = int(name.rsplit("L", 1)[1])
    if name.startswith("ar.S."):
        return "sar", lag // spec.s
    if name.startswith("ma.S."):
        return "sma", lag // spec.s
    return ("ar" if name.startswith("ar.") else "ma"), lag


def _cancellation_hint(spec: ModelSpec, evaluation: Evaluation) -> list[Hint]:
    fit = evaluation.fit
    if not fit.root_warnings.cancelling:
        return []
    z = {p.name: abs(p.stat) if np.isfinite(p.stat) else 0.0 for p in fit.params}
    ar_root, ma_root = fit.root_warnings.cancelling[0]
    candidates = [n for n in z if n.startswith(("ar.", "ma.")) and
                  ((n.startswith("ar.S.") and ar_root.factor == "sar") or
                   (n.startswith("ar.") and not n.startswith("ar.S.") and ar_root.factor == "ar") or
                   (n.startswith("ma.S.") and ma_root.factor == "sma") or
                   (n.startswith("ma.") and not n.startswith("ma.S.") and ma_root.factor == "ma"))]
    if not candidates:
        return []
    name = min(candidates, key=lambda n: z[n])
    kind, lag = _term_of(spec, name)
    return [Hint(
        "drop", kind, lag,
        "An AR root and an MA root nearly cancel: one term of each is redundant; drop the weaker first.",
        f"AR root {ar_root.value.real:+.3f}{ar_root.value.imag:+.3f}i, MA root "
        f"{ma_root.value.real:+.3f}{ma_root.value.imag:+.3f}i",
        score=3.5,
    )]


def _overdifferencing_hint(spec: ModelSpec, evaluation: Evaluation) -> list[Hint]:
    if spec.d == 0:
        return []
    fit = evaluation.fit
    ma_unit = [r for r in fit.root_warnings.near_unit if r.factor == "ma"]
    r1 = float(evaluation.diagnostics.correlogram.acf[0])
    if not ma_unit and r1 > -0.4:
        return []
    evidence = (f"MA root modulus {ma_unit[0].modulus:.3f}" if ma_unit else f"r(1) = {r1:+.3f}")
    return [Hint(
        "difference", "d", spec.d - 1,
        f"Signs of over-differencing: take one ordinary difference fewer (d = {spec.d - 1}).",
        evidence,
        score=10.0 + (abs(r1) if r1 < 0 else 0.0),  # the first thing to fix: it changes everything else
    )]


#: A residual this many standard deviations out is suggested as a pulse: beyond
#: chance for any series length met here (P(|z| > 4) = 6e-5; common practice).
PULSE_Z = 4.0


def _outlier_hint(spec: ModelSpec, evaluation: Evaluation, series: Series | None) -> list[Hint]:
    fit = evaluation.fit
    z = np.asarray(fit.diagnostic_residuals()[1], dtype=float)
    if z.size == 0 or not np.isfinite(z).any():
        return []
    i = int(np.nanargmax(np.abs(z)))
    if abs(z[i]) < PULSE_Z:
        return []
    position = int(fit.diagnostic_positions()[i])
    if any(item.position == position for item in spec.interventions):
        return []
    when = series.time_labels()[position] if series is not None and series.times is not None \
        else f"obs. {position + 1}"
    return [Hint(
        "add", "pulse", position,
        f"The residual at {when} is far beyond chance: if a known event explains it, model it with a pulse "
        "(or a level shift, if the level stayed changed).",
        f"z = {z[i]:+.2f} at {when}",
        score=abs(z[i]) - 2.0,
    )]


def _variance_hint(spec: ModelSpec, evaluation: Evaluation, positive: bool) -> list[Hint]:
    if spec.transform.kind != "none" or not positive:
        return []
    diag = evaluation.diagnostics
    ml = [r for r in diag.mcleod_li if np.isfinite(r.p)]
    ml_p = min((r.p for r in ml), default=1.0)
    if ml_p >= 0.01 and diag.arch.p >= 0.01:
        return []
    return [Hint(
        "difference", "transform", None,
        "The residual variance changes over time: consider a log (or Box-Cox) transform.",
        f"McLeod-Li p = {ml_p:.3g}, ARCH-LM p = {diag.arch.p:.3g}",
        score=1.5,
    )]


def suggest(evaluation: Evaluation, series: Series | None = None, limit: int = MAX_HINTS) -> tuple[Hint, ...]:
    """Ranked next steps for one evaluated candidate (most useful first).

    Parameters
    ----------
    evaluation : Evaluation
        An exact (or preview) evaluation with diagnostics.
    series : Series, optional
        The data: lets the preview decide between AR and MA terms, and a
        transform be proposed only for positive data.
    limit : int
        Most hints returned.
    """
    if evaluation.diagnostics is None or not evaluation.fit.ok:
        return ()
    spec = evaluation.spec
    observed = None if series is None else series.values[~np.isnan(series.values)]
    positive_data = observed is not None and observed.size > 0 and bool(observed.min() > 0)
    hints = (
        _overdifferencing_hint(spec, evaluation)
        + _cancellation_hint(spec, evaluation)
        + _weak_term_hint(spec, evaluation)
        + _correlation_hints(spec, evaluation, series)
        + _variance_hint(spec, evaluation, positive_data)
        + _outlier_hint(spec, evaluation, series)
    )
    seen: set[tuple] = set()
    ranked = []
    for hint in sorted(hints, key=lambda h: -h.score):
        key = (hint.action, hint.kind, hint.lag)
        if key in seen:
            continue
        try:
            hint.apply(spec)
        except SpecError:
            continue
        seen.add(key)
        ranked.append(hint)
    return tuple(ranked[:limit])
