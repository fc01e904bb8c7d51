"""Mismatch signatures: one small pure function per possible cause.

Each signature looks at an :class:`~fieldcheck.diagnose_observe.Observations`
record (built by :func:`fieldcheck.diagnose_observe.observe`) and returns a
:class:`Cause` or None.  Every threshold is a named constant with its origin
in :mod:`fieldcheck.diagnose_thresholds`, which also explains the confidence
scoring (a margin ``z`` past the threshold: 50 % at ``z = 0``, 90 % at
``z = +1``); those names are re-exported here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from .constants import C0_M_PER_S
from .diagnose_thresholds import (  # noqa: F401  (re-exported: sig.<NAME> stays valid)
    BALUN_RATIO_TOLERANCE, CABLE_END_FRACTION, CABLE_FAULT_MIN_GAMMA, CAL_GAMMA_MARGIN,
    CAL_STEP_MIN_GAMMA, CAL_STEP_SIGMAS, LOGISTIC_GAIN, LOW_SIGNAL_FRACTION, LOW_SIGNAL_SIGMA,
    NO_FAULT_BELOW, NO_FAULT_Z_NO_RESONANCE, OPEN_BAND, OPEN_DOUBLE_RANGE, OPEN_MIN_COVERAGE,
    OPEN_X_FRACTION, OPEN_Z_NO_RESONANCE, OUTSIDE_VF_RANGE, PLAUSIBLE_R_FACTOR,
    REFPLANE_HARDWARE_M, REFPLANE_MAX_TURNS, REFPLANE_MIN_M, REFPLANE_SIGMAS,
    REPORT_MIN_CONFIDENCE, RIPPLE_MIN_GAMMA, RIPPLE_MIN_SNR, RIPPLE_PERIOD_RTOL,
    R_RATIO_THRESHOLD, SHIFT_SCALE, SHIFT_THRESHOLD, SHORT_L_MAX_H, SHORT_R_FRACTION,
    SHORT_X_POSITIVE_FRACTION, confidence, log_margin,
)

if TYPE_CHECKING:  # the record is defined by fieldcheck.diagnose_observe
    from .diagnose_observe import Observations


@dataclass(frozen=True)
class Cause:
    """One possible cause of the mismatch.

    Parameters
    ----------
    code : str
        Stable machine name, e.g. ``'resonance-shift'``.
    title : str
        One line for people.
    confidence : float
        0..1, see the module docstring.
    evidence : tuple of str
        Plain sentences with numbers and units.
    next_check : str
        One imperative sentence: what to check next.
    where : str or None
        Where to look, in words.
    distance_m : float or None
        Distance along the cable from the analyser, m, when the cause has one.
    at_height : bool
        The next check means working on the installed antenna.
    margin : float
        The margin z behind ``confidence`` (causes are ranked by it, so two
        causes both near 100 % keep a meaningful order).
    """

    code: str
    title: str
    confidence: float
    evidence: tuple = field(default=())
    next_check: str = ""
    where: str | None = None
    distance_m: float | None = None
    at_height: bool = False
    margin: float = 0.0

    def to_dict(self) -> dict:
        return {"code": self.code, "title": self.title, "confidence": self.confidence,
                "margin": self.margin, "evidence": list(self.evidence),
                "next_check": self.next_check, "where": self.where,
                "distance_m": self.distance_m, "at_height": self.at_height}


def _cause(code: str, title: str, z: float, evidence, next_check: str, **kw) -> Cause:
    z = float(np.clip(z, -30.0, 30.0))
    return Cause(code, title, confidence(z), tuple(evidence), next_check, margin=z, **kw)


def _mhz(f_hz: float) -> str:
    return f"{f_hz / 1e6:.5g} MHz"


# ---- signatures -----------------------------------------------------------------
def resonance_shift(o: Observations) -> Cause | None:
    """Resonance away from the as-built design: length, end effect, nearby objects."""
    if o.f_design_hz is None:
        return None
    meas = o.measured_resonance()
    if meas is None:
        return None
    f_res, _, how = meas
    ratio = f_res / o.f_design_hz
    if not 0.6 < ratio < 1.6:  # far away: open element or a different antenna
        return None
    shift = ratio - 1.0
    # Resonant length scales as 1/f (the end effect scales with it to first order).
    delta_total_m = o.built_length_m * (1.0 / ratio - 1.0)
    if o.fit is not None and how == "fitted":
        delta_total_m = o.fit.length_error_m.value
    per_end_mm = 1e3 * delta_total_m / o.n_ends
    z = (abs(shift) - SHIFT_THRESHOLD) / SHIFT_SCALE
    sense = "longer" if per_end_mm > 0 else "shorter"
    ev = (f"resonance {how} at {_mhz(f_res)}, the as-built design resonates at "
          f"{_mhz(o.f_design_hz)}: {100 * shift:+.2f} %.",
          f"the antenna behaves as if each {'arm' if o.n_ends == 2 else 'element'} were "
          f"{abs(per_end_mm):.1f} mm {sense} than built "
          f"({1e3 * delta_total_m:+.1f} mm electrical length in total).")
    if shift < 0:
        nxt = ("Measure each arm from feed terminal to tip and look for metal, supports or "
               "insulation near the tips; if it is a length error, trim by the equivalent length.")
    else:
        nxt = ("Measure each arm from feed terminal to tip and check that no part is missing "
               "or bent back; if it is a length error, lengthen by the equivalent length.")
    return _cause("resonance-shift", f"resonance {abs(100 * shift):.1f} % "
                  f"{'below' if shift < 0 else 'above'} the as-built design", z, ev, nxt,
                  where="element length and surroundings", at_height=True)


def resistance_off(o: Observations) -> Cause | None:
    """Terminal resistance far from expected: loss, proximity, or a balun ratio error."""
    if o.r_expected_ohm is None:
        return None
    meas = o.measured_resonance()
    if meas is None:
        return None
    f_res, r_meas, how = meas
    if (o.f_design_hz and not 0.6 < f_res / o.f_design_hz < 1.6) or r_meas <= 0:
        return None  # not this antenna's resonance, or a negative R (calibration)
    q = r_meas / o.r_expected_ohm
    ev = [f"resistance at resonance ({how}, {_mhz(f_res)}): {r_meas:.1f} ohm at the antenna "
          f"terminals; expected {o.r_expected_ohm:.1f} ohm (radiation plus "
          f"{o.r_loss_expected_ohm:.2g} ohm conductor loss): ratio {q:.2f}."]
    for target, word in ((4.0, "4 times"), (0.25, "a quarter of")):
        off = abs(math.log(q / target))
        if off < math.log(BALUN_RATIO_TOLERANCE):
            ev.append(f"{word} the expected value is what a 4:1 balun ratio error gives "
                      f"(declared balun ratio {o.balun_ratio:g}).")
            z = log_margin(math.log(BALUN_RATIO_TOLERANCE), max(off, 1e-3), 1.5)
            return _cause("balun-ratio", "balun ratio not as declared", z, ev,
                          "Check which balun is fitted at the feed and declare it "
                          "(--balun none, 1:1 or 4:1).", where="balun at the feed point",
                          at_height=True)
    if q >= 1.0:
        z = log_margin(q, R_RATIO_THRESHOLD, 1.5)
        extra = r_meas - o.r_expected_ohm
        eff = (o.r_expected_ohm - o.r_loss_expected_ohm) / r_meas
        ev.append(f"{extra:.1f} ohm more than expected: if it is loss, radiation efficiency "
                  f"is about {100 * eff:.0f} %.")
        return _cause("excess-resistance", "terminal resistance too high (loss in joints or "
                      "conductors, or a lossy balun)", z, ev,
                      "Check every joint and connector at the feed for corrosion or a loose "
                      "screw, and measure the DC resistance of each arm.",
                      where="feed-point joints and conductors", at_height=True)
    z = log_margin(1.0 / q, R_RATIO_THRESHOLD, 1.5)
    ev.append("a resistance well below expected means coupling to the ground, a mast or "
              "other metal nearby, or something across the feed.")
    return _cause("low-resistance", "terminal resistance too low (ground or metal close by)",
                  z, ev, "Check the antenna's height and its distance from masts, guys and "
                  "other metal against the description.", where="antenna surroundings",
                  at_height=True)


def shorted_feed(o: Observations) -> Cause | None:
    """Small |Z| and small R across the whole sweep."""
    z_ant = o.z_ohm * o.balun_ratio
    zref = o.z0_ohm * o.balun_ratio
    if np.mean(z_ant.imag > 0) < SHORT_X_POSITIVE_FRACTION:
        return None
    l_h = float(np.median(z_ant.imag / (2.0 * np.pi * o.f_hz)))
    r_med = float(np.median(z_ant.real))
    z = min(log_margin(SHORT_L_MAX_H, max(l_h, 1e-15)),
            log_margin(SHORT_R_FRACTION * zref, max(r_med, 1e-6)))
    if z < -1.5:
        return None
    ev = (f"the terminals look like a small inductor: {l_h * 1e9:.1f} nH (median X / omega, "
          f"limit {SHORT_L_MAX_H * 1e9:.0f} nH), |Z| at most {np.abs(z_ant).max():.1f} ohm.",
          f"median resistance {r_med:.2f} ohm (limit {SHORT_R_FRACTION * zref:.3g} ohm): no "
          "power reaches a radiator.")
    return _cause("shorted-feed", "short circuit at the feed", z, ev,
                  "Disconnect the cable at the feed and check for a short between the two "
                  "terminals (swarf, a crushed connector, a balun wired across).",
                  where="feed point", at_height=True)


def open_element(o: Observations) -> Cause | None:
    """Capacitive with no resonance where expected, or resonance near twice the design."""
    f, x = o.f_hz, o.z_ohm.imag * o.balun_ratio
    zref = o.z0_ohm * o.balun_ratio
    if o.f_design_hz is None:
        if np.any(x >= 0) or o.series_crossings:
            return None
        ev = (f"reactance is capacitive over the whole sweep (largest X {x.max():.0f} ohm) "
              "with no resonance; without a description this cannot be told from a "
              "resonance above the sweep.",)
        return _cause("open-element", "open or broken element (or resonance above the sweep)",
                      -0.5, ev, "Check both arms for continuity from the feed terminal to "
                      "the tip.", where="elements", at_height=True)
    fd = o.f_design_hz
    lo_b, hi_b = OPEN_BAND
    r_max = PLAUSIBLE_R_FACTOR * o.r_expected_ohm if o.r_expected_ohm else np.inf
    near = [c for c in o.series_crossings if lo_b < c[0] / fd < hi_b and c[1] < r_max]
    double = [c for c in o.series_crossings if OPEN_DOUBLE_RANGE[0] < c[0] / fd < OPEN_DOUBLE_RANGE[1]]
    if near or not (f[0] <= fd <= f[-1]):
        return None
    fit_res = o.fitted_resonance()
    if fit_res is not None and lo_b < fit_res / fd < hi_b:
        return None  # the model finds the antenna's resonance where expected
    band = (f >= lo_b * fd) & (f <= hi_b * fd)
    if np.count_nonzero(band) < 2:
        return None
    coverage = math.log(f[band][-1] / f[band][0]) / math.log(hi_b / lo_b)
    x_near = float(x[band].max())  # closest approach to a resonance
    if coverage < OPEN_MIN_COVERAGE or x_near >= 0.0:
        return None  # band not swept, or X turns inductive: not capacitive throughout
    x_d = float(np.interp(fd, f, x))
    z = max(log_margin(-x_near, OPEN_X_FRACTION * zref), OPEN_Z_NO_RESONANCE)
    fit_txt = ("the antenna model finds no resonance there either" if fit_res is None else
               f"the model's resonance {_mhz(fit_res)} is outside that band")
    if o.fit is not None and o.fit.fit.adequacy == "inadequate":
        fit_txt = "the antenna model does not fit the trace (inadequate fit)"
    ev = [f"no resonance within {100 * (lo_b - 1):+.0f}..{100 * (hi_b - 1):+.0f} % of the design "
          f"resonance {_mhz(fd)} ({100 * coverage:.0f} % of that band swept); {fit_txt}.",
          f"the reactance stays capacitive across the band: at best {x_near:.0f} ohm, "
          f"{x_d:.0f} ohm at the design resonance (threshold {-OPEN_X_FRACTION * zref:.0f} ohm; "
          "a healthy dipole behind its feed capacitance stays within about 20 ohm of zero)."]
    if double:
        z = max(z, 0.0) + 1.0
        ev.append(f"a resonance at {_mhz(double[0][0])}, {double[0][0] / fd:.2f} times the "
                  "design: an element about half as long as built.")
    return _cause("open-element", "open or broken element", z, ev,
                  "Check both arms for continuity from the feed terminal to the tip, and the "
                  "solder or clamp joints at the feed.", where="elements and feed joints",
                  at_height=True)


def common_mode(o: Observations) -> Cause | None:
    """Ripple whose period is a round trip on a line: outside of the feed line, or the cable itself."""
    if o.ripple is None:
        return None
    amp, period_hz, snr, at_edge = o.ripple
    if at_edge:
        return None
    z = min(log_margin(amp, RIPPLE_MIN_GAMMA), log_margin(snr, RIPPLE_MIN_SNR))
    # Round trip on a line of length L: period c VF / (2 L) (Pozar, Microwave
    # Engineering, 4th ed., section 2.3, Gamma_in = Gamma_L exp(-2 j beta l)).
    vf_out = 0.5 * sum(OUTSIDE_VF_RANGE)
    out_m = C0_M_PER_S * vf_out / (2.0 * period_hz)
    ev = [f"ripple of {amp:.3f} in Gamma ({20 * math.log10(amp):.1f} dB) with period "
          f"{period_hz / 1e6:.4g} MHz, {snr:.0f} times the noise."]
    if o.cable_length_m and o.cable_vf:
        inner = C0_M_PER_S * o.cable_vf / (2.0 * o.cable_length_m)
        if abs(period_hz / inner - 1.0) < RIPPLE_PERIOD_RTOL:
            ev.append(f"the period is a round trip inside the {o.cable_length_m:g} m cable at "
                      f"its VF {o.cable_vf:g} (expected {inner / 1e6:.4g} MHz): a standing wave "
                      "on the cable, not current on its outside.")
            return _cause("cable-mismatch", "standing wave on the feed cable (cable impedance "
                          "or connector mismatch)", z, ev,
                          "Check the cable's impedance rating and its connectors, or calibrate "
                          "at the cable's far end.", where="feed cable and its connectors")
        lo = C0_M_PER_S * OUTSIDE_VF_RANGE[0] / (2.0 * o.cable_length_m)
        hi = C0_M_PER_S * OUTSIDE_VF_RANGE[1] / (2.0 * o.cable_length_m)
        if lo * (1 - RIPPLE_PERIOD_RTOL) < period_hz < hi * (1 + RIPPLE_PERIOD_RTOL):
            z += 1.0
            ev.append(f"it matches a round trip along the outside of the {o.cable_length_m:g} m "
                      f"cable (VF {OUTSIDE_VF_RANGE[0]:g}..{OUTSIDE_VF_RANGE[1]:g}: "
                      f"{lo / 1e6:.4g}..{hi / 1e6:.4g} MHz).")
    ev.append(f"that period is a round trip on {out_m:.2f} m of line at VF {vf_out:g} "
              "(the outside of a jacketed shield).")
    return _cause("common-mode", "current on the outside of the feed line (common mode)", z, ev,
                  "Fit a choke or a current balun at the feed point and sweep again; if the "
                  "ripple moves when you touch or re-route the cable, this is it.",
                  where=f"along the outside of a feed line about {out_m:.1f} m long",
                  at_height=True)


def reference_plane(o: Observations) -> Cause | None:
    """A residual delay: the cable not removed, or the wrong cable removed."""
    ev = []
    z = -30.0
    metres = None
    vf = o.cable_vf or 0.66
    if o.residual_delay_s is not None:
        t = o.residual_delay_s
        metres = C0_M_PER_S * t
        z = log_margin(abs(metres), REFPLANE_MIN_M)
        excess_m = abs(metres) - REFPLANE_HARDWARE_M
        sigma_txt = ""
        if o.residual_delay_stderr_s:
            sigma_m = C0_M_PER_S * o.residual_delay_stderr_s
            z = min(z, (excess_m / sigma_m - REFPLANE_SIGMAS) / 2.0)
            sigma_txt = f" +- {o.residual_delay_stderr_s * 1e12:.0f}"
        ev.append(f"the fit needs a residual one-way delay of {t * 1e12:.0f}{sigma_txt} ps: "
                  f"{metres * 100:+.1f} cm of free space, {metres * vf * 100:+.1f} cm "
                  f"of VF {vf:g} cable.")
        ev.append(f"feed hardware (balun line, adapters) accounts for up to about "
                  f"{REFPLANE_HARDWARE_M * 100:.0f} cm of free space; a cable error is "
                  f"tens of cm (threshold {REFPLANE_MIN_M * 100:.0f} cm).")
    if o.winding_turns > REFPLANE_MAX_TURNS:
        span = o.f_hz[-1] - o.f_hz[0]
        t_min = (o.winding_turns - 1.0) / (2.0 * span)
        zt = o.winding_turns - REFPLANE_MAX_TURNS
        ev.append(f"the trace winds {o.winding_turns:.1f} turns around the Smith chart centre; "
                  f"an antenna alone winds at most one per resonance: at least "
                  f"{t_min * 1e9:.2f} ns ({C0_M_PER_S * t_min:.2f} m free space) of line is left in.")
        if zt > z:
            z, metres = zt, C0_M_PER_S * t_min
    if not ev or z < -1.5:
        return None
    side = "too little" if (metres or 0) > 0 else "too much"
    return _cause("reference-plane", f"reference plane not at the antenna ({side} line removed)",
                  z, ev, "Check the cable type and length given for removal (--cable), or "
                  "calibrate at the antenna end of the cable.",
                  where="between the calibration plane and the feed")


def calibration_fault(o: Observations) -> Cause | None:
    """|S11| above 1 or jumps in the trace."""
    g = np.abs(o.raw_gamma)
    excess = float(g.max() - 1.0 - 3.0 * o.noise_sigma)
    ev = []
    z = -30.0
    if excess > 0:
        z = excess / CAL_GAMMA_MARGIN - 1.0
        n = int(np.count_nonzero(g > 1.0 + 3.0 * o.noise_sigma))
        ev.append(f"|S11| reaches {g.max():.3f} (above 1 at {n} of {g.size} points): a "
                  "passive antenna cannot reflect more than it receives.")
    if o.steps:
        f_s, jump = max(o.steps, key=lambda s: s[1])
        z = max(z, log_margin(jump, CAL_STEP_MIN_GAMMA))
        ev.append(f"{len(o.steps)} discontinuit{'y' if len(o.steps) == 1 else 'ies'} in the "
                  f"trace, the largest a jump of {jump:.3f} in Gamma at {_mhz(f_s)}.")
    if not ev:
        return None
    return _cause("calibration", "calibration fault (|S11| > 1 or steps in the trace)", z, ev,
                  "Re-calibrate at the cable end with known-good standards and check that the "
                  "calibration covers this sweep's range and points.", where="analyser calibration")


def low_signal(o: Observations) -> Cause | None:
    """Noise-dominated data."""
    limit = max(LOW_SIGNAL_SIGMA, LOW_SIGNAL_FRACTION * o.variation)
    z = log_margin(o.noise_sigma, limit)
    if z < -1.5:
        return None
    ev = (f"trace noise {o.noise_sigma:.4f} per component of Gamma "
          f"({20 * math.log10(o.noise_sigma):.0f} dB), limit {limit:.4f}; the trace itself "
          f"varies by {o.variation:.3f} RMS.",)
    return _cause("low-signal", "too little signal (noise-dominated data)", z, ev,
                  "Raise the analyser's output power or narrow its IF bandwidth, and look for a "
                  "strong nearby transmitter.", where="analyser and RF environment")


def resonance_outside(o: Observations) -> Cause | None:
    """No resonance in the sweep, the reactance trend points outside it."""
    f, x = o.f_hz, o.z_ohm.imag
    # The fit gives no X = 0 (None) when feed capacitance or loss hides the resonance.
    fit_out = (o.fit is not None and o.fit.f_res_hz is not None
               and not o.fit.resonance_in_sweep)
    if o.series_crossings and not fit_out:
        return None
    n = max(5, f.size // 10)
    ev = []
    if np.all(x < 0) and x[-1] > x[-n]:
        side, edge = "above", f[-1]
    elif np.all(x > 0) and x[0] < x[n - 1]:
        side, edge = "below", f[0]
    elif fit_out:
        side = "above" if o.fit.f_res_hz.value > f[-1] else "below"
        edge = f[-1] if side == "above" else f[0]
    else:
        return None
    z = 1.0
    if fit_out:
        ev.append(f"the fitted resonance {_mhz(o.fit.f_res_hz.value)} lies outside the sweep.")
    ev.append(f"no series resonance in {_mhz(f[0])}..{_mhz(f[-1])}; the reactance trend "
              f"points {side} the sweep (X = {x[0]:.0f} ohm at the bottom, {x[-1]:.0f} ohm at the top).")
    if o.f_design_hz is not None:
        inside = f[0] <= o.f_design_hz <= f[-1]
        z += -1.5 if inside else 0.5
        ev.append(f"the as-built design resonates at {_mhz(o.f_design_hz)}, "
                  f"{'inside' if inside else 'outside'} the sweep.")
    return _cause("resonance-outside", f"resonance {side} the swept range", z, ev,
                  f"Sweep again over a wider range {side} {_mhz(edge)}.", where="sweep settings")


def cable_faults(o: Observations) -> list[Cause]:
    """Reflections in the cable well before its far end (time domain on the raw sweep)."""
    if o.tdr is None:
        return []
    res = o.tdr
    out = []
    length = o.cable_length_m
    # Peak positions are good to a fraction of the resolution (which is about telling
    # two peaks apart), so half of it is the guard at either end of the cable.
    near = 0.5 * res.range_resolution_m
    for p in res.peaks:
        if p.distance_m < near or abs(p.gamma) < 0.5 * CABLE_FAULT_MIN_GAMMA:
            continue  # the analyser's own connector, or too small to matter
        if length is not None:
            margin = max(CABLE_END_FRACTION * length, near)
            if p.distance_m > length - margin:
                continue
            z = min(log_margin(abs(p.gamma), CABLE_FAULT_MIN_GAMMA),
                    (length - margin - p.distance_m) / margin) + 1.0
            where_txt = f"{p.distance_m:.2f} m from the analyser along the {length:g} m cable"
            why = f"the cable is {length:g} m long: this is well before its far end."
        else:
            if not [q for q in res.peaks if q.distance_m > p.distance_m + near]:
                continue  # the farthest reflection is the line's end as far as we know
            z = log_margin(abs(p.gamma), CABLE_FAULT_MIN_GAMMA) - 0.5
            where_txt = f"{p.distance_m:.2f} m from the analyser"
            why = "further reflections follow it, so it is not the line's end."
        ev = (f"reflection of {abs(p.gamma):.2f} ({p.gamma_db:.1f} dB) at {p.distance_m:.2f} m "
              f"(round trip {p.time_s * 1e9:.2f} ns at VF {res.velocity_factor:g}; range "
              f"resolution {res.range_resolution_m:.2f} m).", why)
        out.append(_cause("cable-fault", f"cable fault at {p.distance_m:.2f} m", z, ev,
                          f"Inspect the cable and any connector or joint about "
                          f"{p.distance_m:.1f} m from the analyser for a kink, crush, water or "
                          "a bad connector.", where=where_txt, distance_m=float(p.distance_m)))
    return out


SIGNATURES = (resonance_shift, resistance_off, shorted_feed, open_element, common_mode,
              reference_plane, calibration_fault, low_signal, resonance_outside)
