"""Two-component (Weyl) input: a weyl field is the Majorana field X = xi + cc(xi), its factors chiral parts of X.

Source: Dreiner, Haber & Martin, Phys. Rept. 494 (2010) 1, arXiv:0812.1594, sec. 3 (four-component
Majorana spinor Psi_M = (xi, xi^dagger); xi xi + h.c. = bar(Psi_M) Psi_M; i xi^dagger sigmabar.d xi =
1/2 bar(Psi_M) i gamma.d Psi_M up to a total derivative; from memory). The check is that the same
physics written with weyl fields and with majorana fields gives the same numbers.
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith as vs

WEYL = """\
theory w
parameters
  mass MN = 5.0
  mass mf = 1.0
  mass ms = 2.0
  coupling y = 0.3
  coupling h = 0.7
fields
  weyl nR right mass MN
  weyl nu left
  dirac f mass mf
  scalar s mass ms
lagrangian
  bar(nR) I gamma[mu] d[mu] nR
  - 1/2 MN bar(cc(nR)) nR + h.c.
  I bar(nu) gamma[mu] d[mu] nu
  bar(f) (I gamma[mu] d[mu] - mf) f
  1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2
  - 1/2 y s bar(cc(nR)) nR + h.c.
  - h s bar(f) nu + h.c.
  - h s bar(nR) nu + h.c.
"""

MAJORANA = """\
theory m
parameters
  mass MN = 5.0
  mass mf = 1.0
  mass ms = 2.0
  coupling y = 0.3
  coupling h = 0.7
fields
  majorana nR mass MN
  majorana nu
  dirac f mass mf
  scalar s mass ms
lagrangian
  1/2 bar(nR) (I gamma[mu] d[mu] - MN) nR
  1/2 bar(nu) I gamma[mu] d[mu] nu
  bar(f) (I gamma[mu] d[mu] - mf) f
  1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2
  - 1/2 y s bar(nR) nR
  - h s bar(f) PL nu + h.c.
  - h s bar(nR) PL nu + h.c.
"""


@pytest.fixture(scope="module")
def both() -> tuple[vs.Rules, vs.Rules]:
    return (vs.load_model(text=WEYL, name="w.vsm").derive(gauge="feynman"),
            vs.load_model(text=MAJORANA, name="m.vsm").derive(gauge="feynman"))


def test_weyl_input_gives_the_majorana_rules(both, rng: np.random.Generator) -> None:
    # the right-handed nR with -1/2 MN (bar(nR^c) nR + h.c.) is a Majorana fermion of mass MN; a left-handed
    # nu coupled as h s bar(f) nu is h s bar(f) PL N_nu; bar(nR) nu = bar(N) PL PL N_nu (bar(nR) = bar(N) PL)
    weyl, majorana = both
    assert [v.labels for v in weyl.vertices] == [v.labels for v in majorana.vertices]
    for v1, v2 in zip(weyl.vertices, majorana.vertices):
        momenta = rng.normal(size=(len(v1.legs), 4))
        assert np.allclose(v1.evaluate(momenta), v2.evaluate(momenta)), v1.labels
    for name in ("nR", "nu", "f", "s"):
        p = rng.normal(size=4)
        assert np.allclose(weyl.propagator(name).evaluate(p), majorana.propagator(name).evaluate(p))
    assert weyl.propagator("nR").field_kind == "majorana"
    assert not [d for d in vs.load_model(text=WEYL, name="w.vsm").check() if d.severity != "note"]


def test_the_conversion_is_stated(both) -> None:
    weyl, majorana = both
    assert "a weyl field xi is kept as the Majorana field X = xi + cc(xi)" in weyl.conventions
    assert "weyl field" not in majorana.conventions
    assert vs.load_model(text=WEYL, name="w.vsm").fields["nR"].weyl == "right"


@pytest.mark.parametrize("declaration, column, message, hint", [
    ("weyl nR mass MN", 3, "the weyl field 'nR' needs its handedness",
     "write weyl nR left ... or weyl nR right ..."),
    ("dirac nR right mass MN", 3, "'right' is the handedness of a weyl field, not of a dirac field",
     "declare weyl nR right ..., or write PL/PR with the dirac field"),
    ("weyl nR right complex mass MN", 3, "a weyl field is taken as a Majorana field, so it cannot be complex",
     "remove 'complex'"),
    ("weyl nR right mass MN charge hid 1", 25, "the weyl field 'nR' cannot carry a U(1) charge here",
     "a charged Weyl field pairs with another into a Dirac field: declare dirac nR ... and write its chiral "
     "parts with PL and PR"),
], ids=["no-hand", "hand-on-dirac", "complex", "charged"])
def test_weyl_declaration_errors(declaration: str, column: int, message: str, hint: str) -> None:
    text = WEYL.replace("weyl nR right mass MN", declaration).replace(
        "fields\n", "gauge\n  hid U(1) boson A strength F coupling y\nfields\n  vector A\n")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="w.vsm")
    assert (info.value.message, info.value.hint) == (message, hint)
    assert (info.value.span.line, info.value.span.column) == (12, column)


def test_a_chain_between_two_majorana_fields_needs_its_conjugate() -> None:
    # (bar(A) PL B)^dagger = bar(B) PR A = bar(A) PR B (flow reversal, Denner et al. eq. 2.4, from memory):
    # with + h.c. the check finds the partner on the same legs; without it the term is reported
    clean = vs.load_model(text=MAJORANA, name="m.vsm").check()
    assert not [d for d in clean if d.severity == "error"]
    broken = MAJORANA.replace("  - h s bar(nR) PL nu + h.c.\n", "  - h s bar(nR) PL nu\n")
    found = [(d.severity, d.span.line, d.message) for d in vs.load_model(text=broken, name="m.vsm").check()
             if d.severity == "error"]
    assert found == [("error", 20, "term has no hermitian conjugate in the Lagrangian")]


@pytest.mark.parametrize("line, hint", [
    ("  - 1/2 MN bar(nR) nR + h.c.\n",
     "a Majorana mass pairs a weyl field with its charge conjugate: write - 1/2 M bar(cc(nR)) nR + h.c."),
    ("  I bar(cc(nR)) gamma[mu] d[mu] nR\n", "the kinetic term of a weyl field is I bar(nR) gamma[mu] d[mu] nR"),
    ("  - h s bar(nR) PR nu + h.c.\n",
     "with an even number of gamma matrices a chain joins weyl fields of opposite handedness, with an odd "
     "number of the same; or put cc() on one end"),
], ids=["mass-without-cc", "kinetic-with-cc", "same-handedness-scalar"])
def test_a_weyl_chain_with_the_wrong_conjugation_is_reported(line: str, hint: str) -> None:
    # bar(xi) xi of one weyl field is bar(X) PL PR X = 0 (right-handed xi: bar(xi) = bar(X) PL, xi = PR X), and
    # likewise the kinetic term through cc(); bar(nR) nu of a right- and a left-handed field needs an even
    # number of gammas (PL Gamma PL != 0) -- with PR in between it vanishes (common practice, no source)
    text = WEYL.replace("  - h s bar(nR) nu + h.c.\n", line)
    found = [d for d in vs.load_model(text=text, name="w.vsm").check() if d.severity == "error"]
    assert [(d.span.line, d.span.column, d.hint) for d in found] == [(21, 3, hint)]
    assert found[0].message.endswith("is zero: its chiral projectors do not match")
