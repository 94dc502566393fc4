"""The built wheel carries what an installed vertexsmith needs: grammar, models, py.typed, the command.

The wheel is built once for the module, with hatchling's PEP 517 hook when hatchling is importable
and with `pip wheel` otherwise (pip then fetches the build backend into an isolated environment).
The build must finish within BUILD_SECONDS.
"""

from __future__ import annotations

import configparser
import importlib.util
import subprocess
import sys
import zipfile
from pathlib import Path
from typing import Iterator

import pytest

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "src" / "vertexsmith"
BUILD_SECONDS = 20


def _build_command(out: Path) -> list[str]:
    if importlib.util.find_spec("hatchling") is not None:
        hook = "import sys; from hatchling.build import build_wheel; print(build_wheel(sys.argv[1]))"
        return [sys.executable, "-c", hook, str(out)]
    return [sys.executable, "-m", "pip", "wheel", str(ROOT), "--no-deps", "--quiet", "-w", str(out)]


@pytest.fixture(scope="module")
def wheel(tmp_path_factory: pytest.TempPathFactory) -> Iterator[zipfile.ZipFile]:
    out = tmp_path_factory.mktemp("wheel")
    try:
        done = subprocess.run(_build_command(out), cwd=ROOT, capture_output=True, text=True,
                              timeout=BUILD_SECONDS, check=False)
    except subprocess.TimeoutExpired:
        pytest.fail(f"building the wheel took longer than {BUILD_SECONDS} s")
    assert done.returncode == 0, f"wheel build failed:\n{done.stdout}\n{done.stderr}"
    built = sorted(out.glob("vertexsmith-*.whl"))
    assert len(built) == 1, f"expected one wheel, found {[p.name for p in built]}"
    with zipfile.ZipFile(built[0]) as archive:
        yield archive


def _names(archive: zipfile.ZipFile) -> set[str]:
    return set(archive.namelist())


def test_wheel_carries_the_grammar_unchanged(wheel: zipfile.ZipFile) -> None:
    assert "vertexsmith/grammar/model.lark" in _names(wheel)
    assert wheel.read("vertexsmith/grammar/model.lark") == (ROOT / "grammar" / "model.lark").read_bytes()


@pytest.mark.parametrize("name", sorted(p.name for p in (ROOT / "models").iterdir() if p.is_file()))
def test_wheel_carries_every_shipped_model_file(wheel: zipfile.ZipFile, name: str) -> None:
    assert f"vertexsmith/models/{name}" in _names(wheel)
    assert wheel.read(f"vertexsmith/models/{name}") == (ROOT / "models" / name).read_bytes()


def test_wheel_carries_at_least_the_qed_example(wheel: zipfile.ZipFile) -> None:
    # the README's quick start runs `vertexsmith rules qed`
    assert "vertexsmith/models/qed.vsm" in _names(wheel)


def test_wheel_is_typed(wheel: zipfile.ZipFile) -> None:
    assert "vertexsmith/py.typed" in _names(wheel)


def test_wheel_carries_every_source_and_data_file_of_the_package(wheel: zipfile.ZipFile) -> None:
    expected = {f"vertexsmith/{p.relative_to(PACKAGE).as_posix()}" for p in PACKAGE.rglob("*")
                if p.is_file() and "__pycache__" not in p.parts and p.suffix != ".pyc"}
    missing = sorted(expected - _names(wheel))
    assert not missing, f"files missing from the wheel: {missing}"


def test_wheel_holds_nothing_outside_the_package_and_its_metadata(wheel: zipfile.ZipFile) -> None:
    stray = sorted(n for n in _names(wheel)
                   if not n.startswith("vertexsmith/") and not n.startswith("vertexsmith-"))
    assert not stray, f"unexpected files in the wheel: {stray}"


def test_wheel_declares_the_console_script(wheel: zipfile.ZipFile) -> None:
    (entry_points,) = [n for n in _names(wheel) if n.endswith(".dist-info/entry_points.txt")]
    parser = configparser.ConfigParser()
    parser.read_string(wheel.read(entry_points).decode("utf-8"))
    assert parser.get("console_scripts", "vertexsmith").strip() == "vertexsmith.cli:main"


def test_wheel_metadata_names_the_test_extra(wheel: zipfile.ZipFile) -> None:
    (metadata,) = [n for n in _names(wheel) if n.endswith(".dist-info/METADATA")]
    text = wheel.read(metadata).decode("utf-8")
    assert "Provides-Extra: test" in text
    assert "Name: vertexsmith" in text
