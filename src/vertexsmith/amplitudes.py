"""Numeric tree amplitudes built from the derived rules, over many phase-space points at once.

    >>> import vertexsmith
    >>> from vertexsmith.amplitudes import amplitude
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive()
    >>> amp = amplitude(rules, "ele bar(ele) -> muon bar(muon)")
    >>> len(amp.diagrams)
    1

Each diagram is contracted leaf to root: a vertex takes the arrays of the subtrees on its legs
(external wave functions, or a subtree times the propagator of its line) and passes on one array
whose axes are the points, the external states collected so far, and its own open leg. The sum
of diagrams, each with its fermion sign, is M (the product of vertices and propagators is i M).
Momenta are given per state as physical momenta: incoming states with their own momentum,
outgoing states with theirs; a vertex sees +p for an incoming and -p for an outgoing state.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import TYPE_CHECKING, Mapping, Sequence

import numpy as np

from .batch import VertexTable
from .diagrams import Diagram, find_diagrams
from .errors import UsageError
from .kinematics import bar, fermion_spin_sum, lower, polarisations, u_spinors, v_spinors, vector_spin_sum
from .process import Process, State, parse_process

if TYPE_CHECKING:
    from .rules import Leg, Rules


@dataclass(frozen=True)
class External:
    """How one state enters the contraction: its number of spin states and colour dimensions."""

    state: State
    helicities: int
    colours: tuple[int, ...]

    @property
    def shape(self) -> tuple[int, ...]:
        return (self.helicities,) + self.colours


class Amplitude:
    """The tree amplitude of one process: its diagrams and a vectorised numeric evaluator."""

    def __init__(self, rules: "Rules", process: Process, diagrams: Sequence[Diagram],
                 tables: dict[tuple, VertexTable] | None = None) -> None:
        self.rules = rules
        self.process = process
        self.diagrams = tuple(diagrams)
        if not self.diagrams:
            raise UsageError(f"'{process}' has no tree-level diagram in this model",
                             hint="every state's line must end on a vertex; check the process against the "
                                  "vertices ('vertexsmith rules MODEL')")
        # numeric vertices per set of values; amplitudes of one rule set may share them
        self._tables: dict[tuple, VertexTable] = {} if tables is None else tables
        self._masses: dict[tuple, list[float]] = {}

    # ---------------------------------------------------------------- public evaluation

    def masses(self, values: Mapping[str, complex] | None = None) -> list[float]:
        """The mass of each state, as the model's numbers (or the values given) make it."""
        key = _values_key(values)
        if key not in self._masses:
            numbers = self._table(values).values
            out = []
            for state in self.process.states:
                mass = self.rules.model.fields[state.field].mass
                out.append(float(complex(mass.subs(numbers)).real) if mass.free_symbols else float(mass))
            self._masses[key] = out
        return list(self._masses[key])

    def evaluate(self, momenta: np.ndarray, values: Mapping[str, complex] | None = None, *,
                 diagrams: Sequence[int] | None = None, gauge_leg: int | None = None,
                 open_legs: bool = False) -> np.ndarray:
        """M at each point: shape (N, per state: spin states, colour indices...), states in process order.

        momenta: (N, states, 4) physical momenta. diagrams: indices of the diagrams to include (all by
        default). gauge_leg: replace that vector state's polarisation by its momentum (Ward identity).
        open_legs: leave the spinor and Lorentz index of every state open (4 values each) instead of
        contracting with spinors and polarisation vectors.
        """
        pieces = self.pieces(momenta, values, diagrams=diagrams, gauge_leg=gauge_leg, open_legs=open_legs)
        n = len(self.process.states)
        externals = self._externals(open_legs, gauge_leg)
        total = sum(np.multiply.outer(spin, colour) for spin, colour in pieces)
        # interleave: (N, h1, c1..., h2, c2..., ...)
        colour_axes, position = [], 1 + n
        for ext in externals:
            colour_axes.append(list(range(position, position + len(ext.colours))))
            position += len(ext.colours)
        permutation = [0] + [x for j in range(n) for x in [1 + j] + colour_axes[j]]
        return np.transpose(np.asarray(total), permutation)

    def summed_square(self, momenta: np.ndarray, values: Mapping[str, complex] | None = None, *,
                      diagrams: Sequence[int] | None = None, gauge_leg: int | None = None,
                      spin_sums: bool = False) -> np.ndarray:
        """|M|^2 summed over all spins, polarisations and colours: shape (N,).

        Colour is summed through the colour matrix of the pieces (sum over colours of C_i C_j*).
        spin_sums=True contracts open indices with the spin-sum matrices instead of explicit states,
        which stays valid at the unphysical momenta of a crossed process.
        """
        pieces = self.pieces(momenta, values, diagrams=diagrams, gauge_leg=gauge_leg, open_legs=spin_sums)
        spins = [spin for spin, _ in pieces]
        if spin_sums:
            p = self._momenta(momenta)
            masses = self.masses(values)
            summed = []
            for spin in spins:
                for j in range(len(self.process.states)):
                    sums = self._spin_sum(j, p[:, j], masses[j])
                    if sums is not None:
                        spin = np.moveaxis(np.einsum("na...,nab->nb...", np.moveaxis(spin, 1 + j, 1), sums), 1, 1 + j)
                summed.append(spin)
        else:
            summed = spins
        count = spins[0].shape[0]
        total = np.zeros(count)
        for a, (left, colour_a) in enumerate(zip(summed, (c for _, c in pieces))):
            for b, (right, colour_b) in enumerate(zip(spins, (c for _, c in pieces))):
                colour = complex(np.sum(colour_a * colour_b.conj()))
                if colour == 0:
                    continue
                total = total + (colour * np.sum((left * right.conj()).reshape(count, -1), axis=1)).real
        return total

    def pieces(self, momenta: np.ndarray, values: Mapping[str, complex] | None = None, *,
               diagrams: Sequence[int] | None = None, gauge_leg: int | None = None,
               open_legs: bool = False) -> list[tuple[np.ndarray, np.ndarray]]:
        """M as a sum of (spin array (N, one axis per state), colour array (colour axes per state)) pairs."""
        p = self._momenta(momenta)
        table = self._table(values)
        masses = self.masses(values)
        wave = [self._wave(j, p[:, j], masses[j], gauge_leg == j, open_legs) for j in range(len(masses))]
        signs = np.array([1.0 if s.incoming else -1.0 for s in self.process.states])
        incoming = p * signs[None, :, None]
        out: list[tuple[np.ndarray, np.ndarray]] = []
        for k in (range(len(self.diagrams)) if diagrams is None else diagrams):
            d = self.diagrams[k]
            flow = _Flow(self, d, incoming)
            parts = [table.vertex_parts(self.rules.vertices[t], flow.vertex_momenta(v)) for v, t in enumerate(d.vertices)]
            for choice in itertools.product(*[range(len(x)) for x in parts]):
                spin = self._contract(d, "spin", [parts[v][c][0] for v, c in enumerate(choice)], flow, wave, table)
                colour = self._contract(d, "colour", [parts[v][c][1][None] for v, c in enumerate(choice)], flow, wave,
                                        table)[0]
                _merge(out, d.sign * spin / 1j, colour)
        if not out:  # every vertex of every diagram vanished at these values
            spin_shape = (len(p),) + tuple(w.shape[1] for w in wave)
            colour_shape = tuple(c for ext in self._externals() for c in ext.colours)
            out.append((np.zeros(spin_shape, dtype=complex), np.zeros(colour_shape, dtype=complex)))
        return out

    # ---------------------------------------------------------------- pieces

    def _momenta(self, momenta: np.ndarray) -> np.ndarray:
        p = np.asarray(momenta, dtype=complex)
        if p.ndim == 2:
            p = p[None]
        n = len(self.process.states)
        if p.ndim != 3 or p.shape[1:] != (n, 4):
            raise UsageError(f"momenta for '{self.process}' have shape (points, {n}, 4), got {p.shape}")
        return p

    def _table(self, values: Mapping[str, complex] | None) -> VertexTable:
        key = (id(self.rules),) + _values_key(values)
        if key not in self._tables:
            numbers = self.rules.model.parameter_values(dict(values or {}))
            for group in self.rules.model.groups.values():
                numbers.setdefault(group.xi, 1.0)  # unless asked otherwise, xi = 1 (Feynman gauge)
            self._tables[key] = VertexTable(numbers)
        return self._tables[key]

    def _externals(self, open_legs: bool = False, gauge_leg: int | None = None) -> list[External]:
        out = []
        for j, state in enumerate(self.process.states):
            count = {"dirac": 2, "scalar": 1}.get(state.kind, 0)
            if state.kind == "vector":
                count = 3 if self.rules.model.fields[state.field].mass != 0 else 2
            if open_legs and state.kind != "scalar":
                count = 4
            if gauge_leg == j:
                count = 1
            out.append(External(state, count, tuple(d for _, _, d in state.representations)))
        return out

    def _wave(self, j: int, p: np.ndarray, mass: float, gauge: bool, open_legs: bool) -> np.ndarray:
        """The wave function a state contracts its vertex leg with: (N, states, 4), or (N, 1) for scalars."""
        state = self.process.states[j]
        if state.kind == "scalar":
            return np.ones((len(p), 1), dtype=complex)
        if open_legs:
            return np.broadcast_to(np.eye(4, dtype=complex), (len(p), 4, 4))
        if state.kind == "vector":
            if gauge:  # k / E: the Ward identity is scale free, and so is its deviation
                return (lower(p) / p[:, :1])[:, None, :]
            eps = lower(polarisations(p, mass))
            return eps if state.incoming else eps.conj()
        psi_leg = not state.attach.startswith("bar(")
        if psi_leg:  # u for an incoming particle, v for an outgoing antiparticle
            return u_spinors(p, mass) if state.incoming else v_spinors(p, mass)
        return bar(u_spinors(p, mass)) if not state.incoming else bar(v_spinors(p, mass))

    def _spin_sum(self, j: int, p: np.ndarray, mass: float) -> np.ndarray | None:
        state = self.process.states[j]
        if state.kind == "scalar":
            return None
        if state.kind == "vector":
            return vector_spin_sum(p, mass)
        barred = state.attach.startswith("bar(")
        anti = state.incoming == barred  # v on a psi leg (outgoing anti), vbar on a bar leg (incoming anti)
        return fermion_spin_sum(p, mass, barred, anti)

    def _contract(self, d: Diagram, space: str, tensors: list[np.ndarray], flow: "_Flow", wave: list[np.ndarray],
                  table: VertexTable) -> np.ndarray:
        """One diagram in one space ('spin': Lorentz and spinor axes; 'colour': group axes), states in order."""
        root, root_leg = d.externals[0]
        current, order = self._current(d, space, tensors, root, root_leg, flow, wave, table)
        leg = self._legs(d, root)[root_leg]
        if space == "spin":
            if _spin_axes(leg):
                current = np.einsum("nxa,nha->nxh", current, wave[0])
            else:
                current = current[:, :, None] * wave[0][:, None, :]
        order = order + [0]
        externals = self._externals()
        shape = [current.shape[0]]
        for j in order:
            shape += [wave[j].shape[1]] if space == "spin" else list(externals[j].colours)
        current = current.reshape(shape)
        sizes = {j: (1 if space == "spin" else len(externals[j].colours)) for j in order}
        position, starts = 1, {}
        for j in order:
            starts[j] = position
            position += sizes[j]
        permutation = [0] + [starts[j] + a for j in range(len(externals)) for a in range(sizes[j])]
        return np.transpose(current, permutation)

    def _legs(self, d: Diagram, v: int) -> tuple:
        return self.rules.vertices[d.vertices[v]].legs

    def _current(self, d: Diagram, space: str, tensors: list[np.ndarray], v: int, up: int, flow: "_Flow",
                 wave: list[np.ndarray], table: VertexTable) -> tuple[np.ndarray, list[int]]:
        """The subtree hanging from leg `up` of vertex v: (N, collected states, axes of leg up), the states' order."""
        legs = self._legs(d, v)
        labels = iter(range(1, 52))
        counts = [_spin_axes(leg) if space == "spin" else len(leg.representations) for leg in legs]
        leg_labels = [[next(labels) for _ in range(c)] for c in counts]
        arguments: list[object] = [tensors[v], [0] + [x for group in leg_labels for x in group]]
        collected: list[int] = []
        output: list[int] = [0]
        for k in range(len(legs)):
            if k == up:
                continue
            if (v, k) in flow.attached:
                j = flow.attached[(v, k)]
                if space == "spin":
                    h = next(labels)
                    arguments += [wave[j], [0, h] + leg_labels[k]]
                    output.append(h)
                else:
                    output += leg_labels[k]
                collected.append(j)
                continue
            w, m = flow.across[(v, k)]
            child, states = self._current(d, space, tensors, w, m, flow, wave, table)
            if space == "spin":
                child = self._through_line(d, v, k, w, m, child, flow, table)
            x = next(labels)
            arguments += [child, [0, x] + leg_labels[k]]
            output.append(x)
            collected += states
        output += leg_labels[up]
        result = np.einsum(*arguments, output, optimize=len(arguments) > 4)
        open_axes = len(leg_labels[up])
        result = result.reshape((result.shape[0], -1) + result.shape[result.ndim - open_axes:])
        return result, collected

    def _through_line(self, d: Diagram, v: int, k: int, w: int, m: int, child: np.ndarray, flow: "_Flow",
                      table: VertexTable) -> np.ndarray:
        """Carry a subtree (ending on leg m of w) through the propagator to leg k of v."""
        leg = self._legs(d, w)[m]
        propagator = self.rules.propagator(leg.field)
        if leg.kind in ("scalar", "ghost"):
            return child * table.propagator(propagator, flow.inflow(w, m))[:, None]
        if leg.kind == "vector":
            return np.einsum("nxa,nab->nxb", child, table.propagator(propagator, flow.inflow(w, m)))
        if not leg.conjugate:  # w's psi leg: S(p) with p flowing into w, first index on w
            return np.einsum("nxa,nab->nxb", child, table.propagator(propagator, flow.inflow(w, m)))
        s = table.propagator(propagator, flow.inflow(v, k))  # v's psi leg: first index on v
        return np.einsum("nxb,nab->nxa", child, s)


def _values_key(values: Mapping[str, complex] | None) -> tuple:
    return tuple(sorted((str(k), complex(v)) for k, v in (values or {}).items()))


def _spin_axes(leg: "Leg") -> int:
    """How many Lorentz and spinor axes a leg has (0 or 1)."""
    return sum(1 for axis in leg.axes if axis[0] != "group")


def _merge(out: list[tuple[np.ndarray, np.ndarray]], spin: np.ndarray, colour: np.ndarray) -> None:
    """Add a piece, folding it into one with the same colour array (up to sign) to keep the colour matrix small."""
    for k, (other_spin, other_colour) in enumerate(out):
        if other_colour.shape == colour.shape:
            if np.allclose(other_colour, colour, atol=1e-14):
                out[k] = (other_spin + spin, other_colour)
                return
            if np.allclose(other_colour, -colour, atol=1e-14):
                out[k] = (other_spin - spin, other_colour)
                return
    out.append((spin, colour))


class _Flow:
    """Momentum flow of a tree diagram: the incoming momentum on every vertex leg."""

    def __init__(self, amplitude: Amplitude, d: Diagram, incoming: np.ndarray) -> None:
        self.amplitude, self.d, self.incoming = amplitude, d, incoming
        self.attached = {(v, k): j for j, (v, k) in enumerate(d.externals)}
        self.across: dict[tuple[int, int], tuple[int, int]] = {}
        for a, k, b, m in d.lines:
            self.across[(a, k)], self.across[(b, m)] = (b, m), (a, k)
        self._cache: dict[tuple[int, int], np.ndarray] = {}

    def inflow(self, v: int, k: int) -> np.ndarray:
        if (v, k) not in self._cache:
            if (v, k) in self.attached:
                value = self.incoming[:, self.attached[(v, k)]]
            else:
                w, m = self.across[(v, k)]
                legs = self.amplitude.rules.vertices[self.d.vertices[w]].legs
                value = sum((self.inflow(w, x) for x in range(len(legs)) if x != m),
                            np.zeros_like(self.incoming[:, 0]))
            self._cache[(v, k)] = value
        return self._cache[(v, k)]

    def vertex_momenta(self, v: int) -> np.ndarray:
        legs = self.amplitude.rules.vertices[self.d.vertices[v]].legs
        return np.stack([self.inflow(v, k) for k in range(len(legs))], axis=1)


def amplitude(rules: "Rules", process: str | Process) -> Amplitude:
    """The tree amplitude of a process written like ``ele bar(ele) -> muon bar(muon)``."""
    parsed = parse_process(rules.model, process) if isinstance(process, str) else process
    return Amplitude(rules, parsed, find_diagrams(rules, parsed, 0))
