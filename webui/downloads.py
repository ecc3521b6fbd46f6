"""Table downloads (CSV, JSON, ECSV with the provenance header) and JSON table payloads."""

from __future__ import annotations

import json
import math
import re
import zlib
from collections.abc import Iterable, Mapping, Sequence

from flask import Response, request

from levels.io.tables import FORMATS, format_table

MIMETYPES = {"csv": "text/csv", "json": "application/json", "ecsv": "text/plain"}
SUFFIXES = {"csv": "csv", "json": "json", "ecsv": "ecsv"}


def safe_filename(stem: str) -> str:
    """An ASCII file stem made of letters, digits, ``-``, ``_`` and ``.``."""
    cleaned = re.sub(r"[^A-Za-z0-9._-]+", "_", stem).strip("._") or "table"
    return cleaned[:120]


#: JSON keys of line rows, as the CLI writes them: "lines", with "rows" kept as an alias for older readers
LINE_ROWS_KEYS = ("lines", "rows")


def table_download(rows: Iterable[Mapping], columns: Sequence[str], fmt: str, provenance: Mapping,
                   stem: str, units: Mapping[str, str] | None = None,
                   rows_key: str | Sequence[str] = "rows") -> Response:
    """A download response of a table in ``fmt`` (one of ``levels.io.tables.FORMATS``); ``rows_key`` names the
    rows in JSON (:data:`LINE_ROWS_KEYS` for line rows)."""
    if fmt not in FORMATS:
        raise ValueError(f"unknown format {fmt!r}")
    text = format_table(rows, columns, fmt, provenance, units=units, rows_key=rows_key)
    response = Response(text, mimetype=MIMETYPES[fmt])
    response.headers["Content-Disposition"] = f'attachment; filename="{safe_filename(stem)}.{SUFFIXES[fmt]}"'
    return response


def clean(value):
    """A JSON-safe value: NaN and infinities become null, numpy scalars plain numbers."""
    if hasattr(value, "item") and not isinstance(value, (str, bytes)):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def json_table(rows: Iterable[Mapping], columns: Sequence[str], provenance: Mapping, **extra) -> dict:
    """``{"provenance", "columns", "rows", ...extra}``: the shape of a JSON download, for the API."""
    return {
        "provenance": {k: clean(v) for k, v in provenance.items()},
        "columns": list(columns),
        "rows": [{c: clean(row.get(c)) for c in columns} for row in rows],
        **extra,
    }


def json_response(payload, status: int = 200, headers: Mapping[str, str] | None = None) -> Response:
    """A JSON response (strict JSON: no NaN), UTF-8."""
    body = json.dumps(payload, ensure_ascii=False, allow_nan=False, separators=(",", ":"))
    response = Response(body, status=status, mimetype="application/json")
    if headers:
        response.headers.update(headers)
    return response


class GzipPrefix:
    """A gzip stream begun with a fixed prefix, kept so that each response only compresses its own rest.

    ``finish(rest)`` gives the complete gzip member of ``prefix + rest``: the prefix is compressed
    once, and each call continues from a copy of the compressor's state (zlib copies are cheap and
    the copy leaves the kept state untouched, so threads may share one).
    """

    def __init__(self, prefix: bytes, level: int = 1):
        self._compressor = zlib.compressobj(level, zlib.DEFLATED, 16 + zlib.MAX_WBITS)
        self._head = self._compressor.compress(prefix)

    def finish(self, rest: bytes) -> bytes:
        """The gzip bytes of the prefix followed by ``rest``."""
        compressor = self._compressor.copy()
        return self._head + compressor.compress(rest) + compressor.flush()


def accepts_gzip() -> bool:
    """Whether the request's client takes a gzip-encoded body."""
    return request.accept_encodings.quality("gzip") > 0


def spliced_json_response(prefix: str, rest: str, *, gzip_prefix: GzipPrefix | None = None) -> Response:
    """A JSON response whose text is ``prefix + rest``; gzip-encoded from ``gzip_prefix`` (the same prefix,
    compressed once and kept) when the client accepts it."""
    if gzip_prefix is not None and accepts_gzip():
        response = Response(gzip_prefix.finish(rest.encode("utf-8")), mimetype="application/json")
        response.headers["Content-Encoding"] = "gzip"
    else:
        response = Response((prefix + rest).encode("utf-8"), mimetype="application/json")
    response.headers["Vary"] = "Accept-Encoding"
    return response
