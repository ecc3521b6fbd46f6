"""Excitation temperature from a Boltzmann plot, and the Saha-Boltzmann plot over two ionization stages.

For optically thin lines of one species in (partial) local thermodynamic
equilibrium, the integrated intensity of a line u -> l is

.. math:: I = \\frac{h c}{4 \\pi \\lambda} A\\, n_u, \\qquad
   n_u = \\frac{n\\, g_u}{U(T)} e^{-E_u / k T},

so ``ln y = ln(I lambda / (g_u A))`` falls on a straight line against E_u with
slope ``-1 / kT`` (:func:`fit_boltzmann`; weighted least squares, points more
than ``clip`` standard deviations off the line flagged as outliers and left
out of the refit).

For lines of the next ion (charge z+1) the Saha equation links the two stages:
shifting the ion's upper energies by the ionization energy of stage z (less
its lowering) and its ``ln y`` by ``ln(2 (2 pi m_e k T)^{3/2} / (h^3 n_e))``
puts both stages on one line (:func:`saha_boltzmann_points`, iterated on T by
:func:`fit_saha_boltzmann`).

Lines of one multiplet share (nearly) one upper energy, so their ``ln y``
should agree; when the strongest lines of a multiplet fall below the weaker
ones by more than the noise, the strong lines are likely self-absorbed
(:func:`multiplet_deviations`).

References
----------
.. [1] H. R. Griem, *Principles of Plasma Spectroscopy*, Cambridge University
   Press (1997), ch. 6 and 10 (Boltzmann and Saha-Boltzmann plots).
.. [2] T. Fujimoto, *Plasma Spectroscopy*, Oxford University Press (2004), ch. 5.
.. [3] J. A. Aguilera and C. Aragón, Spectrochim. Acta B 59, 1861 (2004)
   (multi-element Saha-Boltzmann plots).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels.errors import PhysicsInputError
from levels.units import CM1_J, K_B, M_E, H

__all__ = [
    "BoltzmannFit",
    "boltzmann_ln_y",
    "fit_boltzmann",
    "saha_shift",
    "saha_boltzmann_points",
    "fit_saha_boltzmann",
    "multiplet_deviations",
]


@dataclass
class BoltzmannFit:
    """A straight line ln y = intercept - E_u / (k T) through the points not flagged."""

    te_k: float
    te_unc_k: float
    slope_per_cm1: float
    intercept: float
    residual: NDArray[np.float64]
    outlier: NDArray[np.bool_]
    chi2: float
    dof: int
    warnings: list[str] = field(default_factory=list)


def boltzmann_ln_y(
    intensity: ArrayLike, wavelength_nm: ArrayLike, g_upper: ArrayLike, a_per_s: ArrayLike
) -> NDArray[np.float64]:
    """``ln(I lambda / (g_u A))`` of each line (I in any unit; lambda in nm; A in s-1).

    Raises
    ------
    PhysicsInputError
        A non-positive intensity, wavelength, weight or A.

    Examples
    --------
    >>> round(float(boltzmann_ln_y(2.0, 500.0, 4, 1e7)), 4)
    -10.5966
    """
    arrays = [np.asarray(a, dtype=float) for a in (intensity, wavelength_nm, g_upper, a_per_s)]
    for name, arr in zip(("intensity", "wavelength_nm", "g_upper", "a_per_s"), arrays):
        if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
            raise PhysicsInputError(f"{name} must be finite and > 0 for a Boltzmann plot")
    i, lam, g, a = arrays
    return np.log(i * lam / (g * a))


def fit_boltzmann(
    upper_cm1: ArrayLike, ln_y: ArrayLike, ln_y_unc: ArrayLike | None = None, *, clip: float = 3.0, max_iter: int = 5
) -> BoltzmannFit:
    """Weighted straight-line fit of a Boltzmann plot; Te from the slope.

    Parameters
    ----------
    upper_cm1 : array_like
        Upper-level energies, cm-1.
    ln_y : array_like
        ``ln(I lambda / (g_u A))`` (:func:`boltzmann_ln_y`).
    ln_y_unc : array_like, optional
        Standard uncertainty of each ``ln y`` (relative intensity uncertainty,
        combined with that of A); default equal weights, the scatter then sets the
        uncertainty.
    clip : float
        Points whose residual exceeds this many of their given uncertainties (or,
        without them, of the robust scatter 1.4826 MAD) are flagged and left out,
        the worst first, never leaving fewer than 3 points.
    max_iter : int
        Reject-and-refit passes.

    Returns
    -------
    BoltzmannFit
        ``te_k`` and ``te_unc_k`` (K); the uncertainty is from the covariance of the
        slope, scaled by sqrt(chi2/dof) when that exceeds 1.

    Raises
    ------
    PhysicsInputError
        Fewer than 2 points, all at one energy, or a slope that is not negative.

    Notes
    -----
    .. math:: T = -\\frac{h c}{k\\, s}, \\qquad \\sigma_T = T\\,\\frac{\\sigma_s}{|s|}

    with s the slope per cm-1 (hc/k = 1.4388 cm K).

    Examples
    --------
    >>> e = np.array([97492.0, 102824.0, 105292.0, 106632.0])
    >>> fit = fit_boltzmann(e, 3.0 - e * 1.4387769 / 9000.0)
    >>> round(fit.te_k, 1)
    9000.0
    """
    e = np.asarray(upper_cm1, dtype=float)
    y = np.asarray(ln_y, dtype=float)
    s = np.ones_like(y) if ln_y_unc is None else np.asarray(ln_y_unc, dtype=float)
    if e.shape != y.shape or s.shape != y.shape or e.ndim != 1:
        raise PhysicsInputError("upper_cm1, ln_y and ln_y_unc must be 1-D arrays of one length")
    if not (np.all(np.isfinite(e)) and np.all(np.isfinite(y)) and np.all(np.isfinite(s)) and np.all(s > 0)):
        raise PhysicsInputError("Boltzmann-plot points and their uncertainties must be finite (uncertainties > 0)")
    if e.size < 2:
        raise PhysicsInputError(f"a Boltzmann plot needs at least 2 lines with known A, found {e.size}")
    if np.ptp(e) <= 0:
        raise PhysicsInputError("all lines share one upper energy: a Boltzmann plot needs a spread of upper energies")
    outlier = np.zeros(e.size, dtype=bool)
    warnings: list[str] = []
    for _ in range(max_iter):
        use = ~outlier
        w = 1.0 / s[use] ** 2
        a = np.vstack([np.ones(use.sum()), e[use]]).T
        cov = np.linalg.inv(a.T @ (a * w[:, None]))
        coef = cov @ (a.T @ (w * y[use]))
        resid = y - (coef[0] + coef[1] * e)
        dof = int(use.sum()) - 2
        chi2 = float(np.sum(w * resid[use] ** 2))
        scale = math.sqrt(chi2 / dof) if dof > 0 and (ln_y_unc is None or chi2 > dof) else 1.0
        if dof <= 1:
            break
        if ln_y_unc is not None:
            norm = np.abs(resid) / s
        else:  # no given uncertainties: the robust scatter (1.4826 MAD) of the points in use
            mad = 1.4826 * float(np.median(np.abs(resid[use] - np.median(resid[use]))))
            norm = np.abs(resid) / mad if mad > 0 else np.zeros_like(resid)
        new = norm > clip
        # never reject down to fewer than 3 points; reject the worst one at a time
        if new.any():
            worst = int(np.argmax(np.where(~outlier, norm, -np.inf)))
            if norm[worst] > clip and (~outlier).sum() > 3:
                outlier[worst] = True
                continue
        break
    slope = float(coef[1])
    slope_unc = math.sqrt(cov[1, 1]) * (scale if ln_y_unc is None or scale > 1 else 1.0)
    if not slope < 0:
        raise PhysicsInputError(
            f"the Boltzmann plot rises with upper energy (slope {slope:.3g} per cm-1): "
            "no excitation temperature; the populations are not in a Boltzmann balance"
        )
    te = -CM1_J / (K_B * slope)
    te_unc = te * slope_unc / abs(slope)
    if dof <= 0:
        warnings.append("only two lines: the temperature uncertainty comes from their given uncertainties alone")
    if outlier.any():
        warnings.append(
            f"{int(outlier.sum())} line(s) more than {clip:g} standard deviations off the Boltzmann line were left out"
        )
    return BoltzmannFit(
        te_k=float(te),
        te_unc_k=float(te_unc),
        slope_per_cm1=slope,
        intercept=float(coef[0]),
        residual=resid,
        outlier=outlier,
        chi2=chi2,
        dof=dof,
        warnings=warnings,
    )


def saha_shift(te_k: float, ne_m3: float) -> float:
    """``ln(2 (2 pi m_e k T)^{3/2} / (h^3 n_e))`` (dimensionless).

    Examples
    --------
    >>> round(saha_shift(10000.0, 1e22), 3)   # 2 (2 pi m_e k T / h^2)^1.5 = 4.83e27 m-3 at 1e4 K
    13.088
    """
    if not (te_k > 0 and ne_m3 > 0):
        raise PhysicsInputError("te_k and ne_m3 must be > 0")
    return math.log(2.0 * (2.0 * math.pi * M_E * K_B * te_k) ** 1.5 / (H**3 * ne_m3))


def saha_boltzmann_points(
    upper_cm1: ArrayLike,
    ln_y: ArrayLike,
    ion_stage: ArrayLike,
    *,
    ionization_cm1: float,
    te_k: float,
    ne_m3: float,
    lowering_cm1: float = 0.0,
) -> tuple[NDArray, NDArray]:
    """Shift the points of the higher stage (``ion_stage == 1``) onto the lower stage's Boltzmann line.

    Returns
    -------
    (energy_cm1, ln_y)
        ``E* = E_u + E_ion - dE`` and ``ln y* = ln y - saha_shift(T, n_e)`` for the ion's
        lines; unchanged for the lower stage's lines.

    Examples
    --------
    >>> e, y = saha_boltzmann_points([1000.0, 2000.0], [0.0, 0.0], [0, 1], ionization_cm1=50000.0,
    ...                              te_k=1e4, ne_m3=1e22)
    >>> e.tolist(), round(float(y[1]), 3)
    ([1000.0, 52000.0], -13.088)
    """
    e = np.asarray(upper_cm1, dtype=float).copy()
    y = np.asarray(ln_y, dtype=float).copy()
    ion = np.asarray(ion_stage) == 1
    e[ion] += ionization_cm1 - lowering_cm1
    y[ion] -= saha_shift(te_k, ne_m3)
    return e, y


def fit_saha_boltzmann(
    upper_cm1: ArrayLike,
    ln_y: ArrayLike,
    ion_stage: ArrayLike,
    *,
    ionization_cm1: float,
    ne_m3: float,
    ln_y_unc: ArrayLike | None = None,
    te_start_k: float = 10000.0,
    lowering_cm1: float = 0.0,
    tol: float = 1e-6,
    max_iter: int = 50,
) -> BoltzmannFit:
    """Te from lines of two adjacent ionization stages (iterated: the Saha shift depends on T).

    Examples
    --------
    >>> te, ne, eion = 12000.0, 1e22, 50000.0
    >>> e = np.array([20000.0, 30000.0, 10000.0, 25000.0])
    >>> stage = np.array([0, 0, 1, 1])
    >>> y = 1.0 - (e + stage * eion) * 1.4387769 / te + stage * saha_shift(te, ne)
    >>> round(fit_saha_boltzmann(e, y, stage, ionization_cm1=eion, ne_m3=ne).te_k, 2)
    12000.0
    """
    te = float(te_start_k)
    for _ in range(max_iter):
        e, y = saha_boltzmann_points(
            upper_cm1, ln_y, ion_stage, ionization_cm1=ionization_cm1, te_k=te, ne_m3=ne_m3, lowering_cm1=lowering_cm1
        )
        fit = fit_boltzmann(e, y, ln_y_unc)
        if abs(fit.te_k - te) <= tol * te:
            return fit
        te = fit.te_k
    fit.warnings.append("the Saha-Boltzmann iteration on Te did not settle")
    return fit


def multiplet_deviations(
    group: ArrayLike,
    ln_y: ArrayLike,
    ln_y_unc: ArrayLike,
    strength: ArrayLike,
    *,
    threshold: float = 3.0,
    min_ratio: float = 0.15,
) -> list:
    """Groups (multiplets) whose strongest line sits below the group's weaker lines.

    Within a multiplet the upper energies are (nearly) equal, so every line should
    give the same ``ln y``. A strongest line (by expected ``g_u A``) lower than the
    mean of the others by more than ``threshold`` combined standard deviations and
    by more than ``ln(1 + min_ratio)`` is the mark of self-absorption.

    Returns
    -------
    list
        The group labels that deviate.

    Examples
    --------
    >>> multiplet_deviations([1, 1, 1], [0.0, -0.02, -0.6], [0.02] * 3, [1.0, 2.0, 5.0])
    [1]
    """
    group = np.asarray(group)
    y = np.asarray(ln_y, dtype=float)
    s = np.asarray(ln_y_unc, dtype=float)
    st = np.asarray(strength, dtype=float)
    out = []
    for label in np.unique(group):
        members = np.flatnonzero(group == label)
        if members.size < 2:
            continue
        top = members[np.argmax(st[members])]
        rest = members[members != top]
        w = 1.0 / s[rest] ** 2
        mean = float(np.sum(w * y[rest]) / np.sum(w))
        unc = math.sqrt(1.0 / np.sum(w) + s[top] ** 2)
        gap = mean - y[top]
        if gap > threshold * unc and gap > math.log(1.0 + min_ratio):
            out.append(label.item() if hasattr(label, "item") else label)
    return out
