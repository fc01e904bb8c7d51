"""Weighted least-squares fit of a reflection model to a measured sweep.

The fit is a function, :func:`fit_reflection`, returning a :class:`FitResult`
with a fixed schema.  It knows nothing about antennas: the caller passes a
model ``gamma(f_hz, values) -> complex ndarray`` and the parameter specs.

Weighting and covariance
------------------------
Residuals are the real and imaginary parts of ``Gamma_model - Gamma_measured``
divided by the measurement noise sigma, estimated from the data themselves
(:func:`estimate_noise_sigma`).  The stated covariance has two parts:

* statistical: ``(J^T J)^-1`` at the solution, multiplied by
  ``max(1, reduced chi-square)``, so that when the model misses something the
  misfit is treated as extra noise and the errors grow instead of staying at
  the noise-only value (the usual "scale by the residual variance" practice,
  e.g. Press et al., Numerical Recipes, 3rd ed., section 15.6, applied only
  upward);
* systematic: the parameter shifts that known bench error terms of a given
  size but unknown phase would cause (for example a calibration's residual
  directivity, source match and tracking).  Each term ``m * exp(j phi) * b(f)``
  with phi uniform gives, to first order, a shift ``dp = -J^+ dr``; averaged
  over phi its covariance is ``m^2 / 2 (a a^T + c c^T)`` with ``a``, ``c`` the
  shifts for the real and imaginary unit phasors.  Such errors leave no trace in
  the residuals (the fit absorbs them), so only this term can make the error
  bars cover them.

Neither part can make the errors smaller than the noise alone implies.  The
lag-1 autocorrelation of the residuals is reported as a diagnostic of
structured misfit.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import least_squares

from .errors import FitError, InputError

#: Smallest noise sigma we believe, in |Gamma| units: about -80 dB, the trace
#: noise of a good VNA at narrow IF bandwidth (common practice, no source).
NOISE_FLOOR = 1e-4

#: Reduced chi-square below which the model is taken to describe the data.
CHI2_GOOD = 2.0
#: RMS residual in |Gamma| (about -26 dB) above which the misfit is too large to
#: trust parameters fitted through it (common practice, no source: a misfit
#: comparable to a 1.1:1 VSWR ripple swamps the length information).
RESIDUAL_RMS_INADEQUATE = 0.05


@dataclass(frozen=True)
class ParamSpec:
    """One fit parameter.

    An initial value outside [lower, upper] is an error, never silently clamped.
    ``prior`` (mean, sigma), when given, adds a Gaussian prior: the fit then
    minimises chi-square plus ((value - mean) / sigma)^2, which keeps a
    parameter that the data cannot pin (for example a residual delay over a
    narrow sweep) near a physically sensible value; strong data still win.
    """

    name: str
    unit: str
    initial: float
    lower: float = -np.inf
    upper: float = np.inf
    fixed: bool = False
    prior: tuple | None = None

    def __post_init__(self):
        if not self.lower <= self.initial <= self.upper:
            raise InputError(
                f"parameter {self.name}: start value {self.initial:g} {self.unit} lies outside "
                f"its bounds [{self.lower:g}, {self.upper:g}]"
            )


@dataclass(frozen=True)
class FitResult:
    """Outcome of :func:`fit_reflection`.

    Attributes
    ----------
    names : tuple of str
        Free parameter names, in covariance order.
    values, stderr : dict
        Best values and standard errors of every parameter (fixed ones have
        stderr 0), in the units of their specs.
    units : dict
        Unit of each parameter.
    covariance : ndarray, shape (n_free, n_free)
        Scaled covariance (see module docstring), order ``names``.
    noise_sigma : float
        Estimated measurement noise per real component of Gamma.
    residual_rms : float
        RMS of |Gamma_model - Gamma_measured| over the fitted points.
    chi2, dof, reduced_chi2 : float, int, float
    residual_autocorr : float
        Lag-1 autocorrelation of the residuals (0 for white noise).
    covariance_scale : float
        Factor applied to (J^T J)^-1 (max of 1 and the reduced chi-square).
    adequacy : str
        ``'good'``, ``'marginal'`` or ``'inadequate'``.
    adequacy_reason : str
    at_bounds : tuple of str
        Parameters that ended on a bound (their errors are not meaningful).
    success : bool
    message : str
    f_hz : ndarray
        Frequencies used in the fit.
    residual : ndarray (complex)
        Gamma_model - Gamma_measured at ``f_hz``.
    gamma_model : ndarray (complex)
        The fitted model at ``f_hz``.
    covariance_statistical : ndarray
        The statistical part of ``covariance`` alone (no systematic terms):
        what differs from one sweep to the next on the same bench.
    shift_map : ndarray, shape (n_free, 2 n)
        Linear map from a perturbation of the data (real parts then imaginary
        parts, in Gamma) to the parameter shift it causes: the negative
        pseudo-inverse of the Jacobian, in parameter units.  Used by
        :func:`systematic_covariance`.
    """

    names: tuple
    values: dict
    stderr: dict
    units: dict
    covariance: np.ndarray
    noise_sigma: float
    residual_rms: float
    chi2: float
    dof: int
    reduced_chi2: float
    residual_autocorr: float
    covariance_scale: float
    adequacy: str
    adequacy_reason: str
    at_bounds: tuple
    success: bool
    message: str
    f_hz: np.ndarray = field(repr=False)
    residual: np.ndarray = field(repr=False)
    gamma_model: np.ndarray = field(repr=False, default=None)
    shift_map: np.ndarray = field(repr=False, default=None)
    covariance_statistical: np.ndarray = field(repr=False, default=None)

    def to_dict(self) -> dict:
        return {
            "parameters": {
                n: {"value": self.values[n], "stderr": self.stderr[n], "unit": self.units[n]}
                for n in self.values
            },
            "covariance_order": list(self.names),
            "covariance": self.covariance.tolist(),
            "noise_sigma": self.noise_sigma,
            "residual_rms": self.residual_rms,
            "chi2": self.chi2,
            "dof": self.dof,
            "reduced_chi2": self.reduced_chi2,
            "residual_autocorr": self.residual_autocorr,
            "covariance_scale": self.covariance_scale,
            "adequacy": self.adequacy,
            "adequacy_reason": self.adequacy_reason,
            "at_bounds": list(self.at_bounds),
            "success": self.success,
            "message": self.message,
            "f_start_hz": float(self.f_hz[0]),
            "f_stop_hz": float(self.f_hz[-1]),
            "n_points": int(self.f_hz.size),
        }


def estimate_noise_sigma(gamma: np.ndarray) -> float:
    """Noise sigma per real component, from second differences of the trace.

    For white noise of variance s^2 the second difference has variance 6 s^2;
    a smooth trace contributes little to it.  The median absolute deviation
    (scaled by 1.4826 for a Gaussian) keeps steps and spikes from dominating.
    """
    g = np.asarray(gamma)
    if g.size < 5:
        return NOISE_FLOOR
    d2 = g[:-2] - 2 * g[1:-1] + g[2:]
    parts = np.concatenate([d2.real, d2.imag])
    mad = np.median(np.abs(parts - np.median(parts)))
    return float(max(1.4826 * mad / np.sqrt(6.0), NOISE_FLOOR))


def fit_reflection(f_hz, gamma_meas, model, params, *, noise_sigma=None, systematics=()) -> FitResult:
    """Fit ``model(f_hz, values_dict)`` to measured reflection ``gamma_meas``.

    Parameters
    ----------
    f_hz : ndarray
        Frequencies, Hz.
    gamma_meas : ndarray of complex
        Measured reflection at the same frequencies.
    model : callable
        ``model(f_hz, values: dict) -> complex ndarray``.
    params : sequence of ParamSpec
    noise_sigma : float, optional
        Known noise per real component; estimated from the data when omitted.
    systematics : sequence of (magnitude, callable)
        Bench error terms: ``callable(gamma_model) -> complex ndarray`` is the
        term's shape b(f) (e.g. ``lambda g: g**2`` for source match) and
        ``magnitude`` its size with unknown phase (see the module docstring).
    """
    f = np.asarray(f_hz, dtype=float)
    g = np.asarray(gamma_meas, dtype=complex)
    free = [p for p in params if not p.fixed]
    fixed = {p.name: p.initial for p in params if p.fixed}
    if not free:
        raise FitError("nothing to fit: every parameter is fixed")
    n_res = 2 * f.size
    if n_res <= len(free):
        raise FitError(f"{f.size} points cannot determine {len(free)} parameters")
    sigma = estimate_noise_sigma(g) if noise_sigma is None else float(noise_sigma)
    # Scale parameters to O(1) so the trust region is isotropic.
    scale = np.array([_param_scale(p) for p in free])

    def values_of(x):
        v = dict(fixed)
        v.update({p.name: xi * s for p, xi, s in zip(free, x, scale)})
        return v

    priors = [(i, p.prior[0] / s, p.prior[1] / s) for i, (p, s) in enumerate(zip(free, scale))
              if p.prior is not None]

    def residuals(x):
        d = model(f, values_of(x)) - g
        prior_terms = [(x[i] - mean) / width for i, mean, width in priors]
        return np.concatenate([d.real / sigma, d.imag / sigma, prior_terms])

    x0 = np.array([p.initial for p in free]) / scale
    lo = np.array([p.lower for p in free]) / scale
    hi = np.array([p.upper for p in free]) / scale
    try:
        sol = least_squares(residuals, x0, bounds=(lo, hi), x_scale="jac", method="trf")
    except ValueError as exc:  # model produced NaN/inf
        raise FitError(f"the model could not be evaluated during the fit: {exc}") from exc
    values = values_of(sol.x)
    r = sol.fun[:n_res]  # the data part; priors are not measurements
    chi2 = float(r @ r)
    dof = n_res - len(free)
    red = chi2 / dof
    d = model(f, values) - g
    rms = float(np.sqrt(np.mean(np.abs(d) ** 2)))
    rho = _lag1_autocorr(d)
    scale_cov = max(1.0, red)
    J = sol.jac
    try:
        j_pinv = np.linalg.pinv(J)
    except np.linalg.LinAlgError as exc:  # pragma: no cover - pinv rarely fails
        raise FitError(f"covariance could not be computed: {exc}") from exc
    cov_stat = (j_pinv @ j_pinv.T) * scale_cov * np.outer(scale, scale)
    g_fit = g + d
    shift_map = -(j_pinv[:, :n_res] * scale[:, None]) / sigma
    cov = cov_stat + _systematic_cov(shift_map, g_fit, systematics)
    err = np.sqrt(np.clip(np.diag(cov), 0, None))
    stderr = {p.name: 0.0 for p in params if p.fixed}
    stderr.update({p.name: float(e) for p, e in zip(free, err)})
    tol = 1e-6 * (hi - lo + 1)
    at_bounds = tuple(
        p.name for p, xi, l_, h_, t in zip(free, sol.x, lo, hi, tol)
        if (np.isfinite(l_) and xi - l_ < t) or (np.isfinite(h_) and h_ - xi < t)
    )
    adequacy, reason = _adequacy(red, rms, rho, sigma)
    return FitResult(
        names=tuple(p.name for p in free),
        values={p.name: float(values[p.name]) for p in params},
        stderr=stderr,
        units={p.name: p.unit for p in params},
        covariance=cov,
        noise_sigma=sigma,
        residual_rms=rms,
        chi2=chi2,
        dof=dof,
        reduced_chi2=red,
        residual_autocorr=rho,
        covariance_scale=float(scale_cov),
        adequacy=adequacy,
        adequacy_reason=reason,
        at_bounds=at_bounds,
        success=bool(sol.success),
        message=str(sol.message),
        f_hz=f,
        residual=d,
        gamma_model=g_fit,
        shift_map=shift_map,
        covariance_statistical=cov_stat,
    )


def systematic_covariance(result: FitResult, systematics) -> np.ndarray:
    """Covariance of the parameter shifts that ``systematics`` would cause in ``result``.

    Parameters
    ----------
    result : FitResult
    systematics : sequence of (magnitude, callable)
        As for :func:`fit_reflection`.
    """
    return _systematic_cov(result.shift_map, result.gamma_model, systematics)


def _systematic_cov(shift_map, g_fit, systematics) -> np.ndarray:
    """Sum over terms of m^2/2 (a a^T + c c^T); see the module docstring."""
    n = shift_map.shape[0]
    cov = np.zeros((n, n))
    for magnitude, shape in systematics:
        b = np.asarray(shape(g_fit), dtype=complex) * np.ones_like(g_fit)
        for unit in (1.0, 1j):
            dp = shift_map @ np.concatenate([(unit * b).real, (unit * b).imag])
            cov += 0.5 * magnitude**2 * np.outer(dp, dp)
    return cov


def _param_scale(p: ParamSpec) -> float:
    if p.initial != 0:
        return abs(p.initial)
    span = p.upper - p.lower
    return abs(span) / 10 if np.isfinite(span) and span > 0 else 1.0


def _lag1_autocorr(d: np.ndarray) -> float:
    x = np.concatenate([d.real - d.real.mean(), d.imag - d.imag.mean()])
    n = d.size
    num = np.dot(x[: n - 1], x[1:n]) + np.dot(x[n : 2 * n - 1], x[n + 1 :])
    den = np.dot(x, x)
    return float(num / den) if den > 0 else 0.0


def _adequacy(red: float, rms: float, rho: float, sigma: float) -> tuple[str, str]:
    if red <= CHI2_GOOD:
        return "good", f"residuals look like the measurement noise (reduced chi-square {red:.2f})"
    if rms > RESIDUAL_RMS_INADEQUATE:
        return "inadequate", (
            f"the model misses the measurement by {rms:.3f} RMS in Gamma "
            f"({red:.0f} times the noise variance, residual correlation {rho:.2f}): "
            "it does not describe this antenna, so its numbers are not to be trusted"
        )
    return "marginal", (
        f"residuals are structured (reduced chi-square {red:.1f}, correlation {rho:.2f}) but "
        f"small ({rms:.4f} RMS in Gamma); uncertainties have been inflated to cover them"
    )
