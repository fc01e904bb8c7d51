"""Conductor loss of wire antennas, radiation efficiency, gain and realized gain.

Skin depth and surface resistance of a good conductor (Pozar, Microwave
Engineering, 4th ed., section 1.7: delta = sqrt(2 / (omega mu sigma)),
R_s = 1 / (sigma delta) = sqrt(omega mu / (2 sigma)); equation numbers from memory).

Wire resistance per metre uses the exact internal impedance of a solid round wire
(Ramo, Whinnery and Van Duzer, Fields and Waves in Communication Electronics,
3rd ed., section 5.6), written with modified Bessel functions:

    Z_i = gamma / (2 pi a sigma) * I0(gamma a) / I1(gamma a),  gamma = (1 + j) / delta.

It tends to the DC resistance 1 / (pi a^2 sigma) when delta >> a and to
R_s (1 + j) / (2 pi a) when delta << a, so no thin-wire refusal is needed.

The loss resistance referred to the feed current I_f (Balanis, Antenna Theory,
4th ed., section 2.14, eq. 2-90 for the uniform and sinusoidal cases):

    R_loss = (1 / |I_f|^2) * int R'(f) |I(z)|^2 dz

Efficiency, gain and realized gain follow the definitions of IEEE Std 145-2013
(IEEE Standard for Definitions of Terms for Antennas): radiation efficiency
e = P_rad / P_accepted = R_rad / (R_rad + R_loss); gain G = e D; realized gain
G_r = (1 - |Gamma|^2) G.
"""

from __future__ import annotations

import numpy as np
from scipy import special

from ..constants import MU0_H_PER_M
from ..errors import InputError
from .materials import Material
from .pattern import to_dbi

#: Copper cladding is treated as solid copper while the copper skin depth is below
#: this fraction of the cladding thickness (fields fall to e^-3 = 5 % at the core).
CLAD_SKIN_FRACTION = 1.0 / 3.0


def skin_depth_m(f_hz, conductivity_s_per_m: float, relative_permeability: float = 1.0):
    """Skin depth delta = 1 / sqrt(pi f mu sigma), m.

    Parameters
    ----------
    f_hz : float or array
        Frequency, Hz (> 0).
    conductivity_s_per_m : float
        Conductivity, S/m.
    relative_permeability : float
        Relative permeability, dimensionless.
    """
    f = np.asarray(f_hz, dtype=np.float64)
    return 1.0 / np.sqrt(np.pi * f * relative_permeability * MU0_H_PER_M * conductivity_s_per_m)


def surface_resistance_ohm(f_hz, conductivity_s_per_m: float, relative_permeability: float = 1.0):
    """Surface resistance R_s = sqrt(pi f mu / sigma) = 1 / (sigma delta), ohm per square.

    Parameters
    ----------
    f_hz : float or array
        Frequency, Hz.
    conductivity_s_per_m : float
        Conductivity, S/m.
    relative_permeability : float
        Relative permeability, dimensionless.
    """
    f = np.asarray(f_hz, dtype=np.float64)
    return np.sqrt(np.pi * f * relative_permeability * MU0_H_PER_M / conductivity_s_per_m)


def _solid_wire_impedance(f_hz, radius_m, sigma, mu_r):
    delta = skin_depth_m(f_hz, sigma, mu_r)
    gamma = (1 + 1j) / delta
    x = gamma * radius_m
    # Exponentially scaled Bessel functions: the ratio is unchanged, overflow is avoided.
    ratio = special.ive(0, x) / special.ive(1, x)
    return gamma / (2 * np.pi * radius_m * sigma) * ratio


def _clad_wire_impedance(f_hz, radius_m, m: Material):
    """Copper layer over a steel core: planar layered estimate with a DC floor.

    The cladding is a transmission line of length t terminated by the core's wave
    impedance (loaded-line formula, Pozar 4th ed. section 2.3, with j tan(beta l)
    -> tanh(gamma t)); valid while the core skin depth is small against the radius.
    The DC resistance of copper and steel in parallel is a floor it cannot go below.
    """
    core = m.core
    t = m.cladding_m
    w = 2 * np.pi * np.asarray(f_hz, dtype=np.float64)
    g1 = np.sqrt(1j * w * m.relative_permeability * MU0_H_PER_M * m.conductivity_s_per_m)
    g2 = np.sqrt(1j * w * core.relative_permeability * MU0_H_PER_M * core.conductivity_s_per_m)
    z1 = g1 / m.conductivity_s_per_m
    z2 = g2 / core.conductivity_s_per_m
    th = np.tanh(g1 * t)
    zs = z1 * (z2 + z1 * th) / (z1 + z2 * th)
    z_layer = zs / (2 * np.pi * radius_m)
    b = max(radius_m - t, 0.0)
    g_dc = np.pi * ((radius_m ** 2 - b ** 2) * m.conductivity_s_per_m + b ** 2 * core.conductivity_s_per_m)
    r = np.maximum(z_layer.real, 1.0 / g_dc)
    return r + 1j * z_layer.imag


def _clad_is_copper(f_hz, m: Material):
    d = skin_depth_m(f_hz, m.conductivity_s_per_m, m.relative_permeability)
    return d < CLAD_SKIN_FRACTION * m.cladding_m


def internal_impedance_per_m(f_hz, radius_m: float, material: Material):
    """Internal impedance per unit length of a round wire, ohm/m (complex).

    Parameters
    ----------
    f_hz : float or array
        Frequency, Hz.
    radius_m : float
        Wire radius, m.
    material : Material
        Conductor; a clad wire (``material.core`` set) uses the cladding alone while
        its skin depth is below :data:`CLAD_SKIN_FRACTION` of the cladding thickness,
        otherwise the layered estimate (see :func:`material_notes`).
    """
    f = np.asarray(f_hz, dtype=np.float64)
    if not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise InputError(f"frequencies must be positive and finite; got {f_hz!r}")
    if not (np.isfinite(radius_m) and radius_m > 0):
        raise InputError(f"wire radius must be positive, in metres; got {radius_m!r}")
    z = _solid_wire_impedance(f, radius_m, material.conductivity_s_per_m, material.relative_permeability)
    if material.is_clad:
        if material.cladding_m >= radius_m:
            raise InputError(
                f"cladding {material.cladding_m * 1e3:g} mm is not thinner than the wire radius "
                f"{radius_m * 1e3:g} mm: check the diameter and cladding thickness"
            )
        z = np.where(_clad_is_copper(f, material), z, _clad_wire_impedance(f, radius_m, material))
    return z


def resistance_per_m(f_hz, radius_m: float, material: Material):
    """AC resistance per unit length of a round wire, ohm/m (real part of Z_i)."""
    return np.real(internal_impedance_per_m(f_hz, radius_m, material))


def material_notes(f_hz, radius_m: float, material: Material) -> tuple[str, ...]:
    """Caveats a report should show with a loss figure for this material and band.

    Parameters
    ----------
    f_hz : float or array
        Frequencies, Hz.
    radius_m : float
        Wire radius, m.
    material : Material
        Conductor.
    """
    f = np.atleast_1d(np.asarray(f_hz, dtype=np.float64))
    notes = []
    core_matters = material.is_clad and not np.all(_clad_is_copper(f, material))
    if material.relative_permeability > 1.0 or (core_matters and material.core.relative_permeability > 1):
        notes.append(
            "steel permeability is uncertain (tens to hundreds): the loss figure may be off by a factor of about 3"
        )
    if core_matters:
        d = skin_depth_m(f.min(), material.conductivity_s_per_m)
        notes.append(
            f"copper skin depth {d * 1e6:.3g} um is not below a third of the {material.cladding_m * 1e3:.3g} mm "
            "cladding: the steel core carries current; loss is a layered estimate"
        )
    d_max = skin_depth_m(f.min(), material.conductivity_s_per_m, material.relative_permeability)
    if d_max > radius_m / 3:
        notes.append(
            f"skin depth {d_max * 1e6:.3g} um exceeds a third of the wire radius: exact round-wire "
            "(Bessel) resistance used, close to the DC value"
        )
    return tuple(notes)


def loss_resistance_from_current(z_m, current_a, feed_current_a, segment_m, f_hz,
                                 radius_m: float, material: Material):
    """Conductor loss resistance referred to the feed current, ohm, from a current distribution.

    Midpoint rule over segments (pulse basis): R_loss = sum R'(f) |I_n|^2 dz_n / |I_f|^2.

    Parameters
    ----------
    z_m : array, shape (n_seg,)
        Segment centres along the wire, m (only the count is used; kept for checks).
    current_a : complex array, shape (n_f, n_seg)
        Segment currents, A (for example from the method of moments with a 1 V feed).
    feed_current_a : complex array, shape (n_f,)
        Current at the feed terminals, A.
    segment_m : float or array, shape (n_seg,)
        Segment lengths, m.
    f_hz : array, shape (n_f,)
        Frequencies, Hz.
    radius_m : float
        Wire radius, m.
    material : Material
        Conductor.

    Returns
    -------
    ndarray, shape (n_f,)
        Loss resistance, ohm.
    """
    f = np.atleast_1d(np.asarray(f_hz, dtype=np.float64))
    i = np.atleast_2d(np.asarray(current_a, dtype=np.complex128))
    z = np.asarray(z_m, dtype=np.float64)
    i_f = np.atleast_1d(np.asarray(feed_current_a, dtype=np.complex128))
    if i.shape != (f.size, z.size) or i_f.shape != (f.size,):
        raise InputError(
            f"current shape {i.shape} does not match {f.size} frequencies x {z.size} segments "
            f"(feed current shape {i_f.shape})"
        )
    dz = np.broadcast_to(np.asarray(segment_m, dtype=np.float64), z.shape)
    r_per_m = resistance_per_m(f, radius_m, material)
    return r_per_m * np.sum(np.abs(i) ** 2 * dz, axis=-1) / np.abs(i_f) ** 2


def sinusoidal_loss_resistance(kl, length_m: float, r_per_m, referred_to: str = "input"):
    """Loss resistance of a dipole with current I0 sin(k(l/2 - |z|)), ohm (closed form).

    int |I|^2 dz = |I0|^2 l (1/2 - sin(kl) / (2 kl)); for a half-wave dipole this is
    l/2, giving Balanis 4th ed. eq. 2-90b, R_loss = (l / (2 pi a)) R_s / 2.

    Parameters
    ----------
    kl : float or array
        Electrical length k*l, rad.
    length_m : float
        Total length, m.
    r_per_m : float or array
        Resistance per unit length, ohm/m (e.g. :func:`resistance_per_m`).
    referred_to : {'input', 'max'}
        Refer to the feed current (divide by sin^2(kl/2)) or to the current maximum.
    """
    x = np.asarray(kl, dtype=np.float64)
    r_max = np.asarray(r_per_m) * length_m * (0.5 - np.sin(x) / (2.0 * x))
    if referred_to == "max":
        return r_max
    if referred_to != "input":
        raise InputError(f"referred_to must be 'input' or 'max', not {referred_to!r}")
    with np.errstate(divide="ignore"):
        return r_max / np.sin(0.5 * x) ** 2


def radiation_efficiency(r_rad_ohm, r_loss_ohm):
    """e = R_rad / (R_rad + R_loss), both referred to the same current (IEEE Std 145-2013)."""
    r = np.asarray(r_rad_ohm, dtype=np.float64)
    rl = np.asarray(r_loss_ohm, dtype=np.float64)
    if np.any(r <= 0) or np.any(rl < 0):
        raise InputError("radiation resistance must be > 0 and loss resistance >= 0 ohm")
    return r / (r + rl)


def gain(efficiency, directivity):
    """Gain G = e D, linear (IEEE Std 145-2013 'gain')."""
    return np.asarray(efficiency) * np.asarray(directivity)


def realized_gain(gain_linear, gamma):
    """Realized gain (1 - |Gamma|^2) G, linear (IEEE Std 145-2013 'realized gain').

    Parameters
    ----------
    gain_linear : float or array
        Gain, linear.
    gamma : complex or array
        Reflection coefficient at the antenna terminals against the system impedance.
    """
    return (1.0 - np.abs(np.asarray(gamma)) ** 2) * np.asarray(gain_linear)


def gain_dbi(efficiency, directivity):
    """Gain in dBi."""
    return to_dbi(gain(efficiency, directivity))


def realized_gain_dbi(efficiency, directivity, gamma):
    """Realized gain in dBi."""
    return to_dbi(realized_gain(gain(efficiency, directivity), gamma))


def efficiency_db(efficiency):
    """Radiation efficiency in dB (<= 0)."""
    return to_dbi(efficiency)


def installed_conductor_loss_ohm(f_hz, length_m: float, radius_m: float, installation,
                                 material: Material) -> np.ndarray:
    """Conductor loss of an installed antenna referred to its feed, ohm, from the MoM current.

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz.
    length_m : float
        Dipole total length, or monopole height above its ground plane, m.
    radius_m : float
        Wire radius, m.
    installation : fieldcheck.physics.installation.Installation
    material : Material

    Notes
    -----
    The current is the free-space dipole's (for a monopole, its image dipole of
    twice the height, of which the real wire is the upper half: half the loss).
    Over ground the current shape changes little with height, so the
    free-space current is used for a horizontal dipole too.
    """
    from .mom import solve_dipole

    monopole = installation.kind == "monopole"
    sol = solve_dipole(f_hz, 2.0 * length_m if monopole else length_m, radius_m)
    r = loss_resistance_from_current(sol.z_m, sol.current_a, 1.0 / sol.z_in_ohm,
                                     sol.segment_m, sol.f_hz, radius_m, material)
    return 0.5 * r if monopole else r
