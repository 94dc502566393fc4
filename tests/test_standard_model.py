"""The shipped Standard Model files (unbroken phase): content, numbers, checks, and bad input.

`sm_electroweak.vsm` holds the electroweak part, `standard_model.vsm` builds on it with colour,
quarks and the CKM matrix, `sm_singlet.vsm` builds on that. The broken-phase comparison with
Romao & Silva (arXiv:1209.6213) waits for the breaking section (issue 10); `sm_reference.py` holds
the table it will use.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from vertexsmith import load_model
from vertexsmith._resources import shipped_model
from vertexsmith.errors import VertexsmithError
from conftest import PR as PR_MATRIX


@pytest.fixture(scope="module")
def sm():
    return load_model(shipped_model("standard_model"))


def _value(model, name: str):
    values = {str(symbol): value for symbol, value in model.parameter_values().items()}
    return np.asarray(values[name], dtype=complex)


def test_the_standard_model_has_its_fields_and_groups(sm) -> None:
    assert sorted(sm.fields) == ["B", "G", "H", "L", "Q", "Wa", "dR", "eR", "gh_G", "gh_Wa", "uR"]
    assert sorted(sm.groups) == ["color", "hyper", "weak"]
    # Q = T3 + Y for every multiplet (Romao & Silva, arXiv:1209.6213, from memory)
    hyper = {name: sm.fields[name].charge("hyper") for name in ("Q", "uR", "dR", "L", "eR", "H")}
    assert {k: str(v) for k, v in hyper.items()} == {"Q": "1/6", "uR": "2/3", "dR": "-1/3", "L": "-1/2",
                                                     "eR": "-1", "H": "1/2"}


def test_the_input_scheme_gives_the_electroweak_numbers(sm) -> None:
    # tree level in the (alpha(mZ), mZ, GF) scheme: v = 246.22 GeV, sw^2 = 0.2336, mW = mZ cw
    # (PDG 2024 electroweak review, from memory: sw^2 (MS-bar) = 0.2312; the tree-level value differs)
    v, sw, mz = (float(_value(sm, k).real) for k in ("v", "sw", "mZ"))
    assert v == pytest.approx(246.22, abs=0.01)
    assert sw ** 2 == pytest.approx(0.2336, abs=0.001)
    e, g2, g1 = (float(_value(sm, k).real) for k in ("e", "g2", "g1"))
    assert e == pytest.approx(g2 * sw) == pytest.approx(g1 * np.sqrt(1 - sw ** 2))  # e = g sw = g' cw
    mw = float(_value(sm, "mW").real)
    assert mw == pytest.approx(g2 * v / 2, rel=1e-12)  # m_W = g v/2 (common practice, no source)
    assert mw == pytest.approx(mz * np.sqrt(1 - sw ** 2))
    # muH^2 = lamH v^2 (the tadpole condition) and mh^2 = 2 lamH v^2
    assert float(_value(sm, "lamH").real) * 2 * v ** 2 == pytest.approx(125.20 ** 2)


def test_the_ckm_matrix_is_unitary_with_the_measured_moduli(sm) -> None:
    ckm = _value(sm, "CKM")
    assert np.allclose(ckm @ ckm.conj().T, np.eye(3), atol=1e-12)
    # |V_ud|, |V_us|, |V_ub|, |V_cb|, |V_td|, |V_tb| (PDG 2024 CKM review, from memory)
    moduli = np.abs(ckm)
    assert moduli[0] == pytest.approx([0.97435, 0.22500, 0.00373], abs=2e-4)
    assert moduli[1, 2] == pytest.approx(0.0418, abs=2e-4)
    assert moduli[2, 0] == pytest.approx(0.0086, abs=3e-4)
    assert moduli[2, 2] == pytest.approx(0.9991, abs=2e-4)
    # the Jarlskog invariant Im(V_us V_cb V_ub* V_cs*) = 3.0e-5 (PDG 2024, from memory)
    jarlskog = (ckm[0, 1] * ckm[1, 2] * ckm[0, 2].conj() * ckm[1, 1].conj()).imag
    assert jarlskog == pytest.approx(3.0e-5, rel=0.05)


def test_the_unbroken_standard_model_checks_clean_but_for_the_tachyonic_doublet(sm) -> None:
    found = [str(d).splitlines()[0] for d in sm.check()]
    assert len(found) == 1
    assert found[0].endswith("sm_electroweak.vsm:65:3: warning: the quadratic terms of 'H' give a negative "
                             "mass^2 = -muH^2: the field is expanded around a maximum of its potential")


def test_the_up_type_yukawa_carries_the_ckm_matrix(sm) -> None:
    # -conj(CKM[j,i]) Yu[j,k] bar(Q[c,l,i]) Hc[l] PR uR[c,k] + h.c. with Hc[l] = alt[l,m] dag(H[m]):
    # the vertex (bar(Q[i]), uR[k], dag(H)) is -i conj(CKM[k,i]) sqrt2 m_k/v PR alt[l,m] delta_colour
    # (common practice, no source); alt[1,2] = +1 puts conj(phi0) in the upper slot of Hc, so the
    # up-type masses come out positive once H takes its vacuum value
    rules = sm.derive(unroll=True)
    v = float(_value(sm, "v").real)
    expected = -1j * np.conj(_value(sm, "CKM")[2, 0]) * np.sqrt(2) * 172.57 / v
    array = rules.vertex("bar(Q[1])", "uR[3]", "dag(H)").evaluate([np.zeros(4)] * 3)
    assert array.shape == (4, 3, 2, 4, 3, 2)  # bar(Q): spinor, colour, weak; uR: spinor, colour; dag(H): weak
    assert np.allclose(array[:, 0, 0, :, 0, 1], expected * PR_MATRIX)  # Q upper with H lower: alt[1,2] = +1
    assert np.allclose(array[:, 0, 1, :, 0, 0], -expected * PR_MATRIX)  # alt[2,1] = -1
    assert np.allclose(array[:, 0, 0, :, 0, 0], 0)
    assert np.allclose(array[:, 0, 0, :, 1, 1], 0)  # colour is conserved
    assert abs(expected) > 5e-3
    # the down-type Yukawa is diagonal in this basis: no (bar(Q[1]), dR[3], H) vertex
    with pytest.raises(VertexsmithError):
        rules.vertex("bar(Q[1])", "dR[3]", "H")


def test_the_singlet_model_builds_on_the_standard_model() -> None:
    model = load_model(shipped_model("sm_singlet"))
    assert {"S", "H", "Q", "Wa", "G"} <= set(model.fields)
    assert complex(_value(model, "mh")) == 125.0  # replaced by sm_singlet.vsm
    assert complex(_value(model, "lamH")) == pytest.approx(125.0 ** 2 / (2 * 246.2196 ** 2), rel=1e-4)
    rules = model.derive()
    # -muHS S dag(H) H gives -i muHS delta_ij (common practice, no source)
    vertex = rules.vertex("S", "dag(H)", "H")
    assert np.allclose(vertex.evaluate([np.zeros(4)] * 3), -25.0j * np.eye(2))


# ---------------------------------------------------------------------------------------- bad input

def _copy(tmp_path: Path, old: str, new: str) -> Path:
    text = shipped_model("standard_model").read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / "standard_model.vsm"
    path.write_text(text.replace(old, new), encoding="utf-8")
    return path


def test_a_wrong_hypercharge_is_reported_at_the_terms_it_breaks(tmp_path: Path) -> None:
    path = _copy(tmp_path, "charge hyper -1/3", "charge hyper 1/3")
    errors = [d for d in load_model(path).check() if d.severity == "error"]
    lines = {(d.span.line, d.message) for d in errors}
    assert (59, "term is not neutral under 'hyper': its net charge is ±2/3") in lines  # the down Yukawa
    assert all(d.hint for d in errors)


def test_a_missing_generation_index_is_a_positioned_error(tmp_path: Path) -> None:
    path = _copy(tmp_path, "PR uR[c,k] + h.c.", "PR uR[c] + h.c.")
    with pytest.raises(VertexsmithError) as caught:
        load_model(path).derive()
    error = caught.value
    assert (error.span.line, error.span.column) == (60, 54)
    # read as a generation index, 'c' clashes with its colour use in bar(Q[c,l,i]) on the same line
    assert error.message == "index 'c' is an index of the space gen here but an index of the group color at line 60, column 34"
    assert error.hint
    assert str(error).startswith(f"{path}:60:54: error:")


def test_a_wide_matrix_is_listed_entry_by_entry_in_latex(sm) -> None:
    # the CKM matrix in the standard parametrisation does not fit the parameters table's column
    from vertexsmith.render import latex

    text = latex.render(sm.derive())
    assert r"$\mathrm{CKM}$ & see below & CKM matrix \\" in text
    assert r"\mathrm{CKM}_{1,3} = \mathrm{s13} e^{- i \mathrm{dckm}} \\" in text
    # a narrow one stays in the table
    assert r"$\mathrm{Yu}$ & $\begin{pmatrix}" in text


def _vertex_type(vertex) -> str:
    fields = [leg.field for leg in vertex.legs]
    if any(f.startswith("gh_") for f in fields):
        return "ghost-gauge"
    vectors = sum(f in ("G", "Wa", "B") for f in fields)
    scalars = sum(f == "H" for f in fields)
    fermions = len(fields) - vectors - scalars
    if fermions:
        return "Yukawa" if scalars else "gauge-fermion"
    if scalars:
        return "scalar-gauge" if vectors else "scalar self"
    return "gauge self"


def test_the_unbroken_vertices_by_type_against_a_hand_count(sm) -> None:
    # counted by hand from the Lagrangian (common practice, no source):
    # gauge self: GGG, GGGG, WWW, WWWW (B is abelian); ghosts: gh_G gh_G G, gh_Wa gh_Wa Wa;
    # gauge-fermion: Q with G, Wa, B; uR and dR with G, B; L with Wa, B; eR with B (10);
    # scalar-gauge: H H+ with Wa, B, Wa Wa, B B, Wa B (5); scalar self: (H+ H)^2;
    # Yukawa: bar(L) eR H, bar(Q) dR H, bar(Q) uR dag(H) and their conjugates (6)
    counted = {"gauge self": 4, "ghost-gauge": 2, "gauge-fermion": 10, "scalar-gauge": 5, "scalar self": 1,
               "Yukawa": 6}
    rules = sm.derive()
    found: dict[str, int] = {}
    for vertex in rules.vertices:
        kind = _vertex_type(vertex)
        found[kind] = found.get(kind, 0) + 1
    assert found == counted
    assert len(rules.vertices) == sum(counted.values()) == 28
