"""Invented demo series bundled with Lagwright (see README.md in this folder)."""
