"""The level-diagram figure builder (pure: rows in, plotly dict out)."""

from __future__ import annotations

import json

import pytest

from levels.units import CM1_EV

from webui.figures import A_STEPS, OPACITIES, WIDTHS, grotrian_figure, term_key, term_tick


def level(label, term, parity, energy, j="1/2", dataset="d"):
    return {"label": label, "term": term, "parity": parity, "energy_cm1": energy, "j": j, "g": 2, "dataset": dataset}


def line(i, lower, upper, a, multipole="E1", vac=500.0):
    return {"id": i, "lower": lower, "upper": upper, "a_per_s": a, "multipole": multipole, "vacuum_nm": vac,
            "air_nm": vac * 0.9997, "wavenumber_cm1": 1e7 / vac, "dataset": "d"}


LEVELS = [level("g", "2S", 1, 0.0), level("p", "2P°", -1, 15000.0), level("d", "2D", 1, 30000.0),
          level("q", "4P°", -1, 40000.0), level("x", "", 1, 35000.0)]


def test_columns_are_ordered_by_multiplicity_then_l_then_parity():
    keys = sorted({term_key(lv["term"], lv["parity"]) for lv in LEVELS})
    assert [term_tick(k) for k in keys] == ["<sup>2</sup>S", "<sup>2</sup>P°", "<sup>2</sup>D", "<sup>4</sup>P°",
                                            "no LS term"]
    assert term_key("2P", 1) < term_key("2P°", -1)
    assert term_key("not a term", 1) > term_key("9P°", -1)  # an unparseable term goes after every LS term


def test_lines_get_width_and_opacity_by_log_a_and_unplaced_are_counted():
    lines = [line(1, "g", "p", 1e8), line(2, "p", "d", 1e3), line(3, "g", "q", None), line(4, "g", "missing", 1e5),
             line(5, "p", "d", 1e5, multipole="E2")]
    built = grotrian_figure(LEVELS, lines)
    assert built["unplaced"] == 1 and built["columns"] == 5
    traces = built["figure"]["data"]
    segments = [t for t in traces if t["mode"] == "lines" and t["name"] != "levels"]
    strongest = next(t for t in segments if t["name"] == "E1" and t["line"]["width"] == pytest.approx(WIDTHS[-1]))
    weakest = next(t for t in segments if t["name"] == "E1" and t["line"]["width"] == pytest.approx(WIDTHS[0]))
    assert strongest["opacity"] == pytest.approx(OPACITIES[-1]) and weakest["opacity"] == pytest.approx(OPACITIES[0])
    # log10 A = 5 is half way between 3 and 8: step int(0.4 * 5) = 2
    middle = next(t for t in segments if t["name"] == "E2")
    assert middle["line"]["width"] == pytest.approx(WIDTHS[int(0.4 * A_STEPS)])
    no_a = [t for t in segments if t["line"].get("dash") == "dot"]
    assert len(no_a) == 1 and no_a[0]["y"][:2] == [0.0, 40000.0]
    markers = next(t for t in traces if t.get("meta") == "lines")
    assert sorted(c[0] for c in markers["customdata"]) == [1, 2, 3, 5]
    # legend: one entry per multipole
    assert sorted(t["name"] for t in segments if t["showlegend"]) == ["E1", "E2"]


def test_energy_unit_and_ionization_limit():
    built = grotrian_figure(LEVELS, [], unit="eV", ionization_cm1=43000.0)
    levels_trace = next(t for t in built["figure"]["data"] if t.get("meta") == "levels")
    assert max(levels_trace["y"]) == pytest.approx(40000.0 * CM1_EV, rel=1e-6)
    shape = built["figure"]["layout"]["shapes"][0]
    assert shape["y0"] == pytest.approx(43000.0 * CM1_EV, rel=1e-6) and shape["line"]["dash"] == "dash"
    assert "ionization limit" in built["figure"]["layout"]["annotations"][0]["text"]
    assert not grotrian_figure(LEVELS, [])["figure"]["layout"]["shapes"]


def test_text_from_the_store_is_escaped_and_json_is_strict():
    levels = [level("<script>x</script>", "2S", 1, 0.0, dataset="<i>d</i>"), level("p", "2P°", -1, 10.0)]
    built = grotrian_figure(levels, [line(1, "<script>x</script>", "p", 1e6)])
    text = json.dumps(built, allow_nan=False)
    assert "<script>" not in text and "&lt;script&gt;" in text and "<i>d</i>" not in text


def test_empty_species():
    built = grotrian_figure([], [])
    assert built["figure"]["data"] == [] and built["columns"] == 0


def test_a_level_row_is_placed_by_its_values_as_its_term_text_would_place_it(reader, shared):
    """The diagram reads a level's column from its values (2S+1, L, parity of the LevelRow), not its term text;
    for every level of the demo store both give the same column."""
    from webui.figures import column_key

    rows = shared["catalog"].level_rows("Li I")
    assert rows and all(r["multiplicity"] is not None and r["L"] is not None for r in rows if r["term"])
    assert [column_key(r) for r in rows] == [term_key(r["term"], r["parity"]) for r in rows]
    # a jK-coupled term has no LS values: its column still comes from its text, after the LS columns
    jk = {"term": "2[5/2]", "parity": -1, "multiplicity": None, "L": None}
    assert column_key(jk) == term_key("2[5/2]", -1) > column_key(rows[-1])
