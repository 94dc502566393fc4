"""Notebook and terminal display of rules, vertices and propagators; progress bars."""

from __future__ import annotations

import io
import re
import xml.dom.minidom

import pytest
from rich.console import Console

import vertexsmith as vs
from vertexsmith import progress
from vertexsmith.render.mathml import latex_to_mathml

MODELS = ("qed", "qcd", "electroweak_unbroken")


@pytest.fixture(scope="module", params=MODELS)
def rules(request):
    return vs.load_model(vs.example(request.param)).derive()


def _rich_text(renderable, width=200) -> str:
    console = Console(file=io.StringIO(), width=width, color_system=None, force_terminal=False)
    console.print(renderable)
    return console.file.getvalue()


def test_rules_html_shows_every_vertex_and_propagator(rules):
    html = rules._repr_html_()
    xml.dom.minidom.parseString(html.encode("utf-8"))  # one well-formed fragment
    for k, vertex in enumerate(rules.vertices, 1):
        assert f"<code>{' '.join(vertex.labels)}</code>" in html
        assert latex_to_mathml(vertex.latex, display=True) in html
    assert html.count('class="card vertex"') == len(rules.vertices)
    assert html.count('class="card propagator"') == len(rules.propagators)
    assert html.count("<svg") == len(rules.vertices) + len(rules.propagators)


def test_rules_latex_is_one_table_with_every_vertex_and_propagator(rules):
    latex = rules._repr_latex_()
    assert latex.startswith("$") and latex.endswith("$") and latex.count("\\begin{array}") == 1
    for vertex in rules.vertices:
        label = " ".join(vertex.labels).replace("_", "\\_")
        assert f"\\text{{{label}}} & {vertex.latex} \\\\" in latex
    for p in rules.propagators:
        assert f"\\text{{{p.field.replace('_', chr(92) + '_')}}} & {p.latex} \\\\" in latex
    # every underscore in text mode is escaped (a bare one stops a LaTeX compiler)
    assert not re.search(r"\\text\{[^}]*(?<!\\)_", latex)


def test_vertex_and_propagator_show_their_legs_and_factor(rules):
    for vertex in rules.vertices:
        html = vertex._repr_html_()
        assert html.count('class="leg"') == len(vertex.legs) and vertex.labels[0] in html
        latex = vertex._repr_latex_()
        assert latex.endswith(vertex.latex + "$") and latex.count("p_{") >= len(vertex.legs)
    for p in rules.propagators:
        assert latex_to_mathml(p.latex, display=True) in p._repr_html_()
        assert p._repr_latex_().endswith(p.latex + "$")


def test_rich_tables_list_every_vertex(rules):
    text = _rich_text(rules)
    rows = [line for line in text.splitlines() if re.match(r"^\s*\d+ │", line)]
    assert [int(line.split("│")[0]) for line in rows] == list(range(1, len(rules.vertices) + 1))
    for vertex, row in zip(rules.vertices, rows):
        assert row.split("│")[1].strip() == " ".join(vertex.labels)
    for p in rules.propagators:
        assert re.search(rf"^\s*{re.escape(p.field)}\s+│", text, flags=re.M)


def test_rich_vertex_table_keeps_brackets_and_shows_the_factor():
    # brackets in labels and factors are text, not style markup (rich would swallow them)
    g4 = vs.load_model(vs.example("qcd")).derive().vertex("G", "G", "G", "G")
    text = _rich_text(g4, width=2000)
    assert "meaning" in text and text.count("G in or out") == 4
    assert "".join(("factor: " + str(g4.factor)).split()) in "".join(text.split())  # the caption wraps
    assert "[bold]" in _rich_text(_cells_probe("[bold]"))


def _cells_probe(value: str):
    from vertexsmith.render.notebook import _cells

    from rich.table import Table

    table = Table()
    table.add_column("x")
    table.add_row(*_cells(value))
    return table


# ------------------------------------------------------------------ progress

class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_is_off_unless_on_a_terminal_and_not_quiet(monkeypatch):
    monkeypatch.delenv("VERTEXSMITH_QUIET", raising=False)
    assert progress.wanted(False, io.StringIO()) is False
    assert progress.wanted(False, _Terminal()) is True
    assert progress.wanted(True, _Terminal()) is False
    monkeypatch.setenv("VERTEXSMITH_QUIET", "1")
    assert progress.wanted(False, _Terminal()) is False


def test_progress_bars_show_the_derivation_stages(monkeypatch):
    monkeypatch.setattr(progress, "_DELAY", 0.0)
    stream = _Terminal()
    with progress.shown(True, stream):
        vs.load_model(vs.example("qcd")).derive()
    shown = stream.getvalue()
    assert "deriving vertices" in shown and "deriving propagators" in shown


def test_nested_stages_count_on_their_own_bars(monkeypatch):
    # the checks derive the rules inside their own stage: the outer bar must not be disturbed
    monkeypatch.setattr(progress, "_DELAY", 0.0)
    with progress.shown(True, _Terminal()):
        outer = progress.stage("outer", total=2)
        outer.advance()
        inner = progress.stage("inner", total=3)
        for _ in range(3):
            inner.advance()
        outer.advance()
        tasks = progress._listener.get()._progress.tasks
        assert [(t.description, t.completed, t.total) for t in tasks] == [("outer", 2, 2), ("inner", 3, 3)]


def test_the_checks_announce_their_progress(monkeypatch):
    monkeypatch.setattr(progress, "_DELAY", 0.0)
    stream = _Terminal()
    with progress.shown(True, stream):
        vs.load_model(vs.example("qed")).check()
    assert "checking the model" in stream.getvalue()


def test_no_progress_output_without_a_listener(capsys):
    vs.load_model(vs.example("qcd")).derive()
    assert capsys.readouterr() == ("", "")


def test_the_command_line_draws_no_bars_when_quiet(monkeypatch, capsys):
    from vertexsmith.cli import main

    monkeypatch.setattr(progress, "_DELAY", 0.0)
    monkeypatch.setattr("sys.stderr", _Terminal())
    assert main(["rules", "qcd", "-q"]) == 0
    import sys

    assert "deriving" not in sys.stderr.getvalue()
    assert main(["rules", "qcd"]) == 0
    assert "deriving vertices" in sys.stderr.getvalue()
