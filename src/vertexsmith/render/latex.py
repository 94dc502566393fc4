r"""Rules as LaTeX: a standalone article, or with `snippet=True` only the rules.

The standalone document needs a plain LaTeX installation (article class, amsmath, lmodern for
scalable fonts). Slashed momenta are written `\not{p}`, the form `symbolic.to_latex` produces.
The snippet is one `align*` environment per vertex and per propagator (pages break between
them) preceded by comment lines stating the conventions, for pasting into a document that loads
amsmath.

Symbols go through `symbolic.to_latex` (names and factors alike); plain text
(names, descriptions) is escaped, so a model can never inject LaTeX commands.

    >>> import vertexsmith
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> render(rules, snippet=True).count(r"\begin{align*}")
    5
"""

from __future__ import annotations

import itertools
import re
from typing import TYPE_CHECKING, Any

import sympy

from ..symbolic import greek_command, to_latex
from .json import conventions_to_dict
from .spectrum import spectrum_latex

if TYPE_CHECKING:
    from ..rules import Leg, Propagator, Rules, Vertex
    from ..model import Parameter

_TEXT_ESCAPES = {
    "\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_", "{": r"\{",
    "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}", "<": r"\textless{}",
    ">": r"\textgreater{}", "|": r"\textbar{}",
    # common typography outside Latin-1, which plain inputenc does not know
    "\u2212": "-", "\u2013": "--", "\u2014": "---", "\u2018": "`", "\u2019": "'", "\u201c": "``",
    "\u201d": "''", "\u2026": r"\ldots{}", "\u00d7": r"$\times$", "\u00b7": r"$\cdot$",
}
def _greek(ch: str) -> str | None:
    command = greek_command(ch)
    return f"${command}$" if command is not None else None


def escape_text(text: str) -> str:
    """Plain text for LaTeX text mode: special characters escaped, unknown non-Latin-1 characters as '?'."""
    out: list[str] = []
    for ch in text:
        if ch in _TEXT_ESCAPES:
            out.append(_TEXT_ESCAPES[ch])
        elif ord(ch) < 32:
            out.append(" ")
        elif ord(ch) > 255:
            out.append(_greek(ch) or "?")
        else:
            out.append(ch)
    return "".join(out)


# \not is a relation symbol: TeX spaces it away from the momentum. \slashed overlays the slash on
# the letter; \providecommand keeps a definition the user's document already has (e.g. a package's).
SLASHED_DEFINITION = (r"\providecommand{\vsslashed}[2]{\ooalign{$#1\hfil/\hfil$\crcr$#1#2$}}" "\n"
                      r"\providecommand{\slashed}[1]{{\mathpalette\vsslashed{#1}}}")


def _tex(latex: str) -> str:
    """LaTeX from `symbolic.to_latex` with slashed momenta as \\slashed{p} instead of \\not{p}."""
    return latex.replace("\\not{", "\\slashed{")


def _name(name: str) -> str:
    """A field or parameter name in math mode, as the factors spell it (phi -> \\phi, nu_e -> \\nu_{e})."""
    return to_latex(sympy.Symbol(name))


_LETTER_INDEX = re.compile(r"^([a-z])([0-9]+)(?:_([A-Za-z0-9_]+))?$")


def _index(name: str) -> str:
    """An index or momentum name: mu3 -> \\mu_{3}, p2 -> p_{2}, a3 -> a_{3}, i1_color -> i_{1,\\mathrm{color}}."""
    match = _LETTER_INDEX.match(name)
    if match:
        letter, digits, group = match.groups()
        letter = r"\rho" if letter == "r" else letter
        qualifier = f",\\mathrm{{{escape_text(group)}}}" if group else ""
        return f"{letter}_{{{digits}{qualifier}}}"
    return sympy.latex(sympy.Symbol(name))


def _leg_symbol(leg: "Leg") -> str:
    name = _name(leg.field)
    if leg.conjugate:
        return f"\\overline{{{name}}}" if leg.kind in ("dirac", "majorana", "ghost") else f"{{{name}}}^{{\\dagger}}"
    return name


def _leg_latex(leg: "Leg") -> str:
    name = _leg_symbol(leg)
    # spinor indices are the rows and columns of the factor; the others are written on the leg
    indices = [_index(i) for i in leg.indices if not i.startswith("s")]
    if indices:
        # braces: the name may carry its own subscript (gh_G -> gh_{G})
        name = f"{{{name}}}_{{{' '.join(indices)}}}"
    return f"{name}({_index(leg.momentum)})"


# a Lorentz structure with more terms than this is written one term per line
_TERMS_PER_LINE = 2


def _part_segments(coupling: sympy.Expr, group: sympy.Expr, lorentz: sympy.Expr) -> list[str]:
    """coupling x group x Lorentz structure as one or more line segments, sums bracketed."""
    pieces: list[str] = []
    for expr in (coupling, group):
        if expr != 1:
            text = _tex(to_latex(expr))
            pieces.append(f"\\left({text}\\right)" if isinstance(expr, sympy.Add) else text)
    head = r" \, ".join(pieces)
    if coupling == -1:
        head = "-" + r" \, ".join(pieces[1:])
    if lorentz == 1:
        return [head or "1"]
    joiner = r" \, " if head not in ("", "-") else ""
    if isinstance(lorentz, sympy.Add) and len(lorentz.args) > _TERMS_PER_LINE:
        terms = [_tex(to_latex(t)) for t in lorentz.as_ordered_terms()]
        segments = [f"{head}{joiner}\\Big[ {terms[0]}"]
        segments += ["- " + t[1:].lstrip() if t.startswith("-") else "+ " + t for t in terms[1:]]
        segments[-1] += r" \Big]"
        return segments
    text = _tex(to_latex(lorentz))
    if isinstance(lorentz, sympy.Add):
        text = f"\\left[{text}\\right]"
    return [f"{head}{joiner}{text}"]


def _vertex_lines(vertex: "Vertex") -> list[str]:
    """The legs on one line, the factor below it (one line per part, or per term of a long sum)."""
    legs = r" \, ".join(_leg_latex(leg) for leg in vertex.legs)
    segments: list[str] = []
    for k, part in enumerate(vertex.parts):
        pieces = _part_segments(part.coupling, getattr(part, "group", sympy.Integer(1)), part.lorentz)
        if k > 0:
            first = pieces[0]
            pieces[0] = "- " + first[1:].lstrip() if first.startswith("-") else "+ " + first
        segments += pieces
    if len(segments) == 1:
        segments = [_tex(vertex.latex)]
    return ([f"  &{legs} \\colon"] + [f"  &\\qquad {segments[0]}"]
            + [f"  &\\qquad\\quad {segment}" for segment in segments[1:]])


# a vector propagator longer than this (in LaTeX source characters) breaks after g^{mu nu}
_PROPAGATOR_BREAK = 120
_BRACKET_OPEN, _BRACKET_CLOSE = r"\left[g^{\mu \nu}", r"\right]"


def _propagator_lines(p: "Propagator") -> list[str]:
    """D(p) = ..., on two lines when a long vector propagator would run past the page (a mixed block's)."""
    indices = [_index(i) for i in p.indices if not i.startswith("s")]
    upper = f"^{{{' '.join(indices)}}}" if indices else ""
    name = _name(p.field) if p.partner is None else f"{_name(p.field)} {_name(p.partner)}"
    tex = _tex(p.latex)
    head = f"  D_{{{name}}}{upper}(p) &= "
    if len(tex) > _PROPAGATOR_BREAK and tex.count(_BRACKET_OPEN) == 1 and tex.endswith(_BRACKET_CLOSE):
        # \left[ ... \right] cannot span two lines of an align: the outer bracket becomes \Big[ ... \Big]
        common, rest = tex.split(_BRACKET_OPEN)
        rest = rest[: -len(_BRACKET_CLOSE)].strip()
        return [f"{head}{common}\\Big[g^{{\\mu \\nu}}", f"  &\\qquad {rest} \\Big]"]
    return [head + tex]


def _align(blocks: list[list[str]]) -> list[str]:
    """One align* environment per block (a vertex or a propagator), so that pages can break between
    them without \\allowdisplaybreaks in the user's document; lines of a block joined by \\\\."""
    out: list[str] = []
    for block in blocks:
        if block:
            out += [r"\begin{align*}", *[line + r" \\" for line in block[:-1]], block[-1], r"\end{align*}"]
    return out


def _rules_body(rules: "Rules") -> list[str]:
    out: list[str] = []
    if rules.vertices:
        out.append("% vertices: all momenta incoming; leg k carries momentum p_k, Lorentz index mu_k and group "
                   "indices a_k (adjoint) or i_k (fundamental)")
        out += _align([_vertex_lines(v) for v in rules.vertices])
    else:
        out.append("% no vertices: the model has no interaction terms")
    out.append("% propagators: momentum p along the particle arrow")
    out += _align([_propagator_lines(p) for p in rules.propagators])
    if rules.spectrum is not None:
        out += spectrum_latex(rules.spectrum)
    return out


def _comment(text: str, width: int = 96) -> list[str]:
    """Text as LaTeX comment lines of bounded width."""
    lines: list[str] = []
    current = "%"
    for word in text.split():
        if len(current) + 1 + len(word) > width and current != "%":
            lines.append(current)
            current = "%"
        current += " " + word
    lines.append(current)
    return lines


def render_snippet(rules: "Rules") -> str:
    """Only the rules: comment lines with the conventions, then the align* environments."""
    from .. import __version__

    head = [f"% Feynman rules of the model {rules.model.name}, written by vertexsmith {__version__}"]
    head += _comment("conventions: " + rules.conventions)
    head += ["% \\slashed{p} = gamma^mu p_mu (defined here unless the document defines it)", SLASHED_DEFINITION]
    return "\n".join(head + _rules_body(rules)) + "\n"


def _conventions_items(rules: "Rules") -> list[str]:
    c = conventions_to_dict(rules)
    sign = "-" if c["covariant_derivative"]["sign"] == 1 else "+"
    gauge = {
        "xi": r"$R_\xi$ gauge, with a symbolic gauge parameter $\xi_V$ for each gauge boson $V$.",
        "feynman": r"Feynman gauge ($\xi = 1$ for every gauge boson).",
        "unitary": r"Unitary gauge for massive gauge bosons, Feynman gauge ($\xi = 1$) for massless ones.",
    }.get(rules.gauge, escape_text(c["gauge_description"]))
    items = [
        r"Metric $g^{\mu\nu} = \mathrm{diag}(+1,-1,-1,-1)$.",
        r"All vertex momenta are incoming; leg $k$ carries momentum $p_k$ and, for a vector leg, "
        r"the Lorentz index $\mu_k$.",
        r"A derivative $\partial_\mu$ acting on the field of a leg with incoming momentum $p$ gives $-i p_\mu$ "
        r"(plane wave $e^{-ip\cdot x}$).",
        r"Vertex factor $= i \times$ the functional derivative of the action with respect to the leg fields; "
        r"symmetry factors are included ($-\frac{\lambda}{4!}\phi^4$ gives $-i\lambda$).",
        r"Fermion legs: the barred leg comes first, and the factor is the Dirac matrix between "
        r"$\overline{\psi}$ and $\psi$; the Grassmann sign comes from ordering the fields as the legs list them. "
        r"Several spinor chains are written $[M]_{ij}$, the matrix $M$ between $\overline{\text{leg } i}$ and "
        r"leg $j$.",
        rf"Covariant derivative $D_\mu = \partial_\mu {sign} i g Q A_\mu$ for a $U(1)$ charge $Q$, "
        rf"$D_\mu = \partial_\mu {sign} i g T^a A^a_\mu$ for $SU(N)$.",
        rf"$\epsilon^{{0123}} = {c['eps0123']:+d}$.",
        r"$\sigma^{\mu\nu} = \frac{i}{2}[\gamma^\mu, \gamma^\nu]$, $P_L = \frac{1 - \gamma^5}{2}$, "
        r"$P_R = \frac{1 + \gamma^5}{2}$, $\gamma^5 = i\gamma^0\gamma^1\gamma^2\gamma^3$ "
        r"(Dirac representation for numbers).",
        r"Propagator $= i \times$ the inverse of the quadratic kernel, momentum $p$ along the particle arrow; "
        r"$\slashed{p} = \gamma^\mu p_\mu$.",
        gauge,
    ]
    if any(not getattr(g, "abelian", True) for g in rules.model.groups.values()):
        items.append(r"$SU(N)$ generators in the fundamental: $T^a = \lambda^a/2$ (generalised Gell-Mann "
                     r"matrices), $\mathrm{Tr}(T^a T^b) = \frac{1}{2}\delta^{ab}$, $[T^a, T^b] = i f^{abc} T^c$, "
                     r"$f^{123} = 1$; adjoint indices $a_k$, fundamental indices $i_k$.")
    return items


def _float(x: float) -> str:
    text = f"{x:.10g}"
    if "e" in text:
        mantissa, exponent = text.split("e")
        power = f"10^{{{int(exponent)}}}"
        return power if mantissa == "1" else f"{mantissa} \\times {power}"
    return text


def _number(value: complex | None) -> str:
    if value is None:
        return "--"
    z = complex(value)
    if z.imag == 0:
        text = _float(z.real)
    elif z.real == 0:
        text = f"{_float(z.imag)}\\, i"
    else:
        text = f"{_float(z.real)} {'+' if z.imag >= 0 else '-'} {_float(abs(z.imag))}\\, i"
    return f"${text}$"


def _parameters_table(rules: "Rules") -> list[str]:
    parameters = list(rules.model.parameters.values())
    if not parameters:
        return ["The model has no parameters."]
    rows = [r"\begin{tabular}{llp{0.4\linewidth}}", r"name & value & description \\", r"\hline"]
    wide: list[str] = []  # matrices too wide for the table, listed entry by entry after it
    for p in parameters:
        value = _number(p.value)
        if p.is_array and p.entries is not None:  # a vector or matrix parameter: its entries as written
            columns = p.shape[-1]
            cells = [to_latex(e) for e in p.entries]
            rows_ = [" & ".join(cells[k:k + columns]) for k in range(0, len(cells), columns)]
            value = "$\\begin{pmatrix}" + " \\\\ ".join(rows_) + "\\end{pmatrix}$"
            if max(len(row) for row in rows_) > _WIDE_ROW:
                value = "see below"
                wide += _entry_lines(p, cells)
        elif p.is_array:
            value = "(no value)"
        rows.append(f"${_name(p.name)}$ & {value} & {escape_text(p.description)} \\\\")
    rows.append(r"\end{tabular}")
    return rows + wide


# LaTeX characters of one matrix row beyond which the row would not fit the parameters table
_WIDE_ROW = 90


def _entry_lines(p: "Parameter", cells: list[str]) -> list[str]:
    """A wide matrix parameter written entry by entry, one display line each (1-based indices)."""
    lines = ["", f"The entries of ${_name(p.name)}$:", r"\begin{gather*}"]
    indices = list(itertools.product(*(range(1, n + 1) for n in p.shape)))
    entries = [f"{_name(p.name)}_{{{','.join(map(str, k))}}} = {cell}" for k, cell in zip(indices, cells)]
    lines.append(" \\\\\n".join(entries))
    lines.append(r"\end{gather*}")
    return lines


def _legs_table(rules: "Rules") -> list[str]:
    seen: dict[str, "Leg"] = {}
    for v in rules.vertices:
        for leg in v.legs:
            seen.setdefault(leg.label, leg)
    if not seen:
        return []
    rows = [r"\begin{tabular}{llp{0.4\linewidth}}", r"leg & written & meaning \\", r"\hline"]
    for label in sorted(seen, key=lambda lab: (seen[lab].field, seen[lab].conjugate)):
        leg = seen[label]
        symbol = _leg_symbol(leg)
        rows.append(f"${symbol}$ & \\texttt{{{escape_text(label)}}} & {escape_text(leg.meaning())} \\\\")
    rows.append(r"\end{tabular}")
    return rows


def render_document(rules: "Rules") -> str:
    """A standalone article (article class, amsmath) with conventions, parameters and rules."""
    from .. import __version__

    model = rules.model
    lines = [
        r"\documentclass[11pt]{article}",
        r"\usepackage[T1]{fontenc}",
        r"\usepackage{lmodern}",  # scalable fonts: T1 without it falls back to bitmap fonts
        r"\usepackage[utf8]{inputenc}",
        r"\usepackage{amsmath}",
        r"\allowdisplaybreaks",
        SLASHED_DEFINITION,
        f"\\title{{Feynman rules of the model \\texttt{{{escape_text(model.name)}}}}}",
        f"\\author{{written by vertexsmith {escape_text(__version__)}}}",
        r"\date{}",
        r"\begin{document}",
        r"\maketitle",
    ]
    if model.description:
        lines += [escape_text(model.description), ""]
    lines += [r"\section*{Conventions}", r"\begin{itemize}"]
    lines += [f"\\item {item}" for item in _conventions_items(rules)]
    lines += [r"\end{itemize}", "", r"\section*{Parameters}", *_parameters_table(rules), ""]
    legs = _legs_table(rules)
    if legs:
        lines += [r"\section*{Legs}", *legs, ""]
    lines += [r"\section*{Feynman rules}", *_rules_body(rules), r"\end{document}"]
    return "\n".join(lines) + "\n"


def render(rules: "Rules", *, snippet: bool = False, **options: Any) -> str:
    """A standalone LaTeX document, or only the rules with `snippet=True`."""
    if options:
        from ..errors import UsageError

        raise UsageError("unknown option for the latex format: " + ", ".join(sorted(options)))
    return render_snippet(rules) if snippet else render_document(rules)


__all__ = ["render", "render_snippet", "render_document", "escape_text"]
