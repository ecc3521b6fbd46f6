"""The JSON API takes exactly what its OpenAPI document allows (issue 14, item 5).

- line tables carry their rows under ``lines`` as the CLI's JSON does, ``rows`` kept as a documented,
  deprecated alias with the same content;
- requests valid by the document are not refused as bad (an inverted window, two windows, an unknown dataset
  name, a J the term cannot have); requests that break it are 400;
- the server's own check of a body against the document (:func:`webui.openapi.schema_problem`) agrees with an
  independent JSON Schema validator (``jsonschema_rs``) on generated bodies.
"""

from __future__ import annotations

import math

import jsonschema_rs
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from webui.openapi import openapi_document, schema_problem

from tests.webui.conftest import TOKEN

AUTH = {"Authorization": f"Bearer {TOKEN}"}
LINES = "/api/v1/species/Li_I/lines"
LEVEL = {"spectrum": "K I", "configuration": "4s", "term": "2S", "j": "1/2", "energy_cm1": 0}  # INVENTED values


def _get(reader, url, **query):
    response = reader.get(url, query_string=query)
    return response.status_code, response.get_json()


# ----------------------------------------------------------------- lines / rows

def test_line_rows_are_under_lines_with_rows_as_deprecated_alias(reader, shared):
    status, payload = _get(reader, LINES, limit=50)
    assert status == 200 and len(payload["lines"]) == 50
    assert payload["rows"] == payload["lines"]
    assert list(payload) == ["provenance", "columns", "lines", "rows", "total", "limit", "offset"]
    table = openapi_document()["paths"]["/species/{spectrum}/lines"]["get"]["responses"]["200"]["content"]
    props = table["application/json"]["schema"]["properties"]
    assert props["rows"]["deprecated"] is True and "lines" in table["application/json"]["schema"]["required"]
    assert props["lines"]["items"] == props["rows"]["items"]


# ----------------------------------------------------------------- valid by the document: not refused

def test_an_inverted_window_is_the_same_window(reader, shared):
    _, ordered = _get(reader, LINES, from_nm=400, to_nm=700, limit=1000)
    status, inverted = _get(reader, LINES, from_nm=700, to_nm=400, limit=1000)
    assert status == 200 and ordered["total"] > 0
    assert inverted["lines"] == ordered["lines"] and inverted["total"] == ordered["total"]


def test_two_windows_give_their_overlap(reader, shared):
    _, overlap = _get(reader, LINES, from_nm=600, to_nm=700, limit=1000)
    status, both = _get(reader, LINES, **{"from": "500nm", "to": "700nm", "from_nm": 600, "to_nm": 800,
                                          "limit": 1000})
    assert status == 200 and overlap["total"] > 0 and both["lines"] == overlap["lines"]
    status, apart = _get(reader, LINES, **{"from": "300nm", "to": "400nm", "from_nm": 600, "to_nm": 700})
    assert status == 200 and apart["lines"] == [] and apart["total"] == 0


def test_an_unknown_dataset_name_is_not_found(reader, shared):
    status, payload = _get(reader, "/api/v1/species/Li_I/levels", dataset="no such dataset")
    assert status == 404 and payload["error"]["code"] == "not_found" and payload["error"]["field"] == "dataset"
    # names of 200 characters each, together longer than 200: valid by the document, so not a 400
    status, _ = _get(reader, "/api/v1/species/Li_I/levels", dataset=",".join(["x" * 200, "y" * 200]))
    assert status == 404


@pytest.mark.parametrize("query, field", [
    ({"medium": "AIR"}, "medium"), ({"order": "A"}, "order"), ({"limit": ""}, "limit"), ({"from": "0nm"}, "from"),
    ({"line_name": "H-alfa"}, "line_name"), ({"multipole": "E1,Q7"}, "multipole"), ({"min_a": "nan"}, "min_a"),
])
def test_parameters_breaking_the_document_are_400(reader, shared, query, field):
    status, payload = _get(reader, LINES, **query)
    assert status == 400 and payload["error"]["field"] == field


# ----------------------------------------------------------------- POST /datasets: 400 against 422

@pytest.mark.parametrize("change, field", [
    ({"parity": 0}, "levels[0].parity"), ({"g": 0}, "levels[0].g"), ({"energy_cm1": -1}, "levels[0].energy_cm1"),
    ({"energy_cm1": "0"}, "levels[0].energy_cm1"), ({"j": "5/3"}, "levels[0].j"), ({"n": 1.5}, "levels[0].n"),
])
def test_a_body_breaking_the_document_is_400(client, store, change, field):
    response = client.post("/api/v1/datasets", json={"name": "k/run", "levels": [{**LEVEL, **change}]}, headers=AUTH)
    assert response.status_code == 400 and response.get_json()["error"]["field"] == field
    assert schema_problem({"name": "k/run", "levels": [{**LEVEL, **change}]},
                          {"$ref": "#/components/schemas/NewDataset"}) is not None


@pytest.mark.parametrize("change, field", [
    ({"j": "5/2"}, "levels[0].j"),                   # J = 5/2 is impossible for a 2S term
    ({"g": 4}, "levels[0].g"),                       # g = 2J + 1 = 2
    ({"configuration": "4p"}, "levels[0].term"),     # the term's parity against the configuration's
    ({"spectrum": "Li V"}, "levels[0].spectrum"),    # Li has three electrons
])
def test_a_body_valid_by_the_document_but_inconsistent_is_422(client, store, change, field):
    body = {"name": "k/run", "levels": [{**LEVEL, **change}]}
    assert schema_problem(body, {"$ref": "#/components/schemas/NewDataset"}) is None
    before = [d["name"] for d in store["catalog"].dataset_rows(include_retracted=True)]
    response = client.post("/api/v1/datasets", json=body, headers=AUTH)
    assert response.status_code == 422, response.get_json()
    assert response.get_json()["error"]["field"] == field
    assert [d["name"] for d in store["catalog"].dataset_rows(include_retracted=True)] == before


def test_a_valid_body_is_201(client, store):
    body = {"name": "k/run", "levels": [LEVEL, {"spectrum": "K I", "configuration": "4p", "term": "2P°", "j": 1.5,
                                               "energy_cm1": 13000.5, "g": 4, "parity": "odd"}]}
    response = client.post("/api/v1/datasets", json=body, headers=AUTH)
    assert response.status_code == 201, response.get_json()
    assert response.get_json()["dataset"]["levels"] == 2


# ----------------------------------------------------------------- the server's check against jsonschema_rs

def _plain(schema, components):
    """OpenAPI 3.0 schema -> JSON Schema 2020-12 (nullable, boolean exclusive bounds), refs inlined."""
    if isinstance(schema, list):
        return [_plain(s, components) for s in schema]
    if not isinstance(schema, dict):
        return schema
    if "$ref" in schema:
        return _plain(components[schema["$ref"].rsplit("/", 1)[-1]], components)
    out = {k: _plain(v, components) for k, v in schema.items()
           if k not in ("nullable", "example", "description", "deprecated", "default")}
    for bound in ("Minimum", "Maximum"):
        if out.pop(f"exclusive{bound}", False) is True:
            out[f"exclusive{bound}"] = out.pop(bound.lower())
    if schema.get("nullable"):
        out = {"anyOf": [out, {"type": "null"}]}
    return out


COMPONENTS = openapi_document()["components"]["schemas"]
NEW_DATASET = _plain({"$ref": "#/components/schemas/NewDataset"}, COMPONENTS)
VALIDATOR = jsonschema_rs.validator_for(NEW_DATASET)

SCALARS = st.one_of(
    st.none(), st.booleans(), st.integers(-5, 5), st.integers(2**31 - 2, 2**31 + 1),
    st.floats(allow_nan=False, allow_infinity=False), st.sampled_from([0.5, 1.5, 2.25, 1e11, 1e9, 1e-3, 199.0]),
    st.text(max_size=5), st.sampled_from(["1/2", "3/2", "5/3", "odd", "even", "°", "E1", "Q7", "air", "glass",
                                          "k-cell", "#x", "=1", " k", "a\x1bb", "1s2.2p", "2P°", "x" * 201]),
)
LEVEL_KEYS = list(COMPONENTS["NewLevel"]["properties"]) + ["colour"]
LINE_KEYS = list(COMPONENTS["NewLine"]["properties"]) + ["dataset"]
DATASET_KEYS = ["name", "kind", "sample", "citation", "description", "owner"]


def _rows(keys):
    return st.lists(st.dictionaries(st.sampled_from(keys), SCALARS, max_size=8), max_size=3)


VALID_LINE = {"spectrum": "K I", "lower": "4s 2S1/2", "upper": "4p 2P°3/2", "wavelength_nm": 766.7, "medium": "air",
              "unc_nm": 0.01}  # INVENTED values


def _near(base: dict, keys):
    """Rows that follow the document, or differ from it in one field (set to any scalar, or left out)."""
    def change(key, value, how):
        row = dict(base)
        if how == "set":
            row[key] = value
        elif how == "drop":
            row.pop(key, None)
        return row
    return st.lists(st.builds(change, st.sampled_from(keys), SCALARS, st.sampled_from(["keep", "set", "drop"])),
                    min_size=1, max_size=3)


BODIES = st.one_of(
    st.fixed_dictionaries({"name": st.sampled_from(["k/run", "k#2", "@run", "", "run "]), "levels": _rows(LEVEL_KEYS)}),
    st.fixed_dictionaries({"name": st.sampled_from(["k/run", "k (2)", "=x"]), "levels": _near(LEVEL, LEVEL_KEYS)},
                          optional={"lines": _near(VALID_LINE, LINE_KEYS), "kind": SCALARS, "sample": SCALARS}),
    st.fixed_dictionaries({"name": st.just("k/run"), "lines": _rows(LINE_KEYS)},
                          optional={"levels": st.one_of(st.none(), _rows(LEVEL_KEYS))}),
    st.dictionaries(st.sampled_from(DATASET_KEYS + ["levels", "lines"]), SCALARS, max_size=5),
)


@settings(max_examples=300, deadline=None, derandomize=True, database=None,
          suppress_health_check=list(HealthCheck))
@given(body=BODIES)
def test_the_servers_check_agrees_with_jsonschema_rs(body):
    ours = schema_problem(body, {"$ref": "#/components/schemas/NewDataset"})
    assert (ours is None) == VALIDATOR.is_valid(body), (ours, body)


def test_the_generated_bodies_hold_both_outcomes():
    seen = set()

    @settings(max_examples=300, deadline=None, derandomize=True, database=None,
              suppress_health_check=list(HealthCheck))
    @given(body=BODIES)
    def collect(body):
        seen.add(VALIDATOR.is_valid(body))

    collect()
    assert seen == {True, False}


def test_the_check_is_not_vacuous():
    good = {"name": "k/run", "levels": [LEVEL]}
    assert schema_problem(good, {"$ref": "#/components/schemas/NewDataset"}) is None and VALIDATOR.is_valid(good)
    assert schema_problem({**good, "levels": [{**LEVEL, "energy_cm1": math.inf}]},
                          {"$ref": "#/components/schemas/NewDataset"}) is not None
