"""Every user-visible error: its class, exact line and column, message and hint.

DESIGN.md: "Every user-visible error names file:line:col, shows the line with a caret, and says
what to write instead. No traceback reaches a user." Each case below is a small model whose
offending spot is known by construction; lines and columns are 1-based. An error may be raised by
`load_model` or by `derive` (checks that need the expanded Lagrangian run there); either way the
user sees the same diagnostic.
"""

from __future__ import annotations

import re

import pytest

import vertexsmith as vs

# Lines 1-14; every case appends or changes one line.
BASE = """\
theory t
parameters
  mass m = 1.0
  coupling g = 0.5
gauge
  qed U(1) boson A strength F coupling g
fields
  vector A
  scalar phi real mass m
  dirac psi mass m charge qed -1
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  bar(psi) (I gamma[mu] D[mu] - m) psi
"""


def line15(term: str) -> str:
    return BASE + "  " + term + "\n"


def changed(old: str, new: str) -> str:
    assert old in BASE
    return BASE.replace(old, new)


Syntax, Meaning, Derivation = vs.ModelSyntaxError, vs.ModelMeaningError, vs.DerivationError

CASES = [
    # ---- syntax (parse errors)
    pytest.param(line15("g phi phi )"), Syntax, 15, 13, "unexpected ')'", "expected", id="unexpected-token"),
    pytest.param(line15("g phi $ phi"), Syntax, 15, 9, "unexpected character '$'", "names are letters",
                 id="unexpected-character"),
    pytest.param(changed("theory t", "theory t 'x'"), Syntax, 1, 10, "unexpected character", "double quotes",
                 id="single-quoted-string"),
    pytest.param(line15("g (phi phi phi"), Syntax, 15, 5, "bracket is never closed", "close it",
                 id="unclosed-bracket-last-line"),
    # the bracket opened on line 4 swallows the rest of the file (newlines inside brackets are
    # joined), yet the error names the bracket, not the end of the file
    pytest.param(changed("coupling g = 0.5", "coupling g = (0.5"), Syntax, 4, 16, "bracket is never closed",
                 "close it", id="unclosed-bracket-early-in-the-file"),
    pytest.param(line15("g phi[mu phi"), Syntax, 15, 12, "unexpected 'phi'", "']'", id="unclosed-index-list"),
    pytest.param("parameters\n  mass m = 1.0\n", Syntax, 1, 1, "unexpected 'parameters'", "theory NAME",
                 id="missing-header"),
    pytest.param("", Syntax, 1, 1, "ends too early", "theory", id="empty-file"),
    pytest.param(line15("g phi\x00"), Syntax, 15, 8, "NUL byte", "UTF-8", id="nul-byte"),
    # ---- names
    pytest.param(line15("g phii phi phi"), Meaning, 15, 5, "unknown name 'phii'", "'phi'", id="unknown-field"),
    pytest.param(line15("gg phi^3"), Meaning, 15, 3, "unknown name 'gg'", "'g'", id="unknown-parameter"),
    pytest.param(changed("coupling g = 0.5", "coupling g = 2 mm"), Meaning, 4, 18, "unknown name 'mm'", "'m'",
                 id="unknown-name-in-a-value"),
    pytest.param(changed("scalar phi real mass m", "scalar phi real mass mm"), Meaning, 9, 24,
                 "unknown mass parameter 'mm'", "'m'", id="unknown-mass"),
    pytest.param(changed("coupling g\n", "coupling gg\n"), Meaning, 6, 40, "unknown coupling 'gg'", "'g'",
                 id="unknown-gauge-coupling"),
    pytest.param(changed("charge qed -1", "charge qcd -1"), Meaning, 10, 20, "undeclared group 'qcd'", "'qed'",
                 id="undeclared-charge-group"),
    pytest.param(changed("  coupling g = 0.5\n", "  coupling g = 0.5\n  coupling phi = 1\n"), Meaning, 10, 3,
                 "'phi' is already declared", "own name", id="declared-twice"),
    pytest.param(changed("  coupling g = 0.5\n", "  coupling g = 0.5\n  coupling gamma5 = 1\n"), Meaning, 5, 3,
                 "built-in name", "gamma5_1", id="built-in-name"),
    pytest.param(line15("g phi^3 fields"), Meaning, 15, 11, "unknown name 'fields'", "", id="section-word-in-term"),
    # ---- Lorentz indices
    pytest.param(line15("g d[mu] phi phi"), Meaning, 15, 7, "'mu' is left free", "exactly twice",
                 id="free-index"),
    pytest.param(line15("g d[mu] phi d[mu] phi d[mu] phi"), Meaning, 15, 27, "'mu' is used more than twice",
                 "rename", id="index-used-three-times"),
    pytest.param(line15("g phi[mu] phi phi"), Meaning, 15, 9, "scalar field 'phi' has no Lorentz index",
                 "write phi", id="index-on-a-scalar"),
    pytest.param(line15("g A phi phi"), Meaning, 15, 5, "vector field 'A' takes 1 Lorentz index, not 0", "A[mu]",
                 id="vector-without-index"),
    pytest.param(line15("g A[mu,nu] phi phi"), Meaning, 15, 7, "takes 1 Lorentz index, not 2", "A[mu]",
                 id="vector-with-two-indices"),
    pytest.param(line15("g bar(psi) gamma psi phi"), Meaning, 15, 14, "'gamma' takes 1 Lorentz index, not 0",
                 "gamma[mu]", id="gamma-without-index"),
    pytest.param(line15("g eps[mu,mu,nu,nu] A[mu] A[nu]"), Meaning, 15, 5, "repeated index", "four different",
                 id="eps-repeated-index"),
    pytest.param(changed("lagrangian\n", "define\n  J = bar(psi) gamma[mu] psi\nlagrangian\n"), Meaning, 12, 22,
                 "index 'mu' is left free in definition 'J'", "J[mu]", id="free-index-in-definition"),
    # ---- fermions and Dirac matrices
    pytest.param(line15("g bar(phi) psi"), Meaning, 15, 5, "bar() of the scalar 'phi'", "", id="bar-of-a-boson"),
    pytest.param(line15("g dag(psi) psi phi"), Meaning, 15, 5, "dag() of the fermion 'psi'", "bar(psi)",
                 id="dag-of-a-fermion"),
    pytest.param(line15("g gamma5 phi phi phi"), Derivation, 15, 5, "'gamma5' stands outside a fermion bilinear",
                 "between bar(psi) and psi", id="gamma5-outside-a-bilinear"),
    pytest.param(line15("g phi gamma[mu] d[mu] phi"), Derivation, 15, 9, "'gamma' stands outside", "bar(psi)",
                 id="gamma-outside-a-bilinear"),
    pytest.param(line15("g bar(psi) phi"), Derivation, 15, 5, "bar(psi) has no fermion after it", "bar(psi) psi",
                 id="unclosed-bilinear"),
    pytest.param(line15("g psi phi bar(psi)"), Derivation, 15, 5, "'psi' has no bar() partner", "bar(psi) psi",
                 id="fermion-before-its-bar"),
    # ---- numbers where numbers are needed
    pytest.param(line15("sqrt(phi) phi phi"), Meaning, 15, 3, "sqrt() of a field", "parameters and numbers",
                 id="sqrt-of-a-field"),
    pytest.param(changed("coupling g = 0.5", "coupling g = sqrt(phi)"), Meaning, 4, 21,
                 "a number is needed here, but 'phi' is a field", "parameters, numbers", id="field-in-a-value"),
    pytest.param(line15("g phi^2 / phi"), Meaning, 15, 13, "field in a denominator", "parameters and numbers",
                 id="field-in-a-denominator"),
    pytest.param(line15("g phi^(1/2)"), Meaning, 15, 10, "positive whole exponent", "phi^4", id="fractional-power"),
    pytest.param(line15("g phi^13"), Meaning, 15, 9, "field powers from 1 to 12", "between 1 and 12",
                 id="power-too-large"),
    pytest.param(changed("coupling g = 0.5", "coupling g = 0.5 + I"), Meaning, 4, 16,
                 "declared real but its value is complex", "complex g", id="complex-value-of-a-real-parameter"),
    pytest.param(line15("g m^2"), Meaning, 15, 3, "contains no field", "", id="term-without-fields"),
    # ---- h.c.
    pytest.param(line15("h.c."), Meaning, 15, 3, "'h.c.' stands alone", "end of the term", id="hc-alone"),
    pytest.param(line15("+ h.c."), Meaning, 15, 5, "'h.c.' stands alone", "end of the term", id="plus-hc-alone"),
    pytest.param(line15("g phi^3 + h.c. + h.c."), Meaning, 15, 20, "'h.c.' appears twice", "keep one",
                 id="hc-twice"),
    pytest.param(line15("g phi^3 - h.c."), Meaning, 15, 13, "'- h.c.'", "+ h.c.", id="minus-hc"),
    # ---- derivatives
    pytest.param(line15("g phi d[mu] phi d[mu]"), Meaning, 15, 19, "d[mu] has nothing to act on",
                 "before the field", id="derivative-with-nothing-to-act-on"),
    pytest.param(line15("g d[mu] phi (phi d[mu])"), Meaning, 15, 20, "has nothing to act on", "",
                 id="derivative-at-the-end-of-a-bracket"),
    pytest.param(changed("gauge\n  qed U(1) boson A strength F coupling g\n", "")
                 .replace(" charge qed -1", "").replace("  -1/4 F[mu,nu] F[mu,nu]\n",
                                                        "  -1/2 d[mu] A[nu] d[mu] A[nu]\n"),
                 Meaning, 12, 25, "D[mu] needs a gauge group", "d[mu]", id="covariant-derivative-without-group"),
    # ---- declarations and conventions
    pytest.param(changed("scalar phi real mass m", "scalar phi real mass 5"), Meaning, 9, 24,
                 "a mass is a parameter name", "mass mX", id="mass-as-a-number"),
    pytest.param(changed("scalar phi real mass m", "scalar phi real mass m charge qed 1"), Meaning, 9, 26,
                 "real field 'phi' cannot carry a charge", "complex", id="charged-real-field"),
    pytest.param(BASE + "conventions\n  covariant sideways\n", Meaning, 16, 3, "unknown convention", "covariant plus",
                 id="unknown-convention"),
    pytest.param(changed("U(1)", "U(2)"), Meaning, 6, 7, "unknown gauge group 'U(2)'", "U(1)", id="unknown-group"),
    pytest.param("theory t\nfields\n  scalar phi real\n", Meaning, 1, 1, "no lagrangian terms", "lagrangian",
                 id="no-lagrangian"),
    # ---- propagators that cannot exist
    pytest.param(changed("coupling g\n", "coupling g fixing none\n"), Derivation, 8, 3,
                 "quadratic kernel of 'A' cannot be inverted", "gauge fixing", id="photon-without-gauge-fixing"),
    pytest.param(changed("  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2\n", "  g phi^3\n"), Derivation, 9, 3,
                 "'phi' has no kinetic term", "kinetic term", id="field-without-kinetic-term"),
    pytest.param(line15("g phi dag(s)").replace("  scalar phi real mass m\n",
                                                "  scalar phi real mass m\n  scalar s complex mass m\n")
                 + "  dag(d[mu] s) d[mu] s\n", Derivation, 16, 3, "mix at quadratic order", "mass eigenstates",
                 id="quadratic-mixing"),
]


def _load_and_derive(text: str) -> None:
    vs.load_model(text=text, name="t.vsm").derive()


@pytest.mark.parametrize("text, cls, line, column, message, hint", CASES)
def test_error_class_position_message_and_hint(text, cls, line, column, message, hint):
    with pytest.raises(vs.VertexsmithError) as info:
        _load_and_derive(text)
    error = info.value
    assert type(error) is cls
    assert (error.span.line, error.span.column) == (line, column)
    assert message in error.message
    assert hint in error.hint
    assert error.hint, "every error says what to write instead"


@pytest.mark.parametrize("text, cls, line, column, message, hint", CASES)
def test_error_text_shows_file_line_caret_and_hint(text, cls, line, column, message, hint):
    with pytest.raises(vs.VertexsmithError) as info:
        _load_and_derive(text)
    shown = str(info.value).splitlines()
    assert shown[0] == f"t.vsm:{line}:{column}: error: {info.value.message}"
    source_line = text.splitlines()[line - 1] if text.splitlines() else ""
    assert shown[1] == "  " + source_line.expandtabs(1)
    # the caret sits under the reported column
    caret = shown[2]
    assert set(caret.strip()) == {"^"}
    assert caret.index("^") == 2 + column - 1
    assert shown[-1].startswith("  hint: ")


def test_unknown_name_hint_lists_the_nearest_declared_names():
    # two declared names are close to 'psj': psi and phi... only those within reach are offered
    text = BASE.replace("  scalar phi real mass m\n", "  scalar phi real mass m\n  scalar psy real mass m\n") \
        + "  1/2 d[mu] psy d[mu] psy\n  g psj phi phi\n"
    with pytest.raises(vs.ModelMeaningError) as info:
        _load_and_derive(text)
    assert info.value.message == "unknown name 'psj'"
    assert "'psi'" in info.value.hint and "'psy'" in info.value.hint
    assert "'A'" not in info.value.hint


def test_errors_from_a_file_name_the_file(tmp_path):
    path = tmp_path / "broken.vsm"
    path.write_text(line15("g phii phi phi"), encoding="utf-8")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(path)
    assert str(info.value).startswith(f"{path}:15:5: error: unknown name 'phii'")


def test_every_error_class_derives_from_the_root():
    for cls in (vs.ModelSyntaxError, vs.ModelMeaningError, vs.DerivationError, vs.UsageError):
        assert issubclass(cls, vs.VertexsmithError)
        assert issubclass(cls, Exception)


def test_usage_errors_for_the_python_api(tmp_path):
    with pytest.raises(vs.UsageError, match="give a model file path or text="):
        vs.load_model()
    with pytest.raises(vs.UsageError, match="cannot read the model file"):
        vs.load_model(tmp_path / "missing.vsm")
    binary = tmp_path / "binary.vsm"
    binary.write_bytes(b"\xff\xfe\x00\x01")
    with pytest.raises(vs.UsageError, match="UTF-8"):
        vs.load_model(binary)
    with pytest.raises(vs.UsageError, match="unknown gauge 'landau'") as info:
        vs.load_model(vs.example("qed")).derive(gauge="landau")
    assert "feynman" in info.value.hint
    with pytest.raises(vs.UsageError, match="no shipped model") as info:
        vs.example("nonexistent")
    assert "qed" in info.value.hint


def test_usage_error_without_a_position_prints_without_a_caret():
    error = vs.UsageError("no shipped model 'x'", hint="the shipped models are: qed")
    text = str(error)
    assert "^" not in text
    assert re.match(r"^\S+: error: no shipped model 'x'\n  hint: the shipped models are: qed$", text)


def test_error_for_a_vertex_that_does_not_exist_lists_the_vertices(shipped):
    rules = shipped("qed").derive()
    with pytest.raises(vs.UsageError, match="no vertex with legs") as info:
        rules.vertex("bar(ele)", "muon", "A")
    # the nearest vertices by their legs, the muon's first (one leg differs), then the electron's
    assert info.value.hint == "did you mean 'bar(muon) muon A' or 'bar(ele) ele A'?"
    with pytest.raises(vs.UsageError, match="no propagator"):
        rules.propagator("photon")
