"""``fieldcheck predict``: what a wire antenna should do, before it is measured."""

from __future__ import annotations

import argparse
import csv
import math

import numpy as np
from scipy import optimize

from ..constants import C0_M_PER_S, TWO_PI
from ..errors import InputError
from ..physics import installation as inst
from ..physics import loss, materials, mom, pattern
from ..sweep import gamma_from_impedance, return_loss_db, vswr_from_gamma
from ..units import format_frequency, parse_frequency_hz, parse_length_m
from ._common import add_output_arguments, emit_json

NAME = "predict"
HELP = "predict impedance, match, directivity and gain of a wire antenna before measuring"
DESCRIPTION = (
    "Compute what a straight wire antenna should do: its first series resonance,\n"
    "impedance, VSWR and return loss against the system impedance, directivity,\n"
    "radiation efficiency from conductor loss, gain, realized gain and a pattern cut.\n"
    "Impedance and current come from the thin-wire method of moments; the pattern\n"
    "assumes the sinusoidal current; grounds are perfect and infinite.\n\n"
    "example: fieldcheck predict --length 985mm --diameter 2mm --freq 146MHz"
)

#: Points of the default table around the operating frequency (+-10 %).
DEFAULT_TABLE_POINTS = 41
MAX_TABLE_POINTS = 10001


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("--length", required=True, metavar="LENGTH",
                   help="total dipole length tip to tip, or the monopole's height above the "
                        "plane with --install monopole, e.g. 985mm or 1.02m")
    p.add_argument("--diameter", required=True, metavar="LENGTH",
                   help="wire diameter, e.g. 2mm")
    p.add_argument("--material", default="copper", metavar="NAME",
                   help="conductor: " + ", ".join(materials.known_materials()) + " (default copper)")
    p.add_argument("--cladding", default=None, metavar="LENGTH",
                   help="copper layer thickness of copper-clad-steel (default "
                        f"{materials.DEFAULT_CCS_CLADDING_M * 1e3:g}mm, a typical value)")
    p.add_argument("--install", choices=inst.KINDS, default="free",
                   help="free-space dipole, monopole over a perfect ground plane, or horizontal "
                        "dipole over perfect ground (needs --height); default free")
    p.add_argument("--height", default=None, metavar="LENGTH",
                   help="--install horizontal: height of the wire above ground, e.g. 10m")
    p.add_argument("--freq", default=None, metavar="FREQ",
                   help="operating frequency, e.g. 146MHz (default: the first series resonance)")
    p.add_argument("--span", default=None, metavar="START:STOP[:POINTS]",
                   help="frequency table, e.g. 140MHz:152MHz:61 (default: +-10 %% around the "
                        f"operating frequency, {DEFAULT_TABLE_POINTS} points)")
    p.add_argument("--z0", type=float, default=50.0, metavar="OHM",
                   help="system (feed line / analyser) impedance, default 50 ohm")
    p.add_argument("--csv", default=None, metavar="FILE",
                   help="write the frequency table (f_hz, r_ohm, x_ohm, vswr, return_loss_db)")
    add_output_arguments(p)


def _parse_span(text: str) -> np.ndarray:
    parts = text.split(":")
    if len(parts) not in (2, 3):
        raise InputError(f"--span {text!r}: write START:STOP or START:STOP:POINTS, e.g. 140MHz:152MHz:61")
    start = parse_frequency_hz(parts[0], "--span start")
    stop = parse_frequency_hz(parts[1], "--span stop")
    n = 101
    if len(parts) == 3:
        try:
            n = int(parts[2])
        except ValueError:
            raise InputError(f"--span points {parts[2]!r} is not a whole number") from None
    if not 2 <= n <= MAX_TABLE_POINTS:
        raise InputError(f"--span points must be 2..{MAX_TABLE_POINTS}; got {n}")
    if not stop > start:
        raise InputError(f"--span {text!r}: STOP must be above START")
    return np.linspace(start, stop, n)


def _installation(args) -> inst.Installation:
    if args.install == "horizontal":
        if args.height is None:
            raise InputError("--install horizontal needs --height, the wire's height above ground, e.g. 10m")
        return inst.Installation("horizontal", parse_length_m(args.height, "--height"))
    if args.height is not None:
        raise InputError(f"--height applies only to --install horizontal, not {args.install!r}")
    return inst.Installation(args.install)


def _wire_length(length_m: float, where: inst.Installation) -> float:
    """Length of the free-space dipole whose current models the antenna (image for a monopole)."""
    return 2.0 * length_m if where.kind == "monopole" else length_m


def _resonance_hz(length_m, radius_m, where) -> float | None:
    """First series resonance (X rising through 0) of the lossless antenna, Hz."""
    wire = _wire_length(length_m, where)
    f = np.linspace(0.4, 1.6, 49) * math.pi * C0_M_PER_S / (TWO_PI * wire)
    x = inst.installed_impedance(f, length_m, radius_m, where).imag
    idx = np.flatnonzero((x[:-1] < 0) & (x[1:] >= 0))
    if idx.size == 0:
        return None
    i = int(idx[0])

    def react(fh):
        return float(inst.installed_impedance([fh], length_m, radius_m, where).imag[0])

    return float(optimize.brentq(react, f[i], f[i + 1], xtol=1e-9 * f[i]))


def _directivity(f_hz, length_m, where):
    k = TWO_PI * f_hz / C0_M_PER_S
    if where.kind == "free":
        s = pattern.pattern_summary(k * length_m)
        theta = np.arange(0, 181, 10.0)
        cut = pattern.pattern_cut(k * length_m, theta)
        return s.d_max, s.theta_max_deg, s.hpbw_deg, theta, cut, "theta from the wire axis"
    if where.kind == "monopole":
        s = pattern.monopole_pattern_summary(k * length_m)
        theta = np.arange(0, 91, 10.0)
        cut = pattern.to_dbi(pattern.monopole_directivity(k * length_m, theta))
        return s.d_max, s.theta_max_deg, s.hpbw_deg, theta, cut, "theta from the zenith (vertical wire)"
    kh = k * where.height_m
    s = pattern.horizontal_summary(k * length_m, kh)
    theta = np.arange(0, 91, 10.0)
    cut = pattern.to_dbi(pattern.horizontal_directivity(k * length_m, kh, theta, 90.0))
    return (s.d_max, (s.theta_max_deg,), s.hpbw_deg, theta, cut,
            "theta from the zenith in the vertical plane broadside to the wire")


def _finite(v):
    v = float(v)
    return v if math.isfinite(v) else None


def predict(length_m, radius_m, material, where, f_hz, f_table_hz, z0_ohm) -> dict:
    """All figures of the command as plain data (no printing)."""
    f_res = _resonance_hz(length_m, radius_m, where)
    if f_hz is None:
        if f_res is None:
            raise InputError("no series resonance found near the half-wave length: give --freq")
        f_hz = f_res
    if f_table_hz is None:
        f_table_hz = np.linspace(0.9 * f_hz, 1.1 * f_hz, DEFAULT_TABLE_POINTS)
    f_all = np.concatenate(([f_hz], f_table_hz))
    z_rad = inst.installed_impedance(f_all, length_m, radius_m, where)
    r_loss = loss.installed_conductor_loss_ohm(f_all, length_m, radius_m, where, material)
    z = z_rad + r_loss
    gam = gamma_from_impedance(z, z0_ohm)
    eff = loss.radiation_efficiency(z_rad.real[0], r_loss[0])
    d_max, t_max, hpbw, theta, cut, cut_axis = _directivity(f_hz, length_m, where)
    notes = list(loss.material_notes(f_all, radius_m, material))
    notes.append("grounds are perfect and infinite; pattern from the sinusoidal current")
    if where.kind == "horizontal":
        notes.append("conductor loss uses the free-space current distribution")
    return {
        "antenna": {"install": where.kind, "length_m": length_m, "radius_m": radius_m,
                    "diameter_m": 2 * radius_m, "height_m": where.height_m,
                    "material": material.name, "conductivity_s_per_m": material.conductivity_s_per_m,
                    "relative_permeability": material.relative_permeability},
        "z0_ohm": z0_ohm,
        "resonant_frequency_hz": f_res,
        "frequency_hz": f_hz,
        "r_ohm": float(z.real[0]), "x_ohm": float(z.imag[0]),
        "r_radiation_ohm": float(z_rad.real[0]), "r_loss_ohm": float(r_loss[0]),
        "vswr": _finite(vswr_from_gamma(gam[0])),
        "return_loss_db": _finite(return_loss_db(gam[0])),
        "directivity_dbi": float(pattern.to_dbi(d_max)),
        "theta_max_deg": list(t_max),
        "radiation_efficiency": float(eff),
        "gain_dbi": float(loss.gain_dbi(eff, d_max)),
        "realized_gain_dbi": float(loss.realized_gain_dbi(eff, d_max, gam[0])),
        "hpbw_deg": _finite(hpbw),
        "pattern_cut": {"axis": cut_axis, "theta_deg": theta.tolist(),
                        "directivity_dbi": [_finite(v) for v in cut]},
        "table": {"f_hz": f_table_hz.tolist(), "r_ohm": z.real[1:].tolist(),
                  "x_ohm": z.imag[1:].tolist(),
                  "vswr": [_finite(v) for v in vswr_from_gamma(gam[1:])],
                  "return_loss_db": [_finite(v) for v in return_loss_db(gam[1:])]},
        "notes": notes,
    }


def _write_csv(path: str, table: dict) -> None:
    cols = ("f_hz", "r_ohm", "x_ohm", "vswr", "return_loss_db")
    try:
        with open(path, "w", newline="") as fh:
            w = csv.writer(fh)
            w.writerow(cols)
            for row in zip(*(table[c] for c in cols)):
                w.writerow(["inf" if v is None else repr(float(v)) for v in row])
    except OSError as exc:
        raise InputError(f"cannot write the table: {exc.strerror}; choose a writable path", path) from None


def _fmt(v, spec, unit=""):
    return "n/a" if v is None else f"{v:{spec}}{unit}"


def _print_text(r: dict) -> None:
    a = r["antenna"]
    what = {"free": "dipole in free space", "monopole": "monopole over perfect ground"}.get(
        a["install"]) or f"horizontal dipole {a['height_m']:.4g} m over perfect ground"
    size = "height" if a["install"] == "monopole" else "length"
    print(f"{what}: {size} {a['length_m'] * 1e3:.1f} mm, wire {a['diameter_m'] * 1e3:.3g} mm {a['material']}")
    fr = r["resonant_frequency_hz"]
    print(f"  first series resonance (X = 0)  {format_frequency(fr) if fr else 'not found'}")
    print(f"  at {format_frequency(r['frequency_hz'])}, against {r['z0_ohm']:g} ohm:")
    print(f"    impedance              {r['r_ohm']:.2f} {'+' if r['x_ohm'] >= 0 else '-'} "
          f"j{abs(r['x_ohm']):.2f} ohm  (loss {r['r_loss_ohm']:.3g} ohm)")
    print(f"    VSWR                   {_fmt(r['vswr'], '.2f')}")
    print(f"    return loss            {_fmt(r['return_loss_db'], '.2f', ' dB')}")
    dirs = ", ".join(f"{t:.1f}" for t in r["theta_max_deg"])
    print(f"    directivity            {r['directivity_dbi']:.2f} dBi  (maximum at theta {dirs} deg)")
    print(f"    radiation efficiency   {100 * r['radiation_efficiency']:.2f} %")
    print(f"    gain                   {r['gain_dbi']:.2f} dBi")
    print(f"    realized gain          {r['realized_gain_dbi']:.2f} dBi")
    print(f"    half-power beamwidth   {_fmt(r['hpbw_deg'], '.1f', ' deg')}")
    cut = r["pattern_cut"]
    print(f"  pattern cut, directivity in dBi ({cut['axis']}):")
    for t, d in zip(cut["theta_deg"], cut["directivity_dbi"]):
        print(f"    {t:5.0f} deg  {'null' if d is None else f'{d:7.2f}'}")
    for n in r["notes"]:
        print(f"  note: {n}")


def run(args: argparse.Namespace) -> int:
    length_m = parse_length_m(args.length, "--length")
    radius_m = 0.5 * parse_length_m(args.diameter, "--diameter")
    cladding = parse_length_m(args.cladding, "--cladding") if args.cladding is not None else None
    material = materials.get_material(args.material, cladding_m=cladding)
    where = _installation(args)
    if not (math.isfinite(args.z0) and args.z0 > 0):
        raise InputError(f"--z0 must be a positive impedance in ohm; got {args.z0!r}")
    mom.check_geometry(_wire_length(length_m, where), radius_m,
                       "image dipole" if where.kind == "monopole" else "dipole")
    f_hz = parse_frequency_hz(args.freq, "--freq") if args.freq is not None else None
    table = _parse_span(args.span) if args.span is not None else None
    result = predict(length_m, radius_m, material, where, f_hz, table, float(args.z0))
    if args.csv:
        _write_csv(args.csv, result["table"])
    if args.json:
        emit_json(result)
    else:
        _print_text(result)
    return 0
