"""Numbers for evaluating rules: parameter values by name, and batches of momenta, both checked.

Shared by `Vertex.evaluate` and `Propagator.evaluate`, so that both refuse the same inputs with the
same words.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Mapping, Sequence


from .errors import UsageError

if TYPE_CHECKING:
    import numpy as np

    from .model import Model

class ParameterValues(dict):
    """Parameter values by name for the compiled functions; a missing one is the caller's to give."""

    what = ""

    def __missing__(self, name: str) -> complex:
        raise UsageError(f"{self.what}: no value for {name}", hint=f"pass values={{'{name}': ...}}"
                         + (" (the gauge parameter of R_xi gauge has no default)" if name.startswith("xi_") else ""))


def values_for(model: "Model", values: Mapping[str, complex] | None, what: str,
                cache: dict[tuple, ParameterValues] | None = None) -> ParameterValues:
    """The parameter values by name; `cache` (one per vertex or propagator) keeps the last few, since
    resolving definitions through sympy costs a millisecond, more than evaluating a vertex."""
    try:
        key: tuple | None = tuple(sorted((str(k), complex(v)) for k, v in (values or {}).items()))
    except (TypeError, ValueError):
        key = None  # not numbers: parameter_values reports it
    if cache is not None and key is not None and key in cache:
        return cache[key]
    resolved = ParameterValues({s.name: v for s, v in model.parameter_values(dict(values or {})).items()})
    resolved.what = what
    if cache is not None and key is not None:
        if len(cache) >= 32:
            cache.pop(next(iter(cache)))
        cache[key] = resolved
    return resolved


def momentum_batch(momenta: Sequence[Sequence[float]] | np.ndarray, legs: int, what: str) -> np.ndarray:
    """Momenta as a complex array of shape (..., legs, 4), checked."""
    import numpy as np  # numbers only when asked for: deriving and printing rules need no numpy

    try:
        p = np.asarray(momenta, dtype=complex)
    except (TypeError, ValueError):
        raise UsageError(f"{what}: the momenta are not numbers") from None
    if p.ndim < 2 or p.shape[-2:] != (legs, 4):
        raise UsageError(f"evaluate() needs {legs} four-momenta (one per leg), got shape {p.shape}",
                         hint=f"pass an array of shape ({legs}, 4), or (N, {legs}, 4) for a batch of N points")
    return p


__all__ = ["ParameterValues", "momentum_batch", "values_for"]
