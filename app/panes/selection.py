"""The one selection model that links the residual panes.

A selection is a set of observation positions in the *original* series (the
positions :meth:`lagwright.core.result.Fit.diagnostic_positions` returns), so
every pane, whatever it plots on its axes, can find the same observations:
the trace pane at their time, the histogram in their bin, the quantile plot
at their rank. A pane pushes a selection with :meth:`ResidualSelection.select`
when the user clicks, and redraws its highlight when
:attr:`ResidualSelection.selection_changed` fires; it never writes back from
that slot, and the model ignores writes made while it is announcing a change,
so no feedback loop can form.
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np
from PySide6.QtCore import QObject, Signal


def _normalise(positions: Iterable[int] | int | None) -> tuple[int, ...]:
    if positions is None:
        return ()
    if isinstance(positions, (int, np.integer)):
        positions = (positions,)
    values = np.asarray(list(positions) if not isinstance(positions, np.ndarray) else positions)
    if values.size == 0:
        return ()
    if values.dtype.kind not in "iu":
        if values.dtype.kind != "f" or not np.all(values == np.round(values)):
            raise ValueError("Selected positions must be whole numbers (observation positions).")
    values = values.astype(np.int64)
    if np.any(values < 0):
        raise ValueError("Selected positions must be 0 or more (positions in the original series).")
    return tuple(int(v) for v in np.unique(values))


class ResidualSelection(QObject):
    """Selected observation positions, shared by every pane of the window.

    Signals
    -------
    selection_changed(object)
        Emitted with the new selection (a sorted tuple of int positions in
        the original series) whenever it changes.
    """

    selection_changed = Signal(object)

    def __init__(self, parent: QObject | None = None):
        super().__init__(parent)
        self._positions: tuple[int, ...] = ()
        self._announcing = False

    @property
    def positions(self) -> tuple[int, ...]:
        """The selected positions, sorted, without repeats."""
        return self._positions

    def select(self, positions: Iterable[int] | int | None) -> bool:
        """Replace the selection; return whether it changed.

        A call made while the model is announcing a change (from a slot of
        :attr:`selection_changed`) is ignored, which breaks any loop a pane
        could otherwise start.
        """
        if self._announcing:
            return False
        new = _normalise(positions)
        if new == self._positions:
            return False
        self._positions = new
        self._announcing = True
        try:
            self.selection_changed.emit(new)
        finally:
            self._announcing = False
        return True

    def clear(self) -> bool:
        """Select nothing; return whether that changed anything."""
        return self.select(())

    def __contains__(self, position: int) -> bool:
        return int(position) in self._positions
