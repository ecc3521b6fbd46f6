"""The API records how a dataset came in, names the allowed methods on 405, and refuses names readers
would mangle (issue 14, items 2 and 5)."""

from __future__ import annotations

import pytest

from tests.webui.conftest import TOKEN

AUTH = {"Authorization": f"Bearer {TOKEN}"}
BODY = {"name": "k-cell/api-run", "kind": "measured", "levels": [  # INVENTED energies
    {"spectrum": "K I", "configuration": "4s", "term": "2S", "j": "1/2", "energy_cm1": 0},
    {"spectrum": "K I", "configuration": "4p", "term": "2P°", "j": "1/2", "energy_cm1": 13000.0}]}


def test_post_records_the_api_as_method(client, store):
    response = client.post("/api/v1/datasets", json=BODY, headers=AUTH)
    assert response.status_code == 201, response.get_json()
    info = store["catalog"].dataset_info("k-cell/api-run")
    assert info["method"] != "file import" and "API" in info["method"]


@pytest.mark.parametrize("name", ["k-cell#2", "=SUM(1)", "@run"])
def test_post_refuses_names_readers_mangle(client, store, name):
    response = client.post("/api/v1/datasets", json={**BODY, "name": name}, headers=AUTH)
    assert response.status_code == 400
    assert response.get_json()["error"]["field"] in ("name", "dataset")


@pytest.mark.parametrize("path", ["/api/v1/species", "/api/v1/datasets", "/"])
def test_405_names_the_allowed_methods(client, store, path):
    response = client.open(path, method="TRACE")
    assert response.status_code == 405
    allowed = {m.strip() for m in response.headers.get("Allow", "").split(",") if m.strip()}
    assert allowed and "TRACE" not in allowed
    assert ("POST" in allowed) == (path == "/api/v1/datasets")
