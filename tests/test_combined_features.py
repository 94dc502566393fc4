"""Models that combine the newer features (Majorana fields, index spaces with matrix parameters,
alt of SU(N), antifundamentals, global symmetries), with vertex factors derived by hand.

Every model here is a scenario of our own with invented numbers. The Dirac matrices come from
conftest (sympy's mgamma, independent of vertexsmith); SU(2) generators are Pauli/2 and
f^{abc} = epsilon^{abc}, and the SU(3) alternating tensor is written out below, all built here.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

import vertexsmith as vs
from vertexsmith.cli import main as command_line

PAULI = np.array([[[0, 1], [1, 0]], [[0, -1j], [1j, 0]], [[1, 0], [0, -1]]], dtype=complex)
T2 = PAULI / 2


def _eps(n: int) -> np.ndarray:
    """epsilon with epsilon_{0 1 ... n-1} = +1, by counting inversions."""
    out = np.zeros((n,) * n)
    for index in np.ndindex(*out.shape):
        if len(set(index)) == n:
            inversions = sum(1 for a in range(n) for b in range(a + 1, n) if index[a] > index[b])
            out[index] = (-1) ** inversions
    return out


MAJORANA_FLAVOUR = """\
theory majflav "two Majorana fermions over a generation space (invented numbers)"
spaces
  dk 2 "dark generations"
parameters
  mass m1 = 100.0 "invented"
  mass ms = 50.0 "invented"
  coupling complex Y[dk,dk] = {{ 0.1, 0.2 + 0.1 I }, { 0.3, 0.4 I }} "invented"
fields
  majorana chi over dk mass m1 "dark Majorana pair"
  scalar s real mass ms "singlet"
lagrangian
  1/2 bar(chi[i]) (I gamma[mu] d[mu] - m1) chi[i]
  1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2
  - 1/2 Y[i,j] s bar(chi[i]) PR chi[j] + h.c.
"""
Y = np.array([[0.1, 0.2 + 0.1j], [0.3, 0.4j]])


def test_majorana_yukawa_matrix_takes_its_symmetric_part(dirac, tmp_path: Path) -> None:
    """L = -1/2 Y_ij s chibar_i PR chi_j + h.c. For Majorana spinors chibar_i PR chi_j = chibar_j PR chi_i
    (Denner et al., NPB 387 (1992) 467, eq. 2.4 with C PR^T C^-1 = PR; from memory), so only
    Y_S = (Y + Y^T)/2 survives, and both fields of a pair fill either leg: vertex
    (bar(chi_i), chi_j, s) = -i (Y_S)_ij PR - i (Y_S)*_ij PL, the 1/2 cancelled by the factor 2 of
    the pair (as for -1/2 y s chibar chi -> -i y). Checked through evaluate() and the exported
    Python module alike."""
    symmetric = (Y + Y.T) / 2
    expected = -1j * (np.einsum("ab,ij->aibj", dirac.PR, symmetric)
                      + np.einsum("ab,ij->aibj", dirac.PL, symmetric.conj()))
    rules = vs.load_model(text=MAJORANA_FLAVOUR, name="majflav.vsm").derive(gauge="feynman")
    got = rules.vertex("bar(chi)", "chi", "s").evaluate(np.zeros((3, 4)))
    assert got.shape == (4, 2, 4, 2)
    assert np.allclose(got, expected)
    # the same numbers from the standalone module
    model_file = tmp_path / "majflav.vsm"
    model_file.write_text(MAJORANA_FLAVOUR)
    module_file = tmp_path / "majflav_rules.py"
    assert command_line(["export", str(model_file), "--to", "python", "-o", str(module_file), "-q"]) == 0
    spec = importlib.util.spec_from_file_location("majflav_rules", module_file)
    module = importlib.util.module_from_spec(spec)
    assert spec.loader is not None
    spec.loader.exec_module(module)
    zero = np.zeros(4)
    assert np.allclose(module.vertex_bar_chi__chi__s(zero, zero, zero), expected)


TWO_MAJORANA = """\
theory twomaj "two Majorana fermions and a massive vector (invented numbers)"
parameters
  mass m1 = 1.0
  mass m2 = 2.0
  mass mz = 3.0
  coupling a = 0.3
  coupling b = 0.7
fields
  majorana chi1 mass m1
  majorana chi2 mass m2
  vector Z mass mz
lagrangian
  1/2 bar(chi1) (I gamma[mu] d[mu] - m1) chi1
  1/2 bar(chi2) (I gamma[mu] d[mu] - m2) chi2
  - 1/2 d[mu] Z[nu] d[mu] Z[nu] + 1/2 d[mu] Z[nu] d[nu] Z[mu] + 1/2 mz^2 Z[mu] Z[mu]
  Z[mu] bar(chi1) gamma[mu] (a + b gamma5) chi2 + Z[mu] bar(chi2) gamma[mu] (a + b gamma5) chi1
"""


def test_vector_and_axial_currents_between_two_majorana_fields(dirac) -> None:
    """For Majorana spinors chibar_2 gamma^mu chi_1 = -chibar_1 gamma^mu chi_2 and
    chibar_2 gamma^mu gamma5 chi_1 = +chibar_1 gamma^mu gamma5 chi_2 (C gamma^T C^-1 = -gamma,
    C (gamma gamma5)^T C^-1 = gamma gamma5; Denner et al., NPB 387 (1992) 467, eq. 2.4, from memory).
    So the hermitian sum a Z (chibar_1 gamma chi_2 + chibar_2 gamma chi_1) cancels in its vector
    part and doubles in its axial part: vertex (bar(chi1), chi2, Z) = i * 2 b gamma^mu gamma5."""
    rules = vs.load_model(text=TWO_MAJORANA, name="twomaj.vsm").derive(gauge="unitary")
    got = rules.vertex("bar(chi1)", "chi2", "Z").evaluate(np.zeros((3, 4)))
    expected = 2j * 0.7 * np.einsum("mab,bc->acm", dirac.GAMMA, dirac.GAMMA5)
    assert np.allclose(got, expected)


DARK_SU2 = """\
theory darksu2 "dark SU(2) with a Majorana triplet and an antidoublet (invented numbers)"
parameters
  coupling gd = 0.7
  mass mw = 200.0
  mass mq = 20.0
  mass mh = 30.0
  coupling complex k = 0.2 + 0.1 I
gauge
  dk SU(2) boson V strength VS coupling gd
global
  zp Z(2)
fields
  vector V "dark bosons"
  majorana w mass mw in dk adjoint "dark triplet"
  dirac q mass mq in dk antifundamental charge zp 1 "antidoublet"
  scalar h complex mass mh in dk doublet charge zp 1 "dark doublet"
lagrangian
  -1/4 VS[mu,nu,a] VS[mu,nu,a]
  1/2 bar(w[a]) (I gamma[mu] D[mu] - mw) w[a]
  bar(q[i]) (I gamma[mu] D[mu] - mq) q[i]
  dag(D[mu] h) D[mu] h - mh^2 dag(h) h
  - k bar(w[a]) PR q[i] T[a,i,j] h[j] + h.c.
"""


@pytest.fixture(scope="module")
def dark_su2() -> vs.Rules:
    model = vs.load_model(text=DARK_SU2, name="darksu2.vsm")
    from vertexsmith.check import check_model
    assert [d for d in check_model(model) if d.severity == "error"] == []
    return model.derive(gauge="feynman")


def test_antifundamental_gauge_vertex(dark_su2: vs.Rules, dirac) -> None:
    """An antifundamental carries -T^T: D q = d q + i g (T^a)^T V^a q (covariant minus), so
    bar(q) i gamma D q has -g bar(q_i) gamma^mu (T^a)_{ji} q_j V^a_mu and the vertex
    (bar(q)_i, q_j, V^a_mu) = -i g gamma^mu (T^a)_{ji}: minus the fundamental's transposed
    (Peskin & Schroeder ch. 15-16 for the fundamental; the conjugate representation from memory)."""
    got = dark_su2.vertex("bar(q)", "q", "V").evaluate(np.zeros((3, 4)))
    expected = -1j * 0.7 * np.einsum("mst,aji->sitjma", dirac.GAMMA, T2)
    assert got.shape == (4, 2, 4, 2, 4, 3)
    assert np.allclose(got, expected)


def test_majorana_adjoint_gauge_vertex(dark_su2: vs.Rules, dirac) -> None:
    """L = 1/2 wbar^a i gamma^mu (D_mu w)^a with (D w)^a = d w^a + g f^{abc} V^b w^c. The term and its
    flow-reversed partner (wbar^c gamma w^a = -wbar^a gamma w^c, and f^{cba} = -f^{abc}) add, cancelling
    the 1/2: L_int = i g f^{abc} wbar^a gamma^mu w^c V^b_mu, vertex (bar(w)^a, w^c, V^b_mu) =
    -g f^{abc} gamma^mu, the Dirac adjoint's vertex (Peskin & Schroeder ch. 16, from memory; Denner
    et al. NPB 387 (1992) 467 for the reversal)."""
    got = dark_su2.vertex("bar(w)", "w", "V").evaluate(np.zeros((3, 4)))
    f = _eps(3)  # f^{abc} of SU(2)
    expected = -0.7 * np.einsum("mst,abc->satcmb", dirac.GAMMA, f)
    assert np.allclose(got, expected)


def test_majorana_yukawa_with_a_generator_and_its_conjugate(dark_su2: vs.Rules, dirac) -> None:
    """L = -k wbar^a PR q_i (T^a)_{ij} h_j + h.c.: vertex (bar(w)^a, q_i, h_j) = -i k (T^a)_{ij} PR;
    the conjugate term is -k* h*_j (T^a)_{ji} qbar_i PL w^a (T hermitian), vertex
    (bar(q)_i, w^a, dag(h)_j) = -i k* (T^a)_{ji} PL (common practice, no source)."""
    k = 0.2 + 0.1j
    got = dark_su2.vertex("bar(w)", "q", "h").evaluate(np.zeros((3, 4)))
    assert np.allclose(got, -1j * k * np.einsum("st,aij->satij", dirac.PR, T2))
    got = dark_su2.vertex("bar(q)", "w", "dag(h)").evaluate(np.zeros((3, 4)))
    assert np.allclose(got, -1j * np.conj(k) * np.einsum("st,aji->sitaj", dirac.PL, T2))


def test_doublet_gauge_vertex(dark_su2: vs.Rules, rng: np.random.Generator) -> None:
    """(D h)^dag D h with D = d - i g T^a V^a: vertex (h_i p1, dag(h)_j p2, V^a_mu) =
    i g (T^a)_{ji} (p1 - p2)^mu, both momenta incoming: d h -> -i p1 h, d h^dag -> -i p2 h^dag, so
    (-i p2)(-i g T) + (i g T)(-i p1) = g T (p1 - p2), times i (the non-abelian form of the scalar QED
    vertex, Peskin & Schroeder problem 9.1; from memory)."""
    p = rng.normal(size=(3, 4))
    got = dark_su2.vertex("h", "dag(h)", "V").evaluate(p)
    expected = 1j * 0.7 * np.einsum("aji,m->ijma", T2, p[0] - p[1])
    assert np.allclose(got, expected)


DIQUARK = """\
theory triscalar "three coloured scalars joined by the SU(3) alternating tensor (invented numbers)"
spaces
  gen 2
parameters
  coupling gs = 1.1
  coupling complex lq[gen] = { 0.3 + 0.4 I, -0.2 }
  coupling lz = 0.5
  mass m = 500.0
gauge
  color SU(3) boson G strength GS coupling gs
fields
  vector G
  scalar S1 complex mass m in color triplet
  scalar S2 complex mass m in color triplet
  scalar S3 complex mass m in color triplet over gen
lagrangian
  -1/4 GS[mu,nu,a] GS[mu,nu,a]
  dag(D[mu] S1) D[mu] S1 - m^2 dag(S1) S1
  dag(D[mu] S2) D[mu] S2 - m^2 dag(S2) S2
  dag(D[mu] S3[i,g]) D[mu] S3[i,g] - m^2 dag(S3[i,g]) S3[i,g]
  - lq[g] alt[i,j,k] S1[i] S2[j] S3[k,g] + h.c.
  - lz alt[i,j,k] S1[i] S3[j,g] S3[k,g] + h.c.
"""


def test_alternating_tensor_vertex_and_a_term_that_vanishes_by_antisymmetry() -> None:
    """L = -lq_g eps_ijk S1_i S2_j S3_kg + h.c.: vertex (S1_i, S2_j, S3_kg) = -i lq_g eps_ijk, and
    (dag(S1)_i, dag(S2)_j, dag(S3)_kg) = -i lq_g* eps_ijk (common practice, no source). The second term,
    eps_ijk S3_jg S3_kg summed over g, is zero: an antisymmetric tensor against a symmetric product of
    commuting fields, so no (S1, S3, S3) vertex may appear."""
    rules = vs.load_model(text=DIQUARK, name="triscalar.vsm").derive(gauge="feynman")
    lq = np.array([0.3 + 0.4j, -0.2])
    eps = _eps(3)
    got = rules.vertex("S1", "S2", "S3").evaluate(np.zeros((3, 4)))
    assert np.allclose(got, -1j * np.einsum("ijk,g->ijkg", eps, lq))
    got = rules.vertex("dag(S1)", "dag(S2)", "dag(S3)").evaluate(np.zeros((3, 4)))
    assert np.allclose(got, -1j * np.einsum("ijk,g->ijkg", eps, np.conj(lq)))
    labels = {tuple(sorted(v.labels)) for v in rules.vertices}
    assert ("S1", "S3", "S3") not in labels and ("dag(S1)", "dag(S3)", "dag(S3)") not in labels


@pytest.mark.parametrize("declaration, message, hint", [
    ("majorana chi mass m charge lep 1", "the real field 'chi' cannot carry a U(1) charge +1",
     "a Majorana field is its own antiparticle; a fermion with this charge is a Dirac field: dirac chi ..."),
    ("majorana chi mass m charge tri 1", "the real field 'chi' cannot carry a Z(3) charge +1",
     "a Majorana field is its own antiparticle; a fermion with this charge is a Dirac field: dirac chi ..."),
])
def test_a_majorana_field_with_a_global_charge_is_pointed_to_dirac(declaration: str, message: str,
                                                                    hint: str) -> None:
    # the hint used to say "declare it complex", which is itself an error for a Majorana field
    text = ("theory g\nglobal\n  lep U(1)\n  tri Z(3)\nparameters\n  mass m = 1.0\nfields\n"
            f"  {declaration}\nlagrangian\n  1/2 bar(chi) (I gamma[mu] d[mu] - m) chi\n")
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="g.vsm")
    assert (info.value.message, info.value.hint) == (message, hint)
    assert (info.value.span.line, info.value.span.column) == (8, 23)


def test_a_name_clash_with_an_index_space_reads_an_index_space() -> None:
    text = 'theory t\nspaces\n  s 2 "gens"\nparameters\n  mass m = 1.0\nfields\n  scalar s mass m\n'
    with pytest.raises(vs.ModelMeaningError) as info:
        vs.load_model(text=text, name="t.vsm")
    assert info.value.message == "'s' is already declared as an index space (line 3)"
    assert (info.value.span.line, info.value.span.column) == (7, 3)


@pytest.mark.parametrize("line, column", [
    # bar(chi) gamma^mu chi = 0 for a Majorana field (C gamma^T C^-1 = -gamma; Denner et al. NPB 387
    # (1992) 467, from memory): the derivative coupling to s gives no vertex
    ("  y d[mu] s bar(chi) gamma[mu] chi\n", 3),
    # eps_ijk against the symmetric S_j S_k (common practice, no source)
    ("  - y alt[i,j,k] S[i] S[j] S[k] + h.c.\n", 3),
])
def test_a_line_whose_terms_cancel_is_warned_at(line: str, column: int) -> None:
    from vertexsmith.check import check_model
    head = ("theory t\nparameters\n  coupling y = 0.3\n  coupling gs = 1.0\n  mass m = 2.0\n"
            "gauge\n  color SU(3) boson G strength GS coupling gs\n"
            "fields\n  majorana chi mass m\n  scalar s mass m\n  vector G\n"
            "  scalar S complex mass m in color triplet\nlagrangian\n"
            "  -1/4 GS[mu,nu,a] GS[mu,nu,a]\n  dag(D[mu] S) D[mu] S - m^2 dag(S) S\n"
            "  1/2 bar(chi) (I gamma[mu] d[mu] - m) chi\n  1/2 d[mu] s d[mu] s - 1/2 m^2 s^2\n"
            "  - 1/2 y s bar(chi) chi\n")
    clean = check_model(vs.load_model(text=head, name="t.vsm"))
    assert [d for d in clean if d.severity != "note"] == []
    found = [d for d in check_model(vs.load_model(text=head + line, name="t.vsm")) if d.severity == "warning"]
    assert [(d.message, d.span.line, d.span.column) for d in found] == [
        ("the terms of this line cancel: it gives no vertex", 19, column)]


def test_a_majorana_mass_matrix_over_an_index_space_asks_for_mass_eigenstates() -> None:
    # -1/2 M_ij chibar_i chi_j with an off-diagonal M mixes the two fields at quadratic order: the message
    # used to speak of group indices only, which a generation index is not
    text = ("theory mm\nspaces\n  dk 2\nparameters\n  mass M[dk,dk] = {{ 3.0, 1.0 }, { 1.0, 5.0 }}\n"
            "fields\n  majorana chi over dk\nlagrangian\n"
            "  1/2 bar(chi[i]) I gamma[mu] d[mu] chi[i] - 1/2 M[i,j] bar(chi[i]) chi[j]\n")
    with pytest.raises(vs.DerivationError) as info:
        vs.load_model(text=text, name="mm.vsm").derive()
    assert info.value.message == ("the quadratic terms of bar(chi) and chi are not diagonal in their group or "
                                  "index-space indices")
    assert "mass eigenstates" in info.value.hint
    assert (info.value.span.line, info.value.span.column) == (9, 3)


MAJORANA_VECTOR_MATRIX = """\
theory mv "a Majorana pair with a hermitian vector coupling matrix (invented numbers)"
spaces
  dk 2
parameters
  mass m1 = 1.0
  mass mz = 3.0
  coupling complex hermitian A[dk,dk] = {{ 0.1, 0.2 + 0.3 I }, { 0.2 - 0.3 I, 0.5 }} "invented"
fields
  majorana chi over dk mass m1
  vector Z mass mz
lagrangian
  1/2 bar(chi[i]) (I gamma[mu] d[mu] - m1) chi[i]
  - 1/2 d[mu] Z[nu] d[mu] Z[nu] + 1/2 d[mu] Z[nu] d[nu] Z[mu] + 1/2 mz^2 Z[mu] Z[mu]
  Z[mu] bar(chi[i]) gamma[mu] A[i,j] chi[j]
"""


def test_a_majorana_vector_matrix_keeps_its_antisymmetric_part_and_prints_its_sign(dirac) -> None:
    """Z chibar_i gamma^mu A_ij chi_j with chibar_j gamma chi_i = -chibar_i gamma chi_j (Denner et al.,
    NPB 387 (1992) 467, from memory): vertex (bar(chi)_i, chi_j, Z) = i (A_ij - A_ji) gamma^mu, and for a
    hermitian A that is -2 Im(A_ij) gamma^mu, zero on the diagonal. The second term used to be shown as
    "i A[dk2,dk1] -gamma" (in LaTeX "i A \\, - \\gamma"), which reads as a difference."""
    rules = vs.load_model(text=MAJORANA_VECTOR_MATRIX, name="mv.vsm").derive(gauge="unitary")
    a = np.array([[0.1, 0.2 + 0.3j], [0.2 - 0.3j, 0.5]])
    vertex = rules.vertex("bar(chi)", "chi", "Z")
    expected = 1j * np.einsum("ij,mst->sitjm", a - a.T, dirac.GAMMA)
    assert np.allclose(vertex.evaluate(np.zeros((3, 4))), expected)
    assert [str(part.coupling) for part in vertex.parts] == ["I", "-I"]
    assert "\\, - \\gamma" not in vertex.latex and "*(-gamma" not in vertex.text
