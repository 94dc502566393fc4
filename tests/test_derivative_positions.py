"""A derivative acts on the next factor that holds a field, whole: its constant summands vanish.

Issue 9 item 2: `1/2 d[mu] s d[mu] (m + s)` was refused ("d[mu] has nothing to act on") because the
constant summand m was passed over like a separate factor; written first it passed and left a
wrong m d.d s term behind. Each case below writes a bracket with a constant summand at another
position of the product and compares the rules with the same Lagrangian written out by hand.
Source for every expected line: the Leibniz rule with d_mu(constant) = 0 (common practice, no source).
"""

from __future__ import annotations

import pytest
import sympy

import vertexsmith as vs
from vertexsmith.rules import P

HEAD = """theory t
parameters
  mass m = 1.5
  v = 2.5
  c = 0.3
fields
  scalar s real mass m
define
  shifted = v + s
lagrangian
  - 1/2 m^2 s^2
"""

CASES = [
    # issue 9 repro lines, both orders
    pytest.param("1/2 d[mu] s d[mu] (m + s)", "1/2 d[mu] s d[mu] s", id="bracket-last"),
    pytest.param("1/2 d[mu] (m + s) d[mu] s", "1/2 d[mu] s d[mu] s", id="bracket-first"),
    pytest.param("1/2 d[mu] (v + s) d[mu] (s + v)", "1/2 d[mu] s d[mu] s", id="bracket-both"),
    pytest.param("1/2 d[mu] s d[mu] s + c d[mu] s d[mu] (v + s) s",
                 "1/2 d[mu] s d[mu] s + c d[mu] s d[mu] s s", id="bracket-middle"),
    pytest.param("1/2 d[mu] s d[mu] s + c s d[mu] (s + v + s^2) d[mu] s",
                 "1/2 d[mu] s d[mu] s + c s d[mu] s d[mu] s + 2 c s s d[mu] s d[mu] s", id="constant-inside"),
    pytest.param("1/2 d[mu] s d[mu] s + c d[mu] (v + s)^2 d[mu] s",
                 "1/2 d[mu] s d[mu] s + 2 c v d[mu] s d[mu] s + 2 c s d[mu] s d[mu] s", id="power"),
    pytest.param("1/2 d[mu] s d[mu] s + c d[mu] s d[mu] c (v + s) s",
                 "1/2 d[mu] s d[mu] s + c^2 d[mu] s d[mu] s s", id="over-a-parameter"),
    pytest.param("1/2 d[mu] shifted d[mu] shifted + c d[mu] s d[mu] shifted^2",
                 "1/2 d[mu] s d[mu] s + 2 c v d[mu] s d[mu] s + 2 c s d[mu] s d[mu] s", id="definition"),
]


def _model(line: str) -> vs.Model:
    return vs.load_model(text=HEAD + "  " + line + "\n", name="t.vsm")


def _rules(line: str) -> vs.Rules:
    return _model(line).derive()


def _dump(rules: vs.Rules) -> dict[tuple[str, ...], sympy.Expr]:
    out = {tuple(sorted(v.labels)): v.factor for v in rules.vertices}
    out.update({("propagator", p.field): p.factor for p in rules.propagators})
    return out


@pytest.mark.parametrize("written, by_hand", CASES)
def test_a_constant_summand_of_a_differentiated_factor_vanishes(written, by_hand):
    got, expected = _dump(_rules(written)), _dump(_rules(by_hand))
    # no leftover (constant) x d.d s: every monomial holds two fields or more
    assert min(len(mono.fields) for mono in _model(written).monomials()) == 2
    assert got.keys() == expected.keys()
    for key in got:
        assert sympy.simplify(got[key] - expected[key]) == 0, key


def test_the_repro_line_gives_the_canonical_propagator():
    # scalar propagator i/(p^2 - m^2): Peskin & Schroeder eq. 2.60 (from memory)
    rules = _rules("1/2 d[mu] s d[mu] (m + s)")
    assert rules.vertices == ()
    m = sympy.Symbol("m", real=True)
    assert sympy.simplify(rules.propagator("s").factor - sympy.I / (P**2 - m**2)) == 0


def test_a_derivative_of_a_factor_without_fields_still_reports_its_place():
    with pytest.raises(vs.ModelMeaningError) as info:
        _rules("1/2 d[mu] s d[mu] s + c s s d[nu] d[nu] (v + m)")
    assert str(info.value).startswith("t.vsm:12:37: error: d[nu] has nothing to act on")


def test_a_covariant_derivative_of_a_neutral_bracket_drops_its_constant_too():
    # on a neutral field D[mu] = d[mu], so the constant summand vanishes as for d (common practice, no source)
    gauged = HEAD.replace("fields\n", "gauge\n  u1 U(1) boson A strength F coupling c\nfields\n  vector A\n") \
                 .replace("lagrangian\n", "lagrangian\n  -1/4 F[mu,nu] F[mu,nu]\n")
    written = vs.load_model(text=gauged + "  1/2 D[mu] s D[mu] (v + s)\n", name="t.vsm").derive()
    by_hand = vs.load_model(text=gauged + "  1/2 d[mu] s d[mu] s\n", name="t.vsm").derive()
    assert _dump(written) == _dump(by_hand)


def test_a_covariant_derivative_beside_charged_fields_refuses_a_constant_summand():
    # D[mu] (v + phi) with phi charged: the gauge term of v is undefined, so no silent wrong term
    text = ("theory t\nparameters\n  coupling c = 0.1\n  mass v = 2.0\ngauge\n  qed U(1) boson A strength F coupling c\n"
            "fields\n  vector A\n  scalar phi complex charge qed 1\nlagrangian\n  -1/4 F[mu,nu] F[mu,nu]\n"
            "  dag(D[mu] phi) D[mu] phi\n  c dag(phi) D[mu] (v + phi) A[mu]\n")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="t.vsm").derive()
    assert str(info.value).startswith("t.vsm:13:14: error: D[mu] acts on a constant summand beside charged fields")
