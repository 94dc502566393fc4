"""Identities every correct set of rules obeys, tested on tree amplitudes built from the rules.

For each process: Ward identities (a massless gauge boson's polarisation replaced by its
momentum gives zero, the other bosons kept physical), independence of the gauge parameters
(summed |M|^2 for several values of every xi, and against the unitary gauge where the model has
massive vectors), Lorentz invariance (random boosts and rotations), the high-energy behaviour of
processes with massive vectors (the sum of diagrams may not grow faster than unitarity allows,
even where single diagrams do), and crossing (|M|^2 of the process equals that of its crossed
process at crossed momenta, one sign per crossed fermion). Each identity reports its largest
relative deviation over seeded random phase-space points; deviations above the tolerance fail.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Sequence

import numpy as np
import sympy

from . import progress
from .amplitudes import Amplitude, amplitude
from .diagrams import MajoranaLinesUnsupported, find_diagrams
from .errors import UsageError
from .kinematics import phase_space, random_lorentz
from .process import Process, State, parse_process

if TYPE_CHECKING:
    from .model import Model
    from .rules import Rules

TOLERANCE = 1e-7
POINTS = 6
SEED = 20261204
XI_SETS = (0.3, 3.7, 11.0)


@dataclass(frozen=True)
class Check:
    """One identity on one process: its largest deviation and the verdict."""

    process: str
    diagrams: int
    identity: str
    deviation: float | None
    verdict: str  # pass, FAIL, n/a
    detail: str = ""


@dataclass(frozen=True)
class Report:
    """All checks of one model."""

    model: str
    tolerance: float
    points: int
    checks: tuple[Check, ...] = field(default_factory=tuple)

    @property
    def failed(self) -> tuple[Check, ...]:
        return tuple(c for c in self.checks if c.verdict == "FAIL")


def _energy(masses_in: list[float], masses_out: list[float], scale: float, poles: list[float]) -> float:
    """The centre-of-mass energy of the test points: above threshold, at the model's scale, off every pole.

    With massless external states the first guess is the largest mass itself, which sits exactly on the
    s-channel pole of that particle; so the energy moves up until no mass of the model lies within 5 %.
    """
    if len(masses_in) == 1:
        return masses_in[0]
    threshold = max(sum(masses_in), sum(masses_out))
    energy = threshold * 1.7 + scale * 1.37
    while any(abs(energy - m) < 0.05 * m for m in poles):
        energy *= 1.13
    return energy


def _relative(a: np.ndarray, b: np.ndarray) -> float:
    scale = np.maximum(np.abs(a), np.abs(b))
    scale = np.where(scale > 0, scale, 1.0)
    return float(np.max(np.abs(a - b) / scale))


class _Verifier:
    def __init__(self, rules: "Rules", unitary: "Rules | None", points: int, tolerance: float) -> None:
        self.rules, self.unitary, self.points, self.tolerance = rules, unitary, points, tolerance
        self.tables: dict = {}  # numeric vertices shared by every amplitude of these rules
        self.masses = [abs(complex(v)) for k, v in rules.model.parameter_values({}).items()
                       if not getattr(v, "ndim", 0)
                       and any(p.symbol == k and "mass" in p.roles for p in rules.model.parameters.values())]
        self.scale = max([1.0] + self.masses)

    def point(self, amp: Amplitude, seed: int, energy_factor: float = 1.0) -> np.ndarray:
        masses = amp.masses()
        n_in = len(amp.process.incoming)
        rng = np.random.default_rng(seed)
        energy = _energy(masses[:n_in], masses[n_in:], self.scale, self.masses) * energy_factor
        if n_in == 1 and energy_factor != 1.0:
            raise UsageError("a decay has a fixed energy")
        return phase_space(rng, self.points, masses[:n_in], masses[n_in:], energy)

    def verdict(self, deviation: float) -> str:
        return "pass" if np.isfinite(deviation) and deviation <= self.tolerance else "FAIL"

    def run(self, process: Process) -> list[Check]:
        amp = Amplitude(self.rules, process, find_diagrams(self.rules, process, 0), self.tables)
        name, count = str(process), len(amp.diagrams)
        p = self.point(amp, SEED)
        reference = amp.summed_square(p)
        if not np.all(np.isfinite(reference)):
            return [Check(name, count, "finite |M|^2", float("inf"), "FAIL", "|M|^2 is not a finite number")]
        checks: list[Check] = []
        checks += self.ward(amp, p, reference)
        checks += self.gauge_parameters(amp, p, reference)
        checks.append(self.lorentz(amp, p, reference))
        checks += self.growth(amp)
        checks += self.crossing(amp)
        return [Check(name, count, c.identity, c.deviation, c.verdict, c.detail) for c in checks]

    def ward(self, amp: Amplitude, p: np.ndarray, reference: np.ndarray) -> list[Check]:
        # away from the centre-of-mass frame: there a transverse eps_2 is also orthogonal to k_1, which
        # would hide a missing contact term in a two-boson process
        p = np.einsum("nab,njb->nja", random_lorentz(np.random.default_rng(SEED + 4), len(p)), p)
        reference = amp.summed_square(p)
        out = []
        for j, state in enumerate(amp.process.states):
            group = self.rules.model.boson_group(state.field)
            if state.kind != "vector" or group is None or amp.masses()[j] != 0:
                continue
            broken = amp.summed_square(p, gauge_leg=j)
            # sum |M|^2 with eps -> k/E against sum |M|^2 with physical polarisations, point by point
            deviation = float(np.max(np.abs(broken) / np.where(reference > 0, reference, 1.0)))
            out.append(Check("", 0, f"Ward identity, state {j + 1} ({state.label})", deviation, self.verdict(deviation)))
        return out

    def gauge_parameters(self, amp: Amplitude, p: np.ndarray, reference: np.ndarray) -> list[Check]:
        groups = [g for g in sorted(self.rules.model.groups.values(), key=lambda g: g.name) if g.fixing == "lorenz"]
        out = []
        if groups:
            deviation = 0.0
            for shift in range(len(XI_SETS)):
                values = {str(g.xi): XI_SETS[(shift + k) % len(XI_SETS)] for k, g in enumerate(groups)}
                deviation = max(deviation, _relative(amp.summed_square(p, values), reference))
            names = ", ".join(str(g.xi) for g in groups)
            out.append(Check("", 0, "gauge-parameter independence", deviation, self.verdict(deviation),
                             f"{names} in {', '.join(str(x) for x in XI_SETS)} against 1"))
        if self.unitary is not None:
            other = Amplitude(self.unitary, amp.process, find_diagrams(self.unitary, amp.process, 0), self.tables)
            deviation = _relative(other.summed_square(p), reference)
            out.append(Check("", 0, "unitary gauge", deviation, self.verdict(deviation),
                             f"{len(other.diagrams)} diagrams in unitary gauge"))
        return out

    def lorentz(self, amp: Amplitude, p: np.ndarray, reference: np.ndarray) -> Check:
        transform = random_lorentz(np.random.default_rng(SEED + 1), len(p))
        moved = np.einsum("nab,njb->nja", transform, p)
        deviation = _relative(amp.summed_square(moved), reference)
        return Check("", 0, "Lorentz invariance", deviation, self.verdict(deviation), "random boost and rotation")

    def growth(self, amp: Amplitude) -> list[Check]:
        states = amp.process.states
        massive = [j for j, s in enumerate(states) if s.kind == "vector" and amp.masses()[j] > 0]
        if not massive or len(amp.process.incoming) != 2:
            return []
        energies = (30.0, 300.0)
        totals, singles = [], []
        for factor in energies:
            p = self.point(amp, SEED + 2, factor)
            totals.append(np.median(amp.summed_square(p)))
            singles.append([np.median(amp.summed_square(p, diagrams=[k])) for k in range(len(amp.diagrams))])
        step = 2 * np.log(energies[1] / energies[0])  # in powers of s
        total = float(np.log(totals[1] / totals[0]) / step) if totals[0] > 0 and totals[1] > 0 else 0.0
        single = max((float(np.log(b / a) / step) for a, b in zip(*singles) if a > 0 and b > 0), default=0.0)
        allowed = 4 - len(states)  # |M|^2 of an n-point amplitude may grow at most like s^(4-n)
        excess = max(0.0, total - allowed)
        verdict = "pass" if excess < 0.05 else "FAIL"
        return [Check("", 0, "high-energy growth", excess, verdict,
                      f"sum of diagrams ~ s^{total:.2f}, largest single diagram ~ s^{single:.2f}, allowed s^{allowed}")]

    def crossing(self, amp: Amplitude) -> list[Check]:
        process = amp.process
        if len(process.incoming) != 2:
            return []
        out = []
        b = 1
        for c in range(2, len(process.states)):
            crossed = _cross(process, b, c)
            try:
                other = Amplitude(self.rules, crossed, find_diagrams(self.rules, crossed, 0), self.tables)
            except UsageError:
                continue
            p_crossed = self.point(other, SEED + 3 + c)
            expected = other.summed_square(p_crossed)
            # the crossed process lists a, cbar | bbar, others: map its momenta back
            p = p_crossed.copy()
            p[:, b], p[:, c] = -p_crossed[:, c], -p_crossed[:, b]
            sign = (-1) ** sum(1 for j in (b, c) if process.states[j].fermion)
            got = sign * amp.summed_square(p, spin_sums=True)
            deviation = _relative(got, expected)
            out.append(Check("", 0, f"crossing to {crossed}", deviation, self.verdict(deviation)))
        return out


def _cross(process: Process, b: int, c: int) -> Process:
    """Swap incoming state b with outgoing state c, each turned into its antiparticle."""
    states = list(process.states)
    sb, sc = states[b], states[c]
    new_b = _flipped(sc, incoming=True)
    new_c = _flipped(sb, incoming=False)
    states[b], states[c] = new_b, new_c
    n_in = len(process.incoming)
    crossed = Process("", tuple(states[:n_in]), tuple(states[n_in:]))
    return Process(str(crossed), crossed.incoming, crossed.outgoing)


def _flipped(state: State, incoming: bool) -> State:
    label = state.anti_label
    return State(label, state.field, not state.anti if state.is_complex else state.anti, incoming, state.kind,
                 state.is_complex, state.representations)


# ------------------------------------------------------------------ the default set

def light_states(rules: "Rules", max_mass: float | None = None) -> list[str]:
    """Physical states (particles, then antiparticles) whose propagator has its pole at the declared mass."""
    from .rules import P2

    # numbers only: vector and matrix parameters (index spaces) never set a mass
    values = {k: v for k, v in rules.model.parameter_values({}).items() if not getattr(v, "ndim", 0)}
    out = []
    for name, f in rules.model.fields.items():
        if f.kind == "ghost":
            continue
        mass = complex(f.mass.subs(values)).real if f.mass.free_symbols else float(f.mass)
        if max_mass is not None and mass > max_mass:
            continue
        prop = rules.propagator(name)
        parts = [prop.a] + (list(prop.chiral) if prop.chiral else [])
        poles = [sympy.denom(sympy.together(x)).subs(values).subs(P2, mass**2) for x in parts if x != 0]
        if not poles or not any(abs(complex(d)) < 1e-9 * max(1.0, mass**2) for d in poles):
            continue  # no pole at the declared mass (e.g. a scalar with a negative mass squared)
        out.append(name)
        if f.is_complex or f.kind == "dirac":
            out.append(f"bar({name})" if f.kind == "dirac" else f"dag({name})")
    return out


def default_processes(rules: "Rules", max_mass: float | None = None, limit: int = 40) -> list[str]:
    """Every 2 -> 2 process among the light states, one per crossing class, with a tree diagram."""
    from .process import charge_balance

    labels = light_states(rules, max_mass)
    # one parse per state and side; the processes are then put together without parsing
    made = {(label, side): getattr(parse_process(rules.model, f"{label} -> {label}"), side)[0]
            for label in labels for side in ("incoming", "outgoing")}
    seen: set[tuple[str, ...]] = set()
    out: list[str] = []
    for a, b in itertools.combinations_with_replacement(labels, 2):
        for c, d in itertools.combinations_with_replacement(labels, 2):
            text = f"{a} {b} -> {c} {d}"
            process = Process(text, (made[(a, "incoming")], made[(b, "incoming")]),
                              (made[(c, "outgoing")], made[(d, "outgoing")]))
            key = tuple(sorted(s.attach for s in process.states))
            if key in seen or charge_balance(rules.model, process):
                continue
            seen.add(key)
            try:
                found = find_diagrams(rules, process, 0)
            except MajoranaLinesUnsupported:
                continue  # left out of the default set, and said so in the README
            if found:
                out.append(text)
                if len(out) >= limit:
                    return out
    return out


def verify_model(model: "Model", processes: Sequence[str] | None = None, *, points: int = POINTS,
                 tolerance: float = TOLERANCE, max_mass: float | None = None, limit: int = 40) -> Report:
    """Check every identity on the given processes (the default set without them)."""
    rules = model.derive(gauge="xi")
    massive = any(f.kind == "vector" and f.mass != 0 for f in model.fields.values())
    unitary = model.derive(gauge="unitary") if massive else None
    chosen = list(processes) if processes else default_processes(rules, max_mass, limit)
    parsed = [parse_process(model, text) for text in chosen]
    verifier = _Verifier(rules, unitary, points, tolerance)
    checks: list[Check] = []
    step = progress.stage("verifying processes", total=len(parsed))  # a bar on a terminal
    for process in parsed:
        step.advance()
        if not find_diagrams(rules, process, 0):
            raise UsageError(f"'{process}' has no tree-level diagram in this model",
                             hint="the process needs a chain of vertices joining all its states")
        checks += verifier.run(process)
    return Report(model.name, tolerance, points, tuple(checks))
