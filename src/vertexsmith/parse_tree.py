"""Lark trees to syntax records: the Transformers of the model and hand-rules languages.

Half of the parse stage (with `parse.py`, which builds the parsers, joins lines and translates
lark's errors): each grammar rule becomes a frozen record of `syntax.py` with its `Span`, tokens
become `str`, `int` and `Fraction` here, and numbers are checked against their budgets before
anything computes with them. Nothing here gives a name its meaning; that is `build.py`.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

from lark import Token, Transformer, v_args

from . import limits
from . import syntax as sx
from .errors import ModelSyntaxError, Span

_PARAM_WORDS = {"MASS", "COUPLING", "ANGLE", "WIDTH", "PARAMETER", "REAL", "COMPLEX", "HERMITIAN", "UNITARY"}
_MATRIX_WORDS = ("hermitian", "unitary")


def _span(meta: Any) -> Span:
    if getattr(meta, "empty", True):
        return Span(0, 0, 0, 0)
    return Span(meta.line, meta.column, meta.end_line, max(meta.column, meta.end_column - 1))


def _token_span(token: Token) -> Span:
    end = (token.end_column or (token.column or 0) + len(token)) - 1
    return Span(token.line or 0, token.column or 0, token.end_line or token.line or 0, max(token.column or 0, end))


MAX_NUMBER_DIGITS = limits.NUMBER_DIGITS.limit
MAX_EXPONENT = limits.NUMBER_EXPONENT.limit


def _checked(token: Token) -> str:
    """A number token's text, refused when it is too long or overflows a float."""
    text = str(token)
    mantissa, _, exponent = text.lower().partition("e")
    if len(mantissa) > MAX_NUMBER_DIGITS or (exponent and abs(int(exponent)) > MAX_EXPONENT):
        raise ModelSyntaxError(f"the number '{text[:20]}{'...' if len(text) > 20 else ''}' is too large to use",
                               _token_span(token),
                               f"numbers have at most {MAX_NUMBER_DIGITS} digits and exponents up to "
                               f"e{MAX_EXPONENT}; use a parameter in sensible units")
    return text


def _ratio(tokens: list[Token], meta: Any) -> Fraction:
    tokens = [Token(t.type, _checked(t), t.start_pos, t.line, t.column, t.end_line, t.end_column, t.end_pos)
              for t in tokens]
    value = Fraction(str(tokens[0]))
    if len(tokens) == 2:
        if Fraction(str(tokens[1])) == 0:
            raise ModelSyntaxError("division by zero in a number", _span(meta), "write a non-zero denominator")
        value /= Fraction(str(tokens[1]))
    return value


def _string(token: Token | None) -> str:
    return str(token)[1:-1] if token is not None else ""


@v_args(meta=True)
class _Operators(Transformer):
    """Signed sums, products, quotients and powers, built alike in both languages.

    Each subclass names its own node classes. Left-nested sums and products are flattened; a
    bracketed model expression is an `sx.Group` and stays whole.
    """

    _sum: type[Any]
    _product: type[Any]
    _quotient: type[Any]
    _power: type[Any]

    def _summands(self, node: Any) -> tuple[tuple[int, Any], ...]:
        return node.terms if isinstance(node, self._sum) else ((1, node),)

    def add(self, meta: Any, children: list[Any]) -> Any:
        return self._sum(self._summands(children[0]) + ((1, children[1]),), _span(meta))

    def sub(self, meta: Any, children: list[Any]) -> Any:
        return self._sum(self._summands(children[0]) + ((-1, children[1]),), _span(meta))

    def flat_sum(self, meta: Any, children: list[Any]) -> Any:
        # a chain of + and - flattened by _flatten_chains: first, sign, term, sign, term, ...
        terms = list(self._summands(children[0]))
        terms += [(1 if sign == "+" else -1, term) for sign, term in zip(children[1::2], children[2::2])]
        return self._sum(tuple(terms), _span(meta))

    def flat_product(self, meta: Any, children: list[Any]) -> Any:
        limits.check_budget(limits.PRODUCT_FACTORS, len(children), _span(meta), "this product",
                            "write repeated factors as a power, or split the term", ModelSyntaxError)
        factors = list(children[0].factors if isinstance(children[0], self._product) else (children[0],))
        return self._product(tuple(factors + children[1:]), _span(meta))

    def neg(self, meta: Any, children: list[Any]) -> Any:
        return self._sum(((-1, children[0]),), _span(meta))

    def pos(self, meta: Any, children: list[Any]) -> Any:
        return children[0]

    def mul(self, meta: Any, children: list[Any]) -> Any:
        left, right = children
        factors = left.factors if isinstance(left, self._product) else (left,)
        return self._product(factors + (right,), _span(meta))

    def div(self, meta: Any, children: list[Any]) -> Any:
        return self._quotient(children[0], children[1], _span(meta))

    def pow(self, meta: Any, children: list[Any]) -> Any:
        return self._power(children[0], children[1], _span(meta))


@v_args(meta=True)
class ToSyntax(_Operators):
    """Lark tree to syntax nodes; one method per grammar rule or alias (operators in `_Operators`)."""

    _sum, _product, _quotient, _power = sx.Sum, sx.Product, sx.Quotient, sx.Power

    # --- expressions
    def number(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number(_checked(children[0]), _span(meta))

    def symbol(self, meta: Any, children: list[Any]) -> sx.Symbol:
        indices = children[1] if len(children) > 1 else ()
        return sx.Symbol(str(children[0]), tuple(indices), _span(meta))

    def index_list(self, meta: Any, children: list[Token]) -> tuple[sx.Index, ...]:
        return tuple(sx.Index(str(t), _token_span(t)) for t in children)

    def call(self, meta: Any, children: list[Any]) -> sx.Call:
        return sx.Call(str(children[0]), children[1], _span(meta))

    def group(self, meta: Any, children: list[Any]) -> sx.Group:
        return sx.Group(children[0], _span(meta))

    def hc(self, meta: Any, children: list[Any]) -> sx.HermitianConjugate:
        return sx.HermitianConjugate(_span(meta))

    def exp_number(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number(_checked(children[0]), _span(meta))

    def exp_negative(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number("-" + _checked(children[0]), _span(meta))

    def exp_group(self, meta: Any, children: list[Any]) -> Any:
        return children[0]

    # --- declarations
    def theory_decl(self, meta: Any, children: list[Any]) -> sx.TheoryDecl:
        return sx.TheoryDecl(str(children[0]), _string(children[1] if len(children) > 1 else None), _span(meta))

    def base_decl(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("bases", [sx.BaseDecl(_string(children[0]), _token_span(children[0]))])

    def param_word(self, meta: Any, children: list[Token]) -> Token:
        return children[0]

    def param_decl(self, meta: Any, children: list[Any]) -> sx.ParamDecl:
        words = [c for c in children if isinstance(c, Token) and c.type in _PARAM_WORDS]
        rest = children[len(words):]
        name = str(rest[0])
        spaces: tuple[sx.Index, ...] = ()
        if len(rest) > 1 and isinstance(rest[1], tuple):
            spaces = rest[1]
            rest = rest[:1] + rest[2:]
        value = next((c for c in rest[1:] if not isinstance(c, Token)), None)
        description = next((c for c in rest[1:] if isinstance(c, Token) and c.type == "STRING"), None)
        roles = tuple(str(w) for w in words if w.type not in ("REAL", "COMPLEX", "HERMITIAN", "UNITARY"))
        reality = "complex" if any(str(w) == "complex" for w in words) else "real"
        matrix = next((str(w) for w in words if str(w) in _MATRIX_WORDS), "")
        return sx.ParamDecl(name, roles, reality, value, _string(description), _span(meta), spaces, matrix)

    def array(self, meta: Any, children: list[Any]) -> sx.Array:
        return sx.Array(tuple(children), _span(meta))

    def space_decl(self, meta: Any, children: list[Token]) -> sx.SpaceDecl:
        return sx.SpaceDecl(str(children[0]), _checked(children[1]), _token_span(children[1]),
                            _string(children[2] if len(children) > 2 else None), _span(meta))

    def over_attr(self, meta: Any, children: list[Token]) -> tuple[str, Any, Span]:
        return ("over", sx.Index(str(children[0]), _token_span(children[0])), _span(meta))

    def hand_attr(self, meta: Any, children: list[Token]) -> tuple[str, Any, Span]:
        return ("hand", str(children[0]), _span(meta))

    def reality_attr(self, meta: Any, children: list[Token]) -> tuple[str, Any, Span]:
        return ("reality", str(children[0]), _span(meta))

    def mass_name(self, meta: Any, children: list[Token]) -> tuple[str, Span]:
        return (str(children[0]), _span(meta))

    def mass_number(self, meta: Any, children: list[Token]) -> tuple[Fraction, Span]:
        return (Fraction(_checked(children[0])), _span(meta))

    def mass_attr(self, meta: Any, children: list[Any]) -> tuple[str, Any, Span]:
        return ("mass", children[-1], _span(meta))

    def plus_number(self, meta: Any, children: list[Token]) -> Fraction:
        return _ratio(children, meta)

    def minus_number(self, meta: Any, children: list[Token]) -> Fraction:
        return -_ratio(children, meta)

    def charge_attr(self, meta: Any, children: list[Any]) -> tuple[str, Any, Span]:
        return ("charge", sx.ChargeAttr(str(children[0]), children[1], _span(meta)), _span(meta))

    def rep_attr(self, meta: Any, children: list[Any]) -> tuple[str, Any, Span]:
        return ("rep", sx.RepAttr(str(children[0]), str(children[1]), _span(meta)), _span(meta))

    def field_decl(self, meta: Any, children: list[Any]) -> sx.FieldDecl:
        kind, name = str(children[0]), str(children[1])
        reality: str | None = None
        mass: Any = None
        mass_span: Span | None = None
        charges: list[sx.ChargeAttr] = []
        reps: list[sx.RepAttr] = []
        spaces: list[sx.Index] = []
        description = ""
        hand: str | None = None
        for child in children[2:]:
            if isinstance(child, Token):
                description = _string(child)
                continue
            key, value, _ = child
            if key == "reality":
                reality = value
            elif key == "mass":
                mass, mass_span = value
            elif key == "charge":
                charges.append(value)
            elif key == "over":
                spaces.append(value)
            elif key == "hand":
                hand = value
            else:
                reps.append(value)
        return sx.FieldDecl(kind, name, reality, mass, tuple(charges), tuple(reps), description,
                            _span(meta), mass_span, tuple(spaces), hand)

    def boson_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("boson", str(c[0]), _token_span(c[0]))

    def strength_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("strength", str(c[0]), _token_span(c[0]))

    def coupling_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("coupling", str(c[-1]), _token_span(c[-1]))

    def fixing_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("fixing", str(c[0]), _token_span(c[0]))

    def gauge_decl(self, meta: Any, children: list[Any]) -> sx.GaugeDecl:
        name, group, rank = str(children[0]), str(children[1]), str(children[2])
        attrs: dict[str, str] = {}
        spans: list[tuple[str, Span]] = [("group", _token_span(children[1]))]
        for key, value, span in children[3:]:
            attrs[key] = value
            spans.append((key, span))
        return sx.GaugeDecl(name, group, rank, attrs.get("boson"), attrs.get("strength"),
                            attrs.get("coupling"), attrs.get("fixing"), _span(meta), tuple(spans))

    def global_decl(self, meta: Any, children: list[Any]) -> sx.GlobalDecl:
        option = children[3] if len(children) > 3 else None
        return sx.GlobalDecl(str(children[0]), str(children[1]), str(children[2]), _span(meta),
                             _token_span(children[1]), str(option) if option is not None else None,
                             _token_span(option) if option is not None else None)

    def definition(self, meta: Any, children: list[Any]) -> sx.Definition:
        indices = children[1] if len(children) == 3 else ()
        return sx.Definition(str(children[0]), tuple(indices), children[-1], _span(meta))

    def lagrangian_term(self, meta: Any, children: list[Any]) -> sx.LagrangianTerm:
        return sx.LagrangianTerm(children[0], getattr(children[0], "span", _span(meta)))

    def convention_word(self, meta: Any, children: list[Token]) -> sx.Convention:
        return sx.Convention(str(children[0]), str(children[1]), _span(meta))

    def convention_number(self, meta: Any, children: list[Any]) -> sx.Convention:
        return sx.Convention(str(children[0]), children[1], _span(meta))

    # --- sections
    def parameters_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("parameters", children)

    def spaces_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("spaces", children)

    def fields_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("fields", children)

    def gauge_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("gauges", children)

    def definitions_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("definitions", children)

    def lagrangian_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("terms", children)

    def conventions_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("conventions", children)

    def global_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("globals_", children)

    def start(self, meta: Any, children: list[Any]) -> sx.ModelFile:
        parts: dict[str, list[Any]] = {k: [] for k in
                                       ("parameters", "fields", "gauges", "definitions", "terms", "conventions",
                                        "globals_", "spaces", "bases")}
        for key, items in children[1:]:
            parts[key].extend(items)
        return sx.ModelFile(children[0], *(tuple(parts[k]) for k in
                                           ("parameters", "fields", "gauges", "definitions", "terms", "conventions",
                                            "globals_", "spaces", "bases")))


@v_args(meta=True)
class ToHandRules(_Operators):
    """Lark tree of a hand-rules file to hand-rule nodes; one method per grammar rule or alias."""

    _sum, _product, _quotient, _power = sx.HSum, sx.HProduct, sx.HQuotient, sx.HPower

    # --- factors
    def number(self, meta: Any, c: list[Any]) -> sx.HNumber:
        return sx.HNumber(Fraction(_checked(c[0])), _token_span(c[0]))

    def negative_number(self, meta: Any, c: list[Any]) -> sx.HNumber:
        return sx.HNumber(-Fraction(_checked(c[0])), _token_span(c[0]))

    def index_list(self, meta: Any, c: list[Any]) -> tuple[tuple[str, Span], ...]:
        return tuple((str(t), _token_span(t)) for t in c)

    def name(self, meta: Any, c: list[Any]) -> sx.HName:
        return sx.HName(str(c[0]), c[1] if len(c) > 1 else (), _span(meta))

    def dot(self, meta: Any, c: list[Any]) -> sx.HDot:
        return sx.HDot(str(c[0]), str(c[1]), _span(meta))

    def indexed(self, meta: Any, c: list[Any]) -> sx.HIndexed:
        return sx.HIndexed(c[0], c[1], _span(meta))

    def call(self, meta: Any, c: list[Any]) -> sx.HCall:
        return sx.HCall(str(c[0]), tuple(c[1:]), _span(meta))

    # --- rules: tuples that parse_hand_rules_text turns into HandRule records
    def plain_leg(self, meta: Any, c: list[Any]) -> tuple[str, Span]:
        return (str(c[0]), _token_span(c[0]))

    def conjugate_leg(self, meta: Any, c: list[Any]) -> tuple[str, Span]:
        return (f"{c[0]}({c[1]})", _span(meta))

    def vertex_rule(self, meta: Any, c: list[Any]) -> tuple[str, Any, Any, Span]:
        return ("vertex", c[:-1], c[-1], _span(meta))

    def propagator_rule(self, meta: Any, c: list[Any]) -> tuple[str, Any, Any, Span]:
        return ("propagator", c[:-1], c[-1], _span(meta))

    def gauge_choice(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("gauge", str(c[0]), _token_span(c[0]))

    def start(self, meta: Any, c: list[Any]) -> list[Any]:
        return list(c)


__all__ = ["ToHandRules", "ToSyntax"]
