"""SIMULATED bench sweeps of a built wire antenna, healthy or faulty, for demos and tests.

Nothing here is a measurement.  The TRUE impedance at the antenna terminals
comes straight from the method of moments (:mod:`fieldcheck.physics.mom`), not
from the fitter's interpolated surface, and includes effects the fitter's model
(:mod:`fieldcheck.model`) does not know:

* dielectric insulation, applied as an electrical-length scaling of the bare
  MoM wire (:func:`insulation_length_factor`; an approximation for demos);
* frequency-dependent conductor loss from the MoM current and the material;
* and, through :mod:`fieldcheck.bench_effects`, balun parasitics, a slightly
  mismatched cable, a calibration residual and noise.

Chain (antenna to analyser)::

    Z_wire(L * F_ins) + R_cond(f) + R_joint  || C_feed      (terminals, truth)
    -> balun (choke, shunt C, ratio, internal line) -> Gamma vs z0
    -> residual delay -> cable present (Z0/VF errors) -> error box -> noise

Faults (:data:`FAULTS`) and their documented signatures are listed in
:class:`fieldcheck.bench_effects.Fault`.  Their magnitudes are invented demo values, not reference data.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np
from scipy import optimize

from . import features
from .antenna import Description
from .bench_effects import (CAL_FAULT_DIRECTIVITY, CAL_FAULT_STEP, CAL_FAULT_STEP_AT,
                            CAL_FAULT_TRACKING, CM_STUB_LOSS_NP, CM_STUB_VF, CM_STUB_Z0_OHM,
                            DETUNE_EXTRA_R_OHM, DETUNE_FRACTION, FAULTS, LABEL,
                            LOW_SIGNAL_SIGMA, OPEN_REMAINING, SHORT_L_H, SHORT_R_OHM,
                            WRONG_CABLE_EXTRA_M, BenchEffects, Fault, add_noise,
                            apply_error_box, as_fault, as_rng, balun_line_side_impedance,
                            open_stub_impedance, parallel, shunt_capacitance)
from .constants import C0_M_PER_S, TWO_PI
from .errors import InputError
from .physics import installation as inst
from .physics.insulation import insulation_length_factor
from .physics.loss import loss_resistance_from_current, radiation_efficiency
from .physics.materials import get_material
from .physics.mom import L_OVER_A_MIN, solve_dipole
from .refplane import add_cable, add_delay, parse_cable, parse_delay
from .sweep import Sweep, gamma_from_impedance
from .touchstone import write_touchstone  # re-exported for old callers; the writer lives there

__all__ = ["BenchEffects", "Fault", "FAULTS", "LABEL", "SimulatedSweep", "insulation_length_factor",
           "simulate_antenna_z", "simulate_sweep", "write_touchstone"]

# ---- insulation ------------------------------------------------------------------

# ---- the antenna itself ----------------------------------------------------------

@dataclass(frozen=True)
class _Terminals:
    """Everything that sets the true impedance at the antenna terminals."""

    form: str
    length_m: float            # physical: dipole tip to tip, monopole height
    arm_m: float
    gap_m: float
    radius_m: float
    installation: inst.Installation
    material: object
    scale: float               # electrical / physical length (insulation x detuning)
    joint_ohm: float
    extra_r_ohm: float
    feed_c_f: float
    fault: str | None
    open_remaining: float
    n_segments: int | None

    def _dipole(self, f, total_e_m, kind):
        """(Z_wire lossless, R_cond) of a dipole of electrical length total_e_m."""
        sol = solve_dipole(f, total_e_m, self.radius_m, self.n_segments)
        r = loss_resistance_from_current(sol.z_m, sol.current_a, 1.0 / sol.z_in_ohm,
                                         sol.segment_m / self.scale, sol.f_hz, self.radius_m,
                                         self.material)
        if kind == "horizontal":
            return inst.installed_impedance(f, total_e_m, self.radius_m, self.installation,
                                            self.n_segments), r
        return sol.z_in_ohm, r

    def wire(self, f_hz):
        """Lossless wire impedance and conductor loss, ohm, at ``f_hz`` (Hz)."""
        f = np.atleast_1d(np.asarray(f_hz, dtype=float))
        if self.form == "monopole":
            h = self.length_m * (self.open_remaining if self.fault == "open-element" else 1.0)
            z, r = self._dipole(f, 2.0 * h * self.scale, "free")
            return 0.5 * z, 0.5 * r  # image theory: half the dipole (Balanis 4th ed. 4.7.4)
        if self.fault != "open-element":
            return self._dipole(f, self.length_m * self.scale, self.installation.kind)
        # One arm broken: two monopoles in series, each half of a dipole of twice its arm.
        z1, r1 = self._dipole(f, (2 * self.arm_m + self.gap_m) * self.scale, "free")
        z2, r2 = self._dipole(f, (2 * self.open_remaining * self.arm_m + self.gap_m) * self.scale,
                              "free")
        return 0.5 * (z1 + z2), 0.5 * (r1 + r2)

    def series_loss_ohm(self, r_cond_ohm):
        return r_cond_ohm + self.joint_ohm + self.extra_r_ohm

    def z(self, f_hz):
        """True terminal impedance, ohm, and its parts (Z_wire, R_cond)."""
        f = np.atleast_1d(np.asarray(f_hz, dtype=float))
        zw, rc = self.wire(f)
        z = shunt_capacitance(f, zw + self.series_loss_ohm(rc), self.feed_c_f)
        if self.fault == "shorted-feed":
            z = parallel(z, SHORT_R_OHM + 1j * TWO_PI * f * SHORT_L_H)
        return z, zw, rc


def _insulation_factor(desc: Description) -> float:
    ant = desc.antenna
    if ant.insulation is None:
        return 1.0
    wire = ant.total_length_m if ant.form == "dipole" else 2.0 * ant.total_length_m
    return float(insulation_length_factor(1.0, wire, ant.radius_m, ant.insulation.thickness_m,
                                          ant.insulation.permittivity))


def _terminals(desc: Description, joint_loss_ohm: float, feed_c_f: float, fault: Fault | None,
               n_segments: int | None) -> _Terminals:
    ant = desc.antenna
    name = fault.name if fault else None
    scale = _insulation_factor(desc)
    extra_r = 0.0
    if name == "detuned":
        scale *= 1.0 + (fault.size or DETUNE_FRACTION)
        extra_r = DETUNE_EXTRA_R_OHM
    remaining = (fault.size if fault and fault.size else OPEN_REMAINING) if name == "open-element" else 1.0
    if name == "open-element":
        # keep the stub inside the thin-wire model's range (length/radius >= 100)
        if ant.form == "dipole":
            need = (L_OVER_A_MIN * 1.01 * ant.radius_m / scale - ant.feed_gap_m) / (2 * ant.arm_length_m)
        else:
            need = L_OVER_A_MIN * 1.01 * ant.radius_m / (2 * scale * ant.arm_length_m)
        remaining = min(max(remaining, need), 1.0)
    return _Terminals(ant.form, ant.total_length_m, ant.arm_length_m, ant.feed_gap_m, ant.radius_m,
                      desc.installation, get_material(ant.material), scale, float(joint_loss_ohm),
                      extra_r, float(feed_c_f), name, remaining, n_segments)


def simulate_antenna_z(f_hz, desc: Description, *, joint_loss_ohm: float = 0.0,
                       feed_c_f: float = 0.0, fault=None, n_segments: int | None = None) -> np.ndarray:
    """TRUE impedance at the antenna terminals, ohm (complex, one value per frequency).

    MoM wire (perfect conductor) of electrical length = physical x
    :func:`insulation_length_factor`, in its installation, plus conductor loss
    from the MoM current and the material (frequency dependent), plus the joint
    loss, all in parallel with the feed capacitance; terminal faults
    (shorted-feed, open-element, detuned) included.

    Parameters
    ----------
    f_hz : float or array of float
        Frequencies, Hz.
    desc : antenna.Description
        What was built.
    joint_loss_ohm : float
        Series resistance of joints at the feed, ohm.
    feed_c_f : float
        Shunt capacitance across the terminals, F.
    fault : str or Fault, optional
        A fault (only the terminal faults change this impedance).
    n_segments : int, optional
        MoM segment count (default of :func:`fieldcheck.physics.mom.solve_dipole`).
    """
    return _terminals(desc, joint_loss_ohm, feed_c_f, as_fault(fault), n_segments).z(f_hz)[0]


# ---- the whole bench -------------------------------------------------------------

@dataclass(frozen=True)
class SimulatedSweep:
    """A SIMULATED sweep and what is true about it.

    Parameters
    ----------
    sweep : Sweep
        Reflection at the analyser port (source starts with ``"simulated:"``).
    truth : dict
        Plain data (JSON-ready); see :func:`simulate_sweep` for the keys.
    z_terminals_ohm : ndarray of complex or None
        True impedance at the antenna terminals on the sweep grid, ohm (None when
        a cable fault hides the antenna).
    gamma_balun : ndarray of complex or None
        Reflection at the balun's line-side connector against z0, before delay,
        cable, error box and noise, dimensionless.
    """

    sweep: Sweep
    truth: dict = field(repr=False)
    z_terminals_ohm: np.ndarray | None = field(default=None, repr=False)
    gamma_balun: np.ndarray | None = field(default=None, repr=False)


def _first_series_resonance(term: _Terminals, f, z) -> float | None:
    """First X = 0 with X rising (series resonance), refined on the true impedance, Hz."""
    xs = [c for c in features.reactance_crossings(f, z) if c.kind == "series"]
    if not xs:
        return None
    i = xs[0].index

    def reactance(fh):
        return float(term.z([fh])[0].imag[0])

    try:
        return float(optimize.brentq(reactance, f[i], f[i + 1], xtol=1e-7 * f[i]))
    except ValueError:  # not bracketed on the true curve: keep the interpolated value
        return xs[0].f_hz


def _f_min_gamma(f, g) -> float:
    """Frequency of min |G| on the grid, refined by a parabola through 3 points of |G|^2, Hz."""
    m = np.abs(g) ** 2
    i = int(np.argmin(m))
    if 0 < i < m.size - 1:
        y0, y1, y2 = m[i - 1], m[i], m[i + 1]
        den = y0 - 2 * y1 + y2
        if den > 0:
            t = 0.5 * (y0 - y2) / den  # vertex offset in steps, |t| <= 0.5 for a local min
            lo, hi = (f[i] - f[i - 1], f[i + 1] - f[i])
            return float(f[i] + t * (hi if t > 0 else lo))
    return float(f[i])


def _antenna_truth(term: _Terminals, f, z_t) -> dict:
    f_res = _first_series_resonance(term, f, z_t)
    out = {"f_res_terminals_hz": f_res, "r_loss_ohm": None, "conductor_loss_ohm": None,
           "efficiency": None, "r_radiation_ohm": None}
    if f_res is not None:
        _, zw, rc = term.z([f_res])
        r_loss = float(term.series_loss_ohm(rc[0]))
        out.update(conductor_loss_ohm=float(rc[0]), r_loss_ohm=r_loss,
                   r_radiation_ohm=float(zw[0].real))
        if zw[0].real > 0:
            out["efficiency"] = float(radiation_efficiency(zw[0].real, r_loss))
    return out


def simulate_sweep(desc: Description, f_hz, effects: BenchEffects | None = None, *, rng=None,
                   fault=None, n_segments: int | None = None) -> SimulatedSweep:
    """Simulate what the analyser shows for the antenna ``desc`` on a bench with ``effects``.

    Parameters
    ----------
    desc : antenna.Description
        What was built and how it is fed: ``feed.balun_ratio``, the system
        impedance, the nominal cable (``feed.cable``, present unless
        ``effects.cable`` replaces it) and a residual delay (``feed.delay``,
        present).  A fixture named by the description is not simulated.
    f_hz : array of float
        Frequencies, Hz, increasing.
    effects : BenchEffects, optional
        Bench imperfections (default: ``BenchEffects()``, noise 0.002 only).
    rng : numpy.random.Generator or int, optional
        Noise generator or seed (None: seed 0).
    fault : str or Fault, optional
        One of :data:`FAULTS` (see :class:`Fault` for each signature).
    n_segments : int, optional
        MoM segment count (odd); fewer is faster and less accurate.

    Returns
    -------
    SimulatedSweep
        ``truth`` keys: ``label`` ("SIMULATED"), ``physical_total_length_m``
        (dipole tip to tip incl. gap, monopole height), ``insulation_factor``,
        ``electrical_length_m`` (physical x insulation factor, x detuning for the
        detuned fault: the length the fitter should find), ``f_res_terminals_hz``
        (first series X = 0 of the true terminal impedance incl. feed C),
        ``r_loss_ohm`` (conductor + joint [+ absorption] at that resonance),
        ``conductor_loss_ohm``, ``r_radiation_ohm``, ``efficiency`` (radiation
        efficiency there), ``f_match_hz`` (min |Gamma| at the balun input),
        ``joint_loss_ohm``, ``feed_c_f``, ``delay_s`` (total one-way residual
        delay), ``noise_sigma``, ``cable_described``, ``cable_present``,
        ``z0_ohm``, ``balun_ratio``, ``fault``, ``notes`` (list of caveats) and
        fault-specific entries.
        Antenna entries are None when there is no resonance in the sweep or a
        cable fault hides the antenna.
    """
    f = np.asarray(f_hz, dtype=float).ravel()
    if f.size < 2 or not np.all(np.isfinite(f)) or np.any(f <= 0) or np.any(np.diff(f) <= 0):
        raise InputError("simulation frequencies must be at least 2 positive, finite, strictly "
                         "increasing values in Hz")
    effects = BenchEffects() if effects is None else effects
    fault = as_fault(fault)
    name = fault.name if fault else None
    rng = as_rng(rng)
    z0 = desc.feed.system_impedance_ohm
    nominal = parse_cable(desc.feed.cable) if desc.feed.cable else None
    described = effects.cable if effects.cable is not None else nominal
    cable = effects.actual_cable(nominal)
    delay_s = (parse_delay(desc.feed.delay) if desc.feed.delay else 0.0) + effects.extra_delay_s
    ant = desc.antenna
    truth = {
        "label": LABEL, "fault": name, "z0_ohm": z0, "balun_ratio": desc.feed.balun_ratio,
        "physical_total_length_m": ant.total_length_m, "insulation_factor": _insulation_factor(desc),
        "joint_loss_ohm": effects.joint_loss_ohm, "feed_c_f": effects.feed_c_f, "delay_s": delay_s,
        "cable_described": described.describe() if described else None, "notes": [],
    }
    if desc.feed.fixture_path:
        truth["notes"].append(f"the description's fixture {desc.feed.fixture_path} is NOT in the "
                              "simulated sweep: do not remove it when reading this file")
    if name == "open-element" and desc.installation.kind == "horizontal":
        truth["notes"].append("open-element over ground: the broken wire is modelled in free space")
    needs_cable = ("wrong-cable", "cable-open", "cable-short")
    if name in needs_cable and cable is None:
        raise InputError(f"fault {name} needs a cable: name one in the description, e.g. "
                         '[feed] cable = "RG58:5m", or give BenchEffects(cable=...)')
    if name == "wrong-cable":
        cable = replace(cable, length_m=fault.distance_m or cable.length_m + WRONG_CABLE_EXTRA_M)
        truth["cable_length_error_m"] = cable.length_m - described.length_m
    z_t = g_b = None
    if name in ("cable-open", "cable-short"):
        d = fault.distance_m or 0.5 * cable.length_m
        if d > cable.length_m:
            raise InputError(f"fault distance {d:g} m is beyond the end of the {cable.length_m:g} m "
                             "cable: give a distance along the cable")
        cut = replace(cable, length_m=d)
        end = np.full(f.shape, 1.0 if name == "cable-open" else -1.0, dtype=complex)
        g = add_cable(Sweep(f, end, z0), cut).s11
        truth.update(fault_distance_m=d, fault_velocity_factor=cut.velocity_factor,
                     f_res_terminals_hz=None, f_match_hz=None, r_loss_ohm=None,
                     conductor_loss_ohm=None, efficiency=None, r_radiation_ohm=None)
        scale = truth["insulation_factor"]
    else:
        term = _terminals(desc, effects.joint_loss_ohm, effects.feed_c_f, fault, n_segments)
        scale = term.scale
        z_t, _, _ = term.z(f)
        z_feed, bench = z_t, effects
        if name == "common-mode":
            shield_m = fault.distance_m or (cable.length_m if cable else None)
            if shield_m is None:
                raise InputError("fault common-mode needs the shield length: give a fault "
                                 "distance or name a cable in the description")
            z_feed = parallel(z_t, open_stub_impedance(f, shield_m, CM_STUB_Z0_OHM, CM_STUB_VF,
                                                       CM_STUB_LOSS_NP))
            bench = replace(effects, balun_common_mode_ohm=None)  # the choke is what failed
            truth.update(common_mode_shield_m=shield_m,
                         common_mode_period_hz=CM_STUB_VF * C0_M_PER_S / (2.0 * shield_m))
        if name == "open-element":
            truth["open_remaining_fraction"] = term.open_remaining
        g_b = gamma_from_impedance(balun_line_side_impedance(f, z_feed, desc.feed.balun_ratio, bench), z0)
        truth.update(_antenna_truth(term, f, z_t), f_match_hz=_f_min_gamma(f, g_b))
        g = g_b
        if delay_s > 0:
            g = add_delay(Sweep(f, g, z0), delay_s).s11
        if cable is not None:
            g = add_cable(Sweep(f, g, z0), cable).s11
    truth["electrical_length_m"] = ant.total_length_m * scale
    truth["cable_present"] = cable.describe() if cable else None
    e00, e11, trk = effects.cal_directivity, effects.cal_source_match, effects.cal_tracking
    if name == "cal-fault":
        frac = fault.size or CAL_FAULT_STEP_AT
        if not frac < 1:
            raise InputError(f"cal-fault size is the step position as a fraction of the span "
                             f"(0..1); got {frac!r}")
        f_step = f[0] + frac * (f[-1] - f[0])
        trk = trk * CAL_FAULT_TRACKING * np.where(f >= f_step, CAL_FAULT_STEP, 1.0)
        e00 = e00 + CAL_FAULT_DIRECTIVITY
        truth["cal_step_hz"] = float(f[np.searchsorted(f, f_step)])
    g = apply_error_box(g, e00, e11, trk)
    sigma = (fault.size or LOW_SIGNAL_SIGMA) if name == "low-signal" else effects.noise_sigma
    truth["noise_sigma"] = sigma
    g = add_noise(g, sigma, rng)
    title = ant.name or f"{ant.form} {ant.total_length_m * 1e3:.1f} mm"
    comments = (
        f"{LABEL} sweep made by fieldcheck simulate: NOT a measurement",
        f"{LABEL} antenna: {title}; {ant.form}, diameter {ant.diameter_m * 1e3:g} mm, "
        f"{ant.material}, installation {desc.installation.kind}",
        f"{LABEL} fault: {name or 'none'}; noise sigma {sigma:g}",
        f"{LABEL} truth: " + ", ".join(
            f"{k}={truth[k]:.6g}" for k in ("f_res_terminals_hz", "f_match_hz", "electrical_length_m")
            if truth.get(k) is not None),
    )
    sweep = Sweep(f, g, z0, source=f"simulated: {LABEL} {title} ({name or 'no fault'})",
                  comments=comments)
    return SimulatedSweep(sweep, truth, z_t, g_b)
