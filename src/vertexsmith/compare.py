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

import string
from dataclasses import dataclass, field, replace
from fractions import Fraction
from pathlib import Path
from typing import TYPE_CHECKING, Any, Callable, Mapping, Sequence

import numpy as np
import sympy

from .compare_command import POINTS, SEED, add_command, run  # noqa: F401 - the command lives there, kept importable here
from .errors import ModelMeaningError, Source, Span, UsageError, did_you_mean
from .numeric import GAMMA, GAMMA5, IDENTITY4, METRIC, PROJ_L, PROJ_R, SIGMA, levi_civita, lower, slash
from .parse import MAX_HAND_BYTES, parse_hand_rules_text  # noqa: F401 - MAX_HAND_BYTES was defined here
from .pipeline import derive
from .rules import MU, NU, P, Leg, Propagator, Rules, Vertex
from .structures import permutation_sign
from .symbolic import (factor_text, Chain, Dot, FourVector, Gamma, Gamma5, Generator, GroupAlternating, GroupDelta, LeviCivita, Metric, ProjL, ProjR,
                       Sigma, Slash, StructureConstant)
from .syntax import (HandRule, HandRules, HCall, HDot, HIndexed, HName, HNode, HNumber, HPower, HProduct, HQuotient,
                     HSum)

if TYPE_CHECKING:
    from .model import Model

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


# ------------------------------------------------------------------ numbers from hand factors

@dataclass
class _Value:
    """A numeric tensor: named axes (Lorentz indices, group indices, '#s<k>' spinor axes of chains),
    then, for a Dirac matrix, two matrix axes; or a bare four-momentum."""

    array: np.ndarray
    axes: tuple[str, ...] = ()
    matrix: bool = False
    momentum: bool = False
    fermions: tuple[int, ...] = ()  # legs of chains, sorted; the sign of the written order is in the array


@dataclass(frozen=True)
class _Space:
    """What an index ranges over: the Lorentz indices (metric contraction) or a group's indices."""

    kind: str  # "lorentz" | "group" | "spinor"
    dim: int
    group: str = ""


_LORENTZ = _Space("lorentz", 4)


def _group_index_names(leg: Leg) -> list[str]:
    """The names of a leg's group indices (a3, i1, i1_color...): its index names after mu<k> and s<k>."""
    return [i for i in leg.indices if i not in (f"mu{leg.position}", f"s{leg.position}")]


class _Context:
    """Everything a hand factor's names can refer to, for one rule."""

    def __init__(self, rules: Rules, rule: HandRule, legs: Sequence[Leg] | None, propagator: Propagator | None,
                 source: Source) -> None:
        self.rules = rules
        self.model = rules.model
        self.rule = rule
        self.legs = list(legs or [])
        self.propagator = propagator
        self.source = source
        self.momentum_names: list[str] = ["p"] if propagator is not None else [leg.momentum for leg in self.legs]
        self.spaces: dict[str, _Space] = {}
        ranks = {g.name: getattr(g, "rank", 1) for g in self.model.groups.values()}
        self.ranks = ranks
        if propagator is not None:
            names = list(propagator.indices)
            group_names = names[-2 * len(propagator.representations):] if propagator.representations else []
            for k, (group, _, dim) in enumerate(propagator.representations):
                for n in group_names[2 * k:2 * k + 2]:
                    self.spaces[n] = _Space("group", dim, group)
        for leg in self.legs:
            for (group, _, dim), name in zip(leg.representations, _group_index_names(leg)):
                self.spaces[name] = _Space("group", dim, group)
        self.parameters = {name: p for name, p in self.model.parameters.items()}
        self.xi = {g.xi.name: g.xi for g in self.model.groups.values()}
        self.eps0123 = self.model.conventions.eps0123

    def error(self, message: str, span: Span, hint: str = "") -> ModelMeaningError:
        return ModelMeaningError(message, span, hint).with_source(self.source)

    def known_names(self) -> list[str]:
        return sorted(set(self.parameters) | set(self.xi) | set(self.momentum_names)
                      | {"I", "pi", "gamma", "gamma5", "PL", "PR", "sigma", "g", "eps", "f", "T", "delta"})


class _Numeric:
    """Evaluate a hand factor at one point: momenta by name, parameter values by name."""

    def __init__(self, ctx: _Context, momenta: Mapping[str, np.ndarray], values: Mapping[str, complex]) -> None:
        self.ctx = ctx
        self.momenta = momenta
        self.values = values

    # ---- tensor algebra
    def scalar(self, number: complex) -> _Value:
        return _Value(np.array(complex(number)))

    def space_of(self, name: str) -> _Space:
        return self.ctx.spaces.get(name, _LORENTZ)

    def contraction(self, name: str) -> np.ndarray:
        """What joins two copies of an index: the metric for Lorentz indices, a Kronecker delta for group ones."""
        space = self.space_of(name)
        return METRIC if space.kind == "lorentz" else np.eye(space.dim, dtype=complex)

    def product(self, a: _Value, b: _Value, span: Span) -> _Value:
        """a b: repeated indices contracted, Dirac matrices multiplied in the written order."""
        for x, y in ((a, b), (b, a)):
            if x.momentum and not (y.momentum or y.axes or y.matrix or y.fermions):
                return _Value(x.array * y.array, momentum=True)  # a number times a momentum
        if a.momentum or b.momentum:
            raise self.ctx.error("a momentum stands in a product without an index", span,
                                 "write p1[mu3], p1.p2, dot(p1, p2) or slash(p1)")
        if set(a.fermions) & set(b.fermions):
            raise self.ctx.error("a fermion leg appears in two chains of one product", span)
        letters = iter(string.ascii_letters)
        letter_a = {n: next(letters) for n in a.axes}
        letter_b: dict[str, str] = {}
        links: list[tuple[np.ndarray, str]] = []
        for n in b.axes:
            letter_b[n] = next(letters)
            if n in letter_a:
                if n.startswith("#"):
                    raise self.ctx.error(f"the spinor index of leg {n[2:]} appears in two chains", span)
                links.append((self.contraction(n), letter_a[n] + letter_b[n]))
        out_axes = tuple(n for n in a.axes if n not in letter_b) + tuple(n for n in b.axes if n not in letter_a)
        out = "".join(letter_a.get(n) or letter_b[n] for n in out_axes)
        sub_a, sub_b = "".join(letter_a.values()), "".join(letter_b.values())
        if a.matrix and b.matrix:
            r, m, c = next(letters), next(letters), next(letters)
            sub_a, sub_b, out = sub_a + r + m, sub_b + m + c, out + r + c
        elif a.matrix or b.matrix:
            r, c = next(letters), next(letters)
            sub_a, sub_b = (sub_a + r + c, sub_b) if a.matrix else (sub_a, sub_b + r + c)
            out += r + c
        expression = ",".join([sub_a, sub_b] + [link for _, link in links]) + "->" + out
        array = np.einsum(expression, a.array, b.array, *(op for op, _ in links))
        return _Value(array, out_axes, a.matrix or b.matrix, False, tuple(sorted(a.fermions + b.fermions)))

    def add(self, a: _Value, b: _Value, sign: int, span: Span) -> _Value:
        if a.momentum and b.momentum:
            return _Value(a.array + sign * b.array, momentum=True)
        if a.momentum or b.momentum:
            raise self.ctx.error("a momentum is added to something that is not a momentum", span,
                                 "give the momentum an index, p1[mu3], or contract it, p1.p2")
        if set(a.axes) != set(b.axes):
            raise self.ctx.error(f"the terms of a sum have different free indices ({', '.join(sorted(a.axes)) or 'none'}"
                                 f" and {', '.join(sorted(b.axes)) or 'none'})", span,
                                 "every term of a sum carries the same free indices")
        if a.fermions != b.fermions:
            raise self.ctx.error("the terms of a sum have different fermion chains", span)
        barr = np.transpose(b.array, [b.axes.index(n) for n in a.axes] + ([len(b.axes), len(b.axes) + 1]
                                                                        if b.matrix else []))
        aarr = a.array
        if a.matrix and not b.matrix:
            barr = np.multiply.outer(barr, IDENTITY4)
        elif b.matrix and not a.matrix:
            aarr = np.multiply.outer(aarr, IDENTITY4)
        return _Value(aarr + sign * barr, a.axes, a.matrix or b.matrix, False, a.fermions)

    def tensor(self, array: np.ndarray, slots: Sequence[tuple[str, Span]], matrix: bool, span: Span,
               spaces: Sequence[_Space] | None = None) -> _Value:
        """An object with index slots (Lorentz unless `spaces` says otherwise); a momentum in a slot is
        contracted with it, and an index written twice in one object is contracted at once."""
        letters = iter(string.ascii_letters)
        slot_letters = [next(letters) for _ in slots]
        matrix_letters = "yz" if matrix else ""
        operands: list[np.ndarray] = [array]
        subscripts = ["".join(slot_letters) + matrix_letters]
        kept: dict[str, str] = {}
        for k, ((name, slot_span), letter) in enumerate(zip(slots, slot_letters)):
            space = spaces[k] if spaces else _LORENTZ
            if name in self.ctx.momentum_names:
                if space.kind != "lorentz":
                    raise self.ctx.error("a momentum cannot fill a group index", slot_span)
                operands.append(lower(self.momenta[name]))
                subscripts.append(letter)
            elif name in kept:
                operands.append(METRIC if space.kind == "lorentz" else np.eye(space.dim, dtype=complex))
                subscripts.append(kept.pop(name) + letter)
            else:
                kept[name] = letter
        out = "".join(kept.values()) + matrix_letters
        return _Value(np.einsum(",".join(subscripts) + "->" + out, *operands), tuple(kept), matrix)

    # ---- nodes
    def evaluate(self, node: HNode) -> _Value:
        method: Callable[[Any], _Value] = getattr(self, "_" + type(node).__name__)
        try:
            with np.errstate(all="raise"):
                value = method(node)
        except (OverflowError, ZeroDivisionError, FloatingPointError):
            value = None
        if value is None or not np.all(np.isfinite(value.array)):
            raise self.ctx.error("this factor is not a finite number", node.span,
                                 "look for a division by zero or a number too large")
        return value

    def _HNumber(self, node: HNumber) -> _Value:
        return self.scalar(float(node.value))

    def _HSum(self, node: HSum) -> _Value:
        result: _Value | None = None
        for sign, term in node.terms:
            value = self.evaluate(term)
            if result is None:
                result = value if sign == 1 else self._negate(value)
            else:
                result = self.add(result, value, sign, node.span)
        assert result is not None
        return result

    def _negate(self, value: _Value) -> _Value:
        return replace(value, array=-value.array)

    def _HProduct(self, node: HProduct) -> _Value:
        result = self.evaluate(node.factors[0])
        for factor in node.factors[1:]:
            result = self.product(result, self.evaluate(factor), node.span)
        return result

    def _plain(self, value: _Value, span: Span, what: str) -> complex:
        if value.momentum or value.axes or value.matrix:
            raise self.ctx.error(f"{what} must be a plain number", span,
                                 "only numbers and parameters can stand in a denominator, a power or a function")
        return complex(value.array)

    def _HQuotient(self, node: HQuotient) -> _Value:
        numerator = self.evaluate(node.numerator)
        denominator = self._plain(self.evaluate(node.denominator), node.denominator.span, "a denominator")
        return replace(numerator, array=numerator.array / denominator)

    def _HPower(self, node: HPower) -> _Value:
        base = self.evaluate(node.base)
        exponent = self._plain(self.evaluate(node.exponent), node.exponent.span, "an exponent")
        if base.momentum:
            if exponent != 2:
                raise self.ctx.error("a momentum can only be squared", node.span, "write p^2 for p.p")
            return self.scalar(base.array @ METRIC @ base.array)
        if base.matrix and not base.axes and exponent.imag == 0 and float(exponent.real).is_integer() \
                and exponent.real >= 0:
            return replace(base, array=np.linalg.matrix_power(base.array, int(exponent.real)))
        return self.scalar(self._plain(base, node.base.span, "the base of a power") ** exponent)

    def _HDot(self, node: HDot) -> _Value:
        p = self._momentum(node.left, node.span)
        q = self._momentum(node.right, node.span)
        return self.scalar(p @ METRIC @ q)

    def _momentum(self, name: str, span: Span) -> np.ndarray:
        if name not in self.ctx.momentum_names:
            raise self.ctx.error(f"'{name}' is not a momentum here", span,
                                 "the momenta are " + ", ".join(self.ctx.momentum_names))
        return self.momenta[name]

    def _HIndexed(self, node: HIndexed) -> _Value:
        base = self.evaluate(node.base)
        if not base.momentum or len(node.indices) != 1:
            raise self.ctx.error("only a momentum combination takes an index here, as in (p1 - p2)[mu3]", node.span)
        return self.tensor(base.array, node.indices, False, node.span)

    def _HName(self, node: HName) -> _Value:  # noqa: C901 - one branch per built-in name
        name, indices, span = node.name, node.indices, node.span
        ctx = self.ctx
        name, named_group = _group_tensor_name(name, indices, ctx)
        if name in ctx.momentum_names:
            if not indices:
                return _Value(self.momenta[name], momentum=True)
            if len(indices) != 1:
                raise ctx.error(f"the momentum {name} takes one index", span)
            return self.tensor(self.momenta[name], indices, False, span)
        expected = {"gamma": 1, "sigma": 2, "g": 2, "eps": 4, "f": 3, "T": 3, "delta": 2}
        if name == "alt" and indices and "alt" not in ctx.parameters:  # N indices for SU(N): counted there
            return self._group_tensor(name, indices, span, named_group)
        if name in expected and (indices or name not in ctx.parameters):  # g[mu,nu] is the metric even beside a coupling g
            if len(indices) != expected[name]:
                raise ctx.error(f"{name} takes {expected[name]} index{'es' if expected[name] > 1 else ''}", span)
            if name == "gamma":
                return self.tensor(GAMMA, indices, True, span)
            if name == "sigma":
                return self.tensor(SIGMA, indices, True, span)
            if name == "g":
                return self.tensor(METRIC, indices, False, span)
            if name == "eps":
                return self.tensor(levi_civita(ctx.eps0123), indices, False, span)
            return self._group_tensor(name, indices, span, named_group)
        if indices:
            raise ctx.error(f"'{name}' takes no index", span)
        if name == "I":
            return self.scalar(1j)
        if name == "pi":
            return self.scalar(np.pi)
        if name in ("gamma5", "PL", "PR") and name not in ctx.parameters:
            return _Value({"gamma5": GAMMA5, "PL": PROJ_L, "PR": PROJ_R}[name], (), True)
        if name in ctx.parameters or name in ctx.xi:
            if name not in self.values:
                raise ctx.error(f"the parameter '{name}' has no value", span, "give it a value in the model file")
            return self.scalar(self.values[name])
        raise ctx.error(f"unknown name '{name}'", span, did_you_mean(name, ctx.known_names(),
                                                                     "use the model's parameters and the built-in names"))

    def _group_tensor(self, name: str, indices: Sequence[tuple[str, Span]], span: Span,
                      named_group: str | None = None) -> _Value:
        ctx = self.ctx
        leg_groups = {ctx.spaces[n].group for n, _ in indices if n in ctx.spaces}
        non_abelian = [g for g in ctx.model.groups.values() if getattr(g, "rank", 1) > 1]
        if named_group is not None:
            group = named_group
        elif len(leg_groups) == 1:
            group = leg_groups.pop()
        elif len(non_abelian) == 1 and not leg_groups:
            group = non_abelian[0].name
        else:
            raise ctx.error(f"cannot tell which group {name}[...] belongs to", span,
                            "give it at least one leg index (a3, i1, ...)")
        n = ctx.ranks.get(group, 1)
        if n < 2:
            raise ctx.error(f"the group '{group}' is abelian: it has no {name}", span)
        from .groups import MAX_ALTERNATING_RANK, su_alternating, su_generators, su_structure_constants

        adjoint, fundamental = _Space("group", n * n - 1, group), _Space("group", n, group)
        if name == "f":
            array, spaces = su_structure_constants(n).astype(complex), [adjoint] * 3
        elif name == "T":
            array, spaces = su_generators(n), [adjoint, fundamental, fundamental]
        elif name == "alt":
            if len(indices) != n or n > MAX_ALTERNATING_RANK:
                raise ctx.error(f"alt of SU({n}) takes {n} indices", span)
            array, spaces = su_alternating(n), [fundamental] * n
        else:
            known = [ctx.spaces[x] for x, _ in indices if x in ctx.spaces]
            space = known[0] if known else fundamental
            array, spaces = np.eye(space.dim, dtype=complex), [space, space]
        for (x, s), space in zip(indices, spaces):
            have = ctx.spaces.get(x)
            if have is not None and have.dim != space.dim:
                raise ctx.error(f"the index {x} runs over {have.dim} values, not {space.dim}", s)
            ctx.spaces.setdefault(x, space)
        return self.tensor(array, indices, False, span, spaces)

    def _HCall(self, node: HCall) -> _Value:
        f, args, span = node.function, node.arguments, node.span
        ctx = self.ctx
        if f == "slash":
            self._arity(node, 1)
            p = self.evaluate(args[0])
            if not p.momentum:
                raise ctx.error("slash() takes a momentum", args[0].span, "write slash(p1) or slash(p1 - p2)")
            return _Value(slash(p.array), (), True)
        if f == "dot":
            self._arity(node, 2)
            p, q = self.evaluate(args[0]), self.evaluate(args[1])
            if not (p.momentum and q.momentum):
                raise ctx.error("dot() takes two momenta", span)
            return self.scalar(p.array @ METRIC @ q.array)
        if f == "chain":
            self._arity(node, 3)
            i, j = (self._leg_number(a) for a in args[:2])
            inner = self.evaluate(args[2])
            if inner.momentum or inner.fermions:
                raise ctx.error("the third argument of chain() is a Dirac matrix", args[2].span)
            matrix = inner.array if inner.matrix else np.multiply.outer(inner.array, IDENTITY4)
            if not (ctx.legs[i - 1].conjugate and ctx.legs[i - 1].kind in ("dirac", "majorana")):
                raise ctx.error(f"leg {i} of chain() must be a bar() fermion leg", args[0].span)
            if ctx.legs[j - 1].conjugate or ctx.legs[j - 1].kind not in ("dirac", "majorana"):
                raise ctx.error(f"leg {j} of chain() must be a fermion leg without bar()", args[1].span)
            return _Value(matrix, inner.axes + (f"#s{i}", f"#s{j}"), False, False, tuple(sorted((i, j))))
        functions: dict[str, Callable[[complex], Any]] = {
            "sqrt": np.sqrt, "conj": np.conj, "sin": np.sin, "cos": np.cos, "tan": np.tan,
            "exp": np.exp, "log": np.log, "re": np.real, "im": np.imag}
        self._arity(node, 1)
        x = self._plain(self.evaluate(args[0]), args[0].span, f"the argument of {f}()")
        return self.scalar(complex(functions[f](complex(x))))

    def _arity(self, node: HCall, n: int) -> None:
        if len(node.arguments) != n:
            raise self.ctx.error(f"{node.function}() takes {n} argument{'s' if n > 1 else ''}", node.span)

    def _leg_number(self, node: HNode) -> int:
        if not isinstance(node, HNumber) or node.value.denominator != 1 or not 1 <= node.value <= len(self.ctx.legs):
            raise self.ctx.error(f"chain() needs leg numbers between 1 and {len(self.ctx.legs)}", node.span)
        return int(node.value)


def _group_tensor_name(name: str, indices: Sequence[tuple[str, Span]], ctx: _Context) -> tuple[str, str | None]:
    """f_color[...], T_color[...], delta_color[...] (the group in the name, as vertexsmith writes them) -> (f, color)."""
    base, _, group = name.partition("_")
    if indices and group and base in ("f", "T", "delta", "alt") and name not in ctx.parameters \
            and group in ctx.model.groups:
        return base, group
    return name, None


def _layout(ctx: _Context, value: _Value, span: Span) -> np.ndarray:
    """Arrange a hand factor's value in vertexsmith's numeric layout (sign of the fermion order applied)."""
    if value.momentum:
        raise ctx.error("the factor is a bare momentum", span, "give it an index, as in p1[mu3]")
    if ctx.propagator is not None:
        return _propagator_layout(ctx, value, span)
    fermion_legs = [leg for leg in ctx.legs if leg.kind in ("dirac", "majorana")]
    if value.matrix or (not value.fermions and fermion_legs):
        bars = [leg for leg in fermion_legs if leg.conjugate]
        plain = [leg for leg in fermion_legs if not leg.conjugate]
        if len(bars) != 1 or len(plain) != 1:
            raise ctx.error("a vertex with this many fermion legs needs chain(i, j, M) for each fermion line",
                            span, "write e.g. chain(1, 4, gamma[r] PL) chain(3, 2, gamma[r] PL)")
        b, q = bars[0].position, plain[0].position
        matrix = value.array if value.matrix else np.multiply.outer(value.array, IDENTITY4)
        value = _Value(permutation_sign([b, q]) * matrix, value.axes + (f"#s{b}", f"#s{q}"), False, False,
                       tuple(sorted((b, q))))
    elif not fermion_legs and value.fermions:  # pragma: no cover - chain() checks its legs
        raise ctx.error("this vertex has no fermion legs", span)
    wanted: list[str] = []
    for leg in ctx.legs:
        group_indices = iter(_group_index_names(leg))
        for key in leg.axes:
            if key[0] == "lorentz":
                wanted.append(f"mu{leg.position}")
            elif key[0] == "spinor":
                wanted.append(f"#s{leg.position}")
            else:
                wanted.append(next(group_indices))
    return _arrange(ctx, value, wanted, span)


def _arrange(ctx: _Context, value: _Value, wanted: list[str], span: Span) -> np.ndarray:
    missing = [n for n in wanted if n not in value.axes]
    extra = [n for n in value.axes if n not in wanted]
    if extra:
        raise ctx.error(f"the index {extra[0]} is neither contracted nor an index of a leg", span,
                        "the free indices of this factor are " + (", ".join(n for n in wanted if not n.startswith("#"))
                                                                  or "none"))
    if missing:
        shown = [n for n in missing if not n.startswith("#")]
        if shown:
            raise ctx.error(f"the factor has no index {shown[0]}", span,
                            f"every vector leg k carries its index muk; write e.g. gamma[{shown[0]}]")
        raise ctx.error("the factor leaves a fermion leg without a chain", span)  # pragma: no cover
    return np.transpose(value.array, [value.axes.index(n) for n in wanted])


def _propagator_layout(ctx: _Context, value: _Value, span: Span) -> np.ndarray:
    """A hand propagator in the layout of Propagator.evaluate: matrix or (mu, nu) axes, then group pairs."""
    prop = ctx.propagator
    assert prop is not None
    representations = prop.representations
    group_names = list(prop.indices[len(prop.indices) - 2 * len(representations):]) if representations else []
    # the Kronecker deltas of the group indices may be left out of a hand propagator
    implicit = bool(representations) and not any(n in value.axes for n in group_names)
    if prop.kind == "dirac":
        matrix = value.array if value.matrix else np.multiply.outer(value.array, IDENTITY4)
        value = _Value(matrix, value.axes + ("#row", "#col"))
        wanted = ["#row", "#col"]
    else:
        if value.matrix:
            raise ctx.error("a boson propagator cannot hold a Dirac matrix", span)
        wanted = ["mu", "nu"] if prop.kind == "vector" else []
    array = _arrange(ctx, value, wanted + ([] if implicit else group_names), span)
    if implicit:
        for _, _, dim in representations:
            array = np.multiply.outer(array, np.eye(dim))
    return array


# ------------------------------------------------------------------ sympy from hand factors

class _Symbolic:
    """The hand factor as a sympy expression in vertexsmith's own objects (chains as written)."""

    def __init__(self, ctx: _Context) -> None:
        self.ctx = ctx

    def evaluate(self, node: HNode) -> sympy.Expr:
        return getattr(self, "_" + type(node).__name__)(node)

    def _HNumber(self, node: HNumber) -> sympy.Expr:
        return sympy.Rational(node.value.numerator, node.value.denominator)

    def _HSum(self, node: HSum) -> sympy.Expr:
        return sympy.Add(*[sign * self.evaluate(term) for sign, term in node.terms])

    def _HProduct(self, node: HProduct) -> sympy.Expr:
        return sympy.Mul(*[self.evaluate(factor) for factor in node.factors])

    def _HQuotient(self, node: HQuotient) -> sympy.Expr:
        return self.evaluate(node.numerator) / self.evaluate(node.denominator)

    def _HPower(self, node: HPower) -> sympy.Expr:
        b, e = self.evaluate(node.base), self.evaluate(node.exponent)
        if isinstance(b, sympy.Symbol) and str(b) in self.ctx.momentum_names and b != P:
            return Dot(b, b)
        return b**e

    def _slot(self, name: str) -> sympy.Expr:
        if name in self.ctx.momentum_names:
            return P if name == "p" and self.ctx.propagator is not None else sympy.Symbol(name)
        if self.ctx.propagator is not None and name in ("mu", "nu"):
            return MU if name == "mu" else NU
        return sympy.Symbol(name)

    def _HDot(self, node: HDot) -> sympy.Expr:
        return Dot(self._slot(node.left), self._slot(node.right))

    def _HIndexed(self, node: HIndexed) -> sympy.Expr:
        return FourVector(self.evaluate(node.base), self._slot(node.indices[0][0]))

    def _HName(self, node: HName) -> sympy.Expr:
        ctx, name = self.ctx, node.name
        name, named_group = _group_tensor_name(name, node.indices, ctx)
        slots = [self._slot(n) for n, _ in node.indices]
        is_momentum = [n in ctx.momentum_names for n, _ in node.indices]
        if name in ctx.momentum_names:
            p = self._slot(name)
            return FourVector(p, slots[0]) if slots else p
        if name in ("gamma", "sigma", "g", "eps", "f", "T", "delta", "alt") and (node.indices or name not in ctx.parameters):
            if name == "gamma":
                return Slash(slots[0]) if is_momentum[0] else Gamma(slots[0])
            if name == "sigma":
                return Sigma(*slots)
            if name == "g":
                if all(is_momentum):
                    return Dot(*slots)
                if any(is_momentum):
                    p, i = (slots[0], slots[1]) if is_momentum[0] else (slots[1], slots[0])
                    return FourVector(p, i)
                return Metric(*slots)
            if name == "eps":
                return LeviCivita(*slots)
            group = named_group or next((ctx.spaces[n].group for n, _ in node.indices if n in ctx.spaces), "")
            cls = {"f": StructureConstant, "T": Generator, "delta": GroupDelta, "alt": GroupAlternating}[name]
            return cls(sympy.Symbol(group), *slots)
        if name == "I":
            return sympy.I
        if name == "pi":
            return sympy.pi
        if name in ("gamma5", "PL", "PR") and name not in ctx.parameters:
            return {"gamma5": Gamma5, "PL": ProjL, "PR": ProjR}[name]
        if name in ctx.parameters:
            return ctx.parameters[name].symbol
        return ctx.xi.get(name, sympy.Symbol(name))

    def _HCall(self, node: HCall) -> sympy.Expr:
        args = [self.evaluate(a) for a in node.arguments]
        f = node.function
        if f == "slash":
            return Slash(args[0])
        if f == "dot":
            return Dot(args[0], args[1])
        if f == "chain":
            i, j = int(args[0]), int(args[1])
            return Chain(i, j, args[2])
        functions = {"sqrt": sympy.sqrt, "conj": sympy.conjugate, "sin": sympy.sin, "cos": sympy.cos,
                     "tan": sympy.tan, "exp": sympy.exp, "log": sympy.log, "re": sympy.re, "im": sympy.im}
        return functions[f](args[0])


def _linear(cls: type, expr: sympy.Expr, *rest: sympy.Expr) -> sympy.Expr:
    """cls(a p1 + b p2, ...) -> a cls(p1, ...) + b cls(p2, ...), for objects linear in a momentum."""
    terms = sympy.Add.make_args(sympy.expand(expr))
    out = []
    for t in terms:
        c, p = t.as_coeff_Mul()
        out.append(c * cls(p, *rest))
    return sympy.Add(*out)


def canonical_factor(expr: sympy.Expr) -> sympy.Expr:
    """Momentum combinations distributed and symmetric objects' arguments sorted, then expanded."""

    def four_vector(p: sympy.Expr, index: sympy.Expr) -> sympy.Expr:
        return _linear(FourVector, p, index)

    def slash_(p: sympy.Expr) -> sympy.Expr:
        return _linear(Slash, p)

    def dot(p: sympy.Expr, q: sympy.Expr) -> sympy.Expr:
        out = []
        for a in sympy.Add.make_args(sympy.expand(p)):
            ca, pa = a.as_coeff_Mul()
            for b in sympy.Add.make_args(sympy.expand(q)):
                cb, pb = b.as_coeff_Mul()
                x, y = sorted((pa, pb), key=sympy.default_sort_key)
                out.append(ca * cb * Dot(x, y))
        return sympy.Add(*out)

    def metric(a: sympy.Expr, b: sympy.Expr) -> sympy.Expr:
        x, y = sorted((a, b), key=sympy.default_sort_key)
        return Metric(x, y)

    result = expr.replace(FourVector, four_vector).replace(Slash, slash_).replace(Dot, dot).replace(Metric, metric)
    return sympy.expand(result)


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


def _random_values(model: "Model", rng: np.random.Generator) -> dict[str, complex]:
    """Random numbers for every independent parameter (those defined through others follow them)."""
    overrides: dict[str, complex] = {}
    for name, p in model.parameters.items():
        if p.definition is not None and p.definition.free_symbols:
            continue
        value = rng.uniform(0.5, 1.5)
        overrides[name] = complex(value, rng.uniform(0.5, 1.5)) if p.is_complex else complex(value)
    return overrides


def _numbers(model: "Model", overrides: Mapping[str, complex], xi: Mapping[str, complex]) -> dict[str, complex]:
    resolved = model.parameter_values(dict(overrides))
    out = {str(symbol): complex(value) for symbol, value in resolved.items()}
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
            if rule.kind == "propagator" and label != name:
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
        ctx = _Context(self.rules, rule, derived.legs, None, self.hand.source)
        couplings = [g.coupling for g in self.model.groups.values() if isinstance(g.coupling, sympy.Symbol)]
        hand_values, derived_values, flipped, outgoing, scaled = [], [], [], [], []
        for _ in range(self.points):
            overrides, xi = self._values([])
            numbers = _numbers(self.model, overrides, xi)
            momenta = self._momenta(len(derived.legs))
            named = {leg.momentum: momenta[k] for k, leg in enumerate(derived.legs)}
            value = _Numeric(ctx, named, numbers).evaluate(rule.factor)
            hand_values.append(_layout(ctx, value, rule.factor.span))
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
            prop = gauge_rules.propagator(rule.legs[0])
        except UsageError:
            return Comparison("propagator", rule.legs, UNKNOWN, hand=rule.text, span=rule.span)
        ctx = _Context(gauge_rules, rule, None, prop, self.hand.source)
        xi_names = sorted({s.name for s in prop.a.free_symbols | prop.b.free_symbols if s.name.startswith("xi_")})
        hand_values, derived_values, reversed_ = [], [], []
        for _ in range(self.points):
            overrides, xi = self._values(xi_names)
            numbers = _numbers(self.model, overrides, xi)
            p = (self.rng.normal(size=4) * 1.5).astype(complex)
            value = _Numeric(ctx, {"p": p}, numbers).evaluate(rule.factor)
            hand_values.append(_layout(ctx, value, rule.factor.span))
            derived_values.append(prop.evaluate(p, values={**overrides, **xi}))
            reversed_.append(prop.evaluate(-p, values={**overrides, **xi}))
        candidates: list[tuple[str, list[np.ndarray]]] = []
        if not all(_close(r, d) for r, d in zip(reversed_, derived_values)):
            candidates.append((AGAINST_ARROW_CONVENTION, reversed_))
        return self._classify("propagator", rule, prop.factor, hand_values, derived_values, candidates, ctx, 1)

    def _classify(self, kind: str, rule: HandRule, derived_factor: sympy.Expr, hand: list[np.ndarray],
                  derived: list[np.ndarray], candidates: list[tuple[str, list[np.ndarray]]], ctx: _Context,
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

    def _difference(self, rule: HandRule, derived_factor: sympy.Expr, ctx: _Context, orientation: int) -> str:
        """hand - derived, simplified symbolically, for a single fermion line as the matrix the hand file writes."""
        if _uses_chains(rule.factor):
            orientation = 1  # chains are tensors already, like the derived factor
        try:
            hand = canonical_factor(_Symbolic(ctx).evaluate(rule.factor))
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
            key = (rule.kind, tuple(sorted(rule.legs)))
            if key in seen:
                raise ModelMeaningError(f"a second rule for the {rule.kind} {' '.join(rule.legs)}", rule.span,
                                        f"the first one is on line {seen[key].line}").with_source(self.hand.source)
            seen[key] = rule.span
            entries.append(self.vertex(rule) if rule.kind == "vertex" else self.propagator(rule, gauge_rules))
        covered = {tuple(sorted(e.labels)) for e in entries if e.kind == "vertex"}
        missing = [Comparison("vertex", v.labels, "not in hand file", derived=str(v.factor))
                   for v in self.rules.vertices if tuple(sorted(v.labels)) not in covered]
        covered_p = {e.labels[0] for e in entries if e.kind == "propagator"}
        missing += [Comparison("propagator", (p.field,), "not in hand file", derived=str(p.factor))
                    for p in gauge_rules.propagators if p.field not in covered_p]
        return ComparisonReport(self.model.name, self.hand.source.name, gauge, tuple(entries), tuple(missing),
                                self.points, _notes(entries, self.model))


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
           "canonical_factor", "Comparison", "ComparisonReport", "HandRule", "HandRules", "add_command", "run",
           "EQUAL", "CONVENTION", "DIFFERENT", "SIGN_CONVENTION", "COVARIANT_CONVENTION", "OUTGOING_CONVENTION",
           "AGAINST_ARROW_CONVENTION", "PLUS_I_CONVENTION", "MINUS_I_CONVENTION"]
