"""Repairs chosen on import (core/repair.py), each checked against pandas as the reference.

References (pandas documentation, pandas.pydata.org):
* aggregation: ``DataFrame.resample(rule, closed="left", label="left")`` with
  ``sum(min_count=1)`` and ``mean()``;
* interpolation: ``Series.interpolate(method="time" | "linear", limit_area="inside")``;
* forward fill: ``Series.ffill``;
* merging repeated stamps: ``GroupBy.mean``, ``GroupBy.sum(min_count=1)``, ``GroupBy.last``;
* inserting missing periods: ``Series.asfreq``.
Each check names its reference beside it.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from lagwright.core import repair
from lagwright.core.errors import InputError
from lagwright.core.import_options import ImportOptions, parse_aggregate
from lagwright.core.loader import load_series


def _readings(n: int, freq: str, start: str = "2021-03-05 07:30", seed: int = 11, holes: float = 0.0):
    rng = np.random.default_rng(seed)
    stamps = pd.date_range(start, periods=n, freq=freq)
    values = np.round(rng.gamma(2.0, 3.0, n), 3)
    if holes:
        values[rng.random(n) < holes] = np.nan
    return stamps, values


def _resample(stamps, values, rule: str, how: str) -> pd.Series:
    frame = pd.Series(values, index=stamps).resample(rule, closed="left", label="left")
    return frame.sum(min_count=1) if how == "sum" else frame.mean()


# ----------------------------------------------------------------------------- aggregation
@pytest.mark.parametrize("how", ["sum", "mean"])
@pytest.mark.parametrize(
    ("base", "rule", "alias"),
    [("15min", "h", "h"), ("15min", "D", "D"), ("10min", "6h", "6h"), ("h", "W-MON", "W-MON"),
     ("6h", "MS", "MS"), ("D", "QS-JAN", "QS-JAN"), ("D", "YS-JAN", "YS-JAN")],
)
def test_aggregate_matches_pandas_resample(base, rule, alias, how):
    stamps, values = _readings(3000, base, holes=0.05)
    got_stamps, got_values, note = repair.aggregate(stamps.to_numpy(), values, alias, how)
    # Reference: pandas resample (closed="left", label="left"), sum(min_count=1) / mean.
    reference = _resample(stamps, values, rule, how)
    np.testing.assert_array_equal(got_stamps, reference.index.to_numpy(dtype="datetime64[ns]"))
    np.testing.assert_allclose(got_values, reference.to_numpy(), rtol=1e-12, equal_nan=True)
    assert "aggregated" in note


def test_aggregate_empty_periods_are_missing_like_pandas():
    stamps, values = _readings(200, "15min")
    keep = np.ones(200, dtype=bool)
    keep[40:90] = False  # more than half a day without readings
    got_stamps, got_values, note = repair.aggregate(stamps[keep].to_numpy(), values[keep], "h", "sum")
    # Reference: pandas resample leaves empty hours NaN with sum(min_count=1).
    reference = _resample(stamps[keep], values[keep], "h", "sum")
    np.testing.assert_array_equal(got_stamps, reference.index.to_numpy(dtype="datetime64[ns]"))
    np.testing.assert_allclose(got_values, reference.to_numpy(), equal_nan=True)
    assert "no observed reading" in note


def test_aggregate_names_short_periods():
    stamps, values = _readings(100, "15min", start="2021-03-05 07:30")
    _, _, note = repair.aggregate(stamps.to_numpy(), values, "D", "sum")
    # The first day starts at 07:30 (66 readings) and the second ends at 08:15 (34): fewer than 96.
    assert "2 period(s) hold fewer" in note and "not comparable" in note


@pytest.mark.parametrize(
    ("text", "expected"),
    [("D:sum", ("D", "sum")), ("h:mean", ("h", "mean")), ("daily:sum", ("D", "sum")), ("W:mean", ("W-MON", "mean")),
     ("monthly:sum", ("MS", "sum")), ("Q:mean", ("QS-JAN", "mean")), ("15min:mean", ("15min", "mean")),
     ("3600:sum", ("h", "sum"))],
)
def test_parse_aggregate(text, expected):
    assert parse_aggregate(text) == expected


@pytest.mark.parametrize("text", ["D", "D:median", "ME:sum", "fortnight:sum", ":sum"])
def test_parse_aggregate_refuses_with_advice(text):
    with pytest.raises(InputError, match="FREQUENCY:sum|aggregate to|frequency"):
        parse_aggregate(text)


# ----------------------------------------------------------------------------- filling
def test_interpolate_in_time_matches_pandas():
    # Unequal spacing (a monthly calendar) makes 'time' differ from 'linear'.
    stamps = pd.date_range("2019-01-01", periods=40, freq="MS")
    values = np.linspace(10.0, 50.0, 40) + np.sin(np.arange(40))
    values[[0, 5, 6, 7, 20, 39]] = np.nan
    got, note = repair.fill_missing(values, "interpolate", stamps.to_numpy())
    # Reference: pandas Series.interpolate(method="time", limit_area="inside").
    reference = pd.Series(values, index=stamps).interpolate(method="time", limit_area="inside").to_numpy()
    np.testing.assert_allclose(got, reference, rtol=1e-12, equal_nan=True)
    assert np.isnan(got[0]) and np.isnan(got[39])
    assert "4 missing value(s) were filled" in note and "2 at the start or end" in note


def test_interpolate_by_position_matches_pandas_linear():
    values = np.array([np.nan, 1.0, np.nan, np.nan, 4.0, 2.0, np.nan, 8.0, np.nan])
    got, _ = repair.fill_missing(values, "interpolate")
    # Reference: pandas Series.interpolate(method="linear", limit_area="inside").
    reference = pd.Series(values).interpolate(method="linear", limit_area="inside").to_numpy()
    np.testing.assert_allclose(got, reference, equal_nan=True)


def test_forward_fill_matches_pandas():
    values = np.array([np.nan, 3.0, np.nan, np.nan, 5.0, np.nan])
    got, note = repair.fill_missing(values, "ffill")
    # Reference: pandas Series.ffill.
    np.testing.assert_array_equal(got, pd.Series(values).ffill().to_numpy())
    assert "1 at the start stay missing" in note


def test_fill_with_value():
    got, note = repair.fill_missing(np.array([1.0, np.nan, 2.0]), "value", fill_value=0.0)
    np.testing.assert_array_equal(got, [1.0, 0.0, 2.0])
    assert "set to 0" in note


# ----------------------------------------------------------------------------- duplicates
@pytest.mark.parametrize("how", ["mean", "sum", "last"])
def test_merge_duplicates_matches_pandas_groupby(how):
    rng = np.random.default_rng(5)
    base = pd.date_range("2022-01-01", periods=30, freq="D").to_numpy()
    picks = np.sort(rng.integers(0, 30, 80))
    stamps = base[picks]
    values = np.round(rng.normal(10, 2, 80), 2)
    values[rng.random(80) < 0.2] = np.nan
    got_stamps, got_values, note = repair.merge_duplicates(stamps, values, how)
    # Reference: pandas groupby(...).mean() / sum(min_count=1) / last() (the last observed value).
    grouped = pd.Series(values).groupby(stamps)
    reference = {"mean": grouped.mean(), "sum": grouped.sum(min_count=1), "last": grouped.last()}[how]
    np.testing.assert_array_equal(got_stamps, reference.index.to_numpy(dtype="datetime64[ns]"))
    np.testing.assert_allclose(got_values, reference.to_numpy(), rtol=1e-12, equal_nan=True)
    assert f"by the {how}" in note


# ----------------------------------------------------------------------------- through the loader
def _write_csv(tmp_path, stamps, values, name="meter.csv", fmt="%Y-%m-%d %H:%M"):
    lines = ["timestamp,flow_ls"] + [f"{t.strftime(fmt)},{'' if np.isnan(v) else repr(float(v))}"
                                     for t, v in zip(stamps, values)]
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_loader_aggregates_quarter_hours_to_daily_totals_like_pandas(tmp_path):
    stamps, values = _readings(96 * 40, "15min", start="2021-06-01 00:00", holes=0.01)
    path = _write_csv(tmp_path, stamps, values)
    series = load_series(path, options=ImportOptions(aggregate="D:sum"))
    # Reference: pandas read_csv + resample("D").sum(min_count=1).
    frame = pd.read_csv(path, parse_dates=["timestamp"], index_col="timestamp")
    reference = frame["flow_ls"].resample("D").sum(min_count=1)
    np.testing.assert_allclose(series.values, reference.to_numpy(), rtol=1e-12)
    np.testing.assert_array_equal(series.times, reference.index.to_numpy(dtype="datetime64[ns]"))
    assert series.frequency == "D"
    notes = " ".join(series.provenance.notes)
    assert "Choice: readings aggregated to daily totals." in notes and "3,840 readings were aggregated" in notes


def test_loader_leaves_gaps_as_missing_like_pandas_asfreq(tmp_path):
    stamps, values = _readings(60, "h", start="2021-02-01 00:00")
    keep = np.ones(60, dtype=bool)
    keep[[10, 11, 30]] = False
    path = _write_csv(tmp_path, stamps[keep], values[keep])
    plain = load_series(path)
    assert plain.frequency is None and len(plain) == 57  # rows kept as read (the plain loader's rule)
    series = load_series(path, options=ImportOptions(gaps="leave"))
    # Reference: pandas Series.asfreq("h") inserts the missing hours as NaN.
    reference = pd.Series(values[keep], index=stamps[keep]).asfreq("h")
    np.testing.assert_array_equal(series.times, reference.index.to_numpy(dtype="datetime64[ns]"))
    np.testing.assert_allclose(series.values, reference.to_numpy(), equal_nan=True)
    assert series.frequency == "h" and series.provenance.rows_used == 57
    assert any("3 missing period(s) were inserted" in n for n in series.provenance.notes)


def test_loader_interpolates_gaps_like_pandas(tmp_path):
    stamps, values = _readings(60, "D", start="2021-02-01")
    keep = np.ones(60, dtype=bool)
    keep[[10, 11, 30]] = False
    values[45] = np.nan  # an empty cell is filled the same way
    path = _write_csv(tmp_path, stamps[keep], values[keep], fmt="%Y-%m-%d")
    series = load_series(path, options=ImportOptions(gaps="interpolate"))
    # Reference: pandas asfreq + interpolate(method="time", limit_area="inside").
    reference = pd.Series(values[keep], index=stamps[keep]).asfreq("D").interpolate(method="time",
                                                                                   limit_area="inside")
    np.testing.assert_allclose(series.values, reference.to_numpy(), rtol=1e-12)
    assert series.frequency == "D"
    assert any("Choice: missing periods and values filled by linear interpolation" in n
               for n in series.provenance.notes)


@pytest.mark.parametrize("how", ["mean", "sum", "last"])
def test_loader_merges_repeated_stamps_like_pandas(tmp_path, how):
    stamps, values = _readings(40, "D", start="2021-02-01")
    rows = list(zip(stamps, values)) + [(stamps[3], 100.0), (stamps[3], 50.0), (stamps[17], 7.5)]
    path = _write_csv(tmp_path, [r[0] for r in rows], np.array([r[1] for r in rows]), fmt="%Y-%m-%d")
    with pytest.raises(InputError, match="--duplicates"):
        load_series(path)
    series = load_series(path, options=ImportOptions(duplicates=how))
    # Reference: pandas read_csv + groupby(timestamp) mean / sum / last.
    frame = pd.read_csv(path, parse_dates=["timestamp"])
    grouped = frame.groupby("timestamp")["flow_ls"]
    reference = {"mean": grouped.mean(), "sum": grouped.sum(min_count=1), "last": grouped.last()}[how]
    np.testing.assert_allclose(series.values, reference.to_numpy(), rtol=1e-12)
    assert series.frequency == "D" and series.provenance.rows_used == 40
    assert any(f"merged into one value by the {how}" in n for n in series.provenance.notes)


def test_non_numeric_cells_read_as_missing_when_chosen(tmp_path):
    stamps, values = _readings(30, "D", start="2021-02-01")
    path = _write_csv(tmp_path, stamps, values, fmt="%Y-%m-%d")
    text = path.read_text().splitlines()
    text[5] = text[5].split(",")[0] + ",pump fault"
    path.write_text("\n".join(text) + "\n")
    with pytest.raises(InputError, match=r"data row 5 \(line 6 of the file\): 'pump fault'"):
        load_series(path)
    series = load_series(path, options=ImportOptions(non_numeric="missing"))
    assert np.isnan(series.values[4]) and np.isfinite(np.delete(series.values, 4)).all()
    assert any("'pump fault'" in n and "read as missing" in n for n in series.provenance.notes)


def test_frequency_override_checks_the_calendar(tmp_path):
    stamps, values = _readings(50, "h", start="2021-02-01 00:00")
    path = _write_csv(tmp_path, stamps, values)
    with pytest.raises(InputError, match=r"do not fall on the daily calendar.*--aggregate"):
        load_series(path, options=ImportOptions(frequency="D"))
    series = load_series(path, options=ImportOptions(frequency="3600"))  # a number of seconds
    assert series.frequency == "h"
    assert any("Choice: frequency set to hourly." in n for n in series.provenance.notes)


def test_aggregation_needs_a_time_column(tmp_path):
    path = tmp_path / "plain.txt"
    path.write_text("\n".join(str(v) for v in np.arange(30.0) % 7) + "\n")
    with pytest.raises(InputError, match="needs time stamps"):
        load_series(path, options=ImportOptions(aggregate="D:sum"))


# ----------------------------------------------------------------------------- the options value
def test_options_round_trip_through_json():
    options = ImportOptions(decimal=",", thousands=".", delimiter="semicolon", sheet="Data", time="Zeit",
                            value=3, timezone="UTC", gaps="value:0", duplicates="sum", non_numeric="missing",
                            aggregate="daily:sum", frequency="daily")
    payload = json.loads(json.dumps(options.to_dict()))
    assert ImportOptions.from_dict(payload) == options
    assert options.delimiter == ";" and options.aggregate == "D:sum" and options.fill_value == 0.0
    assert ImportOptions.from_dict(None) == ImportOptions() == ImportOptions.from_dict({})


@pytest.mark.parametrize(
    ("changes", "message"),
    [({"decimal": ";"}, "decimal mark"), ({"decimal": ",", "thousands": ","}, "both"),
     ({"gaps": "smooth"}, "leave, interpolate"), ({"gaps": "value"}, "finite number"),
     ({"duplicates": "first"}, "refuse, mean, sum or last"), ({"delimiter": "ab"}, "delimiter"),
     ({"frequency": "fortnightly"}, "not a frequency"), ({"timezone": "CET"}, "utc"),
     ({"non_numeric": "drop"}, "missing")],
)
def test_options_refuse_bad_choices_with_advice(changes, message):
    with pytest.raises(InputError, match=message):
        ImportOptions(**changes)


def test_from_dict_refuses_unknown_keys():
    with pytest.raises(InputError, match="unknown entries.*newer"):
        ImportOptions.from_dict({"decimal": ",", "smoothing": 3})
