"""The JSON API sums multiplets as the CLI and the Python API do (issue 18 item 5)."""

from __future__ import annotations

from levels.service.line_selection import merge_multiplets, one_row_per_pair


def test_api_multiplets_equal_the_service_sum_of_the_same_lines(reader, shared):
    window = {"from": "100nm", "to": "2000nm", "limit": 1000}
    plain = reader.get("/api/v1/species/Li_I/lines", query_string=window).get_json()
    merged = reader.get("/api/v1/species/Li_I/lines", query_string={**window, "multiplets": "true"}).get_json()
    assert plain["total"] == len(plain["lines"]), "the whole window fits one page"
    assert "error" not in merged and merged["lines"] == merged["rows"]
    assert merged["columns"][-3:] == ["gf", "members", "weighting"] and "multiplets" in merged["provenance"]
    expected = merge_multiplets(plain["lines"], medium="air")
    assert merged["total"] == len(expected) > 0
    # every component counted once: the members of all multiplets are the distinct pairs of the plain list
    assert sum(r["members"] for r in merged["lines"]) == len(one_row_per_pair(plain["lines"]))
    by_terms = {(r["lower"], r["upper"], r["multipole"]): r for r in expected}
    for row in merged["lines"]:
        want = by_terms[(row["lower"], row["upper"], row["multipole"])]
        assert row["members"] == want["members"] and row["g_upper"] == want["g_upper"]
        assert row["wavenumber_cm1"] == want["wavenumber_cm1"]


def test_api_multiplets_refuses_other_values(reader, shared):
    answer = reader.get("/api/v1/species/Li_I/lines", query_string={"multiplets": "yes"})
    assert answer.status_code == 400 and answer.get_json()["error"]["field"] == "multiplets"


def test_pages_and_downloads_sum_multiplets_like_the_api(reader, shared):
    window = {"from": "100nm", "to": "2000nm"}
    api = reader.get("/api/v1/species/Li_I/lines", query_string={**window, "multiplets": "true", "limit": 1000})
    api = api.get_json()
    page = reader.get("/species/Li_I", query_string={**window, "multiplets": "true", "lper": 200})
    text = page.get_data(as_text=True)
    assert page.status_code == 200 and 'name="multiplets" value="true" checked' in text
    assert f"{api['total']} rows" in text and " components</td>" in text
    download = reader.get("/species/Li_I/lines.json", query_string={**window, "multiplets": "true"}).get_json()
    assert download["columns"][-3:] == ["gf", "members", "weighting"] and "multiplets" in download["provenance"]
    assert [r["members"] for r in download["lines"]] == [r["members"] for r in api["lines"]]
    assert reader.get("/api/v1/species/Li_I/lines",
                      query_string={"from": "900nm", "to": "950nm", "multiplets": "true"}).status_code == 200
