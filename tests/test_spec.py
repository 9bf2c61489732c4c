"""ModelSpec: validation, steps, labels, nesting, and parameter names as statsmodels gives them."""

from __future__ import annotations

import pytest

from lagwright.core.errors import SpecError
from lagwright.core.polynomials import expanded_polynomials, param_names
from lagwright.core.spec import ModelSpec, Transform


def test_constant_rules():
    # A mean only without differencing, a drift only with d + D = 1 (common practice).
    ModelSpec(ar=(1,), constant="mean")
    ModelSpec(ar=(1,), d=1, constant="drift")
    ModelSpec(ma=(1,), D=1, s=12, constant="drift")
    with pytest.raises(SpecError, match="mean"):
        ModelSpec(d=1, constant="mean")
    with pytest.raises(SpecError, match="drift"):
        ModelSpec(constant="drift")
    with pytest.raises(SpecError, match="drift"):
        ModelSpec(d=1, D=1, s=12, constant="drift")


@pytest.mark.parametrize(
    "kwargs, fragment",
    [
        ({"ar": (0,)}, "1 or more"),
        ({"ar": (1, 1)}, "repeat"),
        ({"ar": ("x",)}, "whole number"),
        ({"sar": (1,)}, "seasonal period"),
        ({"D": 1}, "seasonal period"),
        ({"s": 1}, "period of 1"),
        ({"d": 3}, "d = 3"),
        ({"d": -1}, "0 or more"),
        ({"constant": "trend"}, "Unknown constant"),
    ],
)
def test_bad_specs_have_clear_messages(kwargs, fragment):
    with pytest.raises(SpecError, match=fragment):
        ModelSpec(**kwargs)


def test_transform_validation():
    assert Transform("boxcox", 0.5).label == "Box-Cox λ=0.5"
    with pytest.raises(SpecError):
        Transform("boxcox")
    with pytest.raises(SpecError):
        Transform("log", 0.3)
    with pytest.raises(SpecError):
        Transform("sqrt")


def test_steps_return_new_specs_and_keep_parent():
    parent = ModelSpec(ar=(1,), constant="mean")
    child = parent.with_term("ar", 12)
    assert parent.ar == (1,) and child.ar == (1, 12)
    assert child.without_term("ar", 12) == parent
    assert parent.next_lag("ar") == 2 and parent.next_lag("ma") == 1
    with pytest.raises(SpecError, match="already"):
        child.with_term("ar", 12)
    with pytest.raises(SpecError, match="no MA lag"):
        child.without_term("ma", 1)


def test_labels_textbook_and_subset():
    assert ModelSpec(ar=(1, 2), ma=(1,), d=1).label == "ARIMA(2,1,1)"
    assert ModelSpec(ma=(1,), sma=(1,), d=1, D=1, s=12).label == "ARIMA(0,1,1)×(0,1,1)_12"
    assert ModelSpec(ar=(1, 12), ma=(1,)).label == "AR{1,12} MA{1}"
    assert ModelSpec(ar=(1, 3), d=1).label == "AR{1,3} d=1"
    spec = ModelSpec(ma=(1,), d=1, transform=Transform("log"), constant="drift")
    assert spec.description == "ARIMA(0,1,1) + drift, log"


def test_nesting_and_counts():
    small = ModelSpec(ar=(1,), constant="mean")
    big = ModelSpec(ar=(1, 2), ma=(1,), constant="mean")
    assert big.nests(small) and not small.nests(big)
    assert not big.nests(ModelSpec(ar=(1,), d=1))  # different differencing
    assert big.n_arma_coefficients == 3 and big.n_coefficients == 4 and big.n_params == 5


def test_round_trip_dict():
    spec = ModelSpec(ar=(1, 12), sma=(1,), D=1, s=12, transform=Transform("boxcox", 0.25), constant="drift")
    assert ModelSpec.from_dict(spec.to_dict()) == spec


@pytest.mark.parametrize(
    "spec",
    [
        ModelSpec(ar=(1, 2), ma=(1,), constant="mean"),
        ModelSpec(ar=(1, 12), ma=(3,)),
        ModelSpec(ar=(1,), ma=(1,), sar=(1, 2), sma=(1,), s=7, constant="mean"),
    ],
)
def test_param_names_match_statsmodels(spec):
    # Reference: statsmodels' own parameter names for the same model.
    import numpy as np
    from statsmodels.tsa.arima.model import ARIMA

    model = ARIMA(
        np.zeros(100),
        order=(list(spec.ar) or 0, 0, list(spec.ma) or 0),
        seasonal_order=(list(spec.sar) or 0, 0, list(spec.sma) or 0, spec.s if (spec.sar or spec.sma) else 0),
        trend="c" if spec.has_constant else "n",
    )
    assert param_names(spec) == tuple(model.param_names)


def test_expanded_polynomials_match_statsmodels():
    # Reference: statsmodels' polynomial_reduced_ar / _ma for the same parameters.
    import numpy as np
    from statsmodels.tsa.arima.model import ARIMA

    spec = ModelSpec(ar=(1, 2), ma=(1,), sar=(1,), sma=(1,), s=4)
    params = {"ar.L1": 0.5, "ar.L2": -0.2, "ma.L1": 0.3, "ar.S.L4": 0.4, "ma.S.L4": -0.6}
    model = ARIMA(np.zeros(50), order=(2, 0, 1), seasonal_order=(1, 0, 1, 4), trend="n")
    res = model.filter(np.array([params[n] for n in model.param_names[:-1]] + [1.0]))
    ar, ma = expanded_polynomials(spec, params)
    np.testing.assert_allclose(ar, res.polynomial_reduced_ar, atol=1e-12)
    np.testing.assert_allclose(ma, res.polynomial_reduced_ma, atol=1e-12)
