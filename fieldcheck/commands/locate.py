"""``fieldcheck locate``: find faults and mismatches along a feed cable from its S11 sweep."""

from __future__ import annotations

from .. import tdr
from . import _common

NAME = "locate"
HELP = "locate reflections (faults, connectors, the cable's end) along a feed cable"
DESCRIPTION = """\
Transform an S11 sweep taken at the input of a cable into the time domain and
list each significant reflection: one-way distance along the cable, round-trip
time, |Gamma| (corrected for the window, zero padding and, when the loss is
known, the cable's two-way loss) and the same in dB.  The sweep must be evenly
stepped.  The band-pass transform works on any such sweep; the low-pass
transform also gives the sign (+ open-like, - short-like) but needs a sweep
that starts one step above DC on a harmonic grid (f_n = n * f_1).

Range resolution is the -6 dB main-lobe width of the window's response times
c0 VF / 2; the alias-free range is c0 VF / (2 step).

examples:
  fieldcheck locate feeder.s1p --vf 0.66
  fieldcheck locate feeder.s1p --cable-type RG58 --length 30m
  fieldcheck locate feeder.s1p --vf 0.85 --mode lowpass --window hann --json
"""


def add_arguments(p):
    p.add_argument("sweep", metavar="SWEEP", help="Touchstone (.s1p, .s2p, ...) or CSV file")
    g = p.add_argument_group("the cable under test")
    g.add_argument("--vf", type=float, default=None, metavar="VF",
                   help="velocity factor of the cable (0 < VF <= 1); overrides the table value "
                        "of --cable-type")
    g.add_argument("--cable-type", default=None, metavar="TYPE",
                   help="take the velocity factor and matched loss from the cable table, e.g. "
                        "RG58, RG213, LMR400")
    g.add_argument("--length", default=None, metavar="LENGTH",
                   help="expected cable length (e.g. 30m); warns when it exceeds the "
                        "alias-free range")
    t = p.add_argument_group("the transform")
    t.add_argument("--mode", choices=tdr.MODES, default="bandpass",
                   help="band-pass (any evenly stepped sweep) or low-pass (harmonic grid from "
                        "DC); default bandpass")
    t.add_argument("--window", choices=tdr.WINDOWS, default="kaiser",
                   help="window across the sweep (default kaiser)")
    t.add_argument("--kaiser-beta", type=float, default=6.0, metavar="BETA",
                   help="Kaiser window beta (default 6: about -44 dB side lobes)")
    t.add_argument("--pad-factor", type=int, default=8, metavar="K",
                   help="zero-pad to a power of two >= K times the points (default 8)")
    t.add_argument("--threshold-db", type=float, default=-30.0, metavar="DB",
                   help="report reflections down to this level below the largest (default -30)")
    _common.add_sweep_arguments(p)
    _common.add_output_arguments(p)


def _cable_parameters(args):
    """(velocity factor, loss dB/100 m, loss reference Hz, cable label) from the options."""
    loss, ref_hz, label = 0.0, None, None
    vf = args.vf
    if args.cable_type is not None:
        from .. import cables

        ct = cables.lookup(args.cable_type)
        loss, ref_hz, label = ct.loss_db_per_100m, ct.loss_ref_hz, ct.name
        if vf is None:
            vf = ct.velocity_factor
    if vf is None:
        raise _common.InputError("give the cable's velocity factor with --vf (e.g. --vf 0.66) "
                                 "or a catalogued type with --cable-type (e.g. RG58)")
    if not 0.0 < vf <= 1.0:
        raise _common.InputError(f"--vf must be in (0, 1], got {vf}")
    return vf, loss, ref_hz, label


def run(args) -> int:
    vf, loss, ref_hz, label = _cable_parameters(args)
    length_m = (_common.parse_length_m(args.length, "--length")
                if args.length is not None else None)
    sweep = _common.load_sweep(args, args.sweep)
    res = tdr.locate_reflections(
        sweep, vf, loss_db_per_100m=loss, loss_ref_hz=ref_hz, mode=args.mode,
        window=args.window, kaiser_beta=args.kaiser_beta, pad_factor=args.pad_factor,
        threshold_db=args.threshold_db, cable_length_m=length_m,
    )
    data = {"source": sweep.source, "cable_type": label, "loss_db_per_100m": loss,
            "loss_ref_hz": ref_hz, **res.to_dict(), "sweep_notes": list(sweep.notes)}
    return _common.emit_report(args, data, render_text)


def render_text(d: dict) -> str:
    """Plain-text report of :func:`run`'s data."""
    cable = f"{d['cable_type']}, " if d["cable_type"] else ""
    lines = [
        f"file        {d['source']}",
        f"cable       {cable}VF {d['velocity_factor']:.3g}"
        + (f", loss {d['loss_db_per_100m']:.3g} dB/100 m at {d['loss_ref_hz'] / 1e6:g} MHz"
           if d["loss_db_per_100m"] else ", loss not corrected"),
        f"transform   {d['mode']}, {d['window']} window",
        f"resolution  {d['range_resolution_m']:.3g} m (-6 dB main lobe); "
        f"c0 VF / (2 span) = {d['simple_resolution_m']:.3g} m",
        f"alias-free  {d['alias_free_range_m']:.4g} m",
        "",
    ]
    refl = d["reflections"]
    if refl:
        gam = "Gamma" if d["mode"] == "lowpass" else "|Gamma|"
        lines.append(f"{'#':>3} {'distance/m':>11} {'time/ns':>9} {gam:>8} {'dB':>7}")
        for i, r in enumerate(refl, 1):
            lines.append(f"{i:>3} {r['distance_m']:>11.3f} {r['time_ns']:>9.3f} "
                         f"{r['gamma']:>8.3f} {r['gamma_db']:>7.1f}")
    else:
        lines.append("no significant reflection found")
    for n in d["sweep_notes"] + d["notes"]:
        lines.append(f"note: {n}")
    return "\n".join(lines)
