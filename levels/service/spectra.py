"""From a measured spectrum to plasma parameters: peaks, wavelength calibration, diagnostics.

Units of work on one store (the store is only read; nothing is written until
:func:`commit_lines`):

* :func:`find_peaks` - read a spectrum file, fit its peaks, map a pixel axis
  through a calibration, report rows ``peak_nm, peak_unc_nm, medium, fwhm_nm,
  area, area_unc, snr`` (+ ``fwhm_unc_nm``); ``area`` is intensity x nm for a
  wavelength axis and summed counts (intensity x pixel) for a pixel frame, which
  already integrate the line over wavelength;
* :func:`calibrate_lamp` - match the peaks of a reference lamp to the stored
  lines of its species and fit the dispersion polynomial;
* :func:`diagnose` - identify the peaks of a peaks file, Boltzmann (or
  Saha-Boltzmann) temperature, Stark electron density from H-alpha/H-beta,
  McWhirter check;
* :func:`commit_lines` - write the identified, unblended lines as a measured
  dataset (all-or-nothing, through the catalog's import).

The physics is in :mod:`levels.physics.diagnostics`; files are read by
:mod:`levels.io.spectra`.
"""

from __future__ import annotations

import hashlib
import math
import re
import warnings as _warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from levels.errors import InputFileError, NotFoundError, PhysicsInputError, Problem
from levels.io import records as records_io
from levels.io import spectra as spectra_io
from levels.io.tables import read_source
from levels.isotopes import isotope
from levels.notation import parse_spectrum
from levels.physics.diagnostics import boltzmann, calibration, peaks, stark
from levels.physics.discharge import validity as lte_validity
from levels.physics.lines import air
from levels.physics.plasma import spectrum as line_shapes
from levels.units import CM1_J, K_B

__all__ = [
    "PEAK_COLUMNS",
    "PeaksResult",
    "CalibrationResult",
    "DiagnosisResult",
    "find_peaks",
    "calibrate_lamp",
    "diagnose",
    "commit_lines",
    "MEASURED_LINE_COLUMNS",
]

#: output columns of ``levels peaks`` (the contract), then the width uncertainty
PEAK_COLUMNS = ("peak_nm", "peak_unc_nm", "medium", "fwhm_nm", "area", "area_unc", "snr", "fwhm_unc_nm")
PEAK_UNITS = {"peak_nm": "nm", "peak_unc_nm": "nm", "fwhm_nm": "nm", "fwhm_unc_nm": "nm"}
MEASURED_LINE_COLUMNS = (
    "spectrum",
    "lower",
    "upper",
    "wavelength_nm",
    "medium",
    "unc_nm",
    "intensity",
    "a_per_s",
    "note",
)
#: nominal temperature at which lamp lines are ranked by expected strength, K (1 eV; common practice, no source)
LAMP_RANKING_TE_K = 11604.5
#: second radiation constant hc/k, cm K
C2_CM_K = CM1_J / K_B


@dataclass
class PeaksResult:
    """Fitted peaks of one spectrum, with what a figure needs."""

    rows: list[dict]
    data: spectra_io.SpectrumData
    fit: peaks.PeakFit
    x_nm: np.ndarray | None
    medium: str
    warnings: list[str] = field(default_factory=list)
    #: where the peaks came from, for an export header (see :func:`peaks_provenance`)
    provenance: dict = field(default_factory=dict)

    def model(self) -> np.ndarray:
        """The fitted model on the file's axis."""
        return peaks.model_curve(self.data.x, self.fit)


@dataclass
class CalibrationResult:
    """A calibration report (the JSON contract) with the lamp's peaks and the dispersion."""

    report: dict
    peaks: PeaksResult
    dispersion: calibration.Dispersion


@dataclass
class DiagnosisResult:
    """The diagnose report (the JSON contract), the identified peaks and the importable lines."""

    report: dict
    identified: list[dict]
    measured_lines: list[dict]


# ----------------------------------------------------------------- peaks


def _convert_medium(values_nm: np.ndarray, source: str, target: str, air_formula: str) -> np.ndarray:
    if source == target:
        return values_nm
    if target == "air":
        return np.asarray(air.vacuum_to_air(values_nm, air_formula), dtype=float)
    return np.asarray(air.air_to_vacuum(values_nm, air_formula), dtype=float)


def find_peaks(
    path=None,
    *,
    content: bytes | None = None,
    source: str | None = None,
    medium: str | None = None,
    calibration_file=None,
    calibration_content: bytes | None = None,
    min_snr: float = 5.0,
    profile: str = "gauss",
    air_formula: str = "iau2000",
) -> PeaksResult:
    """Fit the peaks of a spectrum file (see the module docstring).

    Parameters
    ----------
    path : path, optional
        The spectrum file (or give ``content`` and ``source``).
    medium : {"air", "vacuum"}, optional
        Medium of the output wavelengths. Default: the medium the file (``# medium:``) or the
        calibration states, else air. When the file states another medium the wavelengths are
        converted (air formula ``air_formula``) and a warning says so.
    calibration_file : path, optional
        A calibration JSON (``levels calibrate``) for a pixel axis.
    min_snr : float
        Detection threshold (peak height over noise).
    profile : {"gauss", "voigt"}

    Raises
    ------
    InputFileError
        Bad spectrum or calibration file (file, line, field named).
    PhysicsInputError
        A pixel axis without a calibration, bad options.
    """
    if medium not in (None, "air", "vacuum"):
        raise PhysicsInputError(f"medium must be air or vacuum, not {medium!r}")
    # the bytes are read once: the digest in the export header is of exactly what was fitted
    if content is None:
        source, content = read_source(path, source)
    data = spectra_io.read_spectrum(content, source=source)
    cal = None
    cal_name, cal_bytes = None, None
    if calibration_file is not None or calibration_content is not None:
        if calibration_content is None:
            cal_name, cal_bytes = read_source(calibration_file, Path(calibration_file).name)
        else:
            cal_name, cal_bytes = "<calibration>", calibration_content
        cal = spectra_io.read_calibration(cal_bytes, source=cal_name)
    warnings: list[str] = []
    if data.axis == "pixel" and cal is None:
        raise PhysicsInputError(
            f"{data.source} has a pixel axis; give a calibration (--calibration CAL.json, made by "
            "'levels calibrate') to turn pixels into wavelengths"
        )
    if data.axis == "wavelength_nm" and cal is not None:
        warnings.append(f"{data.source} already has a wavelength axis; the calibration maps it as a rough axis")
    fit = peaks.find_and_fit(data.x, data.intensity, y_unc=data.intensity_unc, profile=profile, min_snr=min_snr)
    warnings.extend(fit.warnings)
    if cal is not None:
        coef = np.asarray(cal.coefficients)
        slope = (
            np.polynomial.polynomial.polyval(fit.centre, np.polynomial.polynomial.polyder(coef))
            if coef.size > 1
            else np.zeros_like(fit.centre)
        )
        centre = calibration.evaluate(coef, fit.centre)
        scale = np.abs(slope)
        x_nm = calibration.evaluate(coef, data.x)
        stated: str | None = cal.medium
        if cal.pixel_range and (data.x[0] < cal.pixel_range[0] - 1 or data.x[-1] > cal.pixel_range[1] + 1):
            warnings.append(
                "the spectrum reaches beyond the pixels the calibration was fitted on; wavelengths "
                "there are extrapolated"
            )
        if cal.rms_nm:
            warnings.append(
                f"peak_unc_nm is the fit's uncertainty alone; the calibration adds about "
                f"{cal.rms_nm:.2g} nm (its RMS residual)"
            )
    else:
        centre, scale, x_nm = fit.centre, np.ones_like(fit.centre), data.x
        stated = data.medium
    out_medium = medium or stated or "air"
    if stated is None and medium is None:
        warnings.append(
            f"{data.source} does not say in which medium its wavelengths are; taken as air "
            "(write '# medium: vacuum' in the file or give --medium)"
        )
    converted = False
    if stated is not None and stated != out_medium:
        converted = True
        with _warnings.catch_warnings():
            _warnings.simplefilter("ignore", air.AirRangeWarning)
            centre = _convert_medium(centre, stated, out_medium, air_formula)
            x_nm = _convert_medium(x_nm, stated, out_medium, air_formula)
        warnings.append(f"wavelengths converted from {stated} to {out_medium} ({air.formula_description(air_formula)})")
    # a pixel frame holds counts per pixel: a line's summed counts already integrate it over wavelength
    # (each pixel collects d(lambda)/dp of the spectrum), so areas stay in counts; a wavelength axis
    # holds intensity per nm and its areas are intensity x nm
    area_scale = np.ones_like(scale) if data.axis == "pixel" else scale
    rows = []
    for i in range(len(fit)):
        rows.append(
            {
                "peak_nm": float(centre[i]),
                "peak_unc_nm": float(fit.centre_unc[i] * scale[i]),
                "medium": out_medium,
                "fwhm_nm": float(fit.fwhm[i] * scale[i]),
                "area": float(fit.area[i] * area_scale[i]),
                "area_unc": float(fit.area_unc[i] * area_scale[i]),
                "snr": float(fit.snr[i]),
                "fwhm_unc_nm": float(fit.fwhm_unc[i] * scale[i]),
                "gauss_fwhm_nm": float(fit.gauss_fwhm[i] * scale[i]),
                "lorentz_fwhm_nm": float(fit.lorentz_fwhm[i] * scale[i]),
                "centre_axis": float(fit.centre[i]),
            }
        )
    if not rows:
        warnings.append(f"no peak above {min_snr:g} times the noise ({fit.noise:.3g})")
    provenance = peaks_provenance(
        source=data.source, content=content, calibration=(cal_name, cal_bytes) if cal is not None else None,
        profile=profile, min_snr=min_snr, noise=fit.noise, axis=data.axis, stated=stated, medium=out_medium,
        air_formula=air_formula if converted else None, from_calibration=cal is not None)
    return PeaksResult(rows=rows, data=data, fit=fit, x_nm=x_nm, medium=out_medium, warnings=warnings,
                       provenance=provenance)


def peaks_provenance(*, source: str, content: bytes, calibration: tuple[str | None, bytes | None] | None,
                     profile: str, min_snr: float, noise: float, axis: str, stated: str | None, medium: str,
                     air_formula: str | None, from_calibration: bool) -> dict:
    """The export header of a peaks table: the input file and its digest, the fit, the medium and air formula.

    Peaks come from a spectrum file, not the store: ``datasets`` says so, ``input`` and
    ``input_sha256`` name the exact bytes fitted (and ``calibration``/``calibration_sha256``
    the calibration applied to a pixel axis).

    Parameters
    ----------
    source : str
        The spectrum file's name as given.
    content : bytes
        Its bytes (the SHA-256 digest is of these).
    calibration : (name, bytes) or None
        The calibration file applied, if any.
    profile, min_snr, noise : str, float, float
        The fit's options and the noise it found.
    axis : {"wavelength_nm", "pixel"}
    stated : {"air", "vacuum"} or None
        The medium the file (or calibration) states.
    medium : {"air", "vacuum"}
        The medium of the reported wavelengths.
    air_formula : str or None
        The formula that converted between the media, None when none was applied.
    from_calibration : bool
        Whether wavelengths come from a calibration.

    Returns
    -------
    dict
        Ordered header entries (``datasets``, ``query``, ``air_formula``, ``input`` ...).

    Examples
    --------
    >>> head = peaks_provenance(source="s.csv", content=b"x", calibration=None, profile="gauss", min_snr=5,
    ...                         noise=0.1, axis="wavelength_nm", stated="air", medium="air", air_formula=None,
    ...                         from_calibration=False)
    >>> head["input_sha256"][:12], head["medium"]
    ('2d711642b726', 'air (as the spectrum file states)')
    """
    origin = "the calibration" if from_calibration else "the spectrum file"
    if stated is None:
        axis_medium = f"{medium} (assumed: {origin} does not say)"
    elif stated == medium:
        axis_medium = f"{medium} (as {origin} states)"
    else:
        axis_medium = f"{medium} (converted from {stated}, as {origin} states)"
    if air_formula is not None:
        formula = f"{air.formula_description(air_formula)} (converted {stated} to {medium})"
    else:
        formula = f"none applied (wavelengths kept in {stated or medium} as read)"
    out = {
        "datasets": "none (peaks come from the spectrum file named in input, not from the store)",
        "query": f"peaks {source}; profile {profile}; min S/N {min_snr:g}"
        + (f"; calibration {calibration[0]}" if calibration else ""),
        "air_formula": formula,
        "input": source,
        "input_sha256": hashlib.sha256(content).hexdigest(),
    }
    if calibration is not None:
        out["calibration"] = calibration[0] or "<calibration>"
        out["calibration_sha256"] = hashlib.sha256(calibration[1] or b"").hexdigest()
    out.update({
        "axis": axis,
        "medium": axis_medium,
        "fit": f"profile {profile}; min S/N {min_snr:g}; baseline clipped running median; "
               "uncertainties from the fit covariance",
        "noise": f"{noise:.6g} (intensity units)",
        "note": "fwhm_unc_nm follows the contract columns; area is intensity x nm "
                + ("(summed counts for a pixel frame)" if axis == "pixel" else ""),
    })
    out["note"] = out["note"].strip()
    return out


# ----------------------------------------------------------------- calibration


def _reference_lines(catalog, species: Sequence[str], lo_nm: float, hi_nm: float, medium: str) -> list[dict]:
    from levels.service.contract import LineQuery

    out = []
    for name in species:
        query = LineQuery(spectrum=parse_spectrum(name), from_nm=max(lo_nm, 1e-3), to_nm=hi_nm, medium=medium)
        rows, _ = catalog.species_lines(query)
        for r in rows:
            lam = r["air_nm"] if (medium == "air" and r["air_nm"] is not None) else r["vacuum_nm"]
            strength = (
                (r["a_per_s"] or 0.0) * (r["g_upper"] or 1) * math.exp(-r["upper_cm1"] * C2_CM_K / LAMP_RANKING_TE_K)
            )
            out.append({**r, "line_nm": float(lam), "strength": strength})
    if not out:
        raise NotFoundError(f"no stored line of {', '.join(species)} lies in {lo_nm:.6g}..{hi_nm:.6g} nm ({medium})")
    return out


def calibrate_lamp(
    catalog,
    path=None,
    *,
    species: Sequence[str],
    content: bytes | None = None,
    source: str | None = None,
    degree: int = 3,
    medium: str = "air",
    from_nm: float | None = None,
    to_nm: float | None = None,
    tolerance_nm: float | None = None,
    min_snr: float = 5.0,
    profile: str = "gauss",
    clip: float = 4.0,
) -> CalibrationResult:
    """Calibrate the axis of a reference-lamp spectrum against the stored lines of ``species``.

    Parameters
    ----------
    catalog : levels.catalog.Catalog
    path, content, source
        The lamp spectrum (pixel or rough wavelength axis).
    species : sequence of str
        Species whose stored lines the lamp shows ("H I", "D I", a lamp sample's species).
    degree : int
        Degree of the dispersion polynomial.
    medium : {"air", "vacuum"}
        Medium of the calibrated wavelengths (the reference lines are taken in it).
    from_nm, to_nm : float, optional
        Rough wavelengths of the first and last sample (needed for a pixel axis; for a
        wavelength axis the axis itself is the rough guess).
    tolerance_nm : float, optional
        First matching tolerance (default from the peak widths).

    Returns
    -------
    CalibrationResult
        ``report`` is the JSON contract ``{"degree", "coefficients", "rms_nm", "lines_used",
        "rejected", ...}``.
    """
    if medium not in ("air", "vacuum"):
        raise PhysicsInputError(f"medium must be air or vacuum, not {medium!r}")
    if not species:
        raise PhysicsInputError("name at least one species whose lines the lamp shows (--species)")
    data = spectra_io.read_spectrum(content if content is not None else path, source=source)
    fit = peaks.find_and_fit(data.x, data.intensity, y_unc=data.intensity_unc, profile=profile, min_snr=min_snr)
    if data.axis == "wavelength_nm":
        lo, hi = (from_nm or float(data.x[0])), (to_nm or float(data.x[-1]))
        if data.medium and data.medium != medium:
            fit.warnings.append(
                f"the rough axis is in {data.medium}; the calibration maps it onto {medium} wavelengths"
            )
    else:
        if from_nm is None or to_nm is None:
            raise PhysicsInputError(
                f"{data.source} has a pixel axis: give the rough wavelengths of its first and last "
                "pixel (--from and --to) so the lamp lines can be found"
            )
        lo, hi = from_nm, to_nm
    if not hi != lo:
        raise PhysicsInputError("the rough wavelength range is empty")
    span = abs(hi - lo)
    ref = _reference_lines(catalog, species, min(lo, hi) - 0.1 * span, max(lo, hi) + 0.1 * span, medium)
    disp = (hi - lo) / (data.x[-1] - data.x[0])
    width_nm = float(np.median(fit.fwhm)) * abs(disp) if len(fit) else abs(disp)
    lam = np.array([r["line_nm"] for r in ref])
    strength = np.array([r["strength"] for r in ref])
    merged, merged_strength, members = calibration.merge_blends(lam, strength, 0.5 * width_nm)
    disp_fit = calibration.calibrate(
        fit.centre,
        fit.area,
        fit.fwhm,
        merged,
        merged_strength,
        degree=degree,
        rough_range_nm=(lo, hi),
        axis_range=(float(data.x[0]), float(data.x[-1])),
        tolerance_nm=tolerance_nm,
        clip=clip,
    )

    line_index, peak_index = disp_fit.line_index, disp_fit.peak_index
    assert line_index is not None and peak_index is not None

    def entry(k: int) -> dict:
        li = int(line_index[k])
        comp = [ref[j] for j in members[li]]
        top = max(comp, key=lambda r: r["strength"])
        return {
            "pixel": float(disp_fit.pixel[k]),
            "line_nm": float(disp_fit.line_nm[k]),
            "residual_nm": float(disp_fit.residual_nm[k]),
            "lower": top["lower"],
            "upper": top["upper"],
            "spectrum": top["spectrum"],
            "components": len(comp),
            "pixel_unc": float(fit.centre_unc[int(peak_index[k])]),
        }

    used = [entry(k) for k in range(disp_fit.pixel.size) if disp_fit.used[k]]
    rejected = [entry(k) for k in range(disp_fit.pixel.size) if not disp_fit.used[k]]
    warnings = list(fit.warnings) + list(disp_fit.warnings)
    unmatched = len(fit) - disp_fit.pixel.size
    if unmatched:
        warnings.append(f"{unmatched} of {len(fit)} lamp peaks matched no line of {', '.join(species)}")
    report = {
        "degree": disp_fit.degree,
        "coefficients": [float(c) for c in disp_fit.coefficients],
        "rms_nm": disp_fit.rms_nm,
        "rms_pixel": disp_fit.rms_pixel,
        "lines_used": used,
        "rejected": rejected,
        "medium": medium,
        "axis": data.axis,
        "species": list(species),
        "source": data.source,
        "pixel_range": [float(data.x[0]), float(data.x[-1])],
        "note": "wavelength = sum_k coefficients[k] * axis^k (nm); reference lines closer than half a peak width "
        "are merged (strength-weighted) and named by their strongest component",
        "warnings": warnings,
    }
    result = PeaksResult(
        rows=[],
        data=data,
        fit=fit,
        x_nm=calibration.evaluate(disp_fit.coefficients, data.x),
        medium=medium,
        warnings=warnings,
    )
    return CalibrationResult(report=report, peaks=result, dispersion=disp_fit)


# ----------------------------------------------------------------- diagnosis

_J_AT_END = re.compile(r"(\d+/2|\d+)$")


def _term_of(label: str) -> str:
    """A level label without its J (``3d 2D5/2`` -> ``3d 2D``): the multiplet key."""
    return _J_AT_END.sub("", label or "").rstrip()


def _species_info(catalog, name: str) -> dict:
    row = catalog.species_row(name)
    spec = parse_spectrum(row["spectrum"])
    levels = catalog.level_rows(row["spectrum"])
    return {
        "name": row["spectrum"],
        "z": spec.z,
        "charge": spec.charge,
        "mass_number": row["mass_number"],
        "ionization_cm1": row["ionization_cm1"],
        "energies": np.array([lv["energy_cm1"] for lv in levels]),
    }


def diagnose(
    catalog,
    species: Sequence[str],
    path=None,
    *,
    content: bytes | None = None,
    source: str | None = None,
    tolerance_nm: float = 0.01,
    instrument_fwhm_nm: float = 0.0,
    tgas_k: float = 300.0,
    ne_m3: float | None = None,
    clip: float = 3.0,
) -> DiagnosisResult:
    """Identify the peaks of a peaks file and derive Te, ne and the LTE check.

    Parameters
    ----------
    catalog : levels.catalog.Catalog
    species : sequence of str
        Species whose lines the peaks may be ("H I"; "Ar I,Ar II" for Saha-Boltzmann).
    path, content, source
        The peaks file (``levels peaks`` output, or peak_nm with intensity).
    tolerance_nm : float
        Smallest match window around a peak, nm; lines within half the peak's FWHM
        count as blended components of it.
    instrument_fwhm_nm : float
        Gaussian FWHM of the instrument, nm (removed from Balmer widths).
    tgas_k : float
        Emitter (gas) temperature for the Doppler width, K.
    ne_m3 : float, optional
        Electron density for the Saha-Boltzmann plot when no Balmer line gives one, m-3.
    clip : float
        Boltzmann-plot outlier threshold (standard deviations).

    Returns
    -------
    DiagnosisResult
    """
    if not species:
        raise PhysicsInputError("name the species of the peaks (for example 'H I')")
    if not (tolerance_nm > 0 and math.isfinite(tolerance_nm)):
        raise PhysicsInputError("tolerance must be a positive wavelength")
    if instrument_fwhm_nm < 0 or not math.isfinite(instrument_fwhm_nm):
        raise PhysicsInputError("instrument FWHM must be >= 0")
    if not (tgas_k > 0 and math.isfinite(tgas_k)):
        raise PhysicsInputError("tgas must be > 0 K")
    measured = spectra_io.read_peaks(content if content is not None else path, source=source)
    infos = {name: _species_info(catalog, name) for name in species}
    lo = min(p.peak_nm for p in measured) - 2.0
    hi = max(p.peak_nm for p in measured) + 2.0
    candidates = []
    from levels.service.contract import LineQuery

    for info in infos.values():
        rows, _ = catalog.species_lines(LineQuery(spectrum=parse_spectrum(info["name"]), from_nm=max(lo * 0.999, 1e-3),
                                                  to_nm=hi * 1.001, medium="vacuum"))
        candidates.extend(rows)
    vac = np.array([r["vacuum_nm"] for r in candidates]) if candidates else np.zeros(0)
    airw = (
        np.array([r["air_nm"] if r["air_nm"] is not None else r["vacuum_nm"] for r in candidates])
        if candidates
        else np.zeros(0)
    )
    warnings: list[str] = []
    identified, points, measured_lines = [], [], []
    for pk in measured:
        values = airw if pk.medium == "air" else vac
        reach = max(tolerance_nm, 0.5 * (pk.fwhm_nm or 0.0), 3.0 * (pk.peak_unc_nm or 0.0))
        hit = np.flatnonzero(np.abs(values - pk.peak_nm) <= reach) if values.size else np.zeros(0, dtype=int)
        if hit.size == 0:
            identified.append(
                {
                    "peak_nm": pk.peak_nm,
                    "medium": pk.medium,
                    "spectrum": None,
                    "lower": None,
                    "upper": None,
                    "line_nm": None,
                    "components": 0,
                    "note": "unmatched",
                }
            )
            continue
        comp = [candidates[i] for i in hit]
        by_species: dict[str, list[dict]] = {}
        for r in comp:
            by_species.setdefault(r["spectrum"], []).append(r)

        def weight(rows):
            return sum((r["a_per_s"] or 0.0) * (r["g_upper"] or 0) for r in rows)

        name = max(by_species, key=lambda s: weight(by_species[s]))
        comp = by_species[name]
        note = "ambiguous: lines of " + ", ".join(sorted(by_species)) if len(by_species) > 1 else ""
        known = [r for r in comp if r["a_per_s"]]
        top = max(comp, key=lambda r: (r["a_per_s"] or 0.0) * (r["g_upper"] or 0))
        line_nm = top["air_nm"] if pk.medium == "air" and top["air_nm"] is not None else top["vacuum_nm"]
        row = {
            "peak_nm": pk.peak_nm,
            "medium": pk.medium,
            "spectrum": name,
            "lower": top["lower"],
            "upper": top["upper"],
            "line_nm": float(line_nm),
            "components": len(comp),
            "note": note or ("blend" if len(comp) > 1 else ""),
        }
        identified.append(row)
        if len(comp) == 1 and pk.peak_unc_nm:
            measured_lines.append(
                {
                    "spectrum": name,
                    "lower": top["lower"],
                    "upper": top["upper"],
                    "wavelength_nm": pk.peak_nm,
                    "medium": pk.medium,
                    "unc_nm": pk.peak_unc_nm,
                    "intensity": pk.intensity,
                    "a_per_s": None,
                    "note": f"peak fitted by levels; file line {pk.line}",
                }
            )
        if pk.intensity is None or pk.intensity <= 0:
            continue
        if len(known) < len(comp):
            if not known:
                continue
            warnings.append(
                f"peak {pk.peak_nm:.4f} nm: {len(comp) - len(known)} blended component(s) without a known "
                "A are left out of its Boltzmann point"
            )
        ga = np.array([r["a_per_s"] * r["g_upper"] for r in known])
        eu = float(np.sum(ga * np.array([r["upper_cm1"] for r in known])) / ga.sum())
        lam = float(np.sum(ga * np.array([r["vacuum_nm"] for r in known])) / ga.sum())
        ln_y = float(boltzmann.boltzmann_ln_y(pk.intensity, lam, 1.0, ga.sum()))
        unc = pk.intensity_unc / pk.intensity if pk.intensity_unc else None
        points.append(
            {
                "lower": top["lower"],
                "upper": top["upper"],
                "upper_cm1": eu,
                "ln_y": ln_y,
                "ln_y_unc": unc,
                "spectrum": name,
                "peak_nm": pk.peak_nm,
                "components": len(known),
                "strength": float(ga.sum()),
                "multiplet": f"{name}|{_term_of(top['lower'])}|{_term_of(top['upper'])}",
                "outlier": False,
            }
        )
    if not any(r["spectrum"] for r in identified):
        raise PhysicsInputError(
            f"no peak matches a line of {', '.join(infos)} within {tolerance_nm:g} nm; "
            "check the species, the medium and the calibration"
        )

    # ---- electron density from a Balmer line
    ne, ne_unc, ne_method = None, None, None
    hydrogen = [i for i in infos.values() if i["z"] == 1 and i["charge"] == 0]
    if hydrogen:
        ne, ne_unc, ne_method = _stark_density(
            measured, identified, candidates, hydrogen, instrument_fwhm_nm, tgas_k, warnings
        )
    else:
        warnings.append("no hydrogen species named: no Stark electron density (ne is null)")
    if ne is None and ne_m3 is not None:
        ne, ne_unc, ne_method = ne_m3, None, "given"

    # ---- temperature
    te = te_unc = None
    method = None
    stages: dict[str, list[dict]] = {}
    for p in points:
        stages.setdefault(p["spectrum"], []).append(p)
    pair = _two_stages(infos, stages)
    fit = None
    if pair and ne is not None:
        low, high = pair
        use = stages[low] + stages[high]
        stage = np.array([0] * len(stages[low]) + [1] * len(stages[high]), dtype=int)
        point_unc = _uncertainties(use)
        fit = boltzmann.fit_saha_boltzmann(
            [p["upper_cm1"] for p in use],
            [p["ln_y"] for p in use],
            stage,
            ionization_cm1=infos[low]["ionization_cm1"],
            ne_m3=ne,
            ln_y_unc=point_unc,
        )
        method = f"Saha-Boltzmann plot of {low} and {high}"
    else:
        if pair:
            warnings.append(
                f"lines of {pair[0]} and {pair[1]} found but no electron density (give --ne): "
                "Boltzmann plot of one stage only"
            )
        best = max(stages, key=lambda s: len(stages[s]), default=None)
        if best is not None and len(stages[best]) >= 2:
            use = stages[best]
            try:
                fit = boltzmann.fit_boltzmann(
                    [p["upper_cm1"] for p in use], [p["ln_y"] for p in use], _uncertainties(use), clip=clip
                )
                method = f"Boltzmann plot of {best}"
            except PhysicsInputError as exc:
                warnings.append(str(exc))
        else:
            warnings.append("fewer than two identified lines with known A values: no Boltzmann temperature")
    if fit is not None:
        te, te_unc = fit.te_k, fit.te_unc_k
        for p, out, res in zip(use, fit.outlier, fit.residual):
            p["outlier"] = bool(out)
            p["residual"] = float(res)
        warnings.extend(fit.warnings)
        flagged = [p for p in use if p["outlier"]]
        if flagged:
            warnings.append(
                "off the Boltzmann line: "
                + ", ".join(f"{p['spectrum']} {p['lower']} - {p['upper']} ({p['peak_nm']:.4f} nm)" for p in flagged)
            )
        keyed = [p for p in use if p["ln_y_unc"]]
        if keyed:
            bad = boltzmann.multiplet_deviations(
                [p["multiplet"] for p in keyed],
                [p["ln_y"] for p in keyed],
                [p["ln_y_unc"] for p in keyed],
                [p["strength"] for p in keyed],
            )
            for key in bad:
                sp, lower, upper = str(key).split("|")
                warnings.append(
                    f"{sp} {lower} - {upper}: the strongest line of the multiplet is weaker than its "
                    "expected ratio to the others; the lines may be self-absorbed (optically thick)"
                )
    # ---- LTE validity
    validity: dict[str, object] = {
        "lte_min_ne_m3": None,
        "lte_holds": None,
        "criterion": "McWhirter 1965 (necessary, not sufficient)",
    }
    if te is not None:
        ref = infos[use[0]["spectrum"]]
        top_e = max(p["upper_cm1"] for p in use)
        energies = ref["energies"][ref["energies"] <= top_e * 1.0001]
        try:
            gap = lte_validity.largest_gap_cm1(energies)
            min_ne = lte_validity.mcwhirter_min_density_m3(te, gap)
            validity["lte_min_ne_m3"] = min_ne
            validity["largest_gap_cm1"] = gap
            if ne is not None:
                validity["lte_holds"] = bool(ne >= min_ne)
                if not validity["lte_holds"]:
                    warnings.append(
                        f"ne {ne:.3g} m-3 is below McWhirter's {min_ne:.3g} m-3 for "
                        f"the largest gap ({gap:.0f} cm-1): complete LTE is not supported; the Boltzmann "
                        "temperature describes the excited levels at best (partial LTE)"
                    )
        except PhysicsInputError as exc:
            warnings.append(f"LTE check not possible: {exc}")
    report = {
        "te_k": te,
        "te_unc_k": te_unc,
        "ne_m3": ne,
        "ne_unc_m3": ne_unc,
        "ne_method": ne_method,
        "boltzmann": [
            {
                "lower": p["lower"],
                "upper": p["upper"],
                "upper_cm1": p["upper_cm1"],
                "ln_y": p["ln_y"],
                "ln_y_unc": p["ln_y_unc"],
                "spectrum": p["spectrum"],
                "peak_nm": p["peak_nm"],
                "components": p["components"],
                "outlier": p["outlier"],
                "residual": p.get("residual"),
            }
            for p in points
        ],
        "validity": validity,
        "te_method": method,
        "identified": identified,
        "warnings": warnings,
    }
    return DiagnosisResult(report=report, identified=identified, measured_lines=measured_lines)


def _uncertainties(points: list[dict]) -> list[float] | None:
    if all(p["ln_y_unc"] for p in points):
        return [p["ln_y_unc"] for p in points]
    return None


def _two_stages(infos: dict, stages: dict) -> tuple[str, str] | None:
    names = [n for n in stages if stages[n]]
    for a in names:
        for b in names:
            ia, ib = infos[a], infos[b]
            if ia["z"] == ib["z"] and ib["charge"] == ia["charge"] + 1 and ia["ionization_cm1"]:
                return a, b
    return None


def _stark_density(measured, identified, candidates, hydrogen, instrument_fwhm_nm, tgas_k, warnings):
    names = {h["name"]: h for h in hydrogen}
    found = {}
    for pk, row in zip(measured, identified):
        if row["spectrum"] not in names or not pk.fwhm_nm:
            continue
        vac = next(
            (
                c["vacuum_nm"]
                for c in candidates
                if c["spectrum"] == row["spectrum"] and c["lower"] == row["lower"] and c["upper"] == row["upper"]
            ),
            None,
        )
        line = stark.balmer_line(vac) if vac else None
        if line and line not in found:
            found[line] = (pk, row, vac)
    if not found:
        warnings.append("no H-alpha or H-beta peak with a width (fwhm_nm): no Stark electron density (ne is null)")
        return None, None, None
    line = "H-beta" if "H-beta" in found else "H-alpha"
    pk, row, vac = found[line]
    info = names[row["spectrum"]]
    mass = isotope(info["z"], info["mass_number"]).atomic_mass_u
    doppler = float(line_shapes.doppler_fwhm_nm(vac, tgas_k, mass))
    gauss = math.hypot(doppler, instrument_fwhm_nm)
    lorentz = float(stark.lorentz_fwhm_from_voigt(pk.fwhm_nm, gauss))
    if lorentz <= 0.05 * pk.fwhm_nm:
        warnings.append(
            f"{line} at {pk.peak_nm:.4f} nm: its width ({pk.fwhm_nm:.4g} nm) is explained by the instrument "
            f"and Doppler widths ({gauss:.4g} nm); no Stark electron density"
        )
        return None, None, None
    h = 1e-6 * pk.fwhm_nm
    dl = (
        float(stark.lorentz_fwhm_from_voigt(pk.fwhm_nm + h, gauss))
        - float(stark.lorentz_fwhm_from_voigt(pk.fwhm_nm - h, gauss))
    ) / (2 * h)
    unc_w = abs(dl) * (pk.fwhm_unc_nm or 0.0)
    ne, ne_unc = stark.electron_density_m3(line, lorentz, unc_w)
    ne, ne_unc = float(ne), float(ne_unc) if pk.fwhm_unc_nm else None
    if ne_unc is None:
        warnings.append("the peaks file has no fwhm_unc_nm: the ne uncertainty is not known")
    lo, hi = stark.NE_RANGE_M3
    if ne < lo:
        warnings.append(
            f"{line} at {pk.peak_nm:.4f} nm: the Stark part of its width ({lorentz:.3g} nm) means ne "
            f"{ne:.2g} m-3, below the {lo:.0e} m-3 where the width fit holds: ne is left null "
            "(below about that value)"
        )
        return None, None, None
    if ne > hi:
        warnings.append(f"ne {ne:.3g} m-3 lies above {hi:.0e} m-3, where the Stark-width fit was made")
    method = (
        f"Stark width of {line} ({row['spectrum']}), Gigosos, González & Cardeñoso 2003; Lorentzian part "
        f"{lorentz:.4g} nm of the {pk.fwhm_nm:.4g} nm FWHM after removing Gaussian {gauss:.4g} nm "
        f"(Doppler at {tgas_k:.0f} K, instrument {instrument_fwhm_nm:.4g} nm)"
    )
    return ne, ne_unc, method


# ----------------------------------------------------------------- commit


def commit_lines(
    catalog, measured_lines: Sequence[dict], *, sample: str | None, source: str, dataset: str | None = None
):
    """Write identified lines as a new measured dataset (all-or-nothing; see Catalog.import_line_records).

    Raises
    ------
    InputFileError
        Nothing to write, or a row that does not validate.
    """
    if not measured_lines:
        raise InputFileError([Problem(source, None, None, "no identified, unblended line to write")])
    items = [
        (None, {k: ("" if v is None else str(v)) for k, v in row.items() if k in records_io.LINE_FILE_COLUMNS})
        for row in measured_lines
    ]
    recs = records_io.validate_lines(items, source=source)
    return catalog.import_line_records(
        recs,
        source=source,
        sample=sample,
        dataset=dataset,
        description=f"peaks identified by levels diagnose from {source}",
    )
