"""Lagwright's own colours, pens and fonts for the panes.

The palette is ours: a teal for data, amber for reference bands, coral for
what needs attention (outliers, the selected residual), slate for reference
lines. Colours are chosen to stay readable on both light and dark system
themes; the pane background follows the system palette.
"""

from __future__ import annotations

from dataclasses import dataclass

DATA = "#1f7a8c"          # residuals, bars, points
DATA_SOFT = "#8cc7d1"     # histogram fill, secondary series
BAND = "#e0a526"          # ±2/√n, ±2σ, KS bands, confidence envelopes
REFERENCE = "#6b7a89"     # reference lines (normal curve, y = x, j/q line, unit circle)
ATTENTION = "#d1495b"     # outliers, selection, failures
SECOND = "#7b5ea7"        # the second candidate in a compare view
GOOD = "#4c9a5a"          # verdict "white"
DOUBT = "#c98b1b"         # verdict "doubtful"
BAD = "#c23b4e"           # verdict "not white"
PREVIEW = "#9aa5b1"       # drawn while the exact fit is still running

VERDICT_COLOURS = {"white": GOOD, "doubtful": DOUBT, "not white": BAD}


@dataclass(frozen=True)
class PaneColours:
    """Background and foreground for plot panes, derived from the system palette."""

    background: str
    foreground: str


def pane_colours(dark: bool) -> PaneColours:
    return PaneColours("#1e2227", "#d8dee4") if dark else PaneColours("#ffffff", "#2b3137")


def is_dark_palette(palette) -> bool:
    """Whether a QPalette is dark (window colour lightness below one half)."""
    colour = palette.window().color()
    return colour.lightnessF() < 0.5
