"""The one place that knows where the grammar and the shipped models live.

Inside an installed wheel they are package data (`vertexsmith/grammar`, `vertexsmith/models`);
in a source checkout or an editable install they are the repository's top-level folders.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path


def _folder(name: str) -> Path:
    packaged = resources.files("vertexsmith").joinpath(name)
    if packaged.is_dir():
        return Path(str(packaged))
    repository = Path(__file__).resolve().parents[2] / name
    if repository.is_dir():
        return repository
    raise FileNotFoundError(f"vertexsmith data folder '{name}' is missing from the installation")


def grammar_text(name: str = "model.lark") -> str:
    """A shipped lark grammar: model.lark (the model language) or handrules.lark (hand-derived rules)."""
    return (_folder("grammar") / name).read_text(encoding="utf-8")


def models_folder() -> Path:
    """The folder of shipped example models."""
    return _folder("models")


def shipped_models() -> list[Path]:
    """Every shipped example model, sorted by name."""
    return sorted(models_folder().glob("*.vsm"))


def shipped_model(name: str) -> Path | None:
    """A shipped model by file name, with or without the `.vsm` suffix."""
    stem = name[:-4] if name.endswith(".vsm") else name
    path = models_folder() / f"{stem}.vsm"
    return path if path.is_file() else None


def resolve_model_argument(name: "str | Path") -> Path:
    """A model named on the command line: an existing file, else a shipped example by name."""
    from .errors import UsageError

    path = Path(name)
    if path.is_file():
        return path
    if path.is_dir():
        raise UsageError(f"'{name}' is a folder, not a model file", hint="give the path of a .vsm file")
    if path.parent in (Path("."), Path("")):
        shipped = shipped_model(path.name)
        if shipped is not None:
            return shipped
    known = ", ".join(p.stem for p in shipped_models())
    raise UsageError(f"no model file '{name}'",
                     hint=f"give the path of a model file, or the name of a shipped model ({known})")
