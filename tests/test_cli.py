"""The command line: commands, exit codes (0 fine, 1 model errors, 2 unusable command or file),
error display, atomic output files and byte-identical output across hash seeds."""

from __future__ import annotations

import json
import os
import stat
import subprocess
import sys
import types
from pathlib import Path

import pytest

import vertexsmith
from vertexsmith._resources import shipped_models
from vertexsmith import load_model
from vertexsmith.cli import main

SRC = str(Path(vertexsmith.__file__).resolve().parents[1])

MISSPELT = """\
theory broken "a model with a misspelt coupling"
parameters
  mass m = 1 "mass"
  coupling g = 0.1 "cubic coupling"
fields
  scalar phi mass m "real scalar"
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2 - gg phi^3
"""

NO_KINETIC = """\
theory nokinetic "a field without a kinetic term"
parameters
  mass m = 1 "mass"
  coupling g = 0.1 "coupling"
fields
  scalar phi mass m "real scalar"
  scalar chi mass m "no kinetic term"
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2 - g phi^2 chi
"""


def run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


# ------------------------------------------------------------------ success

@pytest.mark.parametrize("argv, needle", [
    (["rules", "qed"], "−i e γ^μ₃"),
    (["rules", "qed", "--gauge", "feynman"], "Feynman gauge"),
    (["rules", "qed", "--format", "latex"], "\\documentclass"),
    (["rules", "qed", "--format", "latex", "--snippet"], "\\begin{align*}"),
    (["rules", "qed.vsm", "--format", "json"], '"format_version": "3.1"'),
], ids=["text", "gauge", "latex", "snippet", "json"])
def test_rules_succeeds(capsys: pytest.CaptureFixture[str], argv: list[str], needle: str) -> None:
    code, out, err = run(capsys, *argv)
    assert (code, err) == (0, "")
    assert needle in out


def test_rules_accepts_a_path(capsys: pytest.CaptureFixture[str]) -> None:
    path = str(vertexsmith.example("yukawa"))
    code, out, _ = run(capsys, "rules", path, "--format", "json")
    assert code == 0
    assert json.loads(out)["model"]["name"] == "yukawa"


def test_models_lists_every_shipped_model(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(capsys, "models")
    assert code == 0
    lines = out.splitlines()
    paths = shipped_models()
    assert len(lines) == len(paths)
    for line, path in zip(lines, paths):
        assert line.split()[0] == path.stem
        assert line.endswith(load_model(path).description)


# ------------------------------------------------------------------ errors in the model: exit 1

def test_model_error_shows_place_and_caret(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    path = write(tmp_path, "broken.vsm", MISSPELT)
    code, out, err = run(capsys, "rules", str(path))
    assert code == 1 and out == ""
    line = MISSPELT.splitlines()[7]
    column = line.index("gg") + 1
    lines = err.splitlines()
    assert lines[0].startswith(f"{path}:8:{column}: error:") and "'gg'" in lines[0]
    assert lines[1].strip() == line.strip()
    # the caret sits under the misspelt name
    assert lines[2].index("^") - lines[1].index(line.strip()) == line.strip().index("gg")
    assert "Traceback" not in err


def test_derivation_error_points_into_the_file(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    path = write(tmp_path, "nokinetic.vsm", NO_KINETIC)
    code, _, err = run(capsys, "rules", str(path))
    assert code == 1
    assert err.startswith(f"{path}:7:") and "chi" in err.splitlines()[0]
    assert "scalar chi mass m" in err and "^" in err and "Traceback" not in err


def test_internal_error_is_one_line(capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch) -> None:
    def broken(*args: object, **kwargs: object) -> str:
        raise RuntimeError("renderer exploded")

    monkeypatch.delenv("VERTEXSMITH_TRACEBACK", raising=False)
    monkeypatch.setattr("vertexsmith.render.render", broken)
    code, out, err = run(capsys, "rules", "phi4")
    assert code == 1 and out == ""
    assert err.count("\n") == 1 and err.startswith("vertexsmith: internal error")
    assert "renderer exploded" in err and "report" in err and "Traceback" not in err


# ------------------------------------------------------------------ unusable command or file: exit 2

@pytest.mark.parametrize("argv, needle", [
    (["rules", "no_such_model"], "no model file 'no_such_model'"),
    (["rules", "missing/dir/model.vsm"], "no model file"),
    (["rules", "qed", "--format", "pdf"], "invalid choice: 'pdf'"),
    (["rules", "qed", "--gauge", "landau"], "invalid choice: 'landau'"),
    (["rules", "qed", "--snippet"], "--snippet applies only to --format latex"),
    (["rules"], "required"),
    ([], "required"),
    (["frobnicate"], "invalid choice"),
], ids=["unknown-model", "missing-file", "bad-format", "bad-gauge", "snippet-without-latex", "no-model",
        "no-command", "unknown-command"])
def test_unusable_command_exits_2(capsys: pytest.CaptureFixture[str], argv: list[str], needle: str) -> None:
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == ""
    assert needle in err and "Traceback" not in err


def test_bad_option_prints_usage(capsys: pytest.CaptureFixture[str]) -> None:
    code, _, err = run(capsys, "rules", "qed", "--colour")
    assert code == 2 and err.startswith("usage: vertexsmith")


def test_folder_is_not_a_model(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    code, _, err = run(capsys, "rules", str(tmp_path))
    assert code == 2 and "is a folder" in err


# ------------------------------------------------------------------ -o FILE

def test_output_file_matches_stdout(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    target = tmp_path / "rules.json"
    assert run(capsys, "rules", "qed", "--format", "json", "-o", str(target)) == (0, "", "")
    _, out, _ = run(capsys, "rules", "qed", "--format", "json")
    assert target.read_bytes() == out.encode("utf-8")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rules.json"]
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE(target.stat().st_mode) == 0o666 & ~umask


def test_output_file_untouched_when_the_model_fails(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    model = write(tmp_path, "nokinetic.vsm", NO_KINETIC)
    fresh = tmp_path / "fresh.txt"
    old = write(tmp_path, "old.txt", "previous rules\n")
    assert run(capsys, "rules", str(model), "-o", str(fresh))[0] == 1
    assert run(capsys, "rules", str(model), "-o", str(old))[0] == 1
    assert not fresh.exists()
    assert old.read_text(encoding="utf-8") == "previous rules\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["nokinetic.vsm", "old.txt"]


def test_output_into_missing_folder_exits_2(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    code, _, err = run(capsys, "rules", "phi4", "-o", str(tmp_path / "nowhere" / "rules.txt"))
    assert code == 2 and "does not exist" in err


# ------------------------------------------------------------------ check

def _fake_checker(*severities: str) -> types.ModuleType:
    module = types.ModuleType("vertexsmith.check")

    class Diagnostic:
        def __init__(self, severity: str) -> None:
            self.severity = severity

        def __str__(self) -> str:
            return f"model.vsm:1:1: {self.severity}: something to say"

    module.check_model = lambda model: [Diagnostic(s) for s in severities]  # type: ignore[attr-defined]
    return module


@pytest.mark.parametrize("severities, expected", [
    ((), 0),
    (("warning", "note"), 0),
    (("note", "error"), 1),
], ids=["clean", "warnings-only", "an-error"])
def test_check_exit_code_follows_severity(capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch,
                                          severities: tuple[str, ...], expected: int) -> None:
    monkeypatch.setitem(sys.modules, "vertexsmith.check", _fake_checker(*severities))
    code, out, _ = run(capsys, "check", "qed")
    assert code == expected
    assert out.count("something to say") == len(severities)
    assert f"{sum(s == 'error' for s in severities)} error" in out.splitlines()[-1]


def test_check_reports_a_broken_model(capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch,
                                      tmp_path: Path) -> None:
    monkeypatch.setitem(sys.modules, "vertexsmith.check", _fake_checker())
    code, _, err = run(capsys, "check", str(write(tmp_path, "broken.vsm", MISSPELT)))
    assert code == 1 and ":8:" in err


def test_check_without_checker_module(capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setitem(sys.modules, "vertexsmith.check", None)  # makes the import fail as if missing
    code, _, err = run(capsys, "check", "qed")
    assert code == 2 and "vertexsmith.check is missing" in err and "Traceback" not in err


# ------------------------------------------------------------------ commands added by other modules

def test_plugin_modules_register_commands(capsys: pytest.CaptureFixture[str],
                                          monkeypatch: pytest.MonkeyPatch) -> None:
    export = types.ModuleType("vertexsmith.export")

    def add_command(subparsers: object) -> None:
        parser = subparsers.add_parser("export", help="test command")  # type: ignore[attr-defined]
        parser.add_argument("what")
        parser.set_defaults(func=lambda args: print(f"exported {args.what}") or 0)

    export.add_command = add_command  # type: ignore[attr-defined]
    monkeypatch.setitem(sys.modules, "vertexsmith.export", export)
    monkeypatch.setitem(sys.modules, "vertexsmith.compare", None)
    assert run(capsys, "export", "thing") == (0, "exported thing\n", "")
    assert run(capsys, "compare")[0] == 2


# ------------------------------------------------------------------ determinism across processes

_SCRIPT = """
import sys
from vertexsmith.cli import main
folder = sys.argv[1]
for model in ("dark_sector", "contact"):
    for fmt in ("text", "latex", "json"):
        assert main(["rules", model, "--format", fmt, "-o", f"{folder}/{model}.{fmt}"]) == 0
"""


def test_output_is_identical_across_hash_seeds(tmp_path: Path) -> None:
    runs = []
    for seed in ("0", "4242"):  # two processes side by side, to keep the suite fast
        folder = tmp_path / seed
        folder.mkdir()
        env = dict(os.environ, PYTHONHASHSEED=seed, PYTHONPATH=SRC + os.pathsep + os.environ.get("PYTHONPATH", ""),
                   PYTHONIOENCODING="utf-8")
        runs.append((folder, subprocess.Popen([sys.executable, "-c", _SCRIPT, str(folder)], env=env)))
    outputs = []
    for folder, process in runs:
        assert process.wait(timeout=120) == 0
        outputs.append({p.name: p.read_bytes() for p in sorted(folder.iterdir())})
    assert len(outputs[0]) == 6
    assert outputs[0] == outputs[1]
