"""The Majorana and charge-conjugation structures in every export, each read by the program it is for.

- FORM: models/leptoquark.vsm exported, a driver reads the vertex S -> ell u along its fermion flow
  the way the file's header says (vsC(j) -> gi_(j), v spinor at the column end) and traces
  sum |M|^2 = yl^2 Tr[(pu + mu) PR (pe - me) PL] x colours = 2 yl^2 pu.pe per S colour (common
  practice, no source; v = C ubar^T, Denner, Eck, Hahn & Kuebbeck, Nucl. Phys. B 387 (1992) 467,
  from memory). Skipped without FORM.
- LaTeX: the document with C compiles (pdflatex; skipped without it).
- Python module (numpy only) and JSON (validated by jsonschema): C and the flow are stated.
"""

from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

import vertexsmith as vs
from vertexsmith.export import export_rules
from vertexsmith.render.json import load_schema

FORM = shutil.which("form")
PDFLATEX = shutil.which("pdflatex")

_DRIVER = """#-
#include rules.frm
Vectors pu, pe;
Indices c2=3, c3=3;
Local M2 = (g_(1,pu) + mux1*gi_(1)) * vtx(bar(ell),bar(ux1),S,pe,pu,-pe-pu,c2,c3,1)
         * (g_(1,pe) - me*gi_(1)) * (-i_*yl*(gi_(1) - g5_(1))/2) * d_(c3,c2);
#call vsrules()
id vsC(1) = gi_(1);
trace4,1;
.sort
Local DIFF = M2 - 3*2*yl^2*pu.pe;
print;
.end
"""


@pytest.fixture(scope="module")
def leptoquark() -> vs.Rules:
    return vs.load_model(vs.example("leptoquark")).derive(gauge="feynman")


@pytest.mark.skipif(FORM is None, reason="FORM is not installed (apt-get install form)")
def test_form_reads_a_chain_with_c_along_its_flow(tmp_path: Path, leptoquark: vs.Rules) -> None:
    text = export_rules(leptoquark, "form")
    assert "\nFunctions vsC;\n" in text
    assert "* spin line j1: row bar(ux1) (leg 2), column bar(ell) (leg 1)\n" in text
    (tmp_path / "rules.frm").write_text(text, encoding="utf-8")
    (tmp_path / "driver.frm").write_text(_DRIVER, encoding="utf-8")
    assert FORM is not None
    done = subprocess.run([FORM, "-q", "driver.frm"], cwd=tmp_path, capture_output=True, text=True, timeout=120)
    out = " ".join(done.stdout.split())
    assert done.returncode == 0, out + done.stderr
    assert "DIFF = 0;" in out and "M2 = 6*pu.pe*yl^2;" in out, out


def test_form_without_c_declares_no_vsc() -> None:
    text = export_rules(vs.load_model(vs.example("qed")).derive(gauge="feynman"), "form")
    assert "vsC" not in text


@pytest.mark.skipif(PDFLATEX is None, reason="pdflatex is not installed")
def test_latex_with_c_compiles(tmp_path: Path, leptoquark: vs.Rules) -> None:
    text = export_rules(leptoquark, "latex")
    assert r"\left[P_R \mathcal{C}\right]_{2 1}" in text
    (tmp_path / "lq.tex").write_text(text, encoding="utf-8")
    assert PDFLATEX is not None
    done = subprocess.run([PDFLATEX, "-interaction=nonstopmode", "-halt-on-error", "lq.tex"], cwd=tmp_path,
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stdout[-2000:]


def test_python_module_states_c_and_evaluates_it(tmp_path: Path, leptoquark: vs.Rules,
                                                 rng: np.random.Generator) -> None:
    path = tmp_path / "lq_rules.py"
    path.write_text(export_rules(leptoquark, "python"), encoding="utf-8")
    # numpy only: run it in a fresh interpreter that cannot import vertexsmith's sympy-side code
    probe = ("import sys, numpy as np; sys.modules['sympy'] = None; sys.path.insert(0, sys.argv[1]); "
             "import lq_rules as m; f = m.find_vertex('bar(ell)', 'bar(u)', 'S'); "
             "p = np.zeros((3, 4)); print(repr(m.CONVENTIONS['charge_conjugation'][:25])); "
             "print(np.array2string(f(*p)[:, 0, :, 0].round(12).ravel(), separator=','))")
    done = subprocess.run(["python", "-c", probe, str(tmp_path)], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    first, second = done.stdout.splitlines()[0], " ".join(done.stdout.splitlines()[1:])
    assert first == "'cc(psi) = C bar(psi)^T an'"
    expected = leptoquark.vertex("bar(ell)", "bar(u)", "S").evaluate(np.zeros((3, 4)))[:, 0, :, 0]
    numbers = np.array(eval(second))  # noqa: S307 - our own output
    assert np.allclose(numbers, expected.ravel())


def test_json_carries_c_and_the_majorana_propagator_kind() -> None:
    jsonschema = pytest.importorskip("jsonschema")
    for name in ("leptoquark", "dark_majorana"):
        rules = vs.load_model(vs.example(name)).derive(gauge="feynman")
        document = json.loads(export_rules(rules, "json"))
        jsonschema.Draft202012Validator(load_schema()).validate(document)
        legs = document["conventions"]["fermion_legs"]
        if name == "leptoquark":
            assert "cc(psi) = C bar(psi)^T" in legs
            texts = {v["factor"]["text"] for v in document["vertices"]}
            assert "(-I*yl)*delta_color[i2,i3]*chain(1, 2, CC*PL)" in texts
        else:
            assert "Majorana legs follow a fermion flow" in legs
            assert {p["field"]: p["kind"] for p in document["propagators"]}["chi"] == "majorana"
