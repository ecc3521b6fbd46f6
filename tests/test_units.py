"""Unit-aware quantity parsing and the CODATA release in use."""

import pytest
import scipy.constants as sc

from levels.errors import UnitError
from levels.units import CM1_EV, CODATA_RELEASE, parse_quantity, temperature_k, wavelength_nm


@pytest.mark.parametrize("text, nm", [("656.3nm", 656.3), ("6563A", 656.3), ("0.6563um", 656.3), ("656300pm", 656.3)])
def test_wavelengths(text, nm):
    assert wavelength_nm(text) == pytest.approx(nm, rel=1e-12)


def test_temperature_in_ev_uses_boltzmann_constant():
    # 1 eV / k_B from CODATA via scipy.constants
    assert temperature_k("1eV") == pytest.approx(sc.e / sc.k, rel=1e-12)
    assert temperature_k("15000K") == 15000.0


def test_density_and_energy():
    assert parse_quantity("1e12cm-3", "density") == pytest.approx(1e18)
    assert parse_quantity("1e18m-3", "density") == 1e18
    assert parse_quantity("1cm-1", "energy") / sc.e == pytest.approx(CM1_EV)


@pytest.mark.parametrize("text, dim, message", [
    ("656.3", "length", "no unit"), ("656.3 parsec", "length", "unknown unit"), ("1eV", "length", "energy"),
    ("nm", "length", "not a number"), ("1e999nm", "length", "finite"), ("", "length", "not a number"),
])
def test_bad_quantities(text, dim, message):
    with pytest.raises(UnitError, match=message):
        parse_quantity(text, dim)


def test_codata_release_identified():
    assert CODATA_RELEASE in ("2022", "2018", "2014")
