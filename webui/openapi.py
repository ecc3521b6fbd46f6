"""The OpenAPI 3 document of the JSON API (``/api/v1/openapi.json``).

Written by hand next to the routes of :mod:`webui.api`; a test checks that the
two list the same operations, and a schemathesis run checks the responses
against these schemas.
"""

from __future__ import annotations

import math
import re

from levels import __version__
from levels.service.contract import LEVEL_COLUMNS, LINE_LIST_COLUMNS, MULTIPOLE_CODES, SPECIES_COLUMNS

from webui.params import API_DEFAULT_LIMIT, API_MAX_LIMIT, MAX_OFFSET


def _nullable(kind: str, **extra) -> dict:
    return {"type": kind, "nullable": True, **extra}


_STR = {"type": "string"}
_INT = {"type": "integer"}
_NUM = {"type": "number"}

SPECIES_ROW = {
    "type": "object",
    "additionalProperties": False,
    "required": list(SPECIES_COLUMNS),
    "properties": {
        "spectrum": _STR, "z": _INT, "charge": _INT, "mass_number": _INT, "levels": _INT, "lines": _INT,
        "ionization_cm1": _nullable("number", description="cm-1"),
        "ionization_unc_cm1": _nullable("number", description="cm-1"),
        "datasets": {"type": "string", "description": "dataset names joined by '; '"},
    },
}
LEVEL_ROW = {
    "type": "object",
    "additionalProperties": False,
    "required": list(LEVEL_COLUMNS),
    "properties": {
        "spectrum": _STR, "label": _STR, "configuration": _STR, "term": _STR,
        "j": {"type": "string", "example": "3/2", "description": "empty when J is not resolved"},
        "parity": {"type": "integer", "enum": [1, -1]},
        "energy_cm1": {"type": "number", "description": "cm-1 above the ground level"},
        "unc_cm1": _nullable("number", description="cm-1"), "g": _INT,
        "n": _nullable("integer"), "l": _nullable("integer"),
        "lifetime_s": _nullable("number", description="s"), "lande_g": _nullable("number"), "dataset": _STR,
    },
}
LINE_ROW = {
    "type": "object",
    "additionalProperties": False,
    "required": list(LINE_LIST_COLUMNS),
    "properties": {
        "spectrum": _STR, "lower": _STR, "upper": _STR,
        "lower_cm1": {"type": "number", "description": "cm-1"}, "upper_cm1": {"type": "number", "description": "cm-1"},
        "wavenumber_cm1": {"type": "number", "description": "cm-1"},
        "vacuum_nm": {"type": "number", "description": "nm"},
        "air_nm": _nullable("number", description="nm; empty below 200 nm"),
        "multipole": _STR, "a_per_s": _nullable("number", description="s-1"), "f_abs": _nullable("number"),
        "line_strength_au": _nullable("number", description="atomic units"), "g_lower": _INT, "g_upper": _INT,
        "unc_nm": _nullable("number", description="nm"), "dataset": _STR,
        "obs_nm": _nullable("number", description="nm, in the asked medium; observed wavelength of a measured line"),
        "ritz_nm": _nullable("number", description="nm, in the asked medium; Ritz wavelength from the two levels"),
        "obs_minus_ritz_nm": _nullable("number", description="nm; obs_nm - ritz_nm"),
        "line_name": _nullable("string", description="customary hydrogen line name (Hα, Lyβ); null otherwise"),
        # the columns of a multiplet list (multiplets=true)
        "gf": _nullable("number", description="sum of g_l f over the components (multiplets=true)"),
        "members": _nullable("integer", description="number of components summed (multiplets=true)"),
        "weighting": _nullable("string", description="how the wavenumber was averaged: gf, gA or none "
                                                     "(multiplets=true)"),
        # the position column the 'unit' parameter adds (one of these, after the others)
        "wavelength_nm": _nullable("number", description="nm, in the medium (unit=nm)"),
        "wavelength_angstrom": _nullable("number", description="Å, in the medium (unit=Å)"),
        "wavelength_um": _nullable("number", description="µm, in the medium (unit=µm)"),
        "photon_energy_ev": _nullable("number", description="eV (unit=eV)"),
        "photon_energy_kev": _nullable("number", description="keV (unit=keV)"),
        "frequency_hz": _nullable("number", description="Hz (unit=Hz)"),
    },
}
PROVENANCE = {"type": "object", "additionalProperties": {"type": "string"},
              "required": ["tool", "store", "datasets", "query"]}
DATASET = {
    "type": "object",
    "additionalProperties": False,
    "required": ["id", "name", "kind", "method", "method_version", "citation", "author", "description",
                 "options", "created_at", "sample", "retracted", "levels", "lines"],
    "properties": {
        "id": _INT, "name": _STR, "kind": {"type": "string", "enum": ["computed", "measured", "imported"]},
        "method": _STR, "method_version": _STR, "citation": _STR, "author": _STR, "description": _STR,
        "options": {"type": "object"}, "created_at": {"type": "string"}, "sample": _nullable("string"),
        "retracted": {"type": "boolean"}, "levels": _INT, "lines": _INT,
    },
}
ERROR = {
    "type": "object",
    "additionalProperties": False,
    "required": ["error"],
    "properties": {"error": {
        "type": "object",
        "additionalProperties": False,
        "required": ["code", "message", "field"],
        "properties": {
            "code": _STR, "message": _STR, "field": _nullable("string"),
            "problems": {"type": "array", "items": {
                "type": "object", "additionalProperties": False, "required": ["field", "message"],
                "properties": {"field": _nullable("string"), "message": _STR}}},
        },
    }},
}
#: characters no stored text may hold (levels.io.limits): C0 and C1 controls, DEL, bidi overrides and isolates;
#: free text (citations, descriptions, notes) may hold tabs and line ends
_CONTROLS = "\\x00-\\x1f\\x7f-\\x9f\\u202a-\\u202e\\u2066-\\u2069"
_CONTROLS_FREE = "\\x00-\\x08\\x0b\\x0c\\x0e-\\x1f\\x7f-\\x9f\\u202a-\\u202e\\u2066-\\u2069"
#: one line of text without control characters
PLAIN_PATTERN = f"^[^{_CONTROLS}]*$"
#: free text: tabs and line ends allowed
FREE_PATTERN = f"^[^{_CONTROLS_FREE}]*$"
#: a dataset name as the store takes it (levels.store.queries.dataset_name_problem): no '#', no line breaks or
#: control characters, no white space at either end, not starting with '=', '+', '-' or '@'
_NAME_BODY = f"#{_CONTROLS}\\u2028\\u2029"
NAME_PATTERN = f"^[^\\s=+\\-@{_NAME_BODY}]([^{_NAME_BODY}]*[^\\s{_NAME_BODY}])?$"


def _anycase(word: str) -> str:
    """A pattern of ``word`` in any case, white space as any run of it (JSON Schema patterns have no flags)."""
    return "".join(f"[{c.upper()}{c.lower()}]" if c.isalpha() else ("\\s+" if c == " " else c) for c in word)


#: names of the tool's computed datasets (levels.store.queries.RESERVED_NAME_PATTERN, which also folds NFKC
#: look-alikes: those pass the document and are refused on import with 422)
RESERVED_NAME_PATTERN = ("^(" + "|".join(_anycase(w) for w in ("derived lines", "series limit", "hydrogenic", "rates"))
                         + ")\\b.*\\b[Aa]\\s*=\\s*[0-9]+")
#: largest stored whole number (PostgreSQL INTEGER)
INT_MAX = 2**31 - 1


def _number(minimum: float | None = None, maximum: float | None = None, *, exclusive_minimum: bool = False,
            exclusive_maximum: bool = False, description: str | None = None) -> dict:
    """A JSON number within bounds, or null (numbers written as text are refused: this API is typed)."""
    out: dict = {"type": "number", "nullable": True}
    if minimum is not None:
        out.update(minimum=minimum, exclusiveMinimum=exclusive_minimum)
    if maximum is not None:
        out.update(maximum=maximum, exclusiveMaximum=exclusive_maximum)
    if description:
        out["description"] = description
    return out


def _whole(minimum: int) -> dict:
    """A whole number from ``minimum`` to the largest stored integer, or null."""
    return {"type": "integer", "minimum": minimum, "maximum": INT_MAX, "nullable": True}


def _text(max_length: int, *, pattern: str = PLAIN_PATTERN, **extra) -> dict:
    return {"type": "string", "maxLength": max_length, "pattern": pattern, **extra}


_PARITY_WORDS = ["+1", "-1", "1", "+", "-", "even", "odd", "e", "o", "°"]
NEW_LEVEL = {
    "type": "object",
    "additionalProperties": False,
    "description": "one level; the fields follow the level columns. Rules across fields (the configuration's "
                   "electrons against the spectrum, the term's parity against the configuration, J against the "
                   "term, g = 2J + 1, n and l against the outer subshell, one state per label) are checked on "
                   "import and answered with 422.",
    "required": ["spectrum", "configuration", "j", "energy_cm1"],
    "properties": {
        "spectrum": _text(40, minLength=1, example="Li I"),
        "label": _text(200, nullable=True),
        "configuration": _text(200, minLength=1, example="1s2.2p"),
        "term": _text(32, nullable=True, example="2P°"),
        "j": {"anyOf": [{"type": "number", "minimum": 0, "maximum": 1e8, "multipleOf": 0.5},
                        {"type": "string", "pattern": r"^[0-9]{1,8}(/2|\.5|\.0)?$"}],
              "description": "J: 3/2, 1.5 or 2", "example": "3/2"},
        "parity": {"anyOf": [{"type": "integer", "enum": [1, -1]}, {"type": "string", "enum": _PARITY_WORDS}],
                   "nullable": True, "description": "taken from the configuration; when given it must agree"},
        "energy_cm1": {**_number(0, 1e11), "nullable": False, "description": "cm-1 above the ground level"},
        "unc_cm1": _number(0, 1e11, description="cm-1"),
        "g": _whole(1), "n": _whole(1), "l": _whole(0),
        "lifetime_s": _number(0, 1e300, exclusive_minimum=True, exclusive_maximum=True, description="s"),
        "lande_g": _number(-1e3, 1e3),
    },
}
NEW_LINE = {
    "type": "object",
    "additionalProperties": False,
    "description": "one measured line; lower and upper name levels posted with it or stored for the species. "
                   "Labels that name no level, a wavelength off the Ritz value of its levels or a transition "
                   "the multipole forbids are refused on import with 422.",
    "required": ["spectrum", "lower", "upper", "wavelength_nm", "medium", "unc_nm"],
    "properties": {
        "spectrum": _text(32, minLength=1, example="Li I"),
        "lower": _text(200, minLength=1, description="label of a stored or posted level"),
        "upper": _text(200, minLength=1),
        "wavelength_nm": {**_number(1e-3, 1e9), "nullable": False,
                          "description": "nm, in the given medium (air only above 200 nm)"},
        "medium": {"type": "string", "enum": ["air", "vacuum"]},
        "unc_nm": {**_number(0, 1e300, exclusive_minimum=True, exclusive_maximum=True), "nullable": False,
                   "description": "nm"},
        "intensity": _number(0, 1e300, exclusive_maximum=True),
        "a_per_s": _number(0, 1e300, exclusive_maximum=True, description="s-1"),
        "f_abs": _number(0, 1e300, exclusive_maximum=True),
        "multipole": {"type": "string", "enum": ["E1", "M1", "E2"], "nullable": True},
        "note": _text(4000, pattern=FREE_PATTERN, nullable=True),
    },
}
NEW_DATASET = {
    "type": "object",
    "additionalProperties": False,
    "description": "levels, lines or both (at least one entry); reserved names of computed datasets and "
                   "a name already taken are refused (422, 409)",
    "required": ["name"],
    "anyOf": [{"required": ["levels"], "properties": {"levels": {"type": "array", "minItems": 1}}},
              {"required": ["lines"], "properties": {"lines": {"type": "array", "minItems": 1}}}],
    "properties": {
        "name": _text(200, pattern=NAME_PATTERN, minLength=1, example="k-cell/run-1",
                      **{"not": {"pattern": RESERVED_NAME_PATTERN,
                                 "description": "has the form of a dataset the tool computes and rebuilds "
                                                "itself (derived lines, series limit, hydrogenic or rates "
                                                "<spectrum> A=<mass>)"}}),
        "kind": {"type": "string", "enum": ["measured", "imported"], "default": "measured", "nullable": True},
        "sample": _text(200, nullable=True, description="lab sample (created if new)"),
        "citation": _text(4000, pattern=FREE_PATTERN, nullable=True),
        "description": _text(4000, pattern=FREE_PATTERN, nullable=True),
        "levels": {"type": "array", "maxItems": 100000, "items": {"$ref": "#/components/schemas/NewLevel"},
                   "nullable": True},
        "lines": {"type": "array", "maxItems": 100000, "items": {"$ref": "#/components/schemas/NewLine"},
                  "nullable": True, "description": "measured lines; lower/upper are labels of posted or stored levels"},
    },
}


def _json(schema: dict) -> dict:
    return {"application/json": {"schema": schema}}


def _ref(name: str) -> dict:
    return {"$ref": f"#/components/schemas/{name}"}


def _error(description: str) -> dict:
    return {"description": description, "content": _json(_ref("Error"))}


def _table(row: str, paged: bool = False, key: str = "rows") -> dict:
    """A table answer; line tables carry their rows under ``lines`` (as the CLI's JSON) and, deprecated, ``rows``."""
    props = {"provenance": _ref("Provenance"), "columns": {"type": "array", "items": _STR},
             key: {"type": "array", "items": _ref(row)}}
    required = ["provenance", "columns", key]
    if key != "rows":
        props["rows"] = {"type": "array", "items": _ref(row), "deprecated": True,
                         "description": f"the same rows as {key!r}; kept for older clients, to be removed"}
        required.append("rows")
    props["total"] = {"type": "integer", "minimum": 0}
    required.append("total")
    if paged:
        props["limit"] = {"type": "integer", "minimum": 1, "maximum": API_MAX_LIMIT}
        props["offset"] = {"type": "integer", "minimum": 0, "maximum": MAX_OFFSET}
        required += ["limit", "offset"]
    return {"type": "object", "additionalProperties": False, "required": required, "properties": props}


#: a window bound in a spectral unit as the API takes it: a positive decimal number (a nonzero digit somewhere
#: in the mantissa, exponent of at most two digits) and an optional unit; a bare number is nm
SPECTRAL_PATTERN = (r"^([0-9]{0,15}[1-9][0-9]{0,15}(\.[0-9]{0,15})?|[0-9]{0,15}\.[0-9]{0,15}[1-9][0-9]{0,15})"
                    r"([eE][+-]?[0-9]{1,2})?(nm|A|Å|um|µm|pm|cm-1|eV|keV|meV|Hz|kHz|MHz|GHz|THz|PHz)?$")
SPECTRAL_SCHEMA = {"type": "string", "maxLength": 200, "pattern": SPECTRAL_PATTERN}


#: customary hydrogen line names the API takes (levels.notation.hydrogen_series_of_name reads a wider set):
#: a series prefix (any case), then a Greek letter or its English name for the first five members, or the
#: upper principal number beyond them
_GREEK = "(" + "|".join(["[αβγδε]"] + [_anycase(w) for w in ("alpha", "beta", "gamma", "delta", "epsilon")]) + ")"
_BEYOND = {"Ly": "[7-9]|[1-9][0-9]+", "H": "[89]|[1-9][0-9]+", "Pa": "9|[1-9][0-9]+", "Br": "[1-9][0-9]+",
           "Pf": "1[1-9]|[2-9][0-9]|[1-9][0-9]{2,}", "Hu": "1[2-9]|[2-9][0-9]|[1-9][0-9]{2,}"}
LINE_NAME_PATTERN = "^(" + "|".join(f"{_anycase(prefix)}[- ]?({_GREEK}|{beyond})"
                                    for prefix, beyond in _BEYOND.items()) + ")$"

SPECTRUM_PARAM = {"name": "spectrum", "in": "path", "required": True,
                  "description": "spectrum notation with '_' for the space (He_II); ion notation (C5+) also works",
                  "schema": {"type": "string", "maxLength": 40}, "example": "Li_I"}
MASS_NUMBER_PARAM = {"name": "mass_number", "in": "query",
                     "description": "the isotope, by its mass number (default: the one the spectrum name means: the "
                                    "element's most abundant isotope, or the only one stored); one not stored is "
                                    "answered 404",
                     "schema": {"type": "integer", "minimum": 1, "maximum": 300}, "example": 7}


def openapi_document() -> dict:
    """The OpenAPI 3.0 document of ``/api/v1``."""
    line_params = [
        SPECTRUM_PARAM, MASS_NUMBER_PARAM,
        {"name": "from_nm", "in": "query", "description": "window start, nm (in the medium); see from",
         "schema": {"type": "number", "exclusiveMinimum": True, "minimum": 0}},
        {"name": "to_nm", "in": "query", "description": "window end, nm (in the medium)",
         "schema": {"type": "number", "exclusiveMinimum": True, "minimum": 0}},
        {"name": "from", "in": "query",
         "description": "window start in any spectral unit: a wavelength (486nm, 4861A, 0.486um; "
                        "in the medium; a bare number is nm), a wavenumber (20570cm-1), a photon energy (2.55eV, "
                        "6.9keV) or a frequency (617THz); wavenumbers, energies and frequencies name vacuum "
                        "wavelengths and are converted to the medium. The bounds of a window may come in either "
                        "order; when both from/to and from_nm/to_nm are given, the window is their overlap (no "
                        "lines when they do not overlap)",
         "schema": SPECTRAL_SCHEMA, "example": "15200cm-1"},
        {"name": "to", "in": "query", "description": "window end in any spectral unit (see from)",
         "schema": SPECTRAL_SCHEMA, "example": "16000cm-1"},
        {"name": "medium", "in": "query",
         "description": "medium of the window and the position column: air means air at and above 200 nm, vacuum "
                        "below (the default of every front end); the provenance's 'wavelengths' says it in words",
         "schema": {"type": "string", "enum": ["vacuum", "air"], "default": "air"}},
        {"name": "unit", "in": "query",
         "description": "add the position column in this unit: nm (wavelength_nm), Å or A (wavelength_angstrom), "
                        "µm or um (wavelength_um), cm-1 (wavenumber_cm1), eV (photon_energy_ev), keV "
                        "(photon_energy_kev), Hz (frequency_hz); lengths in the medium",
         "schema": {"type": "string", "enum": ["nm", "Å", "A", "angstrom", "µm", "um", "cm-1", "eV", "keV", "Hz"]},
         "example": "keV"},
        {"name": "multipole", "in": "query", "style": "form", "explode": False,
         "schema": {"type": "array", "items": {"type": "string", "enum": list(MULTIPOLE_CODES)}}},
        {"name": "min_a", "in": "query", "description": "smallest Einstein A, s-1",
         "schema": {"type": "number", "minimum": 0}},
        {"name": "lower", "in": "query", "description": "lower level: a label, a glob ('2p*') or a series "
                                                       "pattern ('ns 2S1/2', n running)",
         "schema": {"type": "string", "maxLength": 200}, "example": "2p 2P°3/2"},
        {"name": "series", "in": "query", "description": "upper level in this series pattern (n running)",
         "schema": {"type": "string", "maxLength": 200}, "example": "nd 2D5/2"},
        {"name": "line_name", "in": "query", "description": "customary hydrogen line name (H I, D I, T I): "
                                                           "Hα, H-alpha, Lyβ, Pa9",
         "schema": {"type": "string", "maxLength": 200, "pattern": LINE_NAME_PATTERN}, "example": "H-alpha"},
        {"name": "multiplets", "in": "query",
         "description": "true: components of one configuration and term pair summed into multiplets (S and g f "
                        "summed, g_U A = sum g_u A, wavenumber g f-weighted); rows then carry gf, members, "
                        "weighting and no observed/Ritz columns",
         "schema": {"type": "string", "enum": ["true", "false"], "default": "false"}},
        {"name": "order", "in": "query",
         "schema": {"type": "string", "enum": ["wavelength", "-wavelength", "a", "strength"], "default": "wavelength"}},
        {"name": "limit", "in": "query",
         "schema": {"type": "integer", "minimum": 1, "maximum": API_MAX_LIMIT, "default": API_DEFAULT_LIMIT}},
        {"name": "offset", "in": "query", "schema": {"type": "integer", "minimum": 0, "maximum": MAX_OFFSET,
                                                      "default": 0}},
    ]
    return {
        "openapi": "3.0.3",
        "info": {"title": "levels JSON API", "version": __version__,
                 "description": "Atomic levels and lines of this store. Reads are open; creating a dataset "
                                "needs the site's bearer token."},
        "servers": [{"url": "/api/v1"}],
        "paths": {
            "/openapi.json": {"get": {"operationId": "openapi", "summary": "This document",
                                      "responses": {"200": {"description": "the OpenAPI document",
                                                            "content": _json({"type": "object"})}}}},
            "/species": {"get": {
                "operationId": "listSpecies", "summary": "Every stored species with counts and ionization energy",
                "responses": {"200": {"description": "species table", "content": _json(_table("SpeciesRow"))}},
            }},
            "/species/{spectrum}/levels": {"get": {
                "operationId": "listLevels", "summary": "Levels of a species",
                "parameters": [SPECTRUM_PARAM, MASS_NUMBER_PARAM,
                               {"name": "dataset", "in": "query", "style": "form", "explode": False,
                                "description": "datasets in order of precedence (default: all, measured first); "
                                               "a name that holds no level of the species is answered 404",
                                "schema": {"type": "array", "items": {"type": "string", "maxLength": 200}}}],
                "responses": {"200": {"description": "level table", "content": _json(_table("LevelRow"))},
                              "400": _error("a parameter breaks this document"),
                              "404": _error("no such species, or no such dataset of it")},
            }},
            "/species/{spectrum}/lines": {"get": {
                "operationId": "listLines", "summary": "Lines of a species in a wavelength window (paged)",
                "parameters": line_params,
                "responses": {"200": {"description": "one page of the line list",
                                      "content": _json(_table("LineRow", paged=True, key="lines"))},
                              "400": _error("a parameter breaks this document"), "404": _error("no such species")},
            }},
            "/datasets": {"post": {
                "operationId": "createDataset", "summary": "Create a measured dataset with its levels (all-or-nothing)",
                "security": [{"bearer": []}],
                "requestBody": {"required": True, "content": _json(_ref("NewDataset"))},
                "responses": {
                    "201": {"description": "created", "headers": {"Location": {"schema": _STR}},
                            "content": _json({"type": "object", "required": ["dataset", "warnings"],
                                              "additionalProperties": False,
                                              "properties": {"dataset": _ref("Dataset"), "warnings": {
                                                  "type": "array", "items": _STR,
                                                  "description": "what the import noted but did not refuse: "
                                                                 "levels whose state another dataset of the "
                                                                 "species holds, names made plain"}}})},
                    "400": _error("the body breaks this document (every problem of the rows is listed); "
                                  "nothing written"),
                    "401": _error("no or wrong bearer token; nothing written"),
                    "409": _error("a dataset of that name exists; nothing written"),
                    "413": _error("the body is too large"),
                    "415": _error("the body is not JSON"),
                    "422": _error("the body follows this document but its content is refused: rules across "
                                  "fields (J against the term, g = 2J + 1, the configuration's electrons), labels "
                                  "of lines that name no level, a line off the Ritz value of its levels, a reserved "
                                  "dataset name, or the store's own limits (every problem is listed); nothing "
                                  "written"),
                },
            }},
            "/datasets/{id}": {"get": {
                "operationId": "getDataset", "summary": "One dataset with its counts",
                "parameters": [{"name": "id", "in": "path", "required": True,
                                "schema": {"type": "integer", "minimum": 1}}],
                "responses": {"200": {"description": "the dataset",
                                      "content": _json({"type": "object", "required": ["dataset"],
                                                        "properties": {"dataset": _ref("Dataset")}})},
                              "404": _error("no such dataset")},
            }},
        },
        "components": {
            "securitySchemes": {"bearer": {"type": "http", "scheme": "bearer"}},
            "schemas": {"SpeciesRow": SPECIES_ROW, "LevelRow": LEVEL_ROW, "LineRow": LINE_ROW,
                        "Provenance": PROVENANCE, "Dataset": DATASET, "Error": ERROR,
                        "NewLevel": NEW_LEVEL, "NewLine": NEW_LINE, "NewDataset": NEW_DATASET},
        },
    }


# ----------------------------------------------------------------- conformance of requests to this document
# The server checks each request against the very schemas published above, so "valid by the document" and
# "accepted by the server" cannot drift apart: a request that breaks the document is answered 400, one that
# follows it reaches the import, whose cross-field and store rules answer 422 (or 409 for a name taken).

_JSON_NUMBER = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?", re.ASCII)
_JSON_INTEGER = re.compile(r"[+-]?[0-9]{1,30}", re.ASCII)


def _components() -> dict:
    return openapi_document()["components"]["schemas"]


def _type_ok(value, kind: str) -> bool:
    if kind == "object":
        return isinstance(value, dict)
    if kind == "array":
        return isinstance(value, list)
    if kind == "string":
        return isinstance(value, str)
    if kind == "boolean":
        return isinstance(value, bool)
    if kind == "integer":
        return isinstance(value, int) and not isinstance(value, bool)
    if kind == "number":
        return (isinstance(value, int) and not isinstance(value, bool)) or (
            isinstance(value, float) and math.isfinite(value))
    return False


def _bounds_problem(value, schema: dict) -> str | None:
    low, high = schema.get("minimum"), schema.get("maximum")
    if low is not None and (value < low or (schema.get("exclusiveMinimum") and value == low)):
        return f"must be {'above' if schema.get('exclusiveMinimum') else 'at least'} {low:g}"
    if high is not None and (value > high or (schema.get("exclusiveMaximum") and value == high)):
        return f"must be {'below' if schema.get('exclusiveMaximum') else 'at most'} {high:g}"
    step = schema.get("multipleOf")
    if step is not None and (value / step) != int(value / step):
        return f"must be a multiple of {step:g}"
    return None


def schema_problem(value, schema: dict, path: str = "", components: dict | None = None) -> tuple[str, str] | None:
    """The first place where ``value`` breaks ``schema`` (a schema of this document): ``(path, message)``, or None.

    Covers the keywords this document uses: ``$ref``, ``anyOf``, ``nullable``, ``type``, ``enum``, ``required``,
    ``properties``, ``additionalProperties: false``, ``items``, ``minItems``/``maxItems``,
    ``minLength``/``maxLength``, ``pattern``, ``minimum``/``maximum`` (with the OpenAPI 3.0 boolean
    ``exclusiveMinimum``/``exclusiveMaximum``) and ``multipleOf``.

    Examples
    --------
    >>> schema_problem({"name": "x", "levels": [{}]}, {"$ref": "#/components/schemas/NewDataset"})
    ('levels[0]', 'spectrum is required')
    >>> schema_problem(3, {"type": "integer", "minimum": 1}) is None
    True
    """
    components = _components() if components is None else components
    if "$ref" in schema:
        return schema_problem(value, components[schema["$ref"].rsplit("/", 1)[-1]], path, components)
    if value is None:
        return None if schema.get("nullable") else (path, "must not be null")
    if "anyOf" in schema:
        misses = [schema_problem(value, option, path, components) for option in schema["anyOf"]]
        failed = [miss for miss in misses if miss is not None]
        if len(failed) == len(misses):
            return failed[0][0], "; or ".join(message for _, message in failed)
        rest = {k: v for k, v in schema.items() if k != "anyOf"}
        return schema_problem(value, rest, path, components) if rest else None
    kind = schema.get("type")
    if kind is not None and not _type_ok(value, kind):
        return path, f"must be {'an' if kind[0] in 'aeiou' else 'a'} {kind}"
    if "not" in schema and schema_problem(value, schema["not"], path, components) is None:
        return path, schema["not"].get("description", "has a form this document excludes")
    if "enum" in schema and value not in schema["enum"]:
        return path, f"must be one of {', '.join(map(str, schema['enum']))}"
    if isinstance(value, str):
        if len(value) < schema.get("minLength", 0):
            return path, f"must hold at least {schema['minLength']} character(s)"
        if "maxLength" in schema and len(value) > schema["maxLength"]:
            return path, f"must hold at most {schema['maxLength']} characters"
        if "pattern" in schema and not re.search(schema["pattern"], value):
            return path, f"does not have the documented form (pattern {schema['pattern']})"
    elif isinstance(value, (int, float)) and not isinstance(value, bool):
        why = _bounds_problem(value, schema)
        if why:
            return path, why
    elif isinstance(value, list):
        if len(value) < schema.get("minItems", 0):
            return path, f"must hold at least {schema['minItems']} item(s)"
        if "maxItems" in schema and len(value) > schema["maxItems"]:
            return path, f"must hold at most {schema['maxItems']} items"
        for index, item in enumerate(value):
            found = schema_problem(item, schema.get("items", {}), f"{path}[{index}]", components)
            if found:
                return found
    elif isinstance(value, dict):
        for name in schema.get("required", []):
            if name not in value:
                return path, f"{name} is required"
        known = schema.get("properties", {})
        for name, item in value.items():
            where = f"{path}.{name}" if path else name
            if name in known:
                found = schema_problem(item, known[name], where, components)
                if found:
                    return found
            elif schema.get("additionalProperties") is False:
                return where, "is not a field of this object"
    return None


def _query_value(text: str, schema: dict):
    """A query-string value read as the type its schema names (None when it is not one)."""
    kind = schema.get("type")
    if kind == "number":
        if not _JSON_NUMBER.fullmatch(text):
            return None
        number = float(text)
        return number if math.isfinite(number) else None
    if kind == "integer":
        return int(text) if _JSON_INTEGER.fullmatch(text) else None
    return text


def query_problem(args, operation_id: str) -> tuple[str, str] | None:
    """The first query parameter of ``args`` that breaks the document of ``operation_id``: ``(name, message)``.

    A parameter that is present must follow its schema, an empty value included; arrays are
    ``style: form, explode: false`` (comma-separated).
    """
    for path_item in openapi_document()["paths"].values():
        for operation in path_item.values():
            if operation.get("operationId") == operation_id:
                break
        else:
            continue
        break
    else:
        raise KeyError(operation_id)
    for parameter in operation.get("parameters", []):
        name, schema = parameter["name"], parameter["schema"]
        if parameter["in"] != "query" or name not in args:
            continue
        for raw in args.getlist(name):
            if schema.get("type") == "array":
                items = raw.split(",") if raw else []  # an empty value is the empty list
                typed = [_query_value(item, schema["items"]) for item in items]
                if any(v is None for v in typed):
                    return name, f"must be a comma-separated list of {schema['items'].get('type')}s"
                value = typed
            else:
                value = _query_value(raw, schema)
                if value is None:
                    return name, f"{raw[:40]!r} is not {'an' if schema['type'][0] in 'aeiou' else 'a'} {schema['type']}"
            found = schema_problem(value, schema, name)
            if found:
                where, why = found
                return name, why if where == name else f"{where.replace(name, 'item', 1)} {why}"
    return None
