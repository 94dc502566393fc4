"""Numbers from a hand-written factor: the tensors `compare` sets against the derived rules.

A factor of a hand-rules file (grammar/handrules.lark) is evaluated at given momenta and
parameter values into a numpy array in the layout of `Vertex.evaluate` (legs in the hand rule's
order: Lorentz, spinor, then group axes) or of `Propagator.evaluate`. Indices are named as the
derived rules name them (mu3, s1, a2, i1_color, ...); Dirac matrices of one fermion line multiply
in written order, several lines are written as chain(i, j, M).
"""

from __future__ import annotations

import string
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any, Callable, Mapping, Sequence

import numpy as np

from .errors import ModelMeaningError, Source, Span, did_you_mean
from .numeric import (CHARGE_CONJUGATION_MATRIX, GAMMA, GAMMA5, IDENTITY4, METRIC, PROJ_L, PROJ_R, SIGMA, levi_civita,
                      lower, slash)
from .rules import Leg, Propagator, Rules
from .structures import permutation_sign
from .syntax import HandRule, HCall, HDot, HIndexed, HName, HNode, HNumber, HPower, HProduct, HQuotient, HSum

if TYPE_CHECKING:
    from .model import Parameter

# ------------------------------------------------------------------ numbers from hand factors

@dataclass
class HandValue:
    """A numeric tensor: named axes (Lorentz indices, group indices, '#s<k>' spinor axes of chains),
    then, for a Dirac matrix, two matrix axes; or a bare four-momentum."""

    array: np.ndarray
    axes: tuple[str, ...] = ()
    matrix: bool = False
    momentum: bool = False
    fermions: tuple[int, ...] = ()  # legs of chains, sorted; the sign of the written order is in the array


@dataclass(frozen=True)
class IndexSpace:
    """What an index ranges over: the Lorentz indices (metric contraction) or a group's indices."""

    kind: str  # "lorentz" | "group" | "spinor"
    dim: int
    group: str = ""


_LORENTZ = IndexSpace("lorentz", 4)


def _group_index_names(leg: Leg) -> list[str]:
    """The names of a leg's group indices (a3, i1, i1_color...): its index names after mu<k> and s<k>."""
    return [i for i in leg.indices if i not in (f"mu{leg.position}", f"s{leg.position}")]


class HandContext:
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
        self.spaces: dict[str, IndexSpace] = {}
        ranks = {g.name: getattr(g, "rank", 1) for g in self.model.groups.values()}
        self.ranks = ranks
        if propagator is not None:
            names = list(propagator.indices)
            group_names = names[-2 * len(propagator.representations):] if propagator.representations else []
            for k, (group, _, dim) in enumerate(propagator.representations):
                for n in group_names[2 * k:2 * k + 2]:
                    self.spaces[n] = IndexSpace("group", dim, group)
        for leg in self.legs:
            for (group, _, dim), name in zip(leg.representations, _group_index_names(leg)):
                self.spaces[name] = IndexSpace("group", dim, group)
        self.parameters = {name: p for name, p in self.model.parameters.items()}
        self.xi = {g.xi.name: g.xi for g in self.model.groups.values()}
        self.eps0123 = self.model.conventions.eps0123

    def error(self, message: str, span: Span, hint: str = "") -> ModelMeaningError:
        return ModelMeaningError(message, span, hint).with_source(self.source)

    def known_names(self) -> list[str]:
        return sorted(set(self.parameters) | set(self.xi) | set(self.momentum_names)
                      | {"I", "pi", "gamma", "gamma5", "PL", "PR", "CC", "sigma", "g", "eps", "f", "T", "delta"})


class HandNumeric:
    """Evaluate a hand factor at one point: momenta by name, parameter values by name."""

    def __init__(self, ctx: HandContext, momenta: Mapping[str, np.ndarray], values: Mapping[str, complex]) -> None:
        self.ctx = ctx
        self.momenta = momenta
        self.values = values

    # ---- tensor algebra
    def scalar(self, number: complex) -> HandValue:
        return HandValue(np.array(complex(number)))

    def space_of(self, name: str) -> IndexSpace:
        return self.ctx.spaces.get(name, _LORENTZ)

    def contraction(self, name: str) -> np.ndarray:
        """What joins two copies of an index: the metric for Lorentz indices, a Kronecker delta for group ones."""
        space = self.space_of(name)
        return METRIC if space.kind == "lorentz" else np.eye(space.dim, dtype=complex)

    def product(self, a: HandValue, b: HandValue, span: Span) -> HandValue:
        """a b: repeated indices contracted, Dirac matrices multiplied in the written order."""
        for x, y in ((a, b), (b, a)):
            if x.momentum and not (y.momentum or y.axes or y.matrix or y.fermions):
                return HandValue(x.array * y.array, momentum=True)  # a number times a momentum
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
        return HandValue(array, out_axes, a.matrix or b.matrix, False, tuple(sorted(a.fermions + b.fermions)))

    def add(self, a: HandValue, b: HandValue, sign: int, span: Span) -> HandValue:
        if a.momentum and b.momentum:
            return HandValue(a.array + sign * b.array, momentum=True)
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
        return HandValue(aarr + sign * barr, a.axes, a.matrix or b.matrix, False, a.fermions)

    def tensor(self, array: np.ndarray, slots: Sequence[tuple[str, Span]], matrix: bool, span: Span,
               spaces: Sequence[IndexSpace] | None = None) -> HandValue:
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
        return HandValue(np.einsum(",".join(subscripts) + "->" + out, *operands), tuple(kept), matrix)

    # ---- nodes
    def evaluate(self, node: HNode) -> HandValue:
        method: Callable[[Any], HandValue] = getattr(self, "_" + type(node).__name__)
        try:
            with np.errstate(all="raise"):
                value = method(node)
        except (OverflowError, ZeroDivisionError, FloatingPointError):
            value = None
        if value is None or not np.all(np.isfinite(value.array)):
            raise self.ctx.error("this factor is not a finite number", node.span,
                                 "look for a division by zero or a number too large")
        return value

    def _HNumber(self, node: HNumber) -> HandValue:
        return self.scalar(float(node.value))

    def _HSum(self, node: HSum) -> HandValue:
        result: HandValue | None = None
        for sign, term in node.terms:
            value = self.evaluate(term)
            if result is None:
                result = value if sign == 1 else self._negate(value)
            else:
                result = self.add(result, value, sign, node.span)
        assert result is not None
        return result

    def _negate(self, value: HandValue) -> HandValue:
        return replace(value, array=-value.array)

    def _HProduct(self, node: HProduct) -> HandValue:
        result = self.evaluate(node.factors[0])
        for factor in node.factors[1:]:
            result = self.product(result, self.evaluate(factor), node.span)
        return result

    def _plain(self, value: HandValue, span: Span, what: str) -> complex:
        if value.momentum or value.axes or value.matrix:
            raise self.ctx.error(f"{what} must be a plain number", span,
                                 "only numbers and parameters can stand in a denominator, a power or a function")
        return complex(value.array)

    def _HQuotient(self, node: HQuotient) -> HandValue:
        numerator = self.evaluate(node.numerator)
        denominator = self._plain(self.evaluate(node.denominator), node.denominator.span, "a denominator")
        return replace(numerator, array=numerator.array / denominator)

    def _HPower(self, node: HPower) -> HandValue:
        base = self.evaluate(node.base)
        exponent = self._plain(self.evaluate(node.exponent), node.exponent.span, "an exponent")
        if base.momentum:
            # p^2 = p.p and its powers p^4, p^6 (denominators of propagator matrices)
            if exponent.imag != 0 or not float(exponent.real).is_integer() or exponent.real <= 0 \
                    or int(exponent.real) % 2:
                raise self.ctx.error("a momentum can only be raised to an even power", node.span,
                                     "write p^2 for p.p, p^4 for (p.p)^2")
            return self.scalar((base.array @ METRIC @ base.array) ** (int(exponent.real) // 2))
        if base.matrix and not base.axes and exponent.imag == 0 and float(exponent.real).is_integer() \
                and exponent.real >= 0:
            return replace(base, array=np.linalg.matrix_power(base.array, int(exponent.real)))
        return self.scalar(self._plain(base, node.base.span, "the base of a power") ** exponent)

    def _HDot(self, node: HDot) -> HandValue:
        p = self._momentum(node.left, node.span)
        q = self._momentum(node.right, node.span)
        return self.scalar(p @ METRIC @ q)

    def _momentum(self, name: str, span: Span) -> np.ndarray:
        if name not in self.ctx.momentum_names:
            raise self.ctx.error(f"'{name}' is not a momentum here", span,
                                 "the momenta are " + ", ".join(self.ctx.momentum_names))
        return self.momenta[name]

    def _HIndexed(self, node: HIndexed) -> HandValue:
        base = self.evaluate(node.base)
        if not base.momentum or len(node.indices) != 1:
            raise self.ctx.error("only a momentum combination takes an index here, as in (p1 - p2)[mu3]", node.span)
        return self.tensor(base.array, node.indices, False, node.span)

    def _HName(self, node: HName) -> HandValue:  # noqa: C901 - one branch per built-in name
        name, indices, span = node.name, node.indices, node.span
        ctx = self.ctx
        name, named_group = group_tensor_name(name, indices, ctx)
        if name in ctx.momentum_names:
            if not indices:
                return HandValue(self.momenta[name], momentum=True)
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
        if indices and name in ctx.parameters and ctx.parameters[name].is_array:
            return self._component(ctx.parameters[name], indices, span)
        if indices:
            raise ctx.error(f"'{name}' takes no index", span)
        if name == "I":
            return self.scalar(1j)
        if name == "pi":
            return self.scalar(np.pi)
        if name in ("gamma5", "PL", "PR", "CC") and name not in ctx.parameters:
            return HandValue({"gamma5": GAMMA5, "PL": PROJ_L, "PR": PROJ_R, "CC": CHARGE_CONJUGATION_MATRIX}[name],
                             (), True)
        if name in ctx.parameters or name in ctx.xi:
            if name not in self.values:
                raise ctx.error(f"the parameter '{name}' has no value", span, "give it a value in the model file")
            return self.scalar(self.values[name])
        raise ctx.error(f"unknown name '{name}'", span, did_you_mean(name, ctx.known_names(),
                                                                     "use the model's parameters and the built-in names"))

    def _component(self, p: "Parameter", indices: Sequence[tuple[str, Span]], span: Span) -> HandValue:
        """Y[i,j] of a vector or matrix parameter: its array, with one axis per index space."""
        if len(indices) != len(p.spaces):
            raise self.ctx.error(f"'{p.name}' takes {len(p.spaces)} indices", span)
        if p.name not in self.values:
            raise self.ctx.error(f"the parameter '{p.name}' has no value", span, "give it a value in the model file")
        spaces = [IndexSpace("group", self.ctx.model.spaces[sp].size, sp) for sp in p.spaces]
        for (x, _), space in zip(indices, spaces):
            self.ctx.spaces.setdefault(x, space)
        return self.tensor(np.asarray(self.values[p.name]), indices, False, span, spaces)

    def _group_tensor(self, name: str, indices: Sequence[tuple[str, Span]], span: Span,
                      named_group: str | None = None) -> HandValue:
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
        if group in ctx.model.spaces and name == "delta":  # the delta of an index space of the model
            space = IndexSpace("group", ctx.model.spaces[group].size, group)
            return self.tensor(np.eye(space.dim, dtype=complex), indices, False, span, [space, space])
        n = ctx.ranks.get(group, 1)
        if n < 2:
            raise ctx.error(f"the group '{group}' is abelian: it has no {name}", span)
        from .groups import MAX_ALTERNATING_RANK, su_alternating, su_generators, su_structure_constants

        adjoint, fundamental = IndexSpace("group", n * n - 1, group), IndexSpace("group", n, group)
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

    def _HCall(self, node: HCall) -> HandValue:
        f, args, span = node.function, node.arguments, node.span
        ctx = self.ctx
        if f == "slash":
            self._arity(node, 1)
            p = self.evaluate(args[0])
            if not p.momentum:
                raise ctx.error("slash() takes a momentum", args[0].span, "write slash(p1) or slash(p1 - p2)")
            return HandValue(slash(p.array), (), True)
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
            # a C at an end (a cc() field) turns that end around: bar(a) G CC ends on a bar() leg
            c_first, c_last = _charge_conjugation_ends(args[2])
            if not (ctx.legs[i - 1].conjugate != c_first and ctx.legs[i - 1].kind in ("dirac", "majorana")):
                wanted = "fermion leg without bar()" if c_first else "bar() fermion leg"
                raise ctx.error(f"leg {i} of chain() must be a {wanted}", args[0].span)
            if ctx.legs[j - 1].conjugate != c_last or ctx.legs[j - 1].kind not in ("dirac", "majorana"):
                wanted = "bar() fermion leg" if c_last else "fermion leg without bar()"
                raise ctx.error(f"leg {j} of chain() must be a {wanted}", args[1].span)
            return HandValue(matrix, inner.axes + (f"#s{i}", f"#s{j}"), False, False, tuple(sorted((i, j))))
        functions: dict[str, Callable[[complex], Any]] = {
            "sqrt": np.sqrt, "conj": np.conj, "sin": np.sin, "cos": np.cos, "tan": np.tan,
            "exp": np.exp, "log": np.log, "re": np.real, "im": np.imag}
        self._arity(node, 1)
        inner = self.evaluate(args[0])
        if f == "conj" and inner.axes and not (inner.matrix or inner.momentum or inner.fermions):
            return replace(inner, array=np.conj(inner.array))  # conj(Y[i,j]) of a matrix parameter
        x = self._plain(inner, args[0].span, f"the argument of {f}()")
        return self.scalar(complex(functions[f](complex(x))))

    def _arity(self, node: HCall, n: int) -> None:
        if len(node.arguments) != n:
            raise self.ctx.error(f"{node.function}() takes {n} argument{'s' if n > 1 else ''}", node.span)

    def _leg_number(self, node: HNode) -> int:
        if not isinstance(node, HNumber) or node.value.denominator != 1 or not 1 <= node.value <= len(self.ctx.legs):
            raise self.ctx.error(f"chain() needs leg numbers between 1 and {len(self.ctx.legs)}", node.span)
        return int(node.value)


def group_tensor_name(name: str, indices: Sequence[tuple[str, Span]], ctx: HandContext) -> tuple[str, str | None]:
    """f_color[...], T_color[...], delta_color[...] (the group in the name, as vertexsmith writes them) -> (f, color)."""
    base, _, group = name.partition("_")
    if indices and group and base in ("f", "T", "delta", "alt") and name not in ctx.parameters and (
            group in ctx.model.groups or (base == "delta" and group in ctx.model.spaces)):
        return base, group
    return name, None


def vertex_layout(ctx: HandContext, value: HandValue, span: Span) -> np.ndarray:
    """Arrange a hand factor's value in vertexsmith's numeric layout (sign of the fermion order applied)."""
    if value.momentum:
        raise ctx.error("the factor is a bare momentum", span, "give it an index, as in p1[mu3]")
    if ctx.propagator is not None:
        return propagator_layout(ctx, value, span)
    fermion_legs = [leg for leg in ctx.legs if leg.kind in ("dirac", "majorana")]
    if value.matrix or (not value.fermions and fermion_legs):
        bars = [leg for leg in fermion_legs if leg.conjugate]
        plain = [leg for leg in fermion_legs if not leg.conjugate]
        if len(bars) != 1 or len(plain) != 1:
            raise ctx.error("a vertex with this many fermion legs needs chain(i, j, M) for each fermion line",
                            span, "write e.g. chain(1, 4, gamma[r] PL) chain(3, 2, gamma[r] PL)")
        b, q = bars[0].position, plain[0].position
        matrix = value.array if value.matrix else np.multiply.outer(value.array, IDENTITY4)
        value = HandValue(permutation_sign([b, q]) * matrix, value.axes + (f"#s{b}", f"#s{q}"), False, False,
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


def _arrange(ctx: HandContext, value: HandValue, wanted: list[str], span: Span) -> np.ndarray:
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


def propagator_layout(ctx: HandContext, value: HandValue, span: Span) -> np.ndarray:
    """A hand propagator in the layout of Propagator.evaluate: matrix or (mu, nu) axes, then group pairs."""
    prop = ctx.propagator
    assert prop is not None
    representations = prop.representations
    group_names = list(prop.indices[len(prop.indices) - 2 * len(representations):]) if representations else []
    # the Kronecker deltas of the group indices may be left out of a hand propagator
    implicit = bool(representations) and not any(n in value.axes for n in group_names)
    if prop.kind == "dirac":
        matrix = value.array if value.matrix else np.multiply.outer(value.array, IDENTITY4)
        value = HandValue(matrix, value.axes + ("#row", "#col"))
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


def _charge_conjugation_ends(node: HNode) -> tuple[bool, bool]:
    """Whether a chain's matrix product starts and ends with CC, the charge-conjugation matrix."""
    factors = list(node.factors) if isinstance(node, HProduct) else [node]
    first, last = factors[0], factors[-1]
    return (isinstance(first, HName) and first.name == "CC", isinstance(last, HName) and last.name == "CC")

