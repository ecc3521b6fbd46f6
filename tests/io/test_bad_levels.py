"""Bad-input catalogue for level files: each gives one clear file:line:field error and writes nothing.

The catalogue lives in tests/data/bad_levels/ with the expected first error of
each file in EXPECTED.tsv; two more cases (a 10 MB line, a file of random
bytes without NUL) are generated here to keep the repository small.
"""

from pathlib import Path

import pytest

from levels.errors import InputFileError
from levels.store.database import dump

DATA = Path(__file__).resolve().parent.parent / "data" / "bad_levels"
DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo" / "sample-li-cell.csv"


def _cases():
    rows = []
    for line in (DATA / "EXPECTED.tsv").read_text(encoding="utf-8").splitlines():
        if line.startswith("#") or not line.strip():
            continue
        name, expected = line.split("\t", 1)
        rows.append((name, expected))
    return rows


CASES = _cases()


def test_catalogue_is_large_enough():
    assert len(CASES) >= 20
    listed = {name for name, _ in CASES}
    on_disk = {p.name for p in DATA.glob("*.csv")}
    assert listed == on_disk


@pytest.fixture
def seeded(catalog):
    catalog.import_file(DEMO, sample="seed")
    return catalog


@pytest.mark.parametrize("name, expected", CASES, ids=[c[0] for c in CASES])
def test_bad_file_is_refused_and_store_unchanged(seeded, name, expected):
    before = dump(seeded.engine)
    with pytest.raises(InputFileError) as info:
        seeded.import_file(DATA / name, sample="bad")
    assert str(info.value.problems[0]) == expected
    first_line = str(info.value).splitlines()[0]
    assert first_line.startswith(name)
    assert "\n" not in str(info.value)
    assert dump(seeded.engine) == before


def test_ten_megabyte_line_is_refused(seeded, tmp_path):
    path = tmp_path / "long_line.csv"
    path.write_bytes(b"spectrum,configuration,term,j,energy_cm1\nNa I,3s,2S,1/2," + b"1" * (10 << 20) + b"\n")
    before = dump(seeded.engine)
    with pytest.raises(InputFileError, match=r"long_line.csv:2: line is \d+ bytes long"):
        seeded.import_file(path)
    assert dump(seeded.engine) == before


def test_random_bytes_without_nul_are_refused(seeded, tmp_path):
    import random

    rng = random.Random(7)
    data = bytes(rng.choice(range(128, 256)) for _ in range(4000))
    path = tmp_path / "noise.csv"
    path.write_bytes(data)
    before = dump(seeded.engine)
    with pytest.raises(InputFileError, match=r"noise.csv:1: not UTF-8 text"):
        seeded.import_file(path)
    assert dump(seeded.engine) == before


def test_all_problems_of_a_file_are_listed(seeded, tmp_path):
    path = tmp_path / "many.csv"
    path.write_text("spectrum,configuration,term,j,energy_cm1\nNa I,3s,2S,5/3,0\nXq I,3s,2S,1/2,0\nNa I,3p,2P°,1/2,x\n",
                    encoding="utf-8")
    with pytest.raises(InputFileError) as info:
        seeded.import_file(path)
    fields = [(p.line, p.field) for p in info.value.problems]
    assert fields == [(2, "j"), (3, "spectrum"), (4, "energy_cm1")]
