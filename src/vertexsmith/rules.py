"""The derived Feynman rules: legs, vertices and propagators, symbolic and numeric.

A `Vertex` keeps its factor as a sum of coefficient x `Structure` terms (the canonical form
every renderer reads); `.factor` is the same as one sympy expression, `.evaluate()` gives
numbers in the documented array layout.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, replace
from fractions import Fraction
from functools import cached_property
from typing import TYPE_CHECKING, Any, Callable, Mapping, Sequence

import sympy

from .codegen import P2, compile_function, helper_namespace, vertex_function_source
from .conventions import MIXING_TEXT
from .errors import UNKNOWN_SPAN, DerivationError, Span, UsageError, did_you_mean
from .evaluation_inputs import ParameterValues, momentum_batch, values_for
from .fermion_flow import CHARGE_CONJUGATE_TEXT, FERMION_FLOW_TEXT, WEYL_TEXT
from .index_names import group_index_name, qualify_group_indices
from .propagator import MU, NU, P, Propagator  # noqa: F401 - P, MU, NU: the propagator symbols, read from here too
from .limits import TENSOR_ELEMENTS, check_budget, check_finite, tensor_elements
from .structures import CHARGE_CONJUGATION, Structure, chains_need_legs, permutation_sign, relabel_legs, structure_sort_key
from .symbolic import (factor_text, surely_symbolic, group_to_sympy, index_symbol, lorentz_to_sympy, momentum_symbol, to_latex)

if TYPE_CHECKING:
    import numpy as np

    from .model import GaugeGroup, Model
    from .breaking.spectrum import Spectrum
    from .quadratic import QuadraticForm

CONVENTIONS_TEXT = (
    "metric (+,-,-,-); all momenta incoming; d_mu on a leg with momentum p gives -i p_mu; "
    "vertex = i x (functional derivative of the action), symmetry factors included; "
    "fermion legs: bar leg first, factor is the matrix Gamma_(alpha beta) between them, "
    "Grassmann sign from ordering the fields as the legs list them; "
    "sigma^{mu nu} = (i/2)[gamma^mu, gamma^nu]; PL = (1 - gamma5)/2, PR = (1 + gamma5)/2; "
    "gamma5 = i gamma^0 gamma^1 gamma^2 gamma^3; propagator = i x inverse of the quadratic kernel, "
    "momentum p along the particle arrow"
)


@dataclass(frozen=True)
class Leg:
    """One external line of a vertex: field, conjugation, incoming momentum, its axes' index names."""

    position: int
    field: str
    conjugate: bool
    kind: str  # scalar, dirac, vector, ghost
    grassmann: bool
    representations: tuple[tuple[str, str, int], ...] = ()  # (group, representation, dimension)
    is_complex: bool = False
    components: tuple[tuple[str, int], ...] = ()  # unrolled rules: (index space, 1-based component)

    @property
    def label(self) -> str:
        """The leg as written in the model language: bar(chi), dag(s), X; unrolled: bar(e[2])."""
        name = self.field
        if self.components:
            name += "[" + ",".join(str(c) for _, c in self.components) + "]"
        if not self.conjugate:
            return name
        return f"bar({name})" if self.kind in ("dirac", "majorana", "ghost") else f"dag({name})"

    @property
    def momentum(self) -> str:
        return f"p{self.position}"

    @property
    def indices(self) -> tuple[str, ...]:
        """Index names of this leg's numeric axes: mu_k (Lorentz, upper), s_k (spinor), a_k / i_k (group)."""
        names: list[str] = []
        if self.kind == "vector":
            names.append(f"mu{self.position}")
        if self.kind in ("dirac", "majorana"):
            names.append(f"s{self.position}")
        names.extend(group_index_name(self.position, group, rep, qualify_group_indices(self.representations))
                     for group, rep, _ in self.representations)
        return tuple(names)

    @property
    def axes(self) -> tuple[tuple, ...]:
        """Label keys of this leg's numeric axes, in layout order."""
        keys: list[tuple] = []
        if self.kind == "vector":
            keys.append(("lorentz", self.position))
        if self.kind in ("dirac", "majorana"):
            keys.append(("spinor", self.position))
        keys.extend(("group", self.position, group) for group, _, _ in self.representations)
        return tuple(keys)

    def meaning(self) -> str:
        """What this leg stands for as an incoming or outgoing particle."""
        name = self.field
        if self.kind == "ghost":
            return f"outgoing ghost {name}" if self.conjugate else f"incoming ghost {name}"
        if self.kind == "majorana":
            return f"{name} in or out, fermion flow {'leaving' if self.conjugate else 'entering'} the vertex"
        if self.kind in ("dirac", "majorana"):
            if self.conjugate:
                return f"outgoing {name} or incoming anti-{name}"
            return f"incoming {name} or outgoing anti-{name}"
        if self.conjugate:
            return f"outgoing {name} or incoming anti-{name}"
        if self.is_complex:
            return f"incoming {name} or outgoing anti-{name}"
        return f"{name} in or out"


@dataclass(frozen=True)
class VertexTerm:
    """coefficient (sympy, the overall i included) x structure."""

    coefficient: sympy.Expr
    structure: Structure


@dataclass(frozen=True)
class CouplingPart:
    """One part of a split factor: coupling x Lorentz (and, later, group) structure."""

    coupling: sympy.Expr
    lorentz: sympy.Expr
    group: sympy.Expr
    terms: tuple[VertexTerm, ...] = dataclasses.field(repr=False)  # the canonical form; long, so not in repr

    @cached_property
    def latex_pieces(self) -> tuple[str, str, str]:
        """LaTeX of the coupling, the Lorentz and the group structure, each printed once.

        The factor's LaTeX and the JSON's parts share them: printing LaTeX is the dearest step of
        writing rules out.
        """
        return to_latex(self.coupling), to_latex(self.lorentz), to_latex(self.group)


@dataclass(frozen=True)
class Vertex:
    """A vertex: its legs (in order) and its factor as canonical terms."""

    legs: tuple[Leg, ...]
    terms: tuple[VertexTerm, ...]
    model: "Model" = dataclasses.field(compare=False, repr=False)
    origins: tuple[int, ...] = dataclasses.field(default=(), compare=False)

    @property
    def labels(self) -> tuple[str, ...]:
        return tuple(leg.label for leg in self.legs)

    @cached_property
    def parts(self) -> tuple[CouplingPart, ...]:
        """The factor split into couplings times structures (terms whose couplings differ by a number share one)."""
        groups: list[tuple[sympy.Expr, list[tuple[sympy.Expr, VertexTerm]]]] = []
        for term in self.terms:
            for base, members in groups:
                ratio = term.coefficient / base
                if not ratio.is_Rational and not surely_symbolic(ratio, term.coefficient, base):
                    ratio = sympy.nsimplify(sympy.simplify(ratio))
                if ratio.is_Rational:
                    members.append((ratio, term))
                    break
            else:
                groups.append((term.coefficient, [(sympy.Integer(1), term)]))
        wrap = chains_need_legs(t.structure for t in self.terms)
        names = self._index_names()
        out = []
        for base, members in groups:
            by_group: dict[tuple, list[tuple[sympy.Expr, VertexTerm]]] = {}
            for ratio, t in members:
                by_group.setdefault(t.structure.group, []).append((ratio, t))
            for group_part, items in by_group.items():
                # a structure whose every ratio is negative takes the sign into its coupling, so that it is
                # never printed as "i A -gamma" (read as a difference in the table and in LaTeX)
                sign = -1 if all(ratio < 0 for ratio, _ in items) else 1
                lorentz = sympy.Add(*[sign * ratio * lorentz_to_sympy(t.structure, wrap) for ratio, t in items])
                group = group_to_sympy(group_part, names)
                out.append(CouplingPart(sign * base, lorentz, group, tuple(t for _, t in items)))
        return tuple(out)

    def _index_names(self) -> dict[tuple[int, str], str]:
        qualify = {leg.position: qualify_group_indices(leg.representations) for leg in self.legs}
        return {(leg.position, g): group_index_name(leg.position, g, rep, qualify[leg.position])
                for leg in self.legs for g, rep, _ in leg.representations}

    @cached_property
    def factor(self) -> sympy.Expr:
        """The vertex factor as one sympy expression (legs: p1.., mu1..; see the README)."""
        pieces = []
        for part in self.parts:
            rest = [x for x in (part.group, part.lorentz) if x != 1]
            pieces.append(sympy.Mul(part.coupling, *rest, evaluate=False) if rest else part.coupling)
        return sympy.Add(*pieces)

    @property
    def text(self) -> str:
        """The factor in the output vocabulary (the model language: gamma[mu3], g[mu1,mu2], ...)."""
        return factor_text(self.factor)

    @cached_property
    def latex(self) -> str:
        try:
            return " + ".join(_part_latex(p) for p in self.parts).replace("+ -", "- ")
        except DerivationError as error:  # a budget of the printer: point at the vertex's first line
            line = self.origins[0] if self.origins else 0
            raise DerivationError(error.message, Span.point(line, 1) if line else error.span, error.hint) from None

    # notebook and terminal display (render/notebook.py): tables with the picture and typeset factor
    def _repr_latex_(self) -> str:
        from .render.notebook import vertex_latex

        return vertex_latex(self)

    def _repr_html_(self) -> str:
        from .render.notebook import vertex_html

        return vertex_html(self)

    def __rich__(self) -> object:
        from .render.notebook import vertex_rich

        return vertex_rich(self)

    @cached_property
    def _compiled(self) -> Callable[..., np.ndarray]:
        """The vertex as a numpy function, compiled once (the exported module's code, see codegen.py)."""
        ranks = {name: g.rank for name, g in self.model.groups.items()}
        sizes = {**ranks, **{name: sp.size for name, sp in self.model.spaces.items()}}  # deltas of index spaces too
        source = vertex_function_source(self, "vertex", sizes, documented=False)
        return compile_function(source, "vertex", self.model.conventions.eps0123, ranks)

    def evaluate(self, momenta: Sequence[Sequence[float]] | np.ndarray,
                 values: Mapping[str, complex] | None = None) -> np.ndarray:
        """The factor as a complex array: one incoming 4-momentum (E, px, py, pz) per leg, in leg order.

        `momenta` of shape (legs, 4) gives the layout shape; a batch of shape (..., legs, 4) gives
        (..., layout), all points in one call. The first call compiles the vertex to numpy code.
        """
        import numpy as np

        what = "vertex " + " ".join(self.labels)
        p = momentum_batch(momenta, len(self.legs), what)
        # the array's size per point is known from the legs: refuse it before numpy allocates it (a
        # batch of points is the caller's own choice of size)
        check_budget(TENSOR_ELEMENTS, self._layout_elements, UNKNOWN_SPAN,
                     f"the numeric array of the {what}", "evaluate a vertex with fewer legs or smaller groups")
        with np.errstate(all="ignore"):  # an overflow is reported below, as our own error
            result = self._compiled(*np.moveaxis(p, -2, 0), values_for(self.model, values, what, self._value_cache))
        check_finite(result, UNKNOWN_SPAN, f"the {what}")
        return result

    @cached_property
    def _layout_elements(self) -> int:
        dims = {(leg.position, g): d for leg in self.legs for g, _, d in leg.representations}
        return tensor_elements(dims[(axis[1], axis[2])] if axis[0] == "group" else 4
                               for leg in self.legs for axis in leg.axes)

    def evaluate_contracted(self, momenta: Sequence[Sequence[float]], probes: Mapping[tuple, Any],
                            values: Mapping[str, complex] | None = None) -> Any:
        """The factor with every axis contracted with random vectors (`probes`, see
        `numeric.evaluate_structure`): a few numbers instead of the array, which is how `check`
        compares vertices too large to hold as arrays."""
        import numpy as np

        from .numeric import evaluate_structure

        what = "vertex " + " ".join(self.labels)
        p = np.asarray(momenta, dtype=complex)
        numbers = values_for(self.model, values, what, self._value_cache)
        axes = [axis for leg in self.legs for axis in leg.axes]
        ranks = {name: g.rank for name, g in self.model.groups.items()}
        ranks.update({name: space.size for name, space in self.model.spaces.items()})  # index spaces too
        dims = {(leg.position, g): d for leg in self.legs for g, _, d in leg.representations}
        result = np.zeros(probes[("batch",)].shape, dtype=complex)
        with np.errstate(all="ignore"):  # an overflow is reported below, as our own error
            for term in self.terms:
                own = {symbol: numbers[symbol.name] for symbol in term.coefficient.free_symbols}
                c = complex(sympy.N(term.coefficient.subs(own) if own else term.coefficient))
                result = result + c * evaluate_structure(term.structure, axes, p, self.model.conventions.eps0123,
                                                         ranks, dims, arrays=numbers, probes=probes)
        check_finite(result, UNKNOWN_SPAN, f"the {what}")
        return result

    @cached_property
    def _value_cache(self) -> dict[tuple, ParameterValues]:
        return {}

    def reordered(self, order: Sequence[int]) -> "Vertex":
        """The same vertex with legs in another order (order[k] = old position of new leg k+1)."""
        new_position = {old: k + 1 for k, old in enumerate(order)}
        legs = tuple(replace(self.legs[old - 1], position=new_position[old]) for old in order)
        grassmann_old = [old for old in order if self.legs[old - 1].grassmann]
        sign = permutation_sign(grassmann_old)
        terms_: list[VertexTerm] = []
        for t in self.terms:
            relabel_sign, structure = relabel_legs(t.structure, new_position)
            terms_.append(VertexTerm(sign * relabel_sign * t.coefficient, structure))
        terms = tuple(terms_)
        terms = tuple(sorted(terms, key=lambda t: structure_sort_key(t.structure)))
        return Vertex(legs, terms, self.model, self.origins)


def _part_latex(part: CouplingPart) -> str:
    coupling, lorentz, group = part.latex_pieces
    if part.group != 1:
        coupling = (f"\\left({coupling}\\right)" if isinstance(part.coupling, sympy.Add) else coupling)
        coupling = group if part.coupling == 1 else f"{coupling} \\, {group}"
        if part.lorentz == 1:
            return coupling
        return f"{coupling} \\, " + (f"\\left[{lorentz}\\right]" if isinstance(part.lorentz, sympy.Add)
                                      else lorentz)
    if part.lorentz == 1:
        return coupling
    if isinstance(part.coupling, sympy.Add):
        coupling = f"\\left({coupling}\\right)"
    if isinstance(part.lorentz, sympy.Add):
        lorentz = f"\\left[{lorentz}\\right]"
    if part.coupling == 1:
        return lorentz
    if part.coupling == -1:
        return "-" + lorentz
    return f"{coupling} \\, {lorentz}"


@dataclass(frozen=True)
class Rules:
    """All vertices and propagators of a model in one gauge."""

    model: "Model" = dataclasses.field(repr=False)
    gauge: str
    vertices: tuple[Vertex, ...]
    propagators: tuple[Propagator, ...]
    # K_ij(p), the quadratic form the propagators invert (gauge fixing and ghosts included)
    quadratic: "QuadraticForm | None" = dataclasses.field(default=None, compare=False, repr=False)
    # the mass matrices per sector with their eigenvalues (broken models, or when asked for); None otherwise
    spectrum: "Spectrum | None" = dataclasses.field(default=None, compare=False, repr=False)

    @property
    def uses_charge_conjugation(self) -> bool:
        """Whether a vertex has a chain with C (the model uses cc() of a Dirac field)."""
        return any(CHARGE_CONJUGATION in c.matrices for v in self.vertices for t in v.terms for c in t.structure.chains)

    @property
    def conventions(self) -> str:
        c = self.model.conventions
        covariant = "D = d - i g Q A" if c.covariant_sign == 1 else "D = d + i g Q A"
        gauge = {"xi": "R_xi gauge, symbolic xi per gauge boson", "feynman": "Feynman gauge (xi = 1)",
                 "unitary": "unitary gauge for massive vectors, Feynman gauge for massless ones"}[self.gauge]
        flow = f"; {FERMION_FLOW_TEXT}" if any(f.kind == "majorana" for f in self.model.fields.values()) else ""
        mixing = f"; {MIXING_TEXT}" if any(p.partner is not None for p in self.propagators) else ""
        if self.uses_charge_conjugation:
            flow += f"; {CHARGE_CONJUGATE_TEXT}"
        if any(f.weyl for f in self.model.fields.values()):
            flow += f"; {WEYL_TEXT}"
        return f"{CONVENTIONS_TEXT}{flow}{mixing}; {covariant}; epsilon^{{0123}} = {c.eps0123:+d}; {gauge}"

    def vertex(self, *labels: str) -> Vertex:
        """The vertex with these legs (in any order), returned with its legs in the order asked."""
        if not labels or not all(isinstance(label, str) for label in labels):
            raise UsageError("vertex() takes the leg labels as strings", hint='e.g. rules.vertex("bar(psi)", "psi", "A")')
        wanted = sorted(labels)
        for v in self.vertices:
            if sorted(v.labels) == wanted:
                order: list[int] = []
                used: set[int] = set()
                for label in labels:
                    k = next(leg.position for leg in v.legs if leg.label == label and leg.position not in used)
                    used.add(k)
                    order.append(k)
                return v.reordered(order) if order != list(range(1, len(order) + 1)) else v
        known = [" ".join(v.labels) for v in self.vertices]
        raise UsageError(f"no vertex with legs {' '.join(labels)}",
                         hint=did_you_mean(" ".join(labels), known, "the vertices are: " + "; ".join(known[:10])))

    # ------------------------------------------------------------ what amplitude code needs besides the rules

    @property
    def covariant_sign(self) -> int:
        """+1 for D_mu = d_mu - i g Q A_mu (the default), -1 for D_mu = d_mu + i g Q A_mu."""
        return self.model.conventions.covariant_sign

    @property
    def eps0123(self) -> int:
        """The sign of epsilon^{0123} (upper indices) the factors use."""
        return self.model.conventions.eps0123

    def _group(self, name: str) -> "GaugeGroup":
        if not isinstance(name, str) or name not in self.model.groups:
            raise UsageError(f"no gauge group '{name}'",
                             hint=did_you_mean(str(name), list(self.model.groups), "the groups are: "
                                               + ", ".join(self.model.groups)))
        group = self.model.groups[name]
        if group.abelian:
            raise UsageError(f"'{name}' is a U(1) group: it has charges, not generators",
                             hint=f"use rules.charges(field)['{name}']")
        return group

    def generators(self, group: str, representation: str = "fundamental") -> np.ndarray:
        """The generators of an SU(N) group as evaluate() uses them, shape (N^2 - 1, d, d).

        fundamental: T^a (generalised Gell-Mann matrices / 2); antifundamental: -(T^a)^T;
        adjoint: (T^a)_{bc} = -i f^{abc}.
        """
        g = self._group(group)
        t = helper_namespace(self.eps0123, {g.name: g.rank})["_T"][g.name]
        if representation == "fundamental":
            return t.copy()
        if representation == "antifundamental":
            import numpy as np

            return -np.transpose(t, (0, 2, 1))
        if representation == "adjoint":
            return -1j * self.structure_constants(group)
        raise UsageError(f"unknown representation '{representation}'",
                         hint="use fundamental, antifundamental or adjoint")

    def structure_constants(self, group: str) -> np.ndarray:
        """f^{abc} of an SU(N) group as evaluate() uses them ([T^a, T^b] = i f^{abc} T^c), shape (N^2 - 1,)*3."""
        g = self._group(group)
        return helper_namespace(self.eps0123, {g.name: g.rank})["_F"][g.name].copy()

    def charges(self, field: str) -> dict[str, Fraction]:
        """A field's U(1) charges by group (a field not charged under a U(1) group is absent from it)."""
        name = self.propagator(field).field  # accepts bar(psi) and dag(phi) and says what is known
        return dict(self.model.fields[name].charges)

    def representations(self, field: str) -> dict[str, str]:
        """A field's SU(N) representations by group: fundamental, antifundamental or adjoint."""
        name = self.propagator(field).field
        return dict(self.model.fields[name].representations)

    def propagator(self, label: str, partner: str | None = None) -> Propagator:
        """The propagator of a field (its name or its conjugate's label); with `partner`, the entry of a
        mixed block that joins the field to the partner's conjugated end, e.g. propagator("H1", "dag(H2)")."""
        if not isinstance(label, str) or not isinstance(partner, (str, type(None))):
            raise UsageError("propagator() takes a field label as a string", hint='e.g. rules.propagator("psi")')
        name, other = self._field_name(label), self._field_name(partner) if partner is not None else None
        if other == name:
            other = None
        for p in self.propagators:
            if p.field == name and p.partner == other:
                return p
        known = [p.label for p in self.propagators]
        wanted = name if other is None else f"{name} {other}"
        if other is not None and any(p.field == name for p in self.propagators):
            raise UsageError(f"'{name}' and '{other}' do not mix: no propagator joins them",
                             hint="the propagators are: " + "; ".join(known[:12]))
        raise UsageError(f"no propagator for '{label}'", hint=did_you_mean(wanted, known, ""))

    def _field_name(self, label: str) -> str:
        """The field a label names; a real field's bar()/dag() names no leg."""
        name = label
        for prefix in ("bar(", "dag("):
            if label.startswith(prefix) and label.endswith(")"):
                name = label[len(prefix):-1]
        if name.endswith("]") and "[" in name and name.split("[")[0] in self.model.fields:
            name = name.split("[")[0]  # a component of a field over index spaces: the same propagator
        field = self.model.fields.get(name)
        if name != label and field is not None and not field.is_complex:
            raise UsageError(f"'{name}' is its own conjugate: '{label}' names no leg",
                             hint=f'write rules.propagator("{name}")')
        return name

    def _repr_latex_(self) -> str:
        from .render.notebook import rules_latex

        return rules_latex(self)

    def _repr_html_(self) -> str:
        from .render.notebook import rules_html

        return rules_html(self)

    def __rich__(self) -> object:
        from .render.notebook import rules_rich

        return rules_rich(self)


__all__ = ["Leg", "Vertex", "VertexTerm", "CouplingPart", "Propagator", "Rules", "CONVENTIONS_TEXT", "P", "P2",
           "MU", "NU", "index_symbol", "momentum_symbol"]
