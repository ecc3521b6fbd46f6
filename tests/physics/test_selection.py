"""Tests of levels.physics.lines.selection.

Hand-checked cases follow the rules as tabulated in Cowan, *The Theory of
Atomic Structure and Spectra* (1981), sections 14.1 and 15.1, and Sobelman,
*Atomic Spectra and Radiative Transitions* (1992), chapter 9. The J rule is
also checked against the triangle condition of the Wigner 3j symbol from
sympy.physics.wigner (a reduced matrix element of rank k between J and J'
can be non-zero only if the 3j symbol (J k J'; -M q M') is non-zero for some M).
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from sympy import Rational
from sympy.physics.wigner import wigner_3j

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.physics.lines.selection import (
    MULTIPOLES,
    allowed,
    candidate_pairs,
    iter_candidate_pairs,
    ls_flags,
    rejection_reason,
)

EVEN, ODD = 1, -1


# ----------------------------------------------------------------- hand-checked cases


@pytest.mark.parametrize(
    ("multipole", "ja", "pa", "jb", "pb", "ok", "reason"),
    [
        # E1: parity changes, dJ = 0, +-1, not 0-0
        ("E1", 1, EVEN, 1, ODD, True, ""),  # 2S1/2 - 2P1/2 (alkali D1)
        ("E1", 1, EVEN, 3, ODD, True, ""),  # 2S1/2 - 2P3/2 (alkali D2)
        ("E1", 1, EVEN, 5, ODD, False, "ΔJ = 2"),  # 2S1/2 - 2D5/2 with odd parity
        ("E1", 0, EVEN, 2, ODD, True, ""),  # 1S0 - 1P1
        ("E1", 0, EVEN, 0, ODD, False, "J 0 to 0"),  # 3P0 - 3P0
        ("E1", 2, EVEN, 2, ODD, True, ""),  # dJ = 0 allowed for J > 0
        ("E1", 1, EVEN, 3, EVEN, False, "parity unchanged"),  # 2S1/2 - 2D3/2
        ("E1", 0, ODD, 0, ODD, False, "parity unchanged; J 0 to 0"),
        ("E1", 1, EVEN, 2, ODD, False, "ΔJ = 1/2"),
        # M1: parity unchanged, dJ = 0, +-1, not 0-0
        ("M1", 1, ODD, 3, ODD, True, ""),  # 2P1/2 - 2P3/2 fine-structure line
        ("M1", 2, EVEN, 0, EVEN, True, ""),  # 3P1 - 3P0
        ("M1", 4, EVEN, 0, EVEN, False, "ΔJ = 2"),  # 3P2 - 3P0
        ("M1", 0, EVEN, 0, EVEN, False, "J 0 to 0"),
        ("M1", 2, EVEN, 2, ODD, False, "parity changes"),
        # E2: parity unchanged, dJ <= 2, J + J' >= 2
        ("E2", 1, EVEN, 5, EVEN, True, ""),  # 2S1/2 - 2D5/2 (Ca+ 729 nm kind)
        ("E2", 1, EVEN, 3, EVEN, True, ""),  # 2S1/2 - 2D3/2
        ("E2", 4, EVEN, 0, EVEN, True, ""),  # 3P2 - 3P0
        ("E2", 0, EVEN, 0, EVEN, False, "J + J' < 2"),
        ("E2", 0, EVEN, 2, EVEN, False, "J + J' < 2"),  # 0 - 1
        ("E2", 1, EVEN, 1, EVEN, False, "J + J' < 2"),  # 1/2 - 1/2
        ("E2", 1, EVEN, 7, EVEN, False, "ΔJ = 3"),
        ("E2", 2, EVEN, 4, ODD, False, "parity changes"),
    ],
)
def test_hand_checked(multipole, ja, pa, jb, pb, ok, reason):
    assert bool(allowed(multipole, ja, pa, jb, pb)) is ok
    assert str(rejection_reason(multipole, ja, pa, jb, pb)) == reason


def test_vectorised_and_broadcast():
    two_j_b = np.arange(0, 9)
    got = allowed("E1", 2, EVEN, two_j_b, ODD)
    # J = 1 to J' = 0, 1, 2 (2J' = 0, 2, 4); half-integer J' never
    assert got.tolist() == [True, False, True, False, True, False, False, False, False]
    reasons = rejection_reason("E1", 2, EVEN, two_j_b, ODD)
    assert reasons.shape == (9,)
    assert (reasons == "").tolist() == got.tolist()


@pytest.mark.parametrize("multipole", MULTIPOLES)
def test_j_rule_matches_wigner_3j_triangle(multipole):
    # sympy.physics.wigner: (J k J'; -M q M') vanishes for all M, q, M' unless
    # the triangle (J, k, J') holds (and J - J' integer).
    k = 2 if multipole == "E2" else 1
    parity_b = ODD if multipole == "E1" else EVEN
    for ja, jb in itertools.product(range(0, 9), repeat=2):
        if (ja + jb) % 2:
            continue  # integer and half-integer J never mix within one atom
        J, Jp = Rational(ja, 2), Rational(jb, 2)
        nonzero = any(
            wigner_3j(J, k, Jp, -Rational(m2, 2), q, Rational(mp2, 2)) != 0
            for m2 in range(-ja, ja + 1, 2)
            for mp2 in range(-jb, jb + 1, 2)
            for q in range(-k, k + 1)
        )
        assert bool(allowed(multipole, ja, EVEN, jb, parity_b)) is nonzero, (ja, jb)


@settings(max_examples=200, deadline=None)
@given(
    st.sampled_from(MULTIPOLES),
    st.integers(0, 12),
    st.sampled_from([EVEN, ODD]),
    st.integers(0, 12),
    st.sampled_from([EVEN, ODD]),
)
def test_symmetric_in_a_and_b(multipole, ja, pa, jb, pb):
    assert bool(allowed(multipole, ja, pa, jb, pb)) == bool(allowed(multipole, jb, pb, ja, pa))
    assert str(rejection_reason(multipole, ja, pa, jb, pb)) == str(rejection_reason(multipole, jb, pb, ja, pa))
    assert (str(rejection_reason(multipole, ja, pa, jb, pb)) == "") == bool(allowed(multipole, ja, pa, jb, pb))


@pytest.mark.parametrize(
    "bad",
    [
        dict(multipole="M2"),
        dict(two_j_a=-1),
        dict(two_j_a=1.5),
        dict(parity_a=0),
        dict(parity_b=2),
    ],
)
def test_malformed_quantum_numbers_raise(bad):
    args = dict(multipole="E1", two_j_a=1, parity_a=EVEN, two_j_b=1, parity_b=ODD)
    args.update(bad)
    with pytest.raises(QuantumNumberError):
        allowed(**args)


# ----------------------------------------------------------------- LS and one-electron flags


def test_ls_flags_cases():
    # 1S0 - 3P1: intercombination line, L rule fine
    f = ls_flags(0, 0, 2, 1, "E1")
    assert bool(f["intercombination"]) and not bool(f["ls_forbidden"])
    # 2S - 2S: L = 0 -> 0 forbidden for E1; for E2 L + L' < 2 forbidden
    assert bool(ls_flags(1, 0, 1, 0, "E1")["ls_forbidden"])
    assert bool(ls_flags(1, 0, 1, 0, "E2")["ls_forbidden"])
    # 2S - 2D: dL = 2 forbidden for E1, fine for E2
    assert bool(ls_flags(1, 0, 1, 2, "E1")["ls_forbidden"])
    assert not bool(ls_flags(1, 0, 1, 2, "E2")["ls_forbidden"])
    # 3S - 3F: dL = 3 forbidden for E2; 3P - 3F (dL = 2) allowed
    assert bool(ls_flags(2, 0, 2, 3, "E2")["ls_forbidden"])
    assert not bool(ls_flags(2, 1, 2, 3, "E2")["ls_forbidden"])
    # M1 inside a term: dL = 0 allowed, dL = 1 forbidden
    assert not bool(ls_flags(2, 1, 2, 1, "M1")["ls_forbidden"])
    assert bool(ls_flags(2, 1, 2, 2, "M1")["ls_forbidden"])
    # unknown values never flag
    f = ls_flags(-1, 0, 2, 3, "E1")
    assert not bool(f["intercombination"]) and bool(f["ls_forbidden"])
    f = ls_flags(0, -1, 2, 3, "E1")
    assert bool(f["intercombination"]) and not bool(f["ls_forbidden"])


def test_one_electron_rule():
    # s -> p allowed E1, s -> d forbidden E1 (allowed E2), p -> p forbidden E1
    f = ls_flags([1, 1, 1], [0, 0, 1], [1, 1, 1], [1, 2, 1], "E1", l_a=[0, 0, 1], l_b=[1, 2, 1])
    assert f["l_forbidden"].tolist() == [False, True, True]
    assert ls_flags(1, 0, 1, 2, "E2", l_a=0, l_b=2)["l_forbidden"].item() is False
    assert ls_flags(1, 0, 1, 1, "E2", l_a=0, l_b=1)["l_forbidden"].item() is True
    assert ls_flags(1, 0, 1, 1, "E1", l_a=-1, l_b=1)["l_forbidden"].item() is False
    assert not ls_flags(1, 0, 1, 1, "E1")["l_forbidden"].any()
    with pytest.raises(QuantumNumberError):
        ls_flags(1, 0, 1, 1, "E1", l_a=0)
    with pytest.raises(QuantumNumberError):
        ls_flags(-2, 0, 1, 1, "E1")


@settings(max_examples=100, deadline=None)
@given(
    st.sampled_from(MULTIPOLES),
    st.integers(-1, 6),
    st.integers(-1, 5),
    st.integers(-1, 6),
    st.integers(-1, 5),
    st.integers(-1, 4),
    st.integers(-1, 4),
)
def test_ls_flags_symmetric(multipole, sa, la, sb, lb, ea, eb):
    f = ls_flags(sa, la, sb, lb, multipole, l_a=ea, l_b=eb)
    g = ls_flags(sb, lb, sa, la, multipole, l_a=eb, l_b=ea)
    assert all(bool(f[k]) == bool(g[k]) for k in f)


# ----------------------------------------------------------------- candidate pairs


def _brute_force(two_j, parity, energy, multipoles):
    rows = []
    n = len(two_j)
    for code, m in enumerate(MULTIPOLES):
        if m not in multipoles:
            continue
        for i in range(n):
            for j in range(i + 1, n):
                if not np.isfinite(energy[i]) or not np.isfinite(energy[j]) or energy[i] == energy[j]:
                    continue
                if allowed(m, two_j[i], parity[i], two_j[j], parity[j]):
                    lo, up = (i, j) if energy[i] < energy[j] else (j, i)
                    rows.append((lo, up, code))
    return sorted(rows)


levels_strategy = st.integers(0, 25).flatmap(
    lambda n: st.tuples(
        st.lists(st.integers(0, 3), min_size=n, max_size=n).map(lambda v: [2 * x + 1 for x in v]),
        st.lists(st.sampled_from([EVEN, ODD]), min_size=n, max_size=n),
        # few distinct energies so that ties (skipped) occur
        st.lists(st.sampled_from([0.0, 1.0, 2.5, 7.0, 9.0, 11.0, float("nan")]), min_size=n, max_size=n),
    )
)


@settings(max_examples=150, deadline=None)
@given(levels_strategy, st.sets(st.sampled_from(MULTIPOLES), min_size=1))
def test_candidate_pairs_equals_brute_force(levels, multipoles):
    two_j, parity, energy = levels
    lo, up, code = candidate_pairs(two_j, parity, energy, tuple(sorted(multipoles)))
    got = list(zip(lo.tolist(), up.tolist(), code.tolist()))
    assert got == _brute_force(two_j, parity, energy, multipoles)


@settings(max_examples=40, deadline=None)
@given(
    st.lists(st.tuples(st.integers(0, 6), st.sampled_from([EVEN, ODD])), min_size=0, max_size=30),
    st.integers(1, 7),
)
def test_integer_j_and_small_chunks(levels, chunk):
    two_j = [2 * j for j, _ in levels]
    parity = [p for _, p in levels]
    energy = np.arange(len(levels), dtype=float)[::-1] * 3.0
    lo, up, code = candidate_pairs(two_j, parity, energy, ("E1", "E2"))
    blocks = list(iter_candidate_pairs(two_j, parity, energy, ("E1", "E2"), chunk_size=chunk))
    assert all(b[0].size <= max(chunk, len(levels)) for b in blocks)
    streamed = sorted(zip(*(np.concatenate([b[k] for b in blocks]).tolist() if blocks else [] for k in range(3))))
    assert streamed == list(zip(lo.tolist(), up.tolist(), code.tolist()))
    assert streamed == _brute_force(two_j, parity, energy, ("E1", "E2"))


def test_candidate_pairs_20000_levels():
    # 20,000 levels, 2J in 1..27 (J up to 27/2), both parities; no timing assertion.
    rng = np.random.default_rng(20_000)
    n = 20_000
    two_j = 2 * rng.integers(0, 14, n) + 1
    parity = rng.choice([EVEN, ODD], n)
    energy = rng.uniform(0.0, 1e5, n)
    lo, up, code = candidate_pairs(two_j, parity, energy, ("E1",))
    # expected count from group sizes: sum over opposite-parity groups with |dJ| <= 1
    size = np.zeros((2, 14), dtype=np.int64)
    np.add.at(size, ((parity > 0).astype(int), (two_j - 1) // 2), 1)
    expected = sum(
        size[0, a] * size[1, b] for a in range(14) for b in range(14) if abs(a - b) <= 1
    )
    assert lo.size == expected  # continuous random energies: no ties
    assert np.all(energy[lo] < energy[up])
    assert np.all(code == 0)
    sample = rng.integers(0, lo.size, 5000)
    assert np.all(allowed("E1", two_j[lo[sample]], parity[lo[sample]], two_j[up[sample]], parity[up[sample]]))
    # rows are sorted by (lower, upper)
    key = lo.astype(np.int64) * n + up
    assert np.all(np.diff(key) > 0)


def test_candidate_pairs_input_errors():
    with pytest.raises(PhysicsInputError):
        candidate_pairs([1, 1], [1, -1], [0.0])
    with pytest.raises(QuantumNumberError):
        candidate_pairs([1, 1], [1, 0], [0.0, 1.0])
    with pytest.raises(QuantumNumberError):
        candidate_pairs([1, 1], [1, -1], [0.0, 1.0], ("E3",))
    lo, up, code = candidate_pairs([], [], [])
    assert lo.size == up.size == code.size == 0
