"""``fieldcheck wheeler``: radiation efficiency from a free-space and a Wheeler-cap sweep."""

from __future__ import annotations

from ..units import format_frequency
from ..wheeler import KINDS, wheeler_efficiency
from . import _common

NAME = "wheeler"
HELP = "radiation efficiency by the Wheeler cap method (free-space and cap sweeps)"
DESCRIPTION = """\
Compare the antenna's input resistance at resonance measured in free space and
inside a conducting cap that suppresses radiation (Wheeler cap method).  For a
series resonance (reactance rising through zero) the efficiency is
1 - R_cap / R_free; for a parallel resonance (reactance falling through zero)
it is 1 - G_cap / G_free.  The uncertainty comes from the scatter of the
data about a local fit near resonance, or from --r-sigma.

Both sweeps are read with the same options and moved to the same reference
plane.

examples:
  fieldcheck wheeler free.s1p cap.s1p
  fieldcheck wheeler free.s1p cap.s1p --resonance series --json
"""


def add_arguments(p):
    p.add_argument("free", metavar="FREE_SWEEP", help="sweep of the antenna in free space")
    p.add_argument("cap", metavar="CAP_SWEEP", help="sweep of the antenna inside the cap")
    p.add_argument("--resonance", choices=KINDS, default="auto",
                   help="compare at a series or parallel resonance (default auto: from the "
                        "slope of the reactance at the best-matched resonance)")
    p.add_argument("--r-sigma", type=float, default=None, metavar="OHM",
                   help="known noise of the measured resistance, ohm (default: estimated "
                        "from the data)")
    _common.add_sweep_arguments(p)
    _common.add_output_arguments(p)


def run(args) -> int:
    free = _common.load_sweep(args, args.free)
    cap = _common.load_sweep(args, args.cap)
    res = wheeler_efficiency(free, cap, resonance=args.resonance, r_sigma_ohm=args.r_sigma)
    data = {"free_source": free.source, "cap_source": cap.source, **res.to_dict(),
            "sweep_notes": list(free.notes) + list(cap.notes)}
    return _common.emit_report(args, data, render_text)


def render_text(d: dict) -> str:
    """Plain-text report of :func:`run`'s data."""
    ff = format_frequency
    lines = [
        f"free space  {d['free_source']}",
        f"in cap      {d['cap_source']}",
        f"resonance   {d['resonance_kind']}: {ff(d['f_free_hz'])} free, {ff(d['f_cap_hz'])} in cap",
        f"R free      {d['r_free_ohm']:.4g} +/- {d['r_free_sigma_ohm']:.2g} ohm",
        f"R cap       {d['r_cap_ohm']:.4g} +/- {d['r_cap_sigma_ohm']:.2g} ohm",
        f"efficiency  {d['eta_percent']:.1f} % +/- {d['eta_sigma_percent']:.1f} % (1 sigma)",
    ]
    for n in d["sweep_notes"] + d["notes"]:
        lines.append(f"note: {n}")
    return "\n".join(lines)
