"""vertexsmith: Feynman rules from a model file.

    >>> import vertexsmith
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> rules.vertex("bar(ele)", "ele", "A").factor
    (-I*e)*Gamma(mu3)

Importing the package is cheap: the names that need sympy, numpy or lark (`load_model`, `Model`,
`Rules`, `Vertex`, `Propagator`, `Leg`) are imported on first use through the module
`__getattr__`, so that `vertexsmith --help` and scripts that only read errors or paths start fast.
"""

from __future__ import annotations

from importlib import import_module
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ._resources import shipped_model, shipped_models
from .errors import DerivationError, ModelMeaningError, ModelSyntaxError, UsageError, VertexsmithError

if TYPE_CHECKING:
    from .pipeline import Model, load_model
    from .amplitudes import amplitude
    from .diagrams import find_diagrams
    from .rules import Leg, Propagator, Rules, Vertex
    from .verify import verify_model

__version__ = "0.1.0"

# public name -> the module that defines it; imported when the name is first asked for
_LAZY = {"load_model": ".pipeline", "Model": ".pipeline", "Rules": ".rules", "Vertex": ".rules",
         "Propagator": ".rules", "Leg": ".rules", "amplitude": ".amplitudes", "find_diagrams": ".diagrams",
         "verify_model": ".verify"}


def example(name: str) -> Path:
    """The path of a shipped example model, e.g. example('qed')."""
    path = shipped_model(name)
    if path is None:
        known = ", ".join(p.stem for p in shipped_models())
        raise UsageError(f"no shipped model '{name}'", hint=f"the shipped models are: {known}")
    return path


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'vertexsmith' has no attribute '{name}'")
    value = getattr(import_module(module, __name__), name)
    globals()[name] = value  # later lookups find it directly
    return value


__all__ = ["load_model", "example", "Model", "Rules", "Vertex", "Propagator", "Leg", "amplitude", "find_diagrams",
           "verify_model", "VertexsmithError",
           "ModelSyntaxError", "ModelMeaningError", "DerivationError", "UsageError", "__version__"]


def __dir__() -> list[str]:
    return sorted(__all__)
