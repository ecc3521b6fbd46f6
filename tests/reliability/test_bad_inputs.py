"""Bad-input catalogue: every case is refused with its exact message and leaves the store unchanged.

The cases are data files in tests/data/bad_inputs/{levels,lines,peaks,api}/ with
the expected first error of each in MANIFEST.tsv; the level files of
tests/data/bad_levels/ (EXPECTED.tsv) are run here too, through the command line.
Every case runs on SQLite and, when configured, PostgreSQL, against a store
that already holds the invented Li I levels, and the canonical dump of the
store is compared before and after.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import stat
from pathlib import Path

import pytest
from click.testing import CliRunner

from levels.catalog import Catalog
from levels.cli import main
from levels.errors import InputFileError, LevelsError
from levels.service import maintenance
from levels.store.database import dump

from .conftest import DEMO

DATA = Path(__file__).resolve().parents[1] / "data"
CATALOGUE = DATA / "bad_inputs"
KINDS = ("levels", "lines", "peaks", "api", "store", "cli", "desk")
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
    assert len(CASES) + len(_bad_levels()) >= 150
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


# ----------------------------------------------------------------- issue 19: store files, command line, desk forms
# Store files are recipes (tests/data/bad_inputs/store/*.json) applied to a fresh export of a small store, with the
# checksum recomputed, so they follow the schema revision; command-line cases are argument lists with
# placeholders; desk cases are form posts. Every expected message is exact (paths replaced by placeholders).



def _kind_cases(kind: str) -> list[tuple[str, str]]:
    return [(n, e) for k, n, e in CASES if k == kind]


@pytest.fixture(scope="module")
def export_lines(tmp_path_factory) -> list[bytes]:
    """The lines of an export of a small SQLite store (Li I levels, a sample, derived lines)."""
    folder = tmp_path_factory.mktemp("export")
    with Catalog(f"sqlite:///{folder / 'source.sqlite'}", actor="pytest") as source:
        source.init()
        source.import_file(DEMO / "sample-li-cell.csv", sample="seed", dataset="li/levels")
        maintenance.export_store(source, folder / "source.jsonl")
    return (folder / "source.jsonl").read_bytes().splitlines(keepends=True)


def _encode(obj) -> bytes:
    return (json.dumps(obj, ensure_ascii=False, separators=(",", ":")) + "\n").encode("utf-8")


def build_store_file(recipe: dict, lines: list[bytes], folder: Path, name: str) -> Path:
    """Apply a recipe to the export lines and write the file (checksum recomputed unless dropped)."""
    path = folder / f"{name}{recipe.get('suffix', '.jsonl')}"
    special = recipe.get("special")
    if special == "fifo":
        os.mkfifo(path)
        return path
    if special == "directory":
        path.mkdir()
        return path
    if "raw" in recipe:
        path.write_bytes(recipe["raw"].encode("utf-8"))
        return path
    body = list(lines[:-1])
    if "header" in recipe:
        header = json.loads(body[0])
        header.update(recipe["header"])
        body[0] = _encode(header)
    if "table" in recipe:
        rows = [i for i, line in enumerate(body[1:], start=1) if json.loads(line)["table"] == recipe["table"]]
        index = rows[recipe["index"]]
        obj = json.loads(body[index])
        obj["row"].update(recipe["set"])
        body[index] = _encode(obj)
    if "append_row" in recipe:
        body.append(_encode(recipe["append_row"]))
    if not recipe.get("drop_checksum"):
        body.append(_encode({"sha256": hashlib.sha256(b"".join(body)).hexdigest()}))
    path.write_bytes(b"".join(body))
    return path


@pytest.mark.parametrize("name, expected", _kind_cases("store"))
def test_bad_store_file_is_refused(catalog, export_lines, tmp_path, name, expected):
    recipe = json.loads((CATALOGUE / "store" / name).read_text(encoding="utf-8"))
    path = build_store_file(recipe, export_lines, tmp_path, Path(name).stem)
    before = dump(catalog.engine)
    with pytest.raises(LevelsError) as info:
        maintenance.import_store(catalog, path)
    message = f"{type(info.value).__name__}: {info.value}".replace(str(path), path.name)
    assert message == expected
    assert dump(catalog.engine) == before
    result = CliRunner().invoke(main, ["--db", catalog.url, "import-store", str(path)])
    assert result.exit_code != 0 and "Traceback" not in result.output, result.output
    assert re.search(r"^(error|Error): ", result.output, re.M), result.output
    assert dump(catalog.engine) == before


def _fill_placeholders(args: list[str], places: dict[str, str]) -> list[str]:
    out = []
    for arg in args:
        for key, value in places.items():
            arg = arg.replace("{" + key + "}", value)
        out.append(arg)
    return out


def _error_line(output: str) -> str | None:
    found = [line for line in output.splitlines() if line.startswith(("error: ", "Error: "))]
    return found[-1] if found else None


@pytest.mark.parametrize("name, expected", _kind_cases("cli"))
def test_bad_command_line_is_refused(seeded, tmp_path, name, expected):
    args = json.loads((CATALOGUE / "cli" / name).read_text(encoding="utf-8"))
    sqlite = seeded.url.startswith("sqlite:")
    if any("{store_file}" in a or "link-to-store" in a for a in args) and not sqlite:
        pytest.skip("a SQLite store file is needed")
    scratch = tmp_path / "scratch"
    scratch.mkdir()
    places = {"tmp": str(scratch), "db": seeded.url, "fifo": str(scratch / "pipe.csv"),
              "peaks": str(scratch / "peaks.csv"), "levels_file": str(scratch / "levels.csv")}
    if sqlite:
        places["store_file"] = seeded.url[len("sqlite:///"):]
        (scratch / "link-to-store").symlink_to(places["store_file"])
    # a private null device: if the code under test wrongly replaced a device, only this copy would go
    places["null_device"] = str(scratch / "null")
    try:
        os.mknod(places["null_device"], 0o666 | stat.S_IFCHR, os.makedev(1, 3))
    except PermissionError:
        if any("null" in a for a in args):
            pytest.skip("creating a device node needs privileges")
    (scratch / "link-to-null").symlink_to(places["null_device"])
    os.mkfifo(places["fifo"])
    (scratch / "peaks.csv").write_text("peak_nm,medium\n670.79,air\n", encoding="utf-8")
    (scratch / "levels.csv").write_text("spectrum,configuration,term,j,energy_cm1\nLi I,1s2.5s,2S,1/2,39015.0\n",
                                        encoding="utf-8")
    listing = sorted(os.listdir(scratch))
    args = _fill_placeholders(args, places)
    if args[0] != "--db":
        args = ["--db", seeded.url, *args]
    before = dump(seeded.engine)
    store_bytes = Path(places["store_file"]).read_bytes() if sqlite else None
    result = CliRunner().invoke(main, args)
    assert result.exit_code != 0 and "Traceback" not in result.output, result.output
    shown = _error_line(result.output)
    for key in ("store_file", "fifo", "peaks", "levels_file", "null_device", "tmp"):
        if key in places and shown:
            shown = shown.replace(places[key], "{" + key + "}")
    assert shown == expected, result.output
    assert dump(seeded.engine) == before
    if sqlite:
        assert Path(places["store_file"]).read_bytes() == store_bytes
    assert sorted(os.listdir(scratch)) == listing  # no half-written output, no folder created
    if "null_device" in places:
        assert stat.S_ISCHR(os.lstat(places["null_device"]).st_mode)  # the device node is still a device


@pytest.fixture
def desk_client(seeded, tmp_path):
    webui = pytest.importorskip("webui", reason="the web site is not in this tree")
    app = webui.create_app({"LEVELS_DB": seeded.url, "SECRET_KEY": "bad-inputs", "LEVELS_API_TOKEN": TOKEN,
                            "TESTING": True, "LEVELS_DESK_NEEDS_TOKEN": False,
                            "LEVELS_INSTANCE_PATH": str(tmp_path / "instance"),
                            "LEVELS_UPLOAD_DIR": str(tmp_path / "uploads")})
    yield app.test_client()
    app.extensions["levels"]["catalog"].close()


_FIELD_ERROR = re.compile(r'id="([a-z]+-[a-z_0-9]+)-error" class="field-error">(.*?)</span>', re.S)
_CSRF = re.compile(r'name="csrf_token" value="([^"]+)"')


@pytest.mark.parametrize("name, expected", _kind_cases("desk"))
def test_bad_desk_form_is_refused(seeded, desk_client, name, expected):
    import html
    import io

    case = json.loads((CATALOGUE / "desk" / name).read_text(encoding="utf-8"))
    page = desk_client.get("/desk/")
    token = _CSRF.search(page.get_data(as_text=True)).group(1)
    data = {"csrf_token": token, **case["data"]}
    if case["form"] == "upload":
        data["file"] = (io.BytesIO(case["file"].encode("utf-8")), "levels.csv")
    path = {"level": "/desk/levels", "sample": "/desk/samples", "upload": "/desk/upload"}[case["form"]]
    before = dump(seeded.engine)
    response = desk_client.post(path, data=data)
    found = _FIELD_ERROR.search(response.get_data(as_text=True))
    shown = f"{response.status_code} {found.group(1)}: {html.unescape(found.group(2))}" if found else \
        f"{response.status_code} (no field error)"
    assert shown == expected
    assert dump(seeded.engine) == before


@pytest.mark.parametrize("kind, name, expected", [c for c in CASES if c[0] in ("levels", "lines")] + _bad_levels(),
                         ids=lambda v: v if isinstance(v, str) and len(v) < 60 else None)
def test_bad_file_uploaded_at_the_desk_is_never_a_server_error(seeded, desk_client, kind, name, expected):
    """Every bad level or line file, uploaded through the desk, is shown as problems (never a 500); nothing written."""
    import io

    path = (DATA / "bad_levels" / name) if kind == "bad_levels" else (CATALOGUE / kind / name)
    token = _CSRF.search(desk_client.get("/desk/").get_data(as_text=True)).group(1)
    before = dump(seeded.engine)
    response = desk_client.post("/desk/upload", data={"csrf_token": token,
                                                      "file": (io.BytesIO(path.read_bytes()), name)})
    assert response.status_code in (200, 400)
    text = response.get_data(as_text=True)
    assert "Traceback" not in text and 'name="token"' not in text or kind == "levels" and "already" in expected
    assert dump(seeded.engine) == before
