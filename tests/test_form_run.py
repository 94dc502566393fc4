"""The FORM export, proven by running FORM on it.

A driver builds e+e- -> mu+mu- from the QED export and u ubar -> d dbar from the QCD export,
sums over spins (traces) and colours (the Fierz identity), and subtracts the textbook |M|^2,
in R_xi gauge with the gauge parameter left symbolic: the difference must be 0 and the result
free of xi. FORM is installed by the system's package manager (`.ci/run` does it when CI is
set); without it these tests are skipped.
"""

from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import pytest

import vertexsmith as vs
from vertexsmith.export import export_rules

FORM = shutil.which("form")
pytestmark = pytest.mark.skipif(FORM is None, reason="FORM is not installed (apt-get install form; .ci/run does "
                                                     "it when CI is set)")

# The spin sums: Tr[(p2slash - m) G (p1slash + m) Gbar] Tr[(k1slash + M) G (k2slash - M) Gbar] x D Dbar.
# Gbar = gamma0 G^dagger gamma0: for a single gamma matrix (times generators) the same matrix with
# i_ -> -i_ and the colour indices of the generator swapped, which the driver does by hand. After
# the traces: q = p1 + p2, p2 = k1 + k2 - p1, on-shell conditions, and 1/q.q = sinv.
_DRIVER = """#-
#include rules.frm
Vectors k1, k2, q;
Indices al, be, ga, de, c1=3, c2=3, c3=3, c4=3, g1=8, g2=8, g3=8, g4=8, w1=3, w2=3, w3=3, w4=3, wa=8;
Symbols sinv;
Local GEB = {vertex_in_conj};
Local GMB = {vertex_out_conj};
Local DB = {propagator_conj};
#call vsrules()
.sort
Multiply replace_(i_,-i_);
.sort
Drop GEB, GMB, DB;
Local M2 = (g_(1,p2) - {m_in}*gi_(1)) * {vertex_in} * (g_(1,p1) + {m_in}*gi_(1)) * GEB
         * (g_(2,k1) + {m_out}*gi_(2)) * {vertex_out} * (g_(2,k2) - {m_out}*gi_(2)) * GMB
         * {propagator} * DB;
Local DIFF = M2 - ({expected});
#call vsrules()
trace4,1;
trace4,2;
{colour}
id {m_in} = 0;
id den(q.q) = sinv;
.sort
id q = p1 + p2;
id p2 = k1 + k2 - p1;
.sort
id p1.p1 = 0;
id k1.k1 = {m_out}^2;
id k2.k2 = {m_out}^2;
id k1.k2 = p1.k1 + p1.k2 - {m_out}^2;
print;
.end
"""


def _run_form(tmp_path: Path, rules_text: str, driver: str) -> str:
    (tmp_path / "rules.frm").write_text(rules_text, encoding="utf-8")
    (tmp_path / "driver.frm").write_text(driver, encoding="utf-8")
    assert FORM is not None
    done = subprocess.run([FORM, "-q", "driver.frm"], cwd=tmp_path, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stdout + done.stderr
    return " ".join(done.stdout.split())


def _ee_to_mumu() -> dict[str, str]:
    # Peskin & Schroeder eq. 5.10 (from memory), massless electron, massive muon:
    # 1/4 sum |M|^2 = 8 e^4 / s^2 [(p.k)(p'.k') + (p.k')(p'.k) + m_mu^2 p.p']
    return {"vertex_in": "vtx(bar(ele),ele,A,p2,p1,-q,al,1)", "vertex_in_conj": "vtx(bar(ele),ele,A,p2,p1,-q,ga,1)",
            "vertex_out": "vtx(bar(muon),muon,A,k1,k2,q,be,2)",
            "vertex_out_conj": "vtx(bar(muon),muon,A,k1,k2,q,de,2)",
            "propagator": "prop(A,q,al,be)", "propagator_conj": "prop(A,q,ga,de)", "m_in": "me", "m_out": "mmu",
            "expected": "4*8*e^4*sinv^2*(p1.k1*p2.k2 + p1.k2*p2.k1 + mmu^2*p1.p2)", "colour": ""}


def test_ee_to_mumu_from_the_export_is_the_textbook_result_in_r_xi_gauge(tmp_path: Path) -> None:
    rules = export_rules(vs.load_model(vs.example("qed")).derive(gauge="xi"), "form")
    out = _run_form(tmp_path, rules, _DRIVER.format(**_ee_to_mumu()))
    assert "DIFF = 0;" in out, out
    squared = out[out.index("M2 ="):out.index("DIFF =")]
    assert "e^4" in squared and "xiA" not in squared  # the gauge parameter cancelled


def test_quark_annihilation_has_colour_factor_two(tmp_path: Path) -> None:
    # u ubar -> d dbar by one gluon: the QED result with e -> gs times the colour sum
    # sum |T^a_ij T^a_kl|^2 = Tr(T^a T^b) Tr(T^a T^b) = 2 for SU(3) (common practice, no source)
    qcd = vs.load_model(vs.example("qcd")).derive(gauge="xi")
    text = export_rules(qcd, "form")
    assert "ux1 = u," in text  # the field u is renamed: u is the Mandelstam variable
    driver = _DRIVER.format(
        vertex_in="vtx(bar(ux1),ux1,G,p2,p1,-q,al,c2,c1,g1,1)",
        vertex_in_conj="vtx(bar(ux1),ux1,G,p2,p1,-q,ga,c1,c2,g3,1)",
        vertex_out="vtx(bar(d),d,G,k1,k2,q,be,c3,c4,g2,2)", vertex_out_conj="vtx(bar(d),d,G,k1,k2,q,de,c4,c3,g4,2)",
        propagator="prop(G,q,al,be,g1,g2)", propagator_conj="prop(G,q,ga,de,g3,g4)", m_in="muq", m_out="mdq",
        expected="2*32*gs^4*sinv^2*(p1.k1*p2.k2 + p1.k2*p2.k1 + mdq^2*p1.p2)",
        # T^a_ij T^a_kl = 1/2 (d_il d_kj - 1/N d_ij d_kl) (Peskin & Schroeder eq. 15.x Fierz form, from memory)
        colour="repeat;\n  id Tcolor(wa?,w1?,w2?)*Tcolor(wa?,w3?,w4?) = 1/2*(d_(w1,w4)*d_(w3,w2) - 1/3*d_(w1,w2)*d_(w3,w4));"
               "\nendrepeat;")
    out = _run_form(tmp_path, text, driver)
    assert "DIFF = 0;" in out, out
    squared = out[out.index("M2 ="):out.index("DIFF =")]
    assert "gs^4" in squared and "xiG" not in squared


def test_commuting_vertex_functions_would_break_the_spin_line(tmp_path: Path) -> None:
    # the reason vtx and prop are non-commuting: declared commuting, FORM reorders the product
    # before substituting and the same driver gets a wrong, gauge-dependent answer
    text = export_rules(vs.load_model(vs.example("qed")).derive(gauge="xi"), "form")
    assert "\nFunctions vtx, prop;\n" in text
    out = _run_form(tmp_path, text.replace("\nFunctions vtx, prop;\n", "\nCFunctions vtx, prop;\n"),
                    _DRIVER.format(**_ee_to_mumu()))
    assert "DIFF = 0;" not in out and "xiA" in out
