"""The spectrum-analysis page: upload, fit, diagnose, commit only on request (CSRF and the signed lines token)."""

from __future__ import annotations

import io
import re

import numpy as np
import pytest

from levels.catalog import LineQuery
from levels.physics.plasma import spectrum as shapes

from webui import create_app

from tests.webui.conftest import csrf_token, dataset_names, make_config


@pytest.fixture
def hsite(catalog, store_url, tmp_path):
    """The site over a store with computed H I (n <= 5)."""
    catalog.compute_hydrogenic("H I", n_max=5)
    application = create_app(make_config(store_url, tmp_path))
    yield application, catalog
    application.extensions["levels"]["catalog"].close()


def _csv(x, y, medium) -> bytes:
    rows = "\n".join(f"{float(a)!r},{float(b)!r}" for a, b in zip(x, y))
    return f"# invented test spectrum\n# medium: {medium}\nwavelength_nm,intensity\n{rows}\n".encode()


def _balmer(catalog) -> bytes:
    res = catalog.emission(
        "H I",
        te_k=14000.0,
        ne_m3=1e20,
        tgas_k=800.0,
        from_nm=420.0,
        to_nm=670.0,
        medium="air",
        instrument_fwhm_nm=0.03,
        grid_points=25001,
    )
    y = res.spectrum / res.spectrum.max() * 1000.0 + np.random.default_rng(2).normal(0, 1.0, res.spectrum.size)
    return _csv(res.grid_nm, y, "air")


def _post(client, path, data, files=None):
    payload = {"csrf_token": csrf_token(client, "/analysis/"), **data}
    for name, (content, filename) in (files or {}).items():
        payload[name] = (io.BytesIO(content), filename)
    return client.post(path, data=payload, content_type="multipart/form-data")


def test_page_has_the_form_with_csrf_and_a_nav_link(hsite):
    client = hsite[0].test_client()
    page = client.get("/analysis/")
    text = page.get_data(as_text=True)
    assert page.status_code == 200
    assert text.count('name="csrf_token"') == 1 and 'enctype="multipart/form-data"' in text
    assert 'href="/analysis/"' in client.get("/").get_data(as_text=True)


def test_post_without_csrf_is_refused(hsite):
    client = hsite[0].test_client()
    response = client.post(
        "/analysis/", data={"spectrum": (io.BytesIO(b"x"), "a.csv")}, content_type="multipart/form-data"
    )
    assert response.status_code == 400


def test_fit_and_diagnose_write_nothing(hsite):
    app, catalog = hsite
    client = app.test_client()
    before = dataset_names(catalog)
    response = _post(
        client,
        "/analysis/",
        {"species": "H I", "instrument": "0.03nm", "tgas": "800K"},
        {"spectrum": (_balmer(catalog), "balmer.csv")},
    )
    text = response.get_data(as_text=True)
    assert response.status_code == 200, text[:2000]
    assert 'id="fit-figure"' in text and 'id="boltzmann-figure"' in text
    assert "'unsafe-inline'" in response.headers["Content-Security-Policy"].split("style-src")[1].split(";")[0]
    assert "script-src 'self';" in response.headers["Content-Security-Policy"]
    rows = re.findall(r"<tr><td class=\"num\">(6\d\d\.\d+|4\d\d\.\d+)</td>", text)
    assert len(rows) >= 3  # H-alpha, H-beta, H-gamma fitted and listed
    te = re.search(r'id="te">([\d.]+) ± ([\d.]+) K', text)
    assert te and abs(float(te.group(1)) - 14000.0) < 0.05 * 14000.0
    assert "no identified peak is a single line" in text.lower()  # Balmer lines are fine-structure blends
    assert dataset_names(catalog) == before


def test_bad_spectrum_names_file_line_and_field(hsite):
    client = hsite[0].test_client()
    response = _post(
        client,
        "/analysis/",
        {"species": "H I"},
        {"spectrum": (b"wavelength_nm,intensity\n500,1\n500,2\n501,3\n", "dup.csv")},
    )
    text = response.get_data(as_text=True)
    assert response.status_code == 400
    assert "dup.csv:3: wavelength_nm: duplicate sample" in text


def test_commit_writes_the_unblended_lines_once_asked(hsite):
    app, catalog = hsite
    client = app.test_client()
    rows, _ = catalog.species_lines(LineQuery(spectrum="H I", from_nm=121.5, to_nm=121.6, medium="vacuum"))
    lyman = sorted(r["vacuum_nm"] for r in rows if r["lower"].startswith("1s"))
    assert len(lyman) == 2  # 2p 1/2 and 3/2 to 1s: resolved at this invented resolution
    grid = shapes.make_grid(121.562, 121.572, points=2001)
    y = shapes.synthetic_spectrum(grid, lyman, [1.0, 2.0], 0.00006, 0.0)
    y = y / y.max() * 500.0 + 3.0 + np.random.default_rng(5).normal(0, 0.5, grid.size)
    before = dataset_names(catalog)
    response = _post(
        client,
        "/analysis/",
        {"species": "H I", "tolerance": "0.00002nm"},
        {"spectrum": (_csv(grid, y, "vacuum"), "lyman.csv")},
    )
    text = response.get_data(as_text=True)
    assert response.status_code == 200, text[:2000]
    assert dataset_names(catalog) == before
    token = re.search(r'name="lines_token" value="([^"]+)"', text)
    assert token, text[:3000]
    bad = _post(client, "/analysis/commit", {"lines_token": token.group(1)[:-3] + "abc", "sample": "invented-cell"})
    assert bad.status_code == 400 and dataset_names(catalog) == before
    good = _post(client, "/analysis/commit", {"lines_token": token.group(1), "sample": "invented-cell"})
    assert good.status_code == 200, good.get_data(as_text=True)[:2000]
    assert 'id="committed"' in good.get_data(as_text=True)
    after = dataset_names(catalog)
    assert len(after) == len(before) + 1 and any(name.startswith("invented-cell/") for name in after)


def test_pixel_frame_with_an_uploaded_calibration(hsite):
    app, catalog = hsite
    client = app.test_client()
    res = catalog.emission(
        "H I",
        te_k=14000.0,
        ne_m3=1e20,
        tgas_k=800.0,
        from_nm=420.0,
        to_nm=670.0,
        medium="air",
        instrument_fwhm_nm=0.06,
        grid_points=25001,
    )
    # an invented linear spectrometer: lambda = 420 nm + 0.01 nm x pixel, so pixel = (lambda - 420) / 0.01
    pixel = (res.grid_nm - 420.0) / 0.01
    y = res.spectrum / res.spectrum.max() * 1000.0 + np.random.default_rng(3).normal(0, 1.0, pixel.size)
    rows = "\n".join(f"{float(a)!r},{float(b)!r}" for a, b in zip(pixel, y))
    frame = f"# invented test frame\npixel,intensity\n{rows}\n".encode()
    cal = b'{"degree": 1, "coefficients": [420.0, 0.01], "medium": "air", "rms_nm": 0.0001}'
    response = _post(
        client, "/analysis/", {"species": "H I"}, {"spectrum": (frame, "frame.csv"), "calibration": (cal, "cal.json")}
    )
    text = response.get_data(as_text=True)
    assert response.status_code == 200, text[:2000]
    assert re.search(r'<td class="num">656\.2\d+</td>', text)  # H-alpha in air, nm
    no_cal = _post(client, "/analysis/", {"species": "H I"}, {"spectrum": (frame, "frame.csv")})
    assert no_cal.status_code == 400 and "pixel axis" in no_cal.get_data(as_text=True)
