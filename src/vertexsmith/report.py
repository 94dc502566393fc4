"""The `report` and `values` commands: a model's rules as one HTML page, and its parameter values as a file.

    vertexsmith report MODEL [-o FILE.html] [--gauge G] [--no-checks] [--field NAME]... [--legs 'L L L']
                             [--set NAME=VALUE]... [--values FILE] [-q]
    vertexsmith values MODEL [-o FILE] [--set NAME=VALUE]... [--values FILE]

The page (see `render/html.py`) holds everything it shows, so it can be mailed or archived and
opened without a network. `values` writes the model's parameter values in our values format, the
starting point of a parameter scan that feeds them back with `--values`. Heavy modules are
imported only when a command runs, so registering the commands costs nothing.
"""

from __future__ import annotations

import argparse

from .selection import add_quiet_argument, add_selection_arguments, add_value_arguments, load_with_values


def add_command(subparsers: "argparse._SubParsersAction[argparse.ArgumentParser]") -> None:
    """Register `vertexsmith report` and `vertexsmith values`."""
    report = subparsers.add_parser(
        "report", help="write one self-contained HTML page with the model's rules, drawn and checked",
        description="Derive and check a model and write an HTML page: summary, check results, every "
                    "propagator and vertex with a picture and its typeset factor, and a filter box. "
                    "The page needs no network access.")
    report.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model")
    report.add_argument("-o", "--output", metavar="FILE", help="write to FILE (default: standard output)")
    report.add_argument("--gauge", choices=("xi", "feynman", "unitary"), default="xi",
                        help="gauge for the vector propagators (default: xi, symbolic R_xi)")
    report.add_argument("--no-checks", action="store_true", help="leave the model's checks out of the page")
    add_selection_arguments(report)
    add_value_arguments(report)
    add_quiet_argument(report)
    report.set_defaults(func=run_report)

    values = subparsers.add_parser(
        "values", help="write the model's parameter values as a values file",
        description="Write the parameter values of a model (after --set and --values) in the values "
                    "format that --values reads back: one 'name = number' per line.")
    values.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model")
    values.add_argument("-o", "--output", metavar="FILE", help="write to FILE (default: standard output)")
    add_value_arguments(values)
    values.set_defaults(func=run_values)


def run_report(args: argparse.Namespace) -> int:
    """vertexsmith report MODEL: derive, check and write the page."""
    from .cli import write_output
    from .render.html import render
    from .selection import select_from_arguments

    model = load_with_values(args)
    rules = select_from_arguments(model.derive(gauge=args.gauge), args)
    diagnostics = None
    if not args.no_checks:
        from .check import check_model

        diagnostics = check_model(model)
    write_output(render(rules, diagnostics=diagnostics), args.output)
    return 0


def run_values(args: argparse.Namespace) -> int:
    """vertexsmith values MODEL: write the parameter values file."""
    from .cli import write_output
    from .selection import values_text

    write_output(values_text(load_with_values(args)), args.output)
    return 0


__all__ = ["add_command", "run_report", "run_values"]
