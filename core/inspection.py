"""Look at a table before loading it: :func:`inspect_table` builds an :class:`ImportReport`.

The report describes the table as read (repeated stamps, gaps, missing and
non-numeric cells, unreadable stamps) and the series the user's choices give
(or the loader's message saying why there is none). It never raises for a
problem with the data: every problem ends up in the report, so the import
dialog can show it next to the choices that fix it.

References
----------
pandas development team. *pandas documentation*: ``read_csv``,
``read_excel``, ``read_parquet``, ``infer_freq``.
"""

from __future__ import annotations

import os
from dataclasses import replace

import numpy as np
import pandas as pd

from . import loader
from .errors import InputError
from .frequency import analyse, gap_runs, stamp_label
from .import_options import ImportOptions
from .import_report import CellProblem, ConstantStretch, Dropped, ImportReport, RepeatedStamp

__all__ = ["inspect_table", "numeric_columns", "constant_stretches", "PREVIEW_ROWS"]

#: Rows of the table copied into the report for a preview.
PREVIEW_ROWS = 50
_LISTED = 20  # problems of each kind kept in the report (counts are always complete)


def inspect_table(
    source: str | os.PathLike | loader.PastedText,
    options: ImportOptions | None = None,
    *,
    transform: str | None = None,
    progress: loader.Progress | None = None,
    table=None,
    min_run: int = 8,
) -> ImportReport:
    """Report on a table and on the series ``options`` would make of it.

    Parameters
    ----------
    source : str, path-like or PastedText
        The file (or pasted text) to look at.
    options : ImportOptions, optional
        The user's choices (default: everything detected, nothing repaired).
    transform : {"log", "boxcox"}, optional
        The transform the user intends; values at or below zero are then
        reported as a problem.
    progress : callable, optional
        Called with the fraction done (0 to 1).
    table : optional
        The ``table`` of an earlier report on the same source: reused when
        its reading choices (delimiter, decimal mark, thousands separator,
        sheet) are those of ``options``, so only the later steps run again.
    min_run : int
        Shortest run of identical values reported as a constant stretch.

    Returns
    -------
    ImportReport
        Never raises :class:`InputError`: a file that cannot be read gives a
        report whose :attr:`~ImportReport.problem` says why.

    References
    ----------
    pandas documentation: ``read_csv``, ``read_excel``, ``infer_freq``.
    """
    options = options or ImportOptions()
    report = loader._Progress(progress)
    name = source.name if isinstance(source, loader.PastedText) else os.path.basename(os.fspath(source))
    with np.errstate(all="ignore"):
        try:
            if table is None or getattr(table, "reading", None) != options.reading:
                table = loader.read_table(source, options, progress=report.span(0.0, 0.6))
        except InputError as exc:
            return ImportReport(source=name or str(source), options=options, problem=str(exc), transform=transform)
        base = _table_facts(table, options, transform)
        try:
            parsed = loader._parse(table, options, report.span(0.6, 0.8))
        except InputError as exc:
            return replace(base, problem=str(exc), rows_read=len(table.frame))
        facts = _parsed_facts(parsed, options, min_run)
        series, problem = None, None
        try:
            series = loader._assemble(_copy(parsed), options)
        except InputError as exc:
            problem = str(exc)
        report(0.95)
        final = replace(base, **facts, series=series, problem=problem)
        if series is not None:
            values = series.values
            final = replace(
                final,
                rows_used=series.provenance.rows_used,
                series_missing=int(np.isnan(values).sum()),
                notes=series.provenance.notes,
                constant=constant_stretches(values, series.times, min_run),
                nonpositive=int(np.count_nonzero(values <= 0)),
                first_nonpositive=_first_label(series, values <= 0),
            )
    report(1.0)
    return final


def numeric_columns(source: str | os.PathLike | loader.PastedText, options: ImportOptions | None = None) -> tuple[str, ...]:
    """The columns of a table that hold numbers: the value columns one can choose or switch to.

    Raises
    ------
    InputError
        When the table cannot be read.
    """
    table = loader.read_table(source, options or ImportOptions())
    return _numeric_columns(table)


def constant_stretches(values: np.ndarray, times: np.ndarray | None = None, min_run: int = 8,
                       limit: int = _LISTED) -> tuple[ConstantStretch, ...]:
    """Runs of at least ``min_run`` identical, observed consecutive values, longest first.

    Missing values break a run. ``times`` (``datetime64``) name the
    observations; without them they are numbered from 1.
    """
    values = np.asarray(values, dtype=float)
    if values.size < min_run or min_run < 2:
        return ()
    same = (values[1:] == values[:-1])  # False wherever either side is NaN
    edges = np.flatnonzero(np.diff(np.r_[0, same.astype(np.int8), 0]))
    starts, stops = edges[::2], edges[1::2]  # runs of "same" pairs: observations start .. stop
    lengths = stops - starts + 1
    long = np.flatnonzero(lengths >= min_run)
    if not long.size:
        return ()
    order = long[np.argsort(-lengths[long], kind="stable")][:limit]

    def label(i: int) -> str:
        if times is not None:
            return stamp_label(times[i])
        return f"observation {i + 1}"

    return tuple(ConstantStretch(label(int(starts[k])), label(int(stops[k])), int(lengths[k]),
                                 float(values[starts[k]])) for k in order)


# --------------------------------------------------------------------------- pieces
def _copy(parsed):
    return replace(parsed, table=parsed.table.fresh())


def _numeric_columns(table) -> tuple[str, ...]:
    frame = table.frame
    out = []
    for name in frame.columns:
        column = frame[name]
        kind = loader._kind(column)
        if kind == "number" and not loader._is_serial_column(table, name, column) and not loader._is_year_column(
                name, column):
            out.append(str(name))
        elif kind == "other" and loader._numeric_share(column) > 0.5 and not loader._dates_by_value(column):
            out.append(str(name))
    return tuple(out)


def _cell_text(cell) -> str:
    if cell is None:
        return ""
    try:
        if pd.isna(cell):
            return ""
    except (TypeError, ValueError):
        pass
    if isinstance(cell, pd.Timestamp):
        try:
            return stamp_label(cell) if cell.tzinfo is None else cell.isoformat(sep=" ")
        except Exception:  # noqa: BLE001 - stamps outside Python's date range
            return str(cell)
    if isinstance(cell, float):
        return f"{cell:.12g}"
    return str(cell)


def _table_facts(table, options: ImportOptions, transform) -> ImportReport:
    frame = table.frame
    head = frame.head(PREVIEW_ROWS)
    rows = tuple(tuple(_cell_text(c) for c in row) for row in head.itertuples(index=False, name=None))
    return ImportReport(
        source=table.source,
        kind=table.kind,
        options=options,
        sheets=tuple(table.sheets),
        sheet=table.sheet,
        delimiter=table.delimiter,
        columns=tuple(str(c) for c in frame.columns),
        numeric_columns=_numeric_columns(table),
        preview_header=tuple(str(c) for c in frame.columns),
        preview_rows=rows,
        rows_read=len(frame),
        notes=tuple(table.notes),
        transform=transform,
        table=table,
    )


def _cell_problems(table, positions: np.ndarray, cells, column: str) -> tuple[CellProblem, ...]:
    out = []
    for p in positions[:_LISTED]:
        text = "" if cells is None else _cell_text(cells[p])
        out.append(CellProblem(table.where(int(p)), int(p) + 1, column, text))
    return tuple(out)


def _parsed_facts(parsed, options: ImportOptions, min_run: int) -> dict:
    table = parsed.table
    values = parsed.values
    facts: dict = {
        "time_column": parsed.time_col,
        "value_column": parsed.value_col,
        "rows_read": int(values.size),
        "non_numeric_count": int(parsed.bad_values.size),
        "non_numeric": _cell_problems(table, parsed.bad_values, parsed.cells, parsed.value_col),
        "min_run": min_run,
    }
    dropped: list[Dropped] = []
    bad_values = np.zeros(values.size, dtype=bool)
    bad_values[parsed.bad_values] = True
    observed_or_blank = ~bad_values
    if parsed.stamps is None:
        trailing = loader._trailing_blank_count(values)
        if trailing:
            dropped.append(Dropped("empty rows at the end of the table", trailing))
        used = np.arange(values.size - trailing)
        facts["missing_values"] = int(np.count_nonzero(np.isnan(values[used]) & observed_or_blank[used]))
        facts["nonpositive"] = int(np.count_nonzero(values[used] <= 0))
        facts["constant"] = constant_stretches(values[used], None, min_run)
        return {**facts, "dropped": tuple(dropped)}
    far = parsed.far_stamps
    bad_stamps = np.union1d(parsed.bad_stamps, far).astype(np.int64)
    facts["bad_stamp_count"] = int(bad_stamps.size)
    cells = parsed.stamp_cells
    problems = list(_cell_problems(table, parsed.bad_stamps, cells, parsed.time_col))
    for p, label in list(zip(far, parsed.far_labels))[: max(0, _LISTED - len(problems))]:
        problems.append(CellProblem(table.where(int(p)), int(p) + 1, parsed.time_col, _cell_text(label)))
    facts["bad_stamps"] = tuple(problems)
    stamps = parsed.stamps
    no_stamp = np.isnat(stamps)
    unreadable = np.zeros(values.size, dtype=bool)
    unreadable[bad_stamps] = True
    blank = no_stamp & ~unreadable & np.isnan(values) & observed_or_blank
    lone = no_stamp & ~unreadable & ~blank
    if blank.any():
        dropped.append(Dropped("neither a time stamp nor a value", int(blank.sum())))
    if lone.any():
        dropped.append(Dropped("a value without a time stamp: refused", int(lone.sum())))
    if unreadable.any():
        dropped.append(Dropped("time stamp unreadable or out of range", int(unreadable.sum())))
    keep = ~no_stamp
    positions = np.flatnonzero(keep)
    kept_stamps = stamps[keep]
    kept_values = values[keep]
    order = np.argsort(kept_stamps.view("int64"), kind="stable")
    kept_stamps, kept_values, positions = kept_stamps[order], kept_values[order], positions[order]
    facts["missing_values"] = int(np.count_nonzero(np.isnan(kept_values) & observed_or_blank[positions]))
    starts, sizes = loader.duplicate_groups(kept_stamps, positions)
    facts["repeated_count"] = int(starts.size)
    facts["repeated"] = tuple(
        RepeatedStamp(stamp_label(kept_stamps[s]), tuple(sorted(int(p) + 1 for p in positions[s:s + n]))[:5], int(n))
        for s, n in list(zip(starts, sizes))[:_LISTED])
    if starts.size and options.duplicates != "refuse":
        dropped.append(Dropped(f"merged into another row with the same time stamp ({options.duplicates})",
                               int(sizes.sum() - sizes.size)))
    as_int = kept_stamps.view("int64")
    distinct = kept_stamps[np.r_[True, as_int[1:] != as_int[:-1]]] if as_int.size else kept_stamps
    try:
        spacing = analyse(distinct, options.frequency)
    except InputError:
        spacing = None
    if spacing is not None:
        facts["frequency"] = spacing.alias
        facts["frequency_chosen"] = spacing.chosen
        facts["missing_periods"] = int(spacing.missing.size)
        facts["gaps"] = tuple(gap_runs(distinct, spacing))
    facts["nonpositive"] = int(np.count_nonzero(kept_values <= 0))
    facts["constant"] = constant_stretches(kept_values, kept_stamps, min_run)
    facts["dropped"] = tuple(dropped)
    return facts


def _first_label(series, mask: np.ndarray) -> str:
    where = np.flatnonzero(mask)
    if not where.size:
        return ""
    k = int(where[0])
    if series.times is None:
        return f"observation {k + 1}"
    return stamp_label(series.times[k])
