"""Read a series from a CSV/TSV/text table, an Excel workbook, a Parquet file or pasted text.

:func:`load_series` turns a file with a time column and a value column into a
:class:`~lagwright.core.series.Series`. It reports what it did in the
series' :class:`~lagwright.core.series.Provenance` notes and refuses, with an
:class:`~lagwright.core.errors.InputError` that names the file, the column
and the rows, anything it cannot use. The user's choices (delimiter, number
format, columns, time zone, and the repairs: merging repeated stamps,
aggregating, filling gaps) come in an
:class:`~lagwright.core.import_options.ImportOptions`; every choice and
every repair is written into the notes. The work is staged so that a table
can be read once (:func:`read_table`) and turned into series with
different choices (:func:`series_from_table`,
:func:`lagwright.core.inspection.inspect_table`).

Rules followed when reading
---------------------------
* **Text tables** (``.csv``, ``.tsv``, ``.txt`` and any other extension that
  is not a workbook): UTF-8 with or without a byte-order mark, UTF-16 with a
  byte-order mark, otherwise Windows-1252/Latin-1. The delimiter is sniffed
  among comma, semicolon, tab and vertical bar from the first lines (or
  chosen, spaces included). Numbers written as text are read in the format
  :func:`~lagwright.core.numbers.detect_format` finds, or the one chosen:
  decimal point or comma, thousands separated by comma, point, space or
  apostrophe (``1,234.5``, ``1.234,5``, ``1 234,5``), noted when not plain.
  Text is read in chunks of rows, with progress reported. Pasted text is
  read the same way. The first non-blank line is the header unless every field
  in it is a number or a date, in which case columns are named
  ``column 1``, ``column 2``, ...
* **Workbooks** (``.xlsx``, ``.xlsm``, or any file that is a ZIP archive):
  read with openpyxl through pandas. ``sheet`` is a sheet name or a 0-based
  sheet index; the first sheet by default. Leading blank rows are skipped;
  the first non-blank row is the header (same rule as above). Date cells are
  real dates; a time-named column of numbers between 3653 and 109574 is read
  as Excel serial day numbers in the workbook's date system (1900 or 1904).
* **Parquet** (``.parquet``, ``.pq`` or a file starting with ``PAR1``): read
  with pyarrow through pandas (see :mod:`lagwright.core.parquet`).
* **Rows** are reported as *data rows*, counted from 1 at the first row
  under the header, with the line of the text file or the row of the sheet
  in brackets, as a spreadsheet shows it.
* **Columns**: ``value`` and ``time`` are column names (matched exactly, then
  ignoring case and surrounding spaces) or 1-based column numbers. Left out,
  the time column is the single date-like column (its values parse as dates,
  or its name is a word such as date, time, timestamp, period, month), and
  the value column is the single column of numbers other than it. Counters
  such as an unnamed ``0, 1, 2, ...`` index column are not candidates.
* **Dates** are parsed with pandas (plain ISO 8601 and digits-only formats
  by Arrow first when the text is held by Arrow; any stamp Arrow refuses
  sends the column back to pandas). ISO 8601 (``2021-03-31``,
  ``2021-03-31 14:20``) is tried first and is the form to prefer. For other
  forms pandas guesses the format from the first stamp, once reading
  month first and once day first; the reading that parses every stamp wins.
  When both do (every day is 12 or less), the one that puts the rows in time
  order wins, then day first for dotted dates (``03.04.2021``) and month
  first otherwise, and a note says the dates were ambiguous. Stamps with a
  UTC offset keep their local clock time (or are converted to UTC when the
  offsets differ), unless the time-zone choice says ``utc`` or ``local``.
  An integer column named like ``year`` holding years is read as 1 January
  of each year.
* **Order and spacing**: rows out of time order are sorted (noted); repeated
  stamps are refused unless merging was chosen. Readings are then
  aggregated if asked. The frequency is inferred with
  :func:`pandas.infer_freq` (see :mod:`lagwright.core.frequency`) or set by
  the user. When the stamps fit a regular calendar with some periods
  missing, the missing periods are listed in the notes; without a gap choice
  the frequency is left unset (the series is not evenly spaced until the
  gaps are filled), with one the periods are inserted and filled as chosen
  (:mod:`lagwright.core.repair`).
* **Missing values**: empty cells and the usual missing-value markers
  (``NA``, ``NaN``, ``null``, ``#N/A``, ...) become NaN and are counted in
  the notes. Cells that are not numbers are refused with their rows named,
  or read as missing if so chosen. Rows with neither a time stamp nor a
  value are skipped (noted); a value without a time stamp is refused.

References
----------
pandas development team. *pandas documentation*: ``read_csv``,
``read_excel``, ``read_parquet``, ``to_datetime``, ``infer_freq``
(pandas.pydata.org).
Apache Arrow. *Compute functions*: ``cast``, ``strptime`` (arrow.apache.org).
ECMA-376, *Office Open XML File Formats*, Part 1, SpreadsheetML dates (the 1900 and 1904
date systems of serial day numbers).
Shafranovich, Y. (2005). RFC 4180, *Common Format and MIME Type for
Comma-Separated Values (CSV) Files*.
ISO 8601-1:2019, *Date and time — Representations for information
interchange*.
"""

from __future__ import annotations

import codecs
import csv
import datetime as _dt
import hashlib
import io
import os
import re
import warnings
from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass, field
from dataclasses import replace as _replace
from pathlib import Path

import numpy as np
import pandas as pd

from . import repair
from .errors import InputError
from .frequency import analyse as _analyse_spacing
from .frequency import describe as _describe_frequency
from .frequency import stamp_label as _stamp_label
from .import_options import ImportOptions
from .numbers import NumberFormat, detect_format, looks_numeric, parse_numbers
from .series import Provenance, Series

__all__ = [
    "load_series", "parse_pasted", "read_table", "series_from_table", "PastedText", "Progress",
    "TEXT_SUFFIXES", "WORKBOOK_SUFFIXES", "PARQUET_SUFFIXES",
]

#: Extensions read as delimited text (other unknown extensions are tried as text too).
TEXT_SUFFIXES: tuple[str, ...] = (".csv", ".tsv", ".txt", ".tab", ".dat")
#: Extensions read as Excel workbooks.
WORKBOOK_SUFFIXES: tuple[str, ...] = (".xlsx", ".xlsm")
#: Extensions read as Parquet files (needs the optional pyarrow package).
PARQUET_SUFFIXES: tuple[str, ...] = (".parquet", ".pq")

#: A progress callback: called with the fraction done, from 0 to 1, never decreasing.
Progress = Callable[[float], None]

_DELIMITERS = (",", ";", "\t", "|")
_DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}
_SHOWN = 5  # offending rows quoted in a message
_SNIFF_CHARS = 65536
_SNIFF_LINES = 50
_DATE_SAMPLE = 200

# Range of datetime64[ns], the resolution a Series stores.
_FIRST_STAMP = pd.Timestamp("1677-09-22")
_LAST_STAMP = pd.Timestamp("2262-04-10")

_TIME_WORDS = frozenset(
    {
        "date", "dates", "time", "times", "timestamp", "timestamps", "datetime",
        "datestamp", "stamp", "period", "periods", "month", "months", "day", "days",
        "week", "weeks", "year", "years", "quarter", "hour", "minute", "when",
    }
)
_INDEX_WORDS = frozenset(
    {"index", "idx", "row", "rownum", "obs", "observation", "no", "nr", "id", "t", "n", "#", ""}
)

_ISO_STAMP = re.compile(
    r"^\d{4}-\d{1,2}(-\d{1,2})?([T ]\d{1,2}(:\d{2}(:\d{2}(\.\d+)?)?)?)?\s*(Z|[+-]\d{2}(:?\d{2})?)?$"
)
_TIME_OF_DAY = r"([ T]\d{1,2}[:.]\d{2}([:.]\d{2}(\.\d+)?)?\s*([AaPp]\.?[Mm]\.?)?)?\s*(Z|UTC|GMT|[+-]\d{2}:?\d{2})?"
_DATE_LOOKING = re.compile(
    r"^("
    r"\d{4}[-/.]\d{1,2}([-/.]\d{1,2})?"  # 2021-03-31, 2021/3/31, 2021-03
    r"|\d{1,2}[-/.]\d{1,2}[-/.]\d{2,4}"  # 31.03.2021, 3/31/21
    r"|\d{4}-?[Qq][1-4]"  # 2021Q1
    r"|[A-Za-z]{3,9}\.?[ -]\d{1,2},?[ -]\d{4}"  # March 31, 2021
    r"|\d{1,2}[ -][A-Za-z]{3,9}\.?[ -]\d{2,4}"  # 31 Mar 2021, 31-Mar-21
    r"|[A-Za-z]{3,9}\.?[ -]\d{4}"  # Mar 2021
    r")" + _TIME_OF_DAY + r"$"
)
_QUOTED = re.compile(r'"[^"\r\n]*"')
_MISSING_MARKERS = frozenset(
    {"", "#N/A", "#N/A N/A", "#NA", "-1.#IND", "-1.#QNAN", "-NaN", "-nan", "1.#IND", "1.#QNAN",
     "<NA>", "N/A", "NA", "NULL", "NaN", "None", "n/a", "nan", "null"}
)


_CHUNK_ROWS = 200_000  # rows per chunk when reading text, between progress reports
#: Excel serial day numbers accepted as dates in a time-named column (1910-01-01 to 2199-12-31).
_SERIAL_RANGE = (3653.0, 109574.0)


# --------------------------------------------------------------------------- sources and progress
@dataclass(frozen=True)
class PastedText:
    """Text pasted from the clipboard (usually cells copied from a spreadsheet), read as a text table."""

    text: str
    name: str = "pasted text"


class _Progress:
    """Maps the fractions of one stage onto a span of the caller's 0..1 and never goes back."""

    def __init__(self, callback: Progress | None, low: float = 0.0, high: float = 1.0, root=None):
        self.callback = callback
        self.low, self.high = low, high
        self.root = root if root is not None else self
        self.last = 0.0

    def __call__(self, fraction: float) -> None:
        if self.root.callback is None:
            return
        value = self.low + (self.high - self.low) * min(1.0, max(0.0, float(fraction)))
        if value > self.root.last:
            self.root.last = value
            self.root.callback(value)

    def span(self, low: float, high: float) -> _Progress:
        width = self.high - self.low
        return _Progress(None, self.low + width * low, self.low + width * high, root=self.root)


# --------------------------------------------------------------------------- the table
@dataclass
class _Table:
    """A file read into a frame of raw columns, with what is needed to name rows."""

    frame: pd.DataFrame
    source: str
    workbook: bool
    delimiter: str | None = None
    sheet: str | None = None
    first_sheet_row: int = 2  # sheet row (1-based) of data row 1
    text: str | None = None  # decoded text, to map data rows to file lines
    header: bool = True
    other_sheets: tuple[str, ...] = ()
    notes: list[str] = field(default_factory=list)
    _lines: list[int] | None = None
    kind: str = "text"  # "text", "workbook", "parquet" or "pasted"
    digest: str = ""
    sheets: tuple[str, ...] = ()
    excel_epoch: str | None = None  # the workbook's date system, for serial day numbers
    reading: tuple = ()  # ImportOptions.reading the table was read with
    text_name: str = "the file"

    def where(self, index: int) -> str:
        """Human position of the 0-based data row ``index``."""
        row = index + 1
        if self.workbook:
            return f"data row {row} (sheet row {self.first_sheet_row + index})"
        line = self._file_line(index)
        return f"data row {row} (line {line} of {self.text_name})" if line else f"data row {row}"

    def _file_line(self, index: int) -> int | None:
        if self.text is None:
            return None
        if self._lines is None:
            lines = re.split(r"\r\n|\r|\n", self.text)
            nonblank = [i + 1 for i, line in enumerate(lines) if line.strip()]
            if self.header:
                nonblank = nonblank[1:]
            self._lines = nonblank if len(nonblank) == len(self.frame) else []
        return self._lines[index] if index < len(self._lines) else None

    def rows_text(self, positions, texts) -> str:
        """``data row 4 (line 5 of the file): 'abc'; ...`` for the first few offenders."""
        parts = [f"{self.where(int(p))}: {_quote(t)}" for p, t in list(zip(positions, texts))[:_SHOWN]]
        more = len(positions) - _SHOWN
        text = "; ".join(parts)
        if more > 0:
            text += f"; and {more} more"
        return text

    def fresh(self) -> _Table:
        """A copy whose notes can be added to without changing this table's (the frame is shared)."""
        return _replace(self, notes=list(self.notes))


def _quote(value) -> str:
    text = str(value)
    if len(text) > 40:
        text = text[:37] + "..."
    return repr(text)


class _RawCells:
    """The raw cells of a column, fetched by position only when a message quotes them (no copy of the column)."""

    __slots__ = ("column",)

    def __init__(self, column: pd.Series):
        self.column = column

    def __getitem__(self, index):
        if isinstance(index, (int, np.integer)):
            return self.column.iloc[int(index)]
        return self.column.iloc[np.asarray(index, dtype=np.int64)].to_numpy(dtype=object)


@dataclass
class _Parsed:
    """The chosen columns read leniently: what is wrong is recorded, not raised."""

    table: _Table
    time_col: str | None
    value_col: str
    values: np.ndarray  # float64, NaN for empty and for non-numeric cells
    bad_values: np.ndarray  # positions of cells that are not numbers
    cells: _RawCells | None  # the raw value cells, to quote offenders
    stamps: np.ndarray | None  # datetime64[ns]; NaT for empty, unreadable or out-of-range stamps
    bad_stamps: np.ndarray
    stamp_cells: _RawCells | None
    far_stamps: np.ndarray  # positions of stamps outside the datetime64[ns] range
    far_labels: list


# --------------------------------------------------------------------------- entry points
def load_series(
    path: str | os.PathLike | PastedText,
    value: str | int | None = None,
    time: str | int | None = None,
    sheet: str | int | None = None,
    options: ImportOptions | None = None,
    progress: Progress | None = None,
) -> Series:
    """Read one series (a time column and a value column) from a table file.

    Parameters
    ----------
    path : str, path-like or PastedText
        A CSV/TSV/text table, an Excel ``.xlsx`` workbook, a Parquet file,
        or :class:`PastedText`.
    value : str or int, optional
        The value column: its name, or its 1-based number. Left out, the
        single column of numbers other than the time column is used.
    time : str or int, optional
        The time column: its name, or its 1-based number. Left out, the single
        date-like column is used; without one the observations are numbered
        1, 2, ... and the series has no time stamps. An empty string asks
        for no time column.
    sheet : str or int, optional
        Workbooks only: the sheet's name or its 0-based index (a string of
        digits that is not a sheet name counts as an index). Default: the
        first sheet.
    options : ImportOptions, optional
        How to read the table and what to repair (see
        :class:`~lagwright.core.import_options.ImportOptions`). ``value``,
        ``time`` and ``sheet``, when given, take precedence over the same
        fields of ``options``. Default: everything detected, nothing repaired.
    progress : callable, optional
        Called with the fraction done (0 to 1) while a large file is read.
        It runs in the loading thread; an exception it raises stops the load.

    Returns
    -------
    Series
        Float values (NaN for missing cells), ``datetime64[ns]`` stamps in
        increasing order or ``None``, the pandas frequency alias or
        ``None``, and provenance (file name, SHA-256 of the bytes, columns,
        rows read and used, notes: what was found and every repair chosen).
        The series has passed :meth:`Series.check_usable`.

    Raises
    ------
    InputError
        When the file cannot be read, a column cannot be chosen or used, the
        time stamps are unusable or repeated (unless merging was chosen), or
        the series is too short, constant or infinite. The message names the
        file, the column and the rows, and says what to do.

    References
    ----------
    pandas documentation: ``read_csv``, ``read_excel``, ``read_parquet``,
    ``to_datetime``, ``infer_freq``. RFC 4180 (CSV). ISO 8601 (dates).
    """
    options = (options or ImportOptions()).merged(value=value, time=time, sheet=sheet)
    report = _Progress(progress)
    with np.errstate(all="ignore"):  # overflow in extreme numbers is handled, not warned about
        table = read_table(path, options, progress=report.span(0.0, 0.7))
        series = series_from_table(table, options, progress=report.span(0.7, 1.0))
    report(1.0)
    return series


def parse_pasted(text: str, options: ImportOptions | None = None, name: str = "pasted text") -> Series:
    """Read a series from text pasted from the clipboard (cells copied from a spreadsheet).

    The text is read like a text table (tabs are the usual delimiter); see
    :func:`load_series` for the rules and the errors.
    """
    return load_series(PastedText(text, name), options=options)


def read_table(
    source: str | os.PathLike | PastedText, options: ImportOptions | None = None, progress: Progress | None = None
) -> _Table:
    """Read a file (or pasted text) into a raw table, following the reading choices of ``options``.

    The result can be given to :func:`series_from_table` (and to
    :func:`lagwright.core.inspection.inspect_table`) several times with
    different column and repair choices, without reading the file again.
    """
    options = options or ImportOptions()
    report = progress if isinstance(progress, _Progress) else _Progress(progress)
    with np.errstate(all="ignore"):
        if isinstance(source, PastedText):
            table = _read_pasted(source, options, report)
        else:
            file_path = Path(os.fspath(source)).expanduser()
            data = _read_bytes(file_path)
            name = file_path.name or str(file_path)
            table = _read_table(data, file_path, name, options, report)
            table.digest = hashlib.sha256(data).hexdigest()
    table.reading = options.reading
    report(1.0)
    return table


def series_from_table(table: _Table, options: ImportOptions | None = None, progress: Progress | None = None) -> Series:
    """The series ``options`` asks for from a table read by :func:`read_table` (strict: refuses problems)."""
    options = options or ImportOptions()
    report = progress if isinstance(progress, _Progress) else _Progress(progress)
    with np.errstate(all="ignore"):
        parsed = _parse(table, options, report.span(0.0, 0.8))
        series = _assemble(parsed, options)
    report(1.0)
    return series


def _with_sheet_hint(table: _Table, options: ImportOptions, exc: InputError) -> InputError:
    if table.other_sheets and options.sheet is None:
        others = ", ".join(f"'{n}'" for n in table.other_sheets)
        return InputError(f"{exc} (This is the sheet '{table.sheet}'; the workbook also has {others}: "
                          "choose one with --sheet NAME.)")
    return exc


def _parse(table: _Table, options: ImportOptions, progress: _Progress) -> _Parsed:
    """Choose the columns and read them, recording (not raising) bad cells and stamps."""
    table = table.fresh()
    try:
        time_col = _pick_time_column(table, options.time)
        value_col = _pick_value_column(table, options.value, time_col)
        values, bad_values, cells = _read_numbers(table, value_col, options)
    except InputError as exc:
        raise _with_sheet_hint(table, options, exc) from None
    progress(0.4)
    stamps, bad_stamps, stamp_cells, far, far_labels = None, np.empty(0, np.int64), None, np.empty(0, np.int64), []
    if time_col is not None:
        stamps, bad_stamps, stamp_cells, far, far_labels = _read_stamps(table, time_col, options.timezone)
    progress(1.0)
    return _Parsed(table, time_col, value_col, values, bad_values, cells, stamps, bad_stamps, stamp_cells,
                   far, far_labels)


def _refuse_bad_cells(parsed: _Parsed, options: ImportOptions) -> None:
    """Raise the first problem with the cells themselves (non-numbers, unreadable or far stamps)."""
    table = parsed.table
    if parsed.bad_values.size and options.non_numeric == "missing":
        bad = parsed.bad_values
        table.notes.append(
            f"{bad.size} cell(s) of '{parsed.value_col}' are not numbers and were read as missing values: "
            f"{table.rows_text(bad, [parsed.cells[i] for i in bad])}.")
    elif parsed.bad_values.size:
        raise _with_sheet_hint(table, options, _not_numbers_error(table, parsed.value_col, parsed.bad_values,
                                                                  parsed.cells))
    if parsed.time_col is None:
        return
    name, source = parsed.time_col, table.source
    if parsed.bad_stamps.size:
        bad = parsed.bad_stamps
        raise InputError(
            f"The time column '{name}' of '{source}' holds {bad.size} entr{'y' if bad.size == 1 else 'ies'} "
            f"that could not be read as a date or time: {table.rows_text(bad, parsed.stamp_cells[bad])}. Data "
            "rows are counted from 1 under the header. Correct them (ISO dates such as 2021-03-31 or "
            "2021-03-31 14:20 are safest), or choose another column with --time NAME."
        )
    if parsed.far_stamps.size:
        shown = table.rows_text(parsed.far_stamps, parsed.far_labels)
        raise InputError(
            f"The time column '{name}' of '{source}' has dates outside the years 1678 to 2261 that "
            f"Lagwright handles: {shown}. Correct those dates and load the file again."
        )


def _assemble(parsed: _Parsed, options: ImportOptions) -> Series:
    """Build the series from leniently parsed columns, refusing problems and applying the repairs chosen."""
    _refuse_bad_cells(parsed, options)
    table = parsed.table
    source, time_col, value_col = table.source, parsed.time_col, parsed.value_col
    notes = table.notes
    values = parsed.values
    rows_read = len(values)

    keep = np.ones(rows_read, dtype=bool)
    stamps = parsed.stamps
    if time_col is None:
        trailing = _trailing_blank_count(values)
        if trailing:
            keep[rows_read - trailing:] = False
            notes.append(f"{trailing} empty row(s) at the end of the table were skipped.")
    else:
        no_stamp = np.isnat(stamps)
        lone = no_stamp & ~np.isnan(values)
        if lone.any():
            where = np.flatnonzero(lone)
            raise InputError(
                f"'{source}': the time column '{time_col}' is empty in {where.size} row(s) that hold a "
                f"value ({table.rows_text(where, values[where])}). Fill in their time stamps or delete "
                "those rows, then load the file again."
            )
        if no_stamp.any():
            keep &= ~no_stamp
            notes.append(f"{int(no_stamp.sum())} row(s) with neither a time stamp nor a value were skipped.")

    positions = np.flatnonzero(keep)
    values = values[keep]
    if stamps is not None:
        stamps = stamps[keep]
        stamps, values, positions = _order_by_time(table, time_col, stamps, values, positions, options.duplicates)

    infinite = np.flatnonzero(np.isinf(values))
    if infinite.size:
        order = np.argsort(positions[infinite])
        shown = table.rows_text(positions[infinite][order], values[infinite][order])
        raise InputError(
            f"'{source}': the value column '{value_col}' holds {infinite.size} infinite number(s), or "
            f"numbers too large to store ({shown}). Correct or empty those cells and load the file again."
        )
    missing = int(np.isnan(values).sum())
    if missing:
        first = table.where(int(positions[np.flatnonzero(np.isnan(values))[0]]))
        notes.append(
            f"{missing} of {values.size} value(s) in '{value_col}' are missing (empty or marked missing); "
            f"the first is at {first}."
        )
    notes.extend(options.describe())

    frequency = None
    if stamps is not None:
        chosen = options.frequency
        if options.aggregate_parts is not None:
            alias, how = options.aggregate_parts
            stamps, values, note = repair.aggregate(stamps, values, alias, how)
            notes.append(note)
            chosen = chosen or alias
            if np.isinf(values).any():
                raise InputError(
                    f"'{source}': adding up the values of '{value_col}' gave numbers too large to store. "
                    "Aggregate by mean instead, or rescale the values."
                )
        spacing = _analyse_spacing(stamps, chosen)
        if spacing.off_calendar.size:
            off = spacing.off_calendar
            aggregated = options.aggregate_parts is not None
            shown = ", ".join(
                _stamp_label(stamps[k]) + ("" if aggregated else f" ({table.where(int(positions[k]))})")
                for k in off[:_SHOWN])
            more = f" and {off.size - _SHOWN} more" if off.size > _SHOWN else ""
            raise InputError(
                f"'{source}': {off.size} time stamp(s) in '{time_col}' do not fall on the "
                f"{_describe_frequency(spacing.alias)} calendar chosen: {shown}{more}. Choose the frequency the "
                "stamps follow, or aggregate the readings to it (for example --aggregate h:mean)."
            )
        if options.aggregate_parts is not None and options.frequency is None:
            notes.append(f"The aggregated series is {_describe_frequency(spacing.alias)} "
                         f"(pandas frequency '{spacing.alias}').")
        else:
            notes.append(spacing.note)
        frequency = spacing.alias
        if spacing.missing.size:
            if options.gaps is None:
                notes[-1] += " Until the gaps are filled the series is treated as unevenly spaced (no frequency)."
                frequency = None
            else:
                stamps, values = repair.insert_missing(stamps, values, spacing.missing)
                notes.append(f"{spacing.missing.size} missing period(s) were inserted as missing values.")
    else:
        notes.append("No time column was used; the observations are numbered 1, 2, 3, ...")
        if options.frequency is not None:
            frequency = options.frequency
        if options.aggregate_parts is not None:
            raise InputError(
                f"'{source}': aggregating to a coarser frequency needs time stamps, and no time column is "
                "used. Choose the time column with --time NAME, or leave out the aggregation."
            )
    if options.gaps in ("interpolate", "ffill", "value"):
        values, note = repair.fill_missing(values, options.gaps, stamps, options.fill_value)
        if note:
            notes.append(note)

    series = Series(
        values=values,
        times=stamps,
        name=str(value_col),
        frequency=frequency,
        provenance=_provenance(source, table.digest, value_col, time_col, rows_read, positions.size, tuple(notes)),
    )
    try:
        series.check_usable()
    except InputError as exc:
        raise InputError(f"'{source}': {exc}") from None
    return series


def _provenance(source, digest, value_col, time_col, rows_read, rows_used, notes) -> Provenance:
    return Provenance(
        source=source,
        sha256=digest,
        value_column=str(value_col),
        time_column="" if time_col is None else str(time_col),
        rows_read=int(rows_read),
        rows_used=int(rows_used),
        notes=notes,
    )


# --------------------------------------------------------------------------- bytes
def _read_bytes(path: Path) -> bytes:
    name = str(path)
    try:
        if path.is_dir():
            raise InputError(
                f"'{name}' is a folder, not a data file. Choose a CSV or Excel file inside it."
            )
        return path.read_bytes()
    except InputError:
        raise
    except FileNotFoundError:
        raise InputError(
            f"The file '{name}' does not exist. Check the name and the folder, then try again."
        ) from None
    except IsADirectoryError:
        raise InputError(f"'{name}' is a folder, not a data file. Choose a CSV or Excel file inside it.") from None
    except PermissionError:
        raise InputError(
            f"Permission to read '{name}' was denied. Check the file's permissions, or copy it to a "
            "folder you can read, then try again."
        ) from None
    except OSError as exc:
        reason = exc.strerror or exc.__class__.__name__
        raise InputError(f"The file '{name}' could not be read ({reason}). Check it and try again.") from None
    except ValueError as exc:  # e.g. an embedded NUL character in the path
        raise InputError(f"'{name}' is not a usable file name ({exc}).") from None


def _read_table(data: bytes, path: Path, source: str, options: ImportOptions, progress: _Progress) -> _Table:
    if not data or data.isspace():
        raise InputError(
            f"The file '{source}' is empty. Choose a file with a header row and at least "
            "a column of numbers."
        )
    suffix = path.suffix.lower()
    sheet = options.sheet
    if data.startswith(b"\xd0\xcf\x11\xe0"):
        raise InputError(
            f"'{source}' is in the old Excel (.xls) or another legacy Office format, which Lagwright "
            "does not read. Open it in a spreadsheet program and save it as .xlsx or CSV."
        )
    if data.startswith(b"PAR1") or suffix in PARQUET_SUFFIXES:
        from .parquet import read_parquet

        if sheet is not None:
            raise InputError(f"'{source}' is a Parquet file and has no sheets; leave out the sheet choice.")
        frame, notes = read_parquet(data, source)
        return _Table(frame=frame, source=source, workbook=False, kind="parquet", notes=notes)
    if suffix in (".xls", ".ods", ".numbers"):
        raise InputError(
            f"'{source}' is a {suffix} spreadsheet, which Lagwright does not read. Save it as .xlsx "
            "or CSV and load that."
        )
    is_zip = data.startswith(b"PK\x03\x04")
    if suffix in WORKBOOK_SUFFIXES or is_zip:
        if not is_zip:
            raise InputError(
                f"'{source}' is named like an Excel workbook but is not one (it is not a ZIP archive). "
                "Open it in a spreadsheet program and save it again as .xlsx, or load a CSV."
            )
        return _read_workbook(data, source, options)
    if sheet is not None:
        raise InputError(
            f"'{source}' is a text table and has no sheets; leave out the sheet choice."
        )
    text, encoding_note = _decode(data, source)
    plain_utf8 = encoding_note is None and not data.startswith(codecs.BOM_UTF8)
    return _read_text(text, source, suffix in (".tsv", ".tab"), options, progress, encoding_note,
                      raw=data if plain_utf8 else None)


def _read_pasted(pasted: PastedText, options: ImportOptions, progress: _Progress) -> _Table:
    text = pasted.text if isinstance(pasted.text, str) else str(pasted.text)
    name = pasted.name or "pasted text"
    if not text.strip():
        raise InputError(
            "The pasted text is empty. Copy the cells (with their header row) in the spreadsheet or editor, "
            "then paste again."
        )
    if options.sheet is not None:
        raise InputError("Pasted text has no sheets; leave out the sheet choice.")
    if text.startswith("\ufeff"):
        text = text[1:]
    table = _read_text(text, name, True, options, progress, None)
    table.kind = "pasted"
    table.text_name = "the pasted text"
    table.digest = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()
    return table


# --------------------------------------------------------------------------- text tables
def _decode(data: bytes, source: str) -> tuple[str, str | None]:
    """Decode the bytes; return the text and a note on the encoding when it was not UTF-8."""
    if data.startswith(codecs.BOM_UTF8):
        try:
            return data[len(codecs.BOM_UTF8):].decode("utf-8"), None
        except UnicodeDecodeError:
            raise InputError(
                f"'{source}' starts with a UTF-8 mark but holds bytes that are not UTF-8. Save it again "
                "as UTF-8 (or CSV from a spreadsheet program) and load that."
            ) from None
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16"), "The file was read as UTF-16 text."
        except UnicodeDecodeError:
            raise InputError(
                f"'{source}' starts with a UTF-16 mark but is not valid UTF-16 text. Save it again as "
                "UTF-8 CSV and load that."
            ) from None
    if b"\x00" in data[:_SNIFF_CHARS]:
        raise _binary(source)
    try:
        return data.decode("utf-8"), None
    except UnicodeDecodeError:
        pass
    for encoding in ("cp1252", "latin-1"):
        try:
            text = data.decode(encoding)
        except UnicodeDecodeError:
            continue
        return text, "The file is not UTF-8; it was read as Latin-1 (Windows-1252) text."
    raise _binary(source)  # pragma: no cover - latin-1 decodes any byte


def _binary(source: str) -> InputError:
    return InputError(
        f"'{source}' does not look like a text table or an Excel workbook (it holds binary data). "
        "Choose a CSV, TSV or .xlsx file."
    )


def _looks_binary(text: str) -> bool:
    head = text[:_SNIFF_CHARS]
    if not head:
        return False
    control = sum(1 for ch in head if (ord(ch) < 32 and ch not in "\t\r\n\f") or 0x7F <= ord(ch) <= 0x9F)
    return control > max(2, 0.02 * len(head))


def _sniff_delimiter(lines: list[str], prefer_tab: bool) -> str | None:
    """The delimiter found on the header line and most consistently on the lines after it."""
    stripped = [_QUOTED.sub("", line) for line in lines]
    order = ("\t",) + tuple(d for d in _DELIMITERS if d != "\t") if prefer_tab else _DELIMITERS
    best, best_key = None, None
    for rank, delim in enumerate(order):
        counts = [line.count(delim) for line in stripped]
        if counts[0] == 0:
            continue
        data_counts = counts[1:] or counts
        modal, _ = Counter(data_counts).most_common(1)[0]
        if modal == 0:
            continue
        consistency = sum(c == counts[0] for c in counts) / len(counts)
        key = (consistency, -rank)
        if best_key is None or key > best_key:
            best, best_key = delim, key
    return best


def _is_data_cell(cell) -> bool:
    """Whether a header cell looks like data (a number or a date) rather than a name."""
    if isinstance(cell, bool):
        return False
    if isinstance(cell, (int, float, np.number, _dt.date, _dt.datetime, pd.Timestamp)):
        return True
    if not isinstance(cell, str):
        return False
    text = cell.strip()
    if not text:
        return False
    try:
        float(text)
        return True
    except ValueError:
        return bool(_DATE_LOOKING.match(text)) or looks_numeric(text)


def _column_names(cells: list) -> list[str]:
    """Header cells as unique, stripped strings; blank cells become ``column k``."""
    names: list[str] = []
    seen: set[str] = set()
    for k, cell in enumerate(cells, start=1):
        if cell is None or (isinstance(cell, float) and np.isnan(cell)):
            name = ""
        elif isinstance(cell, (pd.Timestamp, _dt.datetime)):
            name = cell.isoformat()
        else:
            name = str(cell).strip()
        if not name:
            name = f"column {k}"
        base, extra = name, 2
        while name in seen:
            name = f"{base} ({extra})"
            extra += 1
        seen.add(name)
        names.append(name)
    return names


def _read_text(text: str, source: str, prefer_tab: bool, options: ImportOptions, progress: _Progress,
               encoding_note: str | None, raw: bytes | None = None) -> _Table:
    """Read decoded text as a table; ``raw`` is the same text as UTF-8 bytes if the caller has them."""
    if _looks_binary(text):
        raise _binary(source)
    lines = [line for line in re.split(r"\r\n|\r|\n", text[:_SNIFF_CHARS]) if line.strip()][:_SNIFF_LINES]
    if not lines:
        raise InputError(f"The file '{source}' holds only blank lines. Choose a file with data in it.")
    delimiter = options.delimiter or _sniff_delimiter(lines, prefer_tab)
    sep = delimiter or ","
    if sep == " ":
        header_cells = lines[0].split()
    else:
        try:
            header_cells = next(csv.reader([lines[0]], delimiter=sep, skipinitialspace=True))
        except (csv.Error, StopIteration):
            header_cells = lines[0].split(sep)
    has_header = not all(_is_data_cell(cell) for cell in header_cells)
    names = _column_names(header_cells if has_header else [""] * len(header_cells))
    explicit_format = options.decimal is not None or options.thousands is not None
    kwargs = dict(
        sep=r"\s+" if sep == " " else sep,
        header=0 if has_header else None,
        names=names,
        index_col=False,
        engine="c",
        skipinitialspace=sep != " ",
        skip_blank_lines=True,
        on_bad_lines="error",
    )
    if explicit_format:
        kwargs["dtype"] = str  # every column as text; numbers are then read in the chosen format
    if raw is None:
        raw = text.encode("utf-8", "replace")
    frame = _read_csv_chunks(raw, source, names, kwargs, progress)
    mixed = frame.attrs.pop("lagwright_mixed", ())
    if mixed:
        # Chunks guessed different types for these columns (numbers in some, text in others):
        # read them again as text, so that every cell is judged by the same rule.
        kwargs["dtype"] = {name: str for name in mixed}
        frame = _read_csv_chunks(raw, source, names, kwargs, None)
        frame.attrs.pop("lagwright_mixed", None)
    frame.columns = names
    if frame.empty:
        raise InputError(f"'{source}' has a header but no data rows. Add the data under the header.")
    notes = [encoding_note] if encoding_note else []
    if explicit_format:
        notes.extend(_convert_number_columns(frame, options, delimiter))
    if delimiter not in (None, ","):
        notes.append(f"Fields are separated by {_DELIMITER_NAMES.get(delimiter, repr(delimiter))}s.")
    if not has_header:
        notes.append("The first row holds data, not names; the columns were named column 1, column 2, ...")
    return _Table(frame=frame, source=source, workbook=False, delimiter=delimiter, text=text,
                  header=has_header, notes=notes)


def _kind_class(column: pd.Series) -> str | None:
    """``"number"`` or ``"text"`` for one chunk of a column; None when the chunk is all missing."""
    if column.isna().all():
        return None
    dtype = column.dtype
    if pd.api.types.is_numeric_dtype(dtype) and not pd.api.types.is_bool_dtype(dtype):
        return "number"
    return "text"


def _read_csv_chunks(raw: bytes, source: str, names: list[str], kwargs: dict, progress: _Progress | None):
    """``pandas.read_csv`` of UTF-8 bytes in chunks of rows, reporting progress; parser errors become InputError.

    Bytes, not a ``StringIO``: a ``StringIO`` holds four bytes per character.
    """
    handle = io.BytesIO(raw)
    size = max(1, len(raw))
    chunks = []
    stopped: BaseException | None = None  # raised by the progress callback: passed on untouched
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            warnings.simplefilter("error", pd.errors.ParserWarning)
            with pd.read_csv(handle, chunksize=_CHUNK_ROWS, encoding="utf-8", **kwargs) as reader:
                for chunk in reader:
                    chunks.append(chunk)
                    if progress is not None:
                        try:
                            progress(min(handle.tell() / size, 1.0) * 0.95)
                        except BaseException as exc:  # noqa: BLE001 - the caller's own signal to stop
                            stopped = exc
                            break
    except pd.errors.ParserWarning:
        raise InputError(
            f"'{source}' has rows with more fields than its header ({len(names)}). Check the delimiter "
            "and remove the extra fields, then load it again."
        ) from None
    except pd.errors.EmptyDataError:
        raise InputError(
            f"'{source}' has no data rows. Choose a file with a header row and data under it."
        ) from None
    except InputError:
        raise
    except Exception as exc:  # pandas parser errors come in several classes
        detail = str(exc).strip().splitlines()[-1] if str(exc).strip() else exc.__class__.__name__
        raise InputError(
            f"'{source}' could not be read as a table ({detail}). Check that every row has the same "
            "number of fields and that quotes are balanced."
        ) from None
    if stopped is not None:
        raise stopped
    if not chunks:
        return pd.DataFrame({name: pd.Series(dtype=object) for name in names})
    if len(chunks) == 1:
        return chunks[0]
    mixed = []
    if kwargs.get("dtype") is None:
        for k, name in enumerate(names):
            classes = {_kind_class(chunk.iloc[:, k]) for chunk in chunks} - {None}
            if len(classes) > 1:
                mixed.append(name)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        frame = pd.concat(chunks, ignore_index=True)
    if mixed:
        frame.attrs["lagwright_mixed"] = tuple(mixed)
    return frame


def _convert_number_columns(frame: pd.DataFrame, options: ImportOptions, delimiter: str | None) -> list[str]:
    """With the number format chosen by the user, turn text columns that are all numbers into numbers."""
    notes = []
    for name in list(frame.columns):
        column = frame[name]
        present = column[column.notna()]
        if present.empty:
            continue
        texts = present.astype(str).str.strip()
        texts = texts[~texts.isin(_MISSING_MARKERS)]
        if texts.empty:
            frame[name] = np.nan
            continue
        head = texts.iloc[:100]
        if not head.map(looks_numeric).any():
            continue
        fmt, _ = detect_format(head, options.decimal, options.thousands, delimiter)
        parsed = parse_numbers(texts, fmt)
        if np.isnan(parsed).any():
            continue  # some cells are not numbers in this format: left as text, and named if this column is used
        values = np.full(len(column), np.nan)
        values[column.index.get_indexer(texts.index)] = parsed
        frame[name] = values
        if not fmt.plain:
            notes.append(f"Numbers in '{name}' were read with {fmt.describe()} (as in {fmt.example()}).")
    return notes


# --------------------------------------------------------------------------- workbooks
def _read_workbook(data: bytes, source: str, options: ImportOptions) -> _Table:
    sheet = options.sheet
    epoch = None
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            book = pd.ExcelFile(io.BytesIO(data), engine="openpyxl")
            names = [str(n) for n in book.sheet_names]
    except Exception:  # openpyxl and zipfile raise many kinds for a damaged workbook
        raise InputError(
            f"'{source}' could not be opened as an Excel workbook (it may be damaged or another kind of "
            "ZIP file). Open it in a spreadsheet program and save it again as .xlsx, or load a CSV."
        ) from None
    listing = ", ".join(f"'{n}'" for n in names)
    try:
        chosen = _choose_sheet(names, sheet, source)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            raw = pd.read_excel(book, sheet_name=chosen, header=None)
            epoch = _workbook_epoch(book)
    except InputError:
        raise
    except Exception as exc:  # cell values openpyxl or pandas cannot convert
        detail = str(exc).strip().splitlines()[-1] if str(exc).strip() else exc.__class__.__name__
        raise InputError(
            f"The sheet '{chosen}' of '{source}' could not be read ({detail}). Open the workbook in a "
            "spreadsheet program, save it again as .xlsx, and try again."
        ) from None
    finally:
        book.close()
    raw = raw.dropna(axis=1, how="all")
    filled = np.flatnonzero(raw.notna().any(axis=1).to_numpy())
    if filled.size == 0:
        raise InputError(
            f"The sheet '{chosen}' of '{source}' is empty. Choose the sheet that holds the data"
            + (f" (the sheets are {listing})." if len(names) > 1 else ".")
        )
    top, bottom = int(filled[0]), int(filled[-1])
    header_cells = list(raw.iloc[top])
    has_header = not all(_is_data_cell(c) for c in header_cells if not _is_missing(c))
    column_names = _column_names(header_cells if has_header else [None] * len(header_cells))
    start = top + 1 if has_header else top
    frame = raw.iloc[start:bottom + 1].reset_index(drop=True)
    frame.columns = column_names
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        frame = frame.infer_objects()
    if frame.empty:
        raise InputError(
            f"The sheet '{chosen}' of '{source}' has a header but no data rows. Add the data under the header."
        )
    notes = [f"Read the sheet '{chosen}'."] if len(names) > 1 else []
    if not has_header:
        notes.append("The first row holds data, not names; the columns were named column 1, column 2, ...")
    return _Table(frame=frame, source=source, workbook=True, sheet=chosen, first_sheet_row=start + 1,
                  header=has_header, other_sheets=tuple(n for n in names if n != chosen), notes=notes,
                  kind="workbook", sheets=tuple(names), excel_epoch=epoch)


def _workbook_epoch(book) -> str:
    """The workbook's date system: day 0 of its serial day numbers (1900 system unless set to 1904)."""
    try:
        epoch = book.book.epoch
    except Exception:
        return "1899-12-30"
    return "1904-01-01" if getattr(epoch, "year", 1899) == 1904 else "1899-12-30"


def _choose_sheet(names: list[str], sheet, source: str) -> str:
    """The sheet named ``sheet`` (exactly, then ignoring case) or at 0-based index ``sheet``."""
    if not names:
        raise InputError(f"The workbook '{source}' has no sheets. Choose a workbook with the data in a sheet.")
    if sheet is None:
        return names[0]
    if isinstance(sheet, str):
        if sheet in names:
            return sheet
        folded = [n for n in names if n.lower() == sheet.strip().lower()]
        if len(folded) == 1:
            return folded[0]
    index = None
    if isinstance(sheet, (int, np.integer)) and not isinstance(sheet, bool):
        index = int(sheet)
    elif isinstance(sheet, str) and sheet.strip().isdigit():
        index = int(sheet.strip())
    if index is not None and 0 <= index < len(names):
        return names[index]
    listing = ", ".join(f"'{n}'" for n in names)
    raise InputError(
        f"The workbook '{source}' has no sheet {sheet!r}. Its sheets are {listing}; give a name "
        f"or a number from 0 (the first sheet) to {len(names) - 1}."
    )


def _is_missing(cell) -> bool:
    try:
        return bool(pd.isna(cell))
    except (TypeError, ValueError):
        return False


# --------------------------------------------------------------------------- columns
def _words(name: str) -> set[str]:
    spaced = re.sub(r"([a-z])([A-Z])", r"\1 \2", str(name))
    return {w for w in re.split(r"[^a-z0-9#]+", spaced.lower()) if w} or {""}


def _time_named(name: str) -> bool:
    return bool(_words(name) & _TIME_WORDS)


def _resolve(table: _Table, wanted, role: str) -> str:
    """Column named (or numbered, from 1) by ``wanted``."""
    columns = list(table.frame.columns)
    listing = ", ".join(f"'{c}'" for c in columns)
    option = "--value" if role == "value" else "--time"
    if isinstance(wanted, (int, np.integer)) and not isinstance(wanted, bool):
        number = int(wanted)
        if 1 <= number <= len(columns):
            return columns[number - 1]
        raise InputError(
            f"'{table.source}' has {len(columns)} column(s); there is no column number {number}. "
            f"The columns are {listing}."
        )
    text = str(wanted)
    if text in columns:
        return text
    folded = [c for c in columns if c.strip().lower() == text.strip().lower()]
    if len(folded) == 1:
        return folded[0]
    if text.strip().isdigit() and 1 <= int(text) <= len(columns):
        return columns[int(text) - 1]
    raise InputError(
        f"'{table.source}' has no column named '{text}'. The columns are {listing}; "
        f"pass one of them with {option} NAME (or a column number, counting from 1)."
    )


def _kind(column: pd.Series) -> str:
    """``"number"``, ``"datetime"``, ``"bool"``, ``"empty"`` or ``"other"`` for a raw column."""
    if column.isna().all():
        return "empty"
    dtype = column.dtype
    if pd.api.types.is_bool_dtype(dtype):
        return "bool"
    if pd.api.types.is_numeric_dtype(dtype):
        return "number"
    if pd.api.types.is_datetime64_any_dtype(dtype):
        return "datetime"
    return "other"


def _sample(column: pd.Series) -> pd.Series:
    present = column[column.notna()]
    return present.iloc[:_DATE_SAMPLE]


def _is_year_column(name: str, column: pd.Series) -> bool:
    if "year" not in _words(name) and "years" not in _words(name):
        return False
    if _kind(column) != "number":
        return False
    present = column.dropna().to_numpy(dtype=float)
    return bool(present.size) and bool(np.all(present == np.round(present))) and bool(
        np.all((present >= 1678) & (present <= 2261))
    )


def _is_serial_column(table: _Table, name: str, column: pd.Series) -> bool:
    """A workbook column named like a time that holds Excel serial day numbers (dates stored as numbers)."""
    if not table.workbook or not _time_named(name) or _kind(column) != "number":
        return False
    if _is_year_column(name, column):
        return False
    present = column.dropna().to_numpy(dtype=float)
    low, high = _SERIAL_RANGE
    return bool(present.size) and bool(np.all((present >= low) & (present <= high)))


def _dates_by_value(column: pd.Series) -> bool:
    """Whether most of the first values parse as dates."""
    kind = _kind(column)
    if kind == "datetime":
        return True
    if kind != "other":
        return False
    sample = _sample(column)
    if sample.empty:
        return False
    if all(isinstance(v, (_dt.date, pd.Timestamp)) for v in sample):
        return True
    texts = [v.strip() for v in sample if isinstance(v, str)]
    looking = [t for t in texts if _DATE_LOOKING.match(t)]
    if len(looking) * 2 <= len(sample):
        return False
    parsed, _ = _parse_text_stamps(pd.Series(looking, dtype=object))
    return int(parsed.notna().sum()) * 2 > len(sample)


def _is_counter(name: str, column: pd.Series) -> bool:
    """An index column: consecutive integers under an index-like or blank name."""
    if _kind(column) != "number" or column.isna().any() or len(column) < 2:
        return False
    words = _words(name)
    if not (words & _INDEX_WORDS or re.fullmatch(r"column \d+", str(name)) or _time_named(name)):
        return False
    values = column.to_numpy(dtype=float)
    return bool(np.all(np.diff(values) == 1.0))


def _pick_time_column(table: _Table, wanted) -> str | None:
    frame = table.frame
    if isinstance(wanted, str) and not wanted.strip():
        table.notes.append("No time column was asked for.")
        return None
    if wanted is not None:
        name = _resolve(table, wanted, "time")
        column = frame[name]
        kind = _kind(column)
        if kind == "number" and not _is_year_column(name, column) and not _is_serial_column(table, name, column):
            raise InputError(
                f"The column '{name}' of '{table.source}' holds numbers, not dates or times. Choose the "
                "column of time stamps with --time NAME, or leave it out to number the observations."
            )
        if kind in ("empty", "bool"):
            raise InputError(
                f"The column '{name}' of '{table.source}' holds no time stamps. Choose the column of "
                "dates with --time NAME."
            )
        return name
    by_value = [c for c in frame.columns if _dates_by_value(frame[c])]
    if len(by_value) == 1:
        return by_value[0]
    if by_value:
        named = [c for c in by_value if _time_named(c)]
        if len(named) == 1:
            return named[0]
        candidates = by_value
    else:
        # A column named like a time whose entries do not parse is still the time column:
        # choosing it lets the user see which stamps are wrong.
        candidates = [
            c for c in frame.columns
            if (_time_named(c) and _kind(frame[c]) == "other") or _is_year_column(c, frame[c])
            or _is_serial_column(table, c, frame[c])
        ]
        if len(candidates) <= 1:
            return candidates[0] if candidates else None
    listing = ", ".join(f"'{c}'" for c in candidates)
    raise InputError(
        f"'{table.source}' has several columns that could be the time: {listing}. "
        "Choose one with --time NAME."
    )


def _numeric_share(column: pd.Series) -> float:
    sample = _sample(column)
    if sample.empty:
        return 0.0
    good = 0
    for v in sample:
        if isinstance(v, bool):
            continue
        if isinstance(v, (int, float, np.number)):
            good += 1
        elif isinstance(v, str):
            good += looks_numeric(v)
    return good / len(sample)


def _pick_value_column(table: _Table, wanted, time_col: str | None) -> str:
    frame = table.frame
    if wanted is not None:
        name = _resolve(table, wanted, "value")
        if name == time_col:
            raise InputError(
                f"The column '{name}' of '{table.source}' was chosen both as the time and as the values. "
                "Choose a different column with --value NAME or --time NAME."
            )
        return name
    others = [c for c in frame.columns if c != time_col]
    candidates = []
    for c in others:
        column = frame[c]
        kind = _kind(column)
        if kind == "number":
            if _is_counter(c, column) or _time_named(c):
                continue
            candidates.append(c)
        elif kind == "other" and _numeric_share(column) > 0.5 and not _dates_by_value(column):
            candidates.append(c)
    if len(candidates) == 1:
        return candidates[0]
    if not candidates and len(others) == 1:
        return others[0]  # the only column left: reading it names the cells that are not numbers
    listing = ", ".join(f"'{c}'" for c in others) or "none"
    if not candidates:
        raise InputError(
            f"'{table.source}' has no column of numbers to model (other columns: {listing}). "
            "Choose the column with --value NAME, or check the delimiter and the decimal point."
        )
    names = ", ".join(f"'{c}'" for c in candidates)
    raise InputError(
        f"'{table.source}' has several columns of numbers: {names}. Choose the one to model with "
        "--value NAME."
    )


# --------------------------------------------------------------------------- values
def _read_numbers(table: _Table, name: str, options: ImportOptions) -> tuple[np.ndarray, np.ndarray, _RawCells | None]:
    """The column as float64 (NaN for missing and non-numeric cells), the non-numeric positions, the raw cells.

    Text cells are read in the number format the user chose, or the one
    :func:`~lagwright.core.numbers.detect_format` finds (noted when it is not
    the plain ``1234.5``). A column of dates or TRUE/FALSE values is refused.
    """
    column = table.frame[name]
    kind = _kind(column)
    source = table.source
    none = np.empty(0, dtype=np.int64)
    if kind == "number":
        return column.to_numpy(dtype=float, na_value=np.nan), none, None
    if kind == "empty":
        return np.full(len(column), np.nan), none, None
    if kind == "datetime":
        raise InputError(
            f"The column '{name}' of '{source}' holds dates, not numbers. Choose the column of values "
            "with --value NAME."
        )
    if kind == "bool":
        raise InputError(
            f"The column '{name}' of '{source}' holds TRUE/FALSE values, not numbers. Choose the column "
            "of values with --value NAME."
        )
    cells = _RawCells(column)
    values = np.full(len(column), np.nan)
    text_cells, others = _cells(column)
    bad: list[int] = []
    for i, cell in others.items():
        if isinstance(cell, (int, float, np.number)) and not isinstance(cell, (bool, np.bool_)):
            values[i] = float(cell)
        else:
            bad.append(i)
    if len(text_cells):
        fmt, note = detect_format(text_cells, options.decimal, options.thousands, table.delimiter)
        parsed = parse_numbers(text_cells, fmt)
        failed = np.isnan(parsed)
        index = text_cells.index.to_numpy()
        if not fmt.plain and (~failed).any():
            if fmt == NumberFormat(",", ""):
                table.notes.append(f"Numbers in '{name}' use a decimal comma; they were read as decimals.")
            else:
                table.notes.append(
                    f"Numbers in '{name}' are written with {fmt.describe()} (as in {fmt.example()}); they were "
                    "read that way.")
            if note:
                table.notes.append(note)
        values[index] = parsed
        bad.extend(int(i) for i in index[failed])
    bad.sort()
    return values, np.asarray(bad, dtype=np.int64), cells


def _not_numbers_error(table: _Table, name: str, bad: np.ndarray, cells: _RawCells) -> InputError:
    shown = table.rows_text(bad, [cells[i] for i in bad])
    comma_hint = ""
    if any(isinstance(cells[i], str) and re.search(r"\d[,.\s']\d", str(cells[i])) for i in bad[:_SHOWN]):
        comma_hint = (
            " If these are numbers written with thousands separators or decimal commas, set the decimal mark "
            "and the thousands separator (--decimal, --thousands), or save them as plain numbers such as 1234.5."
        )
    count = bad.size
    return InputError(
        f"The value column '{name}' of '{table.source}' holds {count} entr{'y' if count == 1 else 'ies'} "
        f"that {'is' if count == 1 else 'are'} not a number: {shown}. Data rows are counted from 1 "
        "under the header. Correct or empty those cells (an empty cell is read as a missing value), "
        "read them as missing values with --non-numeric missing, "
        f"or choose another column with --value NAME.{comma_hint}"
    )


def _cells(column: pd.Series) -> tuple[pd.Series, dict[int, object]]:
    """Split a raw column into its text cells and its other cells, by 0-based position.

    Text cells are stripped; empty cells and missing-value markers are left out
    of both. Columns of text are handled without a Python loop.
    """
    column = column.reset_index(drop=True)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        inferred = pd.api.types.infer_dtype(column, skipna=True)
    if inferred in ("string", "empty"):
        cells = column[column.notna().to_numpy()]
        if not isinstance(cells.dtype, pd.StringDtype):
            cells = cells.astype(object).astype(str)
        cells = cells.str.strip()
        cells = cells[~cells.isin(_MISSING_MARKERS).to_numpy()]
        return cells, {}
    texts: dict[int, str] = {}
    others: dict[int, object] = {}
    for i, cell in enumerate(column.to_numpy(dtype=object)):
        if isinstance(cell, str):
            stripped = cell.strip()
            if stripped not in _MISSING_MARKERS:
                texts[i] = stripped
        elif cell is not None and not _is_missing(cell):
            others[i] = cell
    return pd.Series(list(texts.values()), index=list(texts.keys()), dtype=object), others


def _trailing_blank_count(values: np.ndarray) -> int:
    observed = np.flatnonzero(~np.isnan(values))
    if observed.size == 0:
        return 0
    return int(values.size - 1 - observed[-1])


# --------------------------------------------------------------------------- time stamps
def _to_datetime(text: pd.Series, tz: str | None = None, **kwargs) -> tuple[pd.Series, str | None]:
    """``pd.to_datetime`` that never raises or warns: NaT where it fails, naive result.

    ``tz="utc"`` converts stamps with a UTC offset to UTC (stamps without one
    are taken as UTC already); otherwise one offset keeps the local clock and
    several are converted to UTC.
    """
    fast = _arrow_strptime(text, kwargs.get("format"))
    if fast is not None and set(kwargs) <= {"format"}:
        return fast, None
    note = None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if tz == "utc":
            try:
                parsed = pd.to_datetime(text, errors="coerce", utc=True, **kwargs)
            except Exception:
                return pd.Series(pd.NaT, index=text.index, dtype="datetime64[ns]"), None
            if not pd.api.types.is_datetime64_any_dtype(parsed.dtype):
                return pd.Series(pd.NaT, index=text.index, dtype="datetime64[ns]"), None
            return parsed.dt.tz_convert(None), None
        try:
            parsed = pd.to_datetime(text, errors="coerce", **kwargs)
        except Exception:
            try:
                parsed = pd.to_datetime(text, errors="coerce", utc=True, **kwargs)
                note = "The time stamps carry different UTC offsets; they were converted to UTC."
            except Exception:
                return pd.Series(pd.NaT, index=text.index, dtype="datetime64[ns]"), None
        if not pd.api.types.is_datetime64_any_dtype(parsed.dtype):
            try:
                parsed = pd.to_datetime(parsed, errors="coerce", utc=True)
                note = "The time stamps carry different UTC offsets; they were converted to UTC."
            except Exception:
                return pd.Series(pd.NaT, index=text.index, dtype="datetime64[ns]"), None
        if getattr(parsed.dt, "tz", None) is not None:
            if note is None:
                note = "The time stamps carry a UTC offset; their local clock times were kept."
                parsed = parsed.dt.tz_localize(None)
            else:
                parsed = parsed.dt.tz_convert(None)
    return parsed, note


def _parse_text_stamps(text: pd.Series, tz: str | None = None) -> tuple[pd.Series, list[str]]:
    """Parse stripped, non-missing strings; NaT marks a stamp that does not parse."""
    first = text.iloc[0]
    attempts: list[tuple[str, bool]] = []
    if _ISO_STAMP.match(first):
        fast = _arrow_iso_stamps(text)
        if fast is not None:
            return fast, []
        attempts.append(("ISO8601", False))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for dayfirst in (False, True):
            try:
                fmt = pd.tseries.api.guess_datetime_format(first, dayfirst=dayfirst)
            except Exception:
                fmt = None
            if fmt and fmt not in [a[0] for a in attempts]:
                attempts.append((fmt, dayfirst))
    results = []
    probe = text.iloc[np.unique(np.linspace(0, len(text) - 1, min(len(text), 2000)).astype(int))]
    for fmt, dayfirst in attempts:
        if any(r[0] == 0 for r in results) and len(text) > len(probe):
            # A complete reading exists: another one matters only if it is complete too, which a
            # sample spread over the column usually rules out cheaply.
            sampled, _ = _to_datetime(probe, tz=tz, format=fmt)
            if sampled.isna().any():
                continue
        parsed, note = _to_datetime(text, tz=tz, format=fmt)
        failures = int(parsed.isna().sum())
        results.append((failures, fmt, dayfirst, parsed, note))
        if failures == 0 and fmt == "ISO8601":
            return parsed, [note] if note else []
    complete = [r for r in results if r[0] == 0]
    if not complete:
        return _parse_leftovers(text, results, tz)
    notes: list[str] = []
    if len(complete) > 1 and not complete[0][3].equals(complete[1][3]):
        ordered = [r for r in complete if r[3].is_monotonic_increasing]
        if len(ordered) == 1:
            chosen = ordered[0]
        else:
            dotted = "." in first and "/" not in first
            chosen = next((r for r in complete if r[2] == dotted), complete[0])
        reading = "day first" if chosen[2] else "month first"
        notes.append(
            f"Dates such as '{first}' could be read day first or month first; they were read {reading}. "
            "Write dates as ISO 8601 (2021-03-31) to be sure."
        )
    else:
        chosen = complete[0]
    if chosen[4]:
        notes.append(chosen[4])
    return chosen[3], notes


_PLAIN_FORMAT = re.compile(r"^(%[YmdHMS]|[-/.: T])+$")


def _arrow_strptime(text: pd.Series, fmt: str | None) -> pd.Series | None:
    """Stamps of an Arrow-backed text column in a digits-only format, parsed by Arrow, if every one parses.

    Only formats made of ``%Y %m %d %H %M %S`` and separators, which Arrow's
    and pandas' readers treat alike; any stamp Arrow refuses sends the whole
    column back to pandas, so failures are always judged by pandas.
    """
    if not fmt or not _PLAIN_FORMAT.match(fmt) or not isinstance(text.dtype, pd.StringDtype) or getattr(
            text.dtype, "storage", "") != "pyarrow":
        return None
    try:
        import pyarrow as pa
        import pyarrow.compute as pc

        parsed = pc.strptime(pa.array(text.array), format=fmt, unit="ns", error_is_null=True)
        if parsed.null_count:
            return None
        stamps = np.asarray(parsed.to_numpy(zero_copy_only=False), dtype="datetime64[ns]")
    except Exception:  # noqa: BLE001 - any refusal means: let pandas read it
        return None
    return pd.Series(stamps, index=text.index)


def _arrow_iso_stamps(text: pd.Series) -> pd.Series | None:
    """Naive ISO 8601 stamps of an Arrow-backed text column parsed by Arrow's C++ reader, or None.

    About six times faster than ``pandas.to_datetime`` on a million stamps;
    Arrow refuses the whole column if one stamp is not plain ISO 8601 (an
    offset, a single-digit month, an impossible date...), and then pandas
    reads it as before.
    """
    if not isinstance(text.dtype, pd.StringDtype) or getattr(text.dtype, "storage", "") != "pyarrow":
        return None
    try:
        import pyarrow as pa
        import pyarrow.compute as pc

        parsed = pc.cast(pa.array(text.array), pa.timestamp("ns"))
        stamps = np.asarray(parsed.to_numpy(zero_copy_only=False), dtype="datetime64[ns]")
    except Exception:  # noqa: BLE001 - any refusal means: let pandas read it
        return None
    if np.isnat(stamps).any():
        return None
    return pd.Series(stamps, index=text.index)


def _parse_leftovers(text: pd.Series, results: list, tz: str | None = None) -> tuple[pd.Series, list[str]]:
    """Parse stamps that no single format fits.

    The best format's reading is kept and the rest are parsed one by one
    (dateutil, through ``format="mixed"``), giving up early when a first batch
    of them fails entirely.
    """
    if results:
        _, _, dayfirst, parsed, note = min(results, key=lambda r: r[0])
    else:
        dayfirst, note = False, None
        parsed = pd.Series(pd.NaT, index=text.index, dtype="datetime64[ns]")
    left = text[parsed.isna().to_numpy()]
    batch = 1000
    if left.size > batch:
        first, _ = _to_datetime(left.iloc[:batch], tz=tz, format="mixed", dayfirst=dayfirst)
        if first.isna().all():
            return parsed, [note] if note else []
    extra, extra_note = _to_datetime(left, tz=tz, format="mixed", dayfirst=dayfirst)
    if extra.notna().any():
        if not pd.api.types.is_datetime64_any_dtype(parsed.dtype) or parsed.isna().all():
            parsed = pd.Series(pd.NaT, index=text.index, dtype=extra.dtype)
        if not (_fits_ns(parsed) and _fits_ns(extra)):
            return parsed, [note] if note else []
        merged = parsed.astype("datetime64[ns]")
        merged.loc[extra.index] = extra.astype("datetime64[ns]")
        parsed = merged
        note = note or extra_note
    return parsed, [note] if note else []


def _fits_ns(stamps: pd.Series) -> bool:
    present = stamps.dropna()
    return present.empty or (present.min() >= _FIRST_STAMP and present.max() <= _LAST_STAMP)


_OFFSET_AFTER_TIME = r"(\d{1,2}[:.]\d{2}(?:[:.]\d{2}(?:\.\d+)?)?\s*(?:[AaPp]\.?[Mm]\.?)?)\s*(?:Z|UTC|GMT|[+-]\d{2}:?\d{2})$"


def _zone_text(text_cells: pd.Series, tz: str | None, name: str, notes: list[str]) -> pd.Series:
    """Apply the time-zone choice to text stamps before parsing (``local``: drop the offsets)."""
    if tz is None or text_cells.empty:
        return text_cells
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        has_offset = text_cells.astype(str).str.contains(_OFFSET_AFTER_TIME, regex=True)
    if not has_offset.any():
        return text_cells
    if tz == "local":
        notes.append(f"The time stamps in '{name}' carry UTC offsets; their local clock times were kept "
                     "(an hour may repeat or be missing where the offset changes).")
        return text_cells.astype(str).str.replace(_OFFSET_AFTER_TIME, r"\1", regex=True).astype(object)
    notes.append(f"The time stamps in '{name}' carry UTC offsets; they were converted to UTC (stamps without "
                 "an offset were taken as UTC).")
    return text_cells


def _read_stamps(table: _Table, name: str, tz: str | None = None):
    """Time stamps of the column, leniently.

    Returns
    -------
    stamps : numpy.ndarray
        ``datetime64[ns]``; NaT where the cell is empty, unreadable or out of range.
    bad : numpy.ndarray
        Positions of cells that could not be read as a date or time.
    cells : numpy.ndarray or None
        The raw cells, to quote offenders.
    far, far_labels
        Positions and labels of dates outside 1678-2261 (the ``datetime64[ns]`` range).
    """
    column = table.frame[name]
    n = len(column)
    none = np.empty(0, dtype=np.int64)
    nat = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
    if _is_year_column(name, column):
        years = column.to_numpy(dtype=float, na_value=np.nan)
        stamps = nat.copy()
        present = ~np.isnan(years)
        stamps[present] = (years[present].astype(np.int64) - 1970).astype("datetime64[Y]").astype("datetime64[ns]")
        table.notes.append(f"The years in '{name}' were read as 1 January of each year.")
        return stamps, none, None, none, []
    kind = _kind(column)
    if kind == "empty":
        return nat, none, None, none, []
    if _is_serial_column(table, name, column):
        days = column.to_numpy(dtype=float, na_value=np.nan)
        stamps = nat.copy()
        present = ~np.isnan(days)
        epoch = np.datetime64(table.excel_epoch or "1899-12-30", "ns")
        stamps[present] = epoch + np.round(days[present] * 86400e6).astype(np.int64).astype("timedelta64[us]")
        system = "1904" if table.excel_epoch == "1904-01-01" else "1900"
        table.notes.append(f"The numbers in '{name}' were read as Excel serial dates (the {system} date system).")
        return stamps, none, None, none, []
    if kind == "datetime":
        parsed = column
        zone = getattr(parsed.dt, "tz", None)
        if zone is not None:
            if tz == "utc":
                parsed = parsed.dt.tz_convert(None)
                table.notes.append(f"The time stamps in '{name}' are in the time zone {zone}; they were converted "
                                   "to UTC.")
            else:
                parsed = parsed.dt.tz_localize(None)
                table.notes.append(f"The time stamps in '{name}' are in the time zone {zone}; their local clock "
                                   "times were kept.")
        failed = np.zeros(n, dtype=bool)
        cells = None
    else:
        cells = _RawCells(column)
        text_cells, others = _cells(column)
        for i, cell in others.items():
            if isinstance(cell, (pd.Timestamp, _dt.datetime, _dt.date)):
                text_cells.loc[i] = cell.isoformat()
            else:
                text_cells.loc[i] = str(cell)
        text_cells = text_cells.sort_index()
        text_cells = _zone_text(text_cells, tz, name, table.notes)
        present = np.zeros(n, dtype=bool)
        present[text_cells.index.to_numpy()] = True
        parsed = pd.Series(pd.NaT, index=range(n), dtype="datetime64[ns]")
        if present.any():
            got, notes = _parse_text_stamps(text_cells, tz)
            parsed = got.reindex(range(n))
            table.notes.extend(notes)
        failed = present & parsed.isna().to_numpy()
    bad = np.flatnonzero(failed)
    far, far_labels = none, []
    valid = parsed.notna().to_numpy()
    if valid.any():
        low, high = parsed[valid].min(), parsed[valid].max()
        if low < _FIRST_STAMP or high > _LAST_STAMP:
            far = np.flatnonzero(valid & ((parsed < _FIRST_STAMP) | (parsed > _LAST_STAMP)).to_numpy())
            far_labels = [parsed.iloc[i] for i in far[:_SHOWN]] + [""] * max(0, far.size - _SHOWN)
            parsed = parsed.copy().astype(object)
            parsed.iloc[far] = pd.NaT
    try:
        stamps = pd.Series(parsed).to_numpy(dtype="datetime64[ns]", na_value=np.datetime64("NaT"))
    except Exception:
        stamps = pd.to_datetime(pd.Series(parsed), errors="coerce").to_numpy(
            dtype="datetime64[ns]", na_value=np.datetime64("NaT"))
    return stamps, bad, cells, far, far_labels


def duplicate_groups(stamps: np.ndarray, positions: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Stamps that repeat in sorted ``stamps``: (distinct repeated stamps, start of each group of equal stamps)."""
    as_int = stamps.view("int64")
    starts = np.flatnonzero(np.r_[True, as_int[1:] != as_int[:-1]]) if as_int.size else np.empty(0, np.int64)
    sizes = np.diff(np.r_[starts, as_int.size])
    return starts[sizes > 1], sizes[sizes > 1]


def _order_by_time(table: _Table, name: str, stamps, values, positions, duplicates: str = "refuse"):
    """Sort rows by time (noted); refuse repeated stamps, or merge them as chosen."""
    as_int = stamps.view("int64")
    # Compare neighbours rather than differencing: a difference of stamps ~300 years apart
    # overflows int64 nanoseconds.
    if as_int.size > 1 and np.any(as_int[1:] < as_int[:-1]):
        order = np.argsort(as_int, kind="stable")
        stamps, values, positions = stamps[order], values[order], positions[order]
        as_int = stamps.view("int64")
        table.notes.append(f"The rows were not in time order; they were sorted by '{name}'.")
    starts, sizes = duplicate_groups(stamps, positions)
    if not starts.size:
        return stamps, values, positions
    if duplicates != "refuse":
        merged_stamps, merged_values, note = repair.merge_duplicates(stamps, values, duplicates)
        keep = np.flatnonzero(np.r_[True, as_int[1:] != as_int[:-1]])
        table.notes.append(note)
        return merged_stamps, merged_values, positions[keep]
    parts = []
    for start, size in list(zip(starts, sizes))[:_SHOWN]:
        label = _stamp_label(stamps[start])
        rows = sorted(int(p) + 1 for p in positions[start:start + size])
        parts.append(f"{label} (data rows {', '.join(str(r) for r in rows[:_SHOWN])})")
    more = starts.size - _SHOWN
    listing = "; ".join(parts) + (f"; and {more} more" if more > 0 else "")
    raise InputError(
        f"The time column '{name}' of '{table.source}' repeats {starts.size} time stamp(s): {listing}. "
        "Each time may appear once: merge the repeated rows (for example sum or average them, with "
        "--duplicates mean, sum or last) or delete the extra ones, then load the file again."
    )
