"""Vertices and propagators evaluated at many momenta at once (the first axis runs over points).

`Vertex.evaluate` and `Propagator.evaluate` take one set of momenta and go through sympy for the
coefficients on every call. The amplitude code needs thousands of points, so this module turns
each coefficient into a number once per set of parameter values (cached per vertex) and
evaluates the structures with a leading point axis. Same layout and conventions as
`numeric.evaluate_structure`, of which the structure walk below is the batched twin.
"""

from __future__ import annotations

import itertools
from typing import TYPE_CHECKING, Callable, Mapping, Sequence

import numpy as np
import sympy

from .groups import su_alternating, su_generators, su_structure_constants
from .numeric import _CHIRAL, GAMMA, IDENTITY4, METRIC, PROJ_L, PROJ_R, SIGMA, levi_civita
from .structures import (Chain, Chiral, Dot, Dummy, Epsilon, Gamma, Generator, GroupAlternating, GroupDelta,
                         GroupDummy, LegGroupIndex,
                         LegIndex, Metric, Momentum, ParamTensor, Sigma, Slot, Structure, StructureConstant, Vector)

if TYPE_CHECKING:
    from .rules import Propagator, Vertex

_LORENTZ_SIGN = np.array([1.0, -1.0, -1.0, -1.0])


def _momentum(momentum: Momentum, p: np.ndarray) -> np.ndarray:
    total = np.zeros((p.shape[0], 4), dtype=complex)
    for leg, c in momentum.terms:
        total = total + float(c) * p[:, leg - 1]
    return total


def _structure(structure: Structure, leg_axes: Sequence[tuple], p: np.ndarray, eps0123: int,
               ranks: dict[str, int], leg_dims: dict[tuple[int, str], int],
               arrays: Mapping[str, np.ndarray] | None = None) -> np.ndarray:
    """One structure as an array (N, leg axes...); p has shape (N, legs, 4); `arrays` holds the
    values of vector and matrix parameters by name."""
    count = p.shape[0]
    names: dict[object, int] = {}
    fresh = itertools.count(1)

    def label(key: object) -> int:
        if key not in names:
            names[key] = next(fresh)
        return names[key]

    operands: list[np.ndarray] = []
    subscripts: list[list[int]] = []
    scalar = np.ones(count, dtype=complex)
    dummy_seen: dict[str, int] = {}

    def slot_label(slot: Slot) -> int:
        if isinstance(slot, LegIndex):
            return label(("lorentz", slot.leg))
        if isinstance(slot, Dummy):
            if slot.name in dummy_seen:
                first, other = dummy_seen.pop(slot.name), label(object())
                operands.append(METRIC)
                subscripts.append([first, other])
                return other
            dummy_seen[slot.name] = label(object())
            return dummy_seen[slot.name]
        assert isinstance(slot, Momentum), slot
        index = label(object())
        operands.append(_momentum(slot, p) * _LORENTZ_SIGN)
        subscripts.append([0, index])
        return index

    for tensor in structure.tensors:
        if isinstance(tensor, Dot):
            a, b = _momentum(tensor.p, p), _momentum(tensor.q, p)
            scalar = scalar * np.einsum("nm,nm->n", a * _LORENTZ_SIGN, b)
        elif isinstance(tensor, Metric):
            pair = [slot_label(tensor.a), slot_label(tensor.b)]
            operands.append(METRIC)
            subscripts.append(pair)
        elif isinstance(tensor, Vector):
            index = slot_label(tensor.index)
            operands.append(_momentum(tensor.momentum, p))
            subscripts.append([0, index])
        elif isinstance(tensor, Epsilon):
            indices = [slot_label(s) for s in tensor.slots_]
            operands.append(levi_civita(eps0123))
            subscripts.append(indices)
    for chain in structure.chains:
        _chain(chain, label, operands, subscripts, slot_label, p)
    for g in structure.group:
        if isinstance(g, ParamTensor):  # a vector or matrix parameter over index spaces
            value = (arrays or {})[g.group]
            operands.append(np.conj(value) if g.conjugate else value)
            subscripts.append([label(("group", s.leg, s.group)) if isinstance(s, LegGroupIndex)
                               else label(("group-dummy", s.name)) for s in g.slots_])
            continue
        n = ranks[g.group]
        if isinstance(g, StructureConstant):
            operands.append(su_structure_constants(n).astype(complex))
        elif isinstance(g, Generator):
            operands.append(su_generators(n))
        elif isinstance(g, GroupAlternating):
            operands.append(su_alternating(n))
        else:
            # a new kind of group tensor must be added here: never evaluate it as a delta by default
            assert isinstance(g, GroupDelta), f"no numeric form for {type(g).__name__}"
            first = g.slots_[0]
            dim = leg_dims.get((first.leg, first.group), n) if isinstance(first, LegGroupIndex) else n
            operands.append(np.eye(dim, dtype=complex))
        subscripts.append([label(("group", s.leg, s.group)) if isinstance(s, LegGroupIndex)
                           else label(("group-dummy", s.name)) for s in g.slots_])
    output = [0] + [label(key) for key in leg_axes]
    operands.append(scalar)
    subscripts.append([0])
    arguments: list[object] = []
    for operand, sub in zip(operands, subscripts):
        arguments += [operand, sub]
    return np.einsum(*arguments, output, optimize=len(operands) > 2)


def _chain(chain: Chain, label: Callable[[object], int], operands: list[np.ndarray], subscripts: list[list[int]],
           slot_label: Callable[[Slot], int], p: np.ndarray) -> None:
    start, end = label(("spinor", chain.bar_leg)), label(("spinor", chain.leg))
    if not chain.matrices:
        operands.append(IDENTITY4)
        subscripts.append([start, end])
        return
    current = start
    for k, mat in enumerate(chain.matrices):
        nxt = end if k == len(chain.matrices) - 1 else label(object())
        if isinstance(mat, Chiral):
            operands.append(_CHIRAL[mat.kind])
            subscripts.append([current, nxt])
        elif isinstance(mat, Gamma) and isinstance(mat.slot, Momentum):
            operands.append(np.einsum("nm,mij->nij", _momentum(mat.slot, p) * _LORENTZ_SIGN, GAMMA))
            subscripts.append([0, current, nxt])
        elif isinstance(mat, Gamma):
            index = slot_label(mat.slot)  # may add a metric operand of its own: first
            operands.append(GAMMA)
            subscripts.append([index, current, nxt])
        elif isinstance(mat, Sigma):
            pair = [slot_label(mat.a), slot_label(mat.b)]
            operands.append(SIGMA)
            subscripts.append(pair + [current, nxt])
        current = nxt


def _number(expr: sympy.Expr, values: dict[sympy.Symbol, complex]) -> complex:
    result = expr.subs({s: values[s] for s in expr.free_symbols if s in values}) if expr.free_symbols else expr
    return complex(sympy.N(result))


def _rational(expr: sympy.Expr, variable: sympy.Symbol) -> Callable[[np.ndarray], np.ndarray]:
    """A rational function of one variable as numerator and denominator polynomials for numpy."""
    numerator, denominator = sympy.fraction(sympy.together(expr))
    top = [complex(c) for c in sympy.Poly(numerator, variable).all_coeffs()]
    bottom = [complex(c) for c in sympy.Poly(denominator, variable).all_coeffs()]
    return lambda x: np.polyval(top, x) / np.polyval(bottom, x)


class VertexTable:
    """Numeric vertices for one set of parameter values: coefficients turned into numbers once."""

    def __init__(self, values: dict[sympy.Symbol, complex]) -> None:
        self.values = values
        self._coefficients: dict[int, list[complex]] = {}
        self._propagators: dict[str, tuple[Callable[[np.ndarray], np.ndarray], ...]] = {}

    def vertex(self, vertex: "Vertex", momenta: np.ndarray) -> np.ndarray:
        """The vertex at momenta of shape (N, legs, 4): shape (N, leg axes...)."""
        key = id(vertex)
        if key not in self._coefficients:
            self._coefficients[key] = [_number(t.coefficient, self.values) for t in vertex.terms]
        model = vertex.model
        axes = [axis for leg in vertex.legs for axis in leg.axes]
        ranks = {name: g.rank for name, g in model.groups.items()}
        dims = {(leg.position, g): d for leg in vertex.legs for g, _, d in leg.representations}
        total: np.ndarray | None = None
        for c, term in zip(self._coefficients[key], vertex.terms):
            if c == 0:
                continue
            tensor = c * _structure(term.structure, axes, momenta, model.conventions.eps0123, ranks, dims)
            total = tensor if total is None else total + tensor
        if total is None:
            shape = (momenta.shape[0],) + tuple(4 for leg in vertex.legs for _ in leg.axes)
            return np.zeros(shape, dtype=complex)
        return total

    def vertex_parts(self, vertex: "Vertex", momenta: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
        """The vertex split by colour: pairs (spin-space array (N, Lorentz and spinor axes), colour array).

        Summing the outer products of the pairs gives `vertex()`; kept apart, amplitudes contract
        Lorentz and colour indices separately, which keeps the arrays small.
        """
        key = id(vertex)
        if key not in self._coefficients:
            self._coefficients[key] = [_number(t.coefficient, self.values) for t in vertex.terms]
        model = vertex.model
        spin_axes = [axis for leg in vertex.legs for axis in leg.axes if axis[0] != "group"]
        colour_axes = [axis for leg in vertex.legs for axis in leg.axes if axis[0] == "group"]
        ranks = {name: g.rank for name, g in model.groups.items()}
        ranks.update({name: space.size for name, space in model.spaces.items()})
        dims = {(leg.position, g): d for leg in vertex.legs for g, _, d in leg.representations}
        arrays = {str(k): v for k, v in self.values.items() if isinstance(v, np.ndarray)}
        by_colour: dict[tuple, np.ndarray] = {}
        for c, term in zip(self._coefficients[key], vertex.terms):
            if c == 0:
                continue
            bare = Structure(term.structure.tensors, term.structure.chains, ())
            tensor = c * _structure(bare, spin_axes, momenta, model.conventions.eps0123, ranks, dims)
            group = term.structure.group
            by_colour[group] = tensor if group not in by_colour else by_colour[group] + tensor
        parts = []
        for group, tensor in by_colour.items():
            colour = _structure(Structure((), (), group), colour_axes, np.zeros((1, len(vertex.legs), 4)),
                                model.conventions.eps0123, ranks, dims, arrays)[0]
            parts.append((tensor, colour))
        return parts

    def propagator(self, propagator: "Propagator", p: np.ndarray) -> np.ndarray:
        """The propagator at momenta (N, 4), without its group deltas; vector indices lowered.

        Shapes: scalar (N,), Dirac (N, 4, 4), vector (N, 4, 4) as D_{mu nu}.
        """
        from .rules import P2

        if propagator.field not in self._propagators:
            exprs = [propagator.a, propagator.b] + (list(propagator.chiral) if propagator.chiral else [])
            own = {s: v for s, v in self.values.items()}
            self._propagators[propagator.field] = tuple(
                _rational(expr.subs({s: own[s] for s in expr.free_symbols if s in own}), P2) for expr in exprs)
        functions = self._propagators[propagator.field]
        p2 = np.einsum("nm,nm->n", p * _LORENTZ_SIGN, p)
        a = np.broadcast_to(np.asarray(functions[0](p2), dtype=complex), p2.shape)
        b = np.broadcast_to(np.asarray(functions[1](p2), dtype=complex), p2.shape)
        if propagator.kind == "scalar":
            return a.copy()
        pslash = np.einsum("nm,mij->nij", p * _LORENTZ_SIGN, GAMMA)
        if propagator.chiral is not None:
            left = np.broadcast_to(np.asarray(functions[2](p2), dtype=complex), p2.shape)
            right = np.broadcast_to(np.asarray(functions[3](p2), dtype=complex), p2.shape)
            chiral = left[:, None, None] * PROJ_L + right[:, None, None] * PROJ_R
            return np.einsum("nij,njk->nik", chiral, pslash)
        if propagator.kind == "dirac":
            return a[:, None, None] * pslash + b[:, None, None] * IDENTITY4
        low = p * _LORENTZ_SIGN
        return a[:, None, None] * METRIC + b[:, None, None] * np.einsum("na,nb->nab", low, low)
