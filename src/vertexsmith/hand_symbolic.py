"""A sympy expression from a hand-written factor, in the vocabulary of `symbolic.py`.

`compare` prints a differing hand factor beside the derived one and their difference; both must
then be sympy expressions of the same classes, so that the difference simplifies.
`canonical_factor` brings either side to one form (products of linear objects expanded).
"""

from __future__ import annotations

import sympy

from .hand_numbers import HandContext, group_tensor_name
from .rules import MU, NU, P
from .symbolic import (Chain, Component, Dot, FourVector, Gamma, Gamma5, Generator, GroupAlternating, GroupDelta, LeviCivita,
                       ChargeConj, Metric, ProjL, ProjR, Sigma, Slash, StructureConstant)
from .syntax import HCall, HDot, HIndexed, HName, HNode, HNumber, HPower, HProduct, HQuotient, HSum

# ------------------------------------------------------------------ sympy from hand factors

class HandSymbolic:
    """The hand factor as a sympy expression in vertexsmith's own objects (chains as written)."""

    def __init__(self, ctx: HandContext) -> None:
        self.ctx = ctx

    def evaluate(self, node: HNode) -> sympy.Expr:
        return getattr(self, "_" + type(node).__name__)(node)

    def _HNumber(self, node: HNumber) -> sympy.Expr:
        return sympy.Rational(node.value.numerator, node.value.denominator)

    def _HSum(self, node: HSum) -> sympy.Expr:
        return sympy.Add(*[sign * self.evaluate(term) for sign, term in node.terms])

    def _HProduct(self, node: HProduct) -> sympy.Expr:
        return sympy.Mul(*[self.evaluate(factor) for factor in node.factors])

    def _HQuotient(self, node: HQuotient) -> sympy.Expr:
        return self.evaluate(node.numerator) / self.evaluate(node.denominator)

    def _HPower(self, node: HPower) -> sympy.Expr:
        b, e = self.evaluate(node.base), self.evaluate(node.exponent)
        if isinstance(b, sympy.Symbol) and str(b) in self.ctx.momentum_names and b != P:
            return Dot(b, b)
        return b**e

    def _slot(self, name: str) -> sympy.Expr:
        if name in self.ctx.momentum_names:
            return P if name == "p" and self.ctx.propagator is not None else sympy.Symbol(name)
        if self.ctx.propagator is not None and name in ("mu", "nu"):
            return MU if name == "mu" else NU
        return sympy.Symbol(name)

    def _HDot(self, node: HDot) -> sympy.Expr:
        return Dot(self._slot(node.left), self._slot(node.right))

    def _HIndexed(self, node: HIndexed) -> sympy.Expr:
        return FourVector(self.evaluate(node.base), self._slot(node.indices[0][0]))

    def _HName(self, node: HName) -> sympy.Expr:
        ctx, name = self.ctx, node.name
        name, named_group = group_tensor_name(name, node.indices, ctx)
        slots = [self._slot(n) for n, _ in node.indices]
        is_momentum = [n in ctx.momentum_names for n, _ in node.indices]
        if name in ctx.momentum_names:
            p = self._slot(name)
            return FourVector(p, slots[0]) if slots else p
        if name in ("gamma", "sigma", "g", "eps", "f", "T", "delta", "alt") and (node.indices or name not in ctx.parameters):
            if name == "gamma":
                return Slash(slots[0]) if is_momentum[0] else Gamma(slots[0])
            if name == "sigma":
                return Sigma(*slots)
            if name == "g":
                if all(is_momentum):
                    return Dot(*slots)
                if any(is_momentum):
                    p, i = (slots[0], slots[1]) if is_momentum[0] else (slots[1], slots[0])
                    return FourVector(p, i)
                return Metric(*slots)
            if name == "eps":
                return LeviCivita(*slots)
            group = named_group or next((ctx.spaces[n].group for n, _ in node.indices if n in ctx.spaces), "")
            cls = {"f": StructureConstant, "T": Generator, "delta": GroupDelta, "alt": GroupAlternating}[name]
            return cls(sympy.Symbol(group), *slots)
        if name == "I":
            return sympy.I
        if name == "pi":
            return sympy.pi
        if name in ("gamma5", "PL", "PR", "CC") and name not in ctx.parameters:
            return {"gamma5": Gamma5, "PL": ProjL, "PR": ProjR, "CC": ChargeConj}[name]
        if name in ctx.parameters:
            if ctx.parameters[name].is_array and node.indices:
                return Component(ctx.parameters[name].symbol, *slots)
            return ctx.parameters[name].symbol
        return ctx.xi.get(name, sympy.Symbol(name))

    def _HCall(self, node: HCall) -> sympy.Expr:
        args = [self.evaluate(a) for a in node.arguments]
        f = node.function
        if f == "slash":
            return Slash(args[0])
        if f == "dot":
            return Dot(args[0], args[1])
        if f == "chain":
            i, j = int(args[0]), int(args[1])
            return Chain(i, j, args[2])
        functions = {"sqrt": sympy.sqrt, "conj": sympy.conjugate, "sin": sympy.sin, "cos": sympy.cos,
                     "tan": sympy.tan, "exp": sympy.exp, "log": sympy.log, "re": sympy.re, "im": sympy.im}
        return functions[f](args[0])


def _linear(cls: type, expr: sympy.Expr, *rest: sympy.Expr) -> sympy.Expr:
    """cls(a p1 + b p2, ...) -> a cls(p1, ...) + b cls(p2, ...), for objects linear in a momentum."""
    terms = sympy.Add.make_args(sympy.expand(expr))
    out = []
    for t in terms:
        c, p = t.as_coeff_Mul()
        out.append(c * cls(p, *rest))
    return sympy.Add(*out)


def canonical_factor(expr: sympy.Expr) -> sympy.Expr:
    """Momentum combinations distributed and symmetric objects' arguments sorted, then expanded."""

    def four_vector(p: sympy.Expr, index: sympy.Expr) -> sympy.Expr:
        return _linear(FourVector, p, index)

    def slash_(p: sympy.Expr) -> sympy.Expr:
        return _linear(Slash, p)

    def dot(p: sympy.Expr, q: sympy.Expr) -> sympy.Expr:
        out = []
        for a in sympy.Add.make_args(sympy.expand(p)):
            ca, pa = a.as_coeff_Mul()
            for b in sympy.Add.make_args(sympy.expand(q)):
                cb, pb = b.as_coeff_Mul()
                x, y = sorted((pa, pb), key=sympy.default_sort_key)
                out.append(ca * cb * Dot(x, y))
        return sympy.Add(*out)

    def metric(a: sympy.Expr, b: sympy.Expr) -> sympy.Expr:
        x, y = sorted((a, b), key=sympy.default_sort_key)
        return Metric(x, y)

    result = expr.replace(FourVector, four_vector).replace(Slash, slash_).replace(Dot, dot).replace(Metric, metric)
    return sympy.expand(result)
