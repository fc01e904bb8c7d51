"""Fitting the antenna model: recovery of known parameters, honest errors, refusals.

The synthetic sweeps here are built with the fit's own model plus seeded noise,
which checks the fitter's mechanics and its error bars; tests against the bench
simulator (effects the model does not contain) are in test_trim_simulated.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldcheck.antenna import description_from_options
from fieldcheck.antenna_fit import fit_antenna
from fieldcheck.explain import explain_shift
from fieldcheck.errors import AdviceRefused, FitError
from fieldcheck.model import model_from_description
from fieldcheck.physics.mom import dipole_impedance
from fieldcheck.sweep import Sweep
from fieldcheck.trim import advise_trim


def _desc(**kw):
    base = dict(form="dipole", arm="490mm", diameter="2mm", gap="10mm", target="146MHz")
    base.update(kw)
    return description_from_options(**base)


def _sweep(desc, truth, f, sigma, seed):
    m = model_from_description(desc)
    rng = np.random.default_rng(seed)
    g = m.gamma_from_values(f, truth) + sigma * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
    return Sweep(f, g, 50.0, f"synthetic seed {seed}")


TRUTH = dict(length_m=1.003, r_loss_ohm=2.0, c_feed_f=0.8e-12, g_feed_s=2e-4, delay_s=0.3e-9)


def test_recovers_known_parameters_within_stated_errors():
    d = _desc()
    f = np.linspace(120e6, 170e6, 401)
    af = fit_antenna(_sweep(d, TRUTH, f, 0.002, 1), d)
    for name, true in TRUTH.items():
        assert abs(af.fit.values[name] - true) < 4 * af.fit.stderr[name], name
    assert af.fit.adequacy == "good"
    assert_allclose(af.fit.noise_sigma, 0.002, rtol=0.15)
    # The stated errors include typical calibration residuals (systematic terms),
    # which leave the electrical length uncertain by millimetres on a 1 m dipole,
    # but not by centimetres.
    assert 1e-4 < af.fit.stderr["length_m"] < 2e-2


def test_uncertainties_are_honest_over_seeded_trials():
    """True value inside 2 sigma in at least 90 % of trials (Gaussian: 95.4 %)."""
    d = _desc()
    f = np.linspace(125e6, 165e6, 201)
    inside = {k: 0 for k in TRUTH}
    n = 40
    for seed in range(n):
        af = fit_antenna(_sweep(d, TRUTH, f, 0.004, 100 + seed), d)
        for k, true in TRUTH.items():
            inside[k] += abs(af.fit.values[k] - true) <= 2 * af.fit.stderr[k]
    for k, count in inside.items():
        assert count / n >= 0.85, (k, count)


def test_model_free_crossing_agrees_with_fit_when_clean():
    d = _desc()
    f = np.linspace(120e6, 170e6, 401)
    truth = dict(TRUTH, delay_s=0.0)
    af = fit_antenna(_sweep(d, truth, f, 0.001, 2), d)
    assert af.measured_crossing_hz is not None
    assert_allclose(af.f_res_hz.value, af.measured_crossing_hz, rtol=5e-4)


def test_efficiency_matches_rrad_over_rrad_plus_rloss():
    # IEEE Std 145-2013 radiation efficiency; R_rad from the MoM at the fitted resonance.
    d = _desc()
    f = np.linspace(120e6, 170e6, 401)
    af = fit_antenna(_sweep(d, TRUTH, f, 0.001, 3), d)
    r_rad = dipole_impedance(af.f_res_hz.value, af.fit.values["length_m"], 1e-3).real
    assert_allclose(af.efficiency.value, r_rad / (r_rad + af.fit.values["r_loss_ohm"]), rtol=2e-3)
    assert abs(af.fit.values["r_loss_ohm"] - 2.0) < 0.3


def test_resonance_outside_sweep_fits_and_warns():
    d = _desc()
    f = np.linspace(146e6, 170e6, 241)  # the resonance (~143.5 MHz) is below the sweep
    af = fit_antenna(_sweep(d, dict(TRUTH, delay_s=0.0), f, 0.001, 4), d)
    assert not af.resonance_in_sweep
    assert any("outside the sweep" in n for n in af.notes)
    assert_allclose(af.fit.values["length_m"], TRUTH["length_m"], rtol=3e-3)


def test_no_resonance_anywhere_near_is_refused():
    d = _desc()
    f = np.linspace(400e6, 500e6, 201)  # three times the design frequency
    z = 5.0 - 300j * np.ones_like(f)
    g = (z - 50) / (z + 50)
    with pytest.raises(FitError, match="diagnose"):
        fit_antenna(Sweep(f, g), d)


def test_inadequate_model_refuses_advice():
    d = _desc()
    f = np.linspace(120e6, 170e6, 401)
    s = _sweep(d, dict(TRUTH, delay_s=0.0), f, 0.001, 5)
    # A strong ripple no antenna model contains (e.g. a resonant stub on the line).
    g = s.s11 + 0.25 * np.exp(2j * np.pi * (f - f[0]) / 4e6)
    bad = Sweep(f, np.clip(np.abs(g), 0, 0.999) * np.exp(1j * np.angle(g)))
    with pytest.raises((AdviceRefused, FitError), match="diagnose"):
        af = fit_antenna(bad, d)
        assert af.fit.adequacy == "inadequate"
        advise_trim(af, 146e6)


def test_monopole_and_horizontal_installations_fit():
    mono = description_from_options(form="monopole", arm="160mm", diameter="3mm", target="435MHz")
    f = np.linspace(360e6, 520e6, 321)
    truth = dict(length_m=0.163, r_loss_ohm=0.5, c_feed_f=0.3e-12, delay_s=0.0)
    af = fit_antenna(_sweep(mono, truth, f, 0.002, 6), mono)
    assert abs(af.fit.values["length_m"] - 0.163) < 4 * af.fit.stderr["length_m"] + 1e-5
    assert af.n_ends == 1
    hor = description_from_options(form="dipole", arm="5.0m", diameter="2mm", target="14.2MHz",
                                   install="horizontal", height="8m")
    f = np.linspace(12e6, 16.5e6, 201)
    truth = dict(length_m=10.2, r_loss_ohm=1.0, c_feed_f=1e-12, delay_s=0.0)
    af = fit_antenna(_sweep(hor, truth, f, 0.002, 7), hor)
    assert abs(af.fit.values["length_m"] - 10.2) < 4 * af.fit.stderr["length_m"] + 2e-3


def test_shift_budget_adds_up():
    d = _desc()
    f = np.linspace(120e6, 170e6, 401)
    af = fit_antenna(_sweep(d, TRUTH, f, 0.001, 8), d)
    s = explain_shift(af)
    assert_allclose(s.half_wave_hz + s.thickness_part_hz + s.insulation_part_hz + s.length_part_hz
                    + s.feed_part_hz, s.measured_hz, rtol=1e-12)
    # Electrically longer than built -> the length part lowers the resonance.
    assert s.length_part_hz < 0
    # A wire of finite thickness resonates below c / 2L (the end effect; Balanis, Antenna
    # Theory, 4th ed., section 8.3: resonant length below half a wavelength).
    assert s.thickness_part_hz < 0
    # A PVC jacket (eps_r 3.5, 0.5 mm on 2 mm wire) lowers it further: a few percent
    # (common practice, no source: insulated wire resonates 2-5 % lower).
    from fieldcheck.antenna import Insulation
    j = explain_shift(af, Insulation(0.5e-3, 3.5))
    assert -0.06 < j.insulation_part_hz / j.design_hz < -0.01
    assert_allclose(j.design_hz + j.insulation_part_hz + j.length_part_hz, s.design_hz + s.length_part_hz,
                    rtol=1e-12)


def test_fixing_the_delay_pins_the_terminal_resonance():
    d = _desc()
    f = np.linspace(120e6, 170e6, 401)
    truth = dict(TRUTH, delay_s=0.0)
    s = _sweep(d, truth, f, 0.002, 9)
    free = fit_antenna(s, d)
    held = fit_antenna(s, d, fixed={"delay_s": 0.0})
    assert held.fit.values["delay_s"] == 0.0 and "delay_s" not in held.fit.names
    assert held.f_res_hz.stderr < 0.5 * free.f_res_hz.stderr
    assert abs(held.fit.values["length_m"] - truth["length_m"]) < 4 * held.fit.stderr["length_m"]


def test_fixing_an_unknown_parameter_is_refused():
    from fieldcheck.errors import InputError
    d = _desc()
    f = np.linspace(120e6, 170e6, 201)
    with pytest.raises(InputError, match="fixable"):
        fit_antenna(_sweep(d, TRUTH, f, 0.002, 1), d, fixed={"length_m": 1.0})


def test_repeatability_excludes_the_bench_systematics():
    # Calibration residuals are common to every sweep on one bench; the trim history
    # weighs its points by the statistical error alone, which must be the smaller.
    d = _desc()
    f = np.linspace(120e6, 170e6, 401)
    af = fit_antenna(_sweep(d, TRUTH, f, 0.002, 11), d)
    assert 0 < af.length_repeatability_m < af.length_m.stderr
