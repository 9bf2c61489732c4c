"""inspect_table and the ImportReport: what a table holds, before anything is fitted.

Counts are checked against pandas computing the same thing on the same file
(``read_csv``, ``duplicated``, ``date_range`` differences, ``isna``), as
named beside each check. The constant-stretch check (a run of identical
readings) is common practice in meter data review.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from lagwright.core.import_options import ImportOptions
from lagwright.core.inspection import constant_stretches, inspect_table, numeric_columns
from lagwright.core.loader import PastedText


def _meter_file(tmp_path):
    """Hourly readings with two value columns and every problem at once."""
    rng = np.random.default_rng(21)
    stamps = pd.date_range("2022-05-01", periods=120, freq="h")
    flow = np.round(rng.normal(40, 5, 120), 2).astype(object)
    pressure = np.round(rng.normal(3.1, 0.1, 120), 3)
    flow[10:22] = 37.5  # a stuck meter: 12 equal readings
    flow[50] = "sensor fault"
    flow[51] = ""
    flow[80] = -1.0
    rows = [(t, f, p) for t, f, p in zip(stamps, flow, pressure)]
    del rows[60:63]  # three hours missing
    rows.insert(30, rows[29])  # a repeated stamp
    lines = ["time,flow_ls,pressure_bar"] + [f"{t:%Y-%m-%d %H:%M},{f},{p}" for t, f, p in rows]
    path = tmp_path / "meter.csv"
    path.write_text("\n".join(lines) + "\n")
    return path


def test_report_lists_every_problem(tmp_path):
    path = _meter_file(tmp_path)
    report = inspect_table(path, ImportOptions(value="flow_ls"), transform="log")
    frame = pd.read_csv(path)
    assert report.rows_read == len(frame) == 118
    assert report.columns == ("time", "flow_ls", "pressure_bar")
    assert report.numeric_columns == ("flow_ls", "pressure_bar")
    assert (report.time_column, report.value_column) == ("time", "flow_ls")
    # Non-numeric cells: reference pandas.to_numeric(errors="coerce") on the column.
    coerced = pd.to_numeric(frame["flow_ls"], errors="coerce")
    assert report.non_numeric_count == int((coerced.isna() & frame["flow_ls"].notna()).sum()) == 1
    cell = report.non_numeric[0]
    assert (cell.row, cell.text, cell.where) == (52, "sensor fault", "data row 52 (line 53 of the file)")
    # Repeated stamps: reference pandas.Series.duplicated.
    assert report.repeated_count == int(frame["time"].duplicated().sum()) == 1
    assert report.repeated[0].rows == (30, 31)
    # Gaps: reference the hourly date_range minus the stamps present.
    stamps = pd.to_datetime(frame["time"])
    missing = pd.date_range(stamps.min(), stamps.max(), freq="h").difference(stamps)
    assert report.missing_periods == len(missing) == 3 and report.frequency == "h"
    assert [(g.first, g.last, g.periods) for g in report.gaps] == [("2022-05-03 12:00:00", "2022-05-03 14:00:00", 3)]
    assert report.missing_values == 1  # the empty cell; the text cell is counted apart
    assert report.constant[0].length == 12 and report.constant[0].value == 37.5
    assert report.nonpositive == 1 and report.nonpositive_blocks_transform
    assert report.series is None and "not a number" in report.problem
    text = "\n".join(report.lines())
    for phrase in ("Cannot load", "sensor fault", "Repeated time stamps: 1", "3 missing period(s)",
                   "log transform is not possible", "Constant stretches"):
        assert phrase in text


def test_repairs_make_the_series_and_the_notes(tmp_path):
    path = _meter_file(tmp_path)
    options = ImportOptions(value="flow_ls", non_numeric="missing", duplicates="mean", gaps="interpolate")
    report = inspect_table(path, options)
    assert report.ok and report.problem is None
    series = report.series
    assert len(series) == 120 and series.frequency == "h"
    assert report.series_missing == 0 and report.rows_used == 117
    assert [d.reason for d in report.dropped] == ["merged into another row with the same time stamp (mean)"]
    for phrase in ("read as missing", "merged by the mean", "filled by linear interpolation"):
        assert any(phrase in note for note in series.provenance.notes), phrase


def test_switching_value_column_reuses_the_table(tmp_path):
    path = _meter_file(tmp_path)
    first = inspect_table(path, ImportOptions(value="flow_ls"))
    second = inspect_table(path, ImportOptions(value="pressure_bar", duplicates="last"), table=first.table)
    assert second.table is first.table  # not read again
    assert second.ok and second.series.name == "pressure_bar"
    assert numeric_columns(path) == ("flow_ls", "pressure_bar")


def test_unreadable_file_gives_a_report_not_an_exception(tmp_path):
    report = inspect_table(tmp_path / "absent.csv")
    assert report.problem and "does not exist" in report.problem and not report.ok
    noise = np.random.default_rng(2).integers(0, 256, 2000, dtype=np.uint8).tobytes()
    (tmp_path / "noise.csv").write_bytes(noise)
    assert "binary data" in inspect_table(tmp_path / "noise.csv").problem


def test_ambiguous_columns_still_list_the_columns(tmp_path):
    path = _meter_file(tmp_path)
    report = inspect_table(path)
    assert "several columns of numbers" in report.problem
    assert report.numeric_columns == ("flow_ls", "pressure_bar") and len(report.preview_rows) == 50


def test_pasted_text_report():
    text = "when\tload\n" + "".join(f"2021-01-{d:02d}\t{d % 5}\n" for d in range(1, 29))
    report = inspect_table(PastedText(text))
    assert report.kind == "pasted" and report.ok and report.delimiter == "\t"
    assert report.nonpositive == 5  # the fives: 5, 10, 15, 20, 25 give 0 (informational without a transform)
    assert not report.nonpositive_blocks_transform


def test_constant_stretches_against_a_loop():
    values = np.array([1, 1, 1, 2, 2, 2, 2, np.nan, 2, 2, 3, 3, 3, 3, 3], dtype=float)
    got = constant_stretches(values, min_run=3)
    # Reference: a plain loop over runs (common practice: NaN breaks a run).
    runs, start = [], 0
    for k in range(1, len(values) + 1):
        if k == len(values) or values[k] != values[start] or np.isnan(values[k]):
            if k - start >= 3 and not np.isnan(values[start]):
                runs.append((k - start, values[start]))
            start = k
    assert sorted((s.length, s.value) for s in got) == sorted(runs)
    assert got[0].length == 5 and got[0].first == "observation 11"


@pytest.mark.parametrize("gaps", [None, "leave"])
def test_gap_handling_is_said(tmp_path, gaps):
    path = _meter_file(tmp_path)
    report = inspect_table(path, ImportOptions(value="pressure_bar", duplicates="mean", gaps=gaps))
    line = next(line for line in report.lines() if line.startswith("Gaps:"))
    assert ("kept as read" in line) == (gaps is None) and ("inserted as missing" in line) == (gaps == "leave")
    assert report.series.frequency == (None if gaps is None else "h")
