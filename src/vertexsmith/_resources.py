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


def grammar_text() -> str:
    """The lark grammar of the model language."""
    return (_folder("grammar") / "model.lark").read_text(encoding="utf-8")


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
