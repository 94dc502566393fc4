"""The `rotate` and `diagonalise` statements of a breaking section, applied in written order.

Called by the breaking stage after the vacuum shifts, splits and tadpoles, on the monomials of
the broken Lagrangian (and by anything else that holds monomials in the old fields). Each
statement reads the monomials as the previous one left them, so a kinetic mixing can be rotated
away before the mass block it leaves is diagonalised.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence, Union

import sympy

from .. import model as m
from ..expand import Monomial
from .eigenstates import diagonalise_angle, diagonalise_numeric
from .rotate import apply_rotation, without_fields
from .spectrum import MixingRecord, SpectrumNote

Statement = Union[m.Rotation, m.Diagonalisation]


@dataclass(frozen=True)
class MassBasis:
    """The model and monomials in mass eigenstates, the rotations applied, and what they found."""

    model: m.Model
    monomials: tuple[Monomial, ...]
    mixings: tuple[MixingRecord, ...]
    notes: tuple[SpectrumNote, ...]


def to_mass_basis(model: m.Model, monomials: Sequence[Monomial], statements: Sequence[Statement]) -> MassBasis:
    """Apply every rotate/diagonalise statement in order; a field rotated per chirality leaves the model
    once both of its chiralities have been rotated."""
    out = tuple(monomials)
    mixings: list[MixingRecord] = []
    notes: list[SpectrumNote] = []
    hands: dict[str, set[str]] = {}
    for stmt in statements:
        if isinstance(stmt, m.Rotation):
            model, out, inverse = apply_rotation(model, out, stmt)
            matrix = sympy.ImmutableMatrix([list(row) for row in stmt.matrix]) if stmt.matrix is not None else None
            label = ", ".join(f"dag({n})" if c else n for n, c in stmt.new)
            hand = f"{stmt.chirality} " if stmt.chirality else ""
            mixings.append(MixingRecord(f"rotate {hand}({label}) from ({', '.join(stmt.old)})"
                                        + (f" {stmt.declared}" if stmt.declared else ""), stmt.span.line,
                                        tuple(stmt.old), tuple(label.split(", ")), matrix, None, "", None, None))
            if stmt.chirality:
                for old in stmt.old:
                    hands.setdefault(old, set()).add(stmt.chirality)
                done = {old for old, seen in hands.items() if seen == {"left", "right"}}
                model = without_fields(model, done - {n for n, _ in stmt.new})
        else:
            action = diagonalise_angle if stmt.angle else diagonalise_numeric
            model, out, record, found = action(model, out, stmt)
            mixings.append(record)
            notes.extend(found)
    return MassBasis(model, out, tuple(mixings), tuple(notes))


__all__ = ["MassBasis", "Statement", "to_mass_basis"]
