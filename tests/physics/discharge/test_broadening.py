"""Pressure broadening: perturber data against mendeleev and CODATA, scalings against their theories."""

import math

import pytest
import scipy.constants as sc

from levels.errors import PhysicsInputError
from levels.physics.discharge import neutral_broadening as nb
from levels.physics.discharge import stark

BOHR3_A3 = (sc.physical_constants["Bohr radius"][0] * 1e10) ** 3


@pytest.mark.parametrize("symbol", ["He", "Ne", "Ar", "Kr", "Xe", "Hg"])
def test_perturber_polarizabilities_against_mendeleev(symbol):
    mendeleev = pytest.importorskip("mendeleev")
    reference = mendeleev.element(symbol).dipole_polarizability * BOHR3_A3   # Schwerdtfeger's table, a.u. -> A^3
    assert nb.PERTURBERS[symbol][0] == pytest.approx(reference, rel=0.01)


def test_perturber_density_is_loschmidts_constant_at_stp():
    assert nb.perturber_density_m3(101325.0, 273.15) == pytest.approx(
        sc.physical_constants["Loschmidt constant (273.15 K, 101.325 kPa)"][0], rel=1e-9)


def test_balmer_fits_grow_as_the_holtsmark_field():
    # quasistatic (Holtsmark 1919) widths grow as ne^{2/3}; the fitted exponents must stay near it
    for n_upper in (3, 4):
        w1, w2 = stark.balmer_fwhm_nm(n_upper, 1e22), stark.balmer_fwhm_nm(n_upper, 1e23)
        assert math.log10(float(w2 / w1)) == pytest.approx(2 / 3, rel=0.03)


def test_van_der_waals_scales_as_unsold():
    # Unsold: gamma6 proportional to N_p, C6^{2/5}, v^{3/5} (T^{3/10} at fixed N; at fixed pressure T^{-7/10})
    base = float(nb.van_der_waals_fwhm_nm(589.0, 39.2, 20.1, 22.99, "Ar", 1e5, 300.0))
    assert float(nb.van_der_waals_fwhm_nm(589.0, 39.2, 20.1, 22.99, "Ar", 2e5, 300.0)) == pytest.approx(2 * base)
    assert float(nb.van_der_waals_fwhm_nm(589.0, 39.2, 20.1, 22.99, "Ar", 1e5, 1200.0)) == pytest.approx(
        base * 4 ** -0.7, rel=1e-9)
    assert float(nb.van_der_waals_fwhm_nm(589.0, 20.1 + 2 * 19.1, 20.1, 22.99, "Ar", 1e5, 300.0)) == pytest.approx(
        base * 2 ** 0.4, rel=1e-9)


def test_hydrogenic_r2_against_the_closed_form():
    sympy_h = pytest.importorskip("sympy.physics.hydrogen")
    import sympy

    r = sympy.Symbol("r", positive=True)
    for n, l in ((2, 1), (3, 0), (4, 2)):
        exact = float(sympy.integrate(sympy_h.R_nl(n, l, r, 1) ** 2 * r**4, (r, 0, sympy.oo)))
        assert float(stark.mean_r2_bohr2(n, l)) == pytest.approx(exact, rel=1e-12)


@pytest.mark.parametrize("call", [
    lambda: nb.van_der_waals_fwhm_nm(589.0, 39.2, 20.1, 22.99, "Unobtainium", 1e5, 300.0),
    lambda: nb.van_der_waals_fwhm_nm(589.0, 39.2, 20.1, 22.99, "Ar", -1.0, 300.0),
    lambda: nb.van_der_waals_fwhm_nm(589.0, 39.2, 20.1, 22.99, "Ar", 1e5, 0.0),
    lambda: stark.balmer_fwhm_nm(7, 1e22),
    lambda: stark.hydrogenic_stark_fwhm_nm(4, 2, 486.0, 0.0),
])
def test_bad_input(call):
    with pytest.raises(PhysicsInputError):
        call()
