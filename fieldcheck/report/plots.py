"""PNG plots (matplotlib, no screen needed).  Draw only; the numbers come from fieldcheck.curves."""

from __future__ import annotations

import math

from ..errors import InputError


def plot_trim(path: str, curves, title: str, headline: str) -> None:
    """Return loss (measured, fitted, after the change) and terminal R, X, to ``path`` (PNG)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    c = curves
    f_mhz = c.f_hz / 1e6
    fig, (ax1, ax2) = plt.subplots(2, 1, figsize=(8.5, 8.0), sharex=True,
                                   gridspec_kw={"height_ratios": [3, 2]})
    fig.suptitle(f"{title}\n{headline}", fontsize=10)
    ax1.plot(f_mhz, c.rl_meas_db, color="0.25", lw=1.2, label="measured")
    ax1.plot(f_mhz, c.rl_model_db, color="tab:blue", lw=1.0, ls="--", label="model fit")
    ax1.plot(f_mhz, c.rl_after_db, color="tab:green", lw=1.6, label="predicted after the change")
    rl_limit = -20 * math.log10((c.vswr_limit - 1) / (c.vswr_limit + 1))
    ax1.axhline(rl_limit, color="tab:red", lw=0.8, ls=":", label=f"VSWR {c.vswr_limit:g}")
    ax1.axvline(c.target_hz / 1e6, color="tab:red", lw=0.8, label="target")
    ax1.axvspan(c.f_fit_lo_hz / 1e6, c.f_fit_hi_hz / 1e6, color="0.95", zorder=0, label="fitted range")
    ax1.set_ylabel("return loss, dB (feed line)")
    ax1.invert_yaxis()
    ax1.grid(alpha=0.3)
    ax1.legend(fontsize=8, loc="best")
    ax2.plot(f_mhz, c.r_meas_ohm, color="0.25", lw=1.2, label="R measured")
    ax2.plot(f_mhz, c.x_meas_ohm, color="0.55", lw=1.2, label="X measured")
    ax2.plot(f_mhz, c.r_model_ohm, color="tab:blue", lw=1.0, ls="--", label="R model")
    ax2.plot(f_mhz, c.x_model_ohm, color="tab:orange", lw=1.0, ls="--", label="X model")
    ax2.axhline(0, color="k", lw=0.6)
    ax2.set_ylabel("impedance at the antenna, ohm")
    ax2.set_xlabel("frequency, MHz")
    ax2.grid(alpha=0.3)
    ax2.legend(fontsize=8, loc="best")
    lim = max(200.0, 1.2 * float(max(abs(c.r_model_ohm).max(), abs(c.x_model_ohm).max())))
    ax2.set_ylim(-min(lim, 600), min(lim, 600))
    _save(fig, path)


def plot_sweep(path: str, f_hz, gamma, title: str, vswr_limit: float = 2.0) -> None:
    """Return loss against frequency and the Smith chart of a sweep, to ``path`` (PNG).

    ``gamma`` is the reflection at the plane being shown (after any reference-plane
    removal); the Smith grid is scikit-rf's.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    import numpy as np
    from skrf.plotting import smith

    f_mhz = np.asarray(f_hz) / 1e6
    g = np.asarray(gamma)
    fig, (ax1, ax2) = plt.subplots(1, 2, figsize=(11.0, 5.0), gridspec_kw={"width_ratios": [3, 2]})
    fig.suptitle(title, fontsize=10)
    with np.errstate(divide="ignore"):
        ax1.plot(f_mhz, -20 * np.log10(np.abs(g)), color="0.2", lw=1.2)
    rl_limit = -20 * math.log10((vswr_limit - 1) / (vswr_limit + 1))
    ax1.axhline(rl_limit, color="tab:red", lw=0.8, ls=":", label=f"VSWR {vswr_limit:g}")
    ax1.invert_yaxis()
    ax1.set_xlabel("frequency, MHz")
    ax1.set_ylabel("return loss, dB")
    ax1.grid(alpha=0.3)
    ax1.legend(fontsize=8)
    smith(ax=ax2, draw_labels=True, draw_vswr=[vswr_limit])
    ax2.plot(g.real, g.imag, color="tab:blue", lw=1.2)
    ax2.plot(g.real[:1], g.imag[:1], "o", color="tab:green", ms=4, label=f"{f_mhz[0]:.6g} MHz")
    ax2.plot(g.real[-1:], g.imag[-1:], "s", color="tab:red", ms=4, label=f"{f_mhz[-1]:.6g} MHz")
    ax2.legend(fontsize=8, loc="lower left")
    _save(fig, path)


def _save(fig, path: str) -> None:
    """Write ``fig`` as PNG and always release it; an unwritable path is the user's to fix."""
    import matplotlib.pyplot as plt

    fig.tight_layout()
    try:
        fig.savefig(path, dpi=110)
    except OSError as exc:
        raise InputError(f"cannot write the plot: {exc.strerror or exc}; choose a writable path",
                         path) from exc
    finally:
        plt.close(fig)
