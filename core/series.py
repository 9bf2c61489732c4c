"""The :class:`Series` value: observations, their time stamps and where they came from."""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field

import numpy as np

from .errors import InputError

#: Fewest observations Lagwright will model. Below this the residual checks
#: (Ljung-Box at lag 6, a cumulative periodogram) say nothing useful.
MIN_OBSERVATIONS = 16


@dataclass(frozen=True)
class Provenance:
    """Where a series came from, as the memo reports it.

    Attributes
    ----------
    source : str
        File name (or a short description such as ``"simulated"``).
    sha256 : str
        Hex SHA-256 of the file's bytes, or ``""`` when there is no file.
    value_column, time_column : str
        Column names used; ``time_column`` is ``""`` for a plain index.
    rows_read, rows_used : int
        Data rows in the file and rows that became observations.
    notes : tuple of str
        Plain sentences about what was done on loading (dropped rows, ...).
    """

    source: str = ""
    sha256: str = ""
    value_column: str = ""
    time_column: str = ""
    rows_read: int = 0
    rows_used: int = 0
    notes: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class Series:
    """A univariate series as loaded, before any transform or differencing.

    Attributes
    ----------
    values : numpy.ndarray
        Float64 observations (read-only). NaN marks a missing value.
    times : numpy.ndarray or None
        ``datetime64[ns]`` stamps of the same length, or ``None`` when the
        series has a plain integer index.
    name : str
        Short human name (usually the value column).
    frequency : str or None
        pandas offset alias of the spacing (``"D"``, ``"MS"``, ``"h"``...), or
        ``None`` when unknown or irregular.
    provenance : Provenance
        Where the numbers came from.
    """

    values: np.ndarray
    times: np.ndarray | None = None
    name: str = "series"
    frequency: str | None = None
    provenance: Provenance = field(default_factory=Provenance)

    def __post_init__(self) -> None:
        values = np.array(self.values, dtype=float, copy=True)
        if values.ndim != 1:
            raise InputError(f"The series '{self.name}' must be one column of numbers, not a table.")
        values.setflags(write=False)
        object.__setattr__(self, "values", values)
        if self.times is not None:
            times = np.array(self.times, dtype="datetime64[ns]", copy=True)
            if times.shape != values.shape:
                raise InputError(
                    f"The series '{self.name}' has {values.size} values but {times.size} time stamps."
                )
            times.setflags(write=False)
            object.__setattr__(self, "times", times)

    def __len__(self) -> int:
        return int(self.values.size)

    @property
    def fingerprint(self) -> str:
        """SHA-256 of the values (and time stamps): the data part of a fit's cache key."""
        digest = hashlib.sha256(np.ascontiguousarray(self.values).tobytes())
        if self.times is not None:
            digest.update(np.ascontiguousarray(self.times).view("int64").tobytes())
        return digest.hexdigest()

    def time_labels(self) -> list[str]:
        """Human labels of each observation's time (ISO dates, or 1-based positions)."""
        if self.times is None:
            return [str(i + 1) for i in range(len(self))]
        stamps = self.times.astype("datetime64[s]")
        whole_days = bool(np.all(stamps.astype("datetime64[D]") == stamps))
        unit = "D" if whole_days else "m"
        return [str(t) for t in stamps.astype(f"datetime64[{unit}]")]

    def check_usable(self) -> None:
        """Raise :class:`InputError` if the series cannot be modelled at all.

        Refuses non-finite values other than NaN, series shorter than
        :data:`MIN_OBSERVATIONS` observed values, and constant series.
        """
        values = self.values
        if np.isinf(values).any():
            where = int(np.flatnonzero(np.isinf(values))[0]) + 1
            raise InputError(
                f"The series '{self.name}' holds an infinite value (observation {where}); "
                "remove or correct it in the file and load it again."
            )
        observed = values[~np.isnan(values)]
        if observed.size < MIN_OBSERVATIONS:
            raise InputError(
                f"The series '{self.name}' has only {observed.size} usable values; "
                f"Lagwright needs at least {MIN_OBSERVATIONS} to fit and check a model."
            )
        if np.ptp(observed) == 0.0:
            raise InputError(
                f"The series '{self.name}' is constant ({observed[0]:g} throughout); "
                "there is nothing to model. Check that the right value column was chosen."
            )
