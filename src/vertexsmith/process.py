"""Processes written the way the model language writes fields: ``ele bar(ele) -> muon bar(muon)``.

A state is a field name (the particle) or its conjugate as the model writes it (``bar(f)`` for a
Dirac field, ``dag(s)`` for a complex boson): the antiparticle. Incoming states sit left of
``->``, outgoing ones right of it. Every state is turned into the vertex-leg label its line ends
on: an incoming particle ends on the leg of its own field, an outgoing one on the conjugate leg
(an outgoing electron is created by bar(ele)). Errors point at the offending word of the process
text, shown as its own one-line source named ``process``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from typing import TYPE_CHECKING

from .errors import Source, Span, UsageError, did_you_mean

if TYPE_CHECKING:
    from .model import Model

_TOKEN = re.compile(r"\s*(?:(->)|(bar|dag)\(\s*([A-Za-z_][A-Za-z0-9_]*)\s*\)|([A-Za-z_][A-Za-z0-9_]*)|(\S))")


@dataclass(frozen=True)
class State:
    """One external particle of a process: what was written, its field and direction."""

    label: str  # as written: ele, bar(ele), dag(phi), A
    field: str
    anti: bool
    incoming: bool
    kind: str  # scalar, dirac, vector
    is_complex: bool
    representations: tuple[tuple[str, str, int], ...]  # (group, representation, dimension)

    @property
    def attach(self) -> str:
        """The vertex-leg label this external line ends on."""
        return self.label if self.incoming else conjugate_label(self.label, self.kind, self.is_complex)

    @property
    def fermion(self) -> bool:
        return self.kind == "dirac"

    @property
    def anti_label(self) -> str:
        """The label of the antiparticle (the state seen from the other side of the arrow)."""
        return conjugate_label(self.label, self.kind, self.is_complex)


def conjugate_label(label: str, kind: str, is_complex: bool) -> str:
    """bar(f) <-> f for Dirac fields and ghosts, dag(s) <-> s for complex bosons; real fields are their own."""
    for prefix in ("bar(", "dag("):
        if label.startswith(prefix):
            return label[len(prefix):-1]
    if kind in ("dirac", "ghost"):
        return f"bar({label})"
    return f"dag({label})" if is_complex else label


@dataclass(frozen=True)
class Process:
    """A parsed process: the states in and out, in the order written."""

    text: str
    incoming: tuple[State, ...]
    outgoing: tuple[State, ...]

    @property
    def states(self) -> tuple[State, ...]:
        return self.incoming + self.outgoing

    def __str__(self) -> str:
        return " ".join(s.label for s in self.incoming) + " -> " + " ".join(s.label for s in self.outgoing)


def _fail(text: str, start: int, end: int, message: str, hint: str = "") -> UsageError:
    span = Span(1, start + 1, 1, max(start + 1, end))
    return UsageError(message, span, hint, source=Source("process", text))


def _dimension(model: "Model", group: str, representation: str) -> int:
    if representation == "flavour":  # an index space of the model's own (generations): its size
        return model.spaces[group].size
    n = model.groups[group].rank
    return n * n - 1 if representation == "adjoint" else n


def parse_process(model: "Model", text: str) -> Process:
    """Read a process such as ``ele bar(ele) -> muon bar(muon)``; errors point into the text."""
    if not isinstance(text, str):
        raise UsageError("a process is a string such as 'ele bar(ele) -> muon bar(muon)'")
    if "\n" in text.strip():
        raise UsageError("a process is written on one line", hint="e.g. 'ele bar(ele) -> muon bar(muon)'")
    text = text.strip()
    physical = sorted(name for name, f in model.fields.items() if f.kind != "ghost")
    sides: list[list[State]] = [[]]
    arrow_at = -1
    position = 0
    while position < len(text):
        match = _TOKEN.match(text, position)
        assert match is not None  # the last alternative matches any non-space character
        start = match.start(match.lastindex or 0)
        if match.group(1):
            if arrow_at >= 0:
                raise _fail(text, start, match.end(), "a process has one '->'")
            arrow_at = start
            sides.append([])
        elif match.group(5):
            raise _fail(text, start, match.end(), f"unexpected '{match.group(5)}' in the process",
                        "write states as field names or their conjugates, e.g. 'ele bar(ele) -> A A'")
        else:
            sides[-1].append(_state(model, text, match, start, incoming=arrow_at < 0, physical=physical))
        position = match.end()
    if arrow_at < 0:
        raise _fail(text, len(text), len(text) + 1, "the process has no '->' between incoming and outgoing states",
                    "e.g. 'ele bar(ele) -> muon bar(muon)'")
    incoming, outgoing = sides
    if not incoming or not outgoing:
        where = arrow_at if not incoming else arrow_at + 1
        raise _fail(text, where, where + 2, f"no {'incoming' if not incoming else 'outgoing'} state",
                    "write at least one state on each side of '->'")
    process = Process(text, tuple(incoming), tuple(outgoing))
    _check_charges(model, process, arrow_at)
    return process


def _state(model: "Model", text: str, match: "re.Match[str]", start: int, incoming: bool,
           physical: list[str]) -> State:
    wrapper, name = (match.group(2), match.group(3)) if match.group(2) else (None, match.group(4))
    end = match.end()
    name_start, name_end = match.span(3) if wrapper else match.span(4)
    start = match.start(2) if wrapper else name_start
    field = model.fields.get(name)
    if field is None or field.kind == "ghost":
        what = "a ghost, not an external state" if field is not None else "not a field of this model"
        close = did_you_mean(name, physical, "")
        raise _fail(text, name_start, name_end, f"'{name}' is {what}",
                    (close + "; " if close else "") + f"the model's fields are: {', '.join(physical)}")
    if wrapper is not None:
        wanted = "bar" if field.kind == "dirac" else "dag"
        if not field.is_complex and field.kind != "dirac":
            raise _fail(text, start, end, f"'{name}' is its own antiparticle: '{wrapper}({name})' names no state",
                        f"write '{name}'")
        if wrapper != wanted:
            raise _fail(text, start, end, f"the antiparticle of '{name}' is written '{wanted}({name})'",
                        f"write '{wanted}({name})'")
    reps = tuple((g, rep, _dimension(model, g, rep)) for g, rep in field.representations)
    label = f"{wrapper}({name})" if wrapper else name
    return State(label, name, wrapper is not None, incoming, field.kind, field.is_complex or field.kind == "dirac", reps)


def charge_balance(model: "Model", process: Process) -> list[tuple[str, Fraction, Fraction]]:
    """Each abelian charge that the process does not conserve: (group, total in, total out)."""
    out = []
    for group in sorted(model.groups.values(), key=lambda g: g.name):
        if not group.abelian:
            continue
        total = {True: Fraction(0), False: Fraction(0)}
        for state in process.states:
            charge = model.fields[state.field].charge(group.name)
            total[state.incoming] += -charge if state.anti else charge
        if total[True] != total[False]:
            out.append((group.name, total[True], total[False]))
    return out


def _check_charges(model: "Model", process: Process, arrow_at: int) -> None:
    for name, charge_in, charge_out in charge_balance(model, process)[:1]:
        raise _fail(process.text, arrow_at, arrow_at + 2,
                    f"the process does not conserve the charge of '{name}': "
                    f"{_fraction(charge_in)} in, {_fraction(charge_out)} out",
                    "check which states are particles and which antiparticles (bar()/dag())")


def _fraction(value: Fraction) -> str:
    return str(value.numerator) if value.denominator == 1 else f"{value.numerator}/{value.denominator}"
