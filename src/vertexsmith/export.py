"""Export derived rules for other programs: a Python module, JSON, LaTeX or FORM `id` statements.

`vertexsmith export MODEL --to python|json|latex|form [-o FILE] [--gauge xi|feynman|unitary]`.
The Python module is standalone (numpy only; see `render/python_module.py`), the FORM file holds
one `id` statement per vertex and propagator (`render/form.py`); JSON and LaTeX are the renderers
of `vertexsmith rules`. Every export is deterministic: the same model gives the same bytes.

    >>> import vertexsmith
    >>> from vertexsmith.export import export_rules
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> export_rules(rules, "form").count("id V(")
    2
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import TYPE_CHECKING

from .errors import UsageError

if TYPE_CHECKING:
    from .pipeline import Model
    from .rules import Rules

EXPORT_FORMATS = ("python", "json", "latex", "form")
GAUGE_CHOICES = ("xi", "feynman", "unitary")


def export_rules(rules: "Rules", to: str) -> str:
    """The rules as text in one export format: 'python', 'json', 'latex' or 'form'."""
    if to == "python":
        from .render.python_module import render_python_module

        return render_python_module(rules)
    if to == "form":
        from .render.form import render_form

        return render_form(rules)
    if to in ("json", "latex"):
        from .render import render

        return render(rules, to)
    raise UsageError(f"unknown export format '{to}'", hint="choose one of: " + ", ".join(EXPORT_FORMATS))


def load_model_argument(name: str | Path) -> "Model":
    """A model given as a path to a file or as the name of a shipped model (`qed`, `dark_sector`)."""
    from ._resources import resolve_model_argument
    from .pipeline import load_model

    return load_model(resolve_model_argument(name))


def export_model(model: "str | Path | Model", to: str = "python", output: str | Path | None = None,
                 gauge: str = "xi", unroll: bool = False) -> str:
    """Derive a model's rules and export them; write the text to `output` when given, and return it.

    `model` is a Model, a model file path or a shipped model name. This is what the command
    line runs; scripts use it to regenerate an exported module (see examples/). `unroll=True`
    writes the indices of the model's index spaces out, one vertex per component.
    """
    from .model import Model
    from .pipeline import derive

    loaded = model if isinstance(model, Model) else load_model_argument(model)
    rules = derive(loaded, gauge=gauge, unroll=unroll)  # derive() attaches the model's source to its errors
    text = export_rules(rules, to)
    if output is not None:
        _write(text, str(output))
    return text


def _write(text: str, output: str) -> None:
    """Write atomically, as every command does (nothing is left behind when writing fails)."""
    from .cli import write_output

    write_output(text, output)


# ------------------------------------------------------------------ command line

def add_command(subparsers: "argparse._SubParsersAction[argparse.ArgumentParser]") -> None:
    """Register `vertexsmith export` with the command-line parser."""
    parser = subparsers.add_parser(
        "export", help="export the rules as a Python module, JSON, LaTeX or FORM",
        description="Derive a model's rules and write them for another program: a standalone Python "
                    "module (numpy functions per vertex and propagator), JSON, LaTeX, or FORM id "
                    "statements.")
    parser.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model")
    parser.add_argument("--to", "-t", choices=EXPORT_FORMATS, required=True, help="export format")
    parser.add_argument("-o", "--output", metavar="FILE", help="write to FILE (default: standard output)")
    parser.add_argument("--gauge", choices=GAUGE_CHOICES, default="xi",
                        help="gauge for the vector propagators (default: xi, symbolic R_xi)")
    from .selection import add_quiet_argument, add_selection_arguments, add_value_arguments

    add_selection_arguments(parser)
    add_value_arguments(parser)
    add_quiet_argument(parser)
    parser.add_argument("--unroll", action="store_true",
                        help="write indices of the model's index spaces out: one vertex per component")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run `vertexsmith export`; errors go up to the command line, which reports them (exit 1 or 2)."""
    from .cli import emit

    from .selection import load_with_values, select_from_arguments

    rules = select_from_arguments(load_with_values(args).derive(gauge=args.gauge, unroll=args.unroll), args)
    text = export_rules(rules, args.to)
    if args.output in (None, "-"):
        emit(text, sys.stdout)
    else:
        _write(text, args.output)
    return 0


__all__ = ["EXPORT_FORMATS", "export_rules", "export_model", "load_model_argument", "add_command", "run"]
