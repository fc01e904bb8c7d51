"""Electrical lengthening of a wire by a dielectric jacket (an approximation).

Used by the bench simulator to build insulated antennas and by the fit's
explanation to say how much of a resonance shift a jacket accounts for.  The
fit itself does not contain it: it sees a longer electrical length.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import InputError


def insulation_length_factor(f_hz, length_m: float, radius_m: float, thickness_m: float,
                             permittivity: float):
    """Electrical lengthening of a dielectric-coated wire (>= 1, dimensionless).

    The coating acts as a series inductance per unit length along the wire
    (J. H. Richmond and E. H. Newman, "Dielectric coated wire antennas", Radio
    Science 11(1), 13-20, 1976; from memory)::

        L_d = (mu0 / 2 pi) (1 - 1 / eps_r) ln(b / a),   b = a + thickness,

    which adds to the wire's own inductance per unit length taken from
    Schelkunoff's average characteristic impedance of a cylindrical antenna,
    Z_a = 120 (ln(L / a) - 1) ohm for the whole wire (S. A. Schelkunoff and
    H. T. Friis, Antennas: Theory and Practice, 1952; from memory), i.e.
    (mu0 / 2 pi)(ln(L / a) - 1) per arm.  The phase constant along the wire
    then grows by ``sqrt(1 + L_d / L_wire)``, which is the factor returned.

    It is a transmission-line approximation: the simulator builds demo
    antennas with it and the fit's explanation quotes it as an estimate; the
    fit itself does not contain it (it sees a longer electrical length).
    In this approximation the factor does not depend on frequency; ``f_hz`` sets
    the shape of the result.  PVC on 1.5 mm wire gives about 2-3 %, inside the
    common handbook rule that insulated wire resonates 2-5 % lower (common
    practice, no source).

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz.
    length_m : float
        Total wire length, m (a monopole: twice its height, the image dipole).
    radius_m : float
        Conductor radius a, m.
    thickness_m : float
        Radial jacket thickness, m, >= 0 (0: bare wire, factor 1).
    permittivity : float
        Relative permittivity of the jacket, >= 1.

    Returns
    -------
    float or ndarray
        Factor F: electrical length = physical length x F.
    """
    f = np.asarray(f_hz, dtype=float)
    if not (math.isfinite(length_m) and math.isfinite(radius_m) and 0 < 2 * radius_m < length_m):
        raise InputError(f"insulated wire: need 0 < 2 radius < length; got radius {radius_m!r} m, "
                         f"length {length_m!r} m")
    if not (math.isfinite(thickness_m) and thickness_m >= 0):
        raise InputError(f"insulation thickness must be >= 0 m; got {thickness_m!r}")
    if not (math.isfinite(permittivity) and permittivity >= 1):
        raise InputError(f"insulation permittivity must be >= 1; got {permittivity!r}")
    wire_log = math.log(length_m / radius_m) - 1.0
    coat_log = (1.0 - 1.0 / permittivity) * math.log1p(thickness_m / radius_m)
    factor = math.sqrt(1.0 + coat_log / wire_log)
    return np.full(f.shape, factor) if f.ndim else factor
