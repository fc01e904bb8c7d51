"""Method of moments for a centre-fed straight cylindrical dipole (Hallén's equation).

Model
-----
A perfectly conducting tube of total length L and radius a in free space, fed at
its centre by a delta-gap generator of V volts, time convention exp(+j w t).
Hallén's integral equation (Balanis, Antenna Theory: Analysis and Design, 4th ed.,
section 8.3, eq. 8-32; constants from memory, rederived here)::

    int_{-L/2}^{L/2} I(z') K(z - z') dz' = C cos(kz) - j (2 pi / eta) V sin(k|z|)

with the exact kernel of a tubular surface current observed on the surface::

    K(z) = (1 / 2 pi) int_0^{2 pi} exp(-j k R) / R dphi,   R^2 = z^2 + 4 a^2 sin^2(phi / 2)

Discretisation: N (odd) equal pulse segments, point matching at the segment
centres.  The matrix is symmetric Toeplitz, so only its first row is built and
Levinson recursion (``scipy.linalg.solve_toeplitz``) solves it in O(N^2).  The
constant C follows from two right-hand sides and a zero current at the wire
ends (quadratic extrapolation of the three outermost pulses).

Kernel evaluation: K = K_static + K_dynamic with K_static = mean over phi of 1/R.
The segment integral of 1/R is ``asinh`` in closed form; its phi average has a
log singularity only in the self term, whose singular part averages to ln(a)
exactly (mean of ln|2 sin(phi/2)| over a period is 0).  The smooth remainder
(exp(-jkR) - 1)/R uses Gauss-Legendre rules.  So the kernel stays accurate for
segment lengths from well below to far above the radius (L/a 100 to 200,000).

Feed regularisation
-------------------
With the exact kernel the delta-gap current diverges logarithmically at the gap
(G. Fikioris and T. T. Wu, "On the application of numerical methods to Hallen's
equation", IEEE Trans. Antennas Propag. 49(3), 2001; from memory): the input
susceptance grows like 4 k a / eta * ln(1/Delta) as the segment shrinks.  The
coefficient follows from the two-dimensional field of two coplanar half-sheets
at potentials +-V/2 (charge per unit length 4 eps0 a V / z near the gap).  We
remove that segment-dependent term analytically, which leaves the admittance of
a gap referred to the scale of the radius; the real terminal capacitance
depends on the feed hardware and is the fitter's job (a parallel feed C).

Convergence and the default segment count
-----------------------------------------
The remaining discretisation error is close to first order in Delta = L/N, so
the admittance is Richardson-extrapolated (L. F. Richardson, Phil. Trans. R.
Soc. A 210, 1911) from N and about N/2 segments.  Measured half-wave resonant
kL against N = 3201 over L/a = 100..20,000: N = 101 within 0.11 %, the default
N = 201 within 0.05 % (worst near L/a = 1000), N = 401 within 0.02 %
(tests/test_mom.py checks it).  At L/a = 200,000 (the thin end of the range)
N = 401 is within 0.003 % of N = 1601.  The shipped surface is built with N = 401.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg import solve_toeplitz

from ..constants import C0_M_PER_S, ETA0_OHM, TWO_PI
from ..errors import InputError

#: Default segment count (odd); see the module docstring for its accuracy.
DEFAULT_N_SEGMENTS = 201

#: Validated range of length-to-radius ratio L/a (L/d 50 .. 10,000).
L_OVER_A_MIN = 100.0
L_OVER_A_MAX = 200_000.0

_MIN_SEGMENTS = 21
_F_CHUNK = 64  # frequencies per vectorised kernel block (memory ~ 64*N*6 complex)


@dataclass(frozen=True)
class DipoleSolution:
    """Solution of the dipole problem at several frequencies.

    Parameters
    ----------
    f_hz : ndarray of float, shape (n_f,)
        Frequencies, Hz.
    z_in_ohm : ndarray of complex, shape (n_f,)
        Input impedance at the delta gap, ohm (Richardson-extrapolated).
    current_a : ndarray of complex, shape (n_f, n_seg)
        Pulse currents for a 1 V delta-gap generator, A (finest grid, not extrapolated).
    z_m : ndarray of float, shape (n_seg,)
        Segment centres along the wire, m (feed at 0).
    segment_m : float
        Segment length, m.
    """

    f_hz: np.ndarray
    z_in_ohm: np.ndarray
    current_a: np.ndarray
    z_m: np.ndarray
    segment_m: float


def _gauss(n: int, lo: float, hi: float):
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * (hi - lo) * x + 0.5 * (hi + lo), 0.5 * (hi - lo) * w


def _phi_rule(n: int):
    """Nodes and weights for the mean over phi in [0, pi], graded towards phi = 0."""
    u, wu = _gauss(n, 0.0, 1.0)
    phi = np.pi * u * u  # grading resolves the ln-like behaviour near phi = 0
    return phi, wu * 2.0 * u  # weights of (1/pi) int_0^pi ... dphi


def static_row(n_seg: int, segment_m: float, radius_m: float, n_phi: int = 96) -> np.ndarray:
    """Frequency-independent part of the first Toeplitz row, int_seg mean_phi 1/R dz (dimensionless).

    Parameters
    ----------
    n_seg : int
        Number of segments.
    segment_m : float
        Segment length, m.
    radius_m : float
        Wire radius, m.
    n_phi : int
        Gauss-Legendre nodes for the phi average.
    """
    phi, w = _phi_rule(n_phi)
    rho = 2.0 * radius_m * np.sin(0.5 * phi)
    out = np.empty(n_seg)
    h = 0.5 * segment_m
    # self term: 2 asinh(h/rho) = 2 ln(h + sqrt(h^2+rho^2)) - 2 ln(rho); mean of ln(rho) = ln(a)
    out[0] = 2.0 * (np.log(h + np.hypot(h, rho)) @ w) - 2.0 * np.log(radius_m)
    if n_seg > 1:
        n = np.arange(1, n_seg)[:, None]
        z1, z2, r = (n - 0.5) * segment_m, (n + 0.5) * segment_m, rho[None, :]
        out[1:] = np.log((z2 + np.hypot(z2, r)) / (z1 + np.hypot(z1, r))) @ w
    return out


def _dynamic_block(k, first: int, count: int, segment_m: float, radius_m: float,
                   n_z: int, n_phi: int) -> np.ndarray:
    """int_seg mean_phi (exp(-jkR) - 1)/R dz for row entries first..first+count-1, shape (n_k, count).

    ``n_phi = 0`` uses one node at phi = pi/2, where rho^2 equals its mean 2 a^2:
    exact to second order in rho / z, which is all the far entries need.
    """
    xz, wz = np.polynomial.legendre.leggauss(n_z)
    if n_phi == 0:
        phi, wphi = np.array([0.5 * np.pi]), np.array([1.0])
    else:
        phi, wphi = _phi_rule(n_phi)
    rho = 2.0 * radius_m * np.sin(0.5 * phi)
    n = np.arange(first, first + count)
    zeta = (n[:, None] + 0.5 * xz[None, :]) * segment_m
    r = np.sqrt(zeta[:, :, None] ** 2 + rho[None, None, :] ** 2).reshape(count, -1)
    w = ((0.5 * segment_m * wz)[:, None] * wphi[None, :]).ravel()
    kr = np.asarray(k)[:, None, None] * r[None]
    if first == 0:
        g = np.expm1(-1j * kr) / r[None]  # accurate for small kR
    else:
        # R >= a few radii here: cos/sin on real arrays are cheaper than complex expm1
        g = (np.cos(kr) - 1.0 - 1j * np.sin(kr)) / r[None]
    return g @ w


def kernel_rows(k_rad_per_m, n_seg: int, segment_m: float, radius_m: float) -> np.ndarray:
    """First rows of the Hallén matrix, shape (n_k, n_seg), exact kernel (dimensionless).

    Parameters
    ----------
    k_rad_per_m : array of float
        Free-space wavenumbers, rad/m.
    n_seg : int
        Number of segments.
    segment_m, radius_m : float
        Segment length and wire radius, m.
    """
    k = np.atleast_1d(np.asarray(k_rad_per_m, dtype=float))
    rows = np.empty((k.size, n_seg), dtype=complex)
    rows[:] = static_row(n_seg, segment_m, radius_m)
    # entries within a few radii of the observation point need the finer rule
    n_near = int(min(n_seg, np.ceil(4.0 * radius_m / segment_m) + 3))
    rows[:, :n_near] += _dynamic_block(k, 0, n_near, segment_m, radius_m, 6, 8)
    if n_near < n_seg:
        rows[:, n_near:] += _dynamic_block(k, n_near, n_seg - n_near, segment_m, radius_m, 2, 0)
    return rows


def _solve_fixed(k, length_m: float, radius_m: float, n_seg: int):
    """Regularised input admittance (S) and currents (A, 1 V) with n_seg segments."""
    d = length_m / n_seg
    z = (np.arange(n_seg) - 0.5 * (n_seg - 1)) * d
    y = np.empty(k.size, dtype=complex)
    cur = np.empty((k.size, n_seg), dtype=complex)
    end_w = np.array([15.0, -10.0, 3.0]) / 8.0  # quadratic extrapolation to the wire end
    c = n_seg // 2
    for s in range(0, k.size, _F_CHUNK):
        kk = k[s:s + _F_CHUNK]
        rows = kernel_rows(kk, n_seg, d, radius_m)
        for i, ki in enumerate(kk):
            rhs = np.stack([np.cos(ki * z), (-2j * np.pi / ETA0_OHM) * np.sin(ki * np.abs(z))], 1)
            x = solve_toeplitz((rows[i], rows[i]), rhs)  # (c, r) both given: symmetric, not Hermitian
            e1 = end_w @ x[-1:-4:-1, 0]
            e2 = end_w @ x[-1:-4:-1, 1]
            cur[s + i] = x[:, 1] - (e2 / e1) * x[:, 0]
    # remove the ln(Delta) gap susceptance (see module docstring); mean of ln|z| over the
    # centre pulse is ln(Delta/2) - 1
    y[:] = cur[:, c] + 4j * k * radius_m / ETA0_OHM * (np.log(d / (2.0 * radius_m)) - 1.0)
    return y, cur, z, d


def check_geometry(length_m: float, radius_m: float, what: str = "dipole") -> float:
    """Validate a wire's length and radius; return L/a.

    Parameters
    ----------
    length_m, radius_m : float
        Total length and wire radius, m.
    what : str
        Name used in error messages.

    Raises
    ------
    InputError
        Non-positive or non-finite values, radius >= length/2, or L/a outside
        [L_OVER_A_MIN, L_OVER_A_MAX].
    """
    for name, v in (("length", length_m), ("radius", radius_m)):
        if not np.isfinite(v) or v <= 0:
            raise InputError(f"{what} {name} must be a positive finite number of metres; got {v!r}")
    if radius_m >= 0.5 * length_m:
        raise InputError(f"{what} radius {radius_m} m is not smaller than half the length "
                         f"{length_m} m: this is not a wire; check the units (radius, not diameter)")
    l_over_a = length_m / radius_m
    if not (L_OVER_A_MIN * (1 - 1e-9) <= l_over_a <= L_OVER_A_MAX * (1 + 1e-9)):
        raise InputError(
            f"{what} length/radius = {l_over_a:.4g} is outside the validated range "
            f"{L_OVER_A_MIN:g}..{L_OVER_A_MAX:g} (length/diameter 50..100,000) of the thin-wire "
            "model; check length and radius (radius is half the wire diameter)")
    return l_over_a


def _check_f(f_hz) -> np.ndarray:
    f = np.atleast_1d(np.asarray(f_hz, dtype=float))
    if f.ndim != 1 or f.size == 0 or not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise InputError("frequencies must be a non-empty 1-D set of positive finite values in Hz")
    return f


def _coarse_count(n_seg: int) -> int:
    nc = n_seg // 2 + 1
    return nc if nc % 2 else nc - 1


def solve_dipole(f_hz, length_m: float, radius_m: float, n_segments: int | None = None) -> DipoleSolution:
    """Solve Hallén's equation for a centre-fed cylindrical dipole.

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz (positive).
    length_m : float
        Total tip-to-tip length L, m.
    radius_m : float
        Wire radius a, m.  Validated for L/a from 100 to 200,000.
    n_segments : int, optional
        Odd number of segments of the finest grid (default 201, which holds the
        half-wave resonance within 0.05 % of the converged value; at least 21).

    Returns
    -------
    DipoleSolution
        Impedance (Richardson-extrapolated from n_segments and about half of it)
        and the finest-grid currents for a 1 V generator.

    Raises
    ------
    InputError
        Bad frequencies, geometry out of range, or an even/too small segment count.
    """
    f = _check_f(f_hz)
    check_geometry(length_m, radius_m)
    n = DEFAULT_N_SEGMENTS if n_segments is None else int(n_segments)
    if n < _MIN_SEGMENTS or n % 2 == 0:
        raise InputError(f"n_segments must be an odd integer >= {_MIN_SEGMENTS} "
                         f"(the feed sits on the centre segment); got {n_segments!r}")
    k = TWO_PI * f / C0_M_PER_S
    y_f, cur, z, d = _solve_fixed(k, length_m, radius_m, n)
    nc = _coarse_count(n)
    y_c, _, _, _ = _solve_fixed(k, length_m, radius_m, nc)
    # first-order Richardson in h = 1/N
    y = (n * y_f - nc * y_c) / (n - nc)
    return DipoleSolution(f_hz=f, z_in_ohm=1.0 / y, current_a=cur, z_m=z, segment_m=d)


def dipole_impedance(f_hz, length_m: float, radius_m: float, n_segments: int | None = None) -> np.ndarray:
    """Input impedance of a centre-fed cylindrical dipole, ohm (complex, shape (n_f,)).

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz.
    length_m : float
        Total length, m.
    radius_m : float
        Wire radius, m (L/a 100..200,000).
    n_segments : int, optional
        Odd segment count (default 201); see :func:`solve_dipole`.
    """
    return solve_dipole(f_hz, length_m, radius_m, n_segments).z_in_ohm
