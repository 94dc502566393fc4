"""The quadratic part of the action as one matrix K_ij(p) over all fields, in momentum space.

Every monomial with two fields adds to one entry. Entry (i, j) is Gamma_2 / i on the legs
(conj f_i, f_j) for complex fields and Dirac fermions, (f_i, f_j) for real fields, read with
momentum -p on the first leg and +p on the second: momentum conservation is built in, so a total
derivative or cross terms that cancel leave a zero entry. All monomials of an entry are summed
and simplified before the entry is judged, so a mixing is an off-diagonal entry that is non-zero
after simplification. Propagators (`propagate`), and the mixing, kinetic and mass checks
(`check`), all read this one object.

An entry is a small dict from its Lorentz/Dirac shape to a coefficient, p.p kept as the symbol
`P2`: 'one' (no index), 'metric' (g^{mu nu}), 'pp' (p^mu p^nu), 'p' (p^mu on the vector leg of a
vector-scalar entry); for Dirac fermions 'slash_L', 'slash_R', 'one_L', 'one_R', meaning
K = pslash (slash_L PL + slash_R PR) + one_L PL + one_R PR. Canonical terms give: scalar
one = p2 - m^2; Dirac slash_L = slash_R = 1, one_L = one_R = -m; vector metric = -p2 + m^2.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass
from typing import Iterable, Mapping, Sequence

import sympy

from . import model as m
from .derive import Species, make_legs, monomial_terms, species_label, species_of
from .errors import DerivationError, Span
from .expand import Monomial
from .rules import P2
from .structures import Chiral, Dot, Gamma, GroupDelta, Metric, Momentum, Sigma, Vector
from .values import substitute_definitions

Pair = tuple[str, str]
Entry = Mapping[str, sympy.Expr]


@dataclass(frozen=True)
class Mixing:
    """Two different fields joined by a non-zero entry of K, with the Lagrangian lines that join them.

    `supported` is False where no propagator matrix is derived for the pair (a vector with a scalar,
    a real field with a complex one, a complex field paired with itself or another without a
    conjugate); `reason` then says why, in the user's words.
    """

    fields: Pair
    origins: tuple[Span, ...]
    supported: bool = True
    reason: str = ""


@dataclass(frozen=True)
class QuadraticForm:
    """K_ij(p) over all fields: simplified non-zero entries, the lines behind them, and the mixings."""

    model: m.Model
    entries: Mapping[Pair, Entry]
    origins: Mapping[Pair, tuple[Span, ...]]
    mixings: tuple[Mixing, ...]

    def entry(self, row: str, column: str) -> Entry:
        """The entry K_(row, column), empty when it is zero."""
        return self.entries.get((row, column), {})

    def blocks(self) -> list[tuple[str, ...]]:
        """The fields grouped into blocks that K joins (supported mixings only), in declaration order."""
        order = {name: k for k, name in enumerate(self.model.fields)}
        parent = {name: name for name in self.model.fields}

        def find(x: str) -> str:
            while parent[x] != x:
                parent[x] = parent[parent[x]]
                x = parent[x]
            return x

        for mixing in self.mixings:
            if mixing.supported:
                a, b = (find(f) for f in mixing.fields)
                if a != b:
                    parent[max(a, b, key=order.__getitem__)] = min(a, b, key=order.__getitem__)
        groups: dict[str, list[str]] = defaultdict(list)
        for name in self.model.fields:
            groups[find(name)].append(name)
        return sorted((tuple(g) for g in groups.values()), key=lambda g: order[g[0]])


# ------------------------------------------------------------------ reading one entry

def _momentum_sign(mom: Momentum) -> sympy.Expr:
    """With p(leg 1) = -p and p(leg 2) = +p, a combination sum c_k p_k equals (this) x p."""
    return sympy.Add(*[(-1 if leg == 1 else 1) * sympy.Rational(c.numerator, c.denominator)
                       for leg, c in mom.terms])


def read_entry(model: m.Model, legs: Sequence[Species], monomials: Iterable[Monomial]) -> dict[str, sympy.Expr]:
    """The summed, expanded entry of K on two legs from the monomials with those two fields."""
    leg_objects = make_legs(model, list(legs))
    who = " and ".join(dict.fromkeys(species_label(model, s) for s in legs))
    entry: dict[str, sympy.Expr] = defaultdict(lambda: sympy.Integer(0))
    for mono in monomials:
        for coefficient, structure in monomial_terms(model, mono, leg_objects):
            if any(not isinstance(g, GroupDelta) for g in structure.group):
                # a mass matrix over an index space lands here too: say so, since it needs a rotation
                raise DerivationError(f"the quadratic terms of {who} are not diagonal in their group or "
                                      "index-space indices", mono.origin,
                                      "write the kinetic and mass terms with the indices contracted; a mass "
                                      "matrix over an index space must be diagonalised first (rotate the fields "
                                      "to mass eigenstates)")
            value = coefficient / sympy.I
            key = "one"
            vectors = 0
            for t in structure.tensors:
                if isinstance(t, Dot):
                    value *= _momentum_sign(t.p) * _momentum_sign(t.q) * P2
                elif isinstance(t, Metric):
                    key = "metric"
                elif isinstance(t, Vector):
                    value *= _momentum_sign(t.momentum)
                    vectors += 1
                    key = "pp" if vectors == 2 else "p"
                else:
                    raise DerivationError(f"the quadratic terms of {who} contain an epsilon tensor", mono.origin,
                                          "parity-odd kinetic terms are not supported")
            for chain in structure.chains:
                if any(isinstance(mat, Sigma) for mat in chain.matrices):
                    raise DerivationError(f"the quadratic terms of {who} contain sigma[mu,nu]", mono.origin,
                                          "write Dirac kinetic and mass terms as bar(psi) (I gamma[mu] d[mu] - m) psi")
                slashes = [mat for mat in chain.matrices if isinstance(mat, Gamma)]
                if len(slashes) == 1 and isinstance(slashes[0].slot, Momentum):
                    value *= _momentum_sign(slashes[0].slot)
                    key = "slash"
                elif slashes:
                    raise DerivationError(f"cannot read the quadratic terms of {who}", mono.origin)
                # 1 = PL + PR and gamma5 = PR - PL: each chirality separately
                chiral = [mat.kind for mat in chain.matrices if isinstance(mat, Chiral)]
                weights = {"PL": {"L": 1}, "PR": {"R": 1}, "gamma5": {"L": -1, "R": 1}}.get(
                    chiral[0] if chiral else "", {"L": 1, "R": 1})
                for hand, w in weights.items():
                    entry[f"{key}_{hand}"] += w * value
            if not structure.chains:
                entry[key] += value
    return {k: v for k, v in ((k, sympy.expand(v)) for k, v in entry.items()) if v != 0}


def _vanishes(model: m.Model, entry: dict[str, sympy.Expr]) -> dict[str, sympy.Expr]:
    """The entry with coefficients that simplify to zero removed (expand missed trigonometry, roots, and
    parameters defined by formulas: mA G d.A cancels g v A.dG when mA = g v)."""
    return {k: v for k, v in entry.items()
            if sympy.simplify(v) != 0 and sympy.simplify(substitute_definitions(model.parameters, v)) != 0}


# ------------------------------------------------------------------ the whole form

def _pairing(model: m.Model, key: tuple[Species, Species]) -> tuple[list[tuple[Species, Species]], str]:
    """The leg orders whose entries a two-field group fills, and why K cannot hold it ('' if it can)."""
    (f1, c1), (f2, c2) = key
    a, b = model.fields[f1], model.fields[f2]
    conjugated = a.two_ended, b.two_ended  # bar()/dag() is a leg of its own
    if conjugated == (False, False):
        return ([((f1, False), (f2, False)), ((f2, False), (f1, False))] if f1 != f2
                else [((f1, False), (f1, False))]), ""
    if conjugated == (True, True) and c1 != c2:
        row, column = ((f1, c1), (f2, c2)) if c1 else ((f2, c2), (f1, c1))
        return [(row, column)], ""
    if conjugated == (True, True):
        what = "conjugated" if c1 else "unconjugated"
        return [((f1, c1), (f2, c2))], (f"both {what}: a complex field's quadratic terms pair it with a conjugate "
                                        "(write the field as two real fields, or use the conjugate field)")
    return [((f1, c1), (f2, c2))], "a complex field with a real one (write the complex field as two real fields)"


def _refuse_fermion_number_violation(model: m.Model, mono: Monomial) -> None:
    """A Dirac field's bilinear with cc() (a Majorana mass) is not a Dirac kernel: say what to write instead.

    bar(cc(psi)) psi pairs psi with itself, so psi is no longer a Dirac particle; its mass eigenstate is
    the Majorana field psi + cc(psi) (Dreiner, Haber & Martin, arXiv:0812.1594, sec. 3, from memory).
    """
    for atom in mono.fields:
        if atom.charge_conjugate:
            name = atom.field
            raise DerivationError(f"a Majorana mass for the Dirac field '{name}': bar(cc({name})) ... {name} pairs "
                                  f"'{name}' with itself, which a Dirac propagator cannot hold", mono.origin,
                                  f"declare the field majorana (the field {name} + cc({name})) and write its mass "
                                  f"as - 1/2 M bar({name}) {name}, or bar(cc({name})) with a majorana field; for a "
                                  "chiral field use weyl input")


def quadratic_form(model: m.Model, monomials: Iterable[Monomial]) -> QuadraticForm:
    """Collect every two-field monomial into K_ij(p), simplify, and find the mixings."""
    groups: dict[tuple[Species, Species], list[Monomial]] = defaultdict(list)
    for mono in monomials:
        fields = mono.fields
        if len(fields) == 2:
            _refuse_fermion_number_violation(model, mono)
            s1, s2 = sorted(species_of(model, a) for a in fields)
            groups[(s1, s2)].append(mono)
    entries: dict[Pair, Entry] = {}
    origins: dict[Pair, tuple[Span, ...]] = {}
    joined: dict[tuple[str, str], dict[int, Span]] = defaultdict(dict)
    problems: dict[tuple[str, str], str] = {}
    for key in sorted(groups):
        monos = groups[key]
        leg_orders, problem = _pairing(model, key)
        for legs in leg_orders:
            entry = read_entry(model, legs, monos)
            if legs[0][0] != legs[1][0] or problem:
                entry = _vanishes(model, entry)
            if not entry:
                continue
            pair = (legs[0][0], legs[1][0])
            unordered = (min(pair), max(pair))
            lines = {mono.origin.line: mono.origin for mono in monos}
            if problem:
                problems.setdefault(unordered, problem)
            else:
                entries[pair] = entry
                origins[pair] = tuple(sorted(lines.values(), key=lambda s: (s.line, s.column)))
            if pair[0] != pair[1] or problem:
                joined[unordered].update(lines)
    mixings = []
    for pair in sorted(joined):
        spans = tuple(span for _, span in sorted(joined[pair].items()))
        reason = problems.get(pair, "") or _kind_problem(model, pair)
        mixings.append(Mixing(pair, spans, not reason, reason))
    return QuadraticForm(model, entries, origins, tuple(mixings))


def _kind_problem(model: m.Model, pair: Pair) -> str:
    a, b = (model.fields[name] for name in pair)
    if a.kind != b.kind:
        return f"a {a.kind} with a {b.kind} (cancel the mixing, e.g. by the gauge fixing that removes it)"
    if a.representations != b.representations:
        return "fields in different group representations"
    return ""


__all__ = ["Entry", "Mixing", "QuadraticForm", "quadratic_form", "read_entry"]
