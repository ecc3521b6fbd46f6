"""The web site of levels: a Flask application factory and a production server entry point.

``create_app(config)`` builds the site over one store (one
:class:`levels.catalog.Catalog` per app, in ``app.extensions["levels"]``) with
four blueprints: ``browse`` (reading pages and downloads), ``workbench`` (the
emission workbench, under ``/emission``), ``edit`` (the sample desk, under
``/desk``) and ``api`` (JSON, under ``/api/v1``).

Configuration, later sources winning:

1. defaults (:data:`DEFAULTS`);
2. the instance file ``instance/levels.cfg`` (Python syntax, ``LEVELS_DB = "..."``;
   the instance folder is ``LEVELS_INSTANCE_PATH`` when set);
3. environment: ``LEVELS_DB``, ``LEVELS_SECRET_KEY`` (-> ``SECRET_KEY``), ``LEVELS_API_TOKEN``;
4. the ``config`` mapping given to :func:`create_app`.

``serve(host, port)`` runs the site under waitress and refuses a non-loopback
host unless an API token is set.
"""

from __future__ import annotations

import ipaddress
import logging
import os
import secrets
import sys
from collections.abc import Mapping
from pathlib import Path

from flask import Flask
from flask.json.provider import DefaultJSONProvider

from levels.catalog import Catalog
from levels.errors import LevelsError

__all__ = ["create_app", "serve", "make_server", "stop_server", "check_bind", "is_loopback", "UnsafeBindError",
           "DEFAULTS"]

log = logging.getLogger("levels.webui")

DEFAULTS: dict[str, object] = {
    "LEVELS_DB": None,
    "SECRET_KEY": None,
    "LEVELS_API_TOKEN": None,
    "LEVELS_ACTOR": None,
    "LEVELS_UPLOAD_DIR": None,
    "LEVELS_UPLOAD_MAX_AGE_S": 3600,
    "LEVELS_PAGE_SIZE": 50,
    "LEVELS_DIAGRAM_MAX_LINES": 800,
    # seconds the species table (with its counts) is shared between requests; 0 = never
    "LEVELS_SPECIES_CACHE_S": 2.0,
    "LEVELS_DESK_NEEDS_TOKEN": True,
    "LEVELS_INIT_STORE": False,
    # 16 MiB: far above any levels file, far below what would hurt the server
    "MAX_CONTENT_LENGTH": 16 * 1024 * 1024,
    "SESSION_COOKIE_HTTPONLY": True,
    "SESSION_COOKIE_SAMESITE": "Lax",
    "WTF_CSRF_TIME_LIMIT": 8 * 3600,
    "SEND_FILE_MAX_AGE_DEFAULT": 3600,
}
ENVIRONMENT = {"LEVELS_DB": "LEVELS_DB", "LEVELS_SECRET_KEY": "SECRET_KEY", "LEVELS_API_TOKEN": "LEVELS_API_TOKEN"}
INSTANCE_FILE = "levels.cfg"


class UnsafeBindError(LevelsError, ValueError):
    """Refusal to serve the site beyond this machine without an API token."""


def _load_config(app: Flask, config: Mapping | None) -> None:
    app.config.update(DEFAULTS)
    app.config.from_pyfile(INSTANCE_FILE, silent=True)
    for env_name, key in ENVIRONMENT.items():
        value = os.environ.get(env_name)
        if value:
            app.config[key] = value
    given = dict(config or {})
    if "LEVELS_SECRET_KEY" in given:
        given.setdefault("SECRET_KEY", given.pop("LEVELS_SECRET_KEY"))
    app.config.update(given)
    if not app.config.get("LEVELS_API_TOKEN"):
        app.config["LEVELS_API_TOKEN"] = None
    # never the debugger: it runs code for whoever can reach the page
    app.config["DEBUG"] = False
    app.debug = False
    if not app.config.get("SECRET_KEY"):
        app.config["SECRET_KEY"] = secrets.token_hex(32)
        app.config["LEVELS_EPHEMERAL_SECRET"] = True
        log.warning("no LEVELS_SECRET_KEY set: forms and previews last only as long as this process")


def create_app(config: Mapping | None = None) -> Flask:
    """Build the web site.

    Parameters
    ----------
    config : mapping, optional
        Settings that override the instance file and the environment, for example
        ``{"LEVELS_DB": "sqlite:///lab.sqlite", "SECRET_KEY": "...", "LEVELS_API_TOKEN": "..."}``.

    Returns
    -------
    flask.Flask
        The application; its Catalog is ``app.extensions["levels"]["catalog"]``.
    """
    given = dict(config or {})
    instance = given.get("LEVELS_INSTANCE_PATH") or os.environ.get("LEVELS_INSTANCE_PATH")
    app = Flask(__name__, instance_path=str(Path(instance).resolve()) if instance else None,
                instance_relative_config=True)
    _load_config(app, given)
    if isinstance(app.json, DefaultJSONProvider):
        app.json.sort_keys = False

    catalog = Catalog(app.config["LEVELS_DB"], actor=app.config.get("LEVELS_ACTOR") or _default_actor())
    if app.config.get("LEVELS_INIT_STORE"):
        catalog.init()
    app.extensions["levels"] = {"catalog": catalog}

    from webui import analysis, api, browse, edit, security, templating, workbench

    security.init_app(app)
    templating.init_app(app)
    app.register_blueprint(browse.bp)
    app.register_blueprint(edit.bp)
    app.register_blueprint(workbench.bp)
    app.register_blueprint(analysis.bp)
    app.register_blueprint(api.bp)
    security.csrf.exempt(api.bp)
    _register_cli(app)
    return app


def _default_actor() -> str:
    from levels.service.stores import current_actor

    return f"{current_actor()} (web)"


def _register_cli(app: Flask) -> None:
    import click

    @app.cli.command("site-config")
    def site_config() -> None:
        """Print the store, token and upload settings the site runs with (no secrets)."""
        catalog = app.extensions["levels"]["catalog"]
        click.echo(f"store: {catalog.display_url}")
        click.echo(f"api token: {'set' if app.config.get('LEVELS_API_TOKEN') else 'not set (API writes off)'}")
        click.echo(f"secret key: {'ephemeral' if app.config.get('LEVELS_EPHEMERAL_SECRET') else 'configured'}")
        click.echo(f"upload limit: {app.config['MAX_CONTENT_LENGTH']} bytes")
        click.echo(f"instance folder: {app.instance_path}")


# ----------------------------------------------------------------- serving

def is_loopback(host: str) -> bool:
    """Whether ``host`` names this machine only (127.0.0.0/8, ::1, ``localhost``)."""
    name = host.strip().strip("[]").lower()
    if name == "localhost":
        return True
    try:
        return ipaddress.ip_address(name).is_loopback
    except ValueError:
        return False


def check_bind(host: str, app: Flask) -> None:
    """Refuse a non-loopback host when the site has no API token.

    Raises
    ------
    UnsafeBindError
        With the reason and what to do.
    """
    if not is_loopback(host) and not app.config.get("LEVELS_API_TOKEN"):
        raise UnsafeBindError(
            f"refusing to serve on {host!r}: that address is reachable from other machines and no API token "
            "is set. Set LEVELS_API_TOKEN (it also locks the sample desk) or serve on 127.0.0.1."
        )


def make_server(app: Flask, host: str = "127.0.0.1", port: int = 8150, *, threads: int = 4, **options):
    """A waitress server for ``app`` (not yet running; call ``.run()``; port 0 picks a free port).

    ``options`` go to ``waitress.server.create_server`` (for example ``asyncore_loop_timeout``).

    Raises
    ------
    UnsafeBindError
        A non-loopback host without an API token.
    """
    from waitress.server import create_server

    check_bind(host, app)
    return create_server(app, host=host, port=port, threads=threads, ident="levels",
                         max_request_body_size=int(app.config["MAX_CONTENT_LENGTH"]) + 1024 * 1024,
                         clear_untrusted_proxy_headers=True, **options)


def stop_server(server, thread, timeout: float = 5.0) -> None:
    """Stop a waitress server running ``server.run()`` in ``thread``.

    The channels are closed inside the server's own loop (through its trigger), so
    the loop finds nothing left to watch and returns.
    """
    def close_all():
        for channel in list(server._map.values()):
            channel.close()

    server.trigger.pull_trigger(close_all)
    thread.join(timeout=timeout)


def serve(host: str = "127.0.0.1", port: int = 8150, *, config: Mapping | None = None, threads: int = 4,
          app: Flask | None = None) -> None:
    """Run the site under waitress until interrupted.

    Parameters
    ----------
    host : str
        Address to listen on; default loopback only. Any other address needs an API token.
    port : int
        TCP port (default 8150).
    config : mapping, optional
        Passed to :func:`create_app` (for example ``{"LEVELS_DB": url}``).
    threads : int
        Worker threads.
    app : flask.Flask, optional
        An app already built (``config`` is then ignored).

    Raises
    ------
    UnsafeBindError
        A non-loopback host without an API token (nothing is started).
    """
    own = app is None
    app = app or create_app(config)
    try:
        server = make_server(app, host, port, threads=threads)
    except BaseException:
        if own:
            app.extensions["levels"]["catalog"].close()
        raise
    catalog = app.extensions["levels"]["catalog"]
    address = f"[{host}]" if ":" in host else host
    print(f"levels web site on http://{address}:{getattr(server, 'effective_port', port)}/ "
          f"(store {catalog.display_url}); "
          "press Ctrl+C to stop", file=sys.stderr)
    try:
        server.run()
    except KeyboardInterrupt:
        pass
    finally:
        server.close()
