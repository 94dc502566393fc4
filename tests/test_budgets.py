"""Budgets (vertexsmith.limits): each is checked before the work and refuses at a place, saying which limit.

Common practice, no source: a tool must refuse work it cannot finish in seconds, say where and
why, and never answer with a traceback, a numpy warning or a wrong source line.
"""

from __future__ import annotations

import io
import warnings
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith import limits
from vertexsmith.check import check_model
from vertexsmith.cli import main

from fuzzing.hostile import HOSTILE_HEAD

HEAD = HOSTILE_HEAD  # the model of the hostile-input benchmark, grown here one budget at a time
LAST = HEAD.count("\n")  # the line number of the last line of HEAD


def _error(text: str, check: bool = False) -> vs.VertexsmithError:
    with pytest.raises(vs.VertexsmithError) as info:
        model = vs.load_model(text=text, name="b.vsm")
        if check:
            vs.check_model(model)
        model.derive()
    return info.value


@pytest.mark.parametrize("text, line, column, words", [
    (HEAD.replace("SU(3)", "SU(1000)"), 7, 10, ["N of an SU(N) group", "1,000", "at most 10"]),
    (HEAD.replace("SU(3)", "SU(" + "9" * 50 + ")"), 7, 10, ["N of an SU(N) group"]),
    (HEAD + "  - m^1000000000 phi^2\n", LAST + 1, 5, ["size of an exponent", "1000000000", "at most 100"]),
    (HEAD.replace("c = 0.5", "c = 10^(10^10)"), 3, 16, ["size of an exponent"]),
    (HEAD.replace("c = 0.5", "c = 2^-200"), 3, 16, ["digits of an exact number", "at most 60"]),
    (HEAD + "  g^(-1e300) phi^4\n", LAST + 1, 3, ["size of an exponent"]),
    (HEAD + "  " + "(" * 1000 + "c" + ")" * 1000 + " phi^4\n", LAST + 1, 103, ["brackets open at once", "101"]),
    (HEAD + "  " + " ".join(["c"] * 1000) + " phi^4\n", LAST + 1, 3, ["factors written in one product"]),
    (HEAD + "".join(f"  - {i + 1}/7 c phi^4\n" for i in range(5001)), LAST + 4998, 3,
     ["terms (lines) in the Lagrangian", "5,004"]),
    (HEAD + "  " + "c " * 101_000 + "\n", LAST + 1, -1, ["words and symbols", "more than 100,000"]),
    (HEAD + "  (" + " + ".join(f"c^{k}" for k in range(1, 41)) + ")^4 phi^4\n", LAST + 1, 3,
     ["terms of a coefficient once multiplied out"]),
    (HEAD + "  c (d[mu] phi d[mu] phi)^4\n", LAST + 1, 3, ["leg assignments"]),
], ids=["su-1000", "su-huge", "power-of-parameter", "power-in-value", "exact-digits", "negative-huge-power",
        "nesting", "long-product", "many-lines", "many-tokens", "expansion", "assignments"])
def test_a_blown_budget_is_a_positioned_error_naming_the_limit(text: str, line: int, column: int,
                                                               words: list[str]) -> None:
    error = _error(text)
    assert error.span.line == line and column in (-1, error.span.column), str(error)[:300]
    for word in words:
        assert word in error.message, error.message
    assert error.hint
    assert "b.vsm:" in str(error)


def test_every_budget_is_in_the_readme_limits_table() -> None:
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    table = readme.split("### Limits", 1)[1].split("\n## ", 1)[0]
    for budget in limits.ALL:
        assert f"| {budget.what} | {budget.limit:,} |" in table, budget.what


@pytest.mark.parametrize("value, message, column", [
    ("log(0)", "log(0) is minus infinity, not a number", 16),
    ("exp(710)", "exp(710) is larger than 1e300", 16),
    ("1/0", "division by zero: the denominator is 0", 18),
    ("tan(pi/2)", "tan() of this argument has no finite value", 16),
    ("1e300*1e300", "this product is about 1e600", 16),
    ("exp(-1000)", "exp() of this argument is about 1e-434", 16),
], ids=["log-zero", "exp-710", "division-by-zero", "tan-pole", "product-overflow", "exp-underflow"])
def test_numbers_without_a_value_say_why_at_the_value(value: str, message: str, column: int) -> None:
    error = _error(HEAD.replace("c = 0.5", f"c = {value}"))
    assert message in error.message
    assert (error.span.line, error.span.column) == (3, column)
    assert error.hint


def test_no_numpy_warning_reaches_the_user_from_a_huge_charge(capsys: pytest.CaptureFixture[str]) -> None:
    # a charge of 1e300 squared overflows double precision inside the hermiticity check
    text = """theory t
parameters
  coupling e = 0.3
  mass m = 1
gauge
  em U(1) boson A strength F coupling e
fields
  vector A
  scalar s complex mass m charge em 1e300
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  dag(D[mu] s) D[mu] s - m^2 dag(s) s
"""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        diagnostics = check_model(vs.load_model(text=text, name="t.vsm"))
    assert any("too large for double precision" in d.message and d.span.line == 12 for d in diagnostics)


@pytest.mark.parametrize("separator", ["\f", "\x85", "\u2028", "\x1c", "\v"],
                         ids=["form-feed", "next-line", "line-separator", "file-separator", "vertical-tab"])
def test_the_source_line_under_an_error_is_the_parsers_line(separator: str, tmp_path: Path) -> None:
    # str.splitlines() breaks at these, the parser does not: the line shown must be the parser's
    text = HEAD.replace("  coupling c = 0.5", f"  coupling c = 0.5 # a{separator}b") + "  c phi^4 + unknown\n"
    path = tmp_path / "sep.vsm"
    path.write_text(text, encoding="utf-8", newline="")
    err = io.StringIO()
    with redirect_stderr(err), redirect_stdout(io.StringIO()):
        assert main(["rules", str(path)]) == 1
    lines = err.getvalue().split("\n")
    assert lines[0].startswith(f"{path}:{LAST + 1}:13:")
    assert lines[1] == "    c phi^4 + unknown"


def test_a_file_that_is_not_utf8_is_refused_at_the_byte(tmp_path: Path) -> None:
    path = tmp_path / "bin.vsm"
    path.write_bytes(HEAD.encode() + b"  c phi^4 \xff\n")
    with pytest.raises(vs.UsageError) as info:
        vs.load_model(path)
    assert (info.value.span.line, info.value.span.column) == (LAST + 1, 11)
    assert "byte 0xff is not UTF-8 text" in info.value.message


def test_a_file_past_the_size_budget_is_read_no_further(tmp_path: Path) -> None:
    path = tmp_path / "big.vsm"
    path.write_text(HEAD + "  c phi^4 # padding\n" * 200_000, encoding="utf-8")
    with pytest.raises(vs.ModelSyntaxError) as info:
        vs.load_model(path)
    assert "bytes in a model file" in info.value.message
    assert info.value.span.line > LAST
    assert str(info.value).split("\n")[1] == "    c phi^4 # padding"


def test_a_missing_fields_header_is_named() -> None:
    text = HEAD.replace("fields\n", "")
    error = _error(text)
    assert error.message == "'vector' starts a field declaration, but this line is under 'gauge'"
    assert error.hint == "write 'fields' on its own line before the field declarations"
    assert (error.span.line, error.span.column) == (8, 3)


def test_hundreds_of_couplings_on_one_vertex_are_summed_not_factored() -> None:
    # a 300-symbol coefficient overflowed the stack in multivariate factorisation
    n = 300
    text = HEAD.replace("parameters\n", "parameters\n" + "".join(f"  coupling k{i} = 0.{i + 1}\n" for i in range(n)))
    text += "".join(f"  - k{i}/24 phi^4\n" for i in range(n))
    vertex = vs.load_model(text=text, name="k.vsm").derive().vertex("phi", "phi", "phi", "phi")
    expected = -sympy.I * sum(sympy.Symbol(f"k{i}", real=True) for i in range(n))
    assert sympy.expand(vertex.factor - expected) == 0


def test_the_numeric_array_budget_refuses_before_allocating() -> None:
    text = HEAD.replace("SU(3)", "SU(10)") + "  c (G[mu,a] G[mu,a])^2\n"
    vertex = vs.load_model(text=text, name="g.vsm").derive().vertex("G", "G", "G", "G")
    with pytest.raises(vs.DerivationError, match="numbers in one numeric tensor"):
        vertex.evaluate(np.zeros((4, 4)))  # (4 x 99)^4 = 2.4e10 numbers: refused, not allocated


def test_bar_of_a_field_called_d_with_an_index_is_explained() -> None:
    # `d[i]` is the derivative even when a fermion is called d (qcd.vsm's down quark): say so, no assertion
    text = vs.example("qcd").read_text(encoding="utf-8") + "  bar(d[i]) d\n"
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="q.vsm")
    assert info.value.message == "'d[...]' inside bar() reads as the derivative d[...], not the field 'd'"
    assert info.value.hint.startswith("write bar(d)")


def test_a_squared_dot_product_prints_as_latex() -> None:
    # (p1.p2)^2 reached sympy's printer as a power of our Dot, whose LaTeX method took no exponent
    text = HEAD + "  c d[mu] d[nu] phi d[mu] d[nu] phi phi^2\n"
    vertex = vs.load_model(text=text, name="d.vsm").derive().vertex("phi", "phi", "phi", "phi")
    assert r"\left(p_{1} \cdot p_{2}\right)^{2}" in vertex.latex


# HEAD without its gauge group: the four-gluon vertex alone has more than five structures
SCALAR = HEAD.replace("  strong SU(3) boson G strength GS coupling g\n", "").replace("  vector G\n", "").replace(
    "  -1/4 GS[mu,nu,a] GS[mu,nu,a]\n", "").replace("  dirac psi mass m in strong fundamental\n", "").replace(
    "  bar(psi) (I gamma[mu] D[mu] - m) psi\n", "").replace("gauge\n", "")


def test_the_terms_per_vertex_budget_refuses_before_the_coefficients_are_simplified(monkeypatch) -> None:
    # (c + c^2) phi^2 d[mu]phi d[mu]phi: one vertex whose structures are the six dot products p_i.p_j
    # of four legs (common practice, no source); under a budget of five, it must stop before any
    # coefficient is simplified, at the term's line
    monkeypatch.setattr(limits, "TERMS_PER_VERTEX", limits.Budget("terms of one vertex", 5, "a test budget"))

    def too_late(expr: sympy.Expr) -> sympy.Expr:
        raise AssertionError("a coefficient was simplified before the budget was checked")

    monkeypatch.setattr(limits, "factor_within_budget", too_late)
    error = _error(SCALAR + "  (c + c^2) phi^2 d[mu] phi d[mu] phi\n")
    assert (error.span.line, error.span.column) == (SCALAR.count("\n") + 1, 3)
    assert "terms of one vertex: 6, where at most 5" in error.message


def test_the_terms_per_vertex_budget_allows_a_vertex_at_the_limit(monkeypatch) -> None:
    # the same vertex under a budget of exactly six derives (the limit is inclusive)
    monkeypatch.setattr(limits, "TERMS_PER_VERTEX", limits.Budget("terms of one vertex", 6, "a test budget"))
    rules = vs.load_model(text=SCALAR + "  (c + c^2) phi^2 d[mu] phi d[mu] phi\n", name="b.vsm").derive()
    assert rules.vertex("phi", "phi", "phi", "phi").factor != 0
