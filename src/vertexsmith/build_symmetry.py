"""The meaning of what the model says about symmetries beyond the gauge fields.

Used by `build`: the `global` section (U(1) and Z(N) symmetries, optionally `soft`), the
fields' charges under them, the alternating tensor `alt` of an SU(N) group with its hint for
epsilon-like names, and the diagnosis of summands whose free indices differ. Everything here
reads syntax nodes and returns model records or raises a positioned `ModelMeaningError`.
"""

from __future__ import annotations

from collections import Counter
from fractions import Fraction
from typing import Iterable

from . import model as m
from . import syntax as sx
from .errors import ModelMeaningError, Span
from .groups import MAX_ALTERNATING_RANK

MAX_DISCRETE_ORDER = 1000


def build_symmetries(declarations: Iterable[sx.GlobalDecl]) -> dict[str, m.GlobalSymmetry]:
    """`lepton U(1)`, `darkpar Z(2)`, `hz Z(2) soft` as `GlobalSymmetry` records by name."""
    out: dict[str, m.GlobalSymmetry] = {}
    for s in declarations:
        order = int(s.order) if s.order.isdigit() else 0
        if s.option not in (None, "soft"):
            raise ModelMeaningError(f"unknown word '{s.option}' after the global symmetry '{s.name}'",
                                    s.option_span or s.span,
                                    "write 'soft' to allow terms of mass dimension below 4 to break it, or nothing")
        soft = s.option == "soft"
        if s.kind == "U" and order == 1:
            out[s.name] = m.GlobalSymmetry(s.name, "U1", 1, s.span, soft)
        elif s.kind == "Z" and 2 <= order <= MAX_DISCRETE_ORDER:
            out[s.name] = m.GlobalSymmetry(s.name, "Z", order, s.span, soft)
        else:
            raise ModelMeaningError(f"unknown global symmetry '{s.kind}({s.order})'", s.kind_span,
                                    f"write U(1) for a conserved charge or Z(N) (N from 2 to {MAX_DISCRETE_ORDER}) "
                                    "for a discrete one, e.g. darkpar Z(2)")
    return out


def global_charge(symmetry: m.GlobalSymmetry, f: sx.FieldDecl, c: sx.ChargeAttr,
                  is_complex: bool) -> tuple[str, Fraction] | None:
    """A field's charge under a global symmetry: any rational for U(1), a whole number mod N for Z(N)."""
    value = Fraction(c.value)
    if symmetry.kind == "Z":
        if value.denominator != 1:
            raise ModelMeaningError(f"a charge under {symmetry.label} '{symmetry.name}' is a whole number",
                                    c.span, f"write e.g. charge {symmetry.name} 1 (odd under a Z(2))")
        value = value % symmetry.order
    if value == 0:
        return None
    # a real field equals its conjugate, so only a charge equal to its own negative fits it
    self_conjugate = symmetry.kind == "Z" and (2 * value) % symmetry.order == 0
    if not is_complex and not self_conjugate:
        # a Majorana field cannot be made complex: a fermion with such a charge is a Dirac field
        hint = (f"a Majorana field is its own antiparticle; a fermion with this charge is a Dirac field: "
                f"dirac {f.name} ..." if f.kind == "majorana" else f"declare it complex: {f.kind} {f.name} complex ...")
        raise ModelMeaningError(f"the real field '{f.name}' cannot carry a {symmetry.label} charge "
                                f"{'+' if value > 0 else ''}{value}", c.span, hint)
    return (c.group, value)


def alternating_tensor(node: sx.Symbol, group: str, rank_text: str) -> m.LGroup:
    """alt[i,j] of SU(2), alt[i,j,k] of SU(3): the invariant alternating tensor, N fundamental indices."""
    n = int(rank_text) if rank_text.isdigit() else 0
    if n > MAX_ALTERNATING_RANK:
        raise ModelMeaningError(f"the alternating tensor of SU({n}) is too large to use here", node.span,
                                f"alt is available for SU(N) with N up to {MAX_ALTERNATING_RANK}")
    names = [i.name for i in node.indices]
    example = ",".join("ijklmn"[:n])
    if len(names) != n:
        span = node.indices[0].span if node.indices else node.span
        raise ModelMeaningError(f"'{node.name}' of SU({n}) group '{group}' takes {n} fundamental indices, "
                                f"not {len(names)}", span, f"write {node.name}[{example}]")
    repeated = next((i for i in node.indices if names.count(i.name) > 1), None)
    if repeated is not None:
        raise ModelMeaningError(f"'{node.name}' with the repeated index '{repeated.name}' is zero", repeated.span,
                                f"give each index its own name: {node.name}[{example}]")
    return m.LGroup("alt", group, tuple(names), node.span)


def alternating_hint(name: str, count: int, gauges: Iterable[sx.GaugeDecl]) -> str:
    """For an epsilon-like name with group indices: how to write the alternating tensor of the model's groups."""
    base, _, suffix = name.partition("_")
    if not base.lower().startswith(("eps", "ε", "levi", "civita", "lc")):
        return ""
    ranks = {g.name: int(g.rank) for g in gauges if g.group == "SU" and g.rank.isdigit()}
    matching = [g for g, n in sorted(ranks.items()) if g == suffix or (not suffix and n == count)]
    if not matching:
        return ""
    group = matching[0]
    written = "alt" if len(ranks) == 1 else f"alt_{group}"
    example = ",".join("ijklmn"[:ranks[group]])
    return (f"the invariant alternating tensor of SU({ranks[group]}) group '{group}' is written "
            f"{written}[{example}] (eps is the Lorentz epsilon)")


def summand_mismatch(summands: list[sx.Expr], frees: list[Counter[str]], implies: list[bool]) -> None:
    """Raise at the summand whose free indices differ from those of most others, saying how.

    `implies[k]` tells whether summand k leaves a group index implied (`dag(phi) phi`), which
    contracts it inside the summand: the usual source of an explicit-vs-implied mismatch.
    """
    sets = [frozenset(f) for f in frees]
    usual = max(sets, key=lambda x: (sets.count(x), -sets.index(x)))
    odd = next(k for k, x in enumerate(sets) if x != usual)

    def describe(names: frozenset[str]) -> str:
        if not names:
            return "no free index"
        quoted = ", ".join(f"'{n}'" for n in sorted(names))
        return f"the free ind{'ex' if len(names) == 1 else 'ices'} {quoted}"

    others = "the other summand" if len(summands) == 2 else "the other summands"
    hint = "every summand of a sum needs the same free indices"
    if any(implies) and any(sets[k] for k in range(len(summands)) if not implies[k]):
        hint = ("a group index left implied (dag(phi) phi) is contracted inside its summand and is not free: "
                "write the group indices out in every summand, or in none")
    mine = describe(sets[odd])
    if implies[odd] and not sets[odd]:
        mine = "an implied group index (contracted inside it), so no free index"
    raise ModelMeaningError(f"this summand has {mine}, {others} {describe(usual)}",
                            getattr(summands[odd], "span", Span(0, 0, 0, 0)), hint)


__all__ = ["alternating_hint", "alternating_tensor", "build_symmetries", "global_charge", "summand_mismatch"]
