"""The contraction rule of two alternating tensors of one SU(N) group, on expansion atoms.

`expand` calls `contract_alternating` on every monomial before like terms are combined, so
that a conjugate multiplet written with `alt` (eps_ij H*_j) and the plain one meet in one form.
The atoms are those of `expand` (records with `kind`, `group`, `indices` and `span`); a
delta is made from an alt atom with `dataclasses.replace`, so this module needs none of them.
"""

from __future__ import annotations

import dataclasses
import itertools
import math
from typing import Any, Sequence

from .errors import DerivationError
from .structures import permutation_sign


def contract_alternating(atoms: tuple[Any, ...], limit: int) -> list[tuple[int, tuple[Any, ...]]]:
    """Products of two alternating tensors of one group that share indices, written as deltas.

    With the k shared indices S moved to the front of both (each move signed),
    eps_{S A} eps_{S B} = k! sum over permutations s of sgn(s) prod_m delta_{A_m B_s(m)}
    (common practice). Returns (integer factor, atoms) pairs; atoms without such a pair come
    back unchanged. More than `limit` results is a positioned error (the term's budget).
    """
    alts = [k for k, a in enumerate(atoms) if getattr(a, "kind", None) == "alt" and hasattr(a, "group")]
    for x, first in enumerate(alts):
        for second in alts[x + 1:]:
            a, b = atoms[first], atoms[second]
            shared = [i for i in a.indices if i in b.indices]
            if a.group != b.group or not shared:
                continue
            rest_a = [i for i in a.indices if i not in shared]
            rest_b = [i for i in b.indices if i not in shared]
            sign = _move_sign(a.indices, shared + rest_a) * _move_sign(b.indices, shared + rest_b)
            sign *= math.factorial(len(shared))
            out: list[tuple[int, tuple[Any, ...]]] = []
            for perm in itertools.permutations(range(len(rest_b))):
                deltas = tuple(dataclasses.replace(a, kind="delta", indices=(rest_a[m], rest_b[perm[m]]))
                               for m in range(len(rest_a)))
                replaced = atoms[:first] + deltas + atoms[first + 1:second] + atoms[second + 1:]
                for factor, reduced in contract_alternating(replaced, limit):
                    out.append((sign * permutation_sign(list(perm)) * factor, reduced))
                if len(out) > limit:
                    raise DerivationError(f"contracting the alt tensors of this term gives more than {limit} "
                                          "monomials", a.span,
                                          "share more indices between the alt tensors, or split the term")
            return out
    return [(1, atoms)]


def _move_sign(written: Sequence[str], wanted: list[str]) -> int:
    """Sign of the permutation from the written slot order to the wanted one."""
    return permutation_sign([wanted.index(i) for i in written])


__all__ = ["contract_alternating"]
