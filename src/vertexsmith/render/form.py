"""Rules for FORM: declarations, then the substitutions as procedures the user calls.

The file can be included at the top of a user's program (`#include model.frm`): it holds only
declarations and procedure definitions, so the user's own declarations may follow it. The
substitutions run where the user writes `#call vsvertices()`, `#call vspropagators()` or both at
once with `#call vsrules()`. Vertex functions are named by their legs:

    id vtx(bar(ele),ele,A,p1?,p2?,p3?,mu3?,j1?) = -i_*e*g_(j1,mu3);

The arguments after the leg labels are wildcards, in this order: the incoming momentum of each
leg (p1, p2, ...), the Lorentz index of each vector leg (mu<k>), the group index of each leg in
a non-abelian representation (a<k><group> adjoint, i<k><group> fundamental), and one spin line
per fermion chain (j1, j2, ...). Propagators are `prop(field,p?[,mu?,nu?][,j?][,group indices])`.
`vtx` and `prop` are non-commuting functions, so a product vertex x propagator x vertex keeps
the order of the Dirac matrices along a spin line when FORM sorts the term. Gamma matrices are
`g_(line,mu)`, gamma5 `g5_(line)`, the unit `gi_(line)`; the metric is `d_(mu,nu)`, a momentum
component `p1(mu3)`, a dot product `p1.p2`, the Levi-Civita tensor `e_(...)`, i is `i_`; 1/x is
written `den(x)`. Group indices are declared with their dimensions (N, or N^2 - 1 for adjoint
ones), so their deltas are FORM's own `d_` and contract to the right numbers; the structure
constants, generators and alternating tensor are the functions `f<group>(a,b,c)`,
`T<group>(a,i,j)` and `alt<group>(i,j,...)`. Model names that FORM or the customary kinematic
symbols (s, t, u, q, k, l, p, ...) would clash with are renamed, and the renaming is listed.
The output is deterministic: the same rules give the same text.
"""

from __future__ import annotations

import re
import textwrap
from fractions import Fraction
from typing import TYPE_CHECKING, Iterable, Iterator

import sympy

from . import top_level_cuts
from ..rules import P2, Propagator, Rules, Vertex
from ..structures import (CHARGE_CONJUGATION, Chain, Chiral, Dot, Dummy, Epsilon, Gamma, Generator, GroupAlternating, GroupDelta,
                          GroupDummy,
                          LegGroupIndex, LegIndex, Metric, Momentum, ParamTensor, Sigma, Slot, Structure, StructureConstant,
                          Vector)

if TYPE_CHECKING:
    from ..model import Model

__all__ = ["render_form", "render"]

# our own FORM names and the customary kinematic symbols a user's program declares (Mandelstam s, t,
# u; momenta p, q, k, l with or without a number); model names that clash with them are renamed
_RESERVED = ({"vtx", "prop", "bar", "dag", "comp", "den", "conj", "sqrt", "sin", "cos", "tan", "exp", "log", "re", "im",
              "mu", "nu", "j", "s", "t", "u", "p", "q", "k", "l", "vsrules", "vsvertices", "vspropagators"}
             | {f"{letter}{k}" for letter in ("p", "q", "k", "l", "mu", "nu", "j", "a", "i", "r", "e")
                for k in range(1, 10)})


class _Names:
    """FORM spellings of model names: letters and digits only, unique, never one of ours."""

    def __init__(self, reserved: Iterable[str]) -> None:
        self.taken = set(reserved)
        self.names: dict[str, str] = {}
        self.renamed: list[tuple[str, str]] = []

    def of(self, name: str) -> str:
        if name in self.names:
            return self.names[name]
        base = re.sub(r"[^A-Za-z0-9]", "", name.replace("'", "prime"))
        if not base or not base[0].isalpha():
            base = "x" + base
        candidate, n = base, 1
        while candidate in self.taken:
            candidate, n = f"{base}x{n}", n + 1
        self.taken.add(candidate)
        self.names[name] = candidate
        if candidate != name:
            self.renamed.append((candidate, name))
        return candidate


class _Printer:
    """Scalars (sympy) in FORM syntax: i_, pi_, den(...) for 1/(...), user functions for sqrt, conj..."""

    def __init__(self, names: _Names) -> None:
        self.names = names
        self.functions: set[str] = set()

    def __call__(self, expr: sympy.Expr) -> str:
        return self._print(sympy.sympify(expr))

    def _atom(self, expr: sympy.Expr) -> str:
        text = self._print(expr)
        if isinstance(expr, (sympy.Add,)) or (isinstance(expr, sympy.Mul) and expr.could_extract_minus_sign()):
            return f"({text})"
        if isinstance(expr, sympy.Rational) and not isinstance(expr, sympy.Integer):
            return f"({text})"
        if isinstance(expr, sympy.Integer) and expr < 0:
            return f"({text})"
        return text

    def _print(self, expr: sympy.Expr) -> str:  # noqa: C901 - one branch per kind of node
        if expr == P2:
            return "p.p"
        if expr is sympy.I:
            return "i_"
        if expr is sympy.pi:
            return "pi_"
        if isinstance(expr, sympy.Float):
            expr = sympy.nsimplify(expr, rational=True)
        if isinstance(expr, sympy.Rational):
            return str(expr.p) if expr.q == 1 else f"{expr.p}/{expr.q}"
        if isinstance(expr, sympy.Symbol):
            return self.names.of(expr.name)
        if isinstance(expr, sympy.Add):
            terms = sorted(expr.args, key=sympy.default_sort_key)
            out = self._print(terms[0])
            for t in terms[1:]:
                text = self._print(t)
                out += f" - {text[1:]}" if text.startswith("-") else f" + {text}"
            return out
        if isinstance(expr, sympy.Mul):
            coefficient, rest = expr.as_coeff_Mul()
            factors = sympy.Mul.make_args(rest)
            numerator: list[str] = []
            for f in sorted(factors, key=sympy.default_sort_key):
                if isinstance(f, sympy.Pow) and f.exp.is_Integer and f.exp < 0:
                    numerator.append(self._inverse(f.base, -int(f.exp)))
                else:
                    numerator.append(self._atom(f))
            body = "*".join(numerator)
            if coefficient == 1:
                return body
            if coefficient == -1:
                return "-" + body
            c = self._print(coefficient)
            return f"{c}*{body}"
        if isinstance(expr, sympy.Pow):
            base, exponent = expr.base, expr.exp
            if exponent == sympy.Rational(1, 2):
                self.functions.add("sqrt")
                return f"sqrt({self._print(base)})"
            if exponent == -sympy.Rational(1, 2):
                self.functions.add("sqrt")
                return f"den(sqrt({self._print(base)}))"
            if exponent.is_Integer and exponent < 0:
                return self._inverse(base, -int(exponent))
            if exponent.is_Integer:
                return f"{self._atom(base)}^{int(exponent)}"
            return f"{self._atom(base)}^({self._print(exponent)})"
        if type(expr).__name__ == "Component":  # an entry of a matrix parameter: the function Y(1,2)
            name = self.names.of(str(expr.args[0]))
            self.functions.add(name)
            return f"{name}({','.join(self._print(a) for a in expr.args[1:])})"
        if isinstance(expr, sympy.Function):
            name = {"conjugate": "conj", "re": "re", "im": "im"}.get(type(expr).__name__, type(expr).__name__)
            self.functions.add(name)
            return f"{name}({','.join(self._print(a) for a in expr.args)})"
        if expr is sympy.E:
            self.functions.add("exp")
            return "exp(1)"
        return str(expr)

    def _inverse(self, base: sympy.Expr, power: int) -> str:
        if isinstance(base, sympy.Symbol) and base != P2:
            return f"{self._print(base)}^-{power}"
        text = f"den({self._print(base)})"
        return text if power == 1 else f"{text}^{power}"


# ------------------------------------------------------------------ Lorentz and Dirac structures

def _expand_momenta(structure: Structure) -> list[tuple[Fraction, Structure]]:
    """Distribute every momentum combination: FORM writes p1(mu) - p2(mu), not (p1 - p2)(mu)."""
    out: list[tuple[Fraction, Structure]] = [(Fraction(1), structure)]
    while True:
        changed = False
        result: list[tuple[Fraction, Structure]] = []
        for c, s in out:
            slots = s.slots()
            position = next((k for k, x in enumerate(slots) if isinstance(x, Momentum) and len(x.terms) > 1
                             or isinstance(x, Momentum) and x.terms and x.terms[0][1] != 1), None)
            if position is None:
                result.append((c, s))
                continue
            changed = True
            momentum = slots[position]
            assert isinstance(momentum, Momentum)
            for leg, coefficient in momentum.terms:
                counter = iter(range(10_000))
                single = Momentum.of(leg)

                def f(slot: Slot, _single: Momentum = single, _counter: Iterator[int] = counter) -> Slot:
                    return _single if next(_counter) == position else slot

                result.append((c * coefficient, s.map_slots(f)))
        out = result
        if not changed:
            return out


class _Structure:
    """One structure as a FORM product; group tensors and spin lines named per vertex."""

    def __init__(self, group_names: dict[tuple[int, str], str], lines: dict[tuple[int, int], str],
                 group_functions: dict[str, str], model: "Model | None" = None) -> None:
        self.group_names = group_names
        self.lines = lines
        self.group_functions = group_functions
        self.model = model  # for the index spaces of matrix parameters

    def slot(self, slot: Slot, group: str = "") -> str:
        if isinstance(slot, LegIndex):
            return f"mu{slot.leg}"
        if isinstance(slot, Dummy):
            return slot.name
        if isinstance(slot, Momentum):
            ((leg, _),) = slot.terms
            return f"p{leg}"
        if isinstance(slot, LegGroupIndex):
            return self.group_names[(slot.leg, slot.group)]
        assert isinstance(slot, GroupDummy)
        return f"{slot.name}{group}"  # a dummy of one group, declared with that group's dimension

    def product(self, structure: Structure) -> str:
        factors: list[str] = []
        for t in structure.tensors:
            if isinstance(t, Dot):
                factors.append(f"{self.slot(t.p)}.{self.slot(t.q)}")
            elif isinstance(t, Metric):
                a, b = t.a, t.b
                if isinstance(a, Momentum) and not isinstance(b, Momentum):
                    a, b = b, a
                if isinstance(b, Momentum):
                    factors.append(f"{self.slot(b)}({self.slot(a)})")
                else:
                    factors.append(f"d_({self.slot(a)},{self.slot(b)})")
            elif isinstance(t, Vector):
                factors.append(f"{self.slot(t.momentum)}({self.slot(t.index)})")
            elif isinstance(t, Epsilon):
                factors.append("e_(" + ",".join(self.slot(s) for s in t.slots_) + ")")
        for chain in structure.chains:
            factors.append(self.chain(chain))
        for g in structure.group:
            kind = {StructureConstant: "f", Generator: "T", GroupDelta: "d", GroupAlternating: "alt",
                    ParamTensor: "Y"}[type(g)]
            if isinstance(g, ParamTensor):  # Y(i,j): its dummies are named by the index space of each slot
                spaces = self.model.parameters[g.group].spaces if self.model is not None else ("",) * len(g.slots_)
                entry = f"{self.group_functions['Y:' + g.group]}(" + ",".join(
                    self.slot(s, _form_index(space)) for s, space in zip(g.slots_, spaces)) + ")"
                factors.append(f"conj({entry})" if g.conjugate else entry)
                continue
            # a delta is FORM's d_: its indices carry their dimension, so it contracts to N or N^2 - 1
            name = "d_" if kind == "d" else self.group_functions[f"{kind}:{g.group}"]
            factors.append(f"{name}(" + ",".join(self.slot(s, _form_index(g.group)) for s in g.slots_) + ")")
        return "*".join(factors) if factors else "1"

    def chain(self, chain: Chain) -> str:
        line = self.lines[(chain.bar_leg, chain.leg)]
        if not chain.matrices:
            return f"gi_({line})"
        parts = []
        for mat in chain.matrices:
            if isinstance(mat, Gamma):
                parts.append(f"g_({line},{self.slot(mat.slot)})")
            elif isinstance(mat, Sigma):
                a, b = self.slot(mat.a), self.slot(mat.b)
                parts.append(f"i_/2*(g_({line},{a},{b}) - g_({line},{b},{a}))")
            elif isinstance(mat, Chiral):
                parts.append({"gamma5": f"g5_({line})", "PL": f"(gi_({line}) - g5_({line}))/2",
                              "PR": f"(gi_({line}) + g5_({line}))/2", "C": f"vsC({line})"}[mat.kind])
        return "*".join(p if not p.startswith("i_/2") else f"({p})" for p in parts)


# ------------------------------------------------------------------ statements

def _leg_label(label: str, names: _Names) -> str:
    for prefix in ("bar(", "dag("):
        if label.startswith(prefix) and label.endswith(")"):
            return f"{prefix}{_leg_label(label[4:-1], names)})"
    if label.endswith("]") and "[" in label:  # a leg of unrolled rules, e[2]: comp(e,2)
        name, _, components = label[:-1].partition("[")
        return f"comp({names.of(name)},{components})"
    return names.of(label)


def _form_index(name: str) -> str:
    return re.sub(r"[^A-Za-z0-9]", "", name)


def _group_index(letter_and_leg: str, group: str) -> str:
    """a3color, i1weak: a group index of FORM, always qualified by its group (its dimension depends on it)."""
    return _form_index(letter_and_leg + group)


def _dummy_dimensions(structure: Structure, ranks: dict[str, int], leg_dims: dict[tuple[int, str], int],
                      dims: dict[str, int], model: "Model | None" = None) -> None:
    """The dimension of every contracted group index, read from the tensors it sits in."""
    for g in structure.group:
        if isinstance(g, ParamTensor) and model is not None:  # each slot lives on its index space
            for slot, space in zip(g.slots_, model.parameters[g.group].spaces):
                if isinstance(slot, GroupDummy):
                    dims[f"{slot.name}{_form_index(space)}"] = model.spaces[space].size
            continue
        n = ranks.get(g.group, 1)
        if isinstance(g, StructureConstant):
            kinds = [n * n - 1] * 3
        elif isinstance(g, Generator):
            kinds = [n * n - 1, n, n]
        elif isinstance(g, GroupAlternating):
            kinds = [n] * len(g.slots_)
        else:
            known = [leg_dims[(x.leg, x.group)] for x in g.slots_ if isinstance(x, LegGroupIndex)]
            kinds = [known[0] if known else n] * 2
        for slot, dim in zip(g.slots_, kinds):
            if isinstance(slot, GroupDummy):
                dims[f"{slot.name}{_form_index(g.group)}"] = dim


def _vertex_statement(vertex: Vertex, names: _Names, printer: _Printer, group_functions: dict[str, str],
                      declared: dict[str, set[str]], dims: dict[str, int], ranks: dict[str, int]) -> str:
    legs = vertex.legs
    group_names: dict[tuple[int, str], str] = {}
    group_args: list[str] = []
    leg_dims = {(leg.position, g): d for leg in legs for g, _, d in leg.representations}
    for leg in legs:
        for group, rep, dim in leg.representations:
            name = _group_index(("a" if rep == "adjoint" else "i") + str(leg.position), group)
            group_names[(leg.position, group)] = name
            group_args.append(name)
            dims[name] = dim
    chains = sorted({(c.bar_leg, c.leg) for t in vertex.terms for c in t.structure.chains})
    lines = {pair: f"j{k + 1}" for k, pair in enumerate(chains)}
    arguments = ([_leg_label(leg.label, names) for leg in legs] + [f"{leg.momentum}?" for leg in legs]
                 + [f"mu{leg.position}?" for leg in legs if leg.kind == "vector"]
                 + [f"{a}?" for a in group_args] + [f"{line}?" for line in lines.values()])
    declared["vectors"].update(leg.momentum for leg in legs)
    declared["indices"].update(f"mu{leg.position}" for leg in legs if leg.kind == "vector")
    declared["lines"].update(lines.values())
    writer = _Structure(group_names, lines, group_functions, vertex.model)
    terms: list[str] = []
    for term in vertex.terms:
        _dummy_dimensions(term.structure, ranks, leg_dims, dims, vertex.model)
        for c, structure in _expand_momenta(term.structure):
            for slot in structure.slots():
                if isinstance(slot, Dummy):
                    declared["indices"].add(slot.name)
            coefficient = sympy.Rational(c.numerator, c.denominator) * term.coefficient
            terms.append(_times(printer(coefficient), writer.product(structure)))
    body = _join(terms)
    head = f"id vtx({','.join(arguments)}) ="
    # a line with C joins two bar legs or two plain ones: name its row and column ends
    flows = sorted({(lines[(c.bar_leg, c.leg)], c.bar_leg, c.leg) for t in vertex.terms for c in t.structure.chains
                    if CHARGE_CONJUGATION in c.matrices})
    notes = [f"* spin line {line}: row {_leg_label(legs[row - 1].label, names)} (leg {row}), column "
             f"{_leg_label(legs[column - 1].label, names)} (leg {column})"
             for line, row, column in flows]
    return "\n".join(notes + [_wrap(f"{head} {body};")])


def _times(coefficient: str, product: str) -> str:
    if product == "1":
        return coefficient
    if coefficient == "1":
        return product
    if coefficient == "-1":
        return "-" + product
    if re.search(r"[+]| - ", coefficient):
        coefficient = f"({coefficient})"
    return f"{coefficient}*{product}"


def _join(terms: list[str]) -> str:
    if not terms:
        return "0"
    out = terms[0]
    for t in terms[1:]:
        out += f" - {t[1:]}" if t.startswith("-") else f" + {t}"
    return out


def _wrap(statement: str) -> str:
    """Break long statements before a ' + ' or ' - ' outside brackets (a statement ends at its ';')."""
    if len(statement) <= 100:
        return statement
    cuts = top_level_cuts(statement, ("+", "-"))
    lines, start, current_start = [], 0, 0
    for cut in cuts + [len(statement)]:
        if cut - current_start > 96 and start > current_start:
            lines.append(statement[current_start:start])
            current_start = start
        start = cut
    lines.append(statement[current_start:])
    return "\n    ".join(line.strip() for line in lines)


def _propagator_statement(prop: Propagator, names: _Names, printer: _Printer, declared: dict[str, set[str]],
                          dims: dict[str, int]) -> str:
    arguments = [names.of(prop.field)]
    if prop.partner is not None:  # an entry of a mixed block: P(field, conj(partner), ...)
        arguments.append(_leg_label(prop.label.split(" ", 1)[1], names))
    arguments.append("p?")
    if prop.kind == "vector":
        arguments += ["mu?", "nu?"]
        body = _join([_times(printer(prop.a), "d_(mu,nu)"), _times(printer(prop.b), "p(mu)*p(nu)")]
                     if prop.b != 0 else [_times(printer(prop.a), "d_(mu,nu)")])
    elif prop.kind == "dirac":
        arguments.append("j?")
        declared["lines"].add("j")
        chiral = getattr(prop, "chiral", None)
        if chiral is not None:
            # (cL PL + cR PR) pslash with PL, PR = (1 -+ gamma5)/2
            left, right = chiral
            masses = prop.chiral_mass or (0, 0)
            body = _join([_times(printer(c / 2), f"({m})*g_(j,p)") for c, m in
                          ((left, "gi_(j) - g5_(j)"), (right, "gi_(j) + g5_(j)")) if c != 0]
                         + [_times(printer(c / 2), f"({m})") for c, m in
                            ((masses[0], "gi_(j) - g5_(j)"), (masses[1], "gi_(j) + g5_(j)")) if c != 0])
        else:
            body = _join([_times(printer(prop.a), "g_(j,p)")] + ([_times(printer(prop.b), "gi_(j)")]
                                                                 if prop.b != 0 else []))
    else:
        body = printer(prop.a)
    deltas = []
    for group, rep, dim in prop.representations:
        letter = "a" if rep == "adjoint" else "i"
        first, second = _group_index(f"{letter}1", group), _group_index(f"{letter}2", group)
        arguments += [f"{first}?", f"{second}?"]
        dims.update({first: dim, second: dim})
        deltas.append(f"d_({first},{second})")
    if deltas:
        body = "*".join(deltas) + f"*({body})"
    return _wrap(f"id prop({','.join(arguments)}) = {body};")


def _comment_block(text: str) -> list[str]:
    return ["* " + line if line else "*" for line in textwrap.wrap(text, 96)]


def render_form(rules: Rules) -> str:
    """Declarations, then the rules as procedures vsvertices, vspropagators and vsrules (deterministic)."""
    model = rules.model
    names = _Names(_RESERVED)
    for name in list(model.parameters) + list(model.fields):
        names.of(name)
    printer = _Printer(names)
    group_functions: dict[str, str] = {}
    for group in model.groups.values():
        for kind in ("f", "T", "alt"):
            group_functions[f"{kind}:{group.name}"] = names.of(f"{kind}{group.name}")
    arrays = [p.name for p in model.parameters.values() if p.is_array]
    for name in arrays:  # a vector or matrix parameter is a commuting function of its indices, Y(i,j)
        group_functions[f"Y:{name}"] = names.of(name)
    ranks = {g.name: g.rank for g in model.groups.values()}
    ranks.update({space.name: space.size for space in model.spaces.values()})
    declared: dict[str, set[str]] = {"vectors": {"p"}, "indices": {"mu", "nu"}, "lines": set()}
    dims: dict[str, int] = {}
    statements = [_vertex_statement(v, names, printer, group_functions, declared, dims, ranks)
                  for v in rules.vertices]
    propagators = [_propagator_statement(p, names, printer, declared, dims) for p in rules.propagators]
    symbols = sorted({names.of(n) for n in model.parameters if n not in arrays}
                     | {names.of(s.name) for p in rules.propagators for s in (p.a.free_symbols | p.b.free_symbols)
                        if s != P2}, key=lambda x: (x.lower(), x))
    fields = sorted({names.of(f) for f in model.fields}, key=lambda x: (x.lower(), x))
    if any("conj(" in s for s in statements):  # conjugated matrix parameters in the structures
        printer.functions.add("conj")
    if any("comp(" in s for s in statements):  # legs of unrolled rules
        printer.functions.add("comp")
    functions = ["bar", "dag", "den", *sorted(printer.functions)]
    functions += sorted(group_functions[k] for k in group_functions
                        if any(group_functions[k] + "(" in s for s in statements + propagators)
                        and group_functions[k] not in printer.functions)

    def _sorted(items: Iterable[str]) -> str:
        def key(x: str) -> tuple[str, int, str]:
            match = re.match(r"^([A-Za-z]+?)(\d+)(.*)$", x)
            return (match.group(1), int(match.group(2)), match.group(3)) if match else (x, 0, "")

        return ", ".join(sorted(items, key=key))

    header = ["* Feynman rules of the model '" + model.name + "' (" + model.description + "),",
              f"* written by vertexsmith for FORM; gauge: {rules.gauge}.", "*"]
    header += _comment_block("Conventions: " + rules.conventions)
    header += ["*"]
    header += _comment_block(
        "Use: #include this file at the top of a program (it declares names and defines procedures, nothing "
        "runs), declare your own names after it, build expressions with vtx(...) and prop(...), then "
        "#call vsrules() (or vsvertices() and vspropagators() separately) to substitute the rules.")
    header += _comment_block(
        "Vertices: vtx(leg labels, then wildcards: the incoming momentum of every leg p1, p2, ...; the "
        "Lorentz index mu<k> of every vector leg; the group index of every leg in a non-abelian "
        "representation (a<k><group> adjoint, i<k><group> fundamental); one spin line j1, j2, ... per "
        "fermion chain, chains ordered by their bar leg). Propagators: prop(field, p, then mu, nu for "
        "vectors or the spin line j for fermions, then two group indices per group), p along the particle "
        "arrow. vtx and prop are non-commuting functions: write them in the order of the spin line. Fields "
        "that mix have a propagator matrix: prop(field, dag(partner) or bar(partner) or partner, p, ...) is "
        "the entry that joins the leg field to the conjugated leg of partner, p running from the partner "
        "end to the field end.")
    header += _comment_block(
        "Notation: g_(j,mu) gamma matrix on spin line j, g5_(j) gamma5, gi_(j) unit; PL = (gi_ - g5_)/2, "
        "PR = (gi_ + g5_)/2; sigma^{mu nu} = i_/2*(g_(j,mu,nu) - g_(j,nu,mu)); d_ metric and group deltas "
        "(group indices are declared with their dimension); e_ the Levi-Civita tensor with epsilon^{0123} = "
        f"{model.conventions.eps0123:+d} (our convention: check it against FORM's own before contracting two "
        "e_); den(x) = 1/x; conj(x) the complex conjugate. Group tensors: f<group>(a,b,c) structure "
        "constants, T<group>(a,i,j) generators in the fundamental (Tr T^a T^b = delta^{ab}/2), "
        "alt<group>(i,j,...) the alternating tensor. Index spaces of the model (generations): their indices "
        "are declared with their size and contract with d_; a vector or matrix parameter Y is the function "
        "Y(i,j) of its indices, conj(Y(i,j)) its complex conjugate; in unrolled rules a leg of one component "
        "is comp(field,2).")
    header += _comment_block(
        "Contracted indices r1, r2, ... (Lorentz) and e1<group>, e2<group>, ... (group) are dummies: when one "
        "term can hold two copies of such a vertex, substitute with 'id once' in a repeat loop and rename the "
        "dummies (sum r1;) after each substitution.")
    if rules.uses_charge_conjugation:
        header += _comment_block(
            "vsC(j) is the charge-conjugation matrix C = i gamma^2 gamma^0 on spin line j; it stands at an end "
            "of a line with a charge-conjugate field: bar(a) G cc(b) = bar(a) G C bar(b)^T, and a comment "
            "above each such vertex names the line's row and column legs. FORM has no transposition: read "
            "the line along its fermion flow, where ubar(a) G C ubar(b)^T = ubar(a) G v(b) since "
            "v = C ubar^T: replace vsC(j) by gi_(j) and put the v (or u) spinor of the column leg at that "
            "end. C gamma^mu^T C^-1 = -gamma^mu; gamma5 and the projectors are unchanged.")
    if names.renamed:
        header += ["*"] + _comment_block("Renamed for FORM: " + ", ".join(f"{new} = {old}"
                                                                           for new, old in names.renamed) + ".")
    plain = declared["indices"] | declared["lines"]
    indices = [_sorted(plain)] + ([_sorted(f"{name}={dim}" for name, dim in dims.items())] if dims else [])
    lines = header + ["", "* declarations",
                      f"Symbols {', '.join(symbols + fields)};" if symbols or fields else "",
                      f"Vectors {_sorted(declared['vectors'])};",
                      f"Indices {', '.join(indices)};",
                      "* non-commuting, so that spin lines keep their order",
                      "Functions vtx, prop;"] + (["Functions vsC;"] if rules.uses_charge_conjugation else []) + [
                      f"CFunctions {', '.join(functions)};", "",
                      "* substitutions, run where the program calls them",
                      "#procedure vsvertices()"]
    lines += statements
    lines += ["#endprocedure", "", "#procedure vspropagators()"] + propagators
    lines += ["#endprocedure", "", "#procedure vsrules()", "#call vsvertices()", "#call vspropagators()",
              "#endprocedure"]
    return "\n".join(line for line in lines) + "\n"


def render(rules: Rules, **options: object) -> str:
    """The renderer entry point used by `vertexsmith.render.render(rules, "form")`."""
    return render_form(rules)
