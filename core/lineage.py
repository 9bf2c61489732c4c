"""The lineage: the tree of candidates, each made from its parent by one step.

A :class:`Lineage` is an immutable value. Adding a step returns a new
lineage, so undo is simply going back to the previous value. Candidates are
identified by short ids (``"c1"``, ``"c2"`` ...) that never get reused within
a lineage, and carry the user's step note.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from .errors import SessionError, SpecError
from .spec import ModelSpec

ORIGINS = ("start", "user", "hint", "screen")


@dataclass(frozen=True)
class Candidate:
    """One node of the lineage.

    Attributes
    ----------
    id : str
    spec : ModelSpec
    parent_id : str or None
        ``None`` for a root (the first candidate of a preparation branch).
    step : str
        What made it from the parent, in words (``"add AR lag 2"``); for a
        root, how the branch was started.
    note : str
        The user's reason for the step (free text, may be empty).
    origin : {"start", "user", "hint", "screen"}
    """

    id: str
    spec: ModelSpec
    parent_id: str | None = None
    step: str = ""
    note: str = ""
    origin: str = "user"


def describe_step(parent: ModelSpec, child: ModelSpec, date_of=None) -> str:
    """Words for the difference between two specs (``"add MA lag 12"``, ``"drop AR lag 1"`` ...).

    ``date_of(position)``, when given, names an observation by its date, so
    an intervention step reads ``"add level shift at 2024-03-05 (obs. 101)"``.
    """
    names = {"ar": "AR", "ma": "MA", "sar": "seasonal AR", "sma": "seasonal MA"}
    parts = []
    for kind, name in names.items():
        before, after = set(parent.lags(kind)), set(child.lags(kind))
        for lag in sorted(after - before):
            parts.append(f"add {name} lag {lag}")
        for lag in sorted(before - after):
            parts.append(f"drop {name} lag {lag}")
    before, after = set(parent.interventions), set(child.interventions)
    for verb, items in (("add", after - before), ("drop", before - after)):
        for item in sorted(items):
            when = date_of(item.position) if date_of is not None else None
            what = "pulse" if item.kind == "pulse" else "level shift"
            place = f"{when} (obs. {item.position + 1})" if when else f"obs. {item.position + 1}"
            parts.append(f"{verb} {what} at {place}")
    if parent.constant != child.constant:
        parts.append(f"constant {parent.constant} → {child.constant}")
    if not parent.same_data_as(child):
        parts.append(
            f"prepare: {child.transform.label}, d={child.d}, D={child.D}, s={child.s}"
        )
    return "; ".join(parts) or "no change"


@dataclass(frozen=True)
class Lineage:
    """An immutable tree of candidates.

    Attributes
    ----------
    candidates : tuple of Candidate
        In creation order.
    next_number : int
        Number used for the next id.
    """

    candidates: tuple[Candidate, ...] = ()
    next_number: int = 1

    # ------------------------------------------------------------- queries
    def __len__(self) -> int:
        return len(self.candidates)

    def __contains__(self, candidate_id: str) -> bool:
        return any(c.id == candidate_id for c in self.candidates)

    def get(self, candidate_id: str) -> Candidate:
        for c in self.candidates:
            if c.id == candidate_id:
                return c
        known = ", ".join(c.id for c in self.candidates) or "none"
        raise SessionError(f"There is no candidate '{candidate_id}' in this lineage (known: {known}).")

    def children(self, candidate_id: str) -> tuple[Candidate, ...]:
        return tuple(c for c in self.candidates if c.parent_id == candidate_id)

    def roots(self) -> tuple[Candidate, ...]:
        return tuple(c for c in self.candidates if c.parent_id is None)

    def parent(self, candidate_id: str) -> Candidate | None:
        parent_id = self.get(candidate_id).parent_id
        return None if parent_id is None else self.get(parent_id)

    def path_to(self, candidate_id: str) -> tuple[Candidate, ...]:
        """Candidates from the root down to ``candidate_id``."""
        path = [self.get(candidate_id)]
        while path[-1].parent_id is not None:
            path.append(self.get(path[-1].parent_id))
        return tuple(reversed(path))

    def find(self, spec: ModelSpec) -> Candidate | None:
        """The first candidate with exactly this spec, if any."""
        for c in self.candidates:
            if c.spec == spec:
                return c
        return None

    # --------------------------------------------------------------- steps
    def _new_id(self) -> tuple[str, int]:
        return f"c{self.next_number}", self.next_number + 1

    def add_root(self, spec: ModelSpec, step: str = "starting model", note: str = "", origin: str = "start") -> tuple[Lineage, Candidate]:
        """Start a new branch (a new preparation, or the first model)."""
        new_id, number = self._new_id()
        candidate = Candidate(new_id, spec, None, step, note, _origin(origin))
        return Lineage(self.candidates + (candidate,), number), candidate

    def add_child(self, parent_id: str, spec: ModelSpec, note: str = "", origin: str = "user",
                  date_of=None) -> tuple[Lineage, Candidate]:
        """Record a step from ``parent_id`` to ``spec``; the parent stays.

        ``date_of`` names observations by date in the step's words (see :func:`describe_step`).
        """
        parent = self.get(parent_id)
        if spec == parent.spec:
            raise SpecError("This step changes nothing: the new model is the same as its parent.")
        new_id, number = self._new_id()
        candidate = Candidate(new_id, spec, parent_id, describe_step(parent.spec, spec, date_of), note,
                              _origin(origin))
        return Lineage(self.candidates + (candidate,), number), candidate

    def with_note(self, candidate_id: str, note: str) -> Lineage:
        """Set the step note of one candidate."""
        self.get(candidate_id)
        return replace(
            self,
            candidates=tuple(replace(c, note=note) if c.id == candidate_id else c for c in self.candidates),
        )

    # ------------------------------------------------------- (de)serialise
    def to_list(self) -> list[dict]:
        return [
            {
                "id": c.id,
                "parent": c.parent_id,
                "spec": c.spec.to_dict(),
                "step": c.step,
                "note": c.note,
                "origin": c.origin,
            }
            for c in self.candidates
        ]

    @classmethod
    def from_list(cls, items) -> Lineage:
        """Rebuild from :meth:`to_list` output; raises :class:`SessionError` when malformed."""
        if not isinstance(items, list):
            raise SessionError("The session's candidate list is not a list.")
        candidates: list[Candidate] = []
        seen: set[str] = set()
        highest = 0
        for number, item in enumerate(items, start=1):
            if not isinstance(item, dict):
                raise SessionError(f"Candidate entry {number} in the session is not an object.")
            try:
                cid = str(item["id"])
                parent = item.get("parent")
                spec = ModelSpec.from_dict(item["spec"])
            except KeyError as exc:
                raise SessionError(f"Candidate entry {number} in the session lacks {exc}.") from None
            except SpecError as exc:
                raise SessionError(f"Candidate entry {number} in the session has a bad model: {exc}") from None
            if cid in seen:
                raise SessionError(f"The session lists candidate '{cid}' twice.")
            if parent is not None and str(parent) not in seen:
                raise SessionError(f"Candidate '{cid}' names a parent '{parent}' that comes nowhere before it.")
            seen.add(cid)
            if cid.startswith("c") and cid[1:].isdigit():
                highest = max(highest, int(cid[1:]))
            candidates.append(
                Candidate(
                    id=cid,
                    spec=spec,
                    parent_id=None if parent is None else str(parent),
                    step=str(item.get("step", "")),
                    note=str(item.get("note", "")),
                    origin=_origin(str(item.get("origin", "user")), error=SessionError),
                )
            )
        return cls(tuple(candidates), highest + 1)


def _origin(origin: str, error=SpecError) -> str:
    if origin not in ORIGINS:
        raise error(f"Unknown candidate origin '{origin}'; use one of {', '.join(ORIGINS)}.")
    return origin
