"""Mutation testing of the physics core: plant small bugs, count how many the test suite catches.

Run by hand from the repository root (never in CI: a full run takes hours on two cores):

    pip install -e ".[mutation]"
    python benchmarks/mutation.py                 # mutate the scope in pyproject's [tool.mutmut]
    python benchmarks/mutation.py --only derive structures   # only these modules, resuming where it stopped
    python benchmarks/mutation.py --only derive --again      # their survivors again, after new tests
    python benchmarks/mutation.py --report        # summarise the last run, run nothing

The mutants come from mutmut (configured in pyproject.toml, [tool.mutmut]); this script runs it
at low priority, then reads its per-module result files and prints the mutation score

    score = killed / (all checked mutants - those listed as equivalent)

per module and overall, with every survivor that is not listed in `mutation_equivalent.txt`
beside this file. A survivor is triaged in one of two ways: a new test that kills it (a real
value from a source or an identity, like every other test), or a line in that file with the
mutant's name and one line of reasoning why no test can tell it from the original.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
EQUIVALENT = Path(__file__).resolve().parent / "mutation_equivalent.txt"
# mutmut's exit codes per mutant: 1 (tests failed) kills it, 0 survives, anything else is a timeout,
# a crash of the runner or a mutant not run yet
KILLED, SURVIVED = 1, 0


def equivalent_mutants() -> dict[str, str]:
    """Mutant name -> the reason it cannot be told apart from the original."""
    out: dict[str, str] = {}
    if EQUIVALENT.is_file():
        for line in EQUIVALENT.read_text(encoding="utf-8").splitlines():
            if line.strip() and not line.startswith("#"):
                name, _, reason = line.partition(" ")
                out[name] = reason.strip()
    return out


def read_results() -> dict[str, dict[str, int | None]]:
    """Module path -> mutant name -> exit code of its test run (None: not run)."""
    results: dict[str, dict[str, int | None]] = {}
    for meta in sorted((ROOT / "mutants").rglob("*.py.meta")):
        data = json.loads(meta.read_text(encoding="utf-8"))
        module = str(meta.relative_to(ROOT / "mutants")).removesuffix(".meta")
        results[module] = dict(sorted(data.get("exit_code_by_key", {}).items()))
    return results


def report() -> int:
    """Print the score per module and overall; exit 1 when an untriaged survivor remains."""
    equivalent = equivalent_mutants()
    totals: Counter[str] = Counter()
    survivors: list[str] = []
    print(f"{'module':48} {'mutants':>8} {'killed':>7} {'surv.':>6} {'equiv.':>7} {'other':>6} {'score':>7}")
    for module, codes in read_results().items():
        counts: Counter[str] = Counter()
        for name, code in codes.items():
            if name in equivalent:
                counts["equivalent"] += 1
            elif code == KILLED:
                counts["killed"] += 1
            elif code == SURVIVED:
                counts["survived"] += 1
                survivors.append(name)
            else:
                counts["other"] += 1
        totals.update(counts)
        judged = counts["killed"] + counts["survived"]
        score = f"{100 * counts['killed'] / judged:6.1f}%" if judged else "     -"
        print(f"{module:48} {len(codes):8} {counts['killed']:7} {counts['survived']:6} {counts['equivalent']:7} "
              f"{counts['other']:6} {score:>7}")
    judged = totals["killed"] + totals["survived"]
    if judged:
        print(f"\noverall: {totals['killed']} killed of {judged} non-equivalent mutants "
              f"({100 * totals['killed'] / judged:.1f} %); {totals['equivalent']} equivalent, "
              f"{totals['other']} timed out or not run")
    for name in survivors:
        print(f"  survived: {name}   (show it with: mutmut show {name})")
    return 1 if survivors else 0


def selected(modules: list[str], again: bool) -> list[str]:
    """The mutant names (or patterns) to run for these modules: the ones without a result yet.

    mutmut re-runs every mutant it is given by name, so a stopped run resumes by naming only the
    mutants still pending; `again` adds the survivors, to see whether a new test kills them. Before
    the first run no mutant exists yet, and a pattern per module lets mutmut generate them.
    """
    prefixes = [f"vertexsmith.{module}." for module in modules]
    names = []
    for module, codes in read_results().items():
        for name, code in codes.items():
            if name.startswith(tuple(prefixes)) and (code is None or (again and code not in (KILLED,))):
                names.append(name)
    if not read_results():
        return [f"{prefix}*" for prefix in prefixes]
    return names


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--report", action="store_true", help="only summarise the last run")
    parser.add_argument("--only", nargs="+", metavar="MODULE",
                        help="run only these modules' mutants (derive, structures, render.latex ...)")
    parser.add_argument("--again", action="store_true",
                        help="with --only: run the survivors and unfinished mutants again (after a new test)")
    parser.add_argument("--children", type=int, default=1, help="parallel test processes (default 1)")
    args = parser.parse_args(argv)
    if not args.report:
        command = ["mutmut", "run", "--max-children", str(args.children)]
        if args.only:
            command += selected(args.only, args.again)
            if len(command) == 4:
                print("every mutant of those modules has a result already (use --again)", file=sys.stderr)
                return report()
        # low priority: the machine is shared, and a mutation run is a background job
        subprocess.run(command, cwd=ROOT, check=False, preexec_fn=lambda: os.nice(19))
    return report()


if __name__ == "__main__":
    sys.exit(main())
