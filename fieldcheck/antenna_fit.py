"""Fit the antenna model to a measured sweep and explain the result.

:func:`fit_antenna` turns a sweep at the antenna terminals (reference plane
already moved) plus an antenna description into an :class:`AntennaFit`: the
fitted electrical length, loss, feed capacitance and residual delay with
uncertainties, and what follows from them (resonance at the terminals, length
error, end correction per end, radiation efficiency), plus the model-adequacy
verdict of :mod:`fieldcheck.fit`.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np
from scipy.optimize import brentq

from . import features
from .constants import C0_M_PER_S, TWO_PI
from .errors import FieldcheckError, FitError, InputError
from .fit import FitResult, ParamSpec, fit_reflection, systematic_covariance
from .model import AntennaModel, model_from_description
from .physics.surface import KL_MAX, KL_MIN, default_surface
from .sweep import Sweep, gamma_from_impedance

#: Fit window around the first resonance, as a frequency ratio either side.  A
#: dipole's VSWR-2 bandwidth is a few percent to ~15 %; +-30 % keeps the whole
#: resonance and its shoulders, where length, loss and feed C separate, without
#: reaching the anti-resonance (common practice, no source).
WINDOW_RATIO = 1.3
#: Electrical length may move this far (ratio) from the start value in the fit.
LENGTH_FREEDOM = 1.35
#: Bounds on the loss resistance and feed capacitance (generous: a bad joint can
#: be tens of ohms; feed hardware rarely tens of pF).
R_LOSS_MAX_OHM = 300.0
C_FEED_MAX_F = 50e-12
#: Calibration residuals assumed for every sweep: typical of a careful
#: short-open-load calibration with a decent kit (effective directivity 40 to
#: 46 dB, source match 34 to 40 dB, tracking within 0.1 dB; the middle of each
#: range is used as a standard uncertainty; common practice, no source).  They
#: enter the covariance as systematic terms (see fit.py): errors the fit
#: absorbs without a trace in its residuals.
CAL_RESIDUALS = (
    (10 ** (-42 / 20), lambda g: np.ones_like(g)),        # directivity e00
    (10 ** (-37 / 20), lambda g: g * g),                  # source match e11 * G^2
    (10 ** (0.1 / 20) - 1, lambda g: g),                  # tracking (e10 e01 - 1) * G
)
#: Unremoved feed hardware (connector, balun leads, the balun's own line): a
#: few centimetres of line whose impedance is not the system's.  Modelled as a
#: line of FEED_HARDWARE_M (air-equivalent, one way: about 3.5 cm of solid-PE
#: line) with a reflection FEED_HARDWARE_RHO at its ends (Z0 about 50 +- 10 ohm); to first order in
#: beta*l it adds rho (1 - G^2) (2 j beta l) to the reflection (from the
#: terminated-line formula, Pozar, Microwave Engineering, 4th ed., eq. 2.44,
#: expanded for a short line).  Values are common practice, no source.  The
#: delay parameter absorbs the matched part; this term covers the mismatch.
#: It blurs where the antenna's own terminals are, so it enters the
#: uncertainty of terminal quantities (X = 0, electrical length, efficiency)
#: but not of the match the feed line sees, which includes the hardware.
FEED_HARDWARE_M = 0.05
FEED_HARDWARE_RHO = 0.1


def _hardware_systematic(f_hz):
    """The feed-hardware term for :func:`fieldcheck.fit.systematic_covariance` at ``f_hz``."""
    two_beta_l = 2.0 * TWO_PI * np.asarray(f_hz) * FEED_HARDWARE_M / C0_M_PER_S
    return ((FEED_HARDWARE_RHO, lambda g: (1.0 - g * g) * two_beta_l),)


#: Weak priors (mean, standard deviation) on parameters a narrow sweep cannot
#: pin on its own: the user has removed the cable, so the residual delay is
#: small (0 +- 0.3 ns, about 9 cm of air line one way), and feed hardware
#: rarely adds more than a picofarad or two (0 +- 3 pF).  Common practice, no
#: source; a sweep that clearly shows more overrides them.
DELAY_PRIOR_S = (0.0, 0.3e-9)
C_FEED_PRIOR_F = (0.0, 3e-12)
#: Shunt conductance bound: 0.1 S is a 10-ohm shunt, far beyond any working feed.
G_FEED_MAX_S = 0.1


@dataclass(frozen=True)
class Derived:
    """A derived quantity with its standard uncertainty."""

    value: float
    stderr: float
    unit: str

    def to_dict(self) -> dict:
        return {"value": self.value, "stderr": self.stderr, "unit": self.unit}


@dataclass(frozen=True)
class AntennaFit:
    """Result of fitting one sweep.

    Attributes
    ----------
    fit : FitResult
        Raw fit (parameters length_m, r_loss_ohm, c_feed_f, g_feed_s, delay_s).
    model : AntennaModel
        The fixed part of the model used.
    built_length_m : float
        As-built electrical-model length: dipole tip to tip (2 arms + gap), or monopole height.
    n_ends : int
        Free ends (2 for a dipole, 1 for a monopole).
    f_res_hz : Derived or None
        First series resonance (X = 0) of the fitted antenna at its own terminals;
        None when the feed capacitance or loss leaves no X = 0 there.
    f_match_hz : float
        Frequency of the best match seen by the feed line (model, no residual delay).
    r_at_res_ohm, r_rad_ohm : float
        Terminal resistance and its radiation part at ``f_res_hz`` (or at the best match).
    efficiency : Derived
        Radiation efficiency R_rad / (R_rad + R_loss) there (IEEE Std 145-2013 definition).
    terminal_covariance : ndarray
        The fit's covariance plus the feed-hardware systematic term: the
        uncertainty of quantities that refer to the antenna's own terminals.
    feed_shunt_loss : float
        Fraction of the delivered power lost in the shunt conductance across the feed.
    length_error_m : Derived
        Electrical minus as-built length (positive: electrically longer than built).
    measured_crossing_hz : float or None
        X = 0 crossing read straight off the trace (model free), nearest the fit's resonance.
    resonance_in_sweep : bool
        False when the fitted resonance lies outside the swept band (advice extrapolates).
    notes : tuple of str
    """

    fit: FitResult
    model: AntennaModel
    built_length_m: float
    n_ends: int
    f_res_hz: Derived | None
    f_match_hz: float
    r_at_res_ohm: float
    r_rad_ohm: float
    efficiency: Derived
    feed_shunt_loss: float
    terminal_covariance: np.ndarray
    length_error_m: Derived
    measured_crossing_hz: float | None
    resonance_in_sweep: bool
    sweep_span_hz: tuple
    notes: tuple = field(default=())

    @property
    def length_m(self) -> Derived:
        i = self.fit.names.index("length_m")
        return Derived(self.fit.values["length_m"], float(np.sqrt(self.terminal_covariance[i, i])), "m")

    @property
    def length_repeatability_m(self) -> float:
        """Statistical standard error of the electrical length alone, m.

        Systematic terms (calibration residuals, feed hardware) are the same
        for every sweep on one bench, so they cancel in differences between
        sweeps; a trim history weighs its points with this.
        """
        i = self.fit.names.index("length_m")
        return float(np.sqrt(self.fit.covariance_statistical[i, i]))

    @property
    def end_correction_per_end_m(self) -> Derived:
        e = self.length_error_m
        return Derived(e.value / self.n_ends, e.stderr / self.n_ends, "m")

    def to_dict(self) -> dict:
        return {
            "fit": self.fit.to_dict(),
            "built_length_m": self.built_length_m,
            "electrical_length_m": self.length_m.to_dict(),
            "length_error_m": self.length_error_m.to_dict(),
            "end_correction_per_end_m": self.end_correction_per_end_m.to_dict(),
            "f_res_hz": self.f_res_hz.to_dict() if self.f_res_hz else None,
            "f_match_hz": self.f_match_hz,
            "r_at_res_ohm": self.r_at_res_ohm,
            "r_rad_ohm": self.r_rad_ohm,
            "efficiency": self.efficiency.to_dict(),
            "feed_shunt_loss": self.feed_shunt_loss,
            "measured_crossing_hz": self.measured_crossing_hz,
            "resonance_in_sweep": self.resonance_in_sweep,
            "notes": list(self.notes),
        }


def model_resonance_hz(model: AntennaModel, length_m: float, r_loss_ohm: float, c_feed_f: float,
                       f_guess_hz: float, g_feed_s: float = 0.0) -> float:
    """First series resonance (X rising through 0) of the model near ``f_guess_hz``, Hz.

    Searches kL 2.0..3.6 (the half-wave region) and returns the crossing closest
    to the guess; raises FitError if there is none.
    """
    f_lo = 2.0 * C0_M_PER_S / (TWO_PI * length_m * _len_factor(model))
    f_hi = 3.6 * C0_M_PER_S / (TWO_PI * length_m * _len_factor(model))
    f = np.linspace(f_lo, f_hi, 321)
    x = model.z_terminals(f, length_m, r_loss_ohm, c_feed_f, g_feed_s).imag
    idx = np.flatnonzero((x[:-1] < 0) & (x[1:] >= 0))
    if idx.size == 0:
        raise FitError("the fitted model has no series resonance in the half-wave region")
    i = idx[np.argmin(np.abs(f[idx] - f_guess_hz))]
    fx = lambda t: float(model.z_terminals(np.array([t]), length_m, r_loss_ohm, c_feed_f,  # noqa: E731
                                           g_feed_s)[0].imag)
    return brentq(fx, f[i], f[i + 1], xtol=1e-9 * f[i])


def model_match_hz(model: AntennaModel, length_m: float, r_loss_ohm: float, c_feed_f: float,
                   f_guess_hz: float, g_feed_s: float = 0.0) -> float:
    """Frequency of minimum |Gamma| seen by the feed line near ``f_guess_hz``, Hz."""
    gamma = lambda f: model.gamma(f, length_m, r_loss_ohm, c_feed_f, 0.0, g_feed_s)  # noqa: E731
    f = f_guess_hz * np.linspace(0.85, 1.15, 121)
    i = int(np.clip(np.argmin(np.abs(gamma(f))), 1, f.size - 2))
    # Zoom once around the coarse minimum, then refine with a parabola through
    # three samples of |Gamma|^2 (smooth and quadratic near its minimum).
    f = np.linspace(f[i - 1], f[i + 1], 41)
    m2 = np.abs(gamma(f)) ** 2
    i = int(np.clip(np.argmin(m2), 1, f.size - 2))
    y0, y1, y2 = m2[i - 1], m2[i], m2[i + 1]
    den = y0 - 2 * y1 + y2
    t = 0.5 * (y0 - y2) / den if den > 0 else 0.0
    return float(f[i] + t * (f[1] - f[0]))


def _len_factor(model: AntennaModel) -> float:
    """Dipole-equivalent length over model length (a monopole of height h images to 2 h)."""
    return 2.0 if model.installation.kind == "monopole" else 1.0


def _start_length(model: AntennaModel, f_res_hz: float, built_m: float) -> float:
    """Electrical length whose first resonance is at ``f_res_hz`` (free-space surface)."""
    surf = default_surface()
    k = _len_factor(model)
    length = built_m
    for _ in range(3):  # L/a changes a little with L; three passes converge
        la = np.clip(k * length / model.radius_m, 100.0, 20_000.0)
        length = surf.first_resonance_kl(la) * C0_M_PER_S / (TWO_PI * f_res_hz * k)
    return float(length)


#: Parameters a user may hold fixed, with the value used when none is given.
FIXABLE = {"r_loss_ohm": 0.0, "c_feed_f": 0.0, "g_feed_s": 0.0, "delay_s": 0.0}


def fit_antenna(sweep: Sweep, desc, *, model: AntennaModel | None = None,
                fixed: dict | None = None) -> AntennaFit:
    """Fit the antenna model to ``sweep`` (already at the antenna/balun terminals).

    Parameters
    ----------
    sweep : Sweep
        Measured sweep with the reference plane at the balun input (or at the
        antenna terminals when there is no balun).
    desc : fieldcheck.antenna.Description
        What was built; its physical inputs stay fixed.
    model : AntennaModel, optional
        Override the model built from ``desc``.
    fixed : dict, optional
        Parameters to hold at a value instead of fitting, from :data:`FIXABLE`
        (e.g. ``{"delay_s": 0.0}`` when the reference plane is known to be at
        the terminals, which pins X = 0 there far better).

    Raises
    ------
    FitError
        No usable resonance near the as-built design, or the fit fails.
    """
    model = model or model_from_description(desc)
    fixed = dict(fixed or {})
    unknown = set(fixed) - set(FIXABLE)
    if unknown:
        raise InputError(f"cannot fix {', '.join(sorted(unknown))}: fixable parameters are "
                         f"{', '.join(FIXABLE)}")
    built = desc.antenna.total_length_m if desc.antenna.form == "dipole" else desc.antenna.arm_length_m
    n_ends = 2 if desc.antenna.form == "dipole" else 1
    notes = []
    g_line = gamma_from_impedance(sweep.z_ohm, model.z0_ohm)
    z_ant = sweep.z_ohm * model.balun_ratio
    f_all = sweep.f_hz

    f_design = model_resonance_hz(model, built, 0.0, 0.0, C0_M_PER_S / (2 * built * _len_factor(model)))
    f_start, crossing = _start_frequency(f_all, z_ant, g_line, f_design, notes)
    length0 = _start_length(model, f_start, built)

    lo_len, hi_len = length0 / LENGTH_FREEDOM, length0 * LENGTH_FREEDOM
    k = _len_factor(model)
    kl_per_hz_m = TWO_PI * k / C0_M_PER_S
    f_lo = max(f_start / WINDOW_RATIO, (KL_MIN * 1.01) / (kl_per_hz_m * lo_len))
    f_hi = min(f_start * WINDOW_RATIO, (KL_MAX * 0.99) / (kl_per_hz_m * hi_len))
    sel = (f_all >= f_lo) & (f_all <= f_hi)
    if np.count_nonzero(sel) < 8:
        raise FitError(
            f"only {np.count_nonzero(sel)} sweep points lie within the fit window "
            f"{f_lo / 1e6:.4g}..{f_hi / 1e6:.4g} MHz around the expected resonance; "
            "sweep at least +-20 % around it with 100 or more points")
    if np.count_nonzero(sel) < f_all.size:
        notes.append(f"fitted {np.count_nonzero(sel)} of {f_all.size} points "
                     f"({f_all[sel][0] / 1e6:.6g}..{f_all[sel][-1] / 1e6:.6g} MHz) around the resonance")
    f, g = f_all[sel], g_line[sel]

    # Residual delay: start from the phase slope of measured over model
    # reflection (and from zero), and allow half a turn of round-trip phase
    # beyond either.
    tau0 = features.phase_slope_delay_s(f, g, model.gamma(f, length0))
    tau_span = 0.25 / f_start
    tau_bounds = (min(tau0, 0.0) - tau_span, max(tau0, 0.0) + tau_span)
    if model.installation.kind == "horizontal":
        model = replace(model, mutual_ref_length_m=length0)
    if "delay_s" in fixed:
        tau0 = fixed["delay_s"]
        tau_bounds = (min(tau_bounds[0], tau0), max(tau_bounds[1], tau0))
    res = _fit_once(model, f, g, length0, lo_len, hi_len, tau_bounds, tau0, fixed=fixed)
    if model.installation.kind == "horizontal":
        # Re-evaluate the ground-image mutual impedance at the fitted length.
        model = replace(model, mutual_ref_length_m=res.values["length_m"])
        res = _fit_once(model, f, g, res.values["length_m"], lo_len, hi_len, tau_bounds, tau0,
                        start=res.values, fixed=fixed)
    if res.at_bounds:
        notes.append("parameters at a bound of the fit: " + ", ".join(res.at_bounds)
                     + " (their uncertainties are not meaningful)")
    return _derive(res, model, built, n_ends, f_all, crossing, notes)


def _start_frequency(f, z_ant, g_line, f_design, notes):
    """Resonance to start from: the measured series crossing nearest the design, else the best match."""
    crossings = [c for c in features.reactance_crossings(f, z_ant) if c.kind == "series"]
    near = [c for c in crossings if 0.55 < c.f_hz / f_design < 1.8]
    if near:
        c = min(near, key=lambda c: abs(np.log(c.f_hz / f_design)))
        return c.f_hz, c.f_hz
    i = int(np.argmin(np.abs(g_line)))
    if np.abs(g_line[i]) < 0.8 and 0.55 < f[i] / f_design < 1.8 and 0 < i < f.size - 1:
        notes.append("no reactance zero crossing in the sweep: started from the best match")
        return float(f[i]), None
    if f[0] <= f_design <= f[-1] or 0.7 < f_design / f[-1] < 1.4 or 0.7 < f[0] / f_design < 1.4:
        notes.append("no resonance or clear match in the sweep: started from the as-built design")
        return float(np.clip(f_design, f[0], f[-1])), None
    raise FitError(
        f"no resonance of this antenna is in or near the sweep ({f[0] / 1e6:.6g}..{f[-1] / 1e6:.6g} MHz; "
        f"as built it should resonate near {f_design / 1e6:.6g} MHz); check the antenna description, "
        "re-sweep around the expected resonance, or run 'fieldcheck diagnose'")


def _fit_once(model, f, g, length0, lo_len, hi_len, tau_bounds, tau0=0.0, start=None, fixed=None):
    start = start or {}
    fixed = fixed or {}

    def spec(name, unit, default, lo, hi, prior=None):
        if name in fixed:
            v = float(fixed[name])
            return ParamSpec(name, unit, v, min(lo, v), max(hi, v), fixed=True)
        return ParamSpec(name, unit, float(np.clip(start.get(name, default), lo, hi)), lo, hi,
                         prior=prior)

    params = [
        spec("length_m", "m", length0, lo_len, hi_len),
        spec("r_loss_ohm", "ohm", 0.5, 0.0, R_LOSS_MAX_OHM),
        spec("c_feed_f", "F", 0.2e-12, 0.0, C_FEED_MAX_F, C_FEED_PRIOR_F),
        spec("g_feed_s", "S", 1e-5, 0.0, G_FEED_MAX_S),
        spec("delay_s", "s", tau0, *tau_bounds, prior=DELAY_PRIOR_S),
    ]
    fun = model.gamma_from_values
    best = fit_reflection(f, g, fun, params, systematics=CAL_RESIDUALS)
    if start or "delay_s" in fixed:
        return best
    # The phase-slope start can mislead over a narrow or distorted sweep:
    # always try the no-delay start too, and when neither lands near the
    # data, starts on both sides.
    third = (tau_bounds[1] - tau_bounds[0]) / 6
    extra = [0.0] if abs(best.values["delay_s"]) > DELAY_PRIOR_S[1] else []
    for i, tau in enumerate(extra + [tau0 - third, tau0 + third]):
        if i >= len(extra) and best.adequacy != "inadequate":
            break
        trial = [p if p.name != "delay_s" else replace(p, initial=float(np.clip(tau, *tau_bounds)))
                 for p in params]
        r = fit_reflection(f, g, fun, trial, noise_sigma=best.noise_sigma, systematics=CAL_RESIDUALS)
        if r.chi2 < best.chi2 * (1 - 1e-6):
            best = r
    return best


def feed_of(v: dict) -> dict:
    """The feed-side parameters of a value dict, as keywords for the model helpers."""
    return {"r_loss_ohm": v["r_loss_ohm"], "c_feed_f": v["c_feed_f"], "g_feed_s": v.get("g_feed_s", 0.0)}


def resonance_of(model, length_m, v, f_guess_hz):
    """First series resonance of the model with the feed values ``v``, Hz."""
    fd = feed_of(v)
    return model_resonance_hz(model, length_m, fd["r_loss_ohm"], fd["c_feed_f"], f_guess_hz, fd["g_feed_s"])


def match_of(model, length_m, v, f_guess_hz):
    """Best-match frequency of the model with the feed values ``v``, Hz."""
    fd = feed_of(v)
    return model_match_hz(model, length_m, fd["r_loss_ohm"], fd["c_feed_f"], f_guess_hz, fd["g_feed_s"])


def _efficiencies(model, f_hz, p):
    """Radiation efficiency of the antenna and the fraction of power lost in the feed shunt.

    Antenna: R_rad / (R_rad + R_loss) (IEEE Std 145-2013).  Feed shunt: with
    terminal voltage V, the series branch takes |V|^2 Re(1/(Z_w + R_loss)) and
    the shunt |V|^2 G; the capacitance takes no real power.
    """
    zw = model.z_wire(np.array([f_hz]), p["length_m"])[0]
    r_rad = float(zw.real)
    eff = r_rad / (r_rad + p["r_loss_ohm"])
    y_series = (1.0 / (zw + p["r_loss_ohm"])).real
    shunt = p.get("g_feed_s", 0.0) / (y_series + p.get("g_feed_s", 0.0))
    return r_rad, eff, shunt


def _derive(res: FitResult, model, built, n_ends, f_all, crossing, notes) -> AntennaFit:
    v, names = res.values, res.names
    cov = res.covariance + systematic_covariance(res, _hardware_systematic(res.f_hz))
    i_len = names.index("length_m")
    L = v["length_m"]
    f_guess = crossing or C0_M_PER_S / (2 * L * _len_factor(model))
    try:
        f_res = resonance_of(model, L, v, f_guess)
    except FitError:
        f_res = None
        notes.append("the fitted antenna shows no X = 0 at its terminals (feed capacitance or "
                     "loss hides the resonance); results refer to the best match instead")
    f_match = match_of(model, L, v, f_res or f_guess)
    f_ref = f_res or f_match
    z_ref = model.z_terminals(np.array([f_ref]), L, **feed_of(v))[0]
    r_rad, eff, shunt = _efficiencies(model, f_ref, v)
    sig_e = _propagate(lambda p: _efficiencies(model, f_ref, p)[1], v, names, cov, res.stderr)
    if f_res is not None:
        sig_f = _propagate(lambda p: resonance_of(model, p["length_m"], p, f_res), v, names, cov, res.stderr)
        res_d = Derived(float(f_res), sig_f, "Hz")
    else:
        res_d = None
    in_sweep = f_all[0] <= f_ref <= f_all[-1]
    if not in_sweep:
        notes.append(f"the fitted {'resonance' if f_res else 'best match'} {f_ref / 1e6:.6g} MHz lies "
                     f"outside the sweep ({f_all[0] / 1e6:.6g}..{f_all[-1] / 1e6:.6g} MHz): results extrapolate")
    if shunt > 0.02:
        notes.append(f"{shunt * 100:.1f} % of the power is lost in a shunt across the feed (lossy choke or "
                     "balun core, wet or dirty insulator) before it reaches the antenna")
    return AntennaFit(
        fit=res, model=model, built_length_m=float(built), n_ends=n_ends,
        f_res_hz=res_d,
        f_match_hz=f_match,
        r_at_res_ohm=float(z_ref.real), r_rad_ohm=r_rad,
        efficiency=Derived(float(eff), sig_e, "1"),
        feed_shunt_loss=float(shunt),
        length_error_m=Derived(float(L - built), float(np.sqrt(cov[i_len, i_len])), "m"),
        terminal_covariance=cov,
        measured_crossing_hz=crossing,
        resonance_in_sweep=bool(in_sweep),
        sweep_span_hz=(float(f_all[0]), float(f_all[-1])),
        notes=tuple(notes),
    )


def _propagate(fun, values, names, cov, stderr) -> float:
    """Standard error of ``fun(values)`` by first-order (delta-method) propagation."""
    grad = np.zeros(len(names))
    try:
        base = fun(values)
        for i, n in enumerate(names):
            h = max(stderr[n], abs(values[n]) * 1e-6, 1e-18) * 0.1
            p = dict(values)
            p[n] = values[n] + h
            grad[i] = (fun(p) - base) / h
    except FieldcheckError:
        # The quantity does not exist a small step away (e.g. the resonance
        # vanishes): its uncertainty is undefined, and says so.
        return float("nan")
    return float(np.sqrt(max(grad @ cov @ grad, 0.0)))
