"""The emission workbench: predicted discharge emission of one stored species.

Routes (blueprint ``workbench``):

* ``GET /emission`` - the form (every field in the query string, so a result is a
  permalink) and, when a species is given, the lamp metrics, the strongest lines,
  the warnings and the model assumptions; the figure is fetched by the page from
* ``GET /emission.json`` - the plotly figure and the same numbers as JSON (400 with
  ``{"error": {...}}`` on bad input);
* ``GET /emission/lines.<csv|json|ecsv>`` - the line list (``EMISSION_COLUMNS``)
  with the provenance header;
* ``GET /emission/spectrum.csv`` - the sampled synthetic spectrum.

The physics is :meth:`levels.catalog.Catalog.emission`; this module only parses the
form, keeps a short-lived cache of results (the page and its figure request ask for
the same computation) and arranges results for the page. The model asked for
(``model``: LTE or collisional-radiative) gives the metrics, lines and downloads;
the other model is computed for the same conditions and shown beside it (spectra
side by side, departure coefficients against level energy, metrics), with the
LTE validity line of either.
"""

from __future__ import annotations

import re
import threading
import time
from dataclasses import dataclass, field
from typing import Any

from flask import Blueprint, Response, abort, current_app, render_template, request, url_for

from levels.errors import NotFoundError, PhysicsInputError, UnitError
from levels.figures import model_comparison_figure
from levels.io.tables import format_table
from levels.service.contract import EMISSION_COLUMNS, LINE_UNITS, LineQuery
from levels.service.emission import BANDS_NM, srgb_swatch
from levels.units import density_m3, parse_quantity, temperature_k, wavelength_nm

from webui import params, security, services
from webui.downloads import LINE_ROWS_KEYS, clean, json_response, safe_filename, table_download
from webui.figures import emission_figure

bp = Blueprint("workbench", __name__)

#: points of the sampled spectrum (the figure and the CSV)
#: None: the grid the sampling rule needs (step <= FWHM/5 of the narrowest line), as the CLI uses, so equal
#: inputs give equal spectra on the page and from `levels emission` (levels.emission.spectrum_grid_points)
GRID_POINTS = None
#: lines listed on the page and in the JSON
LISTED_LINES = 25
#: seconds a computed result is reused by the figure request and the downloads
CACHE_S = 60.0
CACHE_ENTRIES = 8
#: form fields: name -> (default text, unit assumed for a bare number)
FIELDS = {
    "te": ("1eV", "K"), "ne": ("1e19m-3", "m-3"), "tgas": ("600K", "K"),
    "from": ("380nm", "nm"), "to": ("780nm", "nm"), "fwhm": ("0.05nm", "nm"), "path": ("", "m"),
    "loss": ("0", "s-1"), "pressure": ("", "Pa"),
}
MEDIA = ("air", "vacuum")
MODELS = ("lte", "cr")
MODEL_NAMES = {"lte": "LTE (Boltzmann-Saha at Te)", "cr": "collisional-radiative"}
BROADENINGS = ("thermal", "pressure")
#: foreign gases of the van der Waals estimate (levels.physics.discharge.neutral_broadening.PERTURBERS)
PERTURBERS = ("", "He", "Ne", "Ar", "Kr", "Xe", "H2", "N2", "Hg")
#: levels listed in the departure table
LISTED_LEVELS = 15
_RATE = re.compile(r"\s*([-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?)\s*(s-1|/s|s\^-1)?\s*")
_BARE_NUMBER = re.compile(r"\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*")
EMISSION_UNITS = {**LINE_UNITS, "rel_intensity": "1", "photon_share": "1"}
_BAND_NAMES = {"share_uv_c": "UV-C", "share_uv_b": "UV-B", "share_uv_a": "UV-A", "share_visible": "visible",
               "share_ir": "IR"}
#: the bands of the power shares in words (from levels.physics.colour)
BAND_TEXT = ", ".join(f"{_BAND_NAMES[k]} {lo:g}–{hi:g} nm" if hi != float("inf")
                      else f"{_BAND_NAMES[k]} above {lo:g} nm"
                      for k, (lo, hi) in BANDS_NM.items() if k in _BAND_NAMES)


@dataclass(frozen=True)
class EmissionRequest:
    """The parsed form: texts as typed (to refill the form) and values in SI-ish units (K, m-3, nm, m)."""

    texts: dict
    species: str = ""
    te_k: float = 0.0
    ne_m3: float = 0.0
    tgas_k: float = 0.0
    from_nm: float | None = None
    to_nm: float | None = None
    medium: str = "air"
    fwhm_nm: float = 0.0
    path_m: float | None = None
    model: str = "lte"
    loss_per_s: float = 0.0
    broadening: str = "thermal"
    perturber: str | None = None
    pressure_pa: float | None = None
    errors: dict = field(default_factory=dict)

    def key(self) -> tuple:
        return (self.species, self.te_k, self.ne_m3, self.tgas_k, self.from_nm, self.to_nm, self.medium,
                self.fwhm_nm, self.path_m, self.model, self.loss_per_s, self.broadening, self.perturber,
                self.pressure_pa)

    def other_model(self) -> str:
        return "cr" if self.model == "lte" else "lte"

    def args(self) -> dict:
        """The request as query-string parameters (permalinks and download links)."""
        out = {"species": self.species}
        out.update({k: v for k, v in self.texts.items() if k != "species" and v != ""})
        return out

    def describe(self) -> str:
        t = self.texts
        return (f"emission {self.species}; te {t['te']}; ne {t['ne']}; tgas {t['tgas']}; window "
                f"{t['from'] or '-'}..{t['to'] or '-'} {self.medium}; instrument FWHM {t['fwhm'] or '0'}; "
                f"path length {t['path'] or 'none (optically thin)'}; model {self.model}; metastable loss "
                f"{t['loss'] or '0'} s-1; broadening {self.broadening}"
                + (f" ({self.perturber} at {t['pressure']})" if self.perturber else ""))


def _with_unit(text: str, unit: str) -> str:
    return text.strip() + unit if _BARE_NUMBER.fullmatch(text) else text.strip()


def parse_request(args) -> EmissionRequest:
    """Read the form from a query string; problems go to ``errors`` (field -> message), never raise."""
    errors: dict[str, str] = {}
    texts: dict[str, str] = {}
    choices = {"medium": "air", "model": "lte", "broadening": "thermal", "perturber": ""}
    for name in ("species", *FIELDS, *choices):
        try:
            default = FIELDS[name][0] if name in FIELDS else choices.get(name, "")
            value = params.text_param(args, name) if name in args else default
        except params.BadParameter as exc:
            errors[name] = exc.message
            value = ""
        texts[name] = value
    values: dict[str, Any] = {}
    readers = {"te": temperature_k, "ne": density_m3, "tgas": temperature_k, "from": wavelength_nm,
               "to": wavelength_nm, "fwhm": wavelength_nm, "path": lambda t: parse_quantity(t, "length"),
               "loss": _rate, "pressure": lambda t: parse_quantity(t, "pressure")}
    for name, (_default, unit) in FIELDS.items():
        text = texts[name]
        if name in errors:
            continue
        if text == "":
            if name in ("te", "ne", "tgas"):
                errors[name] = "is required"
            values[name] = 0.0 if name in ("fwhm", "loss") else None
            continue
        try:
            values[name] = readers[name](_with_unit(text, unit))
        except (UnitError, ValueError) as exc:
            errors[name] = str(exc)
    for name in ("te", "ne", "tgas", "path", "pressure"):
        number = values.get(name)
        if number is not None and name not in errors and number <= 0:
            errors[name] = "must be positive"
    for name in ("from", "to", "fwhm", "loss"):
        number = values.get(name)
        if number is not None and name not in errors and number < 0:
            errors[name] = "must not be negative"
    if (values.get("from") is not None and values.get("to") is not None and "from" not in errors
            and "to" not in errors and values["from"] >= values["to"]):
        errors["to"] = f"the window is empty: to ({texts['to']}) must be above from ({texts['from']})"
    if texts["medium"] not in MEDIA:
        errors["medium"] = "must be air or vacuum"
    if texts["model"] not in MODELS:
        errors["model"] = "must be lte or cr"
    if texts["broadening"] not in BROADENINGS:
        errors["broadening"] = "must be thermal or pressure"
    if texts["perturber"] not in PERTURBERS:
        errors["perturber"] = "must be one of " + ", ".join(p for p in PERTURBERS if p)
    if "pressure" not in errors and "perturber" not in errors and bool(texts["perturber"]) != bool(texts["pressure"]):
        errors["pressure" if texts["perturber"] else "perturber"] = "a perturber gas and its pressure go together"
    species = texts["species"]
    if not species and "species" not in errors:
        errors["species"] = "choose a species"
    if errors:
        return EmissionRequest(texts=texts, species=species, errors=errors)
    return EmissionRequest(texts=texts, species=species, te_k=values["te"], ne_m3=values["ne"],
                           tgas_k=values["tgas"], from_nm=values["from"], to_nm=values["to"],
                           medium=texts["medium"], fwhm_nm=values["fwhm"] or 0.0, path_m=values["path"],
                           model=texts["model"], loss_per_s=values["loss"] or 0.0, broadening=texts["broadening"],
                           perturber=texts["perturber"] or None, pressure_pa=values["pressure"])


def _rate(text: str) -> float:
    """A rate in s-1 ('1e4', '1e4s-1', '1e4/s')."""
    match = _RATE.fullmatch(text)
    if not match:
        raise UnitError(f"expected a rate in s-1 such as 1e4 or 1e4s-1, got {text!r}")
    return float(match.group(1))


def species_with_rates(cat) -> list[services.SpeciesRef]:
    """Stored species (reachable by name) with at least one stored line that has an Einstein A."""
    out = []
    for ref in services.species_refs(cat):
        if not ref.row.get("lines"):
            continue
        _rows, total = cat.line_rows(LineQuery(spectrum=ref.spectrum, min_a=0.0, limit=1))
        if total:
            out.append(ref)
    return out


_CACHE_LOCK = threading.Lock()


def compute(req: EmissionRequest, model: str | None = None):
    """The Catalog's emission result for a valid request (``model`` overrides its model), reused for ``CACHE_S`` s.

    Raises
    ------
    NotFoundError
        The species is not stored.
    PhysicsInputError
        The catalog refused the conditions (no rates, no line in the window ...).
    """
    cat = services.catalog()
    ref = services.resolve_species(cat, req.species)
    store = current_app.extensions["levels"]
    model = model or req.model
    key = (ref.name,) + req.key()[1:] + (model,)
    now = time.monotonic()
    with _CACHE_LOCK:
        cache = store.setdefault("emission_cache", {})
        hit = cache.get(key)
        if hit is not None and now - hit[0] < CACHE_S:
            return ref, hit[1]
    result = cat.emission(ref.spectrum, te_k=req.te_k, ne_m3=req.ne_m3, tgas_k=req.tgas_k, from_nm=req.from_nm,
                          to_nm=req.to_nm, medium=req.medium, instrument_fwhm_nm=req.fwhm_nm,
                          path_length_m=req.path_m, grid_points=GRID_POINTS, model=model,
                          loss_rate_per_s=req.loss_per_s, broadening=req.broadening, perturber=req.perturber,
                          pressure_pa=req.pressure_pa)
    with _CACHE_LOCK:
        cache[key] = (now, result)
        for old in sorted(cache, key=lambda k: cache[k][0])[:-CACHE_ENTRIES]:
            cache.pop(old, None)
    return ref, result


def _failure(req: EmissionRequest, exc: Exception) -> dict:
    """Field -> message of a refused computation."""
    text = str(exc)
    if isinstance(exc, NotFoundError):
        return {"species": text}
    if "window" in text:
        return {"from": text}
    if ("Einstein A" in text or "lines of" in text or "oscillator strength" in text or "ionization energy" in text
            or "rates of its" in text):
        return {"species": text}
    if "loss rate" in text:
        return {"loss": text}
    if "length" in text or "depth" in text:
        return {"path": text}
    if "pressure" in text or "perturber" in text:
        return {"pressure": text}
    return {"conditions": text}


def compare(req: EmissionRequest, result) -> tuple[object | None, str | None]:
    """The other model's result for the same conditions, or None and why it could not be computed."""
    try:
        _ref, other = compute(req, req.other_model())
    except (NotFoundError, PhysicsInputError) as exc:
        return None, f"{MODEL_NAMES[req.other_model()]} model not available: {exc}"
    return other, None


def departures(result) -> list[dict]:
    """The lowest levels with their populations per ground-level population and departure coefficients."""
    rows = [p for p in result.populations if p.get("departure") is not None]
    return rows[:LISTED_LEVELS]


def swatch(metrics: dict) -> str | None:
    """``#rrggbb`` of the chromaticity, or None when the window holds no visible light."""
    x, y = metrics.get("cie_x"), metrics.get("cie_y")
    if x is None or y is None:
        return None
    return srgb_swatch(x, y)


def used_datasets(result) -> list[str]:
    """Datasets of the lines in the result (the catalog's ``conditions["datasets"]`` names every visible one)."""
    return sorted({row["dataset"] for row in result.lines if row.get("dataset")})


def provenance(req: EmissionRequest, result) -> dict:
    cat = services.catalog()
    out = cat.provenance(req.describe(), used_datasets(result), medium=req.medium,
                         model=result.conditions["model"], cutoff=result.conditions["cutoff"])
    if result.warnings and result.warnings[0].startswith("CAUTION"):
        out["caution"] = result.warnings[0]
    return out


def _listed(result) -> list[dict]:
    keys = ("lower", "upper", "air_nm", "vacuum_nm", "a_per_s", "rel_intensity", "photon_share", "multipole")
    return [{k: clean(row.get(k)) for k in keys} for row in result.lines[:LISTED_LINES]]


def _title(ref, result) -> str:
    c = result.conditions
    return f"{ref.name} at Te {c['te_k']:.0f} K, ne {c['ne_m3']:.2g} m⁻³"


# ----------------------------------------------------------------- routes

@bp.get("/emission")
def page():
    """The workbench form and, for a chosen species, its predicted emission."""
    cat = services.catalog()
    choices = species_with_rates(cat)
    asked = "species" in request.args
    req = parse_request(request.args)
    errors = dict(req.errors) if asked else {}
    ref = result = other = None
    other_note = None
    if asked and not errors:
        try:
            ref, result = compute(req)
        except (NotFoundError, PhysicsInputError) as exc:
            errors = _failure(req, exc)
        else:
            other, other_note = compare(req, result)
    security.allow_plot_styles()
    return render_template(
        "emission.html", req=req, choices=choices, errors=errors, asked=asked, ref=ref, result=result,
        lines=result.lines[:LISTED_LINES] if result else [], swatch=swatch(result.metrics) if result else None,
        caution=(result.warnings[0] if result and result.warnings and result.warnings[0].startswith("CAUTION")
                 else None),
        other_warnings=[w for w in (result.warnings if result else []) if not w.startswith("CAUTION")],
        media=MEDIA, band_text=BAND_TEXT, used=used_datasets(result) if result else [],
        downloads=download_links(req) if result else {},
        models=MODELS, model_names=MODEL_NAMES, broadenings=BROADENINGS, perturbers=PERTURBERS,
        other=other, other_note=other_note, levels_rows=departures(result) if result else [],
        other_levels={p["label"]: p for p in other.populations} if other is not None else {},
    ), 400 if errors else 200


def _json_error(errors: dict) -> Response:
    name, message = next(iter(errors.items()))
    return json_response({"error": {"code": "bad_parameter", "message": message, "field": name,
                                    "fields": errors}}, 400)


@bp.get("/emission.json")
def figure_json():
    """The spectrum figure, metrics, strongest lines, warnings and conditions as JSON."""
    req = parse_request(request.args)
    if req.errors:
        return _json_error(req.errors)
    try:
        ref, result = compute(req)
    except (NotFoundError, PhysicsInputError) as exc:
        return _json_error(_failure(req, exc))
    metrics = {k: clean(v) for k, v in result.metrics.items()}
    other, other_note = compare(req, result)
    primary = emission_figure(result.grid_nm, result.spectrum, result.lines, medium=req.medium,
                              title=_title(ref, result), quantity=result.spectrum_quantity,
                              unit=result.spectrum_unit)
    second = (emission_figure(other.grid_nm, other.spectrum, other.lines, medium=req.medium, title=_title(ref, other),
                              quantity=other.spectrum_quantity, unit=other.spectrum_unit)
              if other is not None else None)
    populations = {req.model: result.populations}
    if other is not None:
        populations[req.other_model()] = other.populations
    return json_response({
        "spectrum": ref.name, "medium": req.medium, "request": req.args(),
        "model": req.model, "validity": {k: clean(v) for k, v in result.validity.items()},
        "populations": [{k: clean(v) for k, v in p.items()} for p in result.populations],
        "comparison": {
            req.model: {"metrics": metrics, "validity": {k: clean(v) for k, v in result.validity.items()}},
            req.other_model(): ({"metrics": {k: clean(v) for k, v in other.metrics.items()},
                                 "validity": {k: clean(v) for k, v in other.validity.items()}}
                                if other is not None else {"error": other_note}),
        },
        "figure": model_comparison_figure(primary, req.model, second, req.other_model(), populations,
                                          medium=req.medium, other_note=other_note),
        "metrics": metrics, "swatch": swatch(result.metrics),
        "warnings": result.warnings, "caution": bool(result.warnings and result.warnings[0].startswith("CAUTION")),
        "conditions": {k: clean(v) for k, v in result.conditions.items()},
        "lines_total": len(result.lines), "strongest": _listed(result),
    })


def _download_result():
    req = parse_request(request.args)
    if req.errors:
        abort(400, description="; ".join(f"{k}: {v}" for k, v in req.errors.items()))
    try:
        ref, result = compute(req)
    except (NotFoundError, PhysicsInputError) as exc:
        abort(400, description=str(exc))
    return req, ref, result


@bp.get("/emission/lines.<any(csv, json, ecsv):fmt>")
def lines_download(fmt: str):
    """Every line of the result (in the window, with a known A) with the provenance header."""
    req, ref, result = _download_result()
    return table_download(result.lines, EMISSION_COLUMNS, fmt, provenance(req, result),
                          f"{ref.url_name}-emission-lines", EMISSION_UNITS, rows_key=LINE_ROWS_KEYS)


@bp.get("/emission/spectrum.csv")
def spectrum_download():
    """The sampled synthetic spectrum as CSV with the provenance header."""
    req, ref, result = _download_result()
    column = result.spectrum_quantity.replace(" ", "_")  # emission_coefficient or spectral_radiance
    rows = [{"wavelength_nm": float(x), column: float(y)} for x, y in zip(result.grid_nm, result.spectrum)]
    head = {**provenance(req, result),
            "units": f"wavelength_nm in nm ({req.medium}); {column} in {result.spectrum_unit}"}
    text = format_table(rows, ("wavelength_nm", column), "csv", head)
    response = Response(text, mimetype="text/csv")
    response.charset = "utf-8"
    response.headers["Content-Disposition"] = (
        f'attachment; filename="{safe_filename(ref.url_name + "-emission-spectrum")}.csv"')
    return response


def download_links(req: EmissionRequest) -> dict:
    """URLs of the downloads of a request (for the template)."""
    args = req.args()
    return {fmt: url_for("workbench.lines_download", fmt=fmt, **args) for fmt in ("csv", "json", "ecsv")} | {
        "spectrum": url_for("workbench.spectrum_download", **args)}
