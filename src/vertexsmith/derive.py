"""Vertices from monomials by functional differentiation, and the monomials the derivation adds.

Propagators are read from the quadratic form (`quadratic.py`) and inverted in `propagate.py`;
`assemble.derive_rules` runs the whole stage. The gauge-fixing and ghost monomials live here.

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

from . import limits
from . import model as m
from .errors import DerivationError, Span
from .expand import DiracAtom, FieldAtom, GroupAtom, Monomial, ParamAtom, TensorAtom, is_plain_product
from .spaces import index_dimension
from .rules import Leg, Vertex, VertexTerm
from .structures import (CHARGE_CONJUGATION, Chain, Chiral, Dot, Dummy, Epsilon, Gamma, Generator, GroupAlternating, GroupDelta,
                         GroupDummy,
                         LegGroupIndex, LegIndex, Metric, Momentum, ParamTensor, Sigma, Slot, Structure, StructureConstant,
                         Vector, canonical_structure, momentum_slots, permutation_sign, replace_slot,
                         structure_sort_key)

MAX_ASSIGNMENTS = limits.ASSIGNMENTS.limit
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
            if atom.opens_chain:
                open_bar = mapping[k]
                # bar(cc(psi)) = psi^T C: the row index of the chain is psi's own spinor index
                matrices = [CHARGE_CONJUGATION] if atom.charge_conjugate else []
            else:
                assert open_bar is not None
                if atom.charge_conjugate:  # cc(psi) = C bar(psi)^T: the column index is bar(psi)'s own
                    matrices.append(CHARGE_CONJUGATION)
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
            if atom.opens_chain:
                if open_atom is not None:
                    if atom.charge_conjugate or open_atom.charge_conjugate:
                        raise DerivationError(f"the chain {chain_end_label(open_atom)} ... {chain_end_label(atom)} "
                                              "cannot be assembled: both ends are rows", atom.span,
                                              f"{chain_end_label(atom)} opens a chain; end the chain with a "
                                              f"column: {atom.field}, or cc({atom.field}) for the charge conjugate")
                    raise DerivationError("a fermion bilinear opens twice before it closes", atom.span,
                                          "write bar(a) ... b, each bar() followed by its partner field")
                open_atom = atom
            else:
                if open_atom is None:
                    if atom.charge_conjugate:
                        raise DerivationError(f"'{chain_end_label(atom)}' closes a chain that nothing opened",
                                              atom.span, f"write bar(...) or bar(cc(...)) before it, as in "
                                              f"bar(psi) PL cc({atom.field})")
                    raise DerivationError(f"the fermion '{atom.field}' has no bar() partner before it", atom.span,
                                          f"write bar(...) before {atom.field}, as in bar(psi) psi")
                open_atom = None
    if open_atom is not None:
        raise DerivationError(f"{chain_end_label(open_atom)} has no fermion after it", open_atom.span,
                              "close the bilinear with a fermion field, as in bar(psi) psi"
                              + (" or bar(cc(psi)) chi" if open_atom.charge_conjugate else ""))


def chain_end_label(atom: FieldAtom) -> str:
    """How a fermion factor is written: psi, bar(psi), cc(psi) or bar(cc(psi))."""
    name = f"cc({atom.field})" if atom.charge_conjugate else atom.field
    return f"bar({name})" if atom.opens_chain else name


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

def _collect(pairs: Iterable[tuple[sympy.Expr, Structure]],
             budget_at: Span | None = None) -> list[tuple[sympy.Expr, Structure]]:
    """Sum the coefficients of equal structures; with `budget_at`, refuse too many structures first."""
    # summands are gathered and added once: adding them one by one is quadratic in their number
    total: dict[Structure, list[sympy.Expr]] = {}
    for coefficient, structure in pairs:
        total.setdefault(structure, []).append(coefficient)
    if budget_at is not None:
        # before the coefficients are simplified (the costly part); cancellations can only lower the count
        limits.check_budget(limits.TERMS_PER_VERTEX, len(total), budget_at, "this vertex",
                            "split the vertex's terms over fewer distinct index structures")
    out = []
    for structure, summands in total.items():
        coefficient = sympy.Add(*summands)
        c = coefficient if is_plain_product(coefficient) else limits.factor_within_budget(sympy.expand(coefficient))
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


def _has_total_momentum(structure: Structure, legs: int) -> bool:
    for position in momentum_slots(structure):
        momentum = structure.slots()[position]
        assert isinstance(momentum, Momentum)
        if len(momentum.terms) == legs and len({c for _, c in momentum.terms}) == 1:
            return True
    return False


def vertex_from(model: m.Model, species: list[Species], monomials: list[Monomial]) -> Vertex | None:
    legs = make_legs(model, canonical_legs(model, species))
    pairs: list[tuple[sympy.Expr, Structure]] = []
    for mono in monomials:
        # one monomial's assignments are budgeted in _assignments; here the whole vertex's, counted
        # with the monomial that adds them, so the last one is counted too
        pairs.extend(monomial_terms(model, mono, legs))
        limits.check_budget(limits.VERTEX_ASSIGNMENTS, len(pairs), mono.origin, "this vertex",
                            "split the vertex's terms, or use fewer identical fields with indices")
    collected = _collect(pairs, budget_at=monomials[0].origin)
    if not collected:
        return None
    # momentum conservation: a term with the total momentum p1 + ... + pn in a slot vanishes
    merged = [(c, s) for c, s in _merge_momenta(collected) if not _has_total_momentum(s, len(legs))]
    if not merged:
        return None
    terms = tuple(VertexTerm(c, s) for c, s in sorted(merged, key=lambda t: structure_sort_key(t[1])))
    origins = tuple(sorted({mono.origin.line for mono in monomials}))
    return Vertex(legs, terms, model, origins)


# ------------------------------------------------------------------ propagators

def gauge_fixing_monomials(model: m.Model, group: m.GaugeGroup, gauge: str) -> list[Monomial]:
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


def has_ghosts(model: m.Model, group: m.GaugeGroup, gauge: str) -> bool:
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
        if not has_ghosts(model, group, gauge):
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


def species_label(model: m.Model, s: Species) -> str:
    """A leg species as the model language writes it: phi, dag(phi), bar(psi)."""
    f = model.fields[s[0]]
    if not s[1]:
        return s[0]
    return f"bar({s[0]})" if f.is_fermion else f"dag({s[0]})"
