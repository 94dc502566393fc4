"""Gauge fixing of a broken theory, derived from the gauge variations (breaking/gauge_fixing.py).

The abelian Higgs model in components, phi = (v + h + i G)/sqrt(2), charge 1, D = d - i g A
(covariant sign s = +1). By hand (Peskin & Schroeder ch. 21.1, from memory; Fujikawa, Lee, Sanda,
Phys. Rev. D 6 (1972) 2923, from memory):
- delta phi = i g alpha phi gives delta h = -g alpha G, delta G = g alpha (v + h), delta A = d alpha;
- |D phi|^2 holds 1/2 (d G - g A (v + h))^2, so L contains -g v A.dG: c_G = -g v, m_A = g v, and
  F = d.A - xi c_G G = d.A + xi m_A G; -1/(2 xi) F^2 holds m_A G d.A = -m_A A.dG (by parts), which
  cancels the mixing, and -xi m_A^2 G^2 / 2: the Goldstone mass^2 is xi m_A^2;
- delta F / delta alpha = d^2 + xi m_A g (v + h), so L_gh = -cbar (d^2 + xi g^2 v^2 + xi g m_A h) c:
  ghost mass^2 xi m_A^2 and the vertex (bar(gh), gh, h) = i x (-xi g m_A) = -i xi g m_A = -i xi g^2 v;
- the photon propagator -i/(p^2 - m_A^2) [g - (1 - xi) p p/(p^2 - xi m_A^2)], unitary gauge
  -i/(p^2 - m_A^2) [g - p p/m_A^2] (the xi -> infinity limit).
The same ghost coupling follows for s = -1 (delta phi = -i g alpha phi flips both c_G and delta G).
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith.amplitudes import amplitude
from vertexsmith.assemble import derive_rules
from vertexsmith.breaking.gauge_fixing import fix_gauge, goldstone_mixing
from vertexsmith.breaking.variations import Variation, gauge_variations, vary, with_alpha_fields
from vertexsmith.derive import species_of, vertex_from
from vertexsmith.errors import Span
from vertexsmith.expand import FieldAtom, Monomial
from vertexsmith.kinematics import phase_space

HIGGS = """\
theory ahiggs "broken abelian Higgs in components, no gauge fixing written (invented numbers)"
parameters
  coupling g = 0.5
  coupling lam = 0.1
  mass v = 10.0
  mass mA = g v
  mass mh = sqrt(2 lam) v
gauge
  u1 U(1) boson A strength F coupling g fixing none
fields
  vector A mass mA
  scalar h mass mh
  scalar G
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  1/2 (d[mu] h + g A[mu] G) (d[mu] h + g A[mu] G) + 1/2 (d[mu] G - g A[mu] (v + h)) (d[mu] G - g A[mu] (v + h))
  - lam v^2 h^2 - lam v h (h^2 + G^2) - lam/4 (h^2 + G^2)^2
"""
NOWHERE = Span(0, 0, 0, 0)
g, v = sympy.symbols("g v", real=True)


def _alpha(derivatives: tuple[str, ...] = ()) -> FieldAtom:
    return FieldAtom("alpha_A", False, None, derivatives, NOWHERE)


def _scalar(name: str) -> FieldAtom:
    return FieldAtom(name, False, None, (), NOWHERE)


# the component variations of the docstring, written by hand (the breaking stage derives them)
HAND_VARIATIONS = {
    "A": Variation("A", "var#mu", (), (Monomial(sympy.Integer(1), (_alpha(("var#mu",)),), NOWHERE),)),
    "h": Variation("h", None, (), (Monomial(-g, (_alpha(), _scalar("G")), NOWHERE),)),
    "G": Variation("G", None, (), (Monomial(g * v, (_alpha(),), NOWHERE),
                                   Monomial(g, (_alpha(), _scalar("h")), NOWHERE))),
}


@pytest.fixture(scope="module")
def higgs() -> vs.Model:
    return vs.load_model(text=HIGGS, name="ahiggs.vsm")


def fixed_rules(model: vs.Model, gauge: str):
    fixed = fix_gauge(with_alpha_fields(model, ["A"]), model.monomials(), ["A"], HAND_VARIATIONS, gauge)
    return fixed, derive_rules(vs.pipeline.Model.of(fixed.model), fixed.monomials, gauge)


# ------------------------------------------------------------------ invariance of the unbroken Lagrangian

def _largest_variation(name: str, flip: bool = False) -> float:
    """max |vertex function| of delta L at random conserving momenta (vertices of up to four legs)."""
    model = vs.load_model(vs.example(name))
    groups = list(model.groups)
    with_alpha = with_alpha_fields(model, [model.groups[n].boson for n in groups])
    variations = gauge_variations(with_alpha, groups)
    if flip:  # a planted sign error: matter transforms with the wrong sign of i
        variations = {k: (x if model.fields[k].is_vector else
                          Variation(x.field, x.index, x.group_indices,
                                    tuple(Monomial(-mo.coefficient, mo.atoms, mo.origin) for mo in x.monomials)))
                      for k, x in variations.items()}
    varied = vary(with_alpha, model.monomials(), variations)
    assert varied, "the variation has terms before they cancel"
    by_legs: dict[tuple, list[Monomial]] = {}
    for mono in varied:
        by_legs.setdefault(tuple(sorted(species_of(with_alpha, a) for a in mono.fields)), []).append(mono)
    rng = np.random.default_rng(7)
    worst = 0.0
    for species, monos in sorted(by_legs.items()):
        if len(species) > 4:
            continue
        vertex = vertex_from(with_alpha, list(species), monos)
        if vertex is None:
            continue
        p = rng.normal(size=(len(species), 4))
        p[-1] = -p[:-1].sum(axis=0)
        worst = max(worst, float(np.abs(vertex.evaluate(list(p))).max()))
    return worst


@pytest.mark.parametrize("name", ["scalar_qed", "dark_su2", "electroweak_unbroken", "two_doublets"])
def test_the_derived_variations_leave_the_lagrangian_invariant(name: str) -> None:
    # delta L = 0 to first order in alpha, for U(1) and SU(N), fundamental, adjoint and vector fields:
    # an identity no convention can hide (common practice, no source)
    assert _largest_variation(name) < 1e-12


def test_a_wrong_sign_in_the_variations_is_caught() -> None:
    assert _largest_variation("scalar_qed", flip=True) > 1e-3


# ------------------------------------------------------------------ the abelian Higgs model

def test_goldstone_direction_and_mass_from_the_mixing(higgs: vs.Model) -> None:
    mixing, spans = goldstone_mixing(higgs, higgs.monomials(), "A")
    assert mixing == ((("G", False), -g * v),)  # c_G = -g v, from -g v A.dG
    assert {s.line for s in spans} == {16}  # the |D phi|^2 line
    fixed, _ = fixed_rules(higgs, "xi")
    (a,) = fixed.vectors
    assert a.mass == sympy.Symbol("mA", real=True) and a.ghosts == ("gh_A",)


def test_r_xi_propagators_ghost_and_goldstone_masses(higgs: vs.Model, dirac, rng: np.random.Generator) -> None:
    fixed, rules = fixed_rules(higgs, "xi")
    assert fixed.notes == ()  # the A-G mixing cancelled
    gv, xi = 0.5 * 10.0, 3.0
    p = rng.normal(size=4) * 7
    p2 = dirac.dot(p, p)
    photon = -1j / (p2 - gv**2) * (np.linalg.inv(dirac.ETA) - (1 - xi) * np.outer(p, p) / (p2 - xi * gv**2))
    assert np.allclose(rules.propagator("A").evaluate(p, values={"xi_A": xi}), photon)
    assert rules.propagator("G").evaluate(p, values={"xi_A": xi}) == pytest.approx(1j / (p2 - xi * gv**2))
    assert rules.propagator("gh_A").evaluate(p, values={"xi_A": xi}) == pytest.approx(1j / (p2 - xi * gv**2))
    xi_a = sympy.Symbol("xi_A", positive=True)
    assert sympy.simplify(rules.vertex("bar(gh_A)", "gh_A", "h").factor + sympy.I * xi_a * g**2 * v) == 0
    assert fixed.model.fields["G"].mass == sympy.sqrt(xi_a) * sympy.Symbol("mA", real=True)


def test_feynman_and_unitary_gauges(higgs: vs.Model, dirac, rng: np.random.Generator) -> None:
    _, feynman = fixed_rules(higgs, "feynman")
    assert feynman.vertex("bar(gh_A)", "gh_A", "h").factor == -sympy.I * g**2 * v
    fixed, unitary = fixed_rules(higgs, "unitary")
    assert set(fixed.model.fields) == {"A", "h"}  # the Goldstone set to zero, the ghost dropped
    p = rng.normal(size=4) * 7
    p2, m2 = dirac.dot(p, p), 25.0
    proca = -1j / (p2 - m2) * (np.linalg.inv(dirac.ETA) - np.outer(p, p) / m2)
    assert np.allclose(unitary.propagator("A").evaluate(p), proca)


def test_the_summed_square_of_h_a_to_h_a_does_not_depend_on_the_gauge(higgs: vs.Model) -> None:
    """h A -> h A has s- and u-channel A and G, t-channel h and the h h A A contact; the xi dependence of
    the A propagator cancels against the G exchange (Fujikawa, Lee, Sanda 1972, from memory)."""
    results = []
    for gauge, xi in (("xi", 0.0), ("xi", 1.0), ("xi", 5.0), ("unitary", None)):
        values = {"xi_A": xi} if xi is not None else None
        _, rules = fixed_rules(higgs, gauge)
        amp = amplitude(rules, "h A -> h A")
        masses = amp.masses(values)
        p = phase_space(np.random.default_rng(3), 6, masses[:2], masses[2:], energy=60.0)
        results.append(amp.summed_square(p, values))
        if gauge == "xi" and xi == 5.0:  # the Goldstone diagrams matter: without them xi shows
            physical = [k for k, d in enumerate(amp.diagrams)
                        if not any("G" in rules.vertices[n].labels for n in d.vertices)]
            assert len(physical) < len(amp.diagrams)
            assert not np.allclose(amp.summed_square(p, values, diagrams=physical), results[-1])
    assert np.all(results[0] > 0)
    for other in results[1:]:
        assert np.allclose(other, results[0], rtol=1e-9)
