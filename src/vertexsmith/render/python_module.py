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

from ..model import Parameter
from ..codegen import (HELPERS_SOURCE, axes_text, axis_sizes, coefficient_code, propagator_function_source,
                       vertex_function_source)
from ..fermion_flow import CHARGE_CONJUGATE_TEXT, FERMION_FLOW_TEXT
from ..rules import Rules
from ..symbolic import _bracket_calls, factor_text

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
            return prefix[:3] + "_" + _label_part(label[4:-1])
    if label.endswith("]") and "[" in label:  # a leg of unrolled rules, e[2] or q[1,3]: e_2, q_1_3
        name, _, components = label[:-1].partition("[")
        return _identifier_part(name) + "".join(f"_{c}" for c in components.split(","))
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


# ------------------------------------------------------------------ tables

def _number(value: complex) -> str:
    if getattr(value, "ndim", 0):  # a vector or matrix parameter
        return f"np.array({_nested(value.tolist())}, dtype=complex)"  # type: ignore[union-attr]
    c = complex(value)
    return repr(c.real) if c.imag == 0 else repr(c)


def _nested(value: object) -> str:
    if isinstance(value, list):
        return "[" + ", ".join(_nested(v) for v in value) + "]"
    return _number(complex(value))  # type: ignore[arg-type]


def _fraction_literal(q: Fraction) -> str:
    return str(q.numerator) if q.denominator == 1 else f"Fraction({q.numerator}, {q.denominator})"


def _definition_order(rules: Rules) -> list[str]:
    """Parameters with a definition in other parameters, each after those it uses."""
    params = rules.model.parameters
    pending = {name: {str(s) for s in _definition(p).free_symbols} for name, p in params.items()
               if _definition(p).free_symbols}  # name -> the names it uses
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


def _definition(p: Parameter) -> sympy.Expr:
    """A parameter's definition through others; a vector or matrix parameter's entries as one list."""
    if p.is_array:
        return sympy.Tuple(*(p.entries or ()))
    return p.definition if p.definition is not None else sympy.Integer(0)


def _definition_code(p: Parameter) -> str:
    if p.is_array:
        entries = ", ".join(coefficient_code(entry) + " + 0j" for entry in p.entries or ())
        return f"np.array([{entries}], dtype=complex).reshape({p.shape!r})"
    assert p.definition is not None  # _definition_order lists defined parameters only
    return coefficient_code(p.definition)


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
        if p.is_array:
            note += f"; an array over {', '.join(p.spaces)}" + (f", {p.matrix}" if p.matrix else "")
        if p.definition is not None and p.definition.free_symbols:
            note += f"; = {p.definition} (recomputed unless given)"
        if number is None:
            lines.append(f"    # {name!r}: no value in the model ({note}); pass it in params")
            continue
        lines.append(f"    {name!r}: {_number(number)},  # {note}")
    for xi, boson in _gauge_symbols(rules):
        # the same policy as vertex.evaluate(): a gauge parameter has no default, the caller gives it
        lines.append(f"    # {xi!r}: no default, the gauge parameter of {boson} (R_xi): pass it in params "
                     "(1 is Feynman gauge)")
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
        lines.append(f"    ({name!r}, lambda P: {_definition_code(model.parameters[name])}),")
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
    if any(f.kind == "majorana" for f in rules.model.fields.values()):
        entries.insert(4, ("fermion_flow", FERMION_FLOW_TEXT))
    if rules.uses_charge_conjugation:
        # C is the array _CC of this module; CC in SYMBOLIC texts
        entries.insert(4, ("charge_conjugation", CHARGE_CONJUGATE_TEXT + "; the array _CC of this module"))
    lines = ["CONVENTIONS = {"]
    for key, value in entries:
        lines.append(f"    {key!r}: {value!r},")
    lines.append("}")
    return "\n".join(lines)


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
        ("alt", "alt"), ("component", "component"))}
    names.update({"_vs_gamma": sympy.Function("gamma", commutative=False),
                  "_vs_sigma": sympy.Function("sigma", commutative=False),
                  "slash": sympy.Function("slash", commutative=False),
                  "chain": sympy.Function("chain", commutative=False), "dot": sympy.Function("dot"),
                  "conj": sympy.conjugate, "I": sympy.I, "pi": sympy.pi, "Symbol": sympy.Symbol})
    names.update({n: sympy.Symbol(n, commutative=False) for n in ("gamma5", "PL", "PR", "CC")})
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
                factor = rules.{vertex_names[0]}({args})                 # shape {axes_text(axis_sizes(v)).replace("...", "5")}
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
(a<k> adjoint, i<k> fundamental) and one per index space of the model's own (<space><k>). Propagators have shape (...) for scalars, (..., 4, 4) spinor
axes for fermions, (..., 4, 4) upper Lorentz axes for vectors, then two axes per group (a
Kronecker delta).

params: a dict of parameter values by name, overriding PARAMETERS; parameters defined through
others (e.g. a coupling from a fine-structure constant) follow the ones given unless given too.
A vector or matrix parameter (over index spaces) is one numpy array.

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
    propagator_names = _unique(propagator_function_name(p.field if p.partner is None else f"{p.field}_{p.partner}")
                               for p in rules.propagators)
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
             HELPERS_SOURCE,
             "",
             "# ------------------------------------------------------------------ vertices"]
    ranks = {g.name: getattr(g, "rank", 1) for g in rules.model.groups.values()}
    ranks.update({sp.name: sp.size for sp in rules.model.spaces.values()})
    for vertex, name in zip(rules.vertices, vertex_names):
        parts += ["", "", vertex_function_source(vertex, name, ranks)]
    parts += ["", "", "# ------------------------------------------------------------------ propagators"]
    for prop, name in zip(rules.propagators, propagator_names):
        parts += ["", "", propagator_function_source(prop, name)]
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
        parts.append(f"    {prop.label!r}: {name},")
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
