"""Fitting off the GUI thread.

A :class:`FitRequest` is a frozen, picklable value carrying its id; the
response carries the id back. Previews and exact fits each run in a worker
process kept alive for the session (one core each on a 2-core machine), so
neither a long Kalman filter pass nor the preview's optimiser ever competes
with the window for its interpreter lock: with previews on a thread, the
window stalled for about 50 ms per preview (bench/bench_window.py). Each worker process
limits BLAS/OpenMP to one thread: oversubscription slowed fits 3-90x under
load in measurements on 2-core machines.

The service never decides what is drawn: the window compares a response's
request id with the latest id it asked for that candidate and drops stale
ones.
"""

from __future__ import annotations

import itertools
import multiprocessing
import os
import threading
import time
from concurrent.futures import Future, ProcessPoolExecutor, ThreadPoolExecutor
from dataclasses import dataclass

from PySide6.QtCore import QObject, QThread, QTimer, Signal

from lagwright.core.errors import LagwrightError
from lagwright.core.evaluate import Evaluation, evaluate
from lagwright.core.result import Fit
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec

_THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "NUMEXPR_NUM_THREADS",
                "VECLIB_MAXIMUM_THREADS")


@dataclass(frozen=True)
class FitRequest:
    """One fit to run: picklable, identified by ``request_id``."""

    request_id: int
    series: Series
    spec: ModelSpec
    kind: str  # "preview" or "exact"
    parent: Fit | None = None


@dataclass(frozen=True)
class FitResponse:
    """What came back: an evaluation, or a plain error message."""

    request_id: int
    spec: ModelSpec
    kind: str
    evaluation: Evaluation | None
    error: str = ""
    #: Seconds the worker spent on the request (not counting queues or the window's own delay).
    seconds: float = 0.0


def run_request(request: FitRequest) -> FitResponse:
    """Run one request (in a worker thread or process); never raises."""
    started = time.perf_counter()
    try:
        evaluation = evaluate(request.series, request.spec, kind=request.kind, parent=request.parent,
                              with_hints=request.kind == "exact")
        return FitResponse(request.request_id, request.spec, request.kind, evaluation,
                           seconds=time.perf_counter() - started)
    except LagwrightError as exc:
        return FitResponse(request.request_id, request.spec, request.kind, None, str(exc))
    except Exception as exc:  # noqa: BLE001 - reported to the user, never a traceback
        return FitResponse(request.request_id, request.spec, request.kind, None,
                           f"Internal error while fitting ({type(exc).__name__}: {exc}). Please report it.")


def _init_worker() -> None:
    for name in _THREAD_VARS:
        os.environ[name] = "1"
    try:  # the heavy import happens once, when the worker starts, not on the first fit
        import statsmodels.tsa.arima.model  # noqa: F401
    except ImportError:
        pass


def _warm() -> bool:
    return True


def _process_pool() -> ProcessPoolExecutor:
    return ProcessPoolExecutor(max_workers=1, mp_context=multiprocessing.get_context("spawn"), initializer=_init_worker)


@dataclass(frozen=True)
class TaskResponse:
    """The result of a background task (``result``), or a plain error message."""

    request_id: int
    result: object
    error: str = ""


def run_task(request_id: int, function, args: tuple) -> TaskResponse:
    """Run ``function(*args)`` in a worker; never raises."""
    try:
        return TaskResponse(request_id, function(*args))
    except LagwrightError as exc:
        return TaskResponse(request_id, None, str(exc))
    except Exception as exc:  # noqa: BLE001 - reported to the user, never a traceback
        return TaskResponse(request_id, None, f"Internal error ({type(exc).__name__}: {exc}). Please report it.")


class FitService(QObject):
    """Runs fit requests in the background and emits ``fit_finished`` with a :class:`FitResponse`.

    Other slow computations (holdout checks) go through :meth:`submit_task`
    and come back through ``task_finished`` with a :class:`TaskResponse`.

    Parameters
    ----------
    use_processes : bool
        Exact fits in a worker process (the default for the window) or in a
        thread (tests, and a fallback where processes cannot start).
    """

    fit_finished = Signal(object)
    task_finished = Signal(object)

    def __init__(self, use_processes: bool = True, parent: QObject | None = None):
        super().__init__(parent)
        self._ids = itertools.count(1)
        self._lock = threading.Lock()
        self._pending: set[int] = set()
        self._threads: ThreadPoolExecutor | None = None
        self._preview_processes: ProcessPoolExecutor | None = None
        self._processes: ProcessPoolExecutor | None = None
        self._exact_threads: ThreadPoolExecutor | None = None
        if use_processes:
            try:
                self._processes = _process_pool()
                self._preview_processes = _process_pool()
                self._processes.submit(_warm)
                self._preview_processes.submit(_warm)
            except (OSError, ValueError):
                self._processes = self._preview_processes = None
        if self._processes is None:
            self._threads = ThreadPoolExecutor(max_workers=1, thread_name_prefix="lagwright-preview")
            self._exact_threads = ThreadPoolExecutor(max_workers=1, thread_name_prefix="lagwright-exact")

    @property
    def uses_processes(self) -> bool:
        return self._processes is not None

    def submit(self, series: Series, spec: ModelSpec, kind: str, parent: Fit | None = None) -> int:
        """Queue a request; returns its id. ``fit_finished`` follows, on the GUI thread."""
        request = FitRequest(next(self._ids), series, spec, kind, parent)
        with self._lock:
            self._pending.add(request.request_id)
        if kind == "preview":
            executor = self._preview_processes or self._threads
        else:
            executor = self._processes or self._exact_threads
        try:
            future = executor.submit(run_request, request)
        except RuntimeError as exc:  # shut down, or the worker died
            self._deliver(FitResponse(request.request_id, spec, kind, None, f"The fitting worker is not available ({exc})."))
            return request.request_id
        future.add_done_callback(lambda f, r=request: self._done(r, f))
        return request.request_id

    def submit_task(self, function, *args) -> int:
        """Run a picklable top-level ``function(*args)`` on the exact-fit worker; returns the request id."""
        request_id = next(self._ids)
        with self._lock:
            self._pending.add(request_id)
        executor = self._processes or self._exact_threads
        try:
            future = executor.submit(run_task, request_id, function, args)
        except RuntimeError as exc:
            self._deliver_task(TaskResponse(request_id, None, f"The worker is not available ({exc})."))
            return request_id
        future.add_done_callback(lambda f, i=request_id: self._task_done(i, f))
        return request_id

    def _task_done(self, request_id: int, future: Future) -> None:
        try:
            response = future.result()
        except Exception as exc:  # noqa: BLE001
            response = TaskResponse(request_id, None, f"The worker stopped unexpectedly ({type(exc).__name__}).")
            if "BrokenProcessPool" in type(exc).__name__:
                self._restart_processes("exact")
        self._deliver_task(response)

    def _deliver_task(self, response: TaskResponse) -> None:
        self._emit_later(self.task_finished, response)

    def _done(self, request: FitRequest, future: Future) -> None:
        try:
            response = future.result()
        except Exception as exc:  # noqa: BLE001 - e.g. the worker process crashed
            response = FitResponse(request.request_id, request.spec, request.kind, None,
                                   f"The fitting worker stopped unexpectedly ({type(exc).__name__}); try again.")
            if "BrokenProcessPool" in type(exc).__name__:
                self._restart_processes(request.kind)
        self._deliver(response)

    def _restart_processes(self, kind: str) -> None:
        """Replace a worker process that died (the request that killed it was reported as failed)."""
        try:
            if kind == "preview":
                self._preview_processes = _process_pool()
            else:
                self._processes = _process_pool()
        except (OSError, ValueError):
            pass

    def _deliver(self, response: FitResponse) -> None:
        self._emit_later(self.fit_finished, response)

    def _emit_later(self, signal, response) -> None:
        """Emit ``signal(response)`` through the GUI thread's event loop, never inside :meth:`submit`.

        A request that finishes before ``submit`` returns (a tiny fit, or a
        worker that is gone) has its callback run at once in the submitting
        thread; emitting there would reach the window before it knows the
        request's id, and the window would drop the answer as stale. From the
        GUI thread the emission is therefore posted; from a worker thread a
        queued connection posts it anyway.
        """
        def emit() -> None:
            with self._lock:
                self._pending.discard(response.request_id)
            try:
                signal.emit(response)
            except RuntimeError:  # the service was deleted while the fit ran
                pass

        try:
            in_gui_thread = QThread.currentThread() is self.thread()
        except RuntimeError:  # the service is gone with its window: nobody is waiting
            return
        if in_gui_thread:
            QTimer.singleShot(0, self, emit)
        else:
            emit()

    def pending(self) -> int:
        """Number of requests submitted and not yet delivered."""
        with self._lock:
            return len(self._pending)

    def shutdown(self, wait: bool = True) -> None:
        """Stop the workers (waiting for running fits when ``wait``); nothing more will be delivered."""
        for executor in (self._threads, self._exact_threads, self._preview_processes, self._processes):
            if executor is not None:
                executor.shutdown(wait=wait, cancel_futures=True)
        with self._lock:  # answers still on their way are for a window that is closing
            self._pending.clear()
