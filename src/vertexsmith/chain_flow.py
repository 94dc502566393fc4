"""Spinor chains of a monomial read along a chosen fermion flow (Majorana fields and cc() ends).

A chain bar(x) G y equals bar(y^c) G' x^c with G' = C G^T C^-1 (fermion_flow.py); for a Majorana
field x^c = x. The expansion hands every monomial here so that each vertex is stated for one flow.
"""

from __future__ import annotations

from dataclasses import replace

from . import model as m
from .atoms import Atom, DiracAtom, FieldAtom, Monomial
from .fermion_flow import reversed_chain


def _chains(model: m.Model, atoms: tuple[Atom, ...]) -> list[tuple[int, list[int], int]]:
    """(bar atom, Dirac atoms, closing atom) positions of each spinor chain, in written order."""
    chains: list[tuple[int, list[int], int]] = []
    start: int | None = None
    inside: list[int] = []
    for k, atom in enumerate(atoms):
        if isinstance(atom, DiracAtom) and start is not None:
            inside.append(k)
        elif isinstance(atom, FieldAtom) and model.fields[atom.field].is_fermion:
            if atom.opens_chain and start is None:
                start, inside = k, []
            elif not atom.opens_chain and start is not None:
                chains.append((start, inside, k))
                start = None
    return chains


def _reverse_chain(model: m.Model, mono: Monomial, chain: tuple[int, list[int], int]) -> Monomial:
    """bar(a) G b rewritten as bar(b^c) G' a^c with G' = C G^T C^-1, an identity for anticommuting fields.

    For a Majorana field a^c = a, so the reversed chain is bar(b) G' a; for a Dirac field the end
    toggles between psi and cc(psi) (cc(cc(psi)) = psi, since C C^T = 1).
    The fields keep their derivatives and indices; the Dirac matrices take the chain's positions in
    reversed order, and the sign is that of C G^T C^-1 (see fermion_flow.py). Atoms that stand
    between the two fields (a boson, a ghost) stay where they are: moving a Grassmann factor past
    the first field and back costs two signs, which cancel.
    """
    start, inside, end = chain
    atoms = list(mono.atoms)
    bar_atom, plain_atom = atoms[start], atoms[end]
    assert isinstance(bar_atom, FieldAtom) and isinstance(plain_atom, FieldAtom)
    kinds = [atoms[k].kind for k in inside]  # type: ignore[union-attr]
    sign, matrices = reversed_chain(kinds, [atoms[k] for k in inside])
    atoms[start] = _flip_end(model, plain_atom)
    atoms[end] = _flip_end(model, bar_atom)
    for k, matrix in zip(inside, matrices):
        atoms[k] = matrix
    return Monomial(sign * mono.coefficient, tuple(atoms), mono.origin)


def _flip_end(model: m.Model, atom: FieldAtom) -> FieldAtom:
    """The other end of a reversed chain: a Majorana field changes its bar, a Dirac field its cc()."""
    if model.fields[atom.field].kind == "majorana":
        return replace(atom, conjugate=not atom.conjugate)
    return replace(atom, charge_conjugate=not atom.charge_conjugate)


def _cc_count(model: m.Model, atoms: tuple[FieldAtom, FieldAtom]) -> tuple[int, int]:
    """How many ends of a chain carry C now, and how many would after reversing it."""
    dirac = [a for a in atoms if model.fields[a.field].kind != "majorana"]
    return sum(a.charge_conjugate for a in dirac), sum(not a.charge_conjugate for a in dirac)


def orient_majorana_chains(model: m.Model, mono: Monomial) -> list[Monomial]:
    """A monomial in fermion-flow form: the monomials whose vertices have flow-ordered Majorana legs.

    A Majorana field is its own conjugate, so a chain bar(a) G b between Majorana fields equals
    bar(b) G' a (Denner, Eck, Hahn & Kuebbeck, Nucl. Phys. B 387 (1992) 467, from memory).
    - Two different Majorana fields: the chain is turned so that its bar end is the field declared
      first; a term and its reversed partner then land on one vertex and add up.
    - The same field at both ends (bar(chi) G chi): both readings are kept, each with the full
      coefficient, because the functional derivative fills the bar-end leg with either factor. The
      vertex is then i (G + G'): 2 i G for S, P and A, zero for V and T (the Majorana vector
      current vanishes), and 1/2 bar(chi) (i gamma.d - m) chi gives the Dirac kernel.
    """
    order = {name: k for k, name in enumerate(model.fields)}
    out = [mono]
    for chain in reversed(_chains(model, mono.atoms)):  # from the right: positions to the left stay valid
        start, _, end = chain
        a, b = mono.atoms[start], mono.atoms[end]
        assert isinstance(a, FieldAtom) and isinstance(b, FieldAtom)
        if a.charge_conjugate or b.charge_conjugate:
            # a chain with a Dirac cc() end is read the way with fewer C matrices (none when the other end is
            # Majorana or both ends are cc()); with one C either way, C goes to the field declared later
            now, after = _cc_count(model, (a, b))
            conjugated, other = (a, b) if a.charge_conjugate else (b, a)
            if after < now or (after == now and order[conjugated.field] < order[other.field]):
                out = [_reverse_chain(model, one, chain) for one in out]
            continue
        if model.fields[a.field].kind != "majorana" or model.fields[b.field].kind != "majorana":
            continue
        if a.field == b.field:
            out = out + [_reverse_chain(model, one, chain) for one in out]
        elif order[a.field] > order[b.field]:
            out = [_reverse_chain(model, one, chain) for one in out]
    return out
