"""Runaway inputs stop with a clear, positioned error in well under a minute, never a hang."""

from __future__ import annotations

import time

import pytest

import vertexsmith as vs

HEAD = """theory runaway
parameters
  coupling c = 1
  mass m = 1
fields
  scalar phi real mass m
  scalar chi real mass m
  dirac psi mass m
  vector V mass m
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  1/2 d[mu] chi d[mu] chi - 1/2 m^2 chi^2
  bar(psi) (I gamma[mu] d[mu] - m) psi
  -1/2 d[mu] V[nu] d[mu] V[nu] + 1/2 d[mu] V[nu] d[nu] V[mu] + 1/2 m^2 V[mu] V[mu]
"""


@pytest.mark.parametrize("term, message", [
    ("c (phi + chi + phi chi + d[mu] phi d[mu] chi + phi^2 + chi^2 + 1)^9",
     "expands into more than"),
    ("c (bar(psi) psi)^6", "leg assignments for one vertex"),
    ("c (V[mu] V[mu])^6", "leg assignments for one vertex"),
    ("c phi^13", "field powers from 1 to 12"),
    ("c (phi chi)^7", "more than 12 fields"),
], ids=["many-monomials", "many-fermions", "many-vectors", "huge-power", "too-many-legs"])
def test_runaway_terms_stop_quickly_at_their_line(term: str, message: str) -> None:
    # common practice, no source: a tool must refuse work it cannot finish, and say where
    start = time.perf_counter()
    with pytest.raises(vs.VertexsmithError) as info:
        vs.load_model(text=HEAD + f"  {term}\n", name="big.vsm").derive()
    elapsed = time.perf_counter() - start
    assert message in info.value.message
    assert info.value.span.line == 15
    assert "big.vsm:15:" in str(info.value)
    assert elapsed < 30
