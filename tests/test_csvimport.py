"""Tests of the CSV sweep reader (fieldcheck.csvimport).

Independent references:
- scikit-rf 2.2's derived quantities of a known network (``s_re``, ``s_im``,
  ``s_db`` = 20 log10 |S|, ``s_mag``, ``s_deg``, ``s_rad``) are written as CSV
  columns; reading them back must give the network's S11.
- Touchstone File Format Specification 2.0 (IBIS), "Option Line": DB means
  20 log10 |S| and angles are in degrees; we use the same for CSV.
"""

from __future__ import annotations

import csv
import shlex
from pathlib import Path

import numpy as np
import pytest
import skrf
from numpy.testing import assert_allclose

from fieldcheck.csvimport import read_csv
from fieldcheck.errors import InputError
from fieldcheck.importer import read_sweep

DATA = Path(__file__).parent / "data"
SCALE = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}


@pytest.fixture(scope="module")
def net():
    rng = np.random.default_rng(42)
    n = 21
    s = rng.uniform(0.05, 0.95, n) * np.exp(1j * rng.uniform(-np.pi, np.pi, n))
    return skrf.Network(frequency=skrf.Frequency(140, 150, n, unit="MHz"),
                        s=s.reshape(n, 1, 1), z0=50, name="dut")


def _columns(net, kind):
    if kind == "ri":
        return net.s_re[:, 0, 0], net.s_im[:, 0, 0]
    if kind == "db":
        return net.s_db[:, 0, 0], net.s_deg[:, 0, 0]
    if kind == "ma":
        return net.s_mag[:, 0, 0], net.s_deg[:, 0, 0]
    if kind == "ma_rad":
        return net.s_mag[:, 0, 0], net.s_rad[:, 0, 0]
    raise ValueError(kind)


# (header names, value kind, frequency unit written, delimiter)
HEADERS = [
    (("Freq(MHz)", "S11 re", "S11 im"), "ri", "mhz", ","),
    (("frequency_hz", "Re(S11)", "Im(S11)"), "ri", "hz", ";"),
    (("Frequency [GHz]", "real", "imaginary"), "ri", "ghz", "\t"),
    (("freq_khz", "ReS11", "ImS11"), "ri", "khz", ","),
    (("Freq(MHz)", "S11 dB", "S11 phase deg"), "db", "mhz", ","),
    (("frequency (Hz)", "S11 Log Mag (dB)", "S11 Phase (deg)"), "db", "hz", ";"),
    (("freq_mhz", "mag", "ang"), "ma", "mhz", "\t"),
    (("Freq (GHz)", "|S11|", "S11 angle deg"), "ma", "ghz", ","),
    (("freq_mhz", "S11 magnitude", "S11 phase rad"), "ma_rad", "mhz", ","),
]


@pytest.mark.parametrize("names,kind,unit,delim", HEADERS, ids=lambda v: str(v))
def test_header_names_choose_columns(tmp_path, net, names, kind, unit, delim):
    a, b = _columns(net, kind)
    f = net.f / SCALE[unit]
    path = tmp_path / "s.csv"
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh, delimiter=delim)
        w.writerow(names)
        w.writerows(zip(*(map(repr, col.tolist()) for col in (f, a, b))))
    sweep = read_sweep(path)
    assert_allclose(sweep.f_hz, net.f, rtol=1e-13)
    assert_allclose(sweep.s11, net.s[:, 0, 0], rtol=0, atol=1e-12)
    assert sweep.z0_ohm == 50.0
    assert any("50 ohm assumed" in n for n in sweep.notes)
    # Only a bare 'ang' header leaves the angle unit unsaid.
    assert any("degrees assumed" in n for n in sweep.notes) == (names[2] == "ang")


@pytest.mark.parametrize("fmt", ["ri", "db", "ma"])
@pytest.mark.parametrize("unit", ["hz", "khz", "mhz", "ghz"])
def test_options_choose_format_and_unit_without_header(tmp_path, net, fmt, unit):
    a, b = _columns(net, fmt)
    path = tmp_path / "plain.txt"
    cols = zip((net.f / SCALE[unit]).tolist(), a.tolist(), b.tolist())
    path.write_text("".join(f"{f!r} {x!r} {y!r}\n" for f, x, y in cols))
    with pytest.raises(InputError, match="no header line"):
        read_sweep(path)
    sweep = read_sweep(path, csv_format=fmt, csv_freq_unit=unit, z0_ohm=75.0)
    assert_allclose(sweep.f_hz, net.f, rtol=1e-13)
    assert_allclose(sweep.s11, net.s[:, 0, 0], atol=1e-12)
    assert sweep.z0_ohm == 75.0 and not any("ohm assumed" in n for n in sweep.notes)


def test_unrecognised_header_read_by_position_with_option(tmp_path, net):
    a, b = _columns(net, "db")
    path = tmp_path / "x.csv"
    path.write_text("Freq(MHz),alpha,beta\n" + "".join(
        f"{f / 1e6!r},{x!r},{y!r}\n" for f, x, y in zip(net.f.tolist(), a.tolist(), b.tolist())))
    sweep = read_csv(path, csv_format="db")
    assert_allclose(sweep.s11, net.s[:, 0, 0], atol=1e-12)
    assert any("by position" in n for n in sweep.notes)


def test_other_s_parameters_are_ignored(tmp_path, net):
    a, b = _columns(net, "ri")
    path = tmp_path / "x.csv"
    path.write_text("Freq(MHz),S11 re,S11 im,S21 re,S21 im\n" + "".join(
        f"{f / 1e6!r},{x!r},{y!r},0.5,0.5\n" for f, x, y in zip(net.f.tolist(), a.tolist(), b.tolist())))
    assert_allclose(read_csv(path).s11, net.s[:, 0, 0], atol=1e-12)


def test_unit_option_must_agree_with_header():
    with pytest.raises(InputError, match="header says mhz"):
        read_csv(DATA / "good" / "sweep_ri_mhz.csv", freq_unit="ghz")
    assert read_csv(DATA / "good" / "sweep_ri_mhz.csv", freq_unit="mhz").f_hz[0] == 140e6


def test_unitless_hz_values_read_as_hz_with_note(tmp_path):
    path = tmp_path / "hz.csv"
    path.write_text("freq,re,im\n" + "".join(f"{7.0e6 + i * 1e4},0.1,0.2\n" for i in range(5)))
    sweep = read_csv(path)
    assert_allclose(sweep.f_hz[0], 7.0e6)
    assert any("read as Hz" in n for n in sweep.notes)


def test_good_corpus_csv_files():
    s = read_sweep(DATA / "good" / "sweep_ri_mhz.csv")
    assert_allclose(s.s11, [0.10 - 0.20j, 0.05 - 0.10j, 0.0, -0.05 + 0.10j, -0.10 + 0.20j])
    s = read_sweep(DATA / "good" / "sweep_db_semicolon.csv")  # decimal commas
    assert_allclose(s.f_hz[0], 140e6)
    assert_allclose(abs(s.s11[2]), 10 ** (-20 / 20))  # Touchstone spec: dB = 20 log10 |S|
    assert any("decimal commas" in n for n in s.notes)
    s = read_sweep(DATA / "good" / "sweep_ma_tab.txt")  # header 'freq [kHz]'
    assert_allclose(s.f_hz, np.array([140, 142, 144, 146, 148]) * 1e6)
    assert_allclose(s.s11[0], 0.5 * np.exp(1j * np.deg2rad(10)))


def test_crlf_latin1_unsorted_and_gain_notes(tmp_path):
    text = ("# Länge 985 mm\nFreq(MHz),S11 re,S11 im\n140,0.1,0.1\n144,1.03,0.0\n"
            "142,0.2,0.1\n146,0.1,0.3\n148,0.1,0.2\n")
    path = tmp_path / "m.csv"
    path.write_bytes(text.replace("\n", "\r\n").encode("latin-1"))
    sweep = read_csv(path)
    assert sweep.comments == ("Länge 985 mm",)
    assert_allclose(sweep.f_hz, np.array([140, 142, 144, 146, 148]) * 1e6)
    assert_allclose(sweep.s11[1], 0.2 + 0.1j)
    notes = " | ".join(sweep.notes)
    assert "Latin-1" in notes and "sorted" in notes
    assert "calibration problem or active device" in notes and "line 4" in notes


def _manifest():
    with open(DATA / "bad" / "MANIFEST.csv", newline="") as fh:
        return [r for r in csv.DictReader(fh) if r["file"].endswith(".csv")]


@pytest.mark.parametrize("row", _manifest(), ids=lambda r: r["file"])
def test_bad_csv_refused_with_line(row):
    assert not shlex.split(row["cli_args"])
    path = str(DATA / "bad" / row["file"])
    with pytest.raises(InputError) as exc:
        read_sweep(path)
    assert exc.value.path == path
    assert exc.value.line == (int(row["line"]) if row["line"] else None)
    assert row["substring"] in str(exc.value)


def test_column_names_in_a_comment_line_are_used(tmp_path):
    # Some instruments write the header as a comment; the values must still be read
    # as real/imaginary, checked against the numbers written.
    p = tmp_path / "commented_header.csv"
    rows = "\n".join(f"{100 + i}000000,0.{i + 1},-0.{i + 2}" for i in range(6))
    p.write_text("# Frequency(Hz), S11(RE), S11(IM)\n" + rows + "\n")
    sw = read_csv(str(p))
    np.testing.assert_allclose(sw.f_hz[0], 100e6)
    np.testing.assert_allclose(sw.s11[0], 0.1 - 0.2j)
    assert any("comment on line 1" in n for n in sw.notes)
