"""Shared vocabulary of line queries: media, multipoles and air formulas, for every front end.

Front ends (the command line, the web site, the Python API) must not import
:mod:`levels.physics` or :mod:`levels.store`; what they need of them (the names
and citations of the air formulas, the warning class the air formulas raise,
the corrections of a one-electron computation) is offered here. The module also re-expresses stored air
wavelengths in a requested air formula, so that an export header that names a
formula is true of every value below it.
"""

from __future__ import annotations

import json
import math
import warnings
from collections.abc import Mapping, Sequence
from typing import Any, cast

import numpy as np

from levels.errors import PhysicsInputError
from levels.physics.lines import air as _air

#: the air formulas a query may ask for
AIR_FORMULAS: tuple[str, ...] = _air.FORMULAS
#: default air formula (IAU convention, Morton 2000)
DEFAULT_AIR_FORMULA = "iau2000"
#: air wavelengths exist at and above this vacuum wavelength, nm (vacuum ultraviolet is quoted in vacuum)
AIR_FLOOR_NM: float = _air.AIR_MIN_NM
#: media of a wavelength window
MEDIA: tuple[str, ...] = ("air", "vacuum")
#: the one default medium of every front end (CLI, web pages, JSON API, Python API): "air" means the trade's
#: rule, air wavelengths at and above the 200 nm floor and vacuum wavelengths below it (common practice, no source)
DEFAULT_MEDIUM = "air"
#: multipoles the line engine builds from levels
ENGINE_MULTIPOLES: tuple[str, ...] = ("E1", "M1", "E2")
#: the warning raised when an air formula is used outside its published range
AirRangeWarning = _air.AirRangeWarning


#: the display label of each column key, one per quantity, for people: CLI table headings, web headings, docs.
#: The keys are the contract keys of CSV/JSON/ECSV (unchanged; users script against them). Units in brackets.
#: "A" alone is never used: the Einstein coefficient is "Einstein A", the isotope is "mass number", the unit is Å.
#: Statistical weights are "weight g", the magnetic factor is "Landé g"; parity is shown as even/odd.
LABELS: dict[str, str] = {
    "spectrum": "spectrum",
    "mass_number": "mass number",
    "z": "Z",
    "charge": "charge",
    "levels": "levels",
    "lines": "lines",
    "datasets": "datasets",
    "ionization_cm1": "ionization [cm⁻¹]",
    "ionization_unc_cm1": "unc [cm⁻¹]",
    "label": "level",
    "configuration": "configuration",
    "term": "term",
    "j": "J",
    "parity": "parity",
    "energy_cm1": "energy [cm⁻¹]",
    "unc_cm1": "unc [cm⁻¹]",
    "g": "weight g",
    "n": "n",
    "l": "l",
    "lifetime_s": "lifetime [s]",
    "lande_g": "Landé g",
    "dataset": "dataset",
    "lower": "lower level",
    "upper": "upper level",
    "lower_cm1": "lower [cm⁻¹]",
    "upper_cm1": "upper [cm⁻¹]",
    "wavenumber_cm1": "σ [cm⁻¹]",
    "vacuum_nm": "λ vacuum [nm]",
    "air_nm": "λ air [nm]",
    "multipole": "multipole",
    "a_per_s": "Einstein A [s⁻¹]",
    "f_abs": "f (absorption)",
    "line_strength_au": "S [e² a₀²]",
    "g_lower": "weight g lower",
    "g_upper": "weight g upper",
    "unc_nm": "unc [nm]",
    "rel_intensity": "rel. intensity",
    "photon_share": "photon share",
    "obs_nm": "observed [nm]",
    "ritz_nm": "Ritz [nm]",
    "obs_minus_ritz_nm": "observed - Ritz [nm]",
    "line_name": "name",
    "n_lines": "lines used",
    "n_used": "levels used",
    "stored_cm1": "stored [cm⁻¹]",
    "residual_cm1": "observed - Ritz [cm⁻¹]",
    "observed_nm": "observed [nm]",
    "medium": "medium",
    "peak_nm": "peak [nm]",
    "peak_unc_nm": "peak unc [nm]",
    "fwhm_nm": "FWHM [nm]",
    "line_nm": "line [nm]",
    "delta_nm": "peak - line [nm]",
    "a_rel_unc": "Einstein A rel. unc.",
    "lifetime_rel_unc": "lifetime rel. unc.",
    "population_rel": "population / ground",
    "departure": "departure b",
    "limit_cm1": "limit [cm⁻¹]",
    "limit_unc_cm1": "unc [cm⁻¹]",
}

#: how a stored parity (+1/-1) is shown to people (files keep +1/-1)
PARITY_WORDS: dict[int, str] = {1: "even", -1: "odd"}


def label(key: str) -> str:
    """The display label of a column key (the key itself when it has none).

    Examples
    --------
    >>> label("a_per_s"), label("mass_number"), label("no_such_key")
    ('Einstein A [s⁻¹]', 'mass number', 'no_such_key')
    """
    return LABELS.get(key, key)


#: air-formula names people type, by the formula's authors -> the code the store records. ``morton2000`` is the
#: refractive index of air as given by Morton (2000, ApJS 130, 403), which the store records as ``iau2000`` (its
#: code before formulas were named by their authors; still accepted as an alias).
AIR_FORMULA_ALIASES: dict[str, str] = {"morton2000": "iau2000"}
#: the air-formula names offered to people (the old ``iau2000`` stays accepted)
AIR_FORMULA_CHOICES: tuple[str, ...] = ("morton2000", "edlen1966", "ciddor1996", "iau2000")
#: the default air formula as people name it
DEFAULT_AIR_FORMULA_NAME = "morton2000"


def medium_statement(medium: str, air_formula: str | None = None) -> str:
    """What the wavelengths of a listing are, in words, for every header and heading.

    Parameters
    ----------
    medium : {"air", "vacuum"}
        The listing's medium.
    air_formula : str, optional
        The air formula's code or name (default :data:`DEFAULT_AIR_FORMULA`), or the description a dataset
        recorded; named for air listings only.

    Raises
    ------
    PhysicsInputError
        An unknown medium.

    Examples
    --------
    >>> medium_statement("vacuum")
    'wavelengths in vacuum'
    >>> medium_statement("air", "edlen1966")
    'wavelengths in air at and above 200 nm (Edlen 1966), in vacuum below'
    """
    if medium not in MEDIA:
        raise PhysicsInputError(f"medium must be one of {', '.join(MEDIA)}, not {medium!r}")
    if medium == "vacuum":
        return "wavelengths in vacuum"
    name = air_formula or DEFAULT_AIR_FORMULA
    code = AIR_FORMULA_ALIASES.get(name, name)
    # a formula's code or name gives its authors; a recorded description (a dataset's options) is quoted as it is
    who = AIR_FORMULA_AUTHORS.get(code, name)
    return f"wavelengths in air at and above {AIR_FLOOR_NM:g} nm ({who}), in vacuum below"


#: the authors' short name of each air formula code, for headings
AIR_FORMULA_AUTHORS: dict[str, str] = {"iau2000": "Morton 2000", "edlen1966": "Edlen 1966",
                                       "ciddor1996": "Ciddor 1996"}


def air_formula_code(name: str) -> str:
    """The code the store records for an air formula named by people (aliases resolved).

    Raises
    ------
    PhysicsInputError
        An unknown formula name.

    Examples
    --------
    >>> air_formula_code("morton2000"), air_formula_code("iau2000"), air_formula_code("edlen1966")
    ('iau2000', 'iau2000', 'edlen1966')
    """
    code = AIR_FORMULA_ALIASES.get(name, name)
    check_air_formula(code)
    return code


def air_formula_description(formula: str) -> str:
    """The one-line citation of an air formula, for export headers.

    Parameters
    ----------
    formula : {"iau2000", "edlen1966", "ciddor1996"}
        The formula's name.

    Returns
    -------
    str
        Its citation and the air it describes.

    Raises
    ------
    PhysicsInputError
        An unknown formula name.

    Examples
    --------
    >>> air_formula_description("iau2000").startswith("IAU standard air")
    True
    """
    check_air_formula(formula)
    return _air.formula_description(formula)


def check_air_formula(formula: str) -> None:
    """Raise :class:`PhysicsInputError` unless ``formula`` is one of :data:`AIR_FORMULAS`.

    Examples
    --------
    >>> check_air_formula("ciddor1996")
    """
    if formula not in AIR_FORMULAS:
        raise PhysicsInputError(f"unknown air formula {formula!r}; use {', '.join(AIR_FORMULAS)}")


def recorded_air_formula(options: str | Mapping | None) -> str | None:
    """The air formula a dataset's options record (its code), or None when they do not say.

    Options record either the formula's code (``"iau2000"``) or its citation
    (one-electron ions computed by this project write the citation, with a note).

    Parameters
    ----------
    options : str or mapping or None
        The dataset's options, as stored (JSON text) or parsed.

    Returns
    -------
    str or None
        One of :data:`AIR_FORMULAS`, or None.

    Examples
    --------
    >>> recorded_air_formula('{"air_formula": "edlen1966"}')
    'edlen1966'
    >>> recorded_air_formula({"air_formula": air_formula_description("iau2000") + " (extrapolated)"})
    'iau2000'
    >>> recorded_air_formula("{}") is None
    True
    """
    if options is None:
        return None
    if isinstance(options, str):
        try:
            options = json.loads(options or "{}")
        except ValueError:
            return None
    if not isinstance(options, Mapping):
        return None
    value = options.get("air_formula") or options.get("air")
    if not isinstance(value, str):
        return None
    if value in AIR_FORMULAS:
        return value
    for code in AIR_FORMULAS:
        if value.startswith(_air.formula_description(code)):
            return code
    return None


def air_window_to_vacuum(from_nm: float | None, to_nm: float | None,
                         formula: str) -> tuple[float | None, float | None]:
    """An air window (nm) as a vacuum window (nm) under ``formula``.

    Bounds below the 200 nm floor are vacuum wavelengths already (by convention)
    and stay as they are.

    Examples
    --------
    >>> lo, hi = air_window_to_vacuum(150.0, 656.0, "iau2000")
    >>> lo, round(hi, 2)
    (150.0, 656.18)
    """
    check_air_formula(formula)

    def convert(value: float | None) -> float | None:
        if value is None or value < AIR_FLOOR_NM:
            return value
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", AirRangeWarning)
            return float(_air.air_to_vacuum(value, formula))

    return convert(from_nm), convert(to_nm)


def air_wavelengths(vacuum_nm: Sequence[float] | np.ndarray, formula: str) -> np.ndarray:
    """Air wavelengths (nm) of vacuum wavelengths (nm) under ``formula``; NaN below the 200 nm floor.

    Examples
    --------
    >>> air_wavelengths([121.567, 656.4696], "iau2000").round(4).tolist()
    [nan, 656.2883]
    """
    check_air_formula(formula)
    vacuum = np.asarray(vacuum_nm, dtype=float)
    out = np.full(vacuum.shape, np.nan)
    inside = np.isfinite(vacuum) & (vacuum >= AIR_FLOOR_NM)
    if inside.any():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", AirRangeWarning)
            out[inside] = np.asarray(_air.vacuum_to_air(vacuum[inside], formula), dtype=float)
    return out


def reexpress_air(rows: list[dict], formula: str, recorded: Mapping[str, str | None]) -> int:
    """Recompute ``air_nm`` of line rows from ``vacuum_nm`` where their dataset used another air formula.

    Parameters
    ----------
    rows : list of dict
        Line rows with ``vacuum_nm`` (nm), ``air_nm`` (nm or None) and ``dataset``; changed in place.
    formula : str
        The air formula asked for.
    recorded : mapping
        Dataset name -> the formula its options record (None: not recorded, so recomputed).

    Returns
    -------
    int
        How many rows were recomputed.

    Examples
    --------
    >>> rows = [{"vacuum_nm": 656.4696, "air_nm": 1.0, "dataset": "a"},
    ...         {"vacuum_nm": 656.4696, "air_nm": 2.0, "dataset": "b"}]
    >>> reexpress_air(rows, "iau2000", {"a": "iau2000", "b": "edlen1966"})
    1
    >>> rows[0]["air_nm"], round(rows[1]["air_nm"], 4)
    (1.0, 656.2883)
    """
    check_air_formula(formula)
    todo = [i for i, row in enumerate(rows) if recorded.get(str(row.get("dataset"))) != formula]
    if not todo:
        return 0
    values = air_wavelengths([rows[i]["vacuum_nm"] for i in todo], formula)
    for i, value in zip(todo, values.tolist()):
        rows[i]["air_nm"] = value if math.isfinite(value) else None
    return len(todo)


def hydrogenic_corrections(*, recoil: bool = True, qed: bool = True, finite_size: bool = True):
    """The corrections of a one-electron computation (``levels hydrogenic`` options).

    Parameters
    ----------
    recoil : bool
        Finite nuclear mass (reduced mass and recoil terms).
    qed : bool
        Self energy, vacuum polarisation and the higher-order terms.
    finite_size : bool
        Finite nuclear charge radius.

    Returns
    -------
    levels.physics.one_electron.dirac.Corrections
        For :meth:`levels.catalog.Catalog.compute_hydrogenic`.

    Examples
    --------
    >>> hydrogenic_corrections(qed=False).as_dict()["self_energy"]
    False
    """
    from levels.physics.one_electron.dirac import Corrections

    return Corrections(recoil=recoil, self_energy=qed, vacuum_polarization=qed, finite_size=finite_size,
                       higher_order=qed)


#: output units of a line list's position column, as people type them -> (canonical name, column key, kind,
#: factor from the kind's base: nm for lengths, cm-1 for "wavenumber", eV for "energy", Hz for "frequency")
SPECTRAL_OUTPUT_UNITS: dict[str, tuple[str, str, str, float]] = {
    "nm": ("nm", "wavelength_nm", "length", 1.0),
    "Å": ("Å", "wavelength_angstrom", "length", 10.0),
    "A": ("Å", "wavelength_angstrom", "length", 10.0),
    "angstrom": ("Å", "wavelength_angstrom", "length", 10.0),
    "µm": ("µm", "wavelength_um", "length", 1e-3),
    "um": ("µm", "wavelength_um", "length", 1e-3),
    "cm-1": ("cm-1", "wavenumber_cm1", "wavenumber", 1.0),
    "eV": ("eV", "photon_energy_ev", "energy", 1.0),
    "keV": ("keV", "photon_energy_kev", "energy", 1e-3),
    "Hz": ("Hz", "frequency_hz", "frequency", 1.0),
}
#: the unit choices offered to people (CLI --unit, web ``unit=``, Python API ``unit=``)
SPECTRAL_OUTPUT_CHOICES: tuple[str, ...] = ("nm", "Å", "µm", "cm-1", "eV", "keV", "Hz")
_UNIT_LABELS = {"cm-1": "cm⁻¹"}


def spectral_output_unit(unit: str) -> tuple[str, str, str]:
    """(canonical unit, column key, heading) of a line list's position column in ``unit``.

    Lengths are wavelengths in the listing's medium; wavenumbers, photon energies and frequencies are
    properties of the photon (vacuum quantities: sigma, h c sigma, c sigma).

    Raises
    ------
    PhysicsInputError
        An unknown unit (the message lists the choices).

    Examples
    --------
    >>> spectral_output_unit("A"), spectral_output_unit("keV")[1]
    (('Å', 'wavelength_angstrom', 'λ [Å]'), 'photon_energy_kev')
    """
    key = unit.strip() if isinstance(unit, str) else unit
    lowered = {k.lower(): v for k, v in SPECTRAL_OUTPUT_UNITS.items()}
    entry = SPECTRAL_OUTPUT_UNITS.get(key) or (lowered.get(key.lower()) if isinstance(key, str) else None)
    if entry is None:
        raise PhysicsInputError(f"unit must be one of {', '.join(SPECTRAL_OUTPUT_CHOICES)}, not {unit!r}")
    name, column, kind, _ = entry
    shown = _UNIT_LABELS.get(name, name)
    heading = {"length": f"λ [{shown}]", "wavenumber": f"σ [{shown}]", "energy": f"photon energy [{shown}]",
               "frequency": f"ν [{shown}]"}[kind]
    return name, column, heading


def add_spectral_column(rows: Sequence[Mapping[str, Any]], unit: str, medium: str) -> tuple[str, str]:
    """Fill each row's position in ``unit`` (in place) and return (column key, heading).

    A length is the row's wavelength in ``medium`` (the air wavelength at and above 200 nm when ``medium`` is
    air, else the vacuum wavelength); a wavenumber, photon energy or frequency follows from the vacuum
    wavenumber (``wavenumber_cm1``, else ``1e7 / vacuum_nm``). Constants: CODATA via scipy.constants.

    Examples
    --------
    >>> rows = [{"vacuum_nm": 656.4696, "air_nm": 656.2796, "wavenumber_cm1": 15233.07}]
    >>> add_spectral_column(rows, "Å", "air"), round(rows[0]["wavelength_angstrom"], 3)
    (('wavelength_angstrom', 'λ (air ≥ 200 nm) [Å]'), 6562.796)
    >>> add_spectral_column(rows, "eV", "air")[0], round(rows[0]["photon_energy_ev"], 5)
    ('photon_energy_ev', 1.88866)
    """
    from levels.units import CM1_HZ, CM1_J, E_CHARGE

    if medium not in MEDIA:
        raise PhysicsInputError(f"medium must be one of {', '.join(MEDIA)}, not {medium!r}")
    name, column, heading = spectral_output_unit(unit)
    kind, factor = SPECTRAL_OUTPUT_UNITS[name][2], SPECTRAL_OUTPUT_UNITS[name][3]
    scale = {"wavenumber": 1.0, "energy": CM1_J / E_CHARGE * factor, "frequency": CM1_HZ}
    for read in rows:
        row = cast(dict[str, Any], read)  # display keys beside the contract's (a line row is a dict)
        vacuum, unc_nm = row.get("vacuum_nm"), row.get("unc_nm")
        sigma = row.get("wavenumber_cm1") or (1e7 / vacuum if vacuum else None)
        if kind == "length":
            nm = row.get("air_nm") if medium == "air" and row.get("air_nm") is not None else vacuum
            row[column] = None if nm is None else nm * factor
            unc = None if unc_nm is None else unc_nm * factor
        elif sigma is None:
            row[column] = unc = None
        else:
            row[column] = sigma * scale[kind]
            # |d sigma| = d lambda / lambda^2 (1e7 from nm cm-1)
            unc = None if unc_nm is None or not vacuum else unc_nm * 1e7 / vacuum**2 * scale[kind]
        row[column + "_unc"] = unc  # not a column: the display rounds the value to it
    if kind == "length":
        heading = heading.replace("λ ", "λ (air ≥ 200 nm) " if medium == "air" else "λ vacuum ")
    return column, heading
