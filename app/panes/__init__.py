"""Lagwright's plot panes: small widgets that each draw one view of a candidate.

Every pane derives from :class:`ResidualPane` (title, status, preview badge,
message page, theme) and follows one :class:`ResidualSelection`, so a
residual picked in one pane lights up in all of them.
"""

from .base import ResidualPane, observation_x
from .correlation import CorrelationPane
from .histogram import ResidualHistogramPane
from .identification import IdentificationPane
from .periodogram import CumulativePeriodogramPane
from .quantile import NormalQuantilePane
from .roots import RootMapPane
from .selection import ResidualSelection
from .trace import ResidualTracePane

__all__ = [
    "CorrelationPane",
    "CumulativePeriodogramPane",
    "IdentificationPane",
    "NormalQuantilePane",
    "ResidualHistogramPane",
    "ResidualPane",
    "ResidualSelection",
    "ResidualTracePane",
    "RootMapPane",
    "observation_x",
]
