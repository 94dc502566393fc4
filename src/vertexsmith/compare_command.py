"""`vertexsmith compare MODEL HANDRULES`: the command-line face of `compare.py`.

Kept apart from `compare.py` so that building the command-line parser (and `vertexsmith --help`)
imports neither sympy nor numpy: this module imports only the standard library and `errors`, and
reaches the engine when the command runs. The defaults of the comparison come from
`comparison_settings.py`, which the engine reads too.
"""

from __future__ import annotations

import argparse
import sys

from .errors import UsageError

from .comparison_settings import POINTS, SEED


def add_command(subparsers: "argparse._SubParsersAction[argparse.ArgumentParser]") -> None:
    """Register `vertexsmith compare` with the command-line parser."""
    parser = subparsers.add_parser(
        "compare", help="compare hand-derived rules with the derived ones",
        description="Compare a file of hand-derived Feynman rules with the rules derived from a model, at "
                    "random momenta and parameter values, and name the convention behind each difference. "
                    "Exit 0 when every hand rule equals the derived one, 1 otherwise.")
    parser.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model")
    parser.add_argument("hand", metavar="HANDRULES", help="file of hand-derived rules (see grammar/handrules.lark)")
    parser.add_argument("--gauge", choices=("xi", "feynman", "unitary"), default=None,
                        help="gauge of the hand propagators (default: the file's 'gauge' line, else feynman)")
    parser.add_argument("--all", dest="require_all", action="store_true",
                        help="also fail when a vertex of the model is missing from the hand file")
    parser.add_argument("--points", type=int, default=POINTS, help=f"random points per rule (default {POINTS})")
    parser.add_argument("--seed", type=int, default=SEED, help="seed of the random points")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run `vertexsmith compare`: 0 all equal, 1 differences; errors go up to the command line (exit 1 or 2)."""
    from .cli import emit
    from .compare import compare_files, format_report

    if args.points < 1:
        raise UsageError("--points must be at least 1")
    report = compare_files(args.model, args.hand, args.gauge, args.points, args.seed)
    emit(format_report(report), sys.stdout)
    return report.exit_code(args.require_all)


__all__ = ["add_command", "run"]
