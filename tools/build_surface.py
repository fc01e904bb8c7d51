"""Build fieldcheck/data/dipole_surface.npz: MoM dipole admittance over (kL, L/a).

Run from the repository root:  python tools/build_surface.py
Deterministic (no randomness); about half a minute on one core.
The table stores the input admittance Y = 1/Z, which stays smooth through the
full-wave anti-resonance where Z peaks (see fieldcheck/physics/surface.py).
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from fieldcheck.constants import C0_M_PER_S, TWO_PI  # noqa: E402
from fieldcheck.physics import mom  # noqa: E402

#: Grid: kL a little beyond the supported 0.3..7.5 so the spline ends are outside it.
KL_MIN, KL_MAX, KL_STEP = 0.2, 7.6, 0.02
#: L/a grid: log spaced over exactly the validated MoM range.
N_L_OVER_A = 59  # about 18 per decade
#: Segment count used for the table (the MoM's 0.02 % setting, see mom.py).
N_SEGMENTS = 401
FORMAT_VERSION = 1


def build() -> dict:
    """Compute the table; returns the arrays saved in the npz."""
    kl = np.round(np.arange(KL_MIN, KL_MAX + 0.5 * KL_STEP, KL_STEP), 10)
    log_la = np.linspace(np.log(mom.L_OVER_A_MIN), np.log(mom.L_OVER_A_MAX), N_L_OVER_A)
    y = np.empty((kl.size, log_la.size), dtype=complex)
    length_m = 1.0  # the problem scales with kL and L/a only
    f_hz = kl * C0_M_PER_S / (TWO_PI * length_m)
    for j, lla in enumerate(log_la):
        radius_m = length_m / np.exp(lla)
        y[:, j] = 1.0 / mom.dipole_impedance(f_hz, length_m, radius_m, N_SEGMENTS)
    return {
        "kl": kl,
        "log_l_over_a": log_la,
        "y_re_s": y.real,
        "y_im_s": y.imag,
        "n_segments": np.array(N_SEGMENTS),
        "format_version": np.array(FORMAT_VERSION),
    }


def main() -> int:
    t0 = time.perf_counter()
    data = build()
    out = ROOT / "fieldcheck" / "data" / "dipole_surface.npz"
    out.parent.mkdir(parents=True, exist_ok=True)
    np.savez_compressed(out, **data)
    print(f"wrote {out} ({out.stat().st_size / 1e3:.0f} kB, {data['kl'].size} x "
          f"{data['log_l_over_a'].size} points) in {time.perf_counter() - t0:.1f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
