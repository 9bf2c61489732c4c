"""The order-screen dialog: rank every order up to limits, in the background, and keep the best few.

The screen runs on a worker thread (its fits in worker processes, which the
window starts when the dialog first opens and keeps, so they are ready by
the time the limits are set);
progress arrives by signal and *Cancel* stops it between fits. Chosen rows
are added to the lineage as new candidates marked as coming from the screen.
"""

from __future__ import annotations

import math
import threading

from PySide6.QtCore import QObject, Qt, Signal
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDialog,
    QHBoxLayout,
    QLabel,
    QProgressBar,
    QPushButton,
    QSpinBox,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
)

from lagwright.core.errors import LagwrightError
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


class _Relay(QObject):
    progressed = Signal(float)
    finished = Signal(object, str)


class ScreenDialog(QDialog):
    """Screen orders on ``base``'s preparation; emits ``candidates_chosen`` with a list of specs."""

    candidates_chosen = Signal(list)

    def __init__(self, series: Series, base: ModelSpec, parent=None, workers: int | None = None, running=None):
        super().__init__(parent)
        self.setWindowTitle("Order screen")
        self.resize(640, 520)
        self.series, self.base, self.workers = series, base, workers
        self.running = running  # worker processes kept by the window (core.screen.start_workers), or None
        self.result = None
        self._cancel = threading.Event()
        self._thread: threading.Thread | None = None
        self._relay = _Relay()
        self._relay.progressed.connect(lambda f: self.progress.setValue(int(round(100 * f))))
        self._relay.finished.connect(self._finished)
        layout = QVBoxLayout(self)
        layout.addWidget(QLabel(
            f"Every order up to the limits on the prepared series ({base.transform.label}, d={base.d}, "
            f"D={base.D}, s={base.s}, constant {base.constant}), ranked by the criterion."))
        limits = QHBoxLayout()
        self.boxes = {}
        for key, text, default in (("p", "AR order ≤", 3), ("q", "MA order ≤", 3), ("P", "seasonal AR ≤", 0),
                                   ("Q", "seasonal MA ≤", 0)):
            limits.addWidget(QLabel(text))
            box = QSpinBox()
            box.setRange(0, 8)
            box.setValue(default)
            box.setEnabled(key in ("p", "q") or base.s >= 2)
            limits.addWidget(box)
            self.boxes[key] = box
        self.criterion = QComboBox()
        self.criterion.addItem("AICc", "aicc")
        self.criterion.addItem("BIC", "bic")
        limits.addWidget(self.criterion)
        layout.addLayout(limits)
        run_row = QHBoxLayout()
        self.run_button = QPushButton("Run")
        self.run_button.clicked.connect(self.start)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setEnabled(False)
        self.cancel_button.clicked.connect(self._cancel.set)
        self.progress = QProgressBar()
        run_row.addWidget(self.run_button)
        run_row.addWidget(self.cancel_button)
        run_row.addWidget(self.progress, 1)
        layout.addLayout(run_row)
        self.status = QLabel("")
        self.status.setWordWrap(True)
        layout.addWidget(self.status)
        self.table = QTableWidget(0, 4)
        self.table.setHorizontalHeaderLabels(["Model", "Criterion", "Fit", "Note"])
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.horizontalHeader().setStretchLastSection(True)
        layout.addWidget(self.table, 1)
        self.add_button = QPushButton("Add selected to the lineage")
        self.add_button.setEnabled(False)
        self.add_button.clicked.connect(self._add_selected)
        layout.addWidget(self.add_button, 0, Qt.AlignmentFlag.AlignRight)

    # --------------------------------------------------------------- running
    def start(self) -> None:
        if self._thread is not None and self._thread.is_alive():
            return
        self._cancel.clear()
        self.run_button.setEnabled(False)
        self.cancel_button.setEnabled(True)
        self.add_button.setEnabled(False)
        self.progress.setValue(0)
        self.status.setText("Screening…")
        limits = {k: box.value() if box.isEnabled() else 0 for k, box in self.boxes.items()}
        criterion = self.criterion.currentData()
        self._thread = threading.Thread(target=self._run, args=(limits, criterion), name="lagwright-screen",
                                        daemon=True)
        self._thread.start()

    def _run(self, limits: dict, criterion: str) -> None:
        from lagwright.core.screen import screen

        try:
            result = screen(self.series, self.base, limits["p"], limits["q"], limits["P"], limits["Q"],
                            criterion=criterion, workers=self.workers, running=self.running,
                            progress=self._relay.progressed.emit, cancelled=self._cancel.is_set)
            self._relay.finished.emit(result, "")
        except LagwrightError as exc:
            self._relay.finished.emit(None, str(exc))
        except Exception as exc:  # noqa: BLE001 - shown in the dialog, never a traceback
            self._relay.finished.emit(None, f"Internal error ({type(exc).__name__}: {exc}). Please report it.")

    def _finished(self, result, error: str) -> None:
        self.run_button.setEnabled(True)
        self.cancel_button.setEnabled(False)
        if error:
            self.status.setText(error)
            return
        self.result = result
        self.status.setText(
            ("Cancelled: partial results. " if result.cancelled else "")
            + f"{len(result.rows)} orders; {result.n_exact} fitted exactly (the leaders of the preview ranking)."
        )
        self.table.setRowCount(len(result.rows))
        for i, row in enumerate(result.rows):
            fit = ("exact" if row.converged else "exact, not converged") if row.exact else "preview only"
            value = "—" if not math.isfinite(row.criterion) else f"{row.criterion:.3f}"
            for j, text in enumerate((row.spec.label, value, fit, row.note)):
                self.table.setItem(i, j, QTableWidgetItem(text))
        self.table.resizeColumnsToContents()
        if result.rows:
            self.table.selectRow(0)
        self.add_button.setEnabled(bool(result.rows))

    def _add_selected(self) -> None:
        rows = sorted({index.row() for index in self.table.selectionModel().selectedRows()})
        specs = [self.result.rows[i].spec for i in rows]
        if specs:
            self.candidates_chosen.emit(specs)

    def wait(self, timeout: float | None = None) -> None:
        """Block until the screen thread ends (tests and closing)."""
        if self._thread is not None:
            self._thread.join(timeout)

    def done(self, code: int) -> None:  # noqa: D401 - Qt override
        self._cancel.set()
        self.wait(30)
        super().done(code)
