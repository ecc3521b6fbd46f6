"""Hydrogenic radial dipole integrals <n l | r | n' l+-1> by a stable recurrence in l.

For a one-electron atom of nuclear charge ``z`` and reduced mass ``m_r`` the
bound radial functions scale with the length ``a_mu = a0 (m_e / m_r) / z``, so
every radial integral is the integral of the hydrogen atom with infinite nuclear
mass divided by ``z * mass_ratio`` (``mass_ratio = m_r / m_e``). This module
computes the infinite-mass, ``z = 1`` integrals in Bohr radii and applies that
factor.

Method
------
For an upper principal quantum number ``n`` and a lower one ``n' < n`` write

* ``P_l = <n l | r | n' l-1>``  (``l = 1 .. n'``; the upper state has the larger l),
* ``Q_l = <n l-1 | r | n' l>``  (``l = 1 .. n'-1``; the lower state has the larger l).

The recurrence runs *down* in ``l`` from ``l = n'``, where ``Q_{n'} = 0`` (there is
no ``n' l = n'`` state) and ``P_{n'}`` has the closed form of Gordon (1929)
(Bethe & Salpeter 1957, eq. 63.2, with both hypergeometric functions equal to 1):

.. math::

    P_{n'} = \\frac14 \\sqrt{\\frac{(n+n')!}{(n-n'-1)!\\,(2n'-1)!}}
             \\frac{(4nn')^{n'+2}\\,(n-n')^{n-n'-2}}{(n+n')^{n+n'+2}} .

With :math:`a_l = \\sqrt{n^2-l^2}/n` and :math:`b_l = \\sqrt{n'^2-l^2}/n'`,

.. math::

    P_l = \\frac{(2l+1)\\,a_{l+1} P_{l+1} + b_{l+1} Q_{l+1}}{2(l+1)\\,b_l}, \\qquad
    Q_l = \\frac{a_{l+1} P_{l+1} + (2l+1)\\,b_{l+1} Q_{l+1}}{2(l+1)\\,a_l}.

This is a two-term recurrence downward in ``l`` of the kind used by Storey &
Hummer (1991). We derived its coefficients ourselves from the factorisation
ladder operators of the radial Coulomb Hamiltonian (Infeld & Hull 1951): with
:math:`B_l = d/dr - l/r + 1/l` one has
:math:`B_l\\,u_{n,l-1} \\propto \\sqrt{1/l^2 - 1/n^2}\\,u_{n,l}`, the commutator
:math:`H_l r - r H_{l-1} = -d/dr + l/r` turns the dipole integrals into overlaps
:math:`\\langle n l | n' l-1\\rangle / (l\\,\\Delta E)`, and eliminating
:math:`\\langle n l|d/dr|n' l\\rangle` and :math:`\\langle n l|r^{-1}|n' l\\rangle`
between four ladder identities gives the two lines above. All coefficients and
all ``P_l, Q_l`` are positive, so no step can cancel: rounding errors only add
up, a few ulp per step. The tests check the result against Gordon's closed
form evaluated in exact rational arithmetic up to ``n = 1000`` and against
exact and numerical integration of :func:`sympy.physics.hydrogen.R_nl`.

The start value is evaluated in logarithms and the recurrence carries a running
logarithmic scale, so nothing overflows for ``n`` up to (at least) several
thousand; integrals smaller than the float64 range (below about 1e-308 a0, far
below any physical relevance) underflow to 0. Relative accuracy is about 1e-15
for ``n <= 30`` and a few 1e-13 at ``n = 1000`` (limited by the log-gamma of the
start value).

Implementation: the recurrence is a scalar loop per element or per shell pair,
compiled with numba (``numba.njit``, cached on disk after the first run). Where
numba is not importable, or ``LEVELS_NO_JIT=1`` is set, the same loops run as
plain Python for single elements and a numpy kernel vectorised over shell pairs
(one array step per value of l) serves the array functions; the tests check the
two against each other and against the closed forms.

Sign convention: that of :func:`sympy.physics.hydrogen.R_nl` (radial functions
positive near the origin); with it every integral with ``n != n'`` computed
here is positive. For ``n = n'`` the closed form is
:math:`\\langle n\\,l|r|n\\,l-1\\rangle = -\\tfrac32 n\\sqrt{n^2-l^2}`
(Bethe & Salpeter 1957, eq. 63.5; the sign is the one of ``R_nl``).

References
----------
P. J. Storey and D. G. Hummer, "Fast computer evaluation of radiative properties
of hydrogenic systems", Comput. Phys. Commun. 66, 129-141 (1991).

W. Gordon, "Zur Berechnung der Matrizen beim Wasserstoffatom",
Ann. Phys. (Leipzig) 394, 1031-1056 (1929).

H. A. Bethe and E. E. Salpeter, *Quantum Mechanics of One- and Two-Electron
Atoms* (Springer, Berlin, 1957), section 63.

L. Infeld and T. E. Hull, "The factorization method", Rev. Mod. Phys. 23, 21-68 (1951).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import gammaln

from levels.errors import PhysicsInputError, QuantumNumberError, TooLargeError
from levels.physics import jit as _jit

__all__ = [
    "radial_dipole",
    "radial_dipole_all_l",
    "radial_dipole_array",
    "radial_dipole_table",
    "table_size",
]

#: Largest number of rows :func:`radial_dipole_table` builds unless told otherwise.
DEFAULT_MAX_ROWS = 60_000_000

# Rescale the running vectors at least this often (the per-step growth factor is
# below sqrt(n'/2) + 1, so 16 steps cannot overflow for n' < 10**8).
_RESCALE_EVERY = 16
# Work-array size (elements) of one chunk of the vectorised recurrence.
_CHUNK_ELEMENTS = 1 << 17
# Below this many elements radial_dipole_array runs each element on its own
# (cost: steps from l = n_lower down to its l); above it, the distinct shell
# pairs once each (cost: n_lower steps per pair, plus a sort).
_PER_ELEMENT_LIMIT = 4096


_JIT = _jit.JIT
#: True when the loop kernels are compiled (numba); False: numpy fallback.
COMPILED = _jit.COMPILED
_maybe_jit = _jit.maybe_jit


# ----------------------------------------------------------------------------
# validation helpers
# ----------------------------------------------------------------------------


def _check_scale(z: Any, mass_ratio: Any) -> float:
    """Return the length-scale divisor ``z * mass_ratio``; raise on bad input."""
    try:
        zf = float(z)
        mf = float(mass_ratio)
    except (TypeError, ValueError) as exc:
        raise PhysicsInputError(f"z and mass_ratio must be numbers, got {z!r}, {mass_ratio!r}") from exc
    if not (math.isfinite(zf) and zf >= 1 and zf == int(zf)):
        raise PhysicsInputError(f"nuclear charge z must be an integer >= 1, got {z!r}")
    if not (math.isfinite(mf) and mf > 0):
        raise PhysicsInputError(f"mass_ratio = m_r/m_e must be a finite number > 0, got {mass_ratio!r}")
    return zf * mf


def _as_int(value: Any, name: str) -> int:
    if isinstance(value, (bool, np.bool_)):
        raise QuantumNumberError(f"{name} must be an integer, got {value!r}")
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)) and float(value).is_integer():
        return int(value)
    raise QuantumNumberError(f"{name} must be an integer, got {value!r}")


def _check_nl(n: int, l: int, name: str = "") -> None:
    if n < 1:
        raise QuantumNumberError(f"principal quantum number n{name} must be >= 1, got {n}")
    if not 0 <= l < n:
        raise QuantumNumberError(f"orbital quantum number l{name} must satisfy 0 <= l < n = {n}, got {l}")


def _as_int_array(value: ArrayLike, name: str) -> NDArray[np.int64]:
    arr = np.asarray(value)
    if arr.dtype.kind in "iu":
        return arr.astype(np.int64, copy=False)
    if arr.dtype.kind == "f":
        if not np.all(np.isfinite(arr)) or not np.all(arr == np.round(arr)):
            raise QuantumNumberError(f"{name} must hold integers")
        return arr.astype(np.int64)
    raise QuantumNumberError(f"{name} must hold integers, got dtype {arr.dtype}")


def _nl_problem(n: NDArray[np.int64], l: NDArray[np.int64], index: int, name: str = "") -> QuantumNumberError:
    """The error for element ``index`` of flat arrays ``n``, ``l`` (which breaks ``n >= 1`` or ``0 <= l < n``)."""
    n_i, l_i = int(n[index]), int(l[index])
    if n_i < 1:
        return QuantumNumberError(f"principal quantum number n{name} must be >= 1; element {index} has n{name}={n_i}")
    return QuantumNumberError(
        f"orbital quantum number l{name} must satisfy 0 <= l{name} < n{name}; element {index} has "
        f"n{name}={n_i}, l{name}={l_i}"
    )


def _check_nl_arrays(n: NDArray[np.int64], l: NDArray[np.int64], name: str = "") -> None:
    n, l = np.broadcast_arrays(n, l)
    bad = np.flatnonzero((n < 1) | (l < 0) | (l >= n))
    if bad.size:
        raise _nl_problem(n.ravel(), l.ravel(), int(bad[0]), name)


# ----------------------------------------------------------------------------
# kernels (infinite nuclear mass, z = 1, Bohr radii)
# ----------------------------------------------------------------------------


def _log_start_array(n: NDArray[np.float64], m: NDArray[np.float64]) -> NDArray[np.float64]:
    """Vectorised :func:`_log_start`."""
    x = (n - m) / (n + m)
    return (
        math.log(0.25)
        + 0.5 * (gammaln(n + m + 1) - gammaln(n - m) - gammaln(2 * m))
        + (m + 2) * np.log1p(-x * x)
        + (n - m - 2) * np.log(x)
    )


#: ``_LOG_FACTORIAL[k] = math.lgamma(k + 1) = log k!`` for the start values of
#: the compiled kernels (the same numbers math.lgamma gives, looked up).
_LOG_FACTORIAL = np.array([math.lgamma(k + 1.0) for k in range(1 << 13)])


@_maybe_jit
def _log_factorial(k: int) -> float:
    """log k! for an integer k >= 0 (table, then math.lgamma)."""
    if k < _LOG_FACTORIAL.size:
        return _LOG_FACTORIAL[k]
    return math.lgamma(k + 1.0)


@_maybe_jit
def _log_start(n: int, m: int) -> float:
    """log P_{m} = log <n, m | r | m, m-1> for n > m >= 1 (Gordon 1929)."""
    x = (n - m) / (n + m)
    return (
        math.log(0.25)
        + 0.5 * (_log_factorial(n + m) - _log_factorial(n - m - 1) - _log_factorial(2 * m - 1))
        + (m + 2) * math.log1p(-x * x)
        + (n - m - 2) * math.log(x)
    )


@_maybe_jit
def _step(l: int, n: int, m: int, p: float, q: float, a1: float, b1: float) -> tuple[float, float, float, float]:
    """One downward step ``l + 1 -> l`` of the recurrence; returns ``(P_l, Q_l, a_l, b_l)`` (unscaled)."""
    ll = float(l) * l
    a0 = math.sqrt(float(n) * n - ll) / n
    b0 = math.sqrt(float(m) * m - ll) / m
    t = 2.0 * l + 1.0
    d = 2.0 * (l + 1)
    return (t * a1 * p + b1 * q) / (d * b0), (a1 * p + t * b1 * q) / (d * a0), a0, b0


@_maybe_jit
def _one_element(n: int, m: int, l_big: int, want_p: bool) -> float:
    """One integral of the pair ``n > m``: ``P_{l_big}`` or ``Q_{l_big}`` (infinite mass, z = 1).

    Runs the recurrence of the module docstring from ``l = m`` down to
    ``l = l_big`` (``1 <= l_big <= m``; for Q, ``l_big <= m - 1``), rescaling
    every ``_RESCALE_EVERY`` steps into a running logarithm.
    """
    log_scale = _log_start(n, m)
    p = 1.0
    q = 0.0
    a1 = math.sqrt(float(n) * n - float(m) * m) / n  # a_{l+1}
    b1 = 0.0  # b_{l+1} = b_m = 0
    steps = 0
    for l in range(m - 1, l_big - 1, -1):
        p, q, a1, b1 = _step(l, n, m, p, q, a1, b1)
        steps += 1
        if steps % _RESCALE_EVERY == 0:
            s = max(p, q)  # both are positive
            p /= s
            q /= s
            log_scale += math.log(s)
    return (p if want_p else q) * math.exp(log_scale)


@_maybe_jit
def _loop_elements(
    n_hi: NDArray[np.int64], n_lo: NDArray[np.int64], l_big: NDArray[np.int64], want_p: NDArray[np.bool_],
    out: NDArray[np.float64],
) -> None:
    """:func:`_one_element` for each element; writes ``out``."""
    for i in range(n_hi.size):
        out[i] = _one_element(n_hi[i], n_lo[i], l_big[i], want_p[i])


@_maybe_jit
def _same_n(n: NDArray[np.float64] | float, l_big: NDArray[np.float64] | float) -> Any:
    """<n l | r | n l-1> = -(3/2) n sqrt(n^2 - l^2) (Bethe & Salpeter 1957, eq. 63.5)."""
    return -1.5 * n * np.sqrt(n * n - l_big * l_big)


@_maybe_jit
def _loop_any_order(
    n_a: NDArray[np.int64], l_a: NDArray[np.int64], n_b: NDArray[np.int64], l_b: NDArray[np.int64],
    out: NDArray[np.float64],
) -> int:
    """Check and compute elements given in any order of the two states (infinite mass, z = 1).

    Writes ``out`` (NaN where ``|l_a - l_b| != 1``) and returns -1, or, before
    writing anything, returns the index of the first element with ``n < 1`` or
    ``l`` outside ``0 .. n-1`` in either state.
    """
    for i in range(n_a.size):
        if n_a[i] < 1 or l_a[i] < 0 or l_a[i] >= n_a[i] or n_b[i] < 1 or l_b[i] < 0 or l_b[i] >= n_b[i]:
            return i
    for i in range(n_a.size):
        na, la, nb, lb = n_a[i], l_a[i], n_b[i], l_b[i]
        if abs(la - lb) != 1:
            out[i] = np.nan
        elif na == nb:
            out[i] = _same_n(float(na), float(max(la, lb)))
        elif na > nb:
            out[i] = _one_element(na, nb, max(la, lb), la == lb + 1)
        else:
            out[i] = _one_element(nb, na, max(la, lb), lb == la + 1)
    return -1


@_maybe_jit
def _loop_pairs(
    n_hi: NDArray[np.int64], n_lo: NDArray[np.int64], offset_p: NDArray[np.int64], offset_q: NDArray[np.int64],
    P: NDArray[np.float64], Q: NDArray[np.float64],
) -> None:
    """Every ``P_l`` (l = 1..m) and ``Q_l`` (l = 1..m-1) of each pair ``n > m``; layout of :func:`_pairs_kernel`."""
    for k in range(n_hi.size):
        n = n_hi[k]
        m = n_lo[k]
        op = offset_p[k]
        oq = offset_q[k]
        log_scale = _log_start(n, m)
        scale = math.exp(log_scale)
        P[op + m - 1] = scale
        p = 1.0
        q = 0.0
        a1 = math.sqrt(float(n) * n - float(m) * m) / n
        b1 = 0.0
        steps = 0
        for l in range(m - 1, 0, -1):
            p, q, a1, b1 = _step(l, n, m, p, q, a1, b1)
            steps += 1
            if steps % _RESCALE_EVERY == 0:
                s = max(p, q)
                p /= s
                q /= s
                log_scale += math.log(s)
                scale = math.exp(log_scale)
            P[op + l - 1] = p * scale
            Q[oq + l - 1] = q * scale


def _pairs_kernel(
    n_hi: NDArray[np.int64], n_lo: NDArray[np.int64]
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.int64], NDArray[np.int64]]:
    """Run the recurrence for many pairs: compiled loop, or numpy vectorised over pairs.

    Parameters
    ----------
    n_hi, n_lo : ndarray of int
        Pairs with ``n_hi > n_lo >= 1``.

    Returns
    -------
    P, Q : ndarray of float
        Flat arrays: ``P[offset_p[k] + l - 1] = <n_hi l | r | n_lo l-1>`` for
        ``l = 1 .. n_lo[k]`` and ``Q[offset_q[k] + l - 1] = <n_hi l-1 | r | n_lo l>``
        for ``l = 1 .. n_lo[k] - 1``, in Bohr radii (infinite mass, z = 1).
    offset_p, offset_q : ndarray of int
        Start of each pair's block.
    """
    n_hi = np.asarray(n_hi, dtype=np.int64)
    n_lo = np.asarray(n_lo, dtype=np.int64)
    count_p = n_lo
    count_q = n_lo - 1
    offset_p = np.zeros(n_lo.size, dtype=np.int64)
    offset_q = np.zeros(n_lo.size, dtype=np.int64)
    if n_lo.size:
        np.cumsum(count_p[:-1], out=offset_p[1:])
        np.cumsum(count_q[:-1], out=offset_q[1:])
    P = np.empty(int(count_p.sum()), dtype=np.float64)
    Q = np.empty(int(count_q.sum()), dtype=np.float64)
    if n_lo.size == 0:
        return P, Q, offset_p, offset_q
    if COMPILED:
        _loop_pairs(n_hi, n_lo, offset_p, offset_q, P, Q)
        return P, Q, offset_p, offset_q
    # numpy fallback: pairs in order of decreasing n_lo: in each chunk the pairs still running at
    # step k (l = n_lo - k >= 1) are a prefix of the columns
    order = np.argsort(-n_lo, kind="stable")
    hs, ls, op, oq = n_hi[order], n_lo[order], offset_p[order], offset_q[order]
    start = 0
    while start < ls.size:
        width = max(1, _CHUNK_ELEMENTS // int(ls[start]))
        stop = min(ls.size, start + width)
        _chunk_kernel(hs[start:stop], ls[start:stop], op[start:stop], oq[start:stop], P, Q)
        start = stop
    return P, Q, offset_p, offset_q


def _chunk_kernel(
    n_hi: NDArray[np.int64],
    n_lo: NDArray[np.int64],
    op: NDArray[np.int64],
    oq: NDArray[np.int64],
    P: NDArray[np.float64],
    Q: NDArray[np.float64],
) -> None:
    """Recurrence for pairs sorted by decreasing ``n_lo``; writes into ``P`` and ``Q``.

    Row ``k`` of the 2-D work arrays holds ``l = n_lo - k`` of every column (pair);
    the coefficients of all steps are computed at once, so each step of the loop
    is a handful of array operations on the columns still running.
    """
    K = int(n_lo[0])
    nh = n_hi.astype(np.float64)
    nl = n_lo.astype(np.float64)
    k_col = np.arange(K, dtype=np.float64)[:, None]
    lv = nl[None, :] - k_col  # l of row k
    lv2 = lv * lv
    with np.errstate(divide="ignore", invalid="ignore"):
        a = np.sqrt(np.maximum(nh * nh - lv2, 0.0)) / nh  # a_l = sqrt(n^2 - l^2)/n
        b = np.sqrt(np.maximum(nl * nl - lv2, 0.0)) / nl  # b_l = sqrt(n'^2 - l^2)/n'
        t = 2.0 * lv[1:] + 1.0
        d = 2.0 * lv[1:] + 2.0
        # step k (row k from row k-1): p' = c1 p + c2 q, q' = c3 p + c4 q
        c1 = t * a[:-1] / (d * b[1:])
        c2 = b[:-1] / (d * b[1:])
        c3 = a[:-1] / (d * a[1:])
        c4 = t * b[:-1] / (d * a[1:])
    # rows past the end of a column (l < 1) carry its last values unchanged
    dead = lv[1:] < 1.0
    c1[dead] = 1.0
    c2[dead] = 0.0
    c3[dead] = 0.0
    c4[dead] = 1.0
    Pm = np.empty((K, nl.size))
    Qm = np.empty((K, nl.size))
    p = np.ones(nl.size)
    q = np.zeros(nl.size)
    Pm[0] = p
    Qm[0] = q
    snapshots = [_log_start_array(nh, nl)]
    for k in range(1, K):
        j = k - 1
        p, q = c1[j] * p + c2[j] * q, c3[j] * p + c4[j] * q
        if k % _RESCALE_EVERY == 0:
            s = np.maximum(p, q)  # both are positive
            p = p / s
            q = q / s
            snapshots.append(snapshots[-1] + np.log(s))
        Pm[k] = p
        Qm[k] = q
    rows = np.arange(K)
    scale = np.exp(np.stack(snapshots)[rows // _RESCALE_EVERY])
    valid = rows[:, None] < n_lo[None, :]
    idx_p = (op + n_lo)[None, :] - rows[:, None] - 1
    P[idx_p[valid]] = (Pm * scale)[valid]
    valid[0] = False  # Q_{n_lo} = 0 is not part of the output
    idx_q = (oq + n_lo)[None, :] - rows[:, None] - 1
    Q[idx_q[valid]] = (Qm * scale)[valid]


# ----------------------------------------------------------------------------
# public functions
# ----------------------------------------------------------------------------


def radial_dipole(n: int, l: int, n2: int, l2: int, z: int = 1, mass_ratio: float = 1.0) -> float:
    """Radial dipole integral :math:`\\int_0^\\infty R_{nl}\\,r\\,R_{n_2 l_2}\\,r^2\\,dr`.

    Parameters
    ----------
    n, l : int
        Principal and orbital quantum numbers of one state (``n >= 1``, ``0 <= l < n``).
    n2, l2 : int
        Those of the other state. The integral is symmetric in the two states.
    z : int, optional
        Nuclear charge (default 1).
    mass_ratio : float, optional
        Reduced mass over electron mass, ``m_r / m_e`` (default 1: infinite nuclear mass).

    Returns
    -------
    float
        The integral in Bohr radii ``a0`` (CODATA Bohr radius of the infinite-mass
        atom): the ``z = 1`` infinite-mass value divided by ``z * mass_ratio``.
        NaN when ``|l - l2| != 1`` (not an electric-dipole pair).

    Raises
    ------
    QuantumNumberError
        Non-integer quantum numbers, ``n < 1`` or ``l`` outside ``0 .. n-1``.
    PhysicsInputError
        ``z`` not an integer >= 1 or ``mass_ratio`` not > 0.

    Notes
    -----
    For ``n != n2`` the downward recurrence of the module docstring runs from
    ``l = min(n, n2)`` to the ``l`` asked for; for ``n == n2`` the closed form
    :math:`-\\tfrac32 n\\sqrt{n^2 - l_>^2}` is used, ``l_> = max(l, l2)``.

    References
    ----------
    P. J. Storey and D. G. Hummer, Comput. Phys. Commun. 66, 129 (1991);
    W. Gordon, Ann. Phys. (Leipzig) 394, 1031 (1929).

    Examples
    --------
    >>> round(radial_dipole(2, 1, 1, 0), 10)   # 128 sqrt(6) / 243
    1.290266202
    >>> round(radial_dipole(3, 2, 2, 1, z=2), 10)
    2.3739958058
    >>> import math; math.isnan(radial_dipole(3, 2, 2, 0))
    True
    """
    n, l, n2, l2 = (_as_int(v, k) for v, k in ((n, "n"), (l, "l"), (n2, "n2"), (l2, "l2")))
    _check_nl(n, l)
    _check_nl(n2, l2, "2")
    divisor = _check_scale(z, mass_ratio)
    if abs(l - l2) != 1:
        return math.nan
    if n == n2:
        return float(_same_n(float(n), float(max(l, l2)))) / divisor
    if n < n2:
        n, l, n2, l2 = n2, l2, n, l
    # now n > n2: the upper state is (n, l)
    # l == l2 + 1: P_l; l == l2 - 1: Q_{l2} = <n l2-1 | r | n2 l2>
    return float(_one_element(n, n2, max(l, l2), l == l2 + 1)) / divisor


def radial_dipole_all_l(
    n_upper: int, n_lower: int, z: int = 1, mass_ratio: float = 1.0
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """All radial dipole integrals between the shells ``n_upper`` and ``n_lower``.

    Parameters
    ----------
    n_upper : int
        Principal quantum number of the upper shell.
    n_lower : int
        Principal quantum number of the lower shell, ``1 <= n_lower < n_upper``.
    z : int, optional
        Nuclear charge.
    mass_ratio : float, optional
        ``m_r / m_e``.

    Returns
    -------
    r_down : ndarray of float, shape (n_lower,)
        ``r_down[i] = <n_upper, l = i+1 | r | n_lower, l = i>`` for ``i = 0 .. n_lower-1``
        (upper l one larger than lower l), in Bohr radii.
    r_up : ndarray of float, shape (n_lower - 1,)
        ``r_up[i] = <n_upper, l = i | r | n_lower, l = i+1>`` for ``i = 0 .. n_lower-2``
        (upper l one smaller than lower l), in Bohr radii.

    Both arrays are indexed by the smaller of the two l values.

    Raises
    ------
    QuantumNumberError
        ``n_lower < 1`` or ``n_upper <= n_lower``.
    PhysicsInputError
        Bad ``z`` or ``mass_ratio``.

    Notes
    -----
    One downward pass of the recurrence (module docstring) from ``l = n_lower``;
    cost proportional to ``n_lower``.

    References
    ----------
    P. J. Storey and D. G. Hummer, Comput. Phys. Commun. 66, 129 (1991).

    Examples
    --------
    >>> down, up = radial_dipole_all_l(3, 2)
    >>> [round(float(x), 8) for x in down]   # 3p-2s, 3d-2p
    [3.06481541, 4.74799161]
    >>> [round(float(x), 8) for x in up]     # 3s-2p
    [0.93840424]
    """
    n_upper = _as_int(n_upper, "n_upper")
    n_lower = _as_int(n_lower, "n_lower")
    if n_lower < 1:
        raise QuantumNumberError(f"n_lower must be >= 1, got {n_lower}")
    if n_upper <= n_lower:
        raise QuantumNumberError(f"n_upper must be > n_lower, got n_upper={n_upper}, n_lower={n_lower}")
    divisor = _check_scale(z, mass_ratio)
    P = np.empty(n_lower)
    Q = np.empty(n_lower - 1)
    zero = np.zeros(1, dtype=np.int64)
    _loop_pairs(np.array([n_upper], dtype=np.int64), np.array([n_lower], dtype=np.int64), zero, zero, P, Q)
    return P / divisor, Q / divisor


def radial_dipole_array(
    n: ArrayLike, l: ArrayLike, n2: ArrayLike, l2: ArrayLike, z: int = 1, mass_ratio: float = 1.0
) -> NDArray[np.float64]:
    """Vectorised :func:`radial_dipole` over broadcastable arrays of quantum numbers.

    Parameters
    ----------
    n, l, n2, l2 : array_like of int
        Quantum numbers of the two states of each element (any order of the states).
    z : int, optional
        Nuclear charge.
    mass_ratio : float, optional
        ``m_r / m_e``.

    Returns
    -------
    ndarray of float
        Integrals in Bohr radii, broadcast shape of the inputs; NaN where
        ``|l - l2| != 1``.

    Raises
    ------
    QuantumNumberError
        Non-integer values, ``n < 1`` or ``l`` outside ``0 .. n-1`` anywhere.
    PhysicsInputError
        Bad ``z`` or ``mass_ratio``.

    Notes
    -----
    Up to a few thousand elements, each runs the compiled recurrence from
    ``l = n_lower`` down to its own l. Larger inputs run each distinct
    ``(n_upper, n_lower)`` pair once over all l (compiled loop, or the numpy
    fallback vectorised over pairs when numba is not available).

    Examples
    --------
    >>> radial_dipole_array([2, 3], [1, 0], [1, 2], [0, 1]).round(6)
    array([1.290266, 0.938404])
    """
    arrays: list[np.ndarray] = [_as_int_array(n, "n"), _as_int_array(l, "l"), _as_int_array(n2, "n2"),
                                _as_int_array(l2, "l2")]
    shape = arrays[0].shape
    if any(a.shape != shape for a in arrays[1:]):
        arrays = list(np.broadcast_arrays(*arrays))
        shape = arrays[0].shape
    n_a, l_a, n_b, l_b = (a.ravel() for a in arrays)
    divisor = _check_scale(z, mass_ratio)
    if COMPILED and n_a.size <= _PER_ELEMENT_LIMIT:
        out = np.empty(n_a.size)
        bad = _loop_any_order(n_a, l_a, n_b, l_b, out)
        if bad >= 0:
            first_state_bad = n_a[bad] < 1 or not 0 <= l_a[bad] < n_a[bad]
            raise _nl_problem(n_a, l_a, bad) if first_state_bad else _nl_problem(n_b, l_b, bad, "2")
        if divisor != 1.0:
            out /= divisor
        return out.reshape(shape)
    _check_nl_arrays(n_a, l_a)
    _check_nl_arrays(n_b, l_b, "2")
    out = np.full(n_a.size, np.nan)
    e1 = np.abs(l_a - l_b) == 1
    same = e1 & (n_a == n_b)
    if np.any(same):
        out[same] = _same_n(n_a[same].astype(float), np.maximum(l_a[same], l_b[same]).astype(float))
    diff = np.flatnonzero(e1 & (n_a != n_b))
    if diff.size:
        swap = n_a[diff] < n_b[diff]
        nh = np.where(swap, n_b[diff], n_a[diff])
        lh = np.where(swap, l_b[diff], l_a[diff])
        nlo = np.where(swap, n_a[diff], n_b[diff])
        llo = np.where(swap, l_a[diff], l_b[diff])
        key = nh * (int(nlo.max()) + 1) + nlo
        ukey, inverse = np.unique(key, return_inverse=True)
        u_hi = ukey // (int(nlo.max()) + 1)
        u_lo = ukey % (int(nlo.max()) + 1)
        P, Q, op, oq = _pairs_kernel(u_hi, u_lo)
        down = lh == llo + 1
        vals = np.empty(diff.size)
        vals[down] = P[op[inverse[down]] + lh[down] - 1]
        up = ~down
        vals[up] = Q[oq[inverse[up]] + llo[up] - 1]
        out[diff] = vals
    return (out / divisor).reshape(shape)


def table_size(n_max: int) -> int:
    """Number of rows of :func:`radial_dipole_table` for ``n_max``.

    Parameters
    ----------
    n_max : int
        Highest principal quantum number.

    Returns
    -------
    int
        :math:`\\sum_{n=2}^{n_{max}} (n-1)^2 = (n_{max}-1) n_{max} (2 n_{max}-1) / 6`
        (each shell pair ``n > n'`` has ``n'`` pairs with ``l_u = l_l + 1`` and
        ``n' - 1`` with ``l_u = l_l - 1``).

    Examples
    --------
    >>> table_size(200)
    2646700
    """
    n_max = _as_int(n_max, "n_max")
    k = max(n_max - 1, 0)
    return k * (k + 1) * (2 * k + 1) // 6


def radial_dipole_table(
    n_max: int, z: int = 1, mass_ratio: float = 1.0, max_rows: int = DEFAULT_MAX_ROWS
) -> tuple[NDArray[np.int32], NDArray[np.int32], NDArray[np.int32], NDArray[np.int32], NDArray[np.float64]]:
    """Every bound-bound electric-dipole radial integral with ``n_lower < n_upper <= n_max``.

    Parameters
    ----------
    n_max : int
        Highest principal quantum number (>= 1).
    z : int, optional
        Nuclear charge.
    mass_ratio : float, optional
        ``m_r / m_e``.
    max_rows : int, optional
        Refuse tables larger than this (memory guard; about 24 bytes a row).

    Returns
    -------
    n_u, l_u, n_l, l_l : ndarray of int32
        Quantum numbers of the upper (larger n) and lower state of each row.
    R : ndarray of float64
        ``<n_u l_u | r | n_l l_l>`` in Bohr radii.

    Rows come in two blocks: first every row with ``l_u = l_l + 1``, then every
    row with ``l_u = l_l - 1``; within a block ordered by ``n_u``, then ``n_l``,
    then ``l``. Same-shell pairs (``n_u == n_l``) are not included.

    Raises
    ------
    QuantumNumberError
        ``n_max < 1``.
    TooLargeError
        The table would have more than ``max_rows`` rows (see :func:`table_size`).
    PhysicsInputError
        Bad ``z`` or ``mass_ratio``.

    Notes
    -----
    One vectorised downward recurrence over all ``n_max (n_max - 1) / 2`` shell
    pairs at once (module docstring), ``n_max - 1`` steps in l.

    Examples
    --------
    >>> n_u, l_u, n_l, l_l, R = radial_dipole_table(3)
    >>> [(int(a), int(b), int(c), int(d)) for a, b, c, d in zip(n_u, l_u, n_l, l_l)]
    [(2, 1, 1, 0), (3, 1, 1, 0), (3, 1, 2, 0), (3, 2, 2, 1), (3, 0, 2, 1)]
    >>> R.round(6)
    array([1.290266, 0.516689, 3.064815, 4.747992, 0.938404])
    """
    n_max = _as_int(n_max, "n_max")
    if n_max < 1:
        raise QuantumNumberError(f"n_max must be >= 1, got {n_max}")
    divisor = _check_scale(z, mass_ratio)
    rows = table_size(n_max)
    if rows > max_rows:
        raise TooLargeError(
            f"a radial table to n_max={n_max} has {rows} rows, more than max_rows={max_rows}"
        )
    n_hi, n_lo = _all_pairs(n_max)
    return _table_from_pairs(n_hi, n_lo, divisor)


def _all_pairs(n_max: int) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
    """All (n_hi, n_lo) with 1 <= n_lo < n_hi <= n_max, ordered by n_hi then n_lo."""
    lo, hi = np.triu_indices(n_max + 1, k=1)  # row < column
    keep = lo >= 1
    hi, lo = hi[keep], lo[keep]
    order = np.lexsort((lo, hi))
    return hi[order].astype(np.int64), lo[order].astype(np.int64)


def _ramp(counts: NDArray[np.int64]) -> NDArray[np.int64]:
    """Concatenate ``arange(c)`` for each c in ``counts`` (vectorised)."""
    total = int(counts.sum())
    starts = np.repeat(np.cumsum(counts) - counts, counts)
    return np.arange(total, dtype=np.int64) - starts


def _table_from_pairs(
    n_hi: NDArray[np.int64], n_lo: NDArray[np.int64], divisor: float
) -> tuple[NDArray[np.int32], NDArray[np.int32], NDArray[np.int32], NDArray[np.int32], NDArray[np.float64]]:
    """Rows (n_u, l_u, n_l, l_l, R) of the given shell pairs (n_hi > n_lo), R in a0 / divisor."""
    P, Q, _, _ = _pairs_kernel(n_hi, n_lo)
    count_p = n_lo
    count_q = n_lo - 1
    lp = _ramp(count_p) + 1  # l = 1 .. n_lo  (upper l)
    lq = _ramp(count_q) + 1  # l = 1 .. n_lo-1 (lower l)
    n_u = np.concatenate([np.repeat(n_hi, count_p), np.repeat(n_hi, count_q)]).astype(np.int32)
    n_l = np.concatenate([np.repeat(n_lo, count_p), np.repeat(n_lo, count_q)]).astype(np.int32)
    l_u = np.concatenate([lp, lq - 1]).astype(np.int32)
    l_l = np.concatenate([lp - 1, lq]).astype(np.int32)
    R = np.concatenate([P, Q])
    if divisor != 1.0:
        R /= divisor
    return n_u, l_u, n_l, l_l, R
