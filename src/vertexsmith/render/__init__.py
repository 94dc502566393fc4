"""Output formats for derived rules, one module per format, dispatched by name.

Every renderer reads the same pure data model (`rules_to_dict` in `render/json.py`, plus the
rules' own sympy objects for printing) and returns a string; the same rules give the same bytes
on every run, whatever PYTHONHASHSEED is.

    >>> import vertexsmith
    >>> from vertexsmith.render import render
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> render(rules, "json").startswith("{")
    True
"""

from __future__ import annotations

from importlib import import_module
from typing import TYPE_CHECKING, Any

from ..errors import UsageError

if TYPE_CHECKING:
    from ..rules import Rules

# format name -> module of this package; each module has `render(rules, **options) -> str`.
# FORMATS are the formats of `vertexsmith rules --format`; the export formats are reached by name too.
FORMATS: dict[str, str] = {"text": "text", "latex": "latex", "json": "json"}
EXPORT_FORMATS: dict[str, str] = {"form": "form", "python": "python_module"}


def render(rules: "Rules", format: str, **options: Any) -> str:  # noqa: A002 - the option's own name
    """The rules as a string in the named format ("text", "latex", "json"; "form", "python" for export)."""
    known = {**FORMATS, **EXPORT_FORMATS}
    module_name = known.get(format)
    if module_name is None:
        raise UsageError(f"unknown output format '{format}'", hint="choose one of: " + ", ".join(sorted(known)))
    try:
        module = import_module(f".{module_name}", __name__)
    except ModuleNotFoundError as exc:
        if exc.name != f"{__name__}.{module_name}":
            raise
        module = None
    entry = getattr(module, "render", None)
    if entry is None:
        raise UsageError(f"the output format '{format}' is not available in this installation")
    result: str = entry(rules, **options)
    return result


def top_level_cuts(text: str, operators: tuple[str, ...]) -> list[int]:
    """Positions of the ' op ' separators of `text` that stand outside round brackets (for line breaking)."""
    cuts: list[int] = []
    depth = 0
    for k, char in enumerate(text):
        if char == "(":
            depth += 1
        elif char == ")":
            depth -= 1
        elif depth == 0 and k > (cuts[-1] + 1 if cuts else 0) and any(text.startswith(f" {op} ", k)
                                                                        for op in operators):
            cuts.append(k)
    return cuts


def rules_to_dict(rules: "Rules") -> dict[str, Any]:
    """The rules as plain JSON-ready data (see `render/rules.schema.json`)."""
    from .json import rules_to_dict as to_dict

    return to_dict(rules)


__all__ = ["FORMATS", "EXPORT_FORMATS", "render", "rules_to_dict", "top_level_cuts"]
