"""Probe laws (one per kind) and the finite-size probe."""
