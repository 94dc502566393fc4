"""Every error a user can see, under one root, each pointing at a place in a model file.

A `VertexsmithError` carries a `Span` and, once the file is known, a `Source`; `str()` of it
prints ``file:line:col: error: message``, the offending line, a caret under the column, and a
hint saying what to write instead.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Iterable, TypeVar


@dataclass(frozen=True)
class Span:
    """A region of a model file, 1-based line and column (end inclusive of its last character).

    `source` names the file when it is not the model's own: a model that builds on other files
    (`builds on "..."`) keeps each included file's text here, so that an error points into the
    right file. It takes no part in comparisons, as a position's numbers alone did before.
    """

    line: int
    column: int
    end_line: int
    end_column: int
    source: "Source | None" = field(default=None, compare=False, repr=False)

    @classmethod
    def point(cls, line: int, column: int) -> "Span":
        return cls(line, column, line, column)

    def located(self, source: "Source | None") -> "Span":
        """The same region, marked as a region of `source` (the file it was read from)."""
        return self if source is None or self.source is source else replace(self, source=source)

    def place(self) -> tuple[str, int]:
        """File name (empty for the model's own file) and line: a key that tells lines of two files apart."""
        return (self.source.name if self.source is not None else "", self.line)


UNKNOWN_SPAN = Span(0, 0, 0, 0)


@dataclass(frozen=True)
class Source:
    """The text of a model file and the name it is reported under."""

    name: str
    text: str

    def line(self, number: int) -> str:
        # split at '\n' only, as the parser counts lines: str.splitlines() also breaks at a form
        # feed, U+0085, U+2028 and other characters the parser reads as part of a line
        lines = self.text.split("\n")
        return lines[number - 1].rstrip("\r") if 0 < number <= len(lines) else ""


_E = TypeVar("_E", bound="VertexsmithError")


class VertexsmithError(Exception):
    """Root of every error vertexsmith reports to a user."""

    severity = "error"

    def __init__(self, message: str, span: Span = UNKNOWN_SPAN, hint: str = "",
                 source: Source | None = None, related: tuple[tuple[str, Span], ...] = ()) -> None:
        super().__init__(message)
        self.message = message
        self.span = span
        self.hint = hint
        self.source = source
        self.related = related  # other places the message is about: (what it is, where), shown as notes

    def with_source(self: _E, source: Source) -> _E:
        if self.source is None:
            self.source = source
        return self

    def __str__(self) -> str:
        return format_diagnostic(self.severity, self.message, self.span, self.hint, self.source, self.related)


class ModelSyntaxError(VertexsmithError):
    """The text does not have the shape of the model language."""


class ModelMeaningError(VertexsmithError):
    """The text parses but does not make sense: unknown name, loose index, bar() of a boson..."""


class DerivationError(VertexsmithError):
    """The rules cannot be derived: unrotated mixing, size limits, a kernel that cannot be inverted."""


class UsageError(VertexsmithError):
    """A command, option or file that cannot be used (CLI exit code 2)."""


def format_diagnostic(severity: str, message: str, span: Span, hint: str = "",
                      source: Source | None = None, related: tuple[tuple[str, Span], ...] = ()) -> str:
    """Render one diagnostic in the compiler style: location, message, line, caret, hint.

    A span read from another file than the model's own carries that file and is shown in it;
    each `related` place (a first declaration, say) follows as a note with its own line and caret.
    """
    text = _format_one(severity, message, span, hint, span.source or source)
    notes = [_format_one("note", what, where, "", where.source or source) for what, where in related]
    return "\n".join([text, *notes])


def _format_one(severity: str, message: str, span: Span, hint: str, source: Source | None) -> str:
    name = source.name if source is not None else "<model>"
    if span.line <= 0:
        head = f"{name}: {severity}: {message}"
        return head + (f"\n  hint: {hint}" if hint else "")
    lines = [f"{name}:{span.line}:{span.column}: {severity}: {message}"]
    if source is not None:
        text = source.line(span.line).expandtabs(1)
        width = 1
        if span.end_line == span.line and span.end_column >= span.column:
            width = span.end_column - span.column + 1
        lines.append(f"  {text}")
        lines.append("  " + " " * (span.column - 1) + "^" * max(1, min(width, len(text) - span.column + 2)))
    if hint:
        lines.append(f"  hint: {hint}")
    return "\n".join(lines)


def nearest_names(name: str, candidates: Iterable[str], limit: int = 3) -> list[str]:
    """Declared names closest to a misspelt one, for 'did you mean' hints."""
    import difflib

    return difflib.get_close_matches(name, sorted(set(candidates)), n=limit, cutoff=0.5)


def did_you_mean(name: str, candidates: Iterable[str], fallback: str = "") -> str:
    close = nearest_names(name, candidates)
    if close:
        return "did you mean " + " or ".join(f"'{c}'" for c in close) + "?"
    return fallback
