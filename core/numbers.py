"""Numbers written as text: decimal point or comma, thousands separators.

Exports from spreadsheets and billing systems write numbers the way their
locale does: ``1234.5``, ``1,234.5``, ``1.234,5``, ``1 234,5`` or
``1'234.5``. :func:`detect_format` finds the one writing a column uses and
:func:`parse_numbers` reads the column with it, strictly: a thousands
separator is accepted only between groups of three digits, so ``1.5`` is
never read as fifteen.

Rules
-----
* A format is a decimal mark (``.`` or ``,``) and an optional thousands
  separator (``,``, ``.``, a space of any width, or an apostrophe) different
  from the decimal mark.
* Detection counts, for each format allowed by the caller's choices, the
  cells that are numbers in that format, and takes the format that reads the
  most. Ties go to the simpler format (no thousands separator first), except
  that a column whose only commas stand before exactly three digits
  (``1,234``) is ambiguous between a decimal comma and a thousands comma:
  then the comma is read as the decimal mark when the fields are separated
  by something other than commas (the habit of locales that write decimal
  commas), as a thousands separator otherwise, and a note says so.
* ``inf``, ``-inf`` and ``Infinity`` are read as infinite (and refused later
  with the rows named); ``1e5`` exponents are accepted in every format.

References
----------
Unicode Consortium. *Unicode Common Locale Data Repository* (CLDR), number
symbols (decimal and group separators by locale), cldr.unicode.org.
ISO 80000-1:2022, *Quantities and units — Part 1: General*, 7.3.2 (the comma
or point as decimal sign; thin-space digit grouping).
"""

from __future__ import annotations

import re
import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd

__all__ = ["NumberFormat", "detect_format", "parse_numbers", "looks_numeric", "THOUSANDS_NAMES"]

#: Spaces used to group digits: space, no-break space, narrow no-break space, thin space.
_SPACES = " \u00a0\u202f\u2009"
_APOSTROPHES = "'\u2019"

#: Human names of the thousands separators.
THOUSANDS_NAMES = {",": "comma", ".": "point", " ": "space", "'": "apostrophe", "": "none"}

_EXPONENT = r"([eE][+-]?\d+)?"
_INFINITY = re.compile(r"^[+-]?(inf|infinity)$", re.IGNORECASE)


@dataclass(frozen=True)
class NumberFormat:
    """How numbers are written: the decimal mark and the thousands separator (``""`` for none)."""

    decimal: str = "."
    thousands: str = ""

    @property
    def plain(self) -> bool:
        """Whether this is the format Python and pandas read directly (``1234.5``)."""
        return self.decimal == "." and self.thousands == ""

    def describe(self) -> str:
        mark = "a decimal point" if self.decimal == "." else "a decimal comma"
        if not self.thousands:
            return mark
        return f"{mark} and a {THOUSANDS_NAMES[self.thousands]} between thousands"

    def example(self) -> str:
        sep = {" ": " "}.get(self.thousands, self.thousands)
        return f"1{sep}234{self.decimal}5"

    def pattern(self) -> re.Pattern:
        dec = re.escape(self.decimal)
        if self.thousands == " ":
            sep = f"[{_SPACES}]"
        elif self.thousands == "'":
            sep = f"[{_APOSTROPHES}]"
        else:
            sep = re.escape(self.thousands)
        if self.thousands:
            whole = rf"(\d{{1,3}}({sep}\d{{3}})+|\d+)"
        else:
            whole = r"\d+"
        return re.compile(rf"^[+-]?({whole}({dec}\d*)?|{dec}\d+){_EXPONENT}$")


_ALL_FORMATS = (
    NumberFormat(".", ""),
    NumberFormat(",", ""),
    NumberFormat(".", ","),
    NumberFormat(",", "."),
    NumberFormat(".", " "),
    NumberFormat(",", " "),
    NumberFormat(".", "'"),
    NumberFormat(",", "'"),
)
_PATTERNS = {fmt: fmt.pattern() for fmt in _ALL_FORMATS}
_AMBIGUOUS_COMMA = re.compile(r"^[+-]?\d{1,3},\d{3}$")
_DETECT_SAMPLE = 5000


def _strip_spaces(text: str) -> str:
    return text.strip(_SPACES + "\t")


def looks_numeric(text: str) -> bool:
    """Whether ``text`` is a number in any of the recognised formats (or infinite)."""
    text = _strip_spaces(text)
    if not text:
        return False
    if _INFINITY.match(text):
        return True
    return any(p.match(text) for p in _PATTERNS.values())


def _allowed(decimal: str | None, thousands: str | None) -> list[NumberFormat]:
    formats = []
    for fmt in _ALL_FORMATS:
        if decimal is not None and fmt.decimal != decimal:
            continue
        if thousands is not None and fmt.thousands != thousands:
            continue
        formats.append(fmt)
    return formats


def detect_format(
    texts, decimal: str | None = None, thousands: str | None = None, delimiter: str | None = None
) -> tuple[NumberFormat, str | None]:
    """The format that reads the most of ``texts``, and a note when the choice was a guess.

    Parameters
    ----------
    texts : sequence of str
        Stripped, non-missing cells of one column.
    decimal : {".", ","}, optional
        The decimal mark, if the user fixed it.
    thousands : {"", ",", ".", " ", "'"}, optional
        The thousands separator, if the user fixed it (``""`` for none).
    delimiter : str, optional
        The field delimiter of the file, used only to settle ``1,234``.

    Returns
    -------
    (NumberFormat, str or None)

    References
    ----------
    Unicode CLDR number symbols (decimal and group separators by locale).
    """
    candidates = _allowed(decimal, thousands)
    if not candidates:
        return NumberFormat(decimal or ".", thousands or ""), None
    cells = texts.reset_index(drop=True) if isinstance(texts, pd.Series) else pd.Series(list(texts), dtype=object)
    if cells.size > _DETECT_SAMPLE:
        step = cells.size / _DETECT_SAMPLE
        cells = cells.iloc[(np.arange(_DETECT_SAMPLE) * step).astype(int)]
    cells = pd.Series(cells.astype(object).astype(str).map(_strip_spaces).unique(), dtype=object)
    if cells.empty or len(candidates) == 1:
        return candidates[0], None
    scores = [int(cells.str.match(_PATTERNS[fmt].pattern).sum()) for fmt in candidates]
    best = max(scores)
    winners = [fmt for fmt, score in zip(candidates, scores) if score == best]
    chosen = winners[0]
    note = None
    decimal_comma = NumberFormat(",", "")
    thousands_comma = NumberFormat(".", ",")
    if decimal_comma in winners and thousands_comma in winners and best > 0:
        commas = cells[cells.str.contains(",", regex=False)]
        if commas.size and commas.str.match(_AMBIGUOUS_COMMA.pattern).all():
            chosen = thousands_comma if delimiter == "," else decimal_comma
            example = commas.iloc[0]
            reading = "a thousands separator" if chosen is thousands_comma else "a decimal comma"
            note = (
                f"Numbers such as '{example}' could use a decimal comma or a thousands comma; the comma was "
                f"read as {reading}. Set the decimal mark and the thousands separator to be sure."
            )
    return chosen, note


def parse_numbers(texts: pd.Series, fmt: NumberFormat) -> np.ndarray:
    """Read stripped text cells as float64 in format ``fmt``; NaN where a cell is not such a number.

    References
    ----------
    pandas documentation: ``to_numeric`` (the plain format).
    """
    if len(texts) == 0:
        return np.empty(0)
    cells = texts if isinstance(texts.dtype, pd.StringDtype) else texts.astype(object).astype(str)
    cells = cells.str.strip(_SPACES + "\t")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if fmt.plain:
            return _to_float(cells)
        ok = cells.str.match(_PATTERNS[fmt].pattern).to_numpy(dtype=bool)
        infinite = cells.str.match(_INFINITY.pattern, case=False).to_numpy(dtype=bool)
        cleaned = cells
        if fmt.thousands == " ":
            cleaned = cleaned.str.replace(f"[{_SPACES}]", "", regex=True)
        elif fmt.thousands == "'":
            cleaned = cleaned.str.replace(f"[{_APOSTROPHES}]", "", regex=True)
        elif fmt.thousands:
            cleaned = cleaned.str.replace(fmt.thousands, "", regex=False)
        if fmt.decimal == ",":
            cleaned = cleaned.str.replace(",", ".", regex=False)
        values = _to_float(cleaned)
    values[~(ok | infinite)] = np.nan
    return values


def _to_float(cells: pd.Series) -> np.ndarray:
    """``pandas.to_numeric(errors="coerce")`` as a writable float64 array.

    Text held by Arrow is first cast by Arrow's C++ number reader (correctly
    rounded, several times faster); if it refuses any cell, pandas reads the
    column, so the result never depends on which reader ran.
    """
    if isinstance(cells.dtype, pd.StringDtype) and getattr(cells.dtype, "storage", "") == "pyarrow":
        try:
            import pyarrow as pa
            import pyarrow.compute as pc

            parsed = pc.cast(pa.array(cells.array), pa.float64())
            if parsed.null_count == 0:
                return np.array(parsed.to_numpy(zero_copy_only=False), dtype=float)
        except Exception:  # noqa: BLE001 - any refusal: pandas decides, cell by cell
            pass
    return np.array(pd.to_numeric(cells, errors="coerce").to_numpy(dtype=float, na_value=np.nan))
