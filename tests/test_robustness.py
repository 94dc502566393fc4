"""Odd but legal names, hostile numbers and API misuse get clean answers (an independent review's findings).

Common practice, no source: a tool must never answer a user with a traceback, and must never
silently compute with an infinity.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy

import vertexsmith as vs

SCALAR = """theory t
parameters
  coupling c = 0.5
  mass m = 1
fields
  scalar phi real mass m
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
"""


def test_a_parameter_called_g_leaves_the_metric_alone() -> None:
    text = SCALAR.replace("coupling c = 0.5", "coupling g = 0.5") + "  - g/24 g[mu,nu] g[mu,nu] phi^4\n"
    rules = vs.load_model(text=text, name="t.vsm").derive()
    g = sympy.Symbol("g", real=True)
    assert sympy.simplify(rules.vertex("phi", "phi", "phi", "phi").factor + 4 * sympy.I * g) == 0


def test_a_field_called_d_does_not_hide_the_derivative() -> None:
    # the down quark of qcd.vsm is called d; a scalar kinetic term with d[mu] still means the derivative
    text = vs.example("qcd").read_text(encoding="utf-8").replace(
        'dirac  d  mass md_q  in color fundamental "down quark"',
        'dirac  d  mass md_q  in color fundamental "down quark"\n  scalar phi real mass md_q')
    text += "  1/2 d[mu] phi d[mu] phi - 1/2 md_q^2 phi^2\n"
    rules = vs.load_model(text=text, name="q.vsm").derive()
    assert rules.propagator("phi").kind == "scalar"
    assert ("bar(d)", "d", "G") in {v.labels for v in rules.vertices}


def test_a_vector_cannot_be_called_d() -> None:
    text = SCALAR.replace("scalar phi real mass m", "scalar phi real mass m\n  vector d mass m")
    with pytest.raises(vs.ModelMeaningError, match="is the derivative"):
        vs.load_model(text=text, name="t.vsm")


@pytest.mark.parametrize("value, message", [
    ("1" * 70, "too large to use"),
    ("1e400", "too large to use"),
    ("10^400", "this power is about 1e400, beyond the values a number may have"),
    ("(1/3)^(-100000)", "this power is about 1e47712"),
    ("log(0)", "log(0) is minus infinity, not a number"),
], ids=["long-integer", "float-overflow", "power", "huge-rational", "log-zero"])
def test_numbers_that_cannot_be_used_are_refused_at_their_place(value: str, message: str) -> None:
    text = SCALAR.replace("coupling c = 0.5", f"coupling c = {value}")
    with pytest.raises(vs.VertexsmithError) as info:
        vs.load_model(text=text, name="t.vsm").derive()
    assert message in info.value.message
    assert info.value.span.line == 3


def test_a_byte_order_mark_is_ignored() -> None:
    assert vs.load_model(text="\ufeff" + SCALAR, name="t.vsm").derive().propagator("phi").kind == "scalar"


def test_gauge_parameter_names_are_reserved() -> None:
    text = SCALAR.replace("coupling c = 0.5", "coupling xi_A = 3")
    with pytest.raises(vs.ModelMeaningError, match="reserved for the gauge parameter"):
        vs.load_model(text=text, name="t.vsm")


def test_unitary_gauge_drops_the_ghosts_of_a_massive_non_abelian_boson() -> None:
    text = """theory msu2
parameters
  coupling g = 0.6
  mass M = 80
gauge
  weak SU(2) boson W strength WS coupling g
fields
  vector W mass M
lagrangian
  -1/4 WS[mu,nu,a] WS[mu,nu,a] + 1/2 M^2 W[mu,a] W[mu,a]
"""
    model = vs.load_model(text=text, name="m.vsm")
    unitary = model.derive(gauge="unitary")
    assert [p.field for p in unitary.propagators] == ["W"]
    assert all("gh_W" not in v.labels for v in unitary.vertices)
    assert "gh_W" in [p.field for p in model.derive(gauge="xi").propagators]


@pytest.mark.parametrize("call, message", [
    (lambda r: r.vertex(1, 2, 3), "leg labels as strings"),
    (lambda r: r.propagator(None), "field label as a string"),
    (lambda r: r.propagator("dag(A)"), "its own conjugate"),
    (lambda r: r.vertex("bar(ele)", "ele", "A").evaluate(np.zeros((3, 4)), values={"e": "x"}), "not a number"),
    (lambda r: r.vertex("bar(ele)", "ele", "A").evaluate(np.zeros((3, 4)), values={"e": float("inf")}),
     "not a finite number"),
], ids=["vertex-ints", "propagator-none", "conjugate-of-real", "value-text", "value-inf"])
def test_api_misuse_raises_usage_errors(call, message: str) -> None:  # noqa: ANN001 - a lambda
    rules = vs.load_model(vs.example("qed")).derive(gauge="feynman")
    with pytest.raises(vs.UsageError, match=message):
        call(rules)


def test_unicode_names_compile_in_latex() -> None:
    from vertexsmith.render import render

    text = SCALAR.replace("coupling c = 0.5", "coupling λ = 0.5") + "  - λ/24 phi^4\n"
    latex = render(vs.load_model(text=text, name="t.vsm").derive(), "latex")
    assert "λ" not in latex and "\\lambda" in latex
