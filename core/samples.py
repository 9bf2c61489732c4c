"""The catalog of invented sample series bundled with Lagwright.

Each entry states the process its file was simulated from, so that a user
(and the tests) can see how close a chosen model comes to the truth. The
scenarios, places and firms are fictional; the numbers are simulated by
``sample_series/generate.py``, which reads its truth from this catalog.

Parameter names and signs follow statsmodels: AR polynomials
:math:`1 - \\sum_i \\phi_i B^i`, MA polynomials :math:`1 + \\sum_j \\theta_j B^j`,
seasonal polynomials multiplied in; names ``const``, ``ar.L1``, ``ma.L1``,
``ar.S.L12``, ``ma.S.L7``, ``sigma2``. The parameters apply to the
transformed and differenced series :math:`w_t`. ``const`` is the mean of
:math:`w_t`: the process mean when d + D = 0, the drift per period when
d + D = 1 (statsmodels reports it as ``const`` when the differenced series is
fitted, and as ``x1`` for ``trend="t"`` on the levels).

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., ch. 9 (multiplicative
seasonal models).
Seabold, S. & Perktold, J. (2010). statsmodels: Econometric and statistical
modeling with Python. *Proc. 9th Python in Science Conference*
(``statsmodels.tsa.arima.model.ARIMA`` parameter names).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from .frozen import FrozenMap
from typing import Mapping

from .errors import InputError
from .loader import load_series
from .series import Series
from .spec import ModelSpec, Transform

__all__ = [
    "SampleSeries", "SAMPLES", "DEFAULT_SAMPLE_NAME", "sample_names", "get_sample", "sample_path", "load_sample",
]

#: Package that holds the sample CSV files.
SAMPLE_PACKAGE = "lagwright.sample_series"


@dataclass(frozen=True)
class SampleSeries:
    """One bundled, invented series and the process it was simulated from.

    Attributes
    ----------
    name : str
        Short key (``"water_demand"``).
    file_name : str
        CSV file in ``lagwright.sample_series``.
    title : str
        One-line human title.
    description : str
        The fictional scenario, in a sentence or two.
    frequency : str
        pandas frequency alias of the time stamps (what the loader infers).
    true_spec : ModelSpec
        The model the data were simulated from.
    true_params : mapping of str to float
        Its parameters, keyed by statsmodels names, ``sigma2`` included, on
        the transformed and differenced scale. Read-only.
    length : int
        Number of observations in the file.
    start : str
        First time stamp (ISO 8601).
    time_column, value_column : str
        Column names in the file.
    units : str
        Units of the values.
    """

    name: str
    file_name: str
    title: str
    description: str
    frequency: str
    true_spec: ModelSpec
    true_params: Mapping[str, float] = field(hash=False)
    length: int = 0
    start: str = ""
    time_column: str = "date"
    value_column: str = "value"
    units: str = ""

    def __post_init__(self) -> None:
        frozen = FrozenMap({key: float(value) for key, value in self.true_params.items()})
        object.__setattr__(self, "true_params", frozen)


SAMPLES: tuple[SampleSeries, ...] = (
    SampleSeries(
        name="water_demand",
        file_name="tarrowby_water_demand.csv",
        title="Tarrowby daily water demand",
        description=(
            "Daily drinking-water demand of Tarrowby, an invented town of about 18,000 people, "
            "in megalitres per day, 2021 to 2023; weekends draw more than weekdays."
        ),
        frequency="D",
        true_spec=ModelSpec(ar=(1,), sma=(1,), D=1, s=7),
        true_params={"ar.L1": 0.55, "ma.S.L7": -0.8, "sigma2": 0.0225},
        length=1095,
        start="2021-01-01",
        time_column="date",
        value_column="demand_ML",
        units="megalitres per day",
    ),
    SampleSeries(
        name="parts_shipments",
        file_name="kestrel_ridge_shipments.csv",
        title="Kestrel Ridge Fittings monthly shipments",
        description=(
            "Pipe fittings shipped each month by Kestrel Ridge Fittings, an invented "
            "manufacturer, 2009 to 2023: slow growth and a yearly cycle, modelled in logs."
        ),
        frequency="MS",
        true_spec=ModelSpec(ma=(1,), sma=(1,), d=1, D=1, s=12, transform=Transform("log")),
        true_params={"ma.L1": -0.45, "ma.S.L12": -0.6, "sigma2": 0.0016},
        length=180,
        start="2009-01-01",
        time_column="month",
        value_column="shipments_units",
        units="units per month",
    ),
    SampleSeries(
        name="coldstore_temperature",
        file_name="brinemoor_chamber3_temperature.csv",
        title="Brinemoor cold store, chamber 3 temperature",
        description=(
            "Air temperature in freezer chamber 3 of the invented Brinemoor cold store, read "
            "every 10 minutes for two weeks, in degrees Celsius."
        ),
        frequency="10min",
        true_spec=ModelSpec(ar=(1, 2), ma=(1,), constant="mean"),
        true_params={"const": -21.5, "ar.L1": 1.3, "ar.L2": -0.45, "ma.L1": 0.35, "sigma2": 0.0049},
        length=2016,
        start="2024-02-05 00:00",
        time_column="timestamp",
        value_column="temp_C",
        units="degrees Celsius",
    ),
    SampleSeries(
        name="stock_drawdown",
        file_name="ashgrove_cartridge_drawdown.csv",
        title="Ashgrove depot weekly cartridge draw-down",
        description=(
            "Filter cartridges drawn from stock each week at the invented Ashgrove regional "
            "depot, 2019 to 2023, weeks starting on Monday: a wandering level with upward drift."
        ),
        frequency="W-MON",
        true_spec=ModelSpec(ar=(1,), d=1, constant="drift"),
        true_params={"const": 4.0, "ar.L1": 0.4, "sigma2": 625.0},
        length=260,
        start="2019-01-07",
        time_column="week",
        value_column="drawdown_units",
        units="cartridges per week",
    ),
)

#: The sample the window opens on.
DEFAULT_SAMPLE_NAME = "water_demand"


def sample_names() -> tuple[str, ...]:
    """Keys of the bundled samples, in catalog order."""
    return tuple(sample.name for sample in SAMPLES)


def get_sample(name: str = DEFAULT_SAMPLE_NAME) -> SampleSeries:
    """The catalog entry called ``name``; :class:`InputError` listing the names if there is none."""
    for sample in SAMPLES:
        if sample.name == name:
            return sample
    raise InputError(f"There is no sample called '{name}'. The samples are {', '.join(sample_names())}.")


def sample_path(name: str = DEFAULT_SAMPLE_NAME) -> Path:
    """Path of the sample's CSV file inside the installed package.

    Uses :mod:`importlib.resources`, so it works for editable and normal
    installs alike (the package is a regular folder in both).
    """
    sample = get_sample(name)
    resource = resources.files(SAMPLE_PACKAGE).joinpath(sample.file_name)
    path = Path(str(resource))
    if not path.is_file():
        raise InputError(
            f"The sample file '{sample.file_name}' is missing from the installation. Reinstall Lagwright, "
            "or regenerate the samples with 'python -m lagwright.sample_series.generate'."
        )
    return path


def load_sample(name: str = DEFAULT_SAMPLE_NAME) -> Series:
    """Load a bundled sample with :func:`~lagwright.core.loader.load_series`."""
    sample = get_sample(name)
    return load_series(sample_path(name), value=sample.value_column, time=sample.time_column)
