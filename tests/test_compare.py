"""`vertexsmith compare`: hand-derived rules against derived ones, with the conventions named.

Each convention a hand derivation can differ by is recognised on a rule written that way, and
real mistakes (a factor of 2, a wrong sign of a momentum in one term, a wrong term) are reported
as differences. The textbook rules used as "hand" rules name their source; the two small models
written here (a Pauli term, a derivative Yukawa coupling) are invented scenarios.
"""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest
import sympy

import vertexsmith
from vertexsmith.compare import (AGAINST_ARROW_CONVENTION, CONVENTION, COVARIANT_CONVENTION, DIFFERENT, EQUAL,
                                 MINUS_I_CONVENTION, OUTGOING_CONVENTION, PLUS_I_CONVENTION, SIGN_CONVENTION,
                                 compare_rules, format_report, parse_hand_rules)
from vertexsmith.errors import ModelMeaningError, ModelSyntaxError
from vertexsmith.symbolic import Gamma, parse_factor

PAULI_MODEL = """
theory pauli "QED with an anomalous magnetic moment term (invented)"
parameters
  coupling e     = 0.3
  coupling kappa = 0.05 "Pauli coupling (invented)"
  mass     m     = 1.0
gauge
  qed U(1) boson A strength F coupling e fixing lorenz
fields
  vector A
  dirac psi mass m charge qed -1
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  bar(psi) (I gamma[mu] D[mu] - m) psi
  kappa bar(psi) sigma[mu,nu] psi F[mu,nu]
"""

DERIVATIVE_YUKAWA = """
theory dy "Yukawa coupling with a derivative coupling beside it (invented)"
parameters
  coupling g = 0.3
  coupling c = 0.05
  mass     m = 1.0
  mass     M = 2.0
fields
  scalar phi real mass M
  dirac  psi mass m
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 M^2 phi^2
  bar(psi) (I gamma[mu] d[mu] - m) psi
  - g phi bar(psi) psi + c d[mu] phi bar(psi) gamma[mu] psi
"""

SCALAR_CONTACT = """
theory sc "a scalar four-fermion contact term (invented)"
parameters
  mass             mchi = 2.0
  coupling complex cS   = 0.3 + 0.1 I
fields
  dirac chi mass mchi
  dirac n
lagrangian
  bar(chi) (I gamma[mu] d[mu] - mchi) chi
  bar(n) I gamma[mu] d[mu] n
  - cS bar(chi) PR n bar(n) PR chi + h.c.
"""


def rules_of(name: str, gauge: str = "feynman") -> vertexsmith.Rules:
    return vertexsmith.load_model(vertexsmith.example(name)).derive(gauge=gauge)


def rules_from(text: str) -> vertexsmith.Rules:
    return vertexsmith.load_model(text=textwrap.dedent(text).lstrip(), name="t.vsm").derive(gauge="feynman")


def only(report: vertexsmith.compare.ComparisonReport) -> vertexsmith.compare.Comparison:  # type: ignore[name-defined]
    assert len(report.entries) == 1
    return report.entries[0]


# ---------------------------------------------------------------- equal

def test_textbook_rules_are_equal() -> None:
    # Peskin & Schroeder, ch. 4 (QED vertex -i e Q gamma^mu with Q = -1) and ch. 16 (the three-gluon
    # vertex g f^{abc}[g^{mu nu}(k - p)^rho + g^{nu rho}(p - q)^mu + g^{rho mu}(q - k)^nu], all momenta
    # incoming, and the quark-gluon vertex i g gamma^mu t^a), from memory
    qed = compare_rules(rules_of("qed"), """
        vertex bar(ele) ele A : -I e gamma[mu3]
        vertex A muon bar(muon) : -I e gamma[mu1]     # legs in another order
        propagator ele : I (slash(p) + me) / (p^2 - me^2)
        propagator A : -I g[mu,nu] / p.p
        """.replace("\n        ", "\n"))
    assert [e.status for e in qed.entries] == [EQUAL] * 4
    assert qed.exit_code() == 0 and [e.name for e in qed.not_in_hand] == ["propagator muon"]
    qcd = compare_rules(rules_of("qcd"), "vertex G G G : gs f[a1,a2,a3] (g[mu1,mu2] (p1 - p2)[mu3] "
                                         "+ g[mu2,mu3] (p2[mu1] - p3[mu1]) + g[mu3,mu1] (p3 - p1)[mu2])\n"
                                         "vertex bar(u) u G : I gs gamma[mu3] T[a3,i1,i2]\n")
    assert [e.status for e in qcd.entries] == [EQUAL, EQUAL]


def test_xi_gauge_propagator() -> None:
    # R_xi photon propagator, Peskin & Schroeder eq. (9.58) (from memory)
    report = compare_rules(rules_of("qed", "xi"), "gauge xi\n"
                           "propagator A : -I (g[mu,nu] - (1 - xi_A) p[mu] p[nu] / p^2) / p^2\n")
    assert only(report).status == EQUAL


def test_four_fermion_chains() -> None:
    # L = -cS bar(chi) PR n bar(n) PR chi + h.c.: legs (bar(chi), chi, bar(n), n), lines (1,4) and (3,2);
    # the fields' order (1, 4, 3, 2) is odd, so the factor is +i cS [PR]_14 [PR]_32 + i cS* [PL]_14 [PL]_32
    # (the Grassmann sign rule: Denner et al., Nucl. Phys. B 387 (1992) 467, from memory)
    rules = rules_from(SCALAR_CONTACT)
    right = compare_rules(rules, "vertex bar(chi) chi bar(n) n : I cS chain(1, 4, PR) chain(3, 2, PR) "
                                 "+ I conj(cS) chain(3, 2, PL) chain(1, 4, PL)\n")
    assert only(right).status == EQUAL
    # forgetting the Grassmann sign is an overall sign; a PL where PR belongs is a real error
    forgotten = compare_rules(rules, "vertex bar(chi) chi bar(n) n : -I cS chain(1, 4, PR) chain(3, 2, PR) "
                                     "- I conj(cS) chain(3, 2, PL) chain(1, 4, PL)\n")
    assert only(forgotten).status == CONVENTION and SIGN_CONVENTION in only(forgotten).conventions
    wrong = compare_rules(rules, "vertex bar(chi) chi bar(n) n : I cS chain(1, 4, PR) chain(3, 2, PL) "
                                 "+ I conj(cS) chain(3, 2, PL) chain(1, 4, PL)\n")
    assert only(wrong).status == DIFFERENT


# ---------------------------------------------------------------- conventions

def test_opposite_overall_sign() -> None:
    entry = only(compare_rules(rules_of("qed"), "vertex bar(ele) ele A : I e gamma[mu3]\n"))
    assert entry.status == CONVENTION and entry.conventions == (SIGN_CONVENTION,)


def test_opposite_covariant_derivative_sign() -> None:
    # with a Pauli term the vertex is -i e gamma^mu - 2 kappa sigma^{mu nu} p_nu: flipping e alone is not
    # an overall sign, so the covariant-derivative convention is told apart
    rules = rules_from(PAULI_MODEL)
    entry = only(compare_rules(rules, "vertex bar(psi) psi A : I e gamma[mu3] - 2 kappa sigma[mu3, p3]\n"))
    assert entry.status == CONVENTION and entry.conventions == (COVARIANT_CONVENTION,)
    assert entry.coupling_parity == "mixed"
    same = only(compare_rules(rules, "vertex bar(psi) psi A : -I e gamma[mu3] - 2 kappa sigma[mu3, p3]\n"))
    assert same.status == EQUAL


def test_covariant_sign_across_a_whole_file() -> None:
    # scalar QED derived by hand with D = d + i e Q A: the three-point vertex (odd in e) flips, the seagull
    # (even in e) does not; Peskin & Schroeder problem 9.1 gives the rules (from memory)
    report = compare_rules(rules_of("scalar_qed"), "vertex phi dag(phi) A : -I e (p1[mu3] - p2[mu3])\n"
                                                   "vertex phi dag(phi) A A : 2 I e^2 g[mu3,mu4]\n")
    three, four = report.entries
    assert three.status == CONVENTION and SIGN_CONVENTION in three.conventions
    assert four.status == EQUAL
    assert len(report.notes) == 1 and "opposite covariant-derivative sign" in report.notes[0]
    assert "note: every vertex odd in the gauge coupling (e)" in format_report(report)
    assert report.exit_code() == 1


def test_all_outgoing_momenta() -> None:
    # vertex -i g + c pslash_3: with outgoing momenta only the momentum term changes sign
    rules = rules_from(DERIVATIVE_YUKAWA)
    entry = only(compare_rules(rules, "vertex bar(psi) psi phi : -I g - c slash(p3)\n"))
    assert entry.status == CONVENTION and entry.conventions == (OUTGOING_CONVENTION,)
    assert only(compare_rules(rules, "vertex bar(psi) psi phi : -I g + c slash(p3)\n")).status == EQUAL
    # for a vertex linear in the momenta both explanations fit, and both are named
    linear = only(compare_rules(rules_of("scalar_qed"), "vertex phi dag(phi) A : I e (p2[mu3] - p1[mu3])\n"))
    assert linear.conventions == (OUTGOING_CONVENTION, SIGN_CONVENTION)


def test_missing_or_extra_overall_i() -> None:
    rules = rules_of("dark_sector")
    missing = only(compare_rules(rules, "vertex bar(chi) psi dag(s) : -conj(y) PL\n"))
    assert missing.status == CONVENTION and missing.conventions == (MINUS_I_CONVENTION,)
    extra = only(compare_rules(rules, "vertex s s dag(s) dag(s) : lams\n"))
    assert extra.status == CONVENTION and extra.conventions == (PLUS_I_CONVENTION,)


def test_fermion_propagator_momentum_against_the_arrow() -> None:
    entry = only(compare_rules(rules_of("dark_sector"), "propagator chi : I (mchi - slash(p)) / (p^2 - mchi^2)\n"))
    assert entry.status == CONVENTION and entry.conventions == (AGAINST_ARROW_CONVENTION,)


def test_fermion_legs_in_any_order() -> None:
    # the chain is written between bar(chi) and chi however the legs are listed
    report = compare_rules(rules_of("dark_sector"), "vertex chi X bar(chi) : -I gx gamma[mu2]\n")
    assert only(report).status == EQUAL


# ---------------------------------------------------------------- real errors

def test_factor_of_two_is_an_error() -> None:
    entry = only(compare_rules(rules_of("dark_sector"), "vertex bar(psi) psi X : 2 I gx gamma[mu3]\n"))
    assert entry.status == DIFFERENT and entry.conventions == ()
    assert entry.ratio == pytest.approx(2)
    difference = parse_factor(entry.difference)
    assert sympy.simplify(difference - sympy.I * sympy.Symbol("gx") * Gamma(sympy.Symbol("mu3"))) == 0
    assert "hand = 2 x derived at every point" in format_report(compare_rules(
        rules_of("dark_sector"), "vertex bar(psi) psi X : 2 I gx gamma[mu3]\n"))


def test_wrong_momentum_sign_in_one_term_is_an_error() -> None:
    three_gluon = ("vertex G G G : gs f[a1,a2,a3] (g[mu1,mu2] (p2 - p1)[mu3] "
                   "+ g[mu2,mu3] (p2 - p3)[mu1] + g[mu3,mu1] (p3 - p1)[mu2])\n")
    entry = only(compare_rules(rules_of("qcd"), three_gluon))
    assert entry.status == DIFFERENT and entry.ratio is None
    scalar = only(compare_rules(rules_of("scalar_qed"), "vertex phi dag(phi) A : I e (p1[mu3] + p2[mu3])\n"))
    assert scalar.status == DIFFERENT


def test_symmetry_factor_error_and_missing_term() -> None:
    # a quartic written without its 4!/... symmetry factor, and a Pauli vertex without the Pauli term
    entry = only(compare_rules(rules_of("scalar_qed"), "vertex phi phi dag(phi) dag(phi) : -I lam / 4\n"))
    assert entry.status == DIFFERENT and entry.ratio == pytest.approx(0.25)
    pauli = only(compare_rules(rules_from(PAULI_MODEL), "vertex bar(psi) psi A : -I e gamma[mu3]\n"))
    assert pauli.status == DIFFERENT
    assert pauli.difference == "2*kappa*sigma[mu3,p3]"  # written in the model language


def test_vertices_missing_on_either_side() -> None:
    report = compare_rules(rules_of("qed"), "vertex bar(ele) ele A : -I e gamma[mu3]\n"
                                            "vertex bar(ele) muon A : -I e gamma[mu3]\n")
    known, unknown = report.entries
    assert known.status == EQUAL and unknown.status == "not in model" and unknown.span.line == 2
    assert [e.name for e in report.not_in_hand] == ["vertex bar(muon) muon A", "propagator A", "propagator ele",
                                                    "propagator muon"]
    assert report.exit_code() == 1
    partial = compare_rules(rules_of("qed"), "vertex bar(ele) ele A : -I e gamma[mu3]\n")
    assert partial.exit_code() == 0 and partial.exit_code(require_all=True) == 1


# ---------------------------------------------------------------- malformed hand files

@pytest.mark.parametrize(("text", "line", "column", "message"), [
    ("vertex bar(chi) chi X  -I gx gamma[mu3]\n", 1, 24, "unexpected '-'"),
    ("# rules\nvertex bar(chi) chi X : -I gx @ gamma[mu3]\n", 2, 31, "unexpected character '@'"),
    ("gauge landau\n", 1, 7, "unknown gauge 'landau'"),
], ids=["missing-colon", "bad-character", "unknown-gauge"])
def test_syntax_errors_point_at_the_place(text: str, line: int, column: int, message: str) -> None:
    with pytest.raises((ModelSyntaxError, ModelMeaningError)) as info:
        parse_hand_rules(text, "x.hand")
    assert (info.value.span.line, info.value.span.column, info.value.message) == (line, column, message)
    assert str(info.value).startswith(f"x.hand:{line}:{column}: error: {message}")


@pytest.mark.parametrize(("text", "column", "message"), [
    ("vertex bar(chi) chi Y : -I gx gamma[mu3]\n", 21, "unknown field 'Y'"),
    ("vertex bar(chi) chi X : -I gy gamma[mu3]\n", 28, "unknown name 'gy'"),
    ("vertex bar(chi) chi X : -I gx gamma[nu]\n", 25, "the index nu is neither contracted nor an index of a leg"),
    ("vertex bar(chi) chi X : -I gx p1 gamma[mu3]\n", 26, "a momentum stands in a product without an index"),
    ("vertex bar(chi) chi X : -I gx p1\n", 25, "the factor is a bare momentum"),
    ("vertex s dag(s) X : I gx (p1[mu3] - p2)\n", 27, "a momentum is added to something that is not a momentum"),
], ids=["field", "name", "free-index", "momentum-in-product", "bare-momentum", "mixed-sum"])
def test_meaning_errors_point_at_the_place(text: str, column: int, message: str) -> None:
    with pytest.raises(ModelMeaningError) as info:
        compare_rules(rules_of("dark_sector"), parse_hand_rules(text, "x.hand"))
    assert (info.value.span.line, info.value.span.column, info.value.message) == (1, column, message)


def test_two_rules_for_one_vertex() -> None:
    with pytest.raises(ModelMeaningError, match="a second rule for the vertex"):
        compare_rules(rules_of("qed"), "vertex bar(ele) ele A : -I e gamma[mu3]\n"
                                       "vertex A bar(ele) ele : -I e gamma[mu1]\n")


# ---------------------------------------------------------------- the command

def test_compare_command(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    from vertexsmith.cli import main

    good = tmp_path / "good.hand"
    good.write_text("vertex bar(ele) ele A : -I e gamma[mu3]\n", encoding="utf-8")
    assert main(["compare", "qed", str(good)]) == 0
    assert "equal        vertex bar(ele) ele A" in capsys.readouterr().out
    assert main(["compare", "qed", str(good), "--all"]) == 1  # --all: the muon vertex is missing
    capsys.readouterr()
    sign = tmp_path / "sign.hand"
    sign.write_text("vertex bar(ele) ele A : I e gamma[mu3]\n", encoding="utf-8")
    assert main(["compare", "qed", str(sign)]) == 1
    assert SIGN_CONVENTION in capsys.readouterr().out
    broken = tmp_path / "broken.hand"
    broken.write_text("vertex bar(ele) ele A : I e gamma[mu3\n", encoding="utf-8")
    assert main(["compare", "qed", str(broken)]) == 1
    err = capsys.readouterr().err
    assert err.startswith(f"{broken}:1:") and "Traceback" not in err
    assert main(["compare", "qed", str(tmp_path / "missing.hand")]) == 2
    assert "cannot read the hand-rules file" in capsys.readouterr().err


def test_the_example_hand_file_has_one_explained_difference() -> None:
    # examples/dark_sector.hand is written with one deliberate convention: outgoing momenta at s-s*-X
    from vertexsmith.compare import compare_files

    path = Path(__file__).resolve().parents[1] / "examples" / "dark_sector.hand"
    report = compare_files("dark_sector", path)
    statuses = {e.name: e.status for e in report.entries}
    assert statuses.pop("vertex s dag(s) X") == CONVENTION
    assert set(statuses.values()) == {EQUAL} and len(statuses) == 10
    assert report.not_in_hand == () and report.exit_code() == 1
    (explained,) = [e for e in report.entries if e.status == CONVENTION]
    assert explained.conventions[0] == OUTGOING_CONVENTION
