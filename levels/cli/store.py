"""Store maintenance commands of the ``levels`` command line (registered on :data:`levels.cli.main`).

``check``, ``export-store``, ``import-store``, ``history``, ``retract`` and
``restore``; the work itself is in :mod:`levels.maintenance`.
"""

from __future__ import annotations

import json
import sys

import click

from levels.cli import Context, main, progress_bars, reports_errors, require_existing_store, text_table
from levels.io.tables import printable


@main.command()
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@click.pass_obj
@reports_errors
def check(obj: Context, fmt: str) -> None:
    """Check the store: the database's own integrity check, constraints and invariants.

    Runs SQLite's integrity_check and foreign_key_check (or, on PostgreSQL, a
    look at constraints, indexes and triggers), re-checks every constraint on
    the rows, and the project's rules: each line joins two levels of its own
    species, lower below upper, finite energies, wavenumber = 1e7 / vacuum
    wavelength, no empty datasets, schema at the current revision. Prints the
    rows per table and every problem; exits with status 1 if there is one.

    \b
    Example:
      levels --db lab.sqlite check
    """
    from levels.service import maintenance

    require_existing_store(obj)
    report = maintenance.check(obj.catalog)
    if fmt == "json":
        click.echo(json.dumps(report.as_dict(), indent=1, ensure_ascii=False))
    else:
        click.echo(f"store {obj.catalog.display_url} ({report.backend}), schema {report.revision or 'none'} "
                   f"(this levels: {report.head})")
        rows = [{"table": name, "rows": "missing" if n < 0 else n} for name, n in report.counts.items()]
        click.echo(text_table(rows, ("table", "rows")), nl=False)
        for item in report.checks:
            click.echo(f"checked: {item}")
        for problem in report.problems:
            click.echo(f"problem: {printable(problem)}")
        n = len(report.problems)
        click.echo("no problems found" if n == 0 else f"{n} problem{'s' if n != 1 else ''} found")
    if not report.ok:
        sys.exit(1)


@main.command(name="export-store")
@click.argument("file", type=click.Path(dir_okay=False))
@click.pass_obj
@reports_errors
def export_store(obj: Context, file: str) -> None:
    """Write the whole store (every table, with ids) to FILE as levels-store JSON lines.

    The format is open and documented (docs/store-format.md): a header line,
    one JSON object per row, and a SHA-256 checksum line. FILE ending in .gz is
    compressed. The file is written atomically and depends only on the store's
    content. Use it for backups and to move a store between SQLite and
    PostgreSQL with 'levels import-store'.

    \b
    Example:
      levels --db lab.sqlite export-store lab-2026-05-01.levels.jsonl.gz
    """
    from levels.service import maintenance

    require_existing_store(obj)
    progress = progress_bars()
    try:
        summary = maintenance.export_store(obj.catalog, file, progress=progress)
    finally:
        progress.close()
    click.echo(f"exported {summary.total} rows ({_counts(summary.counts)}) to {file}")
    click.echo(f"schema {summary.schema_revision}; sha256 {summary.sha256}")


@main.command(name="import-store")
@click.argument("file", type=click.Path(exists=True, dir_okay=False))
@click.option("--no-audit", is_flag=True,
              help="Do not add an 'import-store' entry to the audit log (the copy is then exact).")
@click.pass_obj
@reports_errors
def import_store(obj: Context, file: str, no_audit: bool) -> None:
    """Fill an empty store from FILE written by 'levels export-store', all or nothing.

    The checksum and schema revision are verified first; a store that already
    holds rows is refused. Every row goes in with its id in one transaction;
    on PostgreSQL the id sequences continue after the largest id.

    \b
    Example:
      levels --db postgresql+psycopg://lab@dbhost/levels import-store lab.levels.jsonl.gz
    """
    from levels.service import maintenance

    summary = maintenance.import_store(obj.catalog, file, audit=not no_audit)
    click.echo(f"imported {summary.total} rows ({_counts(summary.counts)}) into {obj.catalog.display_url}")
    click.echo(f"schema {summary.schema_revision}; sha256 {summary.sha256} verified")


def _counts(counts: dict) -> str:
    return ", ".join(f"{name} {n}" for name, n in counts.items())


@main.command()
@click.option("--limit", type=click.IntRange(min=0), default=50, show_default=True,
              help="At most this many entries (0: all).")
@click.option("--action", metavar="ACTION", help="Only this action (import-levels, retract-dataset, ...).")
@click.option("--target", metavar="TEXT", help="Only entries whose target contains TEXT.")
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@click.pass_obj
@reports_errors
def history(obj: Context, limit: int, action: str | None, target: str | None, fmt: str) -> None:
    """List the audit log, newest first: who wrote what, when.

    \b
    Example:
      levels history --limit 20
      levels history --action retract-dataset --format json
    """
    from levels.service import maintenance

    require_existing_store(obj)
    rows = maintenance.history(obj.catalog, limit=limit or None, action=action, target=target)
    if fmt == "json":
        click.echo(json.dumps(rows, indent=1, ensure_ascii=False))
        return
    shown = [{**r, "detail": json.dumps(r["detail"], ensure_ascii=False, sort_keys=True)} for r in rows]
    click.echo(text_table(shown, maintenance.HISTORY_COLUMNS), nl=False)


def _print_state_change(result: dict, verb: str) -> None:
    derived = ", ".join(f"{name}: {n} lines" for name, n in result["derived_lines"].items()) or "no species"
    click.echo(f"{verb} dataset {result['dataset']!r} (id {result['dataset_id']}, {result['kind']}); "
               f"derived lines rebuilt ({derived})")
    for text in result["warnings"]:
        click.echo(f"warning: {text}", err=True)


@main.command()
@click.argument("dataset")
@click.option("--reason", default="", help="Why (kept in the audit log).")
@click.pass_obj
@reports_errors
def retract(obj: Context, dataset: str, reason: str) -> None:
    """Hide the measured or imported DATASET (name or id) from default queries; nothing is deleted.

    The derived lines of its species are rebuilt and the retraction is logged.
    'levels restore DATASET' brings it back; naming it with --dataset still shows it.

    \b
    Example:
      levels retract li-cell-amber/levels --reason "cell contaminated"
    """
    from levels.service import maintenance

    require_existing_store(obj)
    _print_state_change(maintenance.retract_dataset(obj.catalog, dataset, reason=reason), "retracted")


@main.command()
@click.argument("dataset")
@click.option("--reason", default="", help="Why (kept in the audit log).")
@click.pass_obj
@reports_errors
def restore(obj: Context, dataset: str, reason: str) -> None:
    """Bring a retracted DATASET back into default queries (and rebuild its species' derived lines).

    \b
    Example:
      levels restore li-cell-amber/levels
    """
    from levels.service import maintenance

    require_existing_store(obj)
    _print_state_change(maintenance.restore_dataset(obj.catalog, dataset, reason=reason), "restored")
