"""``fieldcheck trim``: how much to cut from each arm, the main job."""

from __future__ import annotations

from dataclasses import replace

from .. import antenna as antenna_mod
from ..antenna_fit import fit_antenna
from ..explain import conductor_loss_ohm, explain_shift
from ..errors import InputError
from ..history import DEFAULT_LENGTH_SIGMA_M, fit_history
from ..report.trim_text import render_trim
from ..trim import DEFAULT_TOLERANCE_PCT, advise_trim
from ..units import parse_length_m
from . import _common
from ._antenna_args import add_description_arguments, description_from_args

NAME = "trim"
HELP = "fit a measured sweep and say how much to cut from (or add to) each arm"
DESCRIPTION = """\
Fit the measured sweep with the physical model of the antenna described by
--antenna FILE.toml (or the options), and print the answer first: how many
millimetres to cut from EACH arm (or to add), never over-cutting, then the
evidence (measured and fitted resonance, electrical length, end correction,
loss and efficiency, feed capacitance), why it differs from the design, and
the predicted outcome after the change.

Trim history: give several sweeps of the same antenna, oldest first, with the
arm length of each in --arm-lengths (same order); the proportional part
(velocity factor) and the constant part (end effect) are separated and used
for the next cut, which is computed from the LAST sweep.

examples:
  fieldcheck trim sweep.s1p --antenna dipole.toml
  fieldcheck trim sweep.s1p --form dipole --arm 492mm --diameter 2mm --target 146MHz --cable RG58:5m
  fieldcheck trim cut0.s1p cut1.s1p cut2.s1p --antenna dipole.toml --arm-lengths 500mm,494mm,490mm
"""


def add_arguments(p):
    p.add_argument("sweeps", metavar="SWEEP", nargs="+",
                   help="Touchstone or CSV sweep file(s); several = a trim history, oldest first")
    _common.add_sweep_arguments(p)
    add_description_arguments(p)
    t = p.add_argument_group("trim decision")
    t.add_argument("--tolerance", type=float, default=DEFAULT_TOLERANCE_PCT, metavar="PCT",
                   help=f"landing tolerance on the target, percent (default {DEFAULT_TOLERANCE_PCT:g})")
    t.add_argument("--arm-lengths", default=None, metavar="L1,L2,...",
                   help="trim history: arm length (dipole) or element height (monopole) of each "
                        "sweep, in the same order, e.g. 500mm,494mm,490mm")
    t.add_argument("--length-sigma", default=None, metavar="LENGTH",
                   help="trim history: uncertainty of each arm-length measurement "
                        f"(default {DEFAULT_LENGTH_SIGMA_M * 1e3:g}mm)")
    _common.add_fix_argument(t)
    _common.add_output_arguments(p)
    p.add_argument("--plot", default=None, metavar="FILE.png",
                   help="also draw return loss (measured, fitted, predicted after the change) "
                        "and the impedance at the antenna to a PNG file")


def run(args) -> int:
    if not 0 < args.tolerance <= 10:
        raise InputError(f"--tolerance must be a percentage between 0 and 10, got {args.tolerance:g}")
    desc = description_from_args(args, require_target=True)
    args.fixed = _common.parse_fix(args.fix)
    if len(args.sweeps) > 1 or args.arm_lengths:
        return _run_history(args, desc)
    sweep = _common.load_sweep(args, args.sweeps[0], desc.feed)
    af = fit_antenna(sweep, desc, fixed=args.fixed)
    advice = advise_trim(af, desc.target.frequency_hz, criterion=desc.target.criterion,
                         tolerance_pct=args.tolerance, vswr_limit=desc.target.vswr_limit)
    _emit(args, sweep.source, desc, af, advice, None)
    _plot(args, sweep, af, advice, desc)
    return 0


def _run_history(args, desc) -> int:
    arms = _parse_arm_lengths(args.arm_lengths, len(args.sweeps))
    sigma = parse_length_m(args.length_sigma, "--length-sigma") if args.length_sigma else DEFAULT_LENGTH_SIGMA_M
    fits = []
    for path, arm in zip(args.sweeps, arms):
        d = _with_arm(desc, arm)
        sweep = _common.load_sweep(args, path, d.feed)
        fits.append((sweep, d, fit_antenna(sweep, d, fixed=args.fixed)))
    n_ends = fits[-1][2].n_ends
    # Systematic errors are common to all sweeps of one bench and cancel in
    # the slope, so the points carry their statistical errors only.
    hist = fit_history([f.built_length_m for _, _, f in fits], [f.length_m.value for _, _, f in fits],
                       [f.length_repeatability_m for _, _, f in fits], n_ends, sigma)
    sweep, d, af = fits[-1]
    advice = advise_trim(af, d.target.frequency_hz, criterion=d.target.criterion,
                         tolerance_pct=args.tolerance, vswr_limit=d.target.vswr_limit,
                         sensitivity=hist.kappa, sensitivity_sigma=hist.kappa_sigma,
                         sensitivity_source=f"trim history of {len(fits)} sweeps: kappa = "
                                            f"{hist.kappa:.4f} ± {hist.kappa_sigma:.4f}")
    _emit(args, sweep.source, d, af, advice, hist)
    _plot(args, sweep, af, advice, d)
    return 0


def _plot(args, sweep, af, advice, desc):
    if not args.plot:
        return
    from ..curves import trim_curves
    from ..report.plots import plot_trim

    after = af.fit.values["length_m"] - advice.total_m * advice.sensitivity
    curves = trim_curves(af, sweep, after, advice.target_hz, desc.target.vswr_limit)
    plot_trim(args.plot, curves, f"fieldcheck trim: {sweep.source}", advice.headline)


def _emit(args, source, desc, af, advice, hist):
    shift = explain_shift(af, desc.antenna.insulation)
    r_wire = conductor_loss_ohm(af, desc.antenna.material)
    if args.json:
        out = {
            "source": source,
            "advice": advice.to_dict(),
            "fit": af.to_dict(),
            "conductor_loss_ohm": r_wire,
            "shift": shift.to_dict() if shift else None,
            "antenna": desc.to_dict(),
        }
        if hist is not None:
            out["history"] = hist.to_dict()
        _common.emit_json(out)
    else:
        print(render_trim(source, af, advice, shift, hist,
                          conductor=(desc.antenna.material, r_wire)))


def _parse_arm_lengths(text, n_sweeps):
    if not text:
        raise InputError(f"{n_sweeps} sweeps were given: a trim history needs --arm-lengths with the "
                         "arm length of each sweep, e.g. --arm-lengths 500mm,494mm,490mm")
    parts = [t for t in text.split(",") if t.strip()]
    if len(parts) != n_sweeps:
        raise InputError(f"--arm-lengths lists {len(parts)} lengths for {n_sweeps} sweeps; give one per "
                         "sweep, in the same order")
    return [parse_length_m(t, "--arm-lengths entry") for t in parts]


def _with_arm(desc, arm_m):
    a = desc.antenna
    return replace(desc, antenna=replace(a, arm_length_m=arm_m))
