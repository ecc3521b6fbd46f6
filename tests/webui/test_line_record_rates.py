"""The line record shows a computed rate with the uncertainty the rates method states (issue 18, item 1)."""

from __future__ import annotations

import re
from urllib.parse import quote

from levels.service import rates as rates_service

from webui import create_app

from tests.service.test_rates import NA_LEVELS, _levels_file
from tests.webui.conftest import make_config


def test_rates_line_record_shows_a_f_s_with_their_stated_uncertainty(catalog, tmp_path):
    catalog.import_file(_levels_file(tmp_path, NA_LEVELS), dataset="na-levels")
    rates_service.compute_rates(catalog, "Na I")
    app = create_app(make_config(catalog.url, tmp_path))
    try:
        client = app.test_client()
        species = client.get("/species/" + quote("Na I")).get_data(as_text=True)
        line_ids = re.findall(r"/lines/(\d+)", species)
        assert line_ids, "the species page links its line records"
        shown = 0
        for line_id in dict.fromkeys(line_ids):
            page = client.get(f"/species/{quote('Na I')}/lines/{line_id}").get_data(as_text=True)
            note = re.search(r"<dt>note</dt><dd>([^<]*)</dd>", page)
            rel = rates_service.relative_uncertainty_in_note(note.group(1) if note else None)
            if rel is None:
                continue
            a_cell = re.search(r"<dt>Einstein A \[s⁻¹\]</dt><dd>([^<]*)</dd>", page).group(1)
            value_text, unc_text = (part.strip() for part in a_cell.split("±"))
            # the uncertainty shown is the stated relative uncertainty times A, to two significant digits
            # (rounding to two digits moves it by at most 5 %)
            assert abs(float(unc_text) / (rel * float(value_text)) - 1) <= 0.05
            assert "±" in re.search(r"<dt>oscillator strength f \[1\]</dt><dd>([^<]*)</dd>", page).group(1)
            shown += 1
            if shown >= 3:
                break
        assert shown >= 1, "at least one Na I line record comes from the rates dataset"
    finally:
        app.extensions["levels"]["catalog"].close()
