"""Self-absorption and self-reversal against a direct integration of the transfer equation."""

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.special import voigt_profile

from levels.errors import PhysicsInputError
from levels.physics.discharge import slab_transfer


def test_uniform_slab_against_the_transfer_equation():
    eps, kap, length = 3.0, 250.0, 0.01
    sol = solve_ivp(lambda s, i: eps - kap * i, (0.0, length), [0.0], rtol=1e-10, atol=1e-14)
    assert float(slab_transfer.slab_radiance([eps], [kap], length)[0]) * length == pytest.approx(sol.y[0, -1], rel=1e-7)


def test_thin_slab_gives_the_emission_and_thick_lines_flatten():
    grid = np.linspace(-0.05, 0.05, 2001)
    profile = voigt_profile(grid, 0.004, 0.001)
    thin = slab_transfer.slab_radiance(profile, 1e-9 * profile, 0.01)   # tau <= 1e-9
    assert np.allclose(thin, profile, rtol=1e-8)
    thick = slab_transfer.slab_radiance(profile, 1e5 * profile, 0.01)
    top = thick[np.abs(grid) < 0.002]
    assert np.ptp(top) / top.max() < 0.01          # flat top at the source function eps / kappa / L
    assert top.max() == pytest.approx(1.0 / (1e5 * 0.01), rel=1e-3)


def test_a_cool_narrow_layer_reverses_the_line_centre():
    grid = np.linspace(-0.05, 0.05, 2001)
    hot = voigt_profile(grid, 0.006, 0.002)
    cool = voigt_profile(grid, 0.001, 0.0)
    out = slab_transfer.slab_radiance(hot, 1e4 * hot, 0.01, cool_absorption_m1=1e4 * cool, cool_length_m=0.002)
    centre = out[np.argmin(np.abs(grid))]
    assert centre < 0.5 * out.max()                 # a dip at the centre
    assert np.argmax(out) != np.argmin(np.abs(grid))


@pytest.mark.parametrize("length", [0.0, -1.0, 1e5, float("nan")])
def test_absurd_lengths(length):
    with pytest.raises(PhysicsInputError):
        slab_transfer.slab_radiance([1.0], [1.0], length)
