"""The hermiticity check on legs of unusual shapes and on vertices too large to hold as arrays.

`check` compares each term with its hermitian conjugate through random contractions of every
axis (vertexsmith.check, `_NumericPoint.probes`), never through the dense tensor. These tests pin
its verdicts where the axes differ in length from leg to leg (adjoints of SU(2) and SU(3) in one
vertex, a fermion in fundamentals of both) and where the dense tensor would not fit in memory.

Expected verdicts from the hermiticity of the generators, (T^a)^dagger = T^a, and the reality
and antisymmetry of the structure constants f^{abc} (Peskin & Schroeder, ch. 15.4, from memory):
for real c, c X X Y Y of real fields is hermitian and i c X X Y Y anti-hermitian; f^{abc} X*_a X_b O_c
goes to f^{abc} X_a X*_b O_c = -f^{abc} X*_a X_b O_c, so it is anti-hermitian and i f^{abc} ...
hermitian; T_1^a T_2^b acting on different spaces commute, so c bar(psi) T_1^a T_2^b psi O_a S_b
is hermitian.
"""

from __future__ import annotations

import pytest

import vertexsmith as vs
from vertexsmith.check import check_model

from fuzzing.hostile import HOSTILE_HEAD

TWO_GROUPS = """theory adj "adjoint legs of two groups (invented numbers)"
parameters
  coupling k = 0.3
  coupling g = 0.7
  coupling gd = 0.5
  mass m = 1.0
gauge
  strong SU(3) boson G strength GS coupling g
  darkc SU(2) boson V strength VS coupling gd
fields
  vector G
  vector V
  scalar O real mass m in strong adjoint
  scalar Sig real mass m in darkc adjoint
  scalar X complex mass m in strong adjoint
  dirac psi mass m in strong fundamental in darkc fundamental
lagrangian
  -1/4 GS[mu,nu,a] GS[mu,nu,a] - 1/4 VS[mu,nu,a] VS[mu,nu,a]
  1/2 D[mu] O[a] D[mu] O[a] - 1/2 m^2 O[a] O[a]
  1/2 D[mu] Sig[a] D[mu] Sig[a] - 1/2 m^2 Sig[a] Sig[a]
  D[mu] dag(X[a]) D[mu] X[a] - m^2 dag(X[a]) X[a]
  bar(psi) (I gamma[mu] D[mu] - m) psi
"""
LINE = TWO_GROUPS.count("\n") + 1  # the line of the term under test
ANTI = "term is anti-hermitian: it changes sign under hermitian conjugation"
NONE = "term has no hermitian conjugate in the Lagrangian"


def _errors(text: str) -> list[tuple[int, str]]:
    return [(d.span.line, d.message) for d in check_model(vs.load_model(text=text, name="a.vsm"))
            if d.severity == "error"]


@pytest.mark.parametrize("term, verdict", [
    ("- k O[a] O[a] Sig[b] Sig[b]", None),
    ("- I k O[a] O[a] Sig[b] Sig[b]", ANTI),
    ("- k X[a] X[a] Sig[b] Sig[b]", NONE),
    ("- k X[a] X[a] Sig[b] Sig[b] + h.c.", None),
    ("- k dag(X[a]) X[a] Sig[b] Sig[b]", None),
    ("- k bar(psi) T_strong[a] T_darkc[b] psi O[a] Sig[b]", None),
    ("- I k bar(psi) T_strong[a] T_darkc[b] psi O[a] Sig[b]", ANTI),
    ("- k f_strong[a,b,c] dag(X[a]) X[b] O[c]", ANTI),
    ("- I k f_strong[a,b,c] dag(X[a]) X[b] O[c]", None),
    ("- k bar(psi) T_strong[a] psi X[a]", NONE),
    ("- k bar(psi) T_strong[a] psi X[a] + h.c.", None),
], ids=["real-adjoints", "i-real-adjoints", "complex-adjoint-alone", "complex-adjoint-hc", "complex-adjoint-pair",
        "two-generators", "i-two-generators", "f-complex", "i-f-complex", "yukawa-alone", "yukawa-hc"])
def test_adjoint_legs_of_two_groups_get_the_right_verdict(term: str, verdict: str | None) -> None:
    expected = [] if verdict is None else [(LINE, verdict)]
    assert _errors(TWO_GROUPS + "  " + term + "\n") == expected


@pytest.mark.parametrize("term, verdict", [("c (G[mu,a] G[mu,a])^2", None), ("I c (G[mu,a] G[mu,a])^2", ANTI)])
def test_a_vertex_too_large_for_an_array_gets_its_verdict(term: str, verdict: str | None) -> None:
    # four SU(10) adjoint vector legs: (4 x 99)^4 = 2.4e10 numbers as a dense tensor, over the
    # array budget (tests/test_budgets.py), yet the contracted comparison decides it
    text = HOSTILE_HEAD.replace("SU(3)", "SU(10)") + "  " + term + "\n"
    expected = [] if verdict is None else [(HOSTILE_HEAD.count("\n") + 1, verdict)]
    assert _errors(text) == expected
