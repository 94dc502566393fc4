"""The HTML report page without a browser: well-formed, complete, escaped, deterministic; the command."""

from __future__ import annotations

import json
import re
import xml.dom.minidom
from html.parser import HTMLParser

import pytest

import vertexsmith as vs
from vertexsmith._resources import shipped_models
from vertexsmith.cli import main
from vertexsmith.render.html import render
from vertexsmith.render.mathml import latex_to_mathml
from vertexsmith.render.svg import leg_style

VOID = {"meta", "br", "input", "link", "img", "hr", "col", "wbr", "source", "area", "base", "embed", "track"}
SVG_LEAVES = {"path", "polygon", "circle", "line", "rect"}
# the trade's line styles (common practice, no source): what each leg kind must be drawn as
EXPECTED_STYLE = {"scalar": "dashed", "dirac": "fermion", "majorana": "fermion", "ghost": "dotted"}


def expected_style(leg) -> str:
    if leg.kind == "vector":
        # gluon-like (adjoint of SU(N >= 3)) curly, everything else wavy
        return "curly" if any(rep == "adjoint" and dim >= 8 for _, rep, dim in leg.representations) else "wavy"
    return EXPECTED_STYLE[leg.kind]


class _Balance(HTMLParser):
    """Every element closed in order (void elements excepted); records the vertex sections."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.errors: list[str] = []
        self.sections: list[dict[str, str | None]] = []

    def handle_starttag(self, tag, attrs):
        if tag == "section":
            self.sections.append(dict(attrs))
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        if tag == "section":
            self.errors.append("empty section")

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes <{self.stack[-1] if self.stack else None}> at {self.getpos()}")
        else:
            self.stack.pop()


@pytest.fixture(scope="module")
def qcd():
    model = vs.load_model(vs.example("qcd"))
    return model, model.derive()


def _page_parts(page: str) -> list[str]:
    return re.findall(r'<section class="card vertex".*?</section>', page, flags=re.S)


@pytest.mark.parametrize("path", shipped_models(), ids=lambda p: p.stem)
def test_every_shipped_model_gives_a_well_formed_complete_page(path):
    rules = vs.load_model(path).derive()
    page = render(rules)
    parser = _Balance()
    parser.feed(page)
    parser.close()
    assert parser.errors == [] and parser.stack == []
    xml.dom.minidom.parseString(page.encode("utf-8"))  # also well-formed XML (polyglot page)
    vertices = _page_parts(page)
    assert len(vertices) == len(rules.vertices)
    for vertex, card in zip(rules.vertices, vertices):
        legs = json.loads(re.search(r'data-legs="([^"]*)"', card)[1].replace("&quot;", '"'))
        assert legs == [[leg.field, leg.label] for leg in vertex.legs]
        styles = re.findall(r'<g class="leg" data-style="(\w+)"', card)
        assert styles == [expected_style(leg) for leg in vertex.legs]
        assert card.count("<math") == 1
    assert page.count('class="card propagator"') == len(rules.propagators)
    assert "http://" not in page.replace("http://www.w3.org/", "") and "https://" not in page  # nothing fetched


def test_the_page_is_byte_identical_across_renders(qcd):
    _, rules = qcd
    assert render(rules) == render(rules)


def test_the_summary_lists_fields_parameters_and_conventions(qcd):
    model, rules = qcd
    page = render(rules)
    summary = page.split('<h2 id="checks">')[0]
    for name in model.fields:
        assert f"<td><code>{name}</code></td>" in summary
    for name in model.parameters:
        assert f"<td><code>{name}</code></td>" in summary
    assert "<td>1.2177</td>" in summary  # gs, the model's own number
    # the spectrum: each quark's mass parameter evaluated (mu_q = 0.00216, md_q = 0.00467 in qcd.vsm)
    fields = summary.split("<h3>Gauge groups</h3>")[0]
    assert [re.search(r"<td>([0-9.]+)</td><td>(?:&#8211;|[a-z])", row)[1] for row in
            re.findall(r"<tr><td><code>[ud]</code>.*?</tr>", fields)] == [str(model.parameters["mu_q"].value.real),
                                                                         str(model.parameters["md_q"].value.real)]
    assert "epsilon^0123 = -1" in summary and "(+,-,-,-)" in summary
    assert "The checks were not run" in page


def test_check_results_are_shown_with_their_lines():
    # a kinetic term twice the canonical one (a warning) and a dimension-5 operator (a note)
    model = vs.load_model(text="theory t \"a test\"\nparameters\n  coupling c = 0.1\nfields\n  scalar phi real\n"
                               "lagrangian\n  d[mu] phi d[mu] phi\n  - c phi^5\n", name="t.vsm")
    rules = model.derive()
    diagnostics = model.check()
    assert diagnostics, "the model should give the checker something to say"
    page = render(rules, diagnostics=diagnostics)
    checks = page.split('<h2 id="checks">')[1].split('<h2 id="propagators">')[0]
    for d in diagnostics:
        assert f"line {d.span.line}, column {d.span.column}" in checks
        assert d.message.replace("'", "&#x27;") in checks


def test_text_from_the_model_is_escaped():
    model = vs.load_model(text='theory odd "a <b>bold</b> & <script>x()</script> model"\n'
                               "fields\n  scalar phi real\nlagrangian\n  1/2 d[mu] phi d[mu] phi - 1/24 phi^4\n")
    page = render(model.derive())
    assert "<script>x()" not in page and "&lt;script&gt;x()" in page
    xml.dom.minidom.parseString(page.encode("utf-8"))


def test_factors_are_mathml_with_a_visible_feynman_slash():
    mathml = latex_to_mathml(r"\frac{i m + i \not{p}}{p^{2} - m^{2}}")
    assert mathml.startswith("<math") and "<mfrac>" in mathml
    assert '<mi mathvariant="normal">/</mi>' in mathml and "&#x029F8;" not in mathml


@pytest.mark.parametrize(("kind", "reps", "style"), [
    ("scalar", (), "dashed"), ("dirac", (), "fermion"), ("ghost", (("c", "adjoint", 8),), "dotted"),
    ("vector", (), "wavy"), ("vector", (("weak", "adjoint", 3),), "wavy"),
    ("vector", (("color", "adjoint", 8),), "curly"), ("vector", (("color", "adjoint", 15),), "curly"),
])
def test_line_styles(kind, reps, style):
    # common practice, no source: dashed scalars, arrowed fermions, wavy photons/W/Z, curly gluons, dotted ghosts
    assert leg_style(kind, reps) == style


def test_fermion_arrows_follow_the_particle(qcd):
    # a psi leg's particle flows into the vertex, a bar(psi) leg's out of it (common practice, no source)
    _, rules = qcd
    vertex = rules.vertex("bar(u)", "u", "G")
    (card,) = [c for c in _page_parts(render(rules)) if "<code>bar(u) u G</code>" in c]
    centre_x, centre_y = 150.0, 115.0
    for leg in vertex.legs[:2]:
        group = re.search(rf'data-label="{re.escape(leg.label)}">(.*?)</g>', card, flags=re.S)[1]
        tip = [float(v) for v in re.search(r'class="arrow" points="([-\d.]+),([-\d.]+)', group).groups()]
        back = [float(v) for v in re.search(r'class="arrow" points="[-\d., ]+? ([-\d.]+),([-\d.]+) ', group).groups()]
        tip_distance = ((tip[0] - centre_x) ** 2 + (tip[1] - centre_y) ** 2) ** 0.5
        back_distance = ((back[0] - centre_x) ** 2 + (back[1] - centre_y) ** 2) ** 0.5
        assert (tip_distance < back_distance) == (not leg.conjugate), leg.label


def test_report_command_writes_the_page(tmp_path, capsys):
    target = tmp_path / "qed.html"
    assert main(["report", "qed", "-o", str(target)]) == 0
    page = target.read_text(encoding="utf-8")
    assert page.count('class="card vertex"') == len(vs.load_model(vs.example("qed")).derive().vertices)
    assert "The checker found nothing" in page


def test_report_command_selection_and_values(tmp_path):
    target = tmp_path / "ew.html"
    assert main(["report", "electroweak_unbroken", "--no-checks", "--field", "G", "--set", "gs=1.5",
                 "-o", str(target)]) == 0
    page = target.read_text(encoding="utf-8")
    rules = vs.load_model(vs.example("electroweak_unbroken")).derive()
    expected = sum(1 for v in rules.vertices if "G" in [leg.field for leg in v.legs])
    assert page.count('class="card vertex"') == expected > 0
    assert "<td>1.5</td>" in page


def test_report_command_unknown_field_gets_a_suggestion(tmp_path, capsys):
    assert main(["report", "qcd", "--field", "gh_g", "-o", str(tmp_path / "x.html")]) == 2
    assert "did you mean 'gh_G'" in capsys.readouterr().err
    assert not (tmp_path / "x.html").exists()


def test_the_page_does_not_depend_on_the_hash_seed(tmp_path):
    # deterministic output (common practice, no source): two processes, two hash seeds, one page
    import os
    import subprocess
    import sys
    from pathlib import Path

    source_root = str(Path(vs.__file__).resolve().parents[1])
    pages = []
    for seed in ("1", "2"):
        target = tmp_path / f"page{seed}.html"
        env = dict(os.environ, PYTHONHASHSEED=seed,
                   PYTHONPATH=os.pathsep.join([source_root, os.environ.get("PYTHONPATH", "")]))
        done = subprocess.run([sys.executable, "-m", "vertexsmith", "report", "dark_doublet", "-q", "-o", str(target)],
                              env=env, capture_output=True, text=True, timeout=300, check=False)
        assert done.returncode == 0, done.stderr
        pages.append(target.read_bytes())
    assert pages[0] == pages[1] and pages[0].count(b'class="card vertex"') > 10
