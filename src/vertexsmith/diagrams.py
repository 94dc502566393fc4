"""The diagram census: every distinct Feynman diagram of a process at a given loop order.

A diagram is a pairing of half-lines: each external state ends on one leg of a vertex, and every
other vertex leg is joined by a propagator to a leg carrying the conjugate label. Diagrams are
generated connected, outward from the external states; a fresh vertex of a type and the open
legs of one vertex that carry the same label are interchangeable, so only one of each is tried.
What is left of the duplicates is removed by a canonical form: vertices numbered breadth-first
from the external states (ties broken every possible way, the smallest code kept), and each
vertex leg known only by its label, which makes the code blind to swapping identical legs.

The symmetry factor is 1 / |Aut|, Aut the permutations of vertices and of identical legs that fix
the external states and map the diagram to itself; with vertex factors that already contain the
sum over identical legs this is the factor the diagram carries (phi^4: 1/2 for the one-loop
self-energy). The fermion sign is the parity of the permutation that brings every Grassmann
half-line next to its partner (external first, then psi before bar(psi) on a propagator), taking
the vertex legs in their listed order; it is the relative sign of the diagram in the amplitude.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from fractions import Fraction
from math import factorial
from typing import TYPE_CHECKING, Iterator

from .errors import UsageError

if TYPE_CHECKING:
    from .process import Process
    from .rules import Rules

MAX_STEPS = 150_000  # pairing steps before the census gives up (a budget: seconds of work, not minutes)


@dataclass(frozen=True)
class Diagram:
    """One diagram: vertex types, where each external state ends, the internal lines; its weights.

    vertices[k] indexes rules.vertices; externals[j] = (vertex number, leg position) of state j;
    lines are (vertex, leg, vertex, leg) with leg positions counted from 0.
    """

    vertices: tuple[int, ...]
    externals: tuple[tuple[int, int], ...]
    lines: tuple[tuple[int, int, int, int], ...]
    loops: int
    symmetry: Fraction
    sign: int


class MajoranaLinesUnsupported(UsageError):
    """A diagram would need a Majorana fermion line: fermion flow is not handled by the census yet."""


@dataclass(frozen=True)
class _Slots:
    """The labels the generator works with: per vertex type its leg labels; the conjugate map."""

    types: tuple[tuple[str, ...], ...]
    conjugate: dict[str, str]
    grassmann: frozenset[str]
    majorana: frozenset[str] = frozenset()


def _slots_of(rules: "Rules") -> _Slots:
    conjugate: dict[str, str] = {}
    grassmann: set[str] = set()
    majorana: set[str] = set()
    for name, field in rules.model.fields.items():
        if field.kind == "majorana":
            majorana.update((name, f"bar({name})"))
        if field.kind in ("dirac", "ghost", "majorana"):
            conjugate[name], conjugate[f"bar({name})"] = f"bar({name})", name
            grassmann.update((name, f"bar({name})"))
        elif field.is_complex:
            conjugate[name], conjugate[f"dag({name})"] = f"dag({name})", name
        else:
            conjugate[name] = name
    return _Slots(tuple(v.labels for v in rules.vertices), conjugate, frozenset(grassmann), frozenset(majorana))


def find_diagrams(rules: "Rules", process: "Process | str", loops: int = 0, *, external_self_energies: bool = True,
                  tadpoles: bool = True) -> tuple[Diagram, ...]:
    """Every distinct connected diagram of the process with the given number of loops, in a fixed order.

    process: a `Process` or its text, e.g. ``"ele bar(ele) -> ele bar(ele)"``.
    """
    if isinstance(process, str):
        from .process import parse_process

        process = parse_process(rules.model, process)
    if loops not in (0, 1, 2):
        raise UsageError(f"the census counts diagrams with 0, 1 or 2 loops, not {loops}")
    slots = _slots_of(rules)
    ends = [slots.conjugate[s.attach] for s in process.states]
    n = len(ends)
    if n < 2:
        raise UsageError("a process needs at least two states")
    target = 2 * loops + n - 2  # sum over vertices of (legs - 2)
    found: dict[tuple, Diagram] = {}
    for nodes, partner in _pairings(slots, ends, target):
        diagram, code = _canonical(slots, ends, nodes, partner)
        if code not in found:
            found[code] = diagram
    kept = [d for d in found.values() if _keep(rules, d, n, external_self_energies, tadpoles)]
    return tuple(sorted(kept, key=_order_key))


def _order_key(d: Diagram) -> tuple:
    return (len(d.vertices), d.vertices, d.externals, d.lines)


def _pairings(slots: _Slots, ends: list[str], target: int) -> Iterator[tuple[list[int], dict]]:
    """Connected pairings grown from the external states; nodes[k] is a vertex type (-1 for externals)."""
    n = len(ends)
    nodes: list[int] = [-1] * n
    labels: list[tuple[str, ...]] = [(e,) for e in ends]
    partner: dict[tuple[int, int], tuple[int, int]] = {}
    by_label: dict[str, list[tuple[int, int]]] = {}
    for t, legs in enumerate(slots.types):
        for leg, label in enumerate(legs):
            if label not in [legs[k] for k in range(leg)]:
                by_label.setdefault(label, []).append((t, leg))
    steps = [0]

    def first_open() -> tuple[int, int] | None:
        for node, legs in enumerate(labels):
            for leg in range(len(legs)):
                if (node, leg) not in partner:
                    return node, leg
        return None

    def connected() -> bool:
        reached, stack = {0}, [0]
        while stack:
            node = stack.pop()
            for leg in range(len(labels[node])):
                other = partner[(node, leg)][0]
                if other not in reached:
                    reached.add(other)
                    stack.append(other)
        return len(reached) == len(nodes)

    def join(a: tuple[int, int], b: tuple[int, int]) -> None:
        partner[a], partner[b] = b, a

    def part(a: tuple[int, int], b: tuple[int, int]) -> None:
        del partner[a], partner[b]

    def grow(excess: int) -> Iterator[tuple[list[int], dict]]:
        steps[0] += 1
        if steps[0] > MAX_STEPS:
            raise UsageError("the diagram census grew too large for this process and loop order",
                             hint="ask for fewer loops or a process with fewer states")
        here = first_open()
        if here is None:
            if excess == target and connected():
                yield list(nodes), dict(partner)
            return
        node, leg = here
        if labels[node][leg] in slots.majorana:
            name = labels[node][leg].removeprefix("bar(").removesuffix(")")
            raise MajoranaLinesUnsupported(
                f"diagrams with a line of the Majorana field '{name}' are not supported yet",
                hint="the census, the amplitudes and verify handle Dirac fermions, scalars, vectors and ghosts; "
                     "choose a process without that field's lines")
        wanted = slots.conjugate[labels[node][leg]]
        if node >= n:  # a vertex leg may end on an external state
            for j in range(n):
                if (j, 0) not in partner and labels[j][0] == wanted:
                    join(here, (j, 0))
                    yield from grow(excess)
                    part(here, (j, 0))
        for other in range(n, len(nodes)):
            for k, label in enumerate(labels[other]):
                # among open legs of one vertex with the same label only the first is tried
                if label == wanted and (other, k) not in partner and (other, k) != here:
                    join(here, (other, k))
                    yield from grow(excess)
                    part(here, (other, k))
                    break
        for t, k in by_label.get(wanted, ()):
            grown = excess + len(slots.types[t]) - 2
            if grown > target:
                continue
            nodes.append(t)
            labels.append(slots.types[t])
            fresh = (len(nodes) - 1, k)
            join(here, fresh)
            yield from grow(grown)
            part(here, fresh)
            nodes.pop()
            labels.pop()

    yield from grow(0)


def _canonical(slots: _Slots, ends: list[str], nodes: list[int], partner: dict) -> tuple[Diagram, tuple]:
    """The diagram in canonical numbering, and its code (equal codes: the same diagram)."""
    n = len(ends)
    vertex_nodes = range(n, len(nodes))
    label = {(v, k): slots.types[nodes[v]][k] for v in vertex_nodes for k in range(len(slots.types[nodes[v]]))}
    neighbours: dict[int, dict[int, list[tuple[str, str]]]] = {v: {} for v in vertex_nodes}
    for (v, k), (w, m) in partner.items():
        if v >= n and w >= n:
            neighbours[v].setdefault(w, []).append((label[(v, k)], label[(w, m)]))
    start: list[int] = []
    for j in range(n):
        v = partner[(j, 0)][0]
        if v not in start:
            start.append(v)
    best: tuple | None = None
    best_orders: set[tuple[int, ...]] = set()
    for order in _numberings(nodes, neighbours, start):
        if len(order) != len(vertex_nodes):
            continue  # not connected: cannot happen for grown pairings, kept as a guard
        code = _code(slots, n, nodes, partner, order)
        if best is None or code < best:
            best, best_orders = code, {order}
        elif code == best:
            best_orders.add(order)
    if best is None:
        raise AssertionError("a diagram without vertices")
    order = min(best_orders)
    rank = {v: r for r, v in enumerate(order)}
    lines = sorted({tuple(sorted(((rank[v], k), (rank[w], m)))) for (v, k), (w, m) in partner.items()
                    if v >= n and w >= n})
    flat = tuple((a[0], a[1], b[0], b[1]) for a, b in lines)
    externals = tuple((rank[partner[(j, 0)][0]], partner[(j, 0)][1]) for j in range(n))
    automorphisms = len(best_orders) * _edge_permutations(best[1])
    excess = sum(len(slots.types[nodes[v]]) - 2 for v in vertex_nodes)
    loops = (excess - n + 2) // 2
    diagram = Diagram(tuple(nodes[v] for v in order), externals, flat, loops, Fraction(1, automorphisms),
                      _fermion_sign(slots, ends, nodes, partner))
    return diagram, best


def _numberings(nodes: list[int], neighbours: dict[int, dict[int, list[tuple[str, str]]]],
                start: list[int]) -> Iterator[tuple[int, ...]]:
    """Breadth-first numberings of the vertices; neighbours sorted by an invariant key, ties permuted."""

    def walk(order: list[int], i: int) -> Iterator[tuple[int, ...]]:
        if i == len(order):
            yield tuple(order)
            return
        v = order[i]
        fresh = [w for w in neighbours[v] if w not in order]
        keyed = sorted(((tuple(sorted(neighbours[v][w])), nodes[w]), w) for w in fresh)
        groups = [[w for _, w in group] for _, group in itertools.groupby(keyed, key=lambda kw: kw[0])]
        for arrangement in itertools.product(*[itertools.permutations(g) for g in groups]):
            yield from walk(order + [w for g in arrangement for w in g], i + 1)

    yield from walk(list(start), 0)


def _code(slots: _Slots, n: int, nodes: list[int], partner: dict, order: tuple[int, ...]) -> tuple:
    rank = {v: r for r, v in enumerate(order)}
    ends = []
    for (v, k), (w, m) in partner.items():
        if v >= n and w >= n and (v, k) < (w, m):  # each line once
            a, b = (rank[v], slots.types[nodes[v]][k]), (rank[w], slots.types[nodes[w]][m])
            ends.append((a, b) if a <= b else (b, a))
    externals = tuple((rank[partner[(j, 0)][0]], slots.types[nodes[partner[(j, 0)][0]]][partner[(j, 0)][1]])
                      for j in range(n))
    return (tuple(nodes[v] for v in order), tuple(sorted(ends)), externals)


def _edge_permutations(ends: tuple) -> int:
    """Leg permutations that keep every line: m! per bundle of m equal lines, 2 per line with equal ends."""
    total = 1
    for end, group in itertools.groupby(ends):
        m = len(list(group))
        total *= factorial(m) * (2**m if end[0] == end[1] else 1)
    return total


def _fermion_sign(slots: _Slots, ends: list[str], nodes: list[int], partner: dict) -> int:
    n = len(ends)

    def label(slot: tuple[int, int]) -> str:
        v, k = slot
        return ends[v] if v < n else slots.types[nodes[v]][k]

    sequence = [(v, k) for v in range(len(nodes)) for k in range(1 if v < n else len(slots.types[nodes[v]]))
                if label((v, k)) in slots.grassmann]
    position = {slot: i for i, slot in enumerate(sequence)}
    pairs: set[tuple[int, int]] = set()
    for a in sequence:
        b = partner[a]
        if a[0] < n or b[0] < n:
            first, second = (a, b) if a[0] < n else (b, a)
        else:
            # a propagator <psi bar(psi)>: the psi leg first
            first, second = (b, a) if label(a).startswith("bar(") else (a, b)
        pairs.add((position[first], position[second]))
    return _parity([i for pair in sorted(pairs) for i in pair])


def _parity(sequence: list[int]) -> int:
    """+1 if the sequence is an even permutation of its sorted self, else -1."""
    sign = 1
    seen = [False] * len(sequence)
    order = sorted(range(len(sequence)), key=lambda i: sequence[i])
    for i in range(len(order)):
        length = 0
        j = i
        while not seen[j]:
            seen[j] = True
            j = order[j]
            length += 1
        if length and length % 2 == 0:
            sign = -sign
    return sign


# ------------------------------------------------------------------ reading a diagram

def line_sides(d: Diagram) -> list[tuple[frozenset[int], frozenset[int]] | None]:
    """Per internal line: the external states on each side if the line is a bridge, else None."""
    out: list[tuple[frozenset[int], frozenset[int]] | None] = []
    for cut, (a, _, b, _) in enumerate(d.lines):
        reach = {a}
        stack = [a]
        while stack:
            v = stack.pop()
            for other, (x, _, y, _) in enumerate(d.lines):
                if other == cut:
                    continue
                for p, q in ((x, y), (y, x)):
                    if p == v and q not in reach:
                        reach.add(q)
                        stack.append(q)
        if b in reach:
            out.append(None)
            continue
        near = frozenset(j for j, (v, _) in enumerate(d.externals) if v in reach)
        out.append((near, frozenset(range(len(d.externals))) - near))
    return out


def line_classes(d: Diagram) -> tuple[str, ...]:
    """'tadpole' for a line that cuts off a piece without external states, 'external k' for a self-energy on state k."""
    n = len(d.externals)
    classes = []
    for side in line_sides(d):
        if side is None:
            classes.append("")
        elif not side[0] or not side[1]:
            classes.append("tadpole")
        elif n >= 3 and (len(side[0]) == 1 or len(side[1]) == 1):
            (j,) = side[0] if len(side[0]) == 1 else side[1]
            classes.append(f"external {j + 1}")
        else:
            classes.append("")
    return tuple(classes)


def _keep(rules: "Rules", d: Diagram, n: int, external_self_energies: bool, tadpoles: bool) -> bool:
    classes = line_classes(d)
    if not tadpoles and "tadpole" in classes:
        return False
    if not external_self_energies and any(c.startswith("external") for c in classes):
        return False
    return True


def fermion_loops(rules: "Rules", d: Diagram) -> list[list[int]]:
    """Closed fermion (or ghost) loops: the vertices each passes, in order; empty where legs are ambiguous."""
    link: dict[tuple[int, int], tuple[int, int]] = {}
    for v, t in enumerate(d.vertices):
        legs = rules.vertices[t].legs
        grassmann = [k for k, leg in enumerate(legs) if leg.grassmann]
        if len(grassmann) != 2:
            return []  # four-fermion vertices: which legs form one line is a matter of convention
        a, b = grassmann
        link[(v, a)], link[(v, b)] = (v, b), (v, a)
    across: dict[tuple[int, int], tuple[int, int]] = {}
    for a, k, b, m in d.lines:
        across[(a, k)], across[(b, m)] = (b, m), (a, k)
    on_external = {(v, k) for v, k in d.externals}
    loops, seen = [], set()
    for start in sorted(link):
        if start in seen or start in on_external:
            continue
        path, slot, closed = [], start, True
        while True:
            seen.add(slot)
            path.append(slot[0])
            other = link[slot]
            seen.add(other)
            if other in on_external:
                closed = False
                break
            slot = across[other]
            if slot == start:
                break
            if slot in on_external:
                closed = False
                break
        if closed:
            loops.append(path)
    return loops


def vanishes_by_charge_conjugation(rules: "Rules", d: Diagram) -> bool:
    """A closed fermion loop with an odd number of abelian gauge bosons and nothing else attached.

    Such loops cancel against the loop with the opposite orientation (Furry's theorem), provided the
    couplings are pure vector couplings, which is checked on the vertex structures (no gamma5, PL, PR).
    """
    from .structures import Chiral

    bosons = {g.boson for g in rules.model.groups.values() if g.abelian}
    for loop in fermion_loops(rules, d):
        ok = True
        for v in loop:
            vertex = rules.vertices[d.vertices[v]]
            others = [leg for leg in vertex.legs if not leg.grassmann]
            if len(vertex.legs) != 3 or len(others) != 1 or others[0].field not in bosons:
                ok = False
                break
            if any(isinstance(m, Chiral) for term in vertex.terms for c in term.structure.chains for m in c.matrices):
                ok = False
                break
        if ok and len(loop) % 2 == 1:
            return True
    return False
