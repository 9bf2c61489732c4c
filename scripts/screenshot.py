"""Render the main window and the compare view to PNG for review.

Usage (a real X server, e.g. Xvfb; offscreen also works but draws no window frame):

    xvfb-run -s "-screen 0 1600x1000x24" .venv/bin/python scripts/screenshot.py --out shots/

It opens the default sample, prepares it (seasonal difference, s = 7), grows
a model by three steps with notes, waits for every exact fit, and saves:
``main.png`` (the residual panes), ``intervention.png`` (after a pulse at the
largest residual), ``roots.png`` (periodogram and roots tab),
``prepared.png`` (identification tab), ``compare.png`` (the side-by-side
view of the last step), ``forecast.png`` (holdout, forecast and rolling
check) and ``screen.png`` (the order screen, (p, q ≤ 2) × (P, Q ≤ 1)).
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default="shots")
    args = parser.parse_args()
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)

    from PySide6.QtWidgets import QApplication

    from lagwright.app.window import MainWindow
    from lagwright.core.spec import ModelSpec

    app = QApplication.instance() or QApplication(sys.argv[:1])
    window = MainWindow(use_processes=True, recovery_path=out / "recovery.lagwright.json", ask_restore=False)
    window.resize(1500, 940)
    window.show()

    def settle(timeout: float = 120.0) -> None:
        end = time.time() + timeout
        while time.time() < end:
            app.processEvents()
            done = window.service.pending() == 0 and window.drawn is not None and window.drawn[0] == window.current_spec
            if done and window.drawn[1] != "preview":
                break
            time.sleep(0.01)
        for _ in range(20):
            app.processEvents()
            time.sleep(0.01)

    window.open_sample("water_demand")
    settle()
    window.start_branch(ModelSpec(D=1, s=7))
    window.note_edit.setPlainText("Weekly pattern in the ACF of the levels: take a seasonal difference.")
    settle()
    window.add_term("sma", 1)
    window.note_edit.setPlainText("ACF spike at lag 7 after differencing: seasonal MA term.")
    settle()
    window.add_term("ar", 1)
    window.note_edit.setPlainText("PACF cuts off after lag 1: one AR term.")
    settle()
    window.grab().save(str(out / "main.png"))
    fit = window.exact_fit(window.current_spec)  # the largest residual, chosen as a click on it would
    position = int(abs(fit.std_residuals).argmax()) + fit.offset
    window.selection.select([position])
    window.term_bar.event_buttons["pulse"].click()
    window.note_edit.setPlainText("Main burst on this day (invented): a one-off effect.")
    settle()
    window.grab().save(str(out / "intervention.png"))
    window.tabs.setCurrentIndex(1)
    settle()
    window.grab().save(str(out / "roots.png"))
    window.tabs.setCurrentIndex(2)
    settle()
    window.grab().save(str(out / "prepared.png"))
    window.compare_with_parent()
    settle()
    window.grab().save(str(out / "compare.png"))
    view = window.forecast_view
    window.tabs.setCurrentWidget(view)
    view.holdout_box.setValue(28)
    view.horizon_box.setValue(14)
    view.origins_box.setValue(6)
    view.step_box.setValue(7)
    view.check_button.click()
    end = time.time() + 120
    while view.result is None and time.time() < end:
        app.processEvents()
        time.sleep(0.01)
    view.rolling_button.click()
    while view.rolling is None and time.time() < end:
        app.processEvents()
        time.sleep(0.01)
    settle()
    window.grab().save(str(out / "forecast.png"))
    dialog = window.open_screen()
    for key, value in (("p", 2), ("q", 2), ("P", 1), ("Q", 1)):
        dialog.boxes[key].setValue(value)
    dialog.start()
    end = time.time() + 180
    while dialog.result is None and time.time() < end:
        app.processEvents()
        time.sleep(0.01)
    dialog.wait()
    for _ in range(20):
        app.processEvents()
        time.sleep(0.01)
    dialog.grab().save(str(out / "screen.png"))
    dialog.done(0)
    window.close()
    print(f"saved main.png, intervention.png, roots.png, prepared.png, compare.png, forecast.png, screen.png in {out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
