"""The façade the front ends call: one :class:`Catalog` per store, its methods the service's units of work.

The units of work live in :mod:`levels.service` (one module per topic: :mod:`~levels.service.imports`,
:mod:`~levels.service.lines`, :mod:`~levels.service.species`, :mod:`~levels.service.datasets`,
:mod:`~levels.service.computed`, :mod:`~levels.service.derived`, :mod:`~levels.service.lab`,
:mod:`~levels.service.emission`, :mod:`~levels.service.rates`, :mod:`~levels.service.maintenance`); each
takes the catalog as its first argument and runs its writes in one transaction (:meth:`Catalog.write`) with
an audit entry. This module holds the store's plumbing (engine, schema state, transactions, provenance) and
delegates every unit of work; it re-exports the contract's names (:mod:`levels.service.contract`) so older
imports keep working. Neither the CLI nor the web site talks to SQL or to each other.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from levels import __version__
from levels.errors import Problem, StoreError
from levels.io import records as level_io
from levels.notation import Spectrum
from levels.service import datasets as datasets_service
from levels.service import imports, lines, species
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
    LevelRow,
    LineQuery,
    LineRow,
    SpeciesRow,
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
)
from levels.service.lines import add_ritz_columns, engine_rows  # noqa: F401 (re-exported)
from levels.store import database, queries

if TYPE_CHECKING:  # imported when the method runs (the emission stack is heavy)
    from levels.service.emission import EmissionResult


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

    def provenance(self, query: str, datasets: Sequence[str] = (), **extra: object) -> dict:
        """The provenance header of an export: tool version, store, datasets, query.

        Not a delegate: ``extra`` stays free-form on purpose. Each export adds its own keys after the four
        fixed ones (the medium, the air formula, a rate report's method and sources, ...), and the header
        writes whatever it is given, in that order; there is no fixed set of names to declare.
        """
        out: dict[str, object] = {
            "tool": f"levels {__version__}",
            "store": self.display_url,
            "datasets": "; ".join(datasets) if datasets else "(none)",
            "query": query,
        }
        out.update(extra)
        return out

    # ------------------------------------------------------------- species and levels
    def species_rows(self) -> list[SpeciesRow]:
        """One row per stored species with counts, ionization energy and datasets (:func:`.species.species_rows`)."""
        return species.species_rows(self)

    def species_row(self, spectrum: str | Spectrum) -> SpeciesRow:
        """One row of :meth:`species_rows` (NotFoundError if the species is not stored)."""
        return species.species_row(self, spectrum)

    def level_rows(self, spectrum: str | Spectrum, datasets: Sequence[str] | None = None) -> list[LevelRow]:
        """Levels of a species under a precedence of datasets (LEVEL_COLUMNS), by energy."""
        return species.level_rows(self, spectrum, datasets)

    # ------------------------------------------------------------- lines
    def line_rows(self, query: LineQuery, *, air_formula: str | None = None) -> tuple[list[LineRow], int]:
        """Stored lines matching ``query`` and the total count (:func:`.lines.line_rows`)."""
        return lines.line_rows(self, query, air_formula=air_formula)

    def species_lines(self, query: LineQuery, *, multipoles: Sequence[str] = ("E1",),
                      air_formula: str = "iau2000") -> tuple[list[LineRow], dict]:
        """Every line the selection rules allow between a species' levels (:func:`.lines.species_lines`)."""
        return lines.species_lines(self, query, multipoles=multipoles, air_formula=air_formula)

    def recompute_lines(self, spectrum: str) -> int:
        """Rebuild the stored derived E1 lines of a species from its levels (default precedence)."""
        return lines.recompute_lines(self, spectrum)

    def line_record(self, line_id: int) -> LineRow:
        """One stored line by id, with its levels (NotFoundError if absent)."""
        return lines.line_record(self, line_id)

    # ------------------------------------------------------------- datasets and samples
    def dataset_info(self, name_or_id: str | int) -> dict:
        """A dataset's record with its counts of levels and lines."""
        return datasets_service.dataset_info(self, name_or_id)

    def dataset_rows(self, include_retracted: bool = False) -> list[dict]:
        """Every dataset in precedence order with counts."""
        return datasets_service.dataset_rows(self, include_retracted)

    def create_sample(self, name: str, *, description: str | None = None, gas_fill: str | None = None,
                      pressure_pa: float | None = None, current_a: float | None = None,
                      instrument: str | None = None, te_k: float | None = None, ne_m3: float | None = None,
                      tgas_k: float | None = None, path_length_m: float | None = None) -> dict:
        """Create a lab sample with its conditions; the name must be new (:func:`.datasets.create_sample`).

        The keywords are :data:`SAMPLE_CONDITION_FIELDS`; None means "not given" (the store's default) and is
        not passed on.
        """
        given = {"description": description, "gas_fill": gas_fill, "pressure_pa": pressure_pa,
                 "current_a": current_a, "instrument": instrument, "te_k": te_k, "ne_m3": ne_m3,
                 "tgas_k": tgas_k, "path_length_m": path_length_m}
        conditions = {key: value for key, value in given.items() if value is not None}
        return datasets_service.create_sample(self, name, **conditions)

    def sample_rows(self) -> list[dict]:
        """Every sample with its conditions and dataset names."""
        return datasets_service.sample_rows(self)

    # ------------------------------------------------------------- computed one-electron ions
    def compute_hydrogenic(self, spectrum: str | Spectrum, *, mass_number: int | None = None, n_max: int = 20,
                           fine_structure: bool = True, corrections=None,
                           max_store_bytes: int = DEFAULT_MAX_STORE_BYTES,
                           progress: Callable[[str, int, int], None] | None = None) -> dict:
        """Compute a one-electron ion into a computed dataset (:func:`.computed.compute_hydrogenic`)."""
        from levels.service import computed

        return computed.compute_hydrogenic(self, spectrum, mass_number=mass_number, n_max=n_max,
                                           fine_structure=fine_structure, corrections=corrections,
                                           max_store_bytes=max_store_bytes, progress=progress)

    # ------------------------------------------------------------- imports
    def add_levels(self, dataset: str | int, records: Sequence[level_io.LevelRecord], *, source: str = "<form>") -> int:
        """Add validated levels to an existing measured or imported dataset (one transaction)."""
        return imports.add_levels(self, dataset, records, source=source)

    def preview_levels(self, content: bytes, source: str) -> tuple[list[level_io.LevelRecord], list[Problem]]:
        """Parse and validate an uploaded levels file without writing: (records, problems)."""
        return imports.preview_levels(content, source)

    def import_file(self, path: str | os.PathLike, *, sample: str | None = None, dataset: str | None = None,
                    kind: str = "measured", citation: str = "", description: str = "",
                    sample_conditions: Mapping[str, object] | None = None,
                    content: bytes | None = None, source: str | None = None,
                    allow_off_ritz: str | None = None, max_derived_lines: int | None = None,
                    again: bool = False) -> ImportReport:
        """Import a levels or lines file as a new dataset, all-or-nothing (:func:`.imports.import_file`)."""
        return imports.import_file(self, path, sample=sample, dataset=dataset, kind=kind, citation=citation,
                                   description=description, sample_conditions=sample_conditions,
                                   content=content, source=source, allow_off_ritz=allow_off_ritz,
                                   max_derived_lines=max_derived_lines, again=again)

    def import_line_records(self, records: Sequence[level_io.LineRecord], *, source: str, sample: str | None = None,
                            dataset: str | None = None, kind: str = "measured", citation: str = "",
                            description: str = "", sample_conditions: Mapping[str, object] | None = None,
                            air_formula: str = "iau2000", allow_off_ritz: str | None = None,
                            max_derived_lines: int | None = None, content_sha256: str | None = None,
                            again: bool = False) -> ImportReport:
        """Write validated measured lines as one new dataset (:func:`.imports.import_line_records`)."""
        return imports.import_line_records(self, records, source=source, sample=sample, dataset=dataset, kind=kind,
                                           citation=citation, description=description,
                                           sample_conditions=sample_conditions, air_formula=air_formula,
                                           allow_off_ritz=allow_off_ritz, max_derived_lines=max_derived_lines,
                                           content_sha256=content_sha256, again=again)

    def import_dataset(self, level_records: Sequence[level_io.LevelRecord],
                       line_records: Sequence[level_io.LineRecord], *, name: str, source: str,
                       sample: str | None = None, kind: str = "measured", citation: str = "",
                       description: str = "", air_formula: str = "iau2000",
                       line_source: str | None = None, allow_off_ritz: str | None = None,
                       max_derived_lines: int | None = None, method: str = "file import") -> ImportReport:
        """One new dataset with levels and/or measured lines (:func:`.imports.import_dataset`)."""
        return imports.import_dataset(self, level_records, line_records, name=name, source=source, sample=sample,
                                      kind=kind, citation=citation, description=description,
                                      air_formula=air_formula, line_source=line_source,
                                      allow_off_ritz=allow_off_ritz, max_derived_lines=max_derived_lines,
                                      method=method)

    def import_level_records(self, records: Sequence[level_io.LevelRecord], *, source: str,
                             sample: str | None = None, kind: str = "measured", citation: str = "",
                             description: str = "",
                             sample_conditions: Mapping[str, object] | None = None,
                             max_derived_lines: int | None = None, content_sha256: str | None = None,
                             again: bool = False) -> ImportReport:
        """Write validated level records as one new dataset (:func:`.imports.import_level_records`)."""
        return imports.import_level_records(self, records, source=source, sample=sample, kind=kind,
                                            citation=citation, description=description,
                                            sample_conditions=sample_conditions,
                                            max_derived_lines=max_derived_lines, content_sha256=content_sha256,
                                            again=again)

    # ------------------------------------------------------------- lab workflow
    def fit_limit(self, spectrum: str, patterns: Sequence[str], *, datasets: Sequence[str] | None = None,
                  n_defect_terms: int = 2, n_min: int | None = None, save: bool = True) -> dict:
        """Fit a series limit; optionally store it as its own dataset (:func:`.lab.fit_and_store_limit`)."""
        from levels.service import lab

        return lab.fit_and_store_limit(self, spectrum, patterns, datasets=datasets, n_defect_terms=n_defect_terms,
                                       n_min=n_min, save=save)

    def optimize_levels(self, dataset: str | int, *, fix: str | None = None) -> dict:
        """Least-squares level energies from a dataset's measured lines (report only, nothing written)."""
        from levels.service import lab

        return lab.optimize_dataset(self, dataset, fix=fix)

    def identify_peaks(self, spectra: Sequence[str], peaks_path, *, tolerance_nm: float = 0.0,
                       content: bytes | None = None, source: str | None = None, max_candidates: int = 3,
                       window: str = "tolerance", n_sigma: float = 3.0,
                       tolerance_cm1: float | None = None) -> list[dict]:
        """Match a peaks file against the lines of one or more species (:func:`.lab.identify_peaks`)."""
        from levels.service import lab

        return lab.identify_peaks(self, spectra, peaks_path, tolerance_nm=tolerance_nm, content=content,
                                  source=source, max_candidates=max_candidates, window=window, n_sigma=n_sigma,
                                  tolerance_cm1=tolerance_cm1)

    def emission(self, spectrum: str | Spectrum, *, te_k: float, ne_m3: float, tgas_k: float = 300.0,
                 from_nm: float | None = None, to_nm: float | None = None, medium: str = "air",
                 instrument_fwhm_nm: float = 0.0, path_length_m: float | None = None,
                 element_density_m3: float | None = None, cutoff_method: str = "debye",
                 datasets: Sequence[str] | None = None, grid_points: int | None = None,
                 model: str = "lte", loss_rate_per_s: float = 0.0, geometry: str = "slab",
                 broadening: str = "thermal", perturber: str | None = None, pressure_pa: float | None = None,
                 cool_layer_m: float | None = None, forbidden_omega: float | None = None) -> EmissionResult:
        """Line intensities, spectrum and lamp metrics of a discharge (:func:`.emission.discharge_emission`).

        The keywords from ``model`` on are the service's ``model_options``, declared as
        :func:`.emission.compute_emission` declares them.
        """
        from levels.service import emission

        return emission.discharge_emission(
            self, spectrum, te_k=te_k, ne_m3=ne_m3, tgas_k=tgas_k, from_nm=from_nm, to_nm=to_nm, medium=medium,
            instrument_fwhm_nm=instrument_fwhm_nm, path_length_m=path_length_m,
            element_density_m3=element_density_m3, cutoff_method=cutoff_method, datasets=datasets,
            grid_points=grid_points, model=model, loss_rate_per_s=loss_rate_per_s, geometry=geometry,
            broadening=broadening, perturber=perturber, pressure_pa=pressure_pa, cool_layer_m=cool_layer_m,
            forbidden_omega=forbidden_omega)


def _missing_sqlite_file(url: str) -> str | None:
    """The path of a SQLite store file that does not exist (None for other stores or an existing file)."""
    from sqlalchemy.engine import make_url

    parsed = make_url(url)
    name = parsed.database
    if parsed.get_backend_name() != "sqlite" or name in (None, "", ":memory:") or name.startswith("file:"):
        return None
    return None if Path(name).exists() else name
