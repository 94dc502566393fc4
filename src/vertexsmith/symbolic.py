"""Our own sympy objects for Lorentz, Dirac and group structures, so that factors are sympy expressions.

`Metric`, `FourVector`, `Dot`, `LeviCivita` and the group tensors commute; `Gamma`, `Slash`,
`Sigma`, `Gamma5`, `ProjL`, `ProjR` do not. The classes are internal; as text they speak the
model language itself (the output vocabulary, documented once in the README and the JSON
schema), so that a factor can be pasted back into a model or a hand-rules file:

    g[mu1,mu2]  p1[mu3]  (p1 - p2)[mu3]  dot(p1, p2)  eps[mu1,mu2,p1,p2]
    gamma[mu3]  slash(p1)  sigma[mu1,mu2]  gamma5  PL  PR  chain(1, 2, M)
    f_color[a1,a2,a3]  T_color[a3,i1,i2]  delta_color[i1,i2]  alt_weak[i1,i2]
    Ye[gen1,gen2]  (an entry of a vector or matrix parameter; Ye[1,2] in unrolled rules)

`str()` of a factor uses these names with sympy's `**` and `conjugate`; `factor_text()` gives
the model language exactly (`^`, `conj`). `parse_factor(text)` reads either form back.
"""

from __future__ import annotations

import re
from typing import Any

import sympy
from sympy.printing.latex import LatexPrinter
from sympy.printing.str import StrPrinter

from .errors import UNKNOWN_SPAN
from .structures import (Chain as ChainStruct, Chiral, Dot as DotStruct, Dummy, Epsilon, Gamma as GammaStruct,
                         Generator as GeneratorStruct, GroupAlternating as GroupAlternatingStruct,
                         GroupDelta as GroupDeltaStruct, GroupDummy, LegGroupIndex,
                         LegIndex, Metric as MetricStruct, Momentum, ParamTensor, Sigma as SigmaStruct, Slot, Structure,
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


def _own_text(expr: Any, printer: Any, text: "Any") -> str:
    """The model-language text of one of our objects, unless the printer has its own method for it."""
    method = getattr(printer, "_print_" + type(expr).__name__, None)
    return method(expr) if method is not None else text()


def _slot_text(slot: Any, printer: Any) -> str:
    return printer._print(slot)


def _bracketed(name: str, slots: tuple, printer: Any) -> str:
    return name + "[" + ",".join(_slot_text(x, printer) for x in slots) + "]"


class Metric(sympy.Function):
    """g^{mu nu}, metric (+,-,-,-); text g[mu,nu]."""

    nargs = 2

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed("g", self.args, printer))

    def _latex(self, printer: LatexPrinter) -> str:
        return f"g^{{{_latex_index(self.args[0], printer)} {_latex_index(self.args[1], printer)}}}"


class FourVector(sympy.Function):
    """p^mu for a (combination of) incoming momenta; text p1[mu3] or (p1 - p2)[mu3]."""

    nargs = 2

    def _sympystr(self, printer: Any) -> str:
        def text() -> str:
            p = printer._print(self.args[0])
            if not isinstance(self.args[0], sympy.Symbol):
                p = f"({p})"
            return f"{p}[{printer._print(self.args[1])}]"
        return _own_text(self, printer, text)

    def _latex(self, printer: LatexPrinter) -> str:
        return f"{_latex_momentum(self.args[0], printer)}^{{{_latex_index(self.args[1], printer)}}}"


class Dot(sympy.Function):
    """p.q = p^mu q_mu; text dot(p, q)."""

    nargs = 2

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: f"dot({printer._print(self.args[0])}, {printer._print(self.args[1])})")

    def _latex(self, printer: LatexPrinter) -> str:
        return f"{_latex_momentum(self.args[0], printer)} \\cdot {_latex_momentum(self.args[1], printer)}"


class LeviCivita(sympy.Function):
    """epsilon^{mu nu rho sigma}; a momentum in a slot is contracted; text eps[mu1,mu2,p1,p2]."""

    nargs = 4

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed("eps", self.args, printer))

    def _latex(self, printer: LatexPrinter) -> str:
        parts = []
        for a in self.args:
            parts.append(_latex_index(a, printer) if isinstance(a, sympy.Symbol) and not str(a).startswith("p")
                         else _latex_momentum(a, printer))
        return "\\epsilon^{" + " ".join(parts) + "}"


class Gamma(sympy.Function):
    """gamma^mu (non-commuting); text gamma[mu]."""

    nargs = 1
    is_commutative = False

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed("gamma", self.args, printer))

    def _latex(self, printer: LatexPrinter) -> str:
        return f"\\gamma^{{{_latex_index(self.args[0], printer)}}}"


class Slash(sympy.Function):
    """p-slash = gamma^mu p_mu (non-commuting); text slash(p)."""

    nargs = 1
    is_commutative = False

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: f"slash({printer._print(self.args[0])})")

    def _latex(self, printer: LatexPrinter) -> str:
        return f"\\not{{{_latex_momentum(self.args[0], printer)}}}"


class Sigma(sympy.Function):
    """sigma^{mu nu} = (i/2)[gamma^mu, gamma^nu] (non-commuting); text sigma[mu,nu]."""

    nargs = 2
    is_commutative = False

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed("sigma", self.args, printer))

    def _latex(self, printer: LatexPrinter) -> str:
        parts = [_latex_index(a, printer) if isinstance(a, sympy.Symbol) and not str(a).startswith("p")
                 else _latex_momentum(a, printer) for a in self.args]
        return "\\sigma^{" + " ".join(parts) + "}"


class Chain(sympy.Function):
    """The spinor chain bar(leg i) M leg j, for vertices with several chains; text chain(i, j, M)."""

    nargs = 3

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: "chain(" + ", ".join(printer._print(a) for a in self.args) + ")")

    def _latex(self, printer: LatexPrinter) -> str:
        i, j, mat = self.args
        return f"\\left[{printer._print(mat)}\\right]_{{{i} {j}}}"


def _latex_group_index(s: Any, printer: LatexPrinter) -> str:
    """a3 -> a_{3}; i1_color -> i_{1,\\mathrm{color}}: the group tag stays where a leg carries several groups."""
    name = str(s)
    base, _, group = name.partition("_")
    letter, digits = base[:1], base[1:]
    if digits.isdigit():
        tag = f",\\mathrm{{{_escape_underscores(group)}}}" if group else ""
        return f"{letter}_{{{digits}{tag}}}"
    stem = base.rstrip("0123456789")
    if not group and stem.isalpha() and stem != base:  # an index-space index, gen2: \mathrm{gen}_{2}
        return f"\\mathrm{{{stem}}}_{{{base[len(stem):]}}}"
    return printer._print(s)


def _escape_underscores(text: str) -> str:
    return text.replace("_", r"\_")


class StructureConstant(sympy.Function):
    """f^{abc} of the group named by the first argument; text f_color[a1,a2,a3]."""

    nargs = 4

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed(f"f_{self.args[0]}", self.args[1:], printer))

    def _latex(self, printer: LatexPrinter) -> str:
        return "f^{" + " ".join(_latex_group_index(a, printer) for a in self.args[1:]) + "}"


class Generator(sympy.Function):
    """(T^a)_{ij} in the fundamental of the group named by the first argument; text T_color[a3,i1,i2]."""

    nargs = 4

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed(f"T_{self.args[0]}", self.args[1:], printer))

    def _latex(self, printer: LatexPrinter) -> str:
        a, i, j = (_latex_group_index(x, printer) for x in self.args[1:])
        return f"\\left(T^{{{a}}}\\right)_{{{i} {j}}}"


class GroupDelta(sympy.Function):
    """delta of a group's index space (the group named by the first argument); text delta_color[i1,i2]."""

    nargs = 3

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed(f"delta_{self.args[0]}", self.args[1:], printer))

    def _latex(self, printer: LatexPrinter) -> str:
        i, j = (_latex_group_index(x, printer) for x in self.args[1:])
        return f"\\delta_{{{i} {j}}}"


class GroupAlternating(sympy.Function):
    """epsilon_{i1...iN}, the invariant alternating tensor of the SU(N) group named by the first argument;
    text alt_weak[i1,i3]."""

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed(f"alt_{self.args[0]}", self.args[1:], printer))

    def _latex(self, printer: LatexPrinter) -> str:
        return "\\varepsilon_{" + " ".join(_latex_group_index(x, printer) for x in self.args[1:]) + "}"


class Component(sympy.Function):
    """The entry Y_ij of a vector or matrix parameter (indices are names or 1-based numbers); text Y[i,j]."""

    def _sympystr(self, printer: Any) -> str:
        return _own_text(self, printer, lambda: _bracketed(str(self.args[0]), self.args[1:], printer))

    def _latex(self, printer: LatexPrinter) -> str:
        name, *indices = self.args
        return f"{printer._print(name)}_{{{' '.join(_latex_group_index(x, printer) for x in indices)}}}"


Gamma5 = sympy.Symbol("gamma5", commutative=False)
ProjL = sympy.Symbol("PL", commutative=False)
ProjR = sympy.Symbol("PR", commutative=False)
# the charge-conjugation matrix C = i gamma^2 gamma^0 at the ends of a chain with a cc() field
ChargeConj = sympy.Symbol("CC", commutative=False)
_CHIRAL_SYMBOLS = {"gamma5": Gamma5, "PL": ProjL, "PR": ProjR, "C": ChargeConj}
LATEX_NAMES = {Gamma5: r"\gamma^5", ProjL: "P_L", ProjR: "P_R", ChargeConj: r"\mathcal{C}"}

# the functions of the output vocabulary that are written with round brackets
NAMESPACE: dict[str, Any] = {"dot": Dot, "slash": Slash, "chain": Chain, "conj": sympy.conjugate,
                             "gamma5": Gamma5, "PL": ProjL, "PR": ProjR, "CC": ChargeConj, "I": sympy.I, "pi": sympy.pi}


def _with_powers(cls: type) -> None:
    """Let sympy's LaTeX printer raise one of our objects to a power: it calls _latex(printer, exp=...)
    for a function in a power (p1.p2 squared), which our plain _latex methods did not take."""
    plain = cls._latex

    def _latex(self: Any, printer: LatexPrinter, exp: str | None = None) -> str:
        text = plain(self, printer)
        if exp is None:
            return text
        bracketed = text.startswith("\\left(") and text.endswith("\\right)")
        return (text if bracketed else f"\\left({text}\\right)") + f"^{{{exp}}}"

    cls._latex = _latex


for _own_class in (Metric, FourVector, Dot, LeviCivita, Gamma, Slash, Sigma, Chain, StructureConstant, Generator,
                   GroupDelta, GroupAlternating):
    _with_powers(_own_class)


class _TextPrinter(StrPrinter):
    """sympy's string printer speaking the model language: x^2 and conj(y) rather than x**2, conjugate(y)."""

    def _print_Pow(self, expr: sympy.Pow, rational: bool = False) -> str:
        return str(super()._print_Pow(expr, rational)).replace("**", "^")

    def _print_conjugate(self, expr: sympy.Expr) -> str:
        return f"conj({self._print(expr.args[0])})"


def factor_text(expr: sympy.Expr) -> str:
    """A factor in the output vocabulary, exactly as a model or hand-rules file writes it."""
    return _TextPrinter().doprint(expr)


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
        if isinstance(t, ParamTensor):
            entry = Component(sympy.Symbol(t.group), *[slot(x) for x in t.slots_])
            factors.append(sympy.conjugate(entry) if t.conjugate else entry)
            continue
        group = sympy.Symbol(t.group)
        cls = {StructureConstantStruct: StructureConstant, GeneratorStruct: Generator,
               GroupDeltaStruct: GroupDelta, GroupAlternatingStruct: GroupAlternating}[type(t)]
        factors.append(cls(group, *[slot(x) for x in t.slots_]))
    return sympy.Mul(*factors) if factors else sympy.Integer(1)


def parse_factor(text: str, symbols: "dict[str, sympy.Symbol] | None" = None) -> sympy.Expr:
    """Read a factor vertexsmith wrote (`factor_text`, `str(vertex.factor)`, JSON) back into sympy.

    `symbols` maps parameter names to the model's own symbols (which carry real=True), e.g.
    {p.name: p.symbol for p in model.parameters.values()}, so that the result compares equal.
    Only for our own output: it goes through sympy's parser, never give it model text.
    """
    from sympy.parsing.sympy_parser import convert_xor, parse_expr, standard_transformations

    transformations = (_bracket_calls,) + standard_transformations + (convert_xor,)
    local = {**NAMESPACE, **(symbols or {})}
    local.update({name: cls for name, cls in (("_vs_metric", Metric), ("_vs_gamma", Gamma), ("_vs_sigma", Sigma),
                                               ("_vs_eps", LeviCivita), ("_vs_vector", FourVector),
                                               ("_vs_f", StructureConstant), ("_vs_T", Generator),
                                               ("_vs_delta", GroupDelta), ("_vs_alt", GroupAlternating),
                                               ("_vs_component", Component))})
    return parse_expr(text, local_dict=local, transformations=transformations, evaluate=True)


# the exported module copies this function's source: a mutation run must leave it undecorated
def _bracket_calls(tokens: list, local_dict: dict, global_dict: dict) -> list:  # pragma: no mutate block
    """Token pass: NAME[...] and (...)[...] of the output vocabulary become function calls.

    g[a,b] -> metric, gamma/sigma/eps[...], f_G/T_G/delta_G[...] -> group tensor of G with G as
    the first argument, p[i], pk[i] or (expr)[i] -> the four-vector of that momentum, any other
    NAME[...] -> the entry of a vector or matrix parameter.
    """
    # self-contained (the exported Python module carries a copy of its source for its symbolic())
    from tokenize import NAME, OP, STRING

    calls = {"g": "_vs_metric", "gamma": "_vs_gamma", "sigma": "_vs_sigma", "eps": "_vs_eps"}
    group_calls = {"f": "_vs_f", "T": "_vs_T", "delta": "_vs_delta", "alt": "_vs_alt"}
    out: list = []
    for tok in tokens:
        if tok[0] == OP and tok[1] == "[" and out:
            head: list = []
            if out[-1][0] == NAME:
                name = out.pop()[1]
                base, _, group = name.partition("_")
                if name in calls:
                    head = [(NAME, calls[name]), (OP, "(")]
                elif group and base in group_calls:
                    head = [(NAME, group_calls[base]), (OP, "("), (NAME, "Symbol"), (OP, "("),
                            (STRING, repr(group)), (OP, ")"), (OP, ",")]
                elif name == "p" or (name[:1] == "p" and name[1:].isdigit()):
                    head = [(NAME, "_vs_vector"), (OP, "("), (NAME, name), (OP, ",")]
                else:  # any other name with indices is an entry of a vector or matrix parameter
                    head = [(NAME, "_vs_component"), (OP, "("), (NAME, "Symbol"), (OP, "("),
                            (STRING, repr(name)), (OP, ")"), (OP, ",")]
            elif out[-1][0] == OP and out[-1][1] == ")":
                depth, k = 0, len(out) - 1
                while k >= 0:
                    depth += {")": 1, "(": -1}.get(out[k][1], 0) if out[k][0] == OP else 0
                    if depth == 0:
                        break
                    k -= 1
                inner = out[k:]
                del out[k:]
                head = [(NAME, "_vs_vector"), (OP, "(")] + inner + [(OP, ",")]
            out.extend(head)
            out.append((OP, "[["))  # marks the bracket to close as a call
            continue
        if tok[0] == OP and tok[1] == "]":
            opened = max((k for k, t in enumerate(out) if t == (OP, "[[")), default=None)
            if opened is not None:
                del out[opened]
                out.append((OP, ")"))
                continue
        out.append(tok)
    return out


class _LatexPrinter(LatexPrinter):
    """sympy's LaTeX printer with a star for the complex conjugate (a bar would read as a Dirac bar)."""

    def _print_conjugate(self, expr: sympy.Expr, exp: Any = None) -> str:
        text = f"{{{self._print(expr.args[0])}}}^{{*}}"
        return f"\\left({text}\\right)^{{{exp}}}" if exp else text


def to_latex(expr: sympy.Expr, order: str | None = None) -> str:
    """LaTeX of a factor: our objects, index names, and model names by `name_latex`.

    Within the budgets: the printer's time grows with the tree, so its size is checked first, and
    the length of what it wrote after."""
    from .errors import DerivationError
    from .limits import EXPRESSION_NODES, LATEX_CHARACTERS, expression_nodes, over_budget

    if expression_nodes(expr) > EXPRESSION_NODES.limit:
        raise over_budget(EXPRESSION_NODES, f"more than {EXPRESSION_NODES.limit:,}", UNKNOWN_SPAN,
                          "a factor printed as LaTeX", "use the JSON or text output for so large a factor",
                          DerivationError)
    settings: dict[str, Any] = {"symbol_names": {**_symbol_names(expr), **LATEX_NAMES}}
    if order is not None:
        settings["order"] = order
    text = str(_LatexPrinter(settings).doprint(expr))
    if len(text) > LATEX_CHARACTERS.limit:
        raise over_budget(LATEX_CHARACTERS, len(text), UNKNOWN_SPAN, "a factor printed as LaTeX",
                          "use the JSON or text output for so large a factor", DerivationError)
    return text


# names the engine makes: leg indices mu3, momenta p2, propagator p, mu, nu, gauge parameters xi_<boson>
_INTERNAL = re.compile(r"^(mu|nu|p|r)[0-9]*$")


def _symbol_names(expr: sympy.Expr) -> dict[sympy.Symbol, str]:
    names: dict[sympy.Symbol, str] = {}
    for s in expr.free_symbols:
        text = str(s)
        match = _INTERNAL.match(text)
        if match:
            prefix, digits = match.group(1), text[len(match.group(1)):]
            tex = {"mu": r"\mu", "nu": r"\nu", "p": "p", "r": r"\rho"}[prefix]
            names[s] = f"{tex}_{{{digits}}}" if digits else tex
        elif text.startswith("xi_"):
            names[s] = rf"\xi_{{{name_latex(text[3:])}}}"
        else:
            names[s] = name_latex(text)
    return names


def name_latex(name: str) -> str:
    """A model name in math mode, literally: m, \\mathrm{mu\\_q}, \\mathrm{gh\\_G}.

    A name that is a whole Greek letter (mu, lambda, Lambda) or is written with Greek letters
    (μ) is typeset Greek; a double underscore asks for a subscript: m__u -> m_{u}, theta__W -> \\theta_{W}.
    """
    if "__" in name:
        base, _, sub = name.partition("__")
        return f"{{{name_latex(base)}}}_{{{name_latex(sub)}}}"
    if not name.isascii():
        return _ascii_latex(name)
    if name in _GREEK_LOWER_COMMANDS or (name[:1].isupper() and name.lower() in _GREEK_UPPER_COMMANDS
                                          and name[1:].islower()):
        return "\\" + name
    if len(name) == 1:
        return name
    return rf"\mathrm{{{_escape_underscores(name)}}}"


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


def is_plain_product(expr: sympy.Expr) -> bool:
    """A rational number, i, symbols and positive integer powers of symbols, multiplied: `-3 i g**2/4`.

    Such a coefficient is already what expand() and factor() would return, so both are skipped
    for it (they cost more than the rest of a vertex's derivation).
    """
    factors = expr.args if isinstance(expr, sympy.Mul) else (expr,)
    return all(f.is_Rational or f is sympy.I or f.is_Symbol
               or (f.is_Pow and f.base.is_Symbol and f.exp.is_Integer and f.exp > 0) for f in factors)


def surely_symbolic(ratio: sympy.Expr, top: sympy.Expr, bottom: sympy.Expr) -> bool:
    """True when no simplify() can turn `ratio` = top/bottom into a number, so that it need not be tried.

    Between two products of numbers, roots of integers, i, symbols, their conjugates and integer
    powers of these, sympy's own cancellation is complete: a symbol left in the ratio stays there.
    """
    return bool(ratio.free_symbols) and _is_monomial(top) and _is_monomial(bottom)


def _is_monomial(expr: sympy.Expr) -> bool:
    def atom(f: sympy.Expr) -> bool:
        return bool(f.is_Symbol or (isinstance(f, sympy.conjugate) and f.args[0].is_Symbol))

    factors = expr.args if isinstance(expr, sympy.Mul) else (expr,)
    return all(f.is_Rational or f is sympy.I or atom(f)
               or (f.is_Pow and atom(f.base) and f.exp.is_Integer)
               or (f.is_Pow and f.base.is_Integer and f.base > 0 and f.exp.is_Rational) for f in factors)
