"""Syntax nodes to a `Model`: resolve every name, check every index, reject what has no meaning.

Errors raised here are `ModelMeaningError`s pointing at the offending text, with the nearest
declared names as a hint. The model file is data: numbers become exact sympy rationals and
names become our own sympy symbols; no user text is ever evaluated.
"""

from __future__ import annotations

from collections import Counter
from fractions import Fraction
from typing import Iterable

import sympy

from . import limits
from . import model as m
from . import syntax as sx
from .errors import ModelMeaningError, Source, Span, did_you_mean
from .build_symmetry import (alternating_hint, alternating_tensor, build_symmetries, global_charge,
                             summand_mismatch)
from .groups import representation_name
from .values import resolve_values_from
from .spaces import (array_component, array_entries, array_parameter, check_index_spaces, check_matrix_property,
                     flavoured_field, space_size)

# built-in objects of the Lagrangian and the number of indices each takes
_DIRAC = {"gamma": 1, "gamma5": 0, "PL": 0, "PR": 0, "sigma": 2}
_TENSORS = {"g": 2, "eps": 4}
_DERIVATIVES = {"d": False, "D": True}
_GROUP_TENSORS = {"T": (1, 3), "f": (3,), "delta": (2,), "alt": ()}  # alt takes N indices, N of SU(N)
_CONSTANTS = {"I": sympy.I, "pi": sympy.pi}
_ALIASES = {"γ": "gamma", "γ5": "gamma5", "γ⁵": "gamma5", "σ": "sigma", "ε": "eps", "π": "pi",
            "∂": "d", "i": "I", "η": "g"}
_SCALAR_FUNCTIONS = {"sqrt": sympy.sqrt, "sin": sympy.sin, "cos": sympy.cos, "tan": sympy.tan,
                     "exp": sympy.exp, "log": sympy.log, "re": sympy.re, "im": sympy.im}
BUILTIN_NAMES = tuple(sorted(set(_DIRAC) | set(_TENSORS) | set(_DERIVATIVES) | set(_CONSTANTS)))
MAX_FIELD_POWER = limits.FIELD_POWER.limit


def build_model(syntax: sx.ModelFile, source: Source) -> m.Model:
    """Give a parsed model file its meaning: the plain `Model` record (errors carry the source)."""
    try:
        return _Builder(syntax, source).build()
    except ModelMeaningError as exc:
        raise exc.with_source(source) from None


def _fraction_to_sympy(value: Fraction | float) -> sympy.Expr:
    if isinstance(value, Fraction):
        return sympy.Rational(value.numerator, value.denominator)
    return sympy.Float(value)


class _Builder:
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
        if name in _DIRAC or name in _CONSTANTS or name in ("bar", "dag", "conj"):
            raise ModelMeaningError(f"'{name}' is a built-in name of the model language", span,
                                    f"choose another name, e.g. '{name}_1'")
        if name.startswith("xi_") and what != "ghost field":
            raise ModelMeaningError(f"'{name}' is reserved for the gauge parameter of a gauge boson", span,
                                    f"choose another name, e.g. '{name[3:]}_xi'")
        if name in _DERIVATIVES and what in ("definition", "field strength"):
            raise ModelMeaningError(f"'{name}[...]' is the derivative, so a {what} cannot be called '{name}'", span,
                                    f"choose another name, e.g. '{name}_1'")
        self.declared[name] = (what, span)

    def build(self) -> m.Model:
        for sp in self.syntax.spaces:
            self._declare(sp.name, "index space", sp.span)
            self.spaces[sp.name] = m.IndexSpace(sp.name, space_size(sp), sp.description, sp.span)
        for p in self.syntax.parameters:
            self._declare(p.name, "parameter", p.span)
        for g in self.syntax.gauges:
            self._declare(g.name, "gauge group", g.span)
        for s in self.syntax.globals_:
            self._declare(s.name, "global symmetry", s.span)
        for f in self.syntax.fields:
            self._declare(f.name, "field", f.span)
        for g in self.syntax.gauges:
            if g.strength:
                self._declare(g.strength, "field strength", self._attr_span(g, "strength"))
                self.strengths[g.strength] = g.name
        for d in self.syntax.definitions:
            self._declare(d.name, "definition", d.span)
        self._build_parameters()
        self.symmetries.update(build_symmetries(self.syntax.globals_))
        self._build_fields()
        self._build_groups()
        conventions = self._build_conventions()
        for d in self.syntax.definitions:
            self.definitions[d.name] = self._build_definition(d)
        terms = tuple(self._build_term(t) for t in self.syntax.terms)
        if not terms:
            raise ModelMeaningError("the model has no lagrangian terms", self.syntax.theory.span,
                                    "add a 'lagrangian' section with one term per line")
        return m.Model(self.syntax.theory.name, self.syntax.theory.description, self.parameters, self.fields,
                       self.groups, self.definitions, terms, conventions, self.source, self.symmetries,
                       self.spaces)

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
            for used in _names_in(decl.value) if decl.value is not None else ():
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
            if decl.reality == "real" and definition is not None and _certainly_complex(definition):
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
        return tuple(_span_of(item) for item in array_entries(name, decl.value, shape))

    def _build_fields(self) -> None:
        group_names = {g.name for g in self.syntax.gauges}
        for f in self.syntax.fields:
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
            if f.name in _DERIVATIVES and f.kind == "vector":
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
                                          tuple(representations), tuple(global_charges))

    def _build_groups(self) -> None:
        for g in self.syntax.gauges:
            kind = f"{g.group}({g.rank})"
            rank = int(g.rank) if g.rank.isdigit() and len(g.rank) <= 60 else 0
            if not (kind == "U(1)" or (g.group == "SU" and rank >= 2)):
                raise ModelMeaningError(f"unknown gauge group '{_short_text(kind)}'", self._attr_span(g, "group"),
                                        "write U(1) or SU(N) with a whole N >= 2")
            limits.check_budget(limits.GROUP_RANK, rank, self._attr_span(g, "group"), f"the group {_short_text(kind)}",
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

    # ------------------------------------------------------------------ scalars
    def _scalar(self, node: sx.Expr) -> sympy.Expr:
        """A field-free expression as sympy; parameters become our symbols."""
        if isinstance(node, sx.Number):
            return _fraction_to_sympy(node.value)
        if isinstance(node, sx.Symbol):
            name = _ALIASES.get(node.name, node.name)
            if node.indices:
                raise ModelMeaningError(f"'{node.name}' takes no index here", node.indices[0].span,
                                        "parameters and numbers carry no index")
            if node.name in self.parameters:
                if self.parameters[node.name].is_array:
                    p = self.parameters[node.name]
                    raise ModelMeaningError(f"'{node.name}' is a {'vector' if len(p.spaces) == 1 else 'matrix'} "
                                            f"parameter over {', '.join(p.spaces)}: a number is needed here",
                                            node.span, f"use its components in the lagrangian, e.g. "
                                            f"{node.name}[{', '.join('ijkl'[:len(p.spaces)])}]")
                return self.parameters[node.name].symbol
            if node.name in self.declared and node.name not in self.parameters:
                raise ModelMeaningError(f"a number is needed here, but '{node.name}' is a "
                                        f"{self.declared[node.name][0]}", node.span,
                                        "only parameters, numbers, I and pi may appear here")
            if name in _CONSTANTS:
                return _CONSTANTS[name]
            if any(p.name == node.name for p in self.syntax.parameters):
                raise ModelMeaningError(f"parameter '{node.name}' is used before its value is known", node.span)
            raise ModelMeaningError(f"unknown name '{node.name}'", node.span,
                                    did_you_mean(node.name, list(self.parameters) + list(_CONSTANTS),
                                                 f"declare it under parameters: coupling {node.name} = ..."))
        if isinstance(node, sx.Call):
            if node.function == "conj":
                return sympy.conjugate(self._scalar(node.argument))
            if node.function in _SCALAR_FUNCTIONS:
                argument = self._scalar(node.argument)
                limits.check_function(node.function, argument, node.span, ModelMeaningError)
                value = _SCALAR_FUNCTIONS[node.function](argument)
                limits.check_magnitude(value, node.span, f"{node.function}() of this argument", ModelMeaningError)
                return value
            raise ModelMeaningError(f"{node.function}() needs a field, but a number is needed here", node.span,
                                    "only sqrt, sin, cos, tan, exp, log and conj of parameters may appear here")
        if isinstance(node, sx.Group):
            return self._scalar(node.inner)
        if isinstance(node, sx.Sum):
            for _, t in node.terms:
                if isinstance(t, sx.HermitianConjugate):
                    raise ModelMeaningError("'h.c.' belongs in a Lagrangian term", t.span, "remove it here")
            return sympy.Add(*[sign * self._scalar(t) for sign, t in node.terms])
        if isinstance(node, sx.Product):
            product = sympy.Mul(*[self._scalar(f) for f in node.factors])
            limits.check_magnitude(product, node.span, "this product", ModelMeaningError)
            return product
        if isinstance(node, sx.Quotient):
            denominator = self._scalar(node.denominator)
            if denominator == 0:
                raise ModelMeaningError("division by zero: the denominator is 0", node.denominator.span,
                                        "divide by a number or parameter that is not zero")
            quotient = self._scalar(node.numerator) / denominator
            limits.check_magnitude(quotient, node.span, "this quotient", ModelMeaningError)
            return quotient
        if isinstance(node, sx.Power):
            base, exponent = self._scalar(node.base), self._scalar(node.exponent)
            limits.check_power(base, exponent, node.span, ModelMeaningError)  # before sympy computes it
            result = base ** exponent
            limits.check_magnitude(result, node.span, "this power", ModelMeaningError)
            return result
        if isinstance(node, sx.HermitianConjugate):
            raise ModelMeaningError("'h.c.' belongs in a Lagrangian term", node.span, "remove it here")
        raise ModelMeaningError("a number is needed here", _span_of(node))

    # ------------------------------------------------------------------ Lagrangian
    def _build_definition(self, d: sx.Definition) -> m.Definition:
        body = self._node(d.body)
        if self.spaces:
            check_index_spaces(d.body, self.fields, self.parameters, self.strengths)
        free = self._free_indices(d.body)
        declared = [i.name for i in d.indices]
        if len(set(declared)) != len(declared):
            raise ModelMeaningError(f"definition '{d.name}' repeats an index", d.span, "give each index its own name")
        for index in free:
            if index not in declared:
                raise ModelMeaningError(f"index '{index}' is left free in definition '{d.name}'",
                                        self._index_span(d.body, index) or d.span,
                                        f"contract it, or list it: {d.name}[{', '.join(declared + [index])}] = ...")
        for index in declared:
            if index not in free:
                raise ModelMeaningError(f"index '{index}' of '{d.name}' does not appear free in its body",
                                        d.span, "every listed index must appear once in the body")
        return m.Definition(d.name, tuple(declared), body, d.span)

    def _build_term(self, t: sx.LagrangianTerm) -> m.Term:
        node = self._node(t.expr, top=True)
        if self.spaces:
            check_index_spaces(t.expr, self.fields, self.parameters, self.strengths)
        free = self._free_indices(t.expr)
        if free:
            index = sorted(free)[0]
            raise ModelMeaningError(f"index '{index}' is left free", self._index_span(t.expr, index) or t.span,
                                    f"every index in a term appears exactly twice; contract '{index}' "
                                    "with another factor")
        if not self._has_field(t.expr):
            raise ModelMeaningError("this term contains no field", t.span,
                                    "a Lagrangian term multiplies fields; constants are dropped by the physics")
        return m.Term(node, t.span)

    def _has_field(self, node: sx.Expr) -> bool:
        for s in _walk(node):
            if isinstance(s, sx.Symbol) and (s.name in self.fields or s.name in self.strengths
                                             or s.name in self.definitions):
                return True
        return False

    def _is_scalar(self, node: sx.Expr) -> bool:
        """True when a node has no field, no Dirac matrix, no tensor and no derivative."""
        for s in _walk(node):
            if isinstance(s, sx.Symbol):
                name = _ALIASES.get(s.name, s.name)
                if s.name in self.parameters and not s.indices:
                    continue
                if name in _CONSTANTS and s.name not in self.declared:
                    continue
                return False
            if isinstance(s, sx.Call) and s.function in ("bar", "dag"):
                return False
            if isinstance(s, sx.HermitianConjugate):
                return False
        return True

    def _node(self, node: sx.Expr, top: bool = False) -> m.LNode:
        if self._is_scalar(node):
            return m.LScalar(self._scalar(node), _span_of(node))
        if isinstance(node, sx.Symbol):
            return self._symbol(node)
        if isinstance(node, sx.Call):
            return self._call(node)
        if isinstance(node, sx.Group):
            return self._node(node.inner)
        if isinstance(node, sx.Sum):
            terms: list[tuple[int, m.LNode]] = []
            has_hc = False
            for sign, t in node.terms:
                if isinstance(t, sx.HermitianConjugate):
                    if sign < 0:
                        raise ModelMeaningError("'- h.c.' is unusual and probably a typo", t.span,
                                                "write '+ h.c.'; to subtract the conjugate write it out")
                    if has_hc:
                        raise ModelMeaningError("'h.c.' appears twice in one sum", t.span, "keep one '+ h.c.'")
                    has_hc = True
                    continue
                terms.append((sign, self._node(t)))
            if has_hc and not terms:
                raise ModelMeaningError("'+ h.c.' has nothing to conjugate on its own line", node.span,
                                        "write '+ h.c.' at the end of the term it conjugates")
            return m.LSum(tuple(terms), has_hc, node.span)
        if isinstance(node, sx.HermitianConjugate):
            raise ModelMeaningError("'h.c.' stands alone", node.span,
                                    "write '+ h.c.' at the end of the term it conjugates")
        if isinstance(node, sx.Product):
            return m.LProduct(tuple(self._node(f) for f in node.factors), node.span)
        if isinstance(node, sx.Quotient):
            if not self._is_scalar(node.denominator):
                raise ModelMeaningError("a field in a denominator has no Feynman rule", node.denominator.span,
                                        "divide by parameters and numbers only")
            return m.LProduct((self._node(node.numerator),
                               m.LScalar(1 / self._scalar(node.denominator), node.denominator.span)), node.span)
        if isinstance(node, sx.Power):
            exponent = node.exponent
            if not isinstance(exponent, sx.Number) or not exponent.text.isdigit():
                raise ModelMeaningError("a power of a field needs a positive whole exponent", _span_of(exponent),
                                        "write e.g. phi^4")
            n = int(exponent.text)
            if n < 1 or n > MAX_FIELD_POWER:
                raise ModelMeaningError(f"field powers from 1 to {MAX_FIELD_POWER} are supported", exponent.span,
                                        f"write a power between 1 and {MAX_FIELD_POWER}")
            if self._free_indices(node.base):
                raise ModelMeaningError("the power of an expression with a free index is ambiguous", node.span,
                                        "write the factors out and contract their indices")
            return m.LPower(self._node(node.base), n, node.span)
        raise ModelMeaningError("cannot read this expression", _span_of(node))

    def _check_index_count(self, node: sx.Symbol, expected: int, what: str, example: str) -> None:
        if len(node.indices) != expected:
            if expected == 0:
                raise ModelMeaningError(f"{what} has no Lorentz index", node.indices[0].span,
                                        f"write {example}")
            span = node.indices[0].span if node.indices else node.span
            raise ModelMeaningError(f"{what} takes {expected} Lorentz ind{'ex' if expected == 1 else 'ices'}, "
                                    f"not {len(node.indices)}", span, f"write {example}")

    def _symbol(self, node: sx.Symbol) -> m.LNode:
        name = node.name
        idx = tuple(i.name for i in node.indices)
        if _ALIASES.get(name, name) in _DERIVATIVES and idx:
            # d[...] and D[...] are always derivatives; a field called d is written without indices
            name = _ALIASES.get(name, name)
            self._check_index_count(node, 1, f"the derivative '{node.name}'", f"{node.name}[mu]")
            if _DERIVATIVES[name] and not self.groups:
                raise ModelMeaningError("D[mu] needs a gauge group", node.span,
                                        "declare a group in the gauge section, or write d[mu]")
            return m.LDerivative(idx[0], _DERIVATIVES[name], node.span)
        if name in self.fields:
            f = self.fields[name]
            if f.kind == "ghost":
                raise ModelMeaningError(f"the ghost '{name}' is generated from the gauge fixing", node.span,
                                        "do not write ghost terms; they are derived automatically")
            lorentz = 1 if f.is_vector else 0
            groups = [g for g, r in f.representations if r != m.FLAVOUR]
            flavours = [g for g, r in f.representations if r == m.FLAVOUR]
            if flavours:
                return flavoured_field(node, f, lorentz, groups, flavours)
            if len(idx) not in (lorentz, lorentz + len(groups)):
                example = ", ".join((["mu"] if lorentz else []) + [_index_example(r) for _, r in f.representations])
                if not groups:
                    self._check_index_count(node, lorentz, f"the {f.kind} field '{name}'",
                                            f"{name}[mu]" if lorentz else name)
                raise ModelMeaningError(f"'{name}' takes {lorentz} Lorentz and {len(groups)} group indices, "
                                        f"not {len(idx)} indices", node.span,
                                        f"write {name}[{example}]" + (" (group indices may be left implied)"
                                                                      if any(r != "adjoint" for _, r in f.representations)
                                                                      else ""))
            group_indices = tuple((g, idx[lorentz + k] if len(idx) > lorentz else None) for k, g in enumerate(groups))
            for g, i in group_indices:
                if i is None and f.representation(g) == "adjoint":
                    raise ModelMeaningError(f"the adjoint index of '{name}' must be written", node.span,
                                            f"write {name}[{', '.join((['mu'] if lorentz else []) + ['a'])}]")
            return m.LField(name, False, idx[0] if lorentz else None, node.span, group_indices)
        if name in self.strengths:
            group = self.groups_syntax[self.strengths[name]]
            if group.group == "SU":
                if len(idx) not in (2, 3):
                    self._check_index_count(node, 3, f"the field strength '{name}'", f"{name}[mu,nu,a]")
                return m.LStrength(self.strengths[name], (idx[0], idx[1]), node.span,
                                   idx[2] if len(idx) == 3 else None)
            self._check_index_count(node, 2, f"the field strength '{name}'", f"{name}[mu,nu]")
            return m.LStrength(self.strengths[name], (idx[0], idx[1]), node.span)
        group_tensor = self._group_tensor(node)
        if group_tensor is not None:
            return group_tensor
        if name in self.definitions:
            d = self.definitions[name]
            if len(idx) != len(d.indices):
                raise ModelMeaningError(f"definition '{name}' takes {len(d.indices)} indices, not {len(idx)}",
                                        node.span, f"write {name}[{', '.join(d.indices)}]" if d.indices else name)
            return m.LDefinitionUse(name, idx, node.span)
        if name in self.declared and not idx:
            what = self.declared[name][0]
            if name in self.definitions or what == "definition":
                raise ModelMeaningError(f"definition '{name}' is used before it is defined", node.span,
                                        "move the definition above its first use")
            raise ModelMeaningError(f"the {what} '{name}' cannot appear in the Lagrangian", node.span,
                                    "use fields, parameters and built-in objects")
        builtin = _ALIASES.get(name, name)
        if builtin in _DIRAC:
            n = _DIRAC[builtin]
            examples = {0: builtin, 1: "gamma[mu]", 2: "sigma[mu,nu]"}
            self._check_index_count(node, n, f"'{name}'", examples[n])
            return m.LDirac(builtin, idx, node.span)
        if builtin in _TENSORS:
            n = _TENSORS[builtin]
            if builtin == "eps" and len(idx) != n:
                alternative = alternating_hint(_ALIASES.get(node.name, node.name), len(idx), self.syntax.gauges)
                if alternative:
                    raise ModelMeaningError(f"'{name}' is the Lorentz epsilon and takes 4 Lorentz indices, "
                                            f"not {len(idx)}", node.indices[0].span if idx else node.span,
                                            alternative)
            self._check_index_count(node, n, f"'{name}'", "g[mu,nu]" if n == 2 else "eps[mu,nu,rho,sigma]")
            if len(set(idx)) != len(idx):
                if builtin == "eps":
                    raise ModelMeaningError("eps with a repeated index is zero", node.span,
                                            "use four different indices")
            return m.LTensor(builtin, idx, node.span)
        if builtin in _DERIVATIVES:
            self._check_index_count(node, 1, f"the derivative '{name}'", f"{name}[mu]")
        if name in self.parameters and self.parameters[name].is_array:
            return array_component(self.parameters[name], node, False)
        if name in self.parameters:
            raise ModelMeaningError(f"parameter '{name}' takes no index", node.indices[0].span,
                                    f"write {name} without brackets")
        alternative = alternating_hint(_ALIASES.get(name, name), len(idx), self.syntax.gauges)
        if alternative:
            raise ModelMeaningError(f"unknown name '{name}'", node.span, alternative)
        non_abelian = sorted(g.name for g in self.syntax.gauges if g.group == "SU")
        group_tensors = [f"{base}_{g}" for base in _GROUP_TENSORS for g in non_abelian] if len(non_abelian) > 1 \
            else list(_GROUP_TENSORS) if non_abelian else []
        candidates = list(self.fields) + list(self.parameters) + list(self.definitions) + \
            list(self.strengths) + list(_DIRAC) + list(_TENSORS) + list(_DERIVATIVES) + group_tensors
        raise ModelMeaningError(f"unknown name '{name}'", node.span,
                                did_you_mean(name, candidates, "declare it as a field or a parameter"))

    def _group_tensor(self, node: sx.Symbol) -> m.LGroup | None:
        """T[a], T[a,i,j], f[a,b,c], delta[i,j]; with several non-abelian groups T_color[a] etc."""
        base, _, suffix = node.name.partition("_")
        if base not in _GROUP_TENSORS or node.name in self.declared:
            return None
        non_abelian = sorted(g.name for g in self.syntax.gauges if g.group == "SU")
        if suffix:
            if suffix not in non_abelian:
                raise ModelMeaningError(f"'{node.name}' names no non-abelian group", node.span,
                                        did_you_mean(suffix, non_abelian, "declare an SU(N) group in the gauge section"))
            group = suffix
        elif len(non_abelian) == 1:
            group = non_abelian[0]
        elif not non_abelian:
            raise ModelMeaningError(f"'{base}' needs a non-abelian gauge group", node.span,
                                    "declare an SU(N) group in the gauge section")
        else:
            raise ModelMeaningError(f"'{base}' is ambiguous with several non-abelian groups", node.span,
                                    f"name the group: {base}_{non_abelian[0]}[...]")
        if base == "alt":
            return alternating_tensor(node, group, self.groups_syntax[group].rank)
        counts = _GROUP_TENSORS[base]
        if len(node.indices) not in counts:
            examples = {"T": "T[a] (a matrix between fields) or T[a,i,j]", "f": "f[a,b,c]", "delta": "delta[i,j]"}
            span = node.indices[0].span if node.indices else node.span
            raise ModelMeaningError(f"'{node.name}' takes {' or '.join(map(str, counts))} indices, "
                                    f"not {len(node.indices)}", span, f"write {examples[base]}")
        return m.LGroup(base, group, tuple(i.name for i in node.indices), node.span)

    def _field_inside(self, arg: sx.Symbol, node: sx.Call) -> m.LField:
        """The field written inside bar() or dag(); `d[i]` there is the derivative, not a field called d."""
        inner = self._symbol(arg)
        if not isinstance(inner, m.LField):
            raise ModelMeaningError(f"'{arg.name}[...]' inside {node.function}() reads as the derivative "
                                    f"{arg.name}[...], not the field '{arg.name}'", arg.span,
                                    f"write {node.function}({arg.name}) and let its group index be implied, "
                                    f"or give the field another name")
        return inner

    def _call(self, node: sx.Call) -> m.LNode:
        arg = node.argument
        while isinstance(arg, sx.Group):
            arg = arg.inner
        if node.function == "bar":
            if not isinstance(arg, sx.Symbol) or arg.name not in self.fields:
                raise ModelMeaningError("bar() takes one fermion field", node.span, "write bar(psi)")
            f = self.fields[arg.name]
            if not f.is_fermion:
                raise ModelMeaningError(f"bar() of the {f.kind} '{f.name}': only fermions have a Dirac adjoint",
                                        node.span, f"for a boson write dag({f.name})" if f.is_complex
                                        else f"'{f.name}' is real: write {f.name}")
            inner = self._field_inside(arg, node)
            return m.LField(f.name, True, None, node.span, inner.group_indices)
        if node.function == "dag":
            if isinstance(arg, sx.Symbol) and arg.name in self.fields:
                f = self.fields[arg.name]
                if f.is_fermion:
                    raise ModelMeaningError(f"dag() of the fermion '{f.name}'", node.span,
                                            f"in a Lorentz-invariant term write bar({f.name})")
                if not f.is_complex:
                    raise ModelMeaningError(f"dag() of the real field '{f.name}' is the field itself", node.span,
                                            f"write {f.name}, or declare it complex")
                inner = self._field_inside(arg, node)
                return m.LField(f.name, True, inner.index, node.span, inner.group_indices)
            for s in _walk(arg):
                if isinstance(s, sx.Call) and s.function == "bar":
                    raise ModelMeaningError("dag() of an expression with a fermion", node.span,
                                            "write the conjugate out with bar(), or use '+ h.c.'")
            return m.LDagger(self._node(arg), node.span)
        if node.function == "conj" and isinstance(arg, sx.Symbol) and arg.name in self.parameters:
            return array_component(self.parameters[arg.name], arg, True)
        if node.function == "conj":
            raise ModelMeaningError("conj() takes a complex parameter, not a field", node.span,
                                    "for a field write dag(...) or bar(...)")
        raise ModelMeaningError(f"{node.function}() of a field has no Feynman rule", node.span,
                                f"{node.function}() takes parameters and numbers only")

    # ------------------------------------------------------------------ indices
    def _free_indices(self, node: sx.Expr) -> Counter[str]:
        """Free Lorentz indices of a node; raises on an index used more than twice."""
        if isinstance(node, sx.Symbol):
            if node.name in self.parameters and not node.indices:
                return Counter()
            names = [i.name for i in node.indices]
            counts = Counter(names)
            if _ALIASES.get(node.name, node.name) in ("g", "sigma", "eps") or node.name in self.strengths:
                # a repeated index inside one object contracts it with itself
                return Counter({k: 1 for k, v in counts.items() if v == 1})
            return Counter({k: 1 for k, v in counts.items() if v == 1})
        if isinstance(node, sx.Call):
            return self._free_indices(node.argument)
        if isinstance(node, sx.Group):
            return self._free_indices(node.inner)
        if isinstance(node, sx.Sum):
            summands = [t for _, t in node.terms if not isinstance(t, sx.HermitianConjugate)]
            frees = [self._free_indices(t) for t in summands]
            if len({frozenset(f) for f in frees}) > 1:
                summand_mismatch(summands, frees, [self._implies_group_index(t) for t in summands])
            return frees[0] if frees else Counter()
        if isinstance(node, sx.Product):
            seen: Counter[str] = Counter()
            for factor in node.factors:
                for index in self._free_indices(factor):
                    seen[index] += 1
                    if seen[index] > 2:
                        raise ModelMeaningError(f"index '{index}' is used more than twice",
                                                self._index_span(factor, index) or _span_of(factor),
                                                "rename one pair of the repeated indices")
            return Counter({k: 1 for k, v in seen.items() if v == 1})
        if isinstance(node, sx.Quotient):
            return self._free_indices(node.numerator)
        if isinstance(node, sx.Power):
            return self._free_indices(node.base)
        return Counter()

    def _implies_group_index(self, node: sx.Expr) -> bool:
        """Whether a field in an SU(N) representation is written without its group indices."""
        for s in _walk(node):
            if isinstance(s, sx.Symbol) and s.name in self.fields:
                f = self.fields[s.name]
                lorentz = 1 if f.is_vector else 0
                if any(r != "adjoint" for _, r in f.representations) and len(s.indices) == lorentz:
                    return True
        return False

    def _index_span(self, node: sx.Expr, index: str) -> Span | None:
        for s in _walk(node):
            if isinstance(s, sx.Symbol):
                for i in s.indices:
                    if i.name == index:
                        return i.span
        return None


def _index_example(representation: str) -> str:
    return "a" if representation == "adjoint" else "i"


def _span_of(node: sx.Expr) -> Span:
    return getattr(node, "span", Span(0, 0, 0, 0))


def _walk(node: sx.Expr | sx.Array) -> Iterable[sx.Expr]:
    if isinstance(node, sx.Array):
        for item in node.items:
            yield from _walk(item)
        return
    yield node
    if isinstance(node, (sx.Call,)):
        yield from _walk(node.argument)
    elif isinstance(node, sx.Group):
        yield from _walk(node.inner)
    elif isinstance(node, sx.Sum):
        for _, t in node.terms:
            yield from _walk(t)
    elif isinstance(node, sx.Product):
        for f in node.factors:
            yield from _walk(f)
    elif isinstance(node, sx.Quotient):
        yield from _walk(node.numerator)
        yield from _walk(node.denominator)
    elif isinstance(node, sx.Power):
        yield from _walk(node.base)
        yield from _walk(node.exponent)


def _names_in(node: sx.Expr | sx.Array) -> set[str]:
    return {s.name for s in _walk(node) if isinstance(s, sx.Symbol)}


def _certainly_complex(expr: sympy.Expr) -> bool:
    return bool(expr.free_symbols == set() and expr.is_real is False)


def _short_text(text: str) -> str:
    """Text from the model shortened for a message (a generated name may be thousands of characters)."""
    return text if len(text) <= 40 else text[:30] + "..." + text[-6:]
