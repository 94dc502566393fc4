"""The alternating tensor `alt` of SU(N): identities, contraction in the engine, numbers, outputs.

Sources: eps_ij eps_kl = delta_ik delta_jl - delta_il delta_jk for SU(2) and
eps_ijk eps_imn = delta_jm delta_kn - delta_jn delta_km, eps_ijk eps_ijn = 2 delta_kn,
eps_ijk eps_ijk = 6 for SU(3) are common practice, no source; the conjugate doublet
H~_i = eps_ij H*_j transforming as a doublet is common practice (e.g. the up-type Yukawa
coupling of the Standard Model, Peskin & Schroeder ch. 20, from memory).
"""

from __future__ import annotations

import itertools
import json

import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith.check import check_model
from vertexsmith.export import export_rules
from vertexsmith.groups import su_alternating
from vertexsmith.render import render
from vertexsmith.render.python_module import render_python_module
from vertexsmith.symbolic import parse_factor

from conftest import PR

# An up-type Yukawa coupling through the conjugate doublet (invented numbers).
UP = """\
theory up "up-type Yukawa with the conjugate doublet (invented numbers)"
parameters
  coupling g2 = 0.65
  coupling gy = 0.36
  coupling lam = 0.13
  coupling complex yu = 0.8 + 0.1 I
gauge
  weak  SU(2) boson W strength WS coupling g2
  hyper U(1)  boson B strength BS coupling gy
fields
  vector W
  vector B
  scalar H complex in weak doublet charge hyper 1/2
  dirac  Q in weak doublet charge hyper 1/6
  dirac  u charge hyper 2/3
define
  Hc[i] = alt[i,j] dag(H[j])
lagrangian
  -1/4 WS[mu,nu] WS[mu,nu] - 1/4 BS[mu,nu] BS[mu,nu]
  KINETIC
  bar(Q) I gamma[mu] D[mu] Q + bar(u) I gamma[mu] D[mu] u
  - yu bar(Q[i]) Hc[i] PR u + h.c.
"""


def up_model(kinetic: str = "dag(D[mu] H) D[mu] H - lam (dag(H) H)^2") -> vs.Model:
    return vs.load_model(text=UP.replace("KINETIC", kinetic), name="up.vsm")


def delta(n: int) -> np.ndarray:
    return np.eye(n)


# ---------------------------------------------------------------- the tensor itself

def test_su2_epsilon_product_is_a_difference_of_deltas() -> None:
    eps, d = su_alternating(2).real, delta(2)
    expected = np.einsum("ik,jl->ijkl", d, d) - np.einsum("il,jk->ijkl", d, d)
    assert np.array_equal(np.einsum("ij,kl->ijkl", eps, eps), expected)
    assert eps[0, 1] == 1 and eps[1, 0] == -1


def test_su3_epsilon_contractions() -> None:
    eps, d = su_alternating(3).real, delta(3)
    once = np.einsum("ijk,imn->jkmn", eps, eps)
    assert np.array_equal(once, np.einsum("jm,kn->jkmn", d, d) - np.einsum("jn,km->jkmn", d, d))
    assert np.array_equal(np.einsum("ijk,ijn->kn", eps, eps), 2 * d)
    assert np.einsum("ijk,ijk->", eps, eps) == 6
    # epsilon_123 = +1 and total antisymmetry
    for perm in itertools.permutations(range(3)):
        sign = np.linalg.det(np.eye(3)[list(perm)])
        assert eps[perm] == pytest.approx(sign)


# ---------------------------------------------------------------- contraction in the engine

def test_conjugate_doublet_kinetic_and_quartic_terms_equal_the_doublet_ones() -> None:
    # (eps H*)^dagger (eps H*) = H^dagger H: the rules must come out byte for byte the same
    plain = render(up_model().derive(), "json")
    tilde = render(up_model("dag(D[mu] Hc[i]) D[mu] Hc[i] - lam (dag(Hc[i]) Hc[i])^2").derive(), "json")
    assert plain == tilde


SU3 = """\
theory diquark "SU(3) alternating tensor contractions (invented numbers)"
parameters
  coupling gs = 1.2
  coupling c = 0.3
gauge
  color SU(3) boson G strength GS coupling gs
fields
  vector G
  scalar a complex in color triplet
  scalar b complex in color triplet
lagrangian
  -1/4 GS[mu,nu] GS[mu,nu]
  dag(D[mu] a) D[mu] a + dag(D[mu] b) D[mu] b
  TERM
"""


def su3_vertex(term: str) -> np.ndarray:
    model = vs.load_model(text=SU3.replace("TERM", term), name="diquark.vsm")
    return model.derive().vertex("dag(a)", "dag(b)", "a", "b").evaluate(np.zeros((4, 4)))


def test_su3_epsilon_pair_contracts_to_deltas_in_a_vertex() -> None:
    # eps_ijk eps_imn a*_j b*_k a_m b_n = (a* a)(b* b) - (a* b)(b* a)
    with_eps = su3_vertex("- c alt[i,j,k] alt[i,m,n] dag(a[j]) dag(b[k]) a[m] b[n]")
    written = su3_vertex("- c dag(a[j]) a[j] dag(b[k]) b[k] + c dag(a[j]) b[j] dag(b[k]) a[k]")
    assert np.allclose(with_eps, written) and np.abs(written).max() > 0.1


def test_su3_epsilon_vertex_numbers() -> None:
    # L = -c eps_ijk a_i b_j t_k + h.c. with a third triplet t: vertex -i c eps_{i1 i2 i3}
    text = SU3.replace("scalar b complex in color triplet", "scalar b complex in color triplet\n"
                       "  scalar t complex in color triplet").replace(
        "TERM", "dag(D[mu] t) D[mu] t\n  - c alt[i,j,k] a[i] b[j] t[k] + h.c.")
    model = vs.load_model(text=text, name="diquark.vsm")
    assert check_model(model) == []
    v = model.derive().vertex("a", "b", "t")
    assert v.evaluate(np.zeros((3, 4))).shape == (3, 3, 3)
    assert np.allclose(v.evaluate(np.zeros((3, 4))), -0.3j * su_alternating(3))


# ---------------------------------------------------------------- numbers and outputs of an eps vertex

def test_up_type_yukawa_vertex_numbers() -> None:
    # L = -yu bar(Q)_i eps_ij H*_j PR u: vertex (bar(Q) i1, u, dag(H) i3) = -i yu eps_{i1 i3} PR
    v = up_model().derive().vertex("bar(Q)", "u", "dag(H)")
    value = v.evaluate(np.zeros((3, 4)))
    eps = np.array([[0, 1], [-1, 0]])
    expected = -1j * (0.8 + 0.1j) * np.einsum("ab,ik->aibk", PR, eps)
    assert value.shape == (4, 2, 4, 2)
    assert np.allclose(value, expected)
    # its conjugate (bar(u), Q i2, H i3) = -i yu* eps_{i2 i3} PL
    w = up_model().derive().vertex("bar(u)", "Q", "H").evaluate(np.zeros((3, 4)))
    assert np.allclose(w, -1j * (0.8 - 0.1j) * np.einsum("ab,jk->abjk", np.eye(4) - PR, eps))


def test_eps_vertex_in_every_output() -> None:
    rules = up_model().derive()
    v = rules.vertex("bar(Q)", "u", "dag(H)")
    assert "ϵ_i₁i₃" in render(rules, "text", width=200)
    assert r"\varepsilon_{i_{1} i_{3}}" in v.latex
    data = json.loads(render(rules, "json"))
    factors = [x["factor"]["text"] for x in data["vertices"] if "alt_weak[" in x["factor"]["text"]]
    assert "(-I*yu)*alt_weak[i1,i3]*PR" in factors
    symbols = {p.name: p.symbol for p in rules.model.parameters.values()}
    assert any(sympy.expand(parse_factor(f, symbols) - v.factor) == 0 for f in factors)
    form = export_rules(rules, "form")
    assert "altweak(" in form


def test_exported_module_evaluates_the_eps_vertex(tmp_path) -> None:
    import importlib.util

    rules = up_model().derive()
    path = tmp_path / "up_rules.py"
    path.write_text(render_python_module(rules), encoding="utf-8")
    spec = importlib.util.spec_from_file_location("up_rules_export", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    momenta = np.arange(12.0).reshape(3, 4) / 7
    for labels in (("bar(Q)", "u", "dag(H)"), ("bar(u)", "Q", "H")):
        exported = module.VERTICES[labels](*momenta)
        assert np.allclose(exported, rules.vertex(*labels).evaluate(momenta))


def test_hand_rules_read_the_alternating_tensor(tmp_path, capsys) -> None:
    from vertexsmith.cli import main

    model = tmp_path / "up.vsm"
    model.write_text(UP.replace("KINETIC", "dag(D[mu] H) D[mu] H"), encoding="utf-8")
    hand = tmp_path / "up.hand"
    hand.write_text("gauge feynman\nvertex bar(Q) u dag(H) : -I yu alt_weak[i1,i3] PR\n"
                    "vertex bar(u) Q H : -I conj(yu) alt_weak[i3,i2] PL\n", encoding="utf-8")
    main(["compare", str(model), str(hand)])
    out = capsys.readouterr().out
    # the second is written with its indices swapped: antisymmetry makes it the negative
    assert "equal        vertex bar(Q) u dag(H)" in out
    assert "equal        vertex bar(u) Q H" not in out and "vertex bar(u) Q H" in out


def test_closed_delta_loop_after_contraction_is_the_trace() -> None:
    # eps_ij eps_ik delta_jk = delta_jk delta_jk = delta_jj = 2 for SU(2) (common practice):
    # -c/6 (2) S^3 gives the vertex -i 2 c, not the 4 of a Lorentz trace
    text = UP.replace("KINETIC", "dag(D[mu] H) D[mu] H").replace(
        "  dirac  u charge hyper 2/3\n", "  dirac  u charge hyper 2/3\n  scalar S\n").replace(
        "  - yu bar(Q[i])", "  1/2 d[mu] S d[mu] S - c/6 alt[i,j] alt[i,k] delta[j,k] S^3\n  - yu bar(Q[i])").replace(
        "  coupling lam = 0.13\n", "  coupling lam = 0.13\n  coupling c = 0.7\n")
    vertex = vs.load_model(text=text, name="trace.vsm").derive().vertex("S", "S", "S")
    assert complex(vertex.evaluate(np.zeros((3, 4)))) == pytest.approx(-2j * 0.7)
