"""Bad-input catalogue: every case is refused with its exact message and leaves the store unchanged.

The cases are data files in tests/data/bad_inputs/{levels,lines,peaks,api}/ with
the expected first error of each in MANIFEST.tsv; the level files of
tests/data/bad_levels/ (EXPECTED.tsv) are run here too, through the command line.
Every case runs on SQLite and, when configured, PostgreSQL, against a store
that already holds the invented Li I levels, and the canonical dump of the
store is compared before and after.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner

from levels.cli import main
from levels.errors import InputFileError, LevelsError
from levels.store.database import dump

from .conftest import DEMO

DATA = Path(__file__).resolve().parents[1] / "data"
CATALOGUE = DATA / "bad_inputs"
KINDS = ("levels", "lines", "peaks", "api")
TOKEN = "bad-inputs-token-5e2a"


def _manifest() -> list[tuple[str, str, str]]:
    rows = []
    for line in (CATALOGUE / "MANIFEST.tsv").read_text(encoding="utf-8").splitlines():
        if line.startswith("#") or not line.strip():
            continue
        kind, name, expected = line.split("\t", 2)
        rows.append((kind, name, expected))
    return rows


def _bad_levels() -> list[tuple[str, str, str]]:
    rows = []
    for line in (DATA / "bad_levels" / "EXPECTED.tsv").read_text(encoding="utf-8").splitlines():
        if line.startswith("#") or not line.strip():
            continue
        name, expected = line.split("\t", 1)
        rows.append(("bad_levels", name, expected))
    return rows


CASES = _manifest()


def test_catalogue_is_complete():
    assert len(CASES) >= 60
    counts = {kind: sum(1 for k, _, _ in CASES if k == kind) for kind in KINDS}
    assert min(counts.values()) >= 10, counts
    assert {(k, n) for k, n, _ in CASES} == {(p.parent.name, p.name) for kind in KINDS
                                            for p in (CATALOGUE / kind).iterdir()}
    assert len({(k, n) for k, n, _ in CASES}) == len(CASES)


@pytest.fixture
def seeded(catalog):
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="seed", dataset="li/levels")
    return catalog


def _message(exc: LevelsError) -> str:
    if isinstance(exc, InputFileError):
        return str(exc.problems[0])
    return f"{type(exc).__name__}: {exc}"


@pytest.mark.parametrize("kind, name, expected", [c for c in CASES if c[0] in ("levels", "lines")] + _bad_levels(),
                         ids=lambda v: v if isinstance(v, str) and len(v) < 60 else None)
def test_bad_file_is_refused_by_catalog_and_cli(seeded, kind, name, expected):
    path = (DATA / "bad_levels" / name) if kind == "bad_levels" else (CATALOGUE / kind / name)
    before = dump(seeded.engine)
    with pytest.raises(LevelsError) as info:
        seeded.import_file(path, sample="bad")
    assert _message(info.value) == expected
    assert dump(seeded.engine) == before
    result = CliRunner().invoke(main, ["--db", seeded.url, "import", str(path), "--sample", "bad"])
    assert result.exit_code == 1 and "Traceback" not in result.output
    shown = expected.split(": ", 1)[1] if expected.startswith(("AlreadyExistsError: ",)) else expected
    assert f"error: {shown}" in result.output
    assert dump(seeded.engine) == before


@pytest.mark.parametrize("name, expected", [(n, e) for k, n, e in CASES if k == "peaks"])
def test_bad_peaks_file_is_refused(seeded, name, expected):
    before = dump(seeded.engine)
    with pytest.raises(InputFileError) as info:
        seeded.identify_peaks(["Li I"], CATALOGUE / "peaks" / name, tolerance_nm=0.005)
    assert str(info.value.problems[0]) == expected
    result = CliRunner().invoke(main, ["--db", seeded.url, "identify", "Li I", str(CATALOGUE / "peaks" / name)])
    assert result.exit_code == 1 and f"error: {expected}" in result.output
    assert dump(seeded.engine) == before


@pytest.fixture
def client(seeded, tmp_path):
    webui = pytest.importorskip("webui", reason="the web site is not in this tree")
    app = webui.create_app({"LEVELS_DB": seeded.url, "SECRET_KEY": "bad-inputs", "LEVELS_API_TOKEN": TOKEN,
                            "TESTING": True, "LEVELS_INSTANCE_PATH": str(tmp_path / "instance"),
                            "LEVELS_UPLOAD_DIR": str(tmp_path / "uploads")})
    if not any(r.rule == "/api/v1/datasets" and "POST" in r.methods for r in app.url_map.iter_rules()):
        pytest.skip("POST /api/v1/datasets does not exist yet")
    yield app.test_client()
    app.extensions["levels"]["catalog"].close()


@pytest.mark.parametrize("name, expected", [(n, e) for k, n, e in CASES if k == "api"])
def test_bad_api_body_is_refused(seeded, client, name, expected):
    before = dump(seeded.engine)
    response = client.post("/api/v1/datasets", data=(CATALOGUE / "api" / name).read_bytes(),
                           content_type="application/json", headers={"Authorization": f"Bearer {TOKEN}"})
    error = response.get_json()["error"]
    assert f"{response.status_code} {error['code']} {error['field']}: {error['message']}" == expected
    assert dump(seeded.engine) == before
