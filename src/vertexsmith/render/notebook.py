"""How rules, a vertex and a propagator show themselves in a notebook and in a rich terminal.

Jupyter asks an object for `_repr_html_` and `_repr_latex_`; rich asks for `__rich__`. The
`Rules`, `Vertex` and `Propagator` classes answer with the functions here: HTML tables with the
pictures and MathML factors of the report page (`cards.py`), LaTeX arrays with the legs and
factors, and rich tables with the factors as sympy prints them. Every vertex and every
propagator appears in each of them; nothing is left out for length.
"""

from __future__ import annotations

from html import escape
from typing import TYPE_CHECKING, Any

from .cards import legs_table, propagator_card, vertex_card

if TYPE_CHECKING:
    from ..rules import Propagator, Rules, Vertex

_STYLE = ("<style>.vs-rules table.legs td,.vs-rules table.legs th{padding:1px 8px 1px 0;text-align:left}"
          ".vs-rules .card{border-left:3px solid #0f6f73;padding:2px 10px;margin:6px 0}"
          ".vs-rules .card-body{display:flex;gap:14px;align-items:flex-start;flex-wrap:wrap}"
          ".vs-rules .origin{color:#666;font-size:0.85em}</style>")
_TEXT_ESCAPES = {"\\": r"\textbackslash{}", "_": r"\_", "#": r"\#", "$": r"\$", "%": r"\%", "&": r"\&",
                 "{": r"\{", "}": r"\}", "^": r"\^{}", "~": r"\~{}"}


def _index(name: str) -> str:
    """mu3 -> \\mu_{3}, a2_color -> a_{2}^{\\text{color}}: index names typeset as in the factors."""
    base, _, tag = name.partition("_")
    stem = base.rstrip("0123456789")
    number = base[len(stem):]
    text = ("\\" + stem if stem in ("mu", "nu") else stem) + (f"_{{{number}}}" if number else "")
    return text + (f"^{{{_text(tag)}}}" if tag else "")


def _text(value: str) -> str:
    """Plain text inside LaTeX maths: \\text{...} with the special characters escaped."""
    return r"\text{" + "".join(_TEXT_ESCAPES.get(ch, ch) for ch in value) + "}"


# ------------------------------------------------------------------ HTML

def vertex_html(vertex: "Vertex") -> str:
    """A vertex as an HTML card: picture, factor, legs."""
    return f'<div class="vs-rules">{_STYLE}{vertex_card(vertex, 1)}</div>'


def propagator_html(propagator: "Propagator") -> str:
    return f'<div class="vs-rules">{_STYLE}{propagator_card(propagator.model, propagator)}</div>'


def rules_html(rules: "Rules") -> str:
    """All rules: a heading with the model and gauge, the propagators, then every vertex."""
    model = rules.model
    head = (f"<h3>Feynman rules of {escape(model.name)}</h3><p>{len(rules.vertices)} vertices, "
            f"{len(rules.propagators)} propagators; gauge '{escape(rules.gauge)}'; all momenta incoming "
            "(conventions: <code>rules.conventions</code>).</p>")
    propagators = "".join(propagator_card(model, p) for p in rules.propagators)
    vertices = "".join(vertex_card(v, k) for k, v in enumerate(rules.vertices, 1))
    return (f'<div class="vs-rules">{_STYLE}{head}<h4>Propagators</h4>{propagators}'
            f"<h4>Vertices</h4>{vertices or '<p>none</p>'}</div>")


def legs_html(vertex: "Vertex") -> str:
    return f'<div class="vs-rules">{_STYLE}{legs_table(vertex.legs)}</div>'


# ------------------------------------------------------------------ LaTeX

def vertex_latex(vertex: "Vertex") -> str:
    """A vertex as a LaTeX array: one row per leg, then the factor."""
    rows = [r"\text{leg} & \text{momentum} & \text{indices} \\ \hline"]
    for leg in vertex.legs:
        indices = " ".join(_index(i) for i in leg.indices) or "-"
        rows.append(f"{_text(leg.label)} & p_{{{leg.position}}} & {indices} \\\\")
    table = r"\begin{array}{lll}" + " ".join(rows) + r"\end{array}"
    return f"$\\displaystyle {table} \\qquad {vertex.latex}$"


def propagator_latex(propagator: "Propagator") -> str:
    indices = " ".join(_index(i) for i in propagator.indices) or "-"
    return (f"$\\displaystyle \\begin{{array}}{{ll}} {_text(propagator.label)} & {indices} \\end{{array}}"
            f" \\qquad {propagator.latex}$")


def rules_latex(rules: "Rules") -> str:
    """All rules as one LaTeX array: legs and factor per vertex, field and factor per propagator."""
    rows = [r"\text{vertex} & \text{factor} \\ \hline"]
    rows += [f"{_text(' '.join(v.labels))} & {v.latex} \\\\" for v in rules.vertices]
    rows += [r"\hline \text{propagator} & \\ \hline"]
    rows += [f"{_text(p.label)} & {p.latex} \\\\" for p in rules.propagators]
    return r"$\displaystyle \begin{array}{ll}" + " ".join(rows) + r"\end{array}$"


# ------------------------------------------------------------------ rich (terminal)

def _factor_text(expr: Any) -> str:
    """The factor as sympy prints it, in the vocabulary the JSON and the Python API use.

    Not the terminal renderer's notation: `rules` (below the renderers) calls this module, and
    the terminal renderer reads `rules`, so reaching it from here would close an import circle.
    """
    return str(expr)


def _vertex_text(vertex: "Vertex") -> str:
    return _factor_text(vertex.factor)


def _cells(*values: str) -> list[Any]:
    """Plain rich Text cells: brackets in factors ([g^μν ...]) and labels are not markup."""
    from rich.text import Text

    return [Text(value) for value in values]


def vertex_rich(vertex: "Vertex") -> Any:
    """A rich table: the legs, then the factor."""
    from rich.table import Table
    from rich.text import Text

    table = Table(title="vertex " + " ".join(vertex.labels), title_justify="left", show_edge=False)
    for heading in ("#", "leg", "momentum", "indices", "meaning"):
        table.add_column(heading)
    for leg in vertex.legs:
        table.add_row(*_cells(str(leg.position), leg.label, leg.momentum, " ".join(leg.indices) or "-", leg.meaning()))
    table.caption = Text("factor: " + _vertex_text(vertex))
    table.caption_justify = "left"
    return table


def propagator_rich(propagator: "Propagator") -> Any:
    from rich.table import Table

    table = Table(show_edge=False)
    for heading in ("field", "kind", "indices", "propagator (p along the arrow)"):
        table.add_column(heading)
    table.add_row(*_cells(propagator.label, propagator.field_kind, " ".join(propagator.indices) or "-",
                          _factor_text(propagator.factor)))
    return table


def rules_rich(rules: "Rules") -> Any:
    """Two rich tables: every vertex, then every propagator."""
    from rich.console import Group
    from rich.table import Table

    vertices = Table(title=f"{rules.model.name}: {len(rules.vertices)} vertices (all momenta incoming)",
                     title_justify="left", show_edge=False)
    vertices.add_column("#", justify="right")
    vertices.add_column("legs")
    vertices.add_column("factor")
    for k, v in enumerate(rules.vertices, 1):
        vertices.add_row(*_cells(str(k), " ".join(v.labels), _vertex_text(v)))
    propagators = Table(title="propagators (p along the particle arrow)", title_justify="left", show_edge=False)
    propagators.add_column("field")
    propagators.add_column("propagator")
    for p in rules.propagators:
        propagators.add_row(*_cells(p.label, _factor_text(p.factor)))
    return Group(vertices, propagators)


__all__ = ["vertex_html", "propagator_html", "rules_html", "legs_html", "vertex_latex", "propagator_latex",
           "rules_latex", "vertex_rich", "propagator_rich", "rules_rich"]
