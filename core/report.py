"""Plain-data views of an evaluation: the ``--json`` schema and the text report.

The JSON object written by ``lagwright fit --json`` is built here and
documented in ``docs/fit-json.md``; scripts depend on it, so fields are only
ever added, never renamed, within one ``version``. Non-finite numbers are
written as ``null``.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .evaluate import Evaluation
from .series import Series

JSON_SCHEMA = "lagwright-fit"
JSON_VERSION = 1


def _num(value) -> float | None:
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def _rows(rows) -> list[dict]:
    return [{"lag": r.lag, "stat": _num(r.stat), "df": r.df, "p": _num(r.p)} for r in rows]


def evaluation_to_dict(evaluation: Evaluation, series: Series | None = None) -> dict[str, Any]:
    """The JSON-ready dictionary of one evaluation (schema ``lagwright-fit`` v1)."""
    fit = evaluation.fit
    spec = fit.spec
    out: dict[str, Any] = {
        "schema": JSON_SCHEMA,
        "version": JSON_VERSION,
        "label": spec.label,
        "description": spec.description,
        "spec": spec.to_dict(),
        "kind": fit.kind,
        "ok": fit.ok,
        "failure": fit.failure or None,
        "nobs": fit.nobs,
        "k": fit.n_params,
        "converged": fit.convergence.converged,
        "convergence": {
            "message": fit.convergence.message,
            "iterations": fit.convergence.iterations,
            "optimizer": fit.convergence.optimizer,
            "start": fit.convergence.start,
            "attempts": list(fit.convergence.attempts),
        },
        "loglik": _num(fit.loglik),
        "aic": _num(fit.aic),
        "aicc": _num(fit.aicc),
        "bic": _num(fit.bic),
        "hqic": _num(fit.hqic),
        "sigma2": _num(fit.sigma2),
        "cov_type": fit.cov_type,
        "params": [
            {"name": p.name, "value": _num(p.value), "se": _num(p.se), "stat": _num(p.stat), "p": _num(p.p)}
            for p in fit.params
        ],
        "roots": [
            {"factor": r.factor, "real": r.value.real, "imag": r.value.imag, "modulus": r.modulus}
            for r in fit.roots
        ],
        "root_warnings": list(fit.root_warnings.messages()),
        "warnings": list(fit.warnings),
    }
    if series is not None:
        prov = series.provenance
        out["data"] = {
            "name": series.name,
            "source": prov.source,
            "sha256": prov.sha256,
            "value_column": prov.value_column,
            "time_column": prov.time_column,
            "rows_used": prov.rows_used,
            "frequency": series.frequency,
        }
    diag = evaluation.diagnostics
    out["diagnostics_error"] = evaluation.diagnostics_error or None
    if diag is not None:
        sc, cp, nm, ar, rn = diag.sign_change, diag.cumulative_periodogram, diag.normality, diag.arch, diag.runs
        verdict = diag.white_noise_verdict
        positions = fit.diagnostic_positions()
        labels = series.time_labels() if series is not None else None
        out.update(
            {
                "white_noise": {"verdict": verdict.label, "failed": list(verdict.failed)},
                "ljung_box": _rows(diag.ljung_box),
                "mcleod_li": _rows(diag.mcleod_li),
                "arch": {"lags": ar.nlags, "stat": _num(ar.lm), "df": ar.df, "p": _num(ar.p)},
                "sign_test": {
                    "changes": sc.changes,
                    "possible": sc.possible,
                    "expected": _num(sc.expected),
                    "interval95": list(sc.interval95),
                    "p": _num(sc.p_exact),
                    "p_normal": _num(sc.p_normal),
                },
                "runs_test": {
                    "runs": rn.runs, "expected": _num(rn.expected), "z": _num(rn.z), "p": _num(rn.p),
                },
                "cumulative_periodogram": {
                    "max_deviation": _num(cp.max_deviation),
                    "band_5pct": _num(cp.band[0.05]),
                    "reject_10pct": bool(cp.reject[0.10]),
                    "reject_5pct": bool(cp.reject[0.05]),
                    "reject_1pct": bool(cp.reject[0.01]),
                },
                "normality": {
                    "jarque_bera": {"stat": _num(nm.jb_stat), "p": _num(nm.jb_p)},
                    "test": nm.test,
                    "stat": _num(nm.test_stat),
                    "p": _num(nm.test_p),
                    "skewness": _num(nm.skewness),
                    "excess_kurtosis": _num(nm.excess_kurtosis),
                },
                "outliers": [
                    {
                        "position": int(positions[i]) + 1,
                        "time": labels[int(positions[i])] if labels is not None else None,
                        "z": _num(z),
                    }
                    for i, z in zip(diag.outliers.positions, diag.outliers.values)
                ],
                "residual_acf": {
                    "lags": diag.correlogram.lags.tolist(),
                    "acf": [_num(v) for v in diag.correlogram.acf],
                    "pacf": [_num(v) for v in diag.correlogram.pacf],
                    "band": _num(diag.correlogram.band),
                },
            }
        )
    from .hints import suggest

    out["hints"] = [hint.to_dict() for hint in suggest(evaluation, series)]
    step = evaluation.step_test
    if step is not None:
        out["step_test"] = {
            "applies": step.applies,
            "reason": step.reason or None,
            "df": step.df,
            "lr_stat": _num(step.lr_stat),
            "lr_p": _num(step.lr_p),
            "f_stat": _num(step.f_stat),
            "f_df": [step.f_df1, step.f_df2],
            "f_p": _num(step.f_p),
        }
    return out


def _fmt(value: float, digits: int = 4) -> str:
    if value is None or not np.isfinite(value):
        return "—"
    return f"{value:.{digits}f}"


def _p(value: float) -> str:
    if value is None or not np.isfinite(value):
        return "—"
    return "<0.0001" if value < 1e-4 else f"{value:.4f}"


def text_report(evaluation: Evaluation, series: Series | None = None) -> str:
    """A readable, fixed-width report of one evaluation for the terminal."""
    fit = evaluation.fit
    lines = []
    title = fit.spec.description + ("   [PREVIEW: conditional sum of squares]" if fit.is_preview else "")
    lines += [title, "=" * len(title)]
    if series is not None:
        lines.append(f"Data: {series.name} ({series.provenance.source or 'in memory'}), {len(series)} values")
    if not fit.ok:
        lines.append(f"FIT FAILED: {fit.failure}")
        return "\n".join(lines) + "\n"
    conv = fit.convergence
    state = "converged" if conv.converged else "DID NOT CONVERGE"
    lines.append(f"Fit: exact Gaussian likelihood, {state} ({conv.optimizer}, start {conv.start}, "
                 f"{conv.iterations} iterations)" if fit.kind == "exact" else f"Fit: preview, {state}")
    lines.append(f"n = {fit.nobs}   k = {fit.n_params} (coefficients + sigma2)")
    lines.append("")
    lines.append(f"{'parameter':<12}{'estimate':>12}{'std.err':>11}{'z':>9}{'p':>9}")
    for p in fit.params:
        flag = "  |z|<2" if p.weak and p.name != "sigma2" else ""
        lines.append(f"{p.name:<12}{_fmt(p.value, 5):>12}{_fmt(p.se, 5):>11}{_fmt(p.stat, 2):>9}{_p(p.p):>9}{flag}")
    lines.append(f"Standard errors: {fit.cov_type}")
    lines.append("")
    lines.append(f"sigma2 = {fit.sigma2:.6g}   log-likelihood = {fit.loglik:.3f}")
    lines.append(f"AIC = {fit.aic:.3f}   AICc = {fit.aicc:.3f}   BIC = {fit.bic:.3f}   HQIC = {fit.hqic:.3f}")
    diag = evaluation.diagnostics
    if diag is None:
        lines.append(f"Residual checks unavailable: {evaluation.diagnostics_error}")
    else:
        lines.append("")
        lines.append(f"Residual checks on {diag.n_used} standardized residuals — verdict: {diag.white_noise_verdict.label}")
        lines.append(f"  {'Ljung-Box lag':<15}{'Q':>10}{'df':>5}{'p':>9}")
        for r in diag.ljung_box:
            lines.append(f"  {r.lag:<15}{_fmt(r.stat, 2):>10}{r.df:>5}{_p(r.p):>9}")
        sc = diag.sign_change
        lines.append(f"  Sign changes: {sc.changes} of {sc.possible} (95% range {sc.interval95[0]}–{sc.interval95[1]}), "
                     f"exact p = {_p(sc.p_exact)}")
        rn = diag.runs
        lines.append(f"  Runs about the median: {rn.runs} (expected {rn.expected:.1f}), p = {_p(rn.p)}")
        cp = diag.cumulative_periodogram
        lines.append(f"  Cumulative periodogram: max deviation {cp.max_deviation:.4f}, 5% band ±{cp.band[0.05]:.4f} "
                     f"({cp.verdict})")
        ml = diag.mcleod_li
        if ml:
            lines.append(f"  McLeod-Li (squared residuals) lag {ml[-1].lag}: p = {_p(ml[-1].p)};   "
                         f"ARCH-LM({diag.arch.nlags}): p = {_p(diag.arch.p)}")
        nm = diag.normality
        lines.append(f"  Normality: Jarque-Bera p = {_p(nm.jb_p)}, {nm.test} p = {_p(nm.test_p)} "
                     f"(skewness {nm.skewness:.3f}, excess kurtosis {nm.excess_kurtosis:.3f})")
        lines.append(f"  Outliers |z| > 3: {diag.outliers.count} (about {diag.outliers.expected:.1f} expected by chance)")
    messages = list(fit.root_warnings.messages()) + list(fit.warnings)
    if messages:
        lines.append("")
        lines.append("Warnings:")
        lines += [f"  - {m}" for m in messages]
    step = evaluation.step_test
    if step is not None:
        lines.append("")
        lines.append(f"Step test: {step.verdict()}")
    from .hints import suggest

    hints = suggest(evaluation, series)
    if hints:
        lines.append("")
        lines.append("Suggested next steps (most useful first):")
        lines += [f"  {i}. {h.reason} [{h.evidence}]" for i, h in enumerate(hints, 1)]
    return "\n".join(lines) + "\n"
