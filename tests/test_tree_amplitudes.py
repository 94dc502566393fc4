"""Tree amplitudes from `vertexsmith.amplitudes` against published spin- and colour-summed results.

The amplitude code builds every diagram from the derived rules with its own spinors and
polarisation vectors (kinematics.py); the checks below compare with formulas from the books:
- e+ e- -> mu+ mu- with masses: Peskin & Schroeder eq. (5.10) and sec. 5.1 (from memory);
- Bhabha, massless: Peskin & Schroeder problem 5.2 (from memory),
  1/4 sum |M|^2 = 2 e^4 [(s^2 + u^2)/t^2 + 2 u^2/(s t) + (u^2 + t^2)/s^2];
- Compton (Klein-Nishina): Peskin & Schroeder eq. (5.87) (from memory);
- q qbar -> g g and g g -> g g, massless: Ellis, Stirling & Webber, Table 7.1 (from memory),
  spin- and colour-averaged |M|^2 / g^4 = 32/27 (t^2 + u^2)/(t u) - 8/3 (t^2 + u^2)/s^2 and
  9/2 (3 - t u/s^2 - s u/t^2 - s t/u^2);
- phi -> psi psibar in Yukawa theory: sum |M|^2 = 2 g^2 (M^2 - 4 m^2) (Peskin & Schroeder
  problem 4.3, from memory);
- completeness of the spinors and polarisation vectors: sum u ubar = pslash + m, sum v vbar =
  pslash - m, sum eps eps* = -g + k k / m^2 (Peskin & Schroeder eqs. (3.66)-(3.67), (from memory)).
"""

from __future__ import annotations

import numpy as np
import pytest

import vertexsmith
from vertexsmith.amplitudes import amplitude
from vertexsmith.kinematics import (bar, mdot, phase_space, polarisations, random_lorentz, slash, u_spinors,
                                    v_spinors)


@pytest.fixture(scope="module")
def qed():
    return vertexsmith.load_model(vertexsmith.example("qed")).derive()


@pytest.fixture(scope="module")
def qcd():
    return vertexsmith.load_model(vertexsmith.example("qcd")).derive()


def invariants(p):
    p1, p2, k1, k2 = (p[:, j] for j in range(4))
    return mdot(p1 + p2, p1 + p2).real, mdot(p1 - k1, p1 - k1).real, mdot(p1 - k2, p1 - k2).real


def test_spinor_and_polarisation_completeness():
    rng = np.random.default_rng(3)
    p = phase_space(rng, 4, [1.3, 0.0], [0.7, 2.0], 6.0)
    for j, m in ((0, 1.3), (2, 0.7)):
        u, v = u_spinors(p[:, j], m), v_spinors(p[:, j], m)
        sum_u = np.einsum("nsa,nsb->nab", u, bar(u))
        sum_v = np.einsum("nsa,nsb->nab", v, bar(v))
        assert np.allclose(sum_u, slash(p[:, j]) + m * np.eye(4))
        assert np.allclose(sum_v, slash(p[:, j]) - m * np.eye(4))
    k, m = p[:, 3], 2.0
    eps = polarisations(k, m)
    metric = np.diag([1.0, -1.0, -1.0, -1.0])
    expected = -metric + np.einsum("na,nb->nab", k, k) / m**2  # upper indices
    assert np.allclose(np.einsum("nla,nlb->nab", eps, eps.conj()), expected)
    assert np.allclose(np.einsum("nla,ab,nb->nl", eps, metric, k), 0)


def test_ee_to_mumu_with_masses(qed):
    rng = np.random.default_rng(5)
    me, mmu, e = 0.4, 1.1, 0.3
    amp = amplitude(qed, "ele bar(ele) -> muon bar(muon)")
    p = phase_space(rng, 8, [me, me], [mmu, mmu], 5.0)
    p1, p2, k1, k2 = (p[:, j] for j in range(4))
    s = mdot(p1 + p2, p1 + p2).real
    expected = (8 * e**4 / s**2 * (mdot(p1, k1) * mdot(p2, k2) + mdot(p1, k2) * mdot(p2, k1) + mmu**2 * mdot(p1, p2)
                                   + me**2 * mdot(k1, k2) + 2 * me**2 * mmu**2)).real
    got = amp.summed_square(p, {"me": me, "mmu": mmu, "e": e}) / 4
    assert got == pytest.approx(expected, rel=1e-10)


def test_bhabha_massless(qed):
    amp = amplitude(qed, "ele bar(ele) -> ele bar(ele)")
    p = phase_space(np.random.default_rng(6), 8, [0, 0], [0, 0], 7.0)
    s, t, u = invariants(p)
    e = 0.3
    expected = 2 * e**4 * ((s**2 + u**2) / t**2 + 2 * u**2 / (s * t) + (u**2 + t**2) / s**2)
    assert amp.summed_square(p, {"me": 0.0, "e": e}) / 4 == pytest.approx(expected, rel=1e-10)


def test_bhabha_needs_the_relative_fermion_sign(qed):
    # with the sign of one diagram flipped the interference term changes sign: the result is wrong
    amp = amplitude(qed, "ele bar(ele) -> ele bar(ele)")
    p = phase_space(np.random.default_rng(6), 4, [0, 0], [0, 0], 7.0)
    values = {"me": 0.0, "e": 0.3}
    m = [amp.evaluate(p, values, diagrams=[k]) for k in range(2)]
    right = np.sum(np.abs(m[0] + m[1]).reshape(4, -1) ** 2, axis=1)
    wrong = np.sum(np.abs(m[0] - m[1]).reshape(4, -1) ** 2, axis=1)
    assert np.allclose(right, amp.summed_square(p, values))
    assert not np.allclose(wrong, right, rtol=1e-3)


def test_compton_klein_nishina_and_ward_identity(qed):
    m, e = 0.7, 0.3
    amp = amplitude(qed, "ele A -> ele A")
    p = phase_space(np.random.default_rng(7), 8, [m, 0], [m, 0], 3.0)
    pk, pk_out = mdot(p[:, 0], p[:, 1]).real, mdot(p[:, 0], p[:, 3]).real
    expected = 2 * e**4 * (pk_out / pk + pk / pk_out + 2 * m**2 * (1 / pk - 1 / pk_out)
                           + m**4 * (1 / pk - 1 / pk_out) ** 2)
    values = {"me": m, "e": e}
    assert amp.summed_square(p, values) / 4 == pytest.approx(expected, rel=1e-10)
    # Peskin & Schroeder eq. (5.79): eps -> k gives zero, for either photon
    for leg in (1, 3):
        assert np.max(np.abs(amp.evaluate(p, values, gauge_leg=leg))) < 1e-12 * np.max(np.abs(amp.evaluate(p, values)))


def test_qqbar_to_gg(qcd):
    g = 1.1
    amp = amplitude(qcd, "u bar(u) -> G G")
    p = phase_space(np.random.default_rng(8), 10, [0, 0], [0, 0], 5.0)
    s, t, u = invariants(p)
    expected = g**4 * (32 / 27 * (t * t + u * u) / (t * u) - 8 / 3 * (t * t + u * u) / s**2)
    assert amp.summed_square(p, {"gs": g, "mu_q": 0.0}) / 36 == pytest.approx(expected, rel=1e-10)


def test_gg_to_gg_and_its_gauge_independence(qcd):
    g = 1.1
    amp = amplitude(qcd, "G G -> G G")
    p = phase_space(np.random.default_rng(9), 10, [0, 0], [0, 0], 5.0)
    s, t, u = invariants(p)
    expected = g**4 * 9 / 2 * (3 - t * u / s**2 - s * u / t**2 - s * t / u**2)
    for xi in (1.0, 0.25, 7.0):
        assert amp.summed_square(p, {"gs": g, "xi_G": xi}) / 256 == pytest.approx(expected, rel=1e-9)


def test_colour_is_summed_explicitly(qcd):
    amp = amplitude(qcd, "u bar(u) -> G G")
    p = phase_space(np.random.default_rng(10), 3, [0, 0], [0, 0], 5.0)
    full = amp.evaluate(p, {"mu_q": 0.0})
    assert full.shape == (3, 2, 3, 2, 3, 2, 8, 2, 8)
    assert np.allclose(np.sum(np.abs(full.reshape(3, -1)) ** 2, axis=1), amp.summed_square(p, {"mu_q": 0.0}))


def test_yukawa_decay(shipped):
    rules = shipped("yukawa").derive()
    amp = amplitude(rules, "phi -> psi bar(psi)")
    big, small, g = 10.0, 1.0, 0.3
    p = phase_space(np.random.default_rng(11), 5, [big], [small, small], big)
    expected = 2 * g**2 * (big**2 - 4 * small**2)
    assert amp.summed_square(p, {"M": big, "m": small, "g": g}) == pytest.approx(np.full(5, expected), rel=1e-10)


def test_two_to_three_ward_identity_and_lorentz_invariance(qed, qcd):
    p = phase_space(np.random.default_rng(12), 6, [0.3, 0.3], [0.5, 0.5, 0.0], 4.0)
    amp = amplitude(qed, "ele bar(ele) -> muon bar(muon) A")
    values = {"me": 0.3, "mmu": 0.5}
    assert len(amp.diagrams) == 4
    reference = amp.summed_square(p, values)
    assert np.all(amp.summed_square(p, values, gauge_leg=4) < 1e-24 * reference)
    moved = np.einsum("nab,njb->nja", random_lorentz(np.random.default_rng(13), 6), p)
    assert amp.summed_square(moved, values) == pytest.approx(reference, rel=1e-10)
    gluons = amplitude(qcd, "G G -> G G G")
    q = phase_space(np.random.default_rng(14), 4, [0, 0], [0, 0, 0], 4.0)
    assert np.all(np.abs(gluons.summed_square(q, gauge_leg=2)) < 1e-14 * gluons.summed_square(q))


def test_spin_sums_agree_with_explicit_states(qcd):
    amp = amplitude(qcd, "u bar(u) -> G G")
    p = phase_space(np.random.default_rng(15), 4, [0.2, 0.2], [0, 0], 5.0)
    values = {"mu_q": 0.2}
    assert amp.summed_square(p, values, spin_sums=True) == pytest.approx(amp.summed_square(p, values), rel=1e-10)


def test_amplitude_api_errors(qed):
    amp = amplitude(qed, "ele bar(ele) -> muon bar(muon)")
    with pytest.raises(vertexsmith.UsageError, match=r"momenta for 'ele bar\(ele\) -> muon bar\(muon\)' have shape"):
        amp.summed_square(np.zeros((3, 3, 4)))
    with pytest.raises(vertexsmith.UsageError, match="has no tree-level diagram"):
        amplitude(qed, "ele bar(ele) -> ele bar(ele) ele bar(muon) muon bar(ele) ele bar(ele)"[:0] + "A -> A A")
