"""The JSON API under ``/api/v1`` (contract in the design; OpenAPI 3 at ``/api/v1/openapi.json``).

Reads are open. ``POST /datasets`` needs ``Authorization: Bearer <token>``
(the site's ``LEVELS_API_TOKEN``; without one configured, writes are off), a
JSON body, and is all-or-nothing: every level is validated by
:mod:`levels.io.records` first, then the catalog writes the dataset in one
transaction. Errors are ``{"error": {"code", "message", "field"}}`` with a 4xx
status (validation errors also list every problem under ``problems``).
"""

from __future__ import annotations

import hmac
import json
import math
from collections.abc import Mapping, Sequence
from dataclasses import replace
from typing import Any

from flask import Blueprint, current_app, request, url_for
from werkzeug.datastructures import MultiDict

from levels.errors import AlreadyExistsError, InputFileError, LevelsError, NotFoundError, Problem, StoreError
from levels.io.limits import text_problem
from levels.io.records import LEVEL_COLUMNS as LEVEL_FIELDS
from levels.io.records import LINE_FILE_COLUMNS, validate_levels, validate_lines
from levels.service.contract import LEVEL_COLUMNS, LINE_LIST_COLUMNS, SPECIES_COLUMNS, LineRow
from levels.service.line_selection import MULTIPLET_EXTRA_COLUMNS, MULTIPLETS_NOTE, filter_lines, merge_multiplets
from levels.service.vocabulary import add_spectral_column, medium_statement

from webui import params, services
from webui.downloads import json_response, json_table
from webui.openapi import openapi_document, query_problem, schema_problem

bp = Blueprint("api", __name__, url_prefix="/api/v1")

API_SOURCE = "<api>"
#: most levels accepted in one POST /datasets
MAX_LEVELS_PER_POST = 100_000
DATASET_KEYS = {"name", "kind", "sample", "citation", "description", "levels", "lines"}
LEVEL_KEYS = set(LEVEL_FIELDS) - {"dataset"}
LINE_KEYS = set(LINE_FILE_COLUMNS)
LINES_SOURCE = "<api lines>"
#: the method a dataset posted to the API records (not "file import": no file was read)
API_METHOD = "JSON API (POST /api/v1/datasets)"


@bp.after_app_request
def _allow_header(response):
    """A 405 answer names the methods the path does take (RFC 9110, 15.5.6), on every page and API path."""
    if response.status_code == 405 and "Allow" not in response.headers:
        methods = current_app.url_map.bind_to_environ(request.environ).allowed_methods(request.path)
        if methods:
            response.headers["Allow"] = ", ".join(sorted(methods))
    return response


def error(status: int, code: str, message: str, field: str | None = None, problems: list | None = None,
          headers: dict | None = None):
    """A JSON error response ``{"error": {"code", "message", "field"}}``."""
    body: dict[str, dict[str, Any]] = {"error": {"code": code, "message": message, "field": field}}
    if problems is not None:
        body["error"]["problems"] = problems
    return json_response(body, status, headers)


def _species(spectrum: str):
    """The species of a path, and the isotope ``mass_number`` names (a value that breaks the document is left to
    the document's check, which answers 400)."""
    mass_number = request.args.get("mass_number")
    try:
        services.mass_number_of(mass_number)
    except NotFoundError:
        mass_number = None
    return services.resolve_species(services.catalog(), spectrum, mass_number)


@bp.get("/openapi.json")
def openapi():
    """The OpenAPI 3 document of this API."""
    return json_response(openapi_document())


@bp.get("/species")
def species():
    """Every stored species (species columns of the contract)."""
    cat = services.catalog()
    rows = cat.species_rows()
    used = sorted({name for r in rows for name in r["dataset_names"]})
    return json_response(json_table(rows, SPECIES_COLUMNS, cat.provenance("species", used), total=len(rows)))


@bp.get("/species/<spectrum>/levels")
def levels(spectrum: str):
    """Levels of a species; ``dataset`` (repeatable or comma-separated) sets the precedence."""
    try:
        ref = _species(spectrum)
    except NotFoundError as exc:
        return error(404, "not_found", str(exc), "spectrum")
    problem = query_problem(request.args, "listLevels")
    if problem:
        return error(400, "bad_parameter", problem[1], problem[0])
    names = [part.strip() for raw in request.args.getlist("dataset") for part in raw.split(",") if part.strip()]
    cat = services.catalog()
    for name in names:
        if name not in ref.datasets:  # a name the document allows, naming nothing here: not found
            return error(404, "not_found", f"{ref.name} has no levels in a dataset named {name!r}", "dataset")
    rows = cat.level_rows(ref.spectrum, names or None)
    used = sorted({r["dataset"] for r in rows})
    return json_response(json_table(rows, LEVEL_COLUMNS, cat.provenance(f"levels {ref.name}", used),
                                    total=len(rows)))


@bp.get("/species/<spectrum>/lines")
def lines(spectrum: str):
    """Lines of a species in a window, filtered, paged by ``limit`` and ``offset``."""
    try:
        ref = _species(spectrum)
    except NotFoundError as exc:
        return error(404, "not_found", str(exc), "spectrum")
    problem = query_problem(request.args, "listLines")
    if problem:
        return error(400, "bad_parameter", problem[1], problem[0])
    try:
        flt, empty = _api_line_filter(request.args)
        limit, offset = params.api_window(request.args)
    except params.BadParameter as exc:
        return error(400, "bad_parameter", exc.message, exc.field)
    cat = services.catalog()
    chosen = {k: (request.args.get(k) or "").strip() or None for k in ("lower", "series", "line_name")}
    for key, value in chosen.items():
        if value is not None and len(value) > 200:
            return error(400, "bad_parameter", f"{key} is longer than 200 characters", key)
    multiplets = request.args.get("multiplets") == "true"
    contributed: list[str] = []  # datasets behind the rows before multiplets are summed
    rows: list[LineRow]
    if empty:  # the windows given do not overlap: no line lies in both
        rows, total = [], 0
    elif not any(chosen.values()) and not request.args.get("unit") and not multiplets:
        page = services.line_page_json(ref, flt, limit, offset)  # each row written once per store revision
        if page is not None:
            texts, total, used = page
            provenance = cat.provenance(flt.query(ref.spectrum).describe(), used, medium=flt.medium,
                                        wavelengths=medium_statement(flt.medium, services.air_formula(cat, used)))
            table = line_table([], provenance, total=total, limit=limit, offset=offset)
            return services.json_rows_response(table, table["lines"], texts)
        rows, total = services.line_window(ref, flt, limit, offset)  # kept per store revision, no query
    else:  # selections by level label or line name: filter the whole window, then page
        try:
            every = services.line_window(ref, flt)[0]
            every = filter_lines(every, lower=chosen["lower"], series=chosen["series"], name=chosen["line_name"])
        except LevelsError as exc:
            field = "line_name" if "line name" in str(exc) else ("series" if chosen["series"] else "lower")
            return error(400, "bad_parameter", str(exc), field)
        contributed = sorted({r["dataset"] for r in every})
        if multiplets:  # components of one configuration and term pair summed (levels lines --multiplets)
            every = merge_multiplets(every, medium=flt.medium, air_formula=services.air_formula(cat, contributed))
        rows, total = every[offset:offset + limit], len(every)
    if multiplets:
        used = contributed  # the datasets behind the sums (a multiplet row joins their names)
    else:
        services.add_ritz_columns(ref, rows, flt.medium)
        used = sorted({r["dataset"] for r in rows})
    provenance = cat.provenance(flt.query(ref.spectrum).describe(), used, medium=flt.medium,
                                wavelengths=medium_statement(flt.medium, services.air_formula(cat, used)))
    if multiplets:
        provenance["multiplets"] = MULTIPLETS_NOTE
    extra_column = None
    if request.args.get("unit"):  # the position column in the unit asked (levels lines --unit)
        extra_column, heading = add_spectral_column(rows, request.args["unit"], flt.medium)
        provenance["unit"] = f"{extra_column}: {heading}"
    return json_response(line_table(rows, provenance, total=total, limit=limit, offset=offset,
                                    extra_column=extra_column, multiplets=multiplets))



def line_table(rows: Sequence[Mapping[str, Any]], provenance: dict, extra_column: str | None = None,
               multiplets: bool = False, **extra) -> dict:
    """A line table answer: rows under ``lines``, as the CLI's line-list JSON, and the same rows under the
    deprecated ``rows`` (kept for older clients); ``extra_column`` (the ``unit`` column) after the list's;
    with ``multiplets`` also ``gf, members, weighting`` (the observed/Ritz columns and the name stay empty)."""
    base = LINE_LIST_COLUMNS + MULTIPLET_EXTRA_COLUMNS if multiplets else LINE_LIST_COLUMNS
    columns = base + ((extra_column,) if extra_column and extra_column not in base else ())
    table = json_table(rows, columns, provenance)
    return {"provenance": table["provenance"], "columns": table["columns"], "lines": table["rows"],
            "rows": table["rows"], **extra}


_WINDOWS = (("from", "to"), ("from_nm", "to_nm"))


def _api_line_filter(args) -> tuple[params.LineFilter, bool]:
    """The line filter of an API request and whether its window is empty.

    Each pair of bounds (``from``/``to`` in any spectral unit, ``from_nm``/``to_nm`` in nm) may come in either
    order; when both pairs are given the window is their overlap, empty when they do not overlap.
    """
    bounds = {name for pair in _WINDOWS for name in pair}
    base = params.line_filter(MultiDict([(k, v) for k, v in args.items(multi=True) if k not in bounds]), strict=True)

    def bound(name: str) -> float | None:
        if not (args.get(name) or "").strip():
            return None
        one = params.line_filter(MultiDict([(name, args[name]), ("medium", base.medium)]), strict=True)
        return one.from_nm if name.startswith("from") else one.to_nm

    low = high = None
    for start, end in _WINDOWS:
        a, b = bound(start), bound(end)
        if a is not None and b is not None and a > b:
            a, b = b, a
        if a is not None:
            low = a if low is None else max(low, a)
        if b is not None:
            high = b if high is None else min(high, b)
    empty = low is not None and high is not None and low > high
    return replace(base, from_nm=low, to_nm=None if empty else high), empty


@bp.get("/datasets/<int:dataset_id>")
def dataset(dataset_id: int):
    """One dataset's record with its counts."""
    if dataset_id > params.MAX_ID:
        return error(404, "not_found", f"no dataset {dataset_id} in the store", "id")
    try:
        info = services.catalog().dataset_info(dataset_id)
    except NotFoundError as exc:
        return error(404, "not_found", str(exc), "id")
    return json_response({"dataset": info})


# ----------------------------------------------------------------- writes

def _authorised() -> tuple[bool, str]:
    token = current_app.config.get("LEVELS_API_TOKEN")
    if not token:
        return False, "writes through the API are off: this site has no API token (set LEVELS_API_TOKEN)"
    header = request.headers.get("Authorization", "")
    scheme, _, given = header.partition(" ")
    if scheme.lower() != "bearer" or not given:
        return False, "send the site's API token as 'Authorization: Bearer <token>'"
    if not hmac.compare_digest(given.strip().encode("utf-8", "replace"), token.encode("utf-8")):
        return False, "the API token is not valid"
    return True, ""


def _problem_json(problem: Problem) -> dict:
    field = problem.field
    if problem.line is not None:
        key = "lines" if problem.source == LINES_SOURCE else "levels"
        field = f"{key}[{problem.line - 1}]" + (f".{problem.field}" if problem.field else "")
    return {"field": field, "message": problem.message}


def _scalar_ok(value) -> bool:
    if value is None or isinstance(value, str):
        return True
    if isinstance(value, bool):
        return False
    if isinstance(value, int):
        return True  # any size: the row validation says when it is too large to store
    if isinstance(value, float):
        return math.isfinite(value)
    return False


def _shape_problems(key: str, items: list, known: set) -> list[dict]:
    """Shape problems of a list of row objects (not objects, unknown fields, non-scalar values)."""
    out: list[dict] = []
    for index, item in enumerate(items):
        if not isinstance(item, dict):
            out.append({"field": f"{key}[{index}]", "message": f"each entry of {key} must be a JSON object"})
            continue
        for name in sorted(set(item) - known):
            out.append({"field": f"{key}[{index}].{name}",
                        "message": f"unknown field; known: {', '.join(sorted(known))}"})
        for name, value in item.items():
            if name in known and not _scalar_ok(value):
                out.append({"field": f"{key}[{index}].{name}", "message": "must be a string or a finite number"})
        if len(out) >= 100:
            break
    return out


def _json_body():
    """The request body as JSON, or None when it is not JSON (too deeply nested counts as not JSON)."""
    try:
        return json.loads(request.get_data(cache=True))
    except (ValueError, RecursionError):
        return None


@bp.post("/datasets")
def create_dataset():
    """Create a measured (or imported) dataset with its levels, all-or-nothing."""
    ok, why = _authorised()
    if not ok:
        return error(401, "unauthorised", why, None, headers={"WWW-Authenticate": 'Bearer realm="levels"'})
    if request.mimetype != "application/json":
        return error(415, "unsupported_media_type", "send the body as application/json", None)
    body = _json_body()
    if not isinstance(body, dict):
        return error(400, "bad_body", "the body must be a JSON object", None)
    # 400: the body breaks the published document; 422: it follows the document, but its content is refused
    broken = schema_problem(body, {"$ref": "#/components/schemas/NewDataset"})
    bad = 400 if broken else 422
    unknown = sorted(set(body) - DATASET_KEYS)
    if unknown:
        return error(bad, "bad_body", f"unknown field {unknown[0]!r}; known: {', '.join(sorted(DATASET_KEYS))}",
                     unknown[0])
    for key in ("name", "sample", "citation", "description", "kind"):
        if key in body and body[key] is not None and not isinstance(body[key], str):
            return error(bad, "bad_body", f"{key} must be a string", key)
    name = (body.get("name") or "").strip()
    if not name or len(name) > 200:
        return error(bad, "bad_body", "name (1 to 200 characters) is required", "name")
    for key, limit, multiline in (("name", 200, False), ("sample", 200, False), ("citation", None, True),
                                  ("description", None, True)):
        problem = text_problem(body.get(key) or "", limit, multiline=multiline)
        if problem:
            return error(bad, "bad_body", f"{key} {problem}", key)
    kind = body.get("kind") or "measured"
    if kind not in ("measured", "imported"):
        return error(bad, "bad_body", "kind must be 'measured' or 'imported'", "kind")
    sample = (body.get("sample") or "").strip() or None
    if sample and len(sample) > 200:
        return error(bad, "bad_body", "sample must be at most 200 characters", "sample")
    for key, limit in (("citation", 4000), ("description", 4000)):
        if len(body.get(key) or "") > limit:
            return error(bad, "bad_body", f"{key} must be at most {limit} characters", key)
    items = body.get("levels") if body.get("levels") is not None else []
    line_items = body.get("lines") if body.get("lines") is not None else []
    for key, value in (("levels", items), ("lines", line_items)):
        if not isinstance(value, list):
            return error(bad, "bad_body", f"{key} must be a list of objects", key)
    if not items and not line_items:
        return error(bad, "bad_body", "levels must be a non-empty list of level objects (or give lines)", "levels")
    if len(items) > MAX_LEVELS_PER_POST or len(line_items) > MAX_LEVELS_PER_POST:
        return error(413, "too_large", f"at most {MAX_LEVELS_PER_POST} levels and lines per request", "levels")
    shape_problems = _shape_problems("levels", items, LEVEL_KEYS) + _shape_problems("lines", line_items, LINE_KEYS)
    if shape_problems:
        first = shape_problems[0]
        code = "invalid_levels" if first["field"].startswith("levels") else "invalid_lines"
        return error(bad, code, first["message"], first["field"], shape_problems)
    try:
        records = validate_levels(((i + 1, item) for i, item in enumerate(items)), source=API_SOURCE,
                                  default_dataset=name) if items else []
        line_records = validate_lines(((i + 1, item) for i, item in enumerate(line_items)),
                                      source=LINES_SOURCE) if line_items else []
    except InputFileError as exc:
        problems = [_problem_json(p) for p in exc.problems]
        code = "invalid_lines" if problems[0]["field"].startswith("lines") else "invalid_levels"
        return error(bad, code, problems[0]["message"], problems[0]["field"], problems)
    if broken:
        where, why = broken
        return error(400, "bad_body", f"{where or 'the body'} {why} (see /api/v1/openapi.json)", where or None)
    cat = services.catalog()
    try:
        report = cat.import_dataset(records, line_records, name=name, source=API_SOURCE, line_source=LINES_SOURCE,
                                    sample=sample, kind=kind,
                                    citation=body.get("citation") or "",
                                    description=body.get("description") or "posted through the API",
                                    method=API_METHOD)
    except AlreadyExistsError as exc:
        return error(409, "already_exists", str(exc), "name")
    except InputFileError as exc:
        problems = [_problem_json(p) for p in exc.problems]
        code = "invalid_lines" if problems[0]["field"].startswith("lines") else "invalid_levels"
        return error(bad, code, problems[0]["message"], problems[0]["field"], problems)
    except StoreError as exc:
        return error(422, "store_refused", str(exc), None)
    services.forget_species()
    info = cat.dataset_info(report.dataset_id)
    return json_response({"dataset": info, "warnings": list(report.warnings)}, 201,
                         {"Location": url_for("api.dataset", dataset_id=report.dataset_id)})
