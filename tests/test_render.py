"""The output stage: unicode printing, text tables, LaTeX and JSON of derived rules.

Physics values asserted here are the textbook rules the shipped models reproduce; each names its
source. The renderers must show exactly what `derive` produced, so most checks compare the
rendering with the rules object (round trips), and a few pin the notation itself.
"""

from __future__ import annotations

import functools
import json
import re
import shutil
import subprocess
from pathlib import Path

import pytest
import sympy
from rich.cells import cell_len

import vertexsmith as vs
from vertexsmith._resources import shipped_models
from vertexsmith.render import FORMATS, render, rules_to_dict
from vertexsmith.render.json import load_schema
from vertexsmith.render.latex import escape_text
from vertexsmith.render.text import unicode_str
from vertexsmith.symbolic import (Chain, Dot, FourVector, Gamma, Gamma5, LeviCivita, Metric, ProjL, ProjR, Sigma,
                                  Slash, parse_factor)

SHIPPED = [p.stem for p in shipped_models()]


@functools.lru_cache(maxsize=None)
def rules_of(name: str, gauge: str = "xi") -> vs.Rules:
    return vs.load_model(vs.example(name)).derive(gauge=gauge)


# ------------------------------------------------------------------ unicode notation

p, p1, p2, p3, p4 = sympy.symbols("p p1 p2 p3 p4")
mu, nu, mu1, mu2, mu3, mu4, r1 = sympy.symbols("mu nu mu1 mu2 mu3 mu4 r1")
e, g, m = sympy.symbols("e g m", real=True)
y = sympy.Symbol("y")

UNICODE_CASES = [
    (Gamma(mu3), "γ^μ₃", "gamma"),
    (FourVector(p1 - p2, mu3), "(p₁ − p₂)^μ₃", "momentum-difference"),
    (FourVector(p, mu), "p^μ", "propagator-vector"),
    (Metric(mu3, mu4), "g^μ₃μ₄", "metric"),
    (Slash(p3), "p̸₃", "slash"),
    (Slash(p1 + p2), "(p̸₁ + p̸₂)", "slash-of-sum"),
    (Gamma5, "γ⁵", "gamma5"),
    (ProjL, "P_L", "PL"),
    (ProjR, "P_R", "PR"),
    (LeviCivita(mu1, mu2, p3, p4), "ε^{μ₁μ₂p₃p₄}", "epsilon"),
    (Sigma(mu1, mu2), "σ^μ₁μ₂", "sigma"),
    (Dot(p1, p2), "p₁·p₂", "dot"),
    (Chain(1, 4, Gamma(r1) * ProjL), "[γ^ρ₁ P_L]₁₄", "chain"),
    (-sympy.I * e, "−i e", "minus-i"),
    (2 * sympy.I * e**2 * Metric(mu3, mu4), "2i e² g^μ₃μ₄", "seagull-like"),
    (sympy.sqrt(2) * sympy.I * g / 2, "i √2 g/2", "root-and-fraction"),
    (sympy.I / (p**2 - m**2), "i/(p² − m²)", "scalar-propagator"),
    (-sympy.I * Metric(mu, nu) / p**2, "−i g^μν/p²", "photon-propagator"),
    (sympy.conjugate(y) * ProjL, "y* P_L", "conjugate"),
    (sympy.Rational(-3, 4), "−3/4", "rational"),
    (sympy.sqrt(e + g), "√(e + g)", "root-of-sum"),
]


@pytest.mark.parametrize("expr, expected", [c[:2] for c in UNICODE_CASES], ids=[c[2] for c in UNICODE_CASES])
def test_unicode_notation(expr: sympy.Expr, expected: str) -> None:
    assert unicode_str(expr) == expected


# ------------------------------------------------------------------ dispatch

def test_unknown_format_is_a_usage_error() -> None:
    with pytest.raises(vs.UsageError, match="unknown output format 'pdf'"):
        render(rules_of("phi4"), "pdf")


@pytest.mark.parametrize("name", SHIPPED)
@pytest.mark.parametrize("fmt", sorted(FORMATS))
def test_every_shipped_model_renders_deterministically(name: str, fmt: str) -> None:
    rules = rules_of(name)
    first = render(rules, fmt)
    assert first.endswith("\n") and not first.endswith("\n\n")
    assert render(rules, fmt) == first


# ------------------------------------------------------------------ text

def test_text_has_conventions_header_and_qed_vertex() -> None:
    rules = rules_of("qed", "feynman")
    text = render(rules, "text")
    assert text.startswith("Feynman rules of qed: quantum electrodynamics")
    for phrase in ("Conventions", "(+,-,-,-)", "all vertex momenta incoming", "Feynman gauge",
                   "D_mu = d_mu - i g Q A_mu", "epsilon^0123 = -1", "PL = (1 - gamma5)/2"):
        assert phrase in text, phrase
    # QED vertex i e Q gamma^mu with Q = -1, D = d - i e Q A (Peskin & Schroeder ch. 4, from memory;
    # see models/qed.vsm for the sign convention)
    vertex_rows = [line for line in text.splitlines() if "bar(ele)" in line and "p₁" in line]
    assert len(vertex_rows) == 1 and "−i e γ^μ₃" in vertex_rows[0]
    # photon propagator in Feynman gauge, -i g^{mu nu}/p^2 (Peskin & Schroeder ch. 4, from memory)
    assert any(line.split()[:1] == ["A"] and "−i g^μν/p²" in line for line in text.splitlines())


def test_text_legend_explains_every_leg() -> None:
    rules = rules_of("scalar_qed")
    text = render(rules, "text")
    legs = {leg.label: leg for v in rules.vertices for leg in v.legs}
    assert set(legs) == {"phi", "dag(phi)", "A"}
    for label, leg in legs.items():
        assert any(line.split()[:1] == [label] and leg.meaning() in line for line in text.splitlines()), label


def test_text_shows_scalar_qed_vertices() -> None:
    text = render(rules_of("scalar_qed"), "text")
    # scalar QED: i e (p1 - p2)^mu for phi(p1), dag(phi)(p2) incoming, and the seagull 2 i e^2 g^{mu nu}
    # (Peskin & Schroeder problem 9.1, from memory; charge +1 and D = d - i e Q A)
    assert "i e (p₁ − p₂)^μ₃" in text
    assert "2i e² g^μ₃μ₄" in text


def test_text_several_parts_each_on_its_own_line() -> None:
    rules = rules_of("contact")
    (vertex,) = rules.vertices
    text = render(rules, "text")
    part_lines = [line for line in text.splitlines() if "₁₄" in line]
    assert len(part_lines) == len(vertex.parts) == 3


@pytest.mark.parametrize("width", [80, 120])
def test_text_respects_width(width: int) -> None:
    text = render(rules_of("dark_sector"), "text", width=width)
    assert max(cell_len(line) for line in text.splitlines()) <= width


def test_text_colour_only_on_request() -> None:
    rules = rules_of("yukawa")
    assert "\x1b[" not in render(rules, "text")
    assert "\x1b[" in render(rules, "text", color=True)


# ------------------------------------------------------------------ LaTeX

def _balanced(tex: str) -> bool:
    depth = 0
    for ch in re.sub(r"\\[{}]", "", tex):
        depth += {"{": 1, "}": -1}.get(ch, 0)
        if depth < 0:
            return False
    return depth == 0


@pytest.mark.parametrize("name", SHIPPED)
def test_latex_document_is_standalone(name: str) -> None:
    tex = render(rules_of(name), "latex")
    assert tex.startswith("\\documentclass")
    assert tex.rstrip().endswith("\\end{document}")
    assert _balanced(tex)
    for env in set(re.findall(r"\\begin\{([^}]*)\}", tex)):
        assert tex.count(f"\\begin{{{env}}}") == tex.count(f"\\end{{{env}}}"), env
    # nothing beyond a plain LaTeX installation
    assert set(re.findall(r"\\usepackage(?:\[[^]]*\])?\{([^}]*)\}", tex)) <= {"amsmath", "fontenc", "inputenc", "lmodern"}


def test_latex_snippet_holds_only_the_rules() -> None:
    rules = rules_of("qed")
    tex = render(rules, "latex", snippet=True)
    assert "\\documentclass" not in tex and "\\begin{document}" not in tex
    assert tex.count("\\begin{align*}") == len(rules.vertices) + len(rules.propagators)  # pages break between
    assert tex.count("\\colon") == len(rules.vertices)
    assert "- i e \\, \\gamma^{\\mu_{3}}" in tex  # -i e gamma^mu, as in the text test
    assert _balanced(tex)


def test_latex_escapes_model_text() -> None:
    tex = render(rules_of("dark_sector"), "latex")
    assert "\\texttt{dark\\_sector}" in tex


ESCAPE_CASES = [
    ("a_b", "a\\_b", "underscore"),
    ("50% & #1", "50\\% \\& \\#1", "specials"),
    ("x^2 {y}", "x\\textasciicircum{}2 \\{y\\}", "caret-braces"),
    ("λ = 0.1", "$\\lambda$ = 0.1", "greek"),
    ("\\input", "\\textbackslash{}input", "backslash"),
]


@pytest.mark.parametrize("text, expected", [c[:2] for c in ESCAPE_CASES], ids=[c[2] for c in ESCAPE_CASES])
def test_latex_escape_text(text: str, expected: str) -> None:
    assert escape_text(text) == expected


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="pdflatex is not installed")
def test_latex_compiles(tmp_path: Path) -> None:
    # one standalone document, and the snippets of every shipped model pasted into one plain document
    document = tmp_path / "rules.tex"
    document.write_text(render(rules_of("qcd"), "latex"), encoding="utf-8")
    snippets = "\n".join(render(rules_of(name), "latex", snippet=True) for name in SHIPPED)
    wrapped = tmp_path / "snippets.tex"
    wrapped.write_text("\\documentclass{article}\n\\usepackage{amsmath}\n\\begin{document}\n" + snippets
                       + "\\end{document}\n", encoding="utf-8")
    for tex in (document, wrapped):
        done = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error", tex.name],
                              cwd=tmp_path, capture_output=True, text=True, timeout=120)
        assert done.returncode == 0, done.stdout[-2000:]
        assert tex.with_suffix(".pdf").is_file()


# ------------------------------------------------------------------ JSON

def _same(parsed: sympy.Expr, original: sympy.Expr) -> bool:
    """Equal once the original's symbols lose their assumptions (a string does not carry them)."""
    by_name = {s.name: s for s in parsed.free_symbols if isinstance(s, sympy.Symbol)}
    renamed = original.xreplace({s: by_name[s.name] for s in original.free_symbols
                                 if isinstance(s, sympy.Symbol) and s.name in by_name})
    return sympy.expand(parsed - renamed) == 0


def test_schema_is_valid_and_documents_every_field() -> None:
    jsonschema = pytest.importorskip("jsonschema")
    schema = load_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    undocumented: list[str] = []

    def walk(node: object, where: str) -> None:
        if isinstance(node, dict):
            for key, sub in node.get("properties", {}).items():
                if "description" not in sub:
                    undocumented.append(f"{where}.{key}")
            for key, sub in node.items():
                walk(sub, f"{where}.{key}")
        elif isinstance(node, list):
            for k, sub in enumerate(node):
                walk(sub, f"{where}[{k}]")

    walk(schema, "$")
    assert undocumented == []


@pytest.mark.parametrize("name", SHIPPED)
def test_json_validates_against_schema(name: str) -> None:
    jsonschema = pytest.importorskip("jsonschema")
    document = json.loads(render(rules_of(name), "json"))
    jsonschema.Draft202012Validator(load_schema()).validate(document)
    assert document["format_version"] == "3.1"


@pytest.mark.parametrize("name", SHIPPED)
def test_json_factors_parse_back(name: str) -> None:
    rules = rules_of(name)
    data = rules_to_dict(rules)
    assert len(data["vertices"]) == len(rules.vertices)
    for item, vertex in zip(data["vertices"], rules.vertices):
        assert [leg["label"] for leg in item["legs"]] == list(vertex.labels)
        assert item["origins"] == list(vertex.origins)
        factor = parse_factor(item["factor"]["text"])
        assert _same(factor, vertex.factor), item["factor"]["text"]
        # the split form sums to the whole factor
        total = sympy.Add(*[parse_factor(part["coupling"]["text"]) * parse_factor(part["group"]["text"])
                            * parse_factor(part["lorentz"]["text"]) for part in item["parts"]])
        assert sympy.expand(total - factor) == 0
    for item, propagator in zip(data["propagators"], rules.propagators):
        assert item["field"] == propagator.field
        assert _same(parse_factor(item["factor"]["text"]), propagator.factor)
        assert _same(parse_factor(item["a"]), propagator.a) and _same(parse_factor(item["b"]), propagator.b)


def test_json_layout_is_canonical() -> None:
    text = render(rules_of("dark_sector"), "json")
    assert text == json.dumps(json.loads(text), indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def test_json_conventions_follow_the_model_switches() -> None:
    # dark_sector.vsm declares `covariant plus`, axion_like.vsm `eps0123 +1`; qed.vsm keeps the defaults
    dark = rules_to_dict(rules_of("dark_sector"))["conventions"]
    assert dark["covariant_derivative"]["sign"] == -1
    assert dark["covariant_derivative"]["form"].startswith("D_mu = d_mu + i g Q A_mu")
    assert rules_to_dict(rules_of("axion_like"))["conventions"]["eps0123"] == 1
    qed = rules_to_dict(rules_of("qed", "feynman"))["conventions"]
    assert (qed["eps0123"], qed["covariant_derivative"]["sign"], qed["gauge"]) == (-1, 1, "feynman")


def test_json_parameters_and_gauge_parameter() -> None:
    data = rules_to_dict(rules_of("dark_sector"))
    y_param = next(item for item in data["parameters"] if item["name"] == "y")
    # y = 0.1 + 0.2 I in dark_sector.vsm (invented numbers)
    assert y_param["complex"] is True
    assert y_param["value"] == pytest.approx({"real": 0.1, "imag": 0.2})
    photon = next(item for item in data["propagators"] if item["field"] == "X")
    assert photon["gauge_parameter"] == "xi_X"
    assert "xi_X" in photon["b"]
    feynman = rules_to_dict(rules_of("dark_sector", "feynman"))
    assert next(i for i in feynman["propagators"] if i["field"] == "X")["gauge_parameter"] is None


def test_json_groups_and_representations() -> None:
    # qcd.vsm: colour SU(3) with the gluon G, quarks u and d in the fundamental
    data = rules_to_dict(rules_of("qcd"))
    (color,) = data["groups"]
    assert (color["name"], color["kind"], color["rank"], color["boson"], color["gauge_parameter"]) \
        == ("color", "SU", 3, "G", "xi_G")
    fields = {f["name"]: f for f in data["fields"]}
    assert fields["u"]["representations"] == [{"group": "color", "representation": "fundamental"}]
    assert fields["G"]["representations"] == [{"group": "color", "representation": "adjoint"}]
    assert "Tr(T^a T^b) = delta^{ab}/2" in data["conventions"]["group_generators"]
    quark_gluon = next(v for v in data["vertices"] if [leg["label"] for leg in v["legs"]] == ["bar(u)", "u", "G"])
    assert [leg["indices"] for leg in quark_gluon["legs"]] == [["s1", "i1"], ["s2", "i2"], ["mu3", "a3"]]
    (part,) = quark_gluon["parts"]
    # i gs (T^a)_{ij} gamma^mu (Peskin & Schroeder ch. 16, from memory, with D = d - i gs T^a G^a)
    assert parse_factor(part["group"]["text"]) == parse_factor("T_color[a3,i1,i2]")
    assert _same(parse_factor(part["coupling"]["text"]), sympy.I * sympy.Symbol("gs"))


def test_json_legs_describe_positions_momenta_indices() -> None:
    (item,) = [v for v in rules_to_dict(rules_of("qed"))["vertices"] if v["legs"][0]["field"] == "ele"]
    assert [(leg["position"], leg["label"], leg["conjugate"], leg["momentum"], leg["indices"]) for leg in item["legs"]] \
        == [(1, "bar(ele)", True, "p1", ["s1"]), (2, "ele", False, "p2", ["s2"]), (3, "A", False, "p3", ["mu3"])]
