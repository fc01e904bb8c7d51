"""``fieldcheck trim`` end to end: JSON, text wording, history form, every bad description."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
import skrf

from fieldcheck.antenna import description_from_options
from fieldcheck.cli import main
from fieldcheck.model import model_from_description

from test_antenna import BAD  # the description corpus and its expected lines

ANT = Path(__file__).parent / "data" / "antenna"
F = np.linspace(120e6, 170e6, 401)
OPTS = ["--form", "dipole", "--diameter", "2mm", "--gap", "10mm", "--target", "146MHz"]


def _write(tmp_path, name, electrical_m, seed=0):
    d = description_from_options(form="dipole", arm="500mm", diameter="2mm", gap="10mm", target="146MHz")
    m = model_from_description(d)
    rng = np.random.default_rng(seed)
    g = m.gamma(F, electrical_m, 1.5, 0.5e-12) + 0.002 * (rng.standard_normal(F.size) + 1j * rng.standard_normal(F.size))
    net = skrf.Network(frequency=skrf.Frequency.from_f(F, unit="hz"), s=g.reshape(-1, 1, 1), z0=50)
    net.write_touchstone(str(tmp_path / name), form="ri")
    return str(tmp_path / f"{name}.s1p")


def test_trim_json_schema_and_consistency(tmp_path, capsys):
    path = _write(tmp_path, "long", 1.03)
    assert main(["trim", path, "--arm", "510mm", *OPTS, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    adv = out["advice"]
    assert adv["action"] in ("cut", "first-cut")
    assert adv["total_m"] == pytest.approx(2 * adv["per_arm_m"])
    assert adv["n_ends"] == 2
    assert set(out["fit"]["fit"]["parameters"]) == {"length_m", "r_loss_ohm", "c_feed_f", "g_feed_s", "delay_s"}
    assert out["antenna"]["antenna"]["arm_length_m"] == pytest.approx(0.510)


def test_trim_text_says_cut_per_arm_and_total_first(tmp_path, capsys):
    path = _write(tmp_path, "long", 1.03)
    assert main(["trim", path, "--arm", "510mm", *OPTS]) == 0
    text = capsys.readouterr().out.splitlines()
    headline = text[2].strip()  # title, blank line, then the answer
    assert headline.startswith(("CUT ", "FIRST CUT ")) and "from EACH arm" in headline and "total)" in headline
    joined = "\n".join(text)
    assert "proportional rule" in joined and "Safety:" in joined


def test_trim_history_form(tmp_path, capsys):
    paths = [_write(tmp_path, f"cut{i}", 2 * arm + 0.01 + 0.012, seed=i)
             for i, arm in enumerate((0.510, 0.503, 0.496))]
    assert main(["trim", *paths, *OPTS, "--arm", "510mm", "--arm-lengths", "510mm,503mm,496mm", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert len(out["history"]["points"]) == 3
    assert out["history"]["kappa"] == pytest.approx(1.0, abs=0.05)


@pytest.mark.parametrize("args, needle", [
    (["--arm-lengths", "510mm"], "2 sweeps"),
    (["--arm-lengths", "510mm,x"], "--arm-lengths"),
    (["--tolerance", "0"], "--tolerance"),
])
def test_trim_bad_history_and_option_inputs(tmp_path, capsys, args, needle):
    p = _write(tmp_path, "a", 1.03)
    argv = ["trim", p, p, *OPTS, "--arm", "510mm", *args] if "2 sweeps" in needle or "x" in str(args) \
        else ["trim", p, *OPTS, "--arm", "510mm", *args]
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and needle in err


@pytest.mark.parametrize("name, line, key, advice", BAD, ids=[b[0] for b in BAD])
def test_every_bad_description_exits_2_naming_file_and_line(tmp_path, capsys, name, line, key, advice):
    p = _write(tmp_path, "a", 1.03)
    path = ANT / name
    assert main(["trim", p, "--antenna", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    where = f"{path}:{line}:" if line else f"{path}:"
    assert where in err


def test_missing_antenna_information_is_named(tmp_path, capsys):
    p = _write(tmp_path, "a", 1.03)
    assert main(["trim", p, "--form", "dipole", "--target", "146MHz"]) == 2
    assert "--arm" in capsys.readouterr().err
    assert main(["trim", p, "--form", "dipole", "--arm", "500mm", "--target", "146MHz"]) == 2
    assert "--diameter" in capsys.readouterr().err


def test_fix_option_parses_units_and_refuses_nonsense(tmp_path, capsys):
    from fieldcheck.commands._common import parse_fix
    assert parse_fix("delay,feed-c=0.5pF,loss=1.5ohm,feed-g") == {
        "delay_s": 0.0, "c_feed_f": pytest.approx(0.5e-12), "r_loss_ohm": 1.5, "g_feed_s": 0.0}
    assert parse_fix("delay=100ps") == {"delay_s": pytest.approx(1e-10)}
    p = _write(tmp_path, "a", 1.03)
    assert main(["trim", p, *OPTS, "--arm", "510mm", "--fix", "delay", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["fit"]["fit"]["parameters"]["delay_s"]["value"] == 0.0
    for bad in ("length", "feed-c=-1pF", "loss=2mm"):
        assert main(["trim", p, *OPTS, "--arm", "510mm", "--fix", bad]) == 2
        assert "--fix" in capsys.readouterr().err


def test_plot_is_written_and_its_curves_follow_the_fit(tmp_path, capsys):
    from fieldcheck.antenna_fit import fit_antenna
    from fieldcheck.curves import trim_curves
    from fieldcheck.importer import read_sweep
    from fieldcheck.trim import advise_trim

    p = _write(tmp_path, "a", 1.03)
    png = tmp_path / "trim.png"
    assert main(["trim", p, *OPTS, "--arm", "510mm", "--plot", str(png)]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG spec, section 5.2)
    d = description_from_options(form="dipole", arm="510mm", diameter="2mm", gap="10mm", target="146MHz")
    sw = read_sweep(p)
    af = fit_antenna(sw, d)
    adv = advise_trim(af, 146e6)
    c = trim_curves(af, sw, af.fit.values["length_m"] - adv.total_m * adv.sensitivity, 146e6, 2.0)
    # The fitted model follows the measurement (noise 0.002 in Gamma).
    sel = c.rl_meas_db < 20
    assert np.max(np.abs(c.rl_model_db[sel] - c.rl_meas_db[sel])) < 1.0
    # After the change the best match sits at the target, within the landing tolerance.
    assert abs(c.f_hz[np.argmax(c.rl_after_db)] / 146e6 - 1) < 0.004
    assert main(["trim", p, *OPTS, "--arm", "510mm", "--plot", str(tmp_path / "no" / "dir.png")]) == 2
    assert "cannot write the plot" in capsys.readouterr().err


def test_json_states_amount_and_direction_unambiguously(tmp_path, capsys):
    short = _write(tmp_path, "short", 0.96)
    assert main(["trim", short, *OPTS, "--arm", "475mm", "--json"]) == 0
    adv = json.loads(capsys.readouterr().out)["advice"]
    assert adv["action"] == "add"
    assert adv["amount_per_arm_m"] > 0 and adv["per_arm_m"] == -adv["amount_per_arm_m"]
    assert adv["amount_total_m"] == pytest.approx(2 * adv["amount_per_arm_m"])


def test_fitted_loss_is_set_beside_the_wire_s_own_skin_effect_loss(tmp_path, capsys):
    # Half-wave 2 mm copper dipole near 146 MHz: about 0.26 ohm of skin-effect loss
    # (R_s L / (4 pi a) for a sinusoidal current, Balanis, Antenna Theory, 4th ed.,
    # eq. 2-90b, with copper at 5.8e7 S/m; the MoM current gives a little more).
    p = _write(tmp_path, "a", 1.03)
    assert main(["trim", p, *OPTS, "--arm", "510mm", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert 0.2 < out["conductor_loss_ohm"] < 0.35
    assert main(["trim", p, *OPTS, "--arm", "510mm"]) == 0
    assert "copper wire alone" in capsys.readouterr().out
