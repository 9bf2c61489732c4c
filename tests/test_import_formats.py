"""Each file format and quirk of issue 5, written as a small fixture file, read against pandas' own readers.

References: ``pandas.read_csv`` (with ``sep``, ``decimal``, ``thousands``,
``quotechar``), ``pandas.read_excel``, ``pandas.read_parquet`` and
``pandas.to_datetime`` (pandas documentation, pandas.pydata.org); the Excel
date systems (day 0 = 1899-12-30 in the 1900 system, 1904-01-01 in the 1904
system) from the ECMA-376 Office Open XML standard, Part 1 (SpreadsheetML dates; recalled from memory,
and matching what openpyxl writes). Each check names its reference beside it.
"""

from __future__ import annotations

import io

import numpy as np
import openpyxl
import pandas as pd
import pytest

from lagwright.core import parquet
from lagwright.core.errors import InputError
from lagwright.core.frequency import describe, parse_frequency
from lagwright.core.import_options import ImportOptions
from lagwright.core.loader import PastedText, load_series, parse_pasted
from lagwright.core.numbers import NumberFormat, detect_format

N = 30


def _values(n: int = N, seed: int = 3) -> np.ndarray:
    return np.round(np.random.default_rng(seed).uniform(500.0, 250_000.0, n), 2)


def _days(n: int = N):
    return pd.date_range("2023-01-02", periods=n, freq="D")


def _write(tmp_path, name: str, text: str, encoding: str = "utf-8"):
    path = tmp_path / name
    path.write_bytes(text.encode(encoding))
    return path


def _fmt(value: float, thousands: str, decimal: str) -> str:
    whole, frac = f"{value:,.2f}".split(".")
    return whole.replace(",", thousands) + decimal + frac


# ----------------------------------------------------------------------------- delimiters and numbers
@pytest.mark.parametrize(("sep", "name"), [(",", "c.csv"), (";", "s.csv"), ("\t", "t.tsv"), ("|", "b.txt")])
def test_delimiters_match_read_csv(tmp_path, sep, name):
    values = _values()
    text = f"day{sep}sales\n" + "".join(f"{d:%Y-%m-%d}{sep}{v}\n" for d, v in zip(_days(), values))
    path = _write(tmp_path, name, text)
    series = load_series(path)
    # Reference: pandas.read_csv with the same separator.
    reference = pd.read_csv(path, sep=sep)
    np.testing.assert_array_equal(series.values, reference["sales"].to_numpy())


def test_space_delimiter_when_chosen(tmp_path):
    values = _values()
    text = "day  sales\n" + "".join(f"{d:%Y-%m-%d}   {v}\n" for d, v in zip(_days(), values))
    path = _write(tmp_path, "spaced.txt", text)
    series = load_series(path, options=ImportOptions(delimiter="space"))
    # Reference: pandas.read_csv with sep=r"\s+".
    np.testing.assert_array_equal(series.values, pd.read_csv(path, sep=r"\s+")["sales"].to_numpy())


@pytest.mark.parametrize(
    ("sep", "thousands", "decimal", "options"),
    [(",", ",", ".", {}),  # "1,234.5" quoted in a comma file
     (";", ".", ",", {}),  # "1.234,5"
     (";", " ", ",", {}),  # "1 234,5"
     (",", "'", ".", {}),  # "1'234.5"
     (";", ".", ",", {"decimal": ",", "thousands": "."}),  # the same, chosen
     ("\t", ",", ".", {"thousands": ","})],
)
def test_thousands_separators_match_read_csv(tmp_path, sep, thousands, decimal, options):
    values = _values()
    quote = '"' if thousands == sep or decimal == sep else ""
    text = f"day{sep}sales\n" + "".join(
        f"{d:%Y-%m-%d}{sep}{quote}{_fmt(v, thousands, decimal)}{quote}\n" for d, v in zip(_days(), values))
    path = _write(tmp_path, "grouped.csv", text)
    series = load_series(path, options=ImportOptions(**options))
    # Reference: pandas.read_csv told the separator, decimal mark and thousands separator.
    reference = pd.read_csv(path, sep=sep, thousands=thousands, decimal=decimal)["sales"].to_numpy()
    np.testing.assert_allclose(series.values, reference, rtol=0, atol=1e-9)
    np.testing.assert_allclose(series.values, values, rtol=0, atol=1e-9)


def test_decimal_comma_in_a_quoted_comma_file(tmp_path):
    values = np.round(_values() / 1000, 3)
    text = "day,sales\n" + "".join(f'{d:%Y-%m-%d},"{str(v).replace(".", ",")}"\n' for d, v in zip(_days(), values))
    series = load_series(_write(tmp_path, "q.csv", text))
    # Reference: pandas.read_csv with decimal=",".
    reference = pd.read_csv(io.StringIO(text), decimal=",")["sales"].to_numpy()
    np.testing.assert_array_equal(series.values, reference)
    assert any("decimal comma" in n for n in series.provenance.notes)


def test_chosen_thousands_point_refuses_a_plain_decimal(tmp_path):
    # With a point between thousands, "4.5" is not a number: it is named, never read as 45.
    text = "day;sales\n" + "".join(f"{d:%Y-%m-%d};{_fmt(v, '.', ',')}\n" for d, v in zip(_days(), _values()))
    lines = text.splitlines()
    lines[7] = "2023-01-08;4.5"
    path = _write(tmp_path, "strict.csv", "\n".join(lines) + "\n")
    with pytest.raises(InputError, match=r"data row 7 \(line 8 of the file\): '4\.5'.*--decimal"):
        load_series(path, options=ImportOptions(decimal=",", thousands="."))


def test_ambiguous_thousands_comma_is_noted():
    fmt, note = detect_format(["1,234", "2,500", "17,250"], delimiter=";")
    assert fmt == NumberFormat(",", "") and "could use a decimal comma or a thousands comma" in note
    fmt, note = detect_format(["1,234", "2,500"], delimiter=",")
    assert fmt == NumberFormat(".", ",") and note
    fmt, note = detect_format(["1,234", "2,5"], delimiter=",")
    assert fmt == NumberFormat(",", "") and note is None  # "2,5" settles it


def test_quoted_fields_with_delimiters_and_quotes_inside(tmp_path):
    values = _values()
    text = 'day,site,sales\n' + "".join(
        f'{d:%Y-%m-%d},"Pump ""A"", north, {k}",{v}\n' for k, (d, v) in enumerate(zip(_days(), values)))
    path = _write(tmp_path, "quoted.csv", text)
    series = load_series(path)
    # Reference: pandas.read_csv (RFC 4180 quoting, doubled quotes).
    reference = pd.read_csv(path)
    np.testing.assert_array_equal(series.values, reference["sales"].to_numpy())
    assert reference["site"].iloc[0] == 'Pump "A", north, 0'


@pytest.mark.parametrize("encoding", ["utf-8-sig", "latin-1", "utf-8"])
def test_encodings_with_decimal_commas(tmp_path, encoding):
    values = np.round(_values() / 100, 2)
    text = "Datum;Menge (m³)\n" + "".join(f"{d:%d.%m.%Y};{str(v).replace('.', ',')}\n"
                                          for d, v in zip(_days(), values))
    path = _write(tmp_path, "eu.csv", text, encoding=encoding)
    series = load_series(path)
    # Reference: pandas.read_csv with the file's encoding and decimal=",".
    reference = pd.read_csv(path, sep=";", decimal=",", encoding=encoding)
    np.testing.assert_array_equal(series.values, reference.iloc[:, 1].to_numpy())
    assert series.name == "Menge (m³)"
    np.testing.assert_array_equal(series.times, _days().to_numpy(dtype="datetime64[ns]"))


# ----------------------------------------------------------------------------- time zones and index
def _dst_text() -> tuple[str, pd.DatetimeIndex]:
    # Hourly readings across the end of summer time in central Europe (2023-10-29): +02:00 then +01:00.
    utc = pd.date_range("2023-10-28 20:00", periods=30, freq="h", tz="UTC")
    local = utc.tz_convert("Europe/Berlin")
    lines = ["time,load"] + [f"{t.isoformat()},{100 + k}" for k, t in enumerate(local)]
    return "\n".join(lines) + "\n", utc


def test_mixed_offsets_converted_to_utc(tmp_path):
    text, utc = _dst_text()
    series = load_series(_write(tmp_path, "dst.csv", text), options=ImportOptions(timezone="utc"))
    # Reference: pandas.to_datetime(utc=True) of the same stamps, made naive.
    reference = pd.to_datetime(pd.read_csv(io.StringIO(text))["time"], utc=True).dt.tz_convert(None)
    np.testing.assert_array_equal(series.times, reference.to_numpy(dtype="datetime64[ns]"))
    assert series.frequency == "h"
    assert any("converted to UTC" in n for n in series.provenance.notes)


def test_mixed_offsets_kept_local_show_the_repeated_hour(tmp_path):
    text, _ = _dst_text()
    path = _write(tmp_path, "dst.csv", text)
    with pytest.raises(InputError, match="repeats 1 time stamp"):
        load_series(path, options=ImportOptions(timezone="local"))
    series = load_series(path, options=ImportOptions(timezone="local", duplicates="mean"))
    # Reference: the local clock times are the stamps with their offsets cut off.
    local = pd.to_datetime(pd.read_csv(io.StringIO(text))["time"].str[:19]).drop_duplicates()
    np.testing.assert_array_equal(series.times, local.to_numpy(dtype="datetime64[ns]"))
    assert any("local clock times were kept" in n for n in series.provenance.notes)


def test_plain_index_when_no_time_column(tmp_path):
    text = "reading\n" + "".join(f"{v}\n" for v in _values())
    series = load_series(_write(tmp_path, "plain.csv", text), options=ImportOptions(frequency="D"))
    assert series.times is None and series.frequency == "D"


# ----------------------------------------------------------------------------- workbooks
def test_workbook_real_dates_and_serial_numbers(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Meter"
    sheet.append(["Date", "Reading", "Stamp as number"])
    days = _days()
    values = _values()
    for d, v in zip(days, values):
        serial = (d - pd.Timestamp("1899-12-30")).days + 0.25  # 06:00 as a day fraction
        sheet.append([d.to_pydatetime(), float(v), serial])
    other = book.create_sheet("Serials")
    other.append(["date", "reading"])
    for d, v in zip(days, values):
        other.append([(d - pd.Timestamp("1899-12-30")).days, float(v)])
    path = tmp_path / "meter.xlsx"
    book.save(path)
    series = load_series(path)
    # Reference: pandas.read_excel of the same sheet.
    reference = pd.read_excel(path, sheet_name="Meter")
    np.testing.assert_array_equal(series.times, reference["Date"].to_numpy(dtype="datetime64[ns]"))
    serial = load_series(path, sheet="Serials")
    # Reference: pandas.to_datetime(unit="D", origin="1899-12-30") (ECMA-376 1900 date system).
    expected = pd.to_datetime(pd.read_excel(path, sheet_name="Serials")["date"], unit="D", origin="1899-12-30")
    np.testing.assert_array_equal(serial.times, expected.to_numpy(dtype="datetime64[ns]"))
    assert serial.frequency == "D" and any("Excel serial dates" in n for n in serial.provenance.notes)
    timed = load_series(path, time="Stamp as number", value="Reading")
    np.testing.assert_array_equal(timed.times, (days + pd.Timedelta(hours=6)).to_numpy(dtype="datetime64[ns]"))


def test_workbook_1904_date_system(tmp_path):
    from openpyxl.utils.datetime import CALENDAR_MAC_1904

    book = openpyxl.Workbook()
    book.epoch = CALENDAR_MAC_1904
    sheet = book.active
    sheet.append(["date", "reading"])
    serials = np.arange(40000, 40000 + N)
    for s, v in zip(serials, _values()):
        sheet.append([int(s), float(v)])
    path = tmp_path / "mac.xlsx"
    book.save(path)
    series = load_series(path)
    # Reference: pandas.to_datetime(unit="D", origin="1904-01-01") (ECMA-376 1904 date system).
    expected = pd.to_datetime(serials, unit="D", origin="1904-01-01")
    np.testing.assert_array_equal(series.times, expected.to_numpy(dtype="datetime64[ns]"))


def test_workbook_text_cells_with_decimal_commas(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["Datum", "Wert"])
    values = _values()
    for d, v in zip(_days(), values):
        sheet.append([d.to_pydatetime(), _fmt(v, ".", ",")])  # numbers typed as text
    path = tmp_path / "text_numbers.xlsx"
    book.save(path)
    series = load_series(path)
    np.testing.assert_allclose(series.values, values, rtol=0, atol=1e-9)


def test_workbook_empty_chosen_sheet(tmp_path):
    book = openpyxl.Workbook()
    book.active.title = "Data"
    book.active.append(["date", "value"])
    book.create_sheet("Blank")
    path = tmp_path / "blank.xlsx"
    book.save(path)
    with pytest.raises(InputError, match="The sheet 'Blank' of 'blank.xlsx' is empty.*'Data', 'Blank'"):
        load_series(path, options=ImportOptions(sheet="Blank"))


# ----------------------------------------------------------------------------- parquet
def _frame():
    return pd.DataFrame({"when": _days(), "demand": _values(), "site": ["north"] * N})


def test_parquet_matches_read_parquet(tmp_path):
    path = tmp_path / "demand.parquet"
    _frame().to_parquet(path, engine="pyarrow", index=False)
    series = load_series(path)
    # Reference: pandas.read_parquet of the same file.
    reference = pd.read_parquet(path)
    np.testing.assert_array_equal(series.values, reference["demand"].to_numpy())
    np.testing.assert_array_equal(series.times, reference["when"].to_numpy(dtype="datetime64[ns]"))
    assert series.frequency == "D"


def test_parquet_time_index_and_time_zone(tmp_path):
    frame = _frame().set_index("when")
    frame.index = frame.index.tz_localize("Europe/Berlin")
    path = tmp_path / "indexed.pq"
    frame.to_parquet(path, engine="pyarrow")
    local = load_series(path)
    np.testing.assert_array_equal(local.times, _days().to_numpy(dtype="datetime64[ns]"))
    utc = load_series(path, options=ImportOptions(timezone="utc"))
    # Reference: pandas tz_convert(None) of the stored index.
    expected = pd.read_parquet(path).index.tz_convert(None)
    np.testing.assert_array_equal(utc.times, expected.to_numpy(dtype="datetime64[ns]"))
    assert any("Europe/Berlin" in n and "UTC" in n for n in utc.provenance.notes)


def test_parquet_without_pyarrow_says_how_to_install(tmp_path, monkeypatch):
    path = tmp_path / "demand.parquet"
    _frame().to_parquet(path, engine="pyarrow", index=False)
    monkeypatch.setattr(parquet, "pyarrow_available", lambda: False)
    with pytest.raises(InputError, match=r"pip install pyarrow"):
        load_series(path)


def test_truncated_parquet(tmp_path):
    path = tmp_path / "cut.parquet"
    _frame().to_parquet(path, engine="pyarrow", index=False)
    path.write_bytes(path.read_bytes()[:200])
    with pytest.raises(InputError, match="cut.parquet.*truncated"):
        load_series(path)


# ----------------------------------------------------------------------------- pasted text
def test_pasted_spreadsheet_cells(tmp_path):
    values = np.round(_values() / 10, 1)
    # A spreadsheet in a decimal-comma locale copies cells as tab-separated lines.
    text = "Tag\tAbsatz\r\n" + "".join(f"{d:%d.%m.%Y}\t{_fmt(v, '.', ',')}\r\n" for d, v in zip(_days(), values))
    series = parse_pasted(text)
    # Reference: pandas.read_csv of the same text with sep="\t", decimal=",", thousands=".".
    reference = pd.read_csv(io.StringIO(text), sep="\t", decimal=",", thousands=".")
    np.testing.assert_allclose(series.values, reference["Absatz"].to_numpy(), rtol=0, atol=1e-9)
    assert series.provenance.source == "pasted text" and len(series.provenance.sha256) == 64
    with pytest.raises(InputError, match="pasted text is empty"):
        load_series(PastedText("  \n"))


def test_pasted_error_names_the_line_of_the_pasted_text():
    text = "day\tvalue\n" + "".join(f"2023-01-{k:02d}\t{k}.5\n" for k in range(1, 25))
    text = text.replace("2023-01-05\t5.5", "2023-01-05\tn.v.")
    with pytest.raises(InputError, match=r"data row 5 \(line 6 of the pasted text\): 'n\.v\.'"):
        parse_pasted(text)


# ----------------------------------------------------------------------------- frequencies
@pytest.mark.parametrize(
    ("text", "alias", "words"),
    [("h", "h", "hourly"), ("daily", "D", "daily"), ("W", "W", "weekly"), ("MS", "MS", "monthly"),
     ("QS", "QS-JAN", "quarterly"), ("yearly", "Y", "yearly"), ("900", "15min", "every 15 minutes"),
     ("90", "90s", "every 90 seconds"), ("2.5", "2500ms", "every 2.5 seconds"), ("6h", "6h", "every 6 hours")],
)
def test_frequency_words_and_seconds(text, alias, words):
    # Aliases are pandas offset aliases (pandas documentation, "Offset aliases").
    assert parse_frequency(text) == alias
    assert describe(alias) == words


def test_progress_reports_rise_to_one(tmp_path):
    n = 450_000  # three chunks of rows
    stamps = np.datetime_as_string(np.datetime64("2020-01-01T00:00") + np.arange(n).astype("timedelta64[m]"))
    text = "t,v\n" + "\n".join(np.char.add(np.char.add(stamps, ","), (np.arange(n) % 97).astype(str))) + "\n"
    path = _write(tmp_path, "big.csv", text)
    seen: list[float] = []
    series = load_series(path, progress=seen.append)
    assert len(series) == n
    assert len(seen) >= 4 and seen[-1] == 1.0 and all(b >= a for a, b in zip(seen, seen[1:]))
    assert 0.0 < seen[0] < 0.5  # the first report comes while reading
