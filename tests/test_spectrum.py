"""Mass matrices per sector and their eigenvalues (issue 10 item 3), read from the quadratic form.

Every numeric eigenvalue is compared with numpy's own decomposition of the printed matrix (the
JSON entries read back), so the reading of K and the diagonalisation are checked separately.
"""

from __future__ import annotations

import json

import jsonschema
import numpy as np
import pytest
import sympy

import vertexsmith as vs
from vertexsmith.breaking.spectrum import spectrum_of
from vertexsmith.quadratic import quadratic_form
from vertexsmith.render import json as render_json
from vertexsmith.render import latex, text

FERMIONS = '''theory fermion_mixing "two Majorana and two Dirac fermions with mass mixing (invented numbers)"
parameters
  mass m1 = 2.0 "first Majorana mass (invented)"
  mass m2 = 5.0 "second Majorana mass (invented)"
  complex md = 1.0 + 0.5 I "Majorana mixing (invented)"
  complex mL = 1.5 + 0.2 I "Dirac mixing (invented)"
  mass mR = 3.0 "Dirac mass (invented)"
fields
  majorana n1 mass m1 "x"
  majorana n2 mass m2 "y"
  dirac a mass mR "p"
  dirac b mass mR "q"
lagrangian
  1/2 bar(n1) (I gamma[mu] d[mu] - m1) n1
  1/2 bar(n2) (I gamma[mu] d[mu] - m2) n2
  - 1/2 bar(n1) (md PR + conj(md) PL) n2 - 1/2 bar(n2) (md PR + conj(md) PL) n1
  bar(a) (I gamma[mu] d[mu] - mR) a + bar(b) (I gamma[mu] d[mu] - mR) b
  - bar(a) PR b mL + h.c.
'''


def _printed(rules: vs.Rules, field: str) -> tuple[dict, np.ndarray, np.ndarray]:
    """The sector holding a field as the JSON output prints it, its matrix and kinetic matrix in numbers."""
    document = json.loads(render_json.render(rules))
    jsonschema.validate(document, render_json.load_schema())
    sector = next(s for s in document["spectrum"]["sectors"] if field in s["fields"])
    numbers = {str(k): v for k, v in rules.model.parameter_values().items()}

    def read(rows: list[list[str]] | None) -> np.ndarray:
        n = len(sector["fields"])
        if rows is None:
            return np.eye(n)
        return np.array([[complex(sympy.sympify(e.replace("^", "**").replace("conj(", "conjugate("),
                                                    locals={k: sympy.Symbol(k) for k in numbers})
                                   .subs(numbers)) for e in row] for row in rows])

    return sector, read(sector["matrix"]), read(sector["kinetic"])


def test_complex_scalar_mass_matrix_of_two_doublets_matches_numpy():
    # M^2 = [[m1^2, m12sq], [conj(m12sq), m2^2]] (the model file's header; common practice, no source)
    rules = vs.load_model(vs.example("two_doublets")).derive(spectrum=True)
    mat = rules.spectrum.matrix("H1")
    m1, m2 = sympy.Symbol("m1", real=True), sympy.Symbol("m2", real=True)
    m12 = sympy.Symbol("m12sq")
    assert mat.matrix == sympy.Matrix([[m1**2, m12], [sympy.conjugate(m12), m2**2]])
    sector, mass2, _ = _printed(rules, "H1")
    assert np.allclose(sector["numeric"], np.linalg.eigvalsh(mass2), rtol=1e-10)
    # the symbolic eigenvalues evaluate to the same numbers
    values = rules.model.parameter_values()
    assert np.allclose(sorted(complex(e.subs(values)).real for e in mat.eigenvalues), sector["numeric"], rtol=1e-10)
    assert sector["quantity"] == "mass^2" and sector["blocks"] == [["H1", "H2"]]


def test_kinetic_mixing_gives_the_generalised_eigenvalues():
    # det(M^2 - m^2 Z) = 0 with Z = [[1, k], [k, 1]], M^2 = diag(0, mX^2): m^2 = 0 and mX^2 / (1 - k^2)
    # (the dark photon's mass shift at order kmix^2; common practice, no source)
    rules = vs.load_model(vs.example("dark_photon_mixing")).derive(spectrum=True)
    mat = rules.spectrum.matrix("X")
    k, mx = sympy.Symbol("kmix", real=True), sympy.Symbol("mX", real=True)
    assert mat.kinetic == sympy.Matrix([[1, k], [k, 1]])
    assert sympy.simplify(mat.eigenvalues[1] - mx**2 / (1 - k**2)) == 0 and mat.eigenvalues[0] == 0
    sector, mass2, kinetic = _printed(rules, "X")
    assert np.allclose(sector["numeric"], np.sort(np.linalg.eigvals(np.linalg.solve(kinetic, mass2)).real), atol=1e-12)
    assert sector["numeric"][1] == pytest.approx(9.0 / (1 - 0.001**2), rel=1e-12)


def test_dirac_masses_are_singular_values_and_majorana_masses_takagi_values():
    # Dirac: L = -bar(psi_L) M psi_R + h.c., masses = singular values of M; Majorana: M symmetric,
    # masses = singular values too (Takagi; Dreiner, Haber & Martin, arXiv:0812.1594, sec. 4.2, from memory)
    model = vs.load_model(text=FERMIONS)
    spectrum = spectrum_of(quadratic_form(model, model.monomials()))
    values = model.parameter_values()
    dirac, majorana = spectrum.matrix("a"), spectrum.matrix("n1")
    md, ml, mr = 1.0 + 0.5j, 1.5 + 0.2j, 3.0
    assert np.allclose(np.array(dirac.matrix.subs(values).evalf(), dtype=complex), [[mr, ml], [0, mr]])
    assert np.allclose(dirac.numeric, np.sort(np.linalg.svd(np.array([[mr, ml], [0, mr]]), compute_uv=False)))
    symmetric = np.array([[2.0, md], [md, 5.0]])
    assert np.allclose(np.array(majorana.matrix.subs(values).evalf(), dtype=complex), symmetric)
    assert np.allclose(majorana.numeric, np.sort(np.linalg.svd(symmetric, compute_uv=False)))
    assert np.allclose(sorted(complex(e.subs(values)).real for e in dirac.eigenvalues), dirac.numeric)


def test_check_notes_mixed_fields_declared_with_masses_that_are_not_eigenvalues():
    notes = [d for d in vs.load_model(vs.example("two_doublets")).check() if "mass eigenstates" in d.message]
    assert [(d.severity, d.span.line) for d in notes] == [("note", 33)]
    assert "8068.63, 90031.4" in notes[0].message and "8100, 90000" in notes[0].message


def test_spectrum_is_printed_only_when_asked_for_and_in_every_format():
    model = vs.load_model(vs.example("dark_photon_mixing"))
    plain, with_spectrum = model.derive(), model.derive(spectrum=True)
    assert plain.spectrum is None and "spectrum" not in json.loads(render_json.render(plain))
    assert "Mass matrices" not in text.render(plain)
    assert "Z = [1, kmix; kmix," in text.render(with_spectrum)
    assert r"Z = \begin{pmatrix}1 & \mathrm{kmix} \\ \mathrm{kmix} & 1\end{pmatrix}" in latex.render_snippet(with_spectrum)


def test_parameters_without_values_leave_the_numeric_eigenvalues_out():
    model = vs.load_model(text='''theory t "two real scalars, no values"
parameters
  mass ma "no value"
  mass mb "no value"
  mix "no value"
fields
  scalar a mass ma "x"
  scalar b mass mb "y"
lagrangian
  1/2 d[mu] a d[mu] a - 1/2 ma^2 a^2 + 1/2 d[mu] b d[mu] b - 1/2 mb^2 b^2 - mix a b
''')
    mat = model.derive(spectrum=True).spectrum.matrix("a")
    assert mat.numeric is None and mat.missing == ("ma", "mb", "mix")
    assert "needs values for ma," in text.render(model.derive(spectrum=True))
