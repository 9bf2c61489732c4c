"""The fitting service: answers arrive through the event loop, never inside ``submit``.

A request that finishes before ``submit`` returns (a tiny series fitted by a
fast thread) once reached the window before the window knew the request's
id, and the window dropped it as stale: the candidate then waited for ever
(seen in about one of twenty runs of the window tests).
"""

from __future__ import annotations

from concurrent.futures import Future

import numpy as np

from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec


class _AtOnce:
    """An executor that runs the call before returning its future (the worst case of a fast worker)."""

    def submit(self, function, *args):
        future = Future()
        future.set_result(function(*args))
        return future

    def shutdown(self, wait=True, cancel_futures=False):
        pass


def test_an_answer_ready_before_submit_returns_arrives_later(qtbot):
    from lagwright.app.fit_service import FitService

    service = FitService(use_processes=False)
    service._threads.shutdown()
    service._exact_threads.shutdown()
    service._threads = service._exact_threads = _AtOnce()
    seen = []
    service.fit_finished.connect(lambda response: seen.append(response.request_id))
    series = Series(np.random.default_rng(1).standard_normal(40) + 5.0, name="invented short series")
    request_id = service.submit(series, ModelSpec(constant="mean"), "exact")
    assert seen == []  # not inside submit: the caller has not stored the id yet
    qtbot.waitUntil(lambda: seen == [request_id], timeout=5000)
    assert service.pending() == 0
    task_id = service.submit_task(max, 2, 3)
    answers = []
    service.task_finished.connect(lambda response: answers.append((response.request_id, response.result)))
    assert answers == []
    qtbot.waitUntil(lambda: answers == [(task_id, 3)], timeout=5000)
