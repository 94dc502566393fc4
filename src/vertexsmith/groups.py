"""Lie-algebra data for SU(N): generators in the fundamental and structure constants.

Generators are the generalised Gell-Mann matrices divided by two, normalised to
Tr(T^a T^b) = delta^{ab}/2, in Gell-Mann's order (so f^{123} = 1 for SU(2) and SU(3)).
Structure constants are computed from them, f^{abc} = -2 i Tr([T^a, T^b] T^c), never typed in.
"""

from __future__ import annotations

from functools import lru_cache
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    import numpy as np

REPRESENTATIONS = ("fundamental", "antifundamental", "adjoint")
_GENERAL_NAMES = {"fundamental": "fundamental", "fund": "fundamental", "antifundamental": "antifundamental",
                  "antifund": "antifundamental", "adjoint": "adjoint", "adj": "adjoint"}
# names by dimension mean different representations for different N: a triplet of SU(2) is its adjoint
_NAMES_BY_RANK = {2: {"doublet": "fundamental", "triplet": "adjoint"},
                  3: {"triplet": "fundamental", "antitriplet": "antifundamental", "octet": "adjoint"}}


def representation_name(name: str, n: int) -> str | None:
    """The representation a name stands for in SU(n), or None when it names none."""
    return _GENERAL_NAMES.get(name) or _NAMES_BY_RANK.get(n, {}).get(name)


@lru_cache(maxsize=None)
def su_generators(n: int) -> np.ndarray:
    """T^a of SU(n) in the fundamental, shape (n^2 - 1, n, n)."""
    import numpy as np  # imported here: building a model needs no numpy
    mats: list[np.ndarray] = []
    for k in range(1, n):
        for j in range(k):
            sym = np.zeros((n, n), dtype=complex)
            sym[j, k] = sym[k, j] = 0.5
            asym = np.zeros((n, n), dtype=complex)
            asym[j, k], asym[k, j] = -0.5j, 0.5j
            mats += [sym, asym]
        diag = np.zeros((n, n), dtype=complex)
        for i in range(k):
            diag[i, i] = 1.0
        diag[k, k] = -k
        mats.append(diag / np.sqrt(2 * k * (k + 1)))
    return np.array(mats)


@lru_cache(maxsize=None)
def su_structure_constants(n: int) -> np.ndarray:
    """f^{abc} of SU(n), real and totally antisymmetric, shape (n^2 - 1,)*3."""
    import numpy as np
    t = su_generators(n)
    commutator = np.einsum("aij,bjk->abik", t, t) - np.einsum("bij,ajk->abik", t, t)
    f = -2j * np.einsum("abik,cki->abc", commutator, t)
    return np.real_if_close(f).real.copy()


# the alternating tensor of SU(n) has n^n entries and contracts into up to n! terms: keep n small
MAX_ALTERNATING_RANK = 6


@lru_cache(maxsize=None)
def su_alternating(n: int) -> np.ndarray:
    """The invariant alternating tensor of SU(n), epsilon_{i1...in} with epsilon_{12...n} = +1, shape (n,)*n."""
    import itertools

    import numpy as np
    eps = np.zeros((n,) * n, dtype=complex)
    for perm in itertools.permutations(range(n)):
        inversions = sum(1 for a in range(n) for b in range(a + 1, n) if perm[a] > perm[b])
        eps[perm] = -1.0 if inversions % 2 else 1.0
    return eps


def dimension(n: int, representation: str) -> int:
    """Dimension of a representation of SU(n)."""
    return n * n - 1 if representation == "adjoint" else n
