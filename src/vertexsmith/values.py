"""Numbers for the parameters of a model: the model's own values, definitions evaluated in order.

Below `model` in the import order: `model.Model.parameter_values` and `build` both read these
functions, and this module knows the model's records only as types.
"""

from __future__ import annotations

import cmath
from typing import TYPE_CHECKING, Any, Mapping

import sympy

from .errors import ModelMeaningError, UsageError, did_you_mean

if TYPE_CHECKING:
    from .model import GaugeGroup, Parameter


def resolve_values_from(parameters: Mapping[str, "Parameter"],
                        overrides: Mapping[str, complex]) -> dict[sympy.Symbol, complex]:
    """Numeric values for every parameter that has one, definitions evaluated in order."""
    values: dict[sympy.Symbol, complex] = {}
    for name, value in overrides.items():
        if name not in parameters:
            raise UsageError(f"unknown parameter '{name}' in values",
                             hint=did_you_mean(name, parameters, "use the model's parameter names"))
        values[parameters[name].symbol] = _number_value(name, value)
    changed = True
    while changed:
        changed = False
        for p in parameters.values():
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
