"""Tests of the bench simulator (fieldcheck.simulate, fieldcheck.bench_effects) and `fieldcheck simulate`.

Independent references used (named again beside each check):
- Pozar, Microwave Engineering, 4th ed.: eq. 2.35 (Gamma = (Z - Z0)/(Z + Z0)),
  eq. 2.91 (input impedance of a lossy terminated line, tanh form), and the
  input reflection of a line Gamma_L exp(-2 gamma l) (section 2.3).
- Balanis, Antenna Theory: Analysis and Design, 4th ed., eq. 2-90b (loss
  resistance of a half-wave dipole, (l / (2 pi a)) R_s / 2) with the surface
  resistance R_s = sqrt(pi f mu0 / sigma) (Pozar 4th ed. section 1.7).
- scikit-rf 2.2: skrf.calibration.OnePort (three-term one-port calibration) and
  the Touchstone reader skrf.io.Touchstone.
- Touchstone File Format Specification 2.0 (IBIS Open Forum), version 1 syntax.
- Rules of thumb marked "common practice, no source" where used.
Descriptions below are invented demo builds; no value of theirs is a check value.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path
import json

import numpy as np
import pytest
import skrf
from numpy.testing import assert_allclose
from skrf.calibration import OnePort

from fieldcheck import antenna, features, tdr
from fieldcheck.bench_effects import (BenchEffects, Fault, add_noise, apply_error_box,
                                      CM_STUB_VF)
from fieldcheck.cli import main
from fieldcheck.constants import C0_M_PER_S, MU0_H_PER_M
from fieldcheck.errors import InputError
from fieldcheck.importer import read_sweep
from fieldcheck.physics.materials import IACS_S_PER_M
from fieldcheck.refplane import parse_cable, remove_cable
from fieldcheck.simulate import (LABEL, insulation_length_factor, simulate_antenna_z,
                                 simulate_sweep, write_touchstone)

NSEG = 101  # MoM segments: accuracy is not the point here, speed is
F_BAND = np.linspace(130e6, 160e6, 61)


def dipole(**kw):
    """An invented 2 m band dipole (demo build), 1:1 balun, 50 ohm, overrides in ``kw``."""
    args = dict(form="dipole", arm="492mm", diameter="2mm", gap="10mm", balun="1:1",
                material="copper")
    args.update(kw)
    return antenna.description_from_options(require_target=False, **args)


def gamma_pozar(z_ohm, z0_ohm=50.0):
    """Pozar, Microwave Engineering, 4th ed., eq. 2.35."""
    return (z_ohm - z0_ohm) / (z_ohm + z0_ohm)


def lossy_line_zin(zl, z0, gamma_l):
    """Pozar, Microwave Engineering, 4th ed., eq. 2.91."""
    t = np.tanh(gamma_l)
    return z0 * (zl + z0 * t) / (z0 + zl * t)


def cable_gamma_l(cable, f_hz):
    """gamma * l of a cable: alpha from its matched dB loss (1 Np = 20 log10 e dB), beta = w/(vf c0)."""
    alpha = cable.loss_db_per_100m * np.sqrt(f_hz / cable.loss_ref_hz) / 100.0 / (20 / np.log(10))
    beta = 2 * np.pi * f_hz / (cable.velocity_factor * C0_M_PER_S)
    return (alpha + 1j * beta) * cable.length_m


@pytest.fixture(scope="module")
def clean_bare():
    desc = dipole()
    return desc, simulate_sweep(desc, F_BAND, BenchEffects.clean(), n_segments=NSEG)


# ---- the chain -------------------------------------------------------------------

def test_clean_gamma_is_pozar_of_true_z_and_round_trips(clean_bare, tmp_path):
    desc, sim = clean_bare
    z = simulate_antenna_z(F_BAND, desc, n_segments=NSEG)
    # Pozar 4th ed. eq. 2.35, computed here from the true terminal impedance
    assert_allclose(sim.sweep.s11, gamma_pozar(z), rtol=0, atol=1e-12)
    assert sim.sweep.source.startswith("simulated:") and LABEL in sim.sweep.source
    for fmt, unit in (("RI", "MHz"), ("MA", "GHz"), ("DB", "Hz")):
        path = tmp_path / f"clean_{fmt}.s1p"
        write_touchstone(sim.sweep, path, fmt=fmt, unit=unit)
        ts = skrf.io.Touchstone(str(path))  # scikit-rf's reader, never skrf.Network(path)
        assert_allclose(ts.f, F_BAND, rtol=1e-11)
        assert_allclose(ts.s[:, 0, 0], sim.sweep.s11, rtol=0, atol=1e-9)
        assert_allclose(np.real(ts.z0[0, 0]), 50.0)
        back = read_sweep(str(path))  # and our own strict reader accepts it
        assert_allclose(back.s11, sim.sweep.s11, rtol=0, atol=1e-9)
        assert any(LABEL in c for c in back.comments)


def test_conductor_loss_matches_half_wave_closed_form(clean_bare):
    desc, sim = clean_bare
    t = sim.truth
    f = t["f_res_terminals_hz"]
    assert f is not None and 135e6 < f < 155e6
    # Balanis 4th ed. eq. 2-90b: R_loss = (l / (2 pi a)) R_s / 2, R_s = sqrt(pi f mu0 / sigma)
    # (Pozar 4th ed. 1.7); copper sigma = 100 % IACS (IEC 60028).  The MoM current is
    # not exactly sinusoidal: 10 % tolerance.
    r_s = np.sqrt(np.pi * f * MU0_H_PER_M / IACS_S_PER_M)
    r_closed = t["physical_total_length_m"] / (2 * np.pi * 1e-3) * r_s / 2
    assert_allclose(t["conductor_loss_ohm"], r_closed, rtol=0.10)
    # IEEE Std 145-2013: radiation efficiency = R_rad / (R_rad + R_loss)
    assert_allclose(t["efficiency"], t["r_radiation_ohm"] / (t["r_radiation_ohm"] + t["r_loss_ohm"]),
                    rtol=1e-12)
    # truth resonance: X of the true terminal impedance is zero there
    assert abs(simulate_antenna_z([f], desc, n_segments=NSEG)[0].imag) < 0.05


def test_cable_chain_matches_remove_cable_and_lossy_line():
    desc = dipole(cable="RG58:5m")
    sim = simulate_sweep(desc, F_BAND, BenchEffects.clean(), n_segments=NSEG)
    z = simulate_antenna_z(F_BAND, desc, n_segments=NSEG)
    nominal = parse_cable("RG58:5m")
    back = remove_cable(sim.sweep, nominal)
    assert_allclose(back.s11, gamma_pozar(z), rtol=0, atol=1e-9)
    # with Z0 and VF errors, compare with Pozar 4th ed. eq. 2.91 for the cable present
    fx = BenchEffects(noise_sigma=0.0, cable_z0_error_ohm=1.0, cable_vf_error=-0.01)
    sim2 = simulate_sweep(desc, F_BAND, fx, n_segments=NSEG)
    present = dataclasses.replace(nominal, z0_ohm=51.0, velocity_factor=0.66 * 0.99)
    zin = lossy_line_zin(z, 51.0, cable_gamma_l(present, F_BAND))
    assert_allclose(sim2.sweep.s11, gamma_pozar(zin), rtol=0, atol=1e-9)
    assert "51" in sim2.truth["cable_present"]


def test_error_box_is_undone_by_scikit_rf_one_port(clean_bare):
    desc, ref = clean_bare
    e00, e11, trk = 0.008 * np.exp(0.7j), 0.015 * np.exp(-2.1j), 1.01 * np.exp(0.01j)
    fx = BenchEffects(noise_sigma=0.0, cal_directivity=e00, cal_source_match=e11, cal_tracking=trk)
    raw = simulate_sweep(desc, F_BAND, fx, n_segments=NSEG).sweep.s11
    freq = skrf.Frequency.from_f(F_BAND, unit="hz")

    def net(s):
        return skrf.Network(frequency=freq, s=np.asarray(s, complex).reshape(-1, 1, 1), z0=50)

    ideals = [net(np.full(F_BAND.size, g)) for g in (-1.0, 1.0, 0.0)]
    measured = [net(apply_error_box(i.s[:, 0, 0], e00, e11, trk)) for i in ideals]
    cal = OnePort(measured=measured, ideals=ideals)  # scikit-rf three-term one-port
    cal.run()
    assert_allclose(cal.apply_cal(net(raw)).s[:, 0, 0], ref.sweep.s11, rtol=0, atol=1e-12)


def test_noise_is_seeded_with_the_stated_sigma():
    # cable-open hides the antenna: no MoM, so many points are cheap
    desc = dipole(cable="RG58:5m")
    f = np.linspace(1e6, 500e6, 4000)
    quiet = simulate_sweep(desc, f, BenchEffects.clean(), fault="cable-open").sweep.s11
    fx = BenchEffects(noise_sigma=0.02)
    a = simulate_sweep(desc, f, fx, rng=5, fault="cable-open").sweep.s11
    b = simulate_sweep(desc, f, fx, rng=np.random.default_rng(5), fault="cable-open").sweep.s11
    c = simulate_sweep(desc, f, fx, rng=6, fault="cable-open").sweep.s11
    assert_allclose(a, b, rtol=0, atol=0)
    assert not np.allclose(a, c)
    d = a - quiet
    assert_allclose([np.std(d.real), np.std(d.imag)], 0.02, rtol=0.10)
    assert abs(np.mean(d.real)) < 0.002 and abs(np.mean(d.imag)) < 0.002
    assert_allclose(add_noise(d, 0.0, np.random.default_rng(0)), d)


def test_bench_effects_validation_and_presets():
    assert BenchEffects.typical(3) == BenchEffects.typical(np.random.default_rng(3))
    assert BenchEffects.typical(3) != BenchEffects.typical(4)
    assert BenchEffects.clean().noise_sigma == 0.0
    with pytest.raises(InputError):
        BenchEffects(noise_sigma=-1.0)
    with pytest.raises(InputError):
        BenchEffects(cal_source_match=1.2)
    with pytest.raises(InputError):
        BenchEffects(balun_line_vf=1.5)
    with pytest.raises(InputError):
        Fault("melted")


# ---- insulation ------------------------------------------------------------------

def test_insulation_factor_bare_and_pvc_range():
    f = np.linspace(140e6, 150e6, 3)
    assert_allclose(insulation_length_factor(f, 0.99, 0.75e-3, 0.0, 3.5), 1.0, rtol=0, atol=0)
    assert insulation_length_factor(146e6, 0.99, 0.75e-3, 0.5e-3, 1.0) == 1.0  # eps_r 1 is air
    # PVC (eps_r 3..4, from memory) 0.7 mm thick (the PVC insulation of 1.5 mm2 building
    # wire, IEC 60227-3, from memory) on 1.5 mm wire, 2 m and 40 m band dipoles:
    # insulated wire resonates 2-5 % lower than bare (common practice, no source).
    for length_m in (0.99, 20.0):
        for eps in (3.0, 4.0):
            fac = insulation_length_factor(146e6, length_m, 0.75e-3, 0.7e-3, eps)
            assert 1.02 <= fac <= 1.05, (length_m, eps, fac)
    with pytest.raises(InputError):
        insulation_length_factor(146e6, 0.99, 0.75e-3, 0.5e-3, 0.5)


def test_insulated_dipole_resonates_lower():
    bare = dipole(diameter="1.5mm")
    pvc = dipole(diameter="1.5mm", insulation="0.5mm:3.5")
    fx = BenchEffects.clean()
    t_bare = simulate_sweep(bare, F_BAND, fx, n_segments=NSEG).truth
    t_pvc = simulate_sweep(pvc, F_BAND, fx, n_segments=NSEG).truth
    fac = t_pvc["insulation_factor"]
    assert_allclose(t_pvc["electrical_length_m"], fac * t_pvc["physical_total_length_m"])
    # resonance scales about as 1 / electrical length (L/a changes by a few %: 1 % tolerance)
    assert_allclose(t_bare["f_res_terminals_hz"] / t_pvc["f_res_terminals_hz"], fac, rtol=0.01)


# ---- faults ----------------------------------------------------------------------

def test_shorted_feed_reads_near_zero_ohm():
    sim = simulate_sweep(dipole(), F_BAND, BenchEffects.clean(), fault="shorted-feed",
                         n_segments=NSEG)
    # a short across the terminals reads |Z| of an ohm or so (common practice, no source)
    assert np.all(np.abs(sim.sweep.z_ohm) < 2.0)


def test_open_element_has_no_resonance_in_band_and_broken_monopole_doubles():
    sim = simulate_sweep(dipole(), F_BAND, BenchEffects.clean(), fault="open-element",
                         n_segments=NSEG)
    z = sim.sweep.z_ohm
    assert not features.reactance_crossings(F_BAND, z)
    assert np.all(z.imag < 0)  # capacitive throughout
    # a quarter-wave monopole broken to half its height resonates near twice the
    # frequency (resonant length ~ a quarter wavelength, Balanis 4th ed. section 4.7.4)
    mono = antenna.description_from_options(require_target=False, form="monopole",
                                            arm="250mm", diameter="2mm")
    f = np.linspace(200e6, 700e6, 51)
    ok = simulate_sweep(mono, f, BenchEffects.clean(), n_segments=NSEG).truth
    f2 = np.linspace(400e6, 1400e6, 51)
    broken = simulate_sweep(mono, f2, BenchEffects.clean(), fault=Fault("open-element", size=0.5),
                            n_segments=NSEG).truth
    assert_allclose(broken["f_res_terminals_hz"] / ok["f_res_terminals_hz"], 2.0, rtol=0.10)


def test_common_mode_ripple_period():
    desc = dipole(cable="RG58:20m")
    f = np.linspace(100e6, 200e6, 601)
    sim = simulate_sweep(desc, f, BenchEffects.clean(), fault="common-mode", n_segments=NSEG)
    g = remove_cable(sim.sweep, parse_cable("RG58:20m")).s11
    m = np.abs(g)
    resid = m - np.polyval(np.polyfit(f - f.mean(), m, 5), f - f.mean())
    n_fft = 64 * f.size
    spec = np.abs(np.fft.rfft(resid * np.hanning(f.size), n_fft))
    q = np.fft.rfftfreq(n_fft, d=f[1] - f[0])  # cycles per Hz
    k = np.argmax(spec[q > 1 / 50e6] ) + np.count_nonzero(q <= 1 / 50e6)
    period_hz = 1.0 / q[k]
    # a shunt stub repeats every half wavelength: period c0 VF / (2 L)
    # (Pozar 4th ed. section 2.3: Zin periodic in beta l with period pi)
    expected = CM_STUB_VF * C0_M_PER_S / (2 * 20.0)
    assert_allclose(period_hz, expected, rtol=0.05)
    assert_allclose(sim.truth["common_mode_period_hz"], expected, rtol=1e-12)


def test_wrong_cable_leaves_the_phase_slope_of_the_extra_length():
    desc = dipole(cable="RG58:5m")
    sim = simulate_sweep(desc, F_BAND, BenchEffects.clean(), fault="wrong-cable", n_segments=NSEG)
    extra_m = sim.truth["cable_length_error_m"]
    assert_allclose(extra_m, 0.30)
    g = remove_cable(sim.sweep, parse_cable("RG58:5m")).s11
    g_true = gamma_pozar(simulate_antenna_z(F_BAND, desc, n_segments=NSEG))
    phase = np.unwrap(np.angle(g / g_true))
    slope = np.polyfit(F_BAND, phase, 1)[0]
    # Gamma_in = Gamma_L exp(-2 j beta l) (Pozar 4th ed. section 2.3): -4 pi dL / (vf c0) rad/Hz
    assert_allclose(slope, -4 * np.pi * extra_m / (0.66 * C0_M_PER_S), rtol=0.02)


def test_cal_fault_gives_gain_and_a_step():
    sim = simulate_sweep(dipole(), F_BAND, BenchEffects.clean(), fault="cal-fault",
                         n_segments=NSEG)
    s = sim.sweep.s11
    assert np.any(np.abs(s) > 1.0)  # a passive load never exceeds 1 (fact of the trade)
    jumps = np.abs(np.diff(s))
    i = int(np.argmax(jumps))
    assert_allclose(F_BAND[i + 1], sim.truth["cal_step_hz"])
    assert jumps[i] > 5 * np.median(jumps)


def test_low_signal_noise_level(clean_bare):
    desc, ref = clean_bare
    sim = simulate_sweep(desc, F_BAND, BenchEffects.clean(), fault="low-signal", rng=1,
                         n_segments=NSEG)
    d = sim.sweep.s11 - ref.sweep.s11
    # 61 points, two components: sample std within 15 % of 0.07 (chi-square spread ~9 %)
    assert_allclose(np.std(np.concatenate([d.real, d.imag])), 0.07, rtol=0.15)


@pytest.mark.parametrize("name, sign", [("cable-open", 1.0), ("cable-short", -1.0)])
def test_cable_cut_is_an_open_or_short_at_the_distance(name, sign):
    desc = dipole(cable="RG58:10m")
    f = np.linspace(2e6, 400e6, 400)
    sim = simulate_sweep(desc, f, BenchEffects.clean(), fault=Fault(name, distance_m=3.2))
    cut = dataclasses.replace(parse_cable("RG58:10m"), length_m=3.2)
    # lossy line ending in an open (short): Gamma_in = +-exp(-2 gamma l) (Pozar 4th ed. 2.3, 2.7)
    assert_allclose(sim.sweep.s11, sign * np.exp(-2 * cable_gamma_l(cut, f)), rtol=0, atol=1e-9)
    res = tdr.locate_reflections(sim.sweep, 0.66)
    top = max(res.peaks, key=lambda p: p.gamma)
    assert abs(top.distance_m - 3.2) < max(res.range_resolution_m / 4, 0.05)
    with pytest.raises(InputError):
        simulate_sweep(desc, f, BenchEffects.clean(), fault=Fault(name, distance_m=12.0))
    with pytest.raises(InputError):
        simulate_sweep(dipole(), f, BenchEffects.clean(), fault=name)


def test_detuned_shifts_resonance_by_a_few_percent(clean_bare):
    desc, ref = clean_bare
    sim = simulate_sweep(desc, F_BAND, BenchEffects.clean(), fault="detuned", n_segments=NSEG)
    f0 = features.reactance_crossings(F_BAND, ref.sweep.z_ohm)[0]
    f1 = features.reactance_crossings(F_BAND, sim.sweep.z_ohm)[0]
    shift = 1 - f1.f_hz / f0.f_hz
    assert 0.02 < shift < 0.04
    assert f1.r_ohm - f0.r_ohm > 1.0


def test_typical_bench_moves_the_trace_but_keeps_the_truth(clean_bare):
    desc, ref = clean_bare
    sim = simulate_sweep(desc, F_BAND, BenchEffects.typical(2), rng=3, n_segments=NSEG)
    assert np.max(np.abs(sim.sweep.s11 - ref.sweep.s11)) > 0.01
    # A shunt C across a series resonance moves X = 0 up, to where the wire's own
    # susceptance cancels w C: Im(1 / Z_series) = -w C (parallel admittances add); a
    # 0.5-2 pF feed C moves it by well under 2 %.
    t = sim.truth
    fx = BenchEffects.typical(2)
    f_res = t["f_res_terminals_hz"]
    assert 1.0 < f_res / ref.truth["f_res_terminals_hz"] < 1.02
    z_series = simulate_antenna_z([f_res], desc, joint_loss_ohm=fx.joint_loss_ohm, n_segments=NSEG)
    wc = 2 * np.pi * f_res * fx.feed_c_f
    assert_allclose(np.imag(1 / z_series[0]), -wc, rtol=1e-3)
    assert_allclose([t["feed_c_f"], t["joint_loss_ohm"]], [fx.feed_c_f, fx.joint_loss_ohm])


# ---- command line ------------------------------------------------------------------

def test_cli_writes_a_file_inspect_reads(tmp_path, capsys):
    toml = tmp_path / "ant.toml"
    toml.write_text('[antenna]\nform = "dipole"\narm_length = "492 mm"\ndiameter = "2.0 mm"\n'
                    'feed_gap = "10 mm"\n[target]\nfrequency = "146 MHz"\n'
                    '[feed]\nbalun = "1:1"\ncable = "RG58:5m"\n')
    out = tmp_path / "demo.s1p"
    rc = main(["simulate", "--antenna", str(toml), "--span", "130MHz:160MHz:41",
               "--out", str(out), "--effects", "clean", "--json"])
    assert rc == 0
    truth = json.loads(capsys.readouterr().out)
    assert truth["label"] == LABEL and truth["truth"]["label"] == LABEL
    assert LABEL in out.read_text().splitlines()[0]
    rc = main(["inspect", str(out), "--cable", "RG58:5m", "--json"])
    assert rc == 0
    seen = json.loads(capsys.readouterr().out)
    assert seen["points"] == 41
    x0 = [c for c in seen["reactance_zero_crossings"] if c["kind"] == "series"][0]
    # clean bench: the only difference is linear interpolation between 750 kHz steps
    assert_allclose(x0["f_hz"], truth["truth"]["f_res_terminals_hz"], rtol=2e-3)
    rc = main(["simulate", "--antenna", str(toml), "--span", "130MHz:160MHz:41", "--out",
               str(tmp_path / "x.s1p"), "--fault", "cable-open", "--fault-distance", "9m"])
    assert rc == 2  # beyond the end of the 5 m cable
    rc = main(["simulate", "--antenna", str(toml), "--span", "160MHz:130MHz", "--out",
               str(tmp_path / "x.s1p")])
    assert rc == 2
    rc = main(["simulate", "--antenna", str(toml), "--span", "130MHz:160MHz:21", "--out",
               str(tmp_path / "t.s1p"), "--format", "DB"])
    assert rc == 0
    text = capsys.readouterr().out
    assert "SIMULATED" in text and "# MHz S DB R 50" in (tmp_path / "t.s1p").read_text()


def test_cli_span_far_from_the_antenna_is_refused(tmp_path, capsys):
    from fieldcheck.cli import main
    ant = Path(__file__).parent / "data" / "antenna" / "good_dipole.toml"
    code = main(["simulate", "--antenna", str(ant), "--span", "1:2", "--out", str(tmp_path / "x.s1p")])
    assert code == 2
    assert "check the units" in capsys.readouterr().err
