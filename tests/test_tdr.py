"""Tests of fieldcheck.tdr (cable-fault location) and the ``locate`` subcommand.

Reference data are transmission-line theory in closed form (Pozar, Microwave
Engineering, 4th ed.), window figures from F. J. Harris, "On the use of windows
for harmonic analysis with the discrete Fourier transform", Proc. IEEE 66(1),
1978, Table 1, and scikit-rf's own time-domain transform.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldcheck import tdr
from fieldcheck.constants import C0_M_PER_S
from fieldcheck.errors import InputError
from fieldcheck.sweep import Sweep, gamma_from_impedance

VF = 0.66  # solid-PE coax, e.g. RG58 (typical published value, from memory)


def line_gamma(f_hz, length_m, gamma_load, vf=VF, loss_np_per_m=None):
    """S11 at the input of a matched line ending in ``gamma_load``.

    Pozar, Microwave Engineering, 4th ed., section 2.3 (eq. 2.42 with a lossy
    line, section 2.7): Gamma_in = Gamma_L exp(-2 gamma l), gamma = alpha + j beta,
    beta = 2 pi f / (VF c0).
    """
    beta = 2 * np.pi * f_hz / (vf * C0_M_PER_S)
    alpha = 0.0 if loss_np_per_m is None else loss_np_per_m
    return gamma_load * np.exp(-2 * (alpha + 1j * beta) * length_m)


def zin(z_load, z0_ohm, beta_l):
    """Input impedance of a lossless line (Pozar, 4th ed., eq. 2.44)."""
    t = np.tan(beta_l)
    return z0_ohm * (z_load + 1j * z0_ohm * t) / (z0_ohm + 1j * z_load * t)


def bandpass_grid(n=401, f0=10e6, f1=510e6):
    return np.linspace(f0, f1, n)


# ---- single open or short end ------------------------------------------------------
@pytest.mark.parametrize("gamma_load", [1.0, -1.0])  # open +1, short -1 (Pozar, sec. 2.3)
@pytest.mark.parametrize("window", ["kaiser", "hann"])
@pytest.mark.parametrize("length_m", [3.7, 12.3, 41.0])
def test_open_or_shorted_line_located(gamma_load, window, length_m):
    f = bandpass_grid()
    res = tdr.locate_reflections(Sweep(f, line_gamma(f, length_m, gamma_load)), VF,
                                 window=window)
    assert len(res.peaks) == 1
    pk = res.peaks[0]
    # Brief's tolerance: within the larger of 5 % or the range resolution.
    assert abs(pk.distance_m - length_m) <= max(0.05 * length_m, res.range_resolution_m)
    # Much tighter in practice with quadratic peak interpolation: 1 mm.
    assert_allclose(pk.distance_m, length_m, atol=1e-3)
    # Round trip time 2 l / (VF c0).
    assert_allclose(pk.time_s, 2 * length_m / (VF * C0_M_PER_S), rtol=1e-4)
    # |Gamma| = 1 after window/padding correction; 1 % allows the residual
    # scallop error of the quadratic interpolation at padding 8.
    assert_allclose(pk.gamma, 1.0, rtol=0.01)
    assert_allclose(pk.gamma_db, 0.0, atol=0.09)


def test_partial_mismatch_amplitude():
    """A 50 ohm line ending in 100 ohm: Gamma_L = 1/3 (Pozar, 4th ed., eq. 2.35)."""
    f = bandpass_grid()
    g_l = gamma_from_impedance(100.0, 50.0)
    res = tdr.locate_reflections(Sweep(f, line_gamma(f, 8.0, g_l)), VF)
    assert len(res.peaks) == 1
    assert_allclose(res.peaks[0].gamma, 1.0 / 3.0, rtol=0.01)
    assert_allclose(res.peaks[0].distance_m, 8.0, atol=1e-3)


def test_lossy_rg58_end_restored_by_loss_correction():
    from fieldcheck.cables import CABLE_TYPES  # RG58: 20 dB/100 m at 150 MHz (its source note)

    rg58 = CABLE_TYPES["RG58"]
    f = np.linspace(10e6, 210e6, 401)
    length_m = 20.0
    loss_db_m = rg58.loss_db_per_100m / 100 * np.sqrt(f / rg58.loss_ref_hz)
    # dB -> neper: 1 Np = 20 / ln 10 dB (definition of the neper)
    s = line_gamma(f, length_m, 1.0, vf=rg58.velocity_factor,
                   loss_np_per_m=loss_db_m * math.log(10) / 20)
    sw = Sweep(f, s)
    raw = tdr.locate_reflections(sw, rg58.velocity_factor)
    cor = tdr.locate_reflections(sw, rg58.velocity_factor, loss_db_per_100m=rg58.loss_db_per_100m,
                                 loss_ref_hz=rg58.loss_ref_hz)
    # Uncorrected: the window-weighted mean of the two-way attenuation
    # exp(-2 alpha(f) l) over the band (the peak value of the windowed sum).
    w = tdr.make_window("kaiser", f.size, 6.0)
    expected_raw = np.sum(w * np.abs(s)) / np.sum(w)
    assert_allclose(raw.peaks[0].gamma, expected_raw, rtol=0.005)
    assert raw.peaks[0].gamma < 0.6  # the loss is really there (about -5 dB)
    # Corrected at the centre frequency: |Gamma| of the open end back to ~1;
    # 5 % covers the sqrt(f) band-averaging bias documented in locate_reflections.
    assert_allclose(cor.peaks[0].gamma, 1.0, rtol=0.05)
    assert_allclose(cor.peaks[0].distance_m, length_m, atol=0.01)
    assert any("two-way cable loss" in n for n in cor.notes)


# ---- two reflections ---------------------------------------------------------------
def _stepped_line(f, l1_m, l2_m, z1_ohm=75.0, z0_ohm=50.0):
    """50 ohm line to l1, then a z1 section to l2 ending open (Pozar eqs. 2.44, 2.35)."""
    beta = 2 * np.pi * f / (VF * C0_M_PER_S)
    z_open = -1j * z1_ohm / np.tan(beta * (l2_m - l1_m))  # open stub input, eq. 2.45
    return gamma_from_impedance(zin(z_open, z0_ohm, beta * l1_m), z0_ohm)


def test_mismatch_midway_and_open_end_both_found():
    f = np.linspace(1e6, 501e6, 501)
    res = tdr.locate_reflections(Sweep(f, _stepped_line(f, 5.0, 12.0)), VF)
    g1 = (75 - 50) / (75 + 50)  # step 50 -> 75 ohm, Pozar eq. 2.35
    # Open end seen through the step twice: (1 + g1)(1 - g1) = 1 - g1^2; the
    # first re-reflection arrives one section length later with -g1 (1 - g1^2).
    expected = [(5.0, g1), (12.0, 1 - g1 ** 2), (19.0, g1 * (1 - g1 ** 2))]
    assert len(res.peaks) >= 3
    for (d, g), pk in zip(expected, res.peaks):
        assert_allclose(pk.distance_m, d, atol=0.01)
        assert_allclose(pk.gamma, g, rtol=0.01)


def test_two_reflections_resolved_two_cells_apart():
    f = np.linspace(10e6, 510e6, 401)
    res0 = tdr.locate_reflections(Sweep(f, line_gamma(f, 5.0, 0.3)), VF)
    d2 = 5.0 + 2.0 * res0.range_resolution_m
    s = line_gamma(f, 5.0, 0.3) + line_gamma(f, d2, 0.3)  # weak, first-order sum
    res = tdr.locate_reflections(Sweep(f, s), VF)
    assert len(res.peaks) == 2
    assert_allclose([p.distance_m for p in res.peaks], [5.0, d2], atol=0.05)


def test_matches_scikit_rf_impulse_response_position():
    """Peak positions agree with skrf.Network.impulse_response on the same data."""
    import skrf

    f = np.linspace(1e6, 501e6, 501)
    s = _stepped_line(f, 5.0, 12.0)
    ours = tdr.locate_reflections(Sweep(f, s), VF, window="kaiser", kaiser_beta=6.0)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s)
    t, ir = net.impulse_response(window=("kaiser", 6.0), pad=7 * f.size, bandpass=True)
    mag = np.abs(ir)
    dt = t[1] - t[0]
    for pk in ours.peaks[:2]:
        near = np.abs(t - pk.time_s) < 10 * 1e-9  # search +/- 10 ns around our peak
        t_skrf = t[near][np.argmax(mag[near])]
        assert abs(t_skrf - pk.time_s) <= dt  # within one skrf time sample


# ---- window figures and axes ------------------------------------------------------
@pytest.mark.parametrize(
    "name,beta,bw6_bins,cg",
    [
        ("rect", 0.0, 1.21, 1.00),  # Harris 1978 Table 1, rectangle (from memory)
        ("hann", 0.0, 2.00, 0.50),  # Harris 1978 Table 1, Hanning alpha=2 (from memory)
        ("kaiser", 2 * np.pi, 1.99, 0.49),  # Kaiser-Bessel alpha=2, beta=pi*alpha (from memory)
    ],
)
def test_window_figures_match_harris_table(name, beta, bw6_bins, cg):
    w = tdr.make_window(name, 1024, beta)
    # Table values are given to 2-3 digits: compare to 1 %, gains to 0.01.
    assert_allclose(tdr.mainlobe_width_bins(w), bw6_bins, rtol=0.01)
    assert_allclose(tdr.coherent_gain(w), cg, atol=0.01)


def test_alias_free_range_folds_a_long_cable_back():
    """A reflection beyond c VF / (2 step) appears at (l - alias range): DFT periodicity."""
    f = np.linspace(10e6, 210e6, 201)  # 1 MHz step
    alias_m = C0_M_PER_S * VF / (2 * 1e6)
    length_m = alias_m + 20.0
    res = tdr.locate_reflections(Sweep(f, line_gamma(f, length_m, 1.0)), VF,
                                 cable_length_m=length_m)
    assert_allclose(res.alias_free_range_m, alias_m, rtol=1e-9)
    assert_allclose(res.peaks[0].distance_m, 20.0, atol=0.01)
    assert any("alias-free range" in n for n in res.notes)
    quiet = tdr.locate_reflections(Sweep(f, line_gamma(f, 20.0, 1.0)), VF, cable_length_m=25.0)
    assert not any("alias-free range" in n for n in quiet.notes)


def test_noisy_sweep_gives_one_clean_peak():
    rng = np.random.default_rng(7)
    f = bandpass_grid()
    noise = 0.01 * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
    res = tdr.locate_reflections(Sweep(f, line_gamma(f, 15.0, -1.0) + noise), VF)
    assert len(res.peaks) == 1
    # Noise 0.01 per point averages down by ~sqrt(N): 2 % on |Gamma| and 1 cm are generous.
    assert_allclose(res.peaks[0].gamma, 1.0, rtol=0.02)
    assert_allclose(res.peaks[0].distance_m, 15.0, atol=0.01)


# ---- refusals -------------------------------------------------------------------
def test_non_uniform_grid_refused():
    f = np.concatenate((np.linspace(10e6, 100e6, 50), np.linspace(102e6, 500e6, 100)))
    with pytest.raises(InputError, match="evenly stepped"):
        tdr.locate_reflections(Sweep(f, line_gamma(f, 5.0, 1.0), source="bench.s1p"), VF)


def test_lowpass_refused_when_sweep_does_not_start_near_dc():
    f = bandpass_grid()
    with pytest.raises(InputError, match="band-pass"):
        tdr.locate_reflections(Sweep(f, line_gamma(f, 5.0, 1.0)), VF, mode="lowpass")


def test_lowpass_refused_off_harmonic_grid():
    f = 0.5e6 + np.arange(400) * 1.25e6  # starts within a step of DC but f_n != n f_1
    with pytest.raises(InputError, match="harmonics"):
        tdr.locate_reflections(Sweep(f, line_gamma(f, 5.0, 1.0)), VF, mode="lowpass")


@pytest.mark.parametrize("bad", [dict(velocity_factor=1.2), dict(velocity_factor=0.0),
                                 dict(loss_db_per_100m=10.0), dict(threshold_db=3.0),
                                 dict(window="boxcar"), dict(mode="gated")])
def test_bad_options_refused(bad):
    f = bandpass_grid()
    kw = dict(velocity_factor=VF) | bad
    vf = kw.pop("velocity_factor")
    with pytest.raises(InputError):
        tdr.locate_reflections(Sweep(f, line_gamma(f, 5.0, 1.0)), vf, **kw)


# ---- low-pass on a harmonic grid -------------------------------------------------------
@pytest.mark.parametrize("gamma_load", [1.0, -1.0])
def test_lowpass_gives_sign_and_step(gamma_load):
    f = np.arange(1, 402) * 1.25e6  # f_n = n f_1, f_1 = one step
    res = tdr.locate_reflections(Sweep(f, line_gamma(f, 12.3, gamma_load)), VF, mode="lowpass")
    assert len(res.peaks) == 1
    pk = res.peaks[0]
    assert_allclose(pk.distance_m, 12.3, atol=1e-3)
    # Open end +1, short -1 (Pozar, 4th ed., sec. 2.3); 1 % as for band-pass.
    assert_allclose(pk.gamma, gamma_load, rtol=0.01)
    # Step response: 0 before the end, Gamma_L after it (within 1 %).
    d = res.distance_m
    assert_allclose(res.step_response[(d > 1.0) & (d < 11.0)], 0.0, atol=0.01)
    assert_allclose(res.step_response[(d > 14.0) & (d < 60.0)], gamma_load, atol=0.01)
    # Low-pass spans -f_max..f_max: twice the band-pass bandwidth, half the cell.
    assert_allclose(res.simple_resolution_m, C0_M_PER_S * VF / (2 * 2 * f[-1]), rtol=1e-9)


# ---- command line ----------------------------------------------------------------------
def _write_s1p(path, f_hz, s11):
    lines = ["! invented demo sweep for a CLI test", "# Hz S RI R 50"]
    lines += [f"{fh:.9e} {s.real:.9e} {s.imag:.9e}" for fh, s in zip(f_hz, s11)]
    path.write_text("\n".join(lines) + "\n")


def test_cli_locate_json(tmp_path, capsys):
    from fieldcheck.cli import main

    f = np.linspace(1e6, 501e6, 501)
    p = tmp_path / "feeder.s1p"
    _write_s1p(p, f, _stepped_line(f, 5.0, 12.0))
    assert main(["locate", str(p), "--vf", str(VF), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert_allclose([r["distance_m"] for r in out["reflections"][:2]], [5.0, 12.0], atol=0.01)
    assert out["mode"] == "bandpass"


def test_cli_locate_text_with_cable_type(tmp_path, capsys):
    from fieldcheck.cli import main

    f = np.linspace(1e6, 501e6, 501)
    p = tmp_path / "feeder.s1p"
    _write_s1p(p, f, line_gamma(f, 7.0, -1.0))
    assert main(["locate", str(p), "--cable-type", "RG58"]) == 0
    out = capsys.readouterr().out
    assert "alias-free" in out and "resolution" in out and "7.0" in out


def test_cli_locate_bad_input_exits_2(tmp_path, capsys):
    from fieldcheck.cli import main

    f = np.linspace(10e6, 500e6, 101)
    p = tmp_path / "feeder.s1p"
    _write_s1p(p, f, line_gamma(f, 7.0, -1.0))
    assert main(["locate", str(p)]) == 2  # no velocity factor
    assert main(["locate", str(p), "--vf", "0.66", "--mode", "lowpass"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2 and all(e.startswith("fieldcheck: error:") for e in err)
