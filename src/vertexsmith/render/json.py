"""Rules as JSON in our own versioned schema (`rules.schema.json` beside this file).

`rules_to_dict` is the pure data model every renderer may read: plain dicts, lists, strings,
numbers and booleans, built in a fixed order (vertices and propagators as the rules list them,
parameters and fields as the model declares them). `render` writes it with sorted keys, two
spaces of indentation and a trailing newline, so equal rules give byte-identical files.

Each symbolic quantity appears twice: as text in the model language itself (the output
vocabulary of `symbolic.py`: gamma[mu3], g[mu1,mu2], (p1 - p2)[mu3], PL, ...), which
`symbolic.parse_factor` reads back and a hand-rules file accepts, and as LaTeX. Vertex factors
are also split into coupling x group structure x Lorentz structure (each "1" when absent), the
form amplitude code consumes.

    >>> import vertexsmith
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> rules_to_dict(rules)["vertices"][0]["factor"]["text"]
    '(-I*e)*gamma[mu3]'
"""

from __future__ import annotations

import json
from fractions import Fraction
from importlib import resources
from typing import TYPE_CHECKING, Any

import sympy

from ..conventions import MIXING_TEXT
from ..fermion_flow import CHARGE_CONJUGATE_TEXT, FERMION_FLOW_TEXT, WEYL_TEXT
from ..symbolic import factor_text, to_latex

if TYPE_CHECKING:
    from ..model import Field, GaugeGroup, Model, Parameter
    from ..rules import CouplingPart, Leg, Propagator, Rules, Vertex

# 2.0: factors as model-language text under "text" (1.x wrote sympy function names under "sympy");
# 2.1: global symmetries; 2.2: index spaces (spaces, parameter spaces/matrix/entries, leg components)
# 3.0: the propagators of fields that mix form a matrix (entries with partner, label, chiral)
FORMAT_VERSION = "3.1"
SCHEMA_RESOURCE = "rules.schema.json"

GAUGE_TEXT = {
    "xi": "R_xi gauge with a symbolic gauge parameter xi_<boson> per gauge boson",
    "feynman": "Feynman gauge (xi = 1 for every gauge boson)",
    "unitary": "unitary gauge for massive gauge bosons, Feynman gauge (xi = 1) for massless ones",
}


GENERATORS_TEXT = ("SU(N) generators T^a in the fundamental: generalised Gell-Mann matrices / 2, "
                   "Tr(T^a T^b) = delta^{ab}/2, [T^a, T^b] = i f^{abc} T^c, f^{123} = 1; the antifundamental "
                   "uses -(T^a)^T; adjoint indices a, fundamental indices i")


def _symbolic(expr: sympy.Expr) -> dict[str, str]:
    return {"text": factor_text(expr), "latex": to_latex(expr)}


def conventions_to_dict(rules: "Rules") -> dict[str, Any]:
    """Every convention the numbers depend on, one explicit field each."""
    c = rules.model.conventions
    sign = "-" if c.covariant_sign == 1 else "+"
    majorana = any(f.kind == "majorana" for f in rules.model.fields.values())
    return {
        "metric": "(+,-,-,-)",
        "momenta": "all vertex momenta incoming; leg k carries momentum p<k>",
        "derivative": "d_mu acting on the field of a leg with incoming momentum p gives -i p_mu "
                      "(plane wave exp(-i p.x))",
        "vertex_normalisation": "vertex factor = i x (functional derivative of the action with respect to "
                                "the leg fields); symmetry factors included",
        "fermion_legs": "bar leg first; the factor is the Dirac matrix Gamma_(alpha beta) between bar(psi) "
                        "(index alpha) and psi (index beta); Grassmann sign from ordering the fields as "
                        "the legs list them" + (f"; {FERMION_FLOW_TEXT}" if majorana else "")
                        + (f"; {CHARGE_CONJUGATE_TEXT}" if rules.uses_charge_conjugation else "")
                        + (f"; {WEYL_TEXT}" if any(f.weyl for f in rules.model.fields.values()) else ""),
        "covariant_derivative": {"sign": c.covariant_sign,
                                 "form": f"D_mu = d_mu {sign} i g Q A_mu (U(1) charge Q), "
                                         f"D_mu = d_mu {sign} i g T^a A^a_mu (SU(N))"},
        "eps0123": c.eps0123,
        "sigma": "sigma^{mu nu} = (i/2)[gamma^mu, gamma^nu]",
        "projectors": "PL = (1 - gamma5)/2, PR = (1 + gamma5)/2",
        "gamma5": "gamma5 = i gamma^0 gamma^1 gamma^2 gamma^3, Dirac representation",
        "propagator": "i x inverse of the quadratic kernel; momentum p along the particle arrow"
                      + (f"; {MIXING_TEXT}" if any(p.partner is not None for p in rules.propagators) else ""),
        "group_generators": GENERATORS_TEXT,
        "gauge": rules.gauge,
        "gauge_description": GAUGE_TEXT.get(rules.gauge, rules.gauge),
        "summary": rules.conventions,
    }


def _value(value: Any) -> Any:
    """A number as {real, imag}; a vector or matrix parameter's value as nested lists of them."""
    if value is None:
        return None
    if getattr(value, "ndim", 0):
        return [_value(v) for v in value]
    number = complex(value)
    return {"real": number.real, "imag": number.imag}


def _nested(items: list[Any], shape: tuple[int, ...]) -> list[Any]:
    if len(shape) == 1:
        return items
    step = len(items) // shape[0]
    return [_nested(items[k * step:(k + 1) * step], shape[1:]) for k in range(shape[0])]


def _parameter(model: "Model", p: "Parameter") -> dict[str, Any]:
    value = model.parameter_values({}).get(p.symbol) if p.is_array else p.value
    return {
        "name": p.name,
        "roles": list(p.roles),
        "complex": p.is_complex,
        "value": _value(value),
        "definition": None if p.definition is None else factor_text(p.definition),
        "description": p.description,
        "spaces": list(p.spaces),
        "matrix": p.matrix or None,
        "entries": None if p.entries is None else _nested([factor_text(e) for e in p.entries], p.shape),
    }


def _fraction(value: Fraction) -> str:
    return str(Fraction(value))


def _field(f: "Field") -> dict[str, Any]:
    return {
        "name": f.name,
        "kind": f.kind,
        "complex": f.is_complex,
        "grassmann": f.is_grassmann,
        "mass": _symbolic(f.mass),
        "charges": [{"group": group, "charge": _fraction(q)} for group, q in f.charges],
        "representations": [{"group": group, "representation": rep}
                            for group, rep in getattr(f, "representations", ())],
        "global_charges": [{"symmetry": name, "charge": _fraction(q)} for name, q in f.global_charges],
        "description": f.description,
    }


def _group(rules: "Rules", g: "GaugeGroup") -> dict[str, Any]:
    return {
        "name": g.name,
        "kind": g.kind,
        "rank": getattr(g, "rank", 1),
        "boson": g.boson,
        "strength": g.strength,
        "coupling": _symbolic(g.coupling),
        "fixing": g.fixing,
        "gauge_parameter": str(g.xi) if rules.gauge == "xi" and g.fixing == "lorenz" else None,
    }


def _leg(leg: "Leg") -> dict[str, Any]:
    return {
        "position": leg.position,
        "label": leg.label,
        "field": leg.field,
        "conjugate": leg.conjugate,
        "kind": leg.kind,
        "momentum": leg.momentum,
        "indices": list(leg.indices),
        "components": [{"space": space, "component": c} for space, c in leg.components],
        "meaning": leg.meaning(),
    }


def _vertex(v: "Vertex") -> dict[str, Any]:
    return {
        "legs": [_leg(leg) for leg in v.legs],
        "factor": {"text": factor_text(v.factor), "latex": v.latex},
        "parts": [_part(part) for part in v.parts],
        "origins": list(v.origins),
    }


def _part(part: "CouplingPart") -> dict[str, Any]:
    # the LaTeX the vertex's own LaTeX was written from: each piece is printed once per render
    coupling, lorentz, group = part.latex_pieces
    return {"coupling": {"text": factor_text(part.coupling), "latex": coupling},
            "lorentz": {"text": factor_text(part.lorentz), "latex": lorentz},
            "group": {"text": factor_text(part.group), "latex": group}}


def _gauge_parameter(model: "Model", p: "Propagator") -> str | None:
    group = model.boson_group(p.field)
    if group is None or p.gauge != "xi" or group.fixing != "lorenz":
        return None
    return str(group.xi)


def _chiral(p: "Propagator") -> dict[str, str] | None:
    if p.chiral is None:
        return None
    masses = p.chiral_mass or (0, 0)
    return {"slash_L": factor_text(p.chiral[0]), "slash_R": factor_text(p.chiral[1]),
            "one_L": factor_text(sympy.sympify(masses[0])), "one_R": factor_text(sympy.sympify(masses[1]))}


def _propagator(model: "Model", p: "Propagator") -> dict[str, Any]:
    return {
        "field": p.field,
        "partner": p.partner,
        "label": p.label,
        "kind": p.field_kind,
        "momentum": p.momentum,
        "indices": list(p.indices),
        "factor": {"text": factor_text(p.factor), "latex": p.latex},
        "a": factor_text(p.a),
        "b": factor_text(p.b),
        "chiral": _chiral(p),
        "gauge": p.gauge,
        "gauge_parameter": _gauge_parameter(model, p),
    }


def rules_to_dict(rules: "Rules") -> dict[str, Any]:
    """The rules as plain data following `rules.schema.json` (format_version 3.1)."""
    from .. import __version__

    model = rules.model
    return {
        "format_version": FORMAT_VERSION,
        "generator": f"vertexsmith {__version__}",
        "model": {"name": model.name, "description": model.description},
        "conventions": conventions_to_dict(rules),
        "spaces": [{"name": sp.name, "size": sp.size, "description": sp.description}
                   for sp in model.spaces.values()],
        "parameters": [_parameter(model, p) for p in model.parameters.values()],
        "groups": [_group(rules, g) for g in model.groups.values()],
        "symmetries": [{"name": x.name, "kind": x.kind, "order": x.order, "soft": x.soft}
                       for x in model.symmetries.values()],
        "fields": [_field(f) for f in model.fields.values()],
        "vertices": [_vertex(v) for v in rules.vertices],
        "propagators": [_propagator(model, p) for p in rules.propagators],
        **({"spectrum": rules.spectrum.to_dict()} if rules.spectrum is not None else {}),
    }


def render(rules: "Rules", **options: Any) -> str:
    """The rules as a JSON document: sorted keys, indent 2, trailing newline."""
    if options:
        from ..errors import UsageError

        raise UsageError("the json format takes no options: " + ", ".join(sorted(options)))
    return json.dumps(rules_to_dict(rules), indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def schema_text() -> str:
    """The JSON Schema (draft 2020-12) of the documents `render` writes."""
    return resources.files(__package__).joinpath(SCHEMA_RESOURCE).read_text(encoding="utf-8")


def load_schema() -> dict[str, Any]:
    """The JSON Schema as a dict."""
    schema: dict[str, Any] = json.loads(schema_text())
    return schema


__all__ = ["FORMAT_VERSION", "rules_to_dict", "conventions_to_dict", "render", "schema_text", "load_schema"]
