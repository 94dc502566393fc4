"""The shortcuts the engine takes for speed give exactly what the long way gives.

A coefficient that is already a plain product (a rational, i, symbols and their positive powers)
skips sympy's expand() and factor(); the ratio of two vertex terms that sympy reduces to a rational
by itself skips simplify(); LaTeX is printed once per part and shared by the vertex's LaTeX and
the JSON. Each shortcut is checked here against the long way. Common practice, no source.
"""

from __future__ import annotations

import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

import vertexsmith
from vertexsmith.expand import is_plain_product
from vertexsmith.symbolic import is_plain_product as plain_in_symbolic
from vertexsmith.render.json import rules_to_dict
from vertexsmith.symbolic import surely_symbolic
from vertexsmith.symbolic import to_latex
from vertexsmith.values import resolve_values_from

SYMBOLS = sympy.symbols("g e lam y1 m_2")
_factor = st.one_of(st.sampled_from(SYMBOLS), st.tuples(st.sampled_from(SYMBOLS), st.integers(1, 4)),
                    st.just(sympy.I), st.fractions(max_denominator=12).filter(lambda f: f != 0))


def _build(pieces: list) -> sympy.Expr:
    out = sympy.Integer(1)
    for piece in pieces:
        if isinstance(piece, tuple) and isinstance(piece[0], sympy.Symbol):
            out *= piece[0] ** piece[1]
        elif isinstance(piece, sympy.Basic):
            out *= piece
        else:
            out *= sympy.Rational(piece.numerator, piece.denominator)
    return out


@settings(max_examples=200, deadline=None, derandomize=True)
@given(st.lists(_factor, min_size=0, max_size=6))
def test_a_plain_product_is_what_expand_and_factor_return(pieces: list):
    c = _build(pieces)
    assert is_plain_product(c)
    assert sympy.expand(c) == c
    assert sympy.factor(sympy.expand(c)) == c


_monomial_factor = st.one_of(_factor, st.sampled_from([sympy.sqrt(2), sympy.sqrt(3), sympy.conjugate(SYMBOLS[0]),
                                                       sympy.conjugate(SYMBOLS[1]) ** 2, sympy.Integer(6) ** sympy.Rational(1, 3)]))


@settings(max_examples=80, deadline=None, derandomize=True)
@given(st.lists(_monomial_factor, min_size=1, max_size=4), st.lists(_monomial_factor, min_size=1, max_size=4))
def test_simplify_is_skipped_only_where_it_could_not_find_a_number(top: list, bottom: list):
    # the vertex's parts skip simplify() when sympy's own cancellation leaves a symbol in the ratio
    a, b = _build(top), _build(bottom)
    ratio = a / b
    assert plain_in_symbolic is is_plain_product
    if surely_symbolic(ratio, a, b):
        assert not sympy.nsimplify(sympy.simplify(ratio)).is_Rational


def test_what_is_not_a_plain_product():
    g, e = SYMBOLS[:2]
    for expr in (g + e, 2 * (g + e), sympy.sqrt(2) * g, sympy.Float(0.5) * g, sympy.conjugate(g) * e,
                 g ** -1, sympy.sin(g), g ** sympy.Rational(1, 2)):
        assert not is_plain_product(expr), expr


def test_latex_is_printed_once_per_part_and_shared_with_the_json():
    rules = vertexsmith.load_model(vertexsmith.example("electroweak_unbroken")).derive()
    data = rules_to_dict(rules)
    for vertex, entry in zip(rules.vertices, data["vertices"]):
        assert vertex.latex is vertex.latex  # cached on the vertex
        assert entry["factor"]["latex"] == vertex.latex
        for part, piece in zip(vertex.parts, entry["parts"]):
            assert part.latex_pieces is part.latex_pieces
            assert [piece[k]["latex"] for k in ("coupling", "lorentz", "group")] \
                == [to_latex(part.coupling), to_latex(part.lorentz), to_latex(part.group)]
    for propagator, entry in zip(rules.propagators, data["propagators"]):
        assert entry["factor"]["latex"] == propagator.latex  # the customary form, printed once


def test_a_long_chain_of_definitions_declared_backwards_resolves():
    # p0 = 1.5, p_k = p_(k-1) + 1, written with the last first: every value needs the one below it
    n = 200
    lines = [f"  coupling p{k} = p{k - 1} + 1" for k in range(n, 0, -1)] + ["  coupling p0 = 1.5"]
    text = "\n".join(["theory chain", "parameters", *lines, "fields", "  scalar phi real",
                      "lagrangian", "  1/2 d[mu] phi d[mu] phi", "  - p0 phi^3", ""])
    model = vertexsmith.load_model(text=text, name="chain.vsm")
    values = resolve_values_from(model.parameters, {})
    assert values[model.parameters[f"p{n}"].symbol] == 1.5 + n
    assert model.parameters["p37"].value == 38.5
