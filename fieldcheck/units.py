"""Frequency and length values typed by people: parse once at the edge."""

from __future__ import annotations

import re

from .errors import InputError

_FREQ_SCALE = {"": 1.0, "hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_LEN_SCALE = {"m": 1.0, "cm": 1e-2, "mm": 1e-3, "in": 0.0254, "ft": 0.3048}
_NUM = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"


def parse_frequency_hz(text: str | float, what: str = "frequency") -> float:
    """Parse ``'146MHz'``, ``'1.2 GHz'``, ``'7.1e6'`` (Hz when no unit) into Hz.

    Raises
    ------
    InputError
        If the text is not a positive number with an optional Hz/kHz/MHz/GHz unit.
    """
    if isinstance(text, (int, float)):
        value = float(text)
    else:
        m = re.fullmatch(rf"\s*({_NUM})\s*([a-zA-Z]*)\s*", str(text))
        unit = m.group(2).lower() if m else None
        if not m or unit not in _FREQ_SCALE:
            raise InputError(
                f"cannot read {what} {text!r}: write a number with an optional unit "
                "Hz, kHz, MHz or GHz, for example 146MHz, '1.2 GHz' or 7.1e6"
            )
        value = float(m.group(1)) * _FREQ_SCALE[unit]
    if not value > 0 or value != value or value == float("inf"):
        raise InputError(f"{what} must be a positive, finite frequency; got {text!r}")
    return value


def parse_length_m(text: str | float, what: str = "length", default_unit: str = "m") -> float:
    """Parse ``'1.02 m'``, ``'985mm'``, ``'38.5 in'``; a bare number uses ``default_unit``."""
    if isinstance(text, (int, float)):
        value = float(text) * _LEN_SCALE[default_unit]
    else:
        m = re.fullmatch(rf"\s*({_NUM})\s*([a-zA-Z]*)\s*", str(text))
        unit = (m.group(2).lower() or default_unit) if m else None
        if not m or unit not in _LEN_SCALE:
            raise InputError(
                f"cannot read {what} {text!r}: write a number with a unit m, cm, mm, in or ft, "
                "for example 985mm or '1.02 m'"
            )
        value = float(m.group(1)) * _LEN_SCALE[unit]
    if not value > 0 or value == float("inf"):
        raise InputError(f"{what} must be positive and finite; got {text!r}")
    return value


def format_frequency(f_hz: float) -> str:
    """Human frequency with a sensible unit, e.g. ``146.250 MHz``."""
    for unit, scale in (("GHz", 1e9), ("MHz", 1e6), ("kHz", 1e3)):
        if abs(f_hz) >= scale:
            return f"{f_hz / scale:.6g} {unit}"
    return f"{f_hz:.6g} Hz"
