"""Index spaces: derive time against the number of generations, symbolic and unrolled.

    python benchmarks/flavour.py            # the table (about a minute)
    python benchmarks/flavour.py --repeats 7

The model is the shipped lepton_flavour with its index space resized to N generations and its
three matrices rewritten (numbers invented): "dense" fills every entry, "diagonal" only the
diagonal (Kd stays hermitian either way). Each row is the median CPU time of --repeats runs of load +
derive in this process, sympy's cache cleared before each run.

What the issue asks, and what the table shows:
- symbolic indices: derive with N = 3 takes no more than 1.5 times derive with N = 1 (the
  rules do not depend on N; only the matrix values do);
- unrolled: the time grows with the number of vertices written, i.e. with the non-zero
  components (compare dense and diagonal at the same N).
"""

from __future__ import annotations

import argparse
import re
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "src"))

import vertexsmith as vs  # noqa: E402
from sympy.core.cache import clear_cache  # noqa: E402

BASE = (ROOT / "models" / "lepton_flavour.vsm").read_text(encoding="utf-8")


def _matrix(n: int, dense: bool, hermitian: bool) -> str:
    rows = []
    for i in range(n):
        row = []
        for j in range(n):
            if i == j:
                row.append(f"{0.1 * (i + 1):.2f}")
            elif not dense:
                row.append("0")
            elif hermitian:
                a, b = sorted((i, j))
                sign = "+" if i < j else "-"
                row.append(f"0.0{a + 1} {sign} 0.00{b + 1} I")
            else:
                row.append(f"0.0{i + 1} + 0.00{j + 1} I")
        rows.append("{" + ", ".join(row) + "}")
    return "{" + ", ".join(rows) + "}"


def model_text(n: int, dense: bool) -> str:
    """lepton_flavour with N generations; every matrix dense or diagonal (invented numbers)."""
    text = BASE.replace("gen 3 ", f"gen {n} ")
    for name in ("Ye", "Yn", "Kd"):
        pattern = re.compile(rf"({name}\[gen,gen\] = )\{{\{{.*?\}}\}}", re.S)
        text = pattern.sub(lambda m: m.group(1) + _matrix(n, dense, name == "Kd"), text)
    return text


def timed(text: str, unroll: bool, repeats: int) -> tuple[float, int]:
    times, count = [], 0
    for _ in range(repeats):
        clear_cache()
        start = time.process_time()  # CPU time: the machine is shared, wall time would measure the others
        rules = vs.load_model(text=text, name="bench.vsm").derive(unroll=unroll)
        times.append(time.process_time() - start)
        count = len(rules.vertices)
    return statistics.median(times), count


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    timed(model_text(1, True), False, 1)  # warm up: imports, the parser
    print(f"{'N':>2} {'matrices':>9} {'form':>9} {'vertices':>9} {'cpu s':>9} {'ms/vertex':>10}")
    symbolic: dict[int, float] = {}
    for n in (1, 2, 3, 4, 6):
        seconds, count = timed(model_text(n, True), False, args.repeats)
        symbolic[n] = seconds
        print(f"{n:>2} {'dense':>9} {'symbolic':>9} {count:>9} {seconds:>9.3f} {1000 * seconds / count:>10.2f}")
    for n in (1, 2, 3, 4, 6):
        for dense in (True, False):
            seconds, count = timed(model_text(n, dense), True, args.repeats)
            kind = "dense" if dense else "diagonal"
            print(f"{n:>2} {kind:>9} {'unrolled':>9} {count:>9} {seconds:>9.3f} {1000 * seconds / count:>10.2f}")
    print(f"\nsymbolic derive, 3 generations / 1 generation: {symbolic[3] / symbolic[1]:.2f} (asked: at most 1.5)")


if __name__ == "__main__":
    main()
