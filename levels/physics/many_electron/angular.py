"""Angular-momentum coupling coefficients: Wigner 3j, 6j and 9j symbols, tensor-operator factors.

Racah's closed forms (Racah 1942, Phys. Rev. 62, 438) as written in Cowan, *The
Theory of Atomic Structure and Spectra* (University of California Press,
1981), chapter 5; phase conventions of Condon & Shortley, *The Theory of Atomic
Spectra* (Cambridge University Press, 1935). Every argument is given doubled
(``two_j`` = 2j) so half-integers stay exact integers. The sums run over at most
a few dozen terms with exact integer factorials, so the values are exact to
float rounding; results are cached.

A combination that violates a triangle rule or a projection rule is allowed
and gives 0 (a physically forbidden coupling is a value, not an error); a
negative ``two_j`` raises :class:`levels.errors.QuantumNumberError`.

The array functions take array_like arguments and broadcast them (numpy
broadcasting rules), looping over the distinct argument sets in Python: these
coefficients are set-up work for matrices of at most a few hundred rows.
"""

from __future__ import annotations

import functools
import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels.errors import QuantumNumberError

__all__ = [
    "wigner_3j",
    "wigner_6j",
    "wigner_9j",
    "wigner_3j_array",
    "wigner_6j_array",
    "ck_coefficient",
    "reduced_ck",
    "ls_line_strength_factor",
]


def _check(*two_js: int) -> None:
    for value in two_js:
        if not isinstance(value, (int, np.integer)) or isinstance(value, bool):
            raise QuantumNumberError(f"doubled angular momentum {value!r} must be an integer")


def _triangle(a: int, b: int, c: int) -> bool:
    """Triangle rule on doubled values (and integer sum of the three)."""
    return (a + b + c) % 2 == 0 and abs(a - b) <= c <= a + b


def _delta(a: int, b: int, c: int) -> float:
    """Racah's triangle coefficient Delta(abc) of doubled values (sqrt of a factorial ratio)."""
    f = math.factorial
    return math.sqrt(f((a + b - c) // 2) * f((a - b + c) // 2) * f((-a + b + c) // 2) / f((a + b + c) // 2 + 1))


@functools.lru_cache(maxsize=200_000)
def wigner_3j(two_j1: int, two_j2: int, two_j3: int, two_m1: int, two_m2: int, two_m3: int) -> float:
    """Wigner 3j symbol ``(j1 j2 j3; m1 m2 m3)`` from doubled arguments.

    Parameters
    ----------
    two_j1, two_j2, two_j3 : int
        2j of the three angular momenta (dimensionless, >= 0).
    two_m1, two_m2, two_m3 : int
        2m of their projections.

    Returns
    -------
    float
        The symbol; 0 where a triangle or projection rule fails.

    Raises
    ------
    QuantumNumberError
        For a negative or non-integer doubled value.

    Notes
    -----
    Racah's formula (Cowan 1981, eq. 5.28).

    Examples
    --------
    >>> round(wigner_3j(2, 2, 0, 0, 0, 0), 6)     # (1 1 0; 0 0 0) = -1/sqrt(3)
    -0.57735
    """
    _check(two_j1, two_j2, two_j3, two_m1, two_m2, two_m3)
    if min(two_j1, two_j2, two_j3) < 0:
        raise QuantumNumberError("angular momenta must not be negative")
    if two_m1 + two_m2 + two_m3 != 0 or not _triangle(two_j1, two_j2, two_j3):
        return 0.0
    for j, m in ((two_j1, two_m1), (two_j2, two_m2), (two_j3, two_m3)):
        if abs(m) > j or (j - m) % 2:
            return 0.0
    a, b, c = two_j1, two_j2, two_j3
    f = math.factorial
    pre = _delta(a, b, c) * math.sqrt(
        f((a + two_m1) // 2) * f((a - two_m1) // 2) * f((b + two_m2) // 2) * f((b - two_m2) // 2)
        * f((c + two_m3) // 2) * f((c - two_m3) // 2))
    # summation limits, all in ordinary (not doubled) integers
    t_min = max(0, (b - c - two_m1) // 2, (a - c + two_m2) // 2)
    t_max = min((a + b - c) // 2, (a - two_m1) // 2, (b + two_m2) // 2)
    total = 0
    for t in range(t_min, t_max + 1):
        den = (f(t) * f((c - b + two_m1) // 2 + t) * f((c - a - two_m2) // 2 + t)
               * f((a + b - c) // 2 - t) * f((a - two_m1) // 2 - t) * f((b + two_m2) // 2 - t))
        total += (-1) ** t / den
    phase = -1 if ((a - b - two_m3) // 2) % 2 else 1
    return float(phase * pre * total)


@functools.lru_cache(maxsize=200_000)
def wigner_6j(two_j1: int, two_j2: int, two_j3: int, two_j4: int, two_j5: int, two_j6: int) -> float:
    """Wigner 6j symbol ``{j1 j2 j3; j4 j5 j6}`` from doubled arguments.

    Parameters
    ----------
    two_j1 .. two_j6 : int
        2j of the six angular momenta (>= 0).

    Returns
    -------
    float
        The symbol; 0 where one of the four triangle rules fails.

    Raises
    ------
    QuantumNumberError
        For a negative or non-integer doubled value.

    Notes
    -----
    Racah's formula (Cowan 1981, eq. 5.36).

    Examples
    --------
    >>> round(wigner_6j(2, 2, 2, 2, 2, 2), 6)     # {1 1 1; 1 1 1} = 1/6
    0.166667
    """
    args = (two_j1, two_j2, two_j3, two_j4, two_j5, two_j6)
    _check(*args)
    if min(args) < 0:
        raise QuantumNumberError("angular momenta must not be negative")
    a, b, c, d, e, g = args
    triads = ((a, b, c), (a, e, g), (d, b, g), (d, e, c))
    if not all(_triangle(*t) for t in triads):
        return 0.0
    pre = 1.0
    for t in triads:
        pre *= _delta(*t)
    f = math.factorial
    sums = [sum(t) // 2 for t in triads]
    quads = ((a + b + d + e) // 2, (a + c + d + g) // 2, (b + c + e + g) // 2)
    total = 0
    for k in range(max(sums), min(quads) + 1):
        den = f(k - sums[0]) * f(k - sums[1]) * f(k - sums[2]) * f(k - sums[3])
        den *= f(quads[0] - k) * f(quads[1] - k) * f(quads[2] - k)
        total += (-1) ** k * f(k + 1) / den
    return float(pre * total)


@functools.lru_cache(maxsize=50_000)
def wigner_9j(two_j1: int, two_j2: int, two_j3: int, two_j4: int, two_j5: int, two_j6: int,
              two_j7: int, two_j8: int, two_j9: int) -> float:
    """Wigner 9j symbol ``{j1 j2 j3; j4 j5 j6; j7 j8 j9}`` from doubled arguments.

    Notes
    -----
    Sum over products of three 6j symbols (Cowan 1981, eq. 5.43)::

        {a b c; d e f; g h i} = sum_x (-1)^(2x) (2x+1) {a b c; f i x} {d e f; b x h} {g h i; x a d}

    Examples
    --------
    >>> round(wigner_9j(2, 2, 0, 2, 2, 0, 0, 0, 0), 6)   # {1 1 0; 1 1 0; 0 0 0} = 1/3
    0.333333
    """
    a, b, c, d, e, f_, g, h, i = two_j1, two_j2, two_j3, two_j4, two_j5, two_j6, two_j7, two_j8, two_j9
    _check(a, b, c, d, e, f_, g, h, i)
    if min(a, b, c, d, e, f_, g, h, i) < 0:
        raise QuantumNumberError("angular momenta must not be negative")
    lo = max(abs(a - i), abs(d - h), abs(b - f_))
    hi = min(a + i, d + h, b + f_)
    total = 0.0
    for x in range(lo, hi + 1, 2):
        total += ((-1) ** x * (x + 1) * wigner_6j(a, b, c, f_, i, x) * wigner_6j(d, e, f_, b, x, h)
                  * wigner_6j(g, h, i, x, a, d))
    return float(total)


def _broadcast_call(function, *arrays: ArrayLike) -> NDArray[np.float64]:
    parts = np.broadcast_arrays(*[np.asarray(a) for a in arrays])
    for p in parts:
        if p.size and not np.issubdtype(p.dtype, np.integer):
            raise QuantumNumberError("doubled angular momenta must be integers")
    out = np.empty(parts[0].shape, dtype=float)
    flat = [p.ravel() for p in parts]
    out_flat = out.ravel()
    for k in range(out.size):
        out_flat[k] = function(*(int(p[k]) for p in flat))
    return out


def wigner_3j_array(two_j1: ArrayLike, two_j2: ArrayLike, two_j3: ArrayLike,
                    two_m1: ArrayLike, two_m2: ArrayLike, two_m3: ArrayLike) -> NDArray[np.float64]:
    """:func:`wigner_3j` over broadcast integer arrays.

    Examples
    --------
    >>> wigner_3j_array([2, 2], 2, 0, 0, 0, 0).round(4).tolist()
    [-0.5774, -0.5774]
    """
    return _broadcast_call(wigner_3j, two_j1, two_j2, two_j3, two_m1, two_m2, two_m3)


def wigner_6j_array(two_j1: ArrayLike, two_j2: ArrayLike, two_j3: ArrayLike,
                    two_j4: ArrayLike, two_j5: ArrayLike, two_j6: ArrayLike) -> NDArray[np.float64]:
    """:func:`wigner_6j` over broadcast integer arrays.

    Examples
    --------
    >>> wigner_6j_array(2, 2, [0, 2], 2, 2, 2).round(4).tolist()
    [-0.3333, 0.1667]
    """
    return _broadcast_call(wigner_6j, two_j1, two_j2, two_j3, two_j4, two_j5, two_j6)


@functools.lru_cache(maxsize=100_000)
def ck_coefficient(l1: int, m1: int, k: int, l2: int, m2: int) -> float:
    """Condon-Shortley coefficient c^k(l1 m1, l2 m2) = <l1 m1|C^k_(m1-m2)|l2 m2>.

    Parameters
    ----------
    l1, m1, l2, m2 : int
        Orbital quantum numbers and projections (not doubled).
    k : int
        Rank of the Racah tensor C^k.

    Notes
    -----
    ``c^k = (-1)^m1 sqrt((2l1+1)(2l2+1)) (l1 k l2; -m1 q m2) (l1 k l2; 0 0 0)`` with
    q = m1 - m2 (Condon & Shortley 1935, ch. VI; Cowan 1981, eq. 11.23).

    Examples
    --------
    >>> round(ck_coefficient(1, 0, 1, 0, 0), 6)     # <p0|C^1_0|s> = 1/sqrt(3)
    0.57735
    """
    q = m1 - m2
    if abs(q) > k:
        return 0.0
    phase = -1.0 if m1 % 2 else 1.0
    return phase * math.sqrt((2 * l1 + 1) * (2 * l2 + 1)) * wigner_3j(
        2 * l1, 2 * k, 2 * l2, -2 * m1, 2 * q, 2 * m2) * wigner_3j(2 * l1, 2 * k, 2 * l2, 0, 0, 0)


def reduced_ck(l1: int, k: int, l2: int) -> float:
    """Reduced matrix element <l1||C^k||l2> = (-1)^l1 sqrt((2l1+1)(2l2+1)) (l1 k l2; 0 0 0).

    Examples
    --------
    >>> round(reduced_ck(0, 1, 1), 6)      # <s||C^1||p> = -1
    -1.0
    """
    phase = -1.0 if l1 % 2 else 1.0
    return phase * math.sqrt((2 * l1 + 1) * (2 * l2 + 1)) * wigner_3j(2 * l1, 2 * k, 2 * l2, 0, 0, 0)


def ls_line_strength_factor(l_core: int, l_a: int, l_b: int, two_s: int, big_l_a: int, two_j_a: int,
                            big_l_b: int, two_j_b: int) -> float:
    """Angular factor of the line strength between LS levels of ``core l_a`` and ``core l_b``.

    The jumping electron goes l_a -> l_b beside a spectator of orbital momentum
    ``l_core`` (one electron or one hole in a closed shell, coupled to total L
    with the jumping electron); spin S is kept. Multiply by the squared radial
    integral <n_a l_a|r|n_b l_b>^2 (a0^2) to get S in e^2 a0^2.

    Notes
    -----
    Cowan 1981, eqs. 14.36 and 14.40 (Racah algebra)::

        S/R^2 = max(l_a, l_b) (2L_a+1)(2L_b+1)(2J_a+1)(2J_b+1)
                {L_a S J_a; J_b 1 L_b}^2 {l_a L_a l_core; L_b l_b 1}^2

    Summed over all J and L of one S of a one-electron spectator it gives
    ``(2S+1) (2 l_core + 1) max(l_a, l_b)``: the LS sum rule.

    Examples
    --------
    >>> round(ls_line_strength_factor(0, 1, 0, 2, 1, 2, 0, 2), 6)   # s p 3P1 -> s s 3S1
    1.0
    """
    s_ja = wigner_6j(2 * big_l_a, two_s, two_j_a, two_j_b, 2, 2 * big_l_b)
    s_l = wigner_6j(2 * l_a, 2 * big_l_a, 2 * l_core, 2 * big_l_b, 2 * l_b, 2)
    return float(max(l_a, l_b) * (2 * big_l_a + 1) * (2 * big_l_b + 1) * (two_j_a + 1) * (two_j_b + 1)
                 * s_ja ** 2 * s_l ** 2)
