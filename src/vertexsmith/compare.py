"""Compare hand-derived Feynman rules with the ones vertexsmith derives, and name the conventions.

`vertexsmith compare MODEL HANDRULES` reads a small file of hand rules (the language is
described in `grammar/handrules.lark`), evaluates each hand factor and the derived one at random
momenta (conserved: the last leg's momentum is minus the sum of the others) and random
parameter values (so that agreement is not an accident of the model's numbers), and classifies
every rule:

- equal: the same numbers at every point;
- equal up to a convention, with the convention named: the opposite overall sign, the opposite
  covariant-derivative sign (gauge couplings g -> -g), all-outgoing momenta
  (hand(p) = derived(-p)), an overall factor i or -i; several names are given when the numbers
  cannot tell them apart (a vertex linear in the momenta looks the same with outgoing momenta
  as with the opposite sign);
- different: both factors are printed with their difference, simplified symbolically, and the
  ratio when it is a constant (a factor of 2 shows up as "hand = 2 x derived").

Vertices the model has and the hand file lacks, and hand rules for vertices the model does not
have, are listed too. The command exits with 0 only when every hand rule equals the derived one
and names an existing vertex (a hand file may cover only part of the model; `--all` also
requires every vertex of the model to be in it), 1 otherwise or when a file has errors, 2 when
a file cannot be read.

A single fermion line is written as the Dirac matrix between its bar leg and its other leg,
whatever the order the legs are listed in; the Grassmann sign of that order is applied as
vertexsmith does. With several fermion lines, write each as chain(i, j, M), the matrix M between
bar(leg i) and leg j: a product of chains is then the tensor itself, as vertexsmith prints it
(Chain(1, 4, M) Chain(3, 2, N) is M_(s1 s4) N_(s3 s2)), the Grassmann sign of each term in its
coefficient.

    >>> import vertexsmith
    >>> from vertexsmith.compare import compare_rules
    >>> rules = vertexsmith.load_model(vertexsmith.example("qed")).derive(gauge="feynman")
    >>> report = compare_rules(rules, "vertex bar(ele) ele A : I e gamma[mu3]\\n")
    >>> report.entries[0].status, report.entries[0].conventions[0]
    ('convention', 'opposite overall sign (coupling sign or covariant-derivative sign convention)')
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from fractions import Fraction
from pathlib import Path
from typing import TYPE_CHECKING, Any, Mapping, Sequence

import numpy as np
import sympy

from .comparison_settings import POINTS, SEED
from .errors import ModelMeaningError, Span, UsageError, did_you_mean
from .hand_numbers import HandContext, HandNumeric, vertex_layout
from .hand_symbolic import HandSymbolic, canonical_factor
from .parse import parse_hand_rules_text
from .pipeline import derive
from .rules import Rules, Vertex
from .structures import permutation_sign
from .spaces import random_array
from .symbolic import factor_text
from .syntax import HandRule, HandRules, HCall, HNode

if TYPE_CHECKING:
    from .model import Model, Parameter

RTOL = 1e-8

EQUAL, CONVENTION, DIFFERENT, UNKNOWN = "equal", "convention", "different", "not in model"

SIGN_CONVENTION = "opposite overall sign (coupling sign or covariant-derivative sign convention)"
COVARIANT_CONVENTION = "opposite covariant-derivative sign (gauge couplings g -> -g: D = d + i g A versus d - i g A)"
OUTGOING_CONVENTION = "all-outgoing momenta (hand(p) = derived(-p))"
AGAINST_ARROW_CONVENTION = "momentum against the particle arrow (hand(p) = derived(-p))"
PLUS_I_CONVENTION = "an extra overall factor i (hand = i x derived)"
MINUS_I_CONVENTION = "a missing overall factor i (hand = -i x derived: vertex written as the coupling, without i)"


def parse_hand_rules(text: str, name: str = "<hand rules>") -> HandRules:
    """Parse a hand-rules file into nodes, or raise ModelSyntaxError with file:line:col.

    The parser lives with the model's in `parse.py` (`parse_hand_rules_text`); this name stays the
    entry point of the compare command and its tests.
    """
    return parse_hand_rules_text(text, name)


def read_hand_rules(path: str | Path) -> HandRules:
    """Read and parse a hand-rules file (UsageError when it cannot be read)."""
    file = Path(path)
    try:
        text = file.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise UsageError(f"{file}: not a UTF-8 text file") from None
    except OSError as exc:
        raise UsageError(f"{file}: cannot read the hand-rules file ({exc.strerror or exc})",
                         hint="check the path") from None
    return parse_hand_rules(text.removeprefix("\ufeff"), str(path))


# ------------------------------------------------------------------ the comparison

@dataclass(frozen=True)
class Comparison:
    """The verdict on one rule: status, the conventions that explain a difference, the factors."""

    kind: str  # "vertex" | "propagator"
    labels: tuple[str, ...]
    status: str  # equal | convention | different | not in model | not in hand file
    conventions: tuple[str, ...] = ()
    hand: str = ""
    derived: str = ""
    difference: str = ""
    ratio: complex | None = None
    span: Span = field(default=Span(0, 0, 0, 0), compare=False)
    coupling_parity: str = ""  # odd | even | none | mixed in the gauge couplings (vertices only)

    @property
    def name(self) -> str:
        return f"{self.kind} {' '.join(self.labels)}"


@dataclass(frozen=True)
class ComparisonReport:
    """Every hand rule's verdict, and the model's vertices and propagators the hand file lacks."""

    model: str
    hand_file: str
    gauge: str
    entries: tuple[Comparison, ...]
    not_in_hand: tuple[Comparison, ...]
    points: int
    notes: tuple[str, ...] = ()

    @property
    def all_equal(self) -> bool:
        return all(e.status == EQUAL for e in self.entries)

    def exit_code(self, require_all: bool = False) -> int:
        """0 when every hand rule equals the derived one (and, with require_all, none is missing)."""
        if not self.all_equal:
            return 1
        if require_all and any(e.kind == "vertex" for e in self.not_in_hand):
            return 1
        return 0

    def counts(self) -> dict[str, int]:
        out = {EQUAL: 0, CONVENTION: 0, DIFFERENT: 0, UNKNOWN: 0}
        for e in self.entries:
            out[e.status] = out.get(e.status, 0) + 1
        return out


def _random_values(model: "Model", rng: np.random.Generator) -> dict[str, Any]:
    """Random numbers for every independent parameter (those defined through others follow them)."""
    overrides: dict[str, Any] = {}
    for name, p in model.parameters.items():
        if p.is_array:  # a vector or matrix parameter: random entries that keep what it is declared to be
            overrides[name] = random_array(rng, p)
            continue
        if p.definition is not None and p.definition.free_symbols:
            continue
        value = rng.uniform(0.5, 1.5)
        overrides[name] = complex(value, rng.uniform(0.5, 1.5)) if p.is_complex else complex(value)
    return overrides


def _numbers(model: "Model", overrides: Mapping[str, complex], xi: Mapping[str, complex]) -> dict[str, complex]:
    resolved = model.parameter_values(dict(overrides))
    # a vector or matrix parameter stays an array
    out = {str(symbol): value if isinstance(value, np.ndarray) else complex(value) for symbol, value in resolved.items()}
    out.update(xi)
    return out


def _close(a: np.ndarray, b: np.ndarray) -> bool:
    scale = max(float(np.max(np.abs(a), initial=0.0)), float(np.max(np.abs(b), initial=0.0)), 1e-300)
    return bool(np.all(np.abs(a - b) <= RTOL * scale))


def _constant_ratio(hand: list[np.ndarray], derived: list[np.ndarray]) -> complex | None:
    """hand / derived when it is one number at every point and every entry, else None."""
    ratio: complex | None = None
    for h, d in zip(hand, derived):
        k = int(np.argmax(np.abs(d)))
        dk = d.flat[k]
        if abs(dk) == 0:
            if np.max(np.abs(h), initial=0.0) > 0:
                return None
            continue
        r = complex(h.flat[k] / dk)
        if ratio is None:
            ratio = r
        if not _close(h, ratio * d):
            return None
    return ratio


def _format_number(c: complex) -> str:
    def real(x: float) -> str:
        q = Fraction(x).limit_denominator(1000)
        return str(q) if abs(float(q) - x) < 1e-9 * max(1.0, abs(x)) else f"{x:.6g}"

    if abs(c.imag) < 1e-12 * max(1.0, abs(c.real)):
        return real(c.real)
    if abs(c.real) < 1e-12 * max(1.0, abs(c.imag)):
        return f"{real(c.imag)} i"
    return f"({real(c.real)} + {real(c.imag)} i)"


class _Checker:
    def __init__(self, rules: Rules, hand: HandRules, points: int, seed: int) -> None:
        self.rules = rules
        self.model = rules.model
        self.hand = hand
        self.points = points
        self.rng = np.random.default_rng(seed)

    def _label_check(self, rule: HandRule) -> None:
        fields = self.model.fields
        for label, span in zip(rule.legs, rule.leg_spans or (rule.span,) * len(rule.legs)):
            name = label[4:-1] if label.startswith(("bar(", "dag(")) else label
            if name not in fields:
                raise ModelMeaningError(f"unknown field '{name}'", span,
                                        did_you_mean(name, list(fields), "the fields are " + ", ".join(fields))
                                        ).with_source(self.hand.source)
            f = fields[name]
            if label.startswith("bar(") and f.kind not in ("dirac", "majorana", "ghost"):
                raise ModelMeaningError(f"bar() of the {f.kind} field '{name}'", span,
                                        f"write dag({name}) for a complex boson").with_source(self.hand.source)
            if label.startswith("dag(") and f.kind in ("dirac", "majorana", "ghost"):
                raise ModelMeaningError(f"dag() of the fermionic field '{name}'", span,
                                        f"write bar({name})").with_source(self.hand.source)
            if rule.kind == "propagator" and label != name and label == rule.legs[0]:
                raise ModelMeaningError("a propagator is named by its field alone", span,
                                        f"write propagator {name} : ...").with_source(self.hand.source)

    def _values(self, xi_names: Sequence[str]) -> tuple[dict[str, complex], dict[str, complex]]:
        overrides = _random_values(self.model, self.rng)
        xi = {name: complex(self.rng.uniform(0.5, 2.0)) for name in xi_names}
        return overrides, xi

    def _momenta(self, n: int) -> np.ndarray:
        p = self.rng.normal(size=(n, 4)) * 1.5
        p[-1] = -p[:-1].sum(axis=0)
        return p.astype(complex)

    def vertex(self, rule: HandRule) -> Comparison:
        try:
            derived = self.rules.vertex(*rule.legs)
        except UsageError:
            return Comparison("vertex", rule.legs, UNKNOWN, hand=rule.text, span=rule.span)
        ctx = HandContext(self.rules, rule, derived.legs, None, self.hand.source)
        couplings = [g.coupling for g in self.model.groups.values() if isinstance(g.coupling, sympy.Symbol)]
        hand_values, derived_values, flipped, outgoing, scaled = [], [], [], [], []
        for _ in range(self.points):
            overrides, xi = self._values([])
            numbers = _numbers(self.model, overrides, xi)
            momenta = self._momenta(len(derived.legs))
            named = {leg.momentum: momenta[k] for k, leg in enumerate(derived.legs)}
            value = HandNumeric(ctx, named, numbers).evaluate(rule.factor)
            hand_values.append(vertex_layout(ctx, value, rule.factor.span))
            derived_values.append(derived.evaluate(momenta, values=overrides))
            outgoing.append(derived.evaluate(-momenta, values=overrides))
            if couplings:
                flip, double = dict(overrides), dict(overrides)
                for c in couplings:
                    flip[c.name] = -numbers[c.name]
                    double[c.name] = 2 * numbers[c.name]
                flipped.append(derived.evaluate(momenta, values=flip))
                scaled.append(derived.evaluate(momenta, values=double))
        candidates: list[tuple[str, list[np.ndarray]]] = []
        if not all(_close(o, d) for o, d in zip(outgoing, derived_values)):
            candidates.append((OUTGOING_CONVENTION, outgoing))
        if flipped and not all(_close(f, d) for f, d in zip(flipped, derived_values)) \
                and not all(_close(f, -d) for f, d in zip(flipped, derived_values)):
            candidates.append((COVARIANT_CONVENTION, flipped))
        parity = ""
        if flipped:
            if all(_close(f, -d) for f, d in zip(flipped, derived_values)):
                parity = "odd"
            elif all(_close(f, d) for f, d in zip(flipped, derived_values)):
                parity = "none" if all(_close(x, d) for x, d in zip(scaled, derived_values)) else "even"
            else:
                parity = "mixed"
        result = self._classify("vertex", rule, derived.factor, hand_values, derived_values, candidates, ctx,
                                self._orientation(derived))
        return replace(result, coupling_parity=parity)

    def _orientation(self, vertex: Vertex) -> int:
        """+-1: the Grassmann sign of the listed order of a single fermion line's two legs."""
        fermions = [leg for leg in vertex.legs if leg.kind in ("dirac", "majorana")]
        bars = [leg.position for leg in fermions if leg.conjugate]
        plain = [leg.position for leg in fermions if not leg.conjugate]
        if len(bars) == 1 and len(plain) == 1:
            return permutation_sign([bars[0], plain[0]])
        return 1

    def propagator(self, rule: HandRule, gauge_rules: Rules) -> Comparison:
        try:
            prop = gauge_rules.propagator(*rule.legs[:2])  # two legs: an entry of a propagator matrix
        except UsageError:
            return Comparison("propagator", rule.legs, UNKNOWN, hand=rule.text, span=rule.span)
        ctx = HandContext(gauge_rules, rule, None, prop, self.hand.source)
        xi_names = sorted({s.name for s in prop.a.free_symbols | prop.b.free_symbols if s.name.startswith("xi_")})
        hand_values, derived_values, reversed_ = [], [], []
        for _ in range(self.points):
            overrides, xi = self._values(xi_names)
            numbers = _numbers(self.model, overrides, xi)
            p = (self.rng.normal(size=4) * 1.5).astype(complex)
            value = HandNumeric(ctx, {"p": p}, numbers).evaluate(rule.factor)
            hand_values.append(vertex_layout(ctx, value, rule.factor.span))
            derived_values.append(prop.evaluate(p, values={**overrides, **xi}))
            reversed_.append(prop.evaluate(-p, values={**overrides, **xi}))
        candidates: list[tuple[str, list[np.ndarray]]] = []
        if not all(_close(r, d) for r, d in zip(reversed_, derived_values)):
            candidates.append((AGAINST_ARROW_CONVENTION, reversed_))
        return self._classify("propagator", rule, prop.factor, hand_values, derived_values, candidates, ctx, 1)

    def _classify(self, kind: str, rule: HandRule, derived_factor: sympy.Expr, hand: list[np.ndarray],
                  derived: list[np.ndarray], candidates: list[tuple[str, list[np.ndarray]]], ctx: HandContext,
                  orientation: int) -> Comparison:
        if all(_close(h, d) for h, d in zip(hand, derived)):
            return Comparison(kind, rule.legs, EQUAL, hand=rule.text, derived=factor_text(orientation * derived_factor),
                              span=rule.span)
        matched = [name for name, values in candidates if all(_close(h, v) for h, v in zip(hand, values))]
        for name, factor in ((SIGN_CONVENTION, -1), (PLUS_I_CONVENTION, 1j), (MINUS_I_CONVENTION, -1j)):
            if all(_close(h, factor * d) for h, d in zip(hand, derived)):
                matched.append(name)
        symbolic = self._difference(rule, derived_factor, ctx, orientation)
        if matched:
            return Comparison(kind, rule.legs, CONVENTION, tuple(matched), rule.text,
                              factor_text(orientation * derived_factor), symbolic, _constant_ratio(hand, derived), rule.span)
        return Comparison(kind, rule.legs, DIFFERENT, (), rule.text, factor_text(orientation * derived_factor), symbolic,
                          _constant_ratio(hand, derived), rule.span)

    def _difference(self, rule: HandRule, derived_factor: sympy.Expr, ctx: HandContext, orientation: int) -> str:
        """hand - derived, simplified symbolically, for a single fermion line as the matrix the hand file writes."""
        if _uses_chains(rule.factor):
            orientation = 1  # chains are tensors already, like the derived factor
        try:
            hand = canonical_factor(HandSymbolic(ctx).evaluate(rule.factor))
            difference = sympy.expand(hand - canonical_factor(orientation * derived_factor))
            if ctx.propagator is not None:
                difference = sympy.factor_terms(sympy.together(difference))
        except (TypeError, ValueError, AttributeError, sympy.SympifyError):  # pragma: no cover - display only
            return "(no symbolic form)"
        return factor_text(difference)

    def run(self) -> ComparisonReport:
        seen: dict[tuple[str, tuple[str, ...]], Span] = {}
        gauge = self.hand.gauge or self.rules.gauge
        gauge_rules = self.rules if gauge == self.rules.gauge else derive(self.model, gauge=gauge)
        entries: list[Comparison] = []
        for rule in self.hand.rules:
            self._label_check(rule)
            key = (rule.kind, tuple(sorted(rule.legs)) if rule.kind == "vertex" else rule.legs)  # D_AX != D_XA
            if key in seen:
                raise ModelMeaningError(f"a second rule for the {rule.kind} {' '.join(rule.legs)}", rule.span,
                                        f"the first one is on line {seen[key].line}").with_source(self.hand.source)
            seen[key] = rule.span
            entries.append(self.vertex(rule) if rule.kind == "vertex" else self.propagator(rule, gauge_rules))
        covered = {tuple(sorted(e.labels)) for e in entries if e.kind == "vertex"}
        missing = [Comparison("vertex", v.labels, "not in hand file", derived=str(v.factor))
                   for v in self.rules.vertices if tuple(sorted(v.labels)) not in covered]
        covered_p = {_propagator_key(gauge_rules, e.labels) for e in entries if e.kind == "propagator"}
        missing += [Comparison("propagator", tuple(p.label.split()), "not in hand file", derived=str(p.factor))
                    for p in gauge_rules.propagators if (p.field, p.partner) not in covered_p]
        return ComparisonReport(self.model.name, self.hand.source.name, gauge, tuple(entries), tuple(missing),
                                self.points, _notes(entries, self.model))


def _propagator_key(rules: Rules, labels: Sequence[str]) -> tuple[str, str | None]:
    """(field, partner) of the propagator a hand rule names; partner None on the diagonal."""
    names = [label[4:-1] if label.startswith(("bar(", "dag(")) else label for label in labels]
    partner = names[1] if len(names) > 1 and names[1] != names[0] else None
    return (names[0], partner)


def _notes(entries: Sequence[Comparison], model: "Model") -> tuple[str, ...]:
    """Conclusions about the whole file: a pattern of signs that one covariant-derivative sign explains."""
    odd = [e for e in entries if e.coupling_parity == "odd"]
    even = [e for e in entries if e.coupling_parity == "even"]
    if not odd or not all(e.status == CONVENTION and SIGN_CONVENTION in e.conventions for e in odd):
        return ()
    couplings = ", ".join(str(g.coupling) for g in model.groups.values())
    if even and all(e.status == EQUAL for e in even):
        return (f"every vertex odd in the gauge coupling ({couplings}) has the opposite sign and every vertex even "
                "in it agrees: the hand rules use the opposite covariant-derivative sign "
                "(D = d + i g Q A versus D = d - i g Q A)",)
    return (f"every vertex odd in the gauge coupling ({couplings}) has the opposite sign: consistent with the "
            "opposite covariant-derivative sign (D = d + i g Q A versus D = d - i g Q A)",)


def _uses_chains(node: HNode) -> bool:
    if isinstance(node, HCall):
        return node.function == "chain" or any(_uses_chains(a) for a in node.arguments)
    for child in getattr(node, "factors", ()) or ():
        if _uses_chains(child):
            return True
    for _, child in getattr(node, "terms", ()) or ():
        if _uses_chains(child):
            return True
    for attr in ("numerator", "denominator", "base", "exponent"):
        child = getattr(node, attr, None)
        if child is not None and _uses_chains(child):
            return True
    return False


def compare_rules(rules: Rules, hand: HandRules | str, points: int = POINTS, seed: int = SEED) -> ComparisonReport:
    """Compare hand rules (parsed, or the text of a hand-rules file) with derived rules."""
    parsed = parse_hand_rules(hand) if isinstance(hand, str) else hand
    return _Checker(rules, parsed, points, seed).run()


def compare_files(model: "str | Path | Model", hand_path: str | Path, gauge: str | None = None,
                  points: int = POINTS, seed: int = SEED) -> ComparisonReport:
    """Load a model (path or shipped name) and a hand-rules file, and compare them."""
    from .export import load_model_argument
    from .model import Model

    loaded = model if isinstance(model, Model) else load_model_argument(model)
    hand = read_hand_rules(hand_path)
    if gauge is not None:
        hand = replace(hand, gauge=gauge)
    rules = derive(loaded, gauge=hand.gauge or "feynman")  # derive() attaches the model's source to its errors
    return compare_rules(rules, hand, points, seed)


def format_report(report: ComparisonReport) -> str:
    """The report as plain text, one block per rule."""
    lines = [f"compare {report.hand_file} with the model {report.model} (gauge {report.gauge}; "
             f"{report.points} random points with conserved momenta and random parameter values)", ""]
    width = max((len(e.name) for e in report.entries), default=0)
    for e in report.entries:
        where = f"{report.hand_file}:{e.span.line}: " if e.span.line else ""
        if e.status == EQUAL:
            lines.append(f"  equal        {e.name}")
        elif e.status == CONVENTION:
            lines.append(f"  convention   {e.name.ljust(width)}  {where}equal up to a convention:")
            if len(e.conventions) == 1:
                lines.append(f"                 {e.conventions[0]}")
            else:
                lines.append("                 the numbers fit each of:")
                lines += [f"                   - {c}" for c in e.conventions]
            lines.append(f"                 hand:    {e.hand}")
            lines.append(f"                 derived: {e.derived}")
        elif e.status == DIFFERENT:
            lines.append(f"  DIFFERENT    {e.name.ljust(width)}  {where}the factors differ")
            lines.append(f"                 hand:           {e.hand}")
            lines.append(f"                 derived:        {e.derived}")
            lines.append(f"                 hand - derived: {e.difference}")
            if e.ratio is not None:
                lines.append(f"                 hand = {_format_number(e.ratio)} x derived at every point")
        else:
            lines.append(f"  NOT IN MODEL {e.name.ljust(width)}  {where}the model gives no such {e.kind}")
    if report.not_in_hand:
        lines.append("")
        lines.append("derived but not in the hand file:")
        lines += [f"  {e.name}: {e.derived}" for e in report.not_in_hand]
    if report.notes:
        lines.append("")
        lines += [f"note: {n}" for n in report.notes]
    c = report.counts()
    lines.append("")
    lines.append(f"summary: {c[EQUAL]} equal, {c[CONVENTION]} equal up to a convention, {c[DIFFERENT]} different, "
                 f"{c[UNKNOWN]} not in the model; {len(report.not_in_hand)} derived rules not in the hand file")
    return "\n".join(lines) + "\n"


__all__ = ["parse_hand_rules", "read_hand_rules", "compare_rules", "compare_files", "format_report",
           "canonical_factor", "Comparison", "ComparisonReport", "HandRule", "HandRules",
           "EQUAL", "CONVENTION", "DIFFERENT", "SIGN_CONVENTION", "COVARIANT_CONVENTION", "OUTGOING_CONVENTION",
           "AGAINST_ARROW_CONVENTION", "PLUS_I_CONVENTION", "MINUS_I_CONVENTION"]
