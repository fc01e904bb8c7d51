"""``fieldcheck inspect``: what was read, and what the trace says before any model."""

from __future__ import annotations

import numpy as np

from .. import features
from ..units import format_frequency
from . import _common

NAME = "inspect"
HELP = "show what a sweep file holds and what it says at the antenna terminals"
DESCRIPTION = """\
Read one sweep file strictly, move it to the antenna terminals (optional cable,
fixture and delay removal) and print: points, span and step, reference
impedance, comment lines, any handling applied on import, the best return loss
and VSWR and where, the reactance zero crossings (resonances) and the
VSWR <= 2 bandwidth.

examples:
  fieldcheck inspect dipole.s1p
  fieldcheck inspect dipole.s1p --cable RG58:5m --json
  fieldcheck inspect bench.s2p --port 1 --delay 0.35m
"""


def add_arguments(p):
    p.add_argument("sweep", metavar="SWEEP", help="Touchstone (.s1p, .s2p, ...) or CSV file")
    _common.add_sweep_arguments(p)
    p.add_argument("--vswr-limit", type=float, default=2.0, metavar="V",
                   help="VSWR limit for the bandwidth figure (default 2.0)")
    _common.add_output_arguments(p)
    p.add_argument("--plot", default=None, metavar="FILE.png",
                   help="also draw return loss and a Smith chart (at the antenna terminals, after "
                        "any reference-plane removal) to a PNG file")


def summarise(sweep, vswr_limit: float = 2.0) -> dict:
    """Plain-data summary of a sweep at the antenna terminals (used by text and JSON)."""
    if not vswr_limit > 1.0:
        raise _common.InputError(f"--vswr-limit must be greater than 1, got {vswr_limit}")
    f = sweep.f_hz
    step = np.diff(f)
    best = features.best_match(sweep)
    crossings = features.reactance_crossings(f, sweep.z_ohm)
    bands = features.vswr_bands(f, sweep.s11, vswr_limit)
    return {
        "source": sweep.source,
        "points": sweep.n_points,
        "f_start_hz": float(f[0]),
        "f_stop_hz": float(f[-1]),
        "step_hz": float(np.median(step)),
        "uniform_grid": sweep.is_uniform,
        "z0_ohm": sweep.z0_ohm,
        "comments": list(sweep.comments),
        "notes": list(sweep.notes),
        "best_match": {
            "f_hz": best.f_hz,
            "return_loss_db": best.return_loss_db,
            "vswr": best.vswr,
            "z_ohm": {"re": float(sweep.z_ohm[best.index].real), "im": float(sweep.z_ohm[best.index].imag)},
        },
        "reactance_zero_crossings": [
            {"f_hz": c.f_hz, "r_ohm": c.r_ohm, "kind": c.kind} for c in crossings
        ],
        "vswr_limit": vswr_limit,
        "vswr_bands": [
            {"f_lo_hz": b.f_lo_hz, "f_hi_hz": b.f_hi_hz, "width_hz": b.width_hz,
             "clipped_by_sweep": b.f_lo_hz <= f[0] or b.f_hi_hz >= f[-1]}
            for b in bands
        ],
    }


def render_text(s: dict) -> str:
    ff = format_frequency
    lines = [
        f"file        {s['source']}",
        f"points      {s['points']}  from {ff(s['f_start_hz'])} to {ff(s['f_stop_hz'])}"
        f"  step {ff(s['step_hz'])}{'' if s['uniform_grid'] else '  (NON-UNIFORM grid)'}",
        f"reference   {s['z0_ohm']:g} ohm",
    ]
    for c in s["comments"]:
        lines.append(f"comment     {c}")
    for n in s["notes"]:
        lines.append(f"NOTE        {n}")
    b = s["best_match"]
    lines.append(
        f"best match  return loss {b['return_loss_db']:.1f} dB, VSWR {b['vswr']:.2f} at {ff(b['f_hz'])}"
        f"  (Z = {b['z_ohm']['re']:.1f} {'+' if b['z_ohm']['im'] >= 0 else '-'} j{abs(b['z_ohm']['im']):.1f} ohm)"
    )
    xs = s["reactance_zero_crossings"]
    if not xs:
        lines.append("resonance   none in the sweep (reactance never crosses zero)")
    for c in xs:
        label = "series resonance  " if c["kind"] == "series" else "parallel resonance"
        lines.append(f"X = 0       {label} at {ff(c['f_hz'])}, R = {c['r_ohm']:.1f} ohm")
    if not s["vswr_bands"]:
        lines.append(f"bandwidth   VSWR never reaches {s['vswr_limit']:g} in the sweep")
    for band in s["vswr_bands"]:
        clip = "  (clipped by the sweep edge; may be wider)" if band["clipped_by_sweep"] else ""
        lines.append(
            f"bandwidth   VSWR <= {s['vswr_limit']:g} from {ff(band['f_lo_hz'])} to {ff(band['f_hi_hz'])}"
            f" = {ff(band['width_hz'])}{clip}"
        )
    return "\n".join(lines)


def run(args) -> int:
    sweep = _common.load_sweep(args, args.sweep)
    summary = summarise(sweep, args.vswr_limit)
    if args.json:
        _common.emit_json(summary)
    else:
        print(render_text(summary))
    if args.plot:
        from ..report.plots import plot_sweep

        plot_sweep(args.plot, sweep.f_hz, sweep.s11, f"fieldcheck inspect: {sweep.source}",
                   args.vswr_limit)
    return 0
