"""Fast evaluation: vertices and propagators compile once to numpy code and take batches.

The compiled code is the exported module's (codegen.py); here it is checked against the
structure-by-structure einsum of `numeric.evaluate_structure` with coefficients evaluated by
sympy, an independent path, on every shipped model.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith._resources import shipped_models
from vertexsmith.numeric import evaluate_structure
from vertexsmith.rules import P2

MODELS = [path.stem for path in shipped_models()]


def _reference_vertex(vertex: vs.Vertex, momenta: np.ndarray) -> np.ndarray:
    """Sum over terms of (sympy-evaluated coefficient) x (einsum of the structure)."""
    model = vertex.model
    values = model.parameter_values({})
    # numbers for sympy; vector and matrix parameters go to the einsum as arrays
    numbers = {s: v for s, v in values.items() if not isinstance(v, np.ndarray)}
    arrays = {str(s): v for s, v in values.items() if isinstance(v, np.ndarray)}
    axes = [axis for leg in vertex.legs for axis in leg.axes]
    ranks = {name: g.rank for name, g in model.groups.items()}
    ranks.update({name: space.size for name, space in model.spaces.items()})
    dims = {(leg.position, g): d for leg in vertex.legs for g, _, d in leg.representations}
    total = None
    for term in vertex.terms:
        c = complex(term.coefficient.subs(numbers).evalf())
        tensor = c * evaluate_structure(term.structure, axes, momenta, model.conventions.eps0123, ranks, dims,
                                        arrays)
        total = tensor if total is None else total + tensor
    assert total is not None
    return total


@pytest.mark.parametrize("name", MODELS)
def test_compiled_vertices_agree_with_the_structure_einsum(name: str) -> None:
    rules = vs.load_model(vs.example(name)).derive()
    rng = np.random.default_rng(7)
    for vertex in rules.vertices:
        if np.prod([4 if k[0] != "group" else 9 for leg in vertex.legs for k in leg.axes]) > 300_000:
            continue  # the four-gluon vertex is checked on its own below
        momenta = rng.normal(size=(len(vertex.legs), 4))
        expected = _reference_vertex(vertex, momenta)
        got = vertex.evaluate(momenta)
        np.testing.assert_allclose(got, expected, rtol=1e-12, atol=1e-12 * max(1.0, np.abs(expected).max()))


@pytest.mark.parametrize("name", MODELS)
def test_compiled_propagators_agree_with_their_coefficients(name: str) -> None:
    rules = vs.load_model(vs.example(name)).derive()
    rng = np.random.default_rng(8)
    metric = np.diag([1.0, -1.0, -1.0, -1.0])
    gammas = [np.diag([1, 1, -1, -1]).astype(complex)]
    pauli = [np.array([[0, 1], [1, 0]]), np.array([[0, -1j], [1j, 0]]), np.array([[1, 0], [0, -1]])]
    gammas += [np.block([[np.zeros((2, 2)), s], [-s, np.zeros((2, 2))]]) for s in pauli]
    gamma5 = 1j * gammas[0] @ gammas[1] @ gammas[2] @ gammas[3]
    for prop in rules.propagators:
        p = rng.normal(size=4)
        xi = {str(s): 2.5 for s in prop.a.free_symbols | prop.b.free_symbols if str(s).startswith("xi_")}
        numbers = {s: v for s, v in rules.model.parameter_values({}).items() if not isinstance(v, np.ndarray)}
        numbers[P2] = p @ metric @ p
        numbers.update({s: 2.5 for s in prop.a.free_symbols | prop.b.free_symbols if str(s).startswith("xi_")})
        a, b = (complex(sympy.sympify(x).subs(numbers).evalf()) for x in (prop.a, prop.b))
        pslash = sum(g * lower for g, lower in zip(gammas, metric @ p))
        if prop.kind == "scalar" or prop.kind == "ghost":
            expected = np.array(a)
        elif prop.chiral is not None:
            left, right = (complex(sympy.sympify(c).subs(numbers).evalf()) for c in prop.chiral)
            expected = (left * (np.eye(4) - gamma5) / 2 + right * (np.eye(4) + gamma5) / 2) @ pslash
        elif prop.kind == "dirac":
            expected = a * pslash + b * np.eye(4)
        else:
            expected = a * metric + b * np.outer(p, p)
        for _, _, dim in prop.representations:
            expected = np.multiply.outer(expected, np.eye(dim))
        np.testing.assert_allclose(prop.evaluate(p, values=xi), expected, rtol=1e-12, atol=1e-14)


def test_a_batch_of_ten_thousand_points_equals_ten_thousand_single_calls() -> None:
    rules = vs.load_model(vs.example("scalar_qed")).derive()
    rng = np.random.default_rng(9)
    vertex = rules.vertex("phi", "dag(phi)", "A")
    momenta = rng.normal(size=(10_000, 3, 4))
    batch = vertex.evaluate(momenta, values={"e": 0.4})
    assert batch.shape == (10_000, 4)
    singles = np.array([vertex.evaluate(point, values={"e": 0.4}) for point in momenta])
    np.testing.assert_array_equal(batch, singles)
    # scalar QED vertex i e Q (p1 - p2)^mu for L = |D phi|^2 with D = d - i e Q A, all momenta incoming
    # (Peskin & Schroeder problem 9.1 in their sign conventions, from memory; re-derived by hand here)
    q = float(rules.charges("phi")["qed"])
    np.testing.assert_allclose(batch[17], 1j * 0.4 * q * (momenta[17, 0] - momenta[17, 1]), rtol=1e-12)
    photon = rules.propagator("A")
    p = rng.normal(size=(10_000, 4))
    np.testing.assert_array_equal(photon.evaluate(p, values={"xi_A": 0.5}),
                                  np.array([photon.evaluate(q, values={"xi_A": 0.5}) for q in p]))


def test_four_gluon_batch_is_a_read_only_view_of_one_tensor() -> None:
    rules = vs.load_model(vs.example("qcd")).derive()
    vertex = rules.vertex("G", "G", "G", "G")
    rng = np.random.default_rng(10)
    momenta = rng.normal(size=(10_000, 4, 4))
    batch = vertex.evaluate(momenta)
    single = vertex.evaluate(momenta[0])
    assert batch.shape == (10_000, 4, 8, 4, 8, 4, 8, 4, 8) and not batch.flags.writeable
    assert single.flags.writeable
    np.testing.assert_array_equal(batch[1234], single)
    # -i gs^2 [f^{abe} f^{cde} (g^{mu rho} g^{nu sigma} - g^{mu sigma} g^{nu rho}) + ...]
    # (Peskin & Schroeder fig. 16.7, from memory): one component, a = c = 1, b = d = 2, mu = rho = 0, nu = sigma = 1
    gs = complex(rules.model.parameters["gs"].value).real
    f = rules.structure_constants("color")
    g = np.diag([1.0, -1.0, -1.0, -1.0])
    a, b, c, d, mu, nu, rho, sig = 0, 1, 0, 1, 0, 1, 0, 1
    expected = -1j * gs**2 * (
        np.einsum("e,e->", f[a, b], f[c, d]) * (g[mu, rho] * g[nu, sig] - g[mu, sig] * g[nu, rho])
        + np.einsum("e,e->", f[a, c], f[b, d]) * (g[mu, nu] * g[rho, sig] - g[mu, sig] * g[nu, rho])
        + np.einsum("e,e->", f[a, d], f[b, c]) * (g[mu, nu] * g[rho, sig] - g[mu, rho] * g[nu, sig]))
    assert single[mu, a, nu, b, rho, c, sig, d] == pytest.approx(expected, rel=1e-12)


def test_generators_structure_constants_charges_and_conventions() -> None:
    rules = vs.load_model(vs.example("qcd")).derive()
    t, f = rules.generators("color"), rules.structure_constants("color")
    # [T^a, T^b] = i f^{abc} T^c and Tr(T^a T^b) = delta^{ab}/2 (Peskin & Schroeder eqs. 15.68, 15.78, from memory)
    np.testing.assert_allclose(np.einsum("aij,bjk->abik", t, t) - np.einsum("bij,ajk->abik", t, t),
                               1j * np.einsum("abc,cik->abik", f, t), atol=1e-13)
    np.testing.assert_allclose(np.einsum("aij,bji->ab", t, t), np.eye(8) / 2, atol=1e-13)
    for rep in ("antifundamental", "adjoint"):
        r = rules.generators("color", rep)
        np.testing.assert_allclose(np.einsum("aij,bjk->abik", r, r) - np.einsum("bij,ajk->abik", r, r),
                                   1j * np.einsum("abc,cik->abik", f, r), atol=1e-13)
    assert rules.representations("bar(u)") == {"color": "fundamental"}
    assert rules.covariant_sign == 1 and rules.eps0123 == -1
    qed = vs.load_model(vs.example("qed")).derive()
    assert qed.charges("ele") == {"qed": Fraction(-1)}
    with pytest.raises(vs.UsageError, match="U\\(1\\)"):
        qed.generators("qed")
    with pytest.raises(vs.UsageError, match="no gauge group"):
        rules.generators("colour")
