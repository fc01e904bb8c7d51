"""Real-world style check: remove a known patch cable, then locate the open end of the feeder.

Bench set-up (invented geometry): analyser -> 1.5 m known RG58-type patch cable
(removed with --cable) -> 9.0 m feeder with VF 0.66 -> open end. The reference
is scikit-rf's own transmission-line media and cascade (an independent
implementation of Pozar, Microwave Engineering, 4th ed., section 2.3); the
distance must be within the larger of 5 % or the range resolution.
"""

from __future__ import annotations

import json

import numpy as np
import skrf

from fieldcheck.cli import main
from fieldcheck.constants import C0_M_PER_S

F_HZ = np.linspace(2e6, 402e6, 401)  # evenly stepped, as time-domain location needs
VF = 0.66


def _line(freq, length_m, vf, loss_db_per_100m_at_100mhz):
    f = freq.f
    alpha_np_per_m = loss_db_per_100m_at_100mhz / 100 / 8.685889638 * np.sqrt(f / 100e6)
    gamma = alpha_np_per_m + 1j * 2 * np.pi * f / (vf * C0_M_PER_S)
    return skrf.media.DefinedGammaZ0(freq, z0=50, gamma=gamma).line(length_m, "m")


def test_open_end_found_after_removing_a_known_patch_cable(tmp_path, capsys):
    freq = skrf.Frequency.from_f(F_HZ, unit="hz")
    patch = _line(freq, 1.5, VF, 0.0)          # the known cable, lossless for the check
    feeder = _line(freq, 9.0, VF, 10.0)        # ~RG58-class loss at 100 MHz
    open_end = skrf.media.DefinedGammaZ0(freq, z0=50).open()
    net = patch ** feeder ** open_end
    net.write_touchstone(str(tmp_path / "feeder"), form="ri")
    path = str(tmp_path / "feeder.s1p")
    code = main(["locate", path, "--vf", str(VF), "--cable", "custom:1.5m", "--cable-vf", str(VF), "--json"])
    assert code == 0
    out = json.loads(capsys.readouterr().out)
    far = max(out["reflections"], key=lambda p: p["distance_m"])
    tolerance = max(0.05 * 9.0, out["range_resolution_m"])
    assert abs(far["distance_m"] - 9.0) <= tolerance
    # Without removing the patch cable the end sits 1.5 m further out.
    assert main(["locate", path, "--vf", str(VF), "--json"]) == 0
    out2 = json.loads(capsys.readouterr().out)
    far2 = max(out2["reflections"], key=lambda p: p["distance_m"])
    assert abs(far2["distance_m"] - 10.5) <= max(0.05 * 10.5, out2["range_resolution_m"])
