"""The lineage view: the tree of candidates with the numbers that rank them.

One row per candidate, nested under the candidate it was made from. Columns
give k, AIC, BIC, ΔAICc to the best *comparable* candidate (same transform
and differencing, as :func:`lagwright.core.compare.comparability` decides),
the main Ljung-Box p-value, the white-noise verdict and a mark for the state
of the fit. Numeric columns sort by value, not by text. Rebuilding keeps the
selection, the expanded branches and the scroll position.
"""

from __future__ import annotations

import math

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QBrush, QColor, QFont
from PySide6.QtWidgets import (
    QAbstractItemView,
    QHeaderView,
    QTreeWidget,
    QTreeWidgetItem,
    QVBoxLayout,
    QWidget,
)

from lagwright.core.compare import comparability

from . import theme
from .explain import TOOLTIPS, format_number, format_p

COLUMNS = ("Candidate", "Step", "k", "AIC", "BIC", "ΔAICc", "LB p", "Verdict", "Fit")
(COL_CANDIDATE, COL_STEP, COL_K, COL_AIC, COL_BIC, COL_DELTA_AICC,
 COL_LB_P, COL_VERDICT, COL_FIT) = range(len(COLUMNS))
NUMERIC_COLUMNS = (COL_K, COL_AIC, COL_BIC, COL_DELTA_AICC, COL_LB_P)
HEADER_TIPS = {
    COL_CANDIDATE: TOOLTIPS["candidate"],
    COL_STEP: TOOLTIPS["step"],
    COL_K: TOOLTIPS["k"],
    COL_AIC: TOOLTIPS["aic"],
    COL_BIC: TOOLTIPS["bic"],
    COL_DELTA_AICC: TOOLTIPS["delta_aicc"],
    COL_LB_P: TOOLTIPS["lb_p"],
    COL_VERDICT: TOOLTIPS["white_noise"],
    COL_FIT: TOOLTIPS["fit_mark"],
}

#: Role holding the candidate id (column 0).
ID_ROLE = Qt.ItemDataRole.UserRole + 1
#: Role holding each column's sort key (a float, or a string for text columns).
SORT_ROLE = Qt.ItemDataRole.UserRole + 2

MARK_CONVERGED, MARK_NOT_CONVERGED, MARK_FAILED, MARK_FITTING, MARK_PREVIEW = "✓", "!", "✗", "…", "≈"
_VERDICT_RANK = {"white": 0.0, "doubtful": 1.0, "not white": 2.0}
_MARK_RANK = {MARK_CONVERGED: 0.0, MARK_PREVIEW: 1.0, MARK_FITTING: 2.0, MARK_NOT_CONVERGED: 3.0, MARK_FAILED: 4.0, "": 5.0}


def fit_mark(evaluation, busy: bool) -> tuple[str, str, str | None]:
    """The Fit column's mark, its tooltip and its colour for one candidate."""
    if busy:
        tip = "Fitting now."
        if evaluation is not None and evaluation.is_preview:
            tip += " The preview is shown meanwhile."
        return MARK_FITTING, tip, theme.PREVIEW
    if evaluation is None:
        return "", "Not fitted yet.", None
    fit = evaluation.fit
    if not fit.ok:
        return MARK_FAILED, f"The fit failed: {fit.failure}", theme.BAD
    if fit.is_preview:
        return MARK_PREVIEW, "Only the preview is available. " + TOOLTIPS["preview"], theme.PREVIEW
    conv = fit.convergence
    if conv.converged:
        return MARK_CONVERGED, f"Converged ({conv.optimizer}, {conv.iterations} iterations).", theme.GOOD
    return MARK_NOT_CONVERGED, f"The optimizer did not report convergence: {conv.message}", theme.ATTENTION


def delta_aicc(lineage, evaluations) -> dict[str, tuple[float, str]]:
    """ΔAICc of each exactly fitted candidate to the lowest AICc among those comparable with it.

    Returns ``{candidate_id: (delta, best_id)}``; candidates without an
    exact, successful fit are left out.
    """
    exact = {}
    for candidate in lineage.candidates:
        ev = evaluations.get(candidate.id)
        if ev is None or not ev.fit.ok or ev.fit.is_preview or not math.isfinite(ev.fit.aicc):
            continue
        exact[candidate.id] = (candidate.spec, ev.fit.aicc)
    out = {}
    for cid, (spec, aicc) in exact.items():
        group = [(other_aicc, oid) for oid, (other, other_aicc) in exact.items() if not comparability(spec, other)]
        best, best_id = min(group)
        out[cid] = (aicc - best, best_id)
    return out


class CandidateItem(QTreeWidgetItem):
    """A lineage row that sorts numeric columns by value (missing values last when ascending)."""

    def __lt__(self, other: QTreeWidgetItem) -> bool:
        tree = self.treeWidget()
        column = tree.sortColumn() if tree is not None else COL_CANDIDATE
        mine, theirs = self.data(column, SORT_ROLE), other.data(column, SORT_ROLE)
        if mine is None or theirs is None:
            return self.text(column) < other.text(column)
        if isinstance(mine, str) or isinstance(theirs, str):
            return str(mine) < str(theirs)
        return float(mine) < float(theirs)

    @property
    def candidate_id(self) -> str:
        return self.data(COL_CANDIDATE, ID_ROLE)


class LineageView(QWidget):
    """The candidates as a tree.

    Signals
    -------
    candidate_selected(str)
        The user picked a row (not emitted by :meth:`select` or by rebuilding).

    Attributes
    ----------
    tree : QTreeWidget
    """

    candidate_selected = Signal(str)

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self.tree = QTreeWidget()
        self.tree.setColumnCount(len(COLUMNS))
        self.tree.setHeaderLabels(list(COLUMNS))
        self.tree.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.tree.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.tree.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.tree.setAlternatingRowColors(True)
        self.tree.setUniformRowHeights(True)
        self.tree.setRootIsDecorated(True)
        header = self.tree.header()
        header.setStretchLastSection(False)
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setSectionResizeMode(COL_STEP, QHeaderView.ResizeMode.Stretch)
        self.tree.setStyleSheet("QTreeWidget::item { padding: 2px 0px; }")
        header_item = self.tree.headerItem()
        for column, tip in HEADER_TIPS.items():
            header_item.setToolTip(column, tip)
            if column in NUMERIC_COLUMNS:
                header_item.setTextAlignment(column, Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        for column in (COL_FIT,):
            header_item.setTextAlignment(column, Qt.AlignmentFlag.AlignCenter)
        self.tree.setSortingEnabled(True)
        self.tree.sortByColumn(COL_CANDIDATE, Qt.SortOrder.AscendingOrder)
        self.tree.itemSelectionChanged.connect(self._on_selection_changed)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.tree)

        self._items: dict[str, CandidateItem] = {}
        self._lineage = None
        self._evaluations: dict = {}
        self._busy: set[str] = set()
        self._quiet = False

    # ---------------------------------------------------------- public API
    def set_lineage(self, lineage, evaluations: dict | None = None, busy: set[str] | frozenset = frozenset()) -> None:
        """Show ``lineage``; ``evaluations`` by candidate id (missing or ``None``: not fitted yet)."""
        selected = self.selected_id()
        collapsed = {cid for cid, item in self._items.items() if item.childCount() and not item.isExpanded()}
        scroll = self.tree.verticalScrollBar().value()
        self._lineage = lineage
        self._evaluations = dict(evaluations or {})
        self._busy = set(busy)
        deltas = delta_aicc(lineage, self._evaluations)

        self._quiet = True
        self.tree.setUpdatesEnabled(False)
        try:
            self.tree.setSortingEnabled(False)
            self.tree.clear()
            self._items = {}
            for number, candidate in enumerate(lineage.candidates):
                item = CandidateItem()
                self._items[candidate.id] = item
                parent = self._items.get(candidate.parent_id) if candidate.parent_id else None
                if parent is None:
                    self.tree.addTopLevelItem(item)
                else:
                    parent.addChild(item)
                self._fill(item, candidate, number, deltas.get(candidate.id))
            for cid, item in self._items.items():
                if item.childCount():
                    item.setExpanded(cid not in collapsed)
            self.tree.setSortingEnabled(True)
            self._fit_columns()
            if selected in self._items:
                self._items[selected].setSelected(True)
                self.tree.setCurrentItem(self._items[selected])
        finally:
            self.tree.setUpdatesEnabled(True)
            self._quiet = False
        self.tree.verticalScrollBar().setValue(scroll)

    def select(self, candidate_id: str | None) -> bool:
        """Select a candidate's row without emitting :attr:`candidate_selected`; False if unknown."""
        self._quiet = True
        try:
            if candidate_id is None:
                self.tree.clearSelection()
                return True
            item = self._items.get(candidate_id)
            if item is None:
                return False
            parent = item.parent()
            while parent is not None:
                parent.setExpanded(True)
                parent = parent.parent()
            self.tree.setCurrentItem(item)
            item.setSelected(True)
            self.tree.scrollToItem(item)
            return True
        finally:
            self._quiet = False

    def selected_id(self) -> str | None:
        items = self.tree.selectedItems()
        return items[0].data(COL_CANDIDATE, ID_ROLE) if items else None

    def set_busy(self, candidate_id: str, busy: bool) -> None:
        """Mark a candidate as being fitted (or not) without rebuilding the tree."""
        if busy:
            self._busy.add(candidate_id)
        else:
            self._busy.discard(candidate_id)
        item = self._items.get(candidate_id)
        if item is not None and self._lineage is not None:
            candidate = self._lineage.get(candidate_id)
            self._fill_fit_mark(item, self._evaluations.get(candidate_id), self._base_tip(candidate))

    def item(self, candidate_id: str) -> CandidateItem:
        """The row of a candidate (``KeyError`` when absent)."""
        return self._items[candidate_id]

    def cell_text(self, candidate_id: str, column: int) -> str:
        return self._items[candidate_id].text(column)

    def top_level_ids(self) -> list[str]:
        """Ids of the top-level rows in display order."""
        return [self.tree.topLevelItem(i).candidate_id for i in range(self.tree.topLevelItemCount())]

    def child_ids(self, candidate_id: str) -> list[str]:
        """Ids of a row's children in display order."""
        item = self._items[candidate_id]
        return [item.child(i).candidate_id for i in range(item.childCount())]

    # ------------------------------------------------------------ internal
    def _fit_columns(self) -> None:
        """Size every column but the step to its contents plus some air."""
        header = self.tree.header()
        for column in range(len(COLUMNS)):
            if column == COL_STEP:
                continue
            width = max(self.tree.sizeHintForColumn(column), header.sectionSizeHint(column))
            self.tree.setColumnWidth(column, width + 14)

    def _on_selection_changed(self) -> None:
        if self._quiet:
            return
        cid = self.selected_id()
        if cid is not None:
            self.candidate_selected.emit(cid)

    @staticmethod
    def _base_tip(candidate) -> str:
        note = candidate.note.strip() or "(no note)"
        return f"{candidate.id}: {candidate.spec.description}\nStep: {candidate.step or '—'}\nNote: {note}"

    def _set(self, item: CandidateItem, column: int, text: str, sort_key, tip: str,
             colour: str | None = None, bold: bool = False, italic: bool = False) -> None:
        item.setText(column, text)
        item.setData(column, SORT_ROLE, sort_key)
        item.setToolTip(column, tip)
        if column in NUMERIC_COLUMNS:
            item.setTextAlignment(column, Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        elif column == COL_FIT:
            item.setTextAlignment(column, Qt.AlignmentFlag.AlignCenter)
        if colour:
            item.setForeground(column, QBrush(QColor(colour)))
        if bold or italic:
            font = QFont(self.tree.font())
            font.setBold(bold)
            font.setItalic(italic)
            item.setFont(column, font)

    def _fill(self, item: CandidateItem, candidate, number: int, delta: tuple[float, str] | None) -> None:
        base = self._base_tip(candidate)
        ev = self._evaluations.get(candidate.id)
        fit = ev.fit if ev is not None else None
        usable = fit is not None and fit.ok
        preview = usable and fit.is_preview
        item.setData(COL_CANDIDATE, ID_ROLE, candidate.id)
        self._set(item, COL_CANDIDATE, f"{candidate.id} · {candidate.spec.description}", float(number), base)
        self._set(item, COL_STEP, candidate.step, candidate.step.lower(), base)
        k = fit.n_params if usable else candidate.spec.n_params
        self._set(item, COL_K, str(k), float(k), base + "\n\n" + TOOLTIPS["k"])

        style = {"colour": theme.PREVIEW, "italic": True} if preview else {}
        extra = "\n\nPreview value: " + TOOLTIPS["preview"] if preview else ""
        for column, value, key in ((COL_AIC, fit.aic if usable else math.nan, "aic"),
                                   (COL_BIC, fit.bic if usable else math.nan, "bic")):
            finite = math.isfinite(value)
            self._set(item, column, format_number(value, 2) if finite else "",
                      value if finite else math.inf,
                      base + f"\n\n{TOOLTIPS[key]}" + (f"\nValue: {format_number(value)}" if finite else "") + extra,
                      **style)

        if delta is not None:
            value, best_id = delta
            tip = base + f"\n\n{TOOLTIPS['delta_aicc']}\nBest comparable candidate: {best_id}."
            self._set(item, COL_DELTA_AICC, format_number(value, 2), value, tip,
                      bold=value == 0.0, colour=theme.GOOD if value == 0.0 else None)
        else:
            why = "an exact fit is needed" if fit is None or preview or not usable else "no AICc"
            self._set(item, COL_DELTA_AICC, "", math.inf, base + f"\n\n{TOOLTIPS['delta_aicc']}\n(Blank: {why}.)")

        diagnostics = ev.diagnostics if ev is not None else None
        main = diagnostics.main_ljung_box if diagnostics is not None else None
        if main is not None:
            tip = base + f"\n\n{TOOLTIPS['lb_p']}\nQ({main.lag}) = {format_number(main.stat)} on {main.df} df."
            self._set(item, COL_LB_P, format_p(main.p), main.p, tip,
                      colour=theme.ATTENTION if main.p < 0.05 else None, **({"italic": True} if preview else {}))
        else:
            self._set(item, COL_LB_P, "", math.inf, base + "\n\n" + TOOLTIPS["lb_p"])

        if diagnostics is not None:
            verdict = diagnostics.white_noise_verdict
            tip = base + "\n\n" + TOOLTIPS["white_noise"]
            if verdict.failed:
                tip += "\nFailed: " + ", ".join(verdict.failed) + "."
            if preview:
                tip += "\n(From the preview residuals.)"
            self._set(item, COL_VERDICT, verdict.label, _VERDICT_RANK[verdict.label], tip,
                      colour=theme.VERDICT_COLOURS[verdict.label], bold=True, italic=preview)
        else:
            why = ev.diagnostics_error if ev is not None and ev.diagnostics_error else "not fitted yet"
            self._set(item, COL_VERDICT, "", 9.0, base + f"\n\n{TOOLTIPS['white_noise']}\n({why})")
        self._fill_fit_mark(item, ev, base)

    def _fill_fit_mark(self, item: CandidateItem, evaluation, base: str) -> None:
        mark, tip, colour = fit_mark(evaluation, item.candidate_id in self._busy)
        self._set(item, COL_FIT, mark, _MARK_RANK[mark], base + "\n\n" + tip, colour=colour or None, bold=True)
        if colour is None:
            item.setData(COL_FIT, Qt.ItemDataRole.ForegroundRole, None)
