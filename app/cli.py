"""The ``lagwright`` command.

``lagwright`` with no arguments opens the window on the bundled default
sample series; ``lagwright FILE`` opens the window on a file;
``lagwright fit FILE ...`` fits one model headless and prints a report or, with
``--json``, one JSON object (schema in ``docs/fit-json.md``).

Every error the user can cause ends in one line on stderr naming the file,
column or option, what is wrong and what to do, and a non-zero exit status:
1 for bad data or a model that cannot be fitted, 2 for bad options, 3 for an
internal error (a bug: the message asks for a report; no traceback).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys

EXIT_DATA = 1
EXIT_USAGE = 2
EXIT_INTERNAL = 3
SAMPLE_PREFIX = "sample:"


class _Parser(argparse.ArgumentParser):
    """argparse that reports a bad option in one line and exits 2."""

    def error(self, message: str) -> None:  # noqa: D401 - argparse API
        self.exit(EXIT_USAGE, f"lagwright: {message} (see 'lagwright {self.prog.split()[-1]} --help')\n")


def _lag_list(text: str) -> tuple[int, ...]:
    text = text.strip()
    if not text or text in ("0", "none"):
        return ()
    lags = []
    for part in text.split(","):
        part = part.strip()
        if "-" in part[1:]:
            lo, hi = part.split("-", 1)
            if not (lo.isdigit() and hi.isdigit()) or int(lo) > int(hi):
                raise argparse.ArgumentTypeError(f"'{part}' is not a lag range like 1-3")
            lags.extend(range(int(lo), int(hi) + 1))
        elif part.isdigit() and int(part) >= 1:
            lags.append(int(part))
        else:
            raise argparse.ArgumentTypeError(f"'{part}' is not a lag (use whole numbers like 1,2,12 or a range 1-3)")
    return tuple(lags)


def _add_model_options(parser: argparse.ArgumentParser) -> None:
    data = parser.add_argument_group("data")
    data.add_argument("file", help=f"CSV, Excel or Parquet file, or '{SAMPLE_PREFIX}NAME' for a bundled sample series")
    data.add_argument("--value", help="value column (needed only if the file has several numeric columns)")
    data.add_argument("--time", help="time column (needed only if it cannot be detected)")
    data.add_argument("--sheet", help="Excel sheet name or 0-based number (default: the first)")
    from .import_cli import add_import_options

    add_import_options(data)  # --decimal, --thousands, --delimiter, --gaps, --duplicates, --aggregate, ...
    model = parser.add_argument_group("model")
    model.add_argument("--ar", type=_lag_list, default=(), metavar="LAGS", help="AR lags, e.g. 1,2 or 1-3 or 1,12")
    model.add_argument("--ma", type=_lag_list, default=(), metavar="LAGS", help="MA lags")
    model.add_argument("--sar", type=_lag_list, default=(), metavar="LAGS", help="seasonal AR lags in periods (1 = lag s)")
    model.add_argument("--sma", type=_lag_list, default=(), metavar="LAGS", help="seasonal MA lags in periods")
    model.add_argument("--period", type=int, default=0, metavar="S", help="seasonal period s (e.g. 12, 7)")
    model.add_argument("--d", type=int, default=0, help="ordinary differencing (0, 1 or 2)")
    model.add_argument("--D", type=int, default=0, help="seasonal differencing (0 or 1)")
    model.add_argument("--transform", choices=("none", "log", "boxcox"), default="none")
    model.add_argument("--lambda", dest="lam", type=float, default=None,
                       help="Box-Cox lambda (estimated by maximum likelihood if left out)")
    model.add_argument("--constant", choices=("auto", "none", "mean", "drift"), default="auto",
                       help="auto: a mean when undifferenced, none otherwise")
    model.add_argument("--pulse", action="append", default=[], metavar="WHEN",
                       help="a pulse intervention at WHEN (a date of the series or an observation number "
                            "from 1); may be repeated")
    model.add_argument("--level", action="append", default=[], metavar="WHEN",
                       help="a level-shift intervention from WHEN on; may be repeated")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="lagwright",
        description="Grow an ARMA/ARIMA model one term at a time and defend the choice.",
        allow_abbrev=False,
    )
    parser.add_argument("--version", action="store_true", help="print the version and exit")
    sub = parser.add_subparsers(dest="command", parser_class=_Parser)
    fit = sub.add_parser("fit", help="fit one model headless and print its report", allow_abbrev=False,
                         description="Fit one model by exact maximum likelihood, check its residuals, print a report.")
    _add_model_options(fit)
    fit.add_argument("--json", action="store_true", help="print one JSON object (see docs/fit-json.md)")
    fit.add_argument("--preview", action="store_true",
                     help="report the fast conditional-sum-of-squares preview instead of the exact fit")
    scr = sub.add_parser("screen", help="rank every ARMA order up to limits by AICc or BIC", allow_abbrev=False,
                         description="Screen all orders up to the limits on the prepared series (d, D, s, "
                                     "transform) and print them ranked by the criterion.")
    _add_model_options(scr)
    for name, help_text in (("--max-p", "largest AR order"), ("--max-q", "largest MA order"),
                            ("--max-P", "largest seasonal AR order"), ("--max-Q", "largest seasonal MA order")):
        scr.add_argument(name, type=int, default=0 if name in ("--max-P", "--max-Q") else 3, help=help_text)
    scr.add_argument("--criterion", choices=("aicc", "bic"), default="aicc")
    scr.add_argument("--workers", type=int, default=None, help="worker processes (default: all cores for large screens, else this process)")
    scr.add_argument("--json", action="store_true", help="print one JSON object")
    from .memo_cli import add_memo_parser

    add_memo_parser(sub, _add_model_options)
    return parser


def load_input(file: str, value=None, time=None, sheet=None, options=None):
    """Load a data file, or a bundled sample given as ``sample:NAME``.

    ``options`` are the import choices (an ImportOptions, or parsed arguments
    carrying ``--decimal``, ``--gaps``, ``--aggregate``, ...); they apply to a
    sample too, which is then read with its catalogued columns.
    """
    from lagwright.core import samples
    from lagwright.core.import_options import ImportOptions
    from lagwright.core.loader import load_series

    from .import_cli import options_from_args

    if options is not None and not isinstance(options, ImportOptions):
        options = options_from_args(options)
    if file.startswith(SAMPLE_PREFIX):
        name = file[len(SAMPLE_PREFIX):]
        if options is None or options == ImportOptions():
            return samples.load_sample(name)
        sample = samples.get_sample(name)
        return load_series(samples.sample_path(name), value=value or sample.value_column,
                           time=time or sample.time_column, options=options)
    if sheet is not None and sheet.isdigit():
        sheet = int(sheet)
    return load_series(file, value=value, time=time, sheet=sheet, options=options)


def spec_from_options(args, series):
    """Build the :class:`ModelSpec` the options describe (estimating Box-Cox λ if needed)."""
    from lagwright.core.prepare import estimate_boxcox_lambda
    from lagwright.core.spec import ModelSpec, Transform

    if args.transform == "boxcox":
        lam = args.lam if args.lam is not None else estimate_boxcox_lambda(series)
        transform = Transform("boxcox", lam)
    else:
        if args.lam is not None:
            from lagwright.core.errors import SpecError

            raise SpecError("--lambda applies only with --transform boxcox.")
        transform = Transform(args.transform)
    if args.constant == "auto":
        constant = "mean" if args.d + args.D == 0 else "none"
    else:
        constant = args.constant
    from lagwright.core.interventions import locate
    from lagwright.core.spec import Intervention

    events = [Intervention(locate(series, when), "pulse") for when in getattr(args, "pulse", [])]
    events += [Intervention(locate(series, when), "level") for when in getattr(args, "level", [])]
    return ModelSpec(ar=args.ar, ma=args.ma, sar=args.sar, sma=args.sma, d=args.d, D=args.D,
                     s=args.period, transform=transform, constant=constant, interventions=tuple(events))


def _run_fit(args) -> int:
    from lagwright.core.evaluate import evaluate
    from lagwright.core.report import evaluation_to_dict, text_report

    series = load_input(args.file, args.value, args.time, args.sheet, args)
    spec = spec_from_options(args, series)
    evaluation = evaluate(series, spec, kind="preview" if args.preview else "exact")
    if args.json:
        sys.stdout.write(json.dumps(evaluation_to_dict(evaluation, series), indent=2, allow_nan=False) + "\n")
    else:
        sys.stdout.write(text_report(evaluation, series))
    if not evaluation.fit.ok:
        sys.stderr.write(f"lagwright: the model could not be fitted: {evaluation.fit.failure}\n")
        return EXIT_DATA
    return 0


def _run_screen(args) -> int:
    from lagwright.core.errors import SpecError
    from lagwright.core.screen import screen

    if args.ar or args.ma or args.sar or args.sma:
        raise SpecError("'screen' takes order limits (--max-p, --max-q, --max-P, --max-Q), not lags.")
    series = load_input(args.file, args.value, args.time, args.sheet, args)
    base = spec_from_options(args, series)
    result = screen(series, base, args.max_p, args.max_q, args.max_P, args.max_Q, criterion=args.criterion,
                    workers=args.workers)
    if args.json:
        payload = {"schema": "lagwright-screen", "version": 1, "criterion": result.criterion,
                   "exact_fits": result.n_exact, "candidates": [row.to_dict() for row in result.rows]}
        sys.stdout.write(json.dumps(payload, indent=2, allow_nan=False) + "\n")
    else:
        sys.stdout.write(f"{'rank':>4}  {'model':<28}{args.criterion.upper():>12}  fit\n")
        for i, row in enumerate(result.rows, 1):
            how = ("exact" if row.converged else "exact, NOT converged") if row.exact else "preview only"
            value = f"{row.criterion:>12.3f}" if math.isfinite(row.criterion) else f"{'—':>12}"
            sys.stdout.write(f"{i:>4}  {row.spec.label:<28}{value}  {how}\n")
    return 0


def _run_window(path: str | None) -> int:
    try:
        from lagwright.app.window import run_window
    except ImportError as exc:  # PySide6 or pyqtgraph missing
        sys.stderr.write(f"lagwright: the window cannot start ({exc}). Reinstall with: pip install lagwright\n")
        return EXIT_USAGE
    return run_window(path)


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``lagwright`` console script."""
    argv = sys.argv[1:] if argv is None else list(argv)
    from lagwright.core.errors import LagwrightError

    try:
        if not argv or (len(argv) == 1 and not argv[0].startswith("-") and argv[0] not in ("fit", "screen", "memo")):
            return _run_window(argv[0] if argv else None)
        try:
            args = build_parser().parse_args(argv)
        except SystemExit as exc:  # --help, or a bad option already reported in one line
            return int(exc.code or 0)
        if args.version:
            from importlib.metadata import version

            sys.stdout.write(f"lagwright {version('lagwright')}\n")
            return 0
        if args.command == "fit":
            return _run_fit(args)
        if args.command == "memo":
            from .memo_cli import run_memo

            return run_memo(args)
        if args.command == "screen":
            return _run_screen(args)
        build_parser().print_help()
        return EXIT_USAGE
    except LagwrightError as exc:
        sys.stderr.write(f"lagwright: {exc}\n")
        return EXIT_DATA
    except KeyboardInterrupt:
        sys.stderr.write("lagwright: interrupted\n")
        return 130
    except BrokenPipeError:
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except Exception as exc:  # noqa: BLE001 - the last safety net: never a traceback
        sys.stderr.write(
            f"lagwright: internal error ({type(exc).__name__}: {exc}). This is a bug; please report it "
            "with the command you ran.\n"
        )
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
