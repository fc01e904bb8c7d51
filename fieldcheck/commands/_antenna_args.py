"""Command-line options for the antenna description (see fieldcheck.antenna)."""

from __future__ import annotations

import argparse

from .. import antenna as _antenna

#: (flags, dest, metavar, help) of each option; dests are the keywords of
#: fieldcheck.antenna.description_from_options.
_OPTIONS = (
    ("--antenna", "antenna", "FILE.toml", "antenna description file (TOML); the options "
     "below override its fields"),
    ("--antenna-name", "antenna_name", "TEXT", "free-text name of the antenna"),
    ("--form", "form", "dipole|monopole", "centre-fed dipole, or one element over a ground plane"),
    ("--arm", "arm", "LENGTH", "dipole: each arm, feed terminal to tip; monopole: element "
     "height above the plane, e.g. 492mm (a unit is required)"),
    ("--length", "length", "LENGTH", "dipole only, instead of --arm: tip to tip including "
     "the feed gap, e.g. 994mm"),
    ("--diameter", "diameter", "LENGTH", "bare conductor diameter, e.g. 2.0mm"),
    ("--material", "material", "NAME", "conductor: copper (default), silver, aluminium, "
     "aluminium-6061, brass, steel, stainless-304, copper-clad-steel"),
    ("--gap", "gap", "LENGTH", "feed gap between the arms (monopole: base to plane), "
     "default 0mm"),
    ("--insulation", "insulation", "THICKNESS:EPSR", "wire jacket, e.g. 0.4mm:2.3, or none"),
    ("--install", "install", "free|horizontal|ground-plane", "how the antenna stands "
     "while measured (default: free for a dipole, ground-plane for a monopole)"),
    ("--height", "height", "LENGTH", "--install horizontal: height above ground, e.g. 10m"),
    ("--target", "target", "FREQ", "target frequency, e.g. 146MHz"),
    ("--band", "band", "LO:HI", "target band instead of --target, e.g. 144MHz:148MHz "
     "(the target is its centre)"),
    ("--criterion", "criterion", "match|resonance", "aim for the best match seen by the "
     "feed line (default) or for X = 0 at the antenna terminals"),
    ("--vswr-limit", "vswr_limit", "V", "VSWR limit for bandwidth figures (default 2.0)"),
    ("--system-z0", "system_z0", "OHM", "feed line / analyser impedance (default 50)"),
    ("--balun", "balun", "none|1:1|4:1", "balun at the feed (default none)"),
    # Also in the sweep group of fieldcheck.commands._common; added here only if missing.
    ("--cable", "cable", "TYPE:LENGTH", "a coaxial cable to remove, e.g. RG58:5m"),
    ("--fixture", "fixture", "FILE.s2p", "a fixture 2-port to remove"),
    ("--delay", "delay", "TIME|LENGTH", "a residual one-way delay to remove, e.g. 0.12ns"),
)


def add_description_arguments(parser: argparse.ArgumentParser) -> None:
    """Add the group "antenna (overrides the description file)" to ``parser``.

    Options the command already has (``--cable``, ``--fixture``, ``--delay`` of
    the sweep group, or its own ``--vswr-limit``) are not added twice; their
    values are read by :func:`description_from_args` all the same.
    """
    g = parser.add_argument_group("antenna (overrides the description file)")
    for flag, dest, metavar, text in _OPTIONS:
        try:
            g.add_argument(flag, dest=dest, metavar=metavar, default=None, help=text)
        except argparse.ArgumentError:  # already defined by the command
            pass


def description_from_args(args: argparse.Namespace, require_target: bool = True):
    """Load ``args.antenna`` (may be None) and apply every option given.

    Parameters
    ----------
    args : argparse.Namespace
        Parsed arguments; missing attributes count as not given.
    require_target : bool
        If False, no target frequency gives ``target=None``.

    Returns
    -------
    fieldcheck.antenna.Description

    Raises
    ------
    SpecError
        file:line for the file, or the option's name for a bad option.
    """
    given = {kw: getattr(args, kw, None) for kw in _antenna.OPTION_KEYWORDS}
    return _antenna.load_with_options(getattr(args, "antenna", None),
                                      _antenna.options_to_overrides(**given), require_target)
