"""Slater-Condon theory of a configuration with an open core and one outer electron.

The method of Condon & Shortley, *The Theory of Atomic Spectra* (Cambridge
University Press, 1935), chapters VI and VII, and Cowan, *The Theory of Atomic
Structure and Spectra* (University of California Press, 1981), chapters 6, 11
and 13: the states of a configuration are expanded in Slater determinants of
one-electron spin-orbitals ``|n l m_l m_s>``; the electrostatic interaction
between the open subshells is a sum of direct (F^k) and exchange (G^k) Slater
integrals with angular coefficients ``c^k(l m, l' m')`` (Condon & Shortley's
c^k, Cowan eq. 11.23), the spin-orbit interaction of each open subshell is
``zeta_nl sum_i l_i . s_i``. Matrix elements between determinants follow the
Slater-Condon rules (Cowan 1981, sec. 6-2).

Treated here (``two open subshells``):

* an open core with one electron or one hole (``ns``, ``np5``, ``nd9``, ...) plus
  one outer electron (``n'l'``): the noble-gas ``np5 n'l'``, the group-2/12
  ``ns n'l'``, the ``nd9 n'l'`` configurations;
* a configuration with one open subshell of one electron or one hole
  (``np5`` of an ion, ``ns`` of an alkali-like spectrum);
* a closed-shell configuration (one ``1S0`` state), needed as the lower level of
  resonance lines.

Interactions with closed subshells and within an open subshell holding one
electron or one hole are the same for every state of the configuration and go
into the configuration's average energy ``E0``.

The eigenstates of the angular-momentum operators L^2, S^2, J^2 (LS coupling)
and J_core^2, K^2 = (J_core + l_outer)^2 (jK coupling, Racah 1942, Phys. Rev. 61,
537) are formed in the determinant space of M_J = J, so a state of any coupling is
a vector over the same determinants and E1 matrix elements between two
configurations are taken between determinants directly (one-electron jump).
"""

from __future__ import annotations

import functools
import itertools
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from levels.errors import PhysicsInputError
from levels.physics.many_electron.angular import ck_coefficient, wigner_3j

__all__ = [
    "OpenShells",
    "ConfigurationModel",
    "JSubspace",
    "configuration_model",
    "transition_amplitudes",
    "open_shells",
]

#: arbitrary weight mixing two commuting squares into one matrix whose eigenvectors are common to both
_MIX = 0.3713


@dataclass(frozen=True)
class OpenShells:
    """Open subshells of a configuration: ``((n, l, occupancy), ...)`` in written order (the core first)."""

    shells: tuple[tuple[int, int, int], ...]
    #: every subshell written in the configuration (closed ones too), sorted by (n, l)
    written: tuple[tuple[int, int, int], ...] = ()

    @property
    def nl(self) -> tuple[tuple[int, int], ...]:
        return tuple((n, l) for n, l, _ in self.shells)


def open_shells(subshells: tuple[tuple[int, int, int], ...]) -> OpenShells:
    """The open subshells (neither empty nor full) of ``(n, l, occupancy)`` triples, in written order.

    The first open subshell written is the core (``5p5.4f``: the 5p hole is the core,
    4f the outer electron, although 4f has the lower n).

    Examples
    --------
    >>> open_shells(((1, 0, 2), (2, 0, 2), (2, 1, 5), (3, 1, 1))).shells
    ((2, 1, 5), (3, 1, 1))
    >>> open_shells(((5, 1, 5), (4, 3, 1))).shells
    ((5, 1, 5), (4, 3, 1))
    """
    return OpenShells(tuple((n, l, k) for n, l, k in subshells if 0 < k < 4 * l + 2),
                      tuple(sorted(subshells)))


def _orbitals(nl: tuple[tuple[int, int], ...]) -> tuple[NDArray[np.int64], NDArray[np.int64], NDArray[np.int64]]:
    """Spin-orbitals of subshells in order: (shell index, m_l, 2 m_s) arrays."""
    sh, ml, ms = [], [], []
    for index, (_, l) in enumerate(nl):
        for m in range(-l, l + 1):
            for two_ms in (-1, 1):
                sh.append(index)
                ml.append(m)
                ms.append(two_ms)
    return np.array(sh, dtype=np.int64), np.array(ml, dtype=np.int64), np.array(ms, dtype=np.int64)


def _apply(ops: tuple[tuple[str, int], ...], det: tuple[int, ...]) -> tuple[int, tuple[int, ...]] | None:
    """Apply creation ('c') / annihilation ('a') operators right to left to a sorted determinant."""
    occupied = list(det)
    sign = 1
    for kind, orbital in reversed(ops):
        if kind == "a":
            if orbital not in occupied:
                return None
            position = occupied.index(orbital)
            occupied.pop(position)
        else:
            if orbital in occupied:
                return None
            position = sum(1 for o in occupied if o < orbital)
            occupied.insert(position, orbital)
        if position % 2:
            sign = -sign
    return sign, tuple(occupied)


@dataclass
class _Basis:
    """Determinants of the open subshells of one configuration (any l, any (n, l) labels)."""

    ls: tuple[int, ...]
    occupancy: tuple[int, ...]
    sh: NDArray[np.int64]
    ml: NDArray[np.int64]
    ms: NDArray[np.int64]
    dets: list[tuple[int, ...]]
    two_m: NDArray[np.int64]
    index: dict[tuple[int, ...], int] = field(default_factory=dict)

    def one_body(self, h: NDArray[np.float64]) -> NDArray[np.float64]:
        """Matrix <I|sum_pq h[p,q] a+_p a_q|J> over the determinants (h may be stacked: (..., N, N))."""
        out = np.zeros(h.shape[:-2] + (len(self.dets), len(self.dets)))
        nonzero = np.argwhere(np.any(h.reshape(-1, *h.shape[-2:]) != 0, axis=0))
        for j, det in enumerate(self.dets):
            occupied = set(det)
            for p, q in nonzero:
                if q not in occupied:
                    continue
                result = _apply((("c", int(p)), ("a", int(q))), det)
                if result is None:
                    continue
                sign, new = result
                i = self.index.get(new)
                if i is not None:
                    out[..., i, j] += sign * h[..., p, q]
        return out

    def two_body(self, g: NDArray[np.float64]) -> NDArray[np.float64]:
        """Slater-Condon matrix of (1/2) sum <ab|g|cd> a+_a a+_b a_d a_c; g stacked (P, N, N, N, N)."""
        anti = g - g.swapaxes(-1, -2)       # <ab||cd>
        n_det = len(self.dets)
        out = np.zeros((g.shape[0], n_det, n_det))
        sets = [set(d) for d in self.dets]
        for i, det_i in enumerate(self.dets):
            for j in range(i, n_det):
                det_j = self.dets[j]
                if self.two_m[i] != self.two_m[j]:
                    continue
                only_i = sorted(sets[i] - sets[j])
                if len(only_i) > 2:
                    continue
                only_j = sorted(sets[j] - sets[i])
                value: NDArray[np.float64] | float     # one value per stacked operator, or 0 for all
                if not only_i:
                    occ = list(det_i)
                    value = 0.5 * anti[:, occ][:, :, occ][:, :, :, occ][..., occ]
                    value = np.einsum("pabab->p", value)
                elif len(only_i) == 1:
                    a, c = only_i[0], only_j[0]
                    sign = (-1) ** (det_i.index(a) + det_j.index(c))
                    common = sorted(sets[i] & sets[j])
                    value = sign * anti[:, a, common, c, common].sum(axis=-1) if common else 0.0
                else:
                    a, b = only_i
                    c, d = only_j
                    sign = (-1) ** (det_i.index(a) + det_i.index(b) + det_j.index(c) + det_j.index(d))
                    value = sign * anti[:, a, b, c, d]
                out[:, i, j] = value
                out[:, j, i] = value
        return out


def _basis(ls: tuple[int, ...], occupancy: tuple[int, ...]) -> _Basis:
    nl = tuple((index, l) for index, l in enumerate(ls))
    sh, ml, ms = _orbitals(nl)
    per_shell = []
    for index, k in enumerate(occupancy):
        orbitals = np.flatnonzero(sh == index).tolist()
        per_shell.append(list(itertools.combinations(orbitals, k)))
    dets = [tuple(sorted(itertools.chain.from_iterable(choice))) for choice in itertools.product(*per_shell)]
    two_m = np.array([int(np.sum(2 * ml[list(d)] + ms[list(d)])) if d else 0 for d in dets], dtype=np.int64)
    basis = _Basis(ls, occupancy, sh, ml, ms, dets, two_m)
    basis.index = {d: i for i, d in enumerate(dets)}
    return basis


@functools.lru_cache(maxsize=64)
def _ck_table(l1: int, k: int, l2: int) -> NDArray[np.float64]:
    table = np.zeros((2 * l1 + 1, 2 * l2 + 1))
    for m1 in range(-l1, l1 + 1):
        for m2 in range(-l2, l2 + 1):
            table[m1 + l1, m2 + l2] = ck_coefficient(l1, m1, k, l2, m2)
    return table


def _coulomb_tensor(basis: _Basis, kind: str, k: int) -> NDArray[np.float64]:
    """Angular coefficient of F^k ('F') or G^k ('G') between shells 0 and 1 in <ab|g|cd>."""
    sh, ml, ms, ls = basis.sh, basis.ml, basis.ms, basis.ls
    n = len(sh)
    a, b, c, d = np.meshgrid(*(np.arange(n),) * 4, indexing="ij")
    if kind == "F":
        geometry = (sh[a] == sh[c]) & (sh[b] == sh[d]) & (sh[a] != sh[b])
    else:
        geometry = (sh[a] == sh[d]) & (sh[b] == sh[c]) & (sh[a] != sh[b])
    keep = geometry & (ms[a] == ms[c]) & (ms[b] == ms[d]) & (ml[a] + ml[b] == ml[c] + ml[d])
    out = np.zeros((n, n, n, n))
    for ia, ib, ic, id_ in np.argwhere(keep):
        la, lb, lc, ld = ls[sh[ia]], ls[sh[ib]], ls[sh[ic]], ls[sh[id_]]
        out[ia, ib, ic, id_] = (_ck_table(la, k, lc)[ml[ia] + la, ml[ic] + lc]
                                * _ck_table(ld, k, lb)[ml[id_] + ld, ml[ib] + lb])
    return out


def _single_particle(basis: _Basis) -> dict[str, NDArray[np.float64]]:
    """One-electron matrices over spin-orbitals: lz, l+, sz, s+ per shell (stacked on a first axis)."""
    sh, ml, ms, ls = basis.sh, basis.ml, basis.ms, basis.ls
    n = len(sh)
    n_shell = len(ls)
    lz = np.zeros((n_shell, n, n))
    lp = np.zeros((n_shell, n, n))
    sz = np.zeros((n_shell, n, n))
    sp = np.zeros((n_shell, n, n))
    for p in range(n):
        s = sh[p]
        l = ls[s]
        lz[s, p, p] = ml[p]
        sz[s, p, p] = ms[p] / 2
        for q in range(n):
            if sh[q] != s:
                continue
            if ms[p] == ms[q] and ml[p] == ml[q] + 1:
                lp[s, p, q] = np.sqrt(l * (l + 1) - ml[q] * (ml[q] + 1))
            if ml[p] == ml[q] and ms[p] == 1 and ms[q] == -1:
                sp[s, p, q] = 1.0
    return {"lz": lz, "lp": lp, "sz": sz, "sp": sp}


def _square(z: NDArray[np.float64], plus: NDArray[np.float64]) -> NDArray[np.float64]:
    minus = plus.T
    return z @ z + 0.5 * (plus @ minus + minus @ plus)


@dataclass
class JSubspace:
    """States of one J of a configuration (determinants with M_J = J).

    Attributes
    ----------
    two_j : int
        2J.
    det_index : ndarray of int
        Indices of the configuration's determinants with 2M = 2J.
    basis : ndarray, shape (n_det, n_state)
        Orthonormal vectors of total J (columns) over those determinants.
    ls_vectors : ndarray, shape (n_state, n_state)
        LS-coupled states in ``basis`` coordinates (columns).
    ls_labels : list of (two_s, L)
    jk_vectors : ndarray, shape (n_state, n_state)
        jK-coupled states (core total angular momentum j_core, then K) in ``basis`` coordinates.
    jk_labels : list of (two_j_core, two_k)
    matrices : ndarray, shape (n_param, n_state, n_state)
        Angular coefficient matrices of the non-constant parameters in ``basis`` coordinates.
    """

    two_j: int
    det_index: NDArray[np.int64]
    basis: NDArray[np.float64]
    ls_vectors: NDArray[np.float64]
    ls_labels: list[tuple[int, int]]
    jk_vectors: NDArray[np.float64]
    jk_labels: list[tuple[int, int]]
    matrices: NDArray[np.float64]


@dataclass
class ConfigurationModel:
    """Angular structure of a configuration: parameters and the states of every J.

    ``parameters`` names the radial parameters after the constant ``E0``:
    ``F2``, ``G1``, ... (between the two open subshells) and ``zeta_core``,
    ``zeta_outer`` (spin-orbit of each open subshell with l > 0), in that order.
    """

    shells: OpenShells
    parameters: tuple[str, ...]
    subspaces: dict[int, JSubspace]
    dets: list[tuple[int, ...]]
    ls_of_shells: tuple[int, ...]

    @property
    def n_states(self) -> int:
        """Number of levels (J-multiplets) of the configuration."""
        return sum(s.basis.shape[1] for s in self.subspaces.values())


def _rounded_j(value: float) -> int:
    """2j from an expectation value j(j+1)."""
    return int(round(np.sqrt(4.0 * max(value, 0.0) + 1.0) - 1.0))


def _common_eigenvectors(a: NDArray[np.float64], b: NDArray[np.float64]) -> tuple[NDArray[np.float64], list]:
    """Common eigenvectors of two commuting symmetric matrices, ordered, with rounded labels."""
    _, vectors = np.linalg.eigh(a + _MIX * b)
    labels = []
    for k in range(vectors.shape[1]):
        v = vectors[:, k]
        labels.append((_rounded_j(float(v @ a @ v)), _rounded_j(float(v @ b @ v))))
        pivot = np.argmax(np.abs(v))
        if v[pivot] < 0:
            vectors[:, k] = -v
    order = sorted(range(len(labels)), key=lambda k: labels[k])
    return vectors[:, order], [labels[k] for k in order]


@functools.lru_cache(maxsize=64)
def _model(ls: tuple[int, ...], occupancy: tuple[int, ...]) -> tuple:
    if not ls:      # closed shells: one state, 1S0
        unit = np.ones((1, 1))
        return (), {0: JSubspace(0, np.array([0]), unit, unit.copy(), [(0, 0)], unit.copy(), [(0, 0)],
                                 np.zeros((0, 1, 1)))}, [()]
    basis = _basis(ls, occupancy)
    ops = _single_particle(basis)
    one = {name: basis.one_body(matrix) for name, matrix in ops.items()}   # (n_shell, n_det, n_det)
    names: list[str] = []
    mats: list[NDArray[np.float64]] = []
    if len(ls) == 2:
        l1, l2 = ls
        f_ks = [k for k in range(2, 2 * min(l1, l2) + 1, 2)]
        g_ks = [k for k in range(abs(l1 - l2), l1 + l2 + 1, 2)]
        tensors = [_coulomb_tensor(basis, "F", k) for k in f_ks] + [_coulomb_tensor(basis, "G", k) for k in g_ks]
        names += [f"F{k}" for k in f_ks] + [f"G{k}" for k in g_ks]
        if tensors:
            mats.extend(list(basis.two_body(np.array(tensors))))
    for index, l in enumerate(ls):
        if l == 0:
            continue
        # l.s summed over the subshell's electrons: a one-electron operator, so build it from
        # single-particle l.s (not from products of the many-electron components)
        single = ops["lz"][index] @ ops["sz"][index] + 0.5 * (ops["lp"][index] @ ops["sp"][index].T
                                                             + ops["lp"][index].T @ ops["sp"][index])
        mats.append(basis.one_body(single))
        names.append("zeta_core" if (len(ls) == 2 and index == 0) else ("zeta_outer" if len(ls) == 2 else "zeta"))
    total = {key: one[key].sum(axis=0) for key in one}
    l_sq = _square(total["lz"], total["lp"])
    s_sq = _square(total["sz"], total["sp"])
    jz, jp = total["lz"] + total["sz"], total["lp"] + total["sp"]
    j_sq = _square(jz, jp)
    if len(ls) == 2:
        core_z, core_p = one["lz"][0] + one["sz"][0], one["lp"][0] + one["sp"][0]
        k_z, k_p = core_z + one["lz"][1], core_p + one["lp"][1]
        jc_sq = _square(core_z, core_p)
        k_sq = _square(k_z, k_p)
    else:
        jc_sq = j_sq
        k_sq = j_sq
    subspaces: dict[int, JSubspace] = {}
    two_js = sorted({int(m) for m in basis.two_m if m >= 0})
    for two_j in two_js:
        idx = np.flatnonzero(basis.two_m == two_j)
        sub = j_sq[np.ix_(idx, idx)]
        values, vectors = np.linalg.eigh(sub)
        keep = np.abs(values - two_j * (two_j + 2) / 4.0) < 1e-6
        if not np.any(keep):
            continue
        v_j = vectors[:, keep]
        ls_vec, ls_lab = _common_eigenvectors(v_j.T @ s_sq[np.ix_(idx, idx)] @ v_j,
                                              v_j.T @ l_sq[np.ix_(idx, idx)] @ v_j)
        jk_vec, jk_lab = _common_eigenvectors(v_j.T @ jc_sq[np.ix_(idx, idx)] @ v_j,
                                              v_j.T @ k_sq[np.ix_(idx, idx)] @ v_j)
        ls_lab = [(two_s, two_l // 2) for two_s, two_l in ls_lab]
        mat_j = (np.array([v_j.T @ m[np.ix_(idx, idx)] @ v_j for m in mats]) if mats
                 else np.zeros((0,) + (v_j.shape[1],) * 2))
        subspaces[two_j] = JSubspace(two_j, idx, v_j, ls_vec, ls_lab, jk_vec, jk_lab, mat_j)
    return tuple(names), subspaces, basis.dets


def configuration_model(shells: OpenShells) -> ConfigurationModel:
    """Build the angular structure of a configuration with at most two open subshells.

    Parameters
    ----------
    shells : OpenShells
        Open subshells; each must hold one electron or one hole (``ns``, ``np``, ``np5``,
        ``nd9``, ...); none (closed shells) gives the single ``1S0`` state.

    Returns
    -------
    ConfigurationModel

    Raises
    ------
    PhysicsInputError
        For more than two open subshells or an open subshell with two or more electrons
        and two or more holes (for example ``2p2`` or ``3d5``).

    Examples
    --------
    >>> model = configuration_model(open_shells(((6, 0, 1), (6, 1, 1))))
    >>> model.parameters, model.n_states
    (('G1', 'zeta_outer'), 4)
    >>> sorted(model.subspaces[2].ls_labels)      # J = 1: 1P1 and 3P1
    [(0, 1), (2, 1)]
    """
    if len(shells.shells) > 2:
        raise PhysicsInputError(f"{len(shells.shells)} open subshells; the method takes at most two")
    for n, l, k in shells.shells:
        if k not in (1, 4 * l + 1):
            raise PhysicsInputError(f"subshell n={n} l={l} holds {k} electrons; the method takes one electron "
                                    "or one hole per open subshell")
    ls = tuple(l for _, l, _ in shells.shells)
    occupancy = tuple(k for _, _, k in shells.shells)
    names, subspaces, dets = _model(ls, occupancy)
    return ConfigurationModel(shells, names, subspaces, dets, ls)


def transition_amplitudes(upper: ConfigurationModel, lower: ConfigurationModel, two_j_upper: int,
                          two_j_lower: int, vectors_upper: NDArray[np.float64],
                          vectors_lower: NDArray[np.float64]) -> NDArray[np.float64] | None:
    """Reduced E1 matrix elements <upper J||C^1||lower J'> between eigenstates, in units of the radial integral.

    Parameters
    ----------
    upper, lower : ConfigurationModel
        Two configurations that differ by one electron moved between subshells of l and l +- 1.
    two_j_upper, two_j_lower : int
        2J of the two subspaces.
    vectors_upper, vectors_lower : ndarray
        States (columns) in the coordinates of each subspace's ``basis``.

    Returns
    -------
    ndarray, shape (n_upper, n_lower), or None
        The reduced elements; multiply by <n l|r|n' l'> (a0) for the dipole (e a0). Their
        squares are line strengths per squared radial integral. ``None`` when the two
        configurations do not differ by one E1 jump (no line in this approximation).
    """
    jump = _jump(upper.shells, lower.shells)
    if jump is None or abs(two_j_upper - two_j_lower) > 2 or two_j_upper + two_j_lower < 2:
        return None
    sub_u, sub_l = upper.subspaces.get(two_j_upper), lower.subspaces.get(two_j_lower)
    if sub_u is None or sub_l is None:
        return None
    matrix = _dipole_dets(upper.shells, lower.shells, jump, two_j_upper, two_j_lower)
    q2 = two_j_upper - two_j_lower
    three_j = wigner_3j(two_j_upper, 2, two_j_lower, -two_j_upper, q2, two_j_lower)
    amplitudes = (sub_u.basis @ vectors_upper).T @ matrix[np.ix_(sub_u.det_index, sub_l.det_index)] @ (
        sub_l.basis @ vectors_lower)
    return amplitudes / three_j


def _filling_order(nl: tuple[int, int]) -> tuple[int, int]:
    """Madelung filling order of a subshell: (n + l, n)."""
    return (nl[0] + nl[1], nl[0])


def _jump(upper: OpenShells, lower: OpenShells) -> tuple | None:
    """The E1 jump between two configurations, or None.

    Returns ``(leave, enter, union, occupancy_upper, occupancy_lower)``: the electron
    leaves subshell ``leave`` of the upper configuration and enters ``enter`` of the lower
    one; ``union`` lists the subshells open in either, the occupancies are per union
    subshell. A subshell not written in a configuration is taken as full when it lies
    below every subshell written there both in (n, l) and in the Madelung filling order
    (n + l, then n): an inner closed shell left out (``1s``, ``2s`` of ``2p5.3s``); else as
    empty (``4f`` of ``5p5.5d``, ``4s`` of ``3d9.4p``).
    """
    union = tuple(sorted(set(upper.nl) | set(lower.nl)))

    def occupancy(config: OpenShells, nl: tuple[int, int]) -> int:
        written = {(n, l): k for n, l, k in (config.written or config.shells)}
        if nl in written:
            return written[nl]
        inner = all(nl < other and _filling_order(nl) < _filling_order(other) for other in written)
        return 4 * nl[1] + 2 if inner else 0

    ku = tuple(occupancy(upper, nl) for nl in union)
    kl = tuple(occupancy(lower, nl) for nl in union)
    if sum(ku) != sum(kl):
        return None
    diff = [b - a for a, b in zip(ku, kl)]
    if sorted(d for d in diff if d) != [-1, 1]:
        return None
    enter = union[diff.index(1)]
    leave = union[diff.index(-1)]
    if abs(enter[1] - leave[1]) != 1:
        return None
    return leave, enter, union, ku, kl


@functools.lru_cache(maxsize=256)
def _dipole_dets(upper: OpenShells, lower: OpenShells, jump: tuple, two_j_upper: int,
                 two_j_lower: int) -> NDArray[np.float64]:
    """<I_upper|C^1_q|J_lower> over determinants (the one-electron jump enter -> leave), q = M_upper - M_lower."""
    leave, enter, union, occ_upper, occ_lower = jump
    nl_index = {nl: i for i, nl in enumerate(union)}
    sh, ml, ms = _orbitals(tuple((i, nl[1]) for i, nl in enumerate(union)))
    ls = [nl[1] for nl in union]

    def expanded(shells: OpenShells, occupancy: tuple[int, ...]) -> tuple[list[tuple[int, ...]], NDArray]:
        own = configuration_model(shells)
        own_nl = shells.nl
        own_sh, _, _ = _orbitals(tuple((i, nl[1]) for i, nl in enumerate(own_nl)))
        # map own spin-orbital index -> union index (same (m_l, m_s) order inside a subshell)
        mapping = np.zeros(len(own_sh), dtype=np.int64)
        for i, nl in enumerate(own_nl):
            mapping[own_sh == i] = np.flatnonzero(sh == nl_index[nl])
        full = [o for i, nl in enumerate(union) if nl not in own_nl and occupancy[i] == 4 * nl[1] + 2
                for o in np.flatnonzero(sh == nl_index[nl]).tolist()]
        out, signs = [], []
        for det in own.dets:
            mapped = [int(mapping[o]) for o in det]
            # the determinant's creation operators in the union's order: the sign of that permutation
            # (full subshells hold an even number of electrons and never change it)
            inversions = sum(1 for a in range(len(mapped)) for b in range(a + 1, len(mapped)) if mapped[a] > mapped[b])
            out.append(tuple(sorted(mapped + full)))
            signs.append(-1.0 if inversions % 2 else 1.0)
        return out, np.array(signs)

    # the upper state holds the electron in `leave`; C^1 acts as a+_leave a_enter on the lower state
    dets_u, signs_u = expanded(upper, occ_upper)
    dets_l, signs_l = expanded(lower, occ_lower)
    index_u = {d: i for i, d in enumerate(dets_u)}
    q = (two_j_upper - two_j_lower) // 2
    out = np.zeros((len(dets_u), len(dets_l)))
    orbit_leave = np.flatnonzero(sh == nl_index[leave])
    orbit_enter = np.flatnonzero(sh == nl_index[enter])
    l_leave, l_enter = ls[nl_index[leave]], ls[nl_index[enter]]
    for j, det in enumerate(dets_l):
        for r in orbit_enter:
            if r not in det:
                continue
            for p in orbit_leave:
                if ms[p] != ms[r] or ml[p] - ml[r] != q:
                    continue
                result = _apply((("c", int(p)), ("a", int(r))), det)
                if result is None:
                    continue
                sign, new = result
                i = index_u.get(new)
                if i is not None:
                    out[i, j] += sign * ck_coefficient(l_leave, int(ml[p]), 1, l_enter, int(ml[r]))
    return out * signs_u[:, None] * signs_l[None, :]
