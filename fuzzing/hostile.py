"""Inputs built to exhaust time or memory: deep nesting, huge powers, numbers and groups, binary
bytes, a 50 MB file, ten thousand terms. Each must stop quickly with an error that names a place
(or, for a legal model that is merely large, finish quickly)."""

from __future__ import annotations

import random
from typing import Callable

from .mutate import Case

# the small model every hostile input grows from; tests/test_budgets.py builds its cases on it too
HOSTILE_HEAD = """theory hostile "inputs built to exhaust (invented numbers)"
parameters
  coupling c = 0.5
  coupling g = 0.7
  mass m = 1.0
gauge
  strong SU(3) boson G strength GS coupling g
fields
  vector G
  scalar phi real mass m
  dirac psi mass m in strong fundamental
lagrangian
  -1/4 GS[mu,nu,a] GS[mu,nu,a]
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  bar(psi) (I gamma[mu] D[mu] - m) psi
"""


def _binary() -> str:
    rng = random.Random(7)
    return bytes(rng.randrange(256) for _ in range(100_000)).decode("latin-1")


def _many_couplings(n: int) -> str:
    text = HOSTILE_HEAD.replace("parameters\n", "parameters\n" + "".join(f"  coupling k{i} = 0.{i + 1}\n" for i in range(n)))
    return text + "".join(f"  - k{i} phi^4\n" for i in range(n))


HOSTILE: dict[str, Callable[[], str]] = {
    "nesting-1e5": lambda: HOSTILE_HEAD + "  " + "(" * 100_000 + "c" + ")" * 100_000 + " phi^4\n",
    "nesting-1e3-index": lambda: HOSTILE_HEAD + "  c phi" + "[" * 1000 + "\n",
    "sum-1e4-terms": lambda: HOSTILE_HEAD + "  " + " + ".join(["c phi^4"] * 10_000) + "\n",
    "lines-1e4": lambda: HOSTILE_HEAD + "".join(f"  - {i + 1}/7 c phi^4\n" for i in range(10_000)),
    "product-1e4": lambda: HOSTILE_HEAD + "  " + " ".join(["c"] * 10_000) + " phi^4\n",
    "power-of-parameter": lambda: HOSTILE_HEAD + "  - m^1000000000 phi^2\n",
    "power-in-value": lambda: HOSTILE_HEAD.replace("c = 0.5", "c = 10^(10^10)"),
    "power-negative-huge": lambda: HOSTILE_HEAD + "  g^(-1e300) phi^4\n",
    "number-1e999999": lambda: HOSTILE_HEAD.replace("c = 0.5", "c = 1e999999"),
    "number-1e5-digits": lambda: HOSTILE_HEAD.replace("c = 0.5", "c = " + "7" * 100_000),
    "exp-710": lambda: HOSTILE_HEAD.replace("c = 0.5", "c = exp(710)"),
    "log-zero": lambda: HOSTILE_HEAD.replace("c = 0.5", "c = log(0)"),
    "group-SU1000": lambda: HOSTILE_HEAD.replace("SU(3)", "SU(1000)"),
    "group-SU1e50": lambda: HOSTILE_HEAD.replace("SU(3)", "SU(" + "1" * 50 + ")"),
    "group-SU10-adjoint-legs": lambda: HOSTILE_HEAD.replace("SU(3)", "SU(10)").replace(
        "  scalar phi real mass m\n", "  scalar phi real mass m\n  scalar S real mass m in strong adjoint\n")
        + "  1/2 D[mu] S[a] D[mu] S[a]\n  - c (S[a] S[a])^4\n",
    "gluons-many-legs": lambda: HOSTILE_HEAD + "  c (G[mu,a] G[mu,a])^5\n",
    "field-power-13": lambda: HOSTILE_HEAD + "  c phi^13\n",
    "derivatives-12": lambda: HOSTILE_HEAD + "  c (d[mu] phi d[mu] phi)^6\n",
    "couplings-300": lambda: _many_couplings(300),
    "binary-100kB": _binary,
    "file-50MB": lambda: HOSTILE_HEAD + ("  c phi^4 # padding\n" * 2_700_000),
    "name-1MB": lambda: HOSTILE_HEAD + "  " + "x" * 1_000_000 + " phi^4\n",
    "latex-huge-factor": lambda: HOSTILE_HEAD.replace("parameters\n", "parameters\n" + "".join(
        f"  coupling k{i} = 0.{i + 1}\n" for i in range(40))) + "  (" + " + ".join(f"k{i}" for i in range(40))
        + ")^4 phi^4\n",
}
COMMANDS = {"latex-huge-factor": ("rules", "{model}", "-f", "json", "-o", "{out}")}


def hostile_case(name: str, lazy: bool = False) -> Case:
    """The hostile input `name` as a fuzz case (command: rules to a file, or check); `lazy` leaves the
    text to be built by the worker that runs it."""
    command = COMMANDS.get(name, ("check", "{model}") if "SU10" in name or name == "gluons-many-legs"
                           else ("rules", "{model}", "-o", "{out}"))
    return Case(0, 0, "hostile", "" if lazy else HOSTILE[name](), command, (name,))
