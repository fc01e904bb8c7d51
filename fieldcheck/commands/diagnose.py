"""``fieldcheck diagnose``: ranked causes of an unexpected mismatch, with evidence and the next check."""

from __future__ import annotations

from .. import antenna as _antenna
from .. import importer, refplane
from ..diagnose import diagnose
from ..errors import InputError
from . import _common
from ._antenna_args import add_description_arguments, description_from_args

NAME = "diagnose"
HELP = "rank the likely causes of a bad or unexpected match, with evidence and the next check"
DESCRIPTION = """\
Look at a sweep for the signatures of common faults and rank them: resonance
shifted from the as-built design, terminal resistance far from expected (loss,
nearby metal, balun ratio), shorted feed, open or broken element, current on
the outside of the feed line, reference plane not at the antenna, calibration
fault, too little signal, resonance outside the sweep, and (with the cable's
velocity factor) faults along the cable located by time-domain reflectometry
on the sweep as measured.  Each cause comes with its confidence, the evidence
in numbers and one next check.

Without an antenna description only model-free checks run; with one (--antenna
FILE.toml or --form/--arm/--diameter ...) the physics model adds the expected
resonance, resistance and loss.

examples:
  fieldcheck diagnose dipole.s1p
  fieldcheck diagnose dipole.s1p --form dipole --arm 492mm --diameter 2mm --cable RG58:5m
  fieldcheck diagnose feeder.s1p --cable-vf 0.66 --json
"""

#: Printed once when a next check means working on an installed antenna.
SAFETY_LINE = ("SAFETY: work at height and near power lines: follow local codes and licensed "
               "practice.")

#: Antenna options that mean "a description was given" (cable, fixture and delay
#: also belong to the sweep group and alone do not describe an antenna).
_SHARED = ("cable", "fixture", "delay")


def add_arguments(p):
    p.add_argument("sweep", metavar="SWEEP", help="Touchstone (.s1p, .s2p, ...) or CSV file")
    _common.add_sweep_arguments(p)
    add_description_arguments(p)
    _common.add_output_arguments(p)


def _description(args):
    given = getattr(args, "antenna", None) is not None or any(
        getattr(args, kw, None) is not None for kw in _antenna.OPTION_KEYWORDS if kw not in _SHARED)
    return description_from_args(args, require_target=False) if given else None


def run(args) -> int:
    desc = _description(args)
    feed = desc.feed if desc is not None else None
    cable_spec = args.cable or (feed.cable if feed else None)
    if cable_spec is None and (args.cable_loss is not None or args.cable_z0 is not None):
        raise InputError("--cable-loss and --cable-z0 describe a cable to remove: add --cable "
                         "TYPE:LENGTH, e.g. --cable RG58:5m")
    cable = (refplane.parse_cable(cable_spec, vf=args.cable_vf, loss=args.cable_loss,
                                  z0=args.cable_z0) if cable_spec else None)
    raw = importer.read_sweep(args.sweep, port=args.port, assume_defaults=args.assume_defaults,
                              csv_format=args.csv_format, csv_freq_unit=args.csv_freq_unit,
                              z0_ohm=args.z0)
    # --cable-vf without --cable only tells the time-domain check the velocity factor.
    sweep = refplane.apply_from_options(
        raw, cable=cable_spec, cable_vf=args.cable_vf if cable_spec else None,
        cable_loss=args.cable_loss, cable_z0=args.cable_z0,
        fixture=args.fixture or (feed.fixture_path if feed else None),
        delay=args.delay or (feed.delay if feed else None), delay_vf=args.delay_vf)
    result = diagnose(sweep, desc, raw_sweep=raw, cable_vf=args.cable_vf, cable=cable)
    data = {"source": raw.source, "antenna": desc.to_dict() if desc is not None else None,
            **result.to_dict(), "sweep_notes": list(sweep.notes)}
    return _common.emit_report(args, data, render_text)


def render_text(d: dict) -> str:
    """Plain-text report of :func:`run`'s data: ranked causes, most likely first."""
    ant = d["antenna"]
    if ant is None:
        what = "no description given: model-free checks only"
    else:
        a = ant["antenna"]
        what = (f"{a['name'] + ', ' if a['name'] else ''}{a['form']}, "
                f"{a['total_length_m'] * 1e3:.1f} mm, diameter {a['diameter_m'] * 1e3:g} mm")
    lines = [f"file      {d['source']}", f"antenna   {what}"]
    if d.get("target"):
        lines.append(f"target    {d['target']}")
    lines.append("")
    for i, c in enumerate(d["causes"], 1):
        lines.append(f"{i}. {c['title']}  ({100 * c['confidence']:.0f} %)")
        for e in c["evidence"]:
            lines.append(f"     - {e}")
        if c["where"]:
            lines.append(f"     where: {c['where']}")
        lines.append(f"     NEXT CHECK: {c['next_check']}")
        lines.append("")
    if any(c["at_height"] for c in d["causes"]):
        lines.append(SAFETY_LINE)
    for n in d["sweep_notes"] + d["notes"]:
        lines.append(f"note: {n}")
    return "\n".join(lines).rstrip()
