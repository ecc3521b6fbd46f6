"""The sample desk: samples, the level form, uploads (preview, then one-transaction commit), the lock."""

from __future__ import annotations

import html
import io
import re
from pathlib import Path

import pytest
import scipy.constants as sc
from sqlalchemy import func, select

from levels.store import database, queries
from levels.store.schema import Level

from tests.webui.conftest import MULTI_ERROR_CSV, TOKEN, csrf_token, dataset_names, make_config

GOOD_LEVEL = {"spectrum": "Li I", "configuration": "1s2.20s", "term": "2S", "j": "1/2", "energy_cm1": "43212.5",
              "unc_cm1": "0.05"}
GOOD_CSV = (
    "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
    "Li I,1s2.2s,2S,1/2,0,\n"
    "Li I,1s2.2p,2P°,1/2,14903.66,0.01\n"
    "Li I,1s2.2p,2P°,3/2,14904.0,0.01\n"
).encode()


def post_form(client, path, data, *, page="/desk/"):
    return client.post(path, data={"csrf_token": csrf_token(client, page), **data})


def level_count(catalog) -> int:
    return catalog.read(lambda s: s.scalar(select(func.count()).select_from(Level)))


def field_error(text: str, form: str, name: str) -> str | None:
    match = re.search(rf'id="{form}-{name}-error" class="field-error">(.*?)</span>', text, re.S)
    return html.unescape(match.group(1)) if match else None


# ----------------------------------------------------------------- page and samples

def test_desk_page_has_three_forms_with_csrf(reader, shared):
    page = reader.get("/desk/")
    assert page.status_code == 200
    text = page.get_data(as_text=True)
    assert text.count('name="csrf_token"') == 3
    assert 'action="/desk/samples"' in text and 'action="/desk/levels"' in text and 'action="/desk/upload"' in text
    assert "demo-1" in text and page.headers["Cache-Control"] == "no-store"


def test_create_sample_with_conditions_in_units(client, store):
    response = post_form(client, "/desk/samples", {
        "name": "cell-3", "gas_fill": "Ne 99%, Ar 1%", "pressure": "2 Torr", "current_a": "0.025",
        "te": "1.2eV", "ne": "1e12cm-3", "tgas": "400", "path_length": "5mm", "instrument": "grating 1200/mm"})
    assert response.status_code == 303 and response.headers["Location"].endswith("/desk/#samples")
    sample = next(s for s in store["catalog"].sample_rows() if s["name"] == "cell-3")
    assert sample["pressure_pa"] == pytest.approx(2 * sc.torr)  # CODATA via scipy.constants: 1 Torr = 101325/760 Pa
    assert sample["te_k"] == pytest.approx(1.2 * sc.e / sc.k)   # 1 eV / k_B
    assert sample["ne_m3"] == pytest.approx(1e18) and sample["path_length_m"] == pytest.approx(5e-3)
    assert sample["current_a"] == pytest.approx(0.025) and sample["gas_fill"] == "Ne 99%, Ar 1%"
    assert "cell-3" in client.get("/desk/").get_data(as_text=True)


BAD_SAMPLES = [
    ({"name": ""}, "name"), ({"name": "x" * 201}, "name"), ({"name": "demo-1"}, "name"),
    ({"name": "s", "pressure": "-3 Pa"}, "pressure"), ({"name": "s", "pressure": "3 parsec"}, "pressure"),
    ({"name": "s", "te": "0"}, "te"), ({"name": "s", "ne": "lots"}, "ne"),
    ({"name": "s", "current_a": "1A"}, "current_a"),
    ({"name": "s", "path_length": "1e9 m"}, "path_length"), ({"name": "s", "description": "d" * 2001}, "description"),
]


def test_bad_sample_fields_are_shown_beside_the_field_and_nothing_is_written(reader, shared):
    before = shared["catalog"].sample_rows()
    for data, field in BAD_SAMPLES:
        response = post_form(reader, "/desk/samples", data)
        assert response.status_code == 400, data
        assert field_error(response.get_data(as_text=True), "sm", field), data
        assert 'value="' + str(html.escape(data["name"][:20])) in response.get_data(as_text=True)  # typed values kept
    assert shared["catalog"].sample_rows() == before


def test_samples_download(reader, shared):
    text = reader.get("/desk/samples.csv").get_data(as_text=True)
    assert text.startswith("# tool: levels") and "\nname,description,gas_fill,pressure_pa" in text and "demo-1" in text


# ----------------------------------------------------------------- one level

def test_add_a_level_to_an_existing_dataset(client, store):
    before = level_count(store["catalog"])
    response = post_form(client, "/desk/levels", {"target": store["demo_dataset"], **GOOD_LEVEL})
    assert response.status_code == 303
    assert level_count(store["catalog"]) == before + 1
    rows = store["catalog"].level_rows("Li I", [store["demo_dataset"]])
    added = next(r for r in rows if r["configuration"] == "1s2.20s")
    assert added["energy_cm1"] == 43212.5 and added["unc_cm1"] == 0.05 and added["label"] == "1s2.20s 2S1/2"


def test_add_a_level_as_a_new_dataset_of_a_sample(client, store):
    response = post_form(client, "/desk/levels", {"target": "__new__", "new_dataset": "cell-9/run-1",
                                                  "sample": "demo-1", **GOOD_LEVEL})
    assert response.status_code == 303
    info = store["catalog"].dataset_info("cell-9/run-1")
    assert info["levels"] == 1 and info["sample"] == "demo-1" and info["kind"] == "measured"


def test_bad_j_is_shown_beside_the_j_field_and_nothing_is_written(reader, shared):
    before = level_count(shared["catalog"])
    response = post_form(reader, "/desk/levels", {"target": shared["demo_dataset"], **GOOD_LEVEL, "j": "5/3"})
    assert response.status_code == 400
    text = response.get_data(as_text=True)
    assert "not a whole or half-integer" in field_error(text, "lv", "j")
    tag = re.search(r'<input id="lv-j"[^>]*>', text).group(0)
    assert 'value="5/3"' in tag and 'aria-invalid="true"' in tag and 'aria-describedby="lv-j-error"' in tag
    assert level_count(shared["catalog"]) == before


def test_every_bad_field_of_the_level_form_is_reported(reader, shared):
    response = post_form(reader, "/desk/levels", {"target": shared["demo_dataset"], "spectrum": "Qq I",
                                                  "configuration": "1p", "term": "P2", "j": "-1", "energy_cm1": "-4",
                                                  "unc_cm1": "inf", "lifetime_s": "0"})
    assert response.status_code == 400
    text = response.get_data(as_text=True)
    for name in ("spectrum", "configuration", "term", "j", "energy_cm1", "unc_cm1", "lifetime_s"):
        assert field_error(text, "lv", name), name


def test_level_target_problems(reader, shared):
    before = level_count(shared["catalog"])
    for extra, field in [({"target": ""}, "target"), ({"target": "__new__"}, "new_dataset"),
                         ({"target": "no-such-dataset"}, "target"), ({"kind": "computed"}, "kind")]:
        response = post_form(reader, "/desk/levels", {"target": shared["demo_dataset"], **GOOD_LEVEL, **extra})
        assert response.status_code == 400 and field_error(response.get_data(as_text=True), "lv", field), extra
    assert level_count(shared["catalog"]) == before


def test_duplicate_state_and_computed_target_are_refused(client, store):
    cat = store["catalog"]
    ground = {"spectrum": "Li I", "configuration": "1s2.2s", "term": "2S", "j": "1/2", "energy_cm1": "0"}
    response = post_form(client, "/desk/levels", {"target": store["demo_dataset"], **ground})
    shown = field_error(response.get_data(as_text=True), "lv", "label")
    assert response.status_code == 400 and "already holds this state" in shown
    database.run_in_transaction(cat.engine, lambda s: queries.create_dataset(s, name="computed-x", kind="computed",
                                                                            method="test"))
    before = level_count(cat)
    response = post_form(client, "/desk/levels", {"target": "computed-x", **GOOD_LEVEL})
    assert response.status_code == 400 and "computed" in field_error(response.get_data(as_text=True), "lv", "target")
    assert level_count(cat) == before


# ----------------------------------------------------------------- uploads

def upload(client, content: bytes, name="levels.csv", **fields):
    data = {"csrf_token": csrf_token(client), "file": (io.BytesIO(content), name), **fields}
    return client.post("/desk/upload", data=data, content_type="multipart/form-data")


def test_upload_with_errors_lists_every_problem_and_writes_nothing(reader, shared):
    cat = shared["catalog"]
    staging = Path(shared["app"].config["LEVELS_UPLOAD_DIR"])
    staged_before = sorted(staging.glob("*")) if staging.exists() else []
    before = (dataset_names(cat), level_count(cat))
    response = upload(reader, MULTI_ERROR_CSV, "bad.csv", sample="demo-1")
    assert response.status_code == 200
    text = html.unescape(response.get_data(as_text=True))
    _, problems = cat.preview_levels(MULTI_ERROR_CSV, source="bad.csv")
    assert len(problems) == 5
    for problem in problems:
        assert problem.message in text
    assert f"{len(problems)} problems" in text and "nothing was written" in text
    assert 'name="token"' not in text
    assert (dataset_names(cat), level_count(cat)) == before
    assert (sorted(staging.glob("*")) if staging.exists() else []) == staged_before  # nothing was staged either


def test_unreadable_uploads_are_reported(reader, shared):
    before = level_count(shared["catalog"])
    for content in [b"", b"\x00\x01binary", "é".encode("latin-1") + b",x\n1,2\n",
                    b"spectrum,configuration\nLi I,1s2.2s\n"]:
        response = upload(reader, content)
        assert response.status_code == 200 and "nothing was written" in response.get_data(as_text=True), content
    assert level_count(shared["catalog"]) == before


def test_upload_preview_then_commit_writes_one_dataset(client, store, tmp_path):
    cat = store["catalog"]
    before = level_count(cat)
    response = upload(client, GOOD_CSV, "run 7.csv", sample="demo-1", dataset="demo-1/run-7")
    text = response.get_data(as_text=True)
    assert response.status_code == 200 and "3 levels ready" in text
    assert level_count(cat) == before  # nothing written by the preview
    staged = list((tmp_path / "uploads").glob("*.upload"))
    assert len(staged) == 1 and staged[0].read_bytes() == GOOD_CSV
    token = re.search(r'name="token" value="([^"]+)"', text).group(1)
    commit = client.post("/desk/upload/commit", data={"csrf_token": csrf_token(client), "token": token})
    assert commit.status_code == 303
    info = cat.dataset_info("demo-1/run-7")
    assert commit.headers["Location"].endswith(f"/datasets/{info['id']}")
    assert info["levels"] == 3 and info["sample"] == "demo-1" and level_count(cat) == before + 3
    assert not list((tmp_path / "uploads").glob("*"))  # the staged file is gone
    again = client.post("/desk/upload/commit", data={"csrf_token": csrf_token(client), "token": token})
    assert again.status_code == 400 and "already written" in again.get_data(as_text=True)
    assert level_count(cat) == before + 3


def test_commit_with_a_forged_or_expired_token_writes_nothing(client, app, store):
    cat = store["catalog"]
    before = level_count(cat)
    forged = client.post("/desk/upload/commit",
                         data={"csrf_token": csrf_token(client), "token": "eyJpZCI6IngifQ.forged"})
    assert forged.status_code == 400
    text = upload(client, GOOD_CSV).get_data(as_text=True)
    token = re.search(r'name="token" value="([^"]+)"', text).group(1)
    app.config["LEVELS_UPLOAD_MAX_AGE_S"] = -1
    expired = client.post("/desk/upload/commit", data={"csrf_token": csrf_token(client), "token": token})
    assert expired.status_code == 400 and "expired" in expired.get_data(as_text=True)
    assert level_count(cat) == before


def test_commit_into_a_taken_dataset_name_is_refused(client, store):
    cat = store["catalog"]
    text = upload(client, GOOD_CSV, dataset=store["demo_dataset"]).get_data(as_text=True)
    token = re.search(r'name="token" value="([^"]+)"', text).group(1)
    before = level_count(cat)
    response = client.post("/desk/upload/commit", data={"csrf_token": csrf_token(client), "token": token})
    shown = field_error(response.get_data(as_text=True), "up", "dataset")
    assert response.status_code == 400 and "already exists" in shown
    assert level_count(cat) == before


def test_upload_without_a_file(reader, shared):
    response = reader.post("/desk/upload", data={"csrf_token": csrf_token(reader)}, content_type="multipart/form-data")
    assert response.status_code == 400 and field_error(response.get_data(as_text=True), "up", "file")


# ----------------------------------------------------------------- the lock

@pytest.fixture
def locked(store, store_url, tmp_path):
    from webui import create_app

    application = create_app(make_config(store_url, tmp_path, LEVELS_DESK_NEEDS_TOKEN=True))
    yield application.test_client()
    application.extensions["levels"]["catalog"].close()


def test_desk_asks_for_the_token_once(locked, store):
    first = locked.get("/desk/")
    assert first.status_code == 303 and "/desk/unlock" in first.headers["Location"]
    token = csrf_token(locked, "/desk/unlock")
    assert locked.post("/desk/samples", data={"csrf_token": token, "name": "sneaky"}).status_code == 303
    assert "sneaky" not in [s["name"] for s in store["catalog"].sample_rows()]
    wrong = locked.post("/desk/unlock?next=/desk/", data={"csrf_token": token, "token": "guess"})
    assert wrong.status_code == 401
    right = locked.post("/desk/unlock?next=//evil.example/desk", data={"csrf_token": token, "token": TOKEN})
    assert right.status_code == 303 and right.headers["Location"] == "/desk/"
    assert locked.get("/desk/").status_code == 200
