"""The ``levels`` command line.

Every command takes the global ``--db URL_OR_PATH`` (environment ``LEVELS_DB``;
default a SQLite file in the user data directory, shown by ``levels where``).
Errors print one line per problem to stderr and exit with status 1.
"""

from __future__ import annotations

import contextlib
import functools
import json
import sys
import warnings
from collections.abc import Callable, Mapping, Sequence
from typing import TYPE_CHECKING, Any

import click

from levels import __version__
from levels.catalog import Catalog
from levels.errors import InputFileError, LevelsError
from levels.io.limits import text_problem
from levels.io.paths import check_output_path
from levels.io.tables import format_table, format_text_table, printable, write_atomic
from levels.notation import parse_spectrum
from levels.service import stores
from levels.service.contract import LEVEL_COLUMNS, LEVEL_UNITS, SPECIES_COLUMNS
from levels.service.vocabulary import DEFAULT_MEDIUM, SPECTRAL_OUTPUT_CHOICES

if TYPE_CHECKING:
    from click._termui_impl import ProgressBar  # the type click.progressbar returns

TABLE_FORMATS = ("table", "csv", "json", "ecsv")


class Context:
    """What the group hands to its commands."""

    def __init__(self, db: str | None):
        self.db = db
        self._catalog: Catalog | None = None

    @property
    def catalog(self) -> Catalog:
        if self._catalog is None:
            self._catalog = Catalog(self.db)
        return self._catalog


@contextlib.contextmanager
def _warnings_as_notes():
    """Show the physics modules' warnings (air formula range) as one 'note:' line each on stderr."""
    from levels.service.vocabulary import AirRangeWarning

    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", AirRangeWarning)
            yield
    finally:
        seen: set[str] = set()
        for item in caught:
            text = str(item.message)
            if not issubclass(item.category, AirRangeWarning):
                warnings.warn_explicit(item.message, item.category, item.filename, item.lineno)
            elif text not in seen:
                seen.add(text)
                click.echo(f"note: {text}", err=True)


def reports_errors(func: Callable) -> Callable:
    """Turn LevelsError into clean messages on stderr and exit status 1."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        try:
            with _warnings_as_notes():
                return func(*args, **kwargs)
        except InputFileError as exc:
            for problem in exc.problems[:50]:
                click.echo(f"error: {printable(str(problem))}", err=True)
            if len(exc.problems) > 50:
                click.echo(f"error: ... and {len(exc.problems) - 50} more problems", err=True)
            click.echo("nothing was written", err=True)
            sys.exit(1)
        except LevelsError as exc:
            click.echo(f"error: {printable(str(exc))}", err=True)
            sys.exit(1)

    return wrapper


def require_existing_store(obj: Context) -> None:
    """Refuse to create a SQLite file (or its folders) by merely reading a mistyped path."""
    from pathlib import Path

    from sqlalchemy.engine import make_url

    url = make_url(stores.store_url(obj.db))
    if url.get_backend_name() == "sqlite" and url.database not in (None, "", ":memory:") \
            and not url.database.startswith("file:") and not Path(url.database).exists():
        raise LevelsError(f"no store file at {url.database} (create one with 'levels init')")


def output_path(path: str | None, option: str = "--output") -> str | None:
    """Check an output path before any work: never the open store, a directory or a device (see levels.io.paths)."""
    if path is None:
        return None
    ctx = click.get_current_context(silent=True)
    obj = ctx.find_object(Context) if ctx is not None else None
    url = stores.store_url(obj.db) if obj is not None else None
    check_output_path(path, option=option, store_url=url)
    return path


def check_text_option(value: str | None, option: str, length: int | None = 200) -> str | None:
    """A text option as the store can hold it (length, no terminal control characters), else a usage error."""
    if value is None:
        return None
    problem = text_problem(value, length)
    if problem:
        raise click.BadParameter(f"the text {problem}", param_hint=f"'{option}'")
    return value


def _positive_finite(ctx, param, value):
    """Click callback: a finite number greater than zero."""
    import math

    if value is not None and (not math.isfinite(value) or value <= 0):
        raise click.BadParameter(f"{value!r} is not a finite number greater than zero")
    return value


def _non_negative_finite(ctx, param, value):
    """Click callback: a finite number, zero or more."""
    import math

    if value is not None and (not math.isfinite(value) or value < 0):
        raise click.BadParameter(f"{value!r} is not a finite number of zero or more")
    return value


def text_table(rows: Sequence[Mapping[str, Any]], columns: Sequence[str], headings: dict | None = None,
               max_rows: int | None = None) -> str:
    """A table for people: headings from the one vocabulary (``levels.service.vocabulary.LABELS``, which wins
    over ``headings``), parity as even/odd, configurations and level labels with spaces, numbers per
    ``levels.io.display``."""
    from levels.io.display import display_text_columns
    from levels.service.vocabulary import LABELS, PARITY_WORDS

    if "parity" in columns:
        rows = [{**r, **({"parity": PARITY_WORDS.get(r["parity"], r["parity"])} if "parity" in r else {})}
                for r in rows]
    rows = display_text_columns(rows, columns)
    return format_text_table(rows, columns, headings={**(headings or {}), **LABELS}, max_rows=max_rows)


#: what an export's header says where no air formula was applied to its values
NO_AIR_FORMULA = "none applied (no air wavelengths computed for these rows)"


def complete_provenance(provenance: dict, rows: Sequence[Mapping[str, Any]]) -> dict:
    """The provenance header with every key an export names: tool, store, datasets, query, air_formula.

    ``datasets`` not given (or ``(none)``) is filled with exactly the datasets the rows name
    (their ``dataset`` or ``datasets`` cells, in first-seen order); ``store`` with the open store.
    """
    out = dict(provenance)
    out.setdefault("tool", f"levels {__version__}")
    if "store" not in out:
        ctx = click.get_current_context(silent=True)
        obj = ctx.find_object(Context) if ctx is not None else None
        out["store"] = obj.catalog.display_url if obj is not None and obj._catalog is not None else "(not used)"
    if out.get("datasets") in (None, "", "(none)"):
        seen: dict[str, None] = {}
        for row in rows:
            for name in (row.get("dataset"), *row.get("dataset_names", ())):
                if name:
                    seen.setdefault(str(name), None)
        out["datasets"] = "; ".join(seen) if seen else "none (no stored rows)"
    out.setdefault("query", "")
    out.setdefault("air_formula", NO_AIR_FORMULA)
    order = ("tool", "store", "datasets", "query", "air_formula")
    return {**{k: out[k] for k in order}, **{k: v for k, v in out.items() if k not in order}}


def emit(rows: Sequence[Mapping[str, Any]], columns: Sequence[str], fmt: str, provenance: dict, *,
         output: str | None = None, units: dict | None = None, headings: dict | None = None,
         rows_key: str | Sequence[str] = "rows") -> None:
    """Print or write rows in the chosen format (files are written atomically).

    The provenance is completed by :func:`complete_provenance`; ``rows_key`` names the rows in
    JSON (``"lines"`` for line rows).
    """
    provenance = complete_provenance(provenance, rows)
    if fmt == "table":
        if output:
            raise click.UsageError("--output needs --format csv, json or ecsv")
        # people read spaces between subshells, even/odd and the vocabulary's labels; files keep the stored forms
        click.echo(text_table(rows, columns, headings=headings), nl=False)
        return
    text = format_table(rows, columns, fmt, provenance, units=units, rows_key=rows_key)
    if output:
        output_path(output)
        write_atomic(output, text)
        click.echo(f"wrote {len(rows)} rows to {output}", err=True)
    else:
        click.echo(text, nl=False)


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--db", envvar="LEVELS_DB", metavar="URL_OR_PATH",
              help="Store: a SQLite file path or a URL (sqlite:///..., postgresql+psycopg://...). "
                   "Default: a SQLite file in your data directory (see 'levels where').")
@click.version_option(__version__, prog_name="levels")
@click.pass_context
def main(ctx: click.Context, db: str | None) -> None:
    """levels: a private store of atomic energy levels, with lines, limits and emission.

    \b
    Example:
      levels --db lab.sqlite init
      levels --db lab.sqlite import my-levels.csv --sample cell-3
      levels --db lab.sqlite show "Na I"
    """
    ctx.obj = Context(db)


@main.command()
@click.pass_obj
@reports_errors
def init(obj: Context) -> None:
    """Create the store, or upgrade its schema to this version.

    \b
    Example:
      levels --db lab.sqlite init
    """
    revision = obj.catalog.init()
    click.echo(f"store ready at {obj.catalog.display_url} (schema {revision})")


@main.command()
@click.pass_obj
@reports_errors
def where(obj: Context) -> None:
    """Print which store the commands use, and its schema state.

    \b
    Example:
      levels where
    """
    url = stores.store_url(obj.db)
    click.echo(stores.display_url(url))
    if url.startswith("sqlite:///"):
        click.echo(f"file: {url[len('sqlite:///'):]}")
        try:
            require_existing_store(obj)
        except LevelsError:
            click.echo("schema: not initialised (no store file there yet; 'levels init' creates it)")
            return
    try:
        revision = stores.schema_revision(obj.catalog)
    except LevelsError as exc:
        click.echo(f"schema: unreachable ({exc})")
        return
    if revision is None:
        click.echo("schema: not initialised (run 'levels init')")
    else:
        state = "current" if revision == stores.head_revision() else "needs 'levels init' to upgrade"
        click.echo(f"schema: {revision} ({state})")


@main.command()
@click.option("--format", "fmt", type=click.Choice(TABLE_FORMATS), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write to this file (atomically) instead of printing.")
@click.pass_obj
@reports_errors
def species(obj: Context, fmt: str, output: str | None) -> None:
    """List the species in the store with counts and ionization energy.

    \b
    Example:
      levels species --format csv
    """
    require_existing_store(obj)
    output_path(output)
    rows = obj.catalog.species_rows()
    columns: tuple[str, ...] = SPECIES_COLUMNS
    if fmt == "table" and any(r["all_limits"].count("(") > 1 for r in rows):
        # people see every stored and fitted limit side by side; files keep the column contract
        columns = SPECIES_COLUMNS + ("all_limits",)
    emit(rows, columns, fmt, obj.catalog.provenance("species"), output=output,
         units={"ionization_cm1": "cm-1", "ionization_unc_cm1": "cm-1"},
         headings={"ionization_cm1": "ionization [cm-1]", "ionization_unc_cm1": "unc [cm-1]",
                   "all_limits": "all limits [cm-1] (dataset)"})


@main.command()
@click.argument("spectrum")
@click.option("--dataset", "datasets", multiple=True, metavar="NAME",
              help="Use these datasets, in this order of precedence (repeat the option). "
                   "Default: all, measured first, then imported, then computed.")
@click.option("--format", "fmt", type=click.Choice(TABLE_FORMATS), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write to this file (atomically) instead of printing.")
@click.pass_obj
@reports_errors
def show(obj: Context, spectrum: str, datasets: tuple[str, ...], fmt: str, output: str | None) -> None:
    """List the levels of SPECTRUM (for example "Na I", "He II", C5+).

    \b
    Example:
      levels show "Na I" --format csv
    """
    require_existing_store(obj)
    output_path(output)
    rows = obj.catalog.level_rows(spectrum, list(datasets) or None)
    used = sorted({r["dataset"] for r in rows})
    emit(rows, LEVEL_COLUMNS, fmt, obj.catalog.provenance(f"show {spectrum}", used), output=output,
         units=LEVEL_UNITS, headings={"energy_cm1": "energy [cm-1]", "unc_cm1": "unc [cm-1]",
                                      "lifetime_s": "lifetime [s]"})


@main.command(name="import")
@click.argument("file", type=click.Path(exists=True, dir_okay=False))
@click.option("--sample", metavar="NAME", help="Attach the new dataset to this lab sample (created if new).")
@click.option("--dataset", metavar="NAME", help="Name of the new dataset (default: from the file name and time).")
@click.option("--kind", type=click.Choice(["measured", "imported"]), default="measured", show_default=True,
              help="'imported' for values taken from the literature (give --citation).")
@click.option("--citation", default="", help="Where the values come from.")
@click.option("--allow-off-ritz", "allow_off_ritz", metavar="REASON", default=None,
              help="Lines file: accept lines further than 5 combined uncertainties from their levels' Ritz "
                   "wavenumber, for this REASON (kept with the dataset; each such line gets a note).")
@click.option("--max-derived-lines", type=click.IntRange(min=0), default=None, metavar="N",
              help="Most Ritz (derived) lines one species may imply after this import "
                   "(default 10,000,000 or $LEVELS_MAX_DERIVED_LINES).")
@click.option("--again", is_flag=True, default=False,
              help="Import a file whose content is already in the store once more (refused without it, "
                   "also under a new --dataset name).")
@click.pass_obj
@reports_errors
def import_(obj: Context, file: str, sample: str | None, dataset: str | None, kind: str, citation: str,
            allow_off_ritz: str | None, max_derived_lines: int | None, again: bool) -> None:
    """Import measured levels or lines from FILE as a new dataset, all-or-nothing.

    The kind is told by the header. A levels file names the columns spectrum,
    configuration, term, j, energy_cm1 (required) and label, parity, unc_cm1,
    g, n, l, lifetime_s, lande_g, dataset (optional). A lines file names
    spectrum, lower, upper, wavelength_nm, medium, unc_nm (required) and
    intensity, a_per_s, f_abs, multipole, note; lower and upper are labels of
    levels already in the store. Lines starting with # are comments.

    \b
    Example:
      levels import seed_data/demo/sample-li-cell.csv --sample demo-1
    """
    check_text_option(sample, "--sample")
    check_text_option(dataset, "--dataset")
    check_text_option(citation, "--citation", None)
    if dataset is None:
        from levels.io.limits import automatic_dataset_name_problem

        problem = automatic_dataset_name_problem(sample, file)
        if problem:
            raise click.BadParameter(f"{problem}; name the dataset with --dataset", param_hint="'--dataset'")
    check_text_option(allow_off_ritz, "--allow-off-ritz")
    report = obj.catalog.import_file(file, sample=sample, dataset=dataset, kind=kind, citation=citation,
                                     allow_off_ritz=allow_off_ritz, max_derived_lines=max_derived_lines,
                                     again=again)
    for warning in report.warnings:
        click.echo(f"note: {warning}")
    what = f"{report.levels} levels" if report.levels else f"{report.lines} lines"
    click.echo(f"imported {what} of {', '.join(report.species)} into {report.kind} dataset "
               f"{report.dataset!r} (id {report.dataset_id})"
               + (f" of sample {report.sample!r}" if report.sample else ""))
    if report.levels and report.lines:
        click.echo(f"derived {report.lines} E1 lines from the levels (Ritz wavelengths; rates unknown until measured)")


def _wavelength_option(value: str | None, name: str, medium: str = "vacuum",
                       air_formula: str | None = None) -> tuple[float, bool] | None:
    """A window bound in any spectral unit: (wavelength in nm in ``medium``, typed as a length); errors name the option.

    A wavenumber, energy or frequency names a vacuum wavelength; in an air window it is re-expressed in
    air (above the 200 nm floor) with the query's air formula.
    """
    from levels.errors import UnitError
    from levels.service.vocabulary import DEFAULT_AIR_FORMULA, air_wavelengths
    from levels.units import spectral_nm

    if value is None:
        return None
    try:
        result = spectral_nm(value)
    except UnitError as exc:
        raise click.BadParameter(str(exc), param_hint=f"'{name}'") from None
    nm = result.nm
    if medium == "air" and not result.is_length:
        air = float(air_wavelengths([nm], air_formula or DEFAULT_AIR_FORMULA)[0])
        nm = air if air == air else nm
    return nm, result.is_length


def _window(from_: str | None, to: str | None, medium: str = "vacuum",
            air_formula: str | None = None) -> tuple[float | None, float | None]:
    """``--from`` and ``--to`` (any spectral unit) as a wavelength window in nm, checked against each other.

    Bounds in energy, wavenumber or frequency run the other way; the window is the wavelength range between them.
    """
    first = _wavelength_option(from_, "--from", medium, air_formula)
    second = _wavelength_option(to, "--to", medium, air_formula)
    if first is None or second is None:
        return (first[0] if first else None), (second[0] if second else None)
    lo, hi = first[0], second[0]
    if first[1] and second[1] and lo >= hi or lo == hi:
        raise click.UsageError(f"empty window: --from {from_} is not below --to {to}")
    return min(lo, hi), max(lo, hi)


def _energy_cm1_option(value: str | None) -> float | None:
    from levels.units import CM1_J, parse_quantity

    return None if value is None else parse_quantity(value, "energy", default_unit="cm-1") / CM1_J


def _multipoles_option(value: str) -> tuple[str, ...]:
    items = tuple(m.strip().upper() for m in value.split(",") if m.strip())
    if not items:
        raise click.BadParameter("give at least one of E1, M1, E2")
    return items


@main.command()
@click.argument("spectrum", required=False)
@click.option("--from", "from_", metavar="POSITION",
              help="Window start in any spectral unit (400nm, 4000Å, 25000cm-1, 3.1eV, 750THz).")
@click.option("--to", metavar="POSITION", help="Window end, with unit (wavelength, wavenumber, energy or frequency).")
@click.option("--medium", type=click.Choice(["vacuum", "air"]), default=DEFAULT_MEDIUM, show_default=True,
              help="Medium of the window and of the listed wavelengths: air means air at and above 200 nm, vacuum "
                   "below (the trade's rule; the same default in the web pages, the JSON API and the Python API).")
@click.option("--unit", "out_unit", metavar="UNIT",
              help=f"Add the position column in this unit: {', '.join(SPECTRAL_OUTPUT_CHOICES)} (A and um accepted; "
                   "lengths in the --medium). Files keep vacuum_nm and air_nm and add the column at the end.")
@click.option("--multipole", default="E1", show_default=True,
              help="Comma list of E1, M1, E2 (forbidden lines on request).")
@click.option("--min-a", type=float, callback=_non_negative_finite,
              help="Smallest Einstein A, s-1 (lines without a known A are left out).")
@click.option("--max-upper", metavar="ENERGY", help="Highest upper-level energy (50000cm-1, 6.2eV).")
@click.option("--dataset", "datasets", multiple=True, metavar="NAME", help="Datasets in order of precedence (repeat).")
@click.option("--sort", "order", type=click.Choice(["wavelength", "strength", "a"]), default="wavelength",
              show_default=True)
@click.option("--air-formula", type=click.Choice(["morton2000", "edlen1966", "ciddor1996", "iau2000"]),
              default="morton2000", show_default=True,
              help="Refractive index of air: morton2000 (Morton 2000), edlen1966, ciddor1996; iau2000 is an alias "
                   "of morton2000.")
@click.option("--limit", type=click.IntRange(min=1), help="At most this many lines.")
@click.option("--lower", "lower_pattern", metavar="LABEL_OR_PATTERN",
              help="Only lines from this lower level: a label, a glob ('1s2.2p*') or a series pattern ('np 2P°3/2').")
@click.option("--series", "series_pattern", metavar="PATTERN",
              help="Only lines whose upper level is in this series ('np 2P°3/2', n the running number).")
@click.option("--name", "line_name", metavar="NAME",
              help="Only the hydrogen line of this name (Hα, H-alpha, Lyβ, Pa9).")
@click.option("--multiplets", is_flag=True,
              help="Sum the fine-structure components of each configuration and term pair into one multiplet row.")
@click.option("--format", "fmt", type=click.Choice(TABLE_FORMATS), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write to this file (atomically) instead of printing.")
@click.pass_obj
@reports_errors
def lines(obj: Context, spectrum: str | None, from_: str | None, to: str | None, medium: str, out_unit: str | None,
          multipole: str,
          min_a: float | None, max_upper: str | None, datasets: tuple[str, ...], order: str, air_formula: str,
          limit: int | None, lower_pattern: str | None, series_pattern: str | None, line_name: str | None,
          multiplets: bool, fmt: str, output: str | None) -> None:
    """Line list of SPECTRUM: every line its levels allow, with Ritz wavelengths and known rates.

    Without SPECTRUM, search the stored lines of all species in the window (a line finder).
    Air wavelengths are empty below 200 nm (vacuum ultraviolet is quoted in vacuum).
    The last columns give a measured line's observed wavelength, the Ritz
    wavelength from its levels and observed - Ritz, in the --medium, and the
    customary name of a hydrogen line (H I, D I, T I: Hα, Lyβ, ...).
    --multiplets sums components of one configuration and term pair
    (S and g f summed, wavenumber g f-weighted; see
    levels.service.line_selection) and adds gf, members, weighting.

    \b
    Example:
      levels lines "H I" --from 400nm --to 700nm --medium air --format csv
      levels lines "Li I" --multipole E1,M1,E2 --output li-lines.ecsv --format ecsv
      levels lines --from 486nm --to 487nm
      levels lines "H I" --lower "2p 2P°3/2" --series "nd 2D5/2" --multiplets
      levels lines "He II" --from 0.5keV --to 0.7keV --unit keV
    """
    from levels.service.contract import LINE_COLUMNS, LINE_HEADINGS, LINE_LIST_COLUMNS, LINE_UNITS, LineQuery
    from levels.service.line_selection import MULTIPLET_EXTRA_COLUMNS, MULTIPLETS_NOTE, filter_lines, merge_multiplets
    from levels.service.lines import add_ritz_columns
    from levels.service.vocabulary import (
        add_spectral_column,
        air_formula_code,
        air_formula_description,
        medium_statement,
        spectral_output_unit,
    )

    air_formula = air_formula_code(air_formula)  # formulas are named by their authors; old names are aliases
    try:
        if out_unit is not None:
            spectral_output_unit(out_unit)
    except LevelsError as exc:
        raise click.BadParameter(str(exc), param_hint="'--unit'") from None
    require_existing_store(obj)
    output_path(output)
    from_nm, to_nm = _window(from_, to, medium, air_formula)
    multipoles = _multipoles_option(multipole)
    query = LineQuery(spectrum=None if spectrum is None else parse_spectrum(spectrum), from_nm=from_nm,
                      to_nm=to_nm, medium=medium,
                      multipoles=multipoles, min_a=min_a,
                      max_upper_cm1=_energy_cm1_option(max_upper), datasets=tuple(datasets) or None,
                      order=order, limit=None if (lower_pattern or series_pattern or line_name) else limit)
    info: dict[str, Any]
    if spectrum is None:
        if query.from_nm is None or query.to_nm is None:
            raise click.UsageError("without SPECTRUM, give a window with --from and --to")
        # stored air wavelengths are re-expressed in the asked formula, so the header's formula is the values'
        rows, total = obj.catalog.line_rows(query, air_formula=air_formula)
        used = sorted({r["dataset"] for r in rows})
        info = {"total": total, "without_rates": sum(1 for r in rows if r["a_per_s"] is None)}
    else:
        rows, info = obj.catalog.species_lines(query, multipoles=multipoles, air_formula=air_formula)
        used = info["datasets"]
    provenance = obj.catalog.provenance(query.describe(), used, air_formula=air_formula_description(air_formula),
                                        lines=f"{len(rows)} of {info['total']}",
                                        rates=f"{info['without_rates']} lines without known rates (A, f, S empty)")
    if info.get("warnings"):
        provenance["states"] = " ".join(info["warnings"])
    columns: tuple[str, ...] = LINE_LIST_COLUMNS
    if lower_pattern or series_pattern or line_name:
        rows = filter_lines(rows, lower=lower_pattern, series=series_pattern, name=line_name)[:limit]
        provenance["selection"] = (f"lower {lower_pattern or 'any'}; upper series {series_pattern or 'any'}; "
                                   f"name {line_name or 'any'}: {len(rows)} lines")
    # exactly the datasets behind the listed rows (a line's own and its two levels'), in their precedence;
    # taken before multiplets are summed, whose rows no longer name their components' datasets
    contributed = {name for r in rows for name in (r.get("source_datasets") or (r.get("dataset"),))}
    provenance["datasets"] = "; ".join(name for name in used if name in contributed) or "(none)"
    if multiplets:
        rows = merge_multiplets(rows, medium=medium, air_formula=air_formula)
        columns = LINE_COLUMNS + MULTIPLET_EXTRA_COLUMNS
        provenance["multiplets"] = MULTIPLETS_NOTE
    else:
        add_ritz_columns(rows, medium, air_formula=air_formula)
    # the listing says its medium and air formula in every format; the position column in the asked unit
    provenance["medium"] = medium_statement(medium, air_formula)
    headings = dict(LINE_HEADINGS)
    if out_unit is not None:
        key, headings[key] = add_spectral_column(rows, out_unit, medium)
        if key not in columns:
            at = columns.index("upper") + 1 if fmt == "table" else len(columns)  # people see it first
            columns = tuple(columns[:at]) + (key,) + tuple(columns[at:])
        provenance["unit"] = f"{key}: {headings[key]}"
    # one JSON shape for line rows (the emission report's "lines"); "rows" stays as an alias for older readers
    emit(rows, columns, fmt, provenance, output=output, units=LINE_UNITS, headings=headings,
         rows_key=("lines", "rows"))
    if fmt == "table":  # the table's caption, under it (files say it in their header)
        click.echo(provenance["medium"][0].upper() + provenance["medium"][1:] + " (window, observed and Ritz)")
    if fmt == "table" and info["without_rates"]:
        click.echo(f"{info['without_rates']} of {len(rows)} lines have no known rates (A, f, S left empty)", err=True)
    _warnings(info.get("warnings", ()))


REPORT_FORMATS = ("table", "json")


def _echo_json(payload: dict, output: str | None) -> None:
    text = json.dumps(payload, indent=1, ensure_ascii=False, default=_json_default) + "\n"
    if output:
        output_path(output)
        write_atomic(output, text)
        click.echo(f"wrote {output}", err=True)
    else:
        click.echo(text, nl=False)


def _json_default(value):
    if hasattr(value, "item"):
        return value.item()
    if hasattr(value, "tolist"):
        return value.tolist()
    return str(value)


def _warnings(items) -> None:
    for text in items:
        click.echo(f"warning: {text}", err=True)


@main.command()
@click.argument("spectrum")
@click.option("--series", "patterns", multiple=True, required=True, metavar="PATTERN",
              help="Level-label pattern with n for the running number, e.g. 'ns 2S1/2' (repeat to fit a shared limit).")
@click.option("--n-min", type=int, help="Use only levels with n >= this.")
@click.option("--defect-terms", type=int, default=2, show_default=True, help="Quantum-defect terms per series.")
@click.option("--dataset", "datasets", multiple=True, metavar="NAME", help="Datasets in order of precedence.")
@click.option("--no-save", is_flag=True, help="Do not store the fitted limit.")
@click.option("--format", "fmt", type=click.Choice(REPORT_FORMATS), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write the JSON report to this file.")
@click.pass_obj
@reports_errors
def limit(obj: Context, spectrum: str, patterns: tuple[str, ...], n_min: int | None, defect_terms: int,
          datasets: tuple[str, ...], no_save: bool, fmt: str, output: str | None) -> None:
    """Fit a Rydberg series of SPECTRUM and report the series (ionization) limit.

    The extended Ritz formula E_n = E_lim - Z_c^2 R_M / (n - d)^2, with the
    quantum defect d = d0 + d2/(n - d0)^2 + ..., is fitted by weighted least
    squares to the levels whose labels match each pattern; R_M is the Rydberg
    constant of the species' isotope. The fit is stored as a dataset of its own
    (unless --no-save) so the species table shows it.

    \b
    Example:
      levels limit "Li I" --series "ns 2S1/2" --series "nd 2D5/2" --n-min 4
    """
    require_existing_store(obj)
    output_path(output)
    report = obj.catalog.fit_limit(spectrum, list(patterns), datasets=list(datasets) or None,
                                   n_defect_terms=defect_terms, n_min=n_min, save=not no_save)
    if fmt == "json" or output:
        _echo_json(report, output)
    else:
        click.echo(f"{report['spectrum']}: series limit {report['limit_cm1']:.4f} ± {report['limit_unc_cm1']:.4f} cm-1 "
                   f"(chi2 {report['chi2']:.2f} for {report['dof']} degrees of freedom)")
        if report["stored_limit_cm1"] is not None:
            diff = report["limit_cm1"] - report["stored_limit_cm1"]
            click.echo(f"stored limit {report['stored_limit_cm1']:.4f} cm-1; fitted minus stored {diff:+.4f} cm-1")
        for entry in report["series"]:
            defects = ", ".join(f"{d:.6f}" for d in entry["quantum_defects"])
            worst = max((abs(r) for r in entry["residuals_cm1"]), default=0.0)
            click.echo(f"  {entry['pattern']}: {entry['n_used']} levels, n = {min(entry['n_values'])}.."
                       f"{max(entry['n_values'])}, quantum defects [{defects}], largest residual {worst:.4f} cm-1")
        if report.get("saved_as"):
            click.echo(f"stored as dataset {report['saved_as']!r}")
    _warnings(report["warnings"])


@main.command()
@click.argument("dataset")
@click.option("--fix", metavar="LABEL", help="Reference level held at its stored energy (default: the lowest).")
@click.option("--format", "fmt", type=click.Choice(REPORT_FORMATS), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write the JSON report to this file.")
@click.pass_obj
@reports_errors
def optimize(obj: Context, dataset: str, fix: str | None, fmt: str, output: str | None) -> None:
    """Least-squares level energies from the measured lines of DATASET (Ritz principle).

    Each line's vacuum wavenumber is the difference of its two levels; the
    levels are found by weighted linear least squares with one level fixed.
    Lines more than 3 sigma off are flagged 'outlier'; levels fixed by a single
    line 'single-line level'. Nothing is written.

    \b
    Example:
      levels optimize demo-1/lines-run-3 --fix "1s2.2s 2S1/2"
    """
    require_existing_store(obj)
    output_path(output)
    report = obj.catalog.optimize_levels(dataset, fix=fix)
    if fmt == "json" or output:
        _echo_json(report, output)
    else:
        click.echo(text_table(report["levels"], ("label", "energy_cm1", "unc_cm1", "n_lines", "stored_cm1", "flag"),
                                     headings={"energy_cm1": "energy [cm-1]", "unc_cm1": "unc [cm-1]",
                                               "stored_cm1": "stored [cm-1]"}), nl=False)
        click.echo()
        click.echo(text_table(report["lines"], ("lower", "upper", "observed_nm", "medium", "residual_cm1", "flag"),
                                     headings={"observed_nm": "observed [nm]", "residual_cm1": "obs-Ritz [cm-1]"}),
                   nl=False)
        click.echo(f"chi2 {report['chi2']:.3f} for {report['dof']} degrees of freedom; fixed level {report['fixed']}")
    _warnings(report["warnings"])


@main.command()
@click.argument("spectra")
@click.argument("peaks_file", type=click.Path(exists=True, dir_okay=False))
@click.option("--tolerance", default="0.005nm", show_default=True,
              help="Match window, with unit: |peak - line| <= tolerance (unless --window uncertainty). Any spectral "
                   "unit: a wavenumber, energy or frequency (0.5cm-1, 1e-4eV, 15GHz) is converted at each peak.")
@click.option("--window", type=click.Choice(["tolerance", "uncertainty"]), default="tolerance", show_default=True,
              help="tolerance: the window is --tolerance; uncertainty: max(tolerance, N u) per pair, u the peak's "
                   "and line's uncertainties in quadrature.")
@click.option("--n-sigma", type=click.FloatRange(min=0, min_open=True), default=3.0, show_default=True,
              help="N for --window uncertainty.")
@click.option("--candidates", type=click.IntRange(min=1), default=3, show_default=True,
              help="Candidates listed per peak.")
@click.option("--format", "fmt", type=click.Choice(TABLE_FORMATS), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write to this file (atomically) instead of printing.")
@click.pass_obj
@reports_errors
def identify(obj: Context, spectra: str, peaks_file: str, tolerance: str, window: str, n_sigma: float,
             candidates: int, fmt: str, output: str | None) -> None:
    """Name the peaks of a measured spectrum from the lines of SPECTRA (comma list).

    PEAKS_FILE is a CSV with peak_nm (required) and medium (air or vacuum,
    default air), unc_nm, intensity, note. delta_nm is peak - line. Candidates
    are ranked by distance and, where rates are known, expected strength;
    unmatched peaks say so. A peak is ambiguous when more than one transition
    lies in its window, not counting a candidate whose g_u A is below 1/10 of
    the strongest known g_u A there (a candidate of unknown rate always counts).

    \b
    Example:
      levels identify "H I,D I" peaks.csv --tolerance 0.01nm
    """
    from levels.service.lab import IDENTIFY_COLUMNS
    from levels.units import spectral_nm

    require_existing_store(obj)
    output_path(output)
    names = [s.strip() for s in spectra.split(",") if s.strip()]
    try:
        given = spectral_nm(tolerance)
    except LevelsError as exc:
        raise click.BadParameter(str(exc), param_hint="'--tolerance'") from None
    # a length is the window itself; a wavenumber, energy or frequency is a wavenumber width, converted at each
    # peak's wavelength (|d lambda| = lambda^2 d sigma)
    tolerance_nm, tolerance_cm1 = (given.nm, None) if given.is_length else (0.0, 1e7 / given.nm)
    rows = obj.catalog.identify_peaks(names, peaks_file, max_candidates=candidates, window=window, n_sigma=n_sigma,
                                      tolerance_nm=tolerance_nm, tolerance_cm1=tolerance_cm1)
    rule = (f"window |peak - line| <= {tolerance}" if window == "tolerance"
            else f"window max({tolerance}, {n_sigma:g} combined uncertainties)")
    from levels.service.vocabulary import air_formula_description

    provenance = obj.catalog.provenance(f"identify {', '.join(names)} in {peaks_file}; {rule}; "
                                        "delta_nm = peak - line",
                                        air_formula=air_formula_description("iau2000"))
    emit(rows, IDENTIFY_COLUMNS, fmt, provenance, output=output,
         units={"peak_nm": "nm", "line_nm": "nm", "delta_nm": "nm", "a_per_s": "s-1"},
         headings={"peak_nm": "peak [nm]", "line_nm": "line [nm]", "delta_nm": "peak - line [nm]",
                   "a_per_s": "A [s-1]"})


@main.command()
@click.argument("spectrum")
@click.option("--te", required=True, metavar="TEMPERATURE", help="Electron (excitation) temperature: 1.0eV or 11600K.")
@click.option("--ne", required=True, metavar="DENSITY", help="Electron density: 1e18m-3 or 1e12cm-3.")
@click.option("--tgas", default="300K", show_default=True, metavar="TEMPERATURE",
              help="Gas temperature (Doppler width).")
@click.option("--model", type=click.Choice(["lte", "cr"]), default="lte", show_default=True,
              help="Populations: lte (Boltzmann-Saha at Te) or cr (collisional-radiative steady state).")
@click.option("--from", "from_", metavar="POSITION",
              help="Window start in any spectral unit (380nm, 26300cm-1, 3.3eV).")
@click.option("--to", metavar="POSITION", help="Window end (780nm, 12800cm-1, 1.6eV).")
@click.option("--medium", type=click.Choice(["air", "vacuum"]), default=DEFAULT_MEDIUM, show_default=True,
              help="Medium of the window and the listed wavelengths (air: air at and above 200 nm, vacuum below).")
@click.option("--instrument-fwhm", default="0nm", show_default=True, metavar="WAVELENGTH",
              help="Gaussian instrument profile FWHM.")
@click.option("--length", "--path-length", "path_length", metavar="LENGTH",
              help="Plasma depth (slab thickness or cylinder radius) for escape factors and self-absorption "
                   "(e.g. 0.01m).")
@click.option("--geometry", type=click.Choice(["slab", "cylinder"]), default="slab", show_default=True,
              help="Shape of the plasma for the escape factors of --model cr.")
@click.option("--loss-rate", metavar="RATE", default="0", show_default=True,
              help="Loss of metastable levels to walls or by diffusion, s-1 (--model cr).")
@click.option("--forbidden-omega", type=float, default=None, metavar="OMEGA",
              help="Collision strength of transitions without an f value (--model cr; default 0.1).")
@click.option("--broadening", type=click.Choice(["thermal", "pressure"]), default="thermal", show_default=True,
              help="thermal: Doppler and natural widths; pressure: also Stark and resonance widths.")
@click.option("--perturber", default=None, metavar="GAS",
              help="Foreign gas for van der Waals broadening (with --pressure): He, Ne, Ar, Kr, Xe, H2, N2, Hg.")
@click.option("--pressure", metavar="PRESSURE", help="Pressure of the perturber gas (e.g. 1bar, 20kPa, 760Torr).")
@click.option("--cool-layer", metavar="LENGTH",
              help="Outer layer of ground-state atoms at the gas temperature that absorbs (self-reversal), "
                   "with --length.")
@click.option("--element-density", metavar="DENSITY", help="Density of the element, all charge states (default: ne).")
@click.option("--cutoff", "cutoff_method", type=click.Choice(["debye", "inglis-teller", "none"]), default="debye",
              show_default=True, help="Partition-function cutoff.")
@click.option("--top", type=click.IntRange(min=0), default=15, show_default=True, help="Lines printed in the table.")
@click.option("--format", "fmt", type=click.Choice(["table", "json", "csv", "ecsv"]), default="table",
              show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write the line list (csv/ecsv/json) to this file.")
@click.option("--plot", type=click.Path(dir_okay=False), help="Write an interactive spectrum (HTML) to this file.")
@click.option("--spectrum", "spectrum_file", type=click.Path(dir_okay=False), help="Write the sampled spectrum (CSV).")
@click.option("--points", type=click.IntRange(2, 10_000_001), default=None,
              help="Points of the sampled spectrum (default: automatic, step <= FWHM/5 of the narrowest line).")
@click.pass_obj
@reports_errors
def emission(obj: Context, spectrum: str, te: str, ne: str, tgas: str, model: str, from_: str | None, to: str | None,
             medium: str, instrument_fwhm: str, path_length: str | None, geometry: str, loss_rate: str,
             forbidden_omega: float | None, broadening: str, perturber: str | None, pressure: str | None,
             cool_layer: str | None, element_density: str | None, cutoff_method: str, top: int, fmt: str,
             output: str | None, plot: str | None, spectrum_file: str | None, points: int | None) -> None:
    """Predicted emission of SPECTRUM in a discharge: line intensities, spectrum, colour, UV shares.

    --model lte (default): populations follow Boltzmann at the electron
    temperature and Saha with the next ion. --model cr: the collisional-radiative
    steady state (electron collisions, radiative decay with escape factors over
    --length, recombination, metastable --loss-rate); it needs the species'
    oscillator strengths and ionization energy. Either way the report gives
    McWhirter's LTE criterion and whether it holds. Lines are optically thin
    unless --length is given. rel_intensity is each line's power relative to the
    strongest in the window; photon_share its fraction of the photons emitted in
    the window.

    \b
    Examples:
      levels emission "H I" --te 1.0eV --ne 1e19m-3 --tgas 600K --from 380nm --to 700nm --plot h.html
      levels emission "H I" --te 1eV --ne 1e17m-3 --model cr --length 0.01m --loss-rate 1e4 --format json
    """
    from levels.service.contract import EMISSION_COLUMNS, LINE_HEADINGS, LINE_UNITS
    from levels.service.vocabulary import air_formula_description
    from levels.units import density_m3, parse_quantity, temperature_k, wavelength_nm

    require_existing_store(obj)
    output_path(output)
    output_path(plot, "--plot")
    output_path(spectrum_file, "--spectrum")
    from_nm, to_nm = _window(from_, to, medium)
    result = obj.catalog.emission(
        spectrum, te_k=temperature_k(te), ne_m3=density_m3(ne), tgas_k=temperature_k(tgas),
        from_nm=from_nm, to_nm=to_nm, medium=medium,
        instrument_fwhm_nm=wavelength_nm(instrument_fwhm) if instrument_fwhm.strip() not in ("0", "0nm") else 0.0,
        path_length_m=parse_quantity(path_length, "length") if path_length else None,
        element_density_m3=density_m3(element_density) if element_density else None, cutoff_method=cutoff_method,
        grid_points=points, model=model, loss_rate_per_s=_rate_option(loss_rate, "--loss-rate"), geometry=geometry,
        broadening=broadening, perturber=perturber,
        pressure_pa=parse_quantity(pressure, "pressure") if pressure else None,
        cool_layer_m=parse_quantity(cool_layer, "length") if cool_layer else None, forbidden_omega=forbidden_omega)
    provenance = obj.catalog.provenance(
        f"emission {spectrum}; model {model}; te {te}; ne {ne}; tgas {tgas}; window {from_ or '-'}..{to or '-'} "
        f"{medium}; length {path_length or 'none (optically thin)'}",
        result.conditions["datasets"], model=result.conditions["model"], cutoff=result.conditions["cutoff"],
        air_formula=air_formula_description("iau2000"))
    provenance = complete_provenance(provenance, result.lines)
    if result.warnings and any(w.startswith("CAUTION") for w in result.warnings):
        provenance["caution"] = result.warnings[0]
    if fmt == "json":
        payload = result.report()
        payload["lines"] = [{c: r.get(c) for c in EMISSION_COLUMNS} for r in result.lines]
        payload["provenance"] = provenance
        _echo_json(payload, output)
    elif fmt in ("csv", "ecsv") or output:
        units = dict(LINE_UNITS)
        text = format_table(result.lines, EMISSION_COLUMNS, "csv" if fmt == "table" else fmt, provenance, units=units)
        if output:
            output_path(output)
            write_atomic(output, text)
            click.echo(f"wrote {len(result.lines)} lines to {output}", err=True)
        else:
            click.echo(text, nl=False)
    if fmt == "table":
        c = result.conditions
        click.echo(f"{spectrum}: Te {c['te_k']:.0f} K, ne {c['ne_m3']:.3g} m-3, Tgas {c['tgas_k']:.0f} K; "
                   f"{len(result.lines)} lines with known A in the window")
        click.echo(f"model: {model} - {c['model']}")
        click.echo(f"validity: {result.validity['text']}")
        click.echo(f"cutoff: {c['cutoff']}")
        shown = result.lines[:top]
        click.echo(text_table(shown, ("lower", "upper", "air_nm", "vacuum_nm", "a_per_s", "rel_intensity",
                                             "photon_share"),
                                     headings={**LINE_HEADINGS, "rel_intensity": "rel. intensity",
                                               "photon_share": "photon share"}), nl=False)
        m = result.metrics
        cct = "n/a (far from the Planckian locus)" if m["cct_k"] is None else f"{m['cct_k']:.0f} K, Duv {m['duv']:+.4f}"
        click.echo(f"colour ({model} populations): CIE 1931 x {m['cie_x']:.4f}, y {m['cie_y']:.4f}; "
                   f"CIE 1976 u' {m['cie_u_prime']:.4f}, v' {m['cie_v_prime']:.4f}; CCT {cct}")
        click.echo(f"luminous efficacy of radiation {m['efficacy_lm_per_w']:.1f} lm/W; power shares: "
                   f"UV-C {m['share_uv_c']:.2%}, UV-B {m['share_uv_b']:.2%}, UV-A {m['share_uv_a']:.2%}, "
                   f"visible {m['share_visible']:.2%}, IR {m['share_ir']:.2%}")
        click.echo("  (bands as defined: UV-A 315-400 nm and visible 380-780 nm overlap at 380-400 nm, so the shares "
                   "can add up to more than 100 %)")
        if model == "cr":
            rows = [p for p in result.populations if p["departure"] is not None][:top]
            click.echo("populations per ground-level population (lowest levels):")
            click.echo(text_table(rows, ("label", "energy_cm1", "population_rel", "departure"),
                                         headings={"label": "level", "energy_cm1": "energy [cm-1]",
                                                   "population_rel": "n/n(ground)", "departure": "departure b"}),
                       nl=False)
    if plot:
        from levels.figures import spectrum_figure, write_html

        title = (f"{spectrum} at Te {result.conditions['te_k']:.0f} K, ne {result.conditions['ne_m3']:.2g} m⁻³, "
                 f"{model.upper()} populations")
        output_path(plot, "--plot")
        write_html(spectrum_figure(result.grid_nm, result.spectrum, result.lines, medium=medium, title=title,
                                   quantity=result.spectrum_quantity, unit=result.spectrum_unit), plot, title)
        click.echo(f"wrote the interactive spectrum to {plot}", err=True)
    if spectrum_file:
        column = result.spectrum_quantity.replace(" ", "_")  # emission_coefficient or spectral_radiance
        rows = [{"wavelength_nm": float(x), column: float(y)} for x, y in zip(result.grid_nm, result.spectrum)]
        output_path(spectrum_file, "--spectrum")
        write_atomic(spectrum_file, format_table(rows, ("wavelength_nm", column), "csv",
                                                 {**provenance, "units": f"{column} in {result.spectrum_unit}; "
                                                                         f"wavelength in {medium}"}))
        click.echo(f"wrote {len(rows)} spectrum points to {spectrum_file}", err=True)
    for text in result.warnings:
        click.echo(("" if text.startswith("CAUTION") else "warning: ") + text, err=True)


def _rate_option(text: str, name: str) -> float:
    """A rate in s-1 from '1e4', '1e4s-1' or '1e4/s'; UnitError naming the option otherwise."""
    from levels.errors import UnitError

    raw = text.strip()
    for suffix in ("s-1", "s^-1", "/s", "Hz"):
        if raw.endswith(suffix):
            raw = raw[: -len(suffix)].strip()
            break
    try:
        value = float(raw)
    except ValueError:
        raise UnitError(f"{name}: expected a rate in s-1 such as 1e4 or 1e4s-1, got {text!r}") from None
    return value


@main.command()
@click.option("--n-max", type=int, default=20, show_default=True, help="n-max of the computed one-electron ions.")
@click.pass_obj
@reports_errors
def demo(obj: Context, n_max: int) -> None:
    """Build the invented demo store and print what to open.

    Computes H I, D I and He II, imports the invented lithium-cell sample
    (levels and lines) and fits its series limit. All demo data is INVENTED
    (seed_data/demo/); it describes no real sample or lamp.

    \b
    Example:
      levels --db demo.sqlite demo && levels --db demo.sqlite serve
    """
    from levels.demo import build_demo

    for line in build_demo(obj.catalog, n_max=n_max):
        click.echo(line)


@main.command()
@click.option("--host", default="127.0.0.1", show_default=True, help="Address to bind (loopback by default).")
@click.option("--port", type=int, default=8150, show_default=True)
@click.option("--threads", type=int, default=4, show_default=True, help="Worker threads of the WSGI server.")
@click.pass_obj
@reports_errors
def serve(obj: Context, host: str, port: int, threads: int) -> None:
    """Run the web site under a production WSGI server (waitress).

    Binding an address other than loopback needs an API token
    (LEVELS_API_TOKEN) so writes are protected; it is refused otherwise.

    \b
    Example:
      levels --db demo.sqlite serve --port 8150
    """
    import webui

    obj.catalog.check_ready()
    click.echo(f"serving {obj.catalog.display_url} at http://{host}:{port}/ (Ctrl-C stops)")
    webui.serve(host=host, port=port, threads=threads, config={"LEVELS_DB": obj.catalog.url})


class _Progress:
    """A click progress bar per stage, shown only on a terminal."""

    def __init__(self, enabled: bool):
        self.enabled = enabled
        self.bars: dict[str, ProgressBar[int]] = {}
        self.done: dict[str, int] = {}

    def __call__(self, stage: str, done: int, total: int) -> None:
        if not self.enabled or total <= 0:
            return
        if stage not in self.bars:
            bar = click.progressbar(length=total, label=stage, file=sys.stderr)
            bar.__enter__()
            self.bars[stage], self.done[stage] = bar, 0
        bar = self.bars[stage]
        bar.update(done - self.done[stage])
        self.done[stage] = done
        if done >= total:
            bar.__exit__(None, None, None)

    def close(self) -> None:
        for bar in self.bars.values():
            bar.__exit__(None, None, None)
        self.bars.clear()


def progress_bars() -> _Progress:
    """Progress bars on standard error when it is a terminal (silent otherwise)."""
    return _Progress(sys.stderr.isatty())


@main.command()
@click.argument("spectrum")
@click.option("--mass-number", type=click.IntRange(1, 300),
              help="Isotope mass number (default: D/T from the symbol, else the most abundant).")
@click.option("--n-max", type=int, default=20, show_default=True, help="Highest principal quantum number (1..1000).")
@click.option("--fine-structure/--no-fine-structure", default=True, show_default=True,
              help="Levels n l j, or nl terms with the j components merged.")
@click.option("--no-qed", is_flag=True, help="Leave out self energy, vacuum polarisation and higher-order terms.")
@click.option("--no-recoil", is_flag=True, help="Infinitely heavy nucleus.")
@click.option("--no-finite-size", is_flag=True, help="Point nucleus.")
@click.option("--max-store-gb", type=click.FloatRange(min=0.0, max=1e6, min_open=True), default=2.0,
              show_default=True, callback=_positive_finite,
              help="Refuse a computation whose rows would need more than this.")
@click.pass_obj
@reports_errors
def hydrogenic(obj: Context, spectrum: str, mass_number: int | None, n_max: int, fine_structure: bool,
               no_qed: bool, no_recoil: bool, no_finite_size: bool, max_store_gb: float) -> None:
    """Compute a one-electron ion (H I, D I, He II, ... U XCII) into the store.

    Energies: Dirac with recoil, QED (self energy, vacuum polarisation) and
    finite nuclear size; all E1 lines with line strength, f and A; lifetimes
    (2s with its two-photon decay) and Landé g. Re-running replaces the
    computed dataset in one transaction.

    \b
    Example:
      levels hydrogenic "He II" --n-max 30
      levels hydrogenic "D I" --no-fine-structure
    """
    from levels.service.vocabulary import hydrogenic_corrections

    corrections = hydrogenic_corrections(recoil=not no_recoil, qed=not no_qed, finite_size=not no_finite_size)
    progress = progress_bars()
    try:
        report = obj.catalog.compute_hydrogenic(spectrum, mass_number=mass_number, n_max=n_max,
                                                fine_structure=fine_structure, corrections=corrections,
                                                max_store_bytes=int(max_store_gb * 1e9), progress=progress)
    finally:
        progress.close()
    applied = ", ".join(k for k, v in report["corrections"].items() if v) or "none"
    click.echo(f"computed {report['spectrum']} (A = {report['mass_number']}): {report['levels']} levels, "
               f"{report['lines']} E1 lines into dataset {report['dataset']!r}")
    click.echo(f"ionization energy {report['ionization_cm1']:.6f} cm-1; corrections: {applied}; "
               f"nuclear radius {report['charge_radius_fm']:.4f} fm ({report['radius_source']})")


# store maintenance commands (check, export-store, import-store, history, retract, restore)
from levels.cli import rates as _rates_commands  # noqa: E402,F401  (rates of many-electron species)
from levels.cli import spectra as _spectra_commands  # noqa: E402,F401  (peaks, calibrate, diagnose)
from levels.cli import store as _store_commands  # noqa: E402,F401  (registers its commands on ``main``)


def run() -> None:  # pragma: no cover - console entry for ``python -m levels``
    main()


if __name__ == "__main__":  # pragma: no cover
    main()
