"""Observations of a sweep for the mismatch diagnosis.

:func:`observe` gathers model-free observations of a sweep (reactance
crossings, winding about the Smith chart centre, trace noise, ripple,
discontinuities), adds the physics expectations when an antenna description
is given (as-built resonance, radiation plus conductor-loss resistance, a fit
of the antenna model) and runs time-domain reflectometry on the raw sweep when
the cable's velocity factor is known.  The result is one
:class:`Observations` record, read by the signatures of
:mod:`fieldcheck.diagnose_signatures`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import diagnose_thresholds as th
from . import features
from .constants import C0_M_PER_S, TWO_PI
from .errors import FieldcheckError, FitError
from .features import phase_slope_delay_s
from .fit import NOISE_FLOOR, estimate_noise_sigma
from .sweep import Sweep, impedance_from_gamma

#: Polynomial degree used to detrend Gamma(f) before looking for ripple when no
#: model fit is available; with at least RIPPLE_MIN_CYCLES_MODEL_FREE cycles in
#: the span the polynomial cannot follow the ripple (common practice, no source).
DETREND_DEGREE = 4
RIPPLE_MIN_CYCLES_MODEL_FREE = 3.0
#: With a fit residual, the model has already removed the antenna; the fit's
#: delay parameter can absorb about one cycle, so start above two.
RIPPLE_MIN_CYCLES_FIT = 2.5
#: A fitted residual delay is believed only from a fit this close to the data
#: (RMS |Gamma| misfit; twice the fit's own 'inadequate' limit, common practice,
#: no source), and one that finds a resonance: a broken antenna fitted badly can
#: park any value in the delay.
DELAY_FIT_RMS_MAX = 0.08


@dataclass(frozen=True)
class Observations:
    """Everything the signatures look at (built by :func:`observe`).

    Frequencies in Hz, impedances in ohm, delays in s, lengths in m; ``None``
    where not available (no description, no fit, no cable).
    """

    f_hz: np.ndarray
    gamma: np.ndarray               # at the antenna-side reference plane
    z_ohm: np.ndarray               # line side (as measured, before the balun ratio)
    z0_ohm: float
    balun_ratio: float
    noise_sigma: float
    variation: float                # RMS deviation of Gamma from its mean
    raw_gamma: np.ndarray           # before any reference-plane removal
    series_crossings: tuple         # (f_hz, r_ohm) of X rising through 0, antenna side
    f_design_hz: float | None = None
    r_expected_ohm: float | None = None
    r_loss_expected_ohm: float | None = None
    built_length_m: float | None = None
    n_ends: int | None = None
    fit: object | None = None        # AntennaFit, None when no description or the fit failed
    wire_resonance: tuple | None = None  # (f_hz, r_ohm, f_stderr_hz) of the fitted wire alone
    fit_problem: str | None = None
    residual_delay_s: float | None = None
    residual_delay_stderr_s: float | None = None
    winding_turns: float = 0.0
    ripple: tuple | None = None      # (amplitude, period_hz, snr, at_edge)
    steps: tuple = ()                # (f_hz, jump) of discontinuities
    tdr: object | None = None        # TdrResult on the raw sweep
    cable_length_m: float | None = None
    cable_vf: float | None = None
    notes: tuple = ()

    def fitted_resonance(self) -> float | None:
        """Resonance of the antenna itself from a usable fit (Hz), or None.

        The wire's own X = 0 (fitted length and loss, without the fitted feed
        capacitance and shunt conductance) when available: the as-built design
        resonance it is compared with has no feed hardware either, and a few pF
        across the feed moves the terminal X = 0 by a few percent on its own.
        """
        fit = self.fit
        if fit is None or fit.fit.adequacy == "inadequate":
            return None
        if self.wire_resonance is not None:
            return self.wire_resonance[0]
        return fit.f_res_hz.value if fit.f_res_hz is not None else None

    def measured_resonance(self):
        """(f_hz, r_ohm, how) of the resonance to compare with the design, or None."""
        if self.fitted_resonance() is not None:
            if self.wire_resonance is not None:
                return self.wire_resonance[0], self.wire_resonance[1], "fitted"
            return self.fit.f_res_hz.value, self.fit.r_at_res_ohm, "fitted"
        if not self.series_crossings:
            return None
        ref = self.f_design_hz or float(np.median(self.f_hz))
        usable = [c for c in self.series_crossings if self.r_expected_ohm is None
                  or 0 < c[1] < th.PLAUSIBLE_R_FACTOR * self.r_expected_ohm]
        if not usable:
            return None
        f, r = min(usable, key=lambda c: abs(math.log(c[0] / ref)))
        return f, r, "read off the trace"


# ---- observations (pure helpers) -------------------------------------------------
def winding_turns(gamma: np.ndarray) -> float:
    """Net turns of Gamma about the Smith chart centre over the sweep (dimensionless)."""
    ph = np.unwrap(np.angle(np.asarray(gamma)))
    return float(abs(ph[-1] - ph[0]) / TWO_PI)


def ripple_peak(f_hz: np.ndarray, x: np.ndarray, noise_sigma: float, min_cycles: float):
    """Strongest periodic component of a complex trace, by a direct windowed transform.

    Parameters
    ----------
    f_hz : ndarray
        Frequencies, Hz (any grid; the transform is evaluated directly).
    x : ndarray of complex
        Trace with its smooth part removed, Gamma units.
    noise_sigma : float
        Noise per real component of ``x``, Gamma units.
    min_cycles : float
        Only periods with at least this many cycles in the span are searched.

    Returns
    -------
    tuple or None
        (amplitude in Gamma, period in Hz, amplitude over the noise standard
        deviation of the transform, peak on the edge of the search range).
    """
    f = np.asarray(f_hz, float)
    span = f[-1] - f[0]
    step = span / (f.size - 1)
    t_lo, t_hi = min_cycles / span, 0.5 / step
    if f.size < 16 or t_hi <= t_lo:
        return None
    tau = np.arange(t_lo, t_hi, 1.0 / (8.0 * span))
    w = np.hanning(f.size + 2)[1:-1]
    xs = (np.asarray(x) - np.average(x, weights=w)) * w
    # Both signs of delay: a ripple term a exp(-j 2 pi f tau) appears at +tau.
    kern = np.exp(2j * np.pi * np.outer(tau, f - f[0]))
    a = np.maximum(np.abs(kern @ xs), np.abs(np.conj(kern) @ xs)) / w.sum()
    i = int(np.argmax(a))
    noise = max(noise_sigma, NOISE_FLOOR) * math.sqrt(2.0 * np.sum(w ** 2)) / w.sum()
    at_edge = i == 0 or i == tau.size - 1
    return float(a[i]), float(1.0 / tau[i]), float(a[i] / noise), bool(at_edge)


def find_steps(f_hz: np.ndarray, gamma: np.ndarray) -> tuple:
    """Discontinuities: jumps between adjacent points far beyond the trace's own change.

    The jump statistic ``j_i = d_i - (d_{i-1} + d_{i+1}) / 2`` (``d`` the first
    difference) is a third difference: near zero on any smooth trace, about
    the step size at a step.  A jump counts when it exceeds
    ``CAL_STEP_SIGMAS`` robust standard deviations (1.4826 MAD) of the
    statistic and ``CAL_STEP_MIN_GAMMA``.

    Returns
    -------
    tuple of (f_hz, jump)
        Frequency between the two points of each jump (Hz) and |jump| (Gamma units).
    """
    g = np.asarray(gamma)
    if g.size < 8:
        return ()
    d = np.diff(g)
    j = d[1:-1] - 0.5 * (d[:-2] + d[2:])
    parts = np.concatenate([j.real, j.imag])
    scale = max(1.4826 * float(np.median(np.abs(parts - np.median(parts)))), NOISE_FLOOR)
    mag = np.abs(j)
    hit = np.flatnonzero((mag > th.CAL_STEP_SIGMAS * scale) & (mag > th.CAL_STEP_MIN_GAMMA))
    out = []
    for i in hit:
        lo, hi = max(i - 2, 0), min(i + 3, mag.size)
        if mag[i] < mag[lo:hi].max():
            continue  # a side lobe of a larger jump
        k = i + 1  # the jump is between points k and k + 1
        out.append((float(0.5 * (f_hz[k] + f_hz[k + 1])), float(mag[i])))
    return tuple(out)


def _detrended(f_hz, gamma):
    u = (f_hz - f_hz.mean()) / (0.5 * (f_hz[-1] - f_hz[0]))
    deg = min(DETREND_DEGREE, f_hz.size - 2)
    smooth = (np.polyval(np.polyfit(u, gamma.real, deg), u)
              + 1j * np.polyval(np.polyfit(u, gamma.imag, deg), u))
    return gamma - smooth


def _design(desc, notes):
    """Expected resonance, resistance and loss of the as-built antenna, or Nones."""
    from .antenna_fit import _len_factor, model_resonance_hz
    from .model import model_from_description
    from .physics import loss, materials

    model = model_from_description(desc)
    form = desc.antenna.form
    built = desc.antenna.total_length_m if form == "dipole" else desc.antenna.arm_length_m
    k = _len_factor(model)
    f_d = model_resonance_hz(model, built, 0.0, 0.0, C0_M_PER_S / (2.0 * built * k))
    r_rad = float(model.z_wire(np.array([f_d]), built)[0].real)
    r_loss = 0.0
    try:
        mat = materials.get_material(desc.antenna.material)
        wire_m = built * k  # a monopole images to a dipole of twice its height
        rp = loss.resistance_per_m(f_d, desc.antenna.radius_m, mat)
        # Sinusoidal current (Balanis, Antenna Theory, 4th ed., eq. 2-90b generalised).
        r_loss = float(loss.sinusoidal_loss_resistance(TWO_PI * f_d * wire_m / C0_M_PER_S,
                                                       wire_m, rp)) / k
    except FieldcheckError as exc:
        notes.append(f"conductor loss not estimated: {exc}")
    if desc.antenna.insulation is not None:
        notes.append("the model has no wire insulation: a jacket lowers the resonance by a "
                     "few percent, read a small downward shift with that in mind")
    return model, float(built), (2 if form == "dipole" else 1), float(f_d), r_rad + r_loss, r_loss


def wire_resonance(fit) -> tuple | None:
    """X = 0 of the fitted wire alone: (f_hz, r_ohm at the terminals, f standard uncertainty Hz).

    Uses the fitted length and loss resistance without the feed capacitance
    and shunt conductance.  Resonance scales as 1 / length for a thin wire
    (Balanis, Antenna Theory, 4th ed., section 4.6), so its relative
    uncertainty is that of the fitted length.  None when the model has no
    resonance near the fit.
    """
    from .antenna_fit import _len_factor, model_resonance_hz

    v = fit.fit.values
    length_m, r_loss = v["length_m"], v["r_loss_ohm"]
    guess = (fit.f_res_hz.value if fit.f_res_hz is not None
             else C0_M_PER_S / (2.0 * length_m * _len_factor(fit.model)))
    try:
        f_w = model_resonance_hz(fit.model, length_m, r_loss, 0.0, guess)
    except FitError:
        return None
    r_w = float(fit.model.z_terminals(np.array([f_w]), length_m, r_loss)[0].real)
    return float(f_w), r_w, float(f_w * fit.length_m.stderr / length_m)


def _fit(sweep: Sweep, desc, model, built, r_loss, notes):
    """Fit the antenna; when that fails, try again after removing a phase-slope delay estimate."""
    from .antenna_fit import fit_antenna

    fit0, err0 = None, None
    try:
        fit0 = fit_antenna(sweep, desc)
    except FitError as exc:
        err0 = str(exc)
    if fit0 is not None and fit0.fit.adequacy == "good":
        return fit0, 0.0, None
    g_model = model.gamma(sweep.f_hz, built, r_loss, 0.0)
    t_est = phase_slope_delay_s(sweep.f_hz, sweep.s11, g_model)
    best, t_pre = fit0, 0.0
    if abs(t_est) * C0_M_PER_S > th.REFPLANE_HARDWARE_M:
        moved = sweep.with_s11(sweep.s11 * np.exp(2j * TWO_PI * sweep.f_hz * t_est),
                               note=f"diagnosis: trial removal of {t_est * 1e9:.3f} ns")
        try:
            fit1 = fit_antenna(moved, desc)
            if fit1.fit.residual_rms < DELAY_FIT_RMS_MAX and (
                    fit0 is None or fit1.fit.residual_rms < 0.5 * fit0.fit.residual_rms):
                best, t_pre = fit1, t_est
                notes.append(f"the model fits only after removing a further {t_est * 1e9:.3f} ns "
                             "one-way delay (phase-slope estimate)")
        except FitError:
            pass
    problem = None
    if best is None:
        problem = err0
        notes.append(f"no model fit: {err0}")
    elif best.fit.adequacy == "inadequate":
        problem = best.fit.adequacy_reason
    return best, t_pre, problem


def observe(sweep: Sweep, desc=None, *, raw_sweep: Sweep | None = None,
            cable_vf: float | None = None, cable=None) -> Observations:
    """Collect the observations the signatures need (see :func:`diagnose`)."""
    from . import tdr as _tdr

    notes: list[str] = []
    raw = raw_sweep if raw_sweep is not None else sweep
    f, g = sweep.f_hz, sweep.s11
    balun = desc.feed.balun_ratio if desc is not None else 1.0
    z_line = sweep.z_ohm
    crossings = tuple((c.f_hz, c.r_ohm) for c in features.reactance_crossings(f, z_line * balun)
                      if c.kind == "series")
    kw: dict = {}
    fit, t_pre = None, 0.0
    if desc is not None:
        try:
            model, built, n_ends, f_d, r_exp, r_loss = _design(desc, notes)
            kw.update(f_design_hz=f_d, r_expected_ohm=r_exp, r_loss_expected_ohm=r_loss,
                      built_length_m=built, n_ends=n_ends)
            fit, t_pre, problem = _fit(sweep, desc, model, built, r_loss, notes)
            kw["fit_problem"] = problem
        except FieldcheckError as exc:
            notes.append(f"physics expectations not available: {exc}")
    if fit is not None and fit.fit.adequacy != "inadequate":
        kw["wire_resonance"] = wire_resonance(fit)
    if fit is not None and fit.fit.residual_rms < DELAY_FIT_RMS_MAX and fit.f_res_hz is not None:
        kw["residual_delay_s"] = t_pre + fit.fit.values["delay_s"]
        kw["residual_delay_stderr_s"] = fit.fit.stderr["delay_s"] or None
    t_known = kw.get("residual_delay_s") or 0.0
    turns = winding_turns(g)
    t_flat = t_known
    if not t_known and turns > th.REFPLANE_MAX_TURNS:
        # Model free: a line left in front dominates the phase slope; take it out
        # before looking for ripple and noise (it is reported from the winding).
        t_flat = phase_slope_delay_s(f, g, np.ones_like(g))
    g_flat = g * np.exp(2j * TWO_PI * f * t_flat)
    if abs(t_known) * C0_M_PER_S > th.REFPLANE_HARDWARE_M:
        # Read the trace at the antenna: with the residual delay removed.
        z_line = impedance_from_gamma(g_flat, sweep.z0_ohm)
        crossings = tuple((c.f_hz, c.r_ohm) for c in
                          features.reactance_crossings(f, z_line * balun) if c.kind == "series")
        notes.append(f"trace readings (resonance, reactance) taken after removing the residual "
                     f"delay of {t_known * 1e9:.3f} ns")
    sigma = estimate_noise_sigma(g_flat)
    variation = float(np.sqrt(np.mean(np.abs(g - g.mean()) ** 2)))
    if fit is not None:
        ripple = ripple_peak(fit.fit.f_hz, fit.fit.residual, sigma, RIPPLE_MIN_CYCLES_FIT)
        if ripple is not None and fit.fit.adequacy == "inadequate":
            # A fit that does not describe the antenna has bent itself partly
            # around the ripple, which biases the period: read it off the trace.
            trace = ripple_peak(f, _detrended(f, g_flat), sigma, RIPPLE_MIN_CYCLES_MODEL_FREE)
            if trace is not None and not trace[3]:
                ripple = (ripple[0], trace[1], ripple[2], ripple[3])
    else:
        ripple = ripple_peak(f, _detrended(f, g_flat), sigma, RIPPLE_MIN_CYCLES_MODEL_FREE)
    vf = cable_vf if cable_vf is not None else (cable.velocity_factor if cable is not None else None)
    length = cable.length_m if cable is not None else None
    tdr_res = None
    if vf is not None:
        if not raw.is_uniform:
            notes.append("time-domain cable check skipped: the sweep is not evenly stepped")
        else:
            try:
                tdr_res = _tdr.locate_reflections(
                    raw, vf, loss_db_per_100m=cable.loss_db_per_100m if cable else 0.0,
                    loss_ref_hz=cable.loss_ref_hz if cable else None, cable_length_m=length)
                notes.extend(tdr_res.notes)
            except FieldcheckError as exc:
                notes.append(f"time-domain cable check skipped: {exc}")
    return Observations(
        f_hz=f, gamma=g, z_ohm=z_line, z0_ohm=sweep.z0_ohm, balun_ratio=balun,
        noise_sigma=sigma, variation=variation, raw_gamma=raw.s11,
        series_crossings=crossings, fit=fit, winding_turns=turns,
        ripple=ripple, steps=find_steps(raw.f_hz, raw.s11), tdr=tdr_res,
        cable_length_m=length, cable_vf=vf, notes=tuple(notes), **kw)
