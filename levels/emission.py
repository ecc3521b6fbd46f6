"""Discharge emission of one species: populations, line intensities, synthetic spectrum, lamp metrics.

A unit of work of the catalog (exposed as :meth:`levels.catalog.Catalog.emission`).
The physics is in :mod:`levels.physics.plasma` (Boltzmann, Saha, cutoff,
emissivity, escape factor), :mod:`levels.physics.spectrum` (line shapes) and
:mod:`levels.physics.colour` (CIE colorimetry). Model assumptions, stated in
every report:

* local thermodynamic equilibrium of the excited levels at the electron
  temperature ``te_k`` (Boltzmann), and a two-stage Saha balance with the next
  ion to find the species' share of its element;
* the element density defaults to the electron density; only absolute
  emissivities depend on it, not relative intensities, photon shares or colour;
* optically thin unless a path length is given, in which case lines ending on
  the ground level get the uniform-slab escape factor of their centre optical depth.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from levels.errors import PhysicsInputError
from levels.isotopes import isotope
from levels.physics import colour, plasma
from levels.physics import spectrum as spectra
from levels.units import CM1_J, H, C

UV_CAUTION = ("CAUTION: this spectrum puts more than 1 % of its power into UV-C or UV-B. Ultraviolet radiation "
              "injures eyes and skin within seconds to minutes. Use enclosures, UV-blocking eye and face protection "
              "and interlocks; follow the applicable photobiological-safety standards (for example IEC 62471), "
              "local codes and licensed practice.")
TE_RANGE_K = (100.0, 1e9)
NE_RANGE_M3 = (1e6, 1e32)


@dataclass
class EmissionResult:
    """Everything an emission report holds."""

    conditions: dict
    lines: list[dict]
    metrics: dict
    warnings: list[str] = field(default_factory=list)
    grid_nm: np.ndarray | None = None
    spectrum: np.ndarray | None = None
    medium: str = "air"

    def report(self) -> dict:
        """The JSON report of the design (conditions, lines, metrics, warnings)."""
        return {"conditions": self.conditions, "lines": self.lines, "metrics": self.metrics,
                "warnings": self.warnings}


def check_conditions(te_k: float, ne_m3: float, tgas_k: float) -> None:
    """Refuse unphysical conditions with a message naming the bound."""
    for name, value, (lo, hi), unit in (("te", te_k, TE_RANGE_K, "K"), ("ne", ne_m3, NE_RANGE_M3, "m-3"),
                                        ("tgas", tgas_k, TE_RANGE_K, "K")):
        if not (isinstance(value, (int, float)) and math.isfinite(value)):
            raise PhysicsInputError(f"{name} must be a finite number")
        if value <= 0:
            raise PhysicsInputError(f"{name} must be positive, got {value:g} {unit}")
        if not lo <= value <= hi:
            raise PhysicsInputError(f"{name} = {value:g} {unit} is outside the accepted {lo:g}..{hi:g} {unit}")


def compute_emission(*, spectrum_name: str, z: int, charge: int, mass_number: int, levels: list,
                     lines: list[dict], ionization_cm1: float | None, next_ion_levels: list | None,
                     te_k: float, ne_m3: float, tgas_k: float, window: tuple[float | None, float | None],
                     medium: str, instrument_fwhm_nm: float, path_length_m: float | None,
                     element_density_m3: float | None, cutoff_method: str = "debye",
                     grid_points: int = 20001) -> EmissionResult:
    """Populations, line emissivities, synthetic spectrum and lamp metrics (see module docstring).

    ``levels`` are stored level objects of the species (energy_cm1, g, id, lifetime_s);
    ``lines`` are engine rows of the species (all wavelengths), with rates where known.
    """
    check_conditions(te_k, ne_m3, tgas_k)
    if instrument_fwhm_nm < 0 or not math.isfinite(instrument_fwhm_nm):
        raise PhysicsInputError("instrument FWHM must be a non-negative wavelength")
    if path_length_m is not None and not (path_length_m > 0 and math.isfinite(path_length_m)):
        raise PhysicsInputError("path length must be a positive length")
    warnings: list[str] = []
    cutoff = plasma.plasma_cutoff(te_k, ne_m3, charge + 1, method=cutoff_method)
    energy = np.array([lv.energy_cm1 for lv in levels])
    g = np.array([lv.g for lv in levels], dtype=float)
    u_species, included = plasma.partition_function(
        energy, g, te_k, ionization_cm1=ionization_cm1,
        lowering_cm1=cutoff.lowering_cm1 if ionization_cm1 is not None else 0.0)
    if ionization_cm1 is None:
        warnings.append(f"{spectrum_name} has no stored ionization energy: no level was cut from the partition "
                        "function and the Saha balance is left out (all of the element taken as this species)")
    excluded = int((~included).sum())
    if excluded:
        warnings.append(f"{excluded} levels above the lowered ionization limit are left out of the partition function")
    fraction = 1.0
    if ionization_cm1 is not None:
        if next_ion_levels:
            u_next, _ = plasma.partition_function([lv.energy_cm1 for lv in next_ion_levels],
                                                  [lv.g for lv in next_ion_levels], te_k)
        else:
            u_next = 1.0
            if charge + 1 < z:
                warnings.append("the next ion has no stored levels; its partition function is taken as 1")
        ratio = plasma.saha_ratio(te_k, ne_m3, u_species, u_next, ionization_cm1, cutoff.lowering_cm1)
        fraction = 1.0 / (1.0 + ratio)
    n_element = ne_m3 if element_density_m3 is None else element_density_m3
    n_species = fraction * n_element
    populations = plasma.boltzmann_populations(energy, g, te_k, cutoff_mask=included) * n_species
    pop_by_id = {lv.id: populations[i] for i, lv in enumerate(levels)}

    with_rates = [r for r in lines if r["a_per_s"] is not None and r["upper_id"] in pop_by_id]
    missing = len(lines) - len(with_rates)
    if missing:
        warnings.append(f"{missing} of {len(lines)} lines have no known A value; they are left out of the "
                        "intensities, photon shares, spectrum and metrics")
    if not with_rates:
        raise PhysicsInputError(f"no line of {spectrum_name} has a known Einstein A, so no intensity can be "
                                f"predicted ({len(lines)} lines lack A values)")
    n_upper = np.array([pop_by_id[r["upper_id"]] for r in with_rates])
    a_values = np.array([r["a_per_s"] for r in with_rates])
    sigma = np.array([r["wavenumber_cm1"] for r in with_rates])
    emissivity = plasma.line_emissivity(n_upper, a_values, sigma)
    vacuum = np.array([r["vacuum_nm"] for r in with_rates])
    mass_u = isotope(z, mass_number).atomic_mass_u
    doppler = spectra.doppler_fwhm_nm(vacuum, tgas_k, mass_u)
    if path_length_m is not None:
        ground = min(energy) if energy.size else 0.0
        resonance = np.array([r["lower_cm1"] == ground for r in with_rates])
        f_abs = np.array([r["f_abs"] or 0.0 for r in with_rates])
        n_lower = np.array([pop_by_id.get(r["lower_id"], 0.0) for r in with_rates])
        tau = plasma.line_center_optical_depth(n_lower, f_abs, vacuum * 1e-9, doppler * 1e-9, path_length_m)
        escape = np.where(resonance, plasma.escape_factor(tau), 1.0)
        emissivity = emissivity * escape
        thick = int((resonance & (tau > 1)).sum())
        if thick:
            warnings.append(f"{thick} resonance lines are optically thick (centre optical depth > 1) over "
                            f"{path_length_m:g} m; their emission is reduced by the slab escape factor")
    shown_nm = np.array([r["air_nm"] if (medium == "air" and r["air_nm"] is not None) else r["vacuum_nm"]
                         for r in with_rates])
    lo, hi = window
    in_window = np.ones(len(with_rates), dtype=bool)
    if lo is not None:
        in_window &= shown_nm >= lo
    if hi is not None:
        in_window &= shown_nm <= hi
    if not in_window.any():
        raise PhysicsInputError(f"no line with a known A lies in the window {lo}..{hi} nm ({medium})")
    photons = emissivity / (sigma * CM1_J)
    strongest = emissivity[in_window].max()
    total_photons = photons[in_window].sum()
    rows = []
    for k in np.flatnonzero(in_window):
        row = {key: value for key, value in with_rates[k].items()}
        row["rel_intensity"] = float(emissivity[k] / strongest)
        row["photon_share"] = float(photons[k] / total_photons)
        row["emissivity_w_m3_sr"] = float(emissivity[k])
        rows.append(row)
    rows.sort(key=lambda r: -r["rel_intensity"])
    air_or_vac = np.array([r["air_nm"] if r["air_nm"] is not None else r["vacuum_nm"] for r in with_rates])
    metrics = colour.lamp_metrics_from_lines(air_or_vac[in_window], emissivity[in_window])
    if (metrics["share_uv_c"] or 0) > 0.01 or (metrics["share_uv_b"] or 0) > 0.01:
        warnings.insert(0, UV_CAUTION)
    grid_lo = lo if lo is not None else float(shown_nm[in_window].min()) * 0.98
    grid_hi = hi if hi is not None else float(shown_nm[in_window].max()) * 1.02
    grid = spectra.make_grid(grid_lo, grid_hi, points=grid_points)
    tau_u = np.array([_tau(r["upper_lifetime_s"]) for r in with_rates])
    tau_l = np.array([_tau(r["lower_lifetime_s"]) for r in with_rates])
    natural = spectra.natural_fwhm_nm(vacuum, tau_u, tau_l)
    widths = spectra.voigt_widths(doppler, natural, instrument_fwhm_nm)
    density = spectra.synthetic_spectrum(grid, shown_nm, emissivity, widths.gauss_fwhm_nm, widths.lorentz_fwhm_nm)
    conditions = {
        "te_k": te_k, "ne_m3": ne_m3, "tgas_k": tgas_k, "cutoff": cutoff.description,
        "cutoff_method": cutoff.method, "lowering_cm1": cutoff.lowering_cm1, "partition_function": u_species,
        "species_fraction": fraction, "element_density_m3": n_element, "medium": medium,
        "instrument_fwhm_nm": instrument_fwhm_nm, "path_length_m": path_length_m,
        "model": "LTE Boltzmann populations at te, two-stage Saha balance; optically thin"
                 + ("" if path_length_m is None else " except resonance lines (slab escape factor)"),
    }
    return EmissionResult(conditions=conditions, lines=rows, metrics=metrics, warnings=warnings, grid_nm=grid,
                          spectrum=density, medium=medium)


def _tau(value) -> float:
    return math.inf if value is None else float(value)


def photon_energy_j(wavenumber_cm1: np.ndarray) -> np.ndarray:
    """h c sigma, J."""
    return H * C * 100.0 * np.asarray(wavenumber_cm1)
