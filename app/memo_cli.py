"""``lagwright memo``: the model-choice memo as a PDF, headless.

Two forms::

    lagwright memo SESSION.lagwright.json --candidate ID [--runner-up ID] -o memo.pdf
    lagwright memo FILE [the model options of 'lagwright fit'] -o memo.pdf

The first refits every candidate of the session's lineage on the session's
data (exact maximum likelihood, parents first) and writes the memo for the
chosen candidate; the second fits one model straight from a data file (or
``sample:NAME``). Both need no display: without one, Qt's offscreen platform
is used. A QApplication is made only inside this command.
"""

from __future__ import annotations

import argparse
import os
import sys
from datetime import date
from pathlib import Path

from lagwright.core.session import SUFFIX


def add_memo_parser(sub, add_model_options) -> argparse.ArgumentParser:
    """Add the ``memo`` sub-command to the ``lagwright`` parser."""
    memo = sub.add_parser(
        "memo", help="write the model-choice memo (PDF) from a session or a data file", allow_abbrev=False,
        description="Write the model-choice memo as a PDF: from a session file (every candidate refitted, "
                    "the chosen one described in full) or from a data file and the model options of "
                    "'lagwright fit'.",
    )
    before = {action.dest for action in memo._actions}
    add_model_options(memo)
    # Data and model options do not apply to a session: remember their defaults to refuse them there.
    memo.set_defaults(_data_defaults={action.dest: (action.option_strings[0], action.default)
                                      for action in memo._actions
                                      if action.dest not in before and action.option_strings})
    out = memo.add_argument_group("memo")
    out.add_argument("-o", "--output", required=True, metavar="PDF", help="the PDF file to write")
    out.add_argument("--candidate", metavar="ID",
                     help=f"with a session ({SUFFIX}): the chosen candidate (default: the session's current one)")
    out.add_argument("--runner-up", dest="runner_up", metavar="ID",
                     help="with a session: a second candidate shown side by side")
    out.add_argument("--page", choices=("a4", "letter"), type=str.lower, default="a4", help="page size (default a4)")
    out.add_argument("--analyst", help="the analyst's name for the title block (default: the session's)")
    out.add_argument("--forecast", type=int, default=0, metavar="H",
                     help="add a forecast section: H steps after the end of the series (default: none)")
    out.add_argument("--back-transform", dest="back_transform", choices=("median", "mean"), default="median",
                     help="with a log or Box-Cox transform: forecast the back-transformed median or the "
                          "bias-adjusted mean (default median); the memo states which")
    out.add_argument("--holdout", type=int, default=0, metavar="N",
                     help="with --forecast: also refit without the last N values and score their forecasts")
    return memo


def _ensure_gui():
    """A QApplication for drawing the panes, offscreen when there is no display."""
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance()
    if app is None:
        headless = sys.platform.startswith("linux") and not (os.environ.get("DISPLAY")
                                                            or os.environ.get("WAYLAND_DISPLAY"))
        if headless:
            os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
        app = QApplication(["lagwright"])
    return app


class _QuietQt:
    """Keep Qt's own chatter (font and platform notes) off stderr while the memo renders."""

    def __enter__(self):
        from PySide6.QtCore import QtMsgType, qInstallMessageHandler

        def handler(kind, context, message):  # noqa: ARG001 - Qt's signature
            if kind in (QtMsgType.QtCriticalMsg, QtMsgType.QtFatalMsg):
                sys.stderr.write(f"lagwright: Qt: {message}\n")

        self._previous = qInstallMessageHandler(handler)
        return self

    def __exit__(self, *exc):
        from PySide6.QtCore import qInstallMessageHandler

        qInstallMessageHandler(self._previous)
        return False


def _session_inputs(args):
    from lagwright.core.memo_content import MemoError, MemoInputs
    from lagwright.core.memo_inputs import evaluate_lineage, load_session_series
    from lagwright.core.samples import get_sample
    from lagwright.core.session import read_session

    given = [flag for dest, (flag, default) in getattr(args, "_data_defaults", {}).items()
             if getattr(args, dest, default) != default]
    if given:
        raise MemoError(f"{', '.join(given)} do{'es' if len(given) == 1 else ''} not apply to a session: the session "
                        "names its data and its models. Leave them out and name the candidate with --candidate, "
                        "or give a data file instead of the session.")
    session = read_session(args.file)
    lineage = session.lineage
    if not lineage.candidates:
        raise MemoError(f"The session '{Path(args.file).name}' holds no candidates; there is nothing to report.")
    chosen = args.candidate or session.current or lineage.candidates[-1].id
    lineage.get(chosen)  # an unknown id fails here, before any fitting
    if args.runner_up:
        lineage.get(args.runner_up)
        if args.runner_up == chosen:
            raise MemoError(f"The runner-up must be another candidate than the chosen one ('{chosen}').")
    series = load_session_series(session, args.file)
    evaluations = evaluate_lineage(series, lineage)
    units = description = title = ""
    if session.data.sample:
        sample = get_sample(session.data.sample)
        units, description, title = sample.units, sample.description, sample.title
    return MemoInputs(
        series=series, lineage=lineage, evaluations=evaluations, chosen_id=chosen, runner_up_id=args.runner_up,
        analyst=args.analyst if args.analyst is not None else session.analyst, date=date.today().isoformat(),
        data=session.data, session_name=Path(args.file).name, units=units, description=description,
        series_title=title,
    )


def _file_inputs(args):
    from lagwright.app.cli import SAMPLE_PREFIX, load_input, spec_from_options
    from lagwright.core.lineage import Lineage
    from lagwright.core.memo_content import MemoError, MemoInputs
    from lagwright.core.memo_inputs import evaluate_lineage
    from lagwright.core.samples import get_sample
    from lagwright.core.session import DataReference

    if args.candidate or args.runner_up:
        raise MemoError("--candidate and --runner-up need a session file; with a data file the memo describes "
                        "the one model given by the options.")
    series = load_input(args.file, args.value, args.time, args.sheet, args)
    spec = spec_from_options(args, series)
    lineage, root = Lineage().add_root(spec, step="fitted from the command line")
    evaluations = evaluate_lineage(series, lineage)
    units = description = title = ""
    if args.file.startswith(SAMPLE_PREFIX):
        name = args.file[len(SAMPLE_PREFIX):]
        sample = get_sample(name)
        units, description, title = sample.units, sample.description, sample.title
        ref = DataReference(sample=name, sha256=series.provenance.sha256)
    else:
        ref = DataReference(path=args.file, sha256=series.provenance.sha256,
                            value_column=args.value or "", time_column=args.time or "",
                            sheet=args.sheet)
    return MemoInputs(
        series=series, lineage=lineage, evaluations=evaluations, chosen_id=root.id, analyst=args.analyst or "",
        date=date.today().isoformat(), data=ref, units=units, description=description, series_title=title,
    )


def with_forecast(inputs, horizon: int, back_transform: str = "median", holdout: int = 0):
    """``inputs`` with the chosen candidate's forecast (and holdout score) when ``horizon`` > 0."""
    from dataclasses import replace

    from lagwright.core.errors import InputError
    from lagwright.core.forecast import forecast_check

    if not horizon:
        if holdout:
            raise InputError("--holdout goes with --forecast H: give the forecast horizon too.")
        return inputs
    if horizon < 0 or holdout < 0:
        raise InputError("--forecast and --holdout take positive numbers of steps.")
    fit = inputs.evaluations[inputs.chosen_id].fit
    if not fit.ok:
        return inputs
    return replace(inputs, forecast=forecast_check(inputs.series, fit, holdout, horizon, back_transform))


def run_memo(args) -> int:
    """Run ``lagwright memo``; errors are :class:`LagwrightError` and end as one line on stderr."""
    _ensure_gui()
    from lagwright.app.memo_pdf import check_writable, make_memo

    check_writable(args.output)  # before any fitting: an unwritable place fails at once
    is_session = str(args.file).endswith(SUFFIX)
    inputs = _session_inputs(args) if is_session else _file_inputs(args)
    inputs = with_forecast(inputs, args.forecast, args.back_transform, args.holdout)
    with _QuietQt():
        path = make_memo(inputs, args.output, page=args.page)
    fit = inputs.evaluations[inputs.chosen_id].fit
    sys.stdout.write(f"wrote {path}\n")
    if not fit.ok:
        sys.stderr.write(f"lagwright: the chosen model could not be fitted ({fit.failure}); the memo says so.\n")
        return 1
    return 0
