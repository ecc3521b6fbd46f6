"""Numerov integration of the radial Schrödinger equation on a square-root grid.

The radial equation of one electron in a central potential :math:`V(r)`
(atomic units, reduced-mass units of length and energy),

.. math:: u''(r) = \\Big[2\\big(V(r) - E\\big) + \\frac{l(l+1)}{r^2}\\Big] u(r),

becomes, with :math:`r = x^2` and :math:`u(r) = x^{1/2}\\chi(x)`,

.. math::

    \\chi''(x) = g(x)\\,\\chi(x), \\qquad
    g(x) = 8x^2\\big(V(x^2) - E\\big) + \\frac{(2l + \\tfrac12)(2l + \\tfrac32)}{x^2},

whose solutions oscillate with an almost constant period in ``x`` far from the
nucleus (the local wavelength in ``r`` grows as :math:`\\sqrt r`) and with a
period that shrinks like ``x`` near the nucleus, so one uniform step in ``x``
resolves both the core and a Rydberg orbit (Bhatti, Cromer & Cooke 1981;
Zimmerman, Littman, Kash & Kleppner 1979, who used this grid for alkali
Rydberg states). The three-term recurrence of Numerov (1924),

.. math::

    f_{i+1}\\chi_{i+1} = (12 - 10 f_i)\\chi_i - f_{i-1}\\chi_{i-1}, \\qquad
    f_i = 1 - \\frac{h^2}{12} g_i ,

is accurate to :math:`O(h^6)` per step. Many solutions (columns) are integrated
at once: the loop runs over grid points, each step is one array operation
over all columns.

Normalisation and matrix elements on this grid:
:math:`\\int u_a u_b\\, r^k dr = 2\\int \\chi_a \\chi_b\\, x^{2k+2} dx`.

References
----------
B. Numerov, "Note on the numerical integration of d2x/dt2 = f(x, t)",
Astron. Nachr. 230, 359 (1927) (the method, first given in 1924).
M. L. Zimmerman, M. G. Littman, M. M. Kash and D. Kleppner, "Stark structure of
the Rydberg states of alkali-metal atoms", Phys. Rev. A 20, 2251 (1979)
(inward Numerov integration at the measured energies on a square-root grid).
S. A. Bhatti, C. L. Cromer and W. E. Cooke, "Analysis of the Rydberg character
of the 5d7d 1D2 state of barium", Phys. Rev. A 24, 161 (1981) (the
square-root grid, citation from memory).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from levels.errors import PhysicsInputError
from levels.physics import jit as _jit

__all__ = [
    "square_root_grid",
    "outer_radius",
    "numerov_coefficient",
    "integrate_inward",
    "integrate_outward",
    "cut_divergence",
    "normalise",
    "radial_integrals",
]

#: seed of an inward integration (small, so a long forbidden region cannot overflow)
_SEED = 1e-30
#: columns are rescaled when a value grows beyond this
_RESCALE_AT = 1e150


_JIT = _jit.JIT
#: True when the recurrences run compiled (numba, one column at a time); False: numpy over columns.
COMPILED = _jit.COMPILED
_maybe_jit = _jit.maybe_jit


@_maybe_jit
def _inward_columns(f_t, start, seed, limit):  # pragma: no cover - compiled
    """Inward recurrence per column; ``f_t`` is (M, G) contiguous; returns chi as (M, G)."""
    columns, size = f_t.shape
    chi = np.zeros((columns, size))
    for c in range(columns):
        s = start[c]
        chi[c, s] = seed
        for i in range(s, 0, -1):
            nxt = chi[c, i + 1] if i + 1 < size else 0.0
            f_next = f_t[c, i + 1] if i + 1 < size else 1.0
            value = ((12.0 - 10.0 * f_t[c, i]) * chi[c, i] - f_next * nxt) / f_t[c, i - 1]
            chi[c, i - 1] = value
            if abs(value) > limit:
                for k in range(i - 1, s + 1):
                    chi[c, k] /= limit
    return chi


@_maybe_jit
def _outward_columns(f_t, first, last, limit):  # pragma: no cover - compiled
    """Outward recurrence per column from chi[0] = first[c], chi[1] = 1 up to index ``last``."""
    columns, size = f_t.shape
    chi = np.zeros((columns, size))
    for c in range(columns):
        chi[c, 0] = first[c]
        chi[c, 1] = 1.0
        for i in range(1, last):
            value = ((12.0 - 10.0 * f_t[c, i]) * chi[c, i] - f_t[c, i - 1] * chi[c, i - 1]) / f_t[c, i + 1]
            chi[c, i + 1] = value
            if abs(value) > limit:
                for k in range(0, i + 2):
                    chi[c, k] /= limit
    return chi


def square_root_grid(r_max: float, step: float = 0.01) -> NDArray[np.float64]:
    """Uniform grid in :math:`x = \\sqrt r` from ``step`` to :math:`\\sqrt{r_{max}}`.

    Parameters
    ----------
    r_max : float
        Largest radius, Bohr radii (> 0).
    step : float
        Step in x, :math:`a_0^{1/2}` (0 < step < 1).

    Returns
    -------
    ndarray
        x values (the radius is ``x**2``).

    Raises
    ------
    PhysicsInputError
        Non-positive or non-finite ``r_max`` or ``step``.

    Examples
    --------
    >>> x = square_root_grid(100.0, 0.5); float(x[0]), float(x[-1]), len(x)
    (0.5, 10.0, 20)
    """
    if not (np.isfinite(r_max) and r_max > 0):
        raise PhysicsInputError(f"r_max must be a positive radius, got {r_max!r}")
    if not (np.isfinite(step) and 0 < step < 1):
        raise PhysicsInputError(f"step must be between 0 and 1, got {step!r}")
    count = int(np.ceil(np.sqrt(r_max) / step - 1e-9))
    return step * np.arange(1, count + 1, dtype=np.float64)


def outer_radius(nu: ArrayLike, l: ArrayLike, zeta: float = 1.0, decades: float = 17.0) -> NDArray[np.float64]:
    """Radius beyond which a bound orbit of effective quantum number ``nu`` is negligible.

    Parameters
    ----------
    nu : array_like
        Effective quantum numbers (> 0).
    l : array_like of int
        Orbital angular momenta.
    zeta : float
        Asymptotic charge seen by the electron (ion charge + 1).
    decades : float
        The amplitude falls by about ``10**-decades`` past the outer turning point.

    Returns
    -------
    ndarray
        Radius in Bohr radii: outer turning point plus ``decades * ln(10) * nu / zeta``.

    Examples
    --------
    >>> round(float(outer_radius(1.0, 0)), 3)
    41.144
    """
    nu_ = np.asarray(nu, dtype=np.float64)
    l_ = np.asarray(l, dtype=np.float64)
    turning = (nu_**2 + nu_ * np.sqrt(np.maximum(nu_**2 - l_ * (l_ + 1), 0.0))) / zeta
    return turning + decades * np.log(10.0) * nu_ / zeta


def numerov_coefficient(x: NDArray[np.float64], potential: NDArray[np.float64], energy: ArrayLike,
                        l: ArrayLike) -> NDArray[np.float64]:
    """The function ``g`` of the transformed equation on the grid, one column per solution.

    Parameters
    ----------
    x : ndarray, shape (G,)
        Grid in :math:`\\sqrt r`.
    potential : ndarray, shape (G,) or (G, M)
        :math:`V(r = x^2)` in hartree (per column when 2-D).
    energy : array_like, shape (M,)
        Energies, hartree (negative for bound states).
    l : array_like of int, shape (M,)
        Orbital angular momenta.

    Returns
    -------
    ndarray, shape (G, M)
        ``g(x)``.

    Examples
    --------
    >>> x = np.array([1.0, 2.0]); g = numerov_coefficient(x, -1 / x**2, [-0.5], [0])
    >>> g[:, 0].tolist()   # 8 x^2 (V - E) + 3 / (4 x^2)
    [-3.25, 8.1875]
    """
    x_ = np.asarray(x, dtype=np.float64)[:, None]
    e = np.atleast_1d(np.asarray(energy, dtype=np.float64))[None, :]
    l_ = np.atleast_1d(np.asarray(l, dtype=np.float64))[None, :]
    v = np.asarray(potential, dtype=np.float64)
    if v.ndim == 1:
        v = v[:, None]
    return 8.0 * x_**2 * (v - e) + (2.0 * l_ + 0.5) * (2.0 * l_ + 1.5) / x_**2


def integrate_inward(x: NDArray[np.float64], g: NDArray[np.float64], start: ArrayLike) -> NDArray[np.float64]:
    """Numerov integration from ``x[start]`` (per column) down to the first grid point.

    Parameters
    ----------
    x : ndarray, shape (G,)
        Uniform grid.
    g : ndarray, shape (G, M)
        Coefficient function (:func:`numerov_coefficient`).
    start : array_like of int, shape (M,)
        Index where each column starts (zero beyond it), ``1 <= start <= G - 1``.

    Returns
    -------
    ndarray, shape (G, M)
        Unnormalised solutions; columns are rescaled as they grow, so only shapes matter.

    Examples
    --------
    >>> x = square_root_grid(60.0, 0.02); g = numerov_coefficient(x, -1 / x**2, [-0.5], [0])
    >>> chi = integrate_inward(x, g, [len(x) - 1]); u = np.sqrt(x) * chi[:, 0]
    >>> r = x**2; bool(abs(u[100] / u[200] / (r[100] * np.exp(-r[100]) / (r[200] * np.exp(-r[200]))) - 1) < 1e-5)
    True
    """
    h = float(x[1] - x[0])
    f = 1.0 - (h * h / 12.0) * g
    size, columns = f.shape
    start_ = np.broadcast_to(np.asarray(start, dtype=np.int64), (columns,))
    if np.any(start_ < 1) or np.any(start_ > size - 1):
        raise PhysicsInputError("inward start index outside the grid")
    if COMPILED:
        return _inward_columns(np.ascontiguousarray(f.T), np.ascontiguousarray(start_), _SEED, _RESCALE_AT).T
    chi = np.zeros((size, columns))
    seeds: dict[int, NDArray[np.int64]] = {}
    for index in np.unique(start_):
        seeds[int(index)] = np.flatnonzero(start_ == index)
    top = int(start_.max())
    chi[top, seeds[top]] = _SEED
    for i in range(top, 0, -1):
        if i in seeds and i != top:
            chi[i, seeds[i]] = _SEED
        nxt = chi[i + 1] if i + 1 < size else 0.0
        chi[i - 1] = ((12.0 - 10.0 * f[i]) * chi[i] - (f[i + 1] if i + 1 < size else 1.0) * nxt) / f[i - 1]
        big = np.abs(chi[i - 1]) > _RESCALE_AT
        if big.any():
            chi[i - 1:, big] /= _RESCALE_AT
    return chi


def integrate_outward(x: NDArray[np.float64], g: NDArray[np.float64], l: ArrayLike,
                      stop: int | None = None) -> NDArray[np.float64]:
    """Numerov integration of the solution regular at the origin, :math:`\\chi \\propto x^{2l+3/2}`.

    Parameters
    ----------
    x : ndarray, shape (G,)
        Uniform grid starting near 0.
    g : ndarray, shape (G, M)
        Coefficient function.
    l : array_like of int, shape (M,)
        Orbital angular momenta (start values).
    stop : int, optional
        Last index integrated (default the end of the grid).

    Returns
    -------
    ndarray, shape (G, M)
        Unnormalised regular solutions (zero past ``stop``; overflowing columns are
        rescaled, so values before a rescale are relatively tiny).

    Examples
    --------
    >>> x = square_root_grid(30.0, 0.01); g = numerov_coefficient(x, -1 / x**2, [-0.5], [0])
    >>> chi = integrate_outward(x, g, [0]); u = np.sqrt(x) * chi[:, 0]; r = x**2
    >>> bool(abs(u[150] / u[20] / (r[150] * np.exp(-r[150]) / (r[20] * np.exp(-r[20]))) - 1) < 1e-4)
    True
    """
    h = float(x[1] - x[0])
    f = 1.0 - (h * h / 12.0) * g
    size, columns = f.shape
    last = size - 1 if stop is None else int(stop)
    p = 2.0 * np.atleast_1d(np.asarray(l, dtype=np.float64)) + 1.5
    # chi = x^p (1 + c x^2) near the origin, c from the constant part of g (the Coulomb singularity)
    big_a = p * (p - 1.0)
    c = (g[0] - big_a / x[0] ** 2) / (4.0 * p + 2.0)
    first = (x[0] / x[1]) ** p * (1.0 + c * x[0] ** 2) / (1.0 + c * x[1] ** 2)
    if COMPILED:
        first = np.ascontiguousarray(np.broadcast_to(first, (columns,)), dtype=np.float64)
        with np.errstate(over="ignore", invalid="ignore"):
            return _outward_columns(np.ascontiguousarray(f.T), first, last, _RESCALE_AT).T
    chi = np.zeros((size, columns))
    chi[0] = first
    chi[1] = 1.0
    with np.errstate(over="ignore", invalid="ignore"):
        for i in range(1, last):
            chi[i + 1] = ((12.0 - 10.0 * f[i]) * chi[i] - f[i - 1] * chi[i - 1]) / f[i + 1]
            big = np.abs(chi[i + 1]) > _RESCALE_AT
            if big.any():
                chi[: i + 2, big] /= _RESCALE_AT
    return chi


def cut_divergence(chi: NDArray[np.float64], x: NDArray[np.float64]) -> NDArray[np.float64]:
    """Zero each inward solution inside its first minimum of :math:`|u| = x^{1/2}|\\chi|`.

    An inward solution at an energy that is not an exact eigenvalue of the
    potential diverges toward the origin (as :math:`r^{-l}`); it is cut where
    :math:`|u|`, followed outward from the origin, first stops falling (the
    rule of Zimmerman et al. 1979: the integration stops where the function
    starts to diverge). A regular solution rises from the origin and is kept whole.

    Parameters
    ----------
    chi : ndarray, shape (G, M)
        Solutions from :func:`integrate_inward`.
    x : ndarray, shape (G,)
        Grid.

    Returns
    -------
    ndarray, shape (G, M)
        A copy with the divergent inner part set to zero.

    Examples
    --------
    >>> x = np.linspace(0.1, 1, 10); chi = np.c_[1 / x**3 + 30 * x**2]
    >>> int((cut_divergence(chi, x)[:, 0] == 0).sum())
    4
    """
    u = np.abs(chi) * np.sqrt(x)[:, None]
    rising = np.diff(u, axis=0) > 0
    first = np.where(rising.any(axis=0), rising.argmax(axis=0), 0)
    keep = np.arange(len(x))[:, None] >= first[None, :]
    return np.where(keep, chi, 0.0)


def normalise(chi: NDArray[np.float64], x: NDArray[np.float64]) -> NDArray[np.float64]:
    """Scale columns so that :math:`\\int u^2 dr = 2\\int x^2\\chi^2 dx = 1`; the outermost lobe is positive.

    Parameters
    ----------
    chi : ndarray, shape (G, M)
    x : ndarray, shape (G,)
        Uniform grid.

    Returns
    -------
    ndarray, shape (G, M)

    Examples
    --------
    >>> x = square_root_grid(50.0, 0.01); chi = np.c_[x**1.5 * np.exp(-x**2)]
    >>> c = normalise(chi, x); round(float(2 * 0.01 * np.sum(x**2 * c[:, 0]**2)), 12)
    1.0
    """
    h = float(x[1] - x[0])
    norm = np.sqrt(2.0 * h * np.einsum("gm,gm,g->m", chi, chi, x * x))
    if np.any(~np.isfinite(norm)) or np.any(norm == 0):
        raise PhysicsInputError("a radial function vanished or overflowed; the grid does not hold the state")
    # sign: the outermost lobe positive (the convention of the Coulomb functions at large r)
    last = _outermost_extremum(chi)
    sign = np.sign(chi[last, np.arange(chi.shape[1])])
    sign[sign == 0] = 1.0
    return chi * (sign / norm)[None, :]


def _outermost_extremum(chi: NDArray[np.float64]) -> NDArray[np.int64]:
    """Index of the last grid point where |chi| is above 1e-3 of its maximum, per column."""
    big = np.abs(chi) > 1e-3 * np.abs(chi).max(axis=0)[None, :]
    return len(chi) - 1 - np.argmax(big[::-1], axis=0)


def radial_integrals(chi_a: NDArray[np.float64], chi_b: NDArray[np.float64], x: NDArray[np.float64],
                     weight: NDArray[np.float64]) -> NDArray[np.float64]:
    """Matrix of :math:`\\int u_a(r) w(r) u_b(r) dr` between every column of ``chi_a`` and of ``chi_b``.

    Parameters
    ----------
    chi_a : ndarray, shape (G, Ma)
        Normalised solutions (:func:`normalise`).
    chi_b : ndarray, shape (G, Mb)
    x : ndarray, shape (G,)
        Uniform grid.
    weight : ndarray, shape (G,)
        The operator :math:`w(r)` on the grid (``x**2`` for the dipole).

    Returns
    -------
    ndarray, shape (Ma, Mb)
        Integrals (atomic units of the operator), one matrix product.

    Examples
    --------
    >>> x = square_root_grid(50.0, 0.01); c = normalise(np.c_[x**1.5 * np.exp(-x**2)], x)
    >>> round(float(radial_integrals(c, c, x, x**2)[0, 0]), 9)   # <r> of the 1s state of H
    1.5
    """
    h = float(x[1] - x[0])
    # einsum without BLAS: one thread, so a busy machine does not turn a small product into thread contention
    return np.einsum("ga,gb->ab", chi_a * (2.0 * h * x * x * weight)[:, None], chi_b, optimize=False)
