"""The Lagrangian multiplied out into monomials: coefficient times ordered field factors.

Brackets are multiplied out keeping the order of factors; a derivative acts on the factor that
follows it (Leibniz rule over a bracket); D[mu] adds its gauge-field terms from the charges of
what it acts on; field strengths and definitions are expanded with fresh dummy indices on every
use; `+ h.c.` appends the hermitian conjugate of its sum.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, replace
from typing import Callable

import sympy

from . import limits
from . import model as m
from .errors import DerivationError, ModelMeaningError, Span
from .symbolic import is_plain_product  # noqa: F401 - derive reads it from here too
from .atoms import Atom, DiracAtom, FieldAtom, GroupAtom, Monomial, ParamAtom, TensorAtom
from .chain_flow import orient_majorana_chains
from .alternating import contract_alternating

MAX_MONOMIALS_PER_TERM = limits.TERMS_PER_LINE.limit
MAX_MONOMIALS = limits.MONOMIALS.limit
MAX_FIELDS_PER_MONOMIAL = limits.LEGS.limit


def conjugate_param(model: m.Model, atom: ParamAtom) -> ParamAtom:
    """The complex conjugate of a parameter component: conj(Y[i,j]), or Y[j,i] when Y is hermitian."""
    p = model.parameters[atom.name]
    if p.matrix == "hermitian":
        return replace(atom, indices=atom.indices[::-1])
    return replace(atom, conjugate=(not atom.conjugate) if p.is_complex else False)


@dataclass(frozen=True)
class _Partial:
    coefficient: sympy.Expr
    atoms: tuple[Atom, ...]
    pending: tuple[m.LDerivative, ...] = ()
    stranded: bool = False  # pending D[mu] left by a constant summand beside charged fields


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
                # bar() flips for every fermion: (bar(chi) G psi)^dag = bar(psi) G' chi, Majorana chi too
                atoms.append(replace(atom, conjugate=(not atom.conjugate) if f.two_ended else atom.conjugate))
            elif isinstance(atom, DiracAtom):
                kind, sign = _CONJUGATE_DIRAC[atom.kind]
                coefficient = coefficient * sign
                atoms.append(replace(atom, kind=kind))
            elif isinstance(atom, ParamAtom):
                atoms.append(conjugate_param(self.model, atom))
            elif isinstance(atom, GroupAtom) and atom.kind == "T" and len(atom.indices) == 3:
                a, i, j = atom.indices  # (T^a_ij)* = T^a_ji: generators are hermitian
                atoms.append(replace(atom, indices=(a, j, i)))
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
                                         derivatives=tuple(mapping(i) for i in a.derivatives),
                                         group_indices=tuple((g, mapping(i) if i else None)
                                                             for g, i in a.group_indices)))
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
                                    "write the derivative directly before the field or bracket it differentiates")
        out: list[_Partial] = []
        for k in positions:
            atom = p.atoms[k]
            assert isinstance(atom, FieldAtom)
            new = replace(atom, derivatives=atom.derivatives + (op.index,))
            out.append(_Partial(p.coefficient, p.atoms[:k] + (new,) + p.atoms[k + 1:]))
        if op.covariant:
            sign = self.model.conventions.covariant_sign
            for group in self.model.groups.values():
                if not group.abelian:
                    out.extend(self._non_abelian_terms(op, p, group, sign))
                    continue
                charge = sum((self.model.fields[a.field].charge(group.name) * (-1 if a.conjugate else 1)
                              for a in p.atoms if isinstance(a, FieldAtom)), start=0)
                if charge == 0:
                    continue
                q = sympy.Rational(charge.numerator, charge.denominator)
                boson = FieldAtom(group.boson, False, op.index, (), op.span)
                out.append(_Partial(p.coefficient * (-sympy.I * sign * group.coupling * q), (boson,) + p.atoms))
        return out

    def _non_abelian_terms(self, op: m.LDerivative, p: _Partial, group: m.GaugeGroup,
                           sign: int) -> list[_Partial]:
        """-i s g A^a T^a on every field of the operand in a representation of the group.

        A field acting as a column (an unconjugated fundamental) gets T^a before it; a row
        (a conjugated fundamental, or an antifundamental) gets T^a after it, with the opposite
        sign of i; an adjoint field gets s g f^{abc} A^b (its own index a, new index c).
        """
        out: list[_Partial] = []
        g = group.coupling
        for k, atom in enumerate(p.atoms):
            if not isinstance(atom, FieldAtom):
                continue
            rep = self.model.fields[atom.field].representation(group.name)
            if rep is None:
                continue
            a = self.fresh("a")
            boson = FieldAtom(group.boson, False, op.index, (), op.span, ((group.name, a),))
            index = atom.group_index(group.name)
            if rep == "adjoint":
                c = self.fresh("c")
                moved = replace(atom, group_indices=_set_group_index(atom, group.name, c))
                f_atom = GroupAtom("f", group.name, (index or "", a, c), op.span)
                atoms = (boson, f_atom) + p.atoms[:k] + (moved,) + p.atoms[k + 1:]
                out.append(_Partial(p.coefficient * sign * g, atoms))
                continue
            row = atom.conjugate == (rep == "fundamental")
            coefficient = p.coefficient * (sympy.I if row else -sympy.I) * sign * g
            if index is None:
                t_atom = GroupAtom("T", group.name, (a,), op.span)
                inserted = (atom, t_atom) if row else (t_atom, atom)
                out.append(_Partial(coefficient, (boson,) + p.atoms[:k] + inserted + p.atoms[k + 1:]))
            else:
                j = self.fresh("j")
                moved = replace(atom, group_indices=_set_group_index(atom, group.name, j))
                t_atom = GroupAtom("T", group.name, (a, j, index) if row else (a, index, j), op.span)
                out.append(_Partial(coefficient, (boson, t_atom) + p.atoms[:k] + (moved,) + p.atoms[k + 1:]))
        return out

    def _charged(self, atom: FieldAtom) -> bool:
        f = self.model.fields[atom.field]
        return bool(f.representations) or any(q != 0 for _, q in f.charges)

    # ------------------------------------------------------------------ expansion
    def product(self, left: list[_Partial], right: list[_Partial], span: Span) -> list[_Partial]:
        out: list[_Partial] = []
        # a factor that holds a field takes the derivatives before it whole: its field-free summands
        # (the m of (m + s)) are differentiated to zero rather than passed over
        holds_field = any(isinstance(a, FieldAtom) for rp in right for a in rp.atoms)
        # D[mu] beside charged fields would owe a constant summand a gauge term it cannot have: left
        # pending, it is reported (a vacuum value belongs inside a field shift, not beside the field)
        charged = holds_field and any(self._charged(a) for rp in right for a in rp.atoms if isinstance(a, FieldAtom))
        for lp in left:
            if lp.stranded:
                op = next(op for op in lp.pending if op.covariant)
                raise ModelMeaningError(f"D[{op.index.split('#')[0]}] acts on a constant summand beside charged fields, "
                                        "and a constant carries no gauge term", op.span,
                                        "write the vacuum value inside the field, or use d[mu] with the gauge terms "
                                        "written out")
            for rp in right:
                if lp.pending and not any(isinstance(a, FieldAtom) for a in rp.atoms):
                    if holds_field and not rp.pending and not (charged and any(op.covariant for op in lp.pending)):
                        continue  # d[mu] of a constant summand vanishes
                    # a derivative passes over constant factors (numbers, Dirac matrices) to the next field;
                    # d[mu] d[nu] phi: the second operator joins the first, both act on phi
                    if rp.pending and rp.atoms:
                        raise ModelMeaningError("a derivative acts on a constant factor", rp.pending[0].span,
                                                "write the derivatives directly before the field")
                    out.append(_Partial(lp.coefficient * rp.coefficient, lp.atoms + rp.atoms,
                                        lp.pending + rp.pending, stranded=holds_field and not rp.pending))
                    continue
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
            return [_Partial(sympy.Integer(1), (FieldAtom(node.field, node.conjugate, node.index, (), node.span,
                                                          node.group_indices, node.charge_conjugate),))]
        if isinstance(node, m.LGroup):
            return [_Partial(sympy.Integer(1), (GroupAtom(node.kind, node.group, node.indices, node.span),))]
        if isinstance(node, m.LParam):
            if node.conjugate and self.model.parameters[node.name].matrix == "hermitian":
                return [_Partial(sympy.Integer(1), (ParamAtom(node.name, node.indices[::-1], False, node.span),))]
            return [_Partial(sympy.Integer(1), (ParamAtom(node.name, node.indices, node.conjugate, node.span),))]
        if isinstance(node, m.LDirac):
            return [_Partial(sympy.Integer(1), (DiracAtom(node.kind, node.indices, node.span),))]
        if isinstance(node, m.LTensor):
            return [_Partial(sympy.Integer(1), (TensorAtom(node.kind, node.indices, node.span),))]
        if isinstance(node, m.LDerivative):
            return [_Partial(sympy.Integer(1), (), (node,))]
        if isinstance(node, m.LStrength):
            group = self.model.groups[node.group]
            mu, nu = node.indices
            if group.abelian:
                a = FieldAtom(group.boson, False, nu, (mu,), node.span)
                b = FieldAtom(group.boson, False, mu, (nu,), node.span)
                return [_Partial(sympy.Integer(1), (a,)), _Partial(sympy.Integer(-1), (b,))]
            # F^a = d A^a - d A^a + s g f^{abc} A^b A^c; an implied adjoint index is paired later
            index = node.group_index or self.fresh("@adj")
            adjoint = ((group.name, index),)
            a = FieldAtom(group.boson, False, nu, (mu,), node.span, adjoint)
            b = FieldAtom(group.boson, False, mu, (nu,), node.span, adjoint)
            ib, ic = self.fresh("b"), self.fresh("c")
            f_atom = GroupAtom("f", group.name, (index, ib, ic), node.span)
            quadratic = (f_atom, FieldAtom(group.boson, False, mu, (), node.span, ((group.name, ib),)),
                         FieldAtom(group.boson, False, nu, (), node.span, ((group.name, ic),)))
            s_g = self.model.conventions.covariant_sign * group.coupling
            return [_Partial(sympy.Integer(1), (a,)), _Partial(sympy.Integer(-1), (b,)), _Partial(s_g, quadratic)]
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
                    op = p.pending[0]
                    name = f"{'D' if op.covariant else 'd'}[{op.index.split('#')[0]}]"
                    raise ModelMeaningError(f"{name} inside dag() reaches a part without a field (a constant summand "
                                            "of what it acts on) and has nothing to differentiate there", op.span,
                                            f"apply {name} to the field part only, e.g. dag({name} s) for "
                                            "a definition v + s")
            return [self.conjugate(p) for p in inner]
        raise TypeError(f"unexpected node {node!r}")  # pragma: no cover


def _canonical_indices(atoms: tuple[Atom, ...]) -> tuple[Atom, ...]:
    """Rename dummy indices by order of appearance, so equal monomials compare equal."""
    names: dict[str, str] = {}

    def rename(name: str) -> str:
        # keep the name the user wrote in front, for error messages; number by order of appearance
        if name not in names:
            names[name] = f"{name.split('#')[0]}#{len(names) + 1}"
        return names[name]

    out: list[Atom] = []
    for a in atoms:
        if isinstance(a, FieldAtom):
            out.append(replace(a, index=rename(a.index) if a.index else None,
                               derivatives=tuple(rename(i) for i in a.derivatives),
                               group_indices=tuple((g, rename(i) if i else None) for g, i in a.group_indices)))
        else:
            out.append(replace(a, indices=tuple(rename(i) for i in a.indices)))
    return tuple(out)


def _set_group_index(atom: FieldAtom, group: str, index: str) -> tuple[tuple[str, str | None], ...]:
    return tuple((g, index if g == group else i) for g, i in atom.group_indices)


def _implied_group_indices(model: m.Model, atoms: tuple[Atom, ...], expander: "_Expander",
                           span: Span) -> tuple[Atom, ...]:
    """Write implied group indices out: row ... T^a T^b ... column chains, and pairs of implied adjoints.

    A conjugated fundamental (bar(q), dag(phi)) or an unconjugated antifundamental opens a chain,
    matrices T[a] extend it, and the next field acting as a column closes it.
    """
    result = list(atoms)
    for group in model.groups.values():
        if group.abelian:
            continue
        open_at: int | None = None
        current = ""
        for k, atom in enumerate(result):
            if isinstance(atom, GroupAtom) and atom.group == group.name and atom.kind == "T" and len(atom.indices) == 1:
                if open_at is None:
                    raise ModelMeaningError("the generator T stands outside a row ... column product", atom.span,
                                            "write T[a] between a conjugated and an unconjugated field, "
                                            "as in bar(q) gamma[mu] T[a] q, or give it indices T[a,i,j]")
                nxt = expander.fresh("i")
                result[k] = replace(atom, indices=(atom.indices[0], current, nxt))
                current = nxt
                continue
            if not isinstance(atom, FieldAtom):
                continue
            rep = model.fields[atom.field].representation(group.name)
            if rep in (None, "adjoint") or atom.group_index(group.name) is not None:
                continue
            row = atom.conjugate == (rep == "fundamental")
            if row:
                if open_at is not None:
                    raise ModelMeaningError(f"two conjugated {group.name} fields in a row: the implied "
                                            "contraction is ambiguous", atom.span,
                                            "write the group indices out, e.g. dag(phi[i]) phi[i]")
                current = expander.fresh("i")
                open_at = k
                result[k] = replace(atom, group_indices=_set_group_index(atom, group.name, current))
            else:
                if open_at is None:
                    if rep == "antifundamental":
                        raise ModelMeaningError(f"the implied {group.name} index of the antifundamental "
                                                f"'{atom.field}' cannot be read here: a conjugated antifundamental "
                                                "closes a row ... column product instead of opening it", atom.span,
                                                f"write its indices out, e.g. bar({atom.field}[i]) ... "
                                                f"{atom.field}[i]")
                    raise ModelMeaningError(f"'{atom.field}' has no conjugated {group.name} partner before it",
                                            atom.span, "write the conjugated field first, as in bar(q) q, "
                                            "or write the group indices out")
                result[k] = replace(atom, group_indices=_set_group_index(atom, group.name, current))
                open_at = None
        if open_at is not None:
            atom = result[open_at]
            raise ModelMeaningError(f"the implied {group.name} index of this field is not contracted",
                                    atom.span, "close the product with an unconjugated field, or write indices out")
        # implied adjoint indices of field strengths pair up
        implied: set[str] = set()
        for atom in result:
            index = atom.group_index(group.name) if isinstance(atom, FieldAtom) else None
            if index is not None and index.startswith("@adj"):
                implied.add(index)
        f_names = {a.indices[0] for a in result if isinstance(a, GroupAtom) and a.kind == "f"
                   and a.group == group.name and a.indices[0].startswith("@adj")}
        names = sorted(implied | f_names)
        if names:
            if len(names) != 2:
                raise ModelMeaningError(f"implied adjoint indices of {group.name} pair up only between two field "
                                        "strengths", span, "write the adjoint indices out, e.g. F[mu,nu,a] F[mu,nu,a]")
            shared = expander.fresh("a")
            rename = {names[0]: shared, names[1]: shared}
            for k, atom in enumerate(result):
                if isinstance(atom, FieldAtom):
                    result[k] = replace(atom, group_indices=tuple((g, rename.get(i, i) if i else None)
                                                                  for g, i in atom.group_indices))
                elif isinstance(atom, GroupAtom):
                    result[k] = replace(atom, indices=tuple(rename.get(i, i) for i in atom.indices))
    return tuple(result)


def expand_term(model: m.Model, term: m.Term, expander: "_Expander | None" = None) -> list[Monomial]:
    """One Lagrangian line as monomials, like terms combined, zeros dropped."""
    expander = expander or _Expander(model)
    partials = expander.expand(term.node)
    # summands are gathered and added once: adding them one by one is quadratic in their number
    combined: dict[tuple[Atom, ...], list[sympy.Expr]] = {}
    for p in partials:
        if p.pending:
            op = p.pending[-1]
            raise ModelMeaningError(f"{'D' if op.covariant else 'd'}[{op.index.split('#')[0]}] has nothing to act on",
                                    op.span, "put the derivative before the field or bracket it differentiates")
        if sum(isinstance(a, FieldAtom) for a in p.atoms) > MAX_FIELDS_PER_MONOMIAL:
            raise DerivationError(f"a monomial of this term has more than {MAX_FIELDS_PER_MONOMIAL} fields",
                                  term.span, "vertices with at most 12 legs are supported")
        atoms = _implied_group_indices(model, p.atoms, expander, term.span) if model.has_non_abelian else p.atoms
        for factor, reduced in contract_alternating(atoms, MAX_MONOMIALS_PER_TERM):
            key = _canonical_indices(reduced)
            combined.setdefault(key, []).append(p.coefficient * factor)
    out = []
    for atoms, summands in combined.items():
        coefficient = sympy.Add(*summands)
        if not is_plain_product(coefficient):
            limits.check_expansion(coefficient, term.span, "the coefficient of this term")
            coefficient = sympy.expand(coefficient)
        if coefficient != 0:
            out.append(Monomial(coefficient, atoms, term.span))
    return out


def expand_model(model: m.Model) -> tuple[Monomial, ...]:
    """Every monomial of the Lagrangian, term by term in written order, Majorana chains in flow form."""
    expander = _Expander(model)
    out: list[Monomial] = []
    if len(model.terms) > limits.LAGRANGIAN_LINES.limit:  # before any of them is expanded
        raise limits.over_budget(limits.LAGRANGIAN_LINES, len(model.terms),
                                 model.terms[limits.LAGRANGIAN_LINES.limit].span, "the Lagrangian")
    for term in model.terms:
        out.extend(expand_term(model, term, expander))
        if len(out) > MAX_MONOMIALS:
            raise DerivationError(f"the Lagrangian expands into more than {MAX_MONOMIALS} monomials", term.span,
                                  "split the model or simplify its terms")
    if any(f.kind == "majorana" for f in model.fields.values()) or any(
            isinstance(a, FieldAtom) and a.charge_conjugate for mono in out for a in mono.atoms):
        out = [flowed for mono in out for flowed in orient_majorana_chains(model, mono)]
    return tuple(out)
