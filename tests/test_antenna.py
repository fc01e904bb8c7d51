"""Tests for the antenna description file, its strict loader and the matching options.

Reference facts used below:
- 1 in = 25.4 mm and 1 ft = 0.3048 m exactly: International Yard and Pound
  Agreement (1959), restated in NIST SP 811 (2008 edition), Appendix B.
- k = 1e3, M = 1e6, G = 1e9, c = 1e-2, m = 1e-3: SI Brochure, 9th edition (2019), Table 7.
- TOML syntax (dotted keys, inline tables, multi-line strings and arrays, duplicate
  keys are invalid): TOML v1.0.0 specification (toml.io/en/v1.0.0).
- VSWR = (1 + |G|) / (1 - |G|) >= 1: D. M. Pozar, Microwave Engineering, 4th ed.,
  section 2.3 (equation number from memory: 2.41).
"""

from __future__ import annotations

import argparse
import json
import os
from pathlib import Path

import pytest
from numpy.testing import assert_allclose

from fieldcheck import antenna as ant
from fieldcheck.commands import _common
from fieldcheck.commands._antenna_args import add_description_arguments, description_from_args
from fieldcheck.errors import InputError, SpecError
from fieldcheck.physics.installation import Installation
from fieldcheck.units import parse_frequency_hz, parse_length_m

DATA = Path(__file__).parent / "data" / "antenna"
INCH_M = 0.0254  # exact, International Yard and Pound Agreement (1959)
FOOT_M = 0.3048  # exact, same agreement
EXACT = 1e-15    # relative tolerance: a few ulp of float64 for one multiplication


def _load(name, **kw):
    return ant.load_description(str(DATA / name), **kw)


# ------------------------------------------------------------------ good files

def test_good_dipole_si_values():
    d = _load("good_dipole.toml")
    a = d.antenna
    assert (a.name, a.form, a.material) == ("2 m portable dipole", "dipole", "copper")
    # SI prefixes: SI Brochure 9th ed. Table 7; also matches fieldcheck.units.
    assert_allclose(a.arm_length_m, 492e-3, rtol=EXACT)
    assert a.arm_length_m == parse_length_m("492 mm")
    assert_allclose(a.diameter_m, 2.0e-3, rtol=EXACT)
    assert_allclose(a.radius_m, 1.0e-3, rtol=EXACT)
    assert_allclose(a.feed_gap_m, 10e-3, rtol=EXACT)
    # Schema definition: tip to tip = two arms plus the gap.
    assert_allclose(a.total_length_m, 2 * 0.492 + 0.010, rtol=EXACT)
    assert a.insulation is None
    assert d.installation.kind == "free" and d.installation.height_m is None
    t = d.target
    assert_allclose(t.frequency_hz, 146e6, rtol=EXACT)
    assert t.frequency_hz == parse_frequency_hz("146 MHz")
    assert (t.band_hz, t.criterion, t.vswr_limit) == (None, "match", 2.0)
    f = d.feed
    assert (f.system_impedance_ohm, f.balun_ratio, f.balun_label) == (50.0, 1.0, "1:1")
    assert (f.cable, f.fixture_path, f.delay) == ("RG58:5m", None, "0.12 ns")
    assert d.source_path == str(DATA / "good_dipole.toml")


def test_good_monopole_in_inches():
    d = _load("good_monopole.toml")
    a = d.antenna
    assert a.form == "monopole" and a.material == "brass"
    # 1 in = 25.4 mm exactly (International Yard and Pound Agreement, 1959).
    assert_allclose(a.arm_length_m, 6.375 * INCH_M, rtol=EXACT)
    assert_allclose(a.diameter_m, 0.125 * INCH_M, rtol=EXACT)
    assert_allclose(a.feed_gap_m, 3e-3, rtol=EXACT)
    # A monopole's "total length" is its height above the plane, gap not added.
    assert a.total_length_m == a.arm_length_m
    assert d.installation.kind == "monopole" and d.installation.height_m is None
    assert d.target.criterion == "resonance"
    assert_allclose(d.target.frequency_hz, 435e6, rtol=EXACT)
    assert d.feed.balun_label == "none" and d.feed.balun_ratio == 1.0


def test_good_horizontal_total_length_and_feet():
    d = _load("good_horizontal.toml")
    a = d.antenna
    # arm = (total - gap) / 2, from the schema's definition of total_length.
    assert_allclose(a.arm_length_m, (10.05 - 0.05) / 2, rtol=EXACT)
    assert_allclose(a.total_length_m, 10.05, rtol=EXACT)
    assert_allclose(a.feed_gap_m, 5e-2, rtol=EXACT)
    assert a.material == "copper-clad-steel"
    # The [installation] table builds the physics code's own Installation value.
    assert isinstance(d.installation, Installation) and d.installation.kind == "horizontal"
    # 1 ft = 0.3048 m exactly (International Yard and Pound Agreement, 1959).
    assert_allclose(d.installation.height_m, 33 * FOOT_M, rtol=EXACT)
    assert_allclose(d.target.frequency_hz, 14.175e6, rtol=EXACT)
    assert d.target.vswr_limit == 1.5
    assert (d.feed.balun_label, d.feed.balun_ratio, d.feed.system_impedance_ohm) == ("4:1", 4.0, 75.0)


def test_good_insulated_and_fixture_relative_to_file(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)  # the fixture must not be looked for in the cwd
    d = _load("good_insulated.toml")
    a = d.antenna
    assert a.feed_gap_m == 0.0 and a.material == "copper"  # defaults
    assert_allclose(a.total_length_m, 2 * 1.02, rtol=EXACT)
    assert_allclose(a.insulation.thickness_m, 0.4e-3, rtol=EXACT)
    assert a.insulation.permittivity == 3.5
    expected = (DATA / "fixtures" / "adapter.s2p").resolve()
    assert os.path.isabs(d.feed.fixture_path)
    assert Path(d.feed.fixture_path).resolve() == expected


def test_good_band_dotted_keys_and_inline_table():
    d = _load("good_band.toml")
    assert_allclose(d.antenna.arm_length_m, 15.2e-2, rtol=EXACT)
    assert_allclose(d.antenna.insulation.thickness_m, 0.25e-3, rtol=EXACT)
    assert d.antenna.insulation.permittivity == 2.1
    # Band of 430 MHz .. 0.44 GHz; the target is its centre (schema definition).
    assert_allclose(d.target.band_hz, (430e6, 440e6), rtol=EXACT)
    assert_allclose(d.target.frequency_hz, 435e6, rtol=EXACT)


def test_to_dict_is_json_with_si_names():
    d = _load("good_horizontal.toml")
    out = json.loads(json.dumps(d.to_dict()))
    assert_allclose(out["antenna"]["arm_length_m"], d.antenna.arm_length_m, rtol=EXACT)
    assert_allclose(out["antenna"]["total_length_m"], 10.05, rtol=EXACT)
    assert_allclose(out["antenna"]["radius_m"], 0.8e-3, rtol=EXACT)
    assert out["installation"] == {"kind": "horizontal", "height_m": d.installation.height_m}
    assert out["target"]["frequency_hz"] == d.target.frequency_hz
    assert out["feed"]["system_impedance_ohm"] == 75.0
    assert out["antenna"]["insulation"] is None
    assert _load("good_band.toml").to_dict()["target"]["band_hz"] == [430e6, 440e6]


def test_description_is_frozen():
    d = _load("good_dipole.toml")
    with pytest.raises(AttributeError):
        d.antenna.arm_length_m = 1.0


# ------------------------------------------------------------------ bad corpus

# (file, expected line or None, dotted key named, fragment of the advice)
BAD = [
    ("bad_syntax.toml", 5, None, "not valid TOML"),
    ("bad_duplicate_key.toml", 6, None, "not valid TOML"),  # TOML v1.0.0: keys once
    ("bad_decimal_comma.toml", 5, "antenna.diameter",
     "cannot read '2,0 mm': write a number with a unit m, cm, mm, in or ft, for example '2.0 mm'"),
    ("bad_bare_length.toml", 4, "antenna.arm_length", "write a unit, e.g. '492 mm'"),
    ("bad_no_unit.toml", 5, "antenna.diameter", "write a unit"),
    ("bad_unknown_unit.toml", 4, "antenna.arm_length", "cannot read '492 mmm'"),
    ("bad_key_typo.toml", 5, "antenna.diametre", "did you mean antenna.diameter?"),
    ("bad_table_typo.toml", 8, "targett", "did you mean target?"),
    ("bad_key_wrong_table.toml", 7, "antenna.height", "did you mean installation.height?"),
    ("bad_inline_typo.toml", 7, "antenna.insulation.thicknes",
     "did you mean antenna.insulation.thickness?"),
    ("bad_table_as_value.toml", 2, "target", "must be a table"),
    ("bad_missing_form.toml", 2, "antenna.form", "missing"),
    ("bad_missing_length.toml", 2, "antenna.arm_length", "missing"),
    ("bad_missing_diameter.toml", 2, "antenna.diameter", "missing"),
    ("bad_missing_target.toml", 8, "target.frequency", "missing"),
    ("bad_no_target_table.toml", None, "target.frequency", "under [target]"),
    ("bad_both_lengths.toml", 6, "antenna.total_length", "not both"),
    ("bad_total_le_gap.toml", 4, "antenna.total_length", "not longer than the feed gap"),
    ("bad_total_monopole.toml", 4, "antenna.total_length", "dipoles only"),
    ("bad_not_thin.toml", 5, "antenna.diameter", "not a thin wire"),
    ("bad_negative_length.toml", 4, "antenna.arm_length", "greater than zero"),
    ("bad_zero_diameter.toml", 5, "antenna.diameter", "greater than zero"),
    ("bad_negative_gap.toml", 6, "antenna.feed_gap", "must not be negative"),
    ("bad_permittivity.toml", 9, "antenna.insulation.permittivity", "below 1"),
    ("bad_insulation_thickness.toml", 8, "antenna.insulation.thickness", "greater than zero"),
    ("bad_insulation_incomplete.toml", 7, "antenna.insulation.permittivity", "missing"),
    ("bad_horizontal_no_height.toml", 8, "installation.height", "missing"),
    ("bad_height_free.toml", 10, "installation.height", 'only for kind = "horizontal"'),
    ("bad_install_kind.toml", 9, "installation.kind", "not one of"),
    ("bad_monopole_free.toml", 9, "installation.kind", "ground plane"),
    ("bad_dipole_ground_plane.toml", 9, "installation.kind", "no ground plane"),
    ("bad_band_order.toml", 9, "target.band", "low edge must be below the high edge"),
    ("bad_band_short.toml", 9, "target.band", "two frequencies"),
    ("bad_frequency_and_band.toml", 10, "target.band", "not both"),
    ("bad_bare_frequency.toml", 9, "target.frequency", "write a unit, e.g. '146 MHz'"),
    ("bad_criterion.toml", 10, "target.criterion", "not one of"),
    ("bad_vswr_limit.toml", 10, "target.vswr_limit", "greater than 1"),  # Pozar: VSWR >= 1
    ("bad_balun.toml", 12, "feed.balun", "not one of"),
    ("bad_material.toml", 6, "antenna.material", "did you mean 'copper'"),
    ("bad_system_impedance.toml", 12, "feed.system_impedance", "greater than zero"),
    ("bad_system_impedance_text.toml", 12, "feed.system_impedance", "plain number"),
    ("bad_fixture_missing.toml", 12, "feed.fixture", "relative to the description file"),
]


def test_bad_corpus_is_complete():
    on_disk = {p.name for p in DATA.glob("bad_*.toml")}
    assert on_disk == {row[0] for row in BAD}


@pytest.mark.parametrize("name, line, key, advice", BAD, ids=[b[0] for b in BAD])
def test_bad_file_names_file_line_and_key(name, line, key, advice):
    path = str(DATA / name)
    with pytest.raises(SpecError) as info:
        ant.load_description(path)
    exc = info.value
    assert isinstance(exc, InputError) and isinstance(exc, ValueError)
    assert (exc.path, exc.line) == (path, line)
    where = f"{path}:{line}: " if line is not None else f"{path}: "
    assert str(exc).startswith(where + (f"{key}: " if key else ""))
    assert advice in str(exc)


def test_missing_file_and_not_utf8(tmp_path):
    missing = str(tmp_path / "nope.toml")
    with pytest.raises(SpecError, match="cannot open") as info:
        ant.load_description(missing)
    assert info.value.path == missing and info.value.line is None
    latin = tmp_path / "latin1.toml"
    latin.write_bytes(b'[antenna]\nname = "Antenne f\xfcr 2 m"\n')
    with pytest.raises(SpecError, match="UTF-8") as info:
        ant.load_description(str(latin))
    assert info.value.line == 2


def test_target_optional_only_when_not_required():
    with pytest.raises(SpecError, match="target.frequency"):
        _load("bad_no_target_table.toml")
    d = _load("bad_no_target_table.toml", require_target=False)
    assert d.target is None and d.to_dict()["target"] is None


# ------------------------------------------------------------------ line finder

def test_key_lines_on_tricky_toml():
    # Constructs from the TOML v1.0.0 specification that a naive line scan gets wrong.
    text = (
        '# [antenna] in a comment is not a header\n'                              # 1
        'title = """\n'                                                           # 2
        'diameter = "not a key, inside a multi-line string"\n'                    # 3
        '[fake]\n'                                                                # 4
        '"""\n'                                                                   # 5
        '[ antenna ]\n'                                                           # 6
        'form = "dipole"  # diameter = 3\n'                                       # 7
        '"arm_length" = "1 m"\n'                                                  # 8
        'insulation = { thickness = "1 mm", permittivity = 2 }\n'                 # 9
        '\n'                                                                      # 10
        'target.band = [\n'                                                       # 11
        '  "1 MHz", # x = 1\n'                                                    # 12
        '  "2 MHz",\n'                                                            # 13
        ']\n'                                                                     # 14
        "[feed]\n"                                                                # 15
        "cable = 'a=b'\n"                                                         # 16
    )
    import tomllib

    tomllib.loads(text)  # the helper is only ever used on text tomllib accepted
    lines = ant.key_lines(text)
    assert lines["title"] == 2
    assert "diameter" not in lines and "fake" not in lines and "antenna.diameter" not in lines
    assert lines["antenna"] == 6
    assert lines["antenna.form"] == 7
    assert lines["antenna.arm_length"] == 8
    assert lines["antenna.insulation"] == 9
    assert lines["antenna.insulation.thickness"] == 9
    assert lines["antenna.insulation.permittivity"] == 9
    assert lines["antenna.target.band"] == 11
    assert "x" not in lines and "antenna.x" not in lines
    assert lines["feed"] == 15 and lines["feed.cable"] == 16
    assert ant.find_line(lines, "feed.balun") == 15       # falls back to the table
    assert ant.find_line(lines, "target.frequency") is None


# ------------------------------------------------------------------ overrides

def test_overrides_win_over_the_file():
    d = _load("good_dipole.toml", overrides={"antenna.arm_length": "495 mm",
                                             "target.frequency": "145MHz",
                                             "feed.balun": "4:1"})
    assert_allclose(d.antenna.arm_length_m, 495e-3, rtol=EXACT)
    assert_allclose(d.target.frequency_hz, 145e6, rtol=EXACT)
    assert d.feed.balun_ratio == 4.0
    assert_allclose(d.antenna.diameter_m, 2e-3, rtol=EXACT)  # untouched


def test_override_replaces_the_files_alternative():
    # The file gives total_length / frequency; arm_length / band replace them.
    d = _load("good_horizontal.toml", overrides={"antenna.arm_length": "5 m",
                                                 "target.band": ["14 MHz", "14.35 MHz"]})
    assert_allclose(d.antenna.arm_length_m, 5.0, rtol=EXACT)
    assert_allclose(d.target.frequency_hz, 14.175e6, rtol=EXACT)
    # Moving the wire off the ground drops the file's height instead of refusing.
    d = _load("good_horizontal.toml", overrides={"installation.kind": "free"})
    assert d.installation == ant.Installation("free", None)
    # None removes a key; "antenna.insulation": None removes the jacket.
    d = _load("good_insulated.toml", overrides={"antenna.insulation": None})
    assert d.antenna.insulation is None


def test_bad_override_names_the_override():
    with pytest.raises(SpecError) as info:
        _load("good_dipole.toml", overrides={"antenna.diameter": "2,0 mm"})
    assert str(info.value).startswith("override antenna.diameter: cannot read '2,0 mm'")
    assert info.value.path is None
    with pytest.raises(SpecError, match="did you mean antenna.arm_length"):
        _load("good_dipole.toml", overrides={"antenna.arm_lenght": "1 m"})


# ------------------------------------------------------------------ options only

def test_options_only_matches_the_file():
    d = ant.description_from_options(
        antenna_name="2 m portable dipole", form="dipole", arm="492mm", diameter="2.0mm",
        material="Copper", gap="10mm", target="146MHz", criterion="match", vswr_limit="2.0",
        system_z0="50", balun="1:1", cable="RG58:5m", delay="0.12 ns")
    f = _load("good_dipole.toml")
    assert d.antenna == f.antenna and d.target == f.target and d.feed == f.feed
    assert d.installation == f.installation and d.source_path is None


def test_options_only_insulation_band_height():
    d = ant.description_from_options(form="dipole", length="10.05m", gap="5cm",
                                     diameter="1.6mm", insulation="0.4mm:2.3",
                                     install="horizontal", height="33ft",
                                     band="14MHz:14.35MHz")
    assert_allclose(d.antenna.arm_length_m, 5.0, rtol=EXACT)
    assert d.antenna.insulation.permittivity == 2.3
    assert_allclose(d.antenna.insulation.thickness_m, 0.4e-3, rtol=EXACT)
    assert_allclose(d.installation.height_m, 33 * FOOT_M, rtol=EXACT)
    assert_allclose(d.target.band_hz, (14e6, 14.35e6), rtol=EXACT)


@pytest.mark.parametrize("kwargs, option, advice", [
    (dict(diameter="2,0mm"), "--diameter", "cannot read '2,0mm'"),
    (dict(arm="492"), "--arm", "write a unit"),
    (dict(diameter="200mm"), "--diameter", "not a thin wire"),
    (dict(insulation="0.4mm"), "--insulation", "THICKNESS:EPSR"),
    (dict(insulation="0.4mm:0.5"), "--insulation", "below 1"),
    (dict(install="horizontal"), "--height", "missing: give --height"),
    (dict(height="10m"), "--height", "only for kind"),
    (dict(band="148MHz:144MHz", target=None), "--band", "low edge"),
    (dict(band="144MHz:148MHz"), "--band", "not both"),
    (dict(band="144MHz", target=None), "--band", "LOW:HIGH"),
    (dict(target=None), "--target", "missing: give --target"),
    (dict(form=None), "--form", "missing: give --form"),
    (dict(form="monopole", install="free"), "--install", "ground plane"),
    (dict(form="dipole", install="ground-plane"), "--install", "no ground plane"),
    (dict(form="cone"), "--form", "not one of"),
    (dict(balun="2:1"), "--balun", "not one of"),
    (dict(system_z0="-50"), "--system-z0", "greater than zero"),
    (dict(vswr_limit="abc"), "--vswr-limit", "plain number"),
    (dict(criterion="best"), "--criterion", "not one of"),
    (dict(fixture="no_such_fixture.s2p"), "--fixture", "current directory"),
])
def test_options_only_errors_name_the_option(kwargs, option, advice):
    base = dict(form="dipole", arm="492mm", diameter="2mm", target="146MHz")
    base.update(kwargs)
    with pytest.raises(SpecError) as info:
        ant.description_from_options(**base)
    assert str(info.value).startswith(f"{option}: ")
    assert advice in str(info.value)
    assert info.value.path is None


# ------------------------------------------------------------------ argparse

def _parser(with_sweep_group=True):
    p = argparse.ArgumentParser()
    if with_sweep_group:
        _common.add_sweep_arguments(p)  # defines --cable, --fixture, --delay already
    add_description_arguments(p)
    return p


def test_argparse_file_plus_options():
    args = _parser().parse_args(["--antenna", str(DATA / "good_dipole.toml"),
                                 "--arm", "49.5cm", "--cable", "RG213:12.5m"])
    d = description_from_args(args)
    assert_allclose(d.antenna.arm_length_m, 0.495, rtol=EXACT)
    assert d.feed.cable == "RG213:12.5m"
    assert d.source_path == str(DATA / "good_dipole.toml")


def test_argparse_option_error_names_option_even_with_a_file():
    args = _parser().parse_args(["--antenna", str(DATA / "good_dipole.toml"),
                                 "--diameter", "2,0mm"])
    with pytest.raises(SpecError) as info:
        description_from_args(args)
    assert str(info.value).startswith("--diameter: cannot read '2,0mm'")


def test_argparse_options_only_and_fixture_relative_to_cwd(monkeypatch):
    monkeypatch.chdir(DATA)
    args = _parser(with_sweep_group=False).parse_args(
        ["--form", "monopole", "--arm", "6.375in", "--diameter", "0.125in",
         "--fixture", "fixtures/adapter.s2p"])
    with pytest.raises(SpecError, match="--target: missing"):
        description_from_args(args)
    d = description_from_args(args, require_target=False)
    assert d.target is None and d.installation.kind == "monopole"
    assert_allclose(d.antenna.arm_length_m, 6.375 * INCH_M, rtol=EXACT)
    assert Path(d.feed.fixture_path) == (DATA / "fixtures" / "adapter.s2p").resolve()


def test_argparse_group_tolerates_existing_options():
    p = argparse.ArgumentParser()
    p.add_argument("--vswr-limit", type=float, default=2.0)  # as `inspect` has
    add_description_arguments(p)
    args = p.parse_args(["--form", "dipole", "--arm", "0.5m", "--diameter", "2mm",
                         "--target", "146MHz", "--vswr-limit", "1.5"])
    assert description_from_args(args).target.vswr_limit == 1.5
    titles = [g.title for g in p._action_groups]
    assert "antenna (overrides the description file)" in titles


def test_argparse_insulation_none_removes_the_files_jacket():
    args = _parser().parse_args(["--antenna", str(DATA / "good_insulated.toml"),
                                 "--insulation", "none", "--gap", "0mm"])
    d = description_from_args(args)
    assert d.antenna.insulation is None and d.antenna.feed_gap_m == 0.0


def test_toml_error_at_end_of_document(tmp_path):
    path = tmp_path / "cut.toml"
    path.write_text('[antenna]\nform = "dipole"\nname = "unterminated', encoding="utf-8")
    with pytest.raises(SpecError, match="not valid TOML") as info:
        ant.load_description(str(path))
    assert info.value.line == 3


def test_the_documented_example_loads(tmp_path):
    doc = ant.__doc__
    block = doc[doc.index("    # fieldcheck antenna description"):doc.index("\nLengths and")]
    text = "\n".join(line[4:] for line in block.splitlines())
    (tmp_path / "antenna.toml").write_text(text, encoding="utf-8")
    (tmp_path / "adapter.s2p").write_text("# MHz S RI R 50\n", encoding="utf-8")
    d = ant.load_description(str(tmp_path / "antenna.toml"))
    assert_allclose(d.antenna.total_length_m, 0.994, rtol=EXACT)
    assert_allclose(d.installation.height_m, 10.0, rtol=EXACT)
    assert d.antenna.insulation == ant.Insulation(0.4e-3, 2.3)
    assert d.feed.fixture_path == str(tmp_path / "adapter.s2p")
