"""Models built on other model files: `builds on "FILE"` lines, read and merged into one syntax tree.

    parse ─▶ COMPOSE ─▶ build ─▶ ...

A model file may name, right after its header, the files it builds on. Each is read, parsed and
composed in turn (depth first, in the order written), then the file itself is laid on top:

- fields, gauge groups, index spaces, definitions and global symmetries are added; a name
  declared in two files is an error shown at both places;
- a parameter or convention declared again in a later file replaces the earlier one (a new value
  for a mass, `covariant plus` on top of a model written with the default); a parameter must keep
  the words it was declared with (role, reality, index spaces), else both places are shown;
- Lagrangian lines, and every other list a section holds, are appended in reading order;
- a file reached twice (two bases sharing one) is read once, where it is first reached; a file
  that builds on itself, directly or through others, is an error at the line that closes the circle.

Paths are relative to the folder of the file that names them; a bare name that is no file there is
looked up among the shipped models. Every span of an included file carries that file's `Source`
(`Span.source`), so an error anywhere downstream points into the right file. A model without
`builds on` lines passes through unchanged (the same object).
"""

from __future__ import annotations

import dataclasses
import os
from pathlib import Path
from typing import Any, Callable

from . import limits
from . import syntax as sx
from ._resources import shipped_model
from .errors import ModelMeaningError, Source, Span, UsageError, did_you_mean
from .parse import parse_text

Reader = Callable[[Path, str], Source]  # (path to open, name to report it under) -> its text

# sections whose entries are named: a name may be declared in one file only
_UNIQUE = {"fields": "field", "gauges": "gauge group", "spaces": "index space", "definitions": "definition",
           "globals_": "global symmetry"}
# sections whose entries a later file may replace: a parameter gets a new value, a convention a new setting
_REPLACEABLE = {"parameters": lambda d: d.name, "conventions": lambda d: d.key}


def compose_model_file(tree: sx.ModelFile, source: Source, path: Path | None, read: Reader) -> sx.ModelFile:
    """The model of `tree` with every file it builds on merged in; `path` is its file (None for text).

    `read` opens a file the way the pipeline opens the model itself (size budget, encoding check).
    """
    if not tree.bases:
        return tree
    composer = _Composer(read)
    own = path.resolve() if path is not None else None
    folder = (path.parent, os.path.dirname(source.name)) if path is not None else (Path.cwd(), "")
    composer.gather(tree, folder, (own,) if own is not None else ())
    return composer.merged(tree)


class _Composer:
    """Reads the files a model builds on (each once, in order) and merges their declarations."""

    def __init__(self, read: Reader) -> None:
        self.read = read
        self.seen: set[Path] = set()
        self.files: list[sx.ModelFile] = []

    def gather(self, tree: sx.ModelFile, folder: tuple[Path, str], chain: tuple[Path, ...]) -> None:
        """Collect `tree`'s bases (recursively) and then `tree` itself, in merge order."""
        for base in tree.bases:
            target, shown = _resolve(base, folder)
            if target in chain:
                circle = " -> ".join([*(p.name for p in chain[chain.index(target):]), target.name])
                raise ModelMeaningError(f"'{base.path}' builds on this file again: {circle}", base.span,
                                        "a model cannot build on itself; move what both files need into a third "
                                        "file that both build on")
            if target in self.seen:
                continue  # shared by two bases: its declarations are in already
            self.seen.add(target)
            limits.check_budget(limits.MODEL_FILES, len(self.seen), base.span, "this model", "build on fewer files",
                                ModelMeaningError)
            try:
                text = self.read(target, shown)
            except UsageError as exc:
                if exc.source is not None:  # the file was read but is not a model (bad bytes, too large)
                    raise
                raise ModelMeaningError(f"cannot read '{base.path}': {exc.message}", base.span, exc.hint) from None
            included = _located(parse_text(text.text, text.name), text)
            self.gather(included, (target.parent, os.path.dirname(shown)), (*chain, target))
        self.files.append(tree)

    def merged(self, top: sx.ModelFile) -> sx.ModelFile:
        """One syntax tree holding every gathered file's declarations, under `top`'s header."""
        values: dict[str, Any] = {}
        for f in dataclasses.fields(sx.ModelFile):
            if f.name == "theory":
                values[f.name] = top.theory
            elif f.name == "bases":
                values[f.name] = ()
            else:
                values[f.name] = self._merge_section(f.name)
        return sx.ModelFile(**values)

    def _merge_section(self, name: str) -> Any:
        parts = [getattr(tree, name) for tree in self.files]
        if not all(isinstance(part, tuple) for part in parts):
            # a section that is one record rather than a list: the last file that has one gives it
            given = [part for part in parts if part]
            return given[-1] if given else parts[-1]
        if name in _REPLACEABLE:
            return self._replaced(name, parts)
        merged: list[Any] = []
        first: dict[str, Any] = {}
        for number, part in enumerate(parts):
            mine: set[str] = set()
            for entry in part:
                key = getattr(entry, "name", None) if name in _UNIQUE else None
                if key is not None and key in first and key not in mine:
                    what = _UNIQUE[name]
                    raise ModelMeaningError(f"{what} '{key}' is declared again", entry.span,
                                            f"a model that builds on another may add a {what} but not redeclare "
                                            "one; rename this one or leave it out",
                                            related=(("the first declaration", first[key].span),))
                if key is not None:
                    mine.add(key)
                    first.setdefault(key, entry)
                merged.append(entry)
        return tuple(merged)

    def _replaced(self, name: str, parts: list[tuple[Any, ...]]) -> tuple[Any, ...]:
        """Entries in first-declared order, each as the last file gives it (within one file, as written)."""
        key_of = _REPLACEABLE[name]
        merged: list[Any] = []
        where: dict[Any, int] = {}
        for part in parts:
            later: dict[Any, int] = {}
            for entry in part:
                key = key_of(entry)
                if key in where and key not in later:
                    _check_same_words(merged[where[key]], entry)
                    merged[where[key]] = entry
                    later[key] = where[key]
                else:
                    later.setdefault(key, len(merged))
                    merged.append(entry)
            where.update(later)
        return tuple(merged)


def _check_same_words(earlier: Any, later: Any) -> None:
    """A parameter given a new value keeps its declaration's words; conventions only change their setting."""
    if not isinstance(earlier, sx.ParamDecl):
        return
    words = (earlier.roles, earlier.reality, tuple(i.name for i in earlier.spaces), earlier.matrix)
    if words != (later.roles, later.reality, tuple(i.name for i in later.spaces), later.matrix):
        spaces = f"[{','.join(i.name for i in earlier.spaces)}]" if earlier.spaces else ""
        shown = " ".join([*earlier.roles, *([earlier.matrix] if earlier.matrix else []), earlier.name + spaces])
        raise ModelMeaningError(f"parameter '{later.name}' is declared again with other words", later.span,
                                f"a model that builds on another may give a parameter a new value only: "
                                f"write '{shown} = ...' as it was declared first",
                                related=(("the first declaration", earlier.span),))


def _resolve(base: sx.BaseDecl, folder: tuple[Path, str]) -> tuple[Path, str]:
    """The file a `builds on` line names (its resolved path, and the name errors show it under)."""
    try:
        return _find(base, folder)
    except OSError as exc:  # a name too long for the file system, a loop of links...
        raise ModelMeaningError(f"cannot use the path '{base.path[:60]}': {exc.strerror or exc}", base.span,
                                "name a model file by a short relative path") from None


def _find(base: sx.BaseDecl, folder: tuple[Path, str]) -> tuple[Path, str]:
    written = base.path.strip()
    if not written:
        raise ModelMeaningError("'builds on' names no file", base.span, 'write builds on "other_model.vsm"')
    directory, shown_directory = folder
    candidate = directory / written
    if candidate.is_file():
        return candidate.resolve(), os.path.normpath(os.path.join(shown_directory, written))
    if os.sep not in written and "/" not in written:
        shipped = shipped_model(written)
        if shipped is not None:
            return shipped.resolve(), str(shipped)
    if candidate.is_dir():
        raise ModelMeaningError(f"'{written}' is a folder, not a model file", base.span,
                                "name a .vsm file inside it")
    nearby = [p.name for p in candidate.parent.glob("*.vsm")] if candidate.parent.is_dir() else []
    close = did_you_mean(Path(written).name, nearby)
    where = "" if Path(written).is_absolute() else " next to this file"
    raise ModelMeaningError(f"no model file '{written}'{where}", base.span,
                            (close + " " if close else "") + f"paths are relative to the folder of the file that "
                            f"names them ({directory}); a shipped model may be named alone")


def _located(node: Any, source: Source) -> Any:
    """The syntax tree with every span marked as a span of `source` (the included file)."""
    if isinstance(node, Span):
        return node.located(source)
    if isinstance(node, tuple):
        return tuple(_located(item, source) for item in node)
    if dataclasses.is_dataclass(node) and not isinstance(node, type):
        return dataclasses.replace(node, **{f.name: _located(getattr(node, f.name), source)
                                            for f in dataclasses.fields(node) if f.init})
    return node


__all__ = ["compose_model_file"]
