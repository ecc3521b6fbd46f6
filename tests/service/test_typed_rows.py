"""The service's typed rows and queries: quantum numbers carried as values, a Spectrum in the line query.

Level and line rows carry 2J, parity, 2S+1 and L as values beside the texts of the contract, so no front end
parses them back; these tests hold the values to the texts (parsed by the notation module) for every level of
the invented Li I demo sample and of a computed one-electron ion, and the query's Spectrum to the isotope it
names.
"""

from __future__ import annotations

from pathlib import Path

import periodictable
import pytest
import scipy.constants as const

from levels.notation import Spectrum, parse_j, parse_spectrum, parse_term
from levels.service.contract import LEVEL_COLUMNS, LEVEL_VALUE_KEYS, LINE_LEVEL_VALUE_KEYS, LineQuery
from levels.service.vocabulary import DEFAULT_MEDIUM

DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo" / "sample-li-cell.csv"


def _values_from_text(row) -> tuple:
    """(2J, 2S+1, L, parity) as the notation module reads them from the row's texts."""
    term = parse_term(row["term"]) if row["term"] else None
    return (parse_j(row["j"]) if row["j"] else None, term.multiplicity if term else None,
            term.L if term else None, row["parity"])


def test_level_rows_carry_their_quantum_numbers(catalog):
    catalog.import_file(DEMO, sample="typed-rows")
    catalog.compute_hydrogenic("He II", n_max=4)
    for spectrum in ("Li I", "He II"):
        rows = catalog.level_rows(spectrum)
        assert rows and all(list(r)[:len(LEVEL_COLUMNS)] == list(LEVEL_COLUMNS) for r in rows)
        assert all(list(r)[len(LEVEL_COLUMNS):] == list(LEVEL_VALUE_KEYS) for r in rows)
        for row in rows:
            assert (row["two_j"], row["multiplicity"], row["L"], row["parity"]) == _values_from_text(row), row["label"]


def test_line_rows_carry_their_levels_quantum_numbers(catalog):
    catalog.import_file(DEMO, sample="typed-rows")
    catalog.compute_hydrogenic("He II", n_max=4)
    for spectrum in ("Li I", "He II"):
        levels = {r["label"]: r for r in catalog.level_rows(spectrum)}
        engine, _ = catalog.species_lines(LineQuery(spectrum=spectrum))
        stored, _ = catalog.line_rows(LineQuery(spectrum=spectrum))
        assert engine, spectrum
        for row in engine + stored:
            for end in ("lower", "upper"):
                level = levels[row[end]]
                assert (row[f"{end}_two_j"], row[f"{end}_parity"], row[f"{end}_multiplicity"], row[f"{end}_L"]) == (
                    level["two_j"], level["parity"], level["multiplicity"], level["L"]), (row[end], end)
            assert set(LINE_LEVEL_VALUE_KEYS) <= set(row)
            # an E1 line joins levels of opposite parity with |ΔJ| <= 1, as its values say without any parsing
            if row["multipole"] == "E1":
                assert row["lower_parity"] == -row["upper_parity"]
                assert abs(row["lower_two_j"] - row["upper_two_j"]) <= 2


def test_line_query_takes_a_spectrum_and_states_it():
    assert LineQuery(spectrum="C5+").spectrum == Spectrum(6, 5)
    assert LineQuery(spectrum="He II A=3").spectrum == Spectrum(2, 1, 3)
    assert LineQuery(spectrum=Spectrum(2, 1, 3)).describe().startswith("lines He II A=3; order")
    assert LineQuery().describe().startswith("lines (all species)")
    # one default medium across the CLI, the Python API, the web forms and the service's own query
    assert LineQuery().medium == DEFAULT_MEDIUM == "air"


def test_a_query_with_a_mass_number_reaches_that_isotope(catalog):
    """Two isotopes stored under one spectrum name: the query's Spectrum picks each, and their lines differ by the
    reduced-mass scaling of the one-electron energies (sigma proportional to the reduced mass mu = m M / (m + M)).
    Electron mass: CODATA via scipy.constants; atomic masses: the periodictable package (AME), minus the two
    electrons (their binding energy, about 79 eV from memory, changes the ratio by less than 1e-9)."""
    catalog.compute_hydrogenic("He II", n_max=3)
    catalog.compute_hydrogenic("He II", mass_number=3, n_max=3)
    heavy, _ = catalog.species_lines(LineQuery(spectrum="He II", medium="vacuum"))
    light, _ = catalog.species_lines(LineQuery(spectrum=Spectrum(2, 1, 3), medium="vacuum"))
    assert {r["dataset"] for r in heavy} == {"hydrogenic He II A=4"}
    assert {r["dataset"] for r in light} == {"hydrogenic He II A=3"}
    me_u = const.m_e / const.atomic_mass

    def mu(mass_number: int) -> float:
        nucleus = periodictable.He[mass_number].mass - 2 * me_u
        return nucleus / (1 + nucleus / me_u) / me_u  # mu / m_e

    expected = mu(3) / mu(4)
    by_pair = {(r["lower"], r["upper"]): r["wavenumber_cm1"] for r in heavy}
    # lines between different shells: fine-structure and Lamb-shift intervals inside one shell scale otherwise
    ratios = [r["wavenumber_cm1"] / by_pair[(r["lower"], r["upper"])] for r in light
              if r["lower"].split()[0][0] != r["upper"].split()[0][0]]
    assert len(ratios) >= 10 and len(light) == len(heavy)
    # the shift is 1 - expected, about 4.6e-5; what the reduced mass leaves out (relativistic recoil, nuclear
    # size) is of order (Z alpha)^2 times the shift, about 1e-8 of the wavenumber for Z = 2, so 1e-8 tests the
    # reduced-mass part of the shift to about 2 parts in 1e4
    assert all(r == pytest.approx(expected, rel=1e-8, abs=0) for r in ratios)


def test_a_spectrum_text_still_works_and_bad_text_is_refused():
    from levels.errors import NotationError

    assert LineQuery(spectrum="Na I").spectrum == parse_spectrum("Na I")
    with pytest.raises(NotationError):
        LineQuery(spectrum="Xq I")
