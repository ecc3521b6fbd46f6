"""Energy levels of one-electron (hydrogen-like) ions.

The energy of a state (n, l, j) of a one-electron ion of nuclear charge Z and
nuclear mass m_N is assembled as in the CODATA adjustments (Mohr, Taylor & Newell
2008, section IV.A "Electronic atoms"; the same formulas are repeated in the 2010,
2014 and 2018 adjustments):

* the Dirac eigenvalue of a point nucleus, f(n, j);
* recoil: the reduced mass, the Barker-Glover term and the (Zα)^5 Salpeter
  relativistic recoil, higher-order recoil, radiative recoil and the nuclear self
  energy;
* the one-loop self energy to order α(Zα)^6 with Bethe logarithms, and for s
  states the all-order remainder G_SE(Zα) interpolated between all-order 1s
  values (Z = 1, 10, 20, 30, 92);
* vacuum polarisation (Uehling to α(Zα)^6, Wichmann-Kroll, muon and hadron loops);
* two-loop corrections B40, B50, B6k;
* the finite size of the nucleus, to first order in the difference between the
  potential of a uniformly charged sphere and a point charge, with the
  point-nucleus Dirac-Coulomb density at small r (all orders in Zα), scaled for
  s1/2 and p1/2 states by the ratio of Shabaev's (1993) 1s formula to the
  first-order 1s value (this accounts for the change of the wavefunction inside
  the nucleus: 30 % of the shift at Z = 92); the nuclear polarisation of H and D.

Energies are measured from the ionization limit (nucleus and electron at rest,
infinitely apart), so bound states are negative. The formulas and coefficients
of the CODATA papers and the tabulated numbers were written down from memory,
not copied from the papers (each numeric table says so); the tests check the
resulting energies against measurements and reference values, and the
coefficients against independent evaluations where one exists (Uehling
potential, all-order self energy at Z = 1, Dirac equation for a finite nucleus).

Accuracy (tests): hydrogen 1S-2S to 5 kHz (2e-15), the 2S-2P1/2 Lamb shift to
4 kHz, the H-D isotope shift to 14 kHz; ionization energies of the one-electron
ions of He, Li, C, O, Ne to 3e-8 or better, Ar to 1e-7, Fe to 4e-6 and U to 1e-5
of reference values (for U, errors of several eV in single terms partly
cancel). The terms taken to finite order in Zα (Uehling beyond (Zα)^6, two-loop
beyond B61, the self-energy remainder of p and d states) limit high-Z accuracy:
at Z = 92 the Uehling expansion is 8 eV (1s), 3.5 eV (2s) and 2 eV (2p1/2) off
its all-order value and the two-loop expansion a few eV, of a 1s binding energy
of 132 keV. Excited s states take the 1s all-order remainder shift (exact to a few per cent
of it at Z = 1); p states keep the Zα -> 0 constant A60, so their self energy is
only good to order (Zα)^7 (tens of per cent of the p1/2 self energy at Z = 92);
above Z = 102 this even puts 3p3/2 a few meV below 3d3/2.

References
----------
P. J. Mohr, B. N. Taylor and D. B. Newell, "CODATA recommended values of the
fundamental physical constants: 2006", Rev. Mod. Phys. 80, 633-730 (2008),
section IV.A.1, eqs. (25)-(64).

P. J. Mohr, B. N. Taylor and D. B. Newell, "CODATA recommended values of the
fundamental physical constants: 2010", Rev. Mod. Phys. 84, 1527-1605 (2012).

G. W. F. Drake and R. A. Swainson, "Bethe logarithms for hydrogen up to n = 20,
and approximations for two-electron atoms", Phys. Rev. A 41, 1243-1246 (1990).

V. B. Berestetskii, E. M. Lifshitz and L. P. Pitaevskii, "Quantum
Electrodynamics", 2nd ed. (Pergamon, 1982), §36 (Dirac-Coulomb wavefunctions).

V. M. Shabaev, "Finite nuclear size corrections to the energy levels of the
multicharged ions", J. Phys. B 26, 1103-1108 (1993).

P. J. Mohr, "Self-energy correction to one-electron energy levels in a strong
Coulomb field", Phys. Rev. A 46, 4421-4424 (1992); U. D. Jentschura, P. J. Mohr and
G. Soff, "Calculation of the electron self-energy for low nuclear charge", Phys.
Rev. Lett. 82, 53-56 (1999) (all-order 1s self energy).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Any, Literal, cast

import numpy as np
import scipy.constants as sc
from scipy.special import digamma, gammaln

from levels.errors import PhysicsInputError, QuantumNumberError
from levels.physics.one_electron import nuclear as _nuclear
from levels.physics.one_electron.nuclear import charge_radius_fm
from levels.physics.one_electron.nuclear import check_z as _check_z
from levels.units import ALPHA, CM1_HZ, LAMBDA_C_BAR, M_E_U, R_INF_C_HZ

__all__ = [
    "Corrections",
    "MEC2_HZ",
    "bethe_logarithm",
    "charge_radius_fm",
    "dirac_point_energy",
    "ionization_energy_cm1",
    "ionization_energy_hz",
    "level_contributions_hz",
    "level_energies_cm1",
    "level_energies_hz",
    "level_uncertainties_cm1",
    "transition_uncertainties_cm1",
    "theory_uncertainty_components_hz",
    "theory_uncertainty_hz",
    "charge_radius_uncertainty_fm",
    "UNCERTAINTY_COMPONENTS",
]

#: electron rest energy in Hz, m_e c^2 / h = 2 R_inf c / alpha^2 (CODATA via scipy)
MEC2_HZ = 2.0 * R_INF_C_HZ / ALPHA**2

_PI = math.pi
_LN2 = math.log(2.0)
_ZETA3 = 1.2020569031595942  # Riemann zeta(3)
_EULER = float(np.euler_gamma)
#: electron-to-muon mass ratio (CODATA via scipy)
_ME_OVER_MMU = 1.0 / sc.physical_constants["muon-electron mass ratio"][0]
#: hadronic vacuum polarisation relative to the muon loop, 0.671(15)
#: (Friar, Martorell & Sprung 1999, Phys. Rev. A 59, 4061; as used by CODATA 2006, from memory)
_HADRONIC_OVER_MUON_VP = 0.671


@dataclass(frozen=True)
class Corrections:
    """Which corrections to the point-nucleus Dirac energy are applied.

    Attributes
    ----------
    recoil : bool
        Finite nuclear mass: reduced mass, Barker-Glover term (and, with
        ``higher_order``, the Salpeter (Zα)^5 recoil, higher-order and radiative
        recoil and the nuclear self energy). Off means an infinitely heavy nucleus.
    self_energy : bool
        One-loop self energy, A41, A40 and A50 (with ``higher_order`` also A62,
        A61, the remainder G_SE and the two-loop B coefficients).
    vacuum_polarization : bool
        Uehling term, V40 and V50 (with ``higher_order`` also V61, V60,
        Wichmann-Kroll and the muon and hadron loops).
    finite_size : bool
        Finite nuclear charge radius (leading non-relativistic formula for s
        states; with ``higher_order`` the relativistic first-order formula for all
        states).
    higher_order : bool
        The higher-order terms named above.

    Examples
    --------
    >>> Corrections.none().as_dict()["recoil"]
    False
    >>> Corrections(finite_size=False).finite_size
    False
    """

    recoil: bool = True
    self_energy: bool = True
    vacuum_polarization: bool = True
    finite_size: bool = True
    higher_order: bool = True

    def as_dict(self) -> dict[str, bool]:
        """Return the switches as a plain ``{name: bool}`` dictionary."""
        return asdict(self)

    @classmethod
    def none(cls) -> Corrections:
        """All corrections off: the Dirac energy of a point nucleus of infinite mass."""
        return cls(
            recoil=False,
            self_energy=False,
            vacuum_polarization=False,
            finite_size=False,
            higher_order=False,
        )


# --------------------------------------------------------------------------------------
# Bethe logarithms
# --------------------------------------------------------------------------------------

#: ln k0(n, l) for n = 1..8, all l < n.
#: Drake & Swainson 1990, Phys. Rev. A 41, 1243, Table I (values from memory, 9 decimals).
_BETHE_TABLE: dict[int, tuple[float, ...]] = {
    1: (2.984128556,),
    2: (2.811769893, -0.030016709),
    3: (2.767663612, -0.038190229, -0.005232148),
    4: (2.749811840, -0.041954895, -0.006740939, -0.001733661),
    5: (2.740823727, -0.044034696, -0.007600751, -0.002202168, -0.000772099),
    6: (2.735664207, -0.045312198, -0.008147204, -0.002502180, -0.000962798, -0.000407926),
    7: (2.732429130, -0.046155178, -0.008519223, -0.002709096, -0.001094473, -0.000499701, -0.000240908),
    8: (
        2.730267261,
        -0.046741353,
        -0.008785042,
        -0.002859223,
        -0.001190995,
        -0.000566308,
        -0.000290295,
        -0.000153637,
    ),
}
_BETHE_NMAX = max(_BETHE_TABLE)
_BETHE_ARRAY = np.full((_BETHE_NMAX + 1, _BETHE_NMAX), np.nan)
for _n, _row in _BETHE_TABLE.items():
    _BETHE_ARRAY[_n, : len(_row)] = _row


def _bethe_fit(ns: tuple[int, ...], l: int) -> np.ndarray:
    """Coefficients (a, b, c) of ln k0 = a + b/n^2 + c/n^3 through the tabulated ns."""
    rows = [[1.0, n**-2.0, n**-3.0][: len(ns)] for n in ns]
    coef = np.linalg.solve(np.array(rows), np.array([_BETHE_ARRAY[n, l] for n in ns]))
    return np.concatenate([coef, np.zeros(3 - len(coef))])


#: extrapolation coefficients per l for n > 8: three-point fit (n = 6, 7, 8) for
#: l <= 5, two-point fit (n = 7, 8) in 1/n^2 for l = 6
_BETHE_FIT = np.array([_bethe_fit((6, 7, 8), l) for l in range(6)] + [_bethe_fit((7, 8), 6)])
#: circular-state power law: ln k0(l+1, l) ~ (l+1)^-p, p from ln k0(7, 6) and ln k0(8, 7)
_BETHE_CIRC_P = math.log(_BETHE_TABLE[7][6] / _BETHE_TABLE[8][7]) / math.log(8.0 / 7.0)


def bethe_logarithm(n, l) -> np.ndarray:
    """Bethe logarithm ln k0(n, l) of hydrogen-like states.

    Parameters
    ----------
    n : array_like of int
        Principal quantum number, n >= 1.
    l : array_like of int
        Orbital angular momentum, 0 <= l < n.

    Returns
    -------
    numpy.ndarray
        ln k0(n, l), dimensionless (k0 in units of the Rydberg energy Z^2 R_inf h c).

    Raises
    ------
    QuantumNumberError
        If n < 1 or l is not in 0..n-1.

    Notes
    -----
    ``ln k0(n, l) = sum_m |<m|p|n l>|^2 (E_m - E_n) ln(|E_m - E_n| / Ry)
    / sum_m |<m|p|n l>|^2 (E_m - E_n)``, with the denominator replaced by
    ``2 Z^4 / n^3`` (atomic units) for l > 0, where the sum rule makes it vanish.

    For n <= 8 the value is taken from the table of Drake & Swainson (1990)
    (values written down from memory). Beyond the table:

    * l <= 5: ``a + b/n^2 + c/n^3`` through the tabulated n = 6, 7, 8 (for l = 0
      the same fit through n = 5, 6, 7 reproduces n = 8 to 4e-6);
    * l = 6: ``a + b/n^2`` through n = 7, 8;
    * l >= 7: ``ln k0(l+1, l) (2 - (l+1)^2/n^2)``, where the circular-state value
      falls as ``(l+1)^-p`` with p = 3.37 fitted to n = 7, 8, and the factor
      rises from 1 (circular state) to 2 (n -> infinity) as the tabulated ratio
      of the n -> infinity limit to the circular value does (1.6, 1.8, 1.9 for
      l = 1, 2, 3). This reproduces the tabulated ln k0(8, 5) and ln k0(8, 6)
      to 4 %; the contribution of such states to the energy is below 1e-4 of
      their Lamb shift's magnetic-moment term, so the estimate is adequate.

    These extrapolations are common practice, no source.

    References
    ----------
    G. W. F. Drake and R. A. Swainson, Phys. Rev. A 41, 1243 (1990).

    Examples
    --------
    >>> bethe_logarithm([1, 2, 2], [0, 0, 1]).round(6)
    array([ 2.984129,  2.81177 , -0.030017])
    >>> float(bethe_logarithm(100, 0).round(3))
    2.723
    """
    n_arr, l_arr = np.broadcast_arrays(_as_int_array("n", n), _as_int_array("l", l))
    if np.any(n_arr < 1):
        raise QuantumNumberError("n must satisfy n >= 1")
    if np.any((l_arr < 0) | (l_arr >= n_arr)):
        raise QuantumNumberError("l must satisfy 0 <= l < n")
    return _bethe_kernel(n_arr, l_arr)


def _bethe_kernel(n: np.ndarray, l: np.ndarray) -> np.ndarray:
    out = np.empty(np.shape(n), dtype=float)
    in_table = n <= _BETHE_NMAX
    out[in_table] = _BETHE_ARRAY[n[in_table], l[in_table]]
    low = (~in_table) & (l <= 6)
    if np.any(low):
        nn = n[low].astype(float)
        a, b, c = _BETHE_FIT[l[low]].T
        out[low] = a + b / nn**2 + c / nn**3
    high = (~in_table) & (l >= 7)
    if np.any(high):
        nn = n[high].astype(float)
        lp1 = l[high] + 1.0
        circ = _BETHE_TABLE[8][7] * (8.0 / lp1) ** _BETHE_CIRC_P
        out[high] = circ * (2.0 - lp1**2 / nn**2)
    return out


# --------------------------------------------------------------------------------------
# Coefficients of the (Zα)^6 terms known only for some states
# --------------------------------------------------------------------------------------

#: A60, the (Zα)^6 one-loop self-energy coefficient in the limit Zα -> 0, keyed by
#: (n, l, two_j). Pachucki 1993 (1S); Jentschura, Mohr & Soff 1999-2001 (2S, 2P), as
#: quoted in CODATA 2006 (values from memory).
_A60 = {
    (1, 0, 1): -30.92414946,
    (2, 0, 1): -31.84047,
    (2, 1, 1): -0.998904402,
    (2, 1, 3): -0.503373465,
}
#: G_SE(alpha): the all-order self-energy remainder at Z = 1, CODATA 2006 Table
#: (Jentschura, Mohr & Soff 1999; values from memory)
_GSE_Z1 = {
    (1, 0, 1): -30.29024,
    (2, 0, 1): -31.18515,
    (2, 1, 1): -0.9735,
    (2, 1, 3): -0.4865,
}
#: F(Zα) of the 1s state for a point nucleus, the all-order one-loop self-energy
#: function (E_SE = α/π (Zα)^4 F m_e c^2): Z = 1, 10, 20, 30 from Mohr's all-order
#: calculations (Mohr 1992, Phys. Rev. A 46, 4421; Jentschura, Mohr & Soff 1999 for
#: Z = 1), values from memory; Z = 92 derived from the 355.0 eV self energy of the
#: U91+ ground state (Mohr, Plunien & Soff 1998, Phys. Rep. 293, 227; from memory;
#: that value includes the finite nuclear size, about 1 % of it).
_F_1S_ALL_ORDER = {1: 10.316793650, 10: 4.6541619, 20: 3.2462553, 30: 2.500759, 92: 355.0}


def _g_1s_nodes() -> tuple[np.ndarray, np.ndarray]:
    """G_SE(1s, Zα) - A60(1s) at the nodes of ``_F_1S_ALL_ORDER`` (0 at Z = 0)."""
    zs, dg = [0.0], [0.0]
    for z, f in _F_1S_ALL_ORDER.items():
        x = z * ALPHA
        if z == 92:  # given as an energy in eV
            f = f / (ALPHA / _PI * x**4 * MEC2_HZ * sc.h / sc.e)
        big_l = math.log(x**-2)
        a61 = 4.0 + 28.0 / 3.0 * _LN2 - 601.0 / 180.0 - 77.0 / 45.0
        rest = (
            4.0 / 3.0 * big_l
            - 4.0 / 3.0 * _BETHE_TABLE[1][0]
            + 10.0 / 9.0
            + (139.0 / 32.0 - 2.0 * _LN2) * _PI * x
            - x**2 * big_l**2
            + a61 * x**2 * big_l
        )
        zs.append(float(z))
        dg.append((f - rest) / x**2 - _A60[(1, 0, 1)])
    return np.array(zs), np.array(dg)


_DG_Z, _DG_1S = _g_1s_nodes()


def _self_energy_remainder_shift(z: int) -> float:
    """G_SE(1s, Zα) - A60(1s): linear in Z between the nodes, extrapolated linearly
    beyond Z = 92 (common practice, no source)."""
    if z <= _DG_Z[-1]:
        return float(np.interp(z, _DG_Z, _DG_1S))
    slope = (_DG_1S[-1] - _DG_1S[-2]) / (_DG_Z[-1] - _DG_Z[-2])
    return float(_DG_1S[-1] + slope * (z - _DG_Z[-1]))


def _g_se(z: int, n: np.ndarray, l: np.ndarray, two_j: np.ndarray) -> np.ndarray:
    """G_SE(Zα), the self-energy remainder multiplying (Zα)^2 in F(Zα).

    Z = 1: the CODATA values at Z = 1. Otherwise A60 plus, for s states, the shift
    G_SE(1s, Zα) - A60(1s) of the 1s state (at Z = 1 this shift is 0.634 for 1S and
    0.655 for 2S, so taking the 1s shift for every ns state is good to a few per
    cent of the shift). p and higher states keep A60 (their remainder at Z = 1 is
    0.03 or less).
    """
    if z == 1:
        return _state_lookup(_GSE_Z1, n, l, two_j)
    return _state_lookup(_A60, n, l, two_j) + (l == 0) * _self_energy_remainder_shift(z)


#: V60 = G_VP^(1)(0), the Uehling (Zα)^6 constant (CODATA 2006; values from memory)
_V60 = {
    (1, 0, 1): -0.618724,
    (2, 0, 1): -0.808872,
    (2, 1, 1): -0.064006,
    (2, 1, 3): -0.014132,
}
#: N(nL): the low-energy part of the two-loop B61 (Jentschura 2003; values from memory)
_N_BETHE = {(1, 0): 17.85567203, (2, 0): 12.03214158, (2, 1): 0.003300635}


def _state_lookup(table: dict, n: np.ndarray, l: np.ndarray, two_j: np.ndarray) -> np.ndarray:
    """Value of ``table`` for each state; states not in it take the n = 2 value of the
    same (l, j) for l <= 1 (an approximation: from n = 2 on these constants change
    little with n), and 0 for l >= 2 (where they are a few hundredths at most)."""
    out = np.zeros(np.shape(n), dtype=float)
    for (tn, tl, tj), value in table.items():
        exact = (n == tn) & (l == tl) & (two_j == tj)
        out[exact] = value
        if tn == 2:
            out[(n > 2) & (l == tl) & (two_j == tj)] = value
    return out


# --------------------------------------------------------------------------------------
# Validation
# --------------------------------------------------------------------------------------


def _as_int_array(name: str, value) -> np.ndarray:
    arr = np.asarray(value)
    if arr.dtype == bool or not (np.issubdtype(arr.dtype, np.integer) or np.issubdtype(arr.dtype, np.floating)):
        raise QuantumNumberError(f"{name} must be an integer or an array of integers, got {value!r}")
    if np.issubdtype(arr.dtype, np.floating):
        if not np.all(np.isfinite(arr)) or np.any(arr != np.round(arr)):
            raise QuantumNumberError(f"{name} must be integer-valued")
    return arr.astype(np.int64)


def _check_states(n, l, two_j) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    try:
        n_arr, l_arr, j_arr = np.broadcast_arrays(
            _as_int_array("n", n), _as_int_array("l", l), _as_int_array("two_j", two_j)
        )
    except ValueError as exc:
        if isinstance(exc, QuantumNumberError):
            raise
        raise QuantumNumberError(f"n, l and two_j cannot be broadcast together: {exc}") from None
    if np.any(n_arr < 1):
        raise QuantumNumberError("n must satisfy n >= 1")
    if np.any((l_arr < 0) | (l_arr >= n_arr)):
        raise QuantumNumberError("l must satisfy 0 <= l < n")
    if np.any(((j_arr != 2 * l_arr + 1) & (j_arr != 2 * l_arr - 1)) | (j_arr < 1)):
        raise QuantumNumberError("two_j must be 2l-1 or 2l+1 and at least 1")
    return n_arr, l_arr, j_arr


def _check_mass(nuclear_mass_u: float) -> float:
    try:
        mass = float(nuclear_mass_u)
    except (TypeError, ValueError):
        raise PhysicsInputError(f"nuclear_mass_u must be a number, got {nuclear_mass_u!r}") from None
    if not (math.isfinite(mass) and mass > 0.0):
        raise PhysicsInputError(f"nuclear_mass_u must be a positive finite mass in u, got {nuclear_mass_u!r}")
    return mass


def _resolve_radius(z: int, mass: float, radius_fm: float | None) -> float:
    if radius_fm is None:
        a = int(round(mass))
        if a < z:
            raise PhysicsInputError(
                f"nuclear mass {mass} u implies a mass number below Z={z}; pass charge_radius_fm explicitly"
            )
        return _nuclear.charge_radius_fm(z, a)[0]
    try:
        r = float(radius_fm)
    except (TypeError, ValueError):
        raise PhysicsInputError(f"charge_radius_fm must be a number, got {radius_fm!r}") from None
    if not (math.isfinite(r) and r >= 0.0):
        raise PhysicsInputError(f"charge_radius_fm must be a finite radius >= 0 fm, got {radius_fm!r}")
    return r


# --------------------------------------------------------------------------------------
# Kernels (units of m_e c^2)
# --------------------------------------------------------------------------------------


def _dirac_terms(x: float, n: np.ndarray, kabs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """f(n, j) - 1 (computed without cancellation) and gamma = sqrt(kappa^2 - x^2)."""
    gamma = np.sqrt(kabs * kabs - x * x)
    delta = x * x / (kabs + gamma)  # |kappa| - gamma
    t = (x / (n - delta)) ** 2
    s = np.sqrt(1.0 + t)
    return -t / (s * (1.0 + s)), gamma


def _finite_size_relativistic(
    x: float, n: np.ndarray, kappa: np.ndarray, kabs: np.ndarray, fm1: np.ndarray, gamma: np.ndarray, radius: float
) -> np.ndarray:
    """First-order shift of a uniform sphere of radius ``radius`` (units of the reduced
    Compton wavelength), point-nucleus Dirac-Coulomb density near the origin."""
    n_r = n - kabs
    kmg = x * x / (kabs + gamma)  # |kappa| - gamma
    big_n = np.sqrt(n * n - 2.0 * n_r * kmg)
    n_minus_bign = 2.0 * n_r * kmg / (n + big_n)  # n - N >= 0
    lam = x / big_n
    # (N - kappa - n_r): equals N - n for kappa > 0, N - n + 2|kappa| for kappa < 0
    g_coef = np.where(kappa > 0, -n_minus_bign, 2.0 * kabs - n_minus_bign)
    f_coef = big_n - kappa + n_r
    bracket = (2.0 + fm1) * g_coef**2 + (-fm1) * f_coef**2
    two_g = 2.0 * gamma
    with np.errstate(divide="ignore"):
        log_d = (
            (two_g + 1.0) * np.log(2.0 * lam)
            + gammaln(two_g + n_r + 1.0)
            - 2.0 * gammaln(two_g + 1.0)
            - np.log(4.0 * big_n * (big_n - kappa))
            - gammaln(n_r + 1.0)
            + np.log(bracket)
            + two_g * math.log(radius)
        )
    first_order = x * np.exp(log_d) * 3.0 / (two_g * (two_g + 1.0) * (two_g + 3.0))
    return first_order * np.where(kabs == 1.0, _shabaev_ratio(x), 1.0)


def _shabaev_ratio(x: float) -> float:
    """Ratio of Shabaev's 1s finite-size formula to the first-order one, for |kappa| = 1.

    Shabaev (1993): ``ΔE_1s = x^2/10 [1 + x^2 f(x)] (2 x R)^(2γ) m c^2`` with
    ``f(x) = 1.380 - 0.162 x + 1.612 x^2`` (coefficients from memory). The
    first-order value is ``x^2/10 g(γ) (2 x R)^(2γ)`` with
    ``g = 60 / (Γ(2γ+1) 2γ (2γ+1) (2γ+3))``; the ratio corrects for the change of
    the wavefunction inside the nucleus, which the first-order formula ignores.
    """
    gamma = math.sqrt(1.0 - x * x)
    two_g = 2.0 * gamma
    g = 60.0 / (math.gamma(two_g + 1.0) * two_g * (two_g + 1.0) * (two_g + 3.0))
    return (1.0 + x * x * (1.380 - 0.162 * x + 1.612 * x * x)) / g


def _contributions(
    z: int,
    n: np.ndarray,
    l: np.ndarray,
    two_j: np.ndarray,
    mass_u: float,
    radius_fm: float,
    corr: Corrections,
) -> dict[str, np.ndarray]:
    """Every contribution to the energy, in units of m_e c^2 (arrays of n's shape)."""
    shape = np.shape(n)
    n, l, two_j = n.ravel(), l.ravel(), two_j.ravel()
    x = z * ALPHA
    nf = n.astype(float)
    lf = l.astype(float)
    kabs = (two_j + 1) * 0.5
    kappa = np.where(two_j == 2 * l + 1, -kabs, kabs)
    inv_n3 = nf**-3
    # states of each kind, as index arrays: s-only and p-only terms are evaluated on them
    i_s = np.flatnonzero(l == 0)
    i_p = np.flatnonzero(l == 1)
    i_l = np.flatnonzero(l <= 1)
    ns = nf[i_s]

    fm1, gamma = _dirac_terms(x, nf, kabs)
    out: dict[str, np.ndarray] = {"dirac": fm1}

    if corr.recoil:
        rho = M_E_U / mass_u  # m_e / m_N
        mu = 1.0 / (1.0 + rho)  # m_r / m_e
    else:
        rho, mu = 0.0, 1.0
    mu3 = mu**3
    log_x2 = math.log(x**-2)  # ln (Zα)^-2
    log_x2_m = log_x2 - math.log(mu)  # ln[(m_e/m_r) (Zα)^-2]
    # 1/(kappa (2l+1)), zero for s states
    with np.errstate(divide="ignore"):
        inv_k2l1 = np.where(l > 0, 1.0 / (kappa * (2.0 * lf + 1.0)), 0.0)
    harmonic_s = _harmonic(ns)  # 1 + 1/2 + ... + 1/n for the s states
    need_bethe = corr.self_energy or (corr.recoil and corr.higher_order)
    ln_k0 = _bethe_kernel(n, l) if need_bethe else None
    scale = (ALPHA / _PI * x**4) * inv_n3  # α(Zα)^4 / (π n^3)

    # ---- recoil: CODATA 2006 eqs. (26)-(29), (35)-(37)
    if corr.recoil:
        bg = inv_k2l1 * (x**4 * mu3 * rho**2 / 2.0) * inv_n3
        out["recoil"] = fm1 * (mu - 1.0) - fm1**2 * (mu**2 * rho / (2.0 * (1.0 + rho))) + bg
        if corr.higher_order:
            assert ln_k0 is not None  # need_bethe holds with recoil and higher orders
            lpos = np.maximum(lf, 1.0)
            # l >= 1 parts (zeroed for s states below and replaced by the s-state terms)
            a_n = 1.0 / (lpos * (lpos + 1.0) * (2.0 * lpos + 1.0))
            d60 = (3.0 - lf * (lf + 1.0) / nf**2) * 2.0 / ((4.0 * lpos**2 - 1.0) * (2.0 * lpos + 3.0))
            salpeter = (mu3 * rho * x**5 / _PI) * inv_n3 * (-8.0 / 3.0 * ln_k0 - 7.0 / 3.0 * a_n)
            higher = (rho * x**6) * inv_n3 * d60
            nuclear_se = (
                (4.0 * z**2 * ALPHA * x**4 / (3.0 * _PI) * mu3 * rho**2) * inv_n3 * (-ln_k0) if rho > 0 else 0.0 * fm1
            )
            total = salpeter + higher + nuclear_se
            # s states: replace the l >= 1 a_n and D60 by their s forms, add the s-only terms
            a_n_s = -2.0 * (_LN2 - np.log(ns) + harmonic_s + 1.0 - 1.0 / (2.0 * ns))
            mass_log = (
                -2.0 / (1.0 - rho**2) * (math.log1p(rho) - rho**2 * math.log1p(1.0 / rho)) if rho > 0 else 0.0
            )
            inv_s3 = inv_n3[i_s]
            total[i_s] = (
                (mu3 * rho * x**5 / _PI) * inv_s3
                * (log_x2 / 3.0 - 8.0 / 3.0 * ln_k0[i_s] - 1.0 / 9.0 - 7.0 / 3.0 * a_n_s + mass_log)
                + (rho * x**6) * inv_s3 * (4.0 * _LN2 - 3.5 - 11.0 / (60.0 * _PI) * x * log_x2**2)
                + (mu3 * rho * ALPHA * x**5 / _PI**2) * inv_s3
                * (
                    6.0 * _ZETA3 - 2.0 * _PI**2 * _LN2 + 35.0 * _PI**2 / 36.0 - 448.0 / 27.0
                    + 2.0 / 3.0 * _PI * x * log_x2**2
                )
                + (
                    (4.0 * z**2 * ALPHA * x**4 / (3.0 * _PI) * mu3 * rho**2) * inv_s3
                    * (math.log((1.0 + 1.0 / rho) / x**2) - ln_k0[i_s])
                    if rho > 0
                    else 0.0
                )
            )
            out["recoil_higher_order"] = total

    # ---- one-loop self energy: CODATA 2006 eqs. (30)-(34)
    if corr.self_energy:
        # A40 = -4/3 ln k0 (+ 10/9 for s); magnetic-moment term -1/(2 kappa (2l+1)) with mu^2
        se = scale * (mu3 * (-4.0 / 3.0) * ln_k0 + mu**2 * (-0.5) * inv_k2l1)
        a50 = (139.0 / 32.0 - 2.0 * _LN2) * _PI
        se[i_s] += scale[i_s] * mu3 * (4.0 / 3.0 * log_x2_m + 10.0 / 9.0 + a50 * x)
        out["self_energy"] = se
        if corr.higher_order:
            lpos = np.maximum(lf, 1.0)
            a61 = (96.0 * nf**2 - 32.0 * lf * (lf + 1.0)) / (
                3.0 * nf**2 * (2 * lpos - 1) * (2 * lpos) * (2 * lpos + 1) * (2 * lpos + 2) * (2 * lpos + 3)
            )
            a61[i_s] = (
                4.0 * harmonic_s + 28.0 / 3.0 * _LN2 - 4.0 * np.log(ns) - 601.0 / 180.0 - 77.0 / (45.0 * ns**2)
            )
            np_ = nf[i_p]
            a61[i_p] += (1.0 - 1.0 / np_**2) * (2.0 / 15.0 + (two_j[i_p] == 1) / 3.0)
            coef = a61 * log_x2_m
            coef[i_s] -= log_x2_m**2  # A62 = -1 for s states
            coef[i_l] += _g_se(z, n[i_l], l[i_l], two_j[i_l])
            out["self_energy_higher_order"] = scale * (mu3 * x**2) * coef
            # two-loop corrections, CODATA 2006 eqs. (48)-(56); only l <= 1 beyond B40
            b40_mag = (_PI**2 * _LN2 / 2.0 - _PI**2 / 12.0 - 197.0 / 144.0 - 0.75 * _ZETA3) * inv_k2l1
            two_loop = (ALPHA / _PI) * scale * (mu**2 * b40_mag)
            b40 = 1.5 * _PI**2 * _LN2 - 10.0 * _PI**2 / 27.0 - 2179.0 / 648.0 - 2.25 * _ZETA3
            b50 = -21.55447  # Pachucki 1994; Eides & Shelyuto 1995 (from memory)
            psi_s = harmonic_s - 1.0 / ns  # psi(n) + gamma
            tail_s = 0.75 + psi_s - np.log(ns) - 1.0 / ns + 1.0 / (4.0 * ns**2)
            b62_s = 16.0 / 9.0 * (71.0 / 60.0 - _LN2 + psi_s - np.log(ns) - 1.0 / ns + 1.0 / (4.0 * ns**2))
            n_s = np.where(n[i_s] == 1, _N_BETHE[(1, 0)], _N_BETHE[(2, 0)])
            b61_s = (
                413581.0 / 64800.0 + 4.0 * n_s / 3.0 + 2027.0 * _PI**2 / 864.0 - 616.0 * _LN2 / 135.0
                - 2.0 * _PI**2 * _LN2 / 3.0 + 40.0 * _LN2**2 / 9.0 + _ZETA3
                + (304.0 / 135.0 - 32.0 * _LN2 / 9.0) * tail_s
            )
            f4_s = b40 + b50 * x + x**2 * (-8.0 / 27.0 * log_x2_m**3 + b62_s * log_x2_m**2 + b61_s * log_x2_m)
            two_loop[i_s] += (ALPHA / _PI) * scale[i_s] * mu3 * f4_s
            q_p = (np_**2 - 1.0) / np_**2
            f4_p = x**2 * (
                4.0 / 27.0 * q_p * log_x2_m**2
                + (4.0 / 3.0 * _N_BETHE[(2, 1)] + q_p * (166.0 / 405.0 - 8.0 / 27.0 * _LN2)) * log_x2_m
            )
            two_loop[i_p] += (ALPHA / _PI) * scale[i_p] * mu3 * f4_p
            out["two_loop"] = two_loop

    # ---- vacuum polarisation: CODATA 2006 eqs. (38)-(47); s states only at (Zα)^4, (Zα)^5
    if corr.vacuum_polarization:
        vp = np.zeros_like(fm1)
        vp[i_s] = scale[i_s] * mu3 * (-4.0 / 15.0 + 5.0 / 48.0 * _PI * x)
        out["vacuum_polarization"] = vp
        if corr.higher_order:
            vph = np.zeros_like(fm1)
            vph[i_l] = scale[i_l] * mu3 * x**2 * _state_lookup(_V60, n[i_l], l[i_l], two_j[i_l])
            wichmann_kroll = (19.0 / 45.0 - _PI**2 / 27.0) * x**2 + (1.0 / 16.0 - 31.0 * _PI**2 / 2880.0) * _PI * x**3
            muon = -4.0 / 15.0 * _ME_OVER_MMU**2 * (1.0 + _HADRONIC_OVER_MUON_VP)
            vph[i_s] += scale[i_s] * mu3 * (-2.0 / 15.0 * x**2 * log_x2_m + wichmann_kroll + muon)
            out["vacuum_polarization_higher_order"] = vph

    # ---- finite nuclear size: CODATA 2006 eqs. (59)-(62) (leading); relativistic form
    if corr.finite_size and radius_fm > 0.0:
        r_c = radius_fm * 1e-15 / LAMBDA_C_BAR  # r_rms in units of the reduced Compton wavelength
        fs = np.zeros_like(fm1)
        if corr.higher_order:
            # |kappa| <= 2; beyond, the shift is smaller by further powers of (R/lambdaC)^2 < 1e-3
            i_k = np.flatnonzero(kabs <= 2.0)
            sphere = math.sqrt(5.0 / 3.0) * r_c
            fs[i_k] = mu3 * _finite_size_relativistic(
                x, nf[i_k], kappa[i_k], kabs[i_k], fm1[i_k], gamma[i_k], sphere
            )
        else:
            fs[i_s] = 2.0 / 3.0 * mu3 * x**4 * inv_n3[i_s] * r_c**2
        out["finite_size"] = fs
    if corr.finite_size and corr.higher_order:
        a = int(round(mass_u))
        pol = _nuclear.nuclear_polarization_1s_hz(z, a) if a >= z else 0.0
        if pol:
            np_pol = np.zeros_like(fm1)
            np_pol[i_s] = pol / MEC2_HZ * inv_n3[i_s]
            out["nuclear_polarization"] = np_pol
    return {key: value.reshape(shape) for key, value in out.items()}


def _harmonic(n: np.ndarray) -> np.ndarray:
    """1 + 1/2 + ... + 1/n, vectorised."""
    return digamma(n + 1.0) + _EULER


# --------------------------------------------------------------------------------------
# Public API
# --------------------------------------------------------------------------------------


def level_contributions_hz(
    z: int,
    n,
    l,
    two_j,
    *,
    nuclear_mass_u: float,
    charge_radius_fm: float | None = None,
    corrections: Corrections = Corrections(),
) -> dict[str, np.ndarray]:
    """Each contribution to the energy of one-electron states, in Hz.

    Parameters are those of :func:`level_energies_hz`.

    Returns
    -------
    dict of str to numpy.ndarray
        Energies over h in Hz, keyed ``"dirac"`` (point nucleus of infinite mass,
        f(n, j) - 1), ``"recoil"``, ``"recoil_higher_order"``, ``"self_energy"``,
        ``"self_energy_higher_order"``, ``"two_loop"``, ``"vacuum_polarization"``,
        ``"vacuum_polarization_higher_order"``, ``"finite_size"``,
        ``"nuclear_polarization"`` (H and D only); only the switched-on ones are
        present. Their sum is :func:`level_energies_hz`.

    Raises
    ------
    QuantumNumberError, PhysicsInputError
        As :func:`level_energies_hz`.

    Examples
    --------
    >>> c = level_contributions_hz(1, 1, 0, 1, nuclear_mass_u=1.00727646658)
    >>> round(float(c["self_energy"]) / 1e9, 2)  # GHz; the whole 1S Lamb shift is 8.17 GHz
    8.39
    """
    z = _check_z(z)
    n_arr, l_arr, j_arr = _check_states(n, l, two_j)
    mass = _check_mass(nuclear_mass_u)
    if corrections.finite_size or charge_radius_fm is not None:
        radius = _resolve_radius(z, mass, charge_radius_fm)
    else:
        radius = 0.0
    terms = _contributions(z, n_arr, l_arr, j_arr, mass, radius, corrections)
    return {key: value * MEC2_HZ for key, value in terms.items()}


def level_energies_hz(
    z: int,
    n,
    l,
    two_j,
    *,
    nuclear_mass_u: float,
    charge_radius_fm: float | None = None,
    corrections: Corrections = Corrections(),
) -> np.ndarray:
    """Energies of one-electron states relative to the ionization limit, in Hz (E/h).

    Parameters
    ----------
    z : int
        Nuclear charge, 1 <= Z <= 118.
    n, l, two_j : array_like of int
        Principal quantum number (n >= 1), orbital angular momentum (0 <= l < n) and
        twice the total angular momentum (2l - 1 or 2l + 1, at least 1); broadcast
        together.
    nuclear_mass_u : float
        Mass of the bare nucleus in u (atomic mass less Z electrons plus their
        binding energy; see :func:`levels.physics.one_electron.nuclear.nuclear_mass_u`).
    charge_radius_fm : float, optional
        rms nuclear charge radius in fm; by default the value of
        :func:`charge_radius_fm` for the mass number ``round(nuclear_mass_u)``.
    corrections : Corrections, optional
        Which corrections are applied (all by default).

    Returns
    -------
    numpy.ndarray
        E/h in Hz, negative for bound states, of the broadcast shape.

    Raises
    ------
    QuantumNumberError
        Z outside 1..118, non-integer quantum numbers, n < 1, l outside 0..n-1, or
        two_j not in {2l-1, 2l+1} or below 1.
    PhysicsInputError
        Non-positive nuclear mass or negative charge radius.

    Notes
    -----
    With ``x = Zα``, ``μ = m_r/m_e``, ``ρ = m_e/m_N`` and energies in units of
    ``m_e c^2`` (CODATA 2006, eqs. (26)-(62)):

    * Dirac: ``f(n,j) = [1 + x^2/(n - δ)^2]^(-1/2)``, ``δ = |κ| - sqrt(κ^2 - x^2)``;
    * recoil: ``(f-1) μ - (f-1)^2 μ^2 ρ/(2(1+ρ)) + (1-δ_l0) x^4 μ^3 ρ^2/(2 n^3 κ(2l+1))``;
    * self energy: ``α x^4/(π n^3) [μ^3 (A41 L + A40 + A50 x + A62 x^2 L^2 + A61 x^2 L +
      G_SE x^2) - μ^2 (1-δ_l0)/(2κ(2l+1))]`` with ``L = ln[(Zα)^-2 m_e/m_r]``,
      ``A41 = 4/3 δ_l0``, ``A40 = -4/3 ln k0(n,l) + 10/9 δ_l0``,
      ``A50 = (139/32 - 2 ln 2) π δ_l0``, ``A62 = -δ_l0``, A61 of CODATA 2006
      eq. (33), and ``G_SE = A60 + δ_l0 [G_SE(1s, Zα) - A60(1s)]`` (the CODATA
      values G_SE(α) at Z = 1);
    * two loops: ``(α/π)^2 x^4/n^3 [μ^3 (B40 + B50 x + B63 x^2 L^3 + B62 x^2 L^2 +
      B61 x^2 L) + μ^2 B40_mag]`` (CODATA 2006 eqs. (48)-(56));
    * vacuum polarisation: ``α x^4 μ^3/(π n^3) [-4/15 + 5π/48 x - 2/15 x^2 L + V60 x^2] δ_l0``
      plus Wichmann-Kroll, muon and hadron loops;
    * finite size (s states, leading): ``2/3 μ^3 x^4/n^3 (r/ƛ_C)^2``; with higher
      orders: ``μ^3 D_nκ x R^(2γ) 3/(2γ(2γ+1)(2γ+3)) S(x)`` with ``R = sqrt(5/3) r``,
      ``γ = sqrt(κ^2 - x^2)``, ``D_nκ r^(2γ-2)`` the point-nucleus Dirac-Coulomb
      density at small r (Berestetskii, Lifshitz & Pitaevskii §36), which reduces to
      the CODATA expressions for s and p1/2 states at low Z, and ``S(x)`` (for
      |κ| = 1 only) the ratio of Shabaev's 1s formula to this first-order one; a
      numerical solution of the Dirac equation for a uniform sphere agrees to
      0.4 % (2s) and 1.6 % (2p1/2) at Z = 92;
    * nuclear polarisation of H and D (``nuclear_polarization_1s_hz / n^3``, s states).

    Not included: hyperfine structure (the energies are centroids), nuclear
    polarisation of nuclei other than H and D, the two-loop B60 and three-loop terms (about 7 kHz and 1.4 kHz in the
    hydrogen 1S-2S interval), radiative corrections to the finite-size shift
    (0.2 kHz in hydrogen 1S), and the all-order self-energy remainder of states
    with l >= 1.

    Examples
    --------
    >>> mp = 1.0072764665789  # proton mass in u (CODATA 2022)
    >>> e = level_energies_hz(1, [1, 2], 0, 1, nuclear_mass_u=mp)
    >>> round(float(e[1] - e[0]) / 1e6, 2)   # 1S-2S in MHz; measured 2 466 061 413.187 MHz
    2466061413.18
    """
    terms = level_contributions_hz(
        z, n, l, two_j, nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm, corrections=corrections
    )
    return cast(np.ndarray, sum(terms.values()))


def level_energies_cm1(
    z: int,
    n,
    l,
    two_j,
    *,
    nuclear_mass_u: float,
    charge_radius_fm: float | None = None,
    corrections: Corrections = Corrections(),
) -> np.ndarray:
    """Energies of one-electron states relative to the ionization limit, in cm-1.

    Parameters, Raises and Notes are those of :func:`level_energies_hz`.

    Returns
    -------
    numpy.ndarray
        E/(h c) in cm-1, negative for bound states.

    Examples
    --------
    >>> e = level_energies_cm1(2, [1, 2, 2], [0, 1, 1], [1, 1, 3], nuclear_mass_u=4.001506179)
    >>> e.round(2)
    array([-438908.88, -109729.58, -109723.73])
    """
    return (
        level_energies_hz(
            z, n, l, two_j, nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm, corrections=corrections
        )
        / CM1_HZ
    )


def ionization_energy_hz(
    z: int,
    *,
    nuclear_mass_u: float,
    charge_radius_fm: float | None = None,
    corrections: Corrections = Corrections(),
) -> float:
    """Ionization energy of the 1s1/2 ground state over h, in Hz (positive).

    Parameters, Raises: see :func:`level_energies_hz`.

    Returns
    -------
    float
        ``-E(1s1/2)/h`` in Hz.

    Examples
    --------
    >>> round(ionization_energy_hz(1, nuclear_mass_u=1.00727646662) / 1e15, 6)
    3.288087
    """
    e = level_energies_hz(
        z, 1, 0, 1, nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm, corrections=corrections
    )
    return -float(e)


def ionization_energy_cm1(
    z: int,
    *,
    nuclear_mass_u: float,
    charge_radius_fm: float | None = None,
    corrections: Corrections = Corrections(),
) -> float:
    """Ionization energy of the 1s1/2 ground state, in cm-1 (positive).

    Parameters, Raises: see :func:`level_energies_hz`.

    Returns
    -------
    float
        ``-E(1s1/2)/(h c)`` in cm-1.

    Examples
    --------
    >>> round(ionization_energy_cm1(1, nuclear_mass_u=1.00727646662), 3)
    109678.772
    """
    return (
        ionization_energy_hz(
            z, nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm, corrections=corrections
        )
        / CM1_HZ
    )


def dirac_point_energy(
    z: int,
    n,
    l,
    two_j,
    *,
    unit: Literal["hartree", "mc2", "f"] = "hartree",
    alpha: float = ALPHA,
) -> np.ndarray:
    """Dirac energy of an electron bound to a point nucleus of infinite mass.

    Parameters
    ----------
    z : int
        Nuclear charge, 1 <= Z <= 118.
    n, l, two_j : array_like of int
        Quantum numbers as in :func:`level_energies_hz`; broadcast together.
    unit : {"hartree", "mc2", "f"}
        ``"hartree"``: binding energy ``(f - 1)/α^2`` in hartree (rest energy
        excluded); ``"mc2"``: ``f - 1`` in units of m_e c^2; ``"f"``: the
        dimensionless eigenvalue f(n, j) including the rest energy.
    alpha : float
        Fine-structure constant; CODATA by default (other values only for limit
        checks, e.g. the non-relativistic limit alpha -> 0).

    Returns
    -------
    numpy.ndarray
        The energy in the chosen unit, of the broadcast shape.

    Raises
    ------
    QuantumNumberError
        As :func:`level_energies_hz`.
    PhysicsInputError
        If ``alpha`` is not in (0, 1/Z) or ``unit`` is unknown.

    Notes
    -----
    ``f(n, j) = [1 + (Zα)^2 / (n - δ)^2]^(-1/2)``, ``δ = j + 1/2 - sqrt((j+1/2)^2 - (Zα)^2)``;
    ``f - 1`` is evaluated as ``-t / (s (1 + s))`` with ``t = (Zα/(n-δ))^2``,
    ``s = sqrt(1 + t)`` so that it keeps full precision.

    References
    ----------
    Mohr, Taylor & Newell, Rev. Mod. Phys. 80, 633 (2008), eq. (25).

    Examples
    --------
    >>> round(float(dirac_point_energy(1, 1, 0, 1, alpha=1 / 137.035999037)), 12)
    -0.500006656597
    >>> dirac_point_energy(1, 2, [0, 1], 1)[0] == dirac_point_energy(1, 2, [0, 1], 1)[1]
    np.True_
    """
    z = _check_z(z)
    n_arr, l_arr, j_arr = _check_states(n, l, two_j)
    if not (0.0 < alpha and z * alpha < 1.0):
        raise PhysicsInputError(f"alpha must satisfy 0 < alpha < 1/Z, got {alpha!r}")
    kabs = (j_arr + 1) / 2.0
    fm1, _ = _dirac_terms(z * alpha, n_arr.astype(float), kabs)
    if unit == "hartree":
        return fm1 / alpha**2
    if unit == "mc2":
        return fm1
    if unit == "f":
        return 1.0 + fm1
    raise PhysicsInputError(f"unit must be 'hartree', 'mc2' or 'f', got {unit!r}")


# --------------------------------------------------------------------------------------
# Theory uncertainty: the size of the terms left out
# --------------------------------------------------------------------------------------

#: |B60| bound for nS states, the uncalculated two-loop (Zα)^6 constant: CODATA 2010
#: (Mohr, Taylor & Newell 2012, Rev. Mod. Phys. 84, 1527, section IV.A.1.e) used
#: B60(1S) = -81.3(0.3)(19.7) (from memory); 100 covers it with its uncertainty.
_B60_S_BOUND = 100.0
#: |B60| bound for l >= 1 (CODATA 2010 quotes values of order 0.1-1 for nP, from memory)
_B60_L_BOUND = 1.0
#: three-loop constant C40 of nS states, about -0.36 (CODATA 2010, from memory); bound 0.5
_C40_S_BOUND = 0.5
#: three-loop anomalous-moment coefficient 1.181 (a_e^(6) = 1.1812 (α/π)^3; Laporta & Remiddi
#: 1996, from memory): the magnetic part of C40 for l >= 1 is 1.181 / (2 κ (2l+1)) in size
_C40_MAG = 1.181241
#: coefficient of the first omitted one-loop term (Zα)^7 of l >= 1 states: at Z = 1 the
#: all-order G_SE(2P1/2) - A60 = 0.025 is 3.5 Zα (values of _GSE_Z1 and _A60, from memory); 5 bounds it
_A71_L_BOUND = 5.0
#: bounds on A60 for states whose constant is not tabulated (n >= 3 take the n = 2 value, l >= 2 zero):
#: |A60(1S) - A60(2S)| = 0.92 sets the scale for s; p and d constants vary by 0.2 and a few hundredths
#: (common practice, no source)
_A60_N3_BOUND = {0: 1.0, 1: 0.2}
_A60_HIGH_L_BOUND = 0.05
#: higher-order recoil: 10 % of the (Zα)^6 m_e/M scale of the recoil terms of that order
#: (common practice, no source; CODATA 2010 gives about 1 kHz for H 1S, from memory)
_RECOIL_FRACTION = 0.1
#: relative size bound of the nuclear polarisation where none is tabulated: 0.5 % of the
#: finite-size shift (H: 6e-5, D: 3e-3, U 1s about 1e-3 of it; from memory; common practice)
_NUCLEAR_POLARIZATION_FRACTION = 5e-3
#: uncertainty of the tabulated H and D polarisation shifts of 1S, Hz (see nuclear.py, from memory)
_POLARIZATION_1S_UNC_HZ = {(1, 1): 13.0, (1, 2): 80.0}
#: relative uncertainty of the fallback radius formula (tests: within 5 % of tabulated radii)
_FALLBACK_RADIUS_REL_UNC = 0.05
#: relative uncertainty of the Bethe logarithm beyond the table: the three-point extrapolation
#: reproduces the withheld n = 8 row to 3e-5 (absolute) for l <= 5; the circular-state model to 4 %
_BETHE_EXTRAPOLATION_ABS = 3e-5
_BETHE_HIGH_L_REL = 0.04

#: names of the components returned by :func:`theory_uncertainty_components_hz`
UNCERTAINTY_COMPONENTS = (
    "rydberg_constant", "two_loop", "three_loop", "one_loop_higher_order", "self_energy_constants",
    "bethe_logarithm", "vacuum_polarization", "recoil", "nuclear_radius", "nuclear_polarization",
)


def charge_radius_uncertainty_fm(z: int, mass_number: int) -> float:
    """Standard uncertainty of the rms charge radius that :func:`charge_radius_fm` returns, fm.

    CODATA (scipy.constants) for the proton and deuteron; the tabulated uncertainty of
    Angeli & Marinova 2013 (from memory) for the nuclei in the table; 5 % of the
    fallback formula's radius otherwise (the formula stays within 5 % of the tabulated
    radii, ``tests/physics/test_dirac.py``).

    Examples
    --------
    >>> round(charge_radius_uncertainty_fm(2, 4), 4)
    0.0028
    """
    z = _check_z(z)
    key = (z, int(mass_number))
    codata = {(1, 1): "proton rms charge radius", (1, 2): "deuteron rms charge radius"}
    if key in codata:
        return sc.physical_constants[codata[key]][2] * 1e15
    if key in _nuclear.ANGELI_MARINOVA_2013:
        return _nuclear.ANGELI_MARINOVA_2013[key][1]
    return _FALLBACK_RADIUS_REL_UNC * _nuclear.fallback_charge_radius_fm(int(mass_number))


def theory_uncertainty_components_hz(
    z: int,
    n,
    l,
    two_j,
    *,
    nuclear_mass_u: float,
    charge_radius_fm: float | None = None,
    charge_radius_unc_fm: float | None = None,
) -> dict[str, np.ndarray]:
    """Standard uncertainties of :func:`level_energies_hz` (all corrections on), by cause, in Hz.

    Each entry estimates the size of a term the method leaves out, or the effect of
    the uncertainty of an input, on the energy of the state measured from the
    ionization limit. Parameters are those of :func:`level_energies_hz`, plus
    ``charge_radius_unc_fm`` (default :func:`charge_radius_uncertainty_fm` for the
    radius looked up; 5 % of a radius given without one).

    Returns
    -------
    dict of str to numpy.ndarray
        Non-negative Hz, keyed as :data:`UNCERTAINTY_COMPONENTS`:

        * ``rydberg_constant``: ``u_r(R_inf) |E|`` (CODATA via scipy.constants);
        * ``two_loop``: the uncalculated B60, ``(α/π)^2 (Zα)^6/n^3 m_e c^2 |B60|`` with
          |B60| <= 100 for s states (CODATA 2010: B60(1S) = -81.3(19.7), from memory) and
          <= 1 otherwise;
        * ``three_loop``: C40, ``(α/π)^3 (Zα)^4/n^3 m_e c^2`` times 0.5 (s; CODATA 2010
          C40(nS) about -0.36, from memory) or 1.181/(2|κ|(2l+1)) (l >= 1, the
          three-loop electron anomaly);
        * ``one_loop_higher_order``: s states: the linear interpolation of the all-order
          1s remainder between its nodes (second divided difference times h^2/8) and,
          for n >= 2, 5 % of that remainder shift (at Z = 1 the 2S shift differs from the
          1S shift by 3 %); l >= 1: the first omitted order α/π (Zα)^7/n^3 m_e c^2 times 5
          (G_SE - A60 of 2P1/2 at Z = 1 is 3.5 Zα), at most half the state's one-loop
          self energy (the module's notes: tens of per cent at Z = 92);
        * ``self_energy_constants``: A60 taken from n = 2 for n >= 3 and zero for l >= 2:
          α/π (Zα)^6/n^3 m_e c^2 times 1 (s), 0.2 (p), 0.05 (l >= 2);
        * ``bethe_logarithm``: n > 8, ``4/3 α/π (Zα)^4/n^3 m_e c^2 μ^3 δ ln k0`` with
          δ ln k0 = 3e-5 (l <= 6) or 4 % (l >= 7), what the extrapolation misses on
          withheld table rows;
        * ``vacuum_polarization``: Uehling beyond (Zα)^6, the last included term
          |V60| (Zα)^6 α/π m_e c^2/n^3 times Zα (next term of a geometric series);
        * ``recoil``: ``0.1 (Zα)^6 (m_e/M) m_e c^2/n^3`` for s states, ``(Zα)^7`` for others;
        * ``nuclear_radius``: ``2 γ |E_FS| u(r)/r`` (the shift scales as r^(2γ));
        * ``nuclear_polarization``: the tabulated uncertainty for H and D, else 0.5 % of
          the finite-size shift.

        The bounds marked "common practice, no source" in the module constants are ours.

    Notes
    -----
    The components are independent and add in quadrature
    (:func:`theory_uncertainty_hz`). For states of light ions the two-loop B60 and
    the Rydberg constant dominate; at high Z the finite-order Zα expansions dominate
    and the estimate is conservative (for U91+ 1s 52 eV, mostly the Uehling and two-loop
    bounds, where the module's
    notes give a few eV of actual error).

    References
    ----------
    P. J. Mohr, B. N. Taylor and D. B. Newell, Rev. Mod. Phys. 80, 633 (2008) and
    84, 1527 (2012): the uncertainties of the theory of H and D levels (section
    IV.A.1 of each; coefficients quoted from memory).

    Examples
    --------
    >>> u = theory_uncertainty_components_hz(1, 1, 0, 1, nuclear_mass_u=1.00727646658)
    >>> 5e3 < float(u["two_loop"]) < 2e4    # Hz; B60 of hydrogen 1S is about 8 kHz
    True
    """
    z = _check_z(z)
    n_arr, l_arr, j_arr = _check_states(n, l, two_j)
    mass = _check_mass(nuclear_mass_u)
    a = int(round(mass))
    radius = _resolve_radius(z, mass, charge_radius_fm)
    if charge_radius_unc_fm is None:
        if charge_radius_fm is None:
            radius_unc = charge_radius_uncertainty_fm(z, a)
        else:
            radius_unc = _FALLBACK_RADIUS_REL_UNC * radius
    else:
        radius_unc = abs(float(charge_radius_unc_fm))
    terms = level_contributions_hz(z, n_arr, l_arr, j_arr, nuclear_mass_u=mass, charge_radius_fm=radius)
    total = cast(np.ndarray, sum(terms.values()))

    x = z * ALPHA
    nf = n_arr.astype(float)
    lf = l_arr.astype(float)
    kabs = (j_arr + 1) / 2.0
    is_s = l_arr == 0
    inv_n3 = nf**-3.0
    mu = mass / (mass + M_E_U)
    one_loop = ALPHA / _PI * x**4 * inv_n3 * MEC2_HZ  # α/π (Zα)^4/n^3 m_e c^2
    u: dict[str, np.ndarray] = {}

    u_r = sc.physical_constants["Rydberg constant"][2] / sc.physical_constants["Rydberg constant"][0]
    u["rydberg_constant"] = u_r * np.abs(total)

    u["two_loop"] = (ALPHA / _PI) * x**2 * one_loop * np.where(is_s, _B60_S_BOUND, _B60_L_BOUND)
    u["three_loop"] = (ALPHA / _PI) ** 2 * one_loop * np.where(
        is_s, _C40_S_BOUND, _C40_MAG / (2.0 * kabs * (2.0 * lf + 1.0)))

    # one loop beyond what is included
    dg_z, dg_1s = _DG_Z, _DG_1S
    slopes = np.diff(dg_1s) / np.diff(dg_z)
    i = int(np.clip(np.searchsorted(dg_z, z) - 1, 0, len(slopes) - 2))
    h = dg_z[i + 1] - dg_z[i] if z not in _F_1S_ALL_ORDER else 0.0
    second = abs(slopes[i + 1] - slopes[i]) / (dg_z[min(i + 2, len(dg_z) - 1)] - dg_z[i]) * 2.0
    interpolation = second * h * h / 8.0
    shift = abs(_self_energy_remainder_shift(z))
    s_part = interpolation + np.where(n_arr >= 2, 0.05 * shift, 0.0)
    se_state = np.abs(terms.get("self_energy", np.zeros_like(total))
                      + terms.get("self_energy_higher_order", np.zeros_like(total)))
    l_part = np.minimum(_A71_L_BOUND * x * x**2 * one_loop, 0.5 * se_state)
    u["one_loop_higher_order"] = np.where(is_s, s_part * x**2 * one_loop, l_part)

    a60 = np.where(l_arr >= 2, _A60_HIGH_L_BOUND,
                   np.where(n_arr >= 3, np.where(is_s, _A60_N3_BOUND[0], _A60_N3_BOUND[1]), 0.0))
    u["self_energy_constants"] = a60 * x**2 * one_loop

    ln_k0 = _bethe_kernel(n_arr, l_arr)
    d_lnk0 = np.where(n_arr <= _BETHE_NMAX, 0.0,
                      np.where(l_arr <= 6, _BETHE_EXTRAPOLATION_ABS, _BETHE_HIGH_L_REL * np.abs(ln_k0)))
    u["bethe_logarithm"] = 4.0 / 3.0 * mu**3 * one_loop * d_lnk0

    v60 = np.abs(_state_lookup(_V60, n_arr, l_arr, j_arr))
    u["vacuum_polarization"] = v60 * x**3 * one_loop

    u["recoil"] = _RECOIL_FRACTION * x**6 * (M_E_U / mass) * MEC2_HZ * inv_n3 * np.where(is_s, 1.0, x)

    gamma = np.sqrt(kabs**2 - x * x)
    fs = np.abs(terms.get("finite_size", np.zeros_like(total)))
    u["nuclear_radius"] = 2.0 * gamma * fs * (radius_unc / radius if radius > 0 else 0.0)
    pol_unc = _POLARIZATION_1S_UNC_HZ.get((z, a))
    u["nuclear_polarization"] = (np.where(is_s, pol_unc * inv_n3, 0.0) if pol_unc is not None
                                 else _NUCLEAR_POLARIZATION_FRACTION * fs)
    return {key: np.asarray(u[key], dtype=float) for key in UNCERTAINTY_COMPONENTS}


def theory_uncertainty_hz(z: int, n, l, two_j, *, nuclear_mass_u: float, charge_radius_fm: float | None = None,
                          charge_radius_unc_fm: float | None = None) -> np.ndarray:
    """Standard uncertainty of :func:`level_energies_hz`, in Hz: the components of
    :func:`theory_uncertainty_components_hz` added in quadrature.

    Examples
    --------
    >>> u = theory_uncertainty_hz(1, [1, 2, 2], [0, 0, 1], 1, nuclear_mass_u=1.00727646658)
    >>> bool(u[0] > u[1] > u[2])
    True
    """
    parts = theory_uncertainty_components_hz(z, n, l, two_j, nuclear_mass_u=nuclear_mass_u,
                                             charge_radius_fm=charge_radius_fm,
                                             charge_radius_unc_fm=charge_radius_unc_fm)
    return np.sqrt(sum(p**2 for p in parts.values()))


def level_uncertainties_cm1(z: int, n, l, two_j, *, nuclear_mass_u: float, charge_radius_fm: float | None = None,
                            charge_radius_unc_fm: float | None = None) -> np.ndarray:
    """Uncertainty of level energies measured from the 1s1/2 ground state, in cm-1.

    This is what a store row of :mod:`levels.physics.one_electron.hydrogenic` needs:
    ``E(state) - E(1s)``. The ground state's own uncertainty adds in quadrature for
    every state but the ground state (0 by definition); the Rydberg-constant and
    radius parts are fully correlated and so add linearly (as differences).
    ``two_j = -1`` stands for an nl term (both j merged): the larger of its two
    components' uncertainties.

    Examples
    --------
    >>> u = level_uncertainties_cm1(1, [1, 2, 2], [0, 0, 1], [1, 1, 1], nuclear_mass_u=1.00727646658)
    >>> float(u[0]), bool(1e-8 < u[2] < 1e-5)
    (0.0, True)
    """
    n_arr, l_arr, j_arr = np.broadcast_arrays(_as_int_array("n", n), _as_int_array("l", l),
                                              _as_int_array("two_j", two_j))
    merged = j_arr < 0
    lo_j = np.where(merged, np.maximum(2 * l_arr - 1, 1), j_arr)
    hi_j = np.where(merged, 2 * l_arr + 1, j_arr)
    kw: dict[str, Any] = dict(nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm,
                              charge_radius_unc_fm=charge_radius_unc_fm)
    ground = theory_uncertainty_components_hz(z, 1, 0, 1, **kw)
    e_ground = level_contributions_hz(z, 1, 0, 1, nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm)
    out = np.zeros(n_arr.shape)
    for js in (lo_j, hi_j):
        parts = theory_uncertainty_components_hz(z, n_arr, l_arr, js, **kw)
        correlated = ("rydberg_constant", "nuclear_radius")
        quad = sum(parts[k] ** 2 + ground[k] ** 2 for k in UNCERTAINTY_COMPONENTS if k not in correlated)
        e_state = cast(np.ndarray, sum(level_contributions_hz(z, n_arr, l_arr, js, nuclear_mass_u=nuclear_mass_u,
                                                              charge_radius_fm=charge_radius_fm).values()))
        u_r = sc.physical_constants["Rydberg constant"][2] / sc.physical_constants["Rydberg constant"][0]
        rydberg = u_r * np.abs(e_state - float(sum(e_ground.values())))
        radius = np.abs(parts["nuclear_radius"] - ground["nuclear_radius"])
        out = np.maximum(out, np.sqrt(quad + rydberg**2 + radius**2))
    is_ground = (n_arr == 1) & (l_arr == 0)
    return np.where(is_ground, 0.0, out) / CM1_HZ


def transition_uncertainties_cm1(z: int, n, l, two_j, upper, lower, *, nuclear_mass_u: float,
                                 charge_radius_fm: float | None = None,
                                 charge_radius_unc_fm: float | None = None) -> np.ndarray:
    """Uncertainty of the wavenumbers E(upper) - E(lower) of transitions between states, in cm-1.

    The states are given by ``n, l, two_j`` (``two_j = -1``: an nl term, each component of its
    uncertainty the larger of its two j levels'); ``upper`` and ``lower`` index them. The
    components of :func:`theory_uncertainty_components_hz` of the two states add in quadrature,
    except the Rydberg-constant and radius parts, which are fully correlated and enter as the
    difference of the two states' values: ``u_r(R_inf) |ΔE|`` and ``|u_R(upper) - u_R(lower)|``.
    Unlike differences of :func:`level_uncertainties_cm1` this does not count the ground
    state's uncertainty twice.

    Examples
    --------
    >>> u = transition_uncertainties_cm1(1, [2, 2], [0, 1], [1, 1], [0], [1], nuclear_mass_u=1.00727646658)
    >>> bool(1e-8 < u[0] < 1e-7)   # the 2S-2P1/2 Lamb shift: about 1.3 kHz
    True
    """
    n_arr, l_arr, j_arr = np.broadcast_arrays(_as_int_array("n", n), _as_int_array("l", l),
                                              _as_int_array("two_j", two_j))
    up, lo = np.asarray(upper, dtype=np.int64), np.asarray(lower, dtype=np.int64)
    merged = j_arr < 0
    kw: dict[str, Any] = dict(nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm,
                              charge_radius_unc_fm=charge_radius_unc_fm)
    parts_lo = theory_uncertainty_components_hz(z, n_arr, l_arr, np.where(merged, np.maximum(2 * l_arr - 1, 1), j_arr),
                                                **kw)
    parts_hi = theory_uncertainty_components_hz(z, n_arr, l_arr, np.where(merged, 2 * l_arr + 1, j_arr), **kw)
    parts = {k: np.maximum(parts_lo[k], parts_hi[k]) for k in UNCERTAINTY_COMPONENTS}
    energy = level_energies_hz(z, n_arr, l_arr, np.where(merged, 2 * l_arr + 1, j_arr),
                               nuclear_mass_u=nuclear_mass_u, charge_radius_fm=charge_radius_fm)
    u_r = sc.physical_constants["Rydberg constant"][2] / sc.physical_constants["Rydberg constant"][0]
    quad = sum(parts[k][up] ** 2 + parts[k][lo] ** 2 for k in UNCERTAINTY_COMPONENTS
               if k not in ("rydberg_constant", "nuclear_radius"))
    correlated = (u_r * (energy[up] - energy[lo])) ** 2 + (parts["nuclear_radius"][up]
                                                          - parts["nuclear_radius"][lo]) ** 2
    return np.sqrt(quad + correlated) / CM1_HZ
