"""Shared helpers for the physics tests: model loading, and Dirac algebra built independently.

The gamma matrices here come from `sympy.physics.matrices.mgamma` (Dirac representation), not
from vertexsmith, so that a test comparing `evaluate()` with them checks the engine against an
outside reference. gamma5 is built by hand as i g0 g1 g2 g3 (the convention vertexsmith states).
Spinors are the textbook Dirac-representation plane-wave solutions (Peskin & Schroeder sec. 3.3
uses the chiral representation; the Dirac-representation form below is common practice, no
source), normalised to ubar u = 2m, and their completeness relations are tested in
test_numeric.py before any amplitude relies on them.
"""

from __future__ import annotations

import textwrap
from types import SimpleNamespace
from typing import Callable

import numpy as np
import pytest
from sympy.physics.matrices import mgamma

import vertexsmith

# ---------------------------------------------------------------- independent Dirac algebra

ETA = np.diag([1.0, -1.0, -1.0, -1.0]).astype(complex)
GAMMA = np.array([np.array(mgamma(mu).tolist(), dtype=complex) for mu in range(4)])  # upper index
GAMMA5 = 1j * GAMMA[0] @ GAMMA[1] @ GAMMA[2] @ GAMMA[3]
ONE = np.eye(4, dtype=complex)
PL = (ONE - GAMMA5) / 2
PR = (ONE + GAMMA5) / 2
SIGMA = np.array([[0.5j * (GAMMA[m] @ GAMMA[n] - GAMMA[n] @ GAMMA[m]) for n in range(4)] for m in range(4)])
PAULI = [np.array([[0, 1], [1, 0]], dtype=complex), np.array([[0, -1j], [1j, 0]], dtype=complex),
         np.array([[1, 0], [0, -1]], dtype=complex)]
TWO_SPINORS = [np.array([1, 0], dtype=complex), np.array([0, 1], dtype=complex)]


def lower(p: np.ndarray) -> np.ndarray:
    """p_mu from p^mu."""
    return ETA @ np.asarray(p, dtype=complex)


def dot(p: np.ndarray, q: np.ndarray) -> complex:
    """Minkowski product, metric (+,-,-,-)."""
    return complex(np.asarray(p, dtype=complex) @ ETA @ np.asarray(q, dtype=complex))


def slash(p: np.ndarray) -> np.ndarray:
    """p-slash = gamma^mu p_mu."""
    return np.einsum("m,mij->ij", lower(p), GAMMA)


def levi_civita(eps0123: int) -> np.ndarray:
    """epsilon^{mu nu rho sigma} (upper indices) with the given sign of epsilon^{0123}."""
    eps = np.zeros((4, 4, 4, 4))
    for a in range(4):
        for b in range(4):
            for c in range(4):
                for d in range(4):
                    if len({a, b, c, d}) == 4:
                        # sign of the permutation by counting inversions
                        seq = [a, b, c, d]
                        inv = sum(1 for i in range(4) for j in range(i + 1, 4) if seq[i] > seq[j])
                        eps[a, b, c, d] = eps0123 * (-1) ** inv
    return eps


def _sigma_dot(p3: np.ndarray) -> np.ndarray:
    return sum(p3[k] * PAULI[k] for k in range(3))


def u_spinor(p: np.ndarray, m: float, s: int) -> np.ndarray:
    """u(p, s) in the Dirac representation, (pslash - m) u = 0, ubar u = 2m."""
    E = p[0].real
    xi = TWO_SPINORS[s]
    n = np.sqrt(E + m)
    return np.concatenate([n * xi, _sigma_dot(p[1:]) @ xi / n])


def v_spinor(p: np.ndarray, m: float, s: int) -> np.ndarray:
    """v(p, s) in the Dirac representation, (pslash + m) v = 0, vbar v = -2m."""
    E = p[0].real
    eta = TWO_SPINORS[s]
    n = np.sqrt(E + m)
    return np.concatenate([_sigma_dot(p[1:]) @ eta / n, n * eta])


def bar(spinor: np.ndarray) -> np.ndarray:
    """Dirac adjoint psi^dagger gamma^0 (as a row)."""
    return spinor.conj() @ GAMMA[0]


def on_shell(rng: np.random.Generator, m: float, scale: float = 3.0) -> np.ndarray:
    """A random real four-momentum with p.p = m^2 and positive energy."""
    p3 = rng.normal(size=3) * scale
    return np.array([np.sqrt(m * m + p3 @ p3), *p3], dtype=complex)


def random_momenta(rng: np.random.Generator, n: int, conserve: bool = True) -> np.ndarray:
    """n random incoming four-momenta (off shell); the last one fixed by conservation if asked."""
    p = rng.normal(size=(n, 4)) * 2.0
    if conserve:
        p[-1] = -p[:-1].sum(axis=0)
    return p.astype(complex)


DIRAC = SimpleNamespace(ETA=ETA, GAMMA=GAMMA, GAMMA5=GAMMA5, ONE=ONE, PL=PL, PR=PR, SIGMA=SIGMA,
                        lower=lower, dot=dot, slash=slash, levi_civita=levi_civita, u=u_spinor, v=v_spinor,
                        bar=bar, on_shell=on_shell, random_momenta=random_momenta)


@pytest.fixture(scope="session")
def dirac() -> SimpleNamespace:
    """The independent Dirac algebra and kinematics helpers above."""
    return DIRAC


@pytest.fixture
def rng() -> np.random.Generator:
    """A seeded generator: every run sees the same 'random' momenta."""
    return np.random.default_rng(20240917)


@pytest.fixture(scope="session")
def build() -> Callable[[str], vertexsmith.Model]:
    """Load a model from an inline text (dedented), reported under the name t.vsm."""

    def _build(text: str) -> vertexsmith.Model:
        return vertexsmith.load_model(text=textwrap.dedent(text).lstrip("\n"), name="t.vsm")

    return _build


@pytest.fixture(scope="session")
def shipped() -> Callable[[str], vertexsmith.Model]:
    """Load one of the shipped example models by name."""

    def _shipped(name: str) -> vertexsmith.Model:
        return vertexsmith.load_model(vertexsmith.example(name))

    return _shipped


def symbol_of(model: vertexsmith.Model, name: str):  # noqa: ANN201 - a sympy symbol
    """The sympy symbol the engine uses for a model parameter."""
    return model.parameters[name].symbol


@pytest.fixture(scope="session")
def sym() -> Callable[[vertexsmith.Model, str], object]:
    return symbol_of
