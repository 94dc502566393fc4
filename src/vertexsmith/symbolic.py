"""Our own sympy objects for Lorentz and Dirac structures, so that factors are sympy expressions.

`Metric(mu1, mu2)`, `FourVector(p1 - p2, mu3)`, `Dot(p1, p2)`, `LeviCivita(...)` commute;
`Gamma(mu1)`, `Slash(p1)`, `Sigma(mu1, mu2)`, `Gamma5`, `ProjL`, `ProjR` do not. A product of
several spinor chains is written `Chain(1, 2, M)`, the matrix M between bar(leg 1) and leg 2.
`parse_factor(text)` reads the string form back (only these names are known to it).
"""

from __future__ import annotations

from typing import Any

import sympy
from sympy.printing.latex import LatexPrinter

from .structures import (Chain as ChainStruct, Chiral, Dot as DotStruct, Dummy, Epsilon, Gamma as GammaStruct,
                         Generator as GeneratorStruct, GroupDelta as GroupDeltaStruct, GroupDummy, LegGroupIndex,
                         LegIndex, Metric as MetricStruct, Momentum, Sigma as SigmaStruct, Slot, Structure,
                         StructureConstant as StructureConstantStruct, Vector)


def momentum_symbol(leg: int) -> sympy.Symbol:
    return sympy.Symbol(f"p{leg}")


def index_symbol(leg: int) -> sympy.Symbol:
    return sympy.Symbol(f"mu{leg}")


def _latex_index(s: Any, printer: LatexPrinter) -> str:
    name = str(s)
    for prefix, tex in (("mu", r"\mu"), ("nu", r"\nu"), ("rho", r"\rho"), ("r", r"\rho")):
        if name.startswith(prefix) and name[len(prefix):].isdigit():
            return f"{tex}_{{{name[len(prefix):]}}}"
    return printer._print(s)


def _latex_momentum(p: Any, printer: LatexPrinter) -> str:
    text = printer._print(p)
    return f"({text})" if isinstance(p, sympy.Add) else text


class Metric(sympy.Function):
    """g^{mu nu}, metric (+,-,-,-)."""

    nargs = 2

    def _latex(self, printer: LatexPrinter) -> str:
        return f"g^{{{_latex_index(self.args[0], printer)} {_latex_index(self.args[1], printer)}}}"


class FourVector(sympy.Function):
    """p^mu for a (combination of) incoming momenta."""

    nargs = 2

    def _latex(self, printer: LatexPrinter) -> str:
        return f"{_latex_momentum(self.args[0], printer)}^{{{_latex_index(self.args[1], printer)}}}"


class Dot(sympy.Function):
    """p.q = p^mu q_mu."""

    nargs = 2

    def _latex(self, printer: LatexPrinter) -> str:
        return f"{_latex_momentum(self.args[0], printer)} \\cdot {_latex_momentum(self.args[1], printer)}"


class LeviCivita(sympy.Function):
    """epsilon^{mu nu rho sigma}; a momentum in a slot is contracted."""

    nargs = 4

    def _latex(self, printer: LatexPrinter) -> str:
        parts = []
        for a in self.args:
            parts.append(_latex_index(a, printer) if isinstance(a, sympy.Symbol) and not str(a).startswith("p")
                         else _latex_momentum(a, printer))
        return "\\epsilon^{" + " ".join(parts) + "}"


class Gamma(sympy.Function):
    """gamma^mu (non-commuting)."""

    nargs = 1
    is_commutative = False

    def _latex(self, printer: LatexPrinter) -> str:
        return f"\\gamma^{{{_latex_index(self.args[0], printer)}}}"


class Slash(sympy.Function):
    """p-slash = gamma^mu p_mu (non-commuting)."""

    nargs = 1
    is_commutative = False

    def _latex(self, printer: LatexPrinter) -> str:
        return f"\\not{{{_latex_momentum(self.args[0], printer)}}}"


class Sigma(sympy.Function):
    """sigma^{mu nu} = (i/2)[gamma^mu, gamma^nu] (non-commuting)."""

    nargs = 2
    is_commutative = False

    def _latex(self, printer: LatexPrinter) -> str:
        parts = [_latex_index(a, printer) if isinstance(a, sympy.Symbol) and not str(a).startswith("p")
                 else _latex_momentum(a, printer) for a in self.args]
        return "\\sigma^{" + " ".join(parts) + "}"


class Chain(sympy.Function):
    """Chain(i, j, M): the spinor chain bar(leg i) M leg j, for vertices with several chains."""

    nargs = 3

    def _latex(self, printer: LatexPrinter) -> str:
        i, j, mat = self.args
        return f"\\left[{printer._print(mat)}\\right]_{{{i} {j}}}"


def _latex_group_index(s: Any, printer: LatexPrinter) -> str:
    name = str(s)
    base, _, group = name.partition("_")
    letter, digits = base[:1], base[1:]
    if digits.isdigit():
        return f"{letter}_{{{digits}}}"
    return printer._print(s)


class StructureConstant(sympy.Function):
    """f^{abc} of the group named by the first argument."""

    nargs = 4

    def _latex(self, printer: LatexPrinter) -> str:
        return "f^{" + " ".join(_latex_group_index(a, printer) for a in self.args[1:]) + "}"


class Generator(sympy.Function):
    """(T^a)_{ij} in the fundamental of the group named by the first argument."""

    nargs = 4

    def _latex(self, printer: LatexPrinter) -> str:
        a, i, j = (_latex_group_index(x, printer) for x in self.args[1:])
        return f"\\left(T^{{{a}}}\\right)_{{{i} {j}}}"


class GroupDelta(sympy.Function):
    """delta of a group's index space (the group named by the first argument)."""

    nargs = 3

    def _latex(self, printer: LatexPrinter) -> str:
        i, j = (_latex_group_index(x, printer) for x in self.args[1:])
        return f"\\delta_{{{i} {j}}}"


Gamma5 = sympy.Symbol("Gamma5", commutative=False)
ProjL = sympy.Symbol("ProjL", commutative=False)
ProjR = sympy.Symbol("ProjR", commutative=False)
_CHIRAL_SYMBOLS = {"gamma5": Gamma5, "PL": ProjL, "PR": ProjR}
LATEX_NAMES = {Gamma5: r"\gamma^5", ProjL: "P_L", ProjR: "P_R"}

NAMESPACE: dict[str, Any] = {"Metric": Metric, "FourVector": FourVector, "Dot": Dot, "LeviCivita": LeviCivita,
                             "Gamma": Gamma, "Slash": Slash, "Sigma": Sigma, "Chain": Chain, "Gamma5": Gamma5,
                             "ProjL": ProjL, "ProjR": ProjR, "I": sympy.I, "pi": sympy.pi,
                             "StructureConstant": StructureConstant, "Generator": Generator,
                             "GroupDelta": GroupDelta}


def slot_to_sympy(slot: Slot) -> sympy.Expr:
    if isinstance(slot, LegIndex):
        return index_symbol(slot.leg)
    if isinstance(slot, Dummy):
        return sympy.Symbol(slot.name)
    assert isinstance(slot, Momentum), slot  # group indices never sit in a Lorentz slot
    return sympy.Add(*[sympy.Rational(c.numerator, c.denominator) * momentum_symbol(leg) for leg, c in slot.terms])


def _matrices_to_sympy(chain: ChainStruct) -> sympy.Expr:
    factors: list[sympy.Expr] = []
    for mat in chain.matrices:
        if isinstance(mat, GammaStruct):
            factors.append(Slash(slot_to_sympy(mat.slot)) if isinstance(mat.slot, Momentum)
                           else Gamma(slot_to_sympy(mat.slot)))
        elif isinstance(mat, SigmaStruct):
            factors.append(Sigma(slot_to_sympy(mat.a), slot_to_sympy(mat.b)))
        elif isinstance(mat, Chiral):
            factors.append(_CHIRAL_SYMBOLS[mat.kind])
    return sympy.Mul(*factors) if factors else sympy.Integer(1)


def lorentz_to_sympy(structure: Structure, wrap_chains: bool) -> sympy.Expr:
    """The Lorentz and Dirac part of a structure as a sympy expression."""
    factors: list[sympy.Expr] = []
    for t in structure.tensors:
        if isinstance(t, MetricStruct):
            factors.append(Metric(slot_to_sympy(t.a), slot_to_sympy(t.b)))
        elif isinstance(t, Vector):
            factors.append(FourVector(slot_to_sympy(t.momentum), slot_to_sympy(t.index)))
        elif isinstance(t, DotStruct):
            factors.append(Dot(slot_to_sympy(t.p), slot_to_sympy(t.q)))
        elif isinstance(t, Epsilon):
            factors.append(LeviCivita(*[slot_to_sympy(s) for s in t.slots_]))
    for chain in structure.chains:
        mat = _matrices_to_sympy(chain)
        factors.append(Chain(chain.bar_leg, chain.leg, mat) if wrap_chains else mat)
    return sympy.Mul(*factors) if factors else sympy.Integer(1)


def group_to_sympy(tensors: tuple, names: dict[tuple[int, str], str]) -> sympy.Expr:
    """The group part of a structure; leg indices named a3, i1 (see Leg.indices), dummies e1, e2."""
    def slot(x: Slot) -> sympy.Symbol:
        if isinstance(x, LegGroupIndex):
            return sympy.Symbol(names.get((x.leg, x.group), f"g{x.leg}"))
        assert isinstance(x, GroupDummy)
        return sympy.Symbol(x.name)

    factors: list[sympy.Expr] = []
    for t in tensors:
        group = sympy.Symbol(t.group)
        cls = {StructureConstantStruct: StructureConstant, GeneratorStruct: Generator,
               GroupDeltaStruct: GroupDelta}[type(t)]
        factors.append(cls(group, *[slot(x) for x in t.slots_]))
    return sympy.Mul(*factors) if factors else sympy.Integer(1)


def parse_factor(text: str, symbols: "dict[str, sympy.Symbol] | None" = None) -> sympy.Expr:
    """Read a factor written by `str(vertex.factor)` back into sympy (our names only).

    `symbols` maps parameter names to the model's own symbols (which carry real=True), e.g.
    {p.name: p.symbol for p in model.parameters.values()}, so that the result compares equal.
    """
    from sympy.parsing.sympy_parser import parse_expr

    return parse_expr(text, local_dict={**NAMESPACE, **(symbols or {})}, evaluate=True)


def to_latex(expr: sympy.Expr) -> str:
    return sympy.latex(expr, symbol_names={**_greek_symbol_names(expr), **LATEX_NAMES})


def _greek_symbol_names(expr: sympy.Expr) -> dict[sympy.Symbol, str]:
    names: dict[sympy.Symbol, str] = {}
    for s in expr.free_symbols:
        text = str(s)
        for prefix, tex in (("mu", r"\mu"), ("p", "p")):
            if text.startswith(prefix) and text[len(prefix):].isdigit():
                names[s] = f"{tex}_{{{text[len(prefix):]}}}"
        if text.startswith("xi_"):
            names[s] = rf"\xi_{{{text[3:]}}}"
        elif not text.isascii():
            names[s] = _ascii_latex(text)
        elif s not in names and len(text) > 1 and text.isalnum() and text.lower() not in _GREEK:
            names[s] = rf"\mathrm{{{text}}}"
    return names


def greek_command(char: str) -> str | None:
    """The TeX math command of a Greek letter (lambda -> \\lambda, Lambda -> \\Lambda), None when TeX has none."""
    import unicodedata

    name = unicodedata.name(char, "")
    for prefix, known, capital in (("GREEK SMALL LETTER ", _GREEK_LOWER_COMMANDS, False),
                                   ("GREEK CAPITAL LETTER ", _GREEK_UPPER_COMMANDS, True)):
        if name.startswith(prefix):
            letter = name[len(prefix):].lower().replace("lamda", "lambda")
            if letter in known:
                return f"\\{letter.capitalize() if capital else letter}"
    return None


def _ascii_latex(text: str) -> str:
    """A name written with unicode letters (phi written as the Greek letter) in plain-LaTeX commands."""
    import unicodedata

    out = []
    for char in text:
        if char.isascii():
            out.append(char if char != "_" else r"\_")
            continue
        command = greek_command(char)
        if command is not None:
            out.append(command + " ")
            continue
        name = unicodedata.name(char, "")
        if name.startswith("GREEK CAPITAL LETTER "):
            letter = name[len("GREEK CAPITAL LETTER "):].split()[0].capitalize()
            out.append(rf"\mathrm{{{_LATIN_LOOKALIKE.get(letter, '?')}}}")
        else:
            out.append(r"\mathrm{?}")
    return "{" + "".join(out).strip() + "}"


# Greek letters TeX has commands for, by their unicode names (which spell lambda "lamda")
_GREEK_LOWER_COMMANDS = set("alpha beta gamma delta epsilon zeta eta theta iota kappa lambda mu nu xi pi rho sigma "
                            "tau upsilon phi chi psi omega".split())
_GREEK_UPPER_COMMANDS = {"gamma", "delta", "theta", "lambda", "xi", "pi", "sigma", "upsilon", "phi", "psi", "omega"}
_LATIN_LOOKALIKE = {"Alpha": "A", "Beta": "B", "Epsilon": "E", "Zeta": "Z", "Eta": "H", "Iota": "I", "Kappa": "K",
                    "Mu": "M", "Nu": "N", "Omicron": "O", "Rho": "P", "Tau": "T", "Chi": "X"}


_GREEK = {"alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "iota", "kappa", "lambda", "mu",
          "nu", "xi", "pi", "rho", "sigma", "tau", "upsilon", "phi", "chi", "psi", "omega", "lam"}
