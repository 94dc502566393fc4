"""Feynman rules from monomials: vertices by functional differentiation, propagators by inversion.

Vertex = i x sum over assignments of the monomial's fields to the legs. Identical bosonic
fields without derivatives or indices are interchangeable, so k of them contribute k! at once
(multiset combinatorics); fields that differ by a derivative, an index or Grassmann order are
enumerated. A derivative on the field of leg k gives -i p_k. The Grassmann sign is the parity of
the permutation that brings the monomial's fermion factors into leg order.
"""

from __future__ import annotations

import itertools
import math
from collections import defaultdict
from fractions import Fraction
from typing import Iterable, Iterator, Sequence

import sympy

from . import model as m
from . import progress
from .errors import DerivationError, UsageError
from .expand import DiracAtom, FieldAtom, GroupAtom, Monomial, ParamAtom, TensorAtom, is_plain_product
from .spaces import index_dimension
from .rules import P2, Leg, Propagator, Rules, Vertex, VertexTerm
from .structures import (Chain, Chiral, Dot, Dummy, Epsilon, Gamma, Generator, GroupAlternating, GroupDelta,
                         GroupDummy,
                         LegGroupIndex, LegIndex, Metric, Momentum, ParamTensor, Sigma, Slot, Structure, StructureConstant,
                         Vector, canonical_structure, momentum_slots, permutation_sign, replace_slot,
                         structure_sort_key)

GAUGES = ("xi", "feynman", "unitary")
MAX_ASSIGNMENTS = 40_320  # 8!: beyond this one monomial's vertex takes more than seconds
Species = tuple[str, bool]


def species_of(model: m.Model, atom: FieldAtom) -> Species:
    """Which leg a field factor can fill: (field, conjugated); real fields are never conjugated."""
    f = model.fields[atom.field]
    # a Majorana field keeps its bar: the two ends of a fermion flow are different legs
    return (atom.field, atom.conjugate if f.two_ended else False)


def _species_order(model: m.Model, s: Species) -> tuple:
    f = model.fields[s[0]]
    kind = {"dirac": 0, "majorana": 0, "ghost": 1, "scalar": 2, "vector": 3}[f.kind]
    return (kind, s[0], not s[1] if f.kind == "ghost" else s[1])


def canonical_legs(model: m.Model, species: Iterable[Species]) -> list[Species]:
    """Leg order: fermion lines (bar leg, then its partner), then scalars, vectors; by name."""
    items = sorted(species, key=lambda s: _species_order(model, s))
    fermions = [s for s in items if model.fields[s[0]].is_fermion]
    bosons = [s for s in items if not model.fields[s[0]].is_fermion]
    bars = [s for s in fermions if s[1]]
    plain = [s for s in fermions if not s[1]]
    ordered: list[Species] = []
    for b in bars:
        ordered.append(b)
        partner = next((s for s in plain if s[0] == b[0]), plain[0] if plain else None)
        if partner is not None:
            plain.remove(partner)
            ordered.append(partner)
    return ordered + plain + bosons


def make_legs(model: m.Model, species: list[Species]) -> tuple[Leg, ...]:
    legs = []
    for k, s in enumerate(species):
        f = model.fields[s[0]]
        reps = tuple((g, rep, index_dimension(model, g, rep)) for g, rep in f.representations)
        legs.append(Leg(k + 1, s[0], s[1], f.kind, f.is_grassmann, reps, f.is_complex))
    return tuple(legs)


# ------------------------------------------------------------------ one monomial, one leg list

def _assignments(model: m.Model, mono: Monomial, legs: tuple[Leg, ...]) -> Iterator[tuple[dict[int, int], int]]:
    """(atom position -> leg position, multiplicity) for every distinct assignment."""
    by_species: dict[Species, list[int]] = defaultdict(list)
    field_atoms: dict[int, FieldAtom] = {}
    for k, atom in enumerate(mono.atoms):
        if isinstance(atom, FieldAtom):
            by_species[species_of(model, atom)].append(k)
            field_atoms[k] = atom
    legs_of: dict[Species, list[int]] = defaultdict(list)
    for leg in legs:
        legs_of[(leg.field, leg.conjugate)].append(leg.position)
    count = 1
    for sp, positions in by_species.items():
        n = len(positions)
        if model.fields[sp[0]].is_grassmann:
            count *= math.factorial(n)
        else:
            d = sum(1 for k in positions if _is_decorated(field_atoms[k]))
            count *= math.factorial(n) // math.factorial(n - d)
    if count > MAX_ASSIGNMENTS:
        raise DerivationError(f"this term needs {count} leg assignments for one vertex "
                              f"(the limit is {MAX_ASSIGNMENTS})", mono.origin,
                              "fewer identical fields with indices or derivatives per term keep it derivable")
    per_species: list[list[tuple[dict[int, int], int]]] = []
    for sp, positions in by_species.items():
        targets = legs_of[sp]
        grassmann = model.fields[sp[0]].is_grassmann
        if grassmann:
            options = [(dict(zip(positions, perm)), 1) for perm in itertools.permutations(targets)]
        else:
            # fields that differ by an index or a derivative must be enumerated; the rest are interchangeable
            decorated = [k for k in positions if _is_decorated(field_atoms[k])]
            plain = [k for k in positions if k not in decorated]
            options = []
            for chosen in itertools.permutations(targets, len(decorated)):
                rest = [t for t in targets if t not in chosen]
                option = dict(zip(decorated, chosen))
                option.update(zip(plain, rest))
                options.append((option, math.factorial(len(plain))))
        per_species.append(options)
    for combo in itertools.product(*per_species):
        mapping: dict[int, int] = {}
        multiplicity = 1
        for part, mult in combo:
            mapping.update(part)
            multiplicity *= mult
        yield mapping, multiplicity


def _is_decorated(atom: FieldAtom) -> bool:
    """A field factor that an index or a derivative tells apart from its identical siblings."""
    return atom.index is not None or bool(atom.derivatives) or bool(atom.group_indices)


def _grassmann_sign(model: m.Model, mono: Monomial, mapping: dict[int, int]) -> int:
    order = [mapping[k] for k, a in enumerate(mono.atoms)
             if isinstance(a, FieldAtom) and model.fields[a.field].is_grassmann]
    return permutation_sign(order)


class _UnionFind:
    def __init__(self) -> None:
        self.parent: dict[str, str] = {}

    def find(self, x: str) -> str:
        self.parent.setdefault(x, x)
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def union(self, a: str, b: str) -> None:
        ra, rb = self.find(a), self.find(b)
        if ra != rb:
            self.parent[max(ra, rb)] = min(ra, rb)


def _structure(model: m.Model, mono: Monomial, mapping: dict[int, int]) -> tuple[sympy.Expr, Structure | None]:
    """Contract the indices of one assignment into a structure; returns (extra factor, structure)."""
    factor: sympy.Expr = sympy.Integer(1)
    # an end of an index line: ("leg", leg) / ("mom", leg) / ("slot", atom position, slot number)
    ends: dict[str, list[tuple]] = defaultdict(list)
    uf = _UnionFind()
    delta_groups: dict[str, str] = {}
    for k, atom in enumerate(mono.atoms):
        if isinstance(atom, FieldAtom):
            leg = mapping[k]
            if atom.index is not None:
                ends[atom.index].append(("leg", leg))
            for d in atom.derivatives:
                factor *= -sympy.I
                ends[d].append(("mom", leg))
            for group, index in atom.group_indices:
                rep = model.fields[atom.field].representation(group)
                ends[index or ""].append(("gleg", leg, group, _index_space(rep)))
        elif isinstance(atom, TensorAtom) and atom.kind == "g":
            a, b = atom.indices
            if a == b:
                factor *= 4
            else:
                uf.union(a, b)
        elif isinstance(atom, GroupAtom) and atom.kind == "delta":
            a, b = atom.indices
            if a == b:
                raise DerivationError("delta with a repeated index is the dimension of the group space", atom.span,
                                      "write the dimension as a number")
            uf.union(a, b)
            delta_groups[a] = atom.group
        elif isinstance(atom, GroupAtom):
            spaces = {"T": ("adjoint", "fundamental", "fundamental"), "f": ("adjoint",) * 3}.get(
                atom.kind, ("fundamental",) * len(atom.indices))  # alt: one fundamental slot per index
            for n, index in enumerate(atom.indices):
                ends[index].append(("gslot", k, n, atom.group, spaces[n]))
        elif isinstance(atom, ParamAtom):
            for n, (index, space) in enumerate(zip(atom.indices, model.parameters[atom.name].spaces)):
                ends[index].append(("gslot", k, n, space, m.FLAVOUR))
        else:
            for n, index in enumerate(atom.indices):
                ends[index].append(("slot", k, n))
    lines: dict[str, list[tuple]] = defaultdict(list)
    for index, items in ends.items():
        lines[uf.find(index)].extend(items)
    for root in sorted({uf.find(name) for name in uf.parent} - set(lines)):
        # a closed loop of metrics, g[a,b] g[b,a], is g^mu_mu = 4; one of group deltas is the trace N
        group = next((g for name, g in sorted(delta_groups.items()) if uf.find(name) == root), None)
        factor *= model.groups[group].rank if group is not None else 4
    fill: dict[tuple[int, int], Slot] = {}
    tensors: list = []
    group_tensors: list = []
    for root, items in sorted(lines.items()):
        if len(items) != 2:
            raise DerivationError(f"index '{root.split('#')[0]}' appears {len(items)} times in a monomial",
                                  mono.origin, "every Lorentz index in a term appears exactly twice")
        group_ends = [it for it in items if it[0] in ("gleg", "gslot")]
        if group_ends:
            _check_index_line(root, items, mono)
            values_g = [LegGroupIndex(it[1], it[2]) for it in group_ends if it[0] == "gleg"]
            slots_g = [it for it in group_ends if it[0] == "gslot"]
            if len(values_g) == 2:
                group_tensors.append(GroupDelta(group_ends[0][2], (values_g[0], values_g[1])))
            elif len(values_g) == 1:
                fill[(slots_g[0][1], slots_g[0][2])] = values_g[0]
            else:
                for it in slots_g:
                    fill[(it[1], it[2])] = GroupDummy(root)
            continue
        providers = [it for it in items if it[0] in ("leg", "mom")]
        slots = [it for it in items if it[0] == "slot"]
        values = [LegIndex(it[1]) if it[0] == "leg" else Momentum.of(it[1]) for it in providers]
        if len(providers) == 2:
            left, right = values
            if isinstance(left, LegIndex) and isinstance(right, LegIndex):
                tensors.append(Metric(left, right))
            elif isinstance(left, Momentum) and isinstance(right, Momentum):
                tensors.append(Dot(left, right))
            elif isinstance(left, Momentum):
                tensors.append(Vector(left, right))
            else:
                assert isinstance(right, Momentum)
                tensors.append(Vector(right, left))
        elif len(providers) == 1:
            fill[(slots[0][1], slots[0][2])] = values[0]
        else:
            dummy = Dummy(root)
            for it in slots:
                fill[(it[1], it[2])] = dummy
    chains: list[Chain] = []
    open_bar: int | None = None
    matrices: list = []
    for k, atom in enumerate(mono.atoms):
        if isinstance(atom, GroupAtom):
            if atom.kind == "T":
                group_tensors.append(Generator(atom.group, (fill[(k, 0)], fill[(k, 1)], fill[(k, 2)])))
            elif atom.kind == "f":
                group_tensors.append(StructureConstant(atom.group, (fill[(k, 0)], fill[(k, 1)], fill[(k, 2)])))
            elif atom.kind == "alt":
                group_tensors.append(GroupAlternating(atom.group, tuple(fill[(k, n)]
                                                                         for n in range(len(atom.indices)))))
        elif isinstance(atom, ParamAtom):
            group_tensors.append(ParamTensor(atom.name, atom.conjugate,
                                             tuple(fill[(k, n)] for n in range(len(atom.indices)))))
        elif isinstance(atom, TensorAtom):
            if atom.kind == "eps":
                tensors.append(Epsilon((fill[(k, 0)], fill[(k, 1)], fill[(k, 2)], fill[(k, 3)])))
        elif isinstance(atom, DiracAtom):
            slots_ = tuple(fill[(k, n)] for n in range(len(atom.indices)))
            if atom.kind == "gamma":
                matrices.append(Gamma(slots_[0]))
            elif atom.kind == "sigma":
                matrices.append(Sigma(slots_[0], slots_[1]))
            else:
                matrices.append(Chiral(atom.kind))
        elif isinstance(atom, FieldAtom) and model.fields[atom.field].is_fermion:
            if atom.conjugate:
                open_bar = mapping[k]
                matrices = []
            else:
                assert open_bar is not None
                chains.append(Chain(open_bar, mapping[k], tuple(matrices)))
                open_bar = None
    sign, structure = canonical_structure(Structure(tuple(tensors), tuple(chains), tuple(group_tensors)))
    return factor * sign, structure


def _index_space(representation: str | None) -> str:
    if representation in ("adjoint", m.FLAVOUR):
        return representation
    return "fundamental"


def _check_index_line(root: str, items: list[tuple], mono: Monomial) -> None:
    """Both ends of a contracted index must live in the same space of the same group."""
    name = root.split("#")[0]
    if any(it[0] in ("leg", "mom", "slot") for it in items):
        raise DerivationError(f"index '{name}' is used both as a Lorentz index and as a group index", mono.origin,
                              "give Lorentz and group indices different names")
    spaces = {(it[-2], it[-1]) for it in items}
    if len({g for g, _ in spaces}) > 1:
        raise DerivationError(f"index '{name}' joins indices of different groups or index spaces "
                              f"({', '.join(sorted(g for g, _ in spaces))})", mono.origin,
                              "contract each group's indices among themselves")
    if len(spaces) > 1:
        raise DerivationError(f"index '{name}' joins an adjoint and a fundamental index of "
                              f"{next(iter(spaces))[0]}", mono.origin,
                              "an adjoint index (a, b, c) contracts with an adjoint index, "
                              "a fundamental one (i, j) with a fundamental one")


def check_chains(model: m.Model, mono: Monomial) -> None:
    """Fermion fields pair up as bar(a) [Dirac matrices] b; Dirac matrices only inside such a pair."""
    open_atom: FieldAtom | None = None
    for atom in mono.atoms:
        if isinstance(atom, DiracAtom):
            if open_atom is None:
                raise DerivationError(f"'{atom.kind}' stands outside a fermion bilinear", atom.span,
                                      "write Dirac matrices between bar(psi) and psi, e.g. bar(psi) gamma[mu] psi")
        elif isinstance(atom, FieldAtom) and model.fields[atom.field].is_fermion:
            if atom.conjugate:
                if open_atom is not None:
                    raise DerivationError("a fermion bilinear opens twice before it closes", atom.span,
                                          "write bar(a) ... b, each bar() followed by its partner field")
                open_atom = atom
            else:
                if open_atom is None:
                    raise DerivationError(f"the fermion '{atom.field}' has no bar() partner before it", atom.span,
                                          f"write bar(...) before {atom.field}, as in bar(psi) psi")
                open_atom = None
    if open_atom is not None:
        raise DerivationError(f"bar({open_atom.field}) has no fermion after it", open_atom.span,
                              "close the bilinear with a fermion field, as in bar(psi) psi")


def monomial_terms(model: m.Model, mono: Monomial, legs: tuple[Leg, ...]) -> list[tuple[sympy.Expr, Structure]]:
    """i x (functional derivative) of one monomial, as (coefficient, structure) pairs."""
    out: list[tuple[sympy.Expr, Structure]] = []
    for mapping, multiplicity in _assignments(model, mono, legs):
        sign = _grassmann_sign(model, mono, mapping)
        factor, structure = _structure(model, mono, mapping)
        if structure is None or factor == 0:
            continue
        # one product instead of four: the integers multiplied first, sympy's Mul built once
        out.append((sympy.Mul(sympy.I, mono.coefficient, sympy.Integer(sign * multiplicity), factor), structure))
    return out


# ------------------------------------------------------------------ collecting terms

def _collect(pairs: Iterable[tuple[sympy.Expr, Structure]]) -> list[tuple[sympy.Expr, Structure]]:
    total: dict[Structure, sympy.Expr] = {}
    for coefficient, structure in pairs:
        total[structure] = total[structure] + coefficient if structure in total else coefficient
    out = []
    for structure, coefficient in total.items():
        c = coefficient if is_plain_product(coefficient) else sympy.factor(sympy.expand(coefficient))
        if c != 0:
            out.append((c, structure))
    return out


def _merge_momenta(terms: list[tuple[sympy.Expr, Structure]]) -> list[tuple[sympy.Expr, Structure]]:
    """Join terms that differ only in one momentum slot by a numerical factor: c p1 - c p2 -> c (p1 - p2).

    Each pass groups the terms by their structure with one momentum slot blanked out and folds
    every group into its first member; passes repeat until nothing changes.
    """
    terms = sorted(terms, key=lambda t: structure_sort_key(t[1]))
    changed = True
    while changed:
        changed = False
        buckets: dict[tuple, list[int]] = defaultdict(list)
        for n, (_, structure) in enumerate(terms):
            for position in momentum_slots(structure):
                buckets[(position, replace_slot(structure, position, Dummy("?")))].append(n)
        used: set[int] = set()
        merged_terms: list[tuple[sympy.Expr, Structure]] = []
        for (position, _), members in buckets.items():
            members = [n for n in members if n not in used]
            if len(members) < 2:
                continue
            first = members[0]
            c0, s0 = terms[first]
            total = s0.slots()[position]
            assert isinstance(total, Momentum)
            folded = [first]
            for n in members[1:]:
                ratio = sympy.nsimplify(terms[n][0] / c0)
                if ratio.is_Rational:
                    momentum = terms[n][1].slots()[position]
                    assert isinstance(momentum, Momentum)
                    total = total.plus(momentum, Fraction(int(ratio.p), int(ratio.q)))
                    folded.append(n)
            if len(folded) < 2:
                continue
            used.update(folded)
            changed = True
            if total.terms:
                scale = 1 if total.terms[0][1] > 0 else -1
                total = Momentum(tuple((leg, c * scale) for leg, c in total.terms))
                sign, canonical = canonical_structure(replace_slot(s0, position, total))
                assert canonical is not None
                merged_terms.append((c0 * scale * sign, canonical))
        if changed:
            terms = [t for n, t in enumerate(terms) if n not in used] + merged_terms
            terms = _collect(terms)
    return sorted(terms, key=lambda t: structure_sort_key(t[1]))


def vertex_from(model: m.Model, species: list[Species], monomials: list[Monomial]) -> Vertex | None:
    legs = make_legs(model, canonical_legs(model, species))
    pairs: list[tuple[sympy.Expr, Structure]] = []
    for mono in monomials:
        pairs.extend(monomial_terms(model, mono, legs))
    collected = _collect(pairs)
    if not collected:
        return None
    merged = _merge_momenta(collected)
    terms = tuple(VertexTerm(c, s) for c, s in sorted(merged, key=lambda t: structure_sort_key(t[1])))
    origins = tuple(sorted({mono.origin.line for mono in monomials}))
    return Vertex(legs, terms, model, origins)


# ------------------------------------------------------------------ propagators

def _gauge_fixing(model: m.Model, group: m.GaugeGroup, gauge: str) -> list[Monomial]:
    """-1/(2 xi) (d.A)^2 for a group with Lorenz-type R_xi gauge fixing."""
    boson = model.fields[group.boson]
    if group.fixing != "lorenz":
        return []
    if gauge == "unitary" and boson.mass != 0:
        return []
    xi = group.xi if gauge == "xi" else sympy.Integer(1)
    adjoint = () if group.abelian else ((group.name, "gfa"),)
    atoms = (FieldAtom(group.boson, False, "gf1", ("gf1",), group.span, adjoint),
             FieldAtom(group.boson, False, "gf2", ("gf2",), group.span, adjoint))
    return [Monomial(-1 / (2 * xi), atoms, group.span)]


def _has_ghosts(model: m.Model, group: m.GaugeGroup, gauge: str) -> bool:
    """Ghosts belong to a gauge-fixed non-abelian group; unitary gauge drops the fixing of massive bosons."""
    massive = model.fields[group.boson].mass != 0
    return not group.abelian and group.fixing == "lorenz" and not (gauge == "unitary" and massive)


def ghost_monomials(model: m.Model, gauge: str = "xi") -> list[Monomial]:
    """Faddeev-Popov ghost terms of every non-abelian group with Lorenz-type gauge fixing.

    L = bar(c)^a (-d^mu D_mu^{ac}) c^c with the adjoint D_mu^{ac} = d_mu delta^{ac} + s g f^{abc} A^b_mu
    (s = +1 for D = d - i g T A), integrated by parts: d bar(c).d c + s g f^{abc} (d^mu bar(c)^a) A^b_mu c^c.
    """
    out: list[Monomial] = []
    for group in model.groups.values():
        if not _has_ghosts(model, group, gauge):
            continue
        gh, name = group.ghost, group.name
        kinetic = (FieldAtom(gh, True, None, ("m",), group.span, ((name, "a"),)),
                   FieldAtom(gh, False, None, ("m",), group.span, ((name, "a"),)))
        out.append(Monomial(sympy.Integer(1), kinetic, group.span))
        interaction = (GroupAtom("f", name, ("a", "b", "c"), group.span),
                       FieldAtom(gh, True, None, ("m",), group.span, ((name, "a"),)),
                       FieldAtom(group.boson, False, "m", (), group.span, ((name, "b"),)),
                       FieldAtom(gh, False, None, (), group.span, ((name, "c"),)))
        out.append(Monomial(model.conventions.covariant_sign * group.coupling, interaction, group.span))
    return out


def _momentum_sign(mom: Momentum) -> sympy.Expr:
    """With p(leg 1) = -p and p(leg 2) = +p, a combination sum c_k p_k equals (this) x p."""
    return sympy.Add(*[(-1 if leg == 1 else 1) * sympy.Rational(c.numerator, c.denominator)
                       for leg, c in mom.terms])


def quadratic_kernel(model: m.Model, f: m.Field, monomials: Iterable[Monomial]) -> dict[str, sympy.Expr]:
    """Gamma_2 / i of one field from its quadratic monomials, split by structure.

    Keys: 'one' (scalar part, may hold p2 = p.p), 'metric' (coefficient of g^{mu nu}), 'pp' (of
    p^mu p^nu); for fermions 'slash_L', 'slash_R' (coefficient of p-slash on each chirality) and
    'one_L', 'one_R'. Legs as derive's propagators: (bar/dag f, f) or (f, f), p along the arrow.
    Canonical: scalar one = p2 - m^2; Dirac slash_L = slash_R = 1, one_L = one_R = -m; vector
    metric = -p2 + m^2. The reading follows derive.propagator_for, which inverts the same kernel.
    """
    species = [(f.name, True), (f.name, False)] if f.two_ended else [(f.name, False), (f.name, False)]
    legs = make_legs(model, species)
    kernel: dict[str, sympy.Expr] = defaultdict(lambda: sympy.Integer(0))
    for mono in monomials:
        for coefficient, structure in monomial_terms(model, mono, legs):
            if any(not isinstance(g, GroupDelta) for g in structure.group):
                raise DerivationError(f"the quadratic terms of '{f.name}' are not diagonal in its group indices",
                                      mono.origin, "write its kinetic and mass terms with the group indices "
                                      "contracted")
            value = coefficient / sympy.I
            key = "one"
            for t in structure.tensors:
                if isinstance(t, Dot):
                    value *= _momentum_sign(t.p) * _momentum_sign(t.q) * P2
                elif isinstance(t, Metric):
                    key = "metric"
                elif isinstance(t, Vector):
                    value *= _momentum_sign(t.momentum)
                    key = "pp"
                else:
                    raise DerivationError(f"the quadratic terms of '{f.name}' contain an epsilon tensor", mono.origin,
                                          "parity-odd kinetic terms are not supported")
            for chain in structure.chains:
                if any(isinstance(mat, Sigma) for mat in chain.matrices):
                    raise DerivationError(f"the quadratic terms of '{f.name}' contain sigma[mu,nu]", mono.origin,
                                          f"write Dirac kinetic and mass terms as bar({f.name}) "
                                          f"(I gamma[mu] d[mu] - m) {f.name}")
                slashes = [mat for mat in chain.matrices if isinstance(mat, Gamma)]
                if len(slashes) == 1 and isinstance(slashes[0].slot, Momentum):
                    value *= _momentum_sign(slashes[0].slot)
                    key = "slash"
                elif slashes:
                    raise DerivationError(f"cannot read the quadratic terms of '{f.name}'", mono.origin)
                # 1 = PL + PR and gamma5 = PR - PL: each chirality separately
                chiral = [mat.kind for mat in chain.matrices if isinstance(mat, Chiral)]
                weights = {"PL": {"L": 1}, "PR": {"R": 1}, "gamma5": {"L": -1, "R": 1}}.get(
                    chiral[0] if chiral else "", {"L": 1, "R": 1})
                for hand, w in weights.items():
                    kernel[f"{key}_{hand}"] += w * value
            if not structure.chains:
                kernel[key] += value
    return {k: sympy.expand(v) for k, v in kernel.items()}



def propagator_for(model: m.Model, f: m.Field, monomials: list[Monomial], gauge: str) -> Propagator:
    """i x the inverse of the quadratic kernel of one field."""
    # the kernel is factored only as part of the propagator's coefficients, once, below
    kernel = quadratic_kernel(model, f, monomials)
    if f.kind in ("scalar", "ghost"):
        k = kernel.get("one", sympy.Integer(0))
        if k == 0:
            raise _no_kernel(f)
        return Propagator(f.name, "scalar", sympy.factor(sympy.I / k), sympy.Integer(0), gauge, model,
                          _propagator_reps(model, f))
    if f.is_fermion:
        zero = sympy.Integer(0)
        alpha, beta = kernel.get("slash_L", zero), kernel.get("slash_R", zero)
        mass_l, mass_r = kernel.get("one_L", zero), kernel.get("one_R", zero)
        if mass_l != mass_r and sympy.simplify(mass_l - mass_r) != 0:  # equal kernels need no simplify
            raise DerivationError(f"the mass terms of '{f.name}' differ between its chiralities", f.span,
                                  "write the mass as - m bar(psi) psi, or rotate the chiral phase away")
        if alpha != beta and sympy.simplify(alpha - beta) != 0:
            if mass_l != 0:
                raise DerivationError(f"'{f.name}' has a mass but chiral kinetic terms", f.span,
                                      "write the kinetic term as bar(psi) I gamma[mu] D[mu] psi")
            if alpha == 0 and beta == 0:
                raise _no_kernel(f)
            # K = pslash (alpha PL + beta PR)  =>  D = i (PL / alpha + PR / beta) pslash / p^2
            left = sympy.factor(sympy.I / (alpha * P2)) if alpha != 0 else zero
            right = sympy.factor(sympy.I / (beta * P2)) if beta != 0 else zero
            return Propagator(f.name, "dirac", zero, zero, gauge, model, _propagator_reps(model, f), (left, right))
        a, b = alpha, mass_l
        denominator = sympy.factor(a**2 * P2 - b**2)
        if denominator == 0:
            raise _no_kernel(f)
        # (a pslash + b)^-1 = (a pslash - b) / (a^2 p^2 - b^2)
        return Propagator(f.name, "dirac", sympy.factor(sympy.I * a / denominator),
                          sympy.factor(-sympy.I * b / denominator), gauge, model, _propagator_reps(model, f))
    a, b = kernel.get("metric", sympy.Integer(0)), kernel.get("pp", sympy.Integer(0))
    longitudinal = sympy.factor(a + b * P2)
    if a == 0 or longitudinal == 0:
        group = model.boson_group(f.name)
        if a == 0:
            hint = f"add the kinetic term -1/4 F[mu,nu] F[mu,nu] of '{f.name}'"
        elif group is not None:
            hint = f"a massless vector needs gauge fixing: remove 'fixing none' from group '{group.name}'"
        else:
            hint = "a massless vector needs gauge fixing: make it the boson of a gauge group"

        raise DerivationError(f"the quadratic kernel of '{f.name}' cannot be inverted", f.span, hint)
    # (a g + b p p)^-1 = g / a - b p p / (a (a + b p^2))
    return Propagator(f.name, "vector", sympy.factor(sympy.I / a),
                      sympy.factor(-sympy.I * b / (a * longitudinal)), gauge, model, _propagator_reps(model, f))


def _propagator_reps(model: m.Model, f: m.Field) -> tuple[tuple[str, str, int], ...]:
    return tuple((g, rep, index_dimension(model, g, rep)) for g, rep in f.representations)


def _no_kernel(f: m.Field) -> DerivationError:
    return DerivationError(f"the field '{f.name}' has no kinetic term, so it has no propagator", f.span,
                           "add its kinetic term to the lagrangian")


# ------------------------------------------------------------------ everything

def derive_rules(model: m.Model, monomials: Sequence[Monomial], gauge: str = "xi") -> Rules:
    """Every vertex (three or more legs) and every propagator of a model, from its expanded monomials."""
    if gauge not in GAUGES:
        raise UsageError(f"unknown gauge '{gauge}'", hint="choose xi, feynman or unitary")
    monomials = list(monomials) + ghost_monomials(model, gauge)
    for mono in monomials:
        check_chains(model, mono)
    groups: dict[tuple[Species, ...], list[Monomial]] = defaultdict(list)
    for mono in monomials:
        species = tuple(sorted(species_of(model, a) for a in mono.fields))
        groups[species].append(mono)
    vertices: list[Vertex] = []
    quadratic: dict[str, list[Monomial]] = defaultdict(list)
    step = progress.stage("deriving vertices", total=len(groups))
    for species, monos in groups.items():
        step.advance()
        if len(species) >= 3:
            v = vertex_from(model, list(species), monos)
            if v is not None:
                vertices.append(v)
        elif len(species) == 2:
            (f1, c1), (f2, c2) = species
            field = model.fields[f1]
            if f1 != f2 or (field.two_ended and c1 == c2):
                line = monos[0].origin
                raise DerivationError(f"'{_label(model, species[0])}' and '{_label(model, species[1])}' mix at "
                                      "quadratic order", line,
                                      "rotate the fields to mass eigenstates (or remove the mixing term) "
                                      "before deriving propagators")
            quadratic[f1].extend(monos)
    for group in model.groups.values():
        quadratic[group.boson].extend(_gauge_fixing(model, group, gauge))
    without_ghosts = {g.ghost for g in model.groups.values() if not _has_ghosts(model, g, gauge)}
    propagators = []
    step = progress.stage("deriving propagators", total=len(model.fields))
    for f in model.fields.values():
        step.advance()
        if f.kind == "ghost" and f.name in without_ghosts:
            continue
        propagators.append(propagator_for(model, f, quadratic.get(f.name, []), gauge))
    vertices.sort(key=lambda v: (len(v.legs), v.labels))
    return Rules(model, gauge, tuple(vertices), tuple(propagators))


def _label(model: m.Model, s: Species) -> str:
    f = model.fields[s[0]]
    if not s[1]:
        return s[0]
    return f"bar({s[0]})" if f.is_fermion else f"dag({s[0]})"
