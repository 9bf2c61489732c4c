"""The import dialog: look at a table, choose how to read and repair it, then load it.

The dialog shows the first rows of the table, the columns detected or
chosen, the import choices, the report of
:func:`lagwright.core.inspection.inspect_table` and a small plot of the
series the choices give. Every change of a choice asks for a new report in a
worker thread (the window never waits on a large file); the newest request
supersedes the older ones, whose results are dropped. A progress bar follows
the reading.

On OK, :attr:`ImportDialog.series` is the series shown and
:attr:`ImportDialog.options` the choices that made it; the window loads them
through ``MainWindow.open_data``. Any problem is shown in the dialog, whose
OK button stays disabled until the table loads.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QObject, QRunnable, Qt, QThreadPool, QTimer, Signal
from PySide6.QtGui import QColor, QFont
from PySide6.QtWidgets import (
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QDoubleSpinBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QPlainTextEdit,
    QProgressBar,
    QSplitter,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from lagwright.core.errors import LagwrightError
from lagwright.core.import_options import ImportOptions
from lagwright.core.import_report import ImportReport
from lagwright.core.inspection import inspect_table
from lagwright.core.loader import PastedText

from . import theme
from .panes.base import add_fast_curve, make_pen, observation_x

__all__ = ["ImportDialog", "save_pasted_text"]

#: Milliseconds to wait after a change before asking for a new report (typing, scrolling a combo).
DEBOUNCE_MS = 120
_AUTO = "(detected)"


class _Superseded(Exception):
    """Raised from the progress callback to stop work whose result nobody will read."""


class _JobSignals(QObject):
    progressed = Signal(int, float)
    finished = Signal(int, object)
    failed = Signal(int, str)


class _InspectJob(QRunnable):
    """One inspect_table call, run on the dialog's thread pool; results go back by signal with the request id."""

    def __init__(self, request: int, source, options: ImportOptions, table, transform, signals: _JobSignals,
                 latest):
        super().__init__()
        self.setAutoDelete(True)
        self.request, self.source, self.options, self.table = request, source, options, table
        self.transform, self.signals, self.latest = transform, signals, latest

    def _progress(self, fraction: float) -> None:
        if self.latest() != self.request:
            raise _Superseded()
        self.signals.progressed.emit(self.request, float(fraction))

    def run(self) -> None:  # noqa: D401 - Qt API
        if self.latest() != self.request:
            return
        try:
            report = inspect_table(self.source, self.options, transform=self.transform, progress=self._progress,
                                   table=self.table)
        except _Superseded:
            return
        except LagwrightError as exc:
            self.signals.failed.emit(self.request, str(exc))
            return
        except Exception as exc:  # noqa: BLE001 - the window must survive anything a file can do
            self.signals.failed.emit(
                self.request, f"Reading the data failed unexpectedly ({type(exc).__name__}: {exc}). This is a bug; "
                              "please report it with the file if you can.")
            return
        self.signals.finished.emit(self.request, report)


def save_pasted_text(text: str, folder: Path) -> Path:
    """Keep pasted text as a file (named by its SHA-256) so a session can read it again; returns the path."""
    import hashlib

    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    digest = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()[:16]
    path = folder / f"pasted-{digest}.txt"
    if not path.exists():
        tmp = path.with_suffix(".tmp")
        tmp.write_text(text, encoding="utf-8", errors="surrogatepass")
        os.replace(tmp, path)
    return path


def _combo(items: list[tuple[str, object]]) -> QComboBox:
    box = QComboBox()
    for text, data in items:
        box.addItem(text, data)
    return box


def _select(box: QComboBox, data) -> None:
    index = box.findData(data)
    if index >= 0:
        box.setCurrentIndex(index)


class ImportDialog(QDialog):
    """Preview a table, choose import options, read the report, load.

    Parameters
    ----------
    source : str, Path or PastedText
        The file, or text pasted from the clipboard.
    options : ImportOptions, optional
        Choices to start from (default: everything detected).
    transform : {"log", "boxcox"}, optional
        The transform in use, so that zero or negative values are flagged.
    parent : QWidget, optional

    Signals
    -------
    report_shown(object)
        A new :class:`ImportReport` is on screen.
    """

    report_shown = Signal(object)

    def __init__(self, source, options: ImportOptions | None = None, transform: str | None = None,
                 parent: QWidget | None = None):
        super().__init__(parent)
        self.source = source
        self.transform = transform
        self.report: ImportReport | None = None
        self._table = None
        self._request = 0
        self._shown_request = 0
        self._filling = False
        self._columns: tuple[str, ...] = ()
        self._numeric: tuple[str, ...] = ()
        self._sheets: tuple[str, ...] = ()
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self.signals = _JobSignals(self)
        self.signals.progressed.connect(self._progressed)
        self.signals.finished.connect(self._finished)
        self.signals.failed.connect(self._failed)
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(DEBOUNCE_MS)
        self._timer.timeout.connect(self._start)

        name = source.name if isinstance(source, PastedText) else Path(os.fspath(source)).name
        self.setWindowTitle(f"Import data — {name}")
        self._build()
        self._set_options(options or ImportOptions())
        self.resize(1180, 760)
        self._start()

    # ------------------------------------------------------------------ layout
    def _build(self) -> None:
        root = QVBoxLayout(self)
        self.source_label = QLabel()
        self.source_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        root.addWidget(self.source_label)

        body = QSplitter(Qt.Orientation.Horizontal)
        root.addWidget(body, 1)

        choices = QWidget()
        column = QVBoxLayout(choices)
        column.setContentsMargins(0, 0, 6, 0)

        reading = QGroupBox("Reading")
        form = QFormLayout(reading)
        self.sheet_box = _combo([("first sheet", None)])
        self.delimiter_box = _combo([(_AUTO, None), ("comma ,", ","), ("semicolon ;", ";"), ("tab", "\t"),
                                     ("bar |", "|"), ("spaces", " ")])
        self.decimal_box = _combo([(_AUTO, None), ("point 1.5", "."), ("comma 1,5", ",")])
        self.thousands_box = _combo([(_AUTO, None), ("none", ""), ("comma 1,234", ","), ("point 1.234", "."),
                                     ("space 1 234", " "), ("apostrophe 1'234", "'")])
        form.addRow("Sheet", self.sheet_box)
        form.addRow("Delimiter", self.delimiter_box)
        form.addRow("Decimal mark", self.decimal_box)
        form.addRow("Thousands", self.thousands_box)
        column.addWidget(reading)

        columns = QGroupBox("Columns")
        form = QFormLayout(columns)
        self.time_box = _combo([(_AUTO, None), ("none: number the rows", "")])
        self.value_box = _combo([(_AUTO, None)])
        self.zone_box = _combo([("local clock if one offset, else UTC", None), ("convert to UTC", "utc"),
                                ("keep local clock time", "local")])
        form.addRow("Time", self.time_box)
        form.addRow("Value", self.value_box)
        form.addRow("UTC offsets", self.zone_box)
        column.addWidget(columns)

        repairs = QGroupBox("Repairs (each is written into the notes)")
        form = QFormLayout(repairs)
        self.duplicates_box = _combo([("refuse", "refuse"), ("merge: mean", "mean"), ("merge: sum", "sum"),
                                      ("merge: last", "last")])
        self.non_numeric_box = _combo([("refuse", "refuse"), ("read as missing", "missing")])
        self.gaps_box = _combo([("keep rows as read", None), ("insert as missing", "leave"),
                                ("interpolate in time", "interpolate"), ("carry last value", "ffill"),
                                ("fill with value", "value")])
        self.fill_spin = QDoubleSpinBox()
        self.fill_spin.setRange(-1e12, 1e12)
        self.fill_spin.setDecimals(4)
        self.fill_spin.setEnabled(False)
        gaps_row = QHBoxLayout()
        gaps_row.addWidget(self.gaps_box, 1)
        gaps_row.addWidget(self.fill_spin)
        self.aggregate_box = _combo([("none", None), ("hourly", "h"), ("daily", "D"), ("weekly (Mon)", "W"),
                                     ("monthly", "MS"), ("quarterly", "QS"), ("yearly", "YS")])
        self.how_box = _combo([("mean", "mean"), ("sum", "sum")])
        aggregate_row = QHBoxLayout()
        aggregate_row.addWidget(self.aggregate_box, 1)
        aggregate_row.addWidget(self.how_box)
        self.frequency_box = _combo([("inferred", None), ("hourly", "h"), ("daily", "D"), ("weekly", "W"),
                                     ("monthly", "M"), ("quarterly", "Q"), ("yearly", "Y")])
        self.frequency_box.setEditable(True)
        self.frequency_box.setToolTip("Choose, or type an alias such as 15min, 6h, or a number of seconds.")
        form.addRow("Repeated stamps", self.duplicates_box)
        form.addRow("Not numbers", self.non_numeric_box)
        form.addRow("Gaps", gaps_row)
        form.addRow("Aggregate to", aggregate_row)
        form.addRow("Frequency", self.frequency_box)
        column.addWidget(repairs)
        report_box = QGroupBox("Report")
        report_layout = QVBoxLayout(report_box)
        report_layout.setContentsMargins(4, 4, 4, 4)
        self.report_view = QPlainTextEdit()
        self.report_view.setReadOnly(True)
        self.report_view.setLineWrapMode(QPlainTextEdit.LineWrapMode.WidgetWidth)
        report_layout.addWidget(self.report_view)
        column.addWidget(report_box, 1)
        body.addWidget(choices)

        right = QSplitter(Qt.Orientation.Vertical)
        self.preview_table = QTableWidget()
        self.preview_table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        self.preview_table.setAlternatingRowColors(True)
        self.preview_table.verticalHeader().setDefaultSectionSize(20)
        right.addWidget(self.preview_table)
        self.plot_widget = pg.PlotWidget()
        dark = theme.is_dark_palette(self.palette())
        colours = theme.pane_colours(dark)
        self.plot_widget.setBackground(colours.background)
        self.plot_widget.setMinimumHeight(150)
        self.plot = self.plot_widget.getPlotItem()
        self.plot.hideButtons()
        self.plot.showGrid(x=True, y=True, alpha=0.15)
        for axis in ("left", "bottom"):
            self.plot.getAxis(axis).setPen(pg.mkPen(colours.foreground))
            self.plot.getAxis(axis).setTextPen(pg.mkPen(colours.foreground))
        self.curve = None
        self.plot_message = pg.TextItem("", color=colours.foreground, anchor=(0.5, 0.5))
        self.plot.addItem(self.plot_message, ignoreBounds=True)
        self.plot_message.setPos(0.5, 0.5)
        right.addWidget(self.plot_widget)
        right.setSizes([330, 330])
        body.addWidget(right)
        body.setStretchFactor(0, 0)
        body.setStretchFactor(1, 1)
        body.setSizes([430, 750])

        bottom = QHBoxLayout()
        self.progress = QProgressBar()
        self.progress.setRange(0, 1000)
        self.progress.setTextVisible(False)
        self.progress.setMaximumWidth(220)
        self.status_label = QLabel()
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        self.ok_button = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        self.ok_button.setText("Load")
        self.ok_button.setEnabled(False)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        bottom.addWidget(self.progress)
        bottom.addWidget(self.status_label, 1)
        bottom.addWidget(self.buttons)
        root.addLayout(bottom)

        for box in (self.sheet_box, self.delimiter_box, self.decimal_box, self.thousands_box, self.time_box,
                    self.value_box, self.zone_box, self.duplicates_box, self.non_numeric_box, self.gaps_box,
                    self.aggregate_box, self.how_box):
            box.currentIndexChanged.connect(self._changed)
        self.frequency_box.currentTextChanged.connect(self._changed)
        self.fill_spin.valueChanged.connect(self._changed)

    # ------------------------------------------------------------------ choices
    def _set_options(self, options: ImportOptions) -> None:
        self._filling = True
        try:
            _select(self.delimiter_box, options.delimiter)
            _select(self.decimal_box, options.decimal)
            _select(self.thousands_box, options.thousands)
            _select(self.zone_box, options.timezone)
            _select(self.duplicates_box, options.duplicates)
            _select(self.non_numeric_box, options.non_numeric)
            _select(self.gaps_box, options.gaps)
            if options.fill_value is not None:
                self.fill_spin.setValue(options.fill_value)
            if options.aggregate_parts:
                alias, how = options.aggregate_parts
                _select(self.aggregate_box, {"W-MON": "W", "QS-JAN": "QS", "YS-JAN": "YS"}.get(alias, alias))
                if self.aggregate_box.currentData() is None:
                    self.aggregate_box.addItem(alias, alias)
                    _select(self.aggregate_box, alias)
                _select(self.how_box, how)
            if options.frequency:
                self.frequency_box.setCurrentText(options.frequency)
            self._pending_columns = (options.sheet, options.time, options.value)
        finally:
            self._filling = False

    @property
    def options(self) -> ImportOptions:
        """The choices on screen (raises InputError if a typed frequency is not usable)."""
        return self._read_options()

    def _read_options(self) -> ImportOptions:
        text = self.frequency_box.currentText().strip()
        listed = self.frequency_box.findText(text)
        frequency = self.frequency_box.itemData(listed) if listed >= 0 else (text or None)
        aggregate = self.aggregate_box.currentData()
        gaps = self.gaps_box.currentData()
        sheet, time, value = self._pending_columns
        if self.sheet_box.count() > 1 or self.sheet_box.currentData() is not None:
            sheet = self.sheet_box.currentData()
        if self._columns:
            time = self.time_box.currentData()
            value = self.value_box.currentData()
        return ImportOptions(
            decimal=self.decimal_box.currentData(),
            thousands=self.thousands_box.currentData(),
            delimiter=self.delimiter_box.currentData(),
            sheet=sheet,
            time=time,
            value=value,
            timezone=self.zone_box.currentData(),
            gaps=gaps,
            fill_value=self.fill_spin.value() if gaps == "value" else None,
            duplicates=self.duplicates_box.currentData(),
            non_numeric=self.non_numeric_box.currentData(),
            aggregate=f"{aggregate}:{self.how_box.currentData()}" if aggregate else None,
            frequency=frequency,
        )

    def _changed(self, *_args) -> None:
        if self._filling:
            return
        self.fill_spin.setEnabled(self.gaps_box.currentData() == "value")
        self.how_box.setEnabled(self.aggregate_box.currentData() is not None)
        self._timer.start()

    # ------------------------------------------------------------------ work
    def _latest(self) -> int:
        return self._request

    def _start(self) -> None:
        """Ask for a report on the current choices (in the worker thread)."""
        try:
            options = self._read_options()
        except LagwrightError as exc:
            self._show_problem(str(exc))
            return
        self._request += 1
        self.ok_button.setEnabled(False)
        self.progress.setValue(0)
        self._status("Reading…")
        job = _InspectJob(self._request, self.source, options, self._table, self.transform, self.signals,
                          self._latest)
        self.pool.start(job)

    def busy(self) -> bool:
        """Whether a report is being prepared."""
        return self._shown_request != self._request or self._timer.isActive()

    def _progressed(self, request: int, fraction: float) -> None:
        if request == self._request:
            self.progress.setValue(int(round(fraction * 1000)))

    def _failed(self, request: int, message: str) -> None:
        if request != self._request:
            return
        self._shown_request = request
        self._show_problem(message)

    def _finished(self, request: int, report: ImportReport) -> None:
        if request != self._request:
            return
        self._shown_request = request
        self.progress.setValue(1000)
        self.report = report
        if report.table is not None:
            self._table = report.table
        self._show(report)
        self.report_shown.emit(report)

    def _show_problem(self, message: str) -> None:
        self.report = None
        self.ok_button.setEnabled(False)
        self._status("Cannot load with these choices.", problem=True)
        self.report_view.setPlainText(message)
        self._draw(None)

    # ------------------------------------------------------------------ display
    def _show(self, report: ImportReport) -> None:
        kind = {"text": "text table", "workbook": "Excel workbook", "parquet": "Parquet file",
                "pasted": "pasted text"}.get(report.kind, report.kind)
        detail = f"{report.source} — {kind}"
        if report.rows_read:
            detail += f", {report.rows_read:,} data rows"
        if report.columns:
            detail += f", {len(report.columns)} columns"
        self.source_label.setText(detail)
        self._fill_columns(report)
        self._fill_preview(report)
        text = "\n".join(report.lines())
        if report.ok and report.notes:
            text += "\n\nWhat the notes of the series will say:\n" + "\n".join(f"• {n}" for n in report.notes)
        self.report_view.setPlainText(text)
        self._draw(report.series)
        self.ok_button.setEnabled(report.ok)
        try:
            if self._read_options() != report.options:
                self._timer.start()  # a column choice was not available in the new table: ask again
        except LagwrightError:
            pass
        if report.ok:
            self._status(f"Ready: {len(report.series):,} observations of '{report.series.name}'.")
        else:
            self._status("Cannot load with these choices: see the report.", problem=True)

    def _fill_columns(self, report: ImportReport) -> None:
        self._filling = True
        try:
            if report.sheets and tuple(report.sheets) != self._sheets:
                self._sheets = tuple(report.sheets)
                self.sheet_box.clear()
                for name in report.sheets:
                    self.sheet_box.addItem(name, name)
                _select(self.sheet_box, report.sheet)
            self.sheet_box.setEnabled(len(report.sheets) > 1)
            is_text = report.kind in ("text", "pasted")
            for box in (self.delimiter_box, self.decimal_box, self.thousands_box):
                box.setEnabled(is_text or box is not self.delimiter_box)
            if report.columns and (tuple(report.columns) != self._columns or tuple(report.numeric_columns)
                                   != self._numeric):
                time_choice = self.time_box.currentData() if self._columns else self._pending_columns[1]
                value_choice = self.value_box.currentData() if self._columns else self._pending_columns[2]
                self._columns = tuple(report.columns)
                self._numeric = tuple(report.numeric_columns)
                self.time_box.clear()
                self.time_box.addItem(_AUTO, None)
                self.time_box.addItem("none: number the rows", "")
                for name in report.columns:
                    self.time_box.addItem(name, name)
                self.value_box.clear()
                self.value_box.addItem(_AUTO, None)
                for name in report.numeric_columns:
                    self.value_box.addItem(name, name)
                _select(self.time_box, time_choice)
                _select(self.value_box, value_choice)
            self._mark_detected(report)
        finally:
            self._filling = False

    def _mark_detected(self, report: ImportReport) -> None:
        """Show the detected column in the "(detected)" entry, so the user sees what was found."""
        time_text = f"{_AUTO}: {report.time_column}" if report.time_column else f"{_AUTO}: none"
        value_text = f"{_AUTO}: {report.value_column}" if report.value_column else f"{_AUTO}: —"
        self.time_box.setItemText(0, time_text)
        self.value_box.setItemText(0, value_text)

    def _fill_preview(self, report: ImportReport) -> None:
        table = self.preview_table
        table.clear()
        table.setColumnCount(len(report.preview_header))
        table.setRowCount(len(report.preview_rows))
        table.setHorizontalHeaderLabels(list(report.preview_header))
        marked = {report.time_column: theme.DATA_SOFT, report.value_column: theme.BAND}
        bold = QFont(table.font())
        bold.setBold(True)
        for c, name in enumerate(report.preview_header):
            header = table.horizontalHeaderItem(c)
            if name in marked and header is not None:
                header.setFont(bold)
                header.setText(f"{name} [{'time' if name == report.time_column else 'value'}]")
        bad = {(p.row - 1, report.value_column) for p in report.non_numeric}
        bad |= {(p.row - 1, report.time_column) for p in report.bad_stamps}
        for r, row in enumerate(report.preview_rows):
            for c, text in enumerate(row):
                item = QTableWidgetItem(text)
                name = report.preview_header[c]
                if (r, name) in bad:
                    item.setBackground(QColor(theme.ATTENTION))
                    item.setForeground(QColor("#ffffff"))
                elif name in marked:
                    colour = QColor(marked[name])
                    colour.setAlphaF(0.18)
                    item.setBackground(colour)
                table.setItem(r, c, item)
        table.resizeColumnsToContents()

    def _status(self, text: str, problem: bool = False) -> None:
        self.status_label.setText(text)
        self.status_label.setStyleSheet(f"color: {theme.ATTENTION}; font-weight: bold;" if problem else "")

    def _draw(self, series) -> None:
        if self.curve is not None:
            self.plot.removeItem(self.curve)
            self.curve = None
        if series is None or len(series) == 0:
            self.plot.setTitle("")
            self.plot.setXRange(0, 1, padding=0)
            self.plot.setYRange(0, 1, padding=0)
            self.plot_message.setPos(0.5, 0.5)
            self.plot_message.setText("No series with these choices: see the report.")
            self.plot_message.show()
            return
        self.plot_message.hide()
        dated = series.times is not None
        current = self.plot.getAxis("bottom")
        if dated != isinstance(current, pg.DateAxisItem):
            axis = pg.DateAxisItem(orientation="bottom", utcOffset=0) if dated else pg.AxisItem(orientation="bottom")
            self.plot.setAxisItems({"bottom": axis})
            colours = theme.pane_colours(theme.is_dark_palette(self.palette()))
            axis.setPen(pg.mkPen(colours.foreground))
            axis.setTextPen(pg.mkPen(colours.foreground))
        x = observation_x(series, np.arange(len(series)))
        self.curve = add_fast_curve(self.plot, x, series.values, make_pen(theme.DATA, 1.0), connect="finite")
        self.plot.setTitle(f"{series.name} — {len(series):,} observations", size="9pt")
        self.plot.enableAutoRange()

    # ------------------------------------------------------------------ results
    @property
    def series(self):
        """The series on screen (None until a report loads)."""
        return self.report.series if self.report is not None and self.report.ok else None

    def accept(self) -> None:  # noqa: D401 - Qt API
        if self.series is None or self.busy():
            return
        super().accept()

    def done(self, result: int) -> None:  # noqa: D401 - Qt API
        self._timer.stop()
        self._request += 1  # any work still running is now superseded and stops at its next progress report
        self.pool.waitForDone()
        super().done(result)

    def wait_idle(self, timeout_ms: int = 60_000) -> bool:
        """Block until the newest report is on screen (for scripts and tests)."""
        from PySide6.QtCore import QCoreApplication, QElapsedTimer

        clock = QElapsedTimer()
        clock.start()
        while self.busy() and clock.elapsed() < timeout_ms:
            QCoreApplication.processEvents()
            self.pool.waitForDone(20)
        QCoreApplication.processEvents()
        return not self.busy()
