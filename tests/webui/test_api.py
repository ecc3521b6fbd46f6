"""The JSON API under /api/v1: reads agree with the Catalog; the write needs the token and is all-or-nothing."""

from __future__ import annotations

import json
import re

import pytest
from sqlalchemy import func, select

from levels.catalog import LEVEL_COLUMNS, LINE_COLUMNS, LINE_LIST_COLUMNS, SPECIES_COLUMNS, LineQuery
from levels.store.schema import Level

from webui.openapi import openapi_document

from tests.webui.conftest import TOKEN, dataset_names

AUTH = {"Authorization": f"Bearer {TOKEN}"}
GOOD_BODY = {
    "name": "cell-5/api-run", "kind": "measured", "sample": "cell-5", "citation": "lab notebook 12, p. 3",
    "levels": [
        {"spectrum": "Li I", "configuration": "1s2.2s", "term": "2S", "j": "1/2", "energy_cm1": 0},
        {"spectrum": "Li I", "configuration": "1s2.2p", "term": "2P°", "j": "1/2", "energy_cm1": 14903.7,
         "unc_cm1": 0.02},
        {"spectrum": "Li I", "configuration": "1s2.2p", "term": "2Po", "j": 1.5, "energy_cm1": 14904.0},
    ],
}


def only(rows, columns):
    return [{c: r[c] for c in columns} for r in rows]


def state(catalog):
    return dataset_names(catalog), catalog.read(lambda s: s.scalar(select(func.count()).select_from(Level)))


# ----------------------------------------------------------------- reads

def test_species(reader, shared):
    payload = reader.get("/api/v1/species").get_json()
    assert payload["columns"] == list(SPECIES_COLUMNS)
    assert payload["rows"] == only(shared["catalog"].species_rows(), SPECIES_COLUMNS) and payload["total"] == 1
    assert payload["provenance"]["tool"].startswith("levels ")


def test_levels(reader, shared):
    cat = shared["catalog"]
    payload = reader.get("/api/v1/species/Li_I/levels").get_json()
    assert payload["columns"] == list(LEVEL_COLUMNS) and payload["rows"] == only(cat.level_rows("Li I"), LEVEL_COLUMNS)
    one = reader.get("/api/v1/species/Li_I/levels", query_string={"dataset": shared["demo_dataset"]}).get_json()
    assert one["rows"] == only(cat.level_rows("Li I", [shared["demo_dataset"]]), LEVEL_COLUMNS)
    assert {r["dataset"] for r in one["rows"]} == {shared["demo_dataset"]}
    assert reader.get("/api/v1/species/Li+0/levels").get_json()["rows"] == payload["rows"]


def test_lines_are_paged_and_filtered(reader, shared):
    cat = shared["catalog"]
    args = {"from_nm": "300", "to_nm": "1000", "medium": "air", "multipole": "E1,E2", "min_a": "1e3",
            "limit": "10", "offset": "5", "order": "a"}
    payload = reader.get("/api/v1/species/Li_I/lines", query_string=args).get_json()
    rows, total = cat.line_rows(LineQuery(spectrum="Li I", from_nm=300, to_nm=1000, medium="air",
                                          multipoles=("E1", "E2"), min_a=1e3, order="a", limit=10, offset=5))
    assert payload["columns"] == list(LINE_LIST_COLUMNS)  # the contract columns, then observed/Ritz
    assert [only([r], LINE_COLUMNS)[0] for r in payload["rows"]] == only(rows, LINE_COLUMNS)
    assert (payload["total"], payload["limit"], payload["offset"]) == (total, 10, 5)
    default = reader.get("/api/v1/species/Li_I/lines").get_json()
    assert default["limit"] == 100 and len(default["rows"]) == 100


@pytest.mark.parametrize("args, field", [
    ({"from_nm": "400nm"}, "from_nm"), ({"from_nm": "0"}, "from_nm"), ({"to_nm": "1e999"}, "to_nm"),
    ({"medium": "glass"}, "medium"), ({"multipole": "E1,Q7"}, "multipole"),
    ({"min_a": "-3"}, "min_a"), ({"limit": "0"}, "limit"), ({"limit": "1001"}, "limit"), ({"offset": "-1"}, "offset"),
    ({"offset": "1.5"}, "offset"),
    # the API takes exactly what its OpenAPI document allows: choices as written, a present value never empty
    ({"order": "A"}, "order"), ({"medium": "AIR"}, "medium"), ({"medium": ""}, "medium"), ({"limit": ""}, "limit"),
    ({"from": "abc"}, "from"), ({"from": "0nm"}, "from"), ({"line_name": "H-alfa"}, "line_name"),
    ({"line_name": "H3"}, "line_name"), ({"multipole": "e1"}, "multipole"),
])
def test_bad_line_parameters_are_400_json(reader, shared, args, field):
    response = reader.get("/api/v1/species/Li_I/lines", query_string=args)
    assert response.status_code == 400 and response.mimetype == "application/json"
    assert response.get_json()["error"] == {"code": "bad_parameter", "message": response.get_json()["error"]["message"],
                                            "field": field}


@pytest.mark.parametrize("path", ["/api/v1/species/Fe_II/levels", "/api/v1/species/Zz_I/lines",
                                  "/api/v1/datasets/424242", "/api/v1/nothing", f"/api/v1/datasets/{2**70}"])
def test_not_found_is_json(reader, shared, path):
    response = reader.get(path)
    assert response.status_code == 404 and response.mimetype == "application/json"
    assert set(response.get_json()["error"]) >= {"code", "message", "field"}


def test_dataset(reader, shared):
    info = shared["catalog"].dataset_info(shared["demo_dataset"])
    assert reader.get(f"/api/v1/datasets/{info['id']}").get_json() == {"dataset": info}


def test_wrong_method_is_json_405(reader, shared):
    response = reader.delete("/api/v1/species")
    assert response.status_code == 405 and response.get_json()["error"]["code"] == "method_not_allowed"


# ----------------------------------------------------------------- the write

def test_post_without_or_with_a_wrong_token_is_401_and_writes_nothing(reader, shared):
    cat = shared["catalog"]
    before = state(cat)
    for headers in ({}, {"Authorization": "Bearer wrong"}, {"Authorization": f"Basic {TOKEN}"},
                    {"Authorization": "Bearer"}, {"Authorization": f"bearer {TOKEN}x"}):
        response = reader.post("/api/v1/datasets", json=GOOD_BODY, headers=headers)
        assert response.status_code == 401, headers
        assert response.headers["WWW-Authenticate"].startswith("Bearer")
        assert response.get_json()["error"]["code"] == "unauthorised"
    assert state(cat) == before


def test_post_is_off_without_a_configured_token(client, app, store):
    app.config["LEVELS_API_TOKEN"] = None
    before = state(store["catalog"])
    response = client.post("/api/v1/datasets", json=GOOD_BODY, headers=AUTH)
    assert response.status_code == 401 and "off" in response.get_json()["error"]["message"]
    assert state(store["catalog"]) == before


def test_post_creates_a_measured_dataset_with_its_levels(client, store):
    cat = store["catalog"]
    response = client.post("/api/v1/datasets", json=GOOD_BODY, headers=AUTH)
    assert response.status_code == 201
    info = response.get_json()["dataset"]
    assert response.headers["Location"].endswith(f"/api/v1/datasets/{info['id']}")
    assert info == cat.dataset_info("cell-5/api-run")
    assert info["kind"] == "measured" and info["levels"] == 3 and info["sample"] == "cell-5"
    assert info["citation"] == "lab notebook 12, p. 3"
    rows = cat.level_rows("Li I", ["cell-5/api-run"])
    assert [r["label"] for r in rows] == ["1s2.2s 2S1/2", "1s2.2p 2P°1/2", "1s2.2p 2P°3/2"]
    again = client.post("/api/v1/datasets", json=GOOD_BODY, headers=AUTH)
    assert again.status_code == 409 and again.get_json()["error"]["field"] == "name"
    assert cat.dataset_info("cell-5/api-run")["levels"] == 3


def test_one_bad_level_writes_nothing_and_every_problem_is_listed(reader, shared):
    cat = shared["catalog"]
    before = state(cat)
    body = json.loads(json.dumps(GOOD_BODY))
    body["levels"][1]["j"] = "5/3"
    body["levels"][2]["energy_cm1"] = -1
    body["levels"].append({"spectrum": "Li I", "configuration": "1s2.3s", "term": "2S", "j": "1/2",
                           "energy_cm1": 27206.1, "colour": "blue"})
    response = reader.post("/api/v1/datasets", json=body, headers=AUTH)
    assert response.status_code == 400
    assert response.get_json()["error"]["field"] == "levels[3].colour"
    del body["levels"][3]["colour"]
    response = reader.post("/api/v1/datasets", json=body, headers=AUTH)
    error = response.get_json()["error"]
    assert response.status_code == 400 and error["code"] == "invalid_levels"
    assert [p["field"] for p in error["problems"]] == ["levels[1].j", "levels[2].energy_cm1"]
    assert error["field"] == "levels[1].j" and "half-integer" in error["message"]
    assert state(cat) == before


BAD_BODIES = [
    ({"levels": GOOD_BODY["levels"]}, 400, "name"),
    ({**GOOD_BODY, "name": "  "}, 400, "name"),
    ({**GOOD_BODY, "name": 7}, 400, "name"),
    ({**GOOD_BODY, "kind": "computed"}, 400, "kind"),
    ({**GOOD_BODY, "levels": []}, 400, "levels"),
    ({**GOOD_BODY, "levels": "Li I"}, 400, "levels"),
    ({**GOOD_BODY, "levels": [["Li I"]]}, 400, "levels[0]"),
    ({**GOOD_BODY, "levels": [{**GOOD_BODY["levels"][0], "j": {"half": 1}}]}, 400, "levels[0].j"),
    ({**GOOD_BODY, "levels": [{**GOOD_BODY["levels"][0], "energy_cm1": True}]}, 400, "levels[0].energy_cm1"),
    ({**GOOD_BODY, "levels": [{**GOOD_BODY["levels"][0], "dataset": "other"}]}, 400, "levels[0].dataset"),
    ({**GOOD_BODY, "owner": "me"}, 400, "owner"),
    ({**GOOD_BODY, "lines": [{"lower": "a"}]}, 400, "lines[0].spectrum"),
    # follows the OpenAPI document, but the upper label names no level: 422 (content refused), not 400
    ({**GOOD_BODY, "lines": [{"spectrum": "Li I", "lower": "1s2.2s 2S1/2", "upper": "1s2.30p 2P°1/2",
                               "wavelength_nm": 300, "medium": "air", "unc_nm": 0.01}]}, 422, "lines[0].upper"),
    # numbers written as text break the document (the API is typed)
    ({**GOOD_BODY, "levels": [{**GOOD_BODY["levels"][0], "energy_cm1": "0"}]}, 400, "levels[0].energy_cm1"),
    ({**GOOD_BODY, "lines": {"x": 1}}, 400, "lines"),
    ([GOOD_BODY], 400, None),
]


def test_post_levels_and_lines_together(reader, shared):
    line = {"spectrum": "Li I", "lower": "1s2.2s 2S1/2", "upper": "1s2.2p 2P°3/2", "wavelength_nm": 670.96,
            "medium": "vacuum", "unc_nm": 0.002, "intensity": 100}
    body = {**GOOD_BODY, "name": "cell-5/with-lines", "lines": [line]}
    response = reader.post("/api/v1/datasets", json=body, headers=AUTH)
    assert response.status_code == 201, response.get_json()
    dataset = response.get_json()["dataset"]
    assert dataset["levels"] == 3 and dataset["lines"] == 1


def test_bad_bodies(reader, shared):
    before = state(shared["catalog"])
    for body, status, field in BAD_BODIES:
        response = reader.post("/api/v1/datasets", json=body, headers=AUTH)
        assert response.status_code == status and response.get_json()["error"]["field"] == field, body
    assert state(shared["catalog"]) == before


def test_post_needs_json(reader, shared):
    before = state(shared["catalog"])
    response = reader.post("/api/v1/datasets", data=json.dumps(GOOD_BODY), headers=AUTH, content_type="text/plain")
    assert response.status_code == 415
    response = reader.post("/api/v1/datasets", data="{not json", headers=AUTH, content_type="application/json")
    assert response.status_code == 400
    response = reader.post("/api/v1/datasets", data=b"name=x", headers=AUTH,
                           content_type="application/x-www-form-urlencoded")
    assert response.status_code == 415
    assert state(shared["catalog"]) == before


# ----------------------------------------------------------------- the document

def _rule_to_path(rule: str) -> str:
    return re.sub(r"<(?:[a-z]+:)?([a-z_]+)>", "{}", rule[len("/api/v1"):])


def test_openapi_document_lists_exactly_the_routes(reader, shared):
    served = reader.get("/api/v1/openapi.json").get_json()
    assert served == json.loads(json.dumps(openapi_document()))
    assert served["openapi"].startswith("3.")
    documented = {(re.sub(r"\{[^}]+\}", "{}", path), method.upper())
                  for path, ops in served["paths"].items() for method in ops}
    routes = {(_rule_to_path(rule.rule), method)
              for rule in shared["app"].url_map.iter_rules() if rule.rule.startswith("/api/v1/")
              for method in rule.methods - {"HEAD", "OPTIONS"}}
    assert documented == routes


def test_openapi_schemas_accept_what_the_api_sends(reader, shared):
    """Each 200/201 body validates against its documented schema (jsonschema_rs, OpenAPI 3.0 'nullable' mapped)."""
    import jsonschema_rs

    document = reader.get("/api/v1/openapi.json").get_json()

    def plain(schema):
        if isinstance(schema, dict):
            if "$ref" in schema:
                return plain(document["components"]["schemas"][schema["$ref"].split("/")[-1]])
            out = {k: plain(v) for k, v in schema.items() if k not in ("nullable", "example")}
            for bound in ("Minimum", "Maximum"):  # OpenAPI 3.0's boolean exclusive bounds, in JSON Schema 2020
                if out.pop(f"exclusive{bound}", False) is True:
                    out[f"exclusive{bound}"] = out.pop(bound.lower())
            if schema.get("nullable") and "type" in schema:
                out["type"] = [schema["type"], "null"]
            elif schema.get("nullable"):
                out = {"anyOf": [out, {"type": "null"}]}
            return out
        if isinstance(schema, list):
            return [plain(s) for s in schema]
        return schema

    info = shared["catalog"].dataset_info(shared["demo_dataset"])
    checks = [("/species", "/api/v1/species"), ("/species/{spectrum}/levels", "/api/v1/species/Li_I/levels"),
              ("/species/{spectrum}/lines", "/api/v1/species/Li_I/lines?limit=1000"),
              ("/datasets/{id}", f"/api/v1/datasets/{info['id']}")]
    for path, url in checks:
        schema = plain(document["paths"][path]["get"]["responses"]["200"]["content"]["application/json"]["schema"])
        jsonschema_rs.validator_for(schema).validate(reader.get(url).get_json())
    error_schema = plain({"$ref": "#/components/schemas/Error"})
    jsonschema_rs.validator_for(error_schema).validate(reader.get("/api/v1/species/Fe_II/levels").get_json())
    new_dataset = plain({"$ref": "#/components/schemas/NewDataset"})
    jsonschema_rs.validator_for(new_dataset).validate(GOOD_BODY)


def test_the_species_cache_is_dropped_when_the_site_writes(store, store_url, tmp_path):
    from webui import create_app

    from tests.webui.conftest import make_config

    app = create_app(make_config(store_url, tmp_path, LEVELS_SPECIES_CACHE_S=600))
    try:
        client = app.test_client()
        assert "Na I" not in client.get("/").get_data(as_text=True)
        body = {"name": "na-run", "levels": [{"spectrum": "Na I", "configuration": "1s2.2s2.2p6.3s", "term": "2S",
                                              "j": "1/2", "energy_cm1": 0}]}
        assert client.post("/api/v1/datasets", json=body, headers=AUTH).status_code == 201
        assert 'href="/species/Na_I"' in client.get("/").get_data(as_text=True)
        assert client.get("/api/v1/species/Na_I/levels").status_code == 200
    finally:
        app.extensions["levels"]["catalog"].close()
