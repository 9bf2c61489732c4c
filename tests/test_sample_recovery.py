"""Recovery: fitting each bundled sample's true model gives white residuals and the truth within 2 s.e.

The samples are simulated from stated processes (sample_series/README.md);
this checks the whole chain (loader, preparation, exact fit, diagnostics)
against the known truth. "Within two standard errors" is the usual rough
95 % check (common practice).
"""

from __future__ import annotations

import pytest

from lagwright.core import samples
from lagwright.core.evaluate import evaluate


@pytest.fixture(scope="module", params=[s.name for s in samples.SAMPLES])
def case(request):
    sample = samples.get_sample(request.param)
    return sample, evaluate(samples.load_sample(sample.name), sample.true_spec)


def test_true_model_converges(case):
    sample, ev = case
    assert ev.fit.ok and ev.fit.convergence.converged


def test_parameters_within_two_standard_errors(case):
    sample, ev = case
    for name, truth in sample.true_params.items():
        p = ev.fit.param(name)
        assert abs(p.value - truth) <= 2 * p.se, f"{sample.name} {name}: {p.value:.4f} ± {p.se:.4f} vs {truth}"


def test_residuals_look_white(case):
    sample, ev = case
    verdict = ev.diagnostics.white_noise_verdict
    assert verdict.label == "white", (sample.name, verdict)
    assert ev.diagnostics.main_ljung_box.p > 0.05
