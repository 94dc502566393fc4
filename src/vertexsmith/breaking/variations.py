"""Infinitesimal gauge transformations written as monomials, and the variation of monomials.

The gauge fixing of a broken theory needs delta(field) for every field a broken group acts on.
They are written here, from the same data that builds D[mu] in `expand`, as monomials linear in
one pseudo-field per group, `alpha_<boson>` (a real scalar; adjoint of SU(N) for SU(N)). With the
model's covariant sign s (D = d - i s g T A) the transformation is U = exp(i s g alpha^a T^a):

    delta psi   = i s g alpha^a T^a psi        (T^a of the field's representation; q for U(1))
    delta A^a   = d alpha^a + s g f^{abc} A^b alpha^c        (d alpha for U(1))

which leaves every term built from D[mu] and field strengths invariant (tests check it on the
vertex functions of the varied Lagrangian). With this normalisation delta F/delta alpha for
F = d.A is the d^mu D_mu of the unbroken ghost Lagrangian in `derive.ghost_monomials`.

`vary` applies a variation map to monomials to first order: each field factor in turn replaced by
its variation, derivatives distributed over the variation's fields (Leibniz), conjugated factors
by the conjugated variation.
"""

from __future__ import annotations

import dataclasses
import itertools
from dataclasses import dataclass, replace
from typing import Iterable, Mapping, Sequence

import sympy

from .. import model as m
from ..expand import Atom, DiracAtom, FieldAtom, GroupAtom, Monomial, ParamAtom, TensorAtom, conjugate_param

ALPHA_PREFIX = "alpha_"
# placeholders for the varied field's own indices inside its variation (never written by users: '#')
LORENTZ = "var#mu"
GROUP = "var#i"


def alpha_name(vector: str) -> str:
    """The gauge-parameter pseudo-field of a gauge boson or of a mass-eigenstate vector."""
    return f"{ALPHA_PREFIX}{vector}"


@dataclass(frozen=True)
class Variation:
    """delta(field) as monomials, each linear in one alpha pseudo-field.

    The varied field's own indices appear in the monomials as the placeholders `index` (Lorentz)
    and `group_indices` ((group, placeholder) pairs); `vary` renames them to the factor's own.
    """

    field: str
    index: str | None
    group_indices: tuple[tuple[str, str], ...]
    monomials: tuple[Monomial, ...]


Variations = Mapping[str, Variation]


def with_alpha_fields(model: m.Model, vectors: Iterable[str]) -> m.Model:
    """The model with one alpha pseudo-field per vector: a scalar like the vector (complex if it is)."""
    fields = dict(model.fields)
    for name in vectors:
        v = model.fields[name]
        fields[alpha_name(name)] = m.Field(alpha_name(name), "scalar", v.is_complex, sympy.Integer(0), v.charges,
                                           f"gauge parameter of {name}", v.span, v.representations)
    return replace(model, fields=fields)


def gauge_variations(model: m.Model, groups: Sequence[str]) -> dict[str, Variation]:
    """delta(field) under the named gauge groups, for every field that one of them acts on.

    The model returned by `with_alpha_fields(model, bosons)` knows the alpha pseudo-fields that
    the monomials hold.
    """
    s = model.conventions.covariant_sign
    out: dict[str, Variation] = {}
    for f in model.fields.values():
        if f.kind == "ghost" or f.name.startswith(ALPHA_PREFIX):
            continue
        index = LORENTZ if f.is_vector else None
        own = tuple((g, f"{GROUP}{g}") for g, rep in f.representations if g in model.groups)
        monos: list[Monomial] = []
        for name in groups:
            group = model.groups[name]
            monos.extend(_field_terms(model, f, group, s, index, dict(own)))
        if monos:
            out[f.name] = Variation(f.name, index, own, tuple(monos))
    return out


def _field_terms(model: m.Model, f: m.Field, group: m.GaugeGroup, s: int, index: str | None,
                 own: dict[str, str]) -> list[Monomial]:
    """The terms of delta(f) that one group gives (none if the group does not act on f)."""
    span, g = group.span, group.coupling
    alpha = alpha_name(group.boson)
    adjoint = own.get(group.name)
    field_indices = tuple(own.items())
    if f.name == group.boson:
        if group.abelian:
            return [Monomial(sympy.Integer(1), (FieldAtom(alpha, False, None, (index or "",), span),), span)]
        a = adjoint or ""
        return [Monomial(sympy.Integer(1), (FieldAtom(alpha, False, None, (index or "",), span, ((group.name, a),)),),
                         span),
                Monomial(s * g, (GroupAtom("f", group.name, (a, "var#b", "var#c"), span),
                                 FieldAtom(f.name, False, index, (), span, _moved(field_indices, group.name, "var#b")),
                                 FieldAtom(alpha, False, None, (), span, ((group.name, "var#c"),))), span)]
    if group.abelian:
        q = f.charge(group.name)
        if q == 0:
            return []
        return [Monomial(sympy.I * s * g * sympy.Rational(q.numerator, q.denominator),
                         (FieldAtom(alpha, False, None, (), span),
                          FieldAtom(f.name, False, index, (), span, field_indices)), span)]
    rep = f.representation(group.name)
    if rep is None:
        return []
    i = adjoint or ""
    alpha_atom = FieldAtom(alpha, False, None, (), span, ((group.name, "var#a"),))
    moved = FieldAtom(f.name, False, index, (), span, _moved(field_indices, group.name, "var#j"))
    if rep == "adjoint":  # (T^b_adj)_{ic} = -i f^{bic}: i s g alpha^b (-i f^{bic}) X^c
        return [Monomial(s * g, (GroupAtom("f", group.name, ("var#a", i, "var#j"), span), alpha_atom, moved), span)]
    if rep == "fundamental":
        return [Monomial(sympy.I * s * g, (GroupAtom("T", group.name, ("var#a", i, "var#j"), span), alpha_atom,
                                           moved), span)]
    # antifundamental: generators -T^a*, i.e. -T^a_{ji}
    return [Monomial(-sympy.I * s * g, (GroupAtom("T", group.name, ("var#a", "var#j", i), span), alpha_atom,
                                        moved), span)]


def _moved(indices: tuple[tuple[str, str], ...], group: str, new: str) -> tuple[tuple[str, str], ...]:
    return tuple((g, new if g == group else i) for g, i in indices)


# ------------------------------------------------------------------ varying monomials

def conjugate_monomial(model: m.Model, mono: Monomial) -> Monomial:
    """The hermitian conjugate of a monomial of bosons, group tensors and at most one fermion chain end."""
    atoms: list[Atom] = []
    for atom in reversed(mono.atoms):
        if isinstance(atom, FieldAtom):
            f = model.fields[atom.field]
            atoms.append(replace(atom, conjugate=(not atom.conjugate) if f.two_ended else atom.conjugate))
        elif isinstance(atom, GroupAtom) and atom.kind == "T" and len(atom.indices) == 3:
            a, i, j = atom.indices  # hermitian generators: (T^a_ij)* = T^a_ji
            atoms.append(replace(atom, indices=(a, j, i)))
        elif isinstance(atom, GroupAtom) and atom.kind == "delta":
            atoms.append(replace(atom, indices=atom.indices[::-1]))
        elif isinstance(atom, ParamAtom):
            atoms.append(conjugate_param(model, atom))
        elif isinstance(atom, DiracAtom):
            raise ValueError("a variation holds no Dirac matrices")
        else:
            atoms.append(atom)
    return Monomial(sympy.conjugate(mono.coefficient), tuple(atoms), mono.origin)


def _rename(atom: Atom, mapping: Mapping[str, str]) -> Atom:
    def r(name: str | None) -> str | None:
        return mapping.get(name, name) if name is not None else None

    if isinstance(atom, FieldAtom):
        return replace(atom, index=r(atom.index), derivatives=tuple(mapping.get(d, d) for d in atom.derivatives),
                       group_indices=tuple((g, r(i)) for g, i in atom.group_indices))
    if isinstance(atom, (DiracAtom, TensorAtom, GroupAtom, ParamAtom)):
        return replace(atom, indices=tuple(mapping.get(i, i) for i in atom.indices))
    return atom


def _indices_of(atoms: Iterable[Atom]) -> set[str]:
    names: set[str] = set()
    for atom in atoms:
        if isinstance(atom, FieldAtom):
            names.update(i for i in (atom.index, *atom.derivatives, *(i for _, i in atom.group_indices)) if i)
        else:
            names.update(atom.indices)
    return names


def varied_factor(model: m.Model, atom: FieldAtom, variation: Variation, counter: itertools.count) -> list[Monomial]:
    """delta of one field factor (with its derivatives and indices) as monomials."""
    out: list[Monomial] = []
    for mono in variation.monomials:
        mapping: dict[str, str] = {}
        if variation.index is not None and atom.index is not None:
            mapping[variation.index] = atom.index
        own = dict(atom.group_indices)
        for group, placeholder in variation.group_indices:
            if own.get(group):
                mapping[placeholder] = own[group]  # type: ignore[assignment]
        tag = next(counter)
        for name in sorted(_indices_of(mono.atoms) - mapping.keys()):
            mapping[name] = f"{name.split('#')[-1]}#v{tag}"  # fresh dummies on every use
        renamed = Monomial(mono.coefficient, tuple(_rename(a, mapping) for a in mono.atoms), mono.origin)
        if atom.conjugate and model.fields[atom.field].two_ended:
            renamed = conjugate_monomial(model, renamed)
        out.extend(_differentiated(renamed, atom.derivatives))
    return out


def _differentiated(mono: Monomial, derivatives: tuple[str, ...]) -> list[Monomial]:
    """Leibniz: each derivative on each field factor in turn (field-free factors are constants)."""
    terms = [mono]
    for d in derivatives:
        nxt: list[Monomial] = []
        for t in terms:
            for k, a in enumerate(t.atoms):
                if isinstance(a, FieldAtom):
                    new = replace(a, derivatives=a.derivatives + (d,))
                    nxt.append(Monomial(t.coefficient, t.atoms[:k] + (new,) + t.atoms[k + 1:], t.origin))
        terms = nxt
    return terms


def vary(model: m.Model, monomials: Iterable[Monomial], variations: Variations) -> list[Monomial]:
    """The first-order variation of a sum of monomials: every factor in turn replaced by its variation.

    The variation's atoms take the place of the factor, its field last, so that a fermion keeps its
    place among the Grassmann factors and its spinor chain.
    """
    counter = itertools.count(1)
    out: list[Monomial] = []
    for mono in monomials:
        for k, atom in enumerate(mono.atoms):
            if not isinstance(atom, FieldAtom) or atom.field not in variations:
                continue
            for piece in varied_factor(model, atom, variations[atom.field], counter):
                atoms = _fermion_last(model, piece.atoms)
                out.append(Monomial(mono.coefficient * piece.coefficient,
                                    mono.atoms[:k] + atoms + mono.atoms[k + 1:], mono.origin))
    return out


def _fermion_last(model: m.Model, atoms: tuple[Atom, ...]) -> tuple[Atom, ...]:
    fermions = [a for a in atoms if isinstance(a, FieldAtom) and model.fields[a.field].is_fermion]
    return tuple(a for a in atoms if a not in fermions) + tuple(fermions)


def replace_fields(mono: Monomial, names: Mapping[tuple[str, bool], tuple[str, bool]]) -> Monomial:
    """The monomial with some field factors renamed: (field, conjugate) -> (field, conjugate)."""
    atoms = tuple(replace(a, field=names[(a.field, a.conjugate)][0], conjugate=names[(a.field, a.conjugate)][1])
                  if isinstance(a, FieldAtom) and (a.field, a.conjugate) in names else a for a in mono.atoms)
    return dataclasses.replace(mono, atoms=atoms)


__all__ = ["ALPHA_PREFIX", "Variation", "Variations", "alpha_name", "conjugate_monomial", "gauge_variations",
           "replace_fields", "varied_factor", "vary", "with_alpha_fields"]
