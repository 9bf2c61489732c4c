"""Hostile files with every import option: a clear error or a correct load, never a crash.

Property-based (hypothesis): truncated rows, mixed types, absurd dates, huge
numbers, grouped numbers in the wrong locale, time-zone offsets, empty
sheets, damaged Parquet and binary garbage, read by the loader, by
``inspect_table`` and by ``lagwright fit`` with random import options. A
"correct load" is checked against the Series invariants (enough finite
observations, strictly increasing stamps) — the project's own rules.
"""

from __future__ import annotations

import datetime
import io
import string

import numpy as np
import openpyxl
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lagwright.app.cli import main
from lagwright.core.errors import LagwrightError
from lagwright.core.import_options import ImportOptions
from lagwright.core.inspection import inspect_table
from lagwright.core.loader import PastedText, load_series
from lagwright.core.series import MIN_OBSERVATIONS

_CELLS = st.one_of(
    st.sampled_from(
        ["", "NaN", "NA", "x", "inf", "1e308", "-1e308", "1e400", "99999999999999999999999", "1,5", "1.234,5",
         "1 234,5", "1'234.5", "1,234.5", "12.345.678", ",5", "-0", "2021-02-30", "0000-00-00", "9999-12-31",
         "1677-01-01", "31.12.1600", "2021-01-01T00:00+05:00", "2021-03-28T02:30+01:00", "2021-01-01 25:00",
         '"', '"a;b"', "Jan 2021", "2021Q1", "TRUE", "#N/A", "\t", ";", "|", "\u00a0", "1\u202f234,5"]
    ),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-(10**25), 10**25).map(str),
    st.datetimes(min_value=datetime.datetime(1, 1, 1)).map(str),
    st.text(alphabet=string.printable, max_size=6),
)

_OPTIONS = st.fixed_dictionaries(dict(
    decimal=st.sampled_from([None, ".", ","]),
    thousands=st.sampled_from([None, "", ",", ".", " ", "'"]),
    delimiter=st.sampled_from([None, None, ",", ";", "\t", "|", " "]),
    timezone=st.sampled_from([None, "utc", "local"]),
    gaps=st.sampled_from([None, "leave", "interpolate", "ffill", "value:0"]),
    duplicates=st.sampled_from(["refuse", "mean", "sum", "last"]),
    non_numeric=st.sampled_from(["refuse", "missing"]),
    aggregate=st.sampled_from([None, None, "h:mean", "D:sum", "W:mean", "MS:sum"]),
    frequency=st.sampled_from([None, None, "D", "h", "10min", "MS", "W"]),
)).filter(lambda o: not (o["decimal"] and o["thousands"] and o["decimal"] == o["thousands"])).map(
    lambda o: ImportOptions(**o))


@st.composite
def _tables(draw) -> bytes:
    n = draw(st.integers(0, 40))
    freq = draw(st.sampled_from(["D", "h", "MS", "10min", "W-MON", "15min"]))
    fmt = draw(st.sampled_from(["%Y-%m-%d", "%d.%m.%Y", "%m/%d/%Y", "%Y-%m-%d %H:%M", "%Y-%m-%dT%H:%M%z"]))
    start = pd.Timestamp("2020-03-27", tz=draw(st.sampled_from([None, "Europe/Berlin"])))
    stamps = [t.strftime(fmt) for t in pd.date_range(start, periods=n, freq=freq)]
    values = draw(st.lists(st.one_of(st.floats(-1e6, 1e6), st.just(float("nan"))), min_size=n, max_size=n))
    style = draw(st.sampled_from(["plain", "comma", "grouped"]))
    cells = [repr(v) if style == "plain" else f"{v:,.2f}".replace(",", "X").replace(".", ",").replace("X", ".")
             if style == "grouped" else repr(v).replace(".", ",") for v in values]
    rows = [[s, c] for s, c in zip(stamps, cells)]
    for _ in range(draw(st.integers(0, 4))):
        if rows:
            rows[draw(st.integers(0, n - 1))][draw(st.integers(0, 1))] = draw(_CELLS)
    if draw(st.booleans()) and rows:
        rows = draw(st.permutations(rows))
    if draw(st.booleans()) and rows:
        rows.append(list(rows[draw(st.integers(0, n - 1))]))
    sep = draw(st.sampled_from([",", ";", "\t", "|"]))
    header = draw(st.sampled_from(["date{s}value", "time{s}value{s}extra", "", "value"])).format(s=sep)
    text = "\n".join(([header] if header else []) + [sep.join(r) for r in rows])
    if draw(st.booleans()):
        text = text[: draw(st.integers(0, len(text)))]  # truncated mid-row
    return text.encode(draw(st.sampled_from(["utf-8", "utf-8-sig", "latin-1", "utf-16"])), "replace")


_BYTES = st.one_of(st.binary(max_size=300), _tables(), st.just(b"PAR1" + bytes(40) + b"PAR1"))


def _check_series(series) -> None:
    observed = series.values[~np.isnan(series.values)]
    assert observed.size >= MIN_OBSERVATIONS and np.all(np.isfinite(observed))
    if series.times is not None:
        stamps = series.times.view("int64")
        assert stamps.size == series.values.size and np.all(stamps[1:] > stamps[:-1])


@pytest.fixture(scope="module")
def scratch(tmp_path_factory):
    return tmp_path_factory.mktemp("hostile_import")


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(content=_BYTES, suffix=st.sampled_from([".csv", ".txt", ".parquet", ".dat"]), options=_OPTIONS)
def test_loader_with_options_loads_or_refuses(scratch, content, suffix, options):
    path = scratch / f"hostile{suffix}"
    path.write_bytes(content)
    try:
        series = load_series(path, options=options)
    except LagwrightError:
        pass
    else:
        _check_series(series)
    report = inspect_table(path, options, transform="log")  # never raises for bad data
    assert (report.series is None) == (report.problem is not None)
    assert all(isinstance(line, str) and line for line in report.lines())


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(text=st.text(max_size=400), options=_OPTIONS)
def test_pasted_text_loads_or_refuses(text, options):
    try:
        _check_series(load_series(PastedText(text), options=options))
    except LagwrightError:
        pass


_XLSX_CELLS = st.one_of(
    st.none(), st.floats(allow_nan=False, allow_infinity=False), st.integers(-(10**15), 10**15), st.booleans(),
    st.datetimes(min_value=datetime.datetime(1900, 3, 1), max_value=datetime.datetime(2200, 1, 1)),
    st.text(alphabet=string.ascii_letters + string.digits + " -/.:,", max_size=12),
    st.sampled_from(["1.234,5", "2021-01-01", "1e400", "=1/0", "#N/A"]),
)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(rows=st.lists(st.lists(_XLSX_CELLS, min_size=1, max_size=3), max_size=25),
       base=st.sampled_from(["none", "dates", "serials"]), empty_sheet=st.booleans(), options=_OPTIONS)
def test_workbook_with_options_loads_or_refuses(scratch, rows, base, empty_sheet, options):
    book = openpyxl.Workbook()
    ws = book.active
    ws.title = "Data"
    if base != "none":
        ws.append(["date", "value"])
        for i in range(20):
            day = datetime.datetime(2021, 1, 1) + datetime.timedelta(days=i)
            ws.append([day if base == "dates" else 44197 + i, float(i % 5)])
    for row in rows:
        ws.append(row)
    if empty_sheet:
        book.create_sheet("Empty", 0)
    path = scratch / "hostile.xlsx"
    book.save(path)
    try:
        _check_series(load_series(path, options=options.replace(delimiter=None)))
    except LagwrightError:
        pass


_CLI_OPTIONS = st.lists(
    st.sampled_from([["--decimal", ","], ["--decimal", "."], ["--decimal", ";"], ["--thousands", "."],
                     ["--thousands", "space"], ["--delimiter", ";"], ["--delimiter", "tab"],
                     ["--delimiter", "xx"], ["--gaps", "interpolate"], ["--gaps", "value:0"], ["--gaps", "smooth"],
                     ["--duplicates", "mean"], ["--duplicates", "first"], ["--aggregate", "D:sum"],
                     ["--aggregate", "h:mean"], ["--aggregate", "D"], ["--frequency", "D"], ["--frequency", "900"],
                     ["--frequency", "fortnight"], ["--timezone", "utc"], ["--non-numeric", "missing"],
                     ["--time", "date"], ["--value", "value"], ["--sheet", "0"]]),
    max_size=4,
).map(lambda parts: [a for part in parts for a in part])


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(content=_BYTES, argv=_CLI_OPTIONS)
def test_cli_with_import_options_never_crashes(scratch, content, argv):
    from contextlib import redirect_stderr, redirect_stdout

    path = scratch / "hostile_cli.csv"
    path.write_bytes(content)
    out_buffer, err_buffer = io.StringIO(), io.StringIO()
    with redirect_stdout(out_buffer), redirect_stderr(err_buffer):
        code = main(["fit", str(path), "--preview", *argv])
    err = err_buffer.getvalue()
    assert code in (0, 1, 2), err
    assert "internal error" not in err and "Traceback" not in err
    if code:
        assert err.startswith("lagwright: ") and err.count("\n") == 1, err


def test_cli_loads_with_import_options(tmp_path, capsys):
    stamps = pd.date_range("2021-01-01", periods=96 * 30, freq="15min")
    values = 20 + 5 * np.sin(np.arange(stamps.size) / 14.0) + np.random.default_rng(8).normal(0, 1, stamps.size)
    lines = ["Zeit;Last"] + [f"{t:%d.%m.%Y %H:%M};" + f"{v:.3f}".replace(".", ",") for t, v in zip(stamps, values)]
    lines[100] = lines[99]  # a repeated stamp
    path = tmp_path / "last.csv"
    path.write_text("\n".join(lines) + "\n")
    code = main(["fit", str(path), "--json", "--preview", "--decimal", ",", "--delimiter", ";",
                 "--duplicates", "mean", "--aggregate", "D:sum", "--gaps", "interpolate", "--frequency", "D"])
    out, err = capsys.readouterr()
    assert code == 0, err
    import json

    payload = json.loads(out)
    assert payload["nobs"] == 30
    # Reference: pandas read_csv + groupby mean + resample("D").sum on the same file.
    frame = pd.read_csv(path, sep=";", decimal=",")
    frame["Zeit"] = pd.to_datetime(frame["Zeit"], format="%d.%m.%Y %H:%M")
    daily = frame.groupby("Zeit")["Last"].mean().resample("D").sum(min_count=1)
    from lagwright.app.cli import load_input

    series = load_input(str(path), options=ImportOptions(decimal=",", delimiter=";", duplicates="mean",
                                                         aggregate="D:sum", gaps="interpolate"))
    np.testing.assert_allclose(series.values, daily.to_numpy(), rtol=1e-12)


def test_cli_bad_option_is_one_line(capsys):
    code = main(["fit", "sample:water_demand", "--aggregate", "fortnight:sum"])
    _, err = capsys.readouterr()
    assert code == 2 and err.count("\n") == 1 and "aggregate" in err


def test_cli_sample_with_aggregation(capsys):
    code = main(["fit", "sample:water_demand", "--preview", "--json", "--aggregate", "W:mean"])
    out, err = capsys.readouterr()
    assert code == 0, err
    import json

    assert json.loads(out)["nobs"] < 200  # about 1,100 days become about 157 weeks


def test_excel_serial_io_round_trip_pandas(scratch):
    # pandas writes datetimes as real Excel dates; the loader reads them back exactly.
    frame = pd.DataFrame({"date": pd.date_range("2021-01-01", periods=30, freq="h"), "value": np.arange(30.0) % 7})
    buffer = io.BytesIO()
    frame.to_excel(buffer, index=False)
    path = scratch / "round.xlsx"
    path.write_bytes(buffer.getvalue())
    series = load_series(path)
    # Reference: the frame written (pandas.to_excel / read_excel round trip).
    np.testing.assert_array_equal(series.times, frame["date"].to_numpy(dtype="datetime64[ns]"))
