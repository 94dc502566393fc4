"""Charge conjugation and flow reversal of spinor chains, checked with independent Dirac matrices.

Identities (Denner, Eck, Hahn & Kuebbeck, Nucl. Phys. B 387 (1992) 467, eq. 2.4, from memory;
common practice): C^T = -C, C^dagger = C^-1, C gamma^mu^T C^-1 = -gamma^mu, and for the five
bilinear types Gamma' = C Gamma^T C^-1 is +Gamma for S (1), P (gamma5) and A (gamma^mu gamma5),
-Gamma for V (gamma^mu) and T (sigma^{mu nu}).
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from vertexsmith.fermion_flow import charge_conjugation_matrix, reversed_chain


@pytest.fixture(scope="module")
def c_matrix() -> np.ndarray:
    return charge_conjugation_matrix()


def test_charge_conjugation_matrix_properties(c_matrix, dirac) -> None:
    assert np.allclose(c_matrix.T, -c_matrix)
    assert np.allclose(c_matrix.conj().T @ c_matrix, dirac.ONE)
    for mu in range(4):
        assert np.allclose(c_matrix @ dirac.GAMMA[mu].T @ np.linalg.inv(c_matrix), -dirac.GAMMA[mu])


def _matrix(kind: str, mu: int, nu: int, dirac) -> np.ndarray:
    return {"gamma": dirac.GAMMA[mu], "gamma5": dirac.GAMMA5, "PL": dirac.PL, "PR": dirac.PR,
            "sigma": dirac.SIGMA[mu, nu]}[kind]


@pytest.mark.parametrize("kinds", [("gamma5",), ("gamma",), ("gamma", "gamma5"), ("sigma",), ("gamma", "PL"),
                                   ("PR", "gamma", "gamma"), ("gamma", "sigma", "gamma5", "gamma")],
                         ids=lambda k: "-".join(k))
def test_reversed_chain_equals_c_gamma_transpose_c_inverse(kinds, c_matrix, dirac) -> None:
    c_inv = np.linalg.inv(c_matrix)
    for mus in itertools.product(range(4), repeat=len(kinds)):
        nus = [(mu + 1) % 4 for mu in mus]
        matrices = [_matrix(k, mu, nu, dirac) for k, mu, nu in zip(kinds, mus, nus)]
        product = np.linalg.multi_dot(matrices + [dirac.ONE]) if len(matrices) > 1 else matrices[0]
        sign, reversed_matrices = reversed_chain(kinds, matrices)
        rebuilt = sign * (np.linalg.multi_dot(list(reversed_matrices) + [dirac.ONE]) if len(matrices) > 1
                          else reversed_matrices[0])
        assert np.allclose(c_matrix @ product.T @ c_inv, rebuilt)


@pytest.mark.parametrize("kinds, sign", [((), 1), (("gamma5",), 1), (("gamma",), -1), (("gamma", "gamma5"), 1),
                                         (("sigma",), -1)], ids=["S", "P", "V", "A", "T"])
def test_five_bilinear_types(kinds, sign, dirac) -> None:
    # Gamma' = +-Gamma: rebuild Gamma' from reversed_chain and compare with Gamma itself
    for mu in range(4):
        matrices = [_matrix(k, mu, (mu + 1) % 4, dirac) for k in kinds]
        flip, reversed_matrices = reversed_chain(kinds, matrices)
        original = np.linalg.multi_dot([dirac.ONE, dirac.ONE] + matrices)
        rebuilt = flip * np.linalg.multi_dot([dirac.ONE, dirac.ONE] + list(reversed_matrices))
        assert np.allclose(rebuilt, sign * original)


def test_unknown_matrix_is_refused() -> None:
    with pytest.raises(ValueError, match="no flow reversal"):
        reversed_chain(["Y"], ["Y"])
