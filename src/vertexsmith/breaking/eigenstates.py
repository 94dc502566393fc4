"""`diagonalise (OLD...) into (NEW...) angle theta | numeric O`: a mass block turned into mass eigenstates.

The block's matrices are read from the quadratic form of the monomials as they stand at the
statement (after the vacuum shifts and earlier rotations), by `spectrum.read_block`.

- **angle** (two fields, a real symmetric block M = [[A, B], [B, C]] with canonical kinetic terms):
  NEW = R OLD with R = [[cos theta, sin theta], [-sin theta, cos theta]], so a = c x - s y and
  b = s x + c y. Then (R M R^T)_12 = B cos 2theta - (A - C) sin 2theta / 2, which vanishes by the
  defining relation tan(2 theta) = 2 B / (A - C) (the state x is the one that becomes a as theta
  goes to 0). The off-diagonal entry the substitution produces is compared with this formula
  (checking the rotation); where theta or the entries have values or formulas, the relation is
  checked with them, and if it fails the off-diagonal terms stay (a warning at the statement).
  Otherwise the relation defines theta and the off-diagonal mass terms are dropped.
- **numeric** (any size, every entry with a value): bosons by the hermitian eigenproblem (squared
  masses ascending), Dirac fermions by the singular-value decomposition M = U_L diag(m) U_R^dag
  (psi_L = U_L psi'_L, psi_R = U_R psi'_R, masses ascending), Majorana fermions by Takagi
  factorisation M = U diag(m) U^T (chi = PL U chi' + PR U^* chi'). Phase convention: every column
  of the mixing matrix has its largest entry real and positive (Dirac: the same phase on the
  right column; Majorana: a sign only). The mixing matrix O (NEW = O OLD, Dirac: OL and OR)
  becomes numeric parameters O11, O12, ... of the rules (O_1_10 beyond 9 fields), and the
  block's quadratic terms are replaced by canonical ones with the masses found: a new field
  declared with a mass keeps it (a warning when it differs from the eigenvalue), one without gets
  a parameter m_<field> holding the eigenvalue.
"""

from __future__ import annotations

import dataclasses
from typing import Sequence

import numpy as np
import sympy

from .. import model as m
from ..diagonalise import takagi
from ..errors import ModelMeaningError
from ..expand import FieldAtom, Monomial
from ..quadratic import quadratic_form
from ..values import substitute_definitions
from .rotate import TOLERANCE, Part, _numbers, _numeric, check_fields, substitute_fields, without_fields
from .spectrum import MixingRecord, SpectrumNote, _fix_columns, bosonic_eigensystem, numeric_matrix, read_block

# relative difference above which a declared mass disagrees with the eigenvalue found
MASS_TOLERANCE = 1e-6


def _bilinears(monomials: Sequence[Monomial], fields: set[str]) -> list[Monomial]:
    return [mono for mono in monomials if len(mono.fields) == 2 and {a.field for a in mono.fields} <= fields]


def _block(model: m.Model, monomials: Sequence[Monomial], names: Sequence[str]):  # type: ignore[no-untyped-def]
    return read_block(quadratic_form(model, _bilinears(monomials, set(names))), names)


def _statement(stmt: m.Diagonalisation) -> str:
    how = f"angle {stmt.angle}" if stmt.angle else f"numeric {stmt.numeric}"
    return f"diagonalise ({', '.join(stmt.old)}) into ({', '.join(stmt.new)}) {how}"


# ------------------------------------------------------------------ symbolic 2x2 with a named angle

def diagonalise_angle(model: m.Model, monomials: Sequence[Monomial], stmt: m.Diagonalisation,
                      ) -> tuple[m.Model, tuple[Monomial, ...], MixingRecord, tuple[SpectrumNote, ...]]:
    """The block rotated by the named angle, its off-diagonal mass terms dropped by the defining relation."""
    span = stmt.span
    check_fields(model, stmt.old, [(n, False) for n in stmt.new], span)
    if len(stmt.old) != 2:
        raise ModelMeaningError(f"an angle diagonalises two fields, not {len(stmt.old)}", span,
                                "use 'numeric NAME' for larger blocks")
    if stmt.angle not in model.parameters:
        raise ModelMeaningError(f"the angle '{stmt.angle}' is not a parameter", span,
                                f"declare it in the parameters section: {stmt.angle} \"mixing angle\"")
    if any(model.fields[n].is_complex and not model.fields[n].is_fermion for n in stmt.old):
        raise ModelMeaningError("an angle rotates real fields (or Dirac fields with a real symmetric mass matrix)",
                                span, "write complex scalars as real components first, or use 'numeric NAME'")
    mass, kin, kin_r = _block(model, monomials, stmt.old)
    if kin != sympy.eye(2) or (kin_r is not None and kin_r != sympy.eye(2)):
        raise ModelMeaningError(f"the kinetic terms of {', '.join(stmt.old)} are not canonical (kinetic mixing)",
                                span, "rotate the kinetic mixing away first with a 'rotate' statement")
    a, b, b2, c = mass[0, 0], mass[0, 1], mass[1, 0], mass[1, 1]
    if sympy.simplify(b - b2) != 0 or sympy.simplify(b - sympy.conjugate(b)) != 0:
        raise ModelMeaningError(f"the mass matrix of {', '.join(stmt.old)} is not real symmetric "
                                f"(off-diagonal entries {_show(b)} and {_show(b2)})", span,
                                "use 'numeric NAME' for a complex block")
    theta = model.parameters[stmt.angle].symbol
    cs, sn = sympy.cos(theta), sympy.sin(theta)
    rotation = sympy.Matrix([[cs, sn], [-sn, cs]])
    substitution = {old: (Part(rotation[0, i], stmt.new[0]), Part(rotation[1, i], stmt.new[1]))
                    for i, old in enumerate(stmt.old)}  # OLD = R^T NEW
    block = set(stmt.old)
    bilinears = _bilinears(monomials, block)
    kinetic = [mono for mono in bilinears if any(f.derivatives for f in mono.fields)]
    # the canonical kinetic terms go over unchanged (R is orthogonal); substituting them would leave
    # cos^2 + sin^2 in every propagator
    skip = {id(mono) for mono in kinetic}
    rest = [mono for mono in monomials if id(mono) not in skip]
    out = substitute_fields(model, rest, substitution, span) + tuple(_renamed_kinetic(kinetic, stmt))
    new_model = without_fields(model, block - set(stmt.new))
    rotated, _, _ = _block(new_model, out, stmt.new)
    residual = b * sympy.cos(2 * theta) - (a - c) * sympy.sin(2 * theta) / 2
    if sympy.simplify(sympy.expand_trig(rotated[0, 1] - residual)) != 0:  # pragma: no cover - an engine error
        raise ModelMeaningError("the rotated block's off-diagonal entry is not the expected one", span)
    relation = f"tan(2 {stmt.angle}) = 2 M12/(M11 - M22) = 2 ({_show(b)})/({_show(a)} - ({_show(c)}))"
    notes: list[SpectrumNote] = []
    verdict = _relation_holds(model, residual)
    if verdict is False:
        notes.append(SpectrumNote("warning", f"the angle '{stmt.angle}' does not satisfy {relation} with the "
                                  "model's values: the off-diagonal terms stay and the fields still mix", span,
                                  f"define {stmt.angle} = atan(2 M12/(M11 - M22))/2, or leave it without a value"))
    else:
        new = set(stmt.new)
        out = tuple(mono for mono in out if not (len(mono.fields) == 2 and {f.field for f in mono.fields} == new
                                                 and not any(f.derivatives for f in mono.fields)))
    record = MixingRecord(_statement(stmt), span.line, tuple(stmt.old), tuple(stmt.new),
                          sympy.ImmutableMatrix(rotation), sympy.ImmutableMatrix(mass), relation, None, None)
    return new_model, out, record, tuple(notes)


def _relation_holds(model: m.Model, residual: sympy.Expr) -> bool | None:
    """Whether the off-diagonal residual vanishes with the model's formulas or numbers (None: undecided)."""
    expanded = substitute_definitions(model.parameters, residual)
    if sympy.simplify(expanded) == 0:
        return True
    number = _numeric(model, expanded)
    if number is None:
        return None
    scale = max([1.0] + [abs(x) for x in (_numeric(model, t) for t in sympy.Add.make_args(sympy.expand(expanded)))
                         if x is not None])
    return abs(number) <= 1e-9 * scale


def _show(expr: sympy.Expr) -> str:
    return str(expr).replace("**", "^").replace("conjugate(", "conj(")


# ------------------------------------------------------------------ numeric, any size

def _entry_name(base: str, i: int, k: int, n: int) -> str:
    return f"{base}{i + 1}{k + 1}" if n <= 9 else f"{base}_{i + 1}_{k + 1}"


def _number_expr(z: complex) -> sympy.Expr:
    """A numeric entry as an exact-looking sympy number, 12 significant digits (the same on every machine)."""
    re, im = float(f"{z.real:.12g}") + 0.0, float(f"{z.imag:.12g}") + 0.0
    return sympy.Float(re, 15) + (sympy.I * sympy.Float(im, 15) if im else 0)


def _matrix_parameters(model: m.Model, base: str, matrix: np.ndarray, stmt: m.Diagonalisation,
                       ) -> tuple[dict[str, m.Parameter], sympy.Matrix]:
    """Numeric parameters for the entries of a mixing matrix, and the matrix of their symbols."""
    n = matrix.shape[0]
    complex_entries = bool(np.abs(matrix.imag).max(initial=0.0) > 1e-13)
    params: dict[str, m.Parameter] = {}
    symbols = sympy.zeros(n, n)
    for i in range(n):
        for k in range(n):
            name = _entry_name(base, i, k, n)
            if name in model.parameters or name in model.fields:
                raise ModelMeaningError(f"the mixing-matrix entry '{name}' is already a name of the model", stmt.span,
                                        "choose another name for the mixing matrix")
            value = complex(matrix[i, k]) if complex_entries else complex(matrix[i, k].real)
            definition = _number_expr(value)
            params[name] = m.Parameter(name, ("mixing",), complex_entries, definition, complex(definition),
                                       f"entry ({i + 1}, {k + 1}) of {base}, NEW = {base} OLD "
                                       f"({_statement(stmt)}, line {stmt.span.line})", stmt.span)
            symbols[i, k] = params[name].symbol
    return params, symbols


def diagonalise_numeric(model: m.Model, monomials: Sequence[Monomial], stmt: m.Diagonalisation,
                        ) -> tuple[m.Model, tuple[Monomial, ...], MixingRecord, tuple[SpectrumNote, ...]]:
    """The block diagonalised with the model's numbers; the mixing matrix as numeric parameters."""
    span = stmt.span
    check_fields(model, stmt.old, [(n, False) for n in stmt.new], span)
    kind = model.fields[stmt.old[0]].kind
    if kind == "ghost":
        raise ModelMeaningError("ghosts are not diagonalised", span)
    mass, kin, kin_r = _block(model, monomials, stmt.old)
    n = len(stmt.old)
    if kin != sympy.eye(n) or (kin_r is not None and kin_r != sympy.eye(n)):
        raise ModelMeaningError(f"the kinetic terms of {', '.join(stmt.old)} are not canonical (kinetic mixing)",
                                span, "rotate the kinetic mixing away first with a 'rotate' statement")
    values = _numbers(model)
    numbers, missing = numeric_matrix(model, mass, values)
    if numbers is None:
        raise ModelMeaningError(f"the numeric diagonalisation of {', '.join(stmt.old)} needs values for "
                                f"{', '.join(missing)}", span, "give these parameters numbers in the parameters "
                                "section, or diagonalise with a named angle")
    if kind in ("scalar", "vector"):
        real = not model.fields[stmt.old[0]].is_complex
        if real and np.abs(numbers.imag).max(initial=0.0) > TOLERANCE * max(1.0, np.abs(numbers).max()):
            raise ModelMeaningError("the mass matrix of real fields has complex entries", span)
        masses2, c = bosonic_eigensystem(numbers.real if real else numbers, np.eye(n))
        masses = tuple(float(x) for x in masses2)
        mixing = {"": c.conj().T}  # NEW = C^dag OLD
    elif kind == "dirac":
        u, s, vh = np.linalg.svd(numbers)
        order = np.argsort(s, kind="stable")
        u, v = u[:, order], vh.conj().T[:, order]
        phases = _fix_columns(u)
        with np.errstate(invalid="ignore", divide="ignore"):
            ratio = np.where(np.abs(u) > 0, phases / np.where(u == 0, 1, u), 1)
        fix = np.array([ratio[int(np.argmax(np.abs(u[:, k]))), k] for k in range(n)])
        u, v = u * fix, v * fix
        masses = tuple(float(x) for x in s[order])
        mixing = {"L": u.conj().T, "R": v.conj().T}
    else:
        masses_arr, u = takagi(numbers)
        masses = tuple(float(x) for x in masses_arr)
        mixing = {"L": u.conj().T, "R": u.T}  # chi_L = U chi'_L, chi_R = U^* chi'_R
    params: dict[str, m.Parameter] = {}
    symbols: dict[str, sympy.Matrix] = {}
    for hand, matrix in mixing.items():
        extra, syms = _matrix_parameters(model, stmt.numeric + hand, matrix, stmt)
        params.update(extra)
        symbols[hand] = syms
    if kind == "majorana":  # one matrix: the right part is its conjugate
        for name in [k for k in params if k.startswith(stmt.numeric + "R")]:
            del params[name]
        symbols["R"] = symbols["L"].applyfunc(sympy.conjugate)
    substitution: dict[str, tuple[Part, ...]] = {}
    for i, old in enumerate(stmt.old):  # OLD = O^dag NEW, per chirality for fermions
        substitution[old] = tuple(Part(sympy.conjugate(symbols[hand][k, i]), stmt.new[k], False,
                                       hand if kind in ("dirac", "majorana") else "")
                                  for hand in symbols for k in range(n))
    model_with = dataclasses.replace(model, parameters={**model.parameters, **params})
    block = set(stmt.old)
    kinetic = [mono for mono in _bilinears(monomials, block) if any(f.derivatives for f in mono.fields)]
    skip = {id(mono) for mono in _bilinears(monomials, block)}
    rest = [mono for mono in monomials if id(mono) not in skip]
    out = list(substitute_fields(model_with, rest, substitution, span))
    new_model, notes, mass_terms = _masses(model_with, stmt, masses, kind)
    out += _renamed_kinetic(kinetic, stmt) + mass_terms
    new_model = without_fields(new_model, block - set(stmt.new))
    shown = mixing[""] if "" in mixing else mixing["L"]
    record = MixingRecord(_statement(stmt), span.line, tuple(stmt.old), tuple(stmt.new),
                          sympy.ImmutableMatrix(symbols["" if "" in symbols else "L"]), sympy.ImmutableMatrix(mass),
                          "", tuple(tuple(complex(x) for x in row) for row in shown), masses)
    return new_model, tuple(out), record, notes


def _renamed_kinetic(kinetic: list[Monomial], stmt: m.Diagonalisation) -> list[Monomial]:
    """The canonical kinetic terms of the old fields, given to the new ones (a unitary rotation keeps them)."""
    rename = dict(zip(stmt.old, stmt.new))
    out = []
    for mono in kinetic:
        names = {a.field for a in mono.fields}
        if len(names) != 1:
            continue  # kinetic cross terms vanish for a canonical block (checked above)
        out.append(Monomial(mono.coefficient, tuple(dataclasses.replace(a, field=rename[a.field])
                                                    if hasattr(a, "field") and a.field in rename else a
                                                    for a in mono.atoms), mono.origin))
    return out


def _masses(model: m.Model, stmt: m.Diagonalisation, masses: tuple[float, ...], kind: str,
            ) -> tuple[m.Model, tuple[SpectrumNote, ...], list[Monomial]]:
    """The canonical mass term of each new field, with its declared mass or a new parameter m_<field>."""
    fields, params = dict(model.fields), dict(model.parameters)
    notes: list[SpectrumNote] = []
    out: list[Monomial] = []
    for name, value in zip(stmt.new, masses):
        f = fields[name]
        found = float(np.sqrt(max(value, 0.0))) if kind in ("scalar", "vector") else value
        if f.mass != 0:
            declared = _numeric(model, f.mass)
            if declared is not None and abs(abs(declared) - found) > MASS_TOLERANCE * max(1.0, found):
                notes.append(SpectrumNote("warning", f"'{name}' is declared with mass {_show(f.mass)} = "
                                          f"{abs(declared):.8g}, but the numeric diagonalisation gives {found:.8g}",
                                          stmt.span, f"declare {name} without a mass (it then gets m_{name}), or "
                                          "change the parameters the block is made of"))
            symbol = f.mass
        else:
            pname = f"m_{name}"
            if pname in params:
                raise ModelMeaningError(f"'{pname}' (the mass found for {name}) is already a parameter", stmt.span,
                                        f"declare {name} with a mass")
            definition = _number_expr(found)
            params[pname] = m.Parameter(pname, ("mass",), False, definition, complex(definition),
                                        f"mass of {name} from {_statement(stmt)}", stmt.span)
            symbol = params[pname].symbol
            fields[name] = dataclasses.replace(f, mass=symbol)
        indices = tuple((group, f"{'a' if rep == 'adjoint' else 'i'}#{k + 2}")
                        for k, (group, rep) in enumerate(f.representations))
        atom = FieldAtom(name, False, "mu#1" if kind == "vector" else None, (), stmt.span, indices)
        both = (dataclasses.replace(atom, conjugate=True), atom) if f.two_ended else (atom, atom)
        if kind == "scalar":
            coefficient = -symbol**2 * (1 if f.is_complex else sympy.Rational(1, 2))
        elif kind == "vector":
            coefficient = symbol**2 * (1 if f.is_complex else sympy.Rational(1, 2))
        else:
            coefficient = -symbol * (sympy.Rational(1, 2) if kind == "majorana" else 1)
        out.append(Monomial(sympy.expand(coefficient), both, stmt.span))
    return dataclasses.replace(model, fields=fields, parameters=params), tuple(notes), out


__all__ = ["diagonalise_angle", "diagonalise_numeric"]
