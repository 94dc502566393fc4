"""Numbers for the parameters of a model: the model's own values, definitions evaluated in order.

Below `model` in the import order: `model.Model.parameter_values` and `build` both read these
functions, and this module knows the model's records only as types.
"""

from __future__ import annotations

import cmath
from functools import lru_cache
from typing import TYPE_CHECKING, Any, Mapping

import sympy

from .errors import ModelMeaningError, UsageError, did_you_mean

if TYPE_CHECKING:
    import numpy as np

    from .model import GaugeGroup, Parameter


def substitute_definitions(parameters: Mapping[str, "Parameter"], expr: sympy.Expr) -> sympy.Expr:
    """expr with every parameter defined by a formula (mA = g v) replaced by that formula, to the bottom.

    For judging whether two expressions agree (a declared mass and the one the terms give) or whether a
    sum vanishes (a mixing cancelled by a gauge-fixing term written with mA); the rules themselves keep
    the names the model uses.
    """
    definitions = {p.symbol: p.definition for p in parameters.values()
                   if isinstance(p.definition, sympy.Expr) and not p.definition.is_number}
    for _ in range(len(definitions)):  # definitions may refer to definitions, never in a circle
        if not expr.free_symbols & definitions.keys():
            break
        expr = expr.xreplace(definitions)
    return expr


def resolve_values_from(parameters: Mapping[str, "Parameter"],
                        overrides: Mapping[str, complex]) -> dict[sympy.Symbol, complex]:
    """Numeric values for every parameter that has one, definitions evaluated in order."""
    values: dict[sympy.Symbol, Any] = {}
    for name, value in overrides.items():
        if name not in parameters:
            raise UsageError(f"unknown parameter '{name}' in values",
                             hint=did_you_mean(name, parameters, "use the model's parameter names"))
        p = parameters[name]
        values[p.symbol] = _array_override(p, value) if p.is_array else _number_value(name, value)
    changed = True
    while changed:
        changed = False
        for p in parameters.values():
            if p.is_array and p.symbol not in values:
                # a vector or matrix parameter: one array, from its entries once they all have numbers
                array = _array_value(p, values)
                if array is not None:
                    values[p.symbol] = array
                    changed = True
                continue
            if p.symbol in values or p.definition is None:
                continue
            symbols = p.definition.free_symbols
            # a membership test per symbol: rebuilding set(values) here made loading quadratic
            if all(s in values for s in symbols):
                own = {s: values[s] for s in symbols}
                result = (p.definition.subs(own) if own else p.definition).evalf()
                try:
                    number = complex(result)
                except (TypeError, OverflowError):
                    number = complex("nan")
                if not cmath.isfinite(number):
                    raise ModelMeaningError(f"the value of '{p.name}' is not a finite number ({result})", p.span,
                                            "check the value and the parameters it is defined from")
                values[p.symbol] = number
                changed = True
    return values


@lru_cache(maxsize=1)
def _parameter_array() -> type:
    """The class of the values of vector and matrix parameters: a numpy array that sympy can take.

    Parameter values go into `expr.subs(values)` all over the program; sympy converts every
    value first, so an array must know its sympy form even where no entry of it is used. Made
    on first use, so that a model without matrices never imports numpy.
    """
    import numpy as np

    class ParameterArray(np.ndarray):
        def _sympy_(self) -> sympy.Expr:
            return sympy.ImmutableDenseNDimArray(np.asarray(self).tolist())

    return ParameterArray


def _array_value(p: "Parameter", values: Mapping[sympy.Symbol, Any]) -> np.ndarray | None:
    """The numeric array of a vector or matrix parameter from its entries; None when one has no number."""
    import numpy as np

    if p.entries is None:
        return None
    numbers: list[complex] = []
    known = set(values)
    for entry in p.entries:
        free = entry.free_symbols
        if not free <= known:
            return None
        # complex() of an exact number is immediate; evalf only where parameters were put in
        result = entry.xreplace({s: sympy.sympify(values[s]) for s in free}).evalf() if free else entry
        try:
            number = complex(result)
        except (TypeError, OverflowError):
            number = complex("nan")
        if not cmath.isfinite(number):
            raise ModelMeaningError(f"an entry of '{p.name}' is not a finite number ({result})", p.span,
                                    "check the entry and the parameters it is defined from")
        numbers.append(number)
    return np.array(numbers, dtype=complex).reshape(p.shape).view(_parameter_array())


def _array_override(p: "Parameter", value: Any) -> np.ndarray:
    """A caller's value for a vector or matrix parameter: an array of the declared shape, finite."""
    import numpy as np

    try:
        array = np.asarray(value, dtype=complex)
    except (TypeError, ValueError):
        raise UsageError(f"the value given for '{p.name}' is not an array of numbers",
                         hint=f"pass values={{'{p.name}': numpy array of shape {p.shape}}}") from None
    if array.shape != p.shape:
        raise UsageError(f"the value given for '{p.name}' has shape {array.shape}, not {p.shape}",
                         hint=f"'{p.name}' lives on {', '.join(p.spaces)}")
    if not np.all(np.isfinite(array)):
        raise UsageError(f"the value given for '{p.name}' has entries that are not finite numbers")
    return array.view(_parameter_array())


def _number_value(name: str, value: Any) -> complex:
    try:
        number = complex(value)
    except (TypeError, ValueError):
        raise UsageError(f"the value given for '{name}' is not a number: {value!r}",
                         hint=f"pass values={{'{name}': 0.3}}") from None
    if not cmath.isfinite(number):
        raise UsageError(f"the value given for '{name}' is not a finite number: {value!r}")
    return number


def resolve_values(parameters: Mapping[str, "Parameter"], groups: Mapping[str, "GaugeGroup"],
                   overrides: Mapping[str, complex]) -> dict[sympy.Symbol, complex]:
    """Parameter values, with the gauge parameters xi_<boson> accepted beside the model's own."""
    gauge_parameters = {str(g.xi): g.xi for g in groups.values()}
    values = resolve_values_from(parameters, {k: v for k, v in overrides.items() if k not in gauge_parameters})
    for name, value in overrides.items():
        if name in gauge_parameters:
            values[gauge_parameters[name]] = _number_value(name, value)
    return values
