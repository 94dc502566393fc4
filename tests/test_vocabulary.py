"""The output vocabulary: factors are written in the model language and read back.

The check that matters is the round trip a user makes: copy a derived factor into a hand-rules
file and compare it with the model; every rule of every shipped model must come back equal.
"""

from __future__ import annotations

import pytest
import sympy

import vertexsmith as vs
from vertexsmith._resources import shipped_models
from vertexsmith.compare import compare_rules
from vertexsmith.render import render
from vertexsmith.render.python_module import render_python_module
from vertexsmith.symbolic import factor_text, parse_factor

SHIPPED = [path.stem for path in shipped_models()]


@pytest.mark.parametrize("name", SHIPPED)
def test_every_factor_pastes_back_into_a_hand_rules_file(name: str) -> None:
    rules = vs.load_model(vs.example(name)).derive(gauge="feynman")
    lines = ["gauge feynman"]
    lines += [f"vertex {' '.join(v.labels)} : {v.text}" for v in rules.vertices]
    lines += [f"propagator {p.label} : {p.text}" for p in rules.propagators]  # "H1 dag(H2)" for mixed entries
    report = compare_rules(rules, "\n".join(lines) + "\n", points=2)
    assert report.counts()["equal"] == len(rules.vertices) + len(rules.propagators)


def test_known_factors_in_the_model_language() -> None:
    # the textbook QED vertex -i e gamma^mu (Peskin & Schroeder eq. 4.6 with e > 0 and Q = -1, from memory)
    qed = vs.load_model(vs.example("qed")).derive(gauge="feynman")
    assert qed.vertex("bar(ele)", "ele", "A").text == "(-I*e)*gamma[mu3]"
    assert qed.propagator("A").text == "-I*g[mu,nu]/p^2"
    # the quark-gluon vertex i gs T^a gamma^mu (Peskin & Schroeder eq. 16.9 form, from memory)
    qcd = vs.load_model(vs.example("qcd")).derive()
    assert qcd.vertex("bar(u)", "u", "G").text == "(I*gs)*T_color[a3,i1,i2]*gamma[mu3]"
    assert qcd.vertex("bar(gh_G)", "gh_G", "G").text == "(-gs)*p1[mu3]*f_color[a1,a2,a3]"
    dark = vs.load_model(vs.example("dark_sector")).derive(gauge="feynman")
    assert dark.vertex("bar(chi)", "psi", "dag(s)").text == "(-I*conj(y))*PL"
    assert dark.vertex("s", "dag(s)", "X").text == "(2*I*gx)*(p1 - p2)[mu3]"
    axion = vs.load_model(vs.example("axion_like")).derive()
    assert axion.vertex("a", "A", "A").text == "(-I*gagg)*eps[mu2,mu3,p2,p3]"


def test_no_sympy_function_names_leak_into_any_output() -> None:
    old = ("Metric(", "Gamma(", "Gamma5", "Sigma(", "FourVector(", "LeviCivita(", "ProjL", "ProjR", "Slash(",
           "Generator(", "StructureConstant(", "GroupDelta(", "Chain(", "Dot(")
    for name in SHIPPED:
        rules = vs.load_model(vs.example(name)).derive()
        for fmt in ("json", "python"):
            text = render(rules, "json") if fmt == "json" else render_python_module(rules)
            leaked = [word for word in old if word in text]
            assert not leaked, (name, fmt, leaked)


def test_parse_factor_reads_both_forms_and_a_coupling_named_g() -> None:
    g, mu1, mu2, p1, p2, mu3 = sympy.symbols("g mu1 mu2 p1 p2 mu3")
    expr = parse_factor("2*I*g^2*g[mu1,mu2]*(p1 - p2)[mu3]", {"g": g})
    again = parse_factor(str(expr), {"g": g})
    assert expr == again
    assert factor_text(expr) == "2*I*g^2*(p1 - p2)[mu3]*g[mu1,mu2]"
    assert g in expr.free_symbols and len(expr.atoms(sympy.Function)) == 2
