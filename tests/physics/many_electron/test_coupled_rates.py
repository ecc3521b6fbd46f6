"""The coupled method against published transition probabilities and lifetimes.

Only measured level energies go in (with their sources); the A values and
lifetimes come out of the intermediate-coupling fit and the Coulomb
approximation, and are compared with published values. Tolerances are the
issue's (factor 1.5 for the Hg I lifetimes, 30 % for the noble-gas lines); a
value that misses keeps the tolerance and is marked xfail with the figure.
"""

import math

import pytest

from levels.service.rates_common import LevelInput
from levels.service.rates_coupled import coupled_rates

# ----------------------------------------------------------------- Hg I
# Level energies, cm-1: C. E. Moore, Atomic Energy Levels vol. III, NBS Circular 467 (1958) (from memory).
HG_LEVELS = [("6s2", "1S", 0, 1, 0.0),
             ("6s.6p", "3P°", 0, -1, 37645.080), ("6s.6p", "3P°", 1, -1, 39412.300),
             ("6s.6p", "3P°", 2, -1, 44042.977), ("6s.6p", "1P°", 1, -1, 54068.781)]
HG_IONIZATION_CM1 = 84184.15    # Moore 1958 (from memory)
# Measured lifetimes, s (from memory): 6s6p 3P1 about 120 ns (the 253.7 nm intercombination line,
# e.g. the resonance-radiation measurements reviewed by Mitchell & Zemansky 1934, Resonance Radiation and
# Excited Atoms); 6s6p 1P1 1.31 ns (Lurio 1965, Phys. Rev. 140, A1505).
HG_TAU_3P1_S = 120e-9
HG_TAU_1P1_S = 1.31e-9


def _hg_rows():
    return [LevelInput(i + 1, f"{c} {t}{j}", c, t, 2 * j, p, e) for i, (c, t, j, p, e) in enumerate(HG_LEVELS)]


@pytest.fixture(scope="module")
def hg():
    return coupled_rates(_hg_rows(), ionization_cm1=HG_IONIZATION_CM1, spectrum="Hg I")


def test_hg_1p1_lifetime_within_factor_1_5(hg):
    tau, rel = hg.lifetimes[5]
    assert 1 / 1.5 < tau / HG_TAU_1P1_S < 1.5        # computed 1.04 ns
    assert rel > 0.5                                    # a resonance line to the closed-shell ground


@pytest.mark.xfail(strict=True, reason="computed 6s6p 3P1 lifetime 62 ns vs measured ~120 ns (factor 1.94): the "
                                       "fitted singlet-triplet mixing (4.0 % 1P) is larger than the ~2.8 % the "
                                       "measured A ratio implies, and the Coulomb integral is steep here")
def test_hg_3p1_lifetime_within_factor_1_5(hg):
    tau, _ = hg.lifetimes[3]
    assert 1 / 1.5 < tau / HG_TAU_3P1_S < 1.5


def test_hg_intercombination_line_comes_from_mixing(hg):
    by_upper = {line.upper_id: line for line in hg.lines}
    assert set(by_upper) == {3, 5}             # 3P0 and 3P2 have no E1 decay to 6s2 1S0
    ratio = by_upper[3].a_per_s / by_upper[5].a_per_s
    assert 1e-3 < ratio < 0.1
    composition = {row["level_id"]: row["ls"] for row in hg.parameters["configurations"]["6s.6p"]["levels"]}
    assert composition[3].startswith("9") and "1P" in composition[3]   # mostly 3P with some 1P


# ----------------------------------------------------------------- Ne I and Ar I
# Level energies, cm-1, jK labels (Paschen names in the comments):
#   Ne I: Kaufman & Minnhagen 1972, J. Opt. Soc. Am. 62, 92 (from memory);
#   Ar I: Minnhagen 1973, J. Opt. Soc. Am. 63, 1185 (from memory).
# (configuration core, outer, parent 2J, 2K, J, energy)
NE_LEVELS = {
    "ground": ("2p6", None, None, None, 0, 0.0),
    "1s5": ("2p5", "3s", 3, 3, 2, 134041.840), "1s4": ("2p5", "3s", 3, 3, 1, 134459.287),
    "1s3": ("2p5", "3s", 1, 1, 0, 134818.640), "1s2": ("2p5", "3s", 1, 1, 1, 135888.717),
    "2p10": ("2p5", "3p", 3, 1, 1, 148257.790), "2p9": ("2p5", "3p", 3, 5, 3, 149657.039),
    "2p8": ("2p5", "3p", 3, 5, 2, 149824.221), "2p7": ("2p5", "3p", 3, 3, 1, 150121.592),
    "2p6": ("2p5", "3p", 3, 3, 2, 150315.861), "2p5": ("2p5", "3p", 1, 3, 1, 150772.111),
    "2p4": ("2p5", "3p", 1, 3, 2, 150858.508), "2p3": ("2p5", "3p", 3, 1, 0, 150917.431),
    "2p2": ("2p5", "3p", 1, 1, 1, 151038.452), "2p1": ("2p5", "3p", 1, 1, 0, 152970.733),
}
NE_IONIZATION_CM1 = 173929.75   # (from memory)
AR_LEVELS = {
    "ground": ("3p6", None, None, None, 0, 0.0),
    "1s5": ("3p5", "4s", 3, 3, 2, 93143.760), "1s4": ("3p5", "4s", 3, 3, 1, 93750.598),
    "1s3": ("3p5", "4s", 1, 1, 0, 94553.666), "1s2": ("3p5", "4s", 1, 1, 1, 95399.828),
    "2p10": ("3p5", "4p", 3, 1, 1, 104102.099), "2p9": ("3p5", "4p", 3, 5, 3, 105462.760),
    "2p8": ("3p5", "4p", 3, 5, 2, 105617.270), "2p7": ("3p5", "4p", 3, 3, 1, 106087.260),
    "2p6": ("3p5", "4p", 3, 3, 2, 106237.552), "2p5": ("3p5", "4p", 3, 1, 0, 107054.271),
    "2p4": ("3p5", "4p", 1, 3, 1, 107131.709), "2p3": ("3p5", "4p", 1, 3, 2, 107289.700),
    "2p2": ("3p5", "4p", 1, 1, 1, 107496.416), "2p1": ("3p5", "4p", 1, 1, 0, 108722.619),
}
AR_IONIZATION_CM1 = 127109.84   # (from memory)


def _noble_rows(table):
    rows, ids = [], {}
    for i, (name, (core, outer, parent, two_k, j, energy)) in enumerate(table.items()):
        ids[name] = i
        if outer is None:
            rows.append(LevelInput(i, f"{core} 1S0", core, "1S", 0, 1, energy))
            continue
        parity = -1 if outer.endswith("s") else 1
        config = f"{core}(2P°{parent}/2){outer}"
        term = f"2[{two_k}/2]" + ("°" if parity == -1 else "")
        rows.append(LevelInput(i, f"{config} {term}{j}", config, term, 2 * j, parity, energy))
    return rows, ids


def _a_values(table, ionization, spectrum):
    rows, ids = _noble_rows(table)
    result = coupled_rates(rows, ionization_cm1=ionization, spectrum=spectrum)
    return {(line.upper_id, line.lower_id): line for line in result.lines}, ids, result


@pytest.fixture(scope="module")
def neon():
    return _a_values(NE_LEVELS, NE_IONIZATION_CM1, "Ne I")


@pytest.fixture(scope="module")
def argon():
    return _a_values(AR_LEVELS, AR_IONIZATION_CM1, "Ar I")


def _miss(reason):
    return pytest.mark.xfail(strict=True, reason=reason)


# Ne I 2p5 3p - 2p5 3s, every line with A >= 2e7 s-1: W. L. Wiese, M. W. Smith & B. M. Glennon, Atomic
# Transition Probabilities vol. I, NSRDS-NBS 4 (1966) and its later critical updates (values from memory).
# (air wavelength nm, upper, lower, A s-1)
NE_LINES = [
    (585.25, "2p1", "1s2", 6.82e7),
    (607.43, "2p3", "1s4", 6.03e7),
    (640.22, "2p9", "1s5", 5.14e7),
    (638.30, "2p7", "1s4", 3.21e7),
    (650.65, "2p8", "1s4", 3.00e7),
    pytest.param(614.31, "2p6", "1s5", 2.82e7, marks=_miss("computed 1.60e7 vs 2.82e7 (-43 %): 2p6/2p4 mixing")),
    (703.24, "2p10", "1s5", 2.53e7),
    pytest.param(626.65, "2p5", "1s3", 2.49e7, marks=_miss("computed 1.63e7 vs 2.49e7 (-35 %)")),
    pytest.param(667.83, "2p4", "1s2", 2.33e7, marks=_miss("computed 1.19e7 vs 2.33e7 (-49 %): 2p6/2p4 mixing")),
    (659.90, "2p2", "1s2", 2.32e7),
    (671.70, "2p5", "1s2", 2.17e7),
]

# Ar I 3p5 4p - 3p5 4s, every line with A >= 1e7 s-1: W. L. Wiese, J. W. Brault, K. Danzmann, V. Helbig &
# M. Kock, Phys. Rev. A 39, 2461 (1989) (values from memory).
AR_LINES = [
    (750.39, "2p1", "1s2", 4.45e7),
    (751.47, "2p5", "1s4", 4.02e7),
    (811.53, "2p9", "1s5", 3.31e7),
    (810.37, "2p7", "1s4", 2.50e7),
    (763.51, "2p6", "1s5", 2.45e7),
    (840.82, "2p3", "1s2", 2.23e7),
    (842.46, "2p8", "1s4", 2.15e7),
    (912.30, "2p10", "1s5", 1.89e7),
    (794.82, "2p4", "1s3", 1.86e7),
    (826.45, "2p2", "1s2", 1.53e7),
    (852.14, "2p4", "1s2", 1.39e7),
    (772.42, "2p2", "1s3", 1.17e7),
]


def _check(values, wavelength_air_nm, upper, lower, a_ref):
    lines, ids, _ = values
    line = lines[(ids[upper], ids[lower])]
    vacuum_nm = 1e7 / line.wavenumber_cm1
    assert vacuum_nm == pytest.approx(wavelength_air_nm, rel=5e-4)     # right pair (air vs vacuum < 0.03 %)
    assert line.a_per_s == pytest.approx(a_ref, rel=0.30)


@pytest.mark.parametrize("wavelength_nm, upper, lower, a_ref", NE_LINES)
def test_neon_strong_lines_within_30_percent(neon, wavelength_nm, upper, lower, a_ref):
    _check(neon, wavelength_nm, upper, lower, a_ref)


@pytest.mark.parametrize("wavelength_nm, upper, lower, a_ref", AR_LINES)
def test_argon_strong_lines_within_30_percent(argon, wavelength_nm, upper, lower, a_ref):
    _check(argon, wavelength_nm, upper, lower, a_ref)


def test_stated_uncertainty_covers_the_typical_miss(neon, argon):
    # the rule's base figure must not be smaller than the rms log-miss over all compared lines
    misses = []
    for values, table in ((neon, NE_LINES), (argon, AR_LINES)):
        lines, ids, _ = values
        for item in table:
            wavelength, upper, lower, a_ref = item.values if hasattr(item, "values") else item
            misses.append(math.log(lines[(ids[upper], ids[lower])].a_per_s / a_ref))
    rms = math.sqrt(sum(m * m for m in misses) / len(misses))
    from levels.physics.many_electron.intermediate_coupling import BASE_REL_UNC
    assert rms <= BASE_REL_UNC


def test_noble_gas_fit_quality_and_resonance_lines_left_out(neon):
    _, _, result = neon
    configs = result.parameters["configurations"]
    assert configs["2p5.3s"]["rms_cm1"] < 5.0
    assert configs["2p5.3p"]["rms_cm1"] < 60.0
    # Ne II 2P3/2 - 2P1/2 is 780 cm-1 (from memory); the 3s fit's core spin-orbit gives 3/2 zeta
    zeta = configs["2p5.3s"]["parameters"]["zeta_core"]["value_cm1"]
    assert 1.5 * zeta == pytest.approx(780.0, rel=0.05)
    assert any("core electron jumps" in w for w in result.warnings)


def test_argon_core_spin_orbit_from_the_4s_fit(argon):
    # Ar II 3p5 2P3/2 - 2P1/2 is 1431.6 cm-1 (from memory); the 4s fit's core spin-orbit gives 3/2 zeta
    _, _, result = argon
    zeta = result.parameters["configurations"]["3p5.4s"]["parameters"]["zeta_core"]["value_cm1"]
    assert 1.5 * zeta == pytest.approx(1431.6, rel=0.05)


# Hg I 6s7s 3S1 - 6s6p 3P0,1,2 (the visible triplet): 6s7s 3S1 at 62350.456 and 1S0 at 63928.243 cm-1
# (Moore 1958, from memory; both measured levels of the configuration go in);
# A values as commonly tabulated (from memory): 404.66 nm 2.1e7, 435.83 nm 5.57e7, 546.07 nm 4.87e7 s-1.
HG_TRIPLET = [
    (404.66, 2, 2.1e7),
    pytest.param(435.83, 3, 5.57e7, marks=_miss("computed 3.89e7 vs 5.57e7 (-30.1 %)")),
    (546.07, 4, 4.87e7),
]


@pytest.fixture(scope="module")
def hg_triplet():
    rows = _hg_rows() + [LevelInput(6, "6s.7s 3S1", "6s.7s", "3S", 2, 1, 62350.456),
                         LevelInput(7, "6s.7s 1S0", "6s.7s", "1S", 0, 1, 63928.243)]
    result = coupled_rates(rows, ionization_cm1=HG_IONIZATION_CM1, spectrum="Hg I")
    return {line.lower_id: line for line in result.lines if line.upper_id == 6}


@pytest.mark.parametrize("wavelength_nm, lower_id, a_ref", HG_TRIPLET)
def test_hg_visible_triplet_within_30_percent(hg_triplet, wavelength_nm, lower_id, a_ref):
    line = hg_triplet[lower_id]
    assert 1e7 / line.wavenumber_cm1 == pytest.approx(wavelength_nm, rel=5e-4)
    assert line.a_per_s == pytest.approx(a_ref, rel=0.30)
