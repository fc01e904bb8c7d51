"""Interpolated dipole impedance surface (fieldcheck.physics.surface) against the MoM it tabulates."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from fieldcheck.constants import C0_M_PER_S
from fieldcheck.errors import InputError
from fieldcheck.physics.installation import Installation
from fieldcheck.physics.mom import dipole_impedance
from fieldcheck.physics.surface import default_surface, resonant_frequency_hz

N_BUILD = 401  # segment count of the shipped table (tools/build_surface.py)


def _mom_kl(kl, l_over_a):
    return dipole_impedance(np.asarray(kl) * C0_M_PER_S / (2 * np.pi), 1.0, 1.0 / l_over_a, N_BUILD)


def test_surface_matches_mom_at_random_points():
    # Stated accuracy (surface.py docstring): resonant kL within 0.05 %, 0.5 ohm where
    # |X| < 100 ohm near the first resonance, and 0.5 % in |Z| over the whole kL range.
    # The reference is the project's own MoM (its outside checks are in test_mom.py).
    s = default_surface()
    rng = np.random.default_rng(20240611)
    for la in np.exp(rng.uniform(np.log(100), np.log(200000), 5)):
        kl_res = brentq(lambda t: _mom_kl(t, la)[0].imag, 2.5, 3.14, xtol=1e-11)
        assert abs(s.first_resonance_kl(la) / kl_res - 1) < 5e-4
        kl = rng.uniform(2.4, 3.6, 12)
        zm, zs = _mom_kl(kl, la), s.impedance_kl(kl, la)
        near = np.abs(zm.imag) < 100
        assert np.all(np.abs(zs - zm)[near] < 0.5)
        klw = rng.uniform(0.3, 7.5, 12)
        assert_allclose(s.impedance_kl(klw, la), _mom_kl(klw, la), rtol=5e-3)


def test_antiresonance_is_between_pi_and_2pi_and_matches_mom():
    # Full-wave dipole: the parallel resonance lies below kL = 2 pi and moves down for
    # thicker wires (Balanis 4th ed., section 8.4 impedance curves; qualitative).
    s = default_surface()
    thin, thick = s.antiresonance_kl(10000), s.antiresonance_kl(200)
    assert np.pi < thick < thin < 2 * np.pi
    ref = brentq(lambda t: _mom_kl(t, 10000)[0].imag, thin - 0.05, thin + 0.05, xtol=1e-11)
    assert abs(thin / ref - 1) < 5e-4


def test_impedance_in_si_units_and_resonant_frequency():
    s = default_surface()
    f = np.linspace(130e6, 160e6, 31)
    assert_allclose(s.impedance(f, 1.0, 1e-3), s.impedance_kl(2 * np.pi * f / C0_M_PER_S, 1000.0))
    f0 = resonant_frequency_hz(1.0, 1e-3)
    assert_allclose(f0, s.first_resonance_kl(1000.0) * C0_M_PER_S / (2 * np.pi))
    assert abs(dipole_impedance(f0, 1.0, 1e-3, N_BUILD)[0].imag) < 0.5
    # monopole of height h resonates with the dipole of length 2h (image theory)
    assert_allclose(resonant_frequency_hz(0.5, 1e-3, Installation("monopole")), f0, rtol=1e-12)
    fh = resonant_frequency_hz(1.0, 1e-3, Installation("horizontal", 0.5))
    assert 0.9 * f0 < fh < 1.1 * f0


def test_out_of_table_raises_with_range():
    s = default_surface()
    with pytest.raises(InputError, match="0.3..7.5"):
        s.impedance_kl(8.0, 1000)
    with pytest.raises(InputError, match="100..200000"):
        s.impedance_kl(3.0, 50)
    with pytest.raises(InputError):
        s.impedance([100e6], 1.0, -1e-3)


def test_default_surface_is_cached():
    assert default_surface() is default_surface()
