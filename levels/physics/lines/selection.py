"""Selection rules for electric-dipole (E1), magnetic-dipole (M1) and electric-quadrupole (E2) lines.

A multipole of rank k and parity (-1)^k (electric) or (-1)^(k+1) (magnetic)
connects two levels only if J, J' and k satisfy the triangle condition
|J - J'| <= k <= J + J' and the parity rule holds (Wigner-Eckart theorem):

====  ===============  ============================================
line  parity           J rule
====  ===============  ============================================
E1    changes          Delta J = 0, +-1; not J = 0 -> 0
M1    unchanged        Delta J = 0, +-1; not J = 0 -> 0
E2    unchanged        Delta J = 0, +-1, +-2; J + J' >= 2
====  ===============  ============================================

These rules are exact for isolated atoms. In LS (Russell-Saunders) coupling
further rules hold approximately; where both levels carry an LS term they are
reported as flags, not as rejections: Delta S = 0 (a line with Delta S != 0 is
an *intercombination* line), and for L: E1 Delta L = 0, +-1, not L = 0 -> 0;
M1 Delta L = 0; E2 Delta L = 0, +-1, +-2, L + L' >= 2. For a jump of one
electron between orbitals l and l': E1 Delta l = +-1; M1 Delta l = 0 (no change
of configuration); E2 Delta l = 0, +-2.

J is carried as the integer ``two_j`` (2J) and parity as +1 (even) / -1 (odd)
throughout; ``two_s`` is 2S and ``-1`` marks an unknown S, L or l.

References
----------
I. I. Sobelman, *Atomic Spectra and Radiative Transitions*, 2nd ed.
(Springer, Berlin, 1992), chapter 9.
R. D. Cowan, *The Theory of Atomic Structure and Spectra* (University of
California Press, Berkeley, 1981), sections 14.1 and 15.1.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence

import numpy as np
import numpy.typing as npt

from levels.errors import PhysicsInputError, QuantumNumberError

__all__ = [
    "MULTIPOLES",
    "allowed",
    "rejection_reason",
    "ls_flags",
    "candidate_pairs",
    "iter_candidate_pairs",
    "count_candidate_pairs",
]

#: Multipoles handled here; ``candidate_pairs`` reports them by their index in this tuple.
MULTIPOLES: tuple[str, ...] = ("E1", "M1", "E2")

# (rank k, parity must change?)
_RULES: dict[str, tuple[int, bool]] = {"E1": (1, True), "M1": (1, False), "E2": (2, False)}

# Largest block of index pairs materialised at once by iter_candidate_pairs.
_DEFAULT_CHUNK = 2_000_000


def _check_multipole(multipole: str) -> tuple[int, bool]:
    if multipole not in _RULES:
        raise QuantumNumberError(f"unknown multipole {multipole!r}; choose one of {', '.join(MULTIPOLES)}")
    return _RULES[multipole]


def _int_array(values: npt.ArrayLike, name: str) -> np.ndarray:
    arr = np.asarray(values)
    if arr.dtype.kind == "f":
        if not np.all(np.isfinite(arr)) or np.any(arr != np.round(arr)):
            raise QuantumNumberError(f"{name} must hold whole numbers")
        arr = arr.astype(np.int64)
    elif arr.dtype.kind not in "iub":
        raise QuantumNumberError(f"{name} must be integers, got dtype {arr.dtype}")
    return arr.astype(np.int64, copy=False)


def _two_j(values: npt.ArrayLike, name: str) -> np.ndarray:
    arr = _int_array(values, name)
    if np.any(arr < 0):
        raise QuantumNumberError(f"{name} (2J) must be >= 0")
    return arr


def _parity(values: npt.ArrayLike, name: str) -> np.ndarray:
    arr = _int_array(values, name)
    if np.any((arr != 1) & (arr != -1)):
        raise QuantumNumberError(f"{name} must be +1 (even) or -1 (odd)")
    return arr


def _optional_qn(values: npt.ArrayLike, name: str) -> np.ndarray:
    arr = _int_array(values, name)
    if np.any(arr < -1):
        raise QuantumNumberError(f"{name} must be >= 0, or -1 for unknown")
    return arr


def _masks(multipole, two_j_a, parity_a, two_j_b, parity_b):
    """Boolean failure masks, broadcast to a common shape, in reporting order."""
    k, parity_changes = _check_multipole(multipole)
    ja = _two_j(two_j_a, "two_j_a")
    jb = _two_j(two_j_b, "two_j_b")
    pa = _parity(parity_a, "parity_a")
    pb = _parity(parity_b, "parity_b")
    ja, jb, pa, pb = np.broadcast_arrays(ja, jb, pa, pb)
    d2j = np.abs(ja - jb)
    half_dj = (d2j % 2) == 1  # one level integer J, the other half-integer
    if parity_changes:
        bad_parity = pa == pb
    else:
        bad_parity = pa != pb
    too_far = ~half_dj & (d2j > 2 * k)
    # triangle: J + J' >= k  <=>  two_j_a + two_j_b >= 2k
    too_small = ~half_dj & ~too_far & (ja + jb < 2 * k)
    return d2j, half_dj, bad_parity, too_far, too_small, parity_changes, k


def allowed(
    multipole: str,
    two_j_a: npt.ArrayLike,
    parity_a: npt.ArrayLike,
    two_j_b: npt.ArrayLike,
    parity_b: npt.ArrayLike,
) -> np.ndarray:
    """Whether a multipole line may connect two levels (parity and J rules).

    Parameters
    ----------
    multipole : {"E1", "M1", "E2"}
        The multipole.
    two_j_a, two_j_b : int or array_like of int
        2J of the two levels (dimensionless, >= 0). Broadcast together.
    parity_a, parity_b : int or array_like of int
        Parity of the two levels, +1 (even) or -1 (odd).

    Returns
    -------
    ndarray of bool
        True where the rules allow the line; symmetric in a and b.

    Raises
    ------
    QuantumNumberError
        Unknown multipole, negative or non-integer 2J, or a parity other than +-1.

    Notes
    -----
    With rank k (1 for E1 and M1, 2 for E2): allowed iff the parity rule holds
    (E1 changes parity, M1 and E2 keep it), J - J' is an integer, and
    |J - J'| <= k <= J + J'.

    References
    ----------
    R. D. Cowan, *The Theory of Atomic Structure and Spectra* (1981), section 14.1.

    Examples
    --------
    >>> bool(allowed("E1", 1, +1, 3, -1))   # 2S1/2 - 2P3/2
    True
    >>> allowed("E2", [0, 1, 4], +1, [4, 1, 0], +1).tolist()
    [True, False, True]
    """
    _, half_dj, bad_parity, too_far, too_small, _, _ = _masks(multipole, two_j_a, parity_a, two_j_b, parity_b)
    return ~(half_dj | bad_parity | too_far | too_small)


def _format_j(two_j: np.ndarray) -> np.ndarray:
    return np.where(two_j % 2 == 0, (two_j // 2).astype(str), np.char.add(two_j.astype(str), "/2"))


def rejection_reason(
    multipole: str,
    two_j_a: npt.ArrayLike,
    parity_a: npt.ArrayLike,
    two_j_b: npt.ArrayLike,
    parity_b: npt.ArrayLike,
) -> np.ndarray:
    """Why a multipole line between two levels is forbidden ('' where it is allowed).

    Parameters
    ----------
    multipole : {"E1", "M1", "E2"}
        The multipole.
    two_j_a, two_j_b : int or array_like of int
        2J of the two levels (>= 0).
    parity_a, parity_b : int or array_like of int
        Parity of the two levels, +1 or -1.

    Returns
    -------
    ndarray of str
        '' where allowed; otherwise every broken rule, joined by ``"; "``:
        ``"parity unchanged"`` (E1), ``"parity changes"`` (M1, E2),
        ``"ΔJ = 1/2"`` (one J integer, the other half-integer), ``"ΔJ = 2"``
        (more than the rank allows), ``"J 0 to 0"`` (E1, M1) or
        ``"J + J' < 2"`` (E2).

    Raises
    ------
    QuantumNumberError
        As :func:`allowed`.

    Examples
    --------
    >>> rejection_reason("E1", [0, 1, 0], [1, 1, 1], [0, 3, 4], [-1, 1, -1]).tolist()
    ['J 0 to 0', 'parity unchanged', 'ΔJ = 2']
    >>> str(rejection_reason("M1", 2, -1, 6, 1))
    'parity changes; ΔJ = 2'
    """
    d2j, half_dj, bad_parity, too_far, too_small, parity_changes, k = _masks(
        multipole, two_j_a, parity_a, two_j_b, parity_b
    )
    shape = d2j.shape
    result = np.full(shape, "", dtype=object)
    parity_text = "parity unchanged" if parity_changes else "parity changes"
    dj_text = np.char.add("ΔJ = ", _format_j(d2j)).astype(object)
    small_text = "J 0 to 0" if k == 1 else "J + J' < 2"
    parts = [
        (bad_parity, parity_text),
        (half_dj | too_far, dj_text),
        (too_small, small_text),
    ]
    for mask, text in parts:
        sep = np.where(result == "", "", "; ")
        result = np.where(mask, result + sep + text, result)
    return result.astype(str)


def ls_flags(
    two_s_a: npt.ArrayLike,
    L_a: npt.ArrayLike,
    two_s_b: npt.ArrayLike,
    L_b: npt.ArrayLike,
    multipole: str,
    *,
    l_a: npt.ArrayLike | None = None,
    l_b: npt.ArrayLike | None = None,
) -> dict[str, np.ndarray]:
    """LS-coupling and one-electron flags of a line (approximate rules, reported, not enforced).

    Parameters
    ----------
    two_s_a, two_s_b : int or array_like of int
        2S of the two levels' LS terms (2S + 1 is the multiplicity), -1 if unknown.
    L_a, L_b : int or array_like of int
        Total orbital angular momentum L of the terms, -1 if unknown.
    multipole : {"E1", "M1", "E2"}
        The multipole.
    l_a, l_b : int or array_like of int, optional
        Orbital quantum number l of the electron that jumps (its orbital in
        each level's configuration), -1 if unknown. Omitted: no l flag.

    Returns
    -------
    dict of str to ndarray of bool
        ``"intercombination"``: both S known and Delta S != 0.
        ``"ls_forbidden"``: both L known and the L rule broken.
        ``"l_forbidden"``: both l known and the one-electron rule broken.
        Unknown values never raise a flag.

    Raises
    ------
    QuantumNumberError
        Unknown multipole or a value below -1.

    Notes
    -----
    L rules: E1 |Delta L| <= 1 and not L = 0 -> 0; M1 Delta L = 0; E2
    |Delta L| <= 2 and L + L' >= 2. One-electron rules: E1 |Delta l| = 1;
    M1 Delta l = 0; E2 Delta l = 0 or |Delta l| = 2.

    References
    ----------
    I. I. Sobelman, *Atomic Spectra and Radiative Transitions* (1992), section 9.2.

    Examples
    --------
    >>> f = ls_flags(0, 0, 2, 1, "E1")          # 1S0 - 3P1 (the Hg 253.7 nm kind)
    >>> bool(f["intercombination"]), bool(f["ls_forbidden"])
    (True, False)
    >>> bool(ls_flags(1, 0, 1, 0, "E1", l_a=0, l_b=0)["l_forbidden"])   # 2S - 2S
    True
    """
    _check_multipole(multipole)
    sa = _optional_qn(two_s_a, "two_s_a")
    sb = _optional_qn(two_s_b, "two_s_b")
    la_tot = _optional_qn(L_a, "L_a")
    lb_tot = _optional_qn(L_b, "L_b")
    arrays = [sa, sb, la_tot, lb_tot]
    have_l = l_a is not None and l_b is not None
    if (l_a is None) != (l_b is None):
        raise QuantumNumberError("give both l_a and l_b, or neither")
    if l_a is not None and l_b is not None:
        arrays += [_optional_qn(l_a, "l_a"), _optional_qn(l_b, "l_b")]
    arrays = list(np.broadcast_arrays(*arrays))
    sa, sb, la_tot, lb_tot = arrays[:4]
    s_known = (sa >= 0) & (sb >= 0)
    intercombination = s_known & (sa != sb)
    l_known = (la_tot >= 0) & (lb_tot >= 0)
    d_l = np.abs(la_tot - lb_tot)
    if multipole == "E1":
        bad_l = (d_l > 1) | ((la_tot == 0) & (lb_tot == 0))
    elif multipole == "M1":
        bad_l = d_l != 0
    else:
        bad_l = (d_l > 2) | (la_tot + lb_tot < 2)
    out = {"intercombination": intercombination, "ls_forbidden": l_known & bad_l}
    if have_l:
        ea, eb = arrays[4], arrays[5]
        e_known = (ea >= 0) & (eb >= 0)
        d_e = np.abs(ea - eb)
        if multipole == "E1":
            bad_e = d_e != 1
        elif multipole == "M1":
            bad_e = d_e != 0
        else:
            bad_e = (d_e != 0) & (d_e != 2)
        out["l_forbidden"] = e_known & bad_e
    else:
        out["l_forbidden"] = np.zeros(intercombination.shape, dtype=bool)
    return out


def _group_rule_ok(multipole: str, tj_a: int, p_a: int, tj_b: int, p_b: int) -> bool:
    return bool(allowed(multipole, tj_a, p_a, tj_b, p_b))


def iter_candidate_pairs(
    two_j: npt.ArrayLike,
    parity: npt.ArrayLike,
    energy: npt.ArrayLike,
    multipoles: Sequence[str] = ("E1",),
    *,
    chunk_size: int = _DEFAULT_CHUNK,
) -> Iterator[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """Yield the allowed level pairs block by block, each block at most ``chunk_size`` pairs.

    Same arguments and meaning as :func:`candidate_pairs`, which concatenates
    the blocks; use this generator to stream very large pair lists (memory is
    bounded by ``chunk_size`` plus the group index arrays). Blocks come in no
    particular order.

    Parameters
    ----------
    two_j, parity, energy, multipoles
        See :func:`candidate_pairs`.
    chunk_size : int
        Largest number of pairs in one block (>= 1).

    Yields
    ------
    lower_idx, upper_idx : ndarray of int64
        Level indices; ``energy[lower_idx] < energy[upper_idx]``.
    multipole_codes : ndarray of int8
        Index into :data:`MULTIPOLES`.

    Raises
    ------
    QuantumNumberError
        Malformed 2J or parity, or an unknown multipole.
    PhysicsInputError
        Arrays of different lengths or a non-positive ``chunk_size``.
    """
    tj = _two_j(two_j, "two_j").ravel()
    par = _parity(parity, "parity").ravel()
    en = np.asarray(energy, dtype=float).ravel()
    if not (tj.size == par.size == en.size):
        raise PhysicsInputError("two_j, parity and energy must have the same length")
    if chunk_size < 1:
        raise PhysicsInputError("chunk_size must be >= 1")
    multipoles = tuple(multipoles)
    for m in multipoles:
        _check_multipole(m)
    if len(set(multipoles)) != len(multipoles):
        raise PhysicsInputError("multipoles must not repeat")

    usable = np.flatnonzero(np.isfinite(en))  # a level without an energy cannot be ordered
    # group levels by (parity, two_j): one sort, then contiguous runs
    key = tj[usable] * 2 + (par[usable] > 0)
    order = np.argsort(key, kind="stable")
    members = usable[order]
    keys_sorted = key[order]
    group_keys, starts, counts = np.unique(keys_sorted, return_index=True, return_counts=True)
    groups = [
        (int(g // 2), 1 if g % 2 else -1, members[s : s + c]) for g, s, c in zip(group_keys, starts, counts)
    ]
    for code, multipole in enumerate(MULTIPOLES):
        if multipole not in multipoles:
            continue
        for ga in range(len(groups)):
            tj_a, p_a, idx_a = groups[ga]
            for gb in range(ga, len(groups)):
                tj_b, p_b, idx_b = groups[gb]
                if not _group_rule_ok(multipole, tj_a, p_a, tj_b, p_b):
                    continue
                yield from _cross_pairs(idx_a, idx_b, ga == gb, en, code, chunk_size)


def count_candidate_pairs(
    two_j: npt.ArrayLike,
    parity: npt.ArrayLike,
    multipoles: Sequence[str] = ("E1",),
) -> int:
    """How many level pairs the parity and J rules allow (an upper bound of the lines), without building them.

    Counts every pair between two allowed (parity, 2J) groups, n_a n_b for two
    groups and n (n - 1) / 2 inside one; pairs of equal energy, which
    :func:`iter_candidate_pairs` skips, are counted too, so this is an upper bound
    (exact when no two levels share an energy). Cost: one sort of the levels.

    Parameters
    ----------
    two_j, parity : array_like of int, shape (N,)
        2J (>= 0) and parity (+1/-1) of each level.
    multipoles : sequence of {"E1", "M1", "E2"}
        Multipoles counted (a pair allowed for two of them counts twice).

    Returns
    -------
    int
        Number of allowed pairs.

    Examples
    --------
    >>> count_candidate_pairs([1, 1, 3, 5], [1, -1, -1, 1])   # see candidate_pairs
    3
    """
    tj = _two_j(two_j, "two_j").ravel()
    par = _parity(parity, "parity").ravel()
    if tj.size != par.size:
        raise PhysicsInputError("two_j and parity must have the same length")
    keys, counts = np.unique(tj.astype(np.int64) * 2 + (par > 0), return_counts=True)
    total = 0
    for m in tuple(multipoles):
        _check_multipole(m)
        for a in range(keys.size):
            for b in range(a, keys.size):
                if _group_rule_ok(m, int(keys[a] // 2), 1 if keys[a] % 2 else -1,
                                  int(keys[b] // 2), 1 if keys[b] % 2 else -1):
                    na, nb = int(counts[a]), int(counts[b])
                    total += na * (na - 1) // 2 if a == b else na * nb
    return total


def _cross_pairs(idx_a, idx_b, same_group, energy, code, chunk_size):
    """All pairs between two index sets (i < j inside one set), in row blocks."""
    nb = idx_b.size
    rows_per_block = max(1, chunk_size // max(nb, 1))
    for r0 in range(0, idx_a.size, rows_per_block):
        a = idx_a[r0 : r0 + rows_per_block]
        if same_group:
            # pairs (a_i, b_j) with j > i, i the position of a_i inside the group
            pos = np.arange(r0, r0 + a.size)
            counts = nb - pos - 1
            total = int(counts.sum())
            if total == 0:
                continue
            ia = np.repeat(a, counts)
            offsets = np.repeat(np.cumsum(counts) - counts, counts)
            jb = np.arange(total) - offsets + np.repeat(pos + 1, counts)
            ib = idx_b[jb]
        else:
            ia = np.repeat(a, nb)
            ib = np.tile(idx_b, a.size)
        ea = energy[ia]
        eb = energy[ib]
        keep = ea != eb
        ia, ib, ea, eb = ia[keep], ib[keep], ea[keep], eb[keep]
        a_lower = ea < eb
        lower = np.where(a_lower, ia, ib)
        upper = np.where(a_lower, ib, ia)
        yield lower, upper, np.full(lower.size, code, dtype=np.int8)


def candidate_pairs(
    two_j: npt.ArrayLike,
    parity: npt.ArrayLike,
    energy: npt.ArrayLike,
    multipoles: Sequence[str] = ("E1",),
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """All level pairs that the parity and J rules allow, without an N x N loop.

    Parameters
    ----------
    two_j : array_like of int, shape (N,)
        2J of each level.
    parity : array_like of int, shape (N,)
        Parity of each level, +1 or -1.
    energy : array_like of float, shape (N,)
        Level energies (any one unit, e.g. cm-1). Levels with NaN energy are
        skipped; pairs of equal energy are skipped.
    multipoles : sequence of {"E1", "M1", "E2"}
        Which multipoles to search for.

    Returns
    -------
    lower_idx : ndarray of int32 (int64 if N >= 2**31)
        Index of the lower-energy level of each pair.
    upper_idx : ndarray of int32 (int64 if N >= 2**31)
        Index of the upper-energy level.
    multipole_codes : ndarray of int8
        Index into :data:`MULTIPOLES` (0 = E1, 1 = M1, 2 = E2). A pair allowed
        for several requested multipoles (M1 and E2 share the parity rule)
        appears once per multipole.

    Raises
    ------
    QuantumNumberError
        Malformed 2J or parity, or an unknown multipole.
    PhysicsInputError
        Arrays of different lengths or a repeated multipole.

    Notes
    -----
    Levels are sorted once into groups of equal (parity, 2J); whether a group
    pair is allowed depends only on the two groups, so the rules are applied to
    the few (at most some hundred) group pairs and the index pairs are built by
    vectorised cross products, a bounded block at a time (see
    :func:`iter_candidate_pairs`). Rows are sorted by (lower, upper, code)
    through one int64 key per pair; peak memory is about 25 bytes per returned
    pair plus one block (use the generator to stream instead).

    Examples
    --------
    >>> # 2S1/2 (even), 2P1/2 and 2P3/2 (odd), 2D5/2 (even)
    >>> lo, up, code = candidate_pairs([1, 1, 3, 5], [1, -1, -1, 1], [0.0, 100.0, 110.0, 200.0])
    >>> [(int(a), int(b)) for a, b in zip(lo, up)]
    [(0, 1), (0, 2), (2, 3)]
    >>> lo, up, code = candidate_pairs([1, 1, 3, 5], [1, -1, -1, 1], [0.0, 100.0, 110.0, 200.0], ("M1", "E2"))
    >>> [(int(a), int(b), MULTIPOLES[c]) for a, b, c in zip(lo, up, code)]
    [(0, 3, 'E2'), (1, 2, 'M1'), (1, 2, 'E2')]
    """
    n = int(np.size(energy))
    index_dtype = np.int32 if n < 2**31 else np.int64
    # one int64 sort key per pair, (lower, upper, code) in mixed radix: sorting
    # the keys in place is cheaper than a lexsort and needs 8 bytes per pair
    radix = len(MULTIPOLES)
    keys = [
        (lo.astype(np.int64) * n + up) * radix + code
        for lo, up, code in iter_candidate_pairs(two_j, parity, energy, multipoles)
    ]
    if not keys:
        empty = np.empty(0, dtype=index_dtype)
        return empty, empty.copy(), np.empty(0, dtype=np.int8)
    key = np.concatenate(keys)
    del keys
    key.sort()
    codes = (key % radix).astype(np.int8)
    key //= radix
    upper = (key % n).astype(index_dtype)
    key //= n
    lower = key.astype(index_dtype)
    return lower, upper, codes
