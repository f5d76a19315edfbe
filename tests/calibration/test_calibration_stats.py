"""The fit's statistics: least-squares covariance against scipy's curve_fit, the Newey-West sum and the
exponential filter against brute force, the error model against series of known make-up, the modelled covariance
against a Monte-Carlo of ordinary least squares under correlated errors, and the small diagnostics."""

import math

import numpy as np
import pytest
from scipy.integrate import dblquad, quad
from scipy.optimize import curve_fit

from atticsim.calibration import stats
from atticsim.calibration.synthetic import wander


def test_plain_covariance_is_curve_fits():
    # a straight line through noisy points: scipy's curve_fit (absolute_sigma=False) scales (J^T J)^-1 by
    # RSS / (n - p), as the plain covariance does
    rng = np.random.default_rng(4)
    x = np.linspace(0.0, 10.0, 50)
    y = 1.5 + 0.3 * x + rng.normal(0.0, 0.2, x.size)
    popt, pcov = curve_fit(lambda x, a, b: a + b * x, x, y)
    jac = np.column_stack([np.ones_like(x), x])
    resid = popt[0] + popt[1] * x - y
    plain, _ = stats.covariance(jac, resid, np.arange(x.size), x.size, lags=1)
    np.testing.assert_allclose(plain, pcov, rtol=1e-6)  # curve_fit's iterations stop within 1e-8


def test_newey_west_sum_is_the_bartlett_weighted_sum():
    rng = np.random.default_rng(5)
    g = rng.normal(size=(200, 2)).cumsum(axis=0) * 0.1 + rng.normal(size=(200, 2))
    lags = 7
    brute = np.zeros((2, 2))
    for l in range(-lags, lags + 1):
        w = 1.0 - abs(l) / (lags + 1.0)
        for t in range(200):
            if 0 <= t - l < 200:
                brute += w * np.outer(g[t], g[t - l])
    np.testing.assert_allclose(stats.long_run_covariance(g, lags, prewhiten=False), brute, rtol=1e-12)


def test_exponential_filter_is_the_kernel_product():
    rng = np.random.default_rng(6)
    t = np.cumsum(rng.uniform(200.0, 400.0, 60))  # irregular stamps
    x = rng.normal(size=(60, 3))
    kernel = np.exp(-np.abs(t[:, None] - t[None, :]) / 3600.0)
    np.testing.assert_allclose(stats.exp_filter(t, x, 3600.0), kernel @ x, rtol=1e-12)


def test_variance_of_the_mean_of_an_exponentially_correlated_series():
    # (1/T^2) double integral of exp(-|s - t| / tau) over [0, T]^2: numerically over the square (the diagonal's
    # kink split off: each triangle integrated apart), and as the single integral (2/T^2) int_0^T (T - u) e^(-u/tau)
    for tau, span in ((3600.0, 86400.0), (43200.0, 9 * 86400.0), (86400.0, 2 * 86400.0)):
        f = lambda s, t: math.exp(-abs(s - t) / tau)  # noqa: E731
        lower, _ = dblquad(f, 0, span, 0, lambda t: t, epsabs=1e-9 * span**2)
        upper, _ = dblquad(f, 0, span, lambda t: t, span, epsabs=1e-9 * span**2)
        single, _ = quad(lambda u: (span - u) * math.exp(-u / tau), 0, span, limit=200)
        assert stats._mean_variance_share(tau, span) == pytest.approx((lower + upper) / span**2, rel=1e-6)
        assert stats._mean_variance_share(tau, span) == pytest.approx(2.0 * single / span**2, rel=1e-9)


def test_error_model_finds_the_make_up_of_a_known_series():
    # white noise 0.15 K plus a wander of 0.25 K correlated over 12 h (our own make-up), nine days every 5 min:
    # over 20 series the median correlation time is within 25 % of 12 h and the slow share within 0.1 of
    # 0.0625 / (0.0625 + 0.0225) = 0.735
    rng = np.random.default_rng(7)
    sec = np.arange(2593) * 300.0
    taus, shares = [], []
    for _ in range(20):
        r = np.vstack([wander(sec, 0.25, 12.0, rng) + rng.normal(0.0, 0.15, sec.size) for _ in range(2)])
        m = stats.error_model(r, 300.0)
        taus.append(m["tau_s"] / 3600.0)
        shares.append(m["slow_share"].mean())
    assert np.median(taus) == pytest.approx(12.0, rel=0.25)
    assert np.median(shares) == pytest.approx(0.735, abs=0.1)
    # white noise alone: no slow part to speak of
    m = stats.error_model(rng.normal(0.0, 0.15, (1, 2593)), 300.0)
    assert m["slow_share"][0] < 0.05


def test_modelled_covariance_matches_a_monte_carlo_of_least_squares():
    # ordinary least squares of a daily cycle's amplitude and phase parts under white + exponentially correlated
    # errors: the spread of 400 estimates against the sandwich formula with the true error model (within 15 %,
    # the Monte-Carlo's own uncertainty about 7 %); the white-noise formula would be far too narrow
    rng = np.random.default_rng(8)
    sec = np.arange(0, 6 * 86400.0, 600.0)
    jac = np.column_stack([np.sin(2 * np.pi * sec / 86400.0), np.cos(2 * np.pi * sec / 86400.0), np.ones_like(sec)])
    a_inv = np.linalg.inv(jac.T @ jac)
    model = {"tau_s": 6 * 3600.0, "variance": np.array([0.09 + 0.04]), "slow_share": np.array([0.09 / 0.13]),
             "cross": np.eye(1)}
    est = []
    for _ in range(400):
        e = wander(sec, 0.3, 6.0, rng) + rng.normal(0.0, 0.2, sec.size)
        est.append(a_inv @ jac.T @ e)
    empirical = np.var(np.array(est), axis=0, ddof=1)
    modelled = np.diag(stats.modelled_covariance(jac[None], sec, model, a_inv))
    np.testing.assert_allclose(modelled, empirical, rtol=0.15)
    assert np.all(0.13 * np.diag(a_inv) < 0.3 * empirical)


def test_logger_noise_clock_lag_and_quantiles():
    rng = np.random.default_rng(9)
    sec = np.arange(0, 5 * 86400.0, 300.0)
    smooth = 30.0 + 8.0 * np.sin(2 * np.pi * sec / 86400.0)
    # the white noise of readings on a smooth daily cycle, from their second differences
    assert stats.logger_noise(smooth + rng.normal(0.0, 0.15, sec.size)) == pytest.approx(0.15, rel=0.1)
    # readings an hour late against the model (a logger clock on daylight-saving time)
    late = 30.0 + 8.0 * np.sin(2 * np.pi * (sec - 3600.0) / 86400.0)
    assert stats.clock_lag(sec, late, smooth, 300.0) == pytest.approx(3600.0, abs=300.0)
    assert stats.clock_lag(sec, smooth, smooth, 300.0) == 0.0
    # Student's t, two-sided 95 %: 2.447 for 6 degrees of freedom (any table of t), 1.96 for many
    assert stats.t_quantile(6) == pytest.approx(2.447, abs=1e-3)
    assert stats.t_quantile(1e6) == pytest.approx(1.960, abs=1e-3)


def test_correlation_of_a_covariance():
    c = stats.correlation(np.array([[4.0, -3.9], [-3.9, 4.0]]))
    assert c[0, 1] == pytest.approx(-0.975) and c[0, 0] == 1.0
