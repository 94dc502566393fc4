"""`vertexsmith export`: the standalone Python module, FORM id statements, JSON and LaTeX.

The exported Python module is imported from a temporary folder and compared, number by number,
with `Vertex.evaluate()` and `Propagator.evaluate()` for every vertex and propagator of every
shipped model, on a batch of random momenta (the module's functions are vectorised over leading
axes). The FORM output cannot be run here (FORM is not installed), so its shape is checked: one
id statement per vertex and propagator, balanced brackets, a conventions header.
"""

from __future__ import annotations

import importlib.util
import py_compile
import re
import sys
from pathlib import Path
from types import ModuleType

import numpy as np
import pytest
import sympy

import vertexsmith
from vertexsmith._resources import shipped_models
from vertexsmith.export import export_model, export_rules
from vertexsmith.render.python_module import render_python_module, vertex_function_name
from vertexsmith.symbolic import parse_factor

MODELS = [p.stem for p in shipped_models()]


def import_file(path: Path, name: str) -> ModuleType:
    spec = importlib.util.spec_from_file_location(name, path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def exported(tmp_path_factory: pytest.TempPathFactory) -> dict[str, tuple[vertexsmith.Rules, ModuleType, Path]]:
    """Every shipped model derived in R_xi gauge, exported as a module, compiled and imported."""
    folder = tmp_path_factory.mktemp("modules")
    out = {}
    for name in MODELS:
        rules = vertexsmith.load_model(vertexsmith.example(name)).derive(gauge="xi")
        path = folder / f"{name}_rules.py"
        path.write_text(render_python_module(rules), encoding="utf-8")
        py_compile.compile(str(path), doraise=True)
        out[name] = (rules, import_file(path, f"exported_{name}"), path)
    return out


# ---------------------------------------------------------------- the Python module

@pytest.mark.parametrize("name", MODELS)
def test_exported_vertices_match_evaluate(exported: dict, name: str, rng: np.random.Generator) -> None:
    rules, module, _ = exported[name]
    assert set(module.VERTICES) == {v.labels for v in rules.vertices}
    for vertex in rules.vertices:
        momenta = rng.normal(size=(5, len(vertex.legs), 4)) * 2.0
        function = module.VERTICES[vertex.labels]
        assert function.__name__ == vertex_function_name(vertex.labels)
        batch = function(*(momenta[:, k] for k in range(len(vertex.legs))))
        # evaluate() is slow on the large colour tensors: check two of the five points there
        for point in range(5 if batch[0].size < 100_000 else 2):
            expected = vertex.evaluate(momenta[point])
            assert batch[point].shape == expected.shape
            np.testing.assert_allclose(batch[point], expected, rtol=1e-12, atol=1e-12 * np.abs(expected).max())


@pytest.mark.parametrize("name", MODELS)
def test_exported_propagators_match_evaluate(exported: dict, name: str, rng: np.random.Generator) -> None:
    rules, module, _ = exported[name]
    for prop in rules.propagators:
        xi = {s.name: 1.7 for s in prop.a.free_symbols | prop.b.free_symbols if s.name.startswith("xi_")}
        momenta = rng.normal(size=(5, 4)) * 2.0
        batch = module.PROPAGATORS[prop.label](momenta, params=xi)  # an entry of a mixed block: "A X"
        for point in range(5):
            expected = prop.evaluate(momenta[point], values=xi)
            assert batch[point].shape == expected.shape
            np.testing.assert_allclose(batch[point], expected, rtol=1e-12, atol=1e-12 * np.abs(expected).max())


def test_exported_module_is_deterministic_and_compiles(tmp_path: Path) -> None:
    first = export_model("dark_sector", "python", output=tmp_path / "a.py")
    second = export_model("dark_sector", "python", output=tmp_path / "b.py")
    assert first == second == (tmp_path / "a.py").read_text(encoding="utf-8")
    py_compile.compile(str(tmp_path / "a.py"), doraise=True)


def test_module_tables(exported: dict) -> None:
    rules, module, _ = exported["qed"]
    assert module.PARAMETERS["me"] == pytest.approx(0.00051099895)
    # the gauge parameter has no default, as in vertex.evaluate(): the caller must give it
    assert "xi_A" not in module.PARAMETERS and "xi_A" in module.PARAMETER_NAMES
    with pytest.raises(KeyError, match="xi_A"):
        module.propagator_A(np.array([1.0, 0.2, 0.0, 0.3]))
    with pytest.raises(vertexsmith.UsageError, match="xi_A"):
        rules.propagator("A").evaluate(np.array([1.0, 0.2, 0.0, 0.3]))
    np.testing.assert_allclose(module.propagator_A(np.array([1.0, 0.2, 0.0, 0.3]), params={"xi_A": 3.0}),
                               rules.propagator("A").evaluate([1.0, 0.2, 0.0, 0.3], values={"xi_A": 3.0}))
    assert module.FIELDS["ele"]["kind"] == "dirac" and module.FIELDS["ele"]["charges"] == {"qed": -1}
    assert module.CONVENTIONS["metric"] == "(+,-,-,-)" and module.CONVENTIONS["eps0123"] == -1
    assert set(module.PROPAGATORS) == {"A", "ele", "muon"}
    # the symbolic strings read back into the same sympy factors
    for vertex in rules.vertices:
        text = module.SYMBOLIC[vertex_function_name(vertex.labels)]
        assert sympy.simplify(parse_factor(text) - parse_factor(str(vertex.factor))) == 0
    assert module.SYMBOLIC["vertex_bar_ele__ele__A"] == "(-I*e)*gamma[mu3]"  # the model language
    assert str(module.symbolic("vertex_bar_ele__ele__A")) == "-I*e*gamma(mu3)"


def test_parameters_follow_their_definitions(exported: dict) -> None:
    # qed.vsm defines e = sqrt(4 pi alpha): giving alpha changes e, giving e overrides it
    _, module, _ = exported["qed"]
    zero = np.zeros(4)
    gamma0_entry = module.vertex_bar_ele__ele__A(zero, zero, zero)[0, 0, 0]
    assert gamma0_entry == pytest.approx(-1j * np.sqrt(4 * np.pi / 137.035999))
    with_alpha = module.vertex_bar_ele__ele__A(zero, zero, zero, params={"alpha": 0.01})[0, 0, 0]
    assert with_alpha == pytest.approx(-1j * np.sqrt(4 * np.pi * 0.01))
    with_e = module.vertex_bar_ele__ele__A(zero, zero, zero, params={"alpha": 0.01, "e": 0.5})[0, 0, 0]
    assert with_e == pytest.approx(-0.5j)
    with pytest.raises(KeyError, match="unknown parameter"):
        module.vertex_bar_ele__ele__A(zero, zero, zero, params={"ee": 0.5})


def test_batch_axes_broadcast(exported: dict, rng: np.random.Generator) -> None:
    rules, module, _ = exported["scalar_qed"]
    vertex = rules.vertex("phi", "dag(phi)", "A")
    p1 = rng.normal(size=(3, 2, 4))
    p2 = rng.normal(size=4)  # one momentum for the whole batch
    p3 = -(p1 + p2)
    out = module.vertex_phi__dag_phi__A(p1, p2, p3)
    assert out.shape == (3, 2, 4)
    np.testing.assert_allclose(out[2, 1], vertex.evaluate(np.array([p1[2, 1], p2, p3[2, 1]])), rtol=1e-12)
    with pytest.raises(ValueError, match="shape"):
        module.vertex_phi__dag_phi__A(p1[..., :3], p2, p3)


def test_find_vertex_reorders_legs_like_rules_vertex(exported: dict, rng: np.random.Generator) -> None:
    # leg order matters for the axes and, for fermions, the Grassmann sign
    for name, labels in (("dark_sector", ("X", "chi", "bar(chi)")), ("qcd", ("G", "u", "bar(u)")),
                         ("contact", ("n", "bar(chi)", "chi", "bar(n)"))):
        rules, module, _ = exported[name]
        vertex = rules.vertex(*labels)
        momenta = rng.normal(size=(len(labels), 4))
        got = module.find_vertex(*labels)(*momenta)
        np.testing.assert_allclose(got, vertex.evaluate(momenta), rtol=1e-12, atol=1e-14)
    with pytest.raises(KeyError):
        exported["qed"][1].find_vertex("ele", "ele", "A")


# ---------------------------------------------------------------- FORM

def balanced(text: str) -> bool:
    depth = 0
    for char in text:
        depth += {"(": 1, ")": -1}.get(char, 0)
        if depth < 0:
            return False
    return depth == 0


@pytest.mark.parametrize("name", MODELS)
def test_form_has_one_id_statement_per_rule(exported: dict, name: str) -> None:
    rules = exported[name][0]
    text = export_rules(rules, "form")
    assert text == export_rules(rules, "form")  # deterministic
    body = [line for line in text.splitlines() if not line.startswith(("*", "#"))]
    statements = " ".join(body).split(";")
    vertex_ids = [s for s in statements if s.strip().startswith("id vtx(")]
    propagator_ids = [s for s in statements if s.strip().startswith("id prop(")]
    assert len(vertex_ids) == len(rules.vertices)
    assert len(propagator_ids) == len(rules.propagators)
    for statement in statements:
        assert balanced(statement), statement
        assert statement.count("[") == statement.count("]")
    assert "* Conventions: metric (+,-,-,-)" in text
    assert all(line.startswith("*") for line in text.splitlines()[:5])
    # declarations first, every substitution inside a procedure, so the file can head a program
    first_procedure = text.index("#procedure vsvertices()")
    assert not any(line.startswith("id ") for line in text[:first_procedure].splitlines())
    assert text.index("Functions vtx, prop;") < first_procedure and text.rstrip().endswith("#endprocedure")
    # group indices carry their dimensions
    for group in rules.model.groups.values():
        if group.rank > 1:
            assert re.search(rf"\ba1{group.name}={group.rank ** 2 - 1}\b", text) or f"{group.name}" not in text


def test_form_statements_for_qed() -> None:
    # the QED vertex is -i e gamma^mu for charge -1 (Peskin & Schroeder ch. 4, up to the charge sign convention)
    rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    text = export_rules(rules, "form")
    assert "id vtx(bar(ele),ele,A,p1?,p2?,p3?,mu3?,j1?) = -i_*e*g_(j1,mu3);" in text
    assert "id prop(A,p?,mu?,nu?) = -i_*den(p.p)*d_(mu,nu);" in text
    # momentum combinations are distributed: FORM writes p1(mu3) - p2(mu3)
    scalar = export_rules(vertexsmith.load_model(vertexsmith.example("scalar_qed")).derive(gauge="feynman"), "form")
    assert "id vtx(phi,dag(phi),A,p1?,p2?,p3?,mu3?) = i_*e*p1(mu3) - i_*e*p2(mu3);" in scalar
    declarations = re.findall(r"^(Symbols|Vectors|Indices|Functions|CFunctions) .*;$", text, flags=re.M)
    assert declarations == ["Symbols", "Vectors", "Indices", "Functions", "CFunctions"]


def test_form_names_do_not_clash_with_kinematics_and_deltas_know_their_space() -> None:
    # a field named s (the Mandelstam variable) is renamed, and the renaming is listed
    model = vertexsmith.load_model(text="""theory clash "a scalar named s (invented numbers)"
parameters
  coupling lam = 0.1
  mass ms = 1.0
fields
  scalar s real mass ms
lagrangian
  1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2 - lam/24 s^4
""", name="clash.vsm")
    text = export_rules(model.derive(), "form")
    assert "id vtx(sx1,sx1,sx1,sx1," in text and "sx1 = s" in text
    assert not re.search(r"\bs\b", text.split("* declarations")[1])
    # adjoint and fundamental deltas live on indices of their own dimensions (8 and 3 for colour)
    qcd = export_rules(vertexsmith.load_model(vertexsmith.example("qcd")).derive(), "form")
    assert "id prop(G,p?,mu?,nu?,a1color?,a2color?) = d_(a1color,a2color)*(" in qcd
    assert "id prop(d,p?,j?,i1color?,i2color?) = d_(i1color,i2color)*(" in qcd
    assert "a1color=8" in qcd and "i1color=3" in qcd and "e1color=8" in qcd


# ---------------------------------------------------------------- the command

def test_export_command(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    from vertexsmith.cli import main

    target = tmp_path / "rules.frm"
    assert main(["export", "qed", "--to", "form", "-o", str(target)]) == 0
    assert target.read_text(encoding="utf-8").count("id vtx(") == 2
    assert main(["export", "yukawa", "--to", "python"]) == 0
    assert "def vertex_bar_psi__psi__phi(p1, p2, p3, params=None):" in capsys.readouterr().out
    assert main(["export", "qed", "--to", "json"]) == 0
    assert capsys.readouterr().out.lstrip().startswith("{")
    assert main(["export", "no_such_model", "--to", "json"]) == 2
    assert "no model file 'no_such_model'" in capsys.readouterr().err
    broken = tmp_path / "broken.vsm"
    broken.write_text("theory broken\nfields\n  scalar phi real mass m\n", encoding="utf-8")
    assert main(["export", str(broken), "--to", "python"]) == 1
    err = capsys.readouterr().err
    assert f"{broken}:3:" in err and "Traceback" not in err
