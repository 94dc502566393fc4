"""Mutations of model files: the inputs of the fuzzing campaign.

Every mutation takes the text of a model and a `random.Random` and returns a new text. They
imitate what people and scripts get wrong: tokens dropped, doubled or swapped, lines moved, names
exchanged between declarations, numbers made huge, zero or negative, kinds and representations
changed, stray unicode and control characters, and whole Lagrangian terms generated from the
declared fields. A case is reproducible from (seed, index): `make_case` derives its own
`random.Random` from both.
"""

from __future__ import annotations

import random
import re
from dataclasses import dataclass
from typing import Callable, Sequence

_TOKEN = re.compile(r"\s+|[A-Za-z_][A-Za-z0-9_.]*|\d+(?:\.\d*)?(?:[eE][-+]?\d+)?|.", re.S)
_NUMBER = re.compile(r"(?<![A-Za-z_\d.])\d+(?:\.\d*)?(?:[eE][-+]?\d+)?")
_NAME = re.compile(r"\b[A-Za-z_][A-Za-z0-9_]*\b")

# words and pieces of the language, to splice in
PIECES = ["(", ")", "[", "]", "+", "-", "*", "/", "^", ",", "=", "\n", " ", "\t", "#", '"',
          "d[mu]", "D[mu]", "D[nu]", "bar(", "dag(", "conj(", "sqrt(", "sin(", "cos(", "exp(", "log(",
          "+ h.c.", "gamma[mu]", "gamma[nu]", "gamma5", "PL", "PR", "sigma[mu,nu]", "eps[mu,nu,rho,sigma]",
          "g[mu,nu]", "T[a]", "f[a,b,c]", "I", "pi", "1/2", "0", "1e300", "^1000000000", "^(-1)",
          "theory", "parameters", "fields", "gauge", "define", "lagrangian", "conventions", "scalar",
          "vector", "dirac", "majorana", "ghost", "complex", "real", "mass", "coupling", "angle", "width",
          "charge", "boson", "strength", "fixing", "U(1)", "SU(2)", "SU(3)", "in", "fundamental",
          "adjoint", "covariant plus", "eps0123 +1", "mu", "nu", "rho", "a", "b", "c"]
UNICODE = ["\f", "\v", "\x85", "\u2028", "\u2029", "\x1c", "\x1d", "\x1e", "\r", "\r\n", "\x00", "\ufeff",
           "\u00a0", "\u200b", "\u202e", "é", "µ", "γ", "∂", "ε", "ψ", "†", "\U0001f600", "\u0301", "ﬁ",
           "\ud800", "Ⅻ", "٣", "𝟙"]
HUGE = ["1e300", "1e-300", "9" * 59, "10^300", "10^(10^10)", "2^1000000", "1e300^2", "0", "-0", "0.0",
        "-1", "-1e300", "1/0", "0/0", "log(0)", "exp(710)", "exp(-1000)", "sqrt(-1)", "(1/3)^(-100000)",
        "1000000", "123456789012345678901234567890", "3^-4000", "0^0", "0^(-1)"]
KINDS = ["scalar", "dirac", "vector", "majorana", "ghost"]
REALITY = ["real", "complex", ""]
REPS = ["fundamental", "adjoint", "antifundamental", "singlet", "triplet"]
GROUP_RANKS = ["1", "2", "3", "0", "-2", "5", "17", "100", "1000", "100000", "999999999999"]


@dataclass(frozen=True)
class Case:
    """One fuzz input: the model text, the command line to run it with, and how it was made."""

    seed: int
    index: int
    base: str
    text: str
    command: tuple[str, ...]
    recipe: tuple[str, ...]


def tokens(text: str) -> list[str]:
    return _TOKEN.findall(text)


def _pick_line(text: str, rng: random.Random, section: str | None = None) -> tuple[list[str], int]:
    lines = text.split("\n")
    candidates = list(range(len(lines)))
    if section is not None:
        start = next((i for i, l in enumerate(lines) if l.strip() == section), None)
        if start is not None:
            candidates = [i for i in range(start + 1, len(lines))
                          if lines[i].startswith(" ") and lines[i].strip() and not lines[i].strip().startswith("#")]
            end = next((i for i in range(start + 1, len(lines)) if lines[i] and not lines[i][0].isspace()
                        and not lines[i].startswith("#")), len(lines))
            candidates = [i for i in candidates if i < end] or candidates
    return lines, rng.choice(candidates) if candidates else 0


def token_mutation(text: str, rng: random.Random) -> str:
    toks = tokens(text)
    if not toks:
        return rng.choice(PIECES)
    i = rng.randrange(len(toks))
    op = rng.randrange(5)
    if op == 0:
        del toks[i]
    elif op == 1:
        toks.insert(i, toks[i])
    elif op == 2:
        j = rng.randrange(len(toks))
        toks[i], toks[j] = toks[j], toks[i]
    elif op == 3:
        toks[i] = rng.choice(PIECES)
    else:
        toks.insert(i, rng.choice(PIECES))
    return "".join(toks)


def line_mutation(text: str, rng: random.Random) -> str:
    lines = text.split("\n")
    i, j = rng.randrange(len(lines)), rng.randrange(len(lines))
    op = rng.randrange(4)
    if op == 0:
        del lines[i]
    elif op == 1:
        lines.insert(j, lines[i])
    elif op == 2:
        lines[i], lines[j] = lines[j], lines[i]
    else:
        lines[i] = lines[i].strip() if lines[i].startswith(" ") else "  " + lines[i]
    return "\n".join(lines)


def declared_names(text: str) -> list[str]:
    """Names declared in the parameters, fields and gauge sections (the second word of the line)."""
    names: list[str] = []
    for line in text.split("\n"):
        words = line.split()
        if not line.startswith(" ") or len(words) < 2 or words[0].startswith("#"):
            continue
        for word in words[:4]:
            if _NAME.fullmatch(word) and word not in PIECES and word not in names:
                names.append(word)
                break
    return names


def name_swap(text: str, rng: random.Random) -> str:
    names = declared_names(text)
    if len(names) < 2:
        return token_mutation(text, rng)
    a, b = rng.sample(names, 2)
    if rng.random() < 0.5:  # swap everywhere
        return re.sub(rf"\b({re.escape(a)}|{re.escape(b)})\b", lambda m: b if m.group(1) == a else a, text)
    # rename one occurrence only
    spots = [m for m in re.finditer(rf"\b{re.escape(a)}\b", text)]
    m = rng.choice(spots)
    return text[:m.start()] + b + text[m.end():]


def number_mutation(text: str, rng: random.Random) -> str:
    spots = list(_NUMBER.finditer(text))
    if not spots:
        return token_mutation(text, rng)
    m = rng.choice(spots)
    return text[:m.start()] + rng.choice(HUGE) + text[m.end():]


def kind_mutation(text: str, rng: random.Random) -> str:
    op = rng.randrange(4)
    if op == 0:
        spots = list(re.finditer(r"\b(scalar|dirac|vector)\b", text))
        if spots:
            m = rng.choice(spots)
            return text[:m.start()] + rng.choice(KINDS) + text[m.end():]
    if op == 1:
        spots = list(re.finditer(r"\b(real|complex)\b", text))
        if spots:
            m = rng.choice(spots)
            return text[:m.start()] + rng.choice(REALITY) + text[m.end():]
    if op == 2:
        spots = list(re.finditer(r"\b(fundamental|adjoint)\b", text))
        if spots:
            m = rng.choice(spots)
            return text[:m.start()] + rng.choice(REPS) + text[m.end():]
    spots = list(re.finditer(r"\b(U|SU)\((\d+)\)", text))
    if spots:
        m = rng.choice(spots)
        return text[:m.start()] + rng.choice(["U", "SU", "SO"]) + f"({rng.choice(GROUP_RANKS)})" + text[m.end():]
    return token_mutation(text, rng)


def unicode_mutation(text: str, rng: random.Random) -> str:
    i = rng.randrange(len(text) + 1)
    return text[:i] + rng.choice(UNICODE) + text[i:]


def _fields(text: str) -> list[tuple[str, str]]:
    """(kind, name) of each declared field."""
    return re.findall(r"^\s+(scalar|dirac|vector)\s+([A-Za-z_][A-Za-z0-9_]*)", text, re.M)


def _parameters(text: str) -> list[str]:
    return re.findall(r"^\s+(?:(?:mass|coupling|angle|width|parameter|real|complex)\s+)+([A-Za-z_]\w*)", text, re.M)


def generated_term(text: str, rng: random.Random) -> str:
    """A Lagrangian line built from the declared fields and parameters, appended to the model."""
    fields = _fields(text) or [("scalar", "phi")]
    params = _parameters(text) or ["1"]
    factors: list[str] = []
    for _ in range(rng.choice([1, 2, 3, 3, 4, 4, 5, 6, 8])):
        kind, name = rng.choice(fields)
        if kind == "dirac":
            inner = rng.choice(["", "gamma[mu] ", "gamma5 ", "PL ", "sigma[mu,nu] ", "gamma[mu] D[mu] ", "T[a] "])
            other = rng.choice([n for k, n in fields if k == "dirac"])
            factors.append(f"bar({name}) {inner}{other}")
        elif kind == "vector":
            factors.append(rng.choice([f"{name}[mu]", f"{name}[nu]", f"d[mu] {name}[nu]", f"{name}[mu,a]"]))
        else:
            factors.append(rng.choice([name, f"dag({name})", f"d[mu] {name}", f"D[mu] {name}", f"{name}[a]"]))
    coefficient = rng.choice(params) + rng.choice(["", "^2", "/2", " I", "^1000000000", "^(-1)", " sqrt(2)"])
    power = rng.choice(["", "", "", "^2", "^3", "^12", "^13"])
    term = f"  {rng.choice(['', '-', '- 1/4 '])}{coefficient} ({' '.join(factors)}){power}"
    if rng.random() < 0.3:
        term += " + h.c."
    if rng.random() < 0.1:  # many terms on one vertex
        term = "\n".join([term] * rng.choice([10, 100, 500]))
    return text.rstrip("\n") + "\n" + term + "\n"


def hostile(text: str, rng: random.Random) -> str:
    """Inputs built to exhaust: deep nesting, huge powers, long lines, many terms, binary bytes."""
    op = rng.randrange(6)
    if op == 0:
        depth = rng.choice([50, 500, 5000, 100000])
        return text + "  " + "(" * depth + "1" + ")" * depth + "\n"
    if op == 1:
        name = rng.choice(_parameters(text) or ['1'])
        power = rng.choice(['1000000000', '(10^10)', '99999'])
        return text + f"  - {name}^{power} {rng.choice(_fields(text) or [('', 'x')])[1]}^2\n"
    if op == 2:
        return text + "  " + " + ".join(["1"] * rng.choice([1000, 10000])) + "\n"
    if op == 3:
        return text + "".join(chr(rng.randrange(0, 256)) for _ in range(rng.randrange(1, 200)))
    if op == 4:
        return text + "  " + "-" * rng.choice([100, 10000]) + "1\n"
    return text + "  " + "d[mu] " * rng.choice([20, 300]) + "1\n"


MUTATIONS: dict[str, Callable[[str, random.Random], str]] = {
    "token": token_mutation, "line": line_mutation, "name-swap": name_swap, "number": number_mutation,
    "kind": kind_mutation, "unicode": unicode_mutation, "term": generated_term, "hostile": hostile,
}
WEIGHTS = {"token": 6, "line": 3, "name-swap": 2, "number": 3, "kind": 3, "unicode": 2, "term": 4, "hostile": 1}
COMMANDS: list[tuple[tuple[str, ...], int]] = [
    (("rules", "{model}", "-o", "{out}"), 4),
    (("rules", "{model}", "-f", "json", "-o", "{out}"), 3),
    (("rules", "{model}", "-f", "latex", "-o", "{out}"), 3),
    (("rules", "{model}", "--gauge", "unitary", "-o", "{out}"), 1),
    (("check", "{model}"), 3),
    (("export", "{model}", "--to", "python", "-o", "{out}"), 1),
    (("export", "{model}", "--to", "form", "-o", "{out}"), 1),
]


def make_case(seed: int, index: int, bases: Sequence[tuple[str, str]],
              commands: Sequence[tuple[tuple[str, ...], int]] = COMMANDS) -> Case:
    """The case number `index` of the campaign with this seed: a base model, 1-3 mutations, a command."""
    rng = random.Random(f"{seed}:{index}")
    base_name, text = rng.choice(list(bases))
    recipe: list[str] = []
    names = list(MUTATIONS)
    for _ in range(rng.choice([1, 1, 1, 2, 2, 3])):
        name = rng.choices(names, [WEIGHTS[n] for n in names])[0]
        text = MUTATIONS[name](text, rng)
        recipe.append(name)
    command = rng.choices([c for c, _ in commands], [w for _, w in commands])[0]
    return Case(seed, index, base_name, text, command, tuple(recipe))
