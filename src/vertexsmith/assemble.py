"""The derive stage as a whole: vertices from `derive`, propagators from the quadratic form.

    monomials (+ gauge fixing, ghosts) ─┬─ three or more fields ─▶ vertices        (derive.py)
                                        └─ two fields ─▶ K_ij(p) (quadratic.py) ─▶ i K^-1 (propagate.py)
"""

from __future__ import annotations

from collections import defaultdict
from typing import Any, Sequence

from . import limits
from . import model as m
from . import progress
from .derive import (Species, check_chains, gauge_fixing_monomials, ghost_monomials, species_of,
                     vertex_from)
from .errors import UsageError
from .expand import Monomial
from .propagate import propagators_from
from .quadratic import quadratic_form
from .rules import Rules, Vertex

GAUGES = ("xi", "feynman", "unitary")


def derive_rules(model: m.Model, monomials: Sequence[Monomial], gauge: str = "xi", spectrum: bool = False,
                 mixings: Sequence[Any] = ()) -> Rules:
    """Every vertex (three or more legs) and every propagator of a model, from its expanded monomials.

    spectrum=True adds the mass matrices of every sector with their eigenvalues (`Rules.spectrum`),
    read from the same quadratic form the propagators invert; broken models always get them, with the
    rotations the breaking stage applied (`mixings`, `breaking.spectrum.MixingRecord`s).
    """
    if gauge not in GAUGES:
        raise UsageError(f"unknown gauge '{gauge}'", hint="choose xi, feynman or unitary")
    monomials = list(monomials) + ghost_monomials(model, gauge)
    for mono in monomials:
        check_chains(model, mono)
        limits.check_coefficient(mono.coefficient, mono.origin)
    groups: dict[tuple[Species, ...], list[Monomial]] = defaultdict(list)
    quadratic: list[Monomial] = []
    for mono in monomials:
        species = tuple(sorted(species_of(model, a) for a in mono.fields))
        if len(species) >= 3:
            groups[species].append(mono)
        elif len(species) == 2:
            quadratic.append(mono)
    vertices: list[Vertex] = []
    step = progress.stage("deriving vertices", total=len(groups))
    for species, monos in groups.items():
        step.advance()
        v = vertex_from(model, list(species), monos)
        if v is not None:
            vertices.append(v)
    for group in model.groups.values():
        quadratic.extend(gauge_fixing_monomials(model, group, gauge))
    form = quadratic_form(model, quadratic)
    # a ghost without a kinetic term has no propagator: an unbroken group without ghosts, or a massive
    # boson in unitary gauge (the broken phase's own ghosts gh_<V> come with their terms)
    without_ghosts = frozenset(name for name, f in model.fields.items()
                               if f.kind == "ghost" and not form.entry(name, name))
    step = progress.stage("deriving propagators", total=len(form.blocks()))
    propagators = propagators_from(form, gauge, skip=without_ghosts, on_block=step.advance)
    vertices.sort(key=lambda v: (len(v.legs), v.labels))
    masses = None
    if spectrum:
        from .breaking.spectrum import spectrum_of  # numpy with it: rules without a spectrum do not need it

        masses = spectrum_of(form, mixings)
    return Rules(model, gauge, tuple(vertices), tuple(propagators), form, masses)


__all__ = ["GAUGES", "derive_rules"]
