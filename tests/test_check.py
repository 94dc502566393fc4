"""The model checker: hermiticity, charges, kinetic and mass terms, dimensions, tadpoles, derive errors.

Every case is a small inline model; each expectation names the exact line, severity and message.
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import sympy

import vertexsmith as vs
from vertexsmith._resources import shipped_models
from vertexsmith.check import Diagnostic, check_model, conjugate_monomial, operator_dimension
from vertexsmith.quadratic import quadratic_form
from vertexsmith.rules import P2

SHIPPED = sorted(shipped_models(), key=lambda p: p.stem)


def _shipped(paths):
    return [pytest.param(p, id=p.stem) for p in paths]


def _stems(stems):
    return [pytest.param(s, id=s) for s in stems]


def _load(text: str) -> vs.Model:
    return vs.load_model(text=text, name="t.vsm")


def _found(text: str) -> list[tuple[str, int, str]]:
    return [(d.severity, d.span.line, d.message) for d in check_model(_load(text))]


# A clean base: scalar QED-like content plus a real scalar and a neutral Dirac fermion. Lines 1-21;
# an extra term appended to it is line 22.
BASE = """theory t
parameters
  mass m = 1.0
  mass M = 2.0
  coupling g = 0.3
  coupling complex y = 0.1 + 0.2 I
  coupling e = 0.3
gauge
  qed U(1) boson A strength F coupling e
fields
  vector A
  scalar phi real mass m
  scalar s complex mass M charge qed +1
  dirac psi mass m charge qed -1
  dirac chi mass M
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  dag(D[mu] s) D[mu] s - M^2 dag(s) s
  bar(psi) (I gamma[mu] D[mu] - m) psi
  bar(chi) (I gamma[mu] d[mu] - M) chi
"""


# ------------------------------------------------------------------ shipped models

@pytest.mark.parametrize("path", _shipped(SHIPPED))
def test_shipped_models_have_no_errors(path):
    diagnostics = check_model(vs.load_model(path))
    assert [str(d) for d in diagnostics if d.severity == "error"] == []


@pytest.mark.parametrize("stem", _stems(["phi4", "yukawa", "qed", "scalar_qed", "dark_sector", "contact",
                                          "axion_like"]))
def test_shipped_abelian_models_have_no_warnings(stem):
    diagnostics = check_model(vs.load_model(vs.example(stem)))
    assert [str(d) for d in diagnostics if d.severity == "warning"] == []


@pytest.mark.parametrize("stem, expected", [
    # axion_like: d[mu] a bar(f) gamma gamma5 f is 1 + 1 + 3/2 + 3/2; a eps F F is 1 + 2 + 2
    pytest.param("axion_like", [(37, "operator of mass dimension 5 (above 4: not renormalisable)"),
                                (39, "operator of mass dimension 5 (above 4: not renormalisable)")],
                 id="axion_like"),
    # contact: four fermion fields, 4 x 3/2
    pytest.param("contact", [(34, "operator of mass dimension 6 (above 4: not renormalisable)"),
                             (36, "operator of mass dimension 6 (above 4: not renormalisable)")],
                 id="contact"),
    pytest.param("qed", [], id="qed"),
])
def test_shipped_models_notes(stem, expected):
    # dimension counting: Peskin & Schroeder sec. 10.1 (from memory)
    diagnostics = check_model(vs.load_model(vs.example(stem)))
    assert [(d.span.line, d.message) for d in diagnostics if d.severity == "note"] == expected


def test_clean_base_is_clean():
    assert _found(BASE) == []


# ------------------------------------------------------------------ hermiticity

NO_HC = "term has no hermitian conjugate in the Lagrangian"
ANTI = "term is anti-hermitian: it changes sign under hermitian conjugation"


@pytest.mark.parametrize("extra, expected", [
    # complex coupling without its conjugate
    ("  - y phi bar(chi) PR chi\n", [("error", 22, NO_HC)]),
    ("  - y phi bar(chi) PR chi + h.c.\n", []),
    # real coupling but a chiral structure: (bar(a) PR b)^dag = bar(b) PL a
    ("  - g phi bar(chi) PR chi\n", [("error", 22, NO_HC)]),
    # bar(psi) gamma5 psi is anti-hermitian, i bar(psi) gamma5 psi hermitian
    # (Peskin & Schroeder sec. 3.4, bilinears; from memory)
    ("  - g phi bar(chi) gamma5 chi\n", [("error", 22, ANTI)]),
    ("  - I g phi bar(chi) gamma5 chi\n", []),
    # I phi^3 with a real phi and a real g
    ("  I g phi^3\n", [("error", 22, ANTI)]),
    # a derivative current: i dag(s) d s alone is not hermitian, with its conjugate it is
    ("  I g dag(s) d[mu] s A[mu]\n", [("error", 22, NO_HC)]),
    ("  I g dag(s) d[mu] s A[mu] + h.c.\n", []),
    ("  I g (dag(s) d[mu] s - d[mu] dag(s) s) A[mu]\n", []),
    # a complex charged coupling without h.c.: the conjugate legs (dag(s) s) are the same set
    ("  - y dag(s) s phi\n", [("error", 22, NO_HC)]),
    # i gamma^mu gamma^nu F_{mu nu} = sigma^{mu nu} F_{mu nu}: hermitian although the chain reverses
    ("  I g/m bar(chi) gamma[mu] gamma[nu] chi F[mu,nu]\n",
     [("note", 22, "operator of mass dimension 5 (above 4: not renormalisable)")]),
    ("  g/m bar(chi) gamma[mu] gamma[nu] chi F[mu,nu]\n",
     [("note", 22, "operator of mass dimension 5 (above 4: not renormalisable)"), ("error", 22, ANTI)]),
], ids=["complex-yukawa", "complex-yukawa-hc", "real-chiral", "gamma5-without-i", "i-gamma5", "i-phi3",
        "current", "current-hc", "current-written-out", "complex-neutral-coupling", "i-gamma-gamma-F", "gamma-gamma-F"])
def test_hermiticity(extra, expected):
    assert _found(BASE + extra) == expected


def test_conjugate_written_on_its_own_line_is_accepted():
    text = BASE + "  - y phi bar(chi) PR chi\n  - conj(y) phi bar(chi) PL chi\n"
    assert _found(text) == []


def test_wrong_conjugate_on_its_own_line_reports_both_lines():
    text = BASE + "  - y phi bar(chi) PR chi\n  - y phi bar(chi) PL chi\n"
    assert _found(text) == [("error", 22, NO_HC), ("error", 23, NO_HC)]


def test_hermiticity_hint_and_rendering():
    (d,) = check_model(_load(BASE + "  - y phi bar(chi) PR chi\n"))
    assert d.hint == "add '+ h.c.' at the end of the line"
    lines = str(d).splitlines()
    assert lines[0] == f"t.vsm:22:3: error: {NO_HC}"
    assert lines[1] == "    - y phi bar(chi) PR chi"
    assert lines[2] == "    " + "^" * len("- y phi bar(chi) PR chi")  # the caret underlines the whole term
    assert lines[3] == "  hint: add '+ h.c.' at the end of the line"


@pytest.mark.parametrize("path", SHIPPED, ids=[p.stem for p in SHIPPED])
def test_conjugation_is_an_involution(path):
    model = vs.load_model(path)
    for mono in model.monomials():
        twice = conjugate_monomial(model, conjugate_monomial(model, mono))
        assert twice.atoms == mono.atoms
        assert sympy.simplify(twice.coefficient - mono.coefficient) == 0


def test_conjugate_of_a_chiral_bilinear():
    # (bar(psi) PR chi)^dag = bar(chi) PL psi; (gamma5)bar = -gamma5: common practice, no source
    model = _load(BASE + "  - y phi bar(psi) PR chi\n")
    mono = next(mono for mono in model.monomials() if mono.origin.line == 22)
    conjugate = conjugate_monomial(model, mono)
    shown = [(a.field, a.conjugate) if hasattr(a, "field") else a.kind for a in conjugate.atoms]
    assert shown == [("chi", True), "PL", ("psi", False), ("phi", False)]
    assert conjugate.coefficient == -sympy.conjugate(sympy.Symbol("y"))


# ------------------------------------------------------------------ charges

@pytest.mark.parametrize("extra, message", [
    ("  - g phi^2 s\n", "term is not neutral under 'qed': its net charge is +1"),
    ("  - g phi^2 dag(s)\n", "term is not neutral under 'qed': its net charge is -1"),
    ("  - g phi bar(psi) chi + h.c.\n", "term is not neutral under 'qed': its net charge is ±1"),
    ("  - g m s s phi + h.c.\n", "term is not neutral under 'qed': its net charge is ±2"),
], ids=["s", "dag-s", "psi-chi-hc", "s-s"])
def test_charge_violation(extra, message):
    found = [(sev, line, msg) for sev, line, msg in _found(BASE + extra) if "neutral" in msg]
    assert found == [("error", 22, message)]


def test_neutral_terms_pass():
    assert _found(BASE + "  - g dag(s) s phi\n  - g phi bar(psi) psi\n") == []


def test_charge_hint_names_the_rule():
    d = next(d for d in check_model(_load(BASE + "  - g phi^2 s\n")) if "neutral" in d.message)
    assert "add up to 0" in d.hint and "opposite sign" in d.hint


# ------------------------------------------------------------------ kinetic and mass terms

SCALAR = """theory t
parameters
  mass m = 1.0
  mass m2 = 2.0
fields
  scalar phi real mass m
lagrangian
"""
VECTORS = """theory t
parameters
  mass mX = 1.0
  mass m = 1.0
fields
  vector X mass mX
  vector W complex mass mX
  dirac psi mass m
  scalar s complex mass m
lagrangian
"""
X_OK = "  -1/4 (d[mu] X[nu] - d[nu] X[mu]) (d[mu] X[nu] - d[nu] X[mu]) + 1/2 mX^2 X[mu] X[mu]\n"
W_OK = "  -1/2 dag(d[mu] W[nu] - d[nu] W[mu]) (d[mu] W[nu] - d[nu] W[mu]) + mX^2 dag(W[mu]) W[mu]\n"
PSI_OK = "  bar(psi) (I gamma[mu] d[mu] - m) psi\n"
S_OK = "  dag(d[mu] s) d[mu] s - m^2 dag(s) s\n"
GHOST = "error", "the kinetic term of '{}' has the wrong sign (ghost-like)"


@pytest.mark.parametrize("text, expected", [
    # canonical forms: Peskin & Schroeder ch. 2-4 and problem 9.1 (from memory); Proca: common practice
    (SCALAR + "  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2\n", []),
    (VECTORS + X_OK + W_OK + PSI_OK + S_OK, []),
    (SCALAR + "  -1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2\n",
     [("error", 8, "the kinetic term of 'phi' has the wrong sign (ghost-like)")]),
    (VECTORS + X_OK.replace("-1/4", "1/4") + W_OK + PSI_OK + S_OK,
     [("error", 11, "the kinetic term of 'X' has the wrong sign (ghost-like)")]),
    (VECTORS + X_OK + W_OK + "  bar(psi) (- I gamma[mu] d[mu] - m) psi\n" + S_OK,
     [("error", 13, "the kinetic term of 'psi' has the wrong sign (ghost-like)")]),
    (SCALAR + "  d[mu] phi d[mu] phi - m^2 phi^2\n",
     [("warning", 8, "the kinetic term of 'phi' is 2 times the canonical one")]),
    (VECTORS + X_OK + W_OK.replace("-1/2", "-1/4").replace("+ mX^2", "+ 1/2 mX^2") + PSI_OK + S_OK,
     [("warning", 12, "the kinetic term of 'W' is 1/2 times the canonical one")]),
    (VECTORS + X_OK + W_OK + PSI_OK + "  2 dag(d[mu] s) d[mu] s - 2 m^2 dag(s) s\n",
     [("warning", 14, "the kinetic term of 's' is 2 times the canonical one")]),
], ids=["scalar-ok", "vectors-dirac-complex-ok", "scalar-ghost", "vector-ghost", "dirac-ghost", "scalar-twice",
        "complex-vector-half", "complex-scalar-twice"])
def test_kinetic_normalisation(text, expected):
    assert _found(text) == expected


def test_wrong_normalisation_hint_says_what_to_write():
    (d,) = check_model(_load(SCALAR + "  d[mu] phi d[mu] phi - m^2 phi^2\n"))
    assert d.hint == "write 1/2 d[mu] phi d[mu] phi, or rescale the field"


@pytest.mark.parametrize("text, expected", [
    (SCALAR + "  1/2 d[mu] phi d[mu] phi - 1/2 m2^2 phi^2\n",
     [("warning", 8, "'phi' is declared with mass m, but its quadratic terms give mass^2 = m2^2")]),
    # a tachyonic sign: the field is not at the minimum (Peskin & Schroeder sec. 11.1; from memory)
    (SCALAR + "  1/2 d[mu] phi d[mu] phi + 1/2 m^2 phi^2\n",
     [("warning", 8, "the quadratic terms of 'phi' give a negative mass^2 = -m^2: the field is expanded around "
                     "a maximum of its potential")]),
    # the mass term written on its own line: the warning points there
    (SCALAR + "  1/2 d[mu] phi d[mu] phi\n  - 1/2 m2^2 phi^2\n",
     [("warning", 9, "'phi' is declared with mass m, but its quadratic terms give mass^2 = m2^2")]),
    # no mass term at all: the warning points at the declaration
    (SCALAR + "  1/2 d[mu] phi d[mu] phi\n",
     [("warning", 6, "'phi' is declared with mass m, but the lagrangian has no mass term for it")]),
    (VECTORS + X_OK + W_OK + "  bar(psi) (I gamma[mu] d[mu] + m) psi\n" + S_OK,
     [("warning", 13, "'psi' is declared with mass m, but its quadratic terms give mass -m")]),
    (VECTORS.replace("vector X mass mX", "vector X") + X_OK + W_OK + PSI_OK + S_OK,
     [("warning", 11, "'X' is declared massless, but its quadratic terms give mass^2 = mX^2")]),
], ids=["scalar-other-mass", "scalar-tachyonic", "mass-line", "no-mass-term", "dirac-sign", "vector-undeclared"])
def test_mass_mismatch(text, expected):
    assert _found(text) == expected


def test_mass_hint_gives_the_canonical_mass_term():
    (d,) = check_model(_load(SCALAR + "  1/2 d[mu] phi d[mu] phi - 1/2 m2^2 phi^2\n"))
    assert d.hint == "write the mass term as - 1/2 m^2 phi^2, or declare the mass the term uses"


@pytest.mark.parametrize("text, expected", [
    (SCALAR + "  - 1/2 m^2 phi^2\n", [("error", 6, "the field 'phi' has no kinetic term")]),
    ("theory t\nfields\n  scalar a real\n  scalar b real\nlagrangian\n  1/2 d[mu] a d[mu] a\n",
     [("error", 4, "the field 'b' has no kinetic term")]),
    (VECTORS + X_OK + W_OK + S_OK, [("error", 8, "the field 'psi' has no kinetic term")]),
], ids=["mass-only", "unused", "dirac"])
def test_field_without_kinetic_term(text, expected):
    assert _found(text) == expected


def test_chiral_fermion_is_accepted():
    # a massless one-handed fermion: bar(n) i gamma.d PL n (common practice, no source)
    assert _found("theory t\nfields\n  dirac n\nlagrangian\n  bar(n) I gamma[mu] PL d[mu] n\n") == []


def test_higher_derivative_kinetic_term_is_reported_at_its_line():
    text = SCALAR + "  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2\n  1/m^2 d[mu] (d[nu] phi) d[mu] (d[nu] phi)\n"
    assert _found(text) == [
        ("note", 9, "operator of mass dimension 6 (above 4: not renormalisable)"),
        ("warning", 9, "the quadratic terms of 'phi' contain higher powers of the momentum "
                       "(a higher-derivative kinetic term)")]


@pytest.mark.parametrize("stem, field, expected", [
    # Gamma_2 / i: scalar p^2 - m^2, Dirac pslash - m, vector -(p^2) g (Peskin & Schroeder ch. 4; from memory)
    ("phi4", "phi", {"one": P2 - sympy.Symbol("m", real=True) ** 2}),
    ("qed", "ele", {"slash_L": 1, "slash_R": 1, "one_L": -sympy.Symbol("me", real=True),
                    "one_R": -sympy.Symbol("me", real=True)}),
    ("qed", "A", {"metric": -P2, "pp": 1}),
    ("scalar_qed", "phi", {"one": P2 - sympy.Symbol("mphi", real=True) ** 2}),
], ids=["phi4", "qed-electron", "qed-photon", "scalar-qed"])
def test_quadratic_kernel_of_textbook_models(stem, field, expected):
    model = vs.load_model(vs.example(stem))
    kernel = quadratic_form(model, model.monomials()).entry(field, field)
    assert dict(kernel) == {k: sympy.sympify(v) for k, v in expected.items()}


# ------------------------------------------------------------------ dimensions and tadpoles

@pytest.mark.parametrize("extra, dimension", [
    ("  - g phi^5 / m\n", "5"),
    ("  - g phi^6 / m^2\n", "6"),
    ("  - g/m^2 bar(chi) chi bar(chi) chi\n", "6"),
    ("  - g/m d[mu] phi bar(chi) gamma[mu] chi\n", "5"),
    ("  - g/m^4 (d[mu] phi d[mu] phi)^2\n", "8"),
], ids=["phi5", "phi6", "four-fermion", "derivative-current", "derivative-quartic"])
def test_dimension_notes(extra, dimension):
    # counting: Peskin & Schroeder sec. 10.1 (from memory)
    found = [(sev, line, msg) for sev, line, msg in _found(BASE + extra) if sev == "note"]
    assert found == [("note", 22, f"operator of mass dimension {dimension} (above 4: not renormalisable)")]


def test_renormalisable_terms_give_no_note():
    assert _found(BASE + "  - g m phi^3 - g phi^4 - g phi bar(chi) chi\n") == []


def test_operator_dimension_values():
    model = vs.load_model(vs.example("axion_like"))
    dims = sorted({(mono.origin.line, operator_dimension(model, mono)) for mono in model.monomials()})
    assert (37, Fraction(5)) in dims and (39, Fraction(5)) in dims
    assert max(d for line, d in dims if line not in (37, 39)) == 4


@pytest.mark.parametrize("extra, expected", [
    ("  g m^3 phi\n", [("warning", 22, "term is linear in 'phi' (a tadpole)")]),
    ("  y m^3 s + h.c.\n", [("warning", 22, "term is linear in 'dag(s)' (a tadpole)"),
                            ("warning", 22, "term is linear in 's' (a tadpole)"),
                            ("error", 22, "term is not neutral under 'qed': its net charge is ±1")]),
], ids=["real", "complex"])
def test_tadpoles(extra, expected):
    assert _found(BASE + extra) == expected


# ------------------------------------------------------------------ what derive refuses

@pytest.mark.parametrize("text, expected", [
    (BASE + "  - g m phi s + h.c.\n",
     # one report for the pair, not one per h.c. half (issue 9)
     [("error", 22, "'phi' and 's' mix at quadratic order (line 22): a complex field with a real one "
                    "(write the complex field as two real fields)"),
      ("error", 22, "term is not neutral under 'qed': its net charge is ±1")]),
    ("theory t\nfields\n  vector V\nlagrangian\n  -1/4 (d[mu] V[nu] - d[nu] V[mu]) (d[mu] V[nu] - d[nu] V[mu])\n",
     [("error", 3, "the quadratic kernel of 'V' cannot be inverted")]),
    (BASE + "  g phi d[mu] phi d[mu]\n",
     [("error", 22, "d[mu] has nothing to act on")]),
    (BASE + "  g phi gamma5\n", [("error", 22, "'gamma5' stands outside a fermion bilinear")]),
], ids=["mixing", "massless-proca", "expand-error", "loose-gamma5"])
def test_derivation_errors_become_diagnostics(text, expected):
    assert _found(text) == expected


# ------------------------------------------------------------------ the diagnostics themselves

def test_diagnostics_are_sorted_and_deterministic():
    text = (BASE + "  - g phi^2 s\n  I g phi^3\n  g m^3 phi\n  - y phi bar(chi) PR chi\n")
    first = check_model(_load(text))
    assert first == check_model(_load(text))
    keys = [(d.span.line, d.span.column, d.message) for d in first]
    assert keys == sorted(keys)
    assert [d.span.line for d in first] == [22, 22, 23, 24, 25]


def test_diagnostic_is_frozen_and_carries_the_source():
    (d,) = check_model(_load(BASE + "  I g phi^3\n"))
    assert isinstance(d, Diagnostic) and d.source is not None and d.source.name == "t.vsm"
    with pytest.raises(AttributeError):
        d.message = "x"  # type: ignore[misc]


# ------------------------------------------------------------------ non-abelian groups
# SU(2) keeps the numerical arrays small (a four-gluon vertex of SU(3) has 32^4 entries)

QCD = """theory t
parameters
  coupling gs = 1.2
  mass mq = 0.1
  coupling complex y = 0.1
gauge
  qcd SU(2) boson G strength GS coupling gs
fields
  vector G
  dirac q mass mq in qcd fundamental
  scalar h real
lagrangian
  -1/4 GS[mu,nu,a] GS[mu,nu,a]
  bar(q) (I gamma[mu] D[mu] - mq) q
  1/2 d[mu] h d[mu] h
"""


@pytest.mark.parametrize("text, expected", [
    (QCD, []),
    # the generators are hermitian, so g bar(q) gamma T q G is hermitian and i g ... is not
    (QCD + "  gs bar(q) gamma[mu] T[a] q G[mu,a]\n", []),
    (QCD + "  I gs bar(q) gamma[mu] T[a] q G[mu,a]\n", [("error", 16, ANTI)]),
    (QCD + "  - y h bar(q) q\n", [("error", 16, NO_HC)]),
    (QCD + "  - y h bar(q) q + h.c.\n", []),
    (QCD.replace("-1/4 GS", "-1/8 GS"), [("warning", 13, "the kinetic term of 'G' is 1/2 times the canonical one")]),
], ids=["clean", "hermitian-current", "anti-hermitian-current", "complex-yukawa", "complex-yukawa-hc",
        "gluon-half"])
def test_non_abelian(text, expected):
    assert _found(text) == expected


def test_non_abelian_kinetic_hint_carries_the_adjoint_index():
    (d,) = check_model(_load(QCD.replace("-1/4 GS", "-1/8 GS")))
    assert d.hint == "write -1/4 GS[mu,nu,a] GS[mu,nu,a], or rescale the field"
