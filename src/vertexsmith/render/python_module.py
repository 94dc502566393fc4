"""Rules to a standalone Python module: one numpy function per vertex and per propagator.

The generated file needs numpy only. Each vertex function takes one incoming momentum per leg,
arrays of shape (..., 4) whose leading axes are a batch of phase-space points, and returns the
vertex factor as an array of shape (..., layout axes) in the documented layout (see
`numeric.py`). The code is written from `vertex.terms`: every term becomes one `np.einsum`
call with '...' batch axes, and its coefficient is printed from sympy as plain numpy code.
The output is deterministic: the same rules give the same text, byte for byte.

    >>> from vertexsmith import load_model, example
    >>> from vertexsmith.render.python_module import render_python_module
    >>> text = render_python_module(load_model(example("qed")).derive(gauge="feynman"))
    >>> "def vertex_bar_ele__ele__A(p1, p2, p3, params=None):" in text
    True
"""

from __future__ import annotations

import inspect
import keyword
import string
import textwrap
from fractions import Fraction
from typing import Iterable, Sequence

import sympy
from sympy.printing.numpy import NumPyPrinter

from ..rules import P2, Propagator, Rules, Vertex
from ..structures import (Chain, Chiral, Dot, Dummy, Epsilon, Gamma, Generator, GroupAlternating, GroupDummy,
                          LegGroupIndex, LegIndex, Metric, Momentum, Sigma, Slot, Structure, StructureConstant, Vector)
from ..symbolic import _bracket_calls, factor_text, group_to_sympy, lorentz_to_sympy

__all__ = ["render_python_module", "render", "vertex_function_name", "propagator_function_name"]


# ------------------------------------------------------------------ names

def _identifier_part(text: str) -> str:
    """A piece of a Python identifier from a model name: ' becomes _prime, other odd characters _uXXXX."""
    out = []
    for char in text:
        if char == "'":
            out.append("_prime")
        elif (char.isalnum() or char == "_") and ("x" + char).isidentifier():
            out.append(char)
        else:
            out.append(f"_u{ord(char):04x}")
    return "".join(out)


def _label_part(label: str) -> str:
    for prefix in ("bar(", "dag("):
        if label.startswith(prefix) and label.endswith(")"):
            return prefix[:3] + "_" + _identifier_part(label[4:-1])
    return _identifier_part(label)


def vertex_function_name(labels: Sequence[str]) -> str:
    """vertex_<leg>__<leg>__...: bar(ele) -> bar_ele, dag(s) -> dag_s, legs joined by a double underscore."""
    return "vertex_" + "__".join(_label_part(label) for label in labels)


def propagator_function_name(field: str) -> str:
    return "propagator_" + _identifier_part(field)


def _unique(names: Iterable[str]) -> list[str]:
    """Make names unique, in order, by numbering repeats (only odd field names can collide)."""
    seen: set[str] = set()
    out = []
    for name in names:
        candidate, n = name, 2
        while candidate in seen or keyword.iskeyword(candidate):
            candidate, n = f"{name}_{n}", n + 1
        seen.add(candidate)
        out.append(candidate)
    return out


# ------------------------------------------------------------------ coefficients

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

    def _print_conjugate(self, expr: sympy.Expr) -> str:
        return f"np.conj({self._print(expr.args[0])})"

    def _print_Float(self, expr: sympy.Float) -> str:
        return repr(float(expr))


def _code(expr: sympy.Expr) -> str:
    return _CoefficientPrinter().doprint(sympy.sympify(expr))


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


_CHIRAL_CODE = {"gamma5": "_GAMMA5", "PL": "_PL", "PR": "_PR"}


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
                 leg_dims: dict[tuple[int, str], int]) -> str | None:
    """numpy code for one structure with axes (..., leg axes); None for a structure equal to 1."""
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
        else:
            first = g.slots_[0]
            n = ranks[g.group]
            dim = leg_dims.get((first.leg, first.group), n) if isinstance(first, LegGroupIndex) else n
            e.add(f"_delta({dim})", labels, False)
    if not e.operands:
        return None
    output = "..." + "".join(e.label(key) for key in leg_axes)
    if e.subscripts == [output]:  # a single batched operand already in layout order, e.g. (p1 - p2)^mu3
        return e.operands[0]
    expression = ",".join(e.subscripts) + "->" + output
    return f"np.einsum({expression!r}, {', '.join(e.operands)}, optimize=True)"


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

def _leg_dims(vertex: Vertex) -> dict[tuple[int, str], int]:
    return {(leg.position, g): d for leg in vertex.legs for g, _, d in leg.representations}


def _axis_sizes(vertex: Vertex) -> list[int]:
    dims = _leg_dims(vertex)
    return [dims[(key[1], key[2])] if key[0] == "group" else 4 for leg in vertex.legs for key in leg.axes]


def _axes_text(sizes: Sequence[int]) -> str:
    return f"(..., {', '.join(str(n) for n in sizes)})" if sizes else "(...)"


def _describe_axis(key: tuple, name: str, dims: dict[tuple[int, str], int]) -> str:
    if key[0] == "lorentz":
        return f"Lorentz axis {name} (upper index)"
    if key[0] == "spinor":
        return f"spinor axis {name} (Dirac representation)"
    return f"{key[2]} axis {name} (size {dims[(key[1], key[2])]})"


def _vertex_function(vertex: Vertex, name: str, ranks: dict[str, int]) -> str:
    legs = vertex.legs
    momenta = ", ".join(leg.momentum for leg in legs)
    axes = [key for leg in legs for key in leg.axes]
    dims = _leg_dims(vertex)
    sizes = _axis_sizes(vertex)
    leg_lines = []
    for leg in legs:
        what = "; ".join(_describe_axis(key, index, dims) for key, index in zip(leg.axes, leg.indices)) or "no axis"
        leg_lines.append(f"    leg {leg.position}: {leg.label} ({leg.meaning()}), momentum {leg.momentum}; {what}")
    doc = [f"Vertex {' '.join(vertex.labels)}: {factor_text(vertex.factor)}", "",
           "Legs in order (all momenta incoming, arrays of shape (..., 4)):", *leg_lines,
           f"Returns a complex array of shape {_axes_text(sizes)}."]
    if vertex.origins:
        doc.append(f"Lagrangian lines: {', '.join(str(n) for n in vertex.origins)}.")
    shape = "(" + ", ".join(str(n) for n in sizes) + ("," if len(sizes) == 1 else "") + ")"
    body = [f"def {name}({momenta}, params=None):",
            textwrap.indent('"""' + "\n".join(doc) + '\n"""', "    "),
            "    P = _parameters(params)",
            f"    {momenta} = _momenta({momenta})",
            f"    out = np.zeros(p1.shape[:-1] + {shape}, dtype=complex)"]
    wrap = any(len(t.structure.chains) > 1 for t in vertex.terms)
    for term in vertex.terms:
        call = _einsum_call(term.structure, axes, ranks, dims)
        lorentz = lorentz_to_sympy(term.structure, wrap)
        group = group_to_sympy(term.structure.group, vertex._index_names())
        body.append(f"    # {factor_text(term.coefficient)} * {factor_text(lorentz)}"
                    + (f" * {factor_text(group)}" if group != 1 else ""))
        coefficient = _code(term.coefficient)
        body.append(f"    out += ({coefficient}) * {call}" if call else f"    out += {coefficient}")
    body.append("    return out")
    return "\n".join(body)


def _propagator_function(prop: Propagator, name: str) -> str:
    sizes = {"dirac": [4, 4], "vector": [4, 4]}.get(prop.kind, []) + [d for _, _, d in prop.representations for _ in (0, 1)]
    axes = {"dirac": "spinor axes s1, s2 (Dirac representation)", "vector": "Lorentz axes mu, nu (upper indices)"}
    what = [axes[prop.kind]] if prop.kind in axes else []
    what += [f"{g} axes (size {d}), a Kronecker delta" for g, _, d in prop.representations]
    doc = [f"Propagator of {prop.field} ({prop.kind}): {factor_text(prop.factor)}", "",
           "p: momentum along the particle arrow, array of shape (..., 4).",
           f"Returns a complex array of shape {_axes_text(sizes)}" + (": " + "; ".join(what) if what else "") + "."]
    body = [f"def {name}(p, params=None):",
            textwrap.indent('"""' + "\n".join(doc) + '\n"""', "    "),
            "    P = _parameters(params)",
            "    (p,) = _momenta(p)",
            "    pp = np.einsum('...a,...a->...', p, _lower(p))",
            "    one = np.ones_like(pp)"]
    chiral = getattr(prop, "chiral", None)
    if prop.kind == "dirac" and chiral is not None:
        left, right = chiral
        body += [f"    left = ({_code(left)}) * one",
                 f"    right = ({_code(right)}) * one",
                 "    out = (left[..., None, None] * _PL + right[..., None, None] * _PR) @ _slash(p)"]
    elif prop.kind == "dirac":
        body += [f"    a = ({_code(prop.a)}) * one",
                 f"    b = ({_code(prop.b)}) * one",
                 "    out = a[..., None, None] * _slash(p) + b[..., None, None] * _ID4"]
    elif prop.kind == "vector":
        body += [f"    a = ({_code(prop.a)}) * one",
                 f"    b = ({_code(prop.b)}) * one",
                 "    out = a[..., None, None] * _METRIC + b[..., None, None] * p[..., :, None] * p[..., None, :]"]
    else:
        body.append(f"    out = ({_code(prop.a)}) * one")
    for _, _, dim in prop.representations:
        body.append(f"    out = out[..., None, None] * _delta({dim})")
    body.append("    return out")
    return "\n".join(body)


# ------------------------------------------------------------------ tables

def _number(value: complex) -> str:
    c = complex(value)
    return repr(c.real) if c.imag == 0 else repr(c)


def _fraction_literal(q: Fraction) -> str:
    return str(q.numerator) if q.denominator == 1 else f"Fraction({q.numerator}, {q.denominator})"


def _definition_order(rules: Rules) -> list[str]:
    """Parameters with a definition in other parameters, each after those it uses."""
    params = rules.model.parameters
    pending = {name: {str(s) for s in p.definition.free_symbols} for name, p in params.items()
               if p.definition is not None and p.definition.free_symbols}  # name -> the names it uses
    done: set[str] = {name for name in params if name not in pending}
    order: list[str] = []
    while pending:
        ready = [n for n, uses in pending.items() if uses <= done]
        if not ready:  # a cycle or an unknown name: leave the rest at their default numbers
            break
        for n in ready:
            order.append(n)
            done.add(n)
            del pending[n]
    return order


def _gauge_symbols(rules: Rules) -> list[tuple[str, str]]:
    """(xi symbol name, boson) for every gauge parameter that appears in a propagator."""
    seen = set().union(*[p.a.free_symbols | p.b.free_symbols for p in rules.propagators]) if rules.propagators else set()
    out = []
    for group in rules.model.groups.values():
        if group.xi in seen:
            out.append((group.xi.name, group.boson))
    return out


def _parameters_block(rules: Rules) -> str:
    model = rules.model
    values = model.parameter_values({})
    lines = ["PARAMETERS = {"]
    for name, p in model.parameters.items():
        number = values.get(p.symbol)
        note = p.description or ", ".join(p.roles) or "parameter"
        if p.definition is not None and p.definition.free_symbols:
            note += f"; = {p.definition} (recomputed unless given)"
        if number is None:
            lines.append(f"    # {name!r}: no value in the model ({note}); pass it in params")
            continue
        lines.append(f"    {name!r}: {_number(number)},  # {note}")
    for xi, boson in _gauge_symbols(rules):
        lines.append(f"    {xi!r}: 1.0,  # gauge parameter of {boson} (R_xi); 1 is Feynman gauge")
    lines.append("}")
    names = list(model.parameters) + [xi for xi, _ in _gauge_symbols(rules)]
    lines.append("")
    lines.append("# every name params may set, those without a value in the model included")
    lines.append("PARAMETER_NAMES = (" + "".join(f"{name!r}, " for name in names).rstrip() + ")")
    derived = _definition_order(rules)
    lines.append("")
    lines.append("# parameters defined through others, in an order that respects their definitions")
    lines.append("_DEFINITIONS = (")
    for name in derived:
        definition = model.parameters[name].definition
        assert definition is not None  # _definition_order lists defined parameters only
        lines.append(f"    ({name!r}, lambda P: {_code(definition)}),")
    lines.append(")")
    return "\n".join(lines)


def _fields_block(rules: Rules) -> str:
    lines = ["FIELDS = {"]
    for f in rules.model.fields.values():
        charges = ", ".join(f"{g!r}: {_fraction_literal(q)}" for g, q in f.charges)
        reps = ", ".join(f"{g!r}: {rep!r}" for g, rep in getattr(f, "representations", ()))
        lines.append(f"    {f.name!r}: {{'kind': {f.kind!r}, 'mass': {str(f.mass)!r}, "
                     f"'self_conjugate': {f.self_conjugate!r}, 'charges': {{{charges}}}, "
                     f"'representations': {{{reps}}}, 'description': {f.description!r}}},")
    lines.append("}")
    return "\n".join(lines)


def _conventions_block(rules: Rules) -> str:
    c = rules.model.conventions
    entries = [
        ("metric", "(+,-,-,-)"),
        ("momenta", "all incoming at vertices; along the particle arrow in propagators"),
        ("vertex", "i x functional derivative of the action, symmetry factors included"),
        ("fermion_legs", "bar leg first; factor is the matrix Gamma_(alpha beta) between them"),
        ("gamma_representation", "Dirac; gamma5 = i gamma^0 gamma^1 gamma^2 gamma^3"),
        ("sigma", "sigma^{mu nu} = (i/2)[gamma^mu, gamma^nu]"),
        ("projectors", "PL = (1 - gamma5)/2, PR = (1 + gamma5)/2"),
        ("covariant_derivative", "D = d - i g Q A" if c.covariant_sign == 1 else "D = d + i g Q A"),
        ("eps0123", c.eps0123),
        ("gauge", rules.gauge),
        ("layout", "per leg in order: Lorentz axis (vector legs, upper index), spinor axis (fermion legs), "
                   "one axis per group index"),
        ("text", rules.conventions),
    ]
    lines = ["CONVENTIONS = {"]
    for key, value in entries:
        lines.append(f"    {key!r}: {value!r},")
    lines.append("}")
    return "\n".join(lines)


_HELPERS = '''
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


class _Parameters(dict):
    def __missing__(self, name):
        raise KeyError(f"no value for the parameter {name!r}: pass params={{{name!r}: ...}}")


def _parameters(params):
    """The model's numbers, overridden by `params`; parameters defined through others follow them."""
    given = dict(params or {})
    unknown = sorted(set(given) - set(PARAMETER_NAMES))
    if unknown:
        raise KeyError(f"unknown parameter(s) {', '.join(unknown)}; the parameters are {', '.join(PARAMETER_NAMES)}")
    P = _Parameters({name: complex(value) for name, value in PARAMETERS.items()})
    P.update({name: complex(value) for name, value in given.items()})
    for name, definition in _DEFINITIONS:
        if name not in given:
            P[name] = complex(definition(P))
    return P


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

_FIND = '''
def find_vertex(*labels):
    """The vertex function for these leg labels in any order, its legs and axes in the order asked.

    Reordering fermion legs multiplies by the parity of their permutation (Grassmann sign), as
    vertexsmith does. Raises KeyError when the model has no such vertex.
    """
    wanted = sorted(labels)
    for key, function in VERTICES.items():
        if sorted(key) != wanted:
            continue
        order, used = [], set()
        for label in labels:
            k = next(i for i, name in enumerate(key) if name == label and i not in used)
            used.add(k)
            order.append(k)
        if order == list(range(len(key))):
            return function
        legs = VERTEX_LEGS[key]
        fermions = [k for k in order if legs[k][2]]
        sign = (-1) ** sum(1 for i in range(len(fermions)) for j in range(i + 1, len(fermions))
                           if fermions[i] > fermions[j])
        starts, axis = [], 0
        for _, axes, _ in legs:
            starts.append(axis)
            axis += len(axes)

        def reordered(*momenta, params=None, _function=function, _order=order, _sign=sign, _starts=starts,
                      _legs=legs):
            ordered = [None] * len(_order)
            for new, old in enumerate(_order):
                ordered[old] = momenta[new]
            result = _function(*ordered, params=params)
            batch = result.ndim - sum(len(axes) for _, axes, _ in _legs)
            permutation = list(range(batch)) + [batch + _starts[old] + k for old in _order
                                                for k in range(len(_legs[old][1]))]
            return _sign * np.transpose(result, permutation)

        reordered.__doc__ = f"{function.__name__} with its legs in the order {', '.join(labels)}."
        return reordered
    raise KeyError(f"no vertex with legs {' '.join(labels)}")


def symbolic(name):
    """The symbolic factor of a function (by name) as a sympy expression; needs sympy.

    SYMBOLIC holds the factors in the model language (gamma[mu3], g[mu1,mu2], (p1 - p2)[mu3],
    slash(p), PL, f_color[a1,a2,a3], chain(1, 2, M), ...). Here its objects become undefined
    sympy functions of the same names (gamma, slash, sigma, chain non-commuting), a momentum
    with an index becomes momentum(p, mu), and each group tensor takes its group first.
    """
    import sympy
    from sympy.parsing.sympy_parser import convert_xor, parse_expr, standard_transformations

    names = {"_vs_" + key: sympy.Function(name) for key, name in (
        ("metric", "g"), ("eps", "eps"), ("vector", "momentum"), ("f", "f"), ("T", "T"), ("delta", "delta"),
        ("alt", "alt"))}
    names.update({"_vs_gamma": sympy.Function("gamma", commutative=False),
                  "_vs_sigma": sympy.Function("sigma", commutative=False),
                  "slash": sympy.Function("slash", commutative=False),
                  "chain": sympy.Function("chain", commutative=False), "dot": sympy.Function("dot"),
                  "conj": sympy.conjugate, "I": sympy.I, "pi": sympy.pi, "Symbol": sympy.Symbol})
    names.update({n: sympy.Symbol(n, commutative=False) for n in ("gamma5", "PL", "PR")})
    names.update({n: sympy.Symbol(n) for n in PARAMETER_NAMES})
    transformations = (_bracket_calls,) + standard_transformations + (convert_xor,)
    return parse_expr(SYMBOLIC[name], local_dict=names, transformations=transformations)


{BRACKET_CALLS}'''


def _module_docstring(rules: Rules, vertex_names: list[str], propagator_names: list[str]) -> str:
    model = rules.model
    example = ""
    if rules.vertices:
        v = rules.vertices[0]
        args = ", ".join(f"{leg.momentum}" for leg in v.legs)
        example = textwrap.dedent(f"""
            Example (a batch of 5 phase-space points)::

                import numpy as np
                import {model.name}_rules as rules   # written by: vertexsmith export {model.name} --to python -o {model.name}_rules.py
                rng = np.random.default_rng(1)
                {", ".join(leg.momentum for leg in v.legs)} = (rng.normal(size=(5, 4)) for _ in range({len(v.legs)}))
                factor = rules.{vertex_names[0]}({args})                 # shape {_axes_text(_axis_sizes(v)).replace("...", "5")}
                factor = rules.{vertex_names[0]}({args}, params={{...}})  # other parameter values
                same = rules.find_vertex({", ".join(repr(label) for label in v.labels)})  # legs in any order
            """)
    conventions = textwrap.fill(rules.conventions, 96, initial_indent="    ", subsequent_indent="    ")
    return f'''"""Feynman rules of the model '{model.name}' ({model.description}), written by vertexsmith.

Gauge: {rules.gauge}. Needs numpy only; sympy is optional (only `symbolic()` uses it).

Conventions:
{conventions}

Functions:
    vertex_<leg>__<leg>__...(p1, p2, ..., params=None): one per vertex, legs in the order of the
        name; a leg is named by its field, bar_<field> for bar(field), dag_<field> for dag(field).
    propagator_<field>(p, params=None): one per field, p along the particle arrow.
Momenta are arrays of shape (..., 4) holding (E, px, py, pz) with an upper index; the leading
axes are a batch of phase-space points (they broadcast against each other). Results have shape
(..., layout axes): for each leg in order, a Lorentz axis (vector legs, upper index, mu<k>), a
spinor axis (fermion legs, Dirac representation, s<k>), then one axis per gauge-group index
(a<k> adjoint, i<k> fundamental). Propagators have shape (...) for scalars, (..., 4, 4) spinor
axes for fermions, (..., 4, 4) upper Lorentz axes for vectors, then two axes per group (a
Kronecker delta).

params: a dict of parameter values by name, overriding PARAMETERS; parameters defined through
others (e.g. a coupling from a fine-structure constant) follow the ones given unless given too.

Tables: PARAMETERS (defaults), FIELDS, GROUPS, CONVENTIONS, SYMBOLIC (the factor of each
function as text), VERTICES (leg labels -> function), VERTEX_LEGS (leg labels -> per leg: label,
axis index names, fermionic), PROPAGATORS (field -> function); find_vertex(*labels) finds a
vertex with its legs in any order.
{example}"""'''


def _needs_fraction(rules: Rules) -> bool:
    return any(q.denominator != 1 for f in rules.model.fields.values() for _, q in f.charges)


def render_python_module(rules: Rules) -> str:
    """The text of a standalone Python module with the rules as numpy functions (deterministic)."""
    vertex_names = _unique(vertex_function_name(v.labels) for v in rules.vertices)
    propagator_names = _unique(propagator_function_name(p.field) for p in rules.propagators)
    parts = [_module_docstring(rules, vertex_names, propagator_names),
             "",
             "from __future__ import annotations",
             "",
             "import itertools",
             *(["from fractions import Fraction"] if _needs_fraction(rules) else []),
             "",
             "import numpy as np",
             "",
             f"MODEL = {rules.model.name!r}",
             f"GAUGE = {rules.gauge!r}",
             "# gauge groups and N of SU(N) (1 for U(1))",
             "GROUPS = {" + ", ".join(f"{g.name!r}: {getattr(g, 'rank', 1)}" for g in rules.model.groups.values()) + "}",
             "",
             _conventions_block(rules),
             "",
             _parameters_block(rules),
             "",
             _fields_block(rules),
             _HELPERS,
             "",
             "# ------------------------------------------------------------------ vertices"]
    ranks = {g.name: getattr(g, "rank", 1) for g in rules.model.groups.values()}
    for vertex, name in zip(rules.vertices, vertex_names):
        parts += ["", "", _vertex_function(vertex, name, ranks)]
    parts += ["", "", "# ------------------------------------------------------------------ propagators"]
    for prop, name in zip(rules.propagators, propagator_names):
        parts += ["", "", _propagator_function(prop, name)]
    parts += ["", "", "# ------------------------------------------------------------------ tables", ""]
    parts.append("SYMBOLIC = {")
    for vertex, name in zip(rules.vertices, vertex_names):
        parts.append(f"    {name!r}: {factor_text(vertex.factor)!r},")
    for prop, name in zip(rules.propagators, propagator_names):
        parts.append(f"    {name!r}: {factor_text(prop.factor)!r},")
    parts += ["}", "", "VERTICES = {"]
    for vertex, name in zip(rules.vertices, vertex_names):
        parts.append(f"    {vertex.labels!r}: {name},")
    parts += ["}", "", "VERTEX_LEGS = {"]
    for vertex in rules.vertices:
        legs = tuple((leg.label, leg.indices, leg.grassmann) for leg in vertex.legs)
        parts.append(f"    {vertex.labels!r}: {legs!r},")
    parts += ["}", "", "PROPAGATORS = {"]
    for prop, name in zip(rules.propagators, propagator_names):
        parts.append(f"    {prop.field!r}: {name},")
    parts += ["}", "", "", _FIND.replace("{BRACKET_CALLS}", inspect.getsource(_bracket_calls)).strip("\n"), ""]
    names = ["MODEL", "GAUGE", "GROUPS", "CONVENTIONS", "PARAMETERS", "FIELDS", "SYMBOLIC", "VERTICES", "VERTEX_LEGS",
             "PROPAGATORS", "find_vertex", "symbolic", *vertex_names, *propagator_names]
    parts += ["", "__all__ = ["]
    parts += [f"    {n!r}," for n in names]
    parts += ["]", ""]
    return "\n".join(parts)


def render(rules: Rules, **options: object) -> str:
    """The renderer entry point used by `vertexsmith.render.render(rules, "python")`."""
    return render_python_module(rules)
