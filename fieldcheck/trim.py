"""Trim advice: how much to cut from (or add to) each arm to land on the target.

Decision rules (all thresholds named below):

1. Solve, with the fitted model, the electrical length whose criterion
   frequency (best match seen by the feed line, or X = 0 at the terminals) is
   the target.  The change in electrical length becomes a physical change
   through the sensitivity s = d(electrical)/d(physical):

   * from a trim history, s is measured (:mod:`fieldcheck.history`);
   * from one sweep it is unknown between 1 (the whole discrepancy is a
     constant end effect or length error) and L_el / L_built (it is all a
     velocity factor, e.g. insulation).  We cut by the *smaller* of the two
     and count half their difference as a model uncertainty.

2. Never over-cut.  An over-cut leaves the antenna so short that its
   criterion frequency ends above the target by more than the tolerance;
   metal cannot be put back.  The recommended cut is the nominal cut less a
   margin, rounded *down* to a sensible resolution, where the margin is
   whatever it takes for the cut's upper two-standard-uncertainty bound to
   stay inside the tolerance: ``max(0, 2 sigma - tolerance)``.  When that
   margin plus the 90 % spread of the result would leave it outside the
   tolerance on the long side, the advice is a labelled FIRST cut followed by
   a re-measure; when not even a margin-free cut is possible, WAIT.
3. Too short: say how much to ADD per arm (the best estimate plus the same
   margin, rounded up, so that at two standard uncertainties it does not end
   short), never a negative cut.  Within the tolerance already, a short
   antenna is left alone; a long one still gets a cut, to centre it.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np
from scipy.optimize import brentq

from .antenna_fit import AntennaFit, FitError, feed_of, match_of, resonance_of
from .errors import AdviceRefused
from .features import vswr_bands
from .sweep import return_loss_db, vswr_from_gamma

#: Landing tolerance on the criterion frequency, percent of target.
DEFAULT_TOLERANCE_PCT = 0.3
#: The cut's upper bound, in standard uncertainties, that must not over-cut
#: (about 97.7 % one-sided for a Gaussian).
SAFETY_SIGMAS = 2.0
#: One-sided 90 % point of a Gaussian: the margin plus this many sigma must fit
#: inside the tolerance for a one-step landing; otherwise advise a first cut.
LANDING_SPREAD_SIGMAS = 1.28
#: A change of more than this fraction of the whole length is a rebuild, not a
#: trim: the model then answers far from what was measured (common practice,
#: no source).
REBUILD_FRACTION = 0.2
#: Adding more than this fraction of the arm suggests loading instead.
LOADING_SUGGEST_FRACTION = 0.10


@dataclass(frozen=True)
class Predicted:
    """Model prediction of the antenna after the recommended change."""

    f_res_hz: float | None
    f_match_hz: float
    return_loss_db_at_target: float
    vswr_at_target: float
    band_lo_hz: float | None
    band_hi_hz: float | None
    vswr_limit: float


@dataclass(frozen=True)
class TrimAdvice:
    """What to do, and the evidence.

    ``action`` is one of ``'cut'``, ``'first-cut'``, ``'add'``, ``'none'``,
    ``'wait'`` (uncertainty too large to cut anything safely).  Lengths are in
    metres; ``per_arm_m`` is the change at EACH free end (each dipole arm, or
    the single monopole element), ``total_m`` the sum over all ends.
    """

    action: str
    per_arm_m: float
    total_m: float
    nominal_per_arm_m: float
    sigma_per_arm_m: float
    resolution_m: float
    n_ends: int
    target_hz: float
    criterion: str
    current_hz: float
    tolerance_pct: float
    sensitivity: float
    sensitivity_source: str
    proportional_rule_per_arm_m: float | None
    predicted: Predicted
    headline: str
    notes: tuple = field(default=())

    def to_dict(self) -> dict:
        p = self.predicted
        return {
            "action": self.action,
            "headline": self.headline,
            # Unsigned amount to cut ('cut', 'first-cut') or add ('add'), per free end and in total.
            "amount_per_arm_m": abs(self.per_arm_m),
            "amount_total_m": abs(self.total_m),
            # Signed change: positive removes metal, negative adds it.
            "per_arm_m": self.per_arm_m,
            "total_m": self.total_m,
            "n_ends": self.n_ends,
            "nominal_per_arm_m": self.nominal_per_arm_m,
            "sigma_per_arm_m": self.sigma_per_arm_m,
            "resolution_m": self.resolution_m,
            "target_hz": self.target_hz,
            "criterion": self.criterion,
            "current_hz": self.current_hz,
            "tolerance_pct": self.tolerance_pct,
            "sensitivity": self.sensitivity,
            "sensitivity_source": self.sensitivity_source,
            "proportional_rule_per_arm_m": self.proportional_rule_per_arm_m,
            "predicted": {
                "f_res_hz": p.f_res_hz, "f_match_hz": p.f_match_hz,
                "return_loss_db_at_target": p.return_loss_db_at_target,
                "vswr_at_target": p.vswr_at_target,
                "band_lo_hz": p.band_lo_hz, "band_hi_hz": p.band_hi_hz, "vswr_limit": p.vswr_limit,
            },
            "notes": list(self.notes),
        }


def criterion_hz(af: AntennaFit, length_m: float, criterion: str, guess_hz: float, values=None) -> float:
    """Criterion frequency of the fitted antenna at electrical length ``length_m``."""
    v = values or af.fit.values
    model = _predicting(af)
    if criterion == "resonance":
        return resonance_of(model, length_m, v, guess_hz)
    return match_of(model, length_m, v, guess_hz)


def _predicting(af: AntennaFit):
    """The fitted model for other lengths: the ground-image term follows the length."""
    return replace(af.model, mutual_ref_length_m=None)


def solve_length_for(af: AntennaFit, target_hz: float, criterion: str, values=None) -> float:
    """Electrical length that puts the criterion frequency on ``target_hz``."""
    v = values or af.fit.values
    L = v["length_m"]
    f_now = criterion_hz(af, L, criterion, _reference_hz(af), v)
    guess = L * f_now / target_hz  # only a bracket centre; the model decides
    lo, hi = guess * 0.95, guess * 1.05
    fun = lambda x: criterion_hz(af, x, criterion, target_hz, v) - target_hz  # noqa: E731
    try:
        return brentq(fun, lo, hi, xtol=1e-7 * guess)
    except ValueError as exc:
        raise AdviceRefused(
            f"the model cannot place the {criterion} at {target_hz / 1e6:.6g} MHz with a length "
            f"between {lo:.4g} and {hi:.4g} m: the target is too far from where this antenna is") from exc


def advise_trim(af: AntennaFit, target_hz: float, *, criterion: str = "match",
                tolerance_pct: float = DEFAULT_TOLERANCE_PCT, vswr_limit: float = 2.0,
                sensitivity: float | None = None, sensitivity_sigma: float = 0.0,
                sensitivity_source: str | None = None) -> TrimAdvice:
    """Turn a fit into trim advice for ``target_hz``.

    Parameters
    ----------
    af : AntennaFit
    target_hz : float
        Where the criterion frequency should land, Hz.
    criterion : {'match', 'resonance'}
    tolerance_pct : float
        Landing tolerance, percent of target.
    vswr_limit : float
        For the predicted bandwidth.
    sensitivity, sensitivity_sigma : float, optional
        Measured d(electrical length)/d(physical length) from a trim history.

    Raises
    ------
    AdviceRefused
        The model does not describe the antenna, or the target is unreachable.
    """
    if criterion == "resonance" and af.f_res_hz is None:
        raise AdviceRefused(
            "no trim advice for X = 0: this antenna shows no resonance at its terminals (the feed "
            "capacitance or loss hides it); aim for the best match instead (--criterion match)")
    if af.fit.adequacy == "inadequate":
        raise AdviceRefused(
            "no trim advice: " + af.fit.adequacy_reason
            + "; run 'fieldcheck diagnose' on this sweep to find out what is wrong")
    notes = list(af.notes)
    # The match the feed line sees includes the feed hardware; X = 0 at the
    # terminals does not, so it carries the hardware term too.
    cov = af.terminal_covariance if criterion == "resonance" else af.fit.covariance
    v, names = af.fit.values, af.fit.names
    L_now = v["length_m"]
    f_now = criterion_hz(af, L_now, criterion, _reference_hz(af))
    L_goal = solve_length_for(af, target_hz, criterion)
    d_el = L_now - L_goal  # electrical length to remove (negative: add)
    sig_el = _change_sigma(af, L_goal, target_hz, criterion, cov)

    s, sig_model, source = _one_sweep_sensitivity(d_el, L_now / af.built_length_m)
    if sensitivity is not None:
        sig_hist = abs(d_el / sensitivity) * (sensitivity_sigma / sensitivity)
        if sig_hist < sig_model:
            s, sig_model = sensitivity, sig_hist
            source = sensitivity_source or "trim history"
        else:
            notes.append(f"the trim history ({sensitivity_source or 'given'}) pins the sensitivity "
                         "less tightly than the one-sweep bracket, so the bracket is used; cut over a "
                         "wider range of lengths to make the history count")
    n = af.n_ends
    nominal = d_el / s / n
    sigma = float(np.hypot(sig_el / s / n, sig_model / n))
    if not np.isfinite(sigma):
        raise AdviceRefused("no trim advice: the uncertainty of the needed change cannot be computed "
                            "(the fitted resonance is unstable); run 'fieldcheck diagnose' on this sweep")
    if abs(nominal) * n > REBUILD_FRACTION * af.built_length_m:
        new_total = af.built_length_m - nominal * n
        what = "tip to tip" if n == 2 else "high"
        raise AdviceRefused(
            f"no trim advice: reaching {target_hz / 1e6:.6g} MHz needs each "
            f"{'arm' if n == 2 else 'element'} {'shortened' if nominal > 0 else 'lengthened'} by "
            f"{abs(nominal) * 1e3:.0f} mm ({abs(nominal) * n / af.built_length_m:.0%} of the length): "
            f"that is a rebuild, not a trim. Build it about {new_total * 1e3:.0f} mm {what} and measure "
            "again, or check the target and the antenna description")
    res_m = cut_resolution_m(af.built_length_m / n)
    tol_len = tolerance_pct / 100 * L_goal / s / n  # per-arm length equivalent of the tolerance

    within = abs(f_now - target_hz) <= tolerance_pct / 100 * target_hz
    margin = max(0.0, SAFETY_SIGMAS * sigma - tol_len)
    if nominal > 0:
        change = np.floor((nominal - margin) / res_m) * res_m
        if change <= 0:
            action, change = ("none" if within else "wait"), 0.0
            if action == "wait" and criterion == "resonance":
                notes.append("X = 0 at the terminals is only as certain as the reference plane: "
                             "de-embed the balun or fixture (--fixture) and hold the delay "
                             "(--fix delay), or aim for the best match (--criterion match)")
        elif margin + LANDING_SPREAD_SIGMAS * sigma > tol_len and not within:
            action = "first-cut"
        elif criterion == "resonance" and "delay_s" in af.fit.names:
            # X = 0 at the terminals hangs on a reference plane the fit could
            # only estimate: never the whole way in one step.
            action = "first-cut"
            notes.append("X = 0 at the terminals depends on where the reference plane is, which "
                         "this fit had to estimate: cut in steps, or de-embed to the terminals "
                         "and use --fix delay")
        elif not af.resonance_in_sweep:
            # The model carries the answer outside what was measured: step, then look again.
            action = "first-cut"
            notes.append("the answer extrapolates beyond the sweep, so it is given as a first cut; "
                         "re-measure over a span that covers the target")
        else:
            action = "cut"
            if within:
                notes.append("already within tolerance; this cut centres it on the target")
    else:
        # Add the best estimate plus the margin: at two standard uncertainties
        # the antenna then does not end short, and any surplus is a trim.
        change = -np.ceil((-nominal + margin) / res_m) * res_m
        action = "none" if (within or change == 0) else "add"
        change = 0.0 if action == "none" else change
        if -change > LOADING_SUGGEST_FRACTION * af.built_length_m / n:
            notes.append("that is a lot of wire to add: consider end loading (a capacitance hat "
                         "or loading coil) or a new, longer element")
    L_after = L_now - change * n * s
    predicted = _predict(af, L_after, target_hz, vswr_limit)
    prop = _proportional_rule(af, target_hz, criterion)
    advice = TrimAdvice(
        action=action, per_arm_m=float(change), total_m=float(change * n),
        nominal_per_arm_m=float(nominal), sigma_per_arm_m=sigma, resolution_m=res_m, n_ends=n,
        target_hz=float(target_hz), criterion=criterion, current_hz=float(f_now),
        tolerance_pct=float(tolerance_pct), sensitivity=float(s), sensitivity_source=source,
        proportional_rule_per_arm_m=prop, predicted=predicted,
        headline="", notes=tuple(notes),
    )
    return _with_headline(advice)


def _change_sigma(af: AntennaFit, L_goal: float, target_hz: float, criterion: str, cov) -> float:
    """Standard uncertainty of the electrical change L_now - L_goal, m.

    L_goal solves f_crit(L_goal; p) = target, so by implicit differentiation
    dL_goal/dp_i = -(df/dp_i) / (df/dL) at L_goal: one finite difference per
    parameter instead of a root solve per parameter.
    """
    v, names, err = af.fit.values, af.fit.names, af.fit.stderr
    f0 = criterion_hz(af, L_goal, criterion, target_hz, v)
    h_len = L_goal * 1e-5
    df_dl = (criterion_hz(af, L_goal + h_len, criterion, target_hz, v) - f0) / h_len
    grad = np.zeros(len(names))
    try:
        for i, n in enumerate(names):
            if n == "length_m":
                grad[i] = 1.0
                continue
            h = max(err[n], abs(v[n]) * 1e-6, 1e-18) * 0.01
            p = dict(v)
            p[n] = v[n] + h
            grad[i] = (criterion_hz(af, L_goal, criterion, target_hz, p) - f0) / h / df_dl
    except FitError:
        return float("nan")
    return float(np.sqrt(max(grad @ cov @ grad, 0.0)))


def _reference_hz(af: AntennaFit) -> float:
    """The fitted resonance, or the best match where there is no resonance."""
    return af.f_res_hz.value if af.f_res_hz is not None else af.f_match_hz


def _one_sweep_sensitivity(d_el: float, s_prop: float):
    """Sensitivity from one sweep: between 1 (constant end effect) and ``s_prop`` (pure velocity factor).

    Cutting: the larger sensitivity gives the smaller, safe cut.  Adding: the
    smaller gives the larger addition (surplus can be trimmed).  Half the
    difference of the two answers counts as a standard uncertainty.
    """
    lo, hi = sorted((1.0, s_prop))
    s = hi if d_el > 0 else lo
    other = lo if d_el > 0 else hi
    sig = abs(d_el / s - d_el / other) / 2
    source = ("one sweep: between a constant end effect (1.000) and a pure velocity factor "
              f"({s_prop:.3f}); the safer one is used")
    return s, sig, source


def cut_resolution_m(arm_m: float) -> float:
    """Display/cut resolution: a 1-2-5 step no larger than 0.05 % of the arm, 0.1 mm at least.

    0.05 % of the arm keeps rounding well inside a 0.3 % landing tolerance;
    0.1 mm is about what side cutters and a steel rule achieve (common practice, no source).
    """
    limit = max(arm_m * 5e-4, 1e-4)
    steps = [1e-4, 2e-4, 5e-4, 1e-3, 2e-3, 5e-3, 1e-2, 2e-2, 5e-2]
    return max(s for s in steps if s <= limit)


def _predict(af: AntennaFit, length_m: float, target_hz: float, vswr_limit: float) -> Predicted:
    v = af.fit.values
    fd = feed_of(v)
    model = _predicting(af)
    try:
        f_res = resonance_of(model, length_m, v, target_hz)
    except FitError:
        f_res = None
    f_match = match_of(model, length_m, v, target_hz)
    gamma = lambda f: model.gamma(f, length_m, fd["r_loss_ohm"], fd["c_feed_f"], 0.0,  # noqa: E731
                                  fd["g_feed_s"])
    g_t = gamma(np.array([target_hz]))[0]
    f = target_hz * np.linspace(0.75, 1.25, 1001)
    bands = vswr_bands(f, gamma(f), vswr_limit)
    band = next((b for b in bands if b.f_lo_hz <= target_hz <= b.f_hi_hz), None)
    return Predicted(
        f_res_hz=None if f_res is None else float(f_res), f_match_hz=float(f_match),
        return_loss_db_at_target=float(return_loss_db(g_t)),
        vswr_at_target=float(vswr_from_gamma(g_t)),
        band_lo_hz=band.f_lo_hz if band else None, band_hi_hz=band.f_hi_hz if band else None,
        vswr_limit=float(vswr_limit),
    )


def _proportional_rule(af: AntennaFit, target_hz: float, criterion: str) -> float | None:
    """The plain rule: physical length scales as 1/f from the measured crossing (or the fit)."""
    f_meas = af.measured_crossing_hz if criterion == "resonance" else None
    f_meas = f_meas or (af.f_match_hz if criterion == "match" else _reference_hz(af))
    built = af.built_length_m
    return float((built - built * f_meas / target_hz) / af.n_ends)


def _with_headline(a: TrimAdvice) -> TrimAdvice:
    where = "EACH arm" if a.n_ends == 2 else "the element"
    total = f" ({fmt_mm(abs(a.total_m))} total)" if a.n_ends == 2 else ""
    if a.action == "cut":
        h = f"CUT {fmt_mm(a.per_arm_m)} from {where}{total}"
    elif a.action == "first-cut":
        h = (f"FIRST CUT {fmt_mm(a.per_arm_m)} from {where}{total}, then re-measure "
             "(the uncertainty is too large to go all the way in one step)")
    elif a.action == "add":
        h = f"TOO SHORT: ADD {fmt_mm(-a.per_arm_m)} to {where}{total}, then re-measure and trim"
    elif a.action == "wait":
        h = ("DO NOT CUT YET: the needed cut is smaller than its uncertainty; re-measure with a "
             "wider or cleaner sweep first")
    else:
        h = "NO CUT NEEDED: already within tolerance of the target"
    return replace(a, headline=h)


def fmt_mm(length_m: float) -> str:
    """Millimetres with one decimal below 100 mm, whole millimetres above."""
    mm = length_m * 1e3
    return f"{mm:.1f} mm" if abs(mm) < 100 else f"{mm:.0f} mm"
