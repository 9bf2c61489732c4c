"""The window's export actions: the memo (PDF), the lineage (CSV), residuals (CSV), the panes (PNG and SVG).

Everything is made from core results, never from the widgets on screen:
the memo refits nothing the window already has exactly (and fits what is
missing), the panes are drawn afresh off screen at a fixed size in the
light palette. Each action has a programmatic method (``write_memo``,
``write_lineage_csv``, ``write_residuals_csv``, ``export_pane_images``) that
takes a path and raises :class:`~lagwright.core.errors.LagwrightError`, and
a menu slot that asks for the path, shows progress, reports problems in the
window and opens (or reveals) the result. Opening is skipped when
:attr:`ExportActions.open_after` is False (tests) or on the offscreen and
minimal platforms.

:func:`install_export_actions` adds the actions to the window's File menu.
"""

from __future__ import annotations

import os
import tempfile
from datetime import date
from pathlib import Path

from PySide6.QtCore import QLocale, QObject, QSettings, Qt, QUrl
from PySide6.QtGui import QDesktopServices, QGuiApplication, QKeySequence
from PySide6.QtWidgets import (
    QApplication,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFileDialog,
    QFormLayout,
    QLabel,
    QLineEdit,
    QProgressDialog,
    QVBoxLayout,
)

from lagwright.core import samples
from lagwright.core.errors import LagwrightError
from lagwright.core.export_tables import (
    LINEAGE_COLUMNS,
    RESIDUAL_COLUMNS,
    ExportError,
    lineage_rows,
    publish,
    residual_header,
    residual_rows,
    write_csv,
)
from lagwright.core.memo_content import FIGURE_KEYS, MemoInputs, software_versions
from lagwright.core.memo_inputs import evaluate_lineage

from .memo_figures import DEFAULT_IMAGE_SIZE, FILE_STEMS, IMAGE_SIZE, dispose, make_pane, png_image, svg_bytes
from .memo_pdf import make_memo, qt_versions

#: Open (or reveal) what was exported; tests switch this off.
OPEN_AFTER_EXPORT = True
#: Settings keys.
ANALYST_KEY = "memo/analyst"
PAGE_KEY = "memo/page"


class ExportCancelled(LagwrightError):
    """The user cancelled an export; nothing was written."""


def default_page() -> str:
    """US Letter where the locale measures in US units, A4 elsewhere."""
    return "letter" if QLocale().measurementSystem() == QLocale.MeasurementSystem.ImperialUSSystem else "a4"


class MemoDialog(QDialog):
    """Choose the candidate, an optional runner-up, the page size and the analyst's name."""

    def __init__(self, parent, lineage, current_id: str, analyst: str = "", page: str = "a4"):
        super().__init__(parent)
        self.setWindowTitle("Export memo")
        layout = QVBoxLayout(self)
        intro = QLabel("The memo describes the chosen candidate in full, with every candidate of the lineage "
                       "as the audit trail. A runner-up is shown side by side.")
        intro.setWordWrap(True)
        layout.addWidget(intro)
        form = QFormLayout()
        self.candidate_box = QComboBox()
        self.runner_box = QComboBox()
        self.runner_box.addItem("none", None)
        for c in lineage.candidates:
            text = f"{c.id}  {c.spec.description}"
            self.candidate_box.addItem(text, c.id)
            self.runner_box.addItem(text, c.id)
        index = self.candidate_box.findData(current_id)
        self.candidate_box.setCurrentIndex(max(index, 0))
        self.page_box = QComboBox()
        self.page_box.addItem("A4", "a4")
        self.page_box.addItem("US Letter", "letter")
        self.page_box.setCurrentIndex(max(self.page_box.findData(page), 0))
        self.analyst_edit = QLineEdit(analyst)
        self.analyst_edit.setPlaceholderText("your name, for the title block")
        form.addRow("Chosen candidate", self.candidate_box)
        form.addRow("Runner-up", self.runner_box)
        form.addRow("Page size", self.page_box)
        form.addRow("Analyst", self.analyst_edit)
        layout.addLayout(form)
        self.problem = QLabel("")
        self.problem.setWordWrap(True)
        layout.addWidget(self.problem)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        buttons.button(QDialogButtonBox.StandardButton.Ok).setText("Choose file…")
        buttons.accepted.connect(self._accept)
        buttons.rejected.connect(self.reject)
        layout.addWidget(buttons)

    def values(self) -> tuple[str, str | None, str, str]:
        """(candidate id, runner-up id or None, page, analyst)."""
        return (self.candidate_box.currentData(), self.runner_box.currentData(), self.page_box.currentData(),
                self.analyst_edit.text().strip())

    def _accept(self) -> None:
        candidate, runner, _, _ = self.values()
        if runner is not None and runner == candidate:
            self.problem.setText("The runner-up must be another candidate than the chosen one.")
            return
        self.accept()


class _Progress:
    """A window-modal progress dialog driven by ``(done, total, what)`` calls; Cancel aborts the export."""

    def __init__(self, parent, title: str):
        self.dialog = QProgressDialog(title, "Cancel", 0, 100, parent)
        self.dialog.setWindowTitle(title)
        self.dialog.setWindowModality(Qt.WindowModality.WindowModal)
        self.dialog.setMinimumDuration(400)
        self.dialog.setAutoClose(False)
        self.dialog.setAutoReset(False)
        self.dialog.setValue(0)
        self.phase = (0.0, 1.0)

    def stage(self, start: float, end: float):
        """A callback mapping one stage's progress into [start, end] of the bar."""

        def report(done: int, total: int, what: str) -> None:
            fraction = start + (end - start) * (done / total if total else 1.0)
            self.dialog.setLabelText(what)
            self.dialog.setValue(int(100 * fraction))
            QApplication.processEvents()
            if self.dialog.wasCanceled():
                raise ExportCancelled("The export was cancelled; nothing was written.")

        return report

    def close(self) -> None:
        self.dialog.reset()
        self.dialog.close()
        self.dialog.deleteLater()


class ExportActions(QObject):
    """Export actions bound to one :class:`~lagwright.app.window.MainWindow`."""

    def __init__(self, window):
        super().__init__(window)
        self.window = window
        self.open_after = OPEN_AFTER_EXPORT
        self.last_written: list[Path] = []

    # ============================================================ helpers
    def _need_data(self) -> None:
        if self.window.series is None or self.window.lineage is None:
            raise LagwrightError("There is nothing to export yet: open a data file or a sample first.")

    def _sample(self):
        name = getattr(self.window.data_ref, "sample", "")
        return samples.get_sample(name) if name else None

    def evaluations(self, progress=None) -> dict:
        """Exact evaluations of every candidate by id (those the window has, the rest fitted now)."""
        self._need_data()
        return evaluate_lineage(self.window.series, self.window.lineage, known=self.window.evaluations,
                                failures=getattr(self.window, "failures", {}), progress=progress)

    def _evaluation(self, candidate_id: str | None, progress=None):
        self._need_data()
        cid = candidate_id or self.window.current_id
        lineage = self.window.lineage
        lineage.get(cid)
        wanted = {c.id for c in lineage.path_to(cid)}
        from lagwright.core.lineage import Lineage

        path = Lineage(tuple(c for c in lineage.candidates if c.id in wanted))
        evaluations = evaluate_lineage(self.window.series, path, known=self.window.evaluations,
                                       failures=getattr(self.window, "failures", {}), progress=progress)
        return cid, evaluations[cid]

    def memo_inputs(self, candidate_id: str | None = None, runner_up_id: str | None = None, analyst: str = "",
                    progress=None) -> MemoInputs:
        self._need_data()
        window = self.window
        cid = candidate_id or window.current_id
        window.lineage.get(cid)
        if runner_up_id:
            window.lineage.get(runner_up_id)
        evaluations = self.evaluations(progress)
        sample = self._sample()
        session = getattr(window, "session_path", None)
        return MemoInputs(
            series=window.series, lineage=window.lineage, evaluations=evaluations, chosen_id=cid,
            runner_up_id=runner_up_id or None, analyst=analyst, date=date.today().isoformat(),
            data=window.data_ref, session_name=Path(session).name if session else "",
            units=sample.units if sample else "", description=sample.description if sample else "",
            series_title=sample.title if sample else "", versions=software_versions(qt_versions()),
            # a forecast check made in the window for the chosen candidate goes into its memo
            forecast=getattr(window, "forecast_checks", {}).get(window.lineage.get(cid).spec),
        )

    def reveal(self, path: Path) -> bool:
        """Open ``path`` with the system's viewer (a file) or file manager (a folder), unless switched off."""
        if not self.open_after or QGuiApplication.platformName() in ("offscreen", "minimal"):
            return False
        return QDesktopServices.openUrl(QUrl.fromLocalFile(str(path)))

    # ======================================================= programmatic
    def write_memo(self, path, candidate_id: str | None = None, runner_up_id: str | None = None,
                   page: str = "a4", analyst: str = "", progress: _Progress | None = None) -> Path:
        """Write the memo PDF for ``candidate_id`` (default: the current candidate)."""
        from lagwright.app.memo_pdf import check_writable

        check_writable(path)
        fits = progress.stage(0.0, 0.5) if progress else None
        drawing = progress.stage(0.5, 1.0) if progress else None
        inputs = self.memo_inputs(candidate_id, runner_up_id, analyst, fits)
        written = make_memo(inputs, path, page=page, progress=drawing)
        self.last_written = [written]
        return written

    def write_lineage_csv(self, path) -> Path:
        """Write the lineage table (every candidate, its step, fit, criteria, test against its parent, note)."""
        evaluations = self.evaluations()
        rows = lineage_rows(self.window.lineage, evaluations)
        series = self.window.series
        comments = [f"Lagwright lineage of {series.name} ({series.provenance.source or 'in memory'}), "
                    f"{len(rows)} candidates; tests are against the parent candidate"]
        written = write_csv(path, LINEAGE_COLUMNS, rows, comments)
        self.last_written = [written]
        return written

    def write_residuals_csv(self, path, candidate_id: str | None = None) -> Path:
        """Write one candidate's residuals and fitted values (on the prepared scale) for every observation."""
        cid, ev = self._evaluation(candidate_id)
        series = self.window.series
        rows = residual_rows(series, ev)
        written = write_csv(path, RESIDUAL_COLUMNS, rows, residual_header(series, ev, cid))
        self.last_written = [written]
        return written

    def export_pane_images(self, folder, candidate_id: str | None = None) -> list[Path]:
        """Write each residual pane of a candidate as PNG and SVG into ``folder``; returns the files written."""
        folder = Path(folder)
        if not folder.is_dir():
            raise ExportError(f"The folder '{folder}' does not exist; choose an existing folder for the images.")
        cid, ev = self._evaluation(candidate_id)
        if not ev.fit.ok:
            raise ExportError(f"The fit of {cid} failed ({ev.fit.failure}); there are no panes to export.")
        written = []
        for key in FIGURE_KEYS:
            width, height = IMAGE_SIZE.get(key, DEFAULT_IMAGE_SIZE)
            pane = make_pane(key, ev, self.window.series, width, height)
            try:
                if pane.is_showing_message:
                    continue
                stem = f"{FILE_STEMS[key]}-{cid}"
                written.append(_write_bytes(folder / f"{stem}.svg", svg_bytes(pane)))
                written.append(_write_image(folder / f"{stem}.png", png_image(pane, 2 * width)))
            finally:
                dispose(pane)
        self.last_written = written
        return written

    # ========================================================= menu slots
    def export_memo(self) -> None:
        window = self.window
        if window.lineage is None:
            window.notify("There is nothing to export yet: open a data file or a sample first.")
            return
        settings = QSettings("Lagwright", "Lagwright")
        dialog = MemoDialog(window, window.lineage, window.current_id,
                            analyst=str(settings.value(ANALYST_KEY, "") or ""),
                            page=str(settings.value(PAGE_KEY, "") or default_page()))
        if dialog.exec() != QDialog.DialogCode.Accepted:
            return
        candidate, runner, page, analyst = dialog.values()
        settings.setValue(ANALYST_KEY, analyst)
        settings.setValue(PAGE_KEY, page)
        suggested = Path.home() / f"{_safe(window.series.name)}-{candidate}-memo.pdf"
        path, _ = QFileDialog.getSaveFileName(window, "Export memo", str(suggested), "PDF files (*.pdf)")
        if not path:
            return
        if not path.lower().endswith(".pdf"):
            path += ".pdf"
        progress = _Progress(window, "Writing the memo")
        try:
            written = self.write_memo(path, candidate, runner, page, analyst, progress)
        except LagwrightError as exc:
            window.notify(str(exc))
            return
        finally:
            progress.close()
        window.statusBar().showMessage(f"Wrote the memo {written}", 10000)
        self.reveal(written)

    def export_lineage(self) -> None:
        path = self._ask_file("Export lineage table", "lineage.csv")
        if path:
            self._run(lambda: self.write_lineage_csv(path), "the lineage table")

    def export_residuals(self) -> None:
        if self.window.lineage is None:
            return
        path = self._ask_file("Export residuals and fitted values", f"residuals-{self.window.current_id}.csv")
        if path:
            self._run(lambda: self.write_residuals_csv(path), "the residuals")

    def export_panes(self) -> None:
        if self.window.lineage is None:
            return
        folder = QFileDialog.getExistingDirectory(self.window, "Export the panes as PNG and SVG into", str(Path.home()))
        if folder:
            files = self._run(lambda: self.export_pane_images(folder), "the panes")
            if files:
                self.reveal(Path(folder))

    def _ask_file(self, title: str, name: str) -> str:
        if self.window.lineage is None:
            self.window.notify("There is nothing to export yet: open a data file or a sample first.")
            return ""
        stem = _safe(self.window.series.name)
        path, _ = QFileDialog.getSaveFileName(self.window, title, str(Path.home() / f"{stem}-{name}"),
                                              "CSV files (*.csv)")
        if path and not path.lower().endswith(".csv"):
            path += ".csv"
        return path

    def _run(self, job, what: str):
        QApplication.setOverrideCursor(Qt.CursorShape.WaitCursor)
        try:
            result = job()
        except LagwrightError as exc:
            self.window.notify(str(exc))
            return None
        finally:
            QApplication.restoreOverrideCursor()
        count = len(result) if isinstance(result, list) else 1
        self.window.statusBar().showMessage(f"Exported {what} ({count} file{'s' if count != 1 else ''})", 10000)
        return result


def _safe(name: str) -> str:
    keep = "".join(ch if ch.isalnum() or ch in "-_" else "-" for ch in name).strip("-")
    return keep or "series"


def _write_bytes(path: Path, data: bytes) -> Path:
    fd, tmp = _temp_beside(path)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        publish(tmp, path)
    except OSError as exc:
        _unlink(tmp)
        raise ExportError(f"Cannot write '{path}': {exc.strerror or exc}. Choose another folder.") from None
    return path


def _write_image(path: Path, image) -> Path:
    fd, tmp = _temp_beside(path)
    os.close(fd)
    if not image.save(tmp, "PNG"):
        _unlink(tmp)
        raise ExportError(f"Cannot write the image '{path}'. Choose another folder.")
    try:
        publish(tmp, path)
    except OSError as exc:
        _unlink(tmp)
        raise ExportError(f"Cannot write '{path}': {exc.strerror or exc}. Choose another folder.") from None
    return path


def _temp_beside(path: Path):
    try:
        return tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    except OSError as exc:
        raise ExportError(f"Cannot write '{path}': {exc.strerror or exc}. Choose another folder.") from None


def _unlink(path: str) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def install_export_actions(window, menu) -> ExportActions:
    """Add the export actions to ``menu`` (the window's File menu) and return their owner."""
    actions = ExportActions(window)
    menu.addSeparator()
    window.export_memo_action = window._action("Export &memo…", QKeySequence("Ctrl+E"), actions.export_memo, menu)
    export_menu = menu.addMenu("E&xport data and pictures")
    window._action("Lineage table (CSV)…", None, actions.export_lineage, export_menu)
    window._action("Residuals and fitted values (CSV)…", None, actions.export_residuals, export_menu)
    window._action("Panes as PNG and SVG…", None, actions.export_panes, export_menu)
    return actions
