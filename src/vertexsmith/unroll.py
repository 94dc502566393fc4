"""Rules with the indices of the model's own index spaces written out: one vertex per component.

By default a vertex keeps generation indices symbolic (legs carry gen1, gen2, ...; the factor
holds Component(Y, gen1, gen2) and deltas). `unroll_rules` turns each such vertex into one vertex
per assignment of components to its legs (legs labelled `bar(e[2])`), with the flavour tensors
evaluated: a delta becomes 0 or 1, a matrix parameter becomes its entry Component(Y, 1, 2)
(1-based), contracted flavour indices are summed. A component whose factor vanishes (a delta
off the diagonal, an entry declared exactly 0) gives no vertex. Legs of the same field with the
same conjugation are interchangeable, so only one order of their components is kept.
Propagators are diagonal in index spaces with one mass per field, so unrolled rules list each
once without the flavour axes.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterator
from dataclasses import replace

import sympy

from . import model as m
from .errors import UsageError
from .rules import Leg, Rules, Vertex, VertexTerm
from .structures import (GroupDelta, GroupDummy, GroupTensor, LegGroupIndex, ParamTensor, Slot, Structure,
                         canonical_structure, structure_sort_key)
from .symbolic import Component

MAX_COMPONENTS_PER_VERTEX = 20_000  # component assignments of one vertex; beyond it the output is unreadable


def unroll_rules(rules: Rules, unroll: object = True) -> Rules:
    """The same rules with every index-space index written out as components (see the module docstring)."""
    if not isinstance(unroll, bool):
        raise UsageError(f"unroll takes True or False, not {unroll!r}", hint="model.derive(unroll=True)")
    if not unroll or not rules.model.spaces:
        return rules
    vertices: list[Vertex] = []
    for vertex in rules.vertices:
        vertices.extend(_unroll_vertex(rules.model, vertex))
    vertices.sort(key=lambda v: (len(v.legs), tuple((_base_label(leg), leg.components) for leg in v.legs)))
    propagators = tuple(replace(p, representations=_group_part(p.representations)) for p in rules.propagators)
    return Rules(rules.model, rules.gauge, tuple(vertices), propagators, rules.quadratic, rules.spectrum)


def _group_part(representations: tuple[tuple[str, str, int], ...]) -> tuple[tuple[str, str, int], ...]:
    return tuple(r for r in representations if r[1] != m.FLAVOUR)


def _base_label(leg: Leg) -> str:
    return replace(leg, components=()).label


def _assignments(vertex: Vertex) -> Iterator[dict[tuple[int, str], int]]:
    """Every assignment of components (0-based) to the flavour axes, one order per set of identical legs."""
    axes = [(leg.position, space, size) for leg in vertex.legs for space, rep, size in leg.representations
            if rep == m.FLAVOUR]
    total = 1
    for _, _, size in axes:
        total *= size
    if total > MAX_COMPONENTS_PER_VERTEX:
        raise UsageError(f"unrolling the vertex {' '.join(vertex.labels)} needs {total} component assignments "
                         f"(the limit is {MAX_COMPONENTS_PER_VERTEX})", hint="keep the indices symbolic (no unroll)")
    same: dict[tuple[str, bool], list[int]] = {}
    for leg in vertex.legs:
        same.setdefault((leg.field, leg.conjugate), []).append(leg.position)
    for values in itertools.product(*[range(size) for _, _, size in axes]):
        chosen = {(position, space): value for (position, space, _), value in zip(axes, values)}
        if all(_ordered(chosen, vertex, positions) for positions in same.values()):
            yield chosen


def _ordered(chosen: dict[tuple[int, str], int], vertex: Vertex, positions: list[int]) -> bool:
    keys = [tuple(chosen.get((p, space), 0) for space, rep, _ in vertex.legs[p - 1].representations
                  if rep == m.FLAVOUR) for p in positions]
    return keys == sorted(keys)


def _unroll_vertex(model: m.Model, vertex: Vertex) -> list[Vertex]:
    if not any(rep == m.FLAVOUR for leg in vertex.legs for _, rep, _ in leg.representations):
        return [vertex]
    out: list[Vertex] = []
    for chosen in _assignments(vertex):
        total: dict[Structure, sympy.Expr] = {}
        for term in vertex.terms:
            value, rest = _flavour_value(model, term.structure, chosen)
            if value == 0:
                continue
            sign, structure = canonical_structure(rest)
            assert structure is not None  # removing tensors cannot make the rest vanish
            total[structure] = total.get(structure, sympy.Integer(0)) + sign * value * term.coefficient
        terms = [VertexTerm(sympy.expand(c), s) for s, c in total.items() if sympy.expand(c) != 0]
        if not terms:
            continue
        terms.sort(key=lambda t: structure_sort_key(t.structure))
        legs = tuple(replace(leg, representations=_group_part(leg.representations),
                             components=tuple((space, chosen[(leg.position, space)] + 1)
                                              for space, rep, _ in leg.representations if rep == m.FLAVOUR))
                     for leg in vertex.legs)
        out.append(Vertex(legs, tuple(terms), vertex.model, vertex.origins))
    return out


def _flavour_value(model: m.Model, structure: Structure,
                   chosen: dict[tuple[int, str], int]) -> tuple[sympy.Expr, Structure]:
    """The flavour tensors of a structure summed at the chosen components; the rest of the structure."""
    flavour: list[GroupTensor] = []
    rest: list[GroupTensor] = []
    for g in structure.group:
        if isinstance(g, ParamTensor) or (isinstance(g, GroupDelta) and g.group in model.spaces):
            flavour.append(g)
        else:
            rest.append(g)
    remaining = Structure(structure.tensors, structure.chains, tuple(rest))
    if not flavour:
        return sympy.Integer(1), remaining
    sizes: dict[str, int] = {}
    for g in flavour:
        spaces = model.parameters[g.group].spaces if isinstance(g, ParamTensor) else (g.group,) * 2
        for slot, space in zip(g.slots_, spaces):
            if isinstance(slot, GroupDummy):
                sizes[slot.name] = model.spaces[space].size
    dummies = sorted(sizes)
    value: sympy.Expr = sympy.Integer(0)
    for values in itertools.product(*[range(sizes[d]) for d in dummies]):
        summed = dict(zip(dummies, values))
        product: sympy.Expr = sympy.Integer(1)
        for g in flavour:
            product *= _tensor_value(model, g, chosen, summed)
            if product == 0:
                break
        value += product
    return value, remaining


def _tensor_value(model: m.Model, g: GroupTensor, chosen: dict[tuple[int, str], int],
                  summed: dict[str, int]) -> sympy.Expr:
    def component(slot: Slot) -> int:
        if isinstance(slot, LegGroupIndex):
            return chosen[(slot.leg, slot.group)]
        assert isinstance(slot, GroupDummy)
        return summed[slot.name]

    indices = [component(s) for s in g.slots_]
    if isinstance(g, GroupDelta):
        return sympy.Integer(int(indices[0] == indices[1]))
    assert isinstance(g, ParamTensor)
    p = model.parameters[g.group]
    if p.entries is not None:
        flat = 0
        for index, size in zip(indices, p.shape):
            flat = flat * size + index
        if p.entries[flat] == 0:  # declared exactly zero: the component is dropped
            return sympy.Integer(0)
    entry = Component(sympy.Symbol(p.name), *[sympy.Integer(i + 1) for i in indices])
    return sympy.conjugate(entry) if g.conjugate else entry
