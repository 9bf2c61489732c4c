"""Read a series from a CSV/TSV/text table or an Excel workbook.

:func:`load_series` turns a file with a time column and a value column into a
:class:`~lagwright.core.series.Series`. It reports what it did in the
series' :class:`~lagwright.core.series.Provenance` notes and refuses, with an
:class:`~lagwright.core.errors.InputError` that names the file, the column
and the rows, anything it cannot use.

Rules followed when reading
---------------------------
* **Text tables** (``.csv``, ``.tsv``, ``.txt`` and any other extension that
  is not a workbook): UTF-8 with or without a byte-order mark, UTF-16 with a
  byte-order mark, otherwise Windows-1252/Latin-1. The delimiter is sniffed
  among comma, semicolon, tab and vertical bar from the first lines. The
  decimal separator is the point; a column of numbers written with decimal
  commas (``3,25``) in a file whose delimiter is not the comma is accepted and
  the fact noted. The first non-blank line is the header unless every field
  in it is a number or a date, in which case columns are named
  ``column 1``, ``column 2``, ...
* **Workbooks** (``.xlsx``, ``.xlsm``, or any file that is a ZIP archive):
  read with openpyxl through pandas. ``sheet`` is a sheet name or a 0-based
  sheet index; the first sheet by default. Leading blank rows are skipped;
  the first non-blank row is the header (same rule as above).
* **Rows** are reported as *data rows*, counted from 1 at the first row
  under the header, with the line of the text file or the row of the sheet
  in brackets, as a spreadsheet shows it.
* **Columns**: ``value`` and ``time`` are column names (matched exactly, then
  ignoring case and surrounding spaces) or 1-based column numbers. Left out,
  the time column is the single date-like column (its values parse as dates,
  or its name is a word such as date, time, timestamp, period, month), and
  the value column is the single column of numbers other than it. Counters
  such as an unnamed ``0, 1, 2, ...`` index column are not candidates.
* **Dates** are parsed with pandas. ISO 8601 (``2021-03-31``,
  ``2021-03-31 14:20``) is tried first and is the form to prefer. For other
  forms pandas guesses the format from the first stamp, once reading
  month first and once day first; the reading that parses every stamp wins.
  When both do (every day is 12 or less), the one that puts the rows in time
  order wins, then day first for dotted dates (``03.04.2021``) and month
  first otherwise, and a note says the dates were ambiguous. Stamps with a
  UTC offset keep their local clock time (or are converted to UTC when the
  offsets differ). An integer column named like ``year`` holding years is
  read as 1 January of each year.
* **Order and spacing**: rows out of time order are sorted (noted); repeated
  stamps are refused. The frequency is inferred with
  :func:`pandas.infer_freq`. When the stamps fit a regular calendar with
  some periods missing, the missing periods are listed in the notes and the
  frequency is left unset (the series is not evenly spaced until the gaps
  are filled).
* **Missing values**: empty cells and the usual missing-value markers
  (``NA``, ``NaN``, ``null``, ``#N/A``, ...) become NaN and are counted in
  the notes. Rows with neither a time stamp nor a value are skipped (noted);
  a value without a time stamp is refused.

References
----------
pandas development team. *pandas documentation*: ``read_csv``,
``read_excel``, ``to_datetime``, ``infer_freq`` (pandas.pydata.org).
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
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import InputError
from .series import Provenance, Series

__all__ = ["load_series", "TEXT_SUFFIXES", "WORKBOOK_SUFFIXES"]

#: Extensions read as delimited text (other unknown extensions are tried as text too).
TEXT_SUFFIXES: tuple[str, ...] = (".csv", ".tsv", ".txt", ".tab", ".dat")
#: Extensions read as Excel workbooks.
WORKBOOK_SUFFIXES: tuple[str, ...] = (".xlsx", ".xlsm")

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
_DECIMAL_COMMA = re.compile(r"^[+-]?(\d+,\d*|,\d+)([eE][+-]?\d+)?$")
_QUOTED = re.compile(r'"[^"\r\n]*"')
_MISSING_MARKERS = frozenset(
    {"", "#N/A", "#N/A N/A", "#NA", "-1.#IND", "-1.#QNAN", "-NaN", "-nan", "1.#IND", "1.#QNAN",
     "<NA>", "N/A", "NA", "NULL", "NaN", "None", "n/a", "nan", "null"}
)


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

    def where(self, index: int) -> str:
        """Human position of the 0-based data row ``index``."""
        row = index + 1
        if self.workbook:
            return f"data row {row} (sheet row {self.first_sheet_row + index})"
        line = self._file_line(index)
        return f"data row {row} (line {line} of the file)" if line else f"data row {row}"

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


def _quote(value) -> str:
    text = str(value)
    if len(text) > 40:
        text = text[:37] + "..."
    return repr(text)


# --------------------------------------------------------------------------- entry point
def load_series(
    path: str | os.PathLike,
    value: str | int | None = None,
    time: str | int | None = None,
    sheet: str | int | None = None,
) -> Series:
    """Read one series (a time column and a value column) from a table file.

    Parameters
    ----------
    path : str or path-like
        A CSV/TSV/text table or an Excel ``.xlsx`` workbook.
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

    Returns
    -------
    Series
        Float values (NaN for missing cells), ``datetime64[ns]`` stamps in
        increasing order or ``None``, the inferred pandas frequency alias or
        ``None``, and provenance (file name, SHA-256 of the bytes, columns,
        rows read and used, notes). The series has passed
        :meth:`Series.check_usable`.

    Raises
    ------
    InputError
        When the file cannot be read, a column cannot be chosen or used, the
        time stamps are unusable or repeated, or the series is too short,
        constant or infinite. The message names the file, the column and
        the rows, and says what to do.

    References
    ----------
    pandas documentation: ``read_csv``, ``read_excel``, ``to_datetime``,
    ``infer_freq``. RFC 4180 (CSV). ISO 8601 (dates).
    """
    with np.errstate(all="ignore"):  # overflow in extreme numbers is handled, not warned about
        return _load(path, value, time, sheet)


def _load(path, value, time, sheet) -> Series:
    file_path = Path(os.fspath(path)).expanduser()
    data = _read_bytes(file_path)
    source = file_path.name or str(file_path)
    digest = hashlib.sha256(data).hexdigest()
    table = _read_table(data, file_path, source, sheet)
    frame = table.frame
    rows_read = len(frame)

    try:
        time_col = _pick_time_column(table, time)
        value_col = _pick_value_column(table, value, time_col)
        values = _to_numbers(table, value_col)
    except InputError as exc:
        if table.other_sheets and sheet is None:
            others = ", ".join(f"'{n}'" for n in table.other_sheets)
            raise InputError(f"{exc} (This is the sheet '{table.sheet}'; the workbook also has {others}: "
                             "choose one with --sheet NAME.)") from None
        raise
    notes = table.notes

    keep = np.ones(rows_read, dtype=bool)
    if time_col is None:
        stamps = None
        trailing = _trailing_blank_count(values)
        if trailing:
            keep[rows_read - trailing:] = False
            notes.append(f"{trailing} empty row(s) at the end of the table were skipped.")
    else:
        stamps = _to_stamps(table, time_col)
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
        stamps, values, positions = _order_by_time(table, time_col, stamps, values, positions)

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

    frequency = None
    if stamps is not None:
        frequency = _infer_frequency(stamps, notes)
    else:
        notes.append("No time column was used; the observations are numbered 1, 2, 3, ...")

    provenance_notes = tuple(notes)
    series = Series(
        values=values,
        times=stamps,
        name=str(value_col),
        frequency=frequency,
        provenance=_provenance(source, digest, value_col, time_col, rows_read, values.size, provenance_notes),
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


def _read_table(data: bytes, path: Path, source: str, sheet) -> _Table:
    if not data.strip():
        raise InputError(
            f"The file '{source}' is empty. Choose a file with a header row and at least "
            "a column of numbers."
        )
    suffix = path.suffix.lower()
    if data.startswith(b"\xd0\xcf\x11\xe0"):
        raise InputError(
            f"'{source}' is in the old Excel (.xls) or another legacy Office format, which Lagwright "
            "does not read. Open it in a spreadsheet program and save it as .xlsx or CSV."
        )
    if data.startswith(b"PAR1"):
        raise InputError(
            f"'{source}' is a Parquet file, which this version does not read. Save the table as CSV "
            "or .xlsx and load that."
        )
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
        return _read_workbook(data, source, sheet)
    if sheet is not None:
        raise InputError(
            f"'{source}' is a text table and has no sheets; leave out the sheet choice."
        )
    return _read_text(data, source, prefer_tab=suffix in (".tsv", ".tab"))


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
        return bool(_DATE_LOOKING.match(text))


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


def _read_text(data: bytes, source: str, prefer_tab: bool) -> _Table:
    text, encoding_note = _decode(data, source)
    if _looks_binary(text):
        raise _binary(source)
    lines = [line for line in re.split(r"\r\n|\r|\n", text[:_SNIFF_CHARS]) if line.strip()][:_SNIFF_LINES]
    if not lines:
        raise InputError(f"The file '{source}' holds only blank lines. Choose a file with data in it.")
    delimiter = _sniff_delimiter(lines, prefer_tab)
    sep = delimiter or ","
    try:
        header_cells = next(csv.reader([lines[0]], delimiter=sep, skipinitialspace=True))
    except (csv.Error, StopIteration):
        header_cells = lines[0].split(sep)
    has_header = not all(_is_data_cell(cell) for cell in header_cells)
    names = _column_names(header_cells if has_header else [""] * len(header_cells))
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            warnings.simplefilter("error", pd.errors.ParserWarning)
            frame = pd.read_csv(
                io.StringIO(text),
                sep=sep,
                header=0 if has_header else None,
                names=names,
                index_col=False,
                engine="c",
                skipinitialspace=True,
                skip_blank_lines=True,
                low_memory=False,
                on_bad_lines="error",
            )
    except pd.errors.ParserWarning:
        raise InputError(
            f"'{source}' has rows with more fields than its header ({len(names)}). Check the delimiter "
            "and remove the extra fields, then load it again."
        ) from None
    except pd.errors.EmptyDataError:
        raise InputError(
            f"'{source}' has no data rows. Choose a file with a header row and data under it."
        ) from None
    except Exception as exc:  # pandas parser errors come in several classes
        detail = str(exc).strip().splitlines()[-1] if str(exc).strip() else exc.__class__.__name__
        raise InputError(
            f"'{source}' could not be read as a table ({detail}). Check that every row has the same "
            "number of fields and that quotes are balanced."
        ) from None
    frame.columns = names
    if frame.empty:
        raise InputError(f"'{source}' has a header but no data rows. Add the data under the header.")
    notes = [encoding_note] if encoding_note else []
    if delimiter not in (None, ","):
        notes.append(f"Fields are separated by {_DELIMITER_NAMES[delimiter]}s.")
    if not has_header:
        notes.append("The first row holds data, not names; the columns were named column 1, column 2, ...")
    return _Table(frame=frame, source=source, workbook=False, delimiter=delimiter, text=text,
                  header=has_header, notes=notes)


# --------------------------------------------------------------------------- workbooks
def _read_workbook(data: bytes, source: str, sheet) -> _Table:
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
                  header=has_header, other_sheets=tuple(n for n in names if n != chosen), notes=notes)


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
        if kind == "number" and not _is_year_column(name, column):
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
            t = v.strip()
            try:
                float(t)
                good += 1
            except ValueError:
                good += bool(_DECIMAL_COMMA.match(t))
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
def _to_numbers(table: _Table, name: str) -> np.ndarray:
    column = table.frame[name]
    kind = _kind(column)
    source = table.source
    if kind == "number":
        return column.to_numpy(dtype=float, na_value=np.nan)
    if kind == "empty":
        return np.full(len(column), np.nan)
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
    cells = column.to_numpy(dtype=object)
    values = np.full(cells.size, np.nan)
    text_cells, others = _cells(column)
    bad: list[int] = []
    for i, cell in others.items():
        if isinstance(cell, (int, float, np.number)) and not isinstance(cell, (bool, np.bool_)):
            values[i] = float(cell)
        else:
            bad.append(i)
    texts = text_cells.tolist()
    text_index = text_cells.index.to_numpy()
    if texts:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            parsed = pd.to_numeric(pd.Series(texts, dtype=object), errors="coerce").to_numpy(dtype=float)
        failed = np.isnan(parsed)
        index = text_index
        if failed.any() and table.delimiter != ",":
            offenders = [texts[k] for k in np.flatnonzero(failed)]
            if all(_DECIMAL_COMMA.match(t) for t in offenders):
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    parsed = pd.to_numeric(
                        pd.Series([t.replace(",", ".") for t in texts], dtype=object), errors="coerce"
                    ).to_numpy(dtype=float)
                failed = np.isnan(parsed)
                table.notes.append(f"Numbers in '{name}' use a decimal comma; they were read as decimals.")
        values[index] = parsed
        bad.extend(int(i) for i in index[failed])
    if bad:
        bad.sort()
        shown = table.rows_text(bad, [cells[i] for i in bad])
        comma_hint = ""
        if any(isinstance(cells[i], str) and re.search(r"\d[,\s]\d", cells[i]) for i in bad[:_SHOWN]):
            comma_hint = (
                " If these are numbers with thousands separators or decimal commas, save them as plain "
                "numbers such as 1234.5."
            )
        raise InputError(
            f"The value column '{name}' of '{source}' holds {len(bad)} entr{'y' if len(bad) == 1 else 'ies'} "
            f"that {'is' if len(bad) == 1 else 'are'} not a number: {shown}. Data rows are counted from 1 "
            "under the header. Correct or empty those cells (an empty cell is read as a missing value), "
            f"or choose another column with --value NAME.{comma_hint}"
        )
    return values


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
        cells = column.astype(object)
        cells = cells[cells.notna().to_numpy()].astype(str).str.strip()
        cells = cells[~cells.isin(_MISSING_MARKERS).to_numpy()]
        return cells.astype(object), {}
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
def _to_datetime(text: pd.Series, **kwargs) -> tuple[pd.Series, str | None]:
    """``pd.to_datetime`` that never raises or warns: NaT where it fails, naive result."""
    note = None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
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


def _parse_text_stamps(text: pd.Series) -> tuple[pd.Series, list[str]]:
    """Parse stripped, non-missing strings; NaT marks a stamp that does not parse."""
    first = text.iloc[0]
    attempts: list[tuple[str, bool]] = []
    if _ISO_STAMP.match(first):
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
    for fmt, dayfirst in attempts:
        parsed, note = _to_datetime(text, format=fmt)
        failures = int(parsed.isna().sum())
        results.append((failures, fmt, dayfirst, parsed, note))
        if failures == 0 and fmt == "ISO8601":
            return parsed, [note] if note else []
    complete = [r for r in results if r[0] == 0]
    if not complete:
        return _parse_leftovers(text, results)
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


def _parse_leftovers(text: pd.Series, results: list) -> tuple[pd.Series, list[str]]:
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
        first, _ = _to_datetime(left.iloc[:batch], format="mixed", dayfirst=dayfirst)
        if first.isna().all():
            return parsed, [note] if note else []
    extra, extra_note = _to_datetime(left, format="mixed", dayfirst=dayfirst)
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


def _to_stamps(table: _Table, name: str) -> np.ndarray:
    """Time stamps of the column as ``datetime64[ns]`` (NaT where the cell is empty)."""
    column = table.frame[name]
    source = table.source
    n = len(column)
    if _is_year_column(name, column):
        years = column.to_numpy(dtype=float, na_value=np.nan)
        stamps = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
        present = ~np.isnan(years)
        stamps[present] = (years[present].astype(np.int64) - 1970).astype("datetime64[Y]").astype("datetime64[ns]")
        table.notes.append(f"The years in '{name}' were read as 1 January of each year.")
        return stamps
    kind = _kind(column)
    if kind == "empty":
        return np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
    if kind == "datetime":
        parsed = column
        if getattr(parsed.dt, "tz", None) is not None:
            parsed = parsed.dt.tz_localize(None)
        failed = np.zeros(n, dtype=bool)
        cells = None
    else:
        cells = column.to_numpy(dtype=object)
        text_cells, others = _cells(column)
        for i, cell in others.items():
            if isinstance(cell, (pd.Timestamp, _dt.datetime, _dt.date)):
                text_cells.loc[i] = cell.isoformat()
            else:
                text_cells.loc[i] = str(cell)
        text_cells = text_cells.sort_index()
        present = np.zeros(n, dtype=bool)
        present[text_cells.index.to_numpy()] = True
        parsed = pd.Series(pd.NaT, index=range(n), dtype="datetime64[ns]")
        if present.any():
            got, notes = _parse_text_stamps(text_cells)
            parsed = got.reindex(range(n))
            table.notes.extend(notes)
        failed = present & parsed.isna().to_numpy()
    if failed.any():
        bad = np.flatnonzero(failed)
        raise InputError(
            f"The time column '{name}' of '{source}' holds {bad.size} entr{'y' if bad.size == 1 else 'ies'} "
            f"that could not be read as a date or time: {table.rows_text(bad, cells[bad])}. Data rows are "
            "counted from 1 under the header. Correct them (ISO dates such as 2021-03-31 or "
            "2021-03-31 14:20 are safest), or choose another column with --time NAME."
        )
    valid = parsed.notna().to_numpy()
    if valid.any():
        low, high = parsed[valid].min(), parsed[valid].max()
        if low < _FIRST_STAMP or high > _LAST_STAMP:
            outside = np.flatnonzero(valid & ((parsed < _FIRST_STAMP) | (parsed > _LAST_STAMP)).to_numpy())
            shown = table.rows_text(outside, [parsed.iloc[i] for i in outside])
            raise InputError(
                f"The time column '{name}' of '{source}' has dates outside the years 1678 to 2261 that "
                f"Lagwright handles: {shown}. Correct those dates and load the file again."
            )
    try:
        return parsed.to_numpy(dtype="datetime64[ns]", na_value=np.datetime64("NaT"))
    except Exception:  # pragma: no cover - range checked above
        raise InputError(
            f"The time column '{name}' of '{source}' could not be converted to time stamps."
        ) from None


def _order_by_time(table: _Table, name: str, stamps, values, positions):
    """Sort rows by time (noted) and refuse repeated stamps."""
    as_int = stamps.view("int64")
    # Compare neighbours rather than differencing: a difference of stamps ~300 years apart
    # overflows int64 nanoseconds.
    if as_int.size > 1 and np.any(as_int[1:] < as_int[:-1]):
        order = np.argsort(as_int, kind="stable")
        stamps, values, positions = stamps[order], values[order], positions[order]
        as_int = stamps.view("int64")
        table.notes.append(f"The rows were not in time order; they were sorted by '{name}'.")
    repeated = np.flatnonzero(as_int[1:] == as_int[:-1])
    if repeated.size:
        groups: dict[int, list[int]] = {}
        for k in repeated:
            for j in (k, k + 1):
                groups.setdefault(int(as_int[j]), [])
                if int(positions[j]) not in groups[int(as_int[j])]:
                    groups[int(as_int[j])].append(int(positions[j]))
        parts = []
        for stamp, rows in list(groups.items())[:_SHOWN]:
            label = _stamp_label(pd.Timestamp(np.datetime64(stamp, "ns")))
            rows_text = ", ".join(str(r + 1) for r in sorted(rows)[:_SHOWN])
            parts.append(f"{label} (data rows {rows_text})")
        more = len(groups) - _SHOWN
        listing = "; ".join(parts) + (f"; and {more} more" if more > 0 else "")
        raise InputError(
            f"The time column '{name}' of '{table.source}' repeats {len(groups)} time stamp(s): {listing}. "
            "Each time may appear once: merge the repeated rows (for example sum or average them) or "
            "delete the extra ones, then load the file again."
        )
    return stamps, values, positions


def _stamp_label(stamp: pd.Timestamp) -> str:
    if stamp == stamp.normalize():
        return str(stamp.date())
    return stamp.isoformat(sep=" ")


_FREQUENCY_WORDS = {
    "D": "daily", "B": "business-daily", "h": "hourly", "min": "every minute", "s": "every second",
    "MS": "monthly", "ME": "monthly", "QS": "quarterly", "QE": "quarterly", "YS": "yearly", "YE": "yearly",
    "W": "weekly",
}


def _describe_frequency(alias: str) -> str:
    base = alias.split("-")[0]
    match = re.fullmatch(r"(\d+)([A-Za-z]+)", base)
    if match:
        unit = {"min": "minutes", "h": "hours", "s": "seconds", "D": "days", "W": "weeks"}.get(match.group(2))
        if unit:
            return f"every {match.group(1)} {unit}"
    return _FREQUENCY_WORDS.get(base, f"'{alias}'")


def _infer_frequency(stamps: np.ndarray, notes: list[str]) -> str | None:
    """pandas' frequency alias of the stamps, or None; notes gaps in a regular calendar."""
    if stamps.size < 3:
        notes.append("There are too few time stamps to infer their spacing.")
        return None
    index = pd.DatetimeIndex(stamps)
    alias = _pandas_frequency(index)
    if alias is not None:
        notes.append(f"The time stamps are {_describe_frequency(alias)} (pandas frequency '{alias}').")
        return alias
    # A regular calendar with some periods missing? Try the spacing of a few short runs.
    width = min(8, stamps.size)
    starts = sorted({0, stamps.size // 4, stamps.size // 2, (3 * stamps.size) // 4, stamps.size - width})
    tried = Counter(a for a in (_pandas_frequency(index[s:s + width]) for s in starts) if a)
    for alias, _ in tried.most_common():
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                calendar = pd.date_range(index[0], index[-1], freq=alias)
        except Exception:
            continue
        if len(calendar) > 2 * stamps.size or not index.isin(calendar).all():
            continue
        missing = calendar.difference(index)
        shown = ", ".join(_stamp_label(t) for t in missing[:_SHOWN])
        more = f" and {len(missing) - _SHOWN} more" if len(missing) > _SHOWN else ""
        notes.append(
            f"The time stamps are {_describe_frequency(alias)} (pandas frequency '{alias}') with "
            f"{len(missing)} period(s) missing: {shown}{more}. Until the gaps are filled the series is "
            "treated as unevenly spaced (no frequency)."
        )
        return None
    notes.append("The time stamps are unevenly spaced; no frequency was inferred.")
    return None


def _pandas_frequency(index: pd.DatetimeIndex) -> str | None:
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
