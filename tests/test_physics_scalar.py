"""Scalar vertices and the scalar propagator, as a specification.

Convention under test (DESIGN.md): vertex factor = i x (n-th functional derivative of the action
with respect to the leg fields), so symmetry factors are included; all momenta incoming; a
derivative on the field of leg k gives -i p_k. Expected values are derived by hand in the
comments, each naming its source.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy

from vertexsmith.rules import P2


def _real_scalars(names: list[str], coupling: str, term: str) -> str:
    kinetic = "\n".join(f"  1/2 d[mu] {n} d[mu] {n} - 1/2 m^2 {n}^2" for n in names)
    fields = "\n".join(f"  scalar {n} real mass m" for n in names)
    return (f"theory t\nparameters\n  mass m = 1.0\n  coupling {coupling} = 0.7\n"
            f"fields\n{fields}\nlagrangian\n{kinetic}\n  {term}\n")


# ---------------------------------------------------------------- symmetry factors

SYMMETRY_FACTORS = [
    # Peskin & Schroeder ch. 4 (eq. 4.31 area, from memory): -lam/4! phi^4 gives -i lam.
    pytest.param(["phi"], "lam", "-lam/24 phi^4", ("phi",) * 4, "lam", id="phi4-lam/4!"),
    # Cubic analogue, P&S problem 4.x style (from memory): -g/3! phi^3 gives -i g.
    pytest.param(["phi"], "g", "-g/6 phi^3", ("phi",) * 3, "g", id="phi3-g/3!"),
    # General -c/n! phi^n: n! assignments of n identical legs (common practice, no source).
    pytest.param(["phi"], "c", "-c/120 phi^5", ("phi",) * 5, "c", id="phi5-c/5!"),
    pytest.param(["phi"], "c", "-c/720 phi^6", ("phi",) * 6, "c", id="phi6-c/6!"),
    # Mixed fields: -c/4 phi^2 chi^2 -> 2! x 2! = 4 assignments -> -i c (common practice, no source).
    pytest.param(["phi", "chi"], "c", "-c/4 phi^2 chi^2", ("phi", "phi", "chi", "chi"), "c", id="phi2chi2/4"),
    # -c/2 phi^2 chi: 2! assignments -> -i c (common practice, no source).
    pytest.param(["phi", "chi"], "c", "-c/2 phi^2 chi", ("phi", "chi", "phi"), "c", id="phi2chi/2"),
    # A product written as separate factors is the same monomial: -c phi phi chi /2 -> -i c.
    pytest.param(["phi", "chi"], "c", "-c/2 phi chi phi", ("chi", "phi", "phi"), "c", id="phi.chi.phi/2"),
    # A power of a sum is multiplied out: (phi + chi)^3 contains 3 phi^2 chi, so -c/6 (phi + chi)^3
    # gives i (-c/6) x 3 x 2! = -i c for (phi, phi, chi) (binomial expansion, common practice).
    pytest.param(["phi", "chi"], "c", "-c/6 (phi + chi)^3", ("phi", "chi", "phi"), "c", id="(phi+chi)^3/3!"),
    pytest.param(["phi", "chi"], "c", "-c/6 (phi + chi)^3", ("chi", "chi", "chi"), "c", id="(phi+chi)^3/3!-chi"),
]


@pytest.mark.parametrize("names, coupling, term, legs, expected", SYMMETRY_FACTORS)
def test_symmetry_factor_gives_minus_i_coupling(build, sym, names, coupling, term, legs, expected):
    model = build(_real_scalars(names, coupling, term))
    vertex = model.derive().vertex(*legs)
    assert sympy.simplify(vertex.factor - (-sympy.I * sym(model, expected))) == 0
    # numerically too, with the model's own value 0.7 and with an override
    zeros = np.zeros((len(legs), 4))
    assert vertex.evaluate(zeros) == pytest.approx(-0.7j)
    assert vertex.evaluate(zeros, values={coupling: 2.5}) == pytest.approx(-2.5j)


def test_shipped_phi4_quartic_is_minus_i_lambda(shipped, sym):
    # Peskin & Schroeder ch. 4 (from memory): L_int = -lam/4! phi^4, vertex -i lam.
    model = shipped("phi4")
    rules = model.derive()
    assert [v.labels for v in rules.vertices] == [("phi",) * 4]
    assert sympy.simplify(rules.vertices[0].factor + sympy.I * sym(model, "lam")) == 0
    assert rules.vertices[0].evaluate(np.zeros((4, 4))) == pytest.approx(-0.5j)  # lam = 0.5 in the file


def test_complex_scalar_quartic_counts_phi_and_dag_phi_separately(build, sym):
    # -lam/4 (dag(s) s)^2: s and dag(s) are different legs, 2! x 2! = 4 assignments -> -i lam
    # (common practice, no source; the normalisation of scalar_qed.vsm).
    model = build("""
        theory t
        parameters
          mass m = 1.0
          coupling lam = 0.3
        fields
          scalar s complex mass m
        lagrangian
          dag(d[mu] s) d[mu] s - m^2 dag(s) s
          - lam/4 (dag(s) s)^2
        """)
    vertex = model.derive().vertex("s", "s", "dag(s)", "dag(s)")
    assert sympy.simplify(vertex.factor + sympy.I * sym(model, "lam")) == 0
    assert vertex.evaluate(np.zeros((4, 4))) == pytest.approx(-0.3j)


def test_complex_cubic_and_its_conjugate(build):
    # g s^3 + h.c. with complex g: (s, s, s) gets 3! i g, (dag(s), dag(s), dag(s)) gets 3! i conj(g)
    # (common practice, no source).
    rules = build("""
        theory t
        parameters
          coupling complex g = 0.3 + 0.1 I
        fields
          scalar s complex
        lagrangian
          dag(d[mu] s) d[mu] s
          g s^3 + h.c.
        """).derive()
    zeros = np.zeros((3, 4))
    assert rules.vertex("s", "s", "s").evaluate(zeros) == pytest.approx(6j * (0.3 + 0.1j))
    assert rules.vertex("dag(s)", "dag(s)", "dag(s)").evaluate(zeros) == pytest.approx(6j * (0.3 - 0.1j))


def test_real_and_complex_fields_differ_in_counting(build, sym):
    # -lam/4 (dag(s) s)^2 with s complex gives -i lam, but the same spelling with a real field,
    # -lam/4 phi^4, gives 4! / 4 = 6 -> -6 i lam (common practice, no source).
    model = build(_real_scalars(["phi"], "lam", "-lam/4 phi^4"))
    vertex = model.derive().vertex("phi", "phi", "phi", "phi")
    assert sympy.simplify(vertex.factor + 6 * sympy.I * sym(model, "lam")) == 0


def test_terms_on_different_lines_add_up(build, sym):
    # Two lines contributing to the same vertex: -g/6 phi^3 - g/3 phi^3 = -g/2 phi^3 -> -3 i g.
    text = _real_scalars(["phi"], "g", "-g/6 phi^3") + "  - g/3 phi^3\n"
    model = build(text)
    rules = model.derive()
    assert len(rules.vertices) == 1
    vertex = rules.vertices[0]
    assert sympy.simplify(vertex.factor + 3 * sympy.I * sym(model, "g")) == 0
    # lines: theory, parameters, m, g, fields, phi, lagrangian, kinetic (8), -g/6 (9), -g/3 (10)
    assert vertex.origins == (9, 10)


def test_terms_that_cancel_leave_no_vertex(build):
    text = _real_scalars(["phi"], "g", "-g/6 phi^3") + "  + g/6 phi^3\n"
    assert build(text).derive().vertices == ()


# ---------------------------------------------------------------- derivative couplings

def test_derivative_on_the_plain_leg_uses_its_own_momentum(build, rng):
    # L = i g dag(s) (d_mu s) (d^mu a): legs a (p1), s (p2), dag(s) (p3).
    # i x [i g (-i p2_mu)(-i p1^mu)] = i * i * g * (-1) p1.p2 = g p1.p2
    # (the -i p rule: Peskin & Schroeder ch. 4 plane waves e^{-ipx}, from memory).
    model = build("""
        theory t
        parameters
          coupling g = 0.4
        fields
          scalar s complex
          scalar a real
        lagrangian
          dag(d[mu] s) d[mu] s
          1/2 d[mu] a d[mu] a
          I g dag(s) d[mu] s d[mu] a
        """)
    vertex = model.derive().vertex("a", "s", "dag(s)")
    p = rng.normal(size=(3, 4))
    p[2] = -p[0] - p[1]
    expected = 0.4 * (p[0] @ np.diag([1, -1, -1, -1]) @ p[1])
    assert vertex.evaluate(p) == pytest.approx(expected)


def test_derivative_on_the_conjugated_leg_uses_that_legs_momentum(build, rng):
    # L = i g (d_mu dag(s)) s (d^mu a): the derivative sits on dag(s), so leg 3's momentum
    # appears: vertex = g p1.p3 (DESIGN.md: every leg carries its own incoming momentum).
    model = build("""
        theory t
        parameters
          coupling g = 0.4
        fields
          scalar s complex
          scalar a real
        lagrangian
          dag(d[mu] s) d[mu] s
          1/2 d[mu] a d[mu] a
          I g d[mu] dag(s) s d[mu] a
        """)
    vertex = model.derive().vertex("a", "s", "dag(s)")
    p = rng.normal(size=(3, 4))
    p[2] = -p[0] - p[1]
    metric = np.diag([1, -1, -1, -1])
    assert vertex.evaluate(p) == pytest.approx(0.4 * (p[0] @ metric @ p[2]))
    assert vertex.evaluate(p) != pytest.approx(0.4 * (p[0] @ metric @ p[1]))


def test_six_scalars_with_two_derivatives(build, rng):
    # L = c (d_mu phi)(d^mu phi) phi^4, six identical legs p1..p6.
    # Choose which two legs carry the derivatives: an ordered pair (i, j), i != j (the two
    # derived factors are distinguishable by position), and the remaining four plain fields fill
    # the other four legs in 4! = 24 ways. Each derivative gives -i p, so a pair gives
    # (-i)^2 p_i.p_j = -p_i.p_j. Summing ordered pairs = 2 x sum over unordered pairs i<j:
    #     vertex = i c x 24 x 2 x (-1) x sum_{i<j} p_i.p_j = -48 i c sum_{i<j} p_i.p_j.
    # (Counting by hand; the -i p rule as in Peskin & Schroeder ch. 4, from memory.)
    model = build(_real_scalars(["phi"], "c", "c d[mu] phi d[mu] phi phi^4"))
    vertex = model.derive().vertex(*["phi"] * 6)
    metric = np.diag([1, -1, -1, -1])
    for conserve in (True, False):
        p = rng.normal(size=(6, 4))
        if conserve:
            p[5] = -p[:5].sum(axis=0)
        pairs = sum(p[i] @ metric @ p[j] for i in range(6) for j in range(i + 1, 6))
        assert vertex.evaluate(p) == pytest.approx(-48j * 0.7 * pairs)


def test_derivative_of_a_bracket_follows_leibniz(build, rng):
    # d_mu (phi^2) = 2 phi d_mu phi, so g d[mu](phi^2) d[mu] phi equals 2 g phi d[mu] phi d[mu] phi
    # (Leibniz rule, common practice, no source). Both give i 2g (-1) 2 (p1.p2 + p1.p3 + p2.p3).
    bracket = build(_real_scalars(["phi"], "g", "g d[mu] (phi^2) d[mu] phi")).derive().vertex("phi", "phi", "phi")
    written = build(_real_scalars(["phi"], "g", "2 g phi d[mu] phi d[mu] phi")).derive().vertex("phi", "phi", "phi")
    p = rng.normal(size=(3, 4))
    metric = np.diag([1, -1, -1, -1])
    by_hand = -4j * 0.7 * (p[0] @ metric @ p[1] + p[0] @ metric @ p[2] + p[1] @ metric @ p[2])
    assert bracket.evaluate(p) == pytest.approx(by_hand)
    assert written.evaluate(p) == pytest.approx(by_hand)


# ---------------------------------------------------------------- the scalar propagator

def test_real_scalar_propagator_is_i_over_p2_minus_m2(shipped, sym):
    # Peskin & Schroeder eq. 4.x (Feynman propagator of the scalar, from memory): i/(p^2 - m^2).
    model = shipped("phi4")
    prop = model.derive().propagator("phi")
    m = sym(model, "m")
    assert prop.kind == "scalar"
    assert sympy.simplify(prop.a - sympy.I / (P2 - m**2)) == 0
    p = np.array([130.0, 3.0, -4.0, 12.0])
    p2 = p[0] ** 2 - p[1:] @ p[1:]
    assert prop.evaluate(p) == pytest.approx(1j / (p2 - 125.0**2))
    assert prop.evaluate(p).shape == ()


def test_complex_scalar_propagator_and_its_conjugate_label(shipped, sym):
    # dag(phi) phi normalisation: the same i/(p^2 - m^2) (common practice, no source).
    model = shipped("scalar_qed")
    rules = model.derive()
    prop = rules.propagator("phi")
    assert sympy.simplify(prop.a - sympy.I / (P2 - sym(model, "mphi") ** 2)) == 0
    assert rules.propagator("dag(phi)") == prop


def test_kinetic_term_written_twice_halves_the_propagator(build):
    # The quadratic kernel is the sum of all quadratic terms: twice the canonical kernel gives
    # half the propagator (common practice, no source).
    text = _real_scalars(["phi"], "g", "1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2")
    prop = build(text).derive().propagator("phi")
    m = sympy.Symbol("m", real=True)
    assert sympy.simplify(prop.a - sympy.I / (2 * (P2 - m**2))) == 0


def test_kinetic_term_with_a_bracketed_second_derivative(build):
    # -1/2 phi d_mu (d^mu phi) is 1/2 (d phi)^2 after integration by parts: same propagator
    # (common practice, no source).
    prop = build("""
        theory t
        parameters
          mass m = 1.0
        fields
          scalar phi real mass m
        lagrangian
          -1/2 phi d[mu] (d[mu] phi) - 1/2 m^2 phi^2
        """).derive().propagator("phi")
    m = sympy.Symbol("m", real=True)
    assert sympy.simplify(prop.a - sympy.I / (P2 - m**2)) == 0


def test_kinetic_term_with_a_box_operator(build):
    # -1/2 phi d_mu d^mu phi = 1/2 (d phi)^2 up to a total derivative (common practice, no source).
    prop = build("""
        theory t
        parameters
          mass m = 1.0
        fields
          scalar phi real mass m
        lagrangian
          -1/2 phi d[mu] d[mu] phi - 1/2 m^2 phi^2
        """).derive().propagator("phi")
    m = sympy.Symbol("m", real=True)
    assert sympy.simplify(prop.a - sympy.I / (P2 - m**2)) == 0


def test_massless_scalar_propagator(build):
    prop = build("""
        theory t
        fields
          scalar a real
        lagrangian
          1/2 d[mu] a d[mu] a
        """).derive().propagator("a")
    assert sympy.simplify(prop.a - sympy.I / P2) == 0


def test_factorial_growth_is_not_enumerated_for_plain_identical_fields(build):
    # DESIGN.md: k identical underived fields contribute k! at once. A phi^12 vertex must come out
    # quickly with the coefficient 12!/12! -> -i c (and not time out enumerating 12! assignments).
    model = build(_real_scalars(["phi"], "c", f"-c/{math.factorial(12)} phi^12"))
    vertex = model.derive().vertex(*["phi"] * 12)
    assert sympy.simplify(vertex.factor + sympy.I * sympy.Symbol("c", real=True)) == 0


# ---------------------------------------------------------------- identical fields with group indices

def test_linear_sigma_model_quartic_has_all_three_pairings(build):
    # Peskin & Schroeder sec. 11.1 / 13.3 (linear sigma model, from memory): L = -lam/4 (phi^i phi^i)^2
    # gives -2 i lam (d_ij d_kl + d_ik d_jl + d_il d_jk). Here phi^i is a real SU(2) triplet (O(3)).
    rules = build("""
        theory t
        parameters
          coupling gd = 0.8
          coupling lam = 0.1
          mass m = 1.0
        gauge
          dark SU(2) boson V strength VS coupling gd
        fields
          vector V
          scalar Sig real mass m in dark adjoint
        lagrangian
          -1/4 VS[mu,nu,a] VS[mu,nu,a]
          1/2 D[mu] Sig[a] D[mu] Sig[a] - 1/2 m^2 Sig[a] Sig[a]
          - lam/4 (Sig[a] Sig[a])^2
        """).derive("feynman")
    value = rules.vertex("Sig", "Sig", "Sig", "Sig").evaluate(np.zeros((4, 4)))
    d = np.eye(3)
    expected = -2j * 0.1 * (np.einsum("ij,kl->ijkl", d, d) + np.einsum("ik,jl->ijkl", d, d)
                            + np.einsum("il,jk->ijkl", d, d))
    np.testing.assert_allclose(value, expected, atol=1e-12)


def test_higgs_doublet_quartic_components(build):
    # -lam (H^dag H)^2 = -lam (|h+|^2 + |h0|^2)^2: the h+ h+ h+* h+* vertex is -4 i lam (2! x 2!), the
    # h+ h0 h+* h0* one -2 i lam (from the cross term 2 |h+|^2 |h0|^2), in doublet form
    # -2 i lam (d_13 d_24 + d_14 d_23) for legs (H_i1, H_i2, dag(H)_i3, dag(H)_i4)
    # (Romão & Silva arXiv:1209.6213, scalar potential, from memory; component counting).
    rules = build("""
        theory t
        parameters
          coupling g = 0.5
          coupling lam = 0.1
        gauge
          weak SU(2) boson W strength WS coupling g
        fields
          vector W
          scalar H complex in weak doublet
        lagrangian
          -1/4 WS[mu,nu,a] WS[mu,nu,a]
          dag(D[mu] H) D[mu] H - lam (dag(H) H)^2
        """).derive("feynman")
    value = rules.vertex("H", "H", "dag(H)", "dag(H)").evaluate(np.zeros((4, 4)))
    assert value[0, 0, 0, 0] == pytest.approx(-0.4j)
    assert value[0, 1, 0, 1] == pytest.approx(-0.2j)
    assert value[0, 1, 1, 0] == pytest.approx(-0.2j)
    d = np.eye(2)
    expected = -0.2j * (np.einsum("ac,bd->abcd", d, d) + np.einsum("ad,bc->abcd", d, d))
    np.testing.assert_allclose(value, expected, atol=1e-12)


def test_closed_loops_of_metrics_are_traces_of_four(build):
    # g^mu_nu g^nu_mu = 4 and g^mu_nu g^nu_rho g^rho_mu = 4 in four dimensions (common practice, no source):
    # each term below is then -c/24 x 4 x phi^4, a vertex -4 i c, and the two together -8 i c
    rules = build("""
        theory t
        parameters
          coupling c = 1
          mass m = 1
        fields
          scalar phi real mass m
        lagrangian
          1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
          - c/24 g[a,b] g[b,a] phi^4
          - c/24 g[a,b] g[b,r] g[r,a] phi^4
        """).derive()
    c = sympy.Symbol("c", real=True)
    assert sympy.simplify(rules.vertex("phi", "phi", "phi", "phi").factor + 8 * sympy.I * c) == 0
