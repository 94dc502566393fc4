"""Gauge fixing and Faddeev-Popov ghosts of a broken theory, derived from its mass-basis Lagrangian.

Input: the broken-phase monomials (fields are mass eigenstates), the vectors of the broken groups,
and delta(field) in the mass basis (`variations.Variation`s in the pseudo-fields alpha_<V>, one per
mass-eigenstate vector V, rotated like the vectors). For every vector V:

- the Goldstone combination X_V = M_V G_V is read off the vector-scalar mixing of the quadratic
  form: L contains sum_s c_s dag(V)^mu d_mu s (dag(V) = V for a real V), and X_V = sum_s c_s s;
  M_V^2 = sum_s |c_s|^2 (the declared mass of V when it agrees; a massless V has X_V = 0);
- F_V = d.V - xi_V X_V and L_gf = -1/(2 xi_V) F_V^2, or -1/xi_V F_V^dag F_V for a complex V. The
  cross term X_V d.V^dag + h.c. = -(dag(V).dX_V + h.c.) up to a total derivative cancels the mixing;
  the Goldstones get mass^2 xi_V M_V^2 from -xi_V/2 X_V^2 (checked on the quadratic form afterwards);
- ghosts: L_gh = -cbar_k (delta F_k / delta alpha_l) c_l summed over the vector species k (V, and
  dag(V) for a complex V) and the alpha species l. With delta V_mu = d_mu alpha + ... and
  -cbar d^mu Y_mu = (d^mu cbar) Y_mu up to a total derivative:
      L_gh = (d^mu cbar_k) delta V_k,mu |alpha->c  +  xi_k sum_s c_s cbar_k delta s |alpha->c.
  For an unbroken SU(N) this is today's d cbar.d c + s g f^{abc} (d cbar^a) A^b c^c; for the abelian
  Higgs model it gives ghost mass^2 xi m_A^2 and L = -xi g m_A h cbar c.

Ghost fields are named gh_<V>; a complex V has a second ghost gh_<V>_dag for dag(V) (the two are
independent fields, like the u+ and u- of the Standard Model). Gauges: 'xi' (xi_<V> symbols),
'feynman' (every xi = 1), 'unitary' (the Goldstones of massive vectors set to zero, their ghosts
dropped; massless vectors keep F = d.A with xi = 1, as in the unbroken gauge fixing).
"""

from __future__ import annotations

import itertools
from collections import defaultdict
from dataclasses import dataclass, replace
from typing import Iterable, Mapping, Sequence

import sympy

from .. import model as m
from ..errors import Span
from ..expand import FieldAtom, Monomial
from ..quadratic import read_entry
from ..values import substitute_definitions
from .variations import Variation, Variations, alpha_name, conjugate_monomial, varied_factor

Species = tuple[str, bool]
GAUGES = ("xi", "feynman", "unitary")


@dataclass(frozen=True)
class Note:
    """Something the gauge fixing found: severity ('error', 'warning', 'note'), message, place, hint."""

    severity: str
    message: str
    span: Span
    hint: str = ""


@dataclass(frozen=True)
class VectorFixing:
    """The gauge fixing of one mass-eigenstate vector: F = d.V - xi (sum of goldstone c_s s)."""

    vector: str
    xi: sympy.Expr
    mass: sympy.Expr  # M_V (0 for a massless vector)
    goldstone: tuple[tuple[Species, sympy.Expr], ...]  # (scalar species s, c_s): M_V G_V = sum c_s s
    ghosts: tuple[str, ...]  # gh_<V> (and gh_<V>_dag for a complex V); empty where none is kept


@dataclass(frozen=True)
class GaugeFixed:
    """The broken-phase model and Lagrangian with gauge fixing and ghosts added."""

    model: m.Model
    monomials: tuple[Monomial, ...]
    vectors: tuple[VectorFixing, ...]
    notes: tuple[Note, ...]


def gauge_parameter(vector: str) -> sympy.Symbol:
    """xi_<V>, the gauge parameter of one mass-eigenstate vector (the symbol of `GaugeGroup.xi`)."""
    return sympy.Symbol(f"xi_{vector}", positive=True)


def ghost_names(model: m.Model, vector: str) -> tuple[str, ...]:
    """gh_<V>, and gh_<V>_dag for a complex V (the ghost of dag(V))."""
    return (f"gh_{vector}", f"gh_{vector}_dag") if model.fields[vector].is_complex else (f"gh_{vector}",)


# ------------------------------------------------------------------ the Goldstone combination

def _two_field_groups(model: m.Model, monomials: Iterable[Monomial]) -> dict[frozenset, list[Monomial]]:
    groups: dict[frozenset, list[Monomial]] = defaultdict(list)
    for mono in monomials:
        fields = mono.fields
        if len(fields) == 2:
            groups[frozenset(_species(model, a) for a in fields)].append(mono)
    return groups


def _species(model: m.Model, atom: FieldAtom) -> Species:
    return (atom.field, atom.conjugate if model.fields[atom.field].two_ended else False)


def goldstone_mixing(model: m.Model, monomials: Iterable[Monomial], vector: str
                     ) -> tuple[tuple[tuple[Species, sympy.Expr], ...], tuple[Span, ...]]:
    """The c_s of L = sum_s c_s dag(V)^mu d_mu s + ..., read on the quadratic form, and their lines.

    On the legs (dag(V), s) with momenta -p and +p the entry of c dag(V).ds is -i c p^mu, so
    c = i x (the 'p' entry); d.dag(V) s terms are read the same way (integration by parts).
    """
    v = model.fields[vector]
    row: Species = (vector, v.two_ended)
    out: list[tuple[Species, sympy.Expr]] = []
    spans: list[Span] = []
    for key, monos in sorted(_two_field_groups(model, monomials).items(), key=lambda kv: sorted(kv[0])):
        if row not in key or len(key) != 2:
            continue
        (other,) = key - {row}
        if model.fields[other[0]].kind != "scalar":
            continue
        entry = read_entry(model, [row, other], monos)
        c = sympy.expand(sympy.I * entry.get("p", sympy.Integer(0)))
        if c != 0 and sympy.simplify(substitute_definitions(model.parameters, c)) != 0:
            out.append((other, c))
            spans.extend(mono.origin for mono in monos)
    return tuple(out), tuple(spans)


def _mass(model: m.Model, vector: str, mixing: Sequence[tuple[Species, sympy.Expr]]) -> sympy.Expr:
    """M_V with M_V^2 = sum |c_s|^2: the declared mass when it agrees, else the root of the sum."""
    square = sympy.expand(sum((c * sympy.conjugate(c) for _, c in mixing), start=sympy.Integer(0)))
    if square == 0:
        return sympy.Integer(0)
    declared = model.fields[vector].mass
    if declared != 0 and sympy.simplify(substitute_definitions(model.parameters, declared**2 - square)) == 0:
        return declared
    return sympy.sqrt(sympy.factor(square))


# ------------------------------------------------------------------ the gauge-fixing and ghost terms

def _atom(field: str, conjugate: bool, span: Span, index: str | None = None,
          derivatives: tuple[str, ...] = ()) -> FieldAtom:
    return FieldAtom(field, conjugate, index, derivatives, span)


def _fixing_monomials(model: m.Model, fix: VectorFixing, span: Span) -> list[Monomial]:
    """-1/(2 xi) F^2 (real V) or -1/xi F^dag F (complex V), F = d.V - xi sum c_s s, multiplied out."""
    xi = fix.xi
    complex_vector = model.fields[fix.vector].is_complex
    weight = 1 / xi if complex_vector else 1 / (2 * xi)

    def pieces(conjugated: bool, mu: str) -> list[tuple[sympy.Expr, tuple[FieldAtom, ...]]]:
        out = [(sympy.Integer(1), (_atom(fix.vector, conjugated and complex_vector, span, mu, (mu,)),))]
        for (s, conj), c in fix.goldstone:
            two = model.fields[s].two_ended
            c_here = sympy.conjugate(c) if conjugated else c
            out.append((-xi * c_here, (_atom(s, (not conj if conjugated else conj) and two, span),)))
        return out

    monos = []
    for (c1, a1), (c2, a2) in itertools.product(pieces(True, "gf1"), pieces(False, "gf2")):
        monos.append(Monomial(-weight * c1 * c2, a1 + a2, span))
    return monos


def _alpha_to_ghost(model: m.Model, vectors: Sequence[str]) -> dict[Species, str]:
    """Which ghost replaces which alpha species: alpha_V -> gh_V, dag(alpha_V) -> gh_V_dag."""
    out: dict[Species, str] = {}
    for v in vectors:
        names = ghost_names(model, v)
        out[(alpha_name(v), False)] = names[0]
        if len(names) == 2:
            out[(alpha_name(v), True)] = names[1]
    return out


def _ghost_monomials(model: m.Model, fix: VectorFixing, species_conjugate: bool, variations: Variations,
                     to_ghost: Mapping[Species, str], span: Span, counter: itertools.count) -> list[Monomial]:
    """(d^mu cbar_k) delta V_k,mu|alpha->c + xi_k sum_s c_s cbar_k delta s|alpha->c for one species k."""
    antighost = ghost_names(model, fix.vector)[1 if species_conjugate else 0]
    out: list[Monomial] = []
    if fix.vector in variations:
        vatom = _atom(fix.vector, species_conjugate, span, "gh#mu")
        for piece in varied_factor(model, vatom, variations[fix.vector], counter):
            out.append(Monomial(piece.coefficient, (_atom(antighost, True, span, None, ("gh#mu",)),) + piece.atoms,
                                span))
    for (s, conj), c in fix.goldstone:
        if s not in variations:
            continue
        two = model.fields[s].two_ended
        satom = _atom(s, ((not conj) if species_conjugate else conj) and two, span)
        c_here = sympy.conjugate(c) if species_conjugate else c
        for piece in varied_factor(model, satom, variations[s], counter):
            out.append(Monomial(fix.xi * c_here * piece.coefficient, (_atom(antighost, True, span),) + piece.atoms,
                                span))
    return [_with_ghosts(model, mono, to_ghost) for mono in out]


def _with_ghosts(model: m.Model, mono: Monomial, to_ghost: Mapping[Species, str]) -> Monomial:
    atoms = []
    for a in mono.atoms:
        if isinstance(a, FieldAtom) and a.field.startswith("alpha_"):
            key = (a.field, a.conjugate if model.fields[a.field].two_ended else False)
            a = replace(a, field=to_ghost[key], conjugate=False)
        atoms.append(a)
    return Monomial(mono.coefficient, tuple(atoms), mono.origin)


# ------------------------------------------------------------------ the whole stage

def fix_gauge(model: m.Model, monomials: Sequence[Monomial], vectors: Sequence[str], variations: Variations,
              gauge: str = "xi", span: Span | None = None) -> GaugeFixed:
    """Gauge fixing and ghosts for the vectors of the broken groups, derived from the mass-basis terms.

    `model` holds the mass-basis fields (the alpha pseudo-fields of `variations` may be among them;
    they are removed), `vectors` the mass-eigenstate vectors of the broken groups, `variations`
    delta(field) in the alpha_<V> pseudo-fields. `span` is where the notes point (the breaking
    section), the first vector's declaration when not given.
    """
    if gauge not in GAUGES:
        raise ValueError(f"unknown gauge {gauge!r}")
    from .variations import with_alpha_fields  # noqa: PLC0415 - the alpha fields are the caller's or ours

    missing = [v for v in vectors if alpha_name(v) not in model.fields]
    working = with_alpha_fields(model, missing) if missing else model
    place = span or (model.fields[vectors[0]].span if vectors else Span(0, 0, 0, 0))
    notes: list[Note] = []
    fixes: list[VectorFixing] = []
    for v in vectors:
        mixing, _ = goldstone_mixing(working, monomials, v)
        mass = _mass(working, v, mixing)
        massive = mass != 0
        if gauge == "unitary" and massive:
            fixes.append(VectorFixing(v, sympy.Integer(0), mass, mixing, ()))
            continue
        xi = gauge_parameter(v) if gauge == "xi" else sympy.Integer(1)
        fixes.append(VectorFixing(v, xi, mass, mixing, ghost_names(working, v)))
    goldstones = _goldstone_fields(working, fixes, notes, place) if gauge == "unitary" else set()
    to_ghost = _alpha_to_ghost(working, vectors)
    counter = itertools.count(1)
    added: list[Monomial] = []
    kept: list[VectorFixing] = []
    for fix in fixes:
        if not fix.ghosts:
            kept.append(fix)
            continue
        added.extend(_fixing_monomials(working, fix, place))
        ghost_terms: list[Monomial] = []
        for conj in ((False, True) if working.fields[fix.vector].is_complex else (False,)):
            ghost_terms.extend(_ghost_monomials(working, fix, conj, variations, to_ghost, place, counter))
        if fix.mass == 0 and all(len(mono.fields) <= 2 for mono in ghost_terms):
            kept.append(replace(fix, ghosts=()))  # a free ghost decouples, as for an unbroken U(1)
            continue
        added.extend(ghost_terms)
        kept.append(fix)
    live = {g for fix in kept for g in fix.ghosts}
    dead = set(to_ghost.values()) - live
    added = [mono for mono in added if not any(a.field in dead for a in mono.fields)]
    body = [mono for mono in monomials if not any(a.field in goldstones for a in mono.fields)]
    fields = {name: f for name, f in working.fields.items()
              if not name.startswith("alpha_") and name not in goldstones}
    for fix in kept:
        fields.update(_ghost_fields(working, fix))
        fields.update(_goldstone_masses(working, fix, fields))
    result = replace(model, fields=fields)
    notes.extend(_leftover_mixing(result, body + added, place))
    return GaugeFixed(result, tuple(body + added), tuple(kept), tuple(notes))


def _ghost_fields(model: m.Model, fix: VectorFixing) -> dict[str, m.Field]:
    v = model.fields[fix.vector]
    mass = sympy.sqrt(fix.xi) * fix.mass if fix.mass != 0 else sympy.Integer(0)
    out = {}
    for k, name in enumerate(fix.ghosts):
        charges = tuple((g, -q if k else q) for g, q in v.charges)
        what = f"dag({v.name})" if k else v.name
        out[name] = m.Field(name, "ghost", True, mass, charges, f"Faddeev-Popov ghost of {what}", v.span,
                            v.representations)
    return out


def _goldstone_masses(model: m.Model, fix: VectorFixing, fields: Mapping[str, m.Field]) -> dict[str, m.Field]:
    """A Goldstone that is a field of its own and declared massless gets its gauge-dependent mass."""
    if fix.mass == 0 or len({s for (s, _), _ in fix.goldstone}) != 1:
        return {}
    (name, _), _ = fix.goldstone[0]
    f = fields.get(name)
    if f is None or f.mass != 0:
        return {}
    return {name: replace(f, mass=sympy.sqrt(fix.xi) * fix.mass)}


def _goldstone_fields(model: m.Model, fixes: Sequence[VectorFixing], notes: list[Note], span: Span) -> set[str]:
    """The scalar fields that unitary gauge sets to zero: those the massive vectors' Goldstones are made of,
    when they are exactly as many real degrees of freedom as the massive vectors eat."""
    massive = [fix for fix in fixes if fix.mass != 0]
    names = sorted({s for fix in massive for (s, _), _ in fix.goldstone})
    eaten = sum(2 if model.fields[fix.vector].is_complex else 1 for fix in massive)
    held = sum(2 if model.fields[s].is_complex else 1 for s in names)
    if held != eaten:
        notes.append(Note("error", f"the Goldstones of {', '.join(f.vector for f in massive)} are combinations of "
                          f"{', '.join(names)}, which hold {held} real fields for {eaten} eaten ones; unitary gauge "
                          "cannot set them to zero", span,
                          "rotate the scalars so that each Goldstone is a field of its own, or use gauge xi"))
        return set()
    return set(names)


def _leftover_mixing(model: m.Model, monomials: Sequence[Monomial], span: Span) -> list[Note]:
    """Vector-scalar mixing that the gauge fixing left (a vector of no broken group, a sign slip)."""
    notes = []
    for v in (f.name for f in model.fields.values() if f.is_vector):
        mixing, spans = goldstone_mixing(model, monomials, v)
        if mixing:
            where = next((s for s in spans if s.line > 0), span)
            others = ", ".join(sorted({s for (s, _), _ in mixing}))
            notes.append(Note("warning", f"'{v}' still mixes with {others} after the gauge fixing", where,
                              "a vector that mixes with scalars must belong to a broken gauge group"))
    return notes


__all__ = ["GAUGES", "GaugeFixed", "Note", "VectorFixing", "fix_gauge", "gauge_parameter", "ghost_names",
           "goldstone_mixing"]
