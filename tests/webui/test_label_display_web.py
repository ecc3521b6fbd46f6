"""Level labels on the web pages with spaced configurations and superscripts (issue 18); downloads keep the
stored, dotted labels."""

from __future__ import annotations

import re


def test_species_page_shows_spaced_labels_download_keeps_dots(reader):
    page = reader.get("/species/Li_I").get_data(as_text=True)
    cells = re.findall(r'<td class="label">([^<]*)</td>', page)
    assert cells, "no label cells"
    assert not [c for c in cells if re.match(r"^1s2\.", c)]            # no dotted configuration in a label cell
    assert any(c.startswith("1s² 2p ") for c in cells)
    csv = reader.get("/species/Li_I/levels.csv").get_data(as_text=True)
    assert re.search(r",1s2\.2p 2P°3/2,", csv)


def test_line_record_page_shows_spaced_labels(reader):
    page = reader.get("/species/Li_I").get_data(as_text=True)
    link = re.search(r'href="(/species/Li_I/lines/[0-9]+[^"]*)"', page)
    assert link, "no line record link"
    record = reader.get(link.group(1).replace("&amp;", "&")).get_data(as_text=True)
    shown = re.search(r'<dt>lower level</dt><dd class="label">([^<]*)</dd>', record).group(1)
    assert "." not in shown.split(" ")[0] and shown.startswith("1s²")
