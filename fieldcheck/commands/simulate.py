"""``fieldcheck simulate``: write a SIMULATED bench sweep of a described antenna and print its truth."""

from __future__ import annotations

import dataclasses

import numpy as np

from .. import bench_effects, simulate
from ..errors import InputError
from ..touchstone import write_touchstone
from ..units import format_frequency, parse_frequency_hz, parse_length_m
from . import _antenna_args, _common

NAME = "simulate"
HELP = "write a SIMULATED sweep (healthy or faulty) of a described antenna, for demos and tests"
DESCRIPTION = f"""\
Compute what an analyser would show for the antenna in a description file,
measured through its balun and the cable the description names, with bench
imperfections (--effects) and optionally a fault (--fault), and write it as a
Touchstone file.  The file and the output are labelled SIMULATED: they are
demo data, never a measurement.  The truth (resonance, match frequency,
electrical length, loss, efficiency) is printed so a fit can be checked.

faults: {", ".join(bench_effects.FAULTS)}

examples:
  fieldcheck simulate --antenna dipole.toml --span 130MHz:160MHz --out demo.s1p
  fieldcheck simulate --antenna dipole.toml --span 130MHz:160MHz:801 --effects typical \\
      --seed 7 --out demo.s1p --json
  fieldcheck simulate --antenna dipole.toml --span 1MHz:500MHz:500 --fault cable-open \\
      --fault-distance 3.2m --out cut.s1p
"""

#: Largest number of points written (a Touchstone file, not a stress test).
MAX_POINTS = 20001
DEFAULT_POINTS = 401


def add_arguments(p):
    _antenna_args.add_description_arguments(p)
    s = p.add_argument_group("the simulated sweep")
    s.add_argument("--span", required=True, metavar="START:STOP[:POINTS]",
                   help=f"frequency sweep, e.g. 130MHz:160MHz or 130MHz:160MHz:801 "
                        f"(default {DEFAULT_POINTS} points)")
    s.add_argument("--out", required=True, metavar="FILE.s1p", help="Touchstone file to write")
    s.add_argument("--format", choices=("RI", "MA", "DB"), default="RI", dest="ts_format",
                   help="number format of the file (default RI)")
    s.add_argument("--effects", choices=("clean", "typical"), default="typical",
                   help="bench imperfections: none, or a plausible bench drawn from --seed "
                        "(default typical)")
    s.add_argument("--seed", type=int, default=0, metavar="N",
                   help="random seed for the bench and the noise (default 0)")
    s.add_argument("--noise", type=float, default=None, metavar="SIGMA",
                   help="noise per real component of Gamma (overrides the effects' value)")
    s.add_argument("--fault", choices=bench_effects.FAULTS, default=None,
                   help="build in a fault (default none)")
    s.add_argument("--fault-distance", default=None, metavar="LENGTH",
                   help="cable-open/cable-short: distance of the cut from the analyser; "
                        "wrong-cable: length of the cable actually present; common-mode: "
                        "length of the shield (default: from the described cable)")
    s.add_argument("--fault-size", type=float, default=None, metavar="X",
                   help="open-element: fraction of the arm left; detuned: electrical "
                        "lengthening; low-signal: noise sigma; cal-fault: step position")
    _common.add_output_arguments(p)


def parse_span(text: str) -> np.ndarray:
    """``'130MHz:160MHz[:401]'`` -> evenly spaced frequencies, Hz."""
    parts = str(text).split(":")
    if len(parts) not in (2, 3):
        raise InputError(f"--span {text!r}: write START:STOP or START:STOP:POINTS, "
                         "e.g. 130MHz:160MHz:401")
    start = parse_frequency_hz(parts[0], "--span start")
    stop = parse_frequency_hz(parts[1], "--span stop")
    n = DEFAULT_POINTS
    if len(parts) == 3:
        try:
            n = int(parts[2])
        except ValueError:
            raise InputError(f"--span points {parts[2]!r} is not a whole number, e.g. 401") from None
    if not 2 <= n <= MAX_POINTS:
        raise InputError(f"--span points must be 2..{MAX_POINTS}; got {n}")
    if not stop > start:
        raise InputError(f"--span {text!r}: STOP must be above START")
    return np.linspace(start, stop, n)


def render_text(out_path: str, sim) -> str:
    t = sim.truth
    ff = format_frequency

    def freq(key):
        return ff(t[key]) if t.get(key) is not None else "none in the sweep"

    lines = [
        f"SIMULATED sweep written to {out_path} ({sim.sweep.n_points} points, "
        f"{ff(sim.sweep.f_hz[0])} to {ff(sim.sweep.f_hz[-1])}) - demo data, not a measurement",
        f"fault                 {t['fault'] or 'none'}",
        f"physical length       {t['physical_total_length_m'] * 1e3:.1f} mm",
        f"electrical length     {t['electrical_length_m'] * 1e3:.1f} mm "
        f"(insulation factor {t['insulation_factor']:.4f})",
        f"resonance (terminals) {freq('f_res_terminals_hz')}",
        f"best match (balun)    {freq('f_match_hz')}",
    ]
    if t.get("r_loss_ohm") is not None:
        lines.append(f"loss at resonance     {t['r_loss_ohm']:.3f} ohm "
                     f"(conductor {t['conductor_loss_ohm']:.3f}, joint {t['joint_loss_ohm']:.3f})")
    if t.get("efficiency") is not None:
        lines.append(f"efficiency            {100 * t['efficiency']:.2f} %")
    lines += [f"feed capacitance      {t['feed_c_f'] * 1e12:.3g} pF",
              f"residual delay        {t['delay_s'] * 1e12:.4g} ps",
              f"cable present         {t['cable_present'] or 'none'}",
              f"noise sigma           {t['noise_sigma']:g}"]
    for key in ("fault_distance_m", "cable_length_error_m", "common_mode_period_hz", "cal_step_hz"):
        if key in t:
            lines.append(f"{key:<21} {t[key]:.6g}")
    lines += [f"NOTE                  {n}" for n in t.get("notes", ())]
    return "\n".join(lines)


#: Electrical length range (kL of the dipole, or of a monopole's image) a demo
#: sweep must reach: below about 0.05 the antenna is a capacitor and the
#: span is almost surely in the wrong unit; above 12 the wire is many
#: wavelengths long.
_KL_SPAN = (0.05, 12.0)


def _check_span_fits_antenna(f_hz, desc) -> None:
    from ..constants import C0_M_PER_S, TWO_PI

    a = desc.antenna
    wire = a.total_length_m * (2.0 if a.form == "monopole" else 1.0)
    kl_lo, kl_hi = (TWO_PI * f * wire / C0_M_PER_S for f in (f_hz[0], f_hz[-1]))
    if kl_hi < _KL_SPAN[0] or kl_lo > _KL_SPAN[1]:
        half_wave_hz = C0_M_PER_S / (2.0 * wire)
        raise InputError(f"--span {f_hz[0]:.6g}..{f_hz[-1]:.6g} Hz is far from where this antenna works "
                         f"(half-wave near {half_wave_hz / 1e6:.4g} MHz): check the units, e.g. "
                         f"{0.8 * half_wave_hz / 1e6:.4g}MHz:{1.25 * half_wave_hz / 1e6:.4g}MHz")


def run(args) -> int:
    desc = _antenna_args.description_from_args(args, require_target=False)
    f_hz = parse_span(args.span)
    _check_span_fits_antenna(f_hz, desc)
    effects = (bench_effects.BenchEffects.clean() if args.effects == "clean"
               else bench_effects.BenchEffects.typical(args.seed))
    if args.noise is not None:
        if not (np.isfinite(args.noise) and args.noise >= 0):
            raise InputError(f"--noise must be >= 0; got {args.noise}")
        effects = dataclasses.replace(effects, noise_sigma=args.noise)
    fault = None
    if args.fault is not None:
        dist = (parse_length_m(args.fault_distance, "--fault-distance")
                if args.fault_distance is not None else None)
        fault = bench_effects.Fault(args.fault, dist, args.fault_size)
    elif args.fault_distance is not None or args.fault_size is not None:
        raise InputError("--fault-distance and --fault-size only apply with --fault NAME")
    # seed + 1 for the noise: the bench draw and the noise are independent streams
    sim = simulate.simulate_sweep(desc, f_hz, effects, rng=args.seed + 1, fault=fault)
    write_touchstone(sim.sweep, args.out, fmt=args.ts_format,
                     comments=(f"{simulate.LABEL} effects: {args.effects}, seed {args.seed}",))
    if args.json:
        _common.emit_json({"label": simulate.LABEL, "out": args.out,
                           "effects": effects.to_dict(), "truth": sim.truth})
    else:
        print(render_text(args.out, sim))
    return 0
