"""The one internal representation of a measured one-port sweep."""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from .errors import InputError

#: Relative spread of frequency steps still called a uniform grid.  VNAs write
#: frequencies with 6 to 10 significant digits, so rounding alone gives ~1e-6.
UNIFORM_STEP_RTOL = 1e-3


@dataclass(frozen=True)
class Sweep:
    """A measured reflection sweep at one reference plane.

    Parameters
    ----------
    f_hz : array of float, shape (n,)
        Frequencies in Hz, strictly increasing, all positive.
    s11 : array of complex, shape (n,)
        Reflection coefficient referred to ``z0_ohm``.
    z0_ohm : float
        Real reference impedance in ohm.
    source : str
        Where the data came from (file path or a description).
    comments : tuple of str
        Comment lines found in the file, in order, without the comment marker.
    notes : tuple of str
        Visible handling applied on import (sorting, defaults confirmed, ...).

    Impedance, return loss and VSWR are derived on demand and never stored.
    Arrays are copied and made read-only on construction.
    """

    f_hz: np.ndarray
    s11: np.ndarray
    z0_ohm: float = 50.0
    source: str = "<memory>"
    comments: tuple[str, ...] = field(default=())
    notes: tuple[str, ...] = field(default=())

    def __post_init__(self):
        f = np.array(self.f_hz, dtype=np.float64).ravel()
        s = np.array(self.s11, dtype=np.complex128).ravel()
        where = self.source
        if f.shape != s.shape:
            raise InputError(f"{f.size} frequencies but {s.size} S11 values", where)
        if f.size < 2:
            raise InputError("a sweep needs at least 2 points", where)
        if not np.all(np.isfinite(f)) or not np.all(np.isfinite(s)):
            raise InputError("frequencies and S11 must be finite (no NaN or infinity)", where)
        if np.any(f <= 0):
            raise InputError("frequencies must be positive", where)
        if np.any(np.diff(f) <= 0):
            raise InputError("frequencies must be strictly increasing", where)
        if not (np.isfinite(self.z0_ohm) and self.z0_ohm > 0):
            raise InputError(f"reference impedance must be positive, got {self.z0_ohm}", where)
        f.setflags(write=False)
        s.setflags(write=False)
        object.__setattr__(self, "f_hz", f)
        object.__setattr__(self, "s11", s)
        object.__setattr__(self, "z0_ohm", float(self.z0_ohm))
        object.__setattr__(self, "comments", tuple(self.comments))
        object.__setattr__(self, "notes", tuple(self.notes))

    # ---- derived quantities -------------------------------------------------
    @property
    def n_points(self) -> int:
        return int(self.f_hz.size)

    @property
    def z_ohm(self) -> np.ndarray:
        """Impedance Z = z0 (1 + S11) / (1 - S11), ohm (Pozar, Microwave Engineering, 4th ed., eq. 2.35)."""
        return impedance_from_gamma(self.s11, self.z0_ohm)

    @property
    def gamma_mag(self) -> np.ndarray:
        return np.abs(self.s11)

    @property
    def return_loss_db(self) -> np.ndarray:
        """Return loss, dB, positive for a passive load: RL = -20 log10 |S11|."""
        return return_loss_db(self.s11)

    @property
    def vswr(self) -> np.ndarray:
        """VSWR = (1 + |S11|) / (1 - |S11|); infinite where |S11| >= 1."""
        return vswr_from_gamma(self.s11)

    @property
    def step_hz(self) -> np.ndarray:
        return np.diff(self.f_hz)

    @property
    def is_uniform(self) -> bool:
        """True when all frequency steps agree within :data:`UNIFORM_STEP_RTOL`."""
        d = self.step_hz
        return bool(np.ptp(d) <= UNIFORM_STEP_RTOL * np.mean(d))

    def with_s11(self, s11: np.ndarray, note: str | None = None) -> "Sweep":
        """A new sweep on the same grid with other S11 (e.g. after de-embedding)."""
        notes = self.notes + ((note,) if note else ())
        return replace(self, s11=s11, notes=notes)

    def with_impedance(self, z_ohm: np.ndarray, note: str | None = None) -> "Sweep":
        return self.with_s11(gamma_from_impedance(z_ohm, self.z0_ohm), note)


def impedance_from_gamma(gamma: np.ndarray, z0_ohm: float) -> np.ndarray:
    """Z = z0 (1 + G) / (1 - G); G = 1 maps to a very large (not infinite) impedance."""
    g = np.asarray(gamma, dtype=np.complex128)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = z0_ohm * (1 + g) / (1 - g)
    return np.where(np.isfinite(z), z, 1e15 + 0j)


def gamma_from_impedance(z_ohm: np.ndarray, z0_ohm: float) -> np.ndarray:
    """G = (Z - z0) / (Z + z0) (Pozar, Microwave Engineering, 4th ed., eq. 2.35)."""
    z = np.asarray(z_ohm, dtype=np.complex128)
    return (z - z0_ohm) / (z + z0_ohm)


def return_loss_db(gamma: np.ndarray) -> np.ndarray:
    """RL = -20 log10 |G| in dB (positive for passive loads)."""
    with np.errstate(divide="ignore"):
        return -20.0 * np.log10(np.abs(gamma))


def vswr_from_gamma(gamma: np.ndarray) -> np.ndarray:
    """VSWR = (1 + |G|) / (1 - |G|), inf where |G| >= 1."""
    m = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore", invalid="ignore"):
        v = (1 + m) / (1 - m)
    return np.where(m < 1, v, np.inf)
