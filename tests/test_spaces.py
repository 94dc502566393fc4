"""Index spaces of the model's own: fields and matrix parameters over generations, kept symbolic.

The Yukawa rule L = -Y bar(a) phi PR b  ->  vertex -i Y PR is Peskin & Schroeder ch. 4 (the
Yukawa vertex -i g) with the coupling replaced by a matrix entry; a sum over repeated generation
indices is the usual summation convention (common practice, no source). Errors are asserted at
their exact line and column.
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith as vs
from vertexsmith.check import check_model
from vertexsmith.symbolic import factor_text, parse_factor

from conftest import PL, PR

# a two-generation toy (invented numbers); line numbers below refer to this text
TOY = """\
theory toy
spaces
  gen 2
parameters
  mass m = 1.0
  mass ms = 2.0
  coupling complex Y[gen,gen] = {{0.1, 0.2 I}, {0, 0.3 - 0.1 I}}
  coupling complex hermitian K[gen,gen] = {{1, 2 + I}, {2 - I, 3}}
  coupling w[gen] = {0.5, m/4}
fields
  dirac psi over gen mass m
  dirac chi mass m
  scalar s complex mass ms
lagrangian
  bar(psi[i]) (I gamma[mu] d[mu] - m) psi[i]
  bar(chi) (I gamma[mu] d[mu] - m) chi
  dag(d[mu] s) d[mu] s - ms^2 dag(s) s
"""


def toy(*terms: str, base: str = TOY) -> vs.Model:
    return vs.load_model(text=base + "".join(f"  {t}\n" for t in terms), name="toy.vsm")


def test_matrix_parameter_values_and_formulas():
    model = toy("- Y[i,j] bar(psi[i]) s PR psi[j] + h.c.")
    values = model.parameter_values()
    y = values[model.parameters["Y"].symbol]
    np.testing.assert_allclose(y, [[0.1, 0.2j], [0, 0.3 - 0.1j]])
    w = values[model.parameters["w"].symbol]
    np.testing.assert_allclose(w, [0.5, 0.25])  # m/4 with m = 1.0: a formula entry


def test_yukawa_matrix_vertex_is_symbolic_and_evaluates_entry_by_entry():
    # source: Peskin & Schroeder ch. 4, Yukawa vertex -i g, g -> Y_ij (from memory)
    rules = toy("- Y[i,j] bar(psi[i]) s PR psi[j] + h.c.").derive()
    v = rules.vertex("bar(psi)", "psi", "s")
    assert str(v.factor) == "(-I)*Y[gen1,gen2]*PR"
    assert [leg.indices for leg in v.legs] == [("s1", "gen1"), ("s2", "gen2"), ()]
    y = np.array([[0.1, 0.2j], [0, 0.3 - 0.1j]])
    array = v.evaluate(np.zeros((3, 4)))
    assert array.shape == (4, 2, 4, 2)
    expected = np.einsum("ab,ij->aibj", PR, -1j * y)
    np.testing.assert_allclose(array, expected, atol=1e-12)
    # the conjugate term: -conj(Y[i,j]) bar(psi[j]) dag(s) PL psi[i] gives -i conj(Y)_ji PL
    h = rules.vertex("bar(psi)", "psi", "dag(s)").evaluate(np.zeros((3, 4)))
    np.testing.assert_allclose(h, np.einsum("ab,ij->aibj", PL, -1j * y.conj().T), atol=1e-12)


def test_factor_text_of_components_reads_back():
    # the output vocabulary writes an entry as in the model file, Ye[gen1,gen2], conj(...) for its conjugate
    model = vs.load_model(vs.example("lepton_flavour"))
    symbols = {p.name: p.symbol for p in model.parameters.values()}
    rules = model.derive()
    assert factor_text(rules.vertex("bar(eR)", "L", "dag(H)").factor) == \
        "(-I)*(conj(Ye[gen2,gen1])*delta_weak[i2,i3])*PL"
    for v in rules.vertices + model.derive(unroll=True).vertices:
        assert (parse_factor(factor_text(v.factor), symbols) - v.factor).expand() == 0, v.labels


def test_values_override_takes_an_array():
    rules = toy("- Y[i,j] bar(psi[i]) s PR psi[j] + h.c.").derive()
    y = np.array([[1.0, 2.0], [3.0, 4.0j]])
    vertex = rules.vertex("bar(psi)", "psi", "s")
    vertex.evaluate(np.zeros((3, 4)))  # the model's own matrix first: the next call must not reuse it
    array = vertex.evaluate(np.zeros((3, 4)), values={"Y": y})
    np.testing.assert_allclose(array, np.einsum("ab,ij->aibj", PR, -1j * y), atol=1e-12)
    with pytest.raises(vs.UsageError, match=r"has shape \(3,\), not \(2, 2\)"):
        rules.vertex("bar(psi)", "psi", "s").evaluate(np.zeros((3, 4)), values={"Y": [1, 2, 3]})


def test_repeated_index_inside_a_matrix_is_a_trace():
    # Y[i,i] = tr Y (summation convention, common practice, no source)
    rules = toy("- Y[i,i] s bar(chi) chi + h.c.").derive()
    v = rules.vertex("bar(chi)", "chi", "s")
    np.testing.assert_allclose(v.evaluate(np.zeros((3, 4))), -1j * (0.1 + 0.3 - 0.1j) * np.eye(4), atol=1e-12)


def test_vector_parameter_contracts_with_a_field_index():
    rules = toy("- w[i] s bar(chi) psi[i] + h.c.").derive()
    array = rules.vertex("bar(chi)", "psi", "s").evaluate(np.zeros((3, 4)))
    np.testing.assert_allclose(array, np.einsum("ab,i->abi", np.eye(4), -1j * np.array([0.5, 0.25])), atol=1e-12)


def test_hermitian_matrix_term_is_hermitian_without_hc():
    # bar(psi_i) K_ij psi_j s + its conjugate needs nothing more when K = K^dagger and s is real
    base = TOY.replace("scalar s complex mass ms", "scalar s mass ms").replace(
        "dag(d[mu] s) d[mu] s - ms^2 dag(s) s", "1/2 d[mu] s d[mu] s - 1/2 ms^2 s^2")
    fine = toy("- s bar(psi[i]) K[i,j] psi[j]", base=base)
    assert [d for d in check_model(fine) if d.severity == "error"] == []
    # the same with the general complex matrix Y is not hermitian
    wrong = toy("- s bar(psi[i]) Y[i,j] psi[j]", base=base)
    errors = [d for d in check_model(wrong) if d.severity == "error"]
    assert [(d.span.line, d.message) for d in errors] == [(18, "term has no hermitian conjugate in the Lagrangian")]
    # and with '+ h.c.' it is
    fixed = toy("- s bar(psi[i]) Y[i,j] psi[j] + h.c.", base=base)
    assert [d for d in check_model(fixed) if d.severity == "error"] == []


def test_conj_of_a_component():
    rules = toy("- conj(Y[j,i]) bar(psi[i]) s PR psi[j] + h.c.").derive()
    y = np.array([[0.1, 0.2j], [0, 0.3 - 0.1j]])
    array = rules.vertex("bar(psi)", "psi", "s").evaluate(np.zeros((3, 4)))
    np.testing.assert_allclose(array, np.einsum("ab,ij->aibj", PR, -1j * y.conj().T), atol=1e-12)


def test_shipped_lepton_model_checks_clean_and_has_one_yukawa_vertex():
    model = vs.load_model(vs.example("lepton_flavour"))
    assert [d for d in check_model(model) if d.severity != "note"] == []
    rules = model.derive()
    v = rules.vertex("bar(L)", "eR", "H")
    assert str(v.factor) == "(-I)*(Ye[gen1,gen2]*delta_weak[i1,i3])*PR"
    # the propagator is diagonal in generations
    p = rules.propagator("eR")
    assert p.indices == ("s1", "s2", "gen1", "gen2")
    assert p.evaluate([3.0, 0, 0, 1.0]).shape == (4, 4, 3, 3)


def test_neutrino_yukawa_through_the_conjugate_doublet():
    # L = -Yn_ij bar(L_k,i) eps_kl H*_l PR nR_j gives -i Yn_ij eps_kl PR (Peskin & Schroeder ch. 4 Yukawa
    # vertex with a matrix coupling, from memory; eps_12 = +1 as the alternating tensor is declared)
    model = vs.load_model(vs.example("lepton_flavour"))
    yn = model.parameter_values()[model.parameters["Yn"].symbol]
    v = model.derive().vertex("bar(L)", "nR", "dag(H)")
    assert [leg.indices for leg in v.legs] == [("s1", "i1", "gen1"), ("s2", "gen2"), ("i3",)]
    eps = np.array([[0, 1], [-1, 0]])
    expected = -1j * np.einsum("ab,kl,ij->akibjl", PR, eps, yn)
    np.testing.assert_allclose(v.evaluate(np.zeros((3, 4))), expected, atol=1e-12)
    assert yn[2, 0] == 0.0002 and yn[1, 1] == pytest.approx(0.0002 + 0.0002j)  # y0 (1 + I)/10, y0 = 0.002


# ---------------------------------------------------------------- errors at their place

def _error(text: str) -> vs.VertexsmithError:
    with pytest.raises(vs.VertexsmithError) as info:
        vs.load_model(text=text, name="toy.vsm").derive()
    return info.value


ERRORS = [
    pytest.param(TOY.replace("{{1, 2 + I}, {2 - I, 3}}", "{{1, 2 + I}, {2 + I, 3}}"), 8, 48,
                 "'K' declared hermitian is not hermitian: entry [1,2] is not the complex conjugate of entry [2,1]",
                 id="hermitian-value"),
    pytest.param(TOY.replace("coupling complex hermitian K[gen,gen]", "coupling complex unitary K[gen,gen]"), 8, 62,
                 "'K' declared unitary is not unitary", id="unitary-value"),
    pytest.param(TOY + "  bar(psi[mu]) I gamma[mu] PR psi[mu]\n", 18, 24,
                 "index 'mu' is a Lorentz index here but an index of the space gen at line 18, column 11",
                 id="lorentz-index-in-a-space"),
    pytest.param(TOY + "  bar(psi[i]) s PR psi[j] + h.c.\n", 18, 11, "index 'i' is left free", id="free-flavour-index"),
    pytest.param(TOY.replace("gen 2\n", "gen 2\n  flav 3\n").replace("dirac chi mass m", "dirac chi over flav mass m")
                 .replace("bar(chi) (I gamma[mu] d[mu] - m) chi", "bar(chi[k]) (I gamma[mu] d[mu] - m) chi[k]")
                 + "  - Y[i,j] bar(psi[i]) s PR chi[j] + h.c.\n", 19, 33,
                 "index 'j' is an index of the space flav here but an index of the space gen at line 19, column 9",
                 id="two-spaces"),
    pytest.param(TOY + "  bar(psi) s psi\n", 18, 7, "'psi' takes 0 Lorentz, 0 group and 1 gen index, not 0",
                 id="missing-flavour-index"),
    pytest.param(TOY.replace("dirac psi over gen", "dirac psi over gem"), 11, 18, "unknown index space 'gem'",
                 id="unknown-space"),
    pytest.param(TOY.replace("{{0.1, 0.2 I}, {0, 0.3 - 0.1 I}}", "{{0.1, 0.2 I}}"), 7, 33,
                 "'Y' needs 2 entries here, not 1", id="too-few-rows"),
    pytest.param(TOY + "  - Y bar(chi) s chi + h.c.\n", 18, 5,
                 "'Y' is a matrix parameter over gen, gen: a number is needed here", id="matrix-without-indices"),
    pytest.param(TOY + "  - Y[i] bar(psi[i]) s psi[i] + h.c.\n", 18, 7, "'Y' takes 2 indices (gen, gen), not 1",
                 id="matrix-index-count"),
    pytest.param(TOY.replace("gen 2", "gen 0"), 3, 7, "the size of index space 'gen' must be a whole number from 1 to 24",
                 id="space-size"),
]


@pytest.mark.parametrize(("text", "line", "column", "message"), ERRORS)
def test_index_space_errors_are_positioned(text, line, column, message):
    error = _error(text)
    assert (error.span.line, error.span.column) == (line, column), error
    assert error.message.startswith(message), error.message
    assert error.hint
