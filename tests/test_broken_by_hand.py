"""A broken abelian Higgs model written out by hand, with its R_xi gauge fixing typed in.

Source: Peskin & Schroeder ch. 21.1 (R_xi gauges of the abelian Higgs model, from memory):
with m_A = g v the gauge fixing -1/(2 xi) (d.A + xi m_A G)^2 cancels the A-G mixing of the
kinetic term up to a total derivative, the Goldstone gets mass^2 xi m_A^2, and the photon
propagator is -i/(p^2 - m_A^2) [g^{mu nu} - (1 - xi) p^mu p^nu/(p^2 - xi m_A^2)]; m_h^2 = 2 lam v^2.
The model names m_A and m_h through formulas of g, v, lam, as a researcher writes them.
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith as vs

MODEL = """\
theory ahiggs "broken abelian Higgs by hand, R_xi written out (invented numbers)"
parameters
  coupling g = 0.5
  coupling lam = 0.1
  mass v = 10.0
  coupling xi = 1.0
  mass mA = g v
  mass mh = sqrt(2 lam) v
gauge
  u1 U(1) boson A strength F coupling g fixing none
fields
  vector A mass mA
  scalar h mass mh
  scalar G
lagrangian
  -1/4 F[mu,nu] F[mu,nu]
  1/2 (d[mu] h + g A[mu] G) (d[mu] h + g A[mu] G) + 1/2 (d[mu] G - g A[mu] (v + h)) (d[mu] G - g A[mu] (v + h))
  - lam v^2 h^2 - lam v h (h^2 + G^2) - lam/4 (h^2 + G^2)^2
  - 1/(2 xi) (d[mu] A[mu] + xi mA G) (d[nu] A[nu] + xi mA G)
"""


@pytest.fixture(scope="module")
def model() -> vs.Model:
    return vs.load_model(text=MODEL, name="ahiggs.vsm")


def test_the_typed_gauge_fixing_cancels_the_mixing_and_the_masses_agree(model: vs.Model) -> None:
    # mA and mh are formulas of g, v and lam: the checks compare them with the terms' g^2 v^2 and 2 lam v^2,
    # and the A-G mixing written with mA cancels the one written with g v. Only the Goldstone's gauge-dependent
    # mass is left to report.
    found = [(d.severity, d.message) for d in model.check() if d.severity in ("error", "warning")]
    assert found == [("warning", "'G' is declared massless, but its quadratic terms give mass^2 = mA^2*xi")]


def test_photon_and_goldstone_propagators_in_r_xi(model: vs.Model, dirac, rng: np.random.Generator) -> None:
    rules = model.derive()
    g, v, xi = 0.5, 10.0, 3.0
    m2 = (g * v) ** 2
    p = rng.normal(size=4) * 7
    p2 = dirac.dot(p, p)
    photon = -1j / (p2 - m2) * (np.linalg.inv(dirac.ETA) - (1 - xi) * np.outer(p, p) / (p2 - xi * m2))
    assert np.allclose(rules.propagator("A").evaluate(p, values={"xi": xi}), photon)
    assert rules.propagator("G").evaluate(p, values={"xi": xi}) == pytest.approx(1j / (p2 - xi * m2))
    assert rules.propagator("h").evaluate(p) == pytest.approx(1j / (p2 - 2 * 0.1 * v**2))
