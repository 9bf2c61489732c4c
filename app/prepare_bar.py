"""The preparation controls: transform, d, D and s.

Changing a control updates the identification pane at once
(``preparation_changed``); pressing *Start branch* asks the window for a new
lineage branch with that preparation (``branch_requested``). Old candidates
are never silently refitted on other data.
"""

from __future__ import annotations

from PySide6.QtCore import Signal
from PySide6.QtWidgets import QComboBox, QDoubleSpinBox, QHBoxLayout, QLabel, QPushButton, QSpinBox, QToolButton, QWidget

from lagwright.core.errors import SpecError
from lagwright.core.spec import ModelSpec, Transform


class PrepareBar(QWidget):
    """Controls for the preparation of the series.

    Signals
    -------
    preparation_changed(object)
        A :class:`ModelSpec` with no terms carrying the chosen transform,
        d, D and s (or a :class:`SpecError` when the combination is invalid).
    branch_requested(object)
        The same spec, when the user asks to start a branch with it.
    lambda_estimate_requested()
    """

    preparation_changed = Signal(object)
    branch_requested = Signal(object)
    lambda_estimate_requested = Signal()

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        layout = QHBoxLayout(self)
        layout.setContentsMargins(6, 2, 6, 2)
        layout.addWidget(QLabel("Prepare:"))
        self.transform_box = QComboBox()
        for text, kind in (("no transform", "none"), ("log", "log"), ("Box-Cox", "boxcox")):
            self.transform_box.addItem(text, kind)
        self.transform_box.setToolTip("Variance-stabilising transform applied before differencing")
        self.lambda_box = QDoubleSpinBox()
        self.lambda_box.setRange(-5.0, 5.0)
        self.lambda_box.setDecimals(3)
        self.lambda_box.setSingleStep(0.05)
        self.lambda_box.setPrefix("λ = ")
        self.lambda_box.setToolTip("Box-Cox lambda: 1 is no change, 0 is the log, 0.5 a square root")
        self.lambda_button = QToolButton()
        self.lambda_button.setText("estimate")
        self.lambda_button.setToolTip("Estimate lambda by maximum likelihood (Box & Cox, 1964)")
        self.lambda_button.clicked.connect(self.lambda_estimate_requested)
        self.d_box = QSpinBox()
        self.d_box.setRange(0, 2)
        self.d_box.setPrefix("d = ")
        self.d_box.setToolTip("Ordinary differencing: how many times to take y_t - y_{t-1}")
        self.D_box = QSpinBox()
        self.D_box.setRange(0, 1)
        self.D_box.setPrefix("D = ")
        self.D_box.setToolTip("Seasonal differencing: y_t - y_{t-s}")
        self.s_box = QSpinBox()
        self.s_box.setRange(0, 10000)
        self.s_box.setPrefix("s = ")
        self.s_box.setToolTip("Seasonal period (7 for a weekly cycle in daily data, 12 for monthly data); 0 for none")
        self.branch_button = QPushButton("Start branch")
        self.branch_button.setToolTip(
            "Start a new lineage branch on the series prepared this way; existing candidates stay as they are"
        )
        for widget in (self.transform_box, self.lambda_box, self.lambda_button, self.d_box, self.D_box, self.s_box,
                       self.branch_button):
            layout.addWidget(widget)
        layout.addStretch(1)
        self.transform_box.currentIndexChanged.connect(self._changed)
        self.lambda_box.valueChanged.connect(self._changed)
        for box in (self.d_box, self.D_box, self.s_box):
            box.valueChanged.connect(self._changed)
        self.branch_button.clicked.connect(self._branch)
        self._update_enabled()

    def _update_enabled(self) -> None:
        boxcox = self.transform_box.currentData() == "boxcox"
        self.lambda_box.setEnabled(boxcox)
        self.lambda_button.setEnabled(boxcox)

    def spec(self) -> ModelSpec:
        """The preparation as a term-less spec; raises :class:`SpecError` if invalid."""
        kind = self.transform_box.currentData()
        transform = Transform(kind, self.lambda_box.value() if kind == "boxcox" else None)
        d, D, s = self.d_box.value(), self.D_box.value(), self.s_box.value()
        constant = "mean" if d + D == 0 else "none"
        return ModelSpec(d=d, D=D, s=s, transform=transform, constant=constant)

    def set_spec(self, spec: ModelSpec) -> None:
        """Show the preparation of ``spec`` without emitting signals."""
        widgets = (self.transform_box, self.lambda_box, self.d_box, self.D_box, self.s_box)
        for widget in widgets:
            widget.blockSignals(True)
        self.transform_box.setCurrentIndex(self.transform_box.findData(spec.transform.kind))
        if spec.transform.lam is not None:
            self.lambda_box.setValue(spec.transform.lam)
        self.d_box.setValue(spec.d)
        self.D_box.setValue(spec.D)
        self.s_box.setValue(spec.s)
        for widget in widgets:
            widget.blockSignals(False)
        self._update_enabled()

    def set_lambda(self, lam: float) -> None:
        self.lambda_box.setValue(lam)

    def _changed(self, *_args) -> None:
        self._update_enabled()
        try:
            self.preparation_changed.emit(self.spec())
        except SpecError as exc:
            self.preparation_changed.emit(exc)

    def _branch(self) -> None:
        try:
            self.branch_requested.emit(self.spec())
        except SpecError as exc:
            self.preparation_changed.emit(exc)
