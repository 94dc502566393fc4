"""The Lagrangian multiplied out into monomials: coefficient times ordered field factors.

Brackets are multiplied out keeping the order of factors; a derivative acts on the factor that
follows it (Leibniz rule over a bracket); D[mu] adds its gauge-field terms from the charges of
what it acts on; field strengths and definitions are expanded with fresh dummy indices on every
use; `+ h.c.` appends the hermitian conjugate of its sum.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field, replace
from typing import Callable, Union

import sympy

from . import model as m
from .errors import DerivationError, ModelMeaningError, Span

MAX_MONOMIALS_PER_TERM = 20_000
MAX_MONOMIALS = 200_000
MAX_FIELDS_PER_MONOMIAL = 12


@dataclass(frozen=True)
class FieldAtom:
    """One field factor: field name, conjugation (bar/dag), Lorentz index, derivative indices."""

    field: str
    conjugate: bool
    index: str | None
    derivatives: tuple[str, ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class DiracAtom:
    """A Dirac matrix inside a spinor chain: gamma, gamma5, PL, PR, sigma."""

    kind: str
    indices: tuple[str, ...]
    span: Span = field(compare=False)


@dataclass(frozen=True)
class TensorAtom:
    """A numeric Lorentz tensor: g or eps."""

    kind: str
    indices: tuple[str, ...]
    span: Span = field(compare=False)


Atom = Union[FieldAtom, DiracAtom, TensorAtom]


@dataclass(frozen=True)
class Monomial:
    """coefficient x atoms (in written order). `origin` is the Lagrangian line it came from."""

    coefficient: sympy.Expr
    atoms: tuple[Atom, ...]
    origin: Span = field(compare=False)

    @property
    def fields(self) -> tuple[FieldAtom, ...]:
        return tuple(a for a in self.atoms if isinstance(a, FieldAtom))


@dataclass(frozen=True)
class _Partial:
    coefficient: sympy.Expr
    atoms: tuple[Atom, ...]
    pending: tuple[m.LDerivative, ...] = ()


_CONJUGATE_DIRAC = {"gamma": ("gamma", 1), "sigma": ("sigma", 1), "gamma5": ("gamma5", -1),
                    "PL": ("PR", 1), "PR": ("PL", 1)}


class _Expander:
    def __init__(self, model: m.Model) -> None:
        self.model = model
        self.counter = itertools.count(1)
        self._definition_cache: dict[str, list[_Partial]] = {}

    def fresh(self, name: str) -> str:
        return f"{name.split('#')[0]}#{next(self.counter)}"

    # ------------------------------------------------------------------ atoms and partials
    def conjugate(self, p: _Partial) -> _Partial:
        """Hermitian conjugate: reverse the order, conjugate each factor and the coefficient."""
        coefficient = sympy.conjugate(p.coefficient)
        atoms: list[Atom] = []
        for atom in reversed(p.atoms):
            if isinstance(atom, FieldAtom):
                f = self.model.fields[atom.field]
                atoms.append(replace(atom, conjugate=(not atom.conjugate) if f.is_complex else atom.conjugate))
            elif isinstance(atom, DiracAtom):
                kind, sign = _CONJUGATE_DIRAC[atom.kind]
                coefficient = coefficient * sign
                atoms.append(replace(atom, kind=kind))
            else:
                atoms.append(atom)
        return _Partial(coefficient, tuple(atoms))

    def rename(self, partials: list[_Partial], mapping: Callable[[str], str]) -> list[_Partial]:
        out = []
        for p in partials:
            atoms: list[Atom] = []
            for a in p.atoms:
                if isinstance(a, FieldAtom):
                    atoms.append(replace(a, index=mapping(a.index) if a.index else None,
                                         derivatives=tuple(mapping(i) for i in a.derivatives)))
                else:
                    atoms.append(replace(a, indices=tuple(mapping(i) for i in a.indices)))
            pending = tuple(replace(op, index=mapping(op.index)) for op in p.pending)
            out.append(_Partial(p.coefficient, tuple(atoms), pending))
        return out

    def refresh_dummies(self, partials: list[_Partial], keep: dict[str, str]) -> list[_Partial]:
        """Rename every index not in `keep` to a fresh name, one fresh name per old name."""
        fresh: dict[str, str] = {}

        def mapping(name: str) -> str:
            if name in keep:
                return keep[name]
            if name not in fresh:
                fresh[name] = self.fresh(name)
            return fresh[name]

        return self.rename(partials, mapping)

    # ------------------------------------------------------------------ derivatives
    def apply(self, op: m.LDerivative, p: _Partial) -> list[_Partial]:
        """An operator acting on one product: Leibniz over its fields, plus gauge terms for D."""
        positions = [k for k, a in enumerate(p.atoms) if isinstance(a, FieldAtom)]
        if not positions:
            name = "D" if op.covariant else "d"
            raise ModelMeaningError(f"{name}[{op.index.split('#')[0]}] acts on a factor without fields", op.span,
                                    f"write the derivative directly before the field or bracket it differentiates")
        out: list[_Partial] = []
        for k in positions:
            atom = p.atoms[k]
            assert isinstance(atom, FieldAtom)
            new = replace(atom, derivatives=atom.derivatives + (op.index,))
            out.append(_Partial(p.coefficient, p.atoms[:k] + (new,) + p.atoms[k + 1:]))
        if op.covariant:
            sign = self.model.conventions.covariant_sign
            for group in self.model.groups.values():
                charge = sum((self.model.fields[a.field].charge(group.name) * (-1 if a.conjugate else 1)
                              for a in p.atoms if isinstance(a, FieldAtom)), start=0)
                if charge == 0:
                    continue
                q = sympy.Rational(charge.numerator, charge.denominator)
                boson = FieldAtom(group.boson, False, op.index, (), op.span)
                out.append(_Partial(p.coefficient * (-sympy.I * sign * group.coupling * q), (boson,) + p.atoms))
        return out

    # ------------------------------------------------------------------ expansion
    def product(self, left: list[_Partial], right: list[_Partial], span: Span) -> list[_Partial]:
        out: list[_Partial] = []
        for lp in left:
            for rp in right:
                operands = [rp]
                for op in reversed(lp.pending):
                    if any(o.pending for o in operands):
                        raise ModelMeaningError("two derivatives without a factor between them cannot be read",
                                                op.span, "write d[mu] d[nu] phi with the field after them")
                    operands = [q for o in operands for q in self.apply(op, o)]
                for rq in operands:
                    out.append(_Partial(lp.coefficient * rq.coefficient, lp.atoms + rq.atoms, rq.pending))
            if len(out) > MAX_MONOMIALS_PER_TERM:
                raise DerivationError(f"this term expands into more than {MAX_MONOMIALS_PER_TERM} monomials", span,
                                      "split the term, or lower the powers in it")
        return out

    def expand(self, node: m.LNode) -> list[_Partial]:
        if isinstance(node, m.LScalar):
            return [_Partial(node.value, ())]
        if isinstance(node, m.LField):
            return [_Partial(sympy.Integer(1), (FieldAtom(node.field, node.conjugate, node.index, (), node.span),))]
        if isinstance(node, m.LDirac):
            return [_Partial(sympy.Integer(1), (DiracAtom(node.kind, node.indices, node.span),))]
        if isinstance(node, m.LTensor):
            return [_Partial(sympy.Integer(1), (TensorAtom(node.kind, node.indices, node.span),))]
        if isinstance(node, m.LDerivative):
            return [_Partial(sympy.Integer(1), (), (node,))]
        if isinstance(node, m.LStrength):
            group = self.model.groups[node.group]
            mu, nu = node.indices
            a = FieldAtom(group.boson, False, nu, (mu,), node.span)
            b = FieldAtom(group.boson, False, mu, (nu,), node.span)
            return [_Partial(sympy.Integer(1), (a,)), _Partial(sympy.Integer(-1), (b,))]
        if isinstance(node, m.LDefinitionUse):
            definition = self.model.definitions[node.name]
            if node.name not in self._definition_cache:
                self._definition_cache[node.name] = self.expand(definition.body)
            keep = dict(zip(definition.indices, node.indices))
            return self.refresh_dummies(self._definition_cache[node.name], keep)
        if isinstance(node, m.LSum):
            out: list[_Partial] = []
            for sign, term in node.terms:
                out.extend(_Partial(sign * p.coefficient, p.atoms, p.pending) for p in self.expand(term))
            if node.has_hc:
                for p in out:
                    if p.pending:
                        raise ModelMeaningError("a derivative with nothing to act on cannot be conjugated",
                                                p.pending[0].span, "put the derivative before a field")
                out = out + [self.conjugate(p) for p in out]
            return out
        if isinstance(node, m.LProduct):
            result = [_Partial(sympy.Integer(1), ())]
            for factor in node.factors:
                result = self.product(result, self.expand(factor), node.span)
            return result
        if isinstance(node, m.LPower):
            base = self.expand(node.base)
            result = base
            for _ in range(node.exponent - 1):
                result = self.product(result, self.refresh_dummies(base, {}), node.span)
            return result
        if isinstance(node, m.LDagger):
            inner = self.expand(node.inner)
            for p in inner:
                if p.pending:
                    raise ModelMeaningError("a derivative inside dag() needs a field after it", p.pending[0].span,
                                            "write dag(D[mu] s)")
            return [self.conjugate(p) for p in inner]
        raise TypeError(f"unexpected node {node!r}")  # pragma: no cover


def _canonical_indices(atoms: tuple[Atom, ...]) -> tuple[Atom, ...]:
    """Rename dummy indices by order of appearance, so equal monomials compare equal."""
    names: dict[str, str] = {}

    def rename(name: str) -> str:
        if name not in names:
            names[name] = f"i{len(names) + 1}"
        return names[name]

    out: list[Atom] = []
    for a in atoms:
        if isinstance(a, FieldAtom):
            out.append(replace(a, index=rename(a.index) if a.index else None,
                               derivatives=tuple(rename(i) for i in a.derivatives)))
        else:
            out.append(replace(a, indices=tuple(rename(i) for i in a.indices)))
    return tuple(out)


def expand_term(model: m.Model, term: m.Term, expander: "_Expander | None" = None) -> list[Monomial]:
    """One Lagrangian line as monomials, like terms combined, zeros dropped."""
    expander = expander or _Expander(model)
    partials = expander.expand(term.node)
    combined: dict[tuple[Atom, ...], sympy.Expr] = {}
    for p in partials:
        if p.pending:
            op = p.pending[-1]
            raise ModelMeaningError(f"{'D' if op.covariant else 'd'}[{op.index.split('#')[0]}] has nothing to act on",
                                    op.span, "put the derivative before the field or bracket it differentiates")
        if sum(isinstance(a, FieldAtom) for a in p.atoms) > MAX_FIELDS_PER_MONOMIAL:
            raise DerivationError(f"a monomial of this term has more than {MAX_FIELDS_PER_MONOMIAL} fields",
                                  term.span, "vertices with at most 12 legs are supported")
        key = _canonical_indices(p.atoms)
        combined[key] = combined.get(key, sympy.Integer(0)) + p.coefficient
    out = []
    for atoms, coefficient in combined.items():
        coefficient = sympy.expand(coefficient)
        if coefficient != 0:
            out.append(Monomial(coefficient, atoms, term.span))
    return out


def expand_model(model: m.Model) -> tuple[Monomial, ...]:
    """Every monomial of the Lagrangian, term by term in written order."""
    expander = _Expander(model)
    out: list[Monomial] = []
    for term in model.terms:
        out.extend(expand_term(model, term, expander))
        if len(out) > MAX_MONOMIALS:
            raise DerivationError(f"the Lagrangian expands into more than {MAX_MONOMIALS} monomials", term.span,
                                  "split the model or simplify its terms")
    return tuple(out)
