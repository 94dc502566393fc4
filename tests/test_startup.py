"""Start-up cost: what `import vertexsmith` and the light commands import, and the parser cache.

Timing is measured in benchmarks/, never here; these tests pin the structure that makes start-up
fast (no sympy or numpy before a command needs them) and the safety of the on-disk parser cache
(private folder, atomic writes, read-only and damaged caches tolerated).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

import vertexsmith
from vertexsmith import _cache
from vertexsmith.parse import parse_text

HEAVY = ("sympy", "numpy", "rich", "lark")


def _imported_after(code: str, env: dict[str, str] | None = None) -> list[str]:
    """The heavy modules imported by running `code` in a fresh interpreter."""
    probe = (code + "\nimport sys, json\n"
             f"print(json.dumps([m for m in {HEAVY!r} if m in sys.modules]))")
    run = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True,
                         env={**os.environ, **(env or {})})
    loaded: list[str] = json.loads(run.stdout.splitlines()[-1])
    return loaded


def test_import_vertexsmith_loads_no_heavy_library():
    assert _imported_after("import vertexsmith; vertexsmith.example('qed'); vertexsmith.UsageError") == []


def test_help_and_version_load_no_heavy_library():
    code = ("import contextlib, io\nfrom vertexsmith.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    assert main(['--help']) == 0 and main(['--version']) == 0 and main(['compare', '--help']) == 0")
    assert _imported_after(code) == []


def test_models_command_needs_neither_sympy_nor_numpy():
    code = ("import contextlib, io\nfrom vertexsmith.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n    assert main(['models']) == 0")
    assert _imported_after(code) == ["lark"]


def test_the_public_names_arrive_on_first_use():
    code = "import vertexsmith\nvertexsmith.load_model\nvertexsmith.Vertex"
    assert "sympy" in _imported_after(code)
    assert vertexsmith.Rules.__name__ == "Rules" and callable(vertexsmith.load_model)
    with pytest.raises(AttributeError, match="no attribute 'nothing_here'"):
        vertexsmith.nothing_here  # noqa: B018 - the attribute access is the test


# ------------------------------------------------------------------ the parser cache

QED = vertexsmith.example("qed").read_text(encoding="utf-8")


def _parse_in_fresh_process(folder: str) -> str:
    code = ("from vertexsmith.parse import parse_text\nimport vertexsmith\n"
            "print(parse_text(vertexsmith.example('qed').read_text(encoding='utf-8')).theory.description)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         env={**os.environ, _cache.ENVIRONMENT: folder})
    assert run.stderr == ""
    return run.stdout.strip()


def test_cache_is_written_once_into_a_private_folder_and_reused(tmp_path: Path):
    folder = tmp_path / "cache"
    assert _parse_in_fresh_process(str(folder)) == "quantum electrodynamics with electron and muon"
    files = sorted(p.name for p in folder.iterdir())
    assert len(files) == 1 and files[0].startswith("parser-model-") and files[0].endswith(".cache")
    if hasattr(os, "getuid"):
        assert folder.stat().st_mode & 0o077 == 0
    stamp = (folder / files[0]).stat().st_mtime_ns
    assert _parse_in_fresh_process(str(folder)) == "quantum electrodynamics with electron and muon"
    assert (folder / files[0]).stat().st_mtime_ns == stamp  # read, not rewritten
    assert sorted(p.name for p in folder.iterdir()) == files  # no scratch files left behind


def test_a_damaged_cache_file_is_ignored(tmp_path: Path):
    folder = tmp_path / "cache"
    _parse_in_fresh_process(str(folder))
    (entry,) = folder.iterdir()
    entry.write_bytes(entry.read_bytes()[:100])  # as if a run had been killed while writing
    assert _parse_in_fresh_process(str(folder)) == "quantum electrodynamics with electron and muon"


@pytest.mark.skipif(not hasattr(os, "getuid") or os.getuid() == 0, reason="root may write anywhere")
def test_a_read_only_cache_folder_only_costs_time(tmp_path: Path):
    folder = tmp_path / "cache"
    folder.mkdir(mode=0o500)
    try:
        assert _parse_in_fresh_process(str(folder)) == "quantum electrodynamics with electron and muon"
        assert list(folder.iterdir()) == []
    finally:
        folder.chmod(0o700)


def test_a_folder_others_can_write_is_not_used(tmp_path: Path, monkeypatch: pytest.MonkeyPatch):
    folder = tmp_path / "shared"
    folder.mkdir()
    folder.chmod(0o777)
    monkeypatch.setenv(_cache.ENVIRONMENT, str(folder))
    assert _cache.cache_folder() is None
    monkeypatch.setenv(_cache.ENVIRONMENT, "off")
    assert _cache.cache_folder() is None


def _text_cache(folder: Path, key: str, calls: list[str]) -> str:
    def build() -> str:
        calls.append("build")
        return "built"

    def save(value: str, stream) -> None:  # type: ignore[no-untyped-def]
        stream.write(value.encode())

    def load(stream) -> str:  # type: ignore[no-untyped-def]
        calls.append("load")
        return str(stream.read().decode())

    return _cache.cached_build("thing", key, build, save, load)


def test_cached_build_loads_what_it_saved_and_never_a_foreign_file(tmp_path: Path,
                                                                    monkeypatch: pytest.MonkeyPatch):
    monkeypatch.setenv(_cache.ENVIRONMENT, str(tmp_path))
    calls: list[str] = []
    assert _text_cache(tmp_path, "key", calls) == "built"
    assert _text_cache(tmp_path, "key", calls) == "built"
    assert calls == ["build", "load"]
    (entry,) = tmp_path.iterdir()
    assert entry.suffix == ".cache"
    entry.write_bytes(b"not the digest\nbuilt")  # same name, another content: built again, then replaced
    assert _text_cache(tmp_path, "key", calls) == "built"
    assert calls == ["build", "load", "build"]
    assert _text_cache(tmp_path, "key", calls) == "built" and calls[-1] == "load"
    assert parse_text(QED).theory.name == "qed"


def test_a_cache_folder_that_cannot_be_made_only_costs_time(tmp_path: Path):
    blocker = tmp_path / "file"
    blocker.write_text("not a folder", encoding="utf-8")
    assert _parse_in_fresh_process(str(blocker / "cache")) == "quantum electrodynamics with electron and muon"
    assert blocker.read_text(encoding="utf-8") == "not a folder"


def test_printing_rules_needs_no_numpy():
    code = ("import contextlib, io\nfrom vertexsmith.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    for fmt in ('text', 'json', 'latex'):\n"
            "        assert main(['rules', 'qed', '--format', fmt]) == 0")
    loaded = _imported_after(code)
    assert "numpy" not in loaded and "sympy" in loaded


def test_numbers_still_come_when_asked_for():
    from vertexsmith.numeric import GAMMA, lower

    rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    assert rules.vertex("bar(ele)", "ele", "A").evaluate([[1, 0, 0, 0]] * 3).shape == (4, 4, 4)
    assert GAMMA.shape == (4, 4, 4) and callable(lower)
