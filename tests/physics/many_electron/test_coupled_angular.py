"""3j, 6j, 9j symbols and tensor factors of levels.physics.many_electron.angular against sympy.physics.wigner."""

import itertools
import random

import numpy as np
import pytest
from sympy import Rational
from sympy.physics.wigner import gaunt
from sympy.physics.wigner import wigner_3j as sympy_3j
from sympy.physics.wigner import wigner_6j as sympy_6j
from sympy.physics.wigner import wigner_9j as sympy_9j

from levels.errors import QuantumNumberError
from levels.physics.many_electron.angular import (
    ck_coefficient,
    ls_line_strength_factor,
    reduced_ck,
    wigner_3j,
    wigner_3j_array,
    wigner_6j,
    wigner_6j_array,
    wigner_9j,
)


def _half(two_j: int) -> Rational:
    return Rational(two_j, 2)


def test_3j_against_sympy_on_every_small_case():
    # every 3j with j <= 2 (doubled 0..4) and all projections: sympy.physics.wigner is the reference
    checked = 0
    for a, b, c in itertools.product(range(5), repeat=3):
        for ma in range(-a, a + 1, 2):
            for mb in range(-b, b + 1, 2):
                mc = -ma - mb
                if abs(mc) > c or (c - mc) % 2:
                    continue
                ref = float(sympy_3j(*(_half(x) for x in (a, b, c, ma, mb, mc))))
                assert wigner_3j(a, b, c, ma, mb, mc) == pytest.approx(ref, abs=1e-13)
                checked += 1
    assert checked > 300


def test_6j_against_sympy_random_sample():
    rng = random.Random(15)
    nonzero = 0
    for _ in range(3000):
        args = [rng.randint(0, 8) for _ in range(6)]
        try:
            ref = float(sympy_6j(*(_half(x) for x in args)))
        except ValueError:            # sympy refuses non-integer perimeters; the symbol is 0 there
            ref = 0.0
        assert wigner_6j(*args) == pytest.approx(ref, abs=1e-13), args
        nonzero += ref != 0.0
    assert nonzero > 60


def test_9j_against_sympy_valid_cases():
    rng = random.Random(9)
    nonzero = 0
    tried = 0
    while nonzero < 25 and tried < 40000:
        tried += 1
        args = [rng.randint(0, 4) for _ in range(9)]
        rows = (args[0:3], args[3:6], args[6:9])
        cols = (args[0::3], args[1::3], args[2::3])
        if not all(sum(t) % 2 == 0 and abs(t[0] - t[1]) <= t[2] <= t[0] + t[1] for t in rows + cols):
            continue
        ref = float(sympy_9j(*(_half(x) for x in args), prec=64))
        assert wigner_9j(*args) == pytest.approx(ref, abs=1e-12), args
        nonzero += abs(ref) > 1e-12
    assert nonzero >= 25


def test_array_forms_broadcast():
    out = wigner_6j_array(np.array([2, 2, 4]), 2, np.array([0, 2, 2]), 2, 2, 2)
    assert out.shape == (3,)
    assert out[1] == pytest.approx(float(sympy_6j(1, 1, 1, 1, 1, 1)))
    assert wigner_3j_array([[2], [4]], 2, 2, 0, 0, 0).shape == (2, 1)


def test_ck_against_sympy_gaunt():
    # c^k(l m, l' m') = (-1)^m sqrt(4 pi / (2k+1)) * integral Y*_lm Y_kq Y_l'm'  (Condon & Shortley 1935)
    for l1, k, l2 in [(1, 1, 0), (1, 1, 2), (2, 2, 2), (1, 2, 1), (3, 1, 2), (2, 0, 2)]:
        for m1 in range(-l1, l1 + 1):
            for m2 in range(-l2, l2 + 1):
                q = m1 - m2
                if abs(q) > k:
                    assert ck_coefficient(l1, m1, k, l2, m2) == 0.0
                    continue
                # integral of conj(Y_l1m1) Y_kq Y_l2m2 = (-1)^m1 * gaunt(l1, k, l2, -m1, q, m2)
                integral = (-1) ** m1 * float(gaunt(l1, k, l2, -m1, q, m2))
                ref = float(np.sqrt(4 * np.pi / (2 * k + 1))) * integral
                assert ck_coefficient(l1, m1, k, l2, m2) == pytest.approx(ref, abs=1e-12)
    assert reduced_ck(1, 1, 2) ** 2 == pytest.approx(2.0)     # <p||C1||d>^2 = max(l, l') = 2


@pytest.mark.parametrize("l_core, l_a, l_b", [(0, 1, 0), (1, 1, 0), (1, 1, 2), (2, 1, 2), (0, 2, 3)])
def test_ls_line_strength_sum_rule(l_core, l_a, l_b):
    # Summed over all L, J of one S: (2S+1)(2 l_core + 1) max(l_a, l_b) (Cowan 1981, sec. 14-6)
    for two_s in (0, 2):
        total = 0.0
        for big_la in range(abs(l_core - l_a), l_core + l_a + 1):
            for big_lb in range(abs(l_core - l_b), l_core + l_b + 1):
                for two_ja in range(abs(2 * big_la - two_s), 2 * big_la + two_s + 1, 2):
                    for two_jb in range(abs(2 * big_lb - two_s), 2 * big_lb + two_s + 1, 2):
                        total += ls_line_strength_factor(l_core, l_a, l_b, two_s, big_la, two_ja, big_lb, two_jb)
        assert total == pytest.approx((two_s + 1) * (2 * l_core + 1) * max(l_a, l_b))


def test_negative_or_fractional_arguments_are_refused():
    with pytest.raises(QuantumNumberError):
        wigner_6j(-2, 2, 2, 2, 2, 2)
    with pytest.raises(QuantumNumberError):
        wigner_3j(1.5, 2, 2, 0, 0, 0)
    assert wigner_3j(2, 2, 6, 0, 0, 0) == 0.0      # triangle broken: a value, not an error
