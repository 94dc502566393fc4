"""The reference table of the Standard Model in R_xi gauge (`sm_reference.py`) checked against itself.

The table is transcribed from memory (Romao & Silva, arXiv:1209.6213); these identities catch a
wrong sign or factor in it before it is used to judge derived rules: the mass-basis couplings must
be the gauge-basis ones rotated (Z = c W3 - s B, A = s W3 + c B, W+ = (W1 - i W2)/sqrt2), the
masses must follow from the vev, and the propagators must have their known limits.
"""

from __future__ import annotations

from collections import Counter

import numpy as np
import pytest

from conftest import ETA, GAMMA, GAMMA5, ONE, PL
from sm_reference import Point, propagators, table, vector_propagator

PT = Point()
RNG = np.random.default_rng(20261204)
EPS = np.zeros((3, 3, 3))
for (a, b, c), sign in {(0, 1, 2): 1, (1, 2, 0): 1, (2, 0, 1): 1, (0, 2, 1): -1, (2, 1, 0): -1, (1, 0, 2): -1}.items():
    EPS[a, b, c] = sign
# d W^a / d(leg): the field W (W+) enters W1, W2 as (1, i)/sqrt2, dag(W) as (1, -i)/sqrt2; A and Z enter W3
U = np.array([1, 1j, 0]) / np.sqrt(2)
UBAR = np.array([1, -1j, 0]) / np.sqrt(2)
W3_OF = {"A": np.array([0, 0, PT.sw]), "Z": np.array([0, 0, PT.cw])}


def _rule(*legs: str):
    return next(r for r in table() if r.legs == legs)


def _momenta(n: int) -> list[np.ndarray]:
    ps = [RNG.normal(size=4) for _ in range(n - 1)]
    return ps + [-sum(ps)]


def _yang_mills3(p1, p2, p3) -> np.ndarray:
    """SU(2) triple vertex g eps^{abc}[g(p1-p2) + g(p2-p3) + g(p3-p1)], axes (a,b,c,mu,nu,rho)
    (Peskin & Schroeder fig. 16.7, D = d - i g A T; from memory)."""
    lorentz = (np.einsum("mn,r->mnr", ETA, p1 - p2) + np.einsum("nr,m->mnr", ETA, p2 - p3)
               + np.einsum("rm,n->mnr", ETA, p3 - p1))
    return PT.g * np.einsum("abc,mnr->abcmnr", EPS, lorentz)


def _yang_mills4() -> np.ndarray:
    """SU(2) quartic vertex -i g^2 [f^{abe}f^{cde}(g13 g24 - g14 g23) + (b<->c) + (b<->d)], axes (a,b,c,d,
    mu,nu,rho,sigma) (Peskin & Schroeder fig. 16.7; from memory)."""
    gg = lambda i, j, k, l: np.einsum("ij,kl->ijkl", ETA, ETA).transpose(np.argsort([i, j, k, l]))  # noqa: E731
    out = (np.einsum("abe,cde->abcd", EPS, EPS)[..., None, None, None, None] * (gg(0, 2, 1, 3) - gg(0, 3, 1, 2))
           + np.einsum("ace,bde->abcd", EPS, EPS)[..., None, None, None, None] * (gg(0, 1, 2, 3) - gg(0, 3, 1, 2))
           + np.einsum("ade,bce->abcd", EPS, EPS)[..., None, None, None, None] * (gg(0, 1, 2, 3) - gg(0, 2, 1, 3)))
    return -1j * PT.g ** 2 * out


def _direction(label: str) -> np.ndarray:
    return {"W": U, "dag(W)": UBAR, **W3_OF}[label]


@pytest.mark.parametrize("neutral", ["A", "Z"])
def test_triple_gauge_vertices_are_the_su2_vertex_rotated(neutral: str) -> None:
    # W W gamma = e x the gauge structure, W W Z = g cw x it (R&S, from memory; rotation: common practice)
    p1, p2, p3 = _momenta(3)
    rotated = np.einsum("abcmnr,a,b,c->mnr", _yang_mills3(p1, p2, p3), U, UBAR, W3_OF[neutral])
    assert np.allclose(_rule("W", "dag(W)", neutral).value(p1, p2, p3, PT), rotated)
    assert np.abs(rotated).max() > 1e-2


@pytest.mark.parametrize("legs", [("W", "dag(W)", "W", "dag(W)"), ("W", "dag(W)", "A", "A"),
                                  ("W", "dag(W)", "Z", "Z"), ("W", "dag(W)", "A", "Z")], ids=str)
def test_quartic_gauge_vertices_are_the_su2_vertex_rotated(legs: tuple[str, ...]) -> None:
    # identical legs (A A, Z Z, W W) are already summed over in the SU(2) vertex, whose legs are all W^a
    rotated = np.einsum("abcdmnrs,a,b,c,d->mnrs", _yang_mills4(), *(_direction(leg) for leg in legs))
    assert np.allclose(_rule(*legs).value(*_momenta(4), PT), rotated)
    assert np.abs(rotated).max() > 1e-2


@pytest.mark.parametrize("name, q, t3", [("u", 2 / 3, 0.5), ("d", -1 / 3, -0.5), ("ell", -1.0, -0.5), ("nu", 0, 0.5)])
def test_neutral_currents_are_the_w3_and_b_currents_rotated(name: str, q: float, t3: float) -> None:
    # c Z + s A couples like W3 (g T3 PL), -s Z + c A like B (g' Y, Y = Q - T3 PL, g' = e/cw) (common practice)
    z = _rule(f"bar({name})", name, "Z").value(*_momenta(3), PT)
    a = _rule(f"bar({name})", name, "A").value(*_momenta(3), PT) if q else 0 * z
    current = lambda m: 1j * np.einsum("mab,bc->acm", GAMMA, m)  # noqa: E731
    assert np.allclose(PT.cw * z + PT.sw * a, current(PT.g * t3 * PL))
    assert np.allclose(-PT.sw * z + PT.cw * a, current(PT.e / PT.cw * (q * ONE - t3 * PL)))
    # vector and axial form: i g/(2 cw) gamma^mu (gV - gA gamma5), gV = T3 - 2 sw^2 Q, gA = T3 (PDG EW review, from memory)
    assert np.allclose(z, current(PT.g / (2 * PT.cw) * ((t3 - 2 * PT.sw ** 2 * q) * ONE - t3 * GAMMA5)))


def test_charged_goldstone_currents_are_the_doublet_currents_rotated() -> None:
    # G+ has T3 = 1/2, Y = 1/2: c Z + s A couples with g T3, -s Z + c A with g' Y (common practice)
    p1, p2, p3 = _momenta(3)
    z = _rule("Gp", "dag(Gp)", "Z").value(p1, p2, p3, PT)
    a = _rule("Gp", "dag(Gp)", "A").value(p1, p2, p3, PT)
    assert np.allclose(PT.cw * z + PT.sw * a, 1j * PT.g / 2 * (p1 - p2))
    assert np.allclose(-PT.sw * z + PT.cw * a, 1j * PT.e / PT.cw / 2 * (p1 - p2))
    # the neutral pair (h, G0) has T3 = -1/2, Y = 1/2: only Z, with g/(2 cw) (p_G0 - p_h) (by hand)
    assert np.allclose(_rule("h", "G0", "Z").value(p1, p2, p3, PT), PT.g / (2 * PT.cw) * (p2 - p1))


def test_higgs_gauge_couplings_give_the_vector_masses() -> None:
    # (1 + h/v)^2 multiplies the mass terms: h V V = 2 i m_V^2/v g, h h V V = 2 i m_V^2/v^2 g; so the
    # table's g mW and g mZ/cw agree with mW = g v/2, mZ = mW/cw (common practice, no source)
    for boson, m, pair in (("W", PT.mw, ("W", "dag(W)")), ("Z", PT.mz, ("Z", "Z"))):
        assert np.allclose(_rule(*pair, "h").value(*_momenta(3), PT), 2j * m ** 2 / PT.v * ETA), boson
        assert np.allclose(_rule(*pair, "h", "h").value(*_momenta(4), PT), 2j * m ** 2 / PT.v ** 2 * ETA), boson
    assert PT.mw == pytest.approx(80.27, abs=0.05)  # the inputs give the measured W mass (PDG 2024, from memory)
    assert PT.e ** 2 / (4 * np.pi) == pytest.approx(1 / 128, rel=0.03)  # alpha at the Z mass (PDG, from memory)


def test_goldstone_couplings_follow_from_the_one_vev_terms() -> None:
    # the W G V terms are the W G V h terms with h -> v (by hand: (g/2) G- W+ (v + h + i G0)(e A - g sw^2/cw Z))
    for neutral in ("A", "Z"):
        with_vev = _rule("W", "dag(Gp)", neutral).value(*_momenta(3), PT)
        with_h = _rule("W", "dag(Gp)", neutral, "h").value(*_momenta(4), PT)
        with_g0 = _rule("W", "dag(Gp)", neutral, "G0").value(*_momenta(4), PT)
        assert np.allclose(with_vev, PT.v * with_h)
        assert np.allclose(with_g0, 1j * with_h)
    assert np.allclose(_rule("dag(W)", "Gp", "A", "G0").value(*_momenta(4), PT),
                       -_rule("W", "dag(Gp)", "A", "G0").value(*_momenta(4), PT))


def test_scalar_self_couplings_in_terms_of_the_higgs_mass() -> None:
    # hhh = -3 i mh^2/v, hhhh = -3 i mh^2/v^2, h G G = -i mh^2/v (R&S and Peskin & Schroeder ch. 20, from memory)
    mh2, v = PT.mh ** 2, PT.v
    assert complex(_rule("h", "h", "h").value(*_momenta(3), PT)) == pytest.approx(-3j * mh2 / v)
    assert complex(_rule("h", "h", "h", "h").value(*_momenta(4), PT)) == pytest.approx(-3j * mh2 / v ** 2)
    for legs in (("h", "G0", "G0"), ("h", "Gp", "dag(Gp)")):
        assert complex(_rule(*legs).value(*_momenta(3), PT)) == pytest.approx(-1j * mh2 / v)
    # a quartic of four equal real fields is three times the one with two pairs: (4!/4)/(2! 2!/2) = 3
    assert complex(_rule("G0", "G0", "G0", "G0").value(*_momenta(4), PT)) == pytest.approx(
        3 * complex(_rule("h", "h", "G0", "G0").value(*_momenta(4), PT)))


def test_goldstone_fermion_couplings_follow_from_the_yukawa_couplings() -> None:
    # |G0 f f| = |h f f| (the same Yukawa, i G0 instead of h); G+ u d carries sqrt2 and the CKM entry
    mu, md = PT.mf
    for name, m in (("u", mu), ("d", md)):
        h = _rule(f"bar({name})", name, "h").value(*_momenta(3), PT)
        g0 = _rule(f"bar({name})", name, "G0").value(*_momenta(3), PT)
        assert np.allclose(h, -1j * m / PT.v * ONE)
        assert np.allclose(np.abs(g0), np.abs(m / PT.v * GAMMA5))
    gp = _rule("bar(u)", "d", "Gp").value(*_momenta(3), PT)
    gm = _rule("bar(d)", "u", "dag(Gp)").value(*_momenta(3), PT)
    # the two are each other's conjugates: gamma0 M^dagger gamma0 of one is the other up to i -> -i
    g0 = GAMMA[0]
    assert np.allclose(-(g0 @ gp.conj().T @ g0), gm)
    # in units of g/(sqrt2 mW): V (mu PL - md PR) (R&S, from memory; sqrt2/v = g/(sqrt2 mW))
    assert np.allclose(gp, 1j * PT.g / (np.sqrt(2) * PT.mw) * PT.ckm * (mu * PL - md * (ONE - PL)))


def test_ghost_couplings_match_their_vectors() -> None:
    # the charged ghost couples to A and Z in the ratio of W W A to W W Z (both from the SU(2) f^{abc})
    p1, p2, p3 = _momenta(3)
    ratio_ghost = _rule("bar(gh_W)", "gh_W", "A").value(p1, p2, p3, PT)[0] / _rule("bar(gh_W)", "gh_W", "Z").value(
        p1, p2, p3, PT)[0]
    ratio_vector = (_rule("W", "dag(W)", "A").value(p1, p2, p3, PT)[0, 0, 1]
                    / _rule("W", "dag(W)", "Z").value(p1, p2, p3, PT)[0, 0, 1])
    assert ratio_ghost == pytest.approx(ratio_vector) == pytest.approx(PT.sw / PT.cw)
    # a ghost's Higgs coupling is its mass term times 1/v: -i xi m^2/v (common practice, no source)
    props = propagators(PT)
    for ghost, m2 in (("gh_Z", PT.xi_Z * PT.mz ** 2), ("gh_W", PT.xi_W * PT.mw ** 2)):
        assert complex(_rule(f"bar({ghost})", ghost, "h").value(p1, p2, p3, PT)) == pytest.approx(-1j * m2 / PT.v)
        # its propagator's pole is the Goldstone's of the same vector: both at p^2 = xi m_V^2
        p = np.array([np.sqrt(m2 + 9.0), 0.0, 0.0, 2.0])
        goldstone = {"gh_Z": "G0", "gh_W": "Gp"}[ghost]
        assert props[ghost](p) == pytest.approx(props[goldstone](p)) == pytest.approx(1j / 5.0)


def test_vector_propagators_in_their_gauges() -> None:
    # Feynman gauge -i g/(p^2 - m^2); unitary gauge (xi -> oo) -i (g - p p/m^2)/(p^2 - m^2); a change of
    # xi adds only a p^mu p^nu piece (R&S propagators; Peskin & Schroeder eq. (21.53), from memory)
    p = np.array([310.0, 20.0, -45.0, 100.0])
    p2 = (p @ ETA @ p).real
    m = PT.mz
    assert np.allclose(vector_propagator(p, m, 1.0), -1j * ETA / (p2 - m ** 2))
    unitary = -1j * (ETA - np.outer(p, p) / m ** 2) / (p2 - m ** 2)
    assert np.allclose(vector_propagator(p, m, 1e12), unitary, rtol=1e-6)
    difference = vector_propagator(p, m, 5.0) - vector_propagator(p, m, 0.0)
    assert np.allclose(difference, (difference[0, 0] / p[0] ** 2) * np.outer(p, p))
    # the photon: the same with m = 0
    assert np.allclose(propagators(PT)["A"](p), -1j / p2 * (ETA - (1 - PT.xi_A) * np.outer(p, p) / p2))


def test_the_table_counts_by_type() -> None:
    # a hand count of the entries written in sm_reference.table(), per type (one generation pair)
    expected = {"gauge-fermion": 11, "triple gauge": 2, "quartic gauge": 4, "Higgs-gauge": 7,
                "Goldstone-gauge": 6 + 4 + 5 + 4, "scalar self": 9, "Yukawa": 2, "Goldstone-fermion": 4,
                "ghost-scalar": 2, "ghost-gauge": 2}
    assert Counter(r.kind for r in table()) == expected
    # odd in the gauge couplings: 11 gauge-fermion, 2 triple, 3 Higgs and 4 Goldstone derivative, 2 ghost
    assert sum(r.odd for r in table()) == 11 + 2 + 3 + 4 + 2
