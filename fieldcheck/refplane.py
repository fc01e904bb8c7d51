"""Move a measured sweep from the analyser's reference plane to the antenna terminals.

Three removals are offered, and :func:`apply_from_options` always applies them
in this physical order, walking from the analyser toward the antenna::

    analyser -- cable -- fixture -- delay -- antenna terminals
                  1         2         3

1. **cable** (nearest the analyser): a uniform coaxial line of known type and
   length, modelled as a lossy line with real Z0 (:func:`remove_cable`);
2. **fixture**: a measured 2-port (adapter, balun, test jig) with port 1
   toward the analyser and port 2 toward the antenna (:func:`remove_fixture`);
3. **delay** (nearest the antenna): a residual one-way lossless delay in the
   sweep's reference impedance, i.e. a port extension (:func:`remove_delay`).

Each removal returns a new :class:`~fieldcheck.sweep.Sweep` on the same grid
and appends a note that says what was removed and where it sits in that order.
All physics here is pure; the only file access is the fixture read in
:func:`apply_from_options`, delegated to :mod:`fieldcheck.touchstone`.
"""

from __future__ import annotations

import numpy as np

from .cables import CABLE_TYPES, list_cables_text, parse_cable_loss
from .constants import C0_M_PER_S
from .errors import InputError
# The Cable description and the text parsers live in refplane_inputs; they are
# re-exported here (see __all__).
from .refplane_inputs import (DB_PER_NEPER, Cable, check_positive,  # noqa: F401
                              parse_cable, parse_delay)
from .sweep import Sweep

__all__ = [
    "Cable", "parse_cable", "parse_cable_loss", "cable_abcd", "abcd_to_s",
    "add_cable", "remove_cable", "remove_fixture", "add_delay", "remove_delay",
    "parse_delay", "apply_from_options", "list_cables_text", "CABLE_TYPES",
]

#: Relative tolerance for "the fixture covers the sweep" and "same grid": VNAs
#: write frequencies with 6-10 significant digits, so 1e-9 only absorbs rounding.
GRID_RTOL = 1e-9

#: Fixture phase step (S21, between adjacent fixture points) above which linear
#: interpolation is flagged in the note (common practice, no source).
FIXTURE_PHASE_STEP_WARN_DEG = 20.0

_ORDER = "order: cable -> fixture -> delay, analyser to antenna"

#: |S11| this far above 1 after a removal is reported as a sign of an overstated
#: loss or a wrong length/fixture (a passive load has |S11| <= 1; the margin
#: absorbs analyser noise, common practice, no source).
ACTIVE_GAMMA_MARGIN = 0.02


# ---- two-port algebra --------------------------------------------------------

def cable_abcd(f_hz, cable: Cable) -> np.ndarray:
    """ABCD matrix of a lossy line with real Z0, shape (n, 2, 2).

    [[cosh gl, Z0 sinh gl], [sinh gl / Z0, cosh gl]] (Pozar, Microwave
    Engineering, 4th ed., Table 4.1, transmission line, with j beta -> gamma).
    Z0 is taken real: the low-loss approximation Z0 ~ sqrt(L/C) (Pozar 4th
    ed., section 2.7), good when R << wL and G << wC, i.e. any coax above a
    few hundred kHz.

    Parameters
    ----------
    f_hz : array of float
        Frequencies, Hz.
    cable : Cable
        The line.
    """
    gl = cable.gamma_per_m(np.atleast_1d(f_hz)) * cable.length_m
    ch, sh = np.cosh(gl), np.sinh(gl)
    z0 = cable.z0_ohm
    return np.stack([np.stack([ch, z0 * sh], -1), np.stack([sh / z0, ch], -1)], -2)


def abcd_to_s(abcd: np.ndarray, z0_ohm: float):
    """S-parameters (s11, s12, s21, s22) of an ABCD matrix in real reference ``z0_ohm`` (ohm).

    Pozar, Microwave Engineering, 4th ed., Table 4.2.
    """
    a, b, c, d = abcd[..., 0, 0], abcd[..., 0, 1], abcd[..., 1, 0], abcd[..., 1, 1]
    den = a + b / z0_ohm + c * z0_ohm + d
    s11 = (a + b / z0_ohm - c * z0_ohm - d) / den
    s12 = 2.0 * (a * d - b * c) / den
    s21 = 2.0 / den
    s22 = (-a + b / z0_ohm - c * z0_ohm + d) / den
    return s11, s12, s21, s22


def _embed(gamma_l, s11, s12, s21, s22):
    """Reflection seen at port 1 with a load on port 2: S11 + S12 S21 GL / (1 - S22 GL)."""
    return s11 + s12 * s21 * gamma_l / (1.0 - s22 * gamma_l)


def _deembed(gamma_m, s11, s12, s21, s22):
    """Load reflection behind a known 2-port: GL = (Gm - S11) / (S22 (Gm - S11) + S12 S21).

    The inverse of :func:`_embed`, whose form is the input reflection of a
    terminated two-port (Pozar, Microwave Engineering, 4th ed., section 12.1;
    eq. 12.3a from memory), solved for the load.
    """
    d = gamma_m - s11
    return d / (s22 * d + s12 * s21)


def _finish(sweep: Sweep, gamma_l: np.ndarray, note: str, what: str) -> Sweep:
    """New sweep with ``gamma_l``; refuse non-finite results, flag |S11| > 1 in the note."""
    bad = ~np.isfinite(gamma_l)
    if np.any(bad):
        f_bad = sweep.f_hz[np.flatnonzero(bad)[0]]
        raise InputError(
            f"removing the {what} gives no finite result at {f_bad:.9g} Hz (the {what} "
            "blocks the signal there): check its description or measurement", sweep.source)
    over = np.abs(gamma_l) > 1.0 + ACTIVE_GAMMA_MARGIN
    if np.any(over):
        note += (f"; WARNING: |S11| > 1 at {int(over.sum())} of {over.size} points after removal "
                 f"(max {np.max(np.abs(gamma_l)):.3g}): the {what} loss or length is probably "
                 "overstated")
    return sweep.with_s11(gamma_l, note=note)


# ---- cable -------------------------------------------------------------------

def _cable_s(sweep: Sweep, cable: Cable):
    return abcd_to_s(cable_abcd(sweep.f_hz, cable), sweep.z0_ohm)


def _cable_note(verb: str, sweep: Sweep, cable: Cable) -> str:
    loss_max_db = float(cable.loss_db_per_m(sweep.f_hz[-1]) * cable.length_m)
    delay_ns = cable.length_m / (cable.velocity_factor * C0_M_PER_S) * 1e9
    return (f"cable {verb} (step 1, nearest the analyser; {_ORDER}): {cable.describe()}; "
            f"one-way delay {delay_ns:.4g} ns, matched loss {loss_max_db:.3g} dB at the top "
            f"of the sweep (sqrt(f) scaling, optimistic at UHF)")


def add_cable(sweep: Sweep, cable: Cable) -> Sweep:
    """What the analyser would see with ``cable`` in front of ``sweep`` (the inverse of removal)."""
    s = _cable_s(sweep, cable)
    return sweep.with_s11(_embed(sweep.s11, *s), note=_cable_note("added", sweep, cable))


def remove_cable(sweep: Sweep, cable: Cable) -> Sweep:
    """Remove a coaxial cable that sat between the analyser and the rest.

    The cable's ABCD matrix (real Z0, possibly different from the sweep's
    reference, e.g. 75-ohm cable on a 50-ohm analyser) is turned into S
    parameters in the sweep's reference impedance, and the load is solved
    from the measured reflection.  Equivalent to the lossy terminated-line
    formula solved for ZL (Pozar, Microwave Engineering, 4th ed., eq. 2.91),
    but stays finite for measured opens and shorts.

    Parameters
    ----------
    sweep : Sweep
        Measured at the analyser end of the cable.
    cable : Cable
        The cable.

    Returns
    -------
    Sweep
        Referred to the far end of the cable, same reference impedance.
    """
    s = _cable_s(sweep, cable)
    return _finish(sweep, _deembed(sweep.s11, *s), _cable_note("removed", sweep, cable), "cable")


# ---- fixture -----------------------------------------------------------------

def _fixture_on_grid(sweep: Sweep, fixture, source: str):
    """Fixture S (4 arrays) on the sweep's grid and a short description of how."""
    f_fx = np.asarray(fixture.frequency.f, dtype=float)
    s = np.asarray(fixture.s, dtype=complex)
    if s.ndim != 3 or s.shape[1:] != (2, 2):
        raise InputError(
            f"a fixture must be a 2-port (port 1 toward the analyser, port 2 toward the "
            f"antenna); this one has shape {s.shape[1:]}: supply an .s2p file", source)
    if f_fx.size < 2 or np.any(np.diff(f_fx) <= 0):
        raise InputError("fixture frequencies must be at least 2, strictly increasing", source)
    z0_fx = np.asarray(fixture.z0)
    f_sw = sweep.f_hz
    lo, hi = f_fx[0] * (1 - GRID_RTOL), f_fx[-1] * (1 + GRID_RTOL)
    if f_sw[0] < lo or f_sw[-1] > hi:
        raise InputError(
            f"the fixture covers {f_fx[0]:.9g} to {f_fx[-1]:.9g} Hz but the sweep runs from "
            f"{f_sw[0]:.9g} to {f_sw[-1]:.9g} Hz; measure the fixture over at least the "
            "sweep's span (extrapolating a fixture is not done)", source)
    if not np.allclose(z0_fx, sweep.z0_ohm, rtol=1e-12, atol=0):
        # Real, different port impedances: renormalise a copy, never the caller's network.
        if np.any(np.abs(np.imag(z0_fx)) > 0):
            raise InputError("fixture port impedances must be real; re-export the fixture "
                             "referred to a real impedance", source)
        fixture = fixture.copy()
        fixture.renormalize(sweep.z0_ohm)
        s = np.asarray(fixture.s, dtype=complex)
        how_z0 = f"renormalised from {np.real(z0_fx).ravel()[0]:g} to {sweep.z0_ohm:g} ohm; "
    else:
        how_z0 = ""
    same = f_fx.size == f_sw.size and np.allclose(f_fx, f_sw, rtol=GRID_RTOL, atol=0)
    if same:
        return (s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]), how_z0 + "same grid"
    # Explicit linear interpolation of Re and Im of each S-parameter (our own,
    # np.interp): no silent grid intersection as in a network cascade.
    out = tuple(np.interp(f_sw, f_fx, s[:, i, j].real) + 1j * np.interp(f_sw, f_fx, s[:, i, j].imag)
                for i, j in ((0, 0), (0, 1), (1, 0), (1, 1)))
    inside = (f_fx >= f_sw[0] * (1 - GRID_RTOL)) & (f_fx <= f_sw[-1] * (1 + GRID_RTOL))
    idx = np.flatnonzero(inside)
    idx = np.arange(max(idx[0] - 1, 0), min(idx[-1] + 2, f_fx.size)) if idx.size else np.arange(f_fx.size)
    step_deg = float(np.max(np.abs(np.degrees(np.diff(np.unwrap(np.angle(s[idx, 1, 0])))))))
    how = (how_z0 + f"{f_fx.size} fixture points linearly interpolated (Re/Im) onto "
           f"{f_sw.size} sweep points")
    if step_deg > FIXTURE_PHASE_STEP_WARN_DEG:
        how += (f"; WARNING: fixture S21 phase moves {step_deg:.3g} deg between its points, "
                "interpolation may be poor: measure the fixture on a finer grid")
    return out, how


def remove_fixture(sweep: Sweep, fixture, *, source: str | None = None) -> Sweep:
    """Remove a measured 2-port fixture (port 1 toward the analyser, port 2 toward the antenna).

    The frequency grids are checked first: a fixture that does not cover the
    sweep's span is refused.  Otherwise its S-parameters are interpolated
    linearly in real and imaginary parts onto the sweep's grid with
    ``numpy.interp`` (used as is when the grids agree), renormalised to the
    sweep's reference if needed, and the load is solved as
    GL = (Gm - S11) / (S22 (Gm - S11) + S12 S21).

    Parameters
    ----------
    sweep : Sweep
        Measured at port 1 of the fixture.
    fixture : skrf.Network
        Two-port network of the fixture, frequencies in Hz.
    source : str, optional
        File name for messages and the note (default: the network's name).

    Raises
    ------
    InputError
        Not a 2-port, not covering the sweep, or complex port impedances.
    """
    source = source or getattr(fixture, "name", None) or "<fixture>"
    s, how = _fixture_on_grid(sweep, fixture, source)
    gl = _deembed(sweep.s11, *s)
    note = (f"fixture removed (step 2, between cable and delay; {_ORDER}): {source}, "
            f"port 1 toward the analyser, port 2 toward the antenna; {how}")
    return _finish(sweep, gl, note, "fixture")


# ---- delay -------------------------------------------------------------------

def _delay_note(verb: str, delay_s: float) -> str:
    return (f"delay {verb} (step 3, nearest the antenna; {_ORDER}): one-way "
            f"{delay_s * 1e12:.6g} ps lossless in the sweep's reference impedance "
            f"({delay_s * C0_M_PER_S:.4g} m in free space)")


def remove_delay(sweep: Sweep, delay_s: float) -> Sweep:
    """Remove a one-way lossless delay (port extension): GL = Gm exp(+j 2 w tau).

    Parameters
    ----------
    sweep : Sweep
        Measured sweep.
    delay_s : float
        One-way delay, s, > 0.
    """
    check_positive(delay_s, "delay", "write e.g. --delay 1.2ns")
    w = 2.0 * np.pi * sweep.f_hz
    return sweep.with_s11(sweep.s11 * np.exp(2j * w * delay_s), note=_delay_note("removed", delay_s))


def add_delay(sweep: Sweep, delay_s: float) -> Sweep:
    """The inverse of :func:`remove_delay`: Gm = GL exp(-j 2 w tau), ``delay_s`` in s."""
    check_positive(delay_s, "delay", "write e.g. --delay 1.2ns")
    w = 2.0 * np.pi * sweep.f_hz
    return sweep.with_s11(sweep.s11 * np.exp(-2j * w * delay_s), note=_delay_note("added", delay_s))


# ---- all together, as the command line asks ----------------------------------

def apply_from_options(sweep: Sweep, *, cable=None, cable_vf=None, cable_loss=None,
                       cable_z0=None, fixture=None, delay=None, delay_vf=1.0) -> Sweep:
    """Apply the requested removals in the order cable, fixture, delay.

    Parameters
    ----------
    sweep : Sweep
        As read from the analyser.
    cable : str, optional
        ``"TYPE:LENGTH"`` (see :func:`parse_cable`).
    cable_vf : float, optional
        Velocity factor override, dimensionless.
    cable_loss : str, optional
        ``"DB@FREQ"``, dB per 100 m at a frequency.
    cable_z0 : float, optional
        Cable impedance override, ohm.
    fixture : str or skrf.Network, optional
        Path of a 2-port Touchstone file (read with
        ``fieldcheck.touchstone.read_network``) or a network.
    delay : str or float, optional
        One-way delay: text for :func:`parse_delay`, or seconds.
    delay_vf : float
        Velocity factor for a delay given as a length, dimensionless.

    Returns
    -------
    Sweep
        At the antenna terminals (unchanged when nothing is requested).
    """
    if cable is None and any(v is not None for v in (cable_vf, cable_loss, cable_z0)):
        raise InputError("--cable-vf, --cable-loss and --cable-z0 only modify a cable: "
                         "add --cable TYPE:LENGTH, e.g. --cable custom:3m --cable-vf 0.66")
    if delay is None and delay_vf != 1.0:
        raise InputError("--delay-vf only applies to --delay given as a length: "
                         "add e.g. --delay 0.35m")
    out = sweep
    if cable is not None:
        out = remove_cable(out, parse_cable(cable, vf=cable_vf, loss=cable_loss, z0=cable_z0))
    if fixture is not None:
        if isinstance(fixture, (str, bytes)) or hasattr(fixture, "__fspath__"):
            from . import touchstone  # written alongside; imported lazily on purpose

            path = str(fixture)
            out = remove_fixture(out, touchstone.read_network(path), source=path)
        else:
            out = remove_fixture(out, fixture)
    if delay is not None:
        delay_s = float(delay) if isinstance(delay, (int, float)) else parse_delay(delay, delay_vf)
        out = remove_delay(out, delay_s)
    return out
