"""Curves for plots: measured and model traces of a fitted antenna, before and after the change.

Pure computation (reports only draw what this returns).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .antenna_fit import AntennaFit, feed_of
from .sweep import Sweep, gamma_from_impedance, return_loss_db


@dataclass(frozen=True)
class TrimCurves:
    """Everything a trim plot shows, in SI units (Hz, dB, ohm).

    ``*_meas`` are read off the sweep at the antenna side of the balun; the
    model curves include the fitted feed parasitics; ``rl_after_db`` is the
    model after the advised change (no residual delay: the antenna itself).
    """

    f_hz: np.ndarray
    rl_meas_db: np.ndarray
    rl_model_db: np.ndarray
    rl_after_db: np.ndarray
    r_meas_ohm: np.ndarray
    x_meas_ohm: np.ndarray
    r_model_ohm: np.ndarray
    x_model_ohm: np.ndarray
    f_fit_lo_hz: float
    f_fit_hi_hz: float
    target_hz: float
    vswr_limit: float


def trim_curves(af: AntennaFit, sweep: Sweep, length_after_m: float, target_hz: float,
                vswr_limit: float) -> TrimCurves:
    """Measured and model curves over the sweep, for the length now and after the change."""
    from .trim import _predicting

    m = _predicting(af)
    v = af.fit.values
    fd = feed_of(v)
    f = sweep.f_hz
    g_line = gamma_from_impedance(sweep.z_ohm, m.z0_ohm)
    g_model = m.gamma(f, v["length_m"], fd["r_loss_ohm"], fd["c_feed_f"], v["delay_s"], fd["g_feed_s"])
    g_after = m.gamma(f, length_after_m, fd["r_loss_ohm"], fd["c_feed_f"], 0.0, fd["g_feed_s"])
    # Impedance at the antenna terminals: undo the fitted residual delay, then the balun.
    g_ant = g_line * np.exp(2j * 2 * np.pi * f * v["delay_s"])
    z_ant = m.z0_ohm * (1 + g_ant) / (1 - g_ant) * m.balun_ratio
    z_model = m.z_terminals(f, v["length_m"], fd["r_loss_ohm"], fd["c_feed_f"], fd["g_feed_s"])
    return TrimCurves(
        f_hz=f, rl_meas_db=return_loss_db(g_line), rl_model_db=return_loss_db(g_model),
        rl_after_db=return_loss_db(g_after),
        r_meas_ohm=z_ant.real, x_meas_ohm=z_ant.imag,
        r_model_ohm=z_model.real, x_model_ohm=z_model.imag,
        f_fit_lo_hz=float(af.fit.f_hz[0]), f_fit_hi_hz=float(af.fit.f_hz[-1]),
        target_hz=float(target_hz), vswr_limit=float(vswr_limit),
    )
