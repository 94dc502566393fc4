"""Syntax nodes: what the model file says, with where it says it, and no meaning yet.

The parser produces these frozen records; `build` gives them meaning. Expressions keep the
order of their factors, because gamma matrices and fermion fields do not commute. The last
section holds the nodes of the hand-derived rules that `compare` reads.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Union

from .errors import Source, Span


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
class Array:
    """A braced list of values or of braced lists: a vector or matrix parameter's value."""

    items: tuple["Expr | Array", ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class ParamDecl:
    name: str
    roles: tuple[str, ...]
    reality: str  # "real" or "complex"
    value: "Expr | Array | None"
    description: str
    span: Span = field(compare=False)
    spaces: tuple[Index, ...] = ()  # index spaces of a vector or matrix parameter, as written
    matrix: str = ""  # "", "hermitian" or "unitary"


@dataclass(frozen=True)
class SpaceDecl:
    """An index space of the model's own (generations, flavours): a name and a size."""

    name: str
    size: str
    size_span: Span = field(compare=False)
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
    spaces: tuple[Index, ...] = ()  # the index spaces the field carries ("over gen")
    hand: str | None = None  # left or right, for a weyl field


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
class GlobalDecl:
    """A global symmetry: `lepton U(1)` or `darkpar Z(2)`; kind is U or Z, order the number in brackets."""

    name: str
    kind: str
    order: str
    span: Span = field(compare=False)
    kind_span: Span = field(compare=False, default=Span(0, 0, 0, 0))
    option: str | None = None  # the word after the group (`soft`), checked when the model is built
    option_span: Span | None = field(compare=False, default=None)


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
class BaseDecl:
    """`builds on "FILE"`: another model file this one is read on top of (path as written)."""

    path: str
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
    globals_: tuple[GlobalDecl, ...] = ()
    spaces: tuple[SpaceDecl, ...] = ()
    bases: tuple[BaseDecl, ...] = ()  # the files it builds on, merged in by compose.py


# ------------------------------------------------------------------ hand-derived rules
# The small language of `grammar/handrules.lark`, read by `parse.parse_hand_rules_text` for the
# `compare` command. Its nodes are separate from the model's: numbers are already exact, a
# momentum contraction `p1.p2` and an indexed bracket `(p1 - p2)[mu3]` are nodes of their own,
# and what the names mean is decided in compare.py.

@dataclass(frozen=True)
class HNumber:
    value: Fraction
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HName:
    """A name, optionally with indices: gx, gamma5, gamma[mu3], p1[mu3], g[mu1,mu2]."""

    name: str
    indices: tuple[tuple[str, Span], ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HDot:
    left: str
    right: str
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HIndexed:
    """(p1 - p2)[mu3]: a momentum combination with an index."""

    base: "HNode"
    indices: tuple[tuple[str, Span], ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HCall:
    function: str
    arguments: tuple["HNode", ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HSum:
    terms: tuple[tuple[int, "HNode"], ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HProduct:
    factors: tuple["HNode", ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HQuotient:
    numerator: "HNode"
    denominator: "HNode"
    span: Span = field(compare=False)


@dataclass(frozen=True)
class HPower:
    base: "HNode"
    exponent: "HNode"
    span: Span = field(compare=False)


HNode = Union[HNumber, HName, HDot, HIndexed, HCall, HSum, HProduct, HQuotient, HPower]


@dataclass(frozen=True)
class HandRule:
    """One line of a hand-rules file: a vertex (legs as written) or a propagator (one field)."""

    kind: str  # "vertex" | "propagator"
    legs: tuple[str, ...]
    factor: HNode
    text: str
    span: Span = field(compare=False)
    leg_spans: tuple[Span, ...] = field(default=(), compare=False)


@dataclass(frozen=True)
class HandRules:
    rules: tuple[HandRule, ...]
    gauge: str | None
    source: Source
    gauge_span: Span = field(default=Span(0, 0, 0, 0), compare=False)
