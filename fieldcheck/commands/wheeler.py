"""``fieldcheck wheeler``: radiation efficiency from a free-space and a Wheeler-cap sweep."""

from __future__ import annotations

import numpy as np

from ..physics.installation import installed_impedance
from ..physics.loss import installed_conductor_loss_ohm, radiation_efficiency
from ..physics.materials import get_material
from ..units import format_frequency
from ..wheeler import KINDS, wheeler_efficiency
from . import _common
from ._antenna_args import add_description_arguments, description_from_args

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
plane.  With an antenna description (--antenna or the antenna options) the
measured efficiency is set beside the physics estimate from the conductor's
skin-effect loss alone (method-of-moments current); a measured value well
below it points to loss the wire cannot explain (joints, balun, ground or
nearby lossy objects).

examples:
  fieldcheck wheeler free.s1p cap.s1p
  fieldcheck wheeler free.s1p cap.s1p --resonance series --json
  fieldcheck wheeler free.s1p cap.s1p --antenna dipole.toml
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
    add_description_arguments(p)
    _common.add_output_arguments(p)


def run(args) -> int:
    free = _common.load_sweep(args, args.free)
    cap = _common.load_sweep(args, args.cap)
    res = wheeler_efficiency(free, cap, resonance=args.resonance, r_sigma_ohm=args.r_sigma)
    data = {"free_source": free.source, "cap_source": cap.source, **res.to_dict(),
            "sweep_notes": list(free.notes) + list(cap.notes), "physics": None}
    if any(getattr(args, k, None) for k in ("antenna", "arm", "length", "diameter")):
        desc = description_from_args(args, require_target=False)
        data["physics"] = physics_estimate(desc, res.f_free_hz)
    return _common.emit_report(args, data, render_text)


def physics_estimate(desc, f_hz: float) -> dict:
    """Radiation efficiency from conductor loss alone at ``f_hz`` (MoM current, skin effect)."""
    a = desc.antenna
    material = get_material(a.material)
    r_rad = float(installed_impedance(np.array([f_hz]), a.total_length_m, a.radius_m,
                                      desc.installation)[0].real)
    r_loss = float(installed_conductor_loss_ohm(np.array([f_hz]), a.total_length_m, a.radius_m,
                                                desc.installation, material)[0])
    return {"material": material.name, "r_radiation_ohm": r_rad, "r_conductor_loss_ohm": r_loss,
            "eta": radiation_efficiency(r_rad, r_loss)}


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
    p = d["physics"]
    if p is not None:
        gap = (p["eta"] - d["eta"]) * 100
        lines.append(f"physics     {100 * p['eta']:.1f} % from {p['material']} skin-effect loss alone "
                     f"(R_rad {p['r_radiation_ohm']:.3g} ohm, R_loss {p['r_conductor_loss_ohm']:.3g} ohm)")
        if gap > 2 * d["eta_sigma_percent"]:
            lines.append(f"            measured is {gap:.1f} points lower: loss the wire cannot explain "
                         "(joints, balun, ground or nearby lossy objects)")
        else:
            lines.append("            measured agrees with the conductor loss within 2 sigma")
    for n in d["sweep_notes"] + d["notes"]:
        lines.append(f"note: {n}")
    return "\n".join(lines)
