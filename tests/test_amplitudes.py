"""Tree amplitudes built from the exported QED module reproduce textbook cross-section formulas.

`vertexsmith export qed --to python` writes a standalone numpy module; these tests import it from
a temporary folder and build amplitudes with explicit Dirac-representation spinors and explicit
transverse photon polarisations written below (no helper from vertexsmith), so they check the
signs, factors of i and the array layout of the exported rules against published results:

- e+ e- -> mu+ mu-: Peskin & Schroeder, eq. (5.10) and the massive generalisation of the trace
  in sec. 5.1 (from memory);
- Compton scattering: the Klein-Nishina matrix element, Peskin & Schroeder sec. 5.5, eq. (5.87)
  (from memory);
- the Ward identity: replacing a photon's polarisation by its momentum makes the Compton
  amplitude vanish (Peskin & Schroeder sec. 5.5, eq. (5.79), from memory).
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path
from types import ModuleType

import numpy as np
import pytest

from vertexsmith.export import export_model

# ---------------------------------------------------------------- Dirac algebra written here

_PAULI = [np.array([[0, 1], [1, 0]], dtype=complex), np.array([[0, -1j], [1j, 0]], dtype=complex),
          np.array([[1, 0], [0, -1]], dtype=complex)]
_I2, _Z2 = np.eye(2, dtype=complex), np.zeros((2, 2), dtype=complex)
GAMMA0 = np.block([[_I2, _Z2], [_Z2, -_I2]])  # Dirac representation (common practice, no source)
ETA = np.diag([1.0, -1.0, -1.0, -1.0])


def mdot(p: np.ndarray, q: np.ndarray) -> complex:
    return complex(p @ ETA @ q)


def u_spinor(p: np.ndarray, m: float, s: int) -> np.ndarray:
    """u(p, s) in the Dirac representation: (sqrt(E+m) xi, sigma.p xi / sqrt(E+m)), ubar u = 2m."""
    xi = np.eye(2, dtype=complex)[s]
    n = np.sqrt(p[0].real + m)
    return np.concatenate([n * xi, sum(p[k + 1] * _PAULI[k] for k in range(3)) @ xi / n])


def v_spinor(p: np.ndarray, m: float, s: int) -> np.ndarray:
    """v(p, s) in the Dirac representation: (sigma.p eta / sqrt(E+m), sqrt(E+m) eta), vbar v = -2m."""
    eta = np.eye(2, dtype=complex)[s]
    n = np.sqrt(p[0].real + m)
    return np.concatenate([sum(p[k + 1] * _PAULI[k] for k in range(3)) @ eta / n, n * eta])


def bar(spinor: np.ndarray) -> np.ndarray:
    return spinor.conj() @ GAMMA0


def polarisations(k: np.ndarray) -> list[np.ndarray]:
    """Two real transverse polarisation vectors (0, e) with e orthogonal to the photon's direction."""
    direction = k[1:].real / np.linalg.norm(k[1:].real)
    helper = np.array([1.0, 0.0, 0.0]) if abs(direction[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    e1 = np.cross(direction, helper)
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(direction, e1)
    return [np.concatenate([[0.0], e1]).astype(complex), np.concatenate([[0.0], e2]).astype(complex)]


def on_shell(mass: float, momentum: np.ndarray) -> np.ndarray:
    return np.array([np.sqrt(mass**2 + momentum @ momentum), *momentum], dtype=complex)


def random_direction(rng: np.random.Generator) -> np.ndarray:
    v = rng.normal(size=3)
    return v / np.linalg.norm(v)


def two_body(rng: np.random.Generator, sqrt_s: float, m_a: float, m_b: float) -> tuple[np.ndarray, np.ndarray]:
    """Two momenta with masses m_a, m_b back to back in their centre-of-mass frame, random direction."""
    s = sqrt_s**2
    size = np.sqrt((s - (m_a + m_b) ** 2) * (s - (m_a - m_b) ** 2)) / (2 * sqrt_s)
    n = random_direction(rng)
    return on_shell(m_a, size * n), on_shell(m_b, -size * n)


# ---------------------------------------------------------------- the exported module

@pytest.fixture(scope="module")
def qed(tmp_path_factory: pytest.TempPathFactory) -> ModuleType:
    """The QED rules exported as a Python module (R_xi gauge) and imported from a temporary path."""
    folder = tmp_path_factory.mktemp("exported")
    path = folder / "qed_rules.py"
    export_model("qed", "python", output=path, gauge="xi")
    spec = importlib.util.spec_from_file_location("qed_rules_for_amplitudes", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


def lower_index(vector: np.ndarray) -> np.ndarray:
    return ETA @ vector


# ---------------------------------------------------------------- e+ e- -> mu+ mu-

def ee_to_mumu_summed(qed: ModuleType, p1: np.ndarray, p2: np.ndarray, k1: np.ndarray, k2: np.ndarray,
                      params: dict[str, float]) -> float:
    """sum over the 16 spin states of |M|^2 for e-(p1) e+(p2) -> mu-(k1) mu+(k2): one s-channel photon."""
    me, mmu = params["me"], params["mmu"]
    q = p1 + p2
    # incoming momenta at each vertex: bar(ele) is the incoming positron, ele the incoming electron
    electron_vertex = qed.find_vertex("bar(ele)", "ele", "A")(p2, p1, -q, params=params)  # (s1, s2, mu3)
    muon_vertex = qed.find_vertex("bar(muon)", "muon", "A")(-k1, -k2, q, params=params)
    photon = qed.propagator_A(q, params=params)  # D^{mu nu}, upper indices
    photon_lower = ETA @ photon @ ETA  # D_{mu nu}
    total = 0.0
    for s1 in range(2):
        for s2 in range(2):
            current_e = np.einsum("a,abm,b->m", bar(v_spinor(p2, me, s2)), electron_vertex, u_spinor(p1, me, s1))
            for r1 in range(2):
                for r2 in range(2):
                    current_mu = np.einsum("a,abm,b->m", bar(u_spinor(k1, mmu, r1)), muon_vertex,
                                           v_spinor(k2, mmu, r2))
                    amplitude = current_e @ photon_lower @ current_mu  # this is i M
                    total += abs(amplitude) ** 2
    return total


@pytest.mark.parametrize("xi", [1.0, 0.37, 4.2])
def test_ee_to_mumu_matches_the_textbook_trace(qed: ModuleType, rng: np.random.Generator, xi: float) -> None:
    # Peskin & Schroeder eq. (5.10), with both masses kept (from memory):
    # 1/4 sum |M|^2 = 8 e^4 / s^2 [ (p1.k1)(p2.k2) + (p1.k2)(p2.k1) + mmu^2 (p1.p2) + me^2 (k1.k2) + 2 me^2 mmu^2 ]
    # The xi-dependent part of the photon propagator drops out (current conservation).
    for _ in range(4):
        me, mmu, e = rng.uniform(0.2, 0.8), rng.uniform(0.9, 1.6), rng.uniform(0.2, 0.5)
        sqrt_s = 2 * mmu + rng.uniform(0.5, 3.0)
        params = {"e": e, "me": me, "mmu": mmu, "xi_A": xi}
        p1, p2 = two_body(rng, sqrt_s, me, me)
        k1, k2 = two_body(rng, sqrt_s, mmu, mmu)
        s = mdot(p1 + p2, p1 + p2).real
        expected = 8 * e**4 / s**2 * (mdot(p1, k1) * mdot(p2, k2) + mdot(p1, k2) * mdot(p2, k1)
                                      + mmu**2 * mdot(p1, p2) + me**2 * mdot(k1, k2) + 2 * me**2 * mmu**2).real
        got = ee_to_mumu_summed(qed, p1, p2, k1, k2, params) / 4
        assert got == pytest.approx(expected, rel=1e-10)


def test_ee_to_mumu_massless_limit(qed: ModuleType, rng: np.random.Generator) -> None:
    # massless limit, Peskin & Schroeder eq. (5.10)-(5.12) (from memory): 1/4 sum |M|^2 = 2 e^4 (t^2 + u^2) / s^2
    e = 0.3
    params = {"e": e, "me": 0.0, "mmu": 0.0, "xi_A": 1.0}  # R_xi gauge: xi has no default
    p1, p2 = two_body(rng, 10.0, 0.0, 0.0)
    k1, k2 = two_body(rng, 10.0, 0.0, 0.0)
    s, t, u = (mdot(p1 + p2, p1 + p2).real, mdot(p1 - k1, p1 - k1).real, mdot(p1 - k2, p1 - k2).real)
    got = ee_to_mumu_summed(qed, p1, p2, k1, k2, params) / 4
    assert got == pytest.approx(2 * e**4 * (t**2 + u**2) / s**2, rel=1e-10)


# ---------------------------------------------------------------- Compton scattering

def compton_amplitude(qed: ModuleType, p: np.ndarray, k: np.ndarray, p_out: np.ndarray, k_out: np.ndarray,
                      u_in: np.ndarray, u_out: np.ndarray, eps_in: np.ndarray, eps_out: np.ndarray,
                      params: dict[str, float]) -> complex:
    """i M for e-(p) gamma(k, eps_in) -> e-(p_out) gamma(k_out, eps_out): s- and u-channel electrons.

    eps_in is contracted as given (an incoming photon), eps_out conjugated (an outgoing one).
    """
    vertex = qed.find_vertex("bar(ele)", "ele", "A")  # momenta do not enter this vertex
    zero = np.zeros(4)
    gamma_in = np.einsum("abm,m->ab", vertex(zero, zero, zero, params=params), lower_index(eps_in))
    gamma_out = np.einsum("abm,m->ab", vertex(zero, zero, zero, params=params), lower_index(eps_out.conj()))
    s_channel = qed.propagator_ele(p + k, params=params)
    u_channel = qed.propagator_ele(p - k_out, params=params)
    ubar = bar(u_out)
    return complex(ubar @ (gamma_out @ s_channel @ gamma_in + gamma_in @ u_channel @ gamma_out) @ u_in)


def compton_kinematics(rng: np.random.Generator, m: float) -> tuple[np.ndarray, ...]:
    sqrt_s = m + rng.uniform(0.3, 3.0)
    p, k = two_body(rng, sqrt_s, m, 0.0)
    p_out, k_out = two_body(rng, sqrt_s, m, 0.0)
    return p, k, p_out, k_out


def test_compton_reproduces_klein_nishina(qed: ModuleType, rng: np.random.Generator) -> None:
    # Peskin & Schroeder eq. (5.87) (from memory):
    # 1/4 sum |M|^2 = 2 e^4 [ p.k'/p.k + p.k/p.k' + 2 m^2 (1/p.k - 1/p.k') + m^4 (1/p.k - 1/p.k')^2 ]
    for _ in range(4):
        m, e = rng.uniform(0.3, 1.5), rng.uniform(0.2, 0.5)
        params = {"e": e, "me": m}
        p, k, p_out, k_out = compton_kinematics(rng, m)
        total = 0.0
        for s in range(2):
            for s_out in range(2):
                for eps_in in polarisations(k):
                    for eps_out in polarisations(k_out):
                        amplitude = compton_amplitude(qed, p, k, p_out, k_out, u_spinor(p, m, s),
                                                      u_spinor(p_out, m, s_out), eps_in, eps_out, params)
                        total += abs(amplitude) ** 2
        pk, pk_out = mdot(p, k).real, mdot(p, k_out).real
        expected = 2 * e**4 * (pk_out / pk + pk / pk_out + 2 * m**2 * (1 / pk - 1 / pk_out)
                               + m**4 * (1 / pk - 1 / pk_out) ** 2)
        assert total / 4 == pytest.approx(expected, rel=1e-10)


def test_compton_ward_identity(qed: ModuleType, rng: np.random.Generator) -> None:
    # Ward identity (Peskin & Schroeder eq. 5.79, from memory): k_mu M^mu = 0 with the other photon physical
    m, e = 0.8, 0.3
    params = {"e": e, "me": m}
    p, k, p_out, k_out = compton_kinematics(rng, m)
    for s in range(2):
        for s_out in range(2):
            spinors = (u_spinor(p, m, s), u_spinor(p_out, m, s_out))
            for eps_out in polarisations(k_out):
                scale = max(abs(compton_amplitude(qed, p, k, p_out, k_out, *spinors, eps, eps_out, params))
                            for eps in polarisations(k))
                longitudinal = compton_amplitude(qed, p, k, p_out, k_out, *spinors, k, eps_out, params)
                assert abs(longitudinal) <= 1e-10 * scale
            for eps_in in polarisations(k):
                longitudinal = compton_amplitude(qed, p, k, p_out, k_out, *spinors, eps_in, k_out.conj(), params)
                scale = max(abs(compton_amplitude(qed, p, k, p_out, k_out, *spinors, eps_in, eps, params))
                            for eps in polarisations(k_out))
                assert abs(longitudinal) <= 1e-10 * scale


def test_compton_ward_identity_fails_for_a_broken_vertex(qed: ModuleType, rng: np.random.Generator) -> None:
    # the check above can fail: give the u-channel a different coupling and the identity breaks
    m = 0.8
    p, k, p_out, k_out = compton_kinematics(rng, m)
    spinors = (u_spinor(p, m, 0), u_spinor(p_out, m, 1))
    eps_out = polarisations(k_out)[0]
    good = compton_amplitude(qed, p, k, p_out, k_out, *spinors, k, eps_out, {"e": 0.3, "me": m})
    vertex = qed.find_vertex("bar(ele)", "ele", "A")(np.zeros(4), np.zeros(4), np.zeros(4), params={"e": 0.3})
    gamma_in = np.einsum("abm,m->ab", vertex, lower_index(k))
    gamma_out = np.einsum("abm,m->ab", vertex, lower_index(eps_out))
    broken = complex(bar(spinors[1]) @ (gamma_out @ qed.propagator_ele(p + k, params={"me": m}) @ gamma_in
                                        + 1.1 * gamma_in @ qed.propagator_ele(p - k_out, params={"me": m})
                                        @ gamma_out) @ spinors[0])
    assert abs(good) < 1e-10 and abs(broken) > 1e-6


# ---------------------------------------------------------------- the example script

@pytest.fixture(scope="module")
def example() -> ModuleType:
    path = Path(__file__).resolve().parents[1] / "examples" / "dark_sector_amplitude.py"
    spec = importlib.util.spec_from_file_location("dark_sector_amplitude_example", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


def test_example_s_channel_matches_the_trace(example: ModuleType) -> None:
    # with the Yukawa coupling off only X exchange is left; summing spins by the trace
    # Tr[(p2slash - m) gamma^mu (p1slash + m) gamma^nu] = 4 [p2^mu p1^nu + p1^mu p2^nu - g^{mu nu}(p1.p2 + m^2)]
    # (Peskin & Schroeder sec. 5.1 trace theorems, from memory) with the vertices -i gx gamma^mu and
    # 2 i gx (k1 - k2)^nu of the dark-sector model gives the number below
    rules = example.load_rules()
    mchi, ms, mx, gx = 12.0, 40.0, 5.0, 0.35
    p1, p2, k1, k2 = example.centre_of_mass(150.0, mchi, ms, -0.6, 0.7)
    kk = k1 - k2
    s = mdot(p1 + p2, p1 + p2).real
    expected = (gx**2 * (2 * gx) ** 2 / (s - mx**2) ** 2 * 4
                * (2 * mdot(p1, kk) * mdot(p2, kk) - mdot(kk, kk) * (mdot(p1, p2) + mchi**2))).real
    got = example.chi_chibar_to_s_sbar(rules, p1, p2, k1, k2, params={"y": 0.0, "xi_X": 1.0})
    assert got == pytest.approx(expected, rel=1e-10)
    # with the Yukawa coupling on, the result still does not depend on xi_X
    one = example.chi_chibar_to_s_sbar(rules, p1, p2, k1, k2, params={"xi_X": 1.0})
    five = example.chi_chibar_to_s_sbar(rules, p1, p2, k1, k2, params={"xi_X": 5.0})
    assert five == pytest.approx(one, rel=1e-10) and one != pytest.approx(got, rel=1e-3)


def test_example_pair_production_obeys_the_ward_identity(example: ModuleType) -> None:
    rules = example.load_rules()
    point = example.centre_of_mass(60.0, 12.0, 5.0, -0.6, 0.7)
    summed = example.chi_chibar_to_x_x(rules, *point, params={})
    longitudinal = example.chi_chibar_to_x_x(rules, *point, params={}, replace_first_by_momentum=True)
    assert summed > 0 and longitudinal <= 1e-20 * summed
