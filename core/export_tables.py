"""Tables for export as CSV: the lineage, and one candidate's residuals and fitted values.

Both are plain rows of text and numbers built from core results, written
by :func:`write_csv` (UTF-8 with a byte-order mark, so spreadsheet programs
read non-Latin step notes correctly; atomic, like session files).

Fitted values are given on the *prepared* scale, the scale the ARMA model
is fitted on: the transformed and differenced series :math:`w_t`. There the
one-step prediction is :math:`\\hat w_t = w_t - e_t`, the prepared value
minus the residual (Box, Jenkins, Reinsel & Ljung, 2015, §5.1: the one-step
forecast error is the innovation). The file says so in its header lines.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley.
"""

from __future__ import annotations

import csv
import io
import math
import os
import tempfile
from collections.abc import Mapping, Sequence
from pathlib import Path

import numpy as np

from .compare import nested_test
from .errors import LagwrightError
from .evaluate import Evaluation
from .lineage import Lineage
from .prepare import prepare
from .series import Series

LINEAGE_COLUMNS = (
    "id", "parent", "step", "origin", "label", "description", "ar", "ma", "sar", "sma", "d", "D", "s",
    "transform", "lambda", "constant", "fit_ok", "converged", "failure", "n", "k", "loglik", "sigma2", "aic",
    "aicc", "bic", "hqic", "white_noise", "ljung_box_lag", "ljung_box_p", "test_applies", "f_stat", "f_df1",
    "f_df2", "f_p", "lr_stat", "lr_df", "lr_p", "test_reason", "note",
)

RESIDUAL_COLUMNS = (
    "position", "time", "observed", "prepared", "fitted_prepared", "residual", "standardized_residual",
    "used_in_checks",
)


class ExportError(LagwrightError, OSError):
    """An export file cannot be written."""


def _num(value) -> str:
    if value is None:
        return ""
    value = float(value)
    return repr(value) if math.isfinite(value) else ""


def _lags(lags) -> str:
    return " ".join(str(lag) for lag in lags)


def lineage_rows(lineage: Lineage, evaluations: Mapping[str, Evaluation | None]) -> list[list[str]]:
    """One row per candidate (columns :data:`LINEAGE_COLUMNS`), tests against the parent included."""
    rows = []
    for c in lineage.candidates:
        spec = c.spec
        ev = evaluations.get(c.id)
        fit = ev.fit if ev is not None else None
        row = {
            "id": c.id, "parent": c.parent_id or "", "step": c.step, "origin": c.origin, "label": spec.label,
            "description": spec.description, "ar": _lags(spec.ar), "ma": _lags(spec.ma), "sar": _lags(spec.sar),
            "sma": _lags(spec.sma), "d": str(spec.d), "D": str(spec.D), "s": str(spec.s),
            "transform": spec.transform.kind,
            "lambda": "" if spec.transform.lam is None else repr(float(spec.transform.lam)),
            "constant": spec.constant, "note": c.note,
        }
        if fit is None:
            row.update(fit_ok="", converged="", failure="not fitted")
        else:
            row.update(fit_ok=str(fit.ok).lower(), converged=str(fit.convergence.converged).lower(),
                       failure=fit.failure)
            if fit.ok:
                row.update(n=str(fit.nobs), k=str(fit.n_params), loglik=_num(fit.loglik), sigma2=_num(fit.sigma2),
                           aic=_num(fit.aic), aicc=_num(fit.aicc), bic=_num(fit.bic), hqic=_num(fit.hqic))
            if ev.diagnostics is not None:
                row["white_noise"] = ev.diagnostics.white_noise_verdict.label
                main = ev.diagnostics.main_ljung_box
                if main is not None:
                    row.update(ljung_box_lag=str(main.lag), ljung_box_p=_num(main.p))
            parent_ev = evaluations.get(c.parent_id) if c.parent_id else None
            if parent_ev is not None:
                test = nested_test(parent_ev.fit, fit)
                row["test_applies"] = str(test.applies).lower()
                if test.applies:
                    row.update(f_stat=_num(test.f_stat), f_df1=str(test.f_df1), f_df2=str(test.f_df2),
                               f_p=_num(test.f_p), lr_stat=_num(test.lr_stat), lr_df=str(test.df),
                               lr_p=_num(test.lr_p))
                else:
                    row["test_reason"] = test.reason
        rows.append([row.get(name, "") for name in LINEAGE_COLUMNS])
    return rows


def residual_rows(series: Series, evaluation: Evaluation) -> list[list[str]]:
    """One row per observation of the series (columns :data:`RESIDUAL_COLUMNS`).

    ``prepared`` is :math:`w_t` (transformed and differenced), empty for the
    observations lost to differencing; ``fitted_prepared`` is
    ``prepared - residual``; ``used_in_checks`` marks the residuals the
    diagnostics use (burn-in and missing values left out).

    Raises
    ------
    LagwrightError
        If the evaluation has no fit.
    """
    fit = evaluation.fit
    if not fit.ok:
        raise LagwrightError(f"The fit of {fit.spec.label} failed ({fit.failure}); it has no residuals to export.")
    prepared = prepare(series, fit.spec)
    w = prepared.values
    offset = fit.offset
    labels = series.time_labels() if series.times is not None else [""] * len(series)
    used = set(int(p) for p in fit.diagnostic_positions())
    rows = []
    for i in range(len(series)):
        j = i - offset
        if 0 <= j < w.size:
            wj = float(w[j])
            e = float(fit.residuals[j]) if j < fit.residuals.size else math.nan
            z = float(fit.std_residuals[j]) if j < fit.std_residuals.size else math.nan
            fitted = wj - e if math.isfinite(wj) and math.isfinite(e) else math.nan
        else:
            wj = e = z = fitted = math.nan
        rows.append([str(i + 1), labels[i], _num(series.values[i]), _num(wj), _num(fitted), _num(e), _num(z),
                     "yes" if i in used else "no"])
    return rows


def residual_header(series: Series, evaluation: Evaluation, candidate_id: str = "") -> list[str]:
    """Comment lines (without the leading ``#``) that explain the residual file."""
    fit = evaluation.fit
    spec = fit.spec
    from .equation import differenced_variable

    return [
        f"Lagwright residuals and fitted values of {candidate_id + ' ' if candidate_id else ''}{spec.description}",
        f"data: {series.name} ({series.provenance.source or 'in memory'}), SHA-256 {series.provenance.sha256 or '-'}",
        f"prepared = the series the ARMA model is fitted to: {differenced_variable(spec).replace(chr(0x2212), '-')}"
        f" (transform {spec.transform.label}, d={spec.d}, D={spec.D}, s={spec.s}); empty for the "
        f"{spec.lost_observations} observations lost to differencing",
        "fitted_prepared = prepared - residual: the one-step prediction on the prepared scale, "
        "not on the scale of the observed values",
        "residual = one-step prediction error; standardized_residual = residual / its standard deviation",
        "used_in_checks = whether the residual checks use this residual (burn-in and missing values are left out)",
    ]


def csv_text(header: Sequence[str], rows: Sequence[Sequence[str]], comments: Sequence[str] = ()) -> str:
    """CSV text: ``#`` comment lines, the header row, the rows."""
    buffer = io.StringIO()
    for line in comments:
        buffer.write("# " + line.replace("\n", " ") + "\n")
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(rows)
    return buffer.getvalue()


def publish(tmp: str, target: Path) -> None:
    """Move a finished temporary file onto ``target`` with the permissions a new file would get.

    ``tempfile.mkstemp`` makes files readable by their owner only; the
    exported file should carry the usual permissions (those of the file it
    replaces, or 0666 less the umask).
    """
    try:
        mode = os.stat(target).st_mode & 0o777
    except OSError:
        mask = os.umask(0)
        os.umask(mask)
        mode = 0o666 & ~mask
    try:
        os.chmod(tmp, mode)
    except OSError:
        pass
    os.replace(tmp, target)


def write_text_atomic(path: str | os.PathLike, text: str, encoding: str = "utf-8-sig") -> Path:
    """Write ``text`` to ``path`` through a temporary file in the same folder (no partial file on failure).

    Raises
    ------
    ExportError
        If the folder cannot be written.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise ExportError(f"Cannot write '{target}': {exc.strerror or exc}. Choose another folder.") from None
    try:
        with os.fdopen(fd, "w", encoding=encoding, newline="") as handle:
            handle.write(text)
        publish(tmp, target)
    except OSError as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise ExportError(f"Cannot write '{target}': {exc.strerror or exc}. Choose another folder.") from None
    return target


def write_csv(path, header, rows, comments=()) -> Path:
    """Write a CSV file atomically (UTF-8 with byte-order mark)."""
    return write_text_atomic(path, csv_text(header, rows, comments))


def fitted_prepared(series: Series, evaluation: Evaluation) -> np.ndarray:
    """Fitted values on the prepared scale, aligned with the prepared series (NaN where undefined)."""
    prepared = prepare(series, evaluation.fit.spec)
    return np.asarray(prepared.values, dtype=float) - np.asarray(evaluation.fit.residuals, dtype=float)
