"""Exports from the window: the memo, the lineage and residual tables, the panes as PNG and SVG.

References: the residuals written are compared with the core result
computed directly (``evaluate``) and with statsmodels' one-step predictions
at the same estimates; the PDF's page size is read with ``pdfinfo`` and its
text with ``pdftotext`` (poppler-utils).
"""

from __future__ import annotations

import csv
import io
import shutil
import subprocess
import threading

import numpy as np
import pytest

from lagwright.core.evaluate import evaluate
from lagwright.core.export_tables import LINEAGE_COLUMNS, RESIDUAL_COLUMNS
from lagwright.core.spec import ModelSpec

TIMEOUT = 60_000
NOTE = 'PACF cuts off after lag 1 — "AR" <1> & ünïcödé'


@pytest.fixture
def grown_window(qtbot, tmp_path):
    """A window on the water sample grown to ARIMA(1,0,0)×(0,1,1)_7 in three steps, every exact fit done."""
    from lagwright.app.window import MainWindow

    window = MainWindow(use_processes=False, recovery_path=tmp_path / "recovery.lagwright.json", ask_restore=False)
    qtbot.addWidget(window)
    window.export_actions.open_after = False

    def settle():
        spec = window.current_spec
        qtbot.waitUntil(lambda: window._has_exact(spec) or spec in window.failures, timeout=TIMEOUT)
        qtbot.waitUntil(lambda: window.drawn is not None and window.drawn[0] == window.current_spec, timeout=TIMEOUT)

    assert window.open_sample("water_demand")
    settle()
    window.start_branch(ModelSpec(D=1, s=7))
    settle()
    window.add_term("sma", 1)
    settle()
    window.add_term("ar", 1)
    window.note_edit.setPlainText(NOTE)
    settle()
    yield window
    qtbot.waitUntil(lambda: window.service.pending() == 0, timeout=TIMEOUT)
    window.service.shutdown(wait=True)
    leftover = [t.name for t in threading.enumerate() if t.name.startswith("lagwright-")]
    assert not leftover, f"worker threads left running: {leftover}"


def _read_csv(path) -> tuple[list[str], list[list[str]]]:
    text = path.read_text(encoding="utf-8-sig")
    body = "".join(line + "\n" for line in text.splitlines() if not line.startswith("#"))
    rows = list(csv.reader(io.StringIO(body)))
    return rows[0], rows[1:]


def test_memo_from_the_window(grown_window, tmp_path):
    w = grown_window
    ids = [c.id for c in w.lineage.candidates]
    assert w.current_id == ids[-1]
    path = w.export_actions.write_memo(tmp_path / "memo.pdf", runner_up_id=ids[-2], page="letter",
                                       analyst="T. Tester")
    assert path.is_file() and not list(tmp_path.glob(".*.tmp"))
    pdfinfo = shutil.which("pdfinfo")
    pdftotext = shutil.which("pdftotext")
    assert pdfinfo and pdftotext, "poppler-utils are needed by the memo tests"
    info = subprocess.run([pdfinfo, str(path)], capture_output=True, text=True, check=True).stdout
    assert "(letter)" in info
    text = " ".join(subprocess.run([pdftotext, str(path), "-"], capture_output=True, text=True, check=True).stdout.split())
    assert "T. Tester" in text and NOTE in text
    assert f"{ids[-1]} · CHOSEN" in text and f"{ids[-2]} · RUNNER-UP" in text
    fit = w.evaluations[w.current_spec].fit
    assert f"{fit.param('ar.L1').value:.4f}" in text  # the estimate the window holds, as printed


def test_lineage_and_residual_tables(grown_window, tmp_path):
    w = grown_window
    header, rows = _read_csv(w.export_actions.write_lineage_csv(tmp_path / "lineage.csv"))
    assert header == list(LINEAGE_COLUMNS)
    assert [r[0] for r in rows] == [c.id for c in w.lineage.candidates]
    last = dict(zip(header, rows[-1]))
    assert last["note"] == NOTE and last["test_applies"] == "true" and float(last["lr_p"]) < 1e-4

    path = w.export_actions.write_residuals_csv(tmp_path / "residuals.csv")
    assert "fitted_prepared = prepared - residual" in path.read_text(encoding="utf-8-sig")
    header, rows = _read_csv(path)
    assert header == list(RESIDUAL_COLUMNS) and len(rows) == len(w.series)
    column = {name: np.array([float(r[i]) if r[i] else np.nan for r in rows]) for i, name in enumerate(header)
              if name not in ("time", "used_in_checks")}
    # Reference 1: the core evaluated directly.
    direct = evaluate(w.series, w.current_spec).fit
    np.testing.assert_allclose(column["residual"][7:], direct.residuals, atol=1e-9)
    # Reference 2: statsmodels' one-step predictions of (1 − B⁷) y_t at the same estimates.
    from statsmodels.tsa.arima.model import ARIMA

    y = w.series.values
    wdiff = y[7:] - y[:-7]
    p = direct.param_dict
    ref = ARIMA(wdiff, order=(1, 0, 0), seasonal_order=(0, 0, 1, 7), trend="n").filter(
        [p["ar.L1"], p["ma.S.L7"], p["sigma2"]])
    np.testing.assert_allclose(column["fitted_prepared"][7:], ref.fittedvalues, atol=1e-6)
    assert np.all(np.isnan(column["prepared"][:7]))


def test_panes_as_png_and_svg(grown_window, tmp_path):
    from PySide6.QtCore import QByteArray
    from PySide6.QtGui import QImage
    from PySide6.QtSvg import QSvgRenderer

    w = grown_window
    files = w.export_actions.export_pane_images(tmp_path)
    assert len(files) == 12
    assert sorted(f.suffix for f in files) == [".png"] * 6 + [".svg"] * 6
    for f in files:
        if f.suffix == ".png":
            image = QImage(str(f))
            assert not image.isNull() and image.width() >= 1000
        else:
            assert QSvgRenderer(QByteArray(f.read_bytes())).isValid()
    assert not list(tmp_path.glob(".*.tmp"))


def test_menu_slot_with_dialogs_answered(grown_window, tmp_path, monkeypatch):
    from PySide6.QtCore import QSettings
    from PySide6.QtWidgets import QDialog

    from lagwright.app import export_actions

    w = grown_window
    file_menu = w.menuBar().actions()[0].menu()
    assert "Export &memo…" in [a.text() for a in file_menu.actions()]
    settings_file = str(tmp_path / "settings.ini")
    monkeypatch.setattr(export_actions, "QSettings",
                        lambda *a: QSettings(settings_file, QSettings.Format.IniFormat))
    monkeypatch.setattr(export_actions.MemoDialog, "exec", lambda self: QDialog.DialogCode.Accepted)
    target = tmp_path / "from-menu.pdf"
    monkeypatch.setattr(export_actions.QFileDialog, "getSaveFileName", lambda *a, **k: (str(target), ""))
    w.export_memo_action.trigger()
    assert target.is_file()
    assert w.export_actions.last_written == [target]
    # A failure is reported in the window, not raised.
    monkeypatch.setattr(export_actions.QFileDialog, "getSaveFileName",
                        lambda *a, **k: (str(tmp_path / "missing-folder" / "x.pdf"), ""))
    w.export_memo_action.trigger()
    assert "does not exist" in w.banner_label.text()
