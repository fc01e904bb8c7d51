"""Fast dipole impedance for fitting: an interpolated table of the method-of-moments model.

The table (fieldcheck/data/dipole_surface.npz, built by tools/build_surface.py
with :mod:`fieldcheck.physics.mom` at 401 segments) holds the input admittance
Y = 1/Z of a centre-fed cylindrical dipole in free space over electrical length
kL = 2 pi L / lambda (0.2..7.6 step 0.02) and ln(L/a) (59 points over
L/a = 100..200,000).  Y is interpolated with bicubic splines on its real and
imaginary parts.  Y, not Z, because Z peaks by two orders of magnitude at the
full-wave anti-resonance (kL near 2 pi) while Y stays smooth there and near the
half-wave resonance alike.  Measured on this grid over kL 4.5..7.5 (seeded random
points): worst relative error 8e-7 with Z splines, 2e-7 with Y splines.

Accuracy against the method of moments at the build segment count (checked at
seeded random points in tests/test_surface.py): resonant kL within 0.05 %,
impedance within 0.5 ohm where |X| < 100 ohm near the first resonance
(bench/bench_physics.py measures worst 0.0001 % and 0.003 ohm).
Supported: 0.3 <= kL <= 7.5 and 100 <= L/a <= 200,000; outside it raises.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from importlib import resources

import numpy as np
from scipy.interpolate import RectBivariateSpline
from scipy.optimize import brentq

from ..constants import C0_M_PER_S, TWO_PI
from ..errors import InputError
from .installation import Installation, installed_impedance

#: Supported electrical length range (the table extends 0.1 beyond each end).
KL_MIN, KL_MAX = 0.3, 7.5
#: Supported length-to-radius range (same as the MoM's validated range).
L_OVER_A_MIN, L_OVER_A_MAX = 100.0, 200_000.0

_TABLE = "dipole_surface.npz"
_RTOL = 1e-9


@dataclass(frozen=True, eq=False)
class DipoleSurface:
    """Interpolated free-space dipole admittance table.

    Parameters
    ----------
    kl : ndarray of float
        Grid of electrical lengths kL, rad.
    log_l_over_a : ndarray of float
        Grid of ln(L/a), dimensionless.
    y_s : ndarray of complex, shape (n_kl, n_la)
        Input admittance at the grid points, S.
    n_segments : int
        Segment count the table was built with.
    """

    kl: np.ndarray
    log_l_over_a: np.ndarray
    y_s: np.ndarray
    n_segments: int

    def __post_init__(self):
        kw = dict(kx=3, ky=3, s=0)
        object.__setattr__(self, "_g", RectBivariateSpline(self.kl, self.log_l_over_a, self.y_s.real, **kw))
        object.__setattr__(self, "_b", RectBivariateSpline(self.kl, self.log_l_over_a, self.y_s.imag, **kw))

    @classmethod
    def load(cls, path=None) -> "DipoleSurface":
        """Load the table from ``path`` or the shipped package data."""
        if path is None:
            path = resources.files("fieldcheck") / "data" / _TABLE
        try:
            with resources.as_file(path) if not isinstance(path, str) else _nullctx(path) as p:
                with np.load(p) as d:
                    return cls(kl=d["kl"], log_l_over_a=d["log_l_over_a"],
                               y_s=d["y_re_s"] + 1j * d["y_im_s"], n_segments=int(d["n_segments"]))
        except (OSError, KeyError) as exc:
            raise InputError(f"cannot read the dipole impedance table: {exc}; rebuild it with "
                             "'python tools/build_surface.py'", path=str(path)) from exc

    def admittance_kl(self, kl, l_over_a) -> np.ndarray:
        """Input admittance, S, at electrical length(s) ``kl`` (rad) and ratio(s) ``l_over_a``."""
        kl = np.asarray(kl, dtype=float)
        la = np.asarray(l_over_a, dtype=float)
        _check_range(kl, la)
        if la.ndim == 0 and kl.ndim == 1 and kl.size > 1 and np.all(np.diff(kl) > 0):
            # One ratio, increasing kL (a sweep): grid evaluation computes the
            # ratio's B-spline basis once, about twice as fast as point-wise.
            lla = np.log(la)
            return self._g(kl, lla, grid=True)[:, 0] + 1j * self._b(kl, lla, grid=True)[:, 0]
        kl_b, lla_b = np.broadcast_arrays(kl, np.log(la))
        g = self._g.ev(kl_b.ravel(), lla_b.ravel())
        b = self._b.ev(kl_b.ravel(), lla_b.ravel())
        return (g + 1j * b).reshape(kl_b.shape)

    def impedance_kl(self, kl, l_over_a) -> np.ndarray:
        """Input impedance, ohm, at electrical length(s) ``kl`` (rad) and L/a (dimensionless)."""
        return 1.0 / self.admittance_kl(kl, l_over_a)

    def impedance(self, f_hz, length_m: float, radius_m: float) -> np.ndarray:
        """Free-space dipole input impedance, ohm, shape of ``f_hz``.

        Parameters
        ----------
        f_hz : float or array of float
            Frequencies, Hz.
        length_m : float
            Total length, m.
        radius_m : float
            Wire radius, m.
        """
        if not (length_m > 0 and radius_m > 0):
            raise InputError(f"length and radius must be positive; got {length_m!r} m, {radius_m!r} m")
        kl = TWO_PI * np.asarray(f_hz, dtype=float) * (length_m / C0_M_PER_S)
        return self.impedance_kl(kl, length_m / radius_m)

    def _crossing(self, l_over_a: float, lo: float, hi: float, rising_x: bool) -> float:
        kl = np.linspace(lo, hi, int(round((hi - lo) / 0.01)) + 1)
        x = self.impedance_kl(kl, np.full_like(kl, l_over_a)).imag
        s = np.sign(x)
        want = (s[:-1] < 0) & (s[1:] >= 0) if rising_x else (s[:-1] > 0) & (s[1:] <= 0)
        idx = np.flatnonzero(want)
        if idx.size == 0:
            raise InputError(f"no reactance zero between kL = {lo} and {hi} for L/a = {l_over_a:.4g}")
        i = idx[0]
        f = lambda t: float(self.impedance_kl(t, l_over_a).imag)  # noqa: E731
        return brentq(f, kl[i], kl[i + 1], xtol=1e-10)

    def first_resonance_kl(self, l_over_a: float) -> float:
        """kL of the half-wave series resonance (X rising through 0 below kL = pi), rad."""
        return self._crossing(float(l_over_a), 2.0, 3.5, rising_x=True)

    def antiresonance_kl(self, l_over_a: float) -> float:
        """kL of the first parallel (anti-)resonance (X falling through 0 near 2 pi), rad."""
        return self._crossing(float(l_over_a), 4.5, KL_MAX, rising_x=False)


class _nullctx:
    def __init__(self, p):
        self.p = p

    def __enter__(self):
        return self.p

    def __exit__(self, *exc):
        return False


def _check_range(kl: np.ndarray, la: np.ndarray) -> None:
    if kl.size and (not np.all(np.isfinite(kl)) or kl.min() < KL_MIN * (1 - _RTOL) or kl.max() > KL_MAX * (1 + _RTOL)):
        raise InputError(
            f"electrical length kL = 2 pi L / lambda from {np.nanmin(kl):.4g} to {np.nanmax(kl):.4g} is "
            f"outside the table's supported range {KL_MIN}..{KL_MAX}; narrow the sweep, or use "
            "fieldcheck.physics.mom.dipole_impedance")
    if la.size and (not np.all(np.isfinite(la)) or la.min() < L_OVER_A_MIN * (1 - _RTOL)
                    or la.max() > L_OVER_A_MAX * (1 + _RTOL)):
        raise InputError(
            f"length/radius {np.nanmin(la):.4g} is outside the supported range {L_OVER_A_MIN:g}.."
            f"{L_OVER_A_MAX:g} (length/diameter 50..100,000); check length and radius")


@functools.lru_cache(maxsize=1)
def default_surface() -> DipoleSurface:
    """The shipped table, loaded once per process."""
    return DipoleSurface.load()


def resonant_frequency_hz(length_m: float, radius_m: float, installation: Installation | None = None) -> float:
    """Frequency of the first series resonance (X = 0), Hz.

    Parameters
    ----------
    length_m : float
        Dipole total length, m; for a monopole its height above the plane.
    radius_m : float
        Wire radius, m.
    installation : Installation, optional
        Mounting (default free space).  Free space and monopole use the table;
        a horizontal dipole over ground needs the method of moments (slower).
    """
    inst = installation or Installation("free")
    surf = default_surface()
    if inst.kind in ("free", "monopole"):
        dipole_m = length_m if inst.kind == "free" else 2.0 * length_m
        return surf.first_resonance_kl(dipole_m / radius_m) * C0_M_PER_S / (TWO_PI * dipole_m)
    f0 = surf.first_resonance_kl(length_m / radius_m) * C0_M_PER_S / (TWO_PI * length_m)
    x = lambda f: float(installed_impedance(f, length_m, radius_m, inst)[0].imag)  # noqa: E731
    grid = f0 * np.linspace(0.8, 1.2, 9)
    xs = [x(f) for f in grid]
    for i in range(len(grid) - 1):
        if xs[i] < 0 <= xs[i + 1]:
            return brentq(x, grid[i], grid[i + 1], xtol=1e-7 * f0)
    raise InputError(f"no series resonance within +-20 % of the free-space one ({f0:.6g} Hz) at height "
                     f"{inst.height_m} m; the ground is too close for this estimate")
