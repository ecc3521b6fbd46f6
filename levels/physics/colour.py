"""Colour and radiometric metrics of a lamp's emitted spectrum.

CIE 1931 2° chromaticity (x, y) and CIE 1976 UCS (u', v'); correlated colour
temperature (CCT) and distance from the Planckian locus (Duv); luminous
efficacy of radiation; shares of the radiant power in the ultraviolet bands,
the visible and the infrared; and an sRGB swatch of a chromaticity.

Spectra are given either on a wavelength grid (spectral power per nm, any
monotonic grid, air wavelengths in nm like the CIE tables) or as a list of
lines (wavelength, power) for pure line spectra whose lines are narrower than
any practical grid. The colour-matching functions and V(lambda) come from
colour-science and are loaded once.

Method choices
--------------
* Integrals over a grid are trapezoid integrals of the spectrum times the
  colour-matching function linearly interpolated onto the grid (zero outside
  360-830 nm, where the CIE tables end).
* CCT is the temperature of the closest point of the Planckian locus in the
  CIE 1960 (u, v) diagram (the definition of CIE 15:2004), found by
  a table search over 1000-100 000 K followed by bounded Brent minimisation of
  the distance (converged to 1e-7 relative); the locus is computed from
  Planck's law (second radiation constant h c / k from CODATA, refractive
  index 1) and the same CMFs. Duv is the signed distance, positive above the
  locus (towards green), following Ohno (2014). CCT and Duv are reported only
  for |Duv| <= 0.05 and a closest point inside 1000-100 000 K, else None.
* Luminous efficacy uses K_m = 683 lm/W with the tabulated CIE 1924 V(lambda),
  which is 1 at 555 nm; the SI defines K_cd = 683 lm/W at 540 THz
  (555.017 nm in standard air), where the linearly interpolated table gives
  V = 0.9999976, so a 540 THz line comes out at 682.998 lm/W.
* Band limits follow CIE S 017 (ILV): UV-C 100-280 nm, UV-B 280-315 nm,
  UV-A 315-400 nm, visible 380-780 nm, IR above 780 nm. The visible band
  overlaps UV-A between 380 and 400 nm, so that strip counts in both and the
  shares can add up to more than 1; power below 100 nm is in no band.

References
----------
.. [1] CIE 15:2004, *Colorimetry*, 3rd ed., Commission Internationale de
   l'Éclairage (2004): CIE 1931 observer, u'v', CCT definition, illuminants.
.. [2] Y. Ohno, "Practical use and calculation of CCT and Duv", LEUKOS 10(1),
   47-55 (2014).
.. [3] BIPM, *The International System of Units (SI)*, 9th ed. (2019): the
   candela, K_cd = 683 lm/W at 540e12 Hz.
.. [4] CIE S 017/E:2020, *ILV: International Lighting Vocabulary* (UV-A, UV-B,
   UV-C band limits, visible radiation).
.. [5] IEC 61966-2-1:1999, *Default RGB colour space - sRGB*.
.. [6] T. Mansencal et al., colour-science (Python package), the tabulated
   CIE 1931 2° CMFs and CIE 1924 photopic V(lambda).
"""

from __future__ import annotations

import functools
import math
import warnings
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.integrate import trapezoid
from scipy.optimize import minimize_scalar

from levels import units
from levels.errors import PhysicsInputError

__all__ = [
    "K_M_LM_PER_W",
    "BANDS_NM",
    "Chromaticity",
    "cmf_tables",
    "tristimulus",
    "chromaticity",
    "xy_to_uv_prime",
    "cct_duv",
    "luminous_efficacy",
    "band_shares",
    "lamp_metrics",
    "lamp_metrics_from_lines",
    "srgb_swatch",
]

#: maximum luminous efficacy for photopic vision, lm/W (SI: K_cd = 683 lm/W at 540 THz)
K_M_LM_PER_W = 683.0

#: radiometric bands (CIE S 017): name -> (lower nm, upper nm), half-open [lower, upper)
BANDS_NM: dict[str, tuple[float, float]] = {
    "share_uv_c": (100.0, 280.0),
    "share_uv_b": (280.0, 315.0),
    "share_uv_a": (315.0, 400.0),
    "share_visible": (380.0, 780.0),
    "share_ir": (780.0, math.inf),
}

_CMF_NAME = "CIE 1931 2 Degree Standard Observer"
_V_NAME = "CIE 1924 Photopic Standard Observer"
#: |Duv| above which the CCT is not reported (CIE 15:2004)
_DUV_LIMIT = 0.05
_CCT_RANGE_K = (1000.0, 100_000.0)
#: second radiation constant h c / k, m K
_C2_M_K = units.H * units.C / units.K_B
#: IEC 61966-2-1 XYZ -> linear sRGB matrix (D65 white)
_XYZ_TO_SRGB = np.array(
    [
        [3.2406, -1.5372, -0.4986],
        [-0.9689, 1.8758, 0.0415],
        [0.0557, -0.2040, 1.0570],
    ]
)


class CmfTables(NamedTuple):
    """Tabulated observer functions on their own 1-nm wavelength grid."""

    wavelength_nm: NDArray[np.float64]
    xbar: NDArray[np.float64]
    ybar: NDArray[np.float64]
    zbar: NDArray[np.float64]
    v_photopic: NDArray[np.float64]


class Chromaticity(NamedTuple):
    """Chromaticity coordinates (dimensionless); NaN when the spectrum has no visible part."""

    x: float
    y: float
    u_prime: float
    v_prime: float


@functools.lru_cache(maxsize=1)
def cmf_tables() -> CmfTables:
    """The CIE 1931 2° colour-matching functions and CIE 1924 V(lambda), loaded once.

    Returns
    -------
    CmfTables
        Wavelengths (nm, 360-830 in 1-nm steps), xbar, ybar, zbar and V (dimensionless).

    References
    ----------
    CIE 15:2004; tables as shipped by colour-science
    (``colour.MSDS_CMFS['CIE 1931 2 Degree Standard Observer']``,
    ``colour.colorimetry.SDS_LEFS_PHOTOPIC['CIE 1924 Photopic Standard Observer']``).

    Examples
    --------
    >>> t = cmf_tables()
    >>> float(t.wavelength_nm[0]), float(t.wavelength_nm[-1]), float(t.v_photopic[195])
    (360.0, 830.0, 1.0)
    """
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        colour = import_colour_science()
        from colour.colorimetry import SDS_LEFS_PHOTOPIC

        cmfs = colour.MSDS_CMFS[_CMF_NAME]
        lef = SDS_LEFS_PHOTOPIC[_V_NAME]
        wl = np.asarray(cmfs.wavelengths, dtype=float)
        values = np.asarray(cmfs.values, dtype=float)
        v = np.interp(wl, np.asarray(lef.wavelengths, dtype=float), np.asarray(lef.values, dtype=float),
                      left=0.0, right=0.0)
    for arr in (wl, values, v):
        arr.setflags(write=False)
    return CmfTables(wl, values[:, 0].copy(), values[:, 1].copy(), values[:, 2].copy(), v)


def import_colour_science():
    """Import colour-science without its process-wide side effects, and return the module.

    On import, colour-science switches numpy to its legacy (1.13) print mode and,
    when matplotlib is absent, puts mock ``matplotlib`` modules into
    ``sys.modules``; both would change the behaviour of unrelated code in the
    same process, so both are undone here.
    """
    options = np.get_printoptions()
    import colour

    np.set_printoptions(**options)
    _drop_plotting_stand_ins()
    return colour


def _drop_plotting_stand_ins() -> None:
    """Remove the mock ``matplotlib`` modules colour-science installs when matplotlib is absent.

    colour-science puts ``unittest.mock.MagicMock`` objects into ``sys.modules``
    under ``matplotlib*`` names; other libraries in the same process that probe
    for matplotlib (``importlib.util.find_spec``) then fail. We use no plotting
    from colour-science, so the stand-ins are taken out again.
    """
    import sys
    from unittest import mock

    for name in [n for n in sys.modules if n == "matplotlib" or n.startswith("matplotlib.")]:
        if isinstance(sys.modules[name], mock.Mock):
            del sys.modules[name]


# ---------------------------------------------------------------------------------------------
# input handling and integration
# ---------------------------------------------------------------------------------------------


def _spectrum(grid_nm: ArrayLike, spectral_power: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    grid = np.asarray(grid_nm, dtype=float)
    s = np.asarray(spectral_power, dtype=float)
    if grid.ndim != 1 or grid.size < 2 or s.shape != grid.shape:
        raise PhysicsInputError(
            f"grid_nm and spectral_power must be 1-D of one length >= 2, got shapes {grid.shape} and {s.shape}"
        )
    if not np.all(np.isfinite(grid)) or not np.all(np.isfinite(s)):
        raise PhysicsInputError("grid_nm and spectral_power must be finite")
    d = np.diff(grid)
    if np.all(d < 0):
        grid, s = grid[::-1], s[::-1]
    elif not np.all(d > 0):
        raise PhysicsInputError("grid_nm must be strictly monotonic")
    if grid[0] <= 0:
        raise PhysicsInputError("wavelengths must be > 0 nm")
    if np.any(s < 0):
        raise PhysicsInputError("spectral_power must be >= 0 (an emission spectrum)")
    return grid, s


def _lines(wavelength_nm: ArrayLike, power: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    wl = np.atleast_1d(np.asarray(wavelength_nm, dtype=float))
    p = np.atleast_1d(np.asarray(power, dtype=float))
    if wl.ndim != 1 or p.shape != wl.shape or wl.size == 0:
        raise PhysicsInputError(f"wavelength_nm and power must be 1-D of one length >= 1, got {wl.shape} and {p.shape}")
    if not np.all(np.isfinite(wl)) or np.any(wl <= 0):
        raise PhysicsInputError("line wavelengths must be finite and > 0 nm")
    if not np.all(np.isfinite(p)) or np.any(p < 0):
        raise PhysicsInputError("line powers must be finite and >= 0")
    return wl, p


def _cmf_at(wl: NDArray[np.float64]) -> NDArray[np.float64]:
    """xbar, ybar, zbar, V linearly interpolated at wavelengths ``wl`` (shape (4, n))."""
    t = cmf_tables()
    return np.vstack(
        [np.interp(wl, t.wavelength_nm, f, left=0.0, right=0.0) for f in (t.xbar, t.ybar, t.zbar, t.v_photopic)]
    )


def _cumulative(grid: NDArray[np.float64], y: NDArray[np.float64]) -> NDArray[np.float64]:
    return np.concatenate(([0.0], np.cumsum(0.5 * (y[1:] + y[:-1]) * np.diff(grid))))


def _integral_to(grid: NDArray[np.float64], y: NDArray[np.float64], cum: NDArray[np.float64],
                 points: NDArray[np.float64]) -> NDArray[np.float64]:
    """Integral of the piecewise-linear y from grid[0] to each of ``points`` (clamped to the grid)."""
    pts = np.clip(points, grid[0], grid[-1])
    i = np.clip(np.searchsorted(grid, pts, side="right") - 1, 0, grid.size - 2)
    h = grid[i + 1] - grid[i]
    t = (pts - grid[i]) / h
    return cum[i] + h * t * (y[i] + 0.5 * (y[i + 1] - y[i]) * t)


def tristimulus(grid_nm: ArrayLike, spectral_power: ArrayLike) -> NDArray[np.float64]:
    """CIE 1931 tristimulus values X, Y, Z of a spectrum on a grid (unnormalised).

    Parameters
    ----------
    grid_nm : array_like
        Strictly monotonic air wavelengths, nm.
    spectral_power : array_like
        Spectral power per nm on the grid (any unit, >= 0).

    Returns
    -------
    numpy.ndarray
        ``[X, Y, Z]`` in the spectrum's power unit (no 683 factor, no normalisation).

    Raises
    ------
    PhysicsInputError
        Malformed grid or negative power.

    Notes
    -----
    .. math:: X = \\int S(\\lambda)\\,\\bar x(\\lambda)\\,d\\lambda \\ \\text{(trapezoid on the grid)}

    References
    ----------
    CIE 15:2004.

    Examples
    --------
    >>> grid = np.arange(360.0, 831.0)
    >>> [round(float(v), 3) for v in tristimulus(grid, np.ones_like(grid))]
    [106.865, 106.857, 106.892]
    """
    grid, s = _spectrum(grid_nm, spectral_power)
    f = _cmf_at(grid)[:3]
    return trapezoid(f * s[None, :], grid, axis=1)


def xy_to_uv_prime(x: float, y: float) -> tuple[float, float]:
    """CIE 1976 UCS (u', v') from CIE 1931 (x, y).

    Parameters
    ----------
    x, y : float
        CIE 1931 chromaticity (dimensionless).

    Returns
    -------
    (float, float)
        u', v' (dimensionless).

    Notes
    -----
    .. math:: u' = \\frac{4x}{-2x + 12y + 3}, \\qquad v' = \\frac{9y}{-2x + 12y + 3}

    (CIE 15:2004). The CIE 1960 (u, v) of the CCT definition is u = u', v = 2v'/3.

    Examples
    --------
    >>> [round(c, 4) for c in xy_to_uv_prime(0.3127, 0.3290)]
    [0.1978, 0.4683]
    """
    d = -2.0 * x + 12.0 * y + 3.0
    return 4.0 * x / d, 9.0 * y / d


def _xyz_to_chromaticity(xyz: NDArray[np.float64]) -> Chromaticity:
    total = float(np.sum(xyz))
    if not total > 0:
        return Chromaticity(math.nan, math.nan, math.nan, math.nan)
    x, y = float(xyz[0] / total), float(xyz[1] / total)
    u, v = xy_to_uv_prime(x, y)
    return Chromaticity(x, y, u, v)


def chromaticity(grid_nm: ArrayLike, spectral_power: ArrayLike) -> Chromaticity:
    """CIE 1931 (x, y) and CIE 1976 (u', v') of a spectrum on a grid.

    Parameters
    ----------
    grid_nm : array_like
        Strictly monotonic air wavelengths, nm.
    spectral_power : array_like
        Spectral power per nm (>= 0).

    Returns
    -------
    Chromaticity
        ``(x, y, u_prime, v_prime)``, dimensionless; all NaN when X + Y + Z = 0 (no power
        between 360 and 830 nm).

    Raises
    ------
    PhysicsInputError
        Malformed grid or negative power.

    Notes
    -----
    x = X / (X + Y + Z), y = Y / (X + Y + Z) with :func:`tristimulus`; u', v' from
    :func:`xy_to_uv_prime`.

    References
    ----------
    CIE 15:2004.

    Examples
    --------
    >>> grid = np.arange(360.0, 831.0)
    >>> c = chromaticity(grid, np.ones_like(grid))   # equal-energy spectrum
    >>> round(c.x, 4), round(c.y, 4)
    (0.3333, 0.3333)
    """
    return _xyz_to_chromaticity(tristimulus(grid_nm, spectral_power))


# ---------------------------------------------------------------------------------------------
# CCT and Duv
# ---------------------------------------------------------------------------------------------


def _planck_uv(temperature_k: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """CIE 1960 (u, v) of Planckian radiators (vectorised over temperature)."""
    t = cmf_tables()
    lam = t.wavelength_nm * 1e-9
    temp = np.atleast_1d(np.asarray(temperature_k, dtype=float))
    radiance = lam[None, :] ** -5 / np.expm1(_C2_M_K / (lam[None, :] * temp[:, None]))
    radiance /= radiance.max(axis=1, keepdims=True)
    xyz = np.stack([trapezoid(radiance * f[None, :], t.wavelength_nm, axis=1) for f in (t.xbar, t.ybar, t.zbar)])
    d = xyz[0] + 15.0 * xyz[1] + 3.0 * xyz[2]
    return 4.0 * xyz[0] / d, 6.0 * xyz[1] / d


@functools.lru_cache(maxsize=1)
def _locus_table() -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    temps = np.geomspace(*_CCT_RANGE_K, 600)
    u, v = _planck_uv(temps)
    return temps, u, v


def cct_duv(u: float, v: float) -> tuple[float | None, float | None]:
    """Correlated colour temperature and Duv of a CIE 1960 (u, v) chromaticity.

    Parameters
    ----------
    u, v : float
        CIE 1960 UCS coordinates (u = u', v = 2 v' / 3), dimensionless.

    Returns
    -------
    cct_k : float or None
        CCT, K; None when |Duv| > 0.05 or the closest locus point lies outside
        1000-100 000 K (the colour is then not "near white" and a CCT means nothing).
    duv : float or None
        Signed distance to the Planckian locus in (u, v), positive above it; None when
        ``cct_k`` is None.

    Raises
    ------
    PhysicsInputError
        Non-finite coordinates.

    Notes
    -----
    CCT is the temperature T minimising

    .. math:: d(T) = \\sqrt{(u - u_P(T))^2 + (v - v_P(T))^2}

    over the Planckian locus (u_P, v_P) of Planck's law with c2 = h c / k and the CIE 1931
    CMFs (CIE 15:2004). A 600-point geometric table over 1000-100 000 K brackets
    the minimum, bounded Brent minimisation refines it. Duv = sign(v - v_P) d (Ohno 2014).

    References
    ----------
    CIE 15:2004, *Colorimetry*; Y. Ohno, LEUKOS 10, 47 (2014).

    Examples
    --------
    >>> cct, duv = cct_duv(0.19783, 0.31222)   # D65 (u', 2v'/3)
    >>> round(cct), round(duv, 4)
    (6504, 0.0032)
    """
    uu, vv = float(u), float(v)
    if not (math.isfinite(uu) and math.isfinite(vv)):
        raise PhysicsInputError("u and v must be finite")
    temps, tu, tv = _locus_table()
    d2 = (tu - uu) ** 2 + (tv - vv) ** 2
    i = int(np.argmin(d2))
    if i == 0 or i == temps.size - 1:
        return None, None
    if math.sqrt(float(d2[i])) > 2.0 * _DUV_LIMIT:
        return None, None

    def dist2(log_t: float) -> float:
        pu, pv = _planck_uv(np.array([math.exp(log_t)]))
        return float((pu[0] - uu) ** 2 + (pv[0] - vv) ** 2)

    res = minimize_scalar(
        dist2,
        bounds=(math.log(temps[i - 1]), math.log(temps[i + 1])),
        method="bounded",
        options={"xatol": 1e-7},
    )
    t_best = math.exp(float(res.x))
    pu, pv = _planck_uv(np.array([t_best]))
    d = math.hypot(uu - float(pu[0]), vv - float(pv[0]))
    duv = math.copysign(d, vv - float(pv[0]))
    if abs(duv) > _DUV_LIMIT:
        return None, None
    return t_best, duv


# ---------------------------------------------------------------------------------------------
# efficacy and bands
# ---------------------------------------------------------------------------------------------


def luminous_efficacy(grid_nm: ArrayLike, spectral_power: ArrayLike) -> float:
    """Luminous efficacy of radiation of a spectrum on a grid.

    Parameters
    ----------
    grid_nm : array_like
        Strictly monotonic air wavelengths, nm (all the emitted range: the denominator is
        the power over the whole grid).
    spectral_power : array_like
        Spectral power per nm (>= 0).

    Returns
    -------
    float
        Luminous efficacy of radiation, lm/W.

    Raises
    ------
    PhysicsInputError
        Malformed grid, negative power, or no power at all.

    Notes
    -----
    .. math:: K = K_m \\frac{\\int S(\\lambda) V(\\lambda)\\,d\\lambda}{\\int S(\\lambda)\\,d\\lambda},
       \\qquad K_m = 683\\ \\mathrm{lm/W}

    References
    ----------
    BIPM, *The International System of Units*, 9th ed. (2019), the candela;
    CIE 15:2004.

    Examples
    --------
    >>> grid = np.arange(360.0, 831.0)
    >>> round(luminous_efficacy(grid, np.ones_like(grid)), 1)   # equal energy, 360-830 nm
    155.3
    """
    grid, s = _spectrum(grid_nm, spectral_power)
    total = float(trapezoid(s, grid))
    if not total > 0:
        raise PhysicsInputError("the spectrum has no power (its integral is 0)")
    v = _cmf_at(grid)[3]
    return K_M_LM_PER_W * float(trapezoid(s * v, grid)) / total


def band_shares(grid_nm: ArrayLike, spectral_power: ArrayLike) -> dict[str, float]:
    """Fractions of the radiant power in UV-C, UV-B, UV-A, visible and IR.

    Parameters
    ----------
    grid_nm : array_like
        Strictly monotonic wavelengths, nm.
    spectral_power : array_like
        Spectral power per nm (>= 0).

    Returns
    -------
    dict
        ``share_uv_c``, ``share_uv_b``, ``share_uv_a``, ``share_visible``, ``share_ir``:
        power in each band of :data:`BANDS_NM` over the power on the whole grid
        (dimensionless). UV-A and visible overlap at 380-400 nm, so the shares may add up to
        more than 1; power below 100 nm is in none.

    Raises
    ------
    PhysicsInputError
        Malformed grid, negative power, or no power at all.

    Notes
    -----
    The spectrum is taken piecewise linear between grid points and integrated exactly
    between the band limits (CIE S 017 ILV band definitions).

    References
    ----------
    CIE S 017/E:2020, *ILV: International Lighting Vocabulary*.

    Examples
    --------
    >>> grid = np.linspace(100.0, 1100.0, 11)
    >>> shares = band_shares(grid, np.ones_like(grid))
    >>> round(shares["share_uv_c"], 4), round(shares["share_ir"], 4)
    (0.18, 0.32)
    """
    grid, s = _spectrum(grid_nm, spectral_power)
    cum = _cumulative(grid, s)
    total = float(cum[-1])
    if not total > 0:
        raise PhysicsInputError("the spectrum has no power (its integral is 0)")
    lows = np.array([b[0] for b in BANDS_NM.values()])
    highs = np.array([b[1] for b in BANDS_NM.values()])
    part = _integral_to(grid, s, cum, highs) - _integral_to(grid, s, cum, lows)
    return {name: float(value / total) for name, value in zip(BANDS_NM, part)}


def _line_band_shares(wl: NDArray[np.float64], p: NDArray[np.float64], total: float) -> dict[str, float]:
    return {
        name: float(p[(wl >= lo) & (wl < hi)].sum() / total) for name, (lo, hi) in BANDS_NM.items()
    }


# ---------------------------------------------------------------------------------------------
# the whole set
# ---------------------------------------------------------------------------------------------


def _assemble(xyz: NDArray[np.float64], efficacy: float, shares: dict[str, float]) -> dict[str, float | None]:
    chrom = _xyz_to_chromaticity(xyz)
    if math.isnan(chrom.x):
        values: dict[str, float | None] = {"cie_x": None, "cie_y": None, "cie_u_prime": None, "cie_v_prime": None}
        cct = duv = None
    else:
        values = {"cie_x": chrom.x, "cie_y": chrom.y, "cie_u_prime": chrom.u_prime, "cie_v_prime": chrom.v_prime}
        cct, duv = cct_duv(chrom.u_prime, 2.0 * chrom.v_prime / 3.0)
    values.update({"cct_k": cct, "duv": duv, "efficacy_lm_per_w": efficacy})
    values.update(shares)
    return values


def lamp_metrics(grid_nm: ArrayLike, spectral_power: ArrayLike) -> dict[str, float | None]:
    """Colour, efficacy and band shares of a lamp spectrum on a wavelength grid.

    Parameters
    ----------
    grid_nm : array_like
        Strictly monotonic air wavelengths, nm, covering all the emission.
    spectral_power : array_like
        Spectral power per nm (>= 0), for example from
        :func:`levels.physics.plasma.spectrum.synthetic_spectrum`.

    Returns
    -------
    dict
        Keys ``cie_x``, ``cie_y``, ``cie_u_prime``, ``cie_v_prime`` (dimensionless; None
        without visible power), ``cct_k`` (K), ``duv`` (None far from the Planckian
        locus), ``efficacy_lm_per_w`` (lm/W), ``share_uv_c``, ``share_uv_b``,
        ``share_uv_a``, ``share_visible``, ``share_ir`` (fractions of the total power).

    Raises
    ------
    PhysicsInputError
        Malformed grid, negative power, or no power at all.

    Notes
    -----
    See :func:`chromaticity`, :func:`cct_duv`, :func:`luminous_efficacy` and
    :func:`band_shares`, and the module docstring for the method choices.

    References
    ----------
    CIE 15:2004; Y. Ohno, LEUKOS 10, 47 (2014); BIPM SI brochure (2019); CIE S 017 ILV.

    Examples
    --------
    >>> grid = np.arange(300.0, 1000.0, 1.0)
    >>> lam = grid * 1e-9
    >>> m = lamp_metrics(grid, lam**-5 / np.expm1(6.62607015e-34 * 299792458 / (1.380649e-23 * lam * 2856.0)))
    >>> round(m["cct_k"]), round(m["cie_x"], 4), round(m["cie_y"], 4)
    (2856, 0.4475, 0.4074)
    """
    grid, s = _spectrum(grid_nm, spectral_power)
    efficacy = luminous_efficacy(grid, s)
    shares = band_shares(grid, s)
    return _assemble(tristimulus(grid, s), efficacy, shares)


def lamp_metrics_from_lines(wavelength_nm: ArrayLike, power: ArrayLike) -> dict[str, float | None]:
    """Colour, efficacy and band shares of a pure line spectrum.

    Parameters
    ----------
    wavelength_nm : array_like
        Air wavelengths of the lines, nm.
    power : array_like
        Power of each line (any unit, >= 0).

    Returns
    -------
    dict
        The keys of :func:`lamp_metrics`.

    Raises
    ------
    PhysicsInputError
        Bad wavelengths or powers, or zero total power.

    Notes
    -----
    Each line is treated as monochromatic: X = sum_i P_i xbar(lambda_i) with the CMFs and
    V linearly interpolated between their 1-nm table values; shares count each line in the
    half-open bands of :data:`BANDS_NM`. Valid while lines are much narrower than the
    structure of the CMFs (a few nm).

    References
    ----------
    CIE 15:2004; BIPM SI brochure (2019); CIE S 017 ILV.

    Examples
    --------
    >>> m = lamp_metrics_from_lines([555.0], [1.0])
    >>> m["efficacy_lm_per_w"], m["cct_k"], m["share_visible"]
    (683.0, None, 1.0)
    """
    wl, p = _lines(wavelength_nm, power)
    total = float(p.sum())
    if not total > 0:
        raise PhysicsInputError("the lines have no power (their sum is 0)")
    f = _cmf_at(wl)
    xyz = f[:3] @ p
    efficacy = K_M_LM_PER_W * float(f[3] @ p) / total
    return _assemble(xyz, efficacy, _line_band_shares(wl, p, total))


# ---------------------------------------------------------------------------------------------
# swatch
# ---------------------------------------------------------------------------------------------


def srgb_swatch(x: float, y: float) -> str:
    """An sRGB colour swatch ``'#rrggbb'`` of a chromaticity, at full brightness.

    Parameters
    ----------
    x, y : float
        CIE 1931 chromaticity (0 <= x, 0 < y, x + y <= 1).

    Returns
    -------
    str
        Hex colour. Out-of-gamut colours are desaturated by adding white (equal linear R, G,
        B) until no channel is negative; the brightest channel is then set to 1.

    Raises
    ------
    PhysicsInputError
        Coordinates outside the chromaticity triangle.

    Notes
    -----
    XYZ = (x/y, 1, (1-x-y)/y); linear RGB by the IEC 61966-2-1 matrix (D65 white, no
    chromatic adaptation); transfer function 12.92 c for c <= 0.0031308, else
    1.055 c^(1/2.4) - 0.055.

    References
    ----------
    IEC 61966-2-1:1999, *Default RGB colour space - sRGB*.

    Examples
    --------
    >>> srgb_swatch(0.3127, 0.3290)   # D65
    '#ffffff'
    """
    xx, yy = float(x), float(y)
    if not (math.isfinite(xx) and math.isfinite(yy)) or xx < 0 or yy <= 0 or xx + yy > 1.0 + 1e-12:
        raise PhysicsInputError(f"(x, y) must satisfy x >= 0, y > 0, x + y <= 1; got ({x!r}, {y!r})")
    xyz = np.array([xx / yy, 1.0, (1.0 - xx - yy) / yy])
    rgb = _XYZ_TO_SRGB @ xyz
    low = rgb.min()
    if low < 0:
        rgb = rgb - low
    rgb = rgb / rgb.max()
    encoded = np.where(rgb <= 0.0031308, 12.92 * rgb, 1.055 * np.power(rgb, 1.0 / 2.4) - 0.055)
    r, g, b = (int(round(float(c) * 255.0)) for c in np.clip(encoded, 0.0, 1.0))
    return f"#{r:02x}{g:02x}{b:02x}"
