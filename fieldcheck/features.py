"""Model-free features of a sweep: reactance zero crossings, best match, bandwidth.

These are what the bench reads straight off the trace; the fit starts from them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .constants import TWO_PI
from .sweep import Sweep, vswr_from_gamma


@dataclass(frozen=True)
class Crossing:
    """A reactance zero crossing X(f) = 0 found by linear interpolation.

    Attributes
    ----------
    f_hz : float
        Interpolated crossing frequency, Hz.
    r_ohm : float
        Resistance at the crossing (interpolated), ohm.
    kind : str
        ``'series'`` where X rises through zero (dX/df > 0, a series resonance,
        the half-wave dipole case) or ``'parallel'`` where X falls through zero
        (an anti-resonance).
    index : int
        Index of the sample just below the crossing.
    """

    f_hz: float
    r_ohm: float
    kind: str
    index: int


def reactance_crossings(f_hz: np.ndarray, z_ohm: np.ndarray) -> list[Crossing]:
    """All sign changes of X between adjacent samples, interpolated linearly.

    A sign change through a pole (|X| huge on both sides, as beside an
    anti-resonance seen as a jump from +large to -large) is still a zero of X
    only if the resistance stays finite; we keep every change and label it by
    the direction of travel, which the caller can use.
    """
    x = np.asarray(z_ohm).imag
    r = np.asarray(z_ohm).real
    out = []
    sign = np.sign(x)
    idx = np.nonzero(sign[:-1] * sign[1:] < 0)[0]
    for i in idx:
        t = x[i] / (x[i] - x[i + 1])
        f = f_hz[i] + t * (f_hz[i + 1] - f_hz[i])
        rr = r[i] + t * (r[i + 1] - r[i])
        out.append(Crossing(float(f), float(rr), "series" if x[i + 1] > x[i] else "parallel", int(i)))
    # An exact zero on a sample counts once.
    for i in np.nonzero(x == 0)[0]:
        if 0 < i < len(x) - 1:
            kind = "series" if x[i + 1] > x[i - 1] else "parallel"
            out.append(Crossing(float(f_hz[i]), float(r[i]), kind, int(i)))
    return _debounce(sorted(out, key=lambda c: c.f_hz))


#: Crossings closer than this many samples are one event seen through noise.
CHATTER_SAMPLES = 3


def _debounce(crossings: list[Crossing]) -> list[Crossing]:
    """Merge noise chatter: a run of crossings a few samples apart is one crossing
    (odd count: X really changed sign; the middle one, with the run's net
    direction, stands for the run) or
    none (even count: X came back to where it was)."""
    out, run = [], []
    for c in crossings + [None]:
        if c is not None and run and c.index - run[-1].index <= CHATTER_SAMPLES:
            run.append(c)
            continue
        if run and len(run) % 2 == 1:
            mid = run[len(run) // 2]
            # Alternating run: the net change is the first crossing's direction.
            out.append(Crossing(mid.f_hz, mid.r_ohm, run[0].kind, mid.index))
        run = [c] if c is not None else []
    return out


@dataclass(frozen=True)
class Band:
    """A contiguous frequency range where VSWR stays at or below a limit."""

    f_lo_hz: float
    f_hi_hz: float
    vswr_limit: float

    @property
    def width_hz(self) -> float:
        return self.f_hi_hz - self.f_lo_hz

    @property
    def centre_hz(self) -> float:
        return 0.5 * (self.f_lo_hz + self.f_hi_hz)


def vswr_bands(f_hz: np.ndarray, gamma: np.ndarray, vswr_limit: float = 2.0) -> list[Band]:
    """Ranges with VSWR <= ``vswr_limit``, edges interpolated in |Gamma|.

    A band touching the first or last sample is clipped there: the true
    bandwidth may be wider than the sweep.
    """
    g_lim = (vswr_limit - 1.0) / (vswr_limit + 1.0)
    m = np.abs(np.asarray(gamma))
    ok = m <= g_lim
    bands = []
    i, n = 0, len(m)
    while i < n:
        if not ok[i]:
            i += 1
            continue
        j = i
        while j + 1 < n and ok[j + 1]:
            j += 1
        lo = f_hz[i] if i == 0 else _edge(f_hz, m, i - 1, i, g_lim)
        hi = f_hz[j] if j == n - 1 else _edge(f_hz, m, j, j + 1, g_lim)
        bands.append(Band(float(lo), float(hi), float(vswr_limit)))
        i = j + 1
    return bands


def _edge(f, m, i, j, level):
    t = (level - m[i]) / (m[j] - m[i])
    return f[i] + t * (f[j] - f[i])


@dataclass(frozen=True)
class BestMatch:
    f_hz: float
    return_loss_db: float
    vswr: float
    index: int


def best_match(sweep: Sweep) -> BestMatch:
    """The sample with the smallest |S11| as measured at the sweep's reference."""
    i = int(np.argmin(np.abs(sweep.s11)))
    g = sweep.s11[i]
    return BestMatch(float(sweep.f_hz[i]), float(-20 * np.log10(max(abs(g), 1e-12))),
                     float(vswr_from_gamma(g)), i)


def phase_slope_delay_s(f_hz: np.ndarray, gamma_meas: np.ndarray, gamma_model: np.ndarray) -> float:
    """One-way delay (s) that best explains the phase of measured over model Gamma.

    A line of one-way delay tau multiplies Gamma by exp(-2 j w tau) (Pozar,
    Microwave Engineering, 4th ed., section 2.3), so the unwrapped phase of
    Gamma_meas conj(Gamma_model) falls as -4 pi f tau; the slope is found by
    least squares weighted by |Gamma_meas Gamma_model| (phase is noisy where
    either is small).
    """
    prod = np.asarray(gamma_meas) * np.conj(np.asarray(gamma_model))
    ph = np.unwrap(np.angle(prod))
    w = np.abs(prod)
    if not np.any(w > 0):
        return 0.0
    slope = np.polyfit(np.asarray(f_hz, float), ph, 1, w=np.sqrt(w))[0]
    return float(-slope / (2.0 * TWO_PI))
