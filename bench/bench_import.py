"""Import benchmark: load time and peak memory for 1,000,000-row tables, against pandas.read_csv.

Each measurement runs in a fresh interpreter, so peak memory is that of one
load: ``tracemalloc`` peak (Python and numpy/pandas allocations; Arrow's own
buffers are not traced) in one run, and the time and the growth of the
process's peak resident memory (``VmHWM`` in ``/proc/self/status``, Linux) in another run
without tracing. Also measured: the longest
pause of the Qt event loop while the import dialog reads the file in its
worker thread (offscreen), i.e. how long the window would stop answering.

Usage::

    .venv/bin/python bench/bench_import.py            # 1,000,000 rows
    .venv/bin/python bench/bench_import.py --rows 200000
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

CASES = {
    # name: (file kind, what is run)
    "pandas plain": ("plain", "pandas"),
    "lagwright plain": ("plain", "load"),
    "lagwright plain, report": ("plain", "inspect"),
    "lagwright plain, to hourly means": ("plain", "aggregate"),
    "pandas 1.234,5 ;": ("european", "pandas"),
    "lagwright 1.234,5 ; (detected)": ("european", "load"),
    "lagwright 1.234,5 ; (chosen)": ("european", "load_chosen"),
}


def write_files(folder: Path, rows: int) -> dict[str, Path]:
    rng = np.random.default_rng(2024)
    minutes = np.datetime64("2020-01-01T00:00") + np.arange(rows).astype("timedelta64[m]")
    stamps = np.datetime_as_string(minutes)
    values = np.round(rng.gamma(4.0, 900.0, rows), 2)
    plain = folder / "plain.csv"
    body = np.char.add(np.char.add(stamps, ","), values.astype(str))
    plain.write_text("timestamp,load_kw\n" + "\n".join(body) + "\n")
    european = folder / "european.csv"
    whole = np.floor(values).astype(np.int64)
    cents = np.round((values - whole) * 100).astype(np.int64)
    grouped = [f"{w:,}".replace(",", ".") + f",{c:02d}" for w, c in zip(whole.tolist(), cents.tolist())]
    dotted = np.char.replace(np.char.replace(stamps, "T", " "), "-", ".")
    european.write_text("Zeit;Last kW\n" + "\n".join(f"{s};{g}" for s, g in zip(dotted.tolist(), grouped)) + "\n")
    return {"plain": plain, "european": european}


def run_one(path: str, what: str, trace: bool) -> dict:
    """Inside a fresh interpreter: import, then time (or trace) one load."""
    import tracemalloc

    import pandas as pd

    from lagwright.core.import_options import ImportOptions
    from lagwright.core.inspection import inspect_table
    from lagwright.core.loader import load_series

    european = "european" in path

    def work():
        if what == "pandas":
            if european:
                return pd.read_csv(path, sep=";", decimal=",", thousands=".", parse_dates=["Zeit"],
                                   date_format="%Y.%m.%d %H:%M")
            return pd.read_csv(path, parse_dates=["timestamp"])
        if what == "load":
            return load_series(path)
        if what == "load_chosen":
            return load_series(path, options=ImportOptions(decimal=",", thousands=".", delimiter=";"))
        if what == "inspect":
            return inspect_table(path)
        if what == "aggregate":
            return load_series(path, options=ImportOptions(aggregate="h:mean"))
        raise ValueError(what)

    def high_water_mb() -> float:
        # VmHWM: this process's peak resident memory. (getrusage's ru_maxrss carries over the
        # parent's peak across fork and exec, so it would report the benchmark's own size.)
        with open("/proc/self/status") as handle:
            for line in handle:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024
        return float("nan")

    def rss_mb() -> float:
        with open("/proc/self/statm") as handle:
            return int(handle.read().split()[1]) * os.sysconf("SC_PAGE_SIZE") / 2**20

    before = rss_mb()
    if trace:
        tracemalloc.start()
    began = time.perf_counter()
    result = work()
    elapsed = time.perf_counter() - began
    peak = tracemalloc.get_traced_memory()[1] if trace else 0
    max_rss = high_water_mb()
    n = len(result.series) if hasattr(result, "series") else len(result)
    return {"seconds": elapsed, "peak_mb": peak / 2**20, "rss_mb": max_rss - before, "n": n}


def measure(path: Path, what: str) -> dict:
    out = {}
    for trace in (False, True):
        code = ("import json, sys; sys.path.insert(0, %r); from bench_import import run_one; "
                "print(json.dumps(run_one(%r, %r, %r)))" % (str(Path(__file__).parent), str(path), what, trace))
        done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
        result = json.loads(done.stdout.strip().splitlines()[-1])
        if trace:
            out["peak_mb"] = result["peak_mb"]
        else:
            out["seconds"], out["n"], out["rss_mb"] = result["seconds"], result["n"], result["rss_mb"]
    return out


def dialog_stall(path: Path) -> tuple[float, float]:
    """Longest event-loop pause (s) and total time while the import dialog reads ``path`` offscreen."""
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtCore import QElapsedTimer, QTimer
    from PySide6.QtWidgets import QApplication

    from lagwright.app.import_dialog import ImportDialog

    app = QApplication.instance() or QApplication([])
    clock = QElapsedTimer()
    clock.start()
    ticks = []
    timer = QTimer()
    timer.setInterval(5)
    timer.timeout.connect(lambda: ticks.append(clock.elapsed()))
    timer.start()
    began = time.perf_counter()
    dialog = ImportDialog(path)
    dialog.show()
    while dialog.busy():
        app.processEvents()
        time.sleep(0.001)
    total = time.perf_counter() - began
    timer.stop()
    gaps = np.diff(ticks) / 1000.0 if len(ticks) > 1 else np.array([total])
    dialog.close()
    return float(gaps.max()), total


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=1_000_000)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        files = write_files(Path(tmp), args.rows)
        sizes = {k: p.stat().st_size / 2**20 for k, p in files.items()}
        print(f"{args.rows:,} rows; plain CSV {sizes['plain']:.1f} MB, 1.234,5-style CSV {sizes['european']:.1f} MB")
        print(f"{'case':<36}{'time s':>9}{'× pandas':>10}{'traced MB':>11}{'× pandas':>10}{'RSS+ MB':>9}")
        base = {}
        for name, (kind, what) in CASES.items():
            result = measure(files[kind], what)
            if what == "pandas":
                base[kind] = result
            ref = base.get(kind)
            ratio_t = result["seconds"] / ref["seconds"] if ref else float("nan")
            ratio_m = result["peak_mb"] / ref["peak_mb"] if ref else float("nan")
            print(f"{name:<36}{result['seconds']:>9.2f}{ratio_t:>10.2f}{result['peak_mb']:>11.0f}{ratio_m:>10.2f}"
                  f"{result['rss_mb']:>9.0f}")
        stall, total = dialog_stall(files["plain"])
        print(f"import dialog, plain file: report ready after {total:.2f} s; longest event-loop pause {stall * 1000:.0f} ms")


if __name__ == "__main__":
    main()
