"""Tests of the bundled invented sample series and their generator.

Checks: every catalog file exists in the installed package and loads with the
stated length, frequency and columns; regenerating gives the same bytes; the
generator's polynomials equal those statsmodels builds from the same
parameters; and statsmodels, fitting the stated model to the differenced
data, recovers the stated parameters within sampling error.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy.signal import lfilter
from statsmodels.tsa.arima.model import ARIMA
from statsmodels.tsa.arima.params import SARIMAXParams
from statsmodels.tsa.arima.specification import SARIMAXSpecification

from lagwright.core.errors import InputError
from lagwright.core.loader import load_series
from lagwright.core.samples import (
    DEFAULT_SAMPLE_NAME,
    SAMPLES,
    get_sample,
    load_sample,
    sample_names,
    sample_path,
)
from lagwright.core.spec import ModelSpec
from lagwright.sample_series import generate

SAMPLE_IDS = [sample.name for sample in SAMPLES]


def _statsmodels_orders(spec: ModelSpec) -> tuple[tuple[int, int, int], tuple[int, int, int, int]]:
    """Orders for statsmodels of the stationary part (the catalog uses full, contiguous lag sets)."""
    for kind in ("ar", "ma", "sar", "sma"):
        lags = spec.lags(kind)
        assert lags == tuple(range(1, len(lags) + 1)), "the samples use contiguous lags"
    return (len(spec.ar), 0, len(spec.ma)), (len(spec.sar), 0, len(spec.sma), spec.s)


def _differenced(sample) -> np.ndarray:
    """w_t: the file's values transformed and differenced as the true spec says."""
    frame = pd.read_csv(sample_path(sample.name))
    values = frame[sample.value_column].to_numpy(dtype=float)
    spec = sample.true_spec
    if spec.transform.kind == "log":
        values = np.log(values)
    poly = generate.differencing_polynomial(spec)
    return lfilter(poly, [1.0], values)[poly.size - 1:]


# ----------------------------------------------------------------------------- catalog
def test_catalog_names_are_unique_and_default_exists():
    assert len(set(sample_names())) == len(SAMPLES) == 4
    assert get_sample(DEFAULT_SAMPLE_NAME).name == DEFAULT_SAMPLE_NAME == "water_demand"
    assert len({sample.file_name for sample in SAMPLES}) == len(SAMPLES)


def test_unknown_sample_lists_names():
    with pytest.raises(InputError, match="water_demand"):
        sample_path("rainfall")


@pytest.mark.parametrize("sample", SAMPLES, ids=SAMPLE_IDS)
def test_true_params_use_statsmodels_names(sample):
    # Reference: statsmodels' own parameter names for the same orders (plus 'const').
    order, seasonal = _statsmodels_orders(sample.true_spec)
    names = SARIMAXSpecification(order=order, seasonal_order=seasonal).param_names
    expected = (["const"] if sample.true_spec.has_constant else []) + list(names)
    assert sorted(sample.true_params) == sorted(expected)
    assert sample.true_params["sigma2"] > 0


def test_true_params_are_read_only():
    with pytest.raises(TypeError):
        SAMPLES[0].true_params["sigma2"] = 1.0  # type: ignore[index]


# ----------------------------------------------------------------------------- files
@pytest.mark.parametrize("sample", SAMPLES, ids=SAMPLE_IDS)
def test_file_exists_and_loads_as_stated(sample):
    path = sample_path(sample.name)
    assert path.is_file() and path.name == sample.file_name
    series = load_sample(sample.name)
    assert len(series) == sample.length
    assert series.frequency == sample.frequency
    assert series.name == sample.value_column
    assert series.provenance.time_column == sample.time_column
    assert series.times[0] == np.datetime64(pd.Timestamp(sample.start).to_datetime64(), "ns")
    assert not np.isnan(series.values).any()
    if sample.name != "coldstore_temperature":
        assert np.all(series.values > 0)


@pytest.mark.parametrize("sample", SAMPLES, ids=SAMPLE_IDS)
def test_file_loads_without_naming_columns(sample):
    # The files are simple enough for the loader's automatic column choice.
    series = load_sample(sample.name)
    automatic = load_series(sample_path(sample.name))
    np.testing.assert_array_equal(automatic.values, series.values)
    np.testing.assert_array_equal(automatic.times, series.times)


def test_regenerating_gives_identical_bytes(tmp_path):
    written = generate.write_all(tmp_path / "again")
    assert [p.name for p in written] == [s.file_name for s in SAMPLES]
    for sample, path in zip(SAMPLES, written):
        assert path.read_bytes() == sample_path(sample.name).read_bytes(), sample.file_name


def test_command_line_writes_into_given_folder(tmp_path, capsys):
    assert generate.main([str(tmp_path)]) == 0
    assert sorted(p.name for p in tmp_path.glob("*.csv")) == sorted(s.file_name for s in SAMPLES)
    assert capsys.readouterr().out.count(".csv") == len(SAMPLES)


def test_readme_says_invented_and_lists_files():
    readme = (sample_path(DEFAULT_SAMPLE_NAME).parent / "README.md").read_text(encoding="utf-8")
    assert "invented" in readme.lower() and "fictional" in readme.lower()
    for sample in SAMPLES:
        assert sample.file_name in readme
        assert sample.value_column in readme


# ----------------------------------------------------------------------------- the processes
@pytest.mark.parametrize(
    "spec",
    [ModelSpec(ar=(1, 2), ma=(1,), sar=(1,), sma=(1,), s=7), ModelSpec(ma=(1,), sma=(1,), s=12)],
    ids=["sarma_7", "airline_12"],
)
def test_expanded_polynomials_match_statsmodels(spec):
    order, seasonal = _statsmodels_orders(spec)
    reference = SARIMAXParams(SARIMAXSpecification(order=order, seasonal_order=seasonal))
    values = [0.5, -0.2, 0.3, 0.4, -0.8, 1.0][: len(reference.spec.param_names)]
    reference.params = values
    params = dict(zip(reference.spec.param_names, values))
    # Reference: statsmodels SARIMAXParams.reduced_ar_poly / reduced_ma_poly (ascending powers of B).
    np.testing.assert_allclose(generate.ar_polynomial(spec, params), reference.reduced_ar_poly.coef, atol=1e-15)
    np.testing.assert_allclose(generate.ma_polynomial(spec, params), reference.reduced_ma_poly.coef, atol=1e-15)


def test_integrate_undoes_differencing():
    spec = ModelSpec(d=1, D=1, s=4)
    x = np.random.default_rng(3).normal(size=30).cumsum()
    poly = generate.differencing_polynomial(spec)  # (1-B)(1-B^4) = 1 - B - B^4 + B^5
    np.testing.assert_array_equal(poly, [1.0, -1.0, 0.0, 0.0, -1.0, 1.0])
    w = lfilter(poly, [1.0], x)[poly.size - 1:]
    np.testing.assert_allclose(generate.integrate(w, x[: poly.size - 1], spec), x, atol=1e-12)


@pytest.mark.parametrize("sample", SAMPLES, ids=SAMPLE_IDS)
def test_statsmodels_recovers_the_stated_parameters(sample):
    # Reference: statsmodels ARIMA (exact Gaussian likelihood) fitted to the differenced data.
    # One fixed path per series: each estimate should lie within 4 standard errors of the truth
    # (two-sided normal tail 6e-5 per parameter, so a failure means a wrong sign or scale).
    w = _differenced(sample)
    order, seasonal = _statsmodels_orders(sample.true_spec)
    trend = "c" if sample.true_spec.has_constant else "n"
    result = ARIMA(w, order=order, seasonal_order=seasonal, trend=trend).fit()
    for name, estimate, error in zip(result.param_names, result.params, result.bse):
        truth = sample.true_params[name]
        assert abs(estimate - truth) < 4.0 * error, f"{name}: {estimate:.4g} vs {truth:.4g} ± {error:.2g}"
