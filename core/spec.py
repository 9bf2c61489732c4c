"""The :class:`ModelSpec` value: which terms a candidate has, and the steps between specs.

A spec describes a multiplicative seasonal ARIMA model with (possibly
subset) lag sets,

.. math::

    \\phi(B)\\,\\Phi(B^s)\\,(1-B)^d (1-B^s)^D\\, g(y_t) = c + \\theta(B)\\,\\Theta(B^s)\\,a_t ,

where :math:`g` is the transform (none, log or Box-Cox), the AR polynomials
are :math:`1 - \\sum_i \\phi_i B^i` and the MA polynomials are
:math:`1 + \\sum_j \\theta_j B^j` (the sign convention of statsmodels and of
Brockwell & Davis; Box & Jenkins write the MA side with minus signs).

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., ch. 4 and 9.
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., §6.5.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Literal

from .errors import SpecError

TermKind = Literal["ar", "ma", "sar", "sma"]
ConstantKind = Literal["none", "mean", "drift"]
TERM_KINDS: tuple[str, ...] = ("ar", "ma", "sar", "sma")
CONSTANT_KINDS: tuple[str, ...] = ("none", "mean", "drift")
TRANSFORM_KINDS: tuple[str, ...] = ("none", "log", "boxcox")
INTERVENTION_KINDS: tuple[str, ...] = ("pulse", "level")

#: Largest lag accepted for any term (in units of the period for seasonal terms).
MAX_LAG = 2000


@dataclass(frozen=True)
class Transform:
    """A variance-stabilising transform applied before differencing.

    Attributes
    ----------
    kind : {"none", "log", "boxcox"}
    lam : float or None
        Box-Cox :math:`\\lambda` (required for ``"boxcox"``, ``None`` otherwise).
        :math:`g(y) = (y^\\lambda - 1)/\\lambda`, and :math:`\\log y` at
        :math:`\\lambda = 0` (Box & Cox, 1964).
    """

    kind: str = "none"
    lam: float | None = None

    def __post_init__(self) -> None:
        if self.kind not in TRANSFORM_KINDS:
            raise SpecError(
                f"Unknown transform '{self.kind}'; choose one of {', '.join(TRANSFORM_KINDS)}."
            )
        if self.kind == "boxcox":
            if self.lam is None:
                raise SpecError("A Box-Cox transform needs its lambda; estimate it or give it.")
            lam = float(self.lam)
            if not -5.0 <= lam <= 5.0:
                raise SpecError(f"Box-Cox lambda {lam:g} is outside the sensible range -5 to 5.")
            object.__setattr__(self, "lam", lam)
        elif self.lam is not None:
            raise SpecError(f"The '{self.kind}' transform takes no lambda.")

    @property
    def label(self) -> str:
        """Short human label: ``"none"``, ``"log"`` or ``"Box-Cox λ=0.25"``."""
        if self.kind == "boxcox":
            return f"Box-Cox λ={self.lam:.4g}"
        return self.kind


@dataclass(frozen=True, order=True)
class Intervention:
    """A known event at one observation, modelled by a regressor (regression with ARIMA errors).

    Attributes
    ----------
    position : int
        0-based position of the observation in the series.
    kind : {"pulse", "level"}
        ``"pulse"``: 1 at ``position``, 0 elsewhere (an additive outlier, a
        one-off effect); ``"level"``: 0 before ``position`` and 1 from it on
        (a level shift). Both act on the transformed scale, so after a log
        transform their effect is proportional (Box & Tiao, 1975; Chen &
        Liu, 1993).
    """

    position: int
    kind: str = "pulse"

    def __post_init__(self) -> None:
        if self.kind not in INTERVENTION_KINDS:
            raise SpecError(f"Unknown intervention '{self.kind}'; choose one of {', '.join(INTERVENTION_KINDS)}.")
        value = self.position
        if isinstance(value, bool) or int(value) != value or value < 0:
            raise SpecError(f"An intervention's position must be a whole number of 0 or more, not {value!r}.")
        object.__setattr__(self, "position", int(value))

    @property
    def name(self) -> str:
        """Parameter name: ``pulse.t37`` or ``level.t37`` (observation number, counting from 1)."""
        return f"{self.kind}.t{self.position + 1}"

    @property
    def label(self) -> str:
        """Short human label: ``pulse at obs. 37`` or ``level shift at obs. 37``."""
        what = "pulse" if self.kind == "pulse" else "level shift"
        return f"{what} at obs. {self.position + 1}"


def _intervention_set(values) -> tuple[Intervention, ...]:
    items = []
    for value in values:
        if isinstance(value, Intervention):
            items.append(value)
        elif isinstance(value, dict):
            items.append(Intervention(value.get("position", -1), value.get("kind", "pulse")))
        else:
            raise SpecError(f"An intervention must be given as kind and position, not {value!r}.")
    if len(set(items)) != len(items):
        raise SpecError("The same intervention appears twice.")
    return tuple(sorted(items))


def _lag_set(values, kind: str) -> tuple[int, ...]:
    lags = []
    for value in values:
        try:
            lag = int(value)
        except (TypeError, ValueError):
            raise SpecError(f"The {kind.upper()} lag '{value}' is not a whole number.") from None
        if lag != value or lag < 1:
            raise SpecError(f"The {kind.upper()} lag '{value}' must be a whole number of 1 or more.")
        if lag > MAX_LAG:
            raise SpecError(f"The {kind.upper()} lag {lag} is larger than the limit of {MAX_LAG}.")
        lags.append(lag)
    if len(set(lags)) != len(lags):
        raise SpecError(f"The {kind.upper()} lags {sorted(lags)} repeat a lag.")
    return tuple(sorted(lags))


@dataclass(frozen=True)
class ModelSpec:
    """What a candidate model contains; immutable, hashable, cheap to copy.

    Attributes
    ----------
    ar, ma : tuple of int
        Non-seasonal AR and MA lags (``(1, 12)`` is the subset model AR{1,12}).
    sar, sma : tuple of int
        Seasonal AR and MA lags in units of the period ``s`` (``(1,)`` is
        lag ``s``).
    d, D : int
        Orders of ordinary and seasonal differencing.
    s : int
        Seasonal period; 0 for none. Needed when ``D``, ``sar`` or ``sma``
        are used.
    transform : Transform
        Transform applied before differencing.
    constant : {"none", "mean", "drift"}
        ``"mean"`` is the process mean and is allowed only when d + D = 0;
        ``"drift"`` is the mean of the differenced series and is allowed only
        when d + D = 1 (a linear trend in the levels). Higher orders of
        differencing take no constant: it would be a polynomial trend of
        degree two or more, which is rarely meant.
    interventions : tuple of Intervention
        Pulse and level-shift regressors; the model is then a regression on
        them with ARIMA errors, differenced like the series.
    """

    ar: tuple[int, ...] = ()
    ma: tuple[int, ...] = ()
    sar: tuple[int, ...] = ()
    sma: tuple[int, ...] = ()
    d: int = 0
    D: int = 0
    s: int = 0
    transform: Transform = Transform()
    constant: str = "none"
    interventions: tuple[Intervention, ...] = ()

    def __post_init__(self) -> None:
        for kind in TERM_KINDS:
            object.__setattr__(self, kind, _lag_set(getattr(self, kind), kind))
        object.__setattr__(self, "interventions", _intervention_set(self.interventions))
        for name in ("d", "D", "s"):
            value = getattr(self, name)
            if isinstance(value, bool) or int(value) != value or value < 0:
                raise SpecError(f"'{name}' must be a whole number of 0 or more, not {value!r}.")
            object.__setattr__(self, name, int(value))
        if self.d > 2:
            raise SpecError(f"d = {self.d} is more differencing than any series needs; use 0, 1 or 2.")
        if self.D > 1:
            raise SpecError(f"D = {self.D}: seasonal differencing more than once is not supported; use 0 or 1.")
        if self.s == 1:
            raise SpecError("A seasonal period of 1 is no season; use 0 for none or a period of 2 or more.")
        seasonal_parts = bool(self.sar or self.sma or self.D)
        if seasonal_parts and self.s < 2:
            raise SpecError(
                "Seasonal terms or seasonal differencing need a seasonal period s of 2 or more "
                "(12 for monthly data with a yearly cycle, 7 for daily data with a weekly one)."
            )
        if not isinstance(self.transform, Transform):
            raise SpecError("The transform must be a Transform value.")
        if self.constant not in CONSTANT_KINDS:
            raise SpecError(
                f"Unknown constant '{self.constant}'; choose one of {', '.join(CONSTANT_KINDS)}."
            )
        order = self.d + self.D
        if self.constant == "mean" and order != 0:
            raise SpecError(
                f"A mean is a constant for an undifferenced series, but this model differences "
                f"{order} time(s). Use 'drift' with one difference, or 'none'."
            )
        if self.constant == "drift" and order != 1:
            raise SpecError(
                "A drift is the constant of a once-differenced series (d + D = 1); "
                f"this model has d + D = {order}. Use 'mean' without differencing, or 'none'."
            )

    # ----------------------------------------------------------------- queries
    @property
    def differencing_order(self) -> int:
        """Total number of differences, d + D."""
        return self.d + self.D

    @property
    def lost_observations(self) -> int:
        """Observations lost to differencing at the start of the series, d + D·s."""
        return self.d + self.D * self.s

    @property
    def n_arma_coefficients(self) -> int:
        """Number of AR and MA coefficients, seasonal ones included (the Ljung-Box df reduction)."""
        return len(self.ar) + len(self.ma) + len(self.sar) + len(self.sma)

    @property
    def has_constant(self) -> bool:
        return self.constant != "none"

    @property
    def n_coefficients(self) -> int:
        """ARMA coefficients, the constant and the intervention effects."""
        return self.n_arma_coefficients + int(self.has_constant) + len(self.interventions)

    @property
    def n_params(self) -> int:
        """Estimated parameters counted by AIC/AICc/BIC: coefficients, constant and σ²."""
        return self.n_coefficients + 1

    def lags(self, kind: str) -> tuple[int, ...]:
        _check_kind(kind)
        return getattr(self, kind)

    def same_data_as(self, other: ModelSpec) -> bool:
        """Whether both specs model the same prepared series (transform, d, D and, when used, s)."""
        return (
            self.transform == other.transform
            and self.d == other.d
            and self.D == other.D
            and (self.D == 0 or self.s == other.s)
        )

    def nests(self, other: ModelSpec) -> bool:
        """Whether ``other`` is a special case of ``self`` (every term of ``other`` is in ``self``).

        Both must model the same prepared series; seasonal terms must share
        the period.
        """
        if not self.same_data_as(other):
            return False
        if (other.sar or other.sma) and self.s != other.s:
            return False
        contained = all(set(other.lags(k)) <= set(self.lags(k)) for k in TERM_KINDS)
        contained = contained and set(other.interventions) <= set(self.interventions)
        constant_ok = other.constant == "none" or other.constant == self.constant
        return contained and constant_ok

    @property
    def has_contiguous_lags(self) -> bool:
        """Whether every lag up to each order is present (no subset lags)."""
        return all(self.lags(k) == tuple(range(1, len(self.lags(k)) + 1)) for k in TERM_KINDS)

    # ------------------------------------------------------------------ labels
    @property
    def label(self) -> str:
        """Textbook label: ``ARIMA(p,d,q)×(P,D,Q)_s``, or ``AR{1,12} MA{1}`` for subset lags."""
        seasonal = bool(self.sar or self.sma or self.D)
        if self.has_contiguous_lags:
            text = f"ARIMA({len(self.ar)},{self.d},{len(self.ma)})"
            if seasonal:
                text += f"×({len(self.sar)},{self.D},{len(self.sma)})_{self.s}"
            return text
        parts = []
        for kind, name in (("ar", "AR"), ("ma", "MA"), ("sar", "SAR"), ("sma", "SMA")):
            lags = self.lags(kind)
            if lags:
                parts.append(f"{name}{{{','.join(map(str, lags))}}}")
        if not parts:
            parts.append("white noise")
        if self.d:
            parts.append(f"d={self.d}")
        if self.D:
            parts.append(f"D={self.D}")
        if seasonal:
            parts.append(f"s={self.s}")
        return " ".join(parts)

    @property
    def description(self) -> str:
        """Label with constant and transform, e.g. ``ARIMA(1,1,0) + drift, log``."""
        text = self.label
        if self.has_constant:
            text += f" + {self.constant}"
        if self.interventions:
            if len(self.interventions) <= 2:
                text += "".join(f" + {i.kind} t{i.position + 1}" for i in self.interventions)
            else:
                text += f" + {len(self.interventions)} interventions"
        if self.transform.kind != "none":
            text += f", {self.transform.label}"
        return text

    # ------------------------------------------------------------------- steps
    def with_term(self, kind: str, lag: int) -> ModelSpec:
        """Return a new spec with one more lag of ``kind`` (``"ar"``, ``"ma"``, ``"sar"``, ``"sma"``)."""
        _check_kind(kind)
        current = self.lags(kind)
        if lag in current:
            raise SpecError(f"The model already has {kind.upper()} lag {lag}.")
        return replace(self, **{kind: current + (lag,)})

    def without_term(self, kind: str, lag: int) -> ModelSpec:
        """Return a new spec without the lag ``lag`` of ``kind``."""
        _check_kind(kind)
        current = self.lags(kind)
        if lag not in current:
            raise SpecError(f"The model has no {kind.upper()} lag {lag} to drop.")
        return replace(self, **{kind: tuple(x for x in current if x != lag)})

    def next_lag(self, kind: str) -> int:
        """The lag that "add the next term" adds: one past the largest present lag."""
        current = self.lags(kind)
        return (max(current) + 1) if current else 1

    def with_intervention(self, kind: str, position: int) -> ModelSpec:
        """Return a new spec with a pulse or level-shift regressor at ``position`` (0-based)."""
        item = Intervention(position, kind)
        if item in self.interventions:
            raise SpecError(f"The model already has a {item.label}.")
        return replace(self, interventions=self.interventions + (item,))

    def without_intervention(self, kind: str, position: int) -> ModelSpec:
        """Return a new spec without the intervention of ``kind`` at ``position``."""
        item = Intervention(position, kind)
        if item not in self.interventions:
            raise SpecError(f"The model has no {item.label} to drop.")
        return replace(self, interventions=tuple(i for i in self.interventions if i != item))

    def with_constant(self, constant: str) -> ModelSpec:
        """Return a new spec with the constant set to ``"none"``, ``"mean"`` or ``"drift"``."""
        return replace(self, constant=constant)

    def default_constant(self) -> str:
        """The constant a practitioner would start with: the mean if undifferenced, else none."""
        return "mean" if self.differencing_order == 0 else "none"

    # ------------------------------------------------------------ (de)serialise
    def to_dict(self) -> dict:
        """Plain JSON-ready dictionary (used by session files and ``--json`` output)."""
        return {
            "ar": list(self.ar),
            "ma": list(self.ma),
            "sar": list(self.sar),
            "sma": list(self.sma),
            "d": self.d,
            "D": self.D,
            "s": self.s,
            "transform": self.transform.kind,
            "lambda": self.transform.lam,
            "constant": self.constant,
            "interventions": [{"kind": i.kind, "position": i.position} for i in self.interventions],
        }

    @classmethod
    def from_dict(cls, data: dict) -> ModelSpec:
        """Inverse of :meth:`to_dict`; raises :class:`SpecError` on malformed input."""
        if not isinstance(data, dict):
            raise SpecError("A model specification must be a mapping of its parts.")
        try:
            return cls(
                ar=tuple(data.get("ar", ())),
                ma=tuple(data.get("ma", ())),
                sar=tuple(data.get("sar", ())),
                sma=tuple(data.get("sma", ())),
                d=data.get("d", 0),
                D=data.get("D", 0),
                s=data.get("s", 0),
                transform=Transform(data.get("transform", "none"), data.get("lambda")),
                constant=data.get("constant", "none"),
                interventions=tuple(data.get("interventions", ()) or ()),
            )
        except TypeError as exc:
            raise SpecError(f"A model specification is malformed: {exc}.") from None


def _check_kind(kind: str) -> None:
    if kind not in TERM_KINDS:
        raise SpecError(f"Unknown term kind '{kind}'; use one of {', '.join(TERM_KINDS)}.")
