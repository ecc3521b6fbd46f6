"""Lab-sample workflow on the store: measured lines, series limits, level optimisation, line identification.

Units of work on one store (:func:`fit_and_store_limit`, :func:`optimize_dataset`, :func:`identify_peaks`)
and the steps they share with the import path (:func:`store_measured_lines`);
:class:`levels.catalog.Catalog` exposes them as methods. Physics comes from :mod:`levels.physics` (series,
ritz, air); reading and validation from :mod:`levels.io`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import replace
from pathlib import Path
from typing import Any

import numpy as np
from sqlalchemy.orm import Session

from levels.errors import InputFileError, NotFoundError, PhysicsInputError, Problem
from levels.io import records as io_records
from levels.io.records import read_peaks_file
from levels.isotopes import isotope
from levels.notation import label_key, label_pattern_to_regex, parse_spectrum
from levels.physics.lines import air, ritz, series
from levels.service import lookup
from levels.service.contract import LineQuery, LineRow
from levels.service.lines import species_lines
from levels.store import queries
from levels.store.schema import Line, Species

LIMIT_METHOD = "extended-ritz-fit"
IDENTIFY_COLUMNS = ("peak_nm", "medium", "rank", "spectrum", "lower", "upper", "line_nm", "delta_nm", "a_per_s", "note")


# ----------------------------------------------------------------- units of work

def fit_and_store_limit(catalog, spectrum: str, patterns: Sequence[str], *, datasets: Sequence[str] | None = None,
                        n_defect_terms: int = 2, n_min: int | None = None, save: bool = True) -> dict:
    """Fit a series limit (extended Ritz formula, :func:`fit_limit`); optionally store it as its own dataset."""
    spec = parse_spectrum(spectrum)
    if not patterns:
        raise PhysicsInputError("give at least one --series pattern, like 'ns 2S1/2'")

    def work(session: Session) -> dict:
        report = fit_limit(session, spec, patterns, datasets=datasets, n_defect_terms=n_defect_terms, n_min=n_min)
        if save:
            species = lookup.require_species(session, spec)
            name = f"series limit {species.name} A={species.mass_number}"
            save_limit(session, species, report, catalog.actor, name)
            queries.record_audit(session, "fit-limit", f"dataset {name}",
                                 {"patterns": list(patterns), "limit_cm1": report["limit_cm1"]}, actor=catalog.actor)
            report["saved_as"] = name
        return report

    return catalog.write(work) if save else catalog.read(work)


def optimize_dataset(catalog, dataset: str | int, *, fix: str | None = None) -> dict:
    """Least-squares level energies from a dataset's measured lines (:func:`optimize`; nothing written)."""
    return catalog.read(lambda session: optimize(session, dataset, fix_label=fix))


def identify_peaks(catalog, spectra: Sequence[str], peaks_path, *, tolerance_nm: float = 0.0,
                   content: bytes | None = None, source: str | None = None, max_candidates: int = 3,
                   window: str = "tolerance", n_sigma: float = 3.0, tolerance_cm1: float | None = None) -> list[dict]:
    """Match a peaks file against the lines (engine) of one or more species (see :func:`identify`;
    ``delta_nm`` is peak - line; ``tolerance_cm1`` a wavenumber tolerance converted at each peak)."""
    peaks = read_peaks_file(content if content is not None else peaks_path,
                            source=source or (Path(peaks_path).name if peaks_path else None))
    if tolerance_cm1 is not None:
        tolerance_nm = max(peak_tolerance_nm(p.peak_nm, tolerance_cm1) for p in peaks)
    widest_unc = max((p.unc_nm or 0.0) for p in peaks) if window == "uncertainty" else 0.0
    margin = 10 * tolerance_nm + 2 * n_sigma * widest_unc + 1.0
    lo = min(p.peak_nm for p in peaks) - margin
    hi = max(p.peak_nm for p in peaks) + margin
    candidates: list[LineRow] = []
    for spectrum in spectra:
        vacuum = LineQuery(spectrum=parse_spectrum(spectrum), from_nm=max(lo, 1e-3), to_nm=hi, medium="vacuum")
        rows, _ = species_lines(catalog, vacuum, multipoles=("E1", "M1", "E2"))
        rows_air, _ = species_lines(catalog, replace(vacuum, medium="air"), multipoles=("E1", "M1", "E2"))
        seen = {(r["lower_id"], r["upper_id"], r["multipole"]) for r in rows}
        candidates.extend(rows)
        candidates.extend(r for r in rows_air if (r["lower_id"], r["upper_id"], r["multipole"]) not in seen)
    return identify(peaks, candidates, tolerance_nm=tolerance_nm, max_candidates=max_candidates,
                    window=window, n_sigma=n_sigma, tolerance_cm1=tolerance_cm1)


def peak_tolerance_nm(peak_nm: float, tolerance_cm1: float) -> float:
    """A wavenumber tolerance as a wavelength tolerance at ``peak_nm``: |d lambda| = lambda^2 d sigma
    (lambda in nm, sigma in cm-1, the 1e-7 from nm cm-1).

    >>> round(peak_tolerance_nm(500.0, 1.0), 6)
    0.025
    """
    return peak_nm * peak_nm * tolerance_cm1 * 1e-7


# ----------------------------------------------------------------- measured lines

def store_measured_lines(session: Session, records: Sequence[io_records.LineRecord], dataset_id: int,
                         source: str, air_formula: str = "iau2000", *, allow_off_ritz: str | None = None,
                         report: dict | None = None) -> int:
    """Resolve labels against the store's levels, check each line, write the lines (caller's transaction).

    Every line is checked against its two levels: the parity and J selection rules of its
    stated multipole (:func:`levels.physics.lines.selection.rejection_reason`), and its vacuum
    wavenumber against the Ritz wavenumber E_u - E_l
    (:func:`levels.physics.lines.combination.check_against_ritz`: refused beyond
    :data:`~levels.physics.lines.combination.OFF_RITZ_SIGMAS` combined standard uncertainties).

    Parameters
    ----------
    allow_off_ritz : str, optional
        Why lines off their Ritz wavenumbers are accepted for this file; they are then
        written with a note, and counted in ``report["off_ritz"]``.
    report : dict, optional
        Filled with ``off_ritz`` (number of accepted off-Ritz lines) and ``largest_off_ritz_sigma``.

    Raises
    ------
    InputFileError
        Unknown labels, a multipole the two levels' parity or J forbid, a lower level
        above the upper one, a line off its Ritz wavenumber (without ``allow_off_ritz``) -
        every problem listed with file, line and field; nothing written.
    """
    from levels.physics.lines import combination, selection
    problems: list[Problem] = []
    chosen = queries.visible_datasets(session)
    by_species: dict = {}
    rows, kept, pairs = [], [], []
    for rec in records:
        if rec.spectrum not in by_species:
            species = lookup.find_species(session, rec.spectrum)
            levels = queries.levels_by_precedence(session, species, chosen) if species else []
            # a label as stored, or typed another way (spaces between subshells, the core written otherwise)
            keyed = {label_key(lv.label, rec.spectrum.electrons): lv for lv in levels}
            by_species[rec.spectrum] = (species, {**keyed, **{lv.label: lv for lv in levels}})
        species, labels = by_species[rec.spectrum]
        if species is None:
            problems.append(Problem(source, rec.line, "spectrum", f"no levels of {rec.spectrum.name} in the store; "
                                                                  "import its levels first"))
            continue
        lower = labels.get(rec.lower) or labels.get(label_key(rec.lower, rec.spectrum.electrons))
        upper = labels.get(rec.upper) or labels.get(label_key(rec.upper, rec.spectrum.electrons))
        for field, label, level in (("lower", rec.lower, lower), ("upper", rec.upper, upper)):
            if level is None:
                problems.append(Problem(source, rec.line, field, f"no level labelled {label!r} of {rec.spectrum.name} "
                                                                 "in the store"))
        if lower is None or upper is None:
            continue
        if rec.multipole == "E1" and lower.parity == upper.parity:
            problems.append(Problem(source, rec.line, "multipole", f"an E1 line needs a change of parity; "
                                                                   f"{rec.lower} and {rec.upper} have the same parity"))
            continue
        if rec.multipole in ("M1", "E2") and lower.parity != upper.parity:
            problems.append(Problem(source, rec.line, "multipole", f"an {rec.multipole} line keeps parity; "
                                                                   f"{rec.lower} and {rec.upper} differ"))
            continue
        if lower.energy_cm1 >= upper.energy_cm1:
            problems.append(Problem(source, rec.line, "lower", f"level {rec.lower} ({lower.energy_cm1:g} cm-1) is not "
                                                               f"below {rec.upper} ({upper.energy_cm1:g} cm-1)"))
            continue
        rows.append({
            "dataset_id": dataset_id, "species_id": species.id, "lower_id": lower.id, "upper_id": upper.id,
            "multipole": rec.multipole, "a_per_s": rec.a_per_s, "f_abs": rec.f_abs, "line_strength_au": None,
            "unc_nm": rec.unc_nm, "observed_nm": rec.wavelength_nm, "medium": rec.medium,
            "intensity": rec.intensity, "note": rec.note,
        })
        kept.append(rec)
        pairs.append((lower, upper))
    problems.extend(_selection_problems(kept, pairs, source, selection))
    if problems:
        raise InputFileError(problems)
    _fill_wavelengths(rows, air_formula)
    problems = _ritz_problems(rows, kept, pairs, source, combination, allow_off_ritz, report)
    if problems:
        raise InputFileError(problems)
    queries.insert_full_rows(session, Line, rows)
    return len(rows)


def _selection_problems(records, pairs, source: str, selection) -> list[Problem]:
    """J rules of each line's multipole (parity is checked per line before); unresolved J is not judged."""
    problems = []
    for multipole in ("E1", "M1", "E2"):
        idx = [k for k, rec in enumerate(records) if rec.multipole == multipole
               and pairs[k][0].two_j is not None and pairs[k][1].two_j is not None]
        if not idx:
            continue
        lo_j = np.array([pairs[k][0].two_j for k in idx])
        up_j = np.array([pairs[k][1].two_j for k in idx])
        lo_p = np.array([pairs[k][0].parity for k in idx])
        up_p = np.array([pairs[k][1].parity for k in idx])
        reasons = selection.rejection_reason(multipole, lo_j, lo_p, up_j, up_p)
        for pos in np.flatnonzero(reasons != ""):
            k = idx[int(pos)]
            lower, upper = pairs[k]
            others = [m for m in ("E1", "M1", "E2")
                      if m != multipole and bool(selection.allowed(m, lower.two_j, lower.parity, upper.two_j,
                                                                   upper.parity))]
            hint = (f"; the levels allow {' or '.join(others)}" if others
                    else "; no E1, M1 or E2 line joins these levels")
            problems.append(Problem(source, records[k].line, "multipole",
                                    f"an {multipole} line cannot join {lower.label} and {upper.label} "
                                    f"({reasons[pos]}){hint}"))
    return problems


def _ritz_problems(rows, records, pairs, source: str, combination, allow_off_ritz: str | None,
                   report: dict | None) -> list[Problem]:
    """Each line's vacuum wavenumber against E_u - E_l of its levels (see store_measured_lines)."""
    if not rows:
        return []
    sigma = np.array([r["wavenumber_cm1"] for r in rows])
    vacuum = np.array([r["vacuum_nm"] for r in rows])
    unc_vac = np.array([np.nan if r["unc_nm"] is None else r["unc_nm"] for r in rows], dtype=float)
    e_lo = np.array([lo.energy_cm1 for lo, _ in pairs])
    e_up = np.array([up.energy_cm1 for _, up in pairs])
    u_lo = np.array([np.nan if lo.unc_cm1 is None else lo.unc_cm1 for lo, _ in pairs], dtype=float)
    u_up = np.array([np.nan if up.unc_cm1 is None else up.unc_cm1 for _, up in pairs], dtype=float)
    check = combination.check_against_ritz(sigma, sigma * unc_vac / vacuum, e_lo, u_lo, e_up, u_up)
    off = np.flatnonzero(check.off)
    if report is not None:
        report["off_ritz"] = int(off.size)
        spread = np.abs(check.delta_cm1[off]) / np.where(check.combined_unc_cm1[off] > 0,
                                                          check.combined_unc_cm1[off], np.nan)
        report["largest_off_ritz_sigma"] = float(np.nanmax(spread)) if off.size and np.isfinite(spread).any() else None
    problems = []
    for k in off.tolist():
        lower, upper = pairs[k]
        ritz_cm1 = upper.energy_cm1 - lower.energy_cm1
        delta, unc = float(check.delta_cm1[k]), float(check.combined_unc_cm1[k])
        sigmas = (f"{abs(delta) / unc:.3g} combined standard uncertainties ({unc:.3g} cm-1)" if unc > 0
                  else "with no uncertainty given")
        text = (f"{rows[k]['observed_nm']!r} nm ({rows[k]['medium']}) is {delta:+.6g} cm-1 "
                f"({100 * delta / ritz_cm1:+.3g} %) "
                f"from the Ritz wavenumber {ritz_cm1:.6f} cm-1 of {lower.label} - {upper.label}, {sigmas}; more than "
                f"{combination.OFF_RITZ_SIGMAS:g} is refused")
        if allow_off_ritz is None:
            problems.append(Problem(source, records[k].line, "wavelength_nm",
                                    text + "; check the identification, the medium and the levels, or import with "
                                           "--allow-off-ritz \"<reason>\""))
        else:
            note = f"off its Ritz wavenumber by {delta:+.4g} cm-1 (allowed: {allow_off_ritz})"
            rows[k]["note"] = f"{rows[k]['note']}; {note}" if rows[k]["note"] else note
    return problems


def _fill_wavelengths(rows: list[dict], air_formula: str) -> None:
    """Vacuum and air wavelengths, wavenumber and vacuum uncertainty of every row, in two array calls."""
    if not rows:
        return
    observed = np.array([r["observed_nm"] for r in rows], dtype=float)
    in_air = np.array([r["medium"] != "vacuum" for r in rows])
    vacuum = observed.copy()
    if in_air.any():
        vacuum[in_air] = np.asarray(air.air_to_vacuum(observed[in_air], air_formula), dtype=float)
    air_nm = np.full(vacuum.size, np.nan)
    above = vacuum > 200.0
    if above.any():
        air_nm[above] = np.asarray(air.vacuum_to_air(vacuum[above], air_formula), dtype=float)
    for row, vac, air_value in zip(rows, vacuum.tolist(), air_nm.tolist()):
        row["vacuum_nm"] = vac
        row["wavenumber_cm1"] = 1e7 / vac
        row["air_nm"] = air_value if math.isfinite(air_value) else None
        row["unc_nm"] = row["unc_nm"] * vac / row["observed_nm"]


# ----------------------------------------------------------------- series limits

def fit_limit(session: Session, spectrum, patterns: Sequence[str], *, datasets: Sequence[str] | None = None,
              n_defect_terms: int = 2, n_min: int | None = None) -> dict:
    """Fit one shared series limit to the levels matching ``patterns`` (``n`` = running number).

    Returns the design's report: ``limit_cm1``, ``limit_unc_cm1``, ``series`` (pattern, n_used,
    quantum_defects, residuals_cm1), ``warnings``, plus the stored limit of the species for comparison.
    """
    species = lookup.require_species(session, spectrum)
    chosen = queries.visible_datasets(session, datasets)
    levels = queries.levels_by_precedence(session, species, chosen)
    data, warnings = [], []
    for pattern in patterns:
        regex = label_pattern_to_regex(pattern)
        matched = []
        for lv in levels:
            m = regex.match(lv.label)
            if m:
                n = int(m.group("n"))
                if n_min is None or n >= n_min:
                    matched.append((n, lv))
        if not matched:
            raise NotFoundError(f"no level of {species.name} matches the series pattern {pattern!r}")
        matched.sort(key=lambda item: item[0])
        unc = [lv.unc_cm1 for _, lv in matched]
        if any(u is None or u <= 0 for u in unc):
            warnings.append(f"series {pattern!r}: some levels have no uncertainty; they are given 0.001 cm-1 "
                            "(the fit is then unweighted and its limit uncertainty is not meaningful)")
        data.append((pattern, np.array([n for n, _ in matched]), np.array([lv.energy_cm1 for _, lv in matched]),
                     np.array([1e-3 if (u is None or u <= 0) else u for u in unc])))
    nuclear_mass = isotope(species.z, species.mass_number).nuclear_mass_u
    rydberg = series.rydberg_constant_cm1(nuclear_mass)
    fit = series.fit_series_limit([(n, e, u) for _, n, e, u in data], rydberg_cm1=rydberg,
                                  core_charge=species.charge + 1, n_defect_terms=n_defect_terms)
    stored = queries.ionization_limit(session, species, [d for d in chosen if d.role != "series-limit"])
    report = {
        "spectrum": species.name,
        "limit_cm1": fit.limit_cm1, "limit_unc_cm1": fit.limit_unc_cm1,
        "series": [{"pattern": pattern, "n_used": int(fit.n_used[i]) if fit.n_used else int(n.size),
                    "n_values": n.tolist(), "quantum_defects": [float(x) for x in fit.quantum_defects[i]],
                    "residuals_cm1": [float(x) for x in fit.residuals_cm1[i]]}
                   for i, (pattern, n, _, _) in enumerate(data)],
        "chi2": fit.chi2, "dof": fit.dof, "rydberg_cm1": rydberg, "core_charge": species.charge + 1,
        "stored_limit_cm1": stored.energy_cm1 if stored else None,
        "stored_limit_unc_cm1": stored.unc_cm1 if stored else None,
        "warnings": warnings + list(fit.warnings),
    }
    return report


def save_limit(session: Session, species: Species, report: dict, actor: str, dataset_name: str) -> None:
    """Store a fitted limit as the species' computed series-limit dataset (replacing its earlier fit).

    The earlier fit is found by role and species, never by name, so no user dataset is touched.
    """
    import json

    ds = queries.replace_computed_dataset(
        session, species.id, "series-limit", name=dataset_name, method=LIMIT_METHOD, method_version="",
        options_json=json.dumps({"series": [s["pattern"] for s in report["series"]]}), actor=actor,
        citation="extended Ritz formula fit (levels.physics.lines.series)",
        description=f"series limit of {species.name} fitted to stored levels")
    queries.add_ionization_limit(session, dataset_id=ds.id, species_id=species.id, energy_cm1=report["limit_cm1"],
                                 unc_cm1=report["limit_unc_cm1"], method=LIMIT_METHOD)


# ----------------------------------------------------------------- level optimisation

def optimize(session: Session, dataset: str | int, *, fix_label: str | None = None) -> dict:
    """Least-squares level energies from the measured lines of a dataset (Ritz principle)."""
    ds = queries.require_dataset(session, dataset)
    lines = queries.dataset_lines(session, ds.id)
    lines = [ln for ln in lines if ln.observed_nm is not None]
    if not lines:
        raise PhysicsInputError(f"dataset {ds.name!r} has no measured lines to optimise levels from")
    level_ids = sorted({ln.lower_id for ln in lines} | {ln.upper_id for ln in lines})
    levels = queries.levels_by_id(session, level_ids)
    order = sorted(level_ids, key=lambda i: (levels[i].energy_cm1, levels[i].label))
    index = {level_id: k for k, level_id in enumerate(order)}
    if fix_label is None:
        fixed = 0
    else:
        matches = [k for k, level_id in enumerate(order) if levels[level_id].label == fix_label]
        if not matches:
            raise NotFoundError(f"no level labelled {fix_label!r} among the levels of the lines of {ds.name!r}")
        fixed = matches[0]
    sigma = np.array([ln.wavenumber_cm1 for ln in lines])
    unc_sigma = np.array([sigma[k] * ln.unc_nm / ln.vacuum_nm for k, ln in enumerate(lines)])
    fit = ritz.optimize_levels([index[ln.lower_id] for ln in lines], [index[ln.upper_id] for ln in lines],
                               sigma, unc_sigma, len(order), fixed_index=fixed,
                               fixed_energy_cm1=levels[order[fixed]].energy_cm1)
    return {
        "dataset": ds.name,
        "levels": [{"label": levels[level_id].label, "energy_cm1": _finite(fit.energy_cm1[k]),
                    "unc_cm1": _finite(fit.unc_cm1[k]), "n_lines": int(fit.n_lines[k]),
                    "stored_cm1": levels[level_id].energy_cm1, "flag": str(fit.level_flags[k])}
                   for k, level_id in enumerate(order)],
        "lines": [{"lower": levels[ln.lower_id].label, "upper": levels[ln.upper_id].label,
                   "observed_nm": ln.observed_nm, "medium": ln.medium, "residual_cm1": _finite(fit.residual_cm1[k]),
                   "flag": str(fit.line_flags[k])} for k, ln in enumerate(lines)],
        "chi2": fit.chi2, "dof": fit.dof, "fixed": levels[order[fixed]].label,
        "warnings": _labelled_warnings(fit, [levels[i].label for i in order],
                                       [f"{levels[ln.lower_id].label} - {levels[ln.upper_id].label}" for ln in lines]),
    }


def _labelled_warnings(fit, level_labels: list[str], line_labels: list[str]) -> list[str]:
    """The fit's warnings with level and line labels instead of indices."""
    out = [w for w in fit.warnings if "level(s)" not in w and "line(s)" not in w]

    def listed(labels: list[str]) -> str:
        return ", ".join(labels[:8]) + (f" and {len(labels) - 8} more" if len(labels) > 8 else "")

    for flag, text in (("disconnected", "not connected to the fixed level by any chain of lines (energies left empty)"),
                       ("single-line level", "determined by a single line")):
        hit = [level_labels[k] for k, f in enumerate(fit.level_flags) if f == flag]
        if hit:
            out.append(f"{len(hit)} level(s) {text}: {listed(hit)}")
    outliers = [line_labels[k] for k, f in enumerate(fit.line_flags) if f == "outlier"]
    if outliers:
        out.append(f"{len(outliers)} line(s) more than 3 sigma from their Ritz wavenumber: {listed(outliers)}")
    return out


def _finite(value) -> float | None:
    value = float(value)
    return value if math.isfinite(value) else None


# ----------------------------------------------------------------- identification

IDENTIFY_WINDOWS = ("tolerance", "uncertainty")
#: A candidate whose expected strength g_u*A is below this fraction of the strongest
#: candidate's in the same window is not a rival (our rule: common practice, no source).
RIVAL_STRENGTH_RATIO = 0.1


def identify(peaks: Sequence[io_records.PeakRecord], candidates: Sequence[Mapping[str, Any]], *, tolerance_nm: float,
             max_candidates: int = 3, air_formula: str = "iau2000", window: str = "tolerance",
             n_sigma: float = 3.0, tolerance_cm1: float | None = None) -> list[dict]:
    """Match peaks to lines; rank candidates by distance and expected strength.

    ``candidates`` are line rows (LINE_COLUMNS). A peak is compared in its own
    medium. ``delta_nm`` is **peak - line** (positive when the measured peak
    lies to the red of the line).

    Window: with ``window="tolerance"`` (the default) a line is a candidate when
    |peak - line| <= ``tolerance_nm``, exactly the width the user asked for (with
    ``tolerance_cm1``, a wavenumber tolerance, that tolerance at each peak's wavelength).
    With ``window="uncertainty"`` the window of each pair is
    max(tolerance, ``n_sigma`` u), u the peak's and the line's (Ritz)
    uncertainties added in quadrature.

    Ranking: |delta| / window, plus a penalty of 0.1 per decade of expected
    strength (g_u A) below the strongest candidate when rates exist.

    Notes: a peak with no candidate is ``unmatched``. It is ``ambiguous`` when
    more than one *rival* transition lies inside its window. Rows of the same
    transition (an observed line and its Ritz value) count once, and a candidate
    whose g_u A is known and below ``RIVAL_STRENGTH_RATIO`` (1/10) of the
    strongest known g_u A in the window is not a rival; a candidate of unknown
    rate always is (its strength cannot be judged).

    Examples
    --------
    >>> from levels.io.records import PeakRecord
    >>> peak = PeakRecord(peak_nm=500.010, medium="vacuum", unc_nm=None, intensity=None, note="", line=None)
    >>> line = dict(spectrum="X I", lower="a", upper="b", vacuum_nm=500.0, air_nm=None, unc_nm=0.0,
    ...             a_per_s=None, g_upper=2)
    >>> round(identify([peak], [line], tolerance_nm=0.02)[0]["delta_nm"], 6)
    0.01
    >>> identify([peak], [line], tolerance_nm=0.005)[0]["note"]
    'unmatched'
    """
    if not (tolerance_nm > 0 if tolerance_cm1 is None else tolerance_cm1 > 0):
        raise PhysicsInputError("tolerance must be a positive wavelength, wavenumber, energy or frequency")
    if window not in IDENTIFY_WINDOWS:
        raise PhysicsInputError(f"window must be one of {', '.join(IDENTIFY_WINDOWS)}, not {window!r}")
    if window == "uncertainty" and not n_sigma > 0:
        raise PhysicsInputError("n_sigma must be positive")
    vacuum = np.array([r["vacuum_nm"] for r in candidates], dtype=float)
    air_nm = np.array([r["air_nm"] if r["air_nm"] is not None else r["vacuum_nm"] for r in candidates], dtype=float)
    line_unc = np.array([r["unc_nm"] or 0.0 for r in candidates], dtype=float)
    order_v, order_a = np.argsort(vacuum), np.argsort(air_nm)
    widest = float(line_unc.max()) if line_unc.size else 0.0
    out = []
    for peak in peaks:
        values, order = (air_nm, order_a) if peak.medium == "air" and peak.peak_nm > 200 else (vacuum, order_v)
        u_peak = peak.unc_nm or 0.0
        tol = tolerance_nm if tolerance_cm1 is None else peak_tolerance_nm(peak.peak_nm, tolerance_cm1)
        reach = max(tol, n_sigma * (u_peak + widest)) if window == "uncertainty" else tol
        sorted_values = values[order]
        lo = np.searchsorted(sorted_values, peak.peak_nm - reach, "left")
        hi = np.searchsorted(sorted_values, peak.peak_nm + reach, "right")
        hits = order[lo:hi]
        delta = peak.peak_nm - values[hits]
        if window == "uncertainty":
            win = np.maximum(tol, n_sigma * np.hypot(u_peak, line_unc[hits]))
        else:
            win = np.full(hits.size, tol)
        inside = np.abs(delta) <= win
        hits, delta, win = hits[inside], delta[inside], win[inside]
        if hits.size == 0:
            out.append({"peak_nm": peak.peak_nm, "medium": peak.medium, "rank": None, "spectrum": None,
                        "lower": None, "upper": None, "line_nm": None, "delta_nm": None, "a_per_s": None,
                        "note": "unmatched"})
            continue
        gA = np.array([candidates[i]["a_per_s"] * candidates[i]["g_upper"]
                       if candidates[i]["a_per_s"] and candidates[i]["g_upper"] else np.nan for i in hits])
        strength = np.log10(gA, where=np.isfinite(gA), out=np.full(gA.shape, np.nan))
        score = np.abs(delta) / win
        if np.isfinite(strength).any():
            top = np.nanmax(strength)
            score = score + 0.1 * np.where(np.isfinite(strength), np.clip(top - strength, 0, 10), 10)
        ranked = np.argsort(score, kind="stable")[:max_candidates]
        note = "ambiguous" if rival_count(candidates, hits, gA) > 1 else ""
        for rank, k in enumerate(ranked, start=1):
            i = hits[k]
            row = candidates[i]
            out.append({"peak_nm": peak.peak_nm, "medium": peak.medium, "rank": rank, "spectrum": row["spectrum"],
                        "lower": row["lower"], "upper": row["upper"], "line_nm": float(values[i]),
                        "delta_nm": float(delta[k]), "a_per_s": row["a_per_s"], "note": note,
                        # not a column of the report: names the dataset in the export's provenance
                        "dataset": row.get("dataset")})
    return out


def rival_count(candidates: Sequence[Mapping[str, Any]], hits: np.ndarray, g_a: np.ndarray) -> int:
    """Number of distinct transitions among ``hits`` that are real rivals (see :func:`identify`).

    >>> rows = [dict(spectrum="X I", lower="a", upper="b"), dict(spectrum="X I", lower="a", upper="c")]
    >>> rival_count(rows, np.array([0, 1]), np.array([1e8, 1e6]))
    1
    >>> rival_count(rows, np.array([0, 1]), np.array([1e8, np.nan]))
    2
    """
    known = np.isfinite(g_a)
    top = float(np.nanmax(g_a)) if known.any() else None
    keys = set()
    for k, i in enumerate(hits):
        if top is not None and known[k] and g_a[k] < RIVAL_STRENGTH_RATIO * top:
            continue
        row = candidates[i]
        keys.add((row["spectrum"], row["lower"], row["upper"]))
    return len(keys)
