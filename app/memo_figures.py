"""The panes drawn off screen, for the memo and for image files.

A fresh pane of each kind is made for the export (never the one on screen,
whose size, zoom, tab and theme belong to the user), given a light palette
and a fixed size, fed the evaluation, and exported with pyqtgraph's own
exporters: SVG (vector, used by the memo) or PNG at any width.

pyqtgraph 0.14's SVG exporter fails on the closed sub-paths (``Z``) that
Qt 6.11's SVG generator writes (pyqtgraph issue #3495): :func:`svg_bytes`
takes the ``Z`` commands out while the exporter rewrites the coordinates
and puts them back afterwards. Its output also declares the SVG Tiny 1.2
profile, which has no clip paths; Qt's SVG renderer then draws lines past
the plot frame, so the profile is changed to full SVG 1.1 (which the
exporter's markup already is). Qt's SVG renderer still does not honour
those clip paths, so :func:`svg_layers` splits the picture into the part
outside the plot areas and one part per plot area, which the memo renderer
clips itself.
"""

from __future__ import annotations

import importlib
import re
from contextlib import contextmanager
from dataclasses import dataclass
from xml.dom import minidom

from PySide6.QtCore import QRectF
from PySide6.QtGui import QColor, QImage, QPalette
from PySide6.QtWidgets import QApplication

from .panes import (
    CorrelationPane,
    CumulativePeriodogramPane,
    NormalQuantilePane,
    ResidualHistogramPane,
    ResidualTracePane,
    RootMapPane,
)

#: Pane class for each figure key of :data:`lagwright.core.memo_content.FIGURE_KEYS`.
PANE_CLASSES = {
    "trace": ResidualTracePane,
    "correlation": CorrelationPane,
    "histogram": ResidualHistogramPane,
    "quantile": NormalQuantilePane,
    "periodogram": CumulativePeriodogramPane,
    "roots": RootMapPane,
}

#: File-name stems of the panes when exported as images.
FILE_STEMS = {
    "trace": "residuals-over-time",
    "correlation": "residual-acf-pacf",
    "histogram": "residual-histogram",
    "quantile": "normal-quantile-plot",
    "periodogram": "cumulative-periodogram",
    "roots": "roots",
}

#: Size (width, height) in pixels at which a pane is laid out for image files.
IMAGE_SIZE = {"trace": (960, 380), "correlation": (960, 520)}
DEFAULT_IMAGE_SIZE = (720, 520)

_SVG_TINY = b'version="1.2" baseProfile="tiny"'
_SVG_FULL = b'version="1.1"'


@dataclass(frozen=True)
class PaneArt:
    """One pane exported for the memo: SVG bytes and the size it was laid out at (or a message)."""

    key: str
    svg: bytes
    width: float
    height: float
    message: str = ""


def light_palette() -> QPalette:
    """The light palette the exported panes are drawn in, whatever the system theme."""
    palette = QPalette(QColor("#eef1f4"))
    palette.setColor(QPalette.ColorRole.Window, QColor("#f7f8f9"))
    palette.setColor(QPalette.ColorRole.Base, QColor("#ffffff"))
    palette.setColor(QPalette.ColorRole.WindowText, QColor("#2b3137"))
    palette.setColor(QPalette.ColorRole.Text, QColor("#2b3137"))
    return palette


def make_pane(key: str, evaluation, series, width: int, height: int):
    """A new pane of kind ``key``, never shown, laid out at ``width`` × ``height`` and drawing ``evaluation``."""
    pane = PANE_CLASSES[key]()
    pane.setPalette(light_palette())
    pane.resize(width, height)
    pane.graphics.resize(width, height)
    pane.graphics.ci.setGeometry(QRectF(0, 0, width, height))
    pane.show_evaluation(evaluation, series)
    settle(pane)
    return pane


def settle(pane) -> None:
    """Finish the pane's pending layout and view updates so an exporter sees the final picture."""
    pane.graphics.ci.setGeometry(QRectF(0, 0, pane.graphics.width(), pane.graphics.height()))
    pane.graphics.ci.layout.activate()
    app = QApplication.instance()
    if app is not None:
        app.processEvents()
    pane.graphics.scene().prepareForPaint()


def dispose(pane) -> None:
    pane.hide()
    pane.deleteLater()


@contextmanager
def _closed_paths_tolerated():
    """Let pyqtgraph's SVG exporter handle paths with ``Z`` commands (see the module notes)."""
    module = importlib.import_module("pyqtgraph.exporters.SVGExporter")
    original = module.correctCoordinates

    def correct(node, defs, item, options):
        saved = []
        for path in node.getElementsByTagName("path"):
            tokens = path.getAttribute("d").split()
            closes = [i for i, t in enumerate(tokens) if t in ("Z", "z")]
            if closes:
                saved.append((path, closes))
                path.setAttribute("d", " ".join(t for t in tokens if t not in ("Z", "z")))
        original(node, defs, item, options)
        for path, closes in saved:
            tokens = path.getAttribute("d").split()
            for i in closes:
                tokens.insert(i, "Z")
            path.setAttribute("d", " ".join(tokens))

    module.correctCoordinates = correct
    try:
        yield
    finally:
        module.correctCoordinates = original


def svg_bytes(pane) -> bytes:
    """The pane's plots as SVG (pyqtgraph's exporter on the whole plot layout)."""
    from pyqtgraph.exporters import SVGExporter

    settle(pane)
    with _closed_paths_tolerated():
        data = SVGExporter(pane.graphics.ci).export(toBytes=True)
    return bytes(data).replace(_SVG_TINY, _SVG_FULL, 1)


def png_image(pane, width: int | None = None) -> QImage:
    """The pane's plots as an image ``width`` pixels wide (default: twice the layout width)."""
    from pyqtgraph.exporters import ImageExporter

    settle(pane)
    exporter = ImageExporter(pane.graphics.ci)
    target = int(width or 2 * pane.graphics.width())
    exporter.parameters()["width"] = target
    image = exporter.export(toBytes=True)
    return image


_NUMBER = re.compile(r"-?\d+(?:\.\d+)?(?:[eE]-?\d+)?")


_STYLE_TAG = re.compile(rb"<g\b[^>]*>")
_STROKE_WIDTH = re.compile(rb'stroke-width="([^"]*)"')
_DASH_ARRAY = re.compile(rb'stroke-dasharray="([^"]*)"')


def scaled_strokes(svg: bytes, factor: float) -> bytes:
    """Multiply the stroke widths and dash lengths of an exported pane's pens by ``factor``.

    pyqtgraph's pens are cosmetic: the exporter marks their strokes
    ``vector-effect="non-scaling-stroke"``, so Qt's SVG renderer draws them
    in device pixels. On the memo's 1200-dpi PDF device a 1.2-pixel band
    line came out 0.025 mm wide with 0.1 mm dashes (a faint, seemingly solid
    line). Scaling by the device pixels per SVG unit keeps the weights and
    dashes the pane has on screen, in proportion to the figure. The pens are
    the style groups (``<g>`` without an ``id``); the item groups around
    them (with an ``id``, black, width 1) are left alone: Qt draws the
    plot frame from one of them, already scaled.
    """
    def widths(match):
        return b'stroke-width="%s"' % _scaled(match.group(1), factor)

    def dashes(match):
        parts = [_scaled(p.strip(), factor) for p in match.group(1).split(b",")]
        return b'stroke-dasharray="%s"' % b",".join(parts)

    def style_group(match):
        tag = match.group(0)
        if b' id="' in tag:
            return tag
        return _DASH_ARRAY.sub(dashes, _STROKE_WIDTH.sub(widths, tag))

    return _STYLE_TAG.sub(style_group, svg)


def _scaled(value: bytes, factor: float) -> bytes:
    try:
        return b"%.4g" % (float(value) * factor)
    except ValueError:  # "none" or anything else not a number stays as it is
        return value


def svg_layers(svg: bytes) -> tuple[bytes, list[tuple[tuple[float, float, float, float], bytes]]]:
    """Split an exported pane into what needs no clipping and the plot areas that do.

    Qt's SVG renderer does not apply the clip paths the exporter writes
    around each plot area (a line running past the axes is drawn past
    them). This returns the SVG without the clipped groups, and for each
    clipped group an SVG holding only that group (and its ancestors) with
    the clip rectangle ``(x0, y0, x1, y1)`` in viewBox units, so the caller
    can clip it itself.
    """
    doc = minidom.parseString(svg)
    clip_rects = {}
    for clip in doc.getElementsByTagName("clipPath"):
        numbers = [float(v) for p in clip.getElementsByTagName("path") for v in _NUMBER.findall(p.getAttribute("d"))]
        xs, ys = numbers[0::2], numbers[1::2]
        if xs and ys:
            clip_rects[clip.getAttribute("id")] = (min(xs), min(ys), max(xs), max(ys))
    groups = [g for g in doc.getElementsByTagName("g") if g.getAttribute("clip-path").startswith("url(#")]
    if not groups:
        return svg, []
    parts = []
    for index, group in enumerate(groups):
        ref = group.getAttribute("clip-path")[5:-1]
        if ref not in clip_rects:
            continue
        copy = minidom.parseString(svg)
        mine = [g for g in copy.getElementsByTagName("g") if g.getAttribute("clip-path").startswith("url(#")][index]
        mine.removeAttribute("clip-path")
        node = mine
        while node.parentNode is not None and node.parentNode.nodeType == node.ELEMENT_NODE:
            parent = node.parentNode
            for sibling in list(parent.childNodes):
                if sibling is not node and sibling.nodeType == sibling.ELEMENT_NODE:
                    parent.removeChild(sibling)
            node = parent
        parts.append((clip_rects[ref], copy.toxml(encoding="utf-8")))
    base = minidom.parseString(svg)
    for group in [g for g in base.getElementsByTagName("g") if g.getAttribute("clip-path").startswith("url(#")]:
        group.parentNode.removeChild(group)
    return base.toxml(encoding="utf-8"), parts


def pane_art(key: str, evaluation, series, width: int, height: int) -> PaneArt:
    """Draw one pane off screen and return its SVG, or the sentence it shows instead of a plot."""
    pane = make_pane(key, evaluation, series, width, height)
    try:
        if pane.is_showing_message:
            return PaneArt(key, b"", width, height, message=pane.message)
        return PaneArt(key, svg_bytes(pane), width, height)
    finally:
        dispose(pane)
