"""The fuzzing campaign of fuzzing/, in small: a fixed-seed run and every reproducer it ever found.

The long run is `python -m fuzzing.campaign` (see fuzzing/campaign.py); here a few hundred cases
of one seed run in-process, each under an alarm, and every saved reproducer in
fuzzing/reproducers/ must now end as `ok` or `located` (common practice, no source: a fuzzer's
findings become regression tests).
"""

from __future__ import annotations

import json
import signal
import sys
from collections import Counter
from pathlib import Path
from typing import Iterator

import pytest

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from fuzzing.mutate import Case, make_case  # noqa: E402
from fuzzing.runner import FAILURES, Outcome, check_positions, file_lines, run_case  # noqa: E402

SMALL = ("phi4", "yukawa", "qed", "scalar_qed", "contact", "dark_sector")
FAST_COMMANDS = [(("rules", "{model}", "-o", "{out}"), 3), (("rules", "{model}", "-f", "json", "-o", "{out}"), 1),
                 (("check", "{model}"), 1)]
REPRODUCERS = sorted((ROOT / "fuzzing" / "reproducers").glob("*.vsm"))


class _Alarm(Exception):
    pass


def _guarded(case: Case, folder: Path, seconds: float = 20.0) -> Outcome:
    """run_case under an alarm: a hang becomes an `internal` outcome naming the alarm, not a stuck suite."""
    def ring(signum: int, frame: object) -> None:
        raise _Alarm(f"over {seconds} s")

    previous = signal.signal(signal.SIGALRM, ring)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        return run_case(case, folder)
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)


@pytest.fixture(scope="module")
def bases() -> list[tuple[str, str]]:
    from vertexsmith._resources import shipped_models

    return [(p.stem, p.read_text(encoding="utf-8")) for p in shipped_models() if p.stem in SMALL]


def _cases(bases: list[tuple[str, str]], seed: int, count: int) -> Iterator[Case]:
    for index in range(count):
        yield make_case(seed, index, bases, FAST_COMMANDS)


def test_a_case_is_the_same_for_the_same_seed_and_index(bases: list[tuple[str, str]]) -> None:
    assert make_case(5, 17, bases) == make_case(5, 17, bases)
    assert make_case(5, 17, bases) != make_case(6, 17, bases)


def test_a_short_fixed_seed_campaign_finds_no_failure(bases: list[tuple[str, str]], tmp_path: Path) -> None:
    counts: Counter[str] = Counter()
    failures = []
    for case in _cases(bases, seed=2026, count=200):
        outcome = _guarded(case, tmp_path)
        counts[outcome.kind] += 1
        if outcome.kind in FAILURES:
            failures.append((case.index, case.recipe, outcome.kind, outcome.signature))
    assert not failures, failures[:5]
    # the mutations reach both ends: models that still derive, and errors at a place
    assert counts["ok"] > 20 and counts["located"] > 80, counts


@pytest.mark.parametrize("path", REPRODUCERS, ids=[p.stem for p in REPRODUCERS])
def test_every_reproducer_found_by_the_campaign_now_ends_well(path: Path, tmp_path: Path) -> None:
    recipe = json.loads(path.with_suffix(".cmd").read_text(encoding="utf-8"))
    text = path.read_bytes().decode("utf-8", "surrogatepass")
    case = Case(0, 0, recipe["base"], text, tuple(recipe["command"]), tuple(recipe["recipe"]))
    outcome = _guarded(case, tmp_path, seconds=10.0)
    assert outcome.kind in ("ok", "located"), (recipe["kind"], recipe["signature"], outcome)


def test_the_position_check_sees_a_wrong_source_line() -> None:
    # the classifier itself: a diagnostic whose shown line is not the file's line is flagged
    lines = file_lines(b"theory t\nfields\n\x0cx\n")
    good = "case.vsm:3:2: error: bad\n  \x0cx\n   ^"
    bad = "case.vsm:3:2: error: bad\n  x\n   ^"
    assert check_positions(good, lines, "case.vsm") == ""
    assert check_positions(bad, lines, "case.vsm") == "shown line differs from the file's line"
