"""The desk and the JSON API say when an import holds levels another dataset of the species already holds
(issue 14 item 1: one state per level whatever the notation; reported, not refused). Levels are invented."""

from __future__ import annotations

import html
import re

from tests.store.test_level_identity import K_BRACKETED, K_OMITTED
from tests.webui.conftest import TOKEN, csrf_token
from tests.webui.test_edit import upload

AUTH = {"Authorization": f"Bearer {TOKEN}"}


def _commit(client, response):
    token = re.search(r'name="token" value="([^"]+)"', response.get_data(as_text=True)).group(1)
    return client.post("/desk/upload/commit", data={"csrf_token": csrf_token(client), "token": token},
                       follow_redirects=True)


def test_desk_commit_shows_the_duplicate_state_report(client, store):
    first = _commit(client, upload(client, K_BRACKETED.encode(), "k-a.csv", dataset="k-a"))
    assert first.status_code == 200 and "4 levels" in first.get_data(as_text=True)
    second = html.unescape(_commit(client, upload(client, K_OMITTED.encode(), "k-b.csv", dataset="k-b"))
                           .get_data(as_text=True))
    assert "note-warn" in second and "'4s 2S1/2' = '[Ar].4s 2S1/2'" in second and "'k-a'" in second


def test_api_answer_lists_the_duplicate_state_report(client, store):
    levels = [{"spectrum": "K I", "configuration": c, "term": t, "j": j, "energy_cm1": e}
              for c, t, j, e in (("[Ar].4s", "2S", "1/2", 0), ("[Ar].4p", "2P°", "1/2", 13000.0))]
    first = client.post("/api/v1/datasets", json={"name": "k-api-a", "kind": "measured", "levels": levels},
                        headers=AUTH)
    assert first.status_code == 201 and first.get_json()["warnings"] == []
    omitted = [dict(row, configuration=row["configuration"].replace("[Ar].", "")) for row in levels]
    second = client.post("/api/v1/datasets", json={"name": "k-api-b", "kind": "measured", "levels": omitted},
                         headers=AUTH)
    assert second.status_code == 201
    (warning,) = second.get_json()["warnings"]
    assert "'k-api-a'" in warning and "2 levels of K I" in warning
