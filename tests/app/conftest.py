"""Set-up shared by the Qt tests: the offscreen platform, before anything imports Qt.

Widgets are made per test through pytest-qt's ``qtbot``. PySide6 6.12.0 is
excluded in pyproject.toml for CPython < 3.12: it drops a reference to None on
every void call there, and the interpreter aborts after some 10^4 calls.
"""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
