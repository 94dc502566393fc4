"""HTML pieces shared by the report page and the notebook display: one card per vertex or propagator.

A vertex card holds the picture (inline SVG, `svg.py`), the legs with their incoming momenta,
index names and meanings, and the factor typeset as MathML (`mathml.py`) from the same LaTeX the
LaTeX output prints, with that LaTeX one click away for copying. The card carries its legs as
data attributes (``data-legs``: a JSON list of [field, label] pairs) for the page's filter box.
Everything taken from the model is escaped.
"""

from __future__ import annotations

import json
from html import escape
from typing import TYPE_CHECKING, Sequence

from .mathml import latex_to_mathml
from .svg import LegPicture, leg_style, propagator_svg, vertex_svg

if TYPE_CHECKING:
    from ..model import Model
    from ..rules import Leg, Propagator, Vertex

SPIN = {"scalar": "0", "dirac": "1/2", "majorana": "1/2", "vector": "1", "ghost": "0 (Grassmann)"}


def leg_picture(leg: "Leg") -> LegPicture:
    """The picture of a vertex leg: a `psi` leg's particle flows in, a `bar(psi)` leg's flows out."""
    return LegPicture(leg_style(leg.kind, leg.representations), leg.label, leg.momentum, leg.indices,
                      inward=not leg.conjugate)


def propagator_kind(model: "Model", propagator: "Propagator") -> str:
    """The field kind a propagator is drawn as (ghosts are stored as scalar kernels)."""
    field = model.fields.get(propagator.field)
    return field.kind if field is not None else propagator.kind


def propagator_picture(model: "Model", propagator: "Propagator") -> LegPicture:
    representations = tuple((g, r, d) for g, r, d in propagator.representations)
    return LegPicture(leg_style(propagator_kind(model, propagator), representations), propagator.label, "p",
                      propagator.indices)


def index_html(name: str) -> str:
    """mu3 -> μ<sub>3</sub>, a2_color -> a<sub>2</sub> (color): index names as the conventions print them."""
    greek = {"mu": "\u03bc", "nu": "\u03bd"}
    base, _, tag = name.partition("_")
    stem = base.rstrip("0123456789")
    number = base[len(stem):]
    text = escape(greek.get(stem, stem)) + (f"<sub>{number}</sub>" if number else "")
    return text + (f" <small>({escape(tag)})</small>" if tag else "")


def legs_table(legs: Sequence["Leg"]) -> str:
    rows = "".join(
        f"<tr><td>{leg.position}</td><td><code>{escape(leg.label)}</code></td><td>p<sub>{leg.position}</sub></td>"
        f"<td>{' '.join(index_html(i) for i in leg.indices) or '&#8211;'}</td><td>{escape(leg.meaning())}</td></tr>"
        for leg in legs)
    return ('<table class="legs"><thead><tr><th>#</th><th>leg</th><th>momentum (in)</th><th>indices</th>'
            f"<th>meaning</th></tr></thead><tbody>{rows}</tbody></table>")


def vertex_card(vertex: "Vertex", number: int) -> str:
    """One vertex as an HTML section: picture, legs, factor (MathML) and its LaTeX."""
    labels = " ".join(vertex.labels)
    legs_data = json.dumps([[leg.field, leg.label] for leg in vertex.legs], separators=(",", ":"))
    latex = vertex.latex
    origin = ""
    lines = vertex.origins
    if lines:
        origin = ('<p class="origin">from Lagrangian line' + ("s " if len(lines) > 1 else " ")
                  + ", ".join(str(n) for n in lines) + "</p>")
    return (f'<section class="card vertex" id="vertex-{number}" data-legs="{escape(legs_data)}">'
            f'<h3><span class="number">V{number}</span> <code>{escape(labels)}</code></h3>'
            f'<div class="card-body"><div class="picture-box">{vertex_svg([leg_picture(l) for l in vertex.legs], labels)}'
            f'</div><div class="details"><div class="factor">{latex_to_mathml(latex, display=True)}</div>'
            f"{legs_table(vertex.legs)}{origin}"
            f'<details><summary>LaTeX</summary><pre class="latex">{escape(latex)}</pre></details>'
            "</div></div></section>")


def propagator_card(model: "Model", propagator: "Propagator") -> str:
    """One propagator as an HTML section: picture, kind, indices, factor (MathML) and its LaTeX."""
    kind = propagator_kind(model, propagator)
    latex = propagator.latex
    indices = " ".join(index_html(i) for i in propagator.indices) or "none"
    anchor = propagator.field if propagator.partner is None else f"{propagator.field}-{propagator.partner}"
    return (f'<section class="card propagator" id="propagator-{escape(anchor)}">'
            f'<h3><code>{escape(propagator.label)}</code> <small>{escape(kind)}, spin {SPIN.get(kind, "?")}'
            f'</small></h3><div class="card-body"><div class="picture-box">'
            f"{propagator_svg(propagator_picture(model, propagator), propagator.field)}</div>"
            f'<div class="details"><div class="factor">{latex_to_mathml(latex, display=True)}</div>'
            f'<p class="indices">indices: {indices}; momentum p along the particle arrow</p>'
            f'<details><summary>LaTeX</summary><pre class="latex">{escape(latex)}</pre></details>'
            "</div></div></section>")


__all__ = ["SPIN", "leg_picture", "propagator_picture", "propagator_kind", "index_html", "legs_table",
           "vertex_card", "propagator_card"]
