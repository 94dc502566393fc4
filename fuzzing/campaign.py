"""The long fuzzing campaign: mutate the shipped models, run each case in a guarded worker, report.

    nice -n 19 python -m fuzzing.campaign --seeds 1 2 3 --cases 20000 [--seconds 10] [--minutes 60]

Each case runs the command line in a forked worker with a per-case time limit (default 10 s) and
a memory limit (default 500 MB above the worker's resting size); see `runner.Worker`. Every
distinct failure (class and normalised message) is shrunk to a small reproducer and saved in
`fuzzing/found/` as `CLASS-HASH.vsm` with the command beside it (`.cmd`); move a reproducer to
`fuzzing/reproducers/` once it is fixed, and `tests/test_fuzz_campaign.py` keeps it fixed. The
figures (cases per class, rate, time) print at the end and go to `--report` as JSON.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import sys
import tempfile
import time
from collections import Counter
from dataclasses import replace
from pathlib import Path

from .mutate import Case, make_case
from .runner import FAILURES, Outcome, Worker

HERE = Path(__file__).resolve().parent


def shipped_bases() -> list[tuple[str, str]]:
    """(name, text) of every shipped model: the seeds of the mutations."""
    from vertexsmith._resources import shipped_models

    return [(p.stem, p.read_text(encoding="utf-8")) for p in shipped_models()]


def shrink(case: Case, outcome: Outcome, run: "callable", budget: float = 60.0) -> Case:
    """Delete lines, then runs of characters, while the case keeps failing the same way."""
    deadline = time.monotonic() + budget

    def same(text: str) -> bool:
        if time.monotonic() > deadline:
            return False
        got = run(replace(case, text=text))
        return got.kind == outcome.kind and got.signature == outcome.signature

    text = case.text
    for unit in ("\n", None):
        pieces = text.split("\n") if unit else list(text)
        chunk = max(1, len(pieces) // 2)
        while chunk >= 1 and time.monotonic() < deadline:
            i = 0
            while i < len(pieces) and time.monotonic() < deadline:
                trial = pieces[:i] + pieces[i + chunk:]
                candidate = ("\n" if unit else "").join(trial)
                if trial and same(candidate):
                    pieces = trial
                else:
                    i += chunk
            chunk //= 2
            if not unit and len(pieces) > 400:  # character level only for short texts
                break
        text = ("\n" if unit else "").join(pieces)
    return replace(case, text=text)


def save(case: Case, outcome: Outcome, folder: Path) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    digest = hashlib.sha1(f"{outcome.kind}:{outcome.signature}".encode()).hexdigest()[:10]
    path = folder / f"{outcome.kind}-{digest}.vsm"
    path.write_bytes(case.text.encode("utf-8", "surrogatepass"))
    path.with_suffix(".cmd").write_text(json.dumps({
        "command": list(case.command), "kind": outcome.kind, "signature": outcome.signature,
        "seed": case.seed, "index": case.index, "base": case.base, "recipe": list(case.recipe)}, indent=1) + "\n")
    return path


def import_everything() -> None:
    """Import every module of vertexsmith now, so that forked workers all run the code as it was at start."""
    import importlib
    import pkgutil

    import vertexsmith

    for info in pkgutil.walk_packages(vertexsmith.__path__, "vertexsmith."):
        if not info.name.endswith("__main__"):  # that one runs the command line
            importlib.import_module(info.name)


def campaign(seeds: list[int], cases: int, seconds: float, memory_mb: int, minutes: float,
             found: Path, shrink_seconds: float, quiet: bool = False) -> dict:
    import_everything()
    bases = shipped_bases()
    counts: Counter[str] = Counter()
    failures: dict[tuple[str, str], str] = {}
    slowest = 0.0
    start = time.monotonic()
    stop_at = start + minutes * 60 if minutes else float("inf")
    per_seed: dict[int, int] = {}
    with tempfile.TemporaryDirectory(prefix="vsfuzz.") as scratch:
        worker = Worker(Path(scratch), seconds=seconds, memory=memory_mb * 2 ** 20)
        try:
            per_seed.update({seed: 0 for seed in seeds})
            # seeds take turns, so that a run stopped by --minutes has covered all of them alike
            for index, seed in ((i, s) for i in range(cases) for s in seeds):
                if time.monotonic() > stop_at:
                    break
                case = make_case(seed, index, bases)
                outcome = worker.run(case)
                counts[outcome.kind] += 1
                per_seed[seed] += 1
                slowest = max(slowest, outcome.seconds)
                key = (outcome.kind, outcome.signature)
                if outcome.kind in FAILURES and key not in failures:
                    small = shrink(case, outcome, worker.run, shrink_seconds)
                    failures[key] = str(save(small, outcome, found))
                    if not quiet:
                        print(f"[{seed}:{index}] {outcome.kind}: {outcome.signature} -> {failures[key]}",
                              flush=True)
                total = sum(counts.values())
                if not quiet and total % 500 == 0:
                    rate = total / (time.monotonic() - start)
                    print(f"{total} cases, {rate:.1f}/s, {dict(counts)}", flush=True)
        finally:
            worker.stop()
    elapsed = time.monotonic() - start
    total = sum(counts.values())
    return {"cases": total, "per_seed": per_seed, "seconds": round(elapsed, 1),
            "rate_per_second": round(total / elapsed, 2) if elapsed else 0.0, "classes": dict(sorted(counts.items())),
            "slowest_case_seconds": round(slowest, 2), "distinct_failures": {f"{k} | {s}": p for (k, s), p in
                                                                             sorted(failures.items())}}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--seeds", type=int, nargs="+", default=[1])
    parser.add_argument("--cases", type=int, default=1000, help="cases per seed")
    parser.add_argument("--seconds", type=float, default=10.0, help="time limit per case")
    parser.add_argument("--memory", type=int, default=500, help="memory limit per case, MB above the resting worker")
    parser.add_argument("--minutes", type=float, default=0.0, help="stop the whole campaign after this long")
    parser.add_argument("--shrink-seconds", type=float, default=60.0)
    parser.add_argument("--found", type=Path, default=HERE / "found")
    parser.add_argument("--report", type=Path)
    args = parser.parse_args(argv)
    figures = campaign(args.seeds, args.cases, args.seconds, args.memory, args.minutes, args.found,
                       args.shrink_seconds)
    text = json.dumps(figures, indent=1)
    print(text)
    if args.report:
        args.report.write_text(text + "\n")
    return 1 if any(figures["classes"].get(k) for k in FAILURES) else 0


if __name__ == "__main__":
    sys.exit(main())
