"""Escape factors against Holstein's asymptotic forms, the chord-method limits and direct quadrature."""

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.special import expn

from levels.errors import PhysicsInputError
from levels.physics.discharge import escape


def test_thin_gives_one():
    for profile in ("doppler", "lorentz", "voigt"):
        assert float(escape.transmission_factor(0.0, profile, 0.01)) == pytest.approx(1.0, abs=1e-6)
    for geometry in ("slab", "cylinder"):
        for profile in ("doppler", "voigt"):
            assert float(escape.mean_escape_factor(1e-9, geometry, profile, 0.05)) == pytest.approx(1.0, abs=1e-6)


@pytest.mark.parametrize("tau", [0.3, 3.0, 30.0])
def test_doppler_transmission_against_direct_quadrature(tau):
    expected = quad(lambda x: math.exp(-x * x) / math.sqrt(math.pi) * math.exp(-tau * math.exp(-x * x)),
                    -12, 12, limit=200)[0]
    assert float(escape.transmission_factor(tau)) == pytest.approx(expected, rel=1e-5)


@pytest.mark.parametrize("tau", [1e6, 1e8, 1e12])
def test_doppler_transmission_tends_to_holsteins_form(tau):
    # Holstein 1947: T(tau) -> 1 / (tau sqrt(pi ln tau)); the next term is -gamma/(2 ln tau) relative (-2 % at 1e6)
    assert float(escape.transmission_factor(tau)) == pytest.approx(float(escape.holstein_asymptote(tau)), rel=0.05)


@pytest.mark.parametrize("tau", [1e4, 1e6, 1e8])
def test_lorentz_transmission_tends_to_holsteins_form(tau):
    # Holstein 1947: T(tau) -> 1 / sqrt(pi tau) for a dispersion (Lorentz) line
    assert float(escape.transmission_factor(tau, "lorentz")) == pytest.approx(
        float(escape.holstein_asymptote(tau, "lorentz")), rel=0.01)


@pytest.mark.parametrize("geometry, mean_chord", [("slab", 2.0), ("cylinder", 2.0)])
def test_geometric_escape_thick_limit_is_cauchys(geometry, mean_chord):
    # optically thick: P -> S / (4 V kappa) = 1 / (kappa <l>), <l> = 4V/S (Cauchy): 2L for a slab, 2R for a cylinder
    t = 1e6
    assert float(escape.geometric_escape(t, geometry)) == pytest.approx(1.0 / (mean_chord * t), rel=1e-4)


def test_slab_geometric_escape_is_the_e3_form():
    t = np.array([0.01, 0.5, 3.0, 40.0])
    assert np.allclose(escape.geometric_escape(t, "slab"), (0.5 - expn(3, t)) / t, rtol=1e-12)


def test_cylinder_escape_against_direct_integration():
    # uniform infinite cylinder, kappa R = 1: average over the cross-section of Ki2 along each in-plane direction
    from scipy.integrate import dblquad

    def ki2(a):
        return quad(lambda th: math.cos(th) * math.exp(-a / math.cos(th)) if math.cos(th) > 1e-300 else 0.0,
                    0, math.pi / 2)[0]

    def integrand(phi, r):
        d = -r * math.cos(phi) + math.sqrt(1 - (r * math.sin(phi)) ** 2)
        return 2 * r * ki2(d) / math.pi   # (2/R^2) r dr (1/2pi) dphi, phi over [0, pi] twice

    expected = dblquad(integrand, 0, 1, 0, math.pi, epsabs=1e-7)[0]
    # the probability of escaping: mean over points and directions of exp(-kappa s); Ki2 holds the polar angle
    assert float(escape.geometric_escape(1.0, "cylinder")) == pytest.approx(expected, rel=2e-3)


def test_voigt_without_damping_is_doppler():
    tau = np.array([0.5, 5.0, 500.0])
    assert np.allclose(escape.mean_escape_factor(tau, "slab", "voigt", 0.0),
                       escape.mean_escape_factor(tau, "slab", "doppler"), rtol=1e-6)


def test_voigt_wings_let_more_light_out_at_large_depth():
    tau = 1e6
    assert float(escape.mean_escape_factor(tau, "slab", "voigt", 0.01)) > 3 * float(escape.mean_escape_factor(tau))


@pytest.mark.parametrize("call", [
    lambda: escape.mean_escape_factor(-1.0),
    lambda: escape.mean_escape_factor(1.0, "sphere"),
    lambda: escape.mean_escape_factor(1.0, "slab", "gauss"),
    lambda: escape.transmission_factor(float("nan")),
    lambda: escape.holstein_asymptote(0.5),
])
def test_bad_input(call):
    with pytest.raises(PhysicsInputError):
        call()


def test_voigt_core_against_scipy():
    from scipy.special import voigt_profile

    doppler, lorentz = np.array([2.0, 2.0, 5.0]), np.array([0.0, 0.3, 4.0])
    a, ratio = escape.voigt_core(doppler, lorentz)
    sigma = doppler / (2 * math.sqrt(2 * math.log(2)))
    gauss_peak = 1 / (sigma * math.sqrt(2 * math.pi))
    assert np.allclose(ratio, voigt_profile(0.0, sigma, lorentz / 2) / gauss_peak, rtol=1e-12)
    assert np.allclose(a, (lorentz / 2) / (doppler / (2 * math.sqrt(math.log(2)))), rtol=1e-12)
