"""Hostile inputs: each must stop within 10 s and 500 MB with an error that names a place.

    nice python benchmarks/hostile.py

Runs every input of `HOSTILE` through the command line in a guarded worker (see
`fuzzing/runner.py`: a forked process, killed past the time or memory limit) and prints one
row per input: outcome, seconds, peak memory above the resting worker, and the first line of
the message. `tests/test_hostile.py` runs the same inputs in-process, under an alarm.
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from fuzzing.hostile import HOSTILE, hostile_case  # noqa: E402
from fuzzing.runner import Worker  # noqa: E402


def main() -> int:
    from fuzzing.campaign import import_everything

    import_everything()
    bad = 0
    with tempfile.TemporaryDirectory(prefix="vshostile.") as folder:
        worker = Worker(Path(folder), seconds=10.0, memory=500 * 2 ** 20)
        print(f"{'input':<28} {'outcome':<10} {'seconds':>8} {'MB':>7}")
        try:
            for name in HOSTILE:
                outcome = worker.run(hostile_case(name, lazy=True))
                fine = outcome.kind in ("located", "ok") and outcome.seconds < 10 and outcome.megabytes < 500
                bad += not fine
                print(f"{name:<28} {outcome.kind:<10} {outcome.seconds:8.2f} {outcome.megabytes:7.1f}"
                      f"{'' if fine else '   <-- ' + outcome.signature}", flush=True)
        finally:
            worker.stop()
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
