"""Repairs the user chooses on import: merge repeated stamps, aggregate, fill gaps.

Every function takes sorted ``datetime64[ns]`` stamps and float values
(NaN for missing) and returns new arrays plus one plain sentence saying what
was done, for the series' provenance notes. Nothing here decides anything:
the caller passes the user's choice.

Conventions
-----------
* **Merging repeated stamps** (``mean``, ``sum``, ``last``) uses the
  observed values of each group: ``mean`` is their mean, ``sum`` their sum,
  ``last`` the last observed value in file order; a group with no observed
  value stays missing. These are the conventions of pandas ``groupby``
  ``mean()``, ``sum(min_count=1)`` and ``last()``.
* **Aggregation** puts each reading in the period that contains it, closed
  on the left (``[00:00, 01:00)`` is the hour labelled 00:00), labelled by the
  period's start; fixed periods are counted from midnight of the first
  day; weeks start on Monday. A period with no observed reading is
  missing, including periods with no rows at all, so the result is on a
  regular calendar. These match pandas ``resample(rule, closed="left",
  label="left")`` with ``sum(min_count=1)`` or ``mean()``.
* **Filling**: ``interpolate`` is linear in time between the observed
  neighbours (pandas ``interpolate(method="time", limit_area="inside")``;
  linear in position without stamps); values before the first or after the
  last observation stay missing. ``ffill`` carries the last observed value
  forward (leading missing values stay). ``value`` puts a constant.

References
----------
pandas development team. *pandas documentation*: ``DataFrame.groupby``,
``DataFrame.resample``, ``Series.interpolate``, ``Series.ffill``
(pandas.pydata.org).
Harvey, A. C. (1989). *Forecasting, Structural Time Series Models and the
Kalman Filter*. Cambridge University Press, section 3.4.7 (missing
observations in the Kalman filter: why gaps may be left missing).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .errors import InputError
from .frequency import MAX_CALENDAR, describe, stamp_label

__all__ = ["merge_duplicates", "aggregate", "insert_missing", "fill_missing", "period_labels"]

_SHOWN = 5


def _ns(stamps) -> np.ndarray:
    """Stamps as ``datetime64[ns]`` (pandas 3 may give microseconds)."""
    return np.asarray(stamps).astype("datetime64[ns]")


def _group_reduce(values: np.ndarray, starts: np.ndarray, how: str) -> tuple[np.ndarray, np.ndarray]:
    """Reduce consecutive groups beginning at ``starts``; returns (reduced, observed count)."""
    observed = ~np.isnan(values)
    counts = np.add.reduceat(observed.astype(np.int64), starts) if values.size else np.empty(0, np.int64)
    if how in ("sum", "mean"):
        totals = np.add.reduceat(np.where(observed, values, 0.0), starts) if values.size else np.empty(0)
        with np.errstate(invalid="ignore", divide="ignore"):
            out = totals / counts if how == "mean" else totals.astype(float)
        out[counts == 0] = np.nan
        return out, counts
    if how == "last":
        positions = np.arange(values.size)
        marked = np.where(observed, positions, -1)
        last = np.maximum.reduceat(marked, starts) if values.size else np.empty(0, np.int64)
        out = np.where(last >= 0, values[np.maximum(last, 0)], np.nan)
        return out, counts
    raise ValueError(f"unknown reduction {how!r}")


def merge_duplicates(stamps: np.ndarray, values: np.ndarray, how: str) -> tuple[np.ndarray, np.ndarray, str]:
    """Merge rows with the same stamp (``stamps`` sorted, stable in file order).

    Returns
    -------
    (stamps, values, note)

    References
    ----------
    pandas documentation: ``GroupBy.mean``, ``GroupBy.sum`` (``min_count=1``), ``GroupBy.last``.
    """
    stamps, values = _ns(stamps), np.asarray(values, dtype=float)
    as_int = stamps.view("int64")
    starts = np.flatnonzero(np.r_[True, as_int[1:] != as_int[:-1]]) if as_int.size else np.empty(0, np.int64)
    if starts.size == as_int.size:
        return stamps, values, ""
    merged, _ = _group_reduce(values, starts, how)
    sizes = np.diff(np.r_[starts, as_int.size])
    repeated = int(np.count_nonzero(sizes > 1))
    rows = int(sizes[sizes > 1].sum())
    first = stamp_label(stamps[starts[np.flatnonzero(sizes > 1)[0]]])
    note = (f"{repeated} time stamp(s) appeared on more than one row ({rows} rows, the first at {first}); "
            f"each was merged into one value by the {how} of its rows.")
    return stamps[starts], merged, note


def period_labels(stamps: np.ndarray, alias: str) -> np.ndarray:
    """The start of the aggregation period containing each stamp (``datetime64[ns]``).

    ``alias`` is a fixed frequency (``s``, ``min``, ``h``, ``D`` with a
    multiple), ``W-XXX`` (weeks starting on that weekday), ``MS``, ``QS-JAN``
    or ``YS-JAN``.
    """
    stamps = _ns(stamps)
    if stamps.size == 0:
        return stamps.astype("datetime64[ns]")
    if alias == "MS":
        return stamps.astype("datetime64[M]").astype("datetime64[ns]")
    if alias == "QS-JAN":
        months = stamps.astype("datetime64[M]").astype(np.int64)
        return (months - months % 3).astype("datetime64[M]").astype("datetime64[ns]")
    if alias == "YS-JAN":
        return stamps.astype("datetime64[Y]").astype("datetime64[ns]")
    if alias.startswith("W-"):
        weekday = ("MON", "TUE", "WED", "THU", "FRI", "SAT", "SUN").index(alias[2:])
        days = stamps.astype("datetime64[D]").astype(np.int64)
        # 1970-01-01 was a Thursday (weekday 3 counting Monday as 0).
        offset = (days + 3 - weekday) % 7
        return (days - offset).astype("datetime64[D]").astype("datetime64[ns]")
    step = pd.Timedelta(pd.tseries.frequencies.to_offset(alias)).value
    as_int = stamps.view("int64")
    origin = stamps[0].astype("datetime64[D]").astype("datetime64[ns]").view("int64")
    return (origin + ((as_int - origin) // step) * step).view("datetime64[ns]")


def aggregate(stamps: np.ndarray, values: np.ndarray, alias: str, how: str) -> tuple[np.ndarray, np.ndarray, str]:
    """Combine sorted, distinct readings into periods of ``alias`` by ``how`` (``sum`` or ``mean``).

    Returns
    -------
    (stamps, values, note)
        Period starts on a regular calendar (empty periods missing), the
        combined values, and a sentence with the counts, naming periods
        built from fewer readings than most.

    References
    ----------
    pandas documentation: ``DataFrame.resample`` (``closed="left"``, ``label="left"``).
    """
    stamps, values = _ns(stamps), np.asarray(values, dtype=float)
    if stamps.size == 0:
        raise InputError("There are no readings to aggregate.")
    labels = period_labels(stamps, alias)
    as_int = labels.view("int64")
    starts = np.flatnonzero(np.r_[True, as_int[1:] != as_int[:-1]])
    combined, counts = _group_reduce(values, starts, how)
    sizes = np.diff(np.r_[starts, as_int.size])
    present = labels[starts]
    seconds = _fixed_seconds(alias)
    span = (int(present[-1].view("int64")) - int(present[0].view("int64"))) / 1e9  # Python ints: no overflow
    if seconds and span / seconds + 1 > MAX_CALENDAR:
        raise InputError(
            f"Aggregating to {describe(alias)} from {stamp_label(present[0])} to {stamp_label(present[-1])} would "
            f"give more than {MAX_CALENDAR:,} periods. Choose a coarser frequency, or check the time stamps.")
    calendar = pd.date_range(present[0], present[-1], freq=alias)
    full = np.full(len(calendar), np.nan)
    where = calendar.get_indexer(pd.DatetimeIndex(present))
    if (where < 0).any():  # pragma: no cover - labels are on the calendar by construction
        raise InputError(f"The readings could not be placed on a {describe(alias)} calendar.")
    full[where] = combined
    empty_periods = int(len(calendar) - present.size)
    unobserved = int(np.count_nonzero(counts == 0))
    # A full period holds (period length) / (typical spacing of the readings) readings.
    expected = np.full(present.size, np.nan)
    if stamps.size > 1:
        step = float(np.median(np.diff(stamps.view("int64"))))
        if step > 0:
            bounds = pd.date_range(present[0], periods=len(calendar) + 1, freq=alias).to_numpy(dtype="datetime64[ns]")
            lengths = np.diff(bounds.view("int64")).astype(float)
            expected = np.round(lengths[where] / step)
    short = np.flatnonzero(sizes < expected)
    word = "totals" if how == "sum" else "means"
    per_period = int(np.nanmax(expected)) if np.isfinite(expected).any() else int(sizes.max())
    note = (f"{stamps.size:,} readings were aggregated to {len(calendar):,} {describe(alias)} {word} "
            f"(pandas frequency '{alias}'); a full period holds {per_period} reading(s).")
    if short.size:
        shown = ", ".join(f"{stamp_label(present[k])} ({sizes[k]})" for k in short[:_SHOWN])
        more = f" and {short.size - _SHOWN} more" if short.size > _SHOWN else ""
        note += f" {short.size} period(s) hold fewer: {shown}{more}"
        note += "; their totals are not comparable." if how == "sum" else "."
    if empty_periods or unobserved:
        note += f" {empty_periods + unobserved} period(s) have no observed reading and are missing."
    return calendar.to_numpy(dtype="datetime64[ns]"), full, note


def _fixed_seconds(alias: str) -> float | None:
    try:
        return pd.Timedelta(pd.tseries.frequencies.to_offset(alias)).total_seconds()
    except Exception:  # noqa: BLE001 - calendar frequencies (weeks, months, ...) have no fixed length
        return None


def insert_missing(stamps: np.ndarray, values: np.ndarray, missing: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Insert the ``missing`` stamps (with NaN values) into sorted ``stamps``."""
    stamps, missing = _ns(stamps), _ns(missing)
    if missing.size == 0:
        return stamps, values
    all_stamps = np.concatenate([stamps, missing.astype("datetime64[ns]")])
    all_values = np.concatenate([values, np.full(missing.size, np.nan)])
    order = np.argsort(all_stamps.view("int64"), kind="stable")
    return all_stamps[order], all_values[order]


def fill_missing(values: np.ndarray, how: str, stamps: np.ndarray | None = None,
                 fill_value: float | None = None) -> tuple[np.ndarray, str]:
    """Fill NaN values by ``interpolate``, ``ffill`` or ``value``; returns (values, note).

    References
    ----------
    pandas documentation: ``Series.interpolate`` (``method="time"`` or
    ``"linear"``, ``limit_area="inside"``), ``Series.ffill``.
    """
    values = np.array(values, dtype=float, copy=True)
    missing = np.isnan(values)
    if not missing.any():
        return values, ""
    observed = np.flatnonzero(~missing)
    if how == "value":
        values[missing] = float(fill_value)
        return values, f"{int(missing.sum())} missing value(s) were set to {float(fill_value):g}."
    if observed.size == 0:
        return values, "No value is observed, so nothing could be filled."
    if how == "interpolate":
        inside = missing.copy()
        inside[: observed[0]] = False
        inside[observed[-1] + 1:] = False
        if inside.any():
            x = (_ns(stamps).view("int64").astype(float) if stamps is not None
                 else np.arange(values.size, dtype=float))
            values[inside] = np.interp(x[inside], x[observed], values[observed])
        edge = int(missing.sum() - inside.sum())
        basis = "in time" if stamps is not None else "between neighbours"
        note = f"{int(inside.sum())} missing value(s) were filled by linear interpolation {basis}."
        if edge:
            note += f" {edge} at the start or end stay missing (nothing to interpolate from)."
        return values, note
    if how == "ffill":
        last = np.maximum.accumulate(np.where(missing, -1, np.arange(values.size)))
        fillable = missing & (last >= 0)
        values[fillable] = values[last[fillable]]
        note = f"{int(fillable.sum())} missing value(s) were filled with the last value before them."
        lead = int(missing.sum() - fillable.sum())
        if lead:
            note += f" {lead} at the start stay missing."
        return values, note
    raise ValueError(f"unknown fill {how!r}")
