"""The coupled rate method as a unit of work: grouping, skipping, labels and bad input."""

import json

import pytest

from levels.service.rates_common import LevelInput, MethodResult
from levels.service.rates_coupled import can_treat, coupled_rates

# Hg I 6s6p levels, cm-1: Moore 1958, NBS Circular 467 vol. III (from memory); ionization 84184.15 (from memory)
HG = [("6s2", "1S", 0, 1, 0.0), ("6s.6p", "3P°", 0, -1, 37645.080), ("6s.6p", "3P°", 1, -1, 39412.300),
      ("6s.6p", "3P°", 2, -1, 44042.977), ("6s.6p", "1P°", 1, -1, 54068.781)]
IP = 84184.15


def _rows(table):
    return [LevelInput(i + 1, f"{c} {t}{j}", c, t, 2 * j, p, e) for i, (c, t, j, p, e) in enumerate(table)]


@pytest.mark.parametrize("text, expected", [
    ("2p5.3p", True), ("2p5(2P°3/2)3p", True), ("6s.6p", True), ("5d9.6s2.6p", True), ("6s2", True),
    ("1s2.2s2.2p6", True), ("[Ne].3s", False), ("3p", False), ("2p4.3s", False), ("3d2", False),
    ("2p5.3s.3p", False), ("not a configuration", False),
])
def test_can_treat(text, expected):
    assert can_treat(text) is expected


def test_result_shape_and_method_name():
    result = coupled_rates(_rows(HG), ionization_cm1=IP, spectrum="Hg I")
    assert isinstance(result, MethodResult)
    assert result.method.startswith("coupled ")
    assert {(line.lower_id, line.upper_id) for line in result.lines} == {(1, 3), (1, 5)}
    for line in result.lines:
        assert line.multipole == "E1" and line.a_rel_unc > 0 and line.f_abs > 0 and line.line_strength_au > 0
    assert result.skipped == []
    params = result.parameters["configurations"]["6s.6p"]["parameters"]
    assert set(params) == {"E0", "G1", "zeta_outer"}
    assert all(p["unc_cm1"] > 0 for p in params.values())
    json.dumps(result.parameters)                 # stored in the dataset's options: plain JSON
    assert result.parameters["configurations"]["6s.6p"]["average_energy_cm1"] == pytest.approx(
        sum((2 * j + 1) * e for _, _, j, _, e in HG[1:]) / 12, abs=150)


def test_untreatable_configurations_are_skipped_with_a_reason():
    rows = _rows(HG) + [LevelInput(10, "6p2 3P0", "6p2", "3P", 0, 1, 71000.0),
                        LevelInput(11, "6s.7s 3S1", "6s.7s", "3S", 2, 1, 62350.456),
                        LevelInput(12, "7s 2S1/2", "[Xe].4f14.5d10.7s", "2S", 1, 1, 63000.0),
                        LevelInput(13, "x", "6s.8q", "", 2, 1, 70000.0),
                        LevelInput(14, "6s.7p ?", "6s.7p", "", None, -1, 69000.0)]
    result = coupled_rates(rows, ionization_cm1=IP, spectrum="Hg I")
    reasons = dict(result.skipped)
    assert "one electron or one hole" in reasons[10]
    assert "single method" in reasons[12]
    assert "configuration not understood" in reasons[13]
    assert reasons[14] == "J not resolved"
    assert 11 not in reasons            # 6s7s is treated (one level of four measured)
    assert any((line.upper_id, line.lower_id) == (11, 3) for line in result.lines)   # 6s7s 3S1 -> 6s6p 3P1


def test_fewer_levels_than_parameters_is_reported():
    rows = _rows(HG) + [LevelInput(11, "6s.7s 3S1", "6s.7s", "3S", 2, 1, 62350.456)]
    result = coupled_rates(rows, ionization_cm1=IP, spectrum="Hg I")
    config = result.parameters["configurations"]["6s.7s"]
    assert config["n_levels"] == 1
    assert [name for name, p in config["parameters"].items() if p["fixed"]] == ["G0"]
    assert any("6s.7s has 1 measured level(s) for 2 parameters; G0 kept" in w for w in result.warnings)


def test_more_levels_of_one_j_than_the_configuration_has():
    rows = _rows(HG) + [LevelInput(20, "extra", "6s.6p", "1P°", 2, -1, 60000.0)]
    result = coupled_rates(rows, ionization_cm1=IP, spectrum="Hg I")
    reasons = dict(result.skipped)
    assert "3 measured levels with J = 1 in configuration 6s.6p, which has 2" in reasons[3]
    assert {3, 5, 20} <= set(reasons)
    assert not result.lines                           # only J = 0 and J = 2 remain: no E1 to 6s2 1S0
    assert result.parameters["configurations"]["6s.6p"]["n_levels"] == 2


def test_a_j_the_configuration_lacks_is_skipped_alone():
    rows = _rows(HG) + [LevelInput(21, "6s.6p J=3", "6s.6p", "", 6, -1, 60000.0)]
    result = coupled_rates(rows, ionization_cm1=IP, spectrum="Hg I")
    assert dict(result.skipped) == {21: "configuration 6s.6p has no level with J = 3"}
    assert len(result.lines) == 2


def test_one_configuration_written_two_ways_is_one_group():
    rows = _rows(HG)
    rows[1] = LevelInput(2, "x", "[Xe].4f14.5d10.6s.6p", "3P°", 0, -1, 37645.080)
    result = coupled_rates(rows, ionization_cm1=IP, spectrum="Hg I")
    assert list(result.parameters["configurations"]) == ["6s2", "[Xe].4f14.5d10.6s.6p"]
    assert result.parameters["configurations"]["[Xe].4f14.5d10.6s.6p"]["n_levels"] == 4


def test_lifetimes_left_out_where_a_decay_channel_is_outside_the_method():
    # Ne I 2p5 3s J = 1 levels decay to 2p6 by a core-electron jump the method refuses: no lifetime for them
    rows = [LevelInput(1, "2p6 1S0", "2p6", "1S", 0, 1, 0.0)] + [
        LevelInput(2 + i, f"3s {j}", "2p5.3s", "", 2 * j, -1, e) for i, (j, e) in
        enumerate([(2, 134041.840), (1, 134459.287), (0, 134818.640), (1, 135888.717)])] + [
        LevelInput(6, "3p 3", "2p5.3p", "", 6, 1, 149657.039)]     # Ne I levels: Kaufman & Minnhagen 1972 (from memory)
    result = coupled_rates(rows, ionization_cm1=173929.75, spectrum="Ne I")
    assert set(result.lifetimes) == {6}
    assert result.parameters["lifetime_incomplete_level_ids"] == [3, 5]
    assert any("lifetimes of the levels that decay that way are not given" in w for w in result.warnings)


def test_swapped_ls_labels_are_reported_as_contradictory():
    swapped = [HG[0], HG[1], ("6s.6p", "1P°", 1, -1, 39412.300), HG[3], ("6s.6p", "3P°", 1, -1, 54068.781)]
    result = coupled_rates(_rows(swapped), ionization_cm1=IP, spectrum="Hg I")
    conflicts = result.parameters["configurations"]["6s.6p"]["label_conflicts"]
    assert len(conflicts) == 2
    assert "contradictory label" in conflicts[0]
    assert any("contradictory label" in w for w in result.warnings)
    # the rates follow the energy order, not the labels
    assert len(result.lines) == 2


def test_impossible_term_is_reported():
    bad = [HG[0], HG[1], HG[2], ("6s.6p", "3D°", 2, -1, 44042.977), HG[4]]
    result = coupled_rates(_rows(bad), ionization_cm1=IP, spectrum="Hg I")
    conflicts = result.parameters["configurations"]["6s.6p"]["label_conflicts"]
    assert conflicts == ["6s.6p 3D°2: 3D° with J = 2 does not occur in configuration 6s.6p"]


# Ne I 2p5 3p, cm-1, (parent 2J, 2K, J): Kaufman & Minnhagen 1972, J. Opt. Soc. Am. 62, 92 (from memory)
NE_3P = [((3, 1, 1), 148257.790), ((3, 5, 3), 149657.039), ((3, 5, 2), 149824.221), ((3, 3, 1), 150121.592),
         ((3, 3, 2), 150315.861), ((1, 3, 1), 150772.111), ((1, 3, 2), 150858.508), ((3, 1, 0), 150917.431),
         ((1, 1, 1), 151038.452), ((1, 1, 0), 152970.733)]


def _ne_3p(labels):
    rows = []
    for i, ((parent, two_k, j), (_, energy)) in enumerate(zip(labels, NE_3P)):
        config = f"2p5(2P°{parent}/2)3p"
        rows.append(LevelInput(i + 1, f"{config} 2[{two_k}/2]{j}", config, f"2[{two_k}/2]", 2 * j, 1, energy))
    return rows


def test_jk_labels_match_and_contradictions_are_found():
    labels = [label for label, _ in NE_3P]
    good = coupled_rates(_ne_3p(labels), ionization_cm1=173929.75, spectrum="Ne I")
    assert good.parameters["configurations"]["2p5.3p"]["label_conflicts"] == []
    # the labels of 2p10 and 2p2 (Paschen's names; both J = 1, about 3/4 pure in jK) swapped
    labels[0], labels[8] = labels[8], labels[0]
    bad = coupled_rates(_ne_3p(labels), ionization_cm1=173929.75, spectrum="Ne I")
    conflicts = bad.parameters["configurations"]["2p5.3p"]["label_conflicts"]
    assert len(conflicts) == 2 and all("contradictory label" in c for c in conflicts)
    assert conflicts[0].startswith("2p5(2P°1/2)3p 2[1/2]1: labelled parent J = 1/2 2[1/2]")


def test_no_ionization_limit_skips_everything():
    result = coupled_rates(_rows(HG), ionization_cm1=None)
    assert len(result.skipped) == len(HG) and not result.lines
    assert "ionization limit" in result.skipped[0][1]


def test_parity_contradicting_the_configuration_is_skipped():
    rows = _rows(HG) + [LevelInput(30, "6s.6p wrong", "6s.6p", "", 4, 1, 45000.0)]
    result = coupled_rates(rows, ionization_cm1=IP, spectrum="Hg I")
    assert "parity +1 contradicts" in dict(result.skipped)[30]


def test_without_spectrum_the_fit_still_runs():
    result = coupled_rates(_rows(HG), ionization_cm1=IP)
    assert result.parameters["configurations"]["6s.6p"]["rms_cm1"] < 200
    assert len(result.lines) == 2


def test_lifetime_uncertainty_is_the_weighted_line_figure():
    result = coupled_rates(_rows(HG), ionization_cm1=IP, spectrum="Hg I")
    line = next(line for line in result.lines if line.upper_id == 5)
    tau, rel = result.lifetimes[5]
    assert tau == pytest.approx(1 / line.a_per_s)
    assert rel == pytest.approx(line.a_rel_unc)


def test_lande_g_in_intermediate_coupling_keeps_the_g_sum():
    # Pauli's g-sum rule: the sum of g over the levels of one J of a configuration does not depend on the
    # coupling (Condon & Shortley 1935, ch. XVI, from memory); LS values from levels.physics.lines.lande
    from levels.physics.lines.lande import lande_g_ls

    result = coupled_rates(_rows(HG), ionization_cm1=IP, spectrum="Hg I")
    rows = {row["level_id"]: row for row in result.parameters["configurations"]["6s.6p"]["levels"]}
    g_3p1, g_1p1 = rows[3]["lande_g"], rows[5]["lande_g"]
    ls_sum = float(lande_g_ls(2, 1, 2)) + float(lande_g_ls(0, 1, 2))
    assert g_3p1 + g_1p1 == pytest.approx(ls_sum, rel=1e-12)
    assert float(lande_g_ls(0, 1, 2)) < g_1p1 < g_3p1 < float(lande_g_ls(2, 1, 2))
    assert rows[2]["lande_g"] is None                      # J = 0
