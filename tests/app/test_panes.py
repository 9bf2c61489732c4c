"""Plot panes: what they draw equals the core result and reference libraries; preview, selection, clear.

Every pane is made per test through ``qtbot`` (pytest-qt), offscreen. The
evaluations are computed once per module (they hold no Qt object).
"""

from __future__ import annotations

import dataclasses
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest
from scipy import signal, stats
from statsmodels.graphics.gofplots import plotting_pos
from statsmodels.tsa.stattools import acf as sm_acf
from statsmodels.tsa.stattools import pacf as sm_pacf

from lagwright.app import theme
from lagwright.app.panes import (
    CorrelationPane,
    CumulativePeriodogramPane,
    IdentificationPane,
    NormalQuantilePane,
    ResidualHistogramPane,
    ResidualSelection,
    ResidualTracePane,
    RootMapPane,
)
from lagwright.app.panes.quantile import normal_envelope
from lagwright.core.diagnostics import diagnose
from lagwright.core.evaluate import Evaluation, evaluate
from lagwright.core.polynomials import Root
from lagwright.core.prepare import prepare
from lagwright.core.result import Fit, failed_fit
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec

RESIDUAL_PANES = (
    ResidualTracePane,
    ResidualHistogramPane,
    NormalQuantilePane,
    CorrelationPane,
    CumulativePeriodogramPane,
    RootMapPane,
)
#: Panes that draw individual observations and so highlight a selection.
OBSERVATION_PANES = (ResidualTracePane, ResidualHistogramPane, NormalQuantilePane)
SPEC = ModelSpec(ar=(1, 2), ma=(1,), d=1)


# ------------------------------------------------------------------ fixtures
@pytest.fixture(scope="module")
def series() -> Series:
    """A seeded random walk of 300 values with one shock, so the residuals hold outliers."""
    rng = np.random.default_rng(20240611)
    y = np.cumsum(rng.standard_normal(300))
    y[120] += 7.0
    return Series(y, name="invented test walk")


@pytest.fixture(scope="module")
def exact_ev(series) -> Evaluation:
    return evaluate(series, SPEC, kind="exact")


@pytest.fixture(scope="module")
def preview_ev(series) -> Evaluation:
    return evaluate(series, SPEC, kind="preview")


def make(qtbot, cls, selection=None, size=(640, 420)):
    pane = cls(selection)
    qtbot.addWidget(pane)
    pane.resize(*size)
    pane.show()
    qtbot.waitExposed(pane)
    return pane


def std_residuals(ev: Evaluation) -> np.ndarray:
    return ev.fit.diagnostic_residuals()[1]


def pen_colour(item) -> str:
    return item.opts["pen"].color().name()


# --------------------------------------------------------------------- trace
def test_trace_draws_the_standardized_residuals(qtbot, series, exact_ev):
    pane = make(qtbot, ResidualTracePane)
    pane.show_evaluation(exact_ev, series)
    x, y = pane.curve.getOriginalDataset()
    np.testing.assert_array_equal(y, std_residuals(exact_ev))
    np.testing.assert_array_equal(x, exact_ev.fit.diagnostic_positions())
    assert not pane.is_showing_message


def test_trace_marks_two_sigma_lines_and_outliers(qtbot, series, exact_ev):
    pane = make(qtbot, ResidualTracePane)
    pane.show_evaluation(exact_ev, series)
    # σ = 1 for standardized residuals, so the ±2σ lines sit at ±2 (common practice).
    assert (pane.upper_line.value(), pane.lower_line.value()) == (2.0, -2.0)
    assert pane.upper_line.label.toPlainText() == "+2σ"
    # Outliers: |z| > 3 (common practice), found here with plain numpy.
    z = std_residuals(exact_ev)
    expected = np.flatnonzero(np.abs(z) > 3.0)
    assert expected.size >= 1  # the shock at observation 120
    ox, oy = pane.outlier_item.getData()
    np.testing.assert_array_equal(oy, z[expected])
    np.testing.assert_array_equal(ox, exact_ev.fit.diagnostic_positions()[expected])


def test_trace_uses_a_date_axis_for_a_dated_series(qtbot, series):
    import pyqtgraph as pg

    times = np.datetime64("2003-04-01") + np.arange(len(series)).astype("timedelta64[D]")
    dated = Series(series.values, times=times, name="invented dated walk")
    ev = evaluate(dated, SPEC, kind="preview")
    pane = make(qtbot, ResidualTracePane)
    pane.show_evaluation(ev, dated)
    assert isinstance(pane.plot.getAxis("bottom"), pg.DateAxisItem)
    x, _ = pane.curve.getOriginalDataset()
    # pandas: a naive Timestamp's .timestamp() counts seconds since the epoch as UTC.
    expected = [pd.Timestamp(t).timestamp() for t in times[ev.fit.diagnostic_positions()]]
    np.testing.assert_allclose(x, expected, rtol=0, atol=1e-6)
    assert pane.time_axis_view_box() is pane.plot.getViewBox()


# ----------------------------------------------------------------- histogram
def test_histogram_counts_match_numpy_and_area_is_one(qtbot, series, exact_ev):
    pane = make(qtbot, ResidualHistogramPane)
    pane.show_evaluation(exact_ev, series)
    z = std_residuals(exact_ev)
    edges = pane.edges
    counts, _ = np.histogram(z, bins=edges)  # numpy.histogram, same bins
    np.testing.assert_array_equal(pane.counts, counts)
    heights = np.asarray(pane.bars.opts["height"])
    np.testing.assert_allclose(heights, np.histogram(z, bins=edges, density=True)[0], rtol=1e-12)
    assert np.sum(heights * np.diff(edges)) == pytest.approx(1.0, abs=1e-12)


def test_histogram_bins_follow_freedman_diaconis(qtbot, series, exact_ev):
    pane = make(qtbot, ResidualHistogramPane)
    pane.show_evaluation(exact_ev, series)
    z = std_residuals(exact_ev)
    # numpy's "fd" rule (Freedman & Diaconis, 1981): width 2·IQR·n^(-1/3); we cap the count to 10..60.
    fd_bins = np.histogram_bin_edges(z, bins="fd").size - 1
    assert pane.edges.size - 1 == min(max(fd_bins, 10), 60)
    np.testing.assert_allclose(pane.edges[[0, -1]], [z.min(), z.max()])


def test_histogram_curve_is_the_standard_normal_density(qtbot, series, exact_ev):
    pane = make(qtbot, ResidualHistogramPane)
    pane.show_evaluation(exact_ev, series)
    x, y = pane.normal_curve.getOriginalDataset()
    np.testing.assert_allclose(y, stats.norm.pdf(x), rtol=1e-12)  # scipy.stats.norm


# ------------------------------------------------------------------ quantile
def test_quantile_plot_uses_blom_positions_and_sorted_residuals(qtbot, series, exact_ev):
    pane = make(qtbot, NormalQuantilePane)
    pane.show_evaluation(exact_ev, series)
    z = std_residuals(exact_ev)
    x, y = pane.points.getOriginalDataset()
    # statsmodels' plotting_pos with a = 3/8 is Blom's (i - 3/8)/(n + 1/4).
    np.testing.assert_allclose(x, stats.norm.ppf(plotting_pos(z.size, 3.0 / 8.0)), rtol=1e-12)
    np.testing.assert_array_equal(y, np.sort(z))
    rx, ry = pane.reference_line.getOriginalDataset()
    np.testing.assert_array_equal(rx, ry)  # y = x


def test_quantile_envelope_is_the_beta_order_statistic_band(qtbot, series, exact_ev):
    pane = make(qtbot, NormalQuantilePane)
    pane.show_evaluation(exact_ev, series)
    n = std_residuals(exact_ev).size
    ranks = np.arange(1, n + 1)
    # U_(i) ~ Beta(i, n - i + 1) (David & Nagaraja, 2003, §2.1), mapped by the normal quantile.
    _, lower = pane.envelope_lower.getOriginalDataset()
    _, upper = pane.envelope_upper.getOriginalDataset()
    np.testing.assert_allclose(lower, stats.norm.ppf(stats.beta.ppf(0.025, ranks, n - ranks + 1)), rtol=1e-10)
    np.testing.assert_allclose(upper, stats.norm.ppf(stats.beta.ppf(0.975, ranks, n - ranks + 1)), rtol=1e-10)
    # The shaded band is the polygon along the lower line and back along the upper one.
    path = pane.envelope_fill.path()
    corners = np.array([(path.elementAt(i).x, path.elementAt(i).y) for i in range(path.elementCount())])
    x, _ = pane.envelope_lower.getOriginalDataset()
    np.testing.assert_allclose(corners[:n], np.column_stack([x, lower]), atol=1e-9)
    np.testing.assert_allclose(corners[n:2 * n], np.column_stack([x[::-1], upper[::-1]]), atol=1e-9)
    assert pane.envelope_fill.isVisible()


def test_quantile_envelope_covers_95_percent_of_simulated_order_statistics():
    # Monte Carlo check of the pointwise envelope: 4000 seeded samples of n = 300 standard
    # normals; coverage of each checked rank is binomial(4000, 0.95), sd 0.0034, tolerance 4 sd.
    n, reps = 300, 4000
    ranks, lower, upper = normal_envelope(n)
    draws = np.sort(np.random.default_rng(7).standard_normal((reps, n)), axis=1)
    for r in (1, 15, 150, 286, 300):
        i = r - 1
        inside = np.mean((draws[:, i] >= lower[i]) & (draws[:, i] <= upper[i]))
        assert inside == pytest.approx(0.95, abs=4 * np.sqrt(0.95 * 0.05 / reps))


# --------------------------------------------------------------- correlation
def test_correlation_bars_equal_the_correlogram_and_statsmodels(qtbot, series, exact_ev):
    pane = make(qtbot, CorrelationPane)
    pane.show_evaluation(exact_ev, series)
    cg = exact_ev.diagnostics.correlogram
    lags, acf_heights = pane.acf_bars.getData()
    _, pacf_heights = pane.pacf_bars.getData()
    np.testing.assert_array_equal(lags, cg.lags)
    np.testing.assert_array_equal(acf_heights, cg.acf)
    np.testing.assert_array_equal(pacf_heights, cg.pacf)
    z = std_residuals(exact_ev)
    # statsmodels: ACF with divisor n (FFT) and Yule-Walker PACF from the same (biased) ACF.
    np.testing.assert_allclose(acf_heights, sm_acf(z, nlags=cg.nlags, fft=True)[1:], atol=1e-10)
    np.testing.assert_allclose(pacf_heights, sm_pacf(z, nlags=cg.nlags, method="ywm")[1:], atol=1e-8)


def test_correlation_band_is_two_over_root_n_and_outside_bars_stand_out(qtbot, series, exact_ev):
    pane = make(qtbot, CorrelationPane)
    pane.show_evaluation(exact_ev, series)
    n = std_residuals(exact_ev).size
    for lines in (pane.acf_band_lines, pane.pacf_band_lines):
        # ±2/√n: the usual approximate 95 % band for white noise (common practice).
        assert sorted(line.value() for line in lines) == pytest.approx([-2 / np.sqrt(n), 2 / np.sqrt(n)], rel=1e-12)
    outside = 0
    for bars in (pane.acf_bars, pane.pacf_bars):
        _, heights = bars.getData()
        colours = [b.color().name() for b in bars.opts["brushes"]]
        for h, c in zip(heights, colours):
            assert (c == theme.ATTENTION) == (abs(h) > 2 / np.sqrt(n))
            outside += abs(h) > 2 / np.sqrt(n)
    assert outside >= 1  # this series has one PACF bar beyond the band
    assert pane.season_marks == ()


def test_correlation_marks_seasonal_lags(qtbot, series):
    spec = ModelSpec(ar=(1,), sar=(1,), s=12)
    ev = evaluate(series, spec, kind="preview")
    assert ev.diagnostics.season == 12
    pane = make(qtbot, CorrelationPane)
    pane.show_evaluation(ev, series)
    nlags = ev.diagnostics.correlogram.nlags
    expected = list(range(12, nlags + 1, 12)) * 2  # both plots
    assert sorted(m.value() for m in pane.season_marks) == sorted(expected)


# --------------------------------------------------------------- periodogram
def test_periodogram_curve_equals_core_and_scipy(qtbot, series, exact_ev):
    pane = make(qtbot, CumulativePeriodogramPane)
    pane.show_evaluation(exact_ev, series)
    cp = exact_ev.diagnostics.cumulative_periodogram
    f, c = pane.curve.getOriginalDataset()
    np.testing.assert_array_equal(c, cp.cumulative)
    np.testing.assert_array_equal(f, cp.frequencies)
    # scipy.signal.periodogram at the Fourier frequencies j/n, j = 1..q, cumulated and normalised.
    z = std_residuals(exact_ev)
    freqs, power = signal.periodogram(z, detrend="constant")
    q = (z.size - 1) // 2
    np.testing.assert_allclose(f, freqs[1 : q + 1], rtol=1e-12)
    np.testing.assert_allclose(c, np.cumsum(power[1 : q + 1]) / power[1 : q + 1].sum(), atol=1e-12)


def test_periodogram_bands_are_kolmogorov_smirnov_and_max_deviation_marked(qtbot, series, exact_ev):
    pane = make(qtbot, CumulativePeriodogramPane)
    pane.show_evaluation(exact_ev, series)
    cp = exact_ev.diagnostics.cumulative_periodogram
    rx, ry = pane.reference_line.getOriginalDataset()
    np.testing.assert_allclose(ry, rx * cp.n / cp.q, rtol=1e-12)  # the line j/q at f = j/n
    for alpha, (lower, upper) in pane.band_lines.items():
        _, lo = lower.getOriginalDataset()
        _, hi = upper.getOriginalDataset()
        np.testing.assert_allclose(hi - ry, cp.band[alpha], rtol=1e-12)
        np.testing.assert_allclose(ry - lo, cp.band[alpha], rtol=1e-12)
        # scipy.stats.kstwobign: asymptotic Kolmogorov critical values (table values 1.22/1.36/1.63).
        assert cp.band[alpha] * np.sqrt(cp.q) == pytest.approx(stats.kstwobign.isf(alpha), abs=0.005)
    styles = {alpha: pair[0].opts["pen"].style() for alpha, pair in pane.band_lines.items()}
    assert styles[0.05] != styles[0.01] and styles[0.01] == styles[0.10]
    mx, my = pane.max_deviation_item.getOriginalDataset()
    deviation = np.abs(cp.cumulative - cp.reference)
    j = int(np.argmax(deviation))
    assert tuple(mx) == (cp.frequencies[j],) * 2
    assert abs(my[1] - my[0]) == pytest.approx(deviation.max(), rel=1e-12)
    assert f"{deviation.max():.3f}" in pane.max_deviation_label.toPlainText()


# --------------------------------------------------------------------- roots
def _sorted_points(z: np.ndarray) -> np.ndarray:
    return np.array(sorted(z, key=lambda v: (round(v.real, 9), round(v.imag, 9))))


def test_root_map_points_are_the_fit_roots(qtbot, series, exact_ev):
    pane = make(qtbot, RootMapPane)
    pane.show_evaluation(exact_ev, series)
    fit = exact_ev.fit
    p = fit.param_dict
    ax, ay = pane.ar_item.getData()
    mx, my = pane.ma_item.getData()
    # numpy.roots of 1 - φ1 B - φ2 B² and 1 + θ1 B (roots in the B plane; Brockwell & Davis, 2016, §3.1).
    ar_expected = np.roots([-p["ar.L2"], -p["ar.L1"], 1.0])
    ma_expected = np.roots([p["ma.L1"], 1.0])
    np.testing.assert_allclose(_sorted_points(ax + 1j * ay), _sorted_points(ar_expected), rtol=1e-9)
    np.testing.assert_allclose(_sorted_points(mx + 1j * my), _sorted_points(ma_expected), rtol=1e-9)
    assert sorted(ax + 1j * ay, key=abs) == pytest.approx(sorted((r.value for r in fit.roots if r.side == "AR"), key=abs))
    assert pane.plot.getViewBox().state["aspectLocked"] == 1.0


def test_root_map_inverse_view_shows_one_over_z(qtbot, series, exact_ev):
    pane = make(qtbot, RootMapPane)
    pane.show_evaluation(exact_ev, series)
    pane.set_inverse(True)
    ax, ay = pane.ar_item.getData()
    expected = np.array([1.0 / r.value for r in exact_ev.fit.roots if r.side == "AR"])
    np.testing.assert_allclose(_sorted_points(ax + 1j * ay), _sorted_points(expected), rtol=1e-12)
    assert np.all(np.hypot(ax, ay) < 1.0)  # stationary: inverse roots inside the unit circle
    pane.set_inverse(False)
    ax, _ = pane.ar_item.getData()
    assert np.max(np.abs(ax)) > 1.0


def test_root_map_rings_roots_near_the_unit_circle(qtbot, series, exact_ev):
    near = Root("ar", complex(1.02, 0.0), 1.02)  # modulus below 1.05: near the unit circle
    far = Root("ma", complex(-2.5, 0.0), 2.5)
    fit = dataclasses.replace(exact_ev.fit, roots=(near, far))
    pane = make(qtbot, RootMapPane)
    pane.show_evaluation(Evaluation(fit=fit, diagnostics=exact_ev.diagnostics), series)
    nx, ny = pane.near_unit_item.getData()
    assert list(zip(nx, ny)) == [(1.02, 0.0)]
    assert pane.near_unit_item.opts["pen"].color().name() == theme.ATTENTION


# ------------------------------------------------------------ identification
def test_identification_shows_the_prepared_series_and_its_correlogram(qtbot, series):
    pane = make(qtbot, IdentificationPane)
    pane.show_prepared(series, SPEC)
    w = prepare(series, SPEC).values
    x, y = pane.curve.getOriginalDataset()
    np.testing.assert_array_equal(y, w)
    np.testing.assert_allclose(y, np.diff(series.values), rtol=1e-12)  # d = 1 is numpy.diff
    np.testing.assert_array_equal(x, np.arange(1, len(series)))  # positions in the original series
    lags, heights = pane.acf_bars.getData()
    np.testing.assert_allclose(heights, sm_acf(w, nlags=int(lags[-1]), fft=True)[1:], atol=1e-10)  # statsmodels
    _, pheights = pane.pacf_bars.getData()
    np.testing.assert_allclose(pheights, sm_pacf(w, nlags=int(lags[-1]), method="ywm")[1:], atol=1e-8)
    for line in pane.acf_band_lines:
        assert abs(line.value()) == pytest.approx(2 / np.sqrt(w.size), rel=1e-12)
    assert pane.time_axis_view_box() is pane.trace_plot.getViewBox()


def test_identification_marks_seasonal_lags(qtbot, series):
    spec = ModelSpec(d=1, D=1, s=12)
    pane = make(qtbot, IdentificationPane)
    pane.show_prepared(series, spec)
    nlags = int(pane.acf_bars.getData()[0][-1])
    assert nlags >= 24  # two seasons shown
    assert sorted({m.value() for m in pane.season_marks}) == list(range(12, nlags + 1, 12))


def test_identification_shows_an_input_error_as_a_message(qtbot, series):
    short = Series(series.values[:20], name="invented short walk")
    pane = make(qtbot, IdentificationPane)
    pane.show_prepared(series, SPEC)
    pane.show_prepared(short, ModelSpec(d=1, D=1, s=12))
    assert pane.is_showing_message
    assert "at least 16 are needed" in pane.message
    assert all(item is None for item in pane.data_items().values())
    assert all(not item.isVisible() for plot in pane.plots() for item in plot.items)  # kept items are only hidden


# ------------------------------------------------------------------- preview
@pytest.mark.parametrize("cls", RESIDUAL_PANES)
def test_preview_is_marked_and_exact_is_not(qtbot, cls, series, preview_ev, exact_ev):
    pane = make(qtbot, cls)
    pane.show_evaluation(preview_ev, series)
    assert pane.is_preview and pane.preview_badge.isVisibleTo(pane)
    assert pane.preview_badge.text() == "preview"
    pane.show_evaluation(exact_ev, series)
    assert not pane.is_preview and not pane.preview_badge.isVisibleTo(pane)


def test_preview_data_are_drawn_in_the_preview_colour(qtbot, series, preview_ev, exact_ev):
    pane = make(qtbot, ResidualTracePane)
    pane.show_evaluation(preview_ev, series)
    assert pen_colour(pane.curve) == theme.PREVIEW
    pane.show_evaluation(exact_ev, series)
    assert pen_colour(pane.curve) == theme.DATA
    pane.set_preview(True)
    assert pen_colour(pane.curve) == theme.PREVIEW and pane.preview_badge.isVisibleTo(pane)


# ----------------------------------------------------------------- selection
def _all_panes(qtbot, selection):
    panes = {cls: make(qtbot, cls, selection, size=(480, 320)) for cls in RESIDUAL_PANES + (IdentificationPane,)}
    return panes


def _show_all(panes, series, ev):
    for cls, pane in panes.items():
        if cls is IdentificationPane:
            pane.show_prepared(series, SPEC)
        else:
            pane.show_evaluation(ev, series)


def test_a_click_selects_one_observation_and_every_pane_highlights_it(qtbot, series, exact_ev):
    selection = ResidualSelection()
    panes = _all_panes(qtbot, selection)
    _show_all(panes, series, exact_ev)
    z = std_residuals(exact_ev)
    positions = exact_ev.fit.diagnostic_positions()
    i = 57
    p = int(positions[i])
    trace = panes[ResidualTracePane]
    with qtbot.waitSignal(selection.selection_changed) as blocker:
        picked = trace.click_at(trace.x[i], trace.z[i])
    assert picked == (p,) and blocker.args == [(p,)] and selection.positions == (p,)
    for cls in OBSERVATION_PANES + (IdentificationPane,):
        assert panes[cls].highlighted_positions() == (p,), cls.__name__
    for cls in (CorrelationPane, CumulativePeriodogramPane, RootMapPane):
        assert panes[cls].highlighted_positions() == ()
    sx, sy = trace.selected_item.getData()
    assert (list(sx), list(sy)) == ([float(p)], [z[i]])
    hist = panes[ResidualHistogramPane]
    (b,) = hist.selected_bins
    assert hist.edges[b] <= z[i] <= hist.edges[b + 1]
    assert list(hist.selected_ticks.getData()[0]) == [z[i]]
    quant = panes[NormalQuantilePane]
    qx, qy = quant.selected_item.getData()
    rank = int(np.sum(z < z[i]))  # 0-based rank of z[i] (no ties in continuous data)
    assert qy[0] == z[i] and qx[0] == pytest.approx(stats.norm.ppf((rank + 1 - 0.375) / (z.size + 0.25)))
    ident = panes[IdentificationPane]
    ix, iy = ident.selected_item.getData()
    assert (ix[0], iy[0]) == (float(p), pytest.approx(series.values[p] - series.values[p - 1]))


def test_a_bar_click_selects_its_observations_everywhere(qtbot, series, exact_ev):
    selection = ResidualSelection()
    panes = _all_panes(qtbot, selection)
    _show_all(panes, series, exact_ev)
    hist = panes[ResidualHistogramPane]
    z = std_residuals(exact_ev)
    b = int(np.argmax(hist.counts))
    lo, hi = hist.edges[b], hist.edges[b + 1]
    hist.click_at((lo + hi) / 2, hist.density[b] / 2)
    in_bin = (z >= lo) & ((z < hi) if b < hist.edges.size - 2 else (z <= hi))
    expected = tuple(int(p) for p in exact_ev.fit.diagnostic_positions()[in_bin])
    assert selection.positions == expected and len(expected) == hist.counts[b]
    assert panes[ResidualTracePane].highlighted_positions() == expected
    assert panes[NormalQuantilePane].highlighted_positions() == expected
    assert list(hist.selected_bins) == [b]
    hist.click_at(hist.edges[-1] + 1.0, 0.01)  # a click on no bar clears the selection
    assert selection.positions == ()
    assert all(p.highlighted_positions() == () for p in panes.values())


def test_a_real_mouse_click_reaches_the_selection(qtbot, series, exact_ev):
    from PySide6.QtCore import QPointF, Qt

    selection = ResidualSelection()
    pane = make(qtbot, ResidualTracePane, selection)
    pane.show_evaluation(exact_ev, series)
    i = int(np.argmax(np.abs(pane.z)))  # the shock: far from its neighbours on screen
    vb = pane.plot.getViewBox()
    where = pane.graphics.mapFromScene(vb.mapViewToScene(QPointF(pane.x[i], pane.z[i])))
    qtbot.mouseClick(pane.graphics.viewport(), Qt.MouseButton.LeftButton, pos=where)
    assert selection.positions == (int(pane.positions[i]),)


def test_selection_model_breaks_feedback_loops(qtbot):
    selection = ResidualSelection()
    seen = []

    def echo(positions):
        seen.append(positions)
        selection.select((1, 2, 3))  # a careless slot writing back: ignored

    selection.selection_changed.connect(echo)
    assert selection.select([5, 4, 5]) is True
    assert seen == [(4, 5)] and selection.positions == (4, 5)
    assert selection.select((4, 5)) is False  # no change, no signal
    assert seen == [(4, 5)]


def test_highlight_follows_a_selection_set_before_drawing(qtbot, series, exact_ev):
    selection = ResidualSelection()
    p = int(exact_ev.fit.diagnostic_positions()[10])
    selection.select(p)
    pane = make(qtbot, NormalQuantilePane, selection)
    pane.show_evaluation(exact_ev, series)
    assert pane.highlighted_positions() == (p,)


# --------------------------------------------------------------------- clear
@pytest.mark.parametrize("cls", RESIDUAL_PANES)
def test_a_failed_fit_clears_the_pane_and_shows_why(qtbot, cls, series, exact_ev, preview_ev):
    pane = make(qtbot, cls, ResidualSelection())
    pane.show_evaluation(preview_ev, series)
    failed = Evaluation(fit=failed_fit(SPEC, "exact", "the likelihood could not be evaluated (test)."), diagnostics=None)
    pane.show_evaluation(failed, series)
    assert pane.is_showing_message
    assert pane.message == "Fit failed: the likelihood could not be evaluated (test)."
    assert all(item is None for item in pane.data_items().values())
    # nothing stale stays visible (a pane may keep hidden items to reuse them)
    assert not [item for plot in pane.plots() for item in plot.items if item.isVisible()]
    assert not pane.preview_badge.isVisibleTo(pane)
    pane.show_evaluation(exact_ev, series)  # and it draws again afterwards
    assert not pane.is_showing_message and pane.message == ""


@pytest.mark.parametrize("cls", (CorrelationPane, CumulativePeriodogramPane))
def test_missing_diagnostics_show_their_reason(qtbot, cls, series, exact_ev):
    pane = make(qtbot, cls)
    pane.show_evaluation(Evaluation(fit=exact_ev.fit, diagnostics=None, diagnostics_error="checks failed (test)"), series)
    assert pane.message == "checks failed (test)"


def test_clear_shows_a_plain_message(qtbot, series, exact_ev):
    pane = make(qtbot, ResidualTracePane)
    pane.show_evaluation(exact_ev, series)
    pane.clear("fitting…")
    assert pane.is_showing_message and pane.message_label.text() == "fitting…"
    assert pane.curve is None and not [item for item in pane.plot.items if item.isVisible()]


@pytest.mark.parametrize("cls", RESIDUAL_PANES)
def test_cover_hides_every_drawn_item_until_the_next_draw(qtbot, cls, series, exact_ev, preview_ev):
    pane = make(qtbot, cls)
    pane.show_evaluation(exact_ev, series)
    pane.cover("AR(1): fitting…")
    assert pane.is_showing_message and pane.message == "AR(1): fitting…"
    assert pane.status_label.text() == "AR(1): fitting…"
    assert not [item for plot in pane.plots() for item in plot.items if item.isVisible()]  # nothing stale
    pane.show_evaluation(preview_ev, series)
    assert not pane.is_showing_message and pane.message == "" and pane.is_preview
    assert "fitting" not in pane.status_label.text()
    assert [item for plot in pane.plots() for item in plot.items if item.isVisible()]


# ---------------------------------------------------------- theme and budget
def test_background_follows_a_dark_palette(qtbot):
    from PySide6.QtGui import QColor, QPalette

    pane = make(qtbot, ResidualHistogramPane)
    assert pane.graphics.backgroundBrush().color().name() == theme.pane_colours(False).background
    palette = QPalette(pane.palette())
    palette.setColor(QPalette.ColorRole.Window, QColor(theme.pane_colours(True).background))
    pane.setPalette(palette)
    assert pane.graphics.backgroundBrush().color().name() == theme.pane_colours(True).background


def test_long_series_are_downsampled_and_drawn_with_thin_lines(qtbot):
    # 100,000 seeded N(0, 1) residuals: the trace must not hand all of them to Qt.
    z = np.random.default_rng(11).standard_normal(100_000)
    fit = Fit(spec=ModelSpec(), kind="exact", ok=True, residuals=z, std_residuals=z, sigma2=1.0)
    ev = Evaluation(fit=fit, diagnostics=diagnose(z, z))
    pane = make(qtbot, ResidualTracePane)
    pane.show_evaluation(ev, Series(np.cumsum(z), name="invented long walk"))
    pane.grab()
    shown_x, _ = pane.curve.getData()
    assert shown_x.size < 10_000
    assert pane.curve.opts["pen"].widthF() == 1.0  # wider antialiased lines take Qt's slow path


def test_importing_the_panes_creates_no_application():
    code = (
        "import lagwright.app.panes\n"
        "from PySide6.QtWidgets import QApplication\n"
        "assert QApplication.instance() is None\n"
    )
    subprocess.run([sys.executable, "-c", code], check=True, timeout=120)
