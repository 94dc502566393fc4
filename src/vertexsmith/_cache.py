"""A private, per-user folder where built parsers are kept between runs.

Building the LALR tables of a grammar costs about a tenth of a second, which is most of a cold
`vertexsmith rules qed` after sympy's import; lark can save a built parser and load it again.
Lark's own default puts that file, a pickle, in the shared temporary folder, where another user
could plant one, and writes it in place, where a concurrent run could read half of it. So the
file goes into a folder of our own that only its owner can write, under a name that holds a
digest of everything the parser depends on, and is written under a scratch name and renamed
into place (atomic on POSIX and Windows), so that concurrent runs never see half a file. The folder is `$VERTEXSMITH_CACHE` when set (an empty
value or `off` turns caching off), else `$XDG_CACHE_HOME/vertexsmith` or `~/.cache/vertexsmith`.
Nothing is ever written into the installed package, and a folder that cannot be created or
written (read-only home, sandbox) just means building the parser each time.
"""

from __future__ import annotations

import hashlib
import os
import secrets
import sys
from pathlib import Path
from typing import IO, Callable, TypeVar

_T = TypeVar("_T")
ENVIRONMENT = "VERTEXSMITH_CACHE"


def cache_folder() -> Path | None:
    """The cache folder, created if needed; None when caching is off or the folder is not safe to use."""
    setting = os.environ.get(ENVIRONMENT)
    try:
        if setting is not None:
            if setting.strip() in ("", "off"):
                return None
            folder = Path(setting)
        else:
            base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
            folder = Path(base) / "vertexsmith"
        folder.mkdir(mode=0o700, parents=True, exist_ok=True)
        if not _private(folder):
            return None
    except (OSError, RuntimeError):  # RuntimeError: no home folder to be found
        return None
    return folder


def _private(path: Path) -> bool:
    """Owned by us and writable by nobody else: a file found there may be unpickled."""
    if not hasattr(os, "getuid"):
        return True  # Windows: per-user profile folders
    info = path.stat()
    return info.st_uid == os.getuid() and not info.st_mode & 0o022


def cached_build(name: str, key: str, build: Callable[[], _T], save: Callable[[_T, IO[bytes]], None],
                 load: Callable[[IO[bytes]], _T]) -> _T:
    """`build()`, or `load` of the file a previous run wrote with `save`; the file is named by a digest of `key`.

    The file opens with the full digest on its own line, so a file from another version is never
    loaded; any failure to load (a damaged or foreign file) falls back to building.
    """
    folder = cache_folder()
    if folder is None:
        return build()
    digest = hashlib.sha256(f"{key}\0{sys.version_info[:2]}".encode("utf-8")).hexdigest()
    final = folder / f"{name}-{digest[:24]}.cache"
    try:
        if final.is_file() and _private(final):
            with final.open("rb") as stream:
                if stream.readline() == f"{digest}\n".encode("ascii"):
                    return load(stream)
    except Exception:  # noqa: BLE001 - whatever is wrong with the file, building is the answer
        pass
    result = build()
    scratch = folder / f".{final.name}.{os.getpid()}.{secrets.token_hex(4)}.tmp"
    try:
        with scratch.open("xb") as stream:
            stream.write(f"{digest}\n".encode("ascii"))
            save(result, stream)
        os.replace(scratch, final)
    except Exception:  # noqa: BLE001 - a read-only folder, a full disk: the cache only saves time
        try:
            os.unlink(scratch)
        except OSError:
            pass
    return result


__all__ = ["ENVIRONMENT", "cache_folder", "cached_build"]
