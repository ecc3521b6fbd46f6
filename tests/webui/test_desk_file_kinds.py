"""The sample desk reads the kind of an upload from its header as ``levels import`` does (issue 14, item 5):
measured-lines files are previewed and written, peaks and spectrum files are named with where they go.

The line wavelengths are Ritz values computed here from the test store's (invented) Li I levels, so the
import's Ritz check has something true to agree with.
"""

from __future__ import annotations

import html
import io
import re
from pathlib import Path

import pytest

from levels.service.imports import detect_file_kind

from webui.edit import upload_kind

from tests.webui.conftest import csrf_token, dataset_names
from tests.webui.test_edit import level_count


def upload(client, content: bytes, name: str = "upload.csv", **fields):
    data = {"csrf_token": csrf_token(client), "file": (io.BytesIO(content), name), **fields}
    return client.post("/desk/upload", data=data, content_type="multipart/form-data")


def line_count(catalog) -> int:
    return sum(d["lines"] for d in catalog.dataset_rows(include_retracted=True) if d["kind"] != "computed")


def ritz_lines_csv(catalog, *, shift_nm: float = 0.0) -> bytes:
    """Two measured lines of Li I between stored levels, at their vacuum Ritz wavelengths (+ shift_nm)."""
    energy = {r["label"]: r["energy_cm1"] for r in catalog.level_rows("Li I")}
    rows = ["spectrum,lower,upper,wavelength_nm,medium,unc_nm,intensity,note"]
    for lower, upper in (("1s2.2s 2S1/2", "1s2.2p 2P°3/2"), ("1s2.2p 2P°1/2", "1s2.3d 2D3/2")):
        nm = 1e7 / (energy[upper] - energy[lower]) + shift_nm  # vacuum wavelength from the wavenumber, nm
        rows.append(f"Li I,{lower},{upper},{nm:.6f},vacuum,0.002,100,invented test line")
    return ("\n".join(rows) + "\n").encode()


PEAKS_CSV = (b"peak_nm,peak_unc_nm,medium,fwhm_nm,area,area_unc,snr,fwhm_unc_nm\n"
             b"670.79,0.002,air,0.05,1200,30,40,0.003\n")  # invented peak
SPECTRUM_CSV = b"wavelength_nm,intensity\n670.70,12\n670.79,1500\n670.88,14\n"  # invented counts


@pytest.mark.parametrize("header, expected", [
    (["spectrum", "configuration", "term", "j", "energy_cm1"], "levels"),
    (["spectrum", "lower", "upper", "wavelength_nm", "medium", "unc_nm"], "lines"),
    (["spectrum", "lower", "upper", "wavelength_nm", "medium", "unc_nm", "colour"], "lines"),
    (["colour"], "levels"),
])
def test_levels_and_lines_are_told_apart_as_the_cli_does(header, expected):
    assert upload_kind(header, "f.csv", 1) == detect_file_kind(header, "f.csv", 1) == expected


@pytest.mark.parametrize("header, expected", [
    (["peak_nm"], "peaks"), (["peak_nm", "peak_unc_nm", "medium", "fwhm_nm", "area", "area_unc", "snr"], "peaks"),
    (["wavelength_nm", "intensity"], "spectrum"), (["pixel", "intensity", "intensity_unc"], "spectrum"),
    (["intensity"], "levels"),  # no position column: not a spectrum, read as the CLI reads it
])
def test_peaks_and_spectra_are_recognised(header, expected):
    assert upload_kind(header, "f.csv", 1) == expected


def test_measured_lines_preview_then_commit(client, store, tmp_path):
    cat = store["catalog"]
    content = ritz_lines_csv(cat)
    before = (level_count(cat), line_count(cat))
    response = upload(client, content, "li-lines.csv", sample="demo-1", dataset="demo-1/li-lines")
    text = html.unescape(response.get_data(as_text=True))
    assert response.status_code == 200, text[-2000:]
    assert "unknown column" not in text and "measured-lines file" in text
    assert "2 measured lines ready, no problems" in text
    for row in content.decode().splitlines()[1:]:  # each parsed row is shown, its wavelength as written
        assert row.split(",")[3] in text
    assert (level_count(cat), line_count(cat)) == before  # the preview wrote nothing
    token = re.search(r'name="token" value="([^"]+)"', text).group(1)
    commit = client.post("/desk/upload/commit", data={"csrf_token": csrf_token(client), "token": token})
    assert commit.status_code == 303, html.unescape(commit.get_data(as_text=True))[-2000:]
    info = cat.dataset_info("demo-1/li-lines")
    assert info["lines"] == 2 and info["levels"] == 0 and info["sample"] == "demo-1"
    assert commit.headers["Location"].endswith(f"/datasets/{info['id']}")
    assert line_count(cat) == before[1] + 2 and level_count(cat) == before[0]
    page = client.get("/desk/").get_data(as_text=True)
    assert "Wrote 2 measured lines of Li I" in html.unescape(page)


def test_measured_lines_off_ritz_or_unknown_labels_are_refused_at_preview(client, store):
    cat = store["catalog"]
    off = ritz_lines_csv(cat, shift_nm=0.5)  # 0.5 nm off: hundreds of combined standard uncertainties
    unknown = off.replace(b"1s2.3d 2D3/2", "1s2.9f 2F°5/2".encode())
    before = (dataset_names(cat), line_count(cat), level_count(cat))
    for content, wanted in ((off, "Ritz"), (unknown, "no level labelled '1s2.9f 2F°5/2'")):
        response = upload(client, content, "off.csv", dataset="demo-1/off")
        shown = html.unescape(response.get_data(as_text=True))
        assert response.status_code == 200 and "nothing was written" in shown and wanted in shown
        assert 'name="token"' not in shown  # nothing to commit
    assert (dataset_names(cat), line_count(cat), level_count(cat)) == before  # the dry run was rolled back


def test_a_bad_measured_lines_file_lists_its_row_problems(reader, shared):
    content = (b"spectrum,lower,upper,wavelength_nm,medium,unc_nm\n"
               b"Li I,1s2.2s 2S1/2,1s2.2p 2P\xc2\xb03/2,670.96,glass,0.002\n"
               b"Li I,1s2.2s 2S1/2,1s2.2s 2S1/2,670.96,vacuum,0.002\n")
    response = upload(reader, content, "bad-lines.csv")
    text = html.unescape(response.get_data(as_text=True))
    assert response.status_code == 200 and "unknown column" not in text
    assert "'glass' is not a medium" in text and "a line needs two different levels" in text
    assert "2 problems" in text and 'name="token"' not in text


@pytest.mark.parametrize("content, kind, where", [
    (PEAKS_CSV, "peaks file", "levels identify SPECIES peaks.csv"),
    (SPECTRUM_CSV, "spectrum file", "spectrum page (Analysis)"),
])
def test_peaks_and_spectrum_files_get_one_clear_message(reader, shared, content, kind, where):
    cat = shared["catalog"]
    staging = shared["app"].config["LEVELS_UPLOAD_DIR"]
    before = (dataset_names(cat), level_count(cat))
    response = upload(reader, content, "peaks.csv")
    text = html.unescape(response.get_data(as_text=True))
    assert response.status_code == 200
    assert f"This is a {kind}" in text and where in text and "nothing was written" in text
    assert "unknown column" not in text and "problems" not in text.split("This is a", 1)[1].split("</section>")[0]
    assert text.count('role="alert"') == 1 and 'name="token"' not in text
    assert (dataset_names(cat), level_count(cat)) == before
    assert not list(Path(staging).glob("*.upload"))  # nothing staged for a commit


def test_the_desk_page_describes_both_file_kinds(reader, shared):
    text = html.unescape(reader.get("/desk/").get_data(as_text=True))
    assert "Upload a levels or measured-lines file" in text
    assert "spectrum, lower, upper, wavelength_nm, medium, unc_nm" in text
