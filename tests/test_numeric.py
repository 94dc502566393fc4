"""The numeric contract: Dirac matrices, index placement and the array layout of evaluate().

DESIGN.md: for each leg in order, its axes in this order: Lorentz (vector legs, upper index),
spinor (fermion legs, Dirac representation, gamma5 = i g0 g1 g2 g3). Propagators: scalar (),
Dirac (4, 4), vector (4, 4) with upper indices. The reference matrices are sympy's
`sympy.physics.matrices.mgamma` (via conftest.py), an outside check of the engine's numbers.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from sympy.physics.matrices import mgamma

import vertexsmith as vs
from vertexsmith import numeric
from vertexsmith._resources import shipped_models


# ---------------------------------------------------------------- the reference algebra itself

def test_reference_gammas_obey_the_clifford_algebra(dirac):
    # {gamma^mu, gamma^nu} = 2 g^{mu nu} (Peskin & Schroeder eq. 3.22, from memory).
    for m, n in itertools.product(range(4), repeat=2):
        anticommutator = dirac.GAMMA[m] @ dirac.GAMMA[n] + dirac.GAMMA[n] @ dirac.GAMMA[m]
        np.testing.assert_allclose(anticommutator, 2 * dirac.ETA[m, n] * dirac.ONE, atol=1e-12)
    np.testing.assert_allclose(dirac.GAMMA5 @ dirac.GAMMA5, dirac.ONE, atol=1e-12)
    for m in range(4):
        np.testing.assert_allclose(dirac.GAMMA5 @ dirac.GAMMA[m], -dirac.GAMMA[m] @ dirac.GAMMA5, atol=1e-12)


def test_reference_spinors_solve_the_dirac_equation_and_sum_to_pslash_plus_m(dirac, rng):
    # (pslash - m) u = 0, (pslash + m) v = 0, sum_s u ubar = pslash + m, sum_s v vbar = pslash - m
    # (Peskin & Schroeder eqs. 3.66-3.67, from memory), for massive and massless momenta.
    for m in (0.0, 0.7, 2.0):
        p = dirac.on_shell(rng, m)
        u_sum = sum(np.outer(dirac.u(p, m, s), dirac.bar(dirac.u(p, m, s))) for s in range(2))
        v_sum = sum(np.outer(dirac.v(p, m, s), dirac.bar(dirac.v(p, m, s))) for s in range(2))
        np.testing.assert_allclose(u_sum, dirac.slash(p) + m * dirac.ONE, atol=1e-10)
        np.testing.assert_allclose(v_sum, dirac.slash(p) - m * dirac.ONE, atol=1e-10)
        for s in range(2):
            np.testing.assert_allclose((dirac.slash(p) - m * dirac.ONE) @ dirac.u(p, m, s), 0, atol=1e-10)
            np.testing.assert_allclose((dirac.slash(p) + m * dirac.ONE) @ dirac.v(p, m, s), 0, atol=1e-10)


def test_engine_matrices_equal_sympy_mgamma():
    # The engine's own matrices against sympy's explicit Dirac matrices, mu = 0..3 (upper index).
    # sympy's mgamma(5) may follow another convention, so gamma5 is built by hand: i g0 g1 g2 g3.
    for mu in range(4):
        np.testing.assert_allclose(numeric.GAMMA[mu], np.array(mgamma(mu).tolist(), dtype=complex), atol=1e-12)
    g = [np.array(mgamma(mu).tolist(), dtype=complex) for mu in range(4)]
    np.testing.assert_allclose(numeric.GAMMA5, 1j * g[0] @ g[1] @ g[2] @ g[3], atol=1e-12)


# ---------------------------------------------------------------- vertex layout

def test_qed_vertex_layout_is_bar_spinor_spinor_upper_lorentz(shipped, dirac):
    # Axes (spinor of bar(ele), spinor of ele, Lorentz of A), upper index: component mu = 1 is
    # -i e gamma^1 itself, not gamma_1 = -gamma^1; and [a, b] is row a, column b of the matrix
    # (gamma^1 is antisymmetric in the Dirac representation, so a transposed layout would show).
    vertex = shipped("qed").derive().vertex("bar(ele)", "ele", "A")
    value = vertex.evaluate(np.zeros((3, 4)), values={"e": 1.0})
    assert value.shape == (4, 4, 4)
    assert value.dtype == np.complex128
    for mu in range(4):
        np.testing.assert_allclose(value[:, :, mu], -1j * dirac.GAMMA[mu], atol=1e-12)
    assert not np.allclose(value[:, :, 1], value[:, :, 1].T)


def test_layout_of_a_four_leg_vertex_with_fermions_and_vectors(build, dirac):
    # g bar(psi) sigma^{mu nu} psi V_mu W_nu: legs (bar(psi), psi, V, W), axes (s1, s2, mu3, mu4);
    # vertex i g sigma^{mu3 mu4} with sigma = (i/2)[gamma, gamma] (the convention DESIGN.md states).
    rules = build("""
        theory t
        parameters
          mass m = 1.0
          coupling g = 0.5
        fields
          dirac psi mass m
          vector V mass m
          vector W mass m
        lagrangian
          bar(psi) (I gamma[mu] d[mu] - m) psi
          -1/2 d[mu] V[nu] d[mu] V[nu] + 1/2 d[mu] V[nu] d[nu] V[mu] + 1/2 m^2 V[mu] V[mu]
          -1/2 d[mu] W[nu] d[mu] W[nu] + 1/2 d[mu] W[nu] d[nu] W[mu] + 1/2 m^2 W[mu] W[mu]
          g bar(psi) sigma[mu,nu] psi V[mu] W[nu]
        """).derive()
    vertex = rules.vertex("bar(psi)", "psi", "V", "W")
    value = vertex.evaluate(np.zeros((4, 4)))
    assert value.shape == (4, 4, 4, 4)
    np.testing.assert_allclose(value, 0.5j * np.transpose(dirac.SIGMA, (2, 3, 0, 1)), atol=1e-12)
    # asked as (W, V, bar(psi), psi): axes (mu1 of W, mu2 of V, s3, s4), sigma antisymmetric
    swapped = rules.vertex("W", "V", "bar(psi)", "psi").evaluate(np.zeros((4, 4)))
    np.testing.assert_allclose(swapped, 0.5j * dirac.SIGMA.transpose(1, 0, 2, 3), atol=1e-12)


def test_swapping_the_two_fermion_legs_transposes_and_flips_the_sign(shipped):
    # Asking (ele, bar(ele), A) moves the spinor axes and, the legs being Grassmann, flips the sign
    # (DESIGN.md: Grassmann sign from the leg order).
    rules = shipped("qed").derive()
    canonical = rules.vertex("bar(ele)", "ele", "A").evaluate(np.zeros((3, 4)))
    swapped = rules.vertex("ele", "bar(ele)", "A").evaluate(np.zeros((3, 4)))
    np.testing.assert_allclose(swapped, -canonical.transpose(1, 0, 2), atol=1e-12)


def test_default_levi_civita_sign_is_minus_one(build):
    # DESIGN.md leaves the sign of eps^{0123} to a model switch; the default is -1 (stated in
    # rules.conventions). g eps V1 V2 V3 V4 with four distinct vectors gives i g eps^{mu1 mu2 mu3 mu4}.
    proca = "\n".join(f"  -1/2 d[mu] V{k}[nu] d[mu] V{k}[nu] + 1/2 d[mu] V{k}[nu] d[nu] V{k}[mu] "
                      f"+ 1/2 m^2 V{k}[mu] V{k}[mu]" for k in range(1, 5))
    fields = "\n".join(f"  vector V{k} mass m" for k in range(1, 5))
    text = ("theory t\nparameters\n  mass m = 1.0\n  coupling g = 0.5\n" f"fields\n{fields}\nlagrangian\n{proca}\n"
            "  g eps[mu,nu,rho,ta] V1[mu] V2[nu] V3[rho] V4[ta]\n")
    for switch, sign in (("", -1), ("conventions\n  eps0123 +1\n", +1), ("conventions\n  eps0123 -1\n", -1)):
        rules = build(text + switch).derive()
        value = rules.vertex("V1", "V2", "V3", "V4").evaluate(np.zeros((4, 4)))
        assert value[0, 1, 2, 3] == pytest.approx(0.5j * sign)
        assert value[1, 0, 2, 3] == pytest.approx(-0.5j * sign)
        assert value[0, 0, 2, 3] == 0
        assert f"epsilon^{{0123}} = {sign:+d}" in rules.conventions


_SHIPPED_NAMES = [path.stem for path in shipped_models()]


@pytest.mark.parametrize("name", _SHIPPED_NAMES)
def test_every_shipped_vertex_evaluates(shipped, rng, name):
    # Every vertex of every shipped model gives a finite complex array of the documented shape:
    # 4 per Lorentz or spinor axis, the group dimension per group index (DESIGN.md layout).
    model = shipped(name)
    rules = model.derive("feynman")
    for vertex in rules.vertices:
        value = vertex.evaluate(rng.normal(size=(len(vertex.legs), 4)))
        expected_shape = []
        for leg in vertex.legs:
            expected_shape += [4] * (leg.kind in ("vector", "dirac", "majorana"))
            expected_shape += [dim for _, _, dim in leg.representations]
        assert value.shape == tuple(expected_shape), vertex.labels
        assert np.all(np.isfinite(value))
        assert np.abs(value).max() > 0, vertex.labels


# ---------------------------------------------------------------- propagator layout

def test_vector_propagator_has_upper_indices(shipped):
    # D^{mu nu} = a g^{mu nu} + b p^mu p^nu with p^mu = (E, px, py, pz) as given: the (0, 1)
    # entry is b E px, not b p_0 p_1 = -b E px. In R_xi gauge with xi_A = 3 (Peskin & Schroeder
    # ch. 21, from memory): b = i (1 - xi)/p^4.
    prop = shipped("qed").derive().propagator("A")
    p = np.array([2.0, 0.5, -0.3, 0.9])
    p2 = p[0] ** 2 - p[1:] @ p[1:]
    value = prop.evaluate(p, values={"xi_A": 3.0})
    assert value.shape == (4, 4)
    b = 1j * (1 - 3.0) / p2**2
    assert value[0, 1] == pytest.approx(b * p[0] * p[1])
    assert value[1, 1] == pytest.approx(-1j / p2 * (-1) + b * p[1] * p[1])
    np.testing.assert_allclose(value, value.T, atol=1e-14)


def test_dirac_propagator_layout_is_row_alpha_column_beta(shipped, dirac):
    # i (pslash + m)/(p^2 - m^2) as a matrix [alpha, beta]; with p_x != 0 pslash is not symmetric,
    # so a transposed layout would be caught.
    prop = shipped("yukawa").derive().propagator("psi")
    p = np.array([3.0, 0.2, 1.1, -0.4])
    value = prop.evaluate(p)
    expected = 1j * (dirac.slash(p) + dirac.ONE) / (dirac.dot(p, p) - 1.0)
    assert not np.allclose(expected, expected.T)
    np.testing.assert_allclose(value, expected, atol=1e-12)


def test_scalar_propagator_is_a_zero_dimensional_array(shipped):
    value = shipped("phi4").derive().propagator("phi").evaluate([200.0, 0.0, 0.0, 0.0])
    assert isinstance(value, np.ndarray)
    assert value.shape == ()
    assert complex(value) == pytest.approx(1j / (200.0**2 - 125.0**2))


# ---------------------------------------------------------------- values and inputs

def test_evaluate_uses_model_numbers_and_overrides(shipped):
    rules = shipped("qed").derive()
    vertex = rules.vertex("bar(ele)", "ele", "A")
    e = np.sqrt(4 * np.pi / 137.035999)  # e = sqrt(4 pi alpha), PDG alpha in qed.vsm
    assert vertex.evaluate(np.zeros((3, 4)))[0, 0, 0] == pytest.approx(-1j * e)
    # overriding alpha moves e, which is defined through it
    assert vertex.evaluate(np.zeros((3, 4)), values={"alpha": 1 / (4 * np.pi)})[0, 0, 0] == pytest.approx(-1j)
    # overriding e directly wins over its definition
    assert vertex.evaluate(np.zeros((3, 4)), values={"e": 2.0})[0, 0, 0] == pytest.approx(-2j)


def test_momenta_may_be_nested_lists(shipped):
    vertex = shipped("scalar_qed").derive().vertex("phi", "dag(phi)", "A")
    value = vertex.evaluate([[1, 0, 0, 0], [0, 1, 0, 0], [-1, -1, 0, 0]], values={"e": 1.0})
    np.testing.assert_allclose(value, 1j * np.array([1, -1, 0, 0]), atol=1e-12)


def test_wrong_number_of_momenta_is_a_usage_error(shipped):
    vertex = shipped("qed").derive().vertex("bar(ele)", "ele", "A")
    with pytest.raises(vs.UsageError, match="3 four-momenta"):
        vertex.evaluate(np.zeros((2, 4)))
    with pytest.raises(vs.UsageError):
        vertex.evaluate(np.zeros((3, 3)))
    with pytest.raises(vs.UsageError, match="3 four-momenta"):
        vertex.evaluate(np.zeros((5, 2, 4)))  # a batch of five points with a leg missing
    with pytest.raises(vs.UsageError, match="one four-momentum"):
        shipped("qed").derive().propagator("A").evaluate(np.zeros((2, 3)))
    with pytest.raises(vs.UsageError, match="one four-momentum"):
        shipped("qed").derive().propagator("A").evaluate(2.0)


def test_missing_value_is_a_usage_error_naming_the_parameter(build):
    rules = build("""
        theory t
        parameters
          coupling g
        fields
          scalar phi real
        lagrangian
          1/2 d[mu] phi d[mu] phi
          - g/6 phi^3
        """).derive()
    vertex = rules.vertex("phi", "phi", "phi")
    with pytest.raises(vs.UsageError, match="g"):
        vertex.evaluate(np.zeros((3, 4)))
    assert vertex.evaluate(np.zeros((3, 4)), values={"g": 2.0}) == pytest.approx(-2j)


def test_unknown_name_in_values_is_a_usage_error(shipped):
    vertex = shipped("qed").derive().vertex("bar(ele)", "ele", "A")
    with pytest.raises(vs.UsageError, match="ee"):
        vertex.evaluate(np.zeros((3, 4)), values={"ee": 1.0})


def test_the_xi_gauge_propagator_needs_a_value_for_xi(shipped):
    prop = shipped("qed").derive().propagator("A")
    with pytest.raises(vs.UsageError, match="xi_A") as info:
        prop.evaluate([2.0, 0.1, 0.2, 0.3])
    assert "xi_A" in info.value.hint
