"""LaTeX output proven by the program it is for: every shipped model's document and snippet
compile with pdflatex, without errors, without overfull boxes wider than 10 pt on an article
page, and with scalable fonts; plus the typesetting choices of names, tags, stars and order.

pdflatex (texlive-latex-base, texlive-latex-recommended, lmodern) comes from the system's
package manager; `.ci/run` installs it when CI is set, elsewhere the compile tests are skipped.
"""

from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import pytest

import vertexsmith as vs
from vertexsmith._resources import shipped_models
from vertexsmith.render import render
from vertexsmith.symbolic import name_latex

PDFLATEX = shutil.which("pdflatex")
MODELS = [path.stem for path in shipped_models()]
_ARTICLE = "\\documentclass{article}\n\\usepackage{amsmath}\n\\begin{document}\n%s\n\\end{document}\n"


def _compile(folder: Path, name: str, text: str) -> str:
    (folder / f"{name}.tex").write_text(text, encoding="utf-8")
    assert PDFLATEX is not None
    done = subprocess.run([PDFLATEX, "-interaction=nonstopmode", "-halt-on-error", f"{name}.tex"], cwd=folder,
                          capture_output=True, text=True, timeout=120)
    log = (folder / f"{name}.log").read_text(encoding="utf-8", errors="replace")
    errors = re.findall(r"^! .*", log, flags=re.M)
    assert done.returncode == 0 and not errors, errors or done.stdout[-2000:]
    too_wide = [float(x) for x in re.findall(r"Overfull \\hbox \(([\d.]+)pt too wide\)", log)]
    assert all(x <= 10 for x in too_wide), f"{name}: overfull boxes {too_wide}"
    return log + done.stdout


@pytest.mark.skipif(PDFLATEX is None, reason="pdflatex is not installed (apt-get install texlive-latex-base "
                                             "texlive-latex-recommended lmodern; .ci/run does it when CI is set)")
@pytest.mark.parametrize("name", MODELS)
def test_document_and_snippet_compile_cleanly(tmp_path: Path, name: str) -> None:
    rules = vs.load_model(vs.example(name)).derive()
    output = _compile(tmp_path, f"{name}_document", render(rules, "latex"))
    assert "mktexpk" not in output and not re.search(r"\.pk\b", output)  # scalable fonts, no bitmaps
    _compile(tmp_path, f"{name}_snippet", _ARTICLE % render(rules, "latex", snippet=True))


def test_names_are_literal_unless_greek_and_a_double_underscore_asks_for_a_subscript() -> None:
    assert name_latex("mu_q") == r"\mathrm{mu\_q}"  # the up-quark mass of qcd, not the Greek mu
    assert name_latex("md_q") == r"\mathrm{md\_q}"
    assert name_latex("gh_G") == r"\mathrm{gh\_G}"
    assert (name_latex("mu"), name_latex("lambda"), name_latex("Lambda")) == (r"\mu", r"\lambda", r"\Lambda")
    assert (name_latex("e"), name_latex("lam")) == ("e", r"\mathrm{lam}")
    assert name_latex("m__u") == "{m}_{u}" and name_latex("theta__W") == r"{\theta}_{W}"
    assert name_latex("\u03bc") == r"{\mu}"  # written with the Greek letter itself


def test_group_tags_stars_and_customary_propagators() -> None:
    ew = vs.load_model(vs.example("electroweak_unbroken")).derive()
    latex = ew.vertex("bar(Q)", "Q", "G").latex
    assert r"_{i_{1,\mathrm{color}} i_{2,\mathrm{color}}}" in latex and r"\delta_{i_{1,\mathrm{weak}} i_{2,\mathrm{weak}}}" in latex
    dark = vs.load_model(vs.example("dark_sector")).derive()
    assert dark.vertex("bar(chi)", "psi", "dag(s)").latex == r"- i {y}^{*} \, P_L"
    # i(pslash + m)/(p^2 - m^2) and -i[g - (1 - xi) p p/(p^2 - xi M^2)]/(p^2 - M^2)
    # (Peskin & Schroeder eqs. 4.118 and 21.xx, from memory)
    assert dark.propagator("chi").latex == r"\frac{i \left(\not{p} + \mathrm{mchi}\right)}{p^{2} - \mathrm{mchi}^{2}}"
    assert dark.propagator("X").latex == (r"\frac{- i}{p^{2} - \mathrm{mX}^{2}} \left[g^{\mu \nu} + \frac{\xi_{X} - 1}"
                                          r"{p^{2} - \xi_{X} \mathrm{mX}^{2}} \, p^{\mu} p^{\nu}\right]")
    unitary = vs.load_model(vs.example("dark_sector")).derive(gauge="unitary")
    assert unitary.propagator("X").latex == (r"\frac{- i}{p^{2} - \mathrm{mX}^{2}} \left[g^{\mu \nu} - "
                                             r"\frac{1}{\mathrm{mX}^{2}} \, p^{\mu} p^{\nu}\right]")
    snippet = render(dark, "latex", snippet=True)
    assert snippet.count(r"\begin{align*}") == len(dark.vertices) + len(dark.propagators)
    assert r"\usepackage{lmodern}" in render(dark, "latex")
