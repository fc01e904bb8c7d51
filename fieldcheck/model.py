"""The antenna as the analyser sees it: wire physics plus feed-point parasitics.

Chain, from the wire outward (all at the antenna's own terminals once the
reference plane has been moved there)::

    Z_wire(f; L)          method-of-moments impedance of the perfectly conducting
                          wire of electrical length L, in its installation
    + R_loss              series loss resistance at the feed (conductor, joints)
    || C_feed, G_feed     shunt capacitance and conductance across the feed terminals
                          (gap and hardware; a lossy choke or balun core)
    / balun_ratio         ideal balun impedance ratio (1 or 4)
    -> Gamma vs z0        reflection seen by the feed line
    * exp(-2 j w tau)     residual one-way delay tau left in the reference plane

``L`` is the *electrical* length: tip to tip for a dipole, height for a monopole.
The fit adjusts it; the difference from the as-built length is what the user
wants explained (length error, end effect, insulation).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np

from .constants import C0_M_PER_S, TWO_PI
from .physics.installation import Installation


@dataclass(frozen=True)
class AntennaModel:
    """Physical inputs held fixed during a fit.

    Parameters
    ----------
    form : {'dipole', 'monopole'}
    radius_m : float
        Bare conductor radius, m.
    installation : Installation
    balun_ratio : float
        Impedance ratio antenna side / line side (1 for none or 1:1, 4 for 4:1).
    z0_ohm : float
        System (feed line) impedance the match is judged against, ohm.
    """

    form: str
    radius_m: float
    installation: Installation = field(default_factory=Installation)
    balun_ratio: float = 1.0
    z0_ohm: float = 50.0

    #: For a horizontal dipole, the wire length at which the mutual impedance with
    #: the ground image is evaluated (see :func:`installed_impedance_fast`).
    mutual_ref_length_m: float | None = None

    def z_wire(self, f_hz, length_m: float) -> np.ndarray:
        """Lossless wire impedance at the antenna terminals, ohm."""
        return installed_impedance_fast(np.asarray(f_hz, float), float(length_m), self.radius_m,
                                        self.installation, self.mutual_ref_length_m)

    def z_terminals(self, f_hz, length_m: float, r_loss_ohm: float = 0.0,
                    c_feed_f: float = 0.0, g_feed_s: float = 0.0) -> np.ndarray:
        """Impedance at the antenna terminals including loss and the feed shunt, ohm."""
        f = np.asarray(f_hz, float)
        z = self.z_wire(f, length_m) + r_loss_ohm
        if c_feed_f or g_feed_s:
            z = z / (1.0 + (g_feed_s + 1j * TWO_PI * f * c_feed_f) * z)
        return z

    def gamma(self, f_hz, length_m: float, r_loss_ohm: float = 0.0, c_feed_f: float = 0.0,
              delay_s: float = 0.0, g_feed_s: float = 0.0) -> np.ndarray:
        """Reflection seen by the feed line (through the balun), with a residual delay."""
        f = np.asarray(f_hz, float)
        z = self.z_terminals(f, length_m, r_loss_ohm, c_feed_f, g_feed_s) / self.balun_ratio
        g = (z - self.z0_ohm) / (z + self.z0_ohm)
        if delay_s:
            g = g * np.exp(-2j * TWO_PI * f * delay_s)
        return g

    def gamma_from_values(self, f_hz, v: dict) -> np.ndarray:
        return self.gamma(f_hz, v["length_m"], v["r_loss_ohm"], v["c_feed_f"], v["delay_s"],
                          v.get("g_feed_s", 0.0))


def installed_impedance_fast(f_hz, length_m: float, radius_m: float, installation: Installation,
                             mutual_ref_length_m: float | None = None) -> np.ndarray:
    """Installed wire impedance from the interpolated surface, fast enough to fit with.

    Free space and monopole come straight from the surface (image theory: a
    monopole of height h is half the dipole of length 2 h).  A horizontal dipole
    adds minus the mutual impedance with its image at 2 h, computed once by the
    method of moments at ``mutual_ref_length_m`` and cached: it varies slowly
    with the wire length, so a fit evaluates it at its start length and is
    re-run once at the fitted length.  Without ``mutual_ref_length_m`` it
    follows ``length_m`` (interpolated between cached lengths 0.2 % apart), as
    predictions at another length need.
    """
    from .physics.surface import default_surface

    surf = default_surface()
    if installation.kind == "monopole":
        return 0.5 * surf.impedance(f_hz, 2.0 * length_m, radius_m)
    z = surf.impedance(f_hz, length_m, radius_m)
    if installation.kind == "horizontal":
        f = np.asarray(f_hz, float)
        if mutual_ref_length_m is not None:
            z = z - _image_mutual_at(f, float(mutual_ref_length_m), radius_m, installation.height_m)
        else:
            # Lengths on a 0.2 % geometric grid, interpolated linearly: a root
            # search over length then reuses a few cached solutions.
            q = np.log(length_m) / np.log(_MUTUAL_LENGTH_STEP)
            k = np.floor(q)
            t = q - k
            lo, hi = (float(_MUTUAL_LENGTH_STEP ** j) for j in (k, k + 1))
            z = z - ((1 - t) * _image_mutual_at(f, lo, radius_m, installation.height_m)
                     + t * _image_mutual_at(f, hi, radius_m, installation.height_m))
    return z


_MUTUAL_LENGTH_STEP = 1.002


def _image_mutual_at(f, length_m, radius_m, height_m):
    _, re_spline, im_spline = _image_mutual(length_m, radius_m, height_m)
    return re_spline(f) + 1j * im_spline(f)


@functools.lru_cache(maxsize=32)
def _image_mutual(length_m: float, radius_m: float, height_m: float):
    """Mutual impedance with the ground image, tabulated over the surface's kL range.

    Computed once per (length, radius, height) by the method of moments with
    101 segments (the mutual term is smooth and far less sensitive to the
    segment count than the self term, which comes from the 401-segment table)
    on 241 frequencies, then interpolated with cubic splines: the fit calls it
    at arbitrary frequencies many times.
    """
    from scipy.interpolate import CubicSpline

    from .physics.installation import mutual_impedance_parallel
    from .physics.mom import solve_dipole
    from .physics.surface import KL_MAX, KL_MIN

    f = np.linspace(KL_MIN, KL_MAX, 241) * C0_M_PER_S / (TWO_PI * length_m)
    sol = solve_dipole(f, length_m, radius_m, n_segments=101)
    z = mutual_impedance_parallel(sol, 2.0 * height_m)
    return f, CubicSpline(f, z.real), CubicSpline(f, z.imag)


def model_from_description(desc) -> AntennaModel:
    """Build the fixed part of the model from an antenna description."""
    return AntennaModel(
        form=desc.antenna.form,
        radius_m=desc.antenna.radius_m,
        installation=desc.installation,
        balun_ratio=desc.feed.balun_ratio,
        z0_ohm=desc.feed.system_impedance_ohm,
    )
