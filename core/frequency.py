"""The spacing of time stamps: inferred, named, chosen, and checked against a calendar.

A frequency is a pandas offset alias (``"h"``, ``"D"``, ``"W-MON"``,
``"MS"``, ``"QS-JAN"``, ``"YS-JAN"``, ``"15min"``, ``"90s"`` ...). This
module infers it from the stamps (:func:`analyse`), names it in words
(:func:`describe`), reads the user's choice (:func:`parse_frequency`, which
also takes words such as *daily* and a plain number of seconds), and lists
the periods missing from a regular calendar as runs (:func:`gap_runs`).

References
----------
pandas development team. *pandas documentation*: "Time series / date
functionality", offset aliases and anchored offsets; ``infer_freq``,
``date_range``, ``tseries.frequencies.to_offset`` (pandas.pydata.org).
"""

from __future__ import annotations

import re
import warnings
from collections import Counter
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .errors import InputError

__all__ = [
    "Spacing", "GapRun", "analyse", "describe", "parse_frequency", "anchor", "gap_runs", "stamp_label",
    "pandas_frequency", "MAX_CALENDAR",
]

#: Longest regular calendar Lagwright will build (periods); beyond this, aggregate first.
MAX_CALENDAR = 5_000_000
_SHOWN = 5

_WORDS = {
    "D": "daily", "B": "business-daily", "h": "hourly", "min": "every minute", "s": "every second",
    "MS": "monthly", "ME": "monthly", "QS": "quarterly", "QE": "quarterly", "YS": "yearly", "YE": "yearly",
    "W": "weekly", "M": "monthly", "Q": "quarterly", "Y": "yearly",
}
_WEEKDAYS = ("MON", "TUE", "WED", "THU", "FRI", "SAT", "SUN")
_MONTHS = ("JAN", "FEB", "MAR", "APR", "MAY", "JUN", "JUL", "AUG", "SEP", "OCT", "NOV", "DEC")
#: Words a user may type for a frequency, and the alias family they mean.
_USER_WORDS = {
    "secondly": "s", "second": "s", "seconds": "s", "sec": "s", "s": "s", "S": "s",
    "minutely": "min", "minute": "min", "minutes": "min", "min": "min", "T": "min", "t": "min",
    "hourly": "h", "hour": "h", "hours": "h", "h": "h", "H": "h",
    "daily": "D", "day": "D", "days": "D", "d": "D", "D": "D",
    "business": "B", "b": "B", "B": "B",
    "weekly": "W", "week": "W", "weeks": "W", "w": "W", "W": "W",
    "monthly": "M", "month": "M", "months": "M", "m": "M", "M": "M",
    "quarterly": "Q", "quarter": "Q", "quarters": "Q", "q": "Q", "Q": "Q",
    "yearly": "Y", "annual": "Y", "annually": "Y", "year": "Y", "years": "Y", "y": "Y", "Y": "Y", "A": "Y",
}
_TICK_SECONDS = {"s": 1, "min": 60, "h": 3600, "D": 86400}


def stamp_label(stamp) -> str:
    """``2021-03-31`` for a midnight stamp, ``2021-03-31 14:20:00`` otherwise."""
    stamp = pd.Timestamp(stamp)
    if stamp == stamp.normalize():
        return str(stamp.date())
    return stamp.isoformat(sep=" ")


def pandas_frequency(index: pd.DatetimeIndex) -> str | None:
    """``pandas.infer_freq`` as a string alias, or None (never raises or warns)."""
    if len(index) < 3:
        return None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            found = pd.infer_freq(index)
        except Exception:
            return None
    if found is None:
        return None
    return str(getattr(found, "freqstr", found))


def _seconds(alias: str) -> float | None:
    """Length of a fixed (tick or day) frequency in seconds; None for calendar frequencies."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            offset = pd.tseries.frequencies.to_offset(alias)
    except Exception:
        return None
    if isinstance(offset, (pd.offsets.Tick, pd.offsets.Day)):
        try:
            return pd.Timedelta(offset).total_seconds()
        except Exception:
            return None
    return None


def _number(x: float) -> str:
    return f"{int(x)}" if float(x).is_integer() else f"{x:g}"


def describe(alias: str | None) -> str:
    """The frequency in words: ``daily``, ``weekly (on Mondays)``, ``every 15 minutes``, ``every 2.5 seconds``."""
    if not alias:
        return "irregular"
    base, _, anchor_part = alias.partition("-")
    if base in _WORDS and base not in ("s", "min"):
        word = _WORDS[base]
        if base == "W" and anchor_part in _WEEKDAYS:
            day = ("Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday")[
                _WEEKDAYS.index(anchor_part)]
            return f"{word} (on {day}s)"
        if base in ("QS", "QE", "YS", "YE") and anchor_part and anchor_part != ("JAN" if base[-1] == "S" else "DEC"):
            return f"{word} ({'starting' if base.endswith('S') else 'ending'} in {anchor_part.title()})"
        return word
    seconds = _seconds(alias)
    if seconds is None:
        return f"'{alias}'"
    for unit, size in (("day", 86400), ("hour", 3600), ("minute", 60)):
        if seconds >= size and seconds % size == 0:
            count = seconds / size
            return f"every {unit}" if count == 1 else f"every {_number(count)} {unit}s"
    if seconds == 1:
        return "every second"
    return f"every {_number(seconds)} seconds"


def parse_frequency(text: str | int | float) -> str:
    """Read a frequency the user typed: an alias, a word such as ``daily``, or a number of seconds.

    Returns a pandas alias. ``W``, ``M``, ``Q`` and ``Y`` without an anchor
    are returned as they are and anchored to the data by :func:`anchor`.

    Raises
    ------
    InputError
        When the text names no frequency Lagwright can use.
    """
    raw = str(text).strip()
    if not raw:
        raise InputError("The frequency is empty. Give one such as h, D, W, MS, QS, YS, 15min or 900 (seconds).")
    if isinstance(text, (int, float)) and not isinstance(text, bool) or re.fullmatch(r"\d+(\.\d+)?", raw):
        seconds = float(raw)
        if seconds <= 0:
            raise InputError(f"The frequency {raw} seconds is not positive. Give a number of seconds above 0.")
        return _seconds_alias(seconds)
    match = re.fullmatch(r"(\d+)\s*([A-Za-z]+)", raw)
    count, word = (int(match.group(1)), match.group(2)) if match else (1, raw)
    family = _USER_WORDS.get(word) or _USER_WORDS.get(word.lower())
    if family in ("s", "min", "h", "D"):
        if count <= 0:
            raise InputError(f"The frequency '{raw}' has no length. Use a positive multiple such as 15min.")
        return _seconds_alias(count * _TICK_SECONDS[family])
    if family is not None:
        if count != 1:
            raise InputError(
                f"The frequency '{raw}': multiples are allowed for seconds, minutes, hours and days only. "
                "Use one of s, min, h, D (with a number), or W, M, Q, Y."
            )
        return family
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            offset = pd.tseries.frequencies.to_offset(raw)
    except Exception:
        offset = None
    allowed = (pd.offsets.Tick, pd.offsets.Day, pd.offsets.Week, pd.offsets.MonthBegin, pd.offsets.MonthEnd,
               pd.offsets.QuarterBegin, pd.offsets.QuarterEnd, pd.offsets.YearBegin, pd.offsets.YearEnd,
               pd.offsets.BusinessDay)
    if offset is None or not isinstance(offset, allowed):
        raise InputError(
            f"'{raw}' is not a frequency Lagwright knows. Use one of h, D, W, MS, QS, YS (or hourly, daily, "
            "weekly, monthly, quarterly, yearly), a multiple such as 15min or 6h, or a number of seconds."
        )
    if isinstance(offset, pd.offsets.Week) and offset.weekday is None:
        return "W"
    return str(offset.freqstr)


def _seconds_alias(seconds: float) -> str:
    if seconds % 86400 == 0:
        return "D" if seconds == 86400 else f"{int(seconds // 86400)}D"
    if seconds % 3600 == 0:
        return "h" if seconds == 3600 else f"{int(seconds // 3600)}h"
    if seconds % 60 == 0:
        return "min" if seconds == 60 else f"{int(seconds // 60)}min"
    if float(seconds).is_integer():
        return "s" if seconds == 1 else f"{int(seconds)}s"
    millis = seconds * 1000
    if abs(millis - round(millis)) > 1e-6:
        raise InputError(f"The frequency {seconds:g} seconds is finer than a millisecond; use whole milliseconds.")
    return f"{int(round(millis))}ms"


def anchor(alias: str, first) -> str:
    """Anchor an unanchored family (``W``, ``M``, ``Q``, ``Y``) to the first time stamp.

    ``W`` becomes the week on the first stamp's weekday; ``M`` becomes ``MS``
    or ``ME`` (whichever the first stamp falls on, else ``MS``); ``Q`` and
    ``Y`` likewise, anchored on the first stamp's month. Other aliases are
    returned unchanged.
    """
    first = pd.Timestamp(first)
    if alias == "W":
        return f"W-{_WEEKDAYS[first.weekday()]}"
    if alias == "M":
        return "ME" if first.is_month_end and not first.is_month_start else "MS"
    if alias in ("Q", "Y"):
        end = first.is_month_end and not first.is_month_start
        if alias == "Q":
            return f"QE-{_MONTHS[first.month - 1]}" if end else f"QS-{_MONTHS[(first.month - 1) % 3]}"
        return f"YE-{_MONTHS[first.month - 1]}" if end else f"YS-{_MONTHS[first.month - 1]}"
    return alias


def _calendar(first, last, alias: str) -> pd.DatetimeIndex | None:
    seconds = _seconds(alias)
    if seconds:
        # Python integers: a difference of stamps ~300 years apart overflows a Timedelta.
        span = (int(pd.Timestamp(last).value) - int(pd.Timestamp(first).value)) / 1e9
        if span / seconds + 1 > MAX_CALENDAR:
            return None
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            calendar = pd.date_range(first, last, freq=alias)
    except Exception:
        return None
    if len(calendar) > MAX_CALENDAR:
        return None
    return calendar


@dataclass(frozen=True)
class GapRun:
    """Consecutive missing periods: the first and last missing stamp, how many, and the stamp before."""

    first: str
    last: str
    periods: int
    after: str

    def describe(self) -> str:
        if self.periods == 1:
            return f"{self.first} (1 period)"
        return f"{self.first} to {self.last} ({self.periods} periods)"


@dataclass(frozen=True, eq=False)
class Spacing:
    """What the stamps say about their spacing.

    Attributes
    ----------
    alias : str or None
        The calendar's pandas alias (inferred, or the one chosen), or None
        when the stamps fit no regular calendar.
    chosen : bool
        Whether ``alias`` was given by the user rather than inferred.
    missing : numpy.ndarray
        ``datetime64[ns]`` stamps of the calendar that have no row.
    off_calendar : numpy.ndarray
        Positions (into the stamps given) of stamps that do not fall on the
        chosen calendar (always empty for an inferred one).
    note : str
        One plain sentence on the spacing, for the provenance notes.
    """

    alias: str | None
    chosen: bool
    missing: np.ndarray
    off_calendar: np.ndarray
    note: str

    @property
    def regular(self) -> bool:
        return self.alias is not None and self.missing.size == 0 and self.off_calendar.size == 0


def _missing_listing(missing: pd.DatetimeIndex) -> str:
    shown = ", ".join(stamp_label(t) for t in missing[:_SHOWN])
    more = f" and {len(missing) - _SHOWN} more" if len(missing) > _SHOWN else ""
    return shown + more


def analyse(stamps: np.ndarray, alias: str | None = None) -> Spacing:
    """Infer (or check) the calendar of sorted, distinct ``datetime64[ns]`` stamps.

    Parameters
    ----------
    stamps : numpy.ndarray
        Strictly increasing ``datetime64[ns]`` stamps.
    alias : str, optional
        A frequency chosen by the user (already read by
        :func:`parse_frequency`); unanchored families are anchored on the
        first stamp.

    References
    ----------
    pandas documentation: ``infer_freq``, ``date_range``.
    """
    stamps = np.asarray(stamps).astype("datetime64[ns]")
    empty_stamps = np.empty(0, dtype="datetime64[ns]")
    empty_pos = np.empty(0, dtype=np.int64)
    index = pd.DatetimeIndex(stamps)
    if alias is not None:
        if stamps.size == 0:
            return Spacing(alias, True, empty_stamps, empty_pos, f"The frequency was set to {describe(alias)}.")
        alias = anchor(alias, index[0])
        calendar = _calendar(index[0], index[-1], alias)
        if calendar is None:
            raise InputError(
                f"A {describe(alias)} calendar from {stamp_label(index[0])} to {stamp_label(index[-1])} would "
                f"have more than {MAX_CALENDAR:,} periods. Choose a coarser frequency, or aggregate the readings "
                "first (for example to hourly or daily)."
            )
        on = index.isin(calendar)
        off = np.flatnonzero(~on)
        missing = calendar.difference(index)
        note = f"The frequency was set to {describe(alias)} (pandas frequency '{alias}')"
        if missing.size:
            note += f"; {len(missing)} period(s) have no row: {_missing_listing(missing)}"
        return Spacing(alias, True, missing.to_numpy(dtype="datetime64[ns]"), off, note + ".")
    if stamps.size < 3:
        return Spacing(None, False, empty_stamps, empty_pos, "There are too few time stamps to infer their spacing.")
    found = pandas_frequency(index)
    if found is not None:
        return Spacing(found, False, empty_stamps, empty_pos,
                       f"The time stamps are {describe(found)} (pandas frequency '{found}').")
    # A regular calendar with some periods missing? Try the spacing of a few short runs.
    width = min(8, stamps.size)
    starts = sorted({0, stamps.size // 4, stamps.size // 2, (3 * stamps.size) // 4, stamps.size - width})
    tried = Counter(a for a in (pandas_frequency(index[s:s + width]) for s in starts) if a)
    for found, _ in tried.most_common():
        calendar = _calendar(index[0], index[-1], found)
        if calendar is None or len(calendar) > 2 * stamps.size or not index.isin(calendar).all():
            continue
        missing = calendar.difference(index)
        note = (
            f"The time stamps are {describe(found)} (pandas frequency '{found}') with {len(missing)} period(s) "
            f"missing: {_missing_listing(missing)}."
        )
        return Spacing(found, False, missing.to_numpy(dtype="datetime64[ns]"), empty_pos, note)
    return Spacing(None, False, empty_stamps, empty_pos, "The time stamps are unevenly spaced; no frequency was inferred.")


def gap_runs(stamps: np.ndarray, spacing: Spacing) -> list[GapRun]:
    """The missing periods of ``spacing`` grouped into runs of consecutive periods."""
    if spacing.alias is None or spacing.missing.size == 0:
        return []
    index = pd.DatetimeIndex(stamps)
    calendar = index.union(pd.DatetimeIndex(spacing.missing))
    where = calendar.get_indexer(pd.DatetimeIndex(spacing.missing))
    runs: list[GapRun] = []
    start = 0
    breaks = np.flatnonzero(np.diff(where) != 1) + 1
    for stop in list(breaks) + [where.size]:
        first, last = where[start], where[stop - 1]
        before = stamp_label(calendar[first - 1]) if first > 0 else ""
        runs.append(GapRun(stamp_label(calendar[first]), stamp_label(calendar[last]), int(stop - start), before))
        start = stop
    return runs
