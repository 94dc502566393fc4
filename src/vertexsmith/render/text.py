"""Rules as terminal text: a conventions header and tables of legs, vertices and propagators.

Factors are printed in unicode by `UnicodePrinter`, a sympy `StrPrinter` with one `_print_X`
method per class of `symbolic.py` (γ^μ₁, (p₁ − p₂)^μ₃, g^μ₃μ₄, p̸₃, γ⁵, P_L, ε^{…}); a class
added later (a group generator, a structure constant) needs one more method and nothing else.
The tables are drawn by rich into a string with a fixed width and no colour unless asked for,
so that the same rules give the same text on every run.

    >>> from vertexsmith.symbolic import FourVector, Gamma
    >>> import sympy
    >>> p1, p2, mu3 = sympy.symbols("p1 p2 mu3")
    >>> unicode_str(FourVector(p1 - p2, mu3))
    '(p₁ − p₂)^μ₃'
"""

from __future__ import annotations

import re
from typing import TYPE_CHECKING, Any

import sympy
from rich.cells import cell_len
from sympy.printing.precedence import PRECEDENCE
from sympy.printing.str import StrPrinter

from ..symbolic import ChargeConj, Gamma5, ProjL, ProjR
from . import top_level_cuts
from ._table import Block, Column, Grid, Table, lay_out, natural_width, rich_lines
from .json import conventions_to_dict
from .spectrum import spectrum_sections

if TYPE_CHECKING:
    from ..model import Parameter
    from ..rules import Leg, Propagator, Rules, Vertex

DEFAULT_WIDTH = 120
MINUS = "\u2212"  # the minus sign, not the hyphen
SLASH = "\u0338"  # combining long solidus overlay: p̸

_SUBSCRIPT = str.maketrans("0123456789+-()", "₀₁₂₃₄₅₆₇₈₉₊₋₍₎")
_SUPERSCRIPT = str.maketrans("0123456789+-()", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻⁽⁾")
_GREEK_INDICES = {"mu": "μ", "nu": "ν", "rho": "ρ"}
# index names the engine makes: mu3, nu, r1 (Lorentz), p2 (momentum), s1 (spinor), a3 / i1 / e1 (group),
# the last possibly qualified by their group when a leg carries several: i1_color
_LORENTZ_NAME = re.compile(r"^(mu|nu|rho|p)([0-9]*)$")
_LETTER_NAME = re.compile(r"^([a-z])([0-9]+)(?:_([A-Za-z0-9_]+))?$")
_CHIRAL_NAMES = {Gamma5: "γ⁵", ProjL: "P_L", ProjR: "P_R", ChargeConj: "C"}
_SLASHED_PREFIX = "slashed:"  # placeholder symbols inside a slashed sum, printed as p̸ₖ


def subscript(text: str) -> str:
    """Digits as unicode subscripts: '12' -> '₁₂'."""
    return text.translate(_SUBSCRIPT)


def superscript(text: str) -> str:
    """Digits and signs as unicode superscripts: '-2' -> '⁻²'."""
    return text.translate(_SUPERSCRIPT)


def index_name(name: str) -> str:
    """Our index and momentum names in unicode: mu3 -> μ₃, r1 -> ρ₁, p1 -> p₁, a3 -> a₃, i1_color -> i₁[color]."""
    match = _LORENTZ_NAME.match(name)
    if match:
        stem, digits = match.groups()
        return _GREEK_INDICES.get(stem, stem) + subscript(digits)
    match = _LETTER_NAME.match(name)
    if match:
        letter, digits, group = match.groups()
        letter = "ρ" if letter == "r" else letter  # r1, r2: contracted Lorentz indices
        return letter + subscript(digits) + (f"[{group}]" if group else "")
    if name.startswith("xi_"):
        return "ξ_" + name[3:]
    return name


class UnicodePrinter(StrPrinter):
    """sympy's string printer, speaking physics notation in unicode.

    Products are juxtaposed (`2i e² g^μ₃μ₄`), the imaginary unit is `i`, powers use superscripts,
    square roots `√`, the minus sign is U+2212, and every class of `symbolic.py` has its own method.
    """

    printmethod = "_vertexsmith_unicode"

    # ------------------------------------------------------------------ numbers and atoms
    def _print_ImaginaryUnit(self, expr: Any) -> str:
        return "i"

    def _print_Pi(self, expr: Any) -> str:
        return "π"

    def _print_Exp1(self, expr: Any) -> str:
        return "ℯ"

    def _print_Infinity(self, expr: Any) -> str:
        return "∞"

    def _print_Symbol(self, expr: sympy.Symbol) -> str:
        if expr in _CHIRAL_NAMES:
            return _CHIRAL_NAMES[expr]
        if expr.name.startswith(_SLASHED_PREFIX):
            return _slashed(index_name(expr.name[len(_SLASHED_PREFIX):]))
        return index_name(expr.name)

    def _print_conjugate(self, expr: Any) -> str:
        return self.parenthesize(expr.args[0], PRECEDENCE["Atom"], strict=True) + "*"

    # ------------------------------------------------------------------ arithmetic
    def _print_Add(self, expr: sympy.Add, order: str | None = None) -> str:
        terms = list(self._as_ordered_terms(expr, order=order))
        # a leading positive term reads better: p² − m² rather than −m² + p²
        terms = ([t for t in terms if not _is_negative(t)] + [t for t in terms if _is_negative(t)])
        out = ""
        for k, term in enumerate(terms):
            negative = _is_negative(term)
            text = self._print(-term if negative else term)
            if isinstance(term, sympy.Add) or (not negative and text.startswith(MINUS)):
                text = f"({text})"
            if k == 0:
                out = (MINUS if negative else "") + text
            else:
                out += f" {MINUS} " if negative else " + "
                out += text
        return out

    def _print_Mul(self, expr: sympy.Mul) -> str:
        factors = _flatten_mul(expr)
        coefficient = sympy.Integer(1)
        imaginary = 0
        numerator: list[sympy.Expr] = []
        denominator: list[sympy.Expr] = []
        for f in factors:
            if f.is_Number:
                coefficient *= f
            elif f is sympy.I:
                imaginary += 1
            elif (f.is_commutative and isinstance(f, sympy.Pow) and f.exp.is_Rational and f.exp.is_negative
                  and not f.base.is_Number):
                denominator.append(sympy.Pow(f.base, -f.exp))
            else:
                numerator.append(f)
        # i^k: an odd k leaves one i, k = 2, 3 (mod 4) flip the sign
        negative = bool(coefficient < 0) != (imaginary % 4 in (2, 3))
        has_i = imaginary % 2 == 1
        number = abs(coefficient)
        p, q = sympy.fraction(number)
        if q != 1:
            denominator.insert(0, q)
        head = ""
        if p != 1 or (not numerator and not has_i):
            head = self._print(p)
        if has_i:
            head += "i"
        # pure numbers such as √2 stand before the symbols: i √2 e/2
        numerator = [f for f in numerator if f.is_number] + [f for f in numerator if not f.is_number]
        pieces = [head] if head else []
        pieces += [self._factor(f) for f in numerator]
        text = " ".join(pieces) if pieces else "1"
        if denominator:
            below = " ".join(self._factor(f) for f in denominator)
            if len(denominator) > 1:
                below = f"({below})"
            text = f"{text}/{below}"
        return (MINUS + text) if negative else text

    def _factor(self, expr: sympy.Expr) -> str:
        text = self.parenthesize(expr, PRECEDENCE["Mul"], strict=False)
        if not text.startswith("(") and text.startswith(MINUS):
            text = f"({text})"
        return text

    def _print_Pow(self, expr: sympy.Pow, rational: bool = False) -> str:
        base, exp = expr.base, expr.exp
        if exp is sympy.S.Half:
            return "√" + self._root_argument(base)
        if exp == -sympy.S.Half:
            return "1/√" + self._root_argument(base)
        if exp.is_Rational and exp.is_negative:
            return "1/" + self._factor(sympy.Pow(base, -exp))
        text = self.parenthesize(base, PRECEDENCE["Pow"], strict=False)
        if isinstance(base, sympy.Pow) or base.is_Rational and not base.is_Integer:
            text = f"({text})"
        if exp.is_Integer:
            return text + superscript(str(exp))
        return f"{text}^({self._print(exp)})"

    def _root_argument(self, base: sympy.Expr) -> str:
        text = self._print(base)
        return text if (base.is_Atom and not base.is_Rational or base.is_Integer and base >= 0) else f"({text})"

    def _print_Rational(self, expr: sympy.Rational) -> str:
        if expr.q == 1:
            return str(expr.p).replace("-", MINUS)
        return f"{expr.p}/{expr.q}".replace("-", MINUS)

    def _print_Integer(self, expr: sympy.Integer) -> str:
        return str(expr.p).replace("-", MINUS)

    # ------------------------------------------------------------------ our Lorentz and Dirac objects
    def _slot(self, slot: sympy.Expr) -> str:
        """A tensor slot: an index (μ₃) or a momentum ((p₁ − p₂) when it is a sum)."""
        text = self._print(slot)
        return f"({text})" if isinstance(slot, sympy.Add) else text

    def _upper(self, slots: tuple[sympy.Expr, ...], braces: bool = False) -> str:
        inner = "".join(self._slot(s) for s in slots)
        return "^{" + inner + "}" if braces else "^" + inner

    def _print_Metric(self, expr: Any) -> str:
        return "g" + self._upper(expr.args)

    def _print_FourVector(self, expr: Any) -> str:
        return self._slot(expr.args[0]) + self._upper(expr.args[1:])

    def _print_Dot(self, expr: Any) -> str:
        return f"{self._slot(expr.args[0])}·{self._slot(expr.args[1])}"

    def _print_LeviCivita(self, expr: Any) -> str:
        return "ε" + self._upper(expr.args, braces=True)

    def _print_Gamma(self, expr: Any) -> str:
        return "γ" + self._upper(expr.args)

    def _print_Sigma(self, expr: Any) -> str:
        return "σ" + self._upper(expr.args)

    def _print_Slash(self, expr: Any) -> str:
        momentum = expr.args[0]
        if isinstance(momentum, sympy.Symbol):
            return _slashed(index_name(momentum.name))
        if isinstance(momentum, sympy.Add):
            # (p₁ − p₂)-slash written as p̸₁ − p̸₂, each momentum slashed
            slashed = momentum.xreplace({s: sympy.Symbol(_SLASHED_PREFIX + s.name)
                                         for s in sorted(momentum.free_symbols, key=str)})
            return "(" + self._print(slashed) + ")"
        return f"slash({self._print(momentum)})"

    def _group_object(self, symbol: str, expr: Any) -> tuple[str, list[str]]:
        """The object's symbol (with [group] when its indices name the group) and its index texts."""
        group = str(expr.args[0])
        suffix = f"_{group}"
        names = [str(x) for x in expr.args[1:]]
        qualified = any(n.endswith(suffix) for n in names)
        indices = [index_name(n[:-len(suffix)] if n.endswith(suffix) else n) for n in names]
        return (f"{symbol}[{group}]" if qualified else symbol), indices

    def _print_StructureConstant(self, expr: Any) -> str:
        f, (a, b, c) = self._group_object("f", expr)
        return f"{f}^{a}{b}{c}"

    def _print_Generator(self, expr: Any) -> str:
        t, (a, i, j) = self._group_object("T", expr)
        return f"({t}^{a})_{i}{j}"

    def _print_GroupDelta(self, expr: Any) -> str:
        delta, (i, j) = self._group_object("δ", expr)
        return f"{delta}_{i}{j}"

    def _print_GroupAlternating(self, expr: Any) -> str:
        # ϵ (lunate) for the group tensor, so it never reads as the Lorentz ε^{...}
        alt, indices = self._group_object("ϵ", expr)
        return f"{alt}_{''.join(indices)}"

    def _print_Component(self, expr: Any) -> str:
        # an entry of a vector or matrix parameter, written as in the model language: Y[gen1,gen2]
        name, *indices = expr.args
        return f"{self._print(name)}[{','.join(str(i) for i in indices)}]"

    def _print_Chain(self, expr: Any) -> str:
        bar_leg, leg, matrix = expr.args
        legs = (subscript(f"{bar_leg}{leg}") if int(bar_leg) < 10 and int(leg) < 10
                else f"_({bar_leg},{leg})")
        return f"[{self._print(matrix)}]{legs}"


def _slashed(name: str) -> str:
    # the overlay goes on the letter, before any subscript digits
    return name[0] + SLASH + name[1:] if name else name


def _is_negative(term: sympy.Expr) -> bool:
    return bool(term.could_extract_minus_sign())


def _flatten_mul(expr: sympy.Expr) -> list[sympy.Expr]:
    """The factors of a (possibly unevaluated, nested) product, in order."""
    out: list[sympy.Expr] = []
    for arg in expr.args:
        if isinstance(arg, sympy.Mul):
            out.extend(_flatten_mul(arg))
        else:
            out.append(arg)
    return out


def unicode_str(expr: Any) -> str:
    """A sympy expression (our classes included) in readable unicode."""
    return UnicodePrinter().doprint(sympy.sympify(expr))


# ------------------------------------------------------------------ tables

def _part_text(coupling: sympy.Expr, group: sympy.Expr, lorentz: sympy.Expr) -> str:
    """coupling x group x Lorentz structure; sums bracketed."""
    pieces = []
    for expr, (open_, close) in ((group, "()"), (lorentz, "[]")):
        if expr != 1:
            text = unicode_str(expr)
            pieces.append(f"{open_}{text}{close}" if isinstance(expr, sympy.Add) else text)
    c = unicode_str(coupling)
    if not pieces:
        return c
    if coupling == -1:
        return MINUS + " ".join(pieces)
    if coupling != 1:
        pieces.insert(0, f"({c})" if isinstance(coupling, sympy.Add) else c)
    return " ".join(pieces)


def vertex_text(vertex: "Vertex", limit: int = 0) -> str:
    """The vertex factor, one part (coupling x structure) per line, joined by + or −.

    With `limit` > 0 a part longer than that is broken between its terms (never inside brackets
    such as (p₁ − p₂)), continuation lines indented.
    """
    lines: list[str] = []
    for k, part in enumerate(vertex.parts):
        text = _part_text(part.coupling, getattr(part, "group", sympy.Integer(1)), part.lorentz)
        if k > 0:
            text = f"{MINUS} {text[1:]}" if text.startswith(MINUS) else f"+ {text}"
        lines.extend(wrap_terms(text, limit) if limit > 0 else [text])
    return "\n".join(lines)


def wrap_terms(text: str, limit: int, indent: str = "    ") -> list[str]:
    """Break a long expression before ' + ' or ' − ' outside round brackets, filling lines up to `limit`."""
    if cell_len(text) <= limit:
        return [text]
    bounds = [0] + [cut + 1 for cut in top_level_cuts(text, ("+", MINUS))] + [len(text) + 1]
    pieces = [text[a:b - 1] for a, b in zip(bounds, bounds[1:])]
    lines = [pieces[0]]
    for piece in pieces[1:]:
        if cell_len(lines[-1]) + 1 + cell_len(piece) <= limit:
            lines[-1] += " " + piece
        else:
            lines.append(indent + piece)
    return lines


def _legs_grid(legs: "tuple[Leg, ...]") -> Grid:
    rows = tuple((str(leg.position), leg.label, index_name(leg.momentum), " ".join(index_name(i) for i in leg.indices))
                 for leg in legs)
    return Grid((Column(wrap=False),) * 4, rows)


def _legend_table(rules: "Rules") -> Table:
    seen: dict[str, "Leg"] = {}
    for v in rules.vertices:
        for leg in v.legs:
            seen.setdefault(leg.label, leg)
    rows = tuple((label, seen[label].field, seen[label].kind, seen[label].meaning())
                 for label in sorted(seen, key=lambda lab: (seen[lab].field, seen[lab].conjugate)))
    return Table((Column("leg"), Column("field"), Column("kind"), Column("meaning")), rows)


def _vertex_table(rules: "Rules", width: int) -> Table:
    columns = (Column("#", justify="right"), Column("legs", wrap=False), Column("factor"),
               Column("lines", justify="right"))
    rows = [(str(n), _legs_grid(v.legs), ", ".join(str(line) for line in v.origins))
            for n, v in enumerate(rules.vertices, start=1)]
    # room left for the factor: the other columns' widths, one space of padding either side of each of
    # the four columns, and the table's own edges (12 in all)
    used = sum(max([cell_len(columns[column].header)] + [natural_width(row[k]) for row in rows])
               for k, column in enumerate((0, 1, 3)))
    limit = max(16, width - used - 12)
    return Table(columns, tuple((number, legs, vertex_text(v, limit), origins)
                                for (number, legs, origins), v in zip(rows, rules.vertices)),
                 show_lines=True, overflow=True)


def _propagator_text(p: "Propagator") -> str:
    return unicode_str(p.factor)


def _propagator_table(rules: "Rules", width: int) -> Table:
    columns = (Column("field"), Column("kind"), Column("indices"), Column("propagator"))
    rows = [(p.label, p.field_kind, " ".join(index_name(i) for i in p.indices) or "–") for p in rules.propagators]
    # as for vertices: the room left for the propagator, broken between terms, never inside brackets
    used = sum(max([cell_len(columns[k].header)] + [cell_len(row[k]) for row in rows]) for k in range(3))
    limit = max(16, width - used - 12)
    return Table(columns, tuple((*row, "\n".join(wrap_terms(_propagator_text(p), limit)))
                                for row, p in zip(rows, rules.propagators)), overflow=True)


def _parameter_table(rules: "Rules") -> Table:
    def row(p: "Parameter") -> tuple[str, str, str, str]:
        value = _number(p.value)
        if p.is_array:  # a vector or matrix parameter: its shape here; its entries are in the model file
            value = "×".join(str(n) for n in p.shape) + " over " + ",".join(p.spaces)
        roles = " ".join(p.roles) + (" complex" if p.is_complex else "") + (f" {p.matrix}" if p.matrix else "")
        return (p.name, roles, value, p.description)

    rows = tuple(row(p) for p in rules.model.parameters.values())
    return Table((Column("name"), Column("roles"), Column("value", justify="right"), Column("description")), rows)


def _number(value: complex | None) -> str:
    if value is None:
        return "–"
    z = complex(value)
    if z.imag == 0:
        return f"{z.real:.10g}"
    sign = "+" if z.imag >= 0 else MINUS
    return f"{z.real:.10g} {sign} {abs(z.imag):.10g}i"


def _title(rules: "Rules") -> str:
    model = rules.model
    return f"Feynman rules of {model.name}" + (f": {model.description}" if model.description else "")


def _header(rules: "Rules") -> Grid:
    c = conventions_to_dict(rules)
    rows = [
        ("gauge", c["gauge_description"]),
        ("metric", c["metric"]),
        ("momenta", c["momenta"]),
        ("derivative", c["derivative"]),
        ("vertex", c["vertex_normalisation"]),
        ("fermion legs", c["fermion_legs"]),
        ("covariant derivative", c["covariant_derivative"]["form"]),
        ("epsilon", f"epsilon^0123 = {c['eps0123']:+d}"),
        ("Dirac matrices", f"{c['sigma']}; {c['projectors']}; {c['gamma5']}"),
        ("propagator", c["propagator"]),
    ]
    if any(not getattr(g, "abelian", True) for g in rules.model.groups.values()):
        rows.append(("group generators", c["group_generators"]))
    return Grid((Column(wrap=False), Column()), tuple(rows))


def _sections(rules: "Rules", width: int) -> list[Block]:
    """The document as blocks: the title, then each section's heading and body."""
    sections: list[tuple[str, Block]] = [("Conventions", _header(rules)), ("Parameters", _parameter_table(rules))]
    if rules.vertices:
        sections += [("Legs", _legend_table(rules)),
                     ("Vertices (legs: position, label, incoming momentum, indices)", _vertex_table(rules, width))]
    else:
        sections.append(("Vertices", "none: the model has no interaction terms"))
    sections.append(("Propagators (momentum p along the particle arrow)", _propagator_table(rules, width)))
    if rules.spectrum is not None:
        sections += spectrum_sections(rules.spectrum)
    blocks: list[Block] = [_title(rules)]
    for heading, body in sections:
        blocks += ["", heading, body]
    return blocks


def render(rules: "Rules", *, width: int = DEFAULT_WIDTH, color: bool = False) -> str:
    """The rules as text tables; `color=True` adds terminal colour codes (bold headers)."""
    return _join([line for block in _sections(rules, width) for line in lay_out(block, width, color)])


def _render_with_rich(rules: "Rules", *, width: int = DEFAULT_WIDTH, color: bool = False) -> str:
    """The same document with every block drawn by rich: the reference `render` is tested against."""
    return _join([line for block in _sections(rules, width) for line in rich_lines(block, width, color)])


def _join(lines: list[str]) -> str:
    # trailing spaces stripped so that the text diffs cleanly; at most one blank line in a row
    text = "\n".join(line.rstrip() for line in lines)
    return re.sub(r"\n{3,}", "\n\n", text).strip("\n") + "\n"


__all__ = ["UnicodePrinter", "unicode_str", "vertex_text", "index_name", "subscript", "superscript", "render"]
