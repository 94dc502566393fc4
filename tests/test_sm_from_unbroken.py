"""The reference table against rules derived from the shipped Standard Model, vertex by vertex.

Until the breaking section (issue 10) derives the broken phase itself, the broken-phase vertices
are obtained here from the derived UNBROKEN rules of `standard_model.vsm` by the chain rule: each
mass-basis field is a linear combination of components of the multiplets (W+ = (W1 - i W2)/sqrt2,
Z = c W3 - s B, A = s W3 + c B, H = (Gp, (v + h + i G0)/sqrt2), the quark and lepton doublets'
members, the up quarks rotated by the CKM matrix), so

    Gamma_broken(X1..Xn) = sum_k v^k/k! sum_{components} (prod dphi/dX) Gamma_unbroken(phi1..phin, h(0)^k)

where each vacuum insertion is an h leg at zero momentum. The gauge fixing of a broken theory is
quadratic in the fields (F is linear), so every vertex without ghosts follows this way; the
ghost vertices and the propagators wait for issue 10. The reference is `sm_reference.py`
(Romao & Silva, arXiv:1209.6213, from memory); the comparison is numeric at random momenta.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np
import pytest

from sm_reference import Point, Rule, table
from vertexsmith import load_model
from vertexsmith._resources import shipped_model
from vertexsmith.errors import VertexsmithError

RNG = np.random.default_rng(11)
GENERATIONS = {"u": 2, "d": 0, "ell": 1}  # the charm, the down quark and the muon (0-based)


@dataclass(frozen=True)
class Part:
    """One component of a mass-basis leg: an unbroken leg label, vectors on its group axes, a factor."""

    label: str
    vectors: tuple[tuple[str, tuple[complex, ...]], ...]
    factor: complex = 1.0


def _unit(n: int, k: int) -> tuple[complex, ...]:
    return tuple(1.0 if j == k else 0.0 for j in range(n))


def _parts(values: dict[str, np.ndarray]) -> dict[str, list[Part]]:
    """d(multiplet component)/d(mass-basis field) for every leg label of the reference table."""
    s, c = float(values["sw"].real), float(values["cw"].real)
    ckm = values["CKM"]
    colour = ("color", _unit(3, 0))
    up, down, lepton = (_unit(3, GENERATIONS[k]) for k in ("u", "d", "ell"))
    # Q upper = sum_k conj(CKM[k,i]) u_k, so dQ_i/du_k = conj(CKM[k,i]) and d bar(Q)_i/d bar(u_k) = CKM[k,i]
    into_q = tuple(np.conj(ckm[GENERATIONS["u"], :]))
    into_qbar = tuple(ckm[GENERATIONS["u"], :])
    e1, e2 = _unit(2, 0), _unit(2, 1)
    r2 = 1 / math.sqrt(2)
    return {
        "W": [Part("Wa", (("weak", (r2, 1j * r2, 0)),))],
        "dag(W)": [Part("Wa", (("weak", (r2, -1j * r2, 0)),))],
        "A": [Part("Wa", (("weak", (0, 0, s)),)), Part("B", (), c)],
        "Z": [Part("Wa", (("weak", (0, 0, c)),)), Part("B", (), -s)],
        "h": [Part("H", (("weak", e2),), r2), Part("dag(H)", (("weak", e2),), r2)],
        "G0": [Part("H", (("weak", e2),), 1j * r2), Part("dag(H)", (("weak", e2),), -1j * r2)],
        "Gp": [Part("H", (("weak", e1),))],
        "dag(Gp)": [Part("dag(H)", (("weak", e1),))],
        "nu": [Part("L", (("weak", e1), ("gen", lepton)))],
        "bar(nu)": [Part("bar(L)", (("weak", e1), ("gen", lepton)))],
        "ell": [Part("L", (("weak", e2), ("gen", lepton))), Part("eR", (("gen", lepton),))],
        "bar(ell)": [Part("bar(L)", (("weak", e2), ("gen", lepton))), Part("bar(eR)", (("gen", lepton),))],
        "d": [Part("Q", (colour, ("weak", e2), ("gen", down))), Part("dR", (colour, ("gen", down)))],
        "bar(d)": [Part("bar(Q)", (colour, ("weak", e2), ("gen", down))), Part("bar(dR)", (colour, ("gen", down)))],
        "u": [Part("Q", (colour, ("weak", e1), ("gen", into_q))), Part("uR", (colour, ("gen", up)))],
        "bar(u)": [Part("bar(Q)", (colour, ("weak", e1), ("gen", into_qbar))), Part("bar(uR)", (colour, ("gen", up)))],
    }


def _contract(array: np.ndarray, legs, parts: tuple[Part, ...]) -> np.ndarray:
    """Contract each leg's group axes with its part's vectors (Lorentz and spinor axes stay)."""
    position = 0
    for leg, part in zip(legs, parts):
        vectors = dict(part.vectors)
        for axis in leg.axes:
            if axis[0] == "group":
                array = np.tensordot(array, np.asarray(vectors[axis[2]]), axes=([position], [0]))
            else:
                position += 1
    return array


def broken_vertex(rules, parts: dict[str, list[Part]], labels: tuple[str, ...], momenta: list[np.ndarray],
                  v: float) -> np.ndarray | None:
    """The mass-basis vertex from the unbroken rules (None when no unbroken vertex contributes)."""
    total = None
    zero = np.zeros(4)
    for k in range(0, 5 - len(labels)):  # the unbroken vertices have at most four legs
        legs = [parts[label] for label in labels] + [parts["h"]] * k
        for choice in itertools.product(*legs):
            try:
                vertex = rules.vertex(*(part.label for part in choice))
            except VertexsmithError:
                continue  # no such vertex: this combination gives nothing
            array = _contract(vertex.evaluate(list(momenta) + [zero] * k), vertex.legs, choice)
            array = array * np.prod([part.factor for part in choice]) * v ** k / math.factorial(k)
            total = array if total is None else total + array
    return total


def _point(values: dict[str, np.ndarray]) -> Point:
    real = lambda name: float(values[name].real)  # noqa: E731
    masses_up, masses_down = ("mu_q", "mc_q", "mt_q"), ("md_q", "ms_q", "mb_q")
    return Point(g=real("g2"), sw=real("sw"), v=real("v"), mh=real("mh"),
                 mf=(real(masses_up[GENERATIONS["u"]]), real(masses_down[GENERATIONS["d"]])),
                 ckm=complex(values["CKM"][GENERATIONS["u"], GENERATIONS["d"]]))


def _setup(text: str | None = None):
    model = load_model(shipped_model("standard_model")) if text is None else load_model(text=text)
    values = {str(k): np.asarray(x, dtype=complex) for k, x in model.parameter_values().items()}
    return model.derive(), _parts(values), _point(values)


@pytest.fixture(scope="module")
def standard():
    return _setup()


@pytest.fixture(scope="module")
def flipped():
    # `covariant plus` on top of the shipped file, through `builds on` (README, Conventions)
    return _setup('theory flipped "D = d + i g T.W"\nbuilds on "standard_model.vsm"\nconventions\n  covariant plus\n')


COMPARED = [rule for rule in table() if not any("gh_" in leg for leg in rule.legs)]


def _momenta(n: int) -> list[np.ndarray]:
    ps = [RNG.normal(scale=50.0, size=4) for _ in range(n - 1)]
    return ps + [-sum(ps)]


@pytest.mark.parametrize("rule", COMPARED, ids=[" ".join(r.legs) for r in COMPARED])
def test_each_reference_vertex_matches_the_derived_rules(standard, rule: Rule) -> None:
    # Romao & Silva, arXiv:1209.6213 (from memory), through sm_reference.py; random momenta
    rules, parts, point = standard
    momenta = _momenta(len(rule.legs))
    derived = broken_vertex(rules, parts, rule.legs, momenta, point.v)
    expected = rule.value(*momenta, point)
    assert derived is not None, "no unbroken vertex contributes"
    scale = max(np.abs(expected).max(), 1e-300)
    assert np.allclose(derived, expected, rtol=1e-9, atol=1e-9 * scale), rule.legs
    assert np.abs(expected).max() > 0


@pytest.mark.parametrize("rule", COMPARED, ids=[" ".join(r.legs) for r in COMPARED])
def test_covariant_plus_flips_exactly_the_vertices_odd_in_the_couplings(standard, flipped, rule: Rule) -> None:
    # D = d + i g T.W flips g, g' and gs together: a vertex odd in them changes sign (README, Conventions)
    momenta = _momenta(len(rule.legs))
    plain = broken_vertex(standard[0], standard[1], rule.legs, momenta, standard[2].v)
    other = broken_vertex(flipped[0], flipped[1], rule.legs, momenta, flipped[2].v)
    assert np.allclose(other, -plain if rule.odd else plain, rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("labels", [("h", "h"), ("W", "dag(W)"), ("Z", "Z"), ("bar(d)", "d")], ids=str)
def test_the_vacuum_gives_the_masses(standard, labels: tuple[str, ...]) -> None:
    # the two-point function at p = 0 is i x (-mass^2) g for vectors, -i m for fermions, -i mh^2 ... of the
    # broken quadratic Lagrangian: m_W = g v/2, m_Z = m_W/c_W, m_f = y_f v/sqrt2, mh^2 = 2 lam v^2 (common
    # practice, no source). The vacuum's own terms are summed here too (the tadpole condition holds).
    rules, parts, point = standard
    zero = [np.zeros(4), np.zeros(4)]
    two_point = broken_vertex(rules, parts, labels, zero, point.v)
    from conftest import ETA, ONE

    if labels == ("h", "h"):  # + muH^2 |H|^2 is a two-field term, not a vertex: i muH^2 (muH^2 = mh^2/2)
        two_point = two_point + 1j * point.mh ** 2 / 2
    expected = {("h", "h"): -1j * point.mh ** 2, ("W", "dag(W)"): 1j * point.mw ** 2 * ETA,
                ("Z", "Z"): 1j * point.mz ** 2 * ETA, ("bar(d)", "d"): -1j * point.mf[1] * ONE}[labels]
    assert np.allclose(two_point, expected, rtol=1e-9)


def test_charged_current_scattering_does_not_depend_on_the_gauge_parameter(standard) -> None:
    """u(p1) d(p2) -> d(p3) u(p4) by W and Gp exchange, u the top and d the down quark.

    The xi-dependent part of the W propagator, contracted with the quark currents, is proportional
    to the quark masses (q.J = ubar (m_d PL - m_u PR ...) u); the charged Goldstone, whose couplings
    are the masses, cancels it, so the summed |M|^2 is the same for xi_W = 0, 1, 5 and in unitary
    gauge, where no Goldstone is exchanged (common practice, e.g. Cheng & Li ch. 8, from memory).
    The vertices are the derived ones (from the unbroken rules), the propagators the table's.
    """
    from conftest import ETA, bar, u_spinor
    from sm_reference import scalar_propagator, vector_propagator

    rules, parts, point = standard
    mt, md = point.mf
    k, angle = 400.0, 0.7
    et, ed = np.sqrt(mt ** 2 + k ** 2), np.sqrt(md ** 2 + k ** 2)
    p1, p2 = np.array([et, 0, 0, k]), np.array([ed, 0, 0, -k])
    p3 = np.array([ed, k * np.sin(angle), 0, k * np.cos(angle)])
    p4 = p1 + p2 - p3
    q = p1 - p3  # from the first line into the second
    # line 1: u(p1) -> d(p3) emits W+ (legs bar(d), u, dag(W)); line 2: d(p2) -> u(p4) absorbs it
    first = {name: broken_vertex(rules, parts, ("bar(d)", "u", name), [-p3, p1, -q], point.v)
             for name in ("dag(W)", "dag(Gp)")}
    second = {name: broken_vertex(rules, parts, ("bar(u)", "d", name), [-p4, p2, q], point.v)
              for name in ("W", "Gp")}

    def summed(xi: float | None) -> float:
        if xi is None:  # unitary gauge: -i (g - q q/m^2)/(q^2 - m^2), no Goldstone
            w = -1j * (ETA - np.outer(q, q) / point.mw ** 2) / ((q @ ETA @ q) - point.mw ** 2)
            g = 0.0
        else:
            w, g = vector_propagator(q, point.mw, xi), scalar_propagator(q, xi * point.mw ** 2)
        total = 0.0
        for spins in itertools.product((0, 1), repeat=4):
            u1, u2 = u_spinor(p1, mt, spins[0]), u_spinor(p2, md, spins[1])
            b3, b4 = bar(u_spinor(p3, md, spins[2])), bar(u_spinor(p4, mt, spins[3]))
            j1 = np.einsum("a,abm,b->m", b3, first["dag(W)"], u1)
            j2 = np.einsum("a,abm,b->m", b4, second["W"], u2)
            s1 = b3 @ first["dag(Gp)"] @ u1
            s2 = b4 @ second["Gp"] @ u2
            amplitude = j1 @ ETA @ w @ ETA @ j2 + s1 * g * s2
            total += abs(amplitude) ** 2
        return total

    reference = summed(None)
    for xi in (0.0, 1.0, 5.0):
        assert summed(xi) == pytest.approx(reference, rel=1e-9)
    # the W alone does depend on xi: the Goldstone is what makes the sum independent
    w_only = lambda xi: sum(abs(np.einsum("a,abm,b->m", bar(u_spinor(p3, md, s3)), first["dag(W)"], u_spinor(p1, mt, s1))
                                @ ETA @ vector_propagator(q, point.mw, xi) @ ETA
                                @ np.einsum("a,abm,b->m", bar(u_spinor(p4, mt, s4)), second["W"], u_spinor(p2, md, s2))) ** 2
                            for s1, s2, s3, s4 in itertools.product((0, 1), repeat=4))  # noqa: E731
    assert abs(w_only(0.0) - w_only(5.0)) > 1e-3 * reference
