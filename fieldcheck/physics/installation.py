"""How the wire is installed: free space, monopole over ground, horizontal dipole over ground.

All grounds are perfect, infinite planes, handled by image theory (Balanis,
Antenna Theory: Analysis and Design, 4th ed., section 4.7):

* a vertical monopole of height h over the plane has half the input impedance
  of the dipole of length 2 h formed with its image (section 4.7.4);
* a horizontal dipole at height h sees an image current reversed in sign at
  distance 2 h, so Z_in = Z_self - Z_mutual(2 h), Z_mutual being the mutual
  impedance of two parallel side-by-side dipoles (section 8.6).

The mutual impedance here is the reaction (induced EMF) integral evaluated with
the method-of-moments current of the dipole itself rather than an assumed
sinusoid, so it stays valid near the full-wave anti-resonance where the
sinusoidal-current closed form breaks down.  Mixed-potential form (R. F.
Harrington, Field Computation by Moment Methods, 1968, ch. 4; from memory)::

    Z21 = j eta / (4 pi I1(0) I2(0)) * [ k int int I1 I2 g dz dz'
                                         - (1/k) int int I1' I2' g dz dz' ],
    g = exp(-j k R) / R,  R^2 = (z - z')^2 + d^2.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.signal import fftconvolve

from ..constants import C0_M_PER_S, ETA0_OHM, TWO_PI
from ..errors import InputError
from .mom import DipoleSolution, dipole_impedance, solve_dipole

KINDS = ("free", "monopole", "horizontal")


@dataclass(frozen=True)
class Installation:
    """Where and how the antenna is mounted.

    Parameters
    ----------
    kind : {'free', 'monopole', 'horizontal'}
        'free': dipole in free space.  'monopole': vertical monopole over a perfect
        ground plane; the antenna ``length_m`` then means the monopole's height above
        the plane.  'horizontal': horizontal dipole over a perfect ground.
    height_m : float or None
        Height of a horizontal dipole above ground, m; must be None otherwise.
    """

    kind: str = "free"
    height_m: float | None = None

    def __post_init__(self):
        if self.kind not in KINDS:
            raise InputError(f"installation kind {self.kind!r} is not known; use one of {', '.join(KINDS)}")
        if self.kind == "horizontal":
            h = self.height_m
            if h is None or not np.isfinite(h) or h <= 0:
                raise InputError("a horizontal installation needs height_m, a positive height "
                                 f"above ground in metres; got {h!r}")
            object.__setattr__(self, "height_m", float(h))
        elif self.height_m is not None:
            raise InputError(f"height_m is only used for a horizontal dipole; for kind "
                             f"{self.kind!r} leave it out (a monopole's height is its length)")


def mutual_impedance_parallel(solution: DipoleSolution, distance_m: float) -> np.ndarray:
    """Mutual impedance of two identical side-by-side parallel dipoles, ohm, shape (n_f,).

    Parameters
    ----------
    solution : DipoleSolution
        Method-of-moments solution of one dipole; both carry this current.
    distance_m : float
        Axis-to-axis distance, m; should exceed about two segment lengths.

    Notes
    -----
    Referred to the feed currents.  Pulse currents give midpoint sums for the
    vector-potential term and point charges at segment boundaries for the
    scalar-potential term; both sums are correlations over the uniform grid
    (done by FFT).
    """
    cur = solution.current_a
    d = solution.segment_m
    n = cur.shape[1]
    k = TWO_PI * solution.f_hz / C0_M_PER_S

    def green(max_lag):
        r = np.hypot(np.arange(-max_lag, max_lag + 1) * d, distance_m)
        return np.exp(-1j * k[:, None] * r[None, :]) / r[None, :]

    ac_i = fftconvolve(cur, cur[:, ::-1], axes=1)  # lags 1-n .. n-1
    jumps = np.diff(np.pad(cur, ((0, 0), (1, 1))), axis=1)  # I' = sum of jumps * delta(z - z_b)
    ac_q = fftconvolve(jumps, jumps[:, ::-1], axes=1)  # lags -n .. n
    term_i = np.sum(ac_i * green(n - 1), axis=1) * d * d
    term_q = np.sum(ac_q * green(n), axis=1)
    i0 = cur[:, n // 2]
    return 1j * ETA0_OHM / (4.0 * np.pi * i0 * i0) * (k * term_i - term_q / k)


def monopole_impedance(f_hz, height_m: float, radius_m: float, n_segments: int | None = None) -> np.ndarray:
    """Input impedance of a vertical monopole over a perfect ground plane, ohm.

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz.
    height_m : float
        Monopole height above the plane (its physical length), m.
    radius_m : float
        Wire radius, m; 2 height / radius must lie in 100..200,000.
    n_segments : int, optional
        Segment count of the image dipole (see :func:`fieldcheck.physics.mom.solve_dipole`).

    Notes
    -----
    Image theory: half the impedance of the dipole of length 2 * height
    (Balanis, Antenna Theory, 4th ed., section 4.7.4).
    """
    return 0.5 * dipole_impedance(f_hz, 2.0 * height_m, radius_m, n_segments)


def horizontal_dipole_over_ground_impedance(f_hz, length_m: float, radius_m: float, height_m: float,
                                            n_segments: int | None = None) -> np.ndarray:
    """Input impedance of a horizontal centre-fed dipole above a perfect ground, ohm.

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz.
    length_m : float
        Total dipole length, m.
    radius_m : float
        Wire radius, m.
    height_m : float
        Height of the wire above ground, m; at least length/100 and 10 radii.
    n_segments : int, optional
        Segment count (see :func:`fieldcheck.physics.mom.solve_dipole`).

    Notes
    -----
    Z = Z_self - Z_mutual(2 h): the image current is reversed (Balanis 4th ed.,
    section 4.7.2 and 8.6).
    """
    if not np.isfinite(height_m) or height_m < max(0.01 * length_m, 10.0 * radius_m):
        raise InputError(f"height above ground {height_m!r} m is too low for this model: it needs at "
                         f"least length/100 and 10 wire radii ({max(0.01 * length_m, 10 * radius_m):.4g} m)")
    sol = solve_dipole(f_hz, length_m, radius_m, n_segments)
    return sol.z_in_ohm - mutual_impedance_parallel(sol, 2.0 * height_m)


def installed_impedance(f_hz, length_m: float, radius_m: float, installation: Installation,
                        n_segments: int | None = None) -> np.ndarray:
    """Input impedance of the antenna as installed, ohm (method of moments).

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz.
    length_m : float
        Dipole total length, m; for ``kind='monopole'`` the monopole's height above the plane.
    radius_m : float
        Wire radius, m.
    installation : Installation
        Mounting.
    n_segments : int, optional
        Segment count passed to the solver.
    """
    if installation.kind == "free":
        return dipole_impedance(f_hz, length_m, radius_m, n_segments)
    if installation.kind == "monopole":
        return monopole_impedance(f_hz, length_m, radius_m, n_segments)
    return horizontal_dipole_over_ground_impedance(f_hz, length_m, radius_m, installation.height_m,
                                                   n_segments)
