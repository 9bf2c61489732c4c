"""The import dialog and the window's Import / Paste actions, driven offscreen (one widget per test).

Expected series are compared with pandas.read_csv of the same file
(pandas documentation) where numbers are checked.
"""

from __future__ import annotations

import threading

import numpy as np
import pandas as pd
import pytest

from lagwright.core.import_options import ImportOptions

TIMEOUT = 60_000


def _two_columns(tmp_path, n: int = 96 * 6, name: str = "plant.csv"):
    rng = np.random.default_rng(4)
    stamps = pd.date_range("2022-03-01", periods=n, freq="15min")
    frame = pd.DataFrame({"time": stamps.strftime("%Y-%m-%d %H:%M"),
                          "load_kw": np.round(300 + 40 * np.sin(np.arange(n) / 15) + rng.normal(0, 5, n), 2),
                          "temp_c": np.round(12 + rng.normal(0, 1, n), 1)})
    path = tmp_path / name
    frame.to_csv(path, index=False)
    return path


@pytest.fixture
def make_dialog(qtbot):
    from lagwright.app.import_dialog import ImportDialog

    def make(source, **kwargs):
        dialog = ImportDialog(source, **kwargs)
        qtbot.addWidget(dialog)
        dialog.show()
        assert dialog.wait_idle(TIMEOUT)
        return dialog

    return make


def test_preview_columns_and_switching_the_value_column(make_dialog, tmp_path):
    path = _two_columns(tmp_path)
    dialog = make_dialog(path)
    report = dialog.report
    assert "several columns of numbers" in report.problem and not dialog.ok_button.isEnabled()
    assert dialog.preview_table.rowCount() == 50 and dialog.preview_table.columnCount() == 3
    assert [dialog.value_box.itemData(i) for i in range(dialog.value_box.count())] == [None, "load_kw", "temp_c"]
    dialog.value_box.setCurrentIndex(dialog.value_box.findData("load_kw"))
    assert dialog.wait_idle(TIMEOUT)
    assert dialog.ok_button.isEnabled() and dialog.series.name == "load_kw"
    # Reference: pandas.read_csv of the same file.
    np.testing.assert_array_equal(dialog.series.values, pd.read_csv(path)["load_kw"].to_numpy())
    assert dialog.preview_table.horizontalHeaderItem(1).text() == "load_kw [value]"
    assert dialog.curve is not None and dialog.plot_message.isVisible() is False
    dialog.value_box.setCurrentIndex(dialog.value_box.findData("temp_c"))
    assert dialog.wait_idle(TIMEOUT)
    assert dialog.series.name == "temp_c" and dialog.report.table is report.table  # the file was not read again


def test_aggregation_choice_changes_the_series(make_dialog, tmp_path):
    dialog = make_dialog(_two_columns(tmp_path), options=ImportOptions(value="load_kw"))
    assert len(dialog.series) == 96 * 6 and dialog.series.frequency == "15min"
    dialog.aggregate_box.setCurrentIndex(dialog.aggregate_box.findData("h"))
    assert dialog.wait_idle(TIMEOUT)
    assert len(dialog.series) == 24 * 6 and dialog.series.frequency == "h"
    assert dialog.options.aggregate == "h:mean"
    assert "aggregated" in dialog.report_view.toPlainText()


def test_problem_is_shown_and_load_disabled(make_dialog, tmp_path):
    path = tmp_path / "noise.csv"
    path.write_bytes(np.random.default_rng(1).integers(0, 256, 3000, dtype=np.uint8).tobytes())
    dialog = make_dialog(path)
    assert not dialog.ok_button.isEnabled() and dialog.series is None
    assert "binary data" in dialog.report_view.toPlainText()
    assert dialog.plot_message.isVisible()
    dialog.accept()  # pressing Enter does nothing without a series
    assert dialog.result() == 0


def test_typed_frequency_and_bad_typed_frequency(make_dialog, tmp_path):
    dialog = make_dialog(_two_columns(tmp_path), options=ImportOptions(value="load_kw"))
    dialog.frequency_box.setCurrentText("fortnightly")
    assert dialog.wait_idle(TIMEOUT)
    assert "not a frequency" in dialog.report_view.toPlainText() and not dialog.ok_button.isEnabled()
    dialog.frequency_box.setCurrentText("900")
    assert dialog.wait_idle(TIMEOUT)
    assert dialog.ok_button.isEnabled() and dialog.series.frequency == "15min"


def test_work_runs_off_the_gui_thread_with_progress(make_dialog, tmp_path, monkeypatch):
    import lagwright.app.import_dialog as module

    threads = []
    real = module.inspect_table

    def spy(*args, **kwargs):
        threads.append(threading.current_thread())
        return real(*args, **kwargs)

    monkeypatch.setattr(module, "inspect_table", spy)
    path = _two_columns(tmp_path, n=450_000, name="big.csv")
    from lagwright.app.import_dialog import ImportDialog

    dialog = ImportDialog(path, options=ImportOptions(value="load_kw"))
    seen = []
    dialog.signals.progressed.connect(lambda _req, fraction: seen.append(fraction))
    dialog.show()
    assert dialog.wait_idle(TIMEOUT)
    assert threads and all(t is not threading.main_thread() for t in threads)
    assert any(0.0 < f < 1.0 for f in seen) and dialog.progress.value() == 1000
    assert len(dialog.series) == 450_000
    dialog.close()
    dialog.deleteLater()


def test_closing_while_reading_is_safe(qtbot, tmp_path):
    from lagwright.app.import_dialog import ImportDialog

    dialog = ImportDialog(_two_columns(tmp_path, n=300_000, name="big.csv"))
    qtbot.addWidget(dialog)
    dialog.show()
    dialog.reject()  # while the worker is reading: it stops at its next progress report
    assert dialog.pool.activeThreadCount() == 0


# ----------------------------------------------------------------------------- the window
@pytest.fixture
def window(qtbot, tmp_path):
    from lagwright.app.window import MainWindow

    w = MainWindow(use_processes=False, recovery_path=tmp_path / "recovery.lagwright.json", ask_restore=False)
    qtbot.addWidget(w)
    yield w
    qtbot.waitUntil(lambda: w.service.pending() == 0, timeout=TIMEOUT)
    w.service.shutdown(wait=True)


def test_window_import_loads_the_dialog_series(window, tmp_path):
    assert window.open_sample("water_demand")
    path = _two_columns(tmp_path)
    dialog = window.import_actions.import_file(path)
    assert dialog.wait_idle(TIMEOUT)
    dialog.value_box.setCurrentIndex(dialog.value_box.findData("load_kw"))
    dialog.aggregate_box.setCurrentIndex(dialog.aggregate_box.findData("h"))
    assert dialog.wait_idle(TIMEOUT)
    shown = dialog.series
    dialog.accept()
    assert window.series is shown and window.series.frequency == "h"
    assert window.data_ref.path == str(path.resolve()) and len(window.lineage) == 1
    assert any(n == "Choice: readings aggregated to hourly means." for n in window.series.provenance.notes)
    assert window.import_action.text() == "&Import data…" and window.paste_action.shortcut().toString()


def test_window_keeps_its_lineage_when_the_import_is_refused(window, tmp_path):
    assert window.open_sample("water_demand")
    before_series, before_lineage = window.series, window.lineage
    bad = tmp_path / "words.csv"
    bad.write_text("date,remark\n" + "".join(f"2021-01-{d:02d},ok\n" for d in range(1, 25)))
    dialog = window.import_actions.import_file(bad)
    assert dialog.wait_idle(TIMEOUT)
    assert "not a number" in dialog.report_view.toPlainText()
    dialog.reject()
    assert window.series is before_series and window.lineage is before_lineage
    assert not window.open_data(bad, options=ImportOptions(gaps="leave"))  # the direct path says so too
    assert window.series is before_series and "not a number" in window.banner_label.text()


def test_window_paste_from_clipboard(window, qtbot, tmp_path):
    from PySide6.QtWidgets import QApplication

    text = "Tag\tMenge\n" + "".join(f"{d:02d}.01.2023\t{1000 + 37 * d},5\n" for d in range(1, 29))
    QApplication.clipboard().setText(text)
    dialog = window.import_actions.paste_clipboard()
    if dialog is None:  # some offscreen platforms have no clipboard: hand the text over directly
        dialog = window.import_actions.paste_clipboard(text)
    assert dialog.wait_idle(TIMEOUT)
    assert dialog.report.kind == "pasted"
    dialog.accept()
    assert len(window.series) == 28 and window.series.values[0] == 1037.5
    saved = tmp_path / "pasted"
    assert [p.suffix for p in saved.iterdir()] == [".txt"] and window.data_ref.path.startswith(str(saved))


def test_empty_clipboard_is_said(window):
    assert window.import_actions.paste_clipboard("   ") is None
    assert "clipboard holds no text" in window.banner_label.text()
