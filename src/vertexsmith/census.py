"""Text and JSON for the diagram census and for the identity checks of `verify`.

Both are plain data in, text out, deterministic: the same model and process give the same bytes.
"""

from __future__ import annotations

import json
from typing import TYPE_CHECKING, Sequence

from .diagrams import Diagram, fermion_loops, line_classes, line_sides, vanishes_by_charge_conjugation

if TYPE_CHECKING:
    from .process import Process
    from .rules import Rules
    from .verify import Report

FORMAT_VERSION = 1


def _momentum_names(process: "Process") -> list[str]:
    n_in = len(process.incoming)
    return [f"p{j + 1}" for j in range(n_in)] + [f"k{j + 1}" for j in range(len(process.outgoing))]


def _line_momentum(process: "Process", near: frozenset[int]) -> str:
    """The momentum of a tree line, flowing from the side without state 1 into the side with it."""
    names = _momentum_names(process)
    far = [j for j in range(len(names)) if j not in near]
    terms = []
    for j in far:
        sign = "+" if process.states[j].incoming else "-"
        terms.append(f"{sign} {names[j]}")
    text = " ".join(terms)
    return text[2:] if text.startswith("+ ") else "-" + text[2:]


def _channel(process: "Process", d: Diagram, sides: list) -> str:
    if not d.lines:
        return "contact"
    if d.loops or len(process.states) != 4 or len(process.incoming) != 2:
        return ""
    side = next(s for s in sides if s is not None)
    near = side[0] if 0 in side[0] else side[1]
    return {frozenset({0, 1}): "s-channel", frozenset({0, 2}): "t-channel", frozenset({0, 3}): "u-channel"}.get(near, "")


def describe(rules: "Rules", process: "Process", d: Diagram) -> dict:
    """A diagram as plain data: vertices with their states, lines, channel, weights and classes."""
    sides = line_sides(d)
    names = _momentum_names(process)
    vertices = []
    for v, t in enumerate(d.vertices):
        labels = rules.vertices[t].labels
        states = [{"leg": labels[k], "state": j + 1, "momentum": names[j]}
                  for j, (w, k) in enumerate(d.externals) if w == v]
        vertices.append({"id": v + 1, "legs": list(labels), "states": states})
    lines = []
    classes = line_classes(d)
    for (a, k, b, m), side, kind in zip(d.lines, sides, classes):
        leg = rules.vertices[d.vertices[a]].legs[k]
        entry = {"field": leg.field, "from": [a + 1, rules.vertices[d.vertices[a]].labels[k]],
                 "to": [b + 1, rules.vertices[d.vertices[b]].labels[m]],
                 "momentum": _line_momentum(process, side[0] if 0 in side[0] else side[1]) if side else "loop"}
        if kind:
            entry["class"] = kind
        lines.append(entry)
    flags = sorted(set(c.split(" ")[0] + (" self-energy" if c.startswith("external") else "") for c in classes if c))
    loops = fermion_loops(rules, d)
    if loops:
        flags.append(f"{len(loops)} closed fermion loop{'s' if len(loops) > 1 else ''}")
    if vanishes_by_charge_conjugation(rules, d):
        flags.append("vanishes (Furry)")
    return {"channel": _channel(process, d, sides), "vertices": vertices, "lines": lines,
            "symmetry_factor": str(d.symmetry), "fermion_sign": d.sign, "loops": d.loops, "notes": flags}


def census_to_dict(rules: "Rules", process: "Process", diagrams: Sequence[Diagram], loops: int,
                   options: dict[str, bool]) -> dict:
    """The census as plain data (the JSON output)."""
    return {"format_version": FORMAT_VERSION, "model": rules.model.name, "process": str(process),
            "loops": loops, "gauge": rules.gauge, "options": dict(sorted(options.items())),
            "count": len(diagrams),
            "diagrams": [dict(number=k + 1, **describe(rules, process, d)) for k, d in enumerate(diagrams)]}


def render_census(data: dict, fmt: str = "text") -> str:
    """The census as text (one block per diagram) or JSON."""
    if fmt == "json":
        return json.dumps(data, indent=2, sort_keys=True) + "\n"
    order = {0: "tree level", 1: "one loop", 2: "two loops"}[data["loops"]]
    left_out = [name.replace("_", " ") for name, kept in data["options"].items() if not kept]
    head = f"{data['process']} in {data['model']} at {order}: {data['count']} diagram{'s' if data['count'] != 1 else ''}"
    lines = [head + (f" (leaving out {', '.join(left_out)})" if left_out else "")]
    for d in data["diagrams"]:
        title = f"#{d['number']}" + (f"  {d['channel']}" if d["channel"] else "")
        lines.append(f"{title}  symmetry factor {d['symmetry_factor']}  fermion sign {d['fermion_sign']:+d}"
                     + (f"  [{'; '.join(d['notes'])}]" if d["notes"] else ""))
        for v in d["vertices"]:
            states = ", ".join(f"{s['leg']} = state {s['state']} ({s['momentum']})" for s in v["states"])
            lines.append(f"    v{v['id']}: {' '.join(v['legs'])}" + (f"   {states}" if states else ""))
        for line in d["lines"]:
            lines.append(f"    {line['field']}: v{line['from'][0]} {line['from'][1]} -- v{line['to'][0]} {line['to'][1]}"
                         f"   {line['momentum']}" + (f"  ({line['class']})" if "class" in line else ""))
    return "\n".join(lines) + "\n"


# ------------------------------------------------------------------ verify

def report_to_dict(report: "Report") -> dict:
    """The checks of `verify` as plain data."""
    return {"format_version": FORMAT_VERSION, "model": report.model, "tolerance": report.tolerance,
            "points": report.points, "passed": not report.failed,
            "checks": [{"process": c.process, "diagrams": c.diagrams, "identity": c.identity,
                        "deviation": None if c.deviation is None else float(f"{c.deviation:.3e}"),
                        "verdict": c.verdict, "detail": c.detail} for c in report.checks]}


def render_report(report: "Report", fmt: str = "text") -> str:
    """A summary table (process, diagrams, identity, worst deviation, verdict) or JSON."""
    data = report_to_dict(report)
    if fmt == "json":
        return json.dumps(data, indent=2, sort_keys=True) + "\n"
    header = ("process", "diagrams", "identity", "worst deviation", "verdict")
    rows = [(c["process"], str(c["diagrams"]), c["identity"],
             "-" if c["deviation"] is None else f"{c['deviation']:.1e}", c["verdict"]) for c in data["checks"]]
    widths = [max(len(r[k]) for r in [header] + rows) for k in range(5)]
    out = [f"identities of {report.model}: {report.points} seeded phase-space points per check, "
           f"tolerance {report.tolerance:.0e} (relative)"]
    out.append("  ".join(h.ljust(w) for h, w in zip(header, widths)).rstrip())
    out.append("  ".join("-" * w for w in widths))
    previous = None
    for row, check in zip(rows, data["checks"]):
        shown = (row[0] if row[0] != previous else "",) + row[1:] if row[0] != previous else ("", "") + row[2:]
        previous = row[0]
        out.append("  ".join(x.ljust(w) for x, w in zip(shown, widths)).rstrip())
        if check["detail"] and check["identity"] in ("high-energy growth",):
            out.append(" " * (widths[0] + widths[1] + 4) + check["detail"])
    failed = report.failed
    if failed:
        out.append(f"FAILED: {len(failed)} of {len(report.checks)} checks: "
                   + "; ".join(f"{c.identity} in {c.process}" for c in failed))
    else:
        out.append(f"all {len(report.checks)} checks passed")
    return "\n".join(out) + "\n"
