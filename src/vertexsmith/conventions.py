"""Conventions stated only where they apply, as text the rules and every renderer read.

A leaf module (it imports nothing of ours), so that renderers can quote it without importing the
rules module, and the rules module without importing a renderer.
"""

from __future__ import annotations

# stated wherever the rules hold a propagator matrix of fields that mix
MIXING_TEXT = (
    "fields that mix have a propagator matrix D = i K^-1 over their block: the entry (i, j) joins the leg "
    "f_i of one vertex to the leg conj(f_j) (f_j for a real field) of another, p running from the "
    "conj(f_j) end to the f_i end"
)

__all__ = ["MIXING_TEXT"]
