"""Antenna description fields given as command-line options.

The option layer over :mod:`fieldcheck.antenna`: which option sets which
dotted key (:data:`OPTION_FOR_KEY`, also used by the loader to name the option
in an error), how option values become dotted overrides
(:func:`options_to_overrides`), and the loaders that take them
(:func:`load_with_options`, :func:`description_from_options`).  All names
here are re-exported by :mod:`fieldcheck.antenna`.
"""

from __future__ import annotations

from .antenna_spec import Description
from .errors import SpecError

#: Command-line option for each key (errors name the option when it came from one).
OPTION_FOR_KEY = {
    "antenna.name": "--antenna-name", "antenna.form": "--form", "antenna.arm_length": "--arm",
    "antenna.total_length": "--length", "antenna.diameter": "--diameter",
    "antenna.material": "--material", "antenna.feed_gap": "--gap",
    "antenna.insulation.thickness": "--insulation",
    "antenna.insulation.permittivity": "--insulation",
    "installation.kind": "--install", "installation.height": "--height",
    "target.frequency": "--target", "target.band": "--band", "target.criterion": "--criterion",
    "target.vswr_limit": "--vswr-limit", "feed.system_impedance": "--system-z0",
    "feed.balun": "--balun", "feed.cable": "--cable", "feed.fixture": "--fixture",
    "feed.delay": "--delay",
}


#: keyword of description_from_options -> description key (the option is OPTION_FOR_KEY).
OPTION_KEYWORDS = {
    "antenna_name": "antenna.name", "form": "antenna.form", "arm": "antenna.arm_length",
    "length": "antenna.total_length", "diameter": "antenna.diameter",
    "material": "antenna.material", "gap": "antenna.feed_gap",
    "insulation": "antenna.insulation", "install": "installation.kind",
    "height": "installation.height", "target": "target.frequency", "band": "target.band",
    "criterion": "target.criterion", "vswr_limit": "target.vswr_limit",
    "system_z0": "feed.system_impedance", "balun": "feed.balun", "cable": "feed.cable",
    "fixture": "feed.fixture", "delay": "feed.delay",
}


def options_to_overrides(**kwargs) -> dict[str, tuple[object, str]]:
    """Turn option values (None = not given) into dotted overrides tagged with the option."""
    out = {}
    for kw, value in kwargs.items():
        if kw not in OPTION_KEYWORDS:
            raise TypeError(f"unknown antenna option keyword {kw!r}")
        if value is None:
            continue
        key = OPTION_KEYWORDS[kw]
        if kw == "insulation":
            text = str(value).strip()
            if text.lower() in ("none", "bare"):
                out[key] = (None, "--insulation")
                continue
            thick, sep, eps = text.rpartition(":")
            if not sep or not thick:
                raise SpecError(f"--insulation: cannot read {text!r}: write THICKNESS:EPSR, "
                                "e.g. 0.4mm:2.3, or none for bare wire")
            out["antenna.insulation.thickness"] = (thick, "--insulation")
            out["antenna.insulation.permittivity"] = (eps, "--insulation")
        elif kw == "band":
            lo, sep, hi = str(value).partition(":")
            if not sep:
                raise SpecError(f"--band: cannot read {value!r}: write LOW:HIGH, "
                                "e.g. 144MHz:148MHz")
            out[key] = ([lo, hi], "--band")
        else:
            out[key] = (value, OPTION_FOR_KEY[key])
    return out



def load_with_options(path: str | None, options: dict[str, tuple[object, str]],
                       require_target: bool) -> Description:
    """Shared by the command-line helpers: ``options`` is dotted key -> (value, option name)."""
    # Imported here, not at the top: fieldcheck.antenna imports this module
    # (for OPTION_FOR_KEY and the re-exports), so a top-level import would be circular.
    from . import antenna as core

    ctx = core._Ctx(str(path) if path is not None else None, options_mode=True)
    if path is not None:
        core._read(str(path), ctx)
    core._apply_overrides(ctx, options)
    return core._build(ctx, require_target)


def description_from_options(*, require_target: bool = True, **kwargs) -> Description:
    """Build a description from command-line style values alone (no file).

    Parameters
    ----------
    require_target : bool
        If False, no ``target``/``band`` gives ``target=None``.
    **kwargs
        ``antenna_name, form, arm, length, diameter, material, gap, insulation
        ('0.4mm:2.3' or 'none'), install, height, target, band ('144MHz:148MHz'),
        criterion, vswr_limit, system_z0, balun, cable, fixture, delay``; text as
        typed (lengths with units, e.g. ``arm='492mm'``), None for not given.

    Raises
    ------
    SpecError
        Naming the option, e.g. ``--diameter: ...``.
    """
    return load_with_options(None, options_to_overrides(**kwargs), require_target)
