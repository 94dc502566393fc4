"""The derived Feynman rules: legs, vertices and propagators, symbolic and numeric.

A `Vertex` keeps its factor as a sum of coefficient x `Structure` terms (the canonical form
every renderer reads); `.factor` is the same as one sympy expression, `.evaluate()` gives
numbers in the documented array layout.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING, Mapping, Sequence

import numpy as np
import sympy

from .errors import UsageError, did_you_mean
from .numeric import GAMMA, METRIC, IDENTITY4, evaluate_structure, lower, minkowski_dot, slash
from .structures import Structure, relabel_legs, structure_sort_key
from .symbolic import FourVector, Metric, Slash, index_symbol, lorentz_to_sympy, momentum_symbol, to_latex

if TYPE_CHECKING:
    from .model import Model

CONVENTIONS_TEXT = (
    "metric (+,-,-,-); all momenta incoming; d_mu on a leg with momentum p gives -i p_mu; "
    "vertex = i x (functional derivative of the action), symmetry factors included; "
    "fermion legs: bar leg first, factor is the matrix Gamma_(alpha beta) between them, "
    "Grassmann sign from ordering the fields as the legs list them; "
    "sigma^{mu nu} = (i/2)[gamma^mu, gamma^nu]; PL = (1 - gamma5)/2, PR = (1 + gamma5)/2; "
    "gamma5 = i gamma^0 gamma^1 gamma^2 gamma^3; propagator = i x inverse of the quadratic kernel, "
    "momentum p along the particle arrow"
)


@dataclass(frozen=True)
class Leg:
    """One external line of a vertex: field, conjugation, incoming momentum, its axes' index names."""

    position: int
    field: str
    conjugate: bool
    kind: str  # scalar, dirac, vector
    grassmann: bool

    @property
    def label(self) -> str:
        """The leg as written in the model language: bar(chi), dag(s), X."""
        if not self.conjugate:
            return self.field
        return f"bar({self.field})" if self.kind in ("dirac", "majorana") else f"dag({self.field})"

    @property
    def momentum(self) -> str:
        return f"p{self.position}"

    @property
    def indices(self) -> tuple[str, ...]:
        """Index names of this leg's numeric axes: mu_k (Lorentz, upper), s_k (spinor)."""
        if self.kind == "vector":
            return (f"mu{self.position}",)
        if self.kind in ("dirac", "majorana"):
            return (f"s{self.position}",)
        return ()

    @property
    def axes(self) -> tuple[tuple[int, str], ...]:
        if self.kind == "vector":
            return ((self.position, "lorentz"),)
        if self.kind in ("dirac", "majorana"):
            return ((self.position, "spinor"),)
        return ()

    def meaning(self) -> str:
        """What this leg stands for as an incoming or outgoing particle."""
        name = self.field
        if self.kind in ("dirac", "majorana"):
            if self.conjugate:
                return f"outgoing {name} or incoming anti-{name}"
            return f"incoming {name} or outgoing anti-{name}"
        if self.conjugate:
            return f"outgoing {name} or incoming anti-{name}"
        if self.kind == "vector" and self.field:
            return f"{name} in or out" if not self.grassmann else name
        return f"{name} in or out" if self.field else name


@dataclass(frozen=True)
class VertexTerm:
    """coefficient (sympy, the overall i included) x structure."""

    coefficient: sympy.Expr
    structure: Structure


@dataclass(frozen=True)
class CouplingPart:
    """One part of a split factor: coupling x Lorentz (and, later, group) structure."""

    coupling: sympy.Expr
    lorentz: sympy.Expr
    terms: tuple[VertexTerm, ...]


def _values_for(model: "Model", values: Mapping[str, complex] | None) -> dict[sympy.Symbol, complex]:
    resolved = model.parameter_values(dict(values or {}))
    return resolved


def _numeric(expr: sympy.Expr, values: dict[sympy.Symbol, complex], what: str) -> complex:
    result = expr.subs(values) if expr.free_symbols else expr
    missing = sorted(str(s) for s in result.free_symbols)
    if missing:
        raise UsageError(f"{what}: no value for {', '.join(missing)}",
                         hint="pass values={" + ", ".join(f"'{m}': ..." for m in missing) + "}")
    return complex(sympy.N(result))


@dataclass(frozen=True)
class Vertex:
    """A vertex: its legs (in order) and its factor as canonical terms."""

    legs: tuple[Leg, ...]
    terms: tuple[VertexTerm, ...]
    model: "Model" = field(compare=False, repr=False)
    origins: tuple[int, ...] = field(default=(), compare=False)

    @property
    def labels(self) -> tuple[str, ...]:
        return tuple(leg.label for leg in self.legs)

    @cached_property
    def parts(self) -> tuple[CouplingPart, ...]:
        """The factor split into couplings times structures (terms whose couplings differ by a number share one)."""
        groups: list[tuple[sympy.Expr, list[tuple[sympy.Expr, VertexTerm]]]] = []
        for term in self.terms:
            for base, members in groups:
                ratio = sympy.nsimplify(sympy.simplify(term.coefficient / base))
                if ratio.is_Rational:
                    members.append((ratio, term))
                    break
            else:
                groups.append((term.coefficient, [(sympy.Integer(1), term)]))
        wrap = any(len(t.structure.chains) > 1 for t in self.terms)
        out = []
        for base, members in groups:
            lorentz = sympy.Add(*[ratio * lorentz_to_sympy(t.structure, wrap) for ratio, t in members])
            out.append(CouplingPart(base, lorentz, tuple(t for _, t in members)))
        return tuple(out)

    @cached_property
    def factor(self) -> sympy.Expr:
        """The vertex factor as one sympy expression (legs: p1.., mu1..; see the README)."""
        return sympy.Add(*[sympy.Mul(part.coupling, part.lorentz, evaluate=False)
                           if part.lorentz != 1 else part.coupling for part in self.parts])

    @property
    def latex(self) -> str:
        return " + ".join(_part_latex(p) for p in self.parts).replace("+ -", "- ")

    def _repr_latex_(self) -> str:
        return f"$\\text{{{' '.join(self.labels)}}}:\\quad {self.latex}$"

    def evaluate(self, momenta: Sequence[Sequence[float]] | np.ndarray,
                 values: Mapping[str, complex] | None = None) -> np.ndarray:
        """The factor as a complex array: one incoming 4-momentum (E, px, py, pz) per leg, in leg order."""
        p = np.asarray(momenta, dtype=complex)
        if p.shape != (len(self.legs), 4):
            raise UsageError(f"evaluate() needs {len(self.legs)} four-momenta (one per leg), got shape {p.shape}")
        numbers = _values_for(self.model, values)
        axes = [axis for leg in self.legs for axis in leg.axes]
        result: np.ndarray | None = None
        for term in self.terms:
            c = _numeric(term.coefficient, numbers, "vertex " + " ".join(self.labels))
            tensor = c * evaluate_structure(term.structure, axes, p, self.model.conventions.eps0123)
            result = tensor if result is None else result + tensor
        if result is None:
            shape = tuple(4 for _ in axes)
            return np.zeros(shape, dtype=complex)
        return result

    def reordered(self, order: Sequence[int]) -> "Vertex":
        """The same vertex with legs in another order (order[k] = old position of new leg k+1)."""
        new_position = {old: k + 1 for k, old in enumerate(order)}
        legs = tuple(Leg(new_position[self.legs[old - 1].position], self.legs[old - 1].field,
                         self.legs[old - 1].conjugate, self.legs[old - 1].kind, self.legs[old - 1].grassmann)
                     for old in order)
        grassmann_old = [old for old in order if self.legs[old - 1].grassmann]
        sign = _parity(grassmann_old)
        terms = tuple(VertexTerm(sign * t.coefficient, relabel_legs(t.structure, new_position)) for t in self.terms)
        terms = tuple(sorted(terms, key=lambda t: structure_sort_key(t.structure)))
        return Vertex(legs, terms, self.model, self.origins)


def _parity(sequence: Sequence[int]) -> int:
    sign = 1
    items = list(sequence)
    for i in range(len(items)):
        for j in range(i + 1, len(items)):
            if items[i] > items[j]:
                sign = -sign
    return sign


def _part_latex(part: CouplingPart) -> str:
    coupling = to_latex(part.coupling)
    if part.lorentz == 1:
        return coupling
    lorentz = to_latex(part.lorentz)
    if isinstance(part.coupling, sympy.Add):
        coupling = f"\\left({coupling}\\right)"
    if isinstance(part.lorentz, sympy.Add):
        lorentz = f"\\left[{lorentz}\\right]"
    if part.coupling == 1:
        return lorentz
    if part.coupling == -1:
        return "-" + lorentz
    return f"{coupling} \\, {lorentz}"


P = sympy.Symbol("p", real=True)
P2 = sympy.Symbol("p2", real=True)  # stands for p.p in propagator coefficients
MU, NU = sympy.Symbol("mu"), sympy.Symbol("nu")


@dataclass(frozen=True)
class Propagator:
    """i x inverse of the quadratic kernel of one field, momentum p along the particle arrow.

    scalar: D = a(p2); Dirac: D = a(p2) p-slash + b(p2); vector: D^{mu nu} = a(p2) g^{mu nu} + b(p2) p^mu p^nu,
    where p2 = p.p.
    """

    field: str
    kind: str
    a: sympy.Expr
    b: sympy.Expr
    gauge: str
    model: "Model" = field(compare=False, repr=False)

    @property
    def label(self) -> str:
        return self.field

    @property
    def momentum(self) -> str:
        return "p"

    @property
    def indices(self) -> tuple[str, ...]:
        return {"vector": ("mu", "nu"), "dirac": ("s1", "s2")}.get(self.kind, ())

    @cached_property
    def factor(self) -> sympy.Expr:
        if self.kind == "scalar":
            expr = self.a
        elif self.kind == "dirac":
            expr = _over_common_denominator([(self.a, Slash(P)), (self.b, sympy.Integer(1))])
        else:
            expr = _over_common_denominator([(self.a, Metric(MU, NU)),
                                             (self.b, FourVector(P, MU) * FourVector(P, NU))])
        # p2 (= p.p) was kept as one symbol so that p^2 - m^2 is not factored into (p - m)(p + m)
        return expr.subs(P2, P**2)

    @property
    def latex(self) -> str:
        return to_latex(self.factor)

    def _repr_latex_(self) -> str:
        return f"$\\text{{{self.field}}}:\\quad {self.latex}$"

    def evaluate(self, p: Sequence[float] | np.ndarray, values: Mapping[str, complex] | None = None) -> np.ndarray:
        """Numeric propagator: scalar (), Dirac (4, 4), vector (4, 4) with upper indices."""
        momentum = np.asarray(p, dtype=complex)
        if momentum.shape != (4,):
            raise UsageError(f"evaluate() needs one four-momentum (E, px, py, pz), got shape {momentum.shape}")
        numbers = _values_for(self.model, values)
        numbers[P2] = minkowski_dot(momentum, momentum)
        a = _numeric(self.a, numbers, f"propagator {self.field}")
        b = _numeric(self.b, numbers, f"propagator {self.field}")
        if self.kind == "scalar":
            return np.array(a, dtype=complex)
        if self.kind == "dirac":
            return a * slash(momentum) + b * IDENTITY4
        return a * METRIC + b * np.outer(momentum, momentum)


def _over_common_denominator(parts: list[tuple[sympy.Expr, sympy.Expr]]) -> sympy.Expr:
    """sum a_k X_k written as (sum n_k X_k) / d when the coefficients share their denominator."""
    fractions = [sympy.fraction(sympy.factor(a)) for a, _ in parts]
    denominators = {d for (n, d), _ in zip(fractions, parts) if n != 0}
    if len(denominators) != 1:
        return sympy.Add(*[a * x for a, x in parts])
    (denominator,) = denominators
    numerator = sympy.Add(*[n * x for (n, _), (_, x) in zip(fractions, parts) if n != 0])
    if denominator == 1:
        return numerator
    return sympy.Mul(numerator, sympy.Pow(denominator, -1), evaluate=False)


@dataclass(frozen=True)
class Rules:
    """All vertices and propagators of a model in one gauge."""

    model: "Model" = field(repr=False)
    gauge: str
    vertices: tuple[Vertex, ...]
    propagators: tuple[Propagator, ...]

    @property
    def conventions(self) -> str:
        c = self.model.conventions
        covariant = "D = d - i g Q A" if c.covariant_sign == 1 else "D = d + i g Q A"
        gauge = {"xi": "R_xi gauge, symbolic xi per gauge boson", "feynman": "Feynman gauge (xi = 1)",
                 "unitary": "unitary gauge for massive vectors, Feynman gauge for massless ones"}[self.gauge]
        return f"{CONVENTIONS_TEXT}; {covariant}; epsilon^{{0123}} = {c.eps0123:+d}; {gauge}"

    def vertex(self, *labels: str) -> Vertex:
        """The vertex with these legs (in any order), returned with its legs in the order asked."""
        wanted = sorted(labels)
        for v in self.vertices:
            if sorted(v.labels) == wanted:
                order: list[int] = []
                used: set[int] = set()
                for label in labels:
                    k = next(leg.position for leg in v.legs if leg.label == label and leg.position not in used)
                    used.add(k)
                    order.append(k)
                return v.reordered(order) if order != list(range(1, len(order) + 1)) else v
        known = [" ".join(v.labels) for v in self.vertices]
        raise UsageError(f"no vertex with legs {' '.join(labels)}",
                         hint=did_you_mean(" ".join(labels), known, "the vertices are: " + "; ".join(known[:10])))

    def propagator(self, label: str) -> Propagator:
        """The propagator of a field (its name or its conjugate's label)."""
        name = label
        for prefix in ("bar(", "dag("):
            if label.startswith(prefix) and label.endswith(")"):
                name = label[len(prefix):-1]
        for p in self.propagators:
            if p.field == name:
                return p
        raise UsageError(f"no propagator for '{label}'",
                         hint=did_you_mean(name, [p.field for p in self.propagators], ""))

    def _repr_latex_(self) -> str:
        rows = [v._repr_latex_().strip("$") for v in self.vertices]
        rows += [p._repr_latex_().strip("$") for p in self.propagators]
        return "$\\begin{array}{l}" + " \\\\ ".join(rows) + "\\end{array}$"


__all__ = ["Leg", "Vertex", "VertexTerm", "CouplingPart", "Propagator", "Rules", "CONVENTIONS_TEXT", "P", "P2",
           "MU", "NU", "GAMMA", "lower", "index_symbol", "momentum_symbol"]
