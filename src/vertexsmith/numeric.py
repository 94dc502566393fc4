"""Numbers from structures: explicit Dirac matrices, the metric, Levi-Civita, and einsum.

Layout (a contract, see the README): for each leg in order, a Lorentz axis (vector legs, upper
index, 4) then a spinor axis (fermion legs, Dirac representation, 4). Momenta are upper-index
4-vectors (E, px, py, pz), all incoming.
"""

from __future__ import annotations

import itertools
import string
from typing import Callable, Mapping, Sequence

import numpy as np

from . import limits
from .errors import UNKNOWN_SPAN
from .groups import su_alternating, su_generators, su_structure_constants
from .structures import (Chain, Chiral, Dot, Dummy, Epsilon, Gamma, Generator, GroupAlternating, GroupDummy,
                         LegGroupIndex, LegIndex, Metric, Momentum, ParamTensor, Sigma, Slot, Structure, StructureConstant, Vector)

METRIC = np.diag([1.0, -1.0, -1.0, -1.0]).astype(complex)
_PAULI = [np.array([[0, 1], [1, 0]], dtype=complex), np.array([[0, -1j], [1j, 0]], dtype=complex),
          np.array([[1, 0], [0, -1]], dtype=complex)]
_I2, _Z2 = np.eye(2, dtype=complex), np.zeros((2, 2), dtype=complex)


def _dirac_gammas() -> np.ndarray:
    g0 = np.block([[_I2, _Z2], [_Z2, -_I2]])
    gs = [np.block([[_Z2, s], [-s, _Z2]]) for s in _PAULI]
    return np.array([g0] + gs)


GAMMA = _dirac_gammas()  # gamma^mu, upper index, Dirac representation
GAMMA5 = 1j * GAMMA[0] @ GAMMA[1] @ GAMMA[2] @ GAMMA[3]
IDENTITY4 = np.eye(4, dtype=complex)
PROJ_L = (IDENTITY4 - GAMMA5) / 2
PROJ_R = (IDENTITY4 + GAMMA5) / 2
SIGMA = np.array([[0.5j * (GAMMA[m] @ GAMMA[n] - GAMMA[n] @ GAMMA[m]) for n in range(4)] for m in range(4)])
CHARGE_CONJUGATION_MATRIX = 1j * GAMMA[2] @ GAMMA[0]  # C of fermion_flow.py, at the ends of cc() chains
_CHIRAL = {"gamma5": GAMMA5, "PL": PROJ_L, "PR": PROJ_R, "C": CHARGE_CONJUGATION_MATRIX}


def levi_civita(eps0123: int) -> np.ndarray:
    """epsilon^{mu nu rho sigma} with all indices upper and the given sign of epsilon^{0123}."""
    eps = np.zeros((4, 4, 4, 4), dtype=complex)
    for perm in itertools.permutations(range(4)):
        inversions = sum(1 for i in range(4) for j in range(i + 1, 4) if perm[i] > perm[j])
        eps[perm] = eps0123 * (-1) ** inversions
    return eps


def lower(vector: np.ndarray) -> np.ndarray:
    return METRIC @ vector


def slash(p: np.ndarray) -> np.ndarray:
    """p-slash = gamma^mu p_mu."""
    return np.einsum("m,mij->ij", lower(p), GAMMA)


def minkowski_dot(p: np.ndarray, q: np.ndarray) -> complex:
    return complex(p @ METRIC @ q)


class _Labels:
    def __init__(self) -> None:
        self._letters = iter(string.ascii_letters)
        self.names: dict[object, str] = {}

    def of(self, key: object) -> str:
        if key not in self.names:
            try:
                self.names[key] = next(self._letters)
            except StopIteration:  # pragma: no cover - 52 axes is far beyond any vertex
                raise ValueError("too many tensor axes to evaluate") from None
        return self.names[key]

    def fresh(self) -> str:
        return self.of(object())


def momentum_value(momentum: Momentum, momenta: np.ndarray) -> np.ndarray:
    total = np.zeros(4, dtype=complex)
    for leg, c in momentum.terms:
        total = total + float(c) * momenta[leg - 1]
    return total


def evaluate_structure(structure: Structure, leg_axes: Sequence[tuple], momenta: np.ndarray,
                       eps0123: int, ranks: dict[str, int] | None = None,
                       leg_dims: dict[tuple[int, str], int] | None = None,
                       arrays: Mapping[str, np.ndarray] | None = None,
                       probes: Mapping[tuple, np.ndarray] | None = None) -> np.ndarray:
    """The tensor of one structure with axes in leg order.

    leg_axes lists label keys: ("lorentz", leg), ("spinor", leg), ("group", leg, group); ranks gives N of
    each SU(N) group and the size of each index space; arrays the values of vector and matrix parameters.
    With `probes` (a (k, length) array per axis key and a (k,) array under ("batch",)) every axis is
    contracted with its random vectors instead, and the result is the k numbers of the contraction:
    the tensor is never built, however many legs it has.
    """
    ranks = ranks or {}
    leg_dims = leg_dims or {}
    labels = _Labels()
    operands: list[np.ndarray] = []
    subscripts: list[str] = []
    scalar = 1.0 + 0j
    dummy_seen: dict[str, str] = {}

    def slot_label(slot: Slot) -> str:
        if isinstance(slot, LegIndex):
            return labels.of(("lorentz", slot.leg))
        if isinstance(slot, Dummy):
            if slot.name in dummy_seen:
                # second occurrence: lower it through the metric
                first = dummy_seen.pop(slot.name)
                other = labels.fresh()
                operands.append(METRIC)
                subscripts.append(first + other)
                return other
            label = labels.fresh()
            dummy_seen[slot.name] = label
            return label
        # a momentum in an index slot: contract with the lowered momentum
        assert isinstance(slot, Momentum), slot
        label = labels.fresh()
        operands.append(lower(momentum_value(slot, momenta)))
        subscripts.append(label)
        return label

    for tensor in structure.tensors:
        if isinstance(tensor, Dot):
            scalar *= minkowski_dot(momentum_value(tensor.p, momenta), momentum_value(tensor.q, momenta))
        elif isinstance(tensor, Metric):
            label = slot_label(tensor.a) + slot_label(tensor.b)  # may add operands of its own: first
            operands.append(METRIC)  # numerically g^{mu nu} = g_{mu nu}
            subscripts.append(label)
        elif isinstance(tensor, Vector):
            label = slot_label(tensor.index)
            operands.append(momentum_value(tensor.momentum, momenta))
            subscripts.append(label)
        elif isinstance(tensor, Epsilon):
            label = "".join(slot_label(s) for s in tensor.slots_)
            operands.append(levi_civita(eps0123))
            subscripts.append(label)
    for chain in structure.chains:
        _chain_operands(chain, labels, operands, subscripts, slot_label, momenta)

    def group_label(slot: Slot) -> str:
        if isinstance(slot, LegGroupIndex):
            return labels.of(("group", slot.leg, slot.group))
        assert isinstance(slot, GroupDummy)
        return labels.of(("group-dummy", slot.name))

    for g in structure.group:
        if isinstance(g, ParamTensor):
            if arrays is None or g.group not in arrays:
                raise KeyError(g.group)
            operands.append(arrays[g.group].conj() if g.conjugate else arrays[g.group])
            subscripts.append("".join(group_label(x) for x in g.slots_))
            continue
        n = ranks[g.group]
        if isinstance(g, StructureConstant):
            operands.append(su_structure_constants(n).astype(complex))
        elif isinstance(g, Generator):
            operands.append(su_generators(n))
        elif isinstance(g, GroupAlternating):
            operands.append(su_alternating(n))
        else:
            first = g.slots_[0]
            dim = leg_dims.get((first.leg, first.group), n) if isinstance(first, LegGroupIndex) else n
            operands.append(np.eye(dim, dtype=complex))
        subscripts.append("".join(group_label(x) for x in g.slots_))
    if probes is not None:
        # contract every leg axis with its random vectors: k numbers instead of the whole tensor
        batch = labels.fresh()
        operands.append(probes[("batch",)])
        subscripts.append(batch)
        for key in leg_axes:
            operands.append(probes[key])
            subscripts.append(batch + labels.of(key))
        output = batch
    else:
        output = "".join(labels.of(key) for key in leg_axes)
        if not operands:
            return np.array(scalar, dtype=complex)
        sizes = {label: n for sub, op in zip(subscripts, operands) for label, n in zip(sub, op.shape)}
        elements = limits.tensor_elements(sizes.get(label, 1) for label in output)
        limits.check_budget(limits.TENSOR_ELEMENTS, elements, UNKNOWN_SPAN, "the numeric array of this vertex",
                            "evaluate a vertex with fewer legs or smaller groups")
    expression = ",".join(subscripts) + "->" + output
    # the memory cap keeps einsum's intermediate arrays inside the same budget
    return scalar * np.einsum(expression, *operands,
                              optimize=("greedy", limits.TENSOR_ELEMENTS.limit) if len(operands) > 2 else False)


def _chain_operands(chain: Chain, labels: _Labels, operands: list[np.ndarray], subscripts: list[str],
                    slot_label: Callable[[Slot], str], momenta: np.ndarray) -> None:
    start = labels.of(("spinor", chain.bar_leg))
    end = labels.of(("spinor", chain.leg))
    if not chain.matrices:
        operands.append(IDENTITY4)
        subscripts.append(start + end)
        return
    current = start
    for k, mat in enumerate(chain.matrices):
        nxt = end if k == len(chain.matrices) - 1 else labels.fresh()
        if isinstance(mat, Chiral):
            operands.append(_CHIRAL[mat.kind])
            subscripts.append(current + nxt)
        elif isinstance(mat, Gamma) and isinstance(mat.slot, Momentum):
            operands.append(slash(momentum_value(mat.slot, momenta)))
            subscripts.append(current + nxt)
        elif isinstance(mat, Gamma):
            label = slot_label(mat.slot)
            operands.append(GAMMA)
            subscripts.append(label + current + nxt)
        elif isinstance(mat, Sigma):
            label = slot_label(mat.a) + slot_label(mat.b)
            operands.append(SIGMA)
            subscripts.append(label + current + nxt)
        current = nxt
