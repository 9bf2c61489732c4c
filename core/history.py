"""Undo and redo over immutable workbench states.

Because a :class:`~lagwright.core.lineage.Lineage` is an immutable value,
undoing a step is going back to the previous value; nothing has to be
reversed by hand.
"""

from __future__ import annotations

from dataclasses import dataclass

from .lineage import Lineage


@dataclass(frozen=True)
class Snapshot:
    """What the user sees: the lineage and the candidate in view."""

    lineage: Lineage
    current: str | None = None


class History:
    """A linear undo/redo stack of :class:`Snapshot` values."""

    def __init__(self, initial: Snapshot, limit: int = 500):
        self._past: list[Snapshot] = []
        self._present = initial
        self._future: list[Snapshot] = []
        self._limit = limit

    @property
    def present(self) -> Snapshot:
        return self._present

    def push(self, snapshot: Snapshot) -> None:
        """Record a new state (a step); clears the redo list."""
        self._past.append(self._present)
        del self._past[: max(0, len(self._past) - self._limit)]
        self._present = snapshot
        self._future.clear()

    def replace(self, snapshot: Snapshot) -> None:
        """Change the present without a new undo entry (selection, note edits)."""
        self._present = snapshot

    @property
    def can_undo(self) -> bool:
        return bool(self._past)

    @property
    def can_redo(self) -> bool:
        return bool(self._future)

    def undo(self) -> Snapshot:
        if self._past:
            self._future.append(self._present)
            self._present = self._past.pop()
        return self._present

    def redo(self) -> Snapshot:
        if self._future:
            self._past.append(self._present)
            self._present = self._future.pop()
        return self._present
