"""The meaning of a model file: declarations and the Lagrangian as a typed expression tree.

`build` produces a `Model`; nothing here knows about text or about the stages that read a model
(this module imports none of them: the pipeline lives in `pipeline.py`). The Lagrangian nodes (`L*` classes)
are resolved: every name is a field, a parameter, a definition or a built-in object, every
number a sympy number, and every index checked.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from fractions import Fraction
from typing import Mapping, Union

import sympy

from .errors import Source, Span
from .values import resolve_values

FERMION_KINDS = ("dirac", "majorana")
GRASSMANN_KINDS = ("dirac", "majorana", "ghost")


@dataclass(frozen=True)
class Parameter:
    """A named number: a coupling, a mass, an angle; real unless declared complex."""

    name: str
    roles: tuple[str, ...]
    is_complex: bool
    definition: sympy.Expr | None
    value: complex | None
    description: str
    span: Span = dataclasses.field(compare=False)
    spaces: tuple[str, ...] = ()  # index spaces of a vector or matrix parameter
    entries: tuple[sympy.Expr, ...] | None = None  # its values (numbers or formulas), row-major
    matrix: str = ""  # "", "hermitian" or "unitary" (declared, verified numerically)
    shape: tuple[int, ...] = ()  # the sizes of its spaces

    @property
    def symbol(self) -> sympy.Symbol:
        return parameter_symbol(self.name, self.is_complex)

    @property
    def is_array(self) -> bool:
        """True for a vector or matrix parameter (one that carries indices of index spaces)."""
        return bool(self.spaces)


def parameter_symbol(name: str, is_complex: bool = False) -> sympy.Symbol:
    """The sympy symbol of a parameter; real parameters are real symbols so conj() leaves them."""
    return sympy.Symbol(name) if is_complex else sympy.Symbol(name, real=True)


@dataclass(frozen=True)
class Field:
    """A quantum field: its kind, whether it is its own conjugate, mass and charges."""

    name: str
    kind: str  # scalar, dirac, majorana, vector, ghost
    is_complex: bool
    mass: sympy.Expr
    charges: tuple[tuple[str, Fraction], ...]
    description: str
    span: Span = dataclasses.field(compare=False)
    # (group, fundamental|antifundamental|adjoint), then (index space, "flavour") for each space it carries
    representations: tuple[tuple[str, str], ...] = ()
    global_charges: tuple[tuple[str, Fraction], ...] = ()  # (global symmetry, charge; mod N for Z(N))
    # a two-component (Weyl) field as written: "left" or "right"; it is kept as the Majorana field
    # xi + cc(xi), and its factors are the chiral parts of that field (see build.py, _weyl_part)
    weyl: str | None = None

    def representation(self, group: str) -> str | None:
        return dict(self.representations).get(group)

    @property
    def is_fermion(self) -> bool:
        return self.kind in FERMION_KINDS

    @property
    def is_grassmann(self) -> bool:
        return self.kind in GRASSMANN_KINDS

    @property
    def is_vector(self) -> bool:
        return self.kind == "vector"

    @property
    def two_ended(self) -> bool:
        """Whether bar()/dag() of the field is a leg of its own: complex fields and every fermion.

        A Majorana field is its own conjugate, but its two ends of a fermion flow (bar(chi) and chi)
        are still different legs: a vertex states which way the flow runs through it.
        """
        return self.is_complex or self.is_fermion

    @property
    def self_conjugate(self) -> bool:
        """Real scalars, real vectors and Majorana fermions are their own antiparticles."""
        return not self.is_complex

    def charge(self, group: str) -> Fraction:
        return dict(self.charges).get(group, Fraction(0))


@dataclass(frozen=True)
class GaugeGroup:
    """A gauge group factor with its boson, field-strength name, coupling and gauge fixing."""

    name: str
    kind: str  # "U1" or "SU"
    boson: str
    strength: str
    coupling: sympy.Expr
    fixing: str  # "lorenz" (R_xi, added automatically) or "none"
    span: Span = dataclasses.field(compare=False)
    rank: int = 1  # N of SU(N)

    @property
    def abelian(self) -> bool:
        return self.kind == "U1"

    @property
    def ghost(self) -> str:
        """Name of the Faddeev-Popov ghost field of a non-abelian group."""
        return f"gh_{self.boson}"

    @property
    def xi(self) -> sympy.Symbol:
        """The gauge parameter of this group, named after its boson."""
        return sympy.Symbol(f"xi_{self.boson}", positive=True)


@dataclass(frozen=True)
class GlobalSymmetry:
    """A global symmetry the Lagrangian must respect: U(1) (kind 'U1') or Z(N) (kind 'Z', order N)."""

    name: str
    kind: str
    order: int
    span: Span = dataclasses.field(compare=False)
    soft: bool = False  # terms of mass dimension below 4 may break it (a note, not an error)

    def conserved(self, total: Fraction) -> bool:
        """Whether a term of this total charge respects the symmetry (Z(N): total = 0 mod N)."""
        return total == 0 if self.kind == "U1" else total % self.order == 0

    @property
    def label(self) -> str:
        return "U(1)" if self.kind == "U1" else f"Z({self.order})"


@dataclass(frozen=True)
class IndexSpace:
    """A finite index space of the model's own (generations, flavours): no group acts on it."""

    name: str
    size: int
    description: str
    span: Span = dataclasses.field(compare=False)


FLAVOUR = "flavour"  # the representation name of an index space in Field.representations


@dataclass(frozen=True)
class Conventions:
    """Model-level sign switches. covariant_sign = +1 means D = d - i g Q A."""

    covariant_sign: int = 1
    eps0123: int = -1


# ------------------------------------------------------------------ Lagrangian expression tree

@dataclass(frozen=True)
class LScalar:
    """A field-free factor: numbers, parameters, I, pi and functions of them."""

    value: sympy.Expr
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LField:
    """A field factor; group_indices gives (group, index or None when implied by matrix contraction)."""

    field: str
    conjugate: bool
    index: str | None
    span: Span = dataclasses.field(compare=False)
    group_indices: tuple[tuple[str, str | None], ...] = ()
    # cc(psi) = C bar(psi)^T (conjugate=True) and bar(cc(psi)) = psi^T C (conjugate=False): the
    # operator content is that of `conjugate`, the spinor sits at the other end of its chain
    charge_conjugate: bool = False

    @property
    def opens_chain(self) -> bool:
        """Whether the factor stands at the row (bar) end of a spinor chain."""
        return self.conjugate != self.charge_conjugate


@dataclass(frozen=True)
class LParam:
    """A component of a vector or matrix parameter, Y[i,j]; conjugate for conj(Y[i,j])."""

    name: str
    indices: tuple[str, ...]
    conjugate: bool
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LGroup:
    """A group tensor: generator T (1 index: a matrix in a chain; or 3: T[a,i,j]), f[a,b,c], delta[i,j]."""

    kind: str
    group: str
    indices: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LDirac:
    """A Dirac matrix: gamma (1 index), gamma5, PL, PR, sigma (2 indices)."""

    kind: str
    indices: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LTensor:
    """A numeric Lorentz tensor: metric g (2 indices) or Levi-Civita eps (4)."""

    kind: str
    indices: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LDerivative:
    """d[mu] (plain) or D[mu] (covariant); acts on the factor that follows it."""

    index: str
    covariant: bool
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LStrength:
    """The field strength of a gauge group with its two indices."""

    group: str
    indices: tuple[str, str]
    span: Span = dataclasses.field(compare=False)
    group_index: str | None = None  # adjoint index of a non-abelian strength (None: implied)


@dataclass(frozen=True)
class LDefinitionUse:
    name: str
    indices: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LSum:
    terms: tuple[tuple[int, "LNode"], ...]
    has_hc: bool
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LProduct:
    factors: tuple["LNode", ...]
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LPower:
    base: "LNode"
    exponent: int
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class LDagger:
    """dag(...) of an expression: its hermitian conjugate."""

    inner: "LNode"
    span: Span = dataclasses.field(compare=False)


LNode = Union[LScalar, LField, LParam, LGroup, LDirac, LTensor, LDerivative, LStrength, LDefinitionUse, LSum,
              LProduct, LPower, LDagger]


@dataclass(frozen=True)
class Definition:
    name: str
    indices: tuple[str, ...]
    body: LNode
    span: Span = dataclasses.field(compare=False)


@dataclass(frozen=True)
class Term:
    """One line of the Lagrangian."""

    node: LNode
    span: Span = dataclasses.field(compare=False)


# ------------------------------------------------------------------ rotations to mass eigenstates (issue 10)

@dataclass(frozen=True)
class Rotation:
    """`rotate NEW from OLD by R`: NEW = R OLD, so the tool substitutes OLD = R^-1 NEW everywhere.

    `new` lists (field, conjugate): (W, False), (W, True) for `(W, dag(W))`. Either `matrix` (rows of
    exact entries) or `parameter` (a unitary matrix parameter over an index space: a flavour
    rotation of one fermion field, `new` and `old` one field each) is given. `chirality` is "",
    "left" or "right" (fermions: only that part rotates); `declared` is "", "orthogonal" or "unitary".
    """

    new: tuple[tuple[str, bool], ...]
    old: tuple[str, ...]
    matrix: tuple[tuple[sympy.Expr, ...], ...] | None
    span: Span = dataclasses.field(compare=False)
    parameter: str = ""
    chirality: str = ""
    declared: str = ""
    matrix_span: Span | None = dataclasses.field(default=None, compare=False)


@dataclass(frozen=True)
class Diagonalisation:
    """`diagonalise (OLD...) into (NEW...) angle theta | numeric O`: a mass block to mass eigenstates.

    With `angle` (two fields): NEW = [[cos, sin], [-sin, cos]] OLD, the angle defined by
    tan(2 theta) = 2 M12 / (M11 - M22). With `numeric`: the mixing matrix from the model's numbers
    becomes numeric parameters named after `numeric`.
    """

    old: tuple[str, ...]
    new: tuple[str, ...]
    span: Span = dataclasses.field(compare=False)
    angle: str = ""
    numeric: str = ""


@dataclass(frozen=True, eq=False)
class Model:
    """A built model as plain data: declarations, definitions, Lagrangian terms and conventions.

    Every stage takes and returns records like this one; `pipeline.Model`, the class users get
    from `load_model`, adds the conveniences `derive`, `check` and `monomials` on top.
    """

    name: str
    description: str
    parameters: dict[str, Parameter]
    fields: dict[str, Field]
    groups: dict[str, GaugeGroup]
    definitions: dict[str, Definition]
    terms: tuple[Term, ...]
    conventions: Conventions
    source: Source
    symmetries: dict[str, GlobalSymmetry] = dataclasses.field(default_factory=dict)
    spaces: dict[str, IndexSpace] = dataclasses.field(default_factory=dict)

    def parameter_values(self, overrides: Mapping[str, complex] | None = None) -> dict[sympy.Symbol, complex]:
        """Numeric values of all parameters: the model's own numbers, overridden by the caller's."""
        return resolve_values(self.parameters, self.groups, overrides or {})

    @property
    def has_non_abelian(self) -> bool:
        return any(not g.abelian for g in self.groups.values())

    def boson_group(self, field_name: str) -> GaugeGroup | None:
        return next((g for g in self.groups.values() if g.boson == field_name), None)
