"""Robustness: whatever text a user writes, vertexsmith either accepts it or raises its own error.

DESIGN.md: "No traceback reaches a user." So for garbled variants of the shipped models and for
random Lagrangian lines built from the language's own tokens, loading and deriving must either
succeed or raise a `VertexsmithError` whose text names a place (never a KeyError, IndexError,
ValueError from numpy, a lark exception, a sympy error, RecursionError ...). When a garbled model
does load, its rules must also print, and (in two of the tests) evaluate. Examples are limited so
the file runs in well under 30 s.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import vertexsmith as vs
from vertexsmith._resources import shipped_models

SHIPPED = [path.read_text(encoding="utf-8") for path in shipped_models()]
# Small shipped models keep each example fast; the non-abelian ones are exercised separately below.
SMALL = [text for path, text in zip(shipped_models(), SHIPPED)
         if path.stem in {"phi4", "yukawa", "qed", "scalar_qed", "dark_sector", "axion_like", "contact"}]

TOKENS = ["(", ")", "[", "]", "+", "-", "*", "/", "^", ",", "=", "\n", " ", "  ", "\t", "#", "\"", "'",
          "phi", "psi", "A", "mu", "nu", "d[mu]", "D[mu]", "bar(", "dag(", "conj(", "sqrt(", "h.c.", "+ h.c.",
          "gamma[mu]", "gamma5", "PL", "PR", "sigma[mu,nu]", "eps[mu,nu,rho,ta]", "g[mu,nu]", "I", "pi", "1/2",
          "0", "12", "1e400", "^13", "^0", "^-1", "theory", "parameters", "fields", "gauge", "define",
          "lagrangian", "conventions", "scalar", "vector", "dirac", "majorana", "ghost", "complex", "real",
          "mass", "coupling", "charge", "boson", "strength", "fixing", "U(1)", "SU(3)", "covariant plus",
          "eps0123 +1", "∂", "γ", "ε", "\u00a0", "\r\n", "\x00", "é"]

FAST = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow],
                derandomize=True)


def _exercise(text: str, evaluate: bool = False) -> None:
    """Load, derive and print (and evaluate if asked); only a VertexsmithError may escape."""
    try:
        model = vs.load_model(text=text, name="fuzz.vsm")
        rules = model.derive()
        for vertex in rules.vertices:
            str(vertex.factor)
            _ = vertex.latex
            if evaluate:
                momenta = np.arange(4 * len(vertex.legs), dtype=float).reshape(len(vertex.legs), 4) / 7.0
                try:
                    vertex.evaluate(momenta)
                except vs.UsageError:
                    pass  # a parameter without a number: a clean, documented refusal
        for propagator in rules.propagators:
            str(propagator.factor)
    except vs.VertexsmithError as error:
        shown = str(error)
        assert "error:" in shown
        assert error.message in shown


@st.composite
def garbled(draw: st.DrawFn, sources: list[str]) -> str:
    """A shipped model with a few random deletions, insertions and replacements."""
    text = draw(st.sampled_from(sources))
    for _ in range(draw(st.integers(1, 4))):
        position = draw(st.integers(0, len(text)))
        kind = draw(st.sampled_from(["delete", "insert", "replace", "char"]))
        if kind == "delete":
            text = text[:position] + text[position + draw(st.integers(1, 12)):]
        elif kind == "insert":
            text = text[:position] + draw(st.sampled_from(TOKENS)) + text[position:]
        elif kind == "replace":
            text = text[:position] + draw(st.sampled_from(TOKENS)) + text[position + draw(st.integers(1, 6)):]
        else:
            text = text[:position] + draw(st.characters(codec="utf-8")) + text[position:]
    return text


@FAST
@given(garbled(SMALL))
def test_garbled_small_models_load_or_raise_our_error(text):
    _exercise(text, evaluate=True)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow], derandomize=True)
@given(garbled(SHIPPED))
def test_garbled_shipped_models_load_or_raise_our_error(text):
    _exercise(text)


# ---------------------------------------------------------------- structure-level text

HEADER = """\
theory fuzz
parameters
  mass m = 1.0
  coupling g = 0.5
  coupling complex y = 0.1 + 0.2 I
gauge
  qed U(1) boson A strength F coupling g
fields
  vector A
  vector W complex mass m
  scalar phi real mass m
  scalar s complex mass m charge qed 1
  dirac psi mass m charge qed -1
  dirac chi mass m
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  -dag(d[mu] W[nu]) d[mu] W[nu] + dag(d[mu] W[nu]) d[nu] W[mu] + m^2 dag(W[mu]) W[mu]
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  dag(D[mu] s) D[mu] s - m^2 dag(s) s
  bar(psi) (I gamma[mu] D[mu] - m) psi
  bar(chi) (I gamma[mu] d[mu] - m) chi
"""

FACTORS = ["phi", "s", "dag(s)", "psi", "bar(psi)", "chi", "bar(chi)", "A[mu]", "A[nu]", "W[mu]", "dag(W[nu])",
           "F[mu,nu]", "d[mu]", "d[nu]", "D[mu]", "gamma[mu]", "gamma[nu]", "gamma5", "PL", "PR",
           "sigma[mu,nu]", "g[mu,nu]", "eps[mu,nu,rho,ta]", "A[rho]", "A[ta]", "g", "y", "conj(y)", "m^2", "I",
           "1/2", "2", "phi^2", "(phi + s)", "(bar(psi) psi)", "(dag(s) s)^2"]
JOINERS = [" ", " ", " ", " + ", " - ", " * ", " / "]


@st.composite
def lagrangian_line(draw: st.DrawFn) -> str:
    factors = draw(st.lists(st.sampled_from(FACTORS), min_size=1, max_size=7))
    pieces = [factors[0]]
    for factor in factors[1:]:
        pieces.append(draw(st.sampled_from(JOINERS)))
        pieces.append(factor)
    line = "".join(pieces)
    if draw(st.booleans()):
        line += " + h.c."
    return "  " + line


@FAST
@given(st.lists(lagrangian_line(), min_size=1, max_size=3))
def test_random_lagrangian_lines_load_or_raise_our_error(lines):
    _exercise(HEADER + "\n".join(lines) + "\n")


@FAST
@given(st.lists(lagrangian_line(), min_size=1, max_size=2))
def test_random_lagrangian_lines_evaluate_or_raise_our_error(lines):
    _exercise(HEADER + "\n".join(lines) + "\n", evaluate=True)


@FAST
@given(st.lists(st.sampled_from(TOKENS + FACTORS), min_size=0, max_size=30))
def test_random_token_soup_after_a_header_loads_or_raises_our_error(tokens):
    _exercise(HEADER + "  " + " ".join(tokens) + "\n")


@settings(max_examples=60, deadline=None, derandomize=True)
@given(st.text(max_size=200))
def test_arbitrary_text_loads_or_raises_our_error(text):
    _exercise(text)


def test_deeply_nested_brackets_are_refused_cleanly():
    # A pathological but finite input: refused at the first bracket past the nesting budget (before
    # the parser could blow the stack into a RecursionError), with the limit named and a hint.
    line = HEADER.count("\n") + 1
    with pytest.raises(vs.ModelSyntaxError) as info:
        vs.load_model(text=HEADER + "  g " + "(" * 3000 + "phi^3" + ")" * 3000 + "\n", name="fuzz.vsm")
    error = info.value
    assert (error.span.line, error.span.column) == (line, 5 + 100)  # "  g " then brackets 1..100 are allowed
    assert "brackets open at once: 101, where at most 100 is allowed" in error.message
    assert error.hint and f"fuzz.vsm:{line}:105" in str(error)
