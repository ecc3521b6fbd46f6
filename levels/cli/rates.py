"""The ``levels rates`` command (registered on :data:`levels.cli.main`); the work is in :mod:`levels.service.rates`."""

from __future__ import annotations

import json

import click

from levels.cli import Context, complete_provenance, emit, main, output_path, reports_errors, text_table
from levels.io.tables import write_atomic


@main.command()
@click.argument("spectrum")
@click.option("--method", type=click.Choice(["auto", "single", "coupled"]), default="auto", show_default=True,
              help="single: one electron outside closed shells; coupled: open core plus one electron; "
                   "auto: per configuration.")
@click.option("--dataset", "datasets", multiple=True, metavar="NAME",
              help="Use the levels of these datasets, in this order of precedence (repeat the option).")
@click.option("--format", "fmt", type=click.Choice(["table", "csv", "json", "ecsv"]), default="table",
              show_default=True, help="csv/ecsv: the lines; json: the whole report (lines, lifetimes, skipped).")
@click.option("--output", type=click.Path(dir_okay=False), help="Write the report (csv/json/ecsv) to this file.")
@click.option("--top", type=int, default=20, show_default=True, help="Lines printed in the table.")
@click.pass_obj
@reports_errors
def rates(obj: Context, spectrum: str, method: str, datasets: tuple[str, ...], fmt: str, output: str | None,
          top: int) -> None:
    """Compute E1 rates (E2/M1 for metastable levels) of SPECTRUM from its stored levels.

    The rates are stored as the computed dataset "rates <spectrum> A=<mass>"
    (replaced on a re-run, in one transaction); measured A values keep
    precedence. Afterwards 'levels lines' shows A, f and S, 'levels show' the
    lifetimes, and 'levels emission' works for the species. The ionization
    limit is the stored one, or one fitted here from the species' series.
    Every rate carries a relative uncertainty (a_rel_unc); levels the method
    cannot treat are listed as skipped, with the reason.

    \b
    Example:
      levels rates "Na I"
      levels rates "Li I" --method single --format json --output li-rates.json
    """
    from levels.service.rates import LIFETIME_COLUMNS, RATES_COLUMNS, compute_rates

    output_path(output)
    if fmt == "table" and output:
        raise click.UsageError("--output needs --format csv, json or ecsv")
    report = compute_rates(obj.catalog, spectrum, method=method, datasets=list(datasets) or None)
    # the same header as every export: tool, store, the input datasets, query, air formula, then the method
    provenance = complete_provenance({"store": obj.catalog.display_url, **report.provenance()}, report.lines)
    if fmt == "json":
        payload = {"provenance": provenance, **report.as_dict()}
        text = json.dumps(payload, indent=1, ensure_ascii=False) + "\n"
        if output:
            write_atomic(output, text)
            click.echo(f"wrote {output}", err=True)
        else:
            click.echo(text, nl=False)
    elif fmt in ("csv", "ecsv"):
        emit(report.lines, RATES_COLUMNS, fmt, provenance, output=output)
    else:
        click.echo(f"{report.spectrum}: {len(report.lines)} lines, {len(report.levels)} lifetimes, "
                   f"{len(report.skipped)} levels skipped; method {report.method}")
        click.echo(f"ionization limit {report.ionization_cm1:.3f} cm-1 ({report.ionization_source})")
        click.echo(f"stored as computed dataset {report.saved_as!r}")
        shown = sorted(report.lines, key=lambda r: -r["a_per_s"])[:top]
        click.echo(text_table(shown, RATES_COLUMNS, headings={
            "vacuum_nm": "λ vac [nm]", "a_per_s": "A [s-1]", "a_rel_unc": "rel. unc.", "f_abs": "f",
            "line_strength_au": "S [au]"}), nl=False)
        if len(report.lines) > top:
            click.echo(f"... {len(report.lines) - top} weaker lines (--format csv lists all)")
        click.echo(text_table(report.levels, LIFETIME_COLUMNS,
                                     headings={"lifetime_s": "lifetime [s]", "lifetime_rel_unc": "rel. unc."}),
                   nl=False)
    for item in report.skipped:
        click.echo(f"skipped {item['label']}: {item['reason']}", err=True)
    for text in report.warnings:
        click.echo(f"warning: {text}", err=True)
