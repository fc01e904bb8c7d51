"""Inputs to the reference-plane removals of :mod:`fieldcheck.refplane`.

The :class:`Cable` description (a uniform lossy coaxial line) and the parsers
that turn command-line text into it (:func:`parse_cable`) or into a one-way
delay (:func:`parse_delay`), with the range checks they share.  Every name
here is re-exported by :mod:`fieldcheck.refplane`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from .cables import lookup, parse_cable_loss, scaled_loss_db_per_100m
from .constants import C0_M_PER_S, DB_PER_NEPER
from .errors import InputError
from .units import parse_length_m


@dataclass(frozen=True)
class Cable:
    """A uniform coaxial cable between the analyser and the rest of the setup.

    Parameters
    ----------
    length_m : float
        Physical length, m, > 0.
    velocity_factor : float
        Phase velocity over c0, dimensionless, 0 < vf <= 1.
    loss_db_per_100m : float
        Matched loss at ``loss_ref_hz``, dB per 100 m, >= 0.
    loss_ref_hz : float
        Frequency at which the loss is stated, Hz, > 0.
    z0_ohm : float
        Characteristic impedance, ohm, > 0 (real: low-loss approximation).
    name : str
        Label used in notes.
    """

    length_m: float
    velocity_factor: float
    loss_db_per_100m: float = 0.0
    loss_ref_hz: float = 100e6
    z0_ohm: float = 50.0
    name: str = "cable"

    def __post_init__(self):
        check_positive(self.length_m, "cable length", "write e.g. RG58:5m")
        check_vf(self.velocity_factor, "cable velocity factor", "--cable-vf 0.66")
        if not (math.isfinite(self.loss_db_per_100m) and self.loss_db_per_100m >= 0):
            raise InputError(
                f"cable loss must be >= 0 dB per 100 m, got {self.loss_db_per_100m}: "
                "write e.g. --cable-loss 10.5@100MHz (dB per 100 m at a frequency)"
            )
        check_positive(self.loss_ref_hz, "cable loss reference frequency",
                        "write e.g. --cable-loss 10.5@100MHz")
        check_positive(self.z0_ohm, "cable impedance", "write e.g. --cable-z0 75")

    def loss_db_per_m(self, f_hz):
        """Matched loss, dB/m, at ``f_hz`` (Hz), scaled as sqrt(f) from the reference."""
        return scaled_loss_db_per_100m(self.loss_db_per_100m, self.loss_ref_hz, f_hz) / 100.0

    def gamma_per_m(self, f_hz):
        """Propagation constant alpha + j beta, 1/m, at ``f_hz`` (Hz).

        beta = w / (vf c0); alpha [Np/m] = loss [dB/m] / (20 log10 e).
        """
        f = np.asarray(f_hz, dtype=float)
        beta = 2.0 * np.pi * f / (self.velocity_factor * C0_M_PER_S)
        alpha = self.loss_db_per_m(f) / DB_PER_NEPER
        return alpha + 1j * beta

    def describe(self) -> str:
        return (f"{self.name} {self.length_m:g} m, VF {self.velocity_factor:g}, "
                f"Z0 {self.z0_ohm:g} ohm, {self.loss_db_per_100m:g} dB/100 m at "
                f"{self.loss_ref_hz / 1e6:g} MHz")


def check_positive(value, what: str, hint: str) -> None:
    """Refuse anything but a finite number > 0 (any unit).

    Parameters
    ----------
    value : float
        The value to check, in whatever unit ``what`` names.
    what : str
        Its name for the message, e.g. ``"cable length"``.
    hint : str
        What to write instead, appended to the message.

    Raises
    ------
    InputError
        If ``value`` is not a finite positive number.
    """
    if not (isinstance(value, (int, float, np.floating, np.integer))
            and math.isfinite(value) and value > 0):
        raise InputError(f"{what} must be a positive number, got {value!r}: {hint}")


def check_vf(value, what: str, hint: str) -> None:
    """Refuse a velocity factor outside 0 < vf <= 1.

    Parameters
    ----------
    value : float
        Velocity factor, dimensionless.
    what : str
        Its name for the message, e.g. ``"cable velocity factor"``.
    hint : str
        An example option, e.g. ``"--cable-vf 0.66"``.

    Raises
    ------
    InputError
        If ``value`` is not a finite number in (0, 1].
    """
    if not (isinstance(value, (int, float, np.floating, np.integer))
            and math.isfinite(value) and 0 < value <= 1):
        raise InputError(f"{what} must satisfy 0 < VF <= 1, got {value!r}: write e.g. {hint}")


def parse_cable(spec: str, vf: float | None = None, loss: str | None = None,
                z0: float | None = None) -> Cable:
    """Build a :class:`Cable` from ``"TYPE:LENGTH"`` and optional overrides.

    Parameters
    ----------
    spec : str
        ``"RG58:5m"``, ``"rg213:12.5 m"`` or ``"custom:3m"`` (length with a
        unit m, cm, mm, in or ft; a bare number is metres).
    vf : float, optional
        Velocity factor override, dimensionless; required for ``custom``.
    loss : str, optional
        Matched loss override ``"DB@FREQ"`` in dB per 100 m (see
        :func:`parse_cable_loss`); ``custom`` defaults to lossless.
    z0 : float, optional
        Characteristic impedance override, ohm; ``custom`` defaults to 50.

    Raises
    ------
    InputError
        Malformed spec, unknown type (the message lists the known ones),
        ``custom`` without ``vf``, or values out of range.
    """
    text = str(spec).strip()
    if ":" not in text:
        raise InputError(
            f"cannot read cable {spec!r}: write TYPE:LENGTH, e.g. RG58:5m or custom:3m"
        )
    type_txt, len_txt = (part.strip() for part in text.split(":", 1))
    length_m = parse_length_m(len_txt, what="cable length")
    loss_db, loss_ref = parse_cable_loss(loss) if loss is not None else (None, None)
    if type_txt.lower() == "custom":
        if vf is None:
            raise InputError(
                "a custom cable needs its velocity factor: add --cable-vf, e.g. --cable-vf 0.66 "
                "(and optionally --cable-loss 10.5@100MHz and --cable-z0 50)"
            )
        return Cable(length_m, float(vf),
                     0.0 if loss_db is None else loss_db,
                     100e6 if loss_ref is None else loss_ref,
                     50.0 if z0 is None else float(z0), name="custom cable")
    kind = lookup(type_txt)
    return Cable(
        length_m,
        kind.velocity_factor if vf is None else float(vf),
        kind.loss_db_per_100m if loss_db is None else loss_db,
        kind.loss_ref_hz if loss_ref is None else loss_ref,
        kind.z0_ohm if z0 is None else float(z0),
        name=kind.name,
    )


_TIME_SCALE = {"s": 1.0, "ms": 1e-3, "us": 1e-6, "ns": 1e-9, "ps": 1e-12}
_NUM = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"


def parse_delay(text: str, vf: float = 1.0) -> float:
    """Parse a one-way delay: a time (``"1.2ns"``, ``"350ps"``) or a length (``"0.35m"``, ``"35cm"``).

    Parameters
    ----------
    text : str
        Positive number with a unit: s, ms, us, ns, ps, or m, cm, mm, in, ft.
    vf : float
        Velocity factor for a length, dimensionless, 0 < vf <= 1; the delay
        is length / (vf c0).  Ignored for a time.

    Returns
    -------
    float
        One-way delay, s.
    """
    check_vf(vf, "delay velocity factor", "--delay-vf 0.66")
    hint = "write a time or a length with its unit, e.g. 1.2ns, 350ps, 0.35m or 35cm"
    m = re.fullmatch(rf"\s*({_NUM})\s*([a-zA-Z]*)\s*", str(text))
    if not m or not m.group(2):
        raise InputError(f"cannot read delay {text!r}: {hint}")
    unit = m.group(2).lower()
    if unit in _TIME_SCALE:
        delay_s = float(m.group(1)) * _TIME_SCALE[unit]
        if not (math.isfinite(delay_s) and delay_s > 0):
            raise InputError(f"delay must be positive, got {text!r}: {hint}")
        return delay_s
    try:
        length_m = parse_length_m(text, what="delay length")
    except InputError:
        raise InputError(f"cannot read delay {text!r}: {hint}") from None
    return length_m / (vf * C0_M_PER_S)
