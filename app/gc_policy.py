"""Python's cycle collector runs on the GUI thread only.

Python collects reference cycles in whichever thread happens to allocate
when a threshold is crossed: a fit thread, or the thread that hands worker
processes' results back. If a cycle holds Qt objects (a closed pane, a
window's actions), their C++ destructors then run off the GUI thread, take
Qt's locks there and wait for the interpreter lock that the GUI thread holds
while it waits for those locks: the window freezes for good. This was seen
here as a hang of the window tests about once in five runs (a fit thread in
``gc_collect_main`` destroying a ``QObject``, the GUI thread in
``QObject::~QObject``). The remedy Qt bindings advise is to switch automatic
collection off and collect on a timer of the GUI thread instead, with the
same generation thresholds.
"""

from __future__ import annotations

import gc

from PySide6.QtCore import QCoreApplication, QTimer

#: Milliseconds between checks of the collector's counts.
INTERVAL_MS = 500

_timer: QTimer | None = None


def collect_on_gui_thread(interval_ms: int = INTERVAL_MS) -> QTimer | None:
    """Switch automatic collection off and collect from a GUI-thread timer (once per process).

    Returns the timer, or ``None`` when there is no Qt application yet.
    """
    global _timer
    if _timer is not None:
        return _timer
    app = QCoreApplication.instance()
    if app is None:
        return None
    thresholds = gc.get_threshold()

    def check() -> None:
        counts = gc.get_count()
        if counts[0] > thresholds[0]:  # the same rule as the automatic collector, generation by generation
            generation = 2 if counts[1] > thresholds[1] and counts[2] > thresholds[2] else \
                1 if counts[1] > thresholds[1] else 0
            gc.collect(generation)

    timer = QTimer(app)
    timer.setObjectName("lagwright-gc")
    timer.timeout.connect(check)
    gc.disable()
    timer.start(interval_ms)
    app.destroyed.connect(lambda *_: gc.enable())
    _timer = timer
    return timer

