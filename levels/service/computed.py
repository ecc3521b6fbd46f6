"""Computed one-electron ions: a hydrogen-like species' levels, lines and limit into the store.

The physics is :mod:`levels.physics.one_electron.hydrogenic` (Dirac energies with recoil, QED and finite
nuclear size; radial integrals and rates); this unit of work replaces the species' computed dataset in one
transaction, keeping levels that other datasets' lines join, and rebuilds its derived lines.
:class:`levels.catalog.Catalog` exposes it as ``compute_hydrogenic``.
"""

from __future__ import annotations

import json
from collections.abc import Callable

import numpy as np
from sqlalchemy.orm import Session

from levels import __version__
from levels.errors import PhysicsInputError
from levels.notation import Spectrum, format_j, parse_spectrum
from levels.service import lookup
from levels.service.contract import DEFAULT_MAX_STORE_BYTES
from levels.service.derived import DERIVED_ROLE, store_derived_lines
from levels.store import queries


def compute_hydrogenic(catalog, spectrum: str | Spectrum, *, mass_number: int | None = None, n_max: int = 20,
                       fine_structure: bool = True, corrections=None,
                       max_store_bytes: int = DEFAULT_MAX_STORE_BYTES,
                       progress: Callable[[str, int, int], None] | None = None) -> dict:
    """Compute a one-electron ion into a computed dataset (re-running replaces it in one transaction).

    Parameters
    ----------
    catalog : levels.catalog.Catalog
        The store.
    spectrum : str or Spectrum
        A one-electron ion: ``H I``, ``D I``, ``He II``, ... ``U XCII``.
    mass_number : int, optional
        Isotope (default: the spectrum's own, D/T, or the most abundant).
    n_max : int
        Highest principal quantum number (1..1000).
    fine_structure : bool
        Levels n l j (True) or nl terms (False).
    corrections : levels.physics.one_electron.dirac.Corrections, optional
        Corrections applied (default all).
    max_store_bytes : int
        Refuse a computation whose rows would need more than this.
    progress : callable, optional
        ``progress(stage, done, total)`` for a progress bar.

    Returns
    -------
    dict
        dataset name and id, counts of levels and lines, ionization energy (cm-1), corrections.
    """
    from levels.isotopes import isotope
    from levels.physics.one_electron import dirac, hydrogenic

    spec = parse_spectrum(spectrum) if isinstance(spectrum, str) else spectrum
    if spec.electrons != 1:
        raise PhysicsInputError(
            f"{spec.name} has {spec.electrons} electrons; 'hydrogenic' computes one-electron ions only "
            f"(for {spec.symbol} that is {Spectrum(spec.z, spec.z - 1).name})")
    if mass_number is not None and spec.mass_number is not None and mass_number != spec.mass_number:
        raise PhysicsInputError(f"{spec.isotope_name} names A = {spec.mass_number} but the mass number asked for is "
                                f"{mass_number}; give it once")
    iso = isotope(spec.z, mass_number or spec.mass_number)
    if not isinstance(n_max, int) or n_max < 1:
        raise PhysicsInputError(f"n_max must be a whole number >= 1, got {n_max!r}")
    if n_max > hydrogenic.N_MAX_LIMIT:
        raise PhysicsInputError(f"n_max = {n_max} is above the supported {hydrogenic.N_MAX_LIMIT}")
    hydrogenic.check_size(n_max, fine_structure, max_store_bytes)
    corrections = corrections or dirac.Corrections()
    notify = progress or (lambda stage, done, total: None)
    notify("computing", 0, 1)
    model = hydrogenic.compute(spec.z, nuclear_mass_u=iso.nuclear_mass_u, n_max=n_max,
                               fine_structure=fine_structure, corrections=corrections,
                               mass_number=iso.mass_number)
    notify("computing", 1, 1)
    species_spec = Spectrum(spec.z, spec.charge, iso.mass_number)
    name = f"hydrogenic {species_spec.name} A={iso.mass_number}" + ("" if fine_structure else " nl")
    level_rows = hydrogenic_level_rows(model)
    lines = model.lines

    def work(session: Session) -> dict:
        species = lookup.get_or_create_species(session, species_spec)
        # the earlier computation is found by role and species (never by name); levels of it that
        # lines of other datasets (measured lines, say) join keep their ids and are updated in place
        ds = queries.replace_computed_dataset(
            session, species.id, "hydrogenic" if fine_structure else "hydrogenic-nl", name=name,
            method=hydrogenic.METHOD, method_version=f"{hydrogenic.METHOD_VERSION} (levels {__version__})",
            options_json=json.dumps(model.options or {}, sort_keys=True), actor=catalog.actor,
            citation="computed by levels: Dirac energies with recoil and QED corrections "
                     "(see levels.physics.one_electron.dirac)",
            description=f"{species_spec.name} (A = {iso.mass_number}) to n = {n_max}"
                        + (" with fine structure" if fine_structure else ", nl terms"),
            keep_referenced_levels=True)
        for row in level_rows:
            row["dataset_id"], row["species_id"] = ds.id, species.id
        ids = np.asarray(queries.upsert_kept_levels(session, ds.id, level_rows, source=ds.name), dtype=np.int64)
        total = len(lines["upper"])
        columns = hydrogenic_line_columns(ds.id, species.id, ids, lines)
        chunk = 20000
        for start in range(0, total, chunk):
            queries.insert_line_columns(session, columns, start, min(start + chunk, total))
            notify("storing lines", min(start + chunk, total), total)
        queries.add_ionization_limit(session, dataset_id=ds.id, species_id=species.id,
                                     energy_cm1=model.ionization_cm1, unc_cm1=model.ionization_unc_cm1,
                                     method=hydrogenic.METHOD)
        if queries.find_computed_dataset(session, species.id, DERIVED_ROLE) is not None:
            # the replaced levels took some derived lines with them: rebuild the species' set
            store_derived_lines(session, species, catalog.actor)
        queries.record_audit(session, "compute-hydrogenic", f"dataset {ds.name}",
                             {"levels": len(level_rows), "lines": total, "n_max": n_max,
                              "fine_structure": fine_structure, "corrections": corrections.as_dict()},
                             actor=catalog.actor)
        return {"dataset": ds.name, "dataset_id": ds.id, "spectrum": species_spec.name,
                "mass_number": iso.mass_number, "levels": len(level_rows), "lines": total,
                "ionization_cm1": model.ionization_cm1, "corrections": corrections.as_dict(),
                "charge_radius_fm": model.charge_radius_fm, "radius_source": model.radius_source}

    return catalog.write(work)


def hydrogenic_level_rows(model) -> list[dict]:
    """The ``levels`` table rows of a computed one-electron ion (``hydrogenic.compute``), without ids."""
    from levels.notation import l_letter

    rows = []
    odd = model.l % 2 == 1
    for i in range(len(model.n)):
        n, l, two_j = int(model.n[i]), int(model.l[i]), int(model.two_j[i])
        config = f"{n}{l_letter(l)}"
        term = f"2{l_letter(l, upper=True)}{'°' if odd[i] else ''}"
        resolved = two_j >= 0
        rows.append({
            "label": f"{config} {term}{format_j(two_j)}" if resolved else f"{config} {term}",
            "configuration": config, "term": term, "two_j": two_j if resolved else None, "g": int(model.g[i]),
            "parity": -1 if odd[i] else 1, "energy_cm1": float(model.energy_cm1[i]),
            "unc_cm1": float(model.energy_unc_cm1[i]) if np.isfinite(model.energy_unc_cm1[i]) else None,
            "multiplicity": 2, "big_l": l, "n": n, "l": l,
            "lifetime_s": float(model.lifetime_s[i]) if np.isfinite(model.lifetime_s[i]) else None,
            "lande_g": float(model.lande_g[i]) if np.isfinite(model.lande_g[i]) else None,
        })
    return rows


def hydrogenic_line_columns(dataset_id: int, species_id: int, level_ids: np.ndarray, lines: dict) -> dict:
    """Column arrays of the computed lines, ready for :func:`queries.insert_line_columns`."""
    count = len(lines["upper"])
    air = np.asarray(lines["air_nm"], dtype=float)
    return {
        "dataset_id": np.full(count, dataset_id), "species_id": np.full(count, species_id),
        "lower_id": level_ids[lines["lower"]], "upper_id": level_ids[lines["upper"]],
        "multipole": np.full(count, "E1", dtype=object), "wavenumber_cm1": lines["wavenumber_cm1"],
        "vacuum_nm": lines["vacuum_nm"], "air_nm": np.where(np.isfinite(air), air, np.nan),
        "a_per_s": lines["a_per_s"], "f_abs": lines["f_abs"], "line_strength_au": lines["S"],
        "unc_nm": lines.get("unc_nm", np.full(count, np.nan)),
    }
