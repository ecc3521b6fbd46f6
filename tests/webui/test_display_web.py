"""Issue 18 on the web pages: numbers under the display policy, configurations with superscripts, one vocabulary."""

import re


def test_species_page_configurations_numbers_and_labels(reader):
    text = reader.get("/species/Li_I").get_data(as_text=True)
    # configurations shown with spaces and superscript occupancies (stored as 1s2.2p)
    assert "1s² 2p" in text and "<td>1s2.2p</td>" not in text
    # statistical weight and Landé g named apart
    assert ">weight g</th>" in text and "Landé g" in text
    # no float noise: no energy cell with more than 12 significant digits
    cells = re.findall(r'<td class="num">(-?[0-9]+\.[0-9]+)</td>', text)
    assert cells and all(len(c.replace("-", "").replace(".", "").lstrip("0")) <= 12 for c in cells)


def test_line_table_headings(reader):
    text = reader.get("/species/Li_I").get_data(as_text=True)
    assert ">multipole</th>" in text and ">type</th>" not in text
    assert ">weight g lower</th>" in text and ">weight g upper</th>" in text
    assert "Einstein A" in text


def test_catalogue_says_mass_number(reader):
    text = reader.get("/").get_data(as_text=True)
    assert ">mass number</th>" in text and "isotope <span" not in text


def test_api_window_with_units(reader):
    by_nm = reader.get("/api/v1/species/Li_I/lines", query_string={"from_nm": "600", "to_nm": "700"}).get_json()
    # 600 nm and 700 nm as wavenumbers (1e7 / nm), given the other way round
    by_cm1 = reader.get("/api/v1/species/Li_I/lines",
                        query_string={"from": f"{1e7 / 600}cm-1", "to": f"{1e7 / 700}cm-1"}).get_json()
    assert by_nm["rows"] and by_nm["rows"] == by_cm1["rows"]
    bad = reader.get("/api/v1/species/Li_I/lines", query_string={"from": "300K"})
    assert bad.status_code == 400 and bad.get_json()["error"]["field"] == "from"
