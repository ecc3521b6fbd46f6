"""Tests of levels.physics.colour against colour-science, the SI definition of the candela, CIE
illuminant definitions and Planck's law with CODATA constants (scipy.constants)."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import trapezoid

from levels.errors import PhysicsInputError
from levels.physics import colour as lc
from levels.physics.plasma.spectrum import synthetic_spectrum

with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    import colour  # colour-science

KEYS = {
    "cie_x", "cie_y", "cie_u_prime", "cie_v_prime", "cct_k", "duv", "efficacy_lm_per_w",
    "share_uv_c", "share_uv_b", "share_uv_a", "share_visible", "share_ir",
}


def planck(lam_nm, t_k):
    """Planck's spectral radiance per unit wavelength, W m-3 sr-1, scipy constants."""
    lam = np.asarray(lam_nm) * 1e-9
    return 2 * sc.h * sc.c**2 / lam**5 / np.expm1(sc.h * sc.c / (lam * sc.k * t_k))


def lamp_like(grid):
    """An invented discharge-lamp-like spectrum: weak continuum plus a few broad bands."""
    s = 0.02 + 0.0 * grid
    for c, w, a in [(405.0, 3.0, 0.4), (436.0, 4.0, 0.9), (546.0, 5.0, 1.0), (578.0, 6.0, 0.7), (612.0, 12.0, 0.8)]:
        s = s + a * np.exp(-0.5 * ((grid - c) / w) ** 2)
    return s


def colour_science_xy(grid, values, method):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sd = colour.SpectralDistribution(dict(zip(grid, values)))
        cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
        xyz = colour.sd_to_XYZ(sd, cmfs, method=method)
        return colour.XYZ_to_xy(xyz)


# ----------------------------------------------------------------------------- chromaticity


@pytest.mark.parametrize("method", ["Integration", "ASTM E308"])
def test_chromaticity_matches_colour_science_sd_to_xyz(method):
    grid = np.arange(360.0, 831.0, 1.0)
    values = lamp_like(grid)
    ours = lc.chromaticity(grid, values)
    ref = colour_science_xy(grid, values, method)
    assert abs(ours.x - ref[0]) < 1e-4 and abs(ours.y - ref[1]) < 1e-4


def test_chromaticity_of_planckian_matches_colour_science():
    grid = np.arange(360.0, 831.0, 1.0)
    for t in (2000.0, 2856.0, 4000.0, 6504.0, 10000.0):
        ours = lc.chromaticity(grid, planck(grid, t))
        ref = colour_science_xy(grid, planck(grid, t), "Integration")
        assert abs(ours.x - ref[0]) < 1e-4 and abs(ours.y - ref[1]) < 1e-4


def test_uv_prime_formula():
    # CIE 15:2004; and colour-science's conversion
    x, y = 0.4476, 0.4074
    ours = lc.xy_to_uv_prime(x, y)
    ref = colour.xy_to_Luv_uv(np.array([x, y]))
    assert ours == pytest.approx(tuple(ref), abs=1e-12)


def test_cie_illuminants_chromaticity():
    # CIE illuminant A (CIE 15:2004, from memory): S_A = 100 (560/l)^5
    # [exp(1.435e7/(2848*560)) - 1] / [exp(1.435e7/(2848 l)) - 1], l in nm;
    # tabulated chromaticity x = 0.44757, y = 0.40745 (CIE 15:2004 tables, from memory)
    grid = np.arange(300.0, 1001.0, 1.0)
    s_a = 100 * (560 / grid) ** 5 * (math.exp(1.435e7 / (2848 * 560)) - 1) / (np.exp(1.435e7 / (2848 * grid)) - 1)
    m = lc.lamp_metrics(grid, s_a)
    assert abs(m["cie_x"] - 0.44757) < 1e-4 and abs(m["cie_y"] - 0.40745) < 1e-4
    # D65 as shipped by colour-science; x = 0.31272, y = 0.32903 (CIE 15:2004 tables, from memory)
    d65 = colour.SDS_ILLUMINANTS["D65"]
    m = lc.lamp_metrics(d65.wavelengths, d65.values)
    assert abs(m["cie_x"] - 0.31272) < 1e-4 and abs(m["cie_y"] - 0.32903) < 1e-4


# ----------------------------------------------------------------------------- CCT and Duv


@pytest.mark.parametrize("t", [2856.0, 6504.0])
@pytest.mark.parametrize("step", [1.0, 0.37])
def test_cct_of_planckian_radiator_recovered(t, step):
    # a Planckian radiator lies on the locus: CCT = T, Duv = 0. The locus is integrated on the
    # 1-nm CMF table, the spectrum on its own grid, so the two differ by discretisation only.
    grid = np.arange(300.0, 1000.0, step)
    m = lc.lamp_metrics(grid, planck(grid, t))
    assert m["cct_k"] == pytest.approx(t, abs=0.05)
    assert abs(m["duv"]) < 1e-6


@pytest.mark.parametrize("t", [1500.0, 2856.0, 4000.0, 6504.0, 12000.0, 25000.0])
def test_cct_agrees_with_colour_science_ohno(t):
    # colour-science's Ohno (2013/2014) implementation; Ohno 2014 quotes errors below 1 K for
    # the combined triangular/parabolic method (from memory). colour-science uses
    # c2 = 1.4388e-2 m K where we use CODATA h c / k = 1.438777e-2 m K: a shift of 1.6e-5 T.
    grid = np.arange(360.0, 831.0, 1.0)
    m = lc.lamp_metrics(grid, planck(grid, t))
    uv = np.array([m["cie_u_prime"], 2 * m["cie_v_prime"] / 3])
    cct_ref, duv_ref = colour.temperature.uv_to_CCT_Ohno2013(uv)
    assert m["cct_k"] == pytest.approx(cct_ref, abs=1.0)
    assert m["duv"] == pytest.approx(duv_ref, abs=1e-5)


def test_cct_off_locus_agrees_with_colour_science():
    # points off the locus, built with colour-science's own inverse (CCT, Duv) -> uv
    for t, duv in [(3000.0, 0.01), (5000.0, -0.02), (8000.0, 0.04)]:
        uv = colour.temperature.CCT_to_uv_Ohno2013(np.array([t, duv]))
        cct, d = lc.cct_duv(float(uv[0]), float(uv[1]))
        assert cct == pytest.approx(t, abs=1.0)
        assert d == pytest.approx(duv, abs=1e-4)


def test_cie_illuminant_cct():
    # illuminant A: CCT 2856 K (CIE 15:2004: 2848 K with c2 = 1.435e-2 m K, i.e. 2856 K
    # with c2 = 1.4388e-2 m K). With CODATA c2 = 1.438777e-2 the same spectrum is at 2855.50 K.
    grid = np.arange(300.0, 1001.0, 1.0)
    s_a = 100 * (560 / grid) ** 5 * (math.exp(1.435e7 / (2848 * 560)) - 1) / (np.exp(1.435e7 / (2848 * grid)) - 1)
    m = lc.lamp_metrics(grid, s_a)
    assert m["cct_k"] == pytest.approx(2848 * (sc.h * sc.c / sc.k) / 1.435e-2, abs=0.05)
    assert abs(m["cct_k"] - 2856) < 1.0
    # D65: CCT about 6504 K, Duv +0.0032 (CIE 15:2004 / Ohno 2014, from memory)
    d65 = colour.SDS_ILLUMINANTS["D65"]
    m = lc.lamp_metrics(d65.wavelengths, d65.values)
    assert abs(m["cct_k"] - 6504) < 1.0
    assert m["duv"] == pytest.approx(0.0032, abs=1e-4)


def test_sodium_d_lines_near_locus_agree_with_colour_science():
    # the sodium D lines (588.995, 589.592 nm, 2:1) lie near the low-temperature end of the locus
    m = lc.lamp_metrics_from_lines([588.995, 589.592], [2.0, 1.0])
    uv = np.array([m["cie_u_prime"], 2 * m["cie_v_prime"] / 3])
    cct_ref, duv_ref = colour.temperature.uv_to_CCT_Ohno2013(uv)
    assert m["cct_k"] == pytest.approx(cct_ref, abs=1.0)
    assert m["duv"] == pytest.approx(duv_ref, abs=1e-4)


def test_cct_none_far_from_locus():
    # a 500 nm line is on the spectral locus, far from white
    m = lc.lamp_metrics_from_lines([500.0], [1.0])
    assert m["cct_k"] is None and m["duv"] is None
    for duv in (0.06, -0.06):
        uv = colour.temperature.CCT_to_uv_Ohno2013(np.array([4000.0, duv]))
        assert lc.cct_duv(float(uv[0]), float(uv[1])) == (None, None)
    # closest locus point beyond the searched 1000..100000 K range
    uv = colour.temperature.CCT_to_uv_Ohno2013(np.array([800.0, 0.0]))
    assert lc.cct_duv(float(uv[0]), float(uv[1])) == (None, None)


# ----------------------------------------------------------------------------- efficacy


def test_efficacy_of_555_nm_and_540_thz_lines():
    # SI brochure, 9th ed. (2019): K_cd = 683 lm/W for monochromatic radiation of 540e12 Hz.
    # V(555 nm) = 1 in the CIE 1924 table, so a 555 nm line gives 683 lm/W exactly.
    assert lc.lamp_metrics_from_lines([555.0], [1.0])["efficacy_lm_per_w"] == pytest.approx(683.0, rel=1e-12)
    # 540 THz in standard air: vacuum c / 540e12 with n from the dispersion formula of Edlen
    # (1966), Metrologia 2, 71 (from memory): (n-1) 1e8 = 8342.13 + 2406030/(130 - s^2) + 15997/(38.9 - s^2)
    lam_vac_um = sc.c / 540e12 * 1e6
    s2 = (1 / lam_vac_um) ** 2
    n_air = 1 + (8342.13 + 2406030 / (130 - s2) + 15997 / (38.9 - s2)) * 1e-8
    lam_air_nm = lam_vac_um * 1e3 / n_air
    assert lam_air_nm == pytest.approx(555.017, abs=1e-3)
    k = lc.lamp_metrics_from_lines([lam_air_nm], [1.0])["efficacy_lm_per_w"]
    # CIE quotes K_m = 683.002 lm/W for the tabulated V(lambda), i.e. V(555.016) = 0.999997
    # (from memory): within 1e-5 of 683 lm/W
    assert k == pytest.approx(683.0, rel=1e-5)


def test_efficacy_narrow_line_on_a_grid():
    grid = np.arange(550.0, 560.0, 0.005)
    s = synthetic_spectrum(grid, [555.0], [1.0], 0.05, 0.0)
    # V is linear between its 1-nm table points with a kink at 555 nm; the line's mean |offset|
    # 0.017 nm times the slopes (<= 2.6e-4 per nm) bounds the drop below 683 lm/W
    k = lc.luminous_efficacy(grid, s)
    assert 683.0 * (1 - 2.6e-4 * 0.02) <= k <= 683.0


def test_efficacy_matches_colour_science():
    grid = np.arange(360.0, 831.0, 1.0)
    for values in (lamp_like(grid), planck(grid, 3000.0)):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ref = colour.luminous_efficacy(colour.SpectralDistribution(dict(zip(grid, values))))
        assert lc.luminous_efficacy(grid, values) == pytest.approx(ref, rel=1e-4)


def test_efficacy_counts_invisible_power():
    grid = np.arange(200.0, 2001.0, 1.0)
    s = planck(grid, 2856.0)
    vis = (grid >= 360) & (grid <= 830)
    k_all = lc.luminous_efficacy(grid, s)
    k_vis = lc.luminous_efficacy(grid[vis], s[vis])
    assert k_all == pytest.approx(k_vis * trapezoid(s[vis], grid[vis]) / trapezoid(s, grid), rel=1e-6)


# ----------------------------------------------------------------------------- bands


def test_band_shares_flat_spectrum():
    # flat spectrum 100-2000 nm: each share is the band's width over 1900 nm (CIE S 017 bands)
    for grid in (np.arange(100.0, 2000.5, 1.0), np.linspace(100.0, 2000.0, 777)):
        shares = lc.band_shares(grid, np.ones_like(grid))
        assert shares["share_uv_c"] == pytest.approx(180 / 1900, rel=1e-12)
        assert shares["share_uv_b"] == pytest.approx(35 / 1900, rel=1e-12)
        assert shares["share_uv_a"] == pytest.approx(85 / 1900, rel=1e-12)
        assert shares["share_visible"] == pytest.approx(400 / 1900, rel=1e-12)
        assert shares["share_ir"] == pytest.approx(1220 / 1900, rel=1e-12)
        # UV-A and visible overlap on 380-400 nm
        assert sum(shares.values()) == pytest.approx(1 + 20 / 1900, rel=1e-12)


def test_band_shares_linear_spectrum_exact_between_grid_points():
    # S = l on a coarse grid whose points miss the band edges; exact integral of l is (b^2 - a^2)/2
    grid = np.linspace(150.0, 950.0, 9)
    shares = lc.band_shares(grid, grid)
    total = (950**2 - 150**2) / 2
    assert shares["share_uv_b"] == pytest.approx((315**2 - 280**2) / 2 / total, rel=1e-12)
    assert shares["share_visible"] == pytest.approx((780**2 - 380**2) / 2 / total, rel=1e-12)


def test_line_band_shares():
    m = lc.lamp_metrics_from_lines([184.95, 253.65, 365.02, 390.0, 546.07, 1013.98], [1, 4, 1, 1, 2, 1])
    assert m["share_uv_c"] == pytest.approx(5 / 10)
    assert m["share_uv_a"] == pytest.approx(2 / 10)
    assert m["share_visible"] == pytest.approx(3 / 10)
    assert m["share_ir"] == pytest.approx(1 / 10)
    assert m["share_uv_b"] == 0.0


# ----------------------------------------------------------------------------- whole set


def test_lamp_metrics_keys_and_types():
    grid = np.arange(250.0, 1100.0, 0.5)
    m = lc.lamp_metrics(grid, lamp_like(grid))
    assert set(m) == KEYS
    assert all(isinstance(v, float) or v is None for v in m.values())


def test_lines_path_matches_resolved_grid_path():
    wl = np.array([404.66, 435.83, 546.07, 576.96, 579.07])
    p = np.array([0.3, 0.8, 1.0, 0.25, 0.3])
    from_lines = lc.lamp_metrics_from_lines(wl, p)
    grid = np.arange(390.0, 600.0, 0.002)
    s = synthetic_spectrum(grid, wl, p, 0.02, 0.0)
    from_grid = lc.lamp_metrics(grid, s)
    for key in ("cie_x", "cie_y", "cie_u_prime", "cie_v_prime", "efficacy_lm_per_w", "cct_k", "share_visible"):
        a, b = from_lines[key], from_grid[key]
        if a is None:
            assert b is None
        else:
            # narrow lines (0.02 nm) against CMFs linear over 1 nm: differences ~ (0.01 nm/1 nm)^2
            assert b == pytest.approx(a, rel=1e-5, abs=1e-6), key


def test_invisible_spectrum_has_no_chromaticity():
    m = lc.lamp_metrics_from_lines([253.65], [1.0])
    assert m["cie_x"] is None and m["cct_k"] is None
    assert m["efficacy_lm_per_w"] == 0.0 and m["share_uv_c"] == 1.0


# ----------------------------------------------------------------------------- swatch


def test_srgb_matrix_matches_colour_science():
    ref = colour.models.RGB_COLOURSPACE_sRGB.matrix_XYZ_to_RGB
    np.testing.assert_allclose(lc._XYZ_TO_SRGB, ref, atol=1e-4)  # IEC 61966-2-1 rounds to 4 decimals


def test_srgb_swatch_against_colour_science():
    assert lc.srgb_swatch(0.3127, 0.3290) == "#ffffff"  # D65 white point of sRGB
    for x, y in [(0.4476, 0.4074), (0.35, 0.50), (0.25, 0.25), (0.55, 0.38)]:
        xyz = np.array([x / y, 1.0, (1 - x - y) / y])
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            rgb = colour.XYZ_to_sRGB(xyz, chromatic_adaptation_transform=None, apply_cctf_encoding=False)
            assert rgb.min() >= 0  # chosen in gamut
            enc = colour.cctf_encoding(rgb / rgb.max(), function="sRGB")
        expected = "#" + "".join(f"{int(round(float(c) * 255)):02x}" for c in enc)
        got = lc.srgb_swatch(x, y)
        assert max(abs(int(got[i : i + 2], 16) - int(expected[i : i + 2], 16)) for i in (1, 3, 5)) <= 1


def test_srgb_swatch_out_of_gamut_and_invalid():
    h = lc.srgb_swatch(0.08, 0.83)  # spectral green, outside sRGB
    assert h.startswith("#") and len(h) == 7
    with pytest.raises(PhysicsInputError):
        lc.srgb_swatch(0.7, 0.5)


def test_validation():
    with pytest.raises(PhysicsInputError, match="no power"):
        lc.lamp_metrics(np.arange(400.0, 500.0), np.zeros(100))
    with pytest.raises(PhysicsInputError, match=">= 0"):
        lc.lamp_metrics(np.arange(400.0, 500.0), -np.ones(100))
    with pytest.raises(PhysicsInputError, match="monotonic"):
        lc.band_shares(np.array([400.0, 401.0, 400.5]), np.ones(3))
    with pytest.raises(PhysicsInputError, match="no power"):
        lc.lamp_metrics_from_lines([500.0], [0.0])
