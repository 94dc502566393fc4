"""vertexsmith: Feynman rules from a model file.

    >>> import vertexsmith
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> rules.vertex("bar(ele)", "ele", "A").factor
    (-I*e)*Gamma(mu3)
"""

from __future__ import annotations

from pathlib import Path

from ._resources import shipped_model, shipped_models
from .errors import DerivationError, ModelMeaningError, ModelSyntaxError, UsageError, VertexsmithError
from .pipeline import Model, load_model
from .rules import Leg, Propagator, Rules, Vertex

__version__ = "0.1.0"


def example(name: str) -> Path:
    """The path of a shipped example model, e.g. example('qed')."""
    path = shipped_model(name)
    if path is None:
        known = ", ".join(p.stem for p in shipped_models())
        raise UsageError(f"no shipped model '{name}'", hint=f"the shipped models are: {known}")
    return path


__all__ = ["load_model", "example", "Model", "Rules", "Vertex", "Propagator", "Leg", "VertexsmithError",
           "ModelSyntaxError", "ModelMeaningError", "DerivationError", "UsageError", "__version__"]


def __dir__() -> list[str]:
    return sorted(__all__)
