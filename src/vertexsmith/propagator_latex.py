"""Propagators in LaTeX in the order a textbook writes them.

sympy orders terms by its own key (- m^2 + p^2, i m + i pslash); a physicist reads i(pslash + m)/(p^2 - m^2)
and -i/(p^2 - M^2)[g^{mu nu} + (xi - 1) p^mu p^nu/(p^2 - xi M^2)]. The coefficients arrive in the symbol
p2 (= p.p), kept whole so that p^2 - m^2 is never factored into (p - m)(p + m).
"""

from __future__ import annotations

import sympy

from .codegen import P2
from .symbolic import to_latex

P = sympy.Symbol("p", real=True)  # the propagator momentum (rules.P)


def _polynomial_latex(expr: sympy.Expr) -> str:
    """A denominator with the momentum first: p^{2} - m^{2}, not - m^{2} + p^{2}."""
    terms = sorted(sympy.Add.make_args(sympy.expand(expr)),
                   key=lambda t: (-sympy.degree(t, P2) if t.has(P2) else 1, sympy.default_sort_key(t)))
    return to_latex(sympy.Add(*[t.subs(P2, P**2) for t in terms], evaluate=False), order="none")


def _fraction_latex(expr: sympy.Expr) -> str:
    numerator, denominator = sympy.fraction(sympy.factor(expr))
    top = to_latex(numerator.subs(P2, P**2))
    return top if denominator == 1 else f"\\frac{{{top}}}{{{_polynomial_latex(denominator)}}}"


def customary_propagator_latex(kind: str, a: sympy.Expr, b: sympy.Expr, chiral: bool) -> str | None:
    """A propagator D = a X + b Y as a common factor times the customary bracket; None where there is no such form."""
    if kind == "scalar" or kind == "ghost":
        return _fraction_latex(a)
    if chiral or a == 0:
        return None
    ratio = sympy.factor(sympy.cancel(b / a))
    numerator, denominator = sympy.fraction(sympy.factor(a))
    if kind == "dirac":
        if ratio.has(P2):
            return None
        inner = "\\not{p}" if ratio == 0 else f"\\not{{p}} + {to_latex(ratio)}"
        if ratio != 0 and ratio.could_extract_minus_sign():
            inner = f"\\not{{p}} - {to_latex(-ratio)}"
        top = to_latex(numerator)
        top = f"{top} \\left({inner}\\right)" if ratio != 0 else f"{top} {inner}"
        return top if denominator == 1 else f"\\frac{{{top}}}{{{_polynomial_latex(denominator)}}}"
    common = _fraction_latex(a)
    if ratio == 0:
        return f"{common} \\, g^{{\\mu \\nu}}"
    sign, size = ("-", -ratio) if ratio.could_extract_minus_sign() else ("+", ratio)
    return f"{common} \\left[g^{{\\mu \\nu}} {sign} {_fraction_latex(size)} \\, p^{{\\mu}} p^{{\\nu}}\\right]"


__all__ = ["customary_propagator_latex"]
