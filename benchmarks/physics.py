"""Timing figures for the diagram census and `verify`, run by hand from the repository root:

    python benchmarks/physics.py

Not a test. Each command runs cold in a fresh process (median of 3), as a user would run it:
(a) `vertexsmith verify qed` (target < 2 s), (b) `vertexsmith verify qcd` (target < 10 s),
(c) the two-loop Bhabha census in QED with one lepton (target < 10 s); then, in one process, where
the time goes: loading and deriving, the census, and the amplitude evaluations.
"""

from __future__ import annotations

import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SOURCE = ROOT / "src"
sys.path.insert(0, str(SOURCE))

ONE_LEPTON = """theory qed1 "QED with one charged lepton"
parameters
  coupling e = 0.3
  mass me = 0.5
gauge
  qed U(1) boson A strength F coupling e fixing lorenz
fields
  vector A
  dirac ele mass me charge qed -1
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  bar(ele) (I gamma[mu] D[mu] - me) ele
"""


def cold(arguments: list[str]) -> tuple[float, float]:
    """Median wall time and median CPU time (user + system) of a fresh `vertexsmith` process.

    On a shared, loaded machine the wall time mostly measures the wait for a core; the CPU time
    is what the command itself costs.
    """
    walls, cpus = [], []
    for _ in range(3):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        start = time.perf_counter()
        subprocess.run([sys.executable, "-m", "vertexsmith", *arguments], check=False, capture_output=True,
                       env={"PYTHONPATH": str(SOURCE), "PATH": "/usr/bin:/bin"})
        walls.append(time.perf_counter() - start)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpus.append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    return statistics.median(walls), statistics.median(cpus)


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        model = Path(folder) / "qed1.vsm"
        model.write_text(ONE_LEPTON)
        rows = [("verify qed (default set)", cold(["verify", "qed"]), 2.0),
                ("verify qcd (default set)", cold(["verify", "qcd"]), 10.0),
                ("two-loop Bhabha census", cold(["diagrams", str(model), "ele bar(ele) -> ele bar(ele)",
                                                 "--loops", "2", "--no-external-self-energies"]), 10.0)]
        print(f"{'cold command':32} {'wall s':>8} {'CPU s':>8} {'target':>8}")
        for name, (wall, cpu), target in rows:
            print(f"{name:32} {wall:8.2f} {cpu:8.2f} {target:8.1f}")
        import vertexsmith
        from vertexsmith.diagrams import find_diagrams
        from vertexsmith.process import parse_process
        from vertexsmith.verify import verify_model

        print("\nwhere the time goes (one process, warm imports):")
        for name in ("qed", "qcd"):
            start = time.perf_counter()
            loaded = vertexsmith.load_model(vertexsmith.example(name))
            rules = loaded.derive()
            derived = time.perf_counter()
            verify_model(loaded)
            done = time.perf_counter()
            print(f"  {name}: load and derive {derived - start:.2f} s, checks {done - derived:.2f} s "
                  f"(verify derives again inside)")
        rules = vertexsmith.load_model(model).derive()
        process = parse_process(rules.model, "ele bar(ele) -> ele bar(ele)")
        start = time.perf_counter()
        found = find_diagrams(rules, process, 2, external_self_energies=False)
        print(f"  two-loop Bhabha census: {len(found)} diagrams in {time.perf_counter() - start:.2f} s")


if __name__ == "__main__":
    main()
