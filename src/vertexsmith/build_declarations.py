"""The declarations of a model file given their meaning: parameters, fields, gauge groups, conventions.

The first half of the build stage (`build.py` gives the Lagrangian its meaning on top of this):
every declared name is checked against the others, parameter values are resolved in dependency
order, fields get their kind, reality, mass, charges and representations. The built-in names of
the language that both halves need live here too.
"""

from __future__ import annotations

import dataclasses
from fractions import Fraction
from typing import Iterable

import sympy

from . import limits
from . import model as m
from . import syntax as sx
from .build_symmetry import global_charge
from .errors import ModelMeaningError, Source, Span, did_you_mean
from .groups import representation_name
from .spaces import array_entries, array_parameter, check_matrix_property
from .values import resolve_values_from

# built-in objects of the Lagrangian that the declarations must not shadow, and their index counts
DIRAC_MATRICES = {"gamma": 1, "gamma5": 0, "PL": 0, "PR": 0, "sigma": 2}
DERIVATIVES = {"d": False, "D": True}
CONSTANTS = {"I": sympy.I, "pi": sympy.pi}


class Declarations:
    """Parameters, fields, groups and conventions of one model file, built in order."""

    def __init__(self, syntax: sx.ModelFile, source: Source) -> None:
        self.syntax = syntax
        self.source = source
        self.parameters: dict[str, m.Parameter] = {}
        self.fields: dict[str, m.Field] = {}
        self.groups: dict[str, m.GaugeGroup] = {}
        self.definitions: dict[str, m.Definition] = {}
        self.strengths: dict[str, str] = {}
        self.groups_syntax = {g.name: g for g in syntax.gauges}
        self.declared: dict[str, tuple[str, Span]] = {}
        self.symmetries: dict[str, m.GlobalSymmetry] = {}
        self.spaces: dict[str, m.IndexSpace] = {}

    # ------------------------------------------------------------------ declarations
    def _declare(self, name: str, what: str, span: Span) -> None:
        if name in self.declared:
            earlier, where = self.declared[name]
            article = "an" if earlier[:1] in "aeiou" else "a"
            raise ModelMeaningError(f"'{name}' is already declared as {article} {earlier} (line {where.line})", span,
                                    "give each field, parameter, group, definition and index space its own name")
        if name in DIRAC_MATRICES or name in CONSTANTS or name in ("bar", "dag", "conj"):
            raise ModelMeaningError(f"'{name}' is a built-in name of the model language", span,
                                    f"choose another name, e.g. '{name}_1'")
        if name.startswith("xi_") and what != "ghost field":
            raise ModelMeaningError(f"'{name}' is reserved for the gauge parameter of a gauge boson", span,
                                    f"choose another name, e.g. '{name[3:]}_xi'")
        if name in DERIVATIVES and what in ("definition", "field strength"):
            raise ModelMeaningError(f"'{name}[...]' is the derivative, so a {what} cannot be called '{name}'", span,
                                    f"choose another name, e.g. '{name}_1'")
        self.declared[name] = (what, span)

    def _attr_span(self, decl: sx.GaugeDecl, key: str) -> Span:
        return dict(decl.attribute_spans).get(key, decl.span)

    def _build_parameters(self) -> None:
        # definitions may refer to parameters declared later; resolve in dependency order
        pending = {p.name: p for p in self.syntax.parameters}
        resolving: list[str] = []

        def resolve(name: str) -> None:
            if name in self.parameters:
                return
            decl = pending[name]
            if name in resolving:
                raise ModelMeaningError(f"parameter '{name}' is defined through itself", decl.span,
                                        "give one of the parameters in the cycle a number")
            resolving.append(name)
            for used in names_in(decl.value) if decl.value is not None else ():
                if used in pending:
                    resolve(used)
            if decl.spaces:
                resolving.pop()
                self.parameters[name] = array_parameter(decl, self.spaces, self._scalar)
                return
            if isinstance(decl.value, sx.Array):
                raise ModelMeaningError(f"'{name}' has a braced list of values but no index spaces", decl.value.span,
                                        f"declare its spaces: {name}[gen] = {{...}} (vector) or "
                                        f"{name}[gen,gen] = {{{{...}}, ...}} (matrix)")
            definition = self._scalar(decl.value) if decl.value is not None else None
            resolving.pop()
            if definition is not None and definition.free_symbols == set() and not definition.is_finite:
                raise ModelMeaningError(f"the value of '{name}' is not a finite number ({definition})",
                                        decl.value.span if decl.value is not None else decl.span,
                                        "write a finite number")
            if decl.reality == "real" and definition is not None and certainly_complex(definition):
                raise ModelMeaningError(f"parameter '{name}' is declared real but its value is complex",
                                        decl.value.span if decl.value is not None else decl.span,
                                        f"declare it as: complex {name} = ...")
            self.parameters[name] = m.Parameter(name, decl.roles, decl.reality == "complex", definition,
                                                None, decl.description, decl.span)

        for name in pending:
            resolve(name)
        # now the numeric values, where every symbol of a definition has one
        values = resolve_values_from(self.parameters, {})
        for name, p in list(self.parameters.items()):
            if p.is_array:
                check_matrix_property(p, values, self._array_value_spans(name))
                continue
            self.parameters[name] = m.Parameter(p.name, p.roles, p.is_complex, p.definition,
                                                values.get(p.symbol), p.description, p.span)

    def _array_value_spans(self, name: str) -> tuple[Span, ...]:
        decl = next(p for p in self.syntax.parameters if p.name == name)
        if decl.value is None:
            return ()
        shape = tuple(self.spaces[s.name].size for s in decl.spaces)
        return tuple(span_of(item) for item in array_entries(name, decl.value, shape))

    def _build_fields(self) -> None:
        group_names = {g.name for g in self.syntax.gauges}
        for f in self.syntax.fields:
            if f.kind == "weyl" or f.hand is not None:
                f = self._weyl_declaration(f, group_names)
            if f.kind == "ghost":
                raise ModelMeaningError("ghost fields are made by the gauge fixing, not declared", f.span,
                                        "leave them out: each non-abelian group gets its ghost")
            if f.kind == "majorana" and f.reality == "complex":
                raise ModelMeaningError("a Majorana fermion is its own antiparticle, so it cannot be complex", f.span,
                                        f"remove 'complex', or declare a charged fermion: dirac {f.name} ...")
            if f.kind == "dirac" and f.reality == "real":
                raise ModelMeaningError("a Dirac fermion is always complex", f.span,
                                        "remove 'real' (a self-conjugate fermion is a majorana field)")
            if f.kind == "dirac" and f.reality == "complex":
                pass
            if f.name in DERIVATIVES and f.kind == "vector":
                raise ModelMeaningError(f"'{f.name}[mu]' is the derivative, so a vector cannot be called '{f.name}'",
                                        f.span, f"choose another name, e.g. '{f.name}_1'")
            is_complex = f.kind == "dirac" or f.reality == "complex"
            mass: sympy.Expr = sympy.Integer(0)
            if isinstance(f.mass, str):
                if f.mass not in self.parameters:
                    raise ModelMeaningError(f"unknown mass parameter '{f.mass}'", f.mass_span or f.span,
                                            did_you_mean(f.mass, self.parameters,
                                                         f"declare it under parameters: mass {f.mass} = ..."))
                mass = self.parameters[f.mass].symbol
            elif isinstance(f.mass, Fraction):
                if f.mass != 0:
                    raise ModelMeaningError("a mass is a parameter name (or 0 for a massless field)",
                                            f.mass_span or f.span, "declare it under parameters: mass mX = 5.0")
            charges: list[tuple[str, Fraction]] = []
            global_charges: list[tuple[str, Fraction]] = []
            for c in f.charges:
                if c.group in self.symmetries:
                    if any(g == c.group for g, _ in global_charges):
                        raise ModelMeaningError(f"'{f.name}' is given two charges under '{c.group}'", c.span,
                                                "give one charge per symmetry")
                    charge = global_charge(self.symmetries[c.group], f, c, is_complex)
                    if charge is not None:
                        global_charges.append(charge)
                    continue
                if c.group not in group_names:
                    raise ModelMeaningError(f"charge under an undeclared group '{c.group}'", c.span,
                                            did_you_mean(c.group, list(group_names) + list(self.symmetries),
                                                         "declare the group in the gauge section, or a global "
                                                         "symmetry in the global section"))
                if c.value != 0:
                    charges.append((c.group, c.value))
            if charges and f.kind == "majorana":
                raise ModelMeaningError(f"the Majorana fermion '{f.name}' cannot carry a U(1) charge",
                                        f.charges[0].span, f"a charged fermion is a Dirac field: dirac {f.name} ...")
            if charges and not is_complex:
                raise ModelMeaningError(f"the real field '{f.name}' cannot carry a charge", f.charges[0].span,
                                        f"declare it complex: {f.kind} {f.name} complex ...")
            representations: list[tuple[str, str]] = []
            kinds = {g.name: g.group for g in self.syntax.gauges}
            for r in f.representations:
                if r.group in self.symmetries:
                    raise ModelMeaningError(f"'{r.group}' is a global symmetry: its fields carry a charge, "
                                            "not a representation", r.span, f"write: charge {r.group} VALUE")
                if r.group not in kinds:
                    raise ModelMeaningError(f"representation of an undeclared group '{r.group}'", r.span,
                                            did_you_mean(r.group, kinds, "declare the group in the gauge section"))
                if kinds[r.group] != "SU":
                    raise ModelMeaningError(f"'{r.group}' is abelian: its fields carry a charge, not a representation",
                                            r.span, f"write: charge {r.group} VALUE")
                text = self.groups_syntax[r.group].rank
                rank = int(text) if text.isdigit() and len(text) <= 60 else 0
                rep = representation_name(r.representation, rank)
                if rep is None:
                    raise ModelMeaningError(f"unknown representation '{r.representation}' of SU({rank})", r.span,
                                            "write fundamental, antifundamental or adjoint (leave a singlet out)")
                if rep != "adjoint" and f.kind == "majorana":
                    raise ModelMeaningError(f"the Majorana fermion '{f.name}' cannot sit in the {rep} representation",
                                            r.span, "a Majorana field is real: only the adjoint fits (a gluino-like "
                                            f"field), or declare it as dirac {f.name} ...")
                if rep != "adjoint" and not is_complex:
                    raise ModelMeaningError(f"a real field cannot sit in the {rep} representation", r.span,
                                            f"declare it complex: {f.kind} {f.name} complex ...")
                if any(g == r.group for g, _ in representations):
                    raise ModelMeaningError(f"'{f.name}' is given two representations of '{r.group}'", r.span,
                                            "give one representation per group")
                if self.groups_syntax[r.group].boson == f.name:
                    raise ModelMeaningError(f"'{f.name}' is the gauge boson of '{r.group}': its adjoint representation "
                                            "comes with the gauge declaration", r.span,
                                            f"remove 'in {r.group} {r.representation}'")
                representations.append((r.group, rep))
            for g in self.syntax.gauges:
                if g.boson == f.name and g.group == "SU":
                    representations.append((g.name, "adjoint"))
            for index in f.spaces:
                if index.name not in self.spaces:
                    raise ModelMeaningError(f"unknown index space '{index.name}'", index.span,
                                            did_you_mean(index.name, self.spaces,
                                                         f"declare it: spaces\n  {index.name} 3"))
                if any(g == index.name for g, _ in representations):
                    raise ModelMeaningError(f"'{f.name}' carries '{index.name}' twice", index.span,
                                            "give each index space once")
                representations.append((index.name, m.FLAVOUR))
            self.fields[f.name] = m.Field(f.name, f.kind, is_complex, mass, tuple(charges), f.description, f.span,
                                          tuple(representations), tuple(global_charges), f.hand)

    def _weyl_declaration(self, f: sx.FieldDecl, group_names: set[str]) -> sx.FieldDecl:
        """A weyl field becomes the Majorana field xi + cc(xi), remembering its handedness.

        Only a neutral Weyl field is its own Majorana partner (Dreiner, Haber & Martin,
        arXiv:0812.1594, sec. 3, from memory); a charged one pairs with another into a Dirac field.
        """
        if f.kind != "weyl":
            raise ModelMeaningError(f"'{f.hand}' is the handedness of a weyl field, not of a {f.kind} field", f.span,
                                    f"declare weyl {f.name} {f.hand} ..., or write PL/PR with the {f.kind} field")
        if f.hand is None:
            raise ModelMeaningError(f"the weyl field '{f.name}' needs its handedness", f.span,
                                    f"write weyl {f.name} left ... or weyl {f.name} right ...")
        if f.reality is not None:
            raise ModelMeaningError(f"a weyl field is taken as a Majorana field, so it cannot be {f.reality}", f.span,
                                    f"remove '{f.reality}'")
        charged = [c for c in f.charges if c.group in group_names and c.value != 0]
        if charged:
            raise ModelMeaningError(f"the weyl field '{f.name}' cannot carry a U(1) charge here", charged[0].span,
                                    "a charged Weyl field pairs with another into a Dirac field: declare "
                                    f"dirac {f.name} ... and write its chiral parts with PL and PR")
        return dataclasses.replace(f, kind="majorana")

    def _build_groups(self) -> None:
        for g in self.syntax.gauges:
            kind = f"{g.group}({g.rank})"
            rank = int(g.rank) if g.rank.isdigit() and len(g.rank) <= 60 else 0
            if not (kind == "U(1)" or (g.group == "SU" and rank >= 2)):
                raise ModelMeaningError(f"unknown gauge group '{short_text(kind)}'", self._attr_span(g, "group"),
                                        "write U(1) or SU(N) with a whole N >= 2")
            limits.check_budget(limits.GROUP_RANK, rank, self._attr_span(g, "group"), f"the group {short_text(kind)}",
                                f"write SU(N) with N from 2 to {limits.GROUP_RANK.limit}", ModelMeaningError)
            for key in ("boson", "strength", "coupling"):
                if getattr(g, key) is None:
                    raise ModelMeaningError(f"gauge group '{g.name}' needs a {key}", g.span,
                                            f"write: {g.name} U(1) boson A strength F coupling e")
            boson = self.fields.get(g.boson or "")
            if boson is None or not boson.is_vector or boson.is_complex:
                raise ModelMeaningError(f"the boson '{g.boson}' of group '{g.name}' must be a declared real vector field",
                                        self._attr_span(g, "boson"), f"add to fields: vector {g.boson}")
            coupling = self.parameters.get(g.coupling or "")
            if coupling is None:
                raise ModelMeaningError(f"unknown coupling '{g.coupling}'", self._attr_span(g, "coupling"),
                                        did_you_mean(g.coupling or "", self.parameters,
                                                     f"declare it under parameters: coupling {g.coupling} = ..."))
            fixing = g.fixing or "lorenz"
            if fixing not in ("lorenz", "none"):
                raise ModelMeaningError(f"unknown gauge fixing '{fixing}'", self._attr_span(g, "fixing"),
                                        "write 'fixing lorenz' (R_xi, the default) or 'fixing none'")
            if boson.charges or (boson.representations and g.group == "U"):
                raise ModelMeaningError(f"the gauge boson '{g.boson}' cannot be charged", self._attr_span(g, "boson"),
                                        "remove its charge or representation")
            group = m.GaugeGroup(g.name, "U1" if g.group == "U" else "SU", g.boson or "", g.strength or "",
                                 coupling.symbol, fixing, g.span, rank)
            self.groups[g.name] = group
            if not group.abelian and fixing == "lorenz":
                # the Faddeev-Popov ghost of the Lorenz-type gauge fixing, an anticommuting adjoint scalar
                self._declare(group.ghost, "ghost field", g.span)
                self.fields[group.ghost] = m.Field(group.ghost, "ghost", True, sympy.Integer(0), (),
                                                   f"Faddeev-Popov ghost of {g.name}", g.span,
                                                   ((g.name, "adjoint"),))

    def _build_conventions(self) -> m.Conventions:
        covariant, eps = 1, -1
        for c in self.syntax.conventions:
            if c.key == "covariant" and c.value in ("minus", "plus"):
                covariant = 1 if c.value == "minus" else -1
            elif c.key == "eps0123" and c.value in (Fraction(1), Fraction(-1)):
                eps = int(c.value)
            else:
                raise ModelMeaningError(f"unknown convention '{c.key} {c.value}'", c.span,
                                        "write 'covariant minus' (D = d - i g Q A), 'covariant plus', "
                                        "'eps0123 -1' or 'eps0123 +1'")
        return m.Conventions(covariant, eps)


def span_of(node: sx.Expr) -> Span:
    return getattr(node, "span", Span(0, 0, 0, 0))


def walk_syntax(node: sx.Expr | sx.Array) -> Iterable[sx.Expr]:
    if isinstance(node, sx.Array):
        for item in node.items:
            yield from walk_syntax(item)
        return
    yield node
    if isinstance(node, (sx.Call,)):
        yield from walk_syntax(node.argument)
    elif isinstance(node, sx.Group):
        yield from walk_syntax(node.inner)
    elif isinstance(node, sx.Sum):
        for _, t in node.terms:
            yield from walk_syntax(t)
    elif isinstance(node, sx.Product):
        for f in node.factors:
            yield from walk_syntax(f)
    elif isinstance(node, sx.Quotient):
        yield from walk_syntax(node.numerator)
        yield from walk_syntax(node.denominator)
    elif isinstance(node, sx.Power):
        yield from walk_syntax(node.base)
        yield from walk_syntax(node.exponent)


def names_in(node: sx.Expr | sx.Array) -> set[str]:
    return {s.name for s in walk_syntax(node) if isinstance(s, sx.Symbol)}


def certainly_complex(expr: sympy.Expr) -> bool:
    return bool(expr.free_symbols == set() and expr.is_real is False)


def short_text(text: str) -> str:
    """Text from the model shortened for a message (a generated name may be thousands of characters)."""
    return text if len(text) <= 40 else text[:30] + "..." + text[-6:]


__all__ = ["CONSTANTS", "DERIVATIVES", "DIRAC_MATRICES", "Declarations", "certainly_complex", "names_in", "short_text", "span_of", "walk_syntax"]
