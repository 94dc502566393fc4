"""The engine's cost against the cost of merely writing the answer down, run by hand:

    python benchmarks/ratio.py                 # shipped models and both generated families
    python benchmarks/ratio.py --max 1000      # generated models up to 1000 vertices only
    python benchmarks/ratio.py --profile NAME  # also cProfile the engine on one model (a shipped name or
                                               # scalars-N / charged-N)

For each model, in one process (so that the machine's load cancels in the ratio):

    R = (load + derive + text rendering + JSON rendering) / floor

where the floor is the time to build the same final vertex and propagator expressions with sympy
and print them (`str` and `sympy.latex`, the two notations the outputs carry). The floor is built
from the derived expressions themselves: each is taken apart into a recipe (the classes and the
leaves of its tree) before the clock starts, and rebuilt from the recipe while it runs; the
rebuilt expressions are checked to be equal to the derived ones. Every figure is the median of
`--repeats` runs, each on a fresh load of the model text; sympy's caches are cleared before each
run of the engine and of the floor alike, so neither is flattered by the other's work.

Models: every shipped model, and two generated families of growing size (numbers invented):
  scalars-N  N real scalars with every cubic and quartic coupling among them, each its own
             parameter: C(N+2,3) + C(N+3,4) vertices (N = 12 gives 1729, N = 16 gives 4692);
  charged-N  a U(1) with N charged Dirac fermions and N charged complex scalars, and a quartic
             coupling for every pair of scalars: 3N + N(N+1)/2 vertices.
It prints R per model with the stage split (the share of load, derive, text and JSON in the
engine's time), and for each family the growth exponent b of T_engine ~ vertices^b, fitted by
least squares on log-log over the family's sizes.
"""

from __future__ import annotations

import argparse
import cProfile
import gc
import io
import math
import os
import pstats
import statistics
import sys
import time
from itertools import combinations_with_replacement
from pathlib import Path
from typing import Any, Callable

ROOT = Path(__file__).resolve().parents[1]
SOURCE = ROOT / "src"
if SOURCE.is_dir() and str(SOURCE) not in sys.path:
    sys.path.insert(0, str(SOURCE))  # measure the checkout, not an installed copy

import sympy  # noqa: E402
from sympy.core.cache import clear_cache  # noqa: E402

import vertexsmith as vs  # noqa: E402
from vertexsmith._resources import shipped_models  # noqa: E402
from vertexsmith.render import render  # noqa: E402

R_TARGET = 2.0
EXPONENT_TARGET = 1.05
SCALAR_SIZES = (4, 6, 8, 10, 12, 14, 16)
CHARGED_SIZES = (4, 8, 16, 32, 64, 90)


# ------------------------------------------------------------------ generated families

def scalars_model(n: int) -> str:
    """N real scalars with every cubic and quartic coupling, each its own parameter."""
    parameters = [f"  mass m{k} = {1 + k / 10:.2f}" for k in range(1, n + 1)]
    fields = [f"  scalar phi{k} real mass m{k}" for k in range(1, n + 1)]
    terms = []
    for k in range(1, n + 1):
        terms += [f"  1/2 d[mu] phi{k} d[mu] phi{k}", f"  - 1/2 m{k}^2 phi{k}^2"]
    for order in (3, 4):
        for number, legs in enumerate(combinations_with_replacement(range(1, n + 1), order), start=1):
            name = f"c{order}x{number}"
            parameters.append(f"  coupling {name} = {0.1 + (number % 17) / 100:.2f}")
            terms.append(f"  - {name} " + " ".join(f"phi{k}" for k in legs))
    return "\n".join([f'theory scalars{n} "all cubic and quartic couplings of {n} scalars (invented numbers)"',
                      "parameters", *parameters, "fields", *fields, "lagrangian", *terms, ""])


def charged_model(n: int) -> str:
    """A U(1) with N charged Dirac fermions, N charged complex scalars and every scalar quartic."""
    parameters = ["  coupling e = 0.3"]
    parameters += [f"  mass mf{k} = {1 + k / 10:.2f}" for k in range(1, n + 1)]
    parameters += [f"  mass ms{k} = {2 + k / 10:.2f}" for k in range(1, n + 1)]
    fields = ["  vector A"]
    fields += [f"  dirac f{k} mass mf{k} charge qed -1" for k in range(1, n + 1)]
    fields += [f"  scalar s{k} complex mass ms{k} charge qed +1" for k in range(1, n + 1)]
    terms = ["  -1/4 F[mu,nu] F[mu,nu]"]
    for k in range(1, n + 1):
        terms += [f"  bar(f{k}) (I gamma[mu] D[mu] - mf{k}) f{k}",
                  f"  dag(D[mu] s{k}) D[mu] s{k} - ms{k}^2 dag(s{k}) s{k}"]
    for i, j in combinations_with_replacement(range(1, n + 1), 2):
        parameters.append(f"  coupling l{i}x{j} = {0.01 * (1 + (i + j) % 7):.2f}")
        terms.append(f"  - l{i}x{j} dag(s{i}) s{i} dag(s{j}) s{j}")
    return "\n".join([f'theory charged{n} "U(1) with {n} charged pairs (invented numbers)"', "parameters",
                      *parameters, "gauge", "  qed U(1) boson A strength F coupling e", "fields", *fields,
                      "lagrangian", *terms, ""])


def model_text(name: str) -> str:
    family, _, size = name.partition("-")
    if family == "scalars" and size:
        return scalars_model(int(size))
    if family == "charged" and size:
        return charged_model(int(size))
    return vs.example(name).read_text(encoding="utf-8")


# ------------------------------------------------------------------ the floor: rebuild and print

def recipe(expr: sympy.Basic) -> Any:
    """The expression taken apart: leaves kept, every other node as (class, args, evaluate)."""
    if not expr.args:
        return expr
    args = tuple(recipe(a) for a in expr.args)
    func = expr.func
    if func in (sympy.Add, sympy.Mul, sympy.Pow):
        # the derived tree may hold an unevaluated product (coupling x structure): rebuild it as it is
        evaluate = func(*expr.args) == expr
        return (func, args, evaluate)
    return (func, args, None)


def rebuild(item: Any) -> sympy.Basic:
    if not isinstance(item, tuple):
        return item
    func, args, evaluate = item
    built = [rebuild(a) for a in args]
    return func(*built) if evaluate in (None, True) else func(*built, evaluate=False)


def floor_run(recipes: list[Any]) -> list[sympy.Basic]:
    """Build every expression from its recipe and print it as a string and as LaTeX."""
    out = []
    for item in recipes:
        expr = rebuild(item)
        str(expr)
        sympy.latex(expr)
        out.append(expr)
    return out


# ------------------------------------------------------------------ the engine

STAGES = ("load", "derive", "text", "json")


def engine_run(text: str, name: str) -> tuple[dict[str, float], Any]:
    times: dict[str, float] = {}
    start = time.perf_counter()
    model = vs.load_model(text=text, name=name)
    times["load"] = time.perf_counter() - (mark := start)
    mark = time.perf_counter()
    rules = model.derive()
    times["derive"] = time.perf_counter() - mark
    mark = time.perf_counter()
    render(rules, "text")
    times["text"] = time.perf_counter() - mark
    mark = time.perf_counter()
    render(rules, "json")
    times["json"] = time.perf_counter() - mark
    return times, rules


def measure(name: str, repeats: int) -> dict[str, Any]:
    text = model_text(name)
    engine: list[dict[str, float]] = []
    floor: list[float] = []
    rules = None
    for _ in range(repeats):
        clear_cache()
        gc.collect()
        times, rules = engine_run(text, f"{name}.vsm")
        engine.append(times)
        expressions = [v.factor for v in rules.vertices] + [p.factor for p in rules.propagators]
        recipes = [recipe(e) for e in expressions]
        clear_cache()
        gc.collect()
        start = time.perf_counter()
        rebuilt = floor_run(recipes)
        floor.append(time.perf_counter() - start)
        if rebuilt != expressions:
            raise SystemExit(f"{name}: the rebuilt expressions differ from the derived ones")
    assert rules is not None
    split = {stage: statistics.median(t[stage] for t in engine) for stage in STAGES}
    total = statistics.median(sum(t.values()) for t in engine)
    ratios = [sum(t.values()) / f for t, f in zip(engine, floor)]
    return {"name": name, "vertices": len(rules.vertices), "propagators": len(rules.propagators),
            "engine": total, "floor": statistics.median(floor), "R": statistics.median(ratios),
            "R_range": (min(ratios), max(ratios)), "split": split}


def exponent(rows: list[dict[str, Any]]) -> float:
    """Least-squares slope of log T_engine against log vertices."""
    xs = [math.log(r["vertices"]) for r in rows]
    ys = [math.log(r["engine"]) for r in rows]
    mx, my = statistics.fmean(xs), statistics.fmean(ys)
    return sum((x - mx) * (y - my) for x, y in zip(xs, ys)) / sum((x - mx) ** 2 for x in xs)


def _row(r: dict[str, Any]) -> str:
    split = r["split"]
    total = sum(split.values())
    shares = " ".join(f"{stage} {100 * split[stage] / total:3.0f}%" for stage in STAGES)
    low, high = r["R_range"]
    verdict = "ok" if r["R"] <= R_TARGET else "OVER"
    return (f"  {r['name']:<22} {r['vertices']:>5} {r['engine']:>9.3f} {r['floor']:>9.3f} "
            f"{r['R']:>6.2f} ({low:.2f}-{high:.2f}) {verdict:<4}  {shares}")


HEADER = (f"  {'model':<22} {'vert':>5} {'engine s':>9} {'floor s':>9} {'R':>6} {'(range)':<11} {'':<4}  "
          "stage split of the engine")


def profile(name: str) -> None:
    text = model_text(name)
    engine_run(text, name)  # warm
    clear_cache()
    profiler = cProfile.Profile()
    profiler.enable()
    engine_run(text, name)
    profiler.disable()
    out = io.StringIO()
    stats = pstats.Stats(profiler, stream=out)
    stats.sort_stats("cumulative").print_stats(30)
    stats.sort_stats("tottime").print_stats(20)
    print(out.getvalue())


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeats", type=int, default=3, help="runs per model (median; default 3)")
    parser.add_argument("--max", type=int, default=5000, help="largest generated model, in vertices")
    parser.add_argument("--only", choices=("shipped", "scalars", "charged"), action="append",
                        help="run only these groups (repeatable)")
    parser.add_argument("--profile", metavar="NAME", help="cProfile the engine on one model and stop")
    args = parser.parse_args(argv)
    if args.profile:
        profile(args.profile)
        return 0
    load = " ".join(f"{x:.2f}" for x in os.getloadavg()) if hasattr(os, "getloadavg") else "unknown"
    print(f"vertexsmith ratio benchmark; python {sys.version.split()[0]}, sympy {sympy.__version__}; "
          f"load average {load}; median of {args.repeats}")
    vs.load_model(vs.example("qed")).derive()  # the parser built, the modules imported
    groups = args.only or ["shipped", "scalars", "charged"]
    worst = 0.0
    if "shipped" in groups:
        print("\nshipped models")
        print(HEADER)
        for path in shipped_models():
            r = measure(path.stem, args.repeats)
            worst = max(worst, r["R"])
            print(_row(r), flush=True)
    for family, sizes, count in (("scalars", SCALAR_SIZES, lambda n: math.comb(n + 2, 3) + math.comb(n + 3, 4)),
                                 ("charged", CHARGED_SIZES, lambda n: 3 * n + n * (n + 1) // 2)):
        if family not in groups:
            continue
        print(f"\n{family}-N")
        print(HEADER)
        rows = []
        for n in sizes:
            if count(n) > args.max:
                continue
            r = measure(f"{family}-{n}", args.repeats)
            worst = max(worst, r["R"])
            rows.append(r)
            print(_row(r), flush=True)
        if len(rows) >= 2:
            b = exponent(rows)
            print(f"  growth exponent b (T ~ vertices^b): {b:.3f} "
                  f"({'ok' if b <= EXPONENT_TARGET else 'OVER'}, target {EXPONENT_TARGET})")
    print(f"\nlargest R: {worst:.2f} (target {R_TARGET})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
