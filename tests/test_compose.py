"""Models built on other model files (`builds on "FILE"`): merging, and errors in the right file.

The merge rules are the README's ("Building on other files"): declarations add up, a parameter or
convention given again replaces the earlier one, a name declared twice is an error at both places,
Lagrangian lines append; paths are relative to the naming file; a circle is refused.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from vertexsmith import load_model
from vertexsmith.errors import ModelMeaningError, ModelSyntaxError, VertexsmithError
from vertexsmith.limits import MODEL_FILES

BASE = """theory base "a cubic scalar"

parameters
  coupling g = 0.3
  mass m = 1.0

fields
  scalar phi mass m

lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2 - g/6 phi^3
"""

TOP = """theory top "a second scalar on top of the base"
builds on "base.vsm"

parameters
  mass m = 2.0
  coupling lam = 0.1

fields
  scalar chi mass m

lagrangian
  1/2 d[mu] chi d[mu] chi - 1/2 m^2 chi^2 - lam/4 phi^2 chi^2
"""


def _write(folder: Path, files: dict[str, str]) -> None:
    for name, text in files.items():
        path = folder / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8")


def _error(path: Path) -> VertexsmithError:
    with pytest.raises(VertexsmithError) as caught:
        load_model(path)
    return caught.value


def _value(model, name: str) -> complex:
    return complex(model.parameters[name].value)


def test_declarations_add_up_and_a_later_value_replaces_an_earlier_one(tmp_path: Path) -> None:
    _write(tmp_path, {"base.vsm": BASE, "top.vsm": TOP})
    model = load_model(tmp_path / "top.vsm")
    assert model.name == "top"
    assert sorted(model.fields) == ["chi", "phi"]
    assert _value(model, "m") == 2.0  # replaced by the top file
    assert _value(model, "g") == 0.3  # kept from the base
    rules = model.derive()
    # the base's cubic: -g/6 phi^3 gives -i g (symmetry factor 3! included; common practice, no source)
    cubic = rules.vertex("phi", "phi", "phi").evaluate([np.zeros(4)] * 3)
    assert cubic == pytest.approx(-0.3j)
    # the top's quartic: -lam/4 phi^2 chi^2 gives -i lam (2! 2! / 4)
    quartic = rules.vertex("phi", "phi", "chi", "chi").evaluate([np.zeros(4)] * 4)
    assert quartic == pytest.approx(-0.1j)


def test_a_model_without_bases_is_built_as_before(tmp_path: Path) -> None:
    _write(tmp_path, {"base.vsm": BASE})
    alone = load_model(tmp_path / "base.vsm")
    assert load_model(text=BASE).derive().vertices == alone.derive().vertices


def test_an_error_in_an_included_file_points_into_that_file(tmp_path: Path) -> None:
    _write(tmp_path, {"base.vsm": BASE.replace("g/6 phi^3", "g/6 phi^3 + bar2"), "top.vsm": TOP})
    error = _error(tmp_path / "top.vsm")
    assert isinstance(error, ModelMeaningError)
    assert (error.span.line, error.span.column) == (11, 57)
    text = str(error).splitlines()
    assert text[0].endswith("base.vsm:11:57: error: unknown name 'bar2'")
    assert text[1].strip().endswith("g/6 phi^3 + bar2")
    assert text[2] == "  " + " " * 56 + "^^^^"


def test_a_syntax_error_in_an_included_file_points_into_that_file(tmp_path: Path) -> None:
    _write(tmp_path, {"base.vsm": BASE.replace("mass m = 1.0", "mass m = = 1.0"), "top.vsm": TOP})
    error = _error(tmp_path / "top.vsm")
    assert isinstance(error, ModelSyntaxError)
    assert str(error).startswith(str(tmp_path / "base.vsm") + ":5:12: error: unexpected '='")


def test_a_check_finding_in_an_included_file_names_that_file(tmp_path: Path) -> None:
    # a cubic of a complex field without its conjugate is not hermitian: the finding is in the base
    base = BASE.replace("scalar phi mass m", "scalar phi mass m\n  scalar s complex mass m").replace(
        "- g/6 phi^3", "- g/6 phi^3\n  - g s^2 phi")
    _write(tmp_path, {"base.vsm": base, "top.vsm": TOP})
    found = [str(d).splitlines() for d in load_model(tmp_path / "top.vsm").check() if d.severity == "error"]
    assert [lines[0].split("/")[-1] for lines in found] == [
        "base.vsm:9:3: error: the field 's' has no kinetic term",
        "base.vsm:13:3: error: term has no hermitian conjugate in the Lagrangian"]
    assert found[1][1] == "    - g s^2 phi"


def test_paths_are_relative_to_the_naming_file(tmp_path: Path) -> None:
    _write(tmp_path, {"lib/base.vsm": BASE,
                      "lib/mid.vsm": 'theory mid "x"\nbuilds on "base.vsm"\n',
                      "work/top.vsm": TOP.replace('"base.vsm"', '"../lib/mid.vsm"')})
    model = load_model(tmp_path / "work" / "top.vsm")
    assert sorted(model.fields) == ["chi", "phi"]


def test_text_models_resolve_against_the_working_folder(tmp_path: Path, monkeypatch) -> None:
    _write(tmp_path, {"base.vsm": BASE})
    monkeypatch.chdir(tmp_path)
    assert sorted(load_model(text=TOP).fields) == ["chi", "phi"]


def test_a_file_shared_by_two_bases_is_read_once(tmp_path: Path) -> None:
    _write(tmp_path, {"base.vsm": BASE,
                      "left.vsm": 'theory left "x"\nbuilds on "base.vsm"\nfields\n  scalar a mass m\n',
                      "right.vsm": 'theory right "x"\nbuilds on "base.vsm"\nfields\n  scalar b mass m\n',
                      "top.vsm": 'theory top "x"\nbuilds on "left.vsm"\nbuilds on "right.vsm"\n'})
    assert sorted(load_model(tmp_path / "top.vsm").fields) == ["a", "b", "phi"]


def test_a_shipped_model_may_be_named_alone(tmp_path: Path) -> None:
    _write(tmp_path, {"top.vsm": 'theory top "x"\nbuilds on "qed.vsm"\nfields\n  scalar s mass me\n'
                                 'lagrangian\n  1/2 d[mu] s d[mu] s - 1/2 me^2 s^2\n'})
    model = load_model(tmp_path / "top.vsm")
    assert {"A", "ele", "muon", "s"} <= set(model.fields)


def test_a_later_convention_replaces_an_earlier_one(tmp_path: Path) -> None:
    # D = d + i e Q A instead of d - i e Q A flips the sign of the one-photon vertex (README Conventions)
    _write(tmp_path, {"top.vsm": 'theory flipped "x"\nbuilds on "qed.vsm"\nconventions\n  covariant plus\n'})
    flipped = load_model(tmp_path / "top.vsm").derive().vertex("bar(ele)", "ele", "A")
    plain = load_model("models/qed.vsm").derive().vertex("bar(ele)", "ele", "A")
    momenta = [np.array([1.0, 0.2, 0.1, 0.3]), np.array([0.7, -0.1, 0.4, 0.2]), np.array([-1.7, -0.1, -0.5, -0.5])]
    assert np.allclose(flipped.evaluate(momenta), -plain.evaluate(momenta))
    assert np.abs(plain.evaluate(momenta)).max() > 0.1


# ---------------------------------------------------------------------------------------- bad input

@pytest.mark.parametrize("files, line, column, message", [
    ({"top.vsm": 'theory t "x"\nbuilds on "top.vsm"\n'}, 2, 11, "'top.vsm' builds on this file again: top.vsm -> top.vsm"),
    ({"top.vsm": 'theory t "x"\nbuilds on "a.vsm"\n', "a.vsm": 'theory a "x"\nbuilds on "top.vsm"\n'},
     2, 11, "'top.vsm' builds on this file again: top.vsm -> a.vsm -> top.vsm"),
    ({"top.vsm": 'theory t "x"\nbuilds on "nope.vsm"\n'}, 2, 11, "no model file 'nope.vsm' next to this file"),
    ({"top.vsm": 'theory t "x"\nbuilds on ""\n'}, 2, 11, "'builds on' names no file"),
    ({"top.vsm": 'theory t "x"\nbuilds on "sub"\n', "sub/x.vsm": BASE}, 2, 11, "'sub' is a folder, not a model file"),
    ({"top.vsm": 'theory t "x"\nbuilds on "base.vsm"\nfields\n  scalar phi\n', "base.vsm": BASE},
     4, 3, "field 'phi' is declared again"),
    ({"top.vsm": 'theory t "x"\nbuilds on "base.vsm"\nparameters\n  coupling m = 3\n', "base.vsm": BASE},
     4, 3, "parameter 'm' is declared again with other words"),
    ({"top.vsm": 'theory t "x"\nbuilds on "base.vsm"\ndefine\n  J = phi\n',
      "base.vsm": BASE.replace("lagrangian", "define\n  J = phi^2\n\nlagrangian")}, 4, 3, "definition 'J' is declared again"),
    ({"top.vsm": 'theory t "x"\nbuilds on "' + "x" * 5000 + '"\n'}, 2, 11,
     "cannot use the path '" + "x" * 60 + "': File name too long"),
], ids=["itself", "circle", "missing", "empty", "folder", "field-twice", "parameter-words", "definition-twice",
        "name-too-long"])
def test_bad_bases_are_positioned_errors(tmp_path: Path, files: dict[str, str], line: int, column: int,
                                         message: str) -> None:
    _write(tmp_path, files)
    error = _error(tmp_path / "top.vsm")
    assert (error.span.line, error.span.column, error.message) == (line, column, message)
    where = "a.vsm" if "-> a.vsm ->" in message else "top.vsm"
    assert str(error).startswith(f"{tmp_path / where}:{line}:{column}: error: {message}")  # the line closing it
    assert error.hint


def test_a_clash_is_shown_at_both_places(tmp_path: Path) -> None:
    _write(tmp_path, {"base.vsm": BASE, "top.vsm": 'theory t "x"\nbuilds on "base.vsm"\nfields\n  scalar phi\n'})
    lines = str(_error(tmp_path / "top.vsm")).splitlines()
    assert lines[0].endswith("top.vsm:4:3: error: field 'phi' is declared again")
    assert lines[1] == "    scalar phi"
    note = next(k for k, text in enumerate(lines) if ": note: " in text)
    assert lines[note].endswith("base.vsm:8:3: note: the first declaration")
    assert lines[note + 1:note + 3] == ["    scalar phi mass m", "    ^"]


def test_a_base_keyword_after_a_section_is_a_syntax_error(tmp_path: Path) -> None:
    _write(tmp_path, {"top.vsm": 'theory t "x"\nfields\n  scalar s\nbuilds on "base.vsm"\n', "base.vsm": BASE})
    error = _error(tmp_path / "top.vsm")
    assert isinstance(error, ModelSyntaxError)
    assert error.span.line == 4


def test_a_chain_longer_than_the_budget_is_refused(tmp_path: Path) -> None:
    count = MODEL_FILES.limit + 2
    files = {f"f{k}.vsm": f'theory f{k} "x"\nbuilds on "f{k + 1}.vsm"\n' for k in range(count)}
    files[f"f{count}.vsm"] = BASE
    _write(tmp_path, files)
    error = _error(tmp_path / "f0.vsm")
    assert "files one model builds on" in error.message
    assert error.span.source is not None  # the line that asked for one file too many, in its own file


def test_an_unreadable_base_is_an_error_at_its_line(tmp_path: Path) -> None:
    _write(tmp_path, {"top.vsm": 'theory t "x"\nbuilds on "bin.vsm"\n'})
    (tmp_path / "bin.vsm").write_bytes(b'theory b "x"\n\xff\xfe\n')
    error = _error(tmp_path / "top.vsm")
    assert str(error).startswith(str(tmp_path / "bin.vsm") + ":2:1: error: byte 0xff is not UTF-8 text")
