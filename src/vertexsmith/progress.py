"""Progress bars for long work, shown on a terminal and silent everywhere else.

Pipeline code announces its stages and steps without knowing who listens:

    step = stage("deriving vertices", total=len(groups))
    for group in groups:
        ...
        step.advance()

By default nobody listens and a step costs one method call. The command line turns the bars on
around a command with `shown(enabled)`; `wanted(quiet, stream)` says whether they should be on
(the stream is a terminal, no --quiet, no VERTEXSMITH_QUIET in the environment). The bars are
drawn by rich on stderr, only once a command has run for half a second (so quick commands never
flicker), and vanish when the command ends. Stages may nest (the checks derive the rules
again): each stage is a bar of its own, and advancing one never touches another.

    >>> step = stage("nothing to show", total=3)
    >>> step.advance()
"""

from __future__ import annotations

import os
import sys
import time
from contextlib import contextmanager
from contextvars import ContextVar
from typing import IO, Any, Iterator

_DELAY = 0.5  # seconds before a bar appears


class Step:
    """One stage's counter; `advance()` after each unit of work. The silent default does nothing."""

    def advance(self, amount: int = 1) -> None:
        """Count `amount` units of this stage as done."""


class _BarStep(Step):
    def __init__(self, bars: "_Bars", task: Any) -> None:
        self._bars = bars
        self._task = task

    def advance(self, amount: int = 1) -> None:
        self._bars.advance(self._task, amount)


class _Bars:
    """A rich progress display that starts itself only after the delay."""

    def __init__(self, stream: IO[str]) -> None:
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

        console = Console(file=stream, stderr=stream is sys.stderr)
        self._progress = Progress(TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(),
                                  TimeElapsedColumn(), console=console, transient=True)
        self._started_at = time.monotonic()
        self._running = False

    def stage(self, description: str, total: int | None) -> Step:
        task = self._progress.add_task(description, total=total)
        self._maybe_start()
        return _BarStep(self, task)

    def advance(self, task: Any, amount: int) -> None:
        self._progress.advance(task, amount)
        self._maybe_start()

    def _maybe_start(self) -> None:
        if not self._running and time.monotonic() - self._started_at >= _DELAY:
            self._progress.start()
            self._running = True

    def close(self) -> None:
        if self._running:
            self._progress.stop()
            self._running = False


_SILENT = Step()
_listener: ContextVar["_Bars | None"] = ContextVar("vertexsmith_progress", default=None)


def stage(description: str, total: int | None = None) -> Step:
    """Announce a stage of `total` steps (None: unknown); returns the counter to advance."""
    bars = _listener.get()
    return _SILENT if bars is None else bars.stage(description, total)


def wanted(quiet: bool = False, stream: IO[str] | None = None) -> bool:
    """Whether bars should show: on a terminal, without --quiet or VERTEXSMITH_QUIET."""
    target = sys.stderr if stream is None else stream
    if quiet or os.environ.get("VERTEXSMITH_QUIET"):
        return False
    isatty = getattr(target, "isatty", None)
    try:
        return bool(isatty and isatty())
    except ValueError:  # a closed stream
        return False


@contextmanager
def shown(enabled: bool, stream: IO[str] | None = None) -> Iterator[None]:
    """Show the stages announced inside this block as progress bars on `stream` (stderr) when enabled."""
    if not enabled:
        yield
        return
    bars = _Bars(sys.stderr if stream is None else stream)
    token = _listener.set(bars)
    try:
        yield
    finally:
        _listener.reset(token)
        bars.close()


__all__ = ["Step", "stage", "wanted", "shown"]
