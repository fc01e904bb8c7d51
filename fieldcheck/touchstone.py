"""Strict reading of Touchstone files (versions 1.0, 1.1, 2.0 and 2.1) and plain v1 writing.

With :mod:`fieldcheck.touchstone_check`, the only module that knows the
Touchstone format.  Every line is checked there against the Touchstone File
Format Specification (IBIS Open Forum, version 2.0 of 2009 and version 2.1 of
2024) before the numbers are handed here, as a checked and normalised copy, to
scikit-rf's reader (``skrf.io.touchstone``), which does the format conversions
(RI/MA/DB, Z/Y to S, two-port data order).

scikit-rf's reader alone is lenient (a missing option line silently means GHz,
MA, 50 ohm; NaN, R <= 0, unsorted or duplicate frequencies pass; a wrong column
count gives an opaque numpy message), and the ``skrf.Network`` constructor,
given a file name, tries to unpickle the file first, so it never sees a
user's file.
"""

from __future__ import annotations

import io
import os
import warnings
from dataclasses import dataclass

import numpy as np

from .errors import InputError
from .importer import MAX_POINTS, TextLines, grid_note, order_points, reflection_note
from .sweep import Sweep
from .touchstone_check import UNIT_SCALE, Scanner


@dataclass(frozen=True)
class TouchstoneData:
    """A checked Touchstone file.

    Parameters
    ----------
    network : skrf.Network
        The whole n-port network, frequencies in Hz, sorted increasing.
    path : str
        The file read.
    version : str
        ``'1.0'`` or the file's ``[Version]`` (``'2.0'``, ``'2.1'``).
    n_ports : int
        Number of ports.
    lines : ndarray of int
        1-based line where each (sorted) frequency point starts.
    comments : tuple of str
        Comment text of the file, in order, without the ``!``.
    notes : tuple of str
        Visible handling applied to the whole file.
    port_notes : tuple of tuple of str
        Notes about the reflection at each port (|Sii| above one).
    """

    network: object
    path: str
    version: str
    n_ports: int
    lines: np.ndarray
    comments: tuple[str, ...]
    notes: tuple[str, ...]
    port_notes: tuple[tuple[str, ...], ...]


def read_touchstone(path, *, port=None, assume_defaults=False) -> Sweep:
    """Read the reflection at one port of a Touchstone file as a :class:`Sweep`.

    Parameters
    ----------
    path : str or os.PathLike
        ``.sNp`` or ``.ts`` file.
    port : int, optional
        1-based port that faced the antenna; required for files with two or more ports.
    assume_defaults : bool
        Accept a file without an option line using the standard's defaults
        (GHz, S, MA, R 50 ohm), with a note; otherwise such a file is refused.

    Returns
    -------
    Sweep
        S_pp referred to the port's reference resistance (ohm), with notes.

    Raises
    ------
    InputError
        Anything the strict check refuses, a missing ``port`` for an n-port
        file or a port number outside 1..n.
    """
    data = load_touchstone(path, assume_defaults=assume_defaults)
    n = data.n_ports
    if n > 1 and port is None:
        raise InputError(f"this is a {n}-port file: pass --port N (1 to {n}) to say which port "
                         "faced the antenna", data.path)
    if port is not None and not 1 <= int(port) <= n:
        raise InputError(f"port {port} does not exist: this file has {n} port"
                         f"{'s' if n > 1 else ''}; pass --port 1"
                         f"{f' to {n}' if n > 1 else ''}", data.path)
    p = int(port or 1) - 1
    net = data.network
    notes = data.notes + data.port_notes[p]
    if n > 1:
        notes += (f"reflection {_label(p, n)} at port {p + 1} of a {n}-port file",)
    sweep = Sweep(f_hz=net.f, s11=net.s[:, p, p], z0_ohm=float(net.z0[0, p].real),
                  source=data.path, comments=data.comments, notes=notes)
    return grid_note(sweep)


def read_network(path, *, assume_defaults=False):
    """Read a whole Touchstone file (any port count) as a ``skrf.Network`` after the strict check.

    Parameters
    ----------
    path : str or os.PathLike
        ``.sNp`` or ``.ts`` file.
    assume_defaults : bool
        As for :func:`read_touchstone`.

    Returns
    -------
    skrf.Network
        Frequencies in Hz, sorted.  Notes are available from :func:`load_touchstone`.
    """
    return load_touchstone(path, assume_defaults=assume_defaults).network


def load_touchstone(path, *, assume_defaults=False) -> TouchstoneData:
    """Check a Touchstone file line by line and read it; see :class:`TouchstoneData`."""
    path = os.fspath(path)
    reader = TextLines(path)
    scan = Scanner(path, assume_defaults, MAX_POINTS)  # read at call time: tests lower it
    for lineno, text in reader:
        scan.feed(lineno, text)
    scan.finish()
    values = np.array([r[1] for r in scan.records], dtype=np.float64)
    lines = np.array([r[0] for r in scan.records], dtype=np.int64)
    f_hz = values[:, 0] * UNIT_SCALE[scan.opt["unit"]]
    order, sort_notes = order_points(f_hz, lines, path)
    values, lines = values[order], lines[order]
    net = _skrf_read(scan, values)
    if not np.allclose(net.f, f_hz[order], rtol=1e-12, atol=0):  # pragma: no cover - a bug guard
        raise RuntimeError("scikit-rf read other frequencies than the strict check")
    n = scan.n_ports
    port_notes = tuple(reflection_note(net.s[:, p, p], net.f, lines, _label(p, n)) for p in range(n))
    notes = tuple(scan.notes) + sort_notes + reader.latin1_note()
    return TouchstoneData(network=net, path=path, version=scan.version or "1.0", n_ports=n,
                          lines=lines, comments=tuple(scan.comments), notes=notes,
                          port_notes=port_notes)


def _label(p: int, n: int) -> str:
    return f"S{p + 1}{p + 1}" if n < 10 else f"S{p + 1},{p + 1}"


def _skrf_read(scan: Scanner, values: np.ndarray):
    """Hand the checked, sorted records to scikit-rf's reader as a canonical file."""
    from skrf import Network

    o, n = scan.opt, scan.n_ports
    r_text = " ".join(repr(r) for r in o["r_ohm"])
    out = []
    if scan.version:
        out += [f"[Version] {scan.version}", f"# {o['unit']} {o['parameter']} {o['format']} "
                f"R {o['r_ohm'][0]!r}", f"[Number of Ports] {n}"]
        if n == 2:
            out.append(f"[Two-Port Data Order] {scan.two_port_order}")
        out += [f"[Number of Frequencies] {len(values)}", f"[Reference] {r_text}",
                f"[Matrix Format] {scan.matrix}", "[Network Data]"]
    else:
        out.append(f"# {o['unit']} {o['parameter']} {o['format']} R {r_text}")
    out += [" ".join(repr(v) for v in row) for row in values.tolist()]
    if scan.version:
        out.append("[End]")
    fid = io.StringIO("\n".join(out) + "\n")
    fid.name = "checked.ts" if scan.version else f"checked.s{n}p"
    net = Network()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # everything worth saying is already in our notes
        net.read_touchstone(fid)
    net.name = os.path.splitext(os.path.basename(scan.path))[0]
    return net


# ---- writing ---------------------------------------------------------------------

_UNIT_LABEL = {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz"}
_WRITE_FORMATS = ("RI", "MA", "DB")


def write_touchstone(sweep: Sweep, path, *, fmt: str = "RI", unit: str = "MHz",
                     comments=()) -> None:
    """Write a one-port sweep as a plain Touchstone v1 file (``.s1p``).

    Layout per the Touchstone File Format Specification (IBIS Open Forum, 2.0,
    version 1 syntax): ``!`` comment lines (the sweep's comments, then
    ``comments``), one option line ``# <unit> S <fmt> R <z0>``, then one line
    per frequency with two numbers (RI: real, imaginary; MA: magnitude, angle in
    degrees; DB: 20 log10 magnitude, angle in degrees), 12 significant digits.

    Parameters
    ----------
    sweep : Sweep
        Data to write.
    path : str or os.PathLike
        Output file (overwritten).
    fmt : {'RI', 'MA', 'DB'}
        Number format.
    unit : {'Hz', 'kHz', 'MHz', 'GHz'}
        Frequency unit (case-insensitive).
    comments : iterable of str
        Extra comment lines.

    Raises
    ------
    InputError
        Unknown format or unit, a zero S11 in DB format, or a file that cannot be written.
    """
    fmt_u = str(fmt).upper()
    if fmt_u not in _WRITE_FORMATS:
        raise InputError(f"unknown Touchstone format {fmt!r}: use RI, MA or DB")
    if str(unit).lower() not in _UNIT_LABEL:
        raise InputError(f"unknown frequency unit {unit!r}: use Hz, kHz, MHz or GHz")
    label, scale = _UNIT_LABEL[str(unit).lower()], UNIT_SCALE[str(unit).lower()]
    s = sweep.s11
    if fmt_u == "RI":
        a, b = s.real, s.imag
    else:
        mag = np.abs(s)
        if fmt_u == "DB" and np.any(mag == 0):
            raise InputError("an S11 of exactly 0 has no dB value: write RI or MA instead", str(path))
        a = mag if fmt_u == "MA" else 20.0 * np.log10(mag)
        b = np.degrees(np.angle(s))
    lines = [f"! {' '.join(str(c).splitlines())}" for c in (*sweep.comments, *comments)]
    lines.append(f"# {label} S {fmt_u} R {sweep.z0_ohm:.12g}")
    lines += [f"{fx:.12g} {x:.12g} {y:.12g}" for fx, x, y in zip(sweep.f_hz / scale, a, b)]
    try:
        with open(path, "w", encoding="utf-8", newline="\n") as fh:
            fh.write("\n".join(lines) + "\n")
    except OSError as exc:
        raise InputError(f"cannot write the sweep ({exc.strerror}): check the directory and "
                         "permissions", str(path)) from None
