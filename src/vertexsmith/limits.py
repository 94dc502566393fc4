"""Budgets: how large a model, a number, a vertex or an output may grow, each checked before the work.

A model file is written by hand or by a script, and either can ask for more than a laptop can
give (SU(1000), `m^1000000000`, a vertex of a thousand terms). Every stage that can grow asks this
module first, with the amount it is about to spend, and a blown budget becomes a positioned
error that names the limit and says why it is there, instead of minutes of work and gigabytes
of memory. The limits are listed, with the same words, in the README's "Limits" section; change
them here and there together. Only `errors` is imported here, so every stage may use this module.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Iterable

from .errors import DerivationError, ModelSyntaxError, Source, Span, VertexsmithError

if TYPE_CHECKING:
    import numpy as np
    import sympy


@dataclass(frozen=True)
class Budget:
    """One limit: what it counts (in the user's words), the largest allowed amount, and why."""

    what: str
    limit: int
    why: str

    def allows(self, amount: float) -> bool:
        return amount <= self.limit


MODEL_BYTES = Budget("bytes in a model file", 2_000_000, "larger files are generated text, not models")
MODEL_FILES = Budget("files one model builds on, through every level", 32,
                     "a longer chain of included files is generated, not written")
HAND_RULES_BYTES = Budget("bytes in a hand-rules file", 1_000_000, "larger files are generated text")
TOKENS = Budget("words and symbols in a model file", 100_000,
                "reading more takes longer than a user waits; a model this long is generated text")
LAGRANGIAN_LINES = Budget("terms (lines) in the Lagrangian", 5_000,
                          "deriving more takes longer than a user waits; gather repeated terms into one line")
NESTING = Budget("brackets open at once", 100, "deeper nesting is generated text and exhausts the parser")
NUMBER_DIGITS = Budget("digits in a number", 60, "no measured quantity has more")
NUMBER_EXPONENT = Budget("size of a decimal exponent (e300)", 300, "double precision ends near 1e308")
EXACT_DIGITS = Budget("digits of an exact number (numerator or denominator)", 60,
                      "exact arithmetic on longer numbers grows without bound")
MAGNITUDE = Budget("decimal exponent of a value (1e300)", 300, "double precision ends near 1e308")
POWER = Budget("size of an exponent", 100,
               "larger powers make the algebra stall for minutes and are never physics")
FIELD_POWER = Budget("power of a field expression", 12, "a vertex has at most 12 legs")
GROUP_RANK = Budget("N of an SU(N) group", 10,
                    "the numeric checks store SU(N)'s structure constants, (N^2-1)^3 numbers")
LEGS = Budget("fields in a monomial (legs of a vertex)", 12, "more legs give more leg assignments than can be summed")
ASSIGNMENTS = Budget("leg assignments of one monomial", 5_040,
                     "7!: beyond it one monomial's vertex takes more than seconds")
VERTEX_ASSIGNMENTS = Budget("leg assignments summed over the monomials of one vertex", 20_000,
                            "beyond it collecting the vertex's structures takes more than seconds")
TERMS_PER_LINE = Budget("monomials from one Lagrangian line", 3_000, "deriving more takes longer than a user waits")
MONOMIALS = Budget("monomials in the whole Lagrangian", 20_000, "deriving more takes longer than a user waits")
EXPANDED_TERMS = Budget("terms of a coefficient once multiplied out", 5_000,
                        "multiplying out more takes minutes and gigabytes")
PRODUCT_FACTORS = Budget("factors written in one product", 500, "a longer product is generated text")
TERMS_PER_VERTEX = Budget("terms of one vertex", 2_000, "simplifying a longer coefficient takes minutes")
TENSOR_ELEMENTS = Budget("numbers in one numeric tensor (the product of its axis lengths)", 2 ** 21,
                         "32 MB of complex numbers; a larger array is checked by random contraction instead")
LATEX_CHARACTERS = Budget("characters of LaTeX for one factor", 200_000,
                          "a longer formula cannot be read or typeset")
EXPRESSION_NODES = Budget("size of one symbolic factor (nodes of its expression tree)", 20_000,
                          "printing or simplifying a larger formula takes more than seconds")

ALL = (MODEL_BYTES, MODEL_FILES, HAND_RULES_BYTES, TOKENS, LAGRANGIAN_LINES, NESTING, NUMBER_DIGITS, NUMBER_EXPONENT, EXACT_DIGITS,
       MAGNITUDE, POWER,
       FIELD_POWER, GROUP_RANK, LEGS, ASSIGNMENTS, VERTEX_ASSIGNMENTS, TERMS_PER_LINE, MONOMIALS, TERMS_PER_VERTEX,
       TENSOR_ELEMENTS, LATEX_CHARACTERS, EXPRESSION_NODES, EXPANDED_TERMS, PRODUCT_FACTORS)


def over_budget(budget: Budget, amount: float | str, span: Span, subject: str, hint: str = "",
                error: type[VertexsmithError] = DerivationError) -> VertexsmithError:
    """The error for a blown budget: what asked for how much, which limit, and why the limit exists."""
    shown = f"{amount:,}" if isinstance(amount, int) else str(amount)
    return error(f"{subject} is over the limit on the {budget.what}: {shown}, where at most {budget.limit:,} is "
                 f"allowed ({budget.why})", span,
                 hint or "split the work into smaller pieces, or see 'Limits' in the README")


def check_budget(budget: Budget, amount: float, span: Span, subject: str, hint: str = "",
                 error: type[VertexsmithError] = DerivationError) -> None:
    """Raise `over_budget(...)` when `amount` exceeds the budget; call it before doing the work."""
    if not budget.allows(amount):
        raise over_budget(budget, int(amount) if float(amount).is_integer() else amount, span, subject, hint, error)


# ------------------------------------------------------------------ numbers, before they are computed

def _log10_size(value: "sympy.Expr") -> float | None:
    """log10 of |value| for a number, from a few digits (never the exact value); None if unknown."""
    import sympy

    if value.is_Rational:
        p, q = abs(int(value.p)), int(value.q)  # type: ignore[attr-defined]
        return (math.log10(p) if p else -math.inf) - math.log10(q)
    try:
        approx = sympy.Abs(value).evalf(8, maxn=30)
    except (ValueError, TypeError, ArithmeticError, RecursionError):  # pragma: no cover - sympy internals
        return None
    if approx.is_zero:
        return -math.inf
    if not approx.is_Float:
        return None
    mantissa, exponent = sympy.Float(approx)._mpf_[1:3]  # type: ignore[attr-defined]
    return math.log10(mantissa) + exponent * math.log10(2) if mantissa else -math.inf


def digits_of(value: "sympy.Expr") -> int:
    """Digits of the longer of numerator and denominator of a rational (0 for anything else)."""
    if not value.is_Rational:
        return 0
    return max(len(str(abs(int(value.p)))), len(str(int(value.q))))  # type: ignore[attr-defined]


def check_power(base: "sympy.Expr", exponent: "sympy.Expr", span: Span, error: type[VertexsmithError]) -> None:
    """Refuse base^exponent before sympy computes it, when the result or its algebra would be huge."""
    if not exponent.is_number:
        return
    size = _log10_size(exponent)
    if size is None or size > 6:  # an exponent beyond a million is never physics, whatever the base
        raise over_budget(POWER, _short(exponent), span, "this power", "write a power between -100 and 100",
                          error)
    if not base.is_number:
        if not exponent.is_real or abs(float(exponent)) > POWER.limit:
            raise over_budget(POWER, _short(exponent), span, "this power", "write a power between -100 and 100",
                              error)
        return
    base_size = _log10_size(base)
    if base_size is None or base_size == -math.inf or not exponent.is_real:
        return
    result = base_size * float(exponent)
    if abs(result) > MAGNITUDE.limit:
        raise error(f"this power is about 1e{result:.0f}, beyond the values a number may have (1e±{MAGNITUDE.limit}; "
                    f"{MAGNITUDE.why})", span, "write the value in sensible units (a parameter of size about 1)")
    if base.is_Rational and exponent.is_Integer:
        p, q = abs(int(base.p)), int(base.q)  # type: ignore[attr-defined]
        digits = abs(int(exponent)) * max(math.log10(p) if p else 0.0, math.log10(q))
        if digits > EXACT_DIGITS.limit:
            raise over_budget(EXACT_DIGITS, f"about {int(digits) + 1}", span, "this power",
                              "write it as a decimal number, e.g. 1.5e-40", error)


def check_magnitude(value: "sympy.Expr", span: Span, subject: str, error: type[VertexsmithError]) -> None:
    """Refuse a number whose size is beyond double precision (or is zero divided, infinite, undefined)."""
    import sympy

    if not value.is_number:
        return
    if value.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
        raise error(f"{subject} has no finite value (it is infinite or undefined)", span,
                    "check the arguments of its functions and divisions")
    size = _log10_size(value)
    if size is not None and abs(size) > MAGNITUDE.limit and size != -math.inf:
        raise error(f"{subject} is about 1e{size:.0f}, beyond the values a number may have (1e±{MAGNITUDE.limit}; "
                    f"{MAGNITUDE.why})", span, "write the value in sensible units (a parameter of size about 1)")
    if value.is_Rational and digits_of(value) > EXACT_DIGITS.limit:
        raise over_budget(EXACT_DIGITS, digits_of(value), span, subject,
                          "write it as a decimal number, e.g. 1.5e-40", error)


def check_function(name: str, argument: "sympy.Expr", span: Span, error: type[VertexsmithError]) -> None:
    """Refuse log(0), exp of a huge argument and the like, saying why, before sympy builds zoo or 1e400."""
    import sympy

    if not argument.is_number:
        return
    if name == "log" and argument.is_zero:
        raise error("log(0) is minus infinity, not a number", span, "the argument of log must not be zero")
    if name == "exp":
        size = _log10_size(sympy.re(argument))
        if size is not None and size > 0 and sympy.re(argument).evalf(8) > MAGNITUDE.limit * math.log(10):
            raise error(f"exp({_short(argument)}) is larger than 1e{MAGNITUDE.limit}, beyond the values a number may "
                        f"have ({MAGNITUDE.why})", span, "write the value in sensible units")
    if name in ("sin", "cos", "tan") and (_log10_size(argument) or 0) > 15:
        raise error(f"{name}() of a number this large has lost all its digits", span, "reduce the angle first")


def _short(value: Any) -> str:
    text = str(value)
    return text if len(text) <= 24 else text[:10] + "..." + text[-6:]


# ------------------------------------------------------------------ arrays and expressions

def tensor_elements(shape: Iterable[int]) -> int:
    """Numbers in an array of this shape (the product of its axis lengths)."""
    return math.prod(int(n) for n in shape)


def check_finite(array: "np.ndarray", span: Span, subject: str) -> None:
    """Refuse an infinite or undefined result of numeric evaluation, at the place it comes from."""
    import numpy as np

    if not np.all(np.isfinite(array)):
        raise DerivationError(f"{subject} is too large for double precision (it evaluates to infinity or nan)",
                              span, "write its parameters in sensible units, so the values stay below 1e300")


def expression_nodes(expr: Any, cap: int = EXPRESSION_NODES.limit + 1) -> int:
    """Nodes of a sympy expression tree, counted up to `cap` (so a huge tree costs no more than the cap)."""
    stack, count = [expr], 0
    while stack and count < cap:
        node = stack.pop()
        count += 1
        stack.extend(getattr(node, "args", ()))
    return count


_FACTOR_SYMBOLS = 8
_FACTOR_TERMS = 64


def expanded_terms(expr: Any, cap: int = 10 ** 9) -> int:
    """How many terms `expr` has once multiplied out, estimated from its tree without expanding it.

    A sum adds, a product multiplies, a whole power k of n terms gives C(n + k - 1, k); the count
    stops growing at `cap`. An upper bound up to cancellations, which is what a budget needs.
    """
    import sympy

    if isinstance(expr, sympy.Add):
        return min(cap, sum(expanded_terms(a, cap) for a in expr.args))
    if isinstance(expr, sympy.Mul):
        total = 1
        for a in expr.args:
            total = min(cap, total * expanded_terms(a, cap))
        return total
    if isinstance(expr, sympy.Pow) and expr.exp.is_Integer and expr.exp > 1:
        n, k = expanded_terms(expr.base, cap), int(expr.exp)
        if n == 1:
            return 1
        return min(cap, math.comb(n + k - 1, k)) if k < 10_000 else cap
    return 1


def check_expansion(expr: "sympy.Expr", span: Span, subject: str) -> None:
    """Refuse to multiply out a coefficient whose expansion would have more terms than the budget."""
    terms = expanded_terms(expr, EXPANDED_TERMS.limit + 1)
    if terms > EXPANDED_TERMS.limit:
        raise over_budget(EXPANDED_TERMS, f"more than {EXPANDED_TERMS.limit:,}", span, subject,
                          "write the coefficient as a new parameter, or multiply it out by hand into fewer terms")


def factor_within_budget(expr: "sympy.Expr") -> "sympy.Expr":
    """sympy.factor where it is cheap; common factors only (factor_terms) where it is not.

    Multivariate factorisation recurses over the symbols and works on the degree: a coefficient
    with hundreds of couplings overflows Python's stack, `24 lam^299 - 1` takes minutes, and so do
    coefficients of 300 digits (an exact 1e-300). Both
    forms are equal, so the result stays right; only its shape is plainer for such coefficients.
    """
    import sympy

    expanded = sympy.expand(expr)
    terms = expanded.args if isinstance(expanded, sympy.Add) else (expanded,)
    degree = max((abs(p.exp) for p in expanded.atoms(sympy.Pow) if p.exp.is_Rational), default=0)
    digits = max([digits_of(r) for r in expanded.atoms(sympy.Rational)]
                 + [abs(_log10_size(f) or 0) for f in expanded.atoms(sympy.Float, sympy.exp) if f.is_number],
                 default=0)
    if (len(terms) > _FACTOR_TERMS or len(expanded.free_symbols) > _FACTOR_SYMBOLS or degree > 12
            or digits > EXACT_DIGITS.limit):  # factoring with numbers like 1e-300 takes minutes
        return sympy.factor_terms(expanded)
    return sympy.factor(expr)


def check_coefficient(expr: "sympy.Expr", span: Span) -> None:
    """Refuse a monomial's coefficient with a huge power of a parameter or a huge expression tree."""
    import sympy

    if expression_nodes(expr) > EXPRESSION_NODES.limit:
        raise over_budget(EXPRESSION_NODES, f"more than {EXPRESSION_NODES.limit:,}", span,
                          "the coefficient of this term")
    for power in expr.atoms(sympy.Pow):
        if power.exp.is_Rational and abs(power.exp) > POWER.limit and not power.base.is_number:
            raise over_budget(POWER, _short(power.exp), span, f"the power {_short(power.base)}^{_short(power.exp)}",
                              "write a power between -100 and 100")


_TOKEN = None


def check_tokens(text: str, source: "Source") -> None:
    """Refuse a text of more words and symbols than the budget, at the first one past it (before parsing)."""
    import re

    global _TOKEN
    if _TOKEN is None:
        _TOKEN = re.compile(r"#[^\n]*|\"[^\"\n]*\"|[\w.']+|[^\w\s]")
    count = 0
    for match in _TOKEN.finditer(text):
        if match.group().startswith(("#", '"')):
            continue
        count += 1
        if count > TOKENS.limit:
            before = text[:match.start()]
            span = Span.point(before.count("\n") + 1, match.start() - before.rfind("\n"))
            raise over_budget(TOKENS, f"more than {TOKENS.limit:,}", span, "the model file",
                              "split the model, or write repeated terms once", ModelSyntaxError).with_source(source)


def check_nesting(text: str, source: Source) -> None:
    """Refuse brackets nested deeper than the budget, at the first bracket past it (before parsing)."""
    depth, line, column = 0, 1, 0
    in_string = in_comment = False
    for char in text:
        column += 1
        if char == "\n":
            line, column, in_string, in_comment = line + 1, 0, False, False
        elif in_comment:
            continue
        elif char == '"':
            in_string = not in_string
        elif in_string:
            continue
        elif char == "#":
            in_comment = True
        elif char in "([":
            depth += 1
            if depth > NESTING.limit:
                raise over_budget(NESTING, depth, Span.point(line, column), "this bracket",
                                  "write the expression with fewer brackets, or split it with a definition",
                                  ModelSyntaxError).with_source(source)
        elif char in ")]":
            depth = max(0, depth - 1)
