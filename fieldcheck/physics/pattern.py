"""Directivity pattern of a thin centre-fed dipole with a sinusoidal current.

With the standing-wave current I(z) = I0 sin(k (L/2 - |z|)) the far-field power
pattern is (Balanis, Antenna Theory: Analysis and Design, 4th ed., eq. 4-64)

    F(theta) = [(cos(kL/2 cos theta) - cos(kL/2)) / sin theta]^2

and the directivity is D(theta) = 2 F(theta) / Q with Q = int_0^pi F sin theta
dtheta (Balanis 4th ed., eqs. 4-67 to 4-68 and 4-75).  Q has a closed form in
sine and cosine integrals (eq. 4-68), but it cancels badly for short dipoles,
so the working path integrates a rescaled pattern by Gauss-Legendre quadrature
(stable down to kL = 0, where D -> 1.5 sin^2 theta); the closed form is kept for
cross-checking.

A monopole of height h over an infinite, perfectly conducting plane radiates the
upper half of the pattern of the dipole of length 2h with the same current, into
half the solid angle, so its directivity is twice the dipole's (+3.01 dB)
(Balanis 4th ed., section 4.7.4).

All angles given to or returned by public functions are in degrees; theta is the
polar angle measured from the wire axis.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import optimize, signal, special

from ..errors import InputError

#: Euler-Mascheroni constant (DLMF 5.2.3), used by the closed form of Q.
EULER_GAMMA = 0.57721566490153286

#: Largest electrical length accepted (kL); about 32 wavelengths.  The lobe search
#: grid (0.02 degree) still resolves the narrowest lobes there.
KL_MAX = 200.0

_GRID_DEG = np.linspace(0.0, 180.0, 9001)  # 0.02 degree steps, 90 degrees included


def _check_kl(kl, what: str = "kl") -> np.ndarray:
    x = np.asarray(kl, dtype=np.float64)
    if not np.all(np.isfinite(x)) or np.any(x < 0) or np.any(x > KL_MAX):
        raise InputError(
            f"{what} (electrical length k*L, radians) must be finite and within 0..{KL_MAX:g}; "
            f"got {kl!r}: check the length and frequency units"
        )
    return x


def _sinc_u(x):
    """sin(x)/x with the limit 1 at x = 0 (numpy's sinc is normalised by pi)."""
    return np.sinc(np.asarray(x) / np.pi)


def _pattern_scaled(kl, theta_rad):
    """F(theta) divided by (kL/2)^4 / 4; finite and smooth for every kL >= 0.

    Uses cos(a c) - cos a = 2 sin(a(1+c)/2) sin(a(1-c)/2) with a = kL/2, c = cos
    theta, which removes both the 0/0 at the axis and the cancellation for small kL.
    """
    a = 0.5 * np.asarray(kl, dtype=np.float64)
    c = np.cos(theta_rad)
    s = np.sin(theta_rad)
    s = np.where(np.abs(s) < 1e-15, 0.0, s)  # sin(pi) is 1.2e-16 in floating point
    return (s * _sinc_u(a * (1 + c) / 2) * _sinc_u(a * (1 - c) / 2)) ** 2


def _quad_order(kl_max: float) -> int:
    # The integrand has about kL/pi lobes; 64 nodes plus 4 per radian of kL
    # converge to ~1e-13 (checked against the closed form in the tests).
    return int(64 + 4 * np.ceil(kl_max))


def _q_scaled(kl):
    """Q / ((kL/2)^4 / 4) by Gauss-Legendre quadrature over 0..pi; shape of ``kl``."""
    x = np.asarray(kl, dtype=np.float64)
    nodes, weights = np.polynomial.legendre.leggauss(_quad_order(float(np.max(x, initial=0.0))))
    th = 0.5 * np.pi * (nodes + 1.0)
    w = 0.5 * np.pi * weights
    vals = _pattern_scaled(x[..., None], th) * np.sin(th)
    return np.sum(vals * w, axis=-1)


def _scale(kl):
    a = 0.5 * np.asarray(kl, dtype=np.float64)
    return a ** 4 / 4.0


def pattern_function(kl, theta_deg) -> np.ndarray:
    """Power pattern F(theta) of Balanis 4th ed. eq. 4-64 (not normalised).

    Parameters
    ----------
    kl : float or array
        Electrical length k*L of the whole dipole, rad (L total length).
    theta_deg : float or array
        Polar angle from the wire axis, degrees.  Broadcast against ``kl``.

    Returns
    -------
    ndarray
        F(theta), dimensionless; 0 on the axis.
    """
    x = _check_kl(kl)
    th = np.deg2rad(np.asarray(theta_deg, dtype=np.float64))
    return _scale(x) * _pattern_scaled(x, th)


def radiation_integral(kl) -> np.ndarray:
    """Q = int_0^pi F(theta) sin theta dtheta by quadrature (Balanis 4th ed. eq. 4-67).

    Parameters
    ----------
    kl : float or array
        Electrical length k*L, rad.

    Returns
    -------
    ndarray
        Q, dimensionless.  Radiated power is eta |I0|^2 Q / (4 pi) with I0 the
        current maximum, so the radiation resistance at the maximum is eta Q / (2 pi).
    """
    x = _check_kl(kl)
    return _scale(x) * _q_scaled(x)


def radiation_integral_closed_form(kl) -> np.ndarray:
    """Q from sine and cosine integrals, Balanis 4th ed. eq. 4-68 (for cross-checks).

    Loses accuracy for kL below about 0.5 by cancellation; use
    :func:`radiation_integral` in computations.

    Parameters
    ----------
    kl : float or array
        Electrical length k*L, rad, > 0.
    """
    x = _check_kl(kl)
    si1, ci1 = special.sici(x)
    si2, ci2 = special.sici(2 * x)
    return (
        EULER_GAMMA + np.log(x) - ci1
        + 0.5 * np.sin(x) * (si2 - 2 * si1)
        + 0.5 * np.cos(x) * (EULER_GAMMA + np.log(x / 2) + ci2 - 2 * ci1)
    )


def directivity(kl, theta_deg) -> np.ndarray:
    """Directivity D(theta) = 2 F(theta) / Q (linear, Balanis 4th ed. eq. 4-75 form).

    Parameters
    ----------
    kl : float or array
        Electrical length k*L, rad; kL = 0 gives the infinitesimal dipole 1.5 sin^2 theta.
    theta_deg : float or array
        Polar angle from the wire axis, degrees; broadcast against ``kl``.
    """
    x = _check_kl(kl)
    th = np.deg2rad(np.asarray(theta_deg, dtype=np.float64))
    q = _q_scaled(x)
    return 2.0 * _pattern_scaled(x, th) / q


def to_dbi(d_linear) -> np.ndarray:
    """10 log10 of a linear directivity or gain; -inf for zero."""
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(np.asarray(d_linear, dtype=np.float64))


def from_dbi(d_dbi) -> np.ndarray:
    """Linear directivity or gain from dBi."""
    return 10.0 ** (np.asarray(d_dbi, dtype=np.float64) / 10.0)


def pattern_cut(kl: float, theta_deg) -> np.ndarray:
    """Directivity in dBi along ``theta_deg`` (any azimuth: the pattern is a body of revolution).

    Parameters
    ----------
    kl : float
        Electrical length k*L, rad.
    theta_deg : array
        Polar angles, degrees.

    Returns
    -------
    ndarray
        D(theta) in dBi; -inf on the axis and in nulls.
    """
    return to_dbi(directivity(float(kl), theta_deg))


def _refine_max(kl: float, i: int) -> float:
    """Polish a grid maximum of the pattern; returns theta in degrees."""
    lo = _GRID_DEG[max(i - 1, 0)]
    hi = _GRID_DEG[min(i + 1, _GRID_DEG.size - 1)]
    res = optimize.minimize_scalar(
        lambda t: -_pattern_scaled(kl, np.deg2rad(t)), bounds=(lo, hi), method="bounded",
        options={"xatol": 1e-9},
    )
    return float(res.x)


@dataclass(frozen=True)
class PatternSummary:
    """Main figures of a dipole pattern.

    Attributes
    ----------
    kl : float
        Electrical length k*L, rad.
    d_max : float
        Maximum directivity, linear.
    d_max_dbi : float
        Maximum directivity, dBi.
    theta_max_deg : tuple of float
        Direction(s) of the maximum, degrees from the axis (a mirror pair when the
        main lobe leaves broadside).
    hpbw_deg : float
        Half-power beamwidth of the main lobe in a plane containing the wire,
        degrees; NaN when the lobe never falls to half power before the next rise.
    n_lobes : int
        Number of lobes (local maxima of the pattern) over 0..180 degrees.
    """

    kl: float
    d_max: float
    d_max_dbi: float
    theta_max_deg: tuple[float, ...]
    hpbw_deg: float
    n_lobes: int

    def to_dict(self) -> dict:
        return {
            "kl": self.kl, "d_max": self.d_max, "d_max_dbi": self.d_max_dbi,
            "theta_max_deg": list(self.theta_max_deg), "hpbw_deg": self.hpbw_deg,
            "n_lobes": self.n_lobes,
        }


def _half_power_edge(g, t_max: float, f_half: float, step: int, lo: float, hi: float) -> float:
    """Walk from the maximum of ``g`` (degrees -> power) until it is below half power.

    Returns the crossing angle in degrees, or NaN when the pattern rises again (a
    merged lobe) or the range ends first.
    """
    grid = np.arange(lo, hi + 1e-9, 0.02)
    vals = g(grid)
    i = int(np.argmin(np.abs(grid - t_max)))
    prev = vals[i]
    j = i + step
    while 0 <= j < grid.size:
        if vals[j] < f_half:
            a, b = sorted((grid[j - step], grid[j]))
            # vals[j - step] >= f_half > vals[j]: a sign change for brentq
            return float(optimize.brentq(lambda t: g(np.array([t]))[0] - f_half, a, b, xtol=1e-10))
        if vals[j] > prev * (1 + 1e-12) and abs(j - i) > 2:
            return float("nan")
        prev = vals[j]
        j += step
    return float("nan")


def pattern_summary(kl: float) -> PatternSummary:
    """Maximum directivity, its direction(s), half-power beamwidth and lobe count.

    Parameters
    ----------
    kl : float
        Electrical length k*L of the whole dipole, rad (0 .. :data:`KL_MAX`).
    """
    x = float(_check_kl(float(kl)))
    vals = _pattern_scaled(x, np.deg2rad(_GRID_DEG))
    i = int(np.argmax(vals[: _GRID_DEG.size // 2 + 1]))  # symmetric: search 0..90
    t_max = _refine_max(x, i) if 0 < i < _GRID_DEG.size // 2 else float(_GRID_DEG[i])
    if abs(t_max - 90.0) < 1e-6:
        t_max = 90.0
        dirs = (90.0,)
    else:
        dirs = (t_max, 180.0 - t_max)
    f_max = float(_pattern_scaled(x, np.deg2rad(t_max)))
    q = float(_q_scaled(x))
    d_max = 2.0 * f_max / q
    g = lambda t: _pattern_scaled(x, np.deg2rad(t))  # noqa: E731
    lo = _half_power_edge(g, t_max, f_max / 2, -1, 0.0, 180.0)
    hi = _half_power_edge(g, t_max, f_max / 2, +1, 0.0, 180.0)
    peaks, _ = signal.find_peaks(np.concatenate(([-1.0], vals, [-1.0])))
    return PatternSummary(
        kl=x, d_max=d_max, d_max_dbi=float(to_dbi(d_max)), theta_max_deg=dirs,
        hpbw_deg=float(hi - lo), n_lobes=int(peaks.size),
    )


def max_directivity(kl) -> np.ndarray:
    """Maximum directivity (linear) for each kL; see :func:`pattern_summary`."""
    x = _check_kl(kl)
    out = np.array([pattern_summary(float(v)).d_max for v in x.ravel()])
    return out.reshape(x.shape)


def half_power_beamwidth_deg(kl: float) -> float:
    """Half-power beamwidth of the main lobe, degrees (NaN when undefined)."""
    return pattern_summary(kl).hpbw_deg


def lobe_count(kl: float) -> int:
    """Number of lobes of the pattern between 0 and 180 degrees."""
    return pattern_summary(kl).n_lobes


# ---- monopole over an infinite perfect ground plane ---------------------------------

def monopole_directivity(kh, theta_deg) -> np.ndarray:
    """Directivity of a monopole of height h over an infinite perfect ground plane.

    Twice the directivity of the dipole of length 2h for theta <= 90 degrees and
    zero below the plane (Balanis 4th ed., section 4.7.4, image theory).

    Parameters
    ----------
    kh : float or array
        Electrical height k*h of the monopole, rad.
    theta_deg : float or array
        Polar angle from the vertical, degrees (0 .. 180; > 90 is below ground).
    """
    x = _check_kl(2 * np.asarray(kh, dtype=np.float64), "2*kh")
    th = np.asarray(theta_deg, dtype=np.float64)
    d = 2.0 * directivity(x, th)
    return np.where(th <= 90.0, d, 0.0)


def monopole_pattern_summary(kh: float) -> PatternSummary:
    """:func:`pattern_summary` for a monopole of electrical height kh over perfect ground.

    Directions are kept in the upper half space; the beamwidth is the elevation
    beamwidth of the upper half of the image dipole's main lobe (for a broadside lobe,
    the part above the ground plane, i.e. half the dipole's figure).
    """
    s = pattern_summary(2.0 * float(kh))
    d = 2.0 * s.d_max
    dirs = tuple(t for t in s.theta_max_deg if t <= 90.0)
    hpbw = s.hpbw_deg / 2 if dirs == (90.0,) else s.hpbw_deg
    return PatternSummary(
        kl=2.0 * float(kh), d_max=d, d_max_dbi=float(to_dbi(d)), theta_max_deg=dirs,
        hpbw_deg=hpbw, n_lobes=int((s.n_lobes + 1) // 2),
    )


# ---- horizontal dipole over an infinite perfect ground plane ------------------------

def _horizontal_scaled(kl, kh, theta_rad, phi_rad):
    """Power pattern of a horizontal dipole (along x) at height h over perfect ground.

    Element pattern of eq. 4-64 at angle psi from the wire (cos psi = sin theta cos phi)
    times the image-pair factor 4 sin^2(kh cos theta) (Balanis 4th ed. section 4.7.5),
    both rescaled to stay finite as kL -> 0 and kh -> 0.  Zero below the plane.
    """
    cos_psi = np.clip(np.sin(theta_rad) * np.cos(phi_rad), -1.0, 1.0)
    c = np.cos(theta_rad)
    af = (c * _sinc_u(kh * c)) ** 2
    return np.where(c >= 0, _pattern_scaled(kl, np.arccos(cos_psi)) * af, 0.0)


def _horizontal_power(kl, kh):
    n_t = int(48 + 4 * np.ceil(kl / 2 + kh))
    n_p = int(48 + 4 * np.ceil(kl / 2))
    xt, wt = np.polynomial.legendre.leggauss(n_t)
    xp, wp = np.polynomial.legendre.leggauss(n_p)
    th = np.pi / 4 * (xt + 1)
    ph = np.pi / 4 * (xp + 1)  # pattern symmetric in phi about 0 and 90 degrees
    u = _horizontal_scaled(kl, kh, th[:, None], ph[None, :])
    return 4.0 * (np.pi / 4) ** 2 * np.einsum("i,ij,j->", wt * np.sin(th), u, wp)


def horizontal_directivity(kl: float, kh: float, theta_deg, phi_deg) -> np.ndarray:
    """Directivity of a horizontal dipole at height h over an infinite perfect ground plane.

    Parameters
    ----------
    kl : float
        Electrical length k*L of the dipole, rad.
    kh : float
        Electrical height k*h of the wire above the plane, rad.
    theta_deg : float or array
        Angle from the zenith, degrees (> 90 is below ground: zero).
    phi_deg : float or array
        Azimuth from the wire axis, degrees (90 = broadside plane).
    """
    x = float(_check_kl(float(kl)))
    h = float(_check_kl(float(kh), "kh"))
    th = np.deg2rad(np.asarray(theta_deg, dtype=np.float64))
    ph = np.deg2rad(np.asarray(phi_deg, dtype=np.float64))
    return 4 * np.pi * _horizontal_scaled(x, h, th, ph) / _horizontal_power(x, h)


@dataclass(frozen=True)
class HorizontalSummary:
    """Main figures of a horizontal dipole over perfect ground.

    Attributes
    ----------
    d_max, d_max_dbi : float
        Maximum directivity, linear and dBi.
    theta_max_deg, phi_max_deg : float
        Direction of the maximum: from the zenith and from the wire axis, degrees.
    hpbw_deg : float
        Half-power beamwidth in the broadside vertical plane (phi = 90 degrees),
        degrees; NaN when the maximum is not in that plane.
    """

    d_max: float
    d_max_dbi: float
    theta_max_deg: float
    phi_max_deg: float
    hpbw_deg: float

    def to_dict(self) -> dict:
        return dict(self.__dict__)


def horizontal_summary(kl: float, kh: float) -> HorizontalSummary:
    """Maximum directivity, its direction and broadside beamwidth over perfect ground."""
    x = float(_check_kl(float(kl)))
    h = float(_check_kl(float(kh), "kh"))
    tg = np.deg2rad(np.linspace(0, 90, 181))
    u = _horizontal_scaled(x, h, tg[:, None], tg[None, :])
    i, j = np.unravel_index(int(np.argmax(u)), u.shape)
    res = optimize.minimize(
        lambda v: -_horizontal_scaled(x, h, np.deg2rad(v[0]), np.deg2rad(v[1])),
        x0=np.rad2deg([tg[i], tg[j]]), bounds=[(0, 90), (0, 90)], method="L-BFGS-B",
        options={"ftol": 1e-15, "gtol": 1e-12},
    )
    t_max, p_max = (float(v) for v in res.x)
    u_max = max(float(-res.fun), float(u[i, j]))
    if u_max > -res.fun:
        t_max, p_max = float(np.rad2deg(tg[i])), float(np.rad2deg(tg[j]))
    d_max = 4 * np.pi * u_max / _horizontal_power(x, h)
    if t_max < 1e-4:
        t_max, p_max = 0.0, 90.0  # the zenith has no azimuth; report the broadside plane
    if t_max < 1e-4 or abs(p_max - 90.0) < 1e-3:
        # Broadside plane, theta signed across the zenith.
        g = lambda t: _horizontal_scaled(x, h, np.deg2rad(np.abs(t)), np.pi / 2)  # noqa: E731
        lo = _half_power_edge(g, t_max, u_max / 2, -1, -90.0, 90.0)
        hi = _half_power_edge(g, t_max, u_max / 2, +1, -90.0, 90.0)
        hpbw = float(hi - lo)
    else:
        hpbw = float("nan")
    return HorizontalSummary(d_max=float(d_max), d_max_dbi=float(to_dbi(d_max)),
                             theta_max_deg=t_max, phi_max_deg=p_max, hpbw_deg=hpbw)
