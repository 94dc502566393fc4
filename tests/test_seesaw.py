"""The seesaw model in mass eigenstates (models/seesaw_mass_basis.vsm) against its Takagi factorisation.

Sources: Dreiner, Haber & Martin, Phys. Rept. 494 (2010) 1, arXiv:0812.1594 (Takagi factorisation
M = U diag(m) U^T of a complex symmetric Majorana mass matrix, m >= 0; two-component fields
xi = U^* chi; chi_i chi_j = bar(n_i) PL n_j for Majorana n = chi + cc(chi); from memory); the
seesaw m_light ~ mD^2/MN is common practice, no source. The flavour inputs mD, MN, yD are the
invented numbers the model file's header states.
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith as vs
from vertexsmith.diagonalise import takagi

MD, MN, YD = 10.0, 1000.0, 0.1


@pytest.fixture(scope="module")
def factorised() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    mass_matrix = np.array([[0.0, MD], [MD, MN]])
    masses, u = takagi(mass_matrix)
    assert np.allclose(u @ np.diag(masses) @ u.T, mass_matrix)
    yukawa = np.array([[0.0, YD], [YD, 0.0]])
    return masses, u, u.conj().T @ yukawa @ u.conj()


@pytest.fixture(scope="module")
def seesaw() -> vs.Model:
    return vs.load_model(vs.example("seesaw_mass_basis"))


def test_the_model_holds_the_takagi_masses_and_couplings(seesaw: vs.Model, factorised) -> None:
    masses, _, couplings = factorised
    values = {name: complex(p.value) for name, p in seesaw.parameters.items()}
    assert (values["m1"].real, values["m2"].real) == pytest.approx(tuple(masses), rel=1e-14)
    assert values["y11"] == pytest.approx(couplings[0, 0], rel=1e-12)
    assert values["y12"] == pytest.approx(couplings[0, 1], rel=1e-12)
    assert values["y22"] == pytest.approx(couplings[1, 1], rel=1e-12)
    assert masses[0] == pytest.approx(MD**2 / MN, rel=2e-4)  # the seesaw: light mass mD^2/MN


def test_the_light_state_carries_the_phase(factorised) -> None:
    # the real matrix [[0, mD], [mD, MN]] has a negative eigenvalue; Takagi keeps m1 > 0 and puts a
    # phase i into U's first column, which makes the n1 n2 coupling imaginary
    _, u, couplings = factorised
    assert np.allclose(u[:, 0].real, 0) and abs(u[0, 0]) == pytest.approx(1, abs=1e-4)
    assert couplings[0, 1].real == pytest.approx(0, abs=1e-15) and couplings[0, 1].imag < 0


def test_vertices_are_the_rotated_yukawa_matrix(seesaw: vs.Model, factorised, dirac) -> None:
    # -1/2 h (chi^T Yp chi + h.c.) = -1/2 h sum_ij bar(n_i) (Yp_ij PL + conj(Yp_ij) PR) n_j gives
    # V(bar(n_i), n_j, h) = -i (Yp_ij PL + conj(Yp_ij) PR) for i = j (the pair's factor 2) and i != j
    # (the two orderings of a chain between different Majorana fields add up)
    _, _, couplings = factorised
    rules = seesaw.derive(gauge="feynman")
    for i, j in ((1, 1), (1, 2), (2, 2)):
        y = couplings[i - 1, j - 1]
        got = rules.vertex(f"bar(n{i})", f"n{j}", "h").evaluate(np.zeros((3, 4)))
        assert np.allclose(got, -1j * (y * dirac.PL + np.conj(y) * dirac.PR), rtol=1e-12, atol=1e-15), (i, j)
    assert [p.field_kind for p in rules.propagators] == ["majorana", "majorana", "scalar", "dirac"]
    assert not [d for d in seesaw.check() if d.severity != "note"]


def test_the_flavour_basis_mass_matrix_is_refused_until_numeric_diagonalisation() -> None:
    # the same seesaw written in two-component flavour fields mixes nu and nR at quadratic order: refused
    # with a hint, since a Majorana propagator matrix is not built (the mass basis above is the way)
    text = """theory f
parameters
  mass mD = 10.0
  mass MN = 1000.0
fields
  weyl nu left
  weyl nR right mass MN
lagrangian
  I bar(nu) gamma[mu] d[mu] nu
  I bar(nR) gamma[mu] d[mu] nR
  - mD bar(nR) nu + h.c.
  - 1/2 MN bar(cc(nR)) nR + h.c.
"""
    with pytest.raises(vs.VertexsmithError) as info:
        vs.load_model(text=text, name="f.vsm").derive()
    assert info.value.message == "the fields nu, nR mix, and majorana fields have no propagator matrix yet"
    assert info.value.hint == "rotate the fields to mass eigenstates"
