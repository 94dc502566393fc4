"""Run one fuzz case through the command line, in-process, and say what kind of outcome it had.

Outcomes (`CLASSES`): `ok` (exit 0, output complete), `located` (an error at file:line:col with
the right source line under it), and the failures: `internal` (an internal error or an exception
escaping the command line), `hang` (past the time limit), `memory` (past the memory limit),
`partial` (an output file left behind by a failing command, or missing after a successful one),
`warning` (a Python or numpy warning reached the user), `wrong-line` (the line shown under an
error is not the file's line, or the position lies outside the file) and `unlocated` (an error
about the model that names no place in it).

`run_case` does the work in the calling process; `Worker` runs cases one after the other in a
forked child under a time limit (CPU seconds of the child, so that a loaded machine does not make
slow cases look hung) and a memory limit, killing and replacing it when a case overruns, so
that one hang cannot stall a campaign.
"""

from __future__ import annotations

import contextlib
import faulthandler
import io
import multiprocessing
import os
import re
import resource
import signal
import time
import warnings
from dataclasses import dataclass, replace
from pathlib import Path

from .mutate import Case

CLASSES = ("ok", "located", "internal", "hang", "memory", "partial", "warning", "wrong-line", "unlocated")
FAILURES = CLASSES[2:]
_HEADER = re.compile(r"^(?P<file>.+?):(?P<line>\d+):(?P<col>\d+): (?:error|warning|note): ")


@dataclass(frozen=True)
class Outcome:
    """What one case did: its class, a one-line signature of the failure, the exit code, the seconds."""

    kind: str
    signature: str
    exit_code: int
    seconds: float
    megabytes: float = 0.0  # peak resident memory above the resting worker, sampled every 20 ms


def file_lines(data: bytes) -> list[str]:
    """The lines of a model file as the tool numbers them: UTF-8, universal newlines, split at '\\n' only."""
    text = data.decode("utf-8", "replace")
    return text.replace("\r\n", "\n").replace("\r", "\n").split("\n")


def _normalise(message: str) -> str:
    """A failure message without numbers, names of temporary files or addresses: its signature."""
    message = re.sub(r"\S*case\.(?:vsm|out)", "FILE", message)
    message = re.sub(r"0x[0-9a-f]+", "ADDR", message)
    message = re.sub(r"\d+", "N", message)
    message = re.sub(r"'[^']*'", "'X'", message)
    return " ".join(message.split())[:160]


def check_positions(output: str, lines: list[str], model_name: str) -> str:
    """'' when every diagnostic in the output points inside the file and shows its line; else what is wrong."""
    rows = output.split("\n")
    for k, row in enumerate(rows):
        m = _HEADER.match(row)
        if not m or not m.group("file").endswith(model_name):
            continue
        line, col = int(m.group("line")), int(m.group("col"))
        if not 1 <= line <= len(lines):
            return f"line {line} outside a file of {len(lines)} lines"
        expected = "  " + lines[line - 1].expandtabs(1)
        shown = rows[k + 1] if k + 1 < len(rows) else ""
        if shown.startswith("  hint:") or shown != expected:
            return "shown line differs from the file's line"
        if col < 1 or col > len(lines[line - 1].expandtabs(1)) + 1:
            return f"column {col} outside its line"
    return ""


def run_case(case: Case, folder: Path) -> Outcome:
    """Run the case's command on its text in this process; classify the result."""
    from vertexsmith import cli

    model = folder / "case.vsm"
    out = folder / "case.out"
    if case.base == "hostile" and not case.text:  # built here, so that a 50 MB text never crosses the pipe
        from .hostile import HOSTILE

        case = replace(case, text=HOSTILE[case.recipe[0]]())
    data = case.text.encode("utf-8", "surrogatepass")
    model.write_bytes(data)
    if out.exists():
        out.unlink()
    argv = [a.replace("{model}", str(model)).replace("{out}", str(out)) for a in case.command]
    stdout, stderr = io.StringIO(), io.StringIO()
    start = time.perf_counter()
    with warnings.catch_warnings(record=True) as caught, \
            contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
        warnings.simplefilter("always")
        try:
            code = cli.main(argv)
        except BaseException as exc:  # noqa: BLE001 - anything escaping main is the finding
            if isinstance(exc, KeyboardInterrupt):
                raise
            seconds = time.perf_counter() - start
            return Outcome("internal", _normalise(f"escaped {type(exc).__name__}: {exc}"), -1, seconds)
    seconds = time.perf_counter() - start
    err, text = stderr.getvalue(), stdout.getvalue()
    if "internal error" in err:
        return Outcome("internal", _normalise(err.strip().splitlines()[0]), code, seconds)
    if caught:
        w = caught[0]
        return Outcome("warning", _normalise(f"{w.category.__name__}: {w.message}"), code, seconds)
    writes = "-o" in case.command
    lines = file_lines(data)
    wrong = check_positions(err + "\n" + text, lines, model.name)
    if wrong:
        return Outcome("wrong-line", wrong, code, seconds)
    if code == 0:
        if writes and (not out.exists() or out.stat().st_size == 0):
            return Outcome("partial", "success without an output file", code, seconds)
        return Outcome("ok", "", code, seconds)
    if writes and out.exists():
        return Outcome("partial", "failure left an output file", code, seconds)
    first = (err or text).strip().split("\n")[0]
    if _HEADER.match(first) or (case.command[0] == "check" and _HEADER.search(text or "")):
        return Outcome("located", "", code, seconds)
    if any(_HEADER.match(row) for row in (err + "\n" + text).split("\n")):
        return Outcome("located", "", code, seconds)
    return Outcome("unlocated", _normalise(first), code, seconds)


# ------------------------------------------------------------------ the forked worker

def _cpu_seconds(pid: int) -> float:
    """User and system CPU time of a process so far: the measure of a hang on a shared, loaded machine."""
    try:
        with open(f"/proc/{pid}/stat", encoding="ascii") as stat:
            fields = stat.read().rsplit(")", 1)[1].split()
        return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")
    except (OSError, IndexError, ValueError):
        return 0.0


def _rss_bytes(pid: int) -> int:
    try:
        with open(f"/proc/{pid}/status", encoding="ascii") as status:
            for row in status:
                if row.startswith("VmRSS:"):
                    return int(row.split()[1]) * 1024
    except OSError:
        return 0
    return 0


def _serve(connection: "multiprocessing.connection.Connection", folder: str, address_limit: int) -> None:
    if address_limit:
        resource.setrlimit(resource.RLIMIT_AS, (address_limit, address_limit))
    # on SIGUSR1 the stack goes to a file: the parent asks for it before killing a hung case
    faulthandler.register(signal.SIGUSR1, file=open(Path(folder) / "stack.txt", "w"), all_threads=False)
    while True:
        case = connection.recv()
        if case is None:
            return
        try:
            outcome = run_case(case, Path(folder))
        except MemoryError:
            outcome = Outcome("memory", "MemoryError", -1, 0.0)
        connection.send(outcome)


class Worker:
    """A forked child that runs cases one by one; killed and replaced when a case overruns."""

    def __init__(self, folder: Path, seconds: float = 10.0, memory: int = 500 * 2 ** 20,
                 address_limit: int = 4 * 2 ** 30) -> None:
        self.folder, self.seconds, self.memory, self.address_limit = folder, seconds, memory, address_limit
        self._process: multiprocessing.process.BaseProcess | None = None
        self._baseline = 0

    def _start(self) -> None:
        context = multiprocessing.get_context("fork")
        self._connection, child = context.Pipe()
        self._process = context.Process(target=_serve, args=(child, str(self.folder), self.address_limit),
                                        daemon=True)
        self._process.start()
        self._baseline = 0

    def run(self, case: Case) -> Outcome:
        """Run one case in the child; a hang or a blown memory limit kills the child."""
        if self._process is None or not self._process.is_alive():
            self._start()
        assert self._process is not None and self._process.pid is not None
        if not self._baseline:
            self._baseline = _rss_bytes(self._process.pid)
        self._connection.send(case)
        start = time.perf_counter()
        cpu_start = _cpu_seconds(self._process.pid)
        peak = 0
        while not self._connection.poll(0.02):
            elapsed = time.perf_counter() - start
            rss = _rss_bytes(self._process.pid)
            peak = max(peak, rss)
            # the limit is on CPU time (others share the machine), with wall time as a backstop
            cpu = _cpu_seconds(self._process.pid) - cpu_start
            if cpu > self.seconds or elapsed > 6 * self.seconds:
                where = self._stack()
                self.stop()
                what = (f"over {self.seconds:g} CPU s" if cpu > self.seconds
                        else f"over {6 * self.seconds:g} s of wall time")
                return Outcome("hang", f"{what} in {where}", -1, elapsed, (peak - self._baseline) / 2 ** 20)
            if rss - self._baseline > self.memory:
                self.stop()
                return Outcome("memory", f"over {self.memory // 2 ** 20} MB", -1, elapsed, rss / 2 ** 20)
            if not self._process.is_alive():
                self._process = None
                return Outcome("internal", "worker died", -1, elapsed)
        try:
            outcome: Outcome = self._connection.recv()
        except EOFError:
            self._process = None
            return Outcome("internal", "worker died", -1, time.perf_counter() - start)
        peak = max(peak, _rss_bytes(self._process.pid))
        # a worker that has grown (sympy's caches) is replaced so memory figures stay per case
        if _rss_bytes(self._process.pid) - self._baseline > self.memory // 2:
            self.stop()
        return replace(outcome, megabytes=round(max(0, peak - self._baseline) / 2 ** 20, 1))

    def _stack(self) -> str:
        """The innermost function of vertexsmith the hung worker is in (its stack, read via SIGUSR1)."""
        assert self._process is not None and self._process.pid is not None
        stack = self.folder / "stack.txt"
        try:
            os.kill(self._process.pid, signal.SIGUSR1)
            time.sleep(0.3)
            rows = stack.read_text(errors="replace").splitlines()
        except OSError:
            return "?"
        frames = [re.search(r'vertexsmith/(\S+)", line \d+ in (\S+)', row) for row in rows]
        named = [f"{m.group(1)}:{m.group(2)}" for m in frames if m]
        return named[0] if named else "?"

    def stop(self) -> None:
        if self._process is not None:
            self._process.kill()
            self._process.join()
            self._process = None
