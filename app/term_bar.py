"""The term bar: the current candidate's lags as chips, and the one-step actions.

Each chip is a lag (or an intervention) the model has; clicking its × drops
it. The buttons add the next lag of a kind, any lag typed in (subset models
such as AR{1,12}), or a pulse or level-shift intervention at the observation
selected in the panes. The bar only emits what the user asked for; the
window makes the step.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QComboBox,
    QHBoxLayout,
    QLabel,
    QSpinBox,
    QToolButton,
    QWidget,
)

from lagwright.core.spec import ModelSpec

from . import theme

KIND_NAMES = {"ar": "AR", "ma": "MA", "sar": "SAR", "sma": "SMA"}
KIND_TIPS = {
    "ar": "Autoregressive term: the series depends on its own value that many steps back.",
    "ma": "Moving-average term: the series depends on the shock that many steps back.",
    "sar": "Seasonal autoregressive term: lag in whole seasons (1 = one period s back).",
    "sma": "Seasonal moving-average term: lag in whole seasons (1 = one period s back).",
}


class TermBar(QWidget):
    """Chips for the current spec's lags, and buttons that request one step.

    Signals
    -------
    term_added(kind, lag), term_dropped(kind, lag), constant_chosen(constant),
    intervention_added(kind, position), intervention_dropped(kind, position)
    """

    term_added = Signal(str, int)
    term_dropped = Signal(str, int)
    constant_chosen = Signal(str)
    intervention_added = Signal(str, int)
    intervention_dropped = Signal(str, int)

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self._spec: ModelSpec | None = None
        layout = QHBoxLayout(self)
        layout.setContentsMargins(6, 2, 6, 2)
        layout.setSpacing(4)
        self._label = QLabel("—")
        self._label.setTextFormat(Qt.TextFormat.PlainText)
        font = self._label.font()
        font.setBold(True)
        self._label.setFont(font)
        layout.addWidget(self._label)
        self._chips = QHBoxLayout()
        self._chips.setSpacing(3)
        layout.addLayout(self._chips)
        layout.addStretch(1)
        self.add_buttons: dict[str, QToolButton] = {}
        for kind in ("ar", "ma", "sar", "sma"):
            button = QToolButton()
            button.setText(f"+{KIND_NAMES[kind]}")
            button.setToolTip(f"Add the next {KIND_NAMES[kind]} lag. {KIND_TIPS[kind]}")
            button.clicked.connect(lambda _=False, k=kind: self._add_next(k))
            layout.addWidget(button)
            self.add_buttons[kind] = button
        layout.addSpacing(10)
        self.kind_box = QComboBox()
        for kind, name in KIND_NAMES.items():
            self.kind_box.addItem(name, kind)
        self.kind_box.setToolTip("Kind of the lag to add")
        self.lag_box = QSpinBox()
        self.lag_box.setRange(1, 999)
        self.lag_box.setToolTip("Any lag, for subset models such as AR{1,12}")
        self.add_lag_button = QToolButton()
        self.add_lag_button.setText("Add lag")
        self.add_lag_button.setToolTip("Add the chosen kind at exactly this lag")
        self.add_lag_button.clicked.connect(self._add_typed)
        for widget in (self.kind_box, self.lag_box, self.add_lag_button):
            layout.addWidget(widget)
        layout.addSpacing(10)
        self._selected: int | None = None
        self.event_buttons: dict[str, QToolButton] = {}
        for kind, text in (("pulse", "+Pulse"), ("level", "+Level")):
            button = QToolButton()
            button.setText(text)
            button.setEnabled(False)
            button.clicked.connect(lambda _=False, k=kind: self._add_event(k))
            layout.addWidget(button)
            self.event_buttons[kind] = button
        self.set_selected_observation(None)
        layout.addSpacing(10)
        layout.addWidget(QLabel("Constant:"))
        self.constant_box = QComboBox()
        self.constant_box.setToolTip(
            "A mean for an undifferenced series, a drift (linear trend) with one difference; "
            "none otherwise."
        )
        self.constant_box.activated.connect(self._constant_activated)
        layout.addWidget(self.constant_box)

    # ----------------------------------------------------------------- API
    def set_selected_observation(self, position: int | None, label: str = "") -> None:
        """The observation an intervention would go to (one selected residual), or ``None``."""
        self._selected = position
        for kind, button in self.event_buttons.items():
            button.setEnabled(position is not None)
            what = ("Pulse: a one-off effect at one observation (an additive outlier)" if kind == "pulse"
                    else "Level shift: a lasting change of level from one observation on")
            where = (f"Add it at {label}, the selected observation." if position is not None
                     else "Select one residual in the panes first (click it; outliers beyond ±3σ are marked).")
            button.setToolTip(f"{what}. {where} The model becomes a regression with ARIMA errors.")

    def set_spec(self, spec: ModelSpec | None, enabled: bool = True, date_of=None) -> None:
        """Show ``spec``'s lags and interventions as chips (or nothing when ``None``).

        ``date_of(position)`` names an intervention's observation (default: its number).
        """
        self._spec = spec
        while self._chips.count():
            item = self._chips.takeAt(0)
            widget = item.widget()
            if widget is not None:  # hide at once: deleteLater alone leaves it drawn until the next loop turn
                widget.hide()
                widget.setParent(None)
                widget.deleteLater()
        self.chip_buttons: list[QToolButton] = []
        if spec is None:
            self._label.setText("—")
            self.setEnabled(False)
            return
        self.setEnabled(enabled)
        self._label.setText(spec.label)
        for kind, name in KIND_NAMES.items():
            for lag in spec.lags(kind):
                chip = QToolButton()
                shown = lag * spec.s if kind in ("sar", "sma") else lag
                chip.setText(f"{name} {shown} ×")
                chip.setToolTip(f"Drop {name} lag {shown} (makes a new candidate; the current one stays)")
                chip.setStyleSheet(
                    f"QToolButton {{ border: 1px solid {theme.DATA}; border-radius: 9px; padding: 1px 7px; }}"
                    f"QToolButton:hover {{ border-color: {theme.ATTENTION}; }}"
                )
                chip.setProperty("term", (kind, lag))
                chip.clicked.connect(lambda _=False, k=kind, g=lag: self.term_dropped.emit(k, g))
                self._chips.addWidget(chip)
                self.chip_buttons.append(chip)
        for item in spec.interventions:
            when = (date_of(item.position) if date_of is not None else None) or f"obs. {item.position + 1}"
            what = "pulse" if item.kind == "pulse" else "level"
            chip = QToolButton()
            chip.setText(f"{what} {when} ×")
            chip.setToolTip(f"Drop the {item.label} (makes a new candidate; the current one stays)")
            chip.setStyleSheet(
                f"QToolButton {{ border: 1px dashed {theme.ATTENTION}; border-radius: 9px; padding: 1px 7px; }}"
                f"QToolButton:hover {{ border-style: solid; }}"
            )
            chip.setProperty("intervention", (item.kind, item.position))
            chip.clicked.connect(lambda _=False, k=item.kind, p=item.position: self.intervention_dropped.emit(k, p))
            self._chips.addWidget(chip)
            self.chip_buttons.append(chip)
        seasonal_ok = spec.s >= 2
        self.add_buttons["sar"].setEnabled(seasonal_ok)
        self.add_buttons["sma"].setEnabled(seasonal_ok)
        self.constant_box.blockSignals(True)
        self.constant_box.clear()
        allowed = ["none", "mean"] if spec.differencing_order == 0 else (
            ["none", "drift"] if spec.differencing_order == 1 else ["none"])
        for value in allowed:
            self.constant_box.addItem(value, value)
        self.constant_box.setCurrentIndex(max(0, allowed.index(spec.constant) if spec.constant in allowed else 0))
        self.constant_box.blockSignals(False)

    # -------------------------------------------------------------- slots
    def _add_next(self, kind: str) -> None:
        if self._spec is not None:
            self.term_added.emit(kind, self._spec.next_lag(kind))

    def _add_event(self, kind: str) -> None:
        if self._spec is not None and self._selected is not None:
            self.intervention_added.emit(kind, self._selected)

    def _add_typed(self) -> None:
        if self._spec is not None:
            self.term_added.emit(self.kind_box.currentData(), self.lag_box.value())

    def _constant_activated(self, index: int) -> None:
        value = self.constant_box.itemData(index)
        if self._spec is not None and value != self._spec.constant:
            self.constant_chosen.emit(value)
