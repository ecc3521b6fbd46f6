"""Peaks of a measured spectrum: baseline, noise, detection and profile fits.

The steps, each a function on arrays:

1. :func:`estimate_noise` - the standard deviation of the noise from the median
   absolute deviation of first differences (robust against the peaks, which
   are smooth on the scale of one sample);
2. :func:`estimate_baseline` - a slowly varying background: a running median
   over a wide window, with points above the baseline by more than twice the
   noise replaced by the baseline and the median repeated (iterative clipping);
3. :func:`detect_peaks` - local maxima whose height above the baseline exceeds
   ``min_snr`` times the noise (:func:`scipy.signal.find_peaks`), with first
   widths from :func:`scipy.signal.peak_widths`;
4. :func:`fit_peaks` - Gaussian or Voigt profiles fitted by non-linear least
   squares (Levenberg-Marquardt, :func:`scipy.optimize.least_squares`) on a
   window around each peak; peaks whose windows overlap (blends) are fitted
   together, with a local straight-line background. Uncertainties come from
   the fit covariance ``(J^T W J)^-1`` with the weights ``1/sigma_i^2`` of the
   per-sample noise (given, or estimated in step 1), so they are absolute.

The Voigt profile is :func:`scipy.special.voigt_profile`; its FWHM is the
Olivero & Longbothum approximation (:func:`levels.physics.plasma.spectrum.voigt_fwhm_nm`,
relative error below 2.4e-4).

Units: the axis ``x`` may be wavelength (nm) or pixel; centres and widths come
back in the unit of ``x``, areas in intensity times that unit.

References
----------
.. [1] K. Levenberg, Q. Appl. Math. 2, 164 (1944); D. W. Marquardt,
   J. Soc. Ind. Appl. Math. 11, 431 (1963) (damped least squares).
.. [2] P. R. Bevington and D. K. Robinson, *Data Reduction and Error Analysis
   for the Physical Sciences*, 3rd ed., McGraw-Hill (2003), ch. 8 (parameter
   uncertainties from the curvature matrix).
.. [3] J. J. Olivero and R. L. Longbothum, JQSRT 17, 233 (1977) (Voigt FWHM).
.. [4] P. J. Rousseeuw and C. Croux, J. Am. Stat. Assoc. 88, 1273 (1993)
   (the MAD as a robust scale, factor 1.4826 for normal noise).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import ndimage, signal
from scipy.optimize import least_squares
from scipy.special import voigt_profile

from levels.errors import PhysicsInputError

__all__ = [
    "PeakFit",
    "estimate_noise",
    "estimate_baseline",
    "detect_peaks",
    "fit_peaks",
    "find_and_fit",
    "gauss_profile",
    "voigt_fwhm",
    "model_curve",
    "PROFILES",
]

PROFILES = ("gauss", "voigt")
#: FWHM of a Gaussian divided by its standard deviation
FWHM_PER_SIGMA = 2.0 * math.sqrt(2.0 * math.log(2.0))
#: normal-noise consistency factor of the median absolute deviation
MAD_NORMAL = 1.4826


@dataclass
class PeakFit:
    """Fitted peaks (arrays of one length, sorted by centre) and what the fit used.

    Centres and widths are in the unit of the axis; areas in intensity x axis unit.
    ``gauss_fwhm`` and ``lorentz_fwhm`` are the components of a Voigt fit (for a
    Gaussian fit, ``lorentz_fwhm`` is 0). ``group`` numbers the blends fitted together.
    """

    profile: str
    centre: NDArray[np.float64]
    centre_unc: NDArray[np.float64]
    fwhm: NDArray[np.float64]
    fwhm_unc: NDArray[np.float64]
    area: NDArray[np.float64]
    area_unc: NDArray[np.float64]
    height: NDArray[np.float64]
    snr: NDArray[np.float64]
    gauss_fwhm: NDArray[np.float64]
    lorentz_fwhm: NDArray[np.float64]
    group: NDArray[np.int64]
    noise: float
    baseline: NDArray[np.float64] | None = None
    background: list = field(default_factory=list)  # (lo, hi, a, b, x_mid) per group
    warnings: list[str] = field(default_factory=list)

    def __len__(self) -> int:
        return int(self.centre.size)


def gauss_profile(x: ArrayLike, centre: ArrayLike, fwhm: ArrayLike) -> NDArray[np.float64]:
    """Unit-area Gaussian of full width at half maximum ``fwhm``.

    Examples
    --------
    >>> round(float(gauss_profile(0.0, 0.0, 1.0)), 6)   # 2 sqrt(ln2 / pi) / fwhm
    0.939437
    """
    x = np.asarray(x, dtype=float)
    sigma = np.asarray(fwhm, dtype=float) / FWHM_PER_SIGMA
    return np.exp(-0.5 * ((x - centre) / sigma) ** 2) / (sigma * math.sqrt(2.0 * math.pi))


def voigt_fwhm(gauss_fwhm: ArrayLike, lorentz_fwhm: ArrayLike) -> NDArray[np.float64]:
    """Voigt FWHM from its Gaussian and Lorentzian FWHM (Olivero & Longbothum 1977).

    Examples
    --------
    >>> round(float(voigt_fwhm(1.0, 0.0)), 6), round(float(voigt_fwhm(0.0, 1.0)), 4)
    (1.0, 1.0)
    """
    fg = np.abs(np.asarray(gauss_fwhm, dtype=float))
    fl = np.abs(np.asarray(lorentz_fwhm, dtype=float))
    return 0.5346 * fl + np.sqrt(0.2166 * fl * fl + fg * fg)


def estimate_noise(y: ArrayLike) -> float:
    """Standard deviation of white noise on a smooth signal, from first differences.

    Parameters
    ----------
    y : array_like
        Intensities on a uniform or smoothly varying axis.

    Returns
    -------
    float
        ``1.4826 MAD(diff y) / sqrt 2`` (same unit as ``y``).

    Raises
    ------
    PhysicsInputError
        Fewer than 3 samples.

    Examples
    --------
    >>> rng = np.random.default_rng(1)
    >>> round(estimate_noise(rng.normal(0, 2.0, 100_000)), 1)
    2.0
    """
    y = np.asarray(y, dtype=float)
    if y.size < 3:
        raise PhysicsInputError("a spectrum needs at least 3 samples to estimate its noise")
    d = np.diff(y)
    return float(MAD_NORMAL * np.median(np.abs(d - np.median(d))) / math.sqrt(2.0))


def estimate_baseline(y: ArrayLike, window: int, noise: float) -> NDArray[np.float64]:
    """Slowly varying background under the peaks: a smoothed morphological opening.

    Parameters
    ----------
    y : array_like
        Intensities.
    window : int
        Width of the opening, samples (wider than the widest peak with its wings).
    noise : float
        Noise standard deviation (:func:`estimate_noise`), same unit as ``y``.

    Returns
    -------
    numpy.ndarray
        Baseline, same length and unit as ``y``.

    Notes
    -----
    The data are first smoothed over ``window / 10`` samples (to tame the noise), then
    the running minimum followed by the running maximum over ``window`` samples (a
    grey opening) removes every feature narrower than the window; the result is
    smoothed over ``window / 2`` samples and lifted by the median of the residuals
    that lie within 3 noise of it (the minimum's bias from the noise).

    Examples
    --------
    >>> x = np.arange(2000.0)
    >>> y = 5.0 + 100 * np.exp(-0.5 * ((x - 1000) / 3) ** 2)
    >>> round(float(estimate_baseline(y, 101, 0.1)[1000]), 3)
    5.0
    """
    y = np.asarray(y, dtype=float)
    window = int(max(3, min(window, y.size)))
    smooth = ndimage.uniform_filter1d(y, size=max(1, window // 10), mode="nearest")
    base = ndimage.grey_opening(smooth, size=window, mode="nearest")
    base = ndimage.uniform_filter1d(base, size=max(1, window // 2), mode="nearest")
    resid = y - base
    near = np.abs(resid) < 3.0 * noise
    if near.any():
        base = base + float(np.median(resid[near]))
    return base


def detect_peaks(
    y: ArrayLike, baseline: ArrayLike, noise: float | ArrayLike, *, min_snr: float = 5.0, min_width: float = 1.0
) -> tuple[NDArray[np.intp], NDArray[np.float64], NDArray[np.float64]]:
    """Local maxima higher than ``min_snr`` noise above the baseline.

    Parameters
    ----------
    y, baseline : array_like
        Intensities and background.
    noise : float or array_like
        Noise standard deviation (scalar or per sample).
    min_snr : float
        Smallest height / noise accepted.
    min_width : float
        Smallest FWHM in samples (narrower maxima are spikes and are dropped).

    Returns
    -------
    (index, height, width)
        Sample index of each maximum, its height above the baseline, and its FWHM in samples.

    Examples
    --------
    >>> x = np.arange(500.0)
    >>> y = 50 * np.exp(-0.5 * ((x - 200) / 2.5) ** 2) + 30 * np.exp(-0.5 * ((x - 320) / 2.5) ** 2)
    >>> detect_peaks(y, np.zeros_like(y), 1.0)[0].tolist()
    [200, 320]
    """
    if not min_snr > 0:
        raise PhysicsInputError("min_snr must be > 0")
    y = np.asarray(y, dtype=float)
    net = y - np.asarray(baseline, dtype=float)
    sigma = np.broadcast_to(np.asarray(noise, dtype=float), y.shape)
    smooth = ndimage.uniform_filter1d(net, size=3, mode="nearest")
    # the prominence is judged against the local noise, so noise on the top of a strong line makes no peaks
    idx, _ = signal.find_peaks(smooth, height=min_snr * sigma, prominence=max(3.0, 0.5 * min_snr) * sigma)
    if idx.size == 0:
        return idx, np.zeros(0), np.zeros(0)
    width = signal.peak_widths(smooth, idx, rel_height=0.5)[0]
    keep = width >= min_width
    idx, width = idx[keep], width[keep]
    return idx, net[idx], width


def _profile_values(profile: str, x: NDArray, params: NDArray) -> NDArray:
    """Sum of the group's profiles; params per peak: (centre, area, fwhm_g[, fwhm_l])."""
    k = 3 if profile == "gauss" else 4
    p = params.reshape(-1, k)
    c, a = p[:, 0, None], p[:, 1, None]
    if profile == "gauss":
        return (a * gauss_profile(x[None, :], c, np.abs(p[:, 2, None]))).sum(axis=0)
    sigma = np.abs(p[:, 2, None]) / FWHM_PER_SIGMA
    gamma = np.abs(p[:, 3, None]) / 2.0
    return (a * voigt_profile(x[None, :] - c, sigma, gamma)).sum(axis=0)


def _gauss_jacobian(x: NDArray, params: NDArray, n_peaks: int, w: NDArray) -> NDArray:
    p = params[: 3 * n_peaks].reshape(-1, 3)
    c, a, f = p[:, 0, None], p[:, 1, None], p[:, 2, None]
    sf = np.sign(f) + (f == 0)
    f = np.abs(f) + 1e-300
    s = f / FWHM_PER_SIGMA
    u = (x[None, :] - c) / s
    g = np.exp(-0.5 * u * u) / (s * math.sqrt(2.0 * math.pi))
    jac = np.empty((x.size, params.size))
    jac[:, 0 : 3 * n_peaks : 3] = (a * g * u / s).T
    jac[:, 1 : 3 * n_peaks : 3] = g.T
    jac[:, 2 : 3 * n_peaks : 3] = (sf * a * g * (u * u - 1.0) / f).T
    jac[:, 3 * n_peaks] = 1.0
    jac[:, 3 * n_peaks + 1] = x - x.mean()
    return jac * w[:, None]


def _groups(centre: NDArray, half: NDArray) -> list[NDArray[np.intp]]:
    """Indices of peaks whose windows overlap, chained (input sorted by centre)."""
    out, start = [], 0
    reach = centre[0] + half[0]
    for i in range(1, centre.size):
        if centre[i] - half[i] <= reach:
            reach = max(reach, centre[i] + half[i])
        else:
            out.append(np.arange(start, i))
            start, reach = i, centre[i] + half[i]
    out.append(np.arange(start, centre.size))
    return out


def fit_peaks(
    x: ArrayLike,
    y: ArrayLike,
    guess_centre: ArrayLike,
    guess_fwhm: ArrayLike,
    guess_height: ArrayLike,
    *,
    noise: float | ArrayLike,
    baseline: ArrayLike | None = None,
    profile: str = "gauss",
    window_fwhm: float | None = None,
) -> PeakFit:
    """Fit Gaussian or Voigt profiles to given peaks; overlapping peaks are fitted together.

    Parameters
    ----------
    x : array_like
        Strictly increasing axis (nm or pixel).
    y : array_like
        Intensities.
    guess_centre, guess_fwhm, guess_height : array_like
        Starting values per peak (axis unit, axis unit, intensity above the baseline).
    noise : float or array_like
        Noise standard deviation of each sample (scalar or per sample); the fit
        weights are ``1/noise^2`` and the uncertainties are absolute.
    baseline : array_like, optional
        Background subtracted before the fit (default none); a straight line per
        group is fitted on top of it.
    profile : {"gauss", "voigt"}
    window_fwhm : float, optional
        Half width of each peak's fit window in guessed FWHM (default 3 for
        Gaussian, 8 for Voigt).

    Returns
    -------
    PeakFit

    Raises
    ------
    PhysicsInputError
        Unknown profile, axis not increasing, mismatched lengths.

    Examples
    --------
    >>> x = np.linspace(0, 100, 1001)
    >>> y = 40 * gauss_profile(x, 50.3, 2.0) + np.random.default_rng(2).normal(0, 0.05, x.size)
    >>> fit = fit_peaks(x, y, [50.0], [2.5], [15.0], noise=0.05)
    >>> bool(abs(fit.centre[0] - 50.3) < 5 * fit.centre_unc[0]), round(float(fit.fwhm[0]), 1)
    (True, 2.0)
    """
    if profile not in PROFILES:
        raise PhysicsInputError(f"profile must be one of {', '.join(PROFILES)}, not {profile!r}")
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    if x.shape != y.shape or x.ndim != 1:
        raise PhysicsInputError("x and y must be 1-D arrays of one length")
    if x.size > 1 and not np.all(np.diff(x) > 0):
        raise PhysicsInputError("the axis must be strictly increasing")
    sigma = np.broadcast_to(np.asarray(noise, dtype=float), y.shape)
    if not np.all(np.isfinite(sigma)) or np.any(sigma <= 0):
        raise PhysicsInputError("noise must be finite and > 0")
    net = y - (0.0 if baseline is None else np.asarray(baseline, dtype=float))
    gc = np.atleast_1d(np.asarray(guess_centre, dtype=float))
    gf = np.broadcast_to(np.asarray(guess_fwhm, dtype=float), gc.shape).copy()
    gh = np.broadcast_to(np.asarray(guess_height, dtype=float), gc.shape).copy()
    order = np.argsort(gc)
    gc, gf, gh = gc[order], gf[order], gh[order]
    k_win = window_fwhm if window_fwhm is not None else (3.0 if profile == "gauss" else 8.0)
    n = gc.size
    k = 3 if profile == "gauss" else 4
    out = {
        name: np.full(n, np.nan)
        for name in ("centre", "centre_unc", "fwhm", "fwhm_unc", "area", "area_unc", "height", "gf", "lf")
    }
    group_of = np.zeros(n, dtype=np.int64)
    background: list = []
    warnings: list[str] = []
    if n == 0:
        empty = np.zeros(0)
        return PeakFit(
            profile,
            empty,
            empty,
            empty,
            empty,
            empty,
            empty,
            empty,
            empty,
            empty,
            empty,
            np.zeros(0, dtype=np.int64),
            float(np.median(sigma)),
            baseline=None if baseline is None else np.asarray(baseline, dtype=float),
        )
    half = k_win * gf
    for g_id, members in enumerate(_groups(gc, half)):
        group_of[members] = g_id
        lo = np.searchsorted(x, gc[members[0]] - half[members[0]], "left")
        hi = np.searchsorted(x, gc[members[-1]] + half[members[-1]], "right")
        xs, ys, ws = x[lo:hi], net[lo:hi], 1.0 / sigma[lo:hi]
        n_par = k * members.size + 2
        if xs.size <= n_par:
            warnings.append(f"peak near {gc[members[0]]:.6g}: too few samples ({xs.size}) in its window to fit")
            continue
        xm = xs.mean()
        m = members.size
        # Voigt fits start twice, Gauss-like and Lorentz-like (the two widths trade off); the lower cost wins
        starts = [(1.0, 0.0)] if profile == "gauss" else [(0.7, 0.3), (0.15, 0.9)]

        def resid(p, xs=xs, ys=ys, ws=ws, xm=xm, m=m):
            return (_profile_values(profile, xs, p[: k * m]) + p[-2] + p[-1] * (xs - xm) - ys) * ws

        jac = (lambda p, xs=xs, ws=ws, m=m: _gauss_jacobian(xs, p, m, ws)) if profile == "gauss" else "2-point"
        sol = None
        for g_share, l_share in starts:
            guess: list[float] = []
            for i in members:
                area0 = gh[i] * gf[i] * (1.0645 if l_share < 0.5 else 1.5708)  # Gaussian / Lorentzian area
                guess.extend(
                    [gc[i], area0, gf[i]] if profile == "gauss" else [gc[i], area0, g_share * gf[i], l_share * gf[i]]
                )
            p0 = np.asarray(guess + [0.0, 0.0])
            try:
                trial = least_squares(resid, p0, jac=jac, method="lm", x_scale="jac")
            except (ValueError, np.linalg.LinAlgError) as exc:  # pragma: no cover - defensive
                warnings.append(f"peak near {gc[members[0]]:.6g}: fit failed ({exc})")
                continue
            if sol is None or trial.cost < sol.cost:
                sol = trial
        if sol is None:  # pragma: no cover
            continue
        p = sol.x
        J = sol.jac
        try:
            cov = np.linalg.pinv(J.T @ J)
        except np.linalg.LinAlgError:  # pragma: no cover
            cov = np.full((p.size, p.size), np.nan)
        background.append((float(xs[0]), float(xs[-1]), float(p[-2]), float(p[-1]), float(xm)))
        for j, i in enumerate(members):
            base = k * j
            c, a = p[base], p[base + 1]
            fg = abs(p[base + 2])
            fl = abs(p[base + 3]) if profile == "voigt" else 0.0
            out["centre"][i], out["area"][i] = c, a
            out["centre_unc"][i] = math.sqrt(max(cov[base, base], 0.0))
            out["area_unc"][i] = math.sqrt(max(cov[base + 1, base + 1], 0.0))
            out["gf"][i], out["lf"][i] = fg, fl
            if profile == "gauss":
                out["fwhm"][i] = fg
                out["fwhm_unc"][i] = math.sqrt(max(cov[base + 2, base + 2], 0.0))
                out["height"][i] = a * 0.9394372786996513 / fg if fg > 0 else np.nan
            else:
                fv = float(voigt_fwhm(fg, fl))
                denom = math.sqrt(0.2166 * fl * fl + fg * fg) or 1.0
                grad = np.array([fg / denom, 0.5346 + 0.2166 * fl / denom])  # d fV / d(fg, fl)
                sub = cov[base + 2 : base + 4, base + 2 : base + 4]
                out["fwhm"][i] = fv
                out["fwhm_unc"][i] = math.sqrt(max(float(grad @ sub @ grad), 0.0))
                out["height"][i] = (
                    a * float(voigt_profile(0.0, fg / FWHM_PER_SIGMA, fl / 2.0)) if fg + fl > 0 else np.nan
                )
    i_centre = np.clip(np.searchsorted(x, np.nan_to_num(out["centre"], nan=x[0])), 0, x.size - 1)
    snr = out["height"] / sigma[i_centre]
    bad = ~np.isfinite(out["centre"]) | (out["centre"] < x[0]) | (out["centre"] > x[-1]) | ~(out["area"] > 0)
    if bad.any():
        warnings.append(f"{int(bad.sum())} peak(s) dropped: the fit put them outside the data or gave no positive area")
    keep = ~bad
    order2 = np.argsort(out["centre"][keep])

    def sel(arr):
        return np.asarray(arr)[keep][order2]

    return PeakFit(
        profile=profile,
        centre=sel(out["centre"]),
        centre_unc=sel(out["centre_unc"]),
        fwhm=sel(out["fwhm"]),
        fwhm_unc=sel(out["fwhm_unc"]),
        area=sel(out["area"]),
        area_unc=sel(out["area_unc"]),
        height=sel(out["height"]),
        snr=sel(snr),
        gauss_fwhm=sel(out["gf"]),
        lorentz_fwhm=sel(out["lf"]),
        group=sel(group_of),
        noise=float(np.median(sigma)),
        baseline=None if baseline is None else np.asarray(baseline, dtype=float),
        background=background,
        warnings=warnings,
    )


def find_and_fit(
    x: ArrayLike,
    y: ArrayLike,
    *,
    y_unc: ArrayLike | None = None,
    profile: str = "gauss",
    min_snr: float = 5.0,
    baseline_window: int | None = None,
) -> PeakFit:
    """The whole chain on one spectrum: noise, baseline, detection, fits.

    Parameters
    ----------
    x : array_like
        Strictly increasing axis (nm or pixel).
    y : array_like
        Intensities.
    y_unc : array_like, optional
        Standard uncertainty of each intensity; default: one noise level estimated
        from the data (:func:`estimate_noise`).
    profile : {"gauss", "voigt"}
    min_snr : float
        Detection threshold, peak height over noise.
    baseline_window : int, optional
        Running-median width in samples (default: 15 (Gaussian) or 80 (Voigt) times
        the median detected FWHM, at least 31).

    Returns
    -------
    PeakFit

    Examples
    --------
    >>> x = np.arange(3000.0)
    >>> y = 10 + 80 * gauss_profile(x, 1200.4, 4.0) + np.random.default_rng(3).normal(0, 0.2, x.size)
    >>> fit = find_and_fit(x, y)
    >>> len(fit), round(float(fit.centre[0]), 1)
    (1, 1200.4)
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    if x.size < 8:
        raise PhysicsInputError(f"a spectrum needs at least 8 samples to find peaks, got {x.size}")
    noise = np.asarray(y_unc, dtype=float) if y_unc is not None else estimate_noise(y)
    if np.ndim(noise) == 0 and not float(noise) > 0:
        raise PhysicsInputError(
            "the spectrum has no noise at all (identical neighbouring samples); "
            "give intensity_unc to set the uncertainty"
        )
    scalar_noise = float(np.median(noise))
    # first pass on a rough baseline to learn the peak widths
    rough = estimate_baseline(y, baseline_window or max(31, x.size // 50), scalar_noise)
    idx, height, width = detect_peaks(y, rough, noise, min_snr=min_snr)
    if baseline_window is None:
        wide = 15 if profile == "gauss" else 80  # Lorentz wings reach far: a wider median
        baseline_window = int(max(31, wide * (np.median(width) if width.size else 3)))
        baseline = estimate_baseline(y, baseline_window, scalar_noise)
        idx, height, width = detect_peaks(y, baseline, noise, min_snr=min_snr)
    else:
        baseline = rough
    step = np.gradient(x)[idx] if idx.size else np.zeros(0)
    guess_c, guess_f, guess_h = x[idx], np.maximum(width, 1.5) * step, height
    fit = fit_peaks(x, y, guess_c, guess_f, guess_h, noise=noise, baseline=baseline, profile=profile)
    return fit


def model_curve(x: ArrayLike, fit: PeakFit) -> NDArray[np.float64]:
    """The fitted model on ``x``: baseline (if any), local backgrounds and every profile.

    Each profile is evaluated within 8 (Gaussian) or 100 (Voigt) FWHM of its centre.

    Examples
    --------
    >>> x = np.linspace(0, 10, 101)
    >>> fit = fit_peaks(x, 5 * gauss_profile(x, 5, 1), [5.0], [1.2], [4.0], noise=0.01)
    >>> round(float(model_curve(x, fit).max()), 3)
    4.697
    """
    x = np.asarray(x, dtype=float)
    total = np.zeros_like(x)
    if fit.baseline is not None and fit.baseline.shape == x.shape:
        total += fit.baseline
    for lo, hi, a, b, xm in fit.background:
        inside = (x >= lo) & (x <= hi)
        total[inside] += a + b * (x[inside] - xm)
    reach = 8.0 if fit.profile == "gauss" else 100.0
    for i in range(len(fit)):
        lo = np.searchsorted(x, fit.centre[i] - reach * fit.fwhm[i], "left")
        hi = np.searchsorted(x, fit.centre[i] + reach * fit.fwhm[i], "right")
        xs = x[lo:hi]
        if fit.profile == "gauss":
            total[lo:hi] += fit.area[i] * gauss_profile(xs, fit.centre[i], fit.fwhm[i])
        else:
            total[lo:hi] += fit.area[i] * voigt_profile(
                xs - fit.centre[i], fit.gauss_fwhm[i] / FWHM_PER_SIGMA, fit.lorentz_fwhm[i] / 2.0
            )
    return total
