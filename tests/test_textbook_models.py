"""Held-out textbook models: amplitudes built from the derived rules against published results.

Every model below is written here, from the textbooks, not taken from models/. The rules are
derived by vertexsmith; the amplitudes are then assembled by hand in this file with the
independent Dirac algebra of conftest.py (sympy's Dirac matrices, textbook spinors), explicit
transverse polarisation vectors and explicit colour sums, and compared with published
spin-, polarisation- and colour-summed results. Signs, factors of i, symmetry factors, the
colour axes and the propagators all enter; gauge invariance is checked on the same amplitudes
(Ward identities, independence of xi, R_xi against unitary gauge).

Conventions used to assemble amplitudes (README "Conventions"): all vertex momenta incoming, a
vertex array has per leg its Lorentz axis (upper index), spinor axis, then group axes; a vector
propagator has upper indices, so it is contracted with vertex indices after lowering both of
its indices with the metric (+,-,-,-). The product of vertices and propagators is i M.
"""

from __future__ import annotations

import textwrap

import numpy as np
import pytest

import vertexsmith

ETA = np.diag([1.0, -1.0, -1.0, -1.0]).astype(complex)


# ---------------------------------------------------------------- kinematics written here

def mdot(a: np.ndarray, b: np.ndarray) -> complex:
    return complex(np.asarray(a) @ ETA @ np.asarray(b))


def lower(v: np.ndarray) -> np.ndarray:
    """Lower the last (Lorentz) axis of an array of upper-index vectors."""
    return np.asarray(v, dtype=complex) @ ETA


def unit(theta: float, phi: float) -> np.ndarray:
    return np.array([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi), np.cos(theta)])


def on_shell(mass: float, p3: np.ndarray) -> np.ndarray:
    return np.array([np.sqrt(mass**2 + p3 @ p3), *p3], dtype=complex)


def two_to_two(sqrt_s: float, m_in: tuple[float, float], m_out: tuple[float, float],
               n_in: np.ndarray, n_out: np.ndarray) -> tuple[np.ndarray, ...]:
    """p1 + p2 -> k1 + k2 in the centre-of-mass frame, incoming along n_in, outgoing along n_out."""
    s = sqrt_s**2

    def size(ma: float, mb: float) -> float:
        return np.sqrt((s - (ma + mb) ** 2) * (s - (ma - mb) ** 2)) / (2 * sqrt_s)

    pin, pout = size(*m_in), size(*m_out)
    return (on_shell(m_in[0], pin * n_in), on_shell(m_in[1], -pin * n_in),
            on_shell(m_out[0], pout * n_out), on_shell(m_out[1], -pout * n_out))


def transverse(k: np.ndarray) -> np.ndarray:
    """Two real polarisation vectors (0, e), e orthonormal and orthogonal to k's direction; shape (2, 4)."""
    n = k[1:].real / np.linalg.norm(k[1:].real)
    helper = np.array([0.3, -0.5, 0.81])
    e1 = np.cross(n, helper)
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(n, e1)
    return np.array([[0.0, *e1], [0.0, *e2]], dtype=complex)


def mandelstam(p1: np.ndarray, p2: np.ndarray, k1: np.ndarray, k2: np.ndarray) -> tuple[float, float, float]:
    return (mdot(p1 + p2, p1 + p2).real, mdot(p1 - k1, p1 - k1).real, mdot(p1 - k2, p1 - k2).real)


def lowered_propagator(prop, q: np.ndarray, values: dict) -> np.ndarray:
    """A vector propagator with both Lorentz indices lowered (group axes, if any, kept)."""
    return np.einsum("ar,rs...,sb->ab...", ETA, prop.evaluate(q, values=values), ETA)


def spinor_rows(dirac, kind: str, p: np.ndarray, m: float, barred: bool) -> np.ndarray:
    """The two spin states of u or v (as rows), optionally Dirac-adjointed; shape (2, 4)."""
    make = dirac.u if kind == "u" else dirac.v
    rows = [make(p, m, s) for s in range(2)]
    return np.array([dirac.bar(r) for r in rows] if barred else rows)


# ================================================================ scalar theories

CUBIC_QUARTIC = """
theory cubic_quartic "real scalar with cubic and quartic self-couplings"
parameters
  mass     m   = 1.3
  coupling g3  = 0.7
  coupling lam = 0.45
fields
  scalar phi real mass m
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  g3/6 phi^3 - lam/24 phi^4
"""


def test_phi3_plus_phi4_two_to_two_amplitude(build, rng):
    # Srednicki ch. 10 (from memory): with L_int = g/6 phi^3 the tree 2 -> 2 amplitude is
    #     T = g^2 [1/(m^2 - s) + 1/(m^2 - t) + 1/(m^2 - u)],
    # written there with the mostly-plus metric, where s = -(k1 + k2)^2 is the same number as our
    # (k1 + k2)^2; the quartic -lam/4! phi^4 adds -lam (Peskin & Schroeder sec. 4.6, from memory).
    rules = build(CUBIC_QUARTIC).derive()
    v3, v4, prop = rules.vertex("phi", "phi", "phi"), rules.vertex("phi", "phi", "phi", "phi"), rules.propagator("phi")
    for _ in range(3):
        m, g, lam = rng.uniform(0.5, 2.0), rng.uniform(0.2, 1.5), rng.uniform(0.1, 1.0)
        values = {"m": m, "g3": g, "lam": lam}
        p1, p2, k1, k2 = two_to_two(2 * m + rng.uniform(0.5, 4.0), (m, m), (m, m), unit(0.4, 1.0),
                                    unit(rng.uniform(0.3, 2.8), rng.uniform(0, 6.2)))
        incoming = [p1, p2, -k1, -k2]
        i_m = v4.evaluate(np.array(incoming), values=values)
        for (a, b), (c, d) in [((0, 1), (2, 3)), ((0, 2), (1, 3)), ((0, 3), (1, 2))]:
            q = incoming[a] + incoming[b]
            i_m = i_m + (v3.evaluate(np.array([incoming[a], incoming[b], -q]), values=values)
                         * prop.evaluate(q, values=values)
                         * v3.evaluate(np.array([q, incoming[c], incoming[d]]), values=values))
        s, t, u = mandelstam(p1, p2, k1, k2)
        expected = g**2 * (1 / (m**2 - s) + 1 / (m**2 - t) + 1 / (m**2 - u)) - lam
        assert complex(i_m) == pytest.approx(1j * expected, rel=1e-11)


FREE_IN_DISGUISE = """
theory disguised "a free massive scalar written in the variable phi = chi + c chi^2"
parameters
  mass     m = 1.1
  coupling c = 0.37
fields
  scalar chi real mass m
lagrangian
  1/2 (1 + 2 c chi)^2 d[mu] chi d[mu] chi - 1/2 m^2 (chi + c chi^2)^2
"""


def _disguised_amplitude(rules, values, p1, p2, k1, k2) -> complex:
    v3, v4, prop = rules.vertex("chi", "chi", "chi"), rules.vertex("chi", "chi", "chi", "chi"), rules.propagator("chi")
    incoming = [p1, p2, -k1, -k2]
    total = complex(v4.evaluate(np.array(incoming), values=values))
    for (a, b), (c, d) in [((0, 1), (2, 3)), ((0, 2), (1, 3)), ((0, 3), (1, 2))]:
        q = incoming[a] + incoming[b]
        total += complex(v3.evaluate(np.array([incoming[a], incoming[b], -q]), values=values)
                         * prop.evaluate(q, values=values)
                         * v3.evaluate(np.array([q, incoming[c], incoming[d]]), values=values))
    return total


def test_field_redefinition_of_a_free_theory_scatters_nothing(build, rng):
    # The S-matrix does not change under a local field redefinition phi = chi + c chi^2 (the
    # equivalence theorem; Srednicki ch. 5 / Weinberg vol. I sec. 10.2, from memory): the free
    # theory in the variable chi has derivative cubic and quartic vertices, yet its on-shell tree
    # 2 -> 2 amplitude vanishes. This ties the momentum signs of derivative vertices, their
    # symmetry factors and the propagator together.
    model = build(FREE_IN_DISGUISE)
    rules = model.derive()
    assert len(rules.vertices) == 2  # the cubic and the quartic vertex are really there
    for _ in range(3):
        m, c = rng.uniform(0.5, 2.0), rng.uniform(0.2, 1.0)
        values = {"m": m, "c": c}
        kin = two_to_two(2 * m + rng.uniform(0.5, 4.0), (m, m), (m, m), unit(1.1, 0.3),
                         unit(rng.uniform(0.3, 2.8), rng.uniform(0, 6.2)))
        single = abs(complex(rules.vertex("chi", "chi", "chi", "chi").evaluate(
            np.array([kin[0], kin[1], -kin[2], -kin[3]]), values=values)))
        assert single > 1e-2  # each diagram alone is not small ...
        assert abs(_disguised_amplitude(rules, values, *kin)) < 1e-10 * single  # ... their sum is zero
    # the check can fail: spoil the quartic coefficient and the amplitude no longer vanishes
    spoiled = build(FREE_IN_DISGUISE.replace("(1 + 2 c chi)^2", "(1 + 2 c chi + c^2 chi^2)")).derive()
    kin = two_to_two(4.0, (1.1, 1.1), (1.1, 1.1), unit(1.1, 0.3), unit(2.0, 1.0))
    assert abs(_disguised_amplitude(spoiled, {"m": 1.1, "c": 0.37}, *kin)) > 1e-3


# ================================================================ scalar QED, held-out variant

SCALAR_QED_Q2 = """
theory sqed_q2 "charged scalar of charge -2 with the covariant-plus convention"
parameters
  coupling ee = 0.3
  mass     mh = 0.7
gauge
  em U(1) boson Ph strength FP coupling ee
fields
  vector Ph
  scalar h complex mass mh charge em -2
lagrangian
  -1/4 FP[mu,nu] FP[mu,nu]
  dag(D[mu] h) D[mu] h - mh^2 dag(h) h
conventions
  covariant plus
"""


def _annihilation(rules, values, p1, p2, k1, k2, eps1, eps2, seagull: bool = True) -> np.ndarray:
    """i M for h(p1) h*(p2) -> photon(k1) photon(k2); eps arrays (n, 4) upper index; result (n1, n2)."""
    v3 = rules.vertex("h", "dag(h)", "Ph")
    prop = rules.propagator("h")
    e1, e2 = lower(eps1.conj()), lower(eps2.conj())
    # t-channel: h(p1) emits photon 1 and goes on as an h of momentum p1 - k1
    t1 = v3.evaluate(np.array([p1, -(p1 - k1), -k1]), values=values) @ e1.T
    t2 = v3.evaluate(np.array([p1 - k1, p2, -k2]), values=values) @ e2.T
    u1 = v3.evaluate(np.array([p1, -(p1 - k2), -k2]), values=values) @ e2.T
    u2 = v3.evaluate(np.array([p1 - k2, p2, -k1]), values=values) @ e1.T
    amp = (np.outer(t1, t2) * prop.evaluate(p1 - k1, values=values)
           + np.outer(u2, u1) * prop.evaluate(p1 - k2, values=values))
    if seagull:
        v4 = rules.vertex("h", "dag(h)", "Ph", "Ph").evaluate(np.array([p1, p2, -k1, -k2]), values=values)
        amp = amp + np.einsum("mn,am,bn->ab", v4, e1, e2)
    return amp


def test_scalar_pair_annihilation_into_two_photons(build, rng):
    # Peskin & Schroeder problem 9.1 (from memory), re-derived in the gauge eps.p1 = 0 where only
    # the seagull 2 i (Q e)^2 g^{mu nu} contributes: summed over photon polarisations
    #     sum |M|^2 = 4 (Q e)^4 [1 + (1 - m^2 k1.k2 / ((p1.k1)(p1.k2)))^2]
    # (= 4 (Q e)^4 (1 + cos^2 theta) in the rest frame of p1). Here Q = -2 under 'covariant plus';
    # the amplitude is built in the centre-of-mass frame with ordinary transverse polarisations,
    # so all three diagrams are needed to reach the gauge-independent number.
    rules = build(SCALAR_QED_Q2).derive("xi")
    for _ in range(3):
        m, e = rng.uniform(0.3, 1.5), rng.uniform(0.1, 0.6)
        values = {"mh": m, "ee": e}
        p1, p2, k1, k2 = two_to_two(2 * m + rng.uniform(0.2, 3.0), (m, m), (0.0, 0.0), unit(0.5, 0.2),
                                    unit(rng.uniform(0.3, 2.8), rng.uniform(0, 6.2)))
        summed = np.sum(np.abs(_annihilation(rules, values, p1, p2, k1, k2, transverse(k1), transverse(k2))) ** 2)
        a = m**2 * mdot(k1, k2).real / (mdot(p1, k1).real * mdot(p1, k2).real)
        assert summed == pytest.approx(4 * (2 * e) ** 4 * (1 + (1 - a) ** 2), rel=1e-11)


def test_scalar_pair_annihilation_ward_identity_needs_the_seagull(build):
    # Ward identity (Peskin & Schroeder sec. 5.5 and problem 9.1, from memory): eps1 -> k1 with the
    # other photon physical gives zero; the t- and u-channel diagrams alone do not.
    # In the centre-of-mass frame k1.eps2 = 0 for a transverse eps2, which would hide the seagull's
    # share; eps2 + 0.7 k2 is the same physical polarisation (k2.k2 = 0) and exposes it.
    rules = build(SCALAR_QED_Q2).derive("feynman")
    m = 0.7
    values = {"mh": m, "ee": 0.3}
    p1, p2, k1, k2 = two_to_two(2.3, (m, m), (0.0, 0.0), unit(0.5, 0.2), unit(1.9, 4.0))
    eps1, eps2 = transverse(k1) + 0.4 * k1, transverse(k2) + 0.7 * k2
    scale = np.abs(_annihilation(rules, values, p1, p2, k1, k2, eps1, eps2)).max()
    ward = _annihilation(rules, values, p1, p2, k1, k2, k1[None, :], eps2)
    assert np.abs(ward).max() < 1e-12 * scale
    ward2 = _annihilation(rules, values, p1, p2, k1, k2, eps1, k2[None, :])
    assert np.abs(ward2).max() < 1e-12 * scale
    without = _annihilation(rules, values, p1, p2, k1, k2, k1[None, :], eps2, seagull=False)
    assert np.abs(without).max() > 1e-3 * scale


# ================================================================ QCD, held-out text

QCD_MASSLESS = """
theory qcd_two_flavours "SU(3) gauge theory with two massless quark flavours"
parameters
  coupling gs = 0.9
gauge
  colour SU(3) boson g strength gg coupling gs
fields
  vector g
  dirac q in colour fundamental
  dirac r in colour fundamental
lagrangian
  -1/4 gg[mu,nu,a] gg[mu,nu,a]
  bar(q) I gamma[mu] D[mu] q
  bar(r) I gamma[mu] D[mu] r
"""


@pytest.fixture(scope="module")
def qcd_rules():
    model = vertexsmith.load_model(text=textwrap.dedent(QCD_MASSLESS).lstrip("\n"), name="qcd_two_flavours.vsm")
    rules = {gauge: model.derive(gauge) for gauge in ("xi", "feynman")}
    # the same theory with D = d + i g T^a A^a (and the matching sign of g f A A in the field strength)
    plus = vertexsmith.load_model(text=textwrap.dedent(QCD_MASSLESS).lstrip("\n") + "conventions\n  covariant plus\n",
                                  name="qcd_plus.vsm")
    rules["plus"] = plus.derive("feynman")
    return rules


def _gg_to_gg(rules, values, incoming, eps, contact: bool = True) -> np.ndarray:
    """i M for four gluons, every momentum incoming; eps[k] (n_k, 4) upper index (already conjugated
    for outgoing gluons). Returns axes (pol1, pol2, pol3, pol4, a1, a2, a3, a4)."""
    v3, v4, prop = rules.vertex("g", "g", "g"), rules.vertex("g", "g", "g", "g"), rules.propagator("g")
    el = [lower(e) for e in eps]
    total = 0
    for (i, j), (k, l) in [((0, 1), (2, 3)), ((0, 2), (1, 3)), ((0, 3), (1, 2))]:
        q = incoming[i] + incoming[j]
        left = np.einsum("manbre,Pm,Qn->PQabre", v3.evaluate(np.array([incoming[i], incoming[j], -q]), values=values),
                         el[i], el[j])
        right = np.einsum("sfmcnd,Rm,Sn->RScdsf", v3.evaluate(np.array([q, incoming[k], incoming[l]]), values=values),
                          el[k], el[l])
        amp = np.einsum("PQabre,rsef,RScdsf->PQRSabcd", left, lowered_propagator(prop, q, values), right,
                        optimize=True)
        order = [i, j, k, l]
        back = [order.index(n) for n in range(4)]
        total = total + amp.transpose(back + [4 + x for x in back])
    if contact:
        total = total + np.einsum("manbrcsd,Pm,Qn,Rr,Ss->PQRSabcd",
                                  v4.evaluate(np.array(incoming), values=values), *el, optimize=True)
    return total


@pytest.mark.parametrize("xi", [1.0, 0.3])
def test_gg_to_gg_summed_matrix_element(qcd_rules, rng, xi):
    # Ellis, Stirling & Webber, table 7.1, and the PDG review "Cross-section formulae for specific
    # processes" (from memory), averaged over 2 x 2 polarisations and 8 x 8 colours:
    #     (1/256) sum |M|^2 = (9/2) g^4 (3 - t u/s^2 - s u/t^2 - s t/u^2).
    # Explicit transverse polarisations for all four gluons: no ghosts, and the result must not
    # depend on the gauge parameter of the internal propagator.
    rules = qcd_rules["xi"]
    g = 0.9
    for _ in range(2):
        p1, p2, k1, k2 = two_to_two(rng.uniform(1.0, 20.0), (0.0, 0.0), (0.0, 0.0),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)))
        incoming = [p1, p2, -k1, -k2]
        eps = [transverse(p1), transverse(p2), transverse(k1).conj(), transverse(k2).conj()]
        amp = _gg_to_gg(rules, {"gs": g, "xi_g": xi}, incoming, eps)
        s, t, u = mandelstam(p1, p2, k1, k2)
        expected = 4.5 * g**4 * (3 - t * u / s**2 - s * u / t**2 - s * t / u**2)
        assert np.sum(np.abs(amp) ** 2) / 256 == pytest.approx(expected, rel=1e-10)


def test_gg_to_gg_ward_identity_needs_the_contact_vertex(qcd_rules):
    # Peskin & Schroeder sec. 16.1 (from memory): a gluon's polarisation replaced by its momentum
    # gives zero when all other gluons are physical, for every colour; the four-gluon vertex is needed.
    values = {"gs": 0.9}
    p1, p2, k1, k2 = two_to_two(5.0, (0.0, 0.0), (0.0, 0.0), unit(0.4, 0.9), unit(1.9, 2.5))
    incoming = [p1, p2, -k1, -k2]
    eps = [transverse(p1), transverse(p2), transverse(k1), transverse(k2)]
    for convention in ("feynman", "plus"):
        rules = qcd_rules[convention]
        scale = np.abs(_gg_to_gg(rules, values, incoming, eps)).max()
        for leg in range(4):
            longitudinal = list(eps)
            longitudinal[leg] = incoming[leg][None, :]
            assert np.abs(_gg_to_gg(rules, values, incoming, longitudinal)).max() < 1e-12 * scale
    rules = qcd_rules["feynman"]
    longitudinal = [incoming[0][None, :]] + eps[1:]
    assert np.abs(_gg_to_gg(rules, values, incoming, longitudinal, contact=False)).max() > 1e-2 * scale


def _qqbar_to_gg(rules, values, p1, p2, k1, k2, eps1, eps2, dirac) -> np.ndarray:
    """i M for q(p1) qbar(p2) -> g(k1) g(k2); axes (spin q, spin qbar, pol1, pol2, col q, col qbar, a1, a2)."""
    vq = rules.vertex("bar(q)", "q", "g").evaluate(np.zeros((3, 4)), values=values)  # (al, i, be, j, mu, a)
    prop = rules.propagator("q")
    u = spinor_rows(dirac, "u", p1, 0.0, barred=False)
    vb = spinor_rows(dirac, "v", p2, 0.0, barred=True)
    e1, e2 = lower(eps1.conj()), lower(eps2.conj())
    # quark line: vbar(p2) [V(g2) S(p1 - k1) V(g1) + V(g1) S(p1 - k2) V(g2)] u(p1)
    t = np.einsum("Sa,aibjmB,bcjk,ckdlnA,Td,Xn,Ym->TSXYliAB", vb, vq, prop.evaluate(p1 - k1, values=values), vq, u,
                  e1, e2, optimize=True)
    w = np.einsum("Sa,aibjnA,bcjk,ckdlmB,Td,Xn,Ym->TSXYliAB", vb, vq, prop.evaluate(p1 - k2, values=values), vq, u,
                  e1, e2, optimize=True)
    # three-gluon diagram: quark current, gluon propagator, vertex (internal q, -k1, -k2)
    q = p1 + p2
    current = np.einsum("Sa,aiblsc,Tb->TSscli", vb, vq, u)
    v3 = rules.vertex("g", "g", "g").evaluate(np.array([q, -k1, -k2]), values=values)
    s = np.einsum("TSscli,stcd,tdmAnB,Xm,Yn->TSXYliAB", current,
                  lowered_propagator(rules.propagator("g"), q, values), v3, e1, e2, optimize=True)
    return t + w + s


def test_q_qbar_to_g_g_summed_matrix_element(qcd_rules, dirac, rng):
    # Ellis, Stirling & Webber, table 7.1 / PDG cross-section formulae (from memory), massless quarks,
    # averaged over 2 x 2 spins and 3 x 3 colours:
    #     (1/36) sum |M|^2 = g^4 [ (32/27) (t^2 + u^2)/(t u) - (8/3) (t^2 + u^2)/s^2 ],
    # t = (p_q - k1)^2, u = (p_q - k2)^2. The relative sign of the three-gluon diagram (f^{abc}
    # against [T^a, T^b]) and the colour axes of both vertices enter. The 'covariant plus' spelling
    # of the same theory flips the sign of g in every rule consistently, so |M|^2 is the same
    # (Romao & Silva, arXiv:1209.6213, sign parameters; from memory).
    g = 0.9
    for gauge, xi in (("feynman", None), ("xi", 0.4), ("plus", None)):
        rules = qcd_rules[gauge]
        values = {"gs": g} if xi is None else {"gs": g, "xi_g": xi}
        p1, p2, k1, k2 = two_to_two(rng.uniform(1.0, 10.0), (0.0, 0.0), (0.0, 0.0),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)))
        amp = _qqbar_to_gg(rules, values, p1, p2, k1, k2, transverse(k1), transverse(k2), dirac)
        s, t, u = mandelstam(p1, p2, k1, k2)
        expected = g**4 * (32 / 27 * (t * t + u * u) / (t * u) - 8 / 3 * (t * t + u * u) / s**2)
        assert np.sum(np.abs(amp) ** 2) / 36 == pytest.approx(expected, rel=1e-10)


def test_q_qbar_to_g_g_ward_identity(qcd_rules, dirac):
    # Peskin & Schroeder sec. 16.1 (from memory): eps(k1) -> k1 with the other gluon physical gives zero
    rules = qcd_rules["feynman"]
    values = {"gs": 0.9}
    p1, p2, k1, k2 = two_to_two(3.0, (0.0, 0.0), (0.0, 0.0), unit(0.3, 0.1), unit(2.0, 1.3))
    scale = np.abs(_qqbar_to_gg(rules, values, p1, p2, k1, k2, transverse(k1), transverse(k2), dirac)).max()
    ward = _qqbar_to_gg(rules, values, p1, p2, k1, k2, k1[None, :], transverse(k2), dirac)
    assert scale > 1e-2 and np.abs(ward).max() < 1e-12 * scale


def _current(dirac, rules, field: str, left: tuple, right: tuple, values) -> np.ndarray:
    """The spinor current (bar spinor) V (spinor) of the quark-gluon vertex.

    Axes (spin left, spin right, mu, colour of the bar leg, colour of the plain leg, a). left and
    right are (kind, momentum): on the bar side ('u', k) is an outgoing quark and ('v', p) an
    incoming antiquark; on the plain side ('u', p) is an incoming quark and ('v', k) an outgoing
    antiquark."""
    vq = rules.vertex(f"bar({field})", field, "g").evaluate(np.zeros((3, 4)), values=values)
    rows = spinor_rows(dirac, left[0], left[1], 0.0, barred=True)
    cols = spinor_rows(dirac, right[0], right[1], 0.0, barred=False)
    return np.einsum("Sa,aibjmc,Tb->STmijc", rows, vq, cols)


def test_q_qbar_to_r_rbar_and_q_r_to_q_r(qcd_rules, dirac, rng):
    # Ellis, Stirling & Webber, table 7.1 / PDG cross-section formulae (from memory), massless,
    # averaged over spins and colours (1/36):
    #     q qbar -> r rbar (one s-channel gluon):   (4/9) g^4 (t^2 + u^2)/s^2
    #     q r -> q r       (one t-channel gluon):   (4/9) g^4 (s^2 + u^2)/t^2
    rules = qcd_rules["xi"]
    g = 0.9
    values = {"gs": g, "xi_g": 2.5}
    prop = rules.propagator("g")
    for _ in range(2):
        p1, p2, k1, k2 = two_to_two(rng.uniform(1.0, 10.0), (0.0, 0.0), (0.0, 0.0),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)))
        s, t, u = mandelstam(p1, p2, k1, k2)
        # q(p1) qbar(p2) -> r(k1) rbar(k2)
        j_in = _current(dirac, rules, "q", ("v", p2), ("u", p1), values)
        j_out = _current(dirac, rules, "r", ("u", k1), ("v", k2), values)
        amp = np.einsum("ABrjic,rscd,CDskld->ABCDijkl", j_in, lowered_propagator(prop, p1 + p2, values), j_out)
        assert np.sum(np.abs(amp) ** 2) / 36 == pytest.approx(4 / 9 * g**4 * (t * t + u * u) / s**2, rel=1e-10)
        # q(p1) r(p2) -> q(k1) r(k2)
        j_q = _current(dirac, rules, "q", ("u", k1), ("u", p1), values)
        j_r = _current(dirac, rules, "r", ("u", k2), ("u", p2), values)
        amp = np.einsum("ABrjic,rscd,CDskld->ABCDijkl", j_q, lowered_propagator(prop, p1 - k1, values), j_r)
        assert np.sum(np.abs(amp) ** 2) / 36 == pytest.approx(4 / 9 * g**4 * (s * s + u * u) / t**2, rel=1e-10)


def test_q_qbar_to_q_qbar_identical_flavour(qcd_rules, dirac):
    # Ellis, Stirling & Webber, table 7.1 / PDG (from memory), massless, (1/36) sum |M|^2 =
    #     (4/9) g^4 [(s^2 + u^2)/t^2 + (t^2 + u^2)/s^2] - (8/27) g^4 u^2/(s t);
    # s- and t-channel gluon exchange with the relative minus sign of Fermi statistics (as in
    # Bhabha scattering, Peskin & Schroeder problem 5.2, from memory). The interference term's
    # colour factor comes from the explicit sums over the colour axes of the two currents.
    rules = qcd_rules["feynman"]
    g = 0.9
    values = {"gs": g}
    prop = rules.propagator("g")
    p1, p2, k1, k2 = two_to_two(4.0, (0.0, 0.0), (0.0, 0.0), unit(0.7, 0.2), unit(2.1, 3.3))
    s, t, u = mandelstam(p1, p2, k1, k2)
    # external labels: q(p1) spin A colour i, qbar(p2) spin B colour j, q(k1) spin C colour k, qbar(k2) spin D colour l
    s_in = _current(dirac, rules, "q", ("v", p2), ("u", p1), values)     # (B, A, mu, j, i, c)
    s_out = _current(dirac, rules, "q", ("u", k1), ("v", k2), values)    # (C, D, nu, k, l, d)
    t_q = _current(dirac, rules, "q", ("u", k1), ("u", p1), values)      # (C, A, mu, k, i, c)
    t_qbar = _current(dirac, rules, "q", ("v", p2), ("v", k2), values)   # (B, D, nu, j, l, d)
    s_chan = np.einsum("BArjic,rscd,CDskld->ABCDijkl", s_in, lowered_propagator(prop, p1 + p2, values), s_out)
    t_chan = np.einsum("CArkic,rscd,BDsjld->ABCDijkl", t_q, lowered_propagator(prop, p1 - k1, values), t_qbar)
    summed = np.sum(np.abs(s_chan - t_chan) ** 2) / 36
    expected = g**4 * (4 / 9 * ((s * s + u * u) / t**2 + (t * t + u * u) / s**2) - 8 / 27 * u * u / (s * t))
    assert summed == pytest.approx(expected, rel=1e-10)


def test_colour_flow_of_one_gluon_exchange(qcd_rules, dirac):
    # sum_a T^a_{ji} T^a_{kl} = (1/2)(delta_jl delta_ik - delta_ij delta_kl / N) (the Fierz identity
    # of the SU(N) generators, Ellis, Stirling & Webber ch. 1, from memory): in
    # q_i qbar_j -> r_k rbar_l a colour-singlet q qbar pair does not annihilate into one gluon, and
    # the amplitudes for (i, j, k, l) = (1, 1, 2, 2), (1, 2, 1, 2) and (1, 1, 1, 1) stand as -1/6 : 1/2 : 1/3.
    rules = qcd_rules["feynman"]
    values = {"gs": 0.9}
    p1, p2, k1, k2 = two_to_two(4.0, (0.0, 0.0), (0.0, 0.0), unit(0.7, 0.2), unit(2.1, 3.3))
    j_in = _current(dirac, rules, "q", ("v", p2), ("u", p1), values)
    j_out = _current(dirac, rules, "r", ("u", k1), ("v", k2), values)
    amp = np.einsum("ABrjic,rscd,CDskld->ABCDijkl", j_in,
                    lowered_propagator(rules.propagator("g"), p1 + p2, values), j_out)
    spins = (0, 1, 0, 1)
    colour = amp[spins]
    assert abs(colour[0, 1, 0, 1]) > 1e-2
    singlet = np.einsum("iikl->kl", colour)
    assert np.abs(singlet).max() < 1e-12 * abs(colour[0, 1, 0, 1])
    ratios = np.array([colour[0, 0, 1, 1], colour[0, 1, 0, 1], colour[0, 0, 0, 0]]) / colour[0, 1, 0, 1]
    np.testing.assert_allclose(ratios, [-1 / 3, 1.0, 2 / 3], atol=1e-12)


# ================================================================ forces in the non-relativistic limit

FORCES = """
theory forces "a scalar and a massive U(1) vector between three Dirac fermions"
parameters
  coupling gy = 0.5
  coupling hy = 0.8
  coupling gx = 0.4
  mass     mS = 0.3
  mass     mX = 0.2
  mass     m1 = 50.0
  mass     m2 = 80.0
gauge
  dark U(1) boson X strength FX coupling gx
fields
  vector X mass mX
  scalar S real mass mS
  dirac  a mass m1 charge dark +1
  dirac  b mass m2 charge dark +1
  dirac  c mass m2 charge dark -1
lagrangian
  -1/4 FX[mu,nu] FX[mu,nu] + 1/2 mX^2 X[mu] X[mu]
  1/2 d[mu] S d[mu] S - 1/2 mS^2 S^2
  bar(a) (I gamma[mu] D[mu] - m1) a
  bar(b) (I gamma[mu] D[mu] - m2) b
  bar(c) (I gamma[mu] D[mu] - m2) c
  - gy S bar(a) a - hy S bar(b) b - hy S bar(c) c
"""


def _elastic(rules, dirac, second: str, values, p1, p2, k1, k2) -> np.ndarray:
    """i M for a(p1) f(p2) -> a(k1) f(k2), t-channel S and X exchange; axes (s_a in, s_f in, s_a out, s_f out)."""
    m1, m2 = values["m1"], values["m2"]
    q = p1 - k1
    va_s = rules.vertex("bar(a)", "a", "S").evaluate(np.array([-k1, p1, -q]), values=values)
    vf_s = rules.vertex(f"bar({second})", second, "S").evaluate(np.array([-k2, p2, q]), values=values)
    va_x = rules.vertex("bar(a)", "a", "X").evaluate(np.array([-k1, p1, -q]), values=values)
    vf_x = rules.vertex(f"bar({second})", second, "X").evaluate(np.array([-k2, p2, q]), values=values)
    ua, uf = spinor_rows(dirac, "u", p1, m1, False), spinor_rows(dirac, "u", p2, m2, False)
    ua_bar, uf_bar = spinor_rows(dirac, "u", k1, m1, True), spinor_rows(dirac, "u", k2, m2, True)
    sa = np.einsum("Cx,xy,Ay->AC", ua_bar, va_s, ua)
    sf = np.einsum("Dx,xy,By->BD", uf_bar, vf_s, uf)
    xa = np.einsum("Cx,xym,Ay->ACm", ua_bar, va_x, ua)
    xf = np.einsum("Dx,xyn,By->BDn", uf_bar, vf_x, uf)
    scalar = np.einsum("AC,BD->ABCD", sa, sf) * rules.propagator("S").evaluate(q, values=values)
    vector = np.einsum("ACm,mn,BDn->ABCD", xa, lowered_propagator(rules.propagator("X"), q, values), xf)
    return scalar + vector


def _nonrelativistic(size: float, n_in: np.ndarray, n_out: np.ndarray, m1: float, m2: float):
    p3, k3 = size * n_in, size * n_out
    return on_shell(m1, p3), on_shell(m2, -p3), on_shell(m1, k3), on_shell(m2, -k3)


@pytest.mark.parametrize("gauge", ["unitary", "feynman", "xi"])
def test_signs_of_yukawa_and_vector_forces(build, dirac, gauge):
    # Peskin & Schroeder sec. 4.7, eqs. (4.123)-(4.126) and the discussion after them (from memory):
    # for slow distinguishable fermions, with V(q) = -M / (4 m1 m2),
    #   scalar exchange:  i M ~  i g h (2 m1)(2 m2) / (|q|^2 + mS^2) delta delta   -> attractive;
    #   vector exchange:  i M ~ -i gx^2 Q1 Q2 (2 m1)(2 m2) / (|q|^2 + mX^2) delta delta
    #                     -> repulsive for like charges, attractive for opposite ones.
    rules = build(FORCES).derive(gauge)
    base = {"m1": 50.0, "m2": 80.0, "mS": 0.3, "mX": 0.2, "gy": 0.5, "hy": 0.8, "gx": 0.4, "xi_X": 0.6}
    p1, p2, k1, k2 = _nonrelativistic(0.05, unit(0.3, 0.2), unit(1.4, 2.0), 50.0, 80.0)
    q2 = float(np.sum(np.abs(p1[1:] - k1[1:]) ** 2))
    norm = 4 * 50.0 * 80.0
    diagonal = [(A, B, A, B) for A in range(2) for B in range(2)]
    cases = [("b", {"gx": 0.0}, +0.5 * 0.8 / (q2 + 0.3**2)),        # Yukawa, attractive
             ("b", {"gy": 0.0, "hy": 0.0}, -0.4**2 / (q2 + 0.2**2)),  # like charges, repulsive
             ("c", {"gy": 0.0, "hy": 0.0}, +0.4**2 / (q2 + 0.2**2))]  # opposite charges, attractive
    for second, switched_off, expected in cases:
        amp = _elastic(rules, dirac, second, {**base, **switched_off}, p1, p2, k1, k2)
        for index in diagonal:
            assert (amp[index] / 1j).real / norm == pytest.approx(expected, rel=2e-3)
            assert abs((amp[index] / 1j).imag) < 1e-6 * abs(amp[index])


# ================================================================ a massive U(1): R_xi against unitary gauge

def test_massive_vector_s_channel_in_every_gauge(build, dirac, rng):
    # a(p1) abar(p2) -> b(k1) bbar(k2) through the massive U(1) boson only: the QED result of
    # Peskin & Schroeder eq. (5.10) with both masses (from memory) with e^4/s^2 -> gx^4/(s - mX^2)^2,
    #   (1/4) sum |M|^2 = 8 gx^4/(s - mX^2)^2 [(p1.k1)(p2.k2) + (p1.k2)(p2.k1) + m2^2 p1.p2
    #                                          + m1^2 k1.k2 + 2 m1^2 m2^2],
    # the same in unitary gauge, Feynman gauge and R_xi for any xi: the vector currents are
    # conserved, so the p^mu p^nu parts of the propagator drop out (common practice, no source).
    model = build(FORCES)
    gx, m1, m2, mx = 0.4, 1.0, 1.6, 2.5
    for _ in range(2):
        p1, p2, k1, k2 = two_to_two(2 * m2 + rng.uniform(0.5, 3.0), (m1, m1), (m2, m2), unit(0.6, 0.6),
                                    unit(rng.uniform(0.3, 2.8), rng.uniform(0, 6.2)))
        s = mdot(p1 + p2, p1 + p2).real
        expected = 8 * gx**4 / (s - mx**2) ** 2 * (mdot(p1, k1) * mdot(p2, k2) + mdot(p1, k2) * mdot(p2, k1)
                                                  + m2**2 * mdot(p1, p2) + m1**2 * mdot(k1, k2)
                                                  + 2 * m1**2 * m2**2).real
        for gauge, xi in (("unitary", None), ("feynman", None), ("xi", 0.3), ("xi", 4.0)):
            rules = model.derive(gauge)
            values = {"gx": gx, "m1": m1, "m2": m2, "mX": mx, "gy": 0.0, "hy": 0.0}
            if xi is not None:
                values["xi_X"] = xi
            va = rules.vertex("bar(a)", "a", "X").evaluate(np.array([p2, p1, -(p1 + p2)]), values=values)
            vb = rules.vertex("bar(b)", "b", "X").evaluate(np.array([-k1, -k2, p1 + p2]), values=values)
            j_in = np.einsum("Bx,xym,Ay->ABm", spinor_rows(dirac, "v", p2, m1, True), va,
                             spinor_rows(dirac, "u", p1, m1, False))
            j_out = np.einsum("Cx,xym,Dy->CDm", spinor_rows(dirac, "u", k1, m2, True), vb,
                              spinor_rows(dirac, "v", k2, m2, False))
            amp = np.einsum("ABm,mn,CDn->ABCD", j_in,
                            lowered_propagator(rules.propagator("X"), p1 + p2, values), j_out)
            assert np.sum(np.abs(amp) ** 2) / 4 == pytest.approx(expected, rel=1e-10), (gauge, xi)


# ================================================================ four-fermion contact term from heavy exchange

HEAVY_EXCHANGE = """
theory heavy "a Dirac fermion and a heavy U(1) boson"
parameters
  coupling gz = 0.6
  mass     mZ = 1000.0
  mass     mf = 1.0
gauge
  hv U(1) boson Z strength FZ coupling gz
fields
  vector Z mass mZ
  dirac  f mass mf charge hv +1
lagrangian
  -1/4 FZ[mu,nu] FZ[mu,nu] + 1/2 mZ^2 Z[mu] Z[mu]
  bar(f) (I gamma[mu] D[mu] - mf) f
"""

CONTACT = """
theory contact_limit "the low-energy limit of the theory above"
parameters
  coupling GC = 3.6e-7
  mass     mf = 1.0
fields
  dirac f mass mf
define
  J[mu] = bar(f) gamma[mu] f
lagrangian
  bar(f) (I gamma[mu] d[mu] - mf) f
  - GC/2 J[mu] J[mu]
"""


def test_contact_term_matches_the_low_energy_limit_of_heavy_exchange(build, dirac):
    # Integrating out a heavy vector coupled as g Z.J gives L_eff = -g^2/(2 M^2) J.J at tree level
    # (the step from W exchange to the Fermi theory, Peskin & Schroeder ch. 20-21, from memory;
    # common practice). For identical fermions f f -> f f the exchange theory has the t- and
    # u-channel diagrams with the relative minus sign of Fermi statistics; the contact vertex of
    # -GC/2 J.J, GC = g^2/M^2, must reproduce both, pairing signs and the factor 1/2 included.
    exchange = build(HEAVY_EXCHANGE).derive("unitary")
    contact = build(CONTACT).derive()
    m = 1.0
    p1, p2, k1, k2 = two_to_two(3.0, (m, m), (m, m), unit(0.5, 0.4), unit(1.7, 2.2))
    v3 = exchange.vertex("bar(f)", "f", "Z")
    prop = exchange.propagator("Z")
    u_in = [spinor_rows(dirac, "u", p, m, False) for p in (p1, p2)]
    u_out = [spinor_rows(dirac, "u", k, m, True) for k in (k1, k2)]

    def line(out: int, inc: int, q_in: np.ndarray) -> np.ndarray:
        pin, kout = (p1, p2)[inc], (k1, k2)[out]
        v = v3.evaluate(np.array([-kout, pin, -q_in]), values={})
        return np.einsum("Cx,xym,Ay->ACm", u_out[out], v, u_in[inc])  # (spin in, spin out, mu)

    t_chan = np.einsum("ACm,mn,BDn->ABCD", line(0, 0, p1 - k1), lowered_propagator(prop, p1 - k1, {}),
                       line(1, 1, p1 - k1))
    u_chan = np.einsum("ADm,mn,BCn->ABCD", line(1, 0, p1 - k2), lowered_propagator(prop, p1 - k2, {}),
                       line(0, 1, p1 - k2))
    heavy = t_chan - u_chan
    # contact vertex with legs (bar(f) = out k1, f = in p1, bar(f) = out k2, f = in p2)
    v4 = contact.vertex("bar(f)", "f", "bar(f)", "f").evaluate(np.array([-k1, p1, -k2, p2]),
                                                               values={"GC": 0.6**2 / 1000.0**2})
    light = np.einsum("Cw,Ax,Dy,Bz,wxyz->ABCD", u_out[0], u_in[0], u_out[1], u_in[1], v4)
    assert np.abs(heavy).max() > 1e-8
    # agreement up to corrections of order q^2/M^2 ~ 1e-5
    np.testing.assert_allclose(light, heavy, rtol=0, atol=1e-4 * np.abs(heavy).max())
    # and the test can fail: without the u-channel (or with the wrong relative sign) it does not agree
    assert np.abs(light - t_chan).max() > 0.1 * np.abs(heavy).max()
    assert np.abs(light - (t_chan + u_chan)).max() > 0.1 * np.abs(heavy).max()


# ================================================================ vector and axial couplings of a Proca field

PROCA_DECAY = """
theory proca_decay "a neutral massive vector (Proca, no gauge group) decaying to fermions"
parameters
  mass     mV = 91.0
  mass     mf = 20.0
  coupling gv = 0.3
  coupling ga = 0.2
  coupling gl = 0.5
fields
  vector V real mass mV
  dirac  f mass mf
  dirac  n
lagrangian
  -1/2 d[mu] V[nu] d[mu] V[nu] + 1/2 d[mu] V[nu] d[nu] V[mu] + 1/2 mV^2 V[mu] V[mu]
  bar(f) (I gamma[mu] d[mu] - mf) f
  bar(n) I gamma[mu] d[mu] n
  bar(f) gamma[mu] (gv - ga gamma5) f V[mu] + gl bar(n) gamma[mu] PL n V[mu]
"""


@pytest.mark.parametrize("gv, ga", [(0.3, 0.0), (0.0, 0.2), (0.3, -0.2)])
def test_vector_decay_with_vector_and_axial_couplings(build, dirac, gv, ga):
    # The Z-width formula (PDG review "Electroweak model and constraints on new physics", from
    # memory): for a vertex i gamma^mu (gv - ga gamma5),
    #     (1/3) sum |M|^2 = (4/3) [gv^2 (M^2 + 2 m^2) + ga^2 (M^2 - 4 m^2)],
    # i.e. Gamma = beta/(12 pi M) [gv^2 (M^2 + 2 m^2) + ga^2 (M^2 - 4 m^2)]. The factor of gamma5 in
    # the Lagrangian and the three polarisations of the massive vector at rest enter.
    rules = build(PROCA_DECAY).derive()
    mv, mf = 91.0, 20.0
    values = {"gv": gv, "ga": ga}
    k = np.array([mv, 0, 0, 0], dtype=complex)
    size = np.sqrt(mv**2 / 4 - mf**2)
    k1, k2 = on_shell(mf, size * unit(0.9, 2.1)), on_shell(mf, -size * unit(0.9, 2.1))
    vertex = rules.vertex("bar(f)", "f", "V").evaluate(np.array([-k1, -k2, k]), values=values)
    eps = lower(np.eye(4, dtype=complex)[1:])  # the three polarisations at rest, lowered
    amp = np.einsum("Cx,xym,Dy,Pm->CDP", spinor_rows(dirac, "u", k1, mf, True), vertex,
                    spinor_rows(dirac, "v", k2, mf, False), eps)
    expected = 4 / 3 * (gv**2 * (mv**2 + 2 * mf**2) + ga**2 * (mv**2 - 4 * mf**2))
    assert np.sum(np.abs(amp) ** 2) / 3 == pytest.approx(expected, rel=1e-12)


def test_left_handed_coupling_produces_left_handed_fermions(build, dirac):
    # PL = (1 - gamma5)/2 keeps helicity -1/2 of a massless particle (Peskin & Schroeder sec. 3.4,
    # from memory): V -> n nbar through gl bar(n) gamma PL n V never makes an n of helicity +1/2.
    rules = build(PROCA_DECAY).derive()
    mv = 91.0
    theta, phi = 0.9, 2.1
    direction = unit(theta, phi)
    k1, k2 = on_shell(0.0, mv / 2 * direction), on_shell(0.0, -mv / 2 * direction)
    vertex = rules.vertex("bar(n)", "n", "V").evaluate(np.array([-k1, -k2, [mv, 0, 0, 0]]))
    helicity = {+1: np.array([np.cos(theta / 2), np.exp(1j * phi) * np.sin(theta / 2)]),
                -1: np.array([-np.exp(-1j * phi) * np.sin(theta / 2), np.cos(theta / 2)])}
    eps = lower(np.eye(4, dtype=complex)[1:])
    amplitudes = {}
    for h, chi in helicity.items():
        u = np.sqrt(mv / 2) * np.concatenate([chi, h * chi])  # massless Dirac-representation spinor
        np.testing.assert_allclose(dirac.slash(k1) @ u, 0, atol=1e-9)
        amplitudes[h] = np.einsum("x,xym,Dy,Pm->DP", dirac.bar(u), vertex, spinor_rows(dirac, "v", k2, 0.0, False), eps)
    assert np.abs(amplitudes[-1]).max() > 1.0
    assert np.abs(amplitudes[+1]).max() < 1e-12 * np.abs(amplitudes[-1]).max()


# ================================================================ ghosts restore unitarity in q qbar -> g g

def test_ghosts_cancel_the_unphysical_gluon_polarisations(qcd_rules, dirac):
    # Peskin & Schroeder sec. 16.3 (from memory): summing both gluon polarisations with -g_{mu nu}
    # overcounts; the excess equals the ghost pair production q qbar -> c cbar plus q qbar -> cbar c,
    #     sum_phys |M(gg)|^2 = sum_{-g} |M(gg)|^2 - |M(c(k1) cbar(k2))|^2 - |M(cbar(k1) c(k2))|^2,
    # summed over spins and colours. This fixes the normalisation of the derived ghost-gluon vertex
    # (the ghost legs carry no wave functions).
    rules = qcd_rules["feynman"]
    values = {"gs": 0.9}
    p1, p2, k1, k2 = two_to_two(3.0, (0.0, 0.0), (0.0, 0.0), unit(0.3, 0.1), unit(2.0, 1.3))
    physical = np.sum(np.abs(_qqbar_to_gg(rules, values, p1, p2, k1, k2, transverse(k1), transverse(k2), dirac)) ** 2)
    basis = np.eye(4, dtype=complex)  # contracting with these gives the lower-index components M_{mu nu}
    components = _qqbar_to_gg(rules, values, p1, p2, k1, k2, basis, basis, dirac)
    signs = np.einsum("m,n->mn", np.diag(ETA).real, np.diag(ETA).real)  # (-g^{mu mu})(-g^{nu nu}) on the diagonal
    covariant = np.einsum("TSXYliAB,XY->", np.abs(components) ** 2, signs).real
    # ghost pair: quark current -> gluon propagator -> ghost vertex (legs bar(gh) outgoing ghost, gh outgoing antighost)
    vq = rules.vertex("bar(q)", "q", "g").evaluate(np.zeros((3, 4)), values=values)
    current = np.einsum("Sa,aiblsc,Tb->TSscli", spinor_rows(dirac, "v", p2, 0.0, True), vq,
                        spinor_rows(dirac, "u", p1, 0.0, False))
    q = p1 + p2
    ghost_vertex = rules.vertex("bar(gh_g)", "gh_g", "g")
    ghosts = 0.0
    for ghost, antighost in ((k1, k2), (k2, k1)):
        vertex = ghost_vertex.evaluate(np.array([-ghost, -antighost, q]), values=values)  # (A, B, sigma, d)
        amp = np.einsum("TSscli,stcd,ABtd->TSliAB", current,
                        lowered_propagator(rules.propagator("g"), q, values), vertex)
        ghosts += np.sum(np.abs(amp) ** 2)
    assert ghosts > 1e-3 * physical
    assert covariant - physical > 1e-3 * physical  # the unphysical polarisations do contribute
    assert physical == pytest.approx(covariant - ghosts, rel=1e-10)


# ================================================================ a coloured scalar: g g -> S S*

SCALAR_QCD = """
theory scalar_qcd "SU(3) gauge theory with a colour-triplet complex scalar"
parameters
  coupling gs = 0.9
  mass     mS = 1.0
gauge
  colour SU(3) boson g strength gg coupling gs
fields
  vector g
  scalar S complex mass mS in colour fundamental
lagrangian
  -1/4 gg[mu,nu,a] gg[mu,nu,a]
  dag(D[mu] S) D[mu] S - mS^2 dag(S) S
"""


def _gg_to_scalars(rules, values, k1, k2, p1, p2, eps1, eps2, seagull: bool = True) -> np.ndarray:
    """i M for g(k1, a) g(k2, b) -> S(p1, i) S*(p2, j); axes (pol1, pol2, i, j, a, b)."""
    three = rules.vertex("dag(S)", "S", "g")  # dag(S) leg: outgoing S; S leg: outgoing S*
    prop = rules.propagator("S")
    e1, e2 = lower(eps1), lower(eps2)
    # the first gluon meets the outgoing S (colour i), the second the outgoing S* (colour j) ...
    near = np.einsum("imua,Pu->Pima", three.evaluate(np.array([-p1, p1 - k1, k1]), values=values), e1)
    far = np.einsum("njub,Qu->Qnjb", three.evaluate(np.array([-(p1 - k1), -p2, k2]), values=values), e2)
    diagrams = np.einsum("Pima,mn,Qnjb->PQijab", near, prop.evaluate(p1 - k1, values=values), far)
    # ... and the other way round
    near = np.einsum("imub,Qu->Qimb", three.evaluate(np.array([-p1, p1 - k2, k2]), values=values), e2)
    far = np.einsum("njua,Pu->Pnja", three.evaluate(np.array([-(p1 - k2), -p2, k1]), values=values), e1)
    diagrams = diagrams + np.einsum("Qimb,mn,Pnja->PQijab", near, prop.evaluate(p1 - k2, values=values), far)
    q = k1 + k2
    gluons = np.einsum("manbrc,Pm,Qn->PQabrc", rules.vertex("g", "g", "g").evaluate(np.array([k1, k2, -q]),
                                                                                    values=values), e1, e2)
    diagrams = diagrams + np.einsum("PQabrc,rscd,ijsd->PQijab", gluons,
                                    lowered_propagator(rules.propagator("g"), q, values),
                                    three.evaluate(np.array([-p1, -p2, q]), values=values))
    if seagull:
        four = rules.vertex("dag(S)", "S", "g", "g").evaluate(np.array([-p1, -p2, k1, k2]), values=values)
        diagrams = diagrams + np.einsum("ijmanb,Pm,Qn->PQijab", four, e1, e2)
    return diagrams


def test_gg_to_scalar_pair(build, rng):
    # Derived here in the gauge eps1.p1 = eps2.p1 = 0 (p1 the outgoing S): the two diagrams with the
    # scalar propagator vanish, the seagull gives i g^2 {T^a, T^b} eps1.eps2 and the s-channel gluon
    # -i g^2 [T^a, T^b] (t1 - u1)/s eps1.eps2, t1 = t - m^2, u1 = u - m^2, t = (k1 - p1)^2. With
    # sum_ab Tr({T^a,T^b}^2) = 28/3, sum_ab Tr([T^a,T^b][T^a,T^b]^+) = 12 for SU(3) and the photon
    # polarisation sum of the scalar-QED test above:
    #     (1/256) sum |M|^2 = (g^4/2) [7/48 + 3 (t1 - u1)^2/(16 s^2)] [1 - A + A^2/2],  A = 2 m^2 s/(t1 u1).
    # Twice this (two degenerate scalars, the left and right squarks) is the squark-pair result of
    # Dawson, Eichten & Quigg, Phys. Rev. D 31 (1985) 1581 (from memory). The amplitude below uses
    # ordinary transverse polarisations, so the seagull's colour structure {T^a, T^b}, the
    # three-point T^a and the three-gluon f^{abc} must all fit together.
    rules = build(SCALAR_QCD).derive("xi")
    g = 0.9
    for m in (0.0, 1.0):
        values = {"gs": g, "mS": m, "xi_g": 0.7}
        k1, k2, p1, p2 = two_to_two(2 * m + rng.uniform(0.5, 5.0), (0.0, 0.0), (m, m),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)),
                                    unit(rng.uniform(0.2, 2.9), rng.uniform(0, 6.2)))
        amp = _gg_to_scalars(rules, values, k1, k2, p1, p2, transverse(k1), transverse(k2))
        s = mdot(k1 + k2, k1 + k2).real
        t1, u1 = mdot(k1 - p1, k1 - p1).real - m * m, mdot(k1 - p2, k1 - p2).real - m * m
        big_a = 2 * m * m * s / (t1 * u1)
        expected = g**4 / 2 * (7 / 48 + 3 * (t1 - u1) ** 2 / (16 * s * s)) * (1 - big_a + big_a**2 / 2)
        assert np.sum(np.abs(amp) ** 2) / 256 == pytest.approx(expected, rel=1e-10)


def test_gg_to_scalar_pair_ward_identity_needs_the_seagull(build):
    # Peskin & Schroeder sec. 16.1 (from memory): eps1 -> k1, the other gluon physical: zero for every
    # colour. eps2 + 0.5 k2 is the same physical polarisation and keeps the seagull's share visible.
    rules = build(SCALAR_QCD).derive("feynman")
    values = {"gs": 0.9, "mS": 1.0}
    k1, k2, p1, p2 = two_to_two(5.0, (0.0, 0.0), (1.0, 1.0), unit(0.4, 0.9), unit(1.9, 2.5))
    eps2 = transverse(k2) + 0.5 * k2
    scale = np.abs(_gg_to_scalars(rules, values, k1, k2, p1, p2, transverse(k1), eps2)).max()
    ward = _gg_to_scalars(rules, values, k1, k2, p1, p2, k1[None, :], eps2)
    assert np.abs(ward).max() < 1e-12 * scale
    without = _gg_to_scalars(rules, values, k1, k2, p1, p2, k1[None, :], eps2, seagull=False)
    assert np.abs(without).max() > 1e-2 * scale


# ================================================================ Fierz rearrangement of V-A currents

FOUR_FERMIONS = """
theory fierz "four massless fermions with a left-handed current-current contact term"
parameters
  coupling GF = 1.3
fields
  dirac fa
  dirac fb
  dirac fc
  dirac fd
lagrangian
  bar(fa) I gamma[mu] d[mu] fa + bar(fb) I gamma[mu] d[mu] fb
  bar(fc) I gamma[mu] d[mu] fc + bar(fd) I gamma[mu] d[mu] fd
  CONTACT
"""


def test_fierz_rearrangement_of_left_handed_currents(build, dirac):
    # For anticommuting fields the (V-A) x (V-A) product keeps its form under Fierz rearrangement
    # (the "charge retention" form of the Fermi interaction used for muon decay; Itzykson & Zuber
    # sec. 2-4-3 and Okun, "Leptons and Quarks", ch. 29, from memory):
    #     (bar(a) g^mu PL b)(bar(c) g_mu PL d) = + (bar(a) g^mu PL d)(bar(c) g_mu PL b).
    # The matrices alone obey the identity with a minus sign; the plus comes from reordering the
    # fields, i.e. from the Grassmann sign of the derived four-fermion vertex.
    g_pl = np.einsum("mab,bc->mac", dirac.GAMMA, dirac.PL)
    direct = np.einsum("mab,mn,ncd->abcd", g_pl, ETA, g_pl)
    np.testing.assert_allclose(direct, -direct.transpose(0, 3, 2, 1), atol=1e-12)  # the matrix Fierz identity
    legs = ("bar(fa)", "fb", "bar(fc)", "fd")
    written = build(FOUR_FERMIONS.replace("CONTACT", "GF bar(fa) gamma[mu] PL fb bar(fc) gamma[mu] PL fd"))
    fierzed = build(FOUR_FERMIONS.replace("CONTACT", "GF bar(fa) gamma[mu] PL fd bar(fc) gamma[mu] PL fb"))
    zero = np.zeros((4, 4))
    one = written.derive().vertex(*legs).evaluate(zero)
    other = fierzed.derive().vertex(*legs).evaluate(zero)
    np.testing.assert_allclose(one, 1.3j * direct, atol=1e-12)  # i x the coefficient, legs in written order
    np.testing.assert_allclose(other, one, atol=1e-12)
    # the scalar product (bar(a) b)(bar(c) d) is not Fierz-invariant: the check can tell them apart
    scalar, scalar_fierzed = (build(FOUR_FERMIONS.replace("CONTACT", term)).derive().vertex(*legs).evaluate(zero)
                              for term in ("GF bar(fa) fb bar(fc) fd", "GF bar(fa) fd bar(fc) fb"))
    assert np.abs(scalar - scalar_fierzed).max() > 0.5


# ================================================================ abelian Higgs model in unitary gauge

ABELIAN_HIGGS = """
theory abelian_higgs "U(1) broken by a scalar vev, written in unitary gauge"
parameters
  coupling ee  = 0.6
  parameter vv = 2.0
  mass     MA  = ee vv
  mass     mh  = 5.0
gauge
  u1 U(1) boson A strength FA coupling ee
fields
  vector A mass MA
  scalar h real mass mh
lagrangian
  -1/4 FA[mu,nu] FA[mu,nu] + 1/2 ee^2 (vv + h)^2 A[mu] A[mu]
  1/2 d[mu] h d[mu] h - 1/2 mh^2 h^2
"""


def _massive_polarisations(k: np.ndarray, mass: float) -> np.ndarray:
    """Two transverse and the longitudinal polarisation of a massive vector of momentum k; shape (3, 4)."""
    size = np.linalg.norm(k[1:].real)
    longitudinal = np.array([size, *(k[0].real * k[1:].real / size)]) / mass
    return np.vstack([transverse(k), longitudinal[None, :].astype(complex)])


def test_higgs_decay_to_two_massive_vectors(build):
    # The Higgs width into a pair of Z bosons (Djouadi, Phys. Rept. 457 (2008) 1, arXiv:hep-ph/0503172,
    # sec. 2.2, from memory): Gamma = m_h^3/(32 pi v^2) beta (1 - 4x + 12x^2), x = M^2/m_h^2, which for
    # the vertex i (2 M^2/v) g^{mu nu} of identical vectors is the polarisation sum
    #     sum |M|^2 = (m_h^4/v^2) (1 - 4x + 12x^2).
    # Here M = e v and the vertex comes from 1/2 e^2 (v + h)^2 A.A: the factor 2 for the two identical
    # vector legs must be in it.
    model = build(ABELIAN_HIGGS)
    rules = model.derive("unitary")
    e, v, mh = 0.6, 2.0, 5.0
    mass = e * v
    size = np.sqrt(mh**2 / 4 - mass**2)
    direction = unit(1.2, 0.4)
    k1, k2 = on_shell(mass, size * direction), on_shell(mass, -size * direction)
    vertex = rules.vertex("h", "A", "A").evaluate(np.array([[mh, 0, 0, 0], -k1, -k2]))
    amp = np.einsum("mn,Pm,Qn->PQ", vertex, lower(_massive_polarisations(k1, mass).conj()),
                    lower(_massive_polarisations(k2, mass).conj()))
    x = mass**2 / mh**2
    assert np.sum(np.abs(amp) ** 2) == pytest.approx(mh**4 / v**2 * (1 - 4 * x + 12 * x * x), rel=1e-12)
    # the vector propagator of this model is the unitary-gauge one with the mass e v
    q = np.array([3.0, 0.4, -1.0, 0.7])
    expected = -1j / (mdot(q, q) - mass**2) * (ETA - np.outer(q, q) / mass**2)
    np.testing.assert_allclose(rules.propagator("A").evaluate(q), expected, atol=1e-12)
