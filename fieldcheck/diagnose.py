"""Why does the antenna not match?  Ranked causes with evidence and the next check.

:func:`diagnose` gathers model-free observations of a sweep (reactance
crossings, winding about the Smith chart centre, trace noise, ripple,
discontinuities, |S11| > 1), adds the physics expectations when an antenna
description is given (as-built resonance, radiation plus conductor-loss
resistance, a fit of the antenna model), runs time-domain reflectometry on
the raw sweep when the cable's velocity factor is known, and passes all of it
to the signatures of :mod:`fieldcheck.diagnose_signatures`.  Each signature
scores its own evidence; the causes are ranked by that score.  The
observations are gathered by :mod:`fieldcheck.diagnose_observe`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from . import diagnose_signatures as sig
from . import features
# Re-exported: callers and tests import these names from fieldcheck.diagnose.
from .diagnose_observe import (  # noqa: F401
    DELAY_FIT_RMS_MAX, DETREND_DEGREE, RIPPLE_MIN_CYCLES_FIT, RIPPLE_MIN_CYCLES_MODEL_FREE,
    Observations, find_steps, observe, ripple_peak, winding_turns, wire_resonance)
from .diagnose_signatures import Cause
from .errors import InputError
from .features import phase_slope_delay_s  # noqa: F401  (re-exported)
from .sweep import Sweep

#: Cause A at or above 50 % *explains* the causes listed for it: their evidence
#: is read through A's fault (a trace read through a wrong reference plane shows
#: a false resonance shift, a broken arm raises R and moves X = 0, a cable fault
#: hides the antenna, a bad calibration distorts everything).  An explained
#: cause is ranked one margin unit below A and at most at 50 %.
EXPLAINS = {
    "cable-fault": ("resonance-shift", "excess-resistance", "low-resistance", "balun-ratio",
                    "shorted-feed", "open-element", "resonance-outside", "reference-plane",
                    "common-mode", "cable-mismatch"),
    "calibration": ("resonance-shift", "excess-resistance", "low-resistance", "balun-ratio",
                    "reference-plane", "common-mode", "cable-mismatch"),
    "low-signal": ("common-mode", "cable-mismatch", "calibration"),
    "reference-plane": ("resonance-shift", "excess-resistance", "low-resistance",
                        "balun-ratio"),
    "open-element": ("resonance-shift", "excess-resistance", "low-resistance",
                     "resonance-outside"),
    "shorted-feed": ("resonance-outside", "low-resistance"),
    "balun-ratio": ("resonance-shift",),
    "common-mode": ("resonance-shift", "excess-resistance", "low-resistance", "balun-ratio"),
}

__all__ = ["Cause", "Diagnosis", "diagnose", "observe"]


@dataclass(frozen=True)
class Diagnosis:
    """Ranked causes of a mismatch.

    Attributes
    ----------
    causes : tuple of Cause
        Most likely first (see :mod:`fieldcheck.diagnose_signatures` for the scores).
    summary : dict
        Key numbers behind the causes, SI units in the key names.
    notes : tuple of str
        What could not be checked, and why.
    target : str
        Where the best match sits against the description's target ("" without one):
        a sound antenna can still be long or short for its target.
    """

    causes: tuple
    summary: dict = field(default_factory=dict)
    notes: tuple = ()
    target: str = ""

    @property
    def top(self) -> Cause:
        return self.causes[0]

    def to_dict(self) -> dict:
        return {"causes": [c.to_dict() for c in self.causes], "summary": dict(self.summary),
                "notes": list(self.notes), "target": self.target}


# ---- ranking -----------------------------------------------------------------------
def rank(o: Observations) -> tuple:
    """Run every signature, keep those above REPORT_MIN_CONFIDENCE, most likely first."""
    found = [c for c in (s(o) for s in sig.SIGNATURES) if c is not None]
    found += sig.cable_faults(o)
    found = _explain(found)
    found = [c for c in found if c.confidence >= sig.REPORT_MIN_CONFIDENCE]
    top = max(found, key=lambda c: c.margin, default=None)
    if top is None or top.confidence < sig.NO_FAULT_BELOW:
        found.append(_no_fault(o, top))
    return tuple(sorted(found, key=lambda c: -c.margin))


def _explain(causes: list) -> list:
    """Demote causes explained by a stronger one (see :data:`EXPLAINS`)."""
    out = []
    for c in causes:
        by = [a for a in causes if a.confidence >= 0.5 and c.code in EXPLAINS.get(a.code, ())]
        if by:
            a = max(by, key=lambda a: a.margin)
            z = min(c.margin, a.margin - 1.0, 0.0)
            if z < c.margin:
                c = replace(c, margin=z, confidence=sig.confidence(z),
                            evidence=c.evidence + (f"(ranked below '{a.title}', which would "
                                                   "also explain this.)",))
        out.append(c)
    return out


def _no_fault(o: Observations, top: Cause | None) -> Cause:
    ev = [f"trace noise {o.noise_sigma:.1e} per component; largest |S11| "
          f"{np.abs(o.raw_gamma).max():.3f}."]
    meas = o.measured_resonance()
    if meas is not None and o.f_design_hz:
        ev.append(f"resonance {meas[2]} at {meas[0] / 1e6:.5g} MHz, "
                  f"{100 * (meas[0] / o.f_design_hz - 1):+.2f} % from the as-built design.")
    if meas is not None and o.r_expected_ohm:
        ev.append(f"resistance at resonance {meas[1]:.1f} ohm, expected {o.r_expected_ohm:.1f} ohm.")
    if o.fit is not None:
        ev.append(f"model fit: {o.fit.fit.adequacy} ({o.fit.fit.adequacy_reason}).")
    if o.tdr is not None:
        ev.append(f"{len(o.tdr.peaks)} reflection(s) along the cable, none a fault.")
    # 1 - logistic(z) = logistic(-z): the no-fault margin mirrors the strongest suspicion.
    z = 3.0 if top is None else -top.margin
    fd = o.f_design_hz
    if fd and o.f_hz[0] <= fd <= o.f_hz[-1] and (
            meas is None or not sig.OPEN_BAND[0] < meas[0] / fd < sig.OPEN_BAND[1]):
        # Nothing is "fine" about an antenna with no resonance where it should have one.
        z = min(z, sig.NO_FAULT_Z_NO_RESONANCE)
        ev.append(f"but no resonance was found within {100 * (sig.OPEN_BAND[0] - 1):+.0f}.."
                  f"{100 * (sig.OPEN_BAND[1] - 1):+.0f} % of the design resonance "
                  f"{fd / 1e6:.5g} MHz.")
    ev.append(f"strongest other suspicion: {top.title} at {100 * top.confidence:.0f} %."
              if top is not None else f"no signature reached {100 * sig.REPORT_MIN_CONFIDENCE:.0f} %.")
    nxt = ("Compare the match with the target; if it is still not what you need, trim as "
           "advised or sweep again with the antenna in its final position.")
    return sig._cause("no-fault", "no fault found", z, ev, nxt)


def _summary(o: Observations) -> dict:
    g = o.gamma
    i = int(np.argmin(np.abs(g)))
    meas = o.measured_resonance()
    s = {
        "f_start_hz": float(o.f_hz[0]), "f_stop_hz": float(o.f_hz[-1]),
        "n_points": int(o.f_hz.size),
        "best_match_hz": float(o.f_hz[i]),
        "best_return_loss_db": float(-20 * np.log10(max(abs(g[i]), 1e-12))),
        "max_abs_s11": float(np.abs(o.raw_gamma).max()),
        "noise_sigma": o.noise_sigma, "trace_variation": o.variation,
        "series_resonances_hz": [c[0] for c in o.series_crossings],
        "winding_turns": o.winding_turns,
        "f_design_hz": o.f_design_hz, "r_expected_ohm": o.r_expected_ohm,
        "r_loss_expected_ohm": o.r_loss_expected_ohm,
        "f_res_hz": meas[0] if meas else None, "r_at_res_ohm": meas[1] if meas else None,
        "resonance_from": meas[2] if meas else None,
        "residual_delay_s": o.residual_delay_s,
        "fit_adequacy": o.fit.fit.adequacy if o.fit is not None else None,
        "ripple": (dict(zip(("amplitude", "period_hz", "snr", "at_edge"), o.ripple))
                   if o.ripple else None),
        "steps": [{"f_hz": a, "jump": b} for a, b in o.steps],
        "tdr": o.tdr.to_dict() if o.tdr is not None else None,
        "cable_length_m": o.cable_length_m, "cable_vf": o.cable_vf,
    }
    return s


def diagnose(sweep: Sweep, desc=None, *, raw_sweep: Sweep | None = None,
             cable_vf: float | None = None, cable=None) -> Diagnosis:
    """Rank the likely causes of an unexpected mismatch.

    Parameters
    ----------
    sweep : Sweep
        Sweep at the antenna (or balun) terminals: reference plane already moved.
    desc : fieldcheck.antenna.Description, optional
        What was built.  Without it only model-free signatures run.
    raw_sweep : Sweep, optional
        The same measurement before the reference plane was moved (for the
        calibration check and time-domain reflectometry); default ``sweep``.
    cable_vf : float, optional
        Velocity factor of the feed cable (dimensionless, 0 < VF <= 1); turns
        on the time-domain cable check.  Default: that of ``cable``.
    cable : fieldcheck.refplane.Cable, optional
        The feed cable (length m, VF, loss); its length tells a fault from the far end.

    Returns
    -------
    Diagnosis
    """
    if cable_vf is not None and not (math.isfinite(cable_vf) and 0.0 < cable_vf <= 1.0):
        raise InputError(f"cable velocity factor must satisfy 0 < VF <= 1, got {cable_vf!r}: "
                         "write e.g. --cable-vf 0.66", sweep.source)
    if raw_sweep is not None and raw_sweep.f_hz.shape != sweep.f_hz.shape:
        raise InputError("the raw sweep and the sweep at the antenna must share one frequency "
                         "grid", sweep.source)
    o = observe(sweep, desc, raw_sweep=raw_sweep, cable_vf=cable_vf, cable=cable)
    return Diagnosis(causes=rank(o), summary=_summary(o), notes=o.notes, target=_target_note(sweep, desc))


def _target_note(sweep: Sweep, desc) -> str:
    """Where the best match sits against the target: a sound antenna can still be off target."""
    target = getattr(getattr(desc, "target", None), "frequency_hz", None)
    if not target:
        return ""
    best = features.best_match(sweep)
    off = 100 * (best.f_hz / target - 1)
    if abs(off) < 0.3:
        return f"best match {best.f_hz / 1e6:.6g} MHz is on the {target / 1e6:.6g} MHz target ({off:+.2f} %)"
    return (f"best match {best.f_hz / 1e6:.6g} MHz is {off:+.2f} % from the {target / 1e6:.6g} MHz "
            f"target: the antenna is {'long' if off < 0 else 'short'} for it; 'fieldcheck trim' "
            "gives the change")
