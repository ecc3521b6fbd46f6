"""Rates of many-electron species from their stored levels (``levels rates``).

One unit of work, :func:`compute_rates`: read the species' levels under a
precedence of datasets and its ionization limit (stored, or fitted here from
its series when none is stored), hand each configuration group to a rate
method, and store every computed line as the species' computed dataset
``rates <spectrum> A=<mass>`` (role ``rates``), replacing the previous one in
the same transaction, with an audit entry; the derived lines of the species
are rebuilt in that transaction so a pair with computed rates is not derived
again. Nothing is written when anything fails.

Methods
-------
``single``
    One electron outside closed shells: configurations with a single open
    subshell holding one electron, the last one written (``3p``, ``2p6.3p``,
    ``[Ar].4p``), a doublet term with L = l and the parity of l
    (:mod:`levels.physics.many_electron.single_valence`).
``coupled``
    An open core plus one electron in intermediate coupling
    (:mod:`levels.service.rates_coupled`, another unit; used when present).
``auto``
    ``single`` for the levels it can treat, ``coupled`` for the rest.

Levels a method cannot treat are reported in ``skipped`` with the reason;
nothing is invented for them. Measured A values win over computed ones by the
usual precedence (measured datasets before computed ones; a line with rates
before one without), both in the line list and in the lifetimes
:func:`level_lifetimes` gives ``levels show``.
"""

from __future__ import annotations

import inspect
import json
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from sqlalchemy import select
from sqlalchemy.orm import Session

from levels import __version__
from levels.errors import NotationError, NotFoundError, PhysicsInputError
from levels.notation import Spectrum, Term, format_j, l_letter, parse_configuration, parse_level_term, parse_spectrum
from levels.service import lookup
from levels.service.rates_common import LevelInput, LineRate, MethodResult
from levels.store import queries
from levels.store.schema import Dataset, IonizationLimit, Level, Species

__all__ = ["RATES_ROLE", "METHODS", "RATES_COLUMNS", "LIFETIME_COLUMNS", "RatesReport", "compute_rates",
           "classify_single", "single_rates", "level_lifetimes", "lifetimes_from_lines", "rates_dataset_name"]

RATES_ROLE = "rates"
METHODS = ("auto", "single", "coupled")
SINGLE_METHOD = "single-valence"
SINGLE_VERSION = "1.0"
#: line rows of the report (JSON keys; CSV columns)
RATES_COLUMNS = ("lower", "upper", "vacuum_nm", "multipole", "a_per_s", "a_rel_unc", "f_abs", "line_strength_au")
LIFETIME_COLUMNS = ("label", "lifetime_s", "lifetime_rel_unc")
#: the note a stored rate carries: its relative uncertainty (the method's stated rule), read back by
#: :func:`relative_uncertainty_in_note`
RATE_NOTE = "A rel. unc. {:.2g}"
_RATE_NOTE_PATTERN = re.compile(r"\bA rel\. unc\. ([0-9.]+(?:e[-+]?[0-9]+)?)")


def relative_uncertainty_in_note(note: str | None) -> float | None:
    """The relative uncertainty of a stored rate, from the note ``levels rates`` writes (None without one).

    Examples
    --------
    >>> relative_uncertainty_in_note("A rel. unc. 0.059")
    0.059
    >>> relative_uncertainty_in_note("measured") is None
    True
    """
    found = _RATE_NOTE_PATTERN.search(note or "")
    return float(found.group(1)) if found else None
#: electrons in the closed cores an alkali-like valence electron may sit outside
CLOSED_CORE_ELECTRONS = (0, 2, 10, 18, 28, 36, 46, 54, 68, 78, 86)


def rates_dataset_name(spectrum_name: str, mass_number: int) -> str:
    """``rates <spectrum> A=<mass>``.

    Examples
    --------
    >>> rates_dataset_name("Na I", 23)
    'rates Na I A=23'
    """
    return f"rates {spectrum_name} A={mass_number}"


@dataclass
class RatesReport:
    """What :func:`compute_rates` did (``as_dict`` gives the JSON report of the contract)."""

    spectrum: str
    method: str
    datasets: list[str]
    lines: list[dict] = field(default_factory=list)
    levels: list[dict] = field(default_factory=list)
    skipped: list[dict] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    saved_as: str | None = None
    ionization_cm1: float | None = None
    ionization_source: str = ""
    parameters: dict = field(default_factory=dict)
    #: (energy, uncertainty) cm-1 when the limit was fitted here (stored with the rates)
    fitted_limit: tuple[float, float] | None = None
    #: the method asked for (``auto``, ``single``, ``coupled``); ``method`` says which ran
    method_asked: str = "auto"

    def provenance(self) -> dict:
        """The export header's entries beyond tool and store.

        ``datasets`` are exactly the datasets whose levels were the input; the query, the
        method that ran with its version, the computed dataset the lines were stored as
        and the ionization limit's source follow. The rows carry vacuum wavelengths only,
        so no air formula was applied to them (the stored dataset's ``air_nm`` use IAU
        standard air, as every computed line set).

        Examples
        --------
        >>> head = RatesReport(spectrum="Na I", method="single-valence 1.0", datasets=["cell-1/levels"],
        ...                    saved_as="rates Na I A=23", method_asked="single").provenance()
        >>> head["datasets"], head["output_dataset"]
        ('cell-1/levels', 'rates Na I A=23')
        """
        return {
            "datasets": "; ".join(self.datasets) if self.datasets else "(none)",
            "query": f"rates {self.spectrum}; method {self.method_asked}",
            "air_formula": "none applied (the rows give vacuum_nm only; the stored dataset's air_nm use "
                           "IAU standard air, Morton 2000)",
            "method": self.method,
            "method_version": f"levels {__version__}",
            "output_dataset": self.saved_as or "not stored (report only)",
            "ionization": self.ionization_source,
            "rows": "lines; the lifetimes are in the JSON report",
        }

    def as_dict(self) -> dict:
        """The contract's JSON object (plus ``saved_as``, ``ionization_cm1``, ``ionization_source``)."""
        return {"spectrum": self.spectrum, "method": self.method, "datasets": list(self.datasets),
                "lines": [{c: row.get(c) for c in RATES_COLUMNS} for row in self.lines],
                "levels": [{c: row.get(c) for c in LIFETIME_COLUMNS} for row in self.levels],
                "skipped": list(self.skipped), "warnings": list(self.warnings), "saved_as": self.saved_as,
                "ionization_cm1": self.ionization_cm1, "ionization_source": self.ionization_source}


# ----------------------------------------------------------------------------- classification

def classify_single(level: LevelInput, electrons: int) -> tuple[tuple[int, int, int] | None, str | None]:
    """Whether the one-valence-electron method can treat a level.

    Parameters
    ----------
    level : LevelInput
    electrons : int
        Electrons of the species.

    Returns
    -------
    ((n, l, 2J or -1), None) when it can, (None, reason) when it cannot.

    Examples
    --------
    >>> classify_single(LevelInput(1, "3p 2P°3/2", "3p", "2P°", 3, -1, 16973.4), 11)
    ((3, 1, 3), None)
    >>> classify_single(LevelInput(2, "3s.3p 3P°1", "3s.3p", "3P°", 2, -1, 21870.5), 12)[1]
    'two open subshells (3s, 3p): not one electron outside closed shells'
    >>> classify_single(LevelInput(3, "3p 2D5/2", "3p", "2D", 5, -1, 1.0), 11)[1]
    'term 2D contradicts configuration 3p (one p electron outside closed shells gives 2P°)'
    """
    if not level.configuration:
        return None, "no configuration: the method needs the valence electron's n and l"
    try:
        config = parse_configuration(level.configuration)
    except NotationError as exc:
        return None, f"configuration not understood: {exc}"
    if config.parents:
        return None, "configuration with a parent term (open core): not one electron outside closed shells"
    shells = config.all_subshells
    open_shells = [(n, l, k) for n, l, k in shells if 0 < k < 4 * l + 2]
    if len(open_shells) != 1:
        names = ", ".join(f"{n}{l_letter(l)}{'' if k == 1 else k}" for n, l, k in open_shells) or "none"
        what = "no open subshell" if not open_shells else f"{len(open_shells)} open subshells"
        if len(open_shells) == 2:
            what = "two open subshells"
        return None, f"{what} ({names}): not one electron outside closed shells"
    n, l, k = open_shells[0]
    if k != 1:
        return None, f"open subshell {n}{l_letter(l)}{k} holds {k} electrons: not one electron outside closed shells"
    if shells[-1] != (n, l, 1):
        return None, "the singly occupied subshell is not the outer one written"
    core = sum(kk for _, _, kk in shells) - 1
    if len(shells) > 1 and core + 1 != electrons:
        return None, (f"configuration {level.configuration} has {core + 1} electrons, the species {electrons}")
    if electrons - 1 not in CLOSED_CORE_ELECTRONS:
        return None, (f"the species has {electrons} electrons: no closed core of {electrons - 1} electrons for "
                      "one valence electron")
    expected = f"2{l_letter(l, upper=True)}{'°' if l % 2 else ''}"
    parity = -1 if l % 2 else 1
    if level.term:
        try:
            term = parse_level_term(level.term)
        except NotationError as exc:
            return None, f"term not understood: {exc}"
        if term is not None and not isinstance(term, Term):
            return None, f"jK term {level.term} for configuration {level.configuration}: not one electron outside " \
                         "closed shells"
        if term is not None and (term.multiplicity != 2 or term.L != l or term.parity != parity):
            return None, (f"term {level.term} contradicts configuration {level.configuration} (one "
                          f"{l_letter(l)} electron outside closed shells gives {expected})")
    if level.parity != parity:
        return None, f"parity {level.parity:+d} contradicts configuration {level.configuration}"
    two_j = -1 if level.two_j is None else int(level.two_j)
    if two_j >= 0 and two_j not in (2 * l - 1, 2 * l + 1):
        return None, f"J = {format_j(two_j)} is impossible for one {l_letter(l)} electron (J = l ± 1/2)"
    return (n, l, two_j), None


# ----------------------------------------------------------------------------- the single method

def single_rates(levels: Sequence[LevelInput], *, z: int, charge: int, ionization_cm1: float, rydberg_cm1: float,
                 method: str = "model") -> MethodResult:
    """The one-valence-electron method on the levels it can treat (others in ``skipped``).

    Parameters
    ----------
    levels : sequence of LevelInput
    z, charge : int
        Nuclear charge and ion charge of the spectrum.
    ionization_cm1 : float
        Series limit, cm-1.
    rydberg_cm1 : float
        Rydberg constant of the core mass, cm-1.
    method : {"model", "coulomb"}
        See :func:`levels.physics.many_electron.single_valence.compute_single_valence`.

    Returns
    -------
    MethodResult
    """
    from levels.physics.many_electron.core_polarisation import core_polarisability
    from levels.physics.many_electron.single_valence import compute_single_valence

    electrons = z - charge
    chosen: list[tuple[LevelInput, tuple[int, int, int]]] = []
    result = MethodResult(method=f"{SINGLE_METHOD} {SINGLE_VERSION}")
    seen: dict[tuple[int, int, int], LevelInput] = {}
    for lv in levels:
        qn, reason = classify_single(lv, electrons)
        if qn is None:
            result.skipped.append((lv.level_id, reason or "not one electron outside closed shells"))
            continue
        if qn in seen:
            result.skipped.append((lv.level_id, f"same n, l, J as level {seen[qn].label!r}: contradictory labels"))
            continue
        seen[qn] = lv
        chosen.append((lv, qn))
    alpha, alpha_source = core_polarisability(z, charge)
    result.parameters = {"core_polarisability": alpha, "core_polarisability_source": alpha_source,
                         "variant": method}
    if not chosen:
        return result
    n = np.array([qn[0] for _, qn in chosen])
    l = np.array([qn[1] for _, qn in chosen])
    tj = np.array([qn[2] for _, qn in chosen])
    e = np.array([lv.energy_cm1 for lv, _ in chosen])
    res = compute_single_valence(n, l, tj, e, z=z, charge=charge, ionization_cm1=ionization_cm1,
                                 rydberg_cm1=rydberg_cm1, alpha_c=alpha, method=method)
    ids = [lv.level_id for lv, _ in chosen]
    for i, reason in res.skipped:
        result.skipped.append((ids[i], reason))
    for k in range(len(res.lower)):
        result.lines.append(LineRate(lower_id=ids[int(res.lower[k])], upper_id=ids[int(res.upper[k])],
                                     multipole=str(res.multipole[k]), wavenumber_cm1=float(res.wavenumber_cm1[k]),
                                     a_per_s=float(res.a_per_s[k]), a_rel_unc=float(res.rel_unc[k]),
                                     f_abs=float(res.f_abs[k]), line_strength_au=float(res.line_strength[k])))
    result.parameters["series"] = [s.as_dict() for s in res.series]
    if alpha is None:
        result.warnings.append(f"no core polarisability is known for this spectrum ({alpha_source}); rates without "
                               "core polarisation carry twice the base uncertainty")
    result.warnings.extend(res.warnings)
    return result


# ----------------------------------------------------------------------------- the unit of work

def _coupled_function():
    """The coupled method's entry point, or None while it is not installed."""
    try:
        from levels.service import rates_coupled
    except ImportError:
        return None, None
    return getattr(rates_coupled, "coupled_rates", None), getattr(rates_coupled, "can_treat", None)


def _rydberg_cm1(z: int, charge: int, mass_number: int) -> float:
    """Rydberg constant of the core (nucleus and the other electrons) the valence electron moves about."""
    from levels.isotopes import isotope
    from levels.physics.lines.series import rydberg_constant_cm1
    from levels.units import M_E_U

    nuclear = isotope(z, mass_number).nuclear_mass_u
    return float(rydberg_constant_cm1(nuclear + (z - charge - 1) * M_E_U))


def _fit_limit(levels: Sequence[LevelInput], z: int, charge: int, name: str,
               rydberg: float) -> tuple[float, float, str]:
    """Fit a series limit from the single-electron series of the levels (extended Ritz formula)."""
    from levels.physics.lines.series import fit_series_limit

    groups: dict[tuple[int, int], list[tuple[int, float, float]]] = {}
    for lv in levels:
        qn, _ = classify_single(lv, z - charge)
        if qn is None:
            continue
        groups.setdefault((qn[1], qn[2]), []).append((qn[0], lv.energy_cm1, lv.unc_cm1 or 1e-3))
    series = [sorted(v) for v in groups.values() if len({n for n, _, _ in v}) >= 3]
    if not series:
        raise PhysicsInputError(
            f"{name} has no stored ionization limit and no series of at least 3 levels of one electron "
            "outside closed shells to fit one; store a limit (levels limit) or import more levels")
    data = [(np.array([s[0] for s in ser]), np.array([s[1] for s in ser]), np.array([s[2] for s in ser]))
            for ser in series]
    fit = fit_series_limit(data, rydberg_cm1=rydberg, core_charge=charge + 1, n_defect_terms=2)
    names = ", ".join(f"n{l_letter(l)}" + ("" if tj < 0 else f" J={format_j(tj)}") for (l, tj) in groups
                      if len({n for n, _, _ in groups[(l, tj)]}) >= 3)
    return float(fit.limit_cm1), float(fit.limit_unc_cm1), names


def compute_rates(catalog, spectrum: str | Spectrum, *, method: str = "auto",
                  datasets: Sequence[str] | None = None, save: bool = True) -> RatesReport:
    """Compute and store the rates of a species from its stored levels (one transaction).

    Parameters
    ----------
    catalog : levels.catalog.Catalog
        The store.
    spectrum : str or Spectrum
        The species (``"Na I"``, ``"Ca II"``).
    method : {"auto", "single", "coupled"}
        Which method treats which configuration group (module docstring).
    datasets : sequence of str, optional
        Datasets whose levels are used, in order of precedence (default: all, measured first).
    save : bool
        Store the computed dataset (True) or only report.

    Returns
    -------
    RatesReport

    Raises
    ------
    PhysicsInputError
        Unknown method; no limit stored and none can be fitted; no level treated.
    NotFoundError
        The species is not in the store.
    """
    if method not in METHODS:
        raise PhysicsInputError(f"method must be one of {', '.join(METHODS)}, not {method!r}")
    spec = parse_spectrum(spectrum) if isinstance(spectrum, str) else spectrum

    def read(session: Session):
        species = lookup.require_species(session, spec)
        chosen = [d for d in queries.visible_datasets(session, datasets)
                  if not (d.role == RATES_ROLE and d.owner_species_id == species.id)]
        levels = queries.levels_by_precedence(session, species, chosen)
        limit = queries.ionization_limit(session, species, chosen)
        limit_name = None
        if limit is not None:
            limit_dataset = session.get(Dataset, limit.dataset_id)
            limit_name = limit_dataset.name if limit_dataset is not None else None
        inputs = [LevelInput(level_id=lv.id, label=lv.label, configuration=lv.configuration, term=lv.term,
                             two_j=lv.two_j, parity=lv.parity, energy_cm1=lv.energy_cm1, unc_cm1=lv.unc_cm1)
                  for lv in levels]
        used = sorted({d.name for d in chosen if any(lv.dataset_id == d.id for lv in levels)})
        return (species.id, species.name, species.z, species.charge, species.mass_number, inputs,
                None if limit is None else (limit.energy_cm1, limit.unc_cm1, limit_name), used)

    species_id, name, z, charge, mass_number, inputs, limit, used = catalog.read(read)
    if not inputs:
        raise NotFoundError(f"{name} has no stored levels in the chosen datasets")
    rydberg = _rydberg_cm1(z, charge, mass_number)
    warnings: list[str] = []
    fitted_limit = None
    if limit is not None:
        ionization, ionization_source = limit[0], f"stored in dataset {limit[2]!r}"
    else:
        ionization, unc, series_names = _fit_limit(inputs, z, charge, name, rydberg)
        ionization_source = f"fitted here from the series {series_names} (extended Ritz formula): " \
                            f"{ionization:.3f} ± {unc:.3f} cm-1"
        warnings.append(f"{name} has no stored ionization limit; {ionization_source}")
        fitted_limit = (ionization, unc)

    results: list[MethodResult] = []
    by_id = {lv.level_id: lv for lv in inputs}
    electrons = z - charge
    single_levels = [lv for lv in inputs if classify_single(lv, electrons)[0] is not None]
    other_levels = [lv for lv in inputs if classify_single(lv, electrons)[0] is None]
    coupled, can_treat = _coupled_function()
    if method in ("auto", "single"):
        results.append(single_rates(single_levels if method == "auto" else inputs, z=z, charge=charge,
                                    ionization_cm1=ionization, rydberg_cm1=rydberg))
    if method == "auto":
        # say why the one-electron method passed these on, beside what the coupled method says
        results.append(MethodResult(method="", skipped=[
            (lv.level_id, f"one-electron method: {classify_single(lv, electrons)[1]}") for lv in other_levels]))
    if method == "coupled" or (method == "auto" and other_levels):
        group = inputs if method == "coupled" else other_levels
        if coupled is None:
            results.append(MethodResult(method="coupled (not installed)", skipped=[
                (lv.level_id, "needs the coupled method (open core plus one electron), which this installation "
                              "does not have yet") for lv in group]))
        else:
            kwargs = {"ionization_cm1": ionization}
            if "spectrum" in inspect.signature(coupled).parameters:
                kwargs["spectrum"] = name
            results.append(coupled(list(group), **kwargs))

    # merge: the first method that gives a line keeps it
    lines: dict[tuple[int, int, str], LineRate] = {}
    skipped: dict[int, str] = {}
    treated: set[int] = set()
    parameters: dict = {}
    methods = []
    for res in results:
        if res.method:
            methods.append(res.method)
            parameters[res.method] = res.parameters
        warnings.extend(res.warnings)
        for line in res.lines:
            lines.setdefault((line.lower_id, line.upper_id, line.multipole), line)
            treated.update((line.lower_id, line.upper_id))
        for level_id, reason in res.skipped:
            if level_id in skipped and reason not in skipped[level_id]:
                label = res.method.split(" ")[0] if res.method else ""
                skipped[level_id] = f"{skipped[level_id]}; {label + ' method: ' if label else ''}{reason}"
            else:
                skipped.setdefault(level_id, reason)
    skipped = {k: v for k, v in skipped.items() if k not in treated}
    if not lines:
        detail = "; ".join(f"{by_id[k].label}: {v}" for k, v in list(skipped.items())[:5])
        raise PhysicsInputError(f"no rates could be computed for {name} with method {method!r}"
                                + (f" ({detail})" if detail else ""))
    ordered = sorted(lines.values(), key=lambda ln: (by_id[ln.lower_id].energy_cm1, by_id[ln.upper_id].energy_cm1,
                                                     ln.multipole))
    # levels with a decay channel outside the method that treated them get no lifetime (it would be too long)
    incomplete = {int(i) for res in results for i in res.parameters.get("lifetime_incomplete_level_ids", [])}
    line_rows, level_rows = _report_rows(ordered, by_id, incomplete)
    if incomplete:
        parameters["lifetime_incomplete_level_ids"] = sorted(incomplete)
    method_text = " + ".join(methods)
    report = RatesReport(spectrum=name, method=method_text, datasets=used, lines=line_rows, levels=level_rows,
                         skipped=[{"label": by_id[k].label, "reason": v} for k, v in skipped.items()],
                         warnings=warnings, ionization_cm1=ionization, ionization_source=ionization_source,
                         parameters=parameters, fitted_limit=fitted_limit, method_asked=method)
    if save:
        report.saved_as = _store(catalog, species_id, name, mass_number, ordered, by_id, report, method)
    return report


def _report_rows(lines: Sequence[LineRate], by_id: dict[int, LevelInput],
                 incomplete: set[int] | frozenset[int] = frozenset()) -> tuple[list[dict], list[dict]]:
    rows = []
    for ln in lines:
        rows.append({"lower": by_id[ln.lower_id].label, "upper": by_id[ln.upper_id].label,
                     "vacuum_nm": 1e7 / ln.wavenumber_cm1, "multipole": ln.multipole, "a_per_s": ln.a_per_s,
                     "a_rel_unc": float(f"{ln.a_rel_unc:.3g}"), "f_abs": ln.f_abs,
                     "line_strength_au": ln.line_strength_au,
                     "lower_id": ln.lower_id, "upper_id": ln.upper_id})
    upper = np.array([ln.upper_id for ln in lines])
    a = np.array([ln.a_per_s for ln in lines])
    u = np.array([ln.a_rel_unc for ln in lines])
    levels = []
    for level_id in sorted(set(upper.tolist()) - set(incomplete), key=lambda i: by_id[i].energy_cm1):
        sel = upper == level_id
        total = float(a[sel].sum())
        if total > 0:
            levels.append({"label": by_id[level_id].label, "lifetime_s": 1.0 / total,
                           "lifetime_rel_unc": float(f"{(a[sel] * u[sel]).sum() / total:.3g}"),
                           "level_id": level_id})
    return rows, levels


def _store(catalog, species_id: int, name: str, mass_number: int, lines: Sequence[LineRate],
           by_id: dict[int, LevelInput], report: RatesReport, method: str) -> str:
    from levels.physics.lines.air import vacuum_to_air
    from levels.service.derived import rebuild_derived_lines

    dataset_name = rates_dataset_name(name, mass_number)
    sigma = np.array([ln.wavenumber_cm1 for ln in lines])
    vacuum = 1e7 / sigma
    air = np.full(len(vacuum), np.nan)
    above = vacuum > 200.0
    if above.any():
        import warnings as _warnings

        from levels.physics.lines.air import AirRangeWarning

        with _warnings.catch_warnings():  # infrared lines: the formula is extrapolated, as for every line set
            _warnings.simplefilter("ignore", AirRangeWarning)
            air[above] = np.asarray(vacuum_to_air(vacuum[above], "iau2000"), dtype=float)
    count = len(lines)
    levels_used = sorted({i for ln in lines for i in (ln.lower_id, ln.upper_id)})
    options = {"method_asked": method, "methods": report.method, "ionization_cm1": report.ionization_cm1,
               "ionization_source": report.ionization_source, "datasets": report.datasets,
               "levels_used": levels_used,
               "skipped": report.skipped, "parameters": report.parameters,
               "uncertainty_rule": "see levels.physics.many_electron.single_valence (module docstring)"}

    def work(session: Session) -> str:
        species = session.get(Species, species_id)
        if species is None:
            raise NotFoundError(f"{name} was removed while the rates were computed; run again")
        # the levels must still be there (another writer may have retracted them meanwhile)
        wanted = levels_used
        present: set[int] = set()
        for start in range(0, len(wanted), 5000):
            part = wanted[start:start + 5000]
            present.update(session.scalars(select(Level.id).where(Level.id.in_(part))))
        missing = set(wanted) - present
        if missing:
            raise PhysicsInputError(f"{len(missing)} levels of {name} changed while the rates were computed; run again")
        ds = queries.replace_computed_dataset(
            session, species_id, RATES_ROLE, name=dataset_name, method=report.method,
            method_version=f"levels {__version__}", options_json=json.dumps(options, sort_keys=True, default=str),
            actor=catalog.actor, citation="computed by levels from the stored levels (levels.service.rates)",
            description=f"E1 (and E2/M1) rates of {name} from its measured levels")
        columns = {
            "dataset_id": np.full(count, ds.id), "species_id": np.full(count, species_id),
            "lower_id": np.array([ln.lower_id for ln in lines]), "upper_id": np.array([ln.upper_id for ln in lines]),
            "multipole": np.array([ln.multipole for ln in lines], dtype=object), "wavenumber_cm1": sigma,
            "vacuum_nm": vacuum, "air_nm": air, "a_per_s": np.array([ln.a_per_s for ln in lines]),
            "f_abs": np.array([ln.f_abs for ln in lines]),
            "line_strength_au": np.array([ln.line_strength_au for ln in lines]), "unc_nm": np.full(count, np.nan),
            "note": np.array([RATE_NOTE.format(ln.a_rel_unc) for ln in lines], dtype=object),
        }
        for start in range(0, count, 20000):
            queries.insert_line_columns(session, columns, start, min(start + 20000, count))
        if report.fitted_limit is not None:
            # the limit the rates rest on, fitted here, travels with them (replaced with them)
            session.add(IonizationLimit(dataset_id=ds.id, species_id=species_id, energy_cm1=report.fitted_limit[0],
                                        unc_cm1=report.fitted_limit[1],
                                        method="extended Ritz fit of the series (levels rates)"))
        derived = rebuild_derived_lines(session, [queries.species_spectrum(species)], catalog.actor)
        queries.record_audit(session, "compute-rates", f"dataset {ds.name}",
                             {"lines": count, "method": report.method, "skipped": len(report.skipped),
                              "ionization_source": report.ionization_source, "derived_lines": derived},
                             actor=catalog.actor)
        return ds.name

    return catalog.write(work)


# ----------------------------------------------------------------------------- lifetimes for 'levels show'

def level_lifetimes(session: Session, species: Species, chosen: Sequence[Dataset],
                    levels: Sequence[Level]) -> dict[int, float]:
    """Lifetimes (s) of the levels that the species' rates dataset gives decays for.

    The rates dataset must be among ``chosen``. For each upper level of its lines,
    :math:`\\tau = 1/\\sum A` over the stored lines from that level, each pair's A
    taken by precedence (a line with rates before one without, then the dataset
    first in ``chosen``), so a measured A replaces the computed one.

    Returns
    -------
    dict
        level id -> lifetime (s); levels without computed decays are absent.
    """
    if not levels or not any(d.role == RATES_ROLE and d.owner_species_id == species.id for d in chosen):
        return {}
    stored = queries.stored_lines_between(session, [lv.id for lv in levels], [d.id for d in chosen])
    return lifetimes_from_lines(species.id, chosen, stored)


def lifetimes_from_lines(species_id: int | None, chosen: Sequence[Dataset], stored: Sequence) -> dict[int, float]:
    """:func:`level_lifetimes` from stored lines already read (lines between the chosen levels).

    Examples
    --------
    >>> lifetimes_from_lines(None, [], [])
    {}
    """
    rates_sets = [d for d in chosen if d.role == RATES_ROLE and d.owner_species_id == species_id]
    rates_ids = {d.id for d in rates_sets}
    if not rates_ids or not stored:
        return {}
    incomplete = _incomplete_levels(rates_sets)
    rank = {d.id: i for i, d in enumerate(chosen)}
    covered = {ln.upper_id for ln in stored if ln.dataset_id in rates_ids}
    best: dict[tuple, Any] = {}
    for ln in sorted(stored, key=lambda ln: (ln.a_per_s is None, rank.get(ln.dataset_id, len(rank)), ln.id),
                     reverse=True):
        best[(ln.lower_id, ln.upper_id, ln.multipole)] = ln
    totals: dict[int, float] = {}
    for (_, upper, _), ln in best.items():
        if upper in covered and ln.a_per_s is not None and math.isfinite(ln.a_per_s):
            totals[upper] = totals.get(upper, 0.0) + ln.a_per_s
    return {k: 1.0 / v for k, v in totals.items() if v > 0 and k not in incomplete}


def _incomplete_levels(rates_sets: Sequence[Dataset]) -> set[int]:
    """Level ids whose decays a rates dataset records as incomplete (a channel outside its method)."""
    out: set[int] = set()
    for ds in rates_sets:
        try:
            params = json.loads(ds.options_json or "{}").get("parameters", {})
        except (ValueError, AttributeError):
            continue
        out.update(int(i) for i in params.get("lifetime_incomplete_level_ids", []))
    return out
