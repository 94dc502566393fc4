"""Fermion vertices, Grassmann signs, hermitian conjugation and the Dirac propagator.

Conventions under test (DESIGN.md): for legs bar(psi) (spinor index alpha) and psi (beta) the
factor is the matrix Gamma_(alpha beta); L = bar(psi) Gamma psi gives i Gamma; the Grassmann
sign is the parity of the permutation bringing the monomial's fermion factors into leg order;
Dirac representation, gamma5 = i g0 g1 g2 g3, PL = (1 - gamma5)/2, PR = (1 + gamma5)/2,
sigma^{mu nu} = (i/2)[gamma^mu, gamma^nu]. Reference matrices come from conftest.py (sympy's
mgamma), never from vertexsmith.numeric.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
import sympy

from vertexsmith.rules import P2


FERMION_PAIR = """
theory t
parameters
  mass m = 1.0
  coupling g = 0.6
  coupling complex y = 0.3 + 0.4 I
fields
  scalar phi real mass m
  scalar s complex mass m
  dirac chi mass m
  dirac psi mass m
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  dag(d[mu] s) d[mu] s - m^2 dag(s) s
  bar(chi) (I gamma[mu] d[mu] - m) chi
  bar(psi) (I gamma[mu] d[mu] - m) psi
"""


def _with(term: str) -> str:
    return FERMION_PAIR.lstrip("\n") + f"  {term}\n"


# ---------------------------------------------------------------- Yukawa couplings

def test_shipped_yukawa_vertex_is_minus_i_g_times_identity(shipped, dirac, sym):
    # Peskin & Schroeder ch. 4 (Yukawa theory, from memory): L_int = -g phi bar(psi) psi, vertex -i g.
    model = shipped("yukawa")
    vertex = model.derive().vertex("bar(psi)", "psi", "phi")
    assert sympy.simplify(vertex.factor + sympy.I * sym(model, "g")) == 0
    value = vertex.evaluate(np.zeros((3, 4)))
    assert value.shape == (4, 4)
    np.testing.assert_allclose(value, -0.3j * dirac.ONE, atol=1e-12)  # g = 0.3 in the file
    np.testing.assert_allclose(vertex.evaluate(np.zeros((3, 4)), values={"g": 1.7}), -1.7j * dirac.ONE, atol=1e-12)


def test_pseudoscalar_yukawa_is_g_gamma5(build, dirac):
    # L = -i g phi bar(psi) gamma5 psi (hermitian: (bar psi g5 psi)^dag = -bar psi g5 psi) gives
    # i x (-i g) gamma5 = g gamma5 (Peskin & Schroeder problem 4.x pseudoscalar Yukawa, from memory).
    vertex = build(_with("-I g phi bar(psi) gamma5 psi")).derive().vertex("bar(psi)", "psi", "phi")
    np.testing.assert_allclose(vertex.evaluate(np.zeros((3, 4))), 0.6 * dirac.GAMMA5, atol=1e-12)


@pytest.mark.parametrize("matrix, reference", [
    ("PL", "PL"), ("PR", "PR"), ("gamma5", "GAMMA5"), ("PL PL", "PL"), ("PL gamma5", "-PL"),
    ("PR gamma5", "PR"), ("gamma5 gamma5", "ONE"),
], ids=lambda x: x.replace(" ", "."))
def test_chiral_matrices_in_a_scalar_bilinear(build, dirac, matrix, reference):
    # Projector algebra (common practice, no source): PL PL = PL, PL g5 = -PL, PR g5 = PR, g5^2 = 1.
    vertex = build(_with(f"-g phi bar(chi) {matrix} psi")).derive().vertex("bar(chi)", "psi", "phi")
    sign, name = (-1, reference[1:]) if reference.startswith("-") else (1, reference)
    np.testing.assert_allclose(vertex.evaluate(np.zeros((3, 4))), -0.6j * sign * getattr(dirac, name), atol=1e-12)


def test_opposite_projectors_vanish(build):
    # PL PR = 0: the term has no vertex at all (common practice, no source).
    rules = build(_with("-g phi bar(chi) PL PR psi")).derive()
    assert all(set(v.labels) != {"bar(chi)", "psi", "phi"} for v in rules.vertices)


def test_projector_moves_through_gamma(build, dirac, rng):
    # PR gamma^mu = gamma^mu PL (common practice, no source): both spellings give the same numbers.
    one = build(_with("-g d[mu] phi bar(chi) PR gamma[mu] psi")).derive().vertex("bar(chi)", "psi", "phi")
    two = build(_with("-g d[mu] phi bar(chi) gamma[mu] PL psi")).derive().vertex("bar(chi)", "psi", "phi")
    p = rng.normal(size=(3, 4))
    # i x (-g) x (-i p3_mu) gamma^mu PL = -g pslash3 PL
    expected = -0.6 * dirac.slash(p[2]) @ dirac.PL
    np.testing.assert_allclose(one.evaluate(p), expected, atol=1e-12)
    np.testing.assert_allclose(two.evaluate(p), expected, atol=1e-12)


# ---------------------------------------------------------------- derivative (axial) couplings

def test_axial_derivative_coupling_is_c_over_f_pslash_gamma5(shipped, dirac, rng):
    # axion_like.vsm: cf/(2 fa) (d_mu a) bar(f) gamma^mu gamma5 f. The derivative on leg a (p3)
    # gives -i p3_mu, so the vertex is i x cf/(2 fa) x (-i) pslash3 gamma5 = cf/(2 fa) pslash3 gamma5
    # (derivative rule as in Peskin & Schroeder ch. 4, from memory).
    rules = shipped("axion_like").derive()
    vertex = rules.vertex("bar(f)", "f", "a")
    values = {"cf": 0.8, "fa": 2.0}
    for _ in range(3):
        p = rng.normal(size=(3, 4))
        expected = 0.8 / (2 * 2.0) * dirac.slash(p[2]) @ dirac.GAMMA5
        np.testing.assert_allclose(vertex.evaluate(p, values=values), expected, atol=1e-12)
    # the other legs' momenta do not enter
    p = rng.normal(size=(3, 4))
    q = p.copy()
    q[:2] = rng.normal(size=(2, 4))
    np.testing.assert_allclose(vertex.evaluate(p, values=values), vertex.evaluate(q, values=values), atol=1e-12)


def test_derivative_on_the_fermion_uses_the_fermion_momentum(build, dirac, rng):
    # L = g phi bar(chi) i gamma^mu d_mu psi: derivative on psi (leg 2): i x g x i x (-i) pslash2
    # = i g pslash2 (derivative rule, Peskin & Schroeder ch. 4, from memory).
    vertex = build(_with("g phi bar(chi) I gamma[mu] d[mu] psi")).derive().vertex("bar(chi)", "psi", "phi")
    p = rng.normal(size=(3, 4))
    np.testing.assert_allclose(vertex.evaluate(p), 0.6j * dirac.slash(p[1]), atol=1e-12)


# ---------------------------------------------------------------- four-fermion signs

FOUR = """
theory t
parameters
  mass m = 1.0
  coupling G = 0.9
fields
  dirac a mass m
  dirac b mass m
lagrangian
  bar(a) (I gamma[mu] d[mu] - m) a
  bar(b) (I gamma[mu] d[mu] - m) b
"""


def _delta_product(first: tuple[int, int], second: tuple[int, int], n: int = 4) -> np.ndarray:
    """T[s1..s4] = delta(s_first) delta(s_second) for 1-based leg positions."""
    eye = np.eye(4)
    letters = "abcd"
    sub = f"{letters[first[0] - 1]}{letters[first[1] - 1]},{letters[second[0] - 1]}{letters[second[1] - 1]}->abcd"
    return np.einsum(sub, eye, eye).astype(complex)


def test_four_fermion_in_written_leg_order_has_sign_plus(build):
    # L = -G (bar a a)(bar b b), legs (bar(a), a, bar(b), b): fields already in leg order, sign +,
    # vertex = -i G [1]_{12} [1]_{34} (Grassmann ordering, e.g. Denner et al. NPB 387 (1992) 467).
    vertex = build(FOUR.lstrip("\n") + "  -G (bar(a) a) (bar(b) b)\n").derive().vertex("bar(a)", "a", "bar(b)", "b")
    value = vertex.evaluate(np.zeros((4, 4)))
    assert value.shape == (4, 4, 4, 4)
    np.testing.assert_allclose(value, -0.9j * _delta_product((1, 2), (3, 4)), atol=1e-12)


def test_four_fermion_swapping_legs_flips_the_grassmann_sign(build):
    # Legs (bar(a), b, bar(b), a): bringing (bar a, a, bar b, b) into this order is the
    # permutation (1 4 3 2), odd -> sign -: vertex = +i G [1]_{14} [1]_{32}.
    rules = build(FOUR.lstrip("\n") + "  -G (bar(a) a) (bar(b) b)\n").derive()
    vertex = rules.vertex("bar(a)", "b", "bar(b)", "a")
    assert vertex.labels == ("bar(a)", "b", "bar(b)", "a")
    np.testing.assert_allclose(vertex.evaluate(np.zeros((4, 4))), +0.9j * _delta_product((1, 4), (3, 2)), atol=1e-12)
    # and it is the same vertex: transposing the axes back and applying the sign recovers it
    original = rules.vertex("bar(a)", "a", "bar(b)", "b").evaluate(np.zeros((4, 4)))
    np.testing.assert_allclose(vertex.evaluate(np.zeros((4, 4))), -original.transpose(0, 3, 2, 1), atol=1e-12)


def test_four_fermion_signs_for_every_leg_order(build):
    # For any leg order, the array equals the canonical one with axes permuted, times the parity
    # of the permutation of the (all Grassmann) legs (common practice, no source).
    rules = build(FOUR.lstrip("\n") + "  -G (bar(a) gamma[mu] PL a) (bar(b) gamma[mu] PL b)\n").derive()
    labels = ("bar(a)", "a", "bar(b)", "b")
    reference = rules.vertex(*labels).evaluate(np.zeros((4, 4)))
    for order in itertools.permutations(range(4)):
        asked = [labels[k] for k in order]
        inversions = sum(1 for i in range(4) for j in range(i + 1, 4) if order[i] > order[j])
        value = rules.vertex(*asked).evaluate(np.zeros((4, 4)))
        np.testing.assert_allclose(value, (-1) ** inversions * reference.transpose(order), atol=1e-12)


def test_identical_fermions_give_the_antisymmetrised_pair(build):
    # L = -G/2 (bar a a)(bar a a), legs (bar(a), a, bar(a), a). Four assignments; the two that
    # pair (1,2)(3,4) have sign +, the two that pair (1,4)(3,2) are odd permutations, sign -:
    #     vertex = i (-G/2) x 2 x ([1]_12 [1]_34 - [1]_14 [1]_32) = -i G (C12 C34 - C14 C32)
    # (Fierz-type exchange sign, common practice, no source).
    rules = build("""
        theory t
        parameters
          mass m = 1.0
          coupling G = 0.9
        fields
          dirac a mass m
        lagrangian
          bar(a) (I gamma[mu] d[mu] - m) a
          -G/2 (bar(a) a) (bar(a) a)
        """).derive()
    vertex = rules.vertex("bar(a)", "a", "bar(a)", "a")
    expected = -0.9j * (_delta_product((1, 2), (3, 4)) - _delta_product((1, 4), (3, 2)))
    np.testing.assert_allclose(vertex.evaluate(np.zeros((4, 4))), expected, atol=1e-12)


def test_identical_fermion_current_current_with_explicit_gammas(build, dirac):
    # L = -G/2 (bar a gamma^mu a)(bar a gamma_mu a): as above with gamma^mu (x) gamma_mu:
    #     -i G (g^mu_{12} g_mu{34} - g^mu_{14} g_mu{32})   (common practice, no source)
    rules = build("""
        theory t
        parameters
          mass m = 1.0
          coupling G = 0.9
        fields
          dirac a mass m
        lagrangian
          bar(a) (I gamma[mu] d[mu] - m) a
          -G/2 (bar(a) gamma[mu] a) (bar(a) gamma[mu] a)
        """).derive()
    vertex = rules.vertex("bar(a)", "a", "bar(a)", "a")
    gl = np.einsum("mn,nij->mij", dirac.ETA, dirac.GAMMA)  # gamma_mu
    direct = np.einsum("mab,mcd->abcd", dirac.GAMMA, gl)
    exchange = np.einsum("mad,mcb->abcd", dirac.GAMMA, gl)
    np.testing.assert_allclose(vertex.evaluate(np.zeros((4, 4))), -0.9j * (direct - exchange), atol=1e-12)


def test_shipped_contact_model_four_fermion_vertex(shipped, dirac):
    # contact.vsm: L = -GX/sqrt2 (bar chi gamma^mu PL n)(bar n gamma_mu PL chi)
    #                  - cS (bar chi PR n)(bar n PR chi) + h.c.
    # Legs (bar(chi), chi, bar(n), n): fields (bar chi, n, bar n, chi) sit on legs (1, 4, 3, 2), an
    # odd permutation, sign -. Hence (common practice, no source):
    #   i GX/sqrt2 [g^mu PL]_14 [g_mu PL]_32 + i cS [PR]_14 [PR]_32 + i conj(cS) [PL]_14 [PL]_32,
    # the last from (bar chi PR n bar n PR chi)^dag = bar chi PL n bar n PL chi.
    vertex = shipped("contact").derive().vertex("bar(chi)", "chi", "bar(n)", "n")
    GX, cS = 0.7, 0.2 + 0.5j
    gPL = np.einsum("mij,jk->mik", dirac.GAMMA, dirac.PL)
    gPL_lower = np.einsum("mn,nij->mij", dirac.ETA, gPL)
    expected = (1j * GX / np.sqrt(2) * np.einsum("mad,mcb->abcd", gPL, gPL_lower)
                + 1j * cS * np.einsum("ad,cb->abcd", dirac.PR, dirac.PR)
                + 1j * np.conj(cS) * np.einsum("ad,cb->abcd", dirac.PL, dirac.PL))
    got = vertex.evaluate(np.zeros((4, 4)), values={"GX": GX, "cS": cS})
    np.testing.assert_allclose(got, expected, atol=1e-12)


# ---------------------------------------------------------------- hermitian conjugation

def test_hc_of_a_chiral_yukawa(build, dirac, sym):
    # -y s bar(chi) PL psi + h.c.: the h.c. is -conj(y) dag(s) bar(psi) PR chi, since
    # (bar chi PL psi)^dag = bar psi g0 PL^dag g0 chi = bar psi PR chi
    # (Romão & Silva arXiv:1209.6213, hermiticity of the Yukawa sector, from memory).
    model = build(_with("- y s bar(chi) PL psi + h.c."))
    rules = model.derive()
    y = sym(model, "y")
    direct = rules.vertex("bar(chi)", "psi", "s")
    conjugate = rules.vertex("bar(psi)", "chi", "dag(s)")
    zeros = np.zeros((3, 4))
    np.testing.assert_allclose(direct.evaluate(zeros), -1j * (0.3 + 0.4j) * dirac.PL, atol=1e-12)
    np.testing.assert_allclose(conjugate.evaluate(zeros), -1j * (0.3 - 0.4j) * dirac.PR, atol=1e-12)
    assert y in direct.factor.free_symbols
    assert sympy.conjugate(y) in conjugate.factor.atoms(sympy.conjugate)


def test_hc_flips_the_sign_of_gamma5(build, dirac):
    # (bar chi g5 psi)^dag = bar psi g0 g5^dag g0 chi = -bar psi g5 chi (Peskin & Schroeder
    # sec. 3.4 bilinears, from memory), so -y s bar(chi) g5 psi + h.c. gives +i conj(y) g5.
    rules = build(_with("- y s bar(chi) gamma5 psi + h.c.")).derive()
    zeros = np.zeros((3, 4))
    np.testing.assert_allclose(rules.vertex("bar(chi)", "psi", "s").evaluate(zeros),
                               -1j * (0.3 + 0.4j) * dirac.GAMMA5, atol=1e-12)
    np.testing.assert_allclose(rules.vertex("bar(psi)", "chi", "dag(s)").evaluate(zeros),
                               +1j * (0.3 - 0.4j) * dirac.GAMMA5, atol=1e-12)


def test_hc_keeps_gamma_mu_and_flips_the_projector_in_front(build, dirac, rng):
    # (bar chi gamma^mu PL psi)^dag = bar psi PR gamma^mu chi = bar psi gamma^mu PL chi: a
    # left-handed current stays left-handed (Peskin & Schroeder sec. 3.4, from memory).
    rules = build(_with("- y d[mu] phi bar(chi) gamma[mu] PL psi + h.c.")).derive()
    p = rng.normal(size=(3, 4))
    # i (-y) (-i p3) pslash3 PL = -y pslash3 PL ; conjugate: -conj(y) pslash3 PL
    np.testing.assert_allclose(rules.vertex("bar(chi)", "psi", "phi").evaluate(p),
                               -(0.3 + 0.4j) * dirac.slash(p[2]) @ dirac.PL, atol=1e-12)
    np.testing.assert_allclose(rules.vertex("bar(psi)", "chi", "phi").evaluate(p),
                               -(0.3 - 0.4j) * dirac.slash(p[2]) @ dirac.PL, atol=1e-12)


def test_hc_keeps_sigma(build, dirac, rng):
    # (bar chi sigma^{mu nu} psi)^dag = bar psi sigma^{mu nu} chi (Peskin & Schroeder sec. 3.4,
    # from memory). With L = -y F_{mu nu} bar(chi) sigma^{mu nu} psi + h.c. and
    # F_{mu nu} -> -i (p_mu eps_nu - p_nu eps_mu) for the photon leg (p3, index mu3):
    #     vertex = i (-y)(-2i) sigma^{alpha mu3} p3_alpha = -2 y sigma^{alpha mu3} p3_alpha,
    # and the conjugate vertex the same with conj(y).
    rules = build("""
        theory t
        parameters
          mass m = 1.0
          coupling e = 0.3
          coupling complex y = 0.3 + 0.4 I
        gauge
          qed U(1) boson A strength F coupling e
        fields
          vector A
          dirac chi mass m
          dirac psi mass m
        lagrangian
          -1/4 F[mu,nu] F[mu,nu]
          bar(chi) (I gamma[mu] d[mu] - m) chi
          bar(psi) (I gamma[mu] d[mu] - m) psi
          - y F[mu,nu] bar(chi) sigma[mu,nu] psi + h.c.
        """).derive()
    p = rng.normal(size=(3, 4))
    sigma_p = np.einsum("a,amij->ijm", dirac.lower(p[2]), dirac.SIGMA)  # [s1, s2, mu3]
    np.testing.assert_allclose(rules.vertex("bar(chi)", "psi", "A").evaluate(p), -2 * (0.3 + 0.4j) * sigma_p,
                               atol=1e-12)
    np.testing.assert_allclose(rules.vertex("bar(psi)", "chi", "A").evaluate(p), -2 * (0.3 - 0.4j) * sigma_p,
                               atol=1e-12)


@pytest.mark.parametrize("matrix", ["1", "gamma5", "PL", "PR", "PL gamma5", "I gamma5"])
def test_hc_vertices_are_dirac_conjugates(build, dirac, matrix):
    # For a momentum-independent bilinear L = -y s bar(chi) M psi + h.c. the two vertices are
    # V = -i y M and V' = -i conj(y) g0 M^dag g0, i.e. V' = -g0 V^dag g0
    # (DESIGN.md "Where hand derivations go wrong"; Romão & Silva arXiv:1209.6213, from memory).
    term = "- y s bar(chi) psi + h.c." if matrix == "1" else f"- y s bar(chi) {matrix} psi + h.c."
    rules = build(_with(term)).derive()
    zeros = np.zeros((3, 4))
    v = rules.vertex("bar(chi)", "psi", "s").evaluate(zeros)
    v_conj = rules.vertex("bar(psi)", "chi", "dag(s)").evaluate(zeros)
    g0 = dirac.GAMMA[0]
    np.testing.assert_allclose(v_conj, -g0 @ v.conj().T @ g0, atol=1e-12)


def test_hc_of_a_hermitian_term_doubles_it(build):
    # -g phi bar(psi) psi is hermitian; adding its h.c. doubles it: vertex -2 i g (common practice).
    vertex = build(_with("- g phi bar(psi) psi + h.c.")).derive().vertex("bar(psi)", "psi", "phi")
    np.testing.assert_allclose(vertex.evaluate(np.zeros((3, 4))), -1.2j * np.eye(4), atol=1e-12)


def test_shipped_dark_sector_hc_yukawa(shipped, dirac):
    # dark_sector.vsm: -y s bar(psi) PR chi + h.c. -> -i y PR and -i conj(y) PL (y = 0.1 + 0.2 i).
    rules = shipped("dark_sector").derive()
    zeros = np.zeros((3, 4))
    np.testing.assert_allclose(rules.vertex("bar(psi)", "chi", "s").evaluate(zeros), -1j * (0.1 + 0.2j) * dirac.PR,
                               atol=1e-12)
    np.testing.assert_allclose(rules.vertex("bar(chi)", "psi", "dag(s)").evaluate(zeros),
                               -1j * (0.1 - 0.2j) * dirac.PL, atol=1e-12)


# ---------------------------------------------------------------- the Dirac propagator

def test_dirac_propagator_symbolic(shipped, sym):
    # Peskin & Schroeder eq. 4.x (from memory): S(p) = i (pslash + m)/(p^2 - m^2), p along the arrow.
    model = shipped("yukawa")
    prop = model.derive().propagator("psi")
    m = sym(model, "m")
    assert prop.kind == "dirac"
    assert sympy.simplify(prop.a - sympy.I / (P2 - m**2)) == 0
    assert sympy.simplify(prop.b - sympy.I * m / (P2 - m**2)) == 0


def test_dirac_propagator_numeric_against_explicit_matrices(shipped, dirac, rng):
    rules = shipped("yukawa").derive()
    prop = rules.propagator("psi")
    for _ in range(3):
        p = rng.normal(size=4) * 3
        p2 = dirac.dot(p, p)
        expected = 1j * (dirac.slash(p) + 1.0 * dirac.ONE) / (p2 - 1.0)
        value = prop.evaluate(p)
        assert value.shape == (4, 4)
        np.testing.assert_allclose(value, expected, atol=1e-12)
        # it is i times the inverse of the kernel (pslash - m): S (pslash - m) = i
        np.testing.assert_allclose(value @ (dirac.slash(p) - dirac.ONE), 1j * dirac.ONE, atol=1e-10)
    # and the mass can be overridden
    p = np.array([2.0, 0.3, 0.4, 0.5])
    expected = 1j * (dirac.slash(p) + 0.5 * dirac.ONE) / (dirac.dot(p, p) - 0.25)
    np.testing.assert_allclose(prop.evaluate(p, values={"m": 0.5}), expected, atol=1e-12)


def test_dirac_propagator_from_a_symmetrised_kinetic_term(build, dirac):
    # i/2 (bar psi gamma d psi - (d bar psi) gamma psi) equals bar psi i gamma d psi up to a total
    # derivative: same propagator (common practice, no source). The derivative on bar(psi) uses
    # that leg's own momentum (-p), which is what makes the two forms agree.
    prop = build("""
        theory t
        parameters
          mass m = 1.0
        fields
          dirac psi mass m
        lagrangian
          I/2 (bar(psi) gamma[mu] d[mu] psi - d[mu] bar(psi) gamma[mu] psi) - m bar(psi) psi
        """).derive().propagator("psi")
    p = np.array([2.0, 0.3, -0.4, 0.5])
    expected = 1j * (dirac.slash(p) + dirac.ONE) / (dirac.dot(p, p) - 1.0)
    np.testing.assert_allclose(prop.evaluate(p), expected, atol=1e-12)


def test_massless_dirac_propagator(shipped, dirac):
    # contact.vsm's n is massless: S = i pslash / p^2 (common practice, no source).
    prop = shipped("contact").derive().propagator("n")
    p = np.array([1.5, 0.3, -0.4, 0.5])
    np.testing.assert_allclose(prop.evaluate(p), 1j * dirac.slash(p) / dirac.dot(p, p), atol=1e-12)
    assert sympy.simplify(prop.b) == 0


def test_hc_moves_the_derivative_with_its_field(build, dirac, rng):
    # (y (d_mu s) bar(chi) gamma^mu psi)^dag = conj(y) (d_mu dag(s)) bar(psi) gamma^mu chi: the
    # derivative follows s to dag(s), so the conjugate vertex uses the dag(s) leg's momentum
    # (DESIGN.md "Where hand derivations go wrong"). L = -y ... + h.c. gives
    #   (bar(chi), psi, s):      i (-y)(-i p3) pslash3       = -y pslash3
    #   (bar(psi), chi, dag(s)): i (-conj y)(-i p3) pslash3 = -conj(y) pslash3
    rules = build(_with("- y d[mu] s bar(chi) gamma[mu] psi + h.c.")).derive()
    p = rng.normal(size=(3, 4))
    np.testing.assert_allclose(rules.vertex("bar(chi)", "psi", "s").evaluate(p),
                               -(0.3 + 0.4j) * dirac.slash(p[2]), atol=1e-12)
    np.testing.assert_allclose(rules.vertex("bar(psi)", "chi", "dag(s)").evaluate(p),
                               -(0.3 - 0.4j) * dirac.slash(p[2]), atol=1e-12)


def test_definitions_are_expanded_with_fresh_dummy_indices(build, dirac, rng):
    # DESIGN.md: dummy indices inside a definition are renamed on every use. With
    # K = bar(chi) gamma[nu] psi d[nu] phi, the product K Kc of K and its partner
    # Kc = bar(psi) gamma[nu] chi d[nu] phi must not share nu (it would appear four times).
    # Written out by hand with distinct indices, the same vertex follows.
    defined = build(FERMION_PAIR.lstrip("\n").replace("lagrangian\n",
                    "define\n  K = bar(chi) gamma[nu] psi d[nu] phi\n  Kc = bar(psi) gamma[nu] chi d[nu] phi\n"
                    "lagrangian\n") + "  - g K Kc\n").derive()
    written = build(_with("- g bar(chi) gamma[nu] psi d[nu] phi bar(psi) gamma[rho] chi d[rho] phi")).derive()
    labels = ("bar(chi)", "chi", "bar(psi)", "psi", "phi", "phi")
    p = rng.normal(size=(6, 4))
    a = defined.vertex(*labels).evaluate(p)
    b = written.vertex(*labels).evaluate(p)
    assert np.abs(b).max() > 0
    np.testing.assert_allclose(a, b, atol=1e-12)
