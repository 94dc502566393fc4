"""The commands `diagrams` and `verify`: the diagram census and the identity checks.

    vertexsmith diagrams MODEL PROCESS [--loops N] [--no-external-self-energies] [--no-tadpoles]
                         [--gauge xi|feynman|unitary] [--format text|json] [-o FILE]
    vertexsmith verify MODEL [PROCESS ...] [--points N] [--tolerance X] [--max-mass M]
                       [--max-processes K] [--format text|json] [-o FILE]

Registered through `cli.PLUGIN_MODULES`; the heavy modules (numpy, the amplitude code) are
imported only when one of these commands runs, so that other commands start fast.
"""

from __future__ import annotations

import argparse

from .errors import UsageError
from .selection import add_quiet_argument, add_value_arguments


def command_diagrams(args: argparse.Namespace) -> int:
    """vertexsmith diagrams MODEL PROCESS: list every diagram of the process at the asked order."""
    from .census import census_to_dict, render_census
    from .cli import EXIT_OK, load, write_output
    from .diagrams import find_diagrams
    from .process import parse_process

    if args.loops not in (0, 1, 2):
        raise UsageError(f"--loops takes 0, 1 or 2, not {args.loops}")
    model = load(args.model)
    rules = model.derive(gauge=args.gauge)
    process = parse_process(model, args.process)
    options = {"external_self_energies": not args.no_external_self_energies, "tadpoles": not args.no_tadpoles}
    found = find_diagrams(rules, process, args.loops, **options)
    if not found:
        order = {0: "at tree level", 1: "at one loop", 2: "at two loops"}[args.loops]
        raise UsageError(f"'{process}' has no diagram {order} in {model.name}",
                         hint="every state's line must end on a vertex of the model; "
                              "'vertexsmith rules MODEL' lists the vertices")
    write_output(render_census(census_to_dict(rules, process, found, args.loops, options), args.format), args.output)
    return EXIT_OK


def command_verify(args: argparse.Namespace) -> int:
    """vertexsmith verify MODEL [PROCESS ...]: check the identities; exit 1 when one fails."""
    from .census import render_report
    from .cli import EXIT_MODEL, EXIT_OK, emit, write_output
    from .verify import verify_model

    if args.points < 1 or args.points > 10000:
        raise UsageError(f"--points takes a number from 1 to 10000, not {args.points}")
    if not 0 < args.tolerance < 1:
        raise UsageError(f"--tolerance takes a number between 0 and 1, not {args.tolerance}")
    if args.max_processes < 1:
        raise UsageError(f"--max-processes takes a positive number, not {args.max_processes}")
    from .selection import load_with_values

    model = load_with_values(args)  # with --set / --values in place of the model's numbers
    report = verify_model(model, args.process, points=args.points, tolerance=args.tolerance,
                          max_mass=args.max_mass, limit=args.max_processes)
    if not report.checks:
        raise UsageError(f"{model.name} has no 2 -> 2 process with a tree diagram among its light states",
                         hint="name processes after the model, e.g. 'vertexsmith verify MODEL \"a b -> c d\"'")
    write_output(render_report(report, args.format), args.output)
    if report.failed:
        import sys

        names = sorted({c.identity.split(",")[0] for c in report.failed})
        emit(f"vertexsmith: {len(report.failed)} identit{'y' if len(report.failed) == 1 else 'ies'} failed: "
             + ", ".join(names) + "\n", sys.stderr)
        return EXIT_MODEL
    return EXIT_OK


def add_command(subparsers: "argparse._SubParsersAction[argparse.ArgumentParser]") -> None:
    """Register `diagrams` and `verify`."""
    diagrams = subparsers.add_parser(
        "diagrams", help="list the Feynman diagrams of a process",
        description="Every distinct diagram of a process at tree level, one loop or two loops, with its "
                    "symmetry factor and relative fermion sign. A process is written with the model's field "
                    "names: a particle as its field, the antiparticle as its conjugate, e.g. "
                    "'ele bar(ele) -> muon bar(muon)' or 'phi dag(phi) -> A A'.")
    diagrams.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model")
    diagrams.add_argument("process", metavar="PROCESS", help="e.g. 'ele bar(ele) -> ele bar(ele)' (quote it)")
    diagrams.add_argument("--loops", type=int, default=0, help="0 (default), 1 or 2")
    diagrams.add_argument("--no-external-self-energies", action="store_true",
                          help="leave out self-energy insertions on external lines")
    diagrams.add_argument("--no-tadpoles", action="store_true",
                          help="leave out pieces joined to the rest by one line and carrying no external state")
    diagrams.add_argument("--gauge", choices=("xi", "feynman", "unitary"), default="xi",
                          help="gauge of the rules (decides whether Goldstone lines appear)")
    diagrams.add_argument("--format", "-f", choices=("text", "json"), default="text")
    diagrams.add_argument("-o", "--output", metavar="FILE", help="write to FILE instead of the terminal")
    diagrams.set_defaults(func=command_diagrams)

    verify = subparsers.add_parser(
        "verify", help="check the rules against identities every correct rule set obeys",
        description="Build tree amplitudes from the derived rules and check Ward identities, independence of "
                    "the gauge parameters (and the unitary gauge), Lorentz invariance, the high-energy "
                    "behaviour of processes with massive vectors, and crossing. Exit status 1 when an "
                    "identity fails. Without processes: every 2 -> 2 process among the light states, one per "
                    "crossing class.")
    verify.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model")
    verify.add_argument("process", metavar="PROCESS", nargs="*", help="processes to check (quote each)")
    verify.add_argument("--points", type=int, default=6, help="phase-space points per check (default 6)")
    verify.add_argument("--tolerance", type=float, default=1e-7, help="largest relative deviation that passes")
    verify.add_argument("--max-mass", type=float, default=None, metavar="M",
                        help="default set: leave out states heavier than M (in the model's units)")
    verify.add_argument("--max-processes", type=int, default=40, metavar="K",
                        help="default set: at most K processes (default 40)")
    verify.add_argument("--format", "-f", choices=("text", "json"), default="text")
    verify.add_argument("-o", "--output", metavar="FILE", help="write to FILE instead of the terminal")
    add_value_arguments(verify)
    add_quiet_argument(verify)
    verify.set_defaults(func=command_verify)
