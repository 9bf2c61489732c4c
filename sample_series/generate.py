"""Write Lagwright's invented sample series from the processes stated in the catalog.

The truth (model and parameters) of each series is stated once, in
:mod:`lagwright.core.samples`; this script adds only what a simulation also
needs: a fixed random-number key per series, the starting levels used to
undo the differencing, and the number of decimals written.

For each series the transformed, differenced series :math:`w_t` is simulated
as a multiplicative seasonal ARMA process,

.. math::

    \\phi(B)\\,\\Phi(B^s)\\,(w_t - \\mu) = \\theta(B)\\,\\Theta(B^s)\\,a_t,
    \\qquad a_t \\sim N(0, \\sigma^2),

by filtering Gaussian noise through the expanded polynomials
(:func:`scipy.signal.lfilter`) and dropping a burn-in. The differencing
:math:`(1-B)^d (1-B^s)^D` is then undone from the stated starting levels and
the transform inverted (``exp`` for logs). Running the script twice writes
byte-identical files.

Usage::

    python -m lagwright.sample_series.generate [OUTPUT_DIR]

``OUTPUT_DIR`` defaults to the folder of this script.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., §4.1 (integrated
processes), ch. 9 (multiplicative seasonal models).
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., §3.1 (ARMA processes as filtered white noise).
"""

from __future__ import annotations

import argparse
import math
import sys
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.signal import lfilter

from lagwright.core.samples import SAMPLES, SampleSeries
from lagwright.core.spec import ModelSpec

#: Simulated values dropped at the start so the ARMA filter forgets its zero start.
BURN_IN = 1000


@dataclass(frozen=True)
class Recipe:
    """What a simulation needs beyond the stated truth.

    Attributes
    ----------
    random_key : int
        Key of the series' own ``numpy.random.default_rng`` stream.
    start_levels : callable
        ``start_levels(times)`` gives the first d + D·s values on the
        transformed scale, from which the differencing is undone.
    decimals : int
        Decimals written to the CSV file.
    positive : bool
        Whether every value must be above zero (a check on the recipe).
    """

    random_key: int
    start_levels: Callable[[pd.DatetimeIndex], np.ndarray]
    decimals: int
    positive: bool = True


def _water_start(times: pd.DatetimeIndex) -> np.ndarray:
    # Megalitres per day on the first seven days, by weekday (Monday first):
    # weekends draw more (gardens, people at home).
    by_weekday = np.array([4.45, 4.40, 4.40, 4.45, 4.55, 4.95, 4.90])
    return by_weekday[np.asarray(times[:7].day_of_week)]


def _shipments_start(times: pd.DatetimeIndex) -> np.ndarray:
    # Log units in the first 13 months: 12,000 a month with a yearly cycle
    # (quiet midwinter and August), then 3 % growth into month 13.
    by_month = np.array([0.86, 0.92, 1.04, 1.06, 1.08, 1.05, 0.94, 0.90, 1.04, 1.08, 1.06, 0.97])
    by_month = by_month / np.exp(np.mean(np.log(by_month)))
    first_year = np.log(12000.0 * by_month[np.asarray(times[:12].month) - 1])
    return np.append(first_year, first_year[0] + math.log(1.03))


def _no_start(times: pd.DatetimeIndex) -> np.ndarray:
    return np.empty(0)


def _drawdown_start(times: pd.DatetimeIndex) -> np.ndarray:
    return np.array([2400.0])  # cartridges in the first week


RECIPES: dict[str, Recipe] = {
    "water_demand": Recipe(random_key=71_3305, start_levels=_water_start, decimals=3),
    "parts_shipments": Recipe(random_key=40_2217, start_levels=_shipments_start, decimals=0),
    "coldstore_temperature": Recipe(random_key=95_1142, start_levels=_no_start, decimals=2, positive=False),
    "stock_drawdown": Recipe(random_key=26_8811, start_levels=_drawdown_start, decimals=0),
}


# --------------------------------------------------------------------------- polynomials
def _factor(lags: tuple[int, ...], coefficients: list[float], step: int, sign: float) -> np.ndarray:
    """Ascending coefficients of ``1 + sign * sum_k c_k B^(lag_k * step)``."""
    width = (max(lags) * step if lags else 0) + 1
    poly = np.zeros(width)
    poly[0] = 1.0
    for lag, value in zip(lags, coefficients):
        poly[lag * step] = sign * value
    return poly


def ar_polynomial(spec: ModelSpec, params) -> np.ndarray:
    """:math:`\\phi(B)\\Phi(B^s)` in ascending powers of B (statsmodels signs: 1 - sum phi B^i)."""
    plain = _factor(spec.ar, [params[f"ar.L{lag}"] for lag in spec.ar], 1, -1.0)
    seasonal = _factor(spec.sar, [params[f"ar.S.L{lag * spec.s}"] for lag in spec.sar], spec.s, -1.0)
    return np.convolve(plain, seasonal)


def ma_polynomial(spec: ModelSpec, params) -> np.ndarray:
    """:math:`\\theta(B)\\Theta(B^s)` in ascending powers of B (statsmodels signs: 1 + sum theta B^j)."""
    plain = _factor(spec.ma, [params[f"ma.L{lag}"] for lag in spec.ma], 1, 1.0)
    seasonal = _factor(spec.sma, [params[f"ma.S.L{lag * spec.s}"] for lag in spec.sma], spec.s, 1.0)
    return np.convolve(plain, seasonal)


def differencing_polynomial(spec: ModelSpec) -> np.ndarray:
    """:math:`(1-B)^d (1-B^s)^D` in ascending powers of B."""
    poly = np.array([1.0])
    for _ in range(spec.d):
        poly = np.convolve(poly, [1.0, -1.0])
    for _ in range(spec.D):
        seasonal = np.zeros(spec.s + 1)
        seasonal[0], seasonal[spec.s] = 1.0, -1.0
        poly = np.convolve(poly, seasonal)
    return poly


# --------------------------------------------------------------------------- simulation
def simulate_differenced(spec: ModelSpec, params, n: int, rng: np.random.Generator) -> np.ndarray:
    """``n`` values of the stationary series w_t (mean ``const``, or 0 without a constant)."""
    noise = rng.standard_normal(n + BURN_IN) * math.sqrt(params["sigma2"])
    arma = lfilter(ma_polynomial(spec, params), ar_polynomial(spec, params), noise)[BURN_IN:]
    return arma + params.get("const", 0.0)


def integrate(w: np.ndarray, start: np.ndarray, spec: ModelSpec) -> np.ndarray:
    """Undo the differencing: x with ``(1-B)^d (1-B^s)^D x_t = w_t`` and ``x[:len(start)] = start``."""
    poly = differencing_polynomial(spec)
    order = poly.size - 1
    if start.size != order:
        raise ValueError(f"{order} starting levels are needed, not {start.size}.")
    x = np.empty(order + w.size)
    x[:order] = start
    tail = poly[1:]
    for t in range(order, x.size):
        x[t] = w[t - order] - float(np.dot(tail, x[t - order:t][::-1]))
    return x


def untransform(x: np.ndarray, spec: ModelSpec) -> np.ndarray:
    """Invert the spec's transform (log: exp; Box-Cox: (λx + 1)^(1/λ))."""
    kind = spec.transform.kind
    if kind == "log":
        return np.exp(x)
    if kind == "boxcox":
        lam = spec.transform.lam
        return np.exp(x) if lam == 0 else np.power(lam * x + 1.0, 1.0 / lam)
    return x


def simulate(sample: SampleSeries) -> pd.DataFrame:
    """The sample's table: its time column and its value column, rounded as written."""
    recipe = RECIPES[sample.name]
    spec = sample.true_spec
    times = pd.date_range(sample.start, periods=sample.length, freq=sample.frequency)
    rng = np.random.default_rng(recipe.random_key)
    start = np.asarray(recipe.start_levels(times), dtype=float)
    w = simulate_differenced(spec, sample.true_params, sample.length - start.size, rng)
    values = np.round(untransform(integrate(w, start, spec), spec), recipe.decimals)
    if recipe.positive and not np.all(values > 0):
        raise RuntimeError(f"The simulated '{sample.name}' series is not positive; change its recipe.")
    return pd.DataFrame({sample.time_column: times, sample.value_column: values})


def to_csv_text(sample: SampleSeries, frame: pd.DataFrame) -> str:
    """CSV text written without pandas' formatting, so the bytes depend only on the numbers."""
    decimals = RECIPES[sample.name].decimals
    stamps = frame[sample.time_column]
    sub_daily = bool((stamps != stamps.dt.normalize()).any())
    time_format = "%Y-%m-%d %H:%M" if sub_daily else "%Y-%m-%d"
    lines = [f"{sample.time_column},{sample.value_column}"]
    for stamp, value in zip(stamps, frame[sample.value_column]):
        lines.append(f"{stamp.strftime(time_format)},{value:.{decimals}f}")
    return "\n".join(lines) + "\n"


def write_sample(sample: SampleSeries, folder: Path) -> Path:
    """Simulate one sample and write its CSV file into ``folder``."""
    path = Path(folder) / sample.file_name
    path.write_bytes(to_csv_text(sample, simulate(sample)).encode("utf-8"))
    return path


def write_all(folder: str | Path) -> list[Path]:
    """Write every catalog sample into ``folder`` (created if needed)."""
    target = Path(folder)
    target.mkdir(parents=True, exist_ok=True)
    return [write_sample(sample, target) for sample in SAMPLES]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Write Lagwright's invented sample series as CSV files.")
    parser.add_argument("output_dir", nargs="?", default=str(Path(__file__).resolve().parent),
                        help="folder to write into (default: the sample_series folder)")
    args = parser.parse_args(argv)
    for path in write_all(args.output_dir):
        print(path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
