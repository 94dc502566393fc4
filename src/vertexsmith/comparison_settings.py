"""Defaults of a comparison of hand-derived rules, shared by the API and the command line.

A module of their own, below both: `compare.py` (the engine) and `compare_command.py` (the
command-line face, which must not import the engine to build `vertexsmith --help`) read the same
numbers, so the help text and `compare_rules()` agree.
"""

POINTS = 4  # random phase-space points per rule
SEED = 20261201  # seed of the random points, so that a comparison is reproducible

__all__ = ["POINTS", "SEED"]
