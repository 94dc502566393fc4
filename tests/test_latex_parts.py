"""The LaTeX of a multi-part vertex, part by part, against `vertex.parts`.

Compiling a document proves it is LaTeX, not that it says the right thing: a later part of a
vertex printed with the wrong sign compiles just as well. Source of the values: the parts
themselves (the engine's canonical form, checked against textbooks elsewhere).
"""

from __future__ import annotations

import pytest

import vertexsmith as vs



def _align_blocks(document: str) -> list[list[str]]:
    blocks, current = [], None
    for line in document.splitlines():
        if line.startswith(r"\begin{align*}"):
            current = []
        elif line.startswith(r"\end{align*}"):
            blocks.append(current)
            current = None
        elif current is not None:
            current.append(line.removesuffix(r" \\").strip())
    return blocks


@pytest.mark.parametrize("name", ["qcd", "su2_yang_mills", "dark_dipole", "contact", "dark_su2"])
def test_every_part_of_a_multi_part_latex_vertex_keeps_its_sign(name: str) -> None:
    # The LaTeX of a vertex prints one line per coupling part; the sign in front of each line must be the
    # sign of that part's coupling in vertex.parts (the four-gluon vertex: three parts, each -i g^2 f f [...]).
    # A later part printed with the wrong sign once went unnoticed: the LaTeX was only compiled.
    from vertexsmith.render.latex import render_snippet

    rules = vs.load_model(vs.example(name)).derive()
    blocks = _align_blocks(render_snippet(rules))
    checked = 0
    for vertex, block in zip(rules.vertices, blocks):
        lines = [line.lstrip("&").removeprefix(r"\qquad").removeprefix(r"\quad").strip() for line in block[1:]]
        if len(vertex.parts) < 2 or len(lines) != len(vertex.parts):
            continue  # one part, or a part spread over several lines
        for part, line in zip(vertex.parts, lines):
            negative = part.coupling.could_extract_minus_sign()
            assert line.startswith("-") == negative, (vertex.labels, line)
        checked += 1
    if name in ("qcd", "su2_yang_mills"):
        assert checked >= 1  # the four-boson vertex at least
