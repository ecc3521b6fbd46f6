"""Discharge emission of one species: populations, line intensities, synthetic spectrum, lamp metrics.

A unit of work on one store (:func:`discharge_emission`, exposed as :meth:`levels.catalog.Catalog.emission`).
The physics is in :mod:`levels.physics.plasma.equilibrium` (Boltzmann, Saha, cutoff,
emissivity, escape factor), :mod:`levels.physics.discharge` (the
collisional-radiative balance, escape factors, pressure broadening, slab
transfer, the LTE criterion), :mod:`levels.physics.plasma.spectrum` (line shapes) and
:mod:`levels.physics.colour` (CIE colorimetry). Two population models, named in
every report (``model``):

* ``"lte"`` (default): local thermodynamic equilibrium of the excited levels at
  the electron temperature ``te_k`` (Boltzmann), and a two-stage Saha balance with
  the next ion to find the species' share of its element;
* ``"cr"``: the collisional-radiative steady state of
  :mod:`levels.physics.discharge.balance` (electron-impact excitation,
  de-excitation, ionization and recombination, radiative decay reduced by escape
  factors when a plasma depth is given, a metastable loss rate), which needs the
  species' ionization energy and oscillator strengths.

Either way the element density defaults to the electron density (only absolute
emissivities depend on it), lines are optically thin unless a depth is given (then
lines with an oscillator strength get the mean escape factor of a uniform slab or
cylinder, and the sampled spectrum is the radiance through the slab, self-absorbed,
divided by its depth), and the report carries McWhirter's LTE criterion for the
species' largest level gap (``validity``), with a plain warning when the LTE model
is used where it does not hold.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from levels.errors import PhysicsInputError
from levels.isotopes import isotope
from levels.notation import Spectrum, parse_spectrum
from levels.physics import colour
from levels.physics.discharge import balance as cr
from levels.physics.discharge import escape as discharge_escape
from levels.physics.discharge import excitation as cr_excitation
from levels.physics.discharge import neutral_broadening, slab_transfer, stark, validity
from levels.physics.plasma import equilibrium as plasma
from levels.physics.plasma import spectrum as spectra
from levels.service import lookup
from levels.service.contract import LineQuery, LineRow
from levels.service.lines import species_lines
from levels.store import queries
from levels.units import CM1_J, C, H

#: the colour bands of the power shares (nm) and the sRGB swatch of a chromaticity, for the front ends
BANDS_NM = colour.BANDS_NM
srgb_swatch = colour.srgb_swatch

UV_CAUTION = ("CAUTION: this spectrum puts more than 1 % of its power into UV-C or UV-B. Ultraviolet radiation "
              "injures eyes and skin within seconds to minutes. Use enclosures, UV-blocking eye and face protection "
              "and interlocks; follow the applicable photobiological-safety standards (for example IEC 62471), "
              "local codes and licensed practice.")
TE_RANGE_K = (100.0, 1e9)
NE_RANGE_M3 = (1e6, 1e32)
MODELS = ("lte", "cr")
GEOMETRIES = ("slab", "cylinder")
BROADENING = ("thermal", "pressure")
#: largest plasma depth accepted, m
MAX_LENGTH_M = 1e3
#: largest metastable loss rate accepted, s-1
MAX_LOSS_RATE = 1e12
#: at most this many missing-rate examples are named in a message
_NAMED = 3


@dataclass
class EmissionResult:
    """Everything an emission report holds."""

    conditions: dict
    lines: list[dict]
    metrics: dict
    warnings: list[str] = field(default_factory=list)
    #: the synthetic spectrum's wavelength grid (nm, in ``medium``) and its values (``spectrum_unit``)
    grid_nm: np.ndarray = field(default_factory=lambda: np.empty(0))
    spectrum: np.ndarray = field(default_factory=lambda: np.empty(0))
    medium: str = "air"
    model: str = "lte"
    populations: list[dict] = field(default_factory=list)
    validity: dict = field(default_factory=dict)
    #: what ``spectrum`` is: "emission coefficient" (W m-3 sr-1 nm-1, optically thin) or "spectral radiance"
    #: (W m-2 sr-1 nm-1, through the given path length)
    spectrum_quantity: str = "emission coefficient"
    spectrum_unit: str = "W m-3 sr-1 nm-1"

    def report(self) -> dict:
        """The JSON report of the design (conditions, lines, metrics, warnings, model, populations, validity)."""
        return {"conditions": self.conditions, "lines": self.lines, "metrics": self.metrics,
                "warnings": self.warnings, "model": self.model, "populations": self.populations,
                "validity": self.validity}


def discharge_emission(catalog, spectrum: str | Spectrum, *, te_k: float, ne_m3: float, tgas_k: float = 300.0,
                       from_nm: float | None = None, to_nm: float | None = None, medium: str = "air",
                       instrument_fwhm_nm: float = 0.0, path_length_m: float | None = None,
                       element_density_m3: float | None = None, cutoff_method: str = "debye",
                       datasets: Sequence[str] | None = None, grid_points: int | None = None,
                       **model_options) -> EmissionResult:
    """Relative line intensities, synthetic spectrum and lamp metrics of a discharge of one stored species.

    The lines are the engine's (:func:`levels.service.lines.species_lines`) under the precedence of
    ``datasets``; levels, the ionization limit and the next ion's levels come from the same precedence.
    ``model_options`` go to :func:`compute_emission`: ``model`` ("lte" or "cr"), ``loss_rate_per_s``,
    ``geometry``, ``broadening``, ``perturber``, ``pressure_pa``, ``cool_layer_m``, ``forbidden_omega``.
    """
    check_conditions(te_k, ne_m3, tgas_k)
    if from_nm is not None and to_nm is not None and from_nm >= to_nm:
        raise PhysicsInputError(f"empty window: from {from_nm:g} nm is not below to {to_nm:g} nm")
    if medium not in ("air", "vacuum"):
        raise PhysicsInputError(f"medium must be 'vacuum' or 'air', not {medium!r}")
    spec = parse_spectrum(spectrum) if isinstance(spectrum, str) else spectrum
    rows, info = species_lines(catalog, LineQuery(spectrum=spec, datasets=tuple(datasets) if datasets else None))

    def work(session):
        species = lookup.require_species(session, spec)
        chosen = queries.visible_datasets(session, datasets)
        levels = queries.levels_by_precedence(session, species, chosen)
        limit = queries.ionization_limit(session, species, chosen)
        next_ion = None
        if species.charge + 1 < species.z:
            nxt = lookup.find_species(session, Spectrum(species.z, species.charge + 1, species.mass_number))
            if nxt is not None:
                next_ion = queries.levels_by_precedence(session, nxt, chosen)
        return species, levels, limit, next_ion

    species, levels, limit, next_ion = catalog.read(work)
    result = compute_emission(
        spectrum_name=species.name, z=species.z, charge=species.charge, mass_number=species.mass_number,
        levels=levels, lines=rows, ionization_cm1=limit.energy_cm1 if limit else None, next_ion_levels=next_ion,
        te_k=te_k, ne_m3=ne_m3, tgas_k=tgas_k, window=(from_nm, to_nm), medium=medium,
        instrument_fwhm_nm=instrument_fwhm_nm, path_length_m=path_length_m,
        element_density_m3=element_density_m3, cutoff_method=cutoff_method, grid_points=grid_points,
        **model_options)
    used = {row["dataset"] for row in result.lines}
    result.conditions["datasets"] = [name for name in info["datasets"] if name in used]
    return result


def check_conditions(te_k: float, ne_m3: float, tgas_k: float) -> None:
    """Refuse unphysical conditions with a message naming the bound."""
    for name, value, (lo, hi), unit in (("te", te_k, TE_RANGE_K, "K"), ("ne", ne_m3, NE_RANGE_M3, "m-3"),
                                        ("tgas", tgas_k, TE_RANGE_K, "K")):
        if isinstance(value, bool) or not (isinstance(value, (int, float)) and math.isfinite(value)):
            raise PhysicsInputError(f"{name} must be a finite number")
        if value <= 0:
            raise PhysicsInputError(f"{name} must be positive, got {value:g} {unit}")
        if not lo <= value <= hi:
            raise PhysicsInputError(f"{name} = {value:g} {unit} is outside the accepted {lo:g}..{hi:g} {unit}")


def check_model_options(*, model: str, path_length_m: float | None, loss_rate_per_s: float,
                        geometry: str, broadening: str, perturber: str | None, pressure_pa: float | None,
                        cool_layer_m: float | None, forbidden_omega: float | None) -> None:
    """Refuse unknown models and absurd sizes, rates or pressures with a message naming the field."""
    if model not in MODELS:
        raise PhysicsInputError(f"model must be 'lte' or 'cr', not {model!r}")
    if geometry not in GEOMETRIES:
        raise PhysicsInputError(f"geometry must be 'slab' or 'cylinder', not {geometry!r}")
    if broadening not in BROADENING:
        raise PhysicsInputError(f"broadening must be 'thermal' or 'pressure', not {broadening!r}")
    for name, value in (("length", path_length_m), ("cool layer", cool_layer_m)):
        if value is None:
            continue
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) or value <= 0:
            raise PhysicsInputError(f"{name} must be a positive length, got {value!r}")
        if value > MAX_LENGTH_M:
            raise PhysicsInputError(f"{name} = {value:g} m is absurd for a discharge; the largest accepted is "
                                    f"{MAX_LENGTH_M:g} m")
    if cool_layer_m is not None and path_length_m is None:
        raise PhysicsInputError("a cool layer needs the plasma depth (length) as well")
    if not (isinstance(loss_rate_per_s, (int, float)) and math.isfinite(loss_rate_per_s)) or loss_rate_per_s < 0:
        raise PhysicsInputError(f"loss rate must be a finite rate >= 0 s-1, got {loss_rate_per_s!r}")
    if loss_rate_per_s > MAX_LOSS_RATE:
        raise PhysicsInputError(f"loss rate {loss_rate_per_s:g} s-1 is above the accepted {MAX_LOSS_RATE:g} s-1")
    if forbidden_omega is not None and not (math.isfinite(forbidden_omega) and 0 <= forbidden_omega <= 1e3):
        raise PhysicsInputError(f"forbidden collision strength must be within 0..1000, got {forbidden_omega!r}")
    if (perturber is None) != (pressure_pa is None):
        raise PhysicsInputError("van der Waals broadening needs both the perturber gas and its pressure")
    if perturber is not None and perturber not in neutral_broadening.PERTURBERS:
        known = ", ".join(neutral_broadening.PERTURBERS)
        raise PhysicsInputError(f"unknown perturber gas {perturber!r}; known: {known}")
    if pressure_pa is not None and not (math.isfinite(pressure_pa) and 0 < pressure_pa <= 1e8):
        raise PhysicsInputError(f"pressure must be > 0 and at most 100 MPa, got {pressure_pa!r} Pa")


def compute_emission(*, spectrum_name: str, z: int, charge: int, mass_number: int, levels: list,
                     lines: Sequence[LineRow], ionization_cm1: float | None, next_ion_levels: list | None,
                     te_k: float, ne_m3: float, tgas_k: float, window: tuple[float | None, float | None],
                     medium: str, instrument_fwhm_nm: float, path_length_m: float | None,
                     element_density_m3: float | None, cutoff_method: str = "debye",
                     grid_points: int | None = None, model: str = "lte", loss_rate_per_s: float = 0.0,
                     geometry: str = "slab", broadening: str = "thermal", perturber: str | None = None,
                     pressure_pa: float | None = None, cool_layer_m: float | None = None,
                     forbidden_omega: float | None = None) -> EmissionResult:
    """Populations, line emissivities, synthetic spectrum and lamp metrics (see module docstring).

    ``levels`` are stored level objects of the species (energy_cm1, g, id, label, lifetime_s, n, l);
    ``lines`` are engine rows of the species (all wavelengths), with rates where known. ``model``
    chooses the populations (``"lte"`` or ``"cr"``); ``path_length_m`` is the plasma depth (slab
    thickness or cylinder radius, ``geometry``) for escape factors and self-absorption;
    ``loss_rate_per_s`` the metastable loss of the CR model; ``broadening="pressure"`` adds Stark
    and resonance widths, ``perturber`` with ``pressure_pa`` van der Waals widths; ``cool_layer_m``
    an outer layer of ground-state atoms at the gas temperature that absorbs (self-reversal).
    """
    check_conditions(te_k, ne_m3, tgas_k)
    check_model_options(model=model, path_length_m=path_length_m, loss_rate_per_s=loss_rate_per_s,
                        geometry=geometry, broadening=broadening, perturber=perturber, pressure_pa=pressure_pa,
                        cool_layer_m=cool_layer_m, forbidden_omega=forbidden_omega)
    if instrument_fwhm_nm < 0 or not math.isfinite(instrument_fwhm_nm):
        raise PhysicsInputError("instrument FWHM must be a non-negative wavelength")
    if not levels:
        raise PhysicsInputError(f"{spectrum_name} has no stored levels")
    warnings: list[str] = []
    cutoff = plasma.plasma_cutoff(te_k, ne_m3, charge + 1, method=cutoff_method)
    energy = np.array([lv.energy_cm1 for lv in levels])
    g = np.array([lv.g for lv in levels], dtype=float)
    u_species, included = plasma.partition_function(
        energy, g, te_k, ionization_cm1=ionization_cm1,
        lowering_cm1=cutoff.lowering_cm1 if ionization_cm1 is not None else 0.0)
    if ionization_cm1 is None:
        if model == "cr":
            raise PhysicsInputError(f"the collisional-radiative model of {spectrum_name} needs its ionization "
                                    "energy, and none is stored (fit one with `levels limit`)")
        warnings.append(f"{spectrum_name} has no stored ionization energy: no level was cut from the partition "
                        "function and the Saha balance is left out (all of the element taken as this species)")
    if not included.any():
        raise PhysicsInputError(
            f"at Te = {te_k:g} K and ne = {ne_m3:g} m-3 the plasma lowers the ionization limit of {spectrum_name} "
            f"by {cutoff.lowering_cm1:.4g} cm-1, below every stored level: no bound level survives, so there are no "
            "lines to predict (choose a lower density or --cutoff none)")
    excluded = int((~included).sum())
    if excluded:
        warnings.append(f"{excluded} levels above the lowered ionization limit are left out of the partition function"
                        + (" and of the collisional-radiative balance" if model == "cr" else ""))
    valid = validity.lte_validity(energy[included] if included.any() else energy, te_k, ne_m3)
    validity_report = {"lte_min_ne_m3": valid.lte_min_ne_m3, "lte_holds": valid.lte_holds,
                       "largest_gap_cm1": valid.gap_cm1, "criterion": "McWhirter 1965",
                       "text": valid.sentence(spectrum_name, model)}
    if model == "lte" and not valid.lte_holds:
        warnings.insert(0, "LTE does not hold here: " + valid.sentence(spectrum_name, model))
    n_element = ne_m3 if element_density_m3 is None else element_density_m3
    mass_u = isotope(z, mass_number).atomic_mass_u
    pop_rel = np.zeros(len(levels))       # population per ground-level population
    departure = np.ones(len(levels))
    escape_by_key: dict = {}
    cr_note = ""
    if model == "lte":
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
        n_species = fraction * n_element
        boltz = plasma.boltzmann_populations(energy, g, te_k, cutoff_mask=included)
        populations = boltz * n_species
        ground = int(np.argmin(np.where(included, energy, np.inf)))
        pop_rel = boltz / boltz[ground] if boltz[ground] > 0 else boltz
    else:
        crr, fraction, populations, escape_by_key, cr_note = _cr_populations(
            spectrum_name=spectrum_name, z=z, charge=charge, levels=levels, lines=lines, included=included,
            ionization_cm1=ionization_cm1, next_ion_levels=next_ion_levels, te_k=te_k, ne_m3=ne_m3,
            n_element=n_element, mass_u=mass_u, tgas_k=tgas_k, path_length_m=path_length_m, geometry=geometry,
            loss_rate_per_s=loss_rate_per_s, forbidden_omega=forbidden_omega, warnings=warnings,
            broadening_args=dict(broadening=broadening, perturber=perturber, pressure_pa=pressure_pa, tgas_k=tgas_k,
                                 te_k=te_k, ne_m3=ne_m3, z=z, charge=charge, ionization_cm1=ionization_cm1,
                                 mass_u=mass_u, energy=energy))
        pop_rel, departure = crr
    pop_by_id = {lv.id: populations[i] for i, lv in enumerate(levels)}

    known_a = [r for r in lines if r["a_per_s"] is not None]
    with_rates = [r for r in known_a if pop_by_id.get(r["upper_id"], 0.0) > 0]
    if known_a and not with_rates:
        raise PhysicsInputError(f"at Te = {te_k:g} K no upper level of a line of {spectrum_name} is populated (every "
                                "excited population is below the floating-point range); raise the electron temperature")
    missing = sum(1 for r in lines if r["a_per_s"] is None)
    if missing:
        warnings.append(f"{missing} of {len(lines)} lines have no known A value; they are left out of the "
                        "intensities, photon shares, spectrum and metrics" + _examples(
                            [r for r in lines if r["a_per_s"] is None]))
    if not with_rates:
        named = _examples([r for r in lines if r["a_per_s"] is None])
        raise PhysicsInputError(f"no line of {spectrum_name} has a known Einstein A, so no intensity can be "
                                f"predicted ({missing} lines lack A values{named}; "
                                f"compute them with `levels rates {spectrum_name}`)")
    n_upper = np.array([pop_by_id[r["upper_id"]] for r in with_rates])
    n_lower = np.array([pop_by_id.get(r["lower_id"], 0.0) for r in with_rates])
    a_values = np.array([r["a_per_s"] for r in with_rates])
    sigma = np.array([r["wavenumber_cm1"] for r in with_rates])
    thin_emissivity = plasma.line_emissivity(n_upper, a_values, sigma)
    vacuum = np.array([r["vacuum_nm"] for r in with_rates])
    f_abs = np.array([r["f_abs"] or 0.0 for r in with_rates])
    doppler = spectra.doppler_fwhm_nm(vacuum, tgas_k, mass_u)
    tau_u = np.array([_tau(r["upper_lifetime_s"]) for r in with_rates])
    tau_l = np.array([_tau(r["lower_lifetime_s"]) for r in with_rates])
    natural = spectra.natural_fwhm_nm(vacuum, tau_u, tau_l)
    pressure, pressure_note = _pressure_widths(
        with_rates, levels, pop_by_id, broadening=broadening, perturber=perturber, pressure_pa=pressure_pa,
        tgas_k=tgas_k, te_k=te_k, ne_m3=ne_m3, z=z, charge=charge, ionization_cm1=ionization_cm1, mass_u=mass_u,
        energy=energy, warnings=warnings)
    emissivity = thin_emissivity
    if path_length_m is not None:
        if model == "cr":
            escape = np.array([escape_by_key.get((r["lower_id"], r["upper_id"]), 1.0) for r in with_rates])
        else:
            # the same escape factors as the CR balance uses, on the LTE populations (every line with an f value)
            g_l = np.array([r["g_lower"] for r in with_rates], dtype=float)
            g_u = np.array([r["g_upper"] for r in with_rates], dtype=float)
            tau = plasma.line_center_optical_depth(n_lower, f_abs, vacuum * 1e-9, doppler * 1e-9, path_length_m,
                                                   g_lower=g_l, g_upper=g_u, upper_population_m3=n_upper)
            # Voigt cores (natural and pressure widths), as in the collisional-radiative balance
            damping, centre = discharge_escape.voigt_core(doppler, natural + pressure)
            tau = tau * centre
            escape = np.ones_like(tau)
            todo = tau > 1e-6
            if np.any(todo):
                escape[todo] = discharge_escape.mean_escape_factor(np.maximum(tau[todo], 0.0), geometry, "voigt",
                                                                   damping[todo])
        emissivity = thin_emissivity * escape
        thick = int((escape < 0.5).sum())
        if thick:
            warnings.append(f"{thick} lines are optically thick over {path_length_m:g} m (escape factor below 0.5); "
                            f"their emission is reduced by the mean escape factor of the uniform {geometry}")
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
    if not strongest > 0:
        raise PhysicsInputError(f"no line of {spectrum_name} in the window {lo}..{hi} nm emits at these conditions "
                                "(every upper level is empty)")
    total_photons = photons[in_window].sum()
    rows: list[dict[str, Any]] = []
    for k in np.flatnonzero(in_window):
        row: dict[str, Any] = dict(with_rates[k])
        row["rel_intensity"] = float(emissivity[k] / strongest)
        row["photon_share"] = float(photons[k] / total_photons)
        row["emissivity_w_m3_sr"] = float(emissivity[k])
        if broadening == "pressure" or perturber is not None:
            row["pressure_fwhm_nm"] = float(pressure[k])
        rows.append(row)
    rows.sort(key=lambda r: -r["rel_intensity"])
    air_or_vac = np.array([r["air_nm"] if r["air_nm"] is not None else r["vacuum_nm"] for r in with_rates])
    metrics = colour.lamp_metrics_from_lines(air_or_vac[in_window], emissivity[in_window])
    if (metrics["share_uv_c"] or 0) > 0.01 or (metrics["share_uv_b"] or 0) > 0.01:
        warnings.insert(0, UV_CAUTION)
    grid_lo = lo if lo is not None else float(shown_nm[in_window].min()) * 0.98
    grid_hi = hi if hi is not None else float(shown_nm[in_window].max()) * 1.02
    widths = spectra.voigt_widths(doppler, natural, instrument_fwhm_nm, extra_lorentz_fwhm_nm=pressure)
    narrowest = float(np.min(np.asarray(widths.voigt_fwhm_nm)[in_window])) if in_window.any() else None
    points, sampling_warning = spectrum_grid_points(grid_lo, grid_hi, narrowest, grid_points)
    if sampling_warning:
        warnings.append(sampling_warning)
    grid = spectra.make_grid(grid_lo, grid_hi, points=points)
    spectrum_note = ""
    quantity, unit = "emission coefficient", "W m-3 sr-1 nm-1"
    if path_length_m is None:
        density = spectra.synthetic_spectrum(grid, shown_nm, emissivity, widths.gauss_fwhm_nm,
                                             widths.lorentz_fwhm_nm)
    else:
        per_depth, spectrum_note = _self_absorbed_spectrum(
            grid, shown_nm, vacuum, thin_emissivity, f_abs, n_lower, n_upper, with_rates, doppler, natural, pressure,
            instrument_fwhm_nm, path_length_m, cool_layer_m, levels, pop_by_id, energy, tgas_k, mass_u)
        density = per_depth * path_length_m  # radiance leaving the slab, W m-2 sr-1 nm-1
        quantity, unit = "spectral radiance", "W m-2 sr-1 nm-1"
        spectrum_note = spectrum_note.replace(" per unit depth", "")
    description = ("LTE Boltzmann populations at te, two-stage Saha balance" if model == "lte" else
                   "collisional-radiative steady state at te, ne (" + cr_note + ")")
    description += ("; optically thin" if path_length_m is None else
                    f"; escape factors over a {geometry} of depth {path_length_m:g} m; " + spectrum_note)
    if pressure_note:
        description += "; " + pressure_note
    conditions = {
        "te_k": te_k, "ne_m3": ne_m3, "tgas_k": tgas_k, "cutoff": cutoff.description,
        "cutoff_method": cutoff.method, "lowering_cm1": cutoff.lowering_cm1, "partition_function": u_species,
        "species_fraction": fraction, "element_density_m3": n_element, "medium": medium,
        "instrument_fwhm_nm": instrument_fwhm_nm, "path_length_m": path_length_m, "geometry": geometry,
        "loss_rate_per_s": loss_rate_per_s, "broadening": broadening, "perturber": perturber,
        "pressure_pa": pressure_pa, "cool_layer_m": cool_layer_m, "model_name": model,
        "model": description, "spectrum_quantity": quantity, "spectrum_unit": unit,
        "grid_step_nm": float(grid[1] - grid[0]) if grid.size > 1 else None, "narrowest_fwhm_nm": narrowest,
    }
    pop_rows = [{"label": lv.label, "energy_cm1": float(lv.energy_cm1), "population_rel": float(pop_rel[i]),
                 "departure": float(departure[i]) if included[i] else None}
                for i, lv in enumerate(levels)]
    pop_rows.sort(key=lambda r: r["energy_cm1"])
    return EmissionResult(conditions=conditions, lines=rows, metrics=metrics, warnings=warnings, grid_nm=grid,
                          spectrum=density, medium=medium, model=model, populations=pop_rows,
                          validity=validity_report, spectrum_quantity=quantity, spectrum_unit=unit)


#: the sampling rule: grid step <= the narrowest line's FWHM / SAMPLES_PER_FWHM (common practice, no source)
SAMPLES_PER_FWHM = 5
#: points of an automatic grid: at least, and at most (beyond it, a warning)
MIN_AUTO_POINTS = 2001
MAX_AUTO_POINTS = 400_001


def spectrum_grid_points(lo_nm: float, hi_nm: float, narrowest_fwhm_nm: float | None,
                         requested: int | None = None) -> tuple[int, str]:
    """Points of the spectrum grid so that its step is at most FWHM/5 of the narrowest line; and a warning.

    With ``requested`` None (the CLI's and the web workbench's default) the grid has the points the rule
    needs (at least :data:`MIN_AUTO_POINTS`), capped at :data:`MAX_AUTO_POINTS` with a warning; so equal
    inputs give equal grids and equal peaks everywhere. A ``requested`` count is kept, with a warning when
    its step is coarser than the rule.

    Parameters
    ----------
    lo_nm, hi_nm : float
        Grid ends, nm.
    narrowest_fwhm_nm : float or None
        FWHM of the narrowest line profile in the window (Voigt, with the instrument), nm.
    requested : int, optional
        Points asked for.

    Returns
    -------
    (points, warning)

    Examples
    --------
    >>> spectrum_grid_points(400.0, 700.0, 0.05)
    (30001, '')
    >>> spectrum_grid_points(400.0, 700.0, 1.0)
    (2001, '')
    >>> spectrum_grid_points(400.0, 700.0, 0.05, 4001)[1][:40]
    'spectrum grid: 4001 points give a step o'
    """
    span = hi_nm - lo_nm
    needed = MIN_AUTO_POINTS
    if narrowest_fwhm_nm and narrowest_fwhm_nm > 0 and span > 0:
        needed = int(math.ceil(span * SAMPLES_PER_FWHM / narrowest_fwhm_nm)) + 1
    if requested is not None:
        if needed > requested:
            return requested, (f"spectrum grid: {requested} points give a step of {span / (requested - 1):.3g} nm, "
                               f"coarser than FWHM/5 of the narrowest line ({narrowest_fwhm_nm:.3g} nm); "
                               f"peaks are under-sampled (ask {needed} points or leave the grid automatic)")
        return requested, ""
    points = max(MIN_AUTO_POINTS, needed)
    if points > MAX_AUTO_POINTS:
        return MAX_AUTO_POINTS, (f"spectrum grid capped at {MAX_AUTO_POINTS} points (step "
                                 f"{span / (MAX_AUTO_POINTS - 1):.3g} nm): coarser than FWHM/5 of the narrowest line "
                                 f"({narrowest_fwhm_nm:.3g} nm), so its peak is under-sampled; narrow the window or "
                                 "give an instrument width")
    return points, ""


def _examples(rows: Sequence[LineRow]) -> str:
    if not rows:
        return ""
    names = [f"{r['lower']} – {r['upper']}" for r in rows[:_NAMED]]
    return " (for example " + "; ".join(names) + ")"


def _cr_populations(*, spectrum_name, z, charge, levels, lines, included, ionization_cm1, next_ion_levels, te_k,
                    ne_m3, n_element, mass_u, tgas_k, path_length_m, geometry, loss_rate_per_s, forbidden_omega,
                    warnings, broadening_args):
    """The CR balance on the included levels: ((pop_rel, departure) per level, fraction, densities, escapes, note)."""
    idx_all = np.flatnonzero(included)
    order = idx_all[np.argsort([levels[i].energy_cm1 for i in idx_all], kind="stable")]
    position = {levels[i].id: k for k, i in enumerate(order)}
    e = np.array([levels[i].energy_cm1 for i in order], dtype=float)
    e = e - e[0]
    g = np.array([levels[i].g for i in order], dtype=float)
    e1 = [r for r in lines if r["multipole"] == "E1" and r["lower_id"] in position and r["upper_id"] in position]
    usable = [r for r in lines if r["a_per_s"] is not None and r["lower_id"] in position and r["upper_id"] in position
              and levels[order[position[r["upper_id"]]]].energy_cm1 > levels[order[position[r["lower_id"]]]].energy_cm1]
    no_f = [r for r in e1 if not r["f_abs"]]
    if e1 and len(no_f) == len(e1):
        raise PhysicsInputError(
            f"the collisional-radiative model of {spectrum_name} needs oscillator strengths (f values) of its E1 "
            f"lines, and none of its {len(e1)} E1 lines has one{_examples(no_f)}; compute them with "
            f"`levels rates {spectrum_name}` or use --model lte")
    ground_id = levels[order[0]].id
    resonance_missing = [r for r in no_f if r["lower_id"] == ground_id]
    resonance_all = [r for r in e1 if r["lower_id"] == ground_id]
    if resonance_all and len(resonance_missing) == len(resonance_all):
        raise PhysicsInputError(
            f"the collisional-radiative model of {spectrum_name} needs the rates of its resonance lines (from the "
            f"ground level {levels[order[0]].label}), and none of them has an oscillator strength"
            f"{_examples(resonance_missing)}; compute them with `levels rates {spectrum_name}`")
    if no_f:
        warnings.append(f"{len(no_f)} of {len(e1)} E1 lines of {spectrum_name} have no oscillator strength; their "
                        "levels are coupled only by the default forbidden collision strength and they do not "
                        f"radiate in the balance{_examples(no_f)}")
    lower = np.array([position[r["lower_id"]] for r in usable], dtype=np.int64)
    upper = np.array([position[r["upper_id"]] for r in usable], dtype=np.int64)
    a = np.array([r["a_per_s"] for r in usable], dtype=float)
    f = np.array([(r["f_abs"] or 0.0) if r["multipole"] == "E1" else 0.0 for r in usable], dtype=float)
    # decay not carried by a listed line (two-photon decay of 2s in one-electron ions) goes to the ground
    a_sum = np.bincount(upper, weights=a, minlength=e.size)
    tau = np.array([levels[i].lifetime_s or 0.0 for i in order], dtype=float)
    with np.errstate(divide="ignore"):
        total = np.where(tau > 0, 1.0 / np.where(tau > 0, tau, 1.0), 0.0)
    extra = np.where(total > a_sum * (1.0 + 1e-6), total - a_sum, 0.0)
    extra[0] = 0.0
    shells = [levels[i].n for i in order]
    hydrogen = z == 1 and charge == 0 and all(n is not None for n in shells)
    if next_ion_levels:
        g_ion = float(min(next_ion_levels, key=lambda lv: lv.energy_cm1).g)
    else:
        g_ion = 1.0
        if charge + 1 < z:
            warnings.append("the next ion has no stored levels; the statistical weight of its ground level is "
                            "taken as 1 in the recombination rates")
    species = cr.CRSpecies(e, g, float(ionization_cm1), g_ion, charge + 1, lower, upper, a, f,
                           extra_decay_per_s=extra, shell=np.array(shells, dtype=np.int64) if hydrogen else None,
                           hydrogen=hydrogen)
    omega = cr_excitation.DEFAULT_FORBIDDEN_OMEGA if forbidden_omega is None else forbidden_omega
    if path_length_m is None:
        result = cr.solve_steady_state(species, te_k, ne_m3, loss_rate_per_s=loss_rate_per_s, forbidden_omega=omega)
    else:
        from levels.physics.plasma import spectrum as spectra_
        lam_nm = 1e7 / (e[upper] - e[lower]) if lower.size else np.zeros(0)
        dop = spectra_.doppler_fwhm_nm(lam_nm, tgas_k, mass_u) if lower.size else np.zeros(0)
        # Voigt cores: natural widths from the lifetimes, plus Stark and van der Waals widths when asked for
        # (resonance broadening needs the ground density the balance is solving for, so it is left out here)
        lorentz = np.zeros(lam_nm.size)
        if lower.size:
            tau_u = np.array([_tau(r["upper_lifetime_s"]) for r in usable])
            tau_l = np.array([_tau(r["lower_lifetime_s"]) for r in usable])
            lorentz = spectra_.natural_fwhm_nm(lam_nm, tau_u, tau_l)
            extra, _note = _pressure_widths(usable, levels, {}, warnings=[], **broadening_args)
            lorentz = lorentz + extra
        result = cr.solve_with_trapping(species, te_k, ne_m3, total_density_m3=n_element, size_m=path_length_m,
                                        geometry=geometry, wavelength_m=lam_nm * 1e-9, doppler_fwhm_m=dop * 1e-9,
                                        lorentz_fwhm_m=lorentz * 1e-9, loss_rate_per_s=loss_rate_per_s,
                                        forbidden_omega=omega)
    warnings.extend(result.warnings)
    pop_rel = np.zeros(len(levels))
    departure = np.full(len(levels), np.nan)
    pop_rel[order] = result.population_rel
    departure[order] = result.departure
    norm = n_element / (float(np.sum(result.population_rel)) + result.ion_rel)
    populations = pop_rel * norm
    escapes = {(levels[order[lo_]].id, levels[order[up_]].id): float(lam)
               for lo_, up_, lam in zip(lower.tolist(), upper.tolist(), np.asarray(result.escape).tolist())}
    note = (f"{species.size} levels, hydrogen shell rates of Vriens & Smeets 1980" if hydrogen else
            f"{species.size} levels, van Regemorter 1962 excitation")
    note += (f", Lotz 1968 ionization, forbidden collision strength {omega:g}, metastable loss "
             f"{loss_rate_per_s:g} s-1")
    if path_length_m is not None:
        note += f", {result.iterations} trapping iterations with Voigt-core escape factors"
    return (pop_rel, departure), result.species_fraction, populations, escapes, note


def _quantum_numbers(levels, energy, z, charge, ionization_cm1):
    """(n*, l) per level id for the hydrogenic <r^2> (l = 0 where unknown)."""
    out = {}
    for lv in levels:
        l = lv.l if getattr(lv, "l", None) is not None else 0
        if z - charge == 1 and getattr(lv, "n", None):
            n_star = float(lv.n)
        elif ionization_cm1 is not None and ionization_cm1 > lv.energy_cm1:
            n_star = (charge + 1) * math.sqrt(109737.31568 / (ionization_cm1 - lv.energy_cm1))
        else:
            n_star = None
        out[lv.id] = (n_star, l)
    return out


def _pressure_widths(rows, levels, pop_by_id, *, broadening, perturber, pressure_pa, tgas_k, te_k, ne_m3, z, charge,
                     ionization_cm1, mass_u, energy, warnings):
    """Lorentz FWHM (nm) of Stark, resonance and van der Waals broadening of each line, and a note."""
    width = np.zeros(len(rows))
    if broadening != "pressure" and perturber is None:
        return width, ""
    vacuum = np.array([r["vacuum_nm"] for r in rows])
    qn = _quantum_numbers(levels, energy, z, charge, ionization_cm1)
    level_by_id = {lv.id: lv for lv in levels}
    parts = []
    n_star_u = np.array([qn[r["upper_id"]][0] or 0.0 for r in rows])
    n_star_l = np.array([qn[r["lower_id"]][0] or 0.0 for r in rows])
    known = (n_star_u > 0) & (n_star_l > 0)
    l_u = np.array([qn[r["upper_id"]][1] for r in rows], dtype=float)
    l_l = np.array([qn[r["lower_id"]][1] for r in rows], dtype=float)
    core = charge + 1
    def r2(n_star, l):
        return np.where(known, stark.mean_r2_bohr2(np.maximum(n_star, 1e-3),
                                                   np.minimum(l, np.maximum(n_star - 1, 0)), core), 0.0)

    r2_u, r2_l = r2(n_star_u, l_u), r2(n_star_l, l_l)
    if not known.all():
        warnings.append(f"{int((~known).sum())} lines have no effective quantum number (no ionization energy "
                        "stored): no Stark or van der Waals width for them")
    if broadening == "pressure":
        if z - charge == 1:
            nu = np.array([level_by_id[r["upper_id"]].n or 0 for r in rows], dtype=float)
            nl = np.array([level_by_id[r["lower_id"]].n or 0 for r in rows], dtype=float)
            ok = (nu > nl) & (nl > 0)
            st = np.zeros(len(rows))
            if ok.any():
                st[ok] = stark.hydrogenic_stark_fwhm_nm(nu[ok], nl[ok], vacuum[ok], ne_m3, core_charge=z)
            parts.append("Stark widths: Gigosos et al. 2003 fits for H-alpha/H-beta, scaled estimate for other lines")
        else:
            st = np.where(known, stark.quadratic_stark_fwhm_nm(vacuum, r2_u, r2_l, te_k, ne_m3), 0.0)
            parts.append("Stark widths: order-of-magnitude estimate after Griem 1968")
        width += st
        # resonance broadening by ground-state atoms of the same species
        ground_e = float(np.min(energy))
        ground = min(levels, key=lambda lv: lv.energy_cm1)
        n_ground = pop_by_id.get(ground.id, 0.0)
        res = {r["upper_id"]: r for r in rows if r["lower_cm1"] == ground_e and r["multipole"] == "E1" and r["f_abs"]}
        rb = np.zeros(len(rows))
        for k, r in enumerate(rows):
            link = res.get(r["upper_id"]) if r["lower_cm1"] == ground_e else res.get(r["lower_id"])
            if link is not None and n_ground > 0:
                rb[k] = float(neutral_broadening.resonance_fwhm_nm(
                    r["vacuum_nm"], link["vacuum_nm"], link["f_abs"], link["g_lower"] / link["g_upper"], n_ground))
        if charge == 0:
            width += rb
            parts.append("resonance broadening: Ali & Griem 1965")
    if perturber is not None:
        vdw = np.where(known, neutral_broadening.van_der_waals_fwhm_nm(vacuum, r2_u, r2_l, mass_u, perturber,
                                                                      pressure_pa, tgas_k), 0.0)
        width += vdw
        parts.append(f"van der Waals broadening by {perturber} at {pressure_pa:g} Pa: Unsöld's estimate")
    return width, "; ".join(parts)


def _self_absorbed_spectrum(grid, shown_nm, vacuum, thin_emissivity, f_abs, n_lower, n_upper, rows, doppler, natural,
                            pressure, instrument_fwhm_nm, length_m, cool_layer_m, levels, pop_by_id, energy, tgas_k,
                            mass_u):
    """Radiance through the slab (and cool layer) divided by its depth, before the instrument; and a note."""
    g_l = np.array([r["g_lower"] for r in rows], dtype=float)
    g_u = np.array([r["g_upper"] for r in rows], dtype=float)
    s_abs = slab_transfer.integrated_absorption_m1_nm(f_abs, n_lower, vacuum, g_lower=g_l, g_upper=g_u,
                                                      upper_density_m3=n_upper)
    widths = spectra.voigt_widths(doppler, natural, 0.0, extra_lorentz_fwhm_nm=pressure)
    eps = spectra.synthetic_spectrum(grid, shown_nm, thin_emissivity, widths.gauss_fwhm_nm, widths.lorentz_fwhm_nm)
    kappa = spectra.synthetic_spectrum(grid, shown_nm, s_abs, widths.gauss_fwhm_nm, widths.lorentz_fwhm_nm)
    cool = None
    note = f"spectrum: radiance through the {length_m:g} m slab (self-absorbed) per unit depth"
    if cool_layer_m is not None:
        ground_e = float(np.min(energy))
        ground = min(levels, key=lambda lv: lv.energy_cm1)
        resonance = np.array([r["lower_cm1"] == ground_e for r in rows])
        cool_abs = np.where(resonance, slab_transfer.integrated_absorption_m1_nm(
            f_abs, pop_by_id.get(ground.id, 0.0), vacuum), 0.0)
        cool_dop = spectra.doppler_fwhm_nm(vacuum, tgas_k, mass_u)
        cool = spectra.synthetic_spectrum(grid, shown_nm, cool_abs, cool_dop, natural)
        note += f", through a {cool_layer_m:g} m outer layer of ground-state atoms at the gas temperature"
    out = slab_transfer.slab_radiance(eps, kappa, length_m, cool_absorption_m1=cool,
                                      cool_length_m=cool_layer_m or 0.0)
    if instrument_fwhm_nm > 0 and grid.size > 2:
        step = float(grid[1] - grid[0])
        sigma_pts = instrument_fwhm_nm / (2.0 * math.sqrt(2.0 * math.log(2.0))) / step
        if sigma_pts > 0.3:
            half = int(min(max(4.0 * sigma_pts, 1.0), grid.size))
            x = np.arange(-half, half + 1)
            kernel = np.exp(-0.5 * (x / sigma_pts) ** 2)
            out = np.convolve(out, kernel / kernel.sum(), mode="same")
        note += f", convolved with the {instrument_fwhm_nm:g} nm instrument profile"
    return out, note


def _tau(value) -> float:
    return math.inf if value is None else float(value)


def photon_energy_j(wavenumber_cm1: np.ndarray) -> np.ndarray:
    """h c sigma, J."""
    return H * C * 100.0 * np.asarray(wavenumber_cm1)
