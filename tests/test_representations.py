"""Antifundamental matter under D[mu], the dipole operator sigma[mu,nu], chiral propagators.

These rules were once only checked for "non-zero" or for the fundamental representation; a
sign or transposition error in any of them would change real amplitudes. Each test compares
`evaluate()` with numbers built here, independently of the engine:

- SU(3) generators from Gell-Mann's matrices typed in below (T^a = lambda^a / 2; M. Gell-Mann,
  Phys. Rev. 125 (1962) 1067, from memory), not from `vertexsmith.groups`;
- Dirac matrices from `sympy.physics.matrices.mgamma` through conftest.

The antifundamental representation carries the generators -(T^a)^T = -(T^a)^* (common
practice, no source): with D_mu = d_mu - i g Tbar^a K^a_mu and incoming momenta, the vertices
of L = dag(D phi) D phi + bar(q) (i gamma.D - m) q are (derived by hand; the fundamental case is
Peskin & Schroeder Fig. 16.7 and problem 9.1, from memory)

    dag(phi)_i (p1), phi_j (p2), K^a_mu:  i g (p2 - p1)^mu (Tbar^a)_{ij}
    dag(phi)_i, phi_j, K^a_mu, K^b_nu:    i g^2 g^{mu nu} {Tbar^a, Tbar^b}_{ij}
    bar(q)_i, q_j, K^a_mu:                i g gamma^mu (Tbar^a)_{ij}
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith as vs

S3 = np.sqrt(3.0)
GELL_MANN = np.array([
    [[0, 1, 0], [1, 0, 0], [0, 0, 0]],
    [[0, -1j, 0], [1j, 0, 0], [0, 0, 0]],
    [[1, 0, 0], [0, -1, 0], [0, 0, 0]],
    [[0, 0, 1], [0, 0, 0], [1, 0, 0]],
    [[0, 0, -1j], [0, 0, 0], [1j, 0, 0]],
    [[0, 0, 0], [0, 0, 1], [0, 1, 0]],
    [[0, 0, 0], [0, 0, -1j], [0, 1j, 0]],
    [[1 / S3, 0, 0], [0, 1 / S3, 0], [0, 0, -2 / S3]],
], dtype=complex)
T = GELL_MANN / 2
TBAR = -np.transpose(T, (0, 2, 1))  # generators of the antifundamental, -(T^a)^T

GK, DN, MN = 0.9, 0.002, 90.0  # the numbers of models/dark_dipole.vsm (invented)


@pytest.fixture(scope="module")
def dipole_rules() -> vs.Rules:
    return vs.load_model(vs.example("dark_dipole")).derive(gauge="feynman")


def test_antifundamental_generators_satisfy_the_algebra() -> None:
    # [Tbar^a, Tbar^b] = i f^{abc} Tbar^c with the f of the fundamental (common practice, no source):
    # a check that TBAR above really is a representation, not a sign away from one.
    f = np.real(-2j * np.einsum("aij,bjk,cki->abc", T, T, T) + 2j * np.einsum("bij,ajk,cki->abc", T, T, T))
    commutator = np.einsum("aij,bjk->abik", TBAR, TBAR) - np.einsum("bij,ajk->abik", TBAR, TBAR)
    assert np.allclose(commutator, 1j * np.einsum("abc,cik->abik", f, TBAR))
    assert not np.allclose(TBAR, T)


def test_antifundamental_scalar_current(dipole_rules: vs.Rules, rng: np.random.Generator) -> None:
    vertex = dipole_rules.vertex("dag(phi)", "phi", "K")
    p = rng.normal(size=(3, 4))
    p[2] = -p[0] - p[1]
    got = vertex.evaluate(p)
    assert got.shape == (3, 3, 4, 8)
    expected = 1j * GK * np.einsum("m,aij->ijma", p[1] - p[0], TBAR)
    assert np.allclose(got, expected)
    # the mistake this guards against: the fundamental generator in the antifundamental's place
    assert not np.allclose(got, 1j * GK * np.einsum("m,aij->ijma", p[1] - p[0], T))


def test_antifundamental_scalar_seagull(dipole_rules: vs.Rules, dirac, rng: np.random.Generator) -> None:
    vertex = dipole_rules.vertex("dag(phi)", "phi", "K", "K")
    got = vertex.evaluate(rng.normal(size=(4, 4)))
    anticommutator = np.einsum("aij,bjk->abik", TBAR, TBAR) + np.einsum("bij,ajk->abik", TBAR, TBAR)
    expected = 1j * GK**2 * np.einsum("mn,abik->ikmanb", dirac.ETA, anticommutator)
    assert np.allclose(got, expected)


def test_antifundamental_fermion_current(dipole_rules: vs.Rules, dirac) -> None:
    vertex = dipole_rules.vertex("bar(q)", "q", "K")
    got = vertex.evaluate(np.zeros((3, 4)))
    assert got.shape == (4, 3, 4, 3, 4, 8)
    expected = 1j * GK * np.einsum("mxy,aij->xiyjma", dirac.GAMMA, TBAR)
    assert np.allclose(got, expected)


def test_magnetic_dipole_vertex(dipole_rules: vs.Rules, dirac, rng: np.random.Generator) -> None:
    # L = -(dn/2) bar(n) sigma^{mu nu} n F_{mu nu} = -dn bar(n) sigma^{mu nu} n d_mu Y_nu; with d -> -i p3
    # the vertex is i * (i dn sigma^{mu nu} p3_mu) = -dn sigma^{mu nu} p3_mu, nu the photon's index
    # (derived by hand; sigma = (i/2)[gamma, gamma], common practice, no source)
    vertex = dipole_rules.vertex("bar(n)", "n", "Y")
    p = rng.normal(size=(3, 4))
    p[2] = -p[0] - p[1]
    expected = -DN * np.einsum("m,mnxy->xyn", dirac.lower(p[2]), dirac.SIGMA)
    assert np.allclose(vertex.evaluate(p), expected)


def test_dipole_vertex_is_transverse(dipole_rules: vs.Rules, dirac, rng: np.random.Generator) -> None:
    # p3_nu sigma^{mu nu} p3_mu = 0 by antisymmetry: the dipole coupling is gauge invariant by itself
    # (common practice, no source)
    p = rng.normal(size=(3, 4))
    p[2] = -p[0] - p[1]
    got = dipole_rules.vertex("bar(n)", "n", "Y").evaluate(p)
    assert np.allclose(np.einsum("xyn,n->xy", got, dirac.lower(p[2])), 0)
    assert np.abs(got).max() > 1e-4


CHIRAL = """\
theory chiral
fields
  dirac nl
  dirac nr
lagrangian
  bar(nl) I gamma[mu] PL d[mu] nl
  bar(nr) I gamma[mu] PR d[mu] nr
"""


@pytest.mark.parametrize("field, projector", [("nl", "PL"), ("nr", "PR")])
def test_chiral_massless_propagator(field: str, projector: str, dirac, rng: np.random.Generator) -> None:
    # <psi_L bar(psi_L)> = PL (i pslash / p^2) PR = i PL pslash / p^2 (common practice, no source)
    rules = vs.load_model(text=CHIRAL, name="chiral.vsm").derive()
    p = rng.normal(size=4)
    proj = getattr(dirac, projector)
    expected = 1j * proj @ dirac.slash(p) / dirac.dot(p, p)
    assert np.allclose(rules.propagator(field).evaluate(p), expected)


@pytest.mark.parametrize("rank, name, meaning", [(2, "doublet", None), (3, "triplet", None), (4, "triplet", "unknown")])
def test_names_by_dimension_depend_on_the_group(rank: int, name: str, meaning: str | None) -> None:
    # "triplet" is the fundamental of SU(3) but names no representation of SU(4) (common practice,
    # no source): the latter is a positioned error, not a crash in the name lookup
    text = (f"theory t\nparameters\n  coupling g = 0.5\ngauge\n  big SU({rank}) boson B strength BS coupling g\n"
            f"fields\n  vector B\n  scalar x complex in big {name}\nlagrangian\n  -1/4 BS[mu,nu,a] BS[mu,nu,a]\n"
            "  dag(D[mu] x) D[mu] x\n")
    if meaning is None:
        assert vs.load_model(text=text, name="t.vsm").fields["x"].representations
        return
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="t.vsm")
    assert (info.value.span.line, info.value.span.column) == (8, 20)
    assert info.value.message == f"unknown representation '{name}' of SU({rank})"



def test_a_gauge_boson_declared_in_its_own_adjoint_is_refused_at_the_declaration() -> None:
    # the boson's adjoint comes with the gauge line; declared again it once doubled the group delta of the
    # propagator, and `check` crashed on it
    text = ("theory t\nparameters\n  coupling gs = 1.0\ngauge\n  color SU(3) boson G strength GS coupling gs\n"
            "fields\n  vector G in color adjoint\nlagrangian\n  -1/4 GS[mu,nu,a] GS[mu,nu,a]\n")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="t.vsm")
    assert (info.value.span.line, info.value.span.column) == (7, 12)
    assert info.value.message == ("'G' is the gauge boson of 'color': its adjoint representation comes with the "
                                  "gauge declaration")
    assert info.value.hint == "remove 'in color adjoint'"
