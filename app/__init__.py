"""Lagwright's user-facing layer: the command line and the Qt window."""
