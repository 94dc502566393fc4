"""The diagram census: counts, channels, symmetry factors and fermion signs against known values.

Sources:
- Bhabha scattering in QED: two lowest-order diagrams (s- and t-channel photon exchange); ten at
  one loop and 122 at two loops when self-energy insertions on external lines are left out
  (facts of the trade as stated in common teaching material, from memory). The census finds
  exactly these numbers for QED with one charged lepton, counting at two loops also the 20
  diagrams that contain a tadpole (a fermion loop joined to the rest by a single photon) and the
  diagrams whose fermion loop has an odd number of photons and so vanishes by Furry's theorem
  (8 more, after the tadpoles are gone): 122 = 94 non-vanishing + 8 Furry + 20 tadpole. With
  self-energies on external lines kept the counts are 26 (one loop) and 330 (two loops).
- e+ e- -> mu+ mu-: one tree diagram (Peskin & Schroeder sec. 5.1, from memory).
- phi^4 self-energy: 1/2 at one loop; 1/4 (double scoop), 1/6 (sunset) and 1/4 (two tadpoles in
  a row) at two loops (Peskin & Schroeder sec. 4.4 and Srednicki ch. 14 list these factors;
  checked from memory against the counting rule 1/|automorphisms|).
- g g -> g g: s-, t- and u-channel gluon exchange plus the four-gluon contact term; q qbar -> g g:
  t-, u- and s-channel (Ellis, Stirling & Webber ch. 7, from memory); five-gluon tree amplitude:
  25 diagrams (common practice, no source).
"""

from __future__ import annotations

import json

import pytest

import vertexsmith
from vertexsmith.census import census_to_dict, render_census
from vertexsmith.cli import main
from vertexsmith.diagrams import find_diagrams, line_classes, vanishes_by_charge_conjugation
from vertexsmith.process import parse_process

ONE_LEPTON_QED = """
theory qed1 "QED with one charged lepton"
parameters
  coupling e = 0.3
  mass me = 0.5
gauge
  qed U(1) boson A strength F coupling e fixing lorenz
fields
  vector A
  dirac ele mass me charge qed -1
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  bar(ele) (I gamma[mu] D[mu] - me) ele
"""


@pytest.fixture(scope="module")
def qed1() -> vertexsmith.Rules:
    return vertexsmith.load_model(text=ONE_LEPTON_QED, name="qed1.vsm").derive()


def census(rules, text, loops=0, **options):
    return find_diagrams(rules, parse_process(rules.model, text), loops, **options)


BHABHA = "ele bar(ele) -> ele bar(ele)"


def test_bhabha_tree_has_s_and_t_channel_with_opposite_fermion_signs(qed1):
    found = census(qed1, BHABHA)
    data = census_to_dict(qed1, parse_process(qed1.model, BHABHA), found, 0, {})
    assert [d["channel"] for d in data["diagrams"]] == ["s-channel", "t-channel"]
    # the relative minus sign between the two exchange diagrams (Peskin & Schroeder problem 5.2, from memory)
    assert found[0].sign == -found[1].sign
    assert all(d.symmetry == 1 for d in found)


@pytest.mark.parametrize("loops, kept, without_external", [(1, 26, 10), (2, 330, 122)])
def test_bhabha_loop_counts(qed1, loops, kept, without_external):
    assert len(census(qed1, BHABHA, loops)) == kept
    assert len(census(qed1, BHABHA, loops, external_self_energies=False)) == without_external


def test_bhabha_two_loop_classes(qed1):
    found = census(qed1, BHABHA, 2, external_self_energies=False)
    no_tadpoles = census(qed1, BHABHA, 2, external_self_energies=False, tadpoles=False)
    assert len(no_tadpoles) == 102
    assert sum(1 for d in found if "tadpole" in line_classes(d)) == 20
    assert sum(1 for d in no_tadpoles if vanishes_by_charge_conjugation(qed1, d)) == 8
    assert all(d.symmetry == 1 for d in found)  # no Bhabha diagram has a symmetry


def test_a_second_lepton_adds_its_vacuum_polarisation(shipped):
    rules = shipped("qed").derive()
    # one muon loop in each of the s- and t-channel photons
    assert len(census(rules, BHABHA, 1, external_self_energies=False)) == 12


def test_ee_to_mumu_has_one_tree_diagram(shipped):
    rules = shipped("qed").derive()
    found = census(rules, "ele bar(ele) -> muon bar(muon)")
    assert len(found) == 1 and not found[0].loops


def test_phi4_self_energy_symmetry_factors(shipped):
    rules = shipped("phi4").derive()
    one = census(rules, "phi -> phi", 1)
    assert [str(d.symmetry) for d in one] == ["1/2"]
    two = census(rules, "phi -> phi", 2)
    assert sorted(str(d.symmetry) for d in two) == ["1/4", "1/4", "1/6"]
    sunset = [d for d in two if d.symmetry == pytest.approx(1 / 6)]
    assert len(sunset[0].lines) == 3 and len({(a, b) for a, _, b, _ in sunset[0].lines}) == 1


def test_phi4_one_loop_four_point(shipped):
    # s, t and u bubbles, each 1/2 (Peskin & Schroeder sec. 10.2, from memory)
    rules = shipped("phi4").derive()
    found = census(rules, "phi phi -> phi phi", 1, external_self_energies=False, tadpoles=False)
    assert sorted(str(d.symmetry) for d in found) == ["1/2", "1/2", "1/2"]


@pytest.mark.parametrize("process, count", [("G G -> G G", 4), ("u bar(u) -> G G", 3), ("G G -> G G G", 25),
                                            ("u bar(u) -> d bar(d)", 1), ("u d -> u d", 1)])
def test_qcd_tree_counts(shipped, process, count):
    assert len(census(shipped("qcd").derive(), process)) == count


def test_ghosts_appear_in_the_gluon_self_energy(shipped):
    rules = shipped("qcd").derive()
    found = census(rules, "G -> G", 1, tadpoles=False)
    text = render_census(census_to_dict(rules, parse_process(rules.model, "G -> G"), found, 1, {}))
    assert "gh_G" in text
    # gluon loop 1/2, four-gluon tadpole 1/2, ghost loop 1 with sign -1, two quark loops with sign -1
    factors = sorted((str(d.symmetry), d.sign) for d in found)
    assert factors == [("1", -1), ("1", -1), ("1", -1), ("1/2", 1), ("1/2", 1)]


def test_census_output_is_deterministic_json(qed1):
    process = parse_process(qed1.model, BHABHA)
    first = render_census(census_to_dict(qed1, process, census(qed1, BHABHA, 1), 1, {"tadpoles": True}), "json")
    second = render_census(census_to_dict(qed1, process, census(qed1, BHABHA, 1), 1, {"tadpoles": True}), "json")
    assert first == second
    data = json.loads(first)
    assert data["count"] == 26 and data["format_version"] == 1


# ---------------------------------------------------------------- bad input

@pytest.mark.parametrize("process, message, column", [
    ("ele bar(ele) -> muon bar(tau)", "'tau' is not a field of this model", 26),
    ("ele ele -> muon bar(muon)", "does not conserve the charge of 'qed': -2 in, 0 out", 9),
    ("ele bar(ele) muon bar(muon)", "the process has no '->'", 28),
    ("bar(A) ele -> ele A", "'A' is its own antiparticle", 1),
    ("dag(ele) ele -> A A", "the antiparticle of 'ele' is written 'bar(ele)'", 1),
    ("ele bar(ele) -> A A -> A", "a process has one '->'", 21),
    ("ele, bar(ele) -> A A", "unexpected ','", 4),
    (" -> A A", "no incoming state", 1),
])
def test_bad_processes_are_positioned(shipped, process, message, column):
    with pytest.raises(vertexsmith.UsageError) as err:
        parse_process(shipped("qed"), process)
    text = str(err.value)
    assert message in text
    assert f"process:1:{column}:" in text
    assert "^" in text


def test_unknown_field_lists_the_known_ones(shipped):
    with pytest.raises(vertexsmith.UsageError) as err:
        parse_process(shipped("qed"), "ele bar(ele) -> muon bar(muonn)")
    assert "did you mean 'muon'" in str(err.value) and "A, ele, muon" in str(err.value)


def test_ghosts_are_not_states(shipped):
    with pytest.raises(vertexsmith.UsageError, match="'gh_G' is a ghost, not an external state"):
        parse_process(shipped("qcd"), "gh_G bar(gh_G) -> G G")


def test_a_census_beyond_its_budget_stops_with_a_message(capsys, monkeypatch):
    import vertexsmith.diagrams

    monkeypatch.setattr(vertexsmith.diagrams, "MAX_STEPS", 2000)
    assert main(["diagrams", "qcd", "G G -> G G", "--loops", "2"]) == 2
    assert "the diagram census grew too large" in capsys.readouterr().err


def test_cli_reports_a_process_without_diagram(capsys):
    assert main(["diagrams", "phi4", "phi -> phi phi"]) == 2
    err = capsys.readouterr().err
    assert "'phi -> phi phi' has no diagram at tree level in phi4" in err and "Traceback" not in err


def test_cli_text_and_errors(capsys):
    assert main(["diagrams", "qed", "ele bar(ele) -> muon bar(muon)"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("ele bar(ele) -> muon bar(muon) in qed at tree level: 1 diagram\n")
    assert main(["diagrams", "qed", "ele bar(ele) -> muon bar(tau)"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("process:1:26: error: 'tau' is not a field of this model")
    assert main(["diagrams", "qed", "ele bar(ele) -> muon bar(muon)", "--loops", "3"]) == 2
    assert "--loops takes 0, 1 or 2" in capsys.readouterr().err


def test_outputs_do_not_depend_on_the_hash_seed(tmp_path):
    # common practice, no source: the same input gives the same bytes, whatever PYTHONHASHSEED is
    import os
    import subprocess
    import sys

    outputs = []
    for seed in ("0", "4242"):
        env = dict(os.environ, PYTHONHASHSEED=seed)
        census_run = subprocess.run([sys.executable, "-m", "vertexsmith", "diagrams", "qcd", "G -> G", "--loops", "1",
                                     "--format", "json"], capture_output=True, text=True, env=env, check=True)
        verify_run = subprocess.run([sys.executable, "-m", "vertexsmith", "verify", "qcd", "u bar(u) -> G G",
                                     "--points", "2", "--format", "json"], capture_output=True, text=True, env=env,
                                    check=True)
        outputs.append((census_run.stdout, verify_run.stdout))
    assert outputs[0] == outputs[1]
    assert json.loads(outputs[0][0])["count"] == 9  # with the two tadpoles


def test_closed_fermion_loops_flip_the_sign_at_one_loop(shipped):
    # a closed fermion loop brings a factor -1 (Peskin & Schroeder sec. 4.7, from memory): the two vacuum
    # polarisation diagrams of e+ e- -> mu+ mu- have the opposite sign to the tree diagram, the vertex
    # corrections and boxes (no closed loop) the same sign
    from vertexsmith.diagrams import fermion_loops

    rules = shipped("qed").derive()
    (tree,) = census(rules, "ele bar(ele) -> muon bar(muon)")
    loops = census(rules, "ele bar(ele) -> muon bar(muon)", 1, external_self_energies=False, tadpoles=False)
    assert len(loops) == 6
    closed = [d for d in loops if fermion_loops(rules, d)]
    assert len(closed) == 2
    assert all(d.sign == -tree.sign for d in closed)
    assert all(d.sign == tree.sign for d in loops if d not in closed)
