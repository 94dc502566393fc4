"""Unrolled rules (one vertex per component) against the symbolic ones, and the exports of matrices.

The check is the definition itself: a vertex with symbolic generation indices, evaluated at
fixed components, is the vertex of those components (summation convention, common practice, no
source). Components whose factor vanishes must have no vertex; identical legs keep one order.
"""

from __future__ import annotations

import importlib.util
import itertools
import json
import sys

import jsonschema
import numpy as np
import pytest

import vertexsmith as vs
from vertexsmith.export import export_rules
from vertexsmith.render.json import load_schema

# a two-generation toy with a four-fermion term of identical legs (invented numbers)
TOY = """\
theory toy
spaces
  gen 2
parameters
  mass m = 1.0
  mass ms = 2.0
  coupling c4 = 0.7
  coupling complex Y[gen,gen] = {{0.1, 0.2 I}, {0, 0.3 - 0.1 I}}
fields
  dirac psi over gen mass m
  scalar s complex mass ms
lagrangian
  bar(psi[i]) (I gamma[mu] d[mu] - m) psi[i]
  dag(d[mu] s) d[mu] s - ms^2 dag(s) s
  - Y[i,j] bar(psi[i]) s PR psi[j] + h.c.
  - c4 bar(psi[i]) gamma[mu] psi[i] bar(psi[j]) gamma[mu] psi[j]
"""


def _component_label(leg: vs.rules.Leg, components: tuple[int, ...]) -> str:
    name = f"{leg.field}[{','.join(str(c + 1) for c in components)}]"
    if not leg.conjugate:
        return name
    return f"bar({name})" if leg.kind == "dirac" else f"dag({name})"


def _assert_unrolled_match(model: vs.Model) -> int:
    """Every slice of every symbolic vertex equals its unrolled vertex, or is zero when there is none."""
    symbolic, unrolled = model.derive(), model.derive(unroll=True)
    rng = np.random.default_rng(7)
    found = 0
    for vertex in symbolic.vertices:
        momenta = rng.normal(size=(len(vertex.legs), 4))
        array = vertex.evaluate(momenta)
        flavour = [(leg, [size for _, rep, size in leg.representations if rep == "flavour"]) for leg in vertex.legs]
        choices = [list(itertools.product(*[range(n) for n in sizes])) for _, sizes in flavour]
        for assignment in itertools.product(*choices):
            index: list[object] = []
            for leg, components in zip(vertex.legs, assignment):
                spaces = iter(components)
                for key in leg.axes:
                    is_space = key[0] == "group" and key[2] in model.spaces
                    index.append(next(spaces) if is_space else slice(None))
            expected = array[tuple(index)]
            labels = [_component_label(leg, c) if c else leg.label for leg, c in zip(vertex.legs, assignment)]
            try:
                piece = unrolled.vertex(*labels)
            except vs.UsageError:
                assert np.allclose(expected, 0, atol=1e-12), labels
                continue
            found += 1
            np.testing.assert_allclose(piece.evaluate(momenta), expected, atol=1e-12, err_msg=str(labels))
    return found


def test_unrolled_toy_equals_symbolic_component_by_component():
    model = vs.load_model(text=TOY, name="toy.vsm")
    found = _assert_unrolled_match(model)
    unrolled = model.derive(unroll=True)
    # Y has one zero entry, so 3 Yukawa vertices per conjugation; the current-current term has
    # 2 x 2 components on its bar legs and on its plain legs, one order of identical legs kept
    labels = [v.labels for v in unrolled.vertices]
    assert ("bar(psi[2])", "psi[1]", "s") not in labels  # Y[2,1] = 0 is dropped
    assert sum(1 for v in unrolled.vertices if len(v.legs) == 3) == 6
    assert found >= 6


def test_unrolled_shipped_lepton_model_equals_symbolic():
    model = vs.load_model(vs.example("lepton_flavour"))
    assert _assert_unrolled_match(model) > 0


def test_unrolled_rules_are_deterministic_and_keep_propagators_once():
    model = vs.load_model(vs.example("lepton_flavour"))
    first = vs.render.render(model.derive(unroll=True), "json")
    assert first == vs.render.render(vs.load_model(vs.example("lepton_flavour")).derive(unroll=True), "json")
    rules = model.derive(unroll=True)
    assert rules.propagator("eR[2]").indices == ("s1", "s2")
    assert sorted(p.field for p in rules.propagators) == sorted(p.field for p in model.derive().propagators)


def test_unroll_argument_is_checked():
    model = vs.load_model(text=TOY, name="toy.vsm")
    with pytest.raises(vs.UsageError, match="unroll takes True or False"):
        model.derive(unroll="yes")


def test_json_carries_the_matrix_and_validates_symbolic_and_unrolled():
    model = vs.load_model(vs.example("lepton_flavour"))
    schema = load_schema()
    for rules in (model.derive(), model.derive(unroll=True)):
        document = json.loads(vs.render.render(rules, "json"))
        jsonschema.validate(document, schema)
    ye = next(p for p in document["parameters"] if p["name"] == "Ye")
    assert ye["spaces"] == ["gen", "gen"] and ye["matrix"] is None
    assert ye["value"][1][2] == {"real": 0.0002, "imag": -0.0001}
    assert ye["entries"][0][0] == "y0/100"
    kd = next(p for p in document["parameters"] if p["name"] == "Kd")
    assert kd["matrix"] == "hermitian"
    assert document["spaces"] == [{"name": "gen", "size": 3, "description": "lepton generations"}]
    leg = document["vertices"][0]["legs"][0]
    assert "components" in leg


def _import(path, name):
    spec = importlib.util.spec_from_file_location(name, path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    spec.loader.exec_module(module)
    return module


@pytest.mark.parametrize("unroll", [False, True], ids=["symbolic", "unrolled"])
def test_exported_module_takes_the_matrix_as_one_array(tmp_path, unroll):
    model = vs.load_model(text=TOY, name="toy.vsm")
    rules = model.derive(unroll=unroll)
    path = tmp_path / f"toy_{unroll}.py"
    path.write_text(export_rules(rules, "python"), encoding="utf-8")
    module = _import(path, f"toy_rules_{unroll}")
    assert module.PARAMETERS["Y"].shape == (2, 2)
    y = np.array([[1.0, 2.0j], [3.0, 4.0 - 1j]])
    rng = np.random.default_rng(3)
    for vertex in rules.vertices:
        momenta = rng.normal(size=(len(vertex.legs), 4))
        function = module.find_vertex(*vertex.labels)
        np.testing.assert_allclose(function(*momenta, params={"Y": y}),
                                   vertex.evaluate(momenta, values={"Y": y}), atol=1e-12)


def test_form_declares_matrices_as_functions():
    text = export_rules(vs.load_model(vs.example("lepton_flavour")).derive(), "form")
    assert "*Ye(i1gen,i2gen)*d_(i1weak,i3weak);" in text
    assert "conj(Ye(i2gen,i1gen))" in text and "i1gen=3" in text
    functions = next(line for line in text.splitlines() if line.startswith("CFunctions"))
    assert all(name in functions for name in ("Ye", "Kd", "conj"))
    symbols = next(line for line in text.splitlines() if line.startswith("Symbols"))
    assert "Ye" not in symbols.split() and "Ye," not in symbols
    unrolled = export_rules(vs.load_model(vs.example("lepton_flavour")).derive(unroll=True), "form")
    assert "id vtx(bar(comp(L,2)),comp(eR,3),H," in unrolled and "Ye(2,3)" in unrolled
    assert "comp" in next(line for line in unrolled.splitlines() if line.startswith("CFunctions"))


def test_command_line_unroll(capsys):
    from vertexsmith.cli import main

    assert main(["rules", "lepton_flavour", "--unroll", "--format", "json"]) == 0
    document = json.loads(capsys.readouterr().out)
    labels = [[leg["label"] for leg in v["legs"]] for v in document["vertices"]]
    assert ["bar(L[2])", "eR[3]", "H"] in labels
    assert ["bar(L[1])", "eR[3]", "H"] not in labels  # Ye[1,3] is declared 0
