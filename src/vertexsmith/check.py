"""Diagnostics for a model: hermiticity, charges, kinetic terms, masses, operator dimensions, tadpoles.

`check_model(model)` returns a list of `Diagnostic`s (error, warning or note), each pointing at a
Lagrangian line or a field declaration, sorted by position. It never raises for a problem of the
model: an error that expansion or derivation would raise becomes an error diagnostic.

Hermiticity is decided on the vertex functions, which are blind to the order of commuting
factors, to dummy-index names and (with momentum conservation imposed) to total derivatives:
for every set of legs S, the vertex of the monomials with legs S must equal the vertex of the
hermitian conjugates of the monomials with the conjugate legs S*. Both sides are evaluated
numerically, exactly in the Dirac algebra, at one generic point: random values for the free
parameters (real ones real) and random momenta that add up to zero.

    >>> import vertexsmith
    >>> from vertexsmith.check import check_model
    >>> model = vertexsmith.load_model(text='''theory t
    ... parameters
    ...   coupling complex y = 0.1
    ... fields
    ...   scalar s complex
    ...   dirac psi
    ... lagrangian
    ...   dag(d[mu] s) d[mu] s
    ...   bar(psi) I gamma[mu] d[mu] psi
    ...   - y s bar(psi) PR psi
    ... ''', name="t.vsm")
    >>> [(d.severity, d.span.line, d.message) for d in check_model(model)]
    [('error', 10, 'term has no hermitian conjugate in the Lagrangian')]
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field, replace
from fractions import Fraction
from typing import Any, Iterable

import numpy as np
import sympy

from . import model as m
from . import progress
from .assemble import derive_rules
from .derive import (canonical_legs, check_chains, make_legs, monomial_terms, species_label, species_of,
                     vertex_from)
from .errors import DerivationError, Source, Span, VertexsmithError, format_diagnostic
from .chain_flow import orient_majorana_chains
from .expand import DiracAtom, FieldAtom, GroupAtom, Monomial, ParamAtom, conjugate_param, expand_model
from .invariance import find_violations, operator_dimension, show_net_charges
from .quadratic import QuadraticForm, quadratic_form
from .rules import P2, Vertex, VertexTerm
from .spaces import random_array
from .values import substitute_definitions

SEVERITIES = ("error", "warning", "note")

# (bar(a) M b)^dagger = bar(b) gamma0 M^dagger gamma0 a, matrix by matrix: (kind, sign)
_CONJUGATE_DIRAC = {"gamma": ("gamma", 1), "sigma": ("sigma", 1), "gamma5": ("gamma5", -1),
                    "PL": ("PR", 1), "PR": ("PL", 1)}
# relative tolerance of the numerical hermiticity comparison (double precision, O(1) inputs)
_TOLERANCE = 1e-9
_FLOOR = 1e-12  # below this a vertex built from O(1) inputs is zero
_SEED = 20240611
_PROBES = 3  # independent random contractions per vertex

Species = tuple[str, bool]
Key = tuple[Species, ...]


@dataclass(frozen=True)
class Diagnostic:
    """One finding of the checker: severity ('error', 'warning' or 'note'), message, place, hint."""

    severity: str
    message: str
    span: Span
    hint: str = ""
    source: Source | None = field(default=None, compare=False)

    def __str__(self) -> str:
        return format_diagnostic(self.severity, self.message, self.span, self.hint, self.source)

    def sort_key(self) -> tuple:
        return (*self.span.place(), self.span.column, self.message, SEVERITIES.index(self.severity))


def check_model(model: m.Model) -> list[Diagnostic]:
    """Every diagnostic of a model, ordered by line, column and message."""
    return _Checker(model).run()


def conjugate_monomial(model: m.Model, mono: Monomial) -> Monomial:
    """The hermitian conjugate of a monomial: reversed factors, each conjugated, coefficient conjugated.

    Fermion factors swap bar(a) <-> a (for any fermion, so that bar(a) M b becomes bar(b) M' a);
    complex bosons swap phi <-> dag(phi); real fields stay. Derivatives stay on their fields.
    """
    coefficient = sympy.conjugate(mono.coefficient)
    atoms: list = []
    for atom in reversed(mono.atoms):
        if isinstance(atom, FieldAtom):
            f = model.fields[atom.field]
            flip = f.two_ended
            atoms.append(replace(atom, conjugate=not atom.conjugate) if flip else atom)
        elif isinstance(atom, DiracAtom):
            kind, sign = _CONJUGATE_DIRAC[atom.kind]
            coefficient = coefficient * sign
            atoms.append(replace(atom, kind=kind))
        elif isinstance(atom, ParamAtom):
            atoms.append(conjugate_param(model, atom))
        elif isinstance(atom, GroupAtom) and atom.kind == "T" and len(atom.indices) == 3:
            a, i, j = atom.indices  # (T^a_ij)* = T^a_ji: the generators are hermitian
            atoms.append(replace(atom, indices=(a, j, i)))
        else:
            atoms.append(atom)  # g, eps, f^abc and deltas are real
    return Monomial(sympy.expand(coefficient), tuple(atoms), mono.origin)


def _conjugate_in_flow(model: m.Model, mono: Monomial) -> Monomial:
    """The conjugate monomial read in the fermion flow the expansion chose, so that it lands on the original's
    legs: (bar(A) G B)^dagger = bar(B) G' A between two Majorana fields is turned back to bar(A) ... B. A chain
    of one Majorana field with itself already holds both readings, and is left as it is."""
    conjugate = conjugate_monomial(model, mono)
    oriented = orient_majorana_chains(model, conjugate)
    return oriented[0] if len(oriented) == 1 else conjugate


# ------------------------------------------------------------------ helpers

def _key(model: m.Model, mono: Monomial) -> Key:
    return tuple(sorted(species_of(model, a) for a in mono.fields))


def _show(expr: sympy.Expr) -> str:
    """A sympy expression written the way the model language writes it."""
    return str(expr).replace("**", "^").replace("conjugate(", "conj(")


class _NumericPoint:
    """One generic point: random values of the free parameters, random momenta that add up to zero.

    Parameters defined through others keep that relation (the model's own definitions are
    evaluated from the random values); real parameters get real values, complex ones complex.
    """

    def __init__(self, model: m.Model) -> None:
        self.model = model
        self.rng = np.random.default_rng(_SEED)
        self.values: dict[str, Any] = {}
        for name in sorted(model.parameters):
            p = model.parameters[name]
            if p.definition is not None and p.definition.free_symbols:
                continue
            if p.is_array:
                self.values[name] = random_array(self.rng, p)
                continue
            re, im = self.rng.uniform(0.5, 1.5, size=2)
            self.values[name] = complex(re, im) if p.is_complex else complex(re)
        self._momenta: dict[int, np.ndarray] = {}
        self._cache: dict[tuple[Key, Monomial], np.ndarray] = {}
        self._probes: dict[Key, dict[tuple, np.ndarray]] = {}

    def momenta(self, n: int) -> np.ndarray:
        if n not in self._momenta:
            p = np.zeros((n, 4))
            if n > 1:
                p[:-1] = self.rng.normal(size=(n - 1, 4))
                p[-1] = -p[:-1].sum(axis=0)
            self._momenta[n] = p
        return self._momenta[n]

    def probes(self, key: Key, legs: tuple) -> dict[tuple, np.ndarray]:
        """Random complex vectors for every axis of the legs `key`, the same for a key every time.

        Two vertex functions are compared through their contractions with these vectors: equal
        tensors give equal numbers, and unequal ones differ at a random point with probability 1,
        while the tensor itself (4 x 4 x ... x N^2-1 numbers) is never built.
        """
        if key not in self._probes:
            rng = np.random.default_rng([_SEED, len(self._probes)])
            vectors: dict[tuple, np.ndarray] = {("batch",): np.ones(_PROBES, dtype=complex)}
            for leg in legs:
                dims = {group: d for group, _, d in leg.representations}
                for axis in leg.axes:
                    n = dims[axis[2]] if axis[0] == "group" else 4
                    vectors[axis] = rng.normal(size=(_PROBES, n)) + 1j * rng.normal(size=(_PROBES, n))
            self._probes[key] = vectors
        return self._probes[key]

    def monomial(self, key: Key, mono: Monomial) -> np.ndarray:
        """The vertex of one monomial on the legs `key`, contracted with the key's random vectors."""
        if (key, mono) not in self._cache:
            legs = make_legs(self.model, canonical_legs(self.model, list(key)))
            terms = tuple(VertexTerm(c, s) for c, s in monomial_terms(self.model, mono, legs))
            vertex = Vertex(legs, terms, self.model)
            try:
                numbers = vertex.evaluate_contracted(self.momenta(len(legs)), self.probes(key, legs), self.values)
            except DerivationError as error:  # numbers beyond double precision: say which line
                raise DerivationError(error.message, mono.origin, error.hint) from None
            if not np.all(np.abs(numbers) < 1e150):  # their squares, in the comparison, must stay finite
                raise DerivationError("the numbers of this term are too large for double precision (above 1e150 "
                                      "at a generic point)", mono.origin,
                                      "write its parameters and charges in sensible units, of size about 1")
            self._cache[(key, mono)] = numbers
        return self._cache[(key, mono)]

    def vertex(self, key: Key, monomials: Iterable[Monomial]) -> tuple[np.ndarray, float]:
        """The vertex of several monomials, and the sum of the sizes of their parts."""
        arrays = [self.monomial(key, mono) for mono in monomials]
        if not arrays:
            return np.zeros(()), 0.0
        return sum(arrays[1:], arrays[0]), sum(float(np.linalg.norm(a)) for a in arrays)


def _close(a: np.ndarray, b: np.ndarray, scale: float) -> bool:
    return float(np.linalg.norm(a - b)) <= _TOLERANCE * scale + _FLOOR


# ------------------------------------------------------------------ the checker

class _Checker:
    def __init__(self, model: m.Model) -> None:
        self.model = model
        self.diagnostics: list[Diagnostic] = []

    def add(self, severity: str, message: str, span: Span, hint: str = "") -> None:
        self.diagnostics.append(Diagnostic(severity, message, span, hint, self.model.source))

    def add_error(self, error: VertexsmithError) -> None:
        self.diagnostics.append(Diagnostic("error", error.message, error.span, error.hint,
                                           error.source or self.model.source))

    def run(self) -> list[Diagnostic]:
        try:
            monomials = list(expand_model(self.model))
        except VertexsmithError as error:
            self.add_error(error)
            return self.diagnostics
        good: list[Monomial] = []
        for mono in monomials:
            try:
                check_chains(self.model, mono)
            except VertexsmithError as error:
                self.add_error(error)
            else:
                good.append(mono)
        self.check_weyl_chains(good)
        step = progress.stage("checking the model", total=3)  # a bar on a terminal
        self.check_charges(good)
        # a term whose index lines cannot be contracted is reported once, here, and not derived below
        broken = self.check_invariance(good)
        good = [mono for mono in good if mono.origin.line not in broken]
        step.advance()
        self.check_dimensions(good)
        self.check_tadpoles(good)
        form = self.quadratic(good)
        if form is not None:
            self.check_mixing(form)
            self.check_quadratic(good, form)
            self.check_spectrum(form)
        step.advance()
        self.check_hermiticity(good)
        self.check_derivation(monomials)
        step.advance()
        unique = {(d.severity, d.message, d.span, d.hint): d for d in self.diagnostics}
        return sorted(unique.values(), key=Diagnostic.sort_key)

    # -------------------------------------------------------------- charges
    def check_charges(self, monomials: list[Monomial]) -> None:
        found: dict[tuple[tuple[str, int], str], tuple[Span, set[Fraction]]] = {}
        for mono in monomials:
            for group in self.model.groups.values():
                net = sum((self.model.fields[a.field].charge(group.name) * (-1 if a.conjugate else 1)
                           for a in mono.fields), start=Fraction(0))
                if net != 0:
                    found.setdefault((mono.origin.place(), group.name), (mono.origin, set()))[1].add(net)
        for (_, group_name), (span, charges) in found.items():
            self.add("error", f"term is not neutral under '{group_name}': its {show_net_charges(charges)}", span,
                     "the charges of every term must add up to 0 (bar() and dag() fields count with the "
                     "opposite sign): check the charges in the fields section and the conjugations in this term")

    def check_invariance(self, monomials: list[Monomial]) -> set[int]:
        """SU(N) index contractions and global U(1) and Z(N) charges, at the offending factor.

        Returns the lines whose index lines cannot even be contracted (an adjoint index joined
        to a fundamental one), which the derivation would refuse again.
        """
        broken: set[int] = set()
        for finding in find_violations(self.model, monomials):
            self.add(finding.severity, finding.message, finding.span, finding.hint)
            if finding.blocks_derivation:
                broken.add(finding.line)
        return broken

    # -------------------------------------------------------------- dimensions
    def check_dimensions(self, monomials: list[Monomial]) -> None:
        highest: dict[tuple[str, int], tuple[Span, Fraction]] = {}
        for mono in monomials:
            d = operator_dimension(self.model, mono)
            if d > 4 and d > highest.get(mono.origin.place(), (mono.origin, Fraction(0)))[1]:
                highest[mono.origin.place()] = (mono.origin, d)
        for span, d in highest.values():
            self.add("note", f"operator of mass dimension {d} (above 4: not renormalisable)", span,
                     f"its coefficient has mass dimension {4 - d}")

    # -------------------------------------------------------------- tadpoles
    def check_tadpoles(self, monomials: list[Monomial]) -> None:
        for mono in monomials:
            fields = mono.fields
            if len(fields) == 1 and not fields[0].derivatives:
                label = species_label(self.model, species_of(self.model, fields[0]))
                self.add("warning", f"term is linear in '{label}' (a tadpole)", mono.origin,
                         "expand the field around the minimum of its potential, so that the linear term cancels")

    # -------------------------------------------------------------- the quadratic form
    def quadratic(self, monomials: list[Monomial]) -> QuadraticForm | None:
        """K_ij(p) of the Lagrangian as written (no gauge fixing), or None after reporting why not."""
        try:
            return quadratic_form(self.model, monomials)
        except VertexsmithError as error:
            self.add_error(error)
            return None

    def check_mixing(self, form: QuadraticForm) -> None:
        """One diagnostic per pair of fields that K joins, at the first line that joins them."""
        for mixing in form.mixings:
            a, b = mixing.fields
            lines = ", ".join(str(span.line) for span in mixing.origins)
            where = f"line{'s' if len(mixing.origins) > 1 else ''} {lines}"
            if not mixing.supported:
                what = f"'{a}' pairs with itself" if a == b else f"'{a}' and '{b}' mix"
                self.add("error", f"{what} at quadratic order ({where}): {mixing.reason}", mixing.origins[0],
                         "rotate the fields to mass eigenstates, or remove the mixing term")
            else:
                self.add("note", f"'{a}' and '{b}' mix at quadratic order ({where}): their propagators form a "
                         "matrix", mixing.origins[0],
                         "the rules carry the propagator matrix i K^-1 over the mixed fields; rotate to mass "
                         "eigenstates for diagonal propagators")

    def check_spectrum(self, form: QuadraticForm) -> None:
        """A note where fields that mix are declared with masses that are not the eigenvalues of their block."""
        from .breaking.spectrum import compare_masses, mass_matrices

        for note in compare_masses(self.model, mass_matrices(form, symbolic=False)):
            self.add(note.severity, note.message, note.span, note.hint)

    # -------------------------------------------------------------- kinetic and mass terms
    def check_quadratic(self, monomials: list[Monomial], form: QuadraticForm) -> None:
        quadratic: dict[str, list[Monomial]] = defaultdict(list)
        for mono in monomials:
            key = _key(self.model, mono)
            if len(key) == 2 and key[0][0] == key[1][0]:
                quadratic[key[0][0]].append(mono)
        for f in self.model.fields.values():
            if f.kind == "ghost":  # generated with the gauge fixing, never written by hand
                continue
            self.check_field(f, quadratic.get(f.name, []), dict(form.entry(f.name, f.name)))

    def check_field(self, f: m.Field, monos: list[Monomial], kernel: dict[str, sympy.Expr]) -> None:
        zero = sympy.Integer(0)
        kinetic_span = next((mono.origin for mono in monos if any(a.derivatives for a in mono.fields)), f.span)
        mass_span = next((mono.origin for mono in monos if not any(a.derivatives for a in mono.fields)), None)
        if f.is_fermion:
            left, right = kernel.get("slash_L", zero), kernel.get("slash_R", zero)
            if left != 0 and right != 0 and sympy.simplify(left - right) != 0:
                self.add("warning", f"the left- and right-handed kinetic terms of '{f.name}' differ "
                         f"({_show(left)} and {_show(right)})", kinetic_span,
                         f"write {_kinetic_text(self.model, f)}")
                return
            c2 = left if left != 0 else right
            # a chiral (one-handed) fermion cannot have a mass; derive reports mass terms of one
            c0 = kernel.get("one_L", zero) if left != 0 and right != 0 else zero
            canonical = sympy.Integer(1)
        else:
            main = sympy.expand(kernel.get("metric" if f.is_vector else "one", zero))
            if main.has(P2) and sympy.Poly(main, P2).degree() > 1:
                span = next((mono.origin for mono in monos if sum(len(a.derivatives) for a in mono.fields) > 2),
                            kinetic_span)
                self.add("warning", f"the quadratic terms of '{f.name}' contain higher powers of the momentum "
                         "(a higher-derivative kinetic term)", span,
                         f"the canonical kinetic term is {_kinetic_text(self.model, f)}")
                return
            c2, c0 = main.coeff(P2, 1), main.coeff(P2, 0)
            canonical = sympy.Integer(-1 if f.is_vector else 1)
        if c2 == 0:
            self.add("error", f"the field '{f.name}' has no kinetic term", f.span,
                     f"add {_kinetic_text(self.model, f)} to the lagrangian")
            return
        factor = sympy.simplify(c2 / canonical)
        if factor != 1:
            if factor.is_negative:
                self.add("error", f"the kinetic term of '{f.name}' has the wrong sign (ghost-like)", kinetic_span,
                         f"the canonical kinetic term is {_kinetic_text(self.model, f)}")
                return  # a mass read off a ghost-like kernel would only confuse
            else:
                self.add("warning", f"the kinetic term of '{f.name}' is {_show(factor)} times the canonical one",
                         kinetic_span, f"write {_kinetic_text(self.model, f)}, or rescale the field")
        self.check_mass(f, c2, c0, mass_span)

    def _same_value(self, a: sympy.Expr, b: sympy.Expr) -> bool:
        """Whether two expressions agree once every parameter defined by a formula is replaced by it."""
        return (sympy.simplify(a - b) == 0
                or sympy.simplify(substitute_definitions(self.model.parameters, a - b)) == 0)

    def check_mass(self, f: m.Field, c2: sympy.Expr, c0: sympy.Expr, mass_span: Span | None) -> None:
        declared = f.mass
        span = mass_span or f.span
        mass_text = _mass_text(self.model, f)
        # a mass declared through a formula (mA = g v) agrees with terms written in its inputs (g^2 v^2 A A)
        same = self._same_value
        if f.is_fermion:
            found = sympy.simplify(-c0 / c2)
            if same(found, declared):
                return
            what = f"mass {_show(found)}"
        else:
            found = sympy.simplify(-c0 / c2)
            if same(found, declared**2):
                return
            what = f"mass^2 = {_show(found)}"
            if found != 0 and found.is_nonpositive:  # the field sits at a maximum of its potential
                self.add("warning", f"the quadratic terms of '{f.name}' give a negative mass^2 = {_show(found)}: "
                         "the field is expanded around a maximum of its potential", span,
                         "shift the field to the minimum of its potential before deriving rules for it")
                return
        if declared == 0:
            self.add("warning", f"'{f.name}' is declared massless, but its quadratic terms give {what}", span,
                     "declare its mass in the fields section (mass ...), or remove the mass term")
        elif found == 0:
            self.add("warning", f"'{f.name}' is declared with mass {_show(declared)}, but the lagrangian has no mass "
                     "term for it", span, f"add {mass_text}")
        else:
            self.add("warning", f"'{f.name}' is declared with mass {_show(declared)}, but its quadratic terms give "
                     f"{what}", span, f"write the mass term as {mass_text}, or declare the mass the term uses")

    # -------------------------------------------------------------- hermiticity
    def check_hermiticity(self, monomials: list[Monomial]) -> None:
        groups: dict[Key, list[Monomial]] = defaultdict(list)
        for mono in monomials:
            groups[_key(self.model, mono)].append(mono)
        point = _NumericPoint(self.model)
        done: set[Key] = set()
        for key in sorted(groups):
            partner = _key(self.model, _conjugate_in_flow(self.model, groups[key][0]))
            if key in done or partner in done:
                continue
            done.add(key)
            originals = groups[key]
            partners = groups.get(partner, [])
            try:
                if self.hermitian(point, key, originals, partners):
                    continue
                lines: dict[tuple[str, int], Span] = {}  # by file and line: a model may build on other files
                for mono in originals + partners:
                    lines.setdefault(mono.origin.place(), mono.origin)
                for line, span in sorted(lines.items()):
                    mine = [mono for mono in originals if mono.origin.place() == line]
                    theirs = [mono for mono in partners if mono.origin.place() == line]
                    self.report_line(point, key, mine, theirs, span)
            except VertexsmithError as error:
                self.add_error(error)

    def hermitian(self, point: _NumericPoint, key: Key, originals: list[Monomial], partners: list[Monomial]) -> bool:
        """Whether sum(originals) = sum(partners)^dagger, as vertex functions on the legs `key`."""
        a, sa = point.vertex(key, originals)
        b, sb = point.vertex(key, [_conjugate_in_flow(self.model, mono) for mono in partners])
        return _close(a, b, sa + sb)

    def report_line(self, point: _NumericPoint, key: Key, mine: list[Monomial], theirs: list[Monomial],
                    span: Span) -> None:
        a, sa = point.vertex(key, mine)
        b, sb = point.vertex(key, [_conjugate_in_flow(self.model, mono) for mono in theirs])
        if _close(a, b, sa + sb):
            return
        if _close(a, -b, sa + sb) and not _close(a, 0 * a, sa):
            self.add("error", "term is anti-hermitian: it changes sign under hermitian conjugation", span,
                     "'+ h.c.' would cancel it: multiply the term by I, or remove a stray factor I")
            return
        self.add("error", "term has no hermitian conjugate in the Lagrangian", span,
                 "add '+ h.c.' at the end of the line")

    # -------------------------------------------------------------- what derive would refuse
    def check_derivation(self, monomials: list[Monomial]) -> None:
        """Errors of the derivation itself (unsupported mixing, kernels that cannot be inverted)."""
        try:
            rules = derive_rules(self.model, monomials, gauge="xi")
        except VertexsmithError as error:
            taken = {d.span.place() for d in self.diagnostics if d.severity == "error"}
            if error.span.place() not in taken:
                self.add_error(error)
        else:
            self.check_silent_lines(monomials, {line for v in rules.vertices for line in v.origins})

    def check_weyl_chains(self, monomials: list[Monomial]) -> None:
        """A chain between weyl fields whose chiral projectors do not match is zero: say so at its line.

        bar(xi) xi of one weyl field (a mass written without cc()) or bar(cc(xi)) gamma xi (a kinetic term
        with it) vanishes identically: PL Gamma PR = 0 for an even number of gamma matrices, PL Gamma PL = 0
        for an odd one (common practice, no source). The projectors are the ones build put at the ends.
        """
        reported: set[tuple] = set()
        for mono in monomials:
            atoms = mono.atoms
            ends = [k for k, a in enumerate(atoms)
                    if isinstance(a, FieldAtom) and self.model.fields[a.field].is_fermion]
            for row, column in zip(ends[::2], ends[1::2]):
                a, b = atoms[row], atoms[column]
                assert isinstance(a, FieldAtom) and isinstance(b, FieldAtom)
                if not (self.model.fields[a.field].weyl and self.model.fields[b.field].weyl):
                    continue
                inner = [x for x in atoms[row + 1:column] if isinstance(x, DiracAtom)]
                # carry the row end's projector along the chain: a gamma turns it, another projector must match
                projector, flips, zero = inner[0].kind, 0, False
                for x in inner[1:]:
                    if x.kind == "gamma":
                        projector, flips = {"PL": "PR", "PR": "PL"}[projector], flips + 1
                    elif x.kind in ("PL", "PR") and x.kind != projector:
                        zero = True
                flips %= 2
                if not zero or mono.origin.place() in reported:
                    continue
                reported.add(mono.origin.place())
                name = b.field
                if a.field == name and not flips:
                    hint = (f"a Majorana mass pairs a weyl field with its charge conjugate: write "
                            f"- 1/2 M bar(cc({name})) {name} + h.c.")
                elif a.field == name:
                    hint = f"the kinetic term of a weyl field is I bar({name}) gamma[mu] d[mu] {name}"
                else:
                    hint = ("with an even number of gamma matrices a chain joins weyl fields of opposite "
                            "handedness, with an odd number of the same; or put cc() on one end")
                self.add("error", f"this chain of the weyl fields '{a.field}' and '{name}' is zero: its chiral "
                         "projectors do not match", mono.origin, hint)

    def check_silent_lines(self, monomials: list[Monomial], lines_with_vertices: set[int]) -> None:
        """Warn at a line of interaction terms that gives no vertex: its terms cancel identically (a
        Majorana vector current, alt against a symmetric product), which is rarely what was meant.
        A line whose vertex is shared with other lines is derived again on its own, since their
        terms would hide its cancellation."""
        taken = {d.span.line for d in self.diagnostics if d.severity == "error"}
        by_key: dict[Key, dict[int, list[Monomial]]] = defaultdict(lambda: defaultdict(list))
        spans: dict[int, Span] = {}
        for mono in monomials:
            if len(mono.fields) >= 3 and mono.origin.line not in taken:
                by_key[_key(self.model, mono)][mono.origin.line].append(mono)
                spans.setdefault(mono.origin.line, mono.origin)
        alive = set()
        for key, lines in by_key.items():
            for line, monos in lines.items():
                if line in alive or line not in lines_with_vertices:
                    continue
                if len(lines) == 1 or vertex_from(self.model, list(key), monos) is not None:
                    alive.add(line)
        for line, span in spans.items():
            if line not in alive:
                self.add("warning", "the terms of this line cancel: it gives no vertex", span,
                         "a Majorana pair has no vector or tensor current, and an alternating tensor against "
                         "a symmetric product of fields vanishes; remove the line or correct it")

def _kinetic_text(model: m.Model, f: m.Field) -> str:
    """The canonical kinetic term of a field, in the model language."""
    n = f.name
    d = "D" if f.charges or f.representations else "d"
    if f.weyl:  # the chiral part of its Majorana field: bar(xi) gamma xi is already half of it
        return f"I bar({n}) gamma[mu] d[mu] {n}"
    if f.kind == "majorana":  # self-conjugate: the conventional 1/2, as for a real scalar
        return f"1/2 bar({n}) I gamma[mu] d[mu] {n}"
    if f.is_fermion:
        return f"bar({n}) I gamma[mu] {d}[mu] {n}"
    if f.is_vector:
        group = model.boson_group(n)
        if group is not None:
            indices = "mu,nu" if group.abelian else "mu,nu,a"
            return f"-1/4 {group.strength}[{indices}] {group.strength}[{indices}]"
        curl = f"(d[mu] {n}[nu] - d[nu] {n}[mu])"
        return f"-1/2 dag{curl} {curl}" if f.is_complex else f"-1/4 {curl} {curl}"
    if f.is_complex:
        return f"dag({d}[mu] {n}) {d}[mu] {n}"
    return f"1/2 d[mu] {n} d[mu] {n}"


def _mass_text(model: m.Model, f: m.Field) -> str:
    """The canonical mass term of a field with its declared mass, in the model language."""
    n, mass = f.name, _show(f.mass)
    if f.weyl:  # a Majorana mass pairs the field with its charge conjugate
        return f"- 1/2 {mass} bar(cc({n})) {n} + h.c."
    if f.kind == "majorana":
        return f"- 1/2 {mass} bar({n}) {n}"
    if f.is_fermion:
        return f"- {mass} bar({n}) {n}"
    if f.is_vector:
        return f"+ {mass}^2 dag({n}[mu]) {n}[mu]" if f.is_complex else f"+ 1/2 {mass}^2 {n}[mu] {n}[mu]"
    return f"- {mass}^2 dag({n}) {n}" if f.is_complex else f"- 1/2 {mass}^2 {n}^2"


__all__ = ["Diagnostic", "check_model", "conjugate_monomial", "operator_dimension", "SEVERITIES"]
