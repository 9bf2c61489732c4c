"""Offscreen tests of the tests panel, the lineage view and the compare view.

A small real lineage is fitted once per module on an invented, seeded AR(2)
series of 300 values (x_t = 0.6 x_{t-1} - 0.3 x_{t-2} + a_t, around a level
of 10):

    c1 ARIMA(0,0,0) + mean            (root)
    ├── c2 ARIMA(1,0,0) + mean
    │   └── c3 ARIMA(2,0,0) + mean
    │       └── c5 ARIMA(3,0,0) + mean
    └── c6 ARIMA(0,0,2) + mean        (not nested with c3)
    c4 ARIMA(1,1,0)                   (root, differenced once: another group)

The views only show what lagwright.core computed, so most checks compare a
cell with the core value written the way the views promise (four decimals,
p-values below 0.0001 as "<0.0001"). Where a number can be recomputed cheaply
outside the project it is: Ljung-Box against statsmodels' acorr_ljungbox,
the likelihood-ratio p-value and the sign-change interval against scipy,
AICc by the Hurvich & Tsai (1989) formula.
"""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import math  # noqa: E402
import re  # noqa: E402

import numpy as np  # noqa: E402
import pytest  # noqa: E402
from PySide6.QtCore import Qt  # noqa: E402
from PySide6.QtGui import QColor  # noqa: E402
from scipy import signal, stats  # noqa: E402
from statsmodels.stats.diagnostic import acorr_ljungbox  # noqa: E402

from lagwright.app import theme  # noqa: E402
from lagwright.app.compare_view import COL_A, COL_B, COL_DIFF, CompareView  # noqa: E402
from lagwright.app.explain import TOOLTIPS  # noqa: E402
from lagwright.app.lineage_view import (  # noqa: E402
    COL_AIC,
    COL_DELTA_AICC,
    COL_FIT,
    COL_VERDICT,
    LineageView,
)
from lagwright.app.tests_panel import PREVIEW_MARK, TestsPanel  # noqa: E402
from lagwright.core.compare import comparability, nested_test  # noqa: E402
from lagwright.core.evaluate import Evaluation, evaluate  # noqa: E402
from lagwright.core.lineage import Lineage  # noqa: E402
from lagwright.core.result import Convergence, Fit, failed_fit  # noqa: E402
from lagwright.core.series import Series  # noqa: E402
from lagwright.core.spec import ModelSpec  # noqa: E402


# ---------------------------------------------------------------- helpers
def four(x: float) -> str:
    """The promised number format: four decimals."""
    return f"{x:.4f}"


def pval(p: float) -> str:
    """The promised p-value format."""
    return "<0.0001" if p < 1e-4 else f"{p:.4f}"


def number(text: str) -> float:
    return float(text.replace("+", ""))


class World:
    pass


@pytest.fixture(scope="module")
def world():
    rng = np.random.default_rng(20240611)
    shocks = rng.standard_normal(500)
    x = signal.lfilter([1.0], [1.0, -0.6, 0.3], shocks)[200:] + 10.0
    series = Series(x, name="invented AR(2)")
    w = World()
    w.series = series
    lin = Lineage()
    lin, c1 = lin.add_root(ModelSpec(constant="mean"), note="start from the mean")
    lin, c2 = lin.add_child(c1.id, ModelSpec(ar=(1,), constant="mean"), note="ACF decays slowly")
    lin, c3 = lin.add_child(c2.id, ModelSpec(ar=(1, 2), constant="mean"), note="PACF spike at lag 2")
    lin, c4 = lin.add_root(ModelSpec(ar=(1,), d=1), step="difference once", note="try a difference")
    lin, c5 = lin.add_child(c3.id, ModelSpec(ar=(1, 2, 3), constant="mean"), note="one more for safety")
    lin, c6 = lin.add_child(c1.id, ModelSpec(ma=(1, 2), constant="mean"), note="moving-average rival")
    w.lineage = lin
    w.c = {c.id: c for c in lin.candidates}
    e = {}
    e["c1"] = evaluate(series, c1.spec)
    e["c2"] = evaluate(series, c2.spec, parent=e["c1"].fit)
    e["c3"] = evaluate(series, c3.spec, parent=e["c2"].fit)
    e["c4"] = evaluate(series, c4.spec)
    e["c5"] = evaluate(series, c5.spec, parent=e["c3"].fit)
    e["c6"] = evaluate(series, c6.spec, parent=e["c1"].fit)
    w.ev = e
    w.preview3 = evaluate(series, c3.spec, kind="preview")
    return w


@pytest.fixture
def panel(qtbot):
    widget = TestsPanel()
    qtbot.addWidget(widget)
    widget.resize(900, 700)
    return widget


@pytest.fixture
def lineage_view(qtbot):
    widget = LineageView()
    qtbot.addWidget(widget)
    widget.resize(900, 700)
    return widget


@pytest.fixture
def compare_view(qtbot):
    widget = CompareView()
    qtbot.addWidget(widget)
    widget.resize(900, 700)
    return widget


# ------------------------------------------------------------ explanations
REQUIRED_KEYS = (
    "ljung_box", "sign_change", "runs", "mcleod_li", "arch", "jarque_bera", "shapiro", "dagostino",
    "cumulative_periodogram", "outliers", "aic", "aicc", "bic", "hqic", "loglik", "sigma2", "k",
    "lr", "f_test", "t", "p", "se", "verdict", "convergence", "roots", "delta_aicc",
)


def test_every_statistic_has_one_plain_sentence():
    for key in REQUIRED_KEYS:
        assert key in TOOLTIPS, key
    for key, text in TOOLTIPS.items():
        assert text.strip().endswith("."), key
        # one sentence: no sentence end followed by a new capitalised sentence
        assert re.search(r"[.!?]\s+[A-Z]", text) is None, key


# ------------------------------------------------------------- tests panel
def test_parameter_table_shows_the_estimates(panel, world):
    ev = world.ev["c3"]
    panel.show_evaluation(ev)
    for est in ev.fit.params:
        row = panel.row_of("params", est.name)
        assert panel.cell_text("params", row, 0) == est.name
        assert panel.cell_text("params", row, 1) == four(est.value)
        assert panel.cell_text("params", row, 2) == four(est.se)
        if est.name == "sigma2":  # no z test of a variance against zero
            assert panel.cell_text("params", row, 3) == "—"
        else:
            assert panel.cell_text("params", row, 3) == four(est.stat)
            assert panel.cell_text("params", row, 4) == pval(est.p)
    assert "exact fit" in panel.title_label.text()


def test_weak_terms_are_marked(panel, world):
    # |z| < 2 as the mark of a weak term: common practice.
    ev = world.ev["c5"]
    panel.show_evaluation(ev)
    flag_col = panel.params_table.columnCount() - 1
    marked = 0
    for est in ev.fit.params:
        if est.name == "sigma2":
            continue
        row = panel.row_of("params", est.name)
        weak = abs(est.stat) < 2
        assert (panel.cell_text("params", row, flag_col) != "") == weak, est.name
        if weak:
            marked += 1
            assert panel.cell_tooltip("params", row, 0) == TOOLTIPS["weak"]
    assert marked >= 1  # the third AR lag of a true AR(2) is not clearly non-zero here
    assert not panel.params_table.isColumnHidden(flag_col)


def test_fit_summary_numbers(panel, world):
    fit = world.ev["c3"].fit
    panel.show_evaluation(world.ev["c3"])
    for key, value in (("sigma2", fit.sigma2), ("loglik", fit.loglik), ("aic", fit.aic),
                       ("aicc", fit.aicc), ("bic", fit.bic), ("hqic", fit.hqic)):
        assert panel.cell_text("summary", panel.row_of("summary", key), 1) == four(value)
    assert panel.cell_text("summary", panel.row_of("summary", "k"), 1) == "4"  # 3 coefficients + σ²
    assert panel.cell_text("summary", panel.row_of("summary", "n"), 1) == "300"
    # AICc = AIC + 2k(k+1)/(n-k-1): Hurvich & Tsai (1989).
    k, n = 4, 300
    aicc = -2 * fit.loglik + 2 * k + 2 * k * (k + 1) / (n - k - 1)
    assert number(panel.cell_text("summary", panel.row_of("summary", "aicc"), 1)) == pytest.approx(aicc, abs=5e-5)
    conv_row = panel.row_of("summary", "convergence")
    assert panel.cell_text("summary", conv_row, 1).startswith("converged")
    assert fit.convergence.attempts[0] in panel.cell_tooltip("summary", conv_row, 1)
    opt_row = panel.row_of("summary", "optimizer")
    assert panel.cell_text("summary", opt_row, 1).startswith(
        f"{fit.convergence.optimizer}, {fit.convergence.iterations} iterations")


def test_ljung_box_rows_match_diagnostics_and_statsmodels(panel, world):
    ev = world.ev["c3"]
    panel.show_evaluation(ev)
    rows = ev.diagnostics.ljung_box
    assert [k for k in panel.checks_table.keys() if k.startswith("ljung_box:")] == [f"ljung_box:{r.lag}" for r in rows]
    _, std = ev.fit.diagnostic_residuals()
    # Reference: statsmodels.stats.diagnostic.acorr_ljungbox with model_df = number of AR/MA terms.
    ref = acorr_ljungbox(std, lags=[r.lag for r in rows], model_df=2)
    for row, (stat, p) in zip(rows, zip(ref["lb_stat"], ref["lb_pvalue"])):
        i = panel.row_of("checks", f"ljung_box:{row.lag}")
        assert panel.cell_text("checks", i, 1) == four(row.stat)
        assert panel.cell_text("checks", i, 2) == f"df {row.df}"
        assert row.df == row.lag - 2
        assert panel.cell_text("checks", i, 3) == pval(row.p)
        assert number(panel.cell_text("checks", i, 1)) == pytest.approx(stat, abs=5e-5)
        assert number(panel.cell_text("checks", i, 3)) == pytest.approx(p, abs=5e-5)


def test_sign_change_row_against_binomial(panel, world):
    ev = world.ev["c3"]
    panel.show_evaluation(ev)
    sc = ev.diagnostics.sign_change
    i = panel.row_of("checks", "sign_change")
    assert panel.cell_text("checks", i, 1) == f"{sc.changes} of {sc.possible}"
    # Reference: scipy.stats.binom quantiles of Binomial(n-1, 1/2).
    lo, hi = int(stats.binom.ppf(0.025, sc.possible, 0.5)), int(stats.binom.ppf(0.975, sc.possible, 0.5))
    assert panel.cell_text("checks", i, 2) == f"95 %: {lo}–{hi}"
    assert panel.cell_text("checks", i, 3) == pval(stats.binomtest(sc.changes, sc.possible, 0.5).pvalue)


def test_outlier_row_uses_the_binomial_upper_tail(panel, world):
    ev = world.ev["c1"]
    panel.show_evaluation(ev)
    ol = ev.diagnostics.outliers
    i = panel.row_of("checks", "outliers")
    assert panel.cell_text("checks", i, 1) == str(ol.count)
    # Reference: scipy.stats.binomtest (one-sided, greater) with success probability 2·(1 - Φ(3)).
    ref = stats.binomtest(ol.count, ol.n_checked, 2 * stats.norm.sf(3.0), alternative="greater").pvalue
    assert number(panel.cell_text("checks", i, 3)) == pytest.approx(ref, abs=5e-5)


def test_check_results_coloured_by_five_percent(panel, world):
    ev = world.ev["c1"]  # the mean alone leaves the AR(2) structure in the residuals
    panel.show_evaluation(ev)
    table = panel.checks_table
    for row in ev.diagnostics.ljung_box:
        i = panel.row_of("checks", f"ljung_box:{row.lag}")
        colour = table.item(i, 4).foreground().color()
        expected = theme.ATTENTION if row.p < 0.05 else theme.GOOD
        assert colour == QColor(expected)
    verdict = ev.diagnostics.white_noise_verdict
    assert verdict.label in panel.verdict_label.text()
    assert theme.VERDICT_COLOURS[verdict.label] in panel.verdict_label.styleSheet()


def test_every_row_has_a_tooltip(panel, world):
    panel.show_evaluation(world.ev["c3"])
    for section in ("params", "summary", "checks", "step"):
        table = panel.tables[section]
        assert table.rowCount() > 0, section
        for row in range(table.rowCount()):
            assert panel.cell_tooltip(section, row, 0), (section, row)
    for key in panel.checks_table.keys():
        name = key.split(":")[0]
        tip = panel.cell_tooltip("checks", panel.row_of("checks", key), 0)
        assert TOOLTIPS[name] in tip, key


def test_step_test_matches_nested_test(panel, world):
    ev = world.ev["c5"]
    panel.show_evaluation(ev)
    step = nested_test(world.ev["c3"].fit, ev.fit)
    # Reference: LR = 2(l2 - l1) against chi-squared(1), scipy.stats.chi2.
    lr = 2 * (ev.fit.loglik - world.ev["c3"].fit.loglik)
    assert step.lr_p == pytest.approx(stats.chi2.sf(lr, 1), rel=1e-9)
    i = panel.row_of("step", "lr")
    assert panel.cell_text("step", i, 3) == pval(step.lr_p)
    assert panel.cell_text("step", i, 1) == four(step.lr_stat)
    j = panel.row_of("step", "f_test")
    assert panel.cell_text("step", j, 2) == f"{step.f_df1}, {step.f_df2}"
    assert panel.cell_text("step", j, 3) == pval(step.f_p)
    k = panel.row_of("step", "delta_aicc")
    assert number(panel.cell_text("step", k, 1)) == pytest.approx(ev.fit.aicc - world.ev["c3"].fit.aicc, abs=5e-5)
    assert panel.step_label.text() == step.verdict()
    assert panel.step_section.isVisibleTo(panel)


def test_root_has_no_step_test(panel, world):
    panel.show_evaluation(world.ev["c4"])
    assert panel.step_section.isVisibleTo(panel)
    assert "No parent" in panel.step_label.text()
    assert panel.step_table.rowCount() == 0


def test_preview_is_marked_and_shows_no_step_test(panel, world):
    panel.show_evaluation(world.preview3, step_test=world.ev["c3"].step_test)
    assert PREVIEW_MARK in panel.title_label.text()
    assert PREVIEW_MARK in panel.status_label.text().lower()
    assert panel.status_label.isVisibleTo(panel)
    assert not panel.step_section.isVisibleTo(panel)
    assert panel.step_table.rowCount() == 0
    # the preview's own numbers are still shown
    est = world.preview3.fit.param("ar.L2")
    assert panel.cell_text("params", panel.row_of("params", "ar.L2"), 1) == four(est.value)


def test_refilled_in_place_never_keeps_rows_of_the_previous_candidate(panel, world):
    # Sections stay on screen from one evaluation to the next; what the new one lacks must go.
    panel.show_evaluation(world.ev["c3"])
    assert panel.step_table.rowCount() > 0 and panel.checks_table.rowCount() > 0
    panel.show_evaluation(world.preview3)  # a preview: no step test
    assert not panel.step_section.isVisibleTo(panel) and panel.step_table.rowCount() == 0
    unchecked = Evaluation(fit=world.ev["c2"].fit, diagnostics=None, diagnostics_error="checks failed (test)")
    panel.show_evaluation(unchecked)
    assert not panel.checks_section.isVisibleTo(panel) and panel.checks_table.rowCount() == 0
    assert panel.params_table.keys() == [p.name for p in world.ev["c2"].fit.params]
    panel.show_evaluation(world.ev["c3"])  # and everything comes back
    assert panel.checks_section.isVisibleTo(panel) and panel.step_section.isVisibleTo(panel)


def test_pending_clears_stale_numbers(panel, world):
    panel.show_evaluation(world.ev["c3"])
    panel.show_pending("ARIMA(3,0,0) + mean")
    for table in panel.tables.values():
        assert table.rowCount() == 0
    assert "Fitting ARIMA(3,0,0) + mean" in panel.status_label.text()
    assert not panel.verdict_label.isVisibleTo(panel)
    assert panel.evaluation is None


def test_failure_is_shown(panel, world):
    spec = ModelSpec(ar=(1, 2), constant="mean")
    failed = Evaluation(fit=failed_fit(spec, "exact", "the optimizer found no finite likelihood"), diagnostics=None)
    panel.show_evaluation(failed)
    assert "the optimizer found no finite likelihood" in panel.status_label.text()
    assert theme.ATTENTION in panel.status_label.styleSheet()
    assert panel.params_table.rowCount() == 0
    panel.show_failure("ARIMA(9,0,0)", "too many terms")
    assert panel.status_label.text() == "The fit of ARIMA(9,0,0) failed: too many terms"


# ------------------------------------------------------------ lineage view
def test_lineage_rows_nest_under_parents(lineage_view, world):
    lineage_view.set_lineage(world.lineage, world.ev, busy=set())
    assert lineage_view.top_level_ids() == ["c1", "c4"]
    assert lineage_view.child_ids("c1") == ["c2", "c6"]
    assert lineage_view.child_ids("c2") == ["c3"]
    assert lineage_view.child_ids("c3") == ["c5"]
    item = lineage_view.item("c3")
    assert item.parent() is lineage_view.item("c2")
    assert "PACF spike at lag 2" in item.toolTip(0)
    assert "PACF spike at lag 2" in item.toolTip(COL_AIC)
    assert lineage_view.cell_text("c3", COL_AIC) == f"{world.ev['c3'].fit.aic:.2f}"
    verdict = world.ev["c3"].diagnostics.white_noise_verdict.label
    assert lineage_view.cell_text("c3", COL_VERDICT) == verdict
    assert item.foreground(COL_VERDICT).color() == QColor(theme.VERDICT_COLOURS[verdict])


def test_delta_aicc_is_relative_to_best_comparable(lineage_view, world):
    lineage_view.set_lineage(world.lineage, world.ev, busy=set())
    group = [cid for cid in world.c if not comparability(world.c[cid].spec, world.c["c1"].spec)]
    assert sorted(group) == ["c1", "c2", "c3", "c5", "c6"]
    # AICc by Hurvich & Tsai (1989) from log-likelihood, k and n.
    aicc = {}
    for cid in group:
        f = world.ev[cid].fit
        k, n = f.n_params, f.nobs
        aicc[cid] = -2 * f.loglik + 2 * k + 2 * k * (k + 1) / (n - k - 1)
    best = min(aicc.values())
    for cid in group:
        shown = lineage_view.cell_text(cid, COL_DELTA_AICC)
        assert number(shown) == pytest.approx(aicc[cid] - best, abs=0.006)
    assert min(number(lineage_view.cell_text(cid, COL_DELTA_AICC)) for cid in group) == 0.0
    # the differenced candidate is alone in its own group
    assert lineage_view.cell_text("c4", COL_DELTA_AICC) == "0.00"


def test_delta_aicc_blank_for_preview_or_unfitted(lineage_view, world):
    evaluations = dict(world.ev)
    evaluations["c3"] = world.preview3
    del evaluations["c5"]
    lineage_view.set_lineage(world.lineage, evaluations, busy={"c5"})
    assert lineage_view.cell_text("c3", COL_DELTA_AICC) == ""
    assert lineage_view.cell_text("c5", COL_DELTA_AICC) == ""
    assert lineage_view.cell_text("c3", COL_FIT) == "≈"
    assert lineage_view.cell_text("c5", COL_FIT) == "…"
    assert lineage_view.cell_text("c1", COL_FIT) == "✓"
    lineage_view.set_busy("c5", False)
    assert lineage_view.cell_text("c5", COL_FIT) == ""
    lineage_view.set_busy("c1", True)
    assert lineage_view.cell_text("c1", COL_FIT) == "…"


def _synthetic(spec: ModelSpec, aic: float, converged: bool = True) -> Evaluation:
    fit = Fit(spec=spec, kind="exact", ok=True, aic=aic, aicc=aic + 1.0, bic=aic + 2.0, nobs=100,
              n_params=spec.n_params, convergence=Convergence(converged, "stopped" if not converged else ""))
    return Evaluation(fit=fit, diagnostics=None)


def test_numeric_columns_sort_by_value(lineage_view):
    # As text "10.25" < "100.00" < "9.50"; as numbers 9.5 < 10.25 < 100.
    lin = Lineage()
    ids, evaluations = [], {}
    for spec, aic in ((ModelSpec(), 100.0), (ModelSpec(d=1), 9.5), (ModelSpec(d=2), 10.25)):
        lin, c = lin.add_root(spec)
        ids.append(c.id)
        evaluations[c.id] = _synthetic(spec, aic)
    lineage_view.set_lineage(lin, evaluations, busy=set())
    lineage_view.tree.sortByColumn(COL_AIC, Qt.SortOrder.AscendingOrder)
    assert lineage_view.top_level_ids() == [ids[1], ids[2], ids[0]]
    lineage_view.tree.sortByColumn(COL_AIC, Qt.SortOrder.DescendingOrder)
    assert lineage_view.top_level_ids() == [ids[0], ids[2], ids[1]]
    lineage_view.tree.sortByColumn(0, Qt.SortOrder.AscendingOrder)  # creation order
    assert lineage_view.top_level_ids() == ids


def test_sort_real_lineage_by_aic(lineage_view, world):
    lineage_view.set_lineage(world.lineage, world.ev, busy=set())
    lineage_view.tree.sortByColumn(COL_AIC, Qt.SortOrder.AscendingOrder)
    children = lineage_view.child_ids("c1")
    assert children == sorted(children, key=lambda cid: world.ev[cid].fit.aic)
    assert lineage_view.top_level_ids() == sorted(["c1", "c4"], key=lambda cid: world.ev[cid].fit.aic)


def test_fit_marks(lineage_view):
    lin = Lineage()
    lin, a = lin.add_root(ModelSpec())
    lin, b = lin.add_root(ModelSpec(d=1))
    lin, c = lin.add_root(ModelSpec(d=2))
    evaluations = {
        a.id: _synthetic(a.spec, 1.0, converged=False),
        b.id: Evaluation(fit=failed_fit(b.spec, "exact", "no optimum"), diagnostics=None),
        c.id: None,
    }
    lineage_view.set_lineage(lin, evaluations, busy=set())
    assert lineage_view.cell_text(a.id, COL_FIT) == "!"
    assert lineage_view.cell_text(b.id, COL_FIT) == "✗"
    assert "no optimum" in lineage_view.item(b.id).toolTip(COL_FIT)
    assert lineage_view.cell_text(c.id, COL_FIT) == ""


def test_user_selection_emits_signal(qtbot, lineage_view, world):
    lineage_view.set_lineage(world.lineage, world.ev, busy=set())
    lineage_view.show()
    qtbot.waitExposed(lineage_view)
    item = lineage_view.item("c3")
    rect = lineage_view.tree.visualItemRect(item)
    with qtbot.waitSignal(lineage_view.candidate_selected, timeout=1000) as blocker:
        qtbot.mouseClick(lineage_view.tree.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    assert blocker.args == ["c3"]
    assert lineage_view.selected_id() == "c3"
    with qtbot.assertNotEmitted(lineage_view.candidate_selected):
        assert lineage_view.select("c6")
    assert lineage_view.selected_id() == "c6"


def test_rebuild_keeps_selection_and_expansion(qtbot, lineage_view, world):
    lineage_view.set_lineage(world.lineage, world.ev, busy=set())
    lineage_view.select("c6")
    lineage_view.item("c2").setExpanded(False)
    with qtbot.assertNotEmitted(lineage_view.candidate_selected):
        lineage_view.set_lineage(world.lineage, world.ev, busy={"c3"})
    assert lineage_view.selected_id() == "c6"
    assert not lineage_view.item("c2").isExpanded()
    assert lineage_view.item("c1").isExpanded()
    assert lineage_view.cell_text("c3", COL_FIT) == "…"


# ------------------------------------------------------------ compare view
def test_compare_aligns_parameters_by_name(compare_view, world):
    compare_view.set_candidates(world.lineage, world.ev)
    compare_view.compare("c2", "c3")
    assert compare_view.pair() == ("c2", "c3")
    assert compare_view.table.keys()[:3] == ["const", "ar.L1", "ar.L2"]
    fa, fb = world.ev["c2"].fit, world.ev["c3"].fit
    for name in ("const", "ar.L1"):
        pa, pb = fa.param(name), fb.param(name)
        assert compare_view.cell_text(name, COL_A) == f"{four(pa.value)} ({four(pa.se)})"
        assert compare_view.cell_text(name, COL_B) == f"{four(pb.value)} ({four(pb.se)})"
    assert compare_view.cell_text("ar.L2", COL_A) == "—"
    assert compare_view.is_comparable()
    assert not compare_view.table.isColumnHidden(COL_DIFF)
    assert number(compare_view.cell_text("aic", COL_DIFF)) == pytest.approx(fb.aic - fa.aic, abs=5e-5)
    assert compare_view.cell_text("k", COL_DIFF) == "+1"
    step = nested_test(fa, fb)
    assert compare_view.test_table.text(compare_view.test_table.row_of("lr"), 3) == pval(step.lr_p)
    assert compare_view.test_label.text() == step.verdict()
    text = compare_view.summary_text()
    assert "ar.L2\t—\t" in text and step.verdict() in text


def test_compare_states_non_comparability(compare_view, world):
    compare_view.set_candidates(world.lineage, world.ev)
    compare_view.compare("c3", "c4")
    reason = comparability(world.c["c3"].spec, world.c["c4"].spec)
    assert reason and "d=0 vs d=1" in reason
    assert reason in compare_view.status_label.text()
    assert not compare_view.is_comparable()
    assert compare_view.table.isColumnHidden(COL_DIFF)
    assert compare_view.cell_text("aic", COL_DIFF) == ""
    assert compare_view.test_table.rowCount() == 0
    # parameters are still aligned: c4 has no constant and no second AR lag
    assert compare_view.cell_text("const", COL_B) == "—"


def test_compare_not_nested(compare_view, world):
    compare_view.set_candidates(world.lineage, world.ev)
    compare_view.compare("c3", "c6")
    step = nested_test(world.ev["c3"].fit, world.ev["c6"].fit)
    assert not step.applies
    assert compare_view.test_label.text() == step.verdict()
    assert "not nested" in compare_view.test_label.text()
    assert compare_view.table.keys()[:5] == ["const", "ar.L1", "ar.L2", "ma.L1", "ma.L2"]


def test_compare_waits_for_exact_fits(compare_view, world):
    evaluations = dict(world.ev)
    evaluations["c3"] = world.preview3
    del evaluations["c5"]
    compare_view.set_candidates(world.lineage, evaluations)
    compare_view.compare("c2", "c3")
    assert "only a preview" in compare_view.status_label.text()
    assert compare_view.table.rowCount() == 0
    assert not compare_view.acf_items and not compare_view.trace_items
    compare_view.compare("c5", "c2")
    assert "not fitted yet" in compare_view.status_label.text()


def test_compare_residual_panes(compare_view, world):
    compare_view.set_candidates(world.lineage, world.ev)
    compare_view.compare("c2", "c3")
    for side, cid, colour in (("A", "c2", theme.DATA), ("B", "c3", theme.SECOND)):
        ev = world.ev[cid]
        bars = compare_view.acf_items[side]
        np.testing.assert_allclose(bars.opts["height"], ev.diagnostics.correlogram.acf)
        assert bars.opts["brush"].color() == QColor(colour)
        # ±2/√n band: common practice.
        upper, lower = compare_view.band_lines[side]
        n = ev.fit.diagnostic_residuals()[1].size
        assert upper.value() == pytest.approx(2 / math.sqrt(n))
        assert lower.value() == pytest.approx(-2 / math.sqrt(n))
        curve = compare_view.trace_items[side]
        x, y = curve.getData()
        np.testing.assert_allclose(y, ev.fit.diagnostic_residuals()[1])
        np.testing.assert_allclose(x, ev.fit.diagnostic_positions())
        assert curve.opts["pen"].color().rgb() == QColor(colour).rgb()


def test_pair_changed_when_user_picks(qtbot, compare_view, world):
    compare_view.set_candidates(world.lineage, world.ev)
    compare_view.compare("c1", "c2")
    with qtbot.waitSignal(compare_view.pair_changed, timeout=1000) as blocker:
        compare_view.combo_b.setCurrentIndex(compare_view.combo_b.findData("c3"))
    assert blocker.args == ["c1", "c3"]
    with qtbot.assertNotEmitted(compare_view.pair_changed):
        compare_view.compare("c2", "c5")
    # refilling keeps the pair
    compare_view.set_candidates(world.lineage, world.ev)
    assert compare_view.pair() == ("c2", "c5")


def test_widgets_render(qtbot, panel, lineage_view, compare_view, world):
    panel.show_evaluation(world.ev["c3"])
    lineage_view.set_lineage(world.lineage, world.ev, busy=set())
    compare_view.set_candidates(world.lineage, world.ev)
    compare_view.compare("c2", "c3")
    for widget in (panel, lineage_view, compare_view):
        image = widget.grab().toImage()
        assert not image.isNull() and image.width() == 900
