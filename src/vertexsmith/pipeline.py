"""The pipeline, in one place: text -> syntax -> Model -> monomials -> Rules, and the diagnostics.

    parse ─▶ build ─▶ [model stages] ─▶ expand ─▶ derive ─▶ Rules
                                                  └──────▶ check ─▶ Diagnostics

Each stage is a module of functions that take data and return data, and imports only the stages
to its left; this module is the only one that knows their order. `model.Model` is plain data;
the `Model` defined here is what `load_model` returns: the same record plus the conveniences
`derive`, `check` and `monomials`, which call the functions below.

A stage that rewrites a built model before it is expanded (symmetry breaking: a vacuum shift,
rotations to mass eigenstates) is a function `Model -> Model` in a module of its own; it joins
the pipeline by being added to `MODEL_STAGES`, and expand, derive and check then read its result.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path
from typing import TYPE_CHECKING, Callable

from . import limits
from . import model as m
from .build import build_model
from .compose import compose_model_file
from .assemble import derive_rules
from .errors import ModelSyntaxError, Source, Span, UsageError, VertexsmithError
from .expand import Monomial, expand_model
from .parse import parse_text
from .rules import Rules
from .unroll import unroll_rules

if TYPE_CHECKING:
    from .check import Diagnostic

ModelStage = Callable[[m.Model], m.Model]
# stages between build and expand, applied in this order (empty until symmetry breaking arrives)
MODEL_STAGES: tuple[ModelStage, ...] = ()


def read_model_text(path: str | Path | None = None, *, text: str | None = None,
                    name: str | None = None) -> Source:
    """The text of a model with the name its errors will carry: from a file, or given as `text=`."""
    if text is None:
        if path is None:
            raise UsageError("give a model file path or text=")
        file = Path(path)
        name = name or str(path)
        try:
            with file.open("rb") as stream:  # never more than the budget allows, however large the file
                data = stream.read(limits.MODEL_BYTES.limit + 1)
                if len(data) > limits.MODEL_BYTES.limit:
                    data += stream.readline(100_000)  # the whole line shown under the error
        except OSError as exc:
            raise UsageError(f"{file}: cannot read the model file ({exc.strerror or exc})",
                             hint="check the path") from None
        text = _decoded(data, name)
    if not isinstance(text, str):
        raise UsageError("load_model(text=...) takes a str", hint="decode bytes first: data.decode('utf-8')")
    text = text.removeprefix("\ufeff")  # a byte-order mark some editors write
    return Source(name or "<model>", text)


def _decoded(data: bytes, name: str) -> str:
    """A model file's bytes as text with universal newlines; a byte that is not UTF-8, or the byte
    past the size budget, is reported at its line and column."""
    def place(offset: int) -> Span:
        before = data[:offset].decode("utf-8", "replace").replace("\r\n", "\n").replace("\r", "\n")
        return Span.point(before.count("\n") + 1, len(before) - before.rfind("\n"))

    def whole() -> Source:
        return Source(name, data.decode("utf-8", "replace").replace("\r\n", "\n").replace("\r", "\n"))

    if len(data) > limits.MODEL_BYTES.limit:
        raise limits.over_budget(limits.MODEL_BYTES, f"more than {limits.MODEL_BYTES.limit:,}",
                                 place(limits.MODEL_BYTES.limit), "the model file", "split the model or remove "
                                 "generated text", ModelSyntaxError).with_source(whole())
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise UsageError(f"byte 0x{data[exc.start]:02x} is not UTF-8 text; is this a model file?",
                               place(exc.start), "save the model as plain UTF-8 text").with_source(whole()) from None
    return text.replace("\r\n", "\n").replace("\r", "\n")  # universal newlines, as text files are read


def prepare_model(model: m.Model) -> m.Model:
    """The built model after every stage of `MODEL_STAGES`, the form expand and derive read."""
    for stage in MODEL_STAGES:
        model = stage(model)
    return model


def expand(model: m.Model) -> tuple[Monomial, ...]:
    """The Lagrangian of a model as monomials; errors carry the model's source."""
    try:
        return expand_model(prepare_model(model))
    except VertexsmithError as exc:
        raise exc.with_source(model.source) from None


def derive(model: m.Model, gauge: str = "xi", unroll: bool = False, spectrum: bool = False) -> Rules:
    """Every vertex and propagator of a model; gauge is 'xi', 'feynman' or 'unitary'.

    Indices of the model's own index spaces stay symbolic (one vertex with Y[i,j] in its factor);
    unroll=True writes one vertex per component instead, dropping components that vanish.
    spectrum=True adds the mass matrices and their eigenvalues (`Rules.spectrum`).
    """
    try:
        prepared = prepare_model(model)
        rules = derive_rules(prepared, expand_model(prepared), gauge=gauge, spectrum=spectrum)
        return unroll_rules(rules, unroll)
    except UsageError:
        raise
    except VertexsmithError as exc:
        raise exc.with_source(model.source) from None


def check(model: m.Model) -> list[Diagnostic]:
    """Every diagnostic of a model (never raises for a problem of the model itself)."""
    from .check import check_model  # numpy with it: deriving and printing rules do not need either

    return check_model(prepare_model(model))


@dataclasses.dataclass(frozen=True, eq=False)
class Model(m.Model):
    """A model as users hold it: the plain record of `model.Model` plus the pipeline's conveniences."""

    def derive(self, gauge: str = "xi", unroll: bool = False, spectrum: bool = False) -> Rules:
        """Every vertex and propagator of the model; gauge is 'xi', 'feynman' or 'unitary'.

        unroll=True writes indices of the model's index spaces out, one vertex per component;
        spectrum=True adds the mass matrices with their eigenvalues (`Rules.spectrum`).
        """
        return derive(self, gauge, unroll, spectrum)

    def check(self) -> list[Diagnostic]:
        """Every diagnostic of the model, ordered by line, column and message."""
        return check(self)

    def monomials(self) -> tuple[Monomial, ...]:
        """The Lagrangian expanded into monomials (coefficient times ordered field factors)."""
        return expand(self)

    @classmethod
    def of(cls, record: m.Model) -> "Model":
        """The same model with the conveniences (a record of another stage, e.g. a rewritten model)."""
        if isinstance(record, cls):
            return record
        return cls(**{f.name: getattr(record, f.name) for f in dataclasses.fields(record)})


def load_model(path: str | Path | None = None, *, text: str | None = None, name: str | None = None) -> Model:
    """Read and build a model from a file path or from text (`text=`)."""
    source = read_model_text(path, text=text, name=name)
    tree = parse_text(source.text, source.name)
    try:
        if tree.bases:  # `builds on` lines: the files it names are read and merged in (compose.py)
            tree = compose_model_file(tree, source, Path(path) if text is None and path is not None else None,
                                      lambda file, shown: read_model_text(file, name=shown))
        return Model.of(build_model(tree, source))
    except VertexsmithError as exc:
        raise exc.with_source(source) from None


__all__ = ["MODEL_STAGES", "Model", "check", "derive", "expand", "load_model", "prepare_model", "read_model_text"]
