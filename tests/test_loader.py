"""Tests of lagwright.core.loader.load_series.

Files are written to pytest's ``tmp_path``. Where a number or a date is
checked, the reference is an outside reader: ``pandas.read_csv``,
``pandas.read_excel`` and ``pandas.infer_freq`` (pandas documentation), and
``hashlib.sha256`` for the file fingerprint. Expectations about messages are
the project's own rules (a message names the file, the column, the rows and
what to do).
"""

from __future__ import annotations

import datetime
import hashlib
import io
import os
import string
import time
import warnings

import numpy as np
import openpyxl
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lagwright.core.errors import InputError, LagwrightError
from lagwright.core.loader import load_series
from lagwright.core.series import MIN_OBSERVATIONS

N = 40


def _frame(n: int = N, freq: str = "D", start: str = "2021-01-01") -> pd.DataFrame:
    rng = np.random.default_rng(12345)
    return pd.DataFrame(
        {
            "date": pd.date_range(start, periods=n, freq=freq),
            "demand_ML": np.round(4.5 + rng.normal(0.0, 0.3, n), 3),
        }
    )


def _csv_text(frame: pd.DataFrame, sep: str = ",", time_format: str = "%Y-%m-%d") -> str:
    lines = [sep.join(frame.columns)]
    for stamp, value in zip(frame.iloc[:, 0], frame.iloc[:, 1]):
        lines.append(f"{stamp.strftime(time_format)}{sep}{value!r}")
    return "\n".join(lines) + "\n"


def _infer_freq(stamps) -> str | None:
    """pandas.infer_freq as a string alias (the reference for frequencies).

    pandas 3.1 warns that infer_freq will return an offset object; that
    deprecation notice is the one warning silenced here.
    """
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message="A future version of pandas will return a BaseOffset")
        found = pd.infer_freq(pd.DatetimeIndex(stamps))
    return None if found is None else str(getattr(found, "freqstr", found))


def _write(tmp_path, name: str, content, encoding: str = "utf-8"):
    path = tmp_path / name
    path.write_bytes(content if isinstance(content, bytes) else content.encode(encoding))
    return path


# ----------------------------------------------------------------------------- text tables
class TestDelimitedText:
    def test_comma_csv_matches_pandas_read_csv(self, tmp_path):
        path = _write(tmp_path, "town.csv", _csv_text(_frame()))
        series = load_series(path)
        # Reference: pandas.read_csv with parse_dates on the same file.
        reference = pd.read_csv(path, parse_dates=["date"])
        np.testing.assert_array_equal(series.values, reference["demand_ML"].to_numpy())
        np.testing.assert_array_equal(series.times, reference["date"].to_numpy().astype("datetime64[ns]"))
        assert series.name == "demand_ML"
        # Reference: pandas.infer_freq on the same stamps.
        assert series.frequency == _infer_freq(reference["date"]) == "D"

    def test_provenance(self, tmp_path):
        path = _write(tmp_path, "town.csv", _csv_text(_frame()))
        provenance = load_series(path).provenance
        assert provenance.source == "town.csv"
        # Reference: hashlib.sha256 of the file's bytes.
        assert provenance.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
        assert (provenance.value_column, provenance.time_column) == ("demand_ML", "date")
        assert (provenance.rows_read, provenance.rows_used) == (N, N)
        assert all(isinstance(note, str) and note.endswith((".", ")")) for note in provenance.notes)

    @pytest.mark.parametrize("sep", [";", "\t", "|"])
    def test_other_delimiters_give_the_same_series(self, tmp_path, sep):
        comma = load_series(_write(tmp_path, "comma.csv", _csv_text(_frame())))
        other = load_series(_write(tmp_path, "other.txt", _csv_text(_frame(), sep=sep)))
        np.testing.assert_array_equal(other.values, comma.values)
        np.testing.assert_array_equal(other.times, comma.times)

    def test_tab_separated_file_with_tsv_extension(self, tmp_path):
        path = _write(tmp_path, "town.tsv", _csv_text(_frame(), sep="\t"))
        assert load_series(path).provenance.value_column == "demand_ML"

    def test_utf8_byte_order_mark(self, tmp_path):
        path = _write(tmp_path, "bom.csv", "\ufeff" + _csv_text(_frame()))
        series = load_series(path)
        assert series.provenance.time_column == "date"  # not '\ufeffdate'
        assert len(series) == N

    def test_latin1_header(self, tmp_path):
        text = _csv_text(_frame()).replace("demand_ML", "débit_m³")
        series = load_series(_write(tmp_path, "latin.csv", text, encoding="latin-1"))
        assert series.name == "débit_m³"
        assert any("Latin-1" in note for note in series.provenance.notes)

    def test_utf16_with_byte_order_mark(self, tmp_path):
        path = _write(tmp_path, "wide.csv", _csv_text(_frame()), encoding="utf-16")
        assert len(load_series(path)) == N

    def test_decimal_comma_with_semicolons(self, tmp_path):
        frame = _frame()
        text = "date;demand_ML\n" + "".join(
            f"{d:%Y-%m-%d};{str(v).replace('.', ',')}\n" for d, v in zip(frame["date"], frame["demand_ML"])
        )
        series = load_series(_write(tmp_path, "eu.csv", text))
        # Reference: pandas.read_csv with decimal=",".
        reference = pd.read_csv(io.StringIO(text), sep=";", decimal=",")
        np.testing.assert_allclose(series.values, reference["demand_ML"].to_numpy(), rtol=0, atol=0)
        assert any("decimal comma" in note for note in series.provenance.notes)

    def test_windows_line_endings_and_quoted_header(self, tmp_path):
        text = _csv_text(_frame()).replace("date,demand_ML", '"date","demand_ML"').replace("\n", "\r\n")
        series = load_series(_write(tmp_path, "crlf.csv", text))
        assert series.name == "demand_ML" and len(series) == N

    def test_file_without_header_and_time(self, tmp_path):
        values = _frame()["demand_ML"].to_numpy()
        series = load_series(_write(tmp_path, "plain.txt", "".join(f"{v}\n" for v in values)))
        np.testing.assert_array_equal(series.values, values)
        assert series.times is None and series.frequency is None
        assert series.provenance.time_column == ""

    def test_unknown_extension_is_tried_as_text(self, tmp_path):
        assert len(load_series(_write(tmp_path, "export.dump", _csv_text(_frame())))) == N


# ----------------------------------------------------------------------------- workbooks
def _two_sheet_workbook(tmp_path):
    path = tmp_path / "book.xlsx"
    frame = _frame(30, freq="MS", start="2015-01-01").rename(columns={"date": "month", "demand_ML": "sales_t"})
    with pd.ExcelWriter(path, engine="openpyxl") as writer:
        _frame().to_excel(writer, sheet_name="Daily", index=False)
        frame.to_excel(writer, sheet_name="Monthly", index=False)
    return path


class TestWorkbook:
    def test_first_sheet_by_default_matches_read_excel(self, tmp_path):
        path = _two_sheet_workbook(tmp_path)
        series = load_series(path)
        # Reference: pandas.read_excel of the first sheet.
        reference = pd.read_excel(path, sheet_name=0)
        np.testing.assert_array_equal(series.values, reference["demand_ML"].to_numpy())
        np.testing.assert_array_equal(series.times, reference["date"].to_numpy().astype("datetime64[ns]"))
        assert series.frequency == "D"

    @pytest.mark.parametrize("sheet", ["Monthly", "monthly", 1, "1"])
    def test_sheet_by_name_or_index(self, tmp_path, sheet):
        path = _two_sheet_workbook(tmp_path)
        series = load_series(path, sheet=sheet)
        reference = pd.read_excel(path, sheet_name="Monthly")
        np.testing.assert_array_equal(series.values, reference["sales_t"].to_numpy())
        assert series.frequency == "MS"
        assert series.provenance.time_column == "month"

    def test_unknown_sheet_lists_the_sheets(self, tmp_path):
        with pytest.raises(InputError, match=r"no sheet 'Weekly'.*'Daily', 'Monthly'"):
            load_series(_two_sheet_workbook(tmp_path), sheet="Weekly")

    def test_sheet_index_out_of_range(self, tmp_path):
        with pytest.raises(InputError, match="from 0 .* to 1"):
            load_series(_two_sheet_workbook(tmp_path), sheet=2)

    def test_text_cell_names_the_sheet_row(self, tmp_path):
        book = openpyxl.Workbook()
        sheet = book.active
        sheet["B3"], sheet["C3"] = "date", "flow"  # table starts at row 3, column B
        for i in range(20):
            sheet.cell(row=4 + i, column=2, value=pd.Timestamp("2022-01-01") + pd.Timedelta(days=i))
            sheet.cell(row=4 + i, column=3, value=float(i % 7))
        sheet["C10"] = "pump off"
        path = tmp_path / "offset.xlsx"
        book.save(path)
        with pytest.raises(InputError) as caught:
            load_series(path)
        message = str(caught.value)
        assert "'flow'" in message and "offset.xlsx" in message
        assert "data row 7 (sheet row 10)" in message and "'pump off'" in message

    def test_text_in_first_sheet_hints_at_other_sheets(self, tmp_path):
        path = tmp_path / "notes_first.xlsx"
        with pd.ExcelWriter(path, engine="openpyxl") as writer:
            pd.DataFrame({"remarks": ["draft", "checked"]}).to_excel(writer, sheet_name="About", index=False)
            _frame().to_excel(writer, sheet_name="Data", index=False)
        with pytest.raises(InputError, match="also has 'Data'"):
            load_series(path)
        assert len(load_series(path, sheet="Data")) == N

    def test_not_a_workbook(self, tmp_path):
        with pytest.raises(InputError, match="not one"):
            load_series(_write(tmp_path, "fake.xlsx", "date,value\n"))

    def test_zip_that_is_not_a_workbook(self, tmp_path):
        import zipfile

        path = tmp_path / "archive.xlsx"
        with zipfile.ZipFile(path, "w") as archive:
            archive.writestr("readme.txt", "hello")
        with pytest.raises(InputError, match="could not be opened as an Excel workbook"):
            load_series(path)

    def test_legacy_xls_is_refused_plainly(self, tmp_path):
        path = _write(tmp_path, "old.xls", b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(200))
        with pytest.raises(InputError, match=r"\.xlsx or CSV"):
            load_series(path)

    def test_empty_sheet(self, tmp_path):
        path = tmp_path / "blank.xlsx"
        openpyxl.Workbook().save(path)
        with pytest.raises(InputError, match="is empty"):
            load_series(path)


# ----------------------------------------------------------------------------- columns
class TestColumns:
    def _three_columns(self, tmp_path):
        frame = _frame()
        frame["level_m"] = np.round(np.linspace(2.0, 3.0, N), 3)
        lines = ["date,demand_ML,level_m"] + [
            f"{d:%Y-%m-%d},{v},{w}" for d, v, w in zip(frame["date"], frame["demand_ML"], frame["level_m"])
        ]
        return _write(tmp_path, "three.csv", "\n".join(lines) + "\n"), frame

    def test_ambiguous_value_column_lists_candidates(self, tmp_path):
        path, _ = self._three_columns(tmp_path)
        with pytest.raises(InputError) as caught:
            load_series(path)
        message = str(caught.value)
        assert "'demand_ML'" in message and "'level_m'" in message and "--value NAME" in message

    @pytest.mark.parametrize("value", ["level_m", "LEVEL_M ", 3, "3"])
    def test_explicit_value_column(self, tmp_path, value):
        path, frame = self._three_columns(tmp_path)
        series = load_series(path, value=value)
        np.testing.assert_array_equal(series.values, frame["level_m"].to_numpy())
        assert series.provenance.value_column == "level_m"

    def test_explicit_time_column(self, tmp_path):
        path, _ = self._three_columns(tmp_path)
        assert load_series(path, value="demand_ML", time="date").provenance.time_column == "date"

    def test_unknown_column_lists_available(self, tmp_path):
        path, _ = self._three_columns(tmp_path)
        with pytest.raises(InputError) as caught:
            load_series(path, value="flow")
        message = str(caught.value)
        assert "no column named 'flow'" in message
        assert "'date', 'demand_ML', 'level_m'" in message

    def test_column_number_out_of_range(self, tmp_path):
        path, _ = self._three_columns(tmp_path)
        with pytest.raises(InputError, match="no column number 9"):
            load_series(path, value=9)

    def test_numeric_time_column_refused(self, tmp_path):
        path, _ = self._three_columns(tmp_path)
        with pytest.raises(InputError, match="holds numbers, not dates"):
            load_series(path, value="demand_ML", time="level_m")

    def test_same_column_twice_refused(self, tmp_path):
        path, _ = self._three_columns(tmp_path)
        with pytest.raises(InputError, match="both as the time and as the values"):
            load_series(path, value="date", time="date")

    def test_unnamed_index_column_is_ignored(self, tmp_path):
        # pandas.DataFrame.to_csv writes its 0, 1, 2, ... index under a blank name.
        path = tmp_path / "with_index.csv"
        _frame().to_csv(path)
        series = load_series(path)
        assert (series.provenance.value_column, series.provenance.time_column) == ("demand_ML", "date")

    def test_no_time_column_asked_for(self, tmp_path):
        series = load_series(_write(tmp_path, "t.csv", _csv_text(_frame())), time="")
        assert series.times is None and len(series) == N

    def test_no_numbers_at_all(self, tmp_path):
        text = "date,remark,shift\n" + "".join(f"2021-01-{i + 1:02d},ok,early\n" for i in range(20))
        with pytest.raises(InputError, match="no column of numbers"):
            load_series(_write(tmp_path, "words.csv", text))

    def test_year_column(self, tmp_path):
        text = "year,output_t\n" + "".join(f"{1990 + i},{100 + (i * 7) % 11}\n" for i in range(30))
        series = load_series(_write(tmp_path, "years.csv", text))
        assert series.frequency == "YS-JAN"
        assert str(series.times[0])[:10] == "1990-01-01"


# ----------------------------------------------------------------------------- values
class TestValues:
    def test_text_in_value_column_names_rows_and_column(self, tmp_path):
        text = _csv_text(_frame())
        lines = text.splitlines()
        lines[4] = "2021-01-04,meter fault"  # data row 4, line 5 of the file
        lines[9] = "2021-01-09,12.5 ML"  # data row 9, line 10
        with pytest.raises(InputError) as caught:
            load_series(_write(tmp_path, "faulty.csv", "\n".join(lines) + "\n"))
        message = str(caught.value)
        assert "'demand_ML'" in message and "faulty.csv" in message
        assert "data row 4 (line 5 of the file): 'meter fault'" in message
        assert "data row 9 (line 10 of the file): '12.5 ML'" in message
        assert "counted from 1 under the header" in message
        assert "--value NAME" in message

    def test_many_offenders_are_summarised(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        for k in range(1, 13):
            lines[k] = f"2021-01-{k:02d},n/a?"
        with pytest.raises(InputError, match="holds 12 entries.*and 7 more"):
            load_series(_write(tmp_path, "many.csv", "\n".join(lines) + "\n"))

    def test_missing_values_become_nan_and_are_noted(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        lines[3] = "2021-01-03,"
        lines[7] = "2021-01-07,NA"
        series = load_series(_write(tmp_path, "gaps.csv", "\n".join(lines) + "\n"))
        # Reference: pandas.read_csv's default missing-value markers.
        reference = pd.read_csv(tmp_path / "gaps.csv")["demand_ML"].to_numpy()
        np.testing.assert_array_equal(np.isnan(series.values), np.isnan(reference))
        assert int(np.isnan(series.values).sum()) == 2
        assert any("2 of 40 value(s)" in note and "data row 3" in note for note in series.provenance.notes)

    def test_infinite_value_refused_with_row(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        lines[5] = "2021-01-05,1e400"
        with pytest.raises(InputError, match=r"infinite.*data row 5"):
            load_series(_write(tmp_path, "huge.csv", "\n".join(lines) + "\n"))

    def test_too_short_uses_series_message(self, tmp_path):
        path = _write(tmp_path, "short.csv", _csv_text(_frame(MIN_OBSERVATIONS - 1)))
        with pytest.raises(InputError, match=rf"short\.csv.*only {MIN_OBSERVATIONS - 1} usable values"):
            load_series(path)

    def test_shortest_allowed(self, tmp_path):
        path = _write(tmp_path, "ok.csv", _csv_text(_frame(MIN_OBSERVATIONS)))
        assert len(load_series(path)) == MIN_OBSERVATIONS

    def test_constant_series_refused(self, tmp_path):
        frame = _frame()
        frame["demand_ML"] = 4.0
        with pytest.raises(InputError, match="constant"):
            load_series(_write(tmp_path, "flat.csv", _csv_text(frame)))


# ----------------------------------------------------------------------------- time stamps
class TestTimes:
    def test_unsorted_rows_are_sorted_and_noted(self, tmp_path):
        frame = _frame()
        shuffled = frame.sample(frac=1.0, random_state=np.random.default_rng(7))
        series = load_series(_write(tmp_path, "shuffled.csv", _csv_text(shuffled)))
        np.testing.assert_array_equal(series.values, frame["demand_ML"].to_numpy())
        assert series.frequency == "D"
        assert any("sorted" in note for note in series.provenance.notes)

    def test_duplicate_stamps_refused(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        lines.insert(6, lines[3])  # 2021-01-03 again as data row 6
        with pytest.raises(InputError) as caught:
            load_series(_write(tmp_path, "twice.csv", "\n".join(lines) + "\n"))
        message = str(caught.value)
        assert "2021-01-03 (data rows 3, 6)" in message and "merge" in message

    def test_unparseable_stamp_names_row(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        lines[8] = "2021-01-08x,4.2"
        with pytest.raises(InputError, match=r"'date'.*data row 8 \(line 9 of the file\): '2021-01-08x'"):
            load_series(_write(tmp_path, "stamp.csv", "\n".join(lines) + "\n"))

    def test_value_without_stamp_refused(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        lines[8] = ",4.2"
        with pytest.raises(InputError, match="empty in 1 row"):
            load_series(_write(tmp_path, "nostamp.csv", "\n".join(lines) + "\n"))

    def test_blank_rows_are_skipped(self, tmp_path):
        text = _csv_text(_frame()) + ",\n,\n"
        series = load_series(_write(tmp_path, "trailing.csv", text))
        assert len(series) == N
        assert series.provenance.rows_read == N + 2 and series.provenance.rows_used == N

    def test_gaps_are_reported_and_frequency_left_unset(self, tmp_path):
        frame = _frame().drop(index=[5, 6, 20]).reset_index(drop=True)
        series = load_series(_write(tmp_path, "holes.csv", _csv_text(frame)))
        assert series.frequency is None
        note = next(n for n in series.provenance.notes if "missing" in n)
        assert "3 period(s) missing: 2021-01-06, 2021-01-07, 2021-01-21" in note

    def test_irregular_stamps(self, tmp_path):
        frame = _frame()
        frame["date"] = pd.to_datetime("2021-01-01") + pd.to_timedelta(np.cumsum(np.arange(1, N + 1) % 5 + 1), "D")
        series = load_series(_write(tmp_path, "odd.csv", _csv_text(frame)))
        assert series.frequency is None

    @pytest.mark.parametrize(
        ("freq", "time_format"),
        [("10min", "%Y-%m-%d %H:%M"), ("h", "%Y-%m-%dT%H:%M:%S"), ("MS", "%Y-%m"), ("W-MON", "%Y-%m-%d"),
         ("QS-JAN", "%Y-%m-%d")],
    )
    def test_frequencies_match_pandas_infer_freq(self, tmp_path, freq, time_format):
        frame = _frame(freq=freq, start="2021-01-04")
        series = load_series(_write(tmp_path, "f.csv", _csv_text(frame, time_format=time_format)))
        # Reference: pandas.infer_freq of the stamps written.
        assert series.frequency == _infer_freq(frame["date"])

    def test_day_first_dotted_dates(self, tmp_path):
        frame = _frame()
        series = load_series(_write(tmp_path, "dotted.csv", _csv_text(frame, time_format="%d.%m.%Y")))
        np.testing.assert_array_equal(series.times, frame["date"].to_numpy().astype("datetime64[ns]"))

    def test_month_first_slashes_resolved_by_a_day_above_12(self, tmp_path):
        frame = _frame()
        series = load_series(_write(tmp_path, "us.csv", _csv_text(frame, time_format="%m/%d/%Y")))
        np.testing.assert_array_equal(series.times, frame["date"].to_numpy().astype("datetime64[ns]"))

    def test_ambiguous_slashes_read_in_time_order_and_noted(self, tmp_path):
        # The 1st of each month, 2020-2021: every day is 01, so 01/02/2020 could be 1 Feb or 2 Jan.
        # Read month first the stamps are monthly and in order; day first they are not in order.
        frame = _frame(24, freq="MS", start="2020-01-01")
        series = load_series(_write(tmp_path, "amb.csv", _csv_text(frame, time_format="%m/%d/%Y")))
        np.testing.assert_array_equal(series.times, frame["date"].to_numpy().astype("datetime64[ns]"))
        assert any("day first or month first" in note for note in series.provenance.notes)

    def test_utc_offset_keeps_local_clock(self, tmp_path):
        frame = _frame(freq="h")
        series = load_series(_write(tmp_path, "tz.csv", _csv_text(frame, time_format="%Y-%m-%dT%H:%M+02:00")))
        np.testing.assert_array_equal(series.times, frame["date"].to_numpy().astype("datetime64[ns]"))
        assert series.frequency == "h"

    def test_dates_outside_supported_range(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        lines[2] = "2999-01-02,4.4"
        with pytest.raises(InputError, match="outside the years 1678 to 2261.*data row 2"):
            load_series(_write(tmp_path, "far.csv", "\n".join(lines) + "\n"))


# ----------------------------------------------------------------------------- unreadable files
class TestUnreadable:
    def test_missing_file(self, tmp_path):
        with pytest.raises(InputError, match=r"nowhere\.csv' does not exist"):
            load_series(tmp_path / "nowhere.csv")

    def test_directory(self, tmp_path):
        with pytest.raises(InputError, match="is a folder"):
            load_series(tmp_path)

    def test_permission_denied(self, tmp_path, monkeypatch):
        path = _write(tmp_path, "locked.csv", _csv_text(_frame()))

        def refuse(self):
            raise PermissionError(13, "Permission denied", str(self))

        monkeypatch.setattr(type(path), "read_bytes", refuse)
        with pytest.raises(InputError, match=r"Permission to read .*locked\.csv.* denied"):
            load_series(path)

    @pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() == 0, reason="root reads any file")
    def test_permission_denied_on_disk(self, tmp_path):
        path = _write(tmp_path, "locked.csv", _csv_text(_frame()))
        path.chmod(0)
        try:
            with pytest.raises(InputError, match="denied"):
                load_series(path)
        finally:
            path.chmod(0o600)

    @pytest.mark.parametrize("content", [b"", b"   \n\n  \r\n"])
    def test_empty_file(self, tmp_path, content):
        with pytest.raises(InputError, match="empty"):
            load_series(_write(tmp_path, "empty.csv", content))

    def test_header_only(self, tmp_path):
        with pytest.raises(InputError, match="no data rows"):
            load_series(_write(tmp_path, "head.csv", "date,demand_ML\n"))

    def test_binary_garbage(self, tmp_path):
        noise = np.random.default_rng(99).integers(0, 256, 4096, dtype=np.uint8).tobytes()
        with pytest.raises(InputError, match="binary data"):
            load_series(_write(tmp_path, "noise.csv", noise))

    def test_image_named_csv(self, tmp_path):
        png = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(64)
        with pytest.raises(InputError, match="binary data"):
            load_series(_write(tmp_path, "picture.csv", png))

    def test_ragged_rows(self, tmp_path):
        lines = _csv_text(_frame()).splitlines()
        lines[10] += ",extra,fields"
        with pytest.raises(InputError, match="ragged.csv"):
            load_series(_write(tmp_path, "ragged.csv", "\n".join(lines) + "\n"))

    def test_sheet_for_a_text_file(self, tmp_path):
        with pytest.raises(InputError, match="has no sheets"):
            load_series(_write(tmp_path, "t.csv", _csv_text(_frame())), sheet="Data")


# ----------------------------------------------------------------------------- speed
def test_million_rows_load_in_seconds(tmp_path):
    # The C parser of pandas.read_csv reads two columns of 10^6 rows in about a second here;
    # the bound leaves room for a loaded test machine.
    n = 1_000_000
    stamps = np.datetime_as_string(np.datetime64("2000-01-01T00:00") + np.arange(n).astype("timedelta64[m]"))
    values = np.round(np.random.default_rng(5).normal(size=n), 4).astype(str)
    text = "timestamp,load_MW\n" + "\n".join(np.char.add(np.char.add(stamps, ","), values)) + "\n"
    path = _write(tmp_path, "big.csv", text)
    began = time.perf_counter()
    series = load_series(path)
    elapsed = time.perf_counter() - began
    assert len(series) == n and series.frequency == "min"
    assert elapsed < 20.0, f"loading 10^6 rows took {elapsed:.1f} s"


# ----------------------------------------------------------------------------- hostile input
_HOSTILE_CELLS = st.one_of(
    st.sampled_from(
        ["", "NaN", "nan", "inf", "-inf", "Infinity", "1e308", "-1e308", "1e400", "1e-320", "NA", "null",
         "x", "2021-02-30", "0000-00-00", "9999-12-31", "1677-01-01", "1/2/3", "31.12.1600", "12/13/2021",
         "2021-01-01T00:00+05:00", "2021-01-01T00:00-03:00", '"', '"a,b"', "Jan 2021", "2021Q1", "1,5",
         "TRUE", "-0", "99999999999999999999999", ";", "|", "\t", "#N/A"]
    ),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-(10**25), 10**25).map(str),
    st.datetimes().map(str),
    st.text(alphabet=string.printable, max_size=6),
)


@st.composite
def _hostile_tables(draw) -> bytes:
    n = draw(st.integers(0, 40))
    freq = draw(st.sampled_from(["D", "h", "MS", "10min", "W-MON"]))
    fmt = draw(st.sampled_from(["%Y-%m-%d", "%d.%m.%Y", "%m/%d/%Y", "%Y-%m-%d %H:%M", "%b %Y"]))
    stamps = [t.strftime(fmt) for t in pd.date_range("2020-01-01", periods=n, freq=freq)]
    values = draw(st.lists(st.floats(allow_nan=True, allow_infinity=True), min_size=n, max_size=n))
    rows = [[s, repr(v)] for s, v in zip(stamps, values)]
    for _ in range(draw(st.integers(0, 4))):
        if rows:
            row = draw(st.integers(0, n - 1))
            rows[row][draw(st.integers(0, 1))] = draw(_HOSTILE_CELLS)
    if draw(st.booleans()) and rows:
        rows = draw(st.permutations(rows))
    if draw(st.booleans()) and rows:
        rows.append(list(rows[draw(st.integers(0, n - 1))]))  # a repeated stamp
    sep = draw(st.sampled_from([",", ";", "\t", "|"]))
    header = draw(st.sampled_from(["date{s}value", "time{s}value{s}extra", "", "{s}", "value"])).format(s=sep)
    text = "\n".join(([header] if header else []) + [sep.join(r) for r in rows])
    if draw(st.booleans()):
        text = text[: draw(st.integers(0, len(text)))]  # truncated mid-row
    return text.encode(draw(st.sampled_from(["utf-8", "utf-8-sig", "latin-1", "utf-16"])), "replace")


_HOSTILE_BYTES = st.one_of(
    st.binary(max_size=400),
    st.lists(st.lists(_HOSTILE_CELLS, max_size=4), max_size=30).map(
        lambda rows: "\n".join(",".join(r) for r in rows).encode("utf-8", "surrogatepass")
    ),
    _hostile_tables(),
)


def _assert_usable_or_refused(path, **kwargs) -> None:
    try:
        series = load_series(path, **kwargs)
    except LagwrightError:
        return
    observed = series.values[~np.isnan(series.values)]
    assert observed.size >= MIN_OBSERVATIONS and np.all(np.isfinite(observed))
    if series.times is not None:
        stamps = series.times.view("int64")
        assert np.all(stamps[1:] > stamps[:-1])  # strictly increasing, no overflowing difference


@pytest.fixture(scope="module")
def scratch(tmp_path_factory):
    return tmp_path_factory.mktemp("hostile")


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(content=_HOSTILE_BYTES, suffix=st.sampled_from([".csv", ".txt", ".tsv", ".data"]))
def test_hostile_text_is_loaded_or_refused(scratch, content, suffix):
    path = scratch / f"hostile{suffix}"
    path.write_bytes(content)
    _assert_usable_or_refused(path)


_XLSX_CELLS = st.one_of(
    st.none(),
    st.floats(allow_nan=False, allow_infinity=False),
    st.integers(-(10**15), 10**15),
    st.booleans(),
    st.datetimes(min_value=datetime.datetime(1900, 3, 1), max_value=datetime.datetime(2200, 1, 1)),
    st.text(alphabet=string.ascii_letters + string.digits + " -/.:,", max_size=12),
    st.sampled_from(["NaN", "inf", "#N/A", "2021-01-01", "1e400", "=1/0"]),
)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    rows=st.lists(st.lists(_XLSX_CELLS, min_size=1, max_size=3), max_size=25),
    base=st.integers(0, 1),
    sheet=st.sampled_from([None, 0, "Sheet", "1"]),
)
def test_hostile_workbook_is_loaded_or_refused(scratch, rows, base, sheet):
    book = openpyxl.Workbook()
    ws = book.active
    ws.title = "Sheet"
    if base:  # mostly good data with hostile cells mixed in
        for i in range(20):
            ws.append([datetime.datetime(2021, 1, 1) + datetime.timedelta(days=i), float(i % 5)])
    for row in rows:
        ws.append(row)
    path = scratch / "hostile.xlsx"
    book.save(path)
    _assert_usable_or_refused(path, sheet=sheet)
