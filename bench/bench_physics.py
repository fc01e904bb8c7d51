"""Timing and accuracy figures for the physics core.  Prints; asserts nothing.

Run:  python bench/bench_physics.py
Times are compared with baselines measured in the same run: one numpy complex
exp over 401 x N points (N = default segment count) and the induced-EMF closed
form over the same 401 frequencies.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np
from scipy.optimize import brentq

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from fieldcheck.constants import C0_M_PER_S, TWO_PI  # noqa: E402
from fieldcheck.physics import mom  # noqa: E402
from fieldcheck.physics.surface import default_surface  # noqa: E402


def best_of(fn, repeat):
    t = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        t.append(time.perf_counter() - t0)
    return min(t)


def main() -> int:
    f = np.linspace(130e6, 160e6, 401)
    length_m, radius_m = 1.0, 1e-3
    n = mom.DEFAULT_N_SEGMENTS
    x = np.random.default_rng(0).uniform(0, 10, (401, n))
    t_exp = best_of(lambda: np.exp(1j * x), 20)
    t_mom = best_of(lambda: mom.dipole_impedance(f, length_m, radius_m), 3)
    surf = default_surface()
    t_surf = best_of(lambda: surf.impedance(f, length_m, radius_m), 200)
    print(f"baseline: complex exp over 401 x {n}: {t_exp * 1e3:.2f} ms")
    try:
        from fieldcheck.physics.emf import induced_emf_impedance_f
        t_emf = best_of(lambda: induced_emf_impedance_f(f, length_m, radius_m), 50)
        print(f"baseline: induced-EMF closed form, 401 points: {t_emf * 1e3:.3f} ms")
    except Exception as exc:  # the closed form belongs to another module; report, carry on
        t_emf = float("nan")
        print(f"baseline: induced-EMF closed form unavailable ({exc})")
    print(f"MoM, 401 points, N = {n}: {t_mom * 1e3:.1f} ms  ({t_mom / t_exp:.1f} x exp baseline)")
    print(f"surface, 401 points: {t_surf * 1e3:.3f} ms  ({t_surf / t_exp:.3f} x exp baseline, "
          f"{t_surf / t_emf:.2f} x EMF closed form); MoM / surface = {t_mom / t_surf:.0f}")

    # worst surface error against the MoM at the table's build segment count
    n_build = surf.n_segments
    worst_res, worst_ohm, worst_rel = 0.0, 0.0, 0.0
    for la in np.geomspace(100, 200_000, 9) * np.array([1.0, 1.13, 0.97, 1.07, 1.0, 0.93, 1.11, 0.99, 1.0]):
        mz = lambda kl: mom.dipole_impedance(np.asarray(kl) * C0_M_PER_S / TWO_PI, 1.0, 1.0 / la, n_build)
        kl_res = brentq(lambda t: mz(t)[0].imag, 2.5, 3.14, xtol=1e-11)
        worst_res = max(worst_res, abs(surf.first_resonance_kl(la) / kl_res - 1))
        kl = np.linspace(2.4, 3.6, 49)
        zm, zs = mz(kl), surf.impedance_kl(kl, la)
        near = np.abs(zm.imag) < 100
        worst_ohm = max(worst_ohm, np.abs(zs - zm)[near].max())
        klw = np.linspace(0.3, 7.5, 145) + 0.013
        klw = klw[klw <= 7.5]
        worst_rel = max(worst_rel, np.max(np.abs(surf.impedance_kl(klw, la) / mz(klw) - 1)))
    print(f"surface vs MoM (N = {n_build}), L/a 100..200,000: resonant kL {100 * worst_res:.5f} %, "
          f"{worst_ohm:.4f} ohm where |X| < 100 near resonance, {100 * worst_rel:.4f} % in Z over kL 0.3..7.5")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
