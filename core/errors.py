"""Errors that carry a message meant for the user.

Every error raised on purpose by :mod:`lagwright.core` derives from
:class:`LagwrightError`. Its text names what is wrong and what to do, in one
or two plain sentences, so the command line and the window can show it as it
is, without a traceback.
"""

from __future__ import annotations


class LagwrightError(Exception):
    """Base class of every deliberate, user-facing error in Lagwright."""


class InputError(LagwrightError, ValueError):
    """A data file or a column in it cannot be used (unreadable, wrong type, too short, ...)."""


class SpecError(LagwrightError, ValueError):
    """A model specification is not valid (bad lag, constant that does not fit d and D, ...)."""


class FitError(LagwrightError, RuntimeError):
    """A model could not be fitted at all (the data cannot support it)."""


class ComparisonError(LagwrightError, ValueError):
    """Two candidates cannot be compared (different data, differencing or transform)."""


class SessionError(LagwrightError, ValueError):
    """A session file is missing, corrupt or of an unknown schema version."""
