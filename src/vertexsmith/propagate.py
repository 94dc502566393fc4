"""Propagators: i x the inverse of the quadratic form K_ij(p), one block of fields at a time.

A field that nothing mixes with is a block of one and gets the familiar propagator. Fields that K
joins (kinetic mixing, mass mixing) form a block whose propagator is the matrix D = i K^-1 over
the block; every entry D_ij is a `Propagator` with `field` i and `partner` j (the diagonal
entries keep `partner` None and hold the mixing in their factor). D_ij joins the leg f_i of one
vertex to the leg conj(f_j) (f_j for real fields) of another; p runs from the conj(f_j) end to
the f_i end, along the particle arrow. The inverses, with flavour matrices in this order:

- scalars, K = k(p2):                  D = i k^-1
- vectors, K = A g + B p p:            D = i [A^-1 g - (A + p2 B)^-1 B A^-1 p p]
- Dirac,   K = pslash (a PL + b PR) + c PL + d PR:
  D = i [pslash (al PL + be PR) + ga PL + de PR] with al = (p2 b - c a^-1 d)^-1, ga = -a^-1 d al,
  be = (p2 a - d b^-1 c)^-1, de = -b^-1 c be (multiply out K D = i to check).
"""

from __future__ import annotations

from typing import Callable, Sequence

import sympy

from . import limits
from . import model as m
from .errors import DerivationError
from .spaces import index_dimension
from .quadratic import QuadraticForm
from .rules import P2, Propagator

MAX_MIXED_BLOCK = 4  # symbolic inverses of larger blocks grow past what a reader can check


def _reps(model: m.Model, f: m.Field) -> tuple[tuple[str, str, int], ...]:
    return tuple((g, rep, index_dimension(model, g, rep)) for g, rep in f.representations)


def _no_kernel(f: m.Field) -> DerivationError:
    return DerivationError(f"the field '{f.name}' has no kinetic term, so it has no propagator", f.span,
                           "add its kinetic term to the lagrangian")


def single_propagator(model: m.Model, f: m.Field, entry: dict[str, sympy.Expr], gauge: str) -> Propagator:
    """i x the inverse of the kernel of a field that mixes with no other."""
    zero = sympy.Integer(0)
    kernel = entry  # factored only as part of the propagator's coefficients, once, below
    if f.kind in ("scalar", "ghost"):
        k = kernel.get("one", zero)
        if k == 0:
            raise _no_kernel(f)
        return Propagator(f.name, "scalar", limits.factor_within_budget(sympy.I / k), zero, gauge, model,
                          _reps(model, f))
    if f.is_fermion:
        alpha, beta = kernel.get("slash_L", zero), kernel.get("slash_R", zero)
        mass_l, mass_r = kernel.get("one_L", zero), kernel.get("one_R", zero)
        if mass_l != mass_r and sympy.simplify(mass_l - mass_r) != 0:  # equal kernels need no simplify
            raise DerivationError(f"the mass terms of '{f.name}' differ between its chiralities", f.span,
                                  "write the mass as - m bar(psi) psi, or rotate the chiral phase away")
        if alpha != beta and sympy.simplify(alpha - beta) != 0:
            if mass_l != 0:
                raise DerivationError(f"'{f.name}' has a mass but chiral kinetic terms", f.span,
                                      "write the kinetic term as bar(psi) I gamma[mu] D[mu] psi")
            # K = pslash (alpha PL + beta PR)  =>  D = i (PL / alpha + PR / beta) pslash / p^2
            left = limits.factor_within_budget(sympy.I / (alpha * P2)) if alpha != 0 else zero
            right = limits.factor_within_budget(sympy.I / (beta * P2)) if beta != 0 else zero
            return Propagator(f.name, "dirac", zero, zero, gauge, model, _reps(model, f), (left, right))
        denominator = limits.factor_within_budget(alpha**2 * P2 - mass_l**2)
        if denominator == 0:
            raise _no_kernel(f)
        # (a pslash + b)^-1 = (a pslash - b) / (a^2 p^2 - b^2)
        return Propagator(f.name, "dirac", limits.factor_within_budget(sympy.I * alpha / denominator),
                          limits.factor_within_budget(-sympy.I * mass_l / denominator), gauge, model,
                          _reps(model, f))
    a, b = kernel.get("metric", zero), kernel.get("pp", zero)
    longitudinal = limits.factor_within_budget(a + b * P2)
    if a == 0 or longitudinal == 0:
        group = model.boson_group(f.name)
        if a == 0:
            hint = f"add the kinetic term -1/4 F[mu,nu] F[mu,nu] of '{f.name}'"
        elif group is not None:
            hint = f"a massless vector needs gauge fixing: remove 'fixing none' from group '{group.name}'"
        else:
            hint = "a massless vector needs gauge fixing: make it the boson of a gauge group"
        raise DerivationError(f"the quadratic kernel of '{f.name}' cannot be inverted", f.span, hint)
    # (a g + b p p)^-1 = g / a - b p p / (a (a + b p^2))
    return Propagator(f.name, "vector", limits.factor_within_budget(sympy.I / a),
                      limits.factor_within_budget(-sympy.I * b / (a * longitudinal)), gauge, model, _reps(model, f))


# ------------------------------------------------------------------ mixed blocks

def _matrix(form: QuadraticForm, block: Sequence[str], key: str) -> sympy.Matrix:
    return sympy.Matrix([[form.entry(i, j).get(key, sympy.Integer(0)) for j in block] for i in block])


def _inverse(matrix: sympy.Matrix, what: str, field: m.Field) -> sympy.Matrix:
    """The inverse of a flavour matrix of the block, entries over their common determinant."""
    det = sympy.expand(matrix.det())
    if det == 0:
        raise DerivationError(f"the quadratic kernel of the mixed fields {what} cannot be inverted", field.span,
                              "give every field of the block its kinetic term (and a massless vector its "
                              "gauge fixing)")
    return matrix.adjugate() / det


def _simplified(expr: sympy.Expr, factor: bool = True) -> sympy.Expr:
    """One fraction, factored for reading; Dirac blocks stay expanded (factoring the determinant of
    a block with complex chiral masses takes seconds)."""
    return limits.factor_within_budget(sympy.cancel(expr)) if factor else sympy.cancel(expr)


def block_propagators(form: QuadraticForm, block: Sequence[str], gauge: str) -> list[Propagator]:
    """The matrix i K^-1 over a block of mixed fields, one `Propagator` per entry, row by row."""
    model = form.model
    fields = [model.fields[name] for name in block]
    first = fields[0]
    what = ", ".join(block)
    if len(block) > MAX_MIXED_BLOCK:
        raise DerivationError(f"{len(block)} fields mix ({what}); at most {MAX_MIXED_BLOCK} can share one "
                              "propagator matrix", first.span,
                              "rotate the fields to mass eigenstates, or remove some of the mixing terms")
    zero = sympy.Integer(0)
    reps = _reps(model, first)
    out: list[Propagator] = []
    if first.kind == "scalar":
        d = _inverse(_matrix(form, block, "one"), what, first)
        for r, row in enumerate(block):
            for c, column in enumerate(block):
                out.append(Propagator(row, "scalar", _simplified(sympy.I * d[r, c]), zero, gauge, model, reps,
                                      partner=None if r == c else column))
        return out
    if first.kind == "vector":
        a, b = _matrix(form, block, "metric"), _matrix(form, block, "pp")
        x = _inverse(a, what, first)
        y = -_inverse(a + P2 * b, what, first) * b * x
        for r, row in enumerate(block):
            for c, column in enumerate(block):
                out.append(Propagator(row, "vector", _simplified(sympy.I * x[r, c]), _simplified(sympy.I * y[r, c]),
                                      gauge, model, reps, partner=None if r == c else column))
        return out
    if first.kind == "dirac":
        a, b = _matrix(form, block, "slash_L"), _matrix(form, block, "slash_R")
        c, d = _matrix(form, block, "one_L"), _matrix(form, block, "one_R")
        a_inv, b_inv = _inverse(a, what, first), _inverse(b, what, first)
        alpha = _inverse(P2 * b - c * a_inv * d, what, first)
        beta = _inverse(P2 * a - d * b_inv * c, what, first)
        gamma, delta = -a_inv * d * alpha, -b_inv * c * beta
        for r, row in enumerate(block):
            for k, column in enumerate(block):
                # pslash (al PL + be PR) = (be PL + al PR) pslash
                slash_l, slash_r = (_simplified(sympy.I * x[r, k], False) for x in (beta, alpha))
                one_l, one_r = (_simplified(sympy.I * x[r, k], False) for x in (gamma, delta))
                partner = None if r == k else column
                if sympy.cancel(slash_l - slash_r) == 0 and sympy.cancel(one_l - one_r) == 0:
                    out.append(Propagator(row, "dirac", slash_l, one_l, gauge, model, reps, partner=partner))
                else:
                    out.append(Propagator(row, "dirac", zero, zero, gauge, model, reps, (slash_l, slash_r),
                                          partner=partner, chiral_mass=(one_l, one_r)))
        return out
    raise DerivationError(f"the fields {what} mix, and {first.kind} fields have no propagator matrix yet",
                          first.span, "rotate the fields to mass eigenstates")


def propagators_from(form: QuadraticForm, gauge: str, skip: frozenset[str] = frozenset(),
                     on_block: Callable[[], None] | None = None) -> list[Propagator]:
    """Every propagator of the model, block by block in declaration order (fields in `skip` left out);
    `on_block` is called after each block (a progress bar)."""
    for mixing in form.mixings:
        if not mixing.supported:
            a, b = mixing.fields
            raise DerivationError(f"'{a}' and '{b}' mix at quadratic order: {mixing.reason}", mixing.origins[0],
                                  "rotate the fields to mass eigenstates, or remove the mixing term")
    out: list[Propagator] = []
    for block in form.blocks():
        if on_block is not None:
            on_block()
        if block[0] in skip:
            continue
        if len(block) == 1:
            f = form.model.fields[block[0]]
            out.append(single_propagator(form.model, f, dict(form.entry(f.name, f.name)), gauge))
        else:
            out.extend(block_propagators(form, block, gauge))
    return out


__all__ = ["MAX_MIXED_BLOCK", "block_propagators", "propagators_from", "single_propagator"]
