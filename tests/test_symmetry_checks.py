"""Invariance checks (SU(N) contractions, global U(1), Z(N)) and diagnostics, at exact line and column.

Group theory used (common practice, no source): a fundamental index is invariant only when
contracted with an antifundamental (conjugated) one, or N of one kind through the alternating
tensor; phi^i phi^i is not invariant under SU(2) since U^T U != 1 for U in SU(2). A global
U(1) or Z(N) is respected term by term when the charges add up to 0 (mod N).
"""

from __future__ import annotations

from pathlib import Path

import pytest

import vertexsmith as vs
from vertexsmith.check import check_model
from vertexsmith.cli import main
from vertexsmith.errors import ModelMeaningError, ModelSyntaxError

SU2 = """\
theory t
parameters
  coupling g = 0.6
  coupling c = 0.1
gauge
  weak SU(2) boson W strength WS coupling g
fields
  vector W
  scalar phi complex in weak doublet
  scalar S
lagrangian
  -1/4 WS[mu,nu] WS[mu,nu]
  dag(D[mu] phi) D[mu] phi + 1/2 d[mu] S d[mu] S
"""

SU3 = """\
theory t
parameters
  coupling g = 1.1
  coupling c = 0.1
gauge
  color SU(3) boson G strength GS coupling g
fields
  vector G
  scalar q complex in color triplet
  scalar S
lagrangian
  -1/4 GS[mu,nu] GS[mu,nu]
  dag(D[mu] q) D[mu] q + 1/2 d[mu] S d[mu] S
"""

GLOBAL = """\
theory t
parameters
  coupling c = 0.1
  coupling y = 0.3
global
  darkpar Z(2)
  lepton U(1)
fields
  scalar S real charge darkpar 1
  scalar P real
  dirac  chi charge darkpar 1
  dirac  e  charge lepton 1
lagrangian
  1/2 d[mu] S d[mu] S + 1/2 d[mu] P d[mu] P
  bar(chi) I gamma[mu] d[mu] chi + bar(e) I gamma[mu] d[mu] e
  - y P bar(chi) chi - c S^2 P^2
"""


def errors(text: str) -> list[tuple[int, int, str]]:
    model = vs.load_model(text=text, name="t.vsm")
    return [(d.span.line, d.span.column, d.message) for d in check_model(model) if d.severity == "error"]


NOT_INVARIANT_SU2 = "two fundamental indices of 'weak' are contracted with each other (index 'i'): not invariant under SU(2)"


@pytest.mark.parametrize("term, expected", [
    # the repro: two doublets contracted with a delta; caret on the second phi
    ("- c phi[i] phi[i] S + h.c.", [(14, 14, NOT_INVARIANT_SU2)]),
    ("- c phi[i] delta[i,j] phi[j] S + h.c.", [(14, 25, NOT_INVARIANT_SU2.replace("(index 'i')", "(index 'i')"))]),
    ("- c alt[i,j] phi[i] dag(phi[j]) S + h.c.",
     [(14, 7, "alt of 'weak' contracts both a fundamental and a conjugated fundamental index (index 'j'): "
               "not invariant under SU(2)")]),
    # invariant ones: no error
    ("- c dag(phi[i]) phi[j] delta[i,j] S", []),
    ("- c alt[i,j] phi[i] phi[j] S + h.c.", []),
], ids=["delta-contraction", "through-delta", "alt-mixed", "delta-invariant", "alt-invariant"])
def test_su2_contractions(term: str, expected: list) -> None:
    found = [e for e in errors(SU2 + "  " + term + "\n") if "hermitian" not in e[2]]
    assert found == expected


def test_su2_hint_says_what_to_write() -> None:
    model = vs.load_model(text=SU2 + "  - c phi[i] phi[i] S + h.c.\n", name="t.vsm")
    [d] = [d for d in check_model(model) if d.message == NOT_INVARIANT_SU2]
    assert d.hint == ("pair each field with a conjugated one, as in dag(phi[i]) ... phi[i], or contract 2 "
                      "fundamentals through alt[i,j]")
    assert "t.vsm:14:14: error:" in str(d) and "^^^^^^" in str(d)


def test_su3_non_invariant_contractions() -> None:
    assert errors(SU3 + "  - c dag(q[i]) dag(q[i]) S^2 + h.c.\n") == [
        (14, 17, "two conjugated fundamental indices of 'color' are contracted with each other (index 'i'): "
                 "not invariant under SU(3)")]
    assert errors(SU3 + "  - c alt[i,j,k] q[i] q[j] dag(q[k]) S\n") == [
        (14, 7, "alt of 'color' contracts both a fundamental and a conjugated fundamental index (index 'k'): "
                "not invariant under SU(3)")]


def test_adjoint_joined_to_a_fundamental_is_positioned() -> None:
    # reported once, at the second end of the index line (the derivation's own error is not repeated)
    assert errors(SU3 + "  - c dag(q[i]) G[mu,i] d[mu] S\n") == [
        (14, 17, "the index 'i' joins an adjoint and a fundamental index of 'color' ('dag(q)' and 'G')")]


def test_shipped_models_are_invariant() -> None:
    from vertexsmith._resources import shipped_models

    for path in shipped_models():
        model = vs.load_model(path)
        assert not [d for d in check_model(model) if "invariant" in d.message or "symmetry" in d.message], path


# ---------------------------------------------------------------- global U(1) and Z(N)

def test_z2_odd_term_is_an_error_at_its_fields() -> None:
    assert errors(GLOBAL + "  - c S P^3\n") == [(17, 7, "term is odd under the Z(2) symmetry 'darkpar'")]


def test_wrong_global_charge() -> None:
    assert errors(GLOBAL + "  - y P bar(e) PR chi + h.c.\n") == [
        (17, 7, "term breaks the global U(1) symmetry 'lepton': its net charge is ±1"),
        (17, 7, "term is odd under the Z(2) symmetry 'darkpar'"),
    ]


def test_symmetric_terms_pass() -> None:
    assert errors(GLOBAL) == []


def test_z3_charges_add_up_mod_3() -> None:
    text = GLOBAL.replace("darkpar Z(2)", "darkpar Z(3)").replace("scalar S real charge darkpar 1",
                                                                   "scalar S complex charge darkpar 1")
    text = text.replace("1/2 d[mu] S d[mu] S", "dag(d[mu] S) d[mu] S").replace(
        "- y P bar(chi) chi - c S^2 P^2", "- y P bar(chi) chi - c dag(S) S P^2")
    assert errors(text + "  - c S^3 + h.c.\n") == []
    assert errors(text + "  - c S^2 P + h.c.\n") == [(17, 7, "term is of charge 1 or 2 mod 3 under the Z(3) "
                                                               "symmetry 'darkpar'")]


@pytest.mark.parametrize("change, line, column, message", [
    (("darkpar Z(2)", "darkpar SU(2)"), 6, 11, "unknown global symmetry 'SU(2)'"),
    (("scalar P real", "scalar P real charge lepton 1"), 10, 17, "the real field 'P' cannot carry a U(1) charge +1"),
    (("scalar P real", "scalar P real charge darkpar 1/2"), 10, 17, "a charge under Z(2) 'darkpar' is a whole number"),
    (("scalar P real", "scalar P real in darkpar fundamental"), 10, 17,
     "'darkpar' is a global symmetry: its fields carry a charge, not a representation"),
], ids=["kind", "real-u1", "fraction", "representation"])
def test_global_declaration_errors(change: tuple[str, str], line: int, column: int, message: str) -> None:
    with pytest.raises(ModelMeaningError) as info:
        vs.load_model(text=GLOBAL.replace(*change), name="t.vsm")
    assert (info.value.span.line, info.value.span.column, info.value.message) == (line, column, message)


# ---------------------------------------------------------------- the alternating tensor: build errors, hints

@pytest.mark.parametrize("term, column, message, hint", [
    ("- c alt[i] phi[i] S", 11, "'alt' of SU(2) group 'weak' takes 2 fundamental indices, not 1", "write alt[i,j]"),
    ("- c alt[i,i] phi[i] S", 11, "'alt' with the repeated index 'i' is zero",
     "give each index its own name: alt[i,j]"),
    ("- c eps[i,j] phi[i] phi[j] S", 11, "'eps' is the Lorentz epsilon and takes 4 Lorentz indices, not 2",
     "the invariant alternating tensor of SU(2) group 'weak' is written alt[i,j] (eps is the Lorentz epsilon)"),
    ("- c epsilon[i,j] phi[i] phi[j] S", 7, "unknown name 'epsilon'",
     "the invariant alternating tensor of SU(2) group 'weak' is written alt[i,j] (eps is the Lorentz epsilon)"),
], ids=["count", "repeat", "lorentz-eps", "epsilon-name"])
def test_alternating_errors_and_group_aware_hints(term: str, column: int, message: str, hint: str) -> None:
    with pytest.raises(ModelMeaningError) as info:
        vs.load_model(text=SU2 + "  " + term + "\n", name="t.vsm")
    error = info.value
    assert (error.span.line, error.span.column, error.message, error.hint) == (14, column, message, hint)


def test_group_suffixed_epsilon_names_the_group() -> None:
    text = SU2.replace("gauge\n", "gauge\n  color SU(3) boson G strength GS coupling g\n").replace(
        "  vector W\n", "  vector W\n  vector G\n")
    with pytest.raises(ModelMeaningError) as info:
        vs.load_model(text=text + "  - c eps_weak[i,j] phi[i] phi[j] S\n", name="t.vsm")
    assert info.value.hint == ("the invariant alternating tensor of SU(2) group 'weak' is written alt_weak[i,j] "
                               "(eps is the Lorentz epsilon)")


# ---------------------------------------------------------------- diagnostics that misled (issue 9, item 7)

def test_keyword_typo_suggests_the_keyword() -> None:
    with pytest.raises(ModelSyntaxError) as info:
        vs.load_model(text="theory t\nparameters\n  couplng y = 0.1\n", name="t.vsm")
    error = info.value
    assert (error.span.line, error.span.column, error.span.end_column) == (3, 3, 9)
    assert (error.message, error.hint) == ("unknown word 'couplng'", "did you mean 'coupling'?")


@pytest.mark.parametrize("term, column, message, hint_start", [
    ("- c S (dag(phi) phi + dag(phi[i]) phi[j])", 25,
     "this summand has the free indices 'i', 'j', the other summand no free index", "a group index left implied"),
    ("- c S dag(phi[i]) (phi + phi[i] + phi[i])", 22,
     "this summand has an implied group index (contracted inside it), so no free index, the other summands the "
     "free index 'i'", "a group index left implied"),
    ("- c S (dag(phi[i]) phi[i] + dag(phi[j]) phi[k] + dag(phi[k]) phi[k])", 31,
     "this summand has the free indices 'j', 'k', the other summands no free index",
     "every summand of a sum needs the same free indices"),
], ids=["explicit-vs-implied", "implied-odd-one-out", "odd-one-in-the-middle"])
def test_free_index_mismatch_points_at_the_odd_summand(term: str, column: int, message: str,
                                                       hint_start: str) -> None:
    with pytest.raises(ModelMeaningError) as info:
        vs.load_model(text=SU2 + "  " + term + "\n", name="t.vsm")
    error = info.value
    assert (error.span.line, error.span.column, error.message) == (14, column, message)
    assert error.hint.startswith(hint_start)


def test_dag_of_a_derivative_of_a_definition_with_a_constant_says_what_is_wrong() -> None:
    text = """\
theory t
parameters
  coupling c = 0.1
  mass v = 2.0
gauge
  qed U(1) boson A strength F coupling c
fields
  vector A
  scalar s complex charge qed 1
define
  P = v + s
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  dag(D[mu] P) D[mu] P
"""
    model = vs.load_model(text=text, name="t.vsm")
    [d] = [d for d in check_model(model) if d.severity == "error"]
    assert (d.span.line, d.span.column) == (14, 7)
    assert d.message == ("D[mu] inside dag() reaches a part without a field (a constant summand of what it acts "
                         "on) and has nothing to differentiate there")
    assert "dag(D[mu] P)" not in d.hint


def test_hand_rules_accept_the_metric_beside_a_parameter_named_g(tmp_path: Path,
                                                                  capsys: pytest.CaptureFixture[str]) -> None:
    # the model language promises: g[mu,nu] with indices is always the metric, even with a parameter g
    model = tmp_path / "qedg.vsm"
    model.write_text("theory qedg\nparameters\n  coupling g = 0.3\n  mass me = 0.5\ngauge\n"
                     "  qed U(1) boson A strength F coupling g\nfields\n  vector A\n"
                     "  dirac ele mass me charge qed -1\nlagrangian\n  -1/4 F[mu,nu] F[mu,nu]\n"
                     "  bar(ele) (I gamma[mu] D[mu] - me) ele\n", encoding="utf-8")
    hand = tmp_path / "qedg.hand"
    hand.write_text("gauge feynman\n\nvertex bar(ele) ele A : -I g gamma[mu3]\n"
                    "propagator A : -I g[mu,nu] / p^2\n", encoding="utf-8")
    code = main(["compare", str(model), str(hand)])
    out = capsys.readouterr().out
    assert code == 0, out
    assert "equal        propagator A" in out and "equal        vertex bar(ele) ele A" in out


def test_check_prints_the_summary_after_a_meaning_error(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = tmp_path / "broken.vsm"
    path.write_text(SU2 + "  - c phi[i] S\n", encoding="utf-8")
    assert main(["check", str(path)]) == 1
    captured = capsys.readouterr()
    assert f"{path}:14:" in captured.err
    assert captured.out == f"{path}: 1 error, 0 warnings, 0 notes\n"


def test_global_symmetries_in_the_json_output() -> None:
    import json

    from vertexsmith.render import render

    rules = vs.load_model(vs.example("dark_doublet")).derive()
    data = json.loads(render(rules, "json"))
    assert data["symmetries"] == [{"kind": "Z", "name": "darkpar", "order": 2, "soft": False},
                                  {"kind": "U1", "name": "lepton", "order": 1, "soft": False}]
    fields = {f["name"]: f for f in data["fields"]}
    assert fields["N"]["global_charges"] == [{"charge": "1", "symmetry": "lepton"},
                                             {"charge": "1", "symmetry": "darkpar"}]
    assert fields["H"]["global_charges"] == []


SOFT = """\
theory t
parameters
  coupling c = 0.1
  mass m = 2.0
global
  hz Z(2) soft
fields
  scalar A real mass m
  scalar B real mass m charge hz 1
lagrangian
  1/2 d[mu] A d[mu] A + 1/2 d[mu] B d[mu] B - 1/2 m^2 A^2 - 1/2 m^2 B^2
"""


def test_a_soft_symmetry_allows_breaking_below_dimension_four() -> None:
    # A^2 B (dimension 3) breaks hz softly: a note; A^3 B (dimension 4) is an error as before
    model = vs.load_model(text=SOFT + "  - c m A^2 B - c A^3 B\n", name="t.vsm")
    found = [(d.severity, d.span.line, d.span.column, d.message) for d in check_model(model)
             if "'hz'" in d.message]
    assert found == [("note", 12, 9, "term breaks the Z(2) symmetry 'hz' softly (an operator of mass dimension 3)"),
                     ("error", 12, 19, "term is odd under the Z(2) symmetry 'hz'")]


def test_only_soft_is_understood_after_a_global_symmetry() -> None:
    with pytest.raises(ModelMeaningError) as info:
        vs.load_model(text=SOFT.replace("hz Z(2) soft", "hz Z(2) gently"), name="t.vsm")
    error = info.value
    assert (error.span.line, error.span.column, error.message) == (
        6, 11, "unknown word 'gently' after the global symmetry 'hz'")


# ---------------------------------------------------------------- the check against the group action itself

PAIR = """\
theory t
parameters
  coupling g = 0.6
  coupling c = 0.1
gauge
  weak SU(2) boson W strength WS coupling g
fields
  vector W
  scalar phi complex in weak doublet
  scalar chi complex in weak doublet
  scalar S
lagrangian
  -1/4 WS[mu,nu] WS[mu,nu]
  dag(D[mu] phi) D[mu] phi + dag(D[mu] chi) D[mu] chi + 1/2 d[mu] S d[mu] S
"""


def _random_su2(seed: int):
    import numpy as np

    # exp(i theta.sigma/2) = cos(|theta|/2) + i sin(|theta|/2) n.sigma
    pauli = [np.array([[0, 1], [1, 0]]), np.array([[0, -1j], [1j, 0]]), np.array([[1, 0], [0, -1]])]
    theta = np.random.default_rng(seed).normal(size=3)
    angle = float(np.linalg.norm(theta))
    n_sigma = sum(t * s for t, s in zip(theta / angle, pauli))
    return np.cos(angle / 2) * np.eye(2) + 1j * np.sin(angle / 2) * n_sigma


@pytest.mark.parametrize("term", [
    "c phi[i] phi[i] S",
    "c dag(phi[i]) chi[i] S",
    "c alt[i,j] phi[i] chi[j] S",
    "c alt[i,j] phi[i] dag(chi[j]) S",
    "c alt[i,j] dag(phi[i]) dag(chi[j]) S",
    "c phi[i] delta[i,j] chi[j] S",
    "c dag(phi[i]) T[a,i,j] chi[j] dag(chi[k]) T[a,k,l] phi[l]",
    "c dag(phi[i]) T[a,i,j] chi[j] chi[k] T[a,k,l] phi[l]",
    "c alt[i,j] alt[k,l] phi[i] chi[j] dag(phi[k]) dag(chi[l])",
])
def test_the_check_agrees_with_the_group_action(term: str) -> None:
    # the vertex tensor V of the term is invariant when transforming every unconjugated doublet leg
    # with U and every conjugated one with U* leaves it unchanged (common practice, no source)
    import numpy as np

    model = vs.load_model(text=PAIR + "  " + term + "\n", name="t.vsm")
    flagged = any("invariant under SU(2)" in d.message for d in check_model(model))
    [vertex] = [v for v in model.derive().vertices if v.origins == (15,)]
    value = vertex.evaluate(np.zeros((len(vertex.legs), 4)))
    u = _random_su2(7)
    rotated = value
    axis = 0  # scalar legs: one axis per doublet leg, none for the singlet
    for leg in vertex.legs:
        if leg.field in ("phi", "chi"):
            matrix = u.conj() if leg.conjugate else u
            rotated = np.moveaxis(np.tensordot(matrix, rotated, axes=([0], [axis])), 0, axis)
            axis += 1
    invariant = np.allclose(rotated, value)
    assert np.abs(value).max() > 0.01
    assert flagged == (not invariant)
