"""Notation: spectrum, J, terms, configurations; round trips over every element and charge."""

import pytest
from hypothesis import given
from hypothesis import strategies as st

from levels.errors import NotationError
from levels.notation import (
    ELEMENTS,
    Z_MAX,
    Spectrum,
    format_configuration,
    format_j,
    format_term,
    from_roman,
    label_pattern_to_regex,
    level_label,
    parse_configuration,
    parse_j,
    parse_spectrum,
    parse_term,
    to_roman,
)


def test_element_table_has_118_unique_symbols():
    assert Z_MAX == 118
    assert len(set(ELEMENTS[1:])) == 118
    # IUPAC symbols of the first and last elements (IUPAC periodic table, 2016 names)
    assert (ELEMENTS[1], ELEMENTS[26], ELEMENTS[92], ELEMENTS[118]) == ("H", "Fe", "U", "Og")


def test_element_symbols_agree_with_periodictable():
    import periodictable  # second, independent list of symbols

    for z in range(1, 119):
        assert periodictable.elements[z].symbol == ELEMENTS[z], z


@pytest.mark.parametrize("text, z, charge", [
    ("H I", 1, 0), ("He II", 2, 1), ("Fe XXVI", 26, 25), ("U XCII", 92, 91), ("He_II", 2, 1),
    ("C+5", 6, 5), ("C5+", 6, 5), ("C^5+", 6, 5), ("Na", 11, 0), ("Ca+", 20, 1), ("  Ne  I ", 10, 0),
])
def test_parse_spectrum_forms(text, z, charge):
    spec = parse_spectrum(text)
    assert (spec.z, spec.charge) == (z, charge)


def test_hydrogen_isotope_symbols():
    assert parse_spectrum("D I") == Spectrum(1, 0, 2)
    assert parse_spectrum("T I").name == "T I"
    assert Spectrum(1, 0, 2).name == "D I"


@pytest.mark.parametrize("text, part", [
    ("Xx I", "Xx"), ("He IIII", "IIII"), ("He III", "charge 2"), ("H II", "charge 1"), ("Fe", None),
    ("", "empty"), ("C-1", "negative"), ("He 2", "not spectrum notation"), ("U XCIII", "charge 92"),
])
def test_parse_spectrum_errors_name_the_part(text, part):
    if text == "Fe":
        assert parse_spectrum(text).charge == 0
        return
    with pytest.raises(NotationError) as info:
        parse_spectrum(text)
    assert part in str(info.value)


@given(st.integers(1, 118).flatmap(lambda z: st.tuples(st.just(z), st.integers(0, z - 1))))
def test_spectrum_round_trip_every_element_and_charge(zc):
    z, charge = zc
    spec = Spectrum(z, charge)
    assert parse_spectrum(spec.name) == spec
    assert parse_spectrum(spec.url_name) == spec
    assert parse_spectrum(f"{ELEMENTS[z]}{charge}+" if charge else ELEMENTS[z]) == spec
    assert parse_spectrum(f"{ELEMENTS[z]}+{charge}" if charge else ELEMENTS[z]) == spec


def test_every_spectrum_round_trips_exhaustively():
    count = 0
    for z in range(1, 119):
        for charge in range(z):
            assert parse_spectrum(Spectrum(z, charge).name) == Spectrum(z, charge)
            count += 1
    assert count == 118 * 119 // 2


@given(st.integers(1, 399))
def test_roman_round_trip(number):
    assert from_roman(to_roman(number)) == number


@pytest.mark.parametrize("text, two_j", [("3/2", 3), ("1.5", 3), ("2", 4), ("0", 0), ("11/2", 11), ("4/2", 4)])
def test_parse_j(text, two_j):
    assert parse_j(text) == two_j


@pytest.mark.parametrize("text", ["5/3", "-1/2", "1.25", "x", "", "1/0", "3//2"])
def test_parse_j_errors(text):
    with pytest.raises(NotationError):
        parse_j(text)


def test_j_error_message_matches_the_contract():
    with pytest.raises(NotationError, match=r"'5/3' is not a whole or half-integer"):
        parse_j("5/3")


@given(st.integers(0, 400))
def test_j_round_trip(two_j):
    assert parse_j(format_j(two_j)) == two_j


@pytest.mark.parametrize("text, mult, L, parity, shown", [
    ("2P", 2, 1, 1, "2P"), ("3D°", 3, 2, -1, "3D°"), ("2Po", 2, 1, -1, "2P°"), ("1S", 1, 0, 1, "1S"),
    ("4F*", 4, 3, -1, "4F°"), ("2[27]", 2, 27, 1, "2[27]"),
])
def test_parse_term(text, mult, L, parity, shown):
    term = parse_term(text)
    assert (term.multiplicity, term.L, term.parity) == (mult, L, parity)
    assert format_term(term) == shown


@pytest.mark.parametrize("text", ["P2", "2J", "0P", "2p", "2P°°", "x"])
def test_parse_term_errors(text):
    with pytest.raises(NotationError):
        parse_term(text)


def test_term_allows_j():
    term = parse_term("2P°")
    assert term.allows_two_j(1) and term.allows_two_j(3)
    assert not term.allows_two_j(5) and not term.allows_two_j(2)


@pytest.mark.parametrize("text, parity, electrons", [
    ("1s2.2s2.2p6.3s", 1, 11), ("3d", 1, 1), ("2p", -1, 1), ("[Ne].3s", 1, 11), ("2p5 3p", 1, 6),
    ("1s2.2s2.2p", -1, 5),
])
def test_parse_configuration(text, parity, electrons):
    config = parse_configuration(text)
    assert config.parity == parity
    assert config.electrons == electrons


@pytest.mark.parametrize("text, part", [
    ("1p", "l >= n"), ("2p7", "at most 6"), ("2j", "not an orbital letter"), ("1s.1s", "twice"),
    ("", "empty"), ("[Qq].3s", "unknown core"), ("s2", "not a subshell"),
])
def test_parse_configuration_errors(text, part):
    with pytest.raises(NotationError, match=part):
        parse_configuration(text)


@given(st.lists(st.tuples(st.integers(1, 30), st.integers(0, 25)), min_size=1, max_size=5, unique=True))
def test_configuration_round_trip(shells):
    parts = []
    for n, l in shells:
        l = min(l, n - 1)
        parts.append((n, l))
    parts = list(dict.fromkeys(parts))
    from levels.notation import l_letter
    text = ".".join(f"{n}{l_letter(l)}" for n, l in parts)
    config = parse_configuration(text)
    assert parse_configuration(format_configuration(config)) == config


def test_level_label_and_series_pattern():
    assert level_label("3d", "2D", 5) == "3d 2D5/2"
    regex = label_pattern_to_regex("ns 2S1/2")
    match = regex.match("15s 2S1/2")
    assert match and match.group("n") == "15"
    assert regex.match("1s2.15s 2S1/2").group("n") == "15"
    assert regex.match("15p 2P°1/2") is None
    assert label_pattern_to_regex("1s2.ns 2S1/2").match("1s2.7s 2S1/2").group("n") == "7"


@pytest.mark.parametrize("text, z, charge, mass", [
    ("He II A=3", 2, 1, 3), ("3He II", 2, 1, 3), ("He II  A = 3", 2, 1, 3), ("13C5+", 6, 5, 13),
    ("C VI A=13", 6, 5, 13), ("He_II A=4", 2, 1, 4), ("2H I", 1, 0, 2), ("D I A=2", 1, 0, 2), ("H I A=1", 1, 0, 1),
])
def test_isotope_forms(text, z, charge, mass):
    assert parse_spectrum(text) == Spectrum(z, charge, mass)


@pytest.mark.parametrize("text, part", [
    ("D I A=3", "hydrogen-2"), ("3He II A=3", "once"), ("He II A=1", "impossible"), ("He II A=", "not spectrum"),
    ("3Xx I", "Xx"),
])
def test_isotope_form_errors(text, part):
    with pytest.raises(NotationError, match=part):
        parse_spectrum(text)


def test_isotope_name_round_trips_for_every_known_isotope_of_light_elements():
    import periodictable

    count = 0
    for z in range(1, 11):
        for a in periodictable.elements[z].isotopes:
            for charge in range(z):
                spec = Spectrum(z, charge, a)
                assert parse_spectrum(spec.isotope_name) == spec
                count += 1
    assert count > 100
    assert Spectrum(2, 1).isotope_name == "He II" and Spectrum(1, 0, 3).isotope_name == "T I"
