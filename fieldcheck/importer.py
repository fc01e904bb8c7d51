"""Read a sweep file of any supported kind into a :class:`~fieldcheck.sweep.Sweep`.

:func:`read_sweep` picks the reader from the file extension.  The helpers below
are shared by the Touchstone and CSV readers: safe opening (size limit, binary
refusal, Latin-1 fallback), strict number parsing, and the checks every sweep
gets whatever its format (duplicate and unsorted frequencies, too few points,
|S11| above one, non-uniform grid).  Each check either raises an
:class:`~fieldcheck.errors.InputError` naming the file and line or leaves a
visible note on the sweep; nothing is fixed silently.
"""

from __future__ import annotations

import os
import re
from dataclasses import replace

import numpy as np

from .errors import InputError
from .sweep import Sweep
from .units import format_frequency

#: Largest file we open, bytes.  A 2,000,000-point two-port sweep in RI takes
#: about 400 bytes a point in Touchstone, so 200 MB covers real bench files while
#: refusing files that would exhaust memory (our limit, no source).
MAX_FILE_BYTES = 200_000_000
#: Largest number of frequency points accepted (our limit, no source; bench VNAs
#: sweep at most a few tens of thousands of points).
MAX_POINTS = 2_000_000
#: Fewest points a sweep may have: a resonance fit needs more points than its
#: parameters (common practice, no source).
MIN_POINTS = 5
#: |S11| above one by more than this is reported: calibration residuals on a
#: near-total reflection commonly leave |S11| a percent or two above 1, and a
#: passive antenna can never exceed 1 (common practice, no source).
GAMMA_MAG_TOLERANCE = 1.02

TOUCHSTONE_EXT_RE = re.compile(r"\.(s\d+p|ts)$", re.IGNORECASE)
CSV_EXTENSIONS = (".csv", ".txt")

# A decimal number as VNAs write it: no NaN/inf, no digit separators.
_NUMBER_RE = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_NONFINITE_RE = re.compile(r"[+-]?(?:nan|inf|infinity)", re.IGNORECASE)


def read_sweep(path, *, port=None, assume_defaults=False, csv_format=None,
               csv_freq_unit=None, z0_ohm=None) -> Sweep:
    """Read a one-port sweep from a Touchstone or CSV file, chosen by extension.

    Parameters
    ----------
    path : str or os.PathLike
        ``.s1p``, ``.s2p``, ``.sNp`` or ``.ts`` (Touchstone), ``.csv`` or ``.txt`` (CSV).
    port : int, optional
        For an n-port Touchstone file, the 1-based port that faced the antenna.
    assume_defaults : bool
        Accept a Touchstone file without an option line (GHz, MA, S, 50 ohm), with a note.
    csv_format : {'ri', 'db', 'ma'}, optional
        CSV only: value columns are real/imag, dB/angle or magnitude/angle.
    csv_freq_unit : {'hz', 'khz', 'mhz', 'ghz'}, optional
        CSV only: unit of the frequency column.
    z0_ohm : float, optional
        CSV only: reference impedance in ohm (default 50 ohm, with a note).

    Returns
    -------
    Sweep

    Raises
    ------
    InputError
        Unknown extension, or anything the format readers refuse.
    """
    path = os.fspath(path)
    name = os.path.basename(path).lower()
    if TOUCHSTONE_EXT_RE.search(name):
        from .touchstone import read_touchstone

        return read_touchstone(path, port=port, assume_defaults=assume_defaults)
    if name.endswith(CSV_EXTENSIONS):
        from .csvimport import read_csv

        return read_csv(path, csv_format=csv_format, freq_unit=csv_freq_unit, z0_ohm=z0_ohm)
    raise InputError(
        "unknown file type: accepted extensions are .s1p, .s2p, .sNp, .ts (Touchstone) "
        "and .csv, .txt (CSV with a header line); rename the file or export it in one of these",
        path,
    )


# ---- opening files -----------------------------------------------------------
class TextLines:
    """Iterate ``(line_number, text)`` over a checked text file, one line at a time.

    The file is refused before reading if it is missing, a directory, larger
    than :data:`MAX_FILE_BYTES`, empty or binary.  Lines end at LF, CRLF or CR.
    A line that is not UTF-8 is decoded as Latin-1 and :attr:`used_latin1` set,
    so the reader can leave a note.
    """

    def __init__(self, path: str):
        self.path = path
        self.used_latin1 = False
        if not os.path.exists(path):
            raise InputError("no such file: check the path and the current directory", path)
        if os.path.isdir(path):
            raise InputError("this is a directory, not a sweep file: name a file inside it", path)
        size = os.path.getsize(path)
        if size > MAX_FILE_BYTES:
            raise InputError(
                f"file is {size / 1e6:.0f} MB, larger than the {MAX_FILE_BYTES / 1e6:.0f} MB "
                "limit: export fewer points or a narrower span", path)
        if size == 0:
            raise InputError("file is empty: export the sweep again", path)
        try:
            with open(path, "rb") as fh:
                head = fh.read(4096)
        except OSError as exc:
            raise InputError(f"cannot read the file ({exc.strerror}): check its permissions",
                             path) from exc
        if b"\x00" in head:
            raise InputError("this is a binary file, not a text sweep: export the sweep as "
                             "Touchstone or CSV text", path)

    def __iter__(self):
        lineno = 0
        with open(self.path, "rb") as fh:
            for raw in fh:
                if lineno == 0 and raw.startswith(b"\xef\xbb\xbf"):
                    raw = raw[3:]  # UTF-8 byte-order mark
                for piece in raw.splitlines() or [b""]:
                    lineno += 1
                    try:
                        text = piece.decode("utf-8")
                    except UnicodeDecodeError:
                        text = piece.decode("latin-1")
                        self.used_latin1 = True
                    yield lineno, text

    def latin1_note(self) -> tuple[str, ...]:
        if not self.used_latin1:
            return ()
        return ("file is not valid UTF-8; read as Latin-1 (ISO 8859-1)",)


# ---- numbers -----------------------------------------------------------------
def parse_number(token: str, path: str, line: int, what: str = "value") -> float:
    """Parse one decimal number strictly; NaN, infinity and anything else are refused."""
    if _NUMBER_RE.fullmatch(token):
        return float(token)
    if _NONFINITE_RE.fullmatch(token):
        raise InputError(
            f"{what} is {token!r}: NaN or infinity is not a measurement; re-export the sweep "
            "or delete this point", path, line)
    raise InputError(f"{what} {token!r} is not a number: fix or delete this line", path, line)


# ---- checks common to every format -------------------------------------------
def order_points(f_hz: np.ndarray, lines: np.ndarray, path: str) -> tuple[np.ndarray, tuple[str, ...]]:
    """Check the frequency column and return the sorting order plus notes.

    Parameters
    ----------
    f_hz : array of float, shape (n,)
        Frequencies in Hz, in file order, all positive and finite.
    lines : array of int, shape (n,)
        1-based line number of each point.
    path : str
        File name for messages.

    Returns
    -------
    order : array of int
        Indices that sort the points by frequency.
    notes : tuple of str
        A note when the file was not in increasing order.

    Raises
    ------
    InputError
        Fewer than :data:`MIN_POINTS` points, or two points at the same frequency.
    """
    n = f_hz.size
    if n == 0:
        raise InputError("no data lines: the file holds no sweep points", path)
    if n < MIN_POINTS:
        raise InputError(
            f"only {n} frequency point{'s' if n != 1 else ''}; at least {MIN_POINTS} are needed "
            "for a fit: sweep more points", path)
    order = np.argsort(f_hz, kind="stable")
    fs = f_hz[order]
    same = np.flatnonzero(np.diff(fs) == 0)
    if same.size:
        a, b = sorted((int(lines[order[same[0]]]), int(lines[order[same[0] + 1]])))
        raise InputError(
            f"frequency {format_frequency(fs[same[0]])} appears twice (lines {a} and {b}): "
            "delete one of the two points", path, b)
    notes = ()
    back = np.flatnonzero(np.diff(f_hz) < 0)
    if back.size:
        notes = (f"frequencies were not in increasing order (first step back at line "
                 f"{int(lines[back[0] + 1])}); points sorted by frequency",)
    return order, notes


def reflection_note(s: np.ndarray, f_hz: np.ndarray, lines: np.ndarray, label: str = "S11") -> tuple[str, ...]:
    """A note when |S| exceeds :data:`GAMMA_MAG_TOLERANCE` anywhere (arrays in sorted order)."""
    mag = np.abs(s)
    bad = np.flatnonzero(mag > GAMMA_MAG_TOLERANCE)
    if not bad.size:
        return ()
    k = bad[np.argmax(mag[bad])]
    return (f"|{label}| > {GAMMA_MAG_TOLERANCE} at {bad.size} point(s), up to {mag[k]:.3f} at "
            f"{format_frequency(f_hz[k])} (line {int(lines[k])}): calibration problem or "
            "active device",)


def grid_note(sweep: Sweep) -> Sweep:
    """Add a note to a sweep whose frequency steps are not uniform."""
    if sweep.is_uniform:
        return sweep
    d = sweep.step_hz
    return replace(sweep, notes=sweep.notes + (
        f"non-uniform frequency grid (steps from {format_frequency(d.min())} to "
        f"{format_frequency(d.max())}); time-domain results would be wrong",))
