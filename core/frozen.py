"""A read-only, picklable mapping for the small frozen result values.

``types.MappingProxyType`` is read-only but cannot be pickled, and results
travel from worker processes to the window by pickling.
"""

from __future__ import annotations

from collections.abc import Mapping


class FrozenMap(Mapping):
    """An immutable mapping (hashable when its values are)."""

    __slots__ = ("_data",)

    def __init__(self, data=()):
        object.__setattr__(self, "_data", dict(data))

    def __getitem__(self, key):
        return self._data[key]

    def __iter__(self):
        return iter(self._data)

    def __len__(self) -> int:
        return len(self._data)

    def __repr__(self) -> str:
        return f"FrozenMap({self._data!r})"

    def __setattr__(self, name, value):
        raise AttributeError("FrozenMap is read-only")

    def __reduce__(self):
        return (FrozenMap, (self._data,))

    def __hash__(self) -> int:
        return hash(frozenset(self._data.items()))

    def __eq__(self, other) -> bool:
        return isinstance(other, Mapping) and dict(self.items()) == dict(other.items())
