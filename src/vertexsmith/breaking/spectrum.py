"""Mass matrices and the mass spectrum, read from the quadratic form K_ij(p) of a (broken) model.

The quadratic form already holds every bilinear term summed and simplified (`quadratic.py`); this
module only reads it back as matrices, sector by sector, and diagonalises them:

- scalars: K_ij = Z_ij p^2 - M^2_ij, so M^2_ij = -K_ij(p = 0) and Z_ij = dK_ij/dp^2;
- vectors (metric part, the transverse kernel): K_ij = (-Z_ij p^2 + M^2_ij) g, so M^2_ij = K_ij(0);
- Dirac fermions: K = pslash (Z^L PL + Z^R PR) - M PR - M^dag PL, so M_ij = -K_ij|_PR is the matrix
  between the left part of row field i (bar(psi_i) PR = bar(psi_iL)) and the right part of column
  field j: L = -bar(psi_L) M psi_R + h.c.;
- Majorana fermions: the same reading, M complex symmetric (L = -1/2 bar(chi) (M PR + M^* PL) chi).

A sector is one spin (kind) with one set of charges and representations under the groups that
stay unbroken: only fields of one sector can mix, so each sector's matrix is block diagonal with
the mixings of the form as its blocks. Eigenvalues: symbolic for blocks of one or two fields,
numeric (with the model's values) for every block whose entries have numbers; bosons by the
(generalised, when a kinetic matrix Z is present) hermitian eigenproblem, ascending; Dirac masses
by the singular values of Z_L^(-1/2) M Z_R^(-1/2); Majorana masses by Takagi factorisation.
Ghosts are left out: their masses are those of the gauge-fixing functions, not of the Lagrangian.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Mapping, Sequence

import numpy as np
import sympy

from .. import model as m
from ..diagonalise import takagi
from ..errors import Span
from ..quadratic import P2, QuadraticForm
from ..values import substitute_definitions

# blocks up to this size get symbolic eigenvalues (a 2x2 block has closed-form roots; more costs too much)
SYMBOLIC_BLOCK = 2
# relative difference above which a declared mass and an eigenvalue disagree
MASS_TOLERANCE = 1e-6

_KIND_WORDS = {"scalar": "scalars", "vector": "vectors", "dirac": "Dirac fermions", "majorana": "Majorana fermions"}


@dataclass(frozen=True)
class MassMatrix:
    """One sector's mass matrix with its eigenvalues.

    `matrix` is M^2 for bosons (rows and columns `fields`) and M for fermions (rows: left parts of
    `fields`, columns: right parts of the same fields). `kinetic` is Z (Z^L for fermions) when it is
    not the unit matrix, `kinetic_right` Z^R for fermions when it differs from Z^L. `eigenvalues`:
    symbolic squared masses (bosons) or masses (fermions) per block, in field order, None when a
    block is too large; `numeric`: the same from the model's values, ascending, None when values
    are missing (`missing` names them).
    """

    sector: str
    kind: str
    fields: tuple[str, ...]
    matrix: sympy.ImmutableMatrix
    kinetic: sympy.ImmutableMatrix | None
    kinetic_right: sympy.ImmutableMatrix | None
    eigenvalues: tuple[sympy.Expr, ...] | None
    numeric: tuple[float, ...] | None
    missing: tuple[str, ...]
    blocks: tuple[tuple[str, ...], ...]

    @property
    def squared(self) -> bool:
        """Whether the matrix holds squared masses (bosons) rather than masses (fermions)."""
        return self.kind in ("scalar", "vector")

    @property
    def diagonal(self) -> bool:
        """Whether no two fields of the sector mix (every block holds one field)."""
        return all(len(b) == 1 for b in self.blocks)

    def to_dict(self) -> dict:
        """The matrix as JSON-ready data: entries as sympy-parsable strings, numbers as floats."""
        def rows(mat: sympy.ImmutableMatrix | None) -> list[list[str]] | None:
            return None if mat is None else [[str(mat[i, j]) for j in range(mat.cols)] for i in range(mat.rows)]

        return {"sector": self.sector, "kind": self.kind, "fields": list(self.fields),
                "quantity": "mass^2" if self.squared else "mass", "matrix": rows(self.matrix),
                "kinetic": rows(self.kinetic), "kinetic_right": rows(self.kinetic_right),
                "blocks": [list(b) for b in self.blocks],
                "eigenvalues": None if self.eigenvalues is None else [str(e) for e in self.eigenvalues],
                "numeric": None if self.numeric is None else list(self.numeric),
                "missing": list(self.missing)}


@dataclass(frozen=True)
class SpectrumNote:
    """A finding about the spectrum, positioned: severity 'warning' or 'note', message, span, hint."""

    severity: str
    message: str
    span: Span
    hint: str = ""


@dataclass(frozen=True)
class MixingRecord:
    """One rotation to mass eigenstates as the breaking stage applied it, for the outputs.

    `matrix` is R with NEW = R OLD (for a numeric diagonalisation: the symbols of its numeric
    parameters, Dirac and Majorana: the left-handed one); `before` the block's mass matrix before
    it (diagonalise only); `relation` the relation that defines a named angle; `numeric` the
    numbers of R and `masses` the masses found (numeric diagonalisation only).
    """

    statement: str
    line: int
    old: tuple[str, ...]
    new: tuple[str, ...]
    matrix: sympy.ImmutableMatrix
    before: sympy.ImmutableMatrix | None
    relation: str
    numeric: tuple[tuple[complex, ...], ...] | None
    masses: tuple[float, ...] | None

    def to_dict(self) -> dict:
        def rows(mat: sympy.Matrix | None) -> list[list[str]] | None:
            return None if mat is None else [[str(mat[i, j]) for j in range(mat.cols)] for i in range(mat.rows)]

        return {"statement": self.statement, "line": self.line, "old": list(self.old), "new": list(self.new),
                "matrix": rows(self.matrix), "before": rows(self.before), "relation": self.relation,
                "numeric": None if self.numeric is None else [[[z.real, z.imag] for z in row] for row in self.numeric],
                "masses": None if self.masses is None else [_clean(x) for x in self.masses]}


@dataclass(frozen=True)
class Spectrum:
    """Every sector's mass matrix, what comparing them with the declared masses found, the rotations
    the breaking stage applied, and the pairs of fields that still mix (with the lines joining them)."""

    matrices: tuple[MassMatrix, ...]
    notes: tuple[SpectrumNote, ...]
    mixings: tuple[MixingRecord, ...] = ()
    mixed: tuple[tuple[str, str, tuple[int, ...]], ...] = ()

    def matrix(self, field: str) -> MassMatrix:
        """The mass matrix of the sector that holds a field."""
        for mat in self.matrices:
            if field in mat.fields:
                return mat
        raise KeyError(field)

    def to_dict(self) -> dict:
        return {"sectors": [mat.to_dict() for mat in self.matrices],
                "rotations": [r.to_dict() for r in self.mixings],
                "mixed": [{"fields": [a, b], "lines": list(lines)} for a, b, lines in self.mixed]}


# ------------------------------------------------------------------ sectors

def _charges_text(f: m.Field) -> str:
    parts = [f"{g} {'+' if q > 0 else ''}{q}" for g, q in f.charges if q != 0]
    parts += [f"{g} {rep}" for g, rep in f.representations]
    return ", ".join(parts) if parts else "neutral"


def _sector_key(f: m.Field) -> tuple:
    charges = tuple(sorted((g, q) for g, q in f.charges if q != Fraction(0)))
    return (f.kind, f.is_complex, charges, tuple(f.representations))


def _sector_label(f: m.Field) -> str:
    reality = "" if f.is_fermion else (" (complex)" if f.is_complex else " (real)")
    return f"{_KIND_WORDS.get(f.kind, f.kind + ' fields')}{reality}, {_charges_text(f)}"


def _read(form: QuadraticForm, kind: str, row: str, column: str) -> tuple[sympy.Expr, ...]:
    """(mass part, kinetic part[, right kinetic part]) of one entry of K, in the conventions above."""
    entry = form.entry(row, column)
    if kind == "scalar":
        one = sympy.expand(entry.get("one", 0))
        return -one.coeff(P2, 0), one.coeff(P2, 1)
    if kind == "vector":
        metric = sympy.expand(entry.get("metric", 0))
        return metric.coeff(P2, 0), -metric.coeff(P2, 1)
    return -sympy.sympify(entry.get("one_R", 0)), sympy.sympify(entry.get("slash_L", 0)), \
        sympy.sympify(entry.get("slash_R", 0))


def _blocks(fields: list[str], joined: set[tuple[str, str]]) -> tuple[tuple[str, ...], ...]:
    """The fields split into groups that the non-zero off-diagonal entries join, in field order."""
    parent = {f: f for f in fields}

    def find(x: str) -> str:
        while parent[x] != x:
            x = parent[x]
        return x

    order = {f: k for k, f in enumerate(fields)}
    for a, b in sorted(joined):
        ra, rb = find(a), find(b)
        if ra != rb:
            parent[max(ra, rb, key=order.__getitem__)] = min(ra, rb, key=order.__getitem__)
    groups: dict[str, list[str]] = {}
    for f in fields:
        groups.setdefault(find(f), []).append(f)
    return tuple(tuple(g) for g in groups.values())


def mass_matrices(form: QuadraticForm, symbolic: bool = True) -> tuple[MassMatrix, ...]:
    """The mass matrix of every sector of the quadratic form (ghosts left out), sectors in field order.

    symbolic=False skips the symbolic eigenvalues (what `check` needs is numeric, and cheaper).
    """
    model = form.model
    sectors: dict[tuple, list[str]] = {}
    for f in model.fields.values():
        if f.kind != "ghost":
            sectors.setdefault(_sector_key(f), []).append(f.name)
    values = _numbers(model)
    out = []
    for names in sectors.values():
        out.append(_sector_matrix(form, names, values, symbolic))
    return tuple(out)


def read_block(form: QuadraticForm, names: Sequence[str],
               ) -> tuple[sympy.ImmutableMatrix, sympy.ImmutableMatrix, sympy.ImmutableMatrix | None]:
    """(M or M^2, Z or Z_L, Z_R or None) over some fields of one kind, read from K as the module says."""
    kind, n = form.model.fields[names[0]].kind, len(names)
    parts = [[_read(form, kind, r, c) for c in names] for r in names]
    mass = sympy.ImmutableMatrix(n, n, lambda i, j: parts[i][j][0])
    if kind == "majorana":  # the form holds one order of a Majorana pair; M is symmetric
        mass = sympy.ImmutableMatrix(n, n, lambda i, j: mass[i, j] if mass[i, j] != 0 else mass[j, i])
    kin = sympy.ImmutableMatrix(n, n, lambda i, j: parts[i][j][1])
    kin_r = sympy.ImmutableMatrix(n, n, lambda i, j: parts[i][j][2]) if kind in ("dirac", "majorana") else None
    return mass, kin, kin_r


def _sector_matrix(form: QuadraticForm, names: list[str], values: Mapping[sympy.Symbol, complex],
                   symbolic: bool) -> MassMatrix:
    model = form.model
    first = model.fields[names[0]]
    kind, n = first.kind, len(names)
    mass, kin, kin_r = read_block(form, names)
    joined = {(names[i], names[j]) for i in range(n) for j in range(n)
              if i != j and (mass[i, j] != 0 or kin[i, j] != 0 or (kin_r is not None and kin_r[i, j] != 0))}
    blocks = _blocks(names, joined)
    eye = sympy.eye(n)
    kinetic = None if kin == eye else kin
    kinetic_right = None if kin_r is None or kin_r == kin else kin_r
    eigenvalues = _symbolic_eigenvalues(kind, names, blocks, mass, kin) if symbolic else None
    numeric, missing = _numeric_eigenvalues(model, kind, mass, kin, kin_r, values)
    return MassMatrix(_sector_label(first), kind, tuple(names), mass, kinetic, kinetic_right, eigenvalues,
                      numeric, missing, blocks)


# ------------------------------------------------------------------ eigenvalues

def _symbolic_eigenvalues(kind: str, names: list[str], blocks: tuple[tuple[str, ...], ...],
                          mass: sympy.Matrix, kin: sympy.Matrix) -> tuple[sympy.Expr, ...] | None:
    """Squared masses (bosons) or masses (fermions) block by block, or None when a block is too large."""
    if any(len(b) > SYMBOLIC_BLOCK for b in blocks):
        return None
    out: list[sympy.Expr] = []
    for block in blocks:
        idx = [names.index(f) for f in block]
        mb, zb = mass.extract(idx, idx), kin.extract(idx, idx)
        if len(block) == 1:
            z = zb[0, 0]
            out.append(sympy.simplify(mb[0, 0] / z) if z != 0 else sympy.zoo)
            continue
        x = sympy.Dummy("x")
        if kind in ("scalar", "vector"):
            poly = (mb - x * zb).det()
        elif zb != sympy.eye(2):
            return None
        else:  # fermions: singular values, the square roots of the eigenvalues of M M^dag
            poly = (mb * mb.H - x * sympy.eye(2)).det()
        roots = sympy.solve(poly, x)
        if len(roots) == 1:
            roots = roots * 2
        roots = [sympy.simplify(r) for r in roots]
        if kind in ("dirac", "majorana"):
            roots = [sympy.sqrt(r) for r in roots]
        out.extend(roots)
    return tuple(out)


def _numbers(model: m.Model) -> dict[sympy.Symbol, complex]:
    try:
        return model.parameter_values()
    except Exception:  # noqa: BLE001 - a model whose values fail has its error reported by build
        return {}


def numeric_matrix(model: m.Model, mat: sympy.Matrix,
                   values: Mapping[sympy.Symbol, complex]) -> tuple[np.ndarray | None, tuple[str, ...]]:
    """A symbolic matrix as complex numbers from the model's values; (None, names lacking a value) else."""
    if mat.rows == 0:
        return np.zeros((0, 0), dtype=complex), ()
    expanded = substitute_definitions(model.parameters, sympy.Matrix(mat))
    free = sorted({str(s) for s in expanded.free_symbols if s not in values})
    if free:
        return None, tuple(free)
    numbers = expanded.xreplace({s: sympy.sympify(v) for s, v in values.items() if s in expanded.free_symbols})
    return np.array(numbers.evalf(), dtype=complex), ()


def _numeric_eigenvalues(model: m.Model, kind: str, mass: sympy.Matrix, kin: sympy.Matrix,
                         kin_r: sympy.Matrix | None, values: Mapping[sympy.Symbol, complex],
                         ) -> tuple[tuple[float, ...] | None, tuple[str, ...]]:
    mm, missing = numeric_matrix(model, mass, values)
    zz, missing_z = numeric_matrix(model, kin, values)
    if mm is None or zz is None:
        return None, tuple(sorted(set(missing) | set(missing_z)))
    try:
        if kind in ("scalar", "vector"):
            out = bosonic_eigensystem(mm, zz)[0]
        else:
            zr, _ = numeric_matrix(model, kin_r, values) if kin_r is not None else (zz, ())
            left, right = _inverse_root(zz), _inverse_root(zr if zr is not None else zz)
            canonical = left @ mm @ right
            out = (np.sort(np.linalg.svd(canonical, compute_uv=False)) if kind == "dirac"
                   else takagi(0.5 * (canonical + canonical.T))[0])
    except (np.linalg.LinAlgError, ValueError):
        return None, ()
    return tuple(_clean(float(x)) for x in out), ()


def _clean(x: float) -> float:
    """Rounded to 12 significant digits so that printed spectra are the same on every machine."""
    return float(f"{x:.12g}") + 0.0


def _inverse_root(z: np.ndarray) -> np.ndarray:
    """Z^(-1/2) of a positive hermitian kinetic matrix (a singular or indefinite Z raises LinAlgError)."""
    values, vectors = np.linalg.eigh(0.5 * (z + z.conj().T))
    if np.any(values <= 0):
        raise np.linalg.LinAlgError("kinetic matrix is not positive")
    return vectors @ np.diag(values ** -0.5) @ vectors.conj().T


def bosonic_eigensystem(mass2: np.ndarray, kinetic: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Squared masses (ascending) and the matrix C with C^dag Z C = 1, C^dag M^2 C = diag (columns: states).

    Z^(-1/2) M^2 Z^(-1/2) is diagonalised by a hermitian eigenproblem (numpy's eigh), so the squared
    masses come out ascending; each column's sign (phase) is fixed so that its largest entry is real
    and positive, which makes the mixing matrix the same on every machine.
    """
    root = _inverse_root(kinetic)
    hermitian = root @ mass2 @ root
    hermitian = 0.5 * (hermitian + hermitian.conj().T)
    values, vectors = np.linalg.eigh(hermitian)
    return values, _fix_columns(root @ vectors)


def _fix_columns(c: np.ndarray) -> np.ndarray:
    out = c.copy()
    for k in range(c.shape[1]):
        column = c[:, k]
        lead = column[int(np.argmax(np.abs(column) > np.abs(column).max() * (1 - 1e-9)))]
        if abs(lead) > 0:
            out[:, k] = column * (abs(lead) / lead)
    return out


# ------------------------------------------------------------------ comparing with the declared masses

def compare_masses(model: m.Model, matrices: tuple[MassMatrix, ...]) -> tuple[SpectrumNote, ...]:
    """Notes where a mixed block's eigenvalues are not the declared masses of its fields.

    A field alone in its block is compared by `check` already (its diagonal entry against its
    declared mass, definitions substituted). For a mixed block the declared masses are compared,
    as a set, with the block's numeric eigenvalues: they differ when the fields are not mass
    eigenstates, which the note says together with the masses of the states.
    """
    values = _numbers(model)
    notes = []
    for mat in matrices:
        for block in mat.blocks:
            if len(block) < 2:
                continue
            idx = [mat.fields.index(f) for f in block]
            sub = sympy.ImmutableMatrix(mat.matrix.extract(idx, idx))
            kin = mat.kinetic.extract(idx, idx) if mat.kinetic is not None else sympy.eye(len(idx))
            found, _ = _numeric_eigenvalues(model, mat.kind, sub, kin, None, values)
            declared = sympy.Matrix([model.fields[f].mass ** (2 if mat.squared else 1) for f in block])
            numbers, _ = numeric_matrix(model, declared, values)
            if found is None or numbers is None:
                continue
            wanted = np.sort(numbers.real.ravel())
            scale = max(1.0, float(np.abs(wanted).max()), max(abs(x) for x in found))
            if np.allclose(np.sort(found), wanted, rtol=0, atol=MASS_TOLERANCE * scale):
                continue
            what = "mass^2" if mat.squared else "mass"
            shown = ", ".join(f"{x:.6g}" for x in found)
            names = ", ".join(f"'{f}'" for f in block)
            notes.append(SpectrumNote(
                "note", f"{names} are not mass eigenstates: the {what} eigenvalues of their block are {shown}, "
                f"the declared masses{'^2' if mat.squared else ''} {', '.join(f'{x:.6g}' for x in wanted)}",
                model.fields[block[0]].span,
                "the declared masses are parameters of the unrotated fields; rotate to mass eigenstates "
                "(rotate/diagonalise in the breaking section) to get fields with these masses"))
    return tuple(notes)


def spectrum_of(form: QuadraticForm, mixings: Sequence[MixingRecord] = ()) -> Spectrum:
    """The mass matrices of a quadratic form, their comparison with the declared masses, the rotations
    that led there (from the breaking stage) and what still mixes, pair by pair with its lines."""
    matrices = mass_matrices(form)
    mixed = tuple((a, b, tuple(sorted({s.line for s in mixing.origins}))) for mixing in form.mixings
                  for a, b in [mixing.fields])
    return Spectrum(matrices, compare_masses(form.model, matrices), tuple(mixings), mixed)


__all__ = ["MassMatrix", "MixingRecord", "Spectrum", "SpectrumNote", "bosonic_eigensystem", "compare_masses", "mass_matrices",
           "numeric_matrix", "read_block", "spectrum_of"]
