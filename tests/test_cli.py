"""The `lagwright fit` command: JSON schema, numbers equal to the core, clear errors, no tracebacks."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lagwright.app.cli import main
from lagwright.core import samples
from lagwright.core.evaluate import evaluate
from lagwright.core.spec import ModelSpec


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(scope="module")
def water_json():
    from io import StringIO
    from contextlib import redirect_stdout

    buffer = StringIO()
    with redirect_stdout(buffer):
        code = main(["fit", "sample:water_demand", "--D", "1", "--period", "7", "--ar", "1", "--sma", "1", "--json"])
    assert code == 0
    return json.loads(buffer.getvalue())


REQUIRED = ["label", "nobs", "converged", "loglik", "aic", "aicc", "bic", "sigma2", "params", "ljung_box",
            "sign_test", "cumulative_periodogram", "normality", "arch", "roots"]


def test_json_has_the_documented_fields(water_json):
    for key in REQUIRED:
        assert key in water_json, key
    assert set(water_json["params"][0]) == {"name", "value", "se", "stat", "p"}
    assert set(water_json["ljung_box"][0]) == {"lag", "stat", "df", "p"}
    assert {"changes", "possible", "p"} <= set(water_json["sign_test"])
    assert {"max_deviation", "reject_5pct"} <= set(water_json["cumulative_periodogram"])
    assert water_json["label"] == "ARIMA(1,0,0)×(0,1,1)_7"


def test_json_numbers_equal_the_core(water_json):
    series = samples.load_sample("water_demand")
    ev = evaluate(series, ModelSpec(ar=(1,), sma=(1,), D=1, s=7))
    assert water_json["loglik"] == pytest.approx(ev.fit.loglik, abs=1e-9)
    assert water_json["nobs"] == ev.fit.nobs == 1088
    for row, p in zip(water_json["params"], ev.fit.params):
        assert row["name"] == p.name and row["value"] == pytest.approx(p.value) and row["se"] == pytest.approx(p.se)
    for row, lb in zip(water_json["ljung_box"], ev.diagnostics.ljung_box):
        assert (row["lag"], row["df"]) == (lb.lag, lb.df) and row["p"] == pytest.approx(lb.p)
    # df = lag minus the two ARMA coefficients (ar.L1, ma.S.L7): common practice.
    assert [r["df"] for r in water_json["ljung_box"]] == [r["lag"] - 2 for r in water_json["ljung_box"]]


def test_text_report(capsys):
    code, out, err = run(capsys, "fit", "sample:parts_shipments", "--transform", "log", "--d", "1", "--D", "1",
                         "--period", "12", "--ma", "1", "--sma", "1")
    assert code == 0, err
    assert "ARIMA(0,1,1)×(0,1,1)_12, log" in out and "Ljung-Box" in out and "ma.S.L12" in out


def test_preview_is_labelled(capsys):
    code, out, err = run(capsys, "fit", "sample:coldstore_temperature", "--ar", "1,2", "--ma", "1", "--preview", "--json")
    assert code == 0, err
    assert json.loads(out)["kind"] == "preview"


def _write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return str(path)


@pytest.mark.parametrize(
    "content, args, fragment",
    [
        (None, [], "does not exist"),
        ("date,v\n" + "".join(f"2020-01-{i + 1:02d},{i % 3}\n" for i in range(5)), [], "at least"),
        ("date,v\n" + "".join(f"2020-01-{i + 1:02d},5\n" for i in range(30)), [], "constant"),
        ("date,v\n" + "".join(f"2020-01-{i + 1:02d},{'abc' if i == 4 else i}\n" for i in range(30)), [], "v"),
        ("a,b,c\n" + "".join(f"{i},{i * 2 % 7},{i % 5}\n" for i in range(30)), [], "--value"),
    ],
)
def test_bad_input_one_clear_line(tmp_path, capsys, content, args, fragment):
    path = str(tmp_path / "missing.csv") if content is None else _write(tmp_path, "data.csv", content)
    code, out, err = run(capsys, "fit", path, *args)
    assert code == 1
    assert err.count("\n") == 1 and err.startswith("lagwright: ") and fragment in err
    assert "Traceback" not in err


@pytest.mark.parametrize(
    "args",
    [
        ["fit", "sample:water_demand", "--ar", "x"],
        ["fit", "sample:water_demand", "--transform", "sqrt"],
        ["fit"],
        ["frobnicate", "x", "y"],
    ],
)
def test_bad_options_exit_2(capsys, args):
    code, out, err = run(capsys, *args)
    assert code == 2 and err.startswith("lagwright: ") and "Traceback" not in err


def test_bad_model_is_a_data_error(capsys):
    code, out, err = run(capsys, "fit", "sample:water_demand", "--d", "1", "--constant", "mean")
    assert code == 1 and "mean" in err and err.count("\n") == 1


def test_unknown_sample(capsys):
    code, out, err = run(capsys, "fit", "sample:nope")
    assert code == 1 and "nope" in err


cells = st.one_of(
    st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=8),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(min_value=-10**30, max_value=10**30).map(str),
    st.sampled_from(["", "NaN", "inf", "-", "1e999", "2020-13-45", "0000-00-00", "1,5", '"', "\x00"]),
)
rows = st.lists(st.lists(cells, min_size=0, max_size=4), min_size=0, max_size=40)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(rows=rows, delimiter=st.sampled_from([",", ";", "\t"]), raw=st.binary(max_size=64))
def test_hostile_files_never_crash_the_cli(tmp_path, capsys, rows, delimiter, raw):
    path = tmp_path / "hostile.csv"
    text = "\n".join(delimiter.join(r) for r in rows)
    path.write_bytes(text.encode("utf-8", errors="replace") + raw)
    code = main(["fit", str(path), "--ar", "1", "--json"])
    out, err = capsys.readouterr()
    assert code in (0, 1), err
    assert "Traceback" not in err and "internal error" not in err
    if code == 0:
        assert json.loads(out)["ok"] in (True, False)
    else:
        assert err.startswith("lagwright: ")


@pytest.mark.skipif(shutil.which("lagwright") is None and not (sys.prefix and True), reason="console script missing")
def test_console_script_runs(tmp_path):
    exe = shutil.which("lagwright", path=str(__import__("pathlib").Path(sys.executable).parent))
    if exe is None:
        pytest.skip("console script not installed")
    y = np.cumsum(np.random.default_rng(1).standard_normal(120)) + 50
    csv = tmp_path / "level.csv"
    csv.write_text("day,level_m\n" + "".join(f"2022-03-{1 + i % 28:02d},{v:.4f}\n" for i, v in enumerate(y[:28])),
                   encoding="utf-8")
    out = subprocess.run([exe, "fit", str(csv), "--d", "1", "--json"], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)["label"] == "ARIMA(0,1,0)"
    bad = subprocess.run([exe, "fit", str(tmp_path / "none.csv")], capture_output=True, text=True, timeout=120)
    assert bad.returncode == 1 and "Traceback" not in bad.stderr


def test_json_hints(capsys):
    code, out, err = run(capsys, "fit", "sample:water_demand", "--D", "1", "--period", "7", "--ar", "1", "--json")
    assert code == 0, err
    hints = json.loads(out)["hints"]
    assert hints and set(hints[0]) == {"action", "kind", "lag", "reason", "evidence", "score"}
    assert (hints[0]["action"], hints[0]["kind"], hints[0]["lag"]) == ("add", "sma", 1)


def test_screen_json(capsys):
    code, out, err = run(capsys, "screen", "sample:coldstore_temperature", "--max-p", "2", "--max-q", "1",
                         "--workers", "1", "--json")
    assert code == 0, err
    payload = json.loads(out)
    rows = payload["candidates"]
    assert len(rows) == 6 and payload["criterion"] == "aicc"
    assert {"label", "orders", "criterion", "exact", "converged"} <= set(rows[0])
    # The true process of this sample is ARMA(2,1) (sample_series/README.md).
    assert rows[0]["orders"]["p"] == 2 and rows[0]["orders"]["q"] == 1


def test_screen_refuses_lags(capsys):
    code, out, err = run(capsys, "screen", "sample:coldstore_temperature", "--ar", "1")
    assert code == 1 and "order limits" in err
