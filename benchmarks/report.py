"""Time the model report (`vertexsmith report`) by hand: not part of the test suite.

    python benchmarks/report.py                 # every shipped model
    python benchmarks/report.py qcd qed         # some of them

Times are CPU seconds of the process (steadier than wall time on a shared machine). For each
model, in one fresh process each so that caches do not flatter later models: load and
derive, the checks, and the page itself (`render/html.py`: pictures, MathML, tables) written to
a temporary file. The target of issue 14: the page in under 3 s beyond the derivation for the
largest shipped model. A second render of the same rules shows the cost without first-use
imports (latex2mathml) and with the MathML cache warm.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

CHILD = r"""
import json, sys, tempfile, time
clock = time.process_time  # CPU time: steady when the machine is shared
sys.path.insert(0, sys.argv[2])
import vertexsmith as vs
t0 = clock()
model = vs.load_model(vs.example(sys.argv[1]))
rules = model.derive()
t1 = clock()
diagnostics = model.check()
t2 = clock()
from vertexsmith.render.html import render
page = render(rules, diagnostics=diagnostics)
with tempfile.NamedTemporaryFile("w", suffix=".html", encoding="utf-8") as out:
    out.write(page)
t3 = clock()
render(rules, diagnostics=diagnostics)
t4 = clock()
print(json.dumps({"vertices": len(rules.vertices), "propagators": len(rules.propagators), "derive": t1 - t0,
                  "check": t2 - t1, "page": t3 - t2, "page_again": t4 - t3, "bytes": len(page.encode())}))
"""


def main(names: list[str]) -> None:
    if not names:
        names = sorted(p.stem for p in (ROOT / "models").glob("*.vsm"))
    print(f"{'model':<24} {'vertices':>8} {'load+derive':>12} {'check':>8} {'page':>8} {'page again':>11} {'size':>9}")
    for name in names:
        result = subprocess.run([sys.executable, "-c", CHILD, name, str(ROOT / "src")], capture_output=True,
                                text=True, check=True)
        r = json.loads(result.stdout)
        print(f"{name:<24} {r['vertices']:>8} {r['derive']:>11.2f}s {r['check']:>7.2f}s {r['page']:>7.2f}s "
              f"{r['page_again']:>10.2f}s {r['bytes'] / 1024:>7.0f}kB")


if __name__ == "__main__":
    main(sys.argv[1:])
