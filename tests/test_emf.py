"""Induced-EMF impedance checked against Balanis and the short-dipole limit."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import special

from fieldcheck.constants import C0_M_PER_S, ETA0_OHM
from fieldcheck.errors import InputError
from fieldcheck.physics import emf


def test_half_wave_dipole_73_plus_j42p5():
    # Balanis, Antenna Theory, 4th ed., section 4.6 and eq. 4-93: Zin = 73 + j42.5 ohm
    # for a very thin half-wave dipole (the radius term vanishes at kl = pi).
    # Balanis uses eta = 120 pi; CODATA eta0 is 0.07 % lower, hence rtol 2e-3.
    z = emf.induced_emf_impedance(np.pi, 1e-5)
    assert_allclose(z.real, 73.1, rtol=2e-3)
    assert_allclose(z.imag, 42.5, rtol=2e-3)
    # At kl = pi the current maximum is at the feed: both references agree.
    assert_allclose(emf.induced_emf_impedance_at_max(np.pi, 1e-5), z, rtol=1e-12)


@pytest.mark.parametrize("kl", [0.8, 2.0, np.pi, 5.0, 8.0, 15.0])
def test_radiation_resistance_matches_si_ci_closed_form(kl):
    # Balanis 4th ed. eq. 4-70, written here independently with scipy.special.sici.
    g = 0.5772156649015329  # Euler's constant (DLMF 5.2.3)
    si1, ci1 = special.sici(kl)
    si2, ci2 = special.sici(2 * kl)
    r_ref = ETA0_OHM / (2 * np.pi) * (
        g + np.log(kl) - ci1 + 0.5 * np.sin(kl) * (si2 - 2 * si1)
        + 0.5 * np.cos(kl) * (g + np.log(kl / 2) + ci2 - 2 * ci1))
    assert_allclose(emf.induced_emf_impedance_at_max(kl, 1e-4).real, r_ref, rtol=1e-9)


def test_short_dipole_limit():
    # Balanis 4th ed. section 4.3 (eq. 4-37): a short dipole (triangular current)
    # has R_in = 20 pi^2 (l/lambda)^2 ohm with eta = 120 pi; scaled to CODATA eta0.
    l_wl = np.array([0.005, 0.01, 0.02])
    r = emf.induced_emf_impedance(2 * np.pi * l_wl, 1e-6).real
    assert_allclose(r, 20 * np.pi ** 2 * l_wl ** 2 * ETA0_OHM / (120 * np.pi), rtol=2e-3)
    # Short dipoles are strongly capacitive.
    assert np.all(emf.induced_emf_impedance(2 * np.pi * l_wl, 1e-6).imag < -1000)


def test_first_resonance_slightly_shorter_than_half_wave():
    # Common practice, no source: a thin dipole resonates at about 0.47..0.49 wavelength,
    # and a thicker wire resonates shorter.
    l_wl = np.linspace(0.40, 0.55, 30001)
    res = []
    for a_wl in (1e-5, 1e-4, 1e-3):
        x = emf.induced_emf_impedance(2 * np.pi * l_wl, a_wl).imag
        i = np.flatnonzero(np.diff(np.sign(x)) > 0)[0]
        res.append(l_wl[i])
    assert all(0.46 < r < 0.495 for r in res)
    assert res[0] > res[1] > res[2]


def test_frequency_form_and_current_node():
    f = 146e6
    lam = C0_M_PER_S / f
    z1 = emf.induced_emf_impedance_f(f, 0.5 * lam, 1e-3)
    z2 = emf.induced_emf_impedance(np.pi, 1e-3 / lam)
    assert_allclose(z1, z2, rtol=1e-12)
    # Full wave: feed at a current node, the model gives an infinite impedance.
    assert np.isinf(emf.induced_emf_impedance(2 * np.pi, 1e-4).real)


def test_bad_inputs():
    with pytest.raises(InputError):
        emf.induced_emf_impedance(-1.0, 1e-4)
    with pytest.raises(InputError):
        emf.induced_emf_impedance(np.pi, 0.0)
    with pytest.raises(InputError, match="thin wire"):
        emf.induced_emf_impedance(0.1, 0.01)
