"""Intervention regressors: pulses and level shifts, differenced like the series.

A candidate with interventions is a regression with ARIMA errors,

.. math::

    g(y_t) = \\sum_j \\omega_j x_{j,t} + n_t, \\qquad
    \\phi(B)\\Phi(B^s)(1-B)^d(1-B^s)^D n_t = c + \\theta(B)\\Theta(B^s) a_t ,

with :math:`x_{j,t}` a pulse (1 at one observation) or a step (0 before an
observation, 1 from it on). Differencing the whole equation gives an ARMA
model for :math:`w_t` with the *differenced* regressors, which is what the
exact fit estimates (Box & Tiao, 1975; Box, Jenkins, Reinsel & Ljung, 2015,
ch. 13). A pulse differenced once becomes +1, -1; a step becomes a pulse.

References
----------
Box, G. E. P. & Tiao, G. C. (1975). Intervention analysis with applications
to economic and environmental problems. *JASA* 70(349), 70-79.
Chen, C. & Liu, L.-M. (1993). Joint estimation of model parameters and
outlier effects in time series. *JASA* 88(421), 284-297.
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley.
"""

from __future__ import annotations

import numpy as np

from .errors import InputError
from .spec import Intervention, ModelSpec


def regressor_column(item: Intervention, n: int, future: int = 0) -> np.ndarray:
    """The regressor of ``item`` over ``n`` observations (and ``future`` steps after them)."""
    t = np.arange(n + future)
    if item.kind == "pulse":
        return (t == item.position).astype(float)
    return (t >= item.position).astype(float)


def regressors(spec: ModelSpec, n: int, future: int = 0) -> np.ndarray:
    """Undifferenced regressors of ``spec``'s interventions, shape ``(n + future, k)``."""
    if not spec.interventions:
        return np.zeros((n + future, 0))
    return np.column_stack([regressor_column(item, n, future) for item in spec.interventions])


def check_interventions(spec: ModelSpec, n: int, series_name: str = "series", values=None) -> None:
    """Raise :class:`InputError` when an intervention cannot be estimated on ``n`` observations.

    An intervention must fall inside the series and after the observations
    lost to differencing (before them, its differenced regressor has no
    non-zero value), a level shift at the first kept observation of an
    undifferenced series with a mean is the mean itself, and a pulse on a
    missing value (``values`` NaN there) has no data to measure it.
    """
    lost = spec.lost_observations
    for item in spec.interventions:
        if item.position >= n:
            raise InputError(
                f"The {item.label} is beyond the end of '{series_name}' ({n} values): its effect cannot be "
                "estimated from these data (a holdout or forecast origin before it leaves none). Choose an "
                "observation inside the data, or drop the intervention for this check."
            )
        if item.kind == "pulse" and values is not None and np.isnan(values[item.position]):
            raise InputError(
                f"The {item.label} falls on a missing value of '{series_name}': there is nothing to measure "
                "its effect on. Choose an observed value, or fill the gap on import."
            )
        if item.position < lost or (item.kind == "level" and item.position == lost and spec.has_constant):
            raise InputError(
                f"The {item.label} falls on the first {lost + 1} observations, which differencing or the "
                "constant already absorb: its effect cannot be estimated. Choose a later observation."
            )


def differenced_regressors(spec: ModelSpec, n: int) -> np.ndarray:
    """The regressors as the ARMA part sees them: differenced like the series, ``n - (d + sD)`` rows."""
    from .prepare import difference

    x = regressors(spec, n)
    if x.shape[1] == 0:
        return np.zeros((n - spec.lost_observations, 0))
    return np.column_stack([difference(x[:, j], spec.d, spec.D, spec.s) for j in range(x.shape[1])])


def locate(series, when: str) -> int:
    """The 0-based position named by ``when``: an observation number (from 1) or a date of the series.

    Raises
    ------
    InputError
        If ``when`` names no observation of ``series``.
    """
    text = str(when).strip()
    n = len(series)
    if text.isdigit():
        number = int(text)
        if not 1 <= number <= n:
            raise InputError(f"Observation {number} is outside '{series.name}' (1 to {n}).")
        return number - 1
    if series.times is None:
        raise InputError(
            f"'{text}' is not an observation number, and '{series.name}' has no dates; "
            f"give a number from 1 to {n}."
        )
    try:
        stamp = np.datetime64(text, "ns")
    except ValueError:
        raise InputError(f"'{text}' is neither an observation number nor a date such as 2024-03-05.") from None
    hits = np.flatnonzero(series.times == stamp)
    if hits.size == 0:
        labels = series.time_labels()
        raise InputError(
            f"'{series.name}' has no observation dated {text} (it runs from {labels[0]} to {labels[-1]})."
        )
    return int(hits[0])
