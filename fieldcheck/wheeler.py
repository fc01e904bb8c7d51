"""Radiation efficiency by the Wheeler cap method.

A conducting shell placed around the antenna (outside its near field, the
"radiansphere") stops radiation but leaves the conductor and dielectric loss
almost unchanged.  Comparing the input resistance in free space and in the cap
separates radiation resistance from loss resistance:

* H. A. Wheeler, "The radiansphere around a small antenna", Proc. IRE, vol. 47,
  pp. 1325-1331, Aug. 1959 (title and journal checked; volume and pages from
  memory).
* For resonant antennas, compare at resonance; series resonance uses the
  resistance, parallel resonance the conductance: E. H. Newman, P. Bohley and
  C. H. Walter, "Two methods for the measurement of antenna efficiency", IEEE
  Trans. Antennas Propag., vol. AP-23, no. 4, pp. 457-461, July 1975 (from
  memory, not checked).

Series model: R_free = R_rad + R_loss, R_cap = R_loss, so
``eta = R_rad / R_free = 1 - R_cap / R_free``.  Parallel model, with
conductances: ``eta = 1 - G_cap / G_free``.

The resistance (or conductance) at resonance is read from a local quadratic
fit around the reactance zero crossing; the scatter of the data about that fit
estimates the measurement noise, which is propagated to ``eta_sigma``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .errors import InputError
from .sweep import Sweep

#: Resonance shift (fraction of the free-space resonance) above which the cap
#: is flagged as too small or too close to the antenna (common practice, no source).
MAX_RESONANCE_SHIFT = 0.02

#: Fraction of the sweep points used in each local fit, and the minimum count
#: (choice of this module: wide enough to average noise, narrow enough for a
#: quadratic / cubic to follow R and X).
LOCAL_FIT_FRACTION = 0.2
LOCAL_FIT_MIN_POINTS = 9

KINDS = ("auto", "series", "parallel")


@dataclass(frozen=True)
class WheelerResult:
    """Radiation efficiency from a free-space and a cap sweep.

    Parameters
    ----------
    eta : float
        Radiation efficiency, dimensionless (0..1).
    eta_sigma : float
        One standard deviation of ``eta`` from the measurement noise.
    r_free_ohm, r_cap_ohm : float
        Input resistance at resonance in free space and in the cap, ohm.  At a
        reactance zero the conductance is exactly 1 / R.
    r_free_sigma_ohm, r_cap_sigma_ohm : float
        Standard deviations of those resistances, ohm.
    f_free_hz, f_cap_hz : float
        Resonance frequencies used, Hz.
    resonance_kind : str
        'series' (dX/df > 0 at the crossing) or 'parallel' (dX/df < 0).
    notes : tuple of str
        Warnings (resonance shift, no resonance, eta outside 0..1).
    """

    eta: float
    eta_sigma: float
    r_free_ohm: float
    r_cap_ohm: float
    r_free_sigma_ohm: float
    r_cap_sigma_ohm: float
    f_free_hz: float
    f_cap_hz: float
    resonance_kind: str
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict:
        return {
            "eta": self.eta, "eta_sigma": self.eta_sigma,
            "eta_percent": 100.0 * self.eta, "eta_sigma_percent": 100.0 * self.eta_sigma,
            "r_free_ohm": self.r_free_ohm, "r_cap_ohm": self.r_cap_ohm,
            "r_free_sigma_ohm": self.r_free_sigma_ohm, "r_cap_sigma_ohm": self.r_cap_sigma_ohm,
            "f_free_hz": self.f_free_hz, "f_cap_hz": self.f_cap_hz,
            "resonance_kind": self.resonance_kind, "notes": list(self.notes),
        }


@dataclass(frozen=True)
class Resonance:
    """A reactance zero crossing located by a local cubic fit.

    Parameters
    ----------
    f_hz : float
        Crossing frequency, Hz.
    slope_ohm_per_hz : float
        dX/df at the crossing, ohm/Hz (> 0 series, < 0 parallel).
    f_sigma_hz : float
        Standard deviation of ``f_hz`` from the reactance scatter, Hz.
    """

    f_hz: float
    slope_ohm_per_hz: float
    f_sigma_hz: float

    @property
    def kind(self) -> str:
        return "series" if self.slope_ohm_per_hz > 0 else "parallel"


# ---- local polynomial fits (pure) --------------------------------------------------
def _window(n: int, i_centre: int) -> slice:
    k = max(LOCAL_FIT_MIN_POINTS, int(round(LOCAL_FIT_FRACTION * n)))
    k = min(k, n)
    lo = min(max(0, i_centre - k // 2), n - k)
    return slice(lo, lo + k)


def local_poly(f_hz: np.ndarray, y: np.ndarray, deg: int, f_eval_hz: float,
               sigma_y: float | None = None) -> tuple[float, float, float, np.ndarray]:
    """Least-squares polynomial of degree ``deg`` and its value at ``f_eval_hz``.

    Parameters
    ----------
    f_hz : ndarray
        Frequencies of the fitted points, Hz.
    y : ndarray
        Values (ohm or siemens).
    deg : int
        Polynomial degree.
    f_eval_hz : float
        Where to evaluate, Hz.
    sigma_y : float, optional
        Known noise standard deviation of ``y`` (same unit); if None it is
        estimated from the residual scatter with ``len(y) - deg - 1`` degrees of
        freedom.

    Returns
    -------
    value, value_sigma, sigma_y, coefficients (in powers of ``(f - f_eval) / scale``)
    """
    scale = float(np.ptp(f_hz)) or 1.0
    x = (f_hz - f_eval_hz) / scale
    coef, cov = np.polyfit(x, y, deg, cov="unscaled")
    if sigma_y is None:
        dof = y.size - deg - 1
        resid = y - np.polyval(coef, x)
        sigma_y = float(np.sqrt(np.sum(resid ** 2) / dof)) if dof > 0 else 0.0
    # at x = 0 the value is the constant term (last coefficient)
    return float(coef[-1]), float(sigma_y * np.sqrt(cov[-1, -1])), float(sigma_y), coef / np.array(
        [scale ** (deg - j) for j in range(deg + 1)])


def find_resonances(f_hz: np.ndarray, x_ohm: np.ndarray) -> list[Resonance]:
    """Reactance zero crossings, refined by a local cubic fit.

    Parameters
    ----------
    f_hz : ndarray
        Frequencies, Hz, increasing.
    x_ohm : ndarray
        Reactance, ohm.

    Noise makes one crossing look like several; crossings closer than half a
    local-fit window are merged before refining.
    """
    n = f_hz.size
    s = np.sign(x_ohm)
    idx = np.nonzero(s[:-1] * s[1:] <= 0)[0]
    idx = idx[~((x_ohm[idx] == 0) & (x_ohm[idx + 1] == 0))]
    if idx.size == 0:
        return []
    half = (_window(n, 0).stop) // 2
    groups = [[idx[0]]]
    for i in idx[1:]:
        if i - groups[-1][-1] <= half:
            groups[-1].append(i)
        else:
            groups.append([i])
    out = []
    for g in groups:
        ic = int(g[len(g) // 2])  # a real crossing in the middle of the group
        sl = _window(n, ic)
        f, x = f_hz[sl], x_ohm[sl]
        f_lin = float(np.interp(0.0, [x_ohm[ic], x_ohm[ic + 1]], [f_hz[ic], f_hz[ic + 1]])
                      if x_ohm[ic] <= x_ohm[ic + 1] else
                      np.interp(0.0, [x_ohm[ic + 1], x_ohm[ic]], [f_hz[ic + 1], f_hz[ic]]))
        # Newton steps on the local cubic, started at the linear interpolation
        fr = f_lin
        for _ in range(20):
            val, _, _, c = local_poly(f, x, 3, fr)
            slope = float(c[-2])
            if slope == 0:
                break
            step = -val / slope
            fr += step
            if abs(step) < 1e-9 * fr:
                break
        if not (f[0] <= fr <= f[-1]):
            fr = f_lin
        val, val_sig, _, c = local_poly(f, x, 3, fr)
        slope = float(c[-2])
        if slope == 0:
            continue
        if len(out) and abs(out[-1].f_hz - fr) < 1e-9 * fr:
            continue  # two groups refined onto the same crossing
        out.append(Resonance(f_hz=fr, slope_ohm_per_hz=slope, f_sigma_hz=abs(val_sig / slope)))
    return out


def _value_at(f_hz, y, f_eval_hz, sigma_y, slope_sigma_f_hz):
    """Quadratic local fit value at ``f_eval_hz`` with sigma including the frequency uncertainty."""
    i = int(np.clip(np.searchsorted(f_hz, f_eval_hz), 0, f_hz.size - 1))
    sl = _window(f_hz.size, i)
    v, v_sig, s_y, c = local_poly(f_hz[sl], y[sl], 2, f_eval_hz, sigma_y)
    dydf = float(c[-2])
    return v, math.hypot(v_sig, dydf * slope_sigma_f_hz), s_y


# ---- the method ------------------------------------------------------------------------
def wheeler_efficiency(free: Sweep, cap: Sweep, *, resonance: str = "auto",
                       r_sigma_ohm: float | None = None,
                       max_shift_fraction: float = MAX_RESONANCE_SHIFT) -> WheelerResult:
    """Radiation efficiency from free-space and Wheeler-cap sweeps.

    Parameters
    ----------
    free : Sweep
        S11 at the antenna terminals in free space (or an anechoic setting).
    cap : Sweep
        S11 with the conducting cap in place, same reference plane.
    resonance : {'auto', 'series', 'parallel'}
        Which resonance to compare at; 'auto' takes the best-matched reactance
        zero in the free sweep and its kind from the sign of dX/df.
    r_sigma_ohm : float, optional
        Known noise standard deviation of the measured resistance, ohm (series)
        -- for a parallel resonance it is converted to conductance noise at the
        resonance.  None: estimated from the scatter about the local fit.
    max_shift_fraction : float
        Resonance shift (fraction of the free-space resonance frequency) above
        which a note warns that the cap detunes the antenna (dimensionless).

    Returns
    -------
    WheelerResult

    Raises
    ------
    InputError
        Unknown ``resonance`` option or a sweep too short to fit.
    """
    if resonance not in KINDS:
        raise InputError(f"unknown resonance kind {resonance!r}: choose auto, series or parallel")
    for sw in (free, cap):
        if sw.n_points < LOCAL_FIT_MIN_POINTS:
            raise InputError(f"the Wheeler method needs at least {LOCAL_FIT_MIN_POINTS} points "
                             f"around resonance, got {sw.n_points}; re-sweep with more points",
                             sw.source)
    if r_sigma_ohm is not None and not r_sigma_ohm > 0:
        raise InputError(f"resistance noise must be > 0 ohm, got {r_sigma_ohm}")
    notes: list[str] = []

    zf, zc = free.z_ohm, cap.z_ohm
    res_f = find_resonances(free.f_hz, zf.imag)
    if resonance != "auto":
        res_f = [r for r in res_f if r.kind == resonance]
    if res_f:
        gam = np.abs(free.s11)
        best = min(res_f, key=lambda r: np.interp(r.f_hz, free.f_hz, gam))
        kind = best.kind
        f_free, sf_free = best.f_hz, best.f_sigma_hz
    else:
        kind = "series" if resonance == "auto" else resonance
        i = int(np.argmin(np.abs(zf.imag)))
        f_free, sf_free = float(free.f_hz[i]), 0.0
        notes.append(
            f"no {'' if resonance == 'auto' else resonance + ' '}resonance (reactance zero) in the "
            f"free-space sweep {free.source}; compared at the smallest reactance, "
            f"{f_free:.6g} Hz, as a {kind} model. Sweep across the resonance for a sound result")

    res_c = [r for r in find_resonances(cap.f_hz, zc.imag) if r.kind == kind]
    if res_c:
        rc = min(res_c, key=lambda r: abs(r.f_hz - f_free))
        f_cap, sf_cap = rc.f_hz, rc.f_sigma_hz
    else:
        f_cap, sf_cap = f_free, sf_free
        notes.append(f"no {kind} resonance in the cap sweep {cap.source}; its resistance is "
                     f"taken at the free-space resonance {f_free:.6g} Hz")

    shift = abs(f_cap - f_free) / f_free
    if shift > max_shift_fraction:
        notes.append(
            f"the cap moves the resonance by {100 * shift:.2g} % (limit "
            f"{100 * max_shift_fraction:.2g} %): the cap is too small or too close to the "
            "antenna and changes its reactive near field; use a larger cap")

    if kind == "series":
        # R is flat through a series resonance: fit R directly.
        rf, srf, _ = _value_at(free.f_hz, zf.real, f_free, r_sigma_ohm, sf_free)
        rcap, srcap, _ = _value_at(cap.f_hz, zc.real, f_cap, r_sigma_ohm, sf_cap)
        if not rf > 0:
            raise InputError(f"free-space resistance at resonance is {rf:.4g} ohm; a passive "
                             "antenna needs R > 0: check the calibration", free.source)
        eta = 1.0 - rcap / rf
        eta_sig = math.hypot(srcap / rf, rcap * srf / rf ** 2)
        r_free, r_cap, s_free, s_cap = rf, rcap, srf, srcap
    else:
        # G is flat through a parallel resonance: fit G = Re(1/Z).
        yf, yc = 1.0 / zf, 1.0 / zc
        gs_f = gs_c = None
        if r_sigma_ohm is not None:  # dG = dR / R^2 at the resonance (X = 0)
            gs_f = r_sigma_ohm / np.interp(f_free, free.f_hz, zf.real) ** 2
            gs_c = r_sigma_ohm / np.interp(f_cap, cap.f_hz, zc.real) ** 2
        gf, sgf, _ = _value_at(free.f_hz, yf.real, f_free, gs_f, sf_free)
        gc, sgc, _ = _value_at(cap.f_hz, yc.real, f_cap, gs_c, sf_cap)
        if not (gf > 0 and gc > 0):
            raise InputError(f"conductance at the parallel resonance is not positive "
                             f"({gf:.4g} S free, {gc:.4g} S cap): check the calibration",
                             free.source)
        eta = 1.0 - gc / gf
        eta_sig = math.hypot(sgc / gf, gc * sgf / gf ** 2)
        r_free, r_cap = 1.0 / gf, 1.0 / gc
        s_free, s_cap = sgf / gf ** 2, sgc / gc ** 2

    if not 0.0 <= eta <= 1.0:
        notes.append(
            f"efficiency {100 * eta:.3g} % lies outside 0..100 %: the cap resonates as a "
            "cavity near this frequency, leaks, or adds loss; check the cap's contact and size")
    return WheelerResult(
        eta=float(eta), eta_sigma=float(eta_sig), r_free_ohm=float(r_free),
        r_cap_ohm=float(r_cap), r_free_sigma_ohm=float(s_free), r_cap_sigma_ohm=float(s_cap),
        f_free_hz=float(f_free), f_cap_hz=float(f_cap), resonance_kind=kind, notes=tuple(notes),
    )
