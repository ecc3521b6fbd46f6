"""Level diagram: energy axes that show the low levels and the crowded top, jK columns, true panel titles
(issue 18 item 8)."""

from __future__ import annotations

import gzip
from pathlib import Path

import numpy as np
import pytest

from webui import create_app
from webui.browse import panel_title
from webui.figures import energy_axis, level_layer, term_key, term_tick

from tests.webui.conftest import make_config

DEMO = Path(__file__).resolve().parents[2] / "seed_data" / "demo"


def test_jk_terms_are_columns_by_parity_and_k():
    keys = sorted({term_key(t, p) for t, p in [("2[11/2]", -1), ("2[3/2]", -1), ("2[5/2]", 1), ("2P°", -1),
                                               ("1S", 1), ("2[1/2]", 1)]})
    ticks = [term_tick(k) for k in keys]
    # LS terms first, then jK: even before odd, K in numeric order (11/2 after 3/2), one degree sign at most
    assert ticks == ["<sup>1</sup>S", "<sup>2</sup>P°", "<sup>2</sup>[1/2]", "<sup>2</sup>[5/2]",
                     "<sup>2</sup>[3/2]°", "<sup>2</sup>[11/2]°"]


def test_no_empty_columns():
    levels = [dict(label=f"x{i}", term=t, parity=p, energy_cm1=e, j="1/2", g=2, dataset="d")
              for i, (t, p, e) in enumerate([("2S", 1, 0.0), ("2P", -1, 10.0), ("2[3/2]", -1, 20.0)])]
    layer = level_layer(levels)
    assert sorted(set(layer.level_x.tolist())) == list(range(len(layer.keys)))


def test_broken_axis_keeps_order_and_shrinks_the_largest_gap():
    e = np.array([0.0, 130000.0, 131000.0, 135000.0, 139000.0])
    y, info = energy_axis(e, "broken")
    assert info["axis"] == "broken" and info["break"] == (0.0, 130000.0)
    assert np.all(np.diff(y) > 0)                      # order kept
    assert (y[1] - y[0]) < 0.1 * (y[-1] - y[0])        # the empty gap is a small share of the drawn axis
    assert np.allclose(np.diff(y[1:]), np.diff(e[1:]))  # the crowded top keeps its true spacing
    same, info = energy_axis(np.arange(10.0), "broken")
    assert info["axis"] == "linear" and "linear" in info["note"]


def test_panel_titles_follow_the_rates():
    assert panel_title([{"a_per_s": None}, {"a_per_s": None}]) == "Lines drawn, no rates known"
    assert panel_title([{"a_per_s": 1e6}, {"a_per_s": None}]).startswith("Strongest lines drawn (by A; 1 without")
    assert panel_title([{"a_per_s": 1e6}]) == "Strongest lines drawn (by A)"


@pytest.fixture
def site(catalog, store_url, tmp_path):
    catalog.compute_hydrogenic("H I", n_max=6)
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="li-cell-amber", dataset="li/levels")
    app = create_app(make_config(store_url, tmp_path))
    yield app.test_client()
    app.extensions["levels"]["catalog"].close()


def test_limit_axis_on_hydrogen(site):
    body = site.get("/species/H_I/diagram.json?axis=limit").get_json()
    assert body["axis"] == "limit" and body["panel_title"] == "Strongest lines drawn (by A)"
    yaxis = body["figure"]["layout"]["yaxis"]
    assert yaxis["type"] == "log" and yaxis["autorange"] == "reversed"
    marks = body["figure"]["data"][1]
    y = np.array(marks["y"], dtype=float)
    limit = body["ionization_cm1"]
    # y is the distance below the limit: the ground at about the limit itself, n = 6 near R/36
    assert y.max() == pytest.approx(limit, rel=1e-6)
    assert y.min() == pytest.approx(limit / 36, rel=1e-3)


def test_sample_without_rates_and_broken_axis(site):
    body = site.get("/species/Li_I/diagram.json?axis=broken").get_json()
    assert body["panel_title"] == "Lines drawn, no rates known"
    assert body["axis"] == "broken" and "axis broken" in body["figure"]["layout"]["yaxis"]["title"]["text"]
    # without a limit the log axis falls back to linear and says so
    li = site.get("/species/Li_I/diagram.json?axis=limit").get_json()
    assert li["axis"] in ("limit", "linear")
    assert site.get("/species/Li_I/diagram.json?axis=spiral").status_code == 400
    page = site.get("/species/Li_I/diagram?axis=broken").get_data(as_text=True)
    assert 'name="axis"' in page and 'id="strongest-title"' in page


def test_gzip_still_the_same_text_per_axis(site):
    for axis in ("linear", "broken", "limit"):
        plain = site.get(f"/species/H_I/diagram.json?axis={axis}")
        packed = site.get(f"/species/H_I/diagram.json?axis={axis}", headers={"Accept-Encoding": "gzip"})
        assert packed.headers["Content-Encoding"] == "gzip"
        assert gzip.decompress(packed.data) == plain.data
