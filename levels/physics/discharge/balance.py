"""Steady-state collisional-radiative balance of the levels of one species and its next ion.

The populations n of the N bound levels of a species and of the ground level of
its next ion obey dn/dt = M n = 0, where M holds, for Maxwellian electrons at Te
and density ne,

* electron-impact excitation and de-excitation between levels
  (:mod:`~levels.physics.discharge.excitation`: van Regemorter for pairs with an
  oscillator strength, a constant collision strength for the forbidden pairs of
  every metastable and of the ground level;
  :mod:`~levels.physics.discharge.hydrogen_rates`: Vriens & Smeets between
  the shells of atomic hydrogen), de-excitation by detailed balance;
* spontaneous decay A_ul, times an escape factor Lambda_ul
  (:mod:`~levels.physics.discharge.escape`) where the plasma traps the line,
  and any further decay of a level not carried by a listed line (two-photon
  decay), to the ground level;
* electron-impact ionization (:mod:`~levels.physics.discharge.ionization`, Lotz)
  and three-body recombination by detailed balance; radiative recombination
  (:mod:`~levels.physics.discharge.recombination`);
* a loss rate of metastable levels (walls, diffusion) that returns them to the ground level.

One equation (the ground level's) is replaced by n_0 = 1, so the solution is the
population per ground-level population. The unknowns are scaled by their
Saha-Boltzmann values at Te (and the rows equilibrated) before the sparse LU
solve (:func:`scipy.sparse.linalg.spsolve`), so populations spanning hundreds of
orders of magnitude keep their relative precision; the solved scaled unknowns are
the departure coefficients. At high density collisions dominate and every
departure coefficient tends to 1 (LTE, Saha-Boltzmann); at low density the
excited populations per ground atom grow linearly with ne (corona balance).

References
----------
.. [1] D. R. Bates, A. E. Kingston and R. W. P. McWhirter, "Recombination between
   electrons and atomic ions. I. Optically thin plasmas", Proc. R. Soc. A 267,
   297-312 (1962) (the collisional-radiative model).
.. [2] T. Fujimoto, *Plasma Spectroscopy*, Oxford University Press (2004).
.. [3] R. W. P. McWhirter (1965), in *Plasma Diagnostic Techniques*, Academic Press,
   ch. 5 (corona and LTE limits).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp
from numpy.typing import ArrayLike, NDArray
from scipy.sparse.linalg import spsolve
from scipy.special import voigt_profile

from levels import units
from levels.errors import PhysicsInputError
from levels.physics.discharge import escape as esc
from levels.physics.discharge import excitation, hydrogen_rates, ionization, recombination
from levels.physics.discharge.common import C2_CM_K, as_nonnegative, as_positive, check_density, check_temperature

__all__ = ["CRSpecies", "RateSet", "CRResult", "rate_coefficients", "rate_matrix", "scaled_system",
           "shell_oscillator_strengths", "solve_steady_state",
           "solve_with_trapping", "saha_boltzmann_log"]

#: stop the radiation-trapping iteration when no escape factor changes by more than this (relative)
TRAPPING_TOLERANCE = 1e-4
TRAPPING_MAX_ITERATIONS = 60


@dataclass
class CRSpecies:
    """The atomic data the balance needs (numbers only).

    Attributes
    ----------
    energy_cm1 : array (N,)
        Level energies above the ground level, cm-1; level 0 must be the ground level.
    g : array (N,)
        Statistical weights.
    ionization_cm1 : float
        Ionization energy of the species, cm-1.
    g_ion : float
        Statistical weight of the next ion's ground level.
    core_charge : int
        Charge of the next ion (1 for a neutral species).
    lower, upper : int arrays (M,)
        Level indices of the radiative lines.
    a_per_s : array (M,)
        Einstein A of each line, s-1.
    f_abs : array (M,)
        Absorption oscillator strength (0 where unknown or forbidden).
    extra_decay_per_s : array (N,), optional
        Decay of each level to the ground level not carried by a listed line (for
        example two-photon decay), s-1.
    shell : int array (N,), optional
        Principal quantum number of each level; with ``hydrogen`` it selects Vriens & Smeets.
    hydrogen : bool
        Atomic hydrogen (H I): shell-to-shell excitation from Vriens & Smeets, Lotz's hydrogen parameters.
    """

    energy_cm1: NDArray[np.float64]
    g: NDArray[np.float64]
    ionization_cm1: float
    g_ion: float
    core_charge: int
    lower: NDArray[np.int64]
    upper: NDArray[np.int64]
    a_per_s: NDArray[np.float64]
    f_abs: NDArray[np.float64]
    extra_decay_per_s: Any = None      # NDArray[np.float64] (N,) after construction; None means no extra decay
    shell: Any = None                  # NDArray[np.int64] (N,) or None
    hydrogen: bool = False

    def __post_init__(self) -> None:
        self.energy_cm1 = np.asarray(self.energy_cm1, dtype=float)
        self.g = as_positive("g", self.g).astype(float)
        n = self.energy_cm1.size
        if n == 0 or self.g.shape != (n,):
            raise PhysicsInputError("energy_cm1 and g must be non-empty and of one length")
        if not np.all(np.isfinite(self.energy_cm1)) or self.energy_cm1[0] != self.energy_cm1.min():
            raise PhysicsInputError("level energies must be finite and level 0 must be the ground level")
        if not (math.isfinite(self.ionization_cm1) and self.ionization_cm1 > self.energy_cm1.max()):
            raise PhysicsInputError(f"the ionization energy ({self.ionization_cm1:g} cm-1) must lie above every "
                                    f"level (highest {self.energy_cm1.max():g} cm-1)")
        self.lower = np.asarray(self.lower, dtype=np.int64)
        self.upper = np.asarray(self.upper, dtype=np.int64)
        self.a_per_s = as_nonnegative("a_per_s", self.a_per_s).astype(float)
        self.f_abs = as_nonnegative("f_abs", self.f_abs).astype(float)
        m = self.lower.size
        if any(arr.shape != (m,) for arr in (self.upper, self.a_per_s, self.f_abs)):
            raise PhysicsInputError("lower, upper, a_per_s and f_abs must have one entry per line")
        if m and (self.lower.min() < 0 or self.upper.max() >= n or np.any(self.lower == self.upper)):
            raise PhysicsInputError("line level indices must be distinct levels of the species")
        if m and np.any(self.energy_cm1[self.upper] <= self.energy_cm1[self.lower]):
            raise PhysicsInputError("every line's upper level must lie above its lower level")
        if self.extra_decay_per_s is None:
            self.extra_decay_per_s = np.zeros(n)
        self.extra_decay_per_s = as_nonnegative("extra_decay_per_s", self.extra_decay_per_s).astype(float)
        as_positive("g_ion", self.g_ion)
        if self.shell is not None:
            self.shell = np.asarray(self.shell, dtype=np.int64)
        if self.hydrogen and (self.shell is None or np.any(self.shell < 1)):
            raise PhysicsInputError("hydrogen rates need the principal quantum number of every level")

    @property
    def size(self) -> int:
        return int(self.energy_cm1.size)

    def metastable(self) -> NDArray[np.bool_]:
        """Levels (other than the ground) with no radiative decay: no line down, no extra decay."""
        decays = np.zeros(self.size, dtype=bool)
        decays[self.upper[self.a_per_s > 0]] = True
        decays |= self.extra_decay_per_s > 0
        out = ~decays
        out[0] = False
        return out


@dataclass
class RateSet:
    """Rate coefficients of one species at one Te (independent of ne).

    ``pair_lower``, ``pair_upper``, ``excitation``, ``deexcitation`` (m3 s-1) and
    ``pair_source`` (0 Vriens & Smeets, 1 van Regemorter, 2 constant collision
    strength); ``ionization`` (m3 s-1), ``three_body`` (m6 s-1), ``radiative_rec``
    (m3 s-1) per level.
    """

    te_k: float
    pair_lower: NDArray[np.int64]
    pair_upper: NDArray[np.int64]
    excitation: NDArray[np.float64]
    deexcitation: NDArray[np.float64]
    pair_source: NDArray[np.int8]
    ionization: NDArray[np.float64]
    three_body: NDArray[np.float64]
    radiative_rec: NDArray[np.float64]
    forbidden_omega: float


@dataclass
class CRResult:
    """Solution of the balance: populations per ground-level population, departures, what was used."""

    population_rel: NDArray[np.float64]
    ion_rel: float
    departure: NDArray[np.float64]
    ion_departure: float
    escape: NDArray[np.float64]
    iterations: int = 1
    warnings: list[str] = field(default_factory=list)

    @property
    def species_fraction(self) -> float:
        """Share of the species in species + next ion."""
        total = float(np.sum(self.population_rel))
        return total / (total + self.ion_rel)


def saha_boltzmann_log(sp_: CRSpecies, te_k: float, ne_m3: float) -> NDArray[np.float64]:
    """log of the Saha-Boltzmann populations per ground-level population: N levels, then the ion.

    Examples
    --------
    >>> s = CRSpecies([0.0, 82259.0], [2, 8], 109678.8, 1, 1, [0], [1], [4.7e8], [0.42])
    >>> round(float(np.exp(saha_boltzmann_log(s, 1e4, 1e20)[1])), 8)
    2.898e-05
    """
    te = check_temperature(te_k)
    ne = check_density(ne_m3)
    out = np.empty(sp_.size + 1)
    out[:-1] = np.log(sp_.g / sp_.g[0]) - C2_CM_K * sp_.energy_cm1 / te
    saha = ionization.saha_level_factor_m3(sp_.g[0], sp_.g_ion, te)   # n_0 / (n_+ ne) without e^{P/kT}
    out[-1] = -math.log(float(saha) * ne) - C2_CM_K * sp_.ionization_cm1 / te
    return out


def shell_oscillator_strengths(sp_: CRSpecies) -> NDArray[np.float64]:
    """Absorption f of each pair of hydrogen shells (p < q) from the sublevel lines: F[p, q] = sum g_i f_ij / g_p.

    Examples
    --------
    >>> s = CRSpecies([0.0, 82258.9, 82259.3], [2, 2, 4], 109678.8, 1, 1, [0, 0], [1, 2], [2e8, 2e8],
    ...               [0.139, 0.277], shell=[1, 2, 2], hydrogen=True)
    >>> round(float(shell_oscillator_strengths(s)[1, 2]), 3)
    0.416
    """
    shell = sp_.shell
    top = int(shell.max()) + 1
    g_shell = np.bincount(shell, weights=sp_.g, minlength=top)
    p = shell[sp_.lower]
    q = shell[sp_.upper]
    keep = (p < q) & (sp_.f_abs > 0)
    f = np.zeros((top, top))
    np.add.at(f, (p[keep], q[keep]), sp_.g[sp_.lower[keep]] * sp_.f_abs[keep])
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(g_shell[:, None] > 0, f / np.where(g_shell > 0, g_shell, 1.0)[:, None], 0.0)


def rate_coefficients(sp_: CRSpecies, te_k: float, *,
                      forbidden_omega: float = excitation.DEFAULT_FORBIDDEN_OMEGA) -> RateSet:
    """Every collisional rate coefficient of the balance at one Te.

    Parameters
    ----------
    sp_ : CRSpecies
        The species' atomic data.
    te_k : float
        Electron temperature, K.
    forbidden_omega : float
        Collision strength of the pairs without an oscillator strength that involve the
        ground or a metastable level (default :data:`~levels.physics.discharge.excitation.DEFAULT_FORBIDDEN_OMEGA`;
        0 switches them off).

    Returns
    -------
    RateSet

    Examples
    --------
    >>> s = CRSpecies([0.0, 82259.0], [2, 8], 109678.8, 1, 1, [0], [1], [4.7e8], [0.42])
    >>> r = rate_coefficients(s, 11604.5)
    >>> r.pair_lower.tolist(), r.pair_upper.tolist(), int(r.pair_source[0])
    ([0], [1], 1)
    """
    te = check_temperature(te_k)
    om = float(forbidden_omega)
    if not math.isfinite(om) or om < 0:
        raise PhysicsInputError(f"forbidden_omega must be finite and >= 0, got {forbidden_omega!r}")
    n = sp_.size
    e = sp_.energy_cm1
    is_ion = sp_.core_charge > 1
    keys, rates_, source = [], [], []
    # 1. hydrogen: the shell-to-shell rate of Vriens & Smeets shared among sublevel pairs so that
    #    sum_(i in p, j in q) g_i K_ij = g_p K_pq:
    #    - from the ground and the metastable levels to every sublevel j of shell q, in proportion to g_j
    #      (statistical sharing; these few rows stay sparse);
    #    - between excited levels only over the pairs with an E1 line, in proportion to g_i f_ij (keeps the
    #      matrix as sparse as the line list: thousands of levels solve in about a second)
    if sp_.hydrogen:
        shell = sp_.shell
        f_shell = shell_oscillator_strengths(sp_)
        g_shell = np.bincount(shell, weights=sp_.g)
        special = sp_.metastable()
        special[0] = True
        li, ui = np.nonzero(special[:, None] & (shell[:, None] < shell[None, :]))
        if li.size:
            # each special level i of shell p gets K_pq (its shell's rate) shared among q's sublevels by g_j
            p, q = shell[li], shell[ui]
            k_pq = hydrogen_rates.vriens_smeets_excitation(p, q, f_shell[p, q], te)
            keys.append(li * n + ui)
            rates_.append(k_pq * sp_.g[ui] / g_shell[q])
            source.append(np.zeros(li.size, dtype=np.int8))
        pl_, pu_ = shell[sp_.lower], shell[sp_.upper]
        cross = (pl_ < pu_) & (sp_.f_abs > 0) & ~special[sp_.lower]
        if np.any(cross):
            li, ui = sp_.lower[cross], sp_.upper[cross]
            p, q = pl_[cross], pu_[cross]
            f_pq = f_shell[p, q]
            k_pq = hydrogen_rates.vriens_smeets_excitation(p, q, f_pq, te)
            # dipole share of the non-special sublevels of shell p: sum over them of g_i f_ij
            g_f = np.zeros(f_shell.shape)
            np.add.at(g_f, (p, q), sp_.g[li] * sp_.f_abs[cross])
            g_nonspecial = np.bincount(shell[~special], weights=sp_.g[~special], minlength=g_shell.size)
            share = sp_.f_abs[cross] / np.where(g_f[p, q] > 0, g_f[p, q], 1.0)
            keys.append(li * n + ui)
            rates_.append(k_pq * g_nonspecial[p] * share)
            source.append(np.zeros(li.size, dtype=np.int8))
    # 2. pairs with an oscillator strength: van Regemorter
    with_f = sp_.f_abs > 0
    if np.any(with_f):
        lo = sp_.lower[with_f]
        up = sp_.upper[with_f]
        de = e[up] - e[lo]
        ok = de > 0
        lo, up, de, f = lo[ok], up[ok], de[ok], sp_.f_abs[with_f][ok]
        keys.append(lo * n + up)
        rates_.append(excitation.van_regemorter_rate(f, de, te, ion=is_ion))
        source.append(np.ones(lo.size, dtype=np.int8))
    # 3. forbidden pairs of the ground and metastable levels: a constant collision strength
    if om > 0:
        chosen = np.flatnonzero(sp_.metastable() | (np.arange(n) == 0))
        a = np.repeat(chosen, n)
        b = np.tile(np.arange(n), chosen.size)
        lo = np.where(e[a] <= e[b], a, b)
        up = np.where(e[a] <= e[b], b, a)
        ok = (lo != up) & (e[up] > e[lo])
        lo, up = lo[ok], up[ok]
        keys.append(lo * n + up)
        rates_.append(excitation.collision_strength_rate(om, sp_.g[lo], e[up] - e[lo], te))
        source.append(np.full(lo.size, 2, dtype=np.int8))
    if keys:
        key = np.concatenate(keys)
        rate = np.concatenate(rates_)
        src = np.concatenate(source)
        # first source wins (hydrogen fits, then van Regemorter, then the constant collision strength)
        order = np.argsort(src, kind="stable")
        uniq, first = np.unique(key[order], return_index=True)
        pick = order[first]
        rate, src = rate[pick], src[pick]
        pl, pu = uniq // n, uniq % n
    else:
        pl = pu = np.zeros(0, dtype=np.int64)
        rate = np.zeros(0)
        src = np.zeros(0, dtype=np.int8)
    de = e[pu] - e[pl]
    down = excitation.deexcitation_rate(rate, sp_.g[pl], sp_.g[pu], de, te) if pl.size else np.zeros(0)
    binding = sp_.ionization_cm1 - e
    params = ionization.LOTZ_HYDROGEN if sp_.hydrogen else ionization.LOTZ_SIMPLE
    s_ion = ionization.lotz_rate(binding, te, params=params)
    a3 = ionization.three_body_recombination(binding, sp_.g, sp_.g_ion, te, params=params)
    arr = recombination.radiative_recombination(binding, sp_.g, sp_.g_ion, sp_.core_charge, te)
    return RateSet(te, pl.astype(np.int64), pu.astype(np.int64), np.asarray(rate), np.asarray(down), src,
                   s_ion, a3, arr, om)


def rate_matrix(sp_: CRSpecies, rates: RateSet, ne_m3: float, *, escape: ArrayLike | None = None,
                loss_rate_per_s: float = 0.0) -> sp.csr_matrix:
    """The (N+1) x (N+1) rate matrix M (s-1) of dn/dt = M n; column j holds the flows out of level j.

    Parameters
    ----------
    sp_ : CRSpecies
    rates : RateSet
        From :func:`rate_coefficients` at the same Te.
    ne_m3 : float
        Electron density, m-3.
    escape : array_like (M,), optional
        Escape factor of each line (default 1: optically thin).
    loss_rate_per_s : float
        Loss rate of metastable levels to the ground level (walls, diffusion), s-1.

    Returns
    -------
    scipy.sparse.csr_matrix
        Column sums are zero (particles are conserved).

    Examples
    --------
    >>> s = CRSpecies([0.0, 82259.0], [2, 8], 109678.8, 1, 1, [0], [1], [4.7e8], [0.42])
    >>> m = rate_matrix(s, rate_coefficients(s, 11604.5), 1e20)
    >>> bool(abs(m.sum(axis=0)).max() < 1e-6 * abs(m.diagonal()).max())
    True
    """
    ne = check_density(ne_m3)
    loss = float(loss_rate_per_s)
    if not math.isfinite(loss) or loss < 0:
        raise PhysicsInputError(f"the metastable loss rate must be finite and >= 0 s-1, got {loss_rate_per_s!r}")
    n = sp_.size
    lam = np.ones(sp_.lower.size) if escape is None else as_nonnegative("escape", escape)
    if lam.shape != sp_.lower.shape:
        raise PhysicsInputError("escape needs one factor per line")
    ion = n
    src_parts = [rates.pair_lower, rates.pair_upper, sp_.upper, np.arange(n), np.full(n, ion), np.full(n, ion),
                 np.flatnonzero(sp_.extra_decay_per_s > 0)]
    dst_parts = [rates.pair_upper, rates.pair_lower, sp_.lower, np.full(n, ion), np.arange(n), np.arange(n),
                 np.zeros(int(np.sum(sp_.extra_decay_per_s > 0)), dtype=np.int64)]
    val_parts = [ne * rates.excitation, ne * rates.deexcitation, lam * sp_.a_per_s, ne * rates.ionization,
                 ne * ne * rates.three_body, ne * rates.radiative_rec,
                 sp_.extra_decay_per_s[sp_.extra_decay_per_s > 0]]
    if loss > 0:
        meta = np.flatnonzero(sp_.metastable())
        src_parts.append(meta)
        dst_parts.append(np.zeros(meta.size, dtype=np.int64))
        val_parts.append(np.full(meta.size, loss))
    src = np.concatenate(src_parts).astype(np.int64)
    dst = np.concatenate(dst_parts).astype(np.int64)
    val = np.concatenate(val_parts).astype(float)
    keep = val > 0
    src, dst, val = src[keep], dst[keep], val[keep]
    size = n + 1
    out_rate = np.bincount(src, weights=val, minlength=size)
    rows = np.concatenate([dst, np.arange(size)])
    cols = np.concatenate([src, np.arange(size)])
    vals = np.concatenate([val, -out_rate])
    return sp.csr_matrix((vals, (rows, cols)), shape=(size, size))


def scaled_system(matrix: sp.csr_matrix, log_scale: NDArray[np.float64]):
    """The linear system actually solved: (A, b, scale) with n = scale * solve(A, b).

    Columns of the rate matrix are scaled by the Saha-Boltzmann values (``exp(log_scale)``,
    clipped to e^+-700), row 0 is replaced by n_0 = 1, and every row is divided by its
    largest magnitude. ``A`` is returned in CSC form for the sparse LU.

    Examples
    --------
    >>> s = CRSpecies([0.0, 82259.0], [2, 8], 109678.8, 1, 1, [0], [1], [4.7e8], [0.42])
    >>> a, b, scale = scaled_system(rate_matrix(s, rate_coefficients(s, 1e4), 1e20), saha_boltzmann_log(s, 1e4, 1e20))
    >>> a.shape, float(scale[0])
    ((3, 3), 1.0)
    """
    scale = np.exp(np.clip(log_scale, -700.0, 700.0))
    a = (matrix @ sp.diags(scale)).tolil()
    a[0, :] = 0.0
    a[0, 0] = 1.0
    a = a.tocsr()
    row_max = np.asarray(abs(a).max(axis=1).todense()).ravel()
    row_max[(row_max == 0) | ~np.isfinite(row_max)] = 1.0
    with np.errstate(all="ignore"):
        a = sp.diags(1.0 / row_max) @ a
    rhs = np.zeros(matrix.shape[0])
    rhs[0] = 1.0 / row_max[0]
    return a.tocsc(), rhs, scale


def solve_steady_state(sp_: CRSpecies, te_k: float, ne_m3: float, *, escape: ArrayLike | None = None,
                       loss_rate_per_s: float = 0.0, rates: RateSet | None = None,
                       forbidden_omega: float = excitation.DEFAULT_FORBIDDEN_OMEGA) -> CRResult:
    """Steady-state populations per ground-level population (sparse LU).

    Parameters
    ----------
    sp_ : CRSpecies
    te_k : float
        Electron temperature, K.
    ne_m3 : float
        Electron density, m-3.
    escape : array_like, optional
        Escape factor per line (default optically thin).
    loss_rate_per_s : float
        Metastable loss rate, s-1.
    rates : RateSet, optional
        Precomputed rate coefficients at ``te_k``.
    forbidden_omega : float
        See :func:`rate_coefficients`.

    Returns
    -------
    CRResult

    Raises
    ------
    PhysicsInputError
        Bad conditions or a singular balance (a level no process reaches).

    Examples
    --------
    >>> s = CRSpecies([0.0, 82259.0], [2, 8], 109678.8, 1, 1, [0], [1], [4.7e8], [0.42])
    >>> hot = solve_steady_state(s, 11604.5, 1e28)
    >>> round(float(hot.departure[1]), 3)
    1.0
    """
    te = check_temperature(te_k)
    ne = check_density(ne_m3)
    rs = rates if rates is not None else rate_coefficients(sp_, te, forbidden_omega=forbidden_omega)
    m = rate_matrix(sp_, rs, ne, escape=escape, loss_rate_per_s=loss_rate_per_s)
    log_sb = saha_boltzmann_log(sp_, te, ne)
    a, rhs, scale = scaled_system(m, log_sb)
    with np.errstate(all="ignore"):
        d = spsolve(a, rhs)
    if not np.all(np.isfinite(d)):
        raise PhysicsInputError("the collisional-radiative balance is singular: some level is reached by no "
                                "process (check that every level has a collisional or radiative link)")
    d = np.maximum(d, 0.0)
    pops = d * scale
    # departure coefficients: population over its Saha-Boltzmann value (the scale may be clipped)
    with np.errstate(all="ignore"):
        departure = np.exp(np.log(np.maximum(pops, 1e-300)) - log_sb)
        departure = np.where(pops > 0, departure, 0.0)
    lam = np.ones(sp_.lower.size) if escape is None else np.asarray(escape, dtype=float)
    return CRResult(population_rel=pops[:-1], ion_rel=float(pops[-1]), departure=departure[:-1],
                    ion_departure=float(departure[-1]), escape=lam)


def solve_with_trapping(sp_: CRSpecies, te_k: float, ne_m3: float, *, total_density_m3: float, size_m: float,
                        geometry: str, wavelength_m: ArrayLike, doppler_fwhm_m: ArrayLike,
                        lorentz_fwhm_m: ArrayLike | None = None, loss_rate_per_s: float = 0.0,
                        forbidden_omega: float = excitation.DEFAULT_FORBIDDEN_OMEGA) -> CRResult:
    """Balance with radiation trapping: escape factors iterated with the lower-level populations.

    Parameters
    ----------
    sp_ : CRSpecies
    te_k, ne_m3 : float
        Electron temperature (K) and density (m-3).
    total_density_m3 : float
        Density of the species plus its next ion, m-3 (sets absolute populations and optical depths).
    size_m : float
        Slab thickness or cylinder radius, m.
    geometry : {"slab", "cylinder"}
    wavelength_m, doppler_fwhm_m : array_like (M,)
        Line wavelengths and Doppler FWHM, m.
    lorentz_fwhm_m : array_like (M,), optional
        Lorentz FWHM (natural, pressure), m: Voigt cores where given.
    loss_rate_per_s, forbidden_omega
        As :func:`solve_steady_state`.

    Returns
    -------
    CRResult
        With the converged escape factors and the iteration count.

    Notes
    -----
    Centre optical depth :math:`\\tau_0 = \\frac{e^2}{4\\varepsilon_0 m_e c} f n_l\\,
    \\phi_\\nu(0)\\,(1 - g_l n_u / g_u n_l)\\,D` with D the size; the escape factor of
    :func:`~levels.physics.discharge.escape.mean_escape_factor`. Each step uses the
    geometric mean of the old and new factors (damped fixed point).

    Examples
    --------
    >>> s = CRSpecies([0.0, 82259.0], [2, 8], 109678.8, 1, 1, [0], [1], [4.7e8], [0.42])
    >>> r = solve_with_trapping(s, 11604.5, 1e19, total_density_m3=1e21, size_m=0.01, geometry="slab",
    ...                         wavelength_m=[121.6e-9], doppler_fwhm_m=[3e-12])
    >>> bool(r.escape[0] < 0.01), r.iterations > 1
    (True, True)
    """
    te = check_temperature(te_k)
    ne = check_density(ne_m3)
    total = float(total_density_m3)
    size = float(size_m)
    if not (math.isfinite(total) and total > 0):
        raise PhysicsInputError(f"the species density must be finite and > 0 m-3, got {total_density_m3!r}")
    if not (math.isfinite(size) and 0 < size <= 1e3):
        raise PhysicsInputError(f"the plasma size must be > 0 and at most 1000 m, got {size_m!r} m")
    if geometry not in esc.GEOMETRIES:
        raise PhysicsInputError(f"unknown geometry {geometry!r}; expected 'slab' or 'cylinder'")
    lam_m = as_positive("wavelength_m", wavelength_m)
    dop = as_positive("doppler_fwhm_m", doppler_fwhm_m)
    lor = np.zeros_like(lam_m) if lorentz_fwhm_m is None else as_nonnegative("lorentz_fwhm_m", lorentz_fwhm_m)
    if lam_m.shape != sp_.lower.shape or dop.shape != lam_m.shape or lor.shape != lam_m.shape:
        raise PhysicsInputError("wavelengths and widths need one entry per line")
    sigma_g = dop / (2.0 * math.sqrt(2.0 * math.log(2.0)))
    phi0_lambda = voigt_profile(0.0, sigma_g, lor / 2.0)                        # m-1
    phi0_nu = phi0_lambda * lam_m**2 / units.C                                   # s
    damping = (lor / 2.0) / (dop / (2.0 * math.sqrt(math.log(2.0))))            # HWHM_L / Doppler 1/e width
    profile = "voigt" if np.any(lor > 0) else "doppler"
    kappa_per_lower = units.E_CHARGE**2 / (4.0 * units.EPS0 * units.M_E * units.C) * sp_.f_abs * phi0_nu * size
    rs = rate_coefficients(sp_, te, forbidden_omega=forbidden_omega)
    lam = np.ones(sp_.lower.size)
    result = solve_steady_state(sp_, te, ne, escape=lam, loss_rate_per_s=loss_rate_per_s, rates=rs)
    thick_candidates = kappa_per_lower > 0
    iterations = 1
    for step_number in range(2, TRAPPING_MAX_ITERATIONS + 1):
        iterations = step_number
        rel = result.population_rel
        norm = total / (float(np.sum(rel)) + result.ion_rel)
        n_l = rel[sp_.lower] * norm
        n_u = rel[sp_.upper] * norm
        with np.errstate(divide="ignore", invalid="ignore"):
            stim = np.where(n_l > 0, 1.0 - sp_.g[sp_.lower] * n_u / (sp_.g[sp_.upper] * n_l), 0.0)
        tau = np.where(thick_candidates, kappa_per_lower * n_l * np.clip(stim, 0.0, 1.0), 0.0)
        new = np.ones_like(lam)
        todo = tau > 1e-6
        if np.any(todo):
            new[todo] = esc.mean_escape_factor(tau[todo], geometry, profile, damping[todo])
        new = np.clip(new, 1e-12, 1.0)
        step = np.sqrt(lam * new)
        change = float(np.max(np.abs(np.log(step / lam)))) if lam.size else 0.0
        lam = step
        result = solve_steady_state(sp_, te, ne, escape=lam, loss_rate_per_s=loss_rate_per_s, rates=rs)
        if change < TRAPPING_TOLERANCE:
            break
    else:
        result.warnings.append(f"the radiation-trapping iteration did not settle in {TRAPPING_MAX_ITERATIONS} "
                               "steps; escape factors may be off by more than 0.01 %")
    result.iterations = iterations
    return result
