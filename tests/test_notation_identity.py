"""One state per level whatever the notation of the closed core (issue 14, item 1).

The noble-gas cores and the completion of an omitted core are checked against the ground
configurations of the ``mendeleev`` package (``element(...).ec.conf``, its tabulated electronic
configurations), an outside reference.
"""

from __future__ import annotations

import functools
import importlib.util
from pathlib import Path

import pytest

from levels.errors import InputFileError, NotationError
from levels.io.records import validate_levels
from levels.notation import (
    _CORES,
    L_LETTERS,
    NOBLE_GAS_CORES,
    canonical_configuration,
    madelung_order,
    state_key,
)

mendeleev = pytest.importorskip("mendeleev")

NOBLE_Z = {"He": 2, "Ne": 10, "Ar": 18, "Kr": 36, "Xe": 54, "Rn": 86}


@functools.lru_cache(maxsize=1)
def _mendeleev_configurations() -> dict[int, str]:
    """mendeleev's table of ground configurations by atomic number (one read of its element table)."""
    from mendeleev.fetch import fetch_table

    table = fetch_table("elements")
    return dict(zip(table["atomic_number"], table["electronic_configuration"], strict=True))


def _mendeleev_shells(z: int) -> tuple[tuple[int, int, int], ...]:
    """Ground configuration of element z from mendeleev, as (n, l, occupancy) in mendeleev's order."""
    from mendeleev.econf import ElectronicConfiguration

    conf = ElectronicConfiguration(_mendeleev_configurations()[z]).conf
    return tuple((n, L_LETTERS.index(letter), k) for (n, letter), k in conf.items())


@pytest.mark.parametrize("core", sorted(NOBLE_Z))
def test_noble_gas_cores_match_mendeleev(core):
    # source: mendeleev (element(...).ec.conf, the ground configuration of the noble gas)
    reference = _mendeleev_shells(NOBLE_Z[core])
    assert set(_CORES[core]) == set(reference)
    assert NOBLE_GAS_CORES[core] == NOBLE_Z[core] == sum(k for _, _, k in reference)


@pytest.mark.parametrize("core", sorted(NOBLE_Z))
def test_madelung_order_closes_each_noble_gas_core(core):
    # filling Z electrons in Madelung order gives the noble gas's ground configuration (mendeleev)
    left, filled = NOBLE_Z[core], set()
    for n, l in madelung_order():
        if not left:
            break
        filled.add((n, l, 4 * l + 2))
        left -= 4 * l + 2
    assert left == 0 and filled == set(_mendeleev_shells(NOBLE_Z[core]))


def test_the_four_spellings_of_k_i_4s_are_one_state():
    spellings = ("1s2.2s2.2p6.3s2.3p6.4s", "[Ar].4s", "[Ar]4s", "[Ar] 4s", "4s", "1s2 2s2 2p6 3s2 3p6 4s")
    assert {canonical_configuration(text, 19) for text in spellings} == {"[Ar].4s"}
    # subshells of the core written in another order are still the same closed core
    assert canonical_configuration("1s2.2s2.3s2.2p6.3p6.4s", 19) == "[Ar].4s"
    assert len({state_key(text, "2S", 1, 19) for text in spellings}) == 1


def test_different_states_stay_different():
    assert canonical_configuration("4s", 19) != canonical_configuration("5s", 19)
    assert canonical_configuration("3d", 19) == "[Ar].3d"
    # an ion: K II 3p5.4s is an open 3p shell, not the argon core
    assert canonical_configuration("3p5.4s", 18) == "[Ne].3s2.3p5.4s"
    assert canonical_configuration("3p5.4s", 18) != canonical_configuration("3p6", 18)
    # without the species' electron count an omitted core is not completed
    assert canonical_configuration("4s") == "4s"


def test_parent_terms_follow_their_subshell():
    assert canonical_configuration("2p5(2P°3/2)3p", 10) == "[He].2s2.2p5(2P°3/2)3p"
    assert canonical_configuration("1s2.2s2.2p5(2P°1/2)3p", 10) == "[He].2s2.2p5(2P°1/2)3p"
    assert canonical_configuration("[He].2s2.2p5(2P°3/2).3p", 10) != canonical_configuration("2p5(2P°1/2)3p", 10)


def test_too_many_electrons_is_refused():
    with pytest.raises(NotationError, match="holds 3 electrons, the species 1"):
        canonical_configuration("1s2.2s", 1)


def _core_and_valence(z: int) -> tuple[str, str]:
    """mendeleev's ground configuration written out in full, and its part outside the largest noble-gas core."""
    shells = _mendeleev_shells(z)
    full = ".".join(f"{n}{L_LETTERS[l]}{'' if k == 1 else k}" for n, l, k in shells)
    core = max((c for c in _CORES if set(_CORES[c]) <= set(shells)), key=lambda c: NOBLE_GAS_CORES[c], default=None)
    outer = [s for s in shells if core is None or s not in set(_CORES[core])]
    valence = ".".join(f"{n}{L_LETTERS[l]}{'' if k == 1 else k}" for n, l, k in outer)
    return full, valence


@pytest.mark.parametrize("z", range(3, 87))
def test_an_omitted_core_is_completed_as_mendeleev_writes_it(z):
    # every neutral ground configuration Li..Rn from mendeleev (Cr, Cu, Pd, Gd, Pt included): the part
    # outside the noble-gas core, with the core left out, is the same state as the full configuration
    full, valence = _core_and_valence(z)
    if not valence:
        pytest.skip("a noble gas: nothing outside the core")
    assert canonical_configuration(valence, z) == canonical_configuration(full, z)


def _migration_0004():
    path = Path(__file__).resolve().parents[1] / "levels/store/migrations/versions/0004_canonical_configuration.py"
    spec = importlib.util.spec_from_file_location("migration_0004", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.mark.parametrize(("stored", "electrons"), [
    ("[Ar].4s", 19), ("4s", 19), ("1s2.2s2.2p6.3s2.3p6.4p", 19), ("2p6.3s", 11), ("3d10.4s", 29),
    ("2p5(2P°3/2)3p", 10), ("[Ne].3s2.3p5(2P°1/2)4s", 18), ("1s.2s", 3), ("2p", 1), ("45[27]", 1),
    ("4f14.5d4.6s2", 74), ("[Xe].4f7.5d.6s2", 64), ("1s2.2s", 3),
])
def test_migration_rule_is_the_live_rule_on_stored_forms(stored, electrons):
    assert _migration_0004().canonical(stored, electrons) == canonical_configuration(stored, electrons)


def test_migration_rule_gives_none_for_unreadable_text():
    assert _migration_0004().canonical("not a configuration", 19) is None


def test_one_file_with_the_same_state_twice_is_refused_naming_both_spellings():
    rows = [(2, {"spectrum": "K I", "configuration": "[Ar].4s", "term": "2S", "j": "1/2", "energy_cm1": "0"}),
            (3, {"spectrum": "K I", "configuration": "4s", "term": "2S", "j": "1/2", "energy_cm1": "0.001"})]
    with pytest.raises(InputFileError) as caught:
        validate_levels(rows, source="k.csv")
    text = str(caught.value)
    assert "k.csv" in text and "line 2" in text and "'[Ar].4s 2S1/2'" in text and "[Ar].4s 2S" in text


def test_records_keep_the_written_configuration_and_the_canonical_one():
    rows = [(2, {"spectrum": "K I", "configuration": "[Ar] 4s", "term": "2S", "j": "1/2", "energy_cm1": "0"})]
    (record,) = validate_levels(rows, source="k.csv")
    assert record.configuration == "[Ar].4s" and record.state_configuration == "[Ar].4s"
    rows = [(2, {"spectrum": "K I", "configuration": "4s", "term": "2S", "j": "1/2", "energy_cm1": "0"})]
    (record,) = validate_levels(rows, source="k.csv")
    assert record.configuration == "4s" and record.label == "4s 2S1/2"
    assert record.state_configuration == "[Ar].4s" and record.state_key == ("[Ar].4s", "2S", 1)
