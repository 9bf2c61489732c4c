"""Lineage steps and session files: round trip, atomic writes, damaged files."""

from __future__ import annotations

import json
import os

import pytest

from lagwright.core.errors import SessionError, SpecError
from lagwright.core.lineage import Lineage, describe_step
from lagwright.core.session import DataReference, Session, read_session, write_session
from lagwright.core.spec import ModelSpec, Transform


def _lineage():
    lineage, root = Lineage().add_root(ModelSpec(constant="mean"))
    lineage, c2 = lineage.add_child(root.id, root.spec.with_term("ar", 1), note="PACF cuts off after lag 1")
    lineage, c3 = lineage.add_child(c2.id, c2.spec.with_term("ma", 1), note='quotes " < & ünïcödé 水')
    return lineage, root, c2, c3


def test_steps_keep_parents_and_describe_themselves():
    lineage, root, c2, c3 = _lineage()
    assert [c.id for c in lineage.candidates] == ["c1", "c2", "c3"]
    assert c2.parent_id == "c1" and c3.parent_id == "c2"
    assert c2.step == "add AR lag 1" and c3.step == "add MA lag 1"
    assert [c.id for c in lineage.path_to("c3")] == ["c1", "c2", "c3"]
    assert lineage.children("c1") == (c2,)
    with pytest.raises(SpecError):
        lineage.add_child("c1", root.spec)
    with pytest.raises(SessionError, match="no candidate 'c9'"):
        lineage.get("c9")


def test_describe_step_for_preparation_change():
    text = describe_step(ModelSpec(ar=(1,)), ModelSpec(ar=(1,), d=1, transform=Transform("log")))
    assert "prepare" in text and "d=1" in text


def test_session_round_trip(tmp_path):
    lineage, *_ = _lineage()
    session = Session(DataReference(path="x.csv", sha256="ab" * 32, value_column="v"), lineage, "c3",
                      analyst="A. Analyst", results={"c1": {"aic": float("nan"), "loglik": -3.5}})
    path = write_session(session, tmp_path / "s.lagwright.json")
    again = read_session(path)
    assert again.lineage == lineage and again.current == "c3" and again.analyst == "A. Analyst"
    assert again.lineage.get("c3").note == 'quotes " < & ünïcödé 水'
    assert again.results["c1"]["aic"] is None  # NaN is not JSON: stored as null
    payload = json.loads(path.read_text(encoding="utf-8"))
    assert payload["schema"] == "lagwright-session" and payload["version"] == 1
    # The next id continues after the highest one read.
    lineage2, c4 = again.lineage.add_child("c3", again.lineage.get("c3").spec.with_term("ar", 2))
    assert c4.id == "c4"


def test_atomic_write_leaves_old_file_on_failure(tmp_path, monkeypatch):
    lineage, *_ = _lineage()
    target = tmp_path / "s.lagwright.json"
    write_session(Session(DataReference(), lineage), target)
    before = target.read_bytes()

    def fail(*args, **kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", fail)
    with pytest.raises(SessionError, match="No space left"):
        write_session(Session(DataReference(), Lineage()), target)
    assert target.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["s.lagwright.json"]


@pytest.mark.parametrize(
    "content, fragment",
    [
        (b"{not json", "damaged"),
        (b"\xff\xfe\x00garbage", "damaged"),
        (b'{"schema": "other"}', "not a Lagwright session"),
        (b'{"schema": "lagwright-session", "version": 99}', "newer Lagwright"),
        (b'{"schema": "lagwright-session", "version": 1, "candidates": [{"id": "c1"}]}', "lacks"),
        (b'{"schema": "lagwright-session", "version": 1, "candidates": [{"id": "c2", "parent": "c1", "spec": {}}]}',
         "parent"),
        (b'{"schema": "lagwright-session", "version": 1, "candidates": [{"id": "c1", "spec": {"ar": [0]}}]}',
         "bad model"),
    ],
)
def test_damaged_session_files_give_clear_errors(tmp_path, content, fragment):
    path = tmp_path / "bad.lagwright.json"
    path.write_bytes(content)
    with pytest.raises(SessionError, match=fragment):
        read_session(path)


def test_missing_session_file(tmp_path):
    with pytest.raises(SessionError, match="does not exist"):
        read_session(tmp_path / "nope.lagwright.json")
