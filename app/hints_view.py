"""The list of suggested next steps for the candidate in view.

Each row is one hint (its reason, with the evidence in the tooltip);
double-clicking a row or pressing *Apply* asks the window to take that step,
with the hint and its evidence as the step note.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import QHBoxLayout, QLabel, QListWidget, QListWidgetItem, QPushButton, QVBoxLayout, QWidget


class HintsView(QWidget):
    """Suggested next steps; emits ``hint_applied`` with the chosen hint."""

    hint_applied = Signal(object)

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        header = QHBoxLayout()
        title = QLabel("Suggested next steps")
        title.setToolTip("Steps suggested by this candidate's own residual evidence, strongest first. "
                         "They are suggestions: nothing happens until you apply one.")
        header.addWidget(title)
        header.addStretch(1)
        self.apply_button = QPushButton("Apply")
        self.apply_button.setToolTip("Take the selected step; its reason and evidence become the step note")
        self.apply_button.clicked.connect(self._apply_selected)
        header.addWidget(self.apply_button)
        layout.addLayout(header)
        self.list = QListWidget()
        self.list.setWordWrap(True)
        self.list.itemDoubleClicked.connect(lambda item: self.hint_applied.emit(item.data(Qt.ItemDataRole.UserRole)))
        layout.addWidget(self.list, 1)
        self.set_hints(None)

    def set_hints(self, hints, message: str = "") -> None:
        """Show ``hints`` (a tuple of Hint), or ``message`` when there are none to show."""
        self.list.clear()
        self.hints = tuple(hints or ())
        for i, hint in enumerate(self.hints, 1):
            item = QListWidgetItem(f"{i}. {hint.reason}")
            item.setToolTip(f"Evidence: {hint.evidence}")
            item.setData(Qt.ItemDataRole.UserRole, hint)
            self.list.addItem(item)
        if not self.hints:
            item = QListWidgetItem(message or "No suggestion: nothing in the residuals points at a next step.")
            item.setFlags(Qt.ItemFlag.NoItemFlags)
            self.list.addItem(item)
        else:
            self.list.setCurrentRow(0)
        self.apply_button.setEnabled(bool(self.hints))

    def _apply_selected(self) -> None:
        item = self.list.currentItem()
        hint = None if item is None else item.data(Qt.ItemDataRole.UserRole)
        if hint is not None:
            self.hint_applied.emit(hint)
