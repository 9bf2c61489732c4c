"""The memo's content without Qt: the fitted equation, the sections, the numbers, the exports' tables.

References used below:

* statsmodels' ``ARIMA`` results (``polynomial_ar``, ``polynomial_ma`` and
  their seasonal versions, ``fittedvalues``, ``resid``) for the sign
  convention of the printed equation and for the residual export;
* ``scipy.stats.chi2`` for the likelihood-ratio p-value printed in the audit trail;
* numpy's differencing for the prepared series of the residual export;
* the expected equation strings are written by hand from the convention
  AR factor 1 − Σφ_i B^i, MA factor 1 + Σθ_j B^j (statsmodels' documented
  convention; Brockwell & Davis, 2016, §6.5).
"""

from __future__ import annotations

import csv
import io
import re
from importlib.metadata import version

import numpy as np
import pytest
from scipy import stats

from lagwright.core import samples
from lagwright.core.equation import equation_notes, fitted_equation
from lagwright.core.errors import InputError, SessionError
from lagwright.core.evaluate import evaluate
from lagwright.core.export_tables import (
    LINEAGE_COLUMNS,
    RESIDUAL_COLUMNS,
    csv_text,
    lineage_rows,
    residual_header,
    residual_rows,
    write_csv,
)
from lagwright.core.lineage import Lineage
from lagwright.core.memo_content import (
    FIGURE_KEYS,
    SECTION_KEYS,
    FigureRow,
    MemoError,
    MemoInputs,
    Paragraph,
    Table,
    build_memo,
    fmt_estimate,
    fmt_p,
    fmt_sig,
    memo_text,
    reproduce_command,
    software_versions,
)
from lagwright.core.memo_inputs import evaluate_lineage
from lagwright.core.session import DataReference
from lagwright.core.spec import ModelSpec, Transform

MINUS = "\u2212"
ODD_NOTE = 'Weekly "peak" <b>&amp; ünïcödé Ωμέγα 水'


# ------------------------------------------------------------------ equation
@pytest.mark.parametrize(
    ("spec", "params", "expected"),
    [
        # The example of the issue: water demand, AR(1) with a seasonal MA at lag 7 after (1 − B⁷).
        (ModelSpec(ar=(1,), sma=(1,), D=1, s=7), {"ar.L1": 0.5604, "ma.S.L7": -0.7906},
         "(1 − 0.560 B)(1 − B⁷) y_t = (1 − 0.791 B⁷) a_t"),
        # ARMA(2,1) with a mean: c = μ(1 − φ1 − φ2) = −21.5 × 0.15 = −3.225.
        (ModelSpec(ar=(1, 2), ma=(1,), constant="mean"), {"const": -21.5, "ar.L1": 1.3, "ar.L2": -0.45, "ma.L1": 0.35},
         "(1 − 1.300 B + 0.450 B²) y_t = −3.225 + (1 + 0.350 B) a_t"),
        # ARIMA(1,1,0) with drift: c = 4 × (1 − 0.4) = 2.4.
        (ModelSpec(ar=(1,), d=1, constant="drift"), {"const": 4.0, "ar.L1": 0.4},
         "(1 − 0.400 B)(1 − B) y_t = 2.400 + a_t"),
        # The airline model in logs.
        (ModelSpec(ma=(1,), sma=(1,), d=1, D=1, s=12, transform=Transform("log")), {"ma.L1": -0.45, "ma.S.L12": -0.6},
         "(1 − B)(1 − B¹²) log y_t = (1 − 0.450 B)(1 − 0.600 B¹²) a_t"),
        # A seasonal AR factor with a negative coefficient, Box-Cox transform.
        (ModelSpec(sar=(1,), s=4, transform=Transform("boxcox", 0.5)), {"ar.S.L4": -0.25},
         "(1 + 0.250 B⁴) g(y_t) = a_t"),
        # Subset AR lags, twice differenced, a tiny MA coefficient in significant digits.
        (ModelSpec(ar=(1, 12), ma=(2,), d=2), {"ar.L1": 0.5, "ar.L12": 0.2, "ma.L2": 0.00371},
         "(1 − 0.500 B − 0.200 B¹²)(1 − B)² y_t = (1 + 0.00371 B²) a_t"),
        # White noise around a mean: no AR factor, c = μ.
        (ModelSpec(constant="mean"), {"const": 12.0}, "y_t = 12.000 + a_t"),
        # Drift without AR terms, seasonal difference only.
        (ModelSpec(D=1, s=7, constant="drift"), {"const": -0.125}, "(1 − B⁷) y_t = −0.125 + a_t"),
    ],
)
def test_fitted_equation_against_hand_written_strings(spec, params, expected):
    assert fitted_equation(spec, params) == expected


def test_equation_notes_name_the_transform_the_constant_and_sigma2():
    spec = ModelSpec(ar=(1,), d=1, constant="drift", transform=Transform("boxcox", 0.5))
    notes = equation_notes(spec, {"const": 4.0, "ar.L1": 0.4, "sigma2": 0.0225})
    assert notes[0] == f"g(y) = (y^0.5 {MINUS} 1)/0.5, the Box-Cox transform with λ = 0.5."
    # c = μ·φ(1) = 4 × 0.6 (hand computation)
    assert notes[1] == ("The constant 2.400 is μ·φ(1)·Φ(1), where μ = 4.000 is the estimated drift per period, "
                        "the mean of (1 − B) g(y_t).")
    assert notes[2] == "a_t is white noise with variance σ² = 0.022500."


def _factor_coefficients(factor: str) -> dict[int, float]:
    """{power of B: coefficient} of one printed factor like '1 − 0.500 B + 0.200 B²'."""
    sup = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789")
    out = {0: 1.0}
    for sign, value, power in re.findall(r"([+−]) ([0-9.]+) B([⁰¹²³⁴⁵⁶⁷⁸⁹]*)", factor):
        out[int(power.translate(sup) or "1")] = float(value) * (-1.0 if sign == MINUS else 1.0)
    return out


def test_printed_factors_carry_statsmodels_polynomials():
    # Reference: statsmodels ARIMA results expose the lag polynomials with their signs.
    from statsmodels.tsa.arima.model import ARIMA

    spec = ModelSpec(ar=(1, 2), ma=(1,), sar=(1,), sma=(1,), s=4)
    params = {"ar.L1": 0.5, "ar.L2": -0.2, "ma.L1": 0.3, "ar.S.L4": -0.25, "ma.S.L4": -0.6}
    y = np.random.default_rng(1).normal(size=60)
    ref = ARIMA(y, order=([1, 2], 0, [1]), seasonal_order=(1, 0, 1, 4), trend="n").filter(
        [0.5, -0.2, 0.3, -0.25, -0.6, 1.0])
    text = fitted_equation(spec, params)
    left, right = text.split(" = ")
    factors_left = re.findall(r"\(([^()]*)\)", left)
    factors_right = re.findall(r"\(([^()]*)\)", right)
    for printed, poly in ((factors_left[0], ref.polynomial_ar), (factors_left[1], ref.polynomial_seasonal_ar),
                          (factors_right[0], ref.polynomial_ma), (factors_right[1], ref.polynomial_seasonal_ma)):
        coefficients = _factor_coefficients(printed)
        expected = {i: float(c) for i, c in enumerate(poly) if c != 0}
        assert coefficients == pytest.approx(expected, abs=5e-4)


# ------------------------------------------------------------------ formats
def test_number_formats():
    assert fmt_p(3.2e-9) == "< 0.0001" and fmt_p(0.24374) == "0.2437" and fmt_p(float("nan")) == "—"
    assert fmt_estimate(-0.79056) == f"{MINUS}0.7906" and fmt_estimate(0.0037123) == "0.003712"
    assert fmt_sig(0.0223562) == "0.022356" and fmt_sig(625.004) == "625.00"


# ------------------------------------------------------------- a session memo
@pytest.fixture(scope="module")
def water():
    """The water-demand lineage of the tests: mean only -> seasonal difference -> +SMA(1) -> +AR(1)."""
    series = samples.load_sample("water_demand")
    lineage, c1 = Lineage().add_root(ModelSpec(s=7, constant="mean"), step="starting model: mean only",
                                     note="Start from the mean.")
    lineage, c2 = lineage.add_root(ModelSpec(D=1, s=7), step="new branch: none, d=0, D=1, s=7", note=ODD_NOTE,
                                   origin="user")
    lineage, c3 = lineage.add_child(c2.id, ModelSpec(D=1, s=7, sma=(1,)), note="ACF spike at lag 7.")
    lineage, c4 = lineage.add_child(c3.id, ModelSpec(D=1, s=7, sma=(1,), ar=(1,)), note="PACF cuts off after lag 1.")
    evaluations = evaluate_lineage(series, lineage)
    sample = samples.get_sample("water_demand")
    inputs = MemoInputs(
        series=series, lineage=lineage, evaluations=evaluations, chosen_id="c4", runner_up_id="c3",
        analyst="R. Reviewer", date="2026-06-02", session_name="water.lagwright.json",
        data=DataReference(sample="water_demand", sha256=series.provenance.sha256), units=sample.units,
        versions=software_versions(), description=sample.description, series_title=sample.title,
    )
    return series, lineage, evaluations, inputs, build_memo(inputs)


def test_sections_come_in_order_with_the_title_block(water):
    *_, memo = water
    assert [s.key for s in memo.sections] == [k for k in SECTION_KEYS if k != "forecast"]  # none asked for
    assert [s.number for s in memo.sections] == list(range(1, 10))
    fields = dict(memo.title_block.fields.items)
    assert fields["Analyst"] == "R. Reviewer" and fields["Date"] == "2026-06-02"
    assert fields["Program"] == f"Lagwright {version('lagwright')}"
    assert fields["Chosen model"].startswith("c4: ARIMA(1,0,0)×(0,1,1)_7")
    assert [f.pane for f in memo.figures()] == list(FIGURE_KEYS)


def _tables(section):
    return [b for b in section.blocks if isinstance(b, Table)]


def test_parameter_table_and_criteria_equal_the_core_fit(water):
    series, lineage, evaluations, inputs, memo = water
    # Reference: the core evaluated directly, at the printed precision.
    fit = evaluate(series, ModelSpec(D=1, s=7, sma=(1,), ar=(1,))).fit
    params, summary = _tables(memo.section("model"))
    printed = {row.cells[0]: row.cells for row in params.rows}
    for p in fit.params:
        if p.name == "sigma2":
            continue
        cells = printed[p.name]
        assert float(cells[2].replace(MINUS, "-")) == pytest.approx(p.value, abs=5e-5)
        assert float(cells[3]) == pytest.approx(p.se, abs=5e-5)
        assert float(cells[4].replace(MINUS, "-")) == pytest.approx(p.stat, abs=5e-3)
    values = {row.cells[0]: row.cells[1].replace(MINUS, "-") for row in summary.rows}
    assert float(values["σ²"]) == pytest.approx(fit.sigma2, abs=5e-7)  # 5 significant digits printed
    assert float(values["AIC"]) == pytest.approx(fit.aic, abs=5e-3)
    assert float(values["BIC"]) == pytest.approx(fit.bic, abs=5e-3)
    assert int(values["k (parameters)"]) == 3 and int(values["n"]) == 1088


def test_ljung_box_rows_equal_the_core_diagnostics(water):
    series, lineage, evaluations, inputs, memo = water
    diag = evaluations["c4"].diagnostics
    table = _tables(memo.section("residuals"))[0]
    rows = {row.cells[0].rstrip(" *"): row.cells for row in table.rows}
    for lb in diag.ljung_box:
        cells = rows[f"Ljung-Box Q({lb.lag})"]
        assert float(cells[1]) == pytest.approx(lb.stat, abs=5e-3)
        assert int(cells[2]) == lb.df == lb.lag - 2  # df = lag − (AR + MA coefficients): common practice
        assert float(cells[3]) == pytest.approx(lb.p, abs=5e-5)


def test_audit_trail_lists_every_candidate_with_its_test(water):
    series, lineage, evaluations, inputs, memo = water
    table = _tables(memo.section("lineage"))[0]
    assert [row.cells[0].split(" ")[0].split("\n")[0] for row in table.rows] == ["c1", "c2", "c3", "c4"]
    marks = {row.cells[0].split("\n")[0]: row.mark for row in table.rows}
    assert marks["c4 · CHOSEN"] == "chosen" and marks["c3 · RUNNER-UP"] == "runner-up"
    # c2 starts a new branch: no test against anything.
    assert table.rows[1].cells[2].startswith("none")
    # c4 against c3: LR = 2(ℓ4 − ℓ3) with p from chi2(1) (reference: scipy.stats).
    lr = 2.0 * (evaluations["c4"].fit.loglik - evaluations["c3"].fit.loglik)
    text = table.rows[3].cells[2]
    printed = re.search(r"LR = ([0-9.]+) \(df 1\)", text)
    assert float(printed.group(1)) == pytest.approx(lr, abs=5e-3)
    assert stats.chi2.sf(lr, 1) < 1e-4 and "p < 0.0001" in text
    assert table.rows[1].cells[5] == ODD_NOTE  # the note kept verbatim


def test_notes_and_odd_characters_reach_the_text_verbatim(water):
    *_, memo = water
    text = memo_text(memo)
    assert ODD_NOTE in text
    assert "PACF cuts off after lag 1." in text


def test_runner_up_section_compares_both(water):
    *_, memo = water
    section = memo.section("runner_up")
    text = memo_text(memo).split("6  Runner-up, side by side")[1].split("7  Conventions")[0]
    assert "Nested test of ARIMA(0,0,0)×(0,1,1)_7 within ARIMA(1,0,0)×(0,1,1)_7" in text
    assert any(isinstance(b, Table) and b.title == "Criteria" for b in section.blocks)


def test_bad_candidate_ids_are_refused(water):
    series, lineage, evaluations, inputs, memo = water
    from dataclasses import replace

    with pytest.raises(SessionError, match="no candidate 'c9'"):
        build_memo(replace(inputs, chosen_id="c9"))
    with pytest.raises(MemoError, match="another candidate"):
        build_memo(replace(inputs, runner_up_id="c4"))


def test_reproduction_command_refits_the_same_model(water, capsys):
    import json
    import shlex

    from lagwright.app.cli import build_parser, main, spec_from_options

    series, lineage, evaluations, inputs, memo = water
    command = reproduce_command(lineage.get("c4").spec, inputs.data, series)
    assert command == "lagwright fit sample:water_demand --ar 1 --sma 1 --period 7 --D 1 --constant none"
    argv = shlex.split(command)[1:]
    args = build_parser().parse_args(argv)
    assert spec_from_options(args, series) == lineage.get("c4").spec
    assert main(argv + ["--json"]) == 0
    printed = json.loads(capsys.readouterr().out)
    assert printed["loglik"] == pytest.approx(evaluations["c4"].fit.loglik, abs=1e-8)
    boxcox = reproduce_command(ModelSpec(ma=(1,), d=1, transform=Transform("boxcox", 0.25)),
                               DataReference(path="/data/my demand.csv", value_column="ML"))
    assert boxcox == ("lagwright fit '/data/my demand.csv' --value ML --ma 1 --d 1 --transform boxcox "
                      "--lambda 0.25 --constant none")


def test_failed_and_unconverged_candidates_are_marked():
    series = samples.load_sample("water_demand")
    lineage, c1 = Lineage().add_root(ModelSpec(constant="mean"))
    lineage, c2 = lineage.add_root(ModelSpec(D=1, s=1090), step="new branch: none, d=0, D=1, s=1090")
    evaluations = evaluate_lineage(series, lineage)
    assert not evaluations["c2"].fit.ok and "would leave 5 values" in evaluations["c2"].fit.failure
    memo = build_memo(MemoInputs(series, lineage, evaluations, "c2", date="2026-06-02"))
    table = _tables(memo.section("lineage"))[0]
    assert table.rows[1].mark == "failed" and "FIT FAILED" in table.rows[1].cells[0]
    assert "The fit of this candidate failed" in memo_text(memo)
    assert not any(isinstance(b, FigureRow) for b in memo.section("residuals").blocks)


# ------------------------------------------------------------------ exports
def test_lineage_rows_hold_every_candidate(water):
    series, lineage, evaluations, inputs, memo = water
    rows = lineage_rows(lineage, evaluations)
    assert len(rows) == 4 and all(len(r) == len(LINEAGE_COLUMNS) for r in rows)
    by = {r[0]: dict(zip(LINEAGE_COLUMNS, r)) for r in rows}
    assert by["c4"]["parent"] == "c3" and by["c4"]["test_applies"] == "true"
    assert float(by["c4"]["aic"]) == evaluations["c4"].fit.aic
    assert by["c2"]["note"] == ODD_NOTE
    text = csv_text(LINEAGE_COLUMNS, rows, ["a comment"])
    parsed = list(csv.reader(io.StringIO(text.split("\n", 1)[1])))
    assert parsed[0] == list(LINEAGE_COLUMNS) and parsed[2][-1] == ODD_NOTE


def test_residual_rows_match_statsmodels_one_step_predictions(water, tmp_path):
    from statsmodels.tsa.arima.model import ARIMA

    series, lineage, evaluations, inputs, memo = water
    ev = evaluations["c4"]
    rows = residual_rows(series, ev)
    assert len(rows) == len(series)
    table = {name: [r[i] for r in rows] for i, name in enumerate(RESIDUAL_COLUMNS)}
    w = series.values[7:] - series.values[:-7]  # (1 − B⁷) y_t by numpy
    prepared = np.array([float(x) for x in table["prepared"][7:]])
    np.testing.assert_allclose(prepared, w, rtol=0, atol=1e-12)
    assert table["prepared"][:7] == [""] * 7
    # Reference: statsmodels ARIMA on the differenced series at the memo's estimates.
    p = ev.fit.param_dict
    ref = ARIMA(w, order=(1, 0, 0), seasonal_order=(0, 0, 1, 7), trend="n").filter(
        [p["ar.L1"], p["ma.S.L7"], p["sigma2"]])
    fitted = np.array([float(x) for x in table["fitted_prepared"][7:]])
    np.testing.assert_allclose(fitted, ref.fittedvalues, atol=1e-6)
    np.testing.assert_allclose(fitted, w - np.array([float(x) for x in table["residual"][7:]]), atol=1e-12)
    header = residual_header(series, ev, "c4")
    assert any("fitted_prepared = prepared - residual" in line for line in header)
    path = write_csv(tmp_path / "r.csv", RESIDUAL_COLUMNS, rows, header)
    raw = path.read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf# Lagwright residuals")
    assert not list(tmp_path.glob(".*.tmp"))


def test_numbers_far_from_one_are_written_with_powers_of_ten():
    # Hand-written: 6.482144736e9 to 4 significant digits is 6.482 × 10⁹.
    assert fmt_estimate(6482144736.417) == "6.482 × 10⁹"
    assert fmt_estimate(-1.438e-17) == f"{MINUS}1.438 × 10⁻¹⁷"
    assert fmt_sig(1.3263459e21) == "1.3263 × 10²¹"
    spec = ModelSpec(ar=(1,), d=1, constant="drift")
    assert fitted_equation(spec, {"const": 6.5e9, "ar.L1": 0.5}) == "(1 − 0.500 B)(1 − B) y_t = 3.25 × 10⁹ + a_t"


def test_reproduction_command_carries_import_choices(tmp_path, capsys):
    # The command printed in the memo must rebuild the same series: repairs
    # chosen on import (here, interpolating missing days) are part of it.
    import json as _json
    import shlex

    from lagwright.app.cli import main as cli_main
    from lagwright.core.evaluate import evaluate as _evaluate
    from lagwright.core.import_options import ImportOptions
    from lagwright.core.loader import load_series
    from lagwright.core.memo_content import reproduce_command
    from lagwright.core.session import DataReference
    from lagwright.core.spec import ModelSpec as _Spec

    csv = tmp_path / "gappy.csv"
    rows = [f"2024-01-{d:02d},{10 + (d % 5) * 0.5 + (d % 3)}" for d in range(1, 32) if d not in (7, 8, 20)]
    csv.write_text("day,level_m\n" + "\n".join(rows) + "\n", encoding="utf-8")
    options = ImportOptions(gaps="interpolate")
    series = load_series(csv, options=options)
    spec = _Spec(ar=(1,), constant="mean")
    ref = DataReference(path=str(csv), value_column="level_m", time_column="day", import_options=options.to_dict())
    command = reproduce_command(spec, ref, series)
    assert "--gaps interpolate" in command
    argv = shlex.split(command)[1:] + ["--json"]
    assert cli_main(argv) == 0
    out = _json.loads(capsys.readouterr().out)
    assert out["nobs"] == 31
    assert out["loglik"] == pytest.approx(_evaluate(series, spec).fit.loglik, abs=1e-8)


def test_forecast_section_states_the_back_transform_and_equals_the_core(water):
    # Reference: the core forecast and holdout functions, at the printed precision; the
    # statement of the back-transform is what the memo must carry.
    from lagwright.app.memo_cli import with_forecast
    from lagwright.core.forecast import forecast, holdout

    series, lineage, evaluations, inputs, memo = water
    with pytest.raises(KeyError):
        memo.section("forecast")  # none was asked for
    log_spec = ModelSpec(D=1, s=7, sma=(1,), ar=(1,), transform=Transform("log"))
    lin, c1 = Lineage().add_root(log_spec)
    evs = evaluate_lineage(series, lin)
    base = MemoInputs(series=series, lineage=lin, evaluations=evs, chosen_id=c1.id, date="2026-12-02",
                      units="megalitres per day")
    for back, words in (("median", "back-transformed median"), ("mean", "bias-adjusted mean")):
        memo = build_memo(with_forecast(base, 10, back, holdout=21))
        assert [s.key for s in memo.sections] == list(SECTION_KEYS)
        assert [s.number for s in memo.sections] == list(range(1, len(SECTION_KEYS) + 1))
        section = memo.section("forecast")
        text = " ".join(b.text for b in section.blocks if isinstance(b, Paragraph))
        assert words in text and "after 2023-12-31" in text
        table, score_table = _tables(section)
        fc = forecast(series, evs[c1.id].fit, 10, back)
        assert [r.cells[1] for r in table.rows][:2] == ["2024-01-01", "2024-01-02"]
        for h, row in enumerate(table.rows):
            assert float(row.cells[2]) == pytest.approx(fc.point[h], rel=5e-5)
            low, high = row.cells[4].replace(MINUS, "-").split(" – ")
            assert float(low) == pytest.approx(fc.lower95[h], rel=5e-5)
            assert float(high) == pytest.approx(fc.upper95[h], rel=5e-5)
        score = holdout(series, log_spec, 21, back)
        values = {r.cells[0]: r.cells[1] for r in score_table.rows}
        assert float(values["RMSE"]) == pytest.approx(score.rmse, rel=5e-5)
        assert float(values["MASE"]) == pytest.approx(score.mase, abs=5e-4)
        assert values["95 % interval coverage"] == f"{100 * score.coverage95:.0f} %"
    with pytest.raises(InputError, match="--holdout goes with --forecast"):
        with_forecast(base, 0, "median", holdout=5)
