"""Numpy code for vertices and propagators: one code path for `evaluate()` and the exported module.

Every vertex term becomes one `np.einsum` call with '...' batch axes (mirroring
`numeric.evaluate_structure`, which stays as the independent reference the tests check against),
and its coefficient is printed from sympy as plain numpy code reading parameters from a dict `P`.
`vertex_function_source` and `propagator_function_source` write a function's text;
`render/python_module.py` writes them into a standalone module after `HELPERS_SOURCE`, and
`compile_function` executes the same text once in a namespace built from the same helpers, so
that `Vertex.evaluate` and the exported module run the very same code.
The code is built from vertexsmith's own canonical structures and sympy coefficients (parameter
names enter only as quoted dictionary keys), never from model text.
"""

from __future__ import annotations

import itertools
import string
import textwrap
from fractions import Fraction
from typing import TYPE_CHECKING, Any, Callable, Sequence

import sympy
from sympy.printing.numpy import NumPyPrinter

from .structures import (Chain, Chiral, Dot, Dummy, Epsilon, Gamma, Generator, GroupAlternating, GroupDummy, chains_need_legs,
                         LegGroupIndex, LegIndex, Metric, Momentum, ParamTensor, Sigma, Slot, Structure,
                         StructureConstant, Vector)
from .symbolic import factor_text, group_to_sympy, lorentz_to_sympy

if TYPE_CHECKING:
    import numpy as np

    from .rules import Propagator, Vertex

# stands for p.p in propagator coefficients (the same symbol as rules.P2)
P2 = sympy.Symbol("p2", real=True)


class _CoefficientPrinter(NumPyPrinter):
    """sympy to numpy code: parameters read from the dict `P`, p.p in propagators is the array `pp`."""

    def __init__(self) -> None:
        super().__init__({"fully_qualified_modules": True, "strict": True})

    def _module_format(self, fqn: str, register: bool = True) -> str:
        name = super()._module_format(fqn, register)
        return "np." + name[len("numpy."):] if name.startswith("numpy.") else name

    def _print_Symbol(self, expr: sympy.Symbol) -> str:
        if expr == P2:
            return "pp"
        return f"P[{expr.name!r}]"

    def _print_Component(self, expr: sympy.Expr) -> str:
        # an entry of a vector or matrix parameter (unrolled rules): 1-based in the rules, 0-based here
        name, *indices = expr.args
        return f"P[{str(name)!r}][{', '.join(str(int(i) - 1) for i in indices)}]"

    def _print_conjugate(self, expr: sympy.Expr) -> str:
        return f"np.conj({self._print(expr.args[0])})"

    def _print_Float(self, expr: sympy.Float) -> str:
        return repr(float(expr))


_PRINTER: list[_CoefficientPrinter] = []  # one printer, made on first use (making one costs milliseconds)


def coefficient_code(expr: sympy.Expr) -> str:
    """A sympy coefficient as numpy code; parameters are read from the dict P."""
    if not _PRINTER:
        _PRINTER.append(_CoefficientPrinter())
    return str(_PRINTER[0].doprint(sympy.sympify(expr)))


# ------------------------------------------------------------------ einsum from a structure

def _fraction_code(c: Fraction) -> str:
    return str(c.numerator) if c.denominator == 1 else f"({c.numerator}/{c.denominator})"


def _momentum_code(momentum: Momentum) -> str:
    parts: list[str] = []
    for leg, c in momentum.terms:
        name = f"p{leg}"
        if c == 1:
            term = name
        elif c == -1:
            term = "-" + name
        else:
            term = f"{_fraction_code(c)}*{name}"
        if parts and term.startswith("-"):
            parts.append("- " + term[1:])
        elif parts:
            parts.append("+ " + term)
        else:
            parts.append(term)
    text = " ".join(parts)
    return text if len(momentum.terms) == 1 and momentum.terms[0][1] == 1 else f"({text})"


_CHIRAL_CODE = {"gamma5": "_GAMMA5", "PL": "_PL", "PR": "_PR", "C": "_CC"}


class _Einsum:
    """Collects einsum operands (code) and subscripts for one structure, mirroring numeric.evaluate_structure."""

    def __init__(self) -> None:
        self._letters = iter(string.ascii_letters)
        self._names: dict[object, str] = {}
        self._dummies: dict[str, str] = {}
        self.operands: list[str] = []
        self.subscripts: list[str] = []

    def label(self, key: object) -> str:
        if key not in self._names:
            self._names[key] = next(self._letters)
        return self._names[key]

    def fresh(self) -> str:
        return self.label(object())

    def add(self, code: str, subscript: str, batched: bool) -> None:
        self.operands.append(code)
        self.subscripts.append(("..." if batched else "") + subscript)

    def slot(self, slot: Slot) -> str:
        if isinstance(slot, LegIndex):
            return self.label(("lorentz", slot.leg))
        if isinstance(slot, Dummy):
            if slot.name in self._dummies:
                # the second occurrence of a contracted index is lowered through the metric
                first = self._dummies.pop(slot.name)
                other = self.fresh()
                self.add("_METRIC", first + other, False)
                return other
            label = self.fresh()
            self._dummies[slot.name] = label
            return label
        assert isinstance(slot, Momentum), slot  # group indices never sit in a Lorentz slot
        label = self.fresh()
        self.add(f"_lower({_momentum_code(slot)})", label, True)
        return label


def _einsum_call(structure: Structure, leg_axes: Sequence[tuple], ranks: dict[str, int],
                 leg_dims: dict[tuple[int, str], int]) -> tuple[str | None, bool]:
    """numpy code for one structure with axes (..., leg axes), None for a structure equal to 1; and
    whether it depends on the momenta (has batch axes)."""
    e = _Einsum()
    for tensor in structure.tensors:
        if isinstance(tensor, Dot):
            label = e.fresh()
            e.add(_momentum_code(tensor.p), label, True)
            e.add(f"_lower({_momentum_code(tensor.q)})", label, True)
        elif isinstance(tensor, Metric):
            e.add("_METRIC", e.slot(tensor.a) + e.slot(tensor.b), False)
        elif isinstance(tensor, Vector):
            e.add(_momentum_code(tensor.momentum), e.slot(tensor.index), True)
        elif isinstance(tensor, Epsilon):
            e.add("_EPS", "".join(e.slot(s) for s in tensor.slots_), False)
    for chain in structure.chains:
        _chain(e, chain)
    for g in structure.group:
        labels = "".join(_group_label(e, x) for x in g.slots_)
        if isinstance(g, StructureConstant):
            e.add(f"_F[{g.group!r}]", labels, False)
        elif isinstance(g, Generator):
            e.add(f"_T[{g.group!r}]", labels, False)
        elif isinstance(g, GroupAlternating):
            e.add(f"_ALT[{g.group!r}]", labels, False)
        elif isinstance(g, ParamTensor):  # a vector or matrix parameter: one array from params
            e.add(f"np.conj(P[{g.group!r}])" if g.conjugate else f"P[{g.group!r}]", labels, False)
        else:
            first = g.slots_[0]
            n = ranks[g.group]
            dim = leg_dims.get((first.leg, first.group), n) if isinstance(first, LegGroupIndex) else n
            e.add(f"_delta({dim})", labels, False)
    if not e.operands:
        return None, False
    batched = any(s.startswith("...") for s in e.subscripts)
    output = "..." + "".join(e.label(key) for key in leg_axes)
    if e.subscripts == [output]:  # a single batched operand already in layout order, e.g. (p1 - p2)^mu3
        return e.operands[0], True
    expression = ",".join(e.subscripts) + "->" + output
    return f"np.einsum({expression!r}, {', '.join(e.operands)}, optimize=True)", batched


def _group_label(e: _Einsum, slot: Slot) -> str:
    if isinstance(slot, LegGroupIndex):
        return e.label(("group", slot.leg, slot.group))
    assert isinstance(slot, GroupDummy)
    return e.label(("group-dummy", slot.name))


def _chain(e: _Einsum, chain: Chain) -> None:
    start = e.label(("spinor", chain.bar_leg))
    end = e.label(("spinor", chain.leg))
    if not chain.matrices:
        e.add("_ID4", start + end, False)
        return
    current = start
    for k, mat in enumerate(chain.matrices):
        nxt = end if k == len(chain.matrices) - 1 else e.fresh()
        if isinstance(mat, Chiral):
            e.add(_CHIRAL_CODE[mat.kind], current + nxt, False)
        elif isinstance(mat, Gamma):
            e.add("_GAMMA", e.slot(mat.slot) + current + nxt, False)
        elif isinstance(mat, Sigma):
            e.add("_SIGMA", e.slot(mat.a) + e.slot(mat.b) + current + nxt, False)
        current = nxt


# ------------------------------------------------------------------ functions

def _leg_dims(vertex: "Vertex") -> dict[tuple[int, str], int]:
    return {(leg.position, g): d for leg in vertex.legs for g, _, d in leg.representations}


def axis_sizes(vertex: "Vertex") -> list[int]:
    dims = _leg_dims(vertex)
    return [dims[(key[1], key[2])] if key[0] == "group" else 4 for leg in vertex.legs for key in leg.axes]


def axes_text(sizes: Sequence[int]) -> str:
    return f"(..., {', '.join(str(n) for n in sizes)})" if sizes else "(...)"


def _describe_axis(key: tuple, name: str, dims: dict[tuple[int, str], int]) -> str:
    if key[0] == "lorentz":
        return f"Lorentz axis {name} (upper index)"
    if key[0] == "spinor":
        return f"spinor axis {name} (Dirac representation)"
    return f"{key[2]} axis {name} (size {dims[(key[1], key[2])]})"


def vertex_function_source(vertex: "Vertex", name: str, ranks: dict[str, int], documented: bool = True) -> str:
    """The text of a numpy function `name(p1, p2, ..., params=None)` for one vertex.

    `documented=False` leaves out the docstring and the comments (they need the symbolic factor,
    which costs more than the code itself when `evaluate()` compiles on its first call).
    """
    legs = vertex.legs
    momenta = ", ".join(leg.momentum for leg in legs)
    axes = [key for leg in legs for key in leg.axes]
    dims = _leg_dims(vertex)
    sizes = axis_sizes(vertex)
    leg_lines = []
    for leg in legs:
        what = "; ".join(_describe_axis(key, index, dims) for key, index in zip(leg.axes, leg.indices)) or "no axis"
        leg_lines.append(f"    leg {leg.position}: {leg.label} ({leg.meaning()}), momentum {leg.momentum}; {what}")
    shape = "(" + ", ".join(str(n) for n in sizes) + ("," if len(sizes) == 1 else "") + ")"
    body = [f"def {name}({momenta}, params=None):"]
    if documented:
        doc = [f"Vertex {' '.join(vertex.labels)}: {factor_text(vertex.factor)}", "",
               "Legs in order (all momenta incoming, arrays of shape (..., 4)):", *leg_lines,
               f"Returns a complex array of shape {axes_text(sizes)}."]
        if vertex.origins:
            doc.append(f"Lagrangian lines: {', '.join(str(n) for n in vertex.origins)}.")
        body.append(textwrap.indent('"""' + "\n".join(doc) + '\n"""', "    "))
    calls = [_einsum_call(term.structure, axes, ranks, dims) for term in vertex.terms]
    unpack = momenta + ("," if len(legs) == 1 else "")  # a one-leg (tadpole) vertex unpacks one array
    body += ["    P = _parameters(params)", f"    {unpack} = _momenta({momenta})"]
    # a tensor with a matrix parameter in it depends on params: never kept as a constant
    if not any(batched or "P[" in (call or "") for call, batched in calls):
        body += _constant_vertex_body(vertex, name, calls, shape)
        return "\n".join(body)
    body.append(f"    out = np.zeros(p1.shape[:-1] + {shape}, dtype=complex)")
    wrap = chains_need_legs(t.structure for t in vertex.terms)
    for term, (call, _) in zip(vertex.terms, calls):
        if documented:
            lorentz = lorentz_to_sympy(term.structure, wrap)
            group = group_to_sympy(term.structure.group, vertex._index_names())
            body.append(f"    # {factor_text(term.coefficient)} * {factor_text(lorentz)}"
                        + (f" * {factor_text(group)}" if group != 1 else ""))
        coefficient = coefficient_code(term.coefficient)
        body.append(f"    out += ({coefficient}) * {call}" if call else f"    out += {coefficient}")
    body.append("    return out")
    return "\n".join(body)


def _constant_vertex_body(vertex: "Vertex", name: str, calls: list[tuple[str | None, bool]], shape: str) -> list[str]:
    """A vertex without momenta: its tensors are built once and kept, a batch gets a read-only view.

    Terms whose coefficients differ by a rational number share one tensor (the four-gluon
    vertex: six terms, one tensor of 4^4 8^4 entries), so that a call costs one multiplication;
    for a batch the result is broadcast, since copying it for every point would not fit in memory.
    """
    groups: list[tuple[sympy.Expr, list[tuple[sympy.Expr, str]]]] = []
    for term, (call, _) in zip(vertex.terms, calls):
        code = call or f"np.ones({shape}, dtype=complex)"
        for base, members in groups:
            ratio = term.coefficient / base
            if ratio.is_Rational:
                members.append((ratio, code))
                break
        else:
            groups.append((term.coefficient, [(sympy.Integer(1), code)]))
    lines = []
    for k, (_, members) in enumerate(groups):
        key = f"{name}:{k}"
        lines += [f"    K{k} = _CONSTANTS.get({key!r})",
                  f"    if K{k} is None:",
                  f"        K{k} = np.zeros({shape}, dtype=complex)"]
        # summed in place: each tensor of the four-gluon vertex is 16 MB
        for r, code in members:
            term = code if abs(r) == 1 else f"({coefficient_code(abs(r))}) * {code}"
            lines.append(f"        K{k} {'-=' if r < 0 else '+='} {term}")
        lines.append(f"        _CONSTANTS[{key!r}] = K{k}")
    out = " + ".join(f"({coefficient_code(base)}) * K{k}" for k, (base, _) in enumerate(groups)) or f"np.zeros({shape}, dtype=complex)"
    lines += [f"    out = {out}",
              "    return np.asarray(out) if p1.ndim == 1 else np.broadcast_to(out, p1.shape[:-1] + np.shape(out))"]
    return lines


def propagator_function_source(prop: "Propagator", name: str, documented: bool = True) -> str:
    """The text of a numpy function `name(p, params=None)` for one propagator (docstring when documented)."""
    sizes = {"dirac": [4, 4], "vector": [4, 4]}.get(prop.kind, []) + [d for _, _, d in prop.representations for _ in (0, 1)]
    axes = {"dirac": "spinor axes s1, s2 (Dirac representation)", "vector": "Lorentz axes mu, nu (upper indices)"}
    what = [axes[prop.kind]] if prop.kind in axes else []
    what += [f"{g} axes (size {d}), a Kronecker delta" for g, _, d in prop.representations]
    body = [f"def {name}(p, params=None):"]
    if documented:
        what_of = prop.field if prop.partner is None else f"the mixed pair {prop.label}"
        doc = [f"Propagator of {what_of} ({prop.kind}): {factor_text(prop.factor)}", "",
               "p: momentum along the particle arrow, array of shape (..., 4).",
               f"Returns a complex array of shape {axes_text(sizes)}" + (": " + "; ".join(what) if what else "") + "."]
        body.append(textwrap.indent('"""' + "\n".join(doc) + '\n"""', "    "))
    body += ["    P = _parameters(params)",
            "    (p,) = _momenta(p)",
            "    pp = np.einsum('...a,...a->...', p, _lower(p))",
            "    one = np.ones_like(pp)"]
    chiral = getattr(prop, "chiral", None)
    if prop.kind == "dirac" and chiral is not None:
        left, right = chiral
        body += [f"    left = ({coefficient_code(left)}) * one",
                 f"    right = ({coefficient_code(right)}) * one",
                 "    out = (left[..., None, None] * _PL + right[..., None, None] * _PR) @ _slash(p)"]
        if prop.chiral_mass is not None:  # an entry of a Dirac block with chiral masses
            body += [f"    out = out + ({coefficient_code(prop.chiral_mass[0])}) * one[..., None, None] * _PL",
                     f"    out = out + ({coefficient_code(prop.chiral_mass[1])}) * one[..., None, None] * _PR"]
    elif prop.kind == "dirac":
        body += [f"    a = ({coefficient_code(prop.a)}) * one",
                 f"    b = ({coefficient_code(prop.b)}) * one",
                 "    out = a[..., None, None] * _slash(p) + b[..., None, None] * _ID4"]
    elif prop.kind == "vector":
        body += [f"    a = ({coefficient_code(prop.a)}) * one",
                 f"    b = ({coefficient_code(prop.b)}) * one",
                 "    out = a[..., None, None] * _METRIC + b[..., None, None] * p[..., :, None] * p[..., None, :]"]
    else:
        body.append(f"    out = ({coefficient_code(prop.a)}) * one")
    for _, _, dim in prop.representations:
        body.append(f"    out = out[..., None, None] * _delta({dim})")
    body.append("    return np.asarray(out)")
    return "\n".join(body)


HELPERS_SOURCE = '''
# ------------------------------------------------------------------ Dirac matrices and helpers

_METRIC = np.diag([1.0, -1.0, -1.0, -1.0]).astype(complex)
_METRIC_DIAGONAL = np.array([1.0, -1.0, -1.0, -1.0])
_PAULI = (np.array([[0, 1], [1, 0]], dtype=complex), np.array([[0, -1j], [1j, 0]], dtype=complex),
          np.array([[1, 0], [0, -1]], dtype=complex))
_I2, _Z2 = np.eye(2, dtype=complex), np.zeros((2, 2), dtype=complex)
# gamma^mu with an upper index, Dirac representation
_GAMMA = np.array([np.block([[_I2, _Z2], [_Z2, -_I2]])] + [np.block([[_Z2, s], [-s, _Z2]]) for s in _PAULI])
_GAMMA5 = 1j * _GAMMA[0] @ _GAMMA[1] @ _GAMMA[2] @ _GAMMA[3]
_ID4 = np.eye(4, dtype=complex)
_PL = (_ID4 - _GAMMA5) / 2
_PR = (_ID4 + _GAMMA5) / 2
_CC = 1j * _GAMMA[2] @ _GAMMA[0]  # charge conjugation C = i gamma^2 gamma^0, at the ends of cc() chains
_SIGMA = 0.5j * (np.einsum("mij,njk->mnik", _GAMMA, _GAMMA) - np.einsum("nij,mjk->mnik", _GAMMA, _GAMMA))


def _levi_civita(eps0123):
    eps = np.zeros((4, 4, 4, 4), dtype=complex)
    for perm in itertools.permutations(range(4)):
        inversions = sum(1 for i in range(4) for j in range(i + 1, 4) if perm[i] > perm[j])
        eps[perm] = eps0123 * (-1) ** inversions
    return eps


_EPS = _levi_civita(CONVENTIONS["eps0123"])  # epsilon^{mu nu rho sigma}, all indices upper


def _su_generators(n):
    """T^a of SU(n): generalised Gell-Mann matrices / 2, Tr(T^a T^b) = delta^{ab}/2, shape (n^2 - 1, n, n)."""
    mats = []
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


def _su_structure_constants(n):
    """f^{abc} = -2 i Tr([T^a, T^b] T^c)."""
    t = _su_generators(n)
    commutator = np.einsum("aij,bjk->abik", t, t) - np.einsum("bij,ajk->abik", t, t)
    return (-2j * np.einsum("abik,cki->abc", commutator, t)).real.astype(complex)


def _su_alternating(n):
    """epsilon_{i1...in} of SU(n), epsilon_{12...n} = +1."""
    eps = np.zeros((n,) * n, dtype=complex)
    for perm in itertools.permutations(range(n)):
        inversions = sum(1 for a in range(n) for b in range(a + 1, n) if perm[a] > perm[b])
        eps[perm] = -1.0 if inversions % 2 else 1.0
    return eps


_T = {name: _su_generators(n) for name, n in GROUPS.items() if n > 1}
_ALT = {name: _su_alternating(n) for name, n in GROUPS.items() if 1 < n <= 6}
_F = {name: _su_structure_constants(n) for name, n in GROUPS.items() if n > 1}


def _delta(n):
    return np.eye(n, dtype=complex)


# tensors of vertices without momenta, built on their first call
_CONSTANTS = {}


class _Parameters(dict):
    def __missing__(self, name):
        raise KeyError(f"no value for the parameter {name!r}: pass params={{{name!r}: ...}}")


def _parameters(params):
    """The model's numbers, overridden by `params`; parameters defined through others follow them."""
    given = dict(params or {})
    unknown = sorted(set(given) - set(PARAMETER_NAMES))
    if unknown:
        raise KeyError(f"unknown parameter(s) {', '.join(unknown)}; the parameters are {', '.join(PARAMETER_NAMES)}")
    P = _Parameters({name: _number(value) for name, value in PARAMETERS.items()})
    P.update({name: _number(value) for name, value in given.items()})
    for name, definition in _DEFINITIONS:
        if name not in given:
            P[name] = _number(definition(P))
    return P


def _number(value):
    """A complex number, or a complex array for a vector or matrix parameter."""
    return np.asarray(value, dtype=complex) if np.ndim(value) else complex(value)


def _momenta(*momenta):
    arrays = [np.asarray(p, dtype=complex) for p in momenta]
    for k, p in enumerate(arrays):
        if p.ndim == 0 or p.shape[-1] != 4:
            raise ValueError(f"momentum {k + 1} must have shape (..., 4), got {p.shape}")
    return np.broadcast_arrays(*arrays)


def _lower(p):
    """p_mu from p^mu (metric (+,-,-,-)), batched over the leading axes."""
    return p * _METRIC_DIAGONAL


def _slash(p):
    """p-slash = gamma^mu p_mu, shape (..., 4, 4)."""
    return np.einsum("...m,mij->...ij", _lower(p), _GAMMA)
'''


# ------------------------------------------------------------------ compiling in this process

_HELPER_NAMESPACES: dict[tuple, dict[str, Any]] = {}


def helper_namespace(eps0123: int, ranks: dict[str, int]) -> dict[str, Any]:
    """The namespace `HELPERS_SOURCE` builds for these conventions (cached: built once per model kind).

    `_parameters` is the identity here: the API resolves the parameter values itself and hands
    the generated functions a finished dict.
    """
    key = (eps0123, tuple(sorted(ranks.items())))
    if key not in _HELPER_NAMESPACES:
        import numpy as np  # here, not at the top: printing rules imports this module and needs no numpy

        namespace: dict[str, Any] = {"np": np, "itertools": itertools, "CONVENTIONS": {"eps0123": eps0123},
                                     "GROUPS": dict(ranks), "PARAMETERS": {}, "PARAMETER_NAMES": (),
                                     "_DEFINITIONS": ()}
        exec(compile(HELPERS_SOURCE, "<vertexsmith helpers>", "exec"), namespace)  # our own fixed text
        namespace["_parameters"] = lambda params: params
        _HELPER_NAMESPACES[key] = namespace
    return _HELPER_NAMESPACES[key]


def compile_function(source: str, name: str, eps0123: int, ranks: dict[str, int]) -> Callable[..., np.ndarray]:
    """Execute the text of one generated function (ours, from canonical structures) and return it."""
    namespace = dict(helper_namespace(eps0123, ranks))
    namespace["_CONSTANTS"] = {}  # each compiled function keeps its own tensors
    exec(compile(source, f"<vertexsmith {name}>", "exec"), namespace)
    function: Callable[..., np.ndarray] = namespace[name]
    return function


__all__ = ["HELPERS_SOURCE", "P2", "axes_text", "axis_sizes", "coefficient_code", "compile_function",
           "helper_namespace", "propagator_function_source", "vertex_function_source"]
