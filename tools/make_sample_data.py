"""Regenerate sample_data/ sweeps with the bench simulator (deterministic seeds).

The scenarios are invented for demos; see sample_data/README.md.
Usage: python tools/make_sample_data.py
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np

from fieldcheck.antenna import load_description
from fieldcheck.bench_effects import BenchEffects, Fault
from fieldcheck.simulate import simulate_sweep
from fieldcheck.touchstone import write_touchstone

ROOT = Path(__file__).resolve().parents[1] / "sample_data"
NOTE = ("SIMULATED demo sweep written by tools/make_sample_data.py "
        "(invented scenario; not a reference measurement)")


def _with_arm(desc, arm_m):
    return replace(desc, antenna=replace(desc.antenna, arm_length_m=arm_m))


def _write(sim, path, extra=()):
    write_touchstone(sim.sweep, path, comments=(NOTE, *extra))
    print(f"{path.relative_to(ROOT.parent)}: {sim.sweep.n_points} points")


def main() -> None:
    # 2 m portable dipole, through 5 m of RG58 and a 1:1 balun.
    d = load_description(str(ROOT / "portable-2m" / "antenna.toml"))
    f = np.linspace(120e6, 175e6, 401)
    _write(simulate_sweep(d, f, BenchEffects.typical(11), rng=11), ROOT / "portable-2m" / "sweep.s1p")

    # Faults on the same dipole (for diagnose and locate).
    faults = ROOT / "faults"
    _write(simulate_sweep(d, f, BenchEffects.typical(12), rng=12, fault="shorted-feed"),
           faults / "shorted-feed.s1p")
    _write(simulate_sweep(d, f, BenchEffects.typical(13), rng=13, fault="open-element"),
           faults / "broken-arm.s1p")
    f_wide = np.linspace(1e6, 501e6, 501)  # uniform, for time-domain location
    _write(simulate_sweep(d, f_wide, BenchEffects.typical(14), rng=14, fault=Fault("cable-open", 3.2)),
           faults / "cable-cut-3m2.s1p", ("the RG58 cable is cut 3.2 m from the analyser",))

    # 868 MHz batch: five units with small build spread, at the SMA connector.
    d = load_description(str(ROOT / "sensor-868" / "antenna.toml"))
    f = np.linspace(700e6, 1050e6, 401)
    rng = np.random.default_rng(868)
    for i in range(1, 6):
        arm = d.antenna.arm_length_m + rng.normal(0, 0.6e-3)
        _write(simulate_sweep(_with_arm(d, arm), f, BenchEffects.typical(800 + i), rng=800 + i),
               ROOT / "sensor-868" / f"unit{i:02d}.s1p")

    # 40 m dipole at 10 m, 20 m of RG213, PVC insulation.
    d = load_description(str(ROOT / "hf-40m-at-10m" / "antenna.toml"))
    f = np.linspace(5.8e6, 8.4e6, 401)
    _write(simulate_sweep(d, f, BenchEffects.typical(40), rng=40), ROOT / "hf-40m-at-10m" / "sweep.s1p")

    # 70 cm monopole cut too short.
    d = load_description(str(ROOT / "too-short-70cm" / "antenna.toml"))
    f = np.linspace(380e6, 560e6, 401)
    _write(simulate_sweep(d, f, BenchEffects.typical(70), rng=70), ROOT / "too-short-70cm" / "sweep.s1p")

    # 6 m dipole trimmed in two steps.
    d = load_description(str(ROOT / "trim-history-6m" / "antenna.toml"))
    f = np.linspace(40e6, 62e6, 401)
    effects = BenchEffects.typical(6)
    lines = ["# sweep  arm_length (each arm, feed terminal to tip)"]
    for i, arm_mm in enumerate((1480.0, 1466.0, 1455.0)):
        name = f"cut{i}.s1p"
        _write(simulate_sweep(_with_arm(d, arm_mm / 1e3), f, effects, rng=60 + i), ROOT / "trim-history-6m" / name)
        lines.append(f"{name}  {arm_mm:.0f}mm")
    (ROOT / "trim-history-6m" / "lengths.txt").write_text("\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
