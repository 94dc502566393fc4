"""The shape of the package: the model is plain data and the stages import one another in one
direction only, so that a new stage (symmetry breaking) can slot in without an import circle.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

import vertexsmith as vs
from vertexsmith import model as model_module
from vertexsmith import pipeline

PACKAGE = Path(vs.__file__).resolve().parent
# the command modules (cli and its plug-ins) sit on top and may reach one another; the package's
# own __init__ only re-exports (renderers read __version__ from it)
TOP = {"vertexsmith", "vertexsmith.__main__", "vertexsmith.cli", "vertexsmith.export", "vertexsmith.compare",
       "vertexsmith.report"}


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _is_type_checking(node: ast.If) -> bool:
    return isinstance(node.test, ast.Name) and node.test.id == "TYPE_CHECKING"


def _imports(path: Path) -> set[str]:
    """Every vertexsmith module a file imports at run time, at module level or inside a function."""
    name = _module_name(path)
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found: set[str] = set()

    def visit(node: ast.AST) -> None:
        if isinstance(node, ast.If) and _is_type_checking(node):
            for child in node.orelse:
                visit(child)
            return  # imports only for type annotations are not run
        if isinstance(node, ast.ImportFrom) and node.level:
            base = package.split(".")[: len(package.split(".")) - (node.level - 1)]
            target = ".".join(base + ([node.module] if node.module else []))
            found.add(target)
            for alias in node.names:  # `from . import model` imports the module vertexsmith.model
                if (PACKAGE.parent / (target.replace(".", "/") + f"/{alias.name}.py")).is_file():
                    found.add(f"{target}.{alias.name}")
        for child in ast.iter_child_nodes(node):
            visit(child)

    visit(ast.parse(path.read_text(encoding="utf-8")))
    return found - {name}


def _graph() -> dict[str, set[str]]:
    return {_module_name(p): _imports(p) for p in sorted(PACKAGE.rglob("*.py"))}


def test_the_model_module_imports_no_stage():
    # common practice, no source: the data record must not know the stages that read it
    assert _imports(Path(model_module.__file__)) <= {"vertexsmith.errors", "vertexsmith.values"}


def test_the_stages_import_one_another_in_one_direction():
    graph = {k: v - TOP for k, v in _graph().items() if k not in TOP}
    state: dict[str, int] = {}
    path: list[str] = []

    def walk(node: str) -> None:
        state[node] = 1
        path.append(node)
        for nxt in sorted(graph.get(node, ())):
            if state.get(nxt) == 1:
                cycle = path[path.index(nxt):] + [nxt]
                pytest.fail("import circle: " + " -> ".join(cycle))
            if nxt not in state:
                walk(nxt)
        path.pop()
        state[node] = 2

    for node in sorted(graph):
        if node not in state:
            walk(node)


def test_the_pipeline_runs_its_model_stages_between_build_and_expand(monkeypatch):
    # a stage that rewrites the model (here: drops the phi^4 line) is seen by expand, derive and check
    model = vs.load_model(vs.example("phi4"))
    seen: list[str] = []

    def drop_last_term(record):
        seen.append(record.name)
        return type(record)(**{**{f: getattr(record, f) for f in record.__dataclass_fields__},
                               "terms": record.terms[:-1]})

    before = {len(v.legs) for v in model.derive().vertices}
    monkeypatch.setattr(pipeline, "MODEL_STAGES", (drop_last_term,))
    after = model.derive()
    assert seen == ["phi4"]
    assert 4 in before and all(len(v.legs) != 4 for v in after.vertices)
    assert len(model.monomials()) < len(pipeline.expand_model(model))


def test_load_model_gives_the_facade_over_the_plain_record():
    model = vs.load_model(vs.example("qed"))
    assert isinstance(model, vs.Model) and isinstance(model, model_module.Model)
    assert vs.Model.of(model) is model
    rules = pipeline.derive(model, gauge="feynman")
    assert [str(v.factor) for v in rules.vertices] == [str(v.factor) for v in model.derive("feynman").vertices]
    assert model.check() == pipeline.check(model)
