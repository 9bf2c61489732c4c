"""Order-screen benchmark: Lagwright's screen against a plain sequential loop of exact fits.

Run:  .venv/bin/python bench/bench_screen.py [--sizes 1000,10000] [--max-p 4 --max-q 4]

For each n, an ARMA(2,2) with a mean (seeded) is screened over p, q <= 4 by
AICc, both ways, in one run:

* plain:  a loop of statsmodels ARIMA(order=(p,0,q), trend="c").fit(), one
          after the other, ranked by their AICc;
* screen: lagwright.core.screen.screen with 2 worker processes: preview
          ranking, exact fits of the leaders only. "cold" includes starting
          the worker processes and importing statsmodels in them (the
          command line); "ready" runs on workers started beforehand with
          start_workers (the window starts them when the screen dialog
          first opens and keeps them), timed from the call to the result.

Printed: seconds, the ratio plain/screen, and whether both rank the same top
three orders with criterion values within 0.01. Target (issue 6): at least
4x faster with the same top three.
"""

from __future__ import annotations

import argparse
import os
import time
import warnings

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402
from scipy import signal  # noqa: E402

from lagwright.core.screen import screen, start_workers  # noqa: E402
from lagwright.core.series import Series  # noqa: E402
from lagwright.core.spec import ModelSpec  # noqa: E402


def simulate(n: int, seed: int = 2026) -> np.ndarray:
    e = np.random.default_rng(seed).standard_normal(n + 500)
    return signal.lfilter([1.0, 0.4, 0.15], [1.0, -0.6, 0.2], e)[500:] + 10.0  # MA poly, AR poly


def plain_loop(y, max_p, max_q):
    from statsmodels.tsa.arima.model import ARIMA

    out = []
    for p in range(max_p + 1):
        for q in range(max_q + 1):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                res = ARIMA(y, order=(p, 0, q), trend="c").fit()
            out.append(((p, q), float(res.aicc)))
    return sorted(out, key=lambda item: item[1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="1000,10000")
    parser.add_argument("--max-p", type=int, default=4)
    parser.add_argument("--max-q", type=int, default=4)
    args = parser.parse_args()
    print(f"{'n':>7} {'plain s':>8} {'cold s':>7} {'x cold':>7} {'ready s':>7} {'x ready':>7} {'exact fits':>10}  "
          "same top 3 (within 0.01)")
    for n in [int(s) for s in args.sizes.split(",")]:
        y = simulate(n)
        series = Series(y)
        t = time.perf_counter()
        plain = plain_loop(y, args.max_p, args.max_q)
        t_plain = time.perf_counter() - t
        t = time.perf_counter()
        result = screen(series, ModelSpec(constant="mean"), args.max_p, args.max_q, workers=2)
        t_cold = time.perf_counter() - t
        running = start_workers(2)
        try:
            [future.result() for future in [running.pool.submit(abs, i) for i in range(8)]]  # both started and ready
            t = time.perf_counter()
            ready = screen(series, ModelSpec(constant="mean"), args.max_p, args.max_q, running=running)
            t_ready = time.perf_counter() - t
        finally:
            running.shutdown(wait=True)
        same = True
        for res in (result, ready):
            ours = [((len(r.spec.ar), len(r.spec.ma)), r.criterion) for r in res.rows[:3]]
            same &= all(a[0] == b[0] and abs(a[1] - b[1]) <= 0.01 for a, b in zip(ours, plain[:3]))
        print(f"{n:>7} {t_plain:>8.2f} {t_cold:>7.2f} {t_plain / t_cold:>7.1f} {t_ready:>7.2f} {t_plain / t_ready:>7.1f} "
              f"{result.n_exact:>10}  {same}  plain {[(o, round(c, 3)) for o, c in plain[:3]]} "
              f"screen {[(o, round(c, 3)) for o, c in ours]}")


if __name__ == "__main__":
    main()
