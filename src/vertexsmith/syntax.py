"""Syntax nodes: what the model file says, with where it says it, and no meaning yet.

The parser produces these frozen records; `build` gives them meaning. Expressions keep the
order of their factors, because gamma matrices and fermion fields do not commute.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Union

from .errors import Span


@dataclass(frozen=True)
class Index:
    name: str
    span: Span = field(compare=False)


@dataclass(frozen=True)
class Number:
    text: str
    span: Span = field(compare=False)

    @property
    def value(self) -> Fraction | float:
        """Integers and decimals become exact fractions; only exponents force a float."""
        if "e" in self.text.lower():
            return float(self.text)
        return Fraction(self.text)


@dataclass(frozen=True)
class Symbol:
    """A name, optionally with an index list: `mchi`, `X[mu]`, `gamma[mu]`, `d[mu]`."""

    name: str
    indices: tuple[Index, ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class Call:
    """A built-in function of one argument: `bar(chi)`, `dag(s)`, `sqrt(2)`."""

    function: str
    argument: "Expr"
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HermitianConjugate:
    """The `h.c.` placeholder: the conjugate of the other summands of its sum."""

    span: Span = field(compare=False)


@dataclass(frozen=True)
class Sum:
    """Signed summands, in the order written."""

    terms: tuple[tuple[int, "Expr"], ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class Product:
    """Factors in the order written; order matters for spinor chains and derivatives."""

    factors: tuple["Expr", ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class Quotient:
    numerator: "Expr"
    denominator: "Expr"
    span: Span = field(compare=False)


@dataclass(frozen=True)
class Power:
    base: "Expr"
    exponent: "Expr"
    span: Span = field(compare=False)


@dataclass(frozen=True)
class Group:
    """A bracketed expression; kept so that a derivative acts on the whole bracket."""

    inner: "Expr"
    span: Span = field(compare=False)


Expr = Union[Number, Symbol, Call, HermitianConjugate, Sum, Product, Quotient, Power, Group]


@dataclass(frozen=True)
class TheoryDecl:
    name: str
    description: str
    span: Span = field(compare=False)


@dataclass(frozen=True)
class ParamDecl:
    name: str
    roles: tuple[str, ...]
    reality: str  # "real" or "complex"
    value: Expr | None
    description: str
    span: Span = field(compare=False)


@dataclass(frozen=True)
class ChargeAttr:
    group: str
    value: Fraction
    span: Span = field(compare=False)


@dataclass(frozen=True)
class RepAttr:
    group: str
    representation: str
    span: Span = field(compare=False)


@dataclass(frozen=True)
class FieldDecl:
    kind: str
    name: str
    reality: str | None
    mass: str | Fraction | None
    charges: tuple[ChargeAttr, ...]
    representations: tuple[RepAttr, ...]
    description: str
    span: Span = field(compare=False)
    mass_span: Span | None = field(default=None, compare=False)


@dataclass(frozen=True)
class GaugeDecl:
    name: str
    group: str
    rank: str
    boson: str | None
    strength: str | None
    coupling: str | None
    fixing: str | None
    span: Span = field(compare=False)
    attribute_spans: tuple[tuple[str, Span], ...] = field(default=(), compare=False)


@dataclass(frozen=True)
class Definition:
    name: str
    indices: tuple[Index, ...]
    body: Expr
    span: Span = field(compare=False)


@dataclass(frozen=True)
class LagrangianTerm:
    expr: Expr
    span: Span = field(compare=False)


@dataclass(frozen=True)
class Convention:
    key: str
    value: str | Fraction
    span: Span = field(compare=False)


@dataclass(frozen=True)
class ModelFile:
    """Everything a model file says, section by section, in the order written."""

    theory: TheoryDecl
    parameters: tuple[ParamDecl, ...]
    fields: tuple[FieldDecl, ...]
    gauges: tuple[GaugeDecl, ...]
    definitions: tuple[Definition, ...]
    terms: tuple[LagrangianTerm, ...]
    conventions: tuple[Convention, ...]
