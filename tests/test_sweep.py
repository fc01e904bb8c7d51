"""The Sweep value: validation, immutability, and derived quantities against scikit-rf."""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from numpy.testing import assert_allclose

from fieldcheck.errors import InputError
from fieldcheck.sweep import Sweep


def _random_sweep(seed=0, n=101, z0=50.0):
    rng = np.random.default_rng(seed)
    f = np.linspace(10e6, 500e6, n)
    s = 0.95 * rng.uniform(0, 1, n) * np.exp(1j * rng.uniform(-np.pi, np.pi, n))
    return Sweep(f, s, z0, "random")


@pytest.mark.parametrize("z0", [50.0, 75.0])
def test_derived_quantities_match_scikit_rf(z0):
    sw = _random_sweep(1, z0=z0)
    net = skrf.Network(frequency=skrf.Frequency.from_f(sw.f_hz, unit="hz"), s=sw.s11.reshape(-1, 1, 1), z0=z0)
    assert_allclose(sw.z_ohm, net.z[:, 0, 0], rtol=1e-12)
    # scikit-rf's s_db is 20 log10 |S|; return loss is its negative.
    assert_allclose(sw.return_loss_db, -net.s_db[:, 0, 0], rtol=1e-12)
    assert_allclose(sw.vswr, net.s_vswr[:, 0, 0], rtol=1e-12)


def test_matched_and_total_reflection_limits():
    # Fact of the trade: a matched load has infinite return loss and VSWR 1; |G| = 1 has VSWR inf.
    sw = Sweep([1e6, 2e6], [0.0, 1.0])
    assert sw.vswr[0] == 1.0 and np.isinf(sw.vswr[1])
    assert np.isinf(sw.return_loss_db[0]) and sw.return_loss_db[1] == 0.0


def test_arrays_are_read_only_copies():
    f = np.array([1e6, 2e6, 3e6])
    s = np.array([0.1, 0.2, 0.3], dtype=complex)
    sw = Sweep(f, s)
    f[0] = 99.0
    assert sw.f_hz[0] == 1e6
    with pytest.raises(ValueError):
        sw.f_hz[0] = 5.0
    with pytest.raises(ValueError):
        sw.s11[0] = 0.0


@pytest.mark.parametrize("f, s, z0, needle", [
    ([1e6, 2e6], [0.1], 50, "frequencies but"),
    ([1e6], [0.1], 50, "at least 2"),
    ([1e6, np.nan], [0.1, 0.2], 50, "finite"),
    ([1e6, 2e6], [0.1, np.inf], 50, "finite"),
    ([-1e6, 2e6], [0.1, 0.2], 50, "positive"),
    ([2e6, 1e6], [0.1, 0.2], 50, "increasing"),
    ([1e6, 1e6], [0.1, 0.2], 50, "increasing"),
    ([1e6, 2e6], [0.1, 0.2], 0, "reference impedance"),
])
def test_bad_construction_is_refused(f, s, z0, needle):
    with pytest.raises(InputError, match=needle):
        Sweep(f, s, z0)


def test_uniform_grid_detection_and_helpers():
    sw = _random_sweep(2)
    assert sw.is_uniform
    f = np.concatenate([np.linspace(1e6, 2e6, 11), [2.5e6]])
    assert not Sweep(f, np.zeros(12)).is_uniform
    z = sw.with_impedance(np.full(sw.n_points, 50.0 + 0j), note="matched")
    assert_allclose(z.s11, 0, atol=1e-15)
    assert z.notes[-1] == "matched"
