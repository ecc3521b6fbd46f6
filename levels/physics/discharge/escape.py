"""Escape factors of resonance radiation: Holstein transmission and mean escape from a slab or cylinder.

A line photon emitted with the line's own profile phi(x) crosses an absorbing
path of line-centre optical depth tau with probability (Holstein's transmission
factor)

.. math:: T(\\tau) = \\int \\phi(x)\\,\\exp\\!\\left[-\\tau\\,\\phi(x)/\\phi(0)\\right] dx,

whose large-tau limits Holstein gave: :math:`1/(\\tau\\sqrt{\\pi\\ln\\tau})` for a
Doppler core and :math:`1/\\sqrt{\\pi\\tau}` for a Lorentz (impact-broadened) core.

For a homogeneous body emitting uniformly and isotropically, the probability that
a photon of absorption coefficient kappa escapes without being absorbed follows
from the distribution of chord lengths l of isotropic (mu-random) lines through the
body (Dirac 1943):

.. math:: P(\\kappa) = \\frac{\\langle 1 - e^{-\\kappa l}\\rangle}{\\kappa\\langle l\\rangle},
   \\qquad \\langle l\\rangle = 4V/S \\ \\text{(Cauchy)},

which for a slab of thickness L is (1/2 - E_3(T))/T with T = kappa L, and for an
infinite cylinder of radius R (T = kappa R, chords 2 R (1 - b^2)^{1/2} / sin theta,
b uniform, theta weighted by sin^2 theta) is evaluated by quadrature. The line's
mean (first-flight) escape factor is the profile average of P, as in Irons (1979):

.. math:: \\Lambda(\\tau_0) = \\int \\phi(x)\\,P\\!\\left(\\tau_0\\,\\phi(x)/\\phi(0)\\right) dx,

tau0 the line-centre optical depth across the slab thickness or the cylinder
radius. Doppler cores use phi = e^{-x^2}/sqrt(pi); Voigt cores the Voigt profile
of damping a (Lorentz half width over the Doppler 1/e half width).

References
----------
.. [1] T. Holstein, "Imprisonment of resonance radiation in gases", Phys. Rev. 72,
   1212-1233 (1947); Phys. Rev. 83, 1159-1168 (1951).
.. [2] F. E. Irons, "The escape factor in plasma spectroscopy - I. The escape
   factor defined and evaluated", J. Quant. Spectrosc. Radiat. Transfer 22, 1-20 (1979).
.. [3] P. A. M. Dirac, "Approximate rate of neutron multiplication for a solid of
   arbitrary shape and uniform density", British report MS-D-5 (1943) (chord method);
   A. Cauchy's mean-chord theorem.
"""

from __future__ import annotations

import math
from functools import lru_cache
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import expn, voigt_profile

from levels.errors import PhysicsInputError
from levels.physics.discharge.common import as_nonnegative

__all__ = ["GEOMETRIES", "PROFILES", "transmission_factor", "holstein_asymptote", "geometric_escape",
           "mean_escape_factor", "voigt_core"]

GEOMETRIES = ("slab", "cylinder")
PROFILES = ("doppler", "lorentz", "voigt")

_SQRT_PI = math.sqrt(math.pi)
#: profile nodes: 240 linear in |x| <= 6 Doppler units, 240 geometric beyond, to the wing limit
_N_CORE, _N_WING = 240, 240
_CHUNK = 4096


def _profile(x: NDArray[np.float64], profile: str, damping: NDArray[np.float64]) -> NDArray[np.float64]:
    if profile == "doppler":
        return np.exp(-(x * x)) / _SQRT_PI
    if profile == "lorentz":
        return 1.0 / (math.pi * (1.0 + x * x))
    return voigt_profile(x, 1.0 / math.sqrt(2.0), damping)


def _simpson(n: int) -> NDArray[np.float64]:
    """Simpson weights of n (odd) equally spaced nodes of unit spacing."""
    w = np.ones(n)
    w[1:-1:2] = 4.0
    w[2:-1:2] = 2.0
    return w / 3.0


def _nodes(x_max: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Per-row x nodes on [0, x_max] (linear core to 6, geometric wing beyond) and Simpson weights.

    The wing is integrated in t with x = 6 (x_max/6)^t, dx = x ln(x_max/6) dt.
    """
    m = x_max.size
    core = np.linspace(0.0, 6.0, _N_CORE + 1)
    w_core = _simpson(_N_CORE + 1) * (6.0 / _N_CORE)
    top = np.maximum(x_max, 6.0)
    t = np.linspace(0.0, 1.0, _N_WING + 1)[1:]
    log_ratio = np.log(top / 6.0)
    wing = 6.0 * np.exp(np.outer(log_ratio, t))
    w_t = _simpson(_N_WING + 1) / _N_WING
    w_wing = wing * log_ratio[:, None] * w_t[None, 1:]
    x = np.concatenate([np.broadcast_to(core, (m, core.size)), wing], axis=1)
    w = np.concatenate([np.broadcast_to(w_core, (m, core.size)).copy(), w_wing], axis=1)
    # the wing's first node (x = 6) is the core's last: its Simpson end weight goes onto that node
    w[:, _N_CORE] += 6.0 * log_ratio * w_t[0]
    return x, 2.0 * w  # symmetric profile: twice the half line


def _check(profile: str, tau: ArrayLike, damping: ArrayLike):
    if profile not in PROFILES:
        raise PhysicsInputError(f"unknown line profile {profile!r}; expected one of {', '.join(PROFILES)}")
    t = np.atleast_1d(as_nonnegative("tau0", tau)).astype(float)
    a = np.broadcast_to(as_nonnegative("damping", damping), t.shape).astype(float)
    return t, a


def _x_max(tau: NDArray[np.float64], profile: str, a: NDArray[np.float64]) -> NDArray[np.float64]:
    """Half width of the integration: beyond it the absorber is thin (tau phi/phi0 < ~1e-8)."""
    dopp = np.sqrt(np.log(np.maximum(tau, 1.0)) + 20.0)
    if profile == "doppler":
        return dopp
    lor_a = np.ones_like(tau) if profile == "lorentz" else np.maximum(a, 1e-300)
    return np.maximum(np.maximum(dopp, 1e3), np.sqrt(tau * lor_a * 1e8 + 1.0))


def _average(tau: NDArray[np.float64], profile: str, a: NDArray[np.float64], kernel) -> NDArray[np.float64]:
    out = np.empty_like(tau)
    for s in range(0, tau.size, _CHUNK):
        tt, aa = tau[s:s + _CHUNK], a[s:s + _CHUNK]
        x_max = np.maximum(_x_max(tt, profile, aa), 6.0)
        x, w = _nodes(x_max)
        phi = _profile(x, profile, aa[:, None])
        phi0 = _profile(np.zeros((tt.size, 1)), profile, aa[:, None])
        inside = np.sum(w * phi * kernel(tt[:, None] * phi / phi0), axis=1)
        # the far wings beyond x_max are optically thin: their weight escapes (kernel -> 1)
        tail: Any
        if profile == "doppler":
            tail = 0.0
        else:
            lor = np.where(aa > 0, aa, 0.0) if profile == "voigt" else np.ones_like(tt)
            tail = 2.0 / math.pi * np.arctan(lor / x_max)
        out[s:s + _CHUNK] = inside + tail
    return out


def transmission_factor(tau: ArrayLike, profile: str = "doppler", damping: ArrayLike = 0.0) -> NDArray[np.float64]:
    """Holstein's transmission factor T(tau) of a line photon over a path of centre optical depth tau.

    Parameters
    ----------
    tau : array_like
        Line-centre optical depth of the path (>= 0).
    profile : {"doppler", "lorentz", "voigt"}
        Line profile (emission and absorption alike).
    damping : array_like
        Voigt damping a (Lorentz HWHM over the Doppler 1/e half width); only for ``"voigt"``.

    Returns
    -------
    numpy.ndarray
        T (dimensionless, 1 for tau = 0).

    Raises
    ------
    PhysicsInputError
        Negative tau or damping, unknown profile.

    References
    ----------
    T. Holstein, Phys. Rev. 72, 1212 (1947).

    Examples
    --------
    >>> [round(float(t), 4) for t in transmission_factor([0.0, 1.0])]
    [1.0, 0.5139]
    """
    tau_a, a = _check(profile, tau, damping)
    return _average(tau_a, profile, a, lambda u: np.exp(-u)).reshape(np.shape(tau))


def holstein_asymptote(tau: ArrayLike, profile: str = "doppler") -> NDArray[np.float64]:
    """Holstein's large-tau form of the transmission factor.

    Parameters
    ----------
    tau : array_like
        Line-centre optical depth (> 1).
    profile : {"doppler", "lorentz"}

    Returns
    -------
    numpy.ndarray
        1 / (tau sqrt(pi ln tau)) (Doppler) or 1 / sqrt(pi tau) (Lorentz).

    References
    ----------
    T. Holstein, Phys. Rev. 72, 1212 (1947).

    Examples
    --------
    >>> round(float(holstein_asymptote(1e4, "lorentz")) * 1e3, 3)
    5.642
    """
    t = np.asarray(tau, dtype=float)
    if not np.all(np.isfinite(t)) or np.any(t <= 1.0):
        raise PhysicsInputError("the asymptotic form needs tau > 1")
    if profile == "doppler":
        return 1.0 / (t * np.sqrt(math.pi * np.log(t)))
    if profile == "lorentz":
        return 1.0 / np.sqrt(math.pi * t)
    raise PhysicsInputError(f"Holstein's asymptotic forms are for 'doppler' or 'lorentz', not {profile!r}")


@lru_cache(maxsize=1)
def _cylinder_table() -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """log10 T grid and P_cyl(T) by the chord method (64 x 64 Gauss-Legendre nodes)."""
    xg, wg = np.polynomial.legendre.leggauss(64)
    u = 0.25 * math.pi * (xg + 1.0)           # b = sin u, u in [0, pi/2]
    wu = 0.25 * math.pi * wg
    th = 0.25 * math.pi * (xg + 1.0)          # theta in [0, pi/2]
    wth = 0.25 * math.pi * wg * np.sin(th) ** 2 / (math.pi / 4.0)
    chord = 2.0 * np.cos(u)[:, None] / np.sin(th)[None, :]           # in units of R
    weight = (wu * np.cos(u))[:, None] * wth[None, :]               # db = cos u du, b uniform on [0, 1]
    log_t = np.linspace(-6.0, 9.0, 601)
    t = 10.0**log_t
    mean_chord = float(np.sum(weight * chord))                       # 2 (Cauchy: 4V/S = 2R)
    absorbed = -np.expm1(-t[:, None, None] * chord[None])
    p = np.sum(weight[None] * absorbed, axis=(1, 2)) / (t * mean_chord)
    return log_t, p


def geometric_escape(kappa_size: ArrayLike, geometry: str = "slab") -> NDArray[np.float64]:
    """Mean escape probability of photons of one absorption coefficient from a uniform body.

    Parameters
    ----------
    kappa_size : array_like
        kappa L (slab thickness L) or kappa R (cylinder radius R), >= 0.
    geometry : {"slab", "cylinder"}

    Returns
    -------
    numpy.ndarray
        P (dimensionless): 1 when thin, 1 / (kappa <l>) when thick, <l> = 2L or 2R.

    References
    ----------
    P. A. M. Dirac (1943) chord method; F. E. Irons, JQSRT 22, 1 (1979).

    Examples
    --------
    >>> [round(float(p), 4) for p in geometric_escape([0.0, 1.0], "slab")]
    [1.0, 0.3903]
    """
    t = np.atleast_1d(as_nonnegative("kappa_size", kappa_size)).astype(float)
    if geometry == "slab":
        out = np.ones_like(t)
        small = t < 1e-6
        out[small] = 1.0 - 0.5 * t[small] * (1.5 - np.euler_gamma - np.log(np.maximum(t[small], 1e-300)))
        big = ~small
        out[big] = (0.5 - expn(3, t[big])) / t[big]
    elif geometry == "cylinder":
        log_t, p = _cylinder_table()
        lt = np.log10(np.maximum(t, 1e-300))
        out = np.interp(lt, log_t, p)
        out = np.where(t <= 10.0 ** log_t[0], 1.0 - (1.0 - p[0]) * t / 10.0 ** log_t[0], out)
        out = np.where(lt > log_t[-1], 0.5 / np.maximum(t, 1e-300), out)
    else:
        raise PhysicsInputError(f"unknown geometry {geometry!r}; expected 'slab' or 'cylinder'")
    return out.reshape(np.shape(kappa_size))


def mean_escape_factor(tau0: ArrayLike, geometry: str = "slab", profile: str = "doppler",
                       damping: ArrayLike = 0.0) -> NDArray[np.float64]:
    """Mean escape factor of a line from a uniform slab or cylinder (first flight, Irons 1979).

    Parameters
    ----------
    tau0 : array_like
        Line-centre optical depth across the slab thickness or the cylinder radius (>= 0).
    geometry : {"slab", "cylinder"}
    profile : {"doppler", "voigt", "lorentz"}
    damping : array_like
        Voigt damping a, for ``"voigt"``.

    Returns
    -------
    numpy.ndarray
        Lambda (dimensionless, 1 when optically thin); the line's net radiative rate is Lambda A.

    Raises
    ------
    PhysicsInputError
        Negative optical depth, unknown geometry or profile.

    References
    ----------
    F. E. Irons, JQSRT 22, 1 (1979); T. Holstein, Phys. Rev. 72, 1212 (1947).

    Examples
    --------
    >>> [round(float(p), 4) for p in mean_escape_factor([0.0, 1.0, 10.0])]
    [1.0, 0.4984, 0.1017]
    """
    if geometry not in GEOMETRIES:
        raise PhysicsInputError(f"unknown geometry {geometry!r}; expected 'slab' or 'cylinder'")
    tau_a, a = _check(profile, tau0, damping)
    return _average(tau_a, profile, a, lambda u: geometric_escape(u, geometry)).reshape(np.shape(tau0))


def voigt_core(doppler_fwhm: ArrayLike, lorentz_fwhm: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Voigt damping a and the ratio of the Voigt to the Doppler line-centre profile value.

    Parameters
    ----------
    doppler_fwhm, lorentz_fwhm : array_like
        Gaussian (Doppler) and Lorentzian FWHM in one unit (> 0 and >= 0).

    Returns
    -------
    (a, ratio) : tuple of numpy.ndarray
        a = Lorentz HWHM over the Doppler 1/e half width; ratio = phi_V(0) / phi_D(0) (<= 1), which turns
        a Doppler line-centre optical depth into the Voigt one.

    Examples
    --------
    >>> a, r = voigt_core([1.0, 1.0], [0.0, 1e-3])
    >>> [round(float(x), 5) for x in a], [round(float(x), 5) for x in r]
    ([0.0, 0.00083], [1.0, 0.99906])
    """
    fd = np.asarray(doppler_fwhm, dtype=float)
    fl = as_nonnegative("lorentz_fwhm", lorentz_fwhm)
    if not np.all(np.isfinite(fd)) or np.any(fd <= 0):
        raise PhysicsInputError("doppler_fwhm must be finite and > 0")
    width = fd / (2.0 * math.sqrt(math.log(2.0)))          # Doppler 1/e half width
    a = (fl / 2.0) / width
    ratio = voigt_profile(0.0, 1.0 / math.sqrt(2.0), a) * _SQRT_PI
    return np.asarray(a), np.asarray(ratio)

