"""The content of the model-choice memo, as plain values: sections of text, tables and figures.

:func:`build_memo` turns core results (a series, a lineage, an exact
:class:`~lagwright.core.evaluate.Evaluation` of every candidate) into a
:class:`Memo`: a title block and nine numbered sections made of small
blocks (:class:`Paragraph`, :class:`Bullets`, :class:`Fields`,
:class:`Table`, :class:`Equation`, :class:`FigureRow`, :class:`SideBySide`,
:class:`Subheading`). Nothing here knows about pages, fonts or Qt: the PDF
renderer (``lagwright.app.memo_pdf``) lays the blocks out, and
:func:`memo_text` writes them as plain text, so the content can be checked
without a display.

Every string in a block is plain text, user text included (step notes,
column names, file names): a renderer that builds markup must escape it.

Numbers are printed with the typographic minus (U+2212) at these
precisions: estimates and standard errors 4 decimals (4 significant digits
below 0.01 and from 10⁶ up), z 2 decimals, p-values 4 decimals
(``< 0.0001`` below), σ² 5 significant digits, log-likelihood and
information criteria 2 decimals, test statistics 2 decimals. Magnitudes far
from 1 (below 10⁻⁴, or from 10⁶ or 10⁷ up) are written as m × 10ⁿ.

References
----------
Box, G. E. P., Jenkins, G. M., Reinsel, G. C. & Ljung, G. M. (2015).
*Time Series Analysis: Forecasting and Control*, 5th ed., Wiley, ch. 7-9
(estimation, diagnostic checking, seasonal models).
Ljung, G. M. & Box, G. E. P. (1978). On a measure of lack of fit in time
series models. *Biometrika* 65(2), 297-303.
Burnham, K. P. & Anderson, D. R. (2002). *Model Selection and Multimodel
Inference*, 2nd ed., Springer (comparing information criteria only on the
same data).
"""

from __future__ import annotations

import math
import platform
import shlex
from collections.abc import Mapping
from dataclasses import dataclass
from importlib import metadata

import numpy as np
from scipy import stats

from .compare import StepTest, comparability, nested_test
from .diagnostics import ALPHA, Diagnostics
from .equation import MINUS, differenced_variable, equation_notes, fitted_equation, significant
from .errors import LagwrightError
from .evaluate import Evaluation
from .lineage import Candidate, Lineage
from .result import Fit
from .series import Series
from .forecast import ForecastCheck
from .session import DataReference
from .spec import ModelSpec

#: The panes a memo shows, by key, in the order of the residual-evidence section.
FIGURE_KEYS = ("trace", "correlation", "histogram", "quantile", "periodogram", "roots")

#: Section keys, in order (the title block comes before them). "forecast" is
#: there only when the memo was asked for a forecast.
SECTION_KEYS = (
    "data", "preparation", "model", "residuals", "lineage", "runner_up", "forecast", "conventions", "reproduction",
    "cautions",
)


class MemoError(LagwrightError, ValueError):
    """A memo cannot be made as asked (unknown or repeated candidate, unwritable file, ...)."""


# ===================================================================== blocks
@dataclass(frozen=True)
class Paragraph:
    """A paragraph of plain text.

    ``style`` is one of ``"body"``, ``"lead"`` (a little larger),
    ``"small"``, ``"code"`` (monospace, never re-flowed), ``"warning"``
    (drawn in the attention colour) or ``"caution"`` (a framed box).
    """

    text: str
    style: str = "body"


@dataclass(frozen=True)
class Bullets:
    """A list of plain-text items."""

    items: tuple[str, ...]
    style: str = "body"


@dataclass(frozen=True)
class Fields:
    """Label/value pairs; values of labels in ``mono`` are set in monospace, those in ``math`` as formulas."""

    items: tuple[tuple[str, str], ...]
    mono: tuple[str, ...] = ()
    math: tuple[str, ...] = ()


@dataclass(frozen=True)
class Column:
    """A table column: its title, alignment (``"left"``/``"right"``) and relative width."""

    title: str
    align: str = "left"
    weight: float = 1.0


@dataclass(frozen=True)
class Row:
    """A table row.

    ``mark`` flags the whole row (``"chosen"``, ``"runner-up"``,
    ``"failed"``, ``"warn"`` or ``""``); ``cell_marks`` flags single
    cells (``"good"``, ``"doubt"``, ``"bad"``, ``"weak"`` or ``""``).
    """

    cells: tuple[str, ...]
    mark: str = ""
    cell_marks: tuple[str, ...] = ()

    def cell_mark(self, index: int) -> str:
        return self.cell_marks[index] if index < len(self.cell_marks) else ""


@dataclass(frozen=True)
class Table:
    """A table with a header row; cells may hold several lines (``\\n``)."""

    columns: tuple[Column, ...]
    rows: tuple[Row, ...]
    title: str = ""
    note: str = ""


@dataclass(frozen=True)
class Equation:
    """The fitted equation (one line) and the sentences that explain its symbols."""

    text: str
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Figure:
    """One pane drawn for the memo.

    ``pane`` is a key of :data:`FIGURE_KEYS`; ``aspect`` is height/width.
    """

    pane: str
    title: str
    caption: str
    aspect: float = 0.6


@dataclass(frozen=True)
class FigureRow:
    """One or two figures side by side across the text width."""

    figures: tuple[Figure, ...]


@dataclass(frozen=True)
class Subheading:
    text: str


@dataclass(frozen=True)
class SideBySide:
    """Two columns of blocks, each with a title (the runner-up comparison)."""

    left_title: str
    left: tuple
    right_title: str
    right: tuple


@dataclass(frozen=True)
class Section:
    number: int
    key: str
    title: str
    blocks: tuple


@dataclass(frozen=True)
class TitleBlock:
    title: str
    subtitle: str
    fields: Fields
    summary: tuple[str, ...] = ()


@dataclass(frozen=True)
class Memo:
    """A whole memo.

    Attributes
    ----------
    title_block : TitleBlock
    sections : tuple of Section
        Numbered 1..9 in the order of :data:`SECTION_KEYS`.
    chosen_id, runner_up_id : str, str or None
    figure_candidate : str
        The candidate whose evaluation the figures draw (the chosen one).
    document_title : str
        For the PDF's metadata.
    running_head : str
        Short text for the head of every page after the first.
    footer : str
        Text for the foot of every page (the page number goes beside it).
    """

    title_block: TitleBlock
    sections: tuple[Section, ...]
    chosen_id: str
    runner_up_id: str | None
    figure_candidate: str
    document_title: str
    running_head: str
    footer: str

    def section(self, key: str) -> Section:
        for section in self.sections:
            if section.key == key:
                return section
        raise KeyError(key)

    def figures(self) -> tuple[Figure, ...]:
        """Every figure of the memo, in order."""
        out = []

        def walk(blocks):
            for block in blocks:
                if isinstance(block, FigureRow):
                    out.extend(block.figures)
                elif isinstance(block, SideBySide):
                    walk(block.left)
                    walk(block.right)

        for section in self.sections:
            walk(section.blocks)
        return tuple(out)


@dataclass(frozen=True)
class MemoInputs:
    """Everything :func:`build_memo` needs.

    Attributes
    ----------
    series : Series
    lineage : Lineage
    evaluations : mapping of str to Evaluation
        Exact evaluations by candidate id (see
        :func:`lagwright.core.memo_inputs.evaluate_lineage`); a missing id
        is reported as "not fitted".
    chosen_id : str
    runner_up_id : str or None
    analyst : str
    date : str
        The memo's date as written (ISO 8601 recommended).
    data : DataReference or None
        Where the session says the data came from (path, sample name,
        recorded SHA-256).
    session_name : str
        File name of the session, if the memo was made from one.
    units : str
        Units of the values, if known.
    versions : tuple of (str, str)
        Software and versions (see :func:`software_versions`).
    description : str
        A sentence about the data (the scenario of a bundled sample).
    series_title : str
        A human title of the series, if known.
    forecast : ForecastCheck or None
        The chosen candidate's forecast from the end of the series (and its
        holdout score, if one was asked for); the memo then has a forecast
        section stating the back-transform used (see
        :func:`lagwright.core.forecast.forecast_check`).
    """

    series: Series
    lineage: Lineage
    evaluations: Mapping[str, Evaluation]
    chosen_id: str
    runner_up_id: str | None = None
    analyst: str = ""
    date: str = ""
    data: DataReference | None = None
    session_name: str = ""
    units: str = ""
    versions: tuple[tuple[str, str], ...] = ()
    description: str = ""
    series_title: str = ""
    forecast: ForecastCheck | None = None


# ================================================================ formatting
DASH = "—"


def _minus(text: str) -> str:
    return text.replace("-", MINUS) if text.startswith("-") else text


def fmt_fixed(value, decimals: int) -> str:
    """``value`` with ``decimals`` decimals and a typographic minus; an em dash when not finite.

    Magnitudes of 10⁷ and more are written as m × 10ⁿ with 5 significant digits.
    """
    if value is None or not np.isfinite(value):
        return DASH
    if abs(float(value)) >= 1e7:
        return _minus(significant(value, 5))
    return _minus(f"{float(value):.{decimals}f}")


def fmt_estimate(value) -> str:
    """An estimate or standard error: 4 decimals; 4 significant digits below 0.01 and from 10⁶ up."""
    if value is None or not np.isfinite(value):
        return DASH
    value = float(value)
    if value != 0.0 and (abs(value) < 0.01 or abs(value) >= 1e6):
        return _minus(significant(value, 4))
    return fmt_fixed(value, 4)


def fmt_sig(value, digits: int = 5) -> str:
    """``digits`` significant digits, positional (never an exponent)."""
    if value is None or not np.isfinite(value):
        return DASH
    return _minus(significant(value, digits))


def fmt_p(p) -> str:
    """A p-value: 4 decimals, ``< 0.0001`` below that."""
    if p is None or not np.isfinite(p):
        return DASH
    return "< 0.0001" if p < 1e-4 else f"{float(p):.4f}"


def fmt_int(value) -> str:
    return f"{int(value):,}".replace(",", "\u2009") if value is not None else DASH


# ============================================================== small words
_TERM_WORDS = {"ar": "AR", "ma": "MA", "sar": "seasonal AR", "sma": "seasonal MA"}


def parameter_meaning(name: str, spec: ModelSpec, date_of=None) -> str:
    """Words for a statsmodels parameter name (``ma.S.L7`` -> ``seasonal MA, lag 7``).

    ``date_of(position)`` names an intervention's observation by its date.
    """
    for item in spec.interventions:
        if item.name == name:
            when = date_of(item.position) if date_of is not None else None
            what = "pulse" if item.kind == "pulse" else "level shift"
            return f"{what} at {when} (obs. {item.position + 1})" if when else f"{what} at obs. {item.position + 1}"
    if name == "const":
        if spec.constant == "drift":
            return "drift (mean of the differenced series)"
        return "mean"
    if name == "sigma2":
        return "innovation variance σ²"
    seasonal = ".S." in name
    side = "AR" if name.startswith("ar.") else "MA"
    lag = int(name.rsplit("L", 1)[1])
    return f"{'seasonal ' if seasonal else ''}{side}, lag {lag}"


def transform_text(spec: ModelSpec) -> str:
    kind = spec.transform.kind
    if kind == "log":
        return "natural logarithm: the model is for log y"
    if kind == "boxcox":
        lam = f"{float(spec.transform.lam):g}".replace("-", MINUS)
        return f"Box-Cox with λ = {lam}: g(y) = (y^λ {MINUS} 1)/λ"
    return "none: the model is for the values as they are"


def preparation_differences(a: ModelSpec, b: ModelSpec) -> list[str]:
    """What differs in the preparation of two specs, in short words (``"d = 0 vs 1"``)."""
    from .compare import preparation_differences as parts

    return [f"transform {va} vs {vb}" if part == "transform" else f"{part} = {va} vs {vb}"
            for part, va, vb in parts(a, b)]


def step_test_text(test: StepTest | None, parent: ModelSpec | None, spec: ModelSpec) -> tuple[str, str]:
    """The test of a step as short text, and a cell mark (``good``/``bad``/``doubt``/``""``)."""
    if parent is None:
        return "none: a starting model", ""
    if test is None:
        return "not tested: a fit is missing", "doubt"
    if not test.applies:
        if comparability(parent, spec):
            diffs = "; ".join(preparation_differences(parent, spec))
            return (f"no test: the parent models a different preparation ({diffs}); likelihoods and "
                    "criteria are not comparable"), ""
        reason = test.reason
        if "are not nested" in reason:
            reason = "no test: not nested (neither contains all terms of the other); compare the criteria"
        return reason, "doubt" if "failed" in reason else ""
    if test.negative_lr:
        return ("the larger model fits worse than the smaller one it contains: its fit stopped early "
                "and needs refitting"), "bad"
    lines, significant = test_lines(test)
    added = set(_terms(parent)) < set(_terms(spec)) or _constant_added(parent, spec)
    if significant is None:
        verdict, mark = "the two tests disagree: borderline", "doubt"
    elif added:
        verdict, mark = (("the added term(s) improve the fit significantly", "good") if significant else
                         ("the added term(s) do not improve the fit significantly", "doubt"))
    else:
        verdict, mark = (("the dropped term(s) were significant: dropping them worsens the fit", "bad")
                         if significant else ("no significant loss: the dropped term(s) were not needed", "good"))
    return "\n".join([verdict] + lines), mark


def test_lines(test: StepTest) -> tuple[list[str], bool | None]:
    """The F and LR results of an applicable test as text, and whether both (True), neither (False) or
    only one (None) are significant at 5 %."""
    lines = []
    if np.isfinite(test.f_stat):
        lines.append(f"F({test.f_df1}, {test.f_df2}) = {fmt_fixed(test.f_stat, 2)}, p {_p_rel(test.f_p)}")
    lines.append(f"LR = {fmt_fixed(test.lr_stat, 2)} (df {test.df}), p {_p_rel(test.lr_p)}")
    ps = [p for p in (test.f_p, test.lr_p) if np.isfinite(p)]
    if ps and all(p < ALPHA for p in ps):
        return lines, True
    if ps and all(p >= ALPHA for p in ps):
        return lines, False
    return lines, None


def _terms(spec: ModelSpec) -> list[tuple[str, int]]:
    return [(kind, lag) for kind in ("ar", "ma", "sar", "sma") for lag in spec.lags(kind)]


def _constant_added(parent: ModelSpec, spec: ModelSpec) -> bool:
    return not parent.has_constant and spec.has_constant


def _p_rel(p) -> str:
    """``= 0.0123`` or ``< 0.0001``."""
    text = fmt_p(p)
    return text if text.startswith("<") else f"= {text}"


def verdict_mark(label: str) -> str:
    return {"white": "good", "doubtful": "doubt", "not white": "bad"}.get(label, "")


def fit_state(fit: Fit) -> tuple[str, str]:
    """Short status of a fit and a row mark."""
    if not fit.ok:
        return "FIT FAILED", "failed"
    if not fit.convergence.converged:
        return "DID NOT CONVERGE", "warn"
    return "", ""


# ============================================================ environment
def software_versions(extra: tuple[tuple[str, str], ...] = ()) -> tuple[tuple[str, str], ...]:
    """Versions of Lagwright, Python and the libraries behind the numbers (read from package metadata).

    ``extra`` pairs are appended (the window adds the Qt runtime version).
    """

    def version_of(*names: str) -> str:
        for name in names:
            try:
                return metadata.version(name)
            except metadata.PackageNotFoundError:
                continue
        return "not installed"

    out = [
        ("Lagwright", version_of("lagwright")),
        ("Python", platform.python_version()),
        ("numpy", version_of("numpy")),
        ("scipy", version_of("scipy")),
        ("statsmodels", version_of("statsmodels")),
        ("pandas", version_of("pandas")),
        ("PySide6 (Qt for Python)", version_of("PySide6", "PySide6-Essentials", "PySide6_Essentials")),
        ("pyqtgraph", version_of("pyqtgraph")),
    ]
    out += list(extra)
    out.append(("Operating system", platform.platform(terse=True)))
    return tuple(out)


def _import_flags(saved: dict) -> list[str]:
    """Command-line flags for the import choices that differ from the defaults."""
    from .import_options import CLI_FIELDS, ImportOptions

    if not saved:
        return []
    chosen, default = ImportOptions.from_dict(saved), ImportOptions()
    flags = []
    for name in CLI_FIELDS:
        value = getattr(chosen, name)
        if value is not None and value != getattr(default, name):
            flags += [f"--{name.replace('_', '-')}", str(value)]
    return flags


def reproduce_command(spec: ModelSpec, data: DataReference | None, series: Series | None = None) -> str:
    """The ``lagwright fit`` command that refits ``spec`` from the data file.

    Every option that shapes the model is written out, the constant
    included, so the command does not depend on defaults.
    """
    args = ["lagwright", "fit"]
    ref = data or DataReference()
    if ref.sample:
        args.append(f"sample:{ref.sample}")
    else:
        path = ref.path or (series.provenance.source if series is not None else "") or "DATA.csv"
        args.append(path)
        value = ref.value_column or (series.provenance.value_column if series is not None else "")
        time = ref.time_column or (series.provenance.time_column if series is not None else "")
        if value:
            args += ["--value", value]
        if time:
            args += ["--time", time]
        if ref.sheet not in (None, ""):
            args += ["--sheet", str(ref.sheet)]
        args += _import_flags(ref.import_options)
    for kind in ("ar", "ma", "sar", "sma"):
        lags = spec.lags(kind)
        if lags:
            args += [f"--{kind}", ",".join(str(lag) for lag in lags)]
    if spec.s:
        args += ["--period", str(spec.s)]
    if spec.d:
        args += ["--d", str(spec.d)]
    if spec.D:
        args += ["--D", str(spec.D)]
    if spec.transform.kind != "none":
        args += ["--transform", spec.transform.kind]
        if spec.transform.kind == "boxcox":
            args += ["--lambda", repr(float(spec.transform.lam))]
    args += ["--constant", spec.constant]
    date_of = date_teller(series)
    for item in spec.interventions:
        when = (date_of(item.position) if date_of is not None else None) or str(item.position + 1)
        args += [f"--{item.kind}", when]
    return " ".join(shlex.quote(a) for a in args)


# ================================================================ the memo
def build_memo(inputs: MemoInputs) -> Memo:
    """Build the memo for ``inputs.chosen_id`` (and the runner-up, if any).

    Raises
    ------
    SessionError
        If a candidate id is not in the lineage (the message lists the ids).
    MemoError
        If the runner-up is the chosen candidate itself.
    """
    lineage = inputs.lineage
    chosen = lineage.get(inputs.chosen_id)
    runner = None
    if inputs.runner_up_id:
        runner = lineage.get(inputs.runner_up_id)
        if runner.id == chosen.id:
            raise MemoError(
                f"The runner-up must be another candidate than the chosen one ('{chosen.id}'); "
                "name a different candidate or leave the runner-up out."
            )
    ev = inputs.evaluations.get(chosen.id)
    sections = [
        Section(1, "data", "Data and where it came from", _data_section(inputs)),
        Section(2, "preparation", "Preparation", _preparation_section(inputs, chosen, ev)),
        Section(3, "model", "The chosen model", _model_section(chosen, ev, inputs)),
        Section(4, "residuals", "Residual evidence", _residual_section(ev, inputs.series)),
        Section(5, "lineage", "How the choice was made", _lineage_section(inputs, chosen, runner)),
        Section(6, "runner_up", "Runner-up, side by side", _runner_up_section(inputs, chosen, runner)),
    ]
    if inputs.forecast is not None:
        sections.append(Section(7, "forecast", "Forecast and holdout check", _forecast_section(inputs)))
    for key, title, blocks in (
        ("conventions", "Conventions and software", _conventions_section(inputs, ev)),
        ("reproduction", "Reproducing the fit", _reproduction_section(inputs, chosen)),
        ("cautions", "Cautions", _cautions_section(inputs)),
    ):
        sections.append(Section(len(sections) + 1, key, title, blocks))
    title = _title_block(inputs, chosen, runner, ev)
    version = dict(inputs.versions).get("Lagwright", "")
    program = f"Lagwright {version}".strip()
    return Memo(
        title_block=title,
        sections=tuple(sections),
        chosen_id=chosen.id,
        runner_up_id=None if runner is None else runner.id,
        figure_candidate=chosen.id,
        document_title=f"Model-choice memo: {inputs.series.name}, {chosen.spec.label}",
        running_head=f"Model-choice memo · {inputs.series.name} · {chosen.id} {chosen.spec.label}",
        footer=f"{program} · {inputs.date}" if inputs.date else program,
    )


# ------------------------------------------------------------- forecast
def future_labels(series: Series, horizon: int) -> list[str]:
    """Labels of the ``horizon`` steps after the series: dates when its frequency is known, else ``t+h``."""
    if series.times is not None and series.frequency:
        import pandas as pd

        try:
            stamps = pd.date_range(pd.Timestamp(series.times[-1]), periods=horizon + 1, freq=series.frequency)[1:]
        except (ValueError, TypeError):
            stamps = None
        if stamps is not None:
            whole_days = all(t == t.normalize() for t in stamps)
            return [t.strftime("%Y-%m-%d" if whole_days else "%Y-%m-%d %H:%M") for t in stamps]
    return [f"t+{h}" for h in range(1, horizon + 1)]


BACK_TRANSFORM_TEXT = {
    "median": "the back-transformed median: the forecast of the transformed series mapped back as it is "
              "(half the outcomes are expected below it)",
    "mean": "the bias-adjusted mean: the back-transformed forecast raised by half its variance "
            "(for a log transform exp(m + v/2)), so that forecasts add up correctly over time",
}

#: Most forecast steps listed in the table (the rest are summarised).
FORECAST_ROWS = 24


def _forecast_section(inputs: MemoInputs) -> tuple:
    check = inputs.forecast
    spec = check.spec
    blocks: list = []
    if check.failure or check.future is None:
        blocks.append(Paragraph(f"No forecast could be made: {check.failure or 'the fit failed.'}", "warning"))
        return tuple(blocks)
    fc = check.future
    labels = future_labels(inputs.series, fc.horizon)
    last = inputs.series.time_labels()[-1]
    text = (f"Forecasts of the next {fc.horizon} values after {last}, with 80 % and 95 % prediction intervals, "
            f"from the estimates of {spec.label} on the whole series.")
    if spec.transform.kind != "none":
        text += (f" The model is for the transformed series; the point forecast is "
                 f"{BACK_TRANSFORM_TEXT[fc.back_transform]}. The intervals are the transformed intervals mapped "
                 "back, so they are not symmetric about it.")
    else:
        text += " No transform: the point forecast is the mean forecast."
    levels = [i for i in spec.interventions if i.kind == "level"]
    if spec.interventions:
        text += (" Level shifts carry on into the forecast; pulses do not recur."
                 if levels else " Pulses do not recur in the forecast.")
    blocks.append(Paragraph(text))
    rows = []
    shown = min(fc.horizon, FORECAST_ROWS)
    for h in range(shown):
        rows.append(Row((str(h + 1), labels[h], fmt_sig(fc.point[h]),
                         f"{fmt_sig(fc.lower80[h])} – {fmt_sig(fc.upper80[h])}",
                         f"{fmt_sig(fc.lower95[h])} – {fmt_sig(fc.upper95[h])}")))
    note = (f"Values in {inputs.units}. " if inputs.units else "") + \
        "Prediction intervals assume the model holds with Gaussian errors and known estimates."
    if fc.horizon > shown:
        note += f" Steps {shown + 1}–{fc.horizon} are left out here; the last reaches {fmt_sig(fc.point[-1])}."
    blocks.append(Table(
        columns=(Column("h", "right", 0.4), Column("When", weight=1.2), Column("Forecast", "right", 1.1),
                 Column("80 % interval", "right", 1.6), Column("95 % interval", "right", 1.6)),
        rows=tuple(rows), title="Forecast", note=note,
    ))
    score = check.holdout
    if score is not None:
        if not score.ok:
            blocks.append(Paragraph(f"The holdout check could not be made: {score.failure}", "warning"))
        else:
            blocks.append(Table(
                columns=(Column("Measure", weight=1.6), Column("Value", "right", 1.0), Column("Meaning", weight=3.0)),
                rows=(
                    Row(("RMSE", fmt_sig(score.rmse), "root mean squared error of the held-out forecasts")),
                    Row(("MAE", fmt_sig(score.mae), "mean absolute error")),
                    Row(("MASE", fmt_fixed(score.mase, 3),
                         "MAE over the in-sample mean absolute (seasonal) naive error; below 1 beats the naive "
                         "forecast (Hyndman & Koehler, 2006)")),
                    Row(("80 % interval coverage", f"{100 * score.coverage80:.0f} %", "share of held-out values "
                         "inside the 80 % intervals")),
                    Row(("95 % interval coverage", f"{100 * score.coverage95:.0f} %", "share inside the 95 % "
                         "intervals")),
                ),
                title=f"Holdout check: the last {score.horizon} values",
                note=f"The model was refitted without the last {score.horizon} values and forecast them from there "
                     f"({'median' if score.forecast.back_transform == 'median' else 'bias-adjusted mean'} "
                     "point forecasts).",
            ))
    return tuple(blocks)


# ------------------------------------------------------------ title block
def _title_block(inputs: MemoInputs, chosen: Candidate, runner: Candidate | None, ev: Evaluation | None) -> TitleBlock:
    version = dict(inputs.versions).get("Lagwright", "")
    items = [
        ("Series", inputs.series.name),
        ("Analyst", inputs.analyst or "not given"),
        ("Date", inputs.date or "not given"),
        ("Program", f"Lagwright {version}".strip()),
        ("Chosen model", f"{chosen.id}: {chosen.spec.description}"),
        ("Runner-up", f"{runner.id}: {runner.spec.description}" if runner is not None else "none named"),
    ]
    if inputs.session_name:
        items.append(("Session", inputs.session_name))
    summary = []
    if ev is not None and ev.fit.ok:
        fit = ev.fit
        summary.append(
            f"{chosen.spec.description}, fitted by exact maximum likelihood to n = {fit.nobs} values: "
            f"AIC {fmt_fixed(fit.aic, 2)}, BIC {fmt_fixed(fit.bic, 2)}, σ² = {fmt_sig(fit.sigma2)}."
        )
        if ev.diagnostics is not None:
            verdict = ev.diagnostics.white_noise_verdict
            failed = f" (failed: {', '.join(verdict.failed)})" if verdict.failed else ""
            summary.append(f"Residual checks: {verdict.label}{failed}.")
        n_tried = len(inputs.lineage.candidates)
        summary.append(f"{n_tried} candidate{'s' if n_tried != 1 else ''} tried; section 5 lists every one.")
        if not fit.convergence.converged:
            summary.append("Warning: the optimiser did not report convergence for this fit.")
    elif ev is not None:
        summary.append(f"The fit of the chosen candidate failed: {ev.fit.failure}")
    else:
        summary.append("The chosen candidate has not been fitted.")
    return TitleBlock(
        title="Model-choice memo",
        subtitle=inputs.series_title or inputs.series.name,
        fields=Fields(tuple(items)),
        summary=tuple(summary),
    )


# ------------------------------------------------------------ 1 data
def _data_section(inputs: MemoInputs) -> tuple:
    series = inputs.series
    prov = series.provenance
    ref = inputs.data or DataReference()
    n = len(series)
    labels = series.time_labels()
    span = f"{labels[0]} to {labels[-1]} ({n} values)" if n else DASH
    if series.times is None:
        span = f"observations 1 to {n} (no time stamps)"
    missing = np.flatnonzero(np.isnan(series.values))
    if missing.size == 0:
        missing_text = "none"
    else:
        shown = ", ".join(labels[i] for i in missing[:5]) + (", …" if missing.size > 5 else "")
        missing_text = (
            f"{missing.size} of {n} ({shown}); kept as gaps: the exact likelihood skips them "
            "and the residual checks leave them out"
        )
    value = prov.value_column or series.name
    units = inputs.units or "units not recorded"
    items = [
        ("File", prov.source or "not from a file"),
        ("SHA-256", prov.sha256 or "none (not read from a file)"),
        ("Value column", f"{value} ({units})"),
        ("Time column", prov.time_column or "none: the observations are numbered 1, 2, 3, …"),
        ("Rows", f"{prov.rows_read} read, {prov.rows_used} used"),
        ("Time span", span),
        ("Frequency", f"{series.frequency} (pandas frequency alias)" if series.frequency else "not inferred"),
        ("Missing values", missing_text),
    ]
    if ref.sample:
        items.append(("Source", f"bundled sample '{ref.sample}'"))
    elif ref.path:
        items.append(("Path in session", ref.path))
    if ref.sheet not in (None, ""):
        items.append(("Sheet", str(ref.sheet)))
    if ref.sha256 and prov.sha256:
        if ref.sha256 == prov.sha256:
            items.append(("Session check", "the file's SHA-256 matches the one recorded in the session"))
        else:
            items.append(("Session check", "the file's SHA-256 DIFFERS from the one recorded in the session: "
                                           "the file has changed since the session was saved"))
    blocks: list = [Fields(tuple(items), mono=("SHA-256", "Path in session"))]
    if inputs.description:
        blocks.append(Paragraph(inputs.description, "small"))
    blocks.append(Subheading("Gaps and what was done on loading"))
    notes = tuple(prov.notes) or ("Nothing to note: every row was used as read.",)
    blocks.append(Bullets(notes))
    return tuple(blocks)


# ------------------------------------------------------------ 2 preparation
def _preparation_section(inputs: MemoInputs, chosen: Candidate, ev: Evaluation | None) -> tuple:
    spec = chosen.spec
    lost = spec.lost_observations
    n_model = ev.fit.nobs if ev is not None and ev.fit.ok else max(len(inputs.series) - lost, 0)
    items = (
        ("Transform", transform_text(spec)),
        ("Ordinary differencing d", str(spec.d)),
        ("Seasonal differencing D", str(spec.D)),
        ("Seasonal period s", str(spec.s) if spec.s else "none"),
        ("Series modelled", differenced_variable(spec)),
        ("Values lost to differencing", f"{lost} (d + s·D)"),
        ("Values the likelihood uses (n)", str(n_model)),
    )
    blocks: list = [Fields(items, math=("Series modelled",))]
    path = inputs.lineage.path_to(chosen.id)
    reasons = []
    for candidate in path:
        if candidate.parent_id is None or "prepare:" in candidate.step:
            note = candidate.note.strip() or "no note given"
            reasons.append(f"{candidate.id} ({candidate.step}): {note}")
    blocks.append(Subheading("Why: the analyst's notes on the preparation"))
    blocks.append(Bullets(tuple(reasons) or ("No note was given for the preparation.",)))
    return tuple(blocks)


# ------------------------------------------------------------ 3 the model
def parameter_table(fit: Fit, title: str = "", date_of=None) -> Table:
    """Estimate, standard error, z and p of every parameter (z and p left out for σ²)."""
    rows = []
    for p in fit.params:
        is_var = p.name == "sigma2"
        weak = p.weak and not is_var
        value, se = (fmt_sig(p.value), fmt_sig(p.se, 4)) if is_var else (fmt_estimate(p.value), fmt_estimate(p.se))
        rows.append(Row(
            (p.name, parameter_meaning(p.name, fit.spec, date_of), value, se,
             DASH if is_var else fmt_fixed(p.stat, 2), DASH if is_var else fmt_p(p.p)),
            cell_marks=("", "", "", "", "weak" if weak else "", ""),
        ))
    return Table(
        columns=(Column("Parameter", weight=1.1), Column("Term", weight=2.3), Column("Estimate", "right"),
                 Column("s.e.", "right"), Column("z", "right", 0.7), Column("p", "right", 0.9)),
        rows=tuple(rows),
        title=title,
        note="z = estimate / s.e., with a two-sided p from the normal distribution; |z| < 2 is marked as weak.",
    )


def criteria_items(fit: Fit) -> tuple[tuple[str, str], ...]:
    return (
        ("σ²", fmt_sig(fit.sigma2)),
        ("log-likelihood", fmt_fixed(fit.loglik, 2)),
        ("k (parameters)", str(fit.n_params)),
        ("AIC", fmt_fixed(fit.aic, 2)),
        ("AICc", fmt_fixed(fit.aicc, 2)),
        ("BIC", fmt_fixed(fit.bic, 2)),
        ("HQIC", fmt_fixed(fit.hqic, 2)),
        ("n", str(fit.nobs)),
    )


def date_teller(series: Series | None):
    """``date_of(position)`` for ``series``: its date label, or ``None`` when undated."""
    if series is None or series.times is None:
        return None
    labels = series.time_labels()
    return lambda position: labels[position] if 0 <= position < len(labels) else None


def intervention_table(fit: Fit, lineage, date_of=None) -> Table:
    """Every intervention of ``fit``: what, when, its estimated effect with s.e., z and p, and why.

    The effect is on the modelled (transformed) scale; after a log transform
    an effect ω multiplies the series by e^ω, written out as a percentage.
    """
    spec = fit.spec
    reasons = {}
    for c in (lineage.candidates if lineage is not None else ()):
        parent = lineage.get(c.parent_id).spec if c.parent_id is not None else None
        for item in c.spec.interventions:
            if parent is not None and item not in parent.interventions and item not in reasons:
                reasons[item] = c.note.strip() or f"added in step {c.id} ({c.step})"
    rows = []
    log_scale = spec.transform.kind == "log" or (spec.transform.kind == "boxcox" and spec.transform.lam == 0.0)
    for item in spec.interventions:
        p = fit.param(item.name)
        when = (date_of(item.position) if date_of is not None else None) or f"obs. {item.position + 1}"
        effect = fmt_estimate(p.value)
        if log_scale:
            effect += f" (×{math.exp(p.value):.3f}, {100 * (math.exp(p.value) - 1):+.1f} %)".replace("-", MINUS)
        rows.append(Row(
            ("pulse" if item.kind == "pulse" else "level shift", when, effect, fmt_estimate(p.se),
             fmt_fixed(p.stat, 2), fmt_p(p.p), reasons.get(item, "—")),
            cell_marks=("", "", "", "", "weak" if p.weak else "", "", ""),
        ))
    return Table(
        columns=(Column("Event", weight=0.9), Column("When", weight=1.1), Column("Effect", "right", 1.5),
                 Column("s.e.", "right", 0.8), Column("z", "right", 0.6), Column("p", "right", 0.8),
                 Column("Why", weight=2.4)),
        rows=tuple(rows),
        title="Interventions",
        note="A pulse is a one-off effect at one observation; a level shift lasts from its observation on. "
             "Effects are on the scale of the modelled series; |z| < 2 is marked as weak. The model is a "
             "regression on these events with ARIMA errors.",
    )


def _model_section(chosen: Candidate, ev: Evaluation | None, inputs: MemoInputs | None = None) -> tuple:
    spec = chosen.spec
    date_of = date_teller(inputs.series if inputs is not None else None)
    blocks: list = [Paragraph(f"Candidate {chosen.id}: {spec.label}", "lead")]
    extras = []
    if spec.has_constant:
        extras.append(f"with a {spec.constant}")
    if spec.transform.kind != "none":
        extras.append(f"for {'log y' if spec.transform.kind == 'log' else 'the Box-Cox transformed series'}")
    if extras:
        blocks.append(Paragraph("The model is " + spec.label + ", " + ", ".join(extras) + "."))
    if ev is None:
        blocks.append(Paragraph("This candidate has not been fitted; no estimates can be reported.", "warning"))
        return tuple(blocks)
    fit = ev.fit
    if not fit.ok:
        blocks.append(Paragraph(f"The fit of this candidate failed: {fit.failure}", "warning"))
        return tuple(blocks)
    if not fit.convergence.converged:
        blocks.append(Paragraph(
            f"The optimiser did not report convergence ({fit.convergence.message}); treat the estimates "
            "with care.", "warning"))
    params = fit.param_dict
    blocks.append(Subheading("Fitted equation"))
    blocks.append(Equation(fitted_equation(spec, params), equation_notes(spec, params, date_of=date_of)))
    blocks.append(parameter_table(fit, "Estimates", date_of))
    if spec.interventions:
        blocks.append(intervention_table(fit, inputs.lineage if inputs is not None else None, date_of))
    items = criteria_items(fit)
    conv = fit.convergence
    rows = [Row((label, value)) for label, value in items]
    rows.append(Row(("convergence", f"{'converged' if conv.converged else 'NOT converged'} "
                                    f"({conv.optimizer}, start {conv.start}, {conv.iterations} iterations)"),
                    cell_marks=("", "" if conv.converged else "bad")))
    blocks.append(Table(
        columns=(Column("Quantity", weight=1.0), Column("Value", weight=2.6)),
        rows=tuple(rows),
        title="Fit summary",
        note="k counts the AR and MA coefficients, the constant, any intervention effects and σ²; n is the "
             "number of values of the "
             "differenced series in the likelihood.",
    ))
    messages = list(fit.root_warnings.messages()) + list(fit.warnings)
    if len(conv.attempts) > 1:
        messages.append(f"The optimiser needed {len(conv.attempts)} attempts: " + "; ".join(conv.attempts))
    if messages:
        blocks.append(Subheading("Warnings"))
        blocks.append(Bullets(tuple(messages), "warning"))
    return tuple(blocks)


# ------------------------------------------------------------ 4 residuals
def outlier_excess_p(count: int, n_checked: int, threshold: float) -> float:
    """P(X >= count) for X ~ Binomial(n_checked, 2(1 - Φ(threshold))): chance of so many outliers.

    References
    ----------
    The count of independent N(0, 1) values beyond ±threshold is binomial
    (common practice); scipy.stats.binom gives the tail.
    """
    if n_checked <= 0:
        return math.nan
    return float(stats.binom.sf(count - 1, n_checked, 2.0 * stats.norm.sf(threshold)))


def residual_test_table(diag: Diagnostics) -> Table:
    """Every residual check with its statistic, df, p and a plain result."""
    rows = []

    def result(passes: bool, good: str, bad: str) -> tuple[str, str]:
        return (good, "good") if passes else (bad, "bad")

    main = diag.main_ljung_box
    for r in diag.ljung_box:
        text, mark = result(r.p >= ALPHA, "no autocorrelation left", "autocorrelation left")
        name = f"Ljung-Box Q({r.lag})" + (" *" if main is not None and r.lag == main.lag else "")
        rows.append(Row((name, fmt_fixed(r.stat, 2), str(r.df), fmt_p(r.p), text), cell_marks=("",) * 4 + (mark,)))
    for r in diag.mcleod_li:
        text, mark = result(r.p >= ALPHA, "no change in variance", "variance changes")
        rows.append(Row((f"McLeod-Li Q({r.lag}), squared", fmt_fixed(r.stat, 2), str(r.df), fmt_p(r.p), text),
                        cell_marks=("",) * 4 + (mark,)))
    ar = diag.arch
    text, mark = result(ar.p >= ALPHA, "no ARCH effect", "ARCH effect")
    rows.append(Row((f"ARCH-LM ({ar.nlags} lags)", fmt_fixed(ar.lm, 2), str(ar.df), fmt_p(ar.p), text),
                    cell_marks=("",) * 4 + (mark,)))
    sc = diag.sign_change
    text, mark = result(sc.p_exact >= ALPHA, sc.verdict, sc.verdict)
    rows.append(Row(("Sign changes *",
                     f"{sc.changes} of {sc.possible} (95 % range {sc.interval95[0]}–{sc.interval95[1]})",
                     DASH, fmt_p(sc.p_exact), text), cell_marks=("",) * 4 + (mark,)))
    rn = diag.runs
    text, mark = result(rn.p >= ALPHA, "random about the median", "not random about the median")
    rows.append(Row(("Runs about the median", f"{rn.runs} runs (expected {rn.expected:.1f}), z = "
                     f"{fmt_fixed(rn.z, 2)}", DASH, fmt_p(rn.p), text), cell_marks=("",) * 4 + (mark,)))
    cp = diag.cumulative_periodogram
    text, mark = result(not cp.reject[0.05], "inside the 5 % band", "outside the 5 % band")
    rows.append(Row(("Cumulative periodogram *", f"max. deviation {cp.max_deviation:.3f} (5 % band ±{cp.band[0.05]:.3f})",
                     DASH, DASH, text), cell_marks=("",) * 4 + (mark,)))
    nm = diag.normality
    text, mark = result(nm.jb_p >= ALPHA, "consistent with normal", "not normal")
    rows.append(Row(("Jarque-Bera", fmt_fixed(nm.jb_stat, 2), "2", fmt_p(nm.jb_p), text),
                    cell_marks=("",) * 4 + (mark,)))
    text, mark = result(nm.test_p >= ALPHA, "consistent with normal", "not normal")
    stat = fmt_fixed(nm.test_stat, 4) if nm.test == "Shapiro-Wilk" else fmt_fixed(nm.test_stat, 2)
    rows.append(Row((nm.test, stat, DASH, fmt_p(nm.test_p), text), cell_marks=("",) * 4 + (mark,)))
    rows.append(Row(("Skewness, excess kurtosis",
                     f"{fmt_fixed(nm.skewness, 3)}, {fmt_fixed(nm.excess_kurtosis, 3)}", DASH, DASH, "")))
    ol = diag.outliers
    p_out = outlier_excess_p(ol.count, ol.n_checked, ol.threshold)
    text, mark = result(not (p_out < ALPHA), "as many as chance gives", "more than chance gives")
    rows.append(Row((f"Outliers |z| > {ol.threshold:g}", f"{ol.count} (about {ol.expected:.1f} expected)", DASH,
                     fmt_p(p_out), text), cell_marks=("",) * 4 + (mark,)))
    verdict = diag.white_noise_verdict
    rows.append(Row(("White-noise verdict", ", ".join(verdict.failed) or "no check failed", DASH, DASH, verdict.label),
                    cell_marks=("",) * 4 + (verdict_mark(verdict.label),)))
    return Table(
        columns=(Column("Check", weight=1.7), Column("Statistic", weight=2.3), Column("df", "right", 0.4),
                 Column("p", "right", 0.75), Column("Result at 5 %", weight=1.6)),
        rows=tuple(rows),
        title=f"Residual checks on {diag.n_used} standardized residuals",
        note="* the three checks the white-noise verdict combines (the marked Ljung-Box lag, the exact "
             "sign-change test and the periodogram's 5 % band). Ljung-Box df = lag − number of AR and MA "
             "coefficients; McLeod-Li uses the squared residuals with df = lag.",
    )


def figure_captions(ev: Evaluation) -> dict[str, Figure]:
    """The six figures of the residual-evidence section, with captions from the core results."""
    fit = ev.fit
    diag = ev.diagnostics
    figs: dict[str, Figure] = {}
    if diag is not None:
        ol = diag.outliers
        figs["trace"] = Figure("trace", "Standardized residuals over time",
                               f"The ±2σ lines hold about 95 % of white noise; {ol.count} residual"
                               f"{'s' if ol.count != 1 else ''} beyond ±{ol.threshold:g}σ (about "
                               f"{ol.expected:.1f} expected by chance) are marked.", 0.30)
        cg = diag.correlogram
        acf_out = int(np.count_nonzero(np.abs(cg.acf) > cg.band))
        pacf_out = int(np.count_nonzero(np.abs(cg.pacf) > cg.band))
        season = f"; dotted lines at multiples of s = {diag.season}" if diag.season >= 2 else ""
        figs["correlation"] = Figure("correlation", "Residual ACF (top) and PACF (bottom)",
                                     f"Lags 1 to {cg.nlags} with the ±2/√n band (±{cg.band:.3f}); outside it: "
                                     f"ACF {acf_out}, PACF {pacf_out} of {cg.nlags} lags (about "
                                     f"{0.05 * cg.nlags:.1f} expected by chance){season}.", 0.42)
        nm = diag.normality
        figs["histogram"] = Figure("histogram", "Histogram with the N(0, 1) density",
                                   f"Skewness {fmt_fixed(nm.skewness, 2)}, excess kurtosis "
                                   f"{fmt_fixed(nm.excess_kurtosis, 2)}.", 0.70)
        figs["quantile"] = Figure("quantile", "Normal quantile plot",
                                  "Sorted standardized residuals against normal quantiles, the line y = x and "
                                  "a pointwise 95 % envelope.", 0.70)
        cp = diag.cumulative_periodogram
        figs["periodogram"] = Figure("periodogram", "Cumulative periodogram",
                                     f"Largest deviation {cp.max_deviation:.3f} against a 5 % band of "
                                     f"±{cp.band[0.05]:.3f} (Kolmogorov-Smirnov): {cp.verdict}.", 0.70)
    near = sum(1 for r in fit.roots if r.near_unit)
    figs["roots"] = Figure("roots", "Roots of the AR (×) and MA (○) polynomials",
                           f"In the B plane: stationary and invertible when outside the unit circle; "
                           f"{near} root{'s' if near != 1 else ''} near it.", 0.70)
    return figs


def _residual_section(ev: Evaluation | None, series: Series) -> tuple:
    if ev is None or not ev.fit.ok:
        return (Paragraph("No residuals: the chosen candidate has no fit (see section 3).", "warning"),)
    fit = ev.fit
    diag = ev.diagnostics
    blocks: list = []
    figs = figure_captions(ev)
    if diag is None:
        blocks.append(Paragraph(f"The residual checks could not run: {ev.diagnostics_error}", "warning"))
        blocks.append(FigureRow((figs["roots"],)))
        return tuple(blocks)
    verdict = diag.white_noise_verdict
    failed = f"; failed: {', '.join(verdict.failed)}" if verdict.failed else ""
    blocks.append(Paragraph(
        f"The checks use the {diag.n_used} standardized one-step prediction errors of the exact fit "
        f"(each error divided by its standard deviation: independent N(0, 1) under the model)"
        f"{', after a burn-in of ' + str(fit.burn_in) if fit.burn_in else ''}. "
        f"White-noise verdict: {verdict.label}{failed}."))
    blocks.append(FigureRow((figs["trace"],)))
    blocks.append(FigureRow((figs["correlation"],)))
    blocks.append(FigureRow((figs["histogram"], figs["quantile"])))
    blocks.append(FigureRow((figs["periodogram"], figs["roots"])))
    blocks.append(residual_test_table(diag))
    ol = diag.outliers
    if ol.count:
        positions = fit.diagnostic_positions()
        labels = series.time_labels()
        shown = []
        for index, z in list(zip(ol.positions, ol.values))[:12]:
            pos = int(positions[int(index)])
            when = labels[pos] if 0 <= pos < len(labels) else str(pos + 1)
            shown.append(f"{when} (z = {fmt_fixed(z, 2)})")
        more = f", and {ol.count - 12} more" if ol.count > 12 else ""
        blocks.append(Paragraph("Outliers: " + ", ".join(shown) + more + ".", "small"))
    return tuple(blocks)


# ------------------------------------------------------------ 5 lineage
def lineage_table(lineage: Lineage, evaluations: Mapping[str, Evaluation], chosen_id: str,
                  runner_up_id: str | None = None) -> Table:
    """The audit trail: every candidate, its step, its test against its parent, criteria, verdict, note."""
    rows = []
    for candidate in lineage.candidates:
        ev = evaluations.get(candidate.id)
        parent = lineage.get(candidate.parent_id) if candidate.parent_id else None
        parent_ev = evaluations.get(parent.id) if parent is not None else None
        state, mark = ("NOT FITTED", "failed") if ev is None else fit_state(ev.fit)
        roles = []
        if candidate.id == chosen_id:
            roles.append("CHOSEN")
            mark = mark or "chosen"
        if candidate.id == runner_up_id:
            roles.append("RUNNER-UP")
            mark = mark or "runner-up"
        head = " · ".join([candidate.id] + roles)
        who = [head, candidate.spec.description.replace("×", " × ")]
        if state:
            who.append(state)
        if parent is None:
            step = candidate.step or "starting model"
        else:
            step = f"from {parent.id}: {candidate.step}"
        if candidate.origin in ("hint", "screen"):
            step += f" ({candidate.origin})"
        if ev is None:
            test_text, test_mark = "not fitted", "doubt"
            crit = DASH
            resid, resid_mark = DASH, ""
        elif not ev.fit.ok:
            test_text, test_mark = f"FIT FAILED\n{ev.fit.failure}", "bad"
            crit = DASH
            resid, resid_mark = DASH, ""
        else:
            fit = ev.fit
            test = None
            if parent is not None and parent_ev is not None:
                test = nested_test(parent_ev.fit, fit)
            test_text, test_mark = step_test_text(test, parent.spec if parent is not None else None, candidate.spec)
            crit = (f"AIC {fmt_fixed(fit.aic, 2)}\nAICc {fmt_fixed(fit.aicc, 2)}\nBIC {fmt_fixed(fit.bic, 2)}\n"
                    f"k = {fit.n_params}\nn = {fit.nobs}")
            if ev.diagnostics is not None:
                verdict = ev.diagnostics.white_noise_verdict
                resid, resid_mark = verdict.label, verdict_mark(verdict.label)
                lb = ev.diagnostics.main_ljung_box
                if lb is not None:
                    resid += f"\nQ({lb.lag}) p {_p_rel(lb.p)}"
            else:
                resid, resid_mark = "checks did not run", "doubt"
            if not fit.convergence.converged:
                test_text = f"did not converge ({fit.convergence.message})\n" + test_text
                test_mark = "bad"
        note = candidate.note.strip() or DASH
        rows.append(Row((("\n".join(who)), step, test_text, crit, resid, note), mark=mark,
                        cell_marks=("", "", test_mark, "", resid_mark, "")))
    return Table(
        columns=(Column("Candidate", weight=1.5), Column("Step", weight=1.1), Column("Test against parent", weight=1.8),
                 Column("Criteria", weight=1.2), Column("Residuals", weight=0.95), Column("Step note", weight=1.7)),
        rows=tuple(rows),
        title="Every candidate tried, in the order tried",
        note="Tests: nested F-test and likelihood ratio (LR) of the candidate against its parent, when both model "
             "the same prepared series and one contains the other. Criteria are comparable only between "
             "candidates with the same preparation.",
    )


def _lineage_section(inputs: MemoInputs, chosen: Candidate, runner: Candidate | None) -> tuple:
    lineage = inputs.lineage
    n = len(lineage.candidates)
    failed = [c.id for c in lineage.candidates
              if inputs.evaluations.get(c.id) is None or not inputs.evaluations[c.id].fit.ok]
    unconverged = [c.id for c in lineage.candidates
                   if inputs.evaluations.get(c.id) is not None and inputs.evaluations[c.id].fit.ok
                   and not inputs.evaluations[c.id].fit.convergence.converged]
    text = (f"{n} candidate{'s were' if n != 1 else ' was'} tried. Each was made from its parent by one step (a term "
            "added or dropped, the constant changed, or a new preparation started as a new branch).")
    if failed:
        text += f" Failed fits: {', '.join(failed)}."
    if unconverged:
        text += f" Fits that did not converge: {', '.join(unconverged)}."
    blocks: list = [Paragraph(text)]
    path = lineage.path_to(chosen.id)
    blocks.append(Paragraph("Path to the chosen model: " + " → ".join(
        c.id + (f" ({c.step})" if c.parent_id else "") for c in path) + ".", "small"))
    blocks.append(lineage_table(lineage, inputs.evaluations, chosen.id, None if runner is None else runner.id))
    return tuple(blocks)


# ------------------------------------------------------------ 6 runner-up
def _runner_up_section(inputs: MemoInputs, chosen: Candidate, runner: Candidate | None) -> tuple:
    if runner is None:
        return (Paragraph("No runner-up was named for this memo."),)
    a = inputs.evaluations.get(chosen.id)
    b = inputs.evaluations.get(runner.id)
    blocks: list = [Paragraph(f"Chosen {chosen.id}: {chosen.spec.description}; runner-up {runner.id}: "
                              f"{runner.spec.description}.")]

    def side(candidate: Candidate, ev: Evaluation | None) -> tuple:
        if ev is None:
            return (Paragraph("not fitted", "warning"),)
        if not ev.fit.ok:
            return (Paragraph(f"FIT FAILED: {ev.fit.failure}", "warning"),)
        table = parameter_table(ev.fit)
        compact = Table(
            columns=(Column("Parameter", weight=1.3), Column("Estimate", "right"), Column("s.e.", "right"),
                     Column("p", "right", 0.9)),
            rows=tuple(Row((r.cells[0], r.cells[2], r.cells[3], r.cells[5]), cell_marks=("", "", "", ""))
                       for r in table.rows),
        )
        out = [Equation(fitted_equation(ev.fit.spec, ev.fit.param_dict)), compact]
        if not ev.fit.convergence.converged:
            out.append(Paragraph("did not converge", "warning"))
        return tuple(out)

    blocks.append(SideBySide(f"Chosen: {chosen.id}, {chosen.spec.label}", side(chosen, a),
                             f"Runner-up: {runner.id}, {runner.spec.label}", side(runner, b)))
    if a is not None and b is not None and a.fit.ok and b.fit.ok:
        comparable = not comparability(chosen.spec, runner.spec)
        rows = []
        for (label, va), (_, vb) in zip(criteria_items(a.fit), criteria_items(b.fit)):
            key = label
            diff = DASH
            raw = {"σ²": "sigma2", "log-likelihood": "loglik", "AIC": "aic", "AICc": "aicc", "BIC": "bic",
                   "HQIC": "hqic", "k (parameters)": "n_params", "n": "nobs"}[key]
            xa, xb = float(getattr(a.fit, raw)), float(getattr(b.fit, raw))
            if comparable or raw in ("n_params", "nobs"):
                diff = fmt_sig(xb - xa) if raw == "sigma2" else (
                    _minus(str(int(xb - xa))) if raw in ("n_params", "nobs") else fmt_fixed(xb - xa, 2))
            rows.append(Row((label, va, vb, diff)))
        va = a.diagnostics.white_noise_verdict.label if a.diagnostics is not None else DASH
        vb = b.diagnostics.white_noise_verdict.label if b.diagnostics is not None else DASH
        rows.append(Row(("residual verdict", va, vb, DASH), cell_marks=("", verdict_mark(va), verdict_mark(vb), "")))
        blocks.append(Table(
            columns=(Column("Quantity", weight=1.2), Column(f"Chosen {chosen.id}", "right"),
                     Column(f"Runner-up {runner.id}", "right"), Column("Runner-up − chosen", "right")),
            rows=tuple(rows),
            title="Criteria",
            note=("Lower AIC, AICc and BIC are better." if comparable else
                  "The two candidates model different preparations of the data, so their likelihoods and "
                  "criteria are not comparable and no differences are given."),
        ))
        test = nested_test(a.fit, b.fit)
        if test.applies and not test.negative_lr:
            lines, significant = test_lines(test)
            verdict = {True: "the extra terms of the larger model improve the fit significantly",
                       False: "the extra terms of the larger model do not improve the fit significantly",
                       None: "the two tests disagree: the evidence is borderline"}[significant]
            blocks.append(Paragraph(f"Nested test of {test.smaller} within {test.larger}: " + "; ".join(lines)
                                    + f": {verdict}."))
        elif test.applies:
            blocks.append(Paragraph(test.verdict(), "warning"))
        else:
            reason = test.reason
            if comparability(chosen.spec, runner.spec):
                reason = ("No F or likelihood-ratio test applies: the candidates model different preparations ("
                          + "; ".join(preparation_differences(chosen.spec, runner.spec))
                          + "). Compare them on out-of-sample accuracy instead.")
            blocks.append(Paragraph(reason))
    return tuple(blocks)


# ------------------------------------------------------------ 7 conventions
def _conventions_section(inputs: MemoInputs, ev: Evaluation | None) -> tuple:
    fit = ev.fit if ev is not None else None
    cov = fit.cov_type if fit is not None and fit.ok else "not available (no fit)"
    burn = fit.burn_in if fit is not None and fit.ok else 0
    items = (
        "Signs: AR polynomials are 1 − φ₁B − φ₂B² − …, MA polynomials 1 + θ₁B + θ₂B² + … (the convention of "
        "statsmodels and Brockwell & Davis). An estimate θ = −0.79 therefore means the factor (1 − 0.79 B); "
        "Box & Jenkins print MA coefficients with the opposite sign.",
        "The constant (const) is the mean μ of the transformed, differenced series: the process mean when "
        "d + D = 0, the drift per period when d + D = 1. In the fitted equation it appears as c = μ·φ(1)·Φ(1).",
        "k counts the AR and MA coefficients (seasonal ones included), the constant if present, and σ². "
        "AIC = −2ℓ + 2k, AICc = AIC + 2k(k + 1)/(n − k − 1), BIC = −2ℓ + k·log n, HQIC = −2ℓ + 2k·log log n, "
        "with n the observed values of the differenced series.",
        "Ljung-Box: df = lag − (number of AR and MA coefficients, seasonal ones included); the constant is not "
        "counted and lags with no df left are not reported. Lags 6, 12, 24 and 2s for a seasonal series.",
        "Nested tests: LR = 2(ℓ₂ − ℓ₁) against χ²(k₂ − k₁); F = ((S₁ − S₂)/(k₂ − k₁)) / (S₂/(n − k₂)) with "
        "S = n·σ̂² and k counting coefficients without σ².",
        f"Standard errors: {cov}.",
        "Residuals: standardized one-step prediction errors of the exact Gaussian likelihood, "
        + (f"with the first {burn} left out as burn-in." if burn else
           "with none left out: differencing is explicit and the ARMA state starts from its stationary "
           "distribution, so the exact fit has no burn-in residuals."),
        "White-noise verdict: white when the main Ljung-Box test, the exact sign-change test and the cumulative "
        "periodogram's 5 % band all pass; doubtful when exactly one fails, not strongly; not white otherwise.",
    )
    versions = inputs.versions or software_versions()
    table = Table(columns=(Column("Software", weight=1.2), Column("Version", weight=2.0)),
                  rows=tuple(Row((name, value)) for name, value in versions),
                  title="Software that made these numbers")
    return (Bullets(items), table)


# ------------------------------------------------------------ 8 reproduction
def _reproduction_section(inputs: MemoInputs, chosen: Candidate) -> tuple:
    command = reproduce_command(chosen.spec, inputs.data, inputs.series)
    blocks: list = [
        Paragraph("This command refits the chosen model from the data file and prints its estimates and "
                  "residual checks (add --json for a machine-readable result):"),
        Paragraph(command, "code"),
    ]
    sha = inputs.series.provenance.sha256
    if sha and not (inputs.data and inputs.data.sample):
        blocks.append(Paragraph(f"The file must be the same one: its SHA-256 is {sha}.", "small"))
    if inputs.session_name:
        runner = f" --runner-up {inputs.runner_up_id}" if inputs.runner_up_id else ""
        blocks.append(Paragraph("This memo was rendered from the session file with:", "small"))
        blocks.append(Paragraph(
            f"lagwright memo {shlex.quote(inputs.session_name)} --candidate {chosen.id}{runner} -o memo.pdf",
            "code"))
    blocks.append(Paragraph("Library versions other than those in section 7 may change the last digits of "
                            "the estimates.", "small"))
    return tuple(blocks)


# ------------------------------------------------------------ 9 cautions
def _cautions_section(inputs: MemoInputs) -> tuple:
    blocks = [
        Paragraph("Statistical adequacy is not fitness for a decision. The checks in this memo say whether the "
                  "residuals of the chosen model look like white noise and whether each term earned its place; "
                  "they do not say that forecasts from it are accurate enough, or safe, for any particular use.",
                  "caution"),
        Paragraph("Forecasts used for supply, safety or financial commitments need the organisation's own review, "
                  "and compliance with local rules and licensed practice, before anyone relies on them.", "caution"),
    ]
    check = inputs.forecast
    scored = check is not None and check.holdout is not None and check.holdout.ok
    items = [
        "The model describes the period of the data. Changes in behaviour, measurement or definitions, "
        "and conditions not seen in the data, are not covered.",
        ("The holdout check covers one stretch of held-out data; accuracy elsewhere, and at other horizons, "
         "may differ." if scored else
         "Out-of-sample accuracy is not part of this memo; check it on held-out data before use."),
        "Significance levels are nominal: many candidates were compared, so some test results are "
        "expected to pass or fail by chance.",
    ]
    if check is not None and check.future is not None:
        items.append("Prediction intervals leave out the uncertainty of the estimates and of the model choice, "
                     "so they are too narrow, more so far ahead; do not read them as guarantees.")
    blocks.append(Bullets(tuple(items)))
    if inputs.data is not None and inputs.data.sample:
        blocks.append(Paragraph("The data in this memo are invented sample data bundled with Lagwright.", "small"))
    return tuple(blocks)


# ================================================================ plain text
def memo_text(memo: Memo) -> str:
    """The memo as plain text (for checks without a display, and for a quick look in a terminal)."""
    lines: list[str] = []
    tb = memo.title_block
    lines += [tb.title, tb.subtitle, ""]
    lines += [f"{label}: {value}" for label, value in tb.fields.items]
    lines += [""] + list(tb.summary)

    def block_text(block, indent: str = "") -> None:
        if isinstance(block, Paragraph):
            lines.append(indent + block.text)
        elif isinstance(block, Bullets):
            lines.extend(f"{indent}- {item}" for item in block.items)
        elif isinstance(block, Fields):
            lines.extend(f"{indent}{label}: {value}" for label, value in block.items)
        elif isinstance(block, Subheading):
            lines.append(indent + block.text)
        elif isinstance(block, Equation):
            lines.append(indent + "    " + block.text)
            lines.extend(indent + "    " + note for note in block.notes)
        elif isinstance(block, Table):
            if block.title:
                lines.append(indent + block.title)
            lines.append(indent + " | ".join(c.title for c in block.columns))
            for row in block.rows:
                lines.append(indent + " | ".join(cell.replace("\n", " / ") for cell in row.cells)
                             + (f"   [{row.mark}]" if row.mark else ""))
            if block.note:
                lines.append(indent + block.note)
        elif isinstance(block, FigureRow):
            for fig in block.figures:
                lines.append(f"{indent}[figure: {fig.title}] {fig.caption}")
        elif isinstance(block, SideBySide):
            lines.append(indent + block.left_title)
            for b in block.left:
                block_text(b, indent + "  ")
            lines.append(indent + block.right_title)
            for b in block.right:
                block_text(b, indent + "  ")

    for section in memo.sections:
        lines += ["", f"{section.number}  {section.title}", ""]
        for block in section.blocks:
            block_text(block)
    return "\n".join(lines) + "\n"
