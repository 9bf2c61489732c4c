"""Command-line options for importing data: the same choices as the import dialog.

``add_import_options`` adds them to a subcommand's "data" argument group;
``options_from_args`` turns the parsed arguments into an
:class:`~lagwright.core.import_options.ImportOptions`. A bad value is
reported by argparse in one line (exit status 2), with the message of
:class:`ImportOptions` saying what is accepted.
"""

from __future__ import annotations

import argparse

from lagwright.core.errors import InputError
from lagwright.core.import_options import CLI_FIELDS, ImportOptions

__all__ = ["add_import_options", "options_from_args", "IMPORT_FIELDS"]

#: argparse destination -> ImportOptions field.
IMPORT_FIELDS = {name: name for name in CLI_FIELDS}


def _checked(field: str):
    """An argparse ``type`` that validates one ImportOptions field and returns the text."""

    def check(text: str) -> str:
        try:
            ImportOptions(**{field: text})
        except InputError as exc:
            raise argparse.ArgumentTypeError(str(exc)) from None
        return text

    check.__name__ = field  # argparse names the type in its messages
    return check


def add_import_options(group) -> None:
    """Add ``--decimal``, ``--thousands``, ``--delimiter``, ``--timezone``, ``--gaps``, ``--duplicates``,
    ``--non-numeric``, ``--aggregate`` and ``--frequency`` to an argparse group."""
    group.add_argument("--decimal", type=_checked("decimal"), metavar="MARK",
                       help="decimal mark of numbers written as text: '.' or ',' (default: detected)")
    group.add_argument("--thousands", type=_checked("thousands"), metavar="SEP",
                       help="thousands separator: none, ',', '.', space or apostrophe (default: detected)")
    group.add_argument("--delimiter", type=_checked("delimiter"), metavar="CHAR",
                       help="field delimiter of a text table: ',', ';', tab, '|', space (default: detected)")
    group.add_argument("--timezone", type=_checked("timezone"), metavar="utc|local",
                       help="stamps with a UTC offset: convert to UTC, or keep the local clock time "
                            "(default: local clock if one offset, UTC if several)")
    group.add_argument("--gaps", type=_checked("gaps"), metavar="HOW",
                       help="periods missing from a regular calendar: leave (as missing values), interpolate, "
                            "ffill, or value:NUMBER (default: rows kept as read, no frequency)")
    group.add_argument("--duplicates", type=_checked("duplicates"), metavar="HOW",
                       help="repeated time stamps: refuse (default), or merge by mean, sum or last")
    group.add_argument("--non-numeric", dest="non_numeric", type=_checked("non_numeric"), metavar="HOW",
                       help="cells of the value column that are not numbers: refuse (default) or missing")
    group.add_argument("--aggregate", type=_checked("aggregate"), metavar="FREQ:HOW",
                       help="combine readings into a coarser frequency, e.g. h:mean or D:sum")
    group.add_argument("--frequency", type=_checked("frequency"), metavar="FREQ",
                       help="set the frequency: h, D, W, MS, QS, YS, a multiple such as 15min, or seconds")


def options_from_args(args) -> ImportOptions:
    """The ImportOptions of parsed arguments (fields not on the command line keep their defaults)."""
    given = {field: getattr(args, dest) for dest, field in IMPORT_FIELDS.items()
             if getattr(args, dest, None) is not None}
    return ImportOptions(**given)
