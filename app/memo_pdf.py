"""The memo as a PDF: Qt's own PDF writer, our own page layout.

:func:`write_memo_pdf` lays out a :class:`~lagwright.core.memo_content.Memo`
(plain blocks built from core results) on A4 or US Letter pages with a
:class:`QPdfWriter` and a :class:`QPainter`; nothing is printed from a
widget on screen. The layout is a small flow engine: every block becomes a
*flow* that can measure itself for a width, draw itself, and (text and
tables only) split at a line or row boundary. The engine

* keeps headings with what follows them,
* keeps short tables and every figure whole, moving them to the next page
  rather than splitting them; a long table splits between rows and repeats
  its title ("continued") and header row on the next page,
* numbers the pages "page i of n" (layout is done before drawing, so n is
  known), with a running head from page 2.

Text is laid out by :class:`QTextDocument` on the PDF device itself
(1200 dpi), so measurements and drawing agree. Every piece of text from
the content, user notes included, is HTML-escaped before it reaches a
document. Figures are the panes' SVG drawn by :class:`QSvgRenderer`: vector
all the way into the PDF. Qt embeds the fonts it uses (subset TrueType).

The file is written to a temporary file in the target folder and moved
into place only when complete, so a failure leaves no partial file.
"""

from __future__ import annotations

import html
import os
import re
import tempfile
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path

from PySide6.QtCore import QByteArray, QMarginsF, QRectF, Qt, qVersion
from PySide6.QtGui import (
    QAbstractTextDocumentLayout,
    QColor,
    QFont,
    QPageLayout,
    QPageSize,
    QPainter,
    QPalette,
    QPdfWriter,
    QPen,
    QTextDocument,
    QTextOption,
)
from PySide6.QtSvg import QSvgRenderer

from lagwright.core.export_tables import publish
from lagwright.core.memo_content import (
    Bullets,
    Column,
    Equation,
    Fields,
    Figure,
    FigureRow,
    Memo,
    MemoError,
    MemoInputs,
    Paragraph,
    Row,
    SideBySide,
    Subheading,
    Table,
    build_memo,
    software_versions,
)

from . import theme
from .memo_figures import PaneArt, pane_art, scaled_strokes, svg_layers

#: Resolution of the PDF device, dots per inch.
RES = 1200
#: Device units per typographic point.
PT = RES / 72.0
MM = RES / 25.4

PAGE_SIZES = {"a4": QPageSize.PageSizeId.A4, "letter": QPageSize.PageSizeId.Letter}

SANS = ["DejaVu Sans", "Noto Sans", "Liberation Sans", "Helvetica", "Arial"]
MONO = ["DejaVu Sans Mono", "Noto Sans Mono", "Liberation Mono", "Courier New", "Courier"]

INK = "#1f262d"
MUTED = "#5d6873"
RULE = "#c8d0d8"
ZEBRA = "#f4f6f8"
HEAD_FILL = "#e2eff2"
EQUATION_FILL = "#eef6f7"
CODE_FILL = "#f1f3f5"
CAUTION_FILL = "#fcf4e1"
ROW_FILL = {"chosen": "#fbefd2", "runner-up": "#ece6f4", "failed": "#f8e0e4", "warn": "#fbe9d7"}
CELL_INK = {"good": theme.GOOD, "doubt": theme.DOUBT, "bad": theme.BAD, "weak": theme.ATTENTION}

#: px per point at which panes are laid out: full-width and half-width figures.
FULL_SCALE, HALF_SCALE = 1.5, 1.62
GUTTER = 14 * PT
#: Sections shorter than this fraction of the text height are never split across pages.
KEEP_SECTION_FRACTION = 0.25
#: Sections kept whole up to a larger fraction: the cautions are read as one.
KEEP_TOGETHER_SECTIONS = {"cautions": 0.7, "reproduction": 0.5}

Progress = Callable[[int, int, str], None]


# ------------------------------------------------------------------- fonts
def font(size: float, bold: bool = False, italic: bool = False, mono: bool = False) -> QFont:
    f = QFont()
    f.setFamilies(MONO if mono else SANS)
    f.setStyleHint(QFont.StyleHint.Monospace if mono else QFont.StyleHint.SansSerif)
    f.setPointSizeF(size)
    f.setBold(bold)
    f.setItalic(italic)
    f.setKerning(True)
    # No ligatures: text copied from the memo (or read by pdftotext) must say "fit", not "ﬁt".
    for tag in ("liga", "clig", "dlig"):
        f.setFeature(QFont.Tag(tag), 0)
    return f


def esc(text: str) -> str:
    """Plain text as HTML: escaped, newlines kept."""
    return html.escape(text, quote=True).replace("\n", "<br/>")


def equation_html(text: str) -> str:
    """An equation line as HTML: escaped, with the time subscripts set as subscripts."""
    # y_t and a_t, and the intervention regressors P1_t, L2_t … of the equation
    return re.sub(r"\b([ya]|[PL]\d+)_t\b", r"<i>\1</i><sub>t</sub>", html.escape(text, quote=True))


class TextBox:
    """A QTextDocument laid out on the PDF device at a given width."""

    def __init__(self, device, markup: str, base: QFont, width: float, *, colour: str = INK,
                 align=Qt.AlignmentFlag.AlignLeft, line_height: int = 125, anywhere: bool = False):
        doc = QTextDocument()
        doc.documentLayout().setPaintDevice(device)
        doc.setDefaultFont(base)
        doc.setDocumentMargin(0)
        option = QTextOption(align)
        option.setWrapMode(QTextOption.WrapMode.WrapAnywhere if anywhere
                           else QTextOption.WrapMode.WrapAtWordBoundaryOrAnywhere)
        doc.setDefaultTextOption(option)
        doc.setHtml(f'<div style="line-height:{line_height}%">{markup}</div>')
        doc.setTextWidth(max(width, 1.0))
        self.doc = doc
        self.colour = colour
        self.height = doc.size().height()

    def line_bottoms(self) -> list[float]:
        layout = self.doc.documentLayout()
        out = []
        block = self.doc.begin()
        while block.isValid():
            top = layout.blockBoundingRect(block).top()
            lines = block.layout()
            for i in range(lines.lineCount()):
                line = lines.lineAt(i)
                out.append(top + line.y() + line.height())
            block = block.next()
        return out

    def draw(self, painter: QPainter, x: float, y: float, top: float = 0.0, bottom: float | None = None) -> None:
        bottom = self.height if bottom is None else bottom
        painter.save()
        painter.translate(x, y - top)
        ctx = QAbstractTextDocumentLayout.PaintContext()
        palette = QPalette()
        palette.setColor(QPalette.ColorRole.Text, QColor(self.colour))
        ctx.palette = palette
        ctx.clip = QRectF(0, top, self.doc.textWidth() + 4 * PT, bottom - top)
        painter.setClipRect(ctx.clip, Qt.ClipOperation.IntersectClip)
        self.doc.documentLayout().draw(painter, ctx)
        painter.restore()


# ------------------------------------------------------------------- flows
class Flow:
    """Something the page engine places: measure, draw, maybe split."""

    space_before = 6 * PT
    keep_with_next = False
    splittable = False
    #: A splittable flow no taller than this fraction of the text height is moved whole rather than split.
    keep_whole_fraction = 0.0
    #: When less than this fraction of the text height is left on the page, a splittable flow that fits
    #: on a page of its own is moved whole rather than split.
    move_below_fraction = 0.0

    def measure(self, width: float) -> float:
        raise NotImplementedError

    def lead_height(self, width: float) -> float:
        """Height that must fit with a preceding heading (the first lines or rows)."""
        return self.measure(width)

    def split(self, width: float, available: float):
        return None

    def draw(self, painter: QPainter, x: float, y: float, width: float) -> None:
        raise NotImplementedError


class TextFlow(Flow):
    """A paragraph (or any HTML snippet), split between lines when needed."""

    splittable = True

    def __init__(self, device, markup: str, base: QFont, *, colour: str = INK, space_before: float = 5 * PT,
                 indent: float = 0.0, bullet: str = "", fill: str | None = None, bar: str | None = None,
                 pad: float = 0.0, align=Qt.AlignmentFlag.AlignLeft, anywhere: bool = False,
                 keep_with_next: bool = False, line_height: int = 128, top: float = 0.0,
                 bottom: float | None = None, box: TextBox | None = None):
        self.device, self.markup, self.base = device, markup, base
        self.colour, self.space_before, self.indent, self.bullet = colour, space_before, indent, bullet
        self.fill, self.bar, self.pad, self.align, self.anywhere = fill, bar, pad, align, anywhere
        self.keep_with_next, self.line_height = keep_with_next, line_height
        self.top, self.bottom = top, bottom
        self._box, self._width = box, None

    def _inner(self, width: float) -> float:
        return width - self.indent - 2 * self.pad - (3 * PT if self.bar else 0.0)

    def box(self, width: float) -> TextBox:
        if self._box is None or self._width != width:
            self._box = TextBox(self.device, self.markup, self.base, self._inner(width), colour=self.colour,
                                align=self.align, line_height=self.line_height, anywhere=self.anywhere)
            self._width = width
        return self._box

    def _range(self, width: float) -> tuple[float, float]:
        box = self.box(width)
        return self.top, (box.height if self.bottom is None else self.bottom)

    def measure(self, width: float) -> float:
        top, bottom = self._range(width)
        return bottom - top + 2 * self.pad

    def lead_height(self, width: float) -> float:
        top, bottom = self._range(width)
        cuts = [b for b in self.box(width).line_bottoms() if b > top + 1]
        return (cuts[min(1, len(cuts) - 1)] - top + 2 * self.pad) if cuts else self.measure(width)

    def split(self, width: float, available: float):
        top, bottom = self._range(width)
        cuts = [b for b in self.box(width).line_bottoms() if top + 1 < b < bottom - 1]
        fitting = [b for b in cuts if b - top + 2 * self.pad <= available]
        if fitting and fitting[-1] == cuts[-1]:
            fitting.pop()  # never leave a single line alone on the next page
        if len(fitting) < 2:  # nor a single line at the foot of this one
            return None
        cut = fitting[-1]
        first = self._part(top, cut, width)
        rest = self._part(cut, bottom, width)
        rest.space_before = 0.0
        return first, rest

    def _part(self, top: float, bottom: float, width: float) -> TextFlow:
        part = TextFlow(self.device, self.markup, self.base, colour=self.colour, space_before=self.space_before,
                        indent=self.indent, bullet="" if top > 0 else self.bullet, fill=self.fill, bar=self.bar,
                        pad=self.pad, align=self.align, anywhere=self.anywhere, line_height=self.line_height,
                        top=top, bottom=bottom, box=self.box(width))
        part._width = width
        return part

    def draw(self, painter: QPainter, x: float, y: float, width: float) -> None:
        top, bottom = self._range(width)
        height = self.measure(width)
        if self.fill:
            painter.fillRect(QRectF(x + self.indent, y, width - self.indent, height), QColor(self.fill))
        if self.bar:
            painter.fillRect(QRectF(x + self.indent, y, 2.2 * PT, height), QColor(self.bar))
        left = x + self.indent + self.pad + (3 * PT if self.bar else 0.0)
        if self.bullet and top == 0:
            TextBox(self.device, esc(self.bullet), self.base, 10 * PT, colour=theme.DATA,
                    line_height=self.line_height).draw(painter, x + self.indent - 9 * PT, y + self.pad)
        self.box(width).draw(painter, left, y + self.pad, top, bottom)


class HeadingFlow(Flow):
    """A numbered section heading with a rule under it; never left alone at the foot of a page."""

    keep_with_next = True
    space_before = 16 * PT

    def __init__(self, device, number: int, title: str):
        self.number = TextBox(device, esc(str(number)), font(13.5, bold=True), 24 * PT, colour=theme.DATA)
        self.device, self.title_markup = device, esc(title)
        self._title, self._width = None, None

    def _box(self, width):
        if self._title is None or self._width != width:
            self._title = TextBox(self.device, self.title_markup, font(13.5, bold=True), width - 24 * PT)
            self._width = width
        return self._title

    def measure(self, width: float) -> float:
        return max(self.number.height, self._box(width).height) + 4 * PT

    def draw(self, painter, x, y, width) -> None:
        self.number.draw(painter, x, y)
        self._box(width).draw(painter, x + 24 * PT, y)
        h = self.measure(width)
        painter.fillRect(QRectF(x, y + h - 1.1 * PT, width, 1.1 * PT), QColor(theme.DATA))


#: Short phrases never broken across lines in a table cell ("p < 0.0001", "LR = 409.53", "(df 1)").
_KEEP_TOGETHER = re.compile(r"\b(?:p|LR|F\([^)]*\)|AICc?|BIC|k|n) [<=] \S+|\(df \d+\)")


@dataclass
class _Cell:
    box: TextBox
    fill: str | None = None


class TableFlow(Flow):
    """A table: optional title, header row, rows, note; splits between rows and repeats the header."""

    splittable = True
    keep_whole_fraction = 0.45
    move_below_fraction = 0.3

    def __init__(self, device, table: Table, *, header: bool = True, zebra: bool = True, label_cols: tuple = (),
                 size: float = 8.0, space_before: float = 8 * PT, rows: tuple | None = None, continued: bool = False,
                 with_note: bool = True, mono_rows: tuple[int, ...] = (), math_rows: tuple[int, ...] = ()):
        self.device, self.table, self.header, self.zebra = device, table, header, zebra
        self.label_cols, self.size, self.space_before = tuple(label_cols), size, space_before
        self.rows = table.rows if rows is None else rows
        self.continued, self.with_note, self.mono_rows = continued, with_note, mono_rows
        self.math_rows = math_rows
        self._width = None

    # ------------------------------------------------------------ layout
    def _layout(self, width: float) -> None:
        if self._width == width:
            return
        self._width = width
        cols = self.table.columns
        total = sum(c.weight for c in cols)
        self.col_widths = [width * c.weight / total for c in cols]
        self.pad_x, self.pad_y = 3.2 * PT, 2.1 * PT
        base, bold = font(self.size), font(self.size, bold=True)
        self.title_box = None
        if self.table.title:
            title = self.table.title + (" (continued)" if self.continued else "")
            self.title_box = TextBox(self.device, esc(title), font(8.6, bold=True), width, colour=INK)
        self.head_cells = []
        if self.header:
            for c, w in zip(cols, self.col_widths):
                align = Qt.AlignmentFlag.AlignRight if c.align == "right" else Qt.AlignmentFlag.AlignLeft
                self.head_cells.append(_Cell(TextBox(self.device, esc(c.title), bold, w - 2 * self.pad_x,
                                                     align=align, line_height=115)))
        self.head_height = (max(c.box.height for c in self.head_cells) + 2 * self.pad_y) if self.head_cells else 0.0
        self.row_cells, self.row_heights = [], []
        for r_index, row in enumerate(self.rows):
            cells = []
            for i, (c, w) in enumerate(zip(cols, self.col_widths)):
                text = row.cells[i] if i < len(row.cells) else ""
                mark = row.cell_mark(i)
                colour = CELL_INK.get(mark, INK)
                if row.mark == "failed" and i == 0:
                    colour = theme.BAD
                cell_font = base
                if mark in CELL_INK or i in self.label_cols:
                    cell_font = bold
                if i in self.label_cols:
                    colour = MUTED
                mono = (self.label_cols and i == 1 and r_index in self.mono_rows)
                if mono:
                    cell_font = font(self.size - 0.6, mono=True)
                align = Qt.AlignmentFlag.AlignRight if c.align == "right" else Qt.AlignmentFlag.AlignLeft
                text = _KEEP_TOGETHER.sub(lambda m: m.group(0).replace(" ", "\u00a0"), text)
                markup = esc(text)
                if self.label_cols and i == 1 and r_index in self.math_rows:
                    markup = equation_html(text)
                if "\n" in text and (mark in CELL_INK or (i == 0 and not self.label_cols)):
                    # the first line carries the mark (a verdict, an id); the rest is evidence in plain ink
                    first, rest = text.split("\n", 1)
                    rest_colour = INK if mark in CELL_INK else colour
                    markup = f"<b>{esc(first)}</b><br/><span style='font-weight:400; color:{rest_colour}'>{esc(rest)}</span>"
                cells.append(_Cell(TextBox(self.device, markup, cell_font, w - 2 * self.pad_x, colour=colour,
                                           align=align, line_height=118, anywhere=mono)))
            self.row_cells.append(cells)
            self.row_heights.append(max(c.box.height for c in cells) + 2 * self.pad_y)
        self.note_box = None
        if self.table.note and self.with_note:
            self.note_box = TextBox(self.device, esc(self.table.note), font(7.4, italic=True), width, colour=MUTED)

    def _top_height(self) -> float:
        return (self.title_box.height + 3 * PT if self.title_box else 0.0) + self.head_height

    def measure(self, width: float) -> float:
        self._layout(width)
        note = self.note_box.height + 3 * PT if self.note_box else 0.0
        return self._top_height() + sum(self.row_heights) + note

    def lead_height(self, width: float) -> float:
        self._layout(width)
        return self._top_height() + sum(self.row_heights[:2])

    def split(self, width: float, available: float):
        self._layout(width)
        used = self._top_height()
        count = 0
        for h in self.row_heights:
            if used + h > available:
                break
            used += h
            count += 1
        if count < 2 or count >= len(self.rows) - 0:
            return None
        if len(self.rows) - count < 2:  # no widow row alone on the next page
            count -= 1
            if count < 2:
                return None
        first = TableFlow(self.device, self.table, header=self.header, zebra=self.zebra,
                          label_cols=self.label_cols, size=self.size, space_before=self.space_before,
                          rows=self.rows[:count], continued=self.continued, with_note=False, mono_rows=self.mono_rows,
                          math_rows=self.math_rows)
        rest = TableFlow(self.device, self.table, header=self.header, zebra=self.zebra,
                         label_cols=self.label_cols, size=self.size, space_before=0.0,
                         rows=self.rows[count:], continued=True, with_note=self.with_note,
                         mono_rows=tuple(i - count for i in self.mono_rows if i >= count),
                         math_rows=tuple(i - count for i in self.math_rows if i >= count))
        return first, rest

    def draw(self, painter, x, y, width) -> None:
        self._layout(width)
        if self.title_box:
            self.title_box.draw(painter, x, y)
            y += self.title_box.height + 3 * PT
        if self.head_cells:
            painter.fillRect(QRectF(x, y, width, self.head_height), QColor(HEAD_FILL))
            cx = x
            for cell, w in zip(self.head_cells, self.col_widths):
                cell.box.draw(painter, cx + self.pad_x, y + self.pad_y)
                cx += w
            painter.fillRect(QRectF(x, y + self.head_height - 0.8 * PT, width, 0.8 * PT), QColor(theme.DATA))
            y += self.head_height
        for index, (row, cells, h) in enumerate(zip(self.rows, self.row_cells, self.row_heights)):
            fill = ROW_FILL.get(row.mark)
            if fill is None and self.zebra and index % 2 == 1:
                fill = ZEBRA
            if fill:
                painter.fillRect(QRectF(x, y, width, h), QColor(fill))
            cx = x
            for cell, w in zip(cells, self.col_widths):
                cell.box.draw(painter, cx + self.pad_x, y + self.pad_y)
                cx += w
            painter.fillRect(QRectF(x, y + h - 0.4 * PT, width, 0.4 * PT), QColor(RULE))
            y += h
        if self.note_box:
            self.note_box.draw(painter, x, y + 3 * PT)


class FigureFlow(Flow):
    """One or two panes side by side, each with a numbered caption; never split."""

    space_before = 10 * PT

    def __init__(self, device, figures: list[tuple[int, Figure, PaneArt | None]]):
        self.device, self.figures = device, figures
        self._width = None

    def _layout(self, width: float) -> None:
        if self._width == width:
            return
        self._width = width
        n = len(self.figures)
        self.fig_width = (width - GUTTER * (n - 1)) / n
        self.items = []
        for number, fig, art in self.figures:
            if art is not None and art.svg:
                height = self.fig_width * art.height / art.width
            else:
                height = self.fig_width * 0.35
            caption = (f"<b>Figure {number}.</b> <b>{esc(fig.title)}.</b> {esc(fig.caption)}"
                       if fig.caption else f"<b>Figure {number}.</b> {esc(fig.title)}")
            box = TextBox(self.device, caption, font(7.6), self.fig_width, colour=MUTED, line_height=120)
            self.items.append((art, height, box))
        self.height = max(h + 4 * PT + box.height for _, h, box in self.items)

    def measure(self, width: float) -> float:
        self._layout(width)
        return self.height

    def draw(self, painter, x, y, width) -> None:
        self._layout(width)
        cx = x
        for art, height, box in self.items:
            rect = QRectF(cx, y, self.fig_width, height)
            if art is not None and art.svg:
                draw_svg(painter, art.svg, rect)
                painter.setPen(QPen(QColor(RULE), 0.5 * PT))
                painter.drawRect(rect)
            else:
                painter.fillRect(rect, QColor(CODE_FILL))
                message = art.message if art is not None else "not drawn"
                TextBox(self.device, esc(message), font(8.5, italic=True), self.fig_width - 16 * PT,
                        colour=MUTED, align=Qt.AlignmentFlag.AlignCenter).draw(
                    painter, cx + 8 * PT, y + height / 2 - 6 * PT)
            box.draw(painter, cx, y + height + 4 * PT)
            cx += self.fig_width + GUTTER


def draw_svg(painter: QPainter, svg: bytes, rect: QRectF) -> None:
    """Draw an exported pane into ``rect``, clipping each plot area (see :func:`svg_layers`).

    Strokes are scaled to the figure first (:func:`scaled_strokes`): the
    pane's cosmetic pens would otherwise be drawn one device pixel wide.
    """
    view = QSvgRenderer(QByteArray(svg)).viewBoxF()
    sx, sy = rect.width() / view.width(), rect.height() / view.height()
    base, parts = svg_layers(scaled_strokes(svg, min(sx, sy)))
    renderer = QSvgRenderer(QByteArray(base))
    painter.save()
    painter.setClipRect(rect, Qt.ClipOperation.IntersectClip)
    renderer.render(painter, rect)
    for (x0, y0, x1, y1), part in parts:
        painter.save()
        clip = QRectF(rect.left() + (x0 - view.left()) * sx, rect.top() + (y0 - view.top()) * sy,
                      (x1 - x0) * sx, (y1 - y0) * sy)
        painter.setClipRect(clip, Qt.ClipOperation.IntersectClip)
        QSvgRenderer(QByteArray(part)).render(painter, rect)
        painter.restore()
    painter.restore()


class ColumnsFlow(Flow):
    """Two columns of flows side by side (the runner-up comparison); never split."""

    space_before = 8 * PT

    def __init__(self, left: list[Flow], right: list[Flow]):
        self.left, self.right = left, right

    def _column_height(self, flows, width) -> float:
        return sum((f.space_before if i else 0.0) + f.measure(width) for i, f in enumerate(flows))

    def measure(self, width: float) -> float:
        w = (width - GUTTER) / 2
        return max(self._column_height(self.left, w), self._column_height(self.right, w))

    def draw(self, painter, x, y, width) -> None:
        w = (width - GUTTER) / 2
        for flows, cx in ((self.left, x), (self.right, x + w + GUTTER)):
            cy = y
            for i, f in enumerate(flows):
                cy += f.space_before if i else 0.0
                f.draw(painter, cx, cy, w)
                cy += f.measure(w)


class GroupFlow(Flow):
    """Flows kept on one page together (a short section); never split."""

    def __init__(self, flows: list[Flow]):
        self.flows = flows
        self.space_before = flows[0].space_before if flows else 0.0

    def measure(self, width: float) -> float:
        return sum((f.space_before if i else 0.0) + f.measure(width) for i, f in enumerate(self.flows))

    def draw(self, painter, x, y, width) -> None:
        for i, f in enumerate(self.flows):
            y += f.space_before if i else 0.0
            f.draw(painter, x, y, width)
            y += f.measure(width)


class TitleFlow(Flow):
    """The title block of page 1: title, subtitle, the facts of the memo and a short summary."""

    space_before = 0.0

    def __init__(self, device, memo: Memo):
        tb = memo.title_block
        self.device = device
        self.kicker = TextBox(device, "LAGWRIGHT · MODEL-CHOICE MEMO", font(7.5, bold=True), 400 * PT,
                              colour=theme.DATA)
        self.title = TextBox(device, esc(tb.title), font(23, bold=True), 500 * PT, colour=INK)
        self.tb = tb
        self._width = None

    def _layout(self, width):
        if self._width == width:
            return
        self._width = width
        self.subtitle = TextBox(self.device, esc(self.tb.subtitle), font(13), width, colour=MUTED)
        items = list(self.tb.fields.items)
        half = (len(items) + 1) // 2
        pairs = []
        for i in range(half):
            left = items[i]
            right = items[half + i] if half + i < len(items) else ("", "")
            pairs.append(Row((left[0], left[1], right[0], right[1])))
        table = Table((Column("", weight=0.8), Column("", weight=1.9), Column("", weight=1.0),
                       Column("", weight=2.3)), tuple(pairs))
        self.facts = TableFlow(self.device, table, header=False, zebra=False, size=8.6, label_cols=(0, 2))
        self.summary = None
        if self.tb.summary:
            markup = "<br/>".join(esc(s) for s in self.tb.summary)
            self.summary = TextBox(self.device, markup, font(9.2), width - 16 * PT, colour=INK, line_height=135)

    def measure(self, width: float) -> float:
        self._layout(width)
        h = self.kicker.height + 4 * PT + self.title.height + 2 * PT + self.subtitle.height + 10 * PT
        h += self.facts.measure(width) + 10 * PT
        if self.summary:
            h += self.summary.height + 16 * PT
        return h

    def draw(self, painter, x, y, width) -> None:
        self._layout(width)
        self.kicker.draw(painter, x, y)
        y += self.kicker.height + 4 * PT
        self.title.draw(painter, x, y)
        y += self.title.height + 2 * PT
        self.subtitle.draw(painter, x, y)
        y += self.subtitle.height + 6 * PT
        painter.fillRect(QRectF(x, y, width, 1.6 * PT), QColor(theme.DATA))
        y += 4 * PT
        self.facts.draw(painter, x, y, width)
        y += self.facts.measure(width) + 10 * PT
        if self.summary:
            h = self.summary.height + 16 * PT
            painter.fillRect(QRectF(x, y, width, h), QColor(EQUATION_FILL))
            painter.fillRect(QRectF(x, y, 2.4 * PT, h), QColor(theme.DATA))
            self.summary.draw(painter, x + 10 * PT, y + 8 * PT)


# ------------------------------------------------------------ blocks → flows
class FlowBuilder:
    """Turns memo blocks into flows for the PDF device."""

    def __init__(self, device, arts: Mapping[str, PaneArt]):
        self.device = device
        self.arts = arts
        self.figure_number = 0

    def paragraph(self, p: Paragraph) -> list[Flow]:
        d = self.device
        if p.style == "lead":
            return [TextFlow(d, esc(p.text), font(11, bold=True), space_before=6 * PT)]
        if p.style == "small":
            return [TextFlow(d, esc(p.text), font(8.2), colour=MUTED, space_before=4 * PT)]
        if p.style == "code":
            return [TextFlow(d, esc(p.text), font(8.4, mono=True), fill=CODE_FILL, pad=5 * PT, anywhere=True,
                             space_before=4 * PT, line_height=125)]
        if p.style == "warning":
            return [TextFlow(d, esc(p.text), font(9.3, bold=True), colour=theme.BAD, space_before=5 * PT)]
        if p.style == "caution":
            return [TextFlow(d, esc(p.text), font(9.6), fill=CAUTION_FILL, bar=theme.BAND, pad=7 * PT,
                             space_before=7 * PT, line_height=135)]
        return [TextFlow(d, esc(p.text), font(9.4), space_before=5 * PT)]

    def bullets(self, b: Bullets) -> list[Flow]:
        colour = theme.BAD if b.style == "warning" else INK
        return [TextFlow(self.device, esc(item), font(9.0), colour=colour, indent=12 * PT, bullet="•",
                         space_before=(4 if i == 0 else 2.2) * PT) for i, item in enumerate(b.items)]

    def fields(self, f: Fields) -> list[Flow]:
        table = Table((Column("", weight=1.2), Column("", weight=3.0)), tuple(Row((k, v)) for k, v in f.items))
        mono = tuple(i for i, (k, _) in enumerate(f.items) if k in f.mono)
        math = tuple(i for i, (k, _) in enumerate(f.items) if k in f.math)
        return [TableFlow(self.device, table, header=False, zebra=True, label_cols=(0,), size=8.6,
                          space_before=5 * PT, mono_rows=mono, math_rows=math)]

    def table(self, t: Table, size: float = 8.0) -> list[Flow]:
        return [TableFlow(self.device, t, size=size)]

    def equation(self, e: Equation, compact: bool = False) -> list[Flow]:
        flows: list[Flow] = [TextFlow(self.device, equation_html(e.text), font(10 if compact else 11.5),
                                      fill=EQUATION_FILL, bar=theme.DATA, pad=(6 if compact else 9) * PT,
                                      align=Qt.AlignmentFlag.AlignLeft if compact else Qt.AlignmentFlag.AlignHCenter,
                                      space_before=6 * PT)]
        for note in e.notes:
            flows.append(TextFlow(self.device, equation_html(note), font(8.4), colour=MUTED, space_before=2.5 * PT))
        return flows

    def figure_row(self, row: FigureRow) -> list[Flow]:
        items = []
        for fig in row.figures:
            self.figure_number += 1
            items.append((self.figure_number, fig, self.arts.get(fig.pane)))
        return [FigureFlow(self.device, items)]

    def subheading(self, s: Subheading) -> list[Flow]:
        return [TextFlow(self.device, esc(s.text), font(10, bold=True), colour=INK, space_before=10 * PT,
                         keep_with_next=True)]

    def side_by_side(self, s: SideBySide) -> list[Flow]:
        def column(title, blocks):
            flows = [TextFlow(self.device, esc(title), font(9.4, bold=True), space_before=0.0)]
            for block in blocks:
                flows += self.block(block, compact=True)
            return flows

        return [ColumnsFlow(column(s.left_title, s.left), column(s.right_title, s.right))]

    def block(self, block, compact: bool = False) -> list[Flow]:
        if isinstance(block, Paragraph):
            return self.paragraph(block)
        if isinstance(block, Bullets):
            return self.bullets(block)
        if isinstance(block, Fields):
            return self.fields(block)
        if isinstance(block, Table):
            return self.table(block, size=7.6 if compact else 8.0)
        if isinstance(block, Equation):
            return self.equation(block, compact=compact)
        if isinstance(block, FigureRow):
            return self.figure_row(block)
        if isinstance(block, Subheading):
            return self.subheading(block)
        if isinstance(block, SideBySide):
            return self.side_by_side(block)
        raise TypeError(f"unknown memo block {type(block).__name__}")

    def memo(self, memo: Memo, geo: PageGeometry) -> list[Flow]:
        """All flows of the memo; a section shorter than :data:`KEEP_SECTION_FRACTION` of a page is kept whole."""
        flows: list[Flow] = [TitleFlow(self.device, memo)]
        body = geo.body_bottom - geo.body_top
        for section in memo.sections:
            part: list[Flow] = [HeadingFlow(self.device, section.number, section.title)]
            for block in section.blocks:
                part += self.block(block)
            # The short text that opens a section stays with what it introduces (a table, a figure).
            opening = 0.0
            for flow in part[1:]:
                if not isinstance(flow, TextFlow):
                    break
                opening += flow.measure(geo.text_width)
                if opening > body * 0.25:
                    break
                flow.keep_with_next = True
            group = GroupFlow(part)
            limit = KEEP_TOGETHER_SECTIONS.get(section.key, KEEP_SECTION_FRACTION)
            if group.measure(geo.text_width) <= body * limit:
                flows.append(group)
            else:
                flows += part
        return flows


# ------------------------------------------------------------------- pages
@dataclass
class PageGeometry:
    width: float
    height: float
    left: float
    right: float
    top: float
    bottom: float

    @property
    def text_width(self) -> float:
        return self.width - self.left - self.right

    @property
    def body_top(self) -> float:
        return self.top

    @property
    def body_bottom(self) -> float:
        return self.height - self.bottom


def page_geometry(page: str) -> PageGeometry:
    size = QPageSize(PAGE_SIZES[page])
    rect = size.rect(QPageSize.Unit.Point)
    return PageGeometry(rect.width() * PT, rect.height() * PT, left=19 * MM, right=19 * MM, top=20 * MM,
                        bottom=19 * MM)


def paginate(flows: list[Flow], geo: PageGeometry) -> list[list[tuple[Flow, float]]]:
    """Place the flows on pages: (flow, y) per page."""
    width = geo.text_width
    body = geo.body_bottom - geo.body_top
    pages: list[list[tuple[Flow, float]]] = [[]]
    y = geo.body_top
    flows = list(flows)
    i = 0

    def lead(index: int) -> float:
        if index >= len(flows):
            return 0.0
        f = flows[index]
        h = f.lead_height(width)
        if f.splittable and f.move_below_fraction:
            # such a flow is moved whole when less than this is left: what leads into it must move too
            h = min(f.measure(width), max(h, body * f.move_below_fraction))
        if f.keep_with_next:
            nxt = flows[index + 1] if index + 1 < len(flows) else None
            h = f.measure(width) + ((nxt.space_before + lead(index + 1)) if nxt is not None else 0.0)
        return h

    while i < len(flows):
        f = flows[i]
        at_top = not pages[-1]
        gap = 0.0 if at_top else f.space_before
        h = f.measure(width)
        need = h
        if f.keep_with_next and i + 1 < len(flows):
            need = h + flows[i + 1].space_before + lead(i + 1)
        available = geo.body_bottom - y - gap
        if need <= available + 0.5:
            pages[-1].append((f, y + gap))
            y += gap + h
            i += 1
            continue
        move_whole = h <= body and (h <= body * f.keep_whole_fraction or available < body * f.move_below_fraction)
        if f.splittable and not at_top and h > available and not move_whole:
            parts = f.split(width, available)
            if parts is not None:
                pages[-1].append((parts[0], y + gap))
                pages.append([])
                y = geo.body_top
                flows[i] = parts[1]
                continue
        if not at_top:
            pages.append([])
            y = geo.body_top
            continue
        parts = f.split(width, available) if f.splittable else None
        if parts is not None:
            pages[-1].append((parts[0], y))
            pages.append([])
            y = geo.body_top
            flows[i] = parts[1]
            continue
        pages[-1].append((f, y))  # taller than a page and cannot split: drawn clipped at the foot
        y += h
        i += 1
    return [p for p in pages if p] or [[]]


def _decorate(painter: QPainter, geo: PageGeometry, memo: Memo, index: int, count: int, device) -> None:
    width = geo.text_width
    if index == 0:
        painter.fillRect(QRectF(0, 0, geo.width, 5 * MM), QColor(theme.DATA))
    else:
        head = TextBox(device, esc(memo.running_head), font(7.4), width, colour=MUTED)
        head.draw(painter, geo.left, geo.top - 9 * MM)
        painter.fillRect(QRectF(geo.left, geo.top - 9 * MM + head.height + 2 * PT, width, 0.5 * PT), QColor(RULE))
    y = geo.height - geo.bottom + 6 * MM
    painter.fillRect(QRectF(geo.left, y - 3 * PT, width, 0.5 * PT), QColor(RULE))
    TextBox(device, esc(memo.footer), font(7.4), width * 0.7, colour=MUTED).draw(painter, geo.left, y)
    TextBox(device, esc(f"page {index + 1} of {count}"), font(7.4, bold=True), width * 0.3, colour=MUTED,
            align=Qt.AlignmentFlag.AlignRight).draw(painter, geo.left + width * 0.7, y)


# ------------------------------------------------------------------- files
def _prepare_target(path: str | os.PathLike) -> tuple[Path, str]:
    """Check the target can be written; return it and a fresh temporary file beside it."""
    target = Path(path)
    if target.is_dir():
        raise MemoError(f"'{target}' is a folder; give a file name for the memo, such as memo.pdf.")
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise MemoError(f"Cannot write the memo to '{target}': the folder '{folder}' does not exist. "
                        "Create it or choose another place.")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise MemoError(f"Cannot write the memo to '{target}': {exc.strerror or exc}. Choose another folder.") from None
    os.close(fd)
    return target, tmp


def check_writable(path: str | os.PathLike) -> None:
    """Raise :class:`MemoError` now if the memo could not be written to ``path`` (nothing is left behind)."""
    _, tmp = _prepare_target(path)
    os.unlink(tmp)


def write_memo_pdf(memo: Memo, arts: Mapping[str, PaneArt], path: str | os.PathLike, page: str = "a4",
                   progress: Progress | None = None) -> Path:
    """Render ``memo`` to a PDF at ``path`` (A4 or US Letter), atomically.

    Raises
    ------
    MemoError
        If the page size is unknown or the file cannot be written; no
        partial file is left behind.
    """
    page = page.lower()
    if page not in PAGE_SIZES:
        raise MemoError(f"Unknown page size '{page}'; use a4 or letter.")
    target, tmp = _prepare_target(path)
    try:
        writer = QPdfWriter(tmp)
        writer.setResolution(RES)
        writer.setPageLayout(QPageLayout(QPageSize(PAGE_SIZES[page]), QPageLayout.Orientation.Portrait,
                                         QMarginsF(0, 0, 0, 0)))
        writer.setTitle(memo.document_title)
        writer.setCreator(memo.footer.split(" · ")[0] or "Lagwright")
        author = dict(memo.title_block.fields.items).get("Analyst", "")
        if author and author != "not given":
            writer.setAuthor(author)
        geo = page_geometry(page)
        flows = FlowBuilder(writer, arts).memo(memo, geo)
        pages = paginate(flows, geo)
        painter = QPainter()
        if not painter.begin(writer):
            raise MemoError(f"Cannot write the memo to '{target}': the PDF could not be started. "
                            "Choose another folder.")
        try:
            painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
            painter.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
            for index, placed in enumerate(pages):
                if progress is not None:
                    progress(index, len(pages), f"page {index + 1} of {len(pages)}")
                if index:
                    writer.newPage()
                _decorate(painter, geo, memo, index, len(pages), writer)
                for flow, y in placed:
                    painter.save()
                    painter.setClipRect(QRectF(0, 0, geo.width, geo.body_bottom + 2 * PT))
                    flow.draw(painter, geo.left, y, geo.text_width)
                    painter.restore()
        finally:
            painter.end()
        del writer
        if os.path.getsize(tmp) == 0:
            raise MemoError(f"Cannot write the memo to '{target}': nothing was written. Choose another folder.")
        publish(tmp, target)
    except OSError as exc:
        _remove(tmp)
        raise MemoError(f"Cannot write the memo to '{target}': {exc.strerror or exc}. Choose another folder.") from None
    except BaseException:
        _remove(tmp)
        raise
    return target


def _remove(path: str) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


# ------------------------------------------------------------------- whole job
def figure_sizes(page: str, memo: Memo) -> dict[str, tuple[int, int]]:
    """Pixel size at which each figure's pane is laid out, from its width on the page and its aspect."""
    geo = page_geometry(page)
    full = geo.text_width / PT
    half = (geo.text_width - GUTTER) / 2 / PT
    sizes = {}
    for section in memo.sections:
        for block in section.blocks:
            if isinstance(block, FigureRow):
                n = len(block.figures)
                for fig in block.figures:
                    width = full * FULL_SCALE if n == 1 else half * HALF_SCALE
                    sizes[fig.pane] = (int(round(width)), int(round(width * fig.aspect)))
    return sizes


def qt_versions() -> tuple[tuple[str, str], ...]:
    return (("Qt (runtime)", qVersion()),)


def make_memo(inputs: MemoInputs, path: str | os.PathLike, page: str = "a4", progress: Progress | None = None) -> Path:
    """Build the memo from ``inputs``, draw its figures off screen and write the PDF atomically.

    ``inputs.versions`` defaults to :func:`software_versions` with the Qt runtime added.
    ``progress(done, total, what)`` is called as the figures are drawn and the pages written.

    Raises
    ------
    LagwrightError
        A bad candidate id (:class:`~lagwright.core.errors.SessionError`) or a file that cannot be
        written (:class:`~lagwright.core.memo_content.MemoError`); nothing is left behind.
    """
    if not inputs.versions:
        from dataclasses import replace

        inputs = replace(inputs, versions=software_versions(qt_versions()))
    memo = build_memo(inputs)
    ev = inputs.evaluations.get(memo.figure_candidate)
    arts: dict[str, PaneArt] = {}
    sizes = figure_sizes(page, memo)
    drawing, writing = _share(progress, 0.0, 0.7), _share(progress, 0.7, 1.0)
    if ev is not None and ev.fit.ok:
        for done, (key, (w, h)) in enumerate(sizes.items()):
            drawing(done, len(sizes), f"drawing the figure of {key}")
            arts[key] = pane_art(key, ev, inputs.series, w, h)
    return write_memo_pdf(memo, arts, path, page, writing)


def _share(progress: Progress | None, start: float, end: float) -> Progress:
    """A progress callback that reports into the part [start, end] of ``progress``'s range."""

    def report(done: int, total: int, what: str) -> None:
        if progress is not None:
            fraction = start + (end - start) * (done / total if total else 1.0)
            progress(int(round(1000 * fraction)), 1000, what)

    return report
