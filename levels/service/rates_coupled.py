"""Rates of an open core plus one electron in intermediate coupling (``levels rates --method coupled``).

The unit of work behind the ``coupled`` method: it groups the measured levels of
one species by configuration, fits the energy matrix of every configuration it
can treat (:mod:`levels.physics.many_electron.intermediate_coupling`, after
Condon & Shortley 1935 and Cowan 1981), matches eigenvectors to measured levels
by J, parity and energy order (reporting labels, LS or jK, that contradict the
match) and returns E1 line strengths, f and A values with a relative
uncertainty per line (the rule is stated in the physics module's docstring), and
lifetimes of the levels it treats. It writes nothing: the rates service stores
the result.

Treated configurations (:func:`can_treat`): two open subshells each holding one
electron or one hole (``2p5.3p``, ``6s.6p``, ``5d9.6s2.6p``), and closed shells
(``2p6``, ``6s2``: the ground state of resonance lines).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from levels.errors import NotationError, PhysicsInputError
from levels.notation import (
    Configuration,
    JKTerm,
    Term,
    format_configuration,
    format_j,
    format_term,
    parse_configuration,
    parse_level_term,
    parse_spectrum,
)
from levels.physics.lines.lande import lande_g_ls
from levels.physics.many_electron import intermediate_coupling as ic
from levels.physics.many_electron.slater_condon import (
    ConfigurationModel,
    configuration_model,
    open_shells,
    transition_amplitudes,
)
from levels.physics.one_electron import rates as rate_physics
from levels.service.rates_common import LevelInput, LineRate, MethodResult

__all__ = ["METHOD", "VERSION", "can_treat", "coupled_rates"]

METHOD = "coupled"
VERSION = "1.0"
#: a label contradicts the match when its basis state weighs less than this share of its largest weight
#: among the configuration's eigenvectors of the same J (common practice, no source)
LABEL_SHARE = 0.5


def _subshells(config: Configuration) -> tuple[tuple[int, int, int], ...]:
    return tuple(config.all_subshells)


def _treatable(config: Configuration) -> str | None:
    """None when the method treats the configuration, else the reason."""
    shells = open_shells(_subshells(config)).shells
    if len(shells) == 1 and shells[0][2] in (1, 4 * shells[0][1] + 1):
        return "one open subshell: a one-valence-electron spectrum (use the single method)"
    if len(shells) > 2:
        return f"{len(shells)} open subshells; the method takes an open core plus one electron (two)"
    for n, l, k in shells:
        if k not in (1, 4 * l + 1):
            return (f"subshell {n}{'spdfghik'[l] if l < 8 else l}{k} has {min(k, 4 * l + 2 - k)} electrons or holes; "
                    "the method takes one electron or one hole per open subshell")
    return None


def can_treat(configuration: str) -> bool:
    """Whether the coupled method treats a configuration (for ``--method auto``).

    Parameters
    ----------
    configuration : str
        Configuration as stored (``"2p5.3p"``, ``"2p5(2P°3/2)3p"``, ``"6s.6p"``, ``"6s2"``).

    Returns
    -------
    bool
        True for two open subshells of one electron or one hole each, and for closed shells;
        False for one open subshell (the single method's) and anything else.

    Examples
    --------
    >>> can_treat("2p5(2P°3/2)3p"), can_treat("6s2"), can_treat("[Ne].3s"), can_treat("2p4.3s")
    (True, True, False, False)
    """
    try:
        config = parse_configuration(configuration)
    except NotationError:
        return False
    return _treatable(config) is None


@dataclass
class _Group:
    """One configuration's measured levels and its fit."""

    key: str
    config: Configuration
    model: ConfigurationModel
    levels: list[LevelInput]
    terms: list
    parents: list[int | None]
    fit: ic.FitResult | None = None
    e_avg: float = 0.0

    @property
    def fitted(self) -> ic.FitResult:
        """The configuration's fit; only groups :func:`_fit_group` kept are asked for it."""
        if self.fit is None:
            raise PhysicsInputError(f"configuration {self.key} has not been fitted")
        return self.fit


def _two_j(lv: LevelInput) -> int:
    """2J of a level :func:`_group_levels` accepted (it skips levels whose J is not resolved)."""
    if lv.two_j is None:
        raise PhysicsInputError(f"level {lv.label}: J not resolved")
    return lv.two_j


def coupled_rates(levels: list[LevelInput], *, ionization_cm1: float | None,
                  spectrum: str | None = None) -> MethodResult:
    """E1 rates of the open-core-plus-one-electron configurations of one species.

    Parameters
    ----------
    levels : list of LevelInput
        All stored levels of the species (any configurations; the ones the method
        cannot treat come back in ``skipped`` with the reason).
    ionization_cm1 : float or None
        Ionization limit (to the ion's lowest level), cm-1; the radial integrals of
        the Coulomb approximation need it. None: every level is skipped.
    spectrum : str, optional
        Spectrum notation (``"Hg I"``): gives Z and the ion charge for the
        central-field starting values and the Coulomb charge. Without it a neutral
        atom is assumed and the spin-orbit starting values come from the level spread.

    Returns
    -------
    MethodResult
        ``method`` is ``"coupled <version>"``; ``lines`` the E1 lines between treated
        levels (A, f, S, ``a_rel_unc``); ``skipped`` (level_id, reason);
        ``parameters`` the fitted parameters per configuration, the eigenvector
        compositions, label conflicts and the uncertainty rule; ``lifetimes`` the
        lifetime and its relative uncertainty of every treated level with a decay.

    Examples
    --------
    >>> from levels.service.rates_common import LevelInput
    >>> rows = [LevelInput(1, "6s2 1S0", "6s2", "1S", 0, 1, 0.0)] + [
    ...     LevelInput(i + 2, f"6s.6p {t}{j}", "6s.6p", t, 2 * j, -1, e) for i, (t, j, e) in
    ...     enumerate([("3P°", 0, 37645.08), ("3P°", 1, 39412.3), ("3P°", 2, 44042.977), ("1P°", 1, 54068.781)])]
    >>> result = coupled_rates(rows, ionization_cm1=84184.15, spectrum="Hg I")
    >>> sorted((r.upper_id, r.lower_id) for r in result.lines)
    [(3, 1), (5, 1)]
    """
    result = MethodResult(method=f"{METHOD} {VERSION}")
    z, charge = None, 0
    if spectrum is not None:
        parsed = parse_spectrum(spectrum)
        z, charge = parsed.z, parsed.charge
    zeta_ion = charge + 1.0
    if ionization_cm1 is None or not math.isfinite(ionization_cm1) or ionization_cm1 <= 0:
        for lv in levels:
            result.skipped.append((lv.level_id, "no ionization limit: the Coulomb-approximation radial "
                                                "integrals of the coupled method need one"))
        result.warnings.append("coupled: no ionization limit, nothing computed")
        return result

    groups = _group_levels(levels, result)
    configs: dict = {}
    result.parameters = {"ionization_cm1": float(ionization_cm1), "configurations": configs,
                         "uncertainty_rule": "see levels.physics.many_electron.intermediate_coupling: base "
                                             f"{ic.BASE_REL_UNC}, range {ic.RANGE_REL_UNC}, fit propagation, "
                                             "cancellation"}
    fitted: list[_Group] = []
    for group in groups.values():
        report = _fit_group(group, z, charge, ionization_cm1, result)
        if report is not None:
            configs[group.key] = report
            fitted.append(group)
    _lines(fitted, ionization_cm1, zeta_ion, result)
    return result


def _group_levels(levels: list[LevelInput], result: MethodResult) -> dict[tuple, _Group]:
    groups: dict[tuple, _Group] = {}
    for lv in levels:
        if lv.configuration is None or not lv.configuration.strip():
            result.skipped.append((lv.level_id, "no configuration"))
            continue
        try:
            config = parse_configuration(lv.configuration)
        except NotationError as exc:
            result.skipped.append((lv.level_id, f"configuration not understood: {exc}"))
            continue
        reason = _treatable(config)
        if reason is not None:
            result.skipped.append((lv.level_id, reason))
            continue
        if lv.two_j is None:
            result.skipped.append((lv.level_id, "J not resolved"))
            continue
        if lv.parity != config.parity:
            result.skipped.append((lv.level_id, f"parity {lv.parity:+d} contradicts configuration "
                                                f"{lv.configuration!r}"))
            continue
        try:
            term = parse_level_term(lv.term) if lv.term else None
        except NotationError:
            term = None
        bare = config.without_parents()
        shells = open_shells(_subshells(bare))
        # one group per configuration however it is written ('2p5.3p', '1s2.2s2.2p5.3p'): keyed by its
        # open subshells, or by the closed subshells for a closed-shell configuration
        identity = tuple(sorted(shells.shells)) or tuple(sorted(_subshells(bare)))
        if identity not in groups:
            groups[identity] = _Group(format_configuration(bare), bare, configuration_model(shells), [], [], [])
        group = groups[identity]
        group.levels.append(lv)
        group.terms.append(term)
        group.parents.append(config.parents[-1][2] if config.parents else None)
    return groups


def _binding(group: _Group, ionization_cm1: float) -> np.ndarray:
    """Starting binding energies of an electron of each open subshell, cm-1."""
    mean = float(np.mean([lv.energy_cm1 for lv in group.levels]))
    outer = max(ionization_cm1 - mean, 0.05 * ionization_cm1)
    core = max(ionization_cm1, outer)
    return np.array([core, outer][: len(group.model.shells.shells)])


def _drop_impossible_j(group: _Group, result: MethodResult) -> None:
    """Skip levels whose J the configuration lacks, and every level of a J with more levels than states."""
    keep = []
    counts: dict[int, int] = {}
    for lv in group.levels:
        counts[_two_j(lv)] = counts.get(_two_j(lv), 0) + 1
    for index, lv in enumerate(group.levels):
        tj = _two_j(lv)
        sub = group.model.subspaces.get(tj)
        if sub is None:
            result.skipped.append((lv.level_id, f"configuration {group.key} has no level with J = "
                                                f"{format_j(tj)}"))
        elif counts[tj] > sub.basis.shape[1]:
            result.skipped.append((lv.level_id, f"{counts[tj]} measured levels with J = {format_j(tj)} "
                                                f"in configuration {group.key}, which has {sub.basis.shape[1]}: "
                                                "a level is misassigned"))
        else:
            keep.append(index)
    if len(keep) < len(group.levels):
        result.warnings.append(f"coupled: configuration {group.key}: {len(group.levels) - len(keep)} level(s) left "
                               "out, their J does not fit the configuration (see skipped)")
    group.levels = [group.levels[i] for i in keep]
    group.terms = [group.terms[i] for i in keep]
    group.parents = [group.parents[i] for i in keep]


def _fit_group(group: _Group, z: int | None, charge: int, ionization_cm1: float,
               result: MethodResult) -> dict | None:
    _drop_impossible_j(group, result)
    if not group.levels:
        return None
    model = group.model
    energies = np.array([lv.energy_cm1 for lv in group.levels])
    two_j = np.array([_two_j(lv) for lv in group.levels])
    if not model.parameters:                      # closed shells: one 1S0 state
        if len(group.levels) != 1 or two_j[0] != 0:
            for lv in group.levels:
                result.skipped.append((lv.level_id, f"closed-shell configuration {group.key} has one level, J = 0"))
            return None
        group.fit = ic.FitResult(("E0",), np.array([energies[0]]), np.zeros(1), (), np.zeros(1), 0.0, 0,
                                 [(0, 0)], ic.energies(model, [energies[0]]), (0,), np.zeros((1, 1)))
        group.e_avg = float(energies[0])
        return {"parameters": {"E0": {"value_cm1": float(energies[0]), "unc_cm1": 0.0, "fixed": False}},
                "average_energy_cm1": float(energies[0]), "rms_cm1": 0.0, "dof": 0, "n_levels": 1, "levels": [],
                "label_conflicts": []}
    start = ic.central_field_start(model, z if z is not None else 1, charge, _binding(group, ionization_cm1),
                                   float(np.mean(energies)))
    if z is None:   # no atomic number: spin-orbit starting values from the spread of the levels
        spread = float(np.ptp(energies)) if len(energies) > 1 else 1000.0
        for i, name in enumerate(("E0",) + model.parameters):
            if name.startswith("zeta"):
                start[i] = 0.3 * spread
    try:
        fit = ic.fit_configuration(model, two_j, energies, start)
    except PhysicsInputError as exc:
        for lv in group.levels:
            result.skipped.append((lv.level_id, f"configuration {group.key}: {exc}"))
        result.warnings.append(f"coupled: configuration {group.key} not treated: {exc}")
        return None
    group.fit = fit
    weights, values = [], []
    for tj, (vals, _) in fit.eigen.items():
        weights.extend([tj + 1] * len(vals))
        values.extend(vals.tolist())
    group.e_avg = float(np.average(values, weights=weights))
    if fit.fixed:
        result.warnings.append(
            f"coupled: configuration {group.key} has {len(group.levels)} measured level(s) for "
            f"{len(fit.names)} parameters; {', '.join(fit.fixed)} kept at the central-field estimate")
    if fit.dof <= 0:
        result.warnings.append(f"coupled: configuration {group.key}: as many parameters as levels, the fit "
                               "cannot show how well the model holds (uncertainties assume 1 % of the spread)")
    level_rows, conflicts = _compositions(group)
    for text in conflicts:
        result.warnings.append(f"coupled: {text}")
    params = {name: {"value_cm1": float(v), "unc_cm1": float(u), "fixed": name in fit.fixed}
              for name, v, u in zip(fit.names, fit.values, fit.errors)}
    return {"parameters": params, "average_energy_cm1": group.e_avg, "rms_cm1": fit.rms_cm1, "dof": fit.dof,
            "n_levels": len(group.levels),
            "levels": level_rows, "label_conflicts": conflicts}


def _percent_text(weights: np.ndarray, labels: list[str]) -> str:
    order = np.argsort(weights)[::-1][:2]
    return " + ".join(f"{100 * weights[i]:.0f}% {labels[i]}" for i in order if weights[i] >= 0.005)


def _compositions(group: _Group) -> tuple[list[dict], list[str]]:
    """Leading LS and jK components of each matched eigenvector, and contradicted labels."""
    fit = group.fitted
    rows, conflicts = [], []
    parent_l = group.model.shells.shells[0][1]
    parent_mult = 2
    for lv, term, parent, (tj, column) in zip(group.levels, group.terms, group.parents, fit.assignment):
        sub = group.model.subspaces[tj]
        vals, vecs = fit.eigen[tj]
        ls_w = (sub.ls_vectors.T @ vecs) ** 2            # (basis state, eigenvector)
        jk_w = (sub.jk_vectors.T @ vecs) ** 2
        ls_names = [f"{two_s + 1}{'SPDFGHIKLMNOQ'[L]}" for two_s, L in sub.ls_labels]
        # Landé g in intermediate coupling: the LS values weighted by the LS composition (L + g_s S is
        # diagonal in the LS basis of one J; Condon & Shortley 1935, ch. XVI, from memory)
        g_ls = lande_g_ls(np.array([t for t, _ in sub.ls_labels]), np.array([L for _, L in sub.ls_labels]),
                          np.full(len(sub.ls_labels), tj)) if tj > 0 else np.zeros(len(sub.ls_labels))
        g_value = float(ls_w[:, column] @ g_ls) if tj > 0 else None
        jk_names = [f"({parent_mult}{'SPDFGHIK'[parent_l]}{format_j(jc)}) 2[{format_j(k)}]" for jc, k in sub.jk_labels]
        rows.append({"level_id": lv.level_id, "label": lv.label, "j": format_j(tj), "energy_cm1": lv.energy_cm1,
                     "fitted_cm1": float(vals[column]), "ls": _percent_text(ls_w[:, column], ls_names),
                     "jk": _percent_text(jk_w[:, column], jk_names), "lande_g": g_value})
        found: tuple[int, np.ndarray] | None = None        # (basis state, weights of its basis)
        if isinstance(term, Term):
            key = (term.multiplicity - 1, term.L)
            shown = format_term(term)
            if key in sub.ls_labels:
                found = sub.ls_labels.index(key), ls_w
        elif isinstance(term, JKTerm):
            shown = f"parent J = {format_j(parent)} {term}" if parent is not None else str(term)
            if parent is not None and (parent, term.two_k) in sub.jk_labels:
                found = sub.jk_labels.index((parent, term.two_k)), jk_w
        else:
            continue
        if found is None:
            conflicts.append(f"{lv.label}: {shown} with J = {format_j(tj)} does not occur in configuration "
                             f"{group.key}")
            continue
        index, weights = found
        if weights[index, column] < LABEL_SHARE * float(weights[index].max()):
            other = int(np.argmax(weights[index]))
            conflicts.append(f"{lv.label}: labelled {shown} but by J and energy order it is "
                             f"{rows[-1]['ls'] if weights is ls_w else rows[-1]['jk']}; the {shown} state is "
                             f"mostly the eigenvector at {vals[other]:.1f} cm-1 (contradictory label)")
    return rows, conflicts


def _limit_offset(group: _Group, leaving_core: bool) -> float:
    """Average ion-limit offset above the lowest limit for the core left behind, cm-1."""
    fit = group.fitted
    if leaving_core or "zeta_core" not in fit.names:
        return 0.0
    n, l, k = group.model.shells.shells[0]
    zeta = float(fit.values[fit.names.index("zeta_core")])
    return 0.5 * l * zeta if k == 4 * l + 1 else 0.0


def _nu(group: _Group, shell: tuple[int, int], ionization_cm1: float, zeta_ion: float) -> float:
    """Effective quantum number of an electron of ``shell`` in the group's configuration."""
    shells = group.model.shells.shells
    leaving_core = len(shells) == 2 and shell == shells[0][:2]
    binding = ionization_cm1 + _limit_offset(group, leaving_core) - group.e_avg
    if binding <= 0:
        raise PhysicsInputError(f"configuration {group.key} lies above the ionization limit")
    return zeta_ion * math.sqrt(ic.R_CM1 / binding)


def _lines(groups: list[_Group], ionization_cm1: float, zeta_ion: float, result: MethodResult) -> None:
    from levels.physics.many_electron.slater_condon import _jump  # noqa: PLC0415 (same method family)

    lines: list[LineRate] = []
    incomplete: set[int] = set()
    refused: dict[str, list[str]] = {}
    for a_index, ga in enumerate(groups):
        for gb in groups[a_index + 1:]:
            if ga.config.parity == gb.config.parity:
                continue
            jump = _jump(ga.model.shells, gb.model.shells)
            if jump is None:
                continue
            leave, enter = jump[0], jump[1]
            try:
                nu_a = _nu(ga, leave, ionization_cm1, zeta_ion)
                nu_b = _nu(gb, enter, ionization_cm1, zeta_ion)
                if not (_has_orbit(nu_a, leave[1]) and _has_orbit(nu_b, enter[1])):
                    raise PhysicsInputError(
                        "a core electron jumps (an effective quantum number without a classically allowed Coulomb "
                        "orbit, nu^2 <= l(l+1)), outside the Coulomb approximation")
                radial = ic.coulomb_dipole_integral(nu_a, leave[1], nu_b, enter[1], zeta_ion)
                radial_rel = _radial_sensitivity(ga, gb, leave, enter, radial, ionization_cm1, zeta_ion)
            except PhysicsInputError as exc:
                refused.setdefault(str(exc), []).append(f"{ga.key} - {gb.key}")
                incomplete.update(_possible_uppers(ga, gb))
                continue
            out_of_range = not gb.model.parameters or not ga.model.parameters
            if out_of_range:
                result.warnings.append(
                    f"coupled: lines between {ga.key} and {gb.key} end on a closed-shell level, at the edge of the "
                    f"Coulomb approximation (nu = {nu_a:.2f}, {nu_b:.2f}); their uncertainty includes "
                    f"{ic.RANGE_REL_UNC}")
            lines.extend(_pair_lines(ga, gb, radial, out_of_range, radial_rel))
    for reason, pairs in refused.items():
        result.warnings.append(f"coupled: no lines between {', '.join(pairs)}: {reason}; lifetimes of the levels "
                               "that decay that way are not given")
    result.parameters["lifetime_incomplete_level_ids"] = sorted(incomplete)
    result.lines.extend(lines)
    _lifetimes(lines, result, incomplete)
    treated = {lv.level_id for g in groups for lv in g.levels}
    result.parameters["treated_levels"] = len(treated)


def _has_orbit(nu: float, l: int) -> bool:
    """Whether the Coulomb orbit of (nu, l) has a classically allowed region: nu^2 > l(l+1)."""
    return nu * nu > l * (l + 1)


def _radial_sensitivity(ga: _Group, gb: _Group, leave: tuple[int, int], enter: tuple[int, int], radial: float,
                        ionization_cm1: float, zeta_ion: float) -> float:
    """Largest relative change of the line strength (2 dR/R) when either electron's effective quantum
    number takes the value of the lowest or the highest measured level of its configuration instead
    of the configuration average."""
    base = {id(ga): _nu(ga, leave, ionization_cm1, zeta_ion), id(gb): _nu(gb, enter, ionization_cm1, zeta_ion)}
    worst = 0.0
    for group, shell in ((ga, leave), (gb, enter)):
        energies = [lv.energy_cm1 for lv in group.levels]
        offset = base[id(group)]
        for energy in (min(energies), max(energies)):
            saved = group.e_avg
            group.e_avg = energy
            try:
                nu = _nu(group, shell, ionization_cm1, zeta_ion)
            except PhysicsInputError:
                nu = offset
            finally:
                group.e_avg = saved
            if not _has_orbit(nu, shell[1]):
                continue
            nus = dict(base)
            nus[id(group)] = nu
            other = ic.coulomb_dipole_integral(nus[id(ga)], leave[1], nus[id(gb)], enter[1], zeta_ion)
            worst = max(worst, abs((other / radial) ** 2 - 1.0) if radial else 10.0)
    return min(worst, 10.0)


def _amplitude_kernel(ga: _Group, gb: _Group, tja: int, tjb: int) -> np.ndarray | None:
    na = ga.model.subspaces[tja].basis.shape[1]
    nb = gb.model.subspaces[tjb].basis.shape[1]
    return transition_amplitudes(ga.model, gb.model, tja, tjb, np.eye(na), np.eye(nb))


def _perturbed_vectors(group: _Group) -> list[tuple[float, dict]]:
    """Eigenvectors with each free non-constant parameter moved by its standard error."""
    fit = group.fitted
    out: list[tuple[float, dict]] = []
    if fit.covariance is None:
        return out
    for position, index in enumerate(fit.free):
        if fit.names[index] == "E0":
            continue
        sigma = float(np.sqrt(max(fit.covariance[position, position], 0.0)))
        if not math.isfinite(sigma) or sigma == 0.0:
            continue
        values = fit.values.copy()
        values[index] += sigma
        eig = ic.energies(group.model, values)
        aligned = {}
        for tj, (_, vecs) in eig.items():
            base = fit.eigen[tj][1]
            signs = np.sign(np.sum(base * vecs, axis=0))
            signs[signs == 0] = 1.0
            aligned[tj] = vecs * signs
        out.append((sigma, aligned))
    return out


def _pair_lines(ga: _Group, gb: _Group, radial: float, out_of_range: bool, radial_rel: float) -> list[LineRate]:
    """E1 lines between the measured levels of two configurations, one array computation per J pair."""
    rows: list[LineRate] = []
    perturbed_a, perturbed_b = _perturbed_vectors(ga), _perturbed_vectors(gb)
    tj_a = np.array([tj for tj, _ in ga.fitted.assignment])
    tj_b = np.array([tj for tj, _ in gb.fitted.assignment])
    col_a = np.array([c for _, c in ga.fitted.assignment])
    col_b = np.array([c for _, c in gb.fitted.assignment])
    e_a = np.array([lv.energy_cm1 for lv in ga.levels])
    e_b = np.array([lv.energy_cm1 for lv in gb.levels])
    for tja in np.unique(tj_a).tolist():
        for tjb in np.unique(tj_b).tolist():
            if abs(tja - tjb) > 2 or tja + tjb == 0:
                continue
            kernel = _amplitude_kernel(ga, gb, tja, tjb)
            if kernel is None:
                continue
            ia, ib = np.flatnonzero(tj_a == tja), np.flatnonzero(tj_b == tjb)
            va = ga.fitted.eigen[tja][1][:, col_a[ia]]
            vb = gb.fitted.eigen[tjb][1][:, col_b[ib]]
            amp = va.T @ kernel @ vb                                   # (levels of a, levels of b)
            var = np.zeros_like(amp)
            for _, vectors in perturbed_a:
                var += (vectors[tja][:, col_a[ia]].T @ kernel @ vb - amp) ** 2
            for _, vectors in perturbed_b:
                var += (va.T @ kernel @ vectors[tjb][:, col_b[ib]] - amp) ** 2
            size = np.maximum(np.abs(amp), 1e-300)
            fit_rel = np.minimum(2.0 * np.sqrt(var) / size, 10.0)
            # Cowan's cancellation factor over the LS contributions c_a,p c_b,q <p|C1|q>
            ls_a, ls_b = ga.model.subspaces[tja].ls_vectors, gb.model.subspaces[tjb].ls_vectors
            ca, cb = ls_a.T @ va, ls_b.T @ vb
            gross = np.abs(ca).T @ np.abs(ls_a.T @ kernel @ ls_b) @ np.abs(cb)
            cf = np.where(gross > 0, (np.abs(amp) / np.maximum(gross, 1e-300)) ** 2, 0.0)
            rel = ic.combine_rel_unc(fit_rel, cf, np.full(amp.shape, out_of_range), radial_rel)
            a_upper = e_a[ia][:, None] > e_b[ib][None, :]
            sigma = np.abs(e_a[ia][:, None] - e_b[ib][None, :])
            keep = (np.abs(amp) >= 1e-12) & (sigma > 0)
            strength = (amp * radial) ** 2
            g_u = np.where(a_upper, tja + 1, tjb + 1)
            g_l = np.where(a_upper, tjb + 1, tja + 1)
            k_a, k_b = np.nonzero(keep)
            s_kept, sigma_kept = strength[k_a, k_b], sigma[k_a, k_b]
            a_values = rate_physics.einstein_a(s_kept, sigma_kept, g_u[k_a, k_b])
            f_values = rate_physics.oscillator_strength(s_kept, sigma_kept, g_l[k_a, k_b])
            for n, (i, k) in enumerate(zip(k_a.tolist(), k_b.tolist())):
                id_a, id_b = ga.levels[ia[i]].level_id, gb.levels[ib[k]].level_id
                upper, lower = (id_a, id_b) if a_upper[i, k] else (id_b, id_a)
                rows.append(LineRate(lower, upper, "E1", float(sigma_kept[n]), float(a_values[n]),
                                     float(rel[i, k]), float(f_values[n]), float(s_kept[n])))
    return rows


def _possible_uppers(ga: _Group, gb: _Group) -> set[int]:
    """Levels that would decay by an E1 line between the two groups (J rule and energy order)."""
    out = set()
    for lva in ga.levels:
        for lvb in gb.levels:
            if abs(_two_j(lva) - _two_j(lvb)) <= 2 and _two_j(lva) + _two_j(lvb) > 0:
                out.add(lva.level_id if lva.energy_cm1 > lvb.energy_cm1 else lvb.level_id)
    return out


def _lifetimes(lines: list[LineRate], result: MethodResult, incomplete: set[int]) -> None:
    total: dict[int, float] = {}
    weighted: dict[int, float] = {}
    for line in lines:
        total[line.upper_id] = total.get(line.upper_id, 0.0) + line.a_per_s
        weighted[line.upper_id] = weighted.get(line.upper_id, 0.0) + line.a_per_s * line.a_rel_unc
    result.lifetimes = {level: (1.0 / a, weighted[level] / a) for level, a in total.items()
                        if a > 0 and level not in incomplete}
