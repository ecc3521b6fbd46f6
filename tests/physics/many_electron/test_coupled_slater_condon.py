"""Slater-Condon matrices, pure-LS limits and the intermediate-coupling fit.

References: Condon & Shortley 1935, *The Theory of Atomic Spectra*; Cowan 1981,
*The Theory of Atomic Structure and Spectra*; sympy.physics.wigner and
sympy.physics.hydrogen as independent libraries.
"""

import math

import numpy as np
import pytest
import sympy
from sympy.physics.hydrogen import R_nl
from sympy.physics.wigner import wigner_3j as sympy_3j
from sympy.physics.wigner import wigner_6j as sympy_6j

from levels.errors import PhysicsInputError
from levels.physics.many_electron import intermediate_coupling as ic
from levels.physics.many_electron.angular import ls_line_strength_factor
from levels.physics.many_electron.slater_condon import configuration_model, open_shells, transition_amplitudes


def _model(*shells):
    return configuration_model(open_shells(tuple(shells)))


def _ls_diagonals(model):
    """{(two_s, L, two_j): [coefficient of each parameter]} in the LS basis."""
    out = {}
    for two_j, sub in model.subspaces.items():
        for k, (two_s, big_l) in enumerate(sub.ls_labels):
            v = sub.ls_vectors[:, k]
            out[(two_s, big_l, two_j)] = [float(v @ m @ v) for m in sub.matrices]
    return out


def _reduced_c(l1, k, l2):
    return (-1) ** l1 * math.sqrt((2 * l1 + 1) * (2 * l2 + 1)) * float(sympy_3j(l1, k, l2, 0, 0, 0))


@pytest.mark.parametrize("l1, l2", [(0, 1), (1, 2), (1, 1), (2, 3), (0, 2)])
def test_two_electron_coefficients_match_cowan_closed_forms(l1, l2):
    # Cowan 1981, eqs. 12.x for two non-equivalent electrons (n1 l1 n2 l2):
    #   f_k = (-1)^(l1+l2+L) <l1||C^k||l1><l2||C^k||l2> {l1 l2 L; l2 l1 k}
    #   g_k = (-1)^S <l1||C^k||l2>^2 {l1 l2 L; l1 l2 k}
    # 6j and 3j from sympy.physics.wigner (independent of the m-scheme route tested here).
    model = _model((3, l1, 1), (4, l2, 1))
    diag = _ls_diagonals(model)
    for (two_s, big_l, two_j), coeffs in diag.items():
        for name, value in zip(model.parameters, coeffs):
            if name.startswith("F"):
                k = int(name[1:])
                ref = ((-1) ** (l1 + l2 + big_l) * _reduced_c(l1, k, l1) * _reduced_c(l2, k, l2)
                       * float(sympy_6j(l1, l2, big_l, l2, l1, k)))
            elif name.startswith("G"):
                k = int(name[1:])
                ref = (-1) ** (two_s // 2) * _reduced_c(l1, k, l2) ** 2 * float(sympy_6j(l1, l2, big_l, l1, l2, k))
            else:
                continue
            assert value == pytest.approx(ref, abs=1e-12), (name, two_s, big_l, two_j)


def test_stretched_state_is_one_determinant():
    # 3F4 of p d (M_L = 3, M_S = 1) is the single determinant |p+1 up, d+2 up>: its direct energy is
    # c^2(1 1, 1 1) c^2(2 2, 2 2) F^2 = (-1/5)(-2/7) F^2 = 2/35 F^2
    # (c^k values: Condon & Shortley 1935, table 1^6, from memory)
    model = _model((3, 1, 1), (4, 2, 1))
    sub = model.subspaces[8]
    v = sub.ls_vectors[:, 0]
    assert float(v @ sub.matrices[model.parameters.index("F2")] @ v) == pytest.approx(2 / 35)


def test_sp_spin_orbit_and_singlet_triplet_mixing():
    # Condon & Shortley 1935, ch. X (sp configuration): 3P_J = -G1/3 + zeta/2 * {-2, -1, +1} / 2 * 2 ...
    # i.e. 3P0 = -zeta, 3P1 = -zeta/2, 3P2 = +zeta/2, 1P1 = 0 (zeta part), <1P1|H|3P1> = -+ zeta/sqrt(2)
    model = _model((6, 0, 1), (6, 1, 1))
    assert model.parameters == ("G1", "zeta_outer")
    g1, zeta = 0.0, 1.0
    eig = ic.energies(model, [0.0, g1, zeta])
    assert eig[0][0] == pytest.approx([-1.0])
    assert eig[4][0] == pytest.approx([0.5])
    # the J = 1 pair: eigenvalues of [[0, zeta/sqrt2], [zeta/sqrt2, -zeta/2]]
    ref = np.linalg.eigvalsh(np.array([[0.0, 1 / math.sqrt(2)], [1 / math.sqrt(2), -0.5]]))
    assert eig[2][0] == pytest.approx(ref)
    sub = model.subspaces[2]
    k_1p, k_3p = sub.ls_labels.index((0, 1)), sub.ls_labels.index((2, 1))
    off = sub.ls_vectors[:, k_1p] @ sub.matrices[1] @ sub.ls_vectors[:, k_3p]
    assert abs(off) == pytest.approx(1 / math.sqrt(2))


def test_almost_closed_shell_doublet_is_inverted():
    # p5 alone: 2P3/2 below 2P1/2 by 3 zeta / 2 (Condon & Shortley 1935, ch. XI, inverted doublets)
    model = _model((2, 1, 5))
    eig = ic.energies(model, [0.0, 100.0])
    assert eig[3][0] == pytest.approx([-50.0])
    assert eig[1][0] == pytest.approx([100.0])


def test_state_counts_and_labels():
    model = _model((2, 1, 5), (3, 1, 1))              # p5 p: 10 levels, J = 0..3
    assert model.n_states == 10
    assert sorted(len(s.ls_labels) for s in model.subspaces.values()) == [1, 2, 3, 4]
    assert sorted(model.subspaces[6].jk_labels) == [(3, 5)]   # J = 3: parent 3/2, K = 5/2 only
    with pytest.raises(PhysicsInputError):
        _model((2, 1, 4), (3, 0, 1))
    with pytest.raises(PhysicsInputError):
        _model((2, 1, 5), (3, 0, 1), (3, 1, 1))


@pytest.mark.parametrize("upper, lower, l_core, l_a, l_b", [
    (((2, 1, 5), (3, 1, 1)), ((2, 1, 5), (3, 0, 1)), 1, 1, 0),
    (((6, 0, 1), (6, 2, 1)), ((6, 0, 1), (6, 1, 1)), 0, 2, 1),
    (((3, 1, 5), (3, 2, 1)), ((3, 1, 5), (4, 1, 1)), 1, 2, 1),
    (((5, 2, 9), (6, 1, 1)), ((5, 2, 9), (6, 0, 1)), 2, 1, 0),
    (((5, 1, 5), (4, 3, 1)), ((5, 1, 5), (5, 2, 1)), 1, 3, 2),      # core written first, outer 4f below it in n
    (((5, 2, 1), (6, 0, 1)), ((6, 1, 1), (6, 0, 1)), 0, 2, 1),      # the spectator 6s written second
])
def test_pure_ls_limit_reproduces_ls_line_strengths_and_sum_rule(upper, lower, l_core, l_a, l_b):
    # with the spin-orbit parameters zero the eigenvectors are LS states: every line strength must equal
    # the Racah closed form (Cowan 1981, eq. 14.40), summing to (2S+1)(2 l_core+1) max(l_a, l_b) per S
    mu, ml = _model(*upper), _model(*lower)
    total = {0: 0.0, 2: 0.0}
    for two_ju, su in mu.subspaces.items():
        for two_jl, sl in ml.subspaces.items():
            amp = transition_amplitudes(mu, ml, two_ju, two_jl, su.ls_vectors, sl.ls_vectors)
            if amp is None:
                continue
            for i, (s_u, l_u) in enumerate(su.ls_labels):
                for k, (s_l, l_l) in enumerate(sl.ls_labels):
                    ref = ls_line_strength_factor(l_core, l_a, l_b, s_u, l_u, two_ju, l_l, two_jl) if s_u == s_l else 0
                    assert amp[i, k] ** 2 == pytest.approx(ref, abs=1e-12)
                    if s_u == s_l:
                        total[s_u] += amp[i, k] ** 2
    for two_s, value in total.items():
        assert value == pytest.approx((two_s + 1) * (2 * l_core + 1) * max(l_a, l_b))


def test_total_line_strength_is_invariant_in_intermediate_coupling():
    # a unitary change of basis within each J keeps the sum of S over the transition array
    mu, ml = _model((2, 1, 5), (3, 1, 1)), _model((2, 1, 5), (3, 0, 1))
    rng = np.random.default_rng(3)
    eu = ic.energies(mu, [0.0, *rng.uniform(100, 3000, len(mu.parameters))])
    el = ic.energies(ml, [0.0, *rng.uniform(100, 3000, len(ml.parameters))])
    total = 0.0
    for two_ju in mu.subspaces:
        for two_jl in ml.subspaces:
            amp = transition_amplitudes(mu, ml, two_ju, two_jl, eu[two_ju][1], el[two_jl][1])
            if amp is not None:
                total += float(np.sum(amp**2))
    assert total == pytest.approx(4 * 3 * 1)


def test_resonance_line_strength_of_two_equivalent_s_electrons():
    # s2 1S0 - sp 1P1: S = 2 R^2 (two electrons can jump; Cowan 1981, eq. 14.53 with w = 2); 3P1 gets nothing
    mu, ml = _model((6, 0, 1), (6, 1, 1)), _model((6, 0, 2))
    sub = mu.subspaces[2]
    amp = transition_amplitudes(mu, ml, 2, 0, sub.ls_vectors, ml.subspaces[0].ls_vectors)
    s = dict(zip(sub.ls_labels, amp[:, 0] ** 2))
    assert s[(0, 1)] == pytest.approx(2.0)
    assert s[(2, 1)] == pytest.approx(0.0, abs=1e-14)


def test_fit_recovers_parameters_and_eigenvalues_reproduce_the_levels():
    model = _model((2, 1, 5), (3, 1, 1))
    truth = np.array([150000.0, 4000.0, 700.0, 1000.0, 450.0, 20.0])
    eig = ic.energies(model, truth)
    two_j = np.concatenate([[tj] * len(vals) for tj, (vals, _) in eig.items()])
    energies = np.concatenate([vals for vals, _ in eig.values()])
    start = truth * np.array([1.0, 1.5, 0.6, 1.4, 0.7, 2.0]) + np.array([300.0, 0, 0, 0, 0, 0])
    fit = ic.fit_configuration(model, two_j, energies, start)
    assert fit.rms_cm1 < 1e-4
    assert fit.values == pytest.approx(truth, rel=1e-5)
    refit = ic.energies(model, fit.values)
    for k, (tj, column) in enumerate(fit.assignment):
        assert refit[tj][0][column] == pytest.approx(energies[k], abs=1e-4)


def test_fit_with_fewer_levels_than_parameters_fixes_the_least_important():
    model = _model((2, 1, 5), (3, 1, 1))
    start = [150000.0, 4000.0, 700.0, 1000.0, 450.0, 20.0]
    fit = ic.fit_configuration(model, [6, 4, 2], [149650.0, 149820.0, 148250.0], start)
    assert set(fit.fixed) == {"F2", "zeta_outer", "G2"}
    assert fit.values[fit.names.index("zeta_outer")] == 20.0


def test_fit_refuses_more_levels_than_states():
    model = _model((6, 0, 1), (6, 1, 1))
    with pytest.raises(PhysicsInputError, match="2 measured levels with J = 0"):
        ic.fit_configuration(model, [0, 0], [1.0, 2.0], [0.0, 100.0, 10.0])
    with pytest.raises(PhysicsInputError, match="no level with J = 3"):
        ic.fit_configuration(model, [6], [1.0], [0.0, 100.0, 10.0])


def test_assign_in_order_skips_missing_levels():
    assert ic.assign_in_order([0.0, 10.0, 20.0, 30.0], [1.0, 29.0]).tolist() == [0, 3]


def _sympy_slater(k, a, b, exchange):
    r1, r2 = sympy.symbols("r1 r2", positive=True)
    pa1, pb1 = r1 * R_nl(a[0], a[1], r1, 1), r1 * R_nl(b[0], b[1], r1, 1)
    pa2, pb2 = r2 * R_nl(a[0], a[1], r2, 1), r2 * R_nl(b[0], b[1], r2, 1)
    rho1 = pa1 * pb1 if exchange else pa1**2
    rho2 = pa2 * pb2 if exchange else pb2**2
    inner = sympy.integrate(rho2 * r2**k, (r2, 0, r1)) / r1 ** (k + 1)
    outer = sympy.integrate(rho2 / r2 ** (k + 1), (r2, r1, sympy.oo)) * r1**k
    return float(sympy.integrate(sympy.expand(rho1 * (inner + outer)), (r1, 0, sympy.oo)))


@pytest.mark.parametrize("k, a, b, exchange", [(0, (1, 0), (2, 0), False), (1, (1, 0), (2, 1), True),
                                               (2, (2, 1), (3, 1), False)])
def test_hydrogenic_slater_integrals_against_sympy_hydrogen(k, a, b, exchange):
    ref = _sympy_slater(k, a, b, exchange)          # exact integrals of sympy.physics.hydrogen functions
    value = ic.hydrogenic_slater_integral(k, (a[0], a[1], 1.0), (b[0], b[1], 1.0), exchange)
    assert value == pytest.approx(ref, rel=2e-4)


@pytest.mark.parametrize("n_a, l_a, n_b, l_b", [(2, 1, 1, 0), (3, 1, 2, 0), (3, 2, 2, 1), (4, 3, 3, 2), (5, 1, 4, 2)])
def test_coulomb_integral_is_hydrogenic_for_integer_nu(n_a, l_a, n_b, l_b):
    r = sympy.symbols("r", positive=True)
    ref = float(sympy.integrate(R_nl(n_a, l_a, r, 1) * R_nl(n_b, l_b, r, 1) * r**3, (r, 0, sympy.oo)))
    assert abs(ic.coulomb_dipole_integral(n_a, l_a, n_b, l_b)) == pytest.approx(abs(ref), rel=1e-5)


def test_uncertainty_rule_grows_with_fit_cancellation_and_range():
    base = float(ic.combine_rel_unc([0.0], [1.0], [False])[0])
    assert base == pytest.approx(math.hypot(ic.BASE_REL_UNC, ic.CANCEL_REL_UNC))
    assert ic.combine_rel_unc([0.3], [1.0], [False])[0] > base
    assert ic.combine_rel_unc([0.0], [0.01], [False])[0] > 1.0
    assert ic.combine_rel_unc([0.0], [1.0], [True])[0] > ic.RANGE_REL_UNC
