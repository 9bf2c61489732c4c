"""Interventions: pulse and level-shift regressors, a regression with ARIMA errors.

References used here: statsmodels' SARIMAX with the same regressors on the
undifferenced series (a general-purpose reference library; it differences
inside the state vector, we difference explicitly), and the textbook
identities of the differenced regressors (Box & Tiao, 1975).
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import signal

from lagwright.core.errors import InputError, SpecError
from lagwright.core.evaluate import evaluate
from lagwright.core.fit import fit_exact
from lagwright.core.forecast import forecast
from lagwright.core.interventions import differenced_regressors, regressors
from lagwright.core.series import Series
from lagwright.core.spec import Intervention, ModelSpec


def _sarimax(y, exog, order):
    from statsmodels.tsa.statespace.sarimax import SARIMAX

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return SARIMAX(y, exog=exog, order=order).fit(disp=0)


def _events(n, pulse, level):
    t = np.arange(n)
    return pd.DataFrame({"pulse": (t == pulse).astype(float), "level": (t >= level).astype(float)})


@pytest.fixture
def ar1_with_events():
    # Invented: an AR(1) around 20 with a one-off jump of 6 at t = 100 and a lasting rise of 3 from t = 200.
    rng = np.random.default_rng(3)
    n = 300
    y = signal.lfilter([1.0], [1.0, -0.6], rng.standard_normal(n)) + 20.0
    y[100] += 6.0
    y[200:] += 3.0
    return Series(y, name="invented sensor with events")


def test_regression_with_ar_errors_matches_sarimax(ar1_with_events):
    # Reference: statsmodels SARIMAX, regression on [1, pulse, step] with AR(1) errors.
    y = ar1_with_events.values
    spec = ModelSpec(ar=(1,), constant="mean").with_intervention("pulse", 100).with_intervention("level", 200)
    fit = fit_exact(ar1_with_events, spec)
    assert fit.ok and fit.convergence.converged
    exog = _events(y.size, 100, 200).assign(const=1.0)
    ref = _sarimax(y, exog, (1, 0, 0))
    assert fit.loglik == pytest.approx(ref.llf, abs=1e-3)
    for ours, theirs in (("const", "const"), ("pulse.t101", "pulse"), ("level.t201", "level"), ("ar.L1", "ar.L1")):
        assert fit.param(ours).value == pytest.approx(ref.params[theirs], abs=0.01)
    # the effects were put in: the estimates are within 2 s.e. of them
    assert abs(fit.param("pulse.t101").value - 6.0) < 2 * fit.param("pulse.t101").se
    assert abs(fit.param("level.t201").value - 3.0) < 2 * fit.param("level.t201").se


def test_differenced_model_matches_sarimax_on_levels():
    # Reference: SARIMAX(0,1,1) with the undifferenced regressors; Lagwright differences series
    # and regressors explicitly, which is the same model.
    rng = np.random.default_rng(5)
    n = 240
    y = np.cumsum(rng.standard_normal(n)) + 50.0
    y[60] += 5.0
    y[150:] += 4.0
    series = Series(y, name="invented walk with events")
    spec = ModelSpec(d=1, ma=(1,)).with_intervention("pulse", 60).with_intervention("level", 150)
    fit = fit_exact(series, spec)
    ref = _sarimax(y, _events(n, 60, 150), (0, 1, 1))
    assert fit.loglik == pytest.approx(ref.llf, abs=1e-3)
    assert fit.param("pulse.t61").value == pytest.approx(ref.params["pulse"], abs=0.01)
    assert fit.param("level.t151").value == pytest.approx(ref.params["level"], abs=0.01)
    assert fit.param("ma.L1").value == pytest.approx(ref.params["ma.L1"], abs=0.01)


def test_differenced_regressors_follow_the_textbook_identities():
    # (1-B) of a pulse is +1, -1; (1-B) of a step is a pulse (Box & Tiao, 1975).
    spec = ModelSpec(d=1).with_intervention("pulse", 5).with_intervention("level", 8)
    x = regressors(spec, 12)
    np.testing.assert_array_equal(x[:, 0], (np.arange(12) == 5).astype(float))
    np.testing.assert_array_equal(x[:, 1], (np.arange(12) >= 8).astype(float))
    dx = differenced_regressors(spec, 12)
    assert dx.shape == (11, 2)
    np.testing.assert_array_equal(dx[:, 0], np.diff(x[:, 0]))
    assert dx[4, 0] == 1.0 and dx[5, 0] == -1.0 and np.count_nonzero(dx[:, 0]) == 2
    assert dx[7, 1] == 1.0 and np.count_nonzero(dx[:, 1]) == 1


def test_preview_is_close_to_the_exact_fit(ar1_with_events):
    spec = ModelSpec(ar=(1,), constant="mean").with_intervention("pulse", 100).with_intervention("level", 200)
    preview = evaluate(ar1_with_events, spec, kind="preview").fit
    exact = fit_exact(ar1_with_events, spec)
    for name in ("pulse.t101", "level.t201", "ar.L1"):
        assert preview.param(name).value == pytest.approx(exact.param(name).value, abs=2 * exact.param(name).se)


def test_a_level_shift_carries_into_the_forecast(ar1_with_events):
    spec = ModelSpec(ar=(1,), constant="mean").with_intervention("pulse", 100).with_intervention("level", 200)
    fit = fit_exact(ar1_with_events, spec)
    far = forecast(ar1_with_events, fit, 200).point[-1]
    # Far ahead an AR(1) forecast returns to its mean, which after the shift is const + level.
    assert far == pytest.approx(fit.param("const").value + fit.param("level.t201").value, abs=1e-3)


def test_spec_round_trip_nesting_and_labels():
    base = ModelSpec(ar=(1,), constant="mean")
    spec = base.with_intervention("level", 80).with_intervention("pulse", 36)
    assert spec.interventions == (Intervention(36, "pulse"), Intervention(80, "level"))
    assert ModelSpec.from_dict(spec.to_dict()) == spec
    assert ModelSpec.from_dict(base.to_dict() | {"interventions": []}) == base
    assert spec.nests(base) and not base.nests(spec)
    assert spec.n_params == base.n_params + 2 and spec.n_arma_coefficients == base.n_arma_coefficients
    assert spec.description == "ARIMA(1,0,0) + mean + pulse t37 + level t81"
    assert spec.without_intervention("pulse", 36) == base.with_intervention("level", 80)
    with pytest.raises(SpecError, match="already has a pulse at obs. 37"):
        spec.with_intervention("pulse", 36)
    with pytest.raises(SpecError, match="Unknown intervention"):
        Intervention(3, "ramp")


@pytest.mark.parametrize(
    "spec, message",
    [
        (ModelSpec(constant="mean").with_intervention("pulse", 500), "beyond the end"),
        (ModelSpec(d=1).with_intervention("pulse", 0), "cannot be estimated"),
        (ModelSpec(constant="mean").with_intervention("level", 0), "cannot be estimated"),
    ],
)
def test_interventions_that_cannot_be_estimated_say_why(ar1_with_events, spec, message):
    with pytest.raises(InputError, match=message):
        fit_exact(ar1_with_events, spec)


def test_a_pulse_on_a_missing_value_is_refused(ar1_with_events):
    values = ar1_with_events.values.copy()
    values[100] = np.nan
    gappy = Series(values, name="invented sensor with a gap")
    with pytest.raises(InputError, match="falls on a missing value"):
        fit_exact(gappy, ModelSpec(constant="mean").with_intervention("pulse", 100))
    fit = fit_exact(gappy, ModelSpec(constant="mean").with_intervention("level", 100))  # a shift is still seen after
    assert fit.ok and np.isfinite(fit.param("level.t101").se)


def test_a_large_outlier_is_hinted_as_a_pulse_and_a_weak_one_as_a_drop():
    # Invented white noise around 10 with one reading 8 sd too high at t = 70 (common practice:
    # |z| > 4 is beyond chance at these lengths).
    from lagwright.core.hints import suggest

    rng = np.random.default_rng(11)
    y = rng.standard_normal(200) + 10.0
    y[70] += 8.0
    series = Series(y, name="invented meter with one bad reading")
    spec = ModelSpec(constant="mean")
    top = suggest(evaluate(series, spec, kind="exact"), series)[0]
    assert (top.action, top.kind, top.lag) == ("add", "pulse", 70)
    assert "obs. 71" in top.evidence
    child = top.apply(spec)
    fit = evaluate(series, child, kind="exact").fit
    assert fit.param("pulse.t71").value == pytest.approx(8.0, abs=2 * fit.param("pulse.t71").se)
    # a pulse where nothing happened has not earned its place: the hint is to drop it
    idle = spec.with_intervention("pulse", 150)
    hints = suggest(evaluate(series, idle, kind="exact"), series)
    assert any((h.action, h.kind, h.lag) == ("drop", "pulse", 150) for h in hints)
    assert idle.without_intervention("pulse", 150) == spec


def test_cli_places_interventions_by_date_or_number(capsys):
    import json

    from lagwright.app.cli import main

    code = main(["fit", "sample:water_demand", "--period", "7", "--ar", "1", "--pulse", "2023-03-10",
                 "--level", "200", "--json"])
    assert code == 0
    payload = json.loads(capsys.readouterr().out)
    events = payload["spec"]["interventions"]
    assert {"kind": "level", "position": 199} in events and len(events) == 2
    names = [p["name"] for p in payload["params"]]
    assert "level.t200" in names and any(n.startswith("pulse.t") for n in names)
    assert main(["fit", "sample:water_demand", "--pulse", "1999-01-01"]) == 1  # EXIT_DATA
    assert "has no observation dated 1999-01-01" in capsys.readouterr().err


def test_the_memo_lists_each_intervention_with_its_size_significance_and_reason(capsys):
    # The memo's intervention table equals the core fit; its reproduction command refits the
    # same model from the dates it prints.
    import json
    import shlex

    from lagwright.app.cli import main
    from lagwright.core import samples
    from lagwright.core.equation import MINUS
    from lagwright.core.lineage import Lineage
    from lagwright.core.memo_content import MemoInputs, Table, build_memo, reproduce_command
    from lagwright.core.memo_inputs import evaluate_lineage
    from lagwright.core.session import DataReference

    series = samples.load_sample("water_demand")
    base = ModelSpec(D=1, s=7, sma=(1,), ar=(1,))
    lineage, c1 = Lineage().add_root(base, step="starting model")
    date_of = dict(enumerate(series.time_labels())).get
    event = base.with_intervention("level", 400)
    lineage, c2 = lineage.add_child(c1.id, event, note="New reservoir zone connected.", date_of=date_of)
    assert c2.step == f"add level shift at {series.time_labels()[400]} (obs. 401)"
    evaluations = evaluate_lineage(series, lineage)
    inputs = MemoInputs(series=series, lineage=lineage, evaluations=evaluations, chosen_id=c2.id,
                        date="2026-12-02", data=DataReference(sample="water_demand"))
    memo = build_memo(inputs)
    table = next(b for b in memo.section("model").blocks if isinstance(b, Table) and b.title == "Interventions")
    (row,) = table.rows
    fit = evaluations[c2.id].fit
    p = fit.param("level.t401")
    assert row.cells[0] == "level shift" and row.cells[1] == series.time_labels()[400]
    assert float(row.cells[2].split()[0].replace(MINUS, "-")) == pytest.approx(p.value, abs=5e-5)
    assert float(row.cells[4].replace(MINUS, "-")) == pytest.approx(p.stat, abs=5e-3)
    assert row.cells[6] == "New reservoir zone connected."
    command = reproduce_command(event, inputs.data, series)
    assert command.endswith(f"--level {series.time_labels()[400]}")
    assert main(shlex.split(command)[1:] + ["--json"]) == 0
    assert json.loads(capsys.readouterr().out)["loglik"] == pytest.approx(fit.loglik, abs=1e-8)
