"""A complete one-electron ion: levels, E1 lines, rates, lifetimes and Landé g, as arrays.

This module assembles the laws of the neighbouring modules into one model of a
hydrogen-like ion of charge Z and nuclear mass M up to a principal quantum
number ``n_max``:

* energies from :mod:`levels.physics.one_electron.dirac` (Dirac + recoil + QED + finite size);
* E1 line strengths, f and A from :mod:`levels.physics.one_electron.rates` (radial integrals
  of :mod:`levels.physics.one_electron.radial`), lifetimes including the two-photon and M1
  decay of 2s;
* the g-factor of each level from :mod:`levels.physics.one_electron.bound_g` (Dirac value plus
  the free-electron anomaly; the LS Landé factor would miss the relativistic
  binding term, 17 % for U91+ 1s);
* air wavelengths from :mod:`levels.physics.lines.air` above 200 nm.

Mass convention (recorded in the dataset): line strengths are those of the
reduced-mass atom; transition energies come from the computed levels.

With ``fine_structure=False`` the states are nl terms (2L with both j
components merged); their energy is the (2j+1)-weighted mean of the j
components, their weight g = 2(2l+1).

References
----------
See the modules named above; the method as a whole follows H. A. Bethe and
E. E. Salpeter, *Quantum Mechanics of One- and Two-Electron Atoms* (Springer,
1957), sections 59-63 (radiative transitions of hydrogen-like ions).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.physics.lines import air
from levels.physics.one_electron import bound_g, dirac, rates
from levels.units import CM1_HZ, M_E_U

#: largest n_max accepted (the radial recurrence is tested to n = 1000)
N_MAX_LIMIT = 1000
METHOD = "hydrogenic-dirac-qed"
#: every correction on (the default of :func:`compute`; Corrections is immutable)
ALL_CORRECTIONS = dirac.Corrections()
METHOD_VERSION = "3"  # 2: bound-electron g-factor (Dirac + anomaly) instead of LS Landé g; 3: theory uncertainties


@dataclass
class HydrogenicModel:
    """Arrays describing the states and E1 lines of one ion.

    State arrays (length N): ``n``, ``l``, ``two_j`` (-1 for nl terms), ``g``,
    ``energy_cm1`` (above the 1s ground state), ``lifetime_s`` (inf for 1s),
    ``lande_g`` (NaN for nl terms), ``energy_unc_cm1`` (theory uncertainty of the
    energy above the ground state, :func:`levels.physics.one_electron.dirac.level_uncertainties_cm1`;
    NaN when a correction is switched off). Line arrays (length M): ``upper``, ``lower``
    (state indices), ``wavenumber_cm1``, ``vacuum_nm``, ``air_nm`` (NaN below
    200 nm), ``S`` (e^2 a0^2), ``f_abs``, ``a_per_s``, ``unc_nm`` (theory uncertainty of the
    wavenumber, :func:`levels.physics.one_electron.dirac.transition_uncertainties_cm1`, as a vacuum wavelength).
    """

    z: int
    nuclear_mass_u: float
    n_max: int
    fine_structure: bool
    corrections: dict
    ionization_cm1: float
    charge_radius_fm: float
    radius_source: str
    n: NDArray[np.int64]
    l: NDArray[np.int64]
    two_j: NDArray[np.int64]
    g: NDArray[np.int64]
    energy_cm1: NDArray[np.float64]
    lifetime_s: NDArray[np.float64]
    lande_g: NDArray[np.float64]
    lines: dict[str, NDArray] = field(default_factory=dict)
    energy_unc_cm1: NDArray[np.float64] = field(default_factory=lambda: np.zeros(0))
    ionization_unc_cm1: float | None = None

    @property
    def mass_ratio(self) -> float:
        """m_r / m_e of the ion's reduced mass."""
        return self.nuclear_mass_u / (self.nuclear_mass_u + M_E_U)

    @property
    def options(self) -> dict:
        """What the dataset records about the computation."""
        return {
            "n_max": self.n_max,
            "fine_structure": self.fine_structure,
            "corrections": self.corrections,
            "nuclear_mass_u": self.nuclear_mass_u,
            "charge_radius_fm": self.charge_radius_fm,
            "charge_radius_source": self.radius_source,
            "g_factor": "Dirac bound-electron g plus the free-electron anomaly (levels.physics.one_electron.bound_g)",
            "mass_convention": "line strengths of the reduced-mass atom; transition energies from the computed levels",
            "air_formula": air.formula_description("iau2000") + " (extrapolated beyond 2000 nm)",
        }


def state_arrays(n_max: int, fine_structure: bool) -> tuple[NDArray[np.int64], NDArray[np.int64], NDArray[np.int64]]:
    """(n, l, two_j) of every state up to ``n_max``; two_j = -1 for nl terms."""
    if not isinstance(n_max, (int, np.integer)) or n_max < 1:
        raise QuantumNumberError(f"n_max must be a whole number >= 1, got {n_max!r}")
    if n_max > N_MAX_LIMIT:
        raise QuantumNumberError(f"n_max = {n_max} is above the supported {N_MAX_LIMIT}")
    n_list, l_list, j_list = [], [], []
    for n in range(1, n_max + 1):
        l = np.arange(n)
        if fine_structure:
            n_list.append(np.full(2 * n - 1, n))
            l_list.append(np.concatenate([[0], np.repeat(l[1:], 2)]))
            two_j = np.concatenate([[1], np.ravel(np.column_stack([2 * l[1:] - 1, 2 * l[1:] + 1]))])
            j_list.append(two_j)
        else:
            n_list.append(np.full(n, n))
            l_list.append(l)
            j_list.append(np.full(n, -1))
    return (np.concatenate(n_list).astype(np.int64), np.concatenate(l_list).astype(np.int64),
            np.concatenate(j_list).astype(np.int64))


def count_states_and_lines(n_max: int, fine_structure: bool) -> tuple[int, int]:
    """Exact numbers of states and E1 lines (upper above lower) for ``n_max`` (without building them).

    Lines between n and n' < n: for each (l, l' = l +- 1) with l < n, l' < n'.
    With fine structure each nl pair gives 3 components (2 when one side is an s state);
    pairs within one n (2p3/2 -> 2s1/2 etc.) are counted where their energies differ.
    """
    if n_max < 1:
        return 0, 0
    states = n_max * n_max if fine_structure else n_max * (n_max + 1) // 2
    lines = 0
    for n in range(2, n_max + 1):
        for n2 in range(1, n):
            # pairs (l, l2) with |l - l2| = 1, l < n, l2 < n2
            pairs = 0
            s_pairs = 0
            for l2 in range(n2):
                for l in (l2 - 1, l2 + 1):
                    if 0 <= l < n:
                        pairs += 1
                        if l == 0 or l2 == 0:
                            s_pairs += 1
            lines += (3 * pairs - s_pairs) if fine_structure else pairs
    # pairs within one n, (l, j) -> (l - 1, j'), split by fine structure and the Lamb shift
    for n in range(2, n_max + 1):
        for l in range(1, n):
            lines += (3 if l > 1 else 2) if fine_structure else 1
    return states, lines


def compute(z: int, *, nuclear_mass_u: float, n_max: int = 20, fine_structure: bool = True,
            corrections: dirac.Corrections = ALL_CORRECTIONS, charge_radius_fm: float | None = None,
            mass_number: int | None = None) -> HydrogenicModel:
    """Compute the model of the one-electron ion of charge ``z``.

    Parameters
    ----------
    z : int
        Nuclear charge, 1..118.
    nuclear_mass_u : float
        Nuclear mass in u.
    n_max : int
        Highest principal quantum number (1..1000).
    fine_structure : bool
        Levels n l j (True) or nl terms (False).
    corrections : Corrections
        Which corrections to the Dirac energy are applied.
    charge_radius_fm : float, optional
        Nuclear rms charge radius; default from :func:`levels.physics.one_electron.nuclear.charge_radius_fm`.
    mass_number : int, optional
        Mass number for the radius table (default: nearest integer to the mass).

    Returns
    -------
    HydrogenicModel

    Examples
    --------
    >>> model = compute(1, nuclear_mass_u=1.007276466621, n_max=3)
    >>> len(model.n), len(model.lines["upper"])
    (9, 18)
    """
    n, l, two_j = state_arrays(n_max, fine_structure)
    a = mass_number or int(round(nuclear_mass_u))
    if charge_radius_fm is None:
        radius, source = dirac.charge_radius_fm(z, a)
        radius_unc = dirac.charge_radius_uncertainty_fm(z, a)
    else:
        radius, source = float(charge_radius_fm), "given by the caller"
        radius_unc = None  # 5 % (dirac.theory_uncertainty_components_hz)
    kwargs: dict[str, Any] = dict(nuclear_mass_u=nuclear_mass_u, charge_radius_fm=radius,
                                  corrections=corrections)
    if fine_structure:
        absolute = dirac.level_energies_cm1(z, n, l, two_j, **kwargs)
    else:
        lo = dirac.level_energies_cm1(z, n, l, np.maximum(2 * l - 1, 1), **kwargs)
        hi = dirac.level_energies_cm1(z, n, l, 2 * l + 1, **kwargs)
        w_lo = np.where(l == 0, 0.0, 2.0 * l)       # 2j+1 of j = l - 1/2
        w_hi = 2.0 * l + 2.0                        # 2j+1 of j = l + 1/2
        absolute = np.where(l == 0, hi, (w_lo * lo + w_hi * hi) / (w_lo + w_hi))
    ionization = float(-absolute[0])
    energy = absolute - absolute[0]
    mass_ratio = nuclear_mass_u / (nuclear_mass_u + M_E_U)
    lines = rates.hydrogenic_e1_lines(n, l, two_j if fine_structure else None, energy, z, mass_ratio,
                                      fine_structure=fine_structure)
    extra = rates.metastable_decay_rates(n, l, z, mass_ratio)
    tau = rates.lifetimes(lines["upper"], lines["a_per_s"], len(n), extra_rates=extra)
    if fine_structure:
        g = two_j + 1
        g_lande = bound_g.bound_electron_g(z, n, l, two_j)
    else:
        g = 2 * (2 * l + 1)
        g_lande = np.full(len(n), np.nan)
    vacuum_nm = 1e7 / lines["wavenumber_cm1"]
    lines["vacuum_nm"] = vacuum_nm
    if corrections == ALL_CORRECTIONS:
        # theory uncertainty: the size of the terms the method leaves out (dirac.theory_uncertainty_hz)
        unc = dirac.level_uncertainties_cm1(z, n, l, two_j, nuclear_mass_u=nuclear_mass_u, charge_radius_fm=radius,
                                            charge_radius_unc_fm=radius_unc)
        ion_unc = float(dirac.theory_uncertainty_hz(z, 1, 0, 1, nuclear_mass_u=nuclear_mass_u,
                                                    charge_radius_fm=radius, charge_radius_unc_fm=radius_unc)) / CM1_HZ
    else:  # a correction switched off: the omitted term is far larger than the estimate; unknown
        unc, ion_unc = np.full(len(n), np.nan), None
    if corrections == ALL_CORRECTIONS and len(vacuum_nm):
        line_unc = dirac.transition_uncertainties_cm1(z, n, l, two_j, lines["upper"], lines["lower"],
                                                      nuclear_mass_u=nuclear_mass_u, charge_radius_fm=radius,
                                                      charge_radius_unc_fm=radius_unc)
    else:
        line_unc = np.full(len(vacuum_nm), np.nan)
    lines["unc_nm"] = line_unc * vacuum_nm**2 / 1e7
    with warnings.catch_warnings():
        # beyond 2 um the IAU formula is extrapolated, as is usual practice; the dataset says so
        warnings.simplefilter("ignore", air.AirRangeWarning)
        lines["air_nm"] = (np.asarray(air.vacuum_to_air(vacuum_nm, "iau2000"), dtype=float) if len(vacuum_nm)
                           else vacuum_nm)
    return HydrogenicModel(
        z=z, nuclear_mass_u=nuclear_mass_u, n_max=n_max, fine_structure=fine_structure,
        corrections=corrections.as_dict(), ionization_cm1=ionization, charge_radius_fm=radius,
        radius_source=source, n=n, l=l, two_j=two_j, g=g.astype(np.int64), energy_cm1=energy,
        lifetime_s=tau, lande_g=g_lande, lines=lines, energy_unc_cm1=unc, ionization_unc_cm1=ion_unc,
    )


def estimate_store_bytes(n_max: int, fine_structure: bool) -> int:
    """Rough store size of a computed ion, bytes (about 250 bytes per line row and 300 per level row,
    indexes included; measured on SQLite, common practice, no source)."""
    states, lines = count_states_and_lines(n_max, fine_structure)
    return 300 * states + 250 * lines


def check_size(n_max: int, fine_structure: bool, limit_bytes: int) -> None:
    """Refuse a computation whose store size would exceed ``limit_bytes``, saying what it would need."""
    need = estimate_store_bytes(n_max, fine_structure)
    if need > limit_bytes:
        states, lines = count_states_and_lines(n_max, fine_structure)
        raise PhysicsInputError(
            f"n_max = {n_max} would store {states} levels and {lines} lines, about {need / 1e9:.1f} GB, "
            f"more than the limit of {limit_bytes / 1e9:.1f} GB; lower --n-max or raise --max-store-gb")
