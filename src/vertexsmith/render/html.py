"""The model report: one self-contained HTML page with every rule drawn, typeset and checked.

The page needs nothing from the network: the style sheet, the script of the filter box
(`report.css`, `report.js` beside this file), the pictures (inline SVG) and the formulas
(MathML) are all inside it. Sections: the model's summary (fields, gauge groups, parameters,
conventions), the checker's findings, the mass matrices (when the rules carry a spectrum), the propagators, and the vertices under a filter box.
The page is also well-formed XML (void elements closed, script and style in CDATA), so any XML
parser can read it; the same rules give the same bytes.

    >>> import vertexsmith
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> render(rules).startswith("<!DOCTYPE html>")
    True
"""

from __future__ import annotations

from html import escape
from importlib import resources
from typing import TYPE_CHECKING, Any, Sequence

from ..errors import UsageError
from ..symbolic import to_latex
from .cards import SPIN, propagator_card, vertex_card
from .json import conventions_to_dict
from .mathml import latex_to_mathml
from .spectrum import spectrum_html
from .svg import line_svg

if TYPE_CHECKING:
    from ..model import Model
    from ..rules import Rules

_KEY = (("dashed", "scalar"), ("fermion", "fermion (arrow: particle flow; Majorana: the fermion flow)"), ("wavy", "vector"),
        ("curly", "gluon-like vector (adjoint of SU(N), N >= 3)"), ("dotted", "ghost"))


def _asset(name: str) -> str:
    return resources.files(__package__).joinpath(name).read_text(encoding="utf-8")


def _maths(latex: str) -> str:
    return latex_to_mathml(latex)


def _number(value: complex | None) -> str:
    if value is None:
        return "&#8211;"
    z = complex(value)
    if z.imag == 0:
        return f"{z.real:.10g}"
    return f"{z.real:.10g} {'+' if z.imag >= 0 else '&#8722;'} {abs(z.imag):.10g}i"


def _mass_value(mass: Any, values: dict[Any, complex]) -> str:
    """The numeric mass from the parameter values (the spectrum an unbroken model declares)."""
    if not mass.free_symbols:
        return _number(complex(mass))
    if not mass.free_symbols <= set(values):
        return "&#8211;"
    return _number(complex(mass.subs({s: values[s] for s in mass.free_symbols})))


def _fields_table(model: "Model") -> str:
    rows = []
    values = model.parameter_values()
    for f in model.fields.values():
        charges = ", ".join(f"{escape(g)}: {q}" for g, q in f.charges) or "&#8211;"
        reps = ", ".join(f"{escape(g)}: {escape(r)}" for g, r in f.representations) or "&#8211;"
        reality = "complex" if f.is_complex else "real" if not f.is_fermion else "self-conjugate"
        rows.append(f"<tr><td><code>{escape(f.name)}</code></td><td>{escape(f.kind)}</td><td>{SPIN.get(f.kind, '?')}</td>"
                    f"<td>{reality}</td><td>{_maths(to_latex(f.mass))}</td><td>{_mass_value(f.mass, values)}</td>"
                    f"<td>{charges}</td><td>{reps}</td>"
                    f"<td>{escape(f.description)}</td></tr>")
    return ('<table class="fields"><thead><tr><th>field</th><th>kind</th><th>spin</th><th>reality</th><th>mass</th>'
            f"<th>mass value</th><th>U(1) charges</th><th>representations</th><th>description</th></tr></thead><tbody>{''.join(rows)}"
            "</tbody></table>")


def _groups_table(rules: "Rules") -> str:
    model = rules.model
    if not model.groups:
        return "<p>No gauge groups.</p>"
    rows = []
    for g in model.groups.values():
        kind = "U(1)" if g.abelian else f"SU({g.rank})"
        ghost = "&#8211;" if g.abelian else f"<code>{escape(g.ghost)}</code>"
        xi = f"<code>{escape(str(g.xi))}</code>" if rules.gauge == "xi" and g.fixing == "lorenz" else "&#8211;"
        rows.append(f"<tr><td><code>{escape(g.name)}</code></td><td>{kind}</td><td><code>{escape(g.boson)}</code></td>"
                    f"<td><code>{escape(g.strength)}</code></td><td>{_maths(to_latex(g.coupling))}</td>"
                    f"<td>{escape(g.fixing)}</td><td>{xi}</td><td>{ghost}</td></tr>")
    return ('<table class="groups"><thead><tr><th>group</th><th>kind</th><th>boson</th><th>strength</th>'
            "<th>coupling</th><th>gauge fixing</th><th>gauge parameter</th><th>ghost</th></tr></thead>"
            f"<tbody>{''.join(rows)}</tbody></table>")


def _parameters_table(model: "Model") -> str:
    rows = []
    for p in model.parameters.values():
        formula = ""
        if p.definition is not None and p.definition.free_symbols:
            formula = _maths(to_latex(p.definition))
        roles = " ".join(p.roles) + (" complex" if p.is_complex else "")
        rows.append(f"<tr><td><code>{escape(p.name)}</code></td><td>{escape(roles.strip()) or '&#8211;'}</td>"
                    f"<td>{_number(p.value)}</td><td>{formula or '&#8211;'}</td><td>{escape(p.description)}</td></tr>")
    return ('<table class="parameters"><thead><tr><th>parameter</th><th>roles</th><th>value</th><th>defined as</th>'
            f"<th>description</th></tr></thead><tbody>{''.join(rows)}</tbody></table>")


def _conventions(rules: "Rules") -> str:
    c = conventions_to_dict(rules)
    items = [("gauge", c["gauge_description"]), ("metric", c["metric"]), ("momenta", c["momenta"]),
             ("derivative", c["derivative"]), ("vertex factor", c["vertex_normalisation"]),
             ("fermion legs", c["fermion_legs"]), ("covariant derivative", c["covariant_derivative"]["form"]),
             ("epsilon", f"epsilon^0123 = {c['eps0123']:+d}"), ("sigma", c["sigma"]),
             ("projectors", c["projectors"]), ("gamma5", c["gamma5"]), ("propagator", c["propagator"])]
    if rules.model.has_non_abelian:
        items.append(("group generators", c["group_generators"]))
    body = "".join(f"<dt>{escape(k)}</dt><dd>{escape(v)}</dd>" for k, v in items)
    return f'<dl class="conventions">{body}</dl>'


def _key() -> str:
    swatches = [f'<span><svg xmlns="http://www.w3.org/2000/svg" width="40" height="16" viewBox="0 0 40 16">'
                f"{line_svg(style, 2.0, 6.0, 1.0, 0.0, 36.0)}</svg>{escape(meaning)}</span>" for style, meaning in _KEY]
    return f'<div class="key">{"".join(swatches)}</div>'


def _diagnostics(diagnostics: Sequence[Any] | None) -> str:
    if diagnostics is None:
        return "<p>The checks were not run for this page.</p>"
    if not diagnostics:
        return '<p class="all-clear">The checker found nothing: no errors, no warnings, no notes.</p>'
    counts = {s: sum(1 for d in diagnostics if d.severity == s) for s in ("error", "warning", "note")}
    summary = ", ".join(f"{n} {s}{'' if n == 1 else 's'}" for s, n in counts.items())
    items = []
    for d in diagnostics:
        source = d.span.source or getattr(d, "source", None)  # a span of a file the model builds on names it
        where = f"line {d.span.line}, column {d.span.column}" if d.span.line > 0 else "the model"
        if d.span.source is not None and d.span.line > 0:
            where = f"{d.span.source.name}, {where}"
        line = source.line(d.span.line) if source is not None and d.span.line > 0 else ""
        hint = f"<br/>hint: {escape(d.hint)}" if d.hint else ""
        shown = f"<pre>{escape(line)}</pre>" if line else ""
        items.append(f'<div class="diagnostic {escape(d.severity)}"><span class="severity">{escape(d.severity)}</span>'
                     f"{escape(where)}: {escape(d.message)}{hint}{shown}</div>")
    return f"<p>{summary}.</p>" + "".join(items)


def render(rules: "Rules", *, diagnostics: Sequence[Any] | None = None, **options: Any) -> str:
    """The report page for these rules; `diagnostics` are the checker's findings (None: not run)."""
    if options:
        raise UsageError("the report page takes no options: " + ", ".join(sorted(options)))
    from .. import __version__

    model = rules.model
    title = f"Feynman rules of {model.name}"
    vertices = "".join(vertex_card(v, k) for k, v in enumerate(rules.vertices, 1))
    propagators = "".join(propagator_card(model, p) for p in rules.propagators)
    n = len(rules.vertices)
    filter_box = ('<div class="filter"><label for="filter">Fields: </label>'
                  '<input id="filter" type="search" autocomplete="off" spellcheck="false" '
                  'placeholder="type field names, e.g. A or bar(e) e"/>'
                  f'<span class="count" id="filter-count">{n} of {n} vertices</span></div>'
                  '<p id="filter-empty" class="hidden">No vertex has all the legs typed.</p>')
    parts = [
        "<!DOCTYPE html>",
        '<html xmlns="http://www.w3.org/1999/xhtml" lang="en"><head><meta charset="utf-8"/>',
        '<meta name="viewport" content="width=device-width, initial-scale=1"/>',
        f"<title>{escape(title)}</title>",
        f"<style>/*<![CDATA[*/\n{_asset('report.css')}/*]]>*/</style></head><body>",
        f'<header class="top"><h1>{escape(title)}</h1><p>{escape(model.description)}</p></header>',
        '<nav><a href="#summary">Summary</a><a href="#checks">Checks</a>'
        + ('<a href="#spectrum">Spectrum</a>' if rules.spectrum is not None else "") + '<a href="#propagators">Propagators</a>'
        f'<a href="#vertices">Vertices ({n})</a></nav><main>',
        '<h2 id="summary">Summary</h2>',
        f"<h3>Fields</h3>{_fields_table(model)}<h3>Gauge groups</h3>{_groups_table(rules)}",
        f"<h3>Parameters</h3>{_parameters_table(model)}<h3>Conventions</h3>{_conventions(rules)}",
        f'<h2 id="checks">Checks</h2>{_diagnostics(diagnostics)}',
        *([spectrum_html(rules.spectrum, _maths)] if rules.spectrum is not None else []),
        f'<h2 id="propagators">Propagators ({len(rules.propagators)})</h2>{_key()}',
        f'<div class="cards">{propagators or "<p>None.</p>"}</div>',
        f'<h2 id="vertices">Vertices ({n})</h2>',
        (filter_box + f'<div class="cards">{vertices}</div>') if n else "<p>None: the model has no interaction terms.</p>",
        f"</main><footer>Written by vertexsmith {escape(__version__)} in gauge '{escape(rules.gauge)}'. "
        "All momenta incoming; see the conventions above.</footer>",
        f"<script>//<![CDATA[\n{_asset('report.js')}//]]></script>",
        "</body></html>",
    ]
    return "\n".join(parts) + "\n"


__all__ = ["render"]
