"""Spin-summed |M|^2 of two 2 -> 2 processes of the dark-sector demo model, from exported rules.

The rules of `models/dark_sector.vsm` (a hidden U(1) with invented numbers) are exported as a
standalone numpy module, `dark_sector_rules.py`. If that file is not beside this script, it is
written into a temporary folder with the `vertexsmith.export` API first:

    python examples/dark_sector_amplitude.py

The amplitudes are built by hand from the exported vertex and propagator functions, with explicit
Dirac-representation spinors and explicit polarisation vectors of the massive dark photon X:

  chi(p1) chibar(p2) -> s(k1) s*(k2):  s-channel X exchange and t-channel psi exchange
  chi(p1) chibar(p2) -> X(k1) X(k2):   t- and u-channel chi exchange

Both diagrams of each process sit on one fermion line, so they add with the same sign. Two checks
are printed beside the numbers: the result does not depend on the R_xi gauge parameter of X, and
replacing a polarisation of X by its momentum makes the X X amplitude vanish (the current X couples
to is conserved). The numbers are for the model's invented parameters; they are not predictions.
"""

from __future__ import annotations

import importlib.util
import sys
import tempfile
from pathlib import Path
from types import ModuleType

import numpy as np

HERE = Path(__file__).resolve().parent
MODULE_NAME = "dark_sector_rules"


def load_rules() -> ModuleType:
    """Import the exported rules, exporting them into a temporary folder when they are not here."""
    path = HERE / f"{MODULE_NAME}.py"
    if not path.is_file():
        from vertexsmith.export import export_model

        path = Path(tempfile.mkdtemp(prefix="vertexsmith-example-")) / f"{MODULE_NAME}.py"
        export_model("dark_sector", "python", output=path, gauge="xi")
    spec = importlib.util.spec_from_file_location(MODULE_NAME, path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[MODULE_NAME] = module
    spec.loader.exec_module(module)
    return module


# ---------------------------------------------------------------- spinors and polarisations

PAULI = [np.array([[0, 1], [1, 0]], dtype=complex), np.array([[0, -1j], [1j, 0]], dtype=complex),
         np.array([[1, 0], [0, -1]], dtype=complex)]
GAMMA0 = np.diag([1, 1, -1, -1]).astype(complex)  # Dirac representation
ETA = np.diag([1.0, -1.0, -1.0, -1.0])


def mdot(p: np.ndarray, q: np.ndarray) -> complex:
    return complex(p @ ETA @ q)


def u_spinor(p: np.ndarray, m: float, s: int) -> np.ndarray:
    """Positive-energy spinor, Dirac representation, normalised to ubar u = 2m."""
    xi = np.eye(2, dtype=complex)[s]
    n = np.sqrt(p[0].real + m)
    return np.concatenate([n * xi, sum(p[k + 1] * PAULI[k] for k in range(3)) @ xi / n])


def v_spinor(p: np.ndarray, m: float, s: int) -> np.ndarray:
    """Negative-energy spinor, Dirac representation, normalised to vbar v = -2m."""
    eta = np.eye(2, dtype=complex)[s]
    n = np.sqrt(p[0].real + m)
    return np.concatenate([sum(p[k + 1] * PAULI[k] for k in range(3)) @ eta / n, n * eta])


def bar(spinor: np.ndarray) -> np.ndarray:
    return spinor.conj() @ GAMMA0


def polarisations(k: np.ndarray, mass: float) -> list[np.ndarray]:
    """Three real polarisation vectors of a massive vector: two transverse, one longitudinal."""
    size = np.linalg.norm(k[1:].real)
    n = k[1:].real / size
    helper = np.array([1.0, 0.0, 0.0]) if abs(n[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    e1 = np.cross(n, helper)
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(n, e1)
    longitudinal = np.concatenate([[size / mass], k[0].real / mass * n])
    return [np.concatenate([[0.0], e1]), np.concatenate([[0.0], e2]), longitudinal]


def centre_of_mass(sqrt_s: float, m_in: float, m_out: float, cos_theta: float, phi: float) -> tuple[np.ndarray, ...]:
    """p1, p2 along the z axis, k1, k2 at polar angle theta: a 2 -> 2 point in the centre-of-mass frame."""
    def momentum(mass: float) -> float:
        return np.sqrt(sqrt_s**2 / 4 - mass**2)

    pin, pout = momentum(m_in), momentum(m_out)
    sin_theta = np.sqrt(1 - cos_theta**2)
    n = np.array([sin_theta * np.cos(phi), sin_theta * np.sin(phi), cos_theta])
    e = sqrt_s / 2
    p1 = np.array([e, 0, 0, pin])
    p2 = np.array([e, 0, 0, -pin])
    k1 = np.concatenate([[e], pout * n])
    k2 = np.concatenate([[e], -pout * n])
    return p1, p2, k1, k2


# ---------------------------------------------------------------- the amplitudes

def lower(vector: np.ndarray) -> np.ndarray:
    return ETA @ vector


def chi_chibar_to_s_sbar(rules: ModuleType, p1: np.ndarray, p2: np.ndarray, k1: np.ndarray, k2: np.ndarray,
                         params: dict[str, float]) -> float:
    """Spin-summed |M|^2 for chi(p1) chibar(p2) -> s(k1) s*(k2)."""
    P = {**rules.PARAMETERS, **params}
    mchi = P["mchi"].real if isinstance(P["mchi"], complex) else P["mchi"]
    q = p1 + p2
    # incoming momenta at each vertex; an outgoing s leaves through the dag(s) leg, an outgoing s* through s
    fermion_x = rules.find_vertex("bar(chi)", "chi", "X")(p2, p1, -q, params=params)        # (s1, s2, mu3)
    scalar_x = rules.find_vertex("s", "dag(s)", "X")(-k2, -k1, q, params=params)             # (mu3,)
    x_propagator = ETA @ rules.propagator_X(q, params=params) @ ETA                           # D_{mu nu}
    s_channel = np.einsum("abm,mn,n->ab", fermion_x, x_propagator, scalar_x)
    emit_sbar = rules.find_vertex("bar(psi)", "chi", "s")(k2 - p1, p1, -k2, params=params)   # chi -> psi s*
    emit_s = rules.find_vertex("bar(chi)", "psi", "dag(s)")(p2, p1 - k2, -k1, params=params)  # psi chibar -> s
    t_channel = emit_s @ rules.propagator_psi(p1 - k2, params=params) @ emit_sbar
    total = 0.0
    for s1 in range(2):
        for s2 in range(2):
            amplitude = bar(v_spinor(p2, mchi, s2)) @ (s_channel + t_channel) @ u_spinor(p1, mchi, s1)
            total += abs(amplitude) ** 2
    return total


def chi_chibar_to_x_x(rules: ModuleType, p1: np.ndarray, p2: np.ndarray, k1: np.ndarray, k2: np.ndarray,
                      params: dict[str, float], replace_first_by_momentum: bool = False) -> float:
    """Spin- and polarisation-summed |M|^2 for chi(p1) chibar(p2) -> X(k1) X(k2) (t and u channels)."""
    P = {**rules.PARAMETERS, **params}
    mchi, mx = P["mchi"].real, P["mX"].real
    vertex = rules.find_vertex("bar(chi)", "chi", "X")(p2, p1, -k1, params=params)  # no momentum dependence
    t_prop = rules.propagator_chi(p1 - k1, params=params)
    u_prop = rules.propagator_chi(p1 - k2, params=params)
    first = [k1] if replace_first_by_momentum else polarisations(k1, mx)
    total = 0.0
    for eps1 in first:
        for eps2 in polarisations(k2, mx):
            g1 = np.einsum("abm,m->ab", vertex, lower(eps1.conj()))
            g2 = np.einsum("abm,m->ab", vertex, lower(eps2.conj()))
            chain = g2 @ t_prop @ g1 + g1 @ u_prop @ g2
            for s1 in range(2):
                for s2 in range(2):
                    total += abs(bar(v_spinor(p2, mchi, s2)) @ chain @ u_spinor(p1, mchi, s1)) ** 2
    return total


def main() -> None:
    rules = load_rules()
    mchi, ms, mx = (rules.PARAMETERS[n].real for n in ("mchi", "ms", "mX"))
    print(f"dark sector (invented numbers): mchi = {mchi}, ms = {ms}, mX = {mx}, gx = {rules.PARAMETERS['gx']}, "
          f"y = {rules.PARAMETERS['y']}")
    print()
    print("chi chibar -> s s*   (spin-summed |M|^2; xi_X = 1 and xi_X = 5 must agree)")
    print(f"{'sqrt(s)':>8} {'cos(theta)':>11} {'|M|^2 (xi=1)':>16} {'|M|^2 (xi=5)':>16}")
    for sqrt_s, cos_theta in ((100.0, 0.3), (150.0, -0.6), (250.0, 0.9)):
        point = centre_of_mass(sqrt_s, mchi, ms, cos_theta, 0.7)
        feynman = chi_chibar_to_s_sbar(rules, *point, params={"xi_X": 1.0})
        other = chi_chibar_to_s_sbar(rules, *point, params={"xi_X": 5.0})
        print(f"{sqrt_s:8.1f} {cos_theta:11.2f} {feynman:16.8e} {other:16.8e}")
    print()
    print("chi chibar -> X X   (summed over spins and the 3 polarisations of each X; the last column")
    print("                     replaces one polarisation by the momentum and must vanish)")
    print(f"{'sqrt(s)':>8} {'cos(theta)':>11} {'|M|^2':>16} {'|k.M|^2':>16}")
    for sqrt_s, cos_theta in ((30.0, 0.3), (60.0, -0.6), (120.0, 0.9)):
        point = centre_of_mass(sqrt_s, mchi, mx, cos_theta, 0.7)
        summed = chi_chibar_to_x_x(rules, *point, params={})
        ward = chi_chibar_to_x_x(rules, *point, params={}, replace_first_by_momentum=True)
        print(f"{sqrt_s:8.1f} {cos_theta:11.2f} {summed:16.8e} {ward:16.3e}")


if __name__ == "__main__":
    main()
