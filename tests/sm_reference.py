"""The Standard Model's Feynman rules in R_xi gauge, as a reference table in our conventions.

Source: J. C. Romao and J. P. Silva, "A resource for signs and Feynman diagrams of the Standard
Model", arXiv:1209.6213, its R_xi-gauge rules (from memory: the paper could not be read while this
was written), cross-read with Cheng & Li, "Gauge theory of elementary particle physics", ch. 11
(from memory), and re-derived by hand where a sign had to be fixed (the derivations are in the
comments). Every entry below is marked "(from memory)" for that reason; `test_sm_reference.py`
checks the table against itself wherever an identity allows.

How their sign parameters map onto ours (README, Conventions):
- Their covariant derivative carries a sign eta in front of each coupling,
  D = d - i eta g T.W - i eta' g' Y B - i eta_s g_s T.G  (from memory). Our `covariant minus`
  (the default, D = d - i g ...) is eta = eta' = eta_s = +1; `covariant plus` is all three -1.
  Every vertex odd in the gauge couplings changes sign with them; `Rule.odd` says which entries
  are (a vector mass counts as one coupling, m_W = g v/2, so e m_W is even; the Yukawa couplings
  and the scalar potential do not change at all).
- Their Z/A rotation sign (eta_Z, from memory) is +1 here: Z = c W3 - s B, A = s W3 + c B, so
  e = g s = g' c > 0 and Q = T3 + Y.
- W+ = (W1 - i W2)/sqrt(2) is our complex field `W` (leg `W`: an incoming W+ or outgoing W-);
  `dag(W)` is W-. The doublet is H = (Gp, (v + h + i G0)/sqrt(2)), our `Gp` = their phi+.
- The conjugate doublet for the up-type Yukawa is Hc = (conj(phi0), -G-), i.e. alt[1,2] = +1;
  flavour: Q_i = (u_L,i, V_ij d_L,j) with down-type and lepton Yukawas diagonal in the mass basis.
- Gauge fixing F_Z = d.Z - xi_Z m_Z G0, F_+ = d.W - i xi_W m_W Gp, F_A = d.A, with
  L_gf = -|F|^2/(2 xi) per real vector (1/xi for the complex W), L_ghost = -cbar (dF/dalpha) c.

Our vertex convention: vertex = i x (functional derivative of the action), all momenta incoming,
legs in the order the key lists them; vector legs carry one upper Lorentz axis, fermion legs the
Dirac matrix between bar(psi) and psi. A "Vertex" below is a function of the legs' momenta
(upper components, shape (4,)) and a `Point` of parameter values, returning the numeric array in
that layout. Propagators likewise take one momentum.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from conftest import ETA, GAMMA, GAMMA5, ONE, PL, PR

Array = np.ndarray


@dataclass(frozen=True)
class Point:
    """Parameter values of one test point: the electroweak inputs and derived quantities."""

    g: float = 0.652
    sw: float = 0.4808
    v: float = 246.22
    mh: float = 125.25
    xi_A: float = 1.7
    xi_Z: float = 2.3
    xi_W: float = 0.6
    mf: tuple[float, float] = (1.27, 0.093)  # an up-type and a down-type mass in one generation pair
    ckm: complex = 0.2245 + 0.0001j  # one CKM entry V_ij

    @property
    def cw(self) -> float:
        return float(np.sqrt(1 - self.sw ** 2))

    @property
    def e(self) -> float:
        return self.g * self.sw

    @property
    def mw(self) -> float:
        return self.g * self.v / 2

    @property
    def mz(self) -> float:
        return self.mw / self.cw

    @property
    def lam(self) -> float:
        return self.mh ** 2 / (2 * self.v ** 2)


def _gslash_free(coefficient: complex, matrix: Array) -> Array:
    """c gamma^mu M in the legs' layout (bar(f) alpha, f beta, V mu): axes (alpha, beta, mu)."""
    return coefficient * np.einsum("mab,bc->acm", GAMMA, matrix)


def _gauge3(p1: Array, p2: Array, p3: Array) -> Array:
    """g^{mu nu}(p1 - p2)^rho + g^{nu rho}(p2 - p3)^mu + g^{rho mu}(p3 - p1)^nu, upper indices."""
    return (np.einsum("mn,r->mnr", ETA, p1 - p2) + np.einsum("nr,m->mnr", ETA, p2 - p3)
            + np.einsum("rm,n->mnr", ETA, p3 - p1))


def _gauge4(first: str) -> Array:
    """2 g g - g g - g g with the doubled pair named: 'ab|cd' means 2 g^{ab} g^{cd} (legs 0..3)."""
    pairs = {"01|23": (0, 1), "02|13": (0, 2), "03|12": (0, 3)}
    doubled = pairs[first]
    out = np.zeros((4, 4, 4, 4), dtype=complex)
    for key, (a, b) in pairs.items():
        c, d = [k for k in range(4) if k not in (a, b)]
        term = np.einsum("ij,kl->ijkl", ETA, ETA)
        order = [a, b, c, d]
        term = np.transpose(term, np.argsort(order))
        out += (2 if (a, b) == doubled else -1) * term
    return out


# ------------------------------------------------------------------ the table
# Each entry: legs (our labels), a function (momenta..., point) -> array, whether it is odd in the
# gauge couplings (flips with `covariant plus`), and the source remark.

@dataclass(frozen=True)
class Rule:
    legs: tuple[str, ...]
    kind: str  # the vertex type, for the count by type
    value: Callable[..., Array]
    odd: bool  # odd in the gauge couplings: flips sign under `covariant plus`
    note: str = "(from memory)"


def _ffv(coupling: Callable[[Point], Array]) -> Callable[..., Array]:
    return lambda p1, p2, p3, pt: _gslash_free(1j, coupling(pt))


def _fermion_gauge(pt: Point, q: float, t3: float) -> tuple[Array, Array]:
    """The photon and Z couplings of a fermion of charge q and weak isospin t3 (left part)."""
    photon = pt.e * q * ONE
    z = pt.g / pt.cw * (t3 * PL - pt.sw ** 2 * q * ONE)
    return photon, z


def table() -> list[Rule]:
    """The SM vertices in R_xi gauge in our conventions (one generation pair; CKM entry `ckm`)."""
    rules: list[Rule] = []
    # --- gauge-fermion: i e Q gamma^mu; i g/cw gamma^mu (T3 PL - sw^2 Q); i g/sqrt2 V gamma^mu PL
    # R&S eqs. for f f gamma, f f Z, f f' W (from memory); Peskin & Schroeder eq. (20.80) (from memory)
    for name, q, t3 in (("u", 2 / 3, 0.5), ("d", -1 / 3, -0.5), ("nu", 0.0, 0.5), ("ell", -1.0, -0.5)):
        if q != 0:
            rules.append(Rule((f"bar({name})", name, "A"), "gauge-fermion",
                              (lambda q=q, t3=t3: _ffv(lambda pt: _fermion_gauge(pt, q, t3)[0]))(), True))
        rules.append(Rule((f"bar({name})", name, "Z"), "gauge-fermion",
                          (lambda q=q, t3=t3: _ffv(lambda pt: _fermion_gauge(pt, q, t3)[1]))(), True))
    rules.append(Rule(("bar(u)", "d", "W"), "gauge-fermion", _ffv(lambda pt: pt.g / np.sqrt(2) * pt.ckm * PL), True))
    rules.append(Rule(("bar(d)", "u", "dag(W)"), "gauge-fermion",
                      _ffv(lambda pt: pt.g / np.sqrt(2) * np.conj(pt.ckm) * PL), True))
    rules.append(Rule(("bar(nu)", "ell", "W"), "gauge-fermion", _ffv(lambda pt: pt.g / np.sqrt(2) * PL), True))
    rules.append(Rule(("bar(ell)", "nu", "dag(W)"), "gauge-fermion", _ffv(lambda pt: pt.g / np.sqrt(2) * PL), True))

    # --- triple gauge: (W mu p1, dag(W) nu p2, V rho p3) = -i g_V [g(p1-p2) + g(p2-p3) + g(p3-p1)],
    # g_A = e, g_Z = g cw (R&S W W gamma and W W Z, from memory; derived by hand from the SU(2)
    # vertex g eps^{abc}[...] with W1 = (W + W-)/sqrt2, W2 = i(W - W-)/sqrt2: eps^{ab3} u_a ubar_b = -i)
    rules.append(Rule(("W", "dag(W)", "A"), "triple gauge",
                      lambda p1, p2, p3, pt: -1j * pt.e * _gauge3(p1, p2, p3), True))
    rules.append(Rule(("W", "dag(W)", "Z"), "triple gauge",
                      lambda p1, p2, p3, pt: -1j * pt.g * pt.cw * _gauge3(p1, p2, p3), True))

    # --- quartic gauge (R&S, from memory): WWWW = i g^2 [2 g13 g24 - g12 g34 - g14 g23] for
    # (W, dag(W), W, dag(W)); W W V V' = -i g_V g_V' [2 g01 g23 - g02 g13 - g03 g12]
    rules.append(Rule(("W", "dag(W)", "W", "dag(W)"), "quartic gauge",
                      lambda *a: 1j * a[-1].g ** 2 * _gauge4("02|13"), False))
    for legs, c in ((("W", "dag(W)", "A", "A"), lambda pt: pt.e ** 2),
                    (("W", "dag(W)", "Z", "Z"), lambda pt: (pt.g * pt.cw) ** 2),
                    (("W", "dag(W)", "A", "Z"), lambda pt: pt.e * pt.g * pt.cw)):
        rules.append(Rule(legs, "quartic gauge", (lambda c=c: lambda *a: -1j * c(a[-1]) * _gauge4("01|23"))(), False))

    # --- Higgs-gauge (R&S, from memory; from (1 + h/v)^2 (mW^2 W W- + mZ^2 Z Z/2)):
    metric = lambda coupling: (lambda *a: 1j * coupling(a[-1]) * ETA)  # noqa: E731
    rules += [
        Rule(("W", "dag(W)", "h"), "Higgs-gauge", lambda *a: 1j * a[-1].g * a[-1].mw * ETA, False),
        Rule(("Z", "Z", "h"), "Higgs-gauge", lambda *a: 1j * a[-1].g * a[-1].mz / a[-1].cw * ETA, False),
        Rule(("W", "dag(W)", "h", "h"), "Higgs-gauge", metric(lambda pt: pt.g ** 2 / 2), False),
        Rule(("Z", "Z", "h", "h"), "Higgs-gauge", metric(lambda pt: pt.g ** 2 / (2 * pt.cw ** 2)), False),
        # Goldstone pairs with two vectors (R&S, from memory; |M H|^2 of the doublet, by hand)
        Rule(("W", "dag(W)", "G0", "G0"), "Goldstone-gauge", metric(lambda pt: pt.g ** 2 / 2), False),
        Rule(("Z", "Z", "G0", "G0"), "Goldstone-gauge", metric(lambda pt: pt.g ** 2 / (2 * pt.cw ** 2)), False),
        Rule(("W", "dag(W)", "Gp", "dag(Gp)"), "Goldstone-gauge", metric(lambda pt: pt.g ** 2 / 2), False),
        Rule(("A", "A", "Gp", "dag(Gp)"), "Goldstone-gauge", metric(lambda pt: 2 * pt.e ** 2), False),
        Rule(("Z", "Z", "Gp", "dag(Gp)"), "Goldstone-gauge",
             metric(lambda pt: pt.g ** 2 * (pt.cw ** 2 - pt.sw ** 2) ** 2 / (2 * pt.cw ** 2)), False),
        Rule(("A", "Z", "Gp", "dag(Gp)"), "Goldstone-gauge",
             metric(lambda pt: pt.e * pt.g * (pt.cw ** 2 - pt.sw ** 2) / pt.cw), False),
        # W G V with one vev: (g v/2) G- W+ (e A - g sw^2/cw Z) + h.c. (even: e mW = e g v/2)
        Rule(("W", "dag(Gp)", "A"), "Goldstone-gauge", metric(lambda pt: pt.e * pt.mw), False),
        Rule(("dag(W)", "Gp", "A"), "Goldstone-gauge", metric(lambda pt: pt.e * pt.mw), False),
        Rule(("W", "dag(Gp)", "Z"), "Goldstone-gauge", metric(lambda pt: -pt.g * pt.mz * pt.sw ** 2), False),
        Rule(("dag(W)", "Gp", "Z"), "Goldstone-gauge", metric(lambda pt: -pt.g * pt.mz * pt.sw ** 2), False),
        # ... and with h or G0 instead of the vev: (g/2) G- W+ (h + i G0)(e A - g sw^2/cw Z) + h.c.
        Rule(("W", "dag(Gp)", "A", "h"), "Goldstone-gauge", metric(lambda pt: pt.e * pt.g / 2), False),
        Rule(("W", "dag(Gp)", "Z", "h"), "Goldstone-gauge",
             metric(lambda pt: -pt.g ** 2 * pt.sw ** 2 / (2 * pt.cw)), False),
        Rule(("W", "dag(Gp)", "A", "G0"), "Goldstone-gauge", metric(lambda pt: 1j * pt.e * pt.g / 2), False),
        Rule(("dag(W)", "Gp", "A", "G0"), "Goldstone-gauge", metric(lambda pt: -1j * pt.e * pt.g / 2), False),
        Rule(("W", "dag(Gp)", "Z", "G0"), "Goldstone-gauge",
             metric(lambda pt: -1j * pt.g ** 2 * pt.sw ** 2 / (2 * pt.cw)), False),
    ]
    # --- scalar-scalar-vector, (S1 p1, S2 p2, V mu): from |D H|^2 by hand (R&S, from memory)
    rules += [
        Rule(("Gp", "dag(Gp)", "A"), "Goldstone-gauge", lambda p1, p2, p3, pt: 1j * pt.e * (p1 - p2), True),
        Rule(("Gp", "dag(Gp)", "Z"), "Goldstone-gauge",
             lambda p1, p2, p3, pt: 1j * pt.g * (pt.cw ** 2 - pt.sw ** 2) / (2 * pt.cw) * (p1 - p2), True),
        Rule(("h", "G0", "Z"), "Higgs-gauge", lambda p1, p2, p3, pt: pt.g / (2 * pt.cw) * (p2 - p1), True),
        Rule(("h", "dag(Gp)", "W"), "Higgs-gauge", lambda p1, p2, p3, pt: 0.5j * pt.g * (p1 - p2), True),
        Rule(("h", "Gp", "dag(W)"), "Higgs-gauge", lambda p1, p2, p3, pt: -0.5j * pt.g * (p1 - p2), True),
        Rule(("G0", "dag(Gp)", "W"), "Goldstone-gauge", lambda p1, p2, p3, pt: pt.g / 2 * (p2 - p1), True),
        Rule(("G0", "Gp", "dag(W)"), "Goldstone-gauge", lambda p1, p2, p3, pt: pt.g / 2 * (p2 - p1), True),
    ]
    # --- scalar self-couplings: V = lam (H^dag H - v^2/2)^2 after the tadpole condition mu2 = lam v^2,
    # lam = mh^2/(2 v^2) (R&S, from memory; Peskin & Schroeder ch. 20 (from memory))
    const = lambda c: (lambda *a: np.asarray(-1j * c(a[-1])))  # noqa: E731
    rules += [
        Rule(("h", "h", "h"), "scalar self", const(lambda pt: 6 * pt.lam * pt.v), False),
        Rule(("h", "G0", "G0"), "scalar self", const(lambda pt: 2 * pt.lam * pt.v), False),
        Rule(("h", "Gp", "dag(Gp)"), "scalar self", const(lambda pt: 2 * pt.lam * pt.v), False),
        Rule(("h", "h", "h", "h"), "scalar self", const(lambda pt: 6 * pt.lam), False),
        Rule(("G0", "G0", "G0", "G0"), "scalar self", const(lambda pt: 6 * pt.lam), False),
        Rule(("h", "h", "G0", "G0"), "scalar self", const(lambda pt: 2 * pt.lam), False),
        Rule(("h", "h", "Gp", "dag(Gp)"), "scalar self", const(lambda pt: 2 * pt.lam), False),
        Rule(("G0", "G0", "Gp", "dag(Gp)"), "scalar self", const(lambda pt: 2 * pt.lam), False),
        Rule(("Gp", "Gp", "dag(Gp)", "dag(Gp)"), "scalar self", const(lambda pt: 4 * pt.lam), False),
    ]
    # --- Yukawa and Goldstone-fermion (R&S, from memory; signs fixed by hand from -Yd Qbar H dR -
    # Yu Qbar Hc uR + h.c. with Hc = (conj(phi0), -G-)): h f f = -i m/v; G0 f f = -2 T3 (m/v) gamma5;
    # Gp ubar d = i sqrt2/v V (mu PL - md PR); dag(Gp) dbar u = i sqrt2/v conj(V) (mu PR - md PL)
    mass = lambda pt, k: pt.mf[k]  # noqa: E731
    rules += [
        Rule(("bar(u)", "u", "h"), "Yukawa", lambda *a: -1j * mass(a[-1], 0) / a[-1].v * ONE, False),
        Rule(("bar(d)", "d", "h"), "Yukawa", lambda *a: -1j * mass(a[-1], 1) / a[-1].v * ONE, False),
        Rule(("bar(u)", "u", "G0"), "Goldstone-fermion", lambda *a: -mass(a[-1], 0) / a[-1].v * GAMMA5, False),
        Rule(("bar(d)", "d", "G0"), "Goldstone-fermion", lambda *a: mass(a[-1], 1) / a[-1].v * GAMMA5, False),
        Rule(("bar(u)", "d", "Gp"), "Goldstone-fermion",
             lambda *a: 1j * np.sqrt(2) / a[-1].v * a[-1].ckm * (mass(a[-1], 0) * PL - mass(a[-1], 1) * PR), False),
        Rule(("bar(d)", "u", "dag(Gp)"), "Goldstone-fermion",
             lambda *a: 1j * np.sqrt(2) / a[-1].v * np.conj(a[-1].ckm) * (mass(a[-1], 0) * PR - mass(a[-1], 1) * PL),
             False),
    ]
    # --- ghosts: masses xi m^2, the Higgs couplings -i xi m^2/v (the mass term times (1 + h/v));
    # the charged ghost's photon coupling -i e pbar^mu on the antighost's momentum, from the SU(2)
    # ghost vertex -g f^{abc} pbar rotated like the vectors (R&S ghost rules, from memory)
    rules += [
        Rule(("bar(gh_Z)", "gh_Z", "h"), "ghost-scalar", const(lambda pt: pt.xi_Z * pt.mz ** 2 / pt.v), False),
        Rule(("bar(gh_W)", "gh_W", "h"), "ghost-scalar", const(lambda pt: pt.xi_W * pt.mw ** 2 / pt.v), False),
        Rule(("bar(gh_W)", "gh_W", "A"), "ghost-gauge", lambda p1, p2, p3, pt: -1j * pt.e * p1, True),
        Rule(("bar(gh_W)", "gh_W", "Z"), "ghost-gauge", lambda p1, p2, p3, pt: -1j * pt.g * pt.cw * p1, True),
    ]
    return rules


# ------------------------------------------------------------------ propagators (from memory, R&S)
def vector_propagator(p: Array, m: float, xi: float) -> Array:
    """-i/(p^2 - m^2) [g - (1 - xi) p p/(p^2 - xi m^2)], upper indices (R&S, from memory)."""
    p2 = (p @ ETA @ p).real
    return -1j / (p2 - m ** 2) * (ETA - (1 - xi) * np.outer(p, p) / (p2 - xi * m ** 2))


def scalar_propagator(p: Array, mass_squared: float) -> complex:
    """i/(p^2 - M^2): Higgs (M = mh), Goldstones and ghosts (M^2 = xi m_V^2) (R&S, from memory)."""
    return 1j / ((p @ ETA @ p).real - mass_squared)


def fermion_propagator(p: Array, m: float) -> Array:
    """i(pslash + m)/(p^2 - m^2), p along the arrow (common practice, no source)."""
    slash = np.einsum("m,mab->ab", ETA @ p, GAMMA)
    return 1j * (slash + m * ONE) / ((p @ ETA @ p).real - m ** 2)


def propagators(pt: Point) -> dict[str, Callable[[Array], Array | complex]]:
    """Every boson propagator of the table by its field, at the point `pt`."""
    return {
        "A": lambda p: vector_propagator(p, 0.0, pt.xi_A),
        "Z": lambda p: vector_propagator(p, pt.mz, pt.xi_Z),
        "W": lambda p: vector_propagator(p, pt.mw, pt.xi_W),
        "h": lambda p: scalar_propagator(p, pt.mh ** 2),
        "G0": lambda p: scalar_propagator(p, pt.xi_Z * pt.mz ** 2),
        "Gp": lambda p: scalar_propagator(p, pt.xi_W * pt.mw ** 2),
        "gh_A": lambda p: scalar_propagator(p, 0.0),
        "gh_Z": lambda p: scalar_propagator(p, pt.xi_Z * pt.mz ** 2),
        "gh_W": lambda p: scalar_propagator(p, pt.xi_W * pt.mw ** 2),
    }


__all__ = ["Point", "Rule", "fermion_propagator", "propagators", "scalar_propagator", "table",
           "vector_propagator"]
