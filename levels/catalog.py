"""The service layer: what the CLI and the web site ask of the store.

One :class:`Catalog` wraps one store. Its methods are units of work ("import
this file as a new measured dataset", "list the species", "give the levels of
a species under this precedence"); each write runs in one transaction with its
audit entry. Neither the CLI nor the web site talks to SQL or to each other.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path

import numpy as np
from sqlalchemy.orm import Session

from levels import __version__
from levels.errors import (
    AlreadyExistsError,
    InputFileError,
    NotFoundError,
    PhysicsInputError,
    Problem,
    StoreError,
)
from levels.io import records as level_io
from levels.notation import Spectrum, format_j, hydrogen_line_name, parse_spectrum, principal_number
from levels.service import imports
from levels.service.contract import (  # noqa: F401 (re-exported: the front ends' names)
    DEFAULT_MAX_STORE_BYTES,
    EMISSION_COLUMNS,
    LEVEL_COLUMNS,
    LEVEL_UNITS,
    LINE_COLUMNS,
    LINE_HEADINGS,
    LINE_LIST_COLUMNS,
    LINE_UNITS,
    MULTIPOLE_CODES,
    RITZ_COLUMNS,
    SAMPLE_CONDITION_FIELDS,
    SPECIES_COLUMNS,
    ImportReport,
    LineQuery,
)
from levels.service.derived import (  # noqa: F401 (re-exported)
    DEFAULT_MAX_DERIVED_LINES,
    DERIVED_METHOD,
    DERIVED_ROLE,
    MAX_DERIVED_ENV,
    RITZ_NOTE,
    default_max_derived_lines,
    derived_dataset_name,
    rebuild_derived_lines,
    store_derived_lines,
)
from levels.service.imports import detect_file_kind, table_content_sha256  # noqa: F401 (re-exported)
from levels.store import database, queries
from levels.store.schema import Dataset, IonizationLimit, Level, Sample, Species


class Catalog:
    """Service layer over one store (SQLite file or PostgreSQL database).

    Parameters
    ----------
    store : str or path, optional
        SQLAlchemy URL or SQLite file path; default the user's data directory.
    actor : str, optional
        Who writes (recorded in the audit log); default the OS user.
    """

    def __init__(self, store: str | os.PathLike | None = None, *, actor: str | None = None):
        self.url = database.normalize_url(store)
        self.engine = database.make_engine(self.url)
        self.actor = actor or queries.current_actor()

    # ------------------------------------------------------------- plumbing
    @property
    def display_url(self) -> str:
        """The store URL with any password hidden."""
        return database.display_url(self.url)

    def close(self) -> None:
        """Release the engine's connections."""
        self.engine.dispose()

    def __enter__(self) -> Catalog:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def init(self) -> str:
        """Create or upgrade the schema; return the revision."""
        revision = database.upgrade(self.engine)
        self._ready = revision == database.head_revision()
        return revision

    def check_ready(self) -> None:
        """Refuse to work on an uninitialised or outdated store (checked once per Catalog, then remembered)."""
        if getattr(self, "_ready", False):
            return
        missing = _missing_sqlite_file(self.url)
        if missing is not None:  # connecting would leave an empty file behind
            raise StoreError(f"no store file at {missing} (create one with 'levels init', "
                             "or check --db / LEVELS_DB); nothing was created")
        database.require_current(self.engine)
        self._ready = True

    def write(self, work):
        """Run ``work(session)`` as one transaction (with retries on a busy SQLite store)."""
        self.check_ready()
        return database.run_in_transaction(self.engine, work)

    def read(self, work):
        """Run ``work(session)`` in a read transaction."""
        self.check_ready()
        with database.read_session(self.engine) as session, session.begin():
            return work(session)

    def provenance(self, query: str, datasets: Sequence[str] = (), **extra) -> dict:
        """The provenance header of an export: tool version, store, datasets, query."""
        out = {
            "tool": f"levels {__version__}",
            "store": self.display_url,
            "datasets": "; ".join(datasets) if datasets else "(none)",
            "query": query,
        }
        out.update(extra)
        return out

    # ------------------------------------------------------------- species
    def species_rows(self) -> list[dict]:
        """One row per stored species with counts, ionization energy and datasets (SPECIES_COLUMNS)."""

        def work(session: Session) -> list[dict]:
            datasets = queries.visible_datasets(session)
            counts = queries.species_counts(session, [d.id for d in datasets])
            rows = []
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
                    "all_limits": "; ".join(
                        f"{lim.energy_cm1:.4f}" + (f" ± {lim.unc_cm1:.4f}" if lim.unc_cm1 else "") + f" ({name})"
                        for lim, name in limits),
                })
            return rows

        return self.read(work)

    def species_row(self, spectrum: str | Spectrum) -> dict:
        """One row of :meth:`species_rows` (NotFoundError if the species is not stored)."""
        spec = parse_spectrum(spectrum) if isinstance(spectrum, str) else spectrum
        name = self.read(lambda session: queries.require_species(session, spec).name)
        for row in self.species_rows():
            if row["spectrum"] == name:
                return row
        raise NotFoundError(f"no species {spec.isotope_name} in the store")

    # ------------------------------------------------------------- levels
    def level_rows(self, spectrum: str | Spectrum, datasets: Sequence[str] | None = None) -> list[dict]:
        """Levels of a species under a precedence of datasets (LEVEL_COLUMNS), by energy."""
        spec = parse_spectrum(spectrum) if isinstance(spectrum, str) else spectrum

        def work(session: Session) -> list[dict]:
            species = queries.require_species(session, spec)
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

        return self.read(work)

    # ------------------------------------------------------------- lines
    def line_rows(self, query: LineQuery, *, air_formula: str | None = None) -> tuple[list[dict], int]:
        """Stored lines matching ``query`` (rows carry LINE_COLUMNS plus ids), and the total count.

        With ``air_formula``, every ``air_nm`` is in that formula: rows of datasets that
        recorded another formula (or none) are recomputed from ``vacuum_nm``, and an air
        window is applied as its vacuum equivalent under that formula. Without it, air
        wavelengths are as each dataset stored them.
        """
        from levels.service import vocabulary

        _check_line_query(query)
        if air_formula is not None:
            vocabulary.check_air_formula(air_formula)

        def work(session: Session):
            chosen = queries.visible_datasets(session, query.datasets)
            recorded = {d.name: vocabulary.recorded_air_formula(d.options_json) for d in chosen}
            convert = air_formula is not None and any(code != air_formula for code in recorded.values())
            species_ids = None
            if query.spectrum is not None:
                species_ids = [queries.require_species(session, parse_spectrum(query.spectrum)).id]
            window = {}
            if query.medium == "air" and convert:
                lo, hi = vocabulary.air_window_to_vacuum(query.from_nm, query.to_nm, air_formula)
                window = dict(from_vacuum_nm=lo, to_vacuum_nm=hi)
            elif query.medium == "air":
                window = dict(from_air_nm=query.from_nm, to_air_nm=query.to_nm)
            else:
                window = dict(from_vacuum_nm=query.from_nm, to_vacuum_nm=query.to_nm)
            rows, total = queries.select_lines(
                session, dataset_ids=[d.id for d in chosen], species_ids=species_ids,
                multipoles=query.multipoles, min_a=query.min_a, max_upper_cm1=query.max_upper_cm1,
                order=query.order, limit=query.limit, offset=query.offset, **window)
            if convert:
                vocabulary.reexpress_air(rows, air_formula, recorded)
            return rows, total

        return self.read(work)

    def species_lines(self, query: LineQuery, *, multipoles: Sequence[str] = ("E1",),
                      air_formula: str = "iau2000") -> tuple[list[dict], dict]:
        """Every line of one species that the selection rules allow between its levels (the engine).

        Levels come from the precedence of datasets (``query.datasets`` or the default);
        wavenumbers, vacuum and air wavelengths and their uncertainties follow from the
        levels (Ritz). Rates stored for the same pair (same two levels and multipole) in
        a visible dataset are kept; otherwise A, f and S stay empty. Stored lines between
        the chosen levels that the J rules cannot build (terms without J) are added.

        Returns
        -------
        (rows, info)
            Rows with LINE_COLUMNS (plus ``note``), filtered, sorted and paged as asked;
            ``info`` has ``total``, ``datasets``, ``without_rates`` and ``air_formula``.
        """
        if query.spectrum is None:
            raise PhysicsInputError("the line engine works on one species; give a spectrum")
        _check_line_query(query)
        for m in multipoles:
            if m not in ("E1", "M1", "E2"):
                raise PhysicsInputError(f"the engine builds E1, M1 and E2 lines, not {m!r}")
        window = _vacuum_window(query, air_formula)
        spec = parse_spectrum(query.spectrum)

        def work(session: Session):
            species = queries.require_species(session, spec)
            chosen = queries.visible_datasets(session, query.datasets)
            levels = queries.levels_by_precedence(session, species, chosen)
            stored = queries.stored_lines_between(session, [lv.id for lv in levels], [d.id for d in chosen])
            return species.name, chosen, levels, stored

        name, chosen, levels, stored = self.read(work)
        rows = engine_rows(name, levels, stored, {d.id: d.name for d in chosen}, multipoles=multipoles,
                           window=window, max_upper_cm1=query.max_upper_cm1, air_formula=air_formula)
        # a level without a stored lifetime takes the one its computed rates give (levels rates)
        from levels.service.rates import lifetimes_from_lines

        computed = lifetimes_from_lines(levels[0].species_id if levels else None, chosen, stored)
        for row in rows if computed else ():
            for end in ("lower", "upper"):
                if row[f"{end}_lifetime_s"] is None and row[f"{end}_id"] in computed:
                    row[f"{end}_lifetime_s"] = computed[row[f"{end}_id"]]
        # which datasets a row draws on: its own (stored line) and its two levels' (not a column; for provenance)
        names_by_id = {d.id: d.name for d in chosen}
        level_set = {lv.id: names_by_id.get(lv.dataset_id, "") for lv in levels}
        for row in rows:
            row["source_datasets"] = tuple(dict.fromkeys(
                n for n in (row.get("dataset"), level_set.get(row.get("lower_id")), level_set.get(row.get("upper_id")))
                if n))
        if query.min_a is not None:
            rows = [r for r in rows if r["a_per_s"] is not None and r["a_per_s"] >= query.min_a]
        rows = _sort_rows(rows, query.order)
        info = {"total": len(rows), "datasets": [d.name for d in chosen],
                "without_rates": sum(1 for r in rows if r["a_per_s"] is None), "air_formula": air_formula}
        stop = None if query.limit is None else query.offset + query.limit
        return rows[query.offset:stop], info

    def recompute_lines(self, spectrum: str) -> int:
        """Rebuild the stored derived E1 lines of a species from its levels (default precedence)."""
        spec = parse_spectrum(spectrum)

        def work(session: Session) -> int:
            species = queries.require_species(session, spec)
            count = store_derived_lines(session, species, self.actor)
            queries.record_audit(session, "recompute-lines", f"species {species.name}",
                                 {"derived_lines": count}, actor=self.actor)
            return count

        return self.write(work)

    def line_record(self, line_id: int) -> dict:
        """One stored line by id, with its levels (NotFoundError if absent)."""
        from levels.store.schema import Line

        def work(session: Session) -> dict:
            line = session.get(Line, int(line_id))
            if line is None:
                raise NotFoundError(f"no line with id {line_id}")
            species = session.get(Species, line.species_id)
            dataset = session.get(Dataset, line.dataset_id)
            return queries.line_row(line, session.get(Level, line.lower_id), session.get(Level, line.upper_id),
                                    species.name, dataset.name)

        return self.read(work)

    # ------------------------------------------------------------- datasets
    def dataset_info(self, name_or_id: str | int) -> dict:
        """A dataset's record with its counts of levels and lines."""

        def work(session: Session) -> dict:
            ds = queries.require_dataset(session, name_or_id)
            return dataset_summary(session, ds)

        return self.read(work)

    def dataset_rows(self, include_retracted: bool = False) -> list[dict]:
        """Every dataset in precedence order with counts."""

        def work(session: Session) -> list[dict]:
            return [dataset_summary(session, ds)
                    for ds in queries.visible_datasets(session, include_retracted=include_retracted)]

        return self.read(work)

    # ------------------------------------------------------------- hydrogenic
    def compute_hydrogenic(self, spectrum: str | Spectrum, *, mass_number: int | None = None, n_max: int = 20,
                           fine_structure: bool = True, corrections=None,
                           max_store_bytes: int = DEFAULT_MAX_STORE_BYTES,
                           progress: Callable[[str, int, int], None] | None = None) -> dict:
        """Compute a one-electron ion into a computed dataset (re-running replaces it in one transaction).

        Parameters
        ----------
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
        level_rows = _hydrogenic_level_rows(model)
        lines = model.lines

        def work(session: Session) -> dict:
            species = queries.get_or_create_species(session, species_spec)
            # the earlier computation is found by role and species (never by name); levels of it that
            # lines of other datasets (measured lines, say) join keep their ids and are updated in place
            ds = queries.replace_computed_dataset(
                session, species.id, "hydrogenic" if fine_structure else "hydrogenic-nl", name=name,
                method=hydrogenic.METHOD, method_version=f"{hydrogenic.METHOD_VERSION} (levels {__version__})",
                options_json=json.dumps(model.options or {}, sort_keys=True), actor=self.actor,
                citation="computed by levels: Dirac energies with recoil and QED corrections (see levels.physics.one_electron.dirac)",
                description=f"{species_spec.name} (A = {iso.mass_number}) to n = {n_max}"
                            + (" with fine structure" if fine_structure else ", nl terms"),
                keep_referenced_levels=True)
            for row in level_rows:
                row["dataset_id"], row["species_id"] = ds.id, species.id
            ids = np.asarray(queries.upsert_kept_levels(session, ds.id, level_rows, source=ds.name), dtype=np.int64)
            total = len(lines["upper"])
            columns = _hydrogenic_line_columns(ds.id, species.id, ids, lines)
            chunk = 20000
            for start in range(0, total, chunk):
                queries.insert_line_columns(session, columns, start, min(start + chunk, total))
                notify("storing lines", min(start + chunk, total), total)
            session.add(IonizationLimit(dataset_id=ds.id, species_id=species.id, energy_cm1=model.ionization_cm1,
                                        unc_cm1=None, method=hydrogenic.METHOD))
            if queries.find_computed_dataset(session, species.id, DERIVED_ROLE) is not None:
                # the replaced levels took some derived lines with them: rebuild the species' set
                store_derived_lines(session, species, self.actor)
            queries.record_audit(session, "compute-hydrogenic", f"dataset {ds.name}",
                                 {"levels": len(level_rows), "lines": total, "n_max": n_max,
                                  "fine_structure": fine_structure, "corrections": corrections.as_dict()},
                                 actor=self.actor)
            return {"dataset": ds.name, "dataset_id": ds.id, "spectrum": species_spec.name,
                    "mass_number": iso.mass_number, "levels": len(level_rows), "lines": total,
                    "ionization_cm1": model.ionization_cm1, "corrections": corrections.as_dict(),
                    "charge_radius_fm": model.charge_radius_fm, "radius_source": model.radius_source}

        return self.write(work)

    # ------------------------------------------------------------- samples
    def create_sample(self, name: str, **conditions) -> dict:
        """Create a lab sample with its conditions (SAMPLE_CONDITION_FIELDS); the name must be new."""
        unknown = set(conditions) - set(SAMPLE_CONDITION_FIELDS)
        if unknown:
            raise ValueError(f"unknown sample fields: {', '.join(sorted(unknown))}")
        if not name or not name.strip() or len(name) > 200:
            raise InputFileError([Problem("<form>", None, "name", "a sample name of 1 to 200 characters is required")])

        def work(session: Session) -> dict:
            if queries.find_sample(session, name.strip()) is not None:
                raise AlreadyExistsError(f"a sample named {name.strip()!r} already exists")
            sample = queries.get_or_create_sample(session, name.strip(), **conditions)
            queries.record_audit(session, "create-sample", f"sample {sample.name}", dict(conditions), actor=self.actor)
            return sample_summary(sample)

        return self.write(work)

    def sample_rows(self) -> list[dict]:
        """Every sample with its conditions and dataset names."""
        from sqlalchemy import select

        def work(session: Session) -> list[dict]:
            return [sample_summary(s) for s in session.scalars(select(Sample).order_by(Sample.name))]

        return self.read(work)

    def add_levels(self, dataset: str | int, records: Sequence[level_io.LevelRecord], *, source: str = "<form>") -> int:
        """Add validated levels to an existing measured or imported dataset (one transaction)."""
        return imports.add_levels(self, dataset, records, source=source)

    def preview_levels(self, content: bytes, source: str) -> tuple[list[level_io.LevelRecord], list[Problem]]:
        """Parse and validate an uploaded levels file without writing: (records, problems)."""
        return imports.preview_levels(content, source)

    # ------------------------------------------------------------- import
    def import_file(self, path: str | os.PathLike, **options) -> ImportReport:
        """Import a levels or lines file as a new dataset, all-or-nothing (:func:`.imports.import_file`)."""
        return imports.import_file(self, path, **options)

    def import_line_records(self, records: Sequence[level_io.LineRecord], **options) -> ImportReport:
        """Write validated measured lines as one new dataset (:func:`levels.service.imports.import_line_records`)."""
        return imports.import_line_records(self, records, **options)

    def import_dataset(self, level_records: Sequence[level_io.LevelRecord],
                       line_records: Sequence[level_io.LineRecord], **options) -> ImportReport:
        """One new dataset with levels and/or measured lines (:func:`levels.service.imports.import_dataset`)."""
        return imports.import_dataset(self, level_records, line_records, **options)

    def import_level_records(self, records: Sequence[level_io.LevelRecord], **options) -> ImportReport:
        """Write validated level records as one new dataset (:func:`levels.service.imports.import_level_records`)."""
        return imports.import_level_records(self, records, **options)

    # ------------------------------------------------------------- lab workflow
    def fit_limit(self, spectrum: str, patterns: Sequence[str], *, datasets: Sequence[str] | None = None,
                  n_defect_terms: int = 2, n_min: int | None = None, save: bool = True) -> dict:
        """Fit a series limit (extended Ritz formula); optionally store it as its own dataset."""
        from levels import lab

        spec = parse_spectrum(spectrum)
        if not patterns:
            raise PhysicsInputError("give at least one --series pattern, like 'ns 2S1/2'")

        def work(session: Session) -> dict:
            report = lab.fit_limit(session, spec, patterns, datasets=datasets, n_defect_terms=n_defect_terms,
                                   n_min=n_min)
            if save:
                species = queries.require_species(session, spec)
                name = f"series limit {species.name} A={species.mass_number}"
                lab.save_limit(session, species, report, self.actor, name)
                queries.record_audit(session, "fit-limit", f"dataset {name}",
                                     {"patterns": list(patterns), "limit_cm1": report["limit_cm1"]}, actor=self.actor)
                report["saved_as"] = name
            return report

        return self.write(work) if save else self.read(work)

    def optimize_levels(self, dataset: str | int, *, fix: str | None = None) -> dict:
        """Least-squares level energies from a dataset's measured lines (report only, nothing written)."""
        from levels import lab

        return self.read(lambda session: lab.optimize(session, dataset, fix_label=fix))

    def identify_peaks(self, spectra: Sequence[str], peaks_path, *, tolerance_nm: float,
                       content: bytes | None = None, source: str | None = None, max_candidates: int = 3,
                       window: str = "tolerance", n_sigma: float = 3.0) -> list[dict]:
        """Match a peaks file against the lines (engine) of one or more species (see :func:`levels.lab.identify`;
        ``delta_nm`` is peak - line)."""
        from levels import lab

        peaks = level_io.read_peaks_file(content if content is not None else peaks_path,
                                         source=source or (Path(peaks_path).name if peaks_path else None))
        widest_unc = max((p.unc_nm or 0.0) for p in peaks) if window == "uncertainty" else 0.0
        margin = 10 * tolerance_nm + 2 * n_sigma * widest_unc + 1.0
        lo = min(p.peak_nm for p in peaks) - margin
        hi = max(p.peak_nm for p in peaks) + margin
        candidates: list[dict] = []
        for spectrum in spectra:
            rows, _ = self.species_lines(LineQuery(spectrum=spectrum, from_nm=max(lo, 1e-3), to_nm=hi, medium="vacuum"),
                                         multipoles=("E1", "M1", "E2"))
            rows_air, _ = self.species_lines(LineQuery(spectrum=spectrum, from_nm=max(lo, 1e-3), to_nm=hi,
                                                       medium="air"), multipoles=("E1", "M1", "E2"))
            seen = {(r["lower_id"], r["upper_id"], r["multipole"]) for r in rows}
            candidates.extend(rows)
            candidates.extend(r for r in rows_air if (r["lower_id"], r["upper_id"], r["multipole"]) not in seen)
        return lab.identify(peaks, candidates, tolerance_nm=tolerance_nm, max_candidates=max_candidates,
                            window=window, n_sigma=n_sigma)

    def emission(self, spectrum: str, *, te_k: float, ne_m3: float, tgas_k: float = 300.0,
                 from_nm: float | None = None, to_nm: float | None = None, medium: str = "air",
                 instrument_fwhm_nm: float = 0.0, path_length_m: float | None = None,
                 element_density_m3: float | None = None, cutoff_method: str = "debye",
                 datasets: Sequence[str] | None = None, grid_points: int | None = None, **model_options):
        """Relative line intensities, synthetic spectrum and lamp metrics of a discharge (see levels.emission).

        ``model_options`` go to :func:`levels.emission.compute_emission`: ``model`` ("lte" or "cr"),
        ``loss_rate_per_s``, ``geometry``, ``broadening``, ``perturber``, ``pressure_pa``,
        ``cool_layer_m``, ``forbidden_omega``.
        """
        from levels import emission

        emission.check_conditions(te_k, ne_m3, tgas_k)
        if from_nm is not None and to_nm is not None and from_nm >= to_nm:
            raise PhysicsInputError(f"empty window: from {from_nm:g} nm is not below to {to_nm:g} nm")
        if medium not in ("air", "vacuum"):
            raise PhysicsInputError(f"medium must be 'vacuum' or 'air', not {medium!r}")
        spec = parse_spectrum(spectrum)
        rows, info = self.species_lines(LineQuery(spectrum=spectrum, datasets=tuple(datasets) if datasets else None))

        def work(session: Session):
            species = queries.require_species(session, spec)
            chosen = queries.visible_datasets(session, datasets)
            levels = queries.levels_by_precedence(session, species, chosen)
            limit = queries.ionization_limit(session, species, chosen)
            next_ion = None
            if species.charge + 1 < species.z:
                nxt = queries.find_species(session, Spectrum(species.z, species.charge + 1, species.mass_number))
                if nxt is not None:
                    next_ion = queries.levels_by_precedence(session, nxt, chosen)
            return species, levels, limit, next_ion

        species, levels, limit, next_ion = self.read(work)
        result = emission.compute_emission(
            spectrum_name=species.name, z=species.z, charge=species.charge, mass_number=species.mass_number,
            levels=levels, lines=rows, ionization_cm1=limit.energy_cm1 if limit else None, next_ion_levels=next_ion,
            te_k=te_k, ne_m3=ne_m3, tgas_k=tgas_k, window=(from_nm, to_nm), medium=medium,
            instrument_fwhm_nm=instrument_fwhm_nm, path_length_m=path_length_m,
            element_density_m3=element_density_m3, cutoff_method=cutoff_method, grid_points=grid_points,
            **model_options)
        used = {row["dataset"] for row in result.lines}
        result.conditions["datasets"] = [name for name in info["datasets"] if name in used]
        return result

def _check_line_query(query: LineQuery) -> None:
    if query.medium not in ("vacuum", "air"):
        raise PhysicsInputError(f"medium must be 'vacuum' or 'air', not {query.medium!r}")
    for name in ("from_nm", "to_nm", "min_a", "max_upper_cm1"):
        value = getattr(query, name)
        if value is not None and not math.isfinite(value):
            raise PhysicsInputError(f"{name} must be a finite number")
    for name in ("from_nm", "to_nm"):
        value = getattr(query, name)
        if value is not None and value <= 0:
            raise PhysicsInputError(f"{name} must be a positive wavelength, got {value:g} nm")
    if query.from_nm is not None and query.to_nm is not None and query.from_nm > query.to_nm:
        raise PhysicsInputError(f"empty window: from {query.from_nm:g} nm is above to {query.to_nm:g} nm")
    if query.multipoles:
        unknown = [m for m in query.multipoles if m not in MULTIPOLE_CODES]
        if unknown:
            raise PhysicsInputError(f"unknown multipole {unknown[0]!r}; use {', '.join(MULTIPOLE_CODES)}")
    if query.order not in queries.LINE_ORDERS:
        raise PhysicsInputError(f"order must be one of {', '.join(queries.LINE_ORDERS)}")
    if query.limit is not None and query.limit < 0 or query.offset < 0:
        raise PhysicsInputError("limit and offset must not be negative")


def _vacuum_window(query: LineQuery, air_formula: str) -> tuple[float, float]:
    """The query window as vacuum wavenumbers (cm-1): (min, max)."""
    from levels.physics.lines import air
    lo, hi = query.from_nm, query.to_nm
    if query.medium == "air":
        # air wavelengths exist above 200 nm only; below, the window is in vacuum by convention
        if lo is not None and lo > 200.0:
            lo = float(air.air_to_vacuum(lo, air_formula))
        if hi is not None and hi > 200.0:
            hi = float(air.air_to_vacuum(hi, air_formula))
    max_sigma = 1e7 / lo if lo else math.inf
    min_sigma = 1e7 / hi if hi else 0.0
    return min_sigma, max_sigma


def engine_rows(spectrum: str, levels: Sequence[Level], stored: Sequence, dataset_names: Mapping[int, str], *,
                multipoles: Sequence[str], window: tuple[float, float], max_upper_cm1: float | None,
                air_formula: str) -> list[dict]:
    """Rows of the engine's lines, with stored rates merged (see :meth:`Catalog.species_lines`)."""
    from levels.physics.lines.combination import build_lines

    resolved = [lv for lv in levels if lv.two_j is not None]
    index = {lv.id: i for i, lv in enumerate(resolved)}
    # several stored lines of one pair (a measured line, its derived Ritz line, computed rates): the one
    # with rates wins, then the dataset first in precedence
    rank = {dataset_id: i for i, dataset_id in enumerate(dataset_names)}
    by_pair: dict[tuple, object] = {}
    for ln in sorted(stored, key=lambda ln: (ln.a_per_s is None, rank.get(ln.dataset_id, len(rank)), ln.id),
                     reverse=True):
        by_pair[(ln.lower_id, ln.upper_id, ln.multipole)] = ln
    observed_by_pair: dict[tuple, object] = {}
    for ln in sorted(stored, key=lambda ln: (rank.get(ln.dataset_id, len(rank)), ln.id), reverse=True):
        if ln.observed_nm is not None:
            observed_by_pair[(ln.lower_id, ln.upper_id, ln.multipole)] = ln
    rows: list[dict] = []
    seen: set[tuple] = set()
    if resolved:
        lines = build_lines(
            np.array([lv.energy_cm1 for lv in resolved]),
            np.array([np.nan if lv.unc_cm1 is None else lv.unc_cm1 for lv in resolved]),
            np.array([lv.two_j for lv in resolved]), np.array([lv.parity for lv in resolved]),
            multipoles=multipoles, two_s=np.array([-1 if lv.multiplicity is None else lv.multiplicity - 1
                                                   for lv in resolved]),
            min_wavenumber_cm1=window[0], max_wavenumber_cm1=window[1],
            max_upper_cm1=math.inf if max_upper_cm1 is None else max_upper_cm1, air_formula=air_formula)
        for k in range(len(lines)):
            lo, up = resolved[int(lines.lower[k])], resolved[int(lines.upper[k])]
            multipole = str(lines.multipole[k])
            known = by_pair.get((lo.id, up.id, multipole))
            seen.add((lo.id, up.id, multipole))
            rows.append(_engine_row(spectrum, lo, up, multipole, float(lines.wavenumber_cm1[k]),
                                    float(lines.vacuum_nm[k]), float(lines.air_nm[k]), float(lines.unc_nm[k]),
                                    known, dataset_names, bool(lines.intercombination[k])))
            obs = observed_by_pair.get((lo.id, up.id, multipole))
            if obs is not None:
                rows[-1]["obs_vacuum_nm"], rows[-1]["obs_air_nm"] = obs.vacuum_nm, obs.air_nm
                rows[-1]["note"] = "; ".join(filter(None, [rows[-1]["note"], "Ritz wavelengths; observed in obs_nm"]))
    del index
    level_by_id = {lv.id: lv for lv in levels}
    for ln in stored:
        key = (ln.lower_id, ln.upper_id, ln.multipole)
        if key in seen or ln.multipole not in multipoles:
            continue
        sigma = ln.wavenumber_cm1
        if not window[0] <= sigma <= window[1]:
            continue
        lo, up = level_by_id[ln.lower_id], level_by_id[ln.upper_id]
        if max_upper_cm1 is not None and up.energy_cm1 > max_upper_cm1:
            continue
        rows.append(_engine_row(spectrum, lo, up, ln.multipole, sigma, ln.vacuum_nm,
                                math.nan if ln.air_nm is None else ln.air_nm,
                                math.nan if ln.unc_nm is None else ln.unc_nm, ln, dataset_names, False))
    return rows


def add_ritz_columns(rows: Sequence[dict], medium: str, *, air_formula: str = "iau2000") -> Sequence[dict]:
    """Fill :data:`RITZ_COLUMNS` (``obs_nm``, ``ritz_nm``, ``obs_minus_ritz_nm``) and ``line_name`` of line
    rows, in place (``line_name``: :func:`levels.notation.hydrogen_line_name`, None but for H I, D I, T I).

    The Ritz wavelength follows from the two levels (vacuum 1e7 / (E_upper - E_lower) nm, in air by
    ``air_formula`` above 200 nm); the observed one is a measured line's own wavelength (a stored row
    with ``observed_nm``) or, for an engine row, that of the stored measured line of the same pair.
    Both are given in ``medium`` (air above 200 nm when ``medium`` is "air", else vacuum).

    Parameters
    ----------
    rows : sequence of dict
        Line rows (``Catalog.line_rows`` or ``Catalog.species_lines``).
    medium : {"air", "vacuum"}
        Medium of the listing.
    air_formula : str
        Refractive index of air for Ritz values computed here.

    Returns
    -------
    The same rows.

    Examples
    --------
    >>> row = dict(lower_cm1=0.0, upper_cm1=20000.0, vacuum_nm=500.01, air_nm=None, observed_nm=500.01)
    >>> r = add_ritz_columns([row], "vacuum")[0]
    >>> r["ritz_nm"], round(r["obs_minus_ritz_nm"], 6)
    (500.0, 0.01)
    """
    from levels.physics.lines import air
    want_air = medium == "air"
    for row in rows:
        obs_vac, obs_air = row.get("obs_vacuum_nm"), row.get("obs_air_nm")
        if obs_vac is None and row.get("observed_nm") is not None:
            obs_vac, obs_air = row["vacuum_nm"], row["air_nm"]
        lo, up = row.get("lower_cm1"), row.get("upper_cm1")
        if obs_vac is None:
            ritz_vac, ritz_air = row["vacuum_nm"], row["air_nm"]
        elif lo is not None and up is not None and up > lo:
            ritz_vac = 1e7 / (up - lo)
            ritz_air = float(air.vacuum_to_air(ritz_vac, air_formula)) if ritz_vac > 200 else None
        else:
            ritz_vac = ritz_air = None
        use_air = want_air and (ritz_air if obs_vac is None else obs_air) is not None
        ritz = ritz_air if use_air else ritz_vac
        obs = (obs_air if use_air else obs_vac) if obs_vac is not None else None
        row["ritz_nm"] = ritz
        row["obs_nm"] = obs
        row["obs_minus_ritz_nm"] = obs - ritz if obs is not None and ritz is not None else None
        row["line_name"] = hydrogen_line_name(row["spectrum"], principal_number(row["lower"]),
                                              principal_number(row["upper"])) if "spectrum" in row else None
    return rows


def _engine_row(spectrum, lo, up, multipole, sigma, vacuum, air_nm, unc_nm, known, dataset_names, inter) -> dict:
    notes = []
    if inter:
        notes.append("intercombination")
    if known is None:
        notes.append("rates unknown")
    return {
        "spectrum": spectrum, "lower": lo.label, "upper": up.label, "lower_cm1": lo.energy_cm1,
        "upper_cm1": up.energy_cm1, "wavenumber_cm1": sigma, "vacuum_nm": vacuum,
        "air_nm": None if not math.isfinite(air_nm) else air_nm, "multipole": multipole,
        "a_per_s": known.a_per_s if known is not None else None,
        "f_abs": known.f_abs if known is not None else None,
        "line_strength_au": known.line_strength_au if known is not None else None,
        "g_lower": lo.g, "g_upper": up.g, "unc_nm": None if not math.isfinite(unc_nm) else unc_nm,
        "dataset": dataset_names.get(known.dataset_id if known is not None else up.dataset_id, ""),
        "note": "; ".join(notes), "lower_id": lo.id, "upper_id": up.id,
        "lower_lifetime_s": lo.lifetime_s, "upper_lifetime_s": up.lifetime_s,
    }


def _sort_rows(rows: list[dict], order: str) -> list[dict]:
    if order == "wavelength":
        return sorted(rows, key=lambda r: r["vacuum_nm"])
    if order == "-wavelength":
        return sorted(rows, key=lambda r: -r["vacuum_nm"])
    field_name = "line_strength_au" if order == "strength" else "a_per_s"
    return sorted(rows, key=lambda r: (r[field_name] is None, -(r[field_name] or 0.0), r["vacuum_nm"]))


def _hydrogenic_level_rows(model) -> list[dict]:
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
            "parity": -1 if odd[i] else 1, "energy_cm1": float(model.energy_cm1[i]), "unc_cm1": None,
            "multiplicity": 2, "big_l": l, "n": n, "l": l,
            "lifetime_s": float(model.lifetime_s[i]) if np.isfinite(model.lifetime_s[i]) else None,
            "lande_g": float(model.lande_g[i]) if np.isfinite(model.lande_g[i]) else None,
        })
    return rows


def _hydrogenic_line_columns(dataset_id: int, species_id: int, level_ids: np.ndarray, lines: dict) -> dict:
    """Column arrays of the computed lines, ready for :func:`queries.insert_line_columns`."""
    count = len(lines["upper"])
    air = np.asarray(lines["air_nm"], dtype=float)
    return {
        "dataset_id": np.full(count, dataset_id), "species_id": np.full(count, species_id),
        "lower_id": level_ids[lines["lower"]], "upper_id": level_ids[lines["upper"]],
        "multipole": np.full(count, "E1", dtype=object), "wavenumber_cm1": lines["wavenumber_cm1"],
        "vacuum_nm": lines["vacuum_nm"], "air_nm": np.where(np.isfinite(air), air, np.nan),
        "a_per_s": lines["a_per_s"], "f_abs": lines["f_abs"], "line_strength_au": lines["S"],
        "unc_nm": np.full(count, np.nan),
    }


def sample_summary(sample: Sample) -> dict:
    """A sample as a mapping with its conditions and dataset names."""
    out = {"id": sample.id, "name": sample.name}
    for name in SAMPLE_CONDITION_FIELDS:
        out[name] = getattr(sample, name)
    out["created_at"] = sample.created_at.isoformat() if sample.created_at else None
    out["datasets"] = [d.name for d in sample.datasets]
    return out


def dataset_summary(session: Session, ds: Dataset) -> dict:
    """A dataset as a mapping (for reports and the API)."""
    from sqlalchemy import func, select

    from levels.store.schema import Line

    return {
        "id": ds.id, "name": ds.name, "kind": ds.kind, "method": ds.method, "method_version": ds.method_version,
        "citation": ds.citation, "author": ds.author, "description": ds.description,
        "options": json.loads(ds.options_json or "{}"), "created_at": ds.created_at.isoformat(),
        "sample": ds.sample.name if ds.sample else None, "retracted": bool(ds.retracted),
        "levels": session.scalar(select(func.count()).select_from(Level).where(Level.dataset_id == ds.id)),
        "lines": session.scalar(select(func.count()).select_from(Line).where(Line.dataset_id == ds.id)),
    }


def level_row(spectrum_name: str, level: Level, dataset_name: str) -> dict:
    """A level as a row of the level contract (LEVEL_COLUMNS)."""
    return {
        "spectrum": spectrum_name, "label": level.label, "configuration": level.configuration,
        "term": level.term, "j": "" if level.two_j is None else format_j(level.two_j), "parity": level.parity,
        "energy_cm1": level.energy_cm1, "unc_cm1": level.unc_cm1, "g": level.g,
        "n": level.n, "l": level.l, "lifetime_s": level.lifetime_s, "lande_g": level.lande_g,
        "dataset": dataset_name,
    }


def _missing_sqlite_file(url: str) -> str | None:
    """The path of a SQLite store file that does not exist (None for other stores or an existing file)."""
    from sqlalchemy.engine import make_url

    parsed = make_url(url)
    name = parsed.database
    if parsed.get_backend_name() != "sqlite" or name in (None, "", ":memory:") or name.startswith("file:"):
        return None
    return None if Path(name).exists() else name
