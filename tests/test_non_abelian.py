"""Non-abelian gauge theories: SU(N) algebra, QCD rules, ghosts, colour axes, gauge invariance.

Sources: Peskin & Schroeder, *An Introduction to QFT*, ch. 16, Fig. 16.7 (Feynman rules of a
non-abelian gauge theory with D = d - i g A^a t^a, from memory); Romao & Silva,
arXiv:1209.6213 (the same rules with the covariant-derivative sign as a parameter, from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy
from conftest import bar, u_spinor, v_spinor

import vertexsmith as vs
from vertexsmith.groups import su_generators, su_structure_constants
from vertexsmith.numeric import GAMMA, GAMMA5, METRIC

RNG = np.random.default_rng(20261201)

QCD = """theory qcd1 "one quark"
parameters
  coupling gs = 1.1
  mass mq = 0.7
gauge
  color SU(3) boson G strength GS coupling gs
fields
  vector G
  dirac q mass mq in color fundamental
lagrangian
  -1/4 GS[mu,nu,a] GS[mu,nu,a]
  bar(q) (I gamma[mu] D[mu] - mq) q
"""


def qcd_rules(convention: str = "", gauge: str = "feynman") -> vs.Rules:
    text = QCD + (f"conventions\n  covariant {convention}\n" if convention else "")
    return vs.load_model(text=text, name="qcd1.vsm").derive(gauge=gauge)


# ------------------------------------------------------------------ the algebra

@pytest.mark.parametrize("n", [2, 3, 4])
def test_generators_are_normalised_to_one_half(n: int) -> None:
    # Tr(T^a T^b) = delta^{ab}/2 (common practice, no source)
    t = su_generators(n)
    assert np.allclose(np.einsum("aij,bji->ab", t, t), np.eye(n * n - 1) / 2)


@pytest.mark.parametrize("n", [2, 3, 4])
def test_casimir_of_the_fundamental(n: int) -> None:
    # T^a T^a = C_F 1 with C_F = (N^2 - 1)/(2N) (Peskin & Schroeder eq. 15.92, from memory)
    t = su_generators(n)
    assert np.allclose(np.einsum("aij,ajk->ik", t, t), (n * n - 1) / (2 * n) * np.eye(n))


@pytest.mark.parametrize("n", [2, 3, 4])
def test_casimir_of_the_adjoint(n: int) -> None:
    # f^{acd} f^{bcd} = N delta^{ab} (Peskin & Schroeder eq. 15.94, from memory)
    f = su_structure_constants(n)
    assert np.allclose(np.einsum("acd,bcd->ab", f, f), n * np.eye(n * n - 1))


@pytest.mark.parametrize("n", [2, 3, 4])
def test_structure_constants_close_the_algebra(n: int) -> None:
    # [T^a, T^b] = i f^{abc} T^c, f totally antisymmetric (common practice, no source)
    t, f = su_generators(n), su_structure_constants(n)
    commutator = np.einsum("aij,bjk->abik", t, t) - np.einsum("bij,ajk->abik", t, t)
    assert np.allclose(commutator, 1j * np.einsum("abc,cik->abik", f, t))
    assert np.allclose(f, -np.transpose(f, (1, 0, 2)))
    assert np.allclose(f, np.transpose(f, (1, 2, 0)))


@pytest.mark.parametrize("n", [2, 3])
def test_gell_mann_normalisation_f123(n: int) -> None:
    # f^{123} = 1 in Gell-Mann's basis (common practice, no source)
    assert su_structure_constants(n)[0, 1, 2] == pytest.approx(1.0)


def test_su3_f458() -> None:
    # f^{458} = sqrt(3)/2 (Gell-Mann's table, common practice)
    assert su_structure_constants(3)[3, 4, 7] == pytest.approx(np.sqrt(3) / 2)


# ------------------------------------------------------------------ the QCD rules

def test_quark_gluon_vertex_is_i_g_gamma_T() -> None:
    # Peskin & Schroeder Fig. 16.7 (from memory): i g gamma^mu t^a_{ij}
    v = qcd_rules().vertex("bar(q)", "q", "G")
    gs = 1.1
    expected = 1j * gs * np.einsum("mab,cij->aibjmc", GAMMA, su_generators(3))
    assert v.evaluate(np.zeros((3, 4))).shape == (4, 3, 4, 3, 4, 8)
    assert np.allclose(v.evaluate(np.zeros((3, 4))), expected)


def _three_gluon_expected(g: float, p: np.ndarray) -> np.ndarray:
    # g f^{abc} [g^{mu nu}(k - p)^rho + g^{nu rho}(p - q)^mu + g^{rho mu}(q - k)^nu], all incoming
    # (Peskin & Schroeder Fig. 16.7, from memory); axes (mu, a, nu, b, rho, c)
    k1, k2, k3 = p
    g_ = METRIC
    lorentz = (np.einsum("mn,r->mnr", g_, k1 - k2) + np.einsum("nr,m->mnr", g_, k2 - k3)
               + np.einsum("rm,n->mnr", g_, k3 - k1))
    return g * np.einsum("mnr,abc->manbrc", lorentz, su_structure_constants(3))


def test_three_gluon_vertex() -> None:
    p = RNG.normal(size=(3, 4))
    v = qcd_rules().vertex("G", "G", "G")
    assert np.allclose(v.evaluate(p), _three_gluon_expected(1.1, p))


def test_four_gluon_vertex() -> None:
    # -i g^2 [f^{abe} f^{cde}(g^{mu rho} g^{nu sigma} - g^{mu sigma} g^{nu rho}) + (b<->c, nu<->rho)
    #        + (b<->d, nu<->sigma)] (Peskin & Schroeder Fig. 16.7, from memory)
    g, f, m = 1.1, su_structure_constants(3), METRIC
    ff = {"abcd": np.einsum("abe,cde->abcd", f, f)}
    lor = {"13-14": np.einsum("ik,jl->ijkl", m, m) - np.einsum("il,jk->ijkl", m, m),
           "12-14": np.einsum("ij,kl->ijkl", m, m) - np.einsum("il,jk->ijkl", m, m),
           "12-13": np.einsum("ij,kl->ijkl", m, m) - np.einsum("ik,jl->ijkl", m, m)}
    expected = -1j * g**2 * (np.einsum("abcd,ijkl->iajbkcld", ff["abcd"], lor["13-14"])
                             + np.einsum("acbd,ijkl->iajbkcld", ff["abcd"], lor["12-14"])
                             + np.einsum("adbc,ijkl->iajbkcld", ff["abcd"], lor["12-13"]))
    v = qcd_rules().vertex("G", "G", "G", "G")
    assert np.allclose(v.evaluate(np.zeros((4, 4))), expected)


def test_four_gluon_vertex_prints_in_the_compact_f_f_form() -> None:
    v = qcd_rules().vertex("G", "G", "G", "G")
    assert len(v.parts) == 3
    for part in v.parts:
        assert part.coupling == -sympy.I * sympy.Symbol("gs", real=True) ** 2
        assert len(sympy.Add.make_args(part.lorentz)) == 2


def test_ghost_gluon_vertex() -> None:
    # -g f^{abc} p^mu with p the outgoing ghost momentum, a the outgoing ghost, b the gluon,
    # c the incoming ghost (Peskin & Schroeder Fig. 16.7, from memory). Our legs: bar(gh) (a1, incoming
    # momentum p1 = -p_out), gh (a2), G (mu3, a3): -g f^{a1 a3 a2} (-p1)^mu3 = -g f^{a1 a2 a3} p1^mu3.
    p = RNG.normal(size=(3, 4))
    v = qcd_rules().vertex("bar(gh_G)", "gh_G", "G")
    f = su_structure_constants(3)
    expected = -1.1 * np.einsum("acb,m->abmc", f, -p[0])
    assert np.allclose(v.evaluate(p), expected)


def test_gluon_and_ghost_propagators_carry_delta_ab() -> None:
    # gluon -i g^{mu nu} delta^{ab}/p^2 in Feynman gauge; ghost i delta^{ab}/p^2 (Peskin & Schroeder Fig. 16.7)
    rules = qcd_rules()
    p = np.array([2.0, 0.3, -0.4, 1.1])
    p2 = p @ METRIC @ p
    assert np.allclose(rules.propagator("G").evaluate(p), np.multiply.outer(-1j * METRIC / p2, np.eye(8)))
    assert np.allclose(rules.propagator("gh_G").evaluate(p), 1j / p2 * np.eye(8))


def test_gluon_propagator_in_r_xi_gauge() -> None:
    # -i/p^2 [g - (1 - xi) p p / p^2] delta^{ab} (Peskin & Schroeder eq. 16.30, from memory)
    prop = qcd_rules(gauge="xi").propagator("G")
    p = np.array([2.0, 0.3, -0.4, 1.1])
    p2 = p @ METRIC @ p
    xi = 0.37
    lorentz = -1j / p2 * (METRIC - (1 - xi) * np.outer(p, p) / p2)
    assert np.allclose(prop.evaluate(p, values={"xi_G": xi}), np.multiply.outer(lorentz, np.eye(8)))


def test_quark_propagator_has_colour_axes() -> None:
    prop = qcd_rules().propagator("q")
    p = np.array([2.0, 0.3, -0.4, 1.1])
    assert prop.evaluate(p).shape == (4, 4, 3, 3)


@pytest.mark.parametrize("labels, flips", [
    (("bar(q)", "q", "G"), True),
    (("G", "G", "G"), True),
    (("bar(gh_G)", "gh_G", "G"), True),
    (("G", "G", "G", "G"), False),
], ids=["quark-gluon", "three-gluon", "ghost", "four-gluon"])
def test_covariant_sign_switch_flips_exactly_the_odd_powers_of_g(labels: tuple[str, ...], flips: bool) -> None:
    # D = d + i g A: every rule odd in g changes sign, the four-gluon vertex (g^2) does not
    # (Romao & Silva, arXiv:1209.6213, eta factors; from memory)
    p = RNG.normal(size=(len(labels), 4))
    minus = qcd_rules("minus").vertex(*labels).evaluate(p)
    plus = qcd_rules("plus").vertex(*labels).evaluate(p)
    assert np.allclose(plus, -minus if flips else minus)
    assert np.abs(minus).max() > 0


# ------------------------------------------------------------------ gauge invariance of q qbar -> g g

def _kinematics(m: float) -> tuple[np.ndarray, ...]:
    energy = 3.0
    pz = np.sqrt(energy**2 - m**2)
    p1 = np.array([energy, 0, 0, pz])
    p2 = np.array([energy, 0, 0, -pz])
    theta, phi = 0.7, 0.3
    n = np.array([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi), np.cos(theta)])
    k1 = np.concatenate([[energy], energy * n])
    k2 = np.concatenate([[energy], -energy * n])
    return p1, p2, k1, k2


def _transverse(k: np.ndarray) -> np.ndarray:
    n = k[1:] / np.linalg.norm(k[1:])
    e1 = np.cross(n, [0.3, 0.5, 0.8])
    e1 /= np.linalg.norm(e1)
    return np.concatenate([[0.0], e1])


def _qqbar_to_gg(rules: vs.Rules, eps1: np.ndarray, eps2: np.ndarray, with_three_gluon: bool) -> np.ndarray:
    """iM for q(p1, colour i) qbar(p2, colour j) -> g(k1, a) g(k2, b), every colour, three diagrams."""
    m = 0.7
    p1, p2, k1, k2 = _kinematics(m)
    u = u_spinor(p1, m, 0)
    vbar = bar(v_spinor(p2, m, 1))
    # vertex axes: bar(q) (spinor, colour), q (spinor, colour), G (mu, a); momenta do not enter
    vertex = rules.vertex("bar(q)", "q", "G").evaluate(np.zeros((3, 4)))
    e1, e2 = METRIC @ eps1.conj(), METRIC @ eps2.conj()  # eps*_mu, lowered for the upper vertex index
    quark = rules.propagator("q")
    t_prop = quark.evaluate(p1 - k1)  # (spinor, spinor, colour, colour), momentum along the arrow
    u_prop = quark.evaluate(p1 - k2)
    # vbar(p2)_j V(gluon 2) S(p1 - k1) V(gluon 1) u(p1)_i, and the crossed diagram
    t_channel = np.einsum("s,sjtknb,tukl,ulwima,w,n,m->ijab", vbar, vertex, t_prop, vertex, u, e2, e1,
                          optimize=True)
    u_channel = np.einsum("s,sjtkma,tukl,ulwinb,w,m,n->ijab", vbar, vertex, u_prop, vertex, u, e1, e2,
                          optimize=True)
    total = t_channel + u_channel
    if with_three_gluon:
        q = p1 + p2
        gluon = rules.propagator("G").evaluate(q)  # (rho, sigma, c, d), upper indices
        three = rules.vertex("G", "G", "G").evaluate(np.array([q, -k1, -k2]))  # (sigma, d, mu, a, nu, b)
        current = np.einsum("s,sjtirc,t->ijrc", vbar, vertex, u)
        total = total + np.einsum("ijrc,rx,xycd,yz,zdmanb,m,n->ijab", current, METRIC, gluon, METRIC, three,
                                  e1, e2, optimize=True)
    return total


def test_ward_identity_for_q_qbar_to_g_g() -> None:
    # Replacing one gluon's polarisation by its momentum gives zero when the other gluon is physical;
    # the three-gluon diagram is needed for it (Peskin & Schroeder sec. 16.1, from memory)
    rules = qcd_rules()
    _, _, k1, k2 = _kinematics(0.7)
    eps2 = _transverse(k2)
    physical = _qqbar_to_gg(rules, _transverse(k1), eps2, with_three_gluon=True)
    assert np.abs(physical).max() > 1e-3
    ward = _qqbar_to_gg(rules, k1, eps2, with_three_gluon=True)
    assert np.abs(ward).max() < 1e-12 * np.abs(physical).max() * 100
    without = _qqbar_to_gg(rules, k1, eps2, with_three_gluon=False)
    assert np.abs(without).max() > 1e-3


# ------------------------------------------------------------------ language: indices and errors

@pytest.mark.parametrize("term, message, column", [
    ("bar(q[a]) gamma[mu] T[a,i,j] q[j] G[mu,i]", "joins an adjoint and a fundamental index", 3),
    ("bar(q) gamma[mu] q G[mu]", "the adjoint index of 'G' must be written", 22),
    ("T[a] bar(q) gamma[mu] q G[mu,a]", "the generator T stands outside", 3),
    ("bar(q) gamma[mu] T[a] q G[mu,b]", "index 'a' is left free", 22),
], ids=["adjoint-index-on-fundamental", "gluon-without-adjoint-index", "generator-outside-chain",
        "free-group-index"])
def test_group_index_errors_point_at_the_term(term: str, message: str, column: int) -> None:
    with pytest.raises(vs.VertexsmithError) as info:
        vs.load_model(text=QCD + f"  {term}\n", name="bad.vsm").derive()
    error = info.value
    assert (error.span.line, error.span.column) == (13, column)
    assert message in error.message
    assert "bad.vsm:13:" in str(error) and "^" in str(error)


def test_unknown_representation_is_reported_with_its_position() -> None:
    text = QCD.replace("in color fundamental", "in color sextet")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="bad.vsm")
    assert info.value.span.line == 9
    assert "sextet" in info.value.message


def test_explicit_indices_agree_with_implied_contraction() -> None:
    implied = qcd_rules()
    explicit_text = QCD.replace("bar(q) (I gamma[mu] D[mu] - mq) q",
                                "I bar(q[i]) gamma[mu] d[mu] q[i] - mq bar(q[i]) q[i]"
                                " + gs bar(q[i]) gamma[mu] T[a,i,j] q[j] G[mu,a]")
    explicit = vs.load_model(text=explicit_text, name="x.vsm").derive(gauge="feynman")
    a = implied.vertex("bar(q)", "q", "G").evaluate(np.zeros((3, 4)))
    b = explicit.vertex("bar(q)", "q", "G").evaluate(np.zeros((3, 4)))
    assert np.allclose(a, b)


def test_implied_adjoint_strengths_match_explicit_ones() -> None:
    pure = vs.load_model(vs.example("su2_yang_mills")).derive(gauge="feynman")
    explicit = vs.load_model(text=vs.example("su2_yang_mills").read_text().replace(
        "WS[mu,nu] WS[mu,nu]", "WS[mu,nu,a] WS[mu,nu,a]"), name="x.vsm").derive(gauge="feynman")
    p = RNG.normal(size=(3, 4))
    assert np.allclose(pure.vertex("W", "W", "W").evaluate(p), explicit.vertex("W", "W", "W").evaluate(p))


def test_adjoint_matter_couples_through_f() -> None:
    # (D_mu Sig)^a = d Sig^a + g f^{abc} V^b Sig^c gives the vertex g f^{a1 a3 a2}... i.e.
    # i x (1/2) x 2 x g f^{abc} [(-i p1) - (-i p2)] in the leg order Sig(p1, a1) Sig(p2, a2) V(mu3, a3):
    # g f^{a1 a3 a2} (p1 - p2)^mu3 (common practice; the scalar-QED analogue of Peskin & Schroeder problem 9.1)
    rules = vs.load_model(vs.example("dark_su2")).derive(gauge="feynman")
    p = RNG.normal(size=(3, 4))
    v = rules.vertex("Sig", "Sig", "V")
    f = su_structure_constants(2)
    expected = 0.8 * np.einsum("acb,m->abmc", f, p[0] - p[1])
    assert np.allclose(v.evaluate(p), expected)


def test_electroweak_model_has_the_chiral_gauge_couplings() -> None:
    rules = vs.load_model(vs.example("electroweak_unbroken")).derive(gauge="feynman")
    labels = {tuple(v.labels) for v in rules.vertices}
    for expected in [("bar(Q)", "Q", "G"), ("bar(Q)", "Q", "W"), ("bar(Q)", "Q", "B"), ("bar(eR)", "eR", "B"),
                     ("bar(L)", "eR", "H"), ("G", "G", "G"), ("W", "W", "W")]:
        assert expected in labels
    # the quark doublet couples to W only through its left-handed part: V = i g2 gamma^mu PL T^a
    v = rules.vertex("bar(Q)", "Q", "W").evaluate(np.zeros((3, 4)))
    left = (np.eye(4) - GAMMA5) / 2
    expected = 1j * 0.6517 * np.einsum("mab,bc,ik,zxy->aixckymz", GAMMA, left, np.eye(3), su_generators(2))
    assert np.allclose(v, expected)
    # its propagator lives in the left-handed subspace
    p = np.array([2.0, 0.3, -0.4, 1.1])
    prop = rules.propagator("Q").evaluate(p)
    assert prop.shape == (4, 4, 3, 3, 2, 2)
    assert np.allclose(np.einsum("st,tuijkl->suijkl", left, prop), prop)
    assert np.abs(prop).max() > 0
