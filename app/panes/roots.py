"""AR and MA roots against the unit circle.

By default the roots z of the lag polynomials are drawn in the B plane,
where a stationary AR part and an invertible MA part have every root
*outside* the unit circle (Brockwell & Davis, 2016, §3.1). A toggle shows
the inverse roots 1/z instead, which then lie *inside* the circle; many
readers find that view easier. AR roots are crosses, MA roots rings;
roots with modulus below :data:`lagwright.core.polynomials.NEAR_UNIT_MODULUS`
are ringed in the ATTENTION colour. The axes keep an equal aspect ratio.

In the B plane a root far from the circle (a small coefficient) would shrink
the circle to a dot, so the view is limited to radius :data:`MAX_VIEW_RADIUS`;
roots beyond it are marked at the edge with their modulus (the root items
keep the true values; zoom out to see them).

References
----------
Brockwell, P. J. & Davis, R. A. (2016). *Introduction to Time Series and
Forecasting*, 3rd ed., Springer, §3.1.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtWidgets import QCheckBox

from .. import theme
from .base import ResidualPane, make_brush, make_pen

#: Largest radius shown in the B plane before far roots are marked at the edge.
MAX_VIEW_RADIUS = 3.0


class RootMapPane(ResidualPane):
    """Unit circle with AR roots (crosses) and MA roots (rings).

    Attributes
    ----------
    unit_circle : pyqtgraph.PlotDataItem
    ar_item, ma_item : pyqtgraph.ScatterPlotItem
        Points at the roots z (or 1/z when :attr:`inverse` is on).
    near_unit_item : pyqtgraph.ScatterPlotItem
        ATTENTION rings around roots near (or inside) the unit circle.
    far_item : pyqtgraph.ScatterPlotItem
        Edge markers for roots outside the view; ``far_labels`` their moduli.
    inverse_box : QCheckBox
        The toggle between roots and inverse roots.
    """

    pane_title = "Roots"
    _item_names = (
        "unit_circle", "ar_item", "ma_item", "near_unit_item", "far_item", "far_labels", "axes_lines",
        "empty_label",
    )

    def _build(self) -> None:
        self.plot = self.add_plot(0, 0, x_label="real part", y_label="imaginary part")
        self.plot.getViewBox().setAspectLocked(True, ratio=1.0)
        self.inverse_box = QCheckBox("inverse roots (1/z)")
        self.inverse_box.setToolTip("Show 1/z: stationary and invertible roots then lie inside the circle.")
        self.inverse_box.toggled.connect(self._inverse_toggled)
        self.header_layout.insertWidget(2, self.inverse_box)
        self.roots = ()
        self._inverse = False

    # ------------------------------------------------------------- toggles
    @property
    def inverse(self) -> bool:
        return self._inverse

    def set_inverse(self, inverse: bool) -> None:
        """Show roots (False, B plane) or inverse roots (True)."""
        self.inverse_box.setChecked(bool(inverse))

    def _inverse_toggled(self, checked: bool) -> None:
        self._inverse = bool(checked)
        if not self.is_showing_message and self.ar_item is not None:
            preview = self.is_preview
            self._remove_items()
            self._plot_roots(self.roots)
            self._set_preview_flag(preview)

    def coordinates(self, roots) -> np.ndarray:
        """Complex points drawn for ``roots``: z, or 1/z in the inverse view."""
        z = np.array([r.value for r in roots], dtype=complex)
        return 1.0 / z if self._inverse else z

    # -------------------------------------------------------------- drawing
    def _draw(self, evaluation, series) -> None:
        self.roots = tuple(evaluation.fit.roots)
        self._plot_roots(self.roots)

    def _plot_roots(self, roots) -> None:
        ar = [r for r in roots if r.side == "AR"]
        ma = [r for r in roots if r.side == "MA"]
        zar, zma = self.coordinates(ar), self.coordinates(ma)
        near = [r for r in roots if r.near_unit]
        znear = self.coordinates(near)
        theta = np.linspace(0.0, 2.0 * np.pi, 361)
        self.unit_circle = pg.PlotDataItem(
            np.cos(theta), np.sin(theta), pen=make_pen(theme.REFERENCE, width=1.5), antialias=True
        )
        axis_pen = make_pen(theme.REFERENCE, width=1, alpha=0.35)
        self.axes_lines = (
            pg.InfiniteLine(0.0, angle=0, pen=axis_pen),
            pg.InfiniteLine(0.0, angle=90, pen=axis_pen),
        )
        self.ar_item = pg.ScatterPlotItem(x=zar.real, y=zar.imag, symbol="x", size=13, name="AR root")
        self.ma_item = pg.ScatterPlotItem(x=zma.real, y=zma.imag, symbol="o", size=11, name="MA root")
        self.near_unit_item = pg.ScatterPlotItem(
            x=znear.real, y=znear.imag, symbol="o", size=22,
            pen=make_pen(theme.ATTENTION, width=2), brush=None,
        )
        self._restyle()

        everything = np.concatenate([zar, zma])
        modulus = np.abs(everything)
        if self._inverse:
            radius = max(1.2, float(modulus.max()) * 1.1 if modulus.size else 0.0)
        else:
            radius = min(max(1.25, float(modulus.max()) * 1.12 if modulus.size else 0.0), MAX_VIEW_RADIUS)
        sides = np.array(["AR"] * zar.size + ["MA"] * zma.size)
        beyond = modulus > radius
        far, far_sides = everything[beyond], sides[beyond]
        edge = 0.9 * radius * far / np.abs(far) if far.size else far
        self.far_item = pg.ScatterPlotItem(
            x=edge.real, y=edge.imag, symbol=["x" if s == "AR" else "o" for s in far_sides], size=11,
            pen=make_pen(theme.REFERENCE, width=1.5), brush=None,
        )
        self.far_labels = []
        for point, value, side in zip(edge, far, far_sides):
            label = pg.TextItem(
                f"{side} |z| = {abs(value):.3g} →", color=theme.REFERENCE, anchor=(0.5, 1.3)
            )
            label.setPos(point.real, point.imag)
            self.far_labels.append(label)
        self.far_labels = tuple(self.far_labels)
        self.empty_label = None
        if not roots:
            self.empty_label = pg.TextItem(
                "no AR or MA terms", color=self.colours.foreground, anchor=(0.5, 0.5)
            )
            self.empty_label.setPos(0.0, 0.0)

        drawn = (
            *self.axes_lines, self.unit_circle, self.near_unit_item, self.ar_item, self.ma_item,
            self.far_item, *self.far_labels,
        )
        for item in drawn:
            self.plot.addItem(item)
        if self.empty_label is not None:
            self.plot.addItem(self.empty_label)
        self.plot.setRange(xRange=(-radius, radius), yRange=(-radius, radius), padding=0.02)

        where = "inside" if self._inverse else "outside"
        view = "1/z" if self._inverse else "z (B plane)"
        text = f"{len(ar)} AR ×, {len(ma)} MA ○; {len(near)} near |z| = 1; {view}: stable {where}"
        if far.size:
            text += f"; {far.size} beyond view"
        self.set_status(text)

    def _restyle(self) -> None:
        if getattr(self, "ar_item", None) is None:
            return
        code = self.data_colour
        self.ar_item.setPen(make_pen(code, width=1))
        self.ar_item.setBrush(make_brush(code))
        self.ma_item.setPen(make_pen(code, width=2))
        self.ma_item.setBrush(None)
