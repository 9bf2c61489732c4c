"""Session files (``*.lagwright.json``): the lineage, the data reference and the user's notes.

A session file is plain JSON with a schema name and version. It never holds
code and is never loaded with pickle or eval. Writing is atomic: the text
goes to a temporary file in the same folder, is flushed to disk, and then
replaces the target in one step, so a crash mid-write leaves the old file
intact.

Schema (version 1)::

    {
      "schema": "lagwright-session",
      "version": 1,
      "saved": "2026-12-01T22:00:00Z",
      "analyst": "...",
      "data": {"path": "...", "sha256": "...", "value_column": "...",
               "time_column": "...", "sheet": null, "sample": "",
               "import_options": {...}},
      "current": "c3",
      "candidates": [{"id": "c1", "parent": null, "spec": {...},
                      "step": "...", "note": "...", "origin": "start"}, ...],
      "results": {"c1": {"loglik": ..., "aic": ..., ...}, ...}
    }

``import_options`` holds the import choices (ImportOptions.to_dict(): gaps,
duplicates, aggregation, ...) so reopening reloads the same series.
``results`` is optional and informative (the numbers at save time, so a
reader can tell whether a refit on reopening reproduced them).
"""

from __future__ import annotations

import json
import os
import tempfile
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

from .errors import SessionError
from .lineage import Lineage

SCHEMA = "lagwright-session"
VERSION = 1
SUFFIX = ".lagwright.json"


@dataclass(frozen=True)
class DataReference:
    """Where the session's series comes from."""

    path: str = ""
    sha256: str = ""
    value_column: str = ""
    time_column: str = ""
    sheet: str | None = None
    sample: str = ""
    import_options: dict = field(default_factory=dict)


@dataclass(frozen=True)
class Session:
    """Everything a session file holds."""

    data: DataReference
    lineage: Lineage
    current: str | None = None
    analyst: str = ""
    results: dict = field(default_factory=dict)
    saved: str = ""

    def to_json(self) -> str:
        payload = {
            "schema": SCHEMA,
            "version": VERSION,
            "saved": self.saved or datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"),
            "analyst": self.analyst,
            "data": {
                "path": self.data.path,
                "sha256": self.data.sha256,
                "value_column": self.data.value_column,
                "time_column": self.data.time_column,
                "sheet": self.data.sheet,
                "sample": self.data.sample,
                "import_options": self.data.import_options,
            },
            "current": self.current,
            "candidates": self.lineage.to_list(),
            "results": self.results,
        }
        return json.dumps(payload, indent=2, ensure_ascii=False, allow_nan=False, default=_no_nan)


def _no_nan(value):
    raise TypeError(f"cannot store {type(value).__name__} in a session file")


def _clean_results(results: dict) -> dict:
    """Replace non-finite floats (not valid JSON) by None."""
    import math

    def clean(v):
        if isinstance(v, float) and not math.isfinite(v):
            return None
        if isinstance(v, dict):
            return {k: clean(x) for k, x in v.items()}
        if isinstance(v, (list, tuple)):
            return [clean(x) for x in v]
        return v

    return clean(results)


def write_session(session: Session, path: str | os.PathLike) -> Path:
    """Write ``session`` to ``path`` atomically; returns the path written.

    Raises
    ------
    SessionError
        If the folder cannot be written; the old file (if any) is untouched.
    """
    target = Path(path)
    session = Session(session.data, session.lineage, session.current, session.analyst,
                      _clean_results(session.results), session.saved)
    text = session.to_json()
    folder = target.parent if str(target.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(prefix=target.name + ".", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise SessionError(f"Cannot write the session to '{target}': {exc.strerror}. Choose another folder.") from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes 0600; a session is an ordinary document
        os.replace(tmp, target)
    except OSError as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise SessionError(f"Cannot write the session to '{target}': {exc.strerror}. Choose another folder.") from None
    return target


def read_session(path: str | os.PathLike) -> Session:
    """Read a session file.

    Raises
    ------
    SessionError
        If the file is missing, unreadable, not JSON, of another schema or a
        newer version, or malformed. The message says what and what to do.
    """
    source = Path(path)
    try:
        raw = source.read_bytes()
    except FileNotFoundError:
        raise SessionError(f"The session file '{source}' does not exist. Check the name and folder.") from None
    except IsADirectoryError:
        raise SessionError(f"'{source}' is a folder, not a session file.") from None
    except OSError as exc:
        raise SessionError(f"The session file '{source}' cannot be read: {exc.strerror}.") from None
    try:
        payload = json.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        where = f" (line {exc.lineno}, column {exc.colno})" if isinstance(exc, json.JSONDecodeError) else ""
        raise SessionError(
            f"The session file '{source.name}' is damaged: it is not valid JSON{where}. "
            "Restore it from a backup or the autosaved recovery copy."
        ) from None
    if not isinstance(payload, dict) or payload.get("schema") != SCHEMA:
        raise SessionError(f"'{source.name}' is not a Lagwright session file.")
    version = payload.get("version")
    if not isinstance(version, int) or version < 1:
        raise SessionError(f"'{source.name}' has no valid schema version.")
    if version > VERSION:
        raise SessionError(
            f"'{source.name}' was written by a newer Lagwright (session version {version}; this one reads "
            f"up to {VERSION}). Update Lagwright to open it."
        )
    data = payload.get("data") or {}
    if not isinstance(data, dict):
        raise SessionError(f"'{source.name}' has a malformed data section.")
    lineage = Lineage.from_list(payload.get("candidates", []))
    current = payload.get("current")
    if current is not None and current not in lineage:
        current = None
    results = payload.get("results") or {}
    import_options = data.get("import_options") or {}
    if not isinstance(import_options, dict):
        raise SessionError(f"'{source.name}' has malformed import choices.")
    return Session(
        data=DataReference(
            path=str(data.get("path", "")),
            sha256=str(data.get("sha256", "")),
            value_column=str(data.get("value_column", "") or ""),
            time_column=str(data.get("time_column", "") or ""),
            sheet=data.get("sheet"),
            sample=str(data.get("sample", "") or ""),
            import_options=import_options,
        ),
        lineage=lineage,
        current=current,
        analyst=str(payload.get("analyst", "")),
        results=results if isinstance(results, dict) else {},
        saved=str(payload.get("saved", "")),
    )
