"""The public Python API as DESIGN.md promises it: a small pinned namespace, loading from a path or
from text, vertices found by their legs in any order, propagators by field, and leg attributes.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith._resources import shipped_models

PUBLIC = ["DerivationError", "Leg", "Model", "ModelMeaningError", "ModelSyntaxError", "Propagator", "Rules",
          "UsageError", "Vertex", "VertexsmithError", "__version__", "amplitude", "example", "find_diagrams",
          "load_model", "verify_model"]


def test_the_public_namespace_is_pinned():
    assert sorted(vs.__all__) == PUBLIC
    assert dir(vs) == PUBLIC
    for name in PUBLIC:
        assert hasattr(vs, name)


def test_version_matches_the_project_metadata():
    pyproject = Path(__file__).resolve().parents[1] / "pyproject.toml"
    if not pyproject.is_file():
        pytest.skip("not running from a source checkout")
    declared = tomllib.loads(pyproject.read_text(encoding="utf-8"))["project"]["version"]
    assert vs.__version__ == declared


def test_example_paths_exist_for_every_shipped_model():
    names = [path.stem for path in shipped_models()]
    assert {"phi4", "yukawa", "qed", "scalar_qed", "dark_sector", "axion_like", "contact"} <= set(names)
    for name in names:
        assert vs.example(name).is_file()
        assert vs.example(name + ".vsm") == vs.example(name)


# ---------------------------------------------------------------- loading

def test_load_from_path_str_path_and_text_agree():
    path = vs.example("qed")
    text = path.read_text(encoding="utf-8")
    models = [vs.load_model(path), vs.load_model(str(path)), vs.load_model(text=text, name="qed.vsm")]
    dumps = [[str(v.factor) for v in m.derive().vertices] + [str(p.factor) for p in m.derive().propagators]
             for m in models]
    assert dumps[0] == dumps[1] == dumps[2]
    assert models[0].source.name == str(path)
    assert models[2].source.name == "qed.vsm"
    assert models[2].source.text == text


def test_load_model_text_without_a_name_reports_a_placeholder():
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text="theory t\nfields\n  scalar phi real\nlagrangian\n  1/2 d[mu] phi d[mu] phi\n  k phi^3\n")
    assert str(info.value).startswith("<model>:6:3: error: unknown name 'k'")


def test_model_attributes(shipped):
    model = shipped("scalar_qed")
    assert isinstance(model, vs.Model)
    assert model.name == "scalar_qed"
    phi = model.fields["phi"]
    assert (phi.kind, phi.is_complex) == ("scalar", True)
    assert phi.mass == sympy.Symbol("mphi", real=True)
    assert dict(phi.charges)["qed"] == 1
    assert model.fields["A"].kind == "vector"
    e = model.parameters["e"]
    assert "coupling" in e.roles
    assert e.value == pytest.approx(np.sqrt(4 * np.pi / 137.035999))
    group = model.groups["qed"]
    assert (group.boson, group.strength, group.fixing) == ("A", "F", "lorenz")
    assert model.conventions.covariant_sign == 1
    assert len(model.terms) == 3
    assert len(model.monomials()) > 0


def test_conventions_text_states_the_choices(shipped):
    default = shipped("qed").derive().conventions
    assert "(+,-,-,-)" in default
    assert "incoming" in default
    assert "D = d - i g Q A" in default
    assert "epsilon^{0123} = -1" in default
    flipped = shipped("dark_sector").derive().conventions
    assert "D = d + i g Q A" in flipped
    assert "epsilon^{0123} = +1" in shipped("axion_like").derive().conventions


@pytest.mark.parametrize("gauge", ["xi", "feynman", "unitary"])
def test_gauge_is_recorded(shipped, gauge):
    assert shipped("qed").derive(gauge=gauge).gauge == gauge
    assert shipped("qed").derive(gauge).gauge == gauge


# ---------------------------------------------------------------- vertices and legs

def test_vertex_legs_and_their_attributes(shipped):
    rules = shipped("qed").derive()
    vertex = rules.vertex("bar(ele)", "ele", "A")
    assert isinstance(vertex, vs.Vertex)
    bar_leg, leg, photon = vertex.legs
    assert all(isinstance(x, vs.Leg) for x in vertex.legs)
    assert (bar_leg.position, bar_leg.field, bar_leg.conjugate, bar_leg.kind, bar_leg.grassmann) == \
        (1, "ele", True, "dirac", True)
    assert (bar_leg.label, bar_leg.momentum, bar_leg.indices) == ("bar(ele)", "p1", ("s1",))
    assert (leg.label, leg.conjugate, leg.momentum, leg.indices) == ("ele", False, "p2", ("s2",))
    assert (photon.label, photon.kind, photon.grassmann, photon.momentum, photon.indices) == \
        ("A", "vector", False, "p3", ("mu3",))
    assert "ele" in bar_leg.meaning() and "outgoing" in bar_leg.meaning()
    assert "incoming" in leg.meaning()
    assert vertex.labels == ("bar(ele)", "ele", "A")


def test_scalar_leg_labels(shipped):
    vertex = shipped("scalar_qed").derive().vertex("phi", "dag(phi)", "A")
    assert [leg.label for leg in vertex.legs] == ["phi", "dag(phi)", "A"]
    assert vertex.legs[1].conjugate and not vertex.legs[0].conjugate
    assert vertex.legs[0].indices == () and vertex.legs[0].kind == "scalar"


def test_vertex_factor_latex_parts_and_origins(shipped):
    model = shipped("qed")
    vertex = model.derive().vertex("bar(ele)", "ele", "A")
    e = sympy.Symbol("e", real=True)
    assert isinstance(vertex.factor, sympy.Expr)
    assert e in vertex.factor.free_symbols
    assert r"\gamma" in vertex.latex
    assert vertex._repr_latex_().startswith("$")
    (part,) = vertex.parts
    assert sympy.simplify(part.coupling + sympy.I * e) == 0
    assert str(part.lorentz) == "gamma[mu3]"  # the model language itself
    # qed.vsm: the electron's kinetic line, where D[mu] hides the photon
    line = model.source.text.splitlines()[vertex.origins[0] - 1]
    assert "bar(ele)" in line and "D[mu]" in line


def test_vertex_terms_carry_the_overall_i(shipped):
    vertex = shipped("phi4").derive().vertex("phi", "phi", "phi", "phi")
    (term,) = vertex.terms
    assert sympy.simplify(term.coefficient + sympy.I * sympy.Symbol("lam", real=True)) == 0


def _axis_counts(vertex: vs.Vertex) -> list[int]:
    return [int(leg.kind in ("vector", "dirac", "majorana")) + len(leg.representations) for leg in vertex.legs]


@pytest.mark.parametrize("name", [path.stem for path in shipped_models()])
def test_vertices_found_by_legs_in_any_order(shipped, rng, name):
    # rules.vertex(...) takes the legs in any order and returns them in the order asked; the
    # numbers are the canonical ones with the axes moved along and the Grassmann sign of the
    # reordering of fermionic legs (DESIGN.md).
    rules = shipped(name).derive("feynman")
    for vertex in rules.vertices:
        n = len(vertex.legs)
        momenta = rng.normal(size=(n, 4))
        reference = vertex.evaluate(momenta)
        counts = _axis_counts(vertex)
        starts = np.cumsum([0] + counts)
        identity = tuple(range(n))
        orders = {identity, identity[::-1], identity[1:] + identity[:1], (1, 0) + identity[2:],
                  identity[:-2] + (n - 1, n - 2)}
        for order in sorted(orders):
            asked = [vertex.labels[k] for k in order]
            other = rules.vertex(*asked)
            assert list(other.labels) == asked
            fermionic = [k for k in order if vertex.legs[k].grassmann]
            sign = (-1) ** sum(1 for i in range(len(fermionic)) for j in range(i + 1, len(fermionic))
                               if fermionic[i] > fermionic[j])
            axes = [a for k in order for a in range(starts[k], starts[k] + counts[k])]
            # identical legs may come back in another order among themselves; compare through the
            # same momenta, reordered as asked
            value = other.evaluate(momenta[list(order)])
            np.testing.assert_allclose(value, sign * reference.transpose(axes), atol=1e-10,
                                       err_msg=f"{name}: {asked}")


def test_unknown_vertex_and_propagator_are_usage_errors(shipped):
    rules = shipped("qed").derive()
    with pytest.raises(vs.UsageError):
        rules.vertex("ele", "ele", "A")
    with pytest.raises(vs.UsageError):
        rules.propagator("electron")


# ---------------------------------------------------------------- propagators

def test_propagators_by_field_and_by_conjugate_label(shipped):
    rules = shipped("dark_sector").derive()
    assert {p.field for p in rules.propagators} == {"X", "chi", "psi", "s"}
    assert rules.propagator("chi") == rules.propagator("bar(chi)")
    assert rules.propagator("s") == rules.propagator("dag(s)")
    prop = rules.propagator("X")
    assert isinstance(prop, vs.Propagator)
    assert (prop.kind, prop.label, prop.momentum, prop.indices) == ("vector", "X", "p", ("mu", "nu"))
    assert rules.propagator("chi").indices == ("s1", "s2")
    assert rules.propagator("s").indices == ()
    assert isinstance(prop.factor, sympy.Expr)
    assert isinstance(prop.latex, str) and prop.latex
    assert prop.gauge == "xi"
