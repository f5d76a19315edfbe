"""The statistics of a fit: parameter covariance corrected for autocorrelated residuals, correlations,
goodness of fit, the logger's own noise and the clock's offset against the model.

A logger's errors are not independent from one reading to the next: a probe drifts, the sun on a vent or a
stuck fan makes hours of error of one sign, and the model itself misses slow things. The least-squares
covariance s^2 (J^T J)^-1 assumes independent errors and is then far too narrow. Two corrections are made and
the wider kept, key by key:

- an error model: the misfit taken as white noise plus a slow part whose correlation fades as exp(-lag / tau),
  fitted to the misfit's own autocovariance (:func:`error_model`); the covariance of the estimates is then the
  sandwich (J^T J)^-1 J^T Sigma J (J^T J)^-1 under that Sigma (:func:`modelled_covariance`), the slow part's
  variance resting on one degree of freedom per correlation time of the fitted span;
- Newey & West's sum of the scores' autocovariances with Bartlett weights over a day of lags ("A simple,
  positive semi-definite, heteroskedasticity and autocorrelation consistent covariance matrix", Econometrica
  55(3), 1987), which assumes no shape of the errors.

The interval's quantile is Student's t with the degrees of freedom of the white and slow parts combined
(Satterthwaite 1946); the effective number of independent readings reported is n times the white-noise
variance over the corrected one.
"""

from __future__ import annotations

import math

import numpy as np

#: The window of lags of the autocorrelation correction [s]: one day, the period of the house's own cycle
#: (common practice, no source: errors of a model driven by the weather are correlated within a day).
HAC_WINDOW_S = 86400.0
#: Two keys whose estimates correlate at least this much cannot be told apart by the log (common practice,
#: no source).
CORRELATION_WARN = 0.9
#: An interval spanning at least this share of a key's range (on its fitting scale) marks the key as poorly
#: identified (common practice, no source).
WIDE_SHARE = 0.5
#: RMS misfit thresholds of the verdict [K] (common practice, no source: within 0.5 K a logger's own accuracy,
#: beyond 1.5 K the model and the log disagree by more than any fitted value can mend).
GOOD_RMS_K, POOR_RMS_K = 0.5, 1.5


def covariance(jac: np.ndarray, resid: np.ndarray, rows_time: np.ndarray, n_times: int, lags: int,
               prewhiten: bool = True):
    """Least-squares covariance of the fitted parameters, plain and corrected for autocorrelation.

    Parameters
    ----------
    jac : numpy.ndarray
        Jacobian of the residuals [K per unit of each parameter], shape (n, p).
    resid : numpy.ndarray
        Residuals at the solution [K], shape (n,).
    rows_time : numpy.ndarray of int
        The instant (0 .. n_times - 1) of each residual (several columns share an instant).
    n_times : int
        Number of instants.
    lags : int
        Bartlett window: the largest lag counted, in instants.
    prewhiten : bool
        Take out a first-order autoregression of the scores before the window's sum and put it back after
        (Andrews & Monahan 1992, Econometrica 60(4)): the sum then also counts correlation longer than the window.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        Plain covariance s^2 (J^T J)^-1 with s^2 = RSS / (n - p), and the corrected covariance
        (J^T J)^-1 S (J^T J)^-1 n / (n - p), S = sum_l w_l (G_l + G_l^T), w_l = 1 - l / (lags + 1)
        (Newey & West 1987), G_l the scores' autocovariance at lag l.
    """
    n, p = jac.shape
    a_inv = np.linalg.pinv(jac.T @ jac)
    dof = max(n - p, 1)
    plain = a_inv * float(resid @ resid) / dof
    g = np.zeros((n_times, p))
    np.add.at(g, rows_time, jac * resid[:, None])
    s = long_run_covariance(g, lags, prewhiten)
    hac = a_inv @ s @ a_inv * n / dof
    return plain, hac


#: Largest singular value of the scores' autoregression kept when prewhitening (Andrews & Monahan 1992 bound
#: it below 1 so that the recolouring cannot blow up; the value is from memory).
MAX_AR_SINGULAR = 0.97


def long_run_covariance(g: np.ndarray, lags: int, prewhiten: bool = True) -> np.ndarray:
    """The long-run covariance sum over all lags of a series of score vectors g (rows: instants).

    Bartlett-weighted sum of autocovariances up to ``lags`` (Newey & West 1987); with ``prewhiten`` of the
    residuals of a first-order vector autoregression g_t = A g_(t-1) + e_t, recoloured as
    (I - A)^-1 S_e (I - A)^-T (Andrews & Monahan 1992).
    """
    p = g.shape[1]
    a = np.zeros((p, p))
    if prewhiten and g.shape[0] > 3 * p:
        x, y = g[:-1], g[1:]
        a = np.linalg.lstsq(x, y, rcond=None)[0].T
        u, sv, vt = np.linalg.svd(a)
        a = u @ np.diag(np.minimum(sv, MAX_AR_SINGULAR)) @ vt
        e = y - x @ a.T
    else:
        e = g
    s = e.T @ e
    for lag in range(1, min(lags, e.shape[0] - 1) + 1):
        gl = e[lag:].T @ e[:-lag]
        s += (1.0 - lag / (lags + 1.0)) * (gl + gl.T)
    recolour = np.linalg.inv(np.eye(p) - a)
    return recolour @ s @ recolour.T


def t_quantile(dof: float) -> float:
    """Two-sided 95 % quantile of Student's t (the normal's 1.96 for many degrees of freedom)."""
    from scipy.stats import t

    return float(t.ppf(0.975, max(dof, 1.0)))


def correlation(cov: np.ndarray) -> np.ndarray:
    """Correlation matrix of a covariance (0 where a variance is 0)."""
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    with np.errstate(divide="ignore", invalid="ignore"):
        c = cov / np.outer(sd, sd)
    c = np.where(np.isfinite(c), c, 0.0)
    np.fill_diagonal(c, 1.0)
    return np.clip(c, -1.0, 1.0)


def logger_noise(values: np.ndarray) -> float:
    """The white noise of a series of readings [K], from its second differences: the median absolute second
    difference / 0.6745 / sqrt(6) (a robust scale of differences, which a smooth signal barely feeds at a
    logger's sampling and a fan's switch cannot spoil; common practice, no source). NaN with fewer than 10."""
    v = np.asarray(values, float)
    v = v[np.isfinite(v)]
    if v.size < 10:
        return float("nan")
    d2 = np.diff(v, 2)
    return float(np.median(np.abs(d2 - np.median(d2))) / 0.6745 / math.sqrt(6.0))


def worst_hour(times, resid_by_time: np.ndarray):
    """(start of the clock hour with the largest mean |misfit|, that hour's mean misfit [K])."""
    import pandas as pd

    s = pd.Series(resid_by_time, index=times).dropna()
    hourly = s.resample("1h").mean().dropna()
    if hourly.empty:
        return None, float("nan")
    when = hourly.abs().idxmax()
    return when, float(hourly[when])


def clock_lag(seconds: np.ndarray, measured: np.ndarray, model: np.ndarray, step_s: float,
              max_lag_s: float = 3 * 3600.0) -> float:
    """The shift of the readings against the model that best matches their daily cycles [s]; positive when
    the readings come later than the model (a logger clock ahead of the weather's).

    Both series lose a 24-hour centred running mean (so that only the daily cycle and faster changes remain);
    the lag maximises their correlation over +-``max_lag_s`` in steps of the log's sampling.
    """
    import pandas as pd

    ok = np.isfinite(measured)
    t, m, s = seconds[ok], measured[ok], model[ok]
    if t.size < 10 or t[-1] - t[0] < 86400.0:
        return 0.0
    idx = pd.to_datetime(t, unit="s")
    m = m - pd.Series(m, index=idx).rolling("24h", center=True).mean().to_numpy()
    s_detr = s - pd.Series(s, index=idx).rolling("24h", center=True).mean().to_numpy()
    step = max(step_s, 60.0)
    best, best_r = 0.0, -np.inf
    for lag in np.arange(-max_lag_s, max_lag_s + step / 2, step):
        shifted = np.interp(t - lag, t, s_detr)
        inside = (t - lag >= t[0]) & (t - lag <= t[-1])
        if inside.sum() < 10:
            continue
        r = np.corrcoef(m[inside], shifted[inside])[0, 1]
        if r > best_r:
            best, best_r = float(lag), r
    return best


def trend_per_day(seconds: np.ndarray, resid: np.ndarray) -> float:
    """The least-squares slope of the misfit over the log [K/d]."""
    ok = np.isfinite(resid)
    if ok.sum() < 3:
        return 0.0
    return float(np.polyfit(seconds[ok] / 86400.0, resid[ok], 1)[0])


def verdict(rms_k: float) -> str:
    """"good", "fair" or "poor" by the RMS misfit (:data:`GOOD_RMS_K`, :data:`POOR_RMS_K`)."""
    if rms_k <= GOOD_RMS_K:
        return "good"
    return "fair" if rms_k <= POOR_RMS_K else "poor"


__all__ = ["CORRELATION_WARN", "GOOD_RMS_K", "HAC_WINDOW_S", "POOR_RMS_K", "WIDE_SHARE", "clock_lag",
           "correlation", "covariance", "logger_noise", "t_quantile", "trend_per_day", "verdict", "worst_hour"]


# --- a model of the errors: white noise plus a slow, exponentially correlated part -------------------

def exp_filter(seconds: np.ndarray, x: np.ndarray, tau: float) -> np.ndarray:
    """y_i = sum_j exp(-|t_i - t_j| / tau) x_j over rows of ``x`` at increasing instants ``seconds`` (exact, by
    one forward and one backward recursion)."""
    n = len(seconds)
    decay = np.exp(-np.diff(seconds) / tau)
    f = x.astype(float).copy()
    b = x.astype(float).copy()
    for i in range(1, n):
        f[i] += decay[i - 1] * f[i - 1]
    for i in range(n - 2, -1, -1):
        b[i] += decay[i] * b[i + 1]
    return f + b - x


def _autocovariance(r: np.ndarray, max_lag: int) -> np.ndarray:
    """Autocovariance of a series with gaps (NaN) about its mean, at lags 0..max_lag (pairs where both exist)."""
    ok = np.isfinite(r)
    x = np.where(ok, r - np.nanmean(r), 0.0)
    m = ok.astype(float)
    out = np.zeros(max_lag + 1)
    for lag in range(max_lag + 1):
        pairs = float(np.sum(m[lag:] * m[:len(m) - lag]))
        out[lag] = np.sum(x[lag:] * x[:len(x) - lag]) / pairs if pairs > 0 else 0.0
    return out


def _mean_variance_share(tau: float, span: float) -> float:
    """Variance of the mean of an exponentially correlated process over ``span`` as a share of its variance:
    (2 tau / T) (1 - (tau / T)(1 - exp(-T / tau))) (the integral of the correlation over the square; worked by
    hand). A series' autocovariance about its own mean falls short of the true one by this much."""
    x = tau / span
    return 2.0 * x * (1.0 - x * (1.0 - math.exp(-1.0 / x)))


def error_model(resid: np.ndarray, step_s: float, max_lag_s: float = 86400.0) -> dict:
    """White noise plus a slow error of correlation exp(-lag / tau), fitted to residual series.

    Parameters
    ----------
    resid : numpy.ndarray
        Residuals [K], shape (columns, instants), NaN where there is none; instants about ``step_s`` apart.
    step_s : float
        The sampling step [s].
    max_lag_s : float
        Lags fitted [s].

    Returns
    -------
    dict
        ``tau_s`` (one for all columns), per column ``variance`` [K^2] and ``slow_share`` w (the slow part's
        share of the variance), and ``cross`` (correlation of the columns' slow parts). The autocovariance
        about the series' mean, gamma(l) = A (exp(-l step / tau) - v) for lags 1..max_lag (v: the variance
        of the mean the series' own mean takes out, :func:`_mean_variance_share`), is fitted by least squares
        (tau on a grid of 80 values from one step to five days, A >= 0 for each column); the white variance is
        what gamma(0) leaves.
    """
    n_cols, n = resid.shape
    max_lag = int(max(2, min(max_lag_s / step_s, n // 4)))
    gam = np.array([_autocovariance(resid[c], max_lag) for c in range(n_cols)])
    lags = np.arange(1, max_lag + 1) * step_s
    span = n * step_s
    best = (np.inf, step_s, np.zeros(n_cols), 0.0)
    for tau in np.geomspace(step_s, 5 * 86400.0, 80):
        v = _mean_variance_share(tau, span)
        e = np.exp(-lags / tau) - v
        amp = np.clip(gam[:, 1:] @ e / (e @ e), 0.0, None)
        sse = float(np.sum((gam[:, 1:] - amp[:, None] * e[None, :]) ** 2))
        if sse < best[0]:
            best = (sse, tau, amp, v)
    _, tau, amp, v = best
    white = np.clip(gam[:, 0] - amp * (1.0 - v), 0.0, None)
    var = white + amp
    w = np.where(var > 0, amp / np.where(var > 0, var, 1.0), 0.0)
    slow = np.sqrt(amp)
    cross = np.eye(n_cols)
    a1 = math.exp(-step_s / tau) - v
    for a in range(n_cols):
        for b in range(a + 1, n_cols):
            x, y = resid[a] - np.nanmean(resid[a]), resid[b] - np.nanmean(resid[b])
            ok = np.isfinite(x[1:]) & np.isfinite(y[:-1]) & np.isfinite(x[:-1]) & np.isfinite(y[1:])
            if slow[a] > 0 and slow[b] > 0 and ok.any() and a1 > 0:
                cov1 = 0.5 * (np.mean(x[1:][ok] * y[:-1][ok]) + np.mean(x[:-1][ok] * y[1:][ok]))
                cross[a, b] = cross[b, a] = float(np.clip(cov1 / a1 / (slow[a] * slow[b]), -1.0, 1.0))
    return {"tau_s": float(tau), "variance": var, "slow_share": w, "cross": cross}


def modelled_covariance(jac_grid: np.ndarray, seconds: np.ndarray, model: dict, a_inv: np.ndarray,
                        parts: bool = False):
    """Covariance of the fitted parameters under the error model of :func:`error_model`:
    (J^T J)^-1 J^T Sigma J (J^T J)^-1, Sigma of each column pair a, b the white part var_a (1 - w_a) on the
    diagonal (a = b) plus s_a s_b C_ab exp(-|t_i - t_j| / tau), s = sqrt(w var).

    Parameters
    ----------
    jac_grid : numpy.ndarray
        The Jacobian's rows on the grid of instants, shape (columns, instants, p), 0 where a residual is missing.
    seconds : numpy.ndarray
        The instants [s].
    model : dict
        :func:`error_model`'s result.
    a_inv : numpy.ndarray
        (J^T J)^-1.
    parts : bool
        Return the white and the slow part's covariances apart (their sum is the covariance).
    """
    var, w, cross, tau = model["variance"], model["slow_share"], model["cross"], model["tau_s"]
    slow = np.sqrt(w * var)
    p = jac_grid.shape[2]
    s_white, s_slow = np.zeros((p, p)), np.zeros((p, p))
    filtered = [exp_filter(seconds, slow[c] * jac_grid[c], tau) for c in range(jac_grid.shape[0])]
    for a in range(jac_grid.shape[0]):
        s_white += var[a] * (1.0 - w[a]) * jac_grid[a].T @ jac_grid[a]
        for b in range(jac_grid.shape[0]):
            s_slow += cross[a, b] * (slow[a] * jac_grid[a]).T @ filtered[b]
    s_slow = 0.5 * (s_slow + s_slow.T)
    white, slow_cov = a_inv @ s_white @ a_inv, a_inv @ s_slow @ a_inv
    return (white, slow_cov) if parts else white + slow_cov


def slow_degrees_of_freedom(span_s: float, tau_s: float) -> float:
    """Degrees of freedom of a slow error's variance estimated over ``span_s``: one per correlation time
    (the variance of the sample variance of an exponentially correlated series, 2 sigma^4 tau / T for T >> tau;
    worked by hand from the sum of its squared correlations)."""
    return max(span_s / tau_s, 1.0)


def absorbed_share(jtj: np.ndarray, slow_cov: np.ndarray, model: dict, counts) -> float:
    """The share of the slow error's variance the fitted keys take up (so the misfit shows only the rest):
    tr(H Sigma_slow) / tr(Sigma_slow) with H = J (J^T J)^-1 J^T the fit's projection, = tr((J^T J) C_slow) /
    sum over the columns of w var n (C_slow the slow part's covariance of the estimates, n the readings of each
    column); at most 0.9."""
    total = float(np.sum(model["slow_share"] * model["variance"] * np.asarray(counts, float)))
    if total <= 0:
        return 0.0
    return float(min(max(np.trace(jtj @ slow_cov) / total, 0.0), 0.9))


def satterthwaite(variances, dofs) -> float:
    """Degrees of freedom of a sum of variance estimates (Satterthwaite 1946, Biometrics Bulletin 2(6)):
    (sum v)^2 / sum(v^2 / dof)."""
    v = np.asarray(variances, float)
    d = np.maximum(np.asarray(dofs, float), 1.0)
    den = float(np.sum(v**2 / d))
    return float(np.sum(v) ** 2 / den) if den > 0 else float(np.max(d))
