"""Security wiring: CSRF on every form, response headers, error pages that never leak internals.

* CSRF: Flask-WTF's CSRFProtect checks every POST outside the API (the API uses a bearer token).
* Headers on every response: a Content-Security-Policy that allows scripts, styles,
  images and fetches from this site only (no inline scripts), ``frame-ancestors 'none'``,
  ``X-Content-Type-Options: nosniff``, ``Referrer-Policy: same-origin``, and friends.
* Errors: 4xx/5xx become an HTML page or, under ``/api/``, the API's JSON error;
  a store that is not ready gives 503 with what to do; nothing shows a traceback.
"""

from __future__ import annotations

import logging

from flask import Flask, g, render_template, request
from flask_wtf.csrf import CSRFError, CSRFProtect
from werkzeug.exceptions import HTTPException, RequestEntityTooLarge

from levels.errors import NotFoundError, StoreError

from webui.params import BadParameter

csrf = CSRFProtect()
log = logging.getLogger("levels.webui")

def _policy(style: str) -> str:
    return "; ".join([
        "default-src 'none'",
        "script-src 'self'",
        f"style-src {style}",
    "img-src 'self' data:",
    "font-src 'self'",
    "connect-src 'self'",
    "form-action 'self'",
        "frame-ancestors 'none'",
        "base-uri 'none'",
    ])


#: every page: scripts, styles, images and fetches from this site only
CONTENT_SECURITY_POLICY = _policy("'self'")
#: pages drawing a plotly figure: plotly.js sets style attributes while drawing, so inline
#: *styles* are allowed there; scripts stay 'self' only
PLOT_CONTENT_SECURITY_POLICY = _policy("'self' 'unsafe-inline'")
SECURITY_HEADERS = {
    "Content-Security-Policy": CONTENT_SECURITY_POLICY,
    "X-Content-Type-Options": "nosniff",
    "X-Frame-Options": "DENY",
    "Referrer-Policy": "same-origin",
    "Cross-Origin-Opener-Policy": "same-origin",
    "Cross-Origin-Resource-Policy": "same-origin",
    "Permissions-Policy": "camera=(), microphone=(), geolocation=(), payment=(), usb=()",
}
ERROR_CODES = {400: "bad_request", 401: "unauthorised", 403: "forbidden", 404: "not_found",
               405: "method_not_allowed", 413: "too_large", 415: "unsupported_media_type",
               500: "server_error", 503: "store_unavailable"}


def _wants_json() -> bool:
    return request.path.startswith("/api/") or request.path.endswith(".json")


def _error_response(status: int, message: str, title: str | None = None, field: str | None = None):
    if _wants_json():
        from webui.api import error

        return error(status, ERROR_CODES.get(status, "error"), message, field)
    return render_template("error.html", status=status, title=title or _TITLES.get(status, "Something went wrong"),
                           message=message), status


_TITLES = {400: "That request cannot be used", 401: "Not allowed without the token", 404: "Not here",
           405: "Not this way", 413: "Too large", 500: "Something went wrong on our side",
           503: "The store is not ready"}


def allow_plot_styles() -> None:
    """Mark the current response as a plotly page (inline styles allowed, scripts still 'self')."""
    g.plot_page = True


def init_app(app: Flask) -> None:
    """Install CSRF protection, security headers and error handlers on ``app``."""
    csrf.init_app(app)

    @app.after_request
    def _headers(response):
        if g.get("plot_page"):
            response.headers["Content-Security-Policy"] = PLOT_CONTENT_SECURITY_POLICY
        for name, value in SECURITY_HEADERS.items():
            response.headers.setdefault(name, value)
        if request.path.startswith("/desk") or request.method != "GET":
            response.headers["Cache-Control"] = "no-store"
        return response

    @app.errorhandler(CSRFError)
    def _csrf(exc: CSRFError):
        return _error_response(400, "The form was not sent from this site or has expired "
                                    f"({exc.description}). Reload the page and send it again.",
                               "The form could not be accepted")

    @app.errorhandler(RequestEntityTooLarge)
    def _too_large(_exc):
        limit = app.config.get("MAX_CONTENT_LENGTH")
        return _error_response(413, f"The request is larger than the {limit} bytes this site accepts.")

    @app.errorhandler(BadParameter)
    def _bad_parameter(exc: BadParameter):
        return _error_response(400, exc.message, field=exc.field)

    @app.errorhandler(NotFoundError)
    def _not_found(exc: NotFoundError):
        return _error_response(404, str(exc))

    @app.errorhandler(StoreError)
    def _store(exc: StoreError):
        log.error("store error: %s", exc)
        return _error_response(503, str(exc))

    @app.errorhandler(HTTPException)
    def _http(exc: HTTPException):
        return _error_response(exc.code or 500, exc.description or exc.name)

    @app.errorhandler(Exception)
    def _unexpected(exc: Exception):
        if isinstance(exc, HTTPException):
            return _http(exc)
        log.exception("unexpected error on %s %s", request.method, request.path)
        return _error_response(500, "The server met an unexpected problem; it has been logged.")
