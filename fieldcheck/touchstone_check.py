"""The line-by-line strict check of a Touchstone file (versions 1.0, 1.1, 2.0, 2.1).

:class:`Scanner` is fed the file one line at a time and checks each against
the Touchstone File Format Specification (IBIS Open Forum, version 2.0 of
2009 and version 2.1 of 2024): option line, version 2 keywords, data layout
and counts.  It collects the records, comments and notes that
:func:`fieldcheck.touchstone.load_touchstone` hands to scikit-rf.  Errors are
:class:`~fieldcheck.errors.InputError` naming the file and line.
"""

from __future__ import annotations

import re

from .errors import InputError
from .importer import MAX_POINTS, parse_number

# Option line vocabulary and defaults: Touchstone File Format Specification 2.0,
# section "Option Line" (defaults GHz, S, MA, R 50).
UNIT_SCALE = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_PARAMETERS = ("s", "y", "z", "g", "h")
_FORMATS = ("ri", "ma", "db")
_DEFAULTS = {"unit": "ghz", "parameter": "s", "format": "ma", "r_ohm": (50.0,)}
_OPTION_HELP = ("an option line is '#', a frequency unit (Hz, kHz, MHz, GHz), a parameter "
                "(S, Y, Z), a format (RI, MA, DB) and 'R' with the reference resistance, "
                "in any order, e.g. '# MHz S RI R 50'")
_KEYWORD_RE = re.compile(r"\[([^\]]*)\]\s*(.*)")
_INT_RE = re.compile(r"\d+")


class Scanner:
    """Line-by-line state machine of the strict check (one instance per file).

    Call :meth:`feed` with each (1-based line number, line text), then
    :meth:`finish`.  The result is in ``records`` (first line, numbers) in file
    order, ``opt`` (option line, R replaced by ``[Reference]``), ``n_ports``,
    ``version`` (None for version 1), ``two_port_order``, ``matrix``,
    ``comments`` and ``notes``.
    """

    def __init__(self, path: str, assume_defaults: bool, max_points: int = MAX_POINTS):
        self.path = path
        self.assume_defaults = assume_defaults
        self.max_points = max_points  # frequency points accepted
        m = re.search(r"\.s(\d+)p$", path, re.IGNORECASE)
        self.ext_ports = int(m.group(1)) if m else None
        self.n_ports = self.ext_ports
        self.version = None
        self.opt = None
        self.seen_content = False
        self.section = "header"  # header, network, noise, info, end
        self.two_port_order = None
        self.n_freq = self.n_freq_line = None
        self.reference = None
        self.ref_missing = 0
        self.ref_line = None
        self.matrix = "full"
        self.records: list[tuple[int, list[float]]] = []
        self.cur = None  # [first line, values, index of next layout line]
        self.last_data_line = None
        self.noise_from = None
        self.data_started = False
        self.comments: list[str] = []
        self.notes: list[str] = []

    # ---- dispatch ------------------------------------------------------------
    def feed(self, lineno: int, text: str) -> None:
        code, bang, comment = text.partition("!")
        if bang and comment.strip():
            self.comments.append(comment.strip())
        code = code.strip()
        if not code:
            return
        if self.section == "info":
            if code.lower().replace(" ", "").startswith("[endinformation]"):
                self.section = "header"
            return
        if self.ref_missing and code[0] not in "[#":
            self._reference_values(lineno, code.split())
        elif code[0] == "[":
            self._keyword(lineno, code)
        elif code[0] == "#":
            self._option_line(lineno, code)
        else:
            self._data(lineno, code)
        self.seen_content = True

    def _err(self, message: str, line: int | None = None):
        return InputError(message, self.path, line)

    # ---- option line ---------------------------------------------------------
    def _option_line(self, lineno: int, code: str) -> None:
        opt = self._parse_options(lineno, code[1:].split())
        if self.opt is not None:
            if self.opt.get("line") is None:
                raise self._err("option line after the data: move it above the first data line",
                                lineno)
            if {k: opt[k] for k in _DEFAULTS} != {k: self.opt[k] for k in _DEFAULTS}:
                raise self._err(f"a second option line that disagrees with the first (line "
                                f"{self.opt['line']}): delete the wrong one", lineno)
            return
        if self.section != "header":
            raise self._err("option line inside the data: move it above [Network Data]", lineno)
        self.opt = opt

    def _parse_options(self, lineno: int, tokens: list[str]) -> dict:
        opt = {"line": lineno}
        i = 0
        while i < len(tokens):
            tok, low = tokens[i], tokens[i].lower()
            key = ("unit" if low in UNIT_SCALE else "parameter" if low in _PARAMETERS
                   else "format" if low in _FORMATS else "r_ohm" if low == "r" else None)
            if key is None:
                kind = ("frequency unit" if low.endswith("hz") else "data format" if len(low) == 2
                        else "parameter type" if len(low) == 1 else "option")
                raise self._err(f"unknown {kind} {tok!r} in the option line: {_OPTION_HELP}", lineno)
            if key in opt:
                raise self._err(f"the option line gives the {key.replace('_ohm', '')} twice "
                                f"({tok!r}): {_OPTION_HELP}", lineno)
            if key == "r_ohm":
                vals = []
                while i + 1 < len(tokens) and tokens[i + 1][:1] in "+-.0123456789":
                    i += 1
                    vals.append(parse_number(tokens[i], self.path, lineno, "reference resistance"))
                if not vals:
                    raise self._err(f"'R' without a value in the option line: {_OPTION_HELP}", lineno)
                self._check_resistances(vals, lineno)
                opt[key] = tuple(vals)
            else:
                opt[key] = low
            i += 1
        if opt.get("parameter") in ("g", "h"):
            raise self._err("hybrid (G or H) parameters cannot describe an antenna: export S "
                            "parameters", lineno)
        missing = [k for k in _DEFAULTS if k not in opt]
        for k in missing:
            opt[k] = _DEFAULTS[k]
        if missing:
            said = {"unit": "unit GHz", "parameter": "parameter S", "format": "format MA",
                    "r_ohm": "R 50 ohm"}
            self.notes.append(f"option line (line {lineno}) does not give "
                              f"{', '.join(said[k] for k in missing)}: the Touchstone default "
                              "is used")
        return opt

    def _check_resistances(self, vals: list[float], lineno: int) -> None:
        if any(v <= 0 for v in vals):
            raise self._err(f"reference resistance {min(vals)!r} ohm: it must be positive; "
                            "fix the 'R' value (usually 50)", lineno)

    def _need_options(self, lineno: int) -> None:
        """Called where data begins: refuse or accept the defaults if there was no option line."""
        if self.opt is None:
            if not self.assume_defaults:
                raise self._err("no option line (e.g. '# MHz S RI R 50') before the data: the "
                                "standard's defaults are GHz, MA, S, 50 ohm; add the line your "
                                "analyser meant, or pass --assume-defaults to accept those", lineno)
            self.opt = dict(_DEFAULTS, line=None)
            self.notes.append("no option line: Touchstone defaults GHz, S, MA, R 50 ohm assumed "
                              "(--assume-defaults)")
        n = self.n_ports
        if len(self.opt["r_ohm"]) not in (1, n):
            # Spec 2.1, "Option Line": one R, or one per port (version 1.1).
            raise self._err(f"the option line gives {len(self.opt['r_ohm'])} reference "
                            f"resistances for {n} port(s): give one, or one per port",
                            self.opt["line"])
        if self.opt["parameter"] in ("y", "z"):
            kind = self.opt["parameter"].upper()
            if n != 1:
                raise self._err(f"{kind} parameters of a {n}-port file are not accepted: export "
                                "S parameters", self.opt["line"])
            how = ("normalised by R, Touchstone 1.0" if self.version is None
                   else "in ohm, Touchstone 2.x")
            self.notes.append(f"{kind} parameters ({how}) converted to S11 referred to "
                              f"{self.opt['r_ohm'][0]:g} ohm")

    # ---- version 2 keywords -------------------------------------------------
    def _keyword(self, lineno: int, code: str) -> None:
        m = _KEYWORD_RE.fullmatch(code)
        if not m:
            raise self._err(f"unreadable keyword line {code!r}: a keyword looks like "
                            "'[Number of Ports] 1'", lineno)
        name, arg = " ".join(m.group(1).lower().split()), m.group(2).strip()
        if name == "version":
            if self.seen_content:
                raise self._err("[Version] must be the first line that is not a comment", lineno)
            if arg not in ("2.0", "2.1"):
                raise self._err(f"Touchstone version {arg!r} is not supported: versions 2.0 and "
                                "2.1 are (or remove [Version] for a version 1 file)", lineno)
            self.version = arg
            return
        if self.version is None:
            raise self._err(f"keyword [{m.group(1)}] in a file without [Version]: add "
                            "'[Version] 2.0' as the first line, or remove the keyword", lineno)
        if self.section == "end":
            raise self._err("text after [End]: delete it, or move [End] to the end", lineno)
        allowed = {"network": ("noise data", "end"), "noise": ("end",)}.get(self.section)
        if allowed is not None and name not in allowed:
            raise self._err(f"keyword [{m.group(1)}] inside the data: keywords other than "
                            "[Noise Data] and [End] go before [Network Data]", lineno)
        handler = {
            "number of ports": self._kw_ports, "two-port data order": self._kw_order,
            "number of frequencies": self._kw_nfreq, "reference": self._kw_reference,
            "matrix format": self._kw_matrix, "network data": self._kw_network,
            "noise data": self._kw_noise, "end": self._kw_end,
            "begin information": self._kw_info, "number of noise frequencies": lambda a, l: None,
        }.get(name)
        if name == "mixed-mode order":
            raise self._err("mixed-mode (differential) data is not accepted: export "
                            "single-ended S parameters", lineno)
        if handler is None:
            raise self._err(f"unknown keyword [{m.group(1)}]: see the Touchstone 2.0 "
                            "specification for the keywords", lineno)
        handler(arg, lineno)

    def _int_arg(self, arg: str, lineno: int, what: str) -> int:
        if not _INT_RE.fullmatch(arg) or int(arg) < 1:
            raise self._err(f"{what} must be a positive whole number, got {arg!r}", lineno)
        return int(arg)

    def _kw_ports(self, arg: str, lineno: int) -> None:
        n = self._int_arg(arg, lineno, "[Number of Ports]")
        if self.ext_ports is not None and n != self.ext_ports:
            raise self._err(f"[Number of Ports] says {n} but the file name ends in "
                            f".s{self.ext_ports}p: rename the file or fix the keyword", lineno)
        self.n_ports = n

    def _kw_order(self, arg: str, lineno: int) -> None:
        if arg not in ("12_21", "21_12"):
            raise self._err(f"[Two-Port Data Order] must be 12_21 or 21_12, got {arg!r}", lineno)
        self.two_port_order = arg

    def _kw_nfreq(self, arg: str, lineno: int) -> None:
        n = self._int_arg(arg, lineno, "[Number of Frequencies]")
        if n > self.max_points:
            raise self._err(f"[Number of Frequencies] {n} is more than the "
                            f"{self.max_points:,} points fieldcheck accepts: export fewer points",
                            lineno)
        self.n_freq, self.n_freq_line = n, lineno

    def _kw_reference(self, arg: str, lineno: int) -> None:
        if self.n_ports is None:
            raise self._err("[Reference] before [Number of Ports]: move it after", lineno)
        self.reference, self.ref_missing, self.ref_line = [], self.n_ports, lineno
        self._reference_values(lineno, arg.split())

    def _reference_values(self, lineno: int, tokens: list[str]) -> None:
        if len(tokens) > self.ref_missing:
            raise self._err(f"[Reference] needs one resistance per port ({self.n_ports}), "
                            "found more", lineno)
        vals = [parse_number(t, self.path, lineno, "reference resistance") for t in tokens]
        self._check_resistances(vals, lineno)
        self.reference += vals
        self.ref_missing -= len(vals)

    def _kw_matrix(self, arg: str, lineno: int) -> None:
        if arg.lower() not in ("full", "lower", "upper"):
            raise self._err(f"[Matrix Format] must be Full, Lower or Upper, got {arg!r}", lineno)
        self.matrix = arg.lower()

    def _kw_network(self, arg: str, lineno: int) -> None:
        if self.ref_missing:
            raise self._err(f"[Reference] (line {self.ref_line}) needs {self.n_ports} values",
                            self.ref_line)
        for ok, what in ((self.n_ports, "[Number of Ports]"),
                         (self.n_freq, "[Number of Frequencies]"),
                         (self.n_ports != 2 or self.two_port_order, "[Two-Port Data Order]")):
            if not ok:
                raise self._err(f"{what} is required before [Network Data] in a Touchstone "
                                f"{self.version} file: add it", lineno)
        self._need_options(lineno)
        if self.reference is not None:
            self.opt["r_ohm"] = tuple(self.reference)
        self.section = "network"

    def _kw_noise(self, arg: str, lineno: int) -> None:
        self._close_network(lineno)
        self.section = "noise"
        self.notes.append(f"noise parameters (from line {lineno}) ignored")

    def _kw_end(self, arg: str, lineno: int) -> None:
        if self.section == "network":
            self._close_network(lineno)
        self.section = "end"

    def _kw_info(self, arg: str, lineno: int) -> None:
        self.section = "info"

    def _close_network(self, lineno: int) -> None:
        if self.cur is not None:
            self._incomplete()
        if self.n_freq is not None and len(self.records) != self.n_freq:
            raise self._err(f"[Number of Frequencies] says {self.n_freq} but the data has "
                            f"{len(self.records)} points: fix the keyword or the data "
                            "(a truncated file?)", self.n_freq_line)

    # ---- data ----------------------------------------------------------------
    def _record_size(self) -> int:
        n = self.n_ports
        return 1 + (n * (n + 1) if self.matrix != "full" else 2 * n * n)

    def _v1_layout(self) -> list[int]:
        """Numbers on each line of one record (spec 2.0, 'Network Data'): 1- and 2-port
        records take one line; from 3 ports each matrix row starts a new line, 4 pairs at most."""
        n = self.n_ports
        if n <= 2:
            return [1 + 2 * n * n]
        sizes = [2 * min(4, n - c) for _ in range(n) for c in range(0, n, 4)]
        sizes[0] += 1
        return sizes

    def _data(self, lineno: int, code: str) -> None:
        if self.section == "noise":
            return
        if self.version is None and self.n_ports is None:
            raise self._err("a Touchstone 1.0 file must be named .sNp (N = number of ports) so "
                            "the port count is known: rename it, e.g. to .s1p", lineno)
        if self.version is not None and self.section != "network":
            if self.section == "end":
                raise self._err("text after [End]: delete it, or move [End] to the end", lineno)
            raise self._err("data before [Network Data]: add the [Network Data] keyword above "
                            "the first data line", lineno)
        if self.noise_from is not None:
            return
        if self.version is None and not self.data_started:
            self._need_options(lineno)
        self.data_started = True
        tokens = code.split()
        if self.cur is None:
            f = parse_number(tokens[0], self.path, lineno, "frequency")
            if (self.version is None and self.n_ports == 2 and len(tokens) == 5 and self.records
                    and f <= self.records[-1][1][0]):
                # Spec 2.0, 'Noise Parameter Data': in a version 1 two-port file, a
                # frequency not above the last one starts the noise block.
                self.noise_from = lineno
                self.notes.append(f"noise parameters (from line {lineno}) ignored")
                return
            if f <= 0:
                raise self._err(f"frequency {tokens[0]} is not positive: delete this point or "
                                "fix the frequency unit", lineno)
            self.cur = [lineno, [], 0]
        vals = [parse_number(t, self.path, lineno) for t in tokens]
        self.last_data_line = lineno
        first, have, k = self.cur
        need = self._record_size()
        if self.version is None:
            layout = self._v1_layout()
            if len(vals) != layout[k]:
                n = self.n_ports
                where = ("" if k == 0 else f" (line {k + 1} of the record that starts at line {first})")
                hint = " - is the line cut short?" if len(vals) < layout[k] else ""
                rule = ("one line per frequency" if n <= 2 else
                        "each matrix row on a new line, at most 4 pairs a line")
                raise self._err(f"{len(vals)} numbers on this line{where}, expected {layout[k]} "
                                f"for a {n}-port Touchstone 1.0 file ({rule}){hint}", lineno)
            self.cur[2] = k + 1
        elif len(have) + len(vals) > need:
            raise self._err(f"too many numbers: the record that starts at line {first} needs "
                            f"{need} (frequency and {need - 1} values for {self.n_ports} port(s)); "
                            "each frequency must start on a new line", lineno)
        have += vals
        if len(have) == need:
            self.records.append((first, have))
            self.cur = None
            if len(self.records) > self.max_points:
                raise self._err(f"more than {self.max_points:,} frequency points: export fewer",
                                lineno)
            if self.n_freq is not None and len(self.records) > self.n_freq:
                raise self._err(f"more data than [Number of Frequencies] {self.n_freq} (line "
                                f"{self.n_freq_line}): fix the keyword", lineno)

    def _incomplete(self) -> None:
        first, have, _ = self.cur
        raise self._err(f"the record that starts at line {first} is incomplete ({len(have)} of "
                        f"{self._record_size()} numbers): the file seems truncated; export it "
                        "again", self.last_data_line)

    def finish(self) -> None:
        """Checks that need the whole file."""
        if not self.seen_content and not self.comments:
            raise self._err("file holds only blank lines: export the sweep again")
        if self.cur is not None:
            self._incomplete()
        if not self.records:
            raise self._err("no data lines: the file holds no sweep points; export the sweep again")
        if self.version is not None and self.section != "end":
            if self.section == "network":
                self._close_network(None)
            raise self._err("no [End] keyword: a Touchstone 2.x file ends with [End]; the file "
                            "seems truncated (add [End] if it is complete)")
