"""The compare view: two candidates side by side.

Pick candidate A and candidate B; the view lines up their parameters by name,
lists σ², log-likelihood, k, n and the information criteria with the
difference B − A (only when the two model the same prepared data), states the
nested test between them or why there is none, and draws their residual
autocorrelations (with the ±2/√n bands) and standardized residuals in A's and
B's colours. A candidate that is not fitted yet, only previewed, or failed is
named as such instead of being compared.
"""

from __future__ import annotations

import re

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QSize, Qt, Signal
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import (
    QComboBox,
    QFrame,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QScrollArea,
    QSizePolicy,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from lagwright.core.compare import comparability, criteria_difference, nested_test
from lagwright.core.errors import LagwrightError

from . import theme
from .explain import TOOLTIPS, format_count, format_number, format_p, format_signed
from .tests_panel import Cell, ReflowRow, SectionTable, banner_style, section_header, titled

COL_QUANTITY, COL_A, COL_B, COL_DIFF = range(4)
_PARAM_ORDER = (
    (re.compile(r"^const$"), 0),
    (re.compile(r"^ar\.L(\d+)$"), 1),
    (re.compile(r"^ma\.L(\d+)$"), 2),
    (re.compile(r"^ar\.S\.L(\d+)$"), 3),
    (re.compile(r"^ma\.S\.L(\d+)$"), 4),
)


def param_sort_key(name: str) -> tuple[int, int, str]:
    """Order parameters as the fit lists them: const, AR, MA, seasonal AR, seasonal MA by lag."""
    for pattern, group in _PARAM_ORDER:
        match = pattern.match(name)
        if match:
            lag = int(match.group(1)) if match.groups() else 0
            return group, lag, name
    return 9, 0, name


def aligned_parameter_names(fit_a, fit_b) -> list[str]:
    """Union of both fits' coefficient names (σ² left out), in fit order."""
    names = {p.name for p in fit_a.params} | {p.name for p in fit_b.params}
    names.discard("sigma2")
    return sorted(names, key=param_sort_key)


def _estimate_text(fit, name: str) -> tuple[str, bool]:
    try:
        est = fit.param(name)
    except KeyError:
        return "—", False
    return f"{format_number(est.value)} ({format_number(est.se)})", est.weak


class _PlotArea(QWidget):
    """Holds the plots; asks for a modest size so the plots share whatever room is left."""

    def sizeHint(self) -> QSize:  # noqa: N802 (Qt override)
        return QSize(600, 300)


class CompareView(QWidget):
    """Two candidates side by side.

    Signals
    -------
    pair_changed(str, str)
        The user picked a different A or B (ids). :meth:`compare` does not emit it.

    Attributes
    ----------
    combo_a, combo_b : QComboBox
    table : SectionTable
        Rows keyed by parameter name, then ``"sigma2"``, ``"loglik"``,
        ``"k"``, ``"n"``, ``"aic"``, ``"aicc"``, ``"bic"``, ``"verdict"``.
    status_label : QLabel
        Why nothing is compared, or which pair is shown.
    test_label : QLabel
        The nested test's verdict, or why no test applies.
    test_table : SectionTable
        F and likelihood-ratio rows when a nested test applies.
    acf_plot : pyqtgraph.PlotWidget
        Both residual ACFs as grouped bars with their ±2/√n bands.
    trace_plots : dict of str to pyqtgraph.PlotWidget
        Standardized residuals of ``"A"`` (top) and ``"B"`` (below), axes linked.
    """

    pair_changed = Signal(str, str)
    forecast_requested = Signal(str, str, int)

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self._lineage = None
        self._evaluations: dict = {}
        self._quiet = False
        self._comparable = False
        self.acf_items: dict[str, pg.BarGraphItem] = {}
        self.band_lines: dict[str, tuple[pg.InfiniteLine, pg.InfiniteLine]] = {}
        self.trace_items: dict[str, pg.PlotDataItem] = {}

        self.combo_a = QComboBox()
        self.combo_b = QComboBox()
        for combo in (self.combo_a, self.combo_b):
            combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
            combo.setMinimumContentsLength(18)
            combo.currentIndexChanged.connect(self._on_combo_changed)
        picker = QHBoxLayout()
        picker.setContentsMargins(0, 0, 0, 0)
        for name, combo, colour in (("A", self.combo_a, theme.DATA), ("B", self.combo_b, theme.SECOND)):
            label = QLabel(name)
            label.setStyleSheet(banner_style(colour))
            label.setBuddy(combo)
            picker.addWidget(label)
            picker.addWidget(combo)
            picker.addSpacing(12)
        picker.addStretch(1)

        self.status_label = QLabel()
        self.status_label.setWordWrap(True)
        self.status_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)

        self.table = SectionTable(["Quantity", "A", "B", "B − A"])
        self.table.horizontalHeaderItem(COL_DIFF).setToolTip(TOOLTIPS["difference"])
        self.table.horizontalHeaderItem(COL_A).setForeground(QBrush(QColor(theme.DATA)))
        self.table.horizontalHeaderItem(COL_B).setForeground(QBrush(QColor(theme.SECOND)))

        self.test_header = section_header("Nested test")
        self.test_header.setToolTip(TOOLTIPS["nested"])
        self.test_header.setWordWrap(True)
        self.test_label = QLabel()
        self.test_label.setWordWrap(True)
        self.test_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.test_label.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self.test_table = SectionTable(["Test", "Statistic", "df", "p"])

        self.tests_box = QWidget()
        tests = QVBoxLayout(self.tests_box)
        tests.setContentsMargins(0, 0, 0, 0)
        tests.addWidget(self.test_header)
        tests.addWidget(self.test_label)
        tests.addWidget(self.test_table, 0, Qt.AlignmentFlag.AlignLeft)
        forecast_row = QHBoxLayout()
        self.forecast_holdout = QSpinBox()
        self.forecast_holdout.setRange(2, 100000)
        self.forecast_holdout.setValue(24)
        self.forecast_holdout.setSuffix(" held back")
        self.forecast_holdout.setToolTip("Final values whose one-step forecasts are compared (the models are "
                                         "refitted without them)")
        self.forecast_button = QPushButton("Compare forecasts")
        self.forecast_button.setToolTip("Diebold-Mariano test of the two candidates' one-step holdout errors, with "
                                        "the small-sample correction of Harvey, Leybourne & Newbold (1997)")
        self.forecast_button.clicked.connect(self._forecast_clicked)
        forecast_row.addWidget(self.forecast_holdout)
        forecast_row.addWidget(self.forecast_button)
        tests.addLayout(forecast_row)
        self.forecast_label = QLabel("")
        self.forecast_label.setWordWrap(True)
        self.forecast_label.setTextFormat(Qt.TextFormat.PlainText)
        tests.addWidget(self.forecast_label)
        tests.addStretch(1)
        self.tests_box.setMinimumWidth(240)
        self.tests_box.setMaximumWidth(420)
        self.numbers = ReflowRow()
        self.numbers.add(titled("Side by side", self.table), keep_width=True)
        self.numbers.add(self.tests_box)

        colours = theme.pane_colours(theme.is_dark_palette(self.palette()))
        self.acf_plot = self._make_plot("Residual ACF", "lag", "autocorrelation", colours)
        self.acf_plot.setToolTip(TOOLTIPS["acf"])
        self.trace_plots = {
            side: self._make_plot("Standardized residuals", "observation", "z", colours, legend=False)
            for side in ("A", "B")
        }
        self.trace_plots["B"].setXLink(self.trace_plots["A"])
        self.trace_plots["A"].getAxis("bottom").showLabel(False)  # B's axis below names it
        self.trace_plots["B"].setYLink(self.trace_plots["A"])
        traces = QVBoxLayout()
        traces.setContentsMargins(0, 0, 0, 0)
        traces.setSpacing(2)
        for plot in self.trace_plots.values():
            plot.setToolTip(TOOLTIPS["std_residuals"])
            plot.setMinimumHeight(90)
            traces.addWidget(plot)
        self.plots = _PlotArea()
        plots = QHBoxLayout(self.plots)
        plots.setContentsMargins(0, 0, 0, 0)
        plots.addWidget(self.acf_plot)
        plots.addLayout(traces)

        content = QWidget()
        body = QVBoxLayout(content)
        body.setContentsMargins(0, 0, 0, 0)
        body.setSpacing(6)
        body.addWidget(self.status_label)
        body.addWidget(self.numbers)
        body.addWidget(self.plots, 1)
        body.addStretch(0)  # takes the room when nothing is compared
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        scroll.setWidget(content)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(8, 8, 8, 8)
        layout.setSpacing(6)
        layout.addLayout(picker)
        layout.addWidget(scroll, 1)
        self._show_nothing("Pick two candidates to compare.")

    # ---------------------------------------------------------- public API
    def set_candidates(self, lineage, evaluations: dict | None = None) -> None:
        """Fill both pickers from ``lineage``; keep the current pair when it still exists."""
        current = self.pair()
        self._lineage = lineage
        self._evaluations = dict(evaluations or {})
        ids = [c.id for c in lineage.candidates]
        a, b = current
        if a not in ids or b not in ids:
            a, b = self._default_pair(lineage)
        self._quiet = True
        try:
            for combo in (self.combo_a, self.combo_b):
                combo.clear()
                for c in lineage.candidates:
                    combo.addItem(f"{c.id} · {c.spec.description}", c.id)
                    combo.setItemData(combo.count() - 1, c.note or c.step, Qt.ItemDataRole.ToolTipRole)
            self._set_combo(self.combo_a, a)
            self._set_combo(self.combo_b, b)
        finally:
            self._quiet = False
        self._refresh()

    def compare(self, id_a: str, id_b: str) -> None:
        """Show candidates ``id_a`` (A) and ``id_b`` (B)."""
        self._quiet = True
        try:
            self._set_combo(self.combo_a, id_a)
            self._set_combo(self.combo_b, id_b)
        finally:
            self._quiet = False
        self._refresh(requested=(id_a, id_b))

    def pair(self) -> tuple[str | None, str | None]:
        """Ids of the candidates picked as A and B."""
        return self.combo_a.currentData(), self.combo_b.currentData()

    def is_comparable(self) -> bool:
        """Whether the pair shown models the same prepared data (differences shown)."""
        return self._comparable

    def summary_text(self) -> str:
        """What the view shows, as plain text (tab-separated table rows), e.g. for the clipboard."""
        lines = [self.status_label.text()]
        if self.table.rowCount():
            columns = [c for c in range(self.table.columnCount()) if not self.table.isColumnHidden(c)]
            lines.append("\t".join(self.table.horizontalHeaderItem(c).text() for c in columns))
            for row in range(self.table.rowCount()):
                lines.append("\t".join(self.table.text(row, c) for c in columns))
            lines.append(self.test_header.text())
            for row in range(self.test_table.rowCount()):
                lines.append("\t".join(self.test_table.text(row, c) for c in range(self.test_table.columnCount())))
            lines.append(self.test_label.text())
        return "\n".join(line for line in lines if line)

    def cell_text(self, key: str, column: int) -> str:
        """Text of the table row ``key`` (a parameter name or a quantity key) in ``column``."""
        return self.table.text(self.table.row_of(key), column)

    # ------------------------------------------------------------ internal
    @staticmethod
    def _default_pair(lineage) -> tuple[str | None, str | None]:
        if not lineage.candidates:
            return None, None
        last = lineage.candidates[-1]
        if last.parent_id is not None:
            return last.parent_id, last.id
        if len(lineage.candidates) >= 2:
            return lineage.candidates[-2].id, last.id
        return last.id, last.id

    @staticmethod
    def _set_combo(combo: QComboBox, candidate_id) -> None:
        index = combo.findData(candidate_id)
        combo.setCurrentIndex(index)

    def _make_plot(self, title: str, xlabel: str, ylabel: str, colours, legend: bool = True) -> pg.PlotWidget:
        plot = pg.PlotWidget(background=colours.background)
        plot.setTitle(title, color=colours.foreground, size="10pt")
        for side, text in (("bottom", xlabel), ("left", ylabel)):
            axis = plot.getAxis(side)
            axis.setPen(pg.mkPen(colours.foreground))
            axis.setTextPen(pg.mkPen(colours.foreground))
            axis.setLabel(text, color=colours.foreground)
            axis.enableAutoSIPrefix(False)
        plot.setMenuEnabled(False)
        plot.setMinimumHeight(180)
        plot.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)
        if legend:
            box = plot.addLegend(offset=(-8, 8), labelTextColor=colours.foreground)
            box.setBrush(pg.mkBrush(colours.background))
        return plot

    def _on_combo_changed(self, _index: int) -> None:
        if self._quiet:
            return
        self._refresh()
        a, b = self.pair()
        if a is not None and b is not None:
            self.pair_changed.emit(a, b)

    def _show_nothing(self, message: str, colour: str | None = None) -> None:
        self._comparable = False
        self.status_label.setText(message)
        self.status_label.setStyleSheet(banner_style(colour) if colour else "")
        self.table.clear_rows()
        self.test_label.clear()
        self.test_table.clear_rows()
        self.numbers.hide()
        self.plots.hide()
        self._clear_plots()

    def _clear_plots(self) -> None:
        for side, trace in self.trace_plots.items():
            trace.setTitle(f"Standardized residuals, {side}")
        for plot in (self.acf_plot, *self.trace_plots.values()):
            plot.clear()
            if plot.plotItem.legend is not None:
                plot.plotItem.legend.clear()
        self.acf_items.clear()
        self.band_lines.clear()
        self.trace_items.clear()

    def _refresh(self, requested: tuple[str, str] | None = None) -> None:
        a_id, b_id = self.pair()
        if requested is not None:
            missing = [cid for cid in requested if cid is not None and self._lineage is not None and cid not in self._lineage]
            if missing or self._lineage is None:
                self._show_nothing(
                    f"Candidate {', '.join(missing) or requested[0]} is not in the lineage; pick another.",
                    theme.ATTENTION,
                )
                return
        if self._lineage is None or a_id is None or b_id is None:
            self._show_nothing("Pick two candidates to compare.")
            return
        if a_id == b_id:
            self._show_nothing("A and B are the same candidate; pick two different ones.")
            return
        problems = []
        for side, cid in (("A", a_id), ("B", b_id)):
            ev = self._evaluations.get(cid)
            if ev is None:
                problems.append(f"{side} ({cid}) is not fitted yet")
            elif not ev.fit.ok:
                problems.append(f"the fit of {side} ({cid}) failed: {ev.fit.failure}")
            elif ev.is_preview:
                problems.append(f"{side} ({cid}) has only a preview so far (exact fit running)")
        if problems:
            text = "; ".join(problems)
            self._show_nothing(text[0].upper() + text[1:] + ". The comparison waits for both exact fits.",
                               theme.PREVIEW)
            return
        self._show_pair(a_id, b_id, self._evaluations[a_id], self._evaluations[b_id])

    def _show_pair(self, a_id: str, b_id: str, ev_a, ev_b) -> None:
        fa, fb = ev_a.fit, ev_b.fit
        reason = comparability(fa.spec, fb.spec)
        self._comparable = not reason
        self.numbers.show()
        self.plots.show()
        header_a = self.table.horizontalHeaderItem(COL_A)
        header_b = self.table.horizontalHeaderItem(COL_B)
        header_a.setText(f"A · {a_id}")
        header_a.setToolTip(fa.spec.description)
        header_b.setText(f"B · {b_id}")
        header_b.setToolTip(fb.spec.description)
        if reason:
            self.status_label.setText("Not comparable. " + reason)
            self.status_label.setStyleSheet(banner_style(theme.DOUBT))
        else:
            self.status_label.setText(
                f"A = {a_id} ({fa.spec.description}) and B = {b_id} ({fb.spec.description}) model the "
                "same prepared data; differences are B − A."
            )
            self.status_label.setStyleSheet("")
        self._fill_table(fa, fb, ev_a, ev_b)
        self._fill_test(fa, fb, reason)
        self.numbers.reflow()
        self._draw(a_id, b_id, ev_a, ev_b)

    def _fill_table(self, fa, fb, ev_a, ev_b) -> None:
        rows = []
        for name in aligned_parameter_names(fa, fb):
            text_a, weak_a = _estimate_text(fa, name)
            text_b, weak_b = _estimate_text(fb, name)
            tip = TOOLTIPS["estimate"] + " Standard error in brackets."
            rows.append((name, [
                Cell(name, tip),
                Cell(text_a, TOOLTIPS["weak"] if weak_a else tip, numeric=True,
                     colour=theme.ATTENTION if weak_a else None),
                Cell(text_b, TOOLTIPS["weak"] if weak_b else tip, numeric=True,
                     colour=theme.ATTENTION if weak_b else None),
                Cell(""),
            ]))
        diff = criteria_difference(fa, fb) if self._comparable else None
        quantities = (
            ("sigma2", "σ²", fa.sigma2, fb.sigma2, diff.d_sigma2 if diff else None),
            ("loglik", "Log-likelihood", fa.loglik, fb.loglik, diff.d_loglik if diff else None),
            ("k", "k", fa.n_params, fb.n_params, fb.n_params - fa.n_params),
            ("n", "n", fa.nobs, fb.nobs, fb.nobs - fa.nobs),
            ("aic", "AIC", fa.aic, fb.aic, diff.d_aic if diff else None),
            ("aicc", "AICc", fa.aicc, fb.aicc, diff.d_aicc if diff else None),
            ("bic", "BIC", fa.bic, fb.bic, diff.d_bic if diff else None),
        )
        for key, name, va, vb, d in quantities:
            tip = TOOLTIPS[key]
            whole = key in ("k", "n")
            fmt = format_count if whole else format_number
            d_text = ""
            if self._comparable and d is not None:
                d_text = (f"+{d}" if d > 0 else str(d)) if whole else format_signed(d)
            rows.append((key, [
                Cell(name, tip), Cell(fmt(va), tip, numeric=True), Cell(fmt(vb), tip, numeric=True),
                Cell(d_text, TOOLTIPS["difference"], numeric=True),
            ]))
        if self._comparable:
            from lagwright.core.accuracy_tests import akaike_weights

            try:
                wa, wb = akaike_weights([fa.aicc, fb.aicc])
                tip = ("Akaike weights from AICc: the relative support of each candidate within this pair "
                       "(Burnham & Anderson, 2002).")
                rows.append(("akaike_weight", [Cell("Akaike weight (AICc)", tip),
                                               Cell(f"{wa:.3f}", tip, numeric=True),
                                               Cell(f"{wb:.3f}", tip, numeric=True), Cell("")]))
            except LagwrightError:
                pass
        verdict_cells = []
        for ev in (ev_a, ev_b):
            if ev.diagnostics is None:
                verdict_cells.append(Cell("—", ev.diagnostics_error))
            else:
                label = ev.diagnostics.white_noise_verdict.label
                main = ev.diagnostics.main_ljung_box
                tip = TOOLTIPS["white_noise"]
                if main is not None:
                    tip += f"\nMain Ljung-Box: Q({main.lag}) = {format_number(main.stat)}, p = {format_p(main.p)}."
                verdict_cells.append(Cell(label, tip, numeric=True, colour=theme.VERDICT_COLOURS[label]))
        rows.append(("verdict", [Cell("Residuals", TOOLTIPS["white_noise"]), *verdict_cells, Cell("")]))
        self.table.fill(rows)
        self.table.setColumnHidden(COL_DIFF, not self._comparable)
        self.table.updateGeometry()

    def _forecast_clicked(self) -> None:
        a, b = self.pair()
        if a and b and a != b:
            self.forecast_label.setText("Refitting both without the holdout and comparing their forecasts…")
            self.forecast_requested.emit(a, b, self.forecast_holdout.value())

    def show_forecast_comparison(self, result=None, message: str = "") -> None:
        """Show a :class:`~lagwright.core.forecast.ForecastComparison` (or a message)."""
        self.forecast_result = result
        if result is None:
            self.forecast_label.setText(message)
            return
        dm = result.test
        better = "A" if dm.mean_differential < 0 else "B"
        self.forecast_label.setText(
            f"One-step forecasts of the last {result.holdout} values: RMSE A {format_number(result.rmse_a)}, "
            f"B {format_number(result.rmse_b)}. Diebold-Mariano (squared errors, HLN-corrected): "
            f"{format_number(dm.corrected)} on {dm.df} df, p = {format_p(dm.p)}"
            + (f" — {better} forecasts significantly better at 5 %." if dm.p < 0.05
               else " — no significant difference at 5 %.")
        )

    def _fill_test(self, fa, fb, reason: str) -> None:
        if reason:
            self.test_header.setText("Nested test")
            self.test_label.setText("No F or likelihood-ratio test: the two candidates are fitted to "
                                    "different data (see above).")
            self.test_table.clear_rows()
            self.test_table.hide()
            return
        step = nested_test(fa, fb)
        if step.applies:
            self.test_header.setText(f"Nested test: {step.smaller} inside {step.larger}")
            tip_f, tip_lr = TOOLTIPS["f_test"], TOOLTIPS["lr"]
            self.test_table.fill([
                ("f_test", [Cell("F-test", tip_f), Cell(format_number(step.f_stat), tip_f, numeric=True),
                            Cell(f"{step.f_df1}, {step.f_df2}", tip_f, numeric=True), Cell(format_p(step.f_p), tip_f, numeric=True)]),
                ("lr", [Cell("Likelihood ratio", tip_lr), Cell(format_number(step.lr_stat), tip_lr, numeric=True),
                        Cell(str(step.df), tip_lr, numeric=True), Cell(format_p(step.lr_p), tip_lr, numeric=True)]),
            ])
            self.test_table.show()
        else:
            self.test_header.setText("Nested test")
            self.test_table.clear_rows()
            self.test_table.hide()
        self.test_label.setText(step.verdict())
        self.test_label.setStyleSheet(f"QLabel {{ color: {theme.ATTENTION}; }}" if step.negative_lr else "")

    def _draw(self, a_id: str, b_id: str, ev_a, ev_b) -> None:
        self._clear_plots()
        offsets = {"A": -0.19, "B": 0.19}
        colours = {"A": theme.DATA, "B": theme.SECOND}
        for side, cid, ev in (("A", a_id, ev_a), ("B", b_id, ev_b)):
            colour = colours[side]
            if ev.diagnostics is not None:
                cg = ev.diagnostics.correlogram
                bars = pg.BarGraphItem(
                    x=np.asarray(cg.lags, dtype=float) + offsets[side], height=np.asarray(cg.acf, dtype=float),
                    width=0.36, brush=pg.mkBrush(colour), pen=pg.mkPen(colour), name=f"{side}: {cid}",
                )
                self.acf_plot.addItem(bars)  # the legend picks it up by its name
                self.acf_items[side] = bars
                pen = pg.mkPen(theme.BAND, width=1, style=Qt.PenStyle.DashLine if side == "A" else Qt.PenStyle.DotLine)
                lines = tuple(pg.InfiniteLine(pos=sign * cg.band, angle=0, pen=pen) for sign in (1.0, -1.0))
                for line in lines:
                    line.setToolTip(f"±2/√n band of {side} (n = {cg.n}): ±{format_number(cg.band)}")
                    self.acf_plot.addItem(line)
                self.band_lines[side] = lines
            positions = ev.fit.diagnostic_positions()
            _, std = ev.fit.diagnostic_residuals()
            trace = self.trace_plots[side]
            trace.setTitle(f"Standardized residuals, {side}: {cid}", color=colour, size="9pt")
            curve = trace.plot(
                np.asarray(positions, dtype=float), np.asarray(std, dtype=float),
                pen=pg.mkPen(colour, width=1), name=f"{side}: {cid}",
            )
            self.trace_items[side] = curve
            trace.addItem(pg.InfiniteLine(pos=0.0, angle=0, pen=pg.mkPen(theme.REFERENCE)))
        self.acf_plot.addItem(pg.InfiniteLine(pos=0.0, angle=0, pen=pg.mkPen(theme.REFERENCE)))
        if self.acf_items:
            heights = [float(np.nanmax(np.abs(item.opts["height"]))) for item in self.acf_items.values()]
            bands = [lines[0].value() for lines in self.band_lines.values()]
            limit = max(heights + bands)
            self.acf_plot.setYRange(-1.1 * limit, 1.1 * limit, padding=0)
            self.acf_plot.enableAutoRange(axis="x")
        for trace in self.trace_plots.values():
            trace.enableAutoRange()
