"""Vacuum and air wavelengths: the refractive index of air by three published formulas.

A wavelength measured in air is shorter than the vacuum wavelength by the
refractive index of air, ``air_nm = vacuum_nm / n(vacuum_nm)``. Three formulas
for ``n`` are offered; the one used is a documented option of every export.

``"iau2000"``
    The convention adopted by the IAU and given by Morton (2000):
    Edlen's form with the coefficients of Birch & Downs (1994), for standard
    dry air at 15 degC and 101 325 Pa. Conditions are ignored.
``"edlen1966"``
    Edlen (1966): standard air (dry, 15 degC, 101 325 Pa = 760 Torr,
    300 ppm CO2). Conditions are ignored.
``"ciddor1996"``
    Ciddor (1996), Appendix A: moist air at any temperature, pressure,
    relative humidity and CO2 content, from the refractivities of standard
    air and of water vapour weighted by their densities (BIPM 1981/91
    equation of state).

The three agree within 1.6e-8 in n (at most 3e-5 nm in wavelength) from
230 nm to 2 um, comparable with the 1e-8 to 2e-8 by which Birch & Downs (1993)
found the 1966 equation to differ from newer measurements. Ciddor's dispersion
term refits Peck & Reeder (1972), whose data start near 230 nm; extrapolated
below that it departs from the Edlen-type formulas, by 3.0e-7 in n at 200 nm.

By this project's convention air wavelengths exist only at and above 200 nm
(vacuum-ultraviolet lines are quoted in vacuum): below 200 nm the functions
return NaN. Inside the 200 nm floor, a wavelength or condition outside a
formula's published range of validity is still computed but raises an
:class:`AirRangeWarning`.

References
----------
B. Edlen, "The refractive index of air", Metrologia 2, 71-80 (1966).
P. E. Ciddor, "Refractive index of air: new equations for the visible and near
infrared", Applied Optics 35, 1566-1573 (1996).
D. C. Morton, "Atomic data for resonance absorption lines. II. Wavelengths
longward of the Lyman limit for heavy elements", Astrophys. J. Suppl. Ser. 130,
403-436 (2000).
K. P. Birch and M. J. Downs, "Correction to the updated Edlen equation for the
refractive index of air", Metrologia 31, 315-316 (1994).
K. P. Birch and M. J. Downs, "An updated Edlen equation for the refractive index
of air", Metrologia 30, 155-162 (1993).
E. R. Peck and K. Reeder, "Dispersion of air", J. Opt. Soc. Am. 62, 958-962 (1972).
"""

from __future__ import annotations

import warnings

import numpy as np
import numpy.typing as npt
import scipy.constants as sc

from levels.errors import PhysicsInputError

__all__ = [
    "FORMULAS",
    "AIR_MIN_NM",
    "AirRangeWarning",
    "vacuum_to_air",
    "air_to_vacuum",
    "refractive_index",
    "formula_description",
]

#: Names accepted by the ``formula`` argument; the first is the default.
FORMULAS: tuple[str, ...] = ("iau2000", "edlen1966", "ciddor1996")

#: Shortest wavelength (vacuum, nm) for which an air wavelength is defined here.
AIR_MIN_NM: float = 200.0

#: Published wavelength range of validity (vacuum nm) of each formula.
#: Edlen 1966 fitted data from 0.2 to 2 um; Morton 2000 recommends the IAU
#: formula above 200 nm (it is the same dispersion form, refitted by Birch &
#: Downs over the same range); Ciddor 1996 states 300 nm to 1690 nm (his
#: dispersion term rests on Peck & Reeder 1972 data from 230 nm).
_VALID_NM: dict[str, tuple[float, float]] = {
    "iau2000": (200.0, 2000.0),
    "edlen1966": (200.0, 2000.0),
    "ciddor1996": (300.0, 1690.0),
}

#: Ciddor 1996 stated range of the atmospheric conditions.
_CIDDOR_T_C = (-40.0, 100.0)
_CIDDOR_P_PA = (80_000.0, 120_000.0)
_CIDDOR_CO2_PPM = (0.0, 2000.0)

_DESCRIPTIONS = {
    "iau2000": (
        "IAU standard air (Morton 2000, ApJS 130, 403; Birch & Downs 1994, "
        "Metrologia 31, 315): dry air, 15 degC, 101325 Pa"
    ),
    "edlen1966": (
        "Edlen 1966 (Metrologia 2, 71): standard air, dry, 15 degC, 101325 Pa, 300 ppm CO2"
    ),
    "ciddor1996": "Ciddor 1996 (Applied Optics 35, 1566): moist air at the stated conditions",
}

# Converged when the air->vacuum fixed-point step is below this (nm).
_ITER_TOL_NM = 1e-12
_ITER_MAX = 50


class AirRangeWarning(UserWarning):
    """A wavelength or atmospheric condition lies outside a formula's published range."""


# --------------------------------------------------------------------------- kernels



#: Relative standard uncertainty of a wavelength converted between vacuum and air by these formulas: the 1e-8 to
#: 2e-8 in n by which newer measurements differ from Edlén's equation (Birch & Downs 1993) and the formulas' own
#: mutual spread (1.6e-8, module docstring); the larger figure is taken. It is the floor of any air wavelength the
#: tool converts, however exact the vacuum value.
CONVERSION_REL_UNC = 2e-8

def _sigma2(vacuum_nm: np.ndarray) -> np.ndarray:
    """Squared vacuum wavenumber in um^-2."""
    sigma = 1.0e3 / vacuum_nm
    return sigma * sigma


def _refractivity_iau2000(vacuum_nm: np.ndarray) -> np.ndarray:
    # Morton 2000: n - 1 = 8.34254e-5 + 2.406147e-2/(130 - s^2) + 1.5998e-4/(38.9 - s^2)
    s2 = _sigma2(vacuum_nm)
    return 8.34254e-5 + 2.406147e-2 / (130.0 - s2) + 1.5998e-4 / (38.9 - s2)


def _refractivity_edlen1966(vacuum_nm: np.ndarray) -> np.ndarray:
    # Edlen 1966: (n - 1) 1e8 = 8342.13 + 2406030/(130 - s^2) + 15997/(38.9 - s^2)
    s2 = _sigma2(vacuum_nm)
    return 1e-8 * (8342.13 + 2406030.0 / (130.0 - s2) + 15997.0 / (38.9 - s2))


# Ciddor 1996, Appendix A, constants.
_K0, _K1, _K2, _K3 = 238.0185, 5792105.0, 57.362, 167917.0  # um^-2
_W0, _W1, _W2, _W3 = 295.235, 2.6422, -0.032380, 0.004028  # um^-2 powers
_A0, _A1, _A2 = 1.58123e-6, -2.9331e-8, 1.1043e-10  # K/Pa, 1/Pa, 1/(K Pa)
_B0, _B1 = 5.707e-6, -2.051e-8  # K/Pa, 1/Pa
_C0, _C1 = 1.9898e-4, -2.376e-6  # K/Pa, 1/Pa
_D, _E = 1.83e-11, -0.765e-8  # K^2/Pa^2
# saturation vapour pressure over water (BIPM 1981/91 formula quoted by Ciddor)
_SVP_A, _SVP_B, _SVP_C, _SVP_D = 1.2378847e-5, -1.9121316e-2, 33.93711047, -6.3431645e3
# enhancement factor of water vapour in air
_F_ALPHA, _F_BETA, _F_GAMMA = 1.00062, 3.14e-8, 5.6e-7
_M_W = 0.018015  # kg/mol, molar mass of water vapour (Ciddor 1996)
_R_GAS = sc.R  # J/(mol K); the dry-air term does not depend on it (it cancels)
# Reference states of Ciddor 1996: standard air 15 degC, 101325 Pa, dry;
# pure water vapour 20 degC, 1333 Pa.
_T_STD_K, _P_STD_PA = 288.15, 101325.0
_T_WV_K, _P_WV_PA = 293.15, 1333.0


def _ciddor_compressibility(p_pa, t_k, x_w):
    """Compressibility Z of moist air, BIPM 1981/91 equation as given by Ciddor 1996, Appendix A."""
    t_c = t_k - 273.15
    pt = p_pa / t_k
    return (
        1.0
        - pt * (_A0 + _A1 * t_c + _A2 * t_c**2 + (_B0 + _B1 * t_c) * x_w + (_C0 + _C1 * t_c) * x_w**2)
        + pt**2 * (_D + _E * x_w**2)
    )


def _ciddor_reference_densities(co2_ppm):
    """Densities of standard dry air (with ``co2_ppm``) and of the water-vapour reference.

    Returns ``(molar mass of dry air kg/mol, rho_axs, rho_vs)`` in kg/m^3, with
    the compressibilities from the same equation of state (Ciddor 1996 quotes
    Z_a = 0.9995922115 and rho_vs = 0.00985938 kg/m^3).
    """
    m_a = 1e-3 * (28.9635 + 12.011e-6 * (co2_ppm - 400.0))
    z_a = _ciddor_compressibility(_P_STD_PA, _T_STD_K, 0.0)
    z_w = _ciddor_compressibility(_P_WV_PA, _T_WV_K, 1.0)
    rho_axs = _P_STD_PA * m_a / (z_a * _R_GAS * _T_STD_K)
    rho_vs = _P_WV_PA * _M_W / (z_w * _R_GAS * _T_WV_K)
    return m_a, rho_axs, rho_vs


def _refractivity_ciddor1996(vacuum_nm, temperature_c, pressure_pa, humidity, co2_ppm):
    s2 = _sigma2(vacuum_nm)
    t_k = temperature_c + 273.15
    # standard air with 450 ppm CO2, then scaled to the CO2 content
    n_as = 1e-8 * (_K1 / (_K0 - s2) + _K3 / (_K2 - s2))
    n_axs = n_as * (1.0 + 0.534e-6 * (co2_ppm - 450.0))
    # water vapour at 20 degC, 1333 Pa (the factor 1.022 is Ciddor's correction)
    n_ws = 1.022e-8 * (_W0 + _W1 * s2 + _W2 * s2**2 + _W3 * s2**3)
    # mole fraction of water vapour from relative humidity (Appendix A)
    svp = np.exp(_SVP_A * t_k**2 + _SVP_B * t_k + _SVP_C + _SVP_D / t_k)
    f = _F_ALPHA + _F_BETA * pressure_pa + _F_GAMMA * temperature_c**2
    x_w = f * humidity * svp / pressure_pa
    m_a, rho_axs, rho_vs = _ciddor_reference_densities(co2_ppm)
    z = _ciddor_compressibility(pressure_pa, t_k, x_w)
    # densities of the dry-air and water-vapour components
    rho_a = pressure_pa * m_a * (1.0 - x_w) / (z * _R_GAS * t_k)
    rho_w = pressure_pa * _M_W * x_w / (z * _R_GAS * t_k)
    # refractivities add in proportion to the component densities
    return (rho_a / rho_axs) * n_axs + (rho_w / rho_vs) * n_ws


# --------------------------------------------------------------------------- checks


def _check_formula(formula: str) -> None:
    if formula not in FORMULAS:
        raise PhysicsInputError(f"unknown air formula {formula!r}; choose one of {', '.join(FORMULAS)}")


def _as_wavelength(values: npt.ArrayLike, name: str) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    finite = np.isfinite(arr)
    if np.any(arr[finite] <= 0.0):
        raise PhysicsInputError(f"{name} must be positive (nm)")
    return arr


def _check_conditions(temperature_c, pressure_pa, humidity, co2_ppm):
    t = np.asarray(temperature_c, dtype=float)
    p = np.asarray(pressure_pa, dtype=float)
    h = np.asarray(humidity, dtype=float)
    c = np.asarray(co2_ppm, dtype=float)
    for name, arr in (("temperature_c", t), ("pressure_pa", p), ("humidity", h), ("co2_ppm", c)):
        if not np.all(np.isfinite(arr)):
            raise PhysicsInputError(f"{name} must be finite")
    if np.any(t <= -273.15):
        raise PhysicsInputError("temperature_c must be above absolute zero (-273.15 degC)")
    if np.any(p <= 0.0):
        raise PhysicsInputError("pressure_pa must be positive")
    if np.any((h < 0.0) | (h > 1.0)):
        raise PhysicsInputError("humidity is relative humidity as a fraction from 0 to 1 (not percent)")
    if np.any(c < 0.0):
        raise PhysicsInputError("co2_ppm must be non-negative")
    return t, p, h, c


def _warn_conditions(t, p, c) -> None:
    out = []
    if np.any((t < _CIDDOR_T_C[0]) | (t > _CIDDOR_T_C[1])):
        out.append(f"temperature outside {_CIDDOR_T_C[0]:g}..{_CIDDOR_T_C[1]:g} degC")
    if np.any((p < _CIDDOR_P_PA[0]) | (p > _CIDDOR_P_PA[1])):
        out.append(f"pressure outside {_CIDDOR_P_PA[0]:g}..{_CIDDOR_P_PA[1]:g} Pa")
    if np.any(c > _CIDDOR_CO2_PPM[1]):
        out.append(f"CO2 above {_CIDDOR_CO2_PPM[1]:g} ppm")
    if out:
        warnings.warn(
            "ciddor1996: " + "; ".join(out) + " (outside the published range; extrapolated)",
            AirRangeWarning,
            stacklevel=3,
        )


def _warn_range(formula: str, vacuum_nm: np.ndarray) -> None:
    lo, hi = _VALID_NM[formula]
    v = vacuum_nm[np.isfinite(vacuum_nm) & (vacuum_nm >= AIR_MIN_NM)]
    if v.size and (np.any(v < lo) or np.any(v > hi)):
        warnings.warn(
            f"{formula}: wavelengths outside its published range {lo:g}-{hi:g} nm are extrapolated",
            AirRangeWarning,
            stacklevel=3,
        )


def _refractivity(formula, vacuum_nm, t, p, h, c):
    """n - 1 without range masking (callers mask below 200 nm)."""
    if formula == "iau2000":
        return _refractivity_iau2000(vacuum_nm)
    if formula == "edlen1966":
        return _refractivity_edlen1966(vacuum_nm)
    return _refractivity_ciddor1996(vacuum_nm, t, p, h, c)


def _return(arr: np.ndarray, scalar: bool):
    return float(arr) if scalar else arr


# --------------------------------------------------------------------------- public API


def refractive_index(
    vacuum_nm: npt.ArrayLike,
    formula: str = "iau2000",
    *,
    temperature_c: npt.ArrayLike = 15.0,
    pressure_pa: npt.ArrayLike = 101325.0,
    humidity: npt.ArrayLike = 0.0,
    co2_ppm: npt.ArrayLike = 450.0,
) -> float | np.ndarray:
    """Phase refractive index of air at a vacuum wavelength.

    Parameters
    ----------
    vacuum_nm : float or array_like
        Vacuum wavelength, nm (positive; NaN passes through).
    formula : {"iau2000", "edlen1966", "ciddor1996"}
        Which published formula (see :data:`FORMULAS`).
    temperature_c : float or array_like
        Air temperature, degC. Used by ``ciddor1996`` only.
    pressure_pa : float or array_like
        Total air pressure, Pa. Used by ``ciddor1996`` only.
    humidity : float or array_like
        Relative humidity as a fraction, 0 to 1. Used by ``ciddor1996`` only.
    co2_ppm : float or array_like
        CO2 mole fraction, ppm (umol/mol). Used by ``ciddor1996`` only.

    Returns
    -------
    float or ndarray
        The refractive index n (dimensionless); NaN below 200 nm. A scalar
        input gives a float.

    Raises
    ------
    PhysicsInputError
        Unknown formula, non-positive wavelength, temperature at or below
        absolute zero, non-positive pressure, humidity outside 0..1, or
        negative CO2.

    Warns
    -----
    AirRangeWarning
        A wavelength (>= 200 nm) or a Ciddor condition outside the published range.

    Notes
    -----
    With sigma = 1/lambda_vac in um^-1:

    * iau2000 (Morton 2000):
      n - 1 = 8.34254e-5 + 2.406147e-2/(130 - sigma^2) + 1.5998e-4/(38.9 - sigma^2)
    * edlen1966 (Edlen 1966):
      (n - 1) 1e8 = 8342.13 + 2406030/(130 - sigma^2) + 15997/(38.9 - sigma^2)
    * ciddor1996 (Ciddor 1996, Appendix A):
      n - 1 = (rho_a/rho_axs)(n_axs - 1) + (rho_w/rho_ws)(n_ws - 1), with
      (n_as - 1) 1e8 = 5792105/(238.0185 - sigma^2) + 167917/(57.362 - sigma^2),
      n_axs - 1 = (n_as - 1)(1 + 0.534e-6 (x_c - 450)),
      (n_ws - 1) 1e8 = 1.022 (295.235 + 2.6422 sigma^2 - 0.032380 sigma^4 + 0.004028 sigma^6),
      and the densities from the BIPM 1981/91 equation of state with the
      compressibility Z(p, T, x_w). The gas constant is taken from
      :mod:`scipy.constants`; it cancels in the dry-air term and changes the
      water term by parts in 1e6 of itself.

    References
    ----------
    B. Edlen, Metrologia 2, 71 (1966). P. E. Ciddor, Appl. Opt. 35, 1566 (1996).
    D. C. Morton, ApJS 130, 403 (2000). K. P. Birch and M. J. Downs, Metrologia 31, 315 (1994).

    Examples
    --------
    >>> round((refractive_index(633.0) - 1) * 1e8, 1)
    27653.1

    Ciddor's moist-air equation at 20 degC, 100 kPa, dry air, 450 ppm CO2
    (his Table 1 lists 26824.4 for 633 nm):

    >>> round((refractive_index(633.0, "ciddor1996", temperature_c=20.0, pressure_pa=1e5) - 1) * 1e8, 1)
    26824.4
    """
    _check_formula(formula)
    vac = _as_wavelength(vacuum_nm, "vacuum_nm")
    t, p, h, c = _check_conditions(temperature_c, pressure_pa, humidity, co2_ppm)
    _warn_range(formula, vac)
    if formula == "ciddor1996":
        _warn_conditions(t, p, c)
    scalar = vac.ndim == 0 and all(np.ndim(a) == 0 for a in (t, p, h, c))
    with np.errstate(invalid="ignore", divide="ignore"):
        safe = np.where(vac >= AIR_MIN_NM, vac, np.nan)
        n = 1.0 + _refractivity(formula, safe, t, p, h, c)
    return _return(np.asarray(n, dtype=float), scalar)


def vacuum_to_air(
    vacuum_nm: npt.ArrayLike,
    formula: str = "iau2000",
    *,
    temperature_c: npt.ArrayLike = 15.0,
    pressure_pa: npt.ArrayLike = 101325.0,
    humidity: npt.ArrayLike = 0.0,
    co2_ppm: npt.ArrayLike = 450.0,
) -> float | np.ndarray:
    """Air wavelength of a vacuum wavelength, ``vacuum_nm / n(vacuum_nm)``.

    Parameters
    ----------
    vacuum_nm : float or array_like
        Vacuum wavelength, nm.
    formula : {"iau2000", "edlen1966", "ciddor1996"}
        Refractive-index formula (see :func:`refractive_index`).
    temperature_c, pressure_pa, humidity, co2_ppm : float or array_like
        Air conditions, degC, Pa, fraction 0..1, ppm; used by ``ciddor1996`` only.

    Returns
    -------
    float or ndarray
        Air wavelength, nm; NaN where ``vacuum_nm`` < 200 nm (vacuum-ultraviolet
        lines are quoted in vacuum by convention).

    Raises
    ------
    PhysicsInputError
        As :func:`refractive_index`.

    Notes
    -----
    lambda_air = lambda_vac / n(sigma_vac); every formula is a function of the
    vacuum wavenumber, so this direction is explicit.

    References
    ----------
    D. C. Morton, ApJS 130, 403 (2000).

    Examples
    --------
    >>> round(vacuum_to_air(500.0), 6)
    499.860552
    >>> import numpy as np
    >>> np.round(vacuum_to_air(np.array([150.0, 605.780211])), 4)
    array([     nan, 605.6125])
    """
    n = refractive_index(
        vacuum_nm,
        formula,
        temperature_c=temperature_c,
        pressure_pa=pressure_pa,
        humidity=humidity,
        co2_ppm=co2_ppm,
    )
    vac = np.asarray(vacuum_nm, dtype=float)
    out = vac / np.asarray(n)
    return _return(np.asarray(out, dtype=float), np.ndim(n) == 0)


def air_to_vacuum(
    air_nm: npt.ArrayLike,
    formula: str = "iau2000",
    *,
    temperature_c: npt.ArrayLike = 15.0,
    pressure_pa: npt.ArrayLike = 101325.0,
    humidity: npt.ArrayLike = 0.0,
    co2_ppm: npt.ArrayLike = 450.0,
) -> float | np.ndarray:
    """Vacuum wavelength of an air wavelength, by fixed-point iteration of the exact relation.

    Parameters
    ----------
    air_nm : float or array_like
        Wavelength in air, nm.
    formula : {"iau2000", "edlen1966", "ciddor1996"}
        Refractive-index formula (see :func:`refractive_index`).
    temperature_c, pressure_pa, humidity, co2_ppm : float or array_like
        Air conditions, degC, Pa, fraction 0..1, ppm; used by ``ciddor1996`` only.

    Returns
    -------
    float or ndarray
        Vacuum wavelength, nm; NaN where the result would lie below 200 nm.

    Raises
    ------
    PhysicsInputError
        As :func:`refractive_index`.

    Notes
    -----
    Solves lambda_vac = lambda_air n(lambda_vac) by iterating
    lambda_(k+1) = lambda_air n(lambda_k) from lambda_0 = lambda_air. The map
    contracts by |d ln n / d ln lambda| ~ 1e-5, so a few steps reach the
    stopping criterion: every step below 1e-12 nm (or 4 units in the last place,
    whichever is larger), which makes the round trip exact to that level rather
    than to the ~1e-8 relative accuracy of approximate inverse formulas.

    References
    ----------
    D. C. Morton, ApJS 130, 403 (2000).

    Examples
    --------
    >>> round(air_to_vacuum(499.860552), 6)
    500.0
    >>> round(air_to_vacuum(vacuum_to_air(1500.0, "ciddor1996"), "ciddor1996"), 9)
    1500.0
    """
    _check_formula(formula)
    air = _as_wavelength(air_nm, "air_nm")
    t, p, h, c = _check_conditions(temperature_c, pressure_pa, humidity, co2_ppm)
    scalar = air.ndim == 0 and all(np.ndim(a) == 0 for a in (t, p, h, c))
    # n - 1 < 4e-4 for these formulas in their domain: an air wavelength below
    # 199.9 nm has its vacuum wavelength below 200 nm.
    shape = np.broadcast_shapes(air.shape, t.shape, p.shape, h.shape, c.shape)
    air_b = np.broadcast_to(air, shape)
    candidate = np.isfinite(air_b) & (air_b >= AIR_MIN_NM * (1.0 - 4e-4))
    vac = np.where(candidate, air_b, np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        for _ in range(_ITER_MAX):
            new = air_b * (1.0 + _refractivity(formula, vac, t, p, h, c))
            step = np.abs(new - vac)
            vac = new
            tol = np.maximum(_ITER_TOL_NM, 4.0 * np.spacing(np.abs(vac)))
            if not np.any(step[candidate] > tol[candidate]):
                break
        else:  # pragma: no cover - the map contracts by ~1e-5; never reached
            raise PhysicsInputError("air_to_vacuum did not converge")
    vac = np.where(candidate & (vac >= AIR_MIN_NM), vac, np.nan)
    _warn_range(formula, vac)
    if formula == "ciddor1996":
        _warn_conditions(t, p, c)
    return _return(np.asarray(vac, dtype=float), scalar)


def formula_description(formula: str) -> str:
    """One-line citation of an air formula, for export headers.

    Parameters
    ----------
    formula : {"iau2000", "edlen1966", "ciddor1996"}
        The formula name.

    Returns
    -------
    str
        The citation and the air it describes.

    Raises
    ------
    PhysicsInputError
        Unknown formula name.

    Examples
    --------
    >>> formula_description("edlen1966").startswith("Edlen 1966")
    True
    """
    _check_formula(formula)
    return _DESCRIPTIONS[formula]
