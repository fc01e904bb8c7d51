"""Installations over a perfect ground (fieldcheck.physics.installation)."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.special import sici

from fieldcheck.constants import C0_M_PER_S, ETA0_OHM
from fieldcheck.errors import InputError
from fieldcheck.physics.installation import (Installation, horizontal_dipole_over_ground_impedance,
                                             installed_impedance, monopole_impedance,
                                             mutual_impedance_parallel)
from fieldcheck.physics.mom import DipoleSolution, dipole_impedance

F_HZ = C0_M_PER_S  # wavelength 1 m


def _balanis_mutual_half_wave(d_wl):
    """Side-by-side half-wave dipoles, induced EMF with sinusoidal currents.

    Balanis, Antenna Theory, 4th ed., section 8.6 (side-by-side configuration;
    equation numbers from memory, 8-71a/b region):
    R21 = eta/(4 pi) [2 Ci(u0) - Ci(u1) - Ci(u2)],  X21 = -eta/(4 pi) [2 Si(u0) - Si(u1) - Si(u2)],
    u0 = k d, u1 = k (sqrt(d^2 + l^2) + l), u2 = k (sqrt(d^2 + l^2) - l).
    """
    k, l = 2 * np.pi, 0.5
    u = [k * d_wl, k * (np.hypot(d_wl, l) + l), k * (np.hypot(d_wl, l) - l)]
    s, c = zip(*(sici(x) for x in u))
    e = ETA0_OHM / (4 * np.pi)
    return e * (2 * c[0] - c[1] - c[2]) - 1j * e * (2 * s[0] - s[1] - s[2])


def test_reaction_integral_reproduces_closed_form_with_sinusoidal_current():
    # Feed the mutual-impedance routine a sinusoidal current (segment averages) and
    # compare with the published closed form above.  Tolerance 0.01 ohm.
    n, length, k = 201, 0.5, 2 * np.pi
    dz = length / n
    z = (np.arange(n) - (n - 1) / 2) * dz
    i = (np.cos(k * (length / 2 - np.abs(z) - dz / 2)) - np.cos(k * (length / 2 - np.abs(z) + dz / 2))) / (k * dz)
    i[n // 2] = 1.0
    sol = DipoleSolution(np.array([F_HZ]), np.array([1.0 + 0j]), i[None, :].astype(complex), z, dz)
    for d in (0.1, 0.25, 0.5, 1.0, 2.0):
        assert_allclose(mutual_impedance_parallel(sol, d)[0], _balanis_mutual_half_wave(d), atol=0.01)


def test_monopole_is_half_the_image_dipole():
    # Image theory (Balanis 4th ed., section 4.7.4): Z_monopole(h) = Z_dipole(2h) / 2.
    f = np.linspace(50e6, 100e6, 5)
    assert_allclose(monopole_impedance(f, 0.75, 2e-3), 0.5 * dipole_impedance(f, 1.5, 2e-3), rtol=1e-12)
    zq = monopole_impedance(F_HZ, 0.25, 0.25 / 5000)[0]
    # quarter-wave thin monopole: about half of 73 + j42.5 (Balanis 4th ed., section 4.7.4: 36.5 + j21.25)
    assert 36.5 < zq.real < 42.0 and 18.0 < zq.imag < 26.0


def test_horizontal_dipole_converges_to_free_space_with_height():
    # Balanis 4th ed., section 4.7 / 8.6: the image's mutual impedance decays as 1/(2h)
    # and oscillates, so Z(h) oscillates about the free-space value and converges to it.
    length, radius = 0.5, 0.5 / 10000
    z_free = dipole_impedance(F_HZ, length, radius)[0]
    h = np.array([0.25, 0.5, 0.75, 1.0, 2.0, 4.0])
    dev = np.array([horizontal_dipole_over_ground_impedance(F_HZ, length, radius, hi)[0] for hi in h]) - z_free
    assert np.all(np.abs(dev[2:]) * 2 * h[2:] < 40.0)  # |dZ| <~ eta/(4 pi) * (lambda / 2h) envelope
    assert abs(dev[-1]) < 3.0
    hs = np.linspace(0.3, 1.3, 21)
    r = np.array([horizontal_dipole_over_ground_impedance(F_HZ, length, radius, hi)[0].real for hi in hs])
    assert np.any(r > z_free.real) and np.any(r < z_free.real)  # oscillates about it


def test_horizontal_half_wave_at_quarter_wave_height():
    # lambda/2 dipole at h = 0.25 lambda over perfect ground: R notably above 73 ohm,
    # in the 85..100 ohm region (from memory; Balanis 4th ed. fig. 8.20 mutual-resistance
    # curve gives R21(0.5 lambda) ~ -12.5 ohm, so R ~ 73 + 12.5 for a thin wire).
    z = horizontal_dipole_over_ground_impedance(F_HZ, 0.5, 0.5 / 10000, 0.25)[0]
    assert 85.0 < z.real < 100.0


def test_installation_validation_and_dispatch():
    with pytest.raises(InputError):
        Installation("vertical")
    with pytest.raises(InputError):
        Installation("horizontal")
    with pytest.raises(InputError):
        Installation("horizontal", -1.0)
    with pytest.raises(InputError):
        Installation("monopole", 2.0)
    with pytest.raises(InputError):
        horizontal_dipole_over_ground_impedance(F_HZ, 0.5, 1e-4, 0.001)
    f = [140e6, 150e6]
    assert_allclose(installed_impedance(f, 1.0, 1e-3, Installation()), dipole_impedance(f, 1.0, 1e-3))
    assert_allclose(installed_impedance(f, 0.5, 1e-3, Installation("monopole")),
                    monopole_impedance(f, 0.5, 1e-3))
    assert_allclose(installed_impedance(f, 1.0, 1e-3, Installation("horizontal", 3.0)),
                    horizontal_dipole_over_ground_impedance(f, 1.0, 1e-3, 3.0))
