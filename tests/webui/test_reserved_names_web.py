"""The JSON API and the desk refuse dataset names of the computed forms, naming the field (issue 19, item 1)."""

from __future__ import annotations

import pytest

from tests.webui.conftest import TOKEN
from tests.webui.test_edit import GOOD_LEVEL, field_error, level_count, post_form

AUTH = {"Authorization": f"Bearer {TOKEN}"}
RESERVED = ("derived lines Li I A=7", "series limit Li I A=7", "hydrogenic H I A=1", "rates Li I A=7")


@pytest.mark.parametrize("name", RESERVED)
def test_api_refuses_a_reserved_name(client, store, name):
    before = level_count(store["catalog"])
    body = {"name": name, "levels": [{"spectrum": "Li I", "configuration": "1s2.30s", "term": "2S", "j": "1/2",
                                      "energy_cm1": 43400.0}]}  # INVENTED level
    response = client.post("/api/v1/datasets", json=body, headers=AUTH)
    assert response.status_code == 400, response.get_json()
    error = response.get_json()["error"]
    assert error["field"] == "name" and "computes and rebuilds" in error["message"]
    assert level_count(store["catalog"]) == before


@pytest.mark.parametrize("name", RESERVED)
def test_desk_refuses_a_reserved_name(client, store, name):
    before = level_count(store["catalog"])
    response = post_form(client, "/desk/levels", {"target": "__new__", "new_dataset": name, **GOOD_LEVEL})
    assert response.status_code == 400
    assert "computes and rebuilds" in (field_error(response.get_data(as_text=True), "lv", "new_dataset") or "")
    assert level_count(store["catalog"]) == before
