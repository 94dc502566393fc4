"""Majorana fermions: declarations, the factor 2 of a pair, vanishing currents, fermion flow.

Sources: Denner, Eck, Hahn & Kuebbeck, Nucl. Phys. B 387 (1992) 467 (fermion-flow Feynman
rules: vertices for a chosen flow, Gamma' = C Gamma^T C^-1 against it, external Majorana
spinors u, v-bar, relative signs from the permutation of external spinors; from memory).
Dirac algebra and spinors come from conftest (sympy's mgamma), C = i gamma^2 gamma^0 is built
here from them.
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith as vs

HEADER = """\
theory t
parameters
  coupling y = 0.3
  mass m = 2.0
  mass ms = 5.0
fields
  majorana chi mass m
  scalar s mass ms
lagrangian
  1/2 bar(chi) (I gamma[mu] d[mu] - m) chi
  1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2
"""


def _rules(extra: str) -> vs.Rules:
    return vs.load_model(text=HEADER + extra, name="t.vsm").derive(gauge="feynman")


# ---------------------------------------------------------------- declarations

@pytest.mark.parametrize("declaration, column, message", [
    ("majorana chi complex mass m", 3, "a Majorana fermion is its own antiparticle, so it cannot be complex"),
])
def test_majorana_declaration_errors(declaration: str, column: int, message: str) -> None:
    text = HEADER.replace("majorana chi mass m", declaration)
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="t.vsm")
    assert (info.value.span.line, info.value.span.column) == (7, column)
    assert info.value.message == message


def test_a_majorana_field_carries_no_charge_and_no_complex_representation() -> None:
    gauge = "gauge\n  hid U(1) boson A strength F coupling y\n  col SU(3) boson G strength GS coupling y\n"
    base = HEADER.replace("fields\n", gauge + "fields\n  vector A\n  vector G\n")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=base.replace("majorana chi mass m", "majorana chi mass m charge hid 1"), name="t.vsm")
    assert info.value.message == "the Majorana fermion 'chi' cannot carry a U(1) charge"
    assert (info.value.span.line, info.value.span.column) == (12, 23)
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=base.replace("majorana chi mass m", "majorana chi mass m in col fundamental"),
                      name="t.vsm")
    assert info.value.message == "the Majorana fermion 'chi' cannot sit in the fundamental representation"
    # the adjoint is real: a gluino-like Majorana octet is allowed
    octet = base.replace("majorana chi mass m", "majorana chi mass m in col adjoint").replace(
        "bar(chi) (I gamma[mu] d[mu] - m) chi", "bar(chi[a]) (I gamma[mu] d[mu] - m) chi[a]")
    assert vs.load_model(text=octet, name="t.vsm").fields["chi"].representations == (("col", "adjoint"),)


# ---------------------------------------------------------------- rules

def test_propagator_is_the_dirac_one_along_the_flow(dirac, rng: np.random.Generator) -> None:
    # 1/2 bar(chi) (i dslash - m) chi gives i (pslash + m)/(p^2 - m^2), p along the flow (Denner et al.)
    p = rng.normal(size=4)
    expected = 1j * (dirac.slash(p) + 2.0 * dirac.ONE) / (dirac.dot(p, p) - 4.0)
    assert np.allclose(_rules("").propagator("chi").evaluate(p), expected)


@pytest.mark.parametrize("half, factor", [("1/2 ", 1), ("", 2)])
def test_a_majorana_pair_vertex_carries_a_factor_two(half: str, factor: int, dirac) -> None:
    # L = -c y s bar(chi) chi gives -2 i c y: both chi factors can fill either end of the flow
    # (Denner et al. eq. 3.3, from memory; common practice: -1/2 y s chi chi gives -i y)
    rules = _rules(f"  - {half}y s bar(chi) chi\n")
    got = rules.vertex("bar(chi)", "chi", "s").evaluate(np.zeros((3, 4)))
    assert np.allclose(got, -1j * 0.3 * factor * dirac.ONE)


def test_the_majorana_vector_and_tensor_currents_vanish_and_the_axial_one_doubles(dirac) -> None:
    # bar(chi) gamma^mu chi = 0 and bar(chi) sigma^{mu nu} chi = 0 for a Majorana field (C gamma^T C^-1 =
    # -gamma, C sigma^T C^-1 = -sigma), while gamma^mu gamma5 survives twice (common practice, no source)
    extra = ("  vector Z\n", "  y Z[mu] bar(chi) gamma[mu] chi\n  y Z[mu] bar(chi) gamma[mu] gamma5 chi\n"
             "  y d[mu] Z[nu] bar(chi) sigma[mu,nu] chi\n")
    text = HEADER.replace("  scalar s mass ms\n", "  scalar s mass ms\n  vector Z mass m\n") + extra[1]
    text += "  - 1/4 d[mu] Z[nu] d[mu] Z[nu] + 1/4 d[mu] Z[nu] d[nu] Z[mu] + 1/2 m^2 Z[mu] Z[mu]\n"
    rules = vs.load_model(text=text, name="t.vsm").derive()
    got = rules.vertex("bar(chi)", "chi", "Z").evaluate(np.zeros((3, 4)))
    expected = 2j * 0.3 * np.einsum("mab,bc->acm", dirac.GAMMA, dirac.GAMMA5)
    assert np.allclose(got, expected)


def test_a_chain_between_two_majorana_fields_is_turned_to_one_flow(dirac) -> None:
    # bar(chi2) G chi1 = bar(chi1) G' chi2: a term and its reversed partner land on one vertex, stated
    # with the bar end on the field declared first (Denner et al., eq. 2.4, from memory)
    text = HEADER.replace("  scalar s mass ms\n", "  majorana chi2 mass ms\n  scalar s mass ms\n")
    text += "  1/2 bar(chi2) (I gamma[mu] d[mu] - ms) chi2\n  - y s bar(chi2) gamma5 chi\n  - y s bar(chi) chi2\n"
    rules = vs.load_model(text=text, name="t.vsm").derive()
    assert [v.labels for v in rules.vertices] == [("bar(chi)", "chi2", "s")]
    got = rules.vertices[0].evaluate(np.zeros((3, 4)))
    assert np.allclose(got, -1j * 0.3 * (dirac.ONE + dirac.GAMMA5))  # gamma5' = gamma5


# ---------------------------------------------------------------- an amplitude, two flows

MCHI, MPHI, CS = 150.0, 400.0, 0.8  # the invented numbers of models/dark_majorana.vsm


def _c_matrix(dirac) -> np.ndarray:
    return 1j * dirac.GAMMA[2] @ dirac.GAMMA[0]


def _kinematics(sqrt_s: float, cos_theta: float, phi: float) -> tuple[np.ndarray, ...]:
    e = sqrt_s / 2
    k = np.sqrt(e * e - MCHI * MCHI)
    sin_theta = np.sqrt(1 - cos_theta**2)
    k1, k2 = np.array([e, 0, 0, k]), np.array([e, 0, 0, -k])
    direction = np.array([sin_theta * np.cos(phi), sin_theta * np.sin(phi), cos_theta])
    p1, p2 = np.array([e, *(e * direction)]), np.array([e, *(-e * direction)])
    return k1, k2, p1, p2


def _summed_square(rules: vs.Rules, dirac, momenta: tuple[np.ndarray, ...], reversed_second_line: bool) -> float:
    """sum over spins of |M|^2 for chi(k1) chi(k2) -> f(p1) fbar(p2), mf = 0, built from the rules."""
    k1, k2, p1, p2 = momenta
    c = _c_matrix(dirac)
    v1 = rules.vertex("bar(f)", "chi", "phi").evaluate(np.zeros((3, 4)))
    v2 = rules.vertex("bar(chi)", "f", "dag(phi)").evaluate(np.zeros((3, 4)))
    v2_reversed = c @ v2.T @ np.linalg.inv(c)
    prop = rules.propagator("phi")

    def u_maj(k, s):
        return dirac.u(k, MCHI, s)

    def vbar_maj(k, s):  # v = C ubar^T for a Majorana spinor, so that u and v describe one particle
        return dirac.bar(c @ dirac.bar(dirac.u(k, MCHI, s)))

    total = 0.0
    for s1, s2, r1, r2 in np.ndindex(2, 2, 2, 2):
        ubar_f = dirac.bar(dirac.u(p1, 0.0, r1))
        if reversed_second_line:
            # flow from chi(k2) to fbar(p2): u(k2) at the start, ubar(p2) at the end, the vertex read against
            # its flow (Gamma'); a flow against the fermion number swaps u and v of the Dirac line
            def second(k, s):
                return dirac.bar(dirac.u(p2, 0.0, r2)) @ v2_reversed @ u_maj(k, s)
        else:
            # flow from fbar(p2) to chi(k2): v(p2) at the start, vbar(k2) at the end
            def second(k, s):
                return vbar_maj(k, s) @ v2 @ dirac.v(p2, 0.0, r2)
        t_channel = (ubar_f @ v1 @ u_maj(k1, s1)) * prop.evaluate(k1 - p1) * second(k2, s2)
        u_channel = (ubar_f @ v1 @ u_maj(k2, s2)) * prop.evaluate(k2 - p1) * second(k1, s1)
        # the external spinors stand in the order (p1, k1, ., k2) in one diagram and (p1, k2, ., k1) in the
        # other: an odd permutation, so the diagrams subtract
        total += abs(t_channel - u_channel) ** 2
    return total


def _formula(momenta: tuple[np.ndarray, ...], dirac) -> float:
    # sum |M|^2 = cs^4 [(t - m^2)^2/(t - M^2)^2 + (u - m^2)^2/(u - M^2)^2 - 2 m^2 s/((t - M^2)(u - M^2))]
    # for a chiral coupling and massless f (the t-channel piece by the trace Tr[p1 PL k1 PR] Tr[k2 PR p2 PL]
    # worked out in this docstring's spirit; the interference as in the dark-matter literature, from memory)
    k1, k2, p1, p2 = momenta
    s, t, u = (dirac.dot(k1 + k2, k1 + k2).real, dirac.dot(k1 - p1, k1 - p1).real,
               dirac.dot(k2 - p1, k2 - p1).real)
    m2, big = MCHI**2, MPHI**2
    return CS**4 * ((t - m2) ** 2 / (t - big) ** 2 + (u - m2) ** 2 / (u - big) ** 2
                    - 2 * m2 * s / ((t - big) * (u - big)))


@pytest.fixture(scope="module")
def majorana_rules() -> vs.Rules:
    return vs.load_model(vs.example("dark_majorana")).derive(gauge="feynman")


@pytest.mark.parametrize("sqrt_s, cos_theta, phi", [(320.0, 0.3, 0.1), (500.0, -0.7, 2.0), (1200.0, 0.95, 4.0)])
def test_majorana_annihilation_through_t_and_u_channels(majorana_rules, dirac, sqrt_s, cos_theta, phi) -> None:
    momenta = _kinematics(sqrt_s, cos_theta, phi)
    along_fermion_number = _summed_square(majorana_rules, dirac, momenta, reversed_second_line=False)
    against_it = _summed_square(majorana_rules, dirac, momenta, reversed_second_line=True)
    assert along_fermion_number == pytest.approx(_formula(momenta, dirac), rel=1e-9)
    assert against_it == pytest.approx(along_fermion_number, rel=1e-9)


def test_the_s_wave_vanishes_for_massless_final_fermions(majorana_rules, dirac) -> None:
    # at threshold the t- and u-channel diagrams cancel: a Majorana pair at rest is a pseudoscalar
    # state, which cannot go to a massless chiral pair (helicity suppression; common practice)
    at_rest = _kinematics(2 * MCHI * (1 + 1e-12), 0.4, 0.0)
    moving = _kinematics(3 * MCHI, 0.4, 0.0)
    assert _summed_square(majorana_rules, dirac, at_rest, False) < 1e-9 * _summed_square(
        majorana_rules, dirac, moving, False)


@pytest.mark.parametrize("line, message, hint", [
    ("bar(chi) (I gamma[mu] d[mu] - mchi) chi", "the kinetic term of 'chi' is 2 times the canonical one",
     "write 1/2 bar(chi) I gamma[mu] d[mu] chi, or rescale the field"),
    ("1/2 bar(chi) I gamma[mu] d[mu] chi - mchi bar(chi) chi",
     "'chi' is declared with mass mchi, but its quadratic terms give mass 2*mchi",
     "write the mass term as - 1/2 mchi bar(chi) chi, or declare the mass the term uses"),
], ids=["kinetic-without-half", "mass-without-half"])
def test_a_majorana_term_without_its_half_is_reported(line: str, message: str, hint: str) -> None:
    text = vs.example("dark_majorana").read_text(encoding="utf-8").replace(
        "1/2 bar(chi) (I gamma[mu] d[mu] - mchi) chi", line)
    found = [d for d in vs.load_model(text=text, name="m.vsm").check() if d.message == message]
    assert len(found) == 1
    assert (found[0].span.line, found[0].span.column, found[0].severity, found[0].hint) == (35, 3, "warning", hint)


# ---------------------------------------------------------------- a Dirac fermion as two Majorana fermions

TWO_MAJORANA = """\
theory two "a Dirac fermion written as two degenerate Majorana fermions"
parameters
  mass m = 2.0
  mass mA = 3.0
  mass ms = 5.0
  coupling g = 0.4
  coupling ga = 0.25
  coupling y = 0.3
fields
  FERMIONS
  vector A mass mA
  scalar s mass ms
define
  PSI
lagrangian
  psib (I gamma[mu] d[mu] - m) psi
  -1/4 (d[mu] A[nu] - d[nu] A[mu]) (d[mu] A[nu] - d[nu] A[mu]) + 1/2 mA^2 A[mu] A[mu]
  1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2
  g A[mu] psib gamma[mu] psi + ga A[mu] psib gamma[mu] gamma5 psi
  - y s psib psi
"""


def test_a_dirac_fermion_written_as_two_majorana_fermions_gives_the_dirac_rules(dirac, rng) -> None:
    # psi = (chi1 + i chi2)/sqrt(2) with degenerate Majorana chi1, chi2 (common practice, no source): the
    # engine expands the Dirac Lagrangian into Majorana vertices; with a = (1, i), b = (1, -i) the Dirac
    # vertex is 1/2 sum a_j b_k V(bar(chi_j), chi_k), and the fermion-number-violating combination
    # 1/2 sum a_j a_k V(bar(chi_j), chi_k) vanishes; V(bar(chi2), chi1) = C V(bar(chi1), chi2)^T C^-1
    # (Denner et al. eq. 2.4, from memory)
    split = vs.load_model(text=TWO_MAJORANA.replace("FERMIONS", "majorana chi1 mass m\n  majorana chi2 mass m")
                          .replace("PSI", "psi = (chi1 + I chi2)/sqrt(2)\n  psib = (bar(chi1) - I bar(chi2))/sqrt(2)"),
                          name="two.vsm")
    assert not [d for d in split.check() if d.severity != "note"]
    whole = vs.load_model(text=TWO_MAJORANA.replace("FERMIONS", "dirac psi mass m").replace("define\n  PSI\n", "")
                          .replace("psib", "bar(psi)"), name="one.vsm").derive(gauge="feynman")
    rules = split.derive(gauge="feynman")
    c = _c_matrix(dirac)
    a, b = (1, 1j), (1, -1j)
    for boson in ("A", "s"):
        momenta = rng.normal(size=(3, 4))
        swapped = momenta[[1, 0, 2]]

        def v(j: int, k: int) -> np.ndarray:
            found = [x for x in rules.vertices if x.labels == (f"bar(chi{j})", f"chi{k}", boson)]
            if found:
                return found[0].evaluate(momenta)
            reverse = [x for x in rules.vertices if x.labels == (f"bar(chi{k})", f"chi{j}", boson)]
            if not reverse:
                return np.zeros_like(whole.vertex("bar(psi)", "psi", boson).evaluate(momenta))
            other = reverse[0].evaluate(swapped)
            # the spinor axes are the first two; a vector leg's Lorentz axis stays last
            return np.einsum("ab,bc...,cd->ad...", c, np.swapaxes(other, 0, 1), np.linalg.inv(c))

        dirac_vertex = sum(a[j] * b[k] * v(j + 1, k + 1) for j in range(2) for k in range(2)) / 2
        assert np.allclose(dirac_vertex, whole.vertex("bar(psi)", "psi", boson).evaluate(momenta)), boson
        violating = sum(a[j] * a[k] * v(j + 1, k + 1) for j in range(2) for k in range(2)) / 2
        assert np.allclose(violating, 0), boson
    p = rng.normal(size=4)
    average = (rules.propagator("chi1").evaluate(p) + rules.propagator("chi2").evaluate(p)) / 2
    assert np.allclose(average, whole.propagator("psi").evaluate(p))


def _mode_expansion_square(dirac, momenta: tuple[np.ndarray, ...], relative: int = -1) -> float:
    """sum over spins of |M|^2 for chi chi -> f fbar by Wick contraction of the mode expansions, no rules used.

    chi = sum [a u e^{-ikx} + a^dagger v e^{ikx}] with v = C ubar^T (chi = chi^c), bar(chi) = sum [a^dagger ubar
    + a vbar]; L = -cs dag(phi) bar(chi) PR f - cs phi bar(f) PL chi. The chi of the vertex bar(f) PL chi
    annihilates one incoming chi (u), the bar(chi) of the other vertex the second one (vbar); f and bar(f) make
    the outgoing pair (v, ubar). Giving chi(x) the first or the second incoming particle swaps two annihilation
    operators: the two terms subtract (Peskin & Schroeder sec. 4.7 for the sign rule, Denner et al. for
    Majorana spinors; from memory). Overall phases drop out of |M|^2.
    """
    k1, k2, p1, p2 = momenta
    c = _c_matrix(dirac)
    total = 0.0
    for s1, s2, r1, r2 in np.ndindex(2, 2, 2, 2):
        u = {1: dirac.u(k1, MCHI, s1), 2: dirac.u(k2, MCHI, s2)}
        vbar = {n: dirac.bar(c @ dirac.bar(u[n])) for n in (1, 2)}
        ubar_f, v_f = dirac.bar(dirac.u(p1, 0.0, r1)), dirac.v(p2, 0.0, r2)
        terms = []
        for a, b, k in ((1, 2, k1), (2, 1, k2)):
            q = k - p1
            terms.append((ubar_f @ dirac.PL @ u[a]) * (vbar[b] @ dirac.PR @ v_f) / (dirac.dot(q, q) - MPHI**2))
        total += abs(CS**2 * (terms[0] + relative * terms[1])) ** 2
    return total


@pytest.mark.parametrize("sqrt_s, cos_theta, phi", [(320.0, 0.3, 0.1), (900.0, -0.4, 1.0)])
def test_annihilation_from_the_rules_equals_the_mode_expansion(majorana_rules, dirac, sqrt_s, cos_theta, phi) -> None:
    # two ways, same number: the fermion-flow rules of the engine (both flows) and the Wick contraction above
    momenta = _kinematics(sqrt_s, cos_theta, phi)
    by_hand = _mode_expansion_square(dirac, momenta)
    for reversed_second_line in (False, True):
        from_rules = _summed_square(majorana_rules, dirac, momenta, reversed_second_line)
        assert from_rules == pytest.approx(by_hand, rel=1e-9)
    assert _formula(momenta, dirac) == pytest.approx(by_hand, rel=1e-9)
    # the relative minus sign matters: with a plus the sum is a different number
    assert _mode_expansion_square(dirac, momenta, relative=1) != pytest.approx(by_hand, rel=1e-2)
