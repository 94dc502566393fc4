"""Lorentz and Dirac structures of vertex factors: small immutable objects with slots.

A slot of a tensor is filled by a leg's Lorentz index (`LegIndex`), a linear combination of
incoming leg momenta (`Momentum`), or an internal contracted index (`Dummy`). A vertex term is a
coefficient times a `Structure`: commuting tensors (metric, four-vector, dot product,
Levi-Civita) and spinor chains bar(leg) [Dirac matrices] leg. Everything is canonicalised so
that equal structures compare equal, and everything can be evaluated numerically.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from fractions import Fraction
from typing import Any, Callable, Iterable, Sequence, Union, cast


@dataclass(frozen=True, order=True)
class LegIndex:
    """The Lorentz index of vector leg `leg` (1-based)."""

    leg: int

    def key(self) -> tuple:
        return (0, self.leg)


@dataclass(frozen=True, order=True)
class Momentum:
    """A linear combination of incoming leg momenta: ((leg, coefficient), ...), sorted by leg."""

    terms: tuple[tuple[int, Fraction], ...]

    @classmethod
    def of(cls, leg: int) -> "Momentum":
        return cls(((leg, Fraction(1)),))

    def key(self) -> tuple:
        return (1, tuple((leg, c) for leg, c in self.terms))

    def plus(self, other: "Momentum", factor: Fraction) -> "Momentum":
        total: dict[int, Fraction] = dict(self.terms)
        for leg, c in other.terms:
            total[leg] = total.get(leg, Fraction(0)) + factor * c
        return Momentum(tuple(sorted((leg, c) for leg, c in total.items() if c != 0)))

    def relabel(self, new: dict[int, int]) -> "Momentum":
        return Momentum(tuple(sorted((new[leg], c) for leg, c in self.terms)))


@dataclass(frozen=True, order=True)
class Dummy:
    """An internal contracted index; canonical names are r1, r2, ..."""

    name: str

    def key(self) -> tuple:
        return (2, self.name)


@dataclass(frozen=True, order=True)
class LegGroupIndex:
    """The index of leg `leg` under a non-abelian group (adjoint a_k, fundamental i_k)."""

    leg: int
    group: str

    def key(self) -> tuple:
        return (3, self.group, self.leg)


@dataclass(frozen=True, order=True)
class GroupDummy:
    """An internal contracted group index; canonical names are e1, e2, ..."""

    name: str

    def key(self) -> tuple:
        return (4, self.name)


Slot = Union[LegIndex, Momentum, Dummy, LegGroupIndex, GroupDummy]


def slot_key(slot: Slot) -> tuple:
    return slot.key()


# ------------------------------------------------------------------ commuting tensors

@dataclass(frozen=True)
class Metric:
    a: Slot
    b: Slot

    def slots(self) -> tuple[Slot, ...]:
        return (self.a, self.b)


@dataclass(frozen=True)
class Vector:
    """p^mu: a momentum combination carrying a leg's or a dummy Lorentz index."""

    momentum: Momentum
    index: Slot

    def slots(self) -> tuple[Slot, ...]:
        return (self.momentum, self.index)


@dataclass(frozen=True)
class Dot:
    p: Momentum
    q: Momentum

    def slots(self) -> tuple[Slot, ...]:
        return (self.p, self.q)


@dataclass(frozen=True)
class Epsilon:
    slots_: tuple[Slot, Slot, Slot, Slot]

    def slots(self) -> tuple[Slot, ...]:
        return self.slots_


Tensor = Union[Metric, Vector, Dot, Epsilon]


# ------------------------------------------------------------------ group tensors

@dataclass(frozen=True)
class StructureConstant:
    """f^{abc} of a non-abelian group, totally antisymmetric."""

    group: str
    slots_: tuple[Slot, Slot, Slot]

    def slots(self) -> tuple[Slot, ...]:
        return self.slots_


@dataclass(frozen=True)
class Generator:
    """(T^a)_{ij} in the fundamental."""

    group: str
    slots_: tuple[Slot, Slot, Slot]

    def slots(self) -> tuple[Slot, ...]:
        return self.slots_


@dataclass(frozen=True)
class GroupDelta:
    """delta_{ij} or delta^{ab} of a group's index space."""

    group: str
    slots_: tuple[Slot, Slot]

    def slots(self) -> tuple[Slot, ...]:
        return self.slots_


@dataclass(frozen=True)
class GroupAlternating:
    """The invariant alternating tensor epsilon_{i1...iN} of SU(N), one slot per fundamental index.

    Numerically the same array whether its slots contract upper or lower indices; which of the
    two a term means is fixed by what the slots are contracted with (see `invariance`).
    """

    group: str
    slots_: tuple[Slot, ...]

    def slots(self) -> tuple[Slot, ...]:
        return self.slots_


@dataclass(frozen=True)
class ParamTensor:
    """A vector or matrix parameter over index spaces, Y_{ij} (or its complex conjugate)."""

    group: str  # the parameter's name: it sorts among the group tensors
    conjugate: bool
    slots_: tuple[Slot, ...]

    def slots(self) -> tuple[Slot, ...]:
        return self.slots_


GroupTensor = Union[StructureConstant, Generator, GroupDelta, GroupAlternating, ParamTensor]


# ------------------------------------------------------------------ Dirac matrices and chains

@dataclass(frozen=True)
class Gamma:
    """gamma^slot; with a Momentum slot it is p-slash."""

    slot: Slot

    def slots(self) -> tuple[Slot, ...]:
        return (self.slot,)


@dataclass(frozen=True)
class Sigma:
    """sigma^{a b} = (i/2)[gamma^a, gamma^b]."""

    a: Slot
    b: Slot

    def slots(self) -> tuple[Slot, ...]:
        return (self.a, self.b)


@dataclass(frozen=True)
class Chiral:
    """gamma5, PL = (1 - gamma5)/2 or PR = (1 + gamma5)/2; or C, the charge-conjugation matrix.

    C = i gamma^2 gamma^0 (fermion_flow.py) stands only at an end of a chain, where a cc() field
    sits: bar(a) G cc(b) = bar(a) G C bar(b)^T and bar(cc(a)) G b = a^T C G b.
    """

    kind: str

    def slots(self) -> tuple[Slot, ...]:
        return ()


DiracMatrix = Union[Gamma, Sigma, Chiral]
CHARGE_CONJUGATION = Chiral("C")


def chains_need_legs(structures: Iterable["Structure"]) -> bool:
    """Whether chains must be printed with their legs, chain(i, j, ...): several chains in a vertex, or a
    chain with C, whose two ends are both bar legs or both plain legs (the leg order says nothing)."""
    return any(len(s.chains) > 1 or any(CHARGE_CONJUGATION in c.matrices for c in s.chains) for s in structures)


@dataclass(frozen=True)
class Chain:
    """bar(u_bar_leg) [matrices] u_leg: spinor indices (bar_leg, leg), matrices in order."""

    bar_leg: int
    leg: int
    matrices: tuple[DiracMatrix, ...]

    def slots(self) -> tuple[Slot, ...]:
        return tuple(s for mat in self.matrices for s in mat.slots())


@dataclass(frozen=True)
class Structure:
    """Commuting tensors (sorted) and spinor chains (sorted by their bar leg)."""

    tensors: tuple[Tensor, ...] = ()
    chains: tuple[Chain, ...] = ()
    group: tuple[GroupTensor, ...] = ()

    def slots(self) -> tuple[Slot, ...]:
        return (tuple(s for t in self.tensors for s in t.slots()) + tuple(s for c in self.chains for s in c.slots())
                + tuple(s for g in self.group for s in g.slots()))

    def map_slots(self, f: Callable[[Slot], Slot]) -> "Structure":
        return Structure(tuple(_map_tensor(t, f) for t in self.tensors),
                         tuple(Chain(c.bar_leg, c.leg, tuple(_map_matrix(mat, f) for mat in c.matrices))
                               for c in self.chains),
                         tuple(_map_group_tensor(g, f) for g in self.group))

    def without_group(self) -> "Structure":
        return Structure(self.tensors, self.chains)


def _map_tensor(t: Tensor, f: Callable[[Slot], Slot]) -> Tensor:
    # momentum slots are passed through unchecked: derive.replace_slot deliberately puts a
    # placeholder Dummy there to group terms that differ only in one momentum
    if isinstance(t, Metric):
        return Metric(f(t.a), f(t.b))
    if isinstance(t, Vector):
        return Vector(cast(Momentum, f(t.momentum)), f(t.index))
    if isinstance(t, Dot):
        return Dot(cast(Momentum, f(t.p)), cast(Momentum, f(t.q)))
    a, b, c, d = t.slots_
    return Epsilon((f(a), f(b), f(c), f(d)))


def _map_group_tensor(g: GroupTensor, f: Callable[[Slot], Slot]) -> GroupTensor:
    if isinstance(g, GroupDelta):
        a, b = g.slots_
        return GroupDelta(g.group, (f(a), f(b)))
    if isinstance(g, GroupAlternating):
        return GroupAlternating(g.group, tuple(f(x) for x in g.slots_))
    if isinstance(g, ParamTensor):
        return ParamTensor(g.group, g.conjugate, tuple(f(x) for x in g.slots_))
    a, b, c = g.slots_
    return type(g)(g.group, (f(a), f(b), f(c)))


def _map_matrix(mat: DiracMatrix, f: Callable[[Slot], Slot]) -> DiracMatrix:
    if isinstance(mat, Gamma):
        return Gamma(f(mat.slot))
    if isinstance(mat, Sigma):
        return Sigma(f(mat.a), f(mat.b))
    return mat


# ------------------------------------------------------------------ canonical form

def permutation_sign(keys: Sequence[Any]) -> int:
    """Sign of the permutation that sorts `keys` (no repeats): +1 even, -1 odd."""
    sign = 1
    order = sorted(range(len(keys)), key=lambda i: keys[i])
    seen = [False] * len(order)
    for i in range(len(order)):
        if seen[i]:
            continue
        j, length = i, 0
        while not seen[j]:
            seen[j] = True
            j = order[j]
            length += 1
        if length % 2 == 0:
            sign = -sign
    return sign


def _tensor_key(t: Tensor) -> tuple:
    kind = {Metric: 0, Vector: 1, Dot: 2, Epsilon: 3}[type(t)]
    return (kind, tuple(slot_key(s) for s in t.slots()))


def _canonical_tensor(t: Tensor) -> tuple[int, Tensor | None]:
    """(sign, tensor) with symmetric slots sorted; (0, None) for a vanishing tensor."""
    if isinstance(t, Metric):
        a, b = sorted((t.a, t.b), key=slot_key)
        return 1, Metric(a, b)
    if isinstance(t, Dot):
        p, q = sorted((t.p, t.q), key=slot_key)
        return 1, Dot(p, q)
    if isinstance(t, Epsilon):
        keys = [slot_key(s) for s in t.slots_]
        if len(set(keys)) < 4:
            return 0, None
        sign = permutation_sign(keys)
        a, b, c, d = sorted(t.slots_, key=slot_key)
        return sign, Epsilon((a, b, c, d))
    return 1, t


_CHIRAL_PRODUCT = {  # left x right -> (coefficient, result); None result = identity
    ("gamma5", "gamma5"): (1, None), ("gamma5", "PL"): (-1, "PL"), ("gamma5", "PR"): (1, "PR"),
    ("PL", "gamma5"): (-1, "PL"), ("PR", "gamma5"): (1, "PR"), ("PL", "PL"): (1, "PL"),
    ("PR", "PR"): (1, "PR"), ("PL", "PR"): (0, None), ("PR", "PL"): (0, None),
}
_CHIRAL_THROUGH_GAMMA = {"gamma5": ("gamma5", -1), "PL": ("PR", 1), "PR": ("PL", 1)}


def _canonical_chain(chain: Chain) -> tuple[int, Chain | None]:
    """The canonical form of the matrices between a chain's C ends (which stay where they are)."""
    head = chain.matrices[:1] == (CHARGE_CONJUGATION,)
    tail = len(chain.matrices) > int(head) and chain.matrices[-1] == CHARGE_CONJUGATION
    middle = chain.matrices[int(head):len(chain.matrices) - int(tail)]
    if CHARGE_CONJUGATION in middle:  # pragma: no cover - derive puts C only at the ends
        raise ValueError("C stands inside a chain")
    sign, reduced = _canonical_middle(Chain(chain.bar_leg, chain.leg, middle))
    if reduced is None:
        return 0, None
    return sign, Chain(chain.bar_leg, chain.leg, (CHARGE_CONJUGATION,) * head + reduced.matrices
                       + (CHARGE_CONJUGATION,) * tail)


def _canonical_middle(chain: Chain) -> tuple[int, Chain | None]:
    """Move gamma5 and the projectors to the right end and multiply them out.

    gamma5 anticommutes with gamma^mu (PL gamma^mu = gamma^mu PR) and commutes with sigma^{mu nu}.
    sigma^{ab} is antisymmetric, so its slots are sorted with a sign.
    """
    sign = 1
    chiral: str | None = None
    lorentz: list[DiracMatrix] = []
    # walk from the right, carrying the accumulated chiral matrix leftwards past nothing:
    # instead, push each chiral factor rightwards through the matrices after it.
    items = list(chain.matrices)
    for k, mat in enumerate(items):
        if isinstance(mat, Chiral):
            kind = mat.kind
            for later in items[k + 1:]:
                if isinstance(later, Gamma):
                    kind, s = _CHIRAL_THROUGH_GAMMA[kind]
                    sign *= s
            if chiral is None:
                chiral = kind
            else:
                coefficient, result = _CHIRAL_PRODUCT[(chiral, kind)]
                if coefficient == 0:
                    return 0, None
                sign *= coefficient
                chiral = result
        elif isinstance(mat, Sigma):
            ka, kb = slot_key(mat.a), slot_key(mat.b)
            if ka == kb:
                return 0, None
            if kb < ka:
                sign = -sign
                mat = Sigma(mat.b, mat.a)
            lorentz.append(mat)
        else:
            lorentz.append(mat)
    # gamma^r gamma_r = 4 for adjacent contracted gammas
    reduced: list[DiracMatrix] = []
    factor = 1
    for mat in lorentz:
        if (reduced and isinstance(mat, Gamma) and isinstance(mat.slot, Dummy) and isinstance(reduced[-1], Gamma)
                and reduced[-1].slot == mat.slot):
            reduced.pop()
            factor *= 4
            continue
        reduced.append(mat)
    if chiral is not None:
        reduced.append(Chiral(chiral))
    return sign * factor, Chain(chain.bar_leg, chain.leg, tuple(reduced))


def _canonical_group_tensor(t: GroupTensor) -> tuple[int, GroupTensor | None]:
    if isinstance(t, StructureConstant):
        keys = [slot_key(x) for x in t.slots_]
        if len(set(keys)) < 3:
            return 0, None
        a, b, c = sorted(t.slots_, key=slot_key)
        return permutation_sign(keys), StructureConstant(t.group, (a, b, c))
    if isinstance(t, GroupDelta):
        i, j = sorted(t.slots_, key=slot_key)
        return 1, GroupDelta(t.group, (i, j))
    if isinstance(t, GroupAlternating):
        # totally antisymmetric: sorted slots with the sign of the permutation, zero on a repeat
        keys = [slot_key(x) for x in t.slots_]
        if len(set(keys)) < len(keys):
            return 0, None
        return permutation_sign(keys), GroupAlternating(t.group, tuple(sorted(t.slots_, key=slot_key)))
    return 1, t


def _group_key(t: GroupTensor) -> tuple:
    kind = {StructureConstant: 0, Generator: 1, GroupDelta: 2, GroupAlternating: 3, ParamTensor: 5}[type(t)]
    if isinstance(t, ParamTensor) and t.conjugate:
        kind = 6
    return (t.group, kind, tuple(slot_key(s) for s in t.slots_))


def canonical_structure(structure: Structure) -> tuple[int, Structure | None]:
    """(sign, canonical structure) or (0, None) when the structure vanishes."""
    sign = 1
    group: list[GroupTensor] = []
    for g in structure.group:
        s_, cg = _canonical_group_tensor(g)
        if cg is None:
            return 0, None
        sign *= s_
        group.append(cg)
    group.sort(key=_group_key)
    tensors: list[Tensor] = []
    for t in structure.tensors:
        s, c = _canonical_tensor(t)
        if c is None:
            return 0, None
        sign *= s
        tensors.append(c)
    chains: list[Chain] = []
    for ch in structure.chains:
        s, c2 = _canonical_chain(ch)
        if c2 is None:
            return 0, None
        sign *= s
        chains.append(c2)
    tensors.sort(key=_tensor_key)
    chains.sort(key=lambda c: (c.bar_leg, c.leg))
    result = Structure(tuple(tensors), tuple(chains), tuple(group))
    # dummy names by order of appearance
    names: dict[tuple[str, str], Slot] = {}

    def rename(slot: Slot) -> Slot:
        if isinstance(slot, Dummy):
            if ("L", slot.name) not in names:
                names[("L", slot.name)] = Dummy(f"r{sum(k[0] == 'L' for k in names) + 1}")
            return names[("L", slot.name)]
        if isinstance(slot, GroupDummy):
            if ("G", slot.name) not in names:
                names[("G", slot.name)] = GroupDummy(f"e{sum(k[0] == 'G' for k in names) + 1}")
            return names[("G", slot.name)]
        return slot

    for slot in result.slots():
        rename(slot)
    if names:
        result = result.map_slots(rename)
        again: list[GroupTensor] = []
        for g in result.group:
            s_, cg = _canonical_group_tensor(g)
            # renaming keeps distinct dummies distinct, so a tensor that survived above survives here
            assert cg is not None
            sign *= s_
            again.append(cg)
        result = Structure(tuple(sorted(result.tensors, key=_tensor_key)), result.chains,
                           tuple(sorted(again, key=_group_key)))
    return sign, result


def structure_sort_key(structure: Structure) -> tuple:
    """A total, deterministic order of structures (for output)."""
    return (tuple(_group_key(g) for g in structure.group), len(structure.tensors),
            tuple(_tensor_key(t) for t in structure.tensors),
            tuple((c.bar_leg, c.leg, tuple(_matrix_key(mat) for mat in c.matrices)) for c in structure.chains))


def _matrix_key(mat: DiracMatrix) -> tuple:
    if isinstance(mat, Gamma):
        return (0, slot_key(mat.slot))
    if isinstance(mat, Sigma):
        return (1, slot_key(mat.a), slot_key(mat.b))
    return (2, mat.kind)


def momentum_slots(structure: Structure) -> list[int]:
    """Positions (in `structure.slots()` order) of momentum slots."""
    return [k for k, s in enumerate(structure.slots()) if isinstance(s, Momentum)]


def replace_slot(structure: Structure, position: int, value: Slot) -> Structure:
    counter = iter(range(10_000))

    def f(slot: Slot) -> Slot:
        return value if next(counter) == position else slot

    return structure.map_slots(f)


def relabel_legs(structure: Structure, new: dict[int, int]) -> tuple[int, Structure]:
    """Renumber legs (old -> new position) in every slot and chain; (sign, canonical structure)."""

    def f(slot: Slot) -> Slot:
        if isinstance(slot, LegIndex):
            return LegIndex(new[slot.leg])
        if isinstance(slot, LegGroupIndex):
            return LegGroupIndex(new[slot.leg], slot.group)
        if isinstance(slot, Momentum):
            return slot.relabel(new)
        return slot

    mapped = structure.map_slots(f)
    chains = tuple(Chain(new[c.bar_leg], new[c.leg], c.matrices) for c in mapped.chains)
    sign, canonical = canonical_structure(Structure(mapped.tensors, chains, mapped.group))
    assert canonical is not None
    return sign, canonical


def legs_in(slots: Iterable[Slot]) -> set[int]:
    out: set[int] = set()
    for s in slots:
        if isinstance(s, LegIndex):
            out.add(s.leg)
        elif isinstance(s, Momentum):
            out.update(leg for leg, _ in s.terms)
    return out


__all__ = ["permutation_sign", "LegIndex", "Momentum", "Dummy", "LegGroupIndex", "GroupDummy", "StructureConstant", "Generator",
           "GroupDelta", "GroupAlternating", "ParamTensor", "GroupTensor", "Slot", "Metric", "Vector", "Dot", "Epsilon", "Tensor", "Gamma",
           "Sigma", "Chiral", "CHARGE_CONJUGATION", "chains_need_legs", "DiracMatrix", "Chain", "Structure", "canonical_structure", "structure_sort_key",
           "momentum_slots", "replace_slot", "relabel_legs", "replace"]
