"""Timing figures for vertexsmith, run by hand from the repository root:

    python benchmarks/run.py              # all sections
    python benchmarks/run.py --profile    # also profile load_model() and derive() on the largest model

Not a test: it prints a table of wall times and ratios, with the targets beside them.

(a) cold `vertexsmith --help`, `models` and `rules MODEL` for every shipped model, and `import
    vertexsmith`, each a fresh process (median of 3), wall and CPU time;
(b) load_model() and derive() on generated models of 50, 200 and 1000 Lagrangian lines (real
    scalars with kinetic and mass terms, cubic and quartic couplings among them, Yukawa couplings
    to a few Dirac fermions; every term on its own line, every coupling declared), with the time
    per line: the per-line cost of the largest model over that of the smallest should stay near 1
    (the work is linear in the number of lines), and derive() of 1000 lines should take < 20 s;
(c) one operator of six identical scalars with two derivatives, c d[mu] phi d[mu] phi phi^4.

The generated models are random but seeded, so every run derives the same Lagrangian.
"""

from __future__ import annotations

import argparse
import cProfile
import importlib.util
import io
import os
import platform
import pstats
import random
import resource
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path
from typing import Callable

ROOT = Path(__file__).resolve().parents[1]
SOURCE = ROOT / "src"
if SOURCE.is_dir() and str(SOURCE) not in sys.path:
    # measure the checkout, not whatever copy happens to be installed
    sys.path.insert(0, str(SOURCE))

import vertexsmith as vs  # noqa: E402
from vertexsmith._resources import shipped_models  # noqa: E402

CLI_TARGET_S = 0.6  # `rules qed`, cold, one process
HELP_TARGET_S = 0.15  # `--help`, cold
IMPORT_TARGET_S = 0.1  # `python -c "import vertexsmith"`, cold, Python's own start included
LARGE_TARGET_S = 20.0  # derive() of the 1000-line model
SIZES = (50, 200, 1000)
FERMIONS = 3
REPEATS = 3


# ------------------------------------------------------------------ helpers

def _median_time(run: Callable[[], object], repeats: int) -> float:
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        run()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def _table(header: tuple[str, ...], rows: list[tuple[str, ...]]) -> str:
    widths = [max(len(str(c)) for c in column) for column in zip(header, *rows)]
    lines = ["  ".join(str(c).ljust(w) for c, w in zip(header, widths)).rstrip(),
             "  ".join("-" * w for w in widths)]
    lines += ["  ".join(str(c).ljust(w) for c, w in zip(row, widths)).rstrip() for row in rows]
    return "\n".join("  " + line for line in lines)


def _version(module: str) -> str:
    try:
        return __import__(module).__version__
    except Exception:  # a missing optional module is reported, not fatal
        return "not installed"


def print_machine() -> None:
    print("machine")
    print(f"  cores        {os.cpu_count()}")
    print(f"  platform     {platform.platform()}")
    print(f"  python       {platform.python_version()} ({sys.executable})")
    for module in ("numpy", "sympy", "lark"):
        print(f"  {module:<12} {_version(module)}")
    print(f"  vertexsmith  {vs.__version__} ({Path(vs.__file__).parent})")
    print()


# ------------------------------------------------------------------ (a) the command line, cold

def _cli_command() -> tuple[list[str], dict[str, str]] | None:
    """The command that runs the CLI, and its environment; None when there is no CLI yet."""
    env = dict(os.environ)
    script = shutil.which("vertexsmith")
    if script is not None:
        return [script], env
    if importlib.util.find_spec("vertexsmith.cli") is None:
        return None
    env["PYTHONPATH"] = os.pathsep.join(p for p in (str(SOURCE), env.get("PYTHONPATH", "")) if p)
    return [sys.executable, "-m", "vertexsmith.cli"], env


def _child_cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def _run_cold(command: list[str], env: dict[str, str], repeats: int) -> tuple[float, float, str]:
    """Median wall and CPU seconds of `repeats` fresh processes, and 'ok' or what went wrong."""
    walls, cpus = [], []
    for _ in range(repeats):
        cpu = _child_cpu()
        start = time.perf_counter()
        done = subprocess.run(command, env=env, capture_output=True, text=True, check=False)
        walls.append(time.perf_counter() - start)
        cpus.append(_child_cpu() - cpu)
        if done.returncode != 0:
            first = (done.stderr.strip().splitlines() or ["no output"])[0]
            return statistics.median(walls), statistics.median(cpus), f"exit {done.returncode}: {first[:60]}"
    return statistics.median(walls), statistics.median(cpus), "ok"


def bench_cli(repeats: int) -> None:
    print("(a) cold command line, one process per run, median of", repeats)
    found = _cli_command()
    if found is None:
        print("  skipped: vertexsmith.cli does not exist yet and no `vertexsmith` command is on PATH\n")
        return
    command, env = found
    print(f"  command: {' '.join(command)} rules MODEL")
    print(f"  load average before: {_load_average()} (wall times grow with it; CPU times much less)")
    import_env = dict(env)
    import_env["PYTHONPATH"] = os.pathsep.join(p for p in (str(SOURCE), env.get("PYTHONPATH", "")) if p)
    def verdict(limit: float, wall: float, cpu: float) -> str:
        return f"< {limit} s: wall {'met' if wall < limit else 'MISSED'}, cpu {'met' if cpu < limit else 'MISSED'}"

    rows = []
    wall, cpu, status = _run_cold([sys.executable, "-c", "pass"], import_env, repeats)
    rows.append(("(python alone)", f"{wall:.3f}", f"{cpu:.3f}", "", status))
    wall, cpu, status = _run_cold([sys.executable, "-c", "import vertexsmith"], import_env, repeats)
    rows.append(("(python + import vertexsmith)", f"{wall:.3f}", f"{cpu:.3f}", verdict(IMPORT_TARGET_S, wall, cpu),
                 status))
    for words, limit in ((["--help"], HELP_TARGET_S), (["models"], None)):
        wall, cpu, status = _run_cold(command + words, env, repeats)
        rows.append((" ".join(words), f"{wall:.3f}", f"{cpu:.3f}", verdict(limit, wall, cpu) if limit else "", status))
    for path in shipped_models():
        wall, cpu, status = _run_cold(command + ["rules", path.stem], env, repeats)
        target = verdict(CLI_TARGET_S, wall, cpu) if path.stem == "qed" else ""
        rows.append((f"rules {path.stem}", f"{wall:.3f}", f"{cpu:.3f}", target, status))
    print(_table(("command", "wall s", "cpu s", "target", "status"), rows))
    print()


def _load_average() -> str:
    try:
        return " ".join(f"{x:.2f}" for x in os.getloadavg())
    except OSError:  # not available on every platform
        return "unknown"


# ------------------------------------------------------------------ (b) generated models

def generate_model(lines: int, seed: int = 1) -> str:
    """A model text with `lines` Lagrangian lines: a tenth of them scalar kinetic and mass terms."""
    rng = random.Random(seed)
    scalars = max(3, lines // 10)
    interactions = lines - 2 * scalars - 2 * FERMIONS
    if interactions < 1:
        raise ValueError(f"{lines} lines are too few for the generated model")
    parameters = [f"  mass m{k} = {1.0 + k / 10:.2f}" for k in range(1, scalars + 1)]
    parameters += [f"  mass mf{j} = {0.5 + j / 10:.2f}" for j in range(1, FERMIONS + 1)]
    fields = [f"  scalar phi{k} real mass m{k}" for k in range(1, scalars + 1)]
    fields += [f"  dirac psi{j} mass mf{j}" for j in range(1, FERMIONS + 1)]
    terms = []
    for k in range(1, scalars + 1):
        terms.append(f"  1/2 d[mu] phi{k} d[mu] phi{k}")
        terms.append(f"  - 1/2 m{k}^2 phi{k}^2")
    for j in range(1, FERMIONS + 1):
        terms.append(f"  bar(psi{j}) I gamma[mu] d[mu] psi{j}")
        terms.append(f"  - mf{j} bar(psi{j}) psi{j}")
    for n in range(1, interactions + 1):
        roll = rng.random()
        a, b, c = (rng.randint(1, scalars) for _ in range(3))
        if roll < 0.5:
            parameters.append(f"  coupling k{n} = {rng.uniform(0.1, 2.0):.3f}")
            terms.append(f"  - k{n} phi{a} phi{b} phi{c}")
        elif roll < 0.85:
            parameters.append(f"  coupling q{n} = {rng.uniform(0.01, 0.5):.3f}")
            terms.append(f"  - q{n}/4 phi{a}^2 phi{b} phi{c}")
        else:
            j, i = rng.randint(1, FERMIONS), rng.randint(1, FERMIONS)
            parameters.append(f"  coupling y{n} = {rng.uniform(0.01, 1.0):.3f}")
            if i == j:
                terms.append(f"  - y{n} phi{a} bar(psi{j}) psi{j}")
            else:  # a hermitian off-diagonal pair
                terms.append(f"  - y{n} phi{a} (bar(psi{j}) psi{i} + bar(psi{i}) psi{j})")
    assert len(terms) == lines
    return "\n".join([f'theory generated{lines} "generated benchmark model, {lines} lines (invented numbers)"',
                      "parameters", *parameters, "fields", *fields, "lagrangian", *terms, ""])


def bench_generated(sizes: tuple[int, ...], profile: bool) -> None:
    print("(b) generated models: load_model() (parse + build) and derive(), one run each")
    # warm up (lark builds its parser, sympy fills its caches) so the smallest model is not charged for it
    vs.load_model(vs.example("phi4")).derive()
    rows = []
    first: tuple[float, float] | None = None
    for size in sizes:
        text = generate_model(size)
        start = time.perf_counter()
        model = vs.load_model(text=text, name=f"generated{size}.vsm")
        loaded = time.perf_counter() - start
        start = time.perf_counter()
        rules = model.derive()
        derived = time.perf_counter() - start
        per_line = (loaded / size, derived / size)
        first = first or per_line
        target = ""
        if size == max(sizes):
            verdict = "met" if derived < LARGE_TARGET_S else "MISSED"
            total = "met" if loaded + derived < LARGE_TARGET_S else "MISSED"
            target = f"derive < {LARGE_TARGET_S:.0f} s: {verdict}; load + derive: {total}"
        rows.append((str(size), str(len(rules.vertices)), f"{loaded:.2f}", f"{derived:.2f}",
                     f"{1000 * per_line[0]:.1f}", f"{1000 * per_line[1]:.1f}",
                     f"{per_line[0] / first[0]:.2f}", f"{per_line[1] / first[1]:.2f}", target))
    print(_table(("lines", "vertices", "load s", "derive s", "load ms/line", "derive ms/line",
                  f"load per-line / {sizes[0]}", f"derive per-line / {sizes[0]}", "target"), rows))
    print()
    if profile:
        size = max(sizes)
        text = generate_model(size)
        for what, run in (("load_model()", lambda: vs.load_model(text=text, name="generated.vsm")),
                          ("derive()", vs.load_model(text=text, name="generated.vsm").derive)):
            profiler = cProfile.Profile()
            profiler.enable()
            run()
            profiler.disable()
            out = io.StringIO()
            stats = pstats.Stats(profiler, stream=out)
            stats.sort_stats("cumulative").print_stats(20)
            stats.sort_stats("tottime").print_stats(10)
            print(f"profile of {what} on the {size}-line model")
            print(out.getvalue())


# ------------------------------------------------------------------ (c) one large operator

SIX_SCALARS = """theory six_scalars "six identical scalars, two derivatives (invented numbers)"
parameters
  mass m = 1.0
  coupling c = 0.1
fields
  scalar phi real mass m
lagrangian
  1/2 d[mu] phi d[mu] phi - 1/2 m^2 phi^2
  c d[mu] phi d[mu] phi phi^4
"""


def bench_operator(repeats: int) -> None:
    print("(c) one operator: c d[mu] phi d[mu] phi phi^4 (a six-point vertex), median of", repeats)
    model = vs.load_model(text=SIX_SCALARS, name="six_scalars.vsm")
    seconds = _median_time(model.derive, repeats)
    vertex = model.derive().vertex(*["phi"] * 6)
    print(_table(("operator", "derive s", "terms"), [("c d phi d phi phi^4", f"{seconds:.3f}",
                                                      str(len(vertex.terms)))]))
    print()


def bench_non_abelian(repeats: int) -> None:
    print("(d) non-abelian models: load_model() + derive() in a fresh process after `import vertexsmith`",
          "(sympy's caches cold), median of", repeats)
    probe = ("import time, vertexsmith as vs; t = time.perf_counter(); "
             "r = vs.load_model(vs.example({name!r})).derive(); print(time.perf_counter() - t, len(r.vertices))")
    env = dict(os.environ, PYTHONPATH=str(Path(vs.__file__).resolve().parents[1]))
    rows = []
    for name in ("qcd", "su2_yang_mills", "dark_su2", "electroweak_unbroken"):
        times, vertices = [], "?"
        for _ in range(repeats):
            out = subprocess.run([sys.executable, "-c", probe.format(name=name)], capture_output=True, text=True,
                                 env=env, check=True).stdout.split()
            times.append(float(out[0]))
            vertices = out[1]
        seconds = statistics.median(times)
        rows.append((name, vertices, f"{seconds:.2f}", "< 3 s", "ok" if seconds < 3 else "SLOW"))
    print(_table(("model", "vertices", "seconds", "target", "status"), rows))
    print()


def bench_export(points: int) -> None:
    print(f"(e) exported Python module: one three-point vertex over {points:,} phase-space points")
    import importlib.util
    import tempfile

    import numpy as np

    from vertexsmith.export import export_model

    rows = []
    with tempfile.TemporaryDirectory() as folder:
        # the three-gluon vertex has 4*8*4*8*4*8 numbers per point: 48 GiB at 10^5 points, so not here
        for name, labels in (("qed", ("bar(ele)", "ele", "A")), ("scalar_qed", ("phi", "dag(phi)", "A")),
                             ("axion_like", ("bar(f)", "f", "a"))):
            target = Path(folder) / f"rules_{name}.py"
            export_model(name, to="python", output=target, gauge="feynman")
            spec = importlib.util.spec_from_file_location(f"rules_{name}", target)
            assert spec is not None and spec.loader is not None
            module = importlib.util.module_from_spec(spec)
            spec.loader.exec_module(module)
            function = module.VERTICES[labels]
            momenta = np.random.default_rng(1).normal(size=(len(labels), points, 4))
            seconds = _median_time(lambda: function(*momenta), 3)
            rows.append((name, " ".join(labels), f"{seconds:.3f}", f"{seconds / points * 1e6:.2f}"))
    print(_table(("model", "vertex", "seconds", "us/point"), rows))
    print()


def bench_compare(repeats: int) -> None:
    print("(f) `compare` of a hand-rules file with the derived rules (in process, derive included), median of",
          repeats)
    from vertexsmith.compare import compare_files

    examples = Path(__file__).resolve().parents[1] / "examples"
    rows = []
    for name, hand in (("qed", "qed.hand"), ("dark_sector", "dark_sector.hand")):
        seconds = _median_time(lambda: compare_files(name, examples / hand), repeats)
        report = compare_files(name, examples / hand)
        rows.append((name, hand, str(len(report.entries)), f"{seconds:.2f}"))
    print(_table(("model", "hand file", "rules compared", "seconds"), rows))
    print()


_EVALUATE_PROBE = """
import statistics, sys, time
import numpy as np, vertexsmith as vs
name, labels, points = sys.argv[1], sys.argv[2].split(), int(sys.argv[3])
vertex = vs.load_model(vs.example(name)).derive().vertex(*labels)
momenta = np.random.default_rng(1).normal(size=(points, len(labels), 4))
start = time.perf_counter(); vertex.evaluate(momenta); first = time.perf_counter() - start
later = []
for _ in range(5):
    start = time.perf_counter(); vertex.evaluate(momenta); later.append(time.perf_counter() - start)
print(first, statistics.median(later))
"""


def bench_evaluate() -> None:
    print("(g) vertex.evaluate() on a batch of phase-space points, fresh process: the first call (compiles",
          "to numpy) and the median of 5 later calls")
    env = dict(os.environ, PYTHONPATH=str(Path(vs.__file__).resolve().parents[1]))
    rows = []
    # the four-gluon vertex has no momenta: a batch is a read-only view of one 4^4 8^4 tensor; the
    # three-gluon one is materialised (32768 numbers per point), the quark-gluon one has no momenta either
    for name, labels, points, target in (("qcd", "G G G G", 10_000, (0.2, 0.1)), ("qcd", "G G G", 100, None),
                                         ("qcd", "bar(u) u G", 10_000, None), ("qed", "bar(ele) ele A", 10_000, None)):
        out = subprocess.run([sys.executable, "-c", _EVALUATE_PROBE, name, labels, str(points)], capture_output=True,
                             text=True, env=env, check=True).stdout.split()
        first, later = float(out[0]), float(out[1])
        status = ("ok" if first < target[0] and later < target[1] else "SLOW") if target else ""
        rows.append((name, labels, f"{points:,}", f"{first:.3f}", f"{later:.4f}",
                     f"< {target[0]} / < {target[1]}" if target else "", status))
    print(_table(("model", "vertex", "points", "first s", "later s", "target", "status"), rows))
    print()


def bench_invariance(repeats: int) -> None:
    print("(h) symmetry checks (SU(N) contractions, global charges) against derive + check, every shipped model,",
          "in process, median of", repeats)
    from vertexsmith._resources import shipped_models
    from vertexsmith.check import check_model
    from vertexsmith.invariance import find_violations

    rows = []
    for path in shipped_models():
        model = vs.load_model(path)
        monomials = model.monomials()
        derive = _median_time(model.derive, repeats)
        check = _median_time(lambda: check_model(model), repeats)
        symmetry = _median_time(lambda: find_violations(model, monomials), repeats)
        share = symmetry / (derive + check)
        rows.append((path.stem, str(len(monomials)), f"{derive:.3f}", f"{check:.3f}", f"{symmetry * 1e3:.2f}",
                     f"{share:.1%}", "ok" if share <= 0.10 else "SLOW"))
    print(_table(("model", "monomials", "derive s", "check s", "symmetry ms", "share", "<= 10 %"), rows))
    print()


_DERIVE_AND_CHECK = """
import sys, time
import vertexsmith as vs
from vertexsmith.check import check_model
model = vs.load_model(vs.example(sys.argv[1]))
t = time.process_time(); model.derive(); d = time.process_time() - t
t = time.process_time(); check_model(model); c = time.process_time() - t
print(d, c)
"""


def _derive_and_check_cold(name: str, source: Path | None, repeats: int) -> tuple[float, float] | None:
    """Median CPU seconds of derive() and check_model() in fresh processes (source: another src/ tree)."""
    env = dict(os.environ)
    if source is not None:
        env["PYTHONPATH"] = str(source)
    runs = []
    for _ in range(repeats):
        done = subprocess.run([sys.executable, "-c", _DERIVE_AND_CHECK, name], capture_output=True, text=True,
                              env=env, cwd=str(source.parent) if source is not None else None)
        if done.returncode != 0:
            return None
        runs.append(tuple(float(x) for x in done.stdout.split()))
    return statistics.median(r[0] for r in runs), statistics.median(r[1] for r in runs)


def bench_quadratic(repeats: int, baseline: Path | None) -> None:
    print("(i) the quadratic form K_ij(p) and its inversion, every shipped model, in process, median of", repeats)
    from vertexsmith._resources import shipped_models
    from vertexsmith.check import check_model
    from vertexsmith.derive import gauge_fixing_monomials, ghost_monomials, has_ghosts
    from vertexsmith.propagate import propagators_from
    from vertexsmith.quadratic import quadratic_form

    rows = []
    for path in shipped_models():
        model = vs.load_model(path)
        written = [mono for mono in model.monomials() if len(mono.fields) == 2]
        fixed = written + [mono for mono in ghost_monomials(model, "xi") if len(mono.fields) == 2] + [
            mono for g in model.groups.values() for mono in gauge_fixing_monomials(model, g, "xi")]
        skip = frozenset(g.ghost for g in model.groups.values() if not has_ghosts(model, g, "xi"))
        derive = _median_time(model.derive, repeats)
        check = _median_time(lambda: check_model(model), repeats)
        in_derive = _median_time(lambda: propagators_from(quadratic_form(model, fixed), "xi", skip), repeats)
        in_check = _median_time(lambda: quadratic_form(model, written), repeats) + in_derive  # check derives too
        share = (in_derive + in_check) / (derive + check)
        rows.append((path.stem, f"{derive:.3f}", f"{check:.3f}", f"{in_derive * 1e3:.1f}", f"{in_check * 1e3:.1f}",
                     f"{share:.1%}"))
    print(_table(("model", "derive s", "check s", "K + i K^-1 in derive ms", "K in check ms", "share"), rows))
    print("  share: the quadratic stage's part of derive + check (it replaces the per-field kernels read before)")
    if baseline is not None:
        print(f"  before/after, fresh processes, CPU seconds of derive + check; before = {baseline}")
        compared = []
        for path in shipped_models():
            before = _derive_and_check_cold(path.stem, baseline, repeats)
            after = _derive_and_check_cold(path.stem, None, repeats)
            if before is None or after is None:
                compared.append((path.stem, "-", "-", "-", "not derivable before" if before is None else "failed"))
                continue
            ratio = sum(after) / sum(before)
            compared.append((path.stem, f"{sum(before):.3f}", f"{sum(after):.3f}", f"{ratio - 1:+.1%}",
                             "ok" if ratio <= 1.10 else "SLOW"))
        print(_table(("model", "before s", "after s", "change", "<= +10 %"), compared))
    print()


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--profile", action="store_true", help="profile load_model() and derive() on the largest generated model")
    parser.add_argument("--repeats", type=int, default=REPEATS, help="runs per median (default 3)")
    parser.add_argument("--sizes", type=int, nargs="+", default=list(SIZES),
                        help="Lagrangian lines of the generated models (default 50 200 1000)")
    parser.add_argument("--points", type=int, default=100_000,
                        help="phase-space points for the exported-module benchmark (default 100000)")
    parser.add_argument("--only", choices=("invariance", "quadratic"), help="run one section only")
    parser.add_argument("--baseline", type=Path, help="the src/ folder of an earlier checkout, to compare derive + "
                        "check before and after (section i), e.g. from: git archive REV | tar -x -C DIR")
    args = parser.parse_args(argv)
    print_machine()
    if args.only == "invariance":
        bench_invariance(args.repeats)
        return 0
    if args.only == "quadratic":
        bench_quadratic(args.repeats, args.baseline)
        return 0
    bench_cli(args.repeats)
    bench_generated(tuple(args.sizes), args.profile)
    bench_operator(args.repeats)
    bench_non_abelian(args.repeats)
    bench_export(args.points)
    bench_compare(args.repeats)
    bench_evaluate()
    bench_invariance(args.repeats)
    bench_quadratic(args.repeats, args.baseline)
    return 0


if __name__ == "__main__":
    sys.exit(main())
