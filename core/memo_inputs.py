"""Gathering what a memo reports: the session's data and an exact fit of every candidate.

The memo is made from results, never from what a window happens to show:
:func:`evaluate_lineage` fits every candidate of a lineage exactly, parents
before children (each child may start from its parent's estimates and must
reach at least its parent's log-likelihood, see :mod:`lagwright.core.fit`).
A candidate that cannot be fitted yields an evaluation whose fit says why,
so the memo can show it as failed.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley, ch. 7
(the exact likelihood each candidate is fitted by; see
:mod:`lagwright.core.fit`).
"""

from __future__ import annotations

import os
from collections.abc import Callable, Mapping
from pathlib import Path

from .errors import LagwrightError
from .evaluate import Evaluation, evaluate
from .lineage import Lineage
from .loader import load_series
from .result import failed_fit
from .samples import load_sample
from .series import Series
from .session import Session
from .spec import ModelSpec

#: ``progress(done, total, what)``; called before each candidate is fitted.
Progress = Callable[[int, int, str], None]


def load_session_series(session: Session, session_path: str | os.PathLike) -> Series:
    """Load the series a session refers to.

    A bundled sample is loaded by name; a file path that is relative is
    taken relative to the session file's folder.

    Raises
    ------
    InputError
        If the data file is missing or unusable (the message names it).
    """
    ref = session.data
    if ref.sample:
        return load_sample(ref.sample)
    if not ref.path:
        from .errors import SessionError

        raise SessionError(
            f"The session '{Path(session_path).name}' does not say which data file it was made from; "
            "open the data in Lagwright and save the session again."
        )
    data_path = Path(ref.path)
    if not data_path.is_absolute():
        data_path = Path(session_path).resolve().parent / data_path
    sheet = ref.sheet
    if sheet is not None and str(sheet).isdigit():
        sheet = int(sheet)
    from .import_options import ImportOptions

    options = ImportOptions.from_dict(ref.import_options) if ref.import_options else None
    return load_series(data_path, value=ref.value_column or None, time=ref.time_column or None, sheet=sheet,
                       options=options)


def evaluate_lineage(
    series: Series,
    lineage: Lineage,
    *,
    known: Mapping[ModelSpec, Evaluation] | None = None,
    failures: Mapping[ModelSpec, str] | None = None,
    progress: Progress | None = None,
) -> dict[str, Evaluation]:
    """Exact evaluations of every candidate, by candidate id.

    Parameters
    ----------
    series : Series
    lineage : Lineage
    known : mapping of ModelSpec to Evaluation, optional
        Evaluations already made (for example by the window); previews in
        it are ignored and refitted exactly.
    failures : mapping of ModelSpec to str, optional
        Specs already known to fail, with the reason.
    progress : callable, optional
        ``progress(done, total, what)`` before each candidate.

    Returns
    -------
    dict of str to Evaluation
        In lineage order. Failed fits are included (``fit.ok`` False).
    """
    known = known or {}
    failures = failures or {}
    out: dict[str, Evaluation] = {}
    by_spec: dict[ModelSpec, Evaluation] = {}
    total = len(lineage.candidates)
    for done, candidate in enumerate(lineage.candidates):
        if progress is not None:
            progress(done, total, f"fitting {candidate.id}: {candidate.spec.label}")
        spec = candidate.spec
        evaluation = by_spec.get(spec)
        if evaluation is None:
            ready = known.get(spec)
            if ready is not None and not ready.is_preview:
                evaluation = ready
            elif spec in failures:
                evaluation = Evaluation(failed_fit(spec, "exact", failures[spec]), None, None, failures[spec])
            else:
                parent_fit = None
                if candidate.parent_id is not None:
                    parent = out.get(candidate.parent_id)
                    if parent is not None and parent.fit.ok:
                        parent_fit = parent.fit
                try:
                    evaluation = evaluate(series, spec, kind="exact", parent=parent_fit)
                except LagwrightError as exc:
                    evaluation = Evaluation(failed_fit(spec, "exact", str(exc)), None, None, str(exc))
            by_spec[spec] = evaluation
        out[candidate.id] = evaluation
    if progress is not None:
        progress(total, total, "fits done")
    return out
