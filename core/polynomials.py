"""Lag polynomials of a spec: expansion, parameter names, roots and their warnings.

Conventions (those of statsmodels' ARIMA): the AR side is
:math:`\\phi(B)\\Phi(B^s) = (1 - \\sum_i \\phi_i B^i)(1 - \\sum_j \\Phi_j B^{js})`,
the MA side :math:`\\theta(B)\\Theta(B^s) = (1 + \\sum_i \\theta_i B^i)(1 +
\\sum_j \\Theta_j B^{js})`. A root :math:`z` of a lag polynomial is a
complex number with :math:`\\phi(z) = 0`; the AR part is stationary and the
MA part invertible when every root lies outside the unit circle
(Brockwell & Davis, 2016, §3.1).

References
----------
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., Springer, §3.1 and §6.5.
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis*, 5th ed., §7.3.5 (parameter redundancy).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from .spec import ModelSpec

#: A root with modulus below this is reported as near the unit circle
#: (common practice; the exact threshold is a matter of judgement).
NEAR_UNIT_MODULUS = 1.05
#: An AR and an MA root whose inverses (the zeros 1/z, inside the unit circle
#: for a stationary, invertible model) are closer than this are reported as
#: nearly cancelling (common practice; a judgement threshold).
CANCELLATION_DISTANCE = 0.1


def param_names(spec: ModelSpec) -> tuple[str, ...]:
    """Parameter names in statsmodels' order: const, interventions, ar.L*, ma.L*, ar.S.L*, ma.S.L*, sigma2."""
    names = ["const"] if spec.has_constant else []
    names += [item.name for item in spec.interventions]
    names += [f"ar.L{lag}" for lag in spec.ar]
    names += [f"ma.L{lag}" for lag in spec.ma]
    names += [f"ar.S.L{lag * spec.s}" for lag in spec.sar]
    names += [f"ma.S.L{lag * spec.s}" for lag in spec.sma]
    return tuple(names) + ("sigma2",)


def _factor(coefs: Mapping[int, float], sign: float) -> np.ndarray:
    degree = max(coefs, default=0)
    poly = np.zeros(degree + 1)
    poly[0] = 1.0
    for lag, value in coefs.items():
        poly[lag] += sign * value
    return poly


def factors(spec: ModelSpec, params: Mapping[str, float]) -> dict[str, np.ndarray]:
    """Coefficient arrays (ascending powers of B) of the four factor polynomials.

    The seasonal factors are returned in powers of :math:`B^s` (so
    ``[1, -0.5]`` for :math:`1 - 0.5 B^{s}`).
    """
    return {
        "ar": _factor({lag: params[f"ar.L{lag}"] for lag in spec.ar}, -1.0),
        "ma": _factor({lag: params[f"ma.L{lag}"] for lag in spec.ma}, +1.0),
        "sar": _factor({lag: params[f"ar.S.L{lag * spec.s}"] for lag in spec.sar}, -1.0),
        "sma": _factor({lag: params[f"ma.S.L{lag * spec.s}"] for lag in spec.sma}, +1.0),
    }


def _spread(poly: np.ndarray, s: int) -> np.ndarray:
    """Coefficients of p(B^s) given those of p(x)."""
    if poly.size == 1 or s <= 1:
        return poly.copy()
    out = np.zeros((poly.size - 1) * s + 1)
    out[::s] = poly
    return out


def expanded_polynomials(spec: ModelSpec, params: Mapping[str, float]) -> tuple[np.ndarray, np.ndarray]:
    """Full AR and MA lag polynomials :math:`\\phi(B)\\Phi(B^s)` and :math:`\\theta(B)\\Theta(B^s)`.

    Returns arrays in ascending powers of B starting with 1; they plug
    straight into ``scipy.signal.lfilter(ar, ma, ...)`` to turn a series
    into residuals.
    """
    f = factors(spec, params)
    ar = np.convolve(f["ar"], _spread(f["sar"], spec.s))
    ma = np.convolve(f["ma"], _spread(f["sma"], spec.s))
    return ar, ma


@dataclass(frozen=True)
class Root:
    """One root of a factor polynomial.

    Attributes
    ----------
    factor : {"ar", "ma", "sar", "sma"}
    value : complex
        The root z in the B plane (for a seasonal factor, one of the s roots
        of :math:`\\Phi(B^s) = 0`).
    modulus : float
        :math:`|z|`.
    season : int
        1 for a non-seasonal factor, s for a seasonal one.
    """

    factor: str
    value: complex
    modulus: float
    season: int = 1

    @property
    def factor_modulus(self) -> float:
        """Modulus of the root in the factor's own variable (:math:`B^s` for a seasonal factor).

        A seasonal coefficient of -0.8 puts its s roots at modulus
        :math:`1.25^{1/s}` in the B plane (1.03 for s = 7), close to the circle
        for every s although the factor is far from a unit root; the factor
        root itself has modulus 1.25. Nearness to the unit circle is judged
        on this value.
        """
        return self.modulus ** self.season

    @property
    def near_unit(self) -> bool:
        return self.factor_modulus < NEAR_UNIT_MODULUS

    @property
    def side(self) -> str:
        return "AR" if self.factor in ("ar", "sar") else "MA"


def _roots_of(poly: np.ndarray, s: int) -> np.ndarray:
    if poly.size <= 1:
        return np.empty(0, dtype=complex)
    x = np.roots(poly[::-1]).astype(complex)  # roots in x = B^s
    if s <= 1:
        return x
    k = np.arange(s)
    out = []
    for r in x:
        base = abs(r) ** (1.0 / s)
        angle = np.angle(r)
        out.append(base * np.exp(1j * (angle + 2 * np.pi * k) / s))
    return np.concatenate(out)


def roots(spec: ModelSpec, params: Mapping[str, float]) -> tuple[Root, ...]:
    """Roots of each factor polynomial with their moduli (seasonal ones in the B plane)."""
    out: list[Root] = []
    for factor, poly in factors(spec, params).items():
        s = spec.s if factor in ("sar", "sma") else 1
        for value in _roots_of(poly, s):
            out.append(Root(factor, complex(value), float(abs(value)), s))
    return tuple(out)


@dataclass(frozen=True)
class RootWarnings:
    """What the roots say about the fit.

    Attributes
    ----------
    near_unit : tuple of Root
        Roots with modulus below :data:`NEAR_UNIT_MODULUS`. An AR root there
        hints at under-differencing; an MA root there at over-differencing.
    cancelling : tuple of (Root, Root)
        AR/MA root pairs whose inverse roots are closer than
        :data:`CANCELLATION_DISTANCE`: the two
        terms nearly cancel and the model is over-parameterised (Box et al.,
        2015, §7.3.5).
    """

    near_unit: tuple[Root, ...]
    cancelling: tuple[tuple[Root, Root], ...]

    def messages(self) -> tuple[str, ...]:
        """Plain sentences, one a warning."""
        out = []
        for root in self.near_unit:
            if root.side == "AR":
                hint = "the series may need (more) differencing"
            else:
                hint = "the series may be over-differenced"
            if root.season > 1:
                where = f"{root.factor.upper()} factor root (in B^{root.season}) with modulus {root.factor_modulus:.3f}"
            else:
                where = f"{root.factor.upper()} root {_fmt(root.value)} has modulus {root.modulus:.3f},"
            out.append(f"{where} near the unit circle: {hint}.")
        for ar_root, ma_root in self.cancelling:
            out.append(
                f"{ar_root.factor.upper()} root {_fmt(ar_root.value)} and {ma_root.factor.upper()} root "
                f"{_fmt(ma_root.value)} nearly cancel: one AR and one MA term may be redundant."
            )
        return tuple(out)


def _fmt(z: complex) -> str:
    if abs(z.imag) < 1e-9:
        return f"{z.real:.3f}"
    return f"{z.real:.3f}{z.imag:+.3f}i"


def root_warnings(all_roots: tuple[Root, ...]) -> RootWarnings:
    """Flag roots near the unit circle and AR/MA roots that nearly cancel."""
    near = []
    seen_factor_roots = set()
    for r in all_roots:  # one warning per factor root, not one per seasonal s-th root
        key = (r.factor, round(r.factor_modulus, 9), round(abs(np.angle(r.value ** r.season)), 9))
        if r.near_unit and key not in seen_factor_roots:
            seen_factor_roots.add(key)
            near.append(r)
    near = tuple(near)
    ar_roots = [r for r in all_roots if r.side == "AR"]
    ma_roots = [r for r in all_roots if r.side == "MA"]
    pairs = []
    used: set[int] = set()
    for a in ar_roots:
        best = None
        for j, m in enumerate(ma_roots):
            if j in used:
                continue
            dist = abs(1.0 / a.value - 1.0 / m.value)
            if dist < CANCELLATION_DISTANCE and (best is None or dist < best[0]):
                best = (dist, j)
        if best is not None:
            used.add(best[1])
            pairs.append((a, ma_roots[best[1]]))
    return RootWarnings(near_unit=near, cancelling=tuple(pairs))
