"""The antenna description: what was built and how it is measured.

A description is a small TOML file (our own schema, below) or the same fields
given as command-line options.  The loader is strict: unknown keys are errors
with a "did you mean" hint, lengths must carry a unit, and every error names
the file, the line and the key in dotted form and says what to write instead,
for example::

    antenna.toml:7: antenna.diameter: cannot read '2,0 mm': write a number with
    a unit m, cm, mm, in or ft, for example '2.0 mm'

Schema, with every key (only ``form``, ``arm_length`` or ``total_length``,
``diameter`` and the target ``frequency`` or ``band`` are required)::

    # fieldcheck antenna description
    [antenna]
    name = "2 m portable dipole"   # free text
    form = "dipole"                # "dipole" (centre-fed, two arms) or "monopole"
    arm_length = "492 mm"          # dipole: each arm, feed terminal to tip;
                                   # monopole: element height above the plane
    # total_length = "994 mm"      # dipole only, instead of arm_length: tip to tip
                                   # INCLUDING the feed gap
    diameter = "2.0 mm"            # bare conductor diameter
    material = "copper"            # copper (default), silver, aluminium, aluminium-6061,
                                   # brass, steel, stainless-304, copper-clad-steel
    feed_gap = "10 mm"             # default 0 mm; monopole: element base to plane
    [antenna.insulation]           # omit for bare wire
    thickness = "0.4 mm"           # radial thickness of the jacket
    permittivity = 2.3             # relative permittivity, >= 1

    [installation]                 # default "free" (dipole) / "ground-plane" (monopole);
                                   # built as physics.installation.Installation, with
                                   # "ground-plane" -> kind 'monopole'
    kind = "horizontal"            # "free", "horizontal" or "ground-plane"
    height = "10 m"                # horizontal only: wire height above ground

    [target]
    frequency = "146 MHz"          # OR band = ["144 MHz", "148 MHz"] (centre)
    criterion = "match"            # "match" (default) or "resonance"
    vswr_limit = 2.0               # default 2.0, for bandwidth figures

    [feed]
    system_impedance = 50          # ohm (default 50)
    balun = "1:1"                  # "none" (default), "1:1" or "4:1"
    cable = "RG58:5m"              # a cable to remove, same syntax as --cable
    fixture = "adapter.s2p"        # relative to THIS file
    delay = "0.12 ns"              # residual one-way delay, same syntax as --delay

Lengths and frequencies are quoted strings with a unit.  A bare number is
refused: ``arm_length = 492`` would otherwise mean 492 metres (or ``frequency =
146`` 146 Hz) without a word.  Overrides (command-line options) win over the
file; giving ``arm_length`` replaces a ``total_length`` from the file and vice
versa, ``frequency`` replaces ``band`` and vice versa, and an installation kind
other than ``horizontal`` drops a height from the file.
"""

from __future__ import annotations

import difflib
import math
import os
import re
import tomllib

# The option layer, the dataclasses and the key-line finder live in their own
# modules; their public names are re-exported here so callers keep importing
# from this module.
from .antenna_options import (OPTION_FOR_KEY, OPTION_KEYWORDS,  # noqa: F401
                              description_from_options, load_with_options,
                              options_to_overrides)
from .antenna_spec import AntennaSpec, Description, FeedSpec, Insulation, TargetSpec
from .errors import InputError, SpecError
from .physics.installation import Installation
from .physics.materials import known_materials
from .toml_lines import find_line, key_lines
from .units import parse_frequency_hz, parse_length_m

FORMS = ("dipole", "monopole")
INSTALL_KINDS = ("free", "horizontal", "ground-plane")
CRITERIA = ("match", "resonance")
BALUNS = {"none": 1.0, "1:1": 1.0, "4:1": 4.0}  # impedance ratios
#: [installation] kind in the file -> kind used by the physics code.
_KIND_MAP = {"free": "free", "horizontal": "horizontal", "ground-plane": "monopole"}
#: Thin-wire limit: diameter below 1/5 of the arm.  Project choice (common
#: practice, no source): the thin-wire kernel assumes radius << length.
THIN_WIRE_MAX_DIAMETER_OVER_ARM = 0.2

_SCHEMA = {
    "antenna": ("name", "form", "arm_length", "total_length", "diameter", "material",
                "feed_gap", "insulation"),
    "antenna.insulation": ("thickness", "permittivity"),
    "installation": ("kind", "height"),
    "target": ("frequency", "band", "criterion", "vswr_limit"),
    "feed": ("system_impedance", "balun", "cable", "fixture", "delay"),
}
_TABLES = {"", *_SCHEMA}
_LEAVES = {f"{t}.{k}" for t, keys in _SCHEMA.items() for k in keys} - _TABLES
_EXAMPLE = {
    "antenna.arm_length": "'492 mm'", "antenna.total_length": "'994 mm'",
    "antenna.diameter": "'2.0 mm'", "antenna.feed_gap": "'10 mm'",
    "antenna.insulation.thickness": "'0.4 mm'", "installation.height": "'10 m'",
    "target.frequency": "'146 MHz'", "target.band": "['144 MHz', '148 MHz']",
}


# ---------------------------------------------------------------- validation

class _Ctx:
    """Values by dotted key, each remembering where it came from (file line or option)."""

    def __init__(self, path: str | None, options_mode: bool):
        self.path, self.options_mode = path, options_mode
        self.values: dict[str, object] = {}
        self.label: dict[str, str | None] = {}  # None: from the file
        self.lines: dict[str, int] = {}

    def fail(self, key: str, message: str) -> SpecError:
        label = self.label.get(key)
        if label is not None or self.path is None:
            return SpecError(f"{label or OPTION_FOR_KEY.get(key, key)}: {message}")
        return SpecError(f"{key}: {message}", self.path, find_line(self.lines, key))

    def missing(self, key: str, what: str) -> SpecError:
        table, _, leaf = key.rpartition(".")
        ways = []
        if self.path is not None:
            ways.append(f"add {leaf} = {what} under [{table}]")
        if self.options_mode or self.path is None:
            ways.append(f"give {OPTION_FOR_KEY[key]}")
        msg = f"missing: {' or '.join(ways)}"
        if self.path is None:
            return SpecError(f"{OPTION_FOR_KEY[key]}: {msg}")
        return SpecError(f"{key}: {msg}", self.path, find_line(self.lines, table))

    def set(self, key: str, value: object, label: str | None) -> None:
        self.values[key], self.label[key] = value, label

    def drop(self, key: str) -> None:
        self.values.pop(key, None)
        self.label.pop(key, None)


def _suggest(name: str, table: str) -> str:
    leaf = name.rpartition(".")[2]
    siblings = _SCHEMA.get(table, ("antenna", "installation", "target", "feed") if not table else ())
    hints = [f"{table}.{k}" if table else k
             for k in difflib.get_close_matches(leaf.lower(), siblings, n=2)]
    hints += [k for k in sorted(_LEAVES | _TABLES) if k.rpartition(".")[2] == leaf.lower()
              and k not in hints and k != name]
    return f"; did you mean {' or '.join(hints)}?" if hints else ""


def _flatten(ctx: _Ctx, data: dict, table: str = "") -> None:
    for k, v in data.items():
        key = f"{table}.{k}" if table else k
        if key in _SCHEMA:
            if not isinstance(v, dict):
                raise ctx.fail(key, f"must be a table: write [{key}] on its own line")
            _flatten(ctx, v, key)
        elif key in _LEAVES and not isinstance(v, dict):
            ctx.set(key, v, None)
        elif key in _LEAVES:
            raise ctx.fail(key, f"is a value, not a table: write {k} = ... under [{table}]")
        else:
            where = f"key in [{table}]" if table else "table (the tables are [antenna], " \
                "[installation], [target] and [feed])"
            raise ctx.fail(key, f"unknown {where}{_suggest(key, table)}")


def _quantity(ctx: _Ctx, key: str, parse, units: str, allow_zero: bool = False,
              raw: object = None) -> float:
    raw = ctx.values[key] if raw is None else raw
    example = _EXAMPLE[key]
    if isinstance(raw, (int, float)) and not isinstance(raw, bool):
        raise ctx.fail(key, f"the bare number {raw!r} has no unit: write a unit, e.g. {example}")
    if not isinstance(raw, str):
        raise ctx.fail(key, f"expected a quoted value with a unit, e.g. {example}")
    m = re.fullmatch(r"\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*([A-Za-z]*)\s*", raw)
    bad_form = f"cannot read {raw!r}: write a number with a unit {units}, for example {example}"
    if m is None:
        raise ctx.fail(key, bad_form)
    if not m.group(2):
        raise ctx.fail(key, f"{raw!r} has no unit: write a unit, e.g. {example}")
    number = float(m.group(1))
    try:
        parse(f"1 {m.group(2)}")  # the unit table lives in fieldcheck.units
        if number == 0.0 and allow_zero:
            return 0.0
        if not number > 0.0:
            need = "must not be negative" if allow_zero else "must be greater than zero"
            raise ctx.fail(key, f"{need}; got {raw!r}")
        return parse(raw)
    except InputError as exc:
        if isinstance(exc, SpecError):
            raise
        raise ctx.fail(key, bad_form) from None


def _length(ctx, key, allow_zero=False):
    return _quantity(ctx, key, parse_length_m, "m, cm, mm, in or ft", allow_zero)


def _freq(ctx, key, raw=None):
    return _quantity(ctx, key, parse_frequency_hz, "Hz, kHz, MHz or GHz", raw=raw)


def _number(ctx: _Ctx, key: str, example: str) -> float:
    raw = ctx.values[key]
    if isinstance(raw, str) and ctx.label.get(key) is not None:  # options arrive as text
        try:
            raw = float(raw)
        except ValueError:
            pass
    if isinstance(raw, bool) or not isinstance(raw, (int, float)) or not math.isfinite(raw):
        raise ctx.fail(key, f"expected a plain number, e.g. {example}; got {raw!r}")
    return float(raw)


def _choice(ctx: _Ctx, key: str, allowed) -> str:
    raw = ctx.values[key]
    text = raw.strip().lower() if isinstance(raw, str) else None
    if text not in allowed:
        names = ", ".join(f'"{a}"' for a in allowed)
        raise ctx.fail(key, f"{raw!r} is not one of {names}")
    return text


def _text(ctx: _Ctx, key: str, default: str | None = None) -> str | None:
    raw = ctx.values.get(key, default)
    if raw is not None and (not isinstance(raw, str) or not raw.strip()):
        raise ctx.fail(key, f"expected non-empty quoted text; got {raw!r}")
    return raw.strip() if raw is not None else None


def _antenna(ctx: _Ctx) -> AntennaSpec:
    v = ctx.values
    if "antenna.form" not in v:
        raise ctx.missing("antenna.form", '"dipole" (or "monopole")')
    form = _choice(ctx, "antenna.form", FORMS)
    gap_m = _length(ctx, "antenna.feed_gap", allow_zero=True) if "antenna.feed_gap" in v else 0.0
    if "antenna.arm_length" in v and "antenna.total_length" in v:
        raise ctx.fail("antenna.total_length",
                       "give arm_length or total_length, not both (remove one of them)")
    if "antenna.total_length" in v:
        if form != "dipole":
            raise ctx.fail("antenna.total_length", "is for dipoles only: for a monopole give "
                           "arm_length (the element height above the plane)")
        total_m = _length(ctx, "antenna.total_length")
        if not total_m > gap_m:
            raise ctx.fail("antenna.total_length", f"{total_m * 1e3:g} mm is not longer than "
                           f"the feed gap {gap_m * 1e3:g} mm: check both values and their units")
        arm_m = 0.5 * (total_m - gap_m)
        arm_key = "antenna.total_length"
    elif "antenna.arm_length" in v:
        arm_m, arm_key = _length(ctx, "antenna.arm_length"), "antenna.arm_length"
    else:
        raise ctx.missing("antenna.arm_length", _EXAMPLE["antenna.arm_length"].replace("'", '"'))
    if "antenna.diameter" not in v:
        raise ctx.missing("antenna.diameter", '"2.0 mm"')
    dia_m = _length(ctx, "antenna.diameter")
    if dia_m >= THIN_WIRE_MAX_DIAMETER_OVER_ARM * arm_m:
        raise ctx.fail("antenna.diameter", (
            f"{dia_m * 1e3:g} mm is not a thin wire for an arm of {arm_m * 1e3:g} mm "
            f"(the model needs diameter < 1/5 of the arm, set by {arm_key}): check the units"))
    ins = None
    if "antenna.insulation.thickness" in v or "antenna.insulation.permittivity" in v:
        for k, ex in (("thickness", '"0.4 mm"'), ("permittivity", "2.3")):
            if f"antenna.insulation.{k}" not in v:
                raise ctx.missing(f"antenna.insulation.{k}", ex)
        t_m = _length(ctx, "antenna.insulation.thickness")
        eps = _number(ctx, "antenna.insulation.permittivity", "2.3")
        if eps < 1.0:
            # Typical jackets, from memory: PTFE 2.1, PE 2.3, PVC 3..4.
            raise ctx.fail("antenna.insulation.permittivity", f"{eps:g} is below 1 (vacuum): "
                           "a jacket has 2..4, e.g. PE 2.3, PTFE 2.1, PVC 3..4")
        ins = Insulation(t_m, eps)
    material = (_text(ctx, "antenna.material", "copper") or "copper").lower()
    if material not in known_materials():
        # A typo here would silently drop the conductor-loss estimate later.
        close = difflib.get_close_matches(material, known_materials(), n=1)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise ctx.fail("antenna.material", f"{material!r} is not a known conductor{hint}: use one of "
                       f"{', '.join(known_materials())}")
    name = v.get("antenna.name", "")
    if not isinstance(name, str):
        raise ctx.fail("antenna.name", f"expected quoted text; got {name!r}")
    return AntennaSpec(name.strip(), form, arm_m, dia_m, material, gap_m, ins)


def _installation(ctx: _Ctx, form: str) -> Installation:
    v = ctx.values
    default = "ground-plane" if form == "monopole" else "free"
    kind = _choice(ctx, "installation.kind", INSTALL_KINDS) if "installation.kind" in v else default
    if form == "monopole" and kind != "ground-plane":
        raise ctx.fail("installation.kind", f'a monopole is measured over a ground plane: '
                       f'write kind = "ground-plane" (or form = "dipole"), not "{kind}"')
    if form == "dipole" and kind == "ground-plane":
        raise ctx.fail("installation.kind", 'a dipole has no ground plane: use "free" or '
                       '"horizontal", or form = "monopole" for one element over a plane')
    height_m = None
    if kind == "horizontal":
        if "installation.height" not in v:
            raise ctx.missing("installation.height", '"10 m"')
        height_m = _length(ctx, "installation.height")
    elif "installation.height" in v:
        raise ctx.fail("installation.height", f'is only for kind = "horizontal"; remove it '
                       f'for "{kind}" (or set kind = "horizontal")')
    return Installation(_KIND_MAP[kind], height_m)


def _target(ctx: _Ctx, require: bool) -> TargetSpec | None:
    v = ctx.values
    criterion = _choice(ctx, "target.criterion", CRITERIA) if "target.criterion" in v else "match"
    vswr = _number(ctx, "target.vswr_limit", "2.0") if "target.vswr_limit" in v else 2.0
    if not vswr > 1.0:
        raise ctx.fail("target.vswr_limit", f"must be greater than 1 (VSWR is >= 1); got {vswr:g}")
    if "target.frequency" in v and "target.band" in v:
        raise ctx.fail("target.band", "give frequency or band, not both (the target of a "
                       "band is its centre)")
    band = None
    if "target.band" in v:
        raw = v["target.band"]
        if not isinstance(raw, list) or len(raw) != 2:
            raise ctx.fail("target.band", f"expected two frequencies, e.g. {_EXAMPLE['target.band']}")
        band = [_freq(ctx, "target.band", raw=edge) for edge in raw]
        if not band[0] < band[1]:
            raise ctx.fail("target.band", f"the low edge must be below the high edge; got {raw!r}")
        f_hz = 0.5 * (band[0] + band[1])
    elif "target.frequency" in v:
        f_hz = _freq(ctx, "target.frequency")
    elif require:
        raise ctx.missing("target.frequency", '"146 MHz" (or band = ["144 MHz", "148 MHz"])')
    else:
        return None
    return TargetSpec(f_hz, tuple(band) if band else None, criterion, vswr)


def _feed(ctx: _Ctx) -> FeedSpec:
    v = ctx.values
    z0 = _number(ctx, "feed.system_impedance", "50") if "feed.system_impedance" in v else 50.0
    if not z0 > 0.0:
        raise ctx.fail("feed.system_impedance", f"must be greater than zero ohm; got {z0:g}")
    balun = _choice(ctx, "feed.balun", tuple(BALUNS)) if "feed.balun" in v else "none"
    fixture = _text(ctx, "feed.fixture")
    if fixture is not None:
        from_file = ctx.label.get("feed.fixture") is None and ctx.path is not None
        base = os.path.dirname(os.path.abspath(ctx.path)) if from_file else os.getcwd()
        fixture = os.path.abspath(os.path.join(base, os.path.expanduser(fixture)))
        if not os.path.isfile(fixture):
            where = "the description file" if from_file else "the current directory"
            raise ctx.fail("feed.fixture", f"no such file {fixture} (the path is relative to "
                           f"{where}): check the name")
    return FeedSpec(z0, BALUNS[balun], balun, _text(ctx, "feed.cable"), fixture,
                    _text(ctx, "feed.delay"))


_ALTERNATIVES = {"antenna.arm_length": "antenna.total_length",
                 "antenna.total_length": "antenna.arm_length",
                 "target.frequency": "target.band", "target.band": "target.frequency"}


def _apply_overrides(ctx: _Ctx, overrides: dict[str, tuple[object, str]]) -> None:
    for key, (value, label) in overrides.items():
        if key == "antenna.insulation":
            if value is not None:
                raise SpecError(f"{label}: only None (remove the jacket) can be given for the "
                                "whole table; set antenna.insulation.thickness/permittivity")
            ctx.drop("antenna.insulation.thickness")
            ctx.drop("antenna.insulation.permittivity")
            continue
        if key not in _LEAVES:
            table = key.rpartition(".")[0]
            raise SpecError(f"{label}: unknown key {key!r}{_suggest(key, table)}")
        other = _ALTERNATIVES.get(key)
        if other and ctx.label.get(other, "") is None:  # replaces the file's alternative
            ctx.drop(other)
        if value is None:
            ctx.drop(key)
        else:
            ctx.set(key, value, label)
    kind = ctx.values.get("installation.kind")
    if (ctx.label.get("installation.kind") is not None and kind != "horizontal"
            and ctx.label.get("installation.height", "") is None):
        ctx.drop("installation.height")


def _build(ctx: _Ctx, require_target: bool) -> Description:
    antenna = _antenna(ctx)
    installation = _installation(ctx, antenna.form)
    return Description(antenna, installation, _target(ctx, require_target), _feed(ctx), ctx.path)


def _read(path: str, ctx: _Ctx) -> None:
    try:
        with open(path, "rb") as fh:
            blob = fh.read()
    except OSError as exc:
        raise SpecError(f"cannot open the antenna description ({exc.strerror}): check the path",
                        str(path)) from None
    ctx.lines = key_lines(blob.decode("utf-8", errors="replace"))
    try:
        data = tomllib.loads(blob.decode("utf-8"))
    except UnicodeDecodeError as exc:
        line = blob[:exc.start].count(b"\n") + 1
        raise SpecError("not UTF-8 text: save the file as UTF-8", str(path), line) from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\s*\(at line (\d+), column (\d+)\)$", msg)
        line = int(m.group(1)) if m else blob.count(b"\n") + 1
        msg = msg[:m.start()] if m else msg.replace(" (at end of document)", "")
        raise SpecError(f"not valid TOML: {msg}: fix the syntax (quote values with units, "
                        'e.g. diameter = "2.0 mm"; give each key once)', str(path), line) from None
    _flatten(ctx, data)


def load_description(path: str, overrides: dict | None = None, *,
                     require_target: bool = True) -> Description:
    """Read, check and complete an antenna description file.

    Parameters
    ----------
    path : str
        The TOML description file.
    overrides : dict, optional
        Dotted key -> value, e.g. ``{"antenna.arm_length": "495 mm"}``; they win
        over the file.  None removes a key (``"antenna.insulation": None`` the jacket).
    require_target : bool
        If False, a missing target frequency gives ``target=None``.

    Returns
    -------
    Description

    Raises
    ------
    SpecError
        Naming file, line and dotted key, and what to write instead.
    """
    ctx = _Ctx(str(path), options_mode=False)
    _read(str(path), ctx)
    _apply_overrides(ctx, {k: (v, f"override {k}") for k, v in (overrides or {}).items()})
    return _build(ctx, require_target)
