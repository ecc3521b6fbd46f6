"""Measured-spectrum commands of the ``levels`` command line: ``peaks``, ``calibrate``, ``diagnose``.

Registered on :data:`levels.cli.main`; the work is in :mod:`levels.service.spectra`.
"""

from __future__ import annotations

import click

from levels.cli import (
    TABLE_FORMATS,
    Context,
    _echo_json,
    _warnings,
    emit,
    main,
    output_path,
    reports_errors,
    text_table,
)
from levels.io.tables import format_table, write_atomic

LAMP_CAUTION = (
    "CAUTION: spectral lamps and discharge tubes run at high voltage and many emit ultraviolet light; "
    "use the lamp's own enclosure and power supply, keep the UV away from eyes and skin, let tubes cool "
    "before handling, and follow local codes and licensed practice for high-voltage and UV equipment."
)


def _plot(figure: dict, path: str | None, title: str) -> None:
    if path:
        from levels.figures import write_html

        output_path(path, "--plot")
        write_html(figure, path, title)
        click.echo(f"wrote the interactive figure to {path}", err=True)


@main.command()
@click.argument("spectrum_file", type=click.Path(exists=True, dir_okay=False))
@click.option(
    "--medium",
    type=click.Choice(["air", "vacuum"]),
    help="Medium of the output wavelengths (default: what the file or calibration says, else air).",
)
@click.option(
    "--calibration",
    "calibration_file",
    type=click.Path(exists=True, dir_okay=False),
    help="Calibration JSON from 'levels calibrate' (for a pixel axis).",
)
@click.option("--min-snr", type=float, default=5.0, show_default=True, help="Smallest peak height over the noise.")
@click.option(
    "--profile",
    type=click.Choice(["gauss", "voigt"]),
    default="gauss",
    show_default=True,
    help="Line profile fitted to each peak (blended peaks are fitted together).",
)
@click.option("--format", "fmt", type=click.Choice(TABLE_FORMATS), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write to this file (atomically) instead of printing.")
@click.option("--plot", type=click.Path(dir_okay=False), help="Write the spectrum with the fit and residuals (HTML).")
@click.pass_obj
@reports_errors
def peaks(
    obj: Context,
    spectrum_file: str,
    medium: str | None,
    calibration_file: str | None,
    min_snr: float,
    profile: str,
    fmt: str,
    output: str | None,
    plot: str | None,
) -> None:
    """Find and fit the peaks of a measured spectrum (nothing is written to the store).

    SPECTRUM_FILE is a CSV or TSV with wavelength_nm (or pixel), intensity and
    optionally intensity_unc ('#' comments; '# medium: vacuum' names the
    medium), or a one-dimensional FITS spectrum. The baseline is a clipped
    running median, the noise comes from intensity_unc or the data, peaks above
    --min-snr are fitted with uncertainties from the fit covariance. The CSV
    output is a peaks file for 'levels identify' and 'levels diagnose'.

    \b
    Example:
      levels peaks cell-amber.csv --profile voigt --format csv --output cell-amber-peaks.csv --plot cell-amber.html
      levels peaks lamp-frame.csv --calibration cal.json --min-snr 8
    """
    from levels.service import spectra as service

    result = service.find_peaks(
        spectrum_file, medium=medium, calibration_file=calibration_file, min_snr=min_snr, profile=profile
    )
    # the peaks come from the file, not the store: the header names the file as given and its digest
    provenance = {
        "tool": obj_version(),
        "store": "not used (peaks come from the spectrum file)",
        **result.provenance,
        "query": f"peaks {spectrum_file}; profile {profile}; min S/N {min_snr:g}"
        + (f"; calibration {calibration_file}" if calibration_file else ""),
        "input": spectrum_file,
    }
    if calibration_file:
        provenance["calibration"] = calibration_file
    emit(
        result.rows,
        service.PEAK_COLUMNS,
        fmt,
        provenance,
        output=output,
        units=service.PEAK_UNITS,
        headings={
            "peak_nm": "peak [nm]",
            "peak_unc_nm": "unc [nm]",
            "fwhm_nm": "FWHM [nm]",
            "area_unc": "area unc",
            "snr": "S/N",
            "fwhm_unc_nm": "FWHM unc [nm]",
        },
    )
    if fmt == "table":
        click.echo(f"{len(result.rows)} peaks; noise {result.fit.noise:.4g}; medium {result.medium}", err=True)
    _warnings(result.warnings)
    axis = "wavelength [nm]" if result.data.axis == "wavelength_nm" else "pixel"
    if plot:
        from levels.figures import peak_fit_figure

        title = f"{result.data.source}: {len(result.rows)} peaks ({profile})"
        _plot(
            peak_fit_figure(
                result.data.x, result.data.intensity, result.model(), result.rows, axis_title=axis, title=title
            ),
            plot,
            title,
        )


def obj_version() -> str:
    from levels import __version__

    return f"levels {__version__}"


@main.command()
@click.argument("lamp_file", type=click.Path(exists=True, dir_okay=False))
@click.option(
    "--species",
    "species",
    multiple=True,
    required=True,
    metavar="SPECTRUM",
    help="A species whose stored lines the lamp shows (repeat: --species 'H I' --species 'D I').",
)
@click.option("--degree", type=int, default=3, show_default=True, help="Degree of the dispersion polynomial.")
@click.option(
    "--medium",
    type=click.Choice(["air", "vacuum"]),
    default="air",
    show_default=True,
    help="Medium of the calibrated wavelengths (the reference lines are taken in it).",
)
@click.option("--from", "from_", metavar="WAVELENGTH", help="Rough wavelength of the first sample (pixel axis).")
@click.option("--to", metavar="WAVELENGTH", help="Rough wavelength of the last sample (pixel axis).")
@click.option("--tolerance", metavar="WAVELENGTH", help="First matching tolerance (default from the peak widths).")
@click.option("--min-snr", type=float, default=5.0, show_default=True)
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write the calibration JSON to this file.")
@click.option("--plot", type=click.Path(dir_okay=False), help="Write the calibration residuals (HTML).")
@click.pass_obj
@reports_errors
def calibrate(
    obj: Context,
    lamp_file: str,
    species: tuple[str, ...],
    degree: int,
    medium: str,
    from_: str | None,
    to: str | None,
    tolerance: str | None,
    min_snr: float,
    fmt: str,
    output: str | None,
    plot: str | None,
) -> None:
    """Wavelength calibration from a reference-lamp spectrum (pixel or rough wavelength axis).

    The lamp's peaks are matched to the stored lines of the named species
    (computed H I and D I, or the species of a lamp sample you imported); a
    dispersion polynomial wavelength = sum c_k pixel^k is fitted with outlier
    rejection. The JSON (--output) is what 'levels peaks --calibration' reads.
    Air or vacuum is chosen with --medium and recorded in the file.

    \b
    Example:
      levels calibrate lamp-frame.csv --species "H I" --species "D I" --from 380nm --to 700nm --output cal.json
    """
    from levels.service import spectra as service
    from levels.units import wavelength_nm

    result = service.calibrate_lamp(
        obj.catalog,
        lamp_file,
        species=list(species),
        degree=degree,
        medium=medium,
        from_nm=wavelength_nm(from_) if from_ else None,
        to_nm=wavelength_nm(to) if to else None,
        tolerance_nm=wavelength_nm(tolerance) if tolerance else None,
        min_snr=min_snr,
    )
    report = result.report
    if output:
        _echo_json(report, output)
    if fmt == "json" and not output:
        _echo_json(report, None)
    elif fmt == "table":
        click.echo(
            f"degree {report['degree']} dispersion from {len(report['lines_used'])} lines "
            f"({len(report['rejected'])} rejected): RMS {report['rms_nm'] * 1e3:.3f} pm "
            f"= {report['rms_pixel']:.3f} of a {'pixel' if report['axis'] == 'pixel' else 'axis unit'}; "
            f"wavelengths in {medium}"
        )
        click.echo("coefficients (ascending powers): " + ", ".join(f"{c:.10g}" for c in report["coefficients"]))
        rows = [dict(r, state="used") for r in report["lines_used"]] + [
            dict(r, state="rejected") for r in report["rejected"]
        ]
        click.echo(
            text_table(
                sorted(rows, key=lambda r: r["pixel"]),
                ("pixel", "line_nm", "residual_nm", "spectrum", "lower", "upper", "components", "state"),
                headings={"line_nm": "line [nm]", "residual_nm": "residual [nm]"},
            ),
            nl=False,
        )
    _warnings(report["warnings"])
    click.echo(LAMP_CAUTION, err=True)
    if plot:
        from levels.figures import calibration_figure

        title = f"calibration of {report['source']} ({', '.join(species)}; degree {report['degree']})"
        _plot(calibration_figure(report, title=title), plot, title)


@main.command()
@click.argument("species")
@click.argument("peaks_file", type=click.Path(exists=True, dir_okay=False))
@click.option("--tolerance", default="0.01nm", show_default=True, help="Smallest match window around a peak.")
@click.option(
    "--instrument-fwhm",
    default="0nm",
    show_default=True,
    metavar="WAVELENGTH",
    help="Gaussian instrument FWHM, removed from the Balmer-line width.",
)
@click.option(
    "--tgas",
    default="300K",
    show_default=True,
    metavar="TEMPERATURE",
    help="Emitter temperature for the Doppler width removed from the Balmer-line width.",
)
@click.option(
    "--ne", metavar="DENSITY", help="Electron density for a Saha-Boltzmann plot when no Balmer line gives one."
)
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@click.option("--output", type=click.Path(dir_okay=False), help="Write the JSON report to this file.")
@click.option(
    "--lines-output",
    type=click.Path(dir_okay=False),
    help="Write the identified, unblended lines as a measured-lines file for 'levels import'.",
)
@click.option("--plot", type=click.Path(dir_okay=False), help="Write the Boltzmann plot (HTML).")
@click.pass_obj
@reports_errors
def diagnose(
    obj: Context,
    species: str,
    peaks_file: str,
    tolerance: str,
    instrument_fwhm: str,
    tgas: str,
    ne: str | None,
    fmt: str,
    output: str | None,
    lines_output: str | None,
    plot: str | None,
) -> None:
    """Electron temperature and density from the peaks of SPECIES (comma list), and the LTE check.

    PEAKS_FILE is what 'levels peaks' writes (or peak_nm with intensity).
    The peaks are identified among the stored lines; lines with known A give a
    Boltzmann plot (Saha-Boltzmann when two ionization stages and ne are
    known); the Stark width of H-alpha or H-beta gives ne (Gigosos, González &
    Cardeñoso 2003); McWhirter's criterion checks LTE. Nothing is written to the
    store; --lines-output writes a file to commit with 'levels import'.

    \b
    Example:
      levels diagnose "H I" cell-amber-peaks.csv --instrument-fwhm 0.05nm --tgas 1000K --format json
      levels diagnose "H I" cell-amber-peaks.csv --lines-output cell-amber-lines.csv
      levels import cell-amber-lines.csv --sample cell-amber
    """
    from levels.service import spectra as service
    from levels.units import density_m3, temperature_k, wavelength_nm

    names = [s.strip() for s in species.split(",") if s.strip()]
    result = service.diagnose(
        obj.catalog,
        names,
        peaks_file,
        tolerance_nm=wavelength_nm(tolerance),
        instrument_fwhm_nm=wavelength_nm(instrument_fwhm) if instrument_fwhm.strip() not in ("0", "0nm") else 0.0,
        tgas_k=temperature_k(tgas),
        ne_m3=density_m3(ne) if ne else None,
    )
    report = result.report
    if fmt == "json" or output:
        _echo_json(report, output)
    if fmt == "table":
        te = "n/a" if report["te_k"] is None else f"{report['te_k']:.0f} ± {report['te_unc_k']:.0f} K"
        if report["ne_m3"] is None:
            ne_text = "n/a"
        else:
            unc = f" ± {report['ne_unc_m3']:.2g}" if report["ne_unc_m3"] else ""
            ne_text = f"{report['ne_m3']:.3g}{unc} m-3"
        click.echo(f"Te {te} ({report['te_method'] or 'no temperature'}); ne {ne_text}")
        if report["ne_method"]:
            click.echo(f"ne from: {report['ne_method']}")
        v = report["validity"]
        if v["lte_min_ne_m3"] is not None:
            holds = {True: "holds", False: "does not hold", None: "cannot be judged without ne"}[v["lte_holds"]]
            click.echo(f"LTE (McWhirter): needs ne >= {v['lte_min_ne_m3']:.3g} m-3; {holds}")
        click.echo(
            text_table(
                report["boltzmann"],
                ("spectrum", "peak_nm", "lower", "upper", "upper_cm1", "ln_y", "components", "outlier"),
                headings={"peak_nm": "peak [nm]", "upper_cm1": "upper [cm-1]", "ln_y": "ln(Iλ/gA)"},
            ),
            nl=False,
        )
        unmatched = [r for r in report["identified"] if r["note"] == "unmatched"]
        if unmatched:
            click.echo(f"{len(unmatched)} peak(s) unmatched: " + ", ".join(f"{r['peak_nm']:.4f}" for r in unmatched))
    if lines_output:
        output_path(lines_output, "--lines-output")
        write_atomic(
            lines_output,
            format_table(
                result.measured_lines,
                service.MEASURED_LINE_COLUMNS,
                "csv",
                {
                    "tool": obj_version(),
                    "query": f"diagnose {species} {peaks_file}",
                    "note": "identified unblended peaks; commit with 'levels import'",
                },
            ),
        )
        click.echo(f"wrote {len(result.measured_lines)} identified lines to {lines_output}", err=True)
    _warnings(report["warnings"])
    if plot:
        from levels.figures import boltzmann_figure

        title = f"Boltzmann plot, {', '.join(names)} ({peaks_file})"
        _plot(boltzmann_figure(report, title=title), plot, title)
