"""core/ never imports Qt, pyqtgraph or the app layer (design rule: thin views over a Qt-free core)."""

from __future__ import annotations

import ast
import pathlib
import subprocess
import sys

CORE = pathlib.Path(__file__).resolve().parents[1] / "core"
FORBIDDEN = ("PySide6", "PyQt5", "PyQt6", "shiboken6", "pyqtgraph", "lagwright.app")


def test_no_forbidden_import_statements():
    offenders = []
    for path in CORE.glob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module:
                names = [node.module]
            offenders += [f"{path.name}: {n}" for n in names if n.startswith(FORBIDDEN)]
    assert not offenders, offenders


def test_core_runs_with_qt_blocked():
    # Import every core module and fit a model in a fresh interpreter where
    # importing any Qt or pyqtgraph module raises.
    code = f"""
import sys, importlib, pkgutil
class Block:
    def find_spec(self, name, path=None, target=None):
        if name.split('.')[0] in {('PySide6', 'PyQt5', 'PyQt6', 'shiboken6', 'pyqtgraph')!r} or name.startswith('lagwright.app'):
            raise ImportError('blocked: ' + name)
        return None
sys.meta_path.insert(0, Block())
import lagwright.core
for info in pkgutil.iter_modules(lagwright.core.__path__):
    importlib.import_module('lagwright.core.' + info.name)
import numpy as np
from lagwright.core.series import Series
from lagwright.core.spec import ModelSpec
from lagwright.core.evaluate import evaluate
ev = evaluate(Series(np.random.default_rng(0).standard_normal(100)), ModelSpec(ar=(1,), constant='mean'))
assert ev.fit.ok and ev.diagnostics is not None
print('ok')
"""
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip().endswith("ok")
