"""Tests of the strict Touchstone reader (fieldcheck.touchstone) and the dispatcher.

Independent references:
- scikit-rf 2.2's writer (``Network.write_touchstone``) for round trips: a network
  with known S is written by scikit-rf and read back by us.
- Touchstone File Format Specification, IBIS Open Forum, version 2.0 (2009):
  section "Option Line" (defaults GHz, S, MA, R 50; DB = 20 log10 |S|),
  "[Two-Port Data Order]" (12_21 / 21_12), "1-port and 2-port Networks" (version 1
  two-port order S11 S21 S12 S22; Z and Y normalised by R in version 1),
  "Noise Parameter Data" (a two-port noise block starts at a frequency not above
  the last one).
- Pozar, Microwave Engineering, 4th ed., eq. 2.35: Gamma = (Z - Z0)/(Z + Z0).
"""

from __future__ import annotations

import csv
import os
import shlex
from pathlib import Path

import numpy as np
import pytest
import skrf
from numpy.testing import assert_allclose

from fieldcheck import touchstone
from fieldcheck.errors import InputError
from fieldcheck.importer import GAMMA_MAG_TOLERANCE, read_sweep
from fieldcheck.touchstone import load_touchstone, read_network, read_touchstone

DATA = Path(__file__).parent / "data"


def _random_s(rng, n_f, n_ports):
    """Passive-looking S: magnitudes below 0.9, any phase."""
    mag = rng.uniform(0.0, 0.9, size=(n_f, n_ports, n_ports))
    return mag * np.exp(1j * rng.uniform(-np.pi, np.pi, size=mag.shape))


def _write(net, path, **kw):
    text = net.write_touchstone(return_string=True, **kw)
    Path(path).write_text(text)
    return text


# ---- round trips against scikit-rf's writer --------------------------------------
@pytest.mark.parametrize("unit", ["Hz", "kHz", "MHz", "GHz"])
@pytest.mark.parametrize("form", ["ri", "ma", "db"])
@pytest.mark.parametrize("version", ["1.0", "2.0"])
@pytest.mark.parametrize("n_ports", [1, 2, 4])
@pytest.mark.parametrize("z0_ohm", [50.0, 75.0])
def test_round_trip_through_skrf_writer(tmp_path, unit, form, version, n_ports, z0_ohm):
    rng = np.random.default_rng(1000 * n_ports + int(z0_ohm))
    freq = skrf.Frequency(144.0e6, 148.0e6, 41, unit=unit)
    freq.unit = unit  # scikit-rf writes frequencies in this unit
    s = _random_s(rng, 41, n_ports)
    net = skrf.Network(frequency=freq, s=s, z0=z0_ohm, name="dut")
    path = tmp_path / f"dut.s{n_ports}p"
    _write(net, path, form=form, version=version)

    sweep = read_touchstone(path, port=n_ports if n_ports > 1 else None)
    # Tolerances: scikit-rf writes full repr precision; MA/DB go through
    # trig and log, so allow a few ulps.
    assert_allclose(sweep.f_hz, freq.f, rtol=1e-13)
    assert_allclose(sweep.s11, s[:, n_ports - 1, n_ports - 1], rtol=0, atol=1e-12)
    assert sweep.z0_ohm == z0_ohm
    assert sweep.is_uniform

    whole = read_network(path)
    assert_allclose(whole.s, s, rtol=0, atol=1e-12)
    assert_allclose(whole.z0.real, z0_ohm)


def test_five_port_rows_wrap_at_four_pairs(tmp_path):
    # Spec 2.0 "5-port and Above Networks": each matrix row starts a new line,
    # at most four pairs per line, so a 5-port row takes two lines.
    rng = np.random.default_rng(5)
    s = _random_s(rng, 7, 5)
    net = skrf.Network(frequency=skrf.Frequency(1, 7, 7, unit="MHz"), s=s, z0=50, name="x")
    text = _write(net, tmp_path / "x.s5p", form="ri")
    data_lines = [ln for ln in text.splitlines() if ln and ln[0] not in "!#"]
    assert len(data_lines) == 7 * 10
    assert_allclose(read_network(tmp_path / "x.s5p").s, s, atol=1e-12)
    assert_allclose(read_touchstone(tmp_path / "x.s5p", port=3).s11, s[:, 2, 2], atol=1e-12)


def test_crlf_and_latin1_comment(tmp_path):
    rng = np.random.default_rng(7)
    s = _random_s(rng, 11, 1)
    net = skrf.Network(frequency=skrf.Frequency(7.0, 7.2, 11, unit="MHz"), s=s, z0=50, name="d")
    text = "! Länge 985 mm\n" + net.write_touchstone(return_string=True, form="db")
    path = tmp_path / "d.s1p"
    path.write_bytes(text.replace("\n", "\r\n").encode("latin-1"))
    sweep = read_sweep(path)
    assert_allclose(sweep.s11, s[:, 0, 0], atol=1e-12)
    assert "Länge 985 mm" in sweep.comments
    assert any("Latin-1" in n for n in sweep.notes)
    # The same text in UTF-8 needs no note.
    path.write_bytes(text.replace("\n", "\r\n").encode("utf-8"))
    sweep = read_sweep(path)
    assert "Länge 985 mm" in sweep.comments
    assert not any("Latin-1" in n for n in sweep.notes)


# ---- the spec's data orders and conversions ------------------------------------
S2 = np.array([[0.11 + 0.12j, 0.13 + 0.14j], [0.21 + 0.22j, 0.23 + 0.24j]])  # [[S11, S12], [S21, S22]]


def _rows_2port(order):
    a, b = (S2[1, 0], S2[0, 1]) if order == "21_12" else (S2[0, 1], S2[1, 0])
    vals = [S2[0, 0], a, b, S2[1, 1]]
    return "".join(f"{f} " + " ".join(f"{v.real} {v.imag}" for v in vals) + "\n" for f in range(1, 6))


def test_v1_two_port_order_is_s11_s21_s12_s22(tmp_path):
    path = tmp_path / "a.s2p"
    path.write_text("# GHz S RI R 50\n" + _rows_2port("21_12"))
    assert_allclose(read_network(path).s, np.broadcast_to(S2, (5, 2, 2)))
    assert_allclose(read_touchstone(path, port=2).s11, S2[1, 1])


@pytest.mark.parametrize("order", ["12_21", "21_12"])
def test_v2_two_port_data_order(tmp_path, order):
    path = tmp_path / "a.ts"
    path.write_text("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n"
                    f"[Two-Port Data Order] {order}\n[Number of Frequencies] 5\n"
                    "[Reference] 50 75\n[Network Data]\n" + _rows_2port(order) + "[End]\n")
    net = read_network(path)
    assert_allclose(net.s, np.broadcast_to(S2, (5, 2, 2)))
    assert read_touchstone(path, port=2).z0_ohm == 75.0  # per-port [Reference]


def test_v1_z_one_port_is_normalised_by_r(tmp_path):
    # Spec 2.0 "Option Line": version 1 Z data are normalised to R; Pozar eq. 2.35.
    z_norm = np.array([0.8 - 0.5j, 0.9 - 0.2j, 1.0 + 0.0j, 1.2 + 0.3j, 1.5 + 0.6j])
    path = tmp_path / "z.s1p"
    path.write_text("# MHz Z RI R 75\n" + "".join(
        f"{140 + 2 * i} {z.real} {z.imag}\n" for i, z in enumerate(z_norm)))
    sweep = read_touchstone(path)
    assert_allclose(sweep.s11, (z_norm - 1) / (z_norm + 1), atol=1e-14)
    assert_allclose(sweep.z_ohm, 75 * z_norm, rtol=1e-12)
    assert any("Z parameters" in n and "converted" in n for n in sweep.notes)


def test_v2_y_one_port_in_siemens(tmp_path):
    # Version 2 Y data are not normalised (spec 2.0 "Option Line"); reference: scikit-rf y2s.
    y_s = np.array([0.02 + 0.001j, 0.018, 0.015 - 0.002j, 0.013 - 0.004j, 0.01 - 0.005j])
    path = tmp_path / "y.ts"
    path.write_text("[Version] 2.0\n# MHz Y RI R 50\n[Number of Ports] 1\n"
                    "[Number of Frequencies] 5\n[Network Data]\n" + "".join(
                        f"{140 + 2 * i} {y.real} {y.imag}\n" for i, y in enumerate(y_s)) + "[End]\n")
    expected = skrf.network.y2s(y_s.reshape(5, 1, 1), 50.0)[:, 0, 0]
    assert_allclose(read_touchstone(path).s11, expected, atol=1e-14)
    assert_allclose(read_touchstone(path).z_ohm, 1 / y_s, rtol=1e-12)  # Pozar eq. 2.35


def test_missing_option_line_accepted_only_with_flag():
    # Spec 2.0 "Option Line": defaults GHz, S, MA, R 50.
    path = DATA / "bad" / "no_option_line.s1p"
    with pytest.raises(InputError, match="--assume-defaults"):
        read_touchstone(path)
    sweep = read_touchstone(path, assume_defaults=True)
    assert_allclose(sweep.f_hz, [140e9, 142e9, 144e9, 146e9, 148e9])
    mag, ang = np.array([0.10, 0.05, 0.0, -0.05, -0.10]), np.array([-0.20, -0.10, 0.0, 0.10, 0.20])
    assert_allclose(sweep.s11, mag * np.exp(1j * np.deg2rad(ang)), atol=1e-15)
    assert sweep.z0_ohm == 50.0
    assert any("assume-defaults" in n for n in sweep.notes)


# ---- good corpus: loads with a visible note ------------------------------------
def test_gain_above_one_is_a_note_not_a_warning(recwarn):
    sweep = read_sweep(DATA / "good" / "gain_above_one.s1p")
    assert GAMMA_MAG_TOLERANCE == 1.02
    note = [n for n in sweep.notes if "calibration problem or active device" in n]
    assert len(note) == 1 and "line 5" in note[0] and "1.050" in note[0]
    assert_allclose(abs(sweep.s11[2]), 1.05)
    assert not [w for w in recwarn.list if "fieldcheck" in str(w.filename)]


def test_unsorted_frequencies_are_sorted_with_note():
    sweep = read_sweep(DATA / "good" / "unsorted.s1p")
    assert_allclose(sweep.f_hz, [140e6, 142e6, 144e6, 146e6, 148e6])
    assert_allclose(sweep.s11[1], 0.05 - 0.10j)  # the 142 MHz row follows its frequency
    assert any("sorted" in n and "line 5" in n for n in sweep.notes)


def test_non_uniform_grid_is_noted():
    sweep = read_sweep(DATA / "good" / "nonuniform.s1p")
    assert not sweep.is_uniform
    assert any("non-uniform" in n for n in sweep.notes)
    assert not any("non-uniform" in n for n in read_sweep(DATA / "good" / "unsorted.s1p").notes)


def test_latin1_crlf_corpus_file():
    sweep = read_sweep(DATA / "good" / "latin1_comment_crlf.s1p")
    assert sweep.comments[0] == "Länge 985 mm, Dipol über Grund"
    assert_allclose(sweep.s11[4], -0.10 + 0.20j)


def test_option_tokens_in_any_order_and_case():
    sweep = read_sweep(DATA / "good" / "option_tokens_any_order.s1p")  # '# r 75 ri s mhz'
    assert sweep.z0_ohm == 75.0
    assert_allclose(sweep.f_hz[0], 140e6)
    assert_allclose(sweep.s11[0], 0.10 - 0.20j)
    assert sweep.notes == ()


def test_partial_option_line_uses_spec_defaults_with_note():
    sweep = read_sweep(DATA / "good" / "partial_option_line.s1p")  # '# MHz': S, MA, R 50
    assert_allclose(sweep.s11[0], 0.5 * np.exp(1j * np.deg2rad(10)))
    assert any("Touchstone default" in n for n in sweep.notes)


def test_two_port_noise_block_is_ignored_with_note():
    net = read_network(DATA / "good" / "two_port_with_noise.s2p")
    assert net.s.shape == (5, 2, 2)
    assert_allclose(net.f, [1e9, 2e9, 3e9, 4e9, 5e9])
    assert_allclose(net.s[0, 1, 0], 2.0 * np.exp(1j * np.deg2rad(20)))  # S21
    assert any("noise" in n for n in load_touchstone(DATA / "good" / "two_port_with_noise.s2p").notes)


# ---- bad corpus -------------------------------------------------------------------
def _manifest():
    with open(DATA / "bad" / "MANIFEST.csv", newline="") as fh:
        return [r for r in csv.DictReader(fh) if not r["file"].endswith(".csv")]


@pytest.mark.parametrize("row", _manifest(), ids=lambda r: r["file"])
def test_bad_file_refused_with_line(row):
    args = shlex.split(row["cli_args"])
    port = int(args[args.index("--port") + 1]) if "--port" in args else None
    path = str(DATA / "bad" / row["file"])
    with pytest.raises(InputError) as exc:
        read_sweep(path, port=port)
    assert exc.value.path == path
    assert exc.value.line == (int(row["line"]) if row["line"] else None)
    assert row["substring"] in str(exc.value)
    assert str(exc.value).startswith(f"{path}:{row['line']}: " if row["line"] else f"{path}: ")


def test_manifest_lists_every_bad_file():
    listed = {r["file"] for r in csv.DictReader(open(DATA / "bad" / "MANIFEST.csv"))}
    assert listed == set(os.listdir(DATA / "bad")) - {"MANIFEST.csv"}


def test_missing_file_and_directory(tmp_path):
    with pytest.raises(InputError, match="no such file"):
        read_sweep(tmp_path / "absent.s1p")
    (tmp_path / "dir.s1p").mkdir()
    with pytest.raises(InputError, match="directory"):
        read_sweep(tmp_path / "dir.s1p")


def test_oversized_file_refused_before_reading(tmp_path):
    path = tmp_path / "huge.s1p"
    with open(path, "wb") as fh:  # sparse: no 200 MB written to disk
        fh.truncate(200_000_001)
    with pytest.raises(InputError, match="larger than the 200 MB"):
        read_sweep(path)


def test_point_count_limit(tmp_path, monkeypatch):
    monkeypatch.setattr(touchstone, "MAX_POINTS", 6)
    path = tmp_path / "many.s1p"
    path.write_text("# MHz S RI R 50\n" + "".join(f"{140 + i} 0.1 0.1\n" for i in range(7)))
    with pytest.raises(InputError, match="more than 6") as exc:
        read_touchstone(path)
    assert exc.value.line == 8


def test_pickle_disguised_as_touchstone_is_never_unpickled(tmp_path):
    # scikit-rf's Network(path) would unpickle this (protocol 0 is plain text).
    marker = tmp_path / "pwned"
    path = tmp_path / "evil.s1p"
    path.write_text(f"cos\nsystem\n(S'touch {marker}'\ntR.\n")
    with pytest.raises(InputError):
        read_sweep(path)
    assert not marker.exists()


@pytest.mark.parametrize("name", ["A.S1P", "b.Ts"])
def test_extension_is_case_insensitive(tmp_path, name):
    text = (DATA / "good" / "unsorted.s1p").read_text()
    if name.lower().endswith(".ts"):
        text = ("[Version] 2.1\n# MHz S RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 5\n"
                "[Network Data]\n" + text.split("R 50\n", 1)[1] + "[End]\n")
    (tmp_path / name).write_text(text)
    assert read_sweep(tmp_path / name).n_points == 5


def test_per_port_resistances_on_option_line(tmp_path):
    # Touchstone 2.1 (IBIS, 2024), "Option Line": version 1.1 allows one R per port.
    path = tmp_path / "pp.s2p"
    path.write_text("# GHz S RI R 50 75\n" + _rows_2port("21_12"))
    assert read_touchstone(path, port=1).z0_ohm == 50.0
    assert read_touchstone(path, port=2).z0_ohm == 75.0
