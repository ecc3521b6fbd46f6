"""Reading pages: species catalogue, species page, level diagram, line finder, datasets, downloads.

Every filter is a query-string parameter (pages are permalinks); bad values give
a 400 page that says which field is wrong, never a server error.
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from flask import Blueprint, abort, current_app, render_template, request, url_for

from levels.errors import NotFoundError, PhysicsInputError
from levels.service.contract import (
    LEVEL_COLUMNS,
    LEVEL_UNITS,
    LINE_LIST_COLUMNS,
    LINE_UNITS,
    SPECIES_COLUMNS,
    LineQuery,
    LineRow,
)
from levels.service.line_selection import MULTIPLET_EXTRA_COLUMNS, MULTIPLETS_NOTE, merge_multiplets
from levels.service.lines import add_ritz_columns
from levels.service.rates import relative_uncertainty_in_note

from webui import params, security, services
from webui.downloads import LINE_ROWS_KEYS, GzipPrefix, json_response, spliced_json_response, table_download
from webui.figures import (
    DIAGRAM_AXES,
    LineArrays,
    diagram_json_rest,
    diagram_json_start,
    level_layer,
    level_rows_of,
    line_hover,
)
from webui.params import BadParameter, LevelFilter, LineFilter, Page

bp = Blueprint("browse", __name__)

FORMAT_CONVERTER = "any(csv, json, ecsv)"
SPECIES_UNITS = {"ionization_cm1": "cm-1", "ionization_unc_cm1": "cm-1"}
#: how many of the strongest diagram lines are listed as text beside the figure
LISTED_LINES = 12
#: what the list beside the diagram tells of each line
LISTED_KEYS = ("id", "lower", "upper", "vacuum_nm", "air_nm", "a_per_s", "multipole")


def listed_rows(rows: Sequence[Mapping[str, Any]]) -> list[dict[str, Any]]:
    """The side list's keys (:data:`LISTED_KEYS`) of the first :data:`LISTED_LINES` rows (None where a row has no
    such key: an engine line has no stored id)."""
    return [{k: row.get(k) for k in LISTED_KEYS} for row in rows[:LISTED_LINES]]


def _per_page() -> int:
    return int(current_app.config["LEVELS_PAGE_SIZE"])


def _species(spectrum: str) -> services.SpeciesRef:
    try:
        return services.resolve_species(services.catalog(), spectrum, request.args.get("mass_number"))
    except NotFoundError as exc:
        abort(404, description=str(exc))


# ----------------------------------------------------------------- catalogue

@bp.get("/")
def index():
    """The species catalogue with a search box."""
    cat = services.catalog()
    refs = services.species_refs(cat)
    errors = {}
    try:
        query = params.text_param(request.args, "q")
    except BadParameter as exc:
        errors[exc.field] = exc.message
        query = ""
    shown = services.search_species(refs, query)
    return render_template("catalogue.html", refs=shown, total=len(refs), query=query, errors=errors,
                           ionization_ev=services.ionization_ev), 400 if errors else 200


@bp.get(f"/species.<{FORMAT_CONVERTER}:fmt>")
def species_download(fmt: str):
    """The species table as CSV, JSON or ECSV."""
    cat = services.catalog()
    rows = cat.species_rows()
    used = sorted({name for r in rows for name in r["dataset_names"]})
    return table_download(rows, SPECIES_COLUMNS, fmt, cat.provenance("species", used), "species", SPECIES_UNITS)


# ----------------------------------------------------------------- species page

def _level_state(ref: services.SpeciesRef, errors: dict):
    cat = services.catalog()
    try:
        flt = params.level_filter(request.args)
        pg = params.page(request.args, "", _per_page())
        rows, total = services.level_page(cat, ref, flt, pg)
    except BadParameter as exc:
        errors[exc.field] = exc.message
        flt, pg, rows, total = LevelFilter(), Page(1, _per_page()), [], 0
    return flt, pg, rows, total


def _line_state(ref: services.SpeciesRef | None, errors: dict, prefix: str = "l"):
    cat = services.catalog()
    try:
        flt = params.line_filter(request.args)
        pg = params.page(request.args, prefix, _per_page())
        if flt.selects:  # selections by label or name: filter the whole window, then page (as the JSON API)
            every = _selected(services.all_lines(cat, ref, flt), flt)
            if flt.multiplets:  # components of one configuration and term pair summed (levels lines --multiplets)
                formula = services.air_formula(cat, sorted({r["dataset"] for r in every}))
                every = merge_multiplets(every, medium=flt.medium, air_formula=formula)
            rows, total = every[pg.offset:pg.offset + pg.per], len(every)
        else:
            rows, total = services.line_page(cat, ref, flt, pg)
        if not flt.multiplets:
            services.add_ritz_columns(ref, rows, flt.medium)
    except BadParameter as exc:
        errors[exc.field] = exc.message
        flt, pg, rows, total = LineFilter(), Page(1, _per_page()), [], 0
    return flt, pg, rows, total


def _selected(rows: list[LineRow], flt: LineFilter) -> list[LineRow]:
    """Rows kept by the filter's lower-level, series and line-name selections (:func:`filter_lines`)."""
    from levels.errors import LevelsError
    from levels.service.line_selection import filter_lines

    try:
        return filter_lines(rows, lower=flt.lower, series=flt.series, name=flt.line_name)
    except LevelsError as exc:
        field = "line_name" if "line name" in str(exc) else ("series" if flt.series else "lower")
        raise BadParameter(field, str(exc)) from None


@bp.get("/species/<spectrum>")
def species(spectrum: str):
    """A species: facts, the level table and the line table, each filtered and paged."""
    ref = _species(spectrum)
    errors: dict[str, str] = {}
    lflt, lpg, level_rows, level_total = _level_state(ref, errors)
    nflt, npg, line_rows, line_total = _line_state(ref, errors)
    return render_template(
        "species.html", ref=ref, errors=errors, ionization_ev=services.ionization_ev(ref.row),
        level_filter=lflt, level_page=lpg, levels=level_rows, level_total=level_total,
        line_filter=nflt, line_page=npg, lines=line_rows, line_total=line_total,
        multipoles=params.MULTIPOLE_CODES, per_choices=params.PER_PAGE_CHOICES,
    ), 400 if errors else 200


@bp.get(f"/species/<spectrum>/levels.<{FORMAT_CONVERTER}:fmt>")
def levels_download(spectrum: str, fmt: str):
    """The species' filtered level table (all pages) as CSV, JSON or ECSV."""
    ref = _species(spectrum)
    cat = services.catalog()
    try:
        flt = params.level_filter(request.args)
        rows = services.filtered_levels(cat, ref, flt)
    except BadParameter as exc:
        abort(400, description=str(exc))
    used = sorted({r["dataset"] for r in rows})
    query = " ".join([f"levels {ref.name}"] + [f"{k}={v}" for k, v in flt.args().items()])
    return table_download(rows, LEVEL_COLUMNS, fmt, cat.provenance(query, used),
                          f"{ref.url_name}-levels", LEVEL_UNITS)


def _line_download(ref: services.SpeciesRef | None, fmt: str, stem: str):
    cat = services.catalog()
    try:
        flt = params.line_filter(request.args)
    except BadParameter as exc:
        abort(400, description=str(exc))
    try:
        selected = _selected(services.all_lines(cat, ref, flt), flt) if flt.selects else None
    except BadParameter as exc:
        abort(400, description=str(exc))
    rows = selected if selected is not None else services.all_lines(cat, ref, flt)
    columns: tuple[str, ...] = LINE_LIST_COLUMNS
    used = sorted({r["dataset"] for r in rows})  # the datasets behind the rows (before any sum)
    if flt.multiplets:  # as on the page and in levels lines --multiplets
        rows = merge_multiplets(rows, medium=flt.medium, air_formula=services.air_formula(cat, used))
        columns = LINE_LIST_COLUMNS + MULTIPLET_EXTRA_COLUMNS
    else:
        rows = services.add_ritz_columns(ref, rows, flt.medium)
    provenance = cat.provenance(flt.query(services.query_spectrum(ref)).describe(), used,
                                medium=flt.medium, air_formula=services.air_formula(cat, used))
    if flt.selects:
        provenance["selection"] = (f"lower {flt.lower or 'any'}; upper series {flt.series or 'any'}; "
                                   f"name {flt.line_name or 'any'}: {len(rows)} lines")
    if flt.multiplets:
        provenance["multiplets"] = MULTIPLETS_NOTE
    return table_download(rows, columns, fmt, provenance, stem, LINE_UNITS, rows_key=LINE_ROWS_KEYS)


@bp.get(f"/species/<spectrum>/lines.<{FORMAT_CONVERTER}:fmt>")
def lines_download(spectrum: str, fmt: str):
    """The species' filtered line list (all pages) as CSV, JSON or ECSV."""
    ref = _species(spectrum)
    return _line_download(ref, fmt, f"{ref.url_name}-lines")


# ----------------------------------------------------------------- one line

def _line(spectrum: str, line_id: int) -> tuple[services.SpeciesRef, dict]:
    ref = _species(spectrum)
    if line_id > params.MAX_ID:
        abort(404, description=f"no line {line_id} of {ref.name} in the store")
    try:
        near = params.number(request.args, "nm", minimum=0.0)
    except BadParameter:
        near = None
    try:
        found = services.find_line(services.catalog(), ref, line_id, near)
    except NotFoundError as exc:
        abort(404, description=str(exc))
    row: dict[str, Any] = dict(found)
    # observed and Ritz side by side: the Ritz value in both media, observed - Ritz in the observed medium
    in_vacuum = add_ritz_columns([found.copy()], "vacuum")[0]
    in_air = add_ritz_columns([found.copy()], "air")[0]
    row["ritz_vacuum_nm"] = in_vacuum["ritz_nm"]
    row["line_name"] = in_vacuum["line_name"]
    row["ritz_air_nm"] = in_air["ritz_nm"] if row.get("air_nm") is not None else None
    row["obs_minus_ritz_nm"] = (in_air if row.get("medium") == "air" else in_vacuum)["obs_minus_ritz_nm"]
    return ref, row


@bp.get("/species/<spectrum>/lines/<int:line_id>")
def line_page(spectrum: str, line_id: int):
    """The full record of one line."""
    ref, row = _line(spectrum, line_id)
    # a computed rate's stated relative uncertainty (in its note) carries over to A, f and S (f and S scale as A)
    rel = relative_uncertainty_in_note(row.get("note"))
    for key in ("a_per_s", "f_abs", "line_strength_au"):
        row[f"{key}_unc"] = rel * row[key] if rel is not None and row.get(key) is not None else None
    return render_template("line.html", ref=ref, line=row)


@bp.get("/species/<spectrum>/lines/<int:line_id>.json")
def line_json(spectrum: str, line_id: int):
    """The full record of one line as JSON (the diagram fetches it on click)."""
    ref, row = _line(spectrum, line_id)
    cat = services.catalog()
    provenance = cat.provenance(f"line {line_id} of {ref.name}", [row["dataset"]])
    return json_response({"provenance": provenance, "line": row,
                          "page": url_for("browse.line_page", line_id=line_id, nm=row["vacuum_nm"],
                                          **ref.url_args())})


# ----------------------------------------------------------------- diagram

#: multipoles the line engine builds from the levels
ENGINE_MULTIPOLES = ("E1", "M1", "E2")


def _diagram_options():
    unit = params.choice(request.args, "unit", params.ENERGY_UNITS, "cm-1")
    max_lines = params.integer(request.args, "max_lines", int(current_app.config["LEVELS_DIAGRAM_MAX_LINES"]),
                               minimum=1, maximum=params.DIAGRAM_MAX_LINES_CAP)
    return unit, max_lines


def _diagram_axis() -> str:
    """The energy axis asked for (``axis``): linear, limit (log of the distance below the limit) or broken."""
    return params.choice(request.args, "axis", DIAGRAM_AXES, "linear")


def panel_title(listed: Sequence[dict]) -> str:
    """Title of the list beside the diagram, true to the rates of the lines it lists."""
    known = sum(1 for ln in listed if ln.get("a_per_s") is not None)
    if not listed:
        return "Lines drawn"
    if known == 0:
        return "Lines drawn, no rates known"
    if known < len(listed):
        return f"Strongest lines drawn (by A; {len(listed) - known} without a known A)"
    return "Strongest lines drawn (by A)"


def _engine_flag() -> bool:
    """Whether the diagram draws the lines implied by the levels (``engine=1``) instead of the stored ones."""
    return params.choice(request.args, "engine", ("0", "1"), "0") == "1"


def _engine_multipoles(flt: LineFilter) -> tuple[str, ...]:
    """The multipoles asked of the engine: the filter's E1/M1/E2 (E1 when the filter names none)."""
    if not flt.multipoles:
        return ("E1",)
    chosen = tuple(m for m in flt.multipoles if m in ENGINE_MULTIPOLES)
    if not chosen:
        raise BadParameter("multipole", "the lines implied by the levels are E1, M1 or E2; pick at least one of them")
    return chosen


def engine_lines(cat, ref: services.SpeciesRef, flt: LineFilter, limit: int) -> tuple[list[LineRow], int, int]:
    """The ``limit`` strongest lines the selection rules allow between the species' levels (engine rows,
    without a stored id), how many match in all, and how many of those have no known A."""
    query = LineQuery(spectrum=ref.spectrum, from_nm=flt.from_nm, to_nm=flt.to_nm, medium=flt.medium,
                      min_a=flt.min_a, order="a", limit=limit)
    rows, info = cat.species_lines(query, multipoles=_engine_multipoles(flt))
    for row in rows:
        row["id"] = None
    return rows, info["total"], info["without_rates"]


@bp.get("/species/<spectrum>/diagram")
def diagram(spectrum: str):
    """The level diagram page (the figure itself is fetched from ``diagram.json``)."""
    ref = _species(spectrum)
    errors: dict[str, str] = {}
    flt, unit, max_lines = LineFilter(), "cm-1", int(current_app.config["LEVELS_DIAGRAM_MAX_LINES"])
    engine = False
    axis = "linear"
    try:
        flt = params.line_filter(request.args)
        unit, max_lines = _diagram_options()
        axis = _diagram_axis()
        engine = _engine_flag()
        if engine:
            _engine_multipoles(flt)
    except BadParameter as exc:
        errors[exc.field] = exc.message
    security.allow_plot_styles()
    return render_template("diagram.html", ref=ref, errors=errors, line_filter=flt, unit=unit, engine=engine,
                           max_lines=max_lines, multipoles=params.MULTIPOLE_CODES,
                           units=params.ENERGY_UNITS, axis=axis, axes=DIAGRAM_AXES), 400 if errors else 200


@bp.get("/species/<spectrum>/diagram.json")
def diagram_json(spectrum: str):
    """The diagram figure with at most ``max_lines`` lines, strongest A first, and what was left out.

    The species' levels (and their part of the figure, serialised once) and its stored
    lines (as arrays) are kept until the store changes; so is each figure drawn from
    stored lines, serialised and gzip-compressed, under the lines it draws: a request
    whose filter draws the same lines only writes its own head (counts, filter, the list
    beside the figure). A weak ETag (store revision and query) answers a repeated request
    with 304 Not Modified.
    """
    try:
        ref = services.resolve_species(services.catalog(), spectrum, request.args.get("mass_number"))
    except NotFoundError as exc:
        return json_response({"error": {"code": "not_found", "message": str(exc), "field": "spectrum"}}, 404)
    tag = services.response_tag(current_app.config["LEVELS_DIAGRAM_MAX_LINES"])
    if request.if_none_match.contains_weak(tag):
        return services.not_modified(tag)
    cat = services.catalog()
    without_rates = None

    def layer_of(energy_unit: str, axis: str = "linear"):
        return services.cached(("diagram-levels", ref.spectrum, energy_unit, axis),
                               lambda: level_layer(services.species_levels(ref), energy_unit, axis,
                                                   ref.row["ionization_cm1"]))

    def start_of(energy_unit: str, axis: str) -> tuple[str, GzipPrefix]:
        # the figure's start (the level traces) is the same for every filter until the store changes:
        # written, and its gzip encoding begun, once
        def start():
            text = '{"figure":' + diagram_json_start(layer_of(energy_unit, axis))
            return text, GzipPrefix(text.encode("utf-8"))

        return services.cached(("diagram-start", ref.spectrum, energy_unit, axis), start)

    def rest_of(arrays: LineArrays, hover_json=None, level_index=None) -> tuple[str, int]:
        return diagram_json_rest(layer_of(unit, axis), arrays, medium=flt.medium,
                                 ionization_cm1=ref.row["ionization_cm1"], title=f"{ref.name} level diagram",
                                 hover_json=hover_json, level_index=level_index)

    def stored_figure(stored, index: np.ndarray) -> tuple[str, GzipPrefix, int]:
        # each line's hover text (JSON-encoded), written when a figure first draws the line and kept per
        # store revision (None: not yet written), and every line's level rows, found once per store revision
        every = services.cached(("diagram-hover", ref.spectrum, flt.medium),
                                lambda: np.full(len(stored), None, dtype=object))
        missing = index[np.equal(every[index], np.array(None, dtype=object))]  # None as numpy's 0-d object array
        if len(missing):
            every[missing] = [json.dumps(text, ensure_ascii=False) for text in
                              line_hover(LineArrays.from_columns(stored.columns, missing), flt.medium, ref.name)]
        rows_of = services.cached(("diagram-level-rows", ref.spectrum), lambda: (
            level_rows_of(layer_of("cm-1"), stored.columns["lower"]),
            level_rows_of(layer_of("cm-1"), stored.columns["upper"])))
        rest, unplaced = rest_of(LineArrays.from_columns(stored.columns, index), hover_json=every[index],
                                 level_index=(rows_of[0][index], rows_of[1][index]))
        text = start_of(unit, axis)[0] + rest
        return text, GzipPrefix(text.encode("utf-8")), unplaced

    try:
        flt = params.line_filter(request.args)
        unit, max_lines = _diagram_options()
        axis = _diagram_axis()
        engine = _engine_flag()
        figure = None
        if engine:
            rows, total, without_rates = engine_lines(cat, ref, flt, max_lines)
            arrays = LineArrays.from_rows(rows)
            listed = listed_rows(rows)
        else:
            stored, index, total = services.diagram_lines(ref, flt, max_lines)
            if stored is None:  # lines not kept in memory (a very large species): ask the store
                rows, total = services.strongest_lines(cat, ref, flt, max_lines)
                arrays = LineArrays.from_rows(rows)
                listed = listed_rows(rows)
            else:
                listed = stored.rows(index[:LISTED_LINES], LISTED_KEYS)
                shown = len(index)
                key = ("diagram-figure", ref.spectrum, unit, axis, flt.medium, services.digest(index))
                figure = services.cached_figure(key, lambda: stored_figure(stored, index))
    except BadParameter as exc:
        return json_response({"error": {"code": "bad_parameter", "message": exc.message, "field": exc.field}}, 400)
    except PhysicsInputError as exc:
        return json_response({"error": {"code": "bad_parameter", "message": str(exc), "field": None}}, 400)
    if figure is None:
        shown = len(arrays)
        rest, unplaced = rest_of(arrays)
        prefix, packed = start_of(unit, axis)
    else:
        prefix, packed, unplaced = figure
        rest = ""
    layer = layer_of(unit, axis)
    head = json.dumps({
        "spectrum": ref.name, "unit": unit, "medium": flt.medium, "filter": flt.args(),
        "levels": layer.count, "columns": len(layer.keys),
        "lines_total": total, "lines_shown": shown, "lines_omitted": total - shown,
        "lines_unplaced": unplaced, "max_lines": max_lines,
        "engine": engine, "lines_without_rates": without_rates,
        "ionization_cm1": ref.row["ionization_cm1"],
        "record_base": url_for("browse.species", spectrum=ref.url_name) + "/lines/",
        "strongest": listed, "panel_title": panel_title(listed),
        "axis": layer.axis["axis"], "axis_note": layer.axis["note"],
    }, ensure_ascii=False, allow_nan=False, separators=(",", ":"))
    # the figure first, then this request's head
    response = spliced_json_response(prefix, rest + "," + head[1:], gzip_prefix=packed)
    return services.tagged(response, tag)


# ----------------------------------------------------------------- line finder

@bp.get("/lines")
def finder():
    """Lines of every species (or one) in a wavelength window, with the same filters."""
    cat = services.catalog()
    errors: dict[str, str] = {}
    ref = None
    species_text = ""
    try:
        species_text = params.text_param(request.args, "species")
    except BadParameter as exc:
        errors[exc.field] = exc.message
    if species_text:
        try:
            ref = services.resolve_species(cat, species_text)
        except NotFoundError as exc:
            errors["species"] = str(exc)
    rows, total, flt, pg = [], 0, LineFilter(), Page(1, _per_page())
    if not errors:
        flt, pg, rows, total = _line_state(ref, errors, prefix="")
    return render_template("finder.html", errors=errors, species_text=species_text, ref=ref, line_filter=flt,
                           line_page=pg, lines=rows, line_total=total, multipoles=params.MULTIPOLE_CODES,
                           per_choices=params.PER_PAGE_CHOICES), 400 if errors else 200


@bp.get(f"/lines.<{FORMAT_CONVERTER}:fmt>")
def finder_download(fmt: str):
    """The line finder's result (all pages) as CSV, JSON or ECSV."""
    ref = None
    try:
        species_text = params.text_param(request.args, "species")
    except BadParameter as exc:
        abort(400, description=str(exc))
    if species_text:
        try:
            ref = services.resolve_species(services.catalog(), species_text)
        except NotFoundError as exc:
            abort(400, description=str(exc))
    return _line_download(ref, fmt, "lines" if ref is None else f"{ref.url_name}-lines")


# ----------------------------------------------------------------- datasets

@bp.get("/datasets")
def datasets():
    """Every dataset in precedence order."""
    return render_template("datasets.html", datasets=services.catalog().dataset_rows(include_retracted=True))


@bp.get("/datasets/<int:dataset_id>")
def dataset(dataset_id: int):
    """One dataset's record."""
    if dataset_id > params.MAX_ID:
        abort(404, description=f"no dataset {dataset_id} in the store")
    try:
        info = services.catalog().dataset_info(dataset_id)
    except NotFoundError as exc:
        abort(404, description=str(exc))
    return render_template("dataset.html", ds=info)
