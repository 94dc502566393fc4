"""Explicit external wave functions and phase-space points, as numpy arrays over many points at once.

Everything takes and returns arrays whose first axis runs over phase-space points. Momenta are
upper-index four-vectors (E, px, py, pz), metric (+,-,-,-). Spinors are the Dirac-representation
plane waves (sqrt(E+m) xi, sigma.p xi / sqrt(E+m)) with ubar u = 2m and vbar v = -2m, spin up and
down along z; polarisation vectors are real: two transverse ones and, for a massive vector, the
longitudinal (|k|/m, E k/|k|/m). Summing over these states gives the completeness relations
(pslash + m, pslash - m, -g + k k/m^2), checked in the tests.
"""

from __future__ import annotations

import numpy as np

from .numeric import GAMMA, METRIC

_PAULI = np.array([[[0, 1], [1, 0]], [[0, -1j], [1j, 0]], [[1, 0], [0, -1]]], dtype=complex)
_HELPER = np.array([0.3, -0.5, 0.81]) / np.linalg.norm([0.3, -0.5, 0.81])


def mdot(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Minkowski products over the last axis."""
    return a[..., 0] * b[..., 0] - a[..., 1] * b[..., 1] - a[..., 2] * b[..., 2] - a[..., 3] * b[..., 3]


def lower(v: np.ndarray) -> np.ndarray:
    """Lower the last (Lorentz) axis."""
    return v * np.array([1.0, -1.0, -1.0, -1.0])


def slash(p: np.ndarray) -> np.ndarray:
    """gamma^mu p_mu for momenta of shape (..., 4): shape (..., 4, 4)."""
    return np.einsum("...m,mij->...ij", lower(p), GAMMA)


def _sigma_dot(p: np.ndarray) -> np.ndarray:
    return np.einsum("nk,kij->nij", p[:, 1:], _PAULI)


def u_spinors(p: np.ndarray, mass: float) -> np.ndarray:
    """u(p, s) for s = up, down: shape (N, 2, 4)."""
    norm = np.sqrt(p[:, 0].real + mass).astype(complex)[:, None, None]
    xi = np.eye(2, dtype=complex)[None]  # (1, s, 2)
    upper = norm * xi
    lower_part = np.einsum("nij,sj->nsi", _sigma_dot(p), np.eye(2, dtype=complex)) / norm
    return np.concatenate([upper, lower_part], axis=2)


def v_spinors(p: np.ndarray, mass: float) -> np.ndarray:
    """v(p, s) for the two spin states: shape (N, 2, 4)."""
    norm = np.sqrt(p[:, 0].real + mass).astype(complex)[:, None, None]
    eta = np.eye(2, dtype=complex)[None]
    upper = np.einsum("nij,sj->nsi", _sigma_dot(p), np.eye(2, dtype=complex)) / norm
    return np.concatenate([upper, norm * eta], axis=2)


def bar(spinors: np.ndarray) -> np.ndarray:
    """Dirac adjoints (rows) psi^dagger gamma^0 of spinors of shape (..., 4)."""
    return spinors.conj() @ GAMMA[0]


def polarisations(k: np.ndarray, mass: float) -> np.ndarray:
    """Real polarisation vectors (upper index): (N, 2, 4) massless, (N, 3, 4) massive."""
    three = k[:, 1:].real
    size = np.linalg.norm(three, axis=1)
    direction = np.where(size[:, None] > 1e-12, three / np.where(size > 1e-12, size, 1.0)[:, None],
                         np.array([0.0, 0.0, 1.0]))
    helper = np.where(np.abs(direction @ _HELPER)[:, None] > 0.95, np.array([1.0, 0.0, 0.0]), _HELPER)
    e1 = np.cross(direction, helper)
    e1 /= np.linalg.norm(e1, axis=1)[:, None]
    e2 = np.cross(direction, e1)
    zero = np.zeros((len(k), 1))
    vectors = [np.concatenate([zero, e1], axis=1), np.concatenate([zero, e2], axis=1)]
    if mass > 0:
        energy = k[:, 0].real
        vectors.append(np.concatenate([(size / mass)[:, None], (energy / mass)[:, None] * direction], axis=1))
    return np.stack(vectors, axis=1).astype(complex)


# ------------------------------------------------------------------ spin sums as matrices

def fermion_spin_sum(p: np.ndarray, mass: float, barred: bool, anti: bool) -> np.ndarray:
    """sum over spins of w_a w*_b for the spinor w a fermion leg is contracted with: shape (N, 4, 4).

    w = u (v for anti) on a psi leg, sum u u^dagger = (pslash + m) gamma0; w = ubar (vbar) on a
    bar leg, sum ubar_a ubar*_b = [gamma0^T ((pslash + m) gamma0)^T gamma0]_ab. Polynomial in p, so it
    also holds at the unphysical momenta of a crossed process.
    """
    outer = (slash(p) + (-mass if anti else mass) * np.eye(4)) @ GAMMA[0]
    if not barred:
        return outer
    return GAMMA[0].T @ np.swapaxes(outer, -1, -2) @ GAMMA[0]


def vector_spin_sum(k: np.ndarray, mass: float) -> np.ndarray:
    """sum over the physical polarisations of eps_mu eps*_nu (lower indices): shape (N, 4, 4).

    Massive: -g + k k / m^2. Massless: the two states transverse to k in the frame n = (1, 0, 0, 0),
    -g + (k n + n k)/(k.n) - n^2 k k/(k.n)^2, which is what the explicit vectors above sum to.
    """
    kl = lower(k)
    g = METRIC[None]
    if mass > 0:
        return -g + np.einsum("na,nb->nab", kl, kl) / mass**2
    n = np.zeros_like(k)
    n[:, 0] = 1.0
    nl = lower(n)
    kn = mdot(k, n)[:, None, None]
    return (-g + (np.einsum("na,nb->nab", kl, nl) + np.einsum("na,nb->nab", nl, kl)) / kn
            - np.einsum("na,nb->nab", kl, kl) / kn**2)


# ------------------------------------------------------------------ phase space and Lorentz maps

def _on_shell(mass: float, p3: np.ndarray) -> np.ndarray:
    return np.concatenate([np.sqrt(mass**2 + np.sum(p3**2, axis=1))[:, None], p3], axis=1)


def _directions(rng: np.random.Generator, count: int) -> np.ndarray:
    v = rng.normal(size=(count, 3))
    return v / np.linalg.norm(v, axis=1)[:, None]


def _momentum_size(m: np.ndarray, ma: float | np.ndarray, mb: float | np.ndarray) -> np.ndarray:
    return np.sqrt(np.maximum((m**2 - (ma + mb) ** 2) * (m**2 - (ma - mb) ** 2), 0.0)) / (2 * m)


def boost(p: np.ndarray, beta: np.ndarray) -> np.ndarray:
    """Boost momenta (N, ..., 4) by velocity beta (N, 3)."""
    b2 = np.sum(beta**2, axis=1)
    gamma = 1.0 / np.sqrt(1.0 - b2)
    shape = (len(p),) + (1,) * (p.ndim - 2)
    bp = np.einsum("n...k,nk->n...", p[..., 1:], beta)
    g = gamma.reshape(shape)
    factor = np.where(b2 > 0, (gamma - 1) / np.where(b2 > 0, b2, 1.0), 0.0).reshape(shape)
    energy = g * (p[..., 0] + bp)
    space = p[..., 1:] + (factor * bp + g * p[..., 0])[..., None] * beta.reshape(shape + (3,))
    return np.concatenate([energy[..., None], space], axis=-1)


def phase_space(rng: np.random.Generator, count: int, masses_in: list[float], masses_out: list[float],
                energy: float | np.ndarray) -> np.ndarray:
    """Random physical momenta (count, n_in + n_out, 4) in the centre-of-mass frame, total energy `energy`.

    For one incoming particle the energy is its mass (a decay at rest). Final states are built by
    splitting off one particle at a time with a random invariant mass for the rest: not a flat
    distribution, which no identity checked here needs.
    """
    total = np.broadcast_to(np.asarray(energy, dtype=float), (count,)).copy()
    legs: list[np.ndarray] = []
    if len(masses_in) == 2:
        size = _momentum_size(total, masses_in[0], masses_in[1])
        axis = _directions(rng, count)
        legs += [_on_shell(masses_in[0], size[:, None] * axis), _on_shell(masses_in[1], -size[:, None] * axis)]
    else:
        legs.append(np.concatenate([total[:, None], np.zeros((count, 3))], axis=1))
    outgoing: list[np.ndarray] = []
    frame_mass, frame_beta = total, np.zeros((count, 3))
    last = len(masses_out) - 2
    for k in range(last + 1):
        m = masses_out[k]
        if k == last:
            rest_mass = np.full(count, float(masses_out[-1]))
        else:
            lowest, highest = sum(masses_out[k + 1:]), frame_mass - m
            rest_mass = lowest + (highest - lowest) * rng.uniform(0.05, 0.95, size=count)
        size = _momentum_size(frame_mass, m, rest_mass)
        axis = _directions(rng, count)
        p = _on_shell(m, size[:, None] * axis)
        q = np.concatenate([np.sqrt(rest_mass**2 + size**2)[:, None], -size[:, None] * axis], axis=1)
        outgoing.append(boost(p, frame_beta))
        rest_lab = boost(q, frame_beta)
        if k == last:
            outgoing.append(rest_lab)
        else:
            frame_beta, frame_mass = rest_lab[:, 1:] / rest_lab[:, :1], rest_mass
    return np.stack(legs + outgoing, axis=1).astype(complex)


def random_lorentz(rng: np.random.Generator, count: int, rapidity: float = 0.8) -> np.ndarray:
    """Random proper orthochronous Lorentz transformations (count, 4, 4): a rotation, then a boost."""
    q, r = np.linalg.qr(rng.normal(size=(count, 3, 3)))
    q = q * np.sign(np.diagonal(r, axis1=1, axis2=2))[:, None, :]
    q[np.linalg.det(q) < 0, :, 0] *= -1
    rotation = np.zeros((count, 4, 4))
    rotation[:, 0, 0] = 1.0
    rotation[:, 1:, 1:] = q
    beta = _directions(rng, count) * np.tanh(rng.uniform(0.1, rapidity, size=count))[:, None]
    unit = np.broadcast_to(np.eye(4), (count, 4, 4))
    boosted = boost(np.swapaxes(unit, 1, 2).copy(), beta)  # columns of the boost matrix
    return np.einsum("nij,njk->nik", np.swapaxes(boosted, 1, 2), rotation)
