"""The import report: what a table holds and what loading it would do, before anything is fitted.

:class:`ImportReport` is a frozen value built by
:func:`lagwright.core.inspection.inspect_table`. The import dialog shows
its :meth:`~ImportReport.lines`; a caller that wants the series takes
:attr:`~ImportReport.series` (None when :attr:`~ImportReport.problem` says
why the table cannot be loaded with the current choices).

References
----------
Checks of the kind every data-quality review of a meter or sensor series
makes (repeated stamps, gaps, missing and non-numeric values, flat-lined
stretches); common practice, no single source.
Box, G. E. P. and Cox, D. R. (1964). An analysis of transformations.
*Journal of the Royal Statistical Society B* 26, 211-252 (the Box-Cox
transform needs positive values).
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .frequency import GapRun, describe, stamp_label
from .import_options import ImportOptions
from .series import Series

__all__ = ["ImportReport", "CellProblem", "RepeatedStamp", "ConstantStretch", "Dropped"]

_SHOWN = 5


@dataclass(frozen=True)
class CellProblem:
    """A cell that cannot be used: where it is (``data row 4 (line 5 of the file)``), its column and text."""

    where: str
    row: int
    column: str
    text: str


@dataclass(frozen=True)
class RepeatedStamp:
    """A time stamp on more than one row: the stamp, the first few 1-based data rows, how many rows."""

    stamp: str
    rows: tuple[int, ...]
    count: int


@dataclass(frozen=True)
class ConstantStretch:
    """Consecutive observations with exactly the same value (a stuck meter looks like this)."""

    first: str
    last: str
    length: int
    value: float


@dataclass(frozen=True)
class Dropped:
    """Rows of the table that did not become observations, and why."""

    reason: str
    rows: int


@dataclass(frozen=True, eq=False)
class ImportReport:
    """What a table holds and what loading it with :attr:`options` would give.

    Attributes
    ----------
    source, kind : str
        File name (or ``pasted text``) and ``text``, ``workbook``, ``parquet`` or ``pasted``.
    sheets : tuple of str
        The workbook's sheets (empty for other kinds); ``sheet`` the one read.
    delimiter : str or None
        The field delimiter of a text table.
    columns, numeric_columns : tuple of str
        All columns, and those holding numbers (the value columns one may switch between).
    time_column, value_column : str or None
        The columns chosen or detected (None when they could not be chosen).
    preview_header, preview_rows : tuples of str
        The first rows of the table as text, for a preview.
    rows_read, rows_used : int
        Data rows in the table, and rows that became observations.
    dropped : tuple of Dropped
        Rows left out, with the reason.
    repeated, repeated_count
        The first repeated time stamps and how many distinct stamps repeat.
    frequency : str or None
        The calendar's pandas alias (inferred from the stamps as read, or
        chosen); ``frequency_chosen`` says which.
    gaps, missing_periods
        Runs of periods missing from that calendar, and their total.
    missing_values : int
        Empty cells (or missing markers) among the rows used, as read;
        ``series_missing`` the missing values left in the series after the repairs.
    non_numeric, non_numeric_count
        The first cells of the value column that are not numbers, and how many.
    bad_stamps, bad_stamp_count
        The first time stamps that cannot be read (or lie outside 1678-2261), and how many.
    constant : tuple of ConstantStretch
        The longest runs of identical values (at least ``min_run`` long).
    nonpositive : int
        Values at or below zero; ``transform`` is the transform the user has
        chosen (``"log"``, ``"boxcox"`` or None), which makes them a problem.
    notes : tuple of str
        The provenance notes the series would carry.
    problem : str or None
        Why the table cannot be loaded with these choices (the loader's
        message), or None.
    series : Series or None
        The series these choices give.
    options : ImportOptions
        The choices the report was made with.
    """

    source: str
    kind: str = "text"
    options: ImportOptions = field(default_factory=ImportOptions)
    sheets: tuple[str, ...] = ()
    sheet: str | None = None
    delimiter: str | None = None
    columns: tuple[str, ...] = ()
    numeric_columns: tuple[str, ...] = ()
    time_column: str | None = None
    value_column: str | None = None
    preview_header: tuple[str, ...] = ()
    preview_rows: tuple[tuple[str, ...], ...] = ()
    rows_read: int = 0
    rows_used: int = 0
    dropped: tuple[Dropped, ...] = ()
    repeated: tuple[RepeatedStamp, ...] = ()
    repeated_count: int = 0
    frequency: str | None = None
    frequency_chosen: bool = False
    gaps: tuple[GapRun, ...] = ()
    missing_periods: int = 0
    missing_values: int = 0
    series_missing: int = 0
    non_numeric: tuple[CellProblem, ...] = ()
    non_numeric_count: int = 0
    bad_stamps: tuple[CellProblem, ...] = ()
    bad_stamp_count: int = 0
    constant: tuple[ConstantStretch, ...] = ()
    min_run: int = 0
    nonpositive: int = 0
    first_nonpositive: str = ""
    transform: str | None = None
    notes: tuple[str, ...] = ()
    problem: str | None = None
    series: Series | None = None
    table: object = field(default=None, repr=False)  # the table read, to reuse while only other choices change

    @property
    def ok(self) -> bool:
        """Whether the table loads with these choices."""
        return self.series is not None and self.problem is None

    @property
    def frequency_label(self) -> str:
        """The frequency in words (``daily``, ``every 15 minutes``, ``irregular``)."""
        return describe(self.frequency) if self.frequency else ("none (no time column)" if not self.time_column
                                                               else "irregular")

    @property
    def nonpositive_blocks_transform(self) -> bool:
        """Whether a chosen log or Box-Cox transform meets values at or below zero."""
        return self.transform in ("log", "boxcox") and self.nonpositive > 0

    def lines(self) -> tuple[str, ...]:
        """The report in plain sentences, problems first, then facts."""
        out: list[str] = []
        if self.problem:
            out.append(f"Cannot load: {self.problem}")
        if self.non_numeric_count:
            shown = "; ".join(f"{c.where}: {c.text!r}" for c in self.non_numeric[:_SHOWN])
            more = f"; and {self.non_numeric_count - _SHOWN} more" if self.non_numeric_count > _SHOWN else ""
            action = "refused" if self.options.non_numeric == "refuse" else "read as missing"
            out.append(f"Not numbers in '{self.value_column}': {self.non_numeric_count} cell(s) ({action}): "
                       f"{shown}{more}.")
        if self.bad_stamp_count:
            shown = "; ".join(f"{c.where}: {c.text!r}" for c in self.bad_stamps[:_SHOWN])
            more = f"; and {self.bad_stamp_count - _SHOWN} more" if self.bad_stamp_count > _SHOWN else ""
            out.append(f"Unreadable time stamps in '{self.time_column}': {self.bad_stamp_count}: {shown}{more}.")
        if self.repeated_count:
            shown = "; ".join(f"{r.stamp} (rows {', '.join(map(str, r.rows))})" for r in self.repeated[:_SHOWN])
            more = f"; and {self.repeated_count - _SHOWN} more" if self.repeated_count > _SHOWN else ""
            action = ("refused: choose mean, sum or last to merge them" if self.options.duplicates == "refuse"
                      else f"merged by {self.options.duplicates}")
            out.append(f"Repeated time stamps: {self.repeated_count} ({action}): {shown}{more}.")
        if self.nonpositive_blocks_transform:
            name = "log" if self.transform == "log" else "Box-Cox"
            out.append(f"{self.nonpositive} value(s) are zero or negative (the first at {self.first_nonpositive}): "
                       f"a {name} transform is not possible.")
        out.append(f"Rows read: {self.rows_read:,}" + (f"; rows used: {self.rows_used:,}." if self.series is not None
                                                      else "."))
        for drop in self.dropped:
            out.append(f"Rows dropped: {drop.rows:,} ({drop.reason}).")
        if self.time_column:
            which = "chosen" if self.frequency_chosen else "inferred"
            out.append(f"Frequency ({which}): {self.frequency_label}"
                       + (f" (pandas '{self.frequency}')." if self.frequency else "."))
        else:
            out.append("No time column: the observations are numbered 1, 2, 3, ...")
        if self.missing_periods:
            shown = "; ".join(g.describe() for g in self.gaps[:_SHOWN])
            more = f"; and {len(self.gaps) - _SHOWN} more run(s)" if len(self.gaps) > _SHOWN else ""
            handling = {None: "kept as read: the series has no frequency until they are filled",
                        "leave": "inserted as missing values",
                        "interpolate": "filled by interpolation",
                        "ffill": "filled with the last value before",
                        "value": "filled with a value"}[self.options.gaps]
            if self.options.aggregate is not None:
                handling = "in the readings; the aggregation comes first, see the series below"
            out.append(f"Gaps: {self.missing_periods:,} missing period(s) in {len(self.gaps)} run(s) ({handling}): "
                       f"{shown}{more}.")
        elif self.time_column and self.frequency:
            out.append("Gaps: none.")
        out.append(f"Missing values: {self.missing_values:,} in the file"
                   + (f"; {self.series_missing:,} in the series as loaded." if self.series is not None else "."))
        if self.constant:
            shown = "; ".join(f"{c.length} × {c.value:g} from {c.first} to {c.last}" for c in self.constant[:3])
            out.append(f"Constant stretches (≥ {self.min_run} equal values in a row): {len(self.constant)}"
                       f" shown, longest: {shown}.")
        if self.series is not None:
            series = self.series
            span = ""
            if series.times is not None and len(series):
                span = f", {stamp_label(series.times[0])} to {stamp_label(series.times[-1])}"
            freq = describe(series.frequency) if series.frequency else (
                "numbered observations" if series.times is None else "no regular frequency")
            out.append(f"Series as loaded: {len(series):,} observations of '{series.name}'{span}, {freq}.")
        if self.nonpositive and not self.nonpositive_blocks_transform:
            out.append(f"Zero or negative values: {self.nonpositive} (a log or Box-Cox transform would need "
                       "positive values).")
        return tuple(out)
