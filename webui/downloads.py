"""Table downloads (CSV, JSON, ECSV with the provenance header) and JSON table payloads."""

from __future__ import annotations

import json
import math
import re
from collections.abc import Iterable, Mapping, Sequence

from flask import Response

from levels.io.tables import FORMATS, format_table

MIMETYPES = {"csv": "text/csv", "json": "application/json", "ecsv": "text/plain"}
SUFFIXES = {"csv": "csv", "json": "json", "ecsv": "ecsv"}


def safe_filename(stem: str) -> str:
    """An ASCII file stem made of letters, digits, ``-``, ``_`` and ``.``."""
    cleaned = re.sub(r"[^A-Za-z0-9._-]+", "_", stem).strip("._") or "table"
    return cleaned[:120]


def table_download(rows: Iterable[Mapping], columns: Sequence[str], fmt: str, provenance: Mapping,
                   stem: str, units: Mapping[str, str] | None = None) -> Response:
    """A download response of a table in ``fmt`` (one of ``levels.io.tables.FORMATS``)."""
    if fmt not in FORMATS:
        raise ValueError(f"unknown format {fmt!r}")
    text = format_table(rows, columns, fmt, provenance, units=units)
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


def json_text_response(payload: Mapping, status: int = 200, **serialised: str) -> Response:
    """A JSON object response whose members in ``serialised`` are JSON text already (spliced in, last).

    For large parts built once and kept (a diagram's level traces), so they are not encoded again.
    """
    body = json.dumps(payload, ensure_ascii=False, allow_nan=False, separators=(",", ":"))
    if serialised:
        extra = ",".join(f"{json.dumps(name)}:{text}" for name, text in serialised.items())
        body = body[:-1] + ("," if payload else "") + extra + "}"
    response = Response(body, status=status, mimetype="application/json")
    return response
