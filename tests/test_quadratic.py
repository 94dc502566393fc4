"""The quadratic form K_ij(p) and the propagator matrices i K^-1 of fields that mix (issue 9 item 1).

The kernels here are rebuilt in the tests from the form's coefficients with the independent Dirac
algebra of conftest.py, and the propagators come from `evaluate()`: D K = i 1 then checks the
inversion, and the physics checks (poles at the eigenvalues of the mass matrix, the first order
of kinetic mixing as a two-point insertion) check the kernel against the Lagrangian.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith.check import check_model
from vertexsmith.rules import P2

from conftest import DIRAC

ETA, PL, PR = DIRAC.ETA, DIRAC.PL, DIRAC.PR


def _load(text: str) -> vs.Model:
    return vs.load_model(text=text, name="t.vsm")


def _number(expr: sympy.Expr, numbers: dict) -> complex:
    return complex(sympy.sympify(expr).subs(numbers).evalf())


def _kernel(rules: vs.Rules, row: str, column: str, p: np.ndarray, values: dict) -> np.ndarray:
    """K_(row, column)(p) as numbers, rebuilt from the form's coefficients (lower Lorentz indices)."""
    model = rules.model
    numbers = dict(model.parameter_values(values))
    numbers[P2] = DIRAC.dot(p, p)
    kind = model.fields[row].kind
    entry = {k: _number(v, numbers) for k, v in rules.quadratic.entry(row, column).items()}
    if kind == "vector":
        pl = DIRAC.lower(p)
        return entry.get("metric", 0) * ETA + entry.get("pp", 0) * np.outer(pl, pl)
    if kind == "dirac":
        ps = DIRAC.slash(p)
        return (entry.get("slash_L", 0) * ps @ PL + entry.get("slash_R", 0) * ps @ PR
                + entry.get("one_L", 0) * PL + entry.get("one_R", 0) * PR)
    return np.array(entry.get("one", 0))


def _propagator(rules: vs.Rules, row: str, column: str, p: np.ndarray, values: dict) -> np.ndarray:
    prop = rules.propagator(row) if row == column else rules.propagator(row, column)
    out = prop.evaluate(p, values=values)
    for _ in prop.representations:  # one component of the group delta
        out = out[..., 0, 0]
    return out


def _times_kernel_is_i(rules: vs.Rules, block: list[str], values: dict, rng: np.random.Generator) -> None:
    for _ in range(3):
        p = rng.normal(size=4) * 40.0
        for i in block:
            for k in block:
                total = sum(np.atleast_2d(_propagator(rules, i, j, p, values)) @ np.atleast_2d(_kernel(rules, j, k, p, values))
                            for j in block)
                expected = 1j * np.eye(total.shape[0]) * (i == k)
                np.testing.assert_allclose(total, expected, atol=1e-9)


# ---------------------------------------------------------------- D K = i 1

VECTOR_LIKE = """theory t
parameters
  mass m1 = 2.0
  mass m2 = 5.0
  complex mu12 = 0.7 + 0.4 I
  complex mu21 = 0.3 - 0.2 I
fields
  dirac psi1 mass m1
  dirac psi2 mass m2
lagrangian
  bar(psi1) (I gamma[mu] d[mu] - m1) psi1
  bar(psi2) (I gamma[mu] d[mu] - m2) psi2
  - mu12 bar(psi1) PR psi2 + h.c.
  - mu21 bar(psi2) PR psi1 + h.c.
"""


@pytest.mark.parametrize("source, block, values", [
    ("two_doublets", ["H1", "H2"], {}),
    ("dark_photon_mixing", ["A", "X"], {"kmix": 0.3, "xi_A": 0.7, "xi_X": 2.5}),
    ("dark_photon_mixing", ["A", "X"], {"kmix": 0.3, "xi_A": 1.0, "xi_X": 1.0}),
    ("vector_like", ["psi1", "psi2"], {}),
], ids=["scalars-2hdm", "vectors-kinetic-mixing", "vectors-feynman", "dirac-chiral-mass-mixing"])
def test_propagator_matrix_times_kernel_is_i(source, block, values, rng):
    # D = i K^-1 by definition (common practice, no source): sum_j D_ij K_jk = i delta_ik at random momenta
    model = _load(VECTOR_LIKE) if source == "vector_like" else vs.load_model(vs.example(source))
    _times_kernel_is_i(model.derive(), block, values, rng)


def test_chiral_mass_mixing_gives_chiral_entries():
    rules = _load(VECTOR_LIKE).derive()
    off = rules.propagator("psi1", "bar(psi2)")
    assert off.label == "psi1 bar(psi2)" and off.chiral is not None and off.chiral_mass is not None
    assert rules.propagator("psi2", "psi1").label == "psi2 bar(psi1)"


# ---------------------------------------------------------------- poles

def test_scalar_poles_are_the_eigenvalues_of_the_mass_matrix(rng):
    # L = -H^dagger M^2 H with M^2 = [[m1^2, m12sq], [conj(m12sq), m2^2]] (the model's own lines), so
    # D = i (p^2 - M^2)^-1 = i sum_k v_k v_k^dagger / (p^2 - lambda_k) (spectral theorem, common practice)
    model = vs.load_model(vs.example("two_doublets"))
    rules = model.derive()
    m1, m2, m12 = (model.parameters[n].value for n in ("m1", "m2", "m12sq"))
    mass2 = np.array([[m1**2, m12], [np.conj(m12), m2**2]])
    lam, vec = np.linalg.eigh(mass2)
    names = ["H1", "H2"]
    for _ in range(3):
        p = rng.normal(size=4) * 200.0
        p2 = DIRAC.dot(p, p).real
        expected = 1j * (vec / (p2 - lam)) @ vec.conj().T
        got = np.array([[_propagator(rules, a, b, p, {}) for b in names] for a in names])
        np.testing.assert_allclose(got, expected, rtol=1e-9)
    # and the denominator of every entry vanishes exactly at the eigenvalues
    denominator = sympy.denom(sympy.together(rules.propagator("H1", "dag(H2)").a))
    values = {s: v for s, v in model.parameter_values().items() if s in denominator.free_symbols}
    roots = sorted(complex(r).real for r in sympy.Poly(denominator.subs(values), P2).nroots())
    np.testing.assert_allclose(roots, lam, rtol=1e-9)


def test_fermion_poles_are_the_squared_singular_values_of_the_mass_matrix():
    # -bar(psi) (M PR + M^dagger PL) psi: poles of the propagator at p^2 = eigenvalues of M^dagger M
    # (singular values of the mass matrix, common practice, no source)
    model = _load(VECTOR_LIKE)
    rules = model.derive()
    values = {s.name: v for s, v in model.parameter_values().items()}
    mass = np.array([[values["m1"], values["mu12"]], [values["mu21"], values["m2"]]])
    expected = np.sort(np.linalg.eigvalsh(mass.conj().T @ mass))
    left, _ = rules.propagator("psi1").chiral
    denominator = sympy.denom(sympy.together(left))
    numbers = {s: v for s, v in model.parameter_values().items() if s in denominator.free_symbols}
    roots = sorted(complex(r).real for r in sympy.Poly(sympy.expand(denominator.subs(numbers)), P2).nroots())
    np.testing.assert_allclose(roots, expected, rtol=1e-8)


# ---------------------------------------------------------------- kinetic mixing to first order

def test_kinetic_mixing_to_first_order_is_the_two_point_insertion(rng):
    # -kmix/2 F.FX (kinetic mixing: B. Holdom, Phys. Lett. B 166 (1986) 196, from memory) is the
    # two-point vertex i kmix (-p^2 g + p p) written by hand here; to first order in kmix the mixed
    # entry is that insertion between the unmixed propagators (common practice, no source)
    rules = vs.load_model(vs.example("dark_photon_mixing")).derive()
    small, gauge = 1e-6, {"xi_A": 0.6, "xi_X": 1.8}
    for _ in range(3):
        p = rng.normal(size=4) * 4.0
        pl = DIRAC.lower(p)
        insertion = 1j * (-DIRAC.dot(p, p) * ETA + np.outer(pl, pl))
        photon = rules.propagator("A").evaluate(p, values={"kmix": 0.0, **gauge})
        dark = rules.propagator("X").evaluate(p, values={"kmix": 0.0, **gauge})
        expected = photon @ insertion @ dark
        got = rules.propagator("A", "X").evaluate(p, values={"kmix": small, **gauge}) / small
        np.testing.assert_allclose(got, expected, rtol=1e-5, atol=1e-8 * np.abs(expected).max())


# ---------------------------------------------------------------- what cancels adds nothing

SCALARS = """theory t
parameters
  mass m = 1.5
  mass mA = 2.0
  coupling c = 0.3
gauge
  u1 U(1) boson A strength F coupling c
fields
  vector A mass mA
  scalar h real mass m
  scalar G real
  scalar s real
lagrangian
  -1/4 F[mu,nu] F[mu,nu] + 1/2 mA^2 A[mu] A[mu]
  1/2 d[mu] s d[mu] s
  - 1/2 m^2 h^2
"""


def _entries(model: vs.Model) -> dict:
    form = model.derive().quadratic
    return {pair: {k: sympy.simplify(v) for k, v in entry.items()} for pair, entry in form.entries.items()}


def test_hermitian_cross_terms_that_cancel_add_nothing():
    # issue 9 repro: 1/2 (dh + i dG)(dh - i dG) = 1/2 dh dh + 1/2 dG dG; the cross terms cancel
    written = _load(SCALARS + "  1/2 (d[mu] h + I d[mu] G)(d[mu] h - I d[mu] G)\n")
    by_hand = _load(SCALARS + "  1/2 d[mu] h d[mu] h + 1/2 d[mu] G d[mu] G\n")
    assert _entries(written) == _entries(by_hand)
    assert not [d for d in check_model(written) if "mix" in d.message]


def test_a_total_derivative_adds_nothing():
    # issue 9 repro: mA A.dG + mA G d.A = d_mu (mA A^mu G), a total derivative (common practice, no source)
    base = SCALARS + "  1/2 d[mu] h d[mu] h + 1/2 d[mu] G d[mu] G\n"
    written = _load(base + "  mA A[mu] d[mu] G + mA G d[mu] A[mu]\n")
    assert _entries(written) == _entries(_load(base))
    assert not [d for d in check_model(written) if d.severity == "error" or "mix" in d.message]
    # a quadratic total derivative of one field: d_mu (s d^mu s)
    assert _entries(_load(base + "  c d[mu] (s d[mu] s)\n")) == _entries(_load(base))


def test_a_cancelling_sum_gives_no_vertex():
    # (s + i h)(s - i h) G = s^2 G + h^2 G: the s h G cross terms cancel (common practice, no source)
    rules = _load(SCALARS + "  1/2 d[mu] h d[mu] h + 1/2 d[mu] G d[mu] G\n  c (s + I h)(s - I h) G\n").derive()
    assert sorted(v.labels for v in rules.vertices) == [("G", "h", "h"), ("G", "s", "s")]


def test_a_total_derivative_gives_no_vertex():
    # d(h s).dG + h s d.dG = d_mu (h s d^mu G): zero once p_h + p_s + p_G = 0 (common practice, no source)
    base = SCALARS + "  1/2 d[mu] h d[mu] h + 1/2 d[mu] G d[mu] G\n"
    rules = _load(base + "  c d[mu] (h s) d[mu] G + c h s d[mu] d[mu] G\n").derive()
    assert rules.vertices == ()


# ---------------------------------------------------------------- the reports

def test_soft_term_mixing_is_reported_once_at_its_line():
    # issue 9: the pair was reported twice, once per h.c. half
    notes = [d for d in check_model(vs.load_model(vs.example("two_doublets"))) if "mix at" in d.message]
    assert [(d.severity, d.span.line, d.message) for d in notes] == [
        ("note", 41, "'H1' and 'H2' mix at quadratic order (line 41): their propagators form a matrix")]


def test_mixing_over_several_lines_names_each_line_once():
    text = VECTOR_LIKE
    notes = [(d.span.line, d.message) for d in check_model(_load(text)) if "mix" in d.message]
    assert notes == [(13, "'psi1' and 'psi2' mix at quadratic order (lines 13, 14): their propagators form a matrix")]


def test_vector_scalar_mixing_is_an_error_at_its_line():
    model = _load(SCALARS + "  1/2 d[mu] h d[mu] h + 1/2 d[mu] G d[mu] G\n  mA A[mu] d[mu] G\n")
    errors = [(d.span.line, d.message) for d in check_model(model) if d.severity == "error"]
    assert errors == [(18, "'A' and 'G' mix at quadratic order (line 18): a vector with a scalar (cancel the "
                           "mixing, e.g. by the gauge fixing that removes it)")]
    with pytest.raises(vs.DerivationError) as info:
        model.derive()
    assert str(info.value).startswith("t.vsm:18:3: error: 'A' and 'G' mix at quadratic order")


def test_the_api_finds_entries_by_either_spelling():
    rules = vs.load_model(vs.example("two_doublets")).derive()
    entry = rules.propagator("H1", "dag(H2)")
    assert rules.propagator("H1", "H2") is entry and entry.partner == "H2" and entry.label == "H1 dag(H2)"
    assert rules.propagator("H1", "H1") is rules.propagator("H1") and rules.propagator("H1").partner is None
    with pytest.raises(vs.UsageError, match="'B' and 'H1' do not mix"):
        rules.propagator("B", "H1")


def test_compare_reads_an_entry_of_a_propagator_matrix():
    # the hand entry (H1, dag(H2)) = i m12sq / det(p^2 - M^2), from the 2x2 inverse (common practice, no source);
    # with m12sq where conj(m12sq) belongs (the other entry of the hermitian pair), it differs
    from vertexsmith.compare import compare_rules

    rules = vs.load_model(vs.example("two_doublets")).derive(gauge="feynman")
    det = "((p^2 - m1^2) (p^2 - m2^2) - m12sq conj(m12sq))"
    hand = f"gauge feynman\npropagator H1 dag(H2) : I m12sq / {det} delta[i1,i2]\n" \
           f"propagator H2 dag(H1) : I m12sq / {det} delta[i1,i2]\n"
    report = compare_rules(rules, hand, points=2)
    assert [e.status for e in report.entries] == ["equal", "different"]
