"""Learn from a trim history: several sweeps of one antenna at known lengths.

Each sweep's fit gives an electrical length L_el,i at a known physical length
L_i.  A straight line L_el = kappa * L + delta separates

* the proportional part kappa (a velocity factor 1/kappa, from insulation or
  surroundings: it scales with every millimetre cut), and
* the constant part delta (end effects, feed hardware: it stays put when the
  tips are cut), reported per free end.

The next cut then uses the measured sensitivity kappa instead of the
one-sweep bracket in :mod:`fieldcheck.trim`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import InputError

#: Standard uncertainty of a physical length measured with a steel rule, per
#: measurement of one arm, m (common practice, no source: 0.5 mm).
DEFAULT_LENGTH_SIGMA_M = 0.5e-3


@dataclass(frozen=True)
class TrimHistory:
    """Straight-line fit of electrical against physical length.

    Attributes
    ----------
    kappa, kappa_sigma : float
        d(electrical)/d(physical) and its standard uncertainty.
    offset_m, offset_sigma_m : float
        Constant part delta (total over all ends), m.
    n_ends : int
    physical_m, electrical_m, electrical_sigma_m : tuple of float
        The points used, in the order given.
    reduced_chi2 : float or None
        None with exactly two points (the line passes through both).
    """

    kappa: float
    kappa_sigma: float
    offset_m: float
    offset_sigma_m: float
    n_ends: int
    physical_m: tuple
    electrical_m: tuple
    electrical_sigma_m: tuple
    reduced_chi2: float | None

    @property
    def end_effect_per_end_m(self) -> float:
        return self.offset_m / self.n_ends

    def to_dict(self) -> dict:
        return {
            "kappa": self.kappa, "kappa_sigma": self.kappa_sigma,
            "velocity_factor": 1.0 / self.kappa,
            "offset_m": self.offset_m, "offset_sigma_m": self.offset_sigma_m,
            "end_effect_per_end_m": self.end_effect_per_end_m,
            "n_ends": self.n_ends,
            "points": [
                {"physical_m": p, "electrical_m": e, "electrical_sigma_m": s}
                for p, e, s in zip(self.physical_m, self.electrical_m, self.electrical_sigma_m)
            ],
            "reduced_chi2": self.reduced_chi2,
        }


def fit_history(physical_m, electrical_m, electrical_sigma_m, n_ends: int,
                length_sigma_m: float = DEFAULT_LENGTH_SIGMA_M) -> TrimHistory:
    """Weighted straight line through (physical, electrical) length pairs.

    Parameters
    ----------
    physical_m : sequence of float
        As-built model length of each sweep (dipole tip to tip incl. gap; monopole height), m.
    electrical_m, electrical_sigma_m : sequence of float
        Fitted electrical lengths and their standard errors, m.
    n_ends : int
        2 for a dipole, 1 for a monopole.
    length_sigma_m : float
        Uncertainty of each per-arm physical measurement, m; it enters the
        weights as kappa * sqrt(n_ends) * length_sigma_m (effective variance).
    """
    x = np.asarray(physical_m, float)
    y = np.asarray(electrical_m, float)
    sy = np.asarray(electrical_sigma_m, float)
    if x.size < 2:
        raise InputError("a trim history needs at least two sweeps at different lengths")
    if np.ptp(x) < 4 * length_sigma_m * np.sqrt(n_ends):
        raise InputError(
            f"the lengths in the history differ by only {np.ptp(x) * 1e3:.1f} mm in total; "
            "cut at least a few millimetres between sweeps so the change can be measured")
    kappa = 1.0
    for _ in range(3):  # effective-variance weights depend on kappa; converges fast
        s2 = sy**2 + (kappa * np.sqrt(n_ends) * length_sigma_m) ** 2
        w = 1.0 / s2
        A = np.column_stack([x, np.ones_like(x)])
        cov = np.linalg.inv(A.T @ (A * w[:, None]))
        kappa, offset = cov @ (A.T @ (w * y))
    resid = y - (kappa * x + offset)
    red = None
    if x.size > 2:
        red = float(np.sum(w * resid**2) / (x.size - 2))
        cov = cov * max(1.0, red)
    return TrimHistory(
        kappa=float(kappa), kappa_sigma=float(np.sqrt(cov[0, 0])),
        offset_m=float(offset), offset_sigma_m=float(np.sqrt(cov[1, 1])),
        n_ends=n_ends, physical_m=tuple(map(float, x)), electrical_m=tuple(map(float, y)),
        electrical_sigma_m=tuple(map(float, sy)), reduced_chi2=red,
    )
