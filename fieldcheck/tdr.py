"""Cable-fault location by time-domain reflectometry computed from a frequency sweep.

A reflection at one-way distance ``d`` along a cable of velocity factor VF comes
back after the round-trip time ``tau = 2 d / (VF c0)`` and adds a term
``Gamma exp(-j 2 pi f tau)`` to S11 (Pozar, Microwave Engineering, 4th ed.,
section 2.3: the input reflection of a terminated line is
``Gamma_L exp(-2 j beta l)``).  The inverse Fourier transform of the (windowed)
sweep therefore peaks at ``tau``; this module finds those peaks and turns them
into distances and reflection-coefficient magnitudes.

Two transforms are offered:

* band-pass (any evenly stepped sweep): complex impulse response, magnitude
  only; the sign of the reflection (open-like or short-like) is lost.
* low-pass (sweep on a harmonic grid ``f_n = n f_1`` with ``f_1`` one step):
  the spectrum is made Hermitian about DC, so the impulse response is real and
  its sign tells an open-like (+) from a short-like (-) discontinuity; the step
  response (running sum of the impulse) is returned as well.

Window properties (coherent gain, -6 dB main-lobe width) are computed
numerically from the window actually used, not from a table.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import signal

from .constants import C0_M_PER_S
from .errors import InputError
from .sweep import Sweep
from .units import format_frequency

WINDOWS = ("kaiser", "hann", "rect")
MODES = ("bandpass", "lowpass")

#: Largest deviation of any frequency from the harmonic grid ``n * f_1``, as a
#: fraction of one step, still accepted for the low-pass transform.  At the
#: alias-free time limit ``1 / step`` this is a phase error of at most
#: 2 pi * 0.05 = 0.3 rad on the worst point (choice of this module, no source).
HARMONIC_GRID_TOL = 0.05

#: A peak must stand this far above the median of the profile (taken as the
#: noise/side-lobe floor) to be reported (common practice, no source).
NOISE_MARGIN_DB = 10.0


@dataclass(frozen=True)
class Reflection:
    """One significant reflection found along the cable.

    Parameters
    ----------
    distance_m : float
        One-way distance from the reference plane along the cable, m.
    time_s : float
        Round-trip time, s.
    gamma : float
        Reflection-coefficient estimate corrected for window gain, zero padding
        and the cable's two-way loss.  Band-pass: magnitude (>= 0).  Low-pass:
        signed real value (+ open-like / higher impedance, - short-like).
    gamma_db : float
        ``20 log10 |gamma|``, dB.
    """

    distance_m: float
    time_s: float
    gamma: float
    gamma_db: float

    def to_dict(self) -> dict:
        return {
            "distance_m": self.distance_m,
            "time_ns": self.time_s * 1e9,
            "gamma": self.gamma,
            "gamma_db": self.gamma_db,
        }


@dataclass(frozen=True)
class TdrResult:
    """Distance profile and the reflections found in it.

    Parameters
    ----------
    distance_m : ndarray of float
        One-way distance of each profile sample, m (starts slightly below 0 so
        a reflection at the reference plane shows as a whole peak).
    response : ndarray of float
        Profile magnitude (band-pass) or signed impulse response (low-pass),
        corrected for window gain and zero padding but not for cable loss;
        dimensionless reflection coefficient.
    peaks : tuple of Reflection
        Significant reflections, nearest first.
    range_resolution_m : float
        -6 dB full width of the main lobe of the chosen window's response,
        times ``VF c0 / 2``, m (see :func:`range_resolution_m`).
    simple_resolution_m : float
        ``VF c0 / (2 span)``, m, for reference (span = f_max - f_min in
        band-pass, 2 f_max in low-pass).
    alias_free_range_m : float
        ``VF c0 / (2 step)``, m: beyond this a reflection folds back.
    mode, window : str
        Transform used.
    velocity_factor : float
        Velocity factor used for the distance axis.
    step_response : ndarray of float or None
        Low-pass only: running sum of the impulse response (reflection
        coefficient seen at each distance).
    notes : tuple of str
        Warnings and handling the reader should know about.
    """

    distance_m: np.ndarray
    response: np.ndarray
    peaks: tuple
    range_resolution_m: float
    simple_resolution_m: float
    alias_free_range_m: float
    mode: str
    window: str
    velocity_factor: float
    step_response: np.ndarray | None = None
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict:
        return {
            "mode": self.mode,
            "window": self.window,
            "velocity_factor": self.velocity_factor,
            "range_resolution_m": self.range_resolution_m,
            "simple_resolution_m": self.simple_resolution_m,
            "alias_free_range_m": self.alias_free_range_m,
            "reflections": [p.to_dict() for p in self.peaks],
            "notes": list(self.notes),
        }


# ---- windows ----------------------------------------------------------------
def make_window(name: str, n: int, kaiser_beta: float = 6.0) -> np.ndarray:
    """Symmetric window of ``n`` points.

    Parameters
    ----------
    name : {'kaiser', 'hann', 'rect'}
        Window family.
    n : int
        Number of points (dimensionless).
    kaiser_beta : float
        Kaiser shape parameter beta (dimensionless); 6 gives side lobes of
        -43.8 dB (computed with scipy's kaiser window, 1024 points).
    """
    if name == "kaiser":
        if not (np.isfinite(kaiser_beta) and kaiser_beta >= 0):
            raise InputError(f"Kaiser beta must be a finite number >= 0, got {kaiser_beta}")
        return signal.windows.kaiser(n, kaiser_beta, sym=True)
    if name == "hann":
        return signal.windows.hann(n, sym=True)
    if name == "rect":
        return np.ones(n)
    raise InputError(f"unknown window {name!r}: choose one of {', '.join(WINDOWS)}")


def coherent_gain(w: np.ndarray) -> float:
    """Coherent gain of a window, ``sum(w) / N`` (as tabulated in F. J. Harris, Proc. IEEE
    66(1), 1978, Table 1)."""
    return float(np.mean(w))


def mainlobe_width_bins(w: np.ndarray, level_db: float = -6.0, oversample: int = 64) -> float:
    """Full width of the window transform's main lobe at ``level_db``, in DFT bins of ``len(w)``.

    Parameters
    ----------
    w : ndarray
        Window samples (dimensionless).
    level_db : float
        Level below the peak, dB (Harris 1978, Table 1, tabulates -3 and -6 dB widths).
    oversample : int
        Zero-padding factor used to resolve the lobe (dimensionless).
    """
    n = w.size
    m = _next_pow2(oversample * n)
    k = np.abs(np.fft.fft(w, m))
    k = k / k[0]
    lvl = 10.0 ** (level_db / 20.0)
    i = int(np.argmax(k < lvl))  # first sample below the level, main lobe is symmetric
    # linear interpolation between samples i-1 and i
    x = (i - 1) + (k[i - 1] - lvl) / (k[i - 1] - k[i])
    return 2.0 * x * n / m


def _next_pow2(n: int) -> int:
    return 1 << int(math.ceil(math.log2(max(n, 1))))


# ---- grid checks --------------------------------------------------------------
def _require_uniform(sweep: Sweep) -> float:
    if not sweep.is_uniform:
        d = sweep.step_hz
        raise InputError(
            f"time-domain analysis needs an evenly stepped sweep; steps here range from "
            f"{d.min():.6g} Hz to {d.max():.6g} Hz. Re-sweep with a linear, evenly stepped "
            "frequency sweep (no segmented or logarithmic sweep)",
            sweep.source,
        )
    return float(np.mean(sweep.step_hz))


def check_harmonic_grid(f_hz: np.ndarray, step_hz: float) -> str | None:
    """Why the low-pass transform cannot be used on this grid, or None if it can.

    Parameters
    ----------
    f_hz : ndarray
        Sweep frequencies, Hz.
    step_hz : float
        Mean frequency step, Hz.
    """
    f0 = float(f_hz[0])
    if f0 > 1.0 * step_hz * (1.0 + HARMONIC_GRID_TOL):
        return (
            f"the sweep starts at {f0:.6g} Hz, more than one step ({step_hz:.6g} Hz) above DC, "
            "so the response at DC cannot be extrapolated"
        )
    n = np.arange(1, f_hz.size + 1)
    dev = np.max(np.abs(f_hz - n * f0))
    if dev > HARMONIC_GRID_TOL * step_hz:
        return (
            f"the frequencies are not harmonics of the first one (f_n = n f_1 misses by up to "
            f"{dev:.6g} Hz, limit {HARMONIC_GRID_TOL:g} step); start the sweep at exactly one "
            "step above DC"
        )
    return None


# ---- physics helpers (pure) ----------------------------------------------------
def cable_loss_db_per_m(f_hz: float, loss_db_per_100m: float, loss_ref_hz: float) -> float:
    """Matched loss per metre at ``f_hz`` assuming conductor (skin-effect) loss, ~sqrt(f).

    Parameters
    ----------
    f_hz : float
        Frequency, Hz.
    loss_db_per_100m : float
        Matched loss at ``loss_ref_hz``, dB per 100 m.
    loss_ref_hz : float
        Frequency at which the loss is stated, Hz.

    Skin-effect resistance grows as sqrt(f) (Pozar, Microwave Engineering, 4th
    ed., section 2.7, conductor loss of a coaxial line); dielectric loss (~f)
    is neglected, as in :mod:`fieldcheck.cables`.
    """
    return loss_db_per_100m / 100.0 * math.sqrt(f_hz / loss_ref_hz)


def distance_from_time_m(t_s, velocity_factor: float):
    """One-way distance ``t c0 VF / 2`` (m) from round-trip time ``t_s`` (s)."""
    return np.asarray(t_s) * C0_M_PER_S * velocity_factor / 2.0


def range_resolution_m(mainlobe_bins: float, n_points: int, step_hz: float,
                       velocity_factor: float) -> float:
    """Range resolution: window -6 dB main-lobe width in time, times ``VF c0 / 2``.

    Parameters
    ----------
    mainlobe_bins : float
        -6 dB full width of the window transform in DFT bins of its length.
    n_points : int
        Window length in samples (one bin is ``1 / (n_points step_hz)`` s).
    step_hz : float
        Frequency step, Hz.
    velocity_factor : float
        Cable velocity factor (dimensionless).
    """
    return float(distance_from_time_m(mainlobe_bins / (n_points * step_hz), velocity_factor))


# ---- the transform ---------------------------------------------------------------
def locate_reflections(
    sweep: Sweep,
    velocity_factor: float,
    *,
    loss_db_per_100m: float = 0.0,
    loss_ref_hz: float | None = None,
    mode: str = "bandpass",
    window: str = "kaiser",
    kaiser_beta: float = 6.0,
    pad_factor: int = 8,
    threshold_db: float = -30.0,
    cable_length_m: float | None = None,
) -> TdrResult:
    """Locate reflections along a cable from its S11 sweep.

    Parameters
    ----------
    sweep : Sweep
        S11 measured at the cable input on an evenly stepped grid.
    velocity_factor : float
        Cable velocity factor, 0 < VF <= 1 (dimensionless).
    loss_db_per_100m : float
        Matched cable loss at ``loss_ref_hz``, dB per 100 m (0: lossless).
    loss_ref_hz : float, optional
        Frequency of the stated loss, Hz; required when the loss is not 0.
    mode : {'bandpass', 'lowpass'}
        Transform; low-pass needs a harmonic grid starting one step above DC.
    window : {'kaiser', 'hann', 'rect'}
        Window applied across the sweep before the transform.
    kaiser_beta : float
        Kaiser beta (dimensionless), used when ``window='kaiser'``.
    pad_factor : int
        The transform length is the smallest power of two >= ``pad_factor``
        times the number of points (dimensionless).
    threshold_db : float
        Report peaks no more than this far below the largest one, dB (< 0).
    cable_length_m : float, optional
        Cable length the user expects, m; only used to warn when it exceeds the
        alias-free range.

    Returns
    -------
    TdrResult

    Raises
    ------
    InputError
        Non-uniform grid, low-pass on an unsuitable grid, bad options.

    Notes
    -----
    Amplitudes are scaled by ``m / sum(w)`` (``m`` transform length, ``w`` the
    window), i.e. corrected for the window's coherent gain and for zero
    padding, so one flat reflection Gamma gives a peak of height |Gamma|.  The
    loss correction uses the two-way loss at the sweep's centre frequency; as
    the loss grows with sqrt(f) and the window averages exp(-loss) over the
    band, a wide sweep of a long lossy cable is slightly over-corrected.
    """
    src = sweep.source
    if not (0.0 < velocity_factor <= 1.0):
        raise InputError(f"velocity factor must be in (0, 1], got {velocity_factor}", src)
    if mode not in MODES:
        raise InputError(f"unknown transform mode {mode!r}: choose bandpass or lowpass", src)
    if int(pad_factor) != pad_factor or pad_factor < 1:
        raise InputError(f"pad factor must be a whole number >= 1, got {pad_factor}", src)
    if not threshold_db < 0:
        raise InputError(f"threshold must be below 0 dB (relative to the largest peak), "
                         f"got {threshold_db}", src)
    if loss_db_per_100m < 0:
        raise InputError(f"cable loss must be >= 0 dB/100 m, got {loss_db_per_100m}", src)
    if loss_db_per_100m > 0 and not (loss_ref_hz and loss_ref_hz > 0):
        raise InputError("a cable loss needs the frequency it is stated at (loss_ref_hz)", src)
    if sweep.n_points < 8:
        raise InputError(f"time-domain analysis needs at least 8 points, got {sweep.n_points}; "
                         "re-sweep with more points", src)
    step_hz = _require_uniform(sweep)
    f = sweep.f_hz
    notes: list[str] = []

    if mode == "lowpass":
        why = check_harmonic_grid(f, step_hz)
        if why:
            raise InputError(
                f"low-pass transform refused: {why}. Use the band-pass transform "
                "(mode bandpass), which needs only an evenly stepped sweep", src)
        t_s, resp, step_resp, win_n, span_hz = _lowpass(
            sweep, step_hz, window, kaiser_beta, int(pad_factor))
        notes.append("low-pass: DC value set so the step response is flat between "
                     "reflections; sign of each "
                     "reflection: + open-like (higher impedance), - short-like (lower)")
    else:
        t_s, resp, win_n, span_hz = _bandpass(sweep, step_hz, window, kaiser_beta, int(pad_factor))
        step_resp = None

    w = make_window(window, win_n, kaiser_beta)
    res_m = range_resolution_m(mainlobe_width_bins(w), win_n, step_hz, velocity_factor)
    simple_m = float(distance_from_time_m(1.0 / span_hz, velocity_factor))
    alias_m = float(distance_from_time_m(1.0 / step_hz, velocity_factor))
    dist_m = distance_from_time_m(t_s, velocity_factor)

    # Two-way loss correction at the sweep centre frequency.
    if loss_db_per_100m > 0:
        fc_hz = 0.5 * (f[0] + f[-1])
        a_db_m = cable_loss_db_per_m(fc_hz, loss_db_per_100m, loss_ref_hz)
        gain = 10.0 ** (2.0 * a_db_m * np.clip(dist_m, 0.0, None) / 20.0)
        notes.append(f"amplitudes corrected for two-way cable loss of {2 * a_db_m * 100:.3g} "
                     f"dB per 100 m of distance (at the centre frequency {format_frequency(fc_hz)})")
    else:
        gain = np.ones_like(dist_m)

    peaks = _find_peaks(t_s, dist_m, resp, gain, res_m, threshold_db, mode)
    if not peaks:
        notes.append("no reflection stands out of the noise floor")
    if window == "rect":
        notes.append("rectangular window: side lobes at about -13 dB may show as false "
                     "reflections next to a strong one; prefer kaiser or hann")
    # No peak can lie beyond the alias-free range (the transform is periodic in
    # it), so only the user's stated length can reveal folding.
    if cable_length_m is not None and cable_length_m > alias_m:
        notes.append(
            f"the stated cable length {cable_length_m:.4g} m exceeds the alias-free range "
            f"{alias_m:.4g} m: reflections beyond it fold back to shorter distances. Re-sweep "
            "with a frequency step below "
            f"{format_frequency(distance_from_time_m(1.0, velocity_factor) / cable_length_m)}")
    return TdrResult(
        distance_m=dist_m, response=resp, peaks=tuple(peaks), range_resolution_m=res_m,
        simple_resolution_m=simple_m, alias_free_range_m=alias_m, mode=mode, window=window,
        velocity_factor=float(velocity_factor), step_response=step_resp, notes=tuple(notes),
    )


def _bandpass(sweep, step_hz, window, beta, pad_factor):
    """Windowed, zero-padded inverse FFT; returns (t_s, |h|, window length, span_hz)."""
    n = sweep.n_points
    w = make_window(window, n, beta)
    m = _next_pow2(pad_factor * n)
    # ifft divides by m; multiply back and divide by sum(w) = n * coherent gain,
    # so a single reflection Gamma gives a peak of height |Gamma|.
    h = np.fft.ifft(w * sweep.s11, m) * (m / np.sum(w))
    t = np.arange(m) / (m * step_hz)
    t, h = _with_guard(t, h, m, step_hz, n)
    return t, np.abs(h), n, float(sweep.f_hz[-1] - sweep.f_hz[0])


def _lowpass(sweep, step_hz, window, beta, pad_factor):
    """Hermitian-extended, windowed real inverse FFT.

    Returns (t_s, impulse scaled to peak Gamma, step response, window length, span_hz).
    """
    n = sweep.n_points
    s = sweep.s11
    # Symmetric window over -f_max..f_max (2n+1 points); keep the half from DC up.
    w_full = make_window(window, 2 * n + 1, beta)
    w = w_full[n:]
    m = 2 * _next_pow2(pad_factor * (n + 1))
    # DC value: polynomial extrapolation fails once the first step already turns
    # the phase far (a long cable).  A wrong DC value adds the same constant to
    # every time sample, so choose it to make the impulse response zero away from
    # the (sparse) reflections: DC = -m * median(response without DC) / w[0].
    spec = np.concatenate(([0j], s))
    h0 = np.fft.irfft(w * spec, m)
    dc = -m * float(np.median(h0)) / w[0]
    h_raw = h0 + w[0] * dc / m
    t = np.arange(m) / (m * step_hz)
    t, h_raw = _with_guard(t, h_raw, m, step_hz, 2 * n + 1)
    # The raw impulse sums to w[0] * Gamma(DC) with w[0] = 1 at the window
    # centre, so its running sum is the step response in units of Gamma.
    step = np.cumsum(h_raw) / w[0]
    return t, h_raw * (m / np.sum(w_full)), step, 2 * n + 1, 2.0 * float(sweep.f_hz[-1])


def _with_guard(t, h, m, step_hz, win_n):
    """Rotate so the profile starts two window bins before t = 0 (circular transform)."""
    g = int(math.ceil(2.0 * m / win_n))
    h = np.roll(h, g)
    t = np.concatenate((t[m - g:] - m / (m * step_hz), t[: m - g]))
    return t, h


def _find_peaks(t_s, dist_m, resp, gain, res_m, threshold_db, mode):
    """Peaks of the measured profile; amplitudes then corrected by ``gain`` (cable loss).

    Detection uses the uncorrected profile: the loss correction grows
    exponentially with distance and would lift side lobes and noise at long
    range above the threshold.
    """
    mag = np.abs(resp)
    if not np.any(mag > 0):
        return []
    dd = float(dist_m[1] - dist_m[0])
    sep = max(1, int(round(res_m / dd)))
    idx, _ = signal.find_peaks(mag, distance=sep)
    if idx.size == 0:
        return []
    top = mag[idx].max()
    floor = float(np.median(mag))
    keep = mag[idx] >= top * 10.0 ** (threshold_db / 20.0)
    keep &= mag[idx] >= floor * 10.0 ** (NOISE_MARGIN_DB / 20.0)
    out = []
    for i in idx[keep]:
        # quadratic interpolation through the three samples around the peak
        # (common practice, no source); with padding the scallop error is small
        y0, y1, y2 = mag[i - 1], mag[i], mag[i + 1]
        den = y0 - 2 * y1 + y2
        p = 0.5 * (y0 - y2) / den if den != 0 else 0.0
        amp = (y1 - 0.25 * (y0 - y2) * p) * gain[i]
        t_pk = float(t_s[i] + p * (t_s[1] - t_s[0]))
        d_pk = float(dist_m[i] + p * dd)
        g = float(amp) if mode == "bandpass" else float(np.sign(resp[i]) * amp)
        out.append(Reflection(distance_m=d_pk, time_s=t_pk, gamma=g,
                              gamma_db=float(20.0 * np.log10(abs(g)))))
    return out
