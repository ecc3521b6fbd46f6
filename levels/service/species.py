"""Species and their levels: the species table and a species' levels under a precedence of datasets.

Units of work on one store that :class:`levels.catalog.Catalog` exposes as methods. A level without a
stored lifetime shows the one its computed rates give (:func:`levels.service.rates.level_lifetimes`).
"""

from __future__ import annotations

from collections.abc import Sequence

from sqlalchemy.orm import Session

from levels.errors import NotFoundError
from levels.notation import Spectrum, format_j, parse_spectrum
from levels.service import lookup
from levels.service.contract import LevelRow, SpeciesRow
from levels.store import queries
from levels.store.schema import Level


def species_rows(catalog) -> list[SpeciesRow]:
    """One row per stored species with counts, ionization energy and datasets (SPECIES_COLUMNS), then
    ``dataset_names`` and ``all_limits`` (:class:`levels.service.contract.SpeciesRow`)."""

    def work(session: Session) -> list[SpeciesRow]:
        datasets = queries.visible_datasets(session)
        counts = queries.species_counts(session, [d.id for d in datasets])
        rows: list[SpeciesRow] = []
        for species in queries.all_species(session):
            c = counts.get(species.id, {"levels": 0, "lines": 0, "datasets": set()})
            limits = queries.ionization_limits(session, species, datasets)
            limit = limits[0][0] if limits else None
            rows.append({
                "spectrum": species.name, "z": species.z, "charge": species.charge,
                "mass_number": species.mass_number, "levels": c["levels"], "lines": c["lines"],
                "ionization_cm1": limit.energy_cm1 if limit else None,
                "ionization_unc_cm1": limit.unc_cm1 if limit else None,
                "datasets": "; ".join(sorted(c["datasets"])),
                "dataset_names": tuple(sorted(c["datasets"])),
                "all_limits": "; ".join(
                    f"{lim.energy_cm1:.4f}" + (f" ± {lim.unc_cm1:.4f}" if lim.unc_cm1 else "") + f" ({name})"
                    for lim, name in limits),
            })
        return rows

    return catalog.read(work)


def species_row(catalog, spectrum: str | Spectrum) -> SpeciesRow:
    """One row of :func:`species_rows` (NotFoundError if the species is not stored)."""
    spec = parse_spectrum(spectrum) if isinstance(spectrum, str) else spectrum
    name = catalog.read(lambda session: lookup.require_species(session, spec).name)
    for row in species_rows(catalog):
        if row["spectrum"] == name:
            return row
    raise NotFoundError(f"no species {spec.isotope_name} in the store")


def level_rows(catalog, spectrum: str | Spectrum, datasets: Sequence[str] | None = None) -> list[LevelRow]:
    """Levels of a species under a precedence of datasets (LEVEL_COLUMNS), by energy."""
    spec = parse_spectrum(spectrum) if isinstance(spectrum, str) else spectrum

    def work(session: Session) -> list[LevelRow]:
        species = lookup.require_species(session, spec)
        chosen = queries.visible_datasets(session, datasets)
        names = {d.id: d.name for d in chosen}
        levels = queries.levels_by_precedence(session, species, chosen)
        rows = [level_row(species.name, lv, names[lv.dataset_id]) for lv in levels]
        # a stored lifetime wins; else the one the species' computed rates give (levels rates)
        from levels.service.rates import level_lifetimes

        computed = level_lifetimes(session, species, chosen, levels)
        for row, lv in zip(rows, levels):
            if row["lifetime_s"] is None and lv.id in computed:
                row["lifetime_s"] = computed[lv.id]
        return rows

    return catalog.read(work)


def level_row(spectrum_name: str, level: Level, dataset_name: str) -> LevelRow:
    """A level as a row of the level contract (LEVEL_COLUMNS, then LEVEL_VALUE_KEYS)."""
    return {
        "spectrum": spectrum_name, "label": level.label, "configuration": level.configuration,
        "term": level.term, "j": "" if level.two_j is None else format_j(level.two_j), "parity": level.parity,
        "energy_cm1": level.energy_cm1, "unc_cm1": level.unc_cm1, "g": level.g,
        "n": level.n, "l": level.l, "lifetime_s": level.lifetime_s, "lande_g": level.lande_g,
        "dataset": dataset_name,
        "two_j": level.two_j, "multiplicity": level.multiplicity, "L": level.big_l,
    }
