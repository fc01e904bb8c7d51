"""``fieldcheck inspect`` end to end: the bad-file corpus, JSON output, reference-plane options."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pytest
import skrf

from fieldcheck.cli import main

DATA = Path(__file__).parent / "data"
BAD = DATA / "bad"


def _manifest():
    with open(BAD / "MANIFEST.csv", newline="") as fh:
        return list(csv.DictReader(fh))


@pytest.mark.parametrize("row", _manifest(), ids=lambda r: r["file"])
def test_every_bad_file_exits_2_with_one_line_naming_file_and_line(row, capsys):
    path = BAD / row["file"]
    args = ["inspect", str(path)] + row["cli_args"].split()
    code = main(args)
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert len(err.splitlines()) == 1, err
    expected_where = f"{path}:{row['line']}:" if row["line"] else f"{path}:"
    assert expected_where in err
    assert row["substring"].lower() in err.lower()


def _write_s1p(tmp_path, f_hz, s11, name="dut.s1p"):
    # scikit-rf's own writer is the independent producer of the file.
    net = skrf.Network(frequency=skrf.Frequency.from_f(f_hz, unit="hz"), s=s11.reshape(-1, 1, 1), z0=50)
    net.write_touchstone(str(tmp_path / name[:-4]), form="ri")
    return tmp_path / name


def _series_rlc_z(f_hz, r_ohm=60.0, f0_hz=100e6, q=8.0):
    # Series RLC: X = 0 at f0 = 1/(2 pi sqrt(LC)) (Pozar, Microwave Engineering, 4th ed., section 6.1).
    w, w0 = 2 * np.pi * f_hz, 2 * np.pi * f0_hz
    l_h = q * r_ohm / w0
    c_f = 1 / (w0 ** 2 * l_h)
    return r_ohm + 1j * (w * l_h - 1 / (w * c_f))


def test_json_reports_resonance_best_match_and_bandwidth(tmp_path, capsys):
    f = np.linspace(80e6, 120e6, 401)
    z = _series_rlc_z(f)
    path = _write_s1p(tmp_path, f, (z - 50) / (z + 50))
    assert main(["inspect", str(path), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["points"] == 401
    xs = out["reactance_zero_crossings"]
    assert len(xs) == 1 and xs[0]["kind"] == "series"
    np.testing.assert_allclose(xs[0]["f_hz"], 100e6, rtol=1e-5)
    np.testing.assert_allclose(xs[0]["r_ohm"], 60.0, rtol=1e-3)
    # Best match of a series RLC with R > z0 is at X = 0: |G| = 10/110, VSWR = 1.2.
    np.testing.assert_allclose(out["best_match"]["vswr"], 1.2, rtol=1e-3)
    band = out["vswr_bands"][0]
    # VSWR = 2 edges of a series RLC: |G|^2 = 1/9 -> solve (R-50)^2 + X^2 = (R+50)^2 X^2... computed here.
    x_edge = np.sqrt(((60 + 50) ** 2 - 9 * (60 - 50) ** 2) / 8.0)
    l_h = 8.0 * 60 / (2 * np.pi * 100e6)
    # X(f) = w L - 1/(w C) = x_edge -> quadratic in w.
    c_f = 1 / ((2 * np.pi * 100e6) ** 2 * l_h)
    w_hi = (x_edge + np.sqrt(x_edge**2 + 4 * l_h / c_f)) / (2 * l_h)
    np.testing.assert_allclose(band["f_hi_hz"], w_hi / (2 * np.pi), rtol=2e-4)


def test_cable_removal_brings_the_resonance_back(tmp_path, capsys):
    f = np.linspace(80e6, 120e6, 201)
    z = _series_rlc_z(f)
    # A 3 m lossless 50-ohm line with VF 0.66 in front, built with scikit-rf's media.
    freq = skrf.Frequency.from_f(f, unit="hz")
    media = skrf.media.DefinedGammaZ0(freq, z0=50, gamma=1j * 2 * np.pi * f / (0.66 * 299792458.0))
    load = skrf.Network(frequency=freq, s=((z - 50) / (z + 50)).reshape(-1, 1, 1), z0=50)
    measured = media.line(3.0, "m") ** load
    path = _write_s1p(tmp_path, f, measured.s[:, 0, 0])
    assert main(["inspect", str(path), "--json", "--cable", "custom:3m", "--cable-vf", "0.66"]) == 0
    out = json.loads(capsys.readouterr().out)
    series = [c for c in out["reactance_zero_crossings"] if c["kind"] == "series"]
    assert len(series) == 1
    np.testing.assert_allclose(series[0]["f_hz"], 100e6, rtol=1e-5)


def test_text_output_and_bad_options(tmp_path, capsys):
    f = np.linspace(80e6, 120e6, 101)
    z = _series_rlc_z(f)
    path = _write_s1p(tmp_path, f, (z - 50) / (z + 50))
    assert main(["inspect", str(path)]) == 0
    text = capsys.readouterr().out
    assert "series resonance" in text and "MHz" in text
    assert main(["inspect", str(path), "--vswr-limit", "0.5"]) == 2
    assert main(["inspect", str(path), "--cable", "nosuch:3m"]) == 2
    assert main(["inspect", str(tmp_path / "missing.s1p")]) == 2


def test_list_cables_exits_0(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["inspect", "--list-cables"])
    assert exc.value.code == 0
    assert "RG58" in capsys.readouterr().out


def test_noise_chatter_at_a_crossing_counts_once():
    from fieldcheck.features import reactance_crossings
    f = np.linspace(1e6, 2e6, 101)
    x = np.linspace(-50, 50, 101)
    x[49:52] = [0.3, -0.2, 0.4]  # noise straddling zero near the true crossing
    z = 60 + 1j * x
    xs = reactance_crossings(f, z)
    assert len(xs) == 1 and xs[0].kind == "series"
    assert abs(xs[0].f_hz - 1.5e6) < 3 * (f[1] - f[0])


def test_inspect_plot_writes_a_png(tmp_path, capsys):
    f = np.linspace(80e6, 120e6, 101)
    z = _series_rlc_z(f)
    path = _write_s1p(tmp_path, f, (z - 50) / (z + 50))
    png = tmp_path / "sweep.png"
    assert main(["inspect", str(path), "--plot", str(png)]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG spec, section 5.2)
    assert main(["inspect", str(path), "--plot", str(tmp_path / "missing" / "x.png")]) == 2
