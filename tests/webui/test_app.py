"""The application factory, its configuration sources, the CLI command and the server entry point."""

from __future__ import annotations

import pytest

from levels.errors import LevelsError

from webui import DEFAULTS, UnsafeBindError, check_bind, create_app, is_loopback, make_server

from tests.webui.conftest import LiveServer


def test_one_catalog_per_app_and_no_debug(app, store_url):
    catalog = app.extensions["levels"]["catalog"]
    assert catalog.url == store_url
    assert app.debug is False and app.config["DEBUG"] is False
    assert set(app.blueprints) == {"browse", "workbench", "edit", "api", "analysis"}


@pytest.fixture
def empty_url(tmp_path):
    """An initialised, empty SQLite store (configuration tests need no data nor both backends)."""
    from levels.catalog import Catalog

    url = f"sqlite:///{tmp_path / 'empty.sqlite'}"
    with Catalog(url) as catalog:
        catalog.init()
    return url


def test_config_from_the_environment(monkeypatch, tmp_path, empty_url):
    store_url = empty_url
    monkeypatch.setenv("LEVELS_DB", store_url)
    monkeypatch.setenv("LEVELS_SECRET_KEY", "from-env")
    monkeypatch.setenv("LEVELS_API_TOKEN", "env-token")
    app = create_app({"LEVELS_INSTANCE_PATH": str(tmp_path / "none")})
    try:
        assert app.config["SECRET_KEY"] == "from-env" and app.config["LEVELS_API_TOKEN"] == "env-token"
        assert app.extensions["levels"]["catalog"].url == store_url
        assert app.test_client().get("/").status_code == 200
    finally:
        app.extensions["levels"]["catalog"].close()


def test_instance_file_is_read_and_the_mapping_wins(monkeypatch, tmp_path, empty_url):
    store_url = empty_url
    for name in ("LEVELS_DB", "LEVELS_SECRET_KEY", "LEVELS_API_TOKEN"):
        monkeypatch.delenv(name, raising=False)
    instance = tmp_path / "inst"
    instance.mkdir()
    (instance / "levels.cfg").write_text(f'LEVELS_DB = "{store_url}"\nSECRET_KEY = "from-file"\n'
                                        'LEVELS_API_TOKEN = "file-token"\nLEVELS_PAGE_SIZE = 25\n')
    app = create_app({"LEVELS_INSTANCE_PATH": str(instance), "LEVELS_API_TOKEN": "mapping-token"})
    try:
        assert app.config["SECRET_KEY"] == "from-file" and app.config["LEVELS_PAGE_SIZE"] == 25
        assert app.config["LEVELS_API_TOKEN"] == "mapping-token"
        assert app.extensions["levels"]["catalog"].url == store_url
    finally:
        app.extensions["levels"]["catalog"].close()


def test_missing_secret_key_gets_an_ephemeral_one(monkeypatch, tmp_path, empty_url):
    store_url = empty_url
    monkeypatch.delenv("LEVELS_SECRET_KEY", raising=False)
    app = create_app({"LEVELS_DB": store_url, "LEVELS_INSTANCE_PATH": str(tmp_path)})
    try:
        assert len(app.config["SECRET_KEY"]) == 64 and app.config["LEVELS_EPHEMERAL_SECRET"] is True
    finally:
        app.extensions["levels"]["catalog"].close()


def test_debug_cannot_be_switched_on(tmp_path, empty_url):
    store_url = empty_url
    app = create_app({"LEVELS_DB": store_url, "DEBUG": True, "LEVELS_INSTANCE_PATH": str(tmp_path)})
    try:
        assert app.debug is False
    finally:
        app.extensions["levels"]["catalog"].close()


def test_uninitialised_store_gives_503_with_what_to_do(tmp_path):
    app = create_app({"LEVELS_DB": f"sqlite:///{tmp_path / 'empty.sqlite'}", "SECRET_KEY": "x",
                      "LEVELS_INSTANCE_PATH": str(tmp_path)})
    try:
        page = app.test_client().get("/")
        assert page.status_code == 503 and "levels init" in page.get_data(as_text=True)
        api = app.test_client().get("/api/v1/species")
        assert api.status_code == 503 and api.get_json()["error"]["code"] == "store_unavailable"
    finally:
        app.extensions["levels"]["catalog"].close()


def test_init_store_option(tmp_path):
    app = create_app({"LEVELS_DB": f"sqlite:///{tmp_path / 'new.sqlite'}", "SECRET_KEY": "x",
                      "LEVELS_INIT_STORE": True, "LEVELS_INSTANCE_PATH": str(tmp_path)})
    try:
        assert app.test_client().get("/").status_code == 200
    finally:
        app.extensions["levels"]["catalog"].close()


def test_runner_prints_the_site_config(runner, app):
    result = runner.invoke(args=["site-config"])
    assert result.exit_code == 0
    assert "api token: set" in result.output and "test-token" not in result.output
    assert app.extensions["levels"]["catalog"].display_url in result.output


@pytest.mark.parametrize("host, loopback", [("127.0.0.1", True), ("127.5.0.9", True), ("localhost", True),
                                            ("::1", True), ("[::1]", True), ("0.0.0.0", False), ("::", False),
                                            ("192.168.1.20", False), ("example.org", False)])
def test_loopback_detection(host, loopback):
    assert is_loopback(host) is loopback


def test_serving_beyond_loopback_needs_a_token(tmp_path, empty_url):
    app = create_app({"LEVELS_DB": empty_url, "SECRET_KEY": "x", "LEVELS_INSTANCE_PATH": str(tmp_path)})
    app.config["LEVELS_API_TOKEN"] = None
    with pytest.raises(UnsafeBindError, match="no API token") as info:
        make_server(app, "0.0.0.0", 0)
    assert isinstance(info.value, LevelsError)
    check_bind("127.0.0.1", app)  # loopback is fine without a token
    app.config["LEVELS_API_TOKEN"] = "set"
    check_bind("0.0.0.0", app)  # with a token the bind is allowed (not opened here)
    app.extensions["levels"]["catalog"].close()


def test_serve_refuses_before_starting(monkeypatch, tmp_path, empty_url):
    store_url = empty_url
    import webui

    monkeypatch.delenv("LEVELS_API_TOKEN", raising=False)
    with pytest.raises(UnsafeBindError):
        webui.serve("0.0.0.0", 0, config={"LEVELS_DB": store_url, "LEVELS_INSTANCE_PATH": str(tmp_path)})


def test_live_server_on_loopback(app):
    import requests

    with LiveServer(app) as live:
        response = requests.get(live.url + "/api/v1/species", timeout=10)
        assert response.status_code == 200 and response.json()["rows"][0]["spectrum"] == "Li I"
        assert response.headers["X-Content-Type-Options"] == "nosniff"


def test_defaults_are_safe():
    assert DEFAULTS["MAX_CONTENT_LENGTH"] <= 64 * 1024 * 1024
    assert DEFAULTS["SESSION_COOKIE_HTTPONLY"] is True and DEFAULTS["LEVELS_DESK_NEEDS_TOKEN"] is True
