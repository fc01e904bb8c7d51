"""The ``predict`` subcommand, run through ``fieldcheck.cli.main``."""

import csv
import json

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldcheck.cli import main
from fieldcheck.constants import C0_M_PER_S
from fieldcheck.sweep import gamma_from_impedance


def _run_json(capsys, *argv):
    code = main(["predict", *argv, "--json"])
    out = capsys.readouterr().out
    assert code == 0
    return json.loads(out)


def test_two_metre_dipole(capsys, tmp_path):
    path = tmp_path / "table.csv"
    r = _run_json(capsys, "--length", "985mm", "--diameter", "2mm", "--freq", "146MHz",
                  "--span", "140MHz:152MHz:13", "--csv", str(path))
    for key in ("resonant_frequency_hz", "r_ohm", "x_ohm", "vswr", "return_loss_db",
                "directivity_dbi", "radiation_efficiency", "gain_dbi", "realized_gain_dbi",
                "hpbw_deg", "pattern_cut", "table"):
        assert key in r
    # Common practice, no source: a thin dipole's first resonance falls at about
    # 0.47..0.49 wavelength of its length, with R near 70 ohm.
    l_wl = 0.985 * r["resonant_frequency_hz"] / C0_M_PER_S
    assert 0.46 < l_wl < 0.495
    # Derived check (tests/test_loss.py formulas): 2 mm copper at 146 MHz is > 99 % efficient.
    assert r["radiation_efficiency"] > 0.99
    # Balanis 4th ed. eq. 4-91: 2.15 dBi at half a wavelength; this one is a little shorter.
    assert 2.0 < r["directivity_dbi"] <= 2.151
    assert_allclose(r["gain_dbi"], r["directivity_dbi"] + 10 * np.log10(r["radiation_efficiency"]),
                     atol=1e-9)
    # Realized gain = (1 - |Gamma|^2) G (IEEE Std 145-2013); Gamma per Pozar 4th ed. eq. 2.35.
    g = gamma_from_impedance(complex(r["r_ohm"], r["x_ohm"]), 50.0)
    assert_allclose(r["realized_gain_dbi"], r["gain_dbi"] + 10 * np.log10(1 - abs(g) ** 2), atol=1e-9)
    assert_allclose(r["vswr"], (1 + abs(g)) / (1 - abs(g)), rtol=1e-9)
    cut = r["pattern_cut"]
    assert cut["theta_deg"] == list(np.arange(0, 181, 10.0))
    assert cut["directivity_dbi"][0] is None and cut["directivity_dbi"][-1] is None
    assert_allclose(cut["directivity_dbi"][9], r["directivity_dbi"], atol=1e-9)
    with open(path, newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == ["f_hz", "r_ohm", "x_ohm", "vswr", "return_loss_db"]
    assert len(rows) == 14
    assert_allclose([float(x) for x in rows[7][:3]],
                    [146e6, r["table"]["r_ohm"][6], r["table"]["x_ohm"][6]], rtol=1e-12)


def test_monopole_is_half_the_dipole_and_3db_more_directive(capsys):
    # Balanis 4th ed. section 4.7.4: monopole impedance is half the image dipole's
    # and its directivity twice (+3.01 dB).
    mono = _run_json(capsys, "--length", "0.5m", "--diameter", "4mm", "--install", "monopole",
                     "--freq", "140MHz")
    dip = _run_json(capsys, "--length", "1.0m", "--diameter", "4mm", "--freq", "140MHz")
    assert_allclose(mono["r_ohm"], dip["r_ohm"] / 2, rtol=1e-6)
    assert_allclose(mono["x_ohm"], dip["x_ohm"] / 2, rtol=1e-6)
    assert_allclose(mono["directivity_dbi"] - dip["directivity_dbi"], 3.0103, atol=1e-4)
    assert_allclose(mono["resonant_frequency_hz"], dip["resonant_frequency_hz"], rtol=1e-6)


def test_horizontal_and_text_output(capsys):
    code = main(["predict", "--length", "10m", "--diameter", "2mm", "--install", "horizontal",
                 "--height", "10m", "--material", "steel"])
    out = capsys.readouterr().out
    assert code == 0
    for word in ("resonance", "VSWR", "return loss", "directivity", "efficiency",
                 "realized gain", "beamwidth", "dBi", "permeability"):
        assert word in out


@pytest.mark.parametrize("argv", [
    ["--length", "985mm", "--diameter", "2mm", "--material", "unobtainium"],
    ["--length", "985mm", "--diameter", "2mm", "--install", "horizontal"],
    ["--length", "985mm", "--diameter", "2mm", "--height", "5m"],
    ["--length", "985mm", "--diameter", "2mm", "--span", "150MHz:140MHz"],
    ["--length", "985mm", "--diameter", "2mm", "--z0", "-50"],
    ["--length", "985mm", "--diameter", "200mm"],
    ["--length", "long", "--diameter", "2mm"],
    ["--length", "985mm", "--diameter", "2mm", "--freq", "0Hz"],
    ["--length", "985mm"],
])
def test_bad_input_exits_2_with_one_line(capsys, argv):
    # argparse usage errors leave by SystemExit(2); our InputError by return code 2.
    try:
        code = main(["predict", *argv])
    except SystemExit as exc:
        code = exc.code
    err = capsys.readouterr().err
    assert code == 2
    assert err.count("\n") == 1 and "error" in err
