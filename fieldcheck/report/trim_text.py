"""Terminal report of a trim run: the answer first, then the evidence."""

from __future__ import annotations

from ..constants import C0_M_PER_S
from .text import SAFETY_TRIM, mhz, mhz_pm, mm, signed_mm, table


def render_trim(source: str, af, advice, shift, history=None, conductor=None) -> str:
    """Format a trim result.  ``af`` AntennaFit, ``advice`` TrimAdvice, ``shift`` ShiftBudget,
    ``conductor`` (material name, its skin-effect loss in ohm) for comparison with the fit."""
    v, e = af.fit.values, af.fit.stderr
    n = advice.n_ends
    arm = "per arm" if n == 2 else "on the element"
    lines = [f"fieldcheck trim: {source}", "", "  " + advice.headline]
    margin_m = abs(abs(advice.nominal_per_arm_m) - abs(advice.per_arm_m))
    if advice.action in ("cut", "first-cut"):
        keep = (f"the advice keeps {advice_margin(advice)} in hand so that, at 2 sigma, it cannot "
                f"over-cut past the ± {advice.tolerance_pct:g} % tolerance"
                if margin_m >= advice.resolution_m else
                f"even at 2 sigma it cannot over-cut past the ± {advice.tolerance_pct:g} % tolerance")
        lines.append(
            f"  (needed {mm(abs(advice.nominal_per_arm_m))} ± {mm(advice.sigma_per_arm_m)} {arm}; "
            f"{keep}; rounded down to {mm(advice.resolution_m)})")
    elif advice.action == "add":
        lines.append(
            f"  (needed {mm(abs(advice.nominal_per_arm_m))} ± {mm(advice.sigma_per_arm_m)} {arm}; "
            f"the advice adds {advice_margin(advice)} more so that, at 2 sigma, it does not end "
            f"short; rounded up to {mm(advice.resolution_m)})")
    elif advice.action == "wait":
        lines.append(
            f"  (needed {mm(advice.nominal_per_arm_m)} ± {mm(advice.sigma_per_arm_m)} {arm})")
    lines.append("")
    lines.append("Evidence")
    rows = [
        ("target", f"{mhz(advice.target_hz)} ({_criterion_words(advice.criterion)}), "
                   f"tolerance ± {advice.tolerance_pct:g} %"),
        ("now at", f"{mhz(advice.current_hz)} ({(advice.current_hz / advice.target_hz - 1) * 100:+.2f} % "
                   "from target)"),
    ]
    if af.measured_crossing_hz:
        rows.append(("X = 0 on the trace", mhz(af.measured_crossing_hz)))
    if af.f_res_hz is not None:
        vague = af.f_res_hz.stderr > 0.005 * af.f_res_hz.value
        rows.append(("fitted resonance", f"{mhz_pm(af.f_res_hz.value, af.f_res_hz.stderr)} "
                                         "(X = 0 at the antenna terminals"
                                         + ("; loose because the reference plane is not pinned: "
                                            "--fix delay if you de-embedded to the terminals)"
                                            if vague else ")")))
    else:
        rows.append(("fitted resonance", "none: no X = 0 at the terminals (feed C or loss hides it)"))
    rows += [
        ("best match", f"{mhz(af.f_match_hz)} (seen by the feed line)"),
        ("electrical length", f"{mm(v['length_m'])} ± {mm(e['length_m'])} vs built "
                              f"{mm(af.built_length_m)} ({'tip to tip' if n == 2 else 'height'})"),
        ("difference", f"{signed_mm(af.length_error_m.value)} total = "
                       f"{signed_mm(af.end_correction_per_end_m.value)} per end"),
        ("loss resistance", f"{v['r_loss_ohm']:.2f} ± {e['r_loss_ohm']:.2f} ohm"
                            + (f" (the {conductor[0]} wire alone: {conductor[1]:.2f} ohm)" if conductor else "")),
        ("radiation efficiency", f"{af.efficiency.value * 100:.1f} % ± {af.efficiency.stderr * 100:.1f} %"),
        ("feed capacitance", f"{v['c_feed_f'] * 1e12:.2f} ± {e['c_feed_f'] * 1e12:.2f} pF"),
        ("feed shunt loss", f"{_shunt_ohm(v['g_feed_s'])} shunt, {af.feed_shunt_loss * 100:.1f} % of the power"),
        ("residual delay", f"{v['delay_s'] * 1e9:+.3f} ± {e['delay_s'] * 1e9:.3f} ns "
                           f"(= {v['delay_s'] * C0_M_PER_S * 100:+.1f} cm of air line, one way)"),
        ("model fit", f"{af.fit.adequacy}: {af.fit.adequacy_reason}"),
    ]
    lines += table(rows)
    if shift is not None:
        lines.append("")
        lines.append("Why it resonates where it does (resonance, step by step)")
        rows = [
            ("half-wave of the built length", f"{mhz(shift.half_wave_hz)} (c / 2L, infinitely thin wire)"),
            ("wire thickness (end effect)" if af.model.installation.kind == "free"
             else "thickness and ground", f"{shift.thickness_part_hz / 1e6:+.3f} MHz -> "
                                           f"{mhz(shift.design_hz)} (bare wire as built and installed, "
                                           "method of moments)"),
        ]
        if shift.insulation_part_hz:
            rows.append(("insulation (estimate)", f"{shift.insulation_part_hz / 1e6:+.3f} MHz"))
        rows += [
            ("remaining length difference", f"{shift.length_part_hz / 1e6:+.3f} MHz (length error, "
                                            "end fittings, supports, nearby objects)"),
            ("feed (C, shunt, loss)", f"{shift.feed_part_hz / 1e6:+.3f} MHz"),
            ("fitted resonance", mhz(shift.measured_hz)),
        ]
        lines += table(rows)
    if history is not None:
        lines.append("")
        lines.append("Trim history")
        lines += table([
            ("sweeps", str(len(history.physical_m))),
            ("proportional part", f"kappa = {history.kappa:.4f} ± {history.kappa_sigma:.4f} "
                                  f"(velocity factor {1 / history.kappa:.4f})"),
            ("constant part", f"{signed_mm(history.end_effect_per_end_m)} per end "
                              f"(± {mm(history.offset_sigma_m / history.n_ends)})"),
        ])
    p = advice.predicted
    lines.append("")
    lines.append("After the change (model prediction)" if advice.action != "none" else "As it is (model)")
    rows = [
        ("best match", mhz(p.f_match_hz)),
        ("resonance", mhz(p.f_res_hz) if p.f_res_hz is not None else "none (no X = 0 at the terminals)"),
        (f"at {mhz(advice.target_hz)}", f"return loss {p.return_loss_db_at_target:.1f} dB, "
                                        f"VSWR {p.vswr_at_target:.2f}"),
    ]
    if p.band_lo_hz is not None:
        rows.append((f"VSWR <= {p.vswr_limit:g}", f"{mhz(p.band_lo_hz)} to {mhz(p.band_hi_hz)} "
                                                 f"({(p.band_hi_hz - p.band_lo_hz) / 1e6:.2f} MHz)"))
    else:
        rows.append((f"VSWR <= {p.vswr_limit:g}", "not reached at the target"))
    lines += table(rows)
    if advice.proportional_rule_per_arm_m is not None and advice.action in ("cut", "first-cut", "add"):
        pr = advice.proportional_rule_per_arm_m
        word = "cut" if pr > 0 else "add"
        lines.append("")
        lines.append(f"For comparison, the plain 1/f proportional rule says: {word} {mm(abs(pr))} {arm}.")
    if advice.notes:
        lines.append("")
        lines += [f"NOTE: {t}" for t in advice.notes]
    lines.append("")
    lines.append(f"Sensitivity: {advice.sensitivity_source}.")
    lines.append(SAFETY_TRIM)
    return "\n".join(lines)


def _shunt_ohm(g_s: float) -> str:
    return "no" if g_s <= 1e-9 else f"{1 / g_s:,.0f} ohm"


def advice_margin(advice) -> str:
    return f"{abs(abs(advice.nominal_per_arm_m) - abs(advice.per_arm_m)) * 1e3:.1f} mm"


def _criterion_words(c: str) -> str:
    return "best match seen by the feed line" if c == "match" else "X = 0 at the antenna terminals"
