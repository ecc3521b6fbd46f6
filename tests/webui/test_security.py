"""Security: CSRF, the API token, upload size, escaping, headers, hostile filter values."""

from __future__ import annotations

import io
import re
from urllib.parse import quote

import pytest
from markupsafe import escape

from levels.store.schema import Level

from tests.webui.conftest import TOKEN, XSS_DATASET, XSS_LABEL, count_rows, csrf_token, dataset_names

FORM_POSTS = ["/desk/samples", "/desk/levels", "/desk/upload", "/desk/upload/commit", "/desk/unlock"]
HOSTILE = ["' OR '1'='1", "1; DROP TABLE lines; --", "1 UNION SELECT * FROM levels", "<script>alert(1)</script>",
           "\x00", "1e309", "-inf", "🙂", "x" * 500, "../../etc/passwd", "{{7*7}}", "E1'--,M1", "  "]
#: endpoint -> the filters it reads (plus one it does not, which must be ignored)
ENDPOINTS = {
    "/": ["q", "from_nm"],
    "/species/Li_I": ["dataset", "config", "j", "parity", "sort", "dir", "page", "per", "from_nm", "to_nm", "medium",
                      "multipole", "min_a", "order", "lpage", "lper", "mass_number"],
    "/species/Li_I/diagram": ["from_nm", "to_nm", "medium", "multipole", "min_a", "unit", "max_lines"],
    "/species/Li_I/diagram.json": ["from_nm", "to_nm", "medium", "multipole", "min_a", "unit", "max_lines",
                                   "mass_number"],
    "/lines": ["species", "from_nm", "to_nm", "medium", "multipole", "min_a", "order", "page", "per"],
    "/species/Li_I/levels.csv": ["dataset", "config", "j", "parity", "sort", "dir"],
    "/species/Li_I/lines.json": ["from_nm", "to_nm", "medium", "multipole", "min_a", "order"],
    "/lines.ecsv": ["species", "from_nm", "min_a"],
    "/species/Li_I/lines/1.json": ["nm"],
    "/api/v1/species/Li_I/levels": ["dataset"],
    "/api/v1/species/Li_I/lines": ["from_nm", "to_nm", "medium", "multipole", "min_a", "order", "limit", "offset"],
}
#: text filters that must come back empty (or 400) for hostile text, never with everything
SEARCHES = {"q", "config", "dataset", "species"}


# ----------------------------------------------------------------- CSRF

def test_posts_without_a_csrf_token_are_refused_and_write_nothing(reader, shared):
    cat = shared["catalog"]
    before = (dataset_names(cat), cat.sample_rows(), count_rows(cat, Level))
    data = {"name": "csrf-sample", "target": shared["demo_dataset"], "spectrum": "Li I", "configuration": "1s2.20s",
            "term": "2S", "j": "1/2", "energy_cm1": "43000", "token": TOKEN}
    csrf_token(reader)  # the session has a token; the posts below do not carry it
    for path in FORM_POSTS:
        for extra in ({}, {"csrf_token": "not-a-real-token"}):
            upload = (io.BytesIO(b"spectrum,configuration,term,j,energy_cm1\nLi I,1s2.20s,2S,1/2,43000\n"), "a.csv")
            response = reader.post(path, data={**data, **extra, "file": upload}, content_type="multipart/form-data")
            assert response.status_code == 400, path
            assert "not sent from this site" in response.get_data(as_text=True), path
    assert (dataset_names(cat), cat.sample_rows(), count_rows(cat, Level)) == before


def test_api_write_without_token_writes_nothing(reader, shared):
    cat = shared["catalog"]
    before = (dataset_names(cat), count_rows(cat, Level))
    body = {"name": "no-token", "levels": [{"spectrum": "Li I", "configuration": "1s2.2s", "term": "2S", "j": "1/2",
                                            "energy_cm1": 0}]}
    assert reader.post("/api/v1/datasets", json=body).status_code == 401
    assert (dataset_names(cat), count_rows(cat, Level)) == before


# ----------------------------------------------------------------- size

def test_a_50_mb_upload_is_413_and_writes_nothing(reader, shared):
    cat = shared["catalog"]
    before = (dataset_names(cat), count_rows(cat, Level))
    token = csrf_token(reader)
    big = io.BytesIO(b"spectrum,configuration,term,j,energy_cm1\n"
                     + b"Li I,1s2.2s,2S,1/2,0\n" * (50 * 1024 * 1024 // 21))
    response = reader.post("/desk/upload", data={"csrf_token": token, "file": (big, "big.csv")},
                           content_type="multipart/form-data")
    assert response.status_code == 413 and "larger than" in response.get_data(as_text=True)
    api = reader.post("/api/v1/datasets", data=b"{" + b" " * (50 * 1024 * 1024) + b"}",
                      headers={"Authorization": f"Bearer {TOKEN}"}, content_type="application/json")
    assert api.status_code == 413 and api.get_json()["error"]["code"] == "too_large"
    assert (dataset_names(cat), count_rows(cat, Level)) == before


# ----------------------------------------------------------------- escaping

def test_jinja_autoescape_is_on(reader):
    assert reader.application.jinja_env.autoescape is True


def _pages_with_the_label(reader, shared) -> dict[str, str]:
    from levels.catalog import LineQuery

    cat = shared["catalog"]
    xss_line = next(r for r in cat.line_rows(LineQuery(spectrum="Li I"))[0] if r["lower"] == XSS_LABEL)
    return {
        "species page": "/species/Li_I?per=200&lper=200&order=-wavelength",
        "level filter": f"/species/Li_I?dataset={quote(XSS_DATASET)}",
        "line finder": f"/lines?from_nm={xss_line['vacuum_nm'] * 0.999}&to_nm={xss_line['vacuum_nm'] * 1.001}",
        "line record": f"/species/Li_I/lines/{xss_line['id']}",
        "catalogue": "/",
        "datasets": "/datasets",
        "dataset": f"/datasets/{shared['xss_dataset_id']}",
        "desk": "/desk/",
    }


def test_html_in_labels_and_names_is_shown_as_text_on_every_page(reader, shared):
    for name, url in _pages_with_the_label(reader, shared).items():
        response = reader.get(url)
        assert response.status_code == 200, name
        text = response.get_data(as_text=True)
        assert XSS_LABEL not in text and XSS_DATASET not in text, name
        assert str(escape(XSS_LABEL)) in text or str(escape(XSS_DATASET)) in text, name


def test_the_diagram_escapes_hover_text(reader, shared):
    payload = reader.get("/species/Li_I/diagram.json?max_lines=5000").get_json()
    hover = " ".join(t for trace in payload["figure"]["data"] for t in trace.get("hovertext", []))
    assert "&lt;script&gt;" in hover and "<script>" not in hover
    assert "<b>xss-set</b>" not in hover and "&lt;b&gt;xss-set&lt;/b&gt;" in hover


def test_an_uploaded_label_is_escaped_in_the_preview(reader, shared):
    content = f'spectrum,configuration,term,j,energy_cm1,label\nLi I,1s2.5s,2S,1/2,35012.0,"{XSS_LABEL}"\n'.encode()
    response = reader.post("/desk/upload",
                           data={"csrf_token": csrf_token(reader), "file": (io.BytesIO(content), "x.csv")},
                           content_type="multipart/form-data")
    text = response.get_data(as_text=True)
    assert response.status_code == 200 and XSS_LABEL not in text and str(escape(XSS_LABEL)) in text


def test_no_inline_script_on_any_page(reader, shared):
    for url in list(_pages_with_the_label(reader, shared).values()) + ["/species/Li_I/diagram", "/desk/unlock",
                                                                       "/nowhere"]:
        text = reader.get(url).get_data(as_text=True)
        for tag in re.findall(r"<script\b[^>]*>", text):
            assert 'src="/static/' in tag, (url, tag)
        assert not re.search(r"\son[a-z]+\s*=", text), url
        assert "javascript:" not in text.lower(), url


# ----------------------------------------------------------------- headers

@pytest.mark.parametrize("url", ["/", "/species/Li_I/diagram", "/api/v1/species", "/static/js/site.js", "/nowhere",
                                 "/species/Li_I/lines.csv"])
def test_security_headers(reader, shared, url):
    headers = reader.get(url).headers
    csp = headers["Content-Security-Policy"]
    directives = dict(d.strip().split(" ", 1) for d in csp.split(";"))
    assert directives["script-src"] == "'self'"
    assert directives["frame-ancestors"] == "'none'" and directives["default-src"] == "'none'"
    assert directives["connect-src"] == "'self'" and directives["base-uri"] == "'none'"
    assert "cdn" not in csp and "http" not in csp
    assert headers["X-Content-Type-Options"] == "nosniff"
    assert headers["Referrer-Policy"] == "same-origin"
    assert headers["X-Frame-Options"] == "DENY"
    if "diagram" not in url:
        assert directives["style-src"] == "'self'"


def test_session_cookie_flags(reader, shared):
    response = reader.get("/desk/")
    cookie = response.headers.get("Set-Cookie", "")
    assert "HttpOnly" in cookie and "SameSite=Lax" in cookie


def test_no_cdn_anywhere(reader, shared):
    from pathlib import Path

    import webui

    folder = Path(webui.__file__).parent
    for path in list((folder / "templates").glob("*.html")) + list((folder / "static").rglob("*.js")) \
            + list((folder / "static").rglob("*.css")):
        if path.name == "plotly.min.js":
            continue
        text = path.read_text(encoding="utf-8")
        assert not re.search(r"""(src|href)=["']?(https?:)?//""", text), path
        assert "cdn." not in text, path
    bundle = (folder / "static" / "vendor" / "plotly.min.js").read_bytes()
    assert bundle.startswith(b"/**\n* plotly.js v") and len(bundle) > 1_000_000
    assert reader.get("/static/vendor/plotly.min.js").status_code == 200


# ----------------------------------------------------------------- hostile filter values

def is_empty(response) -> bool:
    """Whether a page, JSON table or CSV/ECSV download holds no rows."""
    text = response.get_data(as_text=True)
    if response.mimetype == "application/json":
        return response.get_json()["rows"] == []
    if response.mimetype == "text/html":
        return any(phrase in text for phrase in ("No species match", "No levels match", "No lines match"))
    return len([line for line in text.splitlines() if line and not line.startswith("#")]) <= 1


@pytest.mark.parametrize("endpoint", list(ENDPOINTS))
def test_hostile_filter_values_give_400_or_empty_never_500(reader, shared, endpoint):
    cat = shared["catalog"]
    levels_before = count_rows(cat, Level)
    for name in ENDPOINTS[endpoint]:
        for value in HOSTILE:
            response = reader.get(endpoint, query_string={name: value})
            assert response.status_code in (200, 400, 404), (endpoint, name, value, response.status_code)
            if response.status_code == 200 and name in SEARCHES and value.strip():
                assert is_empty(response), (endpoint, name, value)
    assert count_rows(cat, Level) == levels_before  # the tables are all still there


@pytest.mark.parametrize("name", ["' OR 1=1 --", "Li_I;DROP TABLE levels", "<script>", "..", "%2e%2e",
                                  "Li_I%00", "x" * 300, "Li I' --", "🙂"])
def test_hostile_species_names_are_404(reader, shared, name):
    for suffix in ("", "/diagram", "/diagram.json", "/levels.csv"):
        response = reader.get(f"/species/{quote(name, safe='%')}{suffix}")
        assert response.status_code == 404, (name, suffix, response.status_code)
    api = reader.get(f"/api/v1/species/{quote(name, safe='%')}/lines")
    assert api.status_code == 404 and api.mimetype == "application/json"
