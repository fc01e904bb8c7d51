"""Argument groups and loaders shared by several subcommands."""

from __future__ import annotations

import argparse
import json
import sys

from ..errors import InputError
from ..units import parse_frequency_hz, parse_length_m


def add_sweep_arguments(p: argparse.ArgumentParser) -> None:
    """Options that say how to read a sweep file and where its reference plane is."""
    g = p.add_argument_group("reading the sweep")
    g.add_argument("--port", type=int, default=None, metavar="N",
                   help="for a 2-port or n-port file: the port (1-based) that faced the antenna")
    g.add_argument("--assume-defaults", action="store_true",
                   help="a Touchstone file without an option line: accept the standard's "
                        "defaults (GHz, MA, S, 50 ohm) instead of refusing it")
    g.add_argument("--csv-format", choices=("ri", "db", "ma"), default=None,
                   help="CSV only: columns are real/imag, dB/angle or magnitude/angle "
                        "(default: chosen from the header names)")
    g.add_argument("--csv-freq-unit", choices=("hz", "khz", "mhz", "ghz"), default=None,
                   help="CSV only: unit of the frequency column when its header does not say")
    g.add_argument("--z0", type=float, default=None, metavar="OHM",
                   help="CSV only: reference impedance (default 50 ohm)")
    r = p.add_argument_group("moving the reference plane to the antenna terminals")
    r.add_argument("--list-cables", action=_ListCables, nargs=0,
                   help="print the built-in cable types with their typical values and exit")
    r.add_argument("--cable", default=None, metavar="TYPE:LENGTH",
                   help="remove a coaxial cable, e.g. RG58:5m or RG213:12.5m "
                        "(see --list-cables), or custom:LENGTH with --cable-vf/--cable-loss/--cable-z0")
    r.add_argument("--cable-vf", type=float, default=None, metavar="VF",
                   help="override the cable's velocity factor (0 < VF <= 1)")
    r.add_argument("--cable-loss", default=None, metavar="DB@FREQ",
                   help="override the cable's matched loss per 100 m, e.g. 10.5@100MHz")
    r.add_argument("--cable-z0", type=float, default=None, metavar="OHM",
                   help="override the cable's characteristic impedance")
    r.add_argument("--fixture", default=None, metavar="FILE.s2p",
                   help="remove a measured fixture or adapter (2-port Touchstone, port 1 "
                        "toward the analyser, port 2 toward the antenna)")
    r.add_argument("--delay", default=None, metavar="TIME|LENGTH",
                   help="remove a one-way electrical delay (port extension), e.g. 1.2ns or "
                        "0.35m (length in free-space metres unless --delay-vf is given)")
    r.add_argument("--delay-vf", type=float, default=1.0, metavar="VF",
                   help="velocity factor for a --delay given as a length (default 1.0)")


class _ListCables(argparse.Action):
    def __call__(self, parser, namespace, values, option_string=None):
        from ..refplane import list_cables_text

        print(list_cables_text())
        parser.exit(0)


def load_sweep(args: argparse.Namespace, path: str, feed=None):
    """Read ``path`` as the options say and move it to the antenna terminals.

    ``feed`` (a FeedSpec from an antenna description, already merged with the
    command-line options) supplies cable, fixture and delay when given.
    """
    from .. import importer, refplane

    cable = feed.cable if feed is not None else args.cable
    fixture = feed.fixture_path if feed is not None else args.fixture
    delay = feed.delay if feed is not None else args.delay

    sweep = importer.read_sweep(
        path,
        port=args.port,
        assume_defaults=args.assume_defaults,
        csv_format=args.csv_format,
        csv_freq_unit=args.csv_freq_unit,
        z0_ohm=args.z0,
    )
    return refplane.apply_from_options(
        sweep,
        cable=cable,
        cable_vf=args.cable_vf,
        cable_loss=args.cable_loss,
        cable_z0=args.cable_z0,
        fixture=fixture,
        delay=delay,
        delay_vf=args.delay_vf,
    )


def add_output_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", action="store_true", help="print machine-readable JSON instead of text")


def emit_json(data) -> None:
    json.dump(data, sys.stdout, indent=2, default=_json_default)
    sys.stdout.write("\n")


def emit_report(args: argparse.Namespace, data: dict, render_text) -> int:
    """Print ``data`` as JSON (with ``--json``) or as ``render_text(data)``; return exit code 0."""
    if args.json:
        emit_json(data)
    else:
        print(render_text(data))
    return 0


def _json_default(obj):
    import numpy as np

    if isinstance(obj, np.generic):
        return obj.item()
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, complex):
        return {"re": obj.real, "im": obj.imag}
    raise TypeError(f"not JSON serialisable: {type(obj).__name__}")


__all__ = [
    "add_sweep_arguments", "load_sweep", "add_output_arguments", "emit_json", "emit_report",
    "parse_frequency_hz", "parse_length_m", "InputError",
]


#: --fix names -> fit parameter names (fieldcheck.antenna_fit.FIXABLE).
FIX_NAMES = {"delay": "delay_s", "feed-c": "c_feed_f", "feed-g": "g_feed_s", "loss": "r_loss_ohm"}


def add_fix_argument(p: argparse.ArgumentParser) -> None:
    p.add_argument("--fix", default=None, metavar="NAME[=VALUE],...",
                   help="hold fit parameters instead of fitting them: delay (residual delay, e.g. "
                        "delay or delay=0.1ns: use when the reference plane is known to be at the "
                        "terminals), feed-c (e.g. feed-c=0.5pF), feed-g (no shunt loss), loss "
                        "(e.g. loss=0.5ohm); without a value, zero")


def parse_fix(text: str | None) -> dict:
    """Parse ``--fix delay,feed-c=0.5pF`` into fit-parameter values (SI units)."""
    import re

    from ..refplane import parse_delay

    out = {}
    if not text:
        return out
    for item in (t.strip() for t in text.split(",") if t.strip()):
        name, _, value = item.partition("=")
        name = name.strip().lower()
        if name not in FIX_NAMES:
            raise InputError(f"--fix: unknown parameter {name!r}; use {', '.join(FIX_NAMES)}")
        key = FIX_NAMES[name]
        value = value.strip()
        if not value:
            out[key] = 0.0
        elif name == "delay":
            out[key] = parse_delay(value) if value not in ("0", "0s") else 0.0
        else:
            unit = {"feed-c": "pf", "loss": "ohm", "feed-g": "s"}[name]
            m = re.fullmatch(r"([+-]?\d+\.?\d*(?:[eE][+-]?\d+)?)\s*([a-zA-Z]*)", value)
            if not m or m.group(2).lower() not in ("", unit):
                raise InputError(f"--fix {name}={value}: write a number in {unit}, e.g. "
                                 f"{ {'feed-c': 'feed-c=0.5pF', 'loss': 'loss=0.5ohm', 'feed-g': 'feed-g=0'}[name] }")
            v = float(m.group(1))
            if v < 0:
                raise InputError(f"--fix {name}={value}: must not be negative")
            out[key] = v * 1e-12 if name == "feed-c" else v
    return out
