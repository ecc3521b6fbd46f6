"""The service layer: what the CLI and the web site ask of the store.

One :class:`Catalog` wraps one store. Its methods are units of work ("import
this file as a new measured dataset", "list the species", "give the levels of
a species under this precedence"); each write runs in one transaction with its
audit entry. Neither the CLI nor the web site talks to SQL or to each other.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
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
    ReservedNameError,
    StoreError,
)
from levels.io import records as level_io
from levels.io.tables import read_delimited
from levels.notation import Spectrum, format_j, hydrogen_line_name, parse_spectrum, principal_number
from levels.store import database, queries
from levels.store.schema import Dataset, IonizationLimit, Level, Sample, Species

SPECIES_COLUMNS = ("spectrum", "z", "charge", "mass_number", "levels", "lines", "ionization_cm1",
                   "ionization_unc_cm1", "datasets")
LEVEL_COLUMNS = level_io.LEVEL_COLUMNS
LEVEL_UNITS = {"energy_cm1": "cm-1", "unc_cm1": "cm-1", "lifetime_s": "s"}
LINE_COLUMNS = ("spectrum", "lower", "upper", "lower_cm1", "upper_cm1", "wavenumber_cm1", "vacuum_nm", "air_nm",
                "multipole", "a_per_s", "f_abs", "line_strength_au", "g_lower", "g_upper", "unc_nm", "dataset")
EMISSION_COLUMNS = LINE_COLUMNS + ("rel_intensity", "photon_share")
#: trailing columns of a line list (after LINE_COLUMNS): the observed wavelength of a measured line, the
#: Ritz wavelength from its two levels, and observed - Ritz; all in the listing's medium (air above 200 nm
#: when the medium is air, else vacuum), empty where the line has no observed wavelength
RITZ_COLUMNS = ("obs_nm", "ritz_nm", "obs_minus_ritz_nm")
#: and the customary name of a hydrogen line (H I, D I, T I: "Hα", "Lyβ"; empty otherwise)
LINE_LIST_COLUMNS = LINE_COLUMNS + RITZ_COLUMNS + ("line_name",)
LINE_UNITS = {"lower_cm1": "cm-1", "upper_cm1": "cm-1", "wavenumber_cm1": "cm-1", "vacuum_nm": "nm", "air_nm": "nm",
              "a_per_s": "s-1", "line_strength_au": "e2 a0^2", "unc_nm": "nm", "obs_nm": "nm", "ritz_nm": "nm",
              "obs_minus_ritz_nm": "nm"}
LINE_HEADINGS = {"lower_cm1": "lower [cm-1]", "upper_cm1": "upper [cm-1]", "wavenumber_cm1": "σ [cm-1]",
                 "vacuum_nm": "λ vac [nm]", "air_nm": "λ air [nm]", "a_per_s": "A [s-1]", "f_abs": "f",
                 "line_strength_au": "S [au]", "unc_nm": "unc [nm]", "obs_nm": "observed [nm]",
                 "ritz_nm": "Ritz [nm]", "obs_minus_ritz_nm": "obs - Ritz [nm]", "line_name": "name"}
MULTIPOLE_CODES = ("E1", "M1", "E2", "M2", "E3", "2E1")
#: default refusal limit of a computed dataset's rows (2 GB)
DEFAULT_MAX_STORE_BYTES = 2_000_000_000
SAMPLE_CONDITION_FIELDS = ("description", "gas_fill", "pressure_pa", "current_a", "instrument", "te_k", "ne_m3",
                           "tgas_k", "path_length_m")


@dataclass(frozen=True)
class LineQuery:
    """A line-list request: species (None = all), window, medium, filters, order and page."""

    spectrum: str | None = None
    from_nm: float | None = None
    to_nm: float | None = None
    medium: str = "vacuum"
    multipoles: tuple[str, ...] | None = None
    min_a: float | None = None
    max_upper_cm1: float | None = None
    datasets: tuple[str, ...] | None = None
    order: str = "wavelength"
    limit: int | None = None
    offset: int = 0

    def describe(self) -> str:
        """The query in words for export headers."""
        parts = [f"lines {self.spectrum or '(all species)'}"]
        if self.from_nm is not None or self.to_nm is not None:
            upper = "inf" if self.to_nm is None else f"{self.to_nm:.10g}"
            parts.append(f"window {self.from_nm or 0:.10g}-{upper} nm {self.medium}")
        if self.multipoles:
            parts.append("multipoles " + ",".join(self.multipoles))
        if self.min_a is not None:
            parts.append(f"A >= {self.min_a:g} s-1")
        if self.max_upper_cm1 is not None:
            parts.append(f"upper <= {self.max_upper_cm1:g} cm-1")
        parts.append(f"order {self.order}")
        return "; ".join(parts)


@dataclass
class ImportReport:
    """What an import wrote."""

    source: str
    kind: str
    dataset: str
    dataset_id: int
    sample: str | None
    species: list[str]
    levels: int = 0
    lines: int = 0
    warnings: list[str] = field(default_factory=list)


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
            count = _store_derived_lines(session, species, self.actor)
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
                _store_derived_lines(session, species, self.actor)
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

        def work(session: Session) -> int:
            ds = queries.require_dataset(session, dataset)
            if ds.kind == "computed":
                raise PhysicsInputError(f"dataset {ds.name!r} is computed; add measured levels to a measured dataset")
            species_ids, n_levels = _insert_level_records(session, records, ds.id)
            _rebuild_derived_lines(session, species_ids, self.actor, source=source)
            queries.record_audit(session, "add-levels", f"dataset {ds.name}", {"source": source, "levels": n_levels},
                                 actor=self.actor)
            return n_levels

        return self.write(work)

    def preview_levels(self, content: bytes, source: str) -> tuple[list[level_io.LevelRecord], list[Problem]]:
        """Parse and validate an uploaded levels file without writing: (records, problems)."""
        try:
            table = read_delimited(content, source=source)
            records = level_io.validate_levels(
                _checked_columns(table, level_io.LEVEL_COLUMNS, level_io.LEVEL_REQUIRED), source=source)
        except InputFileError as exc:
            return [], exc.problems
        return records, []

    # ------------------------------------------------------------- import
    def import_file(self, path: str | os.PathLike, *, sample: str | None = None, dataset: str | None = None,
                    kind: str = "measured", citation: str = "", description: str = "",
                    sample_conditions: Mapping[str, object] | None = None,
                    content: bytes | None = None, source: str | None = None,
                    allow_off_ritz: str | None = None, max_derived_lines: int | None = None,
                    again: bool = False) -> ImportReport:
        """Import a levels file as a new dataset, all-or-nothing.

        The whole file is validated first; any problem raises
        :class:`~levels.errors.InputFileError` and nothing is written. Then the
        dataset, its sample (created if new), the species, the levels and an audit
        entry are written in one transaction.

        Parameters
        ----------
        allow_off_ritz : str, optional
            For a lines file: why lines off their levels' Ritz wavenumbers are accepted
            (recorded in the dataset's options and the audit log); without it they are refused.
        max_derived_lines : int, optional
            Most derived lines one species may imply (default :func:`default_max_derived_lines`).
        again : bool
            Import a file whose content (header and rows; comments and blank lines aside) is
            already in the store once more under an automatic name; without it (and without an
            explicit ``dataset`` name, which imports the copy with a warning) such a file is refused
            (:class:`~levels.errors.AlreadyExistsError` naming the dataset that holds it).
        """
        name = source or Path(path).name
        raw = content if content is not None else path
        table = read_delimited(raw, source=name)
        digest = table_content_sha256(table)
        kind_of_file = detect_file_kind(table.columns, name, table.header_line)
        if kind_of_file == "lines":
            line_records = level_io.validate_lines(
                _checked_columns(table, level_io.LINE_FILE_COLUMNS, level_io.LINE_FILE_REQUIRED), source=name)
            del table
            return self.import_line_records(line_records, source=name, sample=sample, dataset=dataset, kind=kind,
                                            citation=citation, description=description,
                                            sample_conditions=sample_conditions, allow_off_ritz=allow_off_ritz,
                                            max_derived_lines=max_derived_lines, content_sha256=digest, again=again)
        records = level_io.validate_levels(
            _checked_columns(table, level_io.LEVEL_COLUMNS, level_io.LEVEL_REQUIRED),
            source=name, default_dataset=dataset)
        del table  # the raw rows (about half a kilobyte per level) are not needed for the write
        return self.import_level_records(records, source=name, sample=sample, kind=kind, citation=citation,
                                         description=description, sample_conditions=sample_conditions,
                                         max_derived_lines=max_derived_lines, content_sha256=digest, again=again)

    def import_line_records(self, records: Sequence[level_io.LineRecord], *, source: str, sample: str | None = None,
                            dataset: str | None = None, kind: str = "measured", citation: str = "",
                            description: str = "", sample_conditions: Mapping[str, object] | None = None,
                            air_formula: str = "iau2000", allow_off_ritz: str | None = None,
                            max_derived_lines: int | None = None, content_sha256: str | None = None,
                            again: bool = False) -> ImportReport:
        """Write validated measured lines as one new dataset; labels resolve to stored levels.

        Each line is checked against its levels (selection rules of its multipole, Ritz
        wavenumber; see :func:`levels.lab.store_measured_lines`); ``allow_off_ritz`` gives the
        reason to accept lines off their Ritz wavenumbers, kept in the dataset's options.
        """
        from levels import lab

        if not records:
            raise InputFileError([Problem(source, None, None, "no lines to import")])

        if dataset:
            _refuse_reserved(dataset, source, None, "dataset")
        warnings: list[str] = []

        def work(session: Session) -> ImportReport:
            _refuse_same_content(session, content_sha256, again, source, warnings, named=bool(dataset))
            name = dataset or _free_dataset_name(session, source, sample, kind, warnings)
            sample_row = None
            if sample:
                sample_row = queries.get_or_create_sample(session, sample, **dict(sample_conditions or {}))
            ds = queries.create_dataset(session, name=name, kind=kind, citation=citation, author=self.actor,
                                        description=description or f"lines imported from {source}",
                                        method="file import", sample=sample_row,
                                        options={"air_formula": air_formula}, content_sha256=content_sha256)
            checked: dict = {}
            count = lab.store_measured_lines(session, records, ds.id, source, air_formula,
                                             allow_off_ritz=allow_off_ritz, report=checked)
            _record_off_ritz(ds, allow_off_ritz, checked, warnings, source)
            derived = _rebuild_derived_lines(session, {r.spectrum for r in records}, self.actor,
                                             max_lines=max_derived_lines, source=source)
            names = sorted({r.spectrum.name for r in records})
            queries.record_audit(session, "import-lines", f"dataset {ds.name}",
                                 {"source": source, "lines": count, "species": names, "sample": sample,
                                  "derived_lines": derived, "off_ritz": checked.get("off_ritz", 0),
                                  "allow_off_ritz": allow_off_ritz}, actor=self.actor)
            return ImportReport(source=source, kind=kind, dataset=ds.name, dataset_id=ds.id, sample=sample,
                                species=names, lines=count, warnings=list(warnings))

        return self.write(work)

    def import_dataset(self, level_records: Sequence[level_io.LevelRecord],
                       line_records: Sequence[level_io.LineRecord], *, name: str, source: str,
                       sample: str | None = None, kind: str = "measured", citation: str = "",
                       description: str = "", air_formula: str = "iau2000",
                       line_source: str | None = None, allow_off_ritz: str | None = None,
                       max_derived_lines: int | None = None, method: str = "file import") -> ImportReport:
        """One new dataset with levels and/or measured lines, in one transaction.

        ``method`` says how the data came in (``"file import"``; the JSON API records its own).

        Line labels resolve against the store's levels with the new levels first
        (the new dataset is the newest measured one), so a body may carry a
        sample's levels and the lines between them together.
        """
        from levels import lab

        if not level_records and not line_records:
            raise InputFileError([Problem(source, None, None, "a dataset needs levels or lines")])
        if kind not in ("measured", "imported"):
            raise ValueError("imports make measured or imported datasets")
        _refuse_reserved(name, source, None, "name")

        def work(session: Session) -> ImportReport:
            sample_row = queries.get_or_create_sample(session, sample) if sample else None
            ds = queries.create_dataset(session, name=name, kind=kind, citation=citation, author=self.actor,
                                        description=description or f"imported from {source}", method=method,
                                        sample=sample_row, options={"air_formula": air_formula})
            species_ids, n_levels = _insert_level_records(session, level_records, ds.id)
            checked: dict = {}
            count = (lab.store_measured_lines(session, line_records, ds.id, line_source or source, air_formula,
                                              allow_off_ritz=allow_off_ritz, report=checked)
                     if line_records else 0)
            _record_off_ritz(ds, allow_off_ritz, checked, [], source)
            spectra = set(species_ids) | {r.spectrum for r in line_records}
            derived = _rebuild_derived_lines(session, spectra, self.actor, max_lines=max_derived_lines, source=source)
            names = sorted({r.spectrum.name for r in level_records} | {r.spectrum.name for r in line_records})
            queries.record_audit(session, "import-dataset", f"dataset {ds.name}",
                                 {"source": source, "levels": n_levels, "lines": count, "species": names,
                                  "sample": sample, "derived_lines": derived}, actor=self.actor)
            return ImportReport(source=source, kind=kind, dataset=ds.name, dataset_id=ds.id, sample=sample,
                                species=names, levels=n_levels, lines=count)

        return self.write(work)

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

    def import_level_records(self, records: Sequence[level_io.LevelRecord], *, source: str,
                             sample: str | None = None, kind: str = "measured", citation: str = "",
                             description: str = "",
                             sample_conditions: Mapping[str, object] | None = None,
                             max_derived_lines: int | None = None, content_sha256: str | None = None,
                             again: bool = False) -> ImportReport:
        """Write validated level records as one new dataset (one transaction)."""
        if kind not in ("measured", "imported"):
            raise ValueError("imports make measured or imported datasets")
        if not records:
            raise InputFileError([Problem(source, None, None, "no levels to import")])
        explicit_name = records[0].dataset
        if explicit_name:
            _refuse_reserved(explicit_name, source, records[0].line, "dataset")
        _precheck_derived_lines(records, source, max_derived_lines)
        warnings: list[str] = []

        def work(session: Session) -> ImportReport:
            _refuse_same_content(session, content_sha256, again, source, warnings, named=bool(explicit_name))
            dataset_name = explicit_name or _free_dataset_name(session, source, sample, kind, warnings)
            sample_row = None
            if sample:
                sample_row = queries.get_or_create_sample(session, sample, **dict(sample_conditions or {}))
            ds = queries.create_dataset(session, name=dataset_name, kind=kind, citation=citation,
                                        author=self.actor, description=description or f"imported from {source}",
                                        method="file import", sample=sample_row, content_sha256=content_sha256)
            species_ids, n_levels = _insert_level_records(session, records, ds.id)
            derived = sum(_rebuild_derived_lines(session, species_ids, self.actor, max_lines=max_derived_lines,
                                                 source=source).values())
            names = sorted({s.name for s in species_ids})
            queries.record_audit(session, "import-levels", f"dataset {ds.name}",
                                 {"source": source, "levels": n_levels, "species": names,
                                  "sample": sample}, actor=self.actor)
            return ImportReport(source=source, kind=kind, dataset=ds.name, dataset_id=ds.id, sample=sample,
                                species=names, levels=n_levels, lines=derived, warnings=list(warnings))

        return self.write(work)


DERIVED_METHOD = "ritz-combination"
DERIVED_ROLE = "derived-lines"


def derived_dataset_name(spectrum_name: str, mass_number: int) -> str:
    """Name of the dataset holding a species' lines derived from its levels."""
    return f"derived lines {spectrum_name} A={mass_number}"


def _insert_level_records(session: Session, records: Sequence[level_io.LevelRecord],
                          dataset_id: int, block: int = 20_000) -> tuple[dict[Spectrum, int], int]:
    """Insert validated levels into a dataset (species created as needed); return species ids and the count.

    Rows are built and sent to the driver a block at a time, so a file of 10^6 levels never
    holds 10^6 row dicts besides its records.
    """
    species_ids: dict[Spectrum, int] = {}
    for start in range(0, len(records), block):
        rows = []
        for rec in records[start:start + block]:
            if rec.spectrum not in species_ids:
                species_ids[rec.spectrum] = queries.get_or_create_species(session, rec.spectrum).id
            rows.append(_level_insert_row(rec, dataset_id, species_ids[rec.spectrum]))
        queries.insert_full_rows(session, Level, rows)
    session.flush()
    return species_ids, len(records)


def rebuild_derived_lines(session: Session, spectra: Iterable[Spectrum], actor: str) -> dict[str, int]:
    """Rebuild the derived lines of the stored species among ``spectra`` in the caller's transaction."""
    return _rebuild_derived_lines(session, spectra, actor)


def _rebuild_derived_lines(session: Session, spectra: Iterable[Spectrum], actor: str, *,
                           max_lines: int | None = None, source: str | None = None) -> dict[str, int]:
    """Rebuild the derived lines of each stored species among ``spectra`` (sorted, so locks come in one order)."""
    counts: dict[str, int] = {}
    for spec in sorted(set(spectra), key=lambda sp: (sp.z, sp.charge, sp.mass_number or 0)):
        species = queries.find_species(session, spec)
        if species is not None:
            counts[species.name] = _store_derived_lines(session, species, actor, max_lines=max_lines, source=source)
    return counts


#: lines computed, converted and inserted per block by the derived-line rebuild
DERIVED_BLOCK = 20_000
#: default most derived lines one species may imply (``levels import --max-derived-lines``,
#: or the environment variable ``LEVELS_MAX_DERIVED_LINES``); about 2.5 GB of SQLite store
#: (~250 bytes per stored line with its indexes) and several minutes of writing at the limit
DEFAULT_MAX_DERIVED_LINES = 10_000_000
MAX_DERIVED_ENV = "LEVELS_MAX_DERIVED_LINES"
RITZ_NOTE = "Ritz value of a pair with an observed line"


def default_max_derived_lines() -> int:
    """The limit of derived lines per species: ``LEVELS_MAX_DERIVED_LINES`` if set, else the default."""
    value = os.environ.get(MAX_DERIVED_ENV, "").strip()
    if not value:
        return DEFAULT_MAX_DERIVED_LINES
    try:
        number = int(float(value))
    except ValueError:
        raise PhysicsInputError(f"{MAX_DERIVED_ENV}={value!r} is not a whole number of lines") from None
    if number < 0:
        raise PhysicsInputError(f"{MAX_DERIVED_ENV} must not be negative, got {number}")
    return number


def _store_derived_lines(session: Session, species: Species, actor: str, *, max_lines: int | None = None,
                         source: str | None = None) -> int:
    """Replace the species' derived dataset with the E1 lines its levels imply (Ritz values).

    Runs inside the caller's transaction, so an import and its lines land together. The
    dataset is found by role and species (never by name). A pair that a *computed* dataset
    already stores (hydrogenic or rates lines) is not derived again; a pair with a
    *measured* line keeps its Ritz line beside the observed one, noted :data:`RITZ_NOTE`.

    Memory is bounded by design: levels come as numpy columns (:func:`queries.level_columns`),
    pairs are generated, converted and inserted in blocks of :data:`DERIVED_BLOCK` lines
    (:func:`levels.physics.lines.combination.iter_line_blocks`, one driver executemany per block),
    so the peak is one block (about 0.8 kB per line while the driver's tuples exist, ~16 MB
    for 20,000 lines) plus the level columns (~40 bytes per level), one row of pair indices
    (16 bytes per level) and the stored pair keys (8 bytes per stored line), whatever the
    number of lines. ``tests/bench/bench_memory.py`` measures it.

    Raises
    ------
    TooLargeError
        The levels imply more lines than ``max_lines`` (default :func:`default_max_derived_lines`);
        the message names ``source`` and the option that raises the limit.
    """
    from sqlalchemy import select

    from levels.errors import TooLargeError
    from levels.physics.lines import selection
    from levels.physics.lines.combination import iter_line_blocks

    # one writer per species at a time rebuilds its derived lines (row lock on PostgreSQL;
    # SQLite write transactions are serialised already)
    session.execute(select(Species.id).where(Species.id == species.id).with_for_update(key_share=True))
    old = queries.find_computed_dataset(session, species.id, DERIVED_ROLE)
    if old is not None:
        queries.delete_dataset(session, old)
    chosen = [d.id for d in queries.visible_datasets(session) if d.role != DERIVED_ROLE]
    levels = queries.level_columns(session, species.id, chosen)
    if levels["id"].size < 2:
        return 0
    limit = default_max_derived_lines() if max_lines is None else max_lines
    bound = selection.count_candidate_pairs(levels["two_j"], levels["parity"], ("E1",))
    if bound > limit:
        raise TooLargeError(_too_many_lines(source, int(levels["id"].size), species.name, bound, limit))
    computed = queries.stored_pair_keys(session, species.id, chosen, "E1", observed=False)
    observed = queries.stored_pair_keys(session, species.id, chosen, "E1", observed=True)
    ids = levels["id"]
    ds = None
    count = 0
    for block in iter_line_blocks(levels["energy_cm1"], levels["unc_cm1"], levels["two_j"], levels["parity"],
                                  block=DERIVED_BLOCK):
        lower_ids, upper_ids = ids[block.lower], ids[block.upper]
        keys = queries.pair_keys(lower_ids, upper_ids)
        keep = ~_sorted_member(keys, computed)
        n = int(keep.sum())
        if n == 0:
            continue
        if ds is None:
            ds = queries.create_dataset(
                session, name=derived_dataset_name(species.name, species.mass_number), kind="computed",
                method=DERIVED_METHOD, role=DERIVED_ROLE, owner_species_id=species.id,
                method_version=f"levels {__version__}", author=actor,
                citation="Ritz combination of stored levels (levels.physics.lines.combination)",
                description=f"E1 lines implied by the stored levels of {species.name}",
                options={"air_formula": "iau2000", "multipoles": ["E1"]})
        air = block.air_nm[keep]
        columns = {
            "dataset_id": np.full(n, ds.id), "species_id": np.full(n, species.id),
            "lower_id": lower_ids[keep], "upper_id": upper_ids[keep], "multipole": np.full(n, "E1", dtype=object),
            "wavenumber_cm1": block.wavenumber_cm1[keep], "vacuum_nm": block.vacuum_nm[keep],
            "air_nm": np.where(np.isfinite(air), air, np.nan), "a_per_s": np.full(n, np.nan),
            "f_abs": np.full(n, np.nan), "line_strength_au": np.full(n, np.nan), "unc_nm": block.unc_nm[keep],
            "note": np.where(_sorted_member(keys[keep], observed), RITZ_NOTE, "").astype(object),
        }
        queries.insert_line_columns(session, columns, 0, n)
        count += n
    return count


def _too_many_lines(source: str | None, n_levels: int, species_name: str, bound: int, limit: int) -> str:
    where = f"{source}: " if source else ""
    return (f"{where}the {n_levels:,} levels of {species_name} imply up to {bound:,} derived E1 lines "
            f"(Ritz combinations), above the limit of {limit:,} (about {bound * 250 / 1e9:.1f} GB of store); "
            f"to store them, pass --max-derived-lines {bound} to 'levels import' (or set {MAX_DERIVED_ENV}="
            f"{bound} for every command that rebuilds them); nothing was written")


def _precheck_derived_lines(records: Sequence[level_io.LevelRecord], source: str, max_lines: int | None) -> None:
    """Refuse before writing when a file's own levels of one species already imply too many derived lines.

    The stored levels can only add pairs, so this is a lower bound of what the rebuild would
    refuse; it spares writing (and rolling back) a million levels first.
    """
    from levels.errors import TooLargeError
    from levels.physics.lines import selection
    limit = default_max_derived_lines() if max_lines is None else max_lines
    by_species: dict[Spectrum, list[tuple[int, int]]] = {}
    for rec in records:
        if rec.two_j is not None:
            by_species.setdefault(rec.spectrum, []).append((rec.two_j, rec.parity))
    for spectrum, pairs in by_species.items():
        columns = np.array(pairs, dtype=np.int64)
        bound = selection.count_candidate_pairs(columns[:, 0], columns[:, 1], ("E1",))
        if bound > limit:
            raise TooLargeError(_too_many_lines(source, len(pairs), spectrum.name, bound, limit))


def _sorted_member(keys: np.ndarray, sorted_keys: np.ndarray) -> np.ndarray:
    """``np.isin(keys, sorted_keys)`` for a sorted, unique ``sorted_keys`` (binary search, no temporary sort)."""
    if sorted_keys.size == 0:
        return np.zeros(keys.size, dtype=bool)
    pos = np.searchsorted(sorted_keys, keys)
    pos[pos == sorted_keys.size] = 0
    return sorted_keys[pos] == keys


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


def _level_insert_row(rec: level_io.LevelRecord, dataset_id: int, species_id: int) -> dict:
    lande = rec.lande_g
    if lande is None and rec.multiplicity is not None:
        from levels.physics.lines.lande import lande_g_ls

        lande = float(lande_g_ls(rec.multiplicity - 1, rec.big_l, rec.two_j))
    return {
        "dataset_id": dataset_id, "species_id": species_id, "label": rec.label,
        "configuration": rec.configuration, "term": rec.term, "two_j": rec.two_j, "g": rec.two_j + 1,
        "parity": rec.parity,
        "energy_cm1": rec.energy_cm1, "unc_cm1": rec.unc_cm1, "multiplicity": rec.multiplicity,
        "big_l": rec.big_l, "n": rec.n, "l": rec.l, "lifetime_s": rec.lifetime_s, "lande_g": lande,
    }


def detect_file_kind(columns: Sequence[str], source: str, header_line: int) -> str:
    """``"lines"`` when the header has ``wavelength_nm``, else ``"levels"`` (the default kind)."""
    return "lines" if "wavelength_nm" in set(columns) else "levels"


def _checked_columns(table, known: Sequence[str], required: Sequence[str]):
    problems = []
    for col in table.columns:
        if col not in known:
            problems.append(Problem(table.source, table.header_line, col,
                                    f"unknown column; known columns are {', '.join(known)}"))
    for col in required:
        if col not in table.columns:
            problems.append(Problem(table.source, table.header_line, col, "required column is missing from the header"))
    if problems:
        raise InputFileError(problems)
    return table.rows


def _record_off_ritz(ds: Dataset, reason: str | None, checked: Mapping, warnings: list[str], source: str) -> None:
    """Keep the reason for accepted off-Ritz lines in the dataset's options, and say so."""
    off = int(checked.get("off_ritz", 0) or 0)
    if reason is None:
        return
    options = json.loads(ds.options_json or "{}")
    options.update({"allow_off_ritz": reason, "off_ritz_lines": off})
    ds.options_json = json.dumps(options, sort_keys=True)
    if off:
        warnings.append(f"{source}: {off} line{'s' if off != 1 else ''} off {'their' if off != 1 else 'its'} Ritz "
                        f"wavenumber accepted ({reason}); each carries a note")


def _missing_sqlite_file(url: str) -> str | None:
    """The path of a SQLite store file that does not exist (None for other stores or an existing file)."""
    from sqlalchemy.engine import make_url

    parsed = make_url(url)
    name = parsed.database
    if parsed.get_backend_name() != "sqlite" or name in (None, "", ":memory:") or name.startswith("file:"):
        return None
    return None if Path(name).exists() else name


def table_content_sha256(table) -> str:
    """SHA-256 (hex) of a read table's content: its columns and rows in order, without
    comments, blank lines or line numbers, so a copy of a file with other comments or
    line ends has the same digest."""
    digest = hashlib.sha256(json.dumps(list(table.columns), ensure_ascii=False).encode("utf-8"))
    for _, row in table.rows:
        digest.update(b"\n")
        digest.update(json.dumps([row.get(c, "") for c in table.columns], ensure_ascii=False).encode("utf-8"))
    return digest.hexdigest()


def _refuse_same_content(session: Session, content_sha256: str | None, again: bool, source: str,
                         warnings: list[str], named: bool = False) -> None:
    """Refuse a file whose content a dataset already holds, unless ``again`` or the new dataset is
    ``named`` explicitly (a deliberate second copy under a chosen name); then note it."""
    if content_sha256 is None:
        return
    earlier = queries.datasets_with_content(session, content_sha256)
    if not earlier:
        return
    names = ", ".join(repr(ds.name) for ds in earlier)
    if named and not again:
        warnings.append(f"{source}: the same content is already in the store as dataset {names}; imported "
                        "under the name given")
        return
    if not again:
        raise AlreadyExistsError(f"{source}: the same content was already imported as dataset {names}; "
                                 "nothing was written (import it once more with --again)")
    warnings.append(f"{source}: the same content was already imported as dataset {names}; imported again "
                    "as asked")


def _refuse_reserved(name: str, source: str, line: int | None, field_name: str) -> None:
    """Raise :class:`ReservedNameError` naming ``field_name`` when a user dataset name has a reserved form."""
    if queries.is_reserved_dataset_name(name):
        raise ReservedNameError([Problem(source, line, field_name, queries.reserved_name_message(name))])
    problem = queries.dataset_name_problem(name)
    if problem is not None:
        raise InputFileError([Problem(source, line, field_name, f"dataset name {name!r} {problem}")])


def _free_dataset_name(session: Session, source: str, sample: str | None, kind: str = "measured",
                       warnings: list[str] | None = None) -> str:
    """``sample/file-stem``, with `` (2)``, `` (3)`` ... appended when taken.

    The name is made plain first (:func:`levels.store.queries.plain_dataset_name`): no
    ``#``, no leading formula character, no control character.

    A file stem of a reserved form (``derived lines Na I A=23.csv``) is prefixed by the
    dataset's kind (``measured derived lines Na I A=23``), with a warning: the name was
    not chosen by the user, so the import goes ahead under a name no rebuild can take.
    """
    stem = Path(source).stem or "import"
    if not sample and queries.is_reserved_dataset_name(stem):
        renamed = f"{kind} {stem}"
        if warnings is not None:
            warnings.append(f"{source}: the file name {stem!r} has the form of a computed dataset's name; "
                            f"the dataset is named {renamed!r} (give --dataset to choose another)")
        stem = renamed
    base = queries.plain_dataset_name(f"{sample + '/' if sample else ''}{stem}")
    name, number = base, 1
    while queries.find_dataset(session, name) is not None:
        number += 1
        name = queries.numbered_dataset_name(base, number)
    return name
