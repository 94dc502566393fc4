"""Symmetry checks of single monomials: SU(N) index contractions and global charges.

A term is invariant under SU(N) when every index line of the group joins an upper index with a
lower one: an unconjugated fundamental (or a conjugated antifundamental) carries an upper index,
its conjugate a lower one, and a generator (T^a)^i_j one of each. `delta[i,j]` only passes a
line on. The alternating tensor `alt` is invariant with all its slots lower (contracting upper
indices: eps_ij phi^i chi^j) or all upper; which of the two a term means is read from its
partners, and a contradiction is reported. Adjoint indices are real and pair with each other
only. Global U(1) charges add up to zero in every term, Z(N) charges to zero mod N.

Each finding is a `Finding` pointing at the offending factor of the Lagrangian line (or at the
line when that factor was written elsewhere, inside a definition).

    >>> import vertexsmith
    >>> model = vertexsmith.load_model(text='''theory t
    ... parameters
    ...   coupling g = 0.6
    ...   coupling c = 0.1
    ... gauge
    ...   weak SU(2) boson W strength WS coupling g
    ... fields
    ...   vector W
    ...   scalar phi complex in weak doublet
    ...   scalar S
    ... lagrangian
    ...   - c phi[i] phi[i] S + h.c.
    ... ''', name="t.vsm")
    >>> [(f.span.line, f.span.column, f.message) for f in find_violations(model, model.monomials())][0]
    (12, 14, "two fundamental indices of 'weak' are contracted with each other (index 'i'): not invariant under SU(2)")
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass
from fractions import Fraction
from typing import Iterable

from . import model as m
from .errors import Span
from .expand import FieldAtom, GroupAtom, Monomial

_UPPER, _LOWER, _ADJOINT = "upper", "lower", "adjoint"


@dataclass(frozen=True)
class Finding:
    """One violated symmetry: message, place and hint (always an error)."""

    message: str
    span: Span
    hint: str
    line: int = 0  # the Lagrangian line of the term
    blocks_derivation: bool = False  # the term's indices cannot be contracted at all
    severity: str = "error"  # a soft breaking of a symmetry declared `soft` is a note


@dataclass(frozen=True)
class _End:
    """One end of an index line: its variance (or the alt tensor it belongs to) and where it was written."""

    kind: str  # upper, lower, adjoint, or alt
    atom: int  # position of the atom in the monomial
    label: str  # the factor as the user wrote it, for messages


def find_violations(model: m.Model, monomials: Iterable[Monomial]) -> list[Finding]:
    """The first SU(N) violation of each Lagrangian line and group, and one finding per line and
    broken global symmetry (naming every net charge of the line once), in line order."""
    found: dict[tuple[int, str], Finding] = {}
    charges: dict[tuple[int, str], tuple[Span, set[Fraction], Fraction]] = {}
    groups = [g for g in model.groups.values() if not g.abelian]
    for mono in monomials:
        for group in groups:
            if (mono.origin.line, group.name) not in found:
                finding = _group_violation(model, mono, group)
                if finding is not None:
                    found[(mono.origin.line, group.name)] = finding
        for symmetry in model.symmetries.values():
            total = _net_charge(model, mono, symmetry)
            if not symmetry.conserved(total):
                # a symmetry declared soft may be broken by operators of dimension below 4
                dimension = operator_dimension(model, mono) if symmetry.soft else Fraction(4)
                key = (mono.origin.line, symmetry.name + ("#soft" if dimension < 4 else ""))
                charges.setdefault(key, (_fields_span(mono), set(), dimension))[1].add(
                    total if symmetry.kind == "U1" else total % symmetry.order)
    for (line, name), (span, totals, dimension) in charges.items():
        symmetry = model.symmetries[name.removesuffix("#soft")]
        found[(line, name)] = _charge_finding(symmetry, totals, span, dimension)
    return sorted(found.values(), key=lambda f: (f.span.line, f.span.column))


def show_net_charges(charges: Iterable[Fraction]) -> str:
    """'net charge is +1', 'net charges are -1, +2', and for opposite pairs (a term and its h.c.) '±1'."""
    values = set(charges)
    if len(values) > 1 and all(-q in values for q in values):
        shown = [f"±{q}" for q in sorted({abs(q) for q in values})]
    else:
        shown = [f"{'+' if q > 0 else ''}{q}" for q in sorted(values)]
    return f"net charge{' is' if len(shown) == 1 else 's are'} {', '.join(shown)}"


# ------------------------------------------------------------------ SU(N) contractions

def _label(model: m.Model, atom: FieldAtom) -> str:
    f = model.fields[atom.field]
    if not atom.conjugate:
        return atom.field
    return f"bar({atom.field})" if f.is_fermion else f"dag({atom.field})"


def _ends(model: m.Model, mono: Monomial, group: str) -> tuple[dict[str, list[_End]], list[tuple[str, str]]]:
    """Index name -> its ends in this group; and the delta wires between index names."""
    ends: dict[str, list[_End]] = defaultdict(list)
    wires: list[tuple[str, str]] = []
    for k, atom in enumerate(mono.atoms):
        if isinstance(atom, FieldAtom):
            index = atom.group_index(group)
            rep = model.fields[atom.field].representation(group)
            if index is None or rep is None:
                continue
            if rep == "adjoint":
                kind = _ADJOINT
            else:
                kind = _UPPER if atom.conjugate == (rep == "antifundamental") else _LOWER
            ends[index].append(_End(kind, k, _label(model, atom)))
        elif isinstance(atom, GroupAtom) and atom.group == group:
            if atom.kind == "delta":
                wires.append((atom.indices[0], atom.indices[1]))
            elif atom.kind == "alt":
                for index in atom.indices:
                    ends[index].append(_End("alt", k, "alt"))
            else:
                kinds = (_ADJOINT, _UPPER, _LOWER) if atom.kind == "T" else (_ADJOINT,) * 3
                for index, kind in zip(atom.indices, kinds):
                    ends[index].append(_End(kind, k, atom.kind))
    return ends, wires


def _lines(ends: dict[str, list[_End]], wires: list[tuple[str, str]]) -> list[tuple[str, list[_End]]]:
    """Index lines: the ends joined directly or through deltas, named by their first index."""
    parent: dict[str, str] = {}

    def find(x: str) -> str:
        parent.setdefault(x, x)
        while parent[x] != x:
            x = parent[x]
        return x

    for a, b in wires:
        ra, rb = find(a), find(b)
        if ra != rb:
            parent[max(ra, rb)] = min(ra, rb)
    lines: dict[str, list[_End]] = defaultdict(list)
    names: dict[str, str] = {}
    for index in sorted(ends):
        root = find(index)
        names.setdefault(root, index)
        lines[root].extend(ends[index])
    return [(names[root], items) for root, items in sorted(lines.items())]


def _group_violation(model: m.Model, mono: Monomial, group: m.GaugeGroup) -> Finding | None:
    ends, wires = _ends(model, mono, group.name)
    if not ends:
        return None
    su = f"SU({group.rank})"
    alt_kind: dict[int, str] = {}  # alt atom -> the variance its slots contract with
    alt_links: list[tuple[int, int, str]] = []
    for index, items in _lines(ends, wires):
        if len(items) != 2:
            continue  # an index used once or three times is reported where the model is built or derived
        name = index.split("#")[0]
        first, second = sorted(items, key=lambda e: e.atom)
        kinds = {first.kind, second.kind}
        if _ADJOINT in kinds and kinds != {_ADJOINT}:
            return _finding(mono, second.atom, True,
                            f"the index '{name}' joins an adjoint and a fundamental index of '{group.name}' "
                            f"('{first.label}' and '{second.label}')",
                            "an adjoint index (a, b, c) pairs with an adjoint index, a fundamental one with the "
                            "index of a conjugated field or of a generator")
        if kinds <= {_UPPER, _LOWER} and len(kinds) == 1:
            conjugated = first.kind == _LOWER
            what = "conjugated fundamental" if conjugated else "fundamental"
            return _finding(mono, second.atom, False,
                            f"two {what} indices of '{group.name}' are contracted with each other (index "
                            f"'{name}'): not invariant under {su}",
                            _contraction_hint(model, group, conjugated, first.label, second.label))
        if first.kind == "alt" and second.kind == "alt":
            alt_links.append((first.atom, second.atom, name))
        elif "alt" in kinds:
            alt, other = (first, second) if first.kind == "alt" else (second, first)
            if alt_kind.setdefault(alt.atom, other.kind) != other.kind:
                return _finding(mono, alt.atom, False,
                                f"alt of '{group.name}' contracts both a fundamental and a conjugated fundamental "
                                f"index (index '{name}'): not invariant under {su}",
                                "contract every index of one alt with unconjugated fundamentals "
                                "(alt[i,j] a[i] b[j]) or every one with conjugated ones (alt[i,j] dag(a[i]) "
                                "dag(b[j]))")
    # two alt tensors joined by an index are one lower and one upper
    changed = True
    while changed:
        changed = False
        for a, b, name in alt_links:
            for this, that in ((a, b), (b, a)):
                if this in alt_kind:
                    wanted = _UPPER if alt_kind[this] == _LOWER else _LOWER
                    if that not in alt_kind:
                        alt_kind[that] = wanted
                        changed = True
                    elif alt_kind[that] != wanted:
                        return _finding(mono, max(a, b), False,
                                        f"the alt tensors of '{group.name}' joined by index '{name}' are "
                                        f"contracted inconsistently: not invariant under {su}",
                                        "write the contraction out with fields and their conjugates")
    return None


def _contraction_hint(model: m.Model, group: m.GaugeGroup, conjugated: bool, first: str, second: str) -> str:
    alt = "alt" if sum(1 for g in model.groups.values() if not g.abelian) == 1 else f"alt_{group.name}"
    indices = ",".join("ijklmn"[:group.rank])
    names = [x[4:-1] if x.startswith(("dag(", "bar(")) else x for x in (second, first)]
    name = next((x for x in names if x in model.fields), None)  # an end may be a generator, not a field
    if name is None:
        pair = "dag(x[i]) ... x[i]"
    else:
        pair = f"{'bar' if model.fields[name].is_fermion else 'dag'}({name}[i]) ... {name}[i]"
    if conjugated:
        return (f"pair each conjugated field with an unconjugated one, as in {pair}, or contract "
                f"{group.rank} conjugated fundamentals through {alt}[{indices}]")
    return f"pair each field with a conjugated one, as in {pair}, or contract {group.rank} fundamentals " \
           f"through {alt}[{indices}]"


def _finding(mono: Monomial, position: int, blocks: bool, message: str, hint: str) -> Finding:
    return Finding(message, _place(mono, mono.atoms[position].span), hint, mono.origin.line, blocks)


def _place(mono: Monomial, span: Span) -> Span:
    """The span of a factor when it was written on the term's own line(s); the term otherwise."""
    origin = mono.origin
    inside = (origin.line, origin.column) <= (span.line, span.column) <= (origin.end_line, origin.end_column)
    return span if inside and span.line > 0 else origin


# ------------------------------------------------------------------ global charges

def _net_charge(model: m.Model, mono: Monomial, symmetry: m.GlobalSymmetry) -> Fraction:
    total = Fraction(0)
    for atom in mono.fields:
        charge = dict(model.fields[atom.field].global_charges).get(symmetry.name, Fraction(0))
        total += -charge if atom.conjugate else charge
    return total


def operator_dimension(model: m.Model, mono: Monomial) -> Fraction:
    """Mass dimension of a monomial's operator: bosons 1, fermions 3/2, each derivative 1."""
    total = Fraction(0)
    for atom in mono.fields:
        total += Fraction(3, 2) if model.fields[atom.field].is_fermion else Fraction(1)
        total += len(atom.derivatives)
    return total


def _charge_finding(symmetry: m.GlobalSymmetry, totals: set[Fraction], span: Span,
                    dimension: Fraction = Fraction(4)) -> Finding:
    if dimension < 4:
        return Finding(f"term breaks the {symmetry.label} symmetry '{symmetry.name}' softly (an operator of mass "
                       f"dimension {dimension})", span, f"'{symmetry.name}' is declared soft, so this is allowed; "
                       "terms of dimension 4 and above must respect it", span.line, severity="note")
    if symmetry.kind == "Z":
        shown = " or ".join(str(q) for q in sorted(totals))
        what = "odd" if symmetry.order == 2 else f"of charge {shown} mod {symmetry.order}"
        message = f"term is {what} under the {symmetry.label} symmetry '{symmetry.name}'"
        hint = ("the charges of the fields of every term must add up to 0 mod "
                f"{symmetry.order} (bar() and dag() fields count with the opposite sign); a breaking by mass terms "
                "is allowed when the symmetry is declared soft (`NAME Z(N) soft`)")
    else:
        message = f"term breaks the global U(1) symmetry '{symmetry.name}': its {show_net_charges(totals)}"
        hint = ("the charges of every term must add up to 0 (bar() and dag() fields count with the opposite sign): "
                "check the charges in the fields section and the conjugations in this term")
    return Finding(message, span, hint, span.line)


def _fields_span(mono: Monomial) -> Span:
    """From the first to the last field of a monomial as written on its line (the whole term otherwise)."""
    spans = [_place(mono, atom.span) for atom in mono.fields]
    if not spans or any(span == mono.origin for span in spans):
        return mono.origin
    first = min(spans, key=lambda s: (s.line, s.column))
    last = max(spans, key=lambda s: (s.end_line, s.end_column))
    return Span(first.line, first.column, last.end_line, last.end_column, first.source)


__all__ = ["Finding", "find_violations", "operator_dimension", "show_net_charges"]
