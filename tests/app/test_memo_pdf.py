"""`lagwright memo`: the PDF rendered headless, read back with poppler-utils.

The numbers printed in the PDF (read with ``pdftotext``) are compared with
the core result computed directly (``evaluate``), to the printed precision.
Page sizes are read with ``pdfinfo`` (A4 = 595.276 × 841.89 pt, US Letter =
612 × 792 pt: ISO 216 and ANSI/ASME Y14.1, common practice) and the fonts
with ``pdffonts``.
"""

from __future__ import annotations

import io
import re
import shutil
import subprocess
from contextlib import redirect_stderr, redirect_stdout
from datetime import date
from importlib.metadata import version

import numpy as np
import pytest

from lagwright.app.cli import main
from lagwright.core import samples
from lagwright.core.evaluate import evaluate
from lagwright.core.lineage import Lineage
from lagwright.core.session import DataReference, Session, write_session
from lagwright.core.spec import ModelSpec

MINUS = "\u2212"
ODD_NOTE = 'Weekly "peak" <b>&amp; ünïcödé Ωμέγα 水'
SECTIONS = ("Data and where it came from", "Preparation", "The chosen model", "Residual evidence",
            "How the choice was made", "Runner-up, side by side", "Conventions and software",
            "Reproducing the fit", "Cautions")


def _tool(name: str) -> str:
    path = shutil.which(name)
    assert path, f"{name} (poppler-utils) is needed by the memo tests: apt-get install poppler-utils"
    return path


def pdftext(path, layout: bool = True) -> str:
    args = [_tool("pdftotext")] + (["-layout"] if layout else []) + [str(path), "-"]
    return subprocess.run(args, check=True, capture_output=True, text=True).stdout


def pdfinfo(path) -> dict[str, str]:
    out = subprocess.run([_tool("pdfinfo"), str(path)], check=True, capture_output=True, text=True).stdout
    return {k.strip(): v.strip() for k, v in (line.split(":", 1) for line in out.splitlines() if ":" in line)}


def run_cli(*argv) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main([str(a) for a in argv])
    return code, out.getvalue(), err.getvalue()


def number(text: str) -> float:
    return float(text.replace(MINUS, "-"))


def has_cjk_font() -> bool:
    fc = shutil.which("fc-list")
    if not fc:
        return False
    return bool(subprocess.run([fc, ":lang=zh"], capture_output=True, text=True).stdout.strip())


def water_lineage() -> Lineage:
    lineage, c1 = Lineage().add_root(ModelSpec(s=7, constant="mean"), step="starting model: mean only",
                                     note="Start from the mean.")
    lineage, c2 = lineage.add_root(ModelSpec(D=1, s=7), step="new branch: none, d=0, D=1, s=7", note=ODD_NOTE,
                                   origin="user")
    lineage, c3 = lineage.add_child(c2.id, ModelSpec(D=1, s=7, sma=(1,)), note="ACF spike at lag 7.")
    lineage, _ = lineage.add_child(c3.id, ModelSpec(D=1, s=7, sma=(1,), ar=(1,)), note="PACF cuts off after lag 1.")
    return lineage


@pytest.fixture(scope="module")
def session_file(tmp_path_factory):
    folder = tmp_path_factory.mktemp("session")
    series = samples.load_sample("water_demand")
    ref = DataReference(path=str(samples.sample_path("water_demand")), sha256=series.provenance.sha256,
                        value_column="demand_ML", time_column="date", sample="water_demand")
    return write_session(Session(ref, water_lineage(), "c4", analyst="S. Session"), folder / "water.lagwright.json")


@pytest.fixture(scope="module")
def memo_a4(session_file):
    out = session_file.parent / "memo-a4.pdf"
    code, stdout, stderr = run_cli("memo", session_file, "--candidate", "c4", "--runner-up", "c3", "-o", out,
                                   "--analyst", "R. Reviewer")
    assert code == 0, stderr
    assert stderr == ""
    return out, pdftext(out), pdftext(out, layout=False)


@pytest.fixture(scope="module")
def memo_letter(tmp_path_factory):
    out = tmp_path_factory.mktemp("file") / "memo-letter.pdf"
    code, _, stderr = run_cli("memo", "sample:water_demand", "--D", "1", "--period", "7", "--ar", "1", "--sma", "1",
                              "--page", "letter", "-o", out)
    assert code == 0, stderr
    return out, pdftext(out)


@pytest.fixture(scope="module")
def water_fit():
    return evaluate(samples.load_sample("water_demand"), ModelSpec(D=1, s=7, sma=(1,), ar=(1,)))


# ------------------------------------------------------------------ content
def test_every_section_is_present_in_order(memo_a4):
    _, text, _ = memo_a4
    positions = []
    for n, title in enumerate(SECTIONS, start=1):
        match = re.search(rf"^\s*{n}\s+{re.escape(title)}\s*$", text, flags=re.M)
        assert match, f"section {n} {title!r} is missing"
        positions.append(match.start())
    assert positions == sorted(positions)
    head = text[: positions[0]]
    assert "Model-choice memo" in head and "R. Reviewer" in head
    assert date.today().isoformat() in head and f"Lagwright {version('lagwright')}" in head


def test_printed_estimates_equal_the_core_fit(memo_a4, water_fit):
    _, text, _ = memo_a4
    fit = water_fit.fit
    for p in fit.params:
        if p.name == "sigma2":
            continue
        row = re.search(rf"^\s*{re.escape(p.name)}\s+.*?\s+(\S+)\s+(\S+)\s+(\S+)\s+(< 0\.0001|\S+)\s*$", text, re.M)
        assert row, p.name
        estimate, se, z, pval = row.groups()
        assert number(estimate) == pytest.approx(p.value, abs=5e-5)  # 4 decimals printed
        assert number(se) == pytest.approx(p.se, abs=5e-5)
        assert number(z) == pytest.approx(p.stat, abs=5e-3)
        assert pval == "< 0.0001" and p.p < 1e-4
    sigma2 = re.search(r"^\s*σ²\s+(\S+)\s*$", text, re.M).group(1)
    assert number(sigma2) == pytest.approx(fit.sigma2, abs=5e-7)  # 5 significant digits printed
    for name, value in (("AIC", fit.aic), ("AICc", fit.aicc), ("BIC", fit.bic), ("log-likelihood", fit.loglik)):
        printed = re.search(rf"^\s*{re.escape(name)}\s+(\S+)\s*$", text, re.M).group(1)
        assert number(printed) == pytest.approx(value, abs=5e-3), name
    phi = fit.param("ar.L1").value
    theta = fit.param("ma.S.L7").value
    assert theta < 0  # so the printed MA factor has a minus sign
    assert f"(1 − {phi:.3f} B)(1 − B⁷) yt = (1 − {abs(theta):.3f} B⁷) at" in text


def test_ljung_box_rows_equal_the_core_checks(memo_a4, water_fit):
    _, text, _ = memo_a4
    rows = water_fit.diagnostics.ljung_box
    assert rows
    for lb in rows:
        match = re.search(rf"Ljung-Box Q\({lb.lag}\)\s*\*?\s+(\S+)\s+(\d+)\s+(\S+)", text)
        assert match, lb.lag
        stat, df, pval = match.groups()
        assert number(stat) == pytest.approx(lb.stat, abs=5e-3)
        assert int(df) == lb.df
        assert number(pval) == pytest.approx(lb.p, abs=5e-5)


def test_step_notes_with_odd_characters_appear_verbatim(memo_a4):
    _, _, raw = memo_a4
    flat = " ".join(raw.split())
    visible = ODD_NOTE if has_cjk_font() else ODD_NOTE.replace(" 水", "")
    assert visible in flat
    assert "PACF cuts off after lag 1." in flat


def test_audit_trail_runner_up_and_reproduction(memo_a4):
    _, text, raw = memo_a4
    for cid in ("c1", "c2", "c3 · RUNNER-UP", "c4 · CHOSEN"):
        assert cid in text
    assert "Nested test of ARIMA(0,0,0)×(0,1,1)_7 within ARIMA(1,0,0)×(0,1,1)_7" in " ".join(raw.split())
    assert "lagwright fit sample:water_demand --ar 1 --sma 1 --period 7 --D 1 --constant none" in text
    assert "Statistical adequacy is not fitness for a decision" in text
    assert "licensed practice" in " ".join(raw.split())


def test_a4_with_page_numbers_and_embedded_fonts(memo_a4):
    path, text, _ = memo_a4
    info = pdfinfo(path)
    assert "(A4)" in info["Page size"]
    pages = int(info["Pages"])
    assert pages >= 4
    for i in range(1, pages + 1):
        assert f"page {i} of {pages}" in text
    fonts = subprocess.run([_tool("pdffonts"), str(path)], check=True, capture_output=True, text=True).stdout
    rows = fonts.splitlines()[2:]
    assert rows and all(" yes " in row for row in rows), fonts  # every font embedded


def test_file_form_on_letter_paper(memo_letter):
    path, text = memo_letter
    assert "(letter)" in pdfinfo(path)["Page size"]
    assert "No runner-up was named" in text
    assert "lagwright fit sample:water_demand --ar 1 --sma 1 --period 7 --D 1 --constant none" in text


# ------------------------------------------------------------------ bad input
def _leftovers(folder):
    return sorted(p.name for p in folder.iterdir() if p.suffix in (".pdf", ".tmp") or p.name.startswith("."))


@pytest.mark.parametrize("case", ["missing", "corrupt", "unknown-candidate", "unknown-runner-up",
                                  "folder-is-a-file", "output-is-a-folder", "same-runner-up",
                                  "model-option-with-session"])
def test_bad_input_gives_one_line_and_no_file(case, session_file, tmp_path):
    out = tmp_path / "memo.pdf"
    session = session_file
    extra = []
    if case == "missing":
        session = tmp_path / "nowhere.lagwright.json"
    elif case == "corrupt":
        session = tmp_path / "broken.lagwright.json"
        session.write_text('{"schema": "lagwright-session", "version": 1, "candidates": [', encoding="utf-8")
    elif case == "unknown-candidate":
        extra = ["--candidate", "c9"]
    elif case == "unknown-runner-up":
        extra = ["--candidate", "c4", "--runner-up", "c77"]
    elif case == "same-runner-up":
        extra = ["--candidate", "c4", "--runner-up", "c4"]
    elif case == "model-option-with-session":
        extra = ["--candidate", "c4", "--ar", "1"]
    elif case == "folder-is-a-file":
        (tmp_path / "plain.txt").write_text("not a folder")
        out = tmp_path / "plain.txt" / "memo.pdf"
    elif case == "output-is-a-folder":
        out = tmp_path
    code, stdout, stderr = run_cli("memo", session, *extra, "-o", out)
    assert code != 0
    lines = stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith("lagwright: ") and "Traceback" not in stderr
    assert _leftovers(tmp_path) == []


def test_a_failure_while_drawing_leaves_no_partial_file(monkeypatch, tmp_path):
    from lagwright.app import memo_pdf

    def boom(self, painter, x, y, width):
        raise RuntimeError("simulated failure while drawing")

    monkeypatch.setattr(memo_pdf.TableFlow, "draw", boom)
    code, _, stderr = run_cli("memo", "sample:stock_drawdown", "--d", "1", "--ar", "1", "--constant", "drift",
                              "-o", tmp_path / "memo.pdf")
    assert code == 3 and len(stderr.splitlines()) == 1
    assert list(tmp_path.iterdir()) == []


# ------------------------------------------------- failed and unconverged fits
def test_failed_and_unconverged_candidates_render_as_such(monkeypatch, tmp_path):
    import lagwright.core.evaluate as core_evaluate

    rng = np.random.default_rng(20240611)
    n = 40
    e = rng.normal(size=n)
    y = np.empty(n)
    y[0] = e[0]
    for t in range(1, n):
        y[t] = 0.6 * y[t - 1] + e[t]
    data = tmp_path / "short.csv"
    data.write_text("t,level\n" + "".join(f"{i + 1},{10 + v:.4f}\n" for i, v in enumerate(y)), encoding="utf-8")
    lineage, c1 = Lineage().add_root(ModelSpec(constant="mean"), note="start")
    stubborn = ModelSpec(ar=(1, 2), ma=(1,), constant="mean")
    lineage, c2 = lineage.add_child(c1.id, stubborn, note="two AR and one MA term")
    lineage, c3 = lineage.add_root(ModelSpec(D=1, s=30), step="new branch: none, d=0, D=1, s=30",
                                   note="a season of 30 leaves too little")
    write_session(Session(DataReference(path=data.name, value_column="level"), lineage, c2.id),
                  tmp_path / "short.lagwright.json")
    real = core_evaluate.fit_exact

    def no_iterations(series, spec, **kwargs):
        if spec == stubborn:
            kwargs["maxiter"] = 0  # the optimiser may not move: it cannot converge
        return real(series, spec, **kwargs)

    monkeypatch.setattr(core_evaluate, "fit_exact", no_iterations)
    out = tmp_path / "memo.pdf"
    code, _, stderr = run_cli("memo", tmp_path / "short.lagwright.json", "--candidate", "c2", "-o", out)
    assert code == 0, stderr
    text = pdftext(out)
    flat = " ".join(pdftext(out, layout=False).split())
    assert "DID NOT CONVERGE" in text
    assert "FIT FAILED" in text and "would leave 10 values" in flat
    assert "The optimiser did not report convergence" in flat


def test_scaled_strokes_scale_the_pens_and_leave_the_item_groups():
    from lagwright.app.memo_figures import scaled_strokes

    svg = (b'<svg><g stroke="black" stroke-width="1" id="InfiniteLine_2">'
           b'<g stroke="#e0a526" stroke-dasharray="4.8,2.4" stroke-width="1.2">'
           b'<polyline vector-effect="non-scaling-stroke" points="0,1 5,1"/></g>'
           b'<g stroke="none" stroke-dasharray="none"></g></g></svg>')
    out = scaled_strokes(svg, 10.0)
    assert b'stroke-width="1" id="InfiniteLine_2"' in out  # the item group as it was
    assert b'stroke-dasharray="48,24" stroke-width="12"' in out
    assert b'stroke-dasharray="none"' in out


def test_memo_figures_keep_the_panes_line_weights_and_dashes(qapp, water_fit):
    # At the PDF's device scale (here 5 device pixels per SVG unit) the ±2σ band line must be drawn as wide
    # as the pane's 1.2-unit pen scaled (about 6 pixels), and dashed; before, cosmetic pens came out one
    # device pixel wide and the dashes too fine to see.
    from PySide6.QtCore import QRectF
    from PySide6.QtGui import QColor, QImage, QPainter

    from lagwright.app import memo_figures
    from lagwright.app.memo_pdf import draw_svg

    pane = memo_figures.make_pane("trace", water_fit, samples.load_sample("water_demand"), 800, 400)
    try:
        memo_figures.settle(pane)
        svg = memo_figures.svg_bytes(pane)
    finally:
        memo_figures.dispose(pane)
    image = QImage(4000, 2000, QImage.Format.Format_RGB32)
    image.fill(QColor("white"))
    painter = QPainter(image)
    draw_svg(painter, svg, QRectF(0, 0, 4000, 2000))
    painter.end()
    pixels = np.frombuffer(image.constBits(), dtype=np.uint8).reshape(2000, 4000, 4)[:, :, :3].astype(int)
    band = (np.abs(pixels[:, :, 2] - 0xE0) < 40) & (np.abs(pixels[:, :, 1] - 0xA5) < 40) & (pixels[:, :, 0] < 0x70)
    rows = np.flatnonzero(band[:, 1500:3500].sum(axis=1) > 300)  # rows crossed by a band line
    assert rows.size, "no band line found"
    thickest = max(len(run) for run in np.split(rows, np.flatnonzero(np.diff(rows) > 1) + 1))
    assert thickest >= 4
    line = band[rows[len(rows) // 2], 1500:3500]
    assert np.count_nonzero(np.diff(line.astype(int))) >= 40  # on and off along the line: dashed
