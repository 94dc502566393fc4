"""Abelian gauge theories: the QED and scalar-QED vertices, vector propagators, and two checks no
convention can hide (Ward identities and gauge-parameter independence of |M|^2).

Our default covariant derivative is D_mu = d_mu - i e Q A_mu, so bar(psi) i gamma D psi contains
+e Q bar(psi) gamma A psi and the vertex is i e Q gamma^mu.

Translation to Peskin & Schroeder (eqs. 4.3 and 4.6, from memory): they write D_mu = d_mu + i e A_mu
with e = -|e| the electron charge, i.e. D_mu = d_mu + i |e| Q A_mu with Q = -1. That is our
`conventions / covariant plus` with coupling |e|, and their vertex -i e gamma^mu (e < 0) equals
our covariant-plus vertex -i |e| Q gamma^mu. With the default (covariant minus) every
gauge-vertex sign flips; |M|^2 does not care.
"""

from __future__ import annotations

import itertools
from fractions import Fraction

import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith.rules import P2



def _qed(charge: str, conventions: str = "") -> str:
    return ("theory t\nparameters\n  coupling e = 0.3\n  mass m = 1.0\n"
            "gauge\n  qed U(1) boson A strength F coupling e\n"
            f"fields\n  vector A\n  dirac psi mass m charge qed {charge}\n"
            "lagrangian\n  -1/4 F[mu,nu] F[mu,nu]\n  bar(psi) (I gamma[mu] D[mu] - m) psi\n"
            + (f"conventions\n  {conventions}\n" if conventions else ""))


def _scalar_qed(charge: str, conventions: str = "") -> str:
    return ("theory t\nparameters\n  coupling e = 0.3\n  mass m = 1.0\n"
            "gauge\n  qed U(1) boson A strength F coupling e\n"
            f"fields\n  vector A\n  scalar phi complex mass m charge qed {charge}\n"
            "lagrangian\n  -1/4 F[mu,nu] F[mu,nu]\n  dag(D[mu] phi) D[mu] phi - m^2 dag(phi) phi\n"
            + (f"conventions\n  {conventions}\n" if conventions else ""))


# ---------------------------------------------------------------- the QED vertex

@pytest.mark.parametrize("charge", ["-1", "+1", "2", "-1/3", "2/3"])
def test_qed_vertex_is_i_e_Q_gamma_mu_by_default(build, dirac, charge):
    # D = d - i e Q A: vertex i e Q gamma^mu (derived in the module docstring; P&S eq. 4.x translated).
    rules = build(_qed(charge)).derive()
    vertex = rules.vertex("bar(psi)", "psi", "A")
    Q = float(Fraction(charge))
    value = vertex.evaluate(np.zeros((3, 4)))
    assert value.shape == (4, 4, 4)  # (spinor of bar(psi), spinor of psi, Lorentz of A)
    expected = 1j * 0.3 * Q * np.transpose(dirac.GAMMA, (1, 2, 0))
    np.testing.assert_allclose(value, expected, atol=1e-12)
    e = sympy.Symbol("e", real=True)
    from vertexsmith.symbolic import Gamma
    assert sympy.simplify(vertex.factor - sympy.I * e * sympy.Rational(Fraction(charge).numerator,
                                                                      Fraction(charge).denominator)
                          * Gamma(sympy.Symbol("mu3"))) == 0


@pytest.mark.parametrize("charge", ["-1", "2"])
def test_covariant_plus_flips_the_qed_vertex(build, dirac, charge):
    # `covariant plus` means D = d + i e Q A: vertex -i e Q gamma^mu, which for Q = -1 is
    # Peskin & Schroeder's -i e gamma^mu with their e = -|e| (eqs. 4.3/4.6 and the QED rules of
    # sec. 4.8, from memory).
    minus = build(_qed(charge)).derive().vertex("bar(psi)", "psi", "A").evaluate(np.zeros((3, 4)))
    plus = build(_qed(charge, "covariant plus")).derive().vertex("bar(psi)", "psi", "A").evaluate(np.zeros((3, 4)))
    np.testing.assert_allclose(plus, -minus, atol=1e-12)
    Q = float(Fraction(charge))
    np.testing.assert_allclose(plus, -1j * 0.3 * Q * np.transpose(dirac.GAMMA, (1, 2, 0)), atol=1e-12)


def test_shipped_qed_vertices(shipped, dirac):
    # qed.vsm: electron and muon with Q = -1 under the default convention: -i e gamma^mu,
    # e = sqrt(4 pi alpha) with alpha = 1/137.035999 (PDG, common practice).
    rules = shipped("qed").derive()
    e = np.sqrt(4 * np.pi / 137.035999)
    for lepton in ("ele", "muon"):
        value = rules.vertex(f"bar({lepton})", lepton, "A").evaluate(np.zeros((3, 4)))
        np.testing.assert_allclose(value, -1j * e * np.transpose(dirac.GAMMA, (1, 2, 0)), atol=1e-12)


def test_qed_vertex_with_legs_asked_in_another_order(shipped, dirac):
    # Layout follows the legs as asked: (A, bar(ele), ele) has axes (Lorentz, spinor, spinor).
    rules = shipped("qed").derive()
    e = np.sqrt(4 * np.pi / 137.035999)
    value = rules.vertex("A", "bar(ele)", "ele").evaluate(np.zeros((3, 4)))
    np.testing.assert_allclose(value, -1j * e * dirac.GAMMA, atol=1e-12)


def test_ward_identity_for_the_qed_vertex(shipped, dirac, rng):
    # q_mu ubar(p') Gamma^mu u(p) = 0 on shell with q = p' - p: ubar(p') (p'slash - pslash) u(p)
    # = (m - m) ubar u = 0 (Peskin & Schroeder sec. 5.5 / 7.4 Ward identity, from memory).
    rules = shipped("qed").derive()
    for lepton, mass in (("ele", 0.00051099895), ("muon", 0.1056583755)):
        vertex = rules.vertex(f"bar({lepton})", lepton, "A")
        p, p_out = dirac.on_shell(rng, mass, 0.3), dirac.on_shell(rng, mass, 0.3)
        q = p_out - p
        V = vertex.evaluate(np.array([-p_out, p, q]))
        for s, s_out in itertools.product(range(2), repeat=2):
            current = np.einsum("a,abm,b->m", dirac.bar(dirac.u(p_out, mass, s_out)), V, dirac.u(p, mass, s))
            assert abs(current @ dirac.lower(q)) < 1e-10 * (1 + np.abs(current).max())
            # and the current itself is not zero (the check is not empty)
            assert np.abs(current).max() > 1e-6


# ---------------------------------------------------------------- scalar QED

@pytest.mark.parametrize("charge", ["1", "-1", "2"])
def test_scalar_qed_three_point_vertex(build, rng, charge):
    # Peskin & Schroeder problem 9.1 (from memory), in our convention: legs phi (p1), dag(phi) (p2),
    # A (mu3). dag(D phi) D phi contains i e Q A^mu [dag(phi) d_mu phi - (d_mu dag(phi)) phi]
    # -> i x i e Q (-i p1 + i p2) = i e Q (p1 - p2)^mu3.
    rules = build(_scalar_qed(charge)).derive()
    vertex = rules.vertex("phi", "dag(phi)", "A")
    Q = float(charge)
    for _ in range(3):
        p = rng.normal(size=(3, 4))
        p[2] = -p[0] - p[1]
        value = vertex.evaluate(p)
        assert value.shape == (4,)
        np.testing.assert_allclose(value, 1j * 0.3 * Q * (p[0] - p[1]), atol=1e-12)


def test_scalar_qed_three_point_vertex_in_another_leg_order(shipped, rng):
    # The same vertex asked as (A, dag(phi), phi): i e Q (p3 - p2)^mu1, Q = +1 in scalar_qed.vsm.
    rules = shipped("scalar_qed").derive()
    vertex = rules.vertex("A", "dag(phi)", "phi")
    assert vertex.labels == ("A", "dag(phi)", "phi")
    p = rng.normal(size=(3, 4))
    np.testing.assert_allclose(vertex.evaluate(p, values={"e": 0.3}), 0.3j * (p[2] - p[1]), atol=1e-12)


@pytest.mark.parametrize("charge, factor", [("1", 1), ("-1", 1), ("2", 4), ("1/2", 0.25)])
def test_scalar_qed_seagull(build, dirac, charge, factor):
    # Peskin & Schroeder problem 9.1 (from memory): seagull 2 i e^2 Q^2 g^{mu nu}; the two photon
    # legs are identical, hence the 2. Charge 2 gives four times the charge-1 value.
    vertex = build(_scalar_qed(charge)).derive().vertex("phi", "dag(phi)", "A", "A")
    value = vertex.evaluate(np.zeros((4, 4)))
    assert value.shape == (4, 4)
    np.testing.assert_allclose(value, 2j * 0.09 * factor * dirac.ETA, atol=1e-12)


def test_scalar_qed_seagull_does_not_depend_on_the_covariant_sign(build):
    minus = build(_scalar_qed("1")).derive().vertex("phi", "dag(phi)", "A", "A").evaluate(np.zeros((4, 4)))
    plus = build(_scalar_qed("1", "covariant plus")).derive().vertex("phi", "dag(phi)", "A", "A")
    np.testing.assert_allclose(plus.evaluate(np.zeros((4, 4))), minus, atol=1e-12)
    three_minus = build(_scalar_qed("1")).derive().vertex("phi", "dag(phi)", "A")
    three_plus = build(_scalar_qed("1", "covariant plus")).derive().vertex("phi", "dag(phi)", "A")
    p = np.array([[1.0, 0.2, 0.3, 0.4], [0.5, -0.1, 0.7, 0.2], [-1.5, -0.1, -1.0, -0.6]])
    np.testing.assert_allclose(three_plus.evaluate(p), -three_minus.evaluate(p), atol=1e-12)


def test_scalar_charged_under_two_abelian_groups(build, dirac, rng):
    # D = d - i g1 Q1 A - i g2 Q2 B with Q1 = 2, Q2 = -3: the quadratic piece
    # (g1 Q1 A + g2 Q2 B)^2 dag(s) s gives the seagulls 2 i g1^2 Q1^2 g, 2 i g2^2 Q2^2 g and the mixed
    # one i x 2 g1 g2 Q1 Q2 g (the cross term appears twice, A and B being different legs)
    # (scalar QED generalised, Peskin & Schroeder problem 9.1, from memory).
    rules = build("""
        theory t
        parameters
          coupling g1 = 0.3
          coupling g2 = 0.5
        gauge
          one U(1) boson A strength FA coupling g1
          two U(1) boson B strength FB coupling g2
        fields
          vector A
          vector B
          scalar s complex charge one 2 charge two -3
        lagrangian
          -1/4 FA[mu,nu] FA[mu,nu] - 1/4 FB[mu,nu] FB[mu,nu]
          dag(D[mu] s) D[mu] s
        """).derive()
    zeros = np.zeros((4, 4))
    np.testing.assert_allclose(rules.vertex("s", "dag(s)", "A", "A").evaluate(zeros), 2j * 0.09 * 4 * dirac.ETA,
                               atol=1e-12)
    np.testing.assert_allclose(rules.vertex("s", "dag(s)", "B", "B").evaluate(zeros), 2j * 0.25 * 9 * dirac.ETA,
                               atol=1e-12)
    np.testing.assert_allclose(rules.vertex("s", "dag(s)", "A", "B").evaluate(zeros),
                               2j * 0.3 * 0.5 * 2 * (-3) * dirac.ETA, atol=1e-12)
    p = rng.normal(size=(3, 4))
    np.testing.assert_allclose(rules.vertex("s", "dag(s)", "B").evaluate(p), 1j * 0.5 * (-3) * (p[0] - p[1]),
                               atol=1e-12)


def test_shipped_dark_sector_scalar_vertices(shipped, dirac, rng):
    # dark_sector.vsm: covariant plus, s has charge -2, coupling gx = 0.35:
    # three-point -i gx Q (p1 - p2) = 2 i gx (p1 - p2); seagull 2 i gx^2 Q^2 g = 8 i gx^2 g.
    rules = shipped("dark_sector").derive()
    p = rng.normal(size=(3, 4))
    np.testing.assert_allclose(rules.vertex("s", "dag(s)", "X").evaluate(p), 2j * 0.35 * (p[0] - p[1]), atol=1e-12)
    np.testing.assert_allclose(rules.vertex("s", "dag(s)", "X", "X").evaluate(np.zeros((4, 4))),
                               8j * 0.35**2 * dirac.ETA, atol=1e-12)


def test_scalar_compton_ward_identity(shipped, dirac, rng):
    # phi(p) gamma(k1) -> phi(p') gamma(k'), all three tree diagrams (s, u, seagull). Replacing the
    # first photon's polarisation by k1 gives zero when the other photon is physical
    # (Peskin & Schroeder sec. 5.5 Ward identity and problem 9.1, from memory). This ties the
    # seagull's normalisation to the three-point vertex.
    rules = shipped("scalar_qed").derive()
    three = rules.vertex("phi", "dag(phi)", "A")
    four = rules.vertex("phi", "dag(phi)", "A", "A")
    prop = rules.propagator("phi")
    m = 0.5
    for _ in range(3):
        p = dirac.on_shell(rng, m, 1.0)
        k1 = dirac.on_shell(rng, 0.0, 1.0)
        # outgoing photon k_out and outgoing scalar p_out with p + k1 = p_out + k_out, both on shell:
        total = p + k1
        direction = rng.normal(size=3)
        direction /= np.linalg.norm(direction)
        # solve in the frame given: find |k_out| along `direction` with (total - k_out)^2 = m^2
        E, P = total[0].real, total[1:].real
        s = dirac.dot(total, total).real
        kmag = (s - m * m) / (2 * (E - P @ direction))
        k_out = np.array([kmag, *(kmag * direction)], dtype=complex)
        p_out = total - k_out
        k2 = -k_out  # incoming momentum of the second photon leg
        s_chan = np.einsum("m,n->mn", three.evaluate(np.array([p, -(p + k1), k1])),
                           three.evaluate(np.array([p + k1, -p_out, k2]))) * prop.evaluate(p + k1)
        u_chan = np.einsum("n,m->mn", three.evaluate(np.array([p, -(p + k2), k2])),
                           three.evaluate(np.array([p + k2, -p_out, k1]))) * prop.evaluate(p + k2)
        seagull = four.evaluate(np.array([p, -p_out, k1, k2]))
        M = s_chan + u_chan + seagull  # upper indices (mu for photon 1, nu for photon 2)
        # a physical polarisation of the outgoing photon: spatial, orthogonal to its momentum
        eps = np.cross(direction, rng.normal(size=3))
        eps2 = np.array([0.0, *eps], dtype=complex)
        contracted = dirac.lower(k1) @ M @ dirac.lower(eps2)
        assert abs(contracted) < 1e-9 * np.abs(M).max()
        # without the seagull the identity fails: the check is not empty
        broken = dirac.lower(k1) @ (s_chan + u_chan) @ dirac.lower(eps2)
        assert abs(broken) > 1e-6 * np.abs(M).max()


# ---------------------------------------------------------------- vector propagators

def test_photon_propagator_in_r_xi_gauge_symbolic(shipped):
    # Peskin & Schroeder eq. 9.58 / ch. 21 (from memory): D^{mu nu} = -i/p^2 [g - (1 - xi) p p / p^2],
    # i.e. a = -i/p^2 and b = +i (1 - xi)/p^4 in D = a g + b p p.
    rules = shipped("qed").derive()
    prop = rules.propagator("A")
    xi = sympy.Symbol("xi_A", positive=True)
    assert prop.kind == "vector"
    assert sympy.simplify(prop.a - (-sympy.I / P2)) == 0
    assert sympy.simplify(prop.b - sympy.I * (1 - xi) / P2**2) == 0
    assert xi in prop.b.free_symbols


def test_photon_propagator_feynman_gauge_numeric(shipped, dirac):
    # xi = 1: D^{mu nu} = -i g^{mu nu}/p^2 (Peskin & Schroeder eq. 4.x, from memory).
    prop = shipped("qed").derive("feynman").propagator("A")
    p = np.array([2.0, 0.3, -0.4, 1.1])
    value = prop.evaluate(p)
    assert value.shape == (4, 4)
    np.testing.assert_allclose(value, -1j * dirac.ETA / dirac.dot(p, p), atol=1e-12)


def test_unitary_gauge_leaves_a_massless_photon_in_feynman_gauge(shipped):
    # Unitary gauge only makes sense for massive vectors (Peskin & Schroeder ch. 21, from memory);
    # rules.conventions documents that massless ones stay in Feynman gauge.
    unitary = shipped("qed").derive("unitary").propagator("A")
    feynman = shipped("qed").derive("feynman").propagator("A")
    p = np.array([2.0, 0.3, -0.4, 1.1])
    np.testing.assert_allclose(unitary.evaluate(p), feynman.evaluate(p), atol=1e-12)


def test_photon_propagator_numeric_with_a_value_for_xi(shipped, dirac):
    # DESIGN.md: values= maps parameter names to numbers; the xi-gauge propagator asks for xi_A.
    prop = shipped("qed").derive().propagator("A")
    p = np.array([2.0, 0.3, -0.4, 1.1])
    p2 = dirac.dot(p, p)
    for xi in (0.5, 1.0, 3.0):
        expected = -1j / p2 * (dirac.ETA - (1 - xi) * np.outer(p, p) / p2)
        np.testing.assert_allclose(prop.evaluate(p, values={"xi_A": xi}), expected, atol=1e-12)


MASSIVE_GAUGE_BOSON = """
theory t
parameters
  mass mV = 80.0
  coupling g = 0.3
gauge
  x U(1) boson V strength FV coupling g
fields
  vector V mass mV
lagrangian
  -1/4 FV[mu,nu] FV[mu,nu] + 1/2 mV^2 V[mu] V[mu]
"""


def test_massive_vector_in_three_gauges_symbolic(build):
    # Peskin & Schroeder ch. 21 (R_xi gauges, from memory), for a vector with a mass term and the
    # gauge-fixing term -1/(2 xi) (d.V)^2 (no Goldstone here):
    #   R_xi:    -i/(p^2 - m^2) [g - (1 - xi) p p /(p^2 - xi m^2)]
    #   Feynman: -i g/(p^2 - m^2)
    #   unitary: -i/(p^2 - m^2) [g - p p / m^2]
    model = build(MASSIVE_GAUGE_BOSON)
    m = sympy.Symbol("mV", real=True)
    xi = sympy.Symbol("xi_V", positive=True)
    a = -sympy.I / (P2 - m**2)
    expected_b = {"xi": sympy.I * (1 - xi) / ((P2 - m**2) * (P2 - xi * m**2)),
                  "feynman": sympy.Integer(0),
                  "unitary": sympy.I / (m**2 * (P2 - m**2))}
    for gauge, b in expected_b.items():
        prop = model.derive(gauge).propagator("V")
        assert sympy.simplify(prop.a - a) == 0, gauge
        assert sympy.simplify(prop.b - b) == 0, gauge


def test_massive_vector_unitary_gauge_numeric(build, dirac):
    prop = build(MASSIVE_GAUGE_BOSON).derive("unitary").propagator("V")
    p = np.array([100.0, 3.0, -20.0, 10.0])
    expected = -1j / (dirac.dot(p, p) - 80.0**2) * (dirac.ETA - np.outer(p, p) / 80.0**2)
    np.testing.assert_allclose(prop.evaluate(p), expected, rtol=1e-12, atol=1e-15)


def test_complex_massive_vector_with_hand_written_proca_terms(build, dirac):
    # L = -1/2 W+_{mu nu} W^{mu nu} + m^2 W+_mu W^mu written out; no gauge group, so the propagator
    # is the unitary-gauge (Proca) one, -i/(p^2 - m^2) [g - p p/m^2] (Peskin & Schroeder ch. 21,
    # from memory).
    model = build("""
        theory t
        parameters
          mass mW = 80.0
          coupling g = 0.6
        fields
          vector W complex mass mW
          scalar h real
        lagrangian
          -dag(d[mu] W[nu]) d[mu] W[nu] + dag(d[mu] W[nu]) d[nu] W[mu] + mW^2 dag(W[mu]) W[mu]
          1/2 d[mu] h d[mu] h
          g h dag(W[mu]) W[mu]
        """)
    rules = model.derive()
    prop = rules.propagator("W")
    m = sympy.Symbol("mW", real=True)
    assert sympy.simplify(prop.a + sympy.I / (P2 - m**2)) == 0
    assert sympy.simplify(prop.b - sympy.I / (m**2 * (P2 - m**2))) == 0
    assert rules.propagator("dag(W)") == prop
    p = np.array([100.0, 3.0, -20.0, 10.0])
    expected = -1j / (dirac.dot(p, p) - 80.0**2) * (dirac.ETA - np.outer(p, p) / 80.0**2)
    np.testing.assert_allclose(prop.evaluate(p), expected, rtol=1e-12, atol=1e-15)
    # h W+ W-: i g g^{mu nu} (dag(W) and W are different legs, no factor 2)
    np.testing.assert_allclose(rules.vertex("h", "W", "dag(W)").evaluate(np.zeros((3, 4))), 0.6j * dirac.ETA,
                               atol=1e-12)


def test_real_proca_field_without_gauge_group(build, dirac):
    # -1/4 V_{mu nu} V^{mu nu} + 1/2 m^2 V^2 written out with d[mu]: Proca propagator as above.
    prop = build("""
        theory t
        parameters
          mass mV = 5.0
        fields
          vector V mass mV
        lagrangian
          -1/2 d[mu] V[nu] d[mu] V[nu] + 1/2 d[mu] V[nu] d[nu] V[mu] + 1/2 mV^2 V[mu] V[mu]
        """).derive().propagator("V")
    p = np.array([7.0, 1.0, -2.0, 3.0])
    expected = -1j / (dirac.dot(p, p) - 25.0) * (dirac.ETA - np.outer(p, p) / 25.0)
    np.testing.assert_allclose(prop.evaluate(p), expected, atol=1e-12)


# ---------------------------------------------------------------- e+ e- -> mu+ mu-

def _photon_propagator_at(prop, q: np.ndarray, xi: float, values: dict) -> np.ndarray:
    """D^{mu nu}(q) from the symbolic coefficients a, b with xi_A set to a number."""
    numbers = {s: v for s, v in prop.model.parameter_values(values).items()}
    numbers[sympy.Symbol("xi_A", positive=True)] = xi
    q2 = complex(q @ np.diag([1, -1, -1, -1]) @ q)
    numbers[P2] = q2
    a = complex(prop.a.subs(numbers))
    b = complex(prop.b.subs(numbers))
    return a * np.diag([1.0, -1.0, -1.0, -1.0]) + b * np.outer(q, q)


def _ee_to_mumu(rules, dirac, p1, p2, k1, k2, me, mmu, values, propagator_at):
    """Spin-summed |M|^2 of e-(p1) e+(p2) -> mu-(k1) mu+(k2) from the derived rules."""
    v_e = rules.vertex("bar(ele)", "ele", "A").evaluate(np.array([p2, p1, -(p1 + p2)]), values=values)
    v_mu = rules.vertex("bar(muon)", "muon", "A").evaluate(np.array([-k1, -k2, k1 + k2]), values=values)
    D = propagator_at(p1 + p2)
    D_lower = dirac.ETA @ D @ dirac.ETA
    total = 0.0
    for s1, s2, r1, r2 in itertools.product(range(2), repeat=4):
        j_e = np.einsum("a,abm,b->m", dirac.bar(dirac.v(p2, me, s2)), v_e, dirac.u(p1, me, s1))
        j_mu = np.einsum("a,abm,b->m", dirac.bar(dirac.u(k1, mmu, r1)), v_mu, dirac.v(k2, mmu, r2))
        total += abs(j_e @ D_lower @ j_mu) ** 2
    return total


def _kinematics(rng, E, me, mmu):
    pe, pm = np.sqrt(E * E - me * me), np.sqrt(E * E - mmu * mmu)
    theta, phi = rng.uniform(0.2, 2.9), rng.uniform(0, 2 * np.pi)
    n = np.array([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi), np.cos(theta)])
    p1 = np.array([E, 0, 0, pe], dtype=complex)
    p2 = np.array([E, 0, 0, -pe], dtype=complex)
    k1 = np.array([E, *(pm * n)], dtype=complex)
    k2 = np.array([E, *(-pm * n)], dtype=complex)
    return p1, p2, k1, k2


def test_ee_to_mumu_massless_matches_the_textbook_formula_for_every_xi(shipped, dirac, rng):
    # Peskin & Schroeder eq. 5.10 (from memory), massless limit:
    #     sum over spins |M|^2 = 8 e^4 (t^2 + u^2) / s^2,
    # and gauge-parameter independence: the same number for xi = 0.5, 1, 3
    # (Romão & Silva arXiv:1209.6213 work in R_xi for this reason; common practice).
    rules = shipped("qed").derive()
    prop = rules.propagator("A")
    values = {"me": 0.0, "mmu": 0.0, "e": 0.31}
    e = 0.31
    for _ in range(3):
        p1, p2, k1, k2 = _kinematics(rng, rng.uniform(1.0, 10.0), 0.0, 0.0)
        s, t, u = (dirac.dot(p1 + p2, p1 + p2).real, dirac.dot(p1 - k1, p1 - k1).real,
                   dirac.dot(p1 - k2, p1 - k2).real)
        textbook = 8 * e**4 * (t * t + u * u) / (s * s)
        results = [_ee_to_mumu(rules, dirac, p1, p2, k1, k2, 0.0, 0.0, values,
                               lambda q, xi=xi: _photon_propagator_at(prop, q, xi, values))
                   for xi in (0.5, 1.0, 3.0)]
        for value in results:
            assert value == pytest.approx(textbook, rel=1e-9)


def test_ee_to_mumu_with_masses_matches_the_trace_formula(shipped, dirac, rng):
    # With both masses kept (Peskin & Schroeder eq. 5.10 generalised, from memory; it follows from
    # the two traces Tr[(p2slash - me) g^mu (p1slash + me) g^nu] Tr[(k1slash + mmu) g_mu (k2slash - mmu) g_nu]):
    #   sum |M|^2 = 32 e^4/s^2 [(p1.k1)(p2.k2) + (p1.k2)(p2.k1) + mmu^2 (p1.p2) + me^2 (k1.k2) + 2 me^2 mmu^2].
    # Masses: me = 0.5, mmu = 1.5 near threshold so that both matter (values override the PDG ones).
    rules = shipped("qed").derive("feynman")
    prop = rules.propagator("A")
    me, mmu, e = 0.5, 1.5, 0.31
    values = {"me": me, "mmu": mmu, "e": e}
    d = dirac.dot
    for _ in range(3):
        p1, p2, k1, k2 = _kinematics(rng, rng.uniform(1.6, 4.0), me, mmu)
        s = d(p1 + p2, p1 + p2).real
        formula = 32 * e**4 / s**2 * (d(p1, k1) * d(p2, k2) + d(p1, k2) * d(p2, k1) + mmu**2 * d(p1, p2)
                                      + me**2 * d(k1, k2) + 2 * me**2 * mmu**2).real
        value = _ee_to_mumu(rules, dirac, p1, p2, k1, k2, me, mmu, values, lambda q: prop.evaluate(q))
        assert value == pytest.approx(formula, rel=1e-9)


def test_ee_to_mumu_is_xi_independent_through_values(shipped, dirac, rng):
    # As above, but giving xi through the public values= mapping, as DESIGN.md promises.
    rules = shipped("qed").derive()
    prop = rules.propagator("A")
    base = {"me": 0.0, "mmu": 0.0, "e": 0.31}
    p1, p2, k1, k2 = _kinematics(rng, 3.0, 0.0, 0.0)
    results = [_ee_to_mumu(rules, dirac, p1, p2, k1, k2, 0.0, 0.0, base,
                           lambda q, xi=xi: prop.evaluate(q, values={**base, "xi_A": xi}))
               for xi in (0.5, 1.0, 3.0)]
    assert results[0] == pytest.approx(results[1], rel=1e-9)
    assert results[2] == pytest.approx(results[1], rel=1e-9)


# ---------------------------------------------------------------- the axion-like two-photon vertex

@pytest.mark.parametrize("eps0123", [+1, -1])
def test_axion_two_photon_vertex_and_the_eps_convention(shipped, dirac, rng, eps0123):
    # axion_like.vsm: -gagg/8 a eps^{mu nu rho sigma} F_{mu nu} F_{rho sigma}
    # = -gagg/2 a eps (d_mu A_nu)(d_rho A_sigma). Two assignments of the photon legs (2, 3), each
    # giving (-i)^2 eps^{p2 mu2 p3 mu3}, so the vertex is i (-gagg/2)(-2) eps^{p2 mu2 p3 mu3}
    # = -i gagg eps^{mu2 mu3 p2 p3} (momenta contracted with lower indices). The overall sign
    # follows the sign of eps^{0123}, a model-level switch (common practice, no source).
    text = vs.example("axion_like").read_text(encoding="utf-8")
    text = text.replace("eps0123 +1", f"eps0123 {eps0123:+d}")
    rules = vs.load_model(text=text, name="axion.vsm").derive()
    vertex = rules.vertex("a", "A", "A")
    p = rng.normal(size=(3, 4))
    eps = dirac.levi_civita(eps0123)
    expected = -1j * 1e-4 * np.einsum("mnab,a,b->mn", eps, dirac.lower(p[1]), dirac.lower(p[2]))
    np.testing.assert_allclose(vertex.evaluate(p), expected, atol=1e-15)


# ---------------------------------------------------------------- Compton scattering

def _compton_tensor(rules, dirac, p, k, p_out, k_out, m, s, s_out, values):
    """T^{nu mu} = ubar(p') [V^nu S(p+k) V^mu + V^mu S(p-k') V^nu] u(p); mu: incoming photon k,
    nu: outgoing photon k'. The fermion propagator takes the momentum along the arrow."""
    vertex = rules.vertex("bar(ele)", "ele", "A")
    V = vertex.evaluate(np.zeros((3, 4)), values=values)  # momentum independent
    prop = rules.propagator("ele")
    S_s = prop.evaluate(p + k, values=values)
    S_u = prop.evaluate(p - k_out, values=values)
    ubar = dirac.bar(dirac.u(p_out, m, s_out))
    u = dirac.u(p, m, s)
    s_chan = np.einsum("a,abn,bc,cdm,d->nm", ubar, V, S_s, V, u)
    u_chan = np.einsum("a,abm,bc,cdn,d->nm", ubar, V, S_u, V, u)
    return s_chan + u_chan


def test_compton_scattering_klein_nishina_and_ward_identity(shipped, dirac, rng):
    # e-(p) gamma(k) -> e-(p') gamma(k'). Peskin & Schroeder eq. 5.87 (from memory):
    #   1/4 sum |M|^2 = 2 e^4 [p.k'/p.k + p.k/p.k' + 2 m^2 (1/p.k - 1/p.k') + m^4 (1/p.k - 1/p.k')^2].
    # The photon polarisation sums are replaced by -g_{mu nu}, which is allowed because the Ward
    # identity k_mu T^{nu mu} = 0 holds (checked here too). This exercises the direction of the
    # momentum in the Dirac propagator.
    rules = shipped("qed").derive("feynman")
    m, e = 0.8, 0.45
    values = {"me": m, "e": e}
    d = dirac.dot
    for _ in range(3):
        p = np.array([m, 0, 0, 0], dtype=complex)  # electron at rest (lab frame)
        omega = rng.uniform(0.3, 3.0)
        k = np.array([omega, 0, 0, omega], dtype=complex)
        theta, phi = rng.uniform(0.3, 2.8), rng.uniform(0, 2 * np.pi)
        omega_out = omega / (1 + omega / m * (1 - np.cos(theta)))  # Compton formula
        n = np.array([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi), np.cos(theta)])
        k_out = np.array([omega_out, *(omega_out * n)], dtype=complex)
        p_out = p + k - k_out
        assert d(p_out, p_out).real == pytest.approx(m * m)
        total = 0.0
        for s, s_out in itertools.product(range(2), repeat=2):
            T = _compton_tensor(rules, dirac, p, k, p_out, k_out, m, s, s_out, values)
            # Ward identity in either photon (Peskin & Schroeder sec. 5.5, from memory)
            assert np.abs(T @ dirac.lower(k)).max() < 1e-9 * np.abs(T).max()
            assert np.abs(dirac.lower(k_out) @ T).max() < 1e-9 * np.abs(T).max()
            T_lower = dirac.ETA @ T @ dirac.ETA
            total += np.einsum("nm,nm->", T_lower, T.conj()).real
        pk, pk_out = d(p, k).real, d(p, k_out).real
        klein_nishina = 2 * e**4 * (pk_out / pk + pk / pk_out + 2 * m**2 * (1 / pk - 1 / pk_out)
                                    + m**4 * (1 / pk - 1 / pk_out) ** 2)
        assert total / 4 == pytest.approx(klein_nishina, rel=1e-9)
