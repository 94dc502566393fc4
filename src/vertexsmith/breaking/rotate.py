"""Rotations to mass eigenstates declared by the user: `rotate NEW from OLD by R [orthogonal|unitary]`.

NEW = R OLD, so every occurrence of an old field is replaced by its row of R^-1 in the new
fields: OLD_i = sum_k (R^-1)_ik NEW_k. A conjugated occurrence (dag(a), bar(a)) takes the
conjugate row. A new complex field may be listed with its conjugate, `(W, dag(W))` from two real
fields, whose rows must then be conjugates of each other. A chirality (`rotate left ...`) rotates
only that part of a Dirac field: psi -> PL (R^-1 psi') for the left part, and the projector is
written into the spinor chain next to the field (bar(psi_L) = bar(psi) PR).

Checks, each a positioned error at the statement: the fields exist and match in number and kind,
R is square and invertible (det = 0 symbolically, or numerically with the model's values, is
singular), and where declared orthogonal (R R^T = 1) or unitary (R R^dag = 1) it is, symbolically
when sympy can decide, else with the model's numbers. A rotation declared orthogonal or unitary
is inverted as R^T or R^dag (so a rotation by [[cw, -sw], [sw, cw]] gives cw, sw, not
cw/(cw^2 + sw^2)); any other is inverted by sympy and simplified.
"""

from __future__ import annotations

import dataclasses
import itertools
from dataclasses import dataclass
from typing import Iterable, Mapping, Sequence

import numpy as np
import sympy

from .. import limits
from .. import model as m
from ..errors import ModelMeaningError, Span
from ..expand import Atom, DiracAtom, FieldAtom, Monomial
from ..values import substitute_definitions

# relative size under which a numeric determinant or a deviation from orthogonality counts as zero
TOLERANCE = 1e-10


@dataclass(frozen=True)
class Part:
    """One term of an old field written in the new ones: coefficient x new field (conjugated?), chirality."""

    coefficient: sympy.Expr
    field: str
    conjugate: bool = False
    chirality: str = ""  # "", "L" (this term only for the left part) or "R"


Substitution = Mapping[str, tuple[Part, ...]]


# ------------------------------------------------------------------ substituting fields in monomials

def _conjugate_parts(model: m.Model, parts: tuple[Part, ...]) -> tuple[Part, ...]:
    return tuple(dataclasses.replace(p, coefficient=sympy.conjugate(p.coefficient),
                                     conjugate=(not p.conjugate) if model.fields[p.field].two_ended else False)
                 for p in parts)


def _replacements(model: m.Model, atom: FieldAtom, parts: tuple[Part, ...],
                  span: Span) -> list[tuple[sympy.Expr, tuple[Atom, ...]]]:
    """The (coefficient, atoms) terms that replace one occurrence of an old field."""
    if atom.conjugate:
        parts = _conjugate_parts(model, parts)
    out = []
    for part in parts:
        new = dataclasses.replace(atom, field=part.field, conjugate=part.conjugate)
        if not part.chirality:
            out.append((part.coefficient, (new,)))
        elif atom.conjugate:  # bar(psi_L) = bar(psi) PR, bar(psi_R) = bar(psi) PL
            out.append((part.coefficient, (new, DiracAtom("PR" if part.chirality == "L" else "PL", (), span))))
        else:
            out.append((part.coefficient, (DiracAtom("PL" if part.chirality == "L" else "PR", (), span), new)))
    return out


def substitute_fields(model: m.Model, monomials: Iterable[Monomial], substitution: Substitution,
                      span: Span) -> tuple[Monomial, ...]:
    """The monomials with every old field of `substitution` replaced by its new fields, multiplied out.

    Derivatives, Lorentz and group indices stay on the replacing fields. Equal products from one
    Lagrangian line are added and dropped when they cancel, as `expand` does; products from
    different lines stay apart (the quadratic form and the vertices add them anyway).
    """
    combined: dict[tuple[tuple[Atom, ...], int, int], list] = {}
    for mono in monomials:
        options: list[list[tuple[sympy.Expr, tuple[Atom, ...]]]] = []
        count = 1
        for atom in mono.atoms:
            if isinstance(atom, FieldAtom) and atom.field in substitution:
                options.append(_replacements(model, atom, substitution[atom.field], span))
            else:
                options.append([(sympy.Integer(1), (atom,))])
            count *= len(options[-1])
        if count > limits.TERMS_PER_LINE.limit:
            raise limits.over_budget(limits.TERMS_PER_LINE, count, mono.origin, "a monomial after a rotation",
                                     "rotate fewer fields at once")
        for choice in itertools.product(*options):
            coefficient = mono.coefficient * sympy.Mul(*[c for c, _ in choice])
            atoms = tuple(a for _, group in choice for a in group)
            key = (atoms, mono.origin.line, mono.origin.column)
            entry = combined.setdefault(key, [mono.origin, []])
            entry[1].append(coefficient)
    out = []
    for (atoms, _, _), (origin, summands) in combined.items():
        coefficient = sympy.expand(sympy.Add(*summands))
        if coefficient != 0:
            out.append(Monomial(coefficient, atoms, origin))
    return tuple(out)


# ------------------------------------------------------------------ the rotation matrix

def _numbers(model: m.Model) -> dict[sympy.Symbol, complex]:
    try:
        return model.parameter_values()
    except Exception:  # noqa: BLE001 - a value that fails is reported by build; here it is just missing
        return {}


def _numeric(model: m.Model, expr: sympy.Expr) -> complex | None:
    """expr as a number from the model's values (definitions substituted), None when one is missing."""
    expr = substitute_definitions(model.parameters, sympy.sympify(expr))
    values = _numbers(model)
    if not expr.free_symbols <= set(values):
        return None
    return complex(expr.xreplace({s: sympy.sympify(values[s]) for s in expr.free_symbols}).evalf())


def _is_zero_matrix(model: m.Model, mat: sympy.Matrix) -> bool | None:
    """True/False when the matrix is (not) zero symbolically or with the model's numbers; None if undecided."""
    entries = [substitute_definitions(model.parameters, sympy.simplify(e)) for e in mat]
    if all(sympy.simplify(e) == 0 for e in entries):
        return True
    numbers = [_numeric(model, e) for e in entries]
    if any(x is None for x in numbers):
        return None
    scale = max(1.0, *(abs(x) for x in numbers if x is not None))
    return all(abs(x) <= TOLERANCE * scale for x in numbers if x is not None)


def inverse_rotation(model: m.Model, matrix: sympy.Matrix, declared: str, span: Span) -> sympy.Matrix:
    """R^-1 after checking R: square, invertible, and orthogonal or unitary where declared."""
    if matrix.rows != matrix.cols:
        raise ModelMeaningError(f"the rotation matrix is {matrix.rows}x{matrix.cols}, not square", span,
                                "NEW = R OLD needs one row per new field and one column per old field")
    det = sympy.simplify(matrix.det())
    number = _numeric(model, det)
    if det == 0 or (number is not None and abs(number) <= TOLERANCE * max(1.0, _scale(model, matrix))):
        raise ModelMeaningError(f"the rotation matrix is singular (its determinant is {_show(det)}"
                                + (f" = {number.real:.6g}" if number is not None and det != 0 else "") + ")", span,
                                "a rotation must be invertible: check the rows (NEW = R OLD)")
    if declared:
        product = matrix * (matrix.T if declared == "orthogonal" else matrix.H) - sympy.eye(matrix.rows)
        verdict = _is_zero_matrix(model, product)
        if verdict is False:
            what = "R R^T" if declared == "orthogonal" else "R R^dag"
            raise ModelMeaningError(f"the rotation is declared {declared}, but {what} is not the unit matrix", span,
                                    f"check the entries, or drop '{declared}' to let the tool invert the matrix")
        if verdict is None:
            raise ModelMeaningError(f"the rotation is declared {declared}, but this cannot be checked: its entries "
                                    "need parameters without values", span,
                                    "give the parameters values, or define them by formulas (cw = cos(thw))")
        return sympy.Matrix(matrix.T if declared == "orthogonal" else matrix.H)
    return sympy.Matrix(matrix.inv()).applyfunc(sympy.simplify)


def _scale(model: m.Model, matrix: sympy.Matrix) -> float:
    numbers = [_numeric(model, e) for e in matrix]
    return max([abs(x) for x in numbers if x is not None] or [1.0]) ** matrix.rows


def _show(expr: sympy.Expr) -> str:
    return str(expr).replace("**", "^").replace("conjugate(", "conj(")


# ------------------------------------------------------------------ a rotate statement

def check_fields(model: m.Model, old: Sequence[str], new: Sequence[tuple[str, bool]], span: Span) -> None:
    """The fields of a rotation exist, match in number, and have one kind (and one set of charges)."""
    for name in list(old) + [n for n, _ in new]:
        if name not in model.fields:
            raise ModelMeaningError(f"unknown field '{name}' in a rotation", span,
                                    "declare every old and new field in the fields section")
    if len(old) != len(new):
        raise ModelMeaningError(f"{len(new)} new fields from {len(old)} old ones", span,
                                "a rotation keeps the number of fields: list as many new fields as old ones")
    kinds = {model.fields[n].kind for n in list(old) + [n for n, _ in new]}
    if len(kinds) > 1:
        raise ModelMeaningError(f"a rotation mixes fields of different kinds ({', '.join(sorted(kinds))})", span,
                                "rotate scalars with scalars, vectors with vectors, fermions with fermions")
    for name, conjugate in new:
        if conjugate and not model.fields[name].two_ended:
            raise ModelMeaningError(f"dag({name}) of a real field in a rotation", span,
                                    f"declare {name} complex, or list it without dag()")


def rotation_substitution(model: m.Model, rotation: m.Rotation) -> tuple[Substitution, sympy.Matrix]:
    """The old fields in terms of the new ones for a `rotate` statement with an explicit matrix, and R^-1."""
    check_fields(model, rotation.old, rotation.new, rotation.span)
    span = rotation.matrix_span or rotation.span
    assert rotation.matrix is not None
    matrix = sympy.Matrix([list(row) for row in rotation.matrix])
    if matrix.shape != (len(rotation.new), len(rotation.old)):
        raise ModelMeaningError(f"the rotation matrix is {matrix.rows}x{matrix.cols} for {len(rotation.new)} new "
                                f"and {len(rotation.old)} old fields", span,
                                "NEW = R OLD: one row per new field, one column per old field")
    _check_conjugate_rows(model, rotation, matrix, span)
    inverse = inverse_rotation(model, matrix, rotation.declared, span)
    hand = {"left": "L", "right": "R"}.get(rotation.chirality, "")
    substitution = {old: tuple(Part(inverse[i, k], name, conjugate, hand)
                               for k, (name, conjugate) in enumerate(rotation.new) if inverse[i, k] != 0)
                    for i, old in enumerate(rotation.old)}
    if hand:  # the other chirality keeps the old field
        other = "R" if hand == "L" else "L"
        substitution = {old: parts + (Part(sympy.Integer(1), old, False, other),)
                        for old, parts in substitution.items()}
    return substitution, inverse


def _check_conjugate_rows(model: m.Model, rotation: m.Rotation, matrix: sympy.Matrix, span: Span) -> None:
    """A complex field listed with its conjugate: their rows must be conjugate (old fields real)."""
    rows = {entry: k for k, entry in enumerate(rotation.new)}
    old_real = all(not model.fields[o].two_ended for o in rotation.old)
    for (name, conjugate), k in rows.items():
        if not model.fields[name].is_complex or conjugate:
            continue
        partner = rows.get((name, True))
        if partner is None:
            if old_real:
                raise ModelMeaningError(f"the complex field '{name}' comes from real fields, but dag({name}) is "
                                        "not listed", span, f"list both: rotate ({name}, dag({name})) from ...")
            continue
        difference = matrix.row(partner) - matrix.row(k).applyfunc(sympy.conjugate)
        if _is_zero_matrix(model, difference) is False:
            raise ModelMeaningError(f"the row of dag({name}) is not the complex conjugate of the row of {name}",
                                    span, f"dag({name}) = conj(row of {name}) times the old fields")


def apply_rotation(model: m.Model, monomials: Sequence[Monomial],
                   rotation: m.Rotation) -> tuple[m.Model, tuple[Monomial, ...], sympy.Matrix]:
    """The model without the rotated-away fields, the monomials in the new fields, and R^-1."""
    substitution, inverse = rotation_substitution(model, rotation)
    out = substitute_fields(model, monomials, substitution, rotation.span)
    kept = {n for n, _ in rotation.new}
    if rotation.chirality:
        kept |= set(rotation.old)
    return without_fields(model, set(rotation.old) - kept), out, inverse


def without_fields(model: m.Model, removed: set[str]) -> m.Model:
    """The same model record without the fields that were rotated away (their propagators go with them)."""
    if not removed:
        return model
    return dataclasses.replace(model, fields={k: f for k, f in model.fields.items() if k not in removed})


def numeric_matrix_text(matrix: np.ndarray) -> str:
    """A numeric matrix in the model language's bracket form, 10 significant digits."""
    def number(z: complex) -> str:
        z = complex(z)
        if abs(z.imag) <= 1e-15 * max(1.0, abs(z)):
            return f"{z.real:.10g}"
        return f"({z.real:.10g} {'+' if z.imag >= 0 else '-'} {abs(z.imag):.10g} I)"
    return "[" + ", ".join("[" + ", ".join(number(x) for x in row) + "]" for row in matrix) + "]"


__all__ = ["Part", "Substitution", "TOLERANCE", "apply_rotation", "check_fields", "inverse_rotation",
           "numeric_matrix_text", "rotation_substitution", "substitute_fields", "without_fields"]
