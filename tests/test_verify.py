"""`vertexsmith verify`: the identities pass on correct rules and catch planted errors.

Planted errors (the identities are textbook facts: Peskin & Schroeder sec. 5.5 and ch. 16 for
Ward identities with the other gauge bosons physical, from memory):
- a three-gluon term of the wrong sign (added by hand beside the field strength) breaks the Ward
  identity of g g -> g g;
- scalar QED without its seagull (cancelled by hand) breaks the Ward identity of
  phi dag(phi) -> A A (Peskin & Schroeder problem 9.1, from memory).
The Standard Model's planted errors (a changed WWZ coupling, a wrong Goldstone coupling) wait for
the Standard Model itself (issue 11) and are not tested here.
"""

from __future__ import annotations

import json

import pytest

import vertexsmith
from vertexsmith._resources import shipped_models
from vertexsmith.cli import main
from vertexsmith.verify import default_processes, verify_model

WRONG_THREE_GLUON = "  2 gs f[a,b,c] d[mu] G[nu,a] G[mu,b] G[nu,c]\n"
NO_SEAGULL = "  - e^2 A[mu] A[mu] dag(phi) phi\n"


def planted(name: str, extra: str) -> vertexsmith.Model:
    text = vertexsmith.example(name).read_text() + extra
    return vertexsmith.load_model(text=text, name=f"{name}_planted.vsm")


def test_the_planted_three_gluon_term_flips_the_vertex(tmp_path):
    import numpy as np

    right = vertexsmith.load_model(vertexsmith.example("qcd")).derive().vertex("G", "G", "G")
    wrong = planted("qcd", WRONG_THREE_GLUON).derive().vertex("G", "G", "G")
    p = np.array([[1.0, 0.2, 0.3, 0.4], [0.5, -0.1, 0.7, 0.2], [-1.5, -0.1, -1.0, -0.6]])
    assert np.allclose(wrong.evaluate(p), -right.evaluate(p))


def test_wrong_sign_three_gluon_vertex_fails_the_ward_identity():
    # q qbar -> g g has one three-gluon vertex; g g -> g g has two or none per diagram, so it cannot see the sign
    processes = ["u bar(u) -> G G"]
    report = verify_model(planted("qcd", WRONG_THREE_GLUON), processes, points=3)
    failed = {(c.process, c.identity) for c in report.failed}
    assert {("u bar(u) -> G G", "Ward identity, state 3 (G)"), ("u bar(u) -> G G", "Ward identity, state 4 (G)")} <= failed
    # the correct model passes the same checks
    assert not verify_model(vertexsmith.load_model(vertexsmith.example("qcd")), processes, points=3).failed


def test_dropped_seagull_fails_the_ward_identity():
    model = planted("scalar_qed", NO_SEAGULL)
    rules = model.derive()
    assert not any(sorted(v.labels) == ["A", "A", "dag(phi)", "phi"] for v in rules.vertices)
    report = verify_model(model, ["phi dag(phi) -> A A"], points=3)
    assert {c.identity for c in report.failed} >= {"Ward identity, state 3 (A)", "Ward identity, state 4 (A)"}


def test_cli_exit_status_names_the_failing_identity(tmp_path, capsys):
    path = tmp_path / "noseagull.vsm"
    path.write_text(vertexsmith.example("scalar_qed").read_text() + NO_SEAGULL)
    assert main(["verify", str(path), "phi dag(phi) -> A A", "--points", "2"]) == 1
    captured = capsys.readouterr()
    assert "FAILED" in captured.out and "Ward identity, state 3 (A) in phi dag(phi) -> A A" in captured.out
    assert "3 identities failed: Lorentz invariance, Ward identity" in captured.err


@pytest.mark.parametrize("path", shipped_models(), ids=lambda p: p.stem)
def test_every_shipped_model_passes_its_default_set(path):
    report = verify_model(vertexsmith.load_model(path), points=2)
    assert report.checks
    assert not report.failed, [(c.process, c.identity, c.deviation) for c in report.failed]


def test_default_set_of_qed():
    rules = vertexsmith.load_model(vertexsmith.example("qed")).derive()
    # one process per crossing class: photon pair, Moller-Bhabha, e mu, and mu mu
    assert default_processes(rules) == ["A A -> ele bar(ele)", "A A -> muon bar(muon)", "ele ele -> ele ele",
                                        "ele bar(ele) -> muon bar(muon)", "muon muon -> muon muon"]
    assert default_processes(rules, max_mass=0.01) == ["A A -> ele bar(ele)", "ele ele -> ele ele"]


def test_massive_vector_gets_unitary_gauge_and_growth_checks():
    report = verify_model(vertexsmith.load_model(vertexsmith.example("dark_sector")), ["chi bar(chi) -> X X"],
                          points=3)
    identities = {c.identity: c for c in report.checks}
    assert identities["unitary gauge"].verdict == "pass"
    growth = identities["high-energy growth"]
    assert growth.verdict == "pass" and "largest single diagram ~ s^2.00" in growth.detail


def test_json_output(capsys):
    assert main(["verify", "qed", "ele bar(ele) -> muon bar(muon)", "--format", "json", "--points", "2"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["passed"] and data["model"] == "qed"
    assert {c["identity"] for c in data["checks"]} >= {"Lorentz invariance", "gauge-parameter independence"}


def test_bad_input_is_reported_without_traceback(capsys):
    assert main(["verify", "qed", "ele bar(ele) -> muon bar(tau)"]) == 2
    assert "process:1:26: error: 'tau' is not a field of this model" in capsys.readouterr().err
    assert main(["verify", "qed", "--points", "0"]) == 2
    assert "--points takes a number from 1 to 10000" in capsys.readouterr().err


def test_a_wrong_contact_term_makes_massive_vector_production_grow():
    # tree unitarity (Lee, Quigg & Thacker, Phys. Rev. D 16 (1977) 1519, from memory): with the X X s s*
    # contact term of the covariant derivative the longitudinal growth of single diagrams cancels; with it
    # changed, the sum grows like the single diagrams (the analogue of a changed WWZ coupling)
    text = vertexsmith.example("dark_sector").read_text()
    line = next(line for line in text.splitlines() if "dag(D[mu] s) D[mu] s" in line)
    wrong = vertexsmith.load_model(text=text.replace(line, line + "\n  + gx^2 X[mu] X[mu] dag(s) s"), name="w.vsm")
    right = vertexsmith.load_model(vertexsmith.example("dark_sector"))
    for model, verdict in ((right, "pass"), (wrong, "FAIL")):
        (growth,) = [c for c in verify_model(model, ["s dag(s) -> X X"], points=3).checks
                     if c.identity == "high-energy growth"]
        assert growth.verdict == verdict
        assert "largest single diagram ~ s^2.00" in growth.detail


RESONANCE = """\
theory pole "a massless pair and a scalar resonance (invented numbers)"
parameters
  coupling y = 0.7
  mass ms = 10.0
fields
  dirac f
  scalar s mass ms
lagrangian
  bar(f) I gamma[mu] d[mu] f
  1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2
  - y s bar(f) f
"""


def test_test_points_stay_off_an_s_channel_pole() -> None:
    # massless f fbar -> f fbar through s: at sqrt(s) = ms the s-channel propagator is infinite, and the test
    # points once sat exactly there (the energy was the largest mass), so crossing came out nan
    report = verify_model(vertexsmith.load_model(text=RESONANCE, name="pole.vsm"))
    assert not report.failed
    assert all(check.deviation == check.deviation for check in report.checks)  # no nan
