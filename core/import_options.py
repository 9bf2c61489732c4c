"""The user's import choices: how to read a table and how to repair what it holds.

:class:`ImportOptions` is a small frozen value. The window's import dialog
and the command line build one; the loader follows it; the session file
keeps it (:meth:`ImportOptions.to_dict` / :meth:`ImportOptions.from_dict`)
so that reopening a session reads the data the same way; and every repair
it asks for is written into the series' provenance notes, so the memo
reports it.

Defaults reproduce the plain loader: everything detected, repeated time
stamps refused, rows kept as read (gaps reported, not filled), no
aggregation.

References
----------
pandas development team. *pandas documentation*: offset aliases,
``DataFrame.resample``, ``Series.interpolate`` (pandas.pydata.org).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, fields, replace

from .errors import InputError
from .frequency import describe, parse_frequency

__all__ = ["ImportOptions", "DELIMITERS", "GAP_CHOICES", "DUPLICATE_CHOICES", "TIMEZONE_CHOICES", "NON_NUMERIC_CHOICES",
           "AGGREGATE_HOW", "parse_aggregate"]

#: Delimiters by name, for the command line and the dialog.
DELIMITERS = {"comma": ",", "semicolon": ";", "tab": "\t", "bar": "|", "pipe": "|", "space": " ", "colon": ":"}
#: What to do with periods missing from a regular calendar (None: keep the rows as read).
GAP_CHOICES = ("leave", "interpolate", "ffill", "value")
#: What to do with repeated time stamps.
DUPLICATE_CHOICES = ("refuse", "mean", "sum", "last")
#: How time stamps with a UTC offset are made naive (None: local clock if one offset, else UTC).
TIMEZONE_CHOICES = ("utc", "local")
#: What to do with cells of the value column that are not numbers.
NON_NUMERIC_CHOICES = ("refuse", "missing")
#: How readings are combined when aggregating.
AGGREGATE_HOW = ("sum", "mean")
_THOUSANDS = {"": "", "none": "", ",": ",", "comma": ",", ".": ".", "point": ".", "dot": ".", " ": " ",
              "space": " ", "'": "'", "apostrophe": "'"}
_DECIMALS = {".": ".", "point": ".", "dot": ".", ",": ",", "comma": ","}


def parse_aggregate(text: str) -> tuple[str, str]:
    """Read ``"D:sum"``, ``"h:mean"``, ``"15min:mean"``, ``"daily:sum"`` into (alias, how).

    Weeks start on Monday (``W-MON``); months, quarters and years are
    calendar ones labelled by their first day (``MS``, ``QS-JAN``, ``YS-JAN``).

    Raises
    ------
    InputError
        When the text is not ``FREQUENCY:sum`` or ``FREQUENCY:mean`` with a usable frequency.
    """
    raw = str(text).strip()
    target, sep, how = raw.partition(":")
    how = how.strip().lower()
    if not sep or how not in AGGREGATE_HOW:
        raise InputError(
            f"The aggregation '{raw}' is not understood. Write FREQUENCY:sum or FREQUENCY:mean, for example "
            "h:mean (hourly means) or D:sum (daily totals)."
        )
    alias = parse_frequency(target)
    alias = {"W": "W-MON", "M": "MS", "Q": "QS-JAN", "QS": "QS-JAN", "Y": "YS-JAN", "YS": "YS-JAN"}.get(alias, alias)
    base, _, anchor = alias.partition("-")
    fixed = base.lstrip("0123456789") in ("s", "min", "h", "D", "ms")
    if not (fixed or base == "W" or alias in ("MS", "QS-JAN", "YS-JAN")):
        raise InputError(
            f"Lagwright cannot aggregate to '{target}'. Aggregate to seconds, minutes, hours or days (with a "
            "multiple such as 15min or 6h), weeks (W), months (MS), quarters (QS) or years (YS)."
        )
    return alias, how


def _column(value, role: str):
    if value is None or isinstance(value, str):
        return value
    if isinstance(value, bool) or not isinstance(value, int):
        raise InputError(f"The {role} column must be a name or a column number, not {value!r}.")
    return int(value)


#: Choices that the command line sets with a flag of the same name
#: (``--non-numeric`` for ``non_numeric``); the others come from --sheet,
#: --time, --value or a combined value such as ``--gaps value:0``.
CLI_FIELDS = ("decimal", "thousands", "delimiter", "timezone", "gaps", "duplicates", "non_numeric",
              "aggregate", "frequency")


@dataclass(frozen=True)
class ImportOptions:
    """How to read one table and what to do with its problems.

    Attributes
    ----------
    decimal : {None, ".", ","}
        The decimal mark of numbers written as text; None detects it.
    thousands : {None, "", ",", ".", " ", "'"}
        The thousands separator; ``""`` means none, None detects it.
    delimiter : str or None
        The field delimiter of a text table; None sniffs it.
    sheet : str, int or None
        Workbook sheet name or 0-based index; None for the first.
    time, value : str, int or None
        Column names or 1-based numbers; None detects them; ``time=""``
        asks for no time column (observations numbered 1, 2, ...).
    timezone : {None, "utc", "local"}
        Stamps with a UTC offset become naive: ``"utc"`` converts them to
        UTC, ``"local"`` keeps their local clock time; None keeps the local
        clock when every stamp has the same offset and converts to UTC
        otherwise.
    gaps : {None, "leave", "interpolate", "ffill", "value"}
        Periods missing from a regular calendar. None keeps the rows as read
        (the gaps are reported and no frequency is set). The others insert
        the missing periods: ``"leave"`` as missing values (the exact
        likelihood skips them), ``"interpolate"`` linearly in time,
        ``"ffill"`` with the last value before, ``"value"`` with
        :attr:`fill_value`. Except for ``"leave"``, empty cells are filled
        the same way.
    fill_value : float or None
        The value for ``gaps="value"``.
    duplicates : {"refuse", "mean", "sum", "last"}
        Repeated time stamps: refused, or merged by the mean, the sum or the
        last non-missing value of their rows.
    non_numeric : {"refuse", "missing"}
        Cells of the value column that are not numbers (``meter fault``):
        refused with their rows named, or read as missing values (noted).
    aggregate : str or None
        ``"ALIAS:how"`` (from :func:`parse_aggregate`), e.g. ``"h:mean"`` or
        ``"D:sum"``: combine readings into a coarser calendar.
    frequency : str or None
        A frequency chosen by the user (pandas alias, a word such as
        ``daily``, or seconds), overriding the inferred one.
    """

    decimal: str | None = None
    thousands: str | None = None
    delimiter: str | None = None
    sheet: str | int | None = None
    time: str | int | None = None
    value: str | int | None = None
    timezone: str | None = None
    gaps: str | None = None
    fill_value: float | None = None
    duplicates: str = "refuse"
    non_numeric: str = "refuse"
    aggregate: str | None = None
    frequency: str | None = None

    def __post_init__(self) -> None:
        set_ = lambda name, v: object.__setattr__(self, name, v)  # noqa: E731 - frozen dataclass
        if self.decimal is not None:
            key = str(self.decimal).strip().lower() or str(self.decimal)
            if key not in _DECIMALS:
                raise InputError(f"The decimal mark {self.decimal!r} is not '.' or ','. Choose one of them.")
            set_("decimal", _DECIMALS[key])
        if self.thousands is not None:
            key = str(self.thousands)
            key = key if key in _THOUSANDS else key.strip().lower()
            if key not in _THOUSANDS:
                raise InputError(
                    f"The thousands separator {self.thousands!r} is not one Lagwright reads. Choose none, "
                    "',', '.', space or apostrophe.")
            set_("thousands", _THOUSANDS[key])
        if self.decimal is not None and self.thousands and self.decimal == self.thousands:
            raise InputError(
                f"The decimal mark and the thousands separator are both '{self.decimal}'. Choose different ones."
            )
        if self.delimiter is not None:
            delimiter = DELIMITERS.get(str(self.delimiter).strip().lower(), self.delimiter)
            if delimiter == "\\t":
                delimiter = "\t"
            if not isinstance(delimiter, str) or len(delimiter) != 1 or delimiter in "\r\n\"" or delimiter.isalnum():
                raise InputError(
                    f"The delimiter {self.delimiter!r} is not usable. Give one character such as ',' ';' '|' or "
                    "a name: comma, semicolon, tab, bar, space."
                )
            set_("delimiter", delimiter)
        if self.sheet is not None and not isinstance(self.sheet, str):
            if isinstance(self.sheet, bool) or not isinstance(self.sheet, int) or self.sheet < 0:
                raise InputError(f"The sheet {self.sheet!r} is not a sheet name or a number from 0.")
        set_("time", _column(self.time, "time"))
        set_("value", _column(self.value, "value"))
        if self.timezone is not None:
            zone = str(self.timezone).strip().lower()
            if zone not in TIMEZONE_CHOICES:
                raise InputError(f"The time zone choice {self.timezone!r} is not 'utc' or 'local'. Choose one of them.")
            set_("timezone", zone)
        if self.gaps is not None:
            gaps = str(self.gaps).strip().lower()
            if gaps.startswith("value:") or gaps.startswith("fill:"):
                number = gaps.split(":", 1)[1]
                try:
                    set_("fill_value", float(number))
                except ValueError:
                    raise InputError(f"The fill value '{number}' is not a number. Write for example value:0.") from None
                gaps = "value"
            elif gaps in ("none", "keep", "as-read"):
                gaps = None
            if gaps is not None and gaps not in GAP_CHOICES:
                raise InputError(
                    f"The gap choice {self.gaps!r} is not one of leave, interpolate, ffill or value:NUMBER."
                )
            set_("gaps", gaps)
        if self.gaps == "value":
            if self.fill_value is None or not isinstance(self.fill_value, (int, float)) or isinstance(
                    self.fill_value, bool) or not math.isfinite(float(self.fill_value)):
                raise InputError("Filling gaps with a value needs a finite number: write value:NUMBER, e.g. value:0.")
            set_("fill_value", float(self.fill_value))
        elif self.fill_value is not None:
            set_("fill_value", None)
        duplicates = str(self.duplicates).strip().lower()
        if duplicates not in DUPLICATE_CHOICES:
            raise InputError(
                f"The duplicates choice {self.duplicates!r} is not one of refuse, mean, sum or last."
            )
        set_("duplicates", duplicates)
        non_numeric = str(self.non_numeric).strip().lower()
        if non_numeric not in NON_NUMERIC_CHOICES:
            raise InputError(
                f"The choice for cells that are not numbers, {self.non_numeric!r}, is not 'refuse' or 'missing'."
            )
        set_("non_numeric", non_numeric)
        if self.aggregate is not None:
            if not str(self.aggregate).strip():
                set_("aggregate", None)
            else:
                alias, how = parse_aggregate(self.aggregate)
                set_("aggregate", f"{alias}:{how}")
        if self.frequency is not None:
            if not str(self.frequency).strip():
                set_("frequency", None)
            else:
                set_("frequency", parse_frequency(self.frequency))

    # ----------------------------------------------------------------- helpers
    def replace(self, **changes) -> ImportOptions:
        """A copy with some choices changed (validated again)."""
        return replace(self, **changes)

    @property
    def reading(self) -> tuple:
        """The choices that change how the table itself is read (not what is done with it)."""
        return (self.decimal, self.thousands, self.delimiter, self.sheet)

    @property
    def aggregate_parts(self) -> tuple[str, str] | None:
        """``(alias, how)`` of the aggregation, or None."""
        if self.aggregate is None:
            return None
        alias, how = self.aggregate.rsplit(":", 1)
        return alias, how

    def to_dict(self) -> dict:
        """Plain JSON-ready dictionary (for the session file)."""
        return asdict(self)

    @classmethod
    def from_dict(cls, data: dict | None) -> ImportOptions:
        """Rebuild from :meth:`to_dict`; missing keys take their defaults.

        Raises
        ------
        InputError
            On keys this version does not know or values it cannot use.
        """
        if data is None:
            return cls()
        if not isinstance(data, dict):
            raise InputError("The saved import choices are not a mapping; the session file may be damaged.")
        known = {f.name for f in fields(cls)}
        unknown = sorted(set(data) - known)
        if unknown:
            raise InputError(
                f"The saved import choices hold unknown entries ({', '.join(unknown)}); the session may come "
                "from a newer Lagwright. Update Lagwright to open it."
            )
        return cls(**data)

    def describe(self) -> tuple[str, ...]:
        """One sentence per choice that differs from the default, for the provenance notes."""
        out = []
        if self.decimal is not None or self.thousands is not None:
            parts = []
            if self.decimal is not None:
                parts.append(f"decimal mark '{self.decimal}'")
            if self.thousands is not None:
                parts.append("no thousands separator" if self.thousands == "" else
                             f"thousands separator '{self.thousands}'")
            out.append("Choice: numbers read with " + " and ".join(parts) + ".")
        if self.delimiter is not None:
            name = {v: k for k, v in DELIMITERS.items()}.get(self.delimiter, repr(self.delimiter))
            out.append(f"Choice: fields separated by {name}.")
        if self.timezone == "utc":
            out.append("Choice: time stamps with a UTC offset converted to UTC.")
        elif self.timezone == "local":
            out.append("Choice: time stamps with a UTC offset kept at their local clock time.")
        if self.non_numeric == "missing":
            out.append("Choice: cells of the value column that are not numbers read as missing values.")
        if self.duplicates != "refuse":
            out.append(f"Choice: repeated time stamps merged by the {self.duplicates} of their rows.")
        if self.aggregate is not None:
            alias, how = self.aggregate_parts
            out.append(f"Choice: readings aggregated to {describe(alias)} {'totals' if how == 'sum' else 'means'}.")
        if self.frequency is not None:
            out.append(f"Choice: frequency set to {describe(self.frequency)}.")
        if self.gaps == "leave":
            out.append("Choice: missing periods inserted as missing values (the exact likelihood skips them).")
        elif self.gaps == "interpolate":
            out.append("Choice: missing periods and values filled by linear interpolation in time.")
        elif self.gaps == "ffill":
            out.append("Choice: missing periods and values filled with the last value before them.")
        elif self.gaps == "value":
            out.append(f"Choice: missing periods and values filled with {self.fill_value:g}.")
        return tuple(out)

    def merged(self, value=None, time=None, sheet=None) -> ImportOptions:
        """These options with the plain loader arguments filled in where given."""
        changes = {}
        if value is not None:
            changes["value"] = value
        if time is not None:
            changes["time"] = time
        if sheet is not None:
            changes["sheet"] = sheet
        return self.replace(**changes) if changes else self
