"""Numeric diagonalisation of mass matrices: the factorisations the mass eigenstates come from.

- `takagi` factorises a complex symmetric matrix M = U diag(m) U^T with U unitary and m >= 0
  (Takagi factorisation; Dreiner, Haber & Martin, Phys. Rept. 494 (2010) 1, arXiv:0812.1594,
  sec. 4.2 and app. D, from memory). It is what a Majorana mass matrix needs: the
  Lagrangian -1/2 (xi^T M xi + h.c.) of two-component fields xi becomes
  -1/2 sum_k m_k (chi_k chi_k + h.c.) with xi = U^* chi, every mass real and non-negative, the
  phases carried by U.

The algorithm is exact linear algebra, no iteration of our own: with M = B + iC (B, C real
symmetric) and a Takagi vector u = x + iy (M u^* = m u), the real symmetric matrix
[[B, C], [C, -B]] has [x; y] as an eigenvector with eigenvalue m, and [-y; x] with -m. So the
eigenvectors of the n largest eigenvalues give the columns of U for m > 0, mutually orthonormal
as complex vectors because each [-y; x] lies in the negative eigenspace. Zero masses are
completed from the null space of M^* (orthogonal to the range of M, where the other columns lie).
"""

from __future__ import annotations

import numpy as np

# relative size below which a singular value counts as zero, and above which M counts as asymmetric
_TOLERANCE = 1e-12


def takagi(matrix: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Masses m (ascending, >= 0) and unitary U with matrix = U diag(m) U^T, for a complex symmetric matrix."""
    m = np.asarray(matrix, dtype=complex)
    if m.ndim != 2 or m.shape[0] != m.shape[1]:
        raise ValueError(f"takagi() needs a square matrix, got shape {m.shape}")
    n = m.shape[0]
    scale = max(float(np.abs(m).max()), 1.0) if m.size else 1.0
    if not np.all(np.isfinite(m)):
        raise ValueError("takagi() needs finite entries")
    if np.abs(m - m.T).max(initial=0.0) > _TOLERANCE * scale * 1e3:
        raise ValueError("takagi() needs a symmetric matrix (M = M^T); a Majorana mass matrix is symmetric")
    b, c = m.real, m.imag
    big = np.block([[b, c], [c, -b]])
    values, vectors = np.linalg.eigh(big)
    masses = values[n:]  # the n largest: +m_k, ascending
    u = vectors[:n, n:] + 1j * vectors[n:, n:]
    massless = masses <= _TOLERANCE * scale
    if massless.any():
        # a zero mass leaves +0 and -0 mixed in one eigenspace: take an orthonormal basis of the null
        # space of M^* instead (then M u^* = 0 exactly), which is orthogonal to the massive columns
        _, s, vh = np.linalg.svd(m.conj())
        null = vh.conj().T[:, s <= _TOLERANCE * scale]
        count = int(massless.sum())
        if null.shape[1] < count:  # pragma: no cover - eigh and svd disagree only for ill-posed input
            raise ValueError("takagi(): the matrix is too close to singular to factorise reliably")
        u[:, massless] = null[:, :count]
        masses = np.where(massless, 0.0, masses)
    u = _fix_phases(u)
    return masses, u


def _fix_phases(u: np.ndarray) -> np.ndarray:
    """Each column times +-1 so that its largest entry has a positive real part: a deterministic choice.

    A Takagi vector is fixed up to a sign (not a phase, since M u^* = m u must keep holding), so this
    is the only freedom left; fixing it makes the output the same on every machine.
    """
    out = u.copy()
    for k in range(u.shape[1]):
        column = u[:, k]
        lead = column[np.argmax(np.abs(column) > np.abs(column).max() * (1 - 1e-9))]
        if lead.real < 0 or (lead.real == 0 and lead.imag < 0):
            out[:, k] = -column
    return out


__all__ = ["takagi"]
