"""Takagi factorisation of complex symmetric (Majorana) mass matrices.

Source: Dreiner, Haber & Martin, Phys. Rept. 494 (2010) 1, arXiv:0812.1594, sec. 4.2 and app. D
(from memory): a complex symmetric M is U diag(m) U^T with U unitary and m >= 0, the m being
the singular values of M. Every check below is one of those defining properties, or the seesaw
limit m_light = m_D^2 / M_R (common practice, no source).
"""

from __future__ import annotations

import numpy as np
import pytest

from vertexsmith.diagonalise import takagi


def _random_symmetric(rng: np.random.Generator, n: int) -> np.ndarray:
    a = rng.normal(size=(n, n)) + 1j * rng.normal(size=(n, n))
    return a + a.T


def _assert_takagi(matrix: np.ndarray, masses: np.ndarray, u: np.ndarray) -> None:
    assert np.allclose(u.conj().T @ u, np.eye(len(masses)), atol=1e-12)
    assert np.allclose(u @ np.diag(masses) @ u.T, matrix, atol=1e-10 * max(1.0, np.abs(matrix).max()))
    assert np.all(masses >= 0) and np.all(np.diff(masses) >= 0)
    # the masses are the singular values of M
    assert np.allclose(masses, np.sort(np.linalg.svd(matrix, compute_uv=False)))


@pytest.mark.parametrize("n", [1, 2, 3, 5])
def test_random_complex_symmetric_matrices(n: int) -> None:
    rng = np.random.default_rng(7 + n)
    for _ in range(5):
        matrix = _random_symmetric(rng, n)
        _assert_takagi(matrix, *takagi(matrix))


def test_a_negative_real_mass_becomes_positive_with_a_phase_i() -> None:
    # -1/2 m chi chi with m < 0: the field is rotated by i, the physical mass is |m|
    masses, u = takagi(np.array([[-3.0]]))
    assert masses == pytest.approx([3.0])
    assert abs(abs(u[0, 0]) - 1) < 1e-12 and abs(u[0, 0].real) < 1e-12


def test_seesaw_block_gives_the_light_mass_md2_over_mr() -> None:
    # [[0, mD], [mD, MR]] with mD << MR: m_light ~ mD^2/MR, m_heavy ~ MR (common practice, no source)
    md, mr = 1.0, 1.0e4
    masses, u = takagi(np.array([[0, md], [md, mr]], dtype=complex))
    assert masses[0] == pytest.approx(md**2 / mr, rel=1e-6)
    assert masses[1] == pytest.approx(mr, rel=1e-6)
    _assert_takagi(np.array([[0, md], [md, mr]]), masses, u)


def test_degenerate_and_zero_masses() -> None:
    rng = np.random.default_rng(3)
    q, _ = np.linalg.qr(rng.normal(size=(4, 4)) + 1j * rng.normal(size=(4, 4)))
    matrix = q @ np.diag([0.0, 0.0, 2.0, 2.0]) @ q.T  # two massless and two degenerate states
    masses, u = takagi(matrix)
    assert masses == pytest.approx([0.0, 0.0, 2.0, 2.0], abs=1e-12)
    _assert_takagi(matrix, masses, u)


def test_the_result_is_deterministic() -> None:
    matrix = _random_symmetric(np.random.default_rng(11), 3)
    first, second = takagi(matrix), takagi(matrix.copy())
    assert np.array_equal(first[0], second[0]) and np.array_equal(first[1], second[1])


@pytest.mark.parametrize("bad, message", [
    (np.array([[1.0, 2.0], [3.0, 4.0]]), "symmetric"),
    (np.ones((2, 3)), "square"),
    (np.array([[np.inf]]), "finite"),
])
def test_refuses_what_it_cannot_factorise(bad: np.ndarray, message: str) -> None:
    with pytest.raises(ValueError, match=message):
        takagi(bad)
