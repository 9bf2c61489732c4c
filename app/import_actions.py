"""File menu actions that bring data in through the import dialog: "Import…" and "Paste data".

:func:`install_import_actions` adds the two actions to the window's File
menu. Each opens an :class:`~lagwright.app.import_dialog.ImportDialog`
(window-modal, not blocking the event loop); when the user presses Load,
the series the dialog shows is handed to ``MainWindow.open_data`` with the
import choices. Pasted text is first kept as a file in the application-data
folder, so that a saved session can read it again. Cancelling, or any
problem, leaves the current lineage as it was.
"""

from __future__ import annotations

from pathlib import Path

from PySide6.QtGui import QKeySequence
from PySide6.QtWidgets import QApplication, QFileDialog

from lagwright.core.loader import PastedText

from .import_dialog import ImportDialog, save_pasted_text

__all__ = ["ImportActions", "install_import_actions", "DATA_FILTER"]

#: File-dialog filter for the formats the loader reads.
DATA_FILTER = ("Data tables (*.csv *.tsv *.txt *.tab *.dat *.xlsx *.xlsm *.parquet *.pq);;"
               "Text tables (*.csv *.tsv *.txt *.tab *.dat);;Excel workbooks (*.xlsx *.xlsm);;"
               "Parquet files (*.parquet *.pq);;All files (*)")


class ImportActions:
    """Owner of the import actions of one window."""

    def __init__(self, window):
        self.window = window
        self.dialog: ImportDialog | None = None

    def _transform(self) -> str | None:
        try:
            spec = self.window.current_spec
        except Exception:  # noqa: BLE001 - no lineage yet
            return None
        kind = getattr(getattr(spec, "transform", None), "kind", None)
        return kind if kind in ("log", "boxcox") else None

    def import_file(self, path: str | Path | None = None) -> ImportDialog | None:
        """Ask for a file (unless ``path`` is given) and open the import dialog on it."""
        if path is None:
            path, _ = QFileDialog.getOpenFileName(self.window, "Import data", str(Path.home()), DATA_FILTER)
            if not path:
                return None
        return self._open(path)

    def paste_clipboard(self, text: str | None = None) -> ImportDialog | None:
        """Open the import dialog on the clipboard's text (or on ``text``)."""
        if text is None:
            text = QApplication.clipboard().text()
        if not text or not text.strip():
            self.window.notify("The clipboard holds no text. Copy the cells with their header row in a spreadsheet "
                               "or an editor, then choose Paste data again.")
            return None
        return self._open(PastedText(text, "pasted text"))

    def _open(self, source) -> ImportDialog:
        if self.dialog is not None:
            self.dialog.close()
        dialog = ImportDialog(source, transform=self._transform(), parent=self.window)
        dialog.accepted.connect(lambda d=dialog: self.finish(d))
        dialog.finished.connect(lambda _result, d=dialog: self._forget(d))
        self.dialog = dialog
        dialog.open()
        return dialog

    def _forget(self, dialog: ImportDialog) -> None:
        if self.dialog is dialog:
            self.dialog = None
        dialog.deleteLater()

    def finish(self, dialog: ImportDialog) -> bool:
        """Load the dialog's series into the window; on a problem, say so and keep the current work."""
        series, options, source = dialog.series, dialog.options, dialog.source
        if series is None:
            return False
        if isinstance(source, PastedText):
            folder = Path(self.window.recovery_path).parent / "pasted"
            try:
                path = save_pasted_text(source.text, folder)
            except OSError as exc:
                self.window.notify(f"The pasted data could not be kept in '{folder}' ({exc.strerror or exc}); "
                                   "it was not loaded. Save it as a CSV file and import that.")
                return False
        else:
            path = source
        return self.window.open_data(path, options=options, series=series)


def install_import_actions(window, menu) -> ImportActions:
    """Add "Import…" and "Paste data from clipboard" to ``menu`` (the window's File menu)."""
    actions = ImportActions(window)
    window.import_action = window._action("&Import data…", QKeySequence("Ctrl+I"),
                                          lambda: actions.import_file(), menu)
    window.paste_action = window._action("&Paste data from clipboard…", QKeySequence("Ctrl+Shift+V"),
                                         lambda: actions.paste_clipboard(), menu)
    return actions
