"""Strict reading of a plain CSV sweep: a frequency column and S11 as two columns.

The value columns are real/imaginary, dB/angle or magnitude/angle, chosen from
the header names ("Freq(MHz)", "frequency_hz", "S11 re", "Re(S11)", "S11 dB",
"S11 phase deg", "mag", "ang", ...) or by the ``csv_format`` option.  The
delimiter (comma, semicolon, tab, else white space) is taken from the header
line.  Lines starting with ``#`` or ``!`` are comments.  Bad values are refused
with their line number, exactly as for Touchstone files.
"""

from __future__ import annotations

import csv
import os
import re

import numpy as np

from .errors import InputError
from .importer import (MAX_POINTS, TextLines, grid_note, order_points, parse_number,
                       reflection_note)
from .sweep import Sweep

_UNIT_SCALE = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
#: Unit-less frequencies are read as Hz only when all are at least this large:
#: read as kHz they would put a wire antenna above 1 GHz (our rule, no source).
HZ_WITHOUT_UNIT_MIN = 1e6

_FREQ_WORDS = {"f", "freq", "frequency", "frequencies"}
_RE_WORDS = {"re", "real"}
_IM_WORDS = {"im", "imag", "imaginary"}
_DB_WORDS = {"db", "logmag"}
_ANG_WORDS = {"ang", "angle", "phase", "arg", "phi", "deg", "degree", "degrees", "rad",
              "radian", "radians"}
_MAG_WORDS = {"mag", "magnitude", "lin", "linmag", "abs"}
_NEEDS = {"ri": ("re", "im"), "db": ("db", "ang"), "ma": ("mag", "ang")}
_HEADER_HELP = ("name the columns e.g. 'Freq(MHz),S11 re,S11 im', 'frequency_hz;S11 dB;"
                "S11 phase deg' or 'freq_hz,mag,ang', or pass --csv-format ri|db|ma")


def read_csv(path, *, csv_format=None, freq_unit=None, z0_ohm=None) -> Sweep:
    """Read a one-port sweep from a CSV file.

    Parameters
    ----------
    path : str or os.PathLike
        The CSV file.
    csv_format : {'ri', 'db', 'ma'}, optional
        Value columns are real/imag, dB/angle (dB = 20 log10 |S11|) or linear
        magnitude/angle; default: from the header names.
    freq_unit : {'hz', 'khz', 'mhz', 'ghz'}, optional
        Unit of the frequency column when its header does not say.
    z0_ohm : float, optional
        Reference impedance of S11 in ohm; default 50 ohm, with a note.

    Returns
    -------
    Sweep

    Raises
    ------
    InputError
        Unrecognised columns, ambiguous frequency unit, non-numeric or
        non-finite values, wrong column counts, duplicate frequencies, too few
        points; the message names the file and line.
    """
    path = os.fspath(path)
    if csv_format is not None and csv_format not in _NEEDS:
        raise InputError(f"csv format {csv_format!r}: use ri, db or ma", path)
    if freq_unit is not None and freq_unit.lower() not in _UNIT_SCALE:
        raise InputError(f"frequency unit {freq_unit!r}: use hz, khz, mhz or ghz", path)
    notes: list[str] = []
    if z0_ohm is None:
        z0_ohm = 50.0
        notes.append("reference impedance not given: 50 ohm assumed (pass --z0 otherwise)")
    elif not (np.isfinite(z0_ohm) and z0_ohm > 0):
        raise InputError(f"reference impedance {z0_ohm} ohm: it must be positive", path)

    reader = TextLines(path)
    comments: list[str] = []
    layout = None
    rows, lines = [], []
    decimal_comma = False
    last_comment = None
    for lineno, text in reader:
        stripped = text.strip()
        if not stripped:
            continue
        if stripped[0] in "#!":
            if stripped[1:].strip():
                comments.append(stripped[1:].strip())
                last_comment = (lineno, stripped[1:].strip())
            continue
        if layout is None:
            layout = _header_from_comment(path, last_comment, stripped, csv_format, freq_unit)
            if layout is not None:
                notes.append(f"column names taken from the comment on line {layout.line}")
            else:
                layout = _Layout(path, lineno, stripped, csv_format, freq_unit)
            if layout.has_header and layout.line == lineno:
                continue
        fields = layout.split(stripped)
        if len(fields) != layout.n_columns:
            raise InputError(f"{len(fields)} columns on this line but {layout.n_columns} in the "
                             f"{'header' if layout.has_header else 'first line'} (line "
                             f"{layout.line}): fix the line or the delimiter", path, lineno)
        vals = []
        for col, what in zip(layout.columns, ("frequency", "first value", "second value")):
            tok = fields[col]
            if layout.delimiter in (";", "\t") and re.fullmatch(r"[+-]?\d+,\d*(?:[eE][+-]?\d+)?", tok):
                tok, decimal_comma = tok.replace(",", "."), True
            vals.append(parse_number(tok, path, lineno, what))
        if vals[0] <= 0:
            raise InputError(f"frequency {fields[layout.columns[0]]} is not positive: delete "
                             "this point or fix the frequency unit", path, lineno)
        if layout.format == "ma" and vals[1] < 0:
            raise InputError(f"magnitude {vals[1]} is negative: check the column format "
                             "(--csv-format)", path, lineno)
        rows.append(vals)
        lines.append(lineno)
        if len(rows) > MAX_POINTS:
            raise InputError(f"more than {MAX_POINTS:,} frequency points: export fewer",
                             path, lineno)
    if layout is None:
        raise InputError("no header and no data lines: export the sweep again", path)
    data = np.array(rows, dtype=np.float64).reshape(-1, 3)
    line_arr = np.array(lines, dtype=np.int64)
    scale, unit_note = layout.frequency_scale(data[:, 0])
    f_hz = data[:, 0] * scale
    order, sort_notes = order_points(f_hz, line_arr, path)
    data, f_hz, line_arr = data[order], f_hz[order], line_arr[order]
    s11 = layout.to_complex(data[:, 1], data[:, 2])
    notes += list(unit_note) + list(layout.notes) + list(sort_notes)
    if decimal_comma:
        notes.append("decimal commas read as decimal points")
    notes += list(reflection_note(s11, f_hz, line_arr)) + list(reader.latin1_note())
    sweep = Sweep(f_hz=f_hz, s11=s11, z0_ohm=z0_ohm, source=path, comments=tuple(comments),
                  notes=tuple(notes))
    return grid_note(sweep)


def _words(name: str) -> list[str]:
    """Lower-case words of a column name with 'S11' taken out ('ReS11' -> ['re'])."""
    low = name.lower().replace("log mag", "logmag").replace("lin mag", "linmag")
    return re.findall(r"[a-z]+", re.sub(r"s11", " ", low))


def _role(name: str) -> tuple[str | None, str | None]:
    """Role of a column (freq, re, im, db, ang, mag, other or None) and any unit word."""
    low = name.lower()
    words = _words(name)
    unit = next((w for w in words if w in _UNIT_SCALE), None)
    if re.search(r"s(21|12|22)", low):
        return "other", None
    if "return" in words and "loss" in words:
        return "return loss", None
    if set(words) & _FREQ_WORDS:
        return "freq", unit
    if set(words) & _DB_WORDS:
        return "db", None
    if set(words) & _ANG_WORDS:
        return "ang", ("rad" if set(words) & {"rad", "radian", "radians"} else
                       "deg" if set(words) & {"deg", "degree", "degrees"} else None)
    if set(words) & _RE_WORDS:
        return "re", None
    if set(words) & _IM_WORDS:
        return "im", None
    if set(words) & _MAG_WORDS or (not words and "|" in name):
        return "mag", None
    return None, None


def _header_from_comment(path, last_comment, first_line, csv_format, freq_unit):
    """Some instruments write the column names as a comment (``# Frequency(Hz), ...``).

    Used only when the first content line is all numbers, the comment has the
    same number of fields, and it reads as a header; otherwise None.
    """
    if last_comment is None or not re.fullmatch(r"[\d\s.,;eE+\t-]+", first_line):
        return None
    lineno, text = last_comment
    try:
        layout = _Layout(path, lineno, text, csv_format, freq_unit)
    except InputError:
        return None
    if not layout.has_header or len(layout.split(first_line)) != layout.n_columns:
        return None
    return layout


class _Layout:
    """Delimiter, column roles, format and units decided from the first content line."""

    def __init__(self, path, lineno, text, csv_format, freq_unit):
        self.path, self.line = path, lineno
        self.delimiter = "\t" if "\t" in text else ";" if ";" in text else "," if "," in text else None
        fields = self.split(text)
        self.n_columns = len(fields)
        self.has_header = any(not re.fullmatch(r"[+-]?[\d.,eE+-]+", f) for f in fields if f)
        self.notes: list[str] = []
        self.freq_unit = freq_unit.lower() if freq_unit else None
        self.angle_unit = "deg"
        if not self.has_header:
            if csv_format is None or freq_unit is None:
                raise self._err("no header line: add one, e.g. 'frequency_hz,S11 re,S11 im', or "
                                "pass both --csv-format and --csv-freq-unit")
            self._positional(csv_format, fields)
            return
        roles = [_role(f) for f in fields]
        if any(r == "return loss" for r, _ in roles):
            raise self._err("a return-loss column has no agreed sign: export S11 in dB "
                            "(20 log10 |S11|, negative for a passive load) with its phase")
        found = {}
        for i, (role, _) in enumerate(roles):
            if role in (None, "other"):
                continue
            if role in found:
                raise self._err(f"two columns look like {role!r} ({fields[found[role]]!r} and "
                                f"{fields[i]!r}): keep one, or {_HEADER_HELP}")
            found[role] = i
        fmt = [k for k, need in _NEEDS.items() if all(r in found for r in need)]
        if csv_format is not None:
            if "freq" in found and all(r in found for r in _NEEDS[csv_format]):
                fmt = [csv_format]
            elif self.n_columns == 3 and not (set(found) - {"freq"}):
                self._positional(csv_format, fields)
                self.notes.append(f"columns {fields[1]!r}, {fields[2]!r} read as "
                                  f"{csv_format.upper()} by position (--csv-format)")
                self._unit_from_header(roles[0][1])
                return
            else:
                raise self._err(f"--csv-format {csv_format} but the header has no matching "
                                f"columns: {_HEADER_HELP}")
        if "freq" not in found:
            raise self._err(f"no frequency column in the header: {_HEADER_HELP}")
        if len(fmt) != 1:
            what = "no S11 value columns recognised" if not fmt else "columns fit several formats"
            raise self._err(f"{what} in the header {text!r}: {_HEADER_HELP}")
        self.format = fmt[0]
        self.columns = (found["freq"],) + tuple(found[r] for r in _NEEDS[self.format])
        self._unit_from_header(roles[found["freq"]][1])
        if "ang" in found:
            unit = roles[found["ang"]][1]
            self.angle_unit = unit or "deg"
            if unit is None:
                self.notes.append("angle column does not say deg or rad: degrees assumed")

    def _err(self, message):
        return InputError(message, self.path, self.line)

    def _positional(self, csv_format, fields):
        if self.n_columns != 3:
            raise self._err(f"{self.n_columns} columns: without recognised header names the "
                            "file needs exactly 3 (frequency and two values)")
        self.format, self.columns = csv_format, (0, 1, 2)

    def _unit_from_header(self, header_unit):
        if header_unit and self.freq_unit and header_unit != self.freq_unit:
            raise self._err(f"the header says {header_unit} but --csv-freq-unit says "
                            f"{self.freq_unit}: drop the option or fix the header")
        self.freq_unit = header_unit or self.freq_unit

    def split(self, text: str) -> list[str]:
        if self.delimiter is None:
            fields = text.split()
        else:
            fields = [f.strip() for f in next(csv.reader([text], delimiter=self.delimiter))]
        while fields and fields[-1] == "":
            fields.pop()  # spreadsheets add trailing delimiters
        return fields

    def frequency_scale(self, f: np.ndarray) -> tuple[float, tuple[str, ...]]:
        """Hz per unit of the frequency column, refusing an ambiguous unit."""
        if self.freq_unit:
            return _UNIT_SCALE[self.freq_unit], ()
        if f.size and f.min() >= HZ_WITHOUT_UNIT_MIN:
            return 1.0, (f"frequency unit not given; values of at least "
                         f"{HZ_WITHOUT_UNIT_MIN:g} read as Hz",)
        raise self._err("the frequency unit is not given and the values could be Hz, kHz, MHz "
                        "or GHz: pass --csv-freq-unit hz|khz|mhz|ghz or write the unit in the "
                        "header, e.g. 'Freq(MHz)'")

    def to_complex(self, a: np.ndarray, b: np.ndarray) -> np.ndarray:
        """S11 from the two value columns (dB = 20 log10 |S|, Touchstone spec 2.0 'Option Line')."""
        if self.format == "ri":
            return a + 1j * b
        ang = b if self.angle_unit == "rad" else np.deg2rad(b)
        mag = 10.0 ** (a / 20.0) if self.format == "db" else a
        return mag * np.exp(1j * ang)
