"""Lines from level pairs: the Ritz combination principle with propagated uncertainties.

A line between levels of energies E_l < E_u (cm-1) has the wavenumber
sigma = E_u - E_l and the vacuum wavelength lambda = 1e7 / sigma nm. With
independent level uncertainties u_l, u_u (cm-1),

    u_sigma = sqrt(u_l^2 + u_u^2),      u_lambda = lambda * u_sigma / sigma   (nm),

the "Ritz wavelength" and its uncertainty (first-order propagation; a level
without an uncertainty contributes zero, and a line whose both levels lack one
has no uncertainty). The pairs themselves come from the exact selection rules
of :mod:`levels.physics.lines.selection`, processed block by block so memory stays
bounded for tens of thousands of levels; a wavenumber window is applied to each
block before anything is kept.

References
----------
W. Ritz, "On a new law of series spectra", Astrophys. J. 28, 237 (1908).
A. E. Kramida, "The program LOPT for least-squares optimization of energy
levels", Comput. Phys. Commun. 182, 419 (2011), section 2 (Ritz wavelengths
and their uncertainties) - cited for the propagation formula only.
BIPM et al., *Guide to the expression of uncertainty in measurement*, JCGM
100:2008, section 5.1 (law of propagation of uncertainty).
"""

from __future__ import annotations

import warnings
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from typing import cast

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels.errors import PhysicsInputError
from levels.physics.lines import air, selection


@dataclass
class LineSet:
    """Lines as column arrays (indices into the level arrays given to :func:`build_lines`)."""

    lower: NDArray[np.int64]
    upper: NDArray[np.int64]
    multipole: NDArray[np.object_]
    wavenumber_cm1: NDArray[np.float64]
    wavenumber_unc_cm1: NDArray[np.float64]
    vacuum_nm: NDArray[np.float64]
    air_nm: NDArray[np.float64]
    unc_nm: NDArray[np.float64]
    intercombination: NDArray[np.bool_]

    def __len__(self) -> int:
        return int(self.lower.size)


def ritz_wavenumbers(energy_cm1: ArrayLike, unc_cm1: ArrayLike, lower: ArrayLike,
                     upper: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Wavenumbers (cm-1) and their uncertainties from level energies and uncertainties.

    NaN uncertainties count as zero unless both levels lack one (then NaN).

    Examples
    --------
    >>> s, u = ritz_wavenumbers([0.0, 100.0], [0.03, 0.04], [0], [1])
    >>> float(s[0]), round(float(u[0]), 12)
    (100.0, 0.05)
    """
    e = np.asarray(energy_cm1, dtype=float)
    u = np.asarray(unc_cm1, dtype=float)
    lo = np.asarray(lower, dtype=np.int64)
    up = np.asarray(upper, dtype=np.int64)
    sigma = e[up] - e[lo]
    ul, uu = u[lo], u[up]
    both_missing = np.isnan(ul) & np.isnan(uu)
    unc = np.sqrt(np.nan_to_num(ul) ** 2 + np.nan_to_num(uu) ** 2)
    return sigma, np.where(both_missing, np.nan, unc)


def build_lines(energy_cm1: ArrayLike, unc_cm1: ArrayLike, two_j: ArrayLike, parity: ArrayLike, *,
                multipoles: Sequence[str] = ("E1",), two_s: ArrayLike | None = None,
                min_wavenumber_cm1: float = 0.0,
                max_wavenumber_cm1: float = np.inf, max_upper_cm1: float = np.inf,
                air_formula: str = "iau2000", max_lines: int = 50_000_000) -> LineSet:
    """Every line the selection rules allow between the given levels, inside a wavenumber window.

    Parameters
    ----------
    energy_cm1, unc_cm1 : array_like, shape (N,)
        Level energies and uncertainties, cm-1 (NaN uncertainty = unknown).
    two_j, parity : array_like of int, shape (N,)
        2J and parity (+1/-1) of each level.
    multipoles : sequence of {"E1", "M1", "E2"}
        Multipoles to build.
    two_s : array_like of int, optional
        2S of each level's LS term (-1 unknown), for the intercombination flag (Delta S != 0).
    min_wavenumber_cm1, max_wavenumber_cm1 : float
        Window in wavenumber (cm-1); pairs outside are dropped block by block.
    max_upper_cm1 : float
        Upper levels above this energy are left out.
    air_formula : str
        Formula of :mod:`levels.physics.lines.air` for air wavelengths (NaN below 200 nm).
    max_lines : int
        Refuse (PhysicsInputError) a result larger than this, naming its size.

    Returns
    -------
    LineSet
        Sorted by vacuum wavelength.

    Examples
    --------
    >>> lines = build_lines([0.0, 16956.17, 16973.37], [0.0, 0.01, 0.01], [1, 1, 3], [1, -1, -1])
    >>> [round(float(x), 3) for x in lines.vacuum_nm]
    [589.158, 589.756]
    """
    e = np.asarray(energy_cm1, dtype=float)
    u = np.asarray(unc_cm1, dtype=float)
    if e.shape != u.shape:
        raise PhysicsInputError("energy_cm1 and unc_cm1 must have the same length")
    if not min_wavenumber_cm1 <= max_wavenumber_cm1:
        raise PhysicsInputError("empty wavenumber window")
    usable = e <= max_upper_cm1
    lower_parts, upper_parts, code_parts = [], [], []
    kept = 0
    for lo, up, code in selection.iter_candidate_pairs(two_j, parity, np.where(usable, e, np.nan), multipoles):
        sigma = e[up] - e[lo]
        keep = (sigma >= min_wavenumber_cm1) & (sigma <= max_wavenumber_cm1) & (sigma > 0)
        if not keep.any():
            continue
        lower_parts.append(lo[keep].astype(np.int64))
        upper_parts.append(up[keep].astype(np.int64))
        code_parts.append(code[keep])
        kept += int(keep.sum())
        if kept > max_lines:
            raise PhysicsInputError(f"the window holds more than {max_lines} lines; narrow it or raise the limit")
    if lower_parts:
        lower = np.concatenate(lower_parts)
        upper = np.concatenate(upper_parts)
        codes = np.concatenate(code_parts)
    else:
        lower = upper = np.empty(0, dtype=np.int64)
        codes = np.empty(0, dtype=np.int8)
    sigma, sigma_unc = ritz_wavenumbers(e, u, lower, upper)
    vacuum = 1e7 / sigma if sigma.size else sigma.copy()
    order = np.argsort(vacuum)
    lower, upper, codes, sigma, sigma_unc, vacuum = (a[order] for a in (lower, upper, codes, sigma, sigma_unc, vacuum))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", air.AirRangeWarning)
        air_nm = np.asarray(air.vacuum_to_air(vacuum, air_formula), dtype=float) if vacuum.size else vacuum.copy()
    names = np.asarray(selection.MULTIPOLES, dtype=object)[codes] if codes.size else np.empty(0, dtype=object)
    inter = np.zeros(lower.size, dtype=bool)
    if two_s is not None and lower.size:
        s_arr = np.asarray(two_s, dtype=np.int64)
        inter = (s_arr[lower] >= 0) & (s_arr[upper] >= 0) & (s_arr[lower] != s_arr[upper])
    return LineSet(lower=cast(NDArray[np.int64], lower), upper=cast(NDArray[np.int64], upper), multipole=names,
                   wavenumber_cm1=sigma, wavenumber_unc_cm1=sigma_unc,
                   vacuum_nm=vacuum, air_nm=air_nm, unc_nm=vacuum * sigma_unc / sigma if sigma.size else sigma.copy(),
                   intercombination=inter)


#: A measured line further than this many combined standard uncertainties from the Ritz
#: wavenumber of its two levels is refused (unless the file's import says why it is allowed).
#: Why 5: for Gaussian errors a deviation beyond 5 sigma has probability 5.7e-7 per line
#: (two-sided), so a file of 10^4 correctly identified lines is refused by chance less than
#: once in 170 imports, whereas 3 sigma (0.27 % per line) would refuse a good file of a few
#: hundred lines about every other time; a misidentified line or a wrong unit is typically
#: thousands of sigma off. The level optimiser still flags lines beyond 3 sigma as outliers.
OFF_RITZ_SIGMAS = 5.0
#: relative floor of the tolerance (rounding of values given to 8-9 digits; an observed line
#: and two levels all without uncertainty are still compared to this)
OFF_RITZ_RELATIVE_FLOOR = 1e-8


@dataclass
class RitzCheck:
    """Measured wavenumbers against the Ritz wavenumbers of their levels (arrays, one entry per line)."""

    delta_cm1: NDArray[np.float64]
    combined_unc_cm1: NDArray[np.float64]
    tolerance_cm1: NDArray[np.float64]
    off: NDArray[np.bool_]


def check_against_ritz(observed_cm1: ArrayLike, observed_unc_cm1: ArrayLike, lower_cm1: ArrayLike,
                       lower_unc_cm1: ArrayLike, upper_cm1: ArrayLike, upper_unc_cm1: ArrayLike,
                       n_sigma: float = OFF_RITZ_SIGMAS) -> RitzCheck:
    """Compare measured line wavenumbers with the Ritz wavenumbers E_u - E_l of their levels.

    delta = sigma_obs - (E_u - E_l); the combined standard uncertainty is
    u_c = sqrt(u_obs^2 + u_l^2 + u_u^2) (independent errors, GUM 5.1; NaN counts
    as 0); a line is *off* when |delta| > n_sigma u_c + 1e-8 sigma_obs
    (:data:`OFF_RITZ_SIGMAS`, :data:`OFF_RITZ_RELATIVE_FLOOR`).

    Parameters
    ----------
    observed_cm1, observed_unc_cm1 : array_like
        Measured vacuum wavenumbers and their standard uncertainties, cm-1.
    lower_cm1, lower_unc_cm1, upper_cm1, upper_unc_cm1 : array_like
        Energies of the two levels and their standard uncertainties, cm-1.
    n_sigma : float
        Refusal threshold in combined standard uncertainties.

    Returns
    -------
    RitzCheck
        ``delta_cm1``, ``combined_unc_cm1``, ``tolerance_cm1`` and the boolean ``off``.

    References
    ----------
    W. Ritz, Astrophys. J. 28, 237 (1908); JCGM 100:2008 (GUM), section 5.1.

    Examples
    --------
    >>> c = check_against_ritz([17000.05, 21250.0], [0.01, 0.01], [0.0, 0.0], [0.01, 0.01],
    ...                        [17000.0, 17000.0], [0.01, 0.01])
    >>> c.off.tolist(), [round(float(x), 4) for x in c.combined_unc_cm1]
    ([False, True], [0.0173, 0.0173])
    """
    obs = np.asarray(observed_cm1, dtype=float)
    delta = obs - (np.asarray(upper_cm1, dtype=float) - np.asarray(lower_cm1, dtype=float))
    parts = [np.nan_to_num(np.asarray(u, dtype=float)) for u in (observed_unc_cm1, lower_unc_cm1, upper_unc_cm1)]
    combined = np.sqrt(parts[0] ** 2 + parts[1] ** 2 + parts[2] ** 2)
    tolerance = n_sigma * combined + OFF_RITZ_RELATIVE_FLOOR * np.abs(obs)
    return RitzCheck(delta_cm1=delta, combined_unc_cm1=combined, tolerance_cm1=tolerance,
                     off=np.abs(delta) > tolerance)


def iter_line_blocks(energy_cm1: ArrayLike, unc_cm1: ArrayLike, two_j: ArrayLike, parity: ArrayLike, *,
                     multipoles: Sequence[str] = ("E1",), air_formula: str = "iau2000",
                     block: int = 20_000) -> Iterator[LineSet]:
    """Every allowed line between the levels, as :class:`LineSet` blocks of at most ``block`` lines.

    The streaming form of :func:`build_lines` (no window, no sorting, no
    intercombination flag): peak memory is one block (about 120 bytes per line of
    column arrays, 2.4 MB for 20,000 lines) plus the level arrays and one row of
    the largest group product (16 bytes per level), whatever the total.

    Examples
    --------
    >>> blocks = list(iter_line_blocks([0.0, 16956.17, 16973.37], [0.0, 0.01, 0.01], [1, 1, 3], [1, -1, -1], block=1))
    >>> [round(float(b.vacuum_nm[0]), 3) for b in blocks]
    [589.756, 589.158]
    """
    e = np.asarray(energy_cm1, dtype=float)
    u = np.asarray(unc_cm1, dtype=float)
    if e.shape != u.shape:
        raise PhysicsInputError("energy_cm1 and unc_cm1 must have the same length")
    names = np.asarray(selection.MULTIPOLES, dtype=object)
    for lo_all, up_all, code_all in selection.iter_candidate_pairs(two_j, parity, e, multipoles, chunk_size=block):
        # a pair block holds at least one row of its group product, which may exceed ``block``: slice it
        for start in range(0, lo_all.size, block):
            lo = lo_all[start:start + block].astype(np.int64)
            up = up_all[start:start + block].astype(np.int64)
            code = code_all[start:start + block]
            sigma, sigma_unc = ritz_wavenumbers(e, u, lo, up)
            vacuum = 1e7 / sigma
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", air.AirRangeWarning)
                air_nm = np.asarray(air.vacuum_to_air(vacuum, air_formula), dtype=float)
            yield LineSet(lower=lo, upper=up, multipole=names[code], wavenumber_cm1=sigma,
                          wavenumber_unc_cm1=sigma_unc, vacuum_nm=vacuum, air_nm=air_nm,
                          unc_nm=vacuum * sigma_unc / sigma, intercombination=np.zeros(lo.size, dtype=bool))
