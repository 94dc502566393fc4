"""Syntax nodes to a `Model`: resolve every name, check every index, reject what has no meaning.

Errors raised here are `ModelMeaningError`s pointing at the offending text, with the nearest
declared names as a hint. The model file is data: numbers become exact sympy rationals and
names become our own sympy symbols; no user text is ever evaluated.
"""

from __future__ import annotations

from collections import Counter
from fractions import Fraction

import sympy

from . import limits
from . import model as m
from . import syntax as sx
from .build_declarations import CONSTANTS, DERIVATIVES, DIRAC_MATRICES, Declarations, span_of, walk_syntax
from .errors import ModelMeaningError, Source, Span, did_you_mean
from .build_symmetry import alternating_hint, alternating_tensor, build_symmetries, summand_mismatch
from .spaces import array_component, check_index_spaces, flavoured_field, space_size

# built-in objects of the Lagrangian and the number of indices each takes
_TENSORS = {"g": 2, "eps": 4}
_GROUP_TENSORS = {"T": (1, 3), "f": (3,), "delta": (2,), "alt": ()}  # alt takes N indices, N of SU(N)
_ALIASES = {"γ": "gamma", "γ5": "gamma5", "γ⁵": "gamma5", "σ": "sigma", "ε": "eps", "π": "pi",
            "∂": "d", "i": "I", "η": "g"}
_SCALAR_FUNCTIONS = {"sqrt": sympy.sqrt, "sin": sympy.sin, "cos": sympy.cos, "tan": sympy.tan,
                     "exp": sympy.exp, "log": sympy.log, "re": sympy.re, "im": sympy.im}
BUILTIN_NAMES = tuple(sorted(set(DIRAC_MATRICES) | set(_TENSORS) | set(DERIVATIVES) | set(CONSTANTS)))
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


class _Builder(Declarations):
    """The Lagrangian's meaning, on top of the declarations: terms, definitions, indices."""

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
            if name in CONSTANTS:
                return CONSTANTS[name]
            if any(p.name == node.name for p in self.syntax.parameters):
                raise ModelMeaningError(f"parameter '{node.name}' is used before its value is known", node.span)
            raise ModelMeaningError(f"unknown name '{node.name}'", node.span,
                                    did_you_mean(node.name, list(self.parameters) + list(CONSTANTS),
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
        raise ModelMeaningError("a number is needed here", span_of(node))

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
        for s in walk_syntax(node):
            if isinstance(s, sx.Symbol) and (s.name in self.fields or s.name in self.strengths
                                             or s.name in self.definitions):
                return True
        return False

    def _is_scalar(self, node: sx.Expr) -> bool:
        """True when a node has no field, no Dirac matrix, no tensor and no derivative."""
        for s in walk_syntax(node):
            if isinstance(s, sx.Symbol):
                name = _ALIASES.get(s.name, s.name)
                if s.name in self.parameters and not s.indices:
                    continue
                if name in CONSTANTS and s.name not in self.declared:
                    continue
                return False
            if isinstance(s, sx.Call) and s.function in ("bar", "dag", "cc"):
                return False
            if isinstance(s, sx.HermitianConjugate):
                return False
        return True

    def _node(self, node: sx.Expr, top: bool = False) -> m.LNode:
        if self._is_scalar(node):
            return m.LScalar(self._scalar(node), span_of(node))
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
                raise ModelMeaningError("a power of a field needs a positive whole exponent", span_of(exponent),
                                        "write e.g. phi^4")
            n = int(exponent.text)
            if n < 1 or n > MAX_FIELD_POWER:
                raise ModelMeaningError(f"field powers from 1 to {MAX_FIELD_POWER} are supported", exponent.span,
                                        f"write a power between 1 and {MAX_FIELD_POWER}")
            if self._free_indices(node.base):
                raise ModelMeaningError("the power of an expression with a free index is ambiguous", node.span,
                                        "write the factors out and contract their indices")
            return m.LPower(self._node(node.base), n, node.span)
        raise ModelMeaningError("cannot read this expression", span_of(node))

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
        if _ALIASES.get(name, name) in DERIVATIVES and idx:
            # d[...] and D[...] are always derivatives; a field called d is written without indices
            name = _ALIASES.get(name, name)
            self._check_index_count(node, 1, f"the derivative '{node.name}'", f"{node.name}[mu]")
            if DERIVATIVES[name] and not self.groups:
                raise ModelMeaningError("D[mu] needs a gauge group", node.span,
                                        "declare a group in the gauge section, or write d[mu]")
            return m.LDerivative(idx[0], DERIVATIVES[name], node.span)
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
            return self._weyl_part(m.LField(name, False, idx[0] if lorentz else None, node.span, group_indices))
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
        if builtin in DIRAC_MATRICES:
            n = DIRAC_MATRICES[builtin]
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
        if builtin in DERIVATIVES:
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
            list(self.strengths) + list(DIRAC_MATRICES) + list(_TENSORS) + list(DERIVATIVES) + group_tensors
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
        if isinstance(inner, m.LProduct):  # a weyl field's chiral part: the field itself is inside
            inner = next(factor for factor in inner.factors if isinstance(factor, m.LField))
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
        if node.function == "cc":
            return self._charge_conjugate(arg, node, barred=False)
        if node.function == "bar" and isinstance(arg, sx.Call) and arg.function == "cc":
            inner_arg = arg.argument
            while isinstance(inner_arg, sx.Group):
                inner_arg = inner_arg.inner
            return self._charge_conjugate(inner_arg, node, barred=True)
        if node.function == "bar":
            if not isinstance(arg, sx.Symbol) or arg.name not in self.fields:
                raise ModelMeaningError("bar() takes one fermion field", node.span, "write bar(psi)")
            f = self.fields[arg.name]
            if not f.is_fermion:
                raise ModelMeaningError(f"bar() of the {f.kind} '{f.name}': only fermions have a Dirac adjoint",
                                        node.span, f"for a boson write dag({f.name})" if f.is_complex
                                        else f"'{f.name}' is real: write {f.name}")
            inner = self._field_inside(arg, node)
            return self._weyl_part(m.LField(f.name, True, None, node.span, inner.group_indices))
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
            for s in walk_syntax(arg):
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

    def _weyl_part(self, node: m.LField, cc: bool = False) -> m.LNode:
        """A factor of a weyl field as the chiral part of its Majorana field X = xi + cc(xi).

        For a left-handed xi: xi = PL X, bar(xi) = bar(X) PR, cc(xi) = PR X, bar(cc(xi)) = bar(X) PL
        (X^c = X; Dreiner, Haber & Martin, arXiv:0812.1594, sec. 3, from memory); right-handed: PL <-> PR.
        """
        hand = self.fields[node.field].weyl
        if hand is None:
            return node
        own, other = ("PL", "PR") if hand == "left" else ("PR", "PL")
        if node.conjugate:  # a row end: the projector stands after the field
            return m.LProduct((node, m.LDirac(own if cc else other, (), node.span)), node.span)
        return m.LProduct((m.LDirac(other if cc else own, (), node.span), node), node.span)

    def _charge_conjugate(self, arg: sx.Expr, node: sx.Call, barred: bool) -> m.LField:
        """cc(psi) = C bar(psi)^T and bar(cc(psi)) = psi^T C of a fermion (a Majorana field is its own cc)."""
        written = "bar(cc(...))" if barred else "cc(...)"
        if not isinstance(arg, sx.Symbol) or arg.name not in self.fields:
            raise ModelMeaningError(f"{written} takes one fermion field", node.span,
                                    "write cc(psi) for the charge conjugate C bar(psi)^T, bar(cc(psi)) for its adjoint")
        f = self.fields[arg.name]
        if not f.is_fermion:
            raise ModelMeaningError(f"cc() of the {f.kind} '{f.name}': only a fermion has a charge conjugate "
                                    "spinor", node.span, f"for a boson write dag({f.name})" if f.is_complex
                                    else f"'{f.name}' is real: write {f.name}")
        inner = self._field_inside(arg, node)
        if f.kind == "majorana":  # chi^c = chi: the factor is the field itself
            return self._weyl_part(m.LField(f.name, barred, None, node.span, inner.group_indices), cc=True)
        if any(index is None for _, index in inner.group_indices):
            group = next(g for g, index in inner.group_indices if index is None)
            raise ModelMeaningError(f"cc({f.name}) needs its {group} index written out", node.span,
                                    f"a charge conjugate sits in the conjugate representation: write "
                                    f"cc({f.name}[i]) and contract i explicitly")
        return m.LField(f.name, not barred, None, node.span, inner.group_indices, charge_conjugate=True)

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
                                                self._index_span(factor, index) or span_of(factor),
                                                "rename one pair of the repeated indices")
            return Counter({k: 1 for k, v in seen.items() if v == 1})
        if isinstance(node, sx.Quotient):
            return self._free_indices(node.numerator)
        if isinstance(node, sx.Power):
            return self._free_indices(node.base)
        return Counter()

    def _implies_group_index(self, node: sx.Expr) -> bool:
        """Whether a field in an SU(N) representation is written without its group indices."""
        for s in walk_syntax(node):
            if isinstance(s, sx.Symbol) and s.name in self.fields:
                f = self.fields[s.name]
                lorentz = 1 if f.is_vector else 0
                if any(r != "adjoint" for _, r in f.representations) and len(s.indices) == lorentz:
                    return True
        return False

    def _index_span(self, node: sx.Expr, index: str) -> Span | None:
        for s in walk_syntax(node):
            if isinstance(s, sx.Symbol):
                for i in s.indices:
                    if i.name == index:
                        return i.span
        return None


def _index_example(representation: str) -> str:
    return "a" if representation == "adjoint" else "i"


