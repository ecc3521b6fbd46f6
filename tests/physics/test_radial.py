"""Tests of levels.physics.one_electron.radial against sympy.physics.hydrogen and Gordon's closed form."""

from __future__ import annotations

import math
import os
import subprocess
import sys
import warnings
from fractions import Fraction
from functools import cache

import mpmath
import numpy as np
import pytest
import sympy as sp
from scipy.integrate import quad
from sympy.physics.hydrogen import R_nl

from levels.errors import PhysicsInputError, QuantumNumberError, TooLargeError
from levels.physics.one_electron import radial
from levels.physics.one_electron.radial import (
    radial_dipole,
    radial_dipole_all_l,
    radial_dipole_array,
    radial_dipole_table,
    table_size,
)

r = sp.Symbol("r", positive=True)


# ----------------------------------------------------------------------------
# independent references
# ----------------------------------------------------------------------------


@cache
def sympy_exact(n: int, l: int, n2: int, l2: int, Z: int = 1) -> float:
    """Exact int_0^oo R_nl R_n2l2 r^3 dr of sympy.physics.hydrogen.R_nl.

    R_nl is a polynomial times exp(-Z r/n); the integral of r^k exp(-a r) is
    k!/a^(k+1), so the sum below is exact (rational numbers times square roots)
    and is only rounded to float at the end.
    """
    a = R_nl(n, l, r, Z)
    b = R_nl(n2, l2, r, Z)
    poly_a = a.replace(sp.exp, lambda _arg: 1)
    poly_b = b.replace(sp.exp, lambda _arg: 1)
    poly = sp.Poly(sp.expand(poly_a * poly_b * r**3), r)
    alpha = sp.Rational(Z, n) + sp.Rational(Z, n2)
    total = sp.Integer(0)
    for (k,), coeff in poly.terms():
        total += coeff * sp.factorial(k) / alpha ** (k + 1)
    return float(sp.N(total, 40))


def sympy_quad(n: int, l: int, n2: int, l2: int) -> float:
    """Numerical quadrature (scipy quad) of the lambdified sympy integrand."""
    f = sp.lambdify(r, R_nl(n, l, r) * R_nl(n2, l2, r) * r**3, "numpy")
    upper = 6.0 * max(n, n2) ** 2 + 60.0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        value, _ = quad(f, 0.0, upper, limit=1000, epsabs=0.0, epsrel=1e-13)
    return value


def _hyp2f1_terminating(a: int, b: int, c: int, x: Fraction) -> Fraction:
    """Exact 2F1(a, b; c; x) for a or b a non-positive integer (finite sum)."""
    total = Fraction(0)
    term = Fraction(1)
    k = 0
    while True:
        total += term
        if a + k == 0 or b + k == 0:
            return total
        term = term * (a + k) * (b + k) / ((c + k) * (k + 1)) * x
        k += 1


def gordon(n: int, l: int, n2: int) -> float:
    """<n l | r | n2 l-1> from Gordon's closed form, n != n2.

    W. Gordon, Ann. Phys. (Leipzig) 394, 1031 (1929); in the form of Bethe & Salpeter,
    Quantum Mechanics of One- and Two-Electron Atoms (1957), eq. (63.2):
    R = (-1)^(n2-l) / (4 (2l-1)!) sqrt((n+l)! (n2+l-1)! / ((n-l-1)! (n2-l)!))
        (4 n n2)^(l+1) (n-n2)^(n+n2-2l-2) / (n+n2)^(n+n2)
        [F(-nr, -nr2, 2l, x) - ((n-n2)/(n+n2))^2 F(-nr-2, -nr2, 2l, x)],
    nr = n-l-1, nr2 = n2-l, x = -4 n n2/(n-n2)^2.
    The hypergeometric polynomials are summed exactly with Fractions (they cancel
    heavily for large n), the prefactor with 60-digit mpmath.
    """
    nr, nr2 = n - l - 1, n2 - l
    x = Fraction(-4 * n * n2, (n - n2) ** 2)
    bracket = _hyp2f1_terminating(-nr, -nr2, 2 * l, x) - Fraction(n - n2, n + n2) ** 2 * _hyp2f1_terminating(
        -nr - 2, -nr2, 2 * l, x
    )
    with mpmath.workdps(60):
        pref = mpmath.mpf((-1) ** (n2 - l)) / (4 * mpmath.factorial(2 * l - 1))
        pref *= mpmath.sqrt(
            mpmath.factorial(n + l)
            * mpmath.factorial(n2 + l - 1)
            / (mpmath.factorial(n - l - 1) * mpmath.factorial(n2 - l))
        )
        pref *= mpmath.mpf(4 * n * n2) ** (l + 1) * mpmath.mpf(n - n2) ** (n + n2 - 2 * l - 2)
        pref /= mpmath.mpf(n + n2) ** (n + n2)
        return float(pref * mpmath.mpf(bracket.numerator) / mpmath.mpf(bracket.denominator))


# a spread of E1 pairs (n, l, n', l') with n up to 30, both Delta l signs,
# small and large n - n', low and circular l
SPREAD = [
    (2, 1, 1, 0), (3, 1, 1, 0), (3, 0, 2, 1), (3, 1, 2, 0), (3, 2, 2, 1),
    (4, 3, 3, 2), (5, 1, 4, 2), (5, 2, 2, 1), (6, 1, 1, 0), (7, 3, 5, 4),
    (8, 0, 3, 1), (9, 5, 8, 4), (10, 1, 9, 0), (10, 6, 7, 5), (12, 11, 11, 10),
    (13, 2, 4, 3), (15, 6, 6, 5), (16, 0, 15, 1), (18, 9, 17, 10), (20, 1, 2, 0),
    (20, 10, 19, 9), (21, 20, 20, 19), (22, 3, 8, 2), (24, 12, 13, 11), (25, 1, 24, 2),
    (26, 5, 25, 6), (27, 14, 16, 15), (28, 0, 27, 1), (29, 27, 28, 26), (30, 1, 29, 2),
    (30, 15, 25, 14), (30, 29, 29, 28), (30, 2, 2, 1), (30, 1, 1, 0), (30, 8, 20, 9),
    (20, 2, 5, 3),
    # reversed argument order (the integral is symmetric)
    (1, 0, 2, 1), (4, 2, 11, 3), (7, 6, 30, 5),
]
SAME_SHELL = [(2, 1, 2, 0), (3, 2, 3, 1), (5, 3, 5, 4), (12, 0, 12, 1), (30, 29, 30, 28)]


# ----------------------------------------------------------------------------
# accuracy against sympy.physics.hydrogen.R_nl
# ----------------------------------------------------------------------------


@pytest.mark.parametrize("n, l, n2, l2", SPREAD + SAME_SHELL)
def test_against_exact_integral_of_sympy_R_nl(n, l, n2, l2):
    # reference: sympy.physics.hydrogen.R_nl, integrated exactly (sympy_exact above)
    ref = sympy_exact(n, l, n2, l2)
    got = radial_dipole(n, l, n2, l2)
    assert got == pytest.approx(ref, rel=1e-10, abs=0)
    # same sign convention as sympy's R_nl
    assert math.copysign(1.0, got) == math.copysign(1.0, ref)


@pytest.mark.parametrize(
    "n, l, n2, l2",
    [(2, 1, 1, 0), (4, 2, 3, 1), (5, 2, 3, 1), (8, 0, 3, 1), (10, 3, 7, 2), (10, 9, 9, 8), (12, 2, 2, 1)],
)
def test_against_scipy_quad_of_lambdified_R_nl(n, l, n2, l2):
    # reference: sympy R_nl lambdified to numpy, integrated with scipy.integrate.quad.
    # In float64 the expanded Laguerre polynomials lose digits to cancellation as n
    # grows (1e-9 relative at (20, 2, 5, 3), 4e-5 at (30, 1, 29, 2)), so the float64
    # integrand is used only up to n = 12; the next test integrates numerically up to
    # n = 30 with the integrand evaluated in 35-digit arithmetic.
    assert radial_dipole(n, l, n2, l2) == pytest.approx(sympy_quad(n, l, n2, l2), rel=1e-10, abs=0)


def sympy_quad_mp(n: int, l: int, n2: int, l2: int) -> float:
    """scipy quad of sympy R_nl lambdified to mpmath and evaluated with 35 digits."""
    g = sp.lambdify(r, R_nl(n, l, r) * R_nl(n2, l2, r) * r**3, "mpmath")

    def f(x: float) -> float:
        with mpmath.workdps(35):
            return float(g(mpmath.mpf(x)))

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        value, _ = quad(f, 0.0, 6.0 * max(n, n2) ** 2 + 60.0, limit=1000, epsabs=0.0, epsrel=1e-13)
    return value


@pytest.mark.parametrize(
    "n, l, n2, l2",
    [(15, 1, 14, 0), (18, 4, 9, 3), (20, 2, 5, 3), (25, 3, 7, 2), (28, 0, 27, 1), (30, 1, 29, 2),
     (30, 15, 25, 14), (30, 29, 29, 28), (30, 2, 3, 1)],
)
def test_against_quad_of_lambdified_R_nl_high_precision_integrand(n, l, n2, l2):
    # reference: sympy R_nl lambdified (mpmath backend) + scipy.integrate.quad
    assert radial_dipole(n, l, n2, l2) == pytest.approx(sympy_quad_mp(n, l, n2, l2), rel=1e-10, abs=0)


def test_nuclear_charge_scaling_against_sympy():
    # sympy R_nl(n, l, r, Z) carries the nuclear charge; integrals scale as 1/Z
    for (n, l, n2, l2), z in [((2, 1, 1, 0), 2), ((5, 2, 3, 1), 6), ((9, 4, 4, 3), 26)]:
        assert radial_dipole(n, l, n2, l2, z=z) == pytest.approx(sympy_exact(n, l, n2, l2, z), rel=1e-10)


def test_reduced_mass_scaling():
    # lengths scale as a0 m_e/m_r (Bethe & Salpeter 1957, sec. 1): R(mass_ratio) = R(1)/mass_ratio
    mu = 0.999455679425  # hydrogen, m_r/m_e = 1/(1 + m_e/m_p) (CODATA 2018 masses)
    for args in [(2, 1, 1, 0), (30, 15, 25, 14), (3, 2, 3, 1)]:
        assert radial_dipole(*args, z=3, mass_ratio=mu) == pytest.approx(radial_dipole(*args) / (3 * mu), rel=1e-14)


# ----------------------------------------------------------------------------
# closed forms
# ----------------------------------------------------------------------------


def test_lyman_alpha_closed_form():
    # <2p|r|1s> = 2^7 sqrt(6) / 3^5 a0 (Bethe & Salpeter 1957, sec. 63; from memory,
    # and it is the n=2 case of the circular-orbit formula below)
    assert radial_dipole(2, 1, 1, 0) == pytest.approx(128 * math.sqrt(6) / 243, rel=1e-15)


@pytest.mark.parametrize("n", [2, 3, 5, 10, 20, 30])
def test_circular_transition_closed_form(n):
    # Gordon's formula with l = n-1, n' = n-1 (both hypergeometric factors are 1):
    # <n, n-1 | r | n-1, n-2> = (1/4) sqrt((2n-1)(2n-2)) (4n(n-1))^(n+1) / (2n-1)^(2n+1)
    with mpmath.workdps(40):
        ref = mpmath.sqrt((2 * n - 1) * (2 * n - 2)) / 4 * mpmath.mpf(4 * n * (n - 1)) ** (n + 1)
        ref /= mpmath.mpf(2 * n - 1) ** (2 * n + 1)
    assert radial_dipole(n, n - 1, n - 1, n - 2) == pytest.approx(float(ref), rel=1e-13)
    assert radial_dipole(n, n - 1, n - 1, n - 2) == pytest.approx(sympy_exact(n, n - 1, n - 1, n - 2), rel=1e-12)


@pytest.mark.parametrize("n, l, n2, l2", SAME_SHELL)
def test_same_shell_closed_form(n, l, n2, l2):
    # <n l|r|n l-1> = -(3/2) n sqrt(n^2 - l^2) (Bethe & Salpeter 1957, eq. 63.5; sign of sympy R_nl)
    big = max(l, l2)
    assert radial_dipole(n, l, n2, l2) == pytest.approx(-1.5 * n * math.sqrt(n * n - big * big), rel=1e-15)


@pytest.mark.parametrize("n, n2", [(3, 2), (7, 4), (12, 11), (30, 12), (30, 29)])
def test_all_l_against_gordon(n, n2):
    # Gordon (1929) closed form, exact hypergeometric polynomials; every l of the pair
    down, up = radial_dipole_all_l(n, n2)
    ref_down = [gordon(n, i + 1, n2) for i in range(n2)]  # <n, i+1 | r | n2, i>
    ref_up = [gordon(n2, i + 1, n) for i in range(n2 - 1)]  # <n2, i+1 | r | n, i> = <n, i | r | n2, i+1>
    np.testing.assert_allclose(down, ref_down, rtol=1e-12, atol=0)
    np.testing.assert_allclose(up, ref_up, rtol=1e-12, atol=0)


@pytest.mark.parametrize(
    "n, l, n2",
    [(500, 1, 499), (500, 250, 499), (500, 499, 499), (1000, 1, 999), (1000, 500, 999), (1000, 999, 999),
     (1000, 1, 500), (1000, 250, 500), (1000, 500, 500), (1000, 1, 2), (1000, 30, 30), (900, 5, 17),
     (700, 345, 690)],
)
def test_high_n_against_gordon_high_precision(n, l, n2):
    # independent high-precision evaluation of Gordon's closed form (exact rational sums).
    # Error budget: the start value uses log-gamma values up to ~1.3e4, whose float64
    # rounding (~2e-12 absolute) sets the relative accuracy; 1e-11 allows for that.
    got = radial_dipole(n, l, n2, l - 1)
    assert math.isfinite(got) and got > 0
    assert got == pytest.approx(gordon(n, l, n2), rel=1e-11, abs=0)
    if l + 1 <= n2 - 1:
        got_up = radial_dipole(n, l, n2, l + 1)  # <n l | r | n2 l+1> = Gordon <n2, l+1 | r | n, l>
        assert got_up == pytest.approx(gordon(n2, l + 1, n), rel=1e-11, abs=0)


def test_high_n_all_l_finite_without_warnings():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for n, n2 in [(1000, 999), (1000, 700), (1000, 300), (1000, 1), (2000, 1999)]:
            down, up = radial_dipole_all_l(n, n2)
            assert down.shape == (n2,) and up.shape == (n2 - 1,)
            assert np.all(np.isfinite(down)) and np.all(np.isfinite(up))
            assert np.all(down >= 0) and np.all(up >= 0)


# ----------------------------------------------------------------------------
# vectorised paths agree with the scalar path
# ----------------------------------------------------------------------------


def test_vectorised_path_at_high_n_matches_scalar_path_without_warnings():
    pairs = [(1000, 999), (1000, 500), (1000, 3), (640, 200), (999, 998)]
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for n, n2 in pairs:
            down, up = radial_dipole_all_l(n, n2)
            ls = np.arange(1, n2 + 1)
            got_down = radial_dipole_array(n, ls, n2, ls - 1)
            got_up = radial_dipole_array(n, ls[:-1] - 1, n2, ls[:-1])
            # same recurrence; the two paths may differ in the log-gamma routine (math vs scipy)
            np.testing.assert_allclose(got_down, down, rtol=1e-11, atol=0)
            np.testing.assert_allclose(got_up, up, rtol=1e-11, atol=0)


def test_all_l_matches_scalar():
    down, up = radial_dipole_all_l(17, 9, z=2, mass_ratio=0.9998)
    for i in range(9):
        assert down[i] == pytest.approx(radial_dipole(17, i + 1, 9, i, z=2, mass_ratio=0.9998), rel=1e-14)
    for i in range(8):
        assert up[i] == pytest.approx(radial_dipole(17, i, 9, i + 1, z=2, mass_ratio=0.9998), rel=1e-14)


def test_array_matches_scalar_and_broadcasts():
    rng = np.random.default_rng(7)
    n = rng.integers(1, 60, 400)
    n2 = rng.integers(1, 60, 400)
    l = np.array([rng.integers(0, k) for k in n])
    l2 = np.clip(l + rng.choice([-1, 1], 400), 0, None)
    ok = l2 < n2
    n, l, n2, l2 = n[ok], l[ok], n2[ok], l2[ok]
    got = radial_dipole_array(n, l, n2, l2, z=3)
    ref = np.array([radial_dipole(int(a), int(b), int(c), int(d), z=3) for a, b, c, d in zip(n, l, n2, l2)])
    np.testing.assert_allclose(got, ref, rtol=1e-12, atol=0)
    assert radial_dipole_array([[2], [3]], 1, 1, 0).shape == (2, 1)
    assert np.isnan(radial_dipole_array(3, 2, 1, 0))


def test_table_contents_and_order():
    n_max = 40
    n_u, l_u, n_l, l_l, R = radial_dipole_table(n_max)
    assert R.size == table_size(n_max) == sum((k - 1) ** 2 for k in range(2, n_max + 1))
    assert np.all(n_u > n_l) and np.all(np.abs(l_u - l_l) == 1)
    assert np.all(l_u < n_u) and np.all(l_l < n_l) and np.all(l_l >= 0) and np.all(l_u >= 0)
    keys = set(zip(n_u.tolist(), l_u.tolist(), n_l.tolist(), l_l.tolist()))
    assert len(keys) == R.size  # no duplicates, and the count equals every E1 pair
    # first block l_u = l_l + 1, then l_u = l_l - 1
    split = int(np.argmax(l_u < l_l))
    assert np.all(l_u[:split] == l_l[:split] + 1) and np.all(l_u[split:] == l_l[split:] - 1)
    ref = np.array([radial_dipole(*map(int, t)) for t in zip(n_u, l_u, n_l, l_l)])
    np.testing.assert_allclose(R, ref, rtol=1e-12, atol=0)
    # a sample of rows against the exact sympy integral
    for i in np.random.default_rng(3).integers(0, R.size, 12):
        assert R[i] == pytest.approx(sympy_exact(int(n_u[i]), int(l_u[i]), int(n_l[i]), int(l_l[i])), rel=1e-10)


def test_table_scaling_and_small_cases():
    assert radial_dipole_table(1)[4].size == 0
    R1 = radial_dipole_table(6)[4]
    R2 = radial_dipole_table(6, z=2, mass_ratio=0.5)[4]
    np.testing.assert_allclose(R2, R1 / 1.0, rtol=1e-15)  # z * mass_ratio = 1


# ----------------------------------------------------------------------------
# compiled kernels and the numpy fallback
# ----------------------------------------------------------------------------


@pytest.fixture
def numpy_fallback(monkeypatch):
    """Run the array paths through the numpy fallback (as without numba)."""
    monkeypatch.setattr(radial, "COMPILED", False)


def test_kernels_are_compiled_when_numba_is_installed():
    pytest.importorskip("numba")
    assert radial.COMPILED


def test_numpy_fallback_table_matches_compiled_table(monkeypatch):
    compiled = radial_dipole_table(80)[4]
    monkeypatch.setattr(radial, "COMPILED", False)
    fallback = radial_dipole_table(80)[4]
    # the two start values use different log-gamma routines (math.lgamma compiled,
    # scipy gammaln in numpy); error budget: three log-gamma values of size up to
    # lgamma(161) ~ 650, each rounded to ~1 ulp (1.1e-13): 3 * 650 * 2**-52 ~ 4.3e-13
    budget = 3 * math.lgamma(161) * 2.0**-52
    np.testing.assert_allclose(fallback, compiled, rtol=budget, atol=0)


@pytest.mark.parametrize("n, n2", [(7, 4), (30, 12), (30, 29)])
def test_numpy_fallback_against_gordon(numpy_fallback, n, n2):
    # Gordon (1929) closed form, exact hypergeometric polynomials (see gordon() above)
    ls = np.arange(1, n2 + 1)
    got = radial_dipole_array(n, ls, n2, ls - 1)
    np.testing.assert_allclose(got, [gordon(n, int(k), n2) for k in ls], rtol=1e-12, atol=0)


def test_large_array_path_matches_per_element_path():
    # above _PER_ELEMENT_LIMIT elements the distinct pairs are run once each
    rng = np.random.default_rng(11)
    size = 3 * radial._PER_ELEMENT_LIMIT
    n = rng.integers(2, 120, size)
    n2 = rng.integers(1, 120, size)
    l2 = np.array([rng.integers(0, k) for k in n2])
    l = l2 + 1
    ok = l < n
    n, l, n2, l2 = n[ok], l[ok], n2[ok], l2[ok]
    assert n.size > radial._PER_ELEMENT_LIMIT
    whole = radial_dipole_array(n, l, n2, l2, z=2)
    pieces = np.concatenate([radial_dipole_array(n[i:i + 1000], l[i:i + 1000], n2[i:i + 1000], l2[i:i + 1000], z=2)
                             for i in range(0, n.size, 1000)])
    np.testing.assert_allclose(whole, pieces, rtol=1e-13, atol=0)


def test_python_form_of_the_compiled_kernel_matches():
    # the kernel source run as plain Python (numba's py_func) gives the compiled result
    kernel = getattr(radial._one_element, "py_func", radial._one_element)
    for n, l, n2 in [(30, 5, 12), (200, 150, 180), (1000, 3, 999)]:
        assert kernel(n, n2, l, True) == pytest.approx(radial_dipole(n, l, n2, l - 1), rel=1e-14)


def test_without_numba_in_a_fresh_process():
    code = (
        "from levels.physics.one_electron import radial; import numpy as np;"
        "assert not radial.COMPILED;"
        "R = radial.radial_dipole_table(25)[4]; print(float(R.sum()));"
        "print(radial.radial_dipole(9, 3, 3, 2))"
    )
    env = dict(os.environ, LEVELS_NO_JIT="1")
    out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True).stdout
    total, single = (float(x) for x in out.split())
    assert total == pytest.approx(radial_dipole_table(25)[4].sum(), rel=1e-13)
    assert single == pytest.approx(sympy_exact(9, 3, 3, 2), rel=1e-12)


# ----------------------------------------------------------------------------
# errors and forbidden combinations
# ----------------------------------------------------------------------------


def test_malformed_quantum_numbers_raise():
    with pytest.raises(QuantumNumberError, match="l"):
        radial_dipole(2, 2, 1, 0)
    with pytest.raises(QuantumNumberError, match="n"):
        radial_dipole(0, 0, 1, 0)
    with pytest.raises(QuantumNumberError):
        radial_dipole(2.5, 1, 1, 0)
    with pytest.raises(QuantumNumberError, match="n_upper must be > n_lower"):
        radial_dipole_all_l(3, 3)
    with pytest.raises(QuantumNumberError, match="element 1 has n=3, l=3"):
        radial_dipole_array([2, 3], [1, 3], [1, 1], [0, 0])
    with pytest.raises(QuantumNumberError, match="element 2 has n2=0"):
        radial_dipole_array([2, 3, 4], [1, 2, 3], [1, 1, 0], [0, 0, 0])
    with pytest.raises(QuantumNumberError):
        radial_dipole_table(0)


def test_bad_physical_input_raises():
    with pytest.raises(PhysicsInputError, match="z"):
        radial_dipole(2, 1, 1, 0, z=0)
    with pytest.raises(PhysicsInputError, match="mass_ratio"):
        radial_dipole(2, 1, 1, 0, mass_ratio=-1.0)
    with pytest.raises(TooLargeError, match="max_rows"):
        radial_dipole_table(1000)


def test_not_a_dipole_pair_is_nan():
    assert math.isnan(radial_dipole(3, 2, 1, 0))
    assert math.isnan(radial_dipole(3, 1, 2, 1))
