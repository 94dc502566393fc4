"""Propagators: i x the inverse of a field's quadratic kernel, as data with derived views.

A `Propagator` holds the coefficients derive found (D = a X + b Y in the field kind's basis, or
one entry of a mixed block) and computes from them its factor, text, LaTeX and numbers; `rules.py`
collects them with the vertices.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from functools import cached_property
from typing import TYPE_CHECKING, Callable, Mapping, Sequence

import sympy

from .codegen import P2, compile_function, propagator_function_source
from .errors import UsageError
from .evaluation_inputs import ParameterValues, values_for
from .index_names import qualify_group_indices
from .propagator_latex import customary_propagator_latex
from .symbolic import factor_text, FourVector, GroupDelta, Metric, ProjL, ProjR, Slash, to_latex

if TYPE_CHECKING:
    import numpy as np

    from .model import Model

P = sympy.Symbol("p", real=True)
MU, NU = sympy.Symbol("mu"), sympy.Symbol("nu")


@dataclass(frozen=True)
class Propagator:
    """i x inverse of the quadratic kernel of one field, momentum p along the particle arrow.

    scalar: D = a(p2); Dirac: D = a(p2) p-slash + b(p2); vector: D^{mu nu} = a(p2) g^{mu nu} + b(p2) p^mu p^nu,
    where p2 = p.p. Chiral Dirac entries: D = (cL PL + cR PR) p-slash (+ dL PL + dR PR with `chiral_mass`).
    Where fields mix, each entry of the matrix i K^-1 over the block is one Propagator: `partner`
    names the field at the conjugated end (None on the diagonal), see `propagate.py`.
    """

    field: str
    kind: str
    a: sympy.Expr
    b: sympy.Expr
    gauge: str
    model: "Model" = dataclasses.field(compare=False, repr=False)
    representations: tuple[tuple[str, str, int], ...] = ()
    chiral: tuple[sympy.Expr, sympy.Expr] | None = None  # D = (cL PL + cR PR) pslash for chiral kinetic terms
    partner: str | None = None  # an off-diagonal entry of a mixed block joins field to conj(partner)
    chiral_mass: tuple[sympy.Expr, sympy.Expr] | None = None  # D also holds dL PL + dR PR (mixed chiral masses)

    @property
    def label(self) -> str:
        """The field, or for an off-diagonal entry the two legs it joins: 'A X', 'H1 dag(H2)', 'u bar(t)'."""
        if self.partner is None:
            return self.field
        partner = self.model.fields[self.partner]
        if partner.is_fermion:
            return f"{self.field} bar({self.partner})"
        return f"{self.field} dag({self.partner})" if partner.is_complex else f"{self.field} {self.partner}"

    @property
    def momentum(self) -> str:
        return "p"

    @property
    def field_kind(self) -> str:
        """The kind users read: `kind` is the form of D (scalar, dirac, vector), and a Majorana field's D has the
        Dirac form with p along the fermion flow, so it is labelled majorana."""
        field = self.model.fields.get(self.field)
        return "majorana" if field is not None and field.kind == "majorana" else self.kind

    @property
    def indices(self) -> tuple[str, ...]:
        names: tuple[str, ...] = {"vector": ("mu", "nu"), "dirac": ("s1", "s2")}.get(self.kind, ())
        for group, rep, _ in self.representations:
            if rep == "flavour":
                names += (f"{group}1", f"{group}2")
                continue
            letter = "a" if rep == "adjoint" else "i"
            suffix = f"_{group}" if qualify_group_indices(self.representations) else ""
            names += (f"{letter}1{suffix}", f"{letter}2{suffix}")
        return names

    @cached_property
    def factor(self) -> sympy.Expr:
        if self.kind == "scalar":
            expr = self.a
        elif self.chiral is not None:
            left, right = self.chiral
            masses = [(self.chiral_mass[0], ProjL), (self.chiral_mass[1], ProjR)] if self.chiral_mass else []
            expr = _over_common_denominator([(left, ProjL * Slash(P)), (right, ProjR * Slash(P))] + masses)
        elif self.kind == "dirac":
            expr = _over_common_denominator([(self.a, Slash(P)), (self.b, sympy.Integer(1))])
        else:
            expr = _over_common_denominator([(self.a, Metric(MU, NU)),
                                             (self.b, FourVector(P, MU) * FourVector(P, NU))])
        # p2 (= p.p) was kept as one symbol so that p^2 - m^2 is not factored into (p - m)(p + m)
        expr = expr.subs(P2, P**2)
        if self.representations:
            deltas = [GroupDelta(sympy.Symbol(g), *[sympy.Symbol(n) for n in self.indices[-2 * (len(self.representations) - k):][:2]])
                      for k, (g, _, _) in enumerate(self.representations)]
            return sympy.Mul(*deltas, expr, evaluate=False)
        return expr

    @property
    def text(self) -> str:
        """The factor in the output vocabulary (the model language: slash(p), g[mu,nu], p^2, ...)."""
        return factor_text(self.factor)

    @cached_property
    def latex(self) -> str:
        """LaTeX in the customary order: i(pslash + m)/(p^2 - m^2), -i[g - (1 - xi) p p/(p^2 - xi M^2)]/(p^2 - M^2)."""
        deltas = ""
        if self.representations:
            count = len(self.representations)
            pairs = [self.indices[len(self.indices) - 2 * count + 2 * k:][:2] for k in range(count)]
            deltas = " ".join(to_latex(GroupDelta(sympy.Symbol(g), *map(sympy.Symbol, pair)))
                              for (g, _, _), pair in zip(self.representations, pairs)) + " \\, "
        body = customary_propagator_latex(self.kind, self.a, self.b, self.chiral is not None)
        return deltas + body if body is not None else to_latex(self.factor)

    def _repr_latex_(self) -> str:
        from .render.notebook import propagator_latex

        return propagator_latex(self)

    def _repr_html_(self) -> str:
        from .render.notebook import propagator_html

        return propagator_html(self)

    def __rich__(self) -> object:
        from .render.notebook import propagator_rich

        return propagator_rich(self)

    @cached_property
    def _compiled(self) -> Callable[..., np.ndarray]:
        """The propagator as a numpy function, compiled once (the exported module's code)."""
        ranks = {name: g.rank for name, g in self.model.groups.items()}
        source = propagator_function_source(self, "propagator", documented=False)
        return compile_function(source, "propagator", self.model.conventions.eps0123, ranks)

    def evaluate(self, p: Sequence[float] | np.ndarray, values: Mapping[str, complex] | None = None) -> np.ndarray:
        """Numeric propagator: scalar (), Dirac (4, 4), vector (4, 4) with upper indices.

        A batch of momenta of shape (..., 4) gives (..., axes), all points in one call.
        """
        import numpy as np

        what = f"propagator {self.field}"
        try:
            momentum = np.asarray(p, dtype=complex)
        except (TypeError, ValueError):
            raise UsageError(f"{what}: the momentum is not a number") from None
        if momentum.ndim < 1 or momentum.shape[-1] != 4:
            raise UsageError(f"evaluate() needs one four-momentum (E, px, py, pz), got shape {momentum.shape}",
                             hint="pass an array of shape (4,), or (N, 4) for a batch of N points")
        return self._compiled(momentum, values_for(self.model, values, what, self._value_cache))

    @cached_property
    def _value_cache(self) -> dict[tuple, ParameterValues]:
        return {}


def _over_common_denominator(parts: list[tuple[sympy.Expr, sympy.Expr]]) -> sympy.Expr:
    """sum a_k X_k written as (sum n_k X_k) / d when the coefficients share their denominator.

    The coefficients come factored from derive (factoring is the dearest step of a propagator and
    is done once, there): their numerators and denominators are read off as they stand.
    """
    fractions = [sympy.fraction(a) for a, _ in parts]
    denominators = {d for (n, d), _ in zip(fractions, parts) if n != 0}
    if len(denominators) != 1:
        return sympy.Add(*[a * x for a, x in parts])
    (denominator,) = denominators
    numerator = sympy.Add(*[n * x for (n, _), (_, x) in zip(fractions, parts) if n != 0])
    if denominator == 1:
        return numerator
    return sympy.Mul(numerator, sympy.Pow(denominator, -1), evaluate=False)


__all__ = ["MU", "NU", "P", "Propagator"]
