"""The workbench window: lineage, term bar, linked residual panes, tests panel.

The window owns no statistics: it asks :mod:`lagwright.core` through the
:class:`~lagwright.app.fit_service.FitService` and draws what comes back.
Every candidate is fitted twice: a preview (conditional sum of squares,
drawn at once and marked as such) and the exact fit that replaces it. A
response is drawn only if it is the latest request for the candidate in
view; anything else is cached for later and never drawn over newer work.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

from PySide6.QtCore import QStandardPaths, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QColor, QKeySequence
from PySide6.QtWidgets import (
    QApplication,
    QFileDialog,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QMainWindow,
    QMessageBox,
    QPlainTextEdit,
    QSplitter,
    QTabWidget,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from lagwright.core import samples
from lagwright.core.compare import nested_test
from lagwright.core.errors import LagwrightError
from lagwright.core.evaluate import Evaluation
from lagwright.core.history import History, Snapshot
from lagwright.core.lineage import Lineage
from lagwright.core.loader import load_series
from lagwright.core.prepare import estimate_boxcox_lambda
from lagwright.core.series import Series
from lagwright.core.session import SUFFIX, DataReference, Session, read_session, write_session
from lagwright.core.spec import ModelSpec

from . import theme
from .compare_view import CompareView
from .fit_service import FitResponse, FitService
from .forecast_view import ForecastView
from .gc_policy import collect_on_gui_thread
from .hints_view import HintsView
from .lineage_view import LineageView
from .panes import (
    CorrelationPane,
    CumulativePeriodogramPane,
    IdentificationPane,
    NormalQuantilePane,
    ResidualHistogramPane,
    ResidualSelection,
    ResidualTracePane,
    RootMapPane,
)
from .prepare_bar import PrepareBar
from .term_bar import TermBar
from .tests_panel import TestsPanel

#: Seasonal period suggested for a detected frequency (common practice).
SEASON_FOR_FREQUENCY = {"D": 7, "B": 5, "W": 52, "MS": 12, "ME": 12, "M": 12, "QS": 4, "QE": 4, "Q": 4,
                        "h": 24, "H": 24, "10min": 144, "15min": 96, "30min": 48}


#: Neighbours whose state vector would be larger than this are not fitted ahead.
PREFETCH_MAX_STATE = 40

#: When this series' exact fits take the worker less than this many seconds,
#: a step asks for the exact fit alone, and for a preview only if the exact
#: fit has not come back this long after it was asked for. Computing, drawing
#: and painting a preview takes a core and 50-100 ms of the window, which
#: would only delay an exact fit due a moment later (bench/bench_window.py,
#: n = 1,000: exact redraw 0.18-0.23 s with the preview drawn first). Slower
#: fits get their preview at once.
PREVIEW_HOLD = 0.1


def _state_size(spec: ModelSpec) -> int:
    """Largest lag of the expanded AR or MA polynomial: the size of the ARMA state vector."""
    ar = max(spec.ar, default=0) + max(spec.sar, default=0) * spec.s
    ma = max(spec.ma, default=0) + max(spec.sma, default=0) * spec.s
    return max(ar, ma + 1)


def _season_guess(frequency: str | None) -> int:
    if not frequency:
        return 0
    for key, value in SEASON_FOR_FREQUENCY.items():
        if frequency == key or frequency.startswith(key + "-") or frequency.startswith(key):
            return value
    return 0


class MainWindow(QMainWindow):
    """Lagwright's main window.

    Signals
    -------
    candidate_drawn(str)
        The candidate in view has been drawn completely ("preview",
        "exact" or "failed").

    Parameters
    ----------
    use_processes : bool
        Run exact fits in a worker process (the normal case) or a thread (tests).
    recovery_path : Path, optional
        Where the autosaved recovery session lives (default: the user's
        application-data folder).
    ask_restore : bool
        Offer to restore a recovery file found at start.
    prefetch : bool
        Fit the neighbours of the candidate in view while the worker is idle
        (on in the program; off by default so tests control every fit).
    """

    candidate_drawn = Signal(str)

    def __init__(self, use_processes: bool = True, recovery_path: Path | None = None, ask_restore: bool = True,
                 prefetch: bool = False):
        super().__init__()
        collect_on_gui_thread()  # Qt objects must never be destroyed by a collection in a fit thread
        self.prefetch = prefetch
        self._prefetched: set[ModelSpec] = set()
        #: Seconds the worker spent on the latest exact fit of this series (None before the first).
        self.exact_seconds: float | None = None
        self._labels: list[str] = []
        self._labels_for: Series | None = None
        #: The latest forecast check of each candidate (holdout score and forecast), for the memo.
        self.forecast_checks: dict[ModelSpec, object] = {}
        self.setWindowTitle("Lagwright")
        self.resize(1500, 940)
        self.service = FitService(use_processes=use_processes, parent=self)
        self._screen_workers = None  # the order screen's worker processes (see _screen_workers_for)
        self.service.fit_finished.connect(self._on_fit_finished)
        self.series: Series | None = None
        self.data_ref = DataReference()
        self.history: History | None = None
        self.session_path: Path | None = None
        self.evaluations: dict[ModelSpec, Evaluation] = {}
        self.failures: dict[ModelSpec, str] = {}
        self.latest: dict[tuple[ModelSpec, str], int] = {}
        self.drawn: tuple[ModelSpec, str] | None = None
        self._drawing: tuple[ModelSpec, str] | None = None
        self._jobs: list = []
        self._stale_panes: set = set()
        self._pane_job = None
        self._draw_timer = QTimer(self)
        self._draw_timer.setSingleShot(True)
        self._draw_timer.setInterval(0)
        self._draw_timer.timeout.connect(self._draw_next)
        self._late_timer = QTimer(self)
        self._late_timer.setSingleShot(True)
        self._late_timer.timeout.connect(self._exact_is_late)
        self._updating_note = False
        self._prepared_stale: ModelSpec | None = None
        self._compare_stale = False
        if recovery_path is None:
            folder = Path(QStandardPaths.writableLocation(QStandardPaths.StandardLocation.AppDataLocation) or Path.home())
            recovery_path = folder / ("recovery" + SUFFIX)
        self.recovery_path = Path(recovery_path)
        self._autosave_timer = QTimer(self)
        self._autosave_timer.setSingleShot(True)
        self._autosave_timer.setInterval(800)
        self._autosave_timer.timeout.connect(self._autosave)
        self._build()
        self._build_actions()
        self._ask_restore = ask_restore

    # ================================================================ layout
    def _build(self) -> None:
        central = QWidget()
        outer = QVBoxLayout(central)
        outer.setContentsMargins(4, 4, 4, 4)
        outer.setSpacing(2)
        self.prepare_bar = PrepareBar()
        self.term_bar = TermBar()
        outer.addWidget(self.prepare_bar)
        outer.addWidget(self.term_bar)
        self.banner = QWidget()
        banner_layout = QHBoxLayout(self.banner)
        banner_layout.setContentsMargins(8, 4, 8, 4)
        self.banner_label = QLabel()
        self.banner_label.setWordWrap(True)
        self.banner_label.setTextFormat(Qt.TextFormat.PlainText)
        close = QToolButton()
        close.setText("×")
        close.setToolTip("Dismiss this message")
        close.clicked.connect(self.banner.hide)
        banner_layout.addWidget(self.banner_label, 1)
        banner_layout.addWidget(close)
        amber = QColor(theme.BAND)
        self.banner.setStyleSheet(
            f"background: rgba({amber.red()}, {amber.green()}, {amber.blue()}, 60); border-radius: 4px;")
        self.banner.hide()
        outer.addWidget(self.banner)

        self.selection = ResidualSelection(self)
        self.trace_pane = ResidualTracePane(self.selection)
        self.histogram_pane = ResidualHistogramPane(self.selection)
        self.quantile_pane = NormalQuantilePane(self.selection)
        self.correlation_pane = CorrelationPane(self.selection)
        self.periodogram_pane = CumulativePeriodogramPane(self.selection)
        self.root_pane = RootMapPane(self.selection)
        self.identification_pane = IdentificationPane(self.selection)
        self.residual_panes = (self.trace_pane, self.histogram_pane, self.quantile_pane, self.correlation_pane,
                               self.periodogram_pane, self.root_pane)
        # Zooming the time axis of the trace keeps the prepared series in step.
        self.identification_pane.time_axis_view_box().setXLink(self.trace_pane.time_axis_view_box())

        grid_page = QWidget()
        grid = QGridLayout(grid_page)
        grid.setContentsMargins(0, 0, 0, 0)
        grid.addWidget(self.trace_pane, 0, 0)
        grid.addWidget(self.correlation_pane, 0, 1)
        grid.addWidget(self.histogram_pane, 1, 0)
        grid.addWidget(self.quantile_pane, 1, 1)
        for i in (0, 1):
            grid.setRowStretch(i, 1)
            grid.setColumnStretch(i, 1)
        more_page = QWidget()
        more = QHBoxLayout(more_page)
        more.setContentsMargins(0, 0, 0, 0)
        more.addWidget(self.periodogram_pane)
        more.addWidget(self.root_pane)
        self.compare_view = CompareView()
        self.forecast_view = ForecastView()
        self.tabs = QTabWidget()
        self.tabs.addTab(grid_page, "Residuals")
        self.tabs.addTab(more_page, "Periodogram && roots")
        self.tabs.addTab(self.identification_pane, "Prepared series")
        self.tabs.addTab(self.compare_view, "Side by side")
        self.tabs.addTab(self.forecast_view, "Holdout && forecast")

        bottom = QWidget()
        bottom_layout = QHBoxLayout(bottom)
        bottom_layout.setContentsMargins(0, 0, 0, 0)
        lineage_box = QWidget()
        lineage_layout = QVBoxLayout(lineage_box)
        lineage_layout.setContentsMargins(0, 0, 0, 0)
        lineage_layout.addWidget(QLabel("Lineage — every candidate tried, each made from its parent by one step"))
        self.lineage_view = LineageView()
        lineage_layout.addWidget(self.lineage_view, 1)
        note_box = QWidget()
        note_layout = QVBoxLayout(note_box)
        note_layout.setContentsMargins(0, 0, 0, 0)
        note_layout.addWidget(QLabel("Step note: why this step?"))
        self.note_edit = QPlainTextEdit()
        self.note_edit.setPlaceholderText("Your reason for this step; it goes into the session file and the memo.")
        note_layout.addWidget(self.note_edit, 1)
        self.hints_view = HintsView()
        bottom_layout.addWidget(lineage_box, 3)
        bottom_layout.addWidget(note_box, 1)
        bottom_layout.addWidget(self.hints_view, 1)

        self.tests_panel = TestsPanel()
        upper = QSplitter(Qt.Orientation.Horizontal)
        upper.addWidget(self.tabs)
        upper.addWidget(self.tests_panel)
        upper.setStretchFactor(0, 3)
        upper.setStretchFactor(1, 1)
        upper.setSizes([1040, 440])
        splitter = QSplitter(Qt.Orientation.Vertical)
        splitter.addWidget(upper)
        splitter.addWidget(bottom)
        splitter.setStretchFactor(0, 4)
        splitter.setStretchFactor(1, 1)
        splitter.setSizes([690, 190])
        outer.addWidget(splitter, 1)
        self.setCentralWidget(central)
        self.busy_label = QLabel()
        self.statusBar().addPermanentWidget(self.busy_label)

        self.term_bar.term_added.connect(self.add_term)
        self.term_bar.term_dropped.connect(self.drop_term)
        self.term_bar.constant_chosen.connect(self.set_constant)
        self.tests_panel.date_of = self.date_of
        self.term_bar.intervention_added.connect(self.add_intervention)
        self.term_bar.intervention_dropped.connect(self.drop_intervention)
        self.prepare_bar.preparation_changed.connect(self._preview_preparation)
        self.prepare_bar.branch_requested.connect(self.start_branch)
        self.prepare_bar.lambda_estimate_requested.connect(self._estimate_lambda)
        self.lineage_view.candidate_selected.connect(self.select_candidate)
        self.note_edit.textChanged.connect(self._note_edited)
        self.hints_view.hint_applied.connect(self.apply_hint)
        self.forecast_view.check_requested.connect(self.check_forecast)
        self.forecast_view.rolling_requested.connect(self.rolling_check)
        self.compare_view.forecast_requested.connect(self.compare_forecasts)
        self.service.task_finished.connect(self._on_task_finished)
        self.compare_view.pair_changed.connect(lambda a, b: self.compare_view.compare(a, b))
        self.selection.selection_changed.connect(self._selection_changed)
        self.tabs.currentChanged.connect(self._tab_changed)

    def _build_actions(self) -> None:
        menu = self.menuBar().addMenu("&File")
        self.open_action = self._action("&Open…", QKeySequence.StandardKey.Open, self.open_dialog, menu)
        from .import_actions import install_import_actions  # Import… and Paste from clipboard

        self.import_actions = install_import_actions(self, menu)
        self.save_action = self._action("&Save session", QKeySequence.StandardKey.Save, self.save, menu)
        self._action("Save session &as…", QKeySequence("Ctrl+Shift+S"), self.save_as, menu)
        from .export_actions import install_export_actions  # memo, CSV and picture exports

        self.export_actions = install_export_actions(self, menu)
        menu.addSeparator()
        samples_menu = menu.addMenu("Open &sample series")
        for sample in samples.SAMPLES:
            self._action(sample.title, None, lambda _=False, n=sample.name: self.open_sample(n), samples_menu)
        menu.addSeparator()
        self._action("&Quit", QKeySequence.StandardKey.Quit, self.close, menu)
        step = self.menuBar().addMenu("&Step")
        self.undo_action = self._action("&Undo step", QKeySequence("Ctrl+Z"), self.undo, step)
        self.redo_action = self._action("&Redo step", QKeySequence("Ctrl+Shift+Z"), self.redo, step)
        step.addSeparator()
        self._action("Add next &AR lag", QKeySequence("A"), lambda: self._add_next("ar"), step)
        self._action("Add next &MA lag", QKeySequence("M"), lambda: self._add_next("ma"), step)
        self._action("Add next seasonal AR lag", QKeySequence("Shift+A"), lambda: self._add_next("sar"), step)
        self._action("Add next seasonal MA lag", QKeySequence("Shift+M"), lambda: self._add_next("sma"), step)
        self._action("&Drop the selected term (focused chip, else the last added)", QKeySequence("Delete"),
                     self.drop_last_added, step)
        self._action("Add a &pulse at the selected observation", QKeySequence("P"),
                     lambda: self.add_intervention_at_selection("pulse"), step)
        self._action("Add a &level shift at the selected observation", QKeySequence("L"),
                     lambda: self.add_intervention_at_selection("level"), step)
        step.addSeparator()
        self._action("&Next candidate", QKeySequence("Ctrl+Down"), lambda: self._move(+1), step)
        self._action("&Previous candidate", QKeySequence("Ctrl+Up"), lambda: self._move(-1), step)
        self._action("Compare with &parent", QKeySequence("Ctrl+D"), self.compare_with_parent, step)
        step.addSeparator()
        self._action("Order &screen…", QKeySequence("Ctrl+R"), self.open_screen, step)

    def _action(self, text, shortcut, slot, menu) -> QAction:
        action = QAction(text, self)
        if shortcut is not None:
            action.setShortcut(shortcut)
            action.setShortcutContext(Qt.ShortcutContext.WindowShortcut)
        action.triggered.connect(slot)
        menu.addAction(action)
        self.addAction(action)
        return action

    # ============================================================ messages
    def notify(self, message: str) -> None:
        """Show a message in the window (a banner and the status bar), never a traceback."""
        self.banner_label.setText(message)
        self.banner.show()
        self.statusBar().showMessage(message.split("\n")[0], 15000)

    # ============================================================== data
    def open_sample(self, name: str = samples.DEFAULT_SAMPLE_NAME) -> bool:
        try:
            series = samples.load_sample(name)
        except LagwrightError as exc:
            self.notify(str(exc))
            return False
        return self._start_series(series, DataReference(
            path=str(samples.sample_path(name)), sha256=series.provenance.sha256,
            value_column=series.provenance.value_column, time_column=series.provenance.time_column, sample=name))

    def open_data(self, path: str | Path, value=None, time=None, sheet=None, options=None, series=None) -> bool:
        """Load a data file and start a lineage on it; on failure, keep everything as it was.

        ``options`` are import choices (ImportOptions); ``series``, if given, is the series the
        import dialog already loaded from ``path`` with them (so a large file is not read twice).
        """
        sheet = sheet if sheet is not None or options is None else options.sheet
        try:
            if series is None:
                series = load_series(path, value=value, time=time, sheet=sheet, options=options)
        except LagwrightError as exc:
            self.notify(str(exc))
            return False
        return self._start_series(series, DataReference(
            path=str(Path(path).resolve()), sha256=series.provenance.sha256,
            value_column=series.provenance.value_column, time_column=series.provenance.time_column,
            sheet=None if sheet is None else str(sheet),
            import_options={} if options is None else options.to_dict()))

    def _start_series(self, series: Series, ref: DataReference, lineage: Lineage | None = None,
                      current: str | None = None) -> bool:
        try:
            series.check_usable()
        except LagwrightError as exc:
            self.notify(str(exc))
            return False
        self.series = series
        self.data_ref = ref
        self.evaluations.clear()
        self.failures.clear()
        self.latest.clear()
        self._prefetched.clear()
        self.forecast_checks.clear()
        self.exact_seconds = None
        self.drawn = None
        self._drawing = None
        self.selection.clear()
        if lineage is None:
            season = _season_guess(series.frequency)
            lineage, root = Lineage().add_root(ModelSpec(s=season, constant="mean"), step="starting model: mean only")
            current = root.id
        self.history = History(Snapshot(lineage, current or lineage.candidates[-1].id))
        self.setWindowTitle(f"Lagwright — {series.name} ({series.provenance.source or 'in memory'})")
        self.forecast_view.set_defaults(len(series), _season_guess(series.frequency))
        self.banner.hide()
        self.statusBar().showMessage(f"Loaded {len(series)} values of {series.name}", 8000)
        self._refresh(select=True)
        for candidate in lineage.candidates:
            self._ensure_fitted(candidate.spec, draw=False)
        return True

    # ============================================================ queries
    @property
    def lineage(self) -> Lineage | None:
        return None if self.history is None else self.history.present.lineage

    @property
    def current_id(self) -> str | None:
        return None if self.history is None else self.history.present.current

    @property
    def current_spec(self) -> ModelSpec | None:
        cid = self.current_id
        return None if cid is None else self.lineage.get(cid).spec

    def evaluation_for(self, candidate_id: str) -> Evaluation | None:
        return self.evaluations.get(self.lineage.get(candidate_id).spec)

    def exact_fit(self, spec: ModelSpec):
        ev = self.evaluations.get(spec)
        return ev.fit if ev is not None and not ev.is_preview and ev.fit.ok else None

    def busy_specs(self) -> set[ModelSpec]:
        return {spec for (spec, kind) in self.latest if kind == "exact" and not self._has_exact(spec)
                and spec not in self.failures}

    def _has_exact(self, spec: ModelSpec) -> bool:
        ev = self.evaluations.get(spec)
        return ev is not None and not ev.is_preview

    # ============================================================== steps
    def _push(self, lineage: Lineage, current: str) -> None:
        self.history.push(Snapshot(lineage, current))
        self._ensure_fitted(self.current_spec, draw=True)  # the workers start before the window redraws
        self._refresh(select=True)
        self._autosave_timer.start()

    def add_term(self, kind: str, lag: int) -> None:
        self._step(lambda spec: spec.with_term(kind, lag))

    def drop_term(self, kind: str, lag: int) -> None:
        self._step(lambda spec: spec.without_term(kind, lag))

    def set_constant(self, constant: str) -> None:
        self._step(lambda spec: spec.with_constant(constant))

    def add_intervention(self, kind: str, position: int) -> None:
        """Add a pulse or level-shift regressor at observation ``position`` (0-based) as a step.

        One that the data cannot estimate (on a gap, or among the observations
        differencing uses up) is refused with the reason, and no step is made.
        """
        from lagwright.core.interventions import check_interventions

        def change(spec):
            new = spec.with_intervention(kind, position)
            if self.series is not None:
                check_interventions(new, len(self.series), self.series.name, self.series.values)
            return new

        self._step(change)

    def drop_intervention(self, kind: str, position: int) -> None:
        self._step(lambda spec: spec.without_intervention(kind, position))

    def add_intervention_at_selection(self, kind: str) -> None:
        """The Step menu's action: an intervention at the one selected observation."""
        positions = tuple(self.selection.positions)
        if len(positions) != 1:
            self.notify("Select one residual first (click it in the trace, the quantile plot or the histogram); "
                        "outliers beyond ±3σ are marked in the trace.")
            return
        self.add_intervention(kind, int(positions[0]))

    def date_of(self, position: int) -> str | None:
        """The date of observation ``position`` (0-based), or ``None`` for an undated series."""
        if self.series is None or self.series.times is None or not 0 <= position < len(self.series):
            return None
        return self.time_labels()[position]

    def time_labels(self) -> list[str]:
        """The series' time labels, made once per series (about 40 ms at 10⁵ stamps: not per redraw)."""
        if self._labels_for is not self.series:
            self._labels = self.series.time_labels() if self.series is not None else []
            self._labels_for = self.series
        return self._labels

    def _add_next(self, kind: str) -> None:
        spec = self.current_spec
        if spec is not None:
            if kind in ("sar", "sma") and spec.s < 2:
                self.notify("Seasonal terms need a seasonal period: set s in the Prepare bar and start a branch.")
                return
            self.add_term(kind, spec.next_lag(kind))

    def drop_last_added(self) -> None:
        """Drop the selected term: the focused chip of the term bar, else the term whose addition
        made the current candidate."""
        if self.history is None:
            return
        for chip in getattr(self.term_bar, "chip_buttons", []):
            if chip.hasFocus():
                if chip.property("intervention") is not None:
                    self.drop_intervention(*chip.property("intervention"))
                else:
                    self.drop_term(*chip.property("term"))
                return
        candidate = self.lineage.get(self.current_id)
        parent = self.lineage.parent(candidate.id)
        if parent is None:
            self.notify("The current candidate was not made by adding a term; click a term's × to drop it.")
            return
        for kind in ("ar", "ma", "sar", "sma"):
            added = set(candidate.spec.lags(kind)) - set(parent.spec.lags(kind))
            if added:
                self.drop_term(kind, max(added))
                return
        added_events = set(candidate.spec.interventions) - set(parent.spec.interventions)
        if added_events:
            item = max(added_events)
            self.drop_intervention(item.kind, item.position)
            return
        self.notify("The current candidate was not made by adding a term; click a term's × to drop it.")

    def _step(self, change) -> None:
        if self.history is None:
            return
        parent_id = self.current_id
        try:
            spec = change(self.lineage.get(parent_id).spec)
        except LagwrightError as exc:
            self.notify(str(exc))
            return
        existing = self.lineage.find(spec)
        if existing is not None and existing.parent_id == parent_id:
            self.select_candidate(existing.id)
            return
        try:
            lineage, child = self.lineage.add_child(parent_id, spec, date_of=self.date_of)
        except LagwrightError as exc:
            self.notify(str(exc))
            return
        self._push(lineage, child.id)

    def apply_hint(self, hint) -> None:
        """Take the step a hint suggests; the hint's reason and evidence become the step note."""
        if self.history is None:
            return
        parent_id = self.current_id
        try:
            spec = hint.apply(self.lineage.get(parent_id).spec)
            if hint.kind in ("d", "transform"):
                lineage, child = self.lineage.add_root(spec, step=f"new branch from a hint: {hint.reason}",
                                                       note=hint.note, origin="hint")
            else:
                lineage, child = self.lineage.add_child(parent_id, spec, note=hint.note, origin="hint",
                                                        date_of=self.date_of)
        except LagwrightError as exc:
            self.notify(str(exc))
            return
        self._push(lineage, child.id)

    def open_screen(self, workers: int | None = None):
        """Open the order-screen dialog on the current preparation; returns the dialog."""
        if self.history is None:
            return None
        from .screen_dialog import ScreenDialog

        base = self.current_spec
        base = ModelSpec(d=base.d, D=base.D, s=base.s, transform=base.transform, constant=base.constant)
        dialog = ScreenDialog(self.series, base, self, workers=workers, running=self._screen_workers_for(workers))
        dialog.candidates_chosen.connect(self.add_screened)
        dialog.show()
        return dialog

    def _screen_workers_for(self, workers: int | None):
        """The screen's worker processes: started at the first screen, kept until the window closes.

        Workers that can no longer take work (one died, say for lack of
        memory) are replaced by new ones.
        """
        if workers is not None and workers <= 1:
            return None
        if self._screen_workers is not None and not self._screen_workers.usable():
            self._screen_workers.shutdown()
            self._screen_workers = None
        if self._screen_workers is None:
            from lagwright.core.screen import start_workers

            try:
                self._screen_workers = start_workers(workers)
            except (OSError, ValueError):  # no processes here: the screen runs its fits in its own thread
                return None
        return self._screen_workers

    def add_screened(self, specs: list) -> None:
        """Add orders chosen in the screen as new candidates (marked as coming from the screen)."""
        if self.history is None or not specs:
            return
        lineage, last = self.lineage, None
        for spec in specs:
            if lineage.find(spec) is not None:
                continue
            lineage, last = lineage.add_root(spec, step="from the order screen", origin="screen")
        if last is None:
            self.notify("Those orders are already in the lineage.")
            return
        self._push(lineage, last.id)
        for c in lineage.candidates:
            self._ensure_fitted(c.spec, draw=False)

    def check_forecast(self, holdout: int, horizon: int, back_transform: str) -> None:
        """Score the candidate in view on a holdout and forecast from the end (in a worker)."""
        if self.history is None:
            return
        spec = self.current_spec
        fit = self.exact_fit(spec)
        if fit is None:
            self.forecast_view.show_message("The exact fit of this candidate has not arrived yet; try again in a moment.")
            return
        if holdout >= len(self.series) - 16:
            self.forecast_view.show_message("The holdout leaves too few values to refit; hold back fewer.")
            return
        from lagwright.core.forecast import forecast_check

        self.forecast_view.show_pending(spec.description)
        self._forecast_request = (self.service.submit_task(forecast_check, self.series, fit, holdout, horizon,
                                                           back_transform), spec)

    def rolling_check(self, origins: int, horizon: int, step: int, back_transform: str) -> None:
        """Rolling-origin evaluation of the candidate in view, re-estimated at each origin (in a worker)."""
        if self.history is None:
            return
        from lagwright.core.rolling import rolling_origin

        spec = self.current_spec
        self.forecast_view.show_rolling_pending(spec.description, origins)
        self._rolling_request = (self.service.submit_task(rolling_origin, self.series, spec, origins, horizon, step,
                                                          back_transform), spec)

    def compare_forecasts(self, id_a: str, id_b: str, holdout: int) -> None:
        """Diebold-Mariano comparison of two candidates' one-step holdout forecasts (in a worker)."""
        if self.history is None:
            return
        if holdout >= len(self.series) - 16:
            self.compare_view.show_forecast_comparison(None, "The holdout leaves too few values; hold back fewer.")
            return
        from lagwright.core.forecast import compare_forecasts

        spec_a, spec_b = self.lineage.get(id_a).spec, self.lineage.get(id_b).spec
        self._compare_request = (self.service.submit_task(compare_forecasts, self.series, spec_a, spec_b, holdout),
                                 (id_a, id_b))

    def _on_task_finished(self, response) -> None:
        rolling = getattr(self, "_rolling_request", None)
        if rolling is not None and response.request_id == rolling[0]:
            self._rolling_request = None
            if rolling[1] != self.current_spec:
                return  # the user moved to another candidate: never shown
            if response.error:
                self.forecast_view.show_rolling_message(response.error)
            else:
                self.forecast_view.show_rolling(response.result)
            return
        compare = getattr(self, "_compare_request", None)
        if compare is not None and response.request_id == compare[0]:
            self._compare_request = None
            if self.compare_view.pair() != compare[1]:
                return  # the pair changed meanwhile: never shown
            if response.error:
                self.compare_view.show_forecast_comparison(None, response.error)
            else:
                self.compare_view.show_forecast_comparison(response.result)
            return
        request = getattr(self, "_forecast_request", None)
        if request is None or response.request_id != request[0]:
            return  # superseded
        self._forecast_request = None
        if not response.error and response.result is not None:
            self.forecast_checks[request[1]] = response.result  # the memo of this candidate reports it
        if request[1] != self.current_spec:
            return  # the user moved to another candidate: never drawn
        if response.error:
            self.forecast_view.show_message(response.error)
        else:
            self.forecast_view.show_result(response.result, self.series)

    def start_branch(self, spec: ModelSpec) -> None:
        """Start a new root with another preparation; the old candidates stay untouched."""
        if self.history is None:
            return
        try:
            from lagwright.core.prepare import prepare

            prepare(self.series, spec)
        except LagwrightError as exc:
            self.notify(str(exc))
            return
        existing = self.lineage.find(spec)
        if existing is not None:
            self.select_candidate(existing.id)
            return
        lineage, root = self.lineage.add_root(spec, step=f"new branch: {spec.transform.label}, d={spec.d}, "
                                                          f"D={spec.D}, s={spec.s}", origin="user")
        self._push(lineage, root.id)

    def undo(self) -> None:
        if self.history is not None and self.history.can_undo:
            self.history.undo()
            self._refresh(select=True)
            self._autosave_timer.start()

    def redo(self) -> None:
        if self.history is not None and self.history.can_redo:
            self.history.redo()
            self._refresh(select=True)
            self._autosave_timer.start()

    def select_candidate(self, candidate_id: str) -> None:
        if self.history is None or candidate_id == self.current_id or candidate_id not in self.lineage:
            return
        self.history.replace(Snapshot(self.lineage, candidate_id))
        self._refresh(select=True)

    def _move(self, offset: int) -> None:
        if self.history is None:
            return
        ids = [c.id for c in self.lineage.candidates]
        index = ids.index(self.current_id) + offset
        if 0 <= index < len(ids):
            self.select_candidate(ids[index])

    def compare_with_parent(self) -> None:
        if self.history is None:
            return
        candidate = self.lineage.get(self.current_id)
        if candidate.parent_id is None:
            self.notify("The current candidate has no parent to compare with.")
            return
        self.compare_view.set_candidates(self.lineage, self._evaluations_by_id())
        self.compare_view.compare(candidate.parent_id, candidate.id)
        self.tabs.setCurrentWidget(self.compare_view)

    def _note_edited(self) -> None:
        if self.history is None or self._updating_note:
            return
        text = self.note_edit.toPlainText()
        lineage = self.lineage.with_note(self.current_id, text)
        self.history.replace(Snapshot(lineage, self.current_id))
        self._refresh_lineage_view()
        self._autosave_timer.start()


    # ============================================================ fitting
    def _ensure_fitted(self, spec: ModelSpec, draw: bool) -> None:
        """Ask for what is missing: a preview first (if nothing is there yet) and the exact fit."""
        if self.series is None or spec in self.failures:
            return
        ev = self.evaluations.get(spec)
        quick = self.exact_seconds is not None and self.exact_seconds < PREVIEW_HOLD
        if (ev is None or ev.is_preview) and (spec, "exact") not in self.latest:
            parent_fit = self._parent_exact_fit(spec)
            self.latest[(spec, "exact")] = self.service.submit(self.series, spec, "exact", parent_fit)
        if ev is None and (spec, "preview") not in self.latest:
            if quick and draw:
                self._late_timer.start(int(PREVIEW_HOLD * 1000))
            else:
                self.latest[(spec, "preview")] = self.service.submit(self.series, spec, "preview")
        self._update_busy()

    def _exact_is_late(self) -> None:
        """The exact fit of the candidate in view was expected by now: ask for its preview after all."""
        spec = self.current_spec
        if spec is None or self.series is None or spec in self.failures or spec in self.evaluations:
            return
        if (spec, "preview") not in self.latest:
            self.latest[(spec, "preview")] = self.service.submit(self.series, spec, "preview")

    def neighbours(self, spec: ModelSpec) -> list[ModelSpec]:
        """Specs one step away from ``spec``: the next AR/MA (and seasonal) lag added, each lag dropped."""
        out = [spec.with_term("ar", spec.next_lag("ar")), spec.with_term("ma", spec.next_lag("ma"))]
        for kind in ("ar", "ma", "sar", "sma"):
            out += [spec.without_term(kind, lag) for lag in spec.lags(kind)]
        if spec.s >= 2:
            out += [spec.with_term("sar", spec.next_lag("sar")), spec.with_term("sma", spec.next_lag("sma"))]
        return out

    def _maybe_prefetch(self) -> None:
        """While the exact worker is idle, fit one neighbour of the candidate in view.

        One request at a time, so a step the user takes waits behind at most
        one background fit; the result is cached and the step then draws at
        once (design notes: idle time is free time).
        """
        if not self.prefetch or self.series is None or self.history is None:
            return
        if any(kind == "exact" and not self._has_exact(spec) and spec not in self.failures
               for (spec, kind) in self.latest):
            return  # the exact worker is busy
        current = self.current_spec
        parent_fit = self.exact_fit(current)
        if parent_fit is None:
            return
        for spec in self.neighbours(current):
            if _state_size(spec) > PREFETCH_MAX_STATE:
                continue  # long seasonal lags make slow fits: never make the user wait behind one
            if spec not in self.evaluations and spec not in self.failures and (spec, "exact") not in self.latest:
                self._prefetched.add(spec)
                self.latest[(spec, "exact")] = self.service.submit(self.series, spec, "exact", parent_fit)
                return

    def _parent_exact_fit(self, spec: ModelSpec):
        for candidate in self.lineage.candidates:
            if candidate.spec == spec and candidate.parent_id is not None:
                return self.exact_fit(self.lineage.get(candidate.parent_id).spec)
        return None

    def _on_fit_finished(self, response: FitResponse) -> None:
        key = (response.spec, response.kind)
        if self.latest.get(key) != response.request_id:
            return  # a request from another series or superseded: never drawn
        spec = response.spec
        if response.kind == "exact" and response.evaluation is not None:
            self.exact_seconds = response.seconds
        if response.evaluation is None:
            if response.kind == "exact":
                self.failures[spec] = response.error
            elif self.evaluations.get(spec) is None:
                self.statusBar().showMessage(f"Preview unavailable: {response.error}", 8000)
        else:
            ev = response.evaluation
            if response.kind == "exact" or not self._has_exact(spec):
                self.evaluations[spec] = ev
            if response.kind == "exact" and not ev.fit.ok:
                self.failures[spec] = ev.fit.failure
        self._update_busy()
        if spec in self._prefetched and spec not in {c.spec for c in self.lineage.candidates}:
            self._maybe_prefetch()
            return  # a neighbour fitted ahead of time: nothing on screen changes
        self._refresh_lineage_view()
        if spec == self.current_spec:
            self._draw_current()
        self._refresh_compare_view()
        self._maybe_prefetch()

    def _refresh_compare_view(self) -> None:
        """Update the compare view now if it is on screen, else when its tab is shown."""
        if self.compare_view.isVisibleTo(self) or not self.isVisible():
            self.compare_view.set_candidates(self.lineage, self._evaluations_by_id())
            self._compare_stale = False
        else:
            self._compare_stale = True

    def _update_busy(self) -> None:
        in_lineage = {c.spec for c in self.lineage.candidates} if self.lineage is not None else set()
        n = len(self.busy_specs() & in_lineage)
        self.busy_label.setText(f"fitting {n} candidate{'s' if n != 1 else ''}…" if n else "")

    # ============================================================ drawing
    def _evaluations_by_id(self) -> dict[str, Evaluation | None]:
        return {c.id: self.evaluations.get(c.spec) for c in self.lineage.candidates}

    def _busy_ids(self) -> set[str]:
        busy = self.busy_specs()
        return {c.id for c in self.lineage.candidates if c.spec in busy}

    def _refresh_lineage_view(self) -> None:
        if self.lineage is None:
            return
        self.lineage_view.set_lineage(self.lineage, self._evaluations_by_id(), self._busy_ids())
        if self.current_id:
            self.lineage_view.select(self.current_id)

    def _refresh(self, select: bool = False) -> None:
        if self.history is None:
            return
        spec = self.current_spec
        self._refresh_lineage_view()
        self.term_bar.set_spec(spec, date_of=self.date_of)
        self.prepare_bar.set_spec(spec)
        self._updating_note = True
        self.note_edit.setPlainText(self.lineage.get(self.current_id).note)
        self._updating_note = False
        self.undo_action.setEnabled(self.history.can_undo)
        self.redo_action.setEnabled(self.history.can_redo)
        self._show_prepared(spec)
        self._ensure_fitted(spec, draw=True)
        self._maybe_prefetch()
        if getattr(self.forecast_view, "shown_for", None) != spec:
            self.forecast_view.shown_for = spec
            self._forecast_request = None
            self.forecast_view.show_message(f"{spec.description}: choose a holdout and press Check.")
            self.forecast_view.show_rolling_message("")
        self._draw_current()

    def _draw_current(self) -> None:
        """Draw the candidate in view: its failure, a 'fitting' note, its preview or its exact fit.

        Drawing is split into small jobs run one per event-loop turn, so the
        window keeps answering while six panes and the tests panel redraw.
        Panes on hidden tabs are drawn when their tab is shown. Each job
        checks that the candidate it draws is still the one in view.
        """
        spec = self.current_spec
        label = spec.description
        if spec in self.failures:
            message = f"{label}: the fit failed — {self.failures[spec]}"
            self._schedule((spec, "failed"), [lambda: self.tests_panel.show_failure(label, self.failures[spec])],
                           lambda pane: pane.clear(message))
            return
        ev = self.evaluations.get(spec)
        if ev is None:
            self.hints_view.set_hints(None, "Hints follow the exact fit.")
            self._schedule(None, [lambda: self.tests_panel.show_pending(label)],
                           lambda pane: pane.cover(f"{label}: fitting…"))
            return
        token = (spec, ev.fit.kind)
        if token in (self.drawn, self._drawing):
            return
        if not ev.fit.ok:
            self._schedule(token, [lambda: self.tests_panel.show_failure(label, ev.fit.failure)],
                           lambda pane: pane.clear(f"{label}: {ev.fit.failure}"))
            return
        step = self._step_test_for(spec, ev)
        self.hints_view.set_hints(ev.hints, "Hints follow the exact fit." if ev.is_preview else "")
        self._schedule(token, [lambda: self.tests_panel.show_evaluation(ev, step)],
                       lambda pane: pane.show_evaluation(ev, self.series))

    def _schedule(self, token, jobs: list, pane_job) -> None:
        """Queue the drawing jobs for ``token``; panes not on screen are drawn when shown."""
        self._drawing = token
        self.drawn = None
        self._pane_job = pane_job
        visible = [pane for pane in self.residual_panes if pane.isVisibleTo(self) or not self.isVisible()]
        self._stale_panes = {pane for pane in self.residual_panes if pane not in visible}
        self._jobs = list(jobs) + [lambda p=pane: pane_job(p) for pane in visible]
        self._draw_timer.start(0)

    #: Drawing jobs run back to back until this many seconds have passed in one turn.
    DRAW_BUDGET = 0.045

    def _draw_next(self) -> None:
        started = time.perf_counter()
        while self._jobs:
            self._jobs.pop(0)()
            if time.perf_counter() - started > self.DRAW_BUDGET:
                break
        if self._jobs:
            self._draw_timer.start(0)
        else:
            self.drawn = self._drawing
            self._drawing = None
            if self.drawn is not None:
                self.candidate_drawn.emit(self.drawn[1])

    def _show_prepared(self, spec: ModelSpec) -> None:
        """Draw the prepared series now if its tab is on screen, else when the tab is shown."""
        if self.identification_pane.isVisibleTo(self) or not self.isVisible():
            self.identification_pane.show_prepared(self.series, spec)
            self._prepared_stale = None
        else:
            self._prepared_stale = spec

    def _tab_changed(self, _index: int) -> None:
        if self._prepared_stale is not None and self.identification_pane.isVisibleTo(self):
            spec, self._prepared_stale = self._prepared_stale, None
            self.identification_pane.show_prepared(self.series, spec)
        if self._compare_stale and self.compare_view.isVisibleTo(self):
            self._compare_stale = False
            self.compare_view.set_candidates(self.lineage, self._evaluations_by_id())
        shown = [pane for pane in self._stale_panes if pane.isVisibleTo(self)]
        for pane in shown:
            self._stale_panes.discard(pane)
            if self._pane_job is not None:
                self._pane_job(pane)

    def _step_test_for(self, spec: ModelSpec, ev: Evaluation):
        if ev.is_preview:
            return None
        candidate = self.lineage.get(self.current_id)
        if candidate.parent_id is None:
            return None
        parent_ev = self.evaluations.get(self.lineage.get(candidate.parent_id).spec)
        if parent_ev is None or parent_ev.is_preview:
            return None
        return nested_test(parent_ev.fit, ev.fit)

    def _preview_preparation(self, spec_or_error) -> None:
        if self.series is None:
            return
        if isinstance(spec_or_error, Exception):
            self.identification_pane.clear(str(spec_or_error))
        else:
            self.identification_pane.show_prepared(self.series, spec_or_error)
            self.tabs.setCurrentWidget(self.identification_pane)

    def _estimate_lambda(self) -> None:
        if self.series is None:
            return
        try:
            self.prepare_bar.set_lambda(estimate_boxcox_lambda(self.series))
        except LagwrightError as exc:
            self.notify(str(exc))

    def _selection_changed(self, positions) -> None:
        positions = tuple(positions)
        if self.series is None or not positions:
            self.term_bar.set_selected_observation(None)
            return
        labels = self.time_labels()
        if len(positions) == 1 and 0 <= positions[0] < len(self.series):
            self.term_bar.set_selected_observation(int(positions[0]), labels[positions[0]] if self.series.times
                                                   is not None else f"observation {positions[0] + 1}")
        else:
            self.term_bar.set_selected_observation(None)
        shown = []
        for pos in list(positions)[:5]:
            if 0 <= pos < len(self.series):
                value = self.series.values[pos]
                shown.append(f"{labels[pos]}: {value:.6g}")
        if shown:
            more = f" (+{len(positions) - 5} more)" if len(positions) > 5 else ""
            self.statusBar().showMessage("Selected " + "; ".join(shown) + more, 20000)

    # ============================================================ sessions
    def current_session(self) -> Session:
        results = {}
        for c in self.lineage.candidates:
            fit = self.exact_fit(c.spec)
            if fit is not None:
                results[c.id] = {"loglik": fit.loglik, "aic": fit.aic, "aicc": fit.aicc, "bic": fit.bic,
                                 "sigma2": fit.sigma2, "converged": fit.convergence.converged}
        return Session(self.data_ref, self.lineage, self.current_id, results=results)

    def save(self) -> bool:
        if self.history is None:
            return False
        if self.session_path is None:
            return self.save_as()
        return self.save_to(self.session_path)

    def save_as(self) -> bool:
        if self.history is None:
            return False
        path, _ = QFileDialog.getSaveFileName(self, "Save session", str(Path.home() / f"{self.series.name}{SUFFIX}"),
                                              f"Lagwright sessions (*{SUFFIX})")
        return bool(path) and self.save_to(Path(path))

    def save_to(self, path: Path) -> bool:
        path = Path(path)
        if not path.name.endswith(SUFFIX):
            path = path.with_name(path.name + SUFFIX)
        try:
            write_session(self.current_session(), path)
        except LagwrightError as exc:
            self.notify(str(exc))
            return False
        self.session_path = path
        self.statusBar().showMessage(f"Saved {path}", 8000)
        return True

    def open_dialog(self) -> None:
        path, _ = QFileDialog.getOpenFileName(
            self, "Open session or data", str(Path.home()),
            f"Sessions and data (*{SUFFIX} *.csv *.tsv *.txt *.xlsx);;All files (*)")
        if path:
            self.open_path(path)

    def open_path(self, path: str | Path) -> bool:
        """Open a session file or a data file, by its name."""
        if str(path).endswith(SUFFIX):
            return self.open_session(path)
        return self.open_data(path)

    def open_session(self, path: str | Path) -> bool:
        """Open a session; on any problem, say so and keep the current work."""
        try:
            session = read_session(path)
            if not session.lineage.candidates:
                raise LagwrightError(f"The session '{Path(path).name}' holds no candidates.")
            ref = session.data
            if ref.sample:
                series = samples.load_sample(ref.sample)
            else:
                data_path = Path(ref.path)
                if not data_path.is_absolute():
                    data_path = Path(path).resolve().parent / data_path
                from lagwright.core.import_options import ImportOptions

                options = ImportOptions.from_dict(ref.import_options) if ref.import_options else None
                series = load_series(data_path, value=ref.value_column or None, time=ref.time_column or None,
                                     sheet=int(ref.sheet) if ref.sheet and str(ref.sheet).isdigit() else ref.sheet,
                                     options=options)
        except LagwrightError as exc:
            self.notify(str(exc))
            return False
        ok = self._start_series(series, ref, session.lineage, session.current)
        if ok:
            if str(path) != str(self.recovery_path):
                self.session_path = Path(path)
            if ref.sha256 and series.provenance.sha256 and ref.sha256 != series.provenance.sha256:
                self.notify(f"The data file '{series.provenance.source}' has changed since the session was saved "
                            "(its SHA-256 differs): the numbers will not match the saved ones.")
        return ok

    def _autosave(self) -> None:
        if self.history is None:
            return
        try:
            self.recovery_path.parent.mkdir(parents=True, exist_ok=True)
            write_session(self.current_session(), self.recovery_path)
        except (LagwrightError, OSError) as exc:
            self.statusBar().showMessage(f"Autosave failed: {exc}", 8000)

    def offer_restore(self) -> bool:
        """If a recovery file exists, offer to restore it; returns whether it was restored."""
        if not self.recovery_path.exists():
            return False
        answer = QMessageBox.question(
            self, "Restore previous work?",
            "Lagwright did not close normally last time. Restore the work it saved automatically?",
            QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No, QMessageBox.StandardButton.Yes)
        if answer == QMessageBox.StandardButton.Yes:
            return self.open_session(self.recovery_path)
        return False

    def closeEvent(self, event) -> None:  # noqa: N802 - Qt override
        self._autosave_timer.stop()
        self.service.shutdown(wait=False)
        if self._screen_workers is not None:
            self._screen_workers.shutdown()
            self._screen_workers = None
        try:
            self.recovery_path.unlink(missing_ok=True)
        except OSError:
            pass
        super().closeEvent(event)


def run_window(path: str | None = None) -> int:
    """Open the window (on ``path``, or the default sample) and run the event loop."""
    QApplication.setHighDpiScaleFactorRoundingPolicy(Qt.HighDpiScaleFactorRoundingPolicy.PassThrough)
    app = QApplication.instance() or QApplication(sys.argv[:1])
    app.setApplicationName("Lagwright")
    app.setOrganizationName("Lagwright")
    window = MainWindow(prefetch=True)
    window.show()
    restored = window.offer_restore()
    if not restored:
        if path is None:
            window.open_sample(samples.DEFAULT_SAMPLE_NAME)
        elif not window.open_path(path):
            problem = window.banner_label.text()
            window.open_sample(samples.DEFAULT_SAMPLE_NAME)
            window.notify(f"{problem} The bundled sample series is shown instead.")
    return app.exec()

