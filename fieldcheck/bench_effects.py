"""What the bench adds between a wire antenna and the analyser, and faults, for SIMULATED sweeps only.

The simulator (:mod:`fieldcheck.simulate`) walks from the antenna terminals to
the analyser through the pieces modelled here::

    antenna terminals -- balun (choke, shunt C, ideal ratio, internal line)
        -- Gamma vs z0 -- residual delay -- cable actually present
        -- calibration residual (three-term error box) -- noise -> analyser

Several of these are deliberately NOT in the fitter's model (internal balun
line, balun shunt C, finite choke, cable Z0/VF errors, calibration residual),
so fitting a simulated sweep is never the model fitted to itself.

:class:`Fault` names the faults the simulator can build in, each with its
documented signature.

Every magnitude in :meth:`BenchEffects.typical` is an invented but plausible
bench value ("typical, from common practice, no source"); none is a reference
value and none may be used as a check value in a test.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from .constants import C0_M_PER_S, TWO_PI
from .errors import InputError
from .refplane import Cable


@dataclass(frozen=True)
class BenchEffects:
    """Imperfections of a simulated measurement set-up.

    Parameters
    ----------
    noise_sigma : float
        Standard deviation of the white Gaussian noise added to each real
        component (Re and Im) of the measured Gamma, dimensionless, >= 0.
    cal_directivity : complex
        Residual directivity e00 of the one-port calibration, dimensionless.
    cal_source_match : complex
        Residual source match e11, dimensionless, |e11| < 1.
    cal_tracking : complex
        Residual reflection tracking e10 e01, dimensionless, non-zero.
    balun_line_m : float
        Length of the balun's internal transmission line, m, >= 0 (0: none).
    balun_line_z0_ohm : float
        Characteristic impedance of that line, ohm, > 0.
    balun_line_vf : float
        Velocity factor of that line, dimensionless, 0 < VF <= 1.
    balun_shunt_c_f : float
        Shunt capacitance of the balun across the antenna terminals, F, >= 0.
    balun_common_mode_ohm : complex or None
        Common-mode (choke) impedance of the balun, ohm; None is an ideal choke.
        It appears as a shunt across the antenna terminals (lumped
        approximation of the path over the outside of the feed line).
    cable : refplane.Cable or None
        The cable actually present at its NOMINAL values; None means the cable
        named by the antenna description (``feed.cable``), if any.
    cable_z0_error_ohm : float
        Actual cable Z0 = nominal + this, ohm.
    cable_vf_error : float
        Actual cable VF = nominal x (1 + this), dimensionless (relative).
    joint_loss_ohm : float
        Extra series resistance at the feed (joints, solder, clamps), ohm, >= 0.
    feed_c_f : float
        True shunt capacitance across the feed terminals (gap, hardware), F, >= 0.
    extra_delay_s : float
        One-way lossless delay in the system impedance between balun and cable
        (adapters), s, >= 0; added to any delay the description names.
    """

    noise_sigma: float = 0.002
    cal_directivity: complex = 0.0
    cal_source_match: complex = 0.0
    cal_tracking: complex = 1.0
    balun_line_m: float = 0.0
    balun_line_z0_ohm: float = 50.0
    balun_line_vf: float = 0.7
    balun_shunt_c_f: float = 0.0
    balun_common_mode_ohm: complex | None = None
    cable: Cable | None = None
    cable_z0_error_ohm: float = 0.0
    cable_vf_error: float = 0.0
    joint_loss_ohm: float = 0.0
    feed_c_f: float = 0.0
    extra_delay_s: float = 0.0

    def __post_init__(self):
        for name in ("noise_sigma", "balun_line_m", "balun_shunt_c_f", "joint_loss_ohm",
                     "feed_c_f", "extra_delay_s"):
            v = getattr(self, name)
            if not (math.isfinite(v) and v >= 0):
                raise InputError(f"bench effect {name} must be a finite number >= 0; got {v!r}")
        for name in ("cal_directivity", "cal_source_match", "cal_tracking"):
            v = complex(getattr(self, name))
            if not (math.isfinite(v.real) and math.isfinite(v.imag)):
                raise InputError(f"bench effect {name} must be finite; got {v!r}")
            object.__setattr__(self, name, v)
        if not abs(self.cal_source_match) < 1:
            raise InputError(f"cal_source_match must have |e11| < 1; got {self.cal_source_match!r}")
        if self.cal_tracking == 0:
            raise InputError("cal_tracking (e10 e01) must not be zero: use 1.0 for a perfect one")
        if not (math.isfinite(self.balun_line_z0_ohm) and self.balun_line_z0_ohm > 0):
            raise InputError(f"balun_line_z0_ohm must be > 0 ohm; got {self.balun_line_z0_ohm!r}")
        if not (0 < self.balun_line_vf <= 1):
            raise InputError(f"balun_line_vf must satisfy 0 < VF <= 1; got {self.balun_line_vf!r}")
        if self.balun_common_mode_ohm is not None:
            z = complex(self.balun_common_mode_ohm)
            if not (math.isfinite(abs(z)) and z.real >= 0 and abs(z) > 0):
                raise InputError("balun_common_mode_ohm must be a finite impedance with R >= 0 "
                                 f"and |Z| > 0, or None for an ideal choke; got {z!r}")
            object.__setattr__(self, "balun_common_mode_ohm", z)
        if not (math.isfinite(self.cable_z0_error_ohm) and math.isfinite(self.cable_vf_error)
                and self.cable_vf_error > -1):
            raise InputError("cable_z0_error_ohm must be finite and cable_vf_error > -1 "
                             f"(relative); got {self.cable_z0_error_ohm!r}, {self.cable_vf_error!r}")

    # ---- presets -------------------------------------------------------------------
    @classmethod
    def clean(cls) -> "BenchEffects":
        """No noise, perfect calibration, ideal balun, exact cable, no joint loss or feed C."""
        return cls(noise_sigma=0.0)

    @classmethod
    def typical(cls, rng: np.random.Generator | int | None = None) -> "BenchEffects":
        """A plausible bench, drawn at random (seeded; typical, from common practice, no source).

        Ranges: noise sigma 0.001..0.003; |e00| 0.005..0.01, |e11| 0.01..0.02 with
        random phases; tracking magnitude 1 +/- 0.01 and phase +/- 0.01 rad; balun
        line 2..6 cm of 45..65 ohm at VF 0.7; balun shunt C 0.2..1 pF; choke
        1..5 kohm resistive; cable Z0 +/- 1 ohm and VF +/- 1 %; joint loss
        0.05..0.5 ohm; feed C 0.5..2 pF; extra delay 0..30 ps.

        Parameters
        ----------
        rng : numpy.random.Generator or int or None
            Random generator or seed (None: seed 0, so a demo is reproducible).
        """
        g = as_rng(rng)

        def phasor(lo, hi):
            return g.uniform(lo, hi) * np.exp(1j * g.uniform(-np.pi, np.pi))

        return cls(
            noise_sigma=g.uniform(0.001, 0.003),
            cal_directivity=complex(phasor(0.005, 0.01)),
            cal_source_match=complex(phasor(0.01, 0.02)),
            cal_tracking=complex((1 + g.uniform(-0.01, 0.01)) * np.exp(1j * g.uniform(-0.01, 0.01))),
            balun_line_m=g.uniform(0.02, 0.06),
            balun_line_z0_ohm=g.uniform(45.0, 65.0),
            balun_line_vf=0.7,
            balun_shunt_c_f=g.uniform(0.2e-12, 1.0e-12),
            balun_common_mode_ohm=complex(g.uniform(1e3, 5e3)),
            cable_z0_error_ohm=g.uniform(-1.0, 1.0),
            cable_vf_error=g.uniform(-0.01, 0.01),
            joint_loss_ohm=g.uniform(0.05, 0.5),
            feed_c_f=g.uniform(0.5e-12, 2e-12),
            extra_delay_s=g.uniform(0.0, 30e-12),
        )

    def actual_cable(self, nominal: Cable | None) -> Cable | None:
        """The cable present with its Z0 and VF errors applied (None if there is none).

        Parameters
        ----------
        nominal : refplane.Cable or None
            The cable as described (used when ``self.cable`` is None).
        """
        cable = self.cable if self.cable is not None else nominal
        if cable is None:
            return None
        return replace(cable, z0_ohm=cable.z0_ohm + self.cable_z0_error_ohm,
                       velocity_factor=cable.velocity_factor * (1.0 + self.cable_vf_error),
                       name=f"{cable.name} (as present)")

    def to_dict(self) -> dict:
        """Plain data for JSON (complex values as {re, im})."""
        out = {}
        for k, v in self.__dict__.items():
            if isinstance(v, complex):
                out[k] = {"re": v.real, "im": v.imag}
            elif isinstance(v, Cable):
                out[k] = v.describe()
            else:
                out[k] = v
        return out


def as_rng(rng) -> np.random.Generator:
    """A numpy Generator from a Generator, an int seed or None (seed 0)."""
    if isinstance(rng, np.random.Generator):
        return rng
    return np.random.default_rng(0 if rng is None else int(rng))


# ---- faults ---------------------------------------------------------------------

FAULTS = ("shorted-feed", "open-element", "common-mode", "wrong-cable", "cal-fault",
          "low-signal", "cable-open", "cable-short", "detuned")

#: Banner put in every simulated file and source (never mistake it for a measurement).
LABEL = "SIMULATED"

# Fault magnitudes: invented demo values (no source), chosen to give clear signatures.
SHORT_R_OHM = 0.3            #: shorted-feed: resistance of the short, ohm
SHORT_L_H = 1.0e-9           #: shorted-feed: lead inductance, H (about 1 mm of wire, ~1 nH/mm rule of thumb)
OPEN_REMAINING = 0.25        #: open-element: fraction of the broken arm left on the feed
CM_STUB_Z0_OHM = 200.0       #: common-mode: impedance of the shield-outside path, ohm
CM_STUB_VF = 0.9             #: common-mode: velocity factor along the jacketed shield outside
CM_STUB_LOSS_NP = 0.3        #: common-mode: one-way attenuation of that path, Np
WRONG_CABLE_EXTRA_M = 0.30   #: wrong-cable: the cable present is this much longer, m
CAL_FAULT_TRACKING = 1.41    #: cal-fault: reflection tracking magnitude (+3 dB)
CAL_FAULT_DIRECTIVITY = 0.3  #: cal-fault: directivity (a poor load standard)
CAL_FAULT_STEP = 1.1 * np.exp(0.4j)  #: cal-fault: extra tracking factor above the step
CAL_FAULT_STEP_AT = 0.6      #: cal-fault: step position as a fraction of the span
LOW_SIGNAL_SIGMA = 0.07      #: low-signal: noise per real component of Gamma
DETUNE_FRACTION = 0.03       #: detuned: electrical lengthening by a nearby object
DETUNE_EXTRA_R_OHM = 3.0     #: detuned: absorption in the object, series ohm


@dataclass(frozen=True)
class Fault:
    """A fault to build into a simulated sweep, with its documented signature.

    Parameters
    ----------
    name : str
        One of :data:`FAULTS`:

        * ``shorted-feed``: 0.3 ohm + 1 nH across the terminals; |Z| < 2 ohm at the
          terminals up to about 250 MHz.
        * ``open-element``: one dipole arm broken, ``size`` (default 0.25) of it
          left; modelled as two monopoles in series (half a dipole of twice each
          arm, a common approximation, no source), so the reactance stays strongly
          capacitive and has no X = 0 crossing in the expected band.  A monopole
          broken at ``size`` (use 0.5) resonates near 1/size times the expected
          frequency.
        * ``common-mode``: current on the outside of the feed-line shield, a lossy
          open stub of the shield's length (``distance_m``, default the cable's)
          across the terminals; ripple period c0 VF / (2 L) with VF 0.9.
        * ``wrong-cable``: the cable present is ``distance_m`` long (default the
          described one + 0.30 m); removing the described cable leaves a phase slope.
        * ``cal-fault``: tracking 1.41 (+3 dB), directivity 0.3 and a further
          x1.1 / 23 degree step in the tracking at 60 % of the span (or ``size`` as
          that fraction): a step in the trace there, and |S11| > 1 where the raw
          |Gamma| exceeds about 0.5 (at the phases where the errors add up).
        * ``low-signal``: noise sigma ``size`` (default 0.07).
        * ``cable-open`` / ``cable-short``: the cable cut ``distance_m`` (default
          half its length) from the analyser, ending in an open / a short.
        * ``detuned``: a nearby object lengthens the wire electrically by ``size``
          (default 3 %) and adds 3 ohm of absorption.
    distance_m : float, optional
        Distance or length for the cable faults, m.
    size : float, optional
        Dimensionless fault size, meaning as above.
    """

    name: str
    distance_m: float | None = None
    size: float | None = None

    def __post_init__(self):
        if self.name not in FAULTS:
            raise InputError(f"unknown fault {self.name!r}: choose one of {', '.join(FAULTS)}")
        if self.distance_m is not None and not (math.isfinite(self.distance_m) and self.distance_m > 0):
            raise InputError(f"fault distance must be a positive length in m; got {self.distance_m!r}")
        if self.size is not None and not (math.isfinite(self.size) and self.size > 0):
            raise InputError(f"fault size must be a positive number; got {self.size!r}")


def as_fault(fault) -> Fault | None:
    if fault is None or isinstance(fault, Fault):
        return fault
    return Fault(str(fault))


# ---- pieces of the chain (pure functions) -------------------------------------------

def parallel(z1_ohm, z2_ohm):
    """Two impedances in parallel, ohm."""
    z1 = np.asarray(z1_ohm, dtype=complex)
    z2 = np.asarray(z2_ohm, dtype=complex)
    return z1 * z2 / (z1 + z2)


def shunt_capacitance(f_hz, z_ohm, c_f: float):
    """Impedance ``z_ohm`` (ohm) with a capacitance ``c_f`` (F) across it, at ``f_hz`` (Hz)."""
    z = np.asarray(z_ohm, dtype=complex)
    if c_f == 0:
        return z
    return z / (1.0 + 1j * TWO_PI * np.asarray(f_hz, float) * c_f * z)


def line_input_impedance(f_hz, z_load_ohm, length_m: float, z0_ohm: float, vf: float):
    """Input impedance of a lossless line terminated in ``z_load_ohm``, ohm.

    Zin = Z0 (ZL + j Z0 tan bl) / (Z0 + j ZL tan bl) (Pozar, Microwave
    Engineering, 4th ed., eq. 2.44), b = w / (vf c0).

    Parameters
    ----------
    f_hz : array of float
        Frequencies, Hz.
    z_load_ohm : array of complex
        Load, ohm.
    length_m, z0_ohm, vf : float
        Line length (m), characteristic impedance (ohm), velocity factor.
    """
    zl = np.asarray(z_load_ohm, dtype=complex)
    if length_m == 0:
        return zl
    t = np.tan(TWO_PI * np.asarray(f_hz, float) * length_m / (vf * C0_M_PER_S))
    return z0_ohm * (zl + 1j * z0_ohm * t) / (z0_ohm + 1j * zl * t)


def open_stub_impedance(f_hz, length_m: float, z0_ohm: float, vf: float, loss_np: float):
    """Input impedance of an open-ended lossy stub, Z0 coth(gamma l), ohm.

    Pozar, Microwave Engineering, 4th ed., eq. 2.91 with ZL -> infinity.

    Parameters
    ----------
    f_hz : array of float
        Frequencies, Hz.
    length_m : float
        Stub length, m.
    z0_ohm : float
        Characteristic impedance, ohm.
    vf : float
        Velocity factor, dimensionless.
    loss_np : float
        Total one-way attenuation alpha l, neper (frequency independent here).
    """
    gl = loss_np + 1j * TWO_PI * np.asarray(f_hz, float) * length_m / (vf * C0_M_PER_S)
    return z0_ohm / np.tanh(gl)


def balun_line_side_impedance(f_hz, z_antenna_ohm, ratio: float, effects: BenchEffects):
    """Impedance at the balun's coaxial connector, ohm.

    Antenna side first: choke (shunt), balun shunt C, then the ideal impedance
    ratio, then the internal line toward the connector.

    Parameters
    ----------
    f_hz : array of float
        Frequencies, Hz.
    z_antenna_ohm : array of complex
        Impedance at the antenna terminals, ohm.
    ratio : float
        Ideal impedance ratio antenna side / line side (1 or 4), dimensionless.
    effects : BenchEffects
        Balun imperfections.
    """
    z = np.asarray(z_antenna_ohm, dtype=complex)
    if effects.balun_common_mode_ohm is not None:
        z = parallel(z, effects.balun_common_mode_ohm)
    z = shunt_capacitance(f_hz, z, effects.balun_shunt_c_f) / ratio
    return line_input_impedance(f_hz, z, effects.balun_line_m, effects.balun_line_z0_ohm,
                                effects.balun_line_vf)


def apply_error_box(gamma, e00: complex, e11: complex, e10e01: complex):
    """Raw reflection seen through a one-port three-term error box.

    Gm = e00 + e10e01 G / (1 - e11 G): directivity, source match and reflection
    tracking, the one-port three-term error model (D. Rytting, "Network analyzer
    error models and calibration methods", HP RF & Microwave Measurement
    Symposium, 1998; from memory).

    Parameters
    ----------
    gamma : array of complex
        Actual reflection, dimensionless.
    e00, e11, e10e01 : complex
        Error terms, dimensionless.
    """
    g = np.asarray(gamma, dtype=complex)
    return e00 + e10e01 * g / (1.0 - e11 * g)


def add_noise(gamma, sigma: float, rng: np.random.Generator):
    """Gamma plus independent N(0, sigma^2) noise on its real and imaginary parts."""
    g = np.asarray(gamma, dtype=complex)
    if sigma == 0:
        return g.copy()
    return g + sigma * (rng.standard_normal(g.shape) + 1j * rng.standard_normal(g.shape))
