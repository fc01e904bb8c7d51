"""Induced-EMF impedance of a thin centre-fed dipole with a sinusoidal current.

Balanis, Antenna Theory: Analysis and Design, 4th ed., section 4.6 and 8.5:

* radiation resistance referred to the current maximum, eq. 4-70,
  R_r = eta/(2 pi) Q, where Q is the radiation integral of eq. 4-68;
* reactance referred to the current maximum, eq. 4-71,
  X_m = eta/(4 pi) {2 Si(kl) + cos(kl)[2 Si(kl) - Si(2kl)]
                    - sin(kl)[2 Ci(kl) - Ci(2kl) - Ci(2 k a^2 / l)]};
* referred to the input terminals by equal power (eq. 4-79):
  R_in = R_r / sin^2(kl/2), and likewise X_in = X_m / sin^2(kl/2).

l is the total length and a the wire radius.  The sinusoidal current is a good
approximation only for thin wires; the input-referred values blow up where
sin(kl/2) = 0 (kl = 2 pi, 4 pi, ...: the current has a node at the feed), which is
a failure of the model, not of the antenna.  The method-of-moments solver is the
tool for those lengths and for thick wires.
"""

from __future__ import annotations

import numpy as np
from scipy import special

from ..constants import ETA0_OHM
from ..errors import InputError
from .pattern import radiation_integral


def _check(kl, radius_over_wavelength):
    x = np.asarray(kl, dtype=np.float64)
    r = np.asarray(radius_over_wavelength, dtype=np.float64)
    if not np.all(np.isfinite(x)) or np.any(x <= 0):
        raise InputError(f"kl (k * total length, rad) must be positive and finite; got {kl!r}")
    if not np.all(np.isfinite(r)) or np.any(r <= 0):
        raise InputError(
            f"radius/wavelength must be positive and finite; got {radius_over_wavelength!r}: "
            "give the wire radius (half the diameter) divided by the free-space wavelength"
        )
    ka = 2.0 * np.pi * r
    if np.any(ka >= 0.5 * x):
        raise InputError(
            "the wire radius is not small against the dipole length (need a << l); the "
            "induced-EMF method assumes a thin wire: use the method-of-moments model instead"
        )
    return x, ka


def induced_emf_impedance_at_max(kl, radius_over_wavelength, eta_ohm: float = ETA0_OHM):
    """Impedance R_r + j X_m referred to the current maximum, ohm.

    Parameters
    ----------
    kl : float or array
        Electrical length k*l of the whole dipole, rad (l total length).
    radius_over_wavelength : float or array
        Wire radius a over free-space wavelength, dimensionless; broadcast against ``kl``.
    eta_ohm : float
        Wave impedance of the medium, ohm (default free space, CODATA 2018).

    Returns
    -------
    complex ndarray
        R_r + j X_m in ohm (Balanis 4th ed. eqs. 4-70 and 4-71).
    """
    x, ka = _check(kl, radius_over_wavelength)
    # R_r = eta Q / (2 pi): Q by quadrature, which stays accurate for short dipoles
    # where the Si/Ci closed form (eq. 4-70) cancels.
    r_r = eta_ohm / (2.0 * np.pi) * radiation_integral(x)
    si1, ci1 = special.sici(x)
    si2, ci2 = special.sici(2.0 * x)
    _, ci_a = special.sici(2.0 * ka ** 2 / x)  # 2 k a^2 / l = 2 (ka)^2 / (kl)
    x_m = eta_ohm / (4.0 * np.pi) * (
        2.0 * si1 + np.cos(x) * (2.0 * si1 - si2) - np.sin(x) * (2.0 * ci1 - ci2 - ci_a)
    )
    return r_r + 1j * x_m


def induced_emf_impedance(kl, radius_over_wavelength, eta_ohm: float = ETA0_OHM):
    """Input impedance R_in + j X_in at the centre feed, ohm (sinusoidal current).

    Parameters
    ----------
    kl : float or array
        Electrical length k*l of the whole dipole, rad.
    radius_over_wavelength : float or array
        Wire radius over free-space wavelength, dimensionless.
    eta_ohm : float
        Wave impedance of the medium, ohm.

    Returns
    -------
    complex ndarray
        (R_r + j X_m) / sin^2(kl/2) (Balanis 4th ed. eq. 4-79); infinite where the
        feed sits at a current node (kl a multiple of 2 pi).
    """
    z_m = induced_emf_impedance_at_max(kl, radius_over_wavelength, eta_ohm)
    s2 = np.sin(0.5 * np.asarray(kl, dtype=np.float64)) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        z = z_m / s2
    # |sin(kl/2)| < 1e-12 is a current node at the feed to double precision.
    return np.where(s2 > 1e-24, z, complex(np.inf, np.inf))


def induced_emf_impedance_f(f_hz, length_m: float, radius_m: float, eta_ohm: float = ETA0_OHM):
    """:func:`induced_emf_impedance` from frequency and dimensions.

    Parameters
    ----------
    f_hz : float or array
        Frequency, Hz.
    length_m : float
        Total dipole length, m.
    radius_m : float
        Wire radius, m.
    eta_ohm : float
        Wave impedance of the medium, ohm.
    """
    from ..constants import C0_M_PER_S

    f = np.asarray(f_hz, dtype=np.float64)
    lam_m = C0_M_PER_S / f
    return induced_emf_impedance(2 * np.pi * length_m / lam_m, radius_m / lam_m, eta_ohm)
