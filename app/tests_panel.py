"""The tests panel: every number of one candidate, in compact read-only tables.

Sections, top to bottom: the white-noise verdict; the parameters (with a mark
on terms whose |z| is below 2); the fit summary (σ², log-likelihood, k, n,
information criteria, covariance type, convergence); the residual checks,
each with a result cell coloured by its 5 % decision; the warnings; and the
test of the step from the parent. A preview evaluation is marked as such and
never shows a step test, since a preview is not a result to test.

The panel only shows values made by :mod:`lagwright.core`; the one number it
works out itself is the chance of at least the observed count of outliers
(binomial upper tail, see :func:`outlier_excess_p`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from PySide6.QtCore import QSize, Qt
from PySide6.QtGui import QBrush, QColor, QFont
from PySide6.QtWidgets import (
    QAbstractItemView,
    QFrame,
    QBoxLayout,
    QHeaderView,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QScrollArea,
    QSizePolicy,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)
from scipy import stats

from lagwright.core.diagnostics import ALPHA

from . import theme
from .explain import TOOLTIPS, format_count, format_number, format_p, format_signed

#: Role under which the first cell of each row keeps the row's key.
KEY_ROLE = Qt.ItemDataRole.UserRole + 1

PREVIEW_MARK = "preview — exact fit running"

#: Narrowest a section table gets before it scrolls sideways.
MIN_TABLE_WIDTH = 220


# ------------------------------------------------------------------ tables
@dataclass(frozen=True)
class Cell:
    """One table cell as the views describe it."""

    text: str
    tip: str = ""
    numeric: bool = False
    colour: str | None = None
    bold: bool = False


class SectionTable(QTableWidget):
    """A compact read-only table, always as tall as its rows.

    It asks for the width of its contents but may be squeezed down to
    :data:`MIN_TABLE_WIDTH`; then it scrolls sideways and grows by the
    height of its scroll bar, so no row is ever hidden.
    """

    def __init__(self, headers: list[str], parent: QWidget | None = None):
        super().__init__(0, len(headers), parent)
        self.setHorizontalHeaderLabels(headers)
        self.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.setSelectionMode(QAbstractItemView.SelectionMode.ContiguousSelection)
        self.setWordWrap(False)
        self.setAlternatingRowColors(True)
        self.setShowGrid(False)
        self.verticalHeader().setVisible(False)
        self.verticalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Fixed)
        self.verticalHeader().setDefaultSectionSize(self.fontMetrics().height() + 6)
        header = self.horizontalHeader()
        header.setHighlightSections(False)
        # Columns are sized once per fill (resizeColumnsToContents below); ResizeToContents mode
        # measured every column again on each setItem of a visible table.
        header.setSectionResizeMode(QHeaderView.ResizeMode.Fixed)
        header.setStretchLastSection(False)
        header.setMinimumSectionSize(24)
        header.setDefaultAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)
        self.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAsNeeded)
        self.setSizePolicy(QSizePolicy.Policy.Maximum, QSizePolicy.Policy.Fixed)
        self._keys: list[str] = []
        self._size_cache: tuple[tuple, QSize] | None = None

    # ---------------------------------------------------------- contents
    def fill(self, rows: list[tuple[str, list[Cell]]]) -> None:
        """Replace all rows; each row is ``(key, cells)``."""
        self.clearContents()
        self.setRowCount(len(rows))
        self._size_cache = None
        self._keys = [key for key, _ in rows]
        bold = QFont(self.font())
        bold.setBold(True)
        for r, (key, cells) in enumerate(rows):
            for c, cell in enumerate(cells):
                item = QTableWidgetItem(cell.text)
                align = Qt.AlignmentFlag.AlignRight if cell.numeric else Qt.AlignmentFlag.AlignLeft
                item.setTextAlignment(align | Qt.AlignmentFlag.AlignVCenter)
                if cell.tip:
                    item.setToolTip(cell.tip)
                if cell.colour:
                    item.setForeground(QBrush(QColor(cell.colour)))
                if cell.bold or cell.colour:
                    item.setFont(bold)
                if c == 0:
                    item.setData(KEY_ROLE, key)
                self.setItem(r, c, item)
        self.resizeColumnsToContents()
        self._size_cache = None
        self.updateGeometry()

    def clear_rows(self) -> None:
        self.fill([])

    def keys(self) -> list[str]:
        """Row keys in display order."""
        return list(self._keys)

    def row_of(self, key: str) -> int:
        """Row index of ``key`` (``KeyError`` when absent)."""
        try:
            return self._keys.index(key)
        except ValueError:
            raise KeyError(key) from None

    def text(self, row: int, col: int) -> str:
        item = self.item(row, col)
        return "" if item is None else item.text()

    # ------------------------------------------------------------ sizing
    def _content_size(self) -> QSize:
        # Asked for many times per layout pass; measuring the columns means laying out their text,
        # so the answer is kept until the rows, the hidden columns or the font change.
        key = (self.rowCount(), tuple(self.isColumnHidden(c) for c in range(self.columnCount())),
               self.font().key())
        if self._size_cache is not None and self._size_cache[0] == key:
            return self._size_cache[1]
        header = self.horizontalHeader()
        width = sum(self.columnWidth(c) for c in range(self.columnCount()) if not self.isColumnHidden(c))
        rows = sum(self.rowHeight(r) for r in range(self.rowCount()))
        frame = 2 * self.frameWidth()
        size = QSize(width + frame, rows + header.sizeHint().height() + frame)
        self._size_cache = (key, size)
        return size

    def _height(self, content: QSize) -> int:
        squeezed = self.isVisible() and self.width() < content.width()
        extra = self.horizontalScrollBar().sizeHint().height() if squeezed else 0
        return content.height() + extra

    def sizeHint(self) -> QSize:  # noqa: N802 (Qt override)
        content = self._content_size()
        return QSize(content.width(), self._height(content))

    def minimumSizeHint(self) -> QSize:  # noqa: N802 (Qt override)
        content = self._content_size()
        return QSize(min(content.width(), MIN_TABLE_WIDTH), self._height(content))

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt override)
        super().resizeEvent(event)
        if event.size().height() != self.sizeHint().height():
            self.updateGeometry()  # make room for the sideways scroll bar, or give it back


class ReflowRow(QWidget):
    """Widgets side by side when the row is wide enough for all of them, else one under another."""

    def __init__(self, spacing: int = 16, parent: QWidget | None = None):
        super().__init__(parent)
        self._box = QBoxLayout(QBoxLayout.Direction.LeftToRight, self)
        self._box.setContentsMargins(0, 0, 0, 0)
        self._box.setSpacing(spacing)
        self._box.addStretch(1)
        self._widgets: list[QWidget] = []

    def add(self, widget: QWidget, keep_width: bool = False) -> None:
        """Add a widget; with ``keep_width`` it is never made narrower than it asks to be."""
        if keep_width:
            widget.setSizePolicy(QSizePolicy.Policy.Minimum, widget.sizePolicy().verticalPolicy())
        self._box.insertWidget(len(self._widgets), widget, 0, Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self._widgets.append(widget)

    def is_stacked(self) -> bool:
        return self._box.direction() == QBoxLayout.Direction.TopToBottom

    def reflow(self, width: int | None = None) -> None:
        """Choose side by side or stacked for ``width`` (default: the current width)."""
        width = self.width() if width is None else width
        shown = [w for w in self._widgets if not w.isHidden()]
        need = sum(w.minimumWidth() or w.sizeHint().width() for w in shown)  # a set minimum is enough
        need += self._box.spacing() * max(len(shown) - 1, 0)
        direction = QBoxLayout.Direction.LeftToRight if need <= width else QBoxLayout.Direction.TopToBottom
        if self._box.direction() != direction:
            self._box.setDirection(direction)

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt override)
        super().resizeEvent(event)
        self.reflow(event.size().width())


def titled(title: str, *widgets: QWidget) -> QWidget:
    """A bold title over ``widgets``, as one widget."""
    box = QWidget()
    layout = QVBoxLayout(box)
    layout.setContentsMargins(0, 0, 0, 0)
    layout.addWidget(section_header(title))
    for widget in widgets:
        layout.addWidget(widget, 0, Qt.AlignmentFlag.AlignLeft)
    layout.addStretch(1)
    return box


def section_header(text: str) -> QLabel:
    """A bold section title."""
    label = QLabel(text)
    font = label.font()
    font.setBold(True)
    label.setFont(font)
    label.setContentsMargins(0, 6, 0, 0)
    return label


def banner_style(colour: str) -> str:
    """Style sheet of a coloured banner with light text."""
    text = theme.pane_colours(False).background
    return f"QLabel {{ background: {colour}; color: {text}; padding: 4px 8px; border-radius: 3px; }}"


def outlier_excess_p(count: int, n_checked: int, threshold: float) -> float:
    """Chance of at least ``count`` of ``n_checked`` independent N(0, 1) values beyond ±threshold.

    The count is Binomial(n, 2·(1 - Φ(threshold))) under the model, so this is
    its upper tail P(X >= count) (scipy.stats.binom).
    """
    if n_checked <= 0:
        return math.nan
    prob = 2.0 * stats.norm.sf(threshold)
    return float(stats.binom.sf(count - 1, n_checked, prob))


def _num(x, tip: str = "", **kw) -> Cell:
    return Cell(format_number(x), tip, numeric=True, **kw)


def _p(x, tip: str = TOOLTIPS["p"]) -> Cell:
    return Cell(format_p(x), tip, numeric=True)


def _result(passes: bool | None, text_pass: str = "passes", text_fail: str = "fails", tip: str = "") -> Cell:
    if passes is None:
        return Cell("—", tip)
    return Cell(text_pass if passes else text_fail, tip, colour=theme.GOOD if passes else theme.ATTENTION)


def _passes(p: float) -> bool | None:
    return None if not math.isfinite(p) else bool(p >= ALPHA)


# ------------------------------------------------------------------- panel
class TestsPanel(QWidget):
    """The numbers of one candidate.

    Attributes
    ----------
    params_table, summary_table, checks_table, step_table : SectionTable
        The four tables (also in :attr:`tables` by section name ``"params"``,
        ``"summary"``, ``"checks"`` and ``"step"``).
    title_label, status_label, verdict_label, step_label : QLabel
    warnings_list : QListWidget
    step_section : QWidget
        Holds the step test; hidden for previews, pending and failed fits.
    """

    __test__ = False  # a widget, not a pytest test class

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self._evaluation = None
        #: ``date_of(position)`` names an intervention's observation by date (set by the window).
        self.date_of = None

        self.title_label = QLabel("No candidate")
        font = self.title_label.font()
        font.setBold(True)
        font.setPointSizeF(font.pointSizeF() * 1.2)
        self.title_label.setFont(font)
        self.title_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)

        self.status_label = QLabel()
        self.status_label.setWordWrap(True)
        self.status_label.hide()

        self.verdict_label = QLabel()
        vfont = self.verdict_label.font()
        vfont.setBold(True)
        vfont.setPointSizeF(vfont.pointSizeF() * 1.15)
        self.verdict_label.setFont(vfont)
        self.verdict_label.setWordWrap(True)
        self.verdict_label.setToolTip(TOOLTIPS["white_noise"])
        self.verdict_label.hide()

        self.params_table = SectionTable(["Parameter", "Estimate", "Std. error", "z", "p", ""])
        self.params_table.horizontalHeaderItem(1).setToolTip(TOOLTIPS["estimate"])
        self.params_table.horizontalHeaderItem(2).setToolTip(TOOLTIPS["se"])
        self.params_table.horizontalHeaderItem(3).setToolTip(TOOLTIPS["t"])
        self.params_table.horizontalHeaderItem(4).setToolTip(TOOLTIPS["p"])
        self.summary_table = SectionTable(["Quantity", "Value"])
        self.checks_table = SectionTable(["Check", "Statistic", "Reference", "p", "Result"])
        self.checks_table.horizontalHeaderItem(3).setToolTip(TOOLTIPS["p"])
        self.step_table = SectionTable(["Test", "Statistic", "df", "p"])
        self.tables: dict[str, SectionTable] = {
            "params": self.params_table,
            "summary": self.summary_table,
            "checks": self.checks_table,
            "step": self.step_table,
        }

        self.warnings_list = QListWidget()
        self.warnings_list.setWordWrap(True)
        self.warnings_list.setToolTip(TOOLTIPS["warnings"])
        self.warnings_list.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
        self.warnings_list.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        self.warnings_list.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAsNeeded)
        self.warnings_list.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)

        self.step_header = section_header("Step test against the parent")
        self.step_header.setToolTip(TOOLTIPS["step_test"])
        self.step_label = QLabel()
        self.step_label.setWordWrap(True)
        self.step_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.step_section = QWidget()
        step_layout = QVBoxLayout(self.step_section)
        step_layout.setContentsMargins(0, 0, 0, 0)
        step_layout.addWidget(self.step_header)
        step_layout.addWidget(self.step_label)
        step_layout.addWidget(self.step_table, 0, Qt.AlignmentFlag.AlignLeft)

        # layout: parameters | fit summary, then the checks, warnings and step test
        self.numbers_section = ReflowRow()
        self.numbers_section.add(titled("Parameters", self.params_table))
        self.numbers_section.add(titled("Fit summary", self.summary_table))
        self.checks_section = QWidget()
        checks_layout = QVBoxLayout(self.checks_section)
        checks_layout.setContentsMargins(0, 0, 0, 0)
        checks_layout.addWidget(section_header("Residual checks"))
        checks_layout.addWidget(self.checks_table, 0, Qt.AlignmentFlag.AlignLeft)

        self.warnings_section = QWidget()
        warnings_layout = QVBoxLayout(self.warnings_section)
        warnings_layout.setContentsMargins(0, 0, 0, 0)
        warnings_layout.addWidget(section_header("Warnings"))
        warnings_layout.addWidget(self.warnings_list)

        content = QWidget()
        body = QVBoxLayout(content)
        body.setContentsMargins(8, 8, 8, 8)
        body.setSpacing(4)
        body.addWidget(self.title_label)
        body.addWidget(self.status_label)
        body.addWidget(self.verdict_label)
        body.addWidget(self.numbers_section)
        body.addWidget(self.checks_section)
        body.addWidget(self.warnings_section)
        body.addWidget(self.step_section)
        body.addStretch(1)

        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        scroll.setWidget(content)
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        outer.addWidget(scroll)

        self._clear("No candidate")

    # ---------------------------------------------------------- public API
    @property
    def evaluation(self):
        """The evaluation shown, or ``None`` (pending, failed or empty)."""
        return self._evaluation

    def cell_text(self, section: str, row: int, col: int) -> str:
        """Text of one cell of a section table (``"params"``, ``"summary"``, ``"checks"``, ``"step"``)."""
        return self.tables[section].text(row, col)

    def row_of(self, section: str, key: str) -> int:
        """Row of the line with ``key`` in a section (e.g. ``"ljung_box:12"``, ``"aic"``, ``"ar.L1"``)."""
        return self.tables[section].row_of(key)

    def cell_tooltip(self, section: str, row: int, col: int) -> str:
        item = self.tables[section].item(row, col)
        return "" if item is None else item.toolTip()

    def warnings(self) -> list[str]:
        """The warning lines shown."""
        return [self.warnings_list.item(i).text() for i in range(self.warnings_list.count())]

    def show_pending(self, label: str) -> None:
        """A fit is running: drop the previous numbers and say so."""
        self._clear(label)
        self._set_status(f"Fitting {label} … the numbers appear when the fit finishes.", theme.PREVIEW)

    def show_failure(self, label: str, message: str) -> None:
        """The fit failed: show why, and nothing else."""
        self._clear(label)
        self._set_status(f"The fit of {label} failed: {message}", theme.ATTENTION)

    def show_evaluation(self, evaluation, step_test=None) -> None:
        """Show an :class:`~lagwright.core.evaluate.Evaluation`.

        ``step_test`` overrides ``evaluation.step_test`` when given. A
        preview is marked and never shows a step test.
        """
        fit = evaluation.fit
        label = fit.spec.description
        if not fit.ok:
            self.show_failure(label, fit.failure)
            return
        self._clear(label, keep_sections=True)
        self._evaluation = evaluation
        if fit.is_preview:
            self.title_label.setText(f"{label}  ({PREVIEW_MARK})")
            self._set_status(PREVIEW_MARK.capitalize() + ": these numbers come from the fast "
                             "conditional-sum-of-squares preview and will be replaced.", theme.PREVIEW)
            self.status_label.setToolTip(TOOLTIPS["preview"])
        else:
            self.title_label.setText(f"{label}  (exact fit)")
        self._show_params(fit)
        self._show_summary(fit)
        self.numbers_section.show()
        self.numbers_section.reflow()
        self._show_verdict(evaluation)
        if evaluation.diagnostics is not None:
            self._show_checks(evaluation.diagnostics)
            self.checks_section.show()
        else:
            self.checks_table.clear_rows()
            self.checks_section.hide()
        self._show_warnings(evaluation)
        if fit.is_preview:  # the step is tested on exact fits only
            self.step_table.clear_rows()
            self.step_label.clear()
            self.step_section.hide()
        else:
            self._show_step(step_test if step_test is not None else evaluation.step_test)

    def is_preview_shown(self) -> bool:
        return self._evaluation is not None and self._evaluation.is_preview

    # ------------------------------------------------------------ sections
    def _clear(self, label: str, keep_sections: bool = False) -> None:
        # A new evaluation refills every section in place (``keep_sections``): hiding them and
        # showing them again cost more than the refill. Anything else (a failure, a pending fit)
        # hides them.
        self._evaluation = None
        self.title_label.setText(label)
        self.status_label.hide()
        self.status_label.setToolTip("")
        if keep_sections:
            return
        self.verdict_label.hide()
        for table in self.tables.values():
            table.clear_rows()
        self.numbers_section.hide()
        self.checks_section.hide()
        self.warnings_list.clear()
        self.warnings_section.hide()
        self.step_label.clear()
        self.step_section.hide()

    def _set_status(self, text: str, colour: str) -> None:
        self.status_label.setText(text)
        self.status_label.setStyleSheet(banner_style(colour))
        self.status_label.show()

    def _show_verdict(self, evaluation) -> None:
        diagnostics = evaluation.diagnostics
        if diagnostics is None:
            self.verdict_label.setText("Residual checks unavailable")
            self.verdict_label.setStyleSheet(banner_style(theme.REFERENCE))
        else:
            verdict = diagnostics.white_noise_verdict
            text = f"Residuals: {verdict.label}"
            if verdict.failed:
                text += "  —  failed at 5 %: " + ", ".join(verdict.failed)
            else:
                text += "  —  main Ljung-Box, sign-change and periodogram checks pass at 5 %"
            self.verdict_label.setText(text)
            style = banner_style(theme.VERDICT_COLOURS[verdict.label])
            if self.verdict_label.styleSheet() != style:  # restyling costs a polish of the label
                self.verdict_label.setStyleSheet(style)
        self.verdict_label.show()

    def _show_params(self, fit) -> None:
        rows = []
        for est in fit.params:
            if est.name == "sigma2":
                tip = TOOLTIPS["sigma2_param"]
                rows.append(("sigma2", [
                    Cell("sigma2", TOOLTIPS["sigma2"]),
                    _num(est.value, TOOLTIPS["estimate"]),
                    _num(est.se, TOOLTIPS["se"]),
                    Cell("—", tip, numeric=True),
                    Cell("—", tip, numeric=True),
                    Cell(""),
                ]))
                continue
            weak = est.weak
            flag = Cell("|z| < 2", TOOLTIPS["weak"], colour=theme.ATTENTION) if weak else Cell("")
            name_tip = TOOLTIPS["weak"] if weak else TOOLTIPS["estimate"]
            shown = est.name
            for item in fit.spec.interventions:
                if item.name == est.name:  # an intervention is named by its date where the series has dates
                    when = self.date_of(item.position) if self.date_of is not None else None
                    shown = f"{item.kind} {when}" if when else est.name
                    name_tip = f"{item.label[0].upper()}{item.label[1:]} ({est.name}): its effect on the modelled " \
                               "series. " + name_tip
            rows.append((est.name, [
                Cell(shown, name_tip, colour=theme.ATTENTION if weak else None),
                _num(est.value, TOOLTIPS["estimate"]),
                _num(est.se, TOOLTIPS["se"]),
                _num(est.stat, TOOLTIPS["t"], colour=theme.ATTENTION if weak else None),
                _p(est.p),
                flag,
            ]))
        self.params_table.fill(rows)
        flag_column = self.params_table.columnCount() - 1
        self.params_table.setColumnHidden(flag_column, not any(p.weak for p in fit.params))
        self.params_table.updateGeometry()

    def _show_summary(self, fit) -> None:
        conv = fit.convergence
        details = ", ".join(
            part for part in (
                conv.optimizer,
                f"{conv.iterations} iterations" if conv.optimizer else "",
                f"start: {conv.start}" if conv.start else "",
            ) if part
        )
        status = "converged" if conv.converged else "not converged"
        conv_tip = TOOLTIPS["convergence"]
        if conv.attempts:
            conv_tip += "\n\nAttempts:\n" + "\n".join(conv.attempts)
        cov_short = fit.cov_type.split(":", 1)[0] if fit.cov_type else "—"
        rows = [
            ("sigma2", [Cell("σ²", TOOLTIPS["sigma2"]), _num(fit.sigma2, TOOLTIPS["sigma2"])]),
            ("loglik", [Cell("Log-likelihood", TOOLTIPS["loglik"]), _num(fit.loglik, TOOLTIPS["loglik"])]),
            ("k", [Cell("k (parameters)", TOOLTIPS["k"]), Cell(format_count(fit.n_params), TOOLTIPS["k"], numeric=True)]),
            ("n", [Cell("n (values used)", TOOLTIPS["n"]), Cell(format_count(fit.nobs), TOOLTIPS["n"], numeric=True)]),
            ("aic", [Cell("AIC", TOOLTIPS["aic"]), _num(fit.aic, TOOLTIPS["aic"])]),
            ("aicc", [Cell("AICc", TOOLTIPS["aicc"]), _num(fit.aicc, TOOLTIPS["aicc"])]),
            ("bic", [Cell("BIC", TOOLTIPS["bic"]), _num(fit.bic, TOOLTIPS["bic"])]),
            ("hqic", [Cell("HQIC", TOOLTIPS["hqic"]), _num(fit.hqic, TOOLTIPS["hqic"])]),
            ("cov_type", [Cell("Covariance", TOOLTIPS["cov_type"]),
                          Cell(cov_short, f"{TOOLTIPS['cov_type']}\n{fit.cov_type}")]),
            ("convergence", [Cell("Convergence", conv_tip),
                             Cell(status, conv_tip + ("" if conv.converged else f"\n\n{conv.message}"),
                                  colour=None if conv.converged else theme.ATTENTION)]),
            ("optimizer", [Cell("Optimizer", conv_tip), Cell(details or "—", conv_tip)]),
        ]
        self.summary_table.fill(rows)

    def _show_checks(self, d) -> None:
        rows = []
        lb_tip = TOOLTIPS["ljung_box"]
        main = d.main_ljung_box
        for row in d.ljung_box:
            name = f"Ljung-Box, m = {row.lag}"
            tip = lb_tip
            if main is not None and row.lag == main.lag:
                name += " (main)"
                tip += "\nThis is the lag the white-noise verdict uses."
            rows.append((f"ljung_box:{row.lag}", [
                Cell(name, tip), _num(row.stat, tip), Cell(f"df {row.df}", tip),
                _p(row.p, tip), _result(_passes(row.p), tip=tip),
            ]))
        ml_tip = TOOLTIPS["mcleod_li"]
        for row in d.mcleod_li:
            rows.append((f"mcleod_li:{row.lag}", [
                Cell(f"McLeod-Li, m = {row.lag}", ml_tip), _num(row.stat, ml_tip),
                Cell(f"df {row.df}", ml_tip), _p(row.p, ml_tip),
                _result(_passes(row.p), tip=ml_tip),
            ]))
        a = d.arch
        tip = TOOLTIPS["arch"]
        rows.append(("arch", [
            Cell(f"ARCH-LM, {a.nlags} lags", tip), _num(a.lm, tip), Cell(f"df {a.df}", tip),
            _p(a.p, tip), _result(_passes(a.p), tip=tip),
        ]))
        sc = d.sign_change
        tip = TOOLTIPS["sign_change"] + f"\nExpected {sc.expected:g} changes; normal-approximation p = {format_p(sc.p_normal)}."
        lo, hi = sc.interval95
        rows.append(("sign_change", [
            Cell("Sign changes", tip), Cell(f"{sc.changes} of {sc.possible}", tip, numeric=True),
            Cell(f"95 %: {lo}–{hi}", tip), _p(sc.p_exact, tip),
            _result(sc.p_exact >= ALPHA, "passes", sc.verdict, tip=tip),
        ]))
        ru = d.runs
        tip = TOOLTIPS["runs"] + f"\nz = {format_number(ru.z)}."
        rows.append(("runs", [
            Cell("Runs about the median", tip), Cell(f"{ru.runs} runs", tip, numeric=True),
            Cell(f"expected {ru.expected:.1f}", tip), _p(ru.p, tip), _result(_passes(ru.p), tip=tip),
        ]))
        cp = d.cumulative_periodogram
        tip = TOOLTIPS["cumulative_periodogram"] + (
            f"\nBand half-widths: 10 % {format_number(cp.band[0.10])}, 5 % {format_number(cp.band[0.05])}, "
            f"1 % {format_number(cp.band[0.01])}."
        )
        rows.append(("cumulative_periodogram", [
            Cell("Cumulative periodogram", tip), Cell(f"max dev {format_number(cp.max_deviation)}", tip, numeric=True),
            Cell(f"5 % band {format_number(cp.band[0.05])}", tip), Cell("—", tip, numeric=True),
            _result(not cp.reject[0.05], "inside band", "outside band", tip=tip),
        ]))
        nm = d.normality
        tip = TOOLTIPS["jarque_bera"] + (
            f"\nSkewness {format_number(nm.skewness)}, excess kurtosis {format_number(nm.excess_kurtosis)}."
        )
        rows.append(("jarque_bera", [
            Cell("Jarque-Bera", tip), _num(nm.jb_stat, tip), Cell("df 2", tip),
            _p(nm.jb_p, tip), _result(_passes(nm.jb_p), tip=tip),
        ]))
        if nm.test.startswith("Shapiro"):
            key, name, stat, df = "shapiro", "Shapiro-Wilk", f"W = {format_number(nm.test_stat)}", ""
        else:
            key, name, stat, df = "dagostino", "D'Agostino K²", format_number(nm.test_stat), "df 2"
        tip = TOOLTIPS[key]
        rows.append((key, [
            Cell(name, tip), Cell(stat, tip, numeric=True), Cell(df, tip),
            _p(nm.test_p, tip), _result(_passes(nm.test_p), tip=tip),
        ]))
        ol = d.outliers
        p_out = outlier_excess_p(ol.count, ol.n_checked, ol.threshold)
        tip = TOOLTIPS["outliers"]
        rows.append(("outliers", [
            Cell(f"Outliers beyond ±{ol.threshold:g}", tip), Cell(str(ol.count), tip, numeric=True),
            Cell(f"expected {ol.expected:.2f}", tip), _p(p_out, tip),
            _result(_passes(p_out), "as expected", "too many", tip=tip),
        ]))
        self.checks_table.fill(rows)

    def _show_warnings(self, evaluation) -> None:
        fit = evaluation.fit
        lines = []
        if not fit.convergence.converged:
            lines.append(f"The optimizer did not report convergence: {fit.convergence.message}")
        lines += list(fit.root_warnings.messages())
        lines += list(fit.warnings)
        if evaluation.diagnostics_error:
            lines.append(evaluation.diagnostics_error)
        self.warnings_list.clear()
        if not lines:
            item = QListWidgetItem("No warnings: the roots are clear of the unit circle and of each other.")
            item.setForeground(QBrush(QColor(theme.REFERENCE)))
            item.setToolTip(TOOLTIPS["roots"])
            self.warnings_list.addItem(item)
        for line in lines:
            item = QListWidgetItem("• " + line)
            item.setForeground(QBrush(QColor(theme.ATTENTION)))
            item.setToolTip(line)
            self.warnings_list.addItem(item)
        rows = min(self.warnings_list.count(), 5)
        height = sum(max(self.warnings_list.sizeHintForRow(i), self.fontMetrics().height() + 4) for i in range(rows))
        self.warnings_list.setFixedHeight(height + 2 * self.warnings_list.frameWidth() + 4)
        self.warnings_section.show()

    def _show_step(self, step) -> None:
        self.step_section.show()
        if step is None:
            self.step_header.setText("Step test against the parent")
            self.step_label.setText("No parent: this candidate starts a branch, so there is no step to test.")
            self.step_label.setStyleSheet("")
            self.step_table.clear_rows()
            self.step_table.hide()
            return
        if step.smaller and step.larger:
            self.step_header.setText(f"Step test: {step.smaller} → {step.larger}")
        else:
            self.step_header.setText("Step test against the parent")
        self.step_label.setText(step.verdict())
        colour = theme.ATTENTION if step.negative_lr else None
        self.step_label.setStyleSheet(f"QLabel {{ color: {colour}; }}" if colour else "")
        self.step_label.setToolTip(TOOLTIPS["verdict"])
        rows = []
        if step.applies:
            tip = TOOLTIPS["f_test"]
            rows.append(("f_test", [
                Cell("F-test", tip), _num(step.f_stat, tip),
                Cell(f"{step.f_df1}, {step.f_df2}", tip, numeric=True), _p(step.f_p, tip),
            ]))
            tip = TOOLTIPS["lr"]
            rows.append(("lr", [
                Cell("Likelihood ratio", tip), _num(step.lr_stat, tip),
                Cell(str(step.df), tip, numeric=True), _p(step.lr_p, tip),
            ]))
        if step.criteria is not None:
            c = step.criteria
            for key, name, value, tip_key in (
                ("delta_aic", "ΔAIC", c.d_aic, "delta_aic"),
                ("delta_aicc", "ΔAICc", c.d_aicc, "delta_aicc_step"),
                ("delta_bic", "ΔBIC", c.d_bic, "delta_bic"),
            ):
                tip = TOOLTIPS[tip_key]
                rows.append((key, [
                    Cell(name, tip), Cell(format_signed(value), tip, numeric=True), Cell(""), Cell(""),
                ]))
        self.step_table.fill(rows)
        self.step_table.setVisible(bool(rows))
