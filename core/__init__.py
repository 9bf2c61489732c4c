"""Lagwright's computation layer: pure Python over numpy, scipy and statsmodels.

Nothing below this package imports Qt, pyqtgraph or ``lagwright.app``; a test
(``tests/test_import_contract.py``) enforces it.
"""
