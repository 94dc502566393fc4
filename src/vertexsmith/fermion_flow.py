"""Fermion flow: the charge-conjugation matrix and the reversal of a spinor chain.

A chain bar(a) Gamma b read against its fermion flow is bar(b^c) Gamma' a^c with
Gamma' = C Gamma^T C^-1 (Denner, Eck, Hahn & Kuebbeck, Nucl. Phys. B 387 (1992) 467, eqs. 2.4
and 3.2, from memory). For the matrices of the model language (common practice, no source):

    C gamma^mu^T C^-1 = -gamma^mu     C gamma5^T C^-1 = gamma5     C sigma^{mu nu T} C^-1 = -sigma^{mu nu}

so PL and PR map to themselves, and a product reverses its order: (A1 ... An)' = An' ... A1'.
C = i gamma^2 gamma^0 in the Dirac representation: C^T = -C, C^-1 = C^dagger = -C.
"""

from __future__ import annotations

from typing import Sequence, TypeVar

# stated wherever a model has Majorana fields (fermion flow: Denner, Eck, Hahn & Kuebbeck,
# Nucl. Phys. B 387 (1992) 467)
FERMION_FLOW_TEXT = (
    "Majorana legs follow a fermion flow: bar(chi) is where the flow leaves the vertex, chi where it "
    "enters; read against the flow a vertex takes Gamma' = C Gamma^T C^-1 with C = i gamma^2 gamma^0 "
    "(S, P, A unchanged; V, T change sign); a Majorana propagator is i(pslash + m)/(p^2 - m^2) with p "
    "along the flow; diagrams take the sign of the permutation of their external spinors"
)

# stated wherever a vertex has a chain with C (a cc() field in the model)
CHARGE_CONJUGATE_TEXT = (
    "cc(psi) = C bar(psi)^T and bar(cc(psi)) = psi^T C with C = i gamma^2 gamma^0 (C^T = C^-1 = -C); a chain "
    "with C is written chain(i, j, ...) with the spinor index of leg i as its row and that of leg j as its "
    "column: chain(i, j, G CC) = bar(leg i) G C bar(leg j)^T; read along the fermion flow from j to i it is "
    "the vertex G with v (or u) of leg j in place of ubar^T (or vbar^T), since v = C ubar^T"
)

# stated wherever a model has weyl fields (the two-component input)
WEYL_TEXT = (
    "a weyl field xi is kept as the Majorana field X = xi + cc(xi) (four-component, X^c = X), its legs those of X: "
    "for left-handed xi, xi = PL X, bar(xi) = bar(X) PR, cc(xi) = PR X, bar(cc(xi)) = bar(X) PL; for right-handed "
    "xi PL and PR swap (Dreiner, Haber & Martin, arXiv:0812.1594)"
)

# the sign each Dirac matrix of the model language takes under C M^T C^-1
REVERSAL_SIGN = {"gamma": -1, "sigma": -1, "gamma5": 1, "PL": 1, "PR": 1}

Matrix = TypeVar("Matrix")


def reversed_chain(kinds: Sequence[str], matrices: Sequence[Matrix]) -> tuple[int, tuple[Matrix, ...]]:
    """(sign, matrices in reversed order) of C (M1 ... Mn)^T C^-1, given each matrix's kind word."""
    sign = 1
    for kind in kinds:
        if kind not in REVERSAL_SIGN:
            raise ValueError(f"no flow reversal is known for the Dirac matrix '{kind}'")
        sign *= REVERSAL_SIGN[kind]
    return sign, tuple(reversed(matrices))


def charge_conjugation_matrix():  # noqa: ANN201 - a numpy array, imported lazily
    """C = i gamma^2 gamma^0 in the Dirac representation (the layout of numeric.py)."""
    from .numeric import GAMMA
    return 1j * GAMMA[2] @ GAMMA[0]


__all__ = ["CHARGE_CONJUGATE_TEXT", "FERMION_FLOW_TEXT", "WEYL_TEXT", "REVERSAL_SIGN", "charge_conjugation_matrix", "reversed_chain"]
