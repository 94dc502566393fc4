"""The `vertexsmith` command: derive, check and list models from a shell.

    vertexsmith rules MODEL [--format text|latex|json] [--snippet] [--gauge xi|feynman|unitary] [--unroll]
                      [-o FILE]
    vertexsmith check MODEL
    vertexsmith models

MODEL is a path to a model file or the name of a shipped example (`vertexsmith rules qed`).
Exit codes: 0 fine; 1 the model has errors; 2 the command, an option or a file could not be used.
No traceback reaches the user: our own errors print as ``file:line:col: error: ...`` with the
line and a caret; anything unexpected prints one line asking for a bug report (set
VERTEXSMITH_TRACEBACK=1 to see the traceback instead). Every command is a subparser whose
`func(args) -> int` does the work, so other modules can add commands (see `_build_parser`).

The command line starts fast: building the parser imports only the standard library, `errors`,
`render` (the format names) and the command modules of `PLUGIN_MODULES`, none of which may import
sympy, numpy, lark or rich at module level; each command imports what it uses when it runs.
`vertexsmith --help` and `vertexsmith models` never import sympy or numpy (a test holds this).
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
import tempfile
from pathlib import Path
from types import ModuleType
from typing import IO, TYPE_CHECKING, Sequence

from .errors import UsageError, VertexsmithError

if TYPE_CHECKING:
    from .pipeline import Model

EXIT_OK = 0
EXIT_MODEL = 1
EXIT_USAGE = 2
PROG = "vertexsmith"
# modules that contribute subcommands; each has add_command(subparsers) and is cheap to import
# (standard library and `errors` only at module level: the engine is imported when the command runs)
PLUGIN_MODULES = ("vertexsmith.export", "vertexsmith.compare_command", "vertexsmith.report", "vertexsmith.cli_physics")


# ------------------------------------------------------------------ helpers shared by the commands

def resolve_model(name: str) -> Path:
    """A model argument as a file: an existing path, else a shipped example by name."""
    from ._resources import resolve_model_argument

    return resolve_model_argument(name)


def load(name: str) -> "Model":
    """Load a model given on the command line (path or shipped name)."""
    from .pipeline import load_model

    path = resolve_model(name)
    return load_model(path)


def write_output(text: str, output: str | None) -> None:
    """Write to a file atomically (temporary file in the same folder, then rename) or to stdout."""
    if output is None or output == "-":
        emit(text, sys.stdout)
        return
    target = Path(output)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise UsageError(f"cannot write '{output}': the folder '{folder}' does not exist")
    if target.is_dir():
        raise UsageError(f"cannot write '{output}': it is a folder")
    try:
        handle, temporary = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise UsageError(f"cannot write '{output}' ({exc.strerror or exc})") from None
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(text.encode("utf-8"))
        os.chmod(temporary, _file_mode(target))
        os.replace(temporary, target)
    except OSError as exc:
        _remove_quietly(temporary)
        raise UsageError(f"cannot write '{output}' ({exc.strerror or exc})") from None
    except BaseException:
        _remove_quietly(temporary)
        raise


def _file_mode(target: Path) -> int:
    """Keep an existing file's mode; a new file gets the usual 0666 minus the umask (mkstemp uses 0600)."""
    try:
        return target.stat().st_mode & 0o7777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask


def _remove_quietly(path: str) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def emit(text: str, stream: IO[str]) -> None:
    """Write text to a terminal or pipe, as UTF-8 bytes when the stream's encoding cannot hold it."""
    try:
        stream.write(text)
    except UnicodeEncodeError:
        buffer = getattr(stream, "buffer", None)
        if buffer is None:
            stream.write(text.encode("ascii", "replace").decode("ascii"))
        else:
            stream.flush()
            buffer.write(text.encode("utf-8"))
    stream.flush()


def report(err: VertexsmithError) -> None:
    """Print one of our errors to stderr: compiler style when it points into a file."""
    if err.source is not None or err.span.line > 0:
        message = str(err)
    else:
        message = f"{PROG}: {err.severity}: {err.message}" + (f"\n  hint: {err.hint}" if err.hint else "")
    emit(message.rstrip("\n") + "\n", sys.stderr)


def _optional_module(name: str) -> ModuleType | None:
    """Import a module that another part of the project may not have written yet."""
    try:
        return importlib.import_module(name)
    except ModuleNotFoundError as exc:
        if exc.name == name:
            return None
        raise


# ------------------------------------------------------------------ the commands

def command_rules(args: argparse.Namespace) -> int:
    """vertexsmith rules MODEL: derive and print the Feynman rules."""
    from .render import render

    if args.snippet and args.format != "latex":
        raise UsageError("--snippet applies only to --format latex")
    from .selection import load_with_values, select_from_arguments

    model = load_with_values(args)
    rules = model.derive(gauge=args.gauge, unroll=args.unroll)  # derive() attaches the model's source to its errors
    rules = select_from_arguments(rules, args)
    options: dict[str, object] = {}
    if args.format == "latex":
        options["snippet"] = args.snippet
    if args.format == "text" and args.output in (None, "-") and _wants_colour(sys.stdout):
        options["color"] = True
        options["width"] = _terminal_width()
    text = render(rules, args.format, **options)
    write_output(text, args.output)
    return EXIT_OK


def _wants_colour(stream: IO[str]) -> bool:
    if os.environ.get("NO_COLOR"):
        return False
    isatty = getattr(stream, "isatty", None)
    return bool(isatty and isatty())


def _terminal_width() -> int:
    import shutil

    return max(60, shutil.get_terminal_size((120, 24)).columns)


def command_check(args: argparse.Namespace) -> int:
    """vertexsmith check MODEL: load the model and print the checker's diagnostics."""
    checker = _optional_module("vertexsmith.check")
    if checker is None or not hasattr(checker, "check_model"):
        raise UsageError("the 'check' command is not available in this installation "
                         "(the module vertexsmith.check is missing)",
                         hint="use 'vertexsmith rules MODEL', which also reports every error in the model")
    from .selection import load_with_values

    try:
        model = load_with_values(args)
    except UsageError:
        raise
    except VertexsmithError as err:
        # a model that cannot be built is one error: report it and still give the summary line
        report(err)
        emit(f"{err.source.name if err.source else args.model}: 1 error, 0 warnings, 0 notes\n", sys.stdout)
        return EXIT_MODEL
    from .pipeline import prepare_model

    diagnostics = list(checker.check_model(prepare_model(model)))  # the model stages run first, as in derive
    counts = {"error": 0, "warning": 0, "note": 0}
    for diagnostic in diagnostics:
        severity = str(getattr(diagnostic, "severity", "error"))
        counts[severity] = counts.get(severity, 0) + 1
        emit(str(diagnostic).rstrip("\n") + "\n", sys.stdout)
    summary = ", ".join(f"{n} {kind}{'' if n == 1 else 's'}" for kind, n in counts.items())
    emit(f"{model.source.name}: {summary}\n", sys.stdout)
    return EXIT_MODEL if counts["error"] else EXIT_OK


def command_models(args: argparse.Namespace) -> int:
    """vertexsmith models: list the shipped example models with their descriptions."""
    from ._resources import shipped_models
    from .parse import parse_text

    paths = shipped_models()
    width = max((len(p.stem) for p in paths), default=0)
    lines = []
    for path in paths:
        # the description is in the header line: parsing that line is enough, and fast
        try:
            description = parse_text(_header_lines(path.read_text(encoding="utf-8")), str(path)).theory.description
        except VertexsmithError as err:
            description = f"(cannot be read: {err.message})"
        except (OSError, UnicodeDecodeError) as exc:
            description = f"(cannot be read: {exc})"
        lines.append(f"{path.stem:<{width}}  {description}".rstrip())
    emit("\n".join(lines) + ("\n" if lines else ""), sys.stdout)
    return EXIT_OK


def _header_lines(text: str) -> str:
    """The opening comments and the header line of a model file (`theory NAME "description"`)."""
    lines = text.splitlines(keepends=True)
    for k, line in enumerate(lines):
        if line.strip() and not line.lstrip().startswith("#"):
            return "".join(lines[:k + 1])
    return text


# ------------------------------------------------------------------ the parser

def _build_parser() -> argparse.ArgumentParser:
    from . import __version__
    from .render import FORMATS

    # argparse itself prints the usage and exits with 2 on a bad command or option
    parser = argparse.ArgumentParser(prog=PROG, description="Derive the Feynman rules of a model written in the vertexsmith "
                                            "model language, and check the model.")
    parser.add_argument("--version", action="version", version=f"{PROG} {__version__}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    subparsers.required = True

    rules = subparsers.add_parser("rules", help="derive the Feynman rules of a model",
                                  description="Derive every vertex and propagator of a model.")
    rules.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model (see 'models')")
    rules.add_argument("--format", "-f", choices=sorted(FORMATS), default="text",
                       help="output format (default: text)")
    rules.add_argument("--snippet", action="store_true",
                       help="with --format latex: only the rules, for pasting into a document")
    rules.add_argument("--gauge", choices=("xi", "feynman", "unitary"), default="xi",
                       help="gauge for the vector propagators (default: xi, symbolic R_xi)")
    rules.add_argument("--unroll", action="store_true",
                       help="write indices of the model's index spaces out: one vertex per component")
    rules.add_argument("-o", "--output", metavar="FILE",
                       help="write to FILE (atomically; nothing is written if derivation fails)")
    _add_shared_arguments(rules, select=True)
    rules.set_defaults(func=command_rules)

    check = subparsers.add_parser("check", help="check a model and list its problems",
                                  description="Check a model and print its diagnostics.")
    check.add_argument("model", metavar="MODEL", help="model file, or the name of a shipped model")
    _add_shared_arguments(check, select=False)
    check.set_defaults(func=command_check)

    models = subparsers.add_parser("models", help="list the shipped example models",
                                   description="List the shipped example models.")
    models.set_defaults(func=command_models)

    # ---- subcommands contributed by other modules -------------------------------------------
    # vertexsmith.export and vertexsmith.compare each register their own subparser here with
    # add_command(subparsers), setting func(args) -> int through set_defaults(func=...).
    for module_name in PLUGIN_MODULES:
        module = _optional_module(module_name)
        if module is not None and hasattr(module, "add_command"):
            module.add_command(subparsers)
    return parser


def _add_shared_arguments(parser: argparse.ArgumentParser, select: bool) -> None:
    """Selection (--field, --legs), parameter values (--set, --values) and -q, from vertexsmith.selection."""
    from .selection import add_quiet_argument, add_selection_arguments, add_value_arguments

    if select:
        add_selection_arguments(parser)
    add_value_arguments(parser)
    add_quiet_argument(parser)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code (0 fine, 1 model errors, 2 unusable command or file)."""
    try:
        parser = _build_parser()
        try:
            args = parser.parse_args(list(argv) if argv is not None else None)
        except SystemExit as exc:  # --help, --version, or a usage error already printed
            return EXIT_OK if exc.code is None else exc.code if isinstance(exc.code, int) else EXIT_USAGE
        from .progress import shown, wanted

        with shown(wanted(getattr(args, "quiet", False))):  # progress bars on a terminal only
            code: int = args.func(args)
        return code
    except UsageError as err:
        report(err)
        return EXIT_USAGE
    except VertexsmithError as err:
        report(err)
        return EXIT_MODEL
    except KeyboardInterrupt:
        emit(f"{PROG}: interrupted\n", sys.stderr)
        return 130
    except BrokenPipeError:
        # the reader went away (e.g. `| head`): stop quietly, and keep Python from complaining at exit
        try:
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        except (OSError, ValueError):
            pass
        return EXIT_MODEL
    except Exception as exc:  # noqa: BLE001 - the promise is: no traceback reaches a user
        if os.environ.get("VERTEXSMITH_TRACEBACK"):
            raise
        what = " ".join(f"{type(exc).__name__}: {exc}".split())
        emit(f"{PROG}: internal error ({what}); this is a bug in vertexsmith, please report it together "
             "with the model file and the command\n", sys.stderr)
        return EXIT_MODEL


if __name__ == "__main__":
    sys.exit(main())
