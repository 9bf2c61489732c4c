"""Parquet files, read with the optional pyarrow package.

pyarrow is imported only when a Parquet file is opened, so Lagwright starts
and reads CSV and Excel without it; without it a Parquet file is refused
with a message saying how to install it.

References
----------
Apache Software Foundation. *Apache Parquet format specification*
(parquet.apache.org); *Apache Arrow Python documentation*,
``pyarrow.parquet.read_table``.
pandas development team. *pandas documentation*: ``read_parquet``.
"""

from __future__ import annotations

import decimal
import importlib.util
import io
import warnings

import numpy as np
import pandas as pd

from .errors import InputError

__all__ = ["read_parquet", "pyarrow_available"]


def pyarrow_available() -> bool:
    """Whether the pyarrow package can be imported."""
    return importlib.util.find_spec("pyarrow") is not None


def read_parquet(data: bytes, source: str) -> tuple[pd.DataFrame, list[str]]:
    """Read a Parquet file's bytes into a frame of plain columns (numbers, datetimes, text).

    A stored index (pandas writes a time index into the file's metadata) is
    turned back into a column. Decimal columns become floats; categorical
    columns become text; columns of nested values are kept as text.

    Raises
    ------
    InputError
        When pyarrow is missing or the file is not a readable Parquet file.
    """
    if not pyarrow_available():
        raise InputError(
            f"'{source}' is a Parquet file, and reading Parquet needs the pyarrow package, which is not "
            "installed. Install it (pip install pyarrow) or save the table as CSV or .xlsx and load that."
        )
    if not data.startswith(b"PAR1") or not data.endswith(b"PAR1"):
        raise InputError(
            f"'{source}' is named like a Parquet file but is not a complete one (the Parquet marks are missing; "
            "it may be truncated). Write it again, or save the table as CSV."
        )
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            frame = pd.read_parquet(io.BytesIO(data), engine="pyarrow")
    except Exception as exc:  # pyarrow raises several kinds for a damaged file
        detail = str(exc).strip().splitlines()[0] if str(exc).strip() else exc.__class__.__name__
        raise InputError(
            f"'{source}' could not be read as a Parquet file ({detail[:120]}). It may be damaged; write it again, "
            "or save the table as CSV."
        ) from None
    notes: list[str] = []
    if not isinstance(frame.index, pd.RangeIndex):
        names = [n if n is not None else "index" for n in frame.index.names]
        frame = frame.reset_index()
        frame.columns = [*names, *frame.columns[len(names):]]
        notes.append(f"The Parquet file's stored index ({', '.join(map(str, names))}) was read as a column.")
    else:
        frame = frame.reset_index(drop=True)
    if frame.shape[1] == 0:
        raise InputError(f"The Parquet file '{source}' has no columns. Choose a file with a time and a value column.")
    if frame.empty:
        raise InputError(f"The Parquet file '{source}' has no data rows. Choose a file with data in it.")
    columns = {}
    for k, name in enumerate(frame.columns):
        column = frame.iloc[:, k]
        columns[str(name) if str(name).strip() else f"column {k + 1}"] = _plain(column)
    names = list(columns)
    if len(set(names)) != len(names):
        seen: dict[str, int] = {}
        unique = []
        for name in names:
            seen[name] = seen.get(name, 0) + 1
            unique.append(name if seen[name] == 1 else f"{name} ({seen[name]})")
        names = unique
    plain = pd.DataFrame(dict(zip(names, columns.values())))
    return plain, notes


def _plain(column: pd.Series) -> pd.Series:
    """A column the loader understands: numbers, datetimes, booleans or Python objects."""
    dtype = column.dtype
    if isinstance(dtype, pd.CategoricalDtype):
        return column.astype(object)
    if pd.api.types.is_datetime64_any_dtype(dtype) or pd.api.types.is_bool_dtype(dtype):
        return column
    if pd.api.types.is_numeric_dtype(dtype):
        return column.astype(float) if pd.api.types.is_extension_array_dtype(dtype) else column
    if isinstance(dtype, pd.ArrowDtype):
        try:
            return column.astype(object)
        except Exception:
            return column.astype(str).astype(object)
    values = column.to_numpy(dtype=object)
    if values.size and all(isinstance(v, decimal.Decimal) or v is None for v in values[:100]):
        return pd.Series([float(v) if v is not None else np.nan for v in values], index=column.index)
    return column
