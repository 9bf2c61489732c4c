"""The fitted equation of a candidate, written out in backshift notation.

A spec with estimates ``params`` (statsmodels names, see
:func:`lagwright.core.polynomials.param_names`) is written as

.. math::

    \\phi(B)\\,\\Phi(B^s)\\,(1-B)^d\\,(1-B^s)^D\\, g(y_t) = c + \\theta(B)\\,\\Theta(B^s)\\,a_t ,

with every polynomial multiplied out into its factor form, for example
``(1 − 0.560 B)(1 − B⁷) y_t = (1 − 0.791 B⁷) a_t``. The signs follow the
conventions of :mod:`lagwright.core.polynomials`: an AR factor is
:math:`1 - \\sum \\phi_i B^i`, so an estimate :math:`\\phi_1 = 0.56` prints
as ``1 − 0.560 B``; an MA factor is :math:`1 + \\sum \\theta_j B^j`, so
:math:`\\Theta_1 = -0.79` prints as ``1 − 0.791 B⁷``.

The constant estimated by the fit (``const``) is the mean :math:`\\mu` of the
differenced, transformed series :math:`w_t` (the process mean when
d + D = 0, the drift per period when d + D = 1). In the equation above it
appears as :math:`c = \\mu\\,\\phi(1)\\,\\Phi(1)`, since
:math:`\\phi(B)\\Phi(B^s)(w_t - \\mu) = \\phi(B)\\Phi(B^s) w_t - c`.

The text is plain Unicode: powers of B as superscript digits, the minus
sign U+2212, and ``_t`` for the time subscript (the PDF renderer sets it as
a subscript).

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley, §4.2 and
ch. 9 (the constant term and multiplicative seasonal models).
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., Springer, §6.5 (sign convention of the MA side).
"""

from __future__ import annotations

from typing import Mapping

import numpy as np

from .spec import ModelSpec

#: The typographic minus sign used in every printed number.
MINUS = "\u2212"

_SUPERSCRIPT = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")


def superscript(number: int) -> str:
    """``12`` -> ``"¹²"``."""
    return str(int(number)).translate(_SUPERSCRIPT)


def backshift(lag: int) -> str:
    """``B`` for lag 1, ``B⁷`` for lag 7."""
    return "B" if lag == 1 else "B" + superscript(lag)


#: Magnitudes printed in positional notation; outside this range numbers are written as m × 10ⁿ.
POSITIONAL_RANGE = (1e-4, 1e6)


def scientific(value: float, digits: int) -> str:
    """``value`` as ``m × 10ⁿ`` with ``digits`` significant digits (``6.482 × 10⁹``, ``1.438 × 10⁻¹⁷``)."""
    mantissa, exponent = f"{float(value):.{max(digits - 1, 0)}e}".split("e")
    power = int(exponent)
    sign = "\u207b" if power < 0 else ""
    return f"{mantissa} × 10{sign}{superscript(abs(power))}"


def significant(value: float, digits: int) -> str:
    """``value`` with ``digits`` significant digits: positional (trailing zeros kept) or, far from 1, m × 10ⁿ."""
    value = float(value)
    if value == 0.0 or not np.isfinite(value):
        return f"{value:.{max(digits - 1, 0)}f}"
    if not POSITIONAL_RANGE[0] <= abs(value) < POSITIONAL_RANGE[1]:
        return scientific(value, digits)
    decimals = digits - 1 - int(np.floor(np.log10(abs(value))))
    text = f"{value:.{max(decimals, 0)}f}"
    return text


def magnitude(value: float, digits: int = 3) -> str:
    """``|value|`` for an equation: ``digits`` decimals from 0.1 up, else ``digits`` significant digits.

    ``0.5604`` -> ``"0.560"``, ``0.00371`` -> ``"0.00371"``, ``21.5`` -> ``"21.500"``.
    """
    a = abs(float(value))
    if a == 0.0 or not np.isfinite(a) or 0.1 <= a < POSITIONAL_RANGE[1]:
        return f"{a:.{digits}f}"
    return significant(a, digits)


def signed(value: float, digits: int = 3) -> str:
    """A number with the typographic minus: ``-2.4`` -> ``"−2.400"``."""
    text = magnitude(value, digits)
    return (MINUS + text) if value < 0 else text


def _polynomial(terms: list[tuple[int, float]], digits: int) -> str:
    """``(1 − 0.560 B + 0.200 B²)`` from (lag, coefficient of B^lag) pairs."""
    parts = ["1"]
    for lag, coef in sorted(terms):
        sign = MINUS if coef < 0 else "+"
        parts.append(f"{sign} {magnitude(coef, digits)} {backshift(lag)}")
    return "(" + " ".join(parts) + ")"


def _factors(spec: ModelSpec, params: Mapping[str, float], digits: int) -> tuple[list[str], list[str]]:
    s = spec.s
    left, right = [], []
    if spec.ar:
        left.append(_polynomial([(lag, -params[f"ar.L{lag}"]) for lag in spec.ar], digits))
    if spec.sar:
        left.append(_polynomial([(lag * s, -params[f"ar.S.L{lag * s}"]) for lag in spec.sar], digits))
    if spec.d:
        left.append("(1 " + MINUS + " B)" + (superscript(spec.d) if spec.d > 1 else ""))
    if spec.D:
        left.append("(1 " + MINUS + " " + backshift(s) + ")" + (superscript(spec.D) if spec.D > 1 else ""))
    if spec.ma:
        right.append(_polynomial([(lag, params[f"ma.L{lag}"]) for lag in spec.ma], digits))
    if spec.sma:
        right.append(_polynomial([(lag * s, params[f"ma.S.L{lag * s}"]) for lag in spec.sma], digits))
    return left, right


def transformed_variable(spec: ModelSpec) -> str:
    """``y_t``, ``log y_t`` or ``g(y_t)`` (Box-Cox)."""
    kind = spec.transform.kind
    if kind == "log":
        return "log y_t"
    if kind == "boxcox":
        return "g(y_t)"
    return "y_t"


def intervention_symbols(spec: ModelSpec) -> list[tuple[object, str]]:
    """Each intervention with its symbol in the equation: pulses ``P1``, ``P2`` …, level shifts ``L1`` …"""
    counts = {"pulse": 0, "level": 0}
    out = []
    for item in spec.interventions:
        counts[item.kind] += 1
        out.append((item, f"{'P' if item.kind == 'pulse' else 'L'}{counts[item.kind]}"))
    return out


def _with_effects(spec: ModelSpec, params: Mapping[str, float], digits: int) -> str:
    """The modelled variable less the intervention effects: ``(y_t − 5.640 P1_t − 3.070 L1_t)``."""
    variable = transformed_variable(spec)
    if not spec.interventions:
        return variable
    parts = [variable]
    for item, symbol in intervention_symbols(spec):
        omega = float(params[item.name])
        parts.append(f"{MINUS if omega >= 0 else '+'} {magnitude(omega, digits)} {symbol}_t")
    return "(" + " ".join(parts) + ")"


def ar_at_one(spec: ModelSpec, params: Mapping[str, float]) -> float:
    """:math:`\\phi(1)\\,\\Phi(1) = (1 - \\sum\\phi_i)(1 - \\sum\\Phi_j)`."""
    phi = 1.0 - sum(params[f"ar.L{lag}"] for lag in spec.ar)
    big_phi = 1.0 - sum(params[f"ar.S.L{lag * spec.s}"] for lag in spec.sar)
    return phi * big_phi


def equation_constant(spec: ModelSpec, params: Mapping[str, float]) -> float | None:
    """The constant c of the printed equation, :math:`\\mu\\,\\phi(1)\\,\\Phi(1)`; ``None`` without one."""
    if not spec.has_constant:
        return None
    return float(params["const"]) * ar_at_one(spec, params)


def fitted_equation(spec: ModelSpec, params: Mapping[str, float], digits: int = 3) -> str:
    """The fitted model as one line of text in backshift notation.

    Parameters
    ----------
    spec : ModelSpec
    params : mapping of str to float
        Estimates by statsmodels name (``ar.L1``, ``ma.S.L7``, ``const`` ...);
        ``sigma2`` may be present and is not used.
    digits : int
        Decimals of the coefficients (see :func:`magnitude`).

    Examples
    --------
    ``ARIMA(1,0,0)×(0,1,1)_7`` with ``ar.L1 = 0.56``, ``ma.S.L7 = -0.79`` gives
    ``(1 − 0.560 B)(1 − B⁷) y_t = (1 − 0.790 B⁷) a_t``.
    """
    left, right = _factors(spec, params, digits)
    variable = _with_effects(spec, params, digits)
    lhs = "".join(left) + (" " if left else "") + variable
    noise = "".join(right) + (" " if right else "") + "a_t"
    c = equation_constant(spec, params)
    rhs = noise if c is None else f"{signed(c, digits)} + {noise}"
    return f"{lhs} = {rhs}"


def differenced_variable(spec: ModelSpec) -> str:
    """The series whose mean ``const`` is: ``y_t``, ``(1 − B) log y_t`` ..."""
    factors = []
    if spec.d:
        factors.append("(1 " + MINUS + " B)" + (superscript(spec.d) if spec.d > 1 else ""))
    if spec.D:
        factors.append("(1 " + MINUS + " " + backshift(spec.s) + ")")
    return "".join(factors) + (" " if factors else "") + transformed_variable(spec)


def equation_notes(spec: ModelSpec, params: Mapping[str, float], digits: int = 3,
                   date_of=None) -> tuple[str, ...]:
    """Sentences that go with :func:`fitted_equation`: the transform, the interventions, the constant
    and the noise. ``date_of(position)`` names the interventions' observations by date."""
    notes = []
    for item, symbol in intervention_symbols(spec):
        when = date_of(item.position) if date_of is not None else None
        place = f"{when} (obs. {item.position + 1})" if when else f"obs. {item.position + 1}"
        if item.kind == "pulse":
            notes.append(f"{symbol}_t is 1 at {place} and 0 elsewhere (a pulse).")
        else:
            notes.append(f"{symbol}_t is 0 before {place} and 1 from then on (a level shift).")
    kind = spec.transform.kind
    if kind == "log":
        notes.append("log is the natural logarithm.")
    elif kind == "boxcox":
        lam = float(spec.transform.lam)
        if lam == 0.0:
            notes.append("g(y) = log y, the Box-Cox transform with λ = 0.")
        else:
            lam_text = f"{lam:g}".replace("-", MINUS)
            notes.append(f"g(y) = (y^{lam_text} {MINUS} 1)/{lam_text}, the Box-Cox transform with λ = {lam_text}.")
    if spec.has_constant:
        mu = float(params["const"])
        what = "mean" if spec.constant == "mean" else "drift per period, the mean"
        target = differenced_variable(spec)
        if spec.ar or spec.sar:
            c = equation_constant(spec, params)
            notes.append(
                f"The constant {signed(c, digits)} is μ·φ(1)·Φ(1), where μ = {signed(mu, digits)} is the estimated "
                f"{what} of {target}."
            )
        else:
            notes.append(f"The constant {signed(mu, digits)} is the estimated {what} of {target}.")
    sigma2 = params.get("sigma2")
    if sigma2 is not None and np.isfinite(sigma2):
        notes.append(f"a_t is white noise with variance σ² = {significant(sigma2, 5)}.")
    return tuple(notes)
