"""The generic weighted fit against closed-form linear least squares and known noise."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from fieldcheck.errors import InputError
from fieldcheck.fit import ParamSpec, estimate_noise_sigma, fit_reflection


def _linear_case(seed, sigma=0.01, n=200):
    rng = np.random.default_rng(seed)
    f = np.linspace(1e6, 2e6, n)
    x = (f - 1.5e6) / 0.5e6
    # Gamma = a + b x (a, b real): a linear model whose least-squares solution
    # and covariance sigma^2 (A^T A)^-1 are closed forms (e.g. Press et al.,
    # Numerical Recipes, 3rd ed., section 15.4).
    true = {"a": 0.2, "b": -0.1}
    g = true["a"] + true["b"] * x + sigma * (rng.standard_normal(n) + 1j * rng.standard_normal(n))
    model = lambda f_, v: v["a"] + v["b"] * (f_ - 1.5e6) / 0.5e6 + 0j  # noqa: E731
    return f, g, x, model, true


def test_linear_model_matches_closed_form_least_squares():
    sigma = 0.01
    f, g, x, model, _ = _linear_case(3, sigma)
    params = [ParamSpec("a", "1", 0.0, -1, 1), ParamSpec("b", "1", 0.05, -1, 1)]
    res = fit_reflection(f, g, model, params, noise_sigma=sigma)
    A = np.column_stack([np.ones_like(x), x])
    coef, *_ = np.linalg.lstsq(A, g.real, rcond=None)
    assert_allclose([res.values["a"], res.values["b"]], coef, atol=1e-8)
    cov_closed = sigma**2 * np.linalg.inv(A.T @ A)
    # The fit inflates only upward (reduced chi-square, residual correlation); white noise
    # at the stated sigma leaves the factor within a few percent of 1.
    assert 1.0 <= res.covariance_scale < 1.3
    assert_allclose(res.covariance / res.covariance_scale, cov_closed, rtol=1e-6, atol=1e-12)
    assert res.adequacy == "good"


def test_noise_estimate_recovers_sigma_on_a_smooth_trace():
    rng = np.random.default_rng(7)
    f = np.linspace(0, 1, 801)
    smooth = 0.5 * np.exp(2j * np.pi * 1.5 * f)
    for sigma in (1e-3, 5e-3, 2e-2):
        g = smooth + sigma * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
        assert_allclose(estimate_noise_sigma(g), sigma, rtol=0.12)


def test_out_of_bounds_start_is_an_error_not_clamped():
    with pytest.raises(InputError, match="outside its bounds"):
        ParamSpec("r", "ohm", -1.0, 0.0, 10.0)


def test_structured_misfit_is_flagged_and_errors_inflated():
    f, g, x, _, _ = _linear_case(5, sigma=1e-3)
    g = g + 0.1 * x**2  # a curvature the straight-line model cannot follow
    model = lambda f_, v: v["a"] + v["b"] * (f_ - 1.5e6) / 0.5e6 + 0j  # noqa: E731
    params = [ParamSpec("a", "1", 0.0, -1, 1), ParamSpec("b", "1", 0.0, -1, 1)]
    res = fit_reflection(f, g, model, params)
    assert res.adequacy in ("marginal", "inadequate")
    assert res.residual_autocorr > 0.8
    assert res.covariance_scale > 100
