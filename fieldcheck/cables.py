"""Catalogue of common coaxial cable types: impedance, velocity factor, matched loss.

Every entry is a *typical* published value for the type, not a guarantee for a
given reel: makers differ by 10-20 % in loss and by a few percent in velocity
factor within one RG designation.  Measure the cable (or pass ``--cable-vf`` /
``--cable-loss``) when the result matters.  Each entry's ``source_note`` says
where the number comes from; "from memory" means it was not re-checked
against a data sheet when it was entered.

Loss is scaled with frequency as ``sqrt(f / f_ref)``: the conductor-loss
(skin-effect) dominated approximation.  Dielectric loss grows ~ ``f`` and
takes over at UHF and above, so there the estimate is optimistic (too low),
and for solid-PE cables in particular.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import InputError
from .units import parse_frequency_hz

_MEMORY = "typical published value, from memory"
_CODAN = ("nominal attenuation at 150 MHz from Codan, Radio Repeater Systems Training "
          "Guide, Appendix H (coaxial cable losses); VF typical published value, from memory")


@dataclass(frozen=True)
class CableType:
    """One coaxial cable type as catalogued.

    Parameters
    ----------
    name : str
        Display name, e.g. ``"RG58"``.
    z0_ohm : float
        Nominal characteristic impedance, ohm.
    velocity_factor : float
        Phase velocity over c0, dimensionless, 0 < vf <= 1.
    loss_db_per_100m : float
        Matched loss at ``loss_ref_hz``, dB per 100 m.
    loss_ref_hz : float
        Frequency at which ``loss_db_per_100m`` is stated, Hz.
    source_note : str
        Where the numbers come from.
    """

    name: str
    z0_ohm: float
    velocity_factor: float
    loss_db_per_100m: float
    loss_ref_hz: float
    source_note: str

    def loss_db_per_100m_at(self, f_hz):
        """Matched loss at ``f_hz`` (Hz), dB per 100 m, by :func:`scaled_loss_db_per_100m`."""
        return scaled_loss_db_per_100m(self.loss_db_per_100m, self.loss_ref_hz, f_hz)


def scaled_loss_db_per_100m(loss_db_per_100m: float, loss_ref_hz: float, f_hz):
    """Matched loss scaled from a reference frequency as ``sqrt(f / f_ref)``.

    This is the conductor-loss (skin-effect) dominated approximation: skin
    resistance grows as sqrt(f) (Pozar, Microwave Engineering, 4th ed.,
    section 2.7, coaxial line conductor loss).  Dielectric loss grows ~ f,
    so well above ``loss_ref_hz`` (UHF and up) the estimate is optimistic.

    Parameters
    ----------
    loss_db_per_100m : float
        Loss at ``loss_ref_hz``, dB per 100 m, >= 0.
    loss_ref_hz : float
        Reference frequency, Hz, > 0.
    f_hz : float or array of float
        Frequencies, Hz, >= 0.

    Returns
    -------
    float or ndarray
        Loss at ``f_hz``, dB per 100 m.
    """
    return loss_db_per_100m * np.sqrt(np.asarray(f_hz, dtype=float) / loss_ref_hz)


def _entry(name, z0, vf, loss, ref_hz, note):
    return CableType(name, z0, vf, loss, ref_hz, note)


_100M = 100e6
_150M = 150e6

#: Common types by lookup key (see :func:`normalise_key`).  Values are typical
#: published figures; ``source_note`` gives the origin of each.
CABLE_TYPES: dict[str, CableType] = {
    "RG58": _entry("RG58", 50.0, 0.66, 20.0, _150M, "solid PE; " + _CODAN),
    "RG58FOAM": _entry("RG58 foam", 50.0, 0.78, 13.5, _100M, "foamed PE; " + _MEMORY),
    "RG8X": _entry("RG8X", 50.0, 0.78, 12.0, _100M, "foamed PE (mini-8); " + _MEMORY),
    "RG213": _entry("RG213", 50.0, 0.66, 8.9, _150M, "solid PE; " + _CODAN),
    "RG174": _entry("RG174", 50.0, 0.66, 29.0, _100M, "solid PE, thin; " + _MEMORY),
    "RG316": _entry("RG316", 50.0, 0.695, 27.0, _100M, "PTFE, thin; " + _MEMORY),
    "RG400": _entry("RG400", 50.0, 0.695, 14.0, _100M, "PTFE, double braid; " + _MEMORY),
    "RG59": _entry("RG59", 75.0, 0.66, 11.0, _100M, "solid PE, 75 ohm; " + _MEMORY),
    "RG6": _entry("RG6", 75.0, 0.83, 6.6, _100M, "foamed PE, 75 ohm; " + _MEMORY),
    "LMR195": _entry("LMR-195 class", 50.0, 0.80, 11.8, _100M,
                     "low-loss foam, 5 mm class; " + _MEMORY),
    "LMR240": _entry("LMR-240 class", 50.0, 0.84, 7.9, _100M,
                     "low-loss foam, 6 mm class; " + _MEMORY),
    "LMR400": _entry("LMR-400 class", 50.0, 0.85, 3.9, _100M,
                     "low-loss foam, 10 mm class; " + _MEMORY),
}


def normalise_key(name: str) -> str:
    """Lookup key for a type name: upper case, without spaces, '-', '_', '/' or '.'.

    ``"rg-58 foam"``, ``"RG58_FOAM"`` and ``"RG58FOAM"`` all give ``"RG58FOAM"``.
    """
    return "".join(ch for ch in str(name).upper() if ch.isalnum())


def lookup(name: str) -> CableType:
    """The catalogued type called ``name`` (case and punctuation ignored).

    Raises
    ------
    InputError
        For an unknown name; the message lists the known types.
    """
    key = normalise_key(name)
    if key not in CABLE_TYPES:
        raise InputError(
            f"unknown cable type {name!r}: use one of {', '.join(CABLE_TYPES)} "
            "(see --list-cables), or custom:LENGTH with --cable-vf (and optionally "
            "--cable-loss, --cable-z0)"
        )
    return CABLE_TYPES[key]


def parse_cable_loss(text: str) -> tuple[float, float]:
    """Parse ``"10.5@100MHz"`` into (10.5 dB per 100 m, 100e6 Hz).

    A bare ``"0"`` means lossless (reference frequency 100 MHz, irrelevant).

    Raises
    ------
    InputError
        If the text is not ``DB@FREQ`` with DB >= 0.
    """
    hint = "write dB per 100 m at a frequency, e.g. --cable-loss 10.5@100MHz"
    s = str(text).strip()
    if "@" not in s:
        try:
            if float(s) == 0.0:
                return 0.0, 100e6
        except ValueError:
            pass
        raise InputError(f"cannot read cable loss {text!r}: {hint}")
    loss_txt, f_txt = s.split("@", 1)
    try:
        loss = float(loss_txt)
    except ValueError:
        raise InputError(f"cannot read cable loss {text!r}: {hint}") from None
    if not (math.isfinite(loss) and loss >= 0):
        raise InputError(f"cable loss must be >= 0 dB per 100 m, got {text!r}: {hint}")
    return loss, parse_frequency_hz(f_txt, what="cable loss reference frequency")


def list_cables_text() -> str:
    """Plain-text table of :data:`CABLE_TYPES` for a cable listing option."""
    head = f"{'type':<10} {'Z0/ohm':>6} {'VF':>6} {'loss dB/100m':>13} {'at':>8}  source"
    lines = [head, "-" * len(head)]
    for key, c in CABLE_TYPES.items():
        lines.append(
            f"{key:<10} {c.z0_ohm:>6g} {c.velocity_factor:>6.3g} "
            f"{c.loss_db_per_100m:>13.3g} {c.loss_ref_hz / 1e6:>5g} MHz  {c.source_note}"
        )
    lines.append("")
    lines.append("Loss is scaled as sqrt(f/f_ref) (conductor loss); dielectric loss grows ~f,")
    lines.append("so the estimate is optimistic at UHF and above. Values are typical, not per reel.")
    lines.append("Use custom:LENGTH with --cable-vf, --cable-loss DB@FREQ and --cable-z0 for others.")
    return "\n".join(lines)


# Sanity of the table itself, checked once at import (a typo here would be silent otherwise).
for _c in CABLE_TYPES.values():
    assert 0 < _c.velocity_factor <= 1 and _c.loss_db_per_100m >= 0 and _c.z0_ohm > 0
    assert math.isfinite(_c.loss_ref_hz) and _c.loss_ref_hz > 0
del _c
