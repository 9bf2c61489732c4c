"""The workbench window, driven offscreen: steps, linked panes, undo, stale fits, sessions, bad files."""

from __future__ import annotations

import threading

import numpy as np
import pytest

from lagwright.core import samples
from lagwright.core.evaluate import evaluate
from lagwright.core.spec import ModelSpec

TIMEOUT = 60_000


@pytest.fixture
def make_window(qtbot, tmp_path):
    from lagwright.app.window import MainWindow

    made = []

    def make(**kwargs):
        kwargs.setdefault("use_processes", False)
        kwargs.setdefault("recovery_path", tmp_path / "recovery.lagwright.json")
        kwargs.setdefault("ask_restore", False)
        window = MainWindow(**kwargs)
        qtbot.addWidget(window)
        made.append(window)
        return window

    yield make
    for window in made:
        qtbot.waitUntil(lambda w=window: w.service.pending() == 0, timeout=TIMEOUT)
        window.service.shutdown(wait=True)
    leftover = [t.name for t in threading.enumerate() if t.name.startswith("lagwright-")]
    assert not leftover, f"worker threads left running: {leftover}"


def wait_exact(qtbot, window, spec=None):
    spec = spec or window.current_spec
    qtbot.waitUntil(lambda: window._has_exact(spec) or spec in window.failures, timeout=TIMEOUT)
    qtbot.waitUntil(lambda: window.drawn is not None and window.drawn[0] == window.current_spec, timeout=TIMEOUT)


@pytest.fixture
def water_window(make_window, qtbot):
    window = make_window()
    assert window.open_sample("water_demand")
    wait_exact(qtbot, window)
    return window


def test_opens_on_sample_with_root_candidate(water_window):
    w = water_window
    assert len(w.lineage) == 1 and w.current_spec == ModelSpec(s=7, constant="mean")
    assert w.drawn == (w.current_spec, "exact")
    assert not w.trace_pane.is_preview


def test_add_term_creates_child_and_panes_hold_its_residuals(water_window, qtbot):
    w = water_window
    w.start_branch(ModelSpec(D=1, s=7))
    wait_exact(qtbot, w)
    w.add_term("ar", 1)
    child = w.lineage.get(w.current_id)
    assert child.parent_id is not None and child.step == "add AR lag 1"
    wait_exact(qtbot, w)
    ev = w.evaluations[child.spec]
    # Reference: the core result computed directly.
    direct = evaluate(w.series, child.spec)
    assert ev.fit.loglik == pytest.approx(direct.fit.loglik, abs=1e-8)
    _, std = direct.fit.diagnostic_residuals()
    x, y = w.trace_pane.curve.getData()
    np.testing.assert_allclose(y, std, atol=1e-10)
    heights = w.correlation_pane.acf_bars.opts["height"]
    np.testing.assert_allclose(heights, direct.diagnostics.correlogram.acf, atol=1e-12)


def test_undo_and_redo(water_window, qtbot):
    w = water_window
    root = w.current_id
    w.add_term("ma", 1)
    child = w.current_id
    assert child != root and len(w.lineage) == 2
    w.undo()
    assert w.current_id == root and len(w.lineage) == 1
    w.redo()
    assert w.current_id == child and len(w.lineage) == 2


def test_stale_fit_is_never_drawn(water_window, qtbot, monkeypatch):
    w = water_window
    drawn = []
    original = w.trace_pane.show_evaluation

    def spy(ev, series=None):
        drawn.append(ev.spec)
        return original(ev, series)

    monkeypatch.setattr(w.trace_pane, "show_evaluation", spy)
    root_spec = w.current_spec
    w.add_term("ar", 1)
    stale_spec = w.current_spec
    w.undo()  # the user moves away before the child's fits arrive
    qtbot.waitUntil(lambda: w._has_exact(stale_spec), timeout=TIMEOUT)
    qtbot.waitUntil(lambda: w.service.pending() == 0, timeout=TIMEOUT)
    qtbot.waitUntil(lambda: w.drawn == (root_spec, "exact"), timeout=TIMEOUT)
    assert stale_spec not in drawn
    assert w.current_spec == root_spec


def _record_requests(window, monkeypatch):
    kinds = []
    original = window.service.submit

    def submit(series, spec, kind, parent=None):
        kinds.append((spec, kind))
        return original(series, spec, kind, parent)

    monkeypatch.setattr(window.service, "submit", submit)
    return kinds


def test_quick_exact_fits_are_drawn_without_a_preview(water_window, qtbot, monkeypatch):
    # When this series' exact fits take the worker less than PREVIEW_HOLD, a step asks
    # for the exact fit alone: a preview would only hold the window up. (The hold is made
    # long here so that a slow machine cannot turn this into the late-fit case below.)
    from lagwright.app import window as window_module

    monkeypatch.setattr(window_module, "PREVIEW_HOLD", 60.0)
    w = water_window
    requests = _record_requests(w, monkeypatch)
    drawn = []
    w.candidate_drawn.connect(drawn.append)
    w.exact_seconds = 0.01
    w.add_term("ar", 1)
    wait_exact(qtbot, w)
    assert (w.current_spec, "exact") in requests and (w.current_spec, "preview") not in requests
    assert drawn == ["exact"] and not w.trace_pane.is_preview


def test_slow_exact_fits_show_a_preview_first(water_window, qtbot, monkeypatch):
    w = water_window
    requests = _record_requests(w, monkeypatch)
    w.exact_seconds = 5.0
    w.add_term("ar", 1)
    wait_exact(qtbot, w)
    assert (w.current_spec, "preview") in requests and (w.current_spec, "exact") in requests


def test_a_late_exact_fit_gets_its_preview_after_all(water_window, qtbot, monkeypatch):
    # Exact fits were quick, but this one takes longer than PREVIEW_HOLD: the preview is
    # asked for then and drawn, and the exact fit replaces it when it arrives.
    import time

    from lagwright.app import fit_service
    from lagwright.app.window import PREVIEW_HOLD

    original = fit_service.run_request

    def slow_exact(request):
        if request.kind == "exact":
            time.sleep(PREVIEW_HOLD * 6)
        return original(request)

    monkeypatch.setattr(fit_service, "run_request", slow_exact)
    w = water_window
    requests = _record_requests(w, monkeypatch)
    drawn = []
    w.candidate_drawn.connect(drawn.append)
    w.exact_seconds = PREVIEW_HOLD / 10
    w.add_term("ar", 1)
    assert (w.current_spec, "preview") not in requests
    qtbot.waitUntil(lambda: "preview" in drawn, timeout=TIMEOUT)
    assert (w.current_spec, "preview") in requests and w.trace_pane.is_preview
    wait_exact(qtbot, w)
    qtbot.waitUntil(lambda: "exact" in drawn, timeout=TIMEOUT)
    assert drawn == ["preview", "exact"] and not w.trace_pane.is_preview


def test_compare_view_shows_both(water_window, qtbot):
    w = water_window
    w.add_term("ar", 1)
    wait_exact(qtbot, w)
    w.compare_with_parent()
    assert w.tabs.currentWidget() is w.compare_view
    text = w.compare_view.summary_text()
    assert "ar.L1" in text


def test_session_round_trip_reproduces_numbers(water_window, qtbot, make_window, tmp_path):
    w = water_window
    w.add_term("ar", 1)
    wait_exact(qtbot, w)
    w.note_edit.setPlainText("PACF spike at lag 1 — «quoted» & <tagged>")
    path = tmp_path / "water.lagwright.json"
    assert w.save_to(path)
    saved = {c.id: w.exact_fit(c.spec).loglik for c in w.lineage.candidates}
    other = make_window()
    assert other.open_session(path)
    assert other.current_id == w.current_id
    for c in other.lineage.candidates:
        wait_exact(qtbot, other, c.spec)
        assert other.exact_fit(c.spec).loglik == pytest.approx(saved[c.id], abs=1e-8)
    assert other.lineage.get(w.current_id).note == "PACF spike at lag 1 — «quoted» & <tagged>"


def test_corrupt_session_gives_message_and_keeps_work(water_window, tmp_path):
    w = water_window
    before = w.lineage
    bad = tmp_path / "broken.lagwright.json"
    bad.write_text('{"schema": "lagwright-session", "version": 1, "candidates": [', encoding="utf-8")
    assert not w.open_session(bad)
    assert w.banner.isVisibleTo(w) and "damaged" in w.banner_label.text()
    assert w.lineage is before


def test_bad_data_file_gives_message_and_keeps_work(water_window, tmp_path):
    w = water_window
    before = w.lineage
    bad = tmp_path / "text.csv"
    bad.write_text("date,v\n2020-01-01,abc\n", encoding="utf-8")
    assert not w.open_data(bad)
    assert w.banner.isVisibleTo(w) and w.lineage is before


def test_invalid_step_gives_message(water_window):
    w = water_window
    w.set_constant("drift")  # not allowed without differencing
    assert "drift" in w.banner_label.text()
    assert len(w.lineage) == 1


def test_autosave_and_restore(water_window, qtbot, make_window):
    w = water_window
    w.add_term("ar", 1)
    qtbot.waitUntil(lambda: w.recovery_path.exists(), timeout=10_000)
    other = make_window(recovery_path=w.recovery_path)
    assert other.open_session(other.recovery_path)
    assert len(other.lineage) == 2 and other.session_path is None


def test_exact_fits_in_a_worker_process(make_window, qtbot):
    w = make_window(use_processes=True)
    assert w.service.uses_processes
    assert w.open_sample("parts_shipments")
    wait_exact(qtbot, w)
    assert w.drawn == (w.current_spec, "exact")


def test_idle_neighbours_are_fitted_ahead(make_window, qtbot):
    w = make_window(prefetch=True)
    assert w.open_sample("coldstore_temperature")
    wait_exact(qtbot, w)
    from lagwright.app.window import PREFETCH_MAX_STATE, _state_size

    neighbours = [s for s in w.neighbours(w.current_spec) if _state_size(s) <= PREFETCH_MAX_STATE]
    assert len(neighbours) == 2  # +AR 1, +MA 1; seasonal lag 144 (10-minute data, daily cycle) is too costly
    qtbot.waitUntil(lambda: all(w._has_exact(s) for s in neighbours), timeout=TIMEOUT)
    assert len(w.lineage) == 1  # fitted ahead, but not added to the lineage
    before = dict(w.latest)
    w.add_term("ar", 1)
    assert w.evaluations[w.current_spec].fit.kind == "exact"  # a cache hit: drawn without a new fit
    assert (w.current_spec, "exact") in before
    qtbot.waitUntil(lambda: w.drawn == (w.current_spec, "exact"), timeout=TIMEOUT)


def test_delete_drops_focused_chip_or_last_added(water_window, qtbot):
    w = water_window
    w.add_term("ar", 1)
    w.add_term("ma", 1)
    w.drop_last_added()  # no chip focused: drops MA 1, the term that made this candidate
    assert w.current_spec.ma == () and w.current_spec.ar == (1,)
    w.show()
    qtbot.waitExposed(w)
    w.activateWindow()
    chip = next(c for c in w.term_bar.chip_buttons if c.property("term") == ("ar", 1))
    chip.setFocus()
    qtbot.waitUntil(chip.hasFocus, timeout=2000)
    w.drop_last_added()
    assert w.current_spec.ar == ()


def test_hint_applied_as_a_step_with_its_note(water_window, qtbot):
    w = water_window
    w.start_branch(ModelSpec(D=1, s=7, constant="none"))
    wait_exact(qtbot, w)
    w.add_term("ar", 1)
    wait_exact(qtbot, w)
    hints = w.hints_view.hints
    assert hints and (hints[0].action, hints[0].kind, hints[0].lag) == ("add", "sma", 1)
    parent = w.current_id
    w.hints_view.apply_button.click()
    child = w.lineage.get(w.current_id)
    assert child.parent_id == parent and child.origin == "hint"
    assert child.spec.sma == (1,) and hints[0].evidence in child.note
    assert w.note_edit.toPlainText() == child.note


def test_import_choices_travel_with_the_session(make_window, qtbot, tmp_path):
    from lagwright.core.import_options import ImportOptions

    csv = tmp_path / "gappy.csv"
    rows = [f"2024-01-{d:02d},{10 + (d % 5) * 0.5 + (d % 3)}" for d in range(1, 32) if d not in (7, 8, 20)]
    csv.write_text("day,level_m\n" + "\n".join(rows) + "\n", encoding="utf-8")
    options = ImportOptions(gaps="interpolate")
    w = make_window()
    assert w.open_data(csv, options=options)
    wait_exact(qtbot, w)
    assert len(w.series) == 31 and not np.isnan(w.series.values).any()
    path = tmp_path / "gappy.lagwright.json"
    assert w.save_to(path)
    other = make_window()
    assert other.open_session(path)
    np.testing.assert_allclose(other.series.values, w.series.values)


def _on_forecast_tab(w, qtbot):
    """The sample's seasonal model fitted, with the forecast tab in view."""
    w.start_branch(ModelSpec(ar=(1,), sma=(1,), D=1, s=7))
    wait_exact(qtbot, w)
    w.tabs.setCurrentWidget(w.forecast_view)
    return w


def test_holdout_and_forecast_tab(water_window, qtbot):
    from lagwright.core.forecast import holdout as core_holdout

    w = _on_forecast_tab(water_window, qtbot)
    w.forecast_view.holdout_box.setValue(28)
    w.forecast_view.horizon_box.setValue(14)
    w.forecast_view.check_button.click()
    qtbot.waitUntil(lambda: w.forecast_view.result is not None, timeout=TIMEOUT)
    result = w.forecast_view.result
    # Reference: the core holdout computed directly (its own formulas are tested in tests/test_forecast.py).
    direct = core_holdout(w.series, w.current_spec, 28)
    assert result.holdout.rmse == pytest.approx(direct.rmse, rel=1e-6)
    assert result.future.horizon == 14
    assert "RMSE" in w.forecast_view.scores.text() and "MASE" in w.forecast_view.scores.text()
    # the check travels into this candidate's memo, with its back-transform stated
    inputs = w.export_actions.memo_inputs()
    assert inputs.forecast is result
    from lagwright.core.memo_content import build_memo

    section = build_memo(inputs).section("forecast")
    assert section.title == "Forecast and holdout check"


def test_rolling_origin_check_runs_in_the_background(water_window, qtbot):
    from lagwright.core.rolling import rolling_origin

    w = _on_forecast_tab(water_window, qtbot)
    w.forecast_view.horizon_box.setValue(7)
    w.forecast_view.origins_box.setValue(4)
    w.forecast_view.step_box.setValue(7)
    w.forecast_view.rolling_button.click()
    assert "re-estimating at 4 origins" in w.forecast_view.rolling_label.text()
    qtbot.waitUntil(lambda: w.forecast_view.rolling is not None, timeout=TIMEOUT)
    score = w.forecast_view.rolling
    # Reference: the core function called directly (its numbers are tested in tests/test_rolling.py).
    direct = rolling_origin(w.series, w.current_spec, 4, 7, 7)
    np.testing.assert_allclose(score.errors, direct.errors, rtol=1e-10)
    assert "Rolling origin: 4 of 4 origins" in w.forecast_view.rolling_label.text()
    w.forecast_view.origins_box.setValue(500)
    w.forecast_view.step_box.setValue(7)
    w.forecast_view.rolling_button.click()
    qtbot.waitUntil(lambda: "use fewer origins" in w.forecast_view.rolling_label.text(), timeout=TIMEOUT)


def test_order_screen_dialog_adds_candidates(make_window, qtbot):
    w = make_window()
    assert w.open_sample("coldstore_temperature")
    wait_exact(qtbot, w)
    w.start_branch(ModelSpec(constant="mean"))  # no season for the screen
    wait_exact(qtbot, w)
    dialog = w.open_screen(workers=1)
    dialog.boxes["p"].setValue(2)
    dialog.boxes["q"].setValue(1)
    dialog.start()
    qtbot.waitUntil(lambda: dialog.result is not None, timeout=TIMEOUT)
    dialog.wait()
    best = dialog.result.rows[0].spec
    assert (len(best.ar), len(best.ma)) == (2, 1)  # the sample's true order (sample_series/README.md)
    assert dialog.table.rowCount() == 6 and dialog.progress.value() == 100
    dialog.add_button.click()
    added = w.lineage.get(w.current_id)
    assert added.origin == "screen" and added.spec == best
    dialog.done(0)


def test_order_screen_workers_are_started_once_and_stopped_with_the_window(make_window, qtbot):
    w = make_window()
    assert w.open_sample("coldstore_temperature")
    wait_exact(qtbot, w)
    w.start_branch(ModelSpec(constant="mean"))
    wait_exact(qtbot, w)
    first = w.open_screen(workers=2)
    assert first.running is not None and first.running.count == 2
    first.boxes["p"].setValue(1)
    first.boxes["q"].setValue(1)
    first.start()
    qtbot.waitUntil(lambda: first.result is not None, timeout=TIMEOUT)
    first.wait()
    first.done(0)
    second = w.open_screen(workers=2)
    assert second.running is first.running  # kept: no second start-up
    second.done(0)
    first.running.shutdown(wait=True)  # as if the workers had died: the next screen gets new ones
    third = w.open_screen(workers=2)
    assert third.running is not first.running and third.running.usable()
    third.done(0)
    pool = third.running.pool
    w.close()
    assert w._screen_workers is None
    with pytest.raises(RuntimeError):  # shut down with the window
        pool.submit(abs, -1)


def test_order_screen_cancel(make_window, qtbot):
    w = make_window()
    assert w.open_sample("coldstore_temperature")
    wait_exact(qtbot, w)
    dialog = w.open_screen(workers=1)
    dialog._cancel.set()
    dialog.start()
    dialog._cancel.set()
    qtbot.waitUntil(lambda: dialog.run_button.isEnabled(), timeout=TIMEOUT)
    dialog.wait()
    dialog.done(0)


def test_compare_view_forecasts_and_akaike_weights(water_window, qtbot):
    from lagwright.core.forecast import compare_forecasts

    w = water_window
    w.start_branch(ModelSpec(sma=(1,), D=1, s=7))
    wait_exact(qtbot, w)
    w.add_term("ar", 1)
    wait_exact(qtbot, w)
    w.compare_with_parent()
    a, b = w.compare_view.pair()
    fa, fb = w.exact_fit(w.lineage.get(a).spec), w.exact_fit(w.lineage.get(b).spec)
    # Burnham & Anderson (2002, §2.9): w = exp(-Δ/2) / Σ exp(-Δ/2) over the pair's AICc.
    delta = np.array([fa.aicc, fb.aicc]) - min(fa.aicc, fb.aicc)
    weights = np.exp(-delta / 2) / np.exp(-delta / 2).sum()
    assert w.compare_view.cell_text("akaike_weight", 1) == f"{weights[0]:.3f}"
    assert w.compare_view.cell_text("akaike_weight", 2) == f"{weights[1]:.3f}"
    w.compare_view.forecast_holdout.setValue(56)
    w.compare_view.forecast_button.click()
    qtbot.waitUntil(lambda: getattr(w.compare_view, "forecast_result", None) is not None, timeout=TIMEOUT)
    shown = w.compare_view.forecast_result
    a, b = w.compare_view.pair()
    direct = compare_forecasts(w.series, w.lineage.get(a).spec, w.lineage.get(b).spec, 56)
    assert shown.test.p == pytest.approx(direct.test.p, rel=1e-6)
    assert "Diebold-Mariano" in w.compare_view.forecast_label.text()


def test_pulse_at_a_selected_outlier_is_a_step_with_its_date(water_window, qtbot, make_window, tmp_path):
    # The largest standardized residual of the root is selected, as a click on it would;
    # "+Pulse" then makes a child with a pulse regressor there, named by its date.
    w = water_window
    root = w.current_spec
    z = w.evaluation_for(w.current_id).fit.std_residuals
    offset = w.evaluation_for(w.current_id).fit.offset
    position = int(np.nanargmax(np.abs(z))) + offset
    assert not w.term_bar.event_buttons["pulse"].isEnabled()
    w.selection.select([position])
    assert w.term_bar.event_buttons["pulse"].isEnabled()
    w.term_bar.event_buttons["pulse"].click()
    wait_exact(qtbot, w)
    child = w.lineage.get(w.current_id)
    assert child.parent_id is not None and w.lineage.get(child.parent_id).spec == root
    assert child.spec.interventions[0].position == position and child.spec.interventions[0].kind == "pulse"
    date = w.series.time_labels()[position]
    assert child.step == f"add pulse at {date} (obs. {position + 1})"
    fit = w.exact_fit(child.spec)
    name = f"pulse.t{position + 1}"
    assert name in w.tests_panel.tables["params"].keys()
    row = w.tests_panel.tables["params"].row_of(name)
    assert w.tests_panel.tables["params"].text(row, 0) == f"pulse {date}"
    assert abs(fit.param(name).stat) > 2  # the selected outlier is a real one-off effect
    assert any(chip.property("intervention") == ("pulse", position) for chip in w.term_bar.chip_buttons)
    # the session keeps it: reopened, the same candidate and the same numbers
    path = tmp_path / "event.lagwright.json"
    assert w.save_to(path)
    other = make_window()
    assert other.open_session(path)
    wait_exact(qtbot, other)
    assert other.current_spec == child.spec and other.lineage.get(child.id).step == child.step
    assert other.exact_fit(child.spec).loglik == pytest.approx(fit.loglik, abs=1e-8)
    # Delete drops what the step added: back to a candidate with the root's spec
    w.drop_last_added()
    qtbot.waitUntil(lambda: w.current_spec == root, timeout=TIMEOUT)


def test_cycles_are_collected_on_the_gui_thread_only(water_window, qtbot):
    # Automatic collection is off while a window lives; a GUI-thread timer collects instead,
    # so Qt objects in reference cycles are never destroyed in a fit thread.
    import gc
    import weakref

    from PySide6.QtCore import QObject

    assert not gc.isenabled()
    holder = QObject()
    holder.cycle = holder  # a reference cycle holding a Qt object
    gone = weakref.ref(holder)
    del holder
    kept = [[] for _ in range(5000)]  # live allocations past the first-generation threshold
    qtbot.waitUntil(lambda: gone() is None, timeout=15000)
    assert len(kept) == 5000


def test_an_intervention_the_data_cannot_estimate_is_refused_without_a_step(water_window):
    w = water_window  # the root has no differencing, but a mean: a level shift at the first value is the mean
    before = len(w.lineage)
    w.add_intervention("level", 0)
    assert len(w.lineage) == before
    assert "cannot be estimated" in w.banner_label.text()


def test_a_pulse_hint_applied_names_the_date_in_the_step(water_window, qtbot):
    from lagwright.core.hints import Hint

    w = water_window
    hint = Hint("add", "pulse", 120, "A residual far beyond chance.", "z = +4.50 at obs. 121", 2.5)
    w.apply_hint(hint)
    child = w.lineage.get(w.current_id)
    date = w.series.time_labels()[120]
    assert child.origin == "hint" and child.step == f"add pulse at {date} (obs. 121)"
    assert child.note == "A residual far beyond chance. (z = +4.50 at obs. 121)"
    wait_exact(qtbot, w)
