"""Index spaces of the model's own (generations, flavours) and the parameters that live on them.

A model declares finite index spaces (`spaces` section); fields carry them (`over gen`) and
vector or matrix parameters are declared over them (`Y[gen,gen] = {{...}, ...}`). This module
holds what `build` needs beyond names: the size of a space, the entries of a braced value, the
numeric check of a matrix declared hermitian or unitary, and the check that every index is used
in one space only. All errors are positioned at the text that is wrong.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING, Any, Callable

import sympy

from . import model as m
from . import syntax as sx
from .errors import ModelMeaningError, Span, did_you_mean
from .groups import dimension

if TYPE_CHECKING:
    import numpy as np

MAX_SPACE_SIZE = 24  # generations and flavours are few; unrolled vertices grow as a power of this
_TOLERANCE = 1e-9  # relative; declared values are written with a few digits, round-off is far below


def space_size(decl: sx.SpaceDecl) -> int:
    """The size of a declared index space: a whole number from 1 to MAX_SPACE_SIZE."""
    if not decl.size.isdigit() or not 1 <= int(decl.size) <= MAX_SPACE_SIZE:
        raise ModelMeaningError(f"the size of index space '{decl.name}' must be a whole number from 1 to "
                                f"{MAX_SPACE_SIZE}", decl.size_span, f"write e.g. {decl.name} 3")
    return int(decl.size)


def index_dimension(model: m.Model, name: str, representation: str) -> int:
    """The length of an index axis: an index space's size, or N, N^2-1 of an SU(N) group."""
    if representation == m.FLAVOUR:
        return model.spaces[name].size
    return dimension(model.groups[name].rank, representation)


def field_index_counts(lorentz: int, groups: int, spaces: int) -> tuple[int, ...]:
    """How many indices a field over index spaces may take: group indices all or none, space indices always."""
    return (lorentz + spaces, lorentz + groups + spaces) if groups else (lorentz + spaces,)


def array_parameter(decl: sx.ParamDecl, spaces: Mapping[str, m.IndexSpace],
                    scalar: Callable[[sx.Expr], sympy.Expr]) -> m.Parameter:
    """A vector or matrix parameter: its spaces, and its entries (numbers or formulas, read by `scalar`)."""
    for index in decl.spaces:
        if index.name not in spaces:
            raise ModelMeaningError(f"unknown index space '{index.name}'", index.span,
                                    did_you_mean(index.name, spaces, f"declare it: spaces\n  {index.name} 3"))
    names = tuple(i.name for i in decl.spaces)
    if decl.matrix and (len(names) != 2 or names[0] != names[1]):
        raise ModelMeaningError(f"a {decl.matrix} parameter is a square matrix over one index space",
                                decl.spaces[0].span, f"write {decl.name}[{names[0]},{names[0]}]")
    entries = None
    shape = tuple(spaces[name].size for name in names)
    if decl.value is not None:
        items = array_entries(decl.name, decl.value, shape)
        entries = tuple(scalar(item) for item in items)
        if decl.reality == "real":
            for item, value in zip(items, entries):
                if value.free_symbols == set() and value.is_real is False:
                    raise ModelMeaningError(f"parameter '{decl.name}' is declared real but this entry is complex",
                                            _span(item), f"declare it as: complex {decl.name}[...] = ...")
    return m.Parameter(decl.name, decl.roles, decl.reality == "complex" or decl.matrix == "unitary", None, None,
                       decl.description, decl.span, names, entries, decl.matrix, shape)


def flavoured_field(node: sx.Symbol, f: m.Field, lorentz: int, groups: list[str], flavours: list[str]) -> m.LField:
    """A field over index spaces: Lorentz, then group indices (all or none), then every space index."""
    idx = tuple(i.name for i in node.indices)
    if len(idx) not in field_index_counts(lorentz, len(groups), len(flavours)):
        example = ", ".join((["mu"] if lorentz else []) + ["a" if r == "adjoint" else "i" for g, r in f.representations
                                                           if r != m.FLAVOUR] + ["n"] * len(flavours))
        raise ModelMeaningError(f"'{f.name}' takes {lorentz} Lorentz, {len(groups)} group and {len(flavours)} "
                                f"{'/'.join(flavours)} ind{'ex' if len(flavours) == 1 else 'ices'}, not "
                                f"{len(idx)}", node.indices[0].span if node.indices else node.span,
                                f"write {f.name}[{example}]" + (" (group indices may be left implied)"
                                                                if groups else ""))
    written_groups = len(idx) - lorentz - len(flavours)
    group_indices = tuple((g, idx[lorentz + k] if written_groups else None) for k, g in enumerate(groups))
    for g, i in group_indices:
        if i is None and f.representation(g) == "adjoint":
            raise ModelMeaningError(f"the adjoint index of '{f.name}' must be written", node.span,
                                    f"write {f.name}[{', '.join((['mu'] if lorentz else []) + ['a', 'n'])}]")
    space_indices = tuple(zip(flavours, idx[len(idx) - len(flavours):]))
    return m.LField(f.name, False, idx[0] if lorentz else None, node.span, group_indices + space_indices)


def array_component(p: m.Parameter, node: sx.Symbol, conjugate: bool) -> m.LParam:
    """Y[i,j] (or conj(Y[i,j])) in the Lagrangian: one index per space of the parameter."""
    if not p.is_array:
        raise ModelMeaningError("conj() of a field-free factor belongs to the parameters", node.span,
                                f"write conj({node.name}) inside a product, e.g. conj({node.name}) phi")
    if len(node.indices) != len(p.spaces):
        example = ", ".join("ijkl"[:len(p.spaces)])
        raise ModelMeaningError(f"'{p.name}' takes {len(p.spaces)} ind{'ex' if len(p.spaces) == 1 else 'ices'} "
                                f"({', '.join(p.spaces)}), not {len(node.indices)}",
                                node.indices[0].span if node.indices else node.span, f"write {p.name}[{example}]")
    # a real parameter is its own conjugate
    return m.LParam(p.name, tuple(i.name for i in node.indices), conjugate and p.is_complex, node.span)


def array_entries(name: str, value: sx.Expr | sx.Array, shape: tuple[int, ...]) -> list[sx.Expr]:
    """The entries of a braced value in row-major order, after checking its shape against the spaces."""
    if len(shape) == 0:  # pragma: no cover - only called for parameters with spaces
        return [value]  # type: ignore[list-item]
    if not isinstance(value, sx.Array):
        raise ModelMeaningError(f"'{name}' has {len(shape)} index space{'s' if len(shape) > 1 else ''}, so its "
                                "value is a braced list", _span(value),
                                f"write {name}[...] = " + _example(shape))
    if len(value.items) != shape[0]:
        raise ModelMeaningError(f"'{name}' needs {shape[0]} entries here, not {len(value.items)}", value.span,
                                "one entry per component of the index space, e.g. " + _example(shape))
    out: list[sx.Expr] = []
    for item in value.items:
        if len(shape) > 1:
            out.extend(array_entries(name, item, shape[1:]))
        elif isinstance(item, sx.Array):
            raise ModelMeaningError(f"'{name}' has one index too few for a nested list here", item.span,
                                    "write a number or a formula of parameters")
        else:
            out.append(item)
    return out


def _example(shape: tuple[int, ...]) -> str:
    if len(shape) == 1:
        return "{" + ", ".join(["0.1"] * min(shape[0], 3)) + (", ..." if shape[0] > 3 else "") + "}"
    return "{" + ", ".join([_example(shape[1:])] * min(shape[0], 2)) + (", ..." if shape[0] > 2 else "") + "}"


def _span(node: Any) -> Span:
    return getattr(node, "span", Span(0, 0, 0, 0))


# ------------------------------------------------------------------ numbers

def random_array(rng: np.random.Generator, p: m.Parameter) -> np.ndarray:
    """Generic numbers for a vector or matrix parameter that respect what it is declared to be."""
    import numpy as np

    real = rng.uniform(0.5, 1.5, size=p.shape)
    array = real + 1j * rng.uniform(0.5, 1.5, size=p.shape) if p.is_complex else real.astype(complex)
    if p.matrix == "hermitian":
        array = (array + array.conj().T) / 2
    elif p.matrix == "unitary":
        q, r = np.linalg.qr(array)
        array = q * (np.diag(r) / np.abs(np.diag(r)))
    return array


def check_matrix_property(p: m.Parameter, values: Mapping[sympy.Symbol, Any], spans: tuple[Span, ...]) -> None:
    """A matrix declared hermitian or unitary must be so numerically; the error points at the worst entry."""
    if not p.matrix:
        return
    import numpy as np

    array = values.get(p.symbol)
    if not isinstance(array, np.ndarray):
        return  # no numbers (yet): nothing to verify
    n = array.shape[0]
    scale = max(1.0, float(np.abs(array).max()))
    if p.matrix == "hermitian":
        defect = np.abs(array - array.conj().T)
        what = f"is not hermitian: entry [{{i}},{{j}}] is not the complex conjugate of entry [{{j}},{{i}}]"
        hint = "make the entry the conjugate of its mirror entry, or drop 'hermitian'"
    else:
        defect = np.abs(array @ array.conj().T - np.eye(n))
        what = "is not unitary: row {i} times the conjugate of row {j} is not " + "{delta}"
        hint = "give the matrix orthonormal rows (to about 9 digits), or drop 'unitary'"
    worst = np.unravel_index(int(np.argmax(defect)), defect.shape)
    if defect[worst] <= _TOLERANCE * scale:
        return
    i, j = int(worst[0]), int(worst[1])
    message = f"'{p.name}' declared {p.matrix} " + what.format(i=i + 1, j=j + 1, delta=int(i == j))
    message += f" (off by {float(defect[worst]):.3g})"
    span = spans[i * n + j] if spans else p.span
    raise ModelMeaningError(message, span, hint)


# ------------------------------------------------------------------ index spaces of a term

def _slot_kinds(node: sx.Symbol, fields: Mapping[str, m.Field], parameters: Mapping[str, m.Parameter],
                strengths: Mapping[str, str]) -> list[str | None]:
    """What each written index of a symbol is: 'Lorentz', 'group:<g>', '<space>'; None when unknown."""
    n = len(node.indices)
    if node.name in fields:
        f = fields[node.name]
        lorentz = ["Lorentz"] if f.is_vector else []
        groups = [f"group:{g}" for g, r in f.representations if r != m.FLAVOUR]
        flavours = [g for g, r in f.representations if r == m.FLAVOUR]
        if n == len(lorentz) + len(groups) + len(flavours):
            return [*lorentz, *groups, *flavours]
        if n == len(lorentz) + len(flavours):
            return [*lorentz, *flavours]
        return [None] * n
    if node.name in parameters:
        p = parameters[node.name]
        return list(p.spaces) if len(p.spaces) == n else [None] * n
    if node.name in strengths:
        return ["Lorentz", "Lorentz", f"group:{strengths[node.name]}"][:n]
    if node.name in ("gamma", "sigma", "g", "eps", "d", "D", "γ", "σ", "ε", "η", "∂"):
        return ["Lorentz"] * n
    return [None] * n


def _describe(kind: str) -> str:
    if kind == "Lorentz":
        return "a Lorentz index"
    if kind.startswith("group:"):
        return f"an index of the group {kind[6:]}"
    return f"an index of the space {kind}"


def check_index_spaces(expr: sx.Expr, fields: Mapping[str, m.Field], parameters: Mapping[str, m.Parameter],
                       strengths: Mapping[str, str]) -> None:
    """Every index that touches an index space is used in that one space only, summand by summand."""
    summands = [t for _, t in expr.terms] if isinstance(expr, sx.Sum) else [expr]
    for summand in summands:
        seen: dict[str, tuple[str, Span]] = {}
        for node in _symbols(summand):
            for index, kind in zip(node.indices, _slot_kinds(node, fields, parameters, strengths)):
                if kind is None:
                    continue
                if index.name not in seen:
                    seen[index.name] = (kind, index.span)
                    continue
                first, where = seen[index.name]
                if first != kind and not (first.startswith(("Lorentz", "group:"))
                                          and kind.startswith(("Lorentz", "group:"))):
                    raise ModelMeaningError(f"index '{index.name}' is {_describe(kind)} here but "
                                            f"{_describe(first)} at line {where.line}, column {where.column}",
                                            index.span, "use one index name per index space, e.g. i, j for "
                                            "generations and mu, nu for Lorentz indices")


def _symbols(node: Any) -> list[sx.Symbol]:
    out: list[sx.Symbol] = []
    stack = [node]
    while stack:
        item = stack.pop()
        if isinstance(item, sx.Symbol):
            out.append(item)
        elif isinstance(item, sx.Call):
            stack.append(item.argument)
        elif isinstance(item, sx.Group):
            stack.append(item.inner)
        elif isinstance(item, sx.Sum):
            stack.extend(t for _, t in item.terms)
        elif isinstance(item, sx.Product):
            stack.extend(item.factors)
        elif isinstance(item, (sx.Quotient,)):
            stack.extend((item.numerator, item.denominator))
        elif isinstance(item, sx.Power):
            stack.extend((item.base, item.exponent))
    out.sort(key=lambda s: (s.span.line, s.span.column))  # first use in reading order
    return out
