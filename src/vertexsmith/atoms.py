"""The records of an expanded Lagrangian: field factors, Dirac matrices, tensors, monomials.

`expand` makes them, every later stage reads them; they live apart so that the stages that
rewrite monomials (the fermion flow of chain_flow.py) need not import the expansion itself.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Union

import sympy

from .errors import Span


@dataclass(frozen=True)
class FieldAtom:
    """One field factor: field name, conjugation (bar/dag), Lorentz index, derivative indices."""

    field: str
    conjugate: bool
    index: str | None
    derivatives: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)
    group_indices: tuple[tuple[str, str | None], ...] = ()  # (group, index); None until implied ones are fixed
    charge_conjugate: bool = False  # cc(psi) / bar(cc(psi)): see model.LField

    @property
    def opens_chain(self) -> bool:
        """Whether the factor stands at the row (bar) end of a spinor chain: bar(psi) or bar(cc(psi))."""
        return self.conjugate != self.charge_conjugate

    def group_index(self, group: str) -> str | None:
        return dict(self.group_indices).get(group)


@dataclass(frozen=True)
class DiracAtom:
    """A Dirac matrix inside a spinor chain: gamma, gamma5, PL, PR, sigma."""

    kind: str
    indices: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class TensorAtom:
    """A numeric Lorentz tensor: g or eps."""

    kind: str
    indices: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class GroupAtom:
    """A group tensor of a non-abelian group: T (indices (a,) inside a chain, or (a, i, j)), f, delta."""

    kind: str
    group: str
    indices: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class ParamAtom:
    """A component of a vector or matrix parameter, Y[i,j], or its complex conjugate."""

    name: str
    indices: tuple[str, ...]
    conjugate: bool
    span: Span = dataclasses.field(compare=False)


Atom = Union[FieldAtom, DiracAtom, TensorAtom, GroupAtom, ParamAtom]


@dataclass(frozen=True)
class Monomial:
    """coefficient x atoms (in written order). `origin` is the Lagrangian line it came from."""

    coefficient: sympy.Expr
    atoms: tuple[Atom, ...]
    origin: Span = dataclasses.field(compare=False)

    @property
    def fields(self) -> tuple[FieldAtom, ...]:
        return tuple(a for a in self.atoms if isinstance(a, FieldAtom))


__all__ = ["Atom", "DiracAtom", "FieldAtom", "GroupAtom", "Monomial", "ParamAtom", "TensorAtom"]
