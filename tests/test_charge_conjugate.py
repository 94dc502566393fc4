"""Charge-conjugate fields cc(psi) in the Lagrangian: vertices with C, flow reversal, bad chains.

Definitions (Denner, Eck, Hahn & Kuebbeck, Nucl. Phys. B 387 (1992) 467, eqs. 2.1-2.4, from
memory; common practice): psi^c = C bar(psi)^T, bar(psi^c) = psi^T C with C = i gamma^2 gamma^0,
C^T = C^-1 = -C; for anticommuting fields bar(x) G y = bar(y^c) G' x^c with G' = C G^T C^-1;
v = C ubar^T for the external spinors. The Dirac matrices and spinors here come from conftest
(sympy's mgamma), C is built from them.
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith as vs

HEADER = """\
theory t
parameters
  coupling y = 0.3
  mass ma = 1.0
  mass mb = 2.0
  mass ms = 5.0
fields
  dirac a mass ma
  dirac b mass mb
  majorana chi mass ms
  scalar S complex mass ms
  vector Z mass ms
lagrangian
  bar(a) (I gamma[mu] d[mu] - ma) a
  bar(b) (I gamma[mu] d[mu] - mb) b
  1/2 bar(chi) (I gamma[mu] d[mu] - ms) chi
  dag(d[mu] S) d[mu] S - ms^2 dag(S) S
  - 1/4 d[mu] Z[nu] d[mu] Z[nu] + 1/4 d[mu] Z[nu] d[nu] Z[mu] + 1/2 ms^2 Z[mu] Z[mu]
"""
Y = 0.3
ZERO3 = np.zeros((3, 4))


def _rules(extra: str) -> vs.Rules:
    return vs.load_model(text=HEADER + extra, name="t.vsm").derive(gauge="feynman")


def _c(dirac) -> np.ndarray:
    return 1j * dirac.GAMMA[2] @ dirac.GAMMA[0]


def test_a_chain_ending_on_cc_is_gamma_times_c(dirac) -> None:
    # -y dag(S) bar(a)_i (PL C)_ij bar(b)_j: the legs are the fields' own spinor indices, so the vertex
    # (bar(a), bar(b), dag(S)) is -i y (PL C)_ab; its h.c. -y S b^T C PR a gives (a, b, S) = i y ((C PR)^T)_ab,
    # the sign from ordering b before a (definitions above)
    rules = _rules("  - y dag(S) bar(a) PL cc(b) + h.c.\n")
    c = _c(dirac)
    assert np.allclose(rules.vertex("bar(a)", "bar(b)", "dag(S)").evaluate(ZERO3), -1j * Y * dirac.PL @ c)
    assert np.allclose(rules.vertex("a", "b", "S").evaluate(ZERO3), 1j * Y * (c @ dirac.PR).T)
    assert rules.vertex("bar(a)", "bar(b)", "dag(S)").text == "(-I*y)*chain(1, 2, PL*CC)"
    assert "cc(psi) = C bar(psi)^T" in rules.conventions


def test_the_vertex_read_along_its_fermion_flow(dirac, rng) -> None:
    # anti-S -> a b: with v = C ubar^T the chain ubar_a (PL C) ubar_b^T is ubar_a PL v_b (Denner et al.), and
    # sum |M|^2 = y^2 Tr[(pa + ma) PL (pb - mb) PR] = 2 y^2 pa.pb (common practice, no source)
    vertex = _rules("  - y dag(S) bar(a) PL cc(b) + h.c.\n").vertex("bar(a)", "bar(b)", "dag(S)")
    pa, pb = dirac.on_shell(rng, 1.0), dirac.on_shell(rng, 2.0)
    tensor = vertex.evaluate(np.array([-pa, -pb, pa + pb]))
    total = sum(abs(dirac.bar(dirac.u(pa, 1.0, r)) @ tensor @ dirac.bar(dirac.u(pb, 2.0, s))) ** 2
                for r in range(2) for s in range(2))
    assert total == pytest.approx(2 * Y**2 * dirac.dot(pa, pb).real, rel=1e-10)
    c = _c(dirac)
    for s in range(2):  # v = C ubar^T in the spinors of conftest, up to the phase convention of v
        v_from_u = c @ dirac.bar(dirac.u(pb, 2.0, s))
        assert np.allclose(dirac.slash(pb) @ v_from_u, -2.0 * v_from_u)


@pytest.mark.parametrize("one, other", [
    # bar(a) G cc(b) = bar(b) G' cc(a), G' = C G^T C^-1: PL' = PL, (gamma PL)' = -gamma PR
    ("  - y dag(S) bar(a) PL cc(b) + h.c.\n", "  - y dag(S) bar(b) PL cc(a) + h.c.\n"),
    ("  y Z[mu] bar(a) gamma[mu] PL cc(b) + h.c.\n", "  - y Z[mu] bar(b) gamma[mu] PR cc(a) + h.c.\n"),
    # two cc() ends: bar(cc(a)) gamma cc(b) = -bar(b) gamma a, a plain chain
    ("  y Z[mu] bar(cc(a)) gamma[mu] cc(b)\n", "  - y Z[mu] bar(b) gamma[mu] a\n"),
    # a Majorana field is its own charge conjugate: bar(chi) PL cc(b) = bar(b) PL chi
    ("  y S bar(chi) PL cc(b) + h.c.\n", "  y S bar(b) PL chi + h.c.\n"),
], ids=["scalar", "vector", "two-cc-ends", "majorana-end"])
def test_both_readings_of_a_chain_give_the_same_vertices(one: str, other: str, rng) -> None:
    first, second = _rules(one), _rules(other)
    assert [v.labels for v in first.vertices] == [v.labels for v in second.vertices]
    for v1, v2 in zip(first.vertices, second.vertices):
        momenta = rng.normal(size=(len(v1.legs), 4))
        assert np.allclose(v1.evaluate(momenta), v2.evaluate(momenta))
        assert v1.text == v2.text  # one canonical reading, not two spellings of one number


def test_two_cc_ends_leave_no_c_matrix() -> None:
    rules = _rules("  y Z[mu] bar(cc(a)) gamma[mu] cc(b)\n")
    assert "CC" not in rules.vertices[0].text
    assert not rules.uses_charge_conjugation


WEINBERG = """\
theory w
parameters
  coupling g = 0.6
  coupling c5 = 0.01
fields
  vector W
  dirac L in weak fundamental
  scalar H complex in weak fundamental
gauge
  weak SU(2) boson W strength WS coupling g
lagrangian
  -1/4 WS[mu,nu,a] WS[mu,nu,a]
  bar(L) I gamma[mu] D[mu] PL L
  dag(D[mu] H) D[mu] H
  c5 alt[i,j] alt[k,l] H[j] H[l] bar(cc(L[i])) PL L[k] + h.c.
"""


def test_the_dimension_five_operator(dirac, rng) -> None:
    # L = c5 eps_ij eps_kl H_j H_l L_i^T C PL L_k (bar(cc(L)) = L^T C); the vertex (L, L, H, H) is i c5 times the
    # sum over the 2 x 2 assignments of identical legs, a minus sign when the two L legs swap (Grassmann)
    rules = vs.load_model(text=WEINBERG, name="w.vsm").derive(gauge="feynman")
    vertex = rules.vertex("L", "L", "H", "H")
    eps = np.array([[0.0, 1.0], [-1.0, 0.0]])
    m = _c(dirac) @ dirac.PL
    expected = np.zeros((4, 2, 4, 2, 2, 2), dtype=complex)  # leg layout: (spinor, weak) twice, weak, weak
    for s1, i1, s2, i2, j3, j4 in np.ndindex(*expected.shape):
        for (si, ii), (sk, ik), sign in (((s1, i1), (s2, i2), 1), ((s2, i2), (s1, i1), -1)):
            # L_i on leg 1 and L_k on leg 2, or swapped (Grassmann sign); H_j and H_l on legs 3 and 4 both ways
            both_ways = eps[ii, j3] * eps[ik, j4] + eps[ii, j4] * eps[ik, j3]
            expected[s1, i1, s2, i2, j3, j4] += sign * m[si, sk] * both_ways
    assert np.allclose(vertex.evaluate(rng.normal(size=(4, 4))), 1j * 0.01 * expected)
    assert not any("error" == d.severity for d in vs.load_model(text=WEINBERG, name="w.vsm").check())


@pytest.mark.parametrize("term, line, column, message, hint", [
    ("  - y dag(S) bar(a) bar(cc(b))\n", 19, 21,
     "the chain bar(a) ... bar(cc(b)) cannot be assembled: both ends are rows",
     "bar(cc(b)) opens a chain; end the chain with a column: b, or cc(b) for the charge conjugate"),
    ("  - y dag(S) cc(b) a\n", 19, 14, "'cc(b)' closes a chain that nothing opened",
     "write bar(...) or bar(cc(...)) before it, as in bar(psi) PL cc(b)"),
    ("  - y dag(S) bar(cc(a)) PL\n", 19, 14, "bar(cc(a)) has no fermion after it",
     "close the bilinear with a fermion field, as in bar(psi) psi or bar(cc(psi)) chi"),
    ("  - y S cc(S) a\n", 19, 9, "cc() of the scalar 'S': only a fermion has a charge conjugate spinor",
     "for a boson write dag(S)"),
    ("  - y S cc(y) a\n", 19, 9, "cc(...) takes one fermion field",
     "write cc(psi) for the charge conjugate C bar(psi)^T, bar(cc(psi)) for its adjoint"),
    ("  - 1/2 ms bar(cc(a)) PR a + h.c.\n", 19, 3,
     "a Majorana mass for the Dirac field 'a': bar(cc(a)) ... a pairs 'a' with itself, which a Dirac propagator "
     "cannot hold",
     "declare the field majorana (the field a + cc(a)) and write its mass as - 1/2 M bar(a) a, or bar(cc(a)) "
     "with a majorana field; for a chiral field use weyl input"),
], ids=["two-rows", "column-first", "open-chain", "boson", "parameter", "dirac-majorana-mass"])
def test_chains_that_cannot_be_assembled(term: str, line: int, column: int, message: str, hint: str) -> None:
    with pytest.raises(vs.VertexsmithError) as info:
        vs.load_model(text=HEADER + term, name="t.vsm").derive(gauge="feynman")
    error = info.value
    assert (error.message, error.span.line, error.span.column, error.hint) == (message, line, column, hint)


def test_cc_of_a_multiplet_needs_its_index_written() -> None:
    text = WEINBERG.replace("bar(cc(L[i])) PL L[k]", "bar(cc(L)) PL L[k]")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="w.vsm")
    assert info.value.message == "cc(L) needs its weak index written out"
    assert (info.value.span.line, info.value.span.column) == (15, 34)
