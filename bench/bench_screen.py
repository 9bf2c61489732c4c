"""Order-screen benchmark: Lagwright's screen against a plain sequential loop of exact fits.

Run:  .venv/bin/python bench/bench_screen.py [--sizes 1000,10000] [--max-p 4 --max-q 4] [--seeds 2026]

For each n, an ARMA(2,2) with a mean (seeded) is screened over p, q <= 4 by
AICc, both ways, in one run:

* plain:  a loop of statsmodels ARIMA(order=(p,0,q), trend="c").fit(), one
          after the other, ranked by their AICc;
* screen: lagwright.core.screen.screen: preview ranking, exact fits of the
          leaders only. "cold" is the call the command line makes (it starts
          worker processes only for large screens, and then pays for their
          start and statsmodels import); "ready" runs on two workers started
          beforehand with start_workers (the window starts them when the
          screen dialog first opens and keeps them), timed from the call to
          the result.

Printed: seconds, the ratio plain/screen, the number of exact fits, and two
checks of the numbers:

* "below": orders whose exact log-likelihood in the screen is lower than
  the plain fit's by more than 0.005 (the screen stopped at a worse optimum;
  must be none), and "above": orders where the screen reached a higher
  optimum than the plain fit (the plain fit stopped at a local optimum;
  the screen's value is statsmodels' own log-likelihood at its estimates);
* "top 3": whether the screen's top three equal the plain loop's with
  criterion values within 0.01 ("same"), or else equal the top three of the
  best optimum either way found for every order ("same as the best known";
  they differ from the plain loop only through its local optima).

Target (issue 6): at least 4x faster with the same top three.
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
    """{(p, q): (AICc, log-likelihood)} of a plain loop of statsmodels fits."""
    from statsmodels.tsa.arima.model import ARIMA

    out = {}
    for p in range(max_p + 1):
        for q in range(max_q + 1):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                res = ARIMA(y, order=(p, 0, q), trend="c").fit()
            out[(p, q)] = (float(res.aicc), float(res.llf))
    return out


def top_three(criteria: dict) -> list:
    return sorted(criteria.items(), key=lambda item: item[1])[:3]


def compare(plain: dict, result) -> tuple[str, list, list]:
    """(top-3 verdict, orders below the plain optimum, orders above it) for one screen result."""
    exact = {(len(r.spec.ar), len(r.spec.ma)): r for r in result.rows if r.exact}
    below = [(o, round(r.loglik - plain[o][1], 3)) for o, r in exact.items() if r.loglik < plain[o][1] - 0.005]
    above = [(o, round(r.loglik - plain[o][1], 3)) for o, r in exact.items() if r.loglik > plain[o][1] + 0.005]
    ours = [((len(r.spec.ar), len(r.spec.ma)), r.criterion) for r in result.rows[:3]]

    def same(reference):
        return all(a[0] == b[0] and abs(a[1] - b[1]) <= 0.01 for a, b in zip(ours, reference))

    best_known = {o: aicc - 2 * max(0.0, exact[o].loglik - llf) if o in exact else aicc
                  for o, (aicc, llf) in plain.items()}
    if same(top_three({o: v[0] for o, v in plain.items()})):
        verdict = "same"
    elif same(top_three(best_known)):
        verdict = "same as the best known"
    else:
        verdict = "DIFFERENT"
    return verdict, below, above


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="1000,10000")
    parser.add_argument("--seeds", default="2026")
    parser.add_argument("--max-p", type=int, default=4)
    parser.add_argument("--max-q", type=int, default=4)
    args = parser.parse_args()
    print(f"{'n':>7} {'seed':>5} {'plain s':>8} {'cold s':>7} {'x cold':>7} {'ready s':>7} {'x ready':>7} "
          f"{'exact':>5}  top 3 / below / above")
    for n in [int(s) for s in args.sizes.split(",")]:
        for seed in [int(s) for s in args.seeds.split(",")]:
            y = simulate(n, seed)
            series = Series(y)
            t = time.perf_counter()
            plain = plain_loop(y, args.max_p, args.max_q)
            t_plain = time.perf_counter() - t
            t = time.perf_counter()
            cold = screen(series, ModelSpec(constant="mean"), args.max_p, args.max_q)
            t_cold = time.perf_counter() - t
            running = start_workers(2)
            try:
                [future.result() for future in [running.pool.submit(abs, i) for i in range(8)]]  # started, ready
                t = time.perf_counter()
                ready = screen(series, ModelSpec(constant="mean"), args.max_p, args.max_q, running=running)
                t_ready = time.perf_counter() - t
            finally:
                running.shutdown(wait=True)
            for label, result in (("cold", cold), ("ready", ready)):
                verdict, below, above = compare(plain, result)
                if label == "cold":
                    print(f"{n:>7} {seed:>5} {t_plain:>8.2f} {t_cold:>7.2f} {t_plain / t_cold:>7.1f} {t_ready:>7.2f} "
                          f"{t_plain / t_ready:>7.1f} {result.n_exact:>5}  ", end="")
                else:
                    print(" " * 65, end="")
                print(f"{label}: {verdict} / below {below or 'none'} / above {above or 'none'}")
            print(" " * 65 + f"plain top 3 {[(o, round(v[0], 3)) for o, v in top_three(plain)]}")
            print(" " * 65 + f"screen top 3 {[(r.spec.label, round(r.criterion, 3)) for r in ready.rows[:3]]}")


if __name__ == "__main__":
    main()
