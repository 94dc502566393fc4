"""Narrowing rules to the vertices asked for, and parameter values from the command line or a file.

Selection: `select_rules(rules, fields=("A",))` keeps the vertices that contain every named
field (a name may be a leg label such as `bar(e)` to ask for that leg; a name given twice asks for
two such legs), `select_rules(rules, legs=("bar(e)", "e", "A"))` the one vertex with exactly
those legs, in the order asked. Propagators are kept for the fields named. Unknown names get a
"did you mean".

Values: a values file is our own small format, one ``name = number`` per line, ``#`` starting a
comment, complex numbers written ``0.3 - 0.1i``. `values_text(model)` writes one for a model
(parameters defined by a formula appear as comments, since they follow from the others), so a
parameter scan can start from it; `read_values` reads one, with file:line:col errors;
`with_values(model, values)` gives the model with those numbers in place of its own.

    >>> parse_number("0.3 - 0.1i")
    3/10 - I/10
"""

from __future__ import annotations

import argparse
import re
from dataclasses import replace
from fractions import Fraction
from pathlib import Path
from typing import TYPE_CHECKING, Iterable, Mapping, Sequence, TypeVar

from .errors import Source, Span, UsageError, did_you_mean

if TYPE_CHECKING:
    import sympy

    from .pipeline import Model as LoadedModel

    from .model import Model
    from .rules import Rules

_UNSIGNED = r"(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_REAL_ONLY = re.compile(rf"^[+-]?{_UNSIGNED}$")
_COMPLEX = re.compile(rf"^(?P<re>[+-]?{_UNSIGNED})\s*(?P<sign>[+-])\s*(?P<im>{_UNSIGNED})?\s*\*?$")
_IMAGINARY = re.compile(rf"^(?P<sign>[+-]?)\s*(?P<im>{_UNSIGNED})?\s*\*?$")
_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")
_M = TypeVar("_M", bound="Model")
_HINT = "write a number such as 0.31, -2.5e-3 or, for a complex parameter, 0.3 - 0.1i"


# ------------------------------------------------------------------ selection

def _leg_names(rules: "Rules") -> set[str]:
    names = set(rules.model.fields)
    for vertex in rules.vertices:
        names.update(vertex.labels)
    return names


def _unknown(name: str, rules: "Rules", what: str) -> UsageError:
    field = rules.model.fields.get(_field_of(name))
    if field is not None and name != field.name:
        # bar() or dag() of a field the model has: say what is wrong with the conjugate, not which name is near
        if not field.two_ended:
            return UsageError(f"'{field.name}' is its own conjugate, so '{name}' names no leg",
                              hint=f"write {field.name}")
        right = f"bar({field.name})" if field.is_fermion else f"dag({field.name})"
        return UsageError(f"'{name}' names no leg: '{field.name}' is a {field.kind} field", hint=f"write {right}")
    return UsageError(f"unknown {what} '{name}'",
                      hint=did_you_mean(name, _leg_names(rules),
                                        "the fields are: " + ", ".join(rules.model.fields)))


def _field_of(label: str) -> str:
    for prefix in ("bar(", "dag("):
        if label.startswith(prefix) and label.endswith(")"):
            return label[len(prefix):-1]
    return label


def select_rules(rules: "Rules", fields: Sequence[str] = (), legs: Sequence[str] = ()) -> "Rules":
    """The rules narrowed to the vertices with all `fields` (names or leg labels), or with exactly `legs`."""
    if not fields and not legs:
        return rules
    known = _leg_names(rules)
    for name in (*fields, *legs):
        if name not in known:
            raise _unknown(name, rules, "field or leg")
    vertices = rules.vertices
    if legs:
        vertices = (rules.vertex(*legs),)  # raises with a did-you-mean when no vertex has these legs
    if fields:
        vertices = tuple(v for v in vertices if _contains(v.legs, fields))
    named = {_field_of(name) for name in (*fields, *legs)}
    propagators = tuple(p for p in rules.propagators if p.field in named)
    return replace(rules, vertices=vertices, propagators=propagators)


def _contains(legs: Iterable, names: Sequence[str]) -> bool:
    free = list(legs)
    for name in names:
        match = next((leg for leg in free if name in (leg.field, leg.label)), None)
        if match is None:
            return False
        free.remove(match)
    return True


# ------------------------------------------------------------------ values

def parse_number(text: str) -> sympy.Expr:
    """A real or complex number of the values format as an exact sympy number; ValueError if it is none."""
    import sympy

    written = text.strip()
    if not written.endswith("i"):
        if not _REAL_ONLY.match(written):
            raise ValueError(written)
        return _exact(written)
    body = written[:-1].rstrip()
    both = _COMPLEX.match(body)
    if both is not None:  # 0.3 - 0.1i, 1 + i
        imag = _exact(both["im"]) if both["im"] else sympy.Integer(1)
        return _exact(both["re"]) + sympy.I * (-imag if both["sign"] == "-" else imag)
    pure = _IMAGINARY.match(body)
    if pure is None:
        raise ValueError(written)
    imag = _exact(pure["im"]) if pure["im"] else sympy.Integer(1)
    return sympy.I * (-imag if pure["sign"] == "-" else imag)


def _exact(decimal: str) -> sympy.Expr:
    """A decimal as an exact rational, as the model language reads its numbers."""
    import sympy

    return sympy.Rational(Fraction(decimal))


def read_values(path: str | Path) -> dict[str, sympy.Expr]:
    """Read a values file; errors point at file:line:col."""
    try:
        text = Path(path).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise UsageError(f"cannot read the values file '{path}' ({getattr(exc, 'strerror', None) or exc})") from None
    return parse_values(text, str(path))


def parse_values(text: str, name: str = "<values>") -> dict[str, sympy.Expr]:
    """The name = number lines of a values file, in order."""
    source = Source(name, text)
    values: dict[str, sympy.Expr] = {}
    for number, raw in enumerate(text.splitlines(), 1):
        line = raw.split("#", 1)[0].rstrip()
        if not line.strip():
            continue
        indent = len(line) - len(line.lstrip())
        key, equals, value = line.strip().partition("=")
        key = key.strip()
        if not equals:
            raise UsageError("expected 'name = number'", Span(number, indent + 1, number, len(line)),
                             "write one parameter per line, e.g. 'e = 0.3028'", source)
        if not _NAME.match(key):
            raise UsageError(f"'{key}' is not a parameter name", Span(number, indent + 1, number, indent + max(1, len(key))),
                             "a name starts with a letter, followed by letters, digits or '_'", source)
        column = line.index("=") + 2 + (len(value) - len(value.lstrip()))
        try:
            values[key] = parse_number(value)
        except ValueError:
            raise UsageError(f"'{value.strip()}' is not a number", Span(number, column, number, len(line)),
                             _HINT, source) from None
    return values


def parse_assignment(text: str) -> tuple[str, sympy.Expr]:
    """NAME=VALUE from the command line (--set)."""
    key, equals, value = text.partition("=")
    if not equals or not _NAME.match(key.strip()):
        raise UsageError(f"--set needs NAME=VALUE, got '{text}'", hint="e.g. --set e=0.31")
    try:
        return key.strip(), parse_number(value)
    except ValueError:
        raise UsageError(f"--set {key.strip()}: '{value}' is not a number", hint=_HINT) from None


def with_values(model: _M, values: Mapping[str, sympy.Expr]) -> _M:
    """The model with these numbers in place of its own; parameters defined from them follow."""
    import sympy

    from .values import resolve_values_from

    if not values:
        return model
    parameters = dict(model.parameters)
    for name, number in values.items():
        p = parameters.get(name)
        if p is None:
            raise UsageError(f"unknown parameter '{name}'",
                             hint=did_you_mean(name, parameters, "the parameters are: " + ", ".join(parameters)))
        if p.definition is not None and p.definition.free_symbols:
            raise UsageError(f"'{name}' is computed from other parameters ({p.definition}) in the model",
                             hint="set the parameters it is computed from instead")
        if not p.is_complex and sympy.im(number) != 0:
            raise UsageError(f"'{name}' is a real parameter, but the value given is complex: {number}",
                             hint=f"give a real number, or declare '{name}' complex in the model")
        parameters[name] = replace(p, definition=number)
    resolved = resolve_values_from(parameters, {})
    parameters = {name: replace(p, value=resolved.get(p.symbol)) for name, p in parameters.items()}
    return replace(model, parameters=parameters)


def _format(value: complex) -> str:
    # repr: the shortest decimal that reads back to the same float, so a written file loses nothing
    if value.imag == 0:
        return repr(value.real)
    sign = "-" if value.imag < 0 else "+"
    return f"{value.real!r} {sign} {abs(value.imag)!r}i"


def values_text(model: "Model") -> str:
    """The model's parameter values in the values format (formula parameters as comments)."""
    lines = [f"# parameter values of the model '{model.name}'" + (f" ({model.description})" if model.description else ""),
             "# one 'name = number' per line; complex numbers as 0.3 - 0.1i; '#' starts a comment.",
             "# Read back with: vertexsmith rules MODEL --values FILE"]
    width = max((len(name) for name in model.parameters), default=0)
    for p in model.parameters.values():
        value = "?" if p.value is None else _format(complex(p.value))
        note = f"  # {p.description}" if p.description else ""
        if p.definition is not None and p.definition.free_symbols:
            lines.append(f"# {p.name:<{width}} = {p.definition}  (computes to {value}; follows from the others)")
        else:
            lines.append(f"{p.name:<{width}} = {value}{note}")
    return "\n".join(lines) + "\n"


# ------------------------------------------------------------------ command-line options

def add_value_arguments(parser: argparse.ArgumentParser) -> None:
    """--set NAME=VALUE and --values FILE."""
    parser.add_argument("--set", dest="assignments", action="append", default=[], metavar="NAME=VALUE",
                        help="a parameter value instead of the model's own (repeatable)")
    parser.add_argument("--values", dest="values_file", metavar="FILE",
                        help="parameter values from a values file (see 'vertexsmith values'); --set wins")


def add_selection_arguments(parser: argparse.ArgumentParser) -> None:
    """--field NAME (repeatable) and --legs 'L1 L2 ...'."""
    parser.add_argument("--field", dest="fields", action="append", default=[], metavar="NAME",
                        help="only vertices with this field or leg (e.g. A, bar(e)); repeat for several")
    parser.add_argument("--legs", metavar="'LEG LEG ...'",
                        help="only the vertex with exactly these legs, in this order (e.g. 'bar(e) e A')")


def add_quiet_argument(parser: argparse.ArgumentParser) -> None:
    """-q/--quiet: no progress bars (they are off anyway when stderr is not a terminal)."""
    parser.add_argument("-q", "--quiet", action="store_true", help="show no progress bars")


def load_with_values(args: argparse.Namespace) -> "LoadedModel":
    """The model named on the command line (args.model), with the values of --values and --set in place."""
    from ._resources import resolve_model_argument
    from .pipeline import load_model

    values = values_from_arguments(args)  # read the values first: a bad file fails before the model loads
    return with_values(load_model(resolve_model_argument(args.model)), values)


def values_from_arguments(args: argparse.Namespace) -> dict[str, sympy.Expr]:
    """The values of --values FILE, then each --set."""
    values: dict[str, sympy.Expr] = {}
    if getattr(args, "values_file", None):
        values.update(read_values(args.values_file))
    for assignment in getattr(args, "assignments", []) or []:
        key, number = parse_assignment(assignment)
        values[key] = number
    return values


def select_from_arguments(rules: "Rules", args: argparse.Namespace) -> "Rules":
    """The rules narrowed by --field and --legs."""
    legs = tuple((getattr(args, "legs", None) or "").split())
    return select_rules(rules, tuple(getattr(args, "fields", []) or []), legs)


__all__ = ["select_rules", "parse_number", "parse_values", "read_values", "parse_assignment", "with_values",
           "values_text", "add_value_arguments", "add_selection_arguments", "add_quiet_argument", "load_with_values",
           "values_from_arguments",
           "select_from_arguments"]
